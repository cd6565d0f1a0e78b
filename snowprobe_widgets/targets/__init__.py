"""Buried object kinds: one module per kind behind one protocol, registered by name.

:data:`TARGETS` maps a kind's name (the value object's ``kind``) to its kind object (see
:class:`.base.TargetKind`): ``person``, ``boulder``, ``branch``, ``metal``. Other packages
add kinds through the entry-point group ``snowprobe_widgets.targets``::

    [project.entry-points."snowprobe_widgets.targets"]
    "sledge" = "mylab_targets.sledge:SledgeKind"

(the entry point may name a kind object or a class, which is instantiated). The debris
clutter's clods are point scatterers realised by ``Clutter``; their scattering lives in
:mod:`.clods`. :func:`validity_warnings` gathers every kind's domain warnings for a scenario.
"""

from __future__ import annotations

from typing import Any

from ..registry import Registry
from .base import POLARIZATIONS, Reflection, TargetKind
from .boulder import Boulder, BoulderKind
from .branch import Branch, BranchKind
from .metal_plate import MetalPlate, MetalPlateKind
from .person import Person, PersonKind

__all__ = ["TARGETS", "POLARIZATIONS", "Reflection", "TargetKind", "kind_of", "kinds_in",
           "validity_warnings", "Person", "Boulder", "Branch", "MetalPlate"]

#: Buried object kinds by name; plugins add kinds through ``snowprobe_widgets.targets``.
TARGETS = Registry("snowprobe_widgets.targets", "buried object kind")
for _kind in (PersonKind(), BoulderKind(), BranchKind(), MetalPlateKind()):
    TARGETS.register(_kind.name, _kind)


def _as_kind(entry: Any) -> TargetKind:
    return entry() if isinstance(entry, type) else entry


def kind_of(obj: Any) -> TargetKind:
    """The kind object of a buried thing (by its ``kind``).

    Raises
    ------
    ValueError
        If the kind is not registered (the message names it and the known kinds), or the
        object is not of the kind's value type.
    """
    name = getattr(obj, "kind", None)
    if not isinstance(name, str):
        raise ValueError(f"{type(obj).__name__} has no kind name; a buried object needs one")
    kind = _as_kind(TARGETS.get(name))
    if not isinstance(obj, kind.value_type):
        raise ValueError(f"object of kind {name!r} must be a {kind.value_type.__name__}, "
                         f"got {type(obj).__name__}")
    return kind


def kinds_in(placement: str) -> tuple[TargetKind, ...]:
    """Registered kinds a scenario holds in ``placement`` ("persons" or "objects")."""
    return tuple(k for k in (_as_kind(TARGETS.get(n)) for n in TARGETS.names())
                 if k.placement == placement)


def validity_warnings(scenario: Any) -> tuple[str, ...]:
    """Plain-language warnings where a scattering method is outside its domain.

    Every buried thing is checked at the radar's centre frequency with the snow around it
    (its kind's ``validity``), and the debris clutter's blocks (:func:`.clods.validity`).
    Empty when everything is inside its domain.
    """
    from ..synthesis import column_optics
    from .clods import validity as clod_validity

    fc = scenario.radar.center_frequency_hz
    optics = column_optics(scenario)
    out: list[str] = []
    for obj in scenario.targets:
        j = scenario.snowpack.layer_index(min(obj.depth_m, scenario.snowpack.depth_m))
        out.extend(kind_of(obj).validity(obj, float(optics.index[j]), fc))
    out.extend(clod_validity(scenario.clutter, scenario.snowpack, fc))
    return tuple(out)
