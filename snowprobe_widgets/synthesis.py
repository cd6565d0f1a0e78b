"""Radargram synthesis: a survey line over a layered snowpack with buried objects.

``simulate(scenario) -> Radargram``, computed in the frequency domain. Every trace is the
sum of

1. **The layered column** (surface, layer, thin clutter layer and ground echoes): the same
   for every trace (the layers are horizontal), computed once with the point-antenna
   column response of :mod:`snowprobe_widgets.trace` (two-way paraxial spreading, two-way
   transmission, attenuation and dispersion of every layer).
2. **Finite objects** (persons, boulders, branches, metal plates) by a physical-optics facet
   sum (:mod:`snowprobe_widgets.facets`) over their lit surfaces. For every (trace, facet)
   pair the ray is refracted at the snow surface and at each layer interface, solved by
   Newton's method (:mod:`snowprobe_widgets.raypaths`, tabulated per object). A facet
   contributes

       (j f / c) * r(theta_loc) cos(theta_loc) A * T2 * exp(-2 alpha l) * beam / (R_par' R_perp)

   at its two-way delay, with r the local TE reflection at the local incidence angle and
   R_par' R_perp the two-way spreading of :mod:`snowprobe_widgets.raypaths` (the in-plane
   tube width taken across the ray at the facet, as reciprocity requires). Each
   kind (:mod:`snowprobe_widgets.targets`) gives the angle dependence of r and the
   spectrum multiplying the sum: the person's clothing / skin / fat / muscle stack through
   :func:`layered.reflection`, -1 for metal, and for a boulder or branch the exact series
   of a sphere or cylinder divided by the facet sum's own echo of that body (so that the
   internal echo of a rock and the polarisation of a thin branch are in the result). The
   prefactor uses the free-space wavenumber: with the E-field transmission each way it
   reproduces, by stationary phase, the flat-reflector limit T2 r / (2 (h + d / n)) of the
   column response. Diffraction hyperbolas arise from the geometry, not from a formula.
3. **Clutter scatterers**: small blocks of denser snow as point scatterers
   (:mod:`snowprobe_widgets.targets.clods`: min(Rayleigh, optical) cross-section, with the
   dipole sign in the Rayleigh regime and the Fresnel sign in the optical one), along the
   same refracted rays.
4. **Receiver noise**: white Gaussian, rms from :func:`radar_equation.noise_rms`, seeded.

Simplifications (stated wherever results are shown): facet delays use the layers' phase
velocities at the centre frequency, while the dispersion and the frequency dependence of
attenuation are applied per object along its vertical path; the local reflection keeps the
normal-incidence frequency shape with the angle dependence of its centre-frequency
magnitude; no multiple scattering between objects, no shadowing of one object by another;
the thin clutter layers enter the column but not the objects' ray paths.

Delays are accumulated on a grid of the output sampling interval (see OVERSAMPLE) by linear
interpolation (two taps per facet), transformed once per trace block, and the triangle
kernel's spectrum sinc^2 is divided out in the band; the pulse, the PO prefactor and each
object's reflection spectrum are applied there.

Amplitudes are received amplitudes relative to sqrt(transmitted power), see
:mod:`snowprobe_widgets.radar_equation`.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any

import numpy as np
import scipy.fft

from . import materials as mat
from .constants import C0_M_S
from .facets import FacetMesh
from .radar_equation import antenna_factor, beam_weight, noise_rms
from .radargram import Radargram, TruthMarker
from .raypaths import AlongX, RayTable, layers_above_m, ray_polarization, solve_rays
from .targets import kind_of
from .targets.base import ANGLES_DEG
from .targets.clods import clod_amplitude
from .targets.clods import clod_contrast as clutter_block_contrast
from .trace import column_response, evaluate_column

__all__ = ["COMPONENTS", "simulate", "object_mesh", "ColumnOptics", "column_optics",
           "target_reflection", "target_reflection_spectrum", "vertical_dispersion",
           "index_offsets", "dispersion_factor", "clutter_block_contrast"]

#: What a radargram can be made of; ``simulate(..., components=...)`` picks a subset.
COMPONENTS: tuple[str, ...] = ("layers", "objects", "clutter", "noise")

_N_COS = 257
#: Facet size: the wavelength in the snow at the centre frequency over this. At 6 the
#: objects' echoes of the demo scenarios differ from a twice finer mesh by < 1.5 % of
#: their peak (tests/test_synthesis.py checks < 3 %).
FACETS_PER_WAVELENGTH = 6.0
#: Delay-bin grid: the output sampling interval divided by this. At 1 the binned
#: facet sum differs from an 8x oversampled one by < 1 % of the echo peak (measured on
#: the shallow and ice-crust demos: 0.6 % and 0.8 %); 2 gives 0.15 % at ~20 % more time.
OVERSAMPLE = 1


@dataclass(frozen=True, eq=False)
class ColumnOptics:
    """Centre-frequency optics of the snowpack layers used by ray paths.

    Attributes
    ----------
    thickness_m, index, alpha_np_m : ndarray, shape (n_layers,)
        Thicknesses, real refractive indices and amplitude attenuation (Np/m) at fc.
    materials : tuple of Material
        The layers' dielectric models.
    """

    thickness_m: np.ndarray
    index: np.ndarray
    alpha_np_m: np.ndarray
    materials: tuple

    @property
    def mean_velocity_m_s(self) -> float:
        """Average radar velocity straight down through the whole snowpack, m/s:
        total thickness over total one-way travel time."""
        return float(C0_M_S * self.thickness_m.sum() / np.dot(self.thickness_m, self.index))


def column_optics(scenario: Any) -> ColumnOptics:
    """Real index and attenuation of each snow layer at the radar's centre frequency."""
    fc = scenario.radar.center_frequency_hz
    mats = scenario.snowpack.materials()
    nn = np.array([complex(m.refractive_index(fc)) for m in mats])
    n_real = np.maximum(nn.real, 1.0)
    alpha = 2 * math.pi * fc / C0_M_S * np.abs(nn.imag)
    return ColumnOptics(scenario.snowpack.thicknesses_m, n_real, alpha, mats)


def _time_to(optics: ColumnOptics, h: float, depth_m: float, offset_m: float) -> float:
    res = solve_rays(np.array(abs(offset_m)), np.array(depth_m), antenna_height_m=h,
                     thickness_m=optics.thickness_m, index=optics.index,
                     alpha_np_m=optics.alpha_np_m)
    return float(res.time_s)


# --------------------------------------------------------------------------- objects
def object_mesh(obj: Any, facet_size_m: float) -> FacetMesh:
    """The lit-side facet mesh of a buried thing (its kind's ``mesh``)."""
    return kind_of(obj).mesh(obj, facet_size_m)


def target_reflection_spectrum(obj: Any, snow_eps: complex, freq_hz: np.ndarray, *,
                               polarization: str = "across_line") -> np.ndarray:
    """An object's echo over ``freq_hz`` relative to the geometric-optics echo of a perfect
    conductor of its top curvature (:attr:`targets.Reflection.spectrum`): the
    normal-incidence reflection r(f) seen from the snow (real part of ``snow_eps``) for a
    kind computed by physical optics, -1 for metal, an exact series' echo for a boulder or
    branch."""
    f = np.atleast_1d(np.asarray(freq_hz, float))
    # the angle dependence (taken at the band's median) is not part of the spectrum
    fc = float(np.median(f))
    return kind_of(obj).reflection(obj, snow_eps, fc, f, polarization).spectrum


def target_reflection(obj: Any, snow_eps: complex, fc: float, freq_hz: np.ndarray, *,
                      polarization: str = "across_line") -> tuple[np.ndarray, np.ndarray]:
    """(|r(fc, angle)| / |r(fc, 0)| on ANGLES_DEG, the factor on freq_hz multiplying a
    facet sum of unit local reflection) for one object (its kind's ``reflection``)."""
    refl = kind_of(obj).reflection(obj, snow_eps, fc, np.asarray(freq_hz, float),
                                   polarization)
    return refl.angle_ratio, refl.facet_spectrum


def index_offsets(optics: ColumnOptics, freq_hz: np.ndarray) -> list[np.ndarray]:
    """n_j(f) - n'_j(fc) of every layer over ``freq_hz`` (decaying branch, Im <= 0)."""
    out = []
    for m, n_fc in zip(optics.materials, optics.index, strict=True):
        n_f = np.sqrt(m.permittivity(freq_hz).astype(complex))
        out.append(np.where(n_f.imag > 0, -n_f, n_f) - n_fc)
    return out


def dispersion_factor(offsets: list[np.ndarray] | np.ndarray, k0: np.ndarray,
                      above_m: np.ndarray, alpha_np_m: np.ndarray) -> np.ndarray:
    """exp(-2 j k0 sum_j (n_j(f) - n'_j(fc)) D_j) * exp(+2 sum_j alpha_j(fc) D_j).

    Two-way dispersion and frequency-dependent attenuation relative to the centre-frequency
    values that facet delays and gains already carry (D_j: ``above_m``, shape (n_layers,),
    or (n_depths, n_layers) for many depths at once, giving (n_depths, n_f)).
    """
    above = np.asarray(above_m, float)
    phase = above @ np.asarray(offsets).reshape(above.shape[-1], -1)
    return np.exp(-2j * k0 * phase) * np.exp(2 * (above @ alpha_np_m))[..., None]


def vertical_dispersion(optics: ColumnOptics, depth_m: float, fc: float,
                        freq_hz: np.ndarray) -> np.ndarray:
    """:func:`dispersion_factor` over the layers above ``depth_m``, straight down."""
    k0 = 2 * math.pi * freq_hz / C0_M_S
    return dispersion_factor(index_offsets(optics, freq_hz), k0,
                             layers_above_m(optics.thickness_m, depth_m), optics.alpha_np_m)


@dataclass
class _Target:
    mesh: FacetMesh
    table: AlongX
    r_angle: np.ndarray

    def __post_init__(self) -> None:
        # |r| ratio on a uniform grid of cos(angle) in [0, 1] for index arithmetic look-up
        cos_grid = np.linspace(0.0, 1.0, _N_COS)
        ang = np.degrees(np.arccos(cos_grid))
        self.r_cos = np.interp(ang, ANGLES_DEG, self.r_angle)
    spectrum: np.ndarray  # per-band-frequency factor (reflection, dispersion, PO, pulse)


# --------------------------------------------------------------------------- grids
@dataclass(frozen=True)
class _Grid:
    dt_s: float
    n_samples: int
    dt_bin_s: float
    n_bin: int
    freq_hz: np.ndarray  # rfft frequencies of the bin grid
    band: np.ndarray  # bool mask of the pulse band on freq_hz
    t_max_s: float  # last delay that can reach the window


def _grid(radar: Any, pulse: Any) -> _Grid:
    dt = radar.dt_s
    ns = radar.n_samples
    pulse_len = 6.0 / pulse.center_frequency_hz
    dtb = dt / OVERSAMPLE
    n_bin = scipy.fft.next_fast_len(int(math.ceil((ns * dt + 2 * pulse_len) / dtb)), real=True)
    f = np.fft.rfftfreq(n_bin, dtb)
    lo, hi = pulse.band_hz(1e-6)
    band = (f >= max(lo, 1e6)) & (f <= min(hi, 0.5 / dt))
    return _Grid(dt, ns, dtb, n_bin, f, band, ns * dt + pulse_len)


# --------------------------------------------------------------------------- parts
def _column_trace(scenario: Any, pulse: Any, with_thin_layers: bool) -> np.ndarray:
    """The layered column's trace (point antenna), shape (n_samples,), in field units."""
    radar = scenario.radar
    dt, ns = radar.dt_s, radar.n_samples
    mats, thick = _column_layers(scenario, with_thin_layers)
    ground = scenario.ground.material()
    h = radar.antenna_height_m
    fc = pulse.center_frequency_hz
    n_re = np.array([float(m.refractive_index(fc).real) for m in mats])
    last = 2 * h / C0_M_S + 2 * float(np.dot(n_re, thick)) / C0_M_S
    pulse_len = 6.0 / fc
    span = max(ns * dt, last + pulse_len)
    n_fft = scipy.fft.next_fast_len(int(math.ceil((span + 2 * pulse_len) / dt)), real=True)
    f = np.fft.rfftfreq(n_fft, dt)
    lo, hi = pulse.band_hz(1e-6)
    band = (f >= max(lo, 1e6)) & (f <= min(hi, 0.5 / dt))
    fb = f[band]
    eps = evaluate_column(list(mats) + [ground], fb)
    h_col = column_response(fb, eps, np.asarray(thick), h, "point")
    spec = np.zeros(f.size, complex)
    spec[band] = pulse.spectrum(fb) * h_col
    return scipy.fft.irfft(spec / dt, n=n_fft)[:ns]


def _column_layers(scenario: Any, with_thin_layers: bool) -> tuple[list, list[float]]:
    """Materials and thicknesses of the snow column, thin clutter layers spliced in."""
    snowpack = scenario.snowpack
    layers = list(snowpack.layers)
    bounds = [0.0] + list(snowpack.interfaces_m)
    # (top, bottom, density, lwc, the layer's dielectric model)
    pieces: list[tuple[float, float, float, float, str]] = []
    for layer, top, bot in zip(layers, bounds[:-1], bounds[1:], strict=True):
        pieces.append((top, bot, layer.density_kg_m3, layer.lwc_percent,
                       layer.dielectric_model))
    if with_thin_layers:
        field = scenario.clutter_field()
        for top, th, dd in zip(field.layer_depth_m, field.layer_thickness_m,
                               field.layer_density_change_kg_m3, strict=True):
            bot = top + th
            new: list[tuple[float, float, float, float, str]] = []
            for a, b, rho, w, model in pieces:
                if b <= top or a >= bot:
                    new.append((a, b, rho, w, model))
                    continue
                if a < top:
                    new.append((a, top, rho, w, model))
                lo, hi = max(a, top), min(b, bot)
                rho2 = float(np.clip(rho + dd, 30.0, 917.0 * (1 - w / 100.0)))
                new.append((lo, hi, rho2, w, model))
                if b > bot:
                    new.append((bot, b, rho, w, model))
            pieces = new
    pieces = [p for p in pieces if p[1] - p[0] > 1e-6]
    mats = [mat.layer_material(model, rho, w, temperature_c=snowpack.temperature_c)
            for _, _, rho, w, model in pieces]
    thick = [b - a for a, b, *_ in pieces]
    return mats, thick


def _prepare_targets(scenario: Any, pulse: Any, grid: _Grid, optics: ColumnOptics,
                     x_tr: np.ndarray) -> list[_Target]:
    radar = scenario.radar
    fc = pulse.center_frequency_hz
    h = radar.antenna_height_m
    fb = grid.freq_hz[grid.band]
    x_reach = 0.5 * C0_M_S * grid.t_max_s  # no ray longer than this returns in time
    out = []
    for obj in scenario.targets:
        layer_idx = scenario.snowpack.layer_index(min(obj.depth_m, scenario.snowpack.depth_m))
        snow_m = optics.materials[layer_idx]
        n_snow = optics.index[layer_idx]
        facet = float(np.clip(C0_M_S / (n_snow * fc) / FACETS_PER_WAVELENGTH, 0.01, 0.06))
        mesh = object_mesh(obj, facet)
        c = mesh.centre_m
        z_lo = max(float(c[:, 2].min()) - 0.02, 0.0)
        z_hi = float(c[:, 2].max()) + 0.02
        dxm = max(abs(x_tr.min() - c[:, 0].max()), abs(x_tr.max() - c[:, 0].min()))
        x_max = min(math.hypot(dxm, float(np.abs(c[:, 1]).max())) + 0.05, x_reach)
        table = RayTable.build(
            x_max, (z_lo, z_hi), antenna_height_m=h, thickness_m=optics.thickness_m,
            index=optics.index, alpha_np_m=optics.alpha_np_m,
            beam=lambda th: beam_weight(th, radar.beamwidth_deg),
            polarization=ray_polarization(radar.polarization))
        r_angle, r_f = target_reflection(obj, complex(snow_m.permittivity(fc)), fc, fb,
                                         polarization=radar.polarization)
        disp = vertical_dispersion(optics, obj.depth_m, fc, fb)
        spec = r_f * disp
        out.append(_Target(mesh, table.along_x(mesh.centre_m[:, 2]), r_angle, spec))
    return out


def _binned(n_rows: int, row: np.ndarray, delay_s: np.ndarray, amp: np.ndarray,
            grid: _Grid) -> np.ndarray:
    """Amplitudes at delays on the bin grid by linear interpolation, (n_rows, n_bin)."""
    size = n_rows * grid.n_bin
    keep = delay_s < grid.t_max_s
    pos = delay_s[keep] / grid.dt_bin_s
    i0 = pos.astype(np.intp)
    w1 = pos - i0
    a = amp[keep]
    flat = row[keep] * grid.n_bin + i0
    out = np.bincount(flat, weights=a - a * w1, minlength=size + 1)
    out[1:] += np.bincount(flat, weights=a * w1, minlength=size)[:size]
    return out[:size].reshape(n_rows, grid.n_bin)


def _target_bins(t: _Target, x_chunk: np.ndarray, grid: _Grid) -> np.ndarray:
    """Facet amplitudes of one target binned at their delays, shape (n_chunk, n_bin)."""
    c = t.mesh.centre_m
    nrm = t.mesh.normal
    dx = c[None, :, 0] - x_chunk[:, None]
    dy = c[None, :, 1]
    X = np.hypot(dx, dy)
    tau, gain, s_loc = t.table.lookup(X)
    # ray direction at the facet: horizontal (dx, dy)/X * sin, vertical cos (z down);
    # cos_loc = -(direction . normal)
    horiz = (nrm[None, :, 0] * dx + nrm[None, :, 1] * dy) / np.maximum(X, 1e-9)
    cos_loc = -(s_loc * horiz + np.sqrt(np.maximum(1.0 - s_loc * s_loc, 0.0))
                * nrm[None, :, 2])
    lit = (cos_loc > 0) & (tau < grid.t_max_s)
    rows = np.nonzero(lit)
    cl = cos_loc[lit]
    fc_ = np.minimum(cl, 1.0) * (_N_COS - 1.000001)
    ic = fc_.astype(np.intp)
    r0 = t.r_cos.take(ic)
    r_rel = r0 + (t.r_cos.take(ic + 1) - r0) * (fc_ - ic)
    amp = r_rel * cl * t.mesh.area_m2[rows[1]] * gain[lit]
    return _binned(x_chunk.size, rows[0], tau[lit], amp, grid)


def _clutter_parts(scenario: Any, optics: ColumnOptics, pulse: Any, grid: _Grid
                   ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Clutter scatterers: positions and amplitudes at fc in two regimes.

    Returns x, y, z, amplitude at fc (field per unit spherical wave times R^2, i.e.
    sqrt(sigma / 4 pi) / n with the sign of the regime, see targets.clods) and a bool
    "Rayleigh" flag (amplitude grows as f^2 below ka = 1).
    """
    field = scenario.clutter_field()
    fc = pulse.center_frequency_hz
    x, y, z, size = field.x_m, field.y_m, field.z_m, field.size_m
    snowpack = scenario.snowpack
    per_layer = [clutter_block_contrast(layer, fc) for layer in snowpack.layers]
    idx = np.minimum(np.searchsorted(snowpack.interfaces_m, z, side="left"),
                     len(snowpack.layers) - 1)
    n_s = np.array([p[0] for p in per_layer])[idx]
    K = np.array([p[1] for p in per_layer])[idx]
    r = np.array([p[2] for p in per_layer])[idx]
    amp, rayleigh = clod_amplitude(n_s, K, r, size / 2, fc)
    return x, y, z, amp, rayleigh


# --------------------------------------------------------------------------- main
def simulate(scenario: Any, *, components: Iterable[str] = COMPONENTS,
             chunk_traces: int = 256) -> Radargram:
    """Synthesise the radargram of ``scenario``.

    Parameters
    ----------
    scenario : Scenario
    components : iterable of str
        Parts to include, a subset of :data:`COMPONENTS` (default: all). Leaving out
        "layers" gives the objects alone (useful to study a hyperbola).
    chunk_traces : int
        Traces computed together, in [1, 4096]: memory grows with the block, not with the
        survey length.

    Returns
    -------
    Radargram
        ``data[i_sample, i_trace]`` in received amplitude relative to sqrt(P_t), with
        ``truth`` holding one :class:`TruthMarker` per person and object.
    """
    from .scene import Scenario

    if not isinstance(scenario, Scenario):
        raise ValueError(f"scenario must be a Scenario, got {type(scenario).__name__}")
    if isinstance(components, str):
        components = (components,)
    comps = tuple(components)
    for c in comps:
        if c not in COMPONENTS:
            raise ValueError(f"components contains {c!r}; allowed: {', '.join(COMPONENTS)}")
    chunk = int(chunk_traces)
    if not 1 <= chunk <= 4096:
        raise ValueError(f"chunk_traces = {chunk_traces!r} is outside [1, 4096]")
    radar = scenario.radar
    pulse = radar.make_pulse()
    grid = _grid(radar, pulse)
    optics = column_optics(scenario)
    x_tr = scenario.survey.position_m
    n_tr = x_tr.size
    ns = grid.n_samples
    af = antenna_factor(radar.antenna_gain_dbi, radar.center_frequency_hz)
    data = np.zeros((n_tr, ns))  # trace-major while computing, transposed at the end
    if "layers" in comps:
        col = _column_trace(scenario, pulse, with_thin_layers="clutter" in comps)
        data += af * col[None, :]
    targets = _prepare_targets(scenario, pulse, grid, optics, x_tr) if "objects" in comps \
        else []
    fb = grid.freq_hz[grid.band]
    sinc2 = np.sinc(fb * grid.dt_bin_s) ** 2
    common = pulse.spectrum(fb) * (1j * fb / C0_M_S) / sinc2 / grid.dt_bin_s * af
    clutter = None
    if "clutter" in comps and scenario.clutter.scatterer_density_per_m3 > 0:
        cx, cy, cz, camp, cray = _clutter_parts(scenario, optics, pulse, grid)
        if cx.size:
            clutter = (cx, cy, cz, camp, cray)
    fc = pulse.center_frequency_hz
    rayleigh_shape = (fb / fc) ** 2
    for start in range(0, n_tr, chunk):
        xs = x_tr[start:start + chunk]
        spec = np.zeros((xs.size, fb.size), complex)
        for t in targets:
            bins = _target_bins(t, xs, grid)
            spec += scipy.fft.rfft(bins, axis=1)[:, grid.band] * t.spectrum
        if clutter is not None:
            cx, cy, cz, camp, cray = clutter
            X = np.hypot(cx[None, :] - xs[:, None], cy[None, :])
            Z = np.broadcast_to(cz[None, :], X.shape)
            res = solve_rays(X, Z, antenna_height_m=radar.antenna_height_m,
                             thickness_m=optics.thickness_m, index=optics.index,
                             alpha_np_m=optics.alpha_np_m,
                             polarization=ray_polarization(radar.polarization))
            g = res.transmission * res.attenuation / res.spreading_m2
            g = g * beam_weight(np.arcsin(np.clip(res.sin_theta0, 0, 1)), radar.beamwidth_deg)
            g = np.where(res.reached, g, 0.0)
            rows = np.broadcast_to(np.arange(xs.size)[:, None], X.shape)
            for mask, shape in ((cray, rayleigh_shape), (~cray, None)):
                if not np.any(mask):
                    continue
                amp = (camp[None, :] * g)[:, mask]
                bins = _binned(xs.size, rows[:, mask].ravel(), res.time_s[:, mask].ravel(),
                               amp.ravel(), grid)
                # point scatterer: E = amp * T2 att / R^2 (no PO prefactor: divide it out)
                s = scipy.fft.rfft(bins, axis=1)[:, grid.band]
                s = s / (1j * fb / C0_M_S)
                spec += s * (shape if shape is not None else 1.0)
        if targets or clutter is not None:
            full = np.zeros((xs.size, grid.freq_hz.size), complex)
            full[:, grid.band] = spec * common
            block = scipy.fft.irfft(full, n=grid.n_bin, axis=1)[:, : OVERSAMPLE * ns : OVERSAMPLE]
            data[start:start + xs.size] += block
    if "noise" in comps:
        seq = np.random.SeedSequence(scenario.clutter.seed, spawn_key=(2,))
        rng = np.random.default_rng(seq)
        rms = noise_rms(radar.transmit_power_dbm, radar.noise_floor_dbm, radar.stacking)
        for start in range(0, n_tr, chunk):
            m = min(chunk, n_tr - start)
            data[start:start + m] += rms * rng.standard_normal((m, ns))
    truth = _truth(scenario, optics)
    return Radargram(np.ascontiguousarray(data.T), radar.time_s, x_tr, scenario=scenario,
                     truth=truth)


def _truth(scenario: Any, optics: ColumnOptics) -> tuple[TruthMarker, ...]:
    h = scenario.radar.antenna_height_m
    out = []
    persons = 0
    for obj in scenario.targets:
        if kind_of(obj).placement == "persons":
            persons += 1
            label = obj.label or f"person {persons}"
        else:
            label = getattr(obj, "label", "") or obj.kind
        t = _time_to(optics, h, obj.depth_m, obj.offset_m)
        out.append(TruthMarker(obj.kind, float(obj.position_m), float(obj.depth_m), t,
                               float(obj.offset_m), label))
    return tuple(out)
