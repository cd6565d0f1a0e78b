"""Speed of burial detection on the shallow demo (201 traces x 512 samples).

Run by hand: ``python tests/benchmarks/bench_detection.py``. Prints the median time of the
bare default processing chain (the baseline, measured in the same run), of ``detect``
(which runs that chain, then migration, envelope, background and suppression) and of
``detect`` with a chain already applied, with ratios to the baseline. Goal: ``detect``
under 30 ms.
"""

from __future__ import annotations

import time

from timing import median_s

from snowprobe_widgets import simulate
from snowprobe_widgets.detection import detect
from snowprobe_widgets.processing import ProcessingChain
from snowprobe_widgets.scene import Scenario

GOAL_MS = 30.0


def main() -> None:
    sc = Scenario.example("shallow_dry_powder")
    rg = simulate(sc)
    chain = ProcessingChain.default(sc.radar.center_frequency_hz)
    empty = ProcessingChain(())
    processed = chain.apply(rg)
    t_end = time.perf_counter() + 1.0  # warm up (CPU clock, caches, FFT plans) for 1 s
    while time.perf_counter() < t_end:
        detect(rg)
    base = median_s(lambda: chain.apply(rg), 50)
    full = median_s(lambda: detect(rg), 30)
    after = median_s(lambda: detect(processed, chain=empty), 30)
    base2 = median_s(lambda: chain.apply(rg), 50)
    n_t, n_x = rg.data.shape
    print(f"radargram {n_x} traces x {n_t} samples; medians")
    print(f"{'what':<52} {'ms':>8} {'x chain':>8}")
    for name, s in (("default chain (baseline)", base),
                    ("detect (default chain included)", full),
                    ("detect on processed data (empty chain)", after),
                    ("default chain (baseline, again at the end)", base2)):
        print(f"{name:<52} {1e3 * s:8.2f} {s / base:8.2f}")
    verdict = "meets" if 1e3 * full < GOAL_MS else "misses"
    print(f"detect {verdict} the {GOAL_MS:g} ms goal")


if __name__ == "__main__":
    main()
