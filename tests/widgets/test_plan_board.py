"""SearchPlanBoard driven without a browser: the curves are the model's, refusals keep the
plan on screen, files come in by upload and the printable plan leaves by download."""

from __future__ import annotations

import base64
import datetime
import re

import numpy as np
import pytest

from snowprobe_widgets.cautions import CAUTION_TEXT
from snowprobe_widgets.plan import (
    PLATFORMS,
    DebrisArea,
    lateral_range_from_budget,
    plan_search,
)
from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.widgets import SearchPlanBoard
from snowprobe_widgets.widgets._common import message_text
from snowprobe_widgets.widgets.plan import DOWNLOAD_CLASS, PLAN_STATUS_CLASS


@pytest.fixture(scope="module")
def app() -> SearchPlanBoard:
    return SearchPlanBoard()


def _upload(app: SearchPlanBoard, name: str, data: bytes) -> None:
    app.upload.value = ({"name": name, "content": memoryview(data), "size": len(data),
                         "type": "application/json",
                         "last_modified": datetime.datetime.now(datetime.timezone.utc)},)


def test_first_draw_matches_the_model(app):
    assert PLAN_STATUS_CLASS in app.status._dom_classes
    assert app.draws >= 1 and app.message.value == ""
    sc = Scenario.example("shallow_dry_powder")
    lr = lateral_range_from_budget(sc, antenna_height_m=PLATFORMS["hand-held or sled"]
                                   .antenna_height_m)
    expected = plan_search(lr, DebrisArea.rectangle(app.length.value, app.width.value),
                           PLATFORMS["hand-held or sled"], app.spacing.value)
    assert app.plan.coverage.time_s == pytest.approx(expected.coverage.time_s)
    assert np.asarray(app._found_line.y) == pytest.approx(
        100 * expected.curves["pod"].values, abs=1e-3)
    assert app._found_line.x.dtype == np.float32
    assert any(CAUTION_TEXT[:40] in getattr(c, "value", "") for c in app.children)


def test_spacing_changes_the_plan_and_the_curves(app):
    before = app.draws
    old_time = app.plan.coverage.time_s
    old_curve = np.asarray(app._found_line.y).copy()
    app.spacing.value = app.spacing.value * 2
    assert app.draws == before + 1
    assert app.plan.coverage.time_s < old_time
    assert not np.array_equal(np.asarray(app._found_line.y), old_curve)
    assert float(app._spacing_rule.x[0]) == pytest.approx(app.spacing.value)
    # the ICAR 2006 line: the time at which the area is cleared at 100 m2/min
    assert float(app._icar_line.y[0]) == pytest.approx(
        app.length.value * app.width.value / 100.0, rel=1e-6)


def test_no_nan_reaches_a_plot(app):
    app.arrival.value = 170.0  # past the end of every survival table
    for mark in (app._found_line, app._other_form_line, app._probe_line, app._survival_line,
                 app._time_line, app._pod_line, app._lateral_lines):
        assert np.all(np.isfinite(np.asarray(mark.y, float)))
    assert any("gives no survival there" in s for s in app.plan.summary)
    app.arrival.value = 30.0


def test_a_bad_polygon_is_refused_and_the_plan_stays(app):
    app.shape.value = "polygon"
    good = app.plan
    app.corners.value = "0,0; 10,10; 10,0; 0,10"
    assert "cross" in message_text(app.message)
    assert app.plan is good
    app.corners.value = "0,0; 80,0; 60,50"
    assert message_text(app.message) == ""
    assert app.plan.area.area_m2 == pytest.approx(2000.0)
    app.shape.value = "rectangle"


def test_platform_preset_fills_its_values(app):
    app.platform.value = "drone"
    drone = PLATFORMS["drone"]
    assert app.speed.value == drone.speed_m_s and app.height.value == drone.antenna_height_m
    assert app.plan.platform.name == "drone"
    app.speed.value = 3.0
    assert app.plan.platform.name == "drone (changed)"
    app.platform.value = "hand-held or sled"


def test_upload_opens_a_design_and_refuses_bad_files(app):
    _upload(app, "wet.json", Scenario.example("deep_wet_spring").to_json().encode())
    assert app.design.value == "file: wet.json"
    assert app.scenario.name == "deep_wet_spring"
    shown = app.plan
    _upload(app, "broken.json", b'{"format": ')
    assert "not opened: scenario file 'broken.json'" in message_text(app.message)
    assert app.design.value == "file: wet.json" and app.plan is shown
    _upload(app, "nobody.json", Scenario.example("debris_no_burial").to_json().encode())
    assert "no buried person" in message_text(app.message)


def test_printable_plan_carries_the_cautions_and_the_plan(app):
    text = app.report()
    assert DOWNLOAD_CLASS in app.download.value
    href = re.search(r"href='data:text/html;charset=utf-8;base64,([^']+)'",
                     app.download.value).group(1)
    assert base64.b64decode(href).decode("utf-8") == text
    assert CAUTION_TEXT in text
    assert "preparation and training only" in text
    assert "radio-spectrum and aviation permission" in text
    assert "probe and shovel" in text
    assert app.plan.summary[0].split(":")[0] in text
    assert "<svg" in text and "probe line" in text
    assert "this radar, drone" not in text
    app.compare_platforms.value = True
    assert "this radar, drone (link-budget estimate)" in app.table.value
    text = app.report()
    assert "this radar, drone (link-budget estimate)" in text
    # a new plan withdraws the old download
    app.dig.value = 15.0
    assert app.download.value == ""


def test_a_saved_sweep_gives_the_lateral_range(app, tmp_path):
    from snowprobe_widgets import sweep
    from snowprobe_widgets.sweeps import save

    ds = sweep(Scenario.example("shallow_dry_powder"),
               {"persons[0].offset_m": [0.0, 5.0], "persons[0].depth_m": [0.6, 1.2]},
               realizations=1, executor=1, progress=False)
    save(ds, tmp_path / "lanes.nc")
    data = (tmp_path / "lanes.nc").read_bytes()
    app.sweep_upload.value = ({"name": "lanes.nc", "content": memoryview(data),
                               "size": len(data), "type": "", "last_modified":
                               datetime.datetime.now(datetime.timezone.utc)},)
    assert message_text(app.message) == ""
    assert app.lateral_source.value == "sweep: lanes.nc"
    assert "Monte Carlo sweep" in app.plan.lateral.source
    assert app.plan.lateral.upper is not None
    assert any("interval" in s for s in app.plan.summary)
    # a file that is no sweep is refused by its own name, the sweep stays chosen
    app.sweep_upload.value = ({"name": "junk.nc", "content": memoryview(b"CDF\x01junk"),
                               "size": 8, "type": "", "last_modified":
                               datetime.datetime.now(datetime.timezone.utc)},)
    text = message_text(app.message)
    assert "junk.nc was not opened as a sweep" in text and "/tmp" not in text
    assert app.lateral_source.value == "sweep: lanes.nc"
    app.lateral_source.value = "link-budget estimate (fast)"


def test_a_wide_area_keeps_the_curve_to_spacings_it_allows(app):
    app.shape.value = "polygon"
    app.corners.value = "0,0; 100,0; 100,4000; 0,4000"  # lanes along x: 4 km across
    assert message_text(app.message) == ""
    x = np.asarray(app._time_line.x, float)
    assert x.min() >= 4000.0 / 5000 - 1e-6
    app.spacing.value = 0.5  # 8000 lanes: refused by name, the plan stays
    assert "8000 lanes" in message_text(app.message)
    app.spacing.value = 2.0
    app.shape.value = "rectangle"
