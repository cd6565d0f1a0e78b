"""Search plan board: lanes, time to clear the debris and the survival window, for a search
lead. Every number comes from :mod:`snowprobe_widgets.plan`; this module chooses the inputs,
draws the curves and writes the printable plan.

Files come in by upload (a saved scenario) and leave by download (the printable plan); the
board never names a path on the server.
"""

from __future__ import annotations

import html
import tempfile
from typing import Any

import bqplot
import ipywidgets as widgets
import numpy as np

from snowprobe_widgets import scenario_files
from snowprobe_widgets.burial_statistics import (
    DEFAULT_DEPTH_DISTRIBUTION,
    DEFAULT_SURVIVAL_TABLE,
    DEPTH_DISTRIBUTIONS,
    SURVIVAL_TABLES,
)
from snowprobe_widgets.coverage import ICAR_RATE_M2_MIN, MAX_LANES
from snowprobe_widgets.detection import DEFAULT_THRESHOLD_DB
from snowprobe_widgets.plan import (
    PLAN_CAUTIONS,
    PLATFORMS,
    DebrisArea,
    LateralRange,
    Platform,
    ProbeLine,
    SearchPlan,
    lateral_range_from_budget,
    plan_search,
    spacing_tradeoff,
    two_way_time_s,
)
from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.widgets._common import (
    as_f32,
    caution_box,
    download_link,
    dropdown,
    float_slider,
    guarded,
    int_slider,
    message_line,
    section_title,
    set_visible,
    share_plain_styles,
    show_message,
)
from snowprobe_widgets.widgets.plan_report import comparison_rows, plan_html

#: CSS class of the status line; browser tests wait on its ``draws=N`` text.
PLAN_STATUS_CLASS = "sp-plan-status"
#: CSS class of the lane-spacing slider.
SPACING_CLASS = "sp-plan-spacing"
#: CSS class of the "printable plan" button and of the download link it makes.
REPORT_BUTTON_CLASS = "sp-plan-report"
DOWNLOAD_CLASS = "sp-plan-download"

_BLUE, _ORANGE, _GREEN, _GREY = "#1f5fa8", "#c2410c", "#2f855a", "#888888"
_SPACINGS_M = np.geomspace(0.5, 30.0, 16)
_DEMO = "demo: "
_FILE = "file: "
_ESTIMATE = "link-budget estimate (fast)"
_SWEEP = "sweep: "


def _figure(x_label: str, y_label: str, marks: list, scales: dict, *,
            extra_axes: tuple = (), x_format: str = ".0f") -> bqplot.Figure:
    axes = [bqplot.Axis(scale=scales["x"], label=x_label, grid_lines="none",
                        tick_format=x_format),
            bqplot.Axis(scale=scales["y"], side="left", label=y_label,
                        label_offset="40px", grid_lines="dashed", tick_format=".0f"),
            *extra_axes]
    return bqplot.Figure(marks=marks, axes=axes, padding_x=0.0, padding_y=0.0,
                         fig_margin={"top": 15, "bottom": 45, "left": 60, "right": 55},
                         layout=widgets.Layout(width="520px", height="240px"))


def _line(scales: dict, colour: str, label: str, style: str = "solid") -> bqplot.Lines:
    return bqplot.Lines(x=np.zeros(2, np.float32), y=np.zeros(2, np.float32), scales=scales,
                        colors=[colour], labels=[label], line_style=style, stroke_width=2)


def _key(*items: tuple[str, str]) -> str:
    """A one-line colour key under a plot: (colour, text) pairs."""
    return "<div style='font-size:85%;line-height:1.3'>" + " &nbsp; ".join(
        f"<span style='color:{c}'>{html.escape(t)}</span>" for c, t in items) + "</div>"


def _finite(x: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The points with a finite y (a curve past the end of its table is left out, never
    drawn as zero); at least one point so the mark keeps its shape."""
    keep = np.isfinite(x) & np.isfinite(y)
    if not keep.any():
        return np.zeros(1, np.float32), np.zeros(1, np.float32)
    return as_f32(x[keep]), as_f32(y[keep])


class SearchPlanBoard(widgets.VBox):
    """The search plan for a debris field, a platform and a radar design.

    Parameters
    ----------
    scenario : Scenario, optional
        The radar design and snow (default: the demo ``shallow_dry_powder``);
        ``persons[0]`` is the person searched for.

    Notes
    -----
    ``status`` (CSS class :data:`PLAN_STATUS_CLASS`) shows ``draws=N`` after every redraw;
    :attr:`plan` is the last :class:`~snowprobe_widgets.plan.SearchPlan`; :meth:`report`
    returns the printable plan and puts a download link for it on the page.
    """

    def __init__(self, scenario: Scenario | None = None, **kwargs: Any) -> None:
        self._draws = 0
        self._busy = False
        self._designs: dict[str, Scenario] = {
            _DEMO + name: Scenario.example(name) for name in Scenario.examples()}
        self._lateral: dict[tuple, LateralRange] = {}
        self._sweeps: dict[str, LateralRange] = {}
        self._trades: dict[tuple, Any] = {}
        self._plan: SearchPlan | None = None
        self._others: list[tuple[str, SearchPlan]] = []
        if scenario is not None:
            self._designs[_FILE + (scenario.name or "scenario")] = scenario
        first = (_FILE + (scenario.name or "scenario")) if scenario is not None else (
            _DEMO + "shallow_dry_powder")

        # ----------------------------------------------------------- controls
        self.spacing = float_slider("lane spacing (m)", 2.0, 0.5, 30.0, 0.25,
                                    tooltip="distance between neighbouring lanes")
        self.spacing.add_class(SPACING_CLASS)
        self.shape = dropdown("debris outline", ["rectangle", "polygon"], "rectangle")
        self.length = float_slider("length (m)", 100.0, 10.0, 1000.0, 5.0, readout_format=".0f")
        self.width = float_slider("width (m)", 60.0, 10.0, 1000.0, 5.0, readout_format=".0f")
        self.corners = widgets.Textarea(
            value="0,0; 120,0; 100,80; 10,60", description="corners x,y (m)",
            continuous_update=False, layout=widgets.Layout(width="380px", height="60px"))
        self.platform = dropdown("platform", list(PLATFORMS), "hand-held or sled")
        self.speed = float_slider("speed (m/s)", 1.0, 0.1, 20.0, 0.1, readout_format=".1f")
        self.height = float_slider("antenna height (m)", 0.3, 0.05, 30.0, 0.05)
        self.trace_rate = float_slider("traces per second", 20.0, 1.0, 500.0, 1.0,
                                       readout_format=".0f")
        self.turn = float_slider("turn at lane end (s)", 10.0, 0.0, 300.0, 1.0,
                                 readout_format=".0f")
        self.design = dropdown("radar design", list(self._designs), first)
        self.upload = widgets.FileUpload(accept=".json", multiple=False,
                                         description="open saved scenario")
        self.lateral_source = dropdown("lateral range", [_ESTIMATE], _ESTIMATE)
        self.sweep_upload = widgets.FileUpload(accept=".nc", multiple=False,
                                               description="open saved sweep")
        self.threshold = float_slider("call level (dB)", DEFAULT_THRESHOLD_DB, 0.0, 40.0, 1.0,
                                      readout_format=".0f",
                                      tooltip="echo over noise and clutter that an operator "
                                              "calls a find")
        self.arrival = float_slider("search starts (min)", 30.0, 0.0, 180.0, 1.0,
                                    readout_format=".0f",
                                    tooltip="minutes from the burial to the start")
        self.dig = float_slider("digging out (min)", 10.0, 0.0, 60.0, 1.0, readout_format=".0f",
                                tooltip="assumption: set from your own training times")
        self.survival = dropdown("survival curve", list(SURVIVAL_TABLES),
                                 DEFAULT_SURVIVAL_TABLE)
        self.depths = dropdown("burial depths", list(DEPTH_DISTRIBUTIONS),
                               DEFAULT_DEPTH_DISTRIBUTION)
        self.team = int_slider("probers in the line", 8, 1, 50)
        self.probe_first = float_slider("s per probe to 1.5 m", 10.0, 2.0, 60.0, 1.0,
                                        readout_format=".0f")
        self.probe_full = float_slider("s per probe, full depth", 20.0, 2.0, 120.0, 1.0,
                                       readout_format=".0f")
        self.compare_platforms = widgets.Checkbox(
            value=False, indent=False, description="compare the other platforms too")
        self.report_button = widgets.Button(description="printable plan (HTML)",
                                            layout=widgets.Layout(width="220px"))
        self.report_button.add_class(REPORT_BUTTON_CLASS)
        self.download = widgets.HTML(value="")
        self.message = message_line()
        self.status = widgets.HTML(value="draws=0")
        self.status.add_class(PLAN_STATUS_CLASS)
        self.summary = widgets.HTML(value="")
        self.table = widgets.HTML(value="")

        # ----------------------------------------------------------- plots
        sx, st, sp = bqplot.LinearScale(min=0.0), bqplot.LinearScale(min=0.0), bqplot.LinearScale(
            min=0.0, max=100.0)
        self._time_line = _line({"x": sx, "y": st}, _BLUE, "time to clear (min)")
        self._pod_line = _line({"x": sx, "y": sp}, _ORANGE, "found, form used (%)")
        self._spacing_rule = _line({"x": sx, "y": sp}, _GREY, "chosen spacing", "dashed")
        self._icar_line = _line({"x": sx, "y": st}, _GREEN, "ICAR 2006: 100 m2/min", "dashed")
        pod_axis = bqplot.Axis(scale=sp, side="right",
                               label="found (%)", grid_lines="none", tick_format=".0f")
        self.spacing_figure = _figure("lane spacing (m)", "time to clear (min)",
                                      [self._time_line, self._pod_line, self._spacing_rule,
                                       self._icar_line],
                                      {"x": sx, "y": st}, extra_axes=(pod_axis,),
                                      x_format=".0f")
        self.spacing_key = widgets.HTML(_key(
            (_BLUE, "solid: time to clear (left)"),
            (_ORANGE, "solid: found by the end, form used (right)"),
            (_GREY, "dashed: chosen spacing"),
            (_GREEN, "dashed: ICAR 2006, 100 m2/min (pass below)")))
        bx, by = bqplot.LinearScale(min=0.0), bqplot.LinearScale(min=0.0, max=100.0)
        s = {"x": bx, "y": by}
        self._found_line = _line(s, _BLUE, "radar: found (%)")
        self._other_form_line = _line(s, _BLUE, "other form", "dashed")
        self._probe_line = _line(s, _GREEN, "probe line: found (%)", "dash_dotted")
        self._survival_line = _line(s, _ORANGE, "survival (%)", "dotted")
        self._survival_points = bqplot.Scatter(x=np.zeros(1, np.float32),
                                               y=np.zeros(1, np.float32), scales=s,
                                               colors=[_ORANGE], default_size=24)
        self._start_rule = bqplot.Lines(
            x=np.zeros((2, 2), np.float32), y=np.zeros((2, 2), np.float32), scales=s,
            colors=[_GREY, _GREY], line_style="dashed", stroke_width=1,
            labels=["search starts", "search ends"])
        self.time_figure = _figure("minutes after the burial", "probability (%)", [
            self._found_line, self._other_form_line, self._probe_line, self._survival_line,
            self._survival_points, self._start_rule], s)
        lx, ly = bqplot.LinearScale(), bqplot.LinearScale(min=0.0, max=100.0)
        self._lateral_lines = bqplot.Lines(
            x=np.zeros((3, 2), np.float32), y=np.zeros((3, 2), np.float32),
            scales={"x": lx, "y": ly}, colors=[_GREEN, _BLUE, _ORANGE], stroke_width=2,
            labels=["", "", ""])
        self.lateral_figure = _figure("offset from the lane (m)", "detection (%)",
                                      [self._lateral_lines], {"x": lx, "y": ly})
        self.time_key = widgets.HTML("")
        self.lateral_key = widgets.HTML("")

        # ----------------------------------------------------------- layout
        area_box = widgets.VBox([section_title("Debris and platform"), self.shape,
                                 self.length, self.width, self.corners, self.platform,
                                 self.speed, self.height, self.trace_rate, self.turn])
        radar_box = widgets.VBox([section_title("Radar design and time"), self.design,
                                  self.upload, self.lateral_source, self.sweep_upload,
                                  widgets.HTML(
                                      "<small>A saved sweep over persons[0].offset_m (and "
                                      "persons[0].depth_m) gives Monte Carlo curves with an "
                                      "interval, at the sweep's own antenna height.</small>"),
                                  self.threshold, self.arrival, self.dig,
                                  self.survival, self.depths])
        probe_box = widgets.VBox([section_title("Probe line"), self.team, self.probe_first,
                                  self.probe_full, widgets.HTML(
                                      "<small>Slalom probing on a 50 x 50 cm grid, 88 % per "
                                      "pass (ICAR / Genswein et al. 2014); the team size "
                                      "and times per probe are yours to set (defaults are "
                                      "assumptions).</small>")])
        tabs = widgets.Tab(children=[area_box, radar_box, probe_box],
                           titles=["Area", "Radar & time", "Probe line"],
                           layout=widgets.Layout(width="430px"))
        left = widgets.VBox([self.spacing, tabs, self.message, self.report_button,
                             self.download, self.status],
                            layout=widgets.Layout(width="440px"))
        right = widgets.VBox([self.time_figure, self.time_key, self.summary,
                              self.spacing_figure, self.spacing_key, self.lateral_figure,
                              self.lateral_key, self.table, self.compare_platforms],
                             layout=widgets.Layout(width="530px"))
        header = widgets.HTML(
            "<h3 style='margin:4px 0'>Search plan: lanes, time and the survival window</h3>"
            "<div>How wide a lane the radar clears, how long the debris takes, and what "
            "that means against published survival curves. "
            + " ".join(html.escape(c) for c in PLAN_CAUTIONS[1:4]) + "</div>")
        super().__init__(children=[header, caution_box(), widgets.HBox(
            [left, right], layout=widgets.Layout(flex_flow="row wrap"))], **kwargs)
        share_plain_styles(self)
        self._sync_shape()
        for w in (self.spacing, self.shape, self.length, self.width, self.corners,
                  self.speed, self.height, self.trace_rate, self.turn, self.design,
                  self.lateral_source,
                  self.threshold, self.arrival, self.dig, self.survival, self.depths,
                  self.team, self.probe_first, self.probe_full, self.compare_platforms):
            w.observe(self._on_control, names="value")
        self.platform.observe(self._on_platform, names="value")
        self.upload.observe(self._on_upload, names="value")
        self.sweep_upload.observe(self._on_sweep_upload, names="value")
        self.report_button.on_click(lambda _b: self.report())
        self._apply_preset(self.platform.value)
        self.redraw()

    # ------------------------------------------------------------------ public API
    @property
    def draws(self) -> int:
        """Number of redraws so far."""
        return self._draws

    @property
    def plan(self) -> SearchPlan | None:
        """The plan on screen (None before the first successful draw)."""
        return self._plan

    @property
    def scenario(self) -> Scenario:
        """The radar design chosen."""
        return self._designs[self.design.value]

    def add_design(self, label: str, scenario: Scenario) -> None:
        """Offer ``scenario`` in the design list under ``file: label`` and choose it."""
        if not isinstance(scenario, Scenario):
            raise ValueError(f"scenario must be a Scenario, got {type(scenario).__name__}")
        if not scenario.persons:
            raise ValueError("the scenario has no buried person: a search plan needs the "
                             "person the radar looks for")
        key = _FILE + label
        self._designs[key] = scenario
        self._busy = True
        try:
            self.design.options = list(self._designs)
            self.design.value = key
        finally:
            self._busy = False
        self.redraw()

    def add_sweep(self, label: str, dataset: Any) -> None:
        """Offer the lateral range curves of a sweep dataset (over ``persons[0].offset_m``,
        optionally ``persons[0].depth_m``) as ``sweep: label`` and choose them."""
        lateral = LateralRange.from_dataset(dataset)
        height = Scenario.from_json(dataset.attrs["base_scenario"]).radar.antenna_height_m
        lateral = LateralRange(lateral.depth_m, lateral.offset_m, lateral.probability,
                               lateral.lower, lateral.upper,
                               f"{lateral.source} ({label}, antenna {height:g} m above the "
                               "snow: the platform height is not used)")
        key = _SWEEP + label
        self._sweeps[key] = lateral
        self._busy = True
        try:
            self.lateral_source.options = [_ESTIMATE, *self._sweeps]
            self.lateral_source.value = key
        finally:
            self._busy = False
        self.redraw()

    def redraw(self) -> None:
        """Recompute the plan and every curve; a refused input shows a message instead."""
        guarded(self.message, self._redraw)

    def report(self) -> str:
        """The printable plan (HTML) of the plan on screen; also offered as a download."""
        if self._plan is None:
            show_message(self.message, "no plan yet: fix the inputs first")
            return ""
        text = plan_html(self._plan, scenario_name=self.design.value,
                         comparison=comparison_rows(self._others, self._plan))
        self.download.value = download_link(
            text, "search-plan.html", "text/html;charset=utf-8",
            "download the printable plan (search-plan.html)", css_class=DOWNLOAD_CLASS)
        return text

    # ------------------------------------------------------------------ internals
    def _area(self) -> DebrisArea:
        if self.shape.value == "rectangle":
            return DebrisArea.rectangle(self.length.value, self.width.value)
        points = []
        for i, pair in enumerate(p for p in self.corners.value.replace("\n", ";").split(";")
                                 if p.strip()):
            parts = pair.replace(" ", "").split(",")
            try:
                x, y = (float(v) for v in parts)
            except ValueError:
                raise ValueError(f"corner {i + 1} = {pair.strip()!r} is not 'x,y' in "
                                 "metres") from None
            points.append((x, y))
        return DebrisArea.polygon(points)

    def _platform_now(self) -> Platform:
        preset = PLATFORMS[self.platform.value]
        values = (self.speed.value, self.height.value, self.trace_rate.value, self.turn.value)
        same = np.allclose(values, (preset.speed_m_s, preset.antenna_height_m,
                                    preset.trace_rate_hz, preset.turn_time_s))
        name = preset.name if same else f"{preset.name} (changed)"
        sources = preset.sources if same else ("platform values set by the user",)
        return Platform(name, *values, sources=sources)

    def _lateral_for(self, scenario: Scenario, height_m: float) -> LateralRange:
        key = (self.design.value, round(height_m, 4), self.threshold.value)
        if key not in self._lateral:
            self._lateral[key] = lateral_range_from_budget(
                scenario, antenna_height_m=height_m, threshold_db=self.threshold.value)
        return self._lateral[key]

    def _redraw(self) -> None:
        scenario = self.scenario
        area = self._area()
        platform = self._platform_now()
        probes = ProbeLine(team_size=self.team.value, first_probe_s=self.probe_first.value,
                           full_probe_s=self.probe_full.value)
        options = {"arrival_min": self.arrival.value, "dig_min": self.dig.value,
                   "depths": self.depths.value, "survival": self.survival.value,
                   "probe_line": probes}
        if self.lateral_source.value == _ESTIMATE:
            lateral = self._lateral_for(scenario, platform.antenna_height_m)
        else:
            lateral = self._sweeps[self.lateral_source.value]
        plan = plan_search(lateral, area, platform, self.spacing.value, **options)
        trade = self._tradeoff(lateral, area, platform)
        others = [(f"this radar, {platform.name}", plan)]
        for name, preset in PLATFORMS.items():
            if name == self.platform.value or not self.compare_platforms.value:
                continue
            lr = self._lateral_for(scenario, preset.antenna_height_m)
            others.append((f"this radar, {name} (link-budget estimate)",
                           plan_search(lr, area, preset, self.spacing.value, **options)))
        self._plan, self._others = plan, others
        self._draw_spacing(trade)
        self._draw_time(plan)
        self._draw_lateral(plan)
        self._write_text(plan, scenario)
        self.download.value = ""
        self._draws += 1
        self.status.value = (f"draws={self._draws} | {plan.form} | "
                             f"{plan.coverage.time_s / 60:.0f} min to clear")

    def _tradeoff(self, lateral: LateralRange, area: DebrisArea, platform: Platform) -> Any:
        """The spacing curve: the fixed spacings are computed once per area, platform,
        curves and depths (a spacing change adds only its own point)."""
        import xarray as xr

        key = (id(lateral), area.vertices_m.tobytes(), platform, self.depths.value)
        if key not in self._trades:
            closest = area.width_across_m() / MAX_LANES  # narrower spacings are refused
            if len(self._trades) > 16:
                self._trades.clear()
            self._trades[key] = spacing_tradeoff(lateral, area, platform,
                                                 _SPACINGS_M[_SPACINGS_M >= closest],
                                                 depths=self.depths.value)
        grid = self._trades[key]
        if np.any(np.isclose(grid["spacing_m"].values, self.spacing.value)):
            return grid
        point = spacing_tradeoff(lateral, area, platform, [self.spacing.value],
                                 depths=self.depths.value)
        return xr.concat([grid, point], dim="spacing_m").sortby("spacing_m")

    def _draw_spacing(self, trade: Any) -> None:
        x = trade["spacing_m"].values
        with self._time_line.hold_sync():
            self._time_line.x = as_f32(x)
            self._time_line.y = as_f32(trade["time_min"].values)
        with self._pod_line.hold_sync():
            self._pod_line.x = as_f32(x)
            self._pod_line.y = as_f32(100.0 * trade["pod"].values)
        with self._spacing_rule.hold_sync():
            self._spacing_rule.x = as_f32([self.spacing.value] * 2)
            self._spacing_rule.y = as_f32([0.0, 100.0])
        # below this line the coverage rate meets the ICAR guideline (area / 100 m2/min)
        icar_min = self._plan.coverage.area_m2 / ICAR_RATE_M2_MIN
        with self._icar_line.hold_sync():
            self._icar_line.x = as_f32([x[0], x[-1]])
            self._icar_line.y = as_f32([icar_min, icar_min])

    def _draw_time(self, plan: SearchPlan) -> None:
        c = plan.curves
        burial = c["burial_minute"].values
        other = "pod_random" if plan.form == "parallel sweep" else "pod_parallel"
        for line, y in ((self._found_line, c["pod"].values),
                        (self._other_form_line, c[other].values),
                        (self._probe_line, c["pod_probe_line"].values)):
            with line.hold_sync():
                line.x = as_f32(burial)
                line.y = as_f32(100.0 * y)
        other_name = "random-search form" if other == "pod_random" else "parallel-sweep form"
        self._other_form_line.labels = [other_name]
        table = plan.survival
        x_end = float(max(burial[-1], table.last_minute))
        with self._survival_line.hold_sync():
            self._survival_line.x, self._survival_line.y = _finite(
                np.array(table.minutes), 100.0 * np.array(table.fraction))
            self._survival_line.labels = [f"survival, {table.name.split(' (')[0]} (%)"]
        self.time_key.value = _key(
            (_BLUE, f"solid: radar found ({plan.form} form); dashed: {other_name}"),
            (_GREEN, "dash-dot: probe line found"),
            (_ORANGE, f"dots: survival, {table.name} (published points; dotted line "
                      "between them interpolated)"),
            (_GREY, "dashed: search starts / ends"))
        with self._survival_points.hold_sync():
            self._survival_points.x = as_f32(table.minutes)
            self._survival_points.y = as_f32(100.0 * np.array(table.fraction))
        end = plan.arrival_min + plan.coverage.time_s / 60.0
        with self._start_rule.hold_sync():
            self._start_rule.x = as_f32([[plan.arrival_min] * 2, [end] * 2])
            self._start_rule.y = as_f32([[0.0, 100.0], [0.0, 100.0]])
        self._found_line.scales["x"].max = x_end

    def _draw_lateral(self, plan: SearchPlan) -> None:
        lr = plan.lateral
        depths = [lr.depth_m[0], plan.median_depth_m, lr.depth_m[-1]]
        x = np.concatenate([-lr.offset_m[::-1], lr.offset_m[1:]])
        ys = []
        for d in depths:
            p = lr.at_depth(d)
            ys.append(100.0 * np.concatenate([p[::-1], p[1:]]))
        with self._lateral_lines.hold_sync():
            self._lateral_lines.x = as_f32(np.tile(x, (3, 1)))
            self._lateral_lines.y = as_f32(np.array(ys))
            self._lateral_lines.labels = [f"{d:.2f} m deep" for d in depths]
        self.lateral_key.value = _key(*((c, f"{d:.2f} m deep") for c, d in zip(
            (_GREEN, _BLUE, _ORANGE), depths, strict=True)), (
            "#444", f"lateral range curves ({lr.source})"))

    def _write_text(self, plan: SearchPlan, scenario: Scenario) -> None:
        items = "".join(f"<li>{html.escape(s)}</li>" for s in plan.summary)
        window = two_way_time_s(scenario, plan.platform.antenna_height_m,
                                float(plan.lateral.depth_m[-1])) * 1.3
        note = ""
        if window > scenario.radar.time_window_s:
            note = (f"<li>At {plan.platform.antenna_height_m:g} m the radar needs a recording "
                    f"window of about {window * 1e9:.0f} ns to reach "
                    f"{plan.lateral.depth_m[-1]:g} m (1.3 x the two-way time, Annan); the "
                    f"design records {scenario.radar.time_window_s * 1e9:.0f} ns: lengthen "
                    "it before flying.</li>")
        self.summary.value = (
            "<div style='font-size:92%'><b>The plan</b> (lateral range used on screen: "
            f"{html.escape(plan.lateral.source)}; a Monte Carlo sweep gives one with an "
            f"interval)<ul style='margin:2px 0 2px 1em;padding:0'>{items}{note}</ul></div>")
        rows = comparison_rows(self._others, plan)
        head, *body = rows
        self.table.value = (
            "<b>Side by side</b><table style='border-collapse:collapse;font-size:90%' "
            "cellpadding='3'><tr>" + "".join(f"<th>{html.escape(h)}</th>" for h in head)
            + "</tr>" + "".join("<tr>" + "".join(f"<td>{html.escape(v)}</td>" for v in r)
                                + "</tr>" for r in body) + "</table>"
            "<div style='font-size:85%'>Transceiver search is not compared: it applies only "
            "when the buried person carries a transceiver, and then it comes first.</div>")

    def _apply_preset(self, name: str) -> None:
        preset = PLATFORMS[name]
        self._busy = True
        try:
            self.speed.value = preset.speed_m_s
            self.height.value = preset.antenna_height_m
            self.trace_rate.value = preset.trace_rate_hz
            self.turn.value = preset.turn_time_s
        finally:
            self._busy = False

    def _sync_shape(self) -> None:
        rect = self.shape.value == "rectangle"
        set_visible(self.length, rect)
        set_visible(self.width, rect)
        set_visible(self.corners, not rect)

    def _on_platform(self, change: dict[str, Any]) -> None:
        self._apply_preset(change["new"])
        self.redraw()

    def _on_control(self, change: dict[str, Any]) -> None:
        if self._busy:
            return
        if change["owner"] is self.shape:
            self._sync_shape()
        self.redraw()

    def _on_upload(self, change: dict[str, Any]) -> None:
        files = change["new"]
        if not files:
            return
        item = files[-1]
        name = str(item.get("name", "scenario"))
        content = bytes(item.get("content", b""))
        self.upload.value = ()
        try:
            self.add_design(name, scenario_files.loads(content, source=name))
        except ValueError as exc:  # the design on screen stays as it was
            show_message(self.message, f"not opened: {exc}")

    def _on_sweep_upload(self, change: dict[str, Any]) -> None:
        files = change["new"]
        if not files:
            return
        item = files[-1]
        name = str(item.get("name", "sweep.nc"))
        content = bytes(item.get("content", b""))
        self.sweep_upload.value = ()
        from snowprobe_widgets.sweeps import load

        try:
            # sweeps.load reads a file: a private temporary one, deleted on closing
            with tempfile.NamedTemporaryFile(suffix=".nc") as tmp:
                tmp.write(content)
                tmp.flush()
                dataset = load(tmp.name)
            self.add_sweep(name, dataset)
        except (ValueError, OSError, KeyError, TypeError) as exc:
            show_message(self.message, f"{name} was not opened as a sweep: "
                         f"{str(exc).replace(tmp.name, name)}")


__all__ = ["DOWNLOAD_CLASS", "PLAN_STATUS_CLASS", "REPORT_BUTTON_CLASS", "SPACING_CLASS",
           "SearchPlanBoard"]
