"""A radargram picture for files and reports: axes with units, ticks, a colour bar.

Drawn with Pillow (its bundled default font, so nothing is fetched); the colours are the
view's own maps (:mod:`.palette_png`).
"""

from __future__ import annotations

import io
import math
from typing import Any

import numpy as np
from PIL import Image, ImageDraw, ImageFont

from snowprobe_widgets.widgets.palette_png import COLOUR_MAP_KINDS, colour_map, scale_to_index
from snowprobe_widgets.widgets.radargram_view import colour_range

__all__ = ["figure_png", "nice_ticks"]

_PLOT_W, _PLOT_H = 720, 440
_LEFT, _RIGHT, _TOP, _BOTTOM = 78, 120, 34, 58
_INK = (30, 30, 30)


def nice_ticks(low: float, high: float, count: int = 6) -> np.ndarray:
    """Round tick values (1, 2 or 5 times a power of ten apart) inside ``[low, high]``."""
    span = high - low
    if not math.isfinite(span) or span <= 0:
        return np.array([low])
    raw = span / max(1, count)
    power = 10 ** math.floor(math.log10(raw))
    step = min((m * power for m in (1, 2, 5, 10) if m * power >= raw), default=10 * power)
    first = math.ceil(low / step - 1e-9) * step
    return np.arange(first, high + step * 1e-9, step)


def _label(x: float) -> str:
    text = f"{x:.6g}"
    return "0" if text in ("-0", "0") else text


def figure_png(rg: Any, colour_map_name: str, clip_percent: float, title: str = "") -> bytes:
    """The radargram with its axes (position along the line in m, two-way time in ns),
    a title and a colour bar (amplitude in model units), as PNG bytes."""
    lo, hi = colour_range(rg.data, clip_percent, COLOUR_MAP_KINDS[colour_map_name])
    lut = colour_map(colour_map_name)
    pixels = Image.fromarray(lut[scale_to_index(rg.data, lo, hi)], mode="RGB")
    pixels = pixels.resize((_PLOT_W, _PLOT_H), Image.Resampling.NEAREST)
    width, height = _LEFT + _PLOT_W + _RIGHT, _TOP + _PLOT_H + _BOTTOM
    canvas = Image.new("RGB", (width, height), "white")
    canvas.paste(pixels, (_LEFT, _TOP))
    draw = ImageDraw.Draw(canvas)
    font = ImageFont.load_default(size=13)
    draw.rectangle((_LEFT - 1, _TOP - 1, _LEFT + _PLOT_W, _TOP + _PLOT_H), outline=_INK)
    x0, x1 = float(rg.position_m[0]), float(rg.position_m[-1])
    t1 = float(rg.time_s[-1]) * 1e9
    for x in nice_ticks(x0, x1):
        px = _LEFT + (x - x0) / (x1 - x0 or 1.0) * _PLOT_W
        draw.line((px, _TOP + _PLOT_H, px, _TOP + _PLOT_H + 5), fill=_INK)
        draw.text((px, _TOP + _PLOT_H + 7), _label(x), fill=_INK, font=font, anchor="mt")
    for t in nice_ticks(0.0, t1):
        py = _TOP + t / (t1 or 1.0) * _PLOT_H
        draw.line((_LEFT - 5, py, _LEFT, py), fill=_INK)
        draw.text((_LEFT - 7, py), _label(t), fill=_INK, font=font, anchor="rm")
    draw.text((_LEFT + _PLOT_W / 2, height - 8), "position along the line (m)", fill=_INK,
              font=font, anchor="ms")
    ylabel = Image.new("RGB", (_PLOT_H, 18), "white")
    ImageDraw.Draw(ylabel).text((_PLOT_H / 2, 9), "two-way time (ns)", fill=_INK, font=font,
                                anchor="mm")
    canvas.paste(ylabel.rotate(90, expand=True), (4, _TOP))
    if title:
        draw.text((_LEFT, 8), title, fill=_INK, font=font)
    # colour bar: the map from lo (bottom) to hi (top)
    bar_x = _LEFT + _PLOT_W + 24
    ramp = lut[np.linspace(255, 0, _PLOT_H).round().astype(int)][:, None, :]
    canvas.paste(Image.fromarray(np.repeat(ramp, 16, axis=1).astype(np.uint8), mode="RGB"),
                 (bar_x, _TOP))
    draw.rectangle((bar_x - 1, _TOP - 1, bar_x + 16, _TOP + _PLOT_H), outline=_INK)
    for value, py in ((hi, _TOP), (0.5 * (lo + hi), _TOP + _PLOT_H / 2), (lo, _TOP + _PLOT_H)):
        draw.text((bar_x + 20, py), f"{value:.2g}", fill=_INK, font=font, anchor="lm")
    draw.text((bar_x - 6, _TOP - 20), "amplitude", fill=_INK, font=font)
    draw.text((bar_x - 6, _TOP + _PLOT_H + 8), "(model units)", fill=_INK, font=font)
    out = io.BytesIO()
    canvas.save(out, format="PNG", optimize=True)
    return out.getvalue()
