"""Automatic burial detection: focused echoes that stand out from the background.

``detect(radargram) -> list[Detection]``:

1. runs a processing chain (default :meth:`ProcessingChain.default`: dewow, mean
   background removal, spreading gain, band-pass) and removes the median trace, which
   takes away what is flat (surface, layers, ground) without the copy of a wide echo that
   a mean leaves on every trace (common practice);
2. cuts the section to the searched times, decimates it to the band (up to 2.5 fc) and
   focuses diffraction hyperbolas by Stolt f-k migration (Stolt 1978, Geophysics 43(1))
   at the paraxial RMS velocity of the column, air gap included (Dix 1955, Geophysics
   20(1)), at the middle of the searched depths;
3. takes the envelope, averages its energy over a box of one pulse period (+-1/fc) by
   :data:`BOX_M` along the line (a body keeps its energy, a small clod's focused spot is
   diluted: a size-matched energy detector), and divides by the background: the
   :data:`BACKGROUND_PERCENTILE` percentile of that energy over all traces in a band of
   +-``suppress_depth_m``. A percentile is an order statistic, robust to a body filling
   part of the band; a median/MAD noise estimate was tried and rejected because it
   ignores sparse clutter, whose clods then scored 30-50 dB "above the background";
4. keeps the local maxima scoring at least ``threshold`` (dB), outside the surface echo
   and, when the snow depth is known, the ground echo (``1.2 / fc`` of guard time), one
   per body by greedy non-maximum suppression (strongest first, common practice); the
   apex is the envelope peak inside the box, refined by a parabola in time.

Depth: from time with the layers' velocities at the centre frequency
(``c / Re n(fc)`` of each layer's material) and the antenna height when
``radargram.scenario`` is present, otherwise from ``velocity_m_s`` with the surface at
the envelope peak of the first arrival.

``compare_with_truth`` scores detections against truth markers: hits, misses, false alarms.

Simplifications: one migration velocity for the whole section (a few per cent off at the
shallowest and deepest searched depths); no discrimination of rock or wood from bodies
beyond size and strength; the default threshold is an invented figure chosen on random
shallow dry scenes (see tests/test_detection.py).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import ndimage

from . import processing as P
from ._validate import check_range
from .constants import C0_M_S
from .processing._common import (
    check_velocity,
    median_trace,
    sample_interval_s,
    trace_spacing_m,
)
from .radargram import Radargram, TruthMarker

__all__ = [
    "DEFAULT_THRESHOLD_DB",
    "BOX_M",
    "BACKGROUND_PERCENTILE",
    "Detection",
    "DetectionReport",
    "detect",
    "compare_with_truth",
]

#: Default detection threshold, dB of box energy over the background. Chosen on random
#: shallow dry scenes (persons scored 33-77 dB, clutter at most 23 dB on 60 scenes at
#: 800 MHz), not taken from a source.
DEFAULT_THRESHOLD_DB = 20.0
#: Upper edge of the band kept before decimation, in units of the centre frequency (the
#: default chain's band-pass ends at 2.5 fc).
_BAND_TOP_FC = 2.5
#: Guard around the surface and ground echoes, in periods of the centre frequency.
_GUARD_PERIODS = 1.2
#: Periods kept beyond each end of the searched times (room for the envelope, the box
#: and the nearest part of the deepest flanks).
_PAD_PERIODS = 3.0
#: Along-line width of the box over which the envelope energy is averaged, m: a little
#: less than the smallest body extent (0.45 m, the width of a lying person), so a body
#: keeps its energy while a small clod's focused spot is diluted (invented figure).
BOX_M = 0.4
#: Percentile of the box energy taken as the background (robust to a body filling up to
#: a quarter of a depth band; a median would ignore sparse clutter).
BACKGROUND_PERCENTILE = 75.0


@dataclass(frozen=True)
class Detection:
    """One probable burial.

    Attributes
    ----------
    position_m : float
        Along-line position of the echo's apex, m.
    depth_m : float
        Depth below the snow surface of the echo's apex (the top of the body), m.
    time_s : float
        Two-way time of the apex on the radargram's time axis, s.
    score : float
        Box-averaged energy of the migrated envelope over the background at that depth, dB.
    reason : str
        Plain-language explanation with the numbers.
    """

    position_m: float
    depth_m: float
    time_s: float
    score: float
    reason: str


@dataclass(frozen=True)
class DetectionReport:
    """Detections checked against the truth.

    Attributes
    ----------
    hits : tuple of (Detection, TruthMarker)
        Detections matched to a truth marker of the listed kinds.
    misses : tuple of TruthMarker
        Truth markers of the listed kinds that no detection matched.
    false_alarms : tuple of Detection
        Detections that matched nothing of the listed kinds.
    """

    hits: tuple[tuple[Detection, TruthMarker], ...]
    misses: tuple[TruthMarker, ...]
    false_alarms: tuple[Detection, ...]

    @property
    def n_hits(self) -> int:
        """Number of hits."""
        return len(self.hits)

    @property
    def n_misses(self) -> int:
        """Number of misses."""
        return len(self.misses)

    @property
    def n_false_alarms(self) -> int:
        """Number of false alarms."""
        return len(self.false_alarms)


# --------------------------------------------------------------------------- column
@dataclass(frozen=True)
class _Column:
    velocity_m_s: np.ndarray  # per layer, last one extends down
    thickness_m: np.ndarray  # all layers but the last
    antenna_height_m: float
    surface_time_s: float  # on the record's time axis
    ground_depth_m: float  # inf when unknown


def _column_from_scenario(sc: Any) -> tuple[np.ndarray, np.ndarray, float, float]:
    fc = sc.radar.center_frequency_hz
    n = np.array([max(complex(m.refractive_index(fc)).real, 1.0)
                  for m in sc.snowpack.materials()])
    return (C0_M_S / n, np.asarray(sc.snowpack.thicknesses_m, float)[:-1],
            float(sc.radar.antenna_height_m), float(sc.snowpack.depth_m))


def _surface_time_from_data(rg: Radargram, fc: float) -> float:
    """Envelope peak of the mean trace envelope just after the first-arrival pick."""
    pick = float(np.nanmedian(P.pick_first_arrival_s(rg, 0.5)))
    env = np.abs(P.envelope(rg).data).mean(axis=1)
    t = rg.time_s
    win = np.flatnonzero((t >= pick) & (t <= pick + 1.0 / fc))
    if win.size == 0:
        return pick
    return float(t[win[np.argmax(env[win])]])


def _paraxial_length_m(col: _Column, depth_m: float) -> tuple[float, float]:
    """(h + sum d_i v_i / c, two-way time below the surface) down to ``depth_m``."""
    v = col.velocity_m_s
    tops = np.concatenate(([0.0], np.cumsum(col.thickness_m)))
    bots = np.concatenate((np.cumsum(col.thickness_m), [math.inf]))
    d = np.clip(depth_m - tops, 0.0, bots - tops)
    return (col.antenna_height_m + float(np.sum(d * v)) / C0_M_S,
            float(np.sum(2.0 * d / v)))


# --------------------------------------------------------------------------- detect
def detect(radargram: Radargram, *, threshold: float = DEFAULT_THRESHOLD_DB,
           chain: Any = None, velocity_m_s: float | None = None,
           center_frequency_hz: float | None = None, min_depth_m: float = 0.0,
           max_depth_m: float | None = None, suppress_lateral_m: float = 1.0,
           suppress_depth_m: float = 0.3, max_detections: int = 50) -> list[Detection]:
    """Find probable burials on a radargram.

    Parameters
    ----------
    radargram : Radargram
        Raw section (time from the antenna's transmission), at least 8 traces.
    threshold : float
        Smallest score reported, dB of box energy over the background, in [0, 60].
    chain : ProcessingChain or None
        Processing applied before focusing (default:
        ``ProcessingChain.default(center_frequency_hz)``). A chain with an enabled
        time-zero step needs ``radargram.scenario`` or ``velocity_m_s`` as usual; the
        surface is then taken at the step's ``target_time_s``.
    velocity_m_s : float or None
        Snow velocity, m/s, in [0.03e9, c0]; required when ``radargram.scenario`` is None,
        ignored otherwise (the layers' velocities at the centre frequency are used).
    center_frequency_hz : float or None
        Radar centre frequency, Hz, in [10 MHz, 10 GHz] (default: the scenario's radar; for
        measured data the peak of the mean amplitude spectrum).
    min_depth_m, max_depth_m : float
        Searched depth range below the surface, m. The surface echo (``1.2 / fc`` of time
        after it) and, when the snow depth is known, the ground echo (the same guard
        before it) are never searched.
    suppress_lateral_m, suppress_depth_m : float
        Non-maximum suppression box half-sizes, m (about one body: 1 m and 0.3 m), each in
        (0, 10].
    max_detections : int
        Most detections returned (strongest first), in [1, 1000].

    Returns
    -------
    list of Detection
        Strongest first.
    """
    if not isinstance(radargram, Radargram):
        raise ValueError(f"radargram must be a Radargram, got {type(radargram).__name__}")
    nt, nx = radargram.data.shape
    if nx < 8 or nt < 16:
        raise ValueError(f"radargram has {nt} samples x {nx} traces; detection needs at "
                         "least 16 samples and 8 traces")
    thr = check_range("threshold", threshold, 0.0, 60.0, unit="dB")
    lat = check_range("suppress_lateral_m", suppress_lateral_m, 0.0, 10.0, unit="m",
                      low_open=True)
    dep = check_range("suppress_depth_m", suppress_depth_m, 0.0, 10.0, unit="m",
                      low_open=True)
    if isinstance(max_detections, bool) or not isinstance(max_detections, (int, np.integer)):
        raise ValueError(f"max_detections must be a whole number, got {max_detections!r}")
    max_det = int(check_range("max_detections", max_detections, 1, 1000))
    zmin = check_range("min_depth_m", min_depth_m, 0.0, 100.0, unit="m")
    zmax = math.inf if max_depth_m is None else check_range(
        "max_depth_m", max_depth_m, zmin, 100.0, unit="m", low_open=True)
    dt = sample_interval_s(radargram)
    trace_spacing_m(radargram)
    sc = radargram.scenario
    if center_frequency_hz is None:
        if sc is not None:
            fc = float(sc.radar.center_frequency_hz)
        else:
            spec = np.abs(np.fft.rfft(radargram.data, axis=0)).mean(axis=1)
            f = np.fft.rfftfreq(nt, dt)
            fc = float(f[1 + int(np.argmax(spec[1:]))])
    else:
        fc = check_range("center_frequency_hz", center_frequency_hz, 10e6, 10e9, unit="Hz")
    if sc is not None:
        v, thick, h, ground = _column_from_scenario(sc)
        t_surf = 2.0 * h / C0_M_S
    else:
        if velocity_m_s is None:
            raise ValueError("velocity_m_s is needed when the radargram has no scenario; "
                             "allowed range [3e+07, 2.99792e+08] m/s")
        v = np.array([check_velocity("velocity_m_s", velocity_m_s)])
        thick = np.zeros(0)
        t_surf = _surface_time_from_data(radargram, fc)
        h = 0.5 * C0_M_S * t_surf
        ground = math.inf
    if chain is None:
        chain = P.ProcessingChain.default(fc, dt_s=radargram.dt_s,
                                          record_s=radargram.dt_s * radargram.time_s.size)
    elif not isinstance(chain, P.ProcessingChain):
        raise ValueError(f"chain must be a ProcessingChain or None, got {type(chain).__name__}")
    processed = chain.apply(radargram)
    shift = 0.0
    for r in processed.history[len(radargram.history):]:
        if r.step == "time_zero":
            shift = dict(r.params)["target_time_s"] - t_surf
    col = _Column(v, thick, h, t_surf + shift, ground)
    return _detect_processed(processed, col, fc, thr, zmin, zmax, lat, dep, max_det, shift)


def _background(e2: np.ndarray, step: int, half: int) -> np.ndarray:
    """Background energy of each row: a percentile of ``e2`` over rows +-``half`` and all
    traces, evaluated every ``step`` rows and interpolated."""
    rows = e2.shape[0]
    centres = np.arange(0, rows, step)
    vals = np.empty(centres.size)
    inner = (centres >= half) & (centres + half < rows)  # bands of full height
    bands = np.lib.stride_tricks.sliding_window_view(e2, min(2 * half + 1, rows), axis=0)
    todo = np.flatnonzero(inner)
    per_block = max(1, 2**16 // bands[0].size)  # bands copied at once (cache-sized)
    for k in range(0, todo.size, per_block):
        i = todo[k:k + per_block]
        vals[i] = np.percentile(bands[centres[i] - half].reshape(i.size, -1),
                                BACKGROUND_PERCENTILE, axis=1)
    for i in np.flatnonzero(~inner):
        c = centres[i]
        vals[i] = np.percentile(e2[max(0, c - half):c + half + 1], BACKGROUND_PERCENTILE)
    return np.interp(np.arange(rows), centres, vals)


def _depth_of(col: _Column, t_rec: np.ndarray) -> np.ndarray:
    """Depth below the surface of record times (negative above the surface)."""
    return P.depth_axis_m(np.asarray(t_rec) - col.surface_time_s, col.velocity_m_s, 0.0,
                          col.thickness_m if col.thickness_m.size else None)


def _detect_processed(rg: Radargram, col: _Column, fc: float, thr: float, zmin: float,
                      zmax: float, lat: float, dep: float, max_det: int,
                      shift: float) -> list[Detection]:
    t = rg.time_s
    dt = rg.dt_s
    guard = _GUARD_PERIODS / fc
    z_t = _depth_of(col, t)
    t_lo = col.surface_time_s + guard
    search = (t >= t_lo) & (z_t >= zmin) & (z_t <= zmax)
    if math.isfinite(col.ground_depth_m):
        t_ground = float(np.interp(col.ground_depth_m, z_t, t))
        search &= t <= t_ground - guard
    if not np.any(search):
        return []
    i_lo = int(np.flatnonzero(search)[0])
    i_hi = int(np.flatnonzero(search)[-1])
    # section cut to the searched range plus room for the flanks, decimated in time
    pad = int(round(_PAD_PERIODS / fc / dt))
    k = max(1, int(math.floor(1.0 / (2.0 * dt * _BAND_TOP_FC * fc))))
    a = max(0, i_lo - pad)
    b = min(t.size, i_hi + pad + 1)
    b = a + (b - a) // k * k
    cut = rg.data[a:b]
    if k > 1:
        cut = cut.reshape((b - a) // k, k, -1).mean(axis=1)
    t_cut = t[a:b].reshape(-1, k).mean(axis=1) if k > 1 else t[a:b]
    # median background removal: what mean removal leaves of a wide echo (a flat copy at
    # 1/n_traces on every trace) would migrate into edge diffractions at the line ends
    cut = cut - median_trace(cut)
    small = Radargram(cut, t_cut, rg.position_m)
    # RMS velocity at the middle of the searched depths, for Stolt's record time origin
    z_mid = 0.5 * (max(float(z_t[i_lo]), 0.0) + float(z_t[i_hi]))
    length_m, t_below = _paraxial_length_m(col, z_mid)
    t_rec = col.surface_time_s + t_below
    v_mig = math.sqrt(2.0 * C0_M_S * length_m / max(t_rec, dt)) if t_rec > 0 else C0_M_S
    v_mig = float(np.clip(v_mig, P.VELOCITY_MIN_M_S, P.VELOCITY_MAX_M_S))
    mig = P.migrate(small, v_mig).data
    # what is still flat after migration (the copy of a wide body's echo that mean
    # background removal leaves on every trace) goes with the median trace
    mig = mig - median_trace(mig)
    env = P.envelope(small.with_data(mig)).data
    dtc = float(t_cut[1] - t_cut[0])
    n_sm = max(1, int(round(1.0 / fc / dtc)))  # one period, in samples
    nbx = max(1, int(round(BOX_M / rg.dx_m)))
    e2 = ndimage.uniform_filter(env * env, size=(2 * n_sm + 1, nbx), mode="constant")
    bg = _background(e2, n_sm, max(1, int(round(2.0 * dep / float(col.velocity_m_s.min())
                                                 / dtc))))
    floor = 1e-24 * float(np.max(e2)) + 1e-300
    score = 10.0 * np.log10(np.maximum(e2, 1e-300) / np.maximum(bg, floor)[:, None])
    ok = (t_cut >= t[i_lo]) & (t_cut <= t[i_hi])
    # candidates: true local maxima of the box energy (one period x the box) inside the
    # searched range; a peak inside a guard zone is not a candidate, nor is its tail
    local = ndimage.maximum_filter(e2, size=(2 * n_sm + 1, 2 * nbx + 1), mode="nearest")
    cand = np.argwhere((e2 >= local) & (e2 > 0.0) & (score >= thr) & ok[:, None])
    order = np.argsort(-score[cand[:, 0], cand[:, 1]], kind="stable")
    x = rg.position_m
    kept: list[tuple[float, float]] = []
    nx = x.size
    out = []
    nts = env.shape[0]
    for i, j in cand[order]:
        # apex: the envelope peak inside the box around the score peak
        i0, i1 = max(0, i - n_sm), min(nts, i + n_sm + 1)
        j0, j1 = max(0, j - nbx), min(nx, j + nbx + 1)
        sub = env[i0:i1, j0:j1]
        ii, jj = np.unravel_index(int(np.argmax(sub)), sub.shape)
        ii, jj = int(ii) + i0, int(jj) + j0
        if not ok[ii]:  # the apex stays inside the searched range
            ii = i
        frac = 0.0
        if 0 < ii < nts - 1:
            y0, y1, y2 = env[ii - 1:ii + 2, jj]
            den = y0 - 2.0 * y1 + y2
            if den < 0.0:
                frac = float(np.clip(0.5 * (y0 - y2) / den, -0.5, 0.5))
        ti = float(t_cut[ii]) + frac * dtc
        xi = float(x[jj])
        zi = float(_depth_of(col, np.array([ti]))[0])
        if any(abs(xi - xk) <= lat and abs(zi - zk) <= dep for xk, zk in kept):
            continue
        kept.append((xi, zi))
        s = float(score[i, j])
        out.append(Detection(
            position_m=xi, depth_m=zi, time_s=ti - shift, score=s,
            reason=(f"focused echo {s:.1f} dB above the background at {xi:.2f} m along the "
                    f"line, {zi:.2f} m deep (two-way time {ti * 1e9:.2f} ns)")))
        if len(out) >= max_det:
            break
    return out


# --------------------------------------------------------------------------- truth
def compare_with_truth(detections: Sequence[Detection], truth: Iterable[TruthMarker], *,
                       lateral_tolerance_m: float = 0.3, depth_tolerance_m: float = 0.15,
                       kinds: Iterable[str] = ("person",)) -> DetectionReport:
    """Match detections to truth markers.

    A detection hits a marker of one of ``kinds`` when it lies within
    ``lateral_tolerance_m`` along the line and ``depth_tolerance_m`` in depth of it. Pairs
    are matched greedily, closest first (distance scaled by the tolerances), each marker
    and each detection at most once. Markers of other kinds are ignored, so a detection
    on a boulder is a false alarm when ``kinds == ("person",)``.

    Parameters
    ----------
    detections : sequence of Detection
    truth : iterable of TruthMarker
    lateral_tolerance_m, depth_tolerance_m : float
        Tolerances, m, each in (0, 100].
    kinds : iterable of str
        Truth kinds that count as targets (non-empty).

    Returns
    -------
    DetectionReport
    """
    lt = check_range("lateral_tolerance_m", lateral_tolerance_m, 0.0, 100.0, unit="m",
                     low_open=True)
    zt = check_range("depth_tolerance_m", depth_tolerance_m, 0.0, 100.0, unit="m",
                     low_open=True)
    if isinstance(kinds, str):
        kinds = (kinds,)
    kinds = tuple(kinds)
    if not kinds or not all(isinstance(k, str) for k in kinds):
        raise ValueError(f"kinds must be a non-empty sequence of strings, got {kinds!r}")
    dets = tuple(detections)
    for i, d in enumerate(dets):
        if not isinstance(d, Detection):
            raise ValueError(f"detections[{i}] must be a Detection, got {type(d).__name__}")
    marks = tuple(truth)
    for i, m in enumerate(marks):
        if not isinstance(m, TruthMarker):
            raise ValueError(f"truth[{i}] must be a TruthMarker, got {type(m).__name__}")
    targets = [m for m in marks if m.kind in kinds]
    pairs = []
    for i, d in enumerate(dets):
        for j, m in enumerate(targets):
            ex = abs(d.position_m - m.position_m)
            ez = abs(d.depth_m - m.depth_m)
            if ex <= lt and ez <= zt:
                pairs.append((math.hypot(ex / lt, ez / zt), i, j))
    pairs.sort()
    used_d: set[int] = set()
    used_m: set[int] = set()
    hits = []
    for _, i, j in pairs:
        if i in used_d or j in used_m:
            continue
        used_d.add(i)
        used_m.add(j)
        hits.append((dets[i], targets[j]))
    misses = tuple(m for j, m in enumerate(targets) if j not in used_m)
    false_alarms = tuple(d for i, d in enumerate(dets) if i not in used_d)
    return DetectionReport(tuple(hits), misses, false_alarms)
