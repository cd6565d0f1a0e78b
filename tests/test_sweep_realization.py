"""The reduced scene of a realization against the whole survey line."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.sweep_paths import parse_path
from snowprobe_widgets.sweep_realization import (
    LINE_HALF_WIDTH_M,
    reduced_scene,
    run_realization,
)


def _variant(name: str, noise_dbm: float | None = None, seed: int | None = None,
             depth_m: float | None = None, lwc: float | None = None) -> Scenario:
    sc = Scenario.example(name)
    if noise_dbm is not None:
        sc = dataclasses.replace(sc, radar=dataclasses.replace(sc.radar,
                                                               noise_floor_dbm=noise_dbm))
    if seed is not None:
        sc = dataclasses.replace(sc, clutter=dataclasses.replace(sc.clutter, seed=seed))
    if depth_m is not None:
        sc = parse_path("persons[0].depth_m", sc).set(sc, depth_m)
    if lwc is not None:
        sc = parse_path("snowpack.layers[*].lwc_percent", sc).set(sc, lwc)
    return sc


#: Scenes with finds and misses, several frequencies, one and two persons, debris.
SCENES = [
    _variant("shallow_dry_powder", seed=1),
    _variant("shallow_dry_powder", noise_dbm=-35.0, seed=2),
    _variant("shallow_dry_powder", noise_dbm=-30.0, depth_m=1.7, lwc=12.0),  # a miss
    _variant("shallow_dry_powder", noise_dbm=-25.0, depth_m=1.0, lwc=8.0, seed=4),
    _variant("deep_wet_spring", seed=1),
    _variant("deep_wet_spring", noise_dbm=-35.0, seed=2),
    _variant("crust_and_ski", seed=1),  # the ski outshines the person: a miss
    _variant("two_burials", seed=1),
    _variant("two_burials", noise_dbm=-35.0, seed=2),
]


def test_reduced_scene_keeps_the_traces_near_the_person_and_the_window_to_the_ground():
    sc = Scenario.example("shallow_dry_powder")
    r = reduced_scene(sc)
    x = sc.persons[0].position_m
    assert r.survey.start_m == pytest.approx(x - LINE_HALF_WIDTH_M)
    assert r.survey.end_m == pytest.approx(x + LINE_HALF_WIDTH_M)
    # the kept traces lie on the base line's own positions
    assert np.all(np.isin(np.round(r.survey.position_m, 9), np.round(sc.survey.position_m, 9)))
    assert r.radar.n_samples < sc.radar.n_samples
    assert r.radar.dt_s == sc.radar.dt_s and r.snowpack == sc.snowpack


def test_reduced_scene_gives_the_same_detection_outcome_as_the_full_line():
    found_any = missed_any = False
    for sc in SCENES:
        full = run_realization(sc, reduced=False)
        part = run_realization(sc, reduced=True)
        np.testing.assert_array_equal(part.found, full.found, err_msg=sc.name)
        assert part.twin_false_alarms == pytest.approx(
            full.twin_false_alarms * part.line_length_m / full.line_length_m, abs=1.0)
        found_any |= bool(full.found.any())
        missed_any |= bool((full.found == 0).any())
    assert found_any and missed_any  # the set holds both outcomes
