"""Tests of the shipped demo scenarios (snowprobe_widgets.examples)."""

from __future__ import annotations

import pytest

from snowprobe_widgets import examples
from snowprobe_widgets.constants import C0_M_S
from snowprobe_widgets.scene import Scenario

REQUIRED = ("shallow_dry_powder", "deep_wet_spring", "debris_no_burial", "crust_and_ski")


def test_the_required_demos_are_listed():
    names = Scenario.examples()
    assert isinstance(names, tuple) and names == tuple(sorted(names))
    for name in REQUIRED:
        assert name in names
    assert "two_burials" in names


@pytest.mark.parametrize("name", Scenario.examples())
def test_each_demo_builds_small_round_trips_and_is_invented(name):
    s = Scenario.example(name)
    assert isinstance(s, Scenario) and s.name == name
    assert Scenario.from_json(s.to_json()) == s
    assert s.survey.n_traces <= 210 and s.radar.n_samples <= 512
    assert "Invented scenario in the fictional Tarnhollow valley" in s.notes
    assert Scenario.example(name) == s  # deterministic


def test_the_ground_echo_fits_the_window_at_snow_speed():
    # two-way time to the ground through each layer at the centre frequency,
    # t = 2 h / c0 + sum 2 d_i sqrt(eps'_i) / c0 (REFERENCES 7.4, wave speed in snow)
    import numpy as np

    for name in Scenario.examples():
        s = Scenario.example(name)
        f = np.array([s.radar.center_frequency_hz])
        t = 2 * s.radar.antenna_height_m / C0_M_S
        for layer, mat in zip(s.snowpack.layers, s.snowpack.materials(), strict=True):
            t += 2 * layer.thickness_m * np.sqrt(mat.permittivity(f).real[0]) / C0_M_S
        assert t < s.radar.time_window_s, name


def test_each_required_demo_shows_its_case():
    dry = Scenario.example("shallow_dry_powder")
    assert len(dry.persons) == 1 and dry.persons[0].depth_m <= 1.0
    assert all(layer.lwc_percent == 0.0 for layer in dry.snowpack.layers)

    wet = Scenario.example("deep_wet_spring")
    assert len(wet.persons) == 1 and wet.persons[0].depth_m >= 1.5
    assert all(layer.lwc_percent > 0.0 for layer in wet.snowpack.layers)

    debris = Scenario.example("debris_no_burial")
    assert debris.persons == ()
    kinds = {o.kind for o in debris.objects}
    assert {"boulder", "branch"} <= kinds

    crust = Scenario.example("crust_and_ski")
    crusts = [i for i, layer in enumerate(crust.snowpack.layers) if layer.ice_crust]
    assert len(crusts) == 1
    crust_top = float(crust.snowpack.interfaces_m[crusts[0] - 1]) if crusts[0] else 0.0
    assert len(crust.persons) == 1 and crust.persons[0].depth_m > crust_top
    assert [o.kind for o in crust.objects] == ["metal"]
    assert "ski" in crust.objects[0].label

    two = Scenario.example("two_burials")
    assert len(two.persons) == 2


def test_default_is_the_shallow_dry_demo():
    assert Scenario.default() == Scenario.example("shallow_dry_powder")


def test_unknown_demo_lists_the_known_ones():
    with pytest.raises(ValueError, match=r"unknown example scenario 'nope'; known: .*"
                                         r"'shallow_dry_powder'"):
        Scenario.example("nope")


def test_a_plugin_factory_must_build_a_scenario():
    examples.EXAMPLES.register("_broken_test_demo", lambda: "not a scenario")
    try:
        with pytest.raises(ValueError, match="did not build a Scenario"):
            Scenario.example("_broken_test_demo")
    finally:
        del examples.EXAMPLES._items["_broken_test_demo"]
