"""Velocity from the shape of a diffraction hyperbola (semblance scan)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._validate import check_range
from ..radargram import Radargram
from ._common import VELOCITY_MAX_M_S, VELOCITY_MIN_M_S, check_velocity, sample_interval_s
from .dsp import analytic_signal

__all__ = ["VelocityEstimate", "velocity_analysis", "semblance"]


@dataclass(frozen=True, eq=False)
class VelocityEstimate:
    """Result of :func:`velocity_analysis`.

    Attributes
    ----------
    velocity_m_s : float
        Velocity of the best-fitting hyperbola, m/s (refined between scan points).
    coherence : float
        Semblance at the best scan point, 0 (no coherence) to 1 (identical traces).
    velocities_m_s : ndarray
        Scanned velocities, m/s.
    coherence_curve : ndarray
        Semblance for each scanned velocity.
    apex_time_s : float
        Apex two-way time used, s (the pick, or its refinement).
    """

    velocity_m_s: float
    coherence: float
    velocities_m_s: np.ndarray
    coherence_curve: np.ndarray
    apex_time_s: float = float("nan")

    def __post_init__(self) -> None:
        for name in ("velocities_m_s", "coherence_curve"):
            a = np.array(getattr(self, name), dtype=float, copy=True)
            a.setflags(write=False)
            object.__setattr__(self, name, a)


def semblance(gathered: np.ndarray, valid: np.ndarray) -> np.ndarray:
    """Semblance of traces aligned along a trajectory (Taner & Koehler 1969, Geophysics
    34(6) "Velocity spectra - digital computer derivation and applications").

    ``S = sum_k (sum_j a_jk)**2 / (N sum_k sum_j a_jk**2)`` with ``j`` the traces, ``k`` the
    samples of the time gate and ``N`` the number of valid traces.

    Parameters
    ----------
    gathered : ndarray, shape (..., n_traces, n_gate)
        Amplitudes picked along the trajectory (zero where not valid).
    valid : ndarray of bool, shape (..., n_traces)
        Which traces lie inside the record.
    """
    num = np.sum(np.sum(gathered, axis=-2) ** 2, axis=-1)
    den = np.sum(gathered**2, axis=(-2, -1)) * np.sum(valid, axis=-1)
    return np.divide(num, den, out=np.zeros_like(num), where=den > 0.0)


def _refine_apex_s(trace: np.ndarray, t: np.ndarray, t0: float, search: float) -> float:
    """Time of the envelope peak of ``trace`` within ``t0 +- search`` (parabolic refinement)."""
    env = np.abs(analytic_signal(trace))
    win = np.flatnonzero(np.abs(t - t0) <= search + 1e-15)
    if win.size == 0 or not np.any(env[win] > 0.0):
        return t0
    i = int(win[np.argmax(env[win])])
    if 0 < i < t.size - 1:
        y0, y1, y2 = env[i - 1: i + 2]
        denom = y0 - 2.0 * y1 + y2
        if denom < 0.0:
            return float(t[i] + float(np.clip(0.5 * (y0 - y2) / denom, -0.5, 0.5)) * (t[1] - t[0]))
    return float(t[i])


def velocity_analysis(rg: Radargram, position_m: float, time_s: float,
                      velocities_m_s: object = None, *, window_s: float = 1.5e-9,
                      search_s: float = 1e-9,
                      half_aperture_m: float | None = None,
                      radius_m: float = 0.0,
                      antenna_height_m: float = 0.0) -> VelocityEstimate:
    """Scan velocity by semblance along zero-offset diffraction hyperbolas.

    The apex time is first moved to the envelope peak of the trace nearest ``x0`` within
    ``search_s`` of the pick. For every trial velocity ``v`` the amplitudes on
    ``t(x) = sqrt(t0**2 + (2 (x - x0) / v)**2)`` (a gate of ``window_s`` centred on it) are
    compared by :func:`semblance`; the best velocity is refined by a parabola through the
    neighbouring scan points.

    Parameters
    ----------
    rg : Radargram
        Section with the hyperbola (background removal first helps).
    position_m : float
        Picked apex position ``x0``, m, on the line.
    time_s : float
        Picked apex two-way time ``t0``, s, inside the record.
    velocities_m_s : array_like or None
        Trial velocities, m/s, each in [0.03e9, c0]; default 0.08e9 to c0 every 1 mm/ns.
    window_s : float
        Length of the time gate, s (about one pulse period is usual; common practice).
    search_s : float
        Half-width of the apex-time refinement, s (0: use the pick as it is).
    half_aperture_m : float or None
        Use traces within this distance of ``x0``, m (default: all traces).
    radius_m : float
        Radius of curvature of the target's top, m, in [0, 5]. 0 is a point diffractor;
        a larger radius uses the flatter curve of a cylinder whose top is at ``t0``,
        ``t(x) = (2 / v) (sqrt((x - x0)**2 + (v t0 / 2 + R)**2) - R)``
        (hyperbola fitting with target radius, Shihab & Al-Nuaimy 2005, Journal of
        Intelligent and Robotic Systems; formula from memory). Fitting a point hyperbola
        to a body-sized target overestimates the velocity.
    antenna_height_m : float
        Height of the antenna above the snow, m, in [0, 30]. With a height, ``time_s`` and
        the record's times are counted from the antenna, and each trial trajectory follows
        the ray refracted at the snow surface (Snell's law, air velocity c0) to the centre
        of curvature: an antenna only 5 cm up already flattens the flanks enough that the
        in-snow formula reads the velocity about 3 % high (measured on simulated data).

    Returns
    -------
    VelocityEstimate
    """
    dt = sample_interval_s(rg)
    x = rg.position_m
    t = rg.time_s
    x0 = check_range("position_m", position_m, float(x[0]), float(x[-1]), unit="m")
    t0 = check_range("time_s", time_s, max(float(t[0]), 0.0), float(t[-1]), unit="s",
                     low_open=True)
    if velocities_m_s is None:
        vel = np.arange(0.08e9, VELOCITY_MAX_M_S, 1e6)
    else:
        vel = np.atleast_1d(np.asarray(velocities_m_s, dtype=float))
        if vel.ndim != 1 or vel.size < 3:
            raise ValueError(f"velocities_m_s needs at least 3 values, got {vel.size}")
        for v in (vel.min(), vel.max()):
            check_velocity("velocities_m_s", v)
        vel = np.sort(vel)
    duration = float(t[-1] - t[0])
    gate = check_range("window_s", window_s, 0.0, duration, unit="s")
    search = check_range("search_s", search_s, 0.0, duration, unit="s")
    span = float(x[-1] - x[0])
    if half_aperture_m is None:
        half_aperture_m = max(x0 - float(x[0]), float(x[-1]) - x0)
    half_ap = check_range("half_aperture_m", half_aperture_m, 0.0, max(span, 0.0), unit="m")
    sel = np.flatnonzero(np.abs(x - x0) <= half_ap + 1e-12)
    if sel.size < 2:
        raise ValueError(f"half_aperture_m = {half_ap:g} m takes in {sel.size} trace(s); "
                         "at least 2 are needed")
    data = rg.data[:, sel]
    h = x[sel] - x0
    k = np.arange(-(int(round(gate / dt)) // 2), int(round(gate / dt)) // 2 + 1) * dt
    nt = t.size
    if search > 0.0:
        t0 = _refine_apex_s(rg.data[:, int(np.argmin(np.abs(x - x0)))], t, t0, search)
    radius = check_range("radius_m", radius_m, 0.0, 5.0, unit="m")
    height = check_range("antenna_height_m", antenna_height_m, 0.0, 30.0, unit="m")
    vv = vel[:, None]
    if height > 0.0:
        tt = _refracted_times(np.abs(h)[None, :], vv, t0, radius, height)
    else:
        tt = 2.0 / vv * (np.sqrt(h[None, :] ** 2 + (0.5 * vv * t0 + radius) ** 2) - radius)
    idx = (tt[:, :, None] + k[None, None, :] - t[0]) / dt  # (nv, nh, nk)
    valid = ((idx >= 0.0) & (idx <= nt - 1)).all(axis=-1)
    idc = np.clip(idx, 0.0, nt - 1)
    i0 = np.minimum(np.floor(idc).astype(np.intp), nt - 2)
    fr = idc - i0
    cols = np.arange(sel.size)[None, :, None]
    a = data[i0, cols] * (1.0 - fr) + data[i0 + 1, cols] * fr
    curve = semblance(np.where(valid[:, :, None], a, 0.0), valid)
    i_v = int(np.argmax(curve))
    v_best = float(vel[i_v])
    if 0 < i_v < vel.size - 1:
        y0, y1, y2 = curve[i_v - 1: i_v + 2]
        denom = y0 - 2.0 * y1 + y2
        if denom < 0.0:
            d = float(np.clip(0.5 * (y0 - y2) / denom, -1.0, 1.0))
            step = vel[i_v + 1] - vel[i_v] if d > 0 else vel[i_v] - vel[i_v - 1]
            v_best = float(np.clip(vel[i_v] + d * step, VELOCITY_MIN_M_S, VELOCITY_MAX_M_S))
    return VelocityEstimate(
        velocity_m_s=v_best,
        coherence=float(curve[i_v]),
        velocities_m_s=vel,
        coherence_curve=curve,
        apex_time_s=float(t0),
    )


def _refracted_times(x: np.ndarray, v: np.ndarray, t0: float, radius: float,
                     height: float) -> np.ndarray:
    """Two-way times from an antenna at ``height`` to a curved target in snow of velocity
    ``v``, the top of which is at two-way time ``t0`` straight below.

    The ray to the centre of curvature obeys Snell's law at the surface,
    ``sin(theta_air) / c0 = sin(theta_snow) / v``; its last leg is along the target's normal,
    so the echo time is the time to the centre minus the radius there and back. Newton's
    method in u = tan(theta_air) (the offset is increasing and concave in u).
    """
    c0 = 299_792_458.0
    z_c = np.maximum(0.5 * v * (t0 - 2.0 * height / c0), 0.0) + radius  # centre depth
    q = v / c0
    u = x / (height + z_c * q)
    for _ in range(50):
        s2 = u * u / (1.0 + u * u)
        root = np.sqrt(1.0 - q * q * s2)
        f = height * u + z_c * q * np.sqrt(s2) / root - x
        dfds = z_c * q / root**3
        dfdu = height + dfds * (1.0 + u * u) ** -1.5
        u = np.maximum(u - f / dfdu, 0.0)
        if np.max(np.abs(f)) < 1e-9:
            break
    cos_air = 1.0 / np.sqrt(1.0 + u * u)
    s_snow = q * u * cos_air
    cos_snow = np.sqrt(1.0 - s_snow * s_snow)
    return 2.0 * (height / (c0 * cos_air) + z_c / (v * cos_snow)) - 2.0 * radius / v
