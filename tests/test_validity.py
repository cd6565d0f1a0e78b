"""Model validity: centre frequencies to 6 GHz, and warnings outside a model's band."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from snowprobe_widgets import link_budget, simulate
from snowprobe_widgets.scene import (
    Clutter,
    Ground,
    Layer,
    Person,
    Radar,
    Scenario,
    Snowpack,
    Survey,
)
from snowprobe_widgets.validity import scenario_warnings


def _scene(fc: float, *, lwc: float = 0.0, ground: Ground | None = None) -> Scenario:
    return Scenario(Snowpack((Layer(1.5, 350.0, lwc),)), ground or Ground("rock", permittivity=6.0),
                    (Person(1.0, 0.6),), (),
                    Radar("ricker", fc, dt_s=2.5e-11, time_window_s=25.6e-9,
                          antenna_height_m=0.3),
                    Survey(0.0, 2.0, 0.1), Clutter(), name="validity")


def test_radar_accepts_six_gigahertz_where_every_model_holds():
    # dry snow (Matzler 1996: frequency independent to 10 GHz), Gabriel tissues (to
    # 20 GHz), clothing and rock (constants): a 6 GHz scene has nothing to warn about,
    # and it simulates to a finite radargram
    sc = _scene(6e9)
    assert scenario_warnings(sc) == ()
    rg = simulate(sc)
    assert np.all(np.isfinite(rg.data)) and np.max(np.abs(rg.data)) > 0
    assert link_budget(sc).model_warnings == ()
    with pytest.raises(ValueError, match=r"center_frequency_hz = 6\.1e\+09 Hz"):
        Radar("ricker", 6.1e9, dt_s=2.5e-11, time_window_s=25.6e-9)


def test_a_scene_outside_a_model_band_is_warned_not_silent():
    # a drone radar at 2.6 GHz over wet snow and soil: Tiuri et al. (1984) is calibrated
    # at 0.5-1 GHz and Topp et al. (1980) at 20 MHz-1 GHz (REFERENCES 3a, 6.1)
    sc = _scene(2.6e9, lwc=3.0, ground=Ground("soil", 0.2))
    warnings = scenario_warnings(sc)
    assert len(warnings) == 2
    assert "Tiuri et al. 1984" in warnings[0] and "2.6 GHz" in warnings[0]
    assert "Topp" in warnings[1]
    lb = link_budget(sc)
    assert lb.model_warnings == warnings
    assert "outside their calibrated band" in lb.verdict
    # inside the bands: silent
    ok = dataclasses.replace(sc, radar=dataclasses.replace(sc.radar, center_frequency_hz=8e8))
    assert scenario_warnings(ok) == ()
