"""DetectabilityView: detection probability over one or two fields, from Monte Carlo sweeps.

Pick one or two scenario fields and their ranges, an uncertainty preset and the number of
realizations; run with a progress bar and a cancel button; see the map of detection
probability with the contour of a chosen probability and of its Wilson 95 % interval, the
false-alarm rate beside it, and the ROC of the selected cell. Clicking a cell opens one of
its realizations in a :class:`~snowprobe_widgets.widgets.ScenarioExplorer`.

A sweep runs in one worker process (never in the page's kernel), started from a
background thread that only collects results; at most :data:`MAX_SWEEPS_AT_ONCE` sweeps
run at once on this machine (one abstract socket name per slot, so every dashboard
session counts and nothing is written on the server). Moving the detector level re-reads
the recorded margins (:func:`snowprobe_widgets.sweeps.roc`): nothing is simulated again.
"""

from __future__ import annotations

import html
import math
import socket
import sys
import threading
import time
from collections.abc import Callable
from typing import Any

import bqplot
import ipywidgets as widgets
import numpy as np

from snowprobe_widgets import sweeps
from snowprobe_widgets.detection import DEFAULT_THRESHOLD_DB
from snowprobe_widgets.fields import FieldError, check, declaration_at
from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.widgets._common import (
    as_f32,
    caution_box,
    download_link,
    dropdown,
    float_slider,
    int_slider,
    message_line,
    section_title,
    set_visible,
    share_plain_styles,
    show_message,
)
from snowprobe_widgets.widgets.palette_png import colour_map, encode_palette_png, scale_to_index

__all__ = ["DetectabilityView", "SWEEP_FIELDS", "MAX_SWEEPS_AT_ONCE", "STATUS_CLASS",
           "contour_segments"]

#: CSS class of the status line (``draws=N``; browser tests wait on it).
STATUS_CLASS = "sp-detectability-status"
#: Most sweeps running at once on this machine, over every dashboard session.
MAX_SWEEPS_AT_ONCE = 2
#: Most grid cells x realizations one dashboard sweep may ask for.
MAX_DASHBOARD_REALIZATIONS = 20_000

#: Sweepable fields and the range each starts with, in display units. Labels, units,
#: scales, decimals and the allowed ranges come from the field declarations
#: (:mod:`snowprobe_widgets.fields`, the same the design screen uses); the sweep's own
#: checks still refuse a value the base scenario cannot take.
_SWEEP_DEFAULTS: dict[str, tuple[float, float]] = {
    "persons[0].depth_m": (0.3, 1.5),
    "snowpack.layers[*].lwc_percent": (0.0, 6.0),
    "snowpack.layers[*].density_kg_m3": (150.0, 550.0),
    "persons[0].offset_m": (0.0, 1.5),
    "radar.center_frequency_hz": (300.0, 900.0),
    "radar.antenna_height_m": (0.2, 3.0),
    "survey.trace_spacing_m": (2.0, 10.0),
}


def _sweep_label(path: str) -> str:
    f = declaration_at(path)
    every = (", every layer" if path.startswith("snowpack.layers[*]") else
             " of person 1" if path.startswith("persons[0]") else "")
    return f"{f.label}{every} ({f.display_unit})" if f.display_unit else f.label + every


#: Sweepable fields: label on screen -> field path.
SWEEP_FIELDS: dict[str, str] = {_sweep_label(p): p for p in _SWEEP_DEFAULTS}
_NONE = "(none)"
_PRESET_NONE = "none: clutter and noise only"
_NAN_INDEX = 0  # palette entry for a cell with no finished realization (grey)


def contour_segments(z: np.ndarray, x: np.ndarray, y: np.ndarray,
                     level: float) -> np.ndarray:
    """Line segments where the bilinear surface through ``z[iy, ix]`` crosses ``level``.

    Marching squares over every cell of four finite corners (a saddle is joined in edge
    order). Returns an array of shape (n_segments, 2, 2): ``[[x0, y0], [x1, y1]]``.
    """
    z = np.asarray(z, float)
    out = []
    ny, nx = z.shape
    for i in range(ny - 1):
        for j in range(nx - 1):
            corners = ((x[j], y[i], z[i, j]), (x[j + 1], y[i], z[i, j + 1]),
                       (x[j + 1], y[i + 1], z[i + 1, j + 1]), (x[j], y[i + 1], z[i + 1, j]))
            if not all(math.isfinite(c[2]) for c in corners):
                continue
            pts = []
            for k in range(4):
                (xa, ya, za), (xb, yb, zb) = corners[k], corners[(k + 1) % 4]
                if (za >= level) != (zb >= level):
                    f = (level - za) / (zb - za)
                    pts.append((xa + f * (xb - xa), ya + f * (yb - ya)))
            for a in range(0, len(pts) - 1, 2):
                out.append((pts[a], pts[a + 1]))
    return np.array(out, float).reshape(-1, 2, 2)


class _SweepSlots:
    """A machine-wide bound on concurrent sweeps: one abstract Unix socket name per slot.

    Binding a name in Linux's abstract socket namespace writes no file (a served dashboard
    writes nothing on the server) and the name is freed when the holder closes it or
    its process ends. Elsewhere there is no machine-wide bound, only this view's own.
    """

    def __init__(self, slots: int) -> None:
        self.slots = slots
        self._sock: Any = None

    def acquire(self) -> bool:
        if self._sock is not None:
            return False
        if not sys.platform.startswith("linux"):
            self._sock = True
            return True
        for i in range(self.slots):
            sock = socket.socket(socket.AF_UNIX, socket.SOCK_STREAM)
            try:
                sock.bind(f"\0snowprobe-sweep-slot-{i}")
            except OSError:
                sock.close()
                continue
            self._sock = sock
            return True
        return False

    def release(self) -> None:
        if self._sock is not None and self._sock is not True:
            self._sock.close()
        self._sock = None


class _FieldRow(widgets.HBox):
    """One field of the grid: which field, from, to, how many values."""

    def __init__(self, label: str, allow_none: bool, default: str, css_class: str) -> None:
        options = ([_NONE] if allow_none else []) + list(SWEEP_FIELDS)
        self.field = dropdown(label, options, default)
        self.low = widgets.FloatText(description="from", layout=widgets.Layout(width="150px"),
                                     style={"description_width": "40px"})
        self.high = widgets.FloatText(description="to", layout=widgets.Layout(width="150px"),
                                      style={"description_width": "30px"})
        self.steps = widgets.BoundedIntText(value=6, min=2, max=40, description="values",
                                            layout=widgets.Layout(width="140px"),
                                            style={"description_width": "50px"})
        self.steps.add_class("sp-field-steps")
        self.field.observe(lambda _: self._defaults(), names="value")
        self._defaults()
        super().__init__([self.field, self.low, self.high, self.steps])
        self.add_class(css_class)

    def _defaults(self) -> None:
        on = self.field.value != _NONE
        for w in (self.low, self.high, self.steps):
            w.disabled = not on
        if on:
            self.low.value, self.high.value = _SWEEP_DEFAULTS[SWEEP_FIELDS[self.field.value]]

    def grid(self) -> tuple[str, list[float], list[float]] | None:
        """(path, SI values, display values), or None when no field is chosen.

        Raises
        ------
        ValueError
            Naming the field, on a range outside the allowed one or from >= to.
        """
        if self.field.value == _NONE:
            return None
        label = self.field.value
        path = SWEEP_FIELDS[label]
        f = declaration_at(path)
        lo, hi = float(self.low.value), float(self.high.value)
        for name, v in (("from", lo), ("to", hi)):
            try:
                check(f.group, f.name, f.to_si(v))
            except FieldError as exc:
                raise ValueError(f"{label} {name}: {exc.screen}") from None
        if not lo < hi:
            raise ValueError(f"{label}: from = {lo:g} must be below to = {hi:g}")
        dec = f.decimals
        shown = [round(v, dec) for v in np.linspace(lo, hi, int(self.steps.value))]
        if len(set(shown)) != len(shown):
            raise ValueError(f"{label}: {len(shown)} values between {lo:g} and {hi:g} do not "
                             f"differ at {dec} decimals; fewer values or a wider range")
        return path, [f.to_si(v) for v in shown], shown


class DetectabilityView(widgets.VBox):
    """The "Detection probability" view.

    Parameters
    ----------
    base : Scenario, optional
        The base scene (default: the default demo); :attr:`base` can be set later, e.g.
        by the design app when its scenario changes.
    explorer : ScenarioExplorer, optional
        Explorer that a clicked cell opens in; without one, an explorer is made below the
        map the first time a cell is clicked.
    max_at_once : int
        Most sweeps at once on this machine (all sessions together).
    base_from : callable, optional
        Returns the base scene when a sweep starts (the design app passes its scene on
        screen); the demo chooser is then hidden.
    """

    def __init__(self, base: Scenario | None = None, *, explorer: Any = None,
                 max_at_once: int = MAX_SWEEPS_AT_ONCE,
                 base_from: Callable[[], Scenario] | None = None, **kwargs: Any) -> None:
        self.base = Scenario.default() if base is None else base
        self.explorer = explorer
        self._base_from = base_from
        self.dataset: Any = None
        self.summary: Any = None
        self.draws = 0
        self._slots = _SweepSlots(max_at_once)
        self._cancel = threading.Event()
        self._thread: threading.Thread | None = None
        self._selected: tuple[int, ...] | None = None
        self._axes_values: list[list[float]] = []

        self.base_choice = dropdown("base scene", list(Scenario.examples()),
                                    self.base.name if self.base.name in Scenario.examples()
                                    else Scenario.examples()[0])
        self.field_x = _FieldRow("field across", False, _sweep_label("persons[0].depth_m"),
                                 "sp-field-x")
        self.field_y = _FieldRow("field up", True,
                                 _sweep_label("snowpack.layers[*].lwc_percent"),
                                 "sp-field-y")
        self.preset = dropdown("uncertain", [_PRESET_NONE, *sweeps.UNCERTAINTY_PRESETS],
                               "typical dry debris")
        self.preset.add_class("sp-preset")
        self.realizations = int_slider("realizations", 10, 2, 200)
        self.realizations.add_class("sp-realizations")
        self.run_button = widgets.Button(description="run sweep", button_style="primary")
        self.run_button.add_class("sp-sweep-run")
        self.cancel_button = widgets.Button(description="cancel", disabled=True)
        self.cancel_button.add_class("sp-sweep-cancel")
        self.resume_button = widgets.Button(description="resume", disabled=True,
                                            tooltip="run the realizations a cancelled "
                                                    "sweep did not finish")
        self.resume_button.add_class("sp-sweep-resume")
        self.progress = widgets.IntProgress(value=0, min=0, max=1, description="progress",
                                            layout=widgets.Layout(width="380px"))
        self.progress_text = widgets.HTML()
        self.progress_text.add_class("sp-sweep-progress")
        #: the finished (or cancelled) sweep as a netCDF download, for the plan page
        self.download = widgets.HTML()
        self.download.add_class("sp-sweep-download")
        self.level = float_slider("detector level (dB)", DEFAULT_THRESHOLD_DB, 10.0, 60.0,
                                  1.0, readout_format=".0f")
        self.contour = float_slider("probability contour", 0.9, 0.05, 0.99, 0.01)
        self.message = message_line()
        self.legend = widgets.HTML(
            "<small>Map: grey cells have not run. Solid red line: where the detection "
            "probability crosses the contour value; dashed: where the ends of its "
            "Wilson 95 % interval cross it. Moving the detector level re-reads the "
            "recorded scores (no new simulation).</small>")
        self.readout = widgets.HTML()
        self.readout.add_class("sp-detectability-readout")
        self.status = widgets.HTML()
        self.status.add_class(STATUS_CLASS)
        self.explorer_slot = widgets.VBox()

        self._build_figures()
        self.base_choice.observe(self._on_base_choice, names="value")
        self.run_button.on_click(lambda _: self.run())
        self.cancel_button.on_click(lambda _: self.cancel())
        self.resume_button.on_click(lambda _: self.resume())
        self.level.observe(lambda _: self._resummarise(), names="value")
        self.contour.observe(lambda _: self._draw(), names="value")

        header = widgets.HTML(
            "<h3 style='margin:4px 0'>Detection probability</h3><div>How likely is a "
            "buried person found, and how often does the detector cry wolf, when the snow, "
            "the burial and the clutter are only known within ranges? Each cell runs many "
            "simulated searches of the same design.</div>")
        controls = widgets.VBox([
            section_title("Scene and grid"), self.base_choice, self.field_x, self.field_y,
            section_title("What nobody knows exactly"), self.preset, self.realizations,
            widgets.HBox([self.run_button, self.cancel_button, self.resume_button]),
            widgets.HBox([self.progress, self.progress_text]), self.download, self.message,
        ])
        views = widgets.VBox([
            widgets.HBox([self.map_figure, self.alarm_figure]),
            self.legend,
            widgets.HBox([self.level, self.contour]),
            widgets.HBox([self.roc_figure, self.readout]),
            self.status,
        ])
        super().__init__(children=[header, caution_box(), controls, views,
                                   self.explorer_slot], **kwargs)
        share_plain_styles(self)
        if base_from is not None:
            set_visible(self.base_choice, False)
        self._plan_axes()
        self._draw()

    # ------------------------------------------------------------------ figures
    def _build_figures(self) -> None:
        self._mx = bqplot.LinearScale()
        self._my = bqplot.LinearScale()
        self._ax_x = bqplot.Axis(scale=self._mx, label="", grid_lines="none")
        self._ax_y = bqplot.Axis(scale=self._my, side="left", label="",
                                 grid_lines="none")
        self._palette = colour_map("lichen").copy()
        self._palette[_NAN_INDEX] = (205, 205, 205)
        self._map_image = bqplot.Image(image=self._png(np.full((1, 1), np.nan)),
                                       scales={"x": self._mx, "y": self._my},
                                       x=[0.0, 1.0], y=[0.0, 1.0])
        self._map_image.on_element_click(self._on_map_click)
        self._contour_mark = bqplot.Lines(x=np.zeros((0, 2)), y=np.zeros((0, 2)),
                                          scales={"x": self._mx, "y": self._my},
                                          colors=["#c0392b"], stroke_width=2.5)
        self._interval_mark = bqplot.Lines(x=np.zeros((0, 2)), y=np.zeros((0, 2)),
                                           scales={"x": self._mx, "y": self._my},
                                           colors=["#c0392b"], stroke_width=1.2,
                                           line_style="dashed")
        self._cell_mark = bqplot.Scatter(x=[0.0], y=[0.0], scales={"x": self._mx,
                                                                   "y": self._my},
                                         marker="square", colors=["#e0119d"],
                                         default_size=120, fill=False, visible=False)
        self.map_figure = bqplot.Figure(
            marks=[self._map_image, self._contour_mark, self._interval_mark,
                   self._cell_mark], axes=[self._ax_x, self._ax_y], padding_x=0.0,
            padding_y=0.0, title="detection probability (dark 0, light 1)",
            fig_margin={"top": 40, "bottom": 50, "left": 70, "right": 20},
            layout=widgets.Layout(width="520px", height="380px"))
        self.map_figure.add_class("sp-detectability-map")
        self._fx = bqplot.LinearScale()
        self._fy = bqplot.LinearScale()
        self._alarm_image = bqplot.Image(image=self._png(np.full((1, 1), np.nan)),
                                         scales={"x": self._fx, "y": self._fy},
                                         x=[0.0, 1.0], y=[0.0, 1.0])
        self._fa_ax_x = bqplot.Axis(scale=self._fx, label="", grid_lines="none")
        self._fa_ax_y = bqplot.Axis(scale=self._fy, side="left", label="",
                                    grid_lines="none")
        self.alarm_figure = bqplot.Figure(
            marks=[self._alarm_image], axes=[self._fa_ax_x, self._fa_ax_y],
            padding_x=0.0, padding_y=0.0, title="false alarms per 100 m",
            fig_margin={"top": 40, "bottom": 50, "left": 70, "right": 20},
            layout=widgets.Layout(width="420px", height="380px"))
        self._rx = bqplot.LinearScale(min=0.0)
        self._ry = bqplot.LinearScale(min=0.0, max=1.0)
        self._roc_line = bqplot.Lines(x=np.zeros(0), y=np.zeros(0),
                                      scales={"x": self._rx, "y": self._ry},
                                      colors=["#2c5d8a"], marker="circle", marker_size=12)
        self._roc_point = bqplot.Scatter(x=np.zeros(0), y=np.zeros(0),
                                         scales={"x": self._rx, "y": self._ry},
                                         colors=["#c0392b"], default_size=80)
        self.roc_figure = bqplot.Figure(
            marks=[self._roc_line, self._roc_point],
            axes=[bqplot.Axis(scale=self._rx, label="false alarms per 100 m"),
                  bqplot.Axis(scale=self._ry, side="left",
                              label="detection probability")],
            title="ROC of the selected cell (dot: detector level)",
            fig_margin={"top": 40, "bottom": 50, "left": 60, "right": 20},
            layout=widgets.Layout(width="460px", height="300px"))

    def _png(self, values: np.ndarray, vmax: float = 1.0) -> widgets.Image:
        idx = scale_to_index(np.nan_to_num(values, nan=0.0), 0.0, max(vmax, 1e-9))
        idx = np.clip(idx, 1, 255).astype(np.uint8)
        idx[~np.isfinite(values)] = _NAN_INDEX
        return widgets.Image(value=encode_palette_png(idx[::-1], self._palette),
                             format="png")

    # ------------------------------------------------------------------ running
    def _on_base_choice(self, change: dict[str, Any]) -> None:
        self.base = Scenario.example(change["new"])

    def _request(self) -> tuple[dict[str, list[float]], dict[str, Any], list[list[float]]]:
        rows = [r.grid() for r in (self.field_x, self.field_y)]
        rows = [r for r in rows if r is not None]
        if len({r[0] for r in rows}) != len(rows):
            raise ValueError("choose two different fields (or '(none)' for the second)")
        vary = {path: values for path, values, _shown in rows}
        preset = {} if self.preset.value == _PRESET_NONE else sweeps.uncertainty_preset(
            self.preset.value, list(vary))
        n = int(np.prod([len(v) for v in vary.values()])) * int(self.realizations.value)
        if n > MAX_DASHBOARD_REALIZATIONS:
            raise ValueError(f"{n} realizations asked; at most {MAX_DASHBOARD_REALIZATIONS} "
                             "in one dashboard sweep (fewer values or realizations)")
        return vary, preset, [shown for _p, _v, shown in rows]

    def _plan_axes(self) -> None:
        try:
            _vary, _preset, shown = self._request()
        except ValueError:
            shown = [[0.0, 1.0]]
        self._axes_values = shown

    @property
    def running(self) -> bool:
        """A sweep is running."""
        return self._thread is not None and self._thread.is_alive()

    def run(self, wait: bool = False) -> bool:
        """Start a sweep with the current controls (in a worker process).

        Returns False, with the reason in the message line, when the request is refused
        (a bad range, too many realizations, all sweep slots busy) or a sweep is running.
        ``wait=True`` returns after the sweep finished (for scripts and tests).
        """
        if self.running:
            show_message(self.message, "a sweep is already running; cancel it first")
            return False
        if self._base_from is not None:
            self.base = self._base_from()
        try:
            vary, uncertain, shown = self._request()
            sweeps.empty_sweep(self.base, vary, uncertain=uncertain,
                               realizations=int(self.realizations.value))
        except ValueError as exc:
            show_message(self.message, str(exc))
            return False
        realizations = int(self.realizations.value)
        base = self.base

        def job(pool: Any, on_progress: Callable[[int, int], Any]) -> Any:
            return sweeps.sweep(base, vary, uncertain=uncertain,
                                realizations=realizations, executor=pool, progress=False,
                                on_progress=on_progress, cancel=self._cancel, chunk_size=2)

        total = int(np.prod([len(v) for v in vary.values()])) * realizations
        return self._start(job, total, 0, wait, axes=shown)

    def resume(self, wait: bool = False) -> bool:
        """Run the realizations the shown (cancelled) sweep did not finish, in a worker
        process; the result equals an uninterrupted run's. Returns False, with the
        reason in the message line, when there is nothing to resume or a sweep runs."""
        if self.running:
            show_message(self.message, "a sweep is already running; cancel it first")
            return False
        ds = self.dataset
        if ds is None or ds.attrs["complete"]:
            show_message(self.message, "there is no cancelled sweep to resume")
            return False

        def job(pool: Any, on_progress: Callable[[int, int], Any]) -> Any:
            return sweeps.resume(ds, executor=pool, progress=False, on_progress=on_progress,
                                 cancel=self._cancel, chunk_size=2)

        return self._start(job, int(ds["done"].size), int(ds["done"].sum()), wait)

    def _start(self, job: Callable[[Any, Callable[[int, int], Any]], Any], total: int,
               done_before: int, wait: bool, axes: list[list[float]] | None = None) -> bool:
        """Run ``job(pool, on_progress)`` on a one-worker process pool from a thread
        (``axes``: the display values of a new grid)."""
        if not self._slots.acquire():
            show_message(self.message, f"{self._slots.slots} sweeps are already running on "
                         "this server; try again when one has finished")
            return False
        show_message(self.message, "")
        if axes is not None:
            self._axes_values = axes
        self._cancel.clear()
        self.run_button.disabled = True
        self.resume_button.disabled = True
        self.cancel_button.disabled = False
        self.progress.max, self.progress.value = total, done_before
        self.progress_text.value = "starting a worker process"
        started = time.monotonic()

        def on_progress(done: int, todo: int) -> None:
            self.progress.value = done_before + done
            elapsed = time.monotonic() - started
            left = elapsed / done * (todo - done) if done else float("nan")
            self.progress_text.value = (f"{done_before + done} of {total} realizations, "
                                        f"about {left:.0f} s left" if done else "")

        def work() -> None:
            try:
                with sweeps.local_pool(1) as pool:
                    ds = job(pool, on_progress)
                self._show_result(ds)
            except Exception as exc:  # shown, never raised into the page
                show_message(self.message, f"the sweep failed: {exc}")
            finally:
                self._slots.release()
                self.run_button.disabled = False
                self.cancel_button.disabled = True
                self.resume_button.disabled = not (self.dataset is not None and
                                                   not self.dataset.attrs["complete"])

        self._thread = threading.Thread(target=work, daemon=True)
        self._thread.start()
        if wait:
            self._thread.join()
        return True

    def cancel(self) -> None:
        """Stop the running sweep; the finished realizations are kept and shown."""
        self._cancel.set()
        self.progress_text.value = "stopping after the realizations in progress"

    def _show_result(self, ds: Any) -> None:
        self.dataset = ds
        done = int(ds["done"].sum())
        self.progress_text.value = (f"done: {done} realizations" if ds.attrs["complete"]
                                    else f"cancelled: {done} of {ds['done'].size} "
                                    "realizations kept")
        self._selected = None
        self.download.value = download_link(
            bytes(ds.to_netcdf(engine="scipy")), "detection-sweep.nc", "application/x-netcdf",
            "download this sweep (netCDF)")
        self._resummarise()

    def _resummarise(self) -> None:
        if self.dataset is None:
            return
        self.summary = sweeps.roc(self.dataset, [float(self.level.value)]).isel(level_db=0)
        self._draw()

    # ------------------------------------------------------------------ drawing
    def _grid2(self, name: str) -> np.ndarray:
        a = np.asarray(self.summary[name].values, float)
        return a.reshape(1, -1) if a.ndim == 1 else a.T  # rows: field up, cols: across

    def _draw(self) -> None:
        xs = np.asarray(self._axes_values[0], float)
        ys = np.asarray(self._axes_values[1], float) if len(self._axes_values) > 1 else \
            np.array([0.0])
        labels = [self.field_x.field.value,
                  self.field_y.field.value if len(self._axes_values) > 1 else ""]

        def edges(v: np.ndarray) -> list[float]:
            step = (v[-1] - v[0]) / (v.size - 1) if v.size > 1 else 1.0
            return [float(v[0] - step / 2), float(v[-1] + step / 2)]

        ex, ey = edges(xs), edges(ys)
        if self.summary is None:
            p = np.full((ys.size, xs.size), np.nan)
            fa = p
        else:
            p = self._grid2("detection_probability")
            fa = self._grid2("false_alarms_per_100m")
        lo_hi = [self._grid2(n) for n in ("detection_probability_lower",
                                          "detection_probability_upper")] \
            if self.summary is not None else []
        level = float(self.contour.value)
        # one field: the strip's two edges carry the same values, so the contour crosses
        # it as vertical lines where the probability passes the level
        zy = ys if ys.size > 1 else np.array([ey[0], ey[1]])
        rows = [z if ys.size > 1 else np.vstack([z, z]) for z in [p, *lo_hi]]
        seg = contour_segments(rows[0], xs, zy, level)
        band = [contour_segments(z, xs, zy, level) for z in rows[1:]]
        band_seg = np.concatenate(band) if band else np.zeros((0, 2, 2))
        fa_max = float(np.nanmax(fa)) if np.any(np.isfinite(fa)) else 1.0
        with self.map_figure.hold_sync():
            self._mx.min, self._mx.max = ex
            self._my.min, self._my.max = ey
            self._ax_x.label, self._ax_y.label = labels
            self._map_image.x, self._map_image.y = ex, ey
            self._map_image.image = self._png(p)
            self._contour_mark.x = as_f32(seg[:, :, 0])
            self._contour_mark.y = as_f32(seg[:, :, 1])
            self._interval_mark.x = as_f32(band_seg[:, :, 0])
            self._interval_mark.y = as_f32(band_seg[:, :, 1])
        with self.alarm_figure.hold_sync():
            self._fx.min, self._fx.max = ex
            self._fy.min, self._fy.max = ey
            self._fa_ax_x.label, self._fa_ax_y.label = labels
            self._alarm_image.x, self._alarm_image.y = ex, ey
            self._alarm_image.image = self._png(fa, max(fa_max, 1e-9))
            self.alarm_figure.title = (f"false alarms per 100 m (dark 0, light "
                                       f"{fa_max:.2g})" if self.summary is not None
                                       else "false alarms per 100 m (grey: not run)")
        self._draw_selection()
        self.draws += 1
        state = ("not run yet" if self.dataset is None else
                 "complete" if self.dataset.attrs["complete"] else "partial")
        self.status.value = f"<small>draws={self.draws} | sweep: {state}</small>"

    def _draw_selection(self) -> None:
        if self.summary is None or self._selected is None:
            self._cell_mark.visible = False
            self.readout.value = ("<i>Run a sweep, then click a cell to see its numbers "
                                  "and open one of its scenes.</i>" if self.summary is None
                                  else "<i>Click a cell to see its numbers and open one of "
                                  "its scenes.</i>")
            with self.roc_figure.hold_sync():
                self._roc_line.x, self._roc_line.y = np.zeros(0), np.zeros(0)
                self._roc_point.x, self._roc_point.y = np.zeros(0), np.zeros(0)
            return
        sel = dict(zip(self._dims(), self._selected, strict=True))
        cell = self.summary.isel(sel)
        xs = self._axes_values
        self._cell_mark.x = [float(xs[0][self._selected[0]])]
        self._cell_mark.y = [float(xs[1][self._selected[1]]) if len(xs) > 1 else 0.0]
        self._cell_mark.visible = True
        curve = sweeps.roc(self.dataset).isel(sel)
        fa_c = np.asarray(curve["false_alarms_per_100m"].values, float)
        pd_c = np.asarray(curve["detection_probability"].values, float)
        ok = np.isfinite(fa_c) & np.isfinite(pd_c)
        with self.roc_figure.hold_sync():
            self._roc_line.x, self._roc_line.y = as_f32(fa_c[ok]), as_f32(pd_c[ok])
            p, f = float(cell["detection_probability"]), float(cell["false_alarms_per_100m"])
            if math.isfinite(p) and math.isfinite(f):
                self._roc_point.x, self._roc_point.y = [f], [p]
            else:
                self._roc_point.x, self._roc_point.y = np.zeros(0), np.zeros(0)
        where = ", ".join(f"{lab} = {vals[i]:g}" for lab, vals, i in zip(
            [self.field_x.field.value, self.field_y.field.value], xs, self._selected,
            strict=False))
        n = int(cell["trials"])
        if n == 0:
            self.readout.value = f"<b>{html.escape(where)}</b>: no realization finished here"
            return
        found = int(round(float(cell["detection_probability"]) * n))
        self.readout.value = (
            f"<b>{html.escape(where)}</b><br>found {found} of {n} "
            f"({100 * float(cell['detection_probability']):.0f} %, 95 % interval "
            f"{100 * float(cell['detection_probability_lower']):.0f}-"
            f"{100 * float(cell['detection_probability_upper']):.0f} %) at "
            f"{float(self.level.value):.0f} dB<br>false alarms "
            f"{float(cell['false_alarms_per_100m']):.2g} per 100 m of line with nobody "
            "buried")

    def _dims(self) -> list[str]:
        return [d for d in self.summary["detection_probability"].dims]

    # ------------------------------------------------------------------ picking
    def _on_map_click(self, _mark: Any, content: dict[str, Any]) -> None:
        try:
            x = float(content["data"]["click_x"])
            y = float(content["data"]["click_y"])
        except (KeyError, TypeError, ValueError):
            return
        self.select_cell(x, y)

    def select_cell(self, x: float, y: float = 0.0) -> bool:
        """Select the cell nearest (x, y) in display units and open one of its scenes.

        Opens the first realization in which the person was missed (the instructive
        case), else the first one. Returns False when no sweep has finished that cell.
        """
        if self.dataset is None or not (math.isfinite(x) and math.isfinite(y)):
            return False
        xs = self._axes_values
        idx = [int(np.argmin(np.abs(np.asarray(xs[0]) - x)))]
        if len(xs) > 1:
            idx.append(int(np.argmin(np.abs(np.asarray(xs[1]) - y))))
        self._selected = tuple(idx)
        self._draw_selection()
        sel = dict(zip(self._dims(), idx, strict=True))
        rec = self.dataset.isel(sel)
        done = np.asarray(rec["done"].values, bool)
        if not done.any():
            return False
        missed = np.flatnonzero(done & (np.nanmin(rec["found"].values, axis=-1) < 1))
        r = int(missed[0]) if missed.size else int(np.flatnonzero(done)[0])
        scenario = sweeps.realization_scenario(self.dataset, sel, r)
        self._open(scenario, r, bool(missed.size))
        return True

    def _open(self, scenario: Scenario, r: int, missed: bool) -> None:
        if self.explorer is None:
            from snowprobe_widgets.widgets.explorer import ScenarioExplorer

            self.explorer = ScenarioExplorer(scenario)
            self.explorer_slot.children = [
                section_title("The selected scene in the explorer"), self.explorer]
        else:
            self.explorer.scenario = scenario
        what = "a realization where the person was missed" if missed else "a realization"
        self.readout.value += (f"<br><span class='sp-opened-scene'>opened {what} "
                               f"(number {r}) in the explorer</span>")
