"""Link budget: against the synthesised radargram and against handbook formulas."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

from snowprobe_widgets import link_budget, simulate
from snowprobe_widgets.budget import (
    fresnel_radius_m,
    quarter_wave_spacing_m,
    range_resolution_m,
    time_window_s,
)
from snowprobe_widgets.radar_equation import noise_rms
from snowprobe_widgets.scene import (
    Boulder,
    Clutter,
    Ground,
    Layer,
    Person,
    Radar,
    Scenario,
    Snowpack,
    Survey,
)


def _scene(target, layers, *, clutter=None, end=6.0, window=100e-9) -> Scenario:
    persons = (target,) if isinstance(target, Person) else ()
    objects = () if persons else (target,)
    return Scenario(Snowpack(layers), Ground("soil", 0.2), persons, objects,
                    Radar("ricker", 800e6, dt_s=1e-10, time_window_s=window),
                    Survey(0.0, end, 0.05), clutter or Clutter(), name="budget check")


def _measured_enr_db(sc: Scenario) -> float:
    rg = simulate(sc, components=("objects",))
    i = int(np.argmin(np.abs(rg.position_m - sc.targets[0].position_m)))
    r = sc.radar
    return 20 * math.log10(np.max(np.abs(rg.data[:, i]))
                           / noise_rms(r.transmit_power_dbm, r.noise_floor_dbm, r.stacking))


@pytest.mark.parametrize("lwc", [0.0, 2.0, 4.0])
@pytest.mark.parametrize("depth", [0.5, 1.0, 2.0])
def test_echo_to_noise_matches_the_synthesised_radargram(depth: float, lwc: float) -> None:
    # two independent routes: closed-form range equation (Annan 2001 ch. 6 structure)
    # with curvature and band-integrated peak, vs the physical-optics facet sum along
    # refracted rays in simulate(); the issue asks for 2 dB
    layers = (Layer(0.4, 200.0, lwc), Layer(2.6, 350.0, lwc))
    sc = _scene(Person(3.0, depth), layers)
    lb = link_budget(sc)
    assert abs(lb.echo_to_noise_db - _measured_enr_db(sc)) < 2.0


def test_boulder_echo_to_noise_matches() -> None:
    sc = _scene(Boulder(3.0, 1.2, 0.6), (Layer(3.0, 300.0, 1.0),))
    lb = link_budget(sc, sc.objects[0])
    assert abs(lb.echo_to_noise_db - _measured_enr_db(sc)) < 2.0


def test_rows_add_up_to_the_echo_to_noise_ratio() -> None:
    lb = link_budget(Scenario.example("deep_wet_spring"))
    terms = lb.rows[: [r.term for r in lb.rows].index("clutter level")]
    assert sum(r.value for r in terms) == pytest.approx(lb.echo_to_noise_db, abs=1e-9)
    assert lb.row("echo-to-noise ratio").value == lb.echo_to_noise_db
    assert all(math.isfinite(r.value) for r in lb.rows)
    assert "dB above noise" in lb.verdict or "dB below noise" in lb.verdict


def test_wetter_and_deeper_is_harder() -> None:
    dry = _scene(Person(3.0, 1.0), (Layer(3.0, 300.0, 0.0),))
    wet = _scene(Person(3.0, 1.0), (Layer(3.0, 300.0, 4.0),))
    deep = _scene(Person(3.0, 2.0), (Layer(3.0, 300.0, 0.0),))
    a, b, c = (link_budget(s, threshold_db=40.0) for s in (dry, wet, deep))
    assert b.echo_to_noise_db < a.echo_to_noise_db - 3
    assert c.echo_to_noise_db < a.echo_to_noise_db - 3
    assert b.max_detectable_depth_m < a.max_detectable_depth_m


def test_max_detectable_depth_is_where_the_threshold_is_crossed() -> None:
    layers = (Layer(6.0, 380.0, 5.0),)  # very wet: the limit falls inside the search range
    sc = _scene(Person(3.0, 0.5), layers)
    lb = link_budget(sc, threshold_db=40.0)
    assert 0.3 < lb.max_detectable_depth_m < 5.5
    moved = dataclasses.replace(sc, persons=(Person(3.0, lb.max_detectable_depth_m),))
    assert link_budget(moved, threshold_db=40.0).echo_to_noise_db == pytest.approx(40.0,
                                                                                    abs=0.5)


def test_clutter_level_matches_the_simulated_clutter() -> None:
    # incoherent volume clutter (common practice): predicted rms vs the rms of the
    # synthesised clutter around the target's echo time, within 3 dB
    sc = _scene(Person(3.0, 1.2), (Layer(3.0, 250.0),),
                clutter=Clutter(20.0, 0.1, 0, seed=4), end=20.0, window=60e-9)
    lb = link_budget(sc)
    rg = simulate(sc, components=("clutter",))
    i = int(round(rg.truth[0].apex_time_s / rg.dt_s))
    measured = float(np.sqrt(np.mean(rg.data[i - 5:i + 6] ** 2)))
    r = sc.radar
    rms = noise_rms(r.transmit_power_dbm, r.noise_floor_dbm, r.stacking)
    predicted_db = lb.row("clutter level").value
    assert abs(predicted_db - 20 * math.log10(measured / rms)) < 3.0


def test_range_resolution_against_worked_example() -> None:
    # 1 GHz bandwidth in dry sand (eps ~ 5): about 6.5 cm (public radar knowledge-base
    # worked example, REFERENCES 7.6); c0 / (2 B sqrt(eps)) = 6.70 cm
    assert range_resolution_m(1e9, 5.0) == pytest.approx(0.065, rel=0.04)
    assert range_resolution_m(1e9, 1.5) == pytest.approx(0.1224, abs=1e-4)  # REFERENCES 7.6


def test_fresnel_zone_against_worked_values() -> None:
    # r_F = sqrt(lambda d / 2 + lambda^2 / 16) (public GPR glossary, REFERENCES 7.7):
    # eps 1.5, 1 GHz, 1 m -> 0.3552 m; eps 1.6, 0.8 GHz, 1.5 m -> 0.4772 m
    lam = 299_792_458.0 / (1e9 * math.sqrt(1.5))
    assert fresnel_radius_m(lam, 1.0) == pytest.approx(0.3552, abs=2e-4)
    lam = 299_792_458.0 / (0.8e9 * math.sqrt(1.6))
    assert fresnel_radius_m(lam, 1.5) == pytest.approx(0.4772, abs=2e-4)


def test_trace_spacing_and_window_rules() -> None:
    # Annan's quarter-wavelength spacing and 1.3 x two-way-time window (REFERENCES 7.9)
    assert quarter_wave_spacing_m(1e9, 1.5) == pytest.approx(0.0612, abs=1e-4)
    assert quarter_wave_spacing_m(800e6, 1.6) == pytest.approx(0.0741, abs=1e-4)
    t = 2 * 3.0 * math.sqrt(1.5) / 299_792_458.0
    assert time_window_s(t) * 1e9 == pytest.approx(31.87, abs=0.01)


def test_nobody_buried_and_bad_threshold() -> None:
    with pytest.raises(ValueError, match="no buried person"):
        link_budget(Scenario.example("debris_no_burial"))
    with pytest.raises(ValueError, match="threshold_db"):
        link_budget(Scenario.example("shallow_dry_powder"), threshold_db=-5.0)


def test_every_demo_with_a_person_has_a_finite_budget() -> None:
    for name in Scenario.examples():
        sc = Scenario.example(name)
        if not sc.persons:
            continue
        lb = link_budget(sc)
        assert math.isfinite(lb.echo_to_noise_db) and math.isfinite(lb.echo_to_clutter_db)
        assert lb.target_depth_m == sc.persons[0].depth_m


def test_clutter_makes_the_deepest_detectable_burial_shallower() -> None:
    # the limit counts noise and clutter together (rms added in power): heavy debris
    # clutter cannot make it deeper, and here makes it shallower
    layers = (Layer(6.0, 380.0, 3.0),)
    quiet = _scene(Person(3.0, 0.5), layers)
    cluttered = _scene(Person(3.0, 0.5), layers, clutter=Clutter(300.0, 0.4, 0, seed=1))
    a = link_budget(quiet, threshold_db=40.0)
    b = link_budget(cluttered, threshold_db=40.0)
    assert b.echo_to_clutter_db < 60.0
    assert b.max_detectable_depth_m < a.max_detectable_depth_m


def test_not_a_scenario_is_refused_by_name() -> None:
    with pytest.raises(ValueError, match="scenario must be a Scenario"):
        link_budget("shallow_dry_powder")


# ------------------------------------------------------------------ deepest burial
C0 = 299_792_458.0


def _uniform(lwc: float, density: float, *, window: float = 400e-9, **radar) -> Scenario:
    """30 m of uniform snow, a lying person, a 800 MHz Ricker radar (package defaults)."""
    return Scenario(Snowpack((Layer(30.0, density, lwc),)), Ground("soil", 0.2),
                    (Person(3.0, 0.5),), (),
                    Radar("ricker", 800e6, dt_s=1e-10, time_window_s=window, **radar),
                    Survey(0.0, 6.0, 0.05), Clutter(), name="depth check")


def _range_equation_depth(sc: Scenario, thr: float, *, alpha_hz: float | None = None
                          ) -> float:
    """Depth where the radar range equation at the centre frequency crosses ``thr``.

    Planar-reflector form (image theory) of the GPR range equation, Annan (2001, GPR
    workshop notes ch. 6) / Daniels (2004, ch. 2), REFERENCES 7.8:
    P_r / P_t = G^2 lambda_0^2 |T|^4 |Gamma|^2 e^{-4 alpha z} / ((4 pi)^2 (2 R)^2) with
    R = h + z / n (paraxial range through the surface) and alpha the wet-snow model's
    attenuation at f_c (or at ``alpha_hz``), evaluated here from the material alone. The
    target's reflectivity |Gamma| (its surface and the curvature of its top) is the
    budget's own row at each depth: the check is on how the echo falls with depth.
    """
    from scipy.optimize import brentq

    from snowprobe_widgets import materials

    r = sc.radar
    fc = r.center_frequency_hz
    fa = alpha_hz or fc
    lay = sc.snowpack.layers[0]
    mat = materials.snow(lay.density_kg_m3, lay.lwc_percent)
    eps = complex(mat.permittivity(fc))
    n = math.sqrt(eps.real)
    alpha = 2 * math.pi * fa / C0 * abs(np.sqrt(complex(mat.permittivity(fa))).imag)
    gain = 10 ** (r.antenna_gain_dbi / 10)
    t2 = 1 - ((1 - n) / (1 + n)) ** 2
    noise = 10 ** ((r.noise_floor_dbm - r.transmit_power_dbm) / 20) / math.sqrt(r.stacking)

    def margin(z: float) -> float:
        moved = dataclasses.replace(sc, persons=(Person(3.0, z),))
        gamma = 10 ** (link_budget(moved).row("target reflectivity").value / 20)
        big_r = r.antenna_height_m + z / n
        amp = gain * (C0 / fc) / (4 * math.pi) * t2 * math.exp(-2 * alpha * z) * gamma / (
            2 * big_r)
        return 20 * math.log10(amp / noise) - thr

    return brentq(margin, 0.3, 29.5, xtol=0.01)


@pytest.mark.parametrize("thr", [20.0, 30.0, 40.0])
def test_deepest_burial_in_wet_snow_follows_the_range_equation(thr: float) -> None:
    # 5 % water at 800 MHz, the default antenna band (two-way half-power band of the
    # pulse): within 1 m of the range equation at the centre frequency at the detector's
    # 20 dB level and above (measured 0.75, 0.41, 0.19 m)
    sc = _uniform(5.0, 380.0)
    lb = link_budget(sc, threshold_db=thr)
    assert lb.depth_limited_by == "noise"
    assert abs(lb.max_detectable_depth_m - _range_equation_depth(sc, thr)) < 1.0


@pytest.mark.parametrize("thr", [10.0, 20.0, 30.0, 40.0])
def test_a_narrow_antenna_band_tends_to_the_range_equation(thr: float) -> None:
    # the range equation is a single-frequency equation: with the antenna's band narrowed
    # to f_c +- 10 % the band-integrated echo follows it at every level (measured within
    # 0.2 m). Tolerance 0.5 m: half the 1 m
    sc = _uniform(5.0, 380.0, antenna_band_low_hz=0.9 * 800e6,
                  antenna_band_high_hz=1.1 * 800e6)
    lb = link_budget(sc, threshold_db=thr)
    assert abs(lb.max_detectable_depth_m - _range_equation_depth(sc, thr)) < 0.5


def test_a_deep_wet_echo_comes_from_inside_the_antenna_band() -> None:
    # at 10 dB the limit lies near 8-9 m, where two-way loss at f_c is ~40 dB and the
    # low part of the band (alpha ~ f^2, REFERENCES 7.5) carries the echo: the budget lies
    # deeper than the range equation at f_c (1.2 m measured) but never deeper than the
    # same equation with the attenuation of the band's low edge (what no energy below
    # the band can beat)
    sc = _uniform(5.0, 380.0)
    lb = link_budget(sc, threshold_db=10.0)
    low_edge = sc.radar.antenna_band_hz[0]
    assert (_range_equation_depth(sc, 10.0) < lb.max_detectable_depth_m
            < _range_equation_depth(sc, 10.0, alpha_hz=low_edge))


@pytest.mark.parametrize("tx", [0.0, 10.0, 20.0])
def test_deepest_burial_in_dry_snow_grows_with_system_performance(tx: float) -> None:
    # dry snow barely attenuates: spreading and the target's curvature set the limit;
    # the budget follows the range equation within 5 % as the system performance grows
    sc = _uniform(0.0, 300.0, window=800e-9, transmit_power_dbm=tx, noise_floor_dbm=-60.0,
                  stacking=1)
    lb = link_budget(sc, threshold_db=10.0)
    assert lb.depth_limited_by == "noise"
    assert lb.max_detectable_depth_m == pytest.approx(_range_equation_depth(sc, 10.0),
                                                      rel=0.05)


@pytest.mark.parametrize("window", [30e-9, 40e-9, 50e-9])
def test_deepest_burial_is_limited_by_the_window(window: float) -> None:
    # no depth whose two-way time lies outside the window: z = (T c0 - 2 h) / (2 n) with
    # n = sqrt(eps') of the snow (v = c0 / sqrt(eps'), REFERENCES 7.4)
    from snowprobe_widgets import materials

    sc = _uniform(0.0, 300.0, window=window, transmit_power_dbm=20.0, noise_floor_dbm=-60.0,
                  stacking=1)
    lb = link_budget(sc)
    n = math.sqrt(materials.dry_snow(300.0).permittivity(800e6).real)
    expected = (window * C0 - 2 * sc.radar.antenna_height_m) / (2 * n)
    assert lb.depth_limited_by == "window"
    assert lb.max_detectable_depth_m == pytest.approx(expected, rel=1e-6)
    assert lb.window_depth_m == pytest.approx(expected, rel=1e-6)
    # the verdict says that the window, not the snow, is the limit, and what window
    # would reach the snow's limit (two-way time to it)
    assert "recording window ends, not the snow" in lb.verdict
    needed = (2 * sc.radar.antenna_height_m + 2 * n * lb.snow_limited_depth_m) / C0
    assert lb.window_needed_s == pytest.approx(needed, rel=1e-6)
    assert f"about {needed * 1e9:.0f} ns" in lb.verdict
    assert lb.snow_limited_depth_m > lb.max_detectable_depth_m


def test_the_search_limit_is_never_printed_as_the_answer() -> None:
    from snowprobe_widgets.budget import SEARCH_LIMIT_M

    # dry snow, default radar, long window: detectable at every depth searched
    sc = _uniform(0.0, 300.0, window=800e-9)
    lb = link_budget(sc)
    assert lb.depth_limited_by == "search limit"
    assert f"beyond {SEARCH_LIMIT_M:g} m the model was not evaluated" in lb.verdict
    assert f"about {SEARCH_LIMIT_M:.1f} m" not in lb.verdict
    # the same radar with the demo's 51 ns window: the window limits, and the verdict
    # still says the snow limit was not found within the search
    short = _uniform(0.0, 300.0, window=51.2e-9)
    lb = link_budget(short)
    assert lb.depth_limited_by == "window" and lb.max_detectable_depth_m < 6.0
    assert f"beyond {SEARCH_LIMIT_M:g} m the model was not evaluated" in lb.verdict


def test_every_demo_states_a_physical_deepest_burial() -> None:
    # the issue: every demo read "about 10.0 m", a display cap
    for name in Scenario.examples():
        sc = Scenario.example(name)
        target = sc.persons[0] if sc.persons else sc.objects[0]
        lb = link_budget(sc, target)
        assert lb.depth_limited_by in ("window", "noise", "clutter", "dynamic range",
                                       "ringing")
        assert lb.max_detectable_depth_m <= lb.window_depth_m + 1e-9
        assert math.isfinite(lb.window_needed_s) and lb.window_needed_s > 0


def test_dynamic_range_under_the_surface_echo_limits_the_depth() -> None:
    # a receiver that records only 30 dB under the surface echo (its gain is set by the
    # surface echo; common practice): the deepest echo sits 30 dB + threshold under it
    sc = _uniform(0.0, 300.0, window=800e-9, dynamic_range_db=30.0)
    lb = link_budget(sc)
    assert lb.depth_limited_by == "dynamic range"
    assert "dynamic range" in lb.verdict
    wide = link_budget(_uniform(0.0, 300.0, window=800e-9))
    assert lb.max_detectable_depth_m < wide.max_detectable_depth_m


def test_antenna_ringing_masks_the_first_nanoseconds() -> None:
    # ringing as strong as the echoes, lasting 40 ns: a person at 0.5 m (echo at ~6 ns)
    # is hidden, and nothing whose echo arrives within the ringing is detectable
    sc = _uniform(0.0, 300.0, window=100e-9, ringing_level_db=-20.0, ringing_time_s=40e-9,
                  transmit_power_dbm=0.0, noise_floor_dbm=-60.0, stacking=1)
    lb = link_budget(sc)
    assert "unlikely to be visible" in lb.verdict
    assert lb.max_detectable_depth_m == 0.0 and lb.depth_limited_by == "ringing"
    assert "Not detectable at any depth" in lb.verdict


def test_a_wide_pulse_tail_cannot_carry_a_deep_echo() -> None:
    # wet snow spares low frequencies (alpha ~ f^2, REFERENCES 7.5); a Ricker pulse has a
    # low-frequency tail. Counting the echo over an antenna band reaching down to 100 MHz
    # lets that tail carry an echo from far deeper than over the default antenna band,
    # the pulse's two-way half-power band: |S|^2 >= 1/2 peak, i.e. the normalised Ricker
    # spectrum (f/f_p)^2 exp(1 - (f/f_p)^2) (REFERENCES 8.1) >= 2^(-1/4)
    from scipy.optimize import brentq

    narrow = _uniform(5.0, 380.0)
    wide = _uniform(5.0, 380.0, antenna_band_low_hz=100e6, antenna_band_high_hz=3e9)
    lo, hi = narrow.radar.antenna_band_hz
    ricker = lambda x: x * x * math.exp(1 - x * x) - 2 ** -0.25  # noqa: E731
    assert lo == pytest.approx(brentq(ricker, 0.1, 1.0) * 800e6, rel=2e-3)
    assert hi == pytest.approx(brentq(ricker, 1.0, 3.0) * 800e6, rel=2e-3)
    a = link_budget(narrow, threshold_db=20.0).max_detectable_depth_m
    b = link_budget(wide, threshold_db=20.0).max_detectable_depth_m
    assert b > a + 1.0


# ------------------------------------------------------------------ footprint
def _fermat_zone_m(wavelength0_m: float, n: float, h: float, d: float) -> float:
    """First Fresnel zone by brute force: the lateral offset x of the buried point where
    the least optical path from the antenna (Fermat, minimised numerically over the
    crossing point on the surface) is longer than straight down by lambda_0 / 4 (two-way
    lambda_0 / 2, the half-period zone)."""
    from scipy.optimize import brentq, minimize_scalar

    def path(x: float) -> float:
        f = lambda u: math.hypot(h, u) + n * math.hypot(d, x - u)  # noqa: E731
        return minimize_scalar(f, bounds=(0.0, x), method="bounded",
                               options={"xatol": 1e-10}).fun if x > 0 else h + n * d

    p0 = path(0.0)
    return brentq(lambda x: path(x) - p0 - wavelength0_m / 4, 1e-6, 100.0, xtol=1e-8)


@pytest.mark.parametrize("h", [0.5, 3.0, 20.0])
def test_footprint_matches_a_brute_force_fermat_zone(h: float) -> None:
    from snowprobe_widgets import materials

    sc = dataclasses.replace(_scene(Person(3.0, 1.0), (Layer(3.0, 300.0),)),
                             radar=Radar("ricker", 800e6, dt_s=1e-10, time_window_s=400e-9,
                                         antenna_height_m=h))
    lb = link_budget(sc)
    n = math.sqrt(materials.dry_snow(300.0).permittivity(800e6).real)
    exact = _fermat_zone_m(C0 / 800e6, n, h, 1.0)
    assert lb.footprint_radius_m == pytest.approx(exact, rel=0.10)
    # the advice built on it
    assert lb.lane_spacing_m == pytest.approx(2 * lb.footprint_radius_m)
    assert lb.trace_spacing_m <= lb.footprint_radius_m / 2 + 1e-12
    # a raised antenna widens the zone: the ground-coupled formula alone is far too small
    if h >= 3.0:
        assert lb.footprint_radius_m > 1.5 * fresnel_radius_m(C0 / (800e6 * n), 1.0)
