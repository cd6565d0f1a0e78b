"""Two designs side by side: the pinned design "A" and the one on screen, "B".

Both radargrams are drawn on one colour scale (the range of both sections together), each
with its verdict cards, and the link-budget rows of each buried person with B minus A.
:meth:`DesignComparison.html` is the comparison as one self-contained page for export.
No physics here: the explorer hands in its scenarios, radargrams and budgets.
"""

from __future__ import annotations

import base64
import datetime
import html
from dataclasses import dataclass
from typing import Any

import ipywidgets as widgets
import numpy as np

from snowprobe_widgets.cautions import CAUTION_SHORT, CAUTION_TEXT
from snowprobe_widgets.widgets.palette_png import (
    COLOUR_MAP_KINDS,
    colour_map,
    encode_palette_png,
    scale_to_index,
)
from snowprobe_widgets.widgets.radargram_view import colour_range
from snowprobe_widgets.widgets.verdict import cards_html, engineering, person_name

#: CSS class of the comparison view.
COMPARE_CLASS: str = "sp-compare"


@dataclass(frozen=True)
class Design:
    """One design as compared: its scenario, the section on screen and its budgets."""

    scenario: Any
    radargram: Any
    budgets: tuple[Any, ...]
    problems: tuple[str, ...]


def _png(data: np.ndarray, lo: float, hi: float, cmap: str) -> bytes:
    return encode_palette_png(scale_to_index(data, lo, hi), colour_map(cmap), compress_level=6)


def shared_range(a: Any, b: Any, cmap: str, clip_percent: float) -> tuple[float, float]:
    """One colour range for both sections (percentile of both together)."""
    both = np.concatenate([np.asarray(a.data, float).ravel(), np.asarray(b.data, float).ravel()])
    return colour_range(both, clip_percent, COLOUR_MAP_KINDS[cmap])


def budget_differences(a: Design, b: Design) -> list[tuple[str, list[tuple[str, str, str, str]]]]:
    """Per buried person (matched by order): its name and rows (term, A, B, B - A)."""
    out = []
    for i in range(min(len(a.scenario.persons), len(b.scenario.persons))):
        ba, bb = a.budgets[i], b.budgets[i]
        if ba is None or bb is None:
            continue
        rows_b = {r.term: r for r in bb.rows}
        rows = []
        for ra in ba.rows:
            rb = rows_b.get(ra.term)
            if rb is None or ra.unit != rb.unit:
                continue
            diff = engineering(rb.value - ra.value, ra.unit)
            sign = "+" if rb.value - ra.value > 0 and not diff.startswith("0.0") else ""
            rows.append((ra.term, engineering(ra.value, ra.unit),
                         engineering(rb.value, rb.unit), sign + diff))
        out.append((person_name(b.scenario, i), rows))
    return out


def _differences_html(a: Design, b: Design) -> str:
    parts = []
    for name, rows in budget_differences(a, b):
        body = "".join(f"<tr><td>{html.escape(t)}</td><td style='text-align:right'>{va}</td>"
                       f"<td style='text-align:right'>{vb}</td>"
                       f"<td style='text-align:right'><b>{d}</b></td></tr>"
                       for t, va, vb, d in rows)
        parts.append(f"<h4 style='margin:8px 0 2px'>{html.escape(name)}</h4>"
                     "<table class='sp-compare-table' style='border-collapse:collapse' "
                     "cellpadding='3' border='1'><tr><th>term</th><th>A</th><th>B</th>"
                     f"<th>B - A</th></tr>{body}</table>")
    return "".join(parts) or "<p>No buried person in both designs to compare.</p>"


def _img(png: bytes, alt: str) -> str:
    uri = "data:image/png;base64," + base64.b64encode(png).decode("ascii")
    return f"<img alt='{alt}' src='{uri}' style='width:100%;image-rendering:pixelated'>"


def _colour_bar(lo: float, hi: float, cmap: str) -> str:
    ramp = np.linspace(lo, hi, 256)[None, :]
    return (f"<div style='display:flex;align-items:center;gap:6px;font-size:85%'>"
            f"<span>{lo:.2g}</span><div style='flex:1'>{_img(_png(ramp, lo, hi, cmap), 'scale')}"
            f"</div><span>{hi:.2g}</span><span>(amplitude, model units; one scale for "
            "A and B)</span></div>")


class DesignComparison(widgets.VBox):
    """Pin a design as A, then compare the design on screen (B) with it.

    Attributes
    ----------
    a, b : Design or None
        The pinned design and the one on screen.
    """

    def __init__(self, **kwargs: Any) -> None:
        self.a: Design | None = None
        self.b: Design | None = None
        self.cmap, self.clip = next(iter(COLOUR_MAP_KINDS)), 99.0
        self.pictures = widgets.HTML()
        self.cards = widgets.HTML()
        self.table = widgets.HTML()
        self.note = widgets.HTML("<p>Pin the design on screen as A (button above the "
                                 "cards), change it, and compare here.</p>")
        super().__init__([self.note, self.pictures, self.cards, self.table], **kwargs)
        self.add_class(COMPARE_CLASS)

    def pin(self, design: Design) -> None:
        """Keep ``design`` as A."""
        self.a = design
        self.refresh(design)

    def refresh(self, b: Design, cmap: str | None = None, clip: float | None = None) -> None:
        """Show A against ``b`` (the design on screen) in the view's colours."""
        self.b = b
        self.cmap = cmap or self.cmap
        self.clip = clip if clip is not None else self.clip
        if self.a is None:
            return
        self.note.value = ""
        self.pictures.value = self._pictures_html()
        self.cards.value = self._cards_html()
        self.table.value = _differences_html(self.a, b)

    def _pictures_html(self) -> str:
        a, b = self.a, self.b
        lo, hi = shared_range(a.radargram, b.radargram, self.cmap, self.clip)
        cells = "".join(
            f"<div style='flex:1 1 0;min-width:0'><b>{tag}: {html.escape(_name(d))}</b>"
            f"{_img(_png(d.radargram.data, lo, hi, self.cmap), f'radargram {tag}')}"
            f"<div style='font-size:85%'>{d.radargram.position_m[0]:.1f} to "
            f"{d.radargram.position_m[-1]:.1f} m along the line (across), 0 to "
            f"{d.radargram.time_s[-1] * 1e9:.0f} ns two-way time (down)</div></div>"
            for tag, d in (("A", a), ("B", b)))
        return (f"<div style='display:flex;gap:8px'>{cells}</div>"
                + _colour_bar(lo, hi, self.cmap))

    def _cards_html(self) -> str:
        return "".join(
            f"<div style='flex:1 1 0;min-width:0'><b>{tag}</b>"
            f"{cards_html(d.scenario, list(d.budgets), list(d.problems))}</div>"
            for tag, d in (("A", self.a), ("B", self.b))).join(
            ["<div style='display:flex;gap:8px'>", "</div>"])

    def html(self) -> str:
        """The comparison as one self-contained page (pictures as data URIs), with the
        cautions.

        Raises
        ------
        ValueError
            If no design is pinned yet.
        """
        if self.a is None or self.b is None:
            raise ValueError("nothing to compare yet: pin a design as A first")
        when = datetime.datetime.now(datetime.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
        return ("<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'>"
                "<title>Two radar search designs</title><style>body{font-family:sans-serif;"
                "max-width:70em;margin:1em auto}td,th{border:1px solid #bbb}</style></head>"
                "<body><h1>Two radar search designs</h1>"
                f"<p style='background:#fff8e1;border:1px solid #e0b84c;padding:8px'>"
                f"<b>Caution.</b> {html.escape(CAUTION_TEXT)}</p>"
                f"{self._pictures_html()}{self._cards_html()}"
                f"<h2>Link budget, B against A</h2>{_differences_html(self.a, self.b)}"
                f"<p><small>{html.escape(when)}. {html.escape(CAUTION_SHORT)}</small></p>"
                "</body></html>\n")


def _name(d: Design) -> str:
    return d.scenario.name or "unnamed scenario"


__all__ = ["COMPARE_CLASS", "Design", "DesignComparison", "budget_differences",
           "shared_range"]
