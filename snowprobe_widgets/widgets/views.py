"""Views of one scenario: the cross-section to scale, a trace, spectra and the link budget.

Each view has an ``update(...)`` taking model outputs and a ``draws`` counter; the marks
are built once and only their data change. Numbers come from the model
(:mod:`snowprobe_widgets.synthesis`, :mod:`~snowprobe_widgets.trace`,
:mod:`~snowprobe_widgets.fdtd`, :mod:`~snowprobe_widgets.budget`); the views convert
units, normalise for display and draw.
"""

from __future__ import annotations

import html
import math
from typing import Any

import bqplot
import ipywidgets as widgets
import numpy as np

from snowprobe_widgets import raypaths
from snowprobe_widgets.budget import link_budget
from snowprobe_widgets.synthesis import column_optics
from snowprobe_widgets.targets import kind_of
from snowprobe_widgets.widgets._common import as_f32, message_line, show_message
from snowprobe_widgets.widgets.verdict import budget_table_html, card_sentence, person_name

_NS, _MHZ = 1e-9, 1e6
_DRY_RGB = np.array([236, 243, 250])
_WET_RGB = np.array([40, 88, 160])
_CRUST_COLOUR = "#9fd6e8"
_SOIL_COLOUR = "#8b6b4a"
_ROCK_COLOUR = "#7d7d7d"
_PERSON_COLOUR = "#d9480f"
_KIND_COLOURS = {"person": _PERSON_COLOUR, "boulder": "#5f5f5f", "branch": "#6b4f1d",
                 "metal": "#111111"}
_GROUND_SHOWN_M = 0.5
_WETNESS_FULL_PERCENT = 12.0
_SPECTRUM_FLOOR_DB = -80.0


def wetness_colour(lwc_percent: float, ice_crust: bool = False) -> str:
    """Fill colour of a snow layer: pale for dry snow, deep blue at 12 % water."""
    if ice_crust:
        return _CRUST_COLOUR
    f = float(np.clip(lwc_percent / _WETNESS_FULL_PERCENT, 0.0, 1.0))
    r, g, b = (_DRY_RGB + f * (_WET_RGB - _DRY_RGB)).round().astype(int)
    return f"#{r:02x}{g:02x}{b:02x}"


def _stack(polys: list[tuple[np.ndarray, np.ndarray]]) -> tuple[np.ndarray, np.ndarray]:
    """Pad outlines to one length (repeating the last point) for one multi-line mark."""
    if not polys:
        return np.zeros((1, 2)), np.full((1, 2), -1e3)
    n = max(p[0].size for p in polys)
    xs = np.array([np.pad(p[0], (0, n - p[0].size), mode="edge") for p in polys])
    zs = np.array([np.pad(p[1], (0, n - p[1].size), mode="edge") for p in polys])
    return xs, zs


def ray_polyline(scenario: Any, antenna_x_m: float, target: Any) -> tuple[np.ndarray, ...]:
    """Drawn path of the refracted ray from the antenna to a target's top, m.

    The corners come from :func:`snowprobe_widgets.raypaths.ray_polyline`; this only lays
    them along the survey line (projected on the line's vertical plane when the target is
    off the line).
    """
    optics = column_optics(scenario)
    dx = target.position_m - antenna_x_m
    horizontal = math.hypot(dx, target.offset_m)
    run, depth = raypaths.ray_polyline(horizontal, target.depth_m,
                                       antenna_height_m=scenario.radar.antenna_height_m,
                                       thickness_m=optics.thickness_m, index=optics.index)
    direction = (dx / horizontal) if horizontal > 0 else 0.0
    return antenna_x_m + direction * run, depth


# --------------------------------------------------------------------------- section
class CrossSectionView(widgets.VBox):
    """The scene to scale: layers coloured by wetness, ground, people, debris, antenna."""

    def __init__(self, height_px: int = 300, **kwargs: Any) -> None:
        self._draws = 0
        self._scenario = None
        self._pick = None
        self.x_scale = bqplot.LinearScale()
        self.z_scale = bqplot.LinearScale(reverse=True)
        sc = {"x": self.x_scale, "y": self.z_scale}
        self.layers = bqplot.Lines(x=np.zeros((1, 2)), y=np.zeros((1, 2)), scales=sc,
                                   fill="inside", colors=["#b0b0b0"], fill_opacities=[1.0],
                                   stroke_width=0.5, close_path=True)
        self.ground = bqplot.Lines(x=np.zeros(2), y=np.zeros(2), scales=sc, fill="inside",
                                   colors=["#333333"], fill_colors=[_SOIL_COLOUR],
                                   close_path=True, stroke_width=0.5)
        self.bodies = bqplot.Lines(x=np.zeros((1, 2)), y=np.zeros((1, 2)), scales=sc,
                                   fill="inside", colors=["#222222"],
                                   fill_colors=[_PERSON_COLOUR], close_path=True,
                                   stroke_width=1)
        self.antenna_path = bqplot.Lines(x=np.zeros(2), y=np.zeros(2), scales=sc,
                                         colors=["#444444"], line_style="dashed")
        self.antenna = bqplot.Scatter(x=np.zeros(1), y=np.zeros(1), scales=sc,
                                      marker="triangle-down", colors=["#e0119d"],
                                      default_size=80, visible=False)
        self.rays = bqplot.Lines(x=np.zeros((1, 2)), y=np.zeros((1, 2)), scales=sc,
                                 colors=["#e0119d"], stroke_width=1.2, visible=False)
        self.labels = bqplot.Label(x=[0.0], y=[0.0], text=[""], scales=sc, font_weight="normal",
                                   default_size=11, colors=["#222222"], y_offset=-8)
        axes = [bqplot.Axis(scale=self.x_scale, label="position along line (m)",
                            grid_lines="none"),
                bqplot.Axis(scale=self.z_scale, side="left", label="depth below surface (m)",
                            label_offset="45px", grid_lines="none")]
        self.figure = bqplot.Figure(
            marks=[self.layers, self.ground, self.bodies, self.antenna_path, self.rays,
                   self.antenna, self.labels], axes=axes, padding_x=0.0, padding_y=0.0,
            fig_margin={"top": 10, "bottom": 45, "left": 70, "right": 20},
            layout=widgets.Layout(width="100%", height=f"{int(height_px)}px"))
        # width "auto": a checkbox's default width cuts its description at 1280 px
        self.show_rays = widgets.Checkbox(value=False, indent=False,
                                          description="ray paths to each person",
                                          layout=widgets.Layout(width="auto"))
        self.true_shape = widgets.Checkbox(value=False, indent=False,
                                           description="same scale across and down",
                                           layout=widgets.Layout(width="auto"))
        self.show_rays.observe(lambda _: self._draw_rays(), names="value")
        self.true_shape.observe(lambda _: self._aspect(), names="value")
        self.legend = widgets.HTML(value=self._legend_html())
        super().__init__(children=[
            widgets.HBox([self.show_rays, self.true_shape]), self.figure, self.legend],
            **kwargs)

    @property
    def draws(self) -> int:
        """Number of scene redraws."""
        return self._draws

    @staticmethod
    def _legend_html() -> str:
        swatches = [(wetness_colour(0.0), "dry snow"), (wetness_colour(6.0), "6 % water"),
                    (wetness_colour(12.0), "12 % water"), (_CRUST_COLOUR, "ice crust"),
                    (_PERSON_COLOUR, "person"), (_SOIL_COLOUR, "soil"), (_ROCK_COLOUR, "rock")]
        cells = "".join(
            f"<span style='display:inline-block;width:12px;height:12px;background:{c};"
            f"border:1px solid #888;margin:0 3px 0 10px'></span>{html.escape(t)}"
            for c, t in swatches)
        return f"<small>{cells}; dashed line: antenna path</small>"

    def update(self, scenario: Any) -> None:
        """Redraw the scene of ``scenario``."""
        self._scenario = scenario
        s, snow = scenario.survey, scenario.snowpack
        h = scenario.radar.antenna_height_m
        targets = list(scenario.targets)
        x_lo = min([s.start_m] + [t.position_m - 1.0 for t in targets])
        x_hi = max([s.end_m] + [t.position_m + 1.0 for t in targets])
        depth = snow.depth_m
        tops = np.concatenate([[0.0], snow.interfaces_m[:-1]])
        polys = [(np.array([x_lo, x_hi, x_hi, x_lo]), np.array([t, t, t + la.thickness_m,
                                                               t + la.thickness_m]))
                 for t, la in zip(tops, snow.layers, strict=True)]
        lx, lz = _stack(polys)
        g_colour = _SOIL_COLOUR if scenario.ground.kind == "soil" else _ROCK_COLOUR
        bx, bz = _stack([kind_of(t).outline(t) for t in targets])
        colours = [_KIND_COLOURS.get(t.kind, "#333") for t in targets] or [_PERSON_COLOUR]
        with self.figure.hold_sync():
            with self.layers.hold_sync():
                self.layers.x, self.layers.y = as_f32(lx), as_f32(lz)
                self.layers.fill_colors = [wetness_colour(la.lwc_percent, la.ice_crust)
                                           for la in snow.layers]
                self.layers.colors = ["#9aa5b1"] * len(snow.layers)
                self.layers.fill_opacities = [1.0] * len(snow.layers)
            g_bottom = depth + _GROUND_SHOWN_M
            with self.ground.hold_sync():
                self.ground.x = as_f32([x_lo, x_hi, x_hi, x_lo])
                self.ground.y = as_f32([depth, depth, g_bottom, g_bottom])
                self.ground.fill_colors = [g_colour]
            with self.bodies.hold_sync():
                self.bodies.x, self.bodies.y = as_f32(bx), as_f32(bz)
                self.bodies.fill_colors = colours
                self.bodies.colors = ["#222222"] * len(colours)
            with self.antenna_path.hold_sync():
                self.antenna_path.x = as_f32([s.start_m, s.end_m])
                self.antenna_path.y = as_f32([-h, -h])
            with self.labels.hold_sync():
                self.labels.x = as_f32([t.position_m for t in targets] or [x_lo])
                self.labels.y = as_f32([t.depth_m for t in targets] or [-h])
                self.labels.text = [getattr(t, "label", "") or t.kind for t in targets] or [""]
            self.x_scale.min, self.x_scale.max = float(x_lo), float(x_hi)
            self.z_scale.min, self.z_scale.max = float(-h - 0.1), float(g_bottom)
        self._aspect()
        self._draw_pick()
        self._draw_rays()
        self._draws += 1

    def set_pick(self, position_m: float | None) -> None:
        """Mark the antenna at the picked trace position (None hides the marker)."""
        self._pick = position_m
        self._draw_pick()
        self._draw_rays()

    def _aspect(self) -> None:
        sc = self._scenario
        if sc is None:
            return
        if self.true_shape.value:
            width = self.x_scale.max - self.x_scale.min
            height = self.z_scale.min - self.z_scale.max
            lo = hi = abs(width / height) if height else 1.0
        else:
            lo, hi = 0.01, 100.0
        # both bounds at once: bqplot refuses min > max in between (a wider scene after a
        # narrower one raised TraitError)
        with self.figure.hold_trait_notifications():
            self.figure.min_aspect_ratio, self.figure.max_aspect_ratio = lo, hi

    def _draw_pick(self) -> None:
        sc = self._scenario
        if sc is None or self._pick is None:
            self.antenna.visible = False
            return
        with self.antenna.hold_sync():
            self.antenna.x = as_f32([self._pick])
            self.antenna.y = as_f32([-sc.radar.antenna_height_m])
            self.antenna.visible = True

    def _draw_rays(self) -> None:
        sc = self._scenario
        persons = [] if sc is None else list(sc.persons)
        if not (self.show_rays.value and persons and self._pick is not None):
            self.rays.visible = False
            return
        rx, rz = _stack([ray_polyline(sc, self._pick, p) for p in persons])
        with self.rays.hold_sync():
            self.rays.x, self.rays.y = as_f32(rx), as_f32(rz)
            self.rays.visible = True


# --------------------------------------------------------------------------- trace
_REFERENCE_LABELS = ("FDTD (plane wave, normalised)",
                     "frequency domain, same media (normalised)")


class TraceView(widgets.VBox):
    """One trace (A-scan) with its echoes labelled and an optional FDTD overlay."""

    def __init__(self, height_px: int = 280, **kwargs: Any) -> None:
        self._draws = 0
        self.t_scale = bqplot.LinearScale()
        self.a_scale = bqplot.LinearScale()
        self.n_scale = bqplot.LinearScale(min=-1.1, max=1.1)
        sc = {"x": self.t_scale, "y": self.a_scale}
        self.line = bqplot.Lines(x=np.zeros(2), y=np.zeros(2), scales=sc, colors=["#1f3b73"],
                                 labels=["trace on screen"], display_legend=True)
        self.echo_marks = bqplot.Scatter(x=np.zeros(0), y=np.zeros(0), names=[],
                                         display_names=True, scales=sc, marker="circle",
                                         colors=["#c2410c"], default_size=30)
        nsc = {"x": self.t_scale, "y": self.n_scale}
        self.reference = bqplot.Lines(
            x=np.zeros((2, 2)), y=np.zeros((2, 2)), scales=nsc,
            colors=["#2f855a", "#b7791f"], line_style="solid", stroke_width=1.2,
            labels=list(_REFERENCE_LABELS),
            display_legend=True, visible=False)
        axes = [bqplot.Axis(scale=self.t_scale, label="two-way time (ns)", grid_lines="none"),
                bqplot.Axis(scale=self.a_scale, side="left", label="amplitude (model units)",
                            label_offset="50px", tick_format=".2g", grid_lines="dashed"),
                bqplot.Axis(scale=self.n_scale, side="right", label="reference (normalised)",
                            label_offset="40px", grid_lines="none", visible=False)]
        self._ref_axis = axes[2]
        self.figure = bqplot.Figure(
            marks=[self.line, self.echo_marks, self.reference], axes=axes,
            legend_location="top-right",
            fig_margin={"top": 15, "bottom": 45, "left": 75, "right": 60},
            layout=widgets.Layout(width="100%", height=f"{int(height_px)}px"))
        self.title = widgets.HTML()
        self.fdtd_button = widgets.Button(description="run full-wave check (FDTD)",
                                          layout=widgets.Layout(width="auto"),
                                          tooltip="slow: a 1-D time-domain solution of the "
                                          "same snow column")
        self.progress = widgets.FloatProgress(value=0.0, min=0.0, max=1.0,
                                              description="FDTD", bar_style="info")
        self.fdtd2d_button = widgets.Button(
            description="run 2-D check (FDTD, first object)",
            layout=widgets.Layout(width="auto"),
            tooltip="slow: a 2-D time-domain solution of the first object as a cylinder "
            "across the line, antenna at this trace")
        self.progress2d = widgets.FloatProgress(value=0.0, min=0.0, max=1.0,
                                                description="2-D FDTD", bar_style="info")
        self.agreement = widgets.HTML()
        self.message = message_line()
        super().__init__(children=[self.title, self.figure,
                                   widgets.HBox([self.fdtd_button, self.progress]),
                                   widgets.HBox([self.fdtd2d_button, self.progress2d]),
                                   self.agreement, self.message], **kwargs)

    @property
    def draws(self) -> int:
        """Number of trace redraws."""
        return self._draws

    def update(self, time_s: np.ndarray, amplitude: np.ndarray,
               echoes: list[tuple[str, float]], title: str) -> None:
        """Draw a trace and mark ``echoes`` (label, two-way time s) on it."""
        t_ns = np.asarray(time_s) / _NS
        a = np.asarray(amplitude)
        e_t = np.array([t for _, t in echoes if t_ns[0] <= t / _NS <= t_ns[-1]], dtype=float)
        names = [n for n, t in echoes if t_ns[0] <= t / _NS <= t_ns[-1]]
        e_y = np.interp(e_t / _NS, t_ns, a) if e_t.size else np.zeros(0)
        peak = float(np.max(np.abs(a))) or 1.0
        with self.figure.hold_sync():
            with self.line.hold_sync():
                self.line.x, self.line.y = as_f32(t_ns), as_f32(a)
            with self.echo_marks.hold_sync():
                self.echo_marks.x, self.echo_marks.y = as_f32(e_t / _NS), as_f32(e_y)
                self.echo_marks.names = names
            self.t_scale.min, self.t_scale.max = float(t_ns[0]), float(t_ns[-1])
            self.a_scale.min, self.a_scale.max = -1.1 * peak, 1.1 * peak
        self.title.value = f"<b>{html.escape(title)}</b>"
        self._draws += 1

    def clear_reference(self) -> None:
        """Hide the FDTD overlay (the column changed)."""
        self.reference.visible = False
        self._ref_axis.visible = False
        self.agreement.value = ""
        self.progress.value = 0.0
        self.progress2d.value = 0.0

    def show_reference(self, time_s: np.ndarray, fdtd_amp: np.ndarray, fd_amp: np.ndarray,
                       text: str, labels: tuple[str, str] = _REFERENCE_LABELS) -> None:
        """Overlay a full-wave reference and the model's trace, each at peak 1."""
        def unit(x: np.ndarray) -> np.ndarray:
            m = float(np.max(np.abs(x)))
            return x / m if m > 0 else x

        t_ns = np.asarray(time_s) / _NS
        with self.reference.hold_sync():
            self.reference.x = as_f32(np.vstack([t_ns, t_ns]))
            self.reference.y = as_f32(np.vstack([unit(fdtd_amp), unit(fd_amp)]))
            self.reference.labels = list(labels)
            self.reference.visible = True
        self._ref_axis.visible = True
        self.agreement.value = text


# --------------------------------------------------------------------------- spectrum
class SpectrumView(widgets.VBox):
    """Amplitude spectra of the transmitted pulse and of the trace on screen, dB."""

    def __init__(self, height_px: int = 260, **kwargs: Any) -> None:
        self._draws = 0
        self.f_scale = bqplot.LinearScale()
        self.db_scale = bqplot.LinearScale(min=_SPECTRUM_FLOOR_DB, max=3.0)
        sc = {"x": self.f_scale, "y": self.db_scale}
        self.lines = bqplot.Lines(x=np.zeros((2, 2)), y=np.zeros((2, 2)), scales=sc,
                                  colors=["#7b3fa0", "#1f3b73"],
                                  labels=["transmitted pulse", "trace on screen"],
                                  display_legend=True)
        axes = [bqplot.Axis(scale=self.f_scale, label="frequency (MHz)", grid_lines="none"),
                bqplot.Axis(scale=self.db_scale, side="left",
                            label="amplitude (dB re own peak)", label_offset="45px",
                            grid_lines="dashed")]
        self.figure = bqplot.Figure(
            marks=[self.lines], axes=axes, legend_location="top-right",
            fig_margin={"top": 15, "bottom": 45, "left": 65, "right": 20},
            layout=widgets.Layout(width="100%", height=f"{int(height_px)}px"))
        self.note = widgets.HTML()
        super().__init__(children=[self.figure, self.note], **kwargs)

    @property
    def draws(self) -> int:
        """Number of redraws."""
        return self._draws

    @staticmethod
    def _db(values: np.ndarray) -> np.ndarray:
        mag = np.abs(values)
        peak = float(mag.max()) if mag.size else 0.0
        if peak <= 0:
            return np.full(mag.shape, _SPECTRUM_FLOOR_DB)
        return np.maximum(20 * np.log10(np.maximum(mag / peak, 1e-12)), _SPECTRUM_FLOOR_DB)

    def update(self, pulse: Any, dt_s: float, amplitude: np.ndarray) -> None:
        """Draw ``|pulse.spectrum|`` and the trace's amplitude spectrum up to 3 fc."""
        n = int(2 ** math.ceil(math.log2(max(4 * amplitude.size, 256))))
        f = np.fft.rfftfreq(n, dt_s)
        keep = (f > 0) & (f <= 3.0 * pulse.center_frequency_hz)
        f = f[keep]
        pulse_db = self._db(pulse.spectrum(f))
        trace_db = self._db(np.fft.rfft(amplitude, n)[keep])
        f_mhz = f / _MHZ
        with self.lines.hold_sync():
            self.lines.x = as_f32(np.vstack([f_mhz, f_mhz]))
            self.lines.y = as_f32(np.vstack([pulse_db, trace_db]))
        self.f_scale.min, self.f_scale.max = 0.0, float(f_mhz[-1])
        self.note.value = (f"<small>{html.escape(pulse.name)} pulse, centre "
                           f"{pulse.center_frequency_hz / _MHZ:.0f} MHz, -6 dB bandwidth "
                           f"{pulse.bandwidth_hz / _MHZ:.0f} MHz</small>")
        self._draws += 1


# --------------------------------------------------------------------------- budget
class BudgetView(widgets.VBox):
    """The link budget of each buried person as a table, below its verdict sentence."""

    def __init__(self, **kwargs: Any) -> None:
        self._draws = 0
        self.budget = None
        self.budgets: tuple[Any, ...] = ()
        self.verdict = widgets.HTML()
        self.table = widgets.HTML()
        self.message = message_line()
        super().__init__(children=[self.verdict, self.table, self.message], **kwargs)

    @property
    def draws(self) -> int:
        """Number of redraws."""
        return self._draws

    def update(self, scenario: Any, budgets: Any = None) -> None:
        """Show the budgets of the scenario's persons (computed here when not given;
        ``budgets[i]`` may be None when refused) or why there is none."""
        if budgets is None:
            budgets = []
            for p in scenario.persons:
                try:
                    budgets.append(link_budget(scenario, p))
                except ValueError:
                    budgets.append(None)
        self.budgets = tuple(budgets)
        shown = [(i, b) for i, b in enumerate(budgets) if b is not None]
        self._draws += 1
        if not shown:
            self.budget = None
            self.verdict.value = ""
            self.table.value = ""
            show_message(self.message, "Nobody is buried in this scenario: a link budget "
                         "needs a person (add one in the Person tab)."
                         if not scenario.persons else "No link budget for this scenario.")
            return
        show_message(self.message, "")
        self.budget = shown[0][1]
        self.verdict.value = "".join(
            f"<div style='font-size:110%;padding:4px 0'><b>"
            f"{html.escape(card_sentence(b, person_name(scenario, i)))}</b></div>"
            for i, b in shown[:1])
        self.table.value = "".join(
            (f"<h4 style='margin:8px 0 2px'>{html.escape(person_name(scenario, i))}</h4>"
             if len(shown) > 1 else "") + budget_table_html(b, scenario) for i, b in shown)


__all__ = ["BudgetView", "CrossSectionView", "SpectrumView", "TraceView", "budget_table_html",
           "ray_polyline", "wetness_colour"]
