"""Short HTML summaries for notebooks (``_repr_html_`` of the scenario and the budget).

Plain strings only: this module imports no user-interface library.
"""

from __future__ import annotations

import html
from typing import Any

__all__ = ["budget_html", "scenario_html"]


def budget_html(budget: Any) -> str:
    """A link budget in a few lines: the verdict, what overrules it, the key numbers."""
    call = "likely visible" if budget.likely_visible else "not likely visible"
    colour = "#1e6b34" if budget.likely_visible else "#8a1c1c"
    warnings = "".join(f"<li>{html.escape(w)}</li>" for w in budget.warnings)
    rows = {r.term: r for r in budget.rows}
    keys = [("echo-to-noise ratio", "{:.1f} dB"), ("echo-to-clutter ratio", "{:.1f} dB"),
            ("deepest detectable burial", "{:.2f} m"), ("footprint radius", "{:.2f} m"),
            ("trace spacing needed", "{:.3f} m"), ("time window needed", "{:.1f} ns")]
    cells = "".join(f"<tr><td>{html.escape(k)}</td><td style='text-align:right'>"
                    f"{fmt.format(rows[k].value)}</td></tr>" for k, fmt in keys if k in rows)
    return (f"<div><b>Link budget of {html.escape(budget.target_label)}</b>, "
            f"{budget.target_depth_m:.2f} m deep: <b style='color:{colour}'>{call}</b> "
            f"at a detection level of {budget.threshold_db:g} dB"
            + (f"<ul>{warnings}</ul>" if warnings else "")
            + f"<table>{cells}</table><small>{len(budget.rows)} rows in all: "
            "<code>budget.rows</code></small></div>")


def scenario_html(scenario: Any) -> str:
    """A scenario in a few lines: snow, buried people and objects, radar, survey line."""
    s = scenario
    snow = s.snowpack
    r, line = s.radar, s.survey
    people = "; ".join(f"{html.escape(p.label or f'person {i + 1}')} {p.depth_m:.2f} m deep at "
                       f"{p.position_m:.2f} m" for i, p in enumerate(s.persons)) or "nobody"
    wet = max(la.lwc_percent for la in snow.layers)
    return (f"<div><b>Scenario {html.escape(s.name or '(unnamed)')}</b><br>"
            f"snow: {snow.depth_m:.2f} m in {len(snow.layers)} layer(s), up to {wet:g} % "
            f"water, {snow.temperature_c:g} °C, over {html.escape(s.ground.kind)}<br>"
            f"buried: {people}; {len(s.objects)} debris object(s)<br>"
            f"radar: {html.escape(r.pulse)} at {r.center_frequency_hz / 1e6:.0f} MHz, antenna "
            f"{r.antenna_height_m:.2f} m up, window {r.time_window_s * 1e9:.1f} ns<br>"
            f"line: {line.start_m:g} to {line.end_m:g} m every "
            f"{100 * line.trace_spacing_m:.1f} cm ({line.n_traces} traces)</div>")
