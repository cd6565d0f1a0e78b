"""A rock in the debris: a homogeneous dielectric sphere.

Scattering method: the exact Mie series (:func:`.series.sphere_echo`) for the sphere in the
snow around it, applied to the physical-optics facet sum as the ratio of the exact echo to
the facet sum's own far-field echo (:func:`.series.sphere_po_shape`). A sphere looks the
same from every direction, so the ratio holds along the whole hyperbola; it includes the
internal (back-face) echo a low-loss rock focuses like a lens, about 4 a n_rock / c after
the front echo (Bohren & Huffman 1983, ch. 4; glory and lens focusing). The series is
exact for a plane wave; the refraction at the snow surface and the antenna's near field
are carried by the facet sum, so the result holds where the sphere is in the far field of
the antenna's image (``validity`` warns otherwise).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, ClassVar

import numpy as np

from ..constants import C0_M_S
from ..facets import FacetMesh, ellipsoid_mesh
from .base import (
    ANGLES_DEG,
    Reflection,
    check_fields,
    check_geometry,
    ellipse,
    series_terms,
)
from .series import sphere_echo, sphere_po_shape

__all__ = ["Boulder", "BoulderKind"]


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
        check_geometry(self)
        check_fields(self, "boulder", ("diameter_m", "permittivity", "conductivity_s_m"))

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
        from .. import materials

        return materials.rock(self.permittivity, self.conductivity_s_m)


class BoulderKind:
    """The boulder kind: exact Mie series over the physical-optics facet sum."""

    name = "boulder"
    title = "boulder"
    value_type = Boulder
    placement = "objects"
    size_field = "diameter_m"
    has_heading = False

    def mesh(self, obj: Boulder, facet_size_m: float) -> FacetMesh:
        r = obj.diameter_m / 2
        return ellipsoid_mesh((obj.position_m, obj.offset_m, obj.depth_m + r), (r, r, r),
                              facet_size_m=facet_size_m)

    def reflection(self, obj: Boulder, snow_eps: complex, fc: float, freq_hz: np.ndarray,
                   polarization: str) -> Reflection:
        rock = obj.material()
        f = np.asarray(freq_hz, float)
        ratio, x = series_terms(snow_eps, complex(rock.permittivity(fc)), fc, f,
                                obj.diameter_m / 2)
        n_rel = np.sqrt(np.asarray(rock.permittivity(f), complex) / snow_eps.real)
        m = np.where(n_rel.imag > 0, np.conj(n_rel), n_rel)  # decaying branch, n - j kappa
        return Reflection(ratio, sphere_echo(x, m), sphere_po_shape(x, ratio, ANGLES_DEG))

    def outline(self, obj: Boulder) -> tuple[np.ndarray, np.ndarray]:
        r = 0.5 * obj.diameter_m
        return ellipse(obj.position_m, obj.depth_m + r, r, r)

    def principal_radii_m(self, obj: Boulder) -> tuple[float, float]:
        return obj.diameter_m / 2, obj.diameter_m / 2

    def budget_factor(self, obj: Boulder, wavelength_m: float, r_e_m: float, n: float
                      ) -> float:
        return 1.0

    def cylinder_stand_in(self, obj: Boulder) -> tuple[float, Any, str]:
        d = obj.diameter_m
        return d, obj.material(), (
            f"the boulder as a rock cylinder {d:.2f} m across (a cylinder focuses in one "
            "plane only: its back-face echo differs from a sphere's in phase and strength)")

    def appearance(self, obj: Boulder) -> str:
        dt = 2.0 * obj.diameter_m * math.sqrt(obj.permittivity) / C0_M_S * 1e9
        return (f"Rock gives a hyperbola like a body's, but often a double echo, from its "
                f"top and its bottom, {dt:.1f} ns apart (its {obj.diameter_m:.1f} m crossed "
                f"twice at permittivity {obj.permittivity:.0f}).")

    def validity(self, obj: Boulder, snow_index: float, freq_hz: float) -> tuple[str, ...]:
        return ()
