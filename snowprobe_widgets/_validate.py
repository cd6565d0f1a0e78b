"""Input checks shared by the public constructors.

Every error names the argument, the value it got and the range it allows, so that a
widget can show the message next to the control unchanged.
"""

from __future__ import annotations

import math
import numbers

import numpy as np


def _fmt(x: float) -> str:
    return f"{x:g}"


def _show(value: object) -> str:
    """A short description of a value for a message (never thousands of digits)."""
    if isinstance(value, int) and not isinstance(value, bool):
        digits = len(str(abs(value))) if abs(value) < 10**4000 else 4000
        if digits > 20:
            return f"an integer of {digits}{'+' if digits >= 4000 else ''} digits"
    if isinstance(value, np.ndarray):
        return f"an array of shape {value.shape}"
    if isinstance(value, (list, tuple, set, dict)):
        return f"a {type(value).__name__} of {len(value)} items"
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


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
    u = f" {unit}" if unit else ""
    lo_br = "(" if low_open else "["
    hi_br = ")" if high_open else "]"
    allowed = f"{lo_br}{_fmt(low)}, {_fmt(high)}{hi_br}{u}"
    if isinstance(value, (bool, np.bool_)) or not isinstance(value, numbers.Real):
        raise ValueError(f"{name} must be a number, got {_show(value)}; allowed range {allowed}")
    try:
        x = float(value)
    except OverflowError:
        raise ValueError(f"{name} = {_show(value)} is far too large; allowed range "
                         f"{allowed}") from None
    if not math.isfinite(x):
        raise ValueError(f"{name} = {value!r} is not a finite number; allowed range {allowed}")
    bad_low = x <= low if low_open else x < low
    bad_high = x >= high if high_open else x > high
    if bad_low or bad_high:
        raise ValueError(f"{name} = {_fmt(x)}{u} is outside the allowed range {allowed}")
    return x


def check_int(name: str, value: object, low: int, high: int) -> int:
    """Return ``value`` as an int in ``[low, high]``; integral floats are accepted.

    Raises
    ------
    ValueError
        Naming ``name``, for a bool, a non-integral or non-numeric value, or one outside
        the range (a huge integer is described by its digit count, not printed).
    """
    if isinstance(value, (bool, np.bool_)):
        raise ValueError(f"{name} must be a whole number, got {value!r}")
    if isinstance(value, (int, np.integer)):
        n = int(value)
    elif isinstance(value, (float, np.floating)) and math.isfinite(value) and value == int(value):
        n = int(value)
    else:
        raise ValueError(f"{name} must be a whole number, got {_show(value)}")
    if not low <= n <= high:
        raise ValueError(f"{name} = {_show(n)} is outside the allowed range [{low}, {high}]")
    return n


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
    if not isinstance(value, str) or value not in choices:
        raise ValueError(f"{name} = {_show(value)} is not one of: "
                         f"{', '.join(map(repr, choices))}")
    return value


def check_pore_water(density_kg_m3: float, lwc_percent: float, ice_density_kg_m3: float,
                     ) -> None:
    """Refuse liquid water that does not fit in the pores of snow of this dry density.

    The one test of ``ice volume fraction + water volume fraction <= 1``, used by
    :class:`snowprobe_widgets.scene.Layer` and the wet-snow models alike, so that a layer
    the scene accepts is never refused by the materials.
    """
    ice = density_kg_m3 / ice_density_kg_m3
    if ice + lwc_percent / 100.0 > 1.0:
        room = max(0.0, 100.0 * (1.0 - ice))
        raise ValueError(
            f"lwc_percent = {lwc_percent:g} % does not fit in the pores of snow of "
            f"density_kg_m3 = {density_kg_m3:g} kg/m3: the ice already fills {100 * ice:.1f} "
            f"% of the volume, so at most {room:.1f} % water")
