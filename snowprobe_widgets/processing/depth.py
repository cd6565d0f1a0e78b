"""Two-way time to depth below the snow surface, for one velocity or a layered column.

A :class:`~snowprobe_widgets.radargram.Radargram` only has a time axis, so depth is
computed on the side: :func:`depth_axis_m` gives the depth of every time sample and
:func:`time_to_depth` resamples the data onto a uniform depth axis and returns both.
"""

from __future__ import annotations

import numpy as np

from .._validate import check_range
from ..constants import C0_M_S
from ..radargram import Radargram
from ._common import check_velocity, sample_interval_s

__all__ = ["depth_axis_m", "time_to_depth"]


def _column(velocity_m_s: object, layer_thickness_m: object,
            antenna_height_m: float) -> tuple[np.ndarray, np.ndarray, float]:
    """Velocities, interface times (two-way, s) and the surface time of the column."""
    v = np.atleast_1d(np.asarray(velocity_m_s, dtype=float))
    if v.ndim != 1 or v.size == 0:
        raise ValueError("velocity_m_s must be one velocity or a sequence of layer velocities")
    for i, vi in enumerate(v):
        check_velocity("velocity_m_s" if v.size == 1 else f"velocity_m_s[{i}]", vi)
    if layer_thickness_m is None:
        d = np.zeros(0)
    else:
        d = np.atleast_1d(np.asarray(layer_thickness_m, dtype=float))
        for i, di in enumerate(d):
            check_range(f"layer_thickness_m[{i}]", di, 0.0, 1e4, unit="m", low_open=True)
    if d.size != v.size - 1:
        raise ValueError(
            f"layer_thickness_m has {d.size} value(s); {v.size} velocities need "
            f"{v.size - 1} (the last layer extends downward without end)"
        )
    h = check_range("antenna_height_m", antenna_height_m, 0.0, 100.0, unit="m")
    t_surface = 2.0 * h / C0_M_S
    t_iface = t_surface + np.concatenate(([0.0], np.cumsum(2.0 * d / v[:-1])))
    return v, t_iface, t_surface


def _depth_of_time(t: np.ndarray, v: np.ndarray, t_iface: np.ndarray,
                   d_iface: np.ndarray, t_surface: float) -> np.ndarray:
    layer = np.clip(np.searchsorted(t_iface, t, side="right") - 1, 0, v.size - 1)
    below = d_iface[layer] + 0.5 * v[layer] * (t - t_iface[layer])
    above = 0.5 * C0_M_S * (t - t_surface)
    return np.where(t >= t_surface, below, above)


def depth_axis_m(time_s: object, velocity_m_s: object, antenna_height_m: float = 0.0,
                 layer_thickness_m: object = None) -> np.ndarray:
    """Depth below the snow surface of each two-way time, m.

    Parameters
    ----------
    time_s : array_like
        Two-way travel times from the antenna, s.
    velocity_m_s : float or sequence of float
        Velocity of the snow, or of each layer from the top down, m/s, each in
        [0.03e9, c0].
    antenna_height_m : float
        Height of the antenna above the snow surface, m; the air gap is crossed at c0 and
        the surface echo arrives at ``2 h / c0``.
    layer_thickness_m : sequence of float or None
        Thickness of every layer but the last, m (one fewer than the velocities).

    Returns
    -------
    ndarray
        ``depth = v (t - t_surface) / 2`` inside one layer, accumulated layer by layer;
        negative (in the air, at c0) before the surface echo.
    """
    t = np.asarray(time_s, dtype=float)
    v, t_iface, t_surface = _column(velocity_m_s, layer_thickness_m, antenna_height_m)
    d_iface = np.concatenate(([0.0], np.cumsum(0.5 * v[:-1] * np.diff(t_iface))))
    return _depth_of_time(t, v, t_iface, d_iface, t_surface)


def time_to_depth(rg: Radargram, velocity_m_s: object, antenna_height_m: float = 0.0,
                  layer_thickness_m: object = None,
                  depth_step_m: float | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Resample a radargram from time onto a uniform depth axis.

    Parameters
    ----------
    rg : Radargram
        Section on its time axis.
    velocity_m_s, antenna_height_m, layer_thickness_m
        The column, as in :func:`depth_axis_m`.
    depth_step_m : float or None
        Depth sampling, m; default ``min(v) dt / 2``, fine enough not to lose any sample.

    Returns
    -------
    depth_m : ndarray, shape (n_depth,)
        Uniform depths from that of the first to that of the last time sample, m
        (negative depths are in the air above the snow).
    data_m : ndarray, shape (n_depth, n_traces)
        The data interpolated linearly in time at the time of each depth. This is not a
        Radargram (whose axis is time) and is not added to the history.
    """
    dt = sample_interval_s(rg)
    v, t_iface, t_surface = _column(velocity_m_s, layer_thickness_m, antenna_height_m)
    d_iface = np.concatenate(([0.0], np.cumsum(0.5 * v[:-1] * np.diff(t_iface))))
    t = rg.time_s
    z_t = _depth_of_time(t, v, t_iface, d_iface, t_surface)
    span = float(z_t[-1] - z_t[0])
    if depth_step_m is None:
        depth_step_m = 0.5 * float(v.min()) * dt
    dz = check_range("depth_step_m", depth_step_m, 0.0, max(span, 1e-9), unit="m",
                     low_open=True)
    depth = z_t[0] + np.arange(int(np.floor(span / dz + 1e-9)) + 1) * dz
    t_of_z = np.interp(depth, z_t, t)
    idx = (t_of_z - t[0]) / dt
    i0 = np.minimum(np.floor(idx).astype(np.intp), t.size - 2)
    fr = (idx - i0)[:, None]
    data = rg.data[i0] * (1.0 - fr) + rg.data[i0 + 1] * fr
    return depth, data
