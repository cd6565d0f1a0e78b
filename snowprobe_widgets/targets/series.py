"""Exact backscatter series of a sphere (Mie) and of an infinite circular cylinder.

Both follow Bohren & Huffman, *Absorption and Scattering of Light by Small Particles*
(1983): the sphere's coefficients a_n, b_n of section 4.4 computed as in their BHMIE
program (appendix A: logarithmic derivative D_n(mx) by downward recurrence, Riccati-Bessel
functions by upward recurrence, nstop = x + 4 x^(1/3) + 2 terms), and the cylinder's
coefficients of section 8.4 at normal incidence (case I: electric field along the axis;
case II: across it) with the Bessel and Hankel functions of :mod:`scipy.special`.

The books use the time dependence e^{-i omega t}; this package uses e^{+j omega t}. The
functions here take the object's refractive index relative to the snow in the package's
convention (``m = n - j kappa``, kappa >= 0 for a lossy object), evaluate the series in the
book's convention (with the complex conjugate index) and return the conjugate of the result,
so that a returned spectrum multiplies the package's spectra directly.

Results are *front-face normalised echoes*: the backscattered far field divided by the
geometric-optics echo of a perfectly conducting body of the same size, with the phase
referred to the body's front face, and the sign chosen so that this reference echo is -1.
For a large body this tends to the front face's Fresnel coefficient (plus internal and
creeping-wave echoes); for a small sphere it tends to +2 x^2 K (the dipole term).
"""

from __future__ import annotations

import math

import numpy as np
from scipy import special

__all__ = ["sphere_echo", "cylinder_echo", "cylinder_echoes", "sphere_po_shape",
           "cylinder_po_shape", "n_terms"]


def n_terms(x: float) -> int:
    """Terms kept for size parameter ``x``: x + 4 x^(1/3) + 2 (Bohren & Huffman, BHMIE)."""
    return int(round(x + 4.0 * x ** (1.0 / 3.0) + 2.0))


def sphere_echo(x: np.ndarray, m: np.ndarray) -> np.ndarray:
    """Front-face normalised backscatter echo of a sphere, exact (Mie series).

    Parameters
    ----------
    x : array_like, shape (n_f,)
        Size parameter k a, k the (real) wavenumber in the medium around the sphere.
    m : array_like, complex, shape (n_f,) or scalar
        Refractive index of the sphere relative to that medium (``n - j kappa``).

    Returns
    -------
    ndarray, complex, shape (n_f,)
        Backscattered field over that of a large perfectly conducting sphere's front face
        (a/2 at range R squared), phase referred to the front face; sign as the module
        docstring states.
    """
    x = np.atleast_1d(np.asarray(x, float))
    mb = np.conj(np.broadcast_to(np.asarray(m, complex), x.shape))  # the book's convention
    nstop = np.array([n_terms(v) for v in x])
    n_max = int(nstop.max())
    mx = mb * x
    n_mx = int(max(n_max, float(np.abs(mx).max()))) + 16
    # D_n(mx) by downward recurrence from zero (BHMIE)
    d = np.zeros((n_mx + 1, x.size), complex)
    for n in range(n_mx, 0, -1):
        d[n - 1] = n / mx - 1.0 / (d[n] + n / mx)
    with np.errstate(all="ignore"):  # terms beyond a frequency's nstop are masked out
        return _sphere_sum(x, mb, d, nstop, n_max)


def _sphere_sum(x: np.ndarray, mb: np.ndarray, d: np.ndarray, nstop: np.ndarray,
                n_max: int) -> np.ndarray:
    psi_prev, psi = np.cos(x), np.sin(x)
    chi_prev, chi = -np.sin(x), np.cos(x)
    xi = psi - 1j * chi
    total = np.zeros(x.size, complex)
    for n in range(1, n_max + 1):
        psi_n = (2 * n - 1) / x * psi - psi_prev
        chi_n = (2 * n - 1) / x * chi - chi_prev
        xi_n = psi_n - 1j * chi_n
        ga = d[n] / mb + n / x
        gb = mb * d[n] + n / x
        a_n = (ga * psi_n - psi) / (ga * xi_n - xi)
        b_n = (gb * psi_n - psi) / (gb * xi_n - xi)
        term = (2 * n + 1) / 2.0 * (-1) ** (n + 1) * (a_n - b_n)
        total += np.where(n <= nstop, term, 0.0)
        psi_prev, psi = psi, psi_n
        chi_prev, chi = chi, chi_n
        xi = xi_n
    # total is S1(180 deg) of the book; i S1 exp(2ix) / (x/2) is -1 for a large perfect
    # conductor and +2 x^2 K for a small sphere (checked in tests/targets/test_series.py)
    return np.conj(1j * total * np.exp(2j * x) / (x / 2.0))


def cylinder_echo(x: np.ndarray, m: np.ndarray | None, case: str) -> np.ndarray:
    """Front-face normalised backscatter echo of an infinite circular cylinder, exact.

    Parameters
    ----------
    x : array_like, shape (n_f,)
        Size parameter k a in the medium around the cylinder.
    m : array_like, complex, or None
        Relative refractive index (``n - j kappa``); None for a perfect conductor.
    case : {"along", "across"}
        Electric field along the axis (Bohren & Huffman case I, TM) or across it (case II).

    Returns
    -------
    ndarray, complex, shape (n_f,)
        The series' backscatter amplitude T over the geometric-optics echo of a perfectly
        conducting cylinder's front face (|T| = sqrt(pi x) / 2), phase referred to the
        front face, that reference being -1. The echo width is
        ``sigma_2d = pi a |result|^2``.
    """
    along, across = cylinder_echoes(x, m)
    return along if case == "along" else across


def _with_derivative(values: np.ndarray, z: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """C_n and C_n' for n = 0..N from C_n, n = 0..N+1, of a Bessel-type function:
    C_n' = C_{n-1} - (n / z) C_n, C_0' = -C_1 (Abramowitz & Stegun 9.1.27)."""
    n = np.arange(values.shape[0] - 1)[:, None]
    c = values[:-1]
    d = np.empty_like(c)
    d[0] = -values[1]
    d[1:] = values[:-2] - n[1:] / z * c[1:]
    return c, d


def cylinder_echoes(x: np.ndarray, m: np.ndarray | None) -> tuple[np.ndarray, np.ndarray]:
    """:func:`cylinder_echo` for the field along and across the axis, computed together
    (one set of Bessel functions for both)."""
    x = np.atleast_1d(np.asarray(x, float))
    n_max = n_terms(float(x.max()))
    with np.errstate(all="ignore"):  # terms beyond a frequency's nstop are masked out
        return _cylinder_sums(x, m, n_max)


def _cylinder_sums(x: np.ndarray, m: np.ndarray | None, n_max: int
                   ) -> tuple[np.ndarray, np.ndarray]:
    n_all = np.arange(n_max + 2)[:, None]
    n = n_all[:-1]
    xx = x[None, :]
    jx, djx = _with_derivative(special.jv(n_all, xx), xx)
    hx, dhx = _with_derivative(special.hankel1(n_all, xx), xx)
    if m is None:
        coef_along, coef_across = jx / hx, djx / dhx
    else:
        mb = np.conj(np.broadcast_to(np.asarray(m, complex), x.shape))[None, :]
        z = mb * xx
        if not np.any(z.imag):
            z = z.real  # real-argument Bessel functions are much cheaper
        jm, djm = _with_derivative(special.jv(n_all, z), z)
        coef_along = (jm * djx - mb * djm * jx) / (jm * dhx - mb * djm * hx)
        coef_across = (mb * djx * jm - jx * djm) / (mb * jm * dhx - djm * hx)
    nstop = np.array([n_terms(v) for v in x])[None, :]
    weight = np.where(n <= nstop, np.where(n == 0, 1.0, 2.0) * (-1.0) ** n, 0.0)
    # the sums are T(180 deg) of the book; the geometric-optics echo of a large perfect
    # conductor is -/+ (sqrt(pi x) / 2) exp(-2ix) exp(-3i pi / 4) along / across the axis
    # (the book's basis vectors differ between the cases; checked in
    # tests/targets/test_series.py against the series itself at x = 200)
    ref = np.exp(2j * x) * np.exp(0.75j * math.pi) / (math.sqrt(math.pi) * np.sqrt(x) / 2.0)
    along = np.conj(np.sum(np.where(weight != 0, weight * coef_along, 0.0), axis=0) * ref)
    across = np.conj(-np.sum(np.where(weight != 0, weight * coef_across, 0.0), axis=0) * ref)
    return along, across


def _midpoints(x_max: float, lo: float, hi: float) -> tuple[np.ndarray, float]:
    """Midpoint-rule nodes on [lo, hi], at least 24 per oscillation of exp(-2 j x t)."""
    n = int(24 * x_max * (hi - lo) / math.pi) + 256
    step = (hi - lo) / n
    return lo + (np.arange(n) + 0.5) * step, step


def sphere_po_shape(x: np.ndarray, angle_ratio: np.ndarray, angles_deg: np.ndarray
                    ) -> np.ndarray:
    """Physical-optics echo of a sphere's lit half with unit normal-incidence reflection.

    ``2 j x * integral_0^1 rho(mu) mu exp(-2 j x (1 - mu)) d mu`` with rho the local
    reflection's angle dependence (``angle_ratio`` on ``angles_deg``): the facet sum's
    far field for a sphere, front-face normalised like :func:`sphere_echo` (it tends to 1
    for large x).
    """
    x = np.atleast_1d(np.asarray(x, float))
    mu, w = _midpoints(float(x.max()), 0.0, 1.0)
    rho = np.interp(np.degrees(np.arccos(mu)), angles_deg, angle_ratio)
    integrand = (rho * mu * w)[None, :] * np.exp(-2j * np.outer(x, 1.0 - mu))
    return 2j * x * integrand.sum(axis=1)


def cylinder_po_shape(x: np.ndarray, angle_ratio: np.ndarray, angles_deg: np.ndarray
                      ) -> np.ndarray:
    """Physical-optics echo of a cylinder's lit half with unit normal-incidence reflection.

    ``sqrt(x / pi) exp(j pi / 4) * integral_{-pi/2}^{pi/2} rho(phi) cos(phi)
    exp(-2 j x (1 - cos phi)) d phi``: the cross-section part of the facet sum, front-face
    normalised like :func:`cylinder_echo` (it tends to 1 for large x).
    """
    x = np.atleast_1d(np.asarray(x, float))
    phi, w = _midpoints(float(x.max()), -0.5 * math.pi, 0.5 * math.pi)
    rho = np.interp(np.degrees(np.abs(phi)), angles_deg, angle_ratio)
    c = np.cos(phi)
    integrand = (rho * c * w)[None, :] * np.exp(-2j * np.outer(x, 1.0 - c))
    return np.sqrt(x / math.pi) * np.exp(0.25j * math.pi) * integrand.sum(axis=1)
