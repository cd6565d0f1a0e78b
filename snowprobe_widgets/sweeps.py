"""Detection probability under uncertainty: Monte Carlo sweeps as an ``xarray.Dataset``.

``sweep(base, vary, uncertain=..., realizations=...)`` runs, for every cell of a grid of
scenario fields (``vary``: dotted path -> list of values) and every realization, one
:func:`~snowprobe_widgets.sweep_realization.run_realization`: the scenario with its
uncertain fields drawn (``uncertain``: path -> :class:`Uniform`, :class:`Normal` or
:class:`Choice`) and its own clutter seed, simulated with and without the persons,
processed, detected and scored against the truth. The result holds the per-realization
records and the summaries (detection probability with its Wilson 95 % interval, false
alarms per 100 m of line) over one dimension per varied field (named by the path as given)
plus ``realization``; the attributes hold everything needed to repeat the run exactly.

Seeds: realization ``r`` of grid cell ``c`` (its flat index, C order) draws from
``numpy.random.SeedSequence(seed, spawn_key=(c, r))``, so results never depend on the
executor, the chunking or the number of workers.

Executors: ``None`` runs on a process pool with one worker per local core, an integer
``n`` on ``n`` local workers (1: in this process), a ``concurrent.futures.Executor`` as
given, and a ``dask.distributed.Client`` submits chunks to that cluster; only scenarios
and seeds travel out and only metrics come back.

A sweep stops early when ``cancel`` (a ``threading.Event``) is set or on Ctrl-C, and
returns the finished part (``attrs["complete"] == 0``); :func:`resume` completes such a
dataset, also after :func:`save` and :func:`load`, to the same dataset an uninterrupted
run gives. :func:`roc` moves the detector's level over the recorded scores.
"""

from __future__ import annotations

import concurrent.futures as cf
import contextlib
import functools
import itertools
import json
import math
import multiprocessing
import os
import signal
import tempfile
import threading
from collections.abc import Callable, Iterator, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from . import __version__
from ._validate import check_range
from .cautions import CAUTION_SHORT
from .detection import DEFAULT_THRESHOLD_DB
from .heap import (
    DEFAULT_MMAP_THRESHOLD_BYTES,
    M_MMAP_THRESHOLD,
    M_TRIM_THRESHOLD,
    glibc,
    keep_freed_memory,
)
from .scene import Scenario
from .sweep_paths import (
    Choice,
    Distribution,
    FieldPath,
    Normal,
    Uniform,
    distribution_from_dict,
    parse_path,
)
from .sweep_realization import MAX_ALARMS, RealizationResult, run_realization

__all__ = [
    "FORMAT",
    "VERSION",
    "Uniform",
    "Normal",
    "Choice",
    "sweep",
    "resume",
    "empty_sweep",
    "roc",
    "wilson_interval",
    "save",
    "load",
    "realization_scenario",
    "UNCERTAINTY_PRESETS",
    "uncertainty_preset",
    "local_pool",
]

#: ``attrs["format"]`` of a sweep dataset.
FORMAT = "snowprobe-sweep"
#: ``attrs["version"]`` of the dataset layout.
VERSION = 1
#: Standard normal quantile of a two-sided 95 % interval.
_Z95 = 1.959963984540054
#: Most grid cells whose every combination with the distributions' extremes is checked
#: before a run (beyond it: each value alone, and the grid's corners).
_MAX_CHECKED_CELLS = 2000
#: Most realizations in one sweep (memory of the records stays below ~1 GB).
_MAX_REALIZATIONS_TOTAL = 2_000_000
_CLUTTER_SEED = "clutter.seed"


# --------------------------------------------------------------------------- presets

#: Named uncertainty presets: field path -> distribution. Ranges: dry avalanche debris
#: about 300-500 kg/m3, wet debris 500-600 kg/m3 or more (FIELD_FACTS 1.8, from memory);
#: moist snow holds under 3 % liquid water, wet snow 3-8 % (Fierz et al. 2009, UNESCO-IHP
#: Tech. Doc. Hydrol. 83); the buried person's heading, posture and offset from the line
#: are not known at a real avalanche (invented spreads: any heading, either posture,
#: offset about +-0.5 m within +-1 m).
UNCERTAINTY_PRESETS: dict[str, dict[str, Distribution]] = {
    "typical dry debris": {
        "snowpack.layers[*].density_kg_m3": Uniform(300.0, 500.0),
        "persons[0].heading_deg": Uniform(0.0, 180.0),
        "persons[0].posture": Choice(("lying_flat", "curled")),
        "persons[0].offset_m": Normal(0.0, 0.5, -1.0, 1.0),
    },
    "wet spring debris": {
        "snowpack.layers[*].density_kg_m3": Uniform(450.0, 600.0),
        "snowpack.layers[*].lwc_percent": Uniform(1.0, 6.0),
        "persons[0].heading_deg": Uniform(0.0, 180.0),
        "persons[0].posture": Choice(("lying_flat", "curled")),
        "persons[0].offset_m": Normal(0.0, 0.5, -1.0, 1.0),
    },
}


def uncertainty_preset(name: str, vary: Sequence[str] = ()) -> dict[str, Distribution]:
    """The preset ``name`` without the fields in ``vary`` (a varied field is not drawn).

    Raises
    ------
    ValueError
        If ``name`` is not one of :data:`UNCERTAINTY_PRESETS`.
    """
    if name not in UNCERTAINTY_PRESETS:
        raise ValueError(f"uncertainty preset {name!r} is not one of: "
                         f"{', '.join(map(repr, UNCERTAINTY_PRESETS))}")
    return {p: d for p, d in UNCERTAINTY_PRESETS[name].items() if p not in vary}


# --------------------------------------------------------------------------- plan


@dataclass(frozen=True)
class _Plan:
    """Everything a worker needs to rebuild any realization (small, picklable)."""

    base: Scenario
    vary: tuple[tuple[FieldPath, tuple[Any, ...]], ...]
    uncertain: tuple[tuple[FieldPath, Distribution], ...]
    realizations: int
    seed: int
    level_db: float
    floor_db: float
    reduced: bool

    @property
    def shape(self) -> tuple[int, ...]:
        return tuple(len(v) for _p, v in self.vary)

    @property
    def n_persons(self) -> int:
        return len(self.base.persons)

    def cell_values(self, cell: int) -> tuple[Any, ...]:
        idx = np.unravel_index(cell, self.shape) if self.shape else ()
        return tuple(v[int(i)] for (_p, v), i in zip(self.vary, idx, strict=True))

    def draws_clutter_seed(self) -> bool:
        paths = [p.text for p, _v in self.vary] + [p.text for p, _d in self.uncertain]
        return _CLUTTER_SEED not in paths


def _apply(scenario: Scenario, settings: Sequence[tuple[FieldPath, Any]]) -> Scenario:
    """Apply path settings in order; every step must give a valid scenario (a
    ValueError names the path, the value and the allowed range)."""
    for path, value in settings:
        scenario = path.set(scenario, value)
    return scenario


@functools.lru_cache(maxsize=4)
def _cell_scenario(plan: _Plan, cell: int) -> Scenario:
    """The base scenario with the grid values of ``cell`` (shared by its realizations)."""
    return _apply(plan.base, list(zip([p for p, _v in plan.vary], plan.cell_values(cell),
                                      strict=True)))


def _draw(plan: _Plan, cell: int, r: int) -> tuple[Scenario, list[Any], int]:
    rng = np.random.default_rng(np.random.SeedSequence(plan.seed, spawn_key=(cell, r)))
    drawn = [d.draw(rng) for _p, d in plan.uncertain]
    clutter_seed = int(rng.integers(0, 2**32))
    sc = _apply(_cell_scenario(plan, cell),
                list(zip([p for p, _d in plan.uncertain], drawn, strict=True)))
    if plan.draws_clutter_seed():
        sc = _apply(sc, [(parse_path(_CLUTTER_SEED, sc), clutter_seed)])
    else:
        clutter_seed = sc.clutter.seed
    return sc, drawn, clutter_seed


def realization_scenario(dataset: Any, index: Mapping[str, int], realization: int = 0
                         ) -> Scenario:
    """The scenario of one realization of a sweep dataset (to open it in the explorer).

    Parameters
    ----------
    dataset : xarray.Dataset
        A dataset made by :func:`sweep`.
    index : mapping of str to int
        Position along each varied field's dimension (``{"persons[0].depth_m": 3}``).
    realization : int
        Realization number.
    """
    plan = _plan_from_attrs(dataset)
    pos = []
    for path, values in plan.vary:
        if path.text not in index:
            raise ValueError(f"index needs a position along {path.text!r}")
        i = int(index[path.text])
        if not 0 <= i < len(values):
            raise ValueError(f"index {path.text} = {i} is outside [0, {len(values) - 1}]")
        pos.append(i)
    r = int(check_range("realization", realization, 0, plan.realizations - 1))
    cell = int(np.ravel_multi_index(pos, plan.shape)) if plan.shape else 0
    return _draw(plan, cell, r)[0]


# --------------------------------------------------------------------------- checks


def _values(path: str, values: Any) -> tuple[Any, ...]:
    if isinstance(values, (str, bytes)) or not isinstance(values, Sequence | np.ndarray):
        raise ValueError(f"vary[{path!r}] must be a list of values, got {values!r}")
    out = tuple(v.item() if isinstance(v, np.generic) else v for v in values)
    if not out:
        raise ValueError(f"vary[{path!r}] is empty; give at least one value")
    for v in out:
        if isinstance(v, bool) or not isinstance(v, (int, float, str)):
            raise ValueError(f"vary[{path!r}] holds {v!r}; values must be numbers or strings")
        if isinstance(v, float) and not math.isfinite(v):
            raise ValueError(f"vary[{path!r}] holds {v!r}, not a finite number")
    kinds = {isinstance(v, str) for v in out}
    if len(kinds) > 1:
        raise ValueError(f"vary[{path!r}] mixes numbers and strings")
    if len(set(out)) != len(out):
        raise ValueError(f"vary[{path!r}] lists a value twice: {list(out)}")
    return out


def _make_plan(base: Any, vary: Any, uncertain: Any, realizations: Any, seed: Any,
               level_db: float, floor_db: float, reduced: bool) -> _Plan:
    if not isinstance(base, Scenario):
        raise ValueError(f"base must be a Scenario, got {type(base).__name__}")
    if not base.persons:
        raise ValueError("base has no buried person: a detection probability needs at least "
                         "one person in the base scenario")
    if not isinstance(vary, Mapping):
        raise ValueError(f"vary must be a mapping of field path -> list of values, got "
                         f"{type(vary).__name__}")
    uncertain = {} if uncertain is None else uncertain
    if not isinstance(uncertain, Mapping):
        raise ValueError(f"uncertain must be a mapping of field path -> distribution, got "
                         f"{type(uncertain).__name__}")
    if isinstance(realizations, bool) or not isinstance(realizations, (int, np.integer)):
        raise ValueError(f"realizations must be a whole number, got {realizations!r}")
    n_real = int(check_range("realizations", realizations, 1, 100_000))
    if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)):
        raise ValueError(f"seed must be a whole number, got {seed!r}")
    seed_i = int(check_range("seed", seed, 0, 2**63 - 1))
    level = check_range("level_db", level_db, 0.0, 60.0, unit="dB")
    floor = check_range("floor_db", floor_db, 0.0, level, unit="dB")
    vary_t = tuple((parse_path(p, base), _values(p, v)) for p, v in vary.items())
    unc_t = tuple((parse_path(p, base), distribution_from_dict(d, f"uncertain[{p!r}]"))
                  for p, d in uncertain.items())
    both = {p.text for p, _v in vary_t} & {p.text for p, _d in unc_t}
    if both:
        raise ValueError(f"{sorted(both)} is both varied and uncertain; choose one")
    plan = _Plan(base, vary_t, unc_t, n_real, seed_i, level, floor, bool(reduced))
    total = int(np.prod(plan.shape)) * n_real
    if total > _MAX_REALIZATIONS_TOTAL:
        raise ValueError(f"the sweep asks for {total} realizations; at most "
                         f"{_MAX_REALIZATIONS_TOTAL} in one run (fewer values or "
                         "realizations)")
    _check_plan(plan)
    return plan


def _check_plan(plan: _Plan) -> None:
    """Refuse, before any work, every value and distribution bound outside the field's
    declared range (:mod:`snowprobe_widgets.fields`) or refused by the scenario."""
    base = plan.base
    for path, values in plan.vary:
        for v in values:
            path.check(v)
            path.set(base, v)
    for path, dist in plan.uncertain:
        for v in dist.extremes():
            try:
                path.check(v)
                path.set(base, v)
            except ValueError as exc:
                raise ValueError(f"uncertain[{path.text!r}] reaches outside the field's "
                                 f"range: {exc}") from None
    n_cells = int(np.prod(plan.shape))
    if n_cells <= _MAX_CHECKED_CELLS:
        cells: Any = range(n_cells)
    else:
        corners = itertools.product(*[(0, len(v) - 1) for _p, v in plan.vary])
        cells = sorted({int(np.ravel_multi_index(c, plan.shape)) for c in corners})
    ends = [(p, d.extremes()) for p, d in plan.uncertain]
    extreme_sets = [[(p, e[0]) for p, e in ends], [(p, e[-1]) for p, e in ends]]
    for cell in cells:
        settings = list(zip([p for p, _v in plan.vary], plan.cell_values(cell), strict=True))
        for extra in extreme_sets:
            try:
                _apply(base, settings + extra)
            except ValueError as exc:
                where = ", ".join(f"{p.text} = {v!r}" for p, v in settings + extra)
                raise ValueError(f"the combination {where} is refused: {exc}") from None


# --------------------------------------------------------------------------- workers


@contextlib.contextmanager
def _roomy_malloc() -> Iterator[None]:
    """Let glibc keep freed memory for the next realization while a chunk runs.

    Dask's nanny starts its workers with ``MALLOC_TRIM_THRESHOLD_=65536``, which also pins
    glibc's mmap threshold at 128 kB: every array of a realization above that size then
    comes from fresh pages (measured: 25-29 ms of CPU per realization without it, 50-60 ms
    with it, a third of it system time). While a chunk runs the two thresholds are raised;
    afterwards they are put back as that setting makes them and the freed memory is
    returned to the system. Nothing changes where the variable is not set or the C
    library is not glibc.
    """
    try:
        trim = int(os.environ.get("MALLOC_TRIM_THRESHOLD_", ""))
    except ValueError:
        trim = None
    if trim is None or not keep_freed_memory(16 * 2**20, 256 * 2**20):
        yield
        return
    try:
        yield
    finally:
        libc = glibc()
        libc.mallopt(M_TRIM_THRESHOLD, trim)
        libc.mallopt(M_MMAP_THRESHOLD, DEFAULT_MMAP_THRESHOLD_BYTES)
        libc.malloc_trim(0)


def _run_items(plan: _Plan, items: Sequence[tuple[int, int]]
               ) -> list[tuple[int, int, RealizationResult, list[Any], int]]:
    """Run realizations ``(cell, r)`` of ``plan`` (in a worker or in this process)."""
    with _roomy_malloc():
        return _run_chunk(plan, items)


def _run_chunk(plan: _Plan, items: Sequence[tuple[int, int]]
               ) -> list[tuple[int, int, RealizationResult, list[Any], int]]:
    out = []
    for cell, r in items:
        try:
            sc, drawn, clutter_seed = _draw(plan, cell, r)
        except ValueError as exc:  # a draw the checks before the run could not foresee
            where = ", ".join(f"{p.text} = {v!r}" for (p, _), v in
                              zip(plan.vary, plan.cell_values(cell), strict=True))
            raise ValueError(f"realization {r} of the cell {where or '(single)'}: {exc}"
                             ) from None
        res = run_realization(sc, level_db=plan.level_db, floor_db=plan.floor_db,
                              reduced=plan.reduced)
        out.append((cell, r, res, drawn, clutter_seed))
    return out


def _is_dask_client(executor: Any) -> bool:
    return type(executor).__module__.split(".")[0] == "distributed" and hasattr(
        executor, "submit")


def local_pool(workers: int) -> cf.ProcessPoolExecutor:
    """A process pool whose workers start from a server that imported the model once."""
    if "forkserver" in multiprocessing.get_all_start_methods():
        ctx = multiprocessing.get_context("forkserver")
        ctx.set_forkserver_preload(["snowprobe_widgets.sweeps"])
    else:
        ctx = multiprocessing.get_context("spawn")
    return cf.ProcessPoolExecutor(max_workers=workers, mp_context=ctx,
                                  initializer=_ignore_interrupt)


def _ignore_interrupt() -> None:
    """Workers leave Ctrl-C to the process that started them, which stops handing out
    work and keeps what the workers finish."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)


def _chunks(items: list[tuple[int, int]], size: int) -> list[list[tuple[int, int]]]:
    return [items[i:i + size] for i in range(0, len(items), size)]


class _Progress:
    """A tqdm bar (notebook or terminal, with time left) and an optional callback."""

    def __init__(self, total: int, show: bool, callback: Callable[[int, int], Any] | None):
        self.total = total
        self.done = 0
        self.callback = callback
        self.bar = None
        if show:
            from tqdm.auto import tqdm

            self.bar = tqdm(total=total, unit="realization", desc="sweep", leave=True)

    def update(self, n: int) -> None:
        self.done += n
        if self.bar is not None:
            self.bar.update(n)
        if self.callback is not None:
            self.callback(self.done, self.total)

    def close(self) -> None:
        if self.bar is not None:
            self.bar.close()


def _execute(plan: _Plan, items: list[tuple[int, int]], executor: Any, progress: _Progress,
             cancel: threading.Event | None, chunk_size: int | None,
             sink: Callable[[list], None]) -> bool:
    """Run ``items``, handing each finished chunk to ``sink``; False when stopped early."""
    stop = cancel if cancel is not None else threading.Event()
    if isinstance(executor, bool):
        raise ValueError(f"executor must be None, a worker count, an Executor or a "
                         f"dask.distributed.Client, got {executor!r}")
    if executor is None:
        executor = os.cpu_count() or 1
    if isinstance(executor, (int, np.integer)):
        workers = int(check_range("executor (workers)", executor, 1, 1024))
        if workers == 1:
            for item in items:
                if stop.is_set():
                    return False
                sink(_run_items(plan, [item]))
                progress.update(1)
            return True
        with local_pool(workers) as pool:
            return _execute(plan, items, pool, progress, stop, chunk_size, sink)
    n_workers = _worker_count(executor)
    size = chunk_size or max(1, min(32, math.ceil(len(items) / (8 * n_workers))))
    chunks = _chunks(items, int(size))
    if _is_dask_client(executor):
        from distributed import as_completed

        plan_f = executor.scatter(plan, broadcast=True)
        futures = [executor.submit(_run_items, plan_f, c, pure=False) for c in chunks]
        done_iter = as_completed(futures)
    elif isinstance(executor, cf.Executor):
        futures = [executor.submit(_run_items, plan, c) for c in chunks]
        done_iter = cf.as_completed(futures)
    else:
        raise ValueError(f"executor must be None, a worker count, an Executor or a "
                         f"dask.distributed.Client, got {type(executor).__name__}")
    kept: set[int] = set()

    def keep(fut: Any) -> None:
        part = fut.result()
        sink(part)
        kept.add(id(fut))
        progress.update(len(part))

    try:
        for fut in done_iter:
            keep(fut)
            if stop.is_set():
                break
        else:
            return True
    except KeyboardInterrupt:
        stop.set()
    # stopped: drop what has not started, keep what finished or was already running
    for fut in futures:
        fut.cancel()
    if isinstance(executor, cf.Executor):
        cf.wait(futures)
    for fut in futures:
        if id(fut) not in kept and fut.done() and not fut.cancelled() \
                and getattr(fut, "status", "finished") == "finished" \
                and fut.exception() is None:
            keep(fut)
    return False


def _worker_count(executor: Any) -> int:
    if _is_dask_client(executor):
        return max(1, sum(w.get("nthreads", 1) for w in
                          executor.scheduler_info().get("workers", {}).values()))
    return max(1, int(getattr(executor, "_max_workers", os.cpu_count() or 1)))


# --------------------------------------------------------------------------- records


class _Records:
    """Per-realization arrays, filled as chunks come back."""

    def __init__(self, plan: _Plan, previous: Any = None) -> None:
        shape = plan.shape + (plan.realizations,)
        npers = plan.n_persons
        self.plan = plan
        if previous is not None:
            self.arrays = {k: np.array(previous[k].values) for k in _RECORD_VARS}
            self.drawn = {p.text: np.array(previous[_drawn_name(p.text)].values)
                          for p, _d in plan.uncertain}
            return
        self.arrays = {
            "done": np.zeros(shape, bool),
            "found": np.full(shape + (npers,), np.nan),
            "detector_margin_db": np.full(shape + (npers,), np.nan),
            "false_alarms": np.full(shape, np.nan),
            "twin_false_alarms": np.full(shape, np.nan),
            "twin_alarm_margin_db": np.full(shape + (MAX_ALARMS,), np.nan),
            "line_length_m": np.full(shape, np.nan),
            "echo_to_noise_db": np.full(shape + (npers,), np.nan),
            "echo_to_clutter_db": np.full(shape + (npers,), np.nan),
            "clutter_seed": np.full(shape, -1.0),
        }
        self.drawn = {}
        for p, d in plan.uncertain:
            text = isinstance(d, Choice) and any(isinstance(o, str) for o in d.options)
            self.drawn[p.text] = np.full(shape, "", object) if text else np.full(shape, np.nan)

    def add(self, part: list) -> None:
        lvl = self.plan.level_db
        for cell, r, res, drawn, clutter_seed in part:
            idx = (np.unravel_index(cell, self.plan.shape) if self.plan.shape else ()) + (r,)
            a = self.arrays
            a["done"][idx] = True
            a["found"][idx] = res.found
            a["detector_margin_db"][idx] = res.person_score_db - lvl
            a["false_alarms"][idx] = res.false_alarms
            a["twin_false_alarms"][idx] = res.twin_false_alarms
            a["twin_alarm_margin_db"][idx] = res.twin_alarm_score_db - lvl
            a["line_length_m"][idx] = res.line_length_m
            a["echo_to_noise_db"][idx] = res.echo_to_noise_db
            a["echo_to_clutter_db"][idx] = res.echo_to_clutter_db
            a["clutter_seed"][idx] = clutter_seed
            for (p, _d), v in zip(self.plan.uncertain, drawn, strict=True):
                self.drawn[p.text][idx] = v


_RECORD_VARS = ("done", "found", "detector_margin_db", "false_alarms", "twin_false_alarms",
                "twin_alarm_margin_db", "line_length_m", "echo_to_noise_db",
                "echo_to_clutter_db", "clutter_seed")

_UNITS = {
    "done": ("1", "the realization has run"),
    "found": ("1", "1 when the detector at the level found the person, 0 when not"),
    "detector_margin_db": ("dB", "strongest detection score near the person minus the "
                                 "level; NaN: nothing near the person scored the floor"),
    "false_alarms": ("1", "detections at the level matching no person, with the persons"),
    "twin_false_alarms": ("1", "detections at the level on the nobody-buried twin"),
    "twin_alarm_margin_db": ("dB", "scores of the twin's detections minus the level, "
                                   "strongest first, NaN-padded"),
    "line_length_m": ("m", "length of the simulated survey line"),
    "echo_to_noise_db": ("dB", "peak of the person's raw echo over the receiver noise rms"),
    "echo_to_clutter_db": ("dB", "peak of the person's raw echo over the rms of clutter "
                                 "and debris echoes within one period of its time; NaN: "
                                 "no clutter echo there"),
    "clutter_seed": ("1", "clutter seed of the realization (a whole number kept exactly as "
                          "a float; -1: not run)"),
    "trials": ("1", "person-realizations that ran"),
    "detection_probability": ("1", "fraction of persons found at the level"),
    "detection_probability_lower": ("1", "Wilson 95 % interval, lower end"),
    "detection_probability_upper": ("1", "Wilson 95 % interval, upper end"),
    "false_alarms_per_100m": ("1/(100 m)", "twin detections at the level per 100 m of line"),
}


def _drawn_name(path: str) -> str:
    return f"drawn {path}"


def wilson_interval(successes: Any, trials: Any, z: float = _Z95
                    ) -> tuple[np.ndarray, np.ndarray]:
    """Wilson score interval of a binomial proportion (Wilson 1927, JASA 22:209).

    ``(p + z^2/2n +- z sqrt(p(1-p)/n + z^2/4n^2)) / (1 + z^2/n)`` with ``p = k/n``;
    NaN where ``n == 0``. Returns (lower, upper).
    """
    k = np.asarray(successes, float)
    n = np.asarray(trials, float)
    with np.errstate(invalid="ignore", divide="ignore"):
        p = k / n
        den = 1.0 + z * z / n
        centre = (p + z * z / (2 * n)) / den
        half = z / den * np.sqrt(p * (1 - p) / n + z * z / (4 * n * n))
        lo = np.where(n > 0, np.clip(centre - half, 0.0, 1.0), np.nan)
        hi = np.where(n > 0, np.clip(centre + half, 0.0, 1.0), np.nan)
    return lo, hi


def _summaries(found: np.ndarray, done: np.ndarray, twin_alarms: np.ndarray,
               length_m: np.ndarray) -> dict[str, np.ndarray]:
    """Detection probability, its interval and false alarms per 100 m over realizations
    (axis -2 of ``found``, -1 of the others) and persons (axis -1 of ``found``)."""
    k = np.nansum(found, axis=(-2, -1))
    n = np.sum(done, axis=-1) * found.shape[-1]
    lo, hi = wilson_interval(k, n)
    with np.errstate(invalid="ignore", divide="ignore"):
        p = np.where(n > 0, k / np.maximum(n, 1), np.nan)
        alarms = np.nansum(np.where(done, twin_alarms, 0.0), axis=-1)
        length = np.nansum(np.where(done, length_m, 0.0), axis=-1)
        fa = np.where(length > 0, 100.0 * alarms / np.maximum(length, 1e-300), np.nan)
    return {"trials": n.astype(np.int64), "detection_probability": p,
            "detection_probability_lower": lo, "detection_probability_upper": hi,
            "false_alarms_per_100m": fa}


def _dataset(plan: _Plan, rec: _Records, complete: bool) -> Any:
    import xarray as xr

    grid = [p.text for p, _v in plan.vary]
    base_dims = tuple(grid) + ("realization",)
    a = rec.arrays
    data_vars: dict[str, Any] = {}
    for name in _RECORD_VARS:
        arr = a[name]
        extra = ()
        if arr.ndim == len(base_dims) + 1:
            extra = ("alarm",) if name == "twin_alarm_margin_db" else ("person",)
        data_vars[name] = (base_dims + extra, arr)
    for path, arr in rec.drawn.items():
        data_vars[_drawn_name(path)] = (base_dims, arr)
    sums = _summaries(a["found"], a["done"], a["twin_false_alarms"], a["line_length_m"])
    for name, arr in sums.items():
        data_vars[name] = (tuple(grid), arr)
    coords: dict[str, Any] = {p.text: list(v) for p, v in plan.vary}
    coords["realization"] = np.arange(plan.realizations)
    coords["person"] = np.arange(plan.n_persons)
    coords["person_label"] = ("person", [p.label or f"person {i + 1}"
                                         for i, p in enumerate(plan.base.persons)])
    coords["alarm"] = np.arange(MAX_ALARMS)
    ds = xr.Dataset(data_vars, coords=coords)
    for name, (unit, what) in _UNITS.items():
        ds[name].attrs.update(units=unit, description=what)
    for path, dist in plan.uncertain:
        ds[_drawn_name(path.text)].attrs.update(description=f"value drawn for {path.text}",
                                           distribution=json.dumps(dist.to_dict()))
    ds.attrs.update(_attrs(plan, complete))
    return ds


def _attrs(plan: _Plan, complete: bool) -> dict[str, Any]:
    return {
        "format": FORMAT,
        "version": VERSION,
        "title": "Detection probability under uncertainty (Monte Carlo sweep)",
        "caution": CAUTION_SHORT,
        "snowprobe_widgets_version": __version__,
        "base_scenario": plan.base.to_json(),
        "vary": json.dumps({p.text: list(v) for p, v in plan.vary}),
        "uncertain": json.dumps({p.text: d.to_dict() for p, d in plan.uncertain}),
        "realizations": plan.realizations,
        "seed": str(plan.seed),
        "seed_rule": "realization r of grid cell c (flat index, C order) draws from "
                     "numpy.random.SeedSequence(seed, spawn_key=(c, r)): the uncertain "
                     "fields in the order listed, then the clutter seed",
        "level_db": plan.level_db,
        "floor_db": plan.floor_db,
        "reduced_scene": int(plan.reduced),
        "complete": int(complete),
    }


def _plan_from_attrs(ds: Any) -> _Plan:
    attrs = ds.attrs
    if attrs.get("format") != FORMAT or int(attrs.get("version", -1)) != VERSION:
        raise ValueError(f"this dataset is not a {FORMAT} version {VERSION} dataset "
                         f"(format={attrs.get('format')!r}, version={attrs.get('version')!r})")
    base = Scenario.from_json(attrs["base_scenario"])
    return _make_plan(base, json.loads(attrs["vary"]), json.loads(attrs["uncertain"]),
                      int(attrs["realizations"]), int(attrs["seed"]),
                      float(attrs["level_db"]), float(attrs["floor_db"]),
                      bool(int(attrs["reduced_scene"])))


# --------------------------------------------------------------------------- public


def sweep(base: Scenario, vary: Mapping[str, Sequence[Any]], *,
          uncertain: Mapping[str, Any] | None = None, realizations: int = 50,
          seed: int = 0, executor: Any = None, level_db: float = DEFAULT_THRESHOLD_DB,
          floor_db: float = 10.0, reduced: bool = True, progress: bool = True,
          on_progress: Callable[[int, int], Any] | None = None,
          cancel: threading.Event | None = None, chunk_size: int | None = None) -> Any:
    """Monte Carlo detection probability over a grid of scenario fields.

    Parameters
    ----------
    base : Scenario
        The base scene, with at least one buried person.
    vary : mapping of str to list
        Field path -> values (the grid); ``{}`` for a single cell. Dimension names of the
        result are these paths as given.
    uncertain : mapping of str to distribution, optional
        Field path -> :class:`Uniform`, :class:`Normal` or :class:`Choice` (or their JSON
        form, e.g. ``{"uniform": {"low": 0, "high": 2}}``), drawn for every realization
        in the order given. A ``[*]`` path draws one value for every item it names.
    realizations : int
        Realizations per grid cell, in [1, 100000].
    seed : int
        Master seed, >= 0 (see the module notes for how realization seeds derive from it).
    executor : None, int, concurrent.futures.Executor or dask.distributed.Client
        Where to run: a process pool on all local cores (None), ``n`` local workers
        (1: in this process), the given executor, or the given Dask cluster.
    level_db : float
        Detector level, dB of box energy over the background, in [0, 60].
    floor_db : float
        Lowest detection score recorded, dB, in [0, level_db]: :func:`roc` can lower the
        level down to it.
    reduced : bool
        Simulate only what the detector needs (see :mod:`sweep_realization`).
    progress : bool
        Show a progress bar with the time left (``tqdm.auto``).
    on_progress : callable(done, total), optional
        Called after every finished chunk.
    cancel : threading.Event, optional
        Set it (from another thread) to stop early; the finished part is returned.
    chunk_size : int, optional
        Realizations per task sent to a worker (default: about 8 tasks per worker, at
        most 32 each); it never changes the result.

    Returns
    -------
    xarray.Dataset
        See the module notes; ``attrs["complete"]`` is 1 when every realization ran.

    Raises
    ------
    ValueError
        Before any work, on an unknown path, a value or distribution bound outside its
        field's range, or a refused combination of grid values and bounds.
    """
    plan = _make_plan(base, vary, uncertain, realizations, seed, level_db, floor_db, reduced)
    return _run(plan, _Records(plan), executor, progress, on_progress, cancel, chunk_size)


def empty_sweep(base: Scenario, vary: Mapping[str, Sequence[Any]], *,
                uncertain: Mapping[str, Any] | None = None, realizations: int = 50,
                seed: int = 0, level_db: float = DEFAULT_THRESHOLD_DB,
                floor_db: float = 10.0, reduced: bool = True) -> Any:
    """The dataset of a sweep with nothing run yet (checked as :func:`sweep` checks);
    :func:`resume` runs it."""
    plan = _make_plan(base, vary, uncertain, realizations, seed, level_db, floor_db, reduced)
    return _dataset(plan, _Records(plan), complete=False)


def resume(dataset: Any, *, executor: Any = None, progress: bool = True,
           on_progress: Callable[[int, int], Any] | None = None,
           cancel: threading.Event | None = None, chunk_size: int | None = None) -> Any:
    """Run the realizations a stopped sweep did not finish; returns the completed dataset
    (the same as an uninterrupted run's). Arguments as in :func:`sweep`."""
    plan = _plan_from_attrs(dataset)
    return _run(plan, _Records(plan, dataset), executor, progress, on_progress, cancel,
                chunk_size)


def _run(plan: _Plan, rec: _Records, executor: Any, progress: bool,
         on_progress: Callable[[int, int], Any] | None, cancel: threading.Event | None,
         chunk_size: int | None) -> Any:
    todo = np.argwhere(~rec.arrays["done"].reshape(-1, plan.realizations))
    items = [(int(c), int(r)) for c, r in todo]
    bar = _Progress(len(items), progress, on_progress)
    try:
        complete = _execute(plan, items, executor, bar, cancel, chunk_size, rec.add)
    except KeyboardInterrupt:
        complete = False
    finally:
        bar.close()
    complete = complete and bool(rec.arrays["done"].all())
    return _dataset(plan, rec, complete)


def roc(dataset: Any, levels_db: Sequence[float] | None = None) -> Any:
    """Detection probability against false alarms per 100 m as the detector level moves.

    Uses the recorded margins (no simulation). A person counts as found at level L when
    a detection within the matching tolerance scored L or more; the twin's detections
    scoring L or more are its false alarms.

    Parameters
    ----------
    dataset : xarray.Dataset
        A sweep dataset.
    levels_db : sequence of float, optional
        Levels, dB, each in [attrs floor_db, 60] (default: floor_db to 60 dB in 1 dB steps).

    Returns
    -------
    xarray.Dataset
        ``detection_probability``, its Wilson interval and ``false_alarms_per_100m`` over
        the grid dimensions and ``level_db``.
    """
    import xarray as xr

    if dataset.attrs.get("format") != FORMAT:
        raise ValueError("roc needs a dataset made by snowprobe_widgets.sweep")
    level = float(dataset.attrs["level_db"])
    floor = float(dataset.attrs["floor_db"])
    if levels_db is None:
        levels = np.arange(floor, 60.0 + 0.5, 1.0)
    else:
        levels = np.array([check_range("levels_db", v, floor, 60.0, unit="dB")
                           for v in levels_db])
    done = dataset["done"].values.astype(bool)
    margin = dataset["detector_margin_db"].values
    twin = dataset["twin_alarm_margin_db"].values
    length = dataset["line_length_m"].values
    out: dict[str, list] = {}
    for lv in levels:
        with np.errstate(invalid="ignore"):
            found = np.where(done[..., None], (margin + level >= lv - 1e-9).astype(float),
                             np.nan)
            alarms = np.sum(twin + level >= lv - 1e-9, axis=-1).astype(float)
        for k, v in _summaries(found, done, alarms, length).items():
            out.setdefault(k, []).append(v)
    grid = [d for d in dataset["detection_probability"].dims]
    coords = {d: dataset[d].values for d in grid}
    coords["level_db"] = levels
    data = {k: (tuple(grid) + ("level_db",), np.moveaxis(np.array(v), 0, -1))
            for k, v in out.items()}
    res = xr.Dataset(data, coords=coords)
    for name in data:
        res[name].attrs.update(units=_UNITS[name][0], description=_UNITS[name][1])
    res.attrs.update(caution=CAUTION_SHORT, level_db=level, floor_db=floor)
    return res


def save(dataset: Any, path: str | os.PathLike[str]) -> None:
    """Write a sweep dataset to a netCDF-4 file atomically (temporary file, then rename)."""
    target = os.fspath(path)
    folder = os.path.dirname(os.path.abspath(target))
    fd, tmp = tempfile.mkstemp(prefix=".sweep-", suffix=".nc", dir=folder)
    os.close(fd)
    try:
        dataset.to_netcdf(tmp, engine="scipy")
        mask = os.umask(0)
        os.umask(mask)
        os.chmod(tmp, 0o666 & ~mask)  # as an ordinary new file (mkstemp makes it 0600)
        os.replace(tmp, target)
    except BaseException:
        if os.path.exists(tmp):
            os.remove(tmp)
        raise


def load(path: str | os.PathLike[str]) -> Any:
    """Read a sweep dataset written by :func:`save` (fully into memory).

    Raises
    ------
    ValueError
        If the file is not a sweep dataset of this version.
    """
    import xarray as xr

    ds = xr.load_dataset(os.fspath(path), engine="scipy")
    if ds.attrs.get("format") != FORMAT or int(ds.attrs.get("version", -1)) != VERSION:
        raise ValueError(f"{os.fspath(path)} is not a {FORMAT} version {VERSION} file")
    return ds
