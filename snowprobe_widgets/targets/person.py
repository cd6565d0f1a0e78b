"""A buried person: an ellipsoid with a clothing / skin / fat / muscle stack on its top.

Scattering method: physical optics over the lit side of the ellipsoid (facet sum), with the
local reflection of the layered tissue stack (:func:`snowprobe_widgets.layered.reflection`).
Physical optics is a high-frequency method: it needs the body large against the wavelength
in the snow (``k a >= MIN_KA``, a the half-width of the body).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, ClassVar

import numpy as np

from ..facets import FacetMesh, ellipsoid_mesh
from ..fields import declaration
from .base import (
    Reflection,
    check_fields,
    check_geometry,
    ellipse,
    ka_in_snow,
    layered_reflection,
)

__all__ = ["Person", "PersonKind", "POSTURES", "MIN_KA"]

POSTURES: tuple[str, ...] = declaration("person", "posture").allowed()
#: Invented demo geometry of a buried adult (vertical thickness, horizontal width), m:
#: about a lying adult's chest depth and a curled-up adult's height off the ground
#: (common-sense figures, not measured).
_BODY_SHAPE_M = {"lying_flat": (0.25, 0.45), "curled": (0.5, 0.5)}
#: A curled person's along-axis length as a fraction of standing height (invented).
_CURLED_LENGTH_FRACTION = 0.5
#: Smallest size parameter k a (a: half-width of the body, k in the snow) where physical
#: optics is trusted. Physical optics is a high-frequency approximation; below ka ~ 1 its
#: backscatter of a sphere is off by several dB against the exact Mie series
#: (tests/targets/test_person.py measures it with miepython; the threshold is common
#: practice).
MIN_KA = 1.0


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
        from ..fields import FieldError, declaration

        check_geometry(self)
        check_fields(self, "person", ("posture", "height_m", "clothing_m", "skin_m", "fat_m",
                                      "muscle_m", "label"))
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
        from .. import materials

        mats = (materials.clothing(), materials.tissue("skin"), materials.tissue("fat"),
                materials.tissue("muscle"))
        return mats, (self.clothing_m, self.skin_m, self.fat_m)


class PersonKind:
    """The person kind: physical optics with the layered tissue stack."""

    name = "person"
    title = "person"
    value_type = Person
    placement = "persons"
    size_field = "height_m"
    has_heading = True

    def mesh(self, obj: Person, facet_size_m: float) -> FacetMesh:
        a, b, c = obj.body_length_m / 2, obj.body_width_m / 2, obj.body_thickness_m / 2
        return ellipsoid_mesh((obj.position_m, obj.offset_m, obj.depth_m + c), (a, b, c),
                              heading_deg=obj.heading_deg, facet_size_m=facet_size_m)

    def reflection(self, obj: Person, snow_eps: complex, fc: float, freq_hz: np.ndarray,
                   polarization: str) -> Reflection:
        mats, thick = obj.tissue_stack()
        eps_in = snow_eps.real
        return layered_reflection([eps_in] + [m.permittivity(fc) for m in mats],
                                  [eps_in] + [m.permittivity(freq_hz) for m in mats],
                                  thick, fc, freq_hz)

    def outline(self, obj: Person) -> tuple[np.ndarray, np.ndarray]:
        h = math.radians(obj.heading_deg)
        half = 0.5 * math.hypot(obj.body_length_m * math.cos(h), obj.body_width_m * math.sin(h))
        c = 0.5 * obj.body_thickness_m
        return ellipse(obj.position_m, obj.depth_m + c, half, c)

    def principal_radii_m(self, obj: Person) -> tuple[float, float]:
        a, b, c = obj.body_length_m / 2, obj.body_width_m / 2, obj.body_thickness_m / 2
        return a * a / c, b * b / c

    def budget_factor(self, obj: Person, wavelength_m: float, r_e_m: float, n: float) -> float:
        return 1.0

    def cylinder_stand_in(self, obj: Person) -> tuple[float, Any, str]:
        """A perfect conductor as thick as the body (body tissues reflect about 70 % of
        the field, and their permittivity near 50 would need a seven times finer grid)."""
        from ..materials import metal

        d = obj.body_thickness_m
        return d, metal(), (f"the first person as a perfectly conducting cylinder {d:.2f} m "
                            "across (the body's thickness)")

    def appearance(self, obj: Person) -> str:
        return ("A body gives a hyperbola whose apex is the top of the body, as wide as "
                "the burial is deep.")

    def validity(self, obj: Person, snow_index: float, freq_hz: float) -> tuple[str, ...]:
        ka = ka_in_snow(obj.body_width_m / 2, snow_index, freq_hz)
        if ka >= MIN_KA:
            return ()
        return (f"At {freq_hz / 1e6:.0f} MHz the body is small against the wavelength in the "
                f"snow (ka = {ka:.2f}); its echo is computed by physical optics, which needs "
                f"ka >= {MIN_KA:g}: treat the person's echo as rough.",)
