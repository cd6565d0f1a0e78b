"""Trace-by-trace and section-wide filters: time-zero, dewow, background removal,
band-pass and envelope.
"""

from __future__ import annotations

import functools
from collections.abc import Callable

import numpy as np
from scipy import ndimage

from ..fields import Field, declare
from ..radargram import Radargram
from ._common import (
    STEPS,
    below_nyquist,
    check_param,
    median_trace,
    record,
    record_times,
    record_window,
    sample_interval_s,
    shift_traces,
    step_group,
    window_samples,
)
from .dsp import analytic_signal, butter_bandpass_sos, sos_filtfilt

__all__ = ["time_zero", "dewow", "background_removal", "bandpass", "envelope",
           "pick_first_arrival_s"]

BACKGROUND_METHODS = ("mean", "median")
#: Samples (time samples x traces) of the moving median filtered at a time: on a long
#: line it is the slowest step after migration (~1 us a sample for 51 traces, measured),
#: so it reports progress, and can be stopped, after each band of rows this size.
_MEDIAN_CHUNK_CELLS = 250_000

_NS = dict(unit="s", display_unit="ns", scale=1e-9, decimals=1)
_MHZ = dict(unit="Hz", display_unit="MHz", scale=1e6, decimals=0)

declare(
    Field(step_group("time_zero"), "target_time_s", "number", "Target time", **_NS,
          low=-1e-4, high=1e-4, soft=record_times, step=0.1,
          help="Where the surface echo is moved to, in two-way time."),
    Field(step_group("time_zero"), "threshold", "number", "Pick level", low=0.0, high=1.0,
          low_open=True, soft=(0.05, 1.0), step=0.05,
          help="Share of the strongest echo at which the surface echo is picked."),
    Field(step_group("time_zero"), "pick_time_s", "optional number", "Surface echo time",
          **_NS, low=-1e-4, high=1e-4, soft=record_times,
          help="Use this time as the surface echo on every trace instead of picking it; "
               "empty: pick it."),
    Field(step_group("time_zero"), "per_trace", "boolean", "Pick each trace",
          help="Pick and move every trace on its own (follows a wavy surface echo) or move "
               "all traces by one amount."),
    Field(step_group("dewow"), "window_s", "number", "Window", **_NS, low=0.0, high=1e-4,
          soft=record_window, step=0.1,
          help="Length of the running mean that is taken away; several periods of the "
               "pulse. It must lie between two samples and the whole record."),
    Field(step_group("background_removal"), "method", "choice", "Average",
          choices=BACKGROUND_METHODS,
          help="Mean or median of the traces; the median ignores a few odd traces."),
    # an odd whole number; empty (None): one background trace for the whole line
    Field(step_group("background_removal"), "window_traces", "integer", "Moving window",
          display_unit="traces", low=3, high=1_000_001,
          soft=lambda scenario, rg: (3, max(rg.position_m.size if rg is not None
                                            else scenario.survey.n_traces, 3)),
          help="Odd number of neighbouring traces averaged for each trace; empty: one "
               "average over the whole line."),
    Field(step_group("bandpass"), "low_hz", "number", "Low edge", **_MHZ, low=0.0, high=1e12,
          low_open=True, high_open=True, soft=below_nyquist, step=10.0,
          help="Lower edge of the band that is kept; above 0 and below the high edge."),
    Field(step_group("bandpass"), "high_hz", "number", "High edge", **_MHZ, low=0.0,
          high=1e12, low_open=True, high_open=True, soft=below_nyquist, step=10.0,
          help="Upper edge of the band that is kept; below half the sampling rate (the "
               "Nyquist frequency)."),
    Field(step_group("bandpass"), "order", "integer", "Filter order", low=1, high=10,
          decimals=0, help="Steepness of the filter's edges (1 to 10)."),
)


def _envelope(data: np.ndarray) -> np.ndarray:
    return np.abs(analytic_signal(data, axis=0))


def pick_first_arrival_s(rg: Radargram, threshold: float = 0.5,
                         per_trace: bool = True) -> np.ndarray:
    """Time where the envelope first reaches ``threshold`` times its peak level, per trace.

    The level of a trace is ``threshold * min(trace peak, median of the trace peaks)``, so
    that a strong echo below the surface on a few traces (a buried body right under the
    antenna) does not capture the pick from the surface echo before it.

    Parameters
    ----------
    rg : Radargram
        Section to pick.
    threshold : float
        Fraction of the envelope peak that defines the arrival, in (0, 1].
    per_trace : bool
        Pick every trace on its own envelope (true) or pick once on the envelope averaged
        over all traces and repeat that time (false).

    Returns
    -------
    ndarray, shape (n_traces,)
        Picked times, s, interpolated linearly between samples. Traces without any signal
        (all zero) get NaN.

    Notes
    -----
    Threshold picking of the leading edge of the envelope is common practice for first
    arrivals; the pick lies before the envelope peak by about half the pulse length.
    """
    thr = check_param("time_zero", "threshold", threshold)
    per_trace = check_param("time_zero", "per_trace", per_trace)
    env = _envelope(rg.data)
    if not per_trace:
        env = env.mean(axis=1, keepdims=True)
    peak = env.max(axis=0)
    level = thr * np.minimum(peak, np.median(peak))
    above = env >= level[None, :]
    k = np.argmax(above, axis=0)
    cols = np.arange(env.shape[1])
    e1 = env[k, cols]
    e0 = env[np.maximum(k - 1, 0), cols]
    rise = e1 - e0
    frac = np.where((k > 0) & (rise > 0), (level - e0) / np.where(rise > 0, rise, 1.0), 1.0)
    t = rg.time_s
    t_pick = t[np.maximum(k - 1, 0)] + np.where(k > 0, frac, 0.0) * sample_interval_s(rg)
    t_pick = np.where(peak > 0.0, t_pick, np.nan)
    if not per_trace:
        t_pick = np.full(rg.position_m.size, t_pick[0])
    return t_pick


@STEPS.register("time_zero")
def time_zero(rg: Radargram, target_time_s: float = 0.0, threshold: float = 0.5,
              pick_time_s: float | None = None, per_trace: bool = True) -> Radargram:
    """Shift traces so that the first strong arrival (or a given time) lands at ``target_time_s``.

    Parameters
    ----------
    rg : Radargram
        Input section.
    target_time_s : float
        Where the arrival is moved to, s, inside the time axis.
    threshold : float
        Envelope fraction used by :func:`pick_first_arrival_s` when ``pick_time_s`` is None.
    pick_time_s : float or None
        Use this arrival time for every trace instead of picking.
    per_trace : bool
        Pick and shift each trace on its own (aligns a wavy surface echo) or shift all
        traces by one common amount.

    Returns
    -------
    Radargram
        Same axes; samples shifted in from outside the record are zero. Traces with no
        signal are left in place.
    """
    dt = sample_interval_s(rg)
    target = check_param("time_zero", "target_time_s", target_time_s, rg)
    thr = check_param("time_zero", "threshold", threshold)
    per_trace = check_param("time_zero", "per_trace", per_trace)
    if pick_time_s is None:
        picks = pick_first_arrival_s(rg, thr, per_trace)
    else:
        p = check_param("time_zero", "pick_time_s", pick_time_s, rg)
        picks = np.full(rg.position_m.size, p)
        pick_time_s = p
    shift = np.where(np.isfinite(picks), (target - picks) / dt, 0.0)
    out = shift_traces(rg.data, shift)
    rec = record("time_zero", target_time_s=target, threshold=thr, pick_time_s=pick_time_s,
                 per_trace=per_trace)
    return rg.with_data(out, rec)


@STEPS.register("dewow")
def dewow(rg: Radargram, window_s: float = 5e-9) -> Radargram:
    """Subtract a running mean along each trace (removes DC and the slow "wow").

    Parameters
    ----------
    rg : Radargram
        Input section.
    window_s : float
        Length of the running-mean window, s, between two samples and the record length.
        Several pulse periods is usual (5 ns suits 400 MHz to 1.6 GHz antennas; common
        practice). The window is rounded to an odd number of samples (at least 3); the
        trace is mirrored at its ends.
    """
    n = window_samples("dewow", "window_s", window_s, rg)
    mean = ndimage.uniform_filter1d(rg.data, size=n, axis=0, mode="reflect")
    return rg.with_data(rg.data - mean, record("dewow", window_s=float(window_s)))


@STEPS.register("background_removal")
def background_removal(rg: Radargram, method: str = "mean",
                       window_traces: int | None = None, *,
                       progress: Callable[[float], None] | None = None) -> Radargram:
    """Subtract the mean or median trace (removes flat bands: antenna ringing, flat layers).

    Parameters
    ----------
    rg : Radargram
        Input section.
    method : {"mean", "median"}
        Statistic of the background trace; the median ignores a few odd traces.
    window_traces : int or None
        None: one background trace for the whole section. Otherwise an odd number of
        traces (3 to n_traces) of a moving window centred on each trace, which follows a
        slowly changing background (ends are mirrored).
    progress : callable or None
        Called with the fraction done after each band of time samples of a moving
        median (the slow case); an exception it raises stops the step there. The result
        does not depend on it.
    """
    method = check_param("background_removal", "method", method)
    data = rg.data
    if window_traces is None:
        if method == "mean":
            bg = data.mean(axis=1, keepdims=True)
        else:
            bg = median_trace(data)
    else:
        w = check_param("background_removal", "window_traces", window_traces, rg)
        if w % 2 == 0:
            raise ValueError(f"window_traces = {w} must be odd (a window centred on the trace)")
        window_traces = w
        if method == "mean":
            bg = ndimage.uniform_filter1d(data, size=w, axis=1, mode="reflect")
        else:
            bg = np.empty_like(data)
            rows = max(1, _MEDIAN_CHUNK_CELLS // data.shape[1])
            for start in range(0, data.shape[0], rows):  # rows are filtered on their own
                stop = min(start + rows, data.shape[0])
                bg[start:stop] = ndimage.median_filter(data[start:stop], size=(1, w),
                                                       mode="reflect")
                if progress is not None:
                    progress(stop / data.shape[0])
    rec = record("background_removal", method=method, window_traces=window_traces)
    return rg.with_data(data - bg, rec)


@functools.lru_cache(maxsize=16)
def _butter_bandpass(order: int, low_hz: float, high_hz: float, fs_hz: float) -> np.ndarray:
    """Second-order sections of a Butterworth band-pass (designed once per setting: a
    sweep filters thousands of sections alike)."""
    sos = butter_bandpass_sos(order, low_hz, high_hz, fs_hz)
    sos.setflags(write=False)
    return sos


@STEPS.register("bandpass")
def bandpass(rg: Radargram, low_hz: float, high_hz: float, order: int = 4) -> Radargram:
    """Zero-phase Butterworth band-pass (forward and backward second-order sections).

    Parameters
    ----------
    rg : Radargram
        Input section.
    low_hz, high_hz : float
        Band edges (-3 dB of the one-way filter, so -6 dB after the two passes), Hz, with
        ``0 < low_hz < high_hz < Nyquist = 1 / (2 dt)``.
    order : int
        Butterworth order of the one-way filter, 1 to 10.
    """
    dt = sample_interval_s(rg)
    lo = check_param("bandpass", "low_hz", low_hz, rg)
    hi = check_param("bandpass", "high_hz", high_hz, rg, low=lo)
    n = check_param("bandpass", "order", order)
    out = sos_filtfilt(_butter_bandpass(n, lo, hi, 1.0 / dt), rg.data)
    return rg.with_data(out, record("bandpass", low_hz=lo, high_hz=hi, order=n))


@STEPS.register("envelope")
def envelope(rg: Radargram) -> Radargram:
    """Instantaneous amplitude: magnitude of the analytic signal along each trace."""
    sample_interval_s(rg)
    return rg.with_data(_envelope(rg.data), record("envelope"))
