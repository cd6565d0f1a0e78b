"""Hyperbola flanks of a buried sphere against 3-D ray-tube theory (issue 10).

The reference is computed here, independently of the synthesis: rays are launched from
the antenna in a small cone, refracted at every flat interface by the vector form of
Snell's law, reflected off the sphere, refracted back into air and cut by the plane
through the antenna across the returning central ray. The returning field of a unit
spherical wave is ``|t_down t_up r| sqrt(dOmega / dA)`` (power conservation in a ray tube:
the two-way power transmittance of the central ray is |t_down t_up|^2 for TE; Born & Wolf,
*Principles of Optics*, 7th ed. 1999, sect. 1.5 and 3.1; Deschamps, Proc. IEEE 60, 1972,
ray-tube form), with dA / dOmega the Jacobian of the end points over the launch
directions by central differences. In a uniform medium this reproduces the exact
geometrical-optics echo of a sphere, a / (2 R (R + a)) (checked below).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.signal import hilbert

from snowprobe_widgets.radar_equation import beam_weight
from snowprobe_widgets.scene import Clutter, Radar, Scenario, Survey
from snowprobe_widgets.scene_objects import Boulder, Ground, Layer, Snowpack
from snowprobe_widgets.synthesis import column_optics, simulate


def _refract(d: np.ndarray, up: np.ndarray, n1: float, n2: float) -> np.ndarray:
    """Vector Snell's law; ``up`` is the unit normal on the incident side."""
    c1 = -float(d @ up)
    eta = n1 / n2
    return eta * d + (eta * c1 - math.sqrt(1.0 - eta * eta * (1.0 - c1 * c1))) * up


def _te_t(n1: float, c1: float, n2: float, c2: float) -> float:
    return 2 * n1 * c1 / (n1 * c1 + n2 * c2)  # TE Fresnel transmission (Born & Wolf 1.5)


def sphere_echo_go(theta0: float, h: float, thick: list[float], index: list[float],
                   centre_depth: float, radius: float) -> tuple[float, float]:
    """(|echo| of a unit spherical wave, along-line offset of the sphere centre) for the
    sphere seen at air angle ``theta0``; flat layers ``thick`` / ``index`` below the air."""
    tops = np.concatenate([[0.0], np.cumsum(thick)])
    # interfaces above the centre and the index below each
    planes = [(float(z), float(n)) for z, n in zip(tops[:-1], index, strict=True)
              if z < centre_depth]
    s0 = math.sin(theta0)
    x_c = h * math.tan(theta0)
    for j, (z, n) in enumerate(planes):
        z_next = planes[j + 1][0] if j + 1 < len(planes) else centre_depth
        x_c += (z_next - z) * s0 / math.sqrt(n * n - s0 * s0)
    ant = np.array([0.0, 0.0, -h])
    centre = np.array([x_c, 0.0, centre_depth])
    d0 = np.array([s0, 0.0, math.cos(theta0)])
    e1 = np.array([math.cos(theta0), 0.0, -s0])
    e2 = np.array([0.0, 1.0, 0.0])
    down, upn = np.array([0.0, 0.0, -1.0]), np.array([0.0, 0.0, 1.0])

    def end_point(u: float, v: float) -> np.ndarray:
        d = d0 + u * e1 + v * e2
        d = d / np.linalg.norm(d)
        p, n_prev = ant, 1.0
        for z, n in planes:  # down through every interface
            p = p + d * ((z - p[2]) / d[2])
            d = _refract(d, down, n_prev, n)
            n_prev = n
        rel = p - centre
        b = float(d @ rel)
        p = p + d * (-b - math.sqrt(b * b - float(rel @ rel) + radius**2))
        nrm = (p - centre) / radius
        d = d - 2 * float(d @ nrm) * nrm
        for j in range(len(planes) - 1, -1, -1):  # back up
            z, n = planes[j]
            p = p + d * ((z - p[2]) / d[2])
            d = _refract(d, upn, n, planes[j - 1][1] if j > 0 else 1.0)
        return p + d * (float((ant - p) @ d0) / float(d @ d0))

    eps = 1e-6
    pu = (end_point(eps, 0) - end_point(-eps, 0)) / (2 * eps)
    pv = (end_point(0, eps) - end_point(0, -eps)) / (2 * eps)
    area = float(np.linalg.norm(np.cross(pu, pv)))
    t2 = 1.0
    n_prev, c_prev = 1.0, math.cos(theta0)
    for _, n in planes:
        c = math.sqrt(1.0 - (s0 / n) ** 2)
        t2 *= _te_t(n_prev, c_prev, n, c) * _te_t(n, c, n_prev, c_prev)
        n_prev, c_prev = n, c
    return t2 / math.sqrt(area), x_c


def test_reference_reproduces_the_sphere_in_a_uniform_medium() -> None:
    # GO backscatter of a sphere: a / (2 R (R + a)) for a unit spherical wave at range R
    # to the specular point (the reflected wavefront radius a R / (a + 2 R))
    amp, _ = sphere_echo_go(0.3, 0.5, [4.0], [1.0], 1.5, 0.5)
    r = math.hypot(0.5 * math.tan(0.3) + 1.5 * math.tan(0.3), 2.0) - 0.5
    assert amp == pytest.approx(0.5 / (2 * r * (r + 0.5)), rel=1e-6)


SNOW = (Layer(0.6, 250.0), Layer(5.0, 400.0))
H_M = 0.5
RADIUS_M = 0.5
TOP_M = 1.2


@pytest.fixture(scope="module")
def sphere_line() -> tuple[np.ndarray, np.ndarray, list[float]]:
    # a large rock sphere (ka ~ 11 at 800 MHz): geometrical optics holds at its specular
    # point; lossy (0.2 S/m: ~15 Np/m inside) so that no internal echo follows the front
    # one; the beam is 180 deg wide and divided out below
    sc = Scenario(Snowpack(SNOW), Ground(),
                  objects=(Boulder(0.0, TOP_M, 2 * RADIUS_M, permittivity=6.0,
                                   conductivity_s_m=0.2),),
                  radar=Radar(center_frequency_hz=800e6, dt_s=2.5e-11, time_window_s=40e-9,
                              beamwidth_deg=180.0, antenna_height_m=H_M),
                  survey=Survey(-0.02, 2.6, 0.01), clutter=Clutter(scatterer_density_per_m3=0))
    rg = simulate(sc, components=("objects",))
    env = np.abs(hilbert(rg.data, axis=0)).max(axis=0)
    return rg.position_m, env, [float(v) for v in column_optics(sc).index]


@pytest.mark.parametrize("theta_deg", [20.0, 40.0, 53.0, 55.0])
def test_flank_over_apex_matches_ray_tube_theory_within_1_db(sphere_line, theta_deg) -> None:
    # before the return-leg fix in raypaths the facet sum was +0.2, +1.1, +2.3 and +2.5 dB
    # too bright at 20, 40, 53 and 55 deg; 1 dB is the bound (the fix gives
    # < 0.1 dB: the dry snow's loss and the pulse's band are the remainder)
    x, env, index = sphere_line
    th = math.radians(theta_deg)
    thick = [s.thickness_m for s in SNOW]
    apex, _ = sphere_echo_go(0.0, H_M, thick, index, TOP_M + RADIUS_M, RADIUS_M)
    flank, x_c = sphere_echo_go(th, H_M, thick, index, TOP_M + RADIUS_M, RADIUS_M)
    model = np.interp(x_c, x, env) / env[np.argmin(np.abs(x))] / beam_weight(th, 180.0)
    err_db = 20 * math.log10(model / (flank / apex))
    assert abs(err_db) < 1.0, f"flank/apex off by {err_db:+.2f} dB at {theta_deg} deg"


def _cylinder_go_2d(theta0: float, h: float, n: float, centre_depth: float,
                    radius: float) -> tuple[float, float, float]:
    """2-D ray theory of a cylinder under a flat surface: (|echo| of a unit line-source
    field, along-line offset of the axis, out-of-plane radius R_perp to the specular
    point). In-plane ray tube by central differences, as in :func:`sphere_echo_go`."""
    s1 = math.sin(theta0) / n
    c0, c1 = math.cos(theta0), math.sqrt(1 - s1 * s1)
    x_c = h * math.tan(theta0) + centre_depth * s1 / c1
    centre = np.array([x_c, centre_depth])
    ant = np.array([0.0, -h])
    d0 = np.array([math.sin(theta0), c0])

    def end_point(u: float) -> np.ndarray:
        d = np.array([math.sin(theta0 + u), math.cos(theta0 + u)])
        p = ant + d * (h / d[1])
        s = d[0] / n
        d = np.array([s, math.sqrt(1 - s * s)])
        rel = p - centre
        b = float(d @ rel)
        q = p + d * (-b - math.sqrt(b * b - float(rel @ rel) + radius**2))
        nrm = (q - centre) / radius
        d = d - 2 * float(d @ nrm) * nrm
        p = q + d * (-q[1] / d[1])
        s = d[0] * n
        d = np.array([s, -math.sqrt(1 - s * s)])
        return p + d * (float((ant - p) @ d0) / float(d @ d0))

    eps = 1e-6
    width = float(np.linalg.norm(end_point(eps) - end_point(-eps))) / (2 * eps)
    t2 = _te_t(1.0, c0, n, c1) * _te_t(n, c1, 1.0, c0)
    return t2 / math.sqrt(width), x_c, h / c0 + (centre_depth - radius) / (n * c1)


def test_flank_of_a_buried_cylinder_agrees_with_the_2d_fdtd() -> None:
    # The project's 2-D FDTD (a metal cylinder of radius 0.2 m, axis 1 m deep in dry snow,
    # line source 0.5 m up, TE) against the facet sum of a long branch across the line.
    # A 3-D point source sees a cylinder's echo reduced by 1 / sqrt(R_perp) against a line
    # source (stationary phase along the axis, Bleistein 1984 ch. 2), so the model's
    # flank/apex ratio times sqrt(R_perp(flank) / R_perp(apex)) is compared with the
    # FDTD's. Before the fix in raypaths the model was +0.4 and +2.1 dB too bright at 40
    # and 55 deg; measured after: within 0.7 dB (the FDTD's own error: 10 cells per
    # shortest wavelength, ka ~ 4 so not quite the optics limit). The independent 2-D ray
    # theory is printed beside it on failure.
    from snowprobe_widgets import materials as mat
    from snowprobe_widgets.fdtd2d import BuriedCylinder, cylinder_trace
    from snowprobe_widgets.scene_objects import Branch

    fc, h, radius, depth = 800e6, 0.5, 0.2, 1.0
    snow = mat.snow(350.0)
    n = float(snow.refractive_index(fc).real)
    radar = Radar(center_frequency_hz=fc, dt_s=2.5e-11, time_window_s=40e-9,
                  beamwidth_deg=180.0, antenna_height_m=h)
    pulse = radar.make_pulse()
    cyl = BuriedCylinder(0.0, depth, radius, mat.metal())

    def fdtd_peak(x: float) -> float:
        tr = cylinder_trace([snow, snow], [3.0], cyl, antenna_x_m=x, antenna_height_m=h,
                            pulse=pulse, dt_s=2e-11, n_samples=1500)
        return float(np.abs(hilbert(tr.amplitude)).max())

    sc = Scenario(Snowpack((Layer(4.0, 350.0),)), Ground(),
                  objects=(Branch(0.0, depth - radius, 2 * radius, 8.0, heading_deg=90.0),),
                  radar=radar, survey=Survey(-0.02, 1.7, 0.01),
                  clutter=Clutter(scatterer_density_per_m3=0))
    rg = simulate(sc, components=("objects",))
    env = np.abs(hilbert(rg.data, axis=0)).max(axis=0)
    x = rg.position_m
    apex_fdtd = fdtd_peak(0.0)
    go_apex, _, rperp_apex = _cylinder_go_2d(0.0, h, n, depth, radius)
    for theta_deg in (40.0, 55.0):
        th = math.radians(theta_deg)
        go, x_c, rperp = _cylinder_go_2d(th, h, n, depth, radius)
        model = (np.interp(x_c, x, env) / env[np.argmin(np.abs(x))]
                 / beam_weight(th, 180.0) * math.sqrt(rperp / rperp_apex))
        fdtd = fdtd_peak(x_c) / apex_fdtd
        err_db = 20 * math.log10(model / fdtd)
        assert abs(err_db) < 1.0, (
            f"{theta_deg} deg: model {20 * math.log10(model):+.2f} dB, FDTD "
            f"{20 * math.log10(fdtd):+.2f} dB, 2-D ray theory "
            f"{20 * math.log10(go / go_apex):+.2f} dB")


def test_along_line_polarisation_passes_the_surface_as_tm(sphere_line) -> None:
    # the same sphere line with the antenna's field along the line: the rays' plane of
    # incidence holds E (TM), so the flank gains (1 - r_p^2) / (1 - r_s^2) at each
    # interface crossed (Fresnel's equations in angle form, Born & Wolf 1.5.2); a sphere
    # scatters both polarisations alike, so nothing else changes. 0.05 dB: the facets
    # around the specular point see slightly different angles
    import dataclasses

    x, env, index = sphere_line
    base = Scenario(Snowpack(SNOW), Ground(),
                    objects=(Boulder(0.0, TOP_M, 2 * RADIUS_M, permittivity=6.0,
                                     conductivity_s_m=0.2),),
                    radar=Radar(center_frequency_hz=800e6, dt_s=2.5e-11, time_window_s=40e-9,
                                beamwidth_deg=180.0, antenna_height_m=H_M),
                    survey=Survey(-0.02, 2.6, 0.01),
                    clutter=Clutter(scatterer_density_per_m3=0))
    along = dataclasses.replace(base, radar=dataclasses.replace(base.radar,
                                                                polarization="along_line"))
    env_tm = np.abs(hilbert(simulate(along, components=("objects",)).data, axis=0)).max(axis=0)
    th = math.radians(55.0)
    thick = [s.thickness_m for s in SNOW]
    _, x_c = sphere_echo_go(th, H_M, thick, index, TOP_M + RADIUS_M, RADIUS_M)
    angles = [th] + [math.asin(math.sin(th) / n) for n in index]
    gain = 1.0
    for a, b in zip(angles[:-1], angles[1:], strict=True):
        rs = -math.sin(a - b) / math.sin(a + b)
        rp = math.tan(a - b) / math.tan(a + b)
        gain *= (1 - rp * rp) / (1 - rs * rs)
    i0 = np.argmin(np.abs(x))
    model_db = 20 * math.log10(np.interp(x_c, x, env_tm) / env_tm[i0]
                               / (np.interp(x_c, x, env) / env[i0]))
    assert env_tm[i0] == pytest.approx(env[i0], rel=0.01)  # apex: near-normal rays
    assert model_db == pytest.approx(20 * math.log10(gain), abs=0.05)
