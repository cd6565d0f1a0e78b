"""A branch or trunk in the debris: a horizontal wooden cylinder.

Scattering method: the exact series of an infinite circular cylinder at normal incidence
(Bohren & Huffman 1983, section 8.4; :func:`.series.cylinder_echo`) for both polarisations,
applied to the physical-optics facet sum as the ratio of the exact echo to the facet sum's
own cross-section echo (:func:`.series.cylinder_po_shape`). Physical optics alone is wrong
by up to ~13 dB below ka ~ 1.5 and cannot tell the polarisations apart; a thin branch
returns far more with the electric field along its axis than across it. The radar's field
direction is ``Radar.polarization``; the echo is the co-polarised sum
``E_along cos^2(beta) + E_across sin^2(beta)``, beta the angle between the field and the
branch's axis (the scattering matrix of a cylinder in its own axes, rotated; e.g. Ruck et
al. 1970, *Radar Cross Section Handbook*, ch. 4, from memory). The series is for an
infinite cylinder: a branch shorter than a wavelength in the snow is outside it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, ClassVar

import numpy as np

from ..constants import C0_M_S
from ..facets import FacetMesh, cylinder_mesh
from .base import (
    ANGLES_DEG,
    Reflection,
    check_fields,
    check_geometry,
    ellipse,
    series_terms,
)
from .series import cylinder_echoes, cylinder_po_shape

__all__ = ["Branch", "BranchKind", "DRY_WOOD_PERMITTIVITY", "MIN_LENGTH_WAVELENGTHS"]

#: Relative permittivity of oven-dry wood used for branches (from memory: dry wood has
#: eps' of about 1.5-3 at radar frequencies depending on density and grain direction,
#: Torgovnikov 1993, "Dielectric Properties of Wood and Wood-Based Materials").
DRY_WOOD_PERMITTIVITY = 2.0
#: Real permittivity of liquid water used in the wood mixture (from memory: about 80-88
#: near 0 degC below 1 GHz; the Debye relaxation lies near 9 GHz).
_WATER_PERMITTIVITY = 80.0
#: Real permittivity of ice (Matzler 2006, about 3.15 at radar frequencies; REFERENCES 2).
_ICE_PERMITTIVITY = 3.15
#: Shortest branch, in wavelengths in the snow, that the infinite-cylinder series
#: describes (common practice: end effects matter below about one wavelength).
MIN_LENGTH_WAVELENGTHS = 1.0


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
        check_geometry(self)
        check_fields(self, "branch", ("diameter_m", "length_m", "water_fraction", "frozen"))

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


def field_axis_angle_deg(heading_deg: float, polarization: str) -> float:
    """Angle between the radar's electric field and an object's long axis, deg."""
    field_deg = 90.0 if polarization == "across_line" else 0.0
    return heading_deg - field_deg


class BranchKind:
    """The branch kind: exact infinite-cylinder series over the physical-optics facet sum."""

    name = "branch"
    title = "branch or trunk"
    value_type = Branch
    placement = "objects"
    size_field = "diameter_m"
    has_heading = True

    def mesh(self, obj: Branch, facet_size_m: float) -> FacetMesh:
        r = obj.diameter_m / 2
        return cylinder_mesh((obj.position_m, obj.offset_m, obj.depth_m + r), r, obj.length_m,
                             heading_deg=obj.heading_deg, facet_size_m=facet_size_m)

    def reflection(self, obj: Branch, snow_eps: complex, fc: float, freq_hz: np.ndarray,
                   polarization: str) -> Reflection:
        ratio, x = series_terms(snow_eps, complex(obj.permittivity), fc, freq_hz,
                                obj.diameter_m / 2)
        m = math.sqrt(obj.permittivity / snow_eps.real)
        beta = math.radians(field_axis_angle_deg(obj.heading_deg, polarization))
        along, across = cylinder_echoes(x, m)
        echo = along * math.cos(beta) ** 2 + across * math.sin(beta) ** 2
        return Reflection(ratio, echo, cylinder_po_shape(x, ratio, ANGLES_DEG))

    def outline(self, obj: Branch) -> tuple[np.ndarray, np.ndarray]:
        h = math.radians(obj.heading_deg)
        half = max(0.5 * abs(obj.length_m * math.cos(h)), 0.5 * obj.diameter_m)
        r = 0.5 * obj.diameter_m
        return ellipse(obj.position_m, obj.depth_m + r, half, r)

    def principal_radii_m(self, obj: Branch) -> tuple[float, float]:
        return math.inf, obj.diameter_m / 2

    def budget_factor(self, obj: Branch, wavelength_m: float, r_e_m: float, n: float
                      ) -> float:
        return 1.0

    def cylinder_stand_in(self, obj: Branch) -> tuple[float, Any, str]:
        from ..materials import rock

        d = obj.diameter_m
        return d, rock(obj.permittivity, 0.0), (
            f"the branch as a wood cylinder {d:.2f} m across, lying across the line")

    def appearance(self, obj: Branch) -> str:
        return (f"Wood with water in it (permittivity about {obj.permittivity:.0f}) reflects "
                "like a thin body: a hyperbola across the branch, a short flat line along "
                "it.")

    def validity(self, obj: Branch, snow_index: float, freq_hz: float) -> tuple[str, ...]:
        lam = C0_M_S / (freq_hz * snow_index)
        if obj.length_m >= MIN_LENGTH_WAVELENGTHS * lam:
            return ()
        return (f"At {freq_hz / 1e6:.0f} MHz the {obj.length_m:g} m branch is shorter than a "
                f"wavelength in the snow ({lam:.2f} m); its echo uses the series of an "
                "infinite cylinder: treat it as rough.",)
