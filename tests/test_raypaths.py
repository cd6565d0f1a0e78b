"""Refracted rays through horizontal layers: Snell's law, spreading, tables, polylines."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from snowprobe_widgets.raypaths import RayTable, ray_polyline, solve_rays

C = 299_792_458.0
H = 0.5
THICK = np.array([0.4, 0.3, 2.0])
N = np.array([1.2, 1.5, 1.35])
ALPHA = np.array([0.0, 0.2, 0.05])


def _snell(X: float, z: float) -> tuple[float, float]:
    """(air angle, two-way time) by brentq on Snell's law (Born & Wolf 1999, 1.5)."""
    tops = np.concatenate([[0.0], np.cumsum(THICK)[:-1]])
    D = np.clip(z - tops, 0.0, THICK)

    def f(th: float) -> float:
        s = math.sin(th)
        return H * math.tan(th) + sum(d * s / math.sqrt(n * n - s * s)
                                      for d, n in zip(D, N, strict=True)) - X

    th = brentq(f, 0.0, math.pi / 2 - 1e-12, xtol=1e-15) if X > 0 else 0.0
    s = math.sin(th)
    t = H / math.cos(th) + sum(d * n / math.sqrt(1 - (s / n) ** 2)
                               for d, n in zip(D, N, strict=True))
    return th, 2 * t / C


@pytest.mark.parametrize(("X", "z"), [(0.0, 0.2), (0.3, 0.5), (1.5, 1.2), (4.0, 2.5)])
def test_times_and_angles_follow_snell(X: float, z: float) -> None:
    res = solve_rays(np.array(X), np.array(z), antenna_height_m=H, thickness_m=THICK,
                     index=N, alpha_np_m=ALPHA)
    th, t = _snell(X, z)
    assert float(res.time_s) == pytest.approx(t, rel=1e-10)
    assert float(res.sin_theta0) == pytest.approx(math.sin(th), abs=1e-9)
    assert bool(res.reached)


def test_normal_incidence_spreading_transmission_and_loss() -> None:
    # paraxial image distance h + sum d / n (Cerveny 2001 ch. 4), two-way interface
    # transmission prod (1 - r^2), loss exp(-2 sum alpha d)
    z = 1.0
    res = solve_rays(np.array(0.0), np.array(z), antenna_height_m=H, thickness_m=THICK,
                     index=N, alpha_np_m=ALPHA)
    D = np.array([0.4, 0.3, 0.3])
    r_e = H + float(np.sum(D / N))
    assert float(res.spreading_m2) == pytest.approx(r_e**2, rel=1e-12)
    ns = [1.0, *N]
    t2 = np.prod([1 - ((a - b) / (a + b)) ** 2 for a, b in zip(ns[:-1], ns[1:], strict=True)])
    assert float(res.transmission) == pytest.approx(t2, rel=1e-12)
    assert float(res.attenuation) == pytest.approx(math.exp(-2 * float(ALPHA @ D)), rel=1e-12)


def test_oblique_spreading_matches_finite_difference_of_the_ray_fan() -> None:
    # two-way spreading R_par' R_perp with R_par' = cos(theta_loc) dX/dtheta0 (the tube
    # width across the ray at its end) and R_perp = X / sin(theta0): dX/dtheta0 by a finite
    # difference of X over the air angle (ray-tube definition, Cerveny 2001 ch. 4)
    z, X = 1.2, 1.0
    th, _ = _snell(X, z)
    dth = 1e-6

    def offset(theta: float) -> float:
        s = math.sin(theta)
        D = np.array([0.4, 0.3, 0.5])
        return H * math.tan(theta) + float(np.sum(D * s / np.sqrt(N * N - s * s)))

    cos_loc = math.sqrt(1.0 - (math.sin(th) / N[-1]) ** 2)
    r_par = cos_loc * (offset(th + dth) - offset(th - dth)) / (2 * dth)
    r_perp = X / math.sin(th)
    res = solve_rays(np.array(X), np.array(z), antenna_height_m=H, thickness_m=THICK,
                     index=N, alpha_np_m=ALPHA)
    assert float(res.spreading_m2) == pytest.approx(r_par * r_perp, rel=1e-6)


def test_table_lookup_is_within_picoseconds_of_the_exact_ray() -> None:
    tab = RayTable.build(6.0, (0.8, 1.4), antenna_height_m=H, thickness_m=THICK, index=N,
                         alpha_np_m=ALPHA)
    rng = np.random.default_rng(1)
    X = rng.uniform(0.0, 5.9, 200)
    z = rng.uniform(0.8, 1.4, 200)
    exact = solve_rays(X, z, antenna_height_m=H, thickness_m=THICK, index=N, alpha_np_m=ALPHA)
    t, g, _, _ = tab.lookup(X, z)
    assert np.max(np.abs(t - exact.time_s)) < 5e-12  # 5 ps, a twentieth of a 0.1 ns sample
    gain = exact.transmission * exact.attenuation / exact.spreading_m2
    assert np.max(np.abs(g / gain - 1)) < 0.01
    along = tab.along_x(z[:5])
    t1, _, _ = along.lookup(X[:5])
    np.testing.assert_allclose(np.diagonal(t1) if t1.ndim > 1 else t1, t[:5], atol=5e-12)


def test_polyline_ends_at_the_point_and_bends_by_snell() -> None:
    run, depth = ray_polyline(1.5, 1.2, antenna_height_m=H, thickness_m=THICK, index=N)
    assert run[0] == 0.0 and depth[0] == -H
    assert run[-1] == pytest.approx(1.5, abs=1e-8) and depth[-1] == pytest.approx(1.2)
    slopes = np.diff(run) / np.diff(depth)  # tan of the angle from the vertical
    sines = np.sin(np.arctan(slopes))
    np.testing.assert_allclose(sines[1:] * N[: sines.size - 1], sines[0], rtol=1e-9)


def test_antenna_on_the_surface_beyond_critical_angle_is_not_reached() -> None:
    res = solve_rays(np.array(5.0), np.array(0.2), antenna_height_m=0.0,
                     thickness_m=np.array([1.0]), index=np.array([1.5]),
                     alpha_np_m=np.array([0.0]))
    assert not bool(res.reached)
    assert all(np.isfinite(float(getattr(res, f))) for f in
               ("time_s", "transmission", "attenuation", "spreading_m2", "sin_theta0"))
