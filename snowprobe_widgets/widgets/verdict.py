"""Verdict cards and the link-budget table, as a search lead reads them (no physics here).

The cards and the table only display :class:`~snowprobe_widgets.budget.LinkBudget`
objects: whether a person is likely visible and every condition that overrules it come
from the model (``LinkBudget.likely_visible``, ``LinkBudget.warnings``).
"""

from __future__ import annotations

import html
from typing import Any

import ipywidgets as widgets

#: CSS class of the verdict card row (browser tests find it by this class).
VERDICT_CLASS: str = "sp-verdict"

_COLOURS = {"yes": ("#1e6b34", "#eaf6ec"), "maybe": ("#8a5a00", "#fff6e0"),
            "no": ("#8a1c1c", "#fdeeee"), "none": ("#555", "#f3f3f3")}
#: Plain words for budget terms whose own name is a term of art.
_PLAIN_TERMS = {
    "spectral shaping": ("pulse and target across the band",
                         "the echo's peak over the whole pulse band (the snow spreads the "
                         "pulse a little and the body reflects some frequencies better), "
                         "against the one-frequency figures above"),
}
_NOISE_TERM = "receiver noise after stacking"
#: Budget rows compared with the current settings: term -> (setting, what it is called).
_NEEDED = {"trace spacing needed": "trace spacing", "time window needed": "time window"}


def call_of(budget: Any) -> tuple[str, str]:
    """The card's verdict words and its tone ("yes", "maybe", "no") for ``budget``."""
    if budget.likely_visible:
        return "likely visible", "yes"
    if budget.echo_to_noise_db < budget.threshold_db:
        return "unlikely to be visible", "no"
    if budget.warnings:
        return "not likely visible as set up", "no"
    return "above the noise, but may hide in the debris clutter", "maybe"


def card_sentence(budget: Any, name: str) -> str:
    """"Person 1, 1.5 m down: echo 24 dB above noise and 18 dB above clutter: likely
    visible" for ``budget`` of the person called ``name``."""
    enr, ecr = budget.echo_to_noise_db, budget.echo_to_clutter_db
    noise = f"{abs(enr):.0f} dB {'above' if enr >= 0 else 'below'} noise"
    row = _find(budget, "clutter level")
    if row is not None and row.value <= -100.0:
        clutter = "no debris clutter"
    else:
        clutter = f"{abs(ecr):.0f} dB {'above' if ecr >= 0 else 'below'} clutter"
    return (f"{name}, {budget.target_depth_m:.1f} m down: echo {noise} and {clutter}: "
            f"{call_of(budget)[0]}")


def _find(budget: Any, term: str) -> Any:
    for r in budget.rows:
        if r.term == term:
            return r
    return None


def person_name(scenario: Any, index: int) -> str:
    """What the screen calls buried person ``index``: its label, else "Person n"."""
    label = scenario.persons[index].label
    return label[:1].upper() + label[1:] if label else f"Person {index + 1}"


def cards_html(scenario: Any, budgets: list[Any], problems: list[str]) -> str:
    """The verdict cards: one per buried person, with the conditions that overrule it."""
    if not scenario.persons:
        return _card("Nobody is buried in this scenario: add a person to get a verdict.",
                     [], "none")
    out = []
    for i, (budget, problem) in enumerate(zip(budgets, problems, strict=True)):
        name = person_name(scenario, i)
        if budget is None:
            out.append(_card(f"{name}: no verdict. {problem}", [], "none"))
            continue
        out.append(_card(card_sentence(budget, name), list(budget.warnings), call_of(budget)[1]))
    return ("<div style='display:flex;flex-wrap:wrap;gap:6px;margin:4px 0'>"
            + "".join(out) + "</div>")


def _card(sentence: str, warnings: list[str], tone: str) -> str:
    ink, paper = _COLOURS[tone]
    items = "".join(f"<li>{html.escape(w)}</li>" for w in warnings)
    more = f"<ul style='margin:2px 0 0 18px;padding:0'>{items}</ul>" if items else ""
    return (f"<div class='sp-verdict-card sp-verdict-{tone}' style='flex:1 1 320px;"
            f"max-width:100%;box-sizing:border-box;border-left:5px solid {ink};"
            f"background:{paper};color:#1b1b1b;padding:4px 8px;line-height:1.35'>"
            f"<b style='color:{ink}'>{html.escape(sentence)}</b>{more}</div>")


class VerdictCards(widgets.HTML):
    """The row of verdict cards (class :data:`VERDICT_CLASS`)."""

    def __init__(self, **kwargs: Any) -> None:
        super().__init__(**kwargs)
        self.add_class(VERDICT_CLASS)

    def show(self, scenario: Any, budgets: list[Any], problems: list[str]) -> None:
        """Show one card per person (``budgets[i]`` None with ``problems[i]`` the reason)."""
        self.value = cards_html(scenario, budgets, problems)


# --------------------------------------------------------------------------- table
def engineering(value: float, unit: str) -> str:
    """A budget value rounded as engineers read it: dB to 0.1, short lengths in cm,
    times in ns to 0.1 ("-0.001173 dB" reads "0.0 dB")."""
    if unit in ("dB", "dBm"):
        text = f"{value:.1f}"
        return f"{'0.0' if text == '-0.0' else text} {unit}"
    if unit == "m":
        return f"{100 * value:.1f} cm" if abs(value) < 1.0 else f"{value:.2f} m"
    if unit == "ns":
        return f"{value:.1f} ns"
    return f"{value:.3g} {unit}"


def _row_cells(budget: Any, row: Any, scenario: Any) -> tuple[str, str, str, str]:
    term, explanation = _PLAIN_TERMS.get(row.term, (row.term, row.explanation))
    value = engineering(row.value, row.unit)
    if row.term == _NOISE_TERM:
        # the budget adds it with a minus sign; the table shows the noise power itself
        value = engineering(-row.value, row.unit)
        explanation = f"{row.explanation}; subtracted from the transmit power"
    if row.term == "deepest detectable burial" and \
            getattr(budget, "depth_limited_by", "") == "search limit":
        value = f"{row.value:.0f} m or more"
        explanation = f"{row.explanation}: deeper was not evaluated"
    flag = ""
    if scenario is not None and row.term in _NEEDED:
        have = (scenario.survey.trace_spacing_m if row.term == "trace spacing needed"
                else scenario.radar.time_window_s * 1e9)
        met = have <= row.value if row.term == "trace spacing needed" else have >= row.value
        shown = engineering(have, row.unit)
        flag = (f"set: {shown}, met" if met else
                f"<b style='color:#8a1c1c'>set: {shown}, NOT met</b>")
    return html.escape(term), value, html.escape(explanation), flag


def budget_table_html(budget: Any, scenario: Any = None) -> str:
    """The budget rows as an HTML table: term, value (rounded), what it means, and for the
    "needed" rows the current setting, flagged when it does not meet the need."""
    rows = []
    for r in budget.rows:
        term, value, explanation, flag = _row_cells(budget, r, scenario)
        rows.append(f"<tr><td>{term}</td><td style='text-align:right;white-space:nowrap'>"
                    f"{value}</td><td>{explanation}</td><td>{flag}</td></tr>")
    return ("<table class='sp-budget-table' style='border-collapse:collapse' cellpadding='3' "
            "border='1'><tr><th>term</th><th>value</th><th>what it means</th>"
            "<th>your setting</th></tr>" + "".join(rows) + "</table>")


__all__ = ["VERDICT_CLASS", "VerdictCards", "budget_table_html", "call_of", "card_sentence",
           "cards_html", "engineering", "person_name"]
