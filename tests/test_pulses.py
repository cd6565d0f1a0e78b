"""Pulse shapes: analytic spectra against the FFT of the sampled waveform, and shape facts."""

from __future__ import annotations

import math

import numpy as np
import pytest

from snowprobe_widgets import pulses
from snowprobe_widgets.pulses import make_pulse, pulse_names

SHAPES = ("ricker", "gaussian1", "gaussian2", "modulated_gaussian", "stepped_frequency")


def _fft_spectrum(p: pulses.Pulse, dt: float, n: int) -> tuple[np.ndarray, np.ndarray]:
    # waveform sampled symmetrically about t = 0, then S(f) ~ dt * sum w(t_k) e^{-j2pi f t_k}
    t = (np.arange(n) - n // 2) * dt
    w = p.waveform(t)
    f = np.fft.rfftfreq(n, dt)
    s = dt * np.fft.rfft(np.fft.ifftshift(w))
    return f, s


def test_registry_lists_the_built_in_shapes() -> None:
    assert set(SHAPES) <= set(pulse_names())


@pytest.mark.parametrize("shape", SHAPES)
def test_analytic_spectrum_matches_fft_of_waveform(shape: str) -> None:
    # Fourier pair check: the stated S(f) must be the transform of the stated w(t)
    # (convention w(t) = int S(f) e^{+j 2 pi f t} df, module docstring).
    p = make_pulse(shape, 500e6)
    f, s = _fft_spectrum(p, dt=5e-12, n=2**15)
    ref = p.spectrum(f)
    tol = 2e-3 if shape == "stepped_frequency" else 1e-9  # stepped: waveform is a quadrature
    assert np.max(np.abs(s - ref)) <= tol * np.max(np.abs(ref))


@pytest.mark.parametrize("shape", SHAPES)
def test_waveform_peak_is_one(shape: str) -> None:
    p = make_pulse(shape, 800e6)
    t = np.linspace(-10e-9, 10e-9, 40001)
    assert np.max(np.abs(p.waveform(t))) == pytest.approx(1.0, abs=1e-4)


def test_ricker_formula_and_peak_frequency() -> None:
    # Ricker (1953): r(t) = (1 - 2 pi^2 fp^2 t^2) exp(-pi^2 fp^2 t^2); amplitude spectrum
    # proportional to f^2 exp(-f^2/fp^2), which peaks at f = fp.
    fp = 1e9
    p = make_pulse("ricker", fp)
    t = np.array([0.0, 0.3e-9, -0.7e-9])
    a = (math.pi * fp * t) ** 2
    np.testing.assert_allclose(p.waveform(t), (1 - 2 * a) * np.exp(-a), rtol=0, atol=1e-15)
    f = np.linspace(1e6, 4e9, 40000)
    assert f[np.argmax(np.abs(p.spectrum(f)))] == pytest.approx(fp, rel=1e-3)


@pytest.mark.parametrize("shape", ("gaussian1", "gaussian2"))
def test_gaussian_derivative_spectrum_peaks_at_centre(shape: str) -> None:
    fc = 700e6
    p = make_pulse(shape, fc)
    f = np.linspace(1e6, 4e9, 40000)
    assert f[np.argmax(np.abs(p.spectrum(f)))] == pytest.approx(fc, rel=1e-3)


def test_gaussian2_is_ricker_with_same_peak() -> None:
    # the Ricker wavelet is the normalised second Gaussian derivative (Ricker 1953)
    t = np.linspace(-3e-9, 3e-9, 101)
    np.testing.assert_allclose(make_pulse("gaussian2", 1e9).waveform(t),
                               make_pulse("ricker", 1e9).waveform(t), atol=1e-12)


def test_modulated_gaussian_bandwidth_is_minus_6_db_width() -> None:
    p = make_pulse("modulated_gaussian", 1e9, 400e6)
    f = np.linspace(0.5e9, 1.5e9, 200001)
    s = np.abs(p.spectrum(f))
    above = f[s >= 0.5 * s.max()]
    assert above[-1] - above[0] == pytest.approx(400e6, rel=1e-3)


def test_stepped_frequency_band_and_ambiguity() -> None:
    p = make_pulse("stepped_frequency", 1e9, 1e9, n_steps=201, window="hann")
    assert p.band_edges_hz == pytest.approx((0.5e9, 1.5e9))
    assert p.step_hz == pytest.approx(5e6)
    # a stepped sweep with step df is unambiguous over 1/df (common practice)
    assert p.unambiguous_time_s == pytest.approx(200e-9)
    assert np.all(p.spectrum(np.array([0.4e9, 1.6e9])) == 0)


def test_band_covers_the_spectrum() -> None:
    p = make_pulse("ricker", 1e9)
    lo, hi = p.band_hz(1e-3)
    s_peak = np.abs(p.spectrum(1e9))
    assert np.abs(p.spectrum(hi * 1.01)) < 1e-3 * s_peak
    assert np.abs(p.spectrum(hi * 0.99)) > 1e-3 * s_peak
    assert lo < 0.1e9


@pytest.mark.parametrize(
    ("call", "field"),
    [
        (lambda: make_pulse("ricker", -1e9), "center_frequency_hz"),
        (lambda: make_pulse("ricker", 0.0), "center_frequency_hz"),
        (lambda: make_pulse("modulated_gaussian", 1e9, -5.0), "bandwidth_hz"),
        (lambda: make_pulse("stepped_frequency", 1e9, 1e9, n_steps=2), "n_steps"),
        (lambda: make_pulse("stepped_frequency", 1e9, window="triangle"), "window"),
        (lambda: make_pulse("square_wave", 1e9), "square_wave"),
    ],
)
def test_bad_inputs_name_the_field(call, field: str) -> None:
    with pytest.raises(ValueError, match=field):
        call()


# ------------------------------------------------------------- a pulse from a spectrum function
def _ricker_spectrum_unscaled(freq_hz, center_frequency_hz, bandwidth_hz, gain=3.0):
    # Ricker (1953): the spectrum of his wavelet is ~ f^2 exp(-f^2 / fp^2); any scale
    # (here `gain`) must be removed by the package, which makes the waveform's peak 1
    return gain * freq_hz**2 * np.exp(-(freq_hz**2) / center_frequency_hz**2)


@pytest.fixture
def spectra():
    """Registers test spectra and takes them out again (other tests walk the pulse names)."""
    before = set(pulses.SPECTRA.names())
    yield pulses.register_spectrum
    for name in set(pulses.SPECTRA.names()) - before:
        pulses.SPECTRA._items.pop(name)


def test_a_pulse_given_only_by_its_spectrum_has_the_published_waveform(spectra) -> None:
    spectra("test_ricker_spectrum", _ricker_spectrum_unscaled)
    assert "test_ricker_spectrum" in pulses.pulse_names()
    fp = 400e6
    p = pulses.make_pulse("test_ricker_spectrum", fp, gain=7.0)
    t = np.linspace(-6e-9, 6e-9, 2401)
    # Ricker (1953) in time: (1 - 2 pi^2 fp^2 t^2) exp(-pi^2 fp^2 t^2), peak 1 at t = 0;
    # 2e-3: linear reading of the inverse-FFT table at 16 samples per top-frequency period
    a = (np.pi * fp * t) ** 2
    np.testing.assert_allclose(p.waveform(t), (1 - 2 * a) * np.exp(-a), atol=2e-3)
    # the -6 dB width of the Ricker amplitude spectrum is 1.155 fp (closed form: the
    # roots of x exp(1 - x) = 1/2 with x = f^2 / fp^2, solved here with scipy)
    from scipy.optimize import brentq

    lo = brentq(lambda x: x * np.exp(1 - x) - 0.5, 1e-6, 1.0)
    hi = brentq(lambda x: x * np.exp(1 - x) - 0.5, 1.0, 10.0)
    assert p.bandwidth_hz == pytest.approx(fp * (np.sqrt(hi) - np.sqrt(lo)), rel=2e-3)
    # a real waveform: S(-f) = conj S(f)
    f = np.linspace(0.1e9, 2e9, 7)
    np.testing.assert_allclose(p.spectrum(-f), np.conj(p.spectrum(f)))
    # the waveform is the inverse transform of the scaled spectrum, by direct quadrature
    ff = np.linspace(0.0, 6 * fp, 20001)
    direct = 2 * np.real(np.exp(2j * np.pi * np.outer([0.0, 1e-9], ff)) @ p.spectrum(ff)) * (
        ff[1] - ff[0])
    np.testing.assert_allclose(direct, p.waveform(np.array([0.0, 1e-9])), atol=2e-3)


def test_a_spectrum_pulse_refuses_unknown_parameters_and_bad_spectra(spectra) -> None:
    spectra("test_ricker_spectrum", _ricker_spectrum_unscaled)
    with pytest.raises(ValueError, match="has no parameter 'loudness'; its parameters: gain"):
        pulses.make_pulse("test_ricker_spectrum", 400e6, loudness=2.0)
    spectra("test_wrong_shape", lambda f, fc, bw: np.ones(3))
    with pytest.raises(ValueError, match="must return finite values"):
        pulses.make_pulse("test_wrong_shape", 400e6)
    with pytest.raises(ValueError, match="unknown pulse shape 'nope'; known: .*'ricker'"):
        pulses.make_pulse("nope", 400e6)


# ---- a pulse's own parameters, set from a scenario (Radar.pulse_parameters)
def test_pulse_parameters_lists_a_shapes_own_settings() -> None:
    from snowprobe_widgets.pulses import pulse_parameters

    assert pulse_parameters("stepped_frequency") == {"n_steps": 256, "window": "hann"}
    assert pulse_parameters("ricker") == {}
    with pytest.raises(ValueError, match="unknown pulse shape"):
        pulse_parameters("no_such_pulse")


def test_a_radar_passes_its_pulse_parameters_to_the_pulse() -> None:
    import dataclasses

    from snowprobe_widgets.scene import Radar

    r = Radar(pulse="stepped_frequency", pulse_parameters={"window": "hamming", "n_steps": 64})
    assert r.pulse_parameters == (("n_steps", 64), ("window", "hamming"))  # sorted pairs
    p = r.make_pulse()
    assert (p.n_steps, p.window) == (64, "hamming")
    # a stepped sweep of N steps over B repeats after N / B (its unambiguous time)
    assert p.unambiguous_time_s == pytest.approx(64 / p.bandwidth_hz, rel=0.05)
    assert Radar(pulse="stepped_frequency") == dataclasses.replace(r, pulse_parameters=())


@pytest.mark.parametrize(("params", "words"), [
    ({"n_step": 64}, "has no setting n_step; it takes: n_steps (default 256)"),
    ({"n_steps": 3}, "n_steps = 3 is outside the allowed range"),
    ({"window": "kaiser"}, "window = 'kaiser' is not one of"),
    ({"n_steps": float("nan")}, "write name = value pairs"),
    ({"2x": 1}, "write name = value pairs"),
])
def test_bad_pulse_parameters_are_refused_naming_the_field(params, words) -> None:
    from snowprobe_widgets.fields import FieldError
    from snowprobe_widgets.scene import Radar

    with pytest.raises(FieldError) as err:
        Radar(pulse="stepped_frequency", pulse_parameters=params)
    assert err.value.field.name == "pulse_parameters"
    assert words in err.value.screen


def test_screen_form_of_pulse_parameters_reads_back() -> None:
    from snowprobe_widgets.fields import FieldError, format_parameters, parse_parameters

    pairs = parse_parameters(" n_steps = 512 , window = hamming, loud = true, gain = 0.5")
    assert pairs == (("gain", 0.5), ("loud", True), ("n_steps", 512), ("window", "hamming"))
    assert parse_parameters(format_parameters(pairs)) == pairs
    assert parse_parameters("") == ()
    with pytest.raises(FieldError, match="not name = value"):
        parse_parameters("n_steps 512")


def test_a_pulse_parameter_must_have_its_defaults_type() -> None:
    from snowprobe_widgets.fields import FieldError
    from snowprobe_widgets.scene import Radar

    for bad, words in (({"n_steps": "abc"}, "n_steps takes a whole number (default 256)"),
                       ({"n_steps": 300.5}, "n_steps takes a whole number"),
                       ({"window": 3}, "window takes a word (default 'hann')")):
        with pytest.raises(FieldError) as err:
            Radar(pulse="stepped_frequency", pulse_parameters=bad)
        assert words in err.value.screen
