"""Amplitude bookkeeping shared by the radargram synthesis and the link budget.

Both must count the same decibels, so both use these functions.

Normalisation. Fields are computed for a unit spherical wave leaving the antenna,
``E_inc = exp(-j k r) / r`` (r in m), so that a flat reflector with coefficient ``r_c`` seen
through image theory returns ``E_s = r_c / (2 R)`` with R the (paraxial) one-way distance,
and a point target of radar cross-section sigma returns ``|E_s| = sqrt(sigma) / (sqrt(4 pi) R^2)``.
The received amplitude, relative to the square root of the transmitted power, is then

    A = G * lambda_c / (4 pi) * E_s,

which reproduces the monostatic radar equation P_r / P_t = G^2 lambda^2 sigma / ((4 pi)^3 R^4)
(Skolnik, Introduction to Radar Systems, 3rd ed., 2001, eq. 1.7; from memory) and its
specular-reflector form P_r / P_t = G^2 lambda^2 |r|^2 / ((4 pi)^2 (2R)^2) used in GPR
range equations (Annan 2001, GPR workshop notes ch. 6; Daniels 2004, Ground Penetrating
Radar, 2nd ed., ch. 2; structure from those sources, exact notation ours). The antenna is
taken to keep its centre-frequency effective aperture across the band (lambda_c constant),
a simplification stated wherever results are shown.

Receiver noise is white Gaussian with an rms amplitude, relative to sqrt(P_t), of
10^((noise_floor_dbm - transmit_power_dbm) / 20) per raw trace, reduced by sqrt(stacking)
when N traces are stacked (averaging of independent noise; common practice).
"""

from __future__ import annotations

import numpy as np

from .constants import C0_M_S

__all__ = [
    "antenna_factor",
    "beam_weight",
    "noise_rms",
    "db20",
]


def antenna_factor(gain_dbi: float, center_frequency_hz: float) -> float:
    """Return G * lambda_c / (4 pi): field at the antenna -> received amplitude re sqrt(P_t).

    Parameters
    ----------
    gain_dbi : float
        Antenna gain (same antenna transmits and receives), dBi.
    center_frequency_hz : float
        Centre frequency whose free-space wavelength sets the effective aperture, Hz.
    """
    gain = 10.0 ** (gain_dbi / 10.0)
    return float(gain * (C0_M_S / center_frequency_hz) / (4.0 * np.pi))


def beam_weight(angle_rad: np.ndarray, beamwidth_deg: float) -> np.ndarray:
    """Two-way amplitude weight of a Gaussian beam at off-axis angle ``angle_rad`` (in air).

    The one-way power pattern is exp(-4 ln 2 (theta / BW)^2) with BW the full -3 dB
    beamwidth (a Gaussian main-lobe model, common practice for GPR antenna footprints);
    the two-way amplitude weight equals the one-way power pattern.

    Returns
    -------
    ndarray
        Weights in (0, 1], same shape as ``angle_rad``.
    """
    bw = np.radians(beamwidth_deg)
    return np.exp(-4.0 * np.log(2.0) * (np.asarray(angle_rad) / bw) ** 2)


def noise_rms(transmit_power_dbm: float, noise_floor_dbm: float, stacking: int) -> float:
    """RMS receiver-noise amplitude per sample, relative to sqrt(P_t), after stacking."""
    return float(10.0 ** ((noise_floor_dbm - transmit_power_dbm) / 20.0) / np.sqrt(stacking))


def db20(x: np.ndarray | float) -> np.ndarray | float:
    """Amplitude ratio in dB, 20 log10 |x|, with a floor at -400 dB instead of -inf."""
    return 20.0 * np.log10(np.maximum(np.abs(x), 1e-20))
