"""A 1-D finite-difference time-domain (Yee) reference solver for layered columns.

The full-wave cross-check of :func:`snowprobe_widgets.trace.synthesize_trace` in its
``"plane"`` mode: a plane wave launched downward from the antenna height over the same
horizontal layers and ground, every multiple included, solved by the Yee leapfrog scheme
(Yee 1966; Taflove & Hagness, *Computational Electrodynamics*, 3rd ed. 2005, ch. 3).

Scheme
------
- Fields: E on integer nodes z_k = k dz, H (scaled by eta0) on half nodes; lossy media by
  the semi-implicit conductivity update (Taflove & Hagness eq. 3.28).
- Media are non-dispersive in the time domain: each is frozen at the pulse's centre
  frequency (eps' and sigma = omega eps0 eps'' there, :func:`frozen_at`). Compare against a
  frequency-domain trace of the same frozen media; the frequency-domain model alone keeps
  the full dispersion.
- A cell straddling an interface gets the thickness-weighted mean eps' and sigma of the
  media it holds (sub-cell averaging; Taflove & Hagness sec. 10.2, from memory), so layer
  thicknesses need not be multiples of dz.
- Grid: dz = the smaller of lambda_min / ``cells_per_wavelength`` (lambda_min: the shortest
  wavelength in any medium at the upper band edge of the pulse, -60 dB) and a quarter of the
  thinnest layer; time step at Courant number S = c dt / dz = 1, the 1-D "magic time step"
  that is dispersion-free in air and stable everywhere (all media are slower than c).
- Source: a total-field / scattered-field boundary at the antenna node launches the pulse
  downward (Taflove & Hagness 2005, ch. 5; exact in air at S = 1), so the field recorded
  just above it is the reflected wave alone. Top boundary: first-order Mur, exact in air
  at S = 1. Bottom: a perfect conductor when the ground is metal, otherwise the
  ground extends deep enough that its far end cannot echo back inside the window, closed by
  a first-order Mur condition at the ground velocity.
- Output: the reflected field at the antenna for a transmitted wave equal to the pulse
  waveform there, interpolated onto the caller's time axis.
"""

from __future__ import annotations

import dataclasses
import math
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from ._validate import check_range
from .constants import C0_M_S, EPS0_F_M
from .materials import Material, rock
from .pulses import Pulse
from .trace import Trace, check_column, echo_times

__all__ = ["FdtdGrid", "FdtdResult", "frozen_at", "plan_grid", "fdtd_trace"]

_PAD_CELLS = 10  # air cells above the antenna node


@dataclass(frozen=True)
class FdtdGrid:
    """The grid the solver chose.

    Attributes
    ----------
    dz_m : float
        Cell size, m.
    dt_s : float
        Time step, s.
    courant : float
        c dt / dz.
    n_cells : int
        E nodes in the domain.
    n_steps : int
        Time steps run.
    source_index : int
        E node of the antenna.
    """

    dz_m: float
    dt_s: float
    courant: float
    n_cells: int
    n_steps: int
    source_index: int


@dataclass(frozen=True, eq=False)
class FdtdResult:
    """A reference trace and how it was computed.

    Attributes
    ----------
    trace : Trace
        Reflected field on the requested time axis (plane-wave normalisation).
    grid : FdtdGrid
    elapsed_s : float
        Wall-clock time of the solve, s.
    """

    trace: Trace
    grid: FdtdGrid
    elapsed_s: float


def frozen_at(material: Material, freq_hz: float) -> Material:
    """The material with its permittivity and conductivity frozen at ``freq_hz``.

    eps(f) = eps'(f0) - j sigma / (2 pi f eps0) with sigma = 2 pi f0 eps0 eps''(f0): the
    non-dispersive medium the FDTD solver can represent. Metal stays a perfect conductor.
    """
    if material.perfect_conductor:
        return material
    out = rock(*_frozen_params(material, freq_hz))
    return dataclasses.replace(
        out, name=f"{material.name} (frozen at {freq_hz / 1e9:g} GHz)",
        source=f"{material.source}; frozen at {freq_hz:g} Hz")


def _frozen_params(material: Material, f0: float) -> tuple[float, float]:
    eps = complex(material.permittivity(f0))
    return eps.real, 2 * math.pi * f0 * EPS0_F_M * max(-eps.imag, 0.0)


def plan_grid(
    materials: Sequence[Material],
    thickness_m: Sequence[float],
    *,
    antenna_height_m: float,
    pulse: Pulse,
    window_s: float,
    cells_per_wavelength: float = 20.0,
) -> tuple[FdtdGrid, np.ndarray, np.ndarray, bool]:
    """Choose the grid and fill it with the media.

    Returns
    -------
    grid : FdtdGrid
    eps_r, sigma_s_m : ndarray, shape (n_cells,)
        Relative permittivity and conductivity at each E node.
    pec_bottom : bool
        Whether the last node is a perfect conductor.
    """
    f0 = pulse.center_frequency_hz
    f_hi = pulse.band_hz(1e-3)[1]
    d = np.asarray(thickness_m, float)
    pec = materials[-1].perfect_conductor
    params = [(1.0, 0.0) if m.perfect_conductor else _frozen_params(m, f0) for m in materials]
    n_max = max(math.sqrt(e) for e, _ in params)
    dz = C0_M_S / (f_hi * n_max * cells_per_wavelength)
    if d.size:
        dz = min(dz, float(d.min()) / 4.0)
    dt = dz / C0_M_S
    # depth of the ground needed so that its far end stays silent inside the window
    e_g, _ = params[-1]
    v_g = C0_M_S / math.sqrt(e_g)
    t_ground = echo_times(materials, d, antenna_height_m, f0)[-1][1]
    ground_m = 0.0 if pec else max(0.5 * v_g * max(window_s - t_ground, 0.0), 0.0) + 20 * dz
    ground_m += 3.0 / f0 * v_g  # pulse length
    top = _PAD_CELLS * dz
    z_interfaces = antenna_height_m + np.concatenate([[0.0], np.cumsum(d)])
    z_end = z_interfaces[-1] + (0.0 if pec else ground_m)
    n_cells = int(math.ceil((top + z_end) / dz)) + 1
    if pec:  # the last node sits exactly on the metal
        n_cells = int(round((top + z_end) / dz)) + 1
    z = np.arange(n_cells) * dz - top  # depth below the antenna
    # media boundaries (depth below antenna), air above the surface
    bounds = np.concatenate([[-np.inf], z_interfaces, [np.inf]])
    eps_list = np.array([1.0] + [p[0] for p in params])
    sig_list = np.array([0.0] + [p[1] for p in params])
    lo = z - dz / 2
    hi = z + dz / 2
    overlap = np.clip(np.minimum(hi[:, None], bounds[None, 1:])
                      - np.maximum(lo[:, None], bounds[None, :-1]), 0.0, None) / dz
    eps_r = overlap @ eps_list
    sigma = overlap @ sig_list
    n_steps = int(math.ceil((window_s + 8.0 / f0) / dt)) + 1
    grid = FdtdGrid(dz, dt, C0_M_S * dt / dz, n_cells, n_steps, _PAD_CELLS)
    return grid, eps_r, sigma, pec


def _run(eps_r: np.ndarray, sigma: np.ndarray, pec: bool, grid: FdtdGrid,
         incident: Callable[[np.ndarray], np.ndarray],
         progress: Callable[[float], None] | None) -> np.ndarray:
    """Leapfrog with a total-field / scattered-field boundary at the antenna node.

    ``incident(t)`` is the downward wave at the antenna node at time t. Returns the
    scattered (reflected) field at the antenna at times ``arange(n_steps) * dt``.
    """
    dt, s = grid.dt_s, grid.courant
    loss = sigma * dt / (2 * EPS0_F_M * eps_r)
    ca = (1 - loss) / (1 + loss)
    cb = (s / eps_r) / (1 + loss)
    ca_in, cb_in = ca[1:-1], cb[1:-1]
    e = np.zeros(eps_r.size)
    h = np.zeros(eps_r.size - 1)
    kb = grid.source_index
    v_bot = 1.0 / math.sqrt(eps_r[-1])
    mur_bot = (s * v_bot - 1) / (s * v_bot + 1)
    n_steps = grid.n_steps
    inc_now = incident(np.arange(n_steps) * dt)        # e_inc at node kb, time n dt
    inc_next = incident((np.arange(n_steps) + 1) * dt)  # -h_inc at kb - 1/2, time (n + 1/2) dt
    rec = np.empty(n_steps)
    every = max(n_steps // 50, 1)
    for n in range(n_steps):
        h += s * (e[1:] - e[:-1])
        h[kb - 1] -= s * inc_now[n]  # the scattered-field side sees no incident wave
        e_top_old, e1_old = e[0], e[1]
        e_bot_old, e_bm1_old = e[-1], e[-2]
        e[1:-1] = ca_in * e[1:-1] + cb_in * (h[1:] - h[:-1])
        e[kb] += s * inc_next[n]  # the total-field side gets the incident wave
        e[0] = e1_old + (s - 1) / (s + 1) * (e[1] - e_top_old)  # Mur, exact at S = 1 in air
        if pec:
            e[-1] = 0.0
        else:
            e[-1] = e_bm1_old + mur_bot * (e[-2] - e_bot_old)
        rec[n] = e[kb - 1]  # at (n + 1) dt one cell above the antenna = antenna at n dt
        if progress is not None and n % every == 0:
            progress(n / n_steps)
    if progress is not None:
        progress(1.0)
    return rec


def fdtd_trace(
    materials: Sequence[Material],
    thickness_m: Sequence[float],
    *,
    antenna_height_m: float,
    pulse: Pulse,
    dt_s: float,
    n_samples: int,
    cells_per_wavelength: float = 20.0,
    progress: Callable[[float], None] | None = None,
) -> FdtdResult:
    """Reference plane-wave trace of an antenna above a layered column, by FDTD.

    Parameters
    ----------
    materials, thickness_m, antenna_height_m, pulse, dt_s, n_samples
        As for :func:`snowprobe_widgets.trace.synthesize_trace`; media are frozen at the
        pulse centre frequency (:func:`frozen_at`).
    cells_per_wavelength : float
        Cells per shortest wavelength at the pulse's upper band edge, in [10, 200].
    progress : callable, optional
        Called with the completed fraction (0 to 1) about 50 times during the run.

    Returns
    -------
    FdtdResult
    """
    h = check_range("antenna_height_m", antenna_height_m, 0.05, 20.0, unit="m")
    n_samples = int(check_range("n_samples", n_samples, 16, 65536))
    dt_out = check_range("dt_s", dt_s, 1e-13, 1e-8, unit="s")
    cpw = check_range("cells_per_wavelength", cells_per_wavelength, 10.0, 200.0)
    d = check_column(materials, thickness_m)
    start = time.perf_counter()
    window = n_samples * dt_out
    grid, eps_r, sigma, pec = plan_grid(materials, d, antenna_height_m=h, pulse=pulse,
                                        window_s=window, cells_per_wavelength=cpw)
    t0 = 4.0 / pulse.center_frequency_hz  # source delay so it starts from rest
    t = np.arange(grid.n_steps) * grid.dt_s
    reflected = _run(eps_r, sigma, pec, grid, lambda tt: pulse.waveform(tt - t0), progress)
    t_out = np.arange(n_samples) * dt_out
    amp = np.interp(t_out + t0, t, reflected, left=0.0, right=0.0)
    echoes = tuple(echo_times(materials, d, h, pulse.center_frequency_hz))
    return FdtdResult(Trace(t_out, amp, echoes), grid, time.perf_counter() - start)
