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
from typing import Any, ClassVar

import numpy as np

from ._validate import check_range
from .constants import RHO_ICE_KG_M3
from .fields import FieldError, declaration
from .fields import check as _check

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
_MAX_SNOW_DEPTH_M = 100.0
#: Thinnest layer kept when a crust splits a layer (shorter slivers are dropped).
_SLIVER_M = 1e-9

GROUND_KINDS: tuple[str, ...] = declaration("ground", "kind").allowed()
POSTURES: tuple[str, ...] = declaration("person", "posture").allowed()

#: Relative permittivity of oven-dry wood used for branches (from memory: dry wood has
#: eps' of about 1.5-3 at radar frequencies depending on density and grain direction,
#: Torgovnikov 1993, "Dielectric Properties of Wood and Wood-Based Materials").
DRY_WOOD_PERMITTIVITY = 2.0
#: Real permittivity of liquid water used in the wood mixture (from memory: about 80-88
#: near 0 degC below 1 GHz; the Debye relaxation lies near 9 GHz).
_WATER_PERMITTIVITY = 80.0
#: Real permittivity of ice (Matzler 2006, about 3.15 at radar frequencies; REFERENCES 2).
_ICE_PERMITTIVITY = 3.15

#: Invented demo geometry of a buried adult (vertical thickness, horizontal width), m:
#: about a lying adult's chest depth and a curled-up adult's height off the ground
#: (common-sense figures, not measured).
_BODY_SHAPE_M = {"lying_flat": (0.25, 0.45), "curled": (0.5, 0.5)}
#: A curled person's along-axis length as a fraction of standing height (invented).
_CURLED_LENGTH_FRACTION = 0.5


def _set(obj: object, name: str, value: Any) -> None:
    object.__setattr__(obj, name, value)


def _check_fields(obj: Any, group: str, names: tuple[str, ...]) -> None:
    """Check each named field of ``obj`` against its declaration in ``fields``."""
    for name in names:
        _set(obj, name, _check(group, name, getattr(obj, name)))


def _check_geometry(obj: Any) -> None:
    """Position, offset, depth and heading: the fields every buried thing shares."""
    names = ("position_m", "offset_m", "depth_m")
    _check_fields(obj, obj.kind, names + (("heading_deg",) if hasattr(obj, "heading_deg")
                                          else ()))


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
    """

    thickness_m: float
    density_kg_m3: float
    lwc_percent: float = 0.0
    ice_crust: bool = False

    def __post_init__(self) -> None:
        _check_fields(self, "layer", ("thickness_m", "density_kg_m3", "lwc_percent",
                                      "ice_crust"))
        ice = self.density_kg_m3 / RHO_ICE_KG_M3
        if ice + self.lwc_percent / 100.0 > 1.0 + 1e-12:
            raise FieldError(
                f"lwc_percent = {self.lwc_percent:g} % does not fit in the pores of snow of "
                f"density_kg_m3 = {self.density_kg_m3:g}: the ice already fills "
                f"{100 * ice:.1f} % of the volume, so at most {100 * (1 - ice):.1f} % water",
                field=declaration("layer", "lwc_percent"), value=self.lwc_percent,
                screen=f"Liquid water {self.lwc_percent:g} % does not fit in the pores of "
                       f"{self.density_kg_m3:.0f} kg/m³ snow: use at most "
                       f"{math.floor(1000 * (1 - ice)) / 10:g} %, or a lower density.")
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

    def material(self) -> Any:
        """The layer's dielectric model, from :func:`snowprobe_widgets.materials.snow`."""
        from . import materials

        return materials.snow(self.density_kg_m3, self.lwc_percent)


@dataclass(frozen=True)
class Snowpack:
    """The snow (or avalanche debris) from the surface down, as a stack of layers.

    Parameters
    ----------
    layers : sequence of Layer
        From the surface down; 1 to 200 layers, total depth at most 100 m. A list is
        stored as a tuple so the snowpack stays hashable.
    temperature_c : float
        Snow temperature, degC, in [-50, 0] (used for the loss of dry snow and ice).
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
        _set(self, "layers", layers)
        _check_fields(self, "snowpack", ("temperature_c",))
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
        """Dielectric model of each layer, surface first (via ``materials.snow``)."""
        return tuple(layer.material() for layer in self.layers)

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
    return Layer(thickness_m, layer.density_kg_m3, layer.lwc_percent, layer.ice_crust)


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
        _check_fields(self, "ground", ("kind", "water_fraction", "permittivity",
                                       "conductivity_s_m"))

    def material(self) -> Any:
        """The ground's dielectric model (``materials.soil`` or ``materials.rock``)."""
        from . import materials

        if self.kind == "soil":
            return materials.soil(self.water_fraction)
        return materials.rock(self.permittivity, self.conductivity_s_m)


# --------------------------------------------------------------------------- people


@dataclass(frozen=True)
class Person:
    """A buried person, with a layered tissue stack for the body's reflection.

    Parameters
    ----------
    position_m : float
        Along-line position of the body's centre, m.
    depth_m : float
        Snow surface to the top of the body, m, >= 0.
    offset_m : float
        Across-line distance of the body's centre from the survey line, m.
    heading_deg : float
        Angle of the body's long axis (head to feet) to the survey line, deg, [-360, 360].
    posture : {"lying_flat", "curled"}
        Lying flat (about 0.25 m thick) or curled up (about 0.5 m); invented common-sense
        demo geometry, see :attr:`body_thickness_m`.
    height_m : float
        Standing height, m, in [0.5, 2.3].
    clothing_m, skin_m, fat_m, muscle_m : float
        Thicknesses of the tissue stack on the body's upper side, m. Defaults are invented
        adult figures: 1 cm of clothing, 1.5 mm skin, 1 cm fat, 3 cm muscle. Ranges:
        clothing [0, 0.1], skin [0.0005, 0.005], fat [0.001, 0.1], muscle [0.005, 0.1];
        together they must fit in half the body thickness.
    label : str
        Free text for display (at most 100 characters).
    """

    kind: ClassVar[str] = "person"

    position_m: float
    depth_m: float
    offset_m: float = 0.0
    heading_deg: float = 0.0
    posture: str = "lying_flat"
    height_m: float = 1.75
    clothing_m: float = 0.01
    skin_m: float = 0.0015
    fat_m: float = 0.01
    muscle_m: float = 0.03
    label: str = ""

    def __post_init__(self) -> None:
        _check_geometry(self)
        _check_fields(self, "person", ("posture", "height_m", "clothing_m", "skin_m",
                                       "fat_m", "muscle_m", "label"))
        shell = self.clothing_m + self.skin_m + self.fat_m + self.muscle_m
        if shell > 0.5 * self.body_thickness_m:
            room = 0.5 * self.body_thickness_m - (shell - self.clothing_m)
            raise FieldError(
                f"clothing_m + skin_m + fat_m + muscle_m = {shell:g} m does not fit in half "
                f"the {self.body_thickness_m:g} m body thickness of posture {self.posture!r}",
                field=declaration("person", "clothing_m"), value=self.clothing_m,
                screen=f"Clothing, skin, fat and muscle ({100 * shell:.1f} cm) do not fit in "
                       f"half the body ({50 * self.body_thickness_m:.1f} cm thick when "
                       f"{self.posture.replace('_', ' ')}): use at most "
                       f"{max(0.0, math.floor(1000 * room) / 10):g} cm of clothing.")

    @property
    def body_thickness_m(self) -> float:
        """Vertical extent of the body for its posture, m (invented demo geometry)."""
        return _BODY_SHAPE_M[self.posture][0]

    @property
    def body_width_m(self) -> float:
        """Horizontal extent across the body's long axis, m (invented demo geometry)."""
        return _BODY_SHAPE_M[self.posture][1]

    @property
    def body_length_m(self) -> float:
        """Horizontal extent along the body's long axis, m: the height when lying flat,
        half of it when curled (invented demo geometry)."""
        if self.posture == "curled":
            return _CURLED_LENGTH_FRACTION * self.height_m
        return self.height_m

    @property
    def bottom_depth_m(self) -> float:
        """Depth of the body's lowest point, m."""
        return self.depth_m + self.body_thickness_m

    @property
    def half_extent_m(self) -> float:
        """Radius of the smallest vertical cylinder about the centre holding the body, m."""
        return 0.5 * math.hypot(self.body_length_m, self.body_width_m)

    def tissue_stack(self) -> tuple[tuple[Any, ...], tuple[float, ...]]:
        """Materials and thicknesses for the body's layered reflection, outside in.

        Returns
        -------
        materials : tuple of Material, length 4
            Clothing, skin, fat, muscle; the last is the exit half-space.
        thicknesses_m : tuple of float, length 3
            Clothing, skin and fat thicknesses, m. Muscle is treated as a half-space
            because it absorbs most of the wave within a few centimetres at radar
            frequencies (muscle conductivity is about 1 S/m near 1 GHz, Gabriel, Lau &
            Gabriel 1996, Phys. Med. Biol. 41:2271, from memory); ``muscle_m`` bounds the
            body geometry but is not a layer of the reflection.
        """
        from . import materials

        mats = (materials.clothing(), materials.tissue("skin"), materials.tissue("fat"),
                materials.tissue("muscle"))
        return mats, (self.clothing_m, self.skin_m, self.fat_m)


# --------------------------------------------------------------------------- debris


@dataclass(frozen=True)
class Boulder:
    """A rock in the debris, modelled as a sphere.

    Parameters
    ----------
    position_m, depth_m, offset_m : float
        Centre along the line, depth of its top, across-line offset, m.
    diameter_m : float
        Sphere diameter, m, in [0.05, 5].
    permittivity : float
        Real relative permittivity of the rock, in [2, 40] (rock is about 5-9, from memory).
    conductivity_s_m : float
        Rock conductivity, S/m, in [0, 1].
    """

    kind: ClassVar[str] = "boulder"

    position_m: float
    depth_m: float
    diameter_m: float
    offset_m: float = 0.0
    permittivity: float = 6.0
    conductivity_s_m: float = 0.001

    def __post_init__(self) -> None:
        _check_geometry(self)
        _check_fields(self, "boulder", ("diameter_m", "permittivity", "conductivity_s_m"))

    @property
    def centre_depth_m(self) -> float:
        """Depth of the sphere's centre, m."""
        return self.depth_m + 0.5 * self.diameter_m

    @property
    def bottom_depth_m(self) -> float:
        """Depth of the sphere's lowest point, m."""
        return self.depth_m + self.diameter_m

    @property
    def half_extent_m(self) -> float:
        """Horizontal radius, m."""
        return 0.5 * self.diameter_m

    def material(self) -> Any:
        """The rock's dielectric model (``materials.rock``)."""
        from . import materials

        return materials.rock(self.permittivity, self.conductivity_s_m)


@dataclass(frozen=True)
class Branch:
    """A branch or trunk in the debris: a horizontal wooden cylinder.

    Parameters
    ----------
    position_m, depth_m, offset_m : float
        Centre along the line, depth of the cylinder's top, across-line offset, m.
    diameter_m : float
        Cylinder diameter, m, in [0.01, 1.5].
    length_m : float
        Cylinder length, m, in [0.1, 20].
    heading_deg : float
        Angle of the cylinder's axis to the survey line, deg.
    water_fraction : float
        Volume fraction of water in the wood, in [0, 0.6] (green wood holds roughly
        0.3-0.5, from memory).
    frozen : bool
        The wood's water is frozen (ice) rather than liquid.
    """

    kind: ClassVar[str] = "branch"

    position_m: float
    depth_m: float
    diameter_m: float
    length_m: float
    offset_m: float = 0.0
    heading_deg: float = 0.0
    water_fraction: float = 0.3
    frozen: bool = False

    def __post_init__(self) -> None:
        _check_geometry(self)
        _check_fields(self, "branch", ("diameter_m", "length_m", "water_fraction", "frozen"))

    @property
    def permittivity(self) -> float:
        """Real relative permittivity of the wood.

        Complex refractive index mixing (CRIM, the Lichtenecker-Rother rule with exponent
        1/2; Birchak et al. 1974, Proc. IEEE 62:93, as in REFERENCES 6.2) of dry wood
        (eps 2.0, from memory) and water (eps 80 liquid or 3.15 frozen, from memory):
        ``sqrt(eps) = (1 - w) sqrt(eps_dry) + w sqrt(eps_water)``. A frequency-independent
        approximation; the dry wood's own air is part of ``eps_dry``.
        """
        w = self.water_fraction
        eps_w = _ICE_PERMITTIVITY if self.frozen else _WATER_PERMITTIVITY
        return ((1.0 - w) * math.sqrt(DRY_WOOD_PERMITTIVITY) + w * math.sqrt(eps_w)) ** 2

    @property
    def axis_depth_m(self) -> float:
        """Depth of the cylinder's axis, m."""
        return self.depth_m + 0.5 * self.diameter_m

    @property
    def bottom_depth_m(self) -> float:
        """Depth of the cylinder's lowest point, m."""
        return self.depth_m + self.diameter_m

    @property
    def half_extent_m(self) -> float:
        """Radius of the smallest vertical cylinder about the centre holding it, m."""
        return 0.5 * math.hypot(self.length_m, self.diameter_m)


@dataclass(frozen=True)
class MetalPlate:
    """A thin metal plate: a shovel blade, a ski, a phone (perfect conductor).

    Parameters
    ----------
    position_m, depth_m, offset_m : float
        Centre along the line, depth of the plate's shallowest point, across-line offset, m.
    length_m : float
        Length along the plate's long axis, m, in [0.02, 3].
    width_m : float
        Width, m, in [0.01, 1]; at most the length.
    heading_deg : float
        Angle of the long axis to the survey line, deg.
    tilt_deg : float
        Dip of the long axis below the horizontal, deg, in [-90, 90] (0: lying flat).
    label : str
        Free text for display, default "ski".
    """

    kind: ClassVar[str] = "metal"

    position_m: float
    depth_m: float
    length_m: float
    width_m: float
    offset_m: float = 0.0
    heading_deg: float = 0.0
    tilt_deg: float = 0.0
    label: str = "ski"

    def __post_init__(self) -> None:
        _check_geometry(self)
        _check_fields(self, "metal", ("length_m",))
        _set(self, "width_m", _check("metal", "width_m", self.width_m,
                                     high=min(1.0, self.length_m)))
        _check_fields(self, "metal", ("tilt_deg", "label"))

    @property
    def centre_depth_m(self) -> float:
        """Depth of the plate's centre, m."""
        return self.depth_m + 0.5 * self.length_m * abs(math.sin(math.radians(self.tilt_deg)))

    @property
    def bottom_depth_m(self) -> float:
        """Depth of the plate's deepest point, m."""
        return self.depth_m + self.length_m * abs(math.sin(math.radians(self.tilt_deg)))

    @property
    def half_extent_m(self) -> float:
        """Radius of the smallest vertical cylinder about the centre holding it, m."""
        horizontal = self.length_m * math.cos(math.radians(self.tilt_deg))
        return 0.5 * math.hypot(horizontal, self.width_m)

    def material(self) -> Any:
        """A perfect conductor (``materials.metal``)."""
        from . import materials

        return materials.metal()


#: Anything allowed in ``Scenario.objects``.
DebrisObject = Boulder | Branch | MetalPlate
