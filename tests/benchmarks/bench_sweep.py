"""Speed of Monte Carlo sweeps: realizations per second on one core, two local workers and
a two-worker dask.distributed LocalCluster, with ratios measured in the same run.

Run by hand: ``python tests/benchmarks/bench_sweep.py [--realizations N] [--map [R]]
[--map-preset NAME]``.

1. One realization (simulate the scene and its nobody-buried twin, default chain, detect
   both, score) on the shallow demo at 400 and 800 MHz, a new clutter seed each time:
   the whole base line (the baseline, in the same run) vs the reduced scene; and the
   reduced scene with the person's heading drawn each time too (so the persons' echo,
   which realizations differing only in their clutter share, is computed every time).
2. A sweep of 2 depths x 2 wetness x N realizations (default 20) in this process, on two
   local worker processes and on a two-worker LocalCluster (processes, one thread each),
   each warmed up first (start-up printed apart); ratio to one core. Goal: >= 1.8x on
   two workers. The CPU time per realization, in this process and in the two workers,
   shows what the ratio would be on two idle cores (the same CPU time per realization
   on both sides: 2x, less the waits at the end of the sweep).
3. With ``--map``: the 20 depths x 6 wetness x 50 realizations map (6,000 realizations,
   6,000 twins) on two local workers (``--map R``: R realizations a cell, and the time
   projected to 50); ``--map-preset`` adds an uncertainty preset. Goal: under 2 minutes
   on a 2-core machine. Beside the wall time it prints the CPU time the two workers
   used: half of it is what the map takes on two otherwise idle cores.

The machine's load (``os.getloadavg``) is printed beside every figure: on a shared
machine every figure is an upper bound, and a ratio between two executors is only
meaningful when the load stayed low through both.
"""

from __future__ import annotations

import argparse
import dataclasses
import os
import statistics
import time
from typing import Any

import numpy as np

from snowprobe_widgets import sweeps
from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.sweep_realization import run_realization

DEPTH = "persons[0].depth_m"
WET = "snowpack.layers[*].lwc_percent"
GOAL_RATIO = 1.8
GOAL_MAP_S = 120.0


def _load() -> str:
    one, five, fifteen = os.getloadavg()
    return f"load {one:.2f} {five:.2f} {fifteen:.2f}"


def _at(base: Scenario, fc_hz: float) -> Scenario:
    return dataclasses.replace(base, radar=dataclasses.replace(base.radar,
                                                               center_frequency_hz=fc_hz))


def _median_ms(scenes: list[Scenario], reduced: bool) -> float:
    run_realization(scenes[0], reduced=reduced)
    times = []
    for sc in scenes[1:]:
        t0 = time.perf_counter()
        run_realization(sc, reduced=reduced)
        times.append(time.perf_counter() - t0)
    return 1e3 * statistics.median(times)


def one_realization(repeats: int = 9) -> None:
    base = Scenario.example("shallow_dry_powder")
    print(f"one realization (scene + twin, chain, detect, score), median of {repeats}, "
          "a new clutter seed each time:")
    for fc in (400e6, 800e6):
        sc = _at(base, fc)
        seeds = [dataclasses.replace(sc, clutter=dataclasses.replace(sc.clutter, seed=s))
                 for s in range(repeats + 1)]
        headings = [dataclasses.replace(s, persons=(dataclasses.replace(
            s.persons[0], heading_deg=17.0 * i),) + s.persons[1:])
            for i, s in enumerate(seeds)]
        full = _median_ms(seeds, reduced=False)
        part = _median_ms(seeds, reduced=True)
        drawn = _median_ms(headings, reduced=True)
        print(f"  {fc / 1e6:4.0f} MHz  whole line {full:6.1f} ms   reduced scene {part:6.1f} ms"
              f" ({full / part:4.2f}x)   reduced, heading drawn too {drawn:6.1f} ms   "
              f"[{_load()}]")


def _timed_sweep(base: Scenario, vary: dict, realizations: int, executor: object,
                 uncertain: dict | None = None) -> tuple:
    t0 = time.perf_counter()
    ds = sweeps.sweep(base, vary, uncertain=uncertain, realizations=realizations,
                      executor=executor, progress=False)
    seconds = time.perf_counter() - t0
    return ds, seconds, ds["done"].size / seconds


def executors(realizations: int) -> None:
    from distributed import Client, LocalCluster

    base = Scenario.example("shallow_dry_powder")
    vary = {DEPTH: [0.5, 1.2], WET: [0.0, 4.0]}
    n = 4 * realizations
    print(f"\nsweep of {n} realizations (+ {n} twins); workers warmed up by a 4-realization "
          "sweep first, start-up times shown apart:")
    _timed_sweep(base, vary, 1, 1)
    c0 = time.process_time()
    ref, s1, r1 = _timed_sweep(base, vary, realizations, 1)
    c1 = 1e3 * (time.process_time() - c0) / n
    print(f"  one core (in process)        {s1:7.1f} s  {r1:6.1f} realizations/s  1.00x   "
          f"CPU {c1:5.1f} ms/realization   [{_load()}]")
    t0 = time.perf_counter()
    with sweeps.local_pool(2) as pool:
        _timed_sweep(base, vary, 1, pool)
        up = time.perf_counter() - t0
        cpu0 = _cpu_s(pool)
        ds2, s2, r2 = _timed_sweep(base, vary, realizations, pool)
        c2 = 1e3 * (_cpu_s(pool) - cpu0) / n
    print(f"  two local worker processes   {s2:7.1f} s  {r2:6.1f} realizations/s  "
          f"{r2 / r1:4.2f}x (goal >= {GOAL_RATIO}x; start-up {up:.1f} s)   workers' CPU "
          f"{c2:5.1f} ms/realization   [{_load()}]")
    t0 = time.perf_counter()
    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                      dashboard_address=None) as cluster, Client(cluster) as client:
        _timed_sweep(base, vary, 1, client)
        up = time.perf_counter() - t0
        ds3, s3, r3 = _timed_sweep(base, vary, realizations, client)
    print(f"  two-worker LocalCluster      {s3:7.1f} s  {r3:6.1f} realizations/s  "
          f"{r3 / r1:4.2f}x (start-up {up:.1f} s)   [{_load()}]")
    same = ds2.identical(ref) and ds3.identical(ref)
    print(f"  identical datasets: {same}")


def _cpu_s(pool: Any) -> float:
    """CPU time (user + system) the pool's worker processes have used so far, s."""
    ticks = os.sysconf("SC_CLK_TCK")
    total = 0
    for pid in list(pool._processes):  # a benchmark may read the executor's own table
        with open(f"/proc/{pid}/stat") as fh:
            fields = fh.read().rsplit(")", 1)[1].split()
        total += int(fields[11]) + int(fields[12])
    return total / ticks


def big_map(realizations: int, preset: str | None) -> None:
    base = Scenario.example("shallow_dry_powder")
    vary = {DEPTH: list(np.round(np.linspace(0.3, 1.45, 20), 3)),
            WET: [0.0, 1.0, 2.0, 3.0, 4.0, 6.0]}
    uncertain = sweeps.uncertainty_preset(preset, list(vary)) if preset else None
    with sweeps.local_pool(2) as pool:
        _timed_sweep(base, {DEPTH: [0.5]}, 2, pool)  # start the workers
        cpu0 = _cpu_s(pool)
        t0 = time.perf_counter()
        ds = sweeps.sweep(base, vary, uncertain=uncertain, realizations=realizations,
                          executor=pool, progress=True)
        seconds = time.perf_counter() - t0
        cpu = _cpu_s(pool) - cpu0
    n = ds["done"].size
    scale = 50 / realizations
    print(f"\n20 depths x 6 wetness x {realizations} realizations ({n} + twins"
          f"{', uncertain: ' + preset if preset else ''}) on two local workers:")
    print(f"  wall {seconds:6.1f} s ({n / seconds:5.1f} realizations/s); workers' CPU "
          f"{cpu:6.1f} s, i.e. {cpu / 2:6.1f} s on two idle cores   [{_load()}]")
    if realizations != 50:
        print(f"  projected to 50 realizations: wall {seconds * scale:5.0f} s, on two idle "
              f"cores {cpu / 2 * scale:5.0f} s (goal < {GOAL_MAP_S:.0f} s)")
    else:
        print(f"  goal < {GOAL_MAP_S:.0f} s")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--realizations", type=int, default=20)
    parser.add_argument("--map", type=int, nargs="?", const=50, default=0,
                        metavar="REALIZATIONS",
                        help="also time the 20 x 6 map (50 realizations a cell, or as given)")
    parser.add_argument("--map-preset", default=None, choices=list(sweeps.UNCERTAINTY_PRESETS),
                        help="uncertainty preset of the map (default: clutter and noise only)")
    parser.add_argument("--skip-executors", action="store_true",
                        help="time one realization and the map only")
    args = parser.parse_args()
    print(f"{os.cpu_count()} cores, {_load()}")
    one_realization()
    if not args.skip_executors:
        executors(args.realizations)
    if args.map:
        big_map(args.map, args.map_preset)


if __name__ == "__main__":
    main()
