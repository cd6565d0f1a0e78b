"""What lies in the survey scene: snow layers, the ground, buried people and debris.

All of these are frozen dataclasses validated on construction, so that
``dataclasses.replace`` re-checks every change. Lengths are in metres, densities in kg/m3,
angles in degrees. Geometry convention shared by every buried thing:

* ``position_m`` is the along-line coordinate of the object's centre (the same axis as the
  survey line), ``offset_m`` its across-line distance from the line (positive to the left
  when walking from the line start to its end);
* ``depth_m`` is the depth of the object's *shallowest point* below the snow surface, so a
  ``TruthMarker`` can use it unchanged;
* ``heading_deg`` is the angle of the object's long axis to the survey line, measured
  counter-clockwise seen from above (0: along the line, 90: across it).

Materials (permittivity over frequency) come from :mod:`snowprobe_widgets.materials`,
imported only when a ``material()`` method is called.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ._validate import check_pore_water, check_range
from .constants import RHO_ICE_KG_M3
from .fields import FieldError, declaration
from .targets.base import MAX_DEPTH_M, check_fields, set_field
from .targets.boulder import Boulder
from .targets.branch import DRY_WOOD_PERMITTIVITY, Branch
from .targets.metal_plate import MetalPlate
from .targets.person import POSTURES, Person

__all__ = [
    "Layer",
    "Snowpack",
    "Ground",
    "Person",
    "Boulder",
    "Branch",
    "MetalPlate",
    "DebrisObject",
    "GROUND_KINDS",
    "POSTURES",
    "DRY_WOOD_PERMITTIVITY",
]

# Field ranges (densities, water content, sizes) are declared in fields.py.
#: Crust densities: melt-freeze crusts and ice lenses (common practice: 700-917 kg/m3).
_CRUST_DENSITY = (700.0, RHO_ICE_KG_M3)
_MAX_CRUST_THICKNESS_M = 0.3
_MAX_LAYERS = 200
_MAX_SNOW_DEPTH_M = MAX_DEPTH_M
#: Thinnest layer kept when a crust splits a layer (shorter slivers are dropped).
_SLIVER_M = 1e-9

GROUND_KINDS: tuple[str, ...] = declaration("ground", "kind").allowed()



# --------------------------------------------------------------------------- snow


@dataclass(frozen=True)
class Layer:
    """One snow layer, or a thin ice crust.

    Parameters
    ----------
    thickness_m : float
        Layer thickness, m, in (0, 100].
    density_kg_m3 : float
        *Dry* density (ice and air part, without the liquid water), kg/m3, in [30, 917];
        the wet-snow formulas take the dry density (REFERENCES note on density conventions).
    lwc_percent : float
        Volumetric liquid water content, percent, in [0, 12] (the range the wet-snow models
        are calibrated for, see materials.wet_snow). Ice, water and air must fit:
        ``density_kg_m3 / 917 + lwc_percent / 100 <= 1``.
    ice_crust : bool
        Mark the layer as a melt-freeze crust or ice lens: then its density must lie in
        [700, 917] kg/m3 and its thickness be at most 0.3 m.
    dielectric_model : str
        Name of the layer's dielectric model (:func:`snowprobe_widgets.materials.layer_model_names`;
        default ``"snow"``: the package's snow model, Looyenga dry snow with Tiuri's water
        term).
    """

    thickness_m: float
    density_kg_m3: float
    lwc_percent: float = 0.0
    ice_crust: bool = False
    dielectric_model: str = "snow"

    def __post_init__(self) -> None:
        check_fields(self, "layer", ("thickness_m", "density_kg_m3", "lwc_percent",
                                     "ice_crust", "dielectric_model"))
        try:
            check_pore_water(self.density_kg_m3, self.lwc_percent, RHO_ICE_KG_M3)
        except ValueError as exc:
            room = max(0.0, 1.0 - self.density_kg_m3 / RHO_ICE_KG_M3)
            raise FieldError(
                str(exc), field=declaration("layer", "lwc_percent"), value=self.lwc_percent,
                screen=f"Liquid water {self.lwc_percent:g} % does not fit in the pores of "
                       f"{self.density_kg_m3:.0f} kg/m³ snow: use at most "
                       f"{math.floor(1000 * room) / 10:g} %, or a lower density.") from None
        try:  # the named model takes this layer (the ice model holds no water); the
            # default model takes every layer the checks above accept
            if self.dielectric_model != "snow":
                self.material()
        except ValueError as exc:
            raise FieldError(
                str(exc), field=declaration("layer", "dielectric_model"),
                value=self.dielectric_model,
                screen=f"Dielectric model {self.dielectric_model} does not take this layer "
                       f"({exc}): choose another model, or change the layer.") from None
        if self.ice_crust:
            lo, hi = _CRUST_DENSITY
            if not lo <= self.density_kg_m3 <= hi:
                raise FieldError(
                    f"density_kg_m3 = {self.density_kg_m3:g} kg/m3 is too light for an ice "
                    f"crust; allowed range [{lo:g}, {hi:g}] kg/m3 when ice_crust is True",
                    field=declaration("layer", "density_kg_m3"), value=self.density_kg_m3,
                    screen=f"Density {self.density_kg_m3:.0f} kg/m³ is too light for an ice "
                           f"crust: set {lo:.0f} to {hi:.0f} kg/m³, or untick Ice crust.")
            if self.thickness_m > _MAX_CRUST_THICKNESS_M:
                raise FieldError(
                    f"thickness_m = {self.thickness_m:g} m is too thick for an ice crust; "
                    f"allowed range (0, {_MAX_CRUST_THICKNESS_M:g}] m when ice_crust is True",
                    field=declaration("layer", "thickness_m"), value=self.thickness_m,
                    screen=f"Thickness {self.thickness_m:g} m is too thick for an ice crust: "
                           f"use at most {_MAX_CRUST_THICKNESS_M:g} m, or untick Ice crust.")

    def material(self, temperature_c: float = -5.0) -> Any:
        """The layer's material at ``temperature_c`` (degC; the snowpack's, which
        :meth:`Snowpack.materials` passes), from its ``dielectric_model``
        (:func:`snowprobe_widgets.materials.layer_material`)."""
        from . import materials

        return materials.layer_material(self.dielectric_model, self.density_kg_m3,
                                        self.lwc_percent, temperature_c=temperature_c)


@dataclass(frozen=True)
class Snowpack:
    """The snow (or avalanche debris) from the surface down, as a stack of layers.

    Parameters
    ----------
    layers : sequence of Layer
        From the surface down; 1 to 200 layers, total depth at most 100 m. A list is
        stored as a tuple so the snowpack stays hashable.
    temperature_c : float
        Snow temperature, degC, in [-50, 0]: every layer's material is made at it
        (:meth:`materials`), so it sets the ice loss of dry snow and crusts.
    """

    layers: tuple[Layer, ...]
    temperature_c: float = -5.0

    def __post_init__(self) -> None:
        if isinstance(self.layers, (str, bytes)) or not hasattr(self.layers, "__iter__"):
            raise ValueError(f"layers must be a sequence of Layer, got {self.layers!r}")
        layers = tuple(self.layers)
        if not 1 <= len(layers) <= _MAX_LAYERS:
            raise ValueError(
                f"layers has {len(layers)} entries; a snowpack needs 1 to {_MAX_LAYERS} layers")
        for i, layer in enumerate(layers):
            if not isinstance(layer, Layer):
                raise ValueError(f"layers[{i}] must be a Layer, got {type(layer).__name__}")
        set_field(self, "layers", layers)
        check_fields(self, "snowpack", ("temperature_c",))
        if self.depth_m > _MAX_SNOW_DEPTH_M:
            raise ValueError(
                f"the layers add up to {self.depth_m:g} m of snow; at most "
                f"{_MAX_SNOW_DEPTH_M:g} m allowed")

    @property
    def depth_m(self) -> float:
        """Total snow depth (surface to ground), m."""
        return float(math.fsum(layer.thickness_m for layer in self.layers))

    @property
    def interfaces_m(self) -> np.ndarray:
        """Depth of the bottom of each layer, m, shape (n_layers,); the last is the ground."""
        return np.cumsum([layer.thickness_m for layer in self.layers])

    @property
    def thicknesses_m(self) -> np.ndarray:
        """Layer thicknesses from the surface down, m, shape (n_layers,)."""
        return np.array([layer.thickness_m for layer in self.layers])

    def materials(self) -> tuple[Any, ...]:
        """Dielectric model of each layer at the snowpack's temperature, surface first
        (via ``materials.snow``, the one place that makes a layer's material)."""
        return tuple(layer.material(self.temperature_c) for layer in self.layers)

    def layer_index(self, depth_m: float) -> int:
        """Index of the layer holding ``depth_m`` (a depth on an interface belongs to the
        layer above it; depth 0 to the first layer).

        Raises
        ------
        ValueError
            If ``depth_m`` is outside ``[0, depth_m]`` of the snowpack.
        """
        d = check_range("depth_m", depth_m, 0.0, self.depth_m, unit="m")
        idx = int(np.searchsorted(self.interfaces_m, d, side="left"))
        return min(idx, len(self.layers) - 1)

    def layer_at(self, depth_m: float) -> Layer:
        """The layer holding ``depth_m`` (see :meth:`layer_index`)."""
        return self.layers[self.layer_index(depth_m)]

    def with_ice_crust(
        self, depth_m: float, thickness_m: float, density_kg_m3: float = 850.0
    ) -> Snowpack:
        """A new snowpack with a dry ice crust from ``depth_m`` to ``depth_m + thickness_m``.

        The crust replaces the snow it occupies (splitting a layer, or eating into two),
        so the total depth, and therefore every buried object's position, is unchanged.

        Raises
        ------
        ValueError
            If the crust does not fit inside the snowpack, or its thickness or density is
            not that of a crust (see :class:`Layer`).
        """
        total = self.depth_m
        top = check_range("depth_m", depth_m, 0.0, total, unit="m", high_open=True)
        crust = Layer(thickness_m, density_kg_m3, 0.0, ice_crust=True)
        bottom = top + crust.thickness_m
        if bottom > total + 1e-12:
            raise ValueError(
                f"a crust from depth_m = {top:g} m with thickness_m = {crust.thickness_m:g} m "
                f"ends at {bottom:g} m, below the {total:g} m snowpack")
        out: list[Layer] = []
        layer_top = 0.0
        for layer in self.layers:
            layer_bottom = layer_top + layer.thickness_m
            above = min(layer_bottom, top) - layer_top
            below = layer_bottom - max(layer_top, bottom)
            if above > _SLIVER_M:
                out.append(_resized(layer, above))
            if layer_top <= top < layer_bottom:
                out.append(crust)
            if below > _SLIVER_M:
                out.append(_resized(layer, below))
            layer_top = layer_bottom
        return Snowpack(tuple(out), self.temperature_c)


def _resized(layer: Layer, thickness_m: float) -> Layer:
    return Layer(thickness_m, layer.density_kg_m3, layer.lwc_percent, layer.ice_crust,
                 layer.dielectric_model)


@dataclass(frozen=True)
class Ground:
    """The half-space under the snow: soil with a water fraction, or rock.

    Parameters
    ----------
    kind : {"soil", "rock"}
        Which model :meth:`material` uses.
    water_fraction : float
        Volumetric water content of the soil, m3/m3, in [0, 0.5] (used when kind is "soil").
    permittivity : float
        Real relative permittivity of the rock, in [2, 40] (used when kind is "rock";
        rock is about 5-9, FIELD_FACTS 2.5, from memory).
    conductivity_s_m : float
        Rock conductivity, S/m, in [0, 1] (used when kind is "rock").
    """

    kind: str = "soil"
    water_fraction: float = 0.15
    permittivity: float = 6.0
    conductivity_s_m: float = 0.001

    def __post_init__(self) -> None:
        check_fields(self, "ground", ("kind", "water_fraction", "permittivity",
                                      "conductivity_s_m"))

    def material(self) -> Any:
        """The ground's dielectric model (``materials.soil`` or ``materials.rock``)."""
        from . import materials

        if self.kind == "soil":
            return materials.soil(self.water_fraction)
        return materials.rock(self.permittivity, self.conductivity_s_m)


# --------------------------------------------------------------------------- buried things
# Each kind lives in its own module of snowprobe_widgets.targets (with its physics); they
# are re-exported here so that ``from snowprobe_widgets.scene import Person`` keeps working.

#: Anything allowed in ``Scenario.objects`` among the built-in kinds (plugins add more,
#: see :func:`snowprobe_widgets.targets.kinds_in`).
DebrisObject = Boulder | Branch | MetalPlate
