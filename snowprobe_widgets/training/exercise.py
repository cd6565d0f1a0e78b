"""Blind exercises: a scene drawn from a level, its hidden truth, and what a searcher sees.

``make_exercise(level, seed)`` draws every number of the scene from one
``numpy.random.Generator`` seeded with ``SeedSequence([seed, crc32(level name)])``: the
same level and seed give the same scene on any machine (no Python ``hash``, no clock, no
global random state). The scene is built only through the validated scene constructors,
so every exercise is a valid :class:`~snowprobe_widgets.scene.Scenario`.

How a scene is drawn (all ranges from the :class:`~.levels.Level`):

1. how many people: none with ``nobody_share``, two with ``two_people_share``, else one;
2. the radar (centre frequency, power, antenna height) and the line length;
3. people: depth of the top of the body, posture, heading, across-line offset, along-line
   position at least 1.5 m from the line ends and, for two people, at least 1.5 m apart;
4. false targets (rocks, wood, a lost ski, a shovel blade) placed where they do not
   touch a person or each other (a target that does not fit after 40 tries is left out);
5. the snow: depth = deepest bottom + ``snow_below_m``; layers split at random, denser
   with depth, wettest at the top; a wet pack is at 0 degC; a crust with ``crust_share``;
6. clutter statistics and the seed of the clutter and noise.

The radar records 1.3 times the two-way time to the ground (Annan's rule, REFERENCES 7.9,
via :func:`snowprobe_widgets.budget.time_window_s`) at ``dt = 0.08 / fc``.
"""

from __future__ import annotations

import functools
import math
import zlib
from dataclasses import dataclass
from typing import Any

import numpy as np

from .._validate import check_range
from ..constants import C0_M_S
from ..radargram import Radargram
from ..scene import (
    Boulder,
    Branch,
    Clutter,
    Ground,
    Layer,
    MetalPlate,
    Person,
    Radar,
    Scenario,
    Snowpack,
    Survey,
)
from .levels import Level, get_level

__all__ = ["DepthAxis", "Exercise", "FalseTarget", "SearcherView", "make_exercise",
           "round_seed"]

#: Along-line spacing of the traces, m (under a quarter wavelength in the snow at the
#: highest level frequency, 800 MHz: about 7 cm; Annan, REFERENCES 7.9).
TRACE_SPACING_M = 0.05
#: A person lies at least this far from either end of the line, m (so the hyperbola's
#: flanks show on both sides).
_END_MARGIN_M = 1.5
#: Two people lie at least this far apart along the line, m.
_PERSON_GAP_M = 1.5
#: Gap kept between any two buried things, m.
_CLEARANCE_M = 0.3
#: Tries to place one false target before it is left out.
_PLACE_TRIES = 40
#: Sampling interval times the centre frequency (12.5 samples per period).
_DT_FC = 0.08
#: Largest seed accepted.
MAX_SEED = 2**32 - 1


def _seed(seed: Any) -> int:
    if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)):
        raise ValueError(f"seed must be a whole number, got {seed!r}")
    return int(check_range("seed", int(seed), 0, MAX_SEED))


def _level_key(level: Level) -> int:
    return zlib.crc32(level.name.encode("utf-8"))


def round_seed(session_seed: int, round_index: int) -> int:
    """Seed of round ``round_index`` (0-based) of a session: one class, same rounds.

    Derived with ``SeedSequence(session_seed, spawn_key=(round_index,))``, so rounds of one
    session are independent streams and any machine derives the same seeds.
    """
    s = _seed(session_seed)
    i = int(check_range("round_index", round_index, 0, 999))
    return int(np.random.SeedSequence(s, spawn_key=(i,)).generate_state(1)[0])


@dataclass(frozen=True)
class DepthAxis:
    """The searcher's depth scale: one snow velocity for the whole column.

    Attributes
    ----------
    surface_time_s : float
        Two-way time of the snow surface, s (depth zero).
    velocity_m_s : float
        Mean radar velocity through the snowpack, m/s (total thickness over total
        one-way time, as a searcher would estimate from a hyperbola or a probe).
    """

    surface_time_s: float
    velocity_m_s: float

    def depth_m(self, time_s: float) -> float:
        """Depth read on this axis at two-way time ``time_s``, m (negative above the snow)."""
        return 0.5 * self.velocity_m_s * (float(time_s) - self.surface_time_s)

    def time_s(self, depth_m: float) -> float:
        """Two-way time at which this axis reads ``depth_m``, s."""
        return self.surface_time_s + 2.0 * float(depth_m) / self.velocity_m_s


@dataclass(frozen=True)
class FalseTarget:
    """Something put in a scene that can look like a person.

    Attributes
    ----------
    kind : str
        One of :data:`~.levels.FALSE_TARGET_KINDS`.
    description : str
        In words, with its size and depth.
    position_m : float or None
        Along-line centre, m (``None`` for a crust, which runs along the whole line).
    depth_m, bottom_depth_m : float
        Depth of its top and of its lowest point, m.
    half_extent_m : float
        Half its horizontal extent, m (0 for a crust).
    """

    kind: str
    description: str
    position_m: float | None
    depth_m: float
    bottom_depth_m: float
    half_extent_m: float


@dataclass(frozen=True, eq=False)
class SearcherView:
    """Everything a searcher is shown before answering, and nothing more.

    Attributes
    ----------
    radargram : Radargram
        The processed section (``ProcessingChain.default``) without scenario or truth.
    depth_axis : DepthAxis
    center_frequency_hz : float
    prompt : str
        What to do, with the line and the radar; never the number of people.
    """

    radargram: Radargram
    depth_axis: DepthAxis
    center_frequency_hz: float
    prompt: str


@dataclass(frozen=True, eq=False)
class Exercise:
    """One blind exercise.

    Attributes
    ----------
    level : Level
    seed : int
    scenario : Scenario
        The hidden truth: never shown before the answer is in.
    false_targets : tuple of FalseTarget
        What was put in the scene to fool the searcher, for the debrief and the
        instructor's summary.
    """

    level: Level
    seed: int
    scenario: Scenario
    false_targets: tuple[FalseTarget, ...]

    @functools.cached_property
    def raw(self) -> Radargram:
        """The simulated section with its truth (computed once)."""
        from ..synthesis import simulate

        return simulate(self.scenario)

    @functools.cached_property
    def processed(self) -> Radargram:
        """The section after ``ProcessingChain.default`` at the radar's frequency."""
        from ..processing import ProcessingChain

        fc = self.scenario.radar.center_frequency_hz
        return ProcessingChain.default(fc).apply(self.raw)

    @functools.cached_property
    def depth_axis(self) -> DepthAxis:
        """The searcher's depth axis (surface time from the antenna height)."""
        from ..synthesis import column_optics

        h = self.scenario.radar.antenna_height_m
        return DepthAxis(2.0 * h / C0_M_S, column_optics(self.scenario).mean_velocity_m_s)

    @functools.cached_property
    def detections(self) -> tuple[Any, ...]:
        """The automatic detector's picks on the raw section (default threshold)."""
        from ..detection import detect

        return tuple(detect(self.raw))

    def searcher_view(self) -> SearcherView:
        """What the trainee sees: the processed section stripped of its truth."""
        p = self.processed
        blind = Radargram(p.data, p.time_s, p.position_m, history=p.history)
        radar, survey = self.scenario.radar, self.scenario.survey
        prompt = (f"A {survey.length_m:g} m line across avalanche debris, radar at "
                  f"{radar.center_frequency_hz / 1e6:.0f} MHz held "
                  f"{radar.antenna_height_m:.2f} m above the snow. Tap where you think a "
                  "person lies (the top of the echo), tap a mark again to remove it, or "
                  "answer 'nobody here'.")
        return SearcherView(blind, self.depth_axis, radar.center_frequency_hz, prompt)

    @property
    def nobody_buried(self) -> bool:
        """True when the scene holds no person."""
        return not self.scenario.persons


# --------------------------------------------------------------------------- drawing
def _uniform(rng: np.random.Generator, pair: tuple[float, float]) -> float:
    lo, hi = pair
    return float(lo) if lo == hi else float(rng.uniform(lo, hi))


def _whole(rng: np.random.Generator, pair: tuple[int, int]) -> int:
    return int(rng.integers(pair[0], pair[1] + 1))


def _pick(rng: np.random.Generator, choices: tuple) -> Any:
    return choices[int(rng.integers(0, len(choices)))]


def _box(obj: Any) -> tuple[float, float, float, float]:
    """Along-line extent and depth extent of a buried thing (x0, x1, z0, z1), m."""
    r = obj.half_extent_m
    return obj.position_m - r, obj.position_m + r, obj.depth_m, obj.bottom_depth_m


def _clear(a: Any, b: Any) -> bool:
    ax0, ax1, az0, az1 = _box(a)
    bx0, bx1, bz0, bz1 = _box(b)
    apart_x = ax1 + _CLEARANCE_M <= bx0 or bx1 + _CLEARANCE_M <= ax0
    apart_z = az1 + _CLEARANCE_M <= bz0 or bz1 + _CLEARANCE_M <= az0
    return apart_x or apart_z


def _people(rng: np.random.Generator, lv: Level, n: int, length_m: float) -> list[Person]:
    people: list[Person] = []
    for _try in range(_PLACE_TRIES * 25):
        if len(people) == n:
            break
        x = float(rng.uniform(_END_MARGIN_M, length_m - _END_MARGIN_M))
        depth = _uniform(rng, lv.burial_depth_m)
        posture = _pick(rng, lv.postures)
        heading = float(rng.uniform(0.0, 180.0))
        offset = _uniform(rng, lv.person_offset_m) * float(rng.choice([-1.0, 1.0]))
        height = float(rng.uniform(1.55, 1.9))
        person = Person(x, depth, offset_m=offset, heading_deg=heading, posture=posture,
                        height_m=height, label=f"person {len(people) + 1}")
        if all(abs(x - p.position_m) >= _PERSON_GAP_M and _clear(person, p) for p in people):
            people.append(person)
    if len(people) < n:
        raise ValueError(f"level {lv.name!r}: {n} people do not fit on a {length_m:g} m line "
                         f"(line_length_m too short)")
    return people


def _false_target(rng: np.random.Generator, kind: str, length_m: float,
                  max_depth_m: float) -> Any:
    x = float(rng.uniform(0.5, length_m - 0.5))
    offset = float(rng.uniform(-0.5, 0.5))
    heading = float(rng.uniform(0.0, 180.0))
    if kind == "boulder":
        size = float(rng.uniform(0.2, 0.8))
        depth = float(rng.uniform(0.2, max(0.2, max_depth_m - size)))
        return Boulder(x, depth, size, offset_m=offset,
                       permittivity=float(rng.uniform(5.0, 9.0)))
    if kind == "branch":
        size = float(rng.uniform(0.05, 0.25))
        depth = float(rng.uniform(0.2, max(0.2, max_depth_m - size)))
        return Branch(x, depth, size, float(rng.uniform(0.6, 3.0)), offset_m=offset,
                      heading_deg=heading, water_fraction=float(rng.uniform(0.2, 0.5)),
                      frozen=bool(rng.random() < 0.5))
    if kind == "ski":
        tilt = float(rng.uniform(-30.0, 30.0))
        length = float(rng.uniform(1.5, 1.9))
        depth = float(rng.uniform(0.15, max(0.15, max_depth_m - length * 0.5)))
        return MetalPlate(x, depth, length, float(rng.uniform(0.07, 0.1)), offset_m=offset,
                          heading_deg=heading, tilt_deg=tilt, label="lost ski")
    # metal_gear: a shovel blade
    depth = float(rng.uniform(0.15, max(0.15, max_depth_m - 0.2)))
    return MetalPlate(x, depth, float(rng.uniform(0.25, 0.3)), float(rng.uniform(0.2, 0.25)),
                      offset_m=offset, heading_deg=heading,
                      tilt_deg=float(rng.uniform(-60.0, 60.0)), label="shovel blade")


def _describe(obj: Any, kind: str) -> FalseTarget:
    if kind == "boulder":
        text = f"boulder {obj.diameter_m:.1f} m across, {obj.depth_m:.2f} m deep"
    elif kind == "branch":
        state = "frozen" if obj.frozen else "green"
        text = (f"{state} branch {obj.diameter_m * 100:.0f} cm thick, {obj.depth_m:.2f} m "
                "deep")
    else:
        text = f"{obj.label} (metal), {obj.depth_m:.2f} m deep"
    return FalseTarget(kind, f"{text}, at {obj.position_m:.1f} m along the line",
                       obj.position_m, obj.depth_m, obj.bottom_depth_m, obj.half_extent_m)


def _snowpack(rng: np.random.Generator, lv: Level, depth_m: float) -> Snowpack:
    n = _whole(rng, lv.layer_count)
    cuts = np.sort(rng.uniform(0.15, 0.85, n - 1)) * depth_m if n > 1 else np.zeros(0)
    edges = np.concatenate([[0.0], cuts, [depth_m]])
    thick = np.diff(edges)
    dens = np.sort(rng.uniform(*lv.density_kg_m3, n)) if lv.density_kg_m3[0] < \
        lv.density_kg_m3[1] else np.full(n, lv.density_kg_m3[0])
    lwc = np.sort(rng.uniform(*lv.lwc_percent, n))[::-1] if lv.lwc_percent[0] < \
        lv.lwc_percent[1] else np.full(n, lv.lwc_percent[0])
    wet = bool(np.any(lwc > 0))
    temperature = 0.0 if wet else _uniform(rng, lv.temperature_c)
    layers = tuple(Layer(float(t), float(d), float(w))
                   for t, d, w in zip(thick, dens, lwc, strict=True))
    return Snowpack(layers, temperature_c=temperature)


def make_exercise(level: str | Level, seed: int) -> Exercise:
    """Draw a blind exercise from ``level`` with ``seed``.

    Parameters
    ----------
    level : str or Level
        A name in :data:`snowprobe_widgets.training.LEVELS` or an instructor's own level
        (:func:`~snowprobe_widgets.training.level_from_json`).
    seed : int
        In [0, 2**32 - 1]; the same level and seed give the same exercise.

    Returns
    -------
    Exercise
        Its ``scenario`` is valid (built through the scene constructors).
    """
    lv = get_level(level)
    s = _seed(seed)
    rng = np.random.default_rng(np.random.SeedSequence([s, _level_key(lv)]))
    u = float(rng.random())
    n_people = 0 if u < lv.nobody_share else (2 if u < lv.nobody_share
                                              + lv.two_people_share else 1)
    fc = float(_pick(rng, lv.center_frequency_hz))
    power = _uniform(rng, lv.transmit_power_dbm)
    height = _uniform(rng, lv.antenna_height_m)
    length = round(_uniform(rng, lv.line_length_m) / TRACE_SPACING_M) * TRACE_SPACING_M
    people = _people(rng, lv, n_people, length)
    # snow depth: below the deepest person, or below a depth drawn from the level's range
    # when nobody is buried, plus the snow under it
    deepest = max([p.bottom_depth_m for p in people]
                  or [_uniform(rng, lv.burial_depth_m) + 0.25])
    snow_depth = deepest + _uniform(rng, lv.snow_below_m)
    objects: list[Any] = []
    described: list[FalseTarget] = []
    for _ in range(_whole(rng, lv.false_target_count)):
        kind = _pick(rng, lv.false_target_kinds)
        for _try in range(_PLACE_TRIES):
            obj = _false_target(rng, kind, length, snow_depth - 0.1)
            if obj.bottom_depth_m <= snow_depth - 0.1 and all(
                    _clear(obj, other) for other in [*people, *objects]):
                objects.append(obj)
                described.append(_describe(obj, kind))
                break
    snowpack = _snowpack(rng, lv, snow_depth)
    if rng.random() < lv.crust_share:
        # a crust runs across the whole line: it must pass above or below every body
        for _try in range(_PLACE_TRIES):
            top = float(rng.uniform(0.1, 0.8 * snow_depth))
            thick = float(rng.uniform(0.01, 0.04))
            if all(top + thick + _CLEARANCE_M / 3 <= o.depth_m
                   or o.bottom_depth_m + _CLEARANCE_M / 3 <= top for o in [*people, *objects]):
                snowpack = snowpack.with_ice_crust(top, thick, float(rng.uniform(800.0, 900.0)))
                described.append(FalseTarget(
                    "crust", f"ice crust {thick * 100:.0f} cm thick, {top:.2f} m deep, "
                    "across the whole line", None, top, top + thick, 0.0))
                break
    clutter = Clutter(
        scatterer_density_per_m3=_uniform(rng, lv.scatterer_density_per_m3),
        scatterer_size_m=_uniform(rng, lv.scatterer_size_m),
        thin_layer_count=_whole(rng, lv.thin_layer_count),
        thin_layer_contrast=float(rng.uniform(0.03, 0.1)),
        seed=int(rng.integers(0, MAX_SEED + 1)))
    ground = Ground("soil", water_fraction=_uniform(rng, lv.soil_water_fraction))
    radar = _radar(snowpack, fc, power, height)
    scenario = Scenario(
        snowpack=snowpack, ground=ground, persons=tuple(people), objects=tuple(objects),
        radar=radar, survey=Survey(0.0, length, TRACE_SPACING_M), clutter=clutter,
        name=f"training {lv.name} {s}",
        notes=f"Invented training scene drawn from level {lv.name!r} with seed {s}.")
    return Exercise(lv, s, scenario, tuple(described))


def _radar(snowpack: Snowpack, fc: float, power_dbm: float, height_m: float) -> Radar:
    from ..budget import time_window_s

    n = np.array([max(complex(m.refractive_index(fc)).real, 1.0)
                  for m in snowpack.materials()])
    t_ground = 2.0 * height_m / C0_M_S + 2.0 * float(np.dot(snowpack.thicknesses_m, n)) / C0_M_S
    dt = _DT_FC / fc
    samples = int(math.ceil(time_window_s(t_ground) / dt / 64.0)) * 64
    return Radar("ricker", fc, transmit_power_dbm=power_dbm, dt_s=dt,
                 time_window_s=samples * dt, antenna_height_m=height_m)
