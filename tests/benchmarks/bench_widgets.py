"""Python-side time from setting a control to the explorer's views holding new data.

Run by hand: ``python tests/benchmarks/bench_widgets.py``. Default design
(``Scenario.default()``, 201 traces x 512 samples). Prints medians of REPEATS runs of

* the baseline measured in the same run: bare ``simulate`` + the default processing chain,
  and the bare work a person move really needs (objects part only + processing);
* the person depth slider in a ScenarioExplorer (until the radargram view, the trace,
  spectrum and cross-section hold the new data), with the ratio to the baseline and the
  widget overhead above it;
* the same with automatic detections marked;
* a processing change, a colour change and a MaterialsExplorer redraw.

Goals: person depth < 50 ms; overhead above the baseline < 50 %.
"""

from __future__ import annotations

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


if __name__ == "__main__":
    main()
