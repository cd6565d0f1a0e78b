"""Butterworth band-pass, zero-phase filtering and the analytic signal, in numpy.

The processing steps need three classic tools: a Butterworth band-pass as second-order
sections, forward-backward (zero-phase) filtering, and the analytic signal for envelopes.
They live here, written on numpy and ``scipy.fft`` alone, because the library versions sit
in a module whose import pulls a large part of scipy (statistics, optimisation,
interpolation) into every dashboard kernel: about 48 MB per visitor.

Design (Oppenheim & Schafer, "Discrete-Time Signal Processing", 3rd ed. 2010, sections
7.1-7.3; Parks & Burrus, "Digital Filter Design", 1987, chapter 7): the analog Butterworth
low-pass prototype of order N has its poles on the unit circle,
``s_k = -exp(j pi (2k - N + 1) / (2N))``; the band edges are pre-warped,
``W = 2 fs tan(pi f / fs)``; the low-pass to band-pass substitution
``s -> (s**2 + W0**2) / (B s)`` (``W0 = sqrt(W1 W2)``, ``B = W2 - W1``) turns each
prototype pole into the two roots of ``s**2 - p B s + W0**2``, gives N zeros at s = 0 and the
gain ``B**N``; the bilinear transform ``z = (2 fs + s) / (2 fs - s)`` maps poles and zeros
(s = 0 to z = 1, the N zeros at infinity to z = -1) and divides the gain by
``prod(2 fs - p) / (2 fs)**N``. Each conjugate pole pair becomes one second-order section
with the two remaining zeros nearest to it, poles nearest the unit circle first; the
sections are listed in the reverse order (the sharpest last) and the gain goes into the
first.

Filtering: the cascade is written as one state-space system ``z' = A z + B x``,
``y = C z + D x`` and run a block of samples at a time (block-state recursion, Burrus 1972,
"Block realization of digital filters", IEEE Trans. Audio Electroacoustics 20(4); the
citation from memory): the
outputs of a block are ``T x_block + O z`` (T the lower-triangular Toeplitz matrix of the
impulse response, O the rows ``C A**k``) and the state after it ``A**b z + K x_block``,
matrix products over all traces at once. Each pass starts from the steady state of a
constant input equal to its first sample, ``(I - A)**-1 B x[0]``, and the record is
extended at both ends by odd reflection first, as zero-phase filtering usually does to
avoid start-up transients (Gustafsson 1996, "Determining the initial states in
forward-backward filtering", IEEE Trans. Signal Processing 44(4); the odd extension is
common practice).

Analytic signal: Marple 1999, "Computing the discrete-time analytic signal via FFT",
IEEE Trans. Signal Processing 47(9): keep the zero frequency (and Nyquist for even
lengths) as they are, double the positive frequencies, drop the negative ones.
"""

from __future__ import annotations

import functools

import numpy as np
from scipy import fft as sfft

__all__ = ["butter_bandpass_sos", "sos_filtfilt", "analytic_signal"]

#: Samples filtered per step of the block recursion (any size gives the same result to
#: rounding). 16 was the fastest measured for 200 to 1,000 traces; from 32 on, OpenBLAS
#: splits the products over threads, which on a loaded 2-core machine made a 1,000 x
#: 2,048 section 15 times slower (bench_processing.py).
_BLOCK = 16
#: How many filters' block matrices are kept for the next call (about 10 kB each).
_CACHED_FILTERS = 16


def _prototype_poles(order: int) -> np.ndarray:
    """Poles of the analog Butterworth low-pass of unit cut-off (left half-plane)."""
    m = np.arange(-order + 1, order, 2)
    return -np.exp(1j * np.pi * m / (2 * order))


def butter_bandpass_sos(order: int, low_hz: float, high_hz: float,
                        fs_hz: float) -> np.ndarray:
    """Second-order sections of a digital Butterworth band-pass.

    Parameters
    ----------
    order : int
        Order of the low-pass prototype, at least 1 (the band-pass has twice as many
        poles and ``order`` sections).
    low_hz, high_hz : float
        Band edges, Hz, where the gain is 1/sqrt(2) (-3 dB), with
        ``0 < low_hz < high_hz < fs_hz / 2``.
    fs_hz : float
        Sampling rate, Hz.

    Returns
    -------
    ndarray, shape (order, 6)
        Rows ``[b0, b1, b2, 1, a1, a2]``, one section each, to be applied in order.
    """
    if not (isinstance(order, int | np.integer) and order >= 1):
        raise ValueError(f"order = {order!r} must be a whole number of at least 1")
    if not 0.0 < low_hz < high_hz < 0.5 * fs_hz:
        raise ValueError(f"band {low_hz:g} to {high_hz:g} Hz must lie inside (0, "
                         f"{0.5 * fs_hz:g}) Hz (half the sampling rate) with low < high")
    fs2 = 2.0 * fs_hz
    w1, w2 = fs2 * np.tan(np.pi * np.array([low_hz, high_hz]) / fs_hz)  # pre-warped
    bw, w0 = w2 - w1, np.sqrt(w1 * w2)
    p_lp = _prototype_poles(int(order)) * (0.5 * bw)
    root = np.sqrt(p_lp.astype(complex) ** 2 - w0**2)
    p_bp = np.concatenate([p_lp + root, p_lp - root])
    gain = bw**order * np.real(fs2**order / np.prod(fs2 - p_bp))
    p_z = (fs2 + p_bp) / (fs2 - p_bp)
    pairs = _pole_pairs(p_z)
    zeros = [1.0] * order + [-1.0] * order
    sections = []
    # the pole pair nearest the unit circle picks its zeros first (and is applied last)
    for pair in sorted(pairs, key=lambda pq: -max(abs(pq[0]), abs(pq[1]))):
        centre = 0.5 * (pair[0] + pair[1])
        zeros.sort(key=lambda z: abs(z - centre))
        za, zb = zeros.pop(0), zeros.pop(0)
        b = [1.0, -(za + zb), za * zb]
        a = [1.0, -float(np.real(pair[0] + pair[1])), float(np.real(pair[0] * pair[1]))]
        sections.append(b + a)
    sos = np.array(sections[::-1])
    sos[0, :3] *= gain
    return sos


def _pole_pairs(poles: np.ndarray) -> list[tuple[complex, complex]]:
    """Conjugate pairs of complex poles, and the real ones two by two (in order)."""
    tol = 1e-12
    complex_upper = sorted((p for p in poles if p.imag > tol), key=lambda p: p.real)
    real = sorted(float(p.real) for p in poles if abs(p.imag) <= tol)
    if len(real) % 2:
        raise ValueError("an odd number of real poles cannot fill second-order sections")
    return ([(p, np.conj(p)) for p in complex_upper]
            + [(complex(real[i]), complex(real[i + 1])) for i in range(0, len(real), 2)])


def _state_space(sos: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, float]:
    """State-space form ``z' = A z + B x``, ``y = C z + D x`` of a cascade of sections in
    direct form II transposed (two states per section)."""
    m = 2 * sos.shape[0]
    a_mat, b_vec, c_in, d_in = np.zeros((m, m)), np.zeros(m), np.zeros(m), 1.0
    for s, (b0, b1, b2, _, a1, a2) in enumerate(sos.tolist()):
        rows = slice(2 * s, 2 * s + 2)
        feed = np.array([b1 - a1 * b0, b2 - a2 * b0])  # the section's input enters here
        a_mat[rows] += np.outer(feed, c_in)  # its input is the output of the ones before
        a_mat[rows, rows] += np.array([[-a1, 1.0], [-a2, 0.0]])
        b_vec[rows] = feed * d_in
        c_in = b0 * c_in
        c_in[2 * s] += 1.0
        d_in *= b0
    return a_mat, b_vec, c_in, d_in


def _steady_state(sos: np.ndarray) -> np.ndarray:
    """States of the cascade under a constant unit input, section by section (better
    conditioned than solving the whole ``(I - A) z = B`` when poles lie near z = 1).

    A section in steady state with input u has ``z1 = (f1 + f2) u / (1 + a1 + a2)`` and
    ``z2 = f2 u - a2 z1`` (``f1 = b1 - a1 b0``, ``f2 = b2 - a2 b0``) and passes on
    ``u (b0 + b1 + b2) / (1 + a1 + a2)``.
    """
    out, u = [], 1.0
    for b0, b1, b2, _, a1, a2 in sos.tolist():
        f1, f2 = b1 - a1 * b0, b2 - a2 * b0
        z1 = (f1 + f2) * u / (1.0 + a1 + a2)
        out += [z1, f2 * u - a2 * z1]
        u *= (b0 + b1 + b2) / (1.0 + a1 + a2)
    return np.array(out)


@functools.lru_cache(maxsize=_CACHED_FILTERS)
def _block_matrices(sos_bytes: bytes, n_sections: int
                    ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Matrices that filter :data:`_BLOCK` samples at a time (kept per filter).

    Returns ``T`` (block x block, lower-triangular Toeplitz of h[0:block]), ``O``
    (block x states, row k = C A**k), ``K`` (states x block, column j = A**(block-1-j) B),
    ``A**block`` and the steady state for a constant unit input, ``(I - A)**-1 B``.
    """
    sos = np.frombuffer(sos_bytes).reshape(n_sections, 6)
    a_mat, b_vec, c_vec, d = _state_space(sos)
    m = a_mat.shape[0]
    powers = [np.eye(m)]
    for _ in range(_BLOCK):
        powers.append(a_mat @ powers[-1])
    observe = np.array([c_vec @ p for p in powers[:_BLOCK]])
    h = np.concatenate([[d], observe[:-1] @ b_vec])
    toeplitz = np.zeros((_BLOCK, _BLOCK))
    for k in range(_BLOCK):
        toeplitz[k, :k + 1] = h[k::-1]
    feed = np.stack([powers[_BLOCK - 1 - j] @ b_vec for j in range(_BLOCK)], axis=1)
    steady = _steady_state(sos)
    out = (toeplitz, observe, feed, powers[_BLOCK], steady)
    for arr in out:
        arr.setflags(write=False)
    return out


def _filter_from_steady(matrices: tuple[np.ndarray, ...], x: np.ndarray) -> np.ndarray:
    """Causal filtering along axis 0 of a 2-D array, from the steady state of a constant
    input ``x[0]``, one block of samples at a time."""
    toeplitz, observe, feed, a_block, steady = matrices
    z = steady[:, None] * x[:1]
    y = np.empty_like(x)
    for i in range(0, x.shape[0], _BLOCK):
        xb = x[i:i + _BLOCK]
        b = xb.shape[0]
        y[i:i + b] = toeplitz[:b, :b] @ xb + observe[:b] @ z
        if b == _BLOCK:
            z = a_block @ z + feed @ xb
    return y


def sos_filtfilt(sos: np.ndarray, data: np.ndarray, padlen: int | None = None
                 ) -> np.ndarray:
    """Zero-phase filtering along axis 0 (each column a trace): forward, then backward.

    Parameters
    ----------
    sos : ndarray, shape (n_sections, 6)
        Second-order sections, e.g. from :func:`butter_bandpass_sos`.
    data : ndarray, shape (n_samples, ...)
        Records along axis 0; every other axis is filtered alike.
    padlen : int or None
        Samples of odd extension added at each end before filtering and removed after,
        ``0 <= padlen < n_samples``; None: three times the number of coefficients of the
        whole filter, ``3 (2 n_sections + 1)`` less 3 per first-order section (at most
        ``n_samples - 1``), the usual choice (as in scipy's ``sosfiltfilt``).

    Returns
    -------
    ndarray
        Same shape as ``data``: the magnitude response squared, no phase shift.
    """
    sos = np.ascontiguousarray(sos, dtype=float)
    if sos.ndim != 2 or sos.shape[1] != 6 or sos.shape[0] < 1:
        raise ValueError(f"sos must have shape (n_sections, 6), got {sos.shape}")
    data = np.asarray(data, dtype=float)
    shape = data.shape
    x = data.reshape(shape[0], -1) if data.ndim != 2 else data
    n = x.shape[0]
    if n < 2:
        raise ValueError(f"data needs at least 2 samples along axis 0, got {n}")
    if padlen is None:
        first_order = min(int(np.sum(sos[:, 2] == 0.0)), int(np.sum(sos[:, 5] == 0.0)))
        padlen = min(3 * (2 * sos.shape[0] + 1 - first_order), n - 1)
    if not 0 <= padlen < n:
        raise ValueError(f"padlen = {padlen} must lie in [0, {n - 1}]")
    if padlen:
        x = np.concatenate([2.0 * x[:1] - x[padlen:0:-1], x,
                            2.0 * x[-1:] - x[-2:-padlen - 2:-1]])
    matrices = _block_matrices(sos.tobytes(), sos.shape[0])
    y = _filter_from_steady(matrices, x)
    y = _filter_from_steady(matrices, np.ascontiguousarray(y[::-1]))[::-1]
    return y[padlen:padlen + n].reshape(shape)


def analytic_signal(data: np.ndarray, axis: int = 0) -> np.ndarray:
    """Analytic signal ``x + j H{x}`` along ``axis`` (Marple 1999).

    Parameters
    ----------
    data : ndarray
        Real records.
    axis : int
        Axis along which each record runs.

    Returns
    -------
    ndarray of complex
        Same shape; its magnitude is the envelope.
    """
    x = np.asarray(data, dtype=float)
    n = x.shape[axis]
    if n < 1:
        raise ValueError("data needs at least one sample along the axis")
    weight = np.zeros(n)
    weight[0] = 1.0
    if n % 2 == 0:
        weight[n // 2] = 1.0
        weight[1:n // 2] = 2.0
    else:
        weight[1:(n + 1) // 2] = 2.0
    shape = [1] * x.ndim
    shape[axis] = n
    return sfft.ifft(sfft.fft(x, axis=axis) * weight.reshape(shape), axis=axis)
