"""Speed of Monte Carlo sweeps: realizations per second on one core, two local workers and
a two-worker dask.distributed LocalCluster, with ratios measured in the same run.

Run by hand: ``python tests/benchmarks/bench_sweep.py [--realizations N] [--map [R]]``.

1. One realization (simulate the scene and its nobody-buried twin, default chain, detect
   both, score) on the shallow demo at 400 and 800 MHz: the whole base line vs the
   reduced scene (the baseline is the whole line, in the same run).
2. A sweep of 2 depths x 2 wetness x N realizations (default 20) in this process, on two
   local worker processes and on a two-worker LocalCluster (processes, one thread each),
   each warmed up first (start-up printed apart); ratio to one core. Goal: >= 1.8x on
   two workers.
3. With ``--map``: the 20 depths x 6 wetness x 50 realizations map (6,000 realizations,
   6,000 twins) on two local workers (``--map R``: R realizations a cell, and the time
   projected to 50). Goal: under 2 minutes on a 2-core machine.

The machine's load (``os.getloadavg``) is printed before and after: on a shared machine
every figure is an upper bound.
"""

from __future__ import annotations

import argparse
import dataclasses
import os
import time

import numpy as np
from timing import median_s

from snowprobe_widgets import sweeps
from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.sweep_realization import run_realization

DEPTH = "persons[0].depth_m"
WET = "snowpack.layers[*].lwc_percent"
GOAL_RATIO = 1.8
GOAL_MAP_S = 120.0


def _load() -> str:
    one, five, fifteen = os.getloadavg()
    return f"load average {one:.2f} {five:.2f} {fifteen:.2f} on {os.cpu_count()} cores"


def _at(base: Scenario, fc_hz: float) -> Scenario:
    radar = dataclasses.replace(base.radar, center_frequency_hz=fc_hz,
                                dt_s=base.radar.dt_s, time_window_s=base.radar.time_window_s)
    return dataclasses.replace(base, radar=radar)


def one_realization() -> None:
    base = Scenario.example("shallow_dry_powder")
    print("one realization (scene + twin, chain, detect, score), median of 5:")
    for fc in (400e6, 800e6):
        sc = _at(base, fc)
        full = median_s(lambda sc=sc: run_realization(sc, reduced=False), 5)
        part = median_s(lambda sc=sc: run_realization(sc, reduced=True), 5)
        print(f"  {fc / 1e6:4.0f} MHz  whole line {1e3 * full:6.1f} ms   reduced scene "
              f"{1e3 * part:6.1f} ms   ratio {full / part:4.2f}x")


def _timed_sweep(base: Scenario, vary: dict, realizations: int, executor: object) -> tuple:
    t0 = time.perf_counter()
    ds = sweeps.sweep(base, vary, realizations=realizations, executor=executor,
                      progress=False)
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
    ref, s1, r1 = _timed_sweep(base, vary, realizations, 1)
    print(f"  one core (in process)        {s1:7.1f} s  {r1:6.1f} realizations/s  1.00x")
    t0 = time.perf_counter()
    with sweeps.local_pool(2) as pool:
        _timed_sweep(base, vary, 1, pool)
        up = time.perf_counter() - t0
        ds2, s2, r2 = _timed_sweep(base, vary, realizations, pool)
    print(f"  two local worker processes   {s2:7.1f} s  {r2:6.1f} realizations/s  "
          f"{r2 / r1:4.2f}x (goal >= {GOAL_RATIO}x; start-up {up:.1f} s)")
    t0 = time.perf_counter()
    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                      dashboard_address=None) as cluster, Client(cluster) as client:
        _timed_sweep(base, vary, 1, client)
        up = time.perf_counter() - t0
        ds3, s3, r3 = _timed_sweep(base, vary, realizations, client)
    print(f"  two-worker LocalCluster      {s3:7.1f} s  {r3:6.1f} realizations/s  "
          f"{r3 / r1:4.2f}x (start-up {up:.1f} s)")
    same = ds2.identical(ref) and ds3.identical(ref)
    print(f"  identical datasets: {same}")


def big_map(realizations: int) -> None:
    base = Scenario.example("shallow_dry_powder")
    vary = {DEPTH: list(np.round(np.linspace(0.3, 1.45, 20), 3)),
            WET: [0.0, 1.0, 2.0, 3.0, 4.0, 6.0]}
    t0 = time.perf_counter()
    ds = sweeps.sweep(base, vary, realizations=realizations, executor=2, progress=True)
    seconds = time.perf_counter() - t0
    n = ds["done"].size
    line = (f"\n20 depths x 6 wetness x {realizations} realizations ({n} + twins) on two "
            f"local workers: {seconds:.1f} s, {n / seconds:.1f} realizations/s")
    if realizations != 50:
        line += f"; at this rate 50 realizations would take {seconds * 50 / realizations:.0f} s"
    print(line + f" (goal < {GOAL_MAP_S:.0f} s for 50)")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--realizations", type=int, default=20)
    parser.add_argument("--map", type=int, nargs="?", const=50, default=0,
                        metavar="REALIZATIONS",
                        help="also time the 20 x 6 map (50 realizations a cell, or as given)")
    args = parser.parse_args()
    print(_load())
    one_realization()
    executors(args.realizations)
    if args.map:
        big_map(args.map)
    print(_load())


if __name__ == "__main__":
    main()
