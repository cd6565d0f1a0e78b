"""The one-page printable search plan (self-contained HTML, charts as inline SVG).

Layout (this package's own): title, cautions, the plan in sentences, a chart of the
probability of finding the person against burial time over the survival table, a
comparison table, the inputs and where the numbers come from. Printing it gives one page
on A4 or Letter in portrait.
"""

from __future__ import annotations

import datetime
import html
from collections.abc import Sequence
from typing import Any

import numpy as np

from snowprobe_widgets import __version__
from snowprobe_widgets.cautions import CAUTION_TEXT
from snowprobe_widgets.plan import PLAN_CAUTIONS, SearchPlan

_W, _H, _PAD = 640, 190, 36


def _polyline(x: np.ndarray, y: np.ndarray, x_max: float, colour: str,
              dash: str = "") -> str:
    keep = np.isfinite(x) & np.isfinite(y)
    if keep.sum() < 2:
        return ""
    px = _PAD + x[keep] / x_max * (_W - 2 * _PAD)
    py = _H - _PAD - y[keep] * (_H - 2 * _PAD)
    pts = " ".join(f"{a:.1f},{b:.1f}" for a, b in zip(px, py, strict=True))
    style = f' stroke-dasharray="{dash}"' if dash else ""
    return (f'<polyline fill="none" stroke="{colour}" stroke-width="2"{style} '
            f'points="{pts}"/>')


def chart_svg(plan: SearchPlan) -> str:
    """Probability of finding the person and survival, against burial time (inline SVG)."""
    c = plan.curves
    burial = c["burial_minute"].values
    x_max = float(max(burial[-1], plan.survival.last_minute if np.isfinite(
        c["survival"].values).any() else burial[-1]))
    table_m = np.array(plan.survival.minutes)
    table_f = np.array(plan.survival.fraction)
    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{_W}" height="{_H}" '
             f'viewBox="0 0 {_W} {_H}" role="img" aria-label="probability over time">',
             f'<rect x="{_PAD}" y="{_PAD}" width="{_W - 2 * _PAD}" height="{_H - 2 * _PAD}" '
             'fill="none" stroke="#999"/>']
    for frac in (0.0, 0.5, 1.0):
        y = _H - _PAD - frac * (_H - 2 * _PAD)
        parts.append(f'<text x="4" y="{y + 4:.0f}" font-size="10">{100 * frac:.0f} %</text>')
    step = next(m for m in (5, 10, 15, 20, 30, 60, 120, 240, 600) if x_max / m <= 8)
    for t in np.arange(0.0, x_max + 1e-9, step):
        x = _PAD + t / x_max * (_W - 2 * _PAD)
        parts.append(f'<text x="{x - 8:.0f}" y="{_H - 18}" font-size="10">{t:.0f}</text>')
    parts.append(f'<text x="{_W / 2 - 60:.0f}" y="{_H - 4}" font-size="10">'
                 'minutes after the burial</text>')
    parts.append(_polyline(burial, c["pod"].values, x_max, "#1f5fa8"))
    parts.append(_polyline(burial, c["pod_probe_line"].values, x_max, "#2f855a", "6,4"))
    parts.append(_polyline(table_m, table_f, x_max, "#c2410c", "2,3"))
    for t, f in zip(table_m, table_f, strict=True):  # the sourced points; lines between
        parts.append(f'<circle cx="{_PAD + t / x_max * (_W - 2 * _PAD):.1f}" '
                     f'cy="{_H - _PAD - f * (_H - 2 * _PAD):.1f}" r="3" fill="#c2410c"/>')
    parts.append('<text x="44" y="30" font-size="10" fill="#1f5fa8">radar plan: found</text>'
                 '<text x="170" y="30" font-size="10" fill="#2f855a">probe line: found</text>'
                 f'<text x="300" y="30" font-size="10" fill="#c2410c">survival '
                 f'({html.escape(plan.survival.name)})</text>')
    parts.append("</svg>")
    return "".join(parts)


def plan_html(plan: SearchPlan, *, scenario_name: str,
              comparison: Sequence[Sequence[str]]) -> str:
    """The printable plan as one HTML page.

    Parameters
    ----------
    plan : SearchPlan
    scenario_name : str
        Name of the radar design (scenario) the plan was made with.
    comparison : sequence of rows
        Table rows (first row: the headings), already formatted as text.
    """
    when = datetime.datetime.now(datetime.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    cov = plan.coverage
    pf = plan.platform
    head, *rows = comparison
    table = ("<table><tr>" + "".join(f"<th>{html.escape(h)}</th>" for h in head) + "</tr>"
             + "".join("<tr>" + "".join(f"<td>{html.escape(v)}</td>" for v in r) + "</tr>"
                       for r in rows) + "</table>")
    sentences = "".join(f"<li>{html.escape(s)}</li>" for s in plan.summary)
    cautions = "".join(f"<li>{html.escape(s)}</li>" for s in PLAN_CAUTIONS[1:])
    sources = "".join(f"<li>{html.escape(s)}</li>" for s in (
        f"Survival: {plan.survival.citation}; points and their provenance in "
        "snowprobe_widgets.burial_statistics.",
        f"Burial depth: {plan.depths.source}.",
        f"Lateral range: {plan.lateral.source}.",
        "Search theory: Koopman, Search and Screening (1946; 1980); Washburn, Search and "
        "Detection (2002).",
        "ICAR 2006 guideline for new search systems: 100 m2/min, at least one measurement "
        "and one result per second.",
        *pf.sources))
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<title>Radar search plan: {html.escape(scenario_name)}</title>
<style>
body {{ font-family: sans-serif; font-size: 11pt; max-width: 48em; margin: 1em auto;
       color: #1b1b1b; }}
h1 {{ font-size: 15pt; margin: 0 0 4px; }} h2 {{ font-size: 12pt; margin: 10px 0 4px; }}
table {{ border-collapse: collapse; font-size: 10pt; }}
td, th {{ border: 1px solid #bbb; padding: 2px 6px; text-align: left; }}
.caution {{ background: #fff8e1; border: 1px solid #e0b84c; padding: 6px 10px; }}
ul {{ margin: 2px 0 2px 1.2em; padding: 0; }} small {{ color: #555; }}
@page {{ margin: 12mm; }}
@media print {{ body {{ margin: 0; max-width: none; font-size: 8pt; }}
  table, small {{ font-size: 7.5pt; }} h2 {{ margin: 5px 0 2px; }} p {{ margin: 3px 0; }} }}
</style></head><body>
<h1>Radar search plan: {html.escape(scenario_name)}</h1>
<div class="caution"><b>Caution.</b> {html.escape(CAUTION_TEXT)}<ul>{cautions}</ul></div>
<h2>The plan</h2>
<p>{html.escape(plan.area.label)} ({cov.area_m2:.0f} m2), {html.escape(pf.name)} at
{pf.antenna_height_m:g} m and {pf.speed_m_s:g} m/s, lanes {plan.spacing_m:g} m apart; search
starts {plan.arrival_min:g} min after the burial, digging out takes {plan.dig_min:g} min.</p>
<ul>{sentences}</ul>
<h2>Finding the person and survival</h2>
{chart_svg(plan)}
<p><small>Blue: chance the radar plan has found the person; green: the probe line; orange
dots: the published survival points, the dotted line between them interpolated.</small></p>
<h2>Side by side</h2>
{table}
<h2>Sources</h2>
<ul><small>{sources}</small></ul>
<p><small>Written by snowprobe_widgets {html.escape(__version__)} on {when}.</small></p>
</body></html>
"""


def comparison_rows(plans: Sequence[tuple[str, SearchPlan]], probe_plan: SearchPlan
                    ) -> list[list[str]]:
    """Rows of the side-by-side table: each radar plan, then the probe line."""
    def pct(x: Any) -> str:
        return "-" if x is None else f"{100 * float(x):.0f} %"

    rows = [["means", "time to cover", "rate", "ICAR 2006", "found by the end",
             "found alive"]]
    for label, p in plans:
        cov = p.coverage
        rows.append([label, f"{cov.time_s / 60:.0f} min", f"{cov.rate_m2_min:.0f} m2/min",
                     "pass" if cov.icar_ok else "fail", pct(p.pod), pct(p.found_alive)])
    probes = probe_plan.probe_line
    area = probe_plan.coverage.area_m2
    t_all = (probes.pass_time_s(area, False) + probes.pass_time_s(area, True)) / 60.0
    c = probe_plan.curves
    radar_min = probe_plan.coverage.time_s / 60.0
    in_time = float(np.interp(radar_min, c["minute"].values, c["pod_probe_line"].values))
    rows.append([f"probe line of {probes.team_size} (two passes)", f"{t_all:.0f} min",
                 f"{probes.rate_m2_min(False):.0f} m2/min (first pass)", "-",
                 f"{pct(in_time)} in the radar's {radar_min:.0f} min",
                 pct(probe_plan.probe_found_alive)
                 + (f" ({pct(probe_plan.probe_beyond_table)} of finds past the table)"
                    if probe_plan.probe_beyond_table > 0.005 else "")])
    return rows
