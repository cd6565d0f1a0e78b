"""Radar pulse shapes with analytic spectra, in a registry keyed by name.

Spectrum convention: ``waveform(t) = integral S(f) exp(+j 2 pi f t) df`` over all f (two-sided),
with every pulse zero-phase about t = 0 (an echo delayed by tau is
``S(f) exp(-j 2 pi f tau)``) and waveform peak |w| = 1. Plugins add shapes through the
entry-point group ``snowprobe_widgets.pulses``: the entry point's name is the key and its
object a factory ``factory(center_frequency_hz, bandwidth_hz=None, **options) -> Pulse``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property, lru_cache

import numpy as np

from ._validate import check_choice, check_range
from .registry import Registry

__all__ = ["Pulse", "PULSES", "make_pulse", "pulse_names"]

PULSES = Registry("snowprobe_widgets.pulses", "pulse shape")

_WINDOWS = ("hann", "hamming", "rectangular")


@dataclass(frozen=True)
class Pulse:
    """A pulse shape with an analytic spectrum.

    Attributes
    ----------
    name : str
        Registry key ("ricker", ...).
    center_frequency_hz : float
        Peak (Ricker, Gaussian derivatives) or carrier (modulated, stepped) frequency, Hz.
    bandwidth_hz : float
        -6 dB full bandwidth of the amplitude spectrum where the shape has one, else the
        natural -6 dB width of the shape, Hz.
    n_steps : int
        Number of frequency steps (stepped-frequency sweep only; 0 otherwise).
    window : str
        Spectral window of a stepped-frequency sweep ("hann", "hamming", "rectangular").
    """

    name: str
    center_frequency_hz: float
    bandwidth_hz: float
    n_steps: int = 0
    window: str = ""

    # -------------------------------------------------------------- analytic forms
    @property
    def _tau(self) -> float:
        fc = self.center_frequency_hz
        if self.name == "gaussian1":
            return 1.0 / (2 * math.pi * fc)
        return math.sqrt(2.0) / (2 * math.pi * fc)  # ricker / gaussian2: peak at fc

    @property
    def _sigma(self) -> float:
        # modulated Gaussian: envelope exp(-2 pi^2 s^2 (f - fc)^2) = 1/2 at f - fc = B/2
        return math.sqrt(2.0 * math.log(2.0)) / (math.pi * self.bandwidth_hz)

    @property
    def band_edges_hz(self) -> tuple[float, float]:
        """Swept band [f_start, f_stop] of a stepped-frequency pulse, Hz."""
        half = self.bandwidth_hz / 2.0
        return self.center_frequency_hz - half, self.center_frequency_hz + half

    @property
    def step_hz(self) -> float:
        """Frequency step of a stepped sweep, Hz (0 for other pulses)."""
        if not self.n_steps:
            return 0.0
        return self.bandwidth_hz / (self.n_steps - 1)

    @property
    def unambiguous_time_s(self) -> float:
        """Longest two-way time a stepped sweep resolves without aliasing, 1/step (s)."""
        return math.inf if not self.n_steps else 1.0 / self.step_hz

    def _window(self, x: np.ndarray) -> np.ndarray:
        # x in [0, 1] across the band
        if self.window == "hann":
            return 0.5 - 0.5 * np.cos(2 * np.pi * x)
        if self.window == "hamming":
            return 0.54 - 0.46 * np.cos(2 * np.pi * x)
        return np.ones_like(x)

    @cached_property
    def _stepped_norm(self) -> float:
        # peak of the two-sided inverse transform = 2 * integral of the window over the band
        x = np.linspace(0.0, 1.0, 4001)
        return 2.0 * float(np.trapezoid(self._window(x), x)) * self.bandwidth_hz

    def spectrum(self, freq_hz: object) -> np.ndarray:
        """Analytic two-sided spectrum S(f), complex, same shape as ``freq_hz`` (any real f)."""
        f = np.asarray(freq_hz, dtype=float)
        fa = np.abs(f)
        if self.name == "ricker":
            # Ricker (1953); transform of (1 - 2 pi^2 fp^2 t^2) exp(-pi^2 fp^2 t^2)
            fp = self.center_frequency_hz
            return (2 / math.sqrt(math.pi) * f**2 / fp**3 * np.exp(-(f**2) / fp**2)).astype(complex)
        if self.name == "gaussian1":
            t = self._tau
            g = t * math.sqrt(2 * math.pi) * np.exp(-2 * math.pi**2 * f**2 * t**2)
            return math.sqrt(math.e) * t * 2j * math.pi * f * g
        if self.name == "gaussian2":
            t = self._tau
            g = t * math.sqrt(2 * math.pi) * np.exp(-2 * math.pi**2 * f**2 * t**2)
            return (t**2 * 4 * math.pi**2 * f**2 * g).astype(complex)
        if self.name == "modulated_gaussian":
            s = self._sigma
            fc = self.center_frequency_hz
            a = s * math.sqrt(2 * math.pi) / 2
            env = np.exp(-2 * math.pi**2 * s**2 * (f - fc) ** 2)
            env += np.exp(-2 * math.pi**2 * s**2 * (f + fc) ** 2)
            return (a * env).astype(complex)
        if self.name == "stepped_frequency":
            lo, hi = self.band_edges_hz
            x = (fa - lo) / (hi - lo)
            inside = (x >= 0) & (x <= 1)
            return np.where(inside, self._window(np.clip(x, 0, 1)), 0.0).astype(complex) / (
                self._stepped_norm
            )
        raise ValueError(f"pulse {self.name!r} has no built-in spectrum")

    def waveform(self, time_s: object) -> np.ndarray:
        """The pulse in time (peak 1, centred on t = 0), float, same shape as ``time_s``."""
        t = np.asarray(time_s, dtype=float)
        if self.name == "ricker":
            a = (math.pi * self.center_frequency_hz * t) ** 2
            return (1 - 2 * a) * np.exp(-a)
        if self.name == "gaussian1":
            u = t / self._tau
            return -u * math.sqrt(math.e) * np.exp(-(u**2) / 2)
        if self.name == "gaussian2":
            u = t / self._tau
            return (1 - u**2) * np.exp(-(u**2) / 2)
        if self.name == "modulated_gaussian":
            s = self._sigma
            return np.exp(-(t**2) / (2 * s**2)) * np.cos(2 * math.pi * self.center_frequency_hz * t)
        # stepped frequency: the synthetic pulse, inverse transform of the windowed band
        lo, hi = self.band_edges_hz
        ff = np.linspace(lo, hi, 801)
        w = self._window((ff - lo) / (hi - lo))
        weights = w * np.gradient(ff)
        out = 2 * np.cos(2 * math.pi * np.multiply.outer(t, ff)) @ weights
        return out / self._stepped_norm

    def band_hz(self, level: float = 1e-6) -> tuple[float, float]:
        """Positive-frequency band where |S| exceeds ``level`` times its peak, Hz."""
        return _band(self, level)


@lru_cache(maxsize=256)
def _band(pulse: Pulse, level: float) -> tuple[float, float]:
    # a fine scan of the analytic spectrum, cached: pulses are frozen values
    fmax = 12.0 * pulse.center_frequency_hz + 2 * pulse.bandwidth_hz
    f = np.linspace(0.0, fmax, 24001)
    s = np.abs(pulse.spectrum(f))
    keep = np.nonzero(s > level * s.max())[0]
    return float(f[keep[0]]), float(f[keep[-1]])


def _check_fc(center_frequency_hz: float) -> float:
    return check_range("center_frequency_hz", center_frequency_hz, 10e6, 6e9, unit="Hz")


def _natural(name: str, fc: float) -> float:
    p = Pulse(name, fc, 1.0)
    f = np.linspace(0, 6 * fc, 60001)
    s = np.abs(p.spectrum(f))
    above = f[s >= 0.5 * s.max()]
    return float(above[-1] - above[0])


@PULSES.register("ricker")
def ricker(center_frequency_hz: float, bandwidth_hz: float | None = None) -> Pulse:
    """Ricker wavelet (Ricker 1953) with peak frequency ``center_frequency_hz``.

    The bandwidth is fixed by the shape (-6 dB width 1.155 f_p); ``bandwidth_hz`` is ignored.
    """
    fc = _check_fc(center_frequency_hz)
    return Pulse("ricker", fc, 1.1549 * fc)


@PULSES.register("gaussian1")
def gaussian1(center_frequency_hz: float, bandwidth_hz: float | None = None) -> Pulse:
    """First Gaussian derivative (monocycle), spectrum peak at 1/(2 pi tau) = fc."""
    fc = _check_fc(center_frequency_hz)
    return Pulse("gaussian1", fc, _natural("gaussian1", fc))


@PULSES.register("gaussian2")
def gaussian2(center_frequency_hz: float, bandwidth_hz: float | None = None) -> Pulse:
    """Second Gaussian derivative (1 - t^2/tau^2) exp(-t^2 / 2 tau^2), peak at sqrt(2)/(2 pi tau).

    With the spectrum peak placed at ``center_frequency_hz`` it coincides with the Ricker
    wavelet of that peak frequency (tau = 1/(sqrt 2 pi f_p)); it is kept as its own entry for
    users who think of it as a Gaussian derivative.
    """
    fc = _check_fc(center_frequency_hz)
    return Pulse("gaussian2", fc, _natural("gaussian2", fc))


@PULSES.register("modulated_gaussian")
def modulated_gaussian(center_frequency_hz: float, bandwidth_hz: float | None = None) -> Pulse:
    """Gaussian-enveloped carrier; ``bandwidth_hz`` is the -6 dB width (default fc)."""
    fc = _check_fc(center_frequency_hz)
    b = fc if bandwidth_hz is None else check_range(
        "bandwidth_hz", bandwidth_hz, 0.05 * fc, 1.5 * fc, unit="Hz")
    return Pulse("modulated_gaussian", fc, b)


@PULSES.register("stepped_frequency")
def stepped_frequency(center_frequency_hz: float, bandwidth_hz: float | None = None, *,
                      n_steps: int = 256, window: str = "hann") -> Pulse:
    """Stepped-frequency sweep over fc +- B/2 with ``n_steps`` steps and a spectral window.

    The synthetic pulse is the inverse transform of the windowed band; echoes later than
    1/step alias (see :attr:`Pulse.unambiguous_time_s`).
    """
    fc = _check_fc(center_frequency_hz)
    b = 1.5 * fc if bandwidth_hz is None else check_range(
        "bandwidth_hz", bandwidth_hz, 0.05 * fc, 1.9 * fc, unit="Hz")
    n = int(check_range("n_steps", n_steps, 8, 100_000))
    check_choice("window", window, _WINDOWS)
    return Pulse("stepped_frequency", fc, b, n_steps=n, window=window)


def make_pulse(shape: str, center_frequency_hz: float, bandwidth_hz: float | None = None,
               **options: object) -> Pulse:
    """Build the pulse registered as ``shape`` (see :func:`pulse_names`)."""
    return PULSES.get(shape)(center_frequency_hz, bandwidth_hz, **options)


def pulse_names() -> tuple[str, ...]:
    """Registered pulse shapes, for dropdowns."""
    return PULSES.names()
