"""Radar pulse shapes with analytic spectra, in a registry keyed by name.

Spectrum convention: ``waveform(t) = integral S(f) exp(+j 2 pi f t) df`` over all f (two-sided),
with every pulse zero-phase about t = 0 (an echo delayed by tau is
``S(f) exp(-j 2 pi f tau)``) and waveform peak |w| = 1. Plugins add shapes in two ways:

* **a spectrum function** (all a new pulse needs), in the entry-point group
  ``snowprobe_widgets.pulse_spectra`` or with :func:`register_spectrum`:
  ``spectrum(freq_hz, center_frequency_hz, bandwidth_hz, **params) -> complex ndarray``,
  called with an array of frequencies >= 0 (Hz), the radar's centre frequency and its
  bandwidth (None: the shape's own), returning the pulse's spectrum there (same shape),
  zero-phase about t = 0 (an echo's delay is added by the model). Keyword parameters with
  defaults are the pulse's own parameters (``make_pulse(name, fc, **params)``). The package
  takes the negative frequencies as the complex conjugate (a real waveform), scales the
  spectrum so that the waveform's peak is 1, computes the waveform by an inverse FFT, and
  measures the -6 dB bandwidth when none is given;
* a factory, in the group ``snowprobe_widgets.pulses``:
  ``factory(center_frequency_hz, bandwidth_hz=None, **options) -> Pulse``.

The entry point's name is the pulse's name (what a scenario's ``radar.pulse`` holds).
"""

from __future__ import annotations

import inspect
import math
from collections.abc import Callable
from dataclasses import dataclass, field
from functools import cached_property, lru_cache
from typing import Any

import numpy as np

from ._validate import check_choice, check_range
from .registry import Registry

__all__ = ["Pulse", "PULSES", "SPECTRA", "make_pulse", "pulse_names", "pulse_parameters",
           "register_spectrum", "spectrum_pulse"]

PULSES = Registry("snowprobe_widgets.pulses", "pulse shape")
#: Pulse spectra of plugins, ``spectrum(freq_hz, center_frequency_hz, bandwidth_hz,
#: **params) -> complex ndarray`` (see the module notes); entry-point group
#: ``snowprobe_widgets.pulse_spectra``.
SPECTRA = Registry("snowprobe_widgets.pulse_spectra", "pulse spectrum")

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
    spectrum_function : callable or None
        A plugin's spectrum function (:data:`SPECTRA`); None for the built-in shapes.
    options : tuple of (str, object)
        The plugin spectrum's own parameters, passed to it as keywords.
    measured_bandwidth : bool
        Plugin pulses: the radar gave no bandwidth, so the spectrum function gets None and
        ``bandwidth_hz`` is the measured -6 dB width of its spectrum.
    """

    name: str
    center_frequency_hz: float
    bandwidth_hz: float
    n_steps: int = 0
    window: str = ""
    spectrum_function: Callable[..., Any] | None = field(default=None, repr=False)
    options: tuple[tuple[str, Any], ...] = ()
    measured_bandwidth: bool = False

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

    # -------------------------------------------------------------- plugin spectra
    def _plugin_raw(self, fa: np.ndarray) -> np.ndarray:
        """The plugin function's spectrum at frequencies ``fa`` >= 0, unscaled."""
        assert self.spectrum_function is not None
        bandwidth = None if self.measured_bandwidth else self.bandwidth_hz
        out = np.asarray(self.spectrum_function(fa, self.center_frequency_hz, bandwidth,
                                                **dict(self.options)), dtype=complex)
        if out.shape != fa.shape or not np.all(np.isfinite(out)):
            raise ValueError(f"pulse {self.name!r}: its spectrum function must return finite "
                             f"values of the frequencies' shape {fa.shape}, got shape "
                             f"{out.shape}")
        return out

    @cached_property
    def _plugin_table(self) -> tuple[np.ndarray, np.ndarray, float]:
        """(times s, raw waveform, scale making its peak 1) by an inverse FFT of the
        plugin spectrum up to where it has fallen below 1e-6 of its peak."""
        f_top = _plugin_top_hz(self)
        n = _TABLE_SAMPLES
        dt = 1.0 / (16.0 * f_top)  # eight times the Nyquist rate: linear reading is exact
        # to about 1e-3 of the peak
        freq = np.fft.rfftfreq(n, dt)
        spec = np.where(freq <= f_top, self._plugin_raw(freq), 0.0)
        # w(t) = 2 Re sum S(f_k) exp(j 2 pi f_k t) df, with df = 1 / (n dt)
        w = np.fft.fftshift(np.fft.irfft(spec, n)) / dt
        t = (np.arange(n) - n // 2) * dt
        peak = float(np.max(np.abs(w)))
        if not peak > 0.0:
            raise ValueError(f"pulse {self.name!r}: its spectrum is zero everywhere")
        return t, w, 1.0 / peak

    def spectrum(self, freq_hz: object) -> np.ndarray:
        """Analytic two-sided spectrum S(f), complex, same shape as ``freq_hz`` (any real f)."""
        f = np.asarray(freq_hz, dtype=float)
        fa = np.abs(f)
        if self.spectrum_function is not None:
            s = self._plugin_raw(fa) * self._plugin_table[2]
            return np.where(f < 0, np.conj(s), s)
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
        if self.spectrum_function is not None:
            tt, w, scale = self._plugin_table
            return np.interp(t, tt, w * scale, left=0.0, right=0.0)
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


#: Samples of the inverse FFT giving a plugin pulse's waveform (at sixteen samples per
#: period of its top frequency the table spans 4096 periods: far longer than any pulse).
_TABLE_SAMPLES = 65536


@lru_cache(maxsize=256)
def _plugin_top_hz(pulse: Pulse) -> float:
    """Highest frequency where a plugin spectrum exceeds 1e-6 of its peak (scan to 20 fc)."""
    f = np.linspace(0.0, 20.0 * pulse.center_frequency_hz, 20001)
    s = np.abs(pulse._plugin_raw(f))
    if not s.max() > 0.0:
        raise ValueError(f"pulse {pulse.name!r}: its spectrum is zero from 0 to 20 times "
                         "the centre frequency")
    keep = np.nonzero(s > 1e-6 * s.max())[0]
    return float(f[min(keep[-1] + 1, f.size - 1)])


def register_spectrum(name: str, spectrum: Callable[..., Any] | None = None) -> Any:
    """Register a pulse by its spectrum function (usable as a decorator); see the module
    notes for the protocol. Plugins may instead declare an entry point in the group
    ``snowprobe_widgets.pulse_spectra``."""
    if name in PULSES:
        raise ValueError(f"pulse shape {name!r} is already registered")
    return SPECTRA.register(name, spectrum)


def spectrum_pulse(name: str, center_frequency_hz: float, bandwidth_hz: float | None = None,
                   **params: Any) -> Pulse:
    """The pulse of the spectrum function registered as ``name`` (:data:`SPECTRA`).

    ``params`` are the function's own keyword parameters (numbers, strings, booleans);
    the bandwidth, when not given, is the measured -6 dB width of the spectrum.
    """
    func = SPECTRA.get(name)
    fc = _check_fc(center_frequency_hz)
    bw = None if bandwidth_hz is None else check_range(
        "bandwidth_hz", bandwidth_hz, 0.0, 4.0 * fc, unit="Hz", low_open=True)
    accepted = {p.name for p in list(inspect.signature(func).parameters.values())[3:]
                if p.default is not p.empty}
    for key, value in params.items():
        if key not in accepted:
            raise ValueError(f"pulse {name!r} has no parameter {key!r}; its parameters: "
                             f"{', '.join(sorted(accepted)) or 'none'}")
        if not isinstance(value, (int, float, str, bool)):
            raise ValueError(f"pulse {name!r}: parameter {key} = {value!r} must be a number, "
                             "string or bool")
    return _spectrum_pulse(name, func, fc, bw, tuple(sorted(params.items())))


@lru_cache(maxsize=64)
def _spectrum_pulse(name: str, func: Callable[..., Any], fc: float, bw: float | None,
                    options: tuple[tuple[str, Any], ...]) -> Pulse:
    # one Pulse per setting, so that its waveform table is computed once (a radar asks
    # for its pulse on every update)
    if bw is not None:
        return Pulse(name, fc, bw, spectrum_function=func, options=options)
    probe = Pulse(name, fc, fc, spectrum_function=func, options=options,
                  measured_bandwidth=True)
    f = np.linspace(0.0, _plugin_top_hz(probe), 20001)
    s = np.abs(probe._plugin_raw(f))
    above = f[s >= 0.5 * s.max()]
    width = float(above[-1] - above[0]) or float(f[1])
    return Pulse(name, fc, width, spectrum_function=func, options=options,
                 measured_bandwidth=True)


def make_pulse(shape: str, center_frequency_hz: float, bandwidth_hz: float | None = None,
               **options: object) -> Pulse:
    """Build the pulse registered as ``shape`` (see :func:`pulse_names`): a factory of
    :data:`PULSES` or a spectrum function of :data:`SPECTRA`."""
    if shape not in PULSES and shape in SPECTRA:
        return spectrum_pulse(shape, center_frequency_hz, bandwidth_hz, **options)
    if shape not in PULSES:
        raise ValueError(f"unknown pulse shape {shape!r}; known: "
                         f"{', '.join(repr(n) for n in pulse_names())}")
    return PULSES.get(shape)(center_frequency_hz, bandwidth_hz, **options)


def pulse_parameters(shape: str) -> dict[str, Any]:
    """The pulse shape's own parameters and their defaults (what a radar's
    ``pulse_parameters`` may set): a factory's keyword parameters after the centre frequency
    and bandwidth, or a spectrum function's after its first three arguments.

    Raises
    ------
    ValueError
        For a shape that is not registered.
    """
    if shape in PULSES:
        func, skip = PULSES.get(shape), 2
    elif shape in SPECTRA:
        func, skip = SPECTRA.get(shape), 3
    else:
        raise ValueError(f"unknown pulse shape {shape!r}; known: "
                         f"{', '.join(repr(n) for n in pulse_names())}")
    params = list(inspect.signature(func).parameters.values())[skip:]
    return {p.name: p.default for p in params
            if p.default is not p.empty and p.kind not in (p.VAR_POSITIONAL, p.VAR_KEYWORD)}


def pulse_names() -> tuple[str, ...]:
    """Registered pulse shapes (factories and spectrum functions), for dropdowns."""
    return tuple(sorted(set(PULSES.names()) | set(SPECTRA.names())))
