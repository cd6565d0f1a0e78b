"""A thin metal plate (a shovel blade, a ski, a phone): a flat perfect conductor.

Scattering method: physical optics over the plate's upper face (facet sum) with the local
reflection -1 of a perfect conductor. Physical optics describes a plate whose sides are
not small against the wavelength; a strip narrower than about half a wavelength in the
snow scatters differently for the two polarisations, which physical optics ignores
(``validity`` warns).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, ClassVar

import numpy as np

from ..constants import C0_M_S
from ..facets import FacetMesh, plate_mesh
from .base import ANGLES_DEG, Reflection, check_fields, check_geometry, set_field

__all__ = ["MetalPlate", "MetalPlateKind", "MIN_WIDTH_WAVELENGTHS", "strip_factor"]

#: Narrowest plate, in wavelengths in the snow, that physical optics describes
#: (common practice: PO of a strip is polarisation-blind below about half a wavelength).
MIN_WIDTH_WAVELENGTHS = 0.5


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
        from ..fields import check

        check_geometry(self)
        check_fields(self, "metal", ("length_m",))
        set_field(self, "width_m", check("metal", "width_m", self.width_m,
                                         high=min(1.0, self.length_m)))
        check_fields(self, "metal", ("tilt_deg", "label"))

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
        from .. import materials

        return materials.metal()


def strip_factor(width_m: float, wavelength0_m: float, r_e_m: float) -> float:
    """Echo of a strip of ``width_m`` over that of an infinite plane, in one direction.

    Stationary phase across the strip: |integral of exp(-j pi x^2 / F^2) dx over the
    width| / F with F^2 = lambda_0 R_e / 2, i.e. sqrt(2) |C(u) - j S(u)| with
    u = (w / 2) sqrt(2) / F (Fresnel integrals; Born & Wolf 1999 sec. 8.7).
    """
    from scipy.special import fresnel

    F = math.sqrt(wavelength0_m * r_e_m / 2.0)
    s_u, c_u = fresnel(width_m / 2.0 * math.sqrt(2.0) / F)
    return float(math.sqrt(2.0) * abs(complex(c_u, -s_u)))


class MetalPlateKind:
    """The metal-plate kind: physical optics of a perfect conductor."""

    name = "metal"
    title = "metal (ski, shovel)"
    value_type = MetalPlate
    placement = "objects"
    size_field = "length_m"
    has_heading = True

    def mesh(self, obj: MetalPlate, facet_size_m: float) -> FacetMesh:
        return plate_mesh((obj.position_m, obj.offset_m, obj.centre_depth_m), obj.length_m,
                          obj.width_m, heading_deg=obj.heading_deg, tilt_deg=obj.tilt_deg,
                          facet_size_m=facet_size_m)

    def reflection(self, obj: MetalPlate, snow_eps: complex, fc: float, freq_hz: np.ndarray,
                   polarization: str) -> Reflection:
        n_f = np.size(freq_hz)
        return Reflection(np.ones_like(ANGLES_DEG), -np.ones(n_f, complex), np.ones(n_f))

    def outline(self, obj: MetalPlate) -> tuple[np.ndarray, np.ndarray]:
        h, tilt = math.radians(obj.heading_deg), math.radians(obj.tilt_deg)
        half = 0.5 * obj.length_m * math.cos(tilt) * abs(math.cos(h))
        dz = obj.length_m * abs(math.sin(tilt))
        x = np.array([obj.position_m - half, obj.position_m + half])
        z = np.array([obj.depth_m, obj.depth_m + dz]) if tilt >= 0 else np.array(
            [obj.depth_m + dz, obj.depth_m])
        return x, z

    def principal_radii_m(self, obj: MetalPlate) -> tuple[float, float]:
        return math.inf, math.inf

    def budget_factor(self, obj: MetalPlate, wavelength_m: float, r_e_m: float, n: float
                      ) -> float:
        """A plate narrower than the first Fresnel zone returns less than a flat
        interface: the product of the two strip factors of its length and width."""
        lam0 = wavelength_m * n
        length = obj.length_m * math.cos(math.radians(obj.tilt_deg))
        return strip_factor(length, lam0, r_e_m) * strip_factor(obj.width_m, lam0, r_e_m)

    def cylinder_stand_in(self, obj: MetalPlate) -> None:
        return None  # a flat plate has no round cross-section

    def appearance(self, obj: MetalPlate) -> str:
        return ("Metal reflects all of the wave: a bright, flat echo over its length, often "
                "ringing (repeated stripes below it).")

    def validity(self, obj: MetalPlate, snow_index: float, freq_hz: float
                 ) -> tuple[str, ...]:
        lam = C0_M_S / (freq_hz * snow_index)
        if obj.width_m >= MIN_WIDTH_WAVELENGTHS * lam:
            return ()
        name = obj.label or "metal plate"
        return (f"At {freq_hz / 1e6:.0f} MHz the {obj.width_m * 100:.0f} cm wide {name} is "
                f"narrower than half a wavelength in the snow ({lam:.2f} m); physical optics "
                "ignores how its echo depends on the polarisation: treat it as rough.",)
