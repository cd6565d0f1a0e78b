"""Time-varying gain: exponential (attenuation) and spreading compensation, and AGC."""

from __future__ import annotations

from typing import Any

import numpy as np
from scipy import ndimage

from ..fields import Field, declare
from ..radargram import Radargram
from ._common import (
    STEPS,
    VELOCITY_MAX_M_S,
    VELOCITY_MIN_M_S,
    check_param,
    record,
    record_times,
    record_window,
    sample_interval_s,
    step_group,
    window_samples,
)

__all__ = ["gain", "gain_curve", "GAIN_KINDS"]

GAIN_KINDS = ("exponential", "spreading", "agc")

#: Parameters of each gain kind and their defaults.
KIND_PARAMS: dict[str, dict[str, Any]] = {
    "exponential": {"attenuation_db_m": 1.0, "velocity_m_s": 0.23e9, "start_s": 0.0,
                    "max_gain_db": 60.0},
    "spreading": {"power": 1.0, "start_s": 0.0, "max_gain_db": 60.0},
    "agc": {"window_s": 5e-9},
}

_G = step_group("gain")


def _gain_start(scenario: Any, rg: Radargram | None) -> tuple[float, float]:
    # the gain may start at 0 before a record that begins later
    first, last = record_times(scenario, rg)
    return min(first, 0.0), last


declare(
    Field(_G, "kind", "choice", "Kind", choices=GAIN_KINDS,
          help="spreading: grows with time, undoing the spreading of the wave; exponential: "
               "undoes a loss in dB per metre; agc: brings every part of the trace to the "
               "same level."),
    Field(_G, "attenuation_db_m", "optional number", "Attenuation", unit="dB/m",
          display_unit="dB/m", low=0.0, high=100.0, step=0.5, decimals=1,
          help="exponential: the loss per metre that the gain undoes."),
    Field(_G, "velocity_m_s", "optional number", "Wave speed", unit="m/s",
          display_unit="m/ns", scale=1e9, low=VELOCITY_MIN_M_S, high=VELOCITY_MAX_M_S,
          step=0.005, decimals=3,
          help="exponential: speed of the wave in the snow, to turn time into metres."),
    Field(_G, "power", "optional number", "Power of time", low=0.0, high=4.0, step=0.1,
          decimals=1, help="spreading: the gain grows as time to this power (1 undoes the "
                           "spreading of a spherical wave)."),
    Field(_G, "start_s", "optional number", "Start time", unit="s", display_unit="ns",
          scale=1e-9, low=-1e-4, high=1e-4, soft=_gain_start, step=0.1, decimals=1,
          help="exponential and spreading: where the gain starts (the surface echo)."),
    Field(_G, "max_gain_db", "optional number", "Largest gain", unit="dB",
          display_unit="dB", low=0.0, high=200.0, step=1.0, decimals=0,
          help="exponential and spreading: the gain stops growing here, so noise is not "
               "lifted without end."),
    Field(_G, "window_s", "optional number", "AGC window", unit="s", display_unit="ns",
          scale=1e-9, low=0.0, high=1e-4, soft=record_window, step=0.1,
          decimals=1, help="agc: length of the window whose level each sample is "
                           "divided by."),
)

#: Smallest running RMS AGC divides by, as a fraction of the section's largest running RMS.
AGC_FLOOR: float = 1e-6


def _resolve(kind: str, given: dict[str, Any]) -> dict[str, Any]:
    allowed = KIND_PARAMS[kind]
    for name, value in given.items():
        if value is not None and name not in allowed:
            raise ValueError(
                f"{name} does not apply to kind = {kind!r}; its parameters are: "
                f"{', '.join(allowed)}"
            )
    return {name: (default if given.get(name) is None else given[name])
            for name, default in allowed.items()}


def gain_curve(time_s: np.ndarray, kind: str, **params: Any) -> np.ndarray:
    """Amplitude gain versus time for ``kind`` "exponential" or "spreading".

    With ``tau = max(t - start_s, 0)``:

    * exponential: ``g = 10 ** (attenuation_db_m * velocity_m_s * tau / 20)``, which undoes
      a loss of ``attenuation_db_m`` per metre along the two-way path ``v tau``;
    * spreading: ``g = (max(tau, dt) / dt) ** power`` (``power = 1`` undoes the 1/r
      amplitude decay of a spherical wave; common practice, see Yilmaz 2001, *Seismic
      Data Analysis*, section 1.4, from memory),

    both capped at ``max_gain_db``.
    """
    t = np.asarray(time_s, dtype=float)
    p = params
    tau = np.maximum(t - p["start_s"], 0.0)
    if kind == "exponential":
        g_db = p["attenuation_db_m"] * p["velocity_m_s"] * tau
    elif kind == "spreading":
        dt = float(t[1] - t[0]) if t.size > 1 else 1.0
        g_db = 20.0 * p["power"] * np.log10(np.maximum(tau, dt) / dt)
    else:
        raise ValueError(f"kind = {kind!r} has no fixed gain curve; use 'exponential' or "
                         "'spreading'")
    return 10.0 ** (np.minimum(g_db, p["max_gain_db"]) / 20.0)


@STEPS.register("gain")
def gain(rg: Radargram, kind: str = "exponential", *, attenuation_db_m: float | None = None,
         velocity_m_s: float | None = None, power: float | None = None,
         start_s: float | None = None, max_gain_db: float | None = None,
         window_s: float | None = None) -> Radargram:
    """Amplify later samples to make deep echoes visible.

    Parameters
    ----------
    rg : Radargram
        Input section.
    kind : {"exponential", "spreading", "agc"}
        Gain law. Only the parameters of the chosen kind may be given; the others must be
        left as None. See :func:`gain_curve` for the first two.
    attenuation_db_m : float
        exponential: one-way attenuation of the medium, dB/m, in [0, 100] (default 1).
    velocity_m_s : float
        exponential: propagation velocity, m/s (default 0.23e9, dry snow).
    power : float
        spreading: exponent of the time gain, in [0, 4] (default 1).
    start_s : float
        exponential and spreading: time where the gain starts (the surface echo after
        time-zero), s (default 0).
    max_gain_db : float
        exponential and spreading: cap of the gain, dB, in [0, 200] (default 60).
    window_s : float
        agc: length of the running RMS window, s (default 5 ns). Each sample is divided by
        the RMS of the samples around it, so every part of the trace ends near unit RMS.
        The RMS is floored at ``AGC_FLOOR`` times its largest value, so silent parts stay
        silent and an all-zero section stays zero.
    """
    kind = check_param("gain", "kind", kind)
    given = dict(attenuation_db_m=attenuation_db_m, velocity_m_s=velocity_m_s, power=power,
                 start_s=start_s, max_gain_db=max_gain_db, window_s=window_s)
    p = _resolve(kind, given)
    sample_interval_s(rg)
    t = rg.time_s
    if kind == "agc":
        n = window_samples("gain", "window_s", p["window_s"], rg)
        p["window_s"] = float(p["window_s"])
        ms = ndimage.uniform_filter1d(rg.data**2, size=n, axis=0, mode="reflect")
        rms = np.sqrt(np.maximum(ms, 0.0))
        top = float(rms.max())
        if top == 0.0:
            out = np.zeros_like(rg.data)
        else:
            out = rg.data / np.maximum(rms, AGC_FLOOR * top)
        return rg.with_data(out, record("gain", kind=kind, **p))
    for name in ("attenuation_db_m", "velocity_m_s", "power", "max_gain_db"):
        if name in p:
            p[name] = check_param("gain", name, p[name])
    p["start_s"] = check_param("gain", "start_s", p["start_s"], rg)
    g = gain_curve(t, kind, **p)
    return rg.with_data(rg.data * g[:, None], record("gain", kind=kind, **p))
