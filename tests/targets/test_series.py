"""Exact series of a sphere and of a cylinder against outside references.

Independent-reference checks: the sphere series against miepython (PyPI; Wiscombe's
algorithm, Bohren & Huffman 1983 conventions), complex values, after pinning miepython's
phase convention on a known case. Analytic checks: the cylinder series against its
published limits (geometric optics of a perfect conductor, the thin perfectly conducting
wire, the Rayleigh limit of a thin dielectric cylinder).
"""

from __future__ import annotations

import math

import miepython
import numpy as np
import pytest
from mie_reference import miepython_echo

from snowprobe_widgets.targets.base import ANGLES_DEG
from snowprobe_widgets.targets.series import (
    cylinder_echo,
    cylinder_po_shape,
    sphere_echo,
    sphere_po_shape,
)


def test_miepython_convention_on_a_large_perfect_conductor() -> None:
    # sigma -> pi a^2 for a large conducting sphere (geometric optics; Bohren & Huffman
    # 1983 sec. 4.6), and the pinned phase gives -1
    for x in (100.0, 300.0):
        qback = miepython.efficiencies_mx(complex(1e4, -1e4), x)[2]
        assert qback == pytest.approx(1.0, abs=0.03)
        assert miepython_echo(complex(1e4, -1e4), x) == pytest.approx(-1.0, abs=0.02)


@pytest.mark.parametrize("m", [1.94, complex(1.94, -0.2), 1.2, complex(3.0, -0.05)])
@pytest.mark.parametrize("x", [0.05, 0.5, 2.0, 7.0, 20.0, 60.0])
def test_sphere_series_matches_miepython(m: complex, x: float) -> None:
    # complex agreement to 1e-4 of the echo (both are the exact series; they truncate it
    # at slightly different orders, which shows at x = 60 as 4e-5)
    ours = complex(sphere_echo(np.array([x]), m)[0])
    ref = miepython_echo(m, x)
    assert abs(ours - ref) < 1e-4 * max(1.0, abs(ref))


def test_sphere_series_is_vectorised_over_frequency() -> None:
    x = np.array([0.3, 3.0, 30.0])
    m = np.array([1.5, complex(2.0, -0.1), 1.3])
    together = sphere_echo(x, m)
    alone = [complex(sphere_echo(np.array([xi]), mi)[0]) for xi, mi in zip(x, m, strict=True)]
    assert np.allclose(together, alone, rtol=1e-10)


def test_small_sphere_is_the_dipole_term() -> None:
    # Rayleigh limit (Bohren & Huffman 1983 eq. 5.7-5.8): front-face normalised echo
    # 2 x^2 K with K = (m^2 - 1) / (m^2 + 2), positive for a denser sphere; the dipole sits
    # at the centre, a behind the front face: a delay exp(-2jx) with e^{+j omega t}
    x, m = 0.02, 1.3
    K = (m * m - 1) / (m * m + 2)
    want = 2 * x * x * K * np.exp(-2j * x)
    assert complex(sphere_echo(np.array([x]), m)[0]) == pytest.approx(want, rel=1e-3)


def test_large_perfect_conductor_cylinder_is_geometric_optics() -> None:
    # echo width sigma_2d -> pi a for a large conducting cylinder in both polarisations
    # (geometric optics; Ruck et al. 1970, Radar Cross Section Handbook, ch. 4, from
    # memory), with the front-face echo -1
    x = np.array([50.0, 200.0])
    for case in ("along", "across"):
        e = cylinder_echo(x, None, case)
        assert np.allclose(e, -1.0, atol=0.015)


def test_thin_perfectly_conducting_wire() -> None:
    # thin-wire limit, field along the axis: sigma_2d = pi^2 / (k [ln^2(0.89 k a) + pi^2/4])
    # (Ruck et al. 1970, ch. 4; the small-argument form of J0/H0, Abramowitz & Stegun
    # 9.1.12-13); relative to pi a: |echo|^2 = pi / (x [ln^2(0.8905 x) + pi^2 / 4])
    x = np.array([1e-3, 1e-2])
    want = math.pi / (x * (np.log(0.8905 * x) ** 2 + math.pi**2 / 4))
    got = np.abs(cylinder_echo(x, None, "along")) ** 2
    assert np.allclose(got, want, rtol=0.01)


def test_thin_dielectric_cylinder_polarisation_ratio() -> None:
    # Rayleigh limit of a thin dielectric cylinder (Bohren & Huffman 1983 sec. 8.4 small
    # particles): the field along the axis polarises it (m^2 + 1) / 2 times more than the
    # field across it
    x = np.array([0.005])
    for m in (1.5, 2.5, 4.0):
        ratio = abs(cylinder_echo(x, m, "along")[0] / cylinder_echo(x, m, "across")[0])
        assert ratio == pytest.approx((m * m + 1) / 2, rel=0.01)


def test_lossy_large_cylinder_is_its_front_face() -> None:
    # a lossy cylinder swallows its internal paths: the echo tends to the Fresnel
    # coefficient (1 - m) / (1 + m) of its front face (geometric optics)
    m = complex(2.0, -0.4)
    r = (1 - m) / (1 + m)
    for case in ("along", "across"):
        assert abs(cylinder_echo(np.array([300.0]), m, case)[0] - r) < 0.05


@pytest.mark.parametrize("shape", [sphere_po_shape, cylinder_po_shape])
def test_po_shapes_tend_to_one(shape) -> None:
    # stationary phase: the lit half's physical-optics echo tends to that of its front face
    got = shape(np.array([400.0]), np.ones(ANGLES_DEG.size), ANGLES_DEG)
    assert abs(got[0] - 1.0) < 0.02
