"""Python-side cost of redrawing a RadargramView, against the PNG encoding alone.

Run by hand: ``python tests/benchmarks/bench_radargram_view.py``. Prints medians of 20
runs for a 256-sample x 512-trace section (noisy and smooth) and the ratio of the full
update (``view.radargram = rg`` until the mark holds the new image) to the PNG encoding of
the same picture (at the view's zlib level) measured in the same run, then the encoding at
other zlib levels. Goal: full update below 10 ms.
"""

from __future__ import annotations

import numpy as np
from timing import median_s

from snowprobe_widgets.radargram import Radargram
from snowprobe_widgets.widgets import RadargramView
from snowprobe_widgets.widgets.palette_png import colour_map, encode_palette_png, scale_to_index
from snowprobe_widgets.widgets.radargram_view import colour_range

N_SAMPLES, N_TRACES, REPEATS = 256, 512, 20
VIEW_LEVEL = 1  # the zlib level the view is built with below (its default)


def _median_ms(fn, repeats: int = 20) -> float:
    return 1e3 * median_s(fn, repeats)


def _sections(kind: str) -> list[Radargram]:
    time_s = np.arange(N_SAMPLES) * 2e-10
    position_m = np.arange(N_TRACES) * 0.02
    rng = np.random.default_rng(3)
    out = []
    for k in range(2):  # two sections to alternate, so every assignment is a change
        if kind == "noisy":
            data = rng.normal(size=(N_SAMPLES, N_TRACES))
        else:
            t = time_s[:, None] * 1e9
            x = position_m[None, :]
            data = np.sin(0.4 * t + 0.3 * k) * np.exp(-((x - 5.0) / 3.0) ** 2)
        out.append(Radargram(data=data, time_s=time_s, position_m=position_m))
    return out


def _bench(kind: str) -> None:
    sections = _sections(kind)
    view = RadargramView(sections[0], png_compress_level=VIEW_LEVEL)
    pal = colour_map(view.colour_dropdown.value)
    data = sections[0].data
    lo, hi = colour_range(data, view.clip_slider.value, "diverging")
    index = scale_to_index(data, lo, hi)
    t_range = _median_ms(lambda: colour_range(data, 99.0, "diverging"))
    t_scale = _median_ms(lambda: scale_to_index(data, lo, hi))
    t_encode = _median_ms(lambda: encode_palette_png(index, pal, compress_level=VIEW_LEVEL))
    size_kb = len(encode_palette_png(index, pal, compress_level=VIEW_LEVEL)) / 1024
    mark = view.image_mark
    state = {"k": 0}

    def update() -> None:
        state["k"] ^= 1
        before = mark.image
        view.radargram = sections[state["k"]]
        assert mark.image is not before and before.comm is None

    t_update = _median_ms(update)
    print(f"{kind:>6} {t_range:7.2f}ms {t_scale:7.2f}ms {t_encode:7.2f}ms "
          f"{size_kb:7.1f} {t_update:7.2f}ms {t_update / t_encode:13.2f}x")
    for level in (3, 6, 9):
        t_level = _median_ms(lambda lv=level: encode_palette_png(index, pal, compress_level=lv))
        n_kb = len(encode_palette_png(index, pal, compress_level=level)) / 1024
        print(f"{'':>6}   zlib level {level}: encode {t_level:6.2f} ms, {n_kb:6.1f} kB "
              f"({t_level / t_encode:.2f}x level {VIEW_LEVEL})")


def main() -> None:
    print(f"RadargramView update, {N_SAMPLES} samples x {N_TRACES} traces, "
          f"median of {REPEATS}")
    print(f"{'data':>6} {'range':>8} {'scale':>8} {'encode':>8} {'png kB':>7} "
          f"{'update':>8} {'update/encode':>14}")
    for kind in ("noisy", "smooth"):
        _bench(kind)


if __name__ == "__main__":
    main()
