"""Sweep width and search probabilities against Koopman's search theory.

Sources: B. O. Koopman, *Search and Screening* (OEG Report 56, 1946; Pergamon 1980,
ch. 3); A. R. Washburn, *Search and Detection* (4th ed., INFORMS 2002, ch. 1-2). The worked
values are the classic ones quoted in both (from memory): at coverage W/S = 1 a
definite-range detector finds 1.00, the inverse-cube law erf(sqrt(pi)/2) = 0.79 and random
search 1 - e^-1 = 0.63. All checks here are analytic.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import special

from snowprobe_widgets.plan import sweep_width_m
from snowprobe_widgets.search_theory import lane_by_lane_pod, random_search_pod


def parallel_sweep_pod(x, p, spacing, n_lanes=201, step=0.05):
    """Koopman's parallel sweeps, approximated by many lanes over a wide area (the two
    edge lanes, which see to one side only, change the result by under 1/n_lanes);
    targets every ``step`` metres across."""
    lanes = (np.arange(n_lanes) + 0.5) * spacing
    per_lane = int(round(spacing / step))
    ys = (np.arange(n_lanes * per_lane) + 0.5) / per_lane * spacing
    return float(lane_by_lane_pod(x, p, lanes, ys, np.ones(ys.size))[-1])


def test_definite_range_detector_has_sweep_width_2r():
    # a detector that always sees within R and never beyond: W = 2R (Koopman 1980 ch. 3).
    # The trapezoid rule smears the step over one sample spacing dx (adds dx in all), so
    # dx = R / 400 keeps the error at 0.25 %, inside the 1 % the issue asks for.
    r = 3.0
    x = np.linspace(0.0, 2 * r, 801)
    p = (x <= r).astype(float)
    assert sweep_width_m(x, p) == pytest.approx(2 * r, rel=0.01)
    # both sides sampled explicitly: the same W
    xs = np.linspace(-2 * r, 2 * r, 1601)
    assert sweep_width_m(xs, (np.abs(xs) <= r).astype(float)) == pytest.approx(2 * r, rel=0.01)


@pytest.mark.parametrize("p0, sigma", [(1.0, 1.0), (0.8, 2.5), (0.3, 0.4)])
def test_gaussian_curve_matches_its_closed_form(p0, sigma):
    # p(x) = p0 exp(-x^2 / 2 sigma^2): W = p0 sigma sqrt(2 pi) (Gaussian integral)
    x = np.linspace(0.0, 8 * sigma, 200)
    p = p0 * np.exp(-x**2 / (2 * sigma**2))
    assert sweep_width_m(x, p) == pytest.approx(p0 * sigma * math.sqrt(2 * math.pi), rel=0.01)


def test_unsorted_samples_give_the_same_width():
    x = np.linspace(0.0, 5.0, 51)
    p = np.exp(-x)
    order = np.random.default_rng(1).permutation(x.size)
    assert sweep_width_m(x[order], p[order]) == pytest.approx(sweep_width_m(x, p), rel=1e-12)


@pytest.mark.parametrize("offset, prob, what", [
    ([0.0, 1.0], [0.5], "must match"),
    ([0.0], [0.5], "at least 2"),
    ([0.0, 1.0], [0.5, 1.2], "[0, 1]"),
    ([0.0, 0.0], [0.5, 0.4], "repeats"),
    ([0.0, np.nan], [0.5, 0.4], "not finite"),
])
def test_malformed_curves_are_refused_by_name(offset, prob, what):
    with pytest.raises(ValueError, match=r"(?i)" + __import__("re").escape(what)):
        sweep_width_m(offset, prob)


def test_parallel_sweeps_of_a_definite_range_detector():
    # Koopman: coverage by parallel sweeps with a cookie cutter of width W is min(1, W/S)
    x = np.linspace(0.0, 4.0, 4001)
    p = (x <= 1.0).astype(float)  # W = 2 m
    assert parallel_sweep_pod(x, p, 2.0) == pytest.approx(1.0, abs=0.01)
    assert parallel_sweep_pod(x, p, 1.0) == pytest.approx(1.0, abs=0.01)
    assert parallel_sweep_pod(x, p, 4.0) == pytest.approx(0.5, abs=0.01)
    assert parallel_sweep_pod(x, p, 8.0) == pytest.approx(0.25, abs=0.01)


@pytest.mark.parametrize("coverage", [0.5, 1.0, 2.0])
def test_parallel_sweeps_of_the_inverse_cube_law(coverage):
    # inverse-cube law: p(x) = 1 - exp(-c / x^2), W = 2 sqrt(pi c); parallel sweeps at
    # spacing S find erf(sqrt(pi) W / (2 S)) (Koopman 1946 / 1980; Washburn 2002 ch. 2).
    # The curve's slow tail (c / x^2) is cut at 400 sqrt(c): about 0.1 % of W.
    c = 1.0
    x = np.concatenate([[0.0], np.geomspace(1e-3, 400.0, 6000)])
    p = 1.0 - np.exp(-c / np.maximum(x, 1e-12) ** 2)
    w = 2.0 * math.sqrt(math.pi * c)
    assert sweep_width_m(x, p) == pytest.approx(w, rel=0.005)
    spacing = w / coverage
    expected = special.erf(math.sqrt(math.pi) / 2 * coverage)
    assert parallel_sweep_pod(x, p, spacing) == pytest.approx(expected, abs=0.01)


def test_lane_by_lane_progress_by_hand():
    # definite range R = 1 m (W = 2 m) over a 6 m wide strip, lanes at 1, 3, 5 m: each lane
    # finds the third of the targets within 1 m of it
    x = np.linspace(0.0, 3.0, 3001)
    p = (x <= 1.0).astype(float)
    ys = (np.arange(600) + 0.5) / 100.0
    pod = lane_by_lane_pod(x, p, [1.0, 3.0, 5.0], ys, np.ones(600))
    assert pod == pytest.approx([0.0, 1 / 3, 2 / 3, 1.0], abs=0.005)
    # weights: targets twice as likely on the first lane's strip
    w = np.where(ys < 2.0, 2.0, 1.0)
    assert lane_by_lane_pod(x, p, [1.0, 3.0, 5.0], ys, w)[1] == pytest.approx(0.5, abs=0.005)
    with pytest.raises(ValueError, match="target_weight"):
        lane_by_lane_pod(x, p, [1.0], ys, np.zeros(600))


def test_classic_coverage_one_values():
    # the three textbook numbers at coverage W/S = 1 (Koopman; Washburn)
    assert special.erf(math.sqrt(math.pi) / 2) == pytest.approx(0.79, abs=0.005)
    assert float(random_search_pod(10.0, 100.0, 1000.0)) == pytest.approx(1 - math.exp(-1))
    assert 1 - math.exp(-1) == pytest.approx(0.63, abs=0.005)


def test_random_search_hand_worked():
    # W = 4 m, v = 2 m/s for 10 min over 1 ha: W v t / A = 4*2*600/10000 = 0.48,
    # POD = 1 - exp(-0.48) = 0.3812 (worked by hand)
    assert float(random_search_pod(4.0, 2.0 * 600.0, 1e4)) == pytest.approx(0.3812, abs=1e-4)
    with pytest.raises(ValueError, match="area_m2"):
        random_search_pod(4.0, 100.0, 0.0)


def test_lane_updates_match_the_full_product():
    # lanes flown across the area (either way), each updating only the targets in its
    # reach, give the same progress as the full product over every lane and target
    rng = np.random.default_rng(3)
    x = np.linspace(0.0, 6.0, 61)
    p = 0.9 * np.exp(-x)
    lanes = np.sort(rng.uniform(0.0, 1000.0, 600))
    ys = np.linspace(0.0, 1000.0, 3000)
    w = rng.uniform(0.5, 1.5, ys.size)
    got = lane_by_lane_pod(x, p, lanes, ys, w)
    look = np.interp(np.abs(ys[None, :] - lanes[:, None]), x, p, right=0.0)
    miss = np.cumprod(1.0 - look, axis=0) @ (w / w.sum())
    assert got == pytest.approx(np.concatenate([[0.0], 1.0 - miss]), abs=1e-9)
    back = lane_by_lane_pod(x, p, lanes[::-1], ys, w)
    miss = np.cumprod(1.0 - look[::-1], axis=0) @ (w / w.sum())
    assert back == pytest.approx(np.concatenate([[0.0], 1.0 - miss]), abs=1e-9)
    with pytest.raises(ValueError, match="in order across"):
        lane_by_lane_pod(x, p, [0.0, 10.0, 5.0], ys, w)
