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
    assert s.survey.n_traces <= 210
    if name in examples.LITERATURE:
        # a published setup: the paper is named, and the figures that are ours are said
        # to be ours; a 0.7-4.5 GHz drone radar 3 m up needs 1024 samples
        assert s.radar.n_samples <= 1024
        assert examples.LITERATURE[name] in s.notes
        assert "not a record of the experiment" in s.notes and "What is ours:" in s.notes
    else:
        assert s.radar.n_samples <= 512
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


# ------------------------------------------------------------------ literature cases
def _detected(name: str, kinds: tuple[str, ...]) -> tuple[list, object]:
    from snowprobe_widgets import simulate
    from snowprobe_widgets.detection import compare_with_truth, detect

    rg = simulate(Scenario.example(name))
    found = detect(rg)
    return found, compare_with_truth(found, rg.truth, kinds=kinds)


@pytest.mark.parametrize("name, kinds", [
    # Heilig & Schneebeli 2006: 400 MHz, ~6 m over dry snow, a body-sized phantom
    # "could easily be detected"
    ("heilig2006_airborne_dry", ("person",)),
    # Jenssen & Jacobsen 2020/21: 0.7-4.5 GHz drone radar, a person detected under
    # 1.5 m of wet snow
    ("jenssen2021_drone_wet", ("person",)),
    # Yamaguchi et al. 1991: L-band FM-CW, metal targets at 70 and 90 cm mapped in
    # heavily wet snow
    ("yamaguchi1991_plates_wet", ("metal",)),
])
def test_the_literature_cases_reproduce_the_published_outcome(name, kinds):
    from snowprobe_widgets import link_budget
    from snowprobe_widgets.detection import DEFAULT_THRESHOLD_DB

    sc = Scenario.example(name)
    for target in sc.targets:
        lb = link_budget(sc, target, threshold_db=10.0)
        # detected, with margin: 20 dB over a 10 dB threshold, inside the window
        assert "likely visible" in lb.verdict
        assert lb.echo_to_noise_db > 10.0 + 20.0
        assert target.depth_m < lb.max_detectable_depth_m
    found, report = _detected(name, kinds)
    assert len(report.misses) == 0 and report.n_false_alarms == 0
    assert min(d.score for d in found) > DEFAULT_THRESHOLD_DB + 10.0
