"""Shared pieces of the processing layer: the step registry and small checks.

Every processing step is a pure function ``step(rg, **params) -> Radargram`` registered in
:data:`STEPS`. It keeps the time and position axes and appends one
``ProcessingRecord(name, params)`` holding the parameters it actually used, defaults
included, so that a history can be replayed.

Each step declares its parameters once, as :class:`~snowprobe_widgets.fields.Field`
declarations in the group ``"step:<name>"`` (:func:`step_group`): label, units, help, hard
bounds, and soft bounds that follow the record (a band edge under the Nyquist frequency, a
window inside the record). The step checks each value with :func:`check_param` (the soft
bounds of the radargram it runs on narrow the hard ones), :class:`ProcessingStep` checks the
hard bounds when a chain is built, and the Processing panel builds its controls from the
same declarations, so the three agree and every refusal speaks the screen's words.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .._validate import check_range
from ..constants import C0_M_S
from ..fields import FIELDS, Field, declaration
from ..fields import check as check_field
from ..radargram import ProcessingRecord, Radargram
from ..registry import Registry

#: Processing steps by name; plugins add steps through the entry-point group
#: ``snowprobe_widgets.processing`` (the object must be ``f(rg, **params) -> Radargram``).
STEPS = Registry("snowprobe_widgets.processing", "processing step")

#: Slowest propagation velocity accepted, m/s (about that of liquid water, 0.033 m/ns).
VELOCITY_MIN_M_S: float = 0.03e9
#: Fastest propagation velocity accepted, m/s (vacuum).
VELOCITY_MAX_M_S: float = C0_M_S


def step_group(name: str) -> str:
    """The declarations group of a processing step's parameters: ``"step:<name>"``."""
    return f"step:{name}"


def step_parameters(name: str) -> dict[str, Field]:
    """The declared parameters of step ``name``, in declaration order (empty if none)."""
    return dict(FIELDS.get(step_group(name), {}))


def check_param(step: str, name: str, value: Any, rg: Radargram | None = None, *,
                low: float | None = None, high: float | None = None) -> Any:
    """``value`` checked against the declaration of parameter ``name`` of ``step``.

    Where the declaration's soft bounds follow the record (a callable), the bounds of
    ``rg`` narrow the hard ones: that is the range the step can use on this radargram.
    ``low`` / ``high`` (SI) narrow further (a band's top above its bottom). Narrowed
    bounds keep the declaration's open or closed ends.

    Raises
    ------
    FieldError
        A ``ValueError`` naming the parameter, the value and the allowed range, with a
        message in the screen's words (:attr:`~snowprobe_widgets.fields.FieldError.screen`).
    """
    f = declaration(step_group(step), name)
    lo, hi = f.low, f.high
    if rg is not None and callable(f.soft):
        lo, hi = f.soft_bounds(None, rg)
    if low is not None:
        lo = max(lo, low)
    if high is not None:
        hi = min(hi, high)
    return check_field(f.group, name, value, low=lo, high=hi)


def _sampling(scenario: Any, rg: Radargram | None) -> tuple[float, int]:
    """(sampling interval s, samples) of ``rg``, else of what the scenario's radar records."""
    if rg is not None:
        return rg.dt_s, rg.time_s.size
    return scenario.radar.dt_s, scenario.radar.n_samples


def record_times(scenario: Any, rg: Radargram | None) -> tuple[float, float]:
    """Soft bounds of a time on the record: its first and last sample, s."""
    if rg is not None:
        return float(rg.time_s[0]), float(rg.time_s[-1])
    dt, n = _sampling(scenario, rg)
    return 0.0, (n - 1) * dt


def record_window(scenario: Any, rg: Radargram | None) -> tuple[float, float]:
    """Soft bounds of a running window: two samples to the whole record, s."""
    dt, n = _sampling(scenario, rg)
    return 2.0 * dt, dt * n


def below_nyquist(scenario: Any, rg: Radargram | None) -> tuple[float, float]:
    """Soft bounds of a frequency the record holds: 0 to the Nyquist frequency 1 / (2 dt)."""
    dt, _n = _sampling(scenario, rg)
    return 0.0, 0.5 / dt


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


def window_samples(step: str, name: str, window_s: float, rg: Radargram) -> int:
    """Check a time window (parameter ``name`` of ``step``, soft bounds
    :func:`record_window`) against the record; its length in samples (odd, >= 3)."""
    dt = sample_interval_s(rg)
    w = check_param(step, name, window_s, rg)
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
