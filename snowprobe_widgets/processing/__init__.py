"""Radargram processing: pure functions ``Radargram -> Radargram`` and chains of them.

Every step keeps the time and position axes and appends a
:class:`~snowprobe_widgets.radargram.ProcessingRecord` (its name and the parameters it
used) to the history. Steps are registered by name in :data:`STEPS`, which other packages
extend through the entry-point group ``snowprobe_widgets.processing``. Each step's
parameters are declared in :mod:`snowprobe_widgets.fields` in the group ``"step:<name>"``
(:func:`step_parameters`); the steps, the chain and the Processing panel read them there.

Steps: :func:`time_zero`, :func:`dewow`, :func:`background_removal`, :func:`gain`,
:func:`bandpass`, :func:`migrate`, :func:`envelope`.

Not steps (they return other things): :func:`velocity_analysis` (a
:class:`VelocityEstimate`), :func:`depth_axis_m` and :func:`time_to_depth` (a depth axis,
and the data resampled onto it, since a Radargram only carries time).
"""

from __future__ import annotations

from ._common import STEPS, VELOCITY_MAX_M_S, VELOCITY_MIN_M_S, step_group, step_parameters
from .amplitude import GAIN_KINDS, gain, gain_curve
from .chain import ProcessingChain, ProcessingStep, step_defaults
from .depth import depth_axis_m, time_to_depth
from .filters import (
    BACKGROUND_METHODS,
    background_removal,
    bandpass,
    dewow,
    envelope,
    pick_first_arrival_s,
    time_zero,
)
from .migration import MIGRATION_METHODS, migrate
from .velocity import VelocityEstimate, semblance, velocity_analysis

__all__ = [
    "STEPS",
    "step_group",
    "step_parameters",
    "step_defaults",
    "VELOCITY_MIN_M_S",
    "VELOCITY_MAX_M_S",
    "BACKGROUND_METHODS",
    "GAIN_KINDS",
    "MIGRATION_METHODS",
    "time_zero",
    "pick_first_arrival_s",
    "dewow",
    "background_removal",
    "gain",
    "gain_curve",
    "bandpass",
    "migrate",
    "envelope",
    "velocity_analysis",
    "semblance",
    "VelocityEstimate",
    "depth_axis_m",
    "time_to_depth",
    "ProcessingStep",
    "ProcessingChain",
]
