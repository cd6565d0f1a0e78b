"""Radargram synthesis: geometry of hyperbolas, facet scattering, amplitudes, seeds."""

from __future__ import annotations

import dataclasses
import math

import miepython
import numpy as np
import pytest
from scipy.optimize import brentq

from snowprobe_widgets import simulate
from snowprobe_widgets.facets import ellipsoid_mesh, plate_mesh, po_backscatter
from snowprobe_widgets.scene import (
    Boulder,
    Clutter,
    Ground,
    Layer,
    MetalPlate,
    Person,
    Radar,
    Scenario,
    Snowpack,
    Survey,
)

C = 299_792_458.0  # m/s, exact


def _scene(targets=(), *, layers=None, h=0.5, fc=800e6, dt=1e-10, window=60e-9,
           start=0.0, end=6.0, dx=0.05, clutter=None) -> Scenario:
    layers = layers or (Layer(0.6, 180.0), Layer(0.8, 260.0), Layer(1.6, 330.0))
    persons = tuple(t for t in targets if isinstance(t, Person))
    objects = tuple(t for t in targets if not isinstance(t, Person))
    return Scenario(Snowpack(tuple(layers)), Ground("soil", 0.2), persons, objects,
                    Radar("ricker", fc, dt_s=dt, time_window_s=window, antenna_height_m=h),
                    Survey(start, end, dx), clutter or Clutter(), name="test line")


def _snell_time(X: float, z: float, h: float, thick, n) -> float:
    """Two-way time to (X, z) by Snell's law, solved with brentq on the air angle
    (independent of snowprobe_widgets.raypaths; Snell's law, e.g. Born & Wolf 1999 1.5)."""
    tops = np.concatenate([[0.0], np.cumsum(thick)[:-1]])
    D = np.clip(z - tops, 0.0, thick)

    def offset(theta0: float) -> float:
        s = math.sin(theta0)
        return h * math.tan(theta0) + sum(d * s / math.sqrt(nj**2 - s**2)
                                          for d, nj in zip(D, n, strict=True)) - X

    th = 0.0 if X == 0 else brentq(offset, 0.0, math.pi / 2 - 1e-9, xtol=1e-14)
    s = math.sin(th)
    t = h / math.cos(th) + sum(d * nj / math.sqrt(1 - (s / nj) ** 2)
                               for d, nj in zip(D, n, strict=True))
    return 2 * t / C


def _indices(sc: Scenario) -> tuple[np.ndarray, np.ndarray]:
    fc = sc.radar.center_frequency_hz
    n = np.array([float(m.refractive_index(fc).real) for m in sc.snowpack.materials()])
    return sc.snowpack.thicknesses_m, n


def _peak_index(trace: np.ndarray, t_ref: float, dt: float, half: int = 12) -> int:
    i0 = int(round(t_ref / dt))
    lo = max(i0 - half, 0)
    return lo + int(np.argmax(np.abs(trace[lo:i0 + half])))


@pytest.fixture(scope="module")
def person_line():
    # no clothing layer: the echo then comes from the body's outer surface (the skin). With
    # clothing the skin echo arrives 2 d_cl n_cl / c later (0.8 samples for 1 cm), as it
    # physically should, and the top-of-body times below would not be the echo's times.
    person = Person(position_m=3.0, depth_m=1.0, clothing_m=0.0)
    sc = _scene((person,))
    return sc, simulate(sc, components=("objects",))


def test_apex_time_matches_layer_velocities(person_line) -> None:
    # two-way time straight above the top of the body: 2 h / c + sum 2 d_j n_j / c with
    # n_j from the layer's material model (radar travel time, common practice)
    sc, rg = person_line
    thick, n = _indices(sc)
    tops = np.concatenate([[0.0], np.cumsum(thick)[:-1]])
    D = np.clip(1.0 - tops, 0.0, thick)
    t_ref = 2 * 0.5 / C + 2 * float(np.dot(D, n)) / C
    assert rg.truth[0].apex_time_s == pytest.approx(t_ref, rel=1e-9)
    i_tr = int(np.argmin(np.abs(rg.position_m - 3.0)))
    i_pk = _peak_index(rg.data[:, i_tr], t_ref, rg.dt_s)
    assert abs(i_pk - t_ref / rg.dt_s) <= 1.0
    # and the apex is the earliest arrival of the hyperbola along the line
    near = np.nonzero(np.abs(rg.position_m - 3.0) <= 1.0)[0]
    first = np.array([_peak_index(rg.data[:, j], t_ref, rg.dt_s, 40) for j in near])
    assert first.min() == i_pk  # nowhere along the line earlier than straight above
    assert first[0] > i_pk + 3 and first[-1] > i_pk + 3  # and clearly later 1 m away


@pytest.mark.parametrize("offset_m", [0.5, 1.0, 1.5, 2.0])
def test_flanks_follow_snell_travel_times(person_line, offset_m: float) -> None:
    # Fermat: the echo from a smooth body comes from its specular point, where the
    # refracted two-way time is smallest over the surface. Brute-force minimum over the
    # body surface with the independent Snell solver above.
    sc, rg = person_line
    thick, n = _indices(sc)
    p = sc.persons[0]
    a, b, c = p.body_length_m / 2, p.body_width_m / 2, p.body_thickness_m / 2
    x_ant = 3.0 + offset_m
    # surface points of the upper half, dense near the side facing the antenna
    th = np.linspace(0, math.pi / 2, 181)
    ph = np.linspace(-math.pi / 2, math.pi / 2, 61)
    tt, pp = np.meshgrid(th, ph, indexing="ij")
    xs = 3.0 + a * np.sin(tt) * np.cos(pp)
    ys = b * np.sin(tt) * np.sin(pp)
    zs = p.depth_m + c - c * np.cos(tt)
    times = [_snell_time(math.hypot(x - x_ant, y), z, 0.5, thick, n)
             for x, y, z in zip(xs.ravel()[::3], ys.ravel()[::3], zs.ravel()[::3], strict=True)]
    t_ref = min(times)
    i_tr = int(np.argmin(np.abs(rg.position_m - x_ant)))
    assert abs(rg.position_m[i_tr] - x_ant) < 1e-9
    i_pk = _peak_index(rg.data[:, i_tr], t_ref, rg.dt_s)
    assert abs(i_pk - t_ref / rg.dt_s) <= 1.0


@pytest.mark.parametrize("ka", [10.0, 20.0])
@pytest.mark.parametrize("m", [complex(1e4, -1e4), complex(2.45, -0.3)])
def test_sphere_facet_sum_against_mie(ka: float, m: complex) -> None:
    # Physical optics is asymptotically right for large spheres; Mie theory (miepython,
    # PyPI; Bohren & Huffman 1983) is exact. Within 2 dB at ka >= 10. A lossy dielectric
    # keeps the sphere's internal (glory) paths small, where PO has nothing to say.
    a = 0.2
    k = ka / a
    lam = 2 * math.pi / k
    R = 2000.0
    mesh = ellipsoid_mesh((0, 0, R), (a, a, a), facet_size_m=lam / 10)
    r = -1.0 if abs(m) > 1e3 else (1 - m) / (1 + m)
    E = po_backscatter(mesh, np.array([k]), (0, 0, 0), reflection=r)[0]
    sigma_po = 4 * math.pi * R**4 * abs(E) ** 2
    _, _, qback, _ = miepython.efficiencies(m, 2 * a, lam)
    sigma_mie = qback * math.pi * a**2
    assert abs(10 * math.log10(sigma_po / sigma_mie)) < 2.0


def test_plate_facet_sum_is_physical_optics_rcs() -> None:
    # flat plate at normal incidence: sigma = 4 pi A^2 / lambda^2 (Knott, Shaeffer & Tuley,
    # Radar Cross Section, 1993, table of PO formulas)
    L, W, lam, R = 0.5, 0.3, 0.1, 2000.0
    mesh = plate_mesh((0, 0, R), L, W, facet_size_m=0.01)
    E = po_backscatter(mesh, np.array([2 * math.pi / lam]), (0, 0, 0))[0]
    assert 4 * math.pi * R**4 * abs(E) ** 2 == pytest.approx(4 * math.pi * (L * W) ** 2
                                                             / lam**2, rel=1e-3)


def test_large_plate_in_snow_approaches_image_theory() -> None:
    # A buried plate much wider than the first Fresnel zone reflects like a flat
    # interface: T2 * (-1) / (2 (h + d / n)) (image theory through a flat interface;
    # the same limit as the point-antenna layered trace). Edge diffraction of a finite
    # plate keeps it within about 1.5 dB.
    h, d = 0.3, 0.3
    snow = Layer(2.0, 250.0)
    plate = MetalPlate(position_m=3.0, depth_m=d, length_m=3.0, width_m=1.0)
    sc = _scene((plate,), layers=(snow,), h=h, fc=1e9, dt=5e-11, window=20e-9)
    rg = simulate(sc, components=("objects",))
    n = float(snow.material().refractive_index(1e9).real)
    r_s = (1 - n) / (1 + n)
    expected = (1 - r_s**2) * (-1.0) / (2 * (h + d / n))
    from snowprobe_widgets.radar_equation import antenna_factor

    af = antenna_factor(sc.radar.antenna_gain_dbi, 1e9)
    i_tr = int(np.argmin(np.abs(rg.position_m - 3.0)))
    t_ref = 2 * h / C + 2 * d * n / C
    i_pk = _peak_index(rg.data[:, i_tr], t_ref, rg.dt_s)
    got = rg.data[i_pk, i_tr] / af
    assert abs(i_pk - t_ref / rg.dt_s) <= 1
    assert abs(20 * math.log10(abs(got / expected))) < 1.5
    assert got < 0


def _sphere_peak(layer: Layer, depth: float, radius: float = 0.3, fc: float = 800e6) -> float:
    rock = Boulder(position_m=3.0, depth_m=depth, diameter_m=2 * radius, permittivity=8.0,
                   conductivity_s_m=0.0)
    sc = _scene((rock,), layers=(layer,), fc=fc, window=80e-9)
    rg = simulate(sc, components=("objects",))
    i_tr = int(np.argmin(np.abs(rg.position_m - 3.0)))
    return float(np.max(np.abs(rg.data[:, i_tr])))


def _sphere_prediction(layer: Layer, depth: float, radius: float = 0.3, fc: float = 800e6,
                       h: float = 0.5) -> float:
    # Convex mirror of radius a inside a medium of index n, seen through a flat surface in
    # reduced distances R_e = h + d / n (Gaussian optics mirror equation, e.g. Hecht,
    # Optics, ch. 5; derivation ours): |E| = T2 |r| a exp(-2 alpha d) / (2 R_e (a + n R_e)),
    # with n, alpha from the material model and r the sphere's Fresnel coefficient.
    m = layer.material()
    nn = complex(m.refractive_index(fc))
    n = nn.real
    alpha = m.attenuation_db_m(fc) / (20 * math.log10(math.e))
    r_s = (1 - n) / (1 + n)
    r_b = (n - math.sqrt(8.0)) / (n + math.sqrt(8.0))
    re = h + depth / n
    return (1 - r_s**2) * abs(r_b) * radius * math.exp(-2 * alpha * depth) / (
        2 * re * (radius + n * re))


def test_echo_amplitude_falls_with_depth_as_spreading_predicts() -> None:
    dry = Layer(4.0, 250.0)
    got = _sphere_peak(dry, 2.5) / _sphere_peak(dry, 0.8)
    want = _sphere_prediction(dry, 2.5) / _sphere_prediction(dry, 0.8)
    assert abs(20 * math.log10(got / want)) < 1.0
    assert got < 0.6  # a real fall, not a flat response


def test_echo_amplitude_falls_with_water_as_attenuation_predicts() -> None:
    dry = Layer(3.0, 350.0, 0.0)
    wet = Layer(3.0, 350.0, 3.0)
    got = _sphere_peak(wet, 1.5) / _sphere_peak(dry, 1.5)
    want = _sphere_prediction(wet, 1.5) / _sphere_prediction(dry, 1.5)
    assert abs(20 * math.log10(got / want)) < 1.0
    assert got < 0.7


def test_same_seed_same_radargram_other_seed_other_clutter() -> None:
    clutter = Clutter(scatterer_density_per_m3=5.0, scatterer_size_m=0.1, thin_layer_count=2,
                      seed=7)
    sc = _scene((Person(3.0, 0.8),), clutter=clutter)
    a = simulate(sc).data
    b = simulate(sc).data
    np.testing.assert_array_equal(a, b)
    other = dataclasses.replace(sc, clutter=dataclasses.replace(clutter, seed=8))
    c = simulate(other).data
    assert np.max(np.abs(a - c)) > 0.1 * np.max(np.abs(a - a.mean(axis=1, keepdims=True)))
    # without clutter and noise, the seed changes nothing
    quiet = ("layers", "objects")
    np.testing.assert_array_equal(simulate(sc, components=quiet).data,
                                  simulate(other, components=quiet).data)


def test_chunking_does_not_change_the_result() -> None:
    sc = _scene((Person(3.0, 0.8),), clutter=Clutter(3.0, 0.1, 1, seed=3))
    a = simulate(sc, chunk_traces=256).data
    b = simulate(sc, chunk_traces=17).data
    np.testing.assert_allclose(a, b, rtol=0, atol=1e-12 * np.max(np.abs(a)))


def test_every_demo_gives_finite_data_and_truth() -> None:
    for name in Scenario.examples():
        sc = Scenario.example(name)
        rg = simulate(sc)
        assert np.all(np.isfinite(rg.data))
        assert rg.data.shape == (sc.radar.n_samples, sc.survey.n_traces)
        assert len(rg.truth) == len(sc.targets)
        assert rg.scenario is sc


def test_nobody_buried_gives_no_person_truth() -> None:
    rg = simulate(Scenario.example("debris_no_burial"))
    assert all(m.kind != "person" for m in rg.truth)


@pytest.mark.parametrize(("kwargs", "field"), [({"components": ("layers", "ghosts")},
                                                "components"),
                                               ({"chunk_traces": 0}, "chunk_traces")])
def test_bad_arguments(kwargs, field) -> None:
    with pytest.raises(ValueError, match=field):
        simulate(_scene(), **kwargs)


def test_ground_echo_time_in_layers_component() -> None:
    # the ground echo of the column lands at 2 h / c + sum 2 d_j n_j / c
    sc = _scene(window=80e-9)
    rg = simulate(sc, components=("layers",))
    thick, n = _indices(sc)
    t_g = 2 * 0.5 / C + 2 * float(np.dot(thick, n)) / C
    i = _peak_index(rg.data[:, 0], t_g, rg.dt_s)
    assert abs(i - t_g / rg.dt_s) <= 1
    assert np.all(rg.data[:, 0] == rg.data[:, -1])  # horizontal layers: same every trace


@pytest.mark.parametrize("name", ["shallow_dry_powder", "crust_and_ski", "debris_no_burial"])
def test_facet_sum_has_converged(name: str) -> None:
    # self-convergence (common practice for discretised integrals): halving the facet
    # size changes the objects' echoes by less than 3 % of their peak
    from unittest import mock

    from snowprobe_widgets import synthesis

    sc = Scenario.example(name)
    coarse = simulate(sc, components=("objects",)).data
    real = synthesis.object_mesh
    with mock.patch.object(synthesis, "object_mesh", lambda o, s: real(o, s / 2)):
        fine = simulate(sc, components=("objects",)).data
    assert np.max(np.abs(coarse - fine)) < 0.03 * np.max(np.abs(fine))


def test_not_a_scenario_is_refused_by_name() -> None:
    with pytest.raises(ValueError, match="scenario must be a Scenario"):
        simulate({"snowpack": []})


def test_snow_temperature_reaches_the_radargram():
    # Snowpack.temperature_c makes every layer's material: the dry-snow loss follows the
    # ice loss of Matzler (2006), 6.809e-4 at -1 degC and 1.664e-4 at -20 degC at 1 GHz
    # (REFERENCES table 2.2), and the attenuation (low-loss: alpha ~ eps'') follows it
    import dataclasses

    from snowprobe_widgets.synthesis import column_optics

    base = Scenario.example("shallow_dry_powder")

    def at(t_c: float, fc: float = 800e6) -> Scenario:
        radar = dataclasses.replace(base.radar, center_frequency_hz=fc)
        return dataclasses.replace(
            base, radar=radar,
            snowpack=dataclasses.replace(base.snowpack, temperature_c=t_c))

    warm = column_optics(at(-1.0, 1e9)).alpha_np_m
    cold = column_optics(at(-20.0, 1e9)).alpha_np_m
    np.testing.assert_allclose(warm / cold, 6.809e-4 / 1.664e-4, rtol=1e-2)
    # and the radargram changes between -30 and 0 degC: the warm snow absorbs more, so
    # the ground echo (after 2 m of snow) comes back weaker
    a = simulate(at(-30.0), components=("layers",)).data[:, 0]
    b = simulate(at(0.0), components=("layers",)).data[:, 0]
    late = slice(int(round(10e-9 / base.radar.dt_s)), None)  # after the surface echo
    assert np.max(np.abs(b[late])) < np.max(np.abs(a[late]))
    assert not np.allclose(a, b, rtol=0, atol=0)
