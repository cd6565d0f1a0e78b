"""Small pieces shared by the widget modules: labelled controls, message lines, cautions.

Nothing here computes physics; these helpers only build ipywidgets and format text.
"""

from __future__ import annotations

import html
from collections.abc import Callable
from typing import Any

import ipywidgets as widgets
import numpy as np

from snowprobe_widgets.cautions import CAUTION_SHORT, CAUTION_TEXT

#: CSS class of every "this combination was refused" message line.
MESSAGE_CLASS: str = "sp-message"
#: CSS class of the caution boxes.
CAUTION_CLASS: str = "sp-caution"

_DESCRIPTION_STYLE = {"description_width": "150px"}
_SLIDER_LAYOUT = {"width": "380px"}


def float_slider(description: str, value: float, low: float, high: float, step: float, *,
                 readout_format: str = ".2f", heavy: bool = True,
                 tooltip: str = "") -> widgets.FloatSlider:
    """A float slider whose description carries its unit, e.g. ``"depth (m)"``.

    ``heavy`` sliders send their value only when released (``continuous_update=False``):
    the last position always wins and no intermediate drag positions queue up.
    """
    return widgets.FloatSlider(
        value=float(np.clip(value, low, high)), min=low, max=high, step=step,
        description=description, readout_format=readout_format,
        continuous_update=not heavy, style=_DESCRIPTION_STYLE,
        layout=widgets.Layout(**_SLIDER_LAYOUT), tooltip=tooltip)


def log_slider(description: str, value: float, low: float, high: float, *,
               readout_format: str = ".3g", tooltip: str = "") -> widgets.FloatLogSlider:
    """A log-scale slider (released-only updates), ``low``/``high`` as plain values."""
    return widgets.FloatLogSlider(
        value=float(np.clip(value, low, high)), base=10.0, min=float(np.log10(low)),
        max=float(np.log10(high)), step=0.01, description=description,
        readout_format=readout_format, continuous_update=False, style=_DESCRIPTION_STYLE,
        layout=widgets.Layout(**_SLIDER_LAYOUT), tooltip=tooltip)


def int_slider(description: str, value: int, low: int, high: int, step: int = 1, *,
               tooltip: str = "") -> widgets.IntSlider:
    """An integer slider, released-only updates."""
    return widgets.IntSlider(
        value=int(np.clip(value, low, high)), min=low, max=high, step=step,
        description=description, continuous_update=False, style=_DESCRIPTION_STYLE,
        layout=widgets.Layout(**_SLIDER_LAYOUT), tooltip=tooltip)


def dropdown(description: str, options: Any, value: Any) -> widgets.Dropdown:
    """A dropdown with the shared description width."""
    return widgets.Dropdown(options=options, value=value, description=description,
                            style=_DESCRIPTION_STYLE, layout=widgets.Layout(width="380px"))


def message_line() -> widgets.HTML:
    """An initially empty line for plain-language refusals (class :data:`MESSAGE_CLASS`)."""
    line = widgets.HTML(value="")
    line.add_class(MESSAGE_CLASS)
    return line


def show_message(line: widgets.HTML, text: str) -> None:
    """Show ``text`` (escaped) in a message line; an empty text clears it."""
    if not text:
        line.value = ""
        return
    line.value = (f"<div style='color:#8a1c1c;background:#fff3f0;padding:4px 8px;"
                  f"border-left:3px solid #c0392b'>{html.escape(text)}</div>")


def message_text(line: widgets.HTML) -> str:
    """The plain text shown in a message line ('' when clear)."""
    value = line.value
    if not value:
        return ""
    inner = value.split(">", 1)[1].rsplit("<", 1)[0]
    return html.unescape(inner)


def caution_box(long: bool = True) -> widgets.HTML:
    """The package's caution, in a tinted box (class :data:`CAUTION_CLASS`)."""
    text = CAUTION_TEXT if long else CAUTION_SHORT
    box = widgets.HTML(value=(
        "<div style='background:#fff8e1;border:1px solid #e0b84c;padding:6px 10px;"
        f"font-size:90%'><b>Caution.</b> {html.escape(text)}</div>"))
    box.add_class(CAUTION_CLASS)
    return box


def guarded(line: widgets.HTML, action: Callable[[], Any]) -> bool:
    """Run ``action``; a ValueError is shown in ``line`` instead of raised.

    Returns True when the action succeeded (and clears the line), False when refused.
    """
    try:
        action()
    except ValueError as exc:
        show_message(line, str(exc))
        return False
    show_message(line, "")
    return True


def as_f32(values: Any) -> np.ndarray:
    """Values for the browser: float32, with any non-finite entry replaced by 0."""
    a = np.asarray(values, dtype=np.float32)
    if not np.all(np.isfinite(a)):
        a = np.where(np.isfinite(a), a, np.float32(0.0))
    return a


def section_title(text: str) -> widgets.HTML:
    """A small bold heading."""
    return widgets.HTML(value=f"<b>{html.escape(text)}</b>")


__all__ = [
    "CAUTION_CLASS",
    "MESSAGE_CLASS",
    "as_f32",
    "caution_box",
    "dropdown",
    "float_slider",
    "guarded",
    "int_slider",
    "log_slider",
    "message_line",
    "message_text",
    "section_title",
    "show_message",
]
