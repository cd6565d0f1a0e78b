"""The search plan: lateral range curves, probability over time, survival, trade-off."""

from __future__ import annotations

import dataclasses
import subprocess
import sys

import numpy as np
import pytest
import xarray as xr

from snowprobe_widgets.budget import link_budget
from snowprobe_widgets.coverage import PLATFORMS, DebrisArea, Platform
from snowprobe_widgets.plan import (
    DEPTH_PATH,
    OFFSET_PATH,
    LateralRange,
    lateral_range_from_budget,
    plan_search,
    spacing_tradeoff,
)
from snowprobe_widgets.scene import Scenario

RAUCH = "Rauch et al. 2024 (Switzerland 1981-2020)"


def _cookie_cutter(half_width_m: float, depths=(0.5, 1.0, 2.0)) -> LateralRange:
    x = np.linspace(0.0, 4 * half_width_m, 801)
    p = np.tile((x <= half_width_m).astype(float), (len(depths), 1))
    return LateralRange.from_arrays(x, p, depth_m=depths)


def test_model_imports_no_user_interface():
    code = ("import sys, snowprobe_widgets.plan; "
            "bad = [m for m in sys.modules if m.split('.')[0] in ('ipywidgets', 'bqplot')]; "
            "sys.exit(1 if bad else 0)")
    assert subprocess.run([sys.executable, "-c", code], check=False).returncode == 0


def test_lateral_range_from_arrays_with_an_interval():
    x = np.linspace(0.0, 6.0, 61)
    p = 0.9 * np.exp(-x**2 / 2.0)
    lr = LateralRange.from_arrays(x, p, depth_m=1.0, realizations=50)
    w = lr.sweep_width_m
    assert w.shape == (1,)
    assert w[0] == pytest.approx(0.9 * np.sqrt(2 * np.pi), rel=0.01)
    lo, hi = lr.sweep_width_interval_m
    assert lo[0] < w[0] < hi[0]
    ds = lr.to_xarray()
    assert ds["detection_probability"].dims == ("depth_m", "offset_m")
    assert "50 realizations" in ds.attrs["source"]


def test_lateral_range_refuses_curves_that_do_not_start_on_the_line():
    with pytest.raises(ValueError, match="start at 0"):
        LateralRange.from_arrays([0.5, 1.0], [0.5, 0.2], depth_m=1.0)
    with pytest.raises(ValueError, match="shape"):
        LateralRange(np.array([1.0, 2.0]), np.array([0.0, 1.0]), np.ones((1, 2)))


def _sweep_like(offsets, depths, p, realizations=40):
    """A dataset laid out like snowprobe_widgets.sweep's (variables, dims, attributes)."""
    lo, hi = np.clip(p - 0.1, 0, 1), np.clip(p + 0.1, 0, 1)
    dims = (DEPTH_PATH, OFFSET_PATH)
    ds = xr.Dataset({"detection_probability": (dims, p),
                     "detection_probability_lower": (dims, lo),
                     "detection_probability_upper": (dims, hi)},
                    coords={DEPTH_PATH: depths, OFFSET_PATH: offsets})
    ds.attrs["realizations"] = realizations
    return ds


def test_lateral_range_from_a_sweep_dataset_folds_both_sides():
    offsets = np.array([-2.0, -1.0, 0.0, 1.0, 2.0])
    depths = np.array([2.0, 1.0])  # given out of order
    p = np.array([[0.0, 0.4, 0.8, 0.6, 0.0],
                  [0.2, 0.9, 1.0, 0.7, 0.0]])
    lr = LateralRange.from_dataset(_sweep_like(offsets, depths, p))
    assert list(lr.depth_m) == [1.0, 2.0]
    assert list(lr.offset_m) == [0.0, 1.0, 2.0]
    # mean of the two sides at each distance
    assert lr.probability[0] == pytest.approx([1.0, 0.8, 0.1])
    assert lr.probability[1] == pytest.approx([0.8, 0.5, 0.0])
    assert lr.lower is not None and lr.lower[0] == pytest.approx([0.9, 0.7, 0.05])
    assert "40 realizations" in lr.source
    # W by hand for depth 1 m: 2 * (0.5*(1+0.8) + 0.5*(0.8+0.1)) = 2.7 m
    assert lr.sweep_width_m[0] == pytest.approx(2.7)


def test_sweep_dataset_with_another_varied_field_is_refused():
    ds = _sweep_like(np.array([0.0, 1.0]), np.array([1.0]), np.array([[1.0, 0.2]]))
    ds = ds.expand_dims({"radar.center_frequency_hz": [4e8, 8e8]})
    with pytest.raises(ValueError, match="radar.center_frequency_hz"):
        LateralRange.from_dataset(ds)
    assert LateralRange.from_dataset(ds.isel({"radar.center_frequency_hz": [0]})
                                     ).probability.shape == (1, 2)


def test_budget_estimate_is_one_half_at_the_deepest_detectable_burial():
    # Consistency with the link budget's own depth search (not a physics reference): at the
    # depth where the budget says the echo just reaches the threshold over noise and
    # clutter, the probability straight below the antenna is 0.5 (a fixed threshold on a
    # non-fluctuating echo in Gaussian noise), shallower it is higher, deeper lower.
    # A weak 1.2 GHz radar in the wet spring debris puts that depth near 1.1 m at the
    # budget's default level (the detector's), which the estimate shares.
    wet = Scenario.example("deep_wet_spring")
    sc = dataclasses.replace(wet, radar=dataclasses.replace(
        wet.radar, center_frequency_hz=1.2e9, transmit_power_dbm=-20.0, dt_s=1e-10))
    budget = link_budget(sc)
    assert budget.depth_limited_by == "noise"
    deepest = budget.max_detectable_depth_m
    assert 0.6 < deepest < 3.0
    lr = lateral_range_from_budget(sc, depths_m=[deepest - 0.3, deepest, deepest + 0.3])
    p0 = lr.probability[:, 0]
    assert p0[1] == pytest.approx(0.5, abs=0.05)
    assert p0[0] > 0.7 and p0[2] < 0.3


def test_budget_estimate_curves_fall_with_offset_and_with_a_narrower_beam():
    sc = Scenario.example("shallow_dry_powder")
    wide = lateral_range_from_budget(sc, depths_m=[0.5, 1.0, 1.5])
    assert np.all(np.diff(wide.probability, axis=1) <= 1e-12)
    assert not wide.cut_short.any()
    narrow_radar = dataclasses.replace(sc.radar, beamwidth_deg=20.0)
    narrow = lateral_range_from_budget(dataclasses.replace(sc, radar=narrow_radar),
                                       depths_m=[0.5, 1.0, 1.5])
    assert np.all(narrow.sweep_width_m < wide.sweep_width_m)
    # a higher flight widens the footprint in this strong-echo case
    high = lateral_range_from_budget(sc, antenna_height_m=5.0, depths_m=[0.5, 1.0, 1.5])
    assert np.all(high.sweep_width_m > wide.sweep_width_m)
    assert "5 m antenna height" in high.source


def test_budget_estimate_refuses_a_scenario_without_a_person():
    sc = Scenario.example("debris_no_burial")
    with pytest.raises(ValueError, match="no buried person"):
        lateral_range_from_budget(sc)


def test_parallel_form_and_expected_survival_by_hand():
    # Definite-range curve of W = 4 m, lanes 2 m apart (overlap: parallel-sweep form,
    # every swept person found). 20 m x 20 m at 1 m/s, no turns: lanes at y = 1, 3, ..., 19,
    # 20 s each. Lane 1 sees y in [0, 3] (15 % of the targets), lanes 2-9 2 m more each
    # (10 %), lane 10 the last metre (5 %), each found evenly along its lane: mean find
    # time 0.15*10 + 0.1*(30+50+...+170) + 0.05*190 = 91 s. Arriving 10 min after the
    # burial and digging 10 min, finds are dug out 20.0-23.3 min after the burial, on the
    # straight Rauch 2024 segment from (10 min, 0.91) to (30 min, 0.30), so the mean
    # survival is its value at 21.517 min: 0.91 - 0.0305 * 11.517 = 0.5587 (by hand).
    lr = _cookie_cutter(2.0)
    walker = Platform("walker", 1.0, 0.3, 20.0, 0.0)
    plan = plan_search(lr, DebrisArea.rectangle(20.0, 20.0), walker, 2.0, arrival_min=10.0,
                       dig_min=10.0, survival=RAUCH, n_times=2001)
    assert plan.form == "parallel sweep"
    assert plan.pod_parallel == pytest.approx(1.0)
    w_sum = plan.depth_weights.sum()
    assert plan.pod == pytest.approx(w_sum, abs=1e-9)
    assert plan.expected_survival == pytest.approx(0.5587, abs=0.002)
    assert plan.found_alive == pytest.approx(w_sum * 0.5587, abs=0.002)
    assert plan.beyond_table == 0.0
    pod = plan.curves["pod"].values
    assert np.all(np.diff(pod) >= -1e-12)
    assert any("parallel-sweep form is used" in s for s in plan.summary)


def test_wide_lanes_use_the_random_search_form():
    # lanes 8 m apart with W = 4 m: gaps; random search 1 - exp(-W L / A), L = 5 x 40 m
    lr = _cookie_cutter(2.0)
    walker = Platform("walker", 1.0, 0.3, 20.0, 0.0)
    plan = plan_search(lr, DebrisArea.rectangle(40.0, 40.0), walker, 8.0, arrival_min=0.0)
    assert plan.form == "random search"
    assert plan.pod_random == pytest.approx(1 - np.exp(-4.0 * 200.0 / 1600.0), abs=0.005)
    assert plan.pod_parallel == pytest.approx(0.5, abs=0.01)  # W / S
    assert plan.pod == pytest.approx(plan.depth_weights.sum() * (1 - np.exp(-0.5)),
                                     abs=0.005)
    assert any("random-search form" in s for s in plan.summary)


def test_late_search_says_the_table_ends():
    lr = _cookie_cutter(2.0)
    plan = plan_search(lr, DebrisArea.rectangle(100.0, 100.0), PLATFORMS["hand-held or sled"],
                       2.0, arrival_min=125.0, survival=RAUCH)
    assert plan.expected_survival is None and plan.found_alive is None
    assert any("gives no survival there" in s for s in plan.summary)
    surv = plan.curves["survival"].values
    assert np.all(np.isnan(surv))


def test_plan_refuses_bad_inputs_by_name():
    lr = _cookie_cutter(2.0)
    area = DebrisArea.rectangle(50.0, 50.0)
    drone = PLATFORMS["drone"]
    with pytest.raises(ValueError, match=r"spacing_m = 0 m is outside"):
        plan_search(lr, area, drone, 0.0)
    with pytest.raises(ValueError, match="arrival_min"):
        plan_search(lr, area, drone, 2.0, arrival_min=-5.0)
    with pytest.raises(ValueError, match="survival"):
        plan_search(lr, area, drone, 2.0, survival="my own curve")
    with pytest.raises(ValueError, match="depth distribution"):
        plan_search(lr, area, drone, 2.0, depths="everyone at 1 m")


def test_spacing_tradeoff_time_against_probability():
    lr = _cookie_cutter(2.0)
    ds = spacing_tradeoff(lr, DebrisArea.rectangle(100.0, 100.0), PLATFORMS["drone"],
                          [1.0, 2.0, 4.0, 8.0, 16.0])
    t = ds["time_min"].values
    assert np.all(np.diff(t) < 0)
    # W = 4: full detection up to S = 4; beyond, each of the ceil(100 / S) lanes (centred
    # across the 100 m) finds the 4 m strip it sweeps, all inside the area: 13 x 4 / 100 =
    # 0.52 at 8 m, 7 x 4 / 100 = 0.28 at 16 m, by hand (Koopman's W / S = 0.5 and 0.25 for
    # an area without edges)
    par = ds["pod_parallel"].values / ds["pod_parallel"].values[0]
    assert par == pytest.approx([1.0, 1.0, 1.0, 0.52, 0.28], abs=0.005)
    assert ds.attrs["sweep_width_median_m"] == pytest.approx(4.0, rel=0.01)
    # the form used switches to random search beyond W
    assert ds["pod"].values[3] == pytest.approx(ds["pod_random"].values[3])


def test_lateral_range_from_a_real_sweep():
    # the whole path through snowprobe_widgets.sweep (simulate, detect, score): a person on
    # the line 0.6 m down in dry powder is found, one 5 m to the side (outside the 60 deg
    # beam's footprint at 0.5 m height) is not; one realization per cell, in this process
    from snowprobe_widgets.plan import lateral_range_from_sweep

    sc = Scenario.example("shallow_dry_powder")
    lr = lateral_range_from_sweep(sc, depths_m=[0.6], offsets_m=[0.0, 5.0], realizations=1,
                                  executor=1, progress=False)
    assert lr.source == "Monte Carlo sweep, 1 realizations per point"
    assert list(lr.probability[0]) == [1.0, 0.0]
    assert lr.lower is not None and lr.upper is not None
    assert lr.upper[0, 1] > 0.0  # one realization leaves a wide interval
    lo, hi = lr.sweep_width_interval_m
    assert lo[0] <= lr.sweep_width_m[0] <= hi[0]


def test_curves_at_one_depth_stand_for_every_burial():
    lr = _cookie_cutter(2.0, depths=(1.0,))
    walker = Platform("walker", 1.0, 0.3, 20.0, 0.0)
    plan = plan_search(lr, DebrisArea.rectangle(40.0, 40.0), walker, 8.0)
    assert list(plan.depth_weights) == [1.0] and plan.mass_deeper == 0.0
    assert plan.median_depth_m == 1.0
    assert plan.pod == pytest.approx(1 - np.exp(-4.01 * 200.0 / 1600.0), abs=1e-3)
    assert any("depth distribution is not used" in s for s in plan.summary)


def test_two_way_time_through_air_and_snow():
    # 2 (h + sum d_j n_j) / c0 straight down; below the snowpack the bottom layer goes on
    from snowprobe_widgets.constants import C0_M_S
    from snowprobe_widgets.plan import two_way_time_s

    sc = Scenario.example("crust_and_ski")
    fc = sc.radar.center_frequency_hz
    n = [float(la.material().refractive_index(fc).real) for la in sc.snowpack.layers]
    d = [la.thickness_m for la in sc.snowpack.layers]
    depth = sc.snowpack.depth_m + 1.0  # 1 m past the bottom
    expected = 2 * (5.0 + sum(di * ni for di, ni in zip(d, n, strict=True)) + 1.0 * n[-1]) / C0_M_S
    assert two_way_time_s(sc, 5.0, depth) == pytest.approx(expected, rel=1e-9)


def test_probe_line_found_alive_by_hand():
    # 10 m x 10 m, 8 probers, 10 s per hole to 1.5 m and 20 s to 3 m: first pass 0-8.33 min,
    # second 8.33-25 min. Search starts at the burial, no digging time. On Rauch 2024
    # (straight lines (0, 1) - (10, 0.91) - (30, 0.30)) the mean survival of finds spread
    # evenly over the first pass is S(4.17 min) = 0.9625; over the second pass
    # 0.1 * S(9.17) + 0.9 * S(17.5) = 0.1 * 0.9175 + 0.9 * 0.68125 = 0.7049.
    # Depths 0.5 and 1 m: 0.88 in pass 1, then 0.12 * 0.88 in pass 2; 2 m: 0.88 in pass 2.
    lr = _cookie_cutter(2.0)
    plan = plan_search(lr, DebrisArea.rectangle(10.0, 10.0), PLATFORMS["drone"], 2.0,
                       arrival_min=0.0, dig_min=0.0, survival=RAUCH, n_times=2001)
    w = plan.depth_weights
    shallow = (w[0] + w[1]) * (0.88 * 0.9625 + 0.12 * 0.88 * 0.7049)
    deep = w[2] * 0.88 * 0.7049
    assert plan.probe_found_alive == pytest.approx(shallow + deep, abs=0.002)
    assert plan.probe_beyond_table == 0.0
