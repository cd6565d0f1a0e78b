"""Presets: typical snow conditions and survey platforms, applied to a scenario.

Each preset is a pure function ``scenario -> Scenario`` that keeps everything it does not
name (the layer thicknesses and dielectric models, the buried people, the line), so a
search lead can switch from "dry powder" to "wet spring debris" and compare. The figures
are typical values for illustration (common practice, from memory), not measurements:

* snow: dry powder 100 kg/m3 dry; wind-packed 350 kg/m3; wet spring avalanche debris
  450 kg/m3 with 5 % liquid water, at 0 degC; refrozen: 350 kg/m3 dry snow under a
  3 cm, 850 kg/m3 melt-freeze crust 5 cm below the surface;
* platforms: hand-held or sled 0.3 m above the snow with a 60 degree beam; a drone 15 m
  up (flown 5-30 m) with a 40 degree beam; a helicopter 30 m up (flown 10-50 m) with a
  30 degree beam. The time window is widened where the higher antenna needs it to reach
  the ground (1.3 x the two-way time, as the link budget's "time window needed").
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from typing import Any

from .budget_checks import window_needed_s
from .fields import SAMPLES
from .scene import Layer, Scenario, Snowpack

__all__ = ["SNOW_PRESETS", "PLATFORM_PRESETS", "apply_snow", "apply_platform"]


def _all_layers(density: float, lwc: float, temperature_c: float | None = None
                ) -> Callable[[Scenario], Scenario]:
    def apply(s: Scenario) -> Scenario:
        # each snow layer keeps its thickness and its dielectric model; a model that
        # cannot take the preset's snow refuses it by name (Layer's own check)
        layers = tuple(dataclasses.replace(la, density_kg_m3=density, lwc_percent=lwc)
                       for la in s.snowpack.layers if not la.ice_crust)
        layers = layers or (Layer(s.snowpack.depth_m, density, lwc),)
        t = s.snowpack.temperature_c if temperature_c is None else temperature_c
        if lwc > 0:
            t = 0.0
        snow = Snowpack(_fill(layers, s.snowpack.depth_m), t)
        return dataclasses.replace(s, snowpack=snow)
    return apply


def _fill(layers: tuple[Layer, ...], depth_m: float) -> tuple[Layer, ...]:
    """``layers`` with the last one thickened to keep the snow ``depth_m`` deep."""
    missing = depth_m - sum(la.thickness_m for la in layers)
    if missing <= 1e-9:
        return layers
    last = layers[-1]
    return layers[:-1] + (dataclasses.replace(last, thickness_m=last.thickness_m + missing),)


def _refrozen(s: Scenario) -> Scenario:
    dry = _all_layers(350.0, 0.0, -5.0)(s)
    if dry.snowpack.depth_m <= 0.1:
        return dry
    return dataclasses.replace(dry, snowpack=dry.snowpack.with_ice_crust(0.05, 0.03, 850.0))


#: Snow conditions: readable name -> function applying them to a scenario.
SNOW_PRESETS: dict[str, Callable[[Scenario], Scenario]] = {
    "Dry powder": _all_layers(100.0, 0.0, -8.0),
    "Wind-packed": _all_layers(350.0, 0.0, -5.0),
    "Wet spring debris": _all_layers(450.0, 5.0),
    "Refrozen crust": _refrozen,
}

#: Platforms: readable name -> (antenna height m, beamwidth deg).
PLATFORM_PRESETS: dict[str, tuple[float, float]] = {
    "Hand-held or sled (0.3 m)": (0.3, 60.0),
    "Drone (5-30 m; 15 m)": (15.0, 40.0),
    "Helicopter (10-50 m; 30 m)": (30.0, 30.0),
}


def _check(scenario: Any) -> None:
    if not isinstance(scenario, Scenario):
        raise ValueError(f"scenario must be a Scenario, got {type(scenario).__name__}")


def apply_snow(scenario: Scenario, name: str) -> Scenario:
    """``scenario`` with the snow preset ``name`` (a key of :data:`SNOW_PRESETS`).

    Raises
    ------
    ValueError
        For an unknown name, or when a buried person no longer fits (the snow depth is
        kept, so this only happens if the scenario was already at its limits).
    """
    _check(scenario)
    if name not in SNOW_PRESETS:
        raise ValueError(f"snow preset {name!r} is not one of: {', '.join(SNOW_PRESETS)}")
    return SNOW_PRESETS[name](scenario)


def apply_platform(scenario: Scenario, name: str) -> Scenario:
    """``scenario`` with the platform preset ``name`` (a key of :data:`PLATFORM_PRESETS`):
    antenna height and beamwidth, and a time window long enough to reach the ground."""
    _check(scenario)
    if name not in PLATFORM_PRESETS:
        raise ValueError(f"platform {name!r} is not one of: {', '.join(PLATFORM_PRESETS)}")
    from .synthesis import column_optics

    height, beam = PLATFORM_PRESETS[name]
    r = dataclasses.replace(scenario.radar, antenna_height_m=height, beamwidth_deg=beam)
    optics = column_optics(dataclasses.replace(scenario, radar=r))
    need = window_needed_s(optics, height, scenario.snowpack.depth_m, r.center_frequency_hz)
    # at most the longest window the sample interval allows; the budget then says so
    window = min(max(r.time_window_s, math.ceil(need / r.dt_s) * r.dt_s), SAMPLES[1] * r.dt_s)
    r = dataclasses.replace(r, time_window_s=window)
    return dataclasses.replace(scenario, radar=r)

