"""A radargram on screen: palette-PNG picture on bqplot axes, markers, and a trace picker.

The picture is a bqplot ``Image`` mark fed an 8-bit palette PNG. That mark redraws only
when its ``image`` trait receives *another* ``ipywidgets.Image``, so the view keeps two and
alternates: an update writes the new PNG into the one not shown, then hands it to the mark
(two messages; no widget is made or closed per update, which costs the browser a model's
creation and removal each time). Both share one ``Layout``. The figure, scales and axes
are built once.

Display units only live here: positions in m, two-way time in ns (increasing downward),
depth in m on an optional right-hand axis.
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

import bqplot
import ipywidgets as widgets
import numpy as np
import traitlets

from snowprobe_widgets._validate import check_range
from snowprobe_widgets.cautions import CAUTION_SHORT
from snowprobe_widgets.constants import C0_M_S
from snowprobe_widgets.radargram import Radargram
from snowprobe_widgets.widgets.palette_png import (
    COLOUR_MAP_KINDS,
    COLOUR_MAPS,
    colour_map,
    encode_palette_png,
    scale_to_index,
)

#: CSS class of the status line; browser tests wait on its ``draws=N`` text.
STATUS_CLASS: str = "sp-radargram-status"

TIME_LABEL: str = "two-way time (ns)"
POSITION_LABEL: str = "position along line (m)"
DEPTH_LABEL: str = "depth below surface (m)"

_S_TO_NS: float = 1e9
_CLIP_MIN_PERCENT: float = 50.0
_CLIP_MAX_PERCENT: float = 100.0


def _extent(centres: np.ndarray, lone_half_width: float) -> tuple[float, float]:
    """Outer edges of a row of equally spaced pixel centres (half a step beyond each end)."""
    if centres.size == 0:
        return -lone_half_width, lone_half_width
    first, last = float(centres[0]), float(centres[-1])
    half = 0.5 * (last - first) / (centres.size - 1) if centres.size > 1 else 0.0
    if not half > 0.0:
        half = lone_half_width
    return first - half, last + half


def colour_range(data: np.ndarray, clip_percent: float, kind: str) -> tuple[float, float]:
    """Values drawn with the first and last colour of a map.

    Parameters
    ----------
    data : ndarray
        Values to draw (finite; a radargram's data).
    clip_percent : float
        Percentile, 50..100, that reaches the end colours; larger values saturate less.
    kind : str
        ``"diverging"``: symmetric ``(-v, v)`` with ``v`` the ``clip_percent`` percentile of
        ``|data|``. ``"sequential"``: the ``100 - clip_percent`` and ``clip_percent``
        percentiles of ``data``.

    Returns
    -------
    (vmin, vmax) : tuple of float
        Finite with ``vmin < vmax``, also for all-zero or constant data (a constant is
        drawn with the middle colour of a diverging map and the first of a sequential one).
    """
    p = check_range("clip_percent", clip_percent, _CLIP_MIN_PERCENT, _CLIP_MAX_PERCENT,
                    unit="%")
    a = np.asarray(data, dtype=float).ravel()
    if a.size == 0:
        return -1.0, 1.0
    if kind == "diverging":
        magnitude = np.abs(a)  # a fresh array, so it may be partitioned in place
        v = _percentiles(magnitude, (p,))[0]
        if not v > 0.0:  # most samples are zero: fall back on the largest magnitude
            v = float(np.max(magnitude))
        if not (v > 0.0 and np.isfinite(v)):
            v = 1.0
        return -v, v
    lo, hi = _percentiles(a.copy(), (100.0 - p, p))
    if not hi > lo:
        lo, hi = float(np.min(a)), float(np.max(a))
    if not hi > lo:  # constant data: draw it with the first colour
        span = max(abs(lo), 1.0)
        lo, hi = (lo, lo + span) if np.isfinite(lo + span) else (lo - span, lo)
    return lo, hi


def _percentiles(scratch: np.ndarray, percents: tuple[float, ...]) -> list[float]:
    """Percentiles with numpy's default linear interpolation, partitioning ``scratch``.

    One in-place ``partition`` instead of ``np.percentile``'s private copy: about half the
    time for a 256 x 512 section (see tests/benchmarks/bench_radargram_view.py).
    """
    n = scratch.size
    ranks = [q / 100.0 * (n - 1) for q in percents]
    lows = [int(np.floor(r)) for r in ranks]
    kth = sorted({k for low in lows for k in (low, min(low + 1, n - 1))})
    scratch.partition(kth)
    out = []
    for r, low in zip(ranks, lows, strict=True):
        a, b = float(scratch[low]), float(scratch[min(low + 1, n - 1)])
        out.append(a + (r - low) * (b - a))
    return out


class RadargramView(widgets.VBox):
    """Show a :class:`~snowprobe_widgets.radargram.Radargram` with axes, markers and a picker.

    Parameters
    ----------
    radargram : Radargram or None
        Section to show first (``None``: an empty picture until one is assigned).
    colour_map_name : str
        One of :data:`~snowprobe_widgets.widgets.palette_png.COLOUR_MAPS`.
    clip_percent : float
        Percentile of the amplitudes that reaches the end colours, 50..100.
    show_truth : bool
        Show what is really buried (the radargram's ``truth`` markers).
    height_px : int
        Height of the figure, pixels.
    png_compress_level : int
        zlib level of the picture, 0..9. Level 1 encodes a smooth 256 x 512 section about
        3x faster than level 6 for ~50 % more bytes, and noise costs the same at any level
        (tests/benchmarks/bench_radargram_view.py); raise it when serving over a slow link.

    Notes
    -----
    Assigning ``view.radargram = rg`` redraws the picture, the axes ranges and the truth
    markers in place (assigning ``None`` keeps the last picture). Clicking the picture
    sets :attr:`picked_position_m` (snapped to the nearest trace) and
    :attr:`picked_trace_index`; other views observe those traits.
    """

    radargram = traitlets.Instance(Radargram, allow_none=True,
                                   help="The section on screen; assign to redraw.")
    picked_position_m = traitlets.Float(None, allow_none=True,
                                        help="Position of the trace last picked, m.")
    picked_trace_index = traitlets.Int(None, allow_none=True,
                                       help="Index of the trace last picked.")

    def __init__(self, radargram: Radargram | None = None, *,
                 colour_map_name: str = "frost_ember", clip_percent: float = 99.0,
                 show_truth: bool = True, height_px: int = 420, png_compress_level: int = 1,
                 **kwargs: Any) -> None:
        colour_map(colour_map_name)
        check_range("clip_percent", clip_percent, _CLIP_MIN_PERCENT, _CLIP_MAX_PERCENT,
                    unit="%")
        check_range("height_px", height_px, 100, 4000, unit="px")
        self._png_level = int(check_range("png_compress_level", png_compress_level, 0, 9))
        self._draws = 0
        self._depth_params: tuple[float, float] | None = None
        self._range: tuple[float, float] = (-1.0, 1.0)
        self._image_layout = widgets.Layout()
        #: the two pictures the mark alternates between (see the module notes)
        self._images = (self._blank_image(colour_map_name), self._blank_image(colour_map_name))

        self._x_scale = bqplot.LinearScale(min=0.0, max=1.0)
        self._t_scale = bqplot.LinearScale(min=0.0, max=1.0, reverse=True)
        self._d_scale = bqplot.LinearScale(min=0.0, max=1.0, reverse=True)
        scales = {"x": self._x_scale, "y": self._t_scale}

        self._image_mark = bqplot.Image(
            image=self._images[0], scales=scales, x=[0.0, 1.0], y=[1.0, 0.0])
        self._image_mark.on_element_click(self._on_image_click)
        self._truth_mark = bqplot.Scatter(
            x=np.zeros(0), y=np.zeros(0), names=[], display_names=True, scales=scales,
            marker="diamond", colors=["#1b9e3e"], stroke="white", default_size=90,
            visible=show_truth)
        self._detection_mark = bqplot.Scatter(
            x=np.zeros(0), y=np.zeros(0), names=[], display_names=True, scales=scales,
            marker="cross", colors=["#e6c619"], stroke="black", default_size=90)
        self._pick_mark = bqplot.Lines(
            x=[0.0, 0.0], y=[0.0, 1.0], scales=scales, colors=["#e0119d"],
            stroke_width=1.5, line_style="dashed", visible=False)

        self._depth_axis = bqplot.Axis(
            scale=self._d_scale, side="right", label=DEPTH_LABEL,
            label_offset="40px", grid_lines="none", visible=False)
        axes = [
            bqplot.Axis(scale=self._x_scale, label=POSITION_LABEL, grid_lines="none"),
            bqplot.Axis(scale=self._t_scale, side="left",
                        label=TIME_LABEL, label_offset="45px", grid_lines="none"),
            self._depth_axis,
        ]
        self.figure = bqplot.Figure(
            marks=[self._image_mark, self._pick_mark, self._truth_mark,
                   self._detection_mark],
            axes=axes, padding_x=0.0, padding_y=0.0,
            fig_margin={"top": 20, "bottom": 50, "left": 70, "right": 70},
            layout=widgets.Layout(width="100%", height=f"{int(height_px)}px"))

        self.colour_dropdown = widgets.Dropdown(
            options=list(COLOUR_MAPS), value=colour_map_name, description="colours")
        self.clip_slider = widgets.FloatSlider(
            value=float(clip_percent), min=_CLIP_MIN_PERCENT, max=_CLIP_MAX_PERCENT,
            step=0.5, description="clip (%)", continuous_update=False,
            tooltip="percentile of the amplitudes that reaches the end colours")
        self.truth_toggle = widgets.Checkbox(
            value=bool(show_truth), description="show buried objects", indent=False)
        self.status = widgets.HTML(value=self._status_text())
        self.status.add_class(STATUS_CLASS)
        caution = widgets.HTML(value=f"<small>{CAUTION_SHORT}</small>")

        self.colour_dropdown.observe(self._on_colour_control, names="value")
        self.clip_slider.observe(self._on_colour_control, names="value")
        self.truth_toggle.observe(self._on_truth_toggle, names="value")

        controls = widgets.HBox([self.colour_dropdown, self.clip_slider, self.truth_toggle])
        super().__init__(children=[controls, self.figure, self.status, caution], **kwargs)
        if radargram is not None:
            self.radargram = radargram

    # ------------------------------------------------------------------ public API
    @property
    def draws(self) -> int:
        """Number of picture updates so far."""
        return self._draws

    @property
    def colour_range(self) -> tuple[float, float]:
        """Values drawn with the first and last colour in the current picture."""
        return self._range

    @property
    def image_mark(self) -> bqplot.Image:
        """The bqplot mark holding the picture."""
        return self._image_mark

    @property
    def truth_mark(self) -> bqplot.Scatter:
        """The bqplot mark of the truth markers."""
        return self._truth_mark

    @property
    def detection_mark(self) -> bqplot.Scatter:
        """The bqplot mark of the detections."""
        return self._detection_mark

    @property
    def depth_scale(self) -> bqplot.LinearScale:
        """Scale of the right-hand depth axis (m), aligned to the time scale."""
        return self._d_scale

    @property
    def time_scale(self) -> bqplot.LinearScale:
        """Scale of the time axis (ns)."""
        return self._t_scale

    @property
    def position_scale(self) -> bqplot.LinearScale:
        """Scale of the position axis (m)."""
        return self._x_scale

    def set_depth_axis(self, surface_time_s: float, velocity_m_s: float) -> None:
        """Show depth below the surface on a right-hand axis aligned to the time axis.

        Parameters
        ----------
        surface_time_s : float
            Two-way time of the snow surface reflection, s (depth zero).
        velocity_m_s : float
            Wave speed in the snow, m/s, in (0, c0]. Depth is taken as
            ``velocity_m_s * (t - surface_time_s) / 2`` (one speed for the whole column).
        """
        t0 = check_range("surface_time_s", surface_time_s, -1e-3, 1e-3, unit="s")
        v = check_range("velocity_m_s", velocity_m_s, 0.0, C0_M_S, unit="m/s",
                        low_open=True)
        self._depth_params = (t0, v)
        self._update_depth_scale()
        self._depth_axis.visible = True

    def clear_depth_axis(self) -> None:
        """Hide the depth axis."""
        self._depth_params = None
        self._depth_axis.visible = False

    def set_detections(self, detections: Iterable[tuple[float, float, str]]) -> None:
        """Draw detections as markers (an empty list clears them).

        Parameters
        ----------
        detections : iterable of (position_m, time_s, label)
            Along-line position (m), two-way time (s) and the text shown beside each.
        """
        xs, ts, labels = [], [], []
        for i, item in enumerate(detections):
            try:
                position_m, time_s, label = item
            except (TypeError, ValueError):
                raise ValueError(
                    f"detections[{i}] = {item!r} is not a (position_m, time_s, label) triple"
                ) from None
            xs.append(check_range(f"detections[{i}].position_m", position_m, unit="m"))
            ts.append(check_range(f"detections[{i}].time_s", time_s, unit="s"))
            labels.append(str(label))
        with self._detection_mark.hold_sync():
            self._detection_mark.x = np.asarray(xs, dtype=float)
            self._detection_mark.y = np.asarray(ts, dtype=float) * _S_TO_NS
            self._detection_mark.names = labels

    def pick_position(self, position_m: float) -> None:
        """Pick the trace nearest ``position_m`` (as a click on the picture does)."""
        x = check_range("position_m", position_m, unit="m")
        rg = self.radargram
        if rg is None or rg.position_m.size == 0:
            return
        i = int(np.argmin(np.abs(rg.position_m - x)))
        picked = float(rg.position_m[i])
        with self._pick_mark.hold_sync():
            self._pick_mark.x = [picked, picked]
            self._pick_mark.y = [self._t_scale.min, self._t_scale.max]
            self._pick_mark.visible = True
        with self.hold_trait_notifications():
            self.picked_trace_index = i
            self.picked_position_m = picked

    # ------------------------------------------------------------------ drawing
    def _blank_image(self, name: str) -> widgets.Image:
        pal = colour_map(name)
        png = encode_palette_png(np.full((1, 1), 128, dtype=np.uint8), pal)
        return widgets.Image(value=png, format="png", layout=self._image_layout)

    def _status_text(self) -> str:
        rg = self.radargram
        shape = "no radargram" if rg is None else (
            f"{rg.data.shape[0]} samples x {rg.data.shape[1]} traces")
        lo, hi = self._range
        return (f"draws={self._draws} | {shape} | colour range [{lo:.3g}, {hi:.3g}]")

    @traitlets.observe("radargram")
    def _on_radargram(self, change: dict[str, Any]) -> None:
        rg = change["new"]
        if rg is None:
            return
        x_lo, x_hi = _extent(rg.position_m, 0.5)
        t_lo, t_hi = _extent(rg.time_s * _S_TO_NS, 0.5)
        with self._x_scale.hold_sync():
            self._x_scale.min, self._x_scale.max = x_lo, x_hi
        with self._t_scale.hold_sync():
            self._t_scale.min, self._t_scale.max = t_lo, t_hi
        self._update_depth_scale()
        self._draw_picture(extent=((x_lo, x_hi), (t_hi, t_lo)))  # the picture's message first
        self._update_truth(rg)
        if self.picked_position_m is not None:
            self.pick_position(self.picked_position_m)

    def _draw_picture(self, extent: tuple[tuple[float, float], tuple[float, float]] | None
                      = None) -> None:
        rg = self.radargram
        if rg is None:
            return
        name = self.colour_dropdown.value
        self._range = colour_range(rg.data, self.clip_slider.value, COLOUR_MAP_KINDS[name])
        png = encode_palette_png(scale_to_index(rg.data, *self._range), colour_map(name),
                                 compress_level=self._png_level)
        spare = self._images[1] if self._image_mark.image is self._images[0] \
            else self._images[0]
        spare.value = png  # not on screen: the browser only stores it
        with self._image_mark.hold_sync():
            self._image_mark.image = spare
            if extent is not None:
                self._image_mark.x, self._image_mark.y = extent
        self._draws += 1
        self.status.value = self._status_text()

    def _update_truth(self, rg: Radargram) -> None:
        truth = rg.truth
        with self._truth_mark.hold_sync():
            self._truth_mark.x = np.array([m.position_m for m in truth], dtype=float)
            self._truth_mark.y = np.array([m.apex_time_s for m in truth],
                                          dtype=float) * _S_TO_NS
            self._truth_mark.names = [m.label or m.kind for m in truth]

    def _update_depth_scale(self) -> None:
        if self._depth_params is None:
            return
        t0_s, v_m_s = self._depth_params
        d_lo, d_hi = (0.5 * v_m_s * (t_ns / _S_TO_NS - t0_s)
                      for t_ns in (self._t_scale.min, self._t_scale.max))
        with self._d_scale.hold_sync():
            self._d_scale.min, self._d_scale.max = d_lo, d_hi

    # ------------------------------------------------------------------ callbacks
    def _on_colour_control(self, change: dict[str, Any]) -> None:
        self._draw_picture()

    def _on_truth_toggle(self, change: dict[str, Any]) -> None:
        self._truth_mark.visible = bool(change["new"])

    def _on_image_click(self, mark: bqplot.Image, content: dict[str, Any]) -> None:
        try:
            x = float(content["data"]["click_x"])
        except (KeyError, TypeError, ValueError):
            return
        if np.isfinite(x):
            self.pick_position(x)


__all__ = [
    "DEPTH_LABEL",
    "POSITION_LABEL",
    "STATUS_CLASS",
    "TIME_LABEL",
    "RadargramView",
    "colour_range",
]
