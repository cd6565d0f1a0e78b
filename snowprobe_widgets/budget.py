"""Link budget: will the radar see this burial, before anyone simulates a radargram?

``link_budget(scenario) -> LinkBudget`` follows the structure of the GPR radar range
equation as a sum of decibel terms (Annan, GPR Workshop Notes 2001, ch. 6, after Annan &
Cosway 1992; Daniels, *Ground Penetrating Radar*, 2nd ed. 2004, ch. 2): system
performance, antenna terms, two-way spreading, surface transmission, attenuation in each
layer and target reflectivity. In the package's normalisation
(:mod:`snowprobe_widgets.radar_equation`) the echo of a buried reflector straight below
the antenna is

    A = (G lambda_c / 4 pi) * T2 * exp(-2 sum alpha_j d_j) * r * C / (2 R_e),
    R_e = h + sum d_j / n_j,

the planar-reflector form of the range equation (image theory; REFERENCES 7.8: with h = 0
it is exactly P_r/P_t = G^2 lambda_m^2 |r|^2 e^{-4 alpha R} / ((4 pi)^2 (2R)^2)). C is the
curvature factor of the target's top surface, 1 / sqrt((1 + n R_e / rho_1)(1 + n R_e /
rho_2)) with principal radii rho_1, rho_2 (the mirror equation in reduced distances;
Gaussian optics, e.g. Hecht, *Optics*, ch. 5; derivation ours): 1 for a flat reflector,
the point-target law for a small sphere. The echo's peak is then evaluated over the pulse
band, with dispersion and the frequency response of the target's reflection (the
clothing / skin / fat / muscle stack of a person), so that the budget predicts the peak
that :func:`snowprobe_widgets.simulate` puts in the radargram; the difference between
that peak and the centre-frequency product is one row ("spectral shaping").

Other results: range resolution ``v / (2 B)`` (bandwidth form, REFERENCES 7.6), first
Fresnel zone ``sqrt(lambda_m d / 2 + lambda_m^2 / 16)`` at the target depth (REFERENCES
7.7), trace spacing by the quarter-wavelength rule ``lambda_m / 4`` (Annan; REFERENCES
7.9) and the time window ``1.3 x`` the two-way time to the ground (Annan; REFERENCES 7.9).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from typing import Any

import numpy as np
import scipy.fft

from ._validate import check_range
from .budget_checks import CLUTTER_MARGIN_DB, beam_edge_m, overruling_warnings
from .budget_checks import two_way_time_s as _two_way_time_s
from .constants import C0_M_S
from .detection import DEFAULT_THRESHOLD_DB
from .radar_equation import antenna_factor, beam_weight, db20, noise_rms
from .raypaths import layers_above_m
from .synthesis import (
    ColumnOptics,
    clutter_block_contrast,
    column_optics,
    dispersion_factor,
    index_offsets,
    target_reflection_spectrum,
)
from .targets import kind_of

__all__ = [
    "BudgetRow",
    "LinkBudget",
    "link_budget",
    "range_resolution_m",
    "fresnel_radius_m",
    "quarter_wave_spacing_m",
    "time_window_s",
    "SEARCH_LIMIT_M",
    "DEPTH_LIMITS",
]

#: Echo-to-clutter ratio reported when the scenario has no clutter scatterers, dB.
NO_CLUTTER_DB = 120.0
#: Deepest burial the search for the detectable limit evaluates, m. A result that reaches
#: it is reported as "beyond SEARCH_LIMIT_M m the model was not evaluated", never as a depth.
SEARCH_LIMIT_M = 30.0
#: Depths of the coarse scan, and of the refinement inside the bracket it finds.
_N_SEARCH = 61
_N_REFINE = 9
#: What can limit the deepest detectable burial (``LinkBudget.depth_limited_by``).
DEPTH_LIMITS: tuple[str, ...] = ("window", "noise", "clutter", "dynamic range", "ringing",
                                 "search limit")
#: The floors an echo must clear, in the order _deepest stacks them.
_FLOORS = ("noise", "clutter", "dynamic range", "ringing")
_FLOOR_WORDS = {"noise": "receiver noise", "clutter": "debris clutter",
                "dynamic range": "receiver's dynamic-range floor under the surface echo",
                "ringing": "antenna ringing"}


# --------------------------------------------------------------------------- formulas
def range_resolution_m(bandwidth_hz: float, permittivity: float) -> float:
    """Vertical resolution c0 / (2 B sqrt(eps')) (bandwidth form; REFERENCES 7.6), m."""
    b = check_range("bandwidth_hz", bandwidth_hz, 0.0, 1e11, unit="Hz", low_open=True)
    e = check_range("permittivity", permittivity, 1.0, 100.0)
    return C0_M_S / (2.0 * b * math.sqrt(e))


def fresnel_radius_m(wavelength_m: float, depth_m: float, *, antenna_height_m: float = 0.0,
                     index: float = 1.0) -> float:
    """First Fresnel zone of a target at ``depth_m`` seen from ``antenna_height_m`` above a
    medium of refractive index ``index``: sqrt(lambda_m (d + n h) / 2 + lambda_m^2 / 16), m.

    With h = 0 this is the ground-coupled form sqrt(lambda d / 2 + lambda^2 / 16)
    (REFERENCES 7.7). The antenna height enters through Snell's law: to second order in
    the ray angle the two-way path to a point x off axis grows by n x^2 / (d + n h), so the
    half-period zone (two-way difference lambda_0 / 2) has x^2 = lambda_m (d + n h) / 2
    (paraxial Fermat; derivation ours, checked against an exact Fermat computation in
    tests/test_budget.py).

    Parameters
    ----------
    wavelength_m : float
        Wavelength in the medium at the target, m, in (0, 1000].
    depth_m : float
        Depth of the target below the surface, m, in [0, 1000].
    antenna_height_m : float
        Height of the antenna above the surface, m, in [0, 1000].
    index : float
        Real refractive index of the medium, in [1, 10].
    """
    lam = check_range("wavelength_m", wavelength_m, 0.0, 1e3, unit="m", low_open=True)
    d = check_range("depth_m", depth_m, 0.0, 1e3, unit="m")
    h = check_range("antenna_height_m", antenna_height_m, 0.0, 1e3, unit="m")
    n = check_range("index", index, 1.0, 10.0)
    return math.sqrt(lam * (d + n * h) / 2.0 + lam * lam / 16.0)


def quarter_wave_spacing_m(center_frequency_hz: float, permittivity: float) -> float:
    """Trace spacing lambda_m / 4 = c0 / (4 f_c sqrt(eps')) (Annan; REFERENCES 7.9), m."""
    f = check_range("center_frequency_hz", center_frequency_hz, 0.0, 1e11, unit="Hz",
                    low_open=True)
    e = check_range("permittivity", permittivity, 1.0, 100.0)
    return C0_M_S / (4.0 * f * math.sqrt(e))


def time_window_s(two_way_time_s: float, margin: float = 1.3) -> float:
    """Recording window: ``margin`` times the deepest two-way time (Annan: 1.3), s."""
    t = check_range("two_way_time_s", two_way_time_s, 0.0, 1.0, unit="s")
    return margin * t


# --------------------------------------------------------------------------- objects
@dataclass(frozen=True)
class BudgetRow:
    """One line of the budget.

    Attributes
    ----------
    term : str
        What it is ("two-way spreading").
    value : float
        Its value in ``unit`` (finite).
    unit : str
        "dB" for budget terms and ratios, "dBm" for powers, else "m" or "ns".
    explanation : str
        One line in plain words.
    """

    term: str
    value: float
    unit: str
    explanation: str

    @property
    def value_db(self) -> float:
        """The value (in ``unit``: dB for the budget terms)."""
        return self.value


@dataclass(frozen=True)
class LinkBudget:
    """The link budget of one target.

    Attributes
    ----------
    rows : tuple of BudgetRow
        Budget terms (their dB values add up to ``echo_to_noise_db``), then the clutter
        level and the results.
    echo_to_noise_db, echo_to_clutter_db : float
        Peak echo over the rms receiver noise after stacking / over the rms clutter, dB.
    max_detectable_depth_m : float
        Deepest burial (same target, same snow, the bottom layer extended) whose echo,
        taken over the antenna's band, stands ``threshold_db`` above the receiver noise,
        the volume clutter, the dynamic-range floor under the surface echo and the
        antenna ringing together (their rms added in power), and whose two-way time lies
        inside the recording window. ``depth_limited_by`` says which limit set it.
    range_resolution_m : float
        Range resolution in the snow at the target.
    footprint_radius_m : float
        First Fresnel zone at the target, with the antenna height and the refraction at
        the surface (paraxial, :func:`fresnel_radius_m`).
    trace_spacing_m : float
        The smaller of the quarter wavelength in the densest layer (Annan) and a quarter
        of the footprint diameter (four traces across the zone; our rule).
    time_window_s : float
        Window the survey needs: 1.3 x the two-way time to the ground.
    target_depth_m : float
    threshold_db : float
    target_label : str
    verdict : str
        Plain-language summary with numbers.
    depth_limited_by : str
        One of :data:`DEPTH_LIMITS`: "window" (the snow would pass a deeper echo),
        "noise", "clutter", "dynamic range", "ringing", or "search limit" (detectable
        down to SEARCH_LIMIT_M; deeper was not evaluated).
    snow_limited_depth_m : float
        The deepest detectable burial with a window long enough (at most SEARCH_LIMIT_M).
    window_depth_m : float
        Deepest burial whose echo arrives within the recording window.
    window_needed_s : float
        Two-way time to ``snow_limited_depth_m``: the window that would reach it, s.
    lane_spacing_m : float
        Spacing of parallel survey lines: one footprint diameter (our rule: a body
        between two lines lies within the first Fresnel zone of one of them).
    warnings : tuple of str
        Plain sentences for each condition that overrules the budget (time window, trace
        spacing, footprint, detection level; :mod:`snowprobe_widgets.budget_checks`);
        empty when nothing overrules.
    likely_visible : bool
        The budget's margin is met (echo ``threshold_db`` above the noise, 6 dB above the
        clutter, within the window) and no condition of :attr:`warnings` overrules it.
    model_warnings : tuple of str
        Models used outside their calibrated band
        (:func:`snowprobe_widgets.validity.scenario_warnings`).
    """

    rows: tuple[BudgetRow, ...]
    echo_to_noise_db: float
    echo_to_clutter_db: float
    max_detectable_depth_m: float
    range_resolution_m: float
    footprint_radius_m: float
    trace_spacing_m: float
    time_window_s: float
    target_depth_m: float
    threshold_db: float
    target_label: str
    verdict: str
    depth_limited_by: str
    snow_limited_depth_m: float
    window_depth_m: float
    window_needed_s: float
    lane_spacing_m: float
    warnings: tuple[str, ...]
    likely_visible: bool = False
    model_warnings: tuple[str, ...] = ()

    def _repr_html_(self) -> str:
        from .notebook_html import budget_html

        return budget_html(self)

    def row(self, term: str) -> BudgetRow:
        """The row named ``term``."""
        for r in self.rows:
            if r.term == term:
                return r
        raise KeyError(f"no row {term!r}; rows: {', '.join(r.term for r in self.rows)}")


# --------------------------------------------------------------------------- physics
def _extended(optics: ColumnOptics, depth_m: float) -> ColumnOptics:
    thick = optics.thickness_m.copy()
    thick[-1] += max(0.0, depth_m - float(thick.sum()) + 0.5)
    return dataclasses.replace(optics, thickness_m=thick)


def _above(optics: ColumnOptics, depth_m: float) -> np.ndarray:
    return layers_above_m(optics.thickness_m, depth_m)


def _above_many(optics: ColumnOptics, depths_m: np.ndarray) -> np.ndarray:
    """:func:`layers_above_m` for many depths at once, shape (n_depths, n_layers)."""
    thick = optics.thickness_m
    tops = np.concatenate([[0.0], np.cumsum(thick)[:-1]])
    return np.clip(np.asarray(depths_m, float)[:, None] - tops[None, :], 0.0, thick[None, :])


def _layer_of(optics: ColumnOptics, depth_m: np.ndarray | float) -> np.ndarray | int:
    bottoms = np.cumsum(optics.thickness_m)
    j = np.minimum(np.searchsorted(bottoms, depth_m, side="left"), bottoms.size - 1)
    return j if np.ndim(depth_m) else int(j)


def _two_way_transmission(optics: ColumnOptics, D: np.ndarray) -> np.ndarray | float:
    """prod (1 - r_j^2) over the interfaces crossed down to the depth whose layer parts
    above it are ``D`` (shape (n_layers,) or (n_depths, n_layers)): the surface always,
    a deeper interface when the layer below it is entered."""
    n = np.asarray(optics.index, float)
    above = np.concatenate([[1.0], n[:-1]])
    factor = 1.0 - ((above - n) / (above + n)) ** 2
    entered = np.asarray(D) > 0
    entered[..., 0] = True
    t2 = np.prod(np.where(entered, factor, 1.0), axis=-1)
    return t2 if np.ndim(t2) else float(t2)


@dataclass(frozen=True)
class _Echo:
    peak: float  # received amplitude re sqrt(P_t)
    t2: float
    spreading: float  # 1 / (2 R_e)
    attenuation_db: tuple[float, ...]  # per layer, negative
    reflectivity: float  # |r(fc)| * C (* plate factor)
    antenna: float
    r_e_m: float


class _EchoModel:
    """Everything of a target's echo that does not depend on its depth, computed once.

    The echo is evaluated over the antenna's band only (:attr:`Radar.antenna_band_hz`
    within the pulse's band): energy the antenna does not radiate and receive with its
    stated gain is not counted, so the low-frequency tail of a wide pulse, which the
    attenuation of wet snow spares, cannot carry a deep echo.
    """

    def __init__(self, scenario: Any, optics: ColumnOptics, target: Any,
                 max_depth_m: float) -> None:
        radar = scenario.radar
        self.target = target
        self.fc = fc = radar.center_frequency_hz
        self.h = radar.antenna_height_m
        self.opt = _extended(optics, max_depth_m + 0.5)
        self.af = antenna_factor(radar.antenna_gain_dbi, fc)
        pulse = radar.make_pulse()
        dt = radar.dt_s
        self.dt = dt
        self.n_fft = scipy.fft.next_fast_len(int(math.ceil(40.0 / fc / dt)) * 2, real=True)
        f = np.fft.rfftfreq(self.n_fft, dt)
        lo, hi = pulse.band_hz(1e-6)
        a_lo, a_hi = radar.antenna_band_hz
        self.band = (f >= max(lo, a_lo, 1e6)) & (f <= min(hi, a_hi, 0.5 / dt))
        self.n_f = f.size
        fb = f[self.band]
        self.k0 = 2 * math.pi * fb / C0_M_S
        self.pulse_spec = pulse.spectrum(fb)
        # the pulse as the antenna radiates it keeps its peak (the radar's stated power
        # goes out in the antenna's band): scale the in-band spectrum to peak 1
        self.pulse_spec = self.pulse_spec / max(
            float(np.max(np.abs(self._waves(self.pulse_spec[None, :])))), 1e-300)
        self.offsets = np.array(index_offsets(self.opt, fb)).reshape(-1, fb.size)
        # one reflection per distinct snow around the target (equal layers share it)
        cache: dict[complex, np.ndarray] = {}
        for m in self.opt.materials:
            eps = complex(m.permittivity(fc))
            if eps not in cache:
                cache[eps] = target_reflection_spectrum(target, eps, np.append(fb, fc),
                                                        polarization=radar.polarization)
        r_f = [cache[complex(m.permittivity(fc))] for m in self.opt.materials]
        self.r_f = np.array([r[:-1] for r in r_f]).reshape(-1, fb.size)
        self.r_fc = np.array([abs(complex(r[-1])) for r in r_f])
        # the kind's budget terms: principal radii of the target's top (inf: flat), and
        # its extra factor (a metal plate narrower than the first Fresnel zone returns
        # less than a flat interface; 1 for the other built-in kinds)
        self.kind = kind_of(target)
        self.radii = self.kind.principal_radii_m(target)

    def _waves(self, spectra: np.ndarray) -> np.ndarray:
        full = np.zeros((spectra.shape[0], self.n_f), complex)
        full[:, self.band] = spectra
        return scipy.fft.irfft(full / self.dt, n=self.n_fft, axis=1)

    def _terms(self, depths_m: np.ndarray) -> tuple[dict[str, np.ndarray], np.ndarray]:
        """The centre-frequency terms at each depth (arrays over ``depths_m``) and the
        echoes' band spectra, shape (n_depths, n_band)."""
        opt = self.opt
        depths = np.asarray(depths_m, float)
        D = _above_many(opt, depths)
        r_e = self.h + D @ (1.0 / opt.index)
        t2 = _two_way_transmission(opt, D)
        att_db = -2.0 * D * opt.alpha_np_m[None, :] * (20.0 / math.log(10.0))
        j = _layer_of(opt, depths)
        n_loc = opt.index[j]
        rho1, rho2 = self.radii
        curv = 1.0 / np.sqrt((1 + n_loc * r_e / rho1) * (1 + n_loc * r_e / rho2))
        curv *= np.array([self.kind.budget_factor(self.target, C0_M_S / (self.fc * n), r, n)
                          for n, r in zip(n_loc, r_e, strict=True)])
        # dispersion and frequency-dependent loss relative to the centre-frequency values
        disp = dispersion_factor(self.offsets, self.k0, D, opt.alpha_np_m)
        amp_fc = self.af * t2 * 10 ** (att_db.sum(axis=1) / 20) * curv / (2 * r_e)
        terms = {"peak": amp_fc, "t2": t2, "r_e": r_e, "att_db": att_db,
                 "reflectivity": self.r_fc[j] * curv}
        return terms, self.pulse_spec[None, :] * self.r_f[j] * disp

    def echo(self, depth_m: float) -> _Echo:
        """The echo's terms and its peak (received amplitude re sqrt(P_t)) at ``depth_m``."""
        terms, spec = self._terms(np.array([depth_m]))
        peak = float(terms["peak"][0]) * float(np.max(np.abs(self._waves(spec))))
        r_e = float(terms["r_e"][0])
        return _Echo(peak, float(terms["t2"][0]), 1 / (2 * r_e),
                     tuple(float(a) for a in terms["att_db"][0]),
                     float(terms["reflectivity"][0]), self.af, r_e)

    def peaks(self, depths_m: np.ndarray, chunk: int = 32) -> np.ndarray:
        """Echo peaks at many depths (one batched transform per ``chunk`` depths)."""
        out = np.empty(depths_m.size)
        for s in range(0, depths_m.size, chunk):
            terms, spec = self._terms(depths_m[s:s + chunk])
            out[s:s + spec.shape[0]] = terms["peak"] * np.max(np.abs(self._waves(spec)),
                                                              axis=1)
        return out

    def surface_peak(self) -> float:
        """Peak of the snow surface's echo (flat reflector at the antenna height)."""
        n1 = float(self.opt.index[0])
        return self.af * abs((1 - n1) / (1 + n1)) / (2 * self.h)


class _ClutterModel:
    """RMS amplitude of the volume clutter arriving with an echo from a given depth.

    Expected number of scatterers in the resolution shell under the beam (density x
    beam footprint area x range resolution in the snow), each a point target of
    sigma = min(Rayleigh, optical) with the scenario's size distribution (uniform in
    0.5-1.5 x the mean size), added incoherently (common practice for volume clutter).
    The thin random layers are horizontal: background removal takes them out, so they
    are not counted here. Per-layer terms are computed once; :meth:`rms` is cheap.
    """

    def __init__(self, scenario: Any, optics: ColumnOptics, max_depth_m: float) -> None:
        cl = scenario.clutter
        self.density = cl.scatterer_density_per_m3
        radar = scenario.radar
        fc = radar.center_frequency_hz
        self.h = radar.antenna_height_m
        self.opt = _extended(optics, max_depth_m + 0.5)
        self.beamwidth_deg = radar.beamwidth_deg
        half_bw = math.radians(radar.beamwidth_deg) / 2
        pulse = radar.make_pulse()
        self.bandwidth = pulse.bandwidth_hz
        # incoherent sum of wavelets: the mean square at one instant is (scatterers per
        # unit two-way time) x a^2 x integral w^2 dt; the shell holds 1/B of two-way time
        tt = np.linspace(-4.0, 4.0, 4001) / fc
        self.energy = float(np.sum(pulse.waveform(tt) ** 2) * (tt[1] - tt[0])) * self.bandwidth
        # across the footprint the two-way beam weight falls to 1/2 at the -3 dB edge;
        # its mean square over a uniform disc, numerically
        w = beam_weight(np.linspace(0, half_bw, 50), radar.beamwidth_deg)
        self.w2 = float(np.mean(w * w * np.linspace(0, 1, 50)) * 2)
        self.af = antenna_factor(radar.antenna_gain_dbi, fc)
        layers = scenario.snowpack.layers
        a = 0.5 * cl.scatterer_size_m * np.linspace(0.5, 1.5, 101)
        amp2 = []
        for j, n in enumerate(self.opt.index):
            _, K, r = clutter_block_contrast(layers[min(j, len(layers) - 1)], fc)
            k = 2 * math.pi * fc * n / C0_M_S
            sigma = np.minimum(4 * math.pi * k**4 * a**6 * K**2, math.pi * a * a * r * r)
            amp2.append(float(np.mean(sigma)) / (4 * math.pi) / n**2)
        self.amp2 = np.array(amp2)

    def rms(self, depths_m: np.ndarray) -> np.ndarray:
        """RMS clutter amplitude with the echo of each depth in ``depths_m``."""
        depths = np.asarray(depths_m, float)
        if self.density <= 0:
            return np.zeros(depths.shape)
        opt = self.opt
        j = _layer_of(opt, depths)
        n = opt.index[j]
        radius = beam_edge_m(opt, self.h, self.beamwidth_deg, depths)
        shell = C0_M_S / (2 * self.bandwidth * n)
        count = self.density * math.pi * radius**2 * shell
        D = _above_many(opt, depths)
        r_e = self.h + D @ (1.0 / opt.index)
        att = np.exp(-2 * (D @ opt.alpha_np_m))
        return (self.af * _two_way_transmission(opt, D) * att
                * np.sqrt(count * self.amp2[j] * self.w2 * self.energy) / r_e**2)


def _depth_at_time_m(optics: ColumnOptics, h: float, time_s: float) -> float:
    """Depth whose echo arrives ``time_s`` after transmission (straight down), m; the
    bottom layer continues below the column."""
    path = C0_M_S * time_s / 2 - h  # one-way optical path left in the snow
    depth = 0.0
    for d, n in zip(optics.thickness_m, optics.index, strict=True):
        if path <= d * n:
            return depth + max(path, 0.0) / n
        path -= d * n
        depth += d
    return depth + path / float(optics.index[-1])


@dataclass(frozen=True)
class _DepthLimit:
    depth_m: float  # deepest detectable inside the window
    limited_by: str
    snow_depth_m: float  # deepest detectable if the window were long enough
    snow_limited_by: str
    window_depth_m: float
    window_needed_s: float


def _deepest(radar: Any, model: _EchoModel, clutter: _ClutterModel, noise: float,
             thr_db: float) -> _DepthLimit:
    """Scan the depth with the same target: where does its echo stop standing ``thr_db``
    above the noise, the clutter, the dynamic-range floor and the ringing together
    (their rms added in power), and where does the recording window end?"""
    opt, h = model.opt, model.h
    dr_floor = model.surface_peak() * 10 ** (-radar.dynamic_range_db / 20)

    def margins(depths: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        times = 2.0 * (h + _above_many(opt, depths) @ opt.index) / C0_M_S
        floors = np.array([
            np.full(depths.size, noise),
            clutter.rms(depths),
            np.full(depths.size, dr_floor),
            np.where(times <= radar.ringing_duration_s, 10 ** (radar.ringing_level_db / 20),
                     0.0),
        ])
        peaks = model.peaks(depths)
        return np.asarray(db20(peaks / np.sqrt(np.sum(floors**2, axis=0)))) - thr_db, floors

    depths = np.linspace(0.02, SEARCH_LIMIT_M, _N_SEARCH)
    margin, floors = margins(depths)
    ok = np.nonzero(margin >= 0)[0]
    if ok.size == 0:
        snow_depth, snow_by = 0.0, _FLOORS[int(np.argmax(floors[:, 0]))]
    elif ok[-1] == depths.size - 1:
        snow_depth, snow_by = SEARCH_LIMIT_M, "search limit"
    else:
        # refine inside the bracket, then interpolate the margin (dB) linearly
        fine = np.linspace(depths[ok[-1]], depths[ok[-1] + 1], _N_REFINE + 2)
        m_fine, f_fine = margins(fine)
        i = int(np.nonzero(m_fine >= 0)[0][-1])
        i = min(i, fine.size - 2)
        z0, z1, m0, m1 = fine[i], fine[i + 1], m_fine[i], m_fine[i + 1]
        snow_depth = float(z0 + m0 * (z1 - z0) / (m0 - m1)) if m1 < 0 <= m0 else float(z0)
        snow_by = _FLOORS[int(np.argmax(f_fine[:, i + 1]))]
    window_depth = _depth_at_time_m(opt, h, radar.time_window_s)
    needed = _two_way_time_s(opt, h, snow_depth)
    if snow_depth > window_depth:
        return _DepthLimit(window_depth, "window", snow_depth, snow_by, window_depth, needed)
    return _DepthLimit(snow_depth, snow_by, snow_depth, snow_by, window_depth, needed)


def _reason(limit: str, radar: Any, thr: float) -> str:
    return {
        "noise": f"where its echo falls to {thr:g} dB over the receiver noise",
        "clutter": f"where its echo falls to {thr:g} dB over the debris clutter",
        "dynamic range": (f"where its echo falls below the receiver's "
                          f"{radar.dynamic_range_db:g} dB dynamic range under the surface "
                          "echo"),
        "ringing": (f"where its echo is lost in the antenna ringing of the first "
                    f"{radar.ringing_duration_s * 1e9:.1f} ns"),
    }[limit]


def _depth_sentence(lim: _DepthLimit, radar: Any, thr: float) -> str:
    beyond = f"beyond {SEARCH_LIMIT_M:g} m the model was not evaluated"
    if lim.limited_by == "search limit":
        return f"Detectable at every depth searched, down to {SEARCH_LIMIT_M:g} m; {beyond}."
    if lim.limited_by == "window":
        if lim.snow_limited_by == "search limit":
            reach = (f"the snow would let its echo through from deeper than {SEARCH_LIMIT_M:g} m "
                     f"({beyond}), which needs a window of more than "
                     f"{lim.window_needed_s * 1e9:.0f} ns")
        else:
            reach = (f"the snow would let its echo through from as deep as about "
                     f"{lim.snow_depth_m:.1f} m, which needs a window of about "
                     f"{lim.window_needed_s * 1e9:.0f} ns")
        return (f"Deepest detectable at this setting: about {lim.depth_m:.1f} m, where the "
                f"{radar.time_window_s * 1e9:.0f} ns recording window ends, not the snow: "
                f"{reach}.")
    if lim.depth_m <= 0.0:
        return (f"Not detectable at any depth at this setting: even near the surface its "
                f"echo stays under {thr:g} dB over the "
                f"{_FLOOR_WORDS[lim.limited_by]}.")
    return (f"Deepest detectable at this setting: about {lim.depth_m:.1f} m, "
            f"{_reason(lim.limited_by, radar, thr)}.")


def _label(target: Any, scenario: Any) -> str:
    if kind_of(target).placement == "persons":
        i = scenario.persons.index(target) + 1 if target in scenario.persons else 1
        return target.label or f"person {i}"
    return getattr(target, "label", "") or target.kind


def link_budget(scenario: Any, target: Any = None, *,
                threshold_db: float = DEFAULT_THRESHOLD_DB) -> LinkBudget:
    """The link budget of ``target`` (default: the scenario's first buried person).

    Parameters
    ----------
    scenario : Scenario
    target : Person, Boulder, Branch or MetalPlate, optional
        Any buried thing, in the scenario or not (placed in the scenario's snowpack).
    threshold_db : float
        Detection level: how far the echo must stand above the noise and clutter, dB, in
        [0, 60]; the automatic detector's default
        (:data:`snowprobe_widgets.detection.DEFAULT_THRESHOLD_DB`), so that one level
        serves both.

    Raises
    ------
    ValueError
        If no target is given and nobody is buried, or the threshold is out of range.
    """
    from .scene import Scenario
    from .validity import scenario_warnings

    if not isinstance(scenario, Scenario):
        raise ValueError(f"scenario must be a Scenario, got {type(scenario).__name__}")
    thr = check_range("threshold_db", threshold_db, 0.0, 60.0, unit="dB")
    if target is None:
        if not scenario.persons:
            raise ValueError(
                "the scenario has no buried person: a link budget needs a target "
                "(pass target=... for a debris object)")
        target = scenario.persons[0]
    if target.depth_m > scenario.snowpack.depth_m:
        raise ValueError(
            f"depth_m = {target.depth_m:g} m of the target is below the "
            f"{scenario.snowpack.depth_m:g} m snowpack; allowed range "
            f"[0, {scenario.snowpack.depth_m:g}] m")
    radar = scenario.radar
    optics = column_optics(scenario)
    depth = float(target.depth_m)
    model = _EchoModel(scenario, optics, target, SEARCH_LIMIT_M)
    echo = model.echo(depth)
    rms = noise_rms(radar.transmit_power_dbm, radar.noise_floor_dbm, radar.stacking)
    enr = float(db20(echo.peak / rms))
    clutter_model = _ClutterModel(scenario, optics, SEARCH_LIMIT_M)
    clutter = float(clutter_model.rms(np.array([depth]))[0])
    ecr = NO_CLUTTER_DB if clutter <= 0 else min(float(db20(echo.peak / clutter)),
                                                  NO_CLUTTER_DB)
    lim = _deepest(radar, model, clutter_model, rms, thr)
    dr_floor = model.surface_peak() * 10 ** (-radar.dynamic_range_db / 20)
    t_target = _two_way_time_s(model.opt, radar.antenna_height_m, depth)
    ring = 10 ** (radar.ringing_level_db / 20) if t_target <= radar.ringing_duration_s else 0.0
    # echo over everything but the clutter: noise, dynamic-range floor, ringing
    efr = float(db20(echo.peak / math.sqrt(rms**2 + dr_floor**2 + ring**2)))

    fc = radar.center_frequency_hz
    j = _layer_of(optics, depth)
    n_t = float(optics.index[j])
    eps_loc = n_t**2
    lam_m = C0_M_S / (fc * n_t)
    pulse = radar.make_pulse()
    res = range_resolution_m(pulse.bandwidth_hz, eps_loc)
    # paraxial first Fresnel zone through the refracting surface: the reduced range
    # R_e = h + sum D_j / n_j gives the depth in the target's layer n_t (R_e - h)
    fres = fresnel_radius_m(lam_m, n_t * (echo.r_e_m - radar.antenna_height_m),
                            antenna_height_m=radar.antenna_height_m, index=n_t)
    spacing = min(min(quarter_wave_spacing_m(fc, float(n * n)) for n in optics.index),
                  fres / 2)
    lanes = 2 * fres
    t_ground = 2 * radar.antenna_height_m / C0_M_S + 2 * float(
        np.dot(optics.thickness_m, optics.index)) / C0_M_S
    window = time_window_s(t_ground)
    label = _label(target, scenario)
    model_warnings = scenario_warnings(scenario)

    a_lo, a_hi = radar.antenna_band_hz
    noise_dbm = radar.noise_floor_dbm - 10 * math.log10(radar.stacking)
    rows: list[BudgetRow] = [
        BudgetRow("transmit power", radar.transmit_power_dbm, "dBm",
                  "power the radar sends"),
        BudgetRow("receiver noise after stacking", -noise_dbm, "dBm",
                  f"noise floor {radar.noise_floor_dbm:g} dBm lowered by stacking "
                  f"{radar.stacking} traces (counted with a minus sign)"),
        BudgetRow("antenna gain and aperture", float(db20(echo.antenna)), "dB",
                  f"G lambda/(4 pi) at {fc / 1e6:g} MHz with {radar.antenna_gain_dbi:g} dBi"),
        BudgetRow("two-way spreading", float(db20(echo.spreading)), "dB",
                  f"the wave spreads over 2 x {echo.r_e_m:.2f} m (air-equivalent path)"),
        BudgetRow("surface and layer transmission", float(db20(echo.t2)), "dB",
                  "part of the wave reflected away at the surface and layer interfaces, "
                  "both ways"),
    ]
    D = _above(_extended(optics, depth + 0.5), depth)
    for i, (att, d) in enumerate(zip(echo.attenuation_db, D, strict=True)):
        if d <= 0:
            continue
        if i < len(scenario.snowpack.layers):
            lay = scenario.snowpack.layers[i]
            what = (f"{d:.2f} m of {lay.density_kg_m3:g} kg/m3 snow, "
                    f"{lay.lwc_percent:g} % water")
        else:
            what = f"{d:.2f} m below the snowpack (extended)"
        rows.append(BudgetRow(f"attenuation in layer {i + 1}", att, "dB",
                              f"two-way loss in {what}"))
    rows.append(BudgetRow("target reflectivity", float(db20(echo.reflectivity)), "dB",
                          f"{label}: reflection of its surface at {fc / 1e6:g} MHz and the "
                          "curvature of its top"))
    subtotal = sum(r.value for r in rows)
    rows.append(BudgetRow("spectral shaping", enr - subtotal, "dB",
                          f"pulse peak within the antenna band {a_lo / 1e6:.0f}-"
                          f"{a_hi / 1e6:.0f} MHz after dispersion and the target's "
                          "frequency response"))
    rows.append(BudgetRow("clutter level", float(db20(clutter / rms)) if clutter > 0
                          else -NO_CLUTTER_DB, "dB",
                          "rms echo of debris blocks in the resolution cell, relative to the "
                          "noise" if clutter > 0 else "no clutter scatterers in this scenario"))
    rows += [
        BudgetRow("dynamic-range floor", float(db20(dr_floor / rms)), "dB",
                  f"{radar.dynamic_range_db:g} dB below the surface echo, relative to the "
                  "noise: weaker echoes are not recorded"),
        BudgetRow("ringing lasts", radar.ringing_duration_s * 1e9, "ns",
                  f"antenna ringing at {radar.ringing_level_db:g} dB of the transmitted "
                  "power masks earlier echoes"),
        BudgetRow("echo-to-noise ratio", enr, "dB", "peak echo over rms receiver noise"),
        BudgetRow("echo-to-clutter ratio", ecr, "dB", "peak echo over rms debris clutter"),
        BudgetRow("deepest detectable burial", lim.depth_m, "m",
                  f"same target and snow, limited by the {lim.limited_by}"),
        BudgetRow("deepest the window reaches", lim.window_depth_m, "m",
                  f"echoes from deeper arrive after the {radar.time_window_s * 1e9:.0f} ns "
                  "window"),
        BudgetRow("range resolution", res, "m", "two echoes closer than this merge"),
        BudgetRow("footprint radius", fres, "m",
                  f"first Fresnel zone at {depth:.2f} m with the antenna "
                  f"{radar.antenna_height_m:g} m up, refraction included"),
        BudgetRow("trace spacing needed", spacing, "m",
                  "quarter wavelength in the densest layer, and four traces across the "
                  "footprint radius"),
        BudgetRow("lane spacing", lanes, "m",
                  "parallel lines one footprint diameter apart"),
        BudgetRow("time window needed", window * 1e9, "ns",
                  "1.3 x the two-way time to the ground"),
    ]
    warnings = overruling_warnings(
        scenario, target, label=label, optics=optics,
        echo_over_noise_and_clutter_db=float(db20(echo.peak / math.sqrt(
            rms**2 + dr_floor**2 + ring**2 + clutter**2))),
        threshold_db=thr, spacing_needed_m=spacing, fresnel_radius_m=fres)
    likely = bool(depth <= lim.window_depth_m and efr >= thr and ecr >= CLUTTER_MARGIN_DB
                  and not warnings)
    if depth > lim.window_depth_m:
        call = "not visible: its echo arrives after the recording window ends"
    elif likely:
        call = "likely visible"
    elif efr < thr:
        call = "unlikely to be visible"
    elif warnings:
        call = "not likely visible as set up"
    else:
        call = "above the noise but may be hidden in debris clutter"
    ecr_text = ("no debris clutter" if clutter <= 0 else
                f"{abs(ecr):.0f} dB {'above' if ecr >= 0 else 'below'} clutter")
    verdict = (f"{label} at {depth:.1f} m: echo {abs(enr):.0f} dB "
               f"{'above' if enr >= 0 else 'below'} noise, {ecr_text}: {call}. "
               + _depth_sentence(lim, radar, thr) + "".join(f" {w}" for w in warnings))
    if model_warnings:
        verdict += (" Some material models are used outside their calibrated band "
                    "(see the warnings).")
    return LinkBudget(
        tuple(rows), enr, ecr, lim.depth_m, res, fres, spacing, window, depth, thr, label,
        verdict, depth_limited_by=lim.limited_by, snow_limited_depth_m=lim.snow_depth_m,
        window_depth_m=lim.window_depth_m, window_needed_s=lim.window_needed_s,
        lane_spacing_m=lanes, warnings=warnings, likely_visible=likely,
        model_warnings=model_warnings)
