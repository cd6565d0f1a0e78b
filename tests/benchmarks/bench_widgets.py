"""Python-side time from setting a control to the explorer's views holding new data.

Run by hand: ``python tests/benchmarks/bench_widgets.py``. Default design
(``Scenario.default()``, 201 traces x 512 samples). Prints medians of REPEATS runs of

* the baseline measured in the same run: bare ``simulate`` + the default processing chain,
  and the bare work a person move really needs (objects part only + processing);
* the person depth slider in a ScenarioExplorer (until the radargram view, the trace,
  spectrum and cross-section hold the new data), with the ratio to the baseline and the
  widget overhead above it;
* the same as a served page does it: until the picture is drawn (the other views follow
  from the event loop, :attr:`ScenarioExplorer.views_follow_s`), then those views alone;
  as CPU time, with and without the served kernel's heap setting
  (:mod:`snowprobe_widgets.heap`), which glibc keeps for the rest of the process, so it
  runs last;
* the same with automatic detections marked;
* a processing change, a colour change and a MaterialsExplorer redraw.

Goals: person depth < 50 ms; overhead above the baseline < 50 %; to the picture, served
< 25 ms of CPU.
"""

from __future__ import annotations

import asyncio
import statistics
import time
from collections.abc import Callable

from snowprobe_widgets.processing import ProcessingChain
from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.synthesis import simulate
from snowprobe_widgets.widgets import MaterialsExplorer, ScenarioExplorer

REPEATS = 15


def _median_ms(fn: Callable[[int], object], repeats: int = REPEATS) -> float:
    fn(-1)  # warm-up
    times = []
    for i in range(repeats):
        t0 = time.perf_counter()
        fn(i)
        times.append(time.perf_counter() - t0)
    return 1e3 * statistics.median(times)


def main() -> None:
    scenario = Scenario.default()
    chain = ProcessingChain.default(scenario.radar.center_frequency_hz)
    base_ms = _median_ms(lambda i: chain.apply(simulate(scenario)))
    # the work the explorer really redoes for a person move: the objects part only
    column = simulate(scenario, components=("layers", "clutter")).data
    noise = simulate(scenario, components=("noise",)).data

    def same_work(i: int) -> None:
        o = simulate(scenario, components=("objects",))
        chain.apply(o.with_data(o.data + column + noise))

    part_ms = _median_ms(same_work)

    app = ScenarioExplorer(scenario)
    depths = (0.7, 0.9)

    def move_person(i: int) -> None:
        before = app.updates
        app.person.depth.value = depths[i % 2]
        assert app.updates == before + 1 and app.message_text == "", app.message_text

    person_ms = _median_ms(move_person)
    app.mark_detections.value = True
    person_det_ms = _median_ms(move_person)
    app.mark_detections.value = False

    def toggle_processing(i: int) -> None:
        app.processing.switches["background_removal"].value = bool(i % 2)

    processing_ms = _median_ms(toggle_processing)

    def colours(i: int) -> None:
        app.radargram_view.clip_slider.value = 95.0 if i % 2 else 99.0

    colour_ms = _median_ms(colours)
    lab = MaterialsExplorer()

    def lab_frequency(i: int) -> None:
        lab.frequency.value = 600.0 if i % 2 else 900.0

    lab_ms = _median_ms(lab_frequency)

    print(f"default design: {app.radargram.data.shape[1]} traces x "
          f"{app.radargram.data.shape[0]} samples; medians of {REPEATS}")
    print(f"baseline, bare simulate + default processing : {base_ms:7.1f} ms")
    print(f"person depth -> views updated (explorer)      : {person_ms:7.1f} ms "
          f"(goal < 50 ms)")
    print(f"  ratio to baseline                           : {person_ms / base_ms:7.2f} "
          f"(widget overhead {100 * (person_ms / base_ms - 1):+.0f} %; goal < +50 %)")
    print(f"  bare objects-only simulate + processing     : {part_ms:7.1f} ms; explorer "
          f"overhead above it {100 * (person_ms / part_ms - 1):+.0f} %")
    print(f"person depth with detections marked           : {person_det_ms:7.1f} ms "
          f"(ratio {person_det_ms / base_ms:.2f})")
    print(f"processing step on/off (no re-simulation)     : {processing_ms:7.1f} ms")
    print(f"colour clip change (no reprocessing)          : {colour_ms:7.1f} ms")
    print(f"materials lab frequency change                : {lab_ms:7.1f} ms")
    plain = asyncio.run(_served_move_cpu_ms(scenario))
    from snowprobe_widgets.heap import keep_freed_memory
    from snowprobe_widgets.widgets.explorer import (
        HEAP_MMAP_THRESHOLD_BYTES,
        HEAP_TRIM_THRESHOLD_BYTES,
    )

    kept = keep_freed_memory(HEAP_MMAP_THRESHOLD_BYTES, HEAP_TRIM_THRESHOLD_BYTES)
    heap = asyncio.run(_served_move_cpu_ms(scenario)) if kept else (float("nan"),) * 3
    print("person depth as served (CPU ms: to the picture, the views after it, page faults)")
    print(f"  glibc's own heap rules                      : {plain[0]:7.1f} + {plain[1]:5.1f}"
          f" ms, {plain[2]:5.0f} faults")
    print(f"  served kernel's heap setting                : {heap[0]:7.1f} + {heap[1]:5.1f}"
          f" ms, {heap[2]:5.0f} faults (to the picture {plain[0] / heap[0]:.2f}x faster)")


async def _served_move_cpu_ms(scenario: Scenario) -> tuple[float, float, float]:
    """Median CPU ms of a person move to its picture, of the views that follow, and the
    page faults of both, with the explorer deferring its views as on a served page."""
    import resource

    app = ScenarioExplorer(scenario)
    app.views_follow_s = 0.01
    to_picture, after, faults = [], [], []
    for i in range(REPEATS + 3):
        f0 = resource.getrusage(resource.RUSAGE_SELF).ru_minflt
        t0 = time.process_time()
        app.person.depth.value = (0.7, 0.9)[i % 2]
        t1 = time.process_time()
        app.flush_views()
        t2 = time.process_time()
        if i >= 3:  # warm-up moves not counted
            to_picture.append(t1 - t0)
            after.append(t2 - t1)
            faults.append(resource.getrusage(resource.RUSAGE_SELF).ru_minflt - f0)
        await asyncio.sleep(0.02)
    return (1e3 * statistics.median(to_picture), 1e3 * statistics.median(after),
            statistics.median(faults))


if __name__ == "__main__":
    main()
