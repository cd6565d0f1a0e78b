"""DetectabilityView driven without a browser: controls -> sweep in a worker -> map, ROC."""

from __future__ import annotations

import numpy as np
import pytest

from snowprobe_widgets import sweeps
from snowprobe_widgets.cautions import CAUTION_TEXT
from snowprobe_widgets.widgets import DetectabilityView, ScenarioExplorer
from snowprobe_widgets.widgets._common import message_text
from snowprobe_widgets.widgets.detectability import _NONE, _SweepSlots, contour_segments


def _small(view: DetectabilityView, realizations: int = 2) -> None:
    view.field_x.field.value = "Depth to top of person 1 (m)"
    view.field_x.low.value, view.field_x.high.value = 0.4, 1.0
    view.field_x.steps.value = 2
    view.field_y.field.value = _NONE
    view.preset.value = "none: clutter and noise only"
    view.realizations.value = realizations


@pytest.fixture(scope="module")
def ran() -> DetectabilityView:
    view = DetectabilityView()
    _small(view)
    assert view.run(wait=True)
    return view


def test_first_draw_shows_the_planned_grid_and_the_caution():
    view = DetectabilityView()
    assert view.draws == 1 and "draws=1" in view.status.value
    assert view.dataset is None and "not run yet" in view.status.value
    assert any(CAUTION_TEXT in getattr(c, "value", "") for c in view.children)


def test_a_sweep_runs_in_a_worker_and_fills_the_map(ran):
    ds = ran.dataset
    assert ds.attrs["complete"] == 1 and int(ds["done"].sum()) == 4
    assert list(ds["persons[0].depth_m"].values) == [0.4, 1.0]
    p = ran.summary["detection_probability"].values
    assert np.all(np.isfinite(p)) and np.all((p >= 0) & (p <= 1))
    assert "complete" in ran.status.value
    assert ran.progress.value == ran.progress.max == 4
    assert bytes(ran._map_image.image.value).startswith(b"\x89PNG")


def test_moving_the_level_resummarises_without_simulating(ran, monkeypatch):
    def no_work(*_a, **_k):
        raise AssertionError("the level must not re-simulate")

    monkeypatch.setattr(sweeps, "run_realization", no_work)
    before = ran.draws
    ran.level.value = 60.0
    assert ran.draws == before + 1
    assert float(ran.summary["detection_probability"].max()) <= float(
        sweeps.roc(ran.dataset, [20.0])["detection_probability"].max())
    ran.level.value = 20.0


def test_clicking_a_cell_opens_its_scene_in_the_explorer(ran):
    assert ran.select_cell(1.0)
    assert isinstance(ran.explorer, ScenarioExplorer)
    sc = ran.explorer.scenario
    assert sc.persons[0].depth_m == 1.0
    assert "opened" in ran.readout.value and "found" in ran.readout.value
    assert len(ran._roc_line.x) > 0  # the ROC of that cell is drawn


def test_bad_range_is_refused_with_the_field_named():
    view = DetectabilityView()
    view.field_x.field.value = "Depth to top of person 1 (m)"
    view.field_x.low.value, view.field_x.high.value = 0.5, 150.0
    assert not view.run()
    assert "Depth to top of person 1 (m) to: Depth to top 150 m is out of range: use 0 to 100 m" \
        in message_text(view.message)
    view.field_x.high.value = 1.9  # inside the field's range, but too deep for this snow
    assert not view.run()
    assert "deeper than the 2 m snowpack" in message_text(view.message)
    assert not view.running and view.dataset is None


def test_sweeps_at_once_are_bounded():
    other = _SweepSlots(1)
    assert other.acquire()
    try:
        view = DetectabilityView(max_at_once=1)
        _small(view)
        assert not view.run()
        assert "already running" in message_text(view.message)
    finally:
        other.release()


def test_cancel_keeps_what_finished():
    view = DetectabilityView()
    _small(view, realizations=40)
    assert view.run()
    view.cancel()
    view._thread.join()
    assert view.dataset is not None and view.dataset.attrs["complete"] == 0
    assert int(view.dataset["done"].sum()) < 80
    assert "cancelled" in view.progress_text.value
    assert not view.resume_button.disabled
    partial = view.dataset
    assert view.resume(wait=True)
    ds = view.dataset
    assert ds.attrs["complete"] == 1 and int(ds["done"].sum()) == 80
    assert view.resume_button.disabled and "done: 80" in view.progress_text.value
    # what the cancelled run kept is kept as it was
    kept = partial["done"].values
    np.testing.assert_array_equal(ds["found"].values[kept], partial["found"].values[kept])
    assert not view.resume()
    assert "no cancelled sweep" in message_text(view.message)


def test_contour_of_a_ramp_crosses_where_it_should():
    x = np.array([0.0, 1.0, 2.0])
    y = np.array([0.0, 1.0])
    z = np.vstack([x, x]) / 2.0  # 0, 0.5, 1 along x
    seg = contour_segments(z, x, y, 0.25)
    assert seg.shape == (1, 2, 2)
    np.testing.assert_allclose(seg[0, :, 0], [0.5, 0.5])
    assert contour_segments(np.full((2, 2), np.nan), x[:2], y, 0.5).shape == (0, 2, 2)


def test_the_design_app_has_the_view_in_a_tab_on_its_own_scene():
    app = ScenarioExplorer()
    titles = list(app.lower.titles)
    assert titles[-1] == "Detection probability" and app.detectability is None
    app.lower.selected_index = len(titles) - 1
    view = app.detectability
    assert isinstance(view, DetectabilityView) and view.explorer is app
    deeper = app.scenario.persons[0].depth_m + 0.1
    import dataclasses

    app.scenario = dataclasses.replace(app.scenario, persons=(dataclasses.replace(
        app.scenario.persons[0], depth_m=deeper),))
    _small(view)
    view.field_x.field.value = "Liquid water, every layer (%)"
    view.field_x.low.value, view.field_x.high.value = 0.0, 2.0
    assert view.run(wait=True)
    assert view.base == app.scenario and view.dataset is not None
    assert view.select_cell(2.0) and app.scenario.snowpack.layers[0].lwc_percent == 2.0


def test_a_finished_sweep_leaves_as_a_netcdf_download(ran, tmp_path):
    import base64
    import datetime
    import re

    from snowprobe_widgets.widgets import SearchPlanBoard

    match = re.search(r"download='([^']+)' href='data:application/x-netcdf;base64,([^']+)'",
                      ran.download.value)
    assert match and match.group(1).endswith(".nc")
    payload = base64.b64decode(match.group(2))
    (tmp_path / "sweep.nc").write_bytes(payload)
    back = sweeps.load(tmp_path / "sweep.nc")  # the project's own reader accepts it
    np.testing.assert_array_equal(back["done"].values, ran.dataset["done"].values)
    # the plan page reads it as a sweep (it needs one across the lateral offset; this one
    # varies the depth, so it is refused for that reason, after reading)
    board = SearchPlanBoard()
    board.sweep_upload.value = ({"name": "sweep.nc", "type": "", "size": len(payload),
                                 "content": memoryview(payload),
                                 "last_modified": datetime.datetime.now()},)
    assert "did not vary 'persons[0].offset_m'" in message_text(board.message)
