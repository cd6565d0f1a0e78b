"""Small pieces shared by the widget modules: labelled controls, message lines, cautions.

Nothing here computes physics; these helpers only build ipywidgets and format text.
"""

from __future__ import annotations

import base64
import html
import logging
import math
from collections.abc import Callable
from typing import Any

import ipywidgets as widgets
import numpy as np
from ipywidgets.widgets.widget_description import DescriptionStyle, DescriptionWidget
from ipywidgets.widgets.widget_string import HTMLStyle

from snowprobe_widgets.cautions import CAUTION_SHORT, CAUTION_TEXT
from snowprobe_widgets.fields import Field, format_parameters, screen_message

#: CSS class of every "this combination was refused" message line.
MESSAGE_CLASS: str = "sp-message"
#: CSS class of the caution boxes.
CAUTION_CLASS: str = "sp-caution"

_DESCRIPTION_WIDTH = "150px"
_CONTROL_WIDTH = "100%"
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
        show_message(line, screen_message(exc))
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


_STACKING_MAX_POWER = 16


def field_control(field: Field, value: Any = None) -> widgets.Widget:
    """The control of a declared field: label with display unit, range, step, tooltip.

    Numbers get a slider (logarithmic where declared) over the hard bounds, or the soft
    bounds when those are fixed; call :func:`set_limits` to follow a scenario. Integers
    with a huge range get a number box, choices a dropdown, booleans a checkbox, named
    settings a text box (``name = value, ...``). The control's ``value`` is in display
    units.
    """
    lo, hi = field.soft_bounds()
    if field.soft is not None and not callable(field.soft):
        lo, hi = max(field.low, field.soft[0]), min(field.high, field.soft[1])
    if field.kind == "choice":
        allowed = list(field.allowed())
        options = [(v.replace("_", " "), v) for v in allowed]
        w: widgets.Widget = dropdown(field.title, options, value if value in allowed
                                     else allowed[0])
        w.tooltip = field.help
        return w
    if field.kind == "boolean":
        w = widgets.Checkbox(value=bool(value), indent=False, description=field.label,
                             tooltip=field.help, layout=_control_layout())
        return w
    if field.kind == "parameters":
        return widgets.Text(value=format_parameters(value or ()), description=field.title,
                            tooltip=field.help, placeholder="name = value, ...",
                            continuous_update=False, layout=_control_layout(),
                            style={"description_width": _DESCRIPTION_WIDTH})
    d_lo, d_hi = field.to_display(lo), field.to_display(hi)
    shown = field.to_display(value) if value is not None else d_lo
    if field.kind == "integer":
        if d_hi - d_lo > 10_000:
            return widgets.BoundedIntText(
                value=int(shown), min=int(d_lo), max=int(d_hi), description=field.title,
                tooltip=field.help, style=_slider_style(), layout=_control_layout())
        return int_slider(field.title, int(shown), int(d_lo), int(d_hi), tooltip=field.help)
    fmt = f".{field.decimals}f"
    if field.log:
        return log_slider(field.title, shown, max(d_lo, 1e-300), d_hi, readout_format=fmt,
                          tooltip=field.help)
    step = field.step or (d_hi - d_lo) / 100
    return float_slider(field.title, shown, d_lo, d_hi, step, readout_format=fmt,
                        tooltip=field.help)


def powers_of_two_control(field: Field, value: int) -> widgets.Dropdown:
    """A dropdown of the powers of two inside an integer field's bounds (stacking)."""
    options = [2**k for k in range(_STACKING_MAX_POWER + 1)
               if field.low <= 2**k <= field.high]
    if value not in options:
        options = sorted(set(options) | {int(value)})
    w = dropdown(field.title, options, int(value))
    w.tooltip = field.help
    return w


def set_limits(control: widgets.Widget, field: Field, low_si: float, high_si: float,
               value_si: float | None = None) -> None:
    """Set a slider's range to ``[low_si, high_si]`` (SI, shown in display units), widened
    to hold ``value_si``; the value is set too when given. Other controls are left alone.
    """
    lo, hi = field.to_display(low_si), field.to_display(high_si)
    if value_si is not None:
        v = field.to_display(value_si)
        lo, hi = min(lo, v), max(hi, v)
    if isinstance(control, widgets.FloatLogSlider):
        lo = max(lo, 1e-300)
        new = (float(np.log10(lo)), float(np.log10(hi)))
    elif isinstance(control, (widgets.FloatSlider, widgets.IntSlider, widgets.BoundedIntText)):
        new = (lo, hi) if isinstance(control, widgets.FloatSlider) else (int(math.floor(lo)),
                                                                         int(math.ceil(hi)))
    else:
        return
    with control.hold_trait_notifications():
        if new[0] > control.max:
            control.max = new[1]
            control.min = new[0]
        else:
            control.min = new[0]
            control.max = new[1]
        if value_si is not None:
            control.value = v if not isinstance(control, (widgets.IntSlider,
                                                           widgets.BoundedIntText)) else int(v)


def section_title(text: str) -> widgets.HTML:
    """A small bold heading."""
    return widgets.HTML(value=f"<b>{html.escape(text)}</b>")


__all__ = [
    "CAUTION_CLASS",
    "MESSAGE_CLASS",
    "as_f32",
    "caution_box",
    "dropdown",
    "field_control",
    "float_slider",
    "guarded",
    "int_slider",
    "log_slider",
    "message_line",
    "message_text",
    "powers_of_two_control",
    "section_title",
    "set_limits",
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


def download_link(payload: str | bytes, filename: str, media_type: str, text: str, *,
                  css_class: str = "sp-download", style: str = "") -> str:
    """An HTML link that saves ``payload`` on the visitor's computer.

    The bytes travel inside the page as a ``data:`` URL: no file is written on the server
    and the page names no server path (what a served dashboard must keep to).

    Parameters
    ----------
    payload : str or bytes
        The file's content; text is encoded as UTF-8.
    filename : str
        The name the browser offers to save under.
    media_type : str
        The data URL's media type, parameters included (``"text/html;charset=utf-8"``).
    text : str
        The link's visible text (escaped here).
    css_class : str
        CSS class of the link.
    style : str
        Inline CSS of the link (empty: none).

    Returns
    -------
    str
        ``<a download=... href=data:... class=...>text</a>``.
    """
    data = payload.encode("utf-8") if isinstance(payload, str) else payload
    href = f"data:{media_type};base64,{base64.b64encode(data).decode('ascii')}"
    styled = f" style='{html.escape(style, quote=True)}'" if style else ""
    return (f"<a download='{html.escape(filename, quote=True)}' href='{href}' "
            f"class='{html.escape(css_class, quote=True)}'{styled}>{html.escape(text)}</a>")
