"""The synthesis' facet path for one buried thing in a homogeneous medium (a test helper).

The kind's facet mesh, each lit facet weighted by the kind's local angle dependence,
summed with the physical-optics kernel of facets.po_backscatter (Knott, Shaeffer & Tuley
1993, Radar Cross Section, ch. 5) from a point at the origin; the kind tests multiply the
sum by the kind's facet spectrum and compare it with an exact series.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from snowprobe_widgets.targets import Reflection, kind_of
from snowprobe_widgets.targets.base import ANGLES_DEG

C = 299_792_458.0  # m/s, exact
EPS_SNOW = 1.6  # dry snow of about 300 kg/m3 (REFERENCES 1.2)


def facet_sum(obj: Any, freq_hz: np.ndarray, facet_m: float, polarization: str
              ) -> tuple[np.ndarray, Reflection]:
    """(the facet sum over ``freq_hz`` for a unit spherical wave from the origin, the
    kind's Reflection at 800 MHz) with facets of about ``facet_m``."""
    kind = kind_of(obj)
    k = 2 * math.pi * freq_hz * math.sqrt(EPS_SNOW) / C
    mesh = kind.mesh(obj, facet_m)
    refl = kind.reflection(obj, complex(EPS_SNOW), 800e6, freq_hz, polarization)
    d = mesh.centre_m
    r = np.linalg.norm(d, axis=1)
    cos_t = -np.einsum("ij,ij->i", d / r[:, None], mesh.normal)
    lit = cos_t > 0
    weight = np.interp(np.degrees(np.arccos(np.minimum(cos_t[lit], 1.0))), ANGLES_DEG,
                       refl.angle_ratio)
    w = weight * cos_t[lit] * mesh.area_m2[lit] / r[lit] ** 2
    return 1j * k / (2 * math.pi) * (np.exp(-2j * np.outer(k, r[lit])) @ w), refl
