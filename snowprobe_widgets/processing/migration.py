"""Migration of zero-offset sections: Stolt f-k and diffraction summation.

Both use the exploding-reflector model: a zero-offset section recorded in a medium of
velocity ``v`` is treated as one-way propagation at ``v / 2``, so a point diffractor at
``(x0, t0)`` appears on the hyperbola ``t(x) = sqrt(t0**2 + (2 (x - x0) / v)**2)``, with
t measured from the antenna. The output keeps the time axis (vertical two-way time);
convert it to depth with :func:`snowprobe_widgets.processing.time_to_depth`.

An antenna held above the snow sees the diffraction through an air gap: the hyperbola of
a point at two-way time t0 from the antenna is, to second order in offset,
``t0 + x**2 / (c R)`` with ``R = h + z v / c`` the air-equivalent range (Snell's law at
the surface), i.e. a hyperbola of the RMS velocity ``v_rms(t0)**2 = 2 c R / t0`` (Dix
1955, Geophysics 20(1); Taner & Koehler 1969, Geophysics 34(6)). Shifting time zero to the
surface and migrating at the snow velocity does not focus: at 3 m height the flanks are
far flatter than the snow velocity predicts. Give ``antenna_height_m`` and ``migrate``
focuses at ``v_rms(t)``: diffraction summation along each output time's own RMS
hyperbola, f-k as a set of constant-velocity Stolt migrations at reference velocities
2 % apart, interpolated per output time (in the manner of Gazdag & Sguazzero's 1984
phase-shift-plus-interpolation).
"""

from __future__ import annotations

import functools
import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from scipy import fft as sfft

from ..constants import C0_M_S
from ..fields import Field, declare
from ..radargram import Radargram
from ._common import (
    STEPS,
    VELOCITY_MAX_M_S,
    VELOCITY_MIN_M_S,
    check_param,
    record,
    sample_interval_s,
    step_group,
    trace_spacing_m,
)

__all__ = ["migrate", "MIGRATION_METHODS", "rms_velocity_m_s"]

MIGRATION_METHODS = ("fk", "kirchhoff")


def _aperture(scenario: object, rg: Radargram | None) -> tuple[float, float]:
    # one trace spacing to the whole line
    if rg is not None:
        dx = rg.dx_m if rg.position_m.size > 1 else 0.0
        length = float(rg.position_m[-1] - rg.position_m[0])
    else:
        survey = scenario.survey  # type: ignore[attr-defined]
        dx, length = survey.trace_spacing_m, survey.end_m - survey.start_m
    return dx, max(length, dx)


_M = step_group("migrate")
declare(
    Field(_M, "velocity_m_s", "number", "Wave speed", unit="m/s", display_unit="m/ns",
          scale=1e9, low=VELOCITY_MIN_M_S, high=VELOCITY_MAX_M_S, step=0.005, decimals=3,
          help="Speed of the wave in the snow (dry snow about 0.23 m/ns, wet snow less); "
               "the right speed collapses a hyperbola to a point."),
    Field(_M, "method", "choice", "Method", choices=MIGRATION_METHODS,
          help="fk: fast, for one speed; kirchhoff: sums along each hyperbola, slower."),
    Field(_M, "aperture_m", "optional number", "Aperture", unit="m", display_unit="m",
          low=0.0, high=1e4, soft=_aperture, step=0.1,
          help="kirchhoff only: how far along the line each point sums; empty: the whole "
               "line."),
    Field(_M, "antenna_height_m", "number", "Antenna height", unit="m", display_unit="m",
          low=0.0, high=100.0, soft=(0.0, 50.0), step=0.05,
          help="Height of the antenna above the snow; the wave crosses this air gap first. "
               "It follows the radar's antenna height."),
    Field(_M, "surface_time_s", "optional number", "Surface echo time", unit="s",
          display_unit="ns", scale=1e-9, low=0.0, high=1e-6, decimals=1,
          help="Where the surface echo lies on the record (after time-zero); empty: where "
               "the antenna height puts it."),
)


#: Half-length (taps on each side) of the windowed-sinc interpolator of the Stolt mapping.
_SINC_HALF = 4
#: Ratio of neighbouring reference velocities of the f-k migration through an air gap.
_REF_STEP = 1.02
#: Largest section (samples x traces) whose Stolt map is kept for the next call of the
#: same geometry (the map takes about 200 bytes per sample).
_CACHED_MAP_SAMPLES = 100_000
#: Spectrum cells (frequencies x wavenumbers) of the Stolt map built and applied at a
#: time on a larger section: bounds its memory (~200 bytes a cell) and sets how often a
#: long migration reports progress (and can be stopped).
_MAP_CHUNK_CELLS = 250_000
#: How many progress reports a diffraction summation makes at most (one per group of
#: trace lags).
_KIRCHHOFF_REPORTS = 50

Progress = Callable[[float], None] | None


def rms_velocity_m_s(time_from_antenna_s: np.ndarray, velocity_m_s: float,
                     antenna_height_m: float) -> np.ndarray:
    """Paraxial RMS velocity of an air gap over snow, m/s, at two-way times from the antenna.

    ``v_rms(t)**2 = 2 c R / t`` with ``R = h + z v / c`` and ``z = (t - 2 h / c) v / 2``
    below the surface (Dix 1955); c in the air gap itself.
    """
    t = np.asarray(time_from_antenna_s, dtype=float)
    t_air = 2.0 * antenna_height_m / C0_M_S
    below = np.maximum(t - t_air, 0.0)
    r = antenna_height_m + below * velocity_m_s**2 / (2.0 * C0_M_S)
    v2 = 2.0 * C0_M_S * r / np.maximum(t_air + below, 1e-30)
    return np.where(t > t_air, np.sqrt(v2), C0_M_S)


@dataclass(frozen=True, eq=False)
class _StoltMap:
    """Where and with which weights Stolt's mapping reads the input spectrum (it depends
    on the section's shape, sampling and velocity only, not on its data)."""

    read: np.ndarray  # (nf, n_columns) bool: output bins read below Nyquist
    first: np.ndarray  # (n_read,) flat index of the first tap in the extended spectrum
    weight: np.ndarray  # (2 _SINC_HALF, n_read) tap weights, normalised to sum 1
    factor: np.ndarray  # (n_read,) Jacobian times the time-origin phase


def _padded_sizes(nt: int, nx: int) -> tuple[int, int]:
    """Transform lengths in time and position: at least twice the section (no wrap)."""
    return sfft.next_fast_len(2 * nt, real=True), sfft.next_fast_len(2 * nx)


def _build_stolt_map(nt: int, nx: int, dt: float, dx: float, v_half: float,
                     t_first_s: float, col_start: int = 0, col_stop: int | None = None
                     ) -> _StoltMap:
    """The map of the wavenumber columns ``col_start:col_stop`` (default: all)."""
    ntf, nxf = _padded_sizes(nt, nx)
    w = 2.0 * np.pi * sfft.rfftfreq(ntf, dt)
    nf = w.size
    dw = w[1]
    kx = 2.0 * np.pi * sfft.fftfreq(nxf, dx)[col_start:col_stop]
    t_mid = 0.5 * (nt - 1) * dt  # record middle, from the first sample
    half = _SINC_HALF
    w_in = np.sqrt(w[:, None] ** 2 + (v_half * kx[None, :]) ** 2)
    read = w_in < (nf - 1) * dw  # read below Nyquist only
    w_out = np.broadcast_to(w[:, None], read.shape)[read]
    cols = np.broadcast_to(np.arange(col_start, col_start + kx.size), read.shape)[read]
    w_read = w_in[read]
    idx = w_read / dw
    i0 = np.floor(idx).astype(np.intp)
    frac = idx - i0
    sin_pf = np.sin(np.pi * frac)
    # Hann window cos(pi u / H) at u = frac - k, by the difference formula from one cosine
    # and one sine of pi frac / H
    cos_a, sin_a = np.cos(np.pi * frac / half), np.sin(np.pi * frac / half)
    at_node = frac == 0.0  # u = 0 happens for k = 0 only (frac is in [0, 1))
    weight = np.empty((2 * half, w_read.size))
    for n, k in enumerate(range(-half + 1, half + 1)):
        hann = 0.5 + 0.5 * (cos_a * math.cos(math.pi * k / half)
                            + sin_a * math.sin(math.pi * k / half))
        # sinc(u) = (-1)**k sin(pi frac) / (pi u), and 1 at u = 0
        if k == 0:
            sinc = np.where(at_node, 1.0, sin_pf / (np.pi * np.where(at_node, 1.0, frac)))
        else:
            sinc = (-1.0) ** k / np.pi * sin_pf / (frac - k)
        weight[n] = sinc * hann
    weight /= weight.sum(axis=0)
    jac = np.divide(w_out, w_read, out=np.ones_like(w_read), where=w_read > 0.0)
    phase = np.exp(1j * (w_out * t_first_s - w_read * (t_first_s + t_mid)))
    # extended spectrum rows: H-1 mirrored negative frequencies first (see _stolt)
    first = i0 * nxf + cols
    out = _StoltMap(read, first, weight, jac * phase)
    for arr in (out.read, out.first, out.weight, out.factor):
        arr.setflags(write=False)
    return out


_cached_stolt_map = functools.lru_cache(maxsize=2)(_build_stolt_map)


def _stolt_map(nt: int, nx: int, dt: float, dx: float, v_half: float,
               t_first_s: float) -> _StoltMap:
    """The map of a section, kept for the next sections of the same geometry when it
    is small (a detector migrates a scene and its twin alike)."""
    if nt * nx <= _CACHED_MAP_SAMPLES:
        return _cached_stolt_map(nt, nx, dt, dx, v_half, t_first_s)
    return _build_stolt_map(nt, nx, dt, dx, v_half, t_first_s)


def _stolt(data: np.ndarray, t_first_s: float, dt: float, dx: float,
           v_half: float, progress: Progress = None) -> np.ndarray:
    """Stolt (1978) f-k migration, constant velocity, exploding reflector velocity v_half.

    The section is zero-padded to at least twice its size in time and position to keep
    the circular transforms from wrapping. Each output frequency ``w_tau`` is read from the
    input spectrum at ``w = sqrt(w_tau**2 + (v_half kx)**2)`` and scaled by the Jacobian
    ``w_tau / w``. The input spectrum is referred to the middle of the record (so that it
    oscillates slowly along ``w``) and read with an 8-tap Hann-windowed sinc; the phase of
    the true time origin is put back exactly afterwards. ``progress`` (if given) is told
    the fraction of wavenumber columns mapped after each band of them.
    """
    nt, nx = data.shape
    args = (nt, nx, float(dt), float(dx), float(v_half), float(t_first_s))
    ntf, nxf = _padded_sizes(nt, nx)
    w = 2.0 * np.pi * sfft.rfftfreq(ntf, dt)
    spec = sfft.fft(sfft.rfft(data, n=ntf, axis=0), n=nxf, axis=1)
    spec *= np.exp(1j * w * (0.5 * (nt - 1) * dt))[:, None]  # referred to the middle
    # rows -H+1..-1 (negative frequencies: conj at -kx) and H rows of zeros above Nyquist
    half = _SINC_HALF
    neg_kx = (-np.arange(nxf)) % nxf
    below = np.conj(spec[half - 1:0:-1][:, neg_kx])
    flat = np.concatenate([below, spec, np.zeros((half, nxf), dtype=spec.dtype)]).ravel()
    del spec, below
    out = np.zeros((w.size, nxf), dtype=complex)
    # a small section's map is kept whole; a large one is built and used a band of
    # wavenumber columns at a time (each column reads its own, so the result is the same)
    step = nxf if nt * nx <= _CACHED_MAP_SAMPLES else max(1, _MAP_CHUNK_CELLS // w.size)
    for start in range(0, nxf, step):
        stop = min(start + step, nxf)
        m = (_stolt_map(*args) if step == nxf
             else _build_stolt_map(*args, col_start=start, col_stop=stop))
        acc = np.zeros(m.first.size, dtype=complex)
        for n in range(2 * half):
            acc += m.weight[n] * flat.take(m.first + n * nxf)
        band = out[:, start:stop]
        band[m.read] = acc * m.factor
        if progress is not None:
            progress(stop / nxf)
    out = sfft.irfft(sfft.ifft(out, axis=1)[:, :nx], n=ntf, axis=0)[:nt]
    return np.ascontiguousarray(out)


def _kirchhoff(data: np.ndarray, time_s: np.ndarray, dt: float, dx: float, v_half: float,
               aperture_m: float, progress: Progress = None) -> np.ndarray:
    """Diffraction summation along zero-offset hyperbolas (Yilmaz 2001, section 4.1).

    Input traces are first given the 2-D wavelet-shaping ("rho") filter, a half time
    derivative ``sqrt(j w)``, then summed along ``t = sqrt(tau**2 + (h / v_half)**2)`` with
    the obliquity ``cos(theta) = tau / t`` and spreading ``1 / sqrt(v_half r)`` weights
    (``r = v_half t``) and the factor ``dx / sqrt(2 pi)``. The weights are from memory;
    on synthetic sections a 30 degree plane reflector keeps its amplitude within 2 % and a
    point diffractor focuses to within 2 % of Stolt's peak.
    No anti-alias filter is applied: keep the trace spacing below a quarter wavelength.
    ``progress`` (if given) is told the fraction of trace lags summed, after each group.
    """
    nt, nx = data.shape
    ntf = sfft.next_fast_len(2 * nt, real=True)
    w = 2.0 * np.pi * sfft.rfftfreq(ntf, dt)
    rho = np.sqrt(1j * w)
    filt = sfft.irfft(sfft.rfft(data, n=ntf, axis=0) * rho[:, None], n=ntf, axis=0)[:nt]
    tau = time_s
    t_first = float(time_s[0])
    tau_pos = np.maximum(tau, dt)
    v_half = np.broadcast_to(np.asarray(v_half, dtype=float), tau.shape)
    out = np.zeros_like(filt)
    max_lag = min(nx - 1, int(np.floor(aperture_m / dx + 1e-9)))
    scale = dx / np.sqrt(2.0 * np.pi)
    n_lags = 2 * max_lag + 1
    report_every = max(1, n_lags // _KIRCHHOFF_REPORTS)
    for done, lag in enumerate(range(-max_lag, max_lag + 1)):
        if progress is not None and done and done % report_every == 0:
            progress(done / n_lags)
        h = lag * dx
        t = np.sqrt(tau_pos**2 + (h / v_half) ** 2)
        idx = (t - t_first) / dt
        n_ok = int(np.searchsorted(idx, nt - 1, side="right"))
        if n_ok == 0:
            continue
        idx = idx[:n_ok]
        i0 = np.minimum(np.floor(idx).astype(np.intp), nt - 2)
        frac = (idx - i0)[:, None]
        wgt = (scale * (tau_pos[:n_ok] / t[:n_ok])
               / (v_half[:n_ok] * np.sqrt(t[:n_ok])))[:, None]
        if lag >= 0:
            src = filt[:, lag:]
            dst = out[:n_ok, : nx - lag]
        else:
            src = filt[:, : nx + lag]
            dst = out[:n_ok, -lag:]
        dst += (src[i0] * (1.0 - frac) + src[i0 + 1] * frac) * wgt
    if progress is not None:
        progress(1.0)
    return out


def _stolt_air_gap(data: np.ndarray, t_ant: np.ndarray, dt: float, dx: float,
                   v: float, h: float, progress: Progress = None) -> np.ndarray:
    """Stolt migrations at reference RMS velocities, interpolated per output time
    (``progress``, if given, follows them)."""
    v_t = np.clip(rms_velocity_m_s(t_ant, v, h), v, VELOCITY_MAX_M_S)
    lo, hi = float(v_t.min()), float(v_t.max())
    n_ref = max(2, int(math.ceil(math.log(hi / lo) / math.log(_REF_STEP))) + 1)
    refs = np.geomspace(lo, hi, n_ref) if hi > lo else np.array([lo, lo])
    pos = np.interp(np.log(v_t), np.log(refs), np.arange(refs.size))
    i0 = np.minimum(np.floor(pos).astype(np.intp), refs.size - 2)
    w1 = (pos - i0)[:, None]
    out = np.zeros_like(data)
    used = [k for k in range(refs.size) if np.any((i0 == k) | (i0 + 1 == k))]
    for done, k in enumerate(used):
        part = None if progress is None else (
            lambda f, done=done: progress((done + f) / len(used)))
        img = _stolt(data, float(t_ant[0]), dt, dx, 0.5 * float(refs[k]), part)
        weight = np.where((i0 == k)[:, None], 1.0 - w1, 0.0) + np.where(
            (i0 + 1 == k)[:, None], w1, 0.0)
        out += weight * img
    return out


@STEPS.register("migrate")
def migrate(rg: Radargram, velocity_m_s: float, method: str = "fk",
            aperture_m: float | None = None, antenna_height_m: float = 0.0,
            surface_time_s: float | None = None, *,
            progress: Callable[[float], None] | None = None) -> Radargram:
    """Collapse diffraction hyperbolas onto their apex.

    Parameters
    ----------
    rg : Radargram
        Zero-offset section with uniform trace spacing (the mean spacing is used).
    velocity_m_s : float
        Propagation velocity of the snow, m/s, in [0.03e9, c0] (dry snow about 0.23e9).
    method : {"fk", "kirchhoff"}
        "fk": Stolt frequency-wavenumber migration (Stolt 1978, Geophysics 43(1)
        "Migration by Fourier transform"), fast and exact for constant velocity.
        "kirchhoff": diffraction summation; slower (one pass per trace lag), with a
        limited ``aperture_m``.
    aperture_m : float or None
        kirchhoff only: largest along-line distance summed on each side, m (default: the
        whole line).
    antenna_height_m : float
        Height of the antenna above the snow surface, m, in [0, 100]. Above 0 the section
        is migrated through the air gap at the RMS velocity of air over snow (see the
        module notes); 0 migrates at ``velocity_m_s`` alone (ground-coupled antenna).
    surface_time_s : float or None
        Time of the snow-surface echo on this record, s, in [0, 1 us]. ``None``: the
        record's time is measured from transmission, so the surface lies at 2 h / c0.
        Give it when time-zero moved the surface echo (its ``target_time_s``).
    progress : callable or None
        Called with the fraction done (0 to 1) many times during a long migration
        (after each band of wavenumbers, each group of trace lags); an exception it
        raises stops the migration there and propagates (a stop button's way to end
        it). The result does not depend on it.

    Returns
    -------
    Radargram
        Same axes; time is vertical two-way time below the antenna line.
    """
    method = check_param("migrate", "method", method)
    v = check_param("migrate", "velocity_m_s", velocity_m_s)
    h = check_param("migrate", "antenna_height_m", antenna_height_m)
    t_air = 2.0 * h / C0_M_S
    t_s = t_air if surface_time_s is None else check_param(
        "migrate", "surface_time_s", surface_time_s)
    # times from the antenna: the record's own axis moved so the surface lies at 2 h / c0
    t_ant = rg.time_s - t_s + t_air
    dt = sample_interval_s(rg)
    dx = trace_spacing_m(rg)
    if method == "fk":
        if aperture_m is not None:
            raise ValueError("aperture_m applies to method = 'kirchhoff' only")
        if h > 0.0:
            out = _stolt_air_gap(rg.data, t_ant, dt, dx, v, h, progress)
        else:
            out = _stolt(rg.data, float(t_ant[0]), dt, dx, 0.5 * v, progress)
    else:
        length = float(rg.position_m[-1] - rg.position_m[0])
        if aperture_m is None:
            aperture_m = length
        aperture_m = check_param("migrate", "aperture_m", aperture_m, rg)
        v_half = 0.5 * (rms_velocity_m_s(t_ant, v, h) if h > 0.0 else v)
        out = _kirchhoff(rg.data, t_ant, dt, dx, v_half, aperture_m, progress)
    rec = record("migrate", velocity_m_s=v, method=method, aperture_m=aperture_m,
                 antenna_height_m=h, surface_time_s=surface_time_s)
    return rg.with_data(out, rec)
