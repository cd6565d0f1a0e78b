"""A 2-D finite-difference time-domain (Yee) reference solver: a buried cylinder.

The second full-wave reference beside the 1-D column solver of
:mod:`snowprobe_widgets.fdtd`: a vertical plane (x along the survey line, z depth, positive
down, the snow surface at z = 0) over horizontal layers, with an infinitely long circular
cylinder lying across the line (its axis along y), excited by a line source at the antenna.
It checks what the 1-D solver cannot: refraction at the surface, the flanks of a
diffraction hyperbola and the two polarisations. Being 2-D, its source is a line, not a
point: amplitudes fall as 1 / sqrt(range) instead of 1 / range, so compare shapes, delays
and ratios between positions, not absolute amplitudes with the 3-D model.

Polarisations (named, as in :mod:`snowprobe_widgets.layered`, relative to the plane of
incidence, which is the x-z plane here):

- ``"TE"``: E along the cylinder axis (E_y, with H_x and H_z; the "TMz" or "Ez"
  formulation of FDTD texts). Source: an electric line current I(t) along y, whose field
  in a uniform medium is ``E_y = -(omega mu0 I / 4) H0^(2)(k rho)`` (Balanis, *Advanced
  Engineering Electromagnetics*, 1989, sect. 11.3).
- ``"TM"``: H along the axis (H_y, with E_x and E_z; the "TEz" or "Hz" formulation).
  Source: a magnetic line current M(t) along y, the dual of the TE source,
  ``H_y = -(omega eps M / 4) H0^(2)(k rho)``; recorded as ``eta0 H_y`` (V/m).

Scheme (Yee 1966; Taflove & Hagness, *Computational Electrodynamics*, 3rd ed. 2005):

- square cells dx, time step at Courant number ``COURANT`` (0.99 of the 2-D limit
  1/sqrt(2)); lossy media by the semi-implicit conductivity update (T&H eq. 3.28); media
  frozen at the pulse centre frequency as in the 1-D solver
  (``eps'(f0)`` and ``sigma = 2 pi f0 eps0 eps''(f0)``, as
  :func:`snowprobe_widgets.fdtd.frozen_at`);
- absorbing boundaries: a convolutional PML (Roden & Gedney, Microw. Opt. Technol. Lett.
  27, 2000; T&H sect. 7.9) of ``PML_CELLS`` cells on all four sides, polynomial grading
  m = 3, sigma_max = 0.8 (m + 1) / (eta0 dx), kappa = 1, alpha falling from
  2 pi f0 eps0 / 10 to 0 into the layer; behind it a perfect conductor;
- sub-cell averaging (where cheap): every E node takes the mean permittivity and
  conductivity of 4 x 4 samples of its cell (arithmetic; for the vertical E_z of the TM
  case the harmonic mean of the permittivity, exact for the normal field at horizontal
  interfaces); a perfect conductor fills a node when half or more of its samples lie in
  it (staircase);
- grid rule: ``dx = c / (f_high n_max cells_per_wavelength)`` with f_high the upper band
  edge of the pulse at -40 dB and n_max the largest real index in the domain (cylinder
  included), and at most the cylinder radius / 6. At the default 10 cells per shortest
  wavelength a Ricker pulse gets about 26 cells per wavelength at its centre frequency.

Entry points: :func:`solve_scene` (any source and receivers, used by the validation tests)
and :func:`cylinder_trace` (the monostatic echo of a buried cylinder at one antenna
position, background removed by a second run without the cylinder).
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from ._validate import check_choice, check_range
from .constants import C0_M_S, EPS0_F_M
from .fdtd import _frozen_params
from .materials import Material
from .pulses import Pulse

__all__ = ["POLARIZATIONS", "COURANT", "PML_CELLS", "BuriedCylinder", "Scene2D", "Fdtd2dGrid",
           "Fdtd2dResult", "grid_step_m", "solve_scene", "CylinderTrace", "cylinder_trace",
           "MAX_CELL_STEPS", "ScenarioCheck", "scenario_cylinder", "scenario_check"]

#: The two polarisations, relative to the plane of incidence (see the module notes).
POLARIZATIONS: tuple[str, ...] = ("TE", "TM")
#: Courant number c dt / dx: 0.99 of the 2-D stability limit 1 / sqrt(2).
COURANT = 0.99 / math.sqrt(2.0)
#: CPML thickness, cells (reflection below -60 dB for the pulses here; tested).
PML_CELLS = 12
_ETA0 = 376.730313668
_SUB = 4  # sub-samples per cell side for averaging
_DTYPE = np.float32
_MU0 = _ETA0 / C0_M_S


@dataclass(frozen=True)
class BuriedCylinder:
    """An infinitely long circular cylinder across the survey line.

    Parameters
    ----------
    position_m : float
        Along-line position of its axis, m.
    centre_depth_m : float
        Depth of its axis below the snow surface, m; the cylinder must lie below the
        surface (centre_depth_m >= radius_m).
    radius_m : float
        Radius, m, in [0.005, 2.5].
    material : Material
        What it is made of (frozen at the pulse centre frequency by the solver); a perfect
        conductor for metal.
    """

    position_m: float
    centre_depth_m: float
    radius_m: float
    material: Material

    def __post_init__(self) -> None:
        object.__setattr__(self, "position_m", check_range(
            "position_m", self.position_m, -1e4, 1e4, unit="m"))
        object.__setattr__(self, "radius_m", check_range(
            "radius_m", self.radius_m, 0.005, 2.5, unit="m"))
        object.__setattr__(self, "centre_depth_m", check_range(
            "centre_depth_m", self.centre_depth_m, self.radius_m, 100.0, unit="m"))
        if not isinstance(self.material, Material):
            raise ValueError(f"material must be a Material, got {type(self.material).__name__}")


@dataclass(frozen=True)
class Scene2D:
    """What fills the x-z plane: a medium above z = 0, layers below, maybe a cylinder.

    Parameters
    ----------
    x_range_m, z_range_m : (float, float)
        The region to compute (PML added outside it), m; z is depth, negative above the
        surface.
    layers : tuple of (thickness_m, eps_r, sigma_s_m)
        Layers below z = 0, top down; the last extends to the bottom of the domain.
    upper : (eps_r, sigma_s_m)
        The medium above z = 0 (air by default).
    cylinder : tuple (x_m, z_m, radius_m, eps_r, sigma_s_m, pec) or None
        A cylinder across the plane; ``pec`` True for a perfect conductor.
    """

    x_range_m: tuple[float, float]
    z_range_m: tuple[float, float]
    layers: tuple[tuple[float, float, float], ...]
    upper: tuple[float, float] = (1.0, 0.0)
    cylinder: tuple[float, float, float, float, float, bool] | None = None

    def __post_init__(self) -> None:
        for name in ("x_range_m", "z_range_m"):
            lo, hi = getattr(self, name)
            check_range(f"{name}[0]", lo, -1e4, 1e4, unit="m")
            check_range(f"{name}[1]", hi, float(lo), 1e4, unit="m", low_open=True)
        for j, (d, e, sg) in enumerate(self.layers):
            check_range(f"layers[{j}] thickness", d, 0.0, 1e4, unit="m", low_open=True)
            check_range(f"layers[{j}] eps_r", e, 1.0, 100.0)
            check_range(f"layers[{j}] sigma", sg, 0.0, 100.0, unit="S/m")
        check_range("upper eps_r", self.upper[0], 1.0, 100.0)
        check_range("upper sigma", self.upper[1], 0.0, 100.0, unit="S/m")
        if not self.layers:
            raise ValueError("layers must hold at least one layer (the last extends down)")

    def sample(self, x: np.ndarray, z: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(eps_r, sigma, perfect-conductor flag) at points (x, z), arrays of their shape."""
        eps = np.full(z.shape, float(self.upper[0]))
        sig = np.full(z.shape, float(self.upper[1]))
        top = 0.0
        for j, (d, e, s) in enumerate(self.layers):
            last = j == len(self.layers) - 1
            inside = (z >= top) & ((z < top + d) | last)
            eps[inside] = e
            sig[inside] = s
            top += d
        pec = np.zeros(z.shape, bool)
        if self.cylinder is not None:
            cx, cz, r, e, s, is_pec = self.cylinder
            inside = (x - cx) ** 2 + (z - cz) ** 2 < r * r
            if is_pec:
                pec = inside
            else:
                eps[inside] = e
                sig[inside] = s
        return eps, sig, pec

    def max_index(self) -> float:
        """Largest real refractive index in the scene (a conductor counts as 1)."""
        eps = [self.upper[0]] + [e for _, e, _ in self.layers]
        if self.cylinder is not None and not self.cylinder[5]:
            eps.append(self.cylinder[3])
        return math.sqrt(max(eps))


@dataclass(frozen=True)
class Fdtd2dGrid:
    """The grid a run used.

    Attributes
    ----------
    dx_m, dt_s, courant : float
        Cell size (m), time step (s), c dt / dx.
    nx, nz : int
        Nodes along x and z, PML included.
    n_steps : int
        Time steps run.
    x0_m, z0_m : float
        Position of node (0, 0) of the E_y (TE) or H_y (TM) grid, m.
    """

    dx_m: float
    dt_s: float
    courant: float
    nx: int
    nz: int
    n_steps: int
    x0_m: float
    z0_m: float

    @property
    def cells(self) -> int:
        """Number of cells, PML included."""
        return self.nx * self.nz


@dataclass(frozen=True, eq=False)
class Fdtd2dResult:
    """Recorded fields of one run.

    Attributes
    ----------
    time_s : ndarray, shape (n_steps,)
        Times of the recorded samples, s (on the same clock as the source current).
    field : ndarray, shape (n_receivers, n_steps)
        E_y (TE) or eta0 H_y (TM) at each receiver, V/m per unit source amplitude.
    receivers_m : ndarray, shape (n_receivers, 2)
        Where the field was recorded (the nodes nearest the requested points), m.
    grid : Fdtd2dGrid
    elapsed_s : float
        Wall-clock time, s.
    """

    time_s: np.ndarray
    field: np.ndarray
    receivers_m: np.ndarray
    grid: Fdtd2dGrid
    elapsed_s: float


def grid_step_m(f_high_hz: float, max_index: float, cells_per_wavelength: float,
                radius_m: float | None = None) -> float:
    """The grid rule: ``c / (f_high n_max cells_per_wavelength)``, at most radius / 6."""
    dx = C0_M_S / (f_high_hz * max_index * cells_per_wavelength)
    if radius_m is not None:
        dx = min(dx, radius_m / 6.0)
    return dx


class _Slabs:
    """CPML memory of one difference array along one axis, kept only in the two PML
    slabs (b = 1, c = 0 elsewhere): ``slabs(d)`` updates psi = b psi + c d there, adds
    psi to d in place and returns d."""

    def __init__(self, shape: tuple[int, ...], axis: int, b: np.ndarray, c: np.ndarray
                 ) -> None:
        n = shape[axis]
        width = min(PML_CELLS + 1, n)
        self.parts = []
        for sl in (slice(0, width), slice(n - width, n)):
            idx = (sl, slice(None)) if axis == 0 else (slice(None), sl)
            coef_shape = (-1, 1) if axis == 0 else (1, -1)
            bb = b[sl].reshape(coef_shape).astype(_DTYPE)
            cc = c[sl].reshape(coef_shape).astype(_DTYPE)
            psi = np.zeros(np.empty(shape)[idx].shape, _DTYPE)
            self.parts.append((idx, bb, cc, psi))

    def __call__(self, d: np.ndarray) -> np.ndarray:
        for idx, bb, cc, psi in self.parts:
            v = d[idx]
            psi *= bb
            psi += cc * v
            v += psi
        return d


def _cpml(n: int, pml: int, half: bool, dt: float, dx: float, f0: float
          ) -> tuple[np.ndarray, np.ndarray]:
    """CPML update coefficients (b, c) along one axis at its n integer nodes (or its n - 1
    half nodes, ``half``); b = 1, c = 0 outside the PML."""
    m = 3
    pos = np.arange(n - 1) + 0.5 if half else np.arange(n, dtype=float)
    # depth into the PML as a fraction (0 at its inner face, 1 at the outer wall)
    depth = np.maximum(np.maximum(pml - pos, pos - (n - 1 - pml)), 0.0) / pml
    sig = 0.8 * (m + 1) / (_ETA0 * dx) * depth**m
    alpha = np.where(depth > 0, 2 * math.pi * f0 * EPS0_F_M / 10.0 * (1.0 - depth), 0.0)
    b = np.exp(-(sig + alpha) * dt / EPS0_F_M)
    c = np.where(sig > 0, sig / np.maximum(sig + alpha, 1e-300) * (b - 1.0), 0.0)
    return b, c


def _averaged(scene: Scene2D, x: np.ndarray, z: np.ndarray, dx: float, harmonic: bool
              ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Cell-averaged eps_r, sigma and conductor mask at nodes (x[:, None], z[None, :])."""
    off = ((np.arange(_SUB) + 0.5) / _SUB - 0.5) * dx
    xs = x[:, None, None, None] + off[None, None, :, None]
    zs = z[None, :, None, None] + off[None, None, None, :]
    xs, zs = np.broadcast_arrays(xs, zs)
    eps, sig, pec = scene.sample(xs, zs)
    frac = pec.mean(axis=(2, 3))
    keep = ~pec
    count = np.maximum(keep.sum(axis=(2, 3)), 1)
    if harmonic:
        e = count / np.maximum(np.where(keep, 1.0 / eps, 0.0).sum(axis=(2, 3)), 1e-30)
    else:
        e = np.where(keep, eps, 0.0).sum(axis=(2, 3)) / count
    s = np.where(keep, sig, 0.0).sum(axis=(2, 3)) / count
    return np.where(frac >= 0.5, 1.0, e), s, frac >= 0.5


def _coefficients(eps: np.ndarray, sig: np.ndarray, pec: np.ndarray, dt: float
                  ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(ca, cb, source factor dt / (eps0 eps (1 + loss))) of the E update; 0 in a conductor."""
    loss = sig * dt / (2 * EPS0_F_M * eps)
    ca = np.where(pec, 0.0, (1 - loss) / (1 + loss))
    cb = np.where(pec, 0.0, (COURANT / eps) / (1 + loss))
    src = np.where(pec, 0.0, dt / (EPS0_F_M * eps * (1 + loss)))
    return ca, cb, src


def solve_scene(
    scene: Scene2D,
    *,
    polarization: str,
    source_m: tuple[float, float],
    receivers_m: Sequence[tuple[float, float]],
    current: Callable[[np.ndarray], np.ndarray],
    duration_s: float,
    dx_m: float,
    center_frequency_hz: float,
    progress: Callable[[float], None] | None = None,
) -> Fdtd2dResult:
    """Run the 2-D FDTD on ``scene`` with a line source and record the field.

    Parameters
    ----------
    scene : Scene2D
    polarization : {"TE", "TM"}
    source_m : (x, z)
        Line-source position, m; the grid is placed so a node lies exactly on it.
    receivers_m : sequence of (x, z)
        Where to record (the nearest E_y or H_y node is used; see the result).
    current : callable
        Source current I(t) (TE, A) or magnetic current M(t) (TM, V) at times t (s).
    duration_s : float
        Simulated time, s.
    dx_m : float
        Cell size, m (see :func:`grid_step_m`).
    center_frequency_hz : float
        Sets the CPML's alpha (low-frequency absorption).
    progress : callable, optional
        Called with the completed fraction about 50 times.
    """
    pol = check_choice("polarization", polarization, POLARIZATIONS)
    start = time.perf_counter()
    dx = check_range("dx_m", dx_m, 1e-4, 1.0, unit="m")
    check_range("duration_s", duration_s, 0.0, 1e-6, unit="s", low_open=True)
    check_range("center_frequency_hz", center_frequency_hz, 1e6, 1e11, unit="Hz")
    dt = COURANT * dx / C0_M_S
    pml = PML_CELLS
    (x_lo, x_hi), (z_lo, z_hi) = scene.x_range_m, scene.z_range_m
    sx = check_range("source_m[0]", source_m[0], x_lo, x_hi, unit="m")
    sz = check_range("source_m[1]", source_m[1], z_lo, z_hi, unit="m")
    shift = 0.5 * dx if pol == "TM" else 0.0  # the H_y node is at (i + 1/2, k + 1/2)
    i_s = int(math.ceil((sx - x_lo) / dx)) + pml
    k_s = int(math.ceil((sz - z_lo) / dx)) + pml
    x0 = sx - i_s * dx - shift
    z0 = sz - k_s * dx - shift
    nx = i_s + int(math.ceil((x_hi - sx) / dx)) + pml + 2
    nz = k_s + int(math.ceil((z_hi - sz) / dx)) + pml + 2
    n_steps = int(math.ceil(duration_s / dt)) + 1
    grid = Fdtd2dGrid(dx, dt, COURANT, nx, nz, n_steps, x0 + shift, z0 + shift)
    xi = x0 + np.arange(nx) * dx  # integer node coordinates
    zk = z0 + np.arange(nz) * dx
    xh, zh = xi[:-1] + dx / 2, zk[:-1] + dx / 2
    f0 = float(center_frequency_hz)
    bxi, cxi = _cpml(nx, pml, False, dt, dx, f0)
    bxh, cxh = _cpml(nx, pml, True, dt, dx, f0)
    bzi, czi = _cpml(nz, pml, False, dt, dx, f0)
    bzh, czh = _cpml(nz, pml, True, dt, dx, f0)
    # TE: E_y at integer times, the current at half steps, E_y recorded at (n + 1) dt;
    # TM: H_y at half steps, the magnetic current at integer times, recorded at (n + 1/2) dt
    n_arr = np.arange(n_steps)
    src_t = np.asarray(current((n_arr + (0.5 if pol == "TE" else 0.0)) * dt), float)
    t = (n_arr + (1.0 if pol == "TE" else 0.5)) * dt
    rec_pts = np.asarray(receivers_m, float).reshape(-1, 2)
    ri = np.clip(np.rint((rec_pts[:, 0] - x0 - shift) / dx).astype(int), 0, nx - 2)
    rk = np.clip(np.rint((rec_pts[:, 1] - z0 - shift) / dx).astype(int), 0, nz - 2)
    rec_at = np.column_stack([x0 + shift + ri * dx, z0 + shift + rk * dx])
    out = np.empty((rec_pts.shape[0], n_steps))
    every = max(n_steps // 50, 1)
    # fields in single precision (ample for a reference at 10+ cells per wavelength and
    # halves the memory traffic); H is stored as eta0 H / S so its update needs no factor
    s = COURANT
    if pol == "TE":
        ca, cb, sf = _coefficients(*_averaged(scene, xi, zk, dx, False), dt)
        ey = np.zeros((nx, nz), _DTYPE)
        hx = np.zeros((nx, nz - 1), _DTYPE)
        hz = np.zeros((nx - 1, nz), _DTYPE)
        buf_hx, buf_hz = np.empty_like(hx), np.empty_like(hz)
        buf_z, buf_x = np.empty((nx - 2, nz - 2), _DTYPE), np.empty((nx - 2, nz - 2), _DTYPE)
        pml_hx = _Slabs(hx.shape, 1, bzh, czh)
        pml_hz = _Slabs(hz.shape, 0, bxh, cxh)
        pml_ez = _Slabs(buf_z.shape, 1, bzi[1:-1], czi[1:-1])
        pml_ex = _Slabs(buf_x.shape, 0, bxi[1:-1], cxi[1:-1])
        ca_in = ca[1:-1, 1:-1].astype(_DTYPE)
        cb_in = (cb[1:-1, 1:-1] * s).astype(_DTYPE)
        inner = ey[1:-1, 1:-1]
        j_fac = sf[i_s, k_s] / (dx * dx)  # line current spread over one cell
        for n in range(n_steps):
            np.subtract(ey[:, 1:], ey[:, :-1], out=buf_hx)
            hx += pml_hx(buf_hx)
            np.subtract(ey[1:, :], ey[:-1, :], out=buf_hz)
            hz -= pml_hz(buf_hz)
            np.subtract(hx[1:-1, 1:], hx[1:-1, :-1], out=buf_z)
            np.subtract(hz[1:, 1:-1], hz[:-1, 1:-1], out=buf_x)
            pml_ez(buf_z)
            buf_z -= pml_ex(buf_x)
            buf_z *= cb_in
            inner *= ca_in
            inner += buf_z
            ey[i_s, k_s] -= j_fac * src_t[n]
            out[:, n] = ey[ri, rk]
            if progress is not None and n % every == 0:
                progress(n / n_steps)
    else:
        ca_x, cb_x, _ = _coefficients(*_averaged(scene, xh, zk, dx, False), dt)
        ca_z, cb_z, _ = _coefficients(*_averaged(scene, xi, zh, dx, True), dt)
        ca_x, cb_x = ca_x[:, 1:-1].astype(_DTYPE), (cb_x[:, 1:-1] * s).astype(_DTYPE)
        ca_z, cb_z = ca_z[1:-1, :].astype(_DTYPE), (cb_z[1:-1, :] * s).astype(_DTYPE)
        hy = np.zeros((nx - 1, nz - 1), _DTYPE)
        ex = np.zeros((nx - 1, nz), _DTYPE)
        ez = np.zeros((nx, nz - 1), _DTYPE)
        buf_a, buf_b = np.empty_like(hy), np.empty_like(hy)
        buf_x, buf_z = np.empty((nx - 1, nz - 2), _DTYPE), np.empty((nx - 2, nz - 1), _DTYPE)
        pml_hyx = _Slabs(hy.shape, 0, bxh, cxh)
        pml_hyz = _Slabs(hy.shape, 1, bzh, czh)
        pml_ex = _Slabs(buf_x.shape, 1, bzi[1:-1], czi[1:-1])
        pml_ez = _Slabs(buf_z.shape, 0, bxi[1:-1], cxi[1:-1])
        ex_in, ez_in = ex[:, 1:-1], ez[1:-1, :]
        m_fac = C0_M_S * dt / (dx * dx) / s  # eta0 dt / mu0 = c dt, over one cell
        for n in range(n_steps):
            np.subtract(ez[1:, :], ez[:-1, :], out=buf_a)
            np.subtract(ex[:, 1:], ex[:, :-1], out=buf_b)
            hy += pml_hyx(buf_a)
            hy -= pml_hyz(buf_b)
            hy[i_s, k_s] -= m_fac * src_t[n]
            np.subtract(hy[:, 1:], hy[:, :-1], out=buf_x)
            pml_ex(buf_x)
            buf_x *= cb_x
            ex_in *= ca_x
            ex_in -= buf_x
            np.subtract(hy[1:, :], hy[:-1, :], out=buf_z)
            pml_ez(buf_z)
            buf_z *= cb_z
            ez_in *= ca_z
            ez_in += buf_z
            out[:, n] = s * hy[ri, rk]
            if progress is not None and n % every == 0:
                progress(n / n_steps)
    if progress is not None:
        progress(1.0)
    return Fdtd2dResult(t, out, rec_at, grid, time.perf_counter() - start)


@dataclass(frozen=True, eq=False)
class CylinderTrace:
    """The monostatic echo of a buried cylinder at one antenna position.

    Attributes
    ----------
    time_s : ndarray
        The caller's time axis, s.
    amplitude : ndarray
        The cylinder's echo (total field minus a run without the cylinder) at the
        antenna, for a source current equal to the pulse waveform there; E_y (TE) or
        eta0 H_y (TM), V/m. Zero after ``computed_until_s``.
    point_source : ndarray
        The same echo converted from a line source to a point source and to the field
        the radar receives, for comparing shapes with the 3-D model, whose pulse is the
        radiated field: at the same peak as ``amplitude``. A line current I radiates
        ``-(omega mu0 I / 4) H0^(2)(k rho)``, far out ``-sqrt(j omega)`` times I up to
        real geometric factors (Balanis 1989, eq. 11-10 with the large-argument Hankel
        form), so TE divides by ``-sqrt(j f)``; in TM the received E_x of an upgoing wave
        is ``-eta0 H_y`` while the downgoing one is ``+eta0 H_y``, so TM divides by
        ``+sqrt(j f)``. A reflector of coefficient r then returns r times the pulse, as in
        the model (the sqrt(j f) filter as used in 2-D GPR modelling is common practice).
    computed_until_s : float
        The last two-way time the run reached, s (the echo plus six pulse periods).
    polarization : str
    grid : Fdtd2dGrid
    elapsed_s : float
        Wall-clock time of both runs, s.
    """

    time_s: np.ndarray
    amplitude: np.ndarray
    point_source: np.ndarray
    computed_until_s: float
    polarization: str
    grid: Fdtd2dGrid
    elapsed_s: float


def cylinder_trace(
    materials: Sequence[Material],
    thickness_m: Sequence[float],
    cylinder: BuriedCylinder,
    *,
    antenna_x_m: float,
    antenna_height_m: float,
    pulse: Pulse,
    dt_s: float,
    n_samples: int,
    polarization: str = "TE",
    cells_per_wavelength: float = 10.0,
    margin_m: float = 0.3,
    progress: Callable[[float], None] | None = None,
) -> CylinderTrace:
    """Monostatic 2-D FDTD echo of ``cylinder`` under the snow surface.

    Parameters
    ----------
    materials, thickness_m
        The snow layers, top down, plus the ground (one material more than thicknesses,
        as for :func:`snowprobe_widgets.fdtd.fdtd_trace`); frozen at the pulse centre
        frequency. The domain ends ``margin_m`` below the cylinder (at the ground surface
        when the ground is metal): what lies deeper continues into the absorbing layer
        (its echoes would be the same in both runs and cancel, apart from multiples
        between it and the cylinder).
    cylinder : BuriedCylinder
    antenna_x_m, antenna_height_m : float
        Antenna (line source and receiver) position along the line and height, m.
    pulse : Pulse
        Source current waveform (delayed by 4 periods so it starts from rest).
    dt_s, n_samples
        The output time axis (the echo is interpolated onto it).
    polarization : {"TE", "TM"}
    cells_per_wavelength : float
        Grid rule (see :func:`grid_step_m`), in [6, 40].
    margin_m : float
        Computed space around the antenna and the cylinder, m, in [0.1, 2].
    progress : callable, optional
        Called with the completed fraction of both runs.

    Returns
    -------
    CylinderTrace
    """
    from .trace import check_column

    pol = check_choice("polarization", polarization, POLARIZATIONS)
    h = check_range("antenna_height_m", antenna_height_m, 0.05, 20.0, unit="m")
    xa = check_range("antenna_x_m", antenna_x_m, -1e4, 1e4, unit="m")
    n_samples = int(check_range("n_samples", n_samples, 16, 65536))
    dt_out = check_range("dt_s", dt_s, 1e-13, 1e-8, unit="s")
    cpw = check_range("cells_per_wavelength", cells_per_wavelength, 6.0, 40.0)
    margin = check_range("margin_m", margin_m, 0.1, 2.0, unit="m")
    d = check_column(materials, thickness_m)
    if not isinstance(cylinder, BuriedCylinder):
        raise ValueError(f"cylinder must be a BuriedCylinder, got {type(cylinder).__name__}")
    f0 = pulse.center_frequency_hz
    c = cylinder
    snow_depth = float(d.sum())
    if c.centre_depth_m + c.radius_m > snow_depth:
        raise ValueError(f"the cylinder reaches {c.centre_depth_m + c.radius_m:g} m, "
                         f"below the {snow_depth:g} m snowpack")
    bottom = c.centre_depth_m + c.radius_m + margin
    metal_ground = materials[-1].perfect_conductor
    if metal_ground:  # left out: the absorbing layer continues the lowest snow layer
        bottom = min(bottom, snow_depth)
    layers = tuple((float(t), *_frozen_params(m, f0))
                   for t, m in zip(list(d) + [1.0], materials, strict=True)
                   if not m.perfect_conductor)
    pec = c.material.perfect_conductor
    e_c, s_c = (1.0, 0.0) if pec else _frozen_params(c.material, f0)
    scene = Scene2D((min(xa, c.position_m - c.radius_m) - margin,
                     max(xa, c.position_m + c.radius_m) + margin),
                    (-h - margin, bottom), layers,
                    cylinder=(c.position_m, c.centre_depth_m, c.radius_m, e_c, s_c, pec))
    dx = grid_step_m(pulse.band_hz(1e-2)[1], scene.max_index(), cpw, c.radius_m)
    t0 = 4.0 / f0
    # the longest path that can matter: to the far side of the cylinder and back, at the
    # slowest speed in the scene, plus six pulse periods
    reach = math.hypot(abs(c.position_m - xa) + c.radius_m, h + c.centre_depth_m + c.radius_m)
    until = min(n_samples * dt_out, 2 * reach * scene.max_index() / C0_M_S + 6.0 / f0)
    start = time.perf_counter()
    runs = []
    for j, sc in enumerate((scene, Scene2D(scene.x_range_m, scene.z_range_m, layers))):
        part = None if progress is None else (
            lambda f, j=j: progress(0.5 * (j + min(max(f, 0.0), 1.0))))
        runs.append(solve_scene(sc, polarization=pol, source_m=(xa, -h),
                                receivers_m=[(xa, -h)],
                                current=lambda t: pulse.waveform(t - t0),
                                duration_s=until + t0, dx_m=dx, center_frequency_hz=f0,
                                progress=part))
    echo = runs[0].field[0] - runs[1].field[0]
    t = runs[0].time_s
    t_out = np.arange(n_samples) * dt_out
    amp = np.interp(t_out + t0, t, echo, left=0.0, right=0.0)
    amp[t_out > until] = 0.0
    sign = -1.0 if pol == "TE" else 1.0
    return CylinderTrace(t_out, amp, _to_point_source(amp, dt_out, sign), float(until), pol,
                         runs[0].grid, time.perf_counter() - start)


def _to_point_source(amp: np.ndarray, dt_s: float, sign: float) -> np.ndarray:
    """``amp`` divided by ``sign * sqrt(j f)`` (zero at f = 0), scaled to the same peak."""
    n = 2 * amp.size
    spec = np.fft.rfft(amp, n)
    f = np.fft.rfftfreq(n, dt_s)
    filt = np.zeros(f.size, complex)
    filt[1:] = sign / np.sqrt(1j * f[1:] / f[1])
    out = np.fft.irfft(spec * filt, n)[: amp.size]
    peak = float(np.max(np.abs(out)))
    return out * (float(np.max(np.abs(amp))) / peak) if peak > 0 else out


#: Largest run the scenario check accepts: cells times time steps of one run (at about
#: 10 ns of CPU per cell-step, some 20 s of CPU for both runs; tests/benchmarks/bench_fdtd2d.py
#: measures it).
MAX_CELL_STEPS = 1e9


@dataclass(frozen=True, eq=False)
class ScenarioCheck:
    """The 2-D check of a scenario's first buried object at one antenna position.

    Attributes
    ----------
    description : str
        What the 2-D run stands for, in words for the screen.
    cylinder : BuriedCylinder
    fdtd : CylinderTrace
    model_amplitude : ndarray
        The model's echo of the object itself (objects only, this object alone) on the
        radar's time axis.
    agreement : float
        Zero-lag normalised cross-correlation of ``fdtd.point_source`` and
        ``model_amplitude`` (1: the same shape at the same time).
    delay_difference_s : float
        Envelope-peak time of the FDTD echo minus that of the model, s.
    """

    description: str
    cylinder: BuriedCylinder
    fdtd: CylinderTrace
    model_amplitude: np.ndarray
    agreement: float
    delay_difference_s: float


def scenario_cylinder(scenario: object) -> tuple[BuriedCylinder, str]:
    """The 2-D stand-in of the scenario's first buried object, and what it approximates.

    The computed plane is the vertical plane of the survey line; the stand-in is an
    infinitely long circular cylinder across the line, as wide as the object is high and
    with its top at the object's top, as its kind gives it (``cylinder_stand_in``): a
    boulder keeps its rock and a branch its wood; a person becomes a perfect conductor; a
    flat metal plate has no circular stand-in and is refused.
    """
    targets = getattr(scenario, "targets", ())
    if not targets:
        raise ValueError("the 2-D check needs a buried person or object: the scenario has "
                         "none")
    from .targets import kind_of

    obj = targets[0]
    stand_in = getattr(kind_of(obj), "cylinder_stand_in", None)
    found = stand_in(obj) if stand_in is not None else None
    if found is None:
        raise ValueError(f"the 2-D check has no cylinder stand-in for a {obj.kind} (no round "
                         "cross-section); put a person, boulder or branch first")
    d, material, what = found
    cyl = BuriedCylinder(obj.position_m, obj.depth_m + d / 2, d / 2, material)
    pol = _scenario_polarization(scenario)
    field = "E along the axis" if pol == "TE" else "E along the line, H along the axis"
    text = (f"{what}, infinitely long across the survey line (a 2-D cross-section: its "
            "across-line offset and length are ignored), under the same snow layers, "
            f"{pol} ({field}), line source converted to a point source")
    return cyl, text


def _scenario_polarization(scenario: object) -> str:
    """TE when the radar's field lies across the line (along the stand-in's axis), TM when
    it lies along the line."""
    from .raypaths import ray_polarization

    return ray_polarization(getattr(getattr(scenario, "radar", None), "polarization",
                                    "across_line"))


def scenario_check(scenario: object, position_m: float, *,
                   progress: Callable[[float], None] | None = None) -> ScenarioCheck:
    """Run the 2-D FDTD for the first object's stand-in (:func:`scenario_cylinder`) with
    the antenna at ``position_m`` and the model's echo of the object itself there.

    Raises
    ------
    ValueError
        When the scenario has no stand-in, or the run would exceed
        :data:`MAX_CELL_STEPS` (the message says how to shrink it).
    """
    import dataclasses as dc

    from .scene import Clutter, Survey
    from .synthesis import simulate

    x = check_range("position_m", position_m, -1e4, 1e4, unit="m")
    cyl, text = scenario_cylinder(scenario)
    radar = scenario.radar
    pulse = radar.make_pulse()
    mats = list(scenario.snowpack.materials()) + [scenario.ground.material()]
    thick = scenario.snowpack.thicknesses_m
    # the size of the run before starting it
    f0 = pulse.center_frequency_hz
    media = [m for m in mats + [cyl.material] if not m.perfect_conductor]
    n_max = max([1.0] + [math.sqrt(_frozen_params(m, f0)[0]) for m in media])
    dx = grid_step_m(pulse.band_hz(1e-2)[1], n_max, 10.0, cyl.radius_m)
    width = abs(cyl.position_m - x) + cyl.radius_m + 0.6
    height = radar.antenna_height_m + cyl.centre_depth_m + cyl.radius_m + 0.6
    steps = min(radar.n_samples * radar.dt_s,
                2 * math.hypot(width, height) * n_max / C0_M_S + 10.0 / pulse.center_frequency_hz
                ) / (COURANT * dx / C0_M_S)
    cost = (width / dx + 2 * PML_CELLS) * (height / dx + 2 * PML_CELLS) * steps
    if cost > MAX_CELL_STEPS:
        raise ValueError(
            f"the 2-D check at {x:g} m would take {cost:.2g} cell-steps per run, more than "
            f"the {MAX_CELL_STEPS:.2g} allowed: pick a trace nearer the object (at "
            f"{cyl.position_m:g} m) or lower the centre frequency")
    fd = cylinder_trace(mats, thick, cyl, antenna_x_m=x,
                        antenna_height_m=radar.antenna_height_m, pulse=pulse,
                        dt_s=radar.dt_s, n_samples=radar.n_samples,
                        polarization=_scenario_polarization(scenario), progress=progress)
    from .targets import kind_of

    obj = scenario.targets[0]
    person = kind_of(obj).placement == "persons"
    one = dc.replace(scenario, persons=(obj,) if person else (),
                     objects=() if person else (obj,),
                     survey=Survey(x, x + 0.01, 0.01),
                     clutter=Clutter(scatterer_density_per_m3=0.0))
    model = simulate(one, components=("objects",)).data[:, 0]
    a, b = fd.point_source, model
    den = math.sqrt(float(a @ a) * float(b @ b))
    ncc = float(a @ b) / den if den > 0 else 0.0
    t = fd.time_s
    delay = float(t[np.argmax(np.abs(_envelope(a)))] - t[np.argmax(np.abs(_envelope(b)))])
    return ScenarioCheck(text, cyl, fd, model, ncc, delay)


def _envelope(x: np.ndarray) -> np.ndarray:
    from .processing.dsp import analytic_signal

    return np.abs(analytic_signal(x))
