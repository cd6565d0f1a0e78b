"""MaterialsExplorer driven without a browser: curves follow the models, status counts."""

from __future__ import annotations

import numpy as np

from snowprobe_widgets import materials as mat
from snowprobe_widgets.cautions import CAUTION_TEXT
from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.widgets import MaterialsExplorer
from snowprobe_widgets.widgets._common import message_text
from snowprobe_widgets.widgets.materials_lab import MATERIALS_STATUS_CLASS


def _draws(app: MaterialsExplorer) -> int:
    return int(app.status.value.split("draws=")[1].split()[0])


def _line(app: MaterialsExplorer, key: str) -> tuple[np.ndarray, np.ndarray]:
    line = app._lines[key]
    return np.atleast_2d(np.asarray(line.x)), np.atleast_2d(np.asarray(line.y))


def test_status_class_and_draw_count_follow_each_control() -> None:
    app = MaterialsExplorer()
    assert MATERIALS_STATUS_CLASS in app.status._dom_classes
    assert _draws(app) == app.draws == 1
    app.frequency.value = 400.0
    assert _draws(app) == 2
    app.sweep.value = "density"
    assert _draws(app) == 3
    app.medium.value = "body tissue (skin, fat, muscle)"  # one redraw, not two
    assert _draws(app) == 4
    assert any(CAUTION_TEXT[:40] in child.value for child in app.children
               if hasattr(child, "value"))


def test_frequency_curve_is_the_models_own_velocity_in_float32() -> None:
    app = MaterialsExplorer()
    app.density.value = 250.0
    x, y = _line(app, "velocity")
    assert x.dtype == np.float32 and y.dtype == np.float32
    assert np.all(np.isfinite(y))
    expected = mat.snow(250.0, 0.0, temperature_c=-5.0).velocity_m_ns(x[0, 60] * 1e6)
    np.testing.assert_allclose(y[0, 60], expected, rtol=1e-5)  # float32 rounding


def test_denser_snow_is_slower_and_wetter_snow_absorbs_more() -> None:
    app = MaterialsExplorer()
    app.sweep.value = "density"
    _, v = _line(app, "velocity")
    assert v[0, 0] > v[0, -1]  # light snow faster than near-ice
    assert np.all(np.diff(v[0]) <= 1e-6)
    app.sweep.value = "liquid water"
    _, att = _line(app, "attenuation")
    assert att[0, -1] > 10 * att[0, 0]  # 12 % water against dry snow


def test_tissue_draws_one_line_per_tissue_and_clothing() -> None:
    app = MaterialsExplorer()
    app.medium.value = "body tissue (skin, fat, muscle)"
    assert list(app._lines["eps_real"].labels) == ["skin", "fat", "muscle", "clothing"]
    _, eps = _line(app, "eps_real")
    assert eps.shape[0] == 4
    assert eps[2, 60] > eps[1, 60]  # muscle holds more water than fat


def test_refused_combination_shows_message_and_keeps_curves() -> None:
    app = MaterialsExplorer()
    app.sweep.value = "density"
    before = _line(app, "velocity")[1].copy()
    draws = app.draws
    app.density.value = 900.0
    app.lwc.value = 8.0  # ice already fills 98 % of the volume: no room for 8 % water
    assert "lwc_percent" in message_text(app.message)
    assert app.draws == draws + 1  # the density change drew; the refused one did not
    app.density.value = 300.0
    assert message_text(app.message) == ""
    assert not np.array_equal(before, _line(app, "velocity")[1])


def test_scenario_sets_controls_and_redraws() -> None:
    app = MaterialsExplorer()
    draws = app.draws
    wet = Scenario.example("deep_wet_spring")
    app.scenario = wet
    assert app.draws == draws + 1
    assert app.frequency.value == 400.0
    assert app.density.value == wet.snowpack.layers[0].density_kg_m3
    assert app.lwc.value == wet.snowpack.layers[0].lwc_percent
    assert app.soil_water.value == wet.ground.water_fraction
    assert "wet snow" in app._lines["velocity"].labels[0]
