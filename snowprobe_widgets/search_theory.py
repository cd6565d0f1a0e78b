"""Search theory: sweep width and the probability of detection of a search.

The forms are Koopman's (B. O. Koopman, *Search and Screening*, OEG Report 56, 1946;
*Search and Screening: General Principles with Historical Applications*, Pergamon 1980,
ch. 3), also in A. R. Washburn, *Search and Detection*, 4th ed., INFORMS 2002, ch. 1-2;
equation forms below are as we remember them from those books, checked in the tests against
their classic worked values (coverage 1 gives 1.00 for a definite-range detector, 0.79 for
the inverse-cube law and 0.63 for random search):

* **Lateral range curve** p(x): probability that a sensor passing along a straight line
  detects a target at horizontal distance x from it.
* **Sweep width** W = integral of p(x) dx over the whole line (both sides): the width of a
  perfect "cookie-cutter" detector that finds as many targets per unit track as the real one.
* **Parallel sweeps** at lane spacing S over a target placed uniformly at random: each lane
  gives an independent chance, so the probability of detection is
  ``(1/S) integral_0^S [1 - prod_k (1 - p(x - k S))] dx`` far from the area's edges. A
  definite-range detector of half-width R (W = 2R) gives 1 when S <= W and W/S when
  S > W; the inverse-cube law gives erf(sqrt(pi) W / (2 S)). :func:`lane_by_lane_pod`
  follows it lane after lane over a finite area.
* **Random search** (track laid down without regard to the lanes already flown; Koopman's
  conservative bound for a search with navigation errors): ``1 - exp(-W L / A)`` after a
  track of length L over an area A (L = v t at speed v).
"""

from __future__ import annotations

import numpy as np

from ._validate import check_range

#: Target x lane cells handled at once by :func:`lane_by_lane_pod` (bounds its memory).
_CELLS = 2_000_000

__all__ = [
    "lateral_curve_arrays",
    "sweep_width_m",
    "lane_by_lane_pod",
    "random_search_pod",
]


def lateral_curve_arrays(offset_m: object, probability: object) -> tuple[np.ndarray, np.ndarray]:
    """Validate a sampled lateral range curve; return it sorted by offset.

    Raises
    ------
    ValueError
        On unequal lengths, fewer than 2 samples, repeated or non-finite offsets, or a
        probability outside [0, 1].
    """
    x = np.asarray(offset_m, float).ravel()
    p = np.asarray(probability, float).ravel()
    if x.size != p.size:
        raise ValueError(f"offset_m has {x.size} values but probability has {p.size}; "
                         "they must match")
    if x.size < 2:
        raise ValueError(f"a lateral range curve needs at least 2 samples, got {x.size}")
    if not np.all(np.isfinite(x)):
        raise ValueError("offset_m contains values that are not finite numbers")
    if not np.all(np.isfinite(p)) or p.min() < 0.0 or p.max() > 1.0:
        bad = p[~np.isfinite(p) | (p < 0) | (p > 1)][0]
        raise ValueError(f"probability = {bad!r} is outside the allowed range [0, 1]")
    order = np.argsort(x, kind="stable")
    x, p = x[order], p[order]
    if np.any(np.diff(x) == 0):
        raise ValueError("offset_m repeats a value; each offset must appear once")
    return x, p


def sweep_width_m(offset_m: object, probability: object) -> float:
    """Effective sweep width W = integral of p(x) dx (Koopman), by the trapezoid rule, m.

    Parameters
    ----------
    offset_m : array_like
        Horizontal offsets of the samples from the survey line, m (any order).
    probability : array_like
        Detection probability at each offset, in [0, 1].

    Returns
    -------
    float
        W in m. A curve sampled on one side only (every offset >= 0) is taken as symmetric
        about the line and counted twice; a curve with offsets on both sides is integrated
        as given. The curve is taken as zero beyond its outermost samples: if it has not
        fallen to zero there, W is too small by the part cut off.

    Raises
    ------
    ValueError
        On a malformed curve (see :func:`lateral_curve_arrays`).
    """
    x, p = lateral_curve_arrays(offset_m, probability)
    w = 0.5 * float(np.sum(np.diff(x) * (p[1:] + p[:-1])))  # trapezoids
    return 2.0 * w if x[0] >= 0.0 else w


def _both_sides(x: np.ndarray, p: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """A one-sided curve (offsets >= 0) mirrored onto both sides of the line."""
    if x[0] < 0.0:
        return x, p
    x, p = np.concatenate([-x[::-1], x]), np.concatenate([p[::-1], p])
    keep = np.concatenate([[True], np.diff(x) > 0])
    return x[keep], p[keep]


def lane_by_lane_pod(offset_m: object, probability: object, lane_y_m: object,
                     target_y_m: object, target_weight: object) -> np.ndarray:
    """Probability of having detected the target after each lane of a parallel search.

    Each lane is an independent look with the lateral range curve (Koopman 1980 ch. 3,
    Washburn 2002 ch. 2); the target lies across the lanes at ``target_y_m`` with
    probabilities proportional to ``target_weight`` (for a target placed uniformly over an
    area: the area's length along the lanes at each y). Far from the edges of a wide area
    this tends to Koopman's parallel-sweep value; near them it counts that the outer
    lanes see to one side only.

    Parameters
    ----------
    offset_m, probability : array_like
        The lateral range curve; one-sided samples (offsets >= 0) are mirrored. Zero
        beyond the outermost samples.
    lane_y_m : array_like, shape (n_lanes,)
        Across-lane position of each lane, in the order flown (across the area:
        increasing or decreasing), m.
    target_y_m, target_weight : array_like, shape (n_targets,)
        Possible target positions across the lanes and their weights (>= 0, not all 0).

    Returns
    -------
    ndarray, shape (n_lanes + 1,)
        Probability of detection after 0, 1, ..., n_lanes lanes.
    """
    x, p = _both_sides(*lateral_curve_arrays(offset_m, probability))
    lanes = np.asarray(lane_y_m, float).ravel()
    y = np.asarray(target_y_m, float).ravel()
    w = np.asarray(target_weight, float).ravel()
    if w.size != y.size or np.any(w < 0) or not w.sum() > 0:
        raise ValueError("target_weight must be >= 0, not all zero, one per target_y_m")
    step = np.diff(lanes)
    if lanes.size > 1 and not (np.all(step > 0) or np.all(step < 0)):
        raise ValueError("lane_y_m must be flown in order across the area (increasing or "
                         "decreasing)")
    flip = lanes.size > 1 and step[0] < 0
    ordered = lanes[::-1] if flip else lanes
    weight = w / w.sum()
    reach = float(np.max(np.abs(x)))  # the curve is zero beyond its outermost sample
    # each target is seen by a block of neighbouring lanes: [first, last) in lane order
    first = np.searchsorted(ordered, y - reach, side="left")
    last = np.searchsorted(ordered, y + reach, side="right")
    width = int(max(np.max(last - first), 1))
    gain = np.zeros(lanes.size)  # probability found on each lane (lane order)
    rows = max(1, _CELLS // width)
    for i0 in range(0, y.size, rows):  # blocks of targets: bounded memory
        sl = slice(i0, i0 + rows)
        k = first[sl, None] + np.arange(width)[None, :]
        valid = k < last[sl, None]
        kk = np.minimum(k, lanes.size - 1)
        if flip:  # flown from the far side: the targets' lanes come in reverse
            kk = kk[:, ::-1]
            valid = valid[:, ::-1]
        look = np.where(valid, np.interp(y[sl, None] - ordered[kk], x, p, left=0.0,
                                         right=0.0), 0.0)
        miss = np.cumprod(1.0 - look, axis=1)
        before = np.concatenate([np.ones((miss.shape[0], 1)), miss[:, :-1]], axis=1)
        found = (before - miss) * weight[sl, None]
        np.add.at(gain, kk[valid], found[valid])
    if flip:
        gain = gain[::-1]
    return np.concatenate([[0.0], np.cumsum(gain)])


def random_search_pod(sweep_width_m: object, track_m: object, area_m2: float) -> np.ndarray:
    """Koopman's random-search probability 1 - exp(-W L / A).

    Parameters
    ----------
    sweep_width_m : array_like
        Sweep width W, m (>= 0).
    track_m : array_like
        Track length searched L = v t, m (>= 0); broadcast against W.
    area_m2 : float
        Area searched, m2 (> 0).
    """
    a = check_range("area_m2", area_m2, 0.0, 1e10, unit="m2", low_open=True)
    w = np.asarray(sweep_width_m, float)
    L = np.asarray(track_m, float)
    if np.any(w < 0) or np.any(L < 0):
        raise ValueError("sweep width and track length must be >= 0")
    return 1.0 - np.exp(-w * L / a)
