"""Exact plane-wave reflection and transmission of a stack of planar layers.

Convention: engineering time dependence e^{+j omega t}; lossy media have
eps = eps' - j eps'' (eps'' >= 0), and a wave travelling a distance d along z picks up
exp(-j k_z d) with Im(k_z) <= 0 so that it decays.

The coefficients follow the transfer-matrix convention of Born & Wolf (Principles of
Optics, 7th ed., section 1.6) and Byrnes (2016, arXiv:1603.02720, the ``tmm`` package):
TE (s) coefficients are ratios of the tangential electric field; TM (p) coefficients are
ratios of the electric-field amplitude, so that at normal incidence
``r_TM = -r_TE``. Reflection is referenced at the top interface; transmission relates the
forward field at the top of the exit half-space to the incident field at the top
interface.

A perfect electric conductor as the exit half-space is given by ``np.inf`` (then
``r_TE = -1`` and ``r_TM = +1`` at the last interface, and nothing is transmitted).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ._validate import check_choice, check_frequency, check_range
from .constants import C0_M_S

__all__ = ["reflection", "transmission", "transmittance", "stack_coefficients", "kz_per_k0"]


def kz_per_k0(eps: np.ndarray, sin2_theta0_eps0: np.ndarray) -> np.ndarray:
    """Normalised vertical wavenumber k_z/k0 = sqrt(eps - eps0 sin^2 theta0), decaying branch.

    Parameters
    ----------
    eps : ndarray, complex
        Relative permittivity of the medium (e^{+j omega t}: Im <= 0 lossy).
    sin2_theta0_eps0 : ndarray
        ``eps_incident * sin(theta_incident)**2`` (conserved tangential wavenumber squared).

    Returns
    -------
    ndarray, complex
        k_z/k0 with Im <= 0 (decaying downward) and Re >= 0 for propagating waves.
    """
    q = np.sqrt(np.asarray(eps, dtype=complex) - sin2_theta0_eps0)
    # principal sqrt has Re >= 0; the decaying branch in our convention needs Im <= 0
    flip = (q.imag > 0) | ((q.imag == 0) & (q.real < 0))
    return np.where(flip, -q, q)


def stack_coefficients(
    k0_m: np.ndarray,
    eps: np.ndarray,
    thickness_m: np.ndarray,
    sin2: np.ndarray,
    polarization: str,
) -> tuple[np.ndarray, np.ndarray]:
    """Kernel: (r, t) of a stack, no validation.

    Parameters
    ----------
    k0_m : ndarray, shape (n_freq,)
        Free-space wavenumber, rad/m.
    eps : ndarray, complex, shape (n_media, n_freq)
        Permittivities [incident, layer 1..n, exit]; ``inf`` in the last row for a
        perfect conductor.
    thickness_m : ndarray, shape (n_media - 2,)
        Inner layer thicknesses, m.
    sin2 : ndarray, shape (n_freq,)
        ``eps_incident * sin^2(theta_incident)``.
    polarization : {"TE", "TM"}

    Returns
    -------
    r, t : ndarray, complex, shape (n_freq,)
    """
    n_media = eps.shape[0]
    pec_exit = np.isinf(eps[-1].real) if np.iscomplexobj(eps) else np.isinf(eps[-1])
    eps_safe = np.where(np.isinf(eps), 1.0, eps).astype(complex)
    kz = kz_per_k0(eps_safe, sin2)  # (n_media, n_freq), in units of k0
    te = polarization == "TE"
    # interface admittance-like quantity: TE uses kz, TM uses kz/eps
    y = kz if te else kz / eps_safe

    # reflection just above the last interface
    gamma = (y[-2] - y[-1]) / (y[-2] + y[-1])
    # perfect conductor: y_exit -> inf (TE) or y_exit -> 0 (TM, y = kz/eps)
    gamma = np.where(pec_exit, (-1.0 if te else 1.0) + 0j, gamma)
    # transmission bookkeeping: forward amplitude in exit medium per forward amplitude in the
    # medium above the current interface (top-of-interface reference)
    t_iface = 2.0 * y[-2] / (y[-2] + y[-1])
    t_iface = np.where(pec_exit, 0.0 + 0j, t_iface)
    t_total = t_iface
    for i in range(n_media - 2, 0, -1):  # layer i (1..n), interface above it is i-1 | i
        phase = np.exp(-1j * k0_m * kz[i] * thickness_m[i - 1])
        g_top = gamma * phase * phase  # reflection of what lies below, referenced at top of i
        r_ij = (y[i - 1] - y[i]) / (y[i - 1] + y[i])
        t_ij = 2.0 * y[i - 1] / (y[i - 1] + y[i])
        denom = 1.0 + r_ij * g_top
        gamma = (r_ij + g_top) / denom
        t_total = t_total * phase * t_ij / denom
    if not te:
        # with y = kz/eps the recursion gives Born & Wolf's r_p directly; its transmission
        # is the tangential-H ratio, converted to the electric-amplitude ratio by n_in/n_out
        n_in = np.sqrt(eps_safe[0])
        n_out = np.sqrt(eps_safe[-1])
        t_total = t_total * n_in / n_out
        t_total = np.where(pec_exit, 0.0 + 0j, t_total)
    return gamma, t_total


def _prepare(
    freq_hz: object,
    permittivity: Sequence[object],
    thickness_m: Sequence[float],
    angle_deg: float,
    polarization: str,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, tuple[int, ...]]:
    f = check_frequency(freq_hz)
    shape = f.shape
    f1 = f.reshape(-1)
    check_choice("polarization", polarization, ("TE", "TM"))
    angle = check_range("angle_deg", angle_deg, 0.0, 90.0, unit="deg", high_open=True)
    layers = list(permittivity)
    if len(layers) < 2:
        raise ValueError(
            f"permittivity must list at least the incident and exit half-spaces, got {len(layers)}"
        )
    d = np.asarray(thickness_m, dtype=float).reshape(-1)
    if d.size != len(layers) - 2:
        raise ValueError(
            f"thickness_m has {d.size} values but permittivity lists {len(layers) - 2} inner layers"
        )
    if np.any(~np.isfinite(d)) or np.any(d < 0):
        raise ValueError(f"thickness_m = {d.tolist()} must be finite and >= 0 m")
    eps = np.empty((len(layers), f1.size), dtype=complex)
    for i, e in enumerate(layers):
        a = np.asarray(e, dtype=complex)
        if a.ndim and a.shape != shape and a.size != 1:
            try:
                a = np.broadcast_to(a, shape)
            except ValueError:
                raise ValueError(
                    f"permittivity[{i}] has shape {a.shape}, which does not broadcast to the "
                    f"frequency shape {shape}"
                ) from None
        eps[i] = np.broadcast_to(a, shape).reshape(-1)
    inf_rows = np.isinf(eps.real) | np.isinf(eps.imag)
    if np.any(inf_rows[:-1]):
        raise ValueError("only the exit half-space (last permittivity) may be a perfect conductor")
    if np.any(np.isnan(eps)):
        raise ValueError("permittivity contains NaN")
    eps[-1] = np.where(inf_rows[-1], np.inf, eps[-1])
    if np.any(np.abs(eps[0].imag) > 1e-12 * np.abs(eps[0].real)) and angle > 0:
        raise ValueError(
            "the incident half-space must be lossless (real permittivity) for oblique incidence"
        )
    k0 = 2.0 * np.pi * f1 / C0_M_S
    sin2 = eps[0].real * np.sin(np.radians(angle)) ** 2 * np.ones_like(f1)
    return k0, eps, d, sin2, shape


def reflection(
    freq_hz: object,
    permittivity: Sequence[object],
    thickness_m: Sequence[float],
    angle_deg: float = 0.0,
    polarization: str = "TE",
) -> np.ndarray:
    """Exact plane-wave reflection coefficient of a planar stack.

    Parameters
    ----------
    freq_hz : array_like
        Frequencies, Hz (> 0).
    permittivity : sequence
        Complex relative permittivities ``[incident, layer 1, ..., layer n, exit]``; each a
        scalar or an array broadcastable to ``freq_hz``. ``np.inf`` as the exit medium is a
        perfect conductor. The incident medium must be lossless for oblique incidence.
    thickness_m : sequence of float
        The n inner layer thicknesses, m.
    angle_deg : float
        Incidence angle in the incident medium, degrees, in [0, 90).
    polarization : {"TE", "TM"}
        TE (s): electric field parallel to the layers; TM (p).

    Returns
    -------
    ndarray, complex, same shape as ``freq_hz``
        Reflection coefficient referenced at the top interface (see module docstring for
        the field conventions).
    """
    k0, eps, d, sin2, shape = _prepare(freq_hz, permittivity, thickness_m, angle_deg, polarization)
    r, _ = stack_coefficients(k0, eps, d, sin2, polarization)
    return r.reshape(shape)


def transmission(
    freq_hz: object,
    permittivity: Sequence[object],
    thickness_m: Sequence[float],
    angle_deg: float = 0.0,
    polarization: str = "TE",
) -> np.ndarray:
    """Exact plane-wave transmission coefficient of a planar stack (field amplitude ratio).

    Same parameters as :func:`reflection`. The power transmittance is
    ``|t|^2 Re(n_exit cos theta_exit) / Re(n_in cos theta_in)`` for TE and
    ``|t|^2 Re(n_exit conj(cos theta_exit)) / Re(n_in conj(cos theta_in))`` for TM, written
    for the physics convention in Byrnes (2016); see :func:`transmittance`.

    Returns
    -------
    ndarray, complex, same shape as ``freq_hz``
        Zero for a perfectly conducting exit half-space.
    """
    k0, eps, d, sin2, shape = _prepare(freq_hz, permittivity, thickness_m, angle_deg, polarization)
    _, t = stack_coefficients(k0, eps, d, sin2, polarization)
    return t.reshape(shape)


def transmittance(
    freq_hz: object,
    permittivity: Sequence[object],
    thickness_m: Sequence[float],
    angle_deg: float = 0.0,
    polarization: str = "TE",
) -> np.ndarray:
    """Power transmittance into the exit half-space (fraction of incident power).

    Same parameters as :func:`reflection`. Written as in Byrnes (2016, arXiv:1603.02720,
    eqs. for T_s and T_p), converted to the e^{+j omega t} convention by complex
    conjugation. Power balance: ``|r|^2 + transmittance <= 1``, with equality for a lossless
    stack.

    Returns
    -------
    ndarray, float, same shape as ``freq_hz``
    """
    k0, eps, d, sin2, shape = _prepare(freq_hz, permittivity, thickness_m, angle_deg, polarization)
    _, t = stack_coefficients(k0, eps, d, sin2, polarization)
    if np.all(np.isinf(eps[-1].real)):
        return np.zeros(shape)
    ends = np.stack([eps[0], eps[-1]])
    q = kz_per_k0(ends, sin2)  # n cos(theta), our convention
    n = np.sqrt(ends)
    n = np.where(n.imag > 0, -n, n)
    # physics-convention quantities are the complex conjugates of ours
    n_ph = np.conj(n)
    cos_ph = np.conj(q / n)
    if polarization == "TE":
        den, num = (n_ph * cos_ph).real
    else:
        den, num = (n_ph * np.conj(cos_ph)).real
    tt = np.abs(t) ** 2 * num / den
    tt = np.where(np.isinf(eps[-1].real), 0.0, tt)
    return tt.reshape(shape)
