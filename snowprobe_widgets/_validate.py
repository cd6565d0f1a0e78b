"""Input checks shared by the public constructors.

Every error names the argument, the value it got and the range it allows, so that a
widget can show the message next to the control unchanged.
"""

from __future__ import annotations

import math

import numpy as np


def _fmt(x: float) -> str:
    return f"{x:g}"


def check_range(
    name: str,
    value: float,
    low: float = -math.inf,
    high: float = math.inf,
    *,
    unit: str = "",
    low_open: bool = False,
    high_open: bool = False,
) -> float:
    """Return ``float(value)`` or raise ``ValueError`` naming ``name`` and the range.

    Parameters
    ----------
    name : str
        Argument name as the user typed it (for example ``"density_kg_m3"``).
    value : float
        Value to check; must be a finite real number.
    low, high : float
        Bounds of the allowed range.
    unit : str
        Unit shown after the numbers in the message.
    low_open, high_open : bool
        Exclude the bound itself.
    """
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise ValueError(f"{name} must be a number, got {value!r}") from None
    if isinstance(value, bool):
        raise ValueError(f"{name} must be a number, got {value!r}")
    u = f" {unit}" if unit else ""
    lo_br = "(" if low_open else "["
    hi_br = ")" if high_open else "]"
    allowed = f"{lo_br}{_fmt(low)}, {_fmt(high)}{hi_br}{u}"
    if not math.isfinite(x):
        raise ValueError(f"{name} = {value!r} is not a finite number; allowed range {allowed}")
    bad_low = x <= low if low_open else x < low
    bad_high = x >= high if high_open else x > high
    if bad_low or bad_high:
        raise ValueError(f"{name} = {_fmt(x)}{u} is outside the allowed range {allowed}")
    return x


def check_frequency(
    freq_hz: object, low_hz: float = 0.0, high_hz: float = math.inf, name: str = "freq_hz"
) -> np.ndarray:
    """Return ``freq_hz`` as a float ndarray, refusing non-positive or out-of-range values.

    Raises
    ------
    ValueError
        If any frequency is not finite, not positive, or outside ``[low_hz, high_hz]``.
    """
    f = np.asarray(freq_hz, dtype=float)
    if f.size == 0:
        return f
    if not np.all(np.isfinite(f)):
        raise ValueError(f"{name} contains values that are not finite numbers")
    fmin = float(f.min())
    fmax = float(f.max())
    if fmin <= 0.0:
        raise ValueError(f"{name} = {fmin:g} Hz is not positive; frequencies must be > 0 Hz")
    if fmin < low_hz or fmax > high_hz:
        bad = fmin if fmin < low_hz else fmax
        raise ValueError(
            f"{name} = {bad:g} Hz is outside the model's valid range "
            f"[{low_hz:g}, {high_hz:g}] Hz"
        )
    return f


def check_choice(name: str, value: str, choices: tuple[str, ...] | list[str]) -> str:
    """Return ``value`` if it is one of ``choices``, else raise a ``ValueError`` listing them."""
    if value not in choices:
        raise ValueError(f"{name} = {value!r} is not one of: {', '.join(map(repr, choices))}")
    return value
