"""Tests of snowprobe_widgets.processing.dsp against scipy.signal (the reference library).

scipy.signal designs the Butterworth band-pass by the same published route (analog
prototype, band-pass substitution, bilinear transform with pre-warping) but pairs poles and
zeros into sections its own way, so the sections are compared through their frequency
response and their poles and zeros; the filtering and the analytic signal are compared
sample by sample.

Tolerances: frequency responses within 1e-10 (the gain is at most 1); zero-phase outputs
within 1e-8 of the largest input sample (1,500 random cases reached 3.6e-12 of the largest
output sample when the suite was written: the two differ by rounding in sections of
different pairing, amplified by poles near the unit circle); analytic signals within
1e-12 of the largest sample.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import signal

from snowprobe_widgets.processing.dsp import analytic_signal, butter_bandpass_sos, sos_filtfilt


@st.composite
def bands(draw: st.DrawFn) -> tuple[int, float, float, float]:
    """Order 1 to 10, sampling 0.5 to 50 GHz, edges from 1e-3 to 0.999 of Nyquist at least
    5e-3 of Nyquist apart (narrower bands at the bottom are ill-conditioned in any
    second-order-section design)."""
    order = draw(st.integers(1, 10))
    fs = draw(st.floats(0.5e9, 50e9))
    lo = draw(st.floats(1e-3, 0.99))
    hi = draw(st.floats(lo + 5e-3, 0.999)) if lo + 5e-3 < 0.999 else 0.999
    return order, lo * 0.5 * fs, hi * 0.5 * fs, fs


def _response(sos: np.ndarray) -> np.ndarray:
    return signal.sosfreqz(sos, worN=2048)[1]


@pytest.mark.filterwarnings("ignore::scipy.signal.BadCoefficients")  # sos2zpk's own
@settings(max_examples=150, deadline=None)
@given(bands())
def test_butter_bandpass_matches_scipy_response_and_roots(band: tuple) -> None:
    order, lo, hi, fs = band
    ref = signal.butter(order, [lo, hi], btype="bandpass", fs=fs, output="sos")
    mine = butter_bandpass_sos(order, lo, hi, fs)
    assert mine.shape == (order, 6)
    np.testing.assert_allclose(mine[:, 3], 1.0)
    np.testing.assert_allclose(_response(mine), _response(ref), rtol=0, atol=1e-10)
    z_ref, p_ref, k_ref = signal.sos2zpk(ref)
    z, p, k = signal.sos2zpk(mine)
    np.testing.assert_allclose(np.sort_complex(p), np.sort_complex(p_ref), atol=1e-9)
    np.testing.assert_allclose(np.sort(z.real), np.sort(z_ref.real), atol=1e-6)
    assert k == pytest.approx(k_ref, rel=1e-9)


@settings(max_examples=150, deadline=None)
@given(bands(), st.integers(2, 1500), st.integers(1, 4), st.data())
def test_sos_filtfilt_matches_scipy(band: tuple, n: int, traces: int,
                                    data: st.DataObject) -> None:
    order, lo, hi, fs = band
    padlen = data.draw(st.integers(0, n - 1))
    rng = np.random.default_rng(n * 31 + traces)
    x = rng.standard_normal((n, traces)) + rng.uniform(-3.0, 3.0)  # with an offset
    ref_sos = signal.butter(order, [lo, hi], btype="bandpass", fs=fs, output="sos")
    expected = signal.sosfiltfilt(ref_sos, x, axis=0, padlen=padlen)
    got = sos_filtfilt(butter_bandpass_sos(order, lo, hi, fs), x, padlen=padlen)
    np.testing.assert_allclose(got, expected, rtol=0, atol=1e-8 * np.abs(x).max())


def test_sos_filtfilt_default_padding_and_shapes_follow_scipy() -> None:
    sos = signal.butter(4, [0.1, 0.3], btype="bandpass", output="sos")
    rng = np.random.default_rng(3)
    for shape in [(200,), (200, 3), (200, 2, 3)]:
        x = rng.standard_normal(shape)
        expected = signal.sosfiltfilt(sos, x, axis=0)
        got = sos_filtfilt(sos, x)
        assert got.shape == x.shape
        np.testing.assert_allclose(got, expected, rtol=0, atol=1e-10)


def test_sos_filtfilt_accepts_any_sections() -> None:
    """Not only band-passes: a low-pass (gain 1 at zero frequency, so the steady start
    matters) and a high-pass from scipy."""
    rng = np.random.default_rng(4)
    x = rng.standard_normal((300, 2)) + 5.0
    for sos in (signal.butter(5, 0.2, output="sos"),
                signal.butter(3, 0.05, btype="highpass", output="sos")):
        np.testing.assert_allclose(sos_filtfilt(sos, x), signal.sosfiltfilt(sos, x, axis=0),
                                   rtol=0, atol=1e-10)


@pytest.mark.parametrize("n", [1, 2, 7, 64, 511])
def test_analytic_signal_matches_scipy_hilbert(n: int) -> None:
    x = np.random.default_rng(n).standard_normal((n, 3))
    np.testing.assert_allclose(analytic_signal(x, axis=0), signal.hilbert(x, axis=0),
                               rtol=0, atol=1e-12 * max(np.abs(x).max(), 1.0))
    np.testing.assert_allclose(analytic_signal(x.T, axis=1), signal.hilbert(x.T, axis=1),
                               rtol=0, atol=1e-12 * max(np.abs(x).max(), 1.0))


def test_analytic_signal_of_a_cosine_is_the_complex_exponential() -> None:
    # the Hilbert transform of cos is sin (for a whole number of periods)
    t = np.arange(256)
    z = analytic_signal(np.cos(2 * np.pi * 8 * t / 256))
    np.testing.assert_allclose(z, np.exp(2j * np.pi * 8 * t / 256), atol=1e-12)


@pytest.mark.parametrize("args, words", [
    ((0, 1e8, 2e8, 1e9), "order"),
    ((4, 2e8, 1e8, 1e9), "band"),
    ((4, 1e8, 5e8, 1e9), "half the sampling rate"),
    ((4, 0.0, 2e8, 1e9), "band"),
])
def test_butter_bandpass_refuses_bad_settings(args: tuple, words: str) -> None:
    with pytest.raises(ValueError, match=words):
        butter_bandpass_sos(*args)


def test_sos_filtfilt_refuses_bad_input() -> None:
    sos = butter_bandpass_sos(2, 1e8, 2e8, 1e9)
    with pytest.raises(ValueError, match="padlen"):
        sos_filtfilt(sos, np.zeros(10), padlen=10)
    with pytest.raises(ValueError, match="at least 2 samples"):
        sos_filtfilt(sos, np.zeros(1))
    with pytest.raises(ValueError, match="shape"):
        sos_filtfilt(sos[:, :5], np.zeros(10))
