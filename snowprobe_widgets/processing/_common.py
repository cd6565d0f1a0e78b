"""Shared pieces of the processing layer: the step registry and small checks.

Every processing step is a pure function ``step(rg, **params) -> Radargram`` registered in
:data:`STEPS`. It keeps the time and position axes and appends one
``ProcessingRecord(name, params)`` holding the parameters it actually used, defaults
included, so that a history can be replayed.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from .._validate import check_range
from ..constants import C0_M_S
from ..radargram import ProcessingRecord, Radargram
from ..registry import Registry

#: Processing steps by name; plugins add steps through the entry-point group
#: ``snowprobe_widgets.processing`` (the object must be ``f(rg, **params) -> Radargram``).
STEPS = Registry("snowprobe_widgets.processing", "processing step")

#: Slowest propagation velocity accepted, m/s (about that of liquid water, 0.033 m/ns).
VELOCITY_MIN_M_S: float = 0.03e9
#: Fastest propagation velocity accepted, m/s (vacuum).
VELOCITY_MAX_M_S: float = C0_M_S


def record(step: str, **params: Any) -> ProcessingRecord:
    """The history entry of ``step`` with its parameters in call order."""
    return ProcessingRecord(step, tuple(params.items()))


def sample_interval_s(rg: Radargram) -> float:
    """The (uniform) sampling interval of ``rg``; refuses radargrams with < 2 samples."""
    if rg.time_s.size < 2:
        raise ValueError(
            f"radargram has {rg.time_s.size} time sample(s); processing needs at least 2"
        )
    dt = rg.dt_s
    if not dt > 0.0:
        raise ValueError(f"time_s must increase; got a sampling interval of {dt:g} s")
    return dt


def trace_spacing_m(rg: Radargram) -> float:
    """The mean trace spacing of ``rg``; refuses radargrams with < 2 traces."""
    if rg.position_m.size < 2:
        raise ValueError(
            f"radargram has {rg.position_m.size} trace(s); this step needs at least 2"
        )
    dx = rg.dx_m
    if not dx > 0.0:
        raise ValueError(f"position_m must increase; got a trace spacing of {dx:g} m")
    return dx


def check_velocity(name: str, value: float) -> float:
    """Return ``value`` if it is a physical propagation velocity, else raise ``ValueError``."""
    return check_range(name, value, VELOCITY_MIN_M_S, VELOCITY_MAX_M_S, unit="m/s")


def check_int(name: str, value: Any, low: int, high: float = math.inf) -> int:
    """Return ``value`` as int if it is a whole number in ``[low, high]``."""
    if isinstance(value, bool) or not isinstance(value, (int, np.integer, float)):
        raise ValueError(f"{name} must be a whole number, got {value!r}")
    if isinstance(value, float) and not value.is_integer():
        raise ValueError(f"{name} = {value!r} must be a whole number in [{low}, {high:g}]")
    check_range(name, value, low, high)
    return int(value)


def check_bool(name: str, value: Any) -> bool:
    """Return ``value`` if it is a bool, else raise ``ValueError``."""
    if not isinstance(value, (bool, np.bool_)):
        raise ValueError(f"{name} must be true or false, got {value!r}")
    return bool(value)


def window_samples(name: str, window_s: float, rg: Radargram) -> int:
    """Check a time window against the record and return its length in samples (odd, >= 3)."""
    dt = sample_interval_s(rg)
    duration = dt * rg.time_s.size
    w = check_range(name, window_s, 2.0 * dt, duration, unit="s")
    n = int(round(w / dt))
    return max(3, n + 1 - n % 2)


def shift_traces(data: np.ndarray, shift_samples: np.ndarray) -> np.ndarray:
    """Shift each trace later by ``shift_samples[j]`` (fractional, linear interpolation).

    Samples shifted in from outside the record are zero.
    """
    nt = data.shape[0]
    src = np.arange(nt, dtype=float)[:, None] - np.asarray(shift_samples, dtype=float)[None, :]
    return sample_rows(data, src)


def sample_rows(data: np.ndarray, index: np.ndarray) -> np.ndarray:
    """Linear interpolation of each column of ``data`` at fractional row ``index``.

    ``index`` has shape ``(m, n_columns)``; points outside ``[0, n_rows - 1]`` give zero.
    """
    nt, nx = data.shape
    inside = (index >= 0.0) & (index <= nt - 1)
    idx = np.clip(index, 0.0, nt - 1)
    i0 = np.minimum(idx.astype(np.intp), max(nt - 2, 0))  # idx >= 0: truncation = floor
    frac = idx - i0
    flat = np.ascontiguousarray(data).ravel()
    k0 = i0 * nx + np.arange(nx)
    out = flat[k0] * (1.0 - frac) + flat[np.minimum(k0 + nx, flat.size - 1)] * frac
    return np.where(inside, out, 0.0)


def median_trace(data: np.ndarray) -> np.ndarray:
    """The median over the traces of every sample row, shape (n_samples, 1).

    Equal to ``np.median(data, axis=1, keepdims=True)`` for finite data (a radargram
    holds no NaN), from a single selection per row: the middle element, and for an even
    number of traces the largest element below it, averaged as numpy averages them.
    Several times faster than numpy's two-index selection on a sweep's sections.
    """
    n = data.shape[1]
    half = n // 2
    part = np.partition(data, half, axis=1)
    upper = part[:, half:half + 1]
    if n % 2:
        return upper.copy()
    lower = part[:, :half].max(axis=1, keepdims=True)
    return np.mean(np.concatenate([lower, upper], axis=1), axis=1, keepdims=True)
