"""The metal-plate kind: physical optics of a perfect conductor, its strip factor and its
validity domain."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad

from snowprobe_widgets.scene import MetalPlate
from snowprobe_widgets.targets import kind_of
from snowprobe_widgets.targets.metal_plate import strip_factor


@pytest.mark.parametrize("width", [0.05, 0.3, 1.0, 4.0])
def test_strip_factor_is_the_fresnel_zone_integral(width: float) -> None:
    # |integral_{-w/2}^{w/2} exp(-j pi x^2 / F^2) dx| / F, F^2 = lambda R / 2 (Born & Wolf
    # 1999 sec. 8.7), integrated numerically with scipy's quad
    lam, r_e = 0.3, 1.5
    F = math.sqrt(lam * r_e / 2)
    re = quad(lambda x: math.cos(math.pi * x * x / F**2), -width / 2, width / 2, limit=200)[0]
    im = quad(lambda x: math.sin(math.pi * x * x / F**2), -width / 2, width / 2, limit=200)[0]
    assert strip_factor(width, lam, r_e) == pytest.approx(math.hypot(re, im) / F, rel=1e-6)


def test_plate_reflects_minus_one_at_every_angle() -> None:
    plate = MetalPlate(0.0, 1.0, 0.5, 0.3)
    refl = kind_of(plate).reflection(plate, complex(1.6), 800e6, np.array([4e8, 8e8]),
                                     "along_line")
    assert np.all(refl.spectrum == -1.0) and np.all(refl.angle_ratio == 1.0)


def test_a_narrow_ski_warns_a_shovel_blade_does_not() -> None:
    # half a wavelength in snow of index 1.26 at 800 MHz is 0.15 m
    kind = kind_of(MetalPlate(0.0, 1.0, 1.7, 0.09))
    ski = kind.validity(MetalPlate(0.0, 1.0, 1.7, 0.09, label="ski"), 1.26, 800e6)
    blade = kind.validity(MetalPlate(0.0, 1.0, 0.3, 0.25, label="shovel"), 1.26, 800e6)
    assert len(ski) == 1 and "9 cm wide ski" in ski[0]
    assert blade == ()
