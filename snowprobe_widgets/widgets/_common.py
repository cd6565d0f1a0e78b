"""Small pieces shared by the widget modules: labelled controls, message lines, cautions.

Nothing here computes physics; these helpers only build ipywidgets and format text.
"""

from __future__ import annotations

import html
import logging
from collections.abc import Callable
from typing import Any

import ipywidgets as widgets
import numpy as np
from ipywidgets.widgets.widget_description import DescriptionStyle, DescriptionWidget
from ipywidgets.widgets.widget_string import HTMLStyle

from snowprobe_widgets.cautions import CAUTION_SHORT, CAUTION_TEXT

#: CSS class of every "this combination was refused" message line.
MESSAGE_CLASS: str = "sp-message"
#: CSS class of the caution boxes.
CAUTION_CLASS: str = "sp-caution"

_DESCRIPTION_WIDTH = "150px"
_CONTROL_WIDTH = "380px"
_SHARED: dict[str, widgets.Widget] = {}


def shared(key: str, factory: Callable[[], widgets.Widget]) -> widgets.Widget:
    """One style or layout model for all controls that look alike.

    Every ipywidgets control otherwise brings its own Layout and Style models; an app of a
    few hundred controls then sends hundreds of extra models to each browser on start-up.
    """
    w = _SHARED.get(key)
    if w is None or w.comm is None:
        w = factory()
        _SHARED[key] = w
    return w


def _slider_style() -> widgets.SliderStyle:
    return shared("slider_style", lambda: widgets.SliderStyle(
        description_width=_DESCRIPTION_WIDTH))


def _control_layout() -> widgets.Layout:
    return shared("control_layout", lambda: widgets.Layout(width=_CONTROL_WIDTH))


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
        continuous_update=not heavy, style=_slider_style(),
        layout=_control_layout(), tooltip=tooltip)


def log_slider(description: str, value: float, low: float, high: float, *,
               readout_format: str = ".3g", tooltip: str = "") -> widgets.FloatLogSlider:
    """A log-scale slider (released-only updates), ``low``/``high`` as plain values."""
    return widgets.FloatLogSlider(
        value=float(np.clip(value, low, high)), base=10.0, min=float(np.log10(low)),
        max=float(np.log10(high)), step=0.01, description=description,
        readout_format=readout_format, continuous_update=False, style=_slider_style(),
        layout=_control_layout(), tooltip=tooltip)


def int_slider(description: str, value: int, low: int, high: int, step: int = 1, *,
               tooltip: str = "") -> widgets.IntSlider:
    """An integer slider, released-only updates."""
    return widgets.IntSlider(
        value=int(np.clip(value, low, high)), min=low, max=high, step=step,
        description=description, continuous_update=False, style=_slider_style(),
        layout=_control_layout(), tooltip=tooltip)


def dropdown(description: str, options: Any, value: Any) -> widgets.Dropdown:
    """A dropdown with the shared description width."""
    style = shared("dropdown_style", lambda: DescriptionStyle(
        description_width=_DESCRIPTION_WIDTH))
    return widgets.Dropdown(options=options, value=value, description=description,
                            style=style, layout=_control_layout())


def message_line() -> widgets.HTML:
    """An initially empty line for plain-language refusals (class :data:`MESSAGE_CLASS`)."""
    line = widgets.HTML(value="", style=shared("html_style", HTMLStyle),
                        layout=shared("html_layout", widgets.Layout))
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


def guarded(line: widgets.HTML, action: Callable[[], Any],
            on_unexpected: Callable[[], Any] | None = None) -> bool:
    """Run ``action``; any exception is shown in ``line`` as a plain message, never raised.

    A ValueError is a refusal: its message (which names the field and the range) is shown
    as it is. A MemoryError says the work needs more memory than this session may use.
    Anything else is a fault: a plain message is shown, the traceback goes to the log
    (the operator's console) and ``on_unexpected`` runs (the caller puts its controls back
    to the last good state there).

    Returns True when the action succeeded (and clears the line), False otherwise.
    """
    try:
        action()
    except ValueError as exc:
        show_message(line, str(exc))
        return False
    except MemoryError:
        show_message(line, "This needs more memory than this session may use: use fewer "
                           "traces (a wider spacing or a shorter line) or fewer samples (a "
                           "shorter time window). The picture shows the last result.")
        return False
    except Exception as exc:
        logging.getLogger("snowprobe_widgets").exception("callback failed")
        show_message(line, f"Something went wrong here ({type(exc).__name__}); the page "
                           "keeps the last good picture and settings.")
        if on_unexpected is not None:
            try:
                on_unexpected()
            except Exception:
                logging.getLogger("snowprobe_widgets").exception("restoring failed")
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


def share_plain_styles(root: widgets.Widget) -> int:
    """Give every widget under ``root`` whose layout or style is still the default one
    the shared default model, and close the models that frees. Returns how many closed.

    Run once after an app is built: fewer models make the first page load lighter (every
    open model is sent to each browser that opens the dashboard).
    """
    seen: set[int] = set()
    holders: list[widgets.Widget] = []
    uses: dict[int, int] = {}

    def walk(w: widgets.Widget) -> None:
        if id(w) in seen:
            return
        seen.add(id(w))
        holders.append(w)
        for name in w.keys:
            value = getattr(w, name, None)
            for x in value if isinstance(value, (list, tuple)) else [value]:
                if isinstance(x, widgets.Widget):
                    uses[id(x)] = uses.get(id(x), 0) + 1
                    walk(x)

    walk(root)
    defaults: dict[type, dict[str, Any]] = {}
    closed = 0
    for w in holders:
        # controls and boxes only: other widgets (images, figures) may keep their layout
        # for later use, and closing it would break them
        if not isinstance(w, (widgets.Box, DescriptionWidget, widgets.Button)):
            continue
        for trait in ("layout", "style"):
            if trait not in w.keys:
                continue
            old = getattr(w, trait, None)
            if not isinstance(old, widgets.Widget) or uses.get(id(old), 0) != 1:
                continue
            if any(old is v for v in _SHARED.values()):
                continue  # already shared, possibly outside this tree
            cls = type(old)
            if cls not in defaults:
                defaults[cls] = _plain_state(cls())
            if _plain_state(old) != defaults[cls]:
                continue
            new = shared(f"plain_{cls.__name__}", cls)
            if new is old:
                continue
            setattr(w, trait, new)
            old.close()
            closed += 1
    return closed


def _plain_state(w: widgets.Widget) -> dict[str, Any]:
    state = w.get_state()
    for key in ("_model_module", "_model_module_version", "_model_name", "_view_count",
                "_view_module", "_view_module_version", "_view_name"):
        state.pop(key, None)
    return state


def set_visible(w: widgets.Widget, visible: bool) -> None:
    """Show or hide ``w``. A widget on a shared layout first gets a layout of its own, so
    that hiding it hides nothing else."""
    if any(w.layout is v for v in _SHARED.values()):
        w.layout = widgets.Layout(**{k: v for k, v in w.layout.get_state().items()
                                     if not k.startswith("_") and v is not None})
    w.layout.display = None if visible else "none"
