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


# ------------------------------------------------------------------ polarisation
def _fresnel_angle_form(theta_i: float, theta_t: float) -> tuple[float, float]:
    """(r_s, r_p) by Fresnel's equations in their angle form, -sin(i - t) / sin(i + t) and
    tan(i - t) / tan(i + t) (Born & Wolf, Principles of Optics, 7th ed. 1999, sec. 1.5.2,
    eqs. 21; Hecht, Optics, 4th ed., eqs. 4.42-4.43)."""
    return (-math.sin(theta_i - theta_t) / math.sin(theta_i + theta_t),
            math.tan(theta_i - theta_t) / math.tan(theta_i + theta_t))


@pytest.mark.parametrize("theta0_deg", [0.0, 20.0, 40.0, 55.0, 70.0])
def test_surface_transmission_is_te_across_and_tm_along_the_line(theta0_deg: float) -> None:
    # every interface crossed, both ways: prod (1 - r^2) with the textbook r_s (TE) and
    # r_p (TM) at that interface's angles (Snell from the air angle)
    th0 = math.radians(theta0_deg)
    s0 = math.sin(th0)
    z = 1.0
    tops = np.concatenate([[0.0], np.cumsum(THICK)[:-1]])
    D = np.clip(z - tops, 0.0, THICK)
    X = H * math.tan(th0) + sum(d * s0 / math.sqrt(n * n - s0 * s0)
                                for d, n in zip(D, N, strict=True))
    angles = [th0] + [math.asin(s0 / n) for n in N]
    expected = {"TE": 1.0, "TM": 1.0}
    for a, b in zip(angles[:-1], angles[1:], strict=True):
        if a == b:  # normal incidence: the angle form is 0/0, r = (n1 - n2)/(n1 + n2)
            continue
        rs, rp = _fresnel_angle_form(a, b)
        expected["TE"] *= 1 - rs * rs
        expected["TM"] *= 1 - rp * rp
    if theta0_deg == 0.0:
        ns = [1.0, *N]
        t2 = float(np.prod([1 - ((a - b) / (a + b)) ** 2
                            for a, b in zip(ns[:-1], ns[1:], strict=True)]))
        expected = {"TE": t2, "TM": t2}
    for pol in ("TE", "TM"):
        res = solve_rays(np.array(X), np.array(z), antenna_height_m=H, thickness_m=THICK,
                         index=N, alpha_np_m=ALPHA, polarization=pol)
        assert float(res.transmission) == pytest.approx(expected[pol], rel=1e-9), pol


def test_tm_passes_the_surface_better_than_te_at_55_degrees() -> None:
    # one surface, snow of index 1.28, 55 deg in air: the two-way field factor
    # t_down t_up = 1 - r^2 is -0.62 dB for TE and -0.004 dB for TM (textbook Fresnel, as
    # above; 0.31 dB each way); at Brewster's angle atan(n) r_p = 0 and the TM ray passes
    # without loss (Born & Wolf 1.5.3)
    from snowprobe_widgets.raypaths import ray_polarization

    n = 1.28

    def t2(theta0: float, pol: str) -> float:
        X = 0.5 * math.tan(theta0) + math.sin(theta0) / math.sqrt(n * n - math.sin(theta0)**2)
        res = solve_rays(np.array(X), np.array(1.0), antenna_height_m=0.5,
                         thickness_m=np.array([3.0]), index=np.array([n]),
                         alpha_np_m=np.array([0.0]), polarization=pol)
        return float(res.transmission)

    th = math.radians(55.0)
    rs, rp = _fresnel_angle_form(th, math.asin(math.sin(th) / n))
    te = t2(th, ray_polarization("across_line"))
    tm = t2(th, ray_polarization("along_line"))
    assert 20 * math.log10(tm / te) == pytest.approx(
        20 * math.log10((1 - rp * rp) / (1 - rs * rs)), abs=1e-9)
    assert 0.5 < 20 * math.log10(tm / te) < 0.75
    assert t2(math.atan(n), "TM") == pytest.approx(1.0, abs=1e-12)
