"""Conditions that overrule a link budget: the echo may be strong, yet the survey misses it.

:func:`snowprobe_widgets.budget.link_budget` calls :func:`overruling_warnings` for its
target; each warning is one plain sentence naming the condition and what to change:

* **Time window**: the trace stops recording before the target's echo arrives. The echo of
  the target's top arrives at the two-way time straight down (``2 h / c0`` in the air plus
  ``2 sum d_j n_j / c0`` through the snow); the window must also hold one period of the
  centre frequency (the echo's main lobe). The window suggested is 1.3 times that time
  (Annan's rule for the time window; REFERENCES 7.9).
* **Trace spacing**: coarser than a quarter wavelength in the densest snow, the spacing
  that samples a diffraction hyperbola without aliasing (Annan, Nyquist criterion;
  REFERENCES 7.9). The budget's "trace spacing needed" row gives the value.
* **Footprint**: the target's nearest point lies farther from the survey line than the
  radar sees at its depth. The footprint radius is the larger of the first Fresnel zone
  (REFERENCES 7.7) and the -3 dB beam's edge refracted into the snow (``h tan(b/2)`` in the
  air, then ``d_j tan(theta_j)`` in each layer with ``sin theta_j = sin(b/2) / n_j``;
  Snell's law, geometry of the beam as common practice).
* **Detection level**: the echo stands less than the detection level above the receiver
  noise and the debris clutter together (their rms added in power). One level serves the
  budget and the automatic detector: :data:`snowprobe_widgets.detection.DEFAULT_THRESHOLD_DB`
  by default, the value set on screen otherwise.

:func:`link_budgets` gives one budget per buried person, in order.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from .constants import C0_M_S
from .raypaths import layers_above_m

__all__ = ["CLUTTER_MARGIN_DB", "beam_edge_m", "footprint_radius_m", "link_budgets",
           "overruling_warnings", "two_way_time_s", "window_needed_s"]

#: Echo-to-clutter ratio below which an echo above the noise may still hide in the debris
#: clutter, dB (an invented working figure: about twice the clutter amplitude).
CLUTTER_MARGIN_DB = 6.0
#: Annan's time-window margin over the deepest two-way time (REFERENCES 7.9).
_WINDOW_MARGIN = 1.3


def two_way_time_s(optics: Any, antenna_height_m: float, depth_m: float) -> float:
    """Two-way time from the antenna straight down to ``depth_m`` and back, s.

    Parameters
    ----------
    optics : ColumnOptics
        The column's layer thicknesses (m) and refractive indices at the centre frequency.
    """
    d = layers_above_m(optics.thickness_m, depth_m)
    return 2.0 * (antenna_height_m + float(np.dot(d, optics.index))) / C0_M_S


def window_needed_s(optics: Any, antenna_height_m: float, depth_m: float,
                    center_frequency_hz: float) -> float:
    """The recording window that holds the echo of ``depth_m``: 1.3 x (its two-way time
    plus one period of the centre frequency), s."""
    t = two_way_time_s(optics, antenna_height_m, depth_m) + 1.0 / center_frequency_hz
    return _WINDOW_MARGIN * t


def beam_edge_m(optics: Any, antenna_height_m: float, beamwidth_deg: float,
                depth_m: float | np.ndarray) -> float | np.ndarray:
    """Horizontal distance from the antenna to the -3 dB beam's edge at ``depth_m``, m,
    refracted at every interface (``h tan(b/2)`` in the air, then ``d_j tan(theta_j)``
    with ``sin theta_j = sin(b/2) / n_j``; see the module notes). The footprint here and
    the budget's clutter cell both use it; an array of depths gives an array."""
    half = math.radians(beamwidth_deg) / 2.0
    thick = np.asarray(optics.thickness_m, dtype=float)
    tops = np.concatenate([[0.0], np.cumsum(thick)[:-1]])
    d = np.clip(np.asarray(depth_m, dtype=float)[..., None] - tops, 0.0, thick)
    s = math.sin(half) / np.asarray(optics.index, dtype=float)
    edge = antenna_height_m * math.tan(min(half, math.radians(89.0))) + d @ (
        s / np.sqrt(1.0 - s * s))
    return edge if np.ndim(edge) else float(edge)


def footprint_radius_m(optics: Any, antenna_height_m: float, beamwidth_deg: float,
                       depth_m: float, fresnel_radius_m: float) -> float:
    """How far to the side of the antenna the radar sees at ``depth_m``, m: the larger of
    the first Fresnel zone and the refracted -3 dB beam edge (:func:`beam_edge_m`)."""
    return max(beam_edge_m(optics, antenna_height_m, beamwidth_deg, depth_m),
               fresnel_radius_m)


def _m(x: float) -> str:
    return f"{x:.1f} m" if x >= 1.0 else f"{100 * x:.0f} cm"


def overruling_warnings(scenario: Any, target: Any, *, label: str, optics: Any,
                        echo_over_noise_and_clutter_db: float, threshold_db: float,
                        spacing_needed_m: float, fresnel_radius_m: float) -> tuple[str, ...]:
    """The conditions that overrule the budget of ``target``, as plain sentences.

    Parameters
    ----------
    scenario : Scenario
    target : Person, Boulder, Branch or MetalPlate
    label : str
        What to call the target ("Person 1", "ski tourer").
    optics : ColumnOptics
        The scenario's column optics (``synthesis.column_optics``).
    echo_over_noise_and_clutter_db : float
        The echo's peak over the rms of the noise and clutter added in power, dB.
    threshold_db : float
        The detection level, dB.
    spacing_needed_m : float
        The quarter-wave trace spacing of the budget, m.
    fresnel_radius_m : float
        The first Fresnel zone at the target's depth, m.

    Returns
    -------
    tuple of str
        Empty when nothing overrules; otherwise in the order window, spacing, footprint,
        detection level.
    """
    radar, survey = scenario.radar, scenario.survey
    depth = float(target.depth_m)
    who = label[:1].upper() + label[1:]
    out: list[str] = []
    h, fc = radar.antenna_height_m, radar.center_frequency_hz
    arrives = two_way_time_s(optics, h, depth) + 1.0 / fc
    if radar.time_window_s < arrives:
        needed = math.ceil(window_needed_s(optics, h, depth, fc) * 1e9)
        out.append(f"The time window ({radar.time_window_s * 1e9:.1f} ns) ends before the echo "
                   f"of {label} arrives (about {arrives * 1e9:.0f} ns with the antenna "
                   f"{h:.2f} m up): set the time window to at least {needed} ns.")
    if survey.trace_spacing_m > spacing_needed_m * (1 + 1e-9):
        needed = math.floor(1000 * spacing_needed_m) / 10
        out.append(f"The trace spacing ({100 * survey.trace_spacing_m:.1f} cm) is coarser "
                   f"than the hyperbola of {label} needs: use {needed:.1f} cm or less "
                   "(a quarter wavelength in the snow).")
    reach = footprint_radius_m(optics, h, radar.beamwidth_deg, depth, fresnel_radius_m)
    extent = float(getattr(target, "half_extent_m", 0.0))  # a plugin kind may not say
    along = max(0.0, survey.start_m - target.position_m, target.position_m - survey.end_m)
    off = max(0.0, math.hypot(along, abs(target.offset_m)) - extent)
    if off > reach:
        where = "to the side of" if along <= 0.0 else "beyond the end of"
        out.append(f"{who} lies {_m(off)} {where} the survey line, outside what the radar "
                   f"sees at {depth:.1f} m depth (about {_m(reach)} to each side): move the "
                   f"line {_m(off - reach)} closer.")
    if echo_over_noise_and_clutter_db < threshold_db:
        out.append(f"The echo of {label} stands {echo_over_noise_and_clutter_db:.0f} dB above "
                   f"the noise and clutter, below the detection level of {threshold_db:.0f} dB.")
    return tuple(out)


def link_budgets(scenario: Any, **options: Any) -> tuple[Any, ...]:
    """One :class:`~snowprobe_widgets.budget.LinkBudget` per buried person, in order
    (empty when nobody is buried); ``options`` go to ``link_budget`` (``threshold_db``)."""
    from .budget import link_budget
    from .scene import Scenario

    if not isinstance(scenario, Scenario):
        raise ValueError(f"scenario must be a Scenario, got {type(scenario).__name__}")
    return tuple(link_budget(scenario, p, **options) for p in scenario.persons)
