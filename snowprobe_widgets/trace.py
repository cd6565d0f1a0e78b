"""One radar trace over a horizontally layered column, computed in the frequency domain.

Scene: a monostatic antenna at height h above the snow surface, horizontal layers of
thickness d_i and complex index n_i, over a half-space ground. t = 0 is the instant the
pulse (zero-phase, centred on t = 0) leaves the antenna, so the surface echo peaks at 2h/c.

Modes
-----
``"plane"``
    Exact plane-wave response of the stack (all multiples), no spreading:
    H(f) = exp(-2 j k0 h) r_stack(f).
``"point"``
    A point antenna: the primary echo of every interface, each with its two-way paraxial
    spreading. For interface i below layers j < i, the field (per unit spherical wave
    exp(-jkr)/r leaving the antenna) is

        E_i = [prod_j<i (1 - r_j^2)] r_i exp(-2 j k0 (h + sum n_j d_j)) / (2 (h + sum d_j / n'_j))

    with n'_j = Re n_j (ray-tube spreading of paraxial rays through flat layers, the image
    distance of the refracted point source; e.g. Cerveny, Seismic Ray Theory, 2001, ch. 4;
    from memory). Interface multiples are left out: inside a snowpack |r| < 0.1 per
    interface, so a first multiple is 20-40 dB below its primary; the air-ground
    reverberation (|r_ground r_surface r_ground| < 0.05) is also dropped. Compare with
    ``"plane"`` mode for the multiples.

FFT: the spectrum is evaluated on an rfft grid of length N (a fast size). In plane mode
N dt >= 4 x (the last primary echo time + pulse length, or the window if longer), so the
time-domain response has decayed before it could wrap onto the window (the multiples decay
at least by the ground reflection each round trip). In point mode the response ends with
the last primary echo, and N dt covers that span plus two pulse lengths.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import scipy.fft

from ._validate import check_choice, check_frequency, check_range
from .constants import C0_M_S
from .layered import stack_coefficients
from .materials import Material
from .pulses import Pulse

__all__ = ["Trace", "synthesize_trace", "column_response", "fft_grid", "evaluate_column",
           "check_column", "echo_times"]


@dataclass(frozen=True, eq=False)
class Trace:
    """An A-scan: received amplitude over two-way time.

    Attributes
    ----------
    time_s : ndarray, shape (n_samples,)
        Two-way time from emission, s.
    amplitude : ndarray, shape (n_samples,)
        Received field per unit spherical wave (point mode) or per unit plane wave.
    echoes : tuple of (str, float)
        Label and two-way time (s) of each primary interface echo.
    """

    time_s: np.ndarray
    amplitude: np.ndarray
    echoes: tuple[tuple[str, float], ...] = ()

    def __post_init__(self) -> None:
        for name in ("time_s", "amplitude"):
            a = np.array(getattr(self, name), dtype=float)
            a.setflags(write=False)
            object.__setattr__(self, name, a)


def column_response(
    freq_hz: np.ndarray,
    eps_layers: np.ndarray,
    thickness_m: np.ndarray,
    antenna_height_m: float,
    mode: str,
    pec_ground: bool = False,
) -> np.ndarray:
    """Kernel: transfer function of the column seen from the antenna, no validation.

    Parameters
    ----------
    freq_hz : ndarray, shape (n_freq,)
        Frequencies, Hz (> 0).
    eps_layers : ndarray, complex, shape (n_layers + 1, n_freq)
        Permittivities of the layers and, in the last row, the ground (air is implied above).
    thickness_m : ndarray, shape (n_layers,)
    antenna_height_m : float
    mode : {"plane", "point"}
    pec_ground : bool
        Treat the ground as a perfect conductor.

    Returns
    -------
    ndarray, complex, shape (n_freq,)
    """
    k0 = 2 * np.pi * freq_hz / C0_M_S
    air_phase = np.exp(-2j * k0 * antenna_height_m)
    if mode == "plane":
        eps = np.vstack([np.ones((1, freq_hz.size), complex), eps_layers])
        if pec_ground:
            eps[-1] = np.inf
        r, _ = stack_coefficients(k0, eps, thickness_m, np.zeros_like(freq_hz), "TE")
        return air_phase * r
    n = np.sqrt(eps_layers.astype(complex))
    n = np.where(n.imag > 0, -n, n)
    n_above = np.vstack([np.ones((1, freq_hz.size), complex), n])  # air, layers, ground
    r = (n_above[:-1] - n_above[1:]) / (n_above[:-1] + n_above[1:])  # interfaces 0..n_layers
    if pec_ground:
        r[-1] = -1.0
    two_way_t = np.cumprod(np.vstack([np.ones((1, freq_hz.size)), 1 - r[:-1] ** 2]), axis=0)
    opt = np.vstack([np.zeros((1, freq_hz.size), complex),
                     np.cumsum(n[:-1] * thickness_m[:, None], axis=0)])
    # spreading uses each layer's real index averaged over the band (a real distance)
    spread = antenna_height_m + np.concatenate(
        [[0.0], np.cumsum(thickness_m / n[:-1].real.mean(axis=1))])
    echo = two_way_t * r * np.exp(-2j * k0 * (antenna_height_m + opt)) / (2 * spread[:, None])
    return echo.sum(axis=0)


def fft_grid(
    dt_s: float, n_samples: int, last_echo_s: float, pulse: Pulse, mode: str = "plane"
) -> tuple[int, np.ndarray]:
    """FFT length and its rfft frequencies for a window of ``n_samples`` at ``dt_s``.

    ``"plane"`` mode (all multiples, a response that decays but never ends): four times the
    longer of the window and the last primary echo plus the pulse length. ``"point"`` mode
    (primaries only, a response that ends with the last echo): that span plus two pulse
    lengths, enough that nothing wraps. Rounded up to a fast size.
    """
    pulse_len = 6.0 / pulse.center_frequency_hz
    span = max(n_samples * dt_s, last_echo_s + pulse_len)
    total = 4 * span if mode == "plane" else span + 2 * pulse_len
    n_fft = scipy.fft.next_fast_len(int(np.ceil(total / dt_s)), real=True)
    return n_fft, np.fft.rfftfreq(n_fft, dt_s)


def evaluate_column(materials: Sequence[Material], freq_hz: np.ndarray) -> np.ndarray:
    """Permittivities of ``materials`` (layers then ground) on ``freq_hz``, shape (n, n_freq).

    ``freq_hz`` is validated once against every material's range; the kernels are then
    called directly.
    """
    f = np.asarray(freq_hz, dtype=float)
    out = np.empty((len(materials), f.size), complex)
    f_lo, f_hi = (float(f.min()), float(f.max())) if f.size else (1.0, 1.0)
    for i, m in enumerate(materials):
        if m.perfect_conductor:
            out[i] = 1.0
            continue
        if not (f_lo >= m.freq_min_hz and f_hi <= m.freq_max_hz and f_lo > 0):
            check_frequency(f, m.freq_min_hz, m.freq_max_hz)  # raises with the message
        out[i] = m.kernel(f, *m.params)
    return out


def echo_times(materials: Sequence[Material], thickness_m: np.ndarray, h: float,
               fc: float) -> list[tuple[str, float]]:
    """Labelled two-way times of the column's primary echoes, s, straight below an antenna
    at height ``h``: ``[("surface", 2h/c), ("interface 1", ...), ..., ("ground", ...)]``,
    with each layer's real index at ``fc``."""
    n = [float(m.refractive_index(fc).real) for m in materials[:-1]]
    t = 2 * h / C0_M_S
    out = [("surface", t)]
    for i, (d, ni) in enumerate(zip(thickness_m, n, strict=True)):
        t += 2 * d * ni / C0_M_S
        label = "ground" if i == len(n) - 1 else f"interface {i + 1}"
        out.append((label, t))
    return out


def check_column(materials: Sequence[Material], thickness_m: Sequence[float]) -> np.ndarray:
    """Validate a layered column (one material per layer plus the ground, thicknesses
    finite and > 0, metal only as the ground); return the thicknesses as an array, m."""
    d = np.asarray(thickness_m, dtype=float).reshape(-1)
    if len(materials) != d.size + 1:
        raise ValueError(
            f"materials lists {len(materials)} media but thickness_m has {d.size} layers: "
            "give one material per layer plus the ground"
        )
    if np.any(~np.isfinite(d)) or np.any(d <= 0):
        raise ValueError(f"thickness_m = {d.tolist()} must all be finite and > 0 m")
    if any(m.perfect_conductor for m in materials[:-1]):
        raise ValueError("only the ground (last material) may be a perfect conductor")
    return d


def synthesize_trace(
    materials: Sequence[Material],
    thickness_m: Sequence[float],
    *,
    antenna_height_m: float,
    pulse: Pulse,
    dt_s: float,
    n_samples: int,
    mode: str = "point",
) -> Trace:
    """Received trace of an antenna above a layered column.

    Parameters
    ----------
    materials : sequence of Material
        ``[layer 1, ..., layer n, ground]`` (air above is implied); a metal ground is a
        perfect conductor.
    thickness_m : sequence of float
        The n layer thicknesses, m (> 0).
    antenna_height_m : float
        Antenna height above the surface, m, in [0.01, 20] (the point antenna's surface
        echo grows as 1 / (2 h)).
    pulse : Pulse
        Transmitted pulse.
    dt_s : float
        Sampling interval, s; must resolve the pulse band (dt <= 1/(2 f_high)).
    n_samples : int
        Number of samples in the window, in [16, 65536].
    mode : {"point", "plane"}
        Point antenna with paraxial spreading, or plane wave (see module docstring).

    Returns
    -------
    Trace
        On ``time_s = arange(n_samples) * dt_s``.
    """
    check_choice("mode", mode, ("point", "plane"))
    h = check_range("antenna_height_m", antenna_height_m, 0.01, 20.0, unit="m")
    n_samples = int(check_range("n_samples", n_samples, 16, 65536))
    d = check_column(materials, thickness_m)
    f_lo, f_hi = pulse.band_hz()
    dt = check_range("dt_s", dt_s, 1e-13, 1.0 / (2 * f_hi), unit="s")
    echoes = echo_times(materials, d, h, pulse.center_frequency_hz)
    n_fft, f = fft_grid(dt, n_samples, echoes[-1][1], pulse, mode)
    band = (f >= max(f_lo, 1e6)) & (f <= f_hi)
    fb = f[band]
    eps = evaluate_column(materials, fb)
    h_col = column_response(fb, eps, d, h, mode, pec_ground=materials[-1].perfect_conductor)
    spec = np.zeros(f.size, complex)
    spec[band] = pulse.spectrum(fb) * h_col
    amp = scipy.fft.irfft(spec / dt, n=n_fft)[:n_samples]
    return Trace(np.arange(n_samples) * dt, amp, tuple(echoes))
