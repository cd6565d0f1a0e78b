"""The search plan: how wide a lane the radar clears, how fast it covers the debris, and
what share of the survival window that takes.

1. **Lateral range curve** (:class:`LateralRange`): detection probability of a buried person
   against horizontal offset from the survey line, at several burial depths. It comes from
   a Monte Carlo sweep over ``persons[0].offset_m`` and ``persons[0].depth_m``
   (:func:`lateral_range_from_sweep`, or :meth:`LateralRange.from_dataset` on a saved
   sweep), from arrays (:meth:`LateralRange.from_arrays`), or as a fast estimate from the
   link budget (:func:`lateral_range_from_budget`, see there for its physics and limits).
2. **Sweep width** W = integral of the curve over offset (Koopman; :mod:`search_theory`).
3. **Coverage** of the debris by a platform (:mod:`coverage`): time, rate, ICAR 2006 check.
4. **Probability of success over time** (:func:`plan_search`): for parallel lanes at the
   chosen spacing, averaged over a published burial-depth distribution
   (:mod:`burial_statistics`). Two search-theory forms are computed; the plan *uses* the
   parallel-sweep form when the lanes overlap (spacing <= W at the median burial depth: a
   lane flown a little off its line still leaves no gap) and Koopman's random-search form
   1 - exp(-W L / A) otherwise (gaps between lanes plus navigation errors over rough
   debris make the position of the gaps random: the conservative case).
5. **Survival overlay**: the expected survival of a person found by the plan, from a
   published survival table, given the arrival time and the time to dig out.
6. **Probe line** side by side (:class:`~snowprobe_widgets.coverage.ProbeLine`).

Transceiver search is left out on purpose: it applies only when the buried person carries
a transceiver, and then it comes first.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy import special

from ._validate import check_choice, check_range
from .burial_statistics import (
    DEFAULT_DEPTH_DISTRIBUTION,
    DEFAULT_SURVIVAL_TABLE,
    SURVIVAL_TABLES,
    DepthDistribution,
    SurvivalTable,
    depth_distribution,
    survival_curves,
)
from .cautions import CAUTION_SHORT
from .constants import C0_M_S
from .coverage import (
    ICAR_RATE_M2_MIN,
    MAX_LANES,
    PLATFORMS,
    Coverage,
    DebrisArea,
    Platform,
    ProbeLine,
    coverage,
)
from .detection import DEFAULT_THRESHOLD_DB
from .search_theory import (
    lane_by_lane_pod,
    lateral_curve_arrays,
    random_search_pod,
    sweep_width_m,
)

__all__ = [
    "sweep_width_m",
    "survival_curves",
    "LateralRange",
    "lateral_range_from_budget",
    "lateral_range_from_sweep",
    "SearchPlan",
    "plan_search",
    "spacing_tradeoff",
    "DEFAULT_DEPTHS_M",
    "OFFSET_PATH",
    "DEPTH_PATH",
    "PLAN_CAUTIONS",
    "two_way_time_s",
    "Platform",
    "PLATFORMS",
    "DebrisArea",
    "Coverage",
    "coverage",
    "ProbeLine",
]

#: Burial depths at which lateral range curves are computed by default, m.
DEFAULT_DEPTHS_M: tuple[float, ...] = (0.25, 0.5, 0.75, 1.0, 1.25, 1.5, 2.0, 2.5, 3.0, 4.0)
#: Sweep dimension of the across-line offset of the first buried person.
OFFSET_PATH = "persons[0].offset_m"
#: Sweep dimension of the burial depth of the first buried person.
DEPTH_PATH = "persons[0].depth_m"
#: A curve still above this at its outermost offset is cut short there (W too small).
EDGE_PROBABILITY = 0.02
#: Farthest offset the link-budget estimate looks at, m.
_MAX_REACH_M = 1000.0
#: The cautions a plan carries, beyond the package caution.
PLAN_CAUTIONS: tuple[str, ...] = (
    CAUTION_SHORT,
    "This plan is for preparation and training only.",
    "In a real search the transceiver search, probe and shovel and the rescue leader's "
    "protocol come first; a radar is at most a complement.",
    "Flying a radar from a drone or helicopter needs radio-spectrum and aviation "
    "permission (ETSI EN 302 066 does not cover radars operated from aircraft).",
    "Transceiver search is not in this plan: it applies only when the buried person "
    "carries a transceiver, and then it comes first.",
)


def _frozen(a: Any) -> np.ndarray:
    out = np.array(a, dtype=float, copy=True)
    out.setflags(write=False)
    return out


# --------------------------------------------------------------------------- lateral range
@dataclass(frozen=True, eq=False)
class LateralRange:
    """Lateral range curves at several burial depths (curves symmetric about the line).

    Attributes
    ----------
    depth_m : ndarray, shape (n_depths,)
        Burial depths, m, increasing.
    offset_m : ndarray, shape (n_offsets,)
        Offsets from the line, m, increasing from 0.
    probability : ndarray, shape (n_depths, n_offsets)
        Detection probability.
    lower, upper : ndarray or None
        95 % interval of each probability (Monte Carlo), or None for an estimate.
    source : str
        Where the curves come from, in words.
    """

    depth_m: np.ndarray
    offset_m: np.ndarray
    probability: np.ndarray
    lower: np.ndarray | None = None
    upper: np.ndarray | None = None
    source: str = "given"

    def __post_init__(self) -> None:
        d = np.atleast_1d(np.asarray(self.depth_m, float))
        x = np.asarray(self.offset_m, float)
        p = np.atleast_2d(np.asarray(self.probability, float))
        if p.shape != (d.size, x.size):
            raise ValueError(f"probability has shape {p.shape}; expected (depths, offsets) = "
                             f"({d.size}, {x.size})")
        if not np.all(np.isfinite(d)) or d.min() < 0 or np.any(np.diff(d) <= 0):
            raise ValueError("depth_m must be increasing depths >= 0 m")
        for row in p:
            lateral_curve_arrays(x, row)
        if x[0] != 0.0 or np.any(np.diff(x) <= 0):
            raise ValueError("offset_m must start at 0 m and increase (the curve is taken "
                             "symmetric about the line)")
        object.__setattr__(self, "depth_m", _frozen(d))
        object.__setattr__(self, "offset_m", _frozen(x))
        object.__setattr__(self, "probability", _frozen(p))
        for name in ("lower", "upper"):
            v = getattr(self, name)
            if v is not None:
                v = np.atleast_2d(np.asarray(v, float))
                if v.shape != p.shape or not np.all(np.isfinite(v)):
                    raise ValueError(f"{name} must be finite with the shape of probability")
                object.__setattr__(self, name, _frozen(v))

    # ----------------------------------------------------------------- constructors
    @classmethod
    def from_arrays(cls, offset_m: object, probability: object, *, depth_m: object,
                    realizations: int | None = None, source: str = "given") -> LateralRange:
        """Curves from arrays; ``probability`` is (n_offsets,) for one depth or
        (n_depths, n_offsets). With ``realizations`` (Monte Carlo runs per point) each
        point gets its Wilson 95 % interval."""
        p = np.atleast_2d(np.asarray(probability, float))
        lo = hi = None
        if realizations is not None:
            from .sweeps import wilson_interval

            n = int(check_range("realizations", realizations, 1, 1e9))
            lo, hi = wilson_interval(np.round(p * n), np.full(p.shape, n))
            source = f"{source} ({int(realizations)} realizations per point)"
        return cls(np.atleast_1d(np.asarray(depth_m, float)), np.asarray(offset_m, float),
                   p, lo, hi, source)

    @classmethod
    def from_dataset(cls, dataset: Any, *, depth_m: float | None = None) -> LateralRange:
        """Curves from a sweep dataset (``detection_probability`` over ``OFFSET_PATH`` and,
        optionally, ``DEPTH_PATH``; any other dimension must have length 1).

        Parameters
        ----------
        dataset : xarray.Dataset
            As returned by :func:`snowprobe_widgets.sweep`; its
            ``detection_probability_lower`` / ``_upper`` become the interval.
        depth_m : float, optional
            The burial depth when the dataset has no depth dimension (default: the depth
            of the first person of the sweep's base scenario, from its attributes).
        """
        if "detection_probability" not in getattr(dataset, "data_vars", {}):
            raise ValueError("the dataset has no 'detection_probability' variable: give a "
                             "sweep dataset")
        da = dataset["detection_probability"]
        if OFFSET_PATH not in da.dims:
            raise ValueError(f"the sweep did not vary {OFFSET_PATH!r}; its dimensions are "
                             f"{list(da.dims)}")
        extra = [d for d in da.dims if d not in (OFFSET_PATH, DEPTH_PATH)]
        for d in extra:
            if da.sizes[d] != 1:
                raise ValueError(f"the sweep also varies {d!r} ({da.sizes[d]} values); "
                                 "select one value first (dataset.isel(...))")

        def arr(name: str) -> np.ndarray:
            v = dataset[name].squeeze(extra, drop=True) if extra else dataset[name]
            if DEPTH_PATH in v.dims:
                v = v.transpose(DEPTH_PATH, OFFSET_PATH)
            return np.atleast_2d(v.values.astype(float))

        p = arr("detection_probability")
        if not np.all(np.isfinite(p)):
            raise ValueError("the sweep has grid points with no finished realization; "
                             "resume it first")
        x = dataset[OFFSET_PATH].values.astype(float)
        if DEPTH_PATH in da.dims:
            depths = dataset[DEPTH_PATH].values.astype(float)
        elif depth_m is not None:
            depths = np.array([check_range("depth_m", depth_m, 0.0, 100.0, unit="m")])
        else:
            from .scene import Scenario

            base = Scenario.from_json(dataset.attrs["base_scenario"])
            depths = np.array([base.persons[0].depth_m])
        lo = arr("detection_probability_lower") if (
            "detection_probability_lower" in dataset) else None
        hi = arr("detection_probability_upper") if (
            "detection_probability_upper" in dataset) else None
        x, p, lo, hi = _fold(x, p, lo, hi)
        order = np.argsort(depths)
        n = dataset.attrs.get("realizations")
        what = f"Monte Carlo sweep, {int(n)} realizations per point" if n else "sweep"
        return cls(depths[order], x, p[order], None if lo is None else lo[order],
                   None if hi is None else hi[order], what)

    # ----------------------------------------------------------------- results
    @property
    def sweep_width_m(self) -> np.ndarray:
        """Sweep width at each depth, m (both sides of the line)."""
        return np.array([sweep_width_m(self.offset_m, row) for row in self.probability])

    @property
    def sweep_width_interval_m(self) -> tuple[np.ndarray, np.ndarray] | None:
        """(lower, upper) sweep width at each depth from the pointwise 95 % bounds
        integrated (conservative: wider than a simultaneous interval), or None."""
        if self.lower is None or self.upper is None:
            return None
        return (np.array([sweep_width_m(self.offset_m, r) for r in self.lower]),
                np.array([sweep_width_m(self.offset_m, r) for r in self.upper]))

    @property
    def cut_short(self) -> np.ndarray:
        """True at depths whose curve has not fallen below 2 % at the outermost offset:
        the sweep width there is a lower bound."""
        return self.probability[:, -1] > EDGE_PROBABILITY

    def at_depth(self, depth_m: float) -> np.ndarray:
        """The curve at ``depth_m``, interpolated linearly between the computed depths
        (held at the end values outside them)."""
        d = self.depth_m
        if d.size == 1:
            return self.probability[0].copy()
        return np.array([np.interp(depth_m, d, col) for col in self.probability.T])

    def to_xarray(self) -> Any:
        """The curves as an ``xarray.Dataset`` over ``depth_m`` and ``offset_m``."""
        import xarray as xr

        data = {"detection_probability": (("depth_m", "offset_m"), self.probability),
                "sweep_width_m": (("depth_m",), self.sweep_width_m)}
        if self.lower is not None and self.upper is not None:
            data["detection_probability_lower"] = (("depth_m", "offset_m"), self.lower)
            data["detection_probability_upper"] = (("depth_m", "offset_m"), self.upper)
        ds = xr.Dataset(data, coords={"depth_m": self.depth_m, "offset_m": self.offset_m})
        ds.attrs.update(source=self.source, caution=CAUTION_SHORT)
        return ds


def _fold(x: np.ndarray, p: np.ndarray, lo: np.ndarray | None, hi: np.ndarray | None
          ) -> tuple[np.ndarray, np.ndarray, np.ndarray | None, np.ndarray | None]:
    """Offsets on both sides of the line -> one side: mean of the two sides at each |x|
    (both sides must be sampled at the same distances); already one-sided data pass."""
    order = np.argsort(x)
    x, p = x[order], p[:, order]
    lo = None if lo is None else lo[:, order]
    hi = None if hi is None else hi[:, order]
    if x[0] >= 0:
        if x[0] != 0.0:
            raise ValueError(f"the smallest offset is {x[0]:g} m; include 0 m (on the line)")
        return x, p, lo, hi
    ax = np.unique(np.round(np.abs(x), 9))
    neg = np.unique(np.round(-x[x < 0], 9))
    pos = np.unique(np.round(x[x > 0], 9))
    if ax[0] != 0.0 or not np.array_equal(neg, pos):
        raise ValueError("offsets on both sides of the line must mirror each other and "
                         "include 0 m")

    def fold(a: np.ndarray) -> np.ndarray:
        return np.stack([a[:, np.isclose(np.abs(x), v)].mean(axis=1) for v in ax], axis=1)

    return ax, fold(p), None if lo is None else fold(lo), None if hi is None else fold(hi)


def _deep_enough(scenario: Any, depth_m: float) -> Any:
    """The scenario with its bottom snow layer continued down to ``depth_m`` if needed."""
    from .scene_objects import Layer

    snow = scenario.snowpack
    extra = depth_m - snow.depth_m
    if extra <= 0:
        return scenario
    layers = list(snow.layers)
    if not layers[-1].ice_crust:
        layers[-1] = dataclasses.replace(layers[-1], thickness_m=layers[-1].thickness_m + extra)
    else:
        base = next((la for la in reversed(layers) if not la.ice_crust), None)
        layers.append(Layer(extra, base.density_kg_m3 if base else 350.0,
                            base.lwc_percent if base else 0.0,
                            dielectric_model=base.dielectric_model if base else "snow"))
    return dataclasses.replace(scenario, snowpack=dataclasses.replace(snow, layers=tuple(
        layers)))


def _search_scenario(scenario: Any, antenna_height_m: float | None,
                     deepest_m: float) -> tuple[Any, Any]:
    from .scene import Scenario

    if not isinstance(scenario, Scenario):
        raise ValueError(f"scenario must be a Scenario, got {type(scenario).__name__}")
    if not scenario.persons:
        raise ValueError("the scenario has no buried person: a search plan needs the person "
                         "the radar looks for (persons[0])")
    person = scenario.persons[0]
    sc = _deep_enough(scenario, deepest_m + person.body_thickness_m + 0.1)
    if antenna_height_m is not None:
        sc = dataclasses.replace(sc, radar=dataclasses.replace(
            sc.radar, antenna_height_m=antenna_height_m))
    return sc, person


def _check_depths(depths_m: object) -> np.ndarray:
    d = np.asarray(depths_m, float).ravel()
    if d.size < 1 or not np.all(np.isfinite(d)) or np.any(np.diff(d) <= 0):
        raise ValueError("depths_m must be increasing depths")
    for v in d:
        check_range("depths_m", v, 0.05, 10.0, unit="m")
    return d


def lateral_range_from_budget(scenario: Any, *, antenna_height_m: float | None = None,
                              depths_m: object = DEFAULT_DEPTHS_M,
                              threshold_db: float = DEFAULT_THRESHOLD_DB,
                              n_offsets: int = 81) -> LateralRange:
    """A fast estimate of the lateral range curves from the link budget.

    For each depth, :func:`snowprobe_widgets.link_budget` gives the peak echo of
    ``persons[0]`` straight below the antenna over the receiver noise and the volume clutter
    (their rms added in power). Off to the side at horizontal offset y, the trace abeam the
    person sees the echo along the refracted ray (:func:`raypaths.solve_rays`) scaled by the
    two-way Gaussian beam weight at the ray's angle in air, the change in interface
    transmission and in attenuation along the longer path, and the point-target spreading
    law (1 / R_par R_perp): a compact-target law, which falls faster than the echo of a
    body wider than the Fresnel zone, so the estimate errs on the short side. The body's
    reflectivity and the clutter level are kept at their values below the antenna.

    Detection: a non-fluctuating echo of amplitude A in Gaussian noise of rms sigma (noise
    and clutter, the clutter a sum of many small echoes) crosses the operator's threshold
    ``threshold_db`` above the rms with probability Phi(A / sigma - 10^(threshold_db/20))
    (the standard fixed-threshold detection of a known signal; e.g. Richards, *Fundamentals
    of Radar Signal Processing*, 2005, ch. 6): 0.5 where the echo just reaches the
    threshold. One look (the trace abeam) per lane; no Monte Carlo, so no interval.

    Parameters
    ----------
    scenario : Scenario
        The radar design and snow; ``persons[0]`` is the person searched for. Depths
        below its snowpack use the bottom layer continued downwards.
    antenna_height_m : float, optional
        Flight height (default: the scenario's antenna height).
    depths_m : sequence of float
        Burial depths, m, increasing, each in [0.05, 10].
    threshold_db : float
        Echo over noise-and-clutter rms that an operator calls a detection, dB, in [0, 60]
        (default: the detection level shared by the link budget and the detector,
        :data:`snowprobe_widgets.detection.DEFAULT_THRESHOLD_DB`).
    n_offsets : int
        Offsets from 0 out to where every curve has fallen below 2 % (the beam's footprint
        at the deepest depth plus 2 m, doubled as needed up to 1 km), in [11, 1001].
    """
    from .budget import link_budget
    from .radar_equation import beam_weight
    from .raypaths import ray_polarization, solve_rays
    from .synthesis import column_optics

    depths = _check_depths(depths_m)
    thr = check_range("threshold_db", threshold_db, 0.0, 60.0, unit="dB")
    n_off = int(check_range("n_offsets", n_offsets, 11, 1001))
    sc, person = _search_scenario(scenario, antenna_height_m, float(depths[-1]))
    radar = sc.radar
    h = radar.antenna_height_m
    optics = column_optics(sc)
    tau = 10.0 ** (thr / 20.0)
    ratio = []
    for d in depths:
        here = dataclasses.replace(person, depth_m=float(d), offset_m=0.0)
        lb = link_budget(dataclasses.replace(sc, persons=(here,) + sc.persons[1:]),
                         threshold_db=thr)
        ratio.append(1.0 / math.sqrt(10.0 ** (-lb.echo_to_noise_db / 10.0)
                                     + 10.0 ** (-lb.echo_to_clutter_db / 10.0)))

    def curves(reach_m: float) -> tuple[np.ndarray, np.ndarray]:
        offsets = np.linspace(0.0, reach_m, n_off)
        rows = []
        for d, a0 in zip(depths, ratio, strict=True):
            rays = solve_rays(offsets, np.full(offsets.shape, float(d)), antenna_height_m=h,
                              thickness_m=optics.thickness_m, index=optics.index,
                              alpha_np_m=optics.alpha_np_m,
                              polarization=ray_polarization(radar.polarization))
            angle = np.arcsin(np.clip(rays.sin_theta0, 0.0, 1.0))
            gain = (beam_weight(angle, radar.beamwidth_deg)
                    * rays.transmission / rays.transmission[0]
                    * rays.attenuation / rays.attenuation[0]
                    * rays.spreading_m2[0] / rays.spreading_m2)
            gain = np.where(rays.reached, gain, 0.0)
            rows.append(0.5 * special.erfc(-(a0 * gain - tau) / math.sqrt(2.0)))
        return offsets, np.array(rows)

    # widen the offsets until every curve has fallen below EDGE_PROBABILITY (or 1 km)
    reach = (h + float(depths[-1])) * math.tan(math.radians(min(radar.beamwidth_deg,
                                                                  170.0)) / 2.0) + 2.0
    offsets, prob = curves(reach)
    while prob[:, -1].max() > EDGE_PROBABILITY and reach < _MAX_REACH_M:
        reach = min(2.0 * reach, _MAX_REACH_M)
        offsets, prob = curves(reach)
    return LateralRange(depths, offsets, prob, None, None,
                        f"link-budget estimate at {h:g} m antenna height, {thr:g} dB "
                        "threshold (no Monte Carlo interval)")


def lateral_range_from_sweep(scenario: Any, *, antenna_height_m: float | None = None,
                             depths_m: object = DEFAULT_DEPTHS_M,
                             offsets_m: object = (0.0, 0.25, 0.5, 0.75, 1.0, 1.5, 2.0, 3.0,
                                                  4.0, 5.0),
                             uncertain: Any = None, realizations: int = 20, seed: int = 0,
                             executor: Any = None, **options: Any) -> LateralRange:
    """Lateral range curves from a Monte Carlo sweep of the full simulation and detector
    (:func:`snowprobe_widgets.sweep` over ``OFFSET_PATH`` x ``DEPTH_PATH``).

    ``uncertain``, ``realizations``, ``seed``, ``executor`` and ``options`` go to the sweep
    unchanged. Offsets are limited to 5 m by the scenario (a person lies within 5 m of the
    line); a curve still above 2 % there is cut short (:attr:`LateralRange.cut_short`).
    """
    from . import sweep

    depths = _check_depths(depths_m)
    offsets = np.asarray(offsets_m, float)
    sc, _person = _search_scenario(scenario, antenna_height_m, float(depths[-1]))
    ds = sweep(sc, {OFFSET_PATH: [float(v) for v in offsets],
                    DEPTH_PATH: [float(v) for v in depths]},
               uncertain=uncertain, realizations=realizations, seed=seed, executor=executor,
               **options)
    return LateralRange.from_dataset(ds)


# --------------------------------------------------------------------------- the plan
@dataclass(frozen=True, eq=False)
class SearchPlan:
    """A radar search plan and what it buys, with a probe line beside it.

    Attributes
    ----------
    area, platform, coverage, lateral, depths, survival, probe_line
        The inputs and the coverage of the area.
    spacing_m : float
    depth_weights : ndarray, shape (n_depths,)
        Probability mass of each depth of ``lateral.depth_m`` under ``depths``.
    mass_deeper : float
        Probability that the burial is deeper than the computed depths (counted as not
        found).
    median_depth_m : float
        Median of the depth distribution (for curves at one depth only: that depth), m.
    sweep_width_m : ndarray, shape (n_depths,)
    sweep_width_median_m : float
        Sweep width interpolated to the median burial depth.
    pod_parallel, pod_random : ndarray, shape (n_depths,)
        Probability of detection at each depth once the area is covered, by each form
        (parallel: lane after lane over this area, edges included).
    form : str
        "parallel sweep" or "random search": the one used for :attr:`pod` and the summary.
    form_reason : str
    arrival_min, dig_min : float
        Minutes from burial to the start of the search, and to dig a person out once found.
    curves : xarray.Dataset
        Over ``minute`` (since the search started): ``burial_minute``, ``pod`` (form used),
        ``pod_parallel``, ``pod_random``, ``pod_median_depth``, ``pod_probe_line``,
        ``survival`` (the survival table at burial time + digging; NaN past its end).
    found_alive : float or None
        Probability that the plan finds the person and the person is alive when dug out
        (None when every find falls past the survival table's end).
    expected_survival : float or None
        Survival of a person found by the plan, averaged over when they are found.
    beyond_table : float
        Share of the finds whose dig-out time lies past the survival table's end (not
        counted in the two numbers above).
    probe_found_alive, probe_beyond_table : float or None, float
        The same for the probe line over both its passes.
    summary : tuple of str
        Plain-language sentences.
    """

    area: DebrisArea
    platform: Platform
    spacing_m: float
    coverage: Coverage
    lateral: LateralRange
    depths: DepthDistribution
    survival: SurvivalTable
    probe_line: ProbeLine
    depth_weights: np.ndarray
    mass_deeper: float
    median_depth_m: float
    sweep_width_m: np.ndarray
    sweep_width_median_m: float
    pod_parallel: np.ndarray
    pod_random: np.ndarray
    form: str
    form_reason: str
    arrival_min: float
    dig_min: float
    curves: Any = field(repr=False)
    found_alive: float | None
    expected_survival: float | None
    beyond_table: float
    probe_found_alive: float | None
    probe_beyond_table: float
    summary: tuple[str, ...]

    @property
    def pod(self) -> float:
        """Probability of detection once the area is covered (form used, all depths)."""
        per_depth = self.pod_parallel if self.form == "parallel sweep" else self.pod_random
        return float(per_depth @ self.depth_weights)


def _form(spacing_m: float, w_median: float, where: str = "the median burial depth"
          ) -> tuple[str, str]:
    if spacing_m <= w_median:
        return ("parallel sweep",
                f"lanes {spacing_m:g} m apart are no wider than the {w_median:.1f} m sweep "
                f"width at {where}, so they overlap and a lane flown a little off its line "
                "leaves no gap: the parallel-sweep form is used")
    return ("random search",
            f"lanes {spacing_m:g} m apart are wider than the {w_median:.1f} m sweep width "
            f"at {where}, so gaps remain between them and, with navigation "
            "errors over rough debris, where they fall is random: Koopman's random-search "
            "form 1 - exp(-W v t / A) is used (the conservative case)")


def _depth_weights(lateral: LateralRange, dist: DepthDistribution) -> tuple[np.ndarray, float]:
    """Weights of the computed depths under ``dist``; curves at one depth only stand for
    every burial (the distribution cannot be used)."""
    if lateral.depth_m.size == 1:
        return np.ones(1), 0.0
    return dist.weights(lateral.depth_m)


def _lane_progress(lateral: LateralRange, area: DebrisArea, cov: Coverage
                   ) -> tuple[np.ndarray, np.ndarray]:
    """Parallel-sweep probability over time at each depth, as breakpoints.

    Returns ``(times_s, pod)``: times at the start and end of every lane and the
    probability of detection there, shape (2 n_lanes + 1,) and (n_depths, 2 n_lanes + 1);
    along a lane it grows linearly with the track flown.
    """
    n = cov.lane_y_m.size
    ys, length = area.width_profile(cov.heading_deg, int(np.clip(8 * n, 400, 4000)))
    after = np.array([lane_by_lane_pod(lateral.offset_m, row, cov.lane_y_m, ys, length)
                      for row in lateral.probability])
    times = np.empty(2 * n + 1)
    times[0], times[1::2], times[2::2] = 0.0, cov.lane_start_s, cov.lane_end_s
    pod = np.empty((after.shape[0], 2 * n + 1))
    pod[:, 0], pod[:, 1::2], pod[:, 2::2] = 0.0, after[:, :-1], after[:, 1:]
    return times, pod


def plan_search(lateral: LateralRange, area: DebrisArea, platform: Platform, spacing_m: float,
                *, arrival_min: float = 30.0, dig_min: float = 10.0,
                depths: str = DEFAULT_DEPTH_DISTRIBUTION,
                survival: str = DEFAULT_SURVIVAL_TABLE,
                probe_line: ProbeLine | None = None, heading_deg: float = 0.0,
                n_times: int = 241) -> SearchPlan:
    """Plan a radar search and compare it with a probe line.

    Parameters
    ----------
    lateral : LateralRange
        The radar's lateral range curves (at the platform's height).
    area : DebrisArea
    platform : Platform
    spacing_m : float
        Lane spacing, m, in [0.1, 100].
    arrival_min : float
        Minutes from the burial to the start of the search, in [0, 600].
    dig_min : float
        Minutes to dig a person out once found, in [0, 240] (default 10 min: an assumption
        for a burial about 1 m deep; set your own).
    depths : str
        Burial-depth distribution (one of ``burial_statistics.DEPTH_DISTRIBUTIONS``).
    survival : str
        Survival table (one of ``burial_statistics.SURVIVAL_TABLES``).
    probe_line : ProbeLine, optional
        The probe line to compare with (default: :class:`ProbeLine` defaults).
    heading_deg : float
        Lane direction over a polygon, deg.
    n_times : int
        Points of the time curves, in [11, 5001] (plus the end of the coverage).
    """
    if not isinstance(lateral, LateralRange):
        raise ValueError(f"lateral must be a LateralRange, got {type(lateral).__name__}")
    s = check_range("spacing_m", spacing_m, 0.1, 100.0, unit="m")
    arrival = check_range("arrival_min", arrival_min, 0.0, 600.0, unit="min")
    dig = check_range("dig_min", dig_min, 0.0, 240.0, unit="min")
    n_t = int(check_range("n_times", n_times, 11, 5001))
    dist = depth_distribution(depths)
    table = SURVIVAL_TABLES[check_choice("survival", survival, tuple(SURVIVAL_TABLES))]
    probes = probe_line if probe_line is not None else ProbeLine()
    cov = coverage(area, platform, s, heading_deg)

    weights, deeper = _depth_weights(lateral, dist)
    w = lateral.sweep_width_m
    lane_t, lane_pod = _lane_progress(lateral, area, cov)
    par = lane_pod[:, -1]
    med = dist.median_m if lateral.depth_m.size > 1 else float(lateral.depth_m[0])
    w_med = float(np.interp(med, lateral.depth_m, w))
    form, reason = _form(s, w_med, "the median burial depth" if lateral.depth_m.size > 1
                         else "that depth")
    cover_min = cov.time_s / 60.0
    horizon = max(1.25 * cover_min, 30.0)
    minute = np.unique(np.append(np.linspace(0.0, horizon, n_t), cover_min))
    done = cov.track_done_m(minute * 60.0)
    pod_par_d = np.array([np.interp(minute * 60.0, lane_t, row) for row in lane_pod]).T
    pod_rand_d = random_search_pod(w[None, :], done[:, None], cov.area_m2)
    pod_par = pod_par_d @ weights
    pod_rand = pod_rand_d @ weights
    chosen = pod_par if form == "parallel sweep" else pod_rand
    pod_med = np.array([np.interp(med, lateral.depth_m, row) for row in (
        pod_par_d if form == "parallel sweep" else pod_rand_d)])
    probe = probes.pod(minute * 60.0, lateral.depth_m, cov.area_m2) @ weights

    burial = arrival + minute
    surv, found_alive, expected, beyond = _alive(minute, chosen, arrival + dig, table)
    probe_end = (probes.pass_time_s(cov.area_m2, False)
                 + probes.pass_time_s(cov.area_m2, True)) / 60.0
    probe_min = np.linspace(0.0, probe_end, n_t)
    probe_alive = _alive(probe_min, probes.pod(probe_min * 60.0, lateral.depth_m,
                                               cov.area_m2) @ weights, arrival + dig, table)

    import xarray as xr

    curves = xr.Dataset(
        {"burial_minute": ("minute", burial), "pod": ("minute", chosen),
         "pod_parallel": ("minute", pod_par), "pod_random": ("minute", pod_rand),
         "pod_median_depth": ("minute", pod_med), "pod_probe_line": ("minute", probe),
         "survival": ("minute", surv)},
        coords={"minute": minute})
    curves.attrs.update(form=form, survival_table=table.name, depth_distribution=dist.name,
                        caution=CAUTION_SHORT)
    plan = SearchPlan(
        area=area, platform=platform, spacing_m=s, coverage=cov, lateral=lateral,
        depths=dist, survival=table, probe_line=probes, depth_weights=weights,
        mass_deeper=deeper, median_depth_m=med, sweep_width_m=w, sweep_width_median_m=w_med,
        pod_parallel=par, pod_random=1.0 - np.exp(-w * cov.track_m / cov.area_m2),
        form=form, form_reason=reason, arrival_min=arrival, dig_min=dig, curves=curves,
        found_alive=found_alive, expected_survival=expected, beyond_table=beyond,
        probe_found_alive=probe_alive[1], probe_beyond_table=probe_alive[3], summary=())
    return dataclasses.replace(plan, summary=_summary(plan))


def _alive(minute: np.ndarray, pod: np.ndarray, offset_min: float, table: SurvivalTable
           ) -> tuple[np.ndarray, float | None, float | None, float]:
    """Survival of the finds of a search: a find at ``minute`` is dug out ``offset_min``
    later on the burial clock (arrival + digging).

    Returns ``(survival at each minute (NaN past the table), found alive, mean survival of
    the finds, share of the finds past the table's end)``; finds past the end are not
    counted (the table says nothing there).
    """
    dug = minute + offset_min
    inside = dug <= table.last_minute + 1e-9
    surv = np.full(minute.shape, np.nan)
    if inside.any():
        surv[inside] = table.at(dug[inside])[0]
    step = np.diff(pod, prepend=0.0)
    total = float(pod[-1])
    counted = float(step[inside].sum())
    alive = float(np.sum(step[inside] * surv[inside])) if counted > 0 else None
    mean = alive / counted if alive is not None else None
    return surv, alive, mean, (total - counted) / total if total > 0 else 0.0


def _pct(x: float) -> str:
    if x > 0.995:
        return "over 99 %"
    if 0.0 < x < 0.005:
        return "under 1 %"
    return f"{100.0 * x:.0f} %"


def _summary(plan: SearchPlan) -> tuple[str, ...]:
    cov = plan.coverage
    c = plan.curves
    minutes = cov.time_s / 60.0
    ha = cov.area_m2 / 1e4
    area_text = f"{ha:.2g} ha" if ha >= 0.1 else f"{cov.area_m2:.0f} m2"
    icar = "meets" if cov.icar_rate_ok else "falls short of"
    out = [
        f"At {plan.spacing_m:g} m lane spacing the {plan.platform.name} clears {area_text} "
        f"in {minutes:.0f} min ({cov.lanes} lanes, {cov.turns} turns): "
        f"{cov.rate_m2_min:.0f} m2/min, which {icar} the ICAR 2006 guideline of "
        f"{ICAR_RATE_M2_MIN:g} m2/min; {cov.measurements_per_s:g} traces per second, every "
        f"{100 * cov.trace_spacing_m:.1f} cm along a lane."]
    w_txt = f"{plan.sweep_width_median_m:.1f} m"
    interval = plan.lateral.sweep_width_interval_m
    if interval is not None:
        lo = float(np.interp(plan.median_depth_m, plan.lateral.depth_m, interval[0]))
        hi = float(np.interp(plan.median_depth_m, plan.lateral.depth_m, interval[1]))
        w_txt += f" (95 % interval {lo:.1f} to {hi:.1f} m)"
    where = (f"the median burial depth of {plan.median_depth_m:.2f} m ({plan.depths.name})"
             if plan.lateral.depth_m.size > 1 else
             f"the one depth computed, {plan.median_depth_m:.2f} m (every burial is taken "
             "at this depth; the depth distribution is not used)")
    out.append(f"Sweep width at {where}: {w_txt}, from the {plan.lateral.source}. "
               f"{plan.form_reason[0].upper()}{plan.form_reason[1:]}.")
    pod_med = float(np.interp(minutes, c["minute"].values, c["pod_median_depth"].values))
    pod_all = float(np.interp(minutes, c["minute"].values, c["pod"].values))
    out.append(f"By minute {minutes:.0f} of the search a person at that depth "
               f"would be found with {_pct(pod_med)} probability; over the whole depth "
               f"distribution {_pct(pod_all)}.")
    end = plan.arrival_min + minutes + plan.dig_min
    if end <= plan.survival.last_minute:
        s_end, interp = plan.survival.at(end)
        how = "interpolated" if bool(interp) else "a published point"
        out.append(f"Arriving {plan.arrival_min:g} min after the burial and digging "
                   f"{plan.dig_min:g} min, a person found at the end of the search has been "
                   f"buried {end:.0f} min: survival about {_pct(float(s_end))} on the "
                   f"{plan.survival.name} curve ({how}).")
    else:
        out.append(f"Arriving {plan.arrival_min:g} min after the burial and digging "
                   f"{plan.dig_min:g} min, the search ends {end:.0f} min after the burial, "
                   f"past the last point of the {plan.survival.name} table "
                   f"({plan.survival.last_minute:g} min): it gives no survival there.")
    if plan.expected_survival is not None:
        extra = (f" ({_pct(plan.beyond_table)} of the finds fall past the table's end and "
                 "are not counted)" if plan.beyond_table > 0.005 else "")
        out.append(f"A person found by this plan survives on average "
                   f"{_pct(plan.expected_survival)}; the chance of finding them alive is "
                   f"{_pct(plan.found_alive)}{extra}.")
    probes = plan.probe_line
    t1 = probes.pass_time_s(cov.area_m2, False) / 60.0
    t2 = probes.pass_time_s(cov.area_m2, True) / 60.0
    p_probe = float(np.interp(minutes, c["minute"].values, c["pod_probe_line"].values))
    alive = ("" if plan.probe_found_alive is None else
             f"; over both passes it finds the person alive with "
             f"{_pct(plan.probe_found_alive)} probability"
             + (f" ({_pct(plan.probe_beyond_table)} of its finds fall past the table's end "
                "and are not counted)" if plan.probe_beyond_table > 0.005 else ""))
    out.append(f"A probe line of {probes.team_size} on a {100 * probes.grid_m:.0f} cm grid "
               f"needs {t1:.0f} min for the first pass to {probes.first_depth_m:g} m and "
               f"{t2:.0f} min more to {probes.full_depth_m:g} m; in the radar's "
               f"{minutes:.0f} min it would find the person with {_pct(p_probe)} "
               f"probability{alive}.")
    w_lane = float(np.clip(plan.sweep_width_median_m, 0.1, 100.0))
    fits = plan.area.width_across_m(cov.heading_deg) / w_lane <= MAX_LANES
    if abs(w_lane - plan.spacing_m) > 0.05 * plan.spacing_m and fits:
        wide = coverage(plan.area, plan.platform, w_lane, cov.heading_deg)
        found = float(_lane_progress(plan.lateral, plan.area, wide)[1][:, -1]
                      @ plan.depth_weights)
        out.append(f"For comparison, lanes as far apart as that sweep width ({w_lane:.1f} m) "
                   f"would clear the area in {wide.time_s / 60:.0f} min and find the person "
                   f"with {_pct(found)} probability (parallel-sweep form).")
    cut = plan.lateral.cut_short
    if cut.any():
        out.append(f"The lateral range curve has not fallen to zero at its outermost offset "
                   f"({plan.lateral.offset_m[-1]:.1f} m) at {int(cut.sum())} depth(s): the "
                   "sweep width there is a lower bound.")
    if plan.mass_deeper > 0.005:
        out.append(f"{_pct(plan.mass_deeper)} of burials lie deeper than "
                   f"{plan.lateral.depth_m[-1]:g} m, the deepest depth computed: they are "
                   "counted as not found.")
    return tuple(out)


def spacing_tradeoff(lateral: LateralRange, area: DebrisArea, platform: Platform,
                     spacings_m: object, *, depths: str = DEFAULT_DEPTH_DISTRIBUTION,
                     heading_deg: float = 0.0) -> Any:
    """Time to clear the area against the probability of detection, over lane spacings.

    Returns
    -------
    xarray.Dataset
        Over ``spacing_m``: ``time_min``, ``rate_m2_min``, ``pod_parallel``,
        ``pod_random`` and ``pod`` (the form the plan would use at that spacing), each
        averaged over the depth distribution, at the end of the coverage.
    """
    import xarray as xr

    sp = np.asarray(spacings_m, float).ravel()
    if sp.size < 1:
        raise ValueError("spacings_m is empty; give at least one lane spacing")
    dist = depth_distribution(depths)
    weights, _deeper = _depth_weights(lateral, dist)
    w = lateral.sweep_width_m
    w_med = float(np.interp(dist.median_m, lateral.depth_m, w))
    rows = []
    for s in sp:
        cov = coverage(area, platform, float(s), heading_deg)
        par = _lane_progress(lateral, area, cov)[1][:, -1]
        rand = 1.0 - np.exp(-w * cov.track_m / cov.area_m2)
        p_par, p_rand = float(par @ weights), float(rand @ weights)
        form, _ = _form(float(s), w_med)
        rows.append((cov.time_s / 60.0, cov.rate_m2_min, p_par, p_rand,
                     p_par if form == "parallel sweep" else p_rand))
    a = np.array(rows)
    ds = xr.Dataset({"time_min": ("spacing_m", a[:, 0]), "rate_m2_min": ("spacing_m", a[:, 1]),
                     "pod_parallel": ("spacing_m", a[:, 2]),
                     "pod_random": ("spacing_m", a[:, 3]), "pod": ("spacing_m", a[:, 4])},
                    coords={"spacing_m": sp})
    ds.attrs.update(depth_distribution=dist.name, sweep_width_median_m=w_med,
                    caution=CAUTION_SHORT)
    return ds


def two_way_time_s(scenario: Any, antenna_height_m: float, depth_m: float) -> float:
    """Two-way vertical travel time from the antenna to ``depth_m`` in the scenario's
    snow (bottom layer continued), s: to compare with the radar's recording window."""
    from .raypaths import layers_above_m
    from .synthesis import column_optics

    optics = column_optics(_deep_enough(scenario, depth_m + 0.01))
    above = layers_above_m(optics.thickness_m, depth_m)
    return 2.0 * (antenna_height_m + float(np.dot(above, optics.index))) / C0_M_S
