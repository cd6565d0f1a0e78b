"""Tests of snowprobe_widgets.layered against hand-worked optics and the tmm package.

Analytic checks: Fresnel coefficients (Born & Wolf, Principles of Optics, 7th ed., eqs.
1.5.20-21), quarter-wave antireflection and half-wave transparency (Hecht, Optics, 4th ed.,
section 9.7.1), Brewster angle tan(theta_B) = n2/n1 (Born & Wolf 1.5.3). Independent
reference: the ``tmm`` package (Byrnes 2016, arXiv:1603.02720), which uses the physics
convention e^{-i omega t}; our e^{+j omega t} results are its complex conjugates.
"""

from __future__ import annotations

import numpy as np
import pytest
import tmm
from hypothesis import given, settings
from hypothesis import strategies as st

from snowprobe_widgets.constants import C0_M_S
from snowprobe_widgets.layered import reflection, transmission, transmittance


def test_single_interface_normal_incidence_fresnel():
    # Born & Wolf eq. 1.5.21 at normal incidence: r = (n1 - n2)/(n1 + n2) for TE
    n2 = np.sqrt(3.15)
    r = reflection(1e9, [1.0, 3.15], [])
    assert r == pytest.approx((1 - n2) / (1 + n2), abs=1e-14)
    # TM electric-amplitude convention of Born & Wolf: opposite sign at normal incidence
    assert reflection(1e9, [1.0, 3.15], [], 0.0, "TM") == pytest.approx(-r, abs=1e-14)


def test_oblique_fresnel_hand_worked():
    # Born & Wolf eqs. 1.5.20-21, n1 = 1, n2 = 2, theta = 45 deg, worked by hand below
    th = np.radians(45.0)
    ct2 = np.sqrt(1 - (np.sin(th) / 2.0) ** 2)
    rs = (np.cos(th) - 2 * ct2) / (np.cos(th) + 2 * ct2)
    rp = (2 * np.cos(th) - ct2) / (2 * np.cos(th) + ct2)
    assert reflection(5e8, [1.0, 4.0], [], 45.0, "TE") == pytest.approx(rs, abs=1e-14)
    assert reflection(5e8, [1.0, 4.0], [], 45.0, "TM") == pytest.approx(rp, abs=1e-14)


def test_brewster_angle_tm_vanishes():
    # Born & Wolf 1.5.3: tan(theta_B) = n2/n1; r_TM = 0 there, r_TE is not
    eps2 = 1.8
    theta_b = np.degrees(np.arctan(np.sqrt(eps2)))
    assert abs(reflection(1e9, [1.0, eps2], [], theta_b, "TM")) < 1e-14
    assert abs(reflection(1e9, [1.0, eps2], [], theta_b, "TE")) > 0.1


def test_quarter_wave_layer_cancels_reflection():
    # Hecht 9.7.1: a quarter-wave layer of index sqrt(n1 n3) gives zero reflection at design f
    f0 = 800e6
    n1, n3 = 1.0, np.sqrt(6.0)
    n2 = np.sqrt(n1 * n3)
    d = C0_M_S / f0 / (4 * n2)
    assert abs(reflection(f0, [n1**2, n2**2, n3**2], [d])) < 1e-14
    # and at twice the frequency the layer is half-wave: bare-interface reflection returns
    bare = reflection(2 * f0, [n1**2, n3**2], [])
    assert reflection(2 * f0, [n1**2, n2**2, n3**2], [d]) == pytest.approx(bare, abs=1e-13)


def test_half_wave_layer_between_identical_media_is_transparent():
    # REFERENCES.md section 9.6 invariant (common optics result, Hecht 9.7.1)
    f0 = 1e9
    d = C0_M_S / f0 / (2 * np.sqrt(3.2))
    assert abs(reflection(f0, [1.5, 3.2, 1.5], [d])) < 1e-13


def test_perfect_conductor_exit():
    # a PEC reflects totally with r_TE = -1, r_TM = +1 and transmits nothing
    f = np.linspace(1e8, 2e9, 7)
    assert np.allclose(reflection(f, [1.0, np.inf], []), -1.0)
    assert np.allclose(reflection(f, [1.0, np.inf], [], 30.0, "TM"), 1.0)
    assert np.allclose(transmission(f, [1.0, 2.0, np.inf], [0.1]), 0.0)
    # a lossless layer over a PEC keeps |r| = 1 (all power comes back)
    assert np.allclose(np.abs(reflection(f, [1.0, 2.0, np.inf], [0.1], 20.0)), 1.0)


def _tmm_reference(pol, eps, d, angle_deg, freq_hz):
    n = [np.conj(np.sqrt(complex(e))) for e in eps]
    res = tmm.coh_tmm("s" if pol == "TE" else "p", n, [np.inf, *d, np.inf],
                      np.radians(angle_deg), C0_M_S / freq_hz)
    return np.conj(res["r"]), np.conj(res["t"]), res["T"]


@pytest.mark.parametrize("pol", ["TE", "TM"])
@pytest.mark.parametrize("angle", [0.0, 25.0, 55.0, 80.0])
def test_against_tmm_lossy_multilayer(pol, angle):
    # snow / wet layer / clothing-tissue-like lossy stack over wet soil, several frequencies
    eps = [1.0, 1.55 - 0.001j, 2.1 - 0.15j, 1.6 - 0.02j, 40.0 - 15.0j, 52.0 - 19.0j, 12.0 - 2.0j]
    d = [0.6, 0.12, 0.01, 0.002, 0.03]
    freqs = np.array([1e8, 4e8, 9e8, 1.7e9])
    r = reflection(freqs, eps, d, angle, pol)
    t = transmission(freqs, eps, d, angle, pol)
    tt = transmittance(freqs, eps, d, angle, pol)
    for i, f in enumerate(freqs):
        r_ref, t_ref, tt_ref = _tmm_reference(pol, eps, d, angle, f)
        assert abs(r[i] - r_ref) < 1e-9
        assert abs(t[i] - t_ref) < 1e-9
        assert abs(tt[i] - tt_ref) < 1e-9


def test_frequency_arrays_and_broadcasting():
    f = np.linspace(2e8, 2e9, 12).reshape(3, 4)
    eps_layer = 3.0 - 0.1j * (f / 1e9)  # dispersive layer given over frequency
    r = reflection(f, [1.0, eps_layer, 5.0], [0.2])
    assert r.shape == (3, 4)
    for idx in np.ndindex(f.shape):
        assert r[idx] == pytest.approx(reflection(f[idx], [1.0, eps_layer[idx], 5.0], [0.2]))


eps_strategy = st.tuples(st.floats(1.0, 60.0), st.floats(0.0, 20.0))


@settings(max_examples=60, deadline=None)
@given(
    layers=st.lists(st.tuples(st.floats(1.0, 60.0), st.floats(0.0, 20.0), st.floats(0.0, 0.5)),
                    min_size=0, max_size=6),
    exit_eps=eps_strategy,
    angle=st.floats(0.0, 85.0),
    pol=st.sampled_from(["TE", "TM"]),
    freq=st.floats(5e7, 3e9),
    lossless=st.booleans(),
)
def test_power_balance_property(layers, exit_eps, angle, pol, freq, lossless):
    # passivity (energy conservation): |r|^2 + T <= 1, equal when no medium absorbs
    eps = [1.0]
    d = []
    for er, ei, th in layers:
        eps.append(er - (0.0 if lossless else 1j * ei))
        d.append(th)
    eps.append(exit_eps[0] - (0.0 if lossless else 1j * exit_eps[1]))
    r = reflection(freq, eps, d, angle, pol)
    tt = transmittance(freq, eps, d, angle, pol)
    total = abs(r) ** 2 + tt
    if lossless:
        assert total == pytest.approx(1.0, abs=1e-9)
    else:
        assert total <= 1.0 + 1e-9
    assert tt >= -1e-12


@pytest.mark.parametrize(
    "kwargs, match",
    [
        (dict(freq_hz=-1e9), "freq_hz"),
        (dict(freq_hz=0.0), "freq_hz"),
        (dict(angle_deg=95.0), "angle_deg"),
        (dict(polarization="X"), "polarization"),
        (dict(thickness_m=[0.1, 0.2]), "thickness_m"),
        (dict(thickness_m=[-0.1]), "thickness_m"),
        (dict(permittivity=[1.0]), "permittivity"),
        (dict(permittivity=[1.0, np.inf, 3.0]), "perfect conductor"),
    ],
)
def test_bad_inputs_raise_clear_errors(kwargs, match):
    args = dict(freq_hz=1e9, permittivity=[1.0, 2.0, 3.0], thickness_m=[0.1], angle_deg=0.0,
                polarization="TE")
    args.update(kwargs)
    with pytest.raises(ValueError, match=match):
        reflection(**args)
