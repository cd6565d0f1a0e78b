"""Refracted ray paths from an antenna in air to points inside a horizontally layered snowpack.

For a point at horizontal distance X and depth z below an antenna at height h, the ray
obeys Snell's law at every interface, ``sin(theta_0) = n_j sin(theta_j)`` (n_j the real
index of layer j at the centre frequency), and

    X = h tan(theta_0) + sum_j D_j tan(theta_j),

with D_j the thickness of layer j above z. :func:`solve_rays` finds theta_0 by Newton's
method in u = tan(theta_0) (X(u) is increasing and concave, so Newton from the paraxial
start converges monotonically) and returns, for the two-way path:

- the travel time ``2 (h / (c cos theta_0) + sum_j D_j n_j / (c cos theta_j))``;
- the two-way transmission through every interface crossed, prod (1 - r^2), with the
  Fresnel coefficient of the radar's polarisation in the ray's plane of incidence: TE
  (E across that plane; ``Radar.polarization == "across_line"`` for a target below the
  line) or TM (E in it; "along_line");
- the two-way attenuation ``exp(-2 sum_j alpha_j D_j / cos theta_j)``;
- the two-way geometrical spreading ``R_par' R_perp`` that goes with that two-way
  transmission: a scatterer at the end point returns ``T2 / (R_par' R_perp)`` times its
  own scattering factor (with the free-space wavenumber in the physical-optics prefactor).

Spreading. One way, the field of a unit spherical wave from the antenna is
``t_down / sqrt(R_par R_perp)`` with ``R_perp = X / sin(theta_0) = sum_j D_j / (n_j cos
theta_j)`` and ``R_par = cos(theta_0) dX/dtheta_0`` (air counted as a layer of index 1 and
thickness h), from power conservation in a ray tube with the TE power transmittance (e.g.
Cerveny, *Seismic Ray Theory*, 2001, ch. 4 for the ray-tube form; derivation ours; the TM
power transmittance 1 - r_TM^2 enters the same way, since the power a tube carries is
|E|^2 n cos(theta) for both polarisations). The way
back is not the way down with the upward Fresnel coefficients: by reciprocity (the TE field
obeys a scalar Helmholtz equation whose Green's function is symmetric in source and
observer) the return leg equals the downward leg, so the two-way field is
``k_loc t_down^2 / (R_par R_perp)`` with ``k_loc = n_loc k0``. Written with the two-way
transmission ``T2 = t_down t_up`` and ``k0``, the TE admittance ratios telescope
(``t_up / t_down = n_loc cos(theta_loc) / cos(theta_0)``) and the in-plane factor becomes
``R_par' = cos(theta_loc) dX/dtheta_0 = R_par cos(theta_loc) / cos(theta_0)``: the width
of the ray tube across the ray where it ends, not where it left the antenna. Counting
``R_par`` instead made hyperbola flanks too bright by ``cos(theta_loc) / cos(theta_0)``
(+2.3 dB at 53 deg in air over snow of index 1.28, measured against 3-D ray-tube theory
of a sphere and the 2-D FDTD of :mod:`snowprobe_widgets.fdtd2d` for a buried cylinder in
``tests/test_hyperbola_flank.py``). At normal incidence both
equal ``h + sum_j D_j / n_j``, the image distance used by the point-antenna trace.

:class:`RayTable` tabulates these on a grid of (X, z) for fast bilinear look-up.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .constants import C0_M_S

__all__ = ["RayResult", "solve_rays", "RayTable", "layers_above_m", "ray_polyline",
           "ray_polarization"]

#: Polarisation in the ray's plane of incidence for each ``Radar.polarization`` (the plane
#: is the vertical plane along the line for a target below it).
_IN_PLANE = {"across_line": "TE", "along_line": "TM"}


def ray_polarization(radar_polarization: str) -> str:
    """"TE" or "TM" in the vertical plane of the survey line for a radar polarisation
    ("across_line": E across that plane, TE; "along_line": E in it, TM)."""
    return _IN_PLANE[radar_polarization]


def layers_above_m(thickness_m: np.ndarray, depth_m: float) -> np.ndarray:
    """How much of each layer lies above ``depth_m`` (surface at 0), m, shape (n_layers,)."""
    thick = np.asarray(thickness_m, float)
    tops = np.concatenate([[0.0], np.cumsum(thick)[:-1]])
    return np.clip(depth_m - tops, 0.0, thick)


@dataclass(frozen=True, eq=False)
class RayResult:
    """Two-way ray quantities, arrays of the broadcast shape of X and z.

    Attributes
    ----------
    time_s : ndarray
        Two-way travel time, s.
    transmission : ndarray
        Two-way interface transmission, prod (1 - r^2), r the TE or TM Fresnel
        coefficient.
    attenuation : ndarray
        Two-way amplitude attenuation factor.
    spreading_m2 : ndarray
        Two-way spreading R_par' * R_perp, m^2 (the two-way amplitude falls as
        transmission / spreading_m2; see the module notes).
    sin_theta0 : ndarray
        Sine of the ray's angle from the vertical in air.
    sin_theta_local : ndarray
        Sine of the ray's angle from the vertical in the medium at the end point.
    reached : ndarray of bool
        False where no real ray reaches the point (antenna on the surface and the point
        beyond the critical angle).
    """

    time_s: np.ndarray
    transmission: np.ndarray
    attenuation: np.ndarray
    spreading_m2: np.ndarray
    sin_theta0: np.ndarray
    sin_theta_local: np.ndarray
    reached: np.ndarray


def solve_rays(
    horizontal_m: np.ndarray,
    depth_m: np.ndarray,
    *,
    antenna_height_m: float,
    thickness_m: np.ndarray,
    index: np.ndarray,
    alpha_np_m: np.ndarray,
    iterations: int = 40,
    polarization: str = "TE",
) -> RayResult:
    """Trace refracted rays from the antenna to points (X, z) in the snowpack.

    Parameters
    ----------
    horizontal_m, depth_m : array_like
        Horizontal distance X >= 0 and depth z >= 0 of the end points, m (broadcast).
    antenna_height_m : float
        Antenna height above the surface, m.
    thickness_m, index, alpha_np_m : ndarray, shape (n_layers,)
        Layer thicknesses (m), real refractive indices (>= 1) and amplitude attenuation
        coefficients (Np/m) at the centre frequency; the last layer is taken to extend
        below its bottom if z lies deeper.
    polarization : {"TE", "TM"}
        Polarisation in the plane of incidence for the interface transmission
        (:func:`ray_polarization` of the radar's).

    Returns
    -------
    RayResult
    """
    X, z = np.broadcast_arrays(np.asarray(horizontal_m, float), np.asarray(depth_m, float))
    thick = np.asarray(thickness_m, float).copy()
    thick[-1] = max(thick[-1], float(np.max(z)) - float(thick[:-1].sum()) + 1.0)
    n = [float(v) for v in np.asarray(index, float)]
    alpha = [float(v) for v in np.asarray(alpha_np_m, float)]
    tops = np.concatenate([[0.0], np.cumsum(thick)[:-1]])
    # the part of each layer above z; layers wholly below every point are dropped
    D = [np.clip(z - top, 0.0, d) for top, d in zip(tops, thick, strict=True)
         if top < float(np.max(z)) or top == 0.0]
    n = n[:len(D)]
    alpha = alpha[:len(D)]
    h = float(antenna_height_m)
    # Newton in u = tan(theta0) from the paraxial start
    u = X / (h + sum(d / nj for d, nj in zip(D, n, strict=True)) + 1e-300)
    for _ in range(iterations):
        s2 = u * u / (1.0 + u * u)
        s = np.sqrt(s2)
        f = h * u - X
        dfds = np.zeros_like(u)
        for d, nj in zip(D, n, strict=True):
            inv_root = 1.0 / np.sqrt(nj * nj - s2)
            f += d * s * inv_root
            dfds += d * (nj * nj) * inv_root**3
        dfdu = h + dfds * (1.0 + u * u) ** -1.5
        u = np.clip(u - f / np.where(dfdu > 0, dfdu, 1.0), 0.0, 1e6)  # 1e6: grazing
        if np.max(np.abs(f)) < 1e-9:  # 1 nm: far below any grid or sample spacing
            break
    c0 = 1.0 / np.sqrt(1.0 + u * u)
    s = u * c0
    resid = h * u - X
    time = h / c0
    att = np.zeros_like(u)
    r_perp = h / c0
    r_par_sum = h / c0**3
    trans = np.ones_like(u)
    # r = (q_above - q) / (q_above + q) with q = n cos(theta) (TE) or cos(theta) / n (TM):
    # the Fresnel coefficients divided through by n_above n (e.g. Born & Wolf, Principles
    # of Optics, 7th ed., sec. 1.5.2)
    tm = polarization == "TM"
    ncos_above = c0
    s_local = s.copy()
    for j, (d, nj, aj) in enumerate(zip(D, n, alpha, strict=True)):
        cj = np.sqrt(1.0 - (s / nj) ** 2)
        resid = resid + d * s / (nj * cj)
        path = d / cj
        time = time + path * nj
        att = att + aj * path
        r_perp = r_perp + d / (nj * cj)
        r_par_sum = r_par_sum + d / (nj * cj**3)
        ncos = cj / nj if tm else nj * cj
        r = (ncos_above - ncos) / (ncos_above + ncos)
        entered = (d > 0) if j > 0 else np.ones(u.shape, bool)
        trans = np.where(entered, trans * (1.0 - r * r), trans)
        s_local = np.where(entered, s / nj, s_local)
        ncos_above = np.where(entered, ncos, ncos_above)
    reached = np.abs(resid) < 1e-6
    time = 2.0 * time / C0_M_S
    att = np.exp(-2.0 * att)
    # R_par' = cos(theta_loc) dX/dtheta_0, with dX/dtheta_0 = cos(theta_0) r_par_sum
    r_par_two_way = np.sqrt(np.maximum(1.0 - s_local * s_local, 0.0)) * c0 * r_par_sum
    return RayResult(time, trans, att, np.maximum(r_par_two_way * r_perp, 1e-12), s, s_local,
                     reached)


@dataclass(frozen=True, eq=False)
class RayTable:
    """Ray quantities tabulated on a regular (X, z) grid, with bilinear look-up.

    Build with :meth:`build`; query with :meth:`lookup`. Grid steps of a few centimetres
    keep the interpolated travel time within a few picoseconds of the exact ray (the time
    curvature d2t/dX2 ~ 1 / (v z) is small; checked in the tests).
    """

    x0_m: float
    dx_m: float
    z0_m: float
    dz_m: float
    time_s: np.ndarray
    gain: np.ndarray
    sin_theta0: np.ndarray
    sin_theta_local: np.ndarray

    @classmethod
    def build(
        cls,
        x_max_m: float,
        z_range_m: tuple[float, float],
        *,
        antenna_height_m: float,
        thickness_m: np.ndarray,
        index: np.ndarray,
        alpha_np_m: np.ndarray,
        beam: np.ndarray | None = None,
        dx_m: float = 0.03,
        dz_m: float = 0.015,
        polarization: str = "TE",
    ) -> RayTable:
        """Tabulate X in [0, x_max_m] and z in ``z_range_m``.

        ``gain`` = transmission * attenuation / spreading (1/m^2), times the beam weight
        when ``beam`` is given (a callable of the air angle in radians); ``polarization``
        as in :func:`solve_rays`.
        """
        nx = max(int(math.ceil(x_max_m / dx_m)) + 2, 2)
        z_lo, z_hi = z_range_m
        nz = max(int(math.ceil((z_hi - z_lo) / dz_m)) + 2, 2)
        x = np.arange(nx) * dx_m
        z = z_lo + np.arange(nz) * dz_m
        res = solve_rays(x[:, None], z[None, :], antenna_height_m=antenna_height_m,
                         thickness_m=thickness_m, index=index, alpha_np_m=alpha_np_m,
                         polarization=polarization)
        gain = res.transmission * res.attenuation / res.spreading_m2
        if beam is not None:
            gain = gain * beam(np.arcsin(np.clip(res.sin_theta0, 0.0, 1.0)))
        gain = np.where(res.reached, gain, 0.0)
        return cls(0.0, dx_m, z_lo, dz_m, res.time_s, gain, res.sin_theta0,
                   res.sin_theta_local)

    def along_x(self, z_m: np.ndarray) -> AlongX:
        """The table interpolated (linearly in z) at fixed depths ``z_m`` (one per facet):
        1-D tables over X for fast per-(trace, facet) look-up with :meth:`AlongX.lookup`."""
        nx, nz = self.time_s.shape
        fz = np.clip((np.asarray(z_m, float) - self.z0_m) / self.dz_m, 0.0, nz - 1.000001)
        iz = fz.astype(np.intp)
        wz = fz - iz
        tabs = []
        for tab in (self.time_s, self.gain, self.sin_theta_local):
            v = tab[:, iz].T * (1 - wz)[:, None] + tab[:, iz + 1].T * wz[:, None]
            tabs.append(np.ascontiguousarray(v))
        return AlongX(self.dx_m, nx, *tabs)

    def _stacked(self) -> np.ndarray:
        cached = self.__dict__.get("_stack")
        if cached is None:
            cached = np.stack([self.time_s.ravel(), self.gain.ravel(),
                               self.sin_theta0.ravel(), self.sin_theta_local.ravel()], axis=-1)
            object.__setattr__(self, "_stack", cached)
        return cached

    def lookup(self, x_m: np.ndarray, z_m: np.ndarray) -> tuple[np.ndarray, ...]:
        """Bilinear values (time_s, gain, sin_theta0, sin_theta_local) at (x_m, z_m).

        Points outside the grid are clamped to its edge (build the table to cover them).
        """
        nx, nz = self.time_s.shape
        fx = np.clip((x_m - self.x0_m) / self.dx_m, 0.0, nx - 1.000001)
        fz = np.clip((z_m - self.z0_m) / self.dz_m, 0.0, nz - 1.000001)
        ix = fx.astype(np.intp)
        iz = fz.astype(np.intp)
        wx = fx - ix
        wz = fz - iz
        stack = self._stacked()
        i00 = ix * nz + iz
        w00 = ((1 - wx) * (1 - wz))[..., None]
        w01 = ((1 - wx) * wz)[..., None]
        w10 = (wx * (1 - wz))[..., None]
        w11 = (wx * wz)[..., None]
        v = (stack[i00] * w00 + stack[i00 + 1] * w01 + stack[i00 + nz] * w10
             + stack[i00 + nz + 1] * w11)
        out = [v[..., i] for i in range(v.shape[-1])]
        return tuple(out)


@dataclass(frozen=True, eq=False)
class AlongX:
    """Per-point 1-D ray tables over horizontal distance (see :meth:`RayTable.along_x`).

    ``time_s``, ``gain`` and ``sin_theta_local`` have shape (n_points, n_x), X from 0 in
    steps of ``dx_m``.
    """

    dx_m: float
    n_x: int
    time_s: np.ndarray
    gain: np.ndarray
    sin_theta_local: np.ndarray

    def lookup(self, x_m: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Linear values (time_s, gain, sin_theta_local) at ``x_m``, shape (..., n_points)."""
        fx = np.clip(x_m / self.dx_m, 0.0, self.n_x - 1.000001)
        ix = fx.astype(np.intp)
        w = fx - ix
        flat = ix + np.arange(self.time_s.shape[0]) * self.n_x
        out = []
        for tab in (self.time_s, self.gain, self.sin_theta_local):
            t = tab.ravel()
            a = t.take(flat)
            out.append(a + (t.take(flat + 1) - a) * w)
        return out[0], out[1], out[2]


def ray_polyline(
    horizontal_m: float,
    depth_m: float,
    *,
    antenna_height_m: float,
    thickness_m: np.ndarray,
    index: np.ndarray,
) -> tuple[np.ndarray, np.ndarray]:
    """Corners of the refracted ray from the antenna to a point (X, z), for drawing.

    Returns
    -------
    run_m, depth_m : ndarray
        Horizontal distance from the antenna and depth (negative above the surface: the
        antenna at ``-antenna_height_m``) of the antenna, the surface crossing, every
        interface crossing and the end point; Snell's law at each (:func:`solve_rays`).
    """
    thick = np.asarray(thickness_m, float)
    n = np.asarray(index, float)
    res = solve_rays(np.array(float(horizontal_m)), np.array(float(depth_m)),
                     antenna_height_m=antenna_height_m, thickness_m=thick, index=n,
                     alpha_np_m=np.zeros_like(n))
    s = float(res.sin_theta0)
    h = float(antenna_height_m)
    run = [0.0, h * s / math.sqrt(max(1.0 - s * s, 1e-12))]
    depth = [-h, 0.0]
    z = 0.0
    extended = thick.copy()
    extended[-1] = max(extended[-1], float(depth_m))
    for d, nj in zip(extended, n, strict=True):
        step = min(d, float(depth_m) - z)
        if step <= 0:
            break
        run.append(run[-1] + step * s / math.sqrt(max(nj * nj - s * s, 1e-12)))
        z += step
        depth.append(z)
    return np.asarray(run), np.asarray(depth)
