"""The protocol every buried object kind follows, and the pieces the kinds share.

A *kind* is a small stateless object (one per module of this package) that knows one
value-object class (``Person``, ``Boulder``, ...) and everything the model needs of it:

* ``mesh(obj, facet_size_m)``: facets of its lit side (:mod:`snowprobe_widgets.facets`);
* ``reflection(obj, snow_eps, fc, freq_hz, polarization)``: its echo relative to the
  physical-optics facet sum, as a :class:`Reflection` (angle dependence at ``fc`` and the
  spectrum that multiplies the facet sum);
* ``outline(obj)``: its outline in the vertical plane of the survey line, for drawing;
* ``principal_radii_m(obj)`` and ``budget_factor(...)``: the link budget's terms;
* ``validity(obj, snow_index, freq_hz)``: plain-language warnings where its scattering
  method is outside its domain (empty when inside);
* ``cylinder_stand_in(obj)``: (diameter, material, description) of the circular cylinder
  that stands in for it in the 2-D full-wave check (:mod:`snowprobe_widgets.fdtd2d`), or
  ``None`` when it has no round cross-section;
* ``appearance(obj)``: one plain sentence on how it shows in a radargram (the training
  debrief).

Geometry convention shared by every buried thing (see :mod:`snowprobe_widgets.scene_objects`):
``position_m`` along the line, ``offset_m`` across it, ``depth_m`` to the shallowest point,
``heading_deg`` of the long axis to the line (counter-clockwise seen from above).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, Protocol

import numpy as np

from ..constants import C0_M_S
from ..facets import FacetMesh
from ..layered import reflection, stack_coefficients

__all__ = ["ANGLES_DEG", "POLARIZATIONS", "MAX_DEPTH_M", "Reflection", "TargetKind",
           "ka_in_snow", "series_terms", "layered_reflection", "fresnel_angle_ratio",
           "ellipse", "set_field", "check_geometry", "check_fields", "check_label", "check_bool"]

#: Local incidence angles on which a kind gives its reflection's angle dependence, deg.
ANGLES_DEG = np.linspace(0.0, 89.0, 90)
#: Radar polarisations: direction of the antenna's electric field over the snow, relative
#: to the survey line (``Radar.polarization``).
POLARIZATIONS: tuple[str, ...] = ("across_line", "along_line")


@dataclass(frozen=True, eq=False)
class Reflection:
    """An object's echo relative to the physical-optics facet sum.

    Attributes
    ----------
    angle_ratio : ndarray, shape (len(ANGLES_DEG),)
        |r(fc, angle)| / |r(fc, 0)| of the local reflection on :data:`ANGLES_DEG`
        (weights each facet by its local incidence angle).
    spectrum : ndarray, complex, shape (n_f,)
        The echo relative to the geometric-optics echo of a perfect conductor of the same
        top curvature (front-face normalised, see :mod:`.series`) over ``freq_hz``: the
        normal-incidence reflection r(f) for a kind computed by plain physical optics, an
        exact series' echo otherwise. The link budget multiplies its curvature term by it.
    po_shape : ndarray, complex, shape (n_f,)
        The physical-optics facet sum of the same body with unit normal-incidence
        reflection, in the same normalisation; the synthesis multiplies its facet sum by
        ``spectrum / po_shape``. Ones for a kind computed by plain physical optics.
    """

    angle_ratio: np.ndarray
    spectrum: np.ndarray
    po_shape: np.ndarray

    @property
    def facet_spectrum(self) -> np.ndarray:
        """``spectrum / po_shape``: the factor on a facet sum of unit local reflection."""
        return self.spectrum / self.po_shape


class TargetKind(Protocol):
    """What the model needs of one kind of buried object (see the module docstring)."""

    #: Registry key, equal to the value object's ``kind``.
    name: str
    #: Plain name for lists and labels ("branch or trunk").
    title: str
    #: The frozen value-object class of this kind.
    value_type: type
    #: Where a scenario holds it: "persons" or "objects".
    placement: str
    #: Field that a single "size" control edits (``diameter_m``, ``length_m``).
    size_field: str
    #: Whether the heading matters (False for a sphere).
    has_heading: bool

    def mesh(self, obj: Any, facet_size_m: float) -> FacetMesh: ...

    def reflection(self, obj: Any, snow_eps: complex, fc: float, freq_hz: np.ndarray,
                   polarization: str) -> Reflection: ...

    def outline(self, obj: Any) -> tuple[np.ndarray, np.ndarray]: ...

    def principal_radii_m(self, obj: Any) -> tuple[float, float]: ...

    def budget_factor(self, obj: Any, wavelength_m: float, r_e_m: float, n: float) -> float: ...

    def validity(self, obj: Any, snow_index: float, freq_hz: float) -> tuple[str, ...]: ...

    def cylinder_stand_in(self, obj: Any) -> tuple[float, Any, str] | None: ...

    def appearance(self, obj: Any) -> str: ...


def ka_in_snow(radius_m: float, snow_index: float, freq_hz: float) -> float:
    """Size parameter k a with the wavenumber in the snow around the object."""
    return 2 * math.pi * freq_hz * snow_index / C0_M_S * radius_m


def series_terms(snow_eps: complex, object_eps_fc: complex, fc: float, freq_hz: np.ndarray,
                 radius_m: float) -> tuple[np.ndarray, np.ndarray]:
    """What an exact-series kind (sphere, cylinder) needs besides its series: the facets'
    angle weighting (:func:`fresnel_angle_ratio` at ``fc``) and the size parameter
    x = k a in the snow over ``freq_hz``."""
    eps_s = snow_eps.real
    ratio = fresnel_angle_ratio(eps_s, complex(object_eps_fc), fc)
    x = ka_in_snow(radius_m, math.sqrt(eps_s), np.asarray(freq_hz, float))
    return ratio, x


def layered_reflection(stack_fc: list[complex], stack_f: list[np.ndarray],
                       thick_m: tuple[float, ...], fc: float, freq_hz: np.ndarray
                       ) -> Reflection:
    """Plain physical optics with the local TE reflection of a layered surface.

    Parameters
    ----------
    stack_fc : list of complex
        Permittivities [snow (real), object layers..., interior] at ``fc``.
    stack_f : list of ndarray
        The same over ``freq_hz``.
    thick_m : tuple of float
        Thicknesses of the inner layers (between the snow and the interior), m.
    """
    eps_in = stack_fc[0].real
    spectrum = np.asarray(reflection(freq_hz, stack_f, thick_m), complex)
    # all angles at once through the layered kernel (the public function takes one angle)
    na = ANGLES_DEG.size
    eps_a = np.array([np.full(na, complex(e), complex) for e in stack_fc])
    sin2 = eps_in * np.sin(np.radians(ANGLES_DEG)) ** 2
    k0 = np.full(na, 2 * math.pi * fc / C0_M_S)
    r_angle = np.abs(stack_coefficients(k0, eps_a, np.asarray(thick_m, float), sin2, "TE")[0])
    return Reflection(r_angle / max(r_angle[0], 1e-30), spectrum, np.ones(spectrum.size))


def fresnel_angle_ratio(eps_snow: float, eps_object: complex, fc: float) -> np.ndarray:
    """|r_TE(angle)| / |r_TE(0)| of a plain interface snow -> object at ``fc`` on
    :data:`ANGLES_DEG` (the angle weighting of a homogeneous object's facets)."""
    return layered_reflection([complex(eps_snow), complex(eps_object)],
                              [np.array([eps_snow], complex), np.array([eps_object], complex)],
                              (), fc, np.array([fc])).angle_ratio


def ellipse(cx: float, cz: float, a: float, b: float, n: int = 40
            ) -> tuple[np.ndarray, np.ndarray]:
    """Points of an ellipse centred at (cx, cz) with semi-axes a (along x), b (along z)."""
    t = np.linspace(0.0, 2 * np.pi, n)
    return cx + a * np.cos(t), cz + b * np.sin(t)


# --------------------------------------------------------------------------- validation
def set_field(obj: object, name: str, value: Any) -> None:
    """Set a field of a frozen dataclass during its validation."""
    object.__setattr__(obj, name, value)


def check_label(name: str, value: object, max_len: int = 100) -> str:
    """A display label: a string of at most ``max_len`` characters."""
    if not isinstance(value, str):
        raise ValueError(f"{name} must be a string, got {value!r}")
    if len(value) > max_len:
        raise ValueError(f"{name} is {len(value)} characters long; at most {max_len} allowed")
    return value


def check_bool(name: str, value: object) -> bool:
    """True or False (numpy booleans accepted), nothing else."""
    if not isinstance(value, (bool, np.bool_)):
        raise ValueError(f"{name} must be True or False, got {value!r}")
    return bool(value)


#: Deepest snow accepted anywhere in a scene, m (the snowpack's own limit).
MAX_DEPTH_M = 100.0


def check_fields(obj: Any, group: str, names: tuple[str, ...]) -> None:
    """Check each named field of ``obj`` against its declaration in
    :mod:`snowprobe_widgets.fields` (a kind without declarations of its own uses the
    generic ``"object"`` ones for the shared geometry)."""
    from ..fields import check

    for name in names:
        set_field(obj, name, check(group, name, getattr(obj, name)))


def check_geometry(obj: Any) -> None:
    """Position, offset, depth and heading: the fields every buried thing shares."""
    names = ("position_m", "offset_m", "depth_m")
    check_fields(obj, obj.kind, names + (("heading_deg",) if hasattr(obj, "heading_deg")
                                         else ()))
