"""ScenarioExplorer: every control and view around one scenario, in one widget.

Data flow, one direction: controls -> new Scenario (validated by its constructors) ->
simulate -> processing chain -> views. Each stage is recomputed only when its inputs
change:

* the radargram is the sum of three separately cached simulations (layered column with
  its thin clutter layers and clutter scatterers; persons and debris objects; receiver
  noise), each keyed by the scenario parts it reads, so moving a person re-simulates the
  objects only. ``simulate`` is linear in these parts, so the sum equals a full
  simulation to rounding (tests/widgets/test_explorer.py checks it);
* a processing change re-runs the chain on the cached raw section, never the simulation;
* colour changes stay inside the radargram view (no reprocessing);
* the link budget and the materials lab recompute only when their tab is shown;
* the picture goes first: a move sends the new radargram before any other view changes.
  On a served page (:attr:`ScenarioExplorer.views_follow_s`) the other views (scene,
  trace, spectrum, detections, verdict cards, status) follow from the kernel's event loop
  once the picture's message has left, one update for a burst of moves; anything that
  reads them (``budgets``, ``design``, exports) brings them up to date first.

Heavy sliders send their value when released, so the last position always wins.
"""

from __future__ import annotations

import asyncio
import html
import logging
import math
import pathlib
from collections.abc import Callable
from typing import Any

import ipywidgets as widgets
import numpy as np

from snowprobe_widgets import presets
from snowprobe_widgets.budget import link_budget
from snowprobe_widgets.detection import DEFAULT_THRESHOLD_DB
from snowprobe_widgets.fdtd import fdtd_trace, frozen_at
from snowprobe_widgets.fdtd2d import scenario_check
from snowprobe_widgets.fields import screen_message
from snowprobe_widgets.heap import keep_freed_memory
from snowprobe_widgets.processing import ProcessingChain
from snowprobe_widgets.radargram import Radargram
from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.serving import served, work_limits, work_of
from snowprobe_widgets.synthesis import column_optics, simulate
from snowprobe_widgets.trace import echo_times, synthesize_trace
from snowprobe_widgets.validity import scenario_warnings
from snowprobe_widgets.widgets import exports
from snowprobe_widgets.widgets._common import (
    caution_box,
    dropdown,
    float_slider,
    guarded,
    message_line,
    message_text,
    set_visible,
    share_plain_styles,
    show_message,
)
from snowprobe_widgets.widgets.compare import Design, DesignComparison
from snowprobe_widgets.widgets.file_panel import (
    EXPORT_KINDS,
    OPEN_CLASS,
    PATH_CLASS,
    SAVE_CLASS,
    FilePanel,
)
from snowprobe_widgets.widgets.glossary import glossary_html, tip
from snowprobe_widgets.widgets.long_work import LongWork
from snowprobe_widgets.widgets.materials_lab import MaterialsExplorer
from snowprobe_widgets.widgets.panels import (
    DebrisPanel,
    PersonPanel,
    RadarPanel,
    SnowpackEditor,
    build_scenario,
)
from snowprobe_widgets.widgets.processing_panel import STEP_TITLES, ProcessingPanel
from snowprobe_widgets.widgets.radargram_view import RadargramView
from snowprobe_widgets.widgets.verdict import VerdictCards
from snowprobe_widgets.widgets.views import (
    BudgetView,
    CrossSectionView,
    SpectrumView,
    TraceView,
)

#: CSS classes of the app, its control column and its view column (layout tests).
APP_CLASS, CONTROLS_CLASS, VIEWS_CLASS = "sp-app", "sp-controls", "sp-views"
#: How many accepted scenarios "undo" can step back through.
UNDO_DEPTH = 50

#: An update of more work than this (samples x traces x clutter scatterers, about 1 ns
#: each: some 2 s) runs beside the page on a served dashboard, with progress and a stop.
LONG_UPDATE_WORK: float = 2e9

#: On a served page the views other than the picture follow a move this many seconds
#: later (timer restarted by every move): the picture's message leaves the kernel and is
#: drawn first, and moves that come faster than this (a key held or tapped quickly) are
#: not slowed by views the next move replaces. With 30 ms, moves made on each paint
#: waited for the last move's views (~10 ms of CPU) and were no faster than before
#: (tests/benchmarks/bench_dashboard.py).
VIEWS_FOLLOW_S: float = 0.15

#: A served kernel keeps freed memory for the next move (:mod:`snowprobe_widgets.heap`):
#: arrays below the first size come from the heap, and up to the second of freed heap
#: stays with the kernel (a person move of the default design peaks near 20 MB).
HEAP_MMAP_THRESHOLD_BYTES, HEAP_TRIM_THRESHOLD_BYTES = 16 * 2**20, 64 * 2**20

#: A processing chain with an enabled migration runs beside the page (progress, stop) on
#: a served dashboard from this many samples x traces on (a chosen size, not measured).
LONG_MIGRATION_CELLS: int = 1_000_000

#: Layout rules of the app, scoped to it: the control column wraps long labels instead of
#: cutting them, tabs wrap instead of truncating, rows of buttons wrap.
_APP_CSS = f"""<style>
.{APP_CLASS} .{CONTROLS_CLASS} {{ min-width: 0; }}
.{APP_CLASS} .{CONTROLS_CLASS} .jupyter-widgets {{ max-width: calc(100% - 4px); }}
.{APP_CLASS} .{CONTROLS_CLASS} .widget-label {{ white-space: normal; overflow: visible;
  text-overflow: clip; line-height: 1.15; height: auto; min-height: 28px;
  display: flex; align-items: center; }}
.{APP_CLASS} .{CONTROLS_CLASS} .widget-inline-hbox {{ height: auto; min-height: 28px; }}
.{APP_CLASS} .{CONTROLS_CLASS} .widget-checkbox {{ height: auto; }}
.{APP_CLASS} .{CONTROLS_CLASS} .widget-checkbox label {{ white-space: normal; }}
.{APP_CLASS} .lm-TabBar-content {{ flex-wrap: wrap; }}
.{APP_CLASS} .lm-TabBar {{ min-height: auto; height: auto; max-height: none; }}
.{APP_CLASS} .lm-TabBar-tab {{ flex: 0 0 auto !important; max-width: none !important;
  min-width: 0 !important; }}
.{APP_CLASS} .{VIEWS_CLASS} {{ min-width: 0; }}
</style>"""


def readable(name: str) -> str:
    """A demo's registry key as words: "shallow_dry_powder" -> "Shallow dry powder"."""
    words = name.replace("_", " ").strip()
    return words[:1].upper() + words[1:]

_NS = 1e-9


def _column_key(s: Scenario) -> tuple:
    return (s.snowpack, s.ground, s.radar, s.survey, s.clutter)


def _objects_key(s: Scenario) -> tuple:
    return (s.snowpack, s.ground, s.radar, s.survey, s.persons, s.objects)


def _noise_key(s: Scenario) -> tuple:
    return (s.radar, s.survey, s.clutter.seed)


class CachedSimulation:
    """``simulate`` split in three cached parts whose sum is the full radargram.

    Attributes
    ----------
    runs : dict of str to int
        How many times each part was simulated (for tests and the status line).
    """

    PARTS: dict[str, tuple[tuple[str, ...], Any]] = {
        "column": (("layers", "clutter"), _column_key),
        "objects": (("objects",), _objects_key),
        "noise": (("noise",), _noise_key),
    }

    def __init__(self) -> None:
        self._last: dict[str, tuple[tuple, Radargram]] = {}
        self.runs = {name: 0 for name in self.PARTS}

    def __call__(self, scenario: Scenario,
                 progress: Callable[[float], None] | None = None) -> Radargram:
        """The radargram of ``scenario`` (raises ValueError as ``simulate`` does).

        ``progress``, when given, is called with the fraction of parts done after each
        part; an exception it raises stops the simulation (finished parts stay cached).
        """
        parts = {}
        for done, (name, (components, key_of)) in enumerate(self.PARTS.items(), start=1):
            key = key_of(scenario)
            hit = self._last.get(name)
            if hit is not None and hit[0] == key:
                parts[name] = hit[1]
            else:
                rg = simulate(scenario, components=components)
                self._last[name] = (key, rg)
                self.runs[name] += 1
                parts[name] = rg
            if progress is not None:
                progress(done / len(self.PARTS))
        data = parts["column"].data + parts["objects"].data + parts["noise"].data
        o = parts["objects"]
        return Radargram(data, o.time_s, o.position_m, scenario=scenario, truth=o.truth)


def _column_media(s: Scenario) -> tuple[list, np.ndarray]:
    return list(s.snowpack.materials()) + [s.ground.material()], s.snowpack.thicknesses_m


def normalised_correlation(a: np.ndarray, b: np.ndarray) -> float:
    """Zero-lag normalised cross-correlation of two equally sampled traces (1: same shape)."""
    a, b = np.asarray(a, float), np.asarray(b, float)
    den = math.sqrt(float(a @ a) * float(b @ b))
    return float(a @ b) / den if den > 0 else 0.0


class ScenarioExplorer(widgets.VBox):
    """Plan a radar search around one scenario: controls, views, files and exports.

    Parameters
    ----------
    scenario : Scenario, optional
        Starting scenario (default :meth:`Scenario.default`).

    Notes
    -----
    Assign :attr:`scenario` to show another scenario everywhere (the processing chain is
    reset to ``ProcessingChain.default`` at its centre frequency). Parts, all public:
    ``person``, ``snowpack``, ``debris``, ``radar`` (control panels), ``processing``,
    ``section``, ``radargram_view``, ``trace_view``, ``spectrum_view``, ``budget_view``,
    ``materials``.

    A move draws the picture first. With :attr:`views_follow_s` set (served pages: 0.15 s)
    and an event loop running, the other views follow that long after the last move;
    :meth:`flush_views` brings them up to date at once (``budgets``, :meth:`design`, the
    exports and the report call it).
    """

    def __init__(self, scenario: Scenario | None = None, **kwargs: Any) -> None:
        scenario = Scenario.default() if scenario is None else scenario
        self._scenario: Scenario | None = None
        self._raw: Radargram | None = None
        self._shown: Radargram | None = None
        self._chain: ProcessingChain | None = None
        self._echoes: tuple[tuple, list] | None = None
        self._stale = {"budget": True, "materials": True, "compare": True}
        self.simulation = CachedSimulation()
        self.updates = 0
        #: long updates (:data:`LONG_UPDATE_WORK`, :data:`LONG_MIGRATION_CELLS`) run
        #: beside the page with progress and a stop button; on by default when served
        self.background_updates = served()
        self.long_update_work = LONG_UPDATE_WORK
        self.long_migration_cells = LONG_MIGRATION_CELLS
        #: a big survey or a long migration: progress bar and stop button (hidden idle)
        self.update_work = LongWork("stop this update")
        self._precomputed: tuple[Radargram, ProcessingChain, Radargram] | None = None
        #: seconds after a move's picture that the other views follow (None: at once);
        #: on by default when served, and only where an event loop runs
        self.views_follow_s: float | None = VIEWS_FOLLOW_S if served() else None
        if served():
            keep_freed_memory(HEAP_MMAP_THRESHOLD_BYTES, HEAP_TRIM_THRESHOLD_BYTES)
        self._pending: list[Callable[[], None]] = []
        self._pending_timer: asyncio.TimerHandle | None = None

        # controls
        self.person = PersonPanel()
        self.snowpack = SnowpackEditor()
        self.debris = DebrisPanel()
        self.radar = RadarPanel()
        self.processing = ProcessingPanel(scenario.radar.center_frequency_hz,
                                          scenario=scenario)
        self._panels = [self.snowpack, self.person, self.debris, self.radar]
        for p in self._panels:
            p.on_change(self._on_controls)
        self.processing.on_change(self._on_processing)
        self.message = message_line()
        self.controls = widgets.Tab(
            children=[self.person, self.snowpack, self.debris, self.radar, self.processing],
            titles=["Person", "Snow", "Debris", "Radar", "Processing"],
            layout=widgets.Layout(width="100%"))

        # presets, undo, reset, the scenario picker
        self.snow_preset = dropdown("Snow conditions", ["(choose)", *presets.SNOW_PRESETS],
                                    "(choose)")
        self.snow_preset.tooltip = ("Set every layer's density and water for typical snow; "
                                    "the layer thicknesses stay.")
        self.platform_preset = dropdown("Platform", ["(choose)", *presets.PLATFORM_PRESETS],
                                        "(choose)")
        self.platform_preset.tooltip = ("Antenna height and beam of a sled, a drone or a "
                                        "helicopter; the time window grows to reach the ground.")
        self.snow_preset.observe(lambda c: self._preset(c, presets.apply_snow), names="value")
        self.platform_preset.observe(lambda c: self._preset(c, presets.apply_platform),
                                     names="value")
        self.undo_button = widgets.Button(description="undo", tooltip="undo the last change",
                                          layout=widgets.Layout(width="auto"), disabled=True)
        self.reset_button = widgets.Button(
            description="reset", tooltip="back to the scenario as it was opened",
            layout=widgets.Layout(width="auto"))
        self.undo_button.on_click(lambda _: self.undo())
        self.reset_button.on_click(lambda _: self.reset())
        self._history: list[Scenario] = []
        self._origin = scenario
        self._examples: dict[str, Scenario] = {}
        self.demo = widgets.Dropdown(options=self._demo_options(None), description="Scenario",
                                     style={"description_width": "auto"},
                                     layout=widgets.Layout(width="auto", max_width="100%"))
        self.demo.observe(self._on_demo, names="value")

        # views
        self.section = CrossSectionView()
        self.radargram_view = RadargramView(show_truth=False)
        set_visible(self.radargram_view.status, False)  # a developer counter: tests read it
        self.show_processed = widgets.ToggleButtons(
            options=["processed", "raw"], value="processed", description="section",
            style={"button_width": "auto"})
        self.mark_detections = widgets.Checkbox(value=False, indent=False,
                                                description="mark automatic detections",
                                                layout=widgets.Layout(width="auto"))
        self.detection_threshold = float_slider(
            "Detection level (dB)", DEFAULT_THRESHOLD_DB, 0.0, 60.0, 1.0, readout_format=".0f",
            tooltip=tip("detection level", "dB"))
        self.detection_threshold.layout = widgets.Layout(width="320px", max_width="100%")
        self.detection_list = widgets.HTML()
        self.verdicts = VerdictCards()
        self._budgets: dict[tuple, Any] = {}
        self._current_budgets: list[Any] = []
        self._problems: list[str] = []
        self.trace_view = TraceView()
        self.spectrum_view = SpectrumView()
        self.budget_view = BudgetView()
        self.materials = MaterialsExplorer()
        self.glossary = widgets.HTML(glossary_html())
        self.compare = DesignComparison()
        self.pin_button = widgets.Button(
            description="pin as design A", tooltip="keep this design as A to compare the "
            "next changes with it (tab Compare A/B)", layout=widgets.Layout(width="auto"))
        self.pin_button.on_click(lambda _: self.pin_design())
        # plots in a hidden tab have no size and bqplot logs errors drawing them, so each
        # tab gets its view the first time it is shown
        self._lower_views = [self.trace_view, self.spectrum_view, self.budget_view,
                             self.materials, self.compare, self.glossary]
        #: the full-wave checks run beside the page, with progress and a stop button
        self.long_work = LongWork("stop the full-wave check")
        self._lower_slots = [widgets.VBox([self.trace_view, self.long_work.stop_button])] + [
            widgets.VBox() for _ in range(len(self._lower_views))]
        #: The "Detection probability" tab's view, made when the tab is first shown.
        self.detectability: Any = None
        self.lower = widgets.Tab(
            children=self._lower_slots,
            titles=["Trace", "Spectrum", "Link budget", "Materials lab", "Compare A/B",
                    "Glossary", "Detection probability"])
        # every callback runs guarded: a fault shows a plain message, never a traceback
        self.lower.observe(self._safe(self._fill_tab), names="selected_index")
        self.show_processed.observe(self._safe(self._show_section), names="value")
        self.mark_detections.observe(self._safe(self._update_detections), names="value")
        self.detection_threshold.observe(self._safe(self._on_level), names="value")
        self.radargram_view.observe(self._safe(self._on_pick, True),
                                    names="picked_trace_index")
        self.lower.observe(self._safe(self._refresh_lazy), names="selected_index")
        self.trace_view.fdtd_button.on_click(
            self._safe(lambda: self.run_fdtd(background=True)))
        self.trace_view.fdtd2d_button.on_click(
            self._safe(lambda: self.run_fdtd2d(background=True)))
        self._check2d_at: float | None = None  # position of the 2-D check on screen


        # files: upload/download when served, paths in a notebook (widgets/file_panel.py)
        self.files = FilePanel(get_scenario=lambda: self.scenario,
                               set_scenario=self._show_opened,
                               export_bytes=self.export_bytes)
        # one scenario picker, in the header (it names the scenario on screen)
        for w in (self.files.demo, self.files.demo_button):
            set_visible(w, False)
        self.status = widgets.HTML()
        set_visible(self.status, False)  # a developer counter: tests read it
        #: where a buried object's scattering method is outside its domain (model's words)
        self.validity = widgets.HTML()

        wrap = widgets.Layout(flex_flow="row wrap", align_items="center")
        left = widgets.VBox(
            [widgets.HBox([self.undo_button, self.reset_button], layout=wrap),
             self.snow_preset, self.platform_preset, self.controls, self.message, self.status,
             self.validity],
            layout=widgets.Layout(flex="0 0 auto", width="38%", min_width="330px",
                                  max_width="440px"))
        left.add_class(CONTROLS_CLASS)
        right = widgets.VBox([
            self.section, self.radargram_view,
            self.update_work.box,
            widgets.HBox([self.show_processed, self.mark_detections, self.detection_threshold],
                         layout=wrap),
            self.detection_list, self.lower], layout=widgets.Layout(flex="1 1 0%", min_width="0"))
        right.add_class(VIEWS_CLASS)
        header = widgets.HTML(
            "<h3 style='margin:2px 0'>Radar search planner</h3><div>Would this radar see a "
            "person buried here? Change the snow, the person, the debris and the radar.</div>")
        top = widgets.HBox([header, widgets.HBox([self.pin_button, self.demo], layout=wrap)],
                           layout=widgets.Layout(flex_flow="row wrap", align_items="center",
                                                 justify_content="space-between"))
        super().__init__(children=[widgets.HTML(_APP_CSS), top, caution_box(),
                                   self.verdicts, widgets.HBox([left, right]), self.files],
                         **kwargs)
        self.add_class(APP_CLASS)
        share_plain_styles(self)
        self.scenario = scenario

    # ------------------------------------------------------------------ public API
    @property
    def scenario(self) -> Scenario:
        """The scenario on screen (the last one accepted)."""
        assert self._scenario is not None
        return self._scenario

    @scenario.setter
    def scenario(self, scenario: Scenario) -> None:
        if not isinstance(scenario, Scenario):
            raise ValueError(f"scenario must be a Scenario, got {type(scenario).__name__}")
        self._origin = scenario
        self._show(scenario)

    def _show(self, scenario: Scenario, reset_chain: bool = True, record: bool = True) -> None:
        """Show ``scenario`` in every control and view (``reset_chain``: the processing
        goes back to its default; ``record``: the scenario left can be undone)."""
        for p in self._panels:
            p.show(scenario)
        if reset_chain:
            self.processing.show(ProcessingChain.for_radar(scenario.radar))
        first = scenario.persons[0].position_m if scenario.persons else \
            0.5 * (scenario.survey.start_m + scenario.survey.end_m)
        self._accept(scenario, pick_m=first, keep_limits=True, record=record)

    def undo(self) -> bool:
        """Go back to the scenario before the last accepted change; False if none."""
        if not self._history:
            return False
        self._show(self._history.pop(), reset_chain=False, record=False)
        show_message(self.message, "")
        return True

    def reset(self) -> None:
        """Go back to the scenario as it was opened (the demo, the file or the start)."""
        self._show(self._origin)
        show_message(self.message, "")

    @property
    def budgets(self) -> tuple[Any, ...]:
        """The link budget of each buried person on screen, in order (None where refused),
        at the detection level set on screen."""
        self.flush_views()
        return tuple(self._current_budgets)

    @property
    def chain(self) -> ProcessingChain | None:
        """The processing chain last applied."""
        return self._chain

    @property
    def raw_radargram(self) -> Radargram | None:
        """The simulated section before processing."""
        return self._raw

    @property
    def radargram(self) -> Radargram | None:
        """The section on screen (processed or raw, as chosen)."""
        return self._shown

    def save_file(self, path: str | None = None, *,
                  overwrite: bool | None = None) -> pathlib.Path | None:
        """Save the scenario on screen to ``path`` (notebook use; see :class:`FilePanel`).

        An existing file is replaced only with ``overwrite=True``. Returns the path written,
        or None when refused (the reason is shown in ``files.message``).
        """
        return self.files.save_file(path, overwrite=overwrite)

    def open_file(self, path: str | None = None) -> bool:
        """Open a scenario file (notebook use; see :class:`FilePanel`); True on success."""
        return self.files.open_file(path)

    def _show_opened(self, scenario: Scenario) -> None:
        self.scenario = scenario

    # ------------------------------------------------------------------ pipeline
    def _safe(self, action: Any, pass_change: bool = False) -> Any:
        """A widget callback running ``action`` under :func:`guarded`."""
        def callback(change: Any) -> None:
            guarded(self.message, (lambda: action(change)) if pass_change else action,
                    self._restore_controls)

        return callback

    def _restore_controls(self) -> None:
        """Put every control back to the scenario and chain on screen."""
        if self._scenario is not None:
            for p in self._panels:
                p.show(self._scenario, keep_selection=True)
        if self._chain is not None:
            self.processing.show(self._chain)

    def _on_controls(self) -> None:
        base = self._scenario
        if base is None:
            return
        new: list[Scenario] = []
        if guarded(self.message, lambda: new.append(build_scenario(base, self._panels)),
                   self._restore_controls):
            self._accept(new[0])
        else:  # the controls go back to the accepted scenario; the message stays
            self._restore_controls()

    def _on_processing(self) -> None:
        raw = self._raw
        if raw is None:
            return
        if not guarded(self.message, self._refuse_while_busy, self._restore_controls):
            return
        chain = self.processing.chain()
        if self.background_updates and self._long_chain(chain, raw.data.size):
            self.update_work.run(lambda: self._in_background(
                lambda: self._long_process(raw, chain)), background=True)
        else:
            self._process()

    def _in_background(self, job: Callable[[], None]) -> None:
        """Run a long update's ``job``, then put every control back to what the page shows
        (the new state, or the old one after a stop or a refusal)."""
        try:
            job()
        finally:
            self._precomputed = None
            try:
                self._restore_controls()
            except Exception:  # in a worker thread: to the log, the page keeps its message
                logging.getLogger("snowprobe_widgets").exception("restoring controls failed")

    def _refuse_while_busy(self) -> None:
        if self.update_work.running:
            raise ValueError("the page is still working on the last change: wait for it "
                             "or press 'stop this update'")

    def _long_chain(self, chain: ProcessingChain, cells: int) -> bool:
        """True when ``chain`` migrates a section of ``cells`` samples x traces that is
        long enough to run beside the page."""
        migrates = "migrate" in [s.name for s in chain.steps if s.enabled]
        return migrates and cells >= self.long_migration_cells

    def _long_process(self, raw: Radargram, chain: ProcessingChain) -> None:
        """Background job: a long chain with progress, then the usual display."""
        progress = self.update_work.progress()

        def run() -> None:
            progress(0.0)
            self._precomputed = (raw, chain, chain.apply(raw, progress))

        if guarded(self.message, run, self._restore_controls):
            guarded(self.message, self._process, self._restore_controls)

    def _accept(self, scenario: Scenario, pick_m: float | None = None,
                keep_limits: bool = False, record: bool = True) -> None:
        def check() -> None:
            self._refuse_while_busy()
            work_limits().check(scenario)

        if not guarded(self.message, check, self._restore_controls):
            return
        cells = scenario.radar.n_samples * scenario.survey.n_traces
        if self.background_updates and (work_of(scenario) >= self.long_update_work
                                        or self._long_chain(self.processing.chain(), cells)):
            self.update_work.run(lambda: self._in_background(lambda: self._accept_now(
                scenario, pick_m, keep_limits, record, self.update_work.progress())),
                background=True)
        else:
            self._accept_now(scenario, pick_m, keep_limits, record, None)

    def _accept_now(self, scenario: Scenario, pick_m: float | None, keep_limits: bool,
                    record: bool, progress: Any) -> None:
        """Simulate (and, in the background, process) ``scenario``, then show it.

        With ``progress`` (a :meth:`LongWork.progress` callback) the heavy parts report
        their fraction done and a stop ends them before anything on screen changed.
        """
        raw: list[Radargram] = []

        def run() -> None:
            if progress is None:
                raw.append(self.simulation(scenario))
                return
            progress(0.0)
            raw.append(self.simulation(scenario, progress=lambda f: progress(0.7 * f)))
            chain = self.processing.chain().fitted_to(scenario.radar)
            self._precomputed = (raw[0], chain, chain.apply(
                raw[0], lambda f: progress(0.7 + 0.3 * f)))

        if not guarded(self.message, run, self._restore_controls):
            return
        if not guarded(self.message, lambda: self._show_accepted(scenario, raw[0], pick_m,
                                                                 keep_limits, record),
                       self._restore_controls):
            return

    def _show_accepted(self, scenario: Scenario, raw: Radargram, pick_m: float | None,
                       keep_limits: bool, record: bool) -> None:
        old = self._scenario
        if old is not None and old.radar != scenario.radar:
            # a new sampling may put the tuned band above Nyquist or the dewow window
            # beyond the record: fit them, keep everything else the user chose
            chain = self.processing.chain()
            fitted = chain.fitted_to(scenario.radar)
            if fitted != chain:
                self.processing.show(fitted)
        if old is not None and not keep_limits:
            for p in self._panels:  # slider ranges follow the new scenario
                p.follow(scenario)
        if old is not None and record and old is not scenario:
            self._history = (self._history + [old])[-UNDO_DEPTH:]
        self.undo_button.disabled = not self._history
        self._scenario = scenario
        self._raw = raw
        if old is None or _column_media_key(old) != _column_media_key(scenario) or (
                self._check2d_at is not None and old != scenario):
            self.trace_view.clear_reference()
            self._check2d_at = None
        if pick_m is not None:
            self.radargram_view.picked_position_m = None
        self.processing.follow_antenna_height(scenario.radar.antenna_height_m)
        if old is None or old.radar != scenario.radar or old.survey != scenario.survey:
            self.processing.follow(scenario)
        self._stale = {"budget": True, "materials": True, "compare": True}
        self.updates += 1
        self._process(pick_m)  # the picture first
        self._after_picture(self._update_scene, self._update_verdicts, self._sync_demo,
                            self._refresh_lazy, self._update_status)

    def _update_scene(self) -> None:
        self.section.update(self.scenario)

    def _update_status(self) -> None:
        runs = self.simulation.runs
        self.status.value = (f"<small>updates={self.updates} | simulated: column "
                             f"{runs['column']}x, objects {runs['objects']}x, noise "
                             f"{runs['noise']}x</small>")
        self.validity.value = "".join(f"<small>&#9888; {html.escape(w)}</small><br>"
                                      for w in scenario_warnings(self.scenario))

    def _after_picture(self, *jobs: Callable[[], None]) -> None:
        """Run ``jobs`` (view updates) now, or :attr:`views_follow_s` after the last
        picture when an event loop runs (each job once, in the order first asked)."""
        for job in jobs:
            if job not in self._pending:
                self._pending.append(job)
        loop = None
        if self.views_follow_s is not None:
            try:
                loop = asyncio.get_running_loop()
            except RuntimeError:  # a script, or a long update's worker thread
                pass
        self._cancel_timer()  # every move restarts the wait
        if loop is None:
            self._run_pending()
        else:
            self._pending_timer = loop.call_later(self.views_follow_s, self._views_follow)

    def _cancel_timer(self) -> None:
        if self._pending_timer is not None:
            self._pending_timer.cancel()
            self._pending_timer = None

    def _run_pending(self) -> None:
        jobs, self._pending = self._pending, []
        for job in jobs:
            job()

    def _views_follow(self) -> None:
        """The timer's call: the views follow the picture; a fault shows a message."""
        self._pending_timer = None
        jobs, self._pending = self._pending, []
        failed: list[Exception] = []
        for job in jobs:
            try:
                job()
            except Exception as exc:  # the other views still follow
                failed.append(exc)

        def report() -> None:
            raise failed[0]

        if failed:  # a plain message, as for any callback (a success clears nothing)
            guarded(self.message, report, self._restore_controls)

    def flush_views(self) -> None:
        """Bring the views that follow the picture up to date now (see the module notes)."""
        self._cancel_timer()
        self._run_pending()

    def _update_verdicts(self) -> None:
        """One verdict card per buried person, from the model's budgets (cached per person
        and detection level, so a processing or colour change recomputes nothing)."""
        s, thr = self.scenario, float(self.detection_threshold.value)
        cache: dict[tuple, Any] = {}
        budgets, problems = [], []
        for i, p in enumerate(s.persons):
            key = (i, p, s.snowpack, s.ground, s.radar, s.survey, s.clutter, thr)
            hit = self._budgets.get(key)
            if hit is None:
                try:
                    hit = (link_budget(s, p, threshold_db=thr), "")
                except ValueError as exc:
                    hit = (None, screen_message(exc))
            cache[key] = hit
            budgets.append(hit[0])
            problems.append(hit[1])
        self._budgets = cache
        self._current_budgets = budgets
        self._problems = problems
        self.verdicts.show(s, budgets, problems)

    def design(self) -> Design:
        """The design on screen: scenario, section on screen and budgets."""
        self.flush_views()
        return Design(self.scenario, self._shown, tuple(self._current_budgets),
                      tuple(self._problems))

    def pin_design(self) -> None:
        """Keep the design on screen as A of the comparison (tab Compare A/B)."""
        self.compare.pin(self.design())
        self._stale["compare"] = False
        self.files.status.value = "design A pinned: change the design and open Compare A/B"

    def _refresh_compare(self) -> None:
        view = self.radargram_view
        self.compare.refresh(self.design(), view.colour_dropdown.value, view.clip_slider.value)
        self._stale["compare"] = False

    def _on_level(self) -> None:
        self._update_verdicts()
        self._stale["budget"] = self._stale["compare"] = True
        self._refresh_lazy()
        self._update_detections()

    def _example(self, name: str) -> Scenario:
        if name not in self._examples:
            self._examples[name] = Scenario.example(name)
        return self._examples[name]

    def _demo_options(self, scenario: Scenario | None) -> list[tuple[str, str]]:
        names = Scenario.examples()
        options = [(readable(k), k) for k in names]
        if scenario is None or (scenario.name in names
                                and self._example(scenario.name) == scenario):
            return options
        label = readable(scenario.name) if scenario.name else "Unnamed scenario"
        return [(f"{label} (changed)" if scenario.name in names else label, "")] + options

    def _sync_demo(self) -> None:
        """The scenario picker names the scenario on screen ("... (changed)" after edits)."""
        s = self.scenario
        options = self._demo_options(s)
        value = options[0][1] if options[0][1] == "" else s.name
        self._quiet_demo = True
        try:
            if list(self.demo.options) != options:
                self.demo.options = options
            if value in [v for _, v in options]:
                self.demo.value = value
        finally:
            self._quiet_demo = False

    def _on_demo(self, change: Any) -> None:
        if getattr(self, "_quiet_demo", False) or not change["new"]:
            return
        self.scenario = self._example(change["new"])
        self.files.status.value = f"demo {html.escape(readable(change['new']))}"

    def _preset(self, change: Any, apply: Any) -> None:
        name = change["new"]
        if name == "(choose)" or self._scenario is None:
            return
        new: list[Scenario] = []
        if guarded(self.message, lambda: new.append(apply(self.scenario, name))):
            self._show(new[0], reset_chain=False)
        change["owner"].value = "(choose)"  # ready for the next choice (fires a no-op)

    def _fill_tab(self) -> None:
        i = self.lower.selected_index
        if i == len(self._lower_views) and self.detectability is None:
            from snowprobe_widgets.widgets.detectability import DetectabilityView

            # sweeps start from the scene on screen; a clicked cell comes back here
            self.detectability = DetectabilityView(explorer=self,
                                                   base_from=lambda: self.scenario)
            self._lower_slots[i].children = [self.detectability]
        elif i is not None and i < len(self._lower_views) \
                and not self._lower_slots[i].children:
            self._lower_slots[i].children = [self._lower_views[i]]

    def _process(self, pick_m: float | None = None) -> None:
        raw = self._raw
        if raw is None:
            return
        chain: list[ProcessingChain] = []
        done: list[Radargram] = []

        def run() -> None:
            c = self.processing.chain()
            ready, self._precomputed = self._precomputed, None
            if ready is not None and ready[0] is raw and ready[1] == c:
                done.append(ready[2])  # computed beside the page, with progress
            else:
                done.append(c.apply(raw))
            chain.append(c)

        if not guarded(self.message, run, self._restore_controls):
            if self._chain is not None:  # a refused setting goes back to the chain on screen
                self.processing.show(self._chain)
            return
        self._chain = chain[0]
        self._processed = done[0]
        self._show_section(pick_m)
        self._after_picture(self._update_detections)

    def _show_section(self, pick_m: float | None = None) -> None:
        processed = getattr(self, "_processed", None)
        if processed is None or self._raw is None:
            return
        rg = processed if self.show_processed.value == "processed" else self._raw
        self._shown = rg
        view = self.radargram_view
        view.radargram = rg
        echoes = self._column_echoes()
        times = dict(echoes)
        if "surface" in times:
            view.set_depth_axis(times["surface"],
                                column_optics(self.scenario).mean_velocity_m_s)
        if pick_m is not None or view.picked_position_m is None:
            view.pick_position(pick_m if pick_m is not None else float(rg.position_m[0]))
        self._after_picture(self._update_trace)

    def _column_echoes(self) -> list[tuple[str, float]]:
        """Labelled interface echo times of the layered column (cached per column)."""
        s = self.scenario
        key = _column_media_key(s)
        if self._echoes is None or self._echoes[0] != key:
            mats, d = _column_media(s)
            r = s.radar
            times = echo_times(mats, d, r.antenna_height_m, r.center_frequency_hz)
            self._echoes = (key, [(str(n), float(t)) for n, t in times])
        return self._echoes[1]

    def _update_trace(self) -> None:
        rg, view = self._shown, self.radargram_view
        if rg is None or view.picked_trace_index is None:
            return
        i = min(int(view.picked_trace_index), rg.position_m.size - 1)
        x = float(rg.position_m[i])
        amp = rg.data[:, i]
        echoes = list(self._column_echoes())
        for t in rg.truth:
            target = self._target_near(t, x)
            if target:
                echoes.append((f"{t.label or t.kind} (top, from straight above)",
                               t.apex_time_s))
        which = "processed" if rg is not self._raw else "raw"
        self.trace_view.update(rg.time_s, amp, echoes,
                               f"Trace at {x:.2f} m along the line ({which})")
        self.spectrum_view.update(self.scenario.radar.make_pulse(), rg.dt_s, amp)
        self.section.set_pick(x)

    def _target_near(self, marker: Any, x_m: float) -> bool:
        for obj in self.scenario.targets:
            if obj.position_m == marker.position_m and obj.depth_m == marker.depth_m:
                return abs(obj.position_m - x_m) <= obj.half_extent_m
        return False

    def _on_pick(self, change: Any) -> None:
        if change["new"] is not None:
            self._after_picture(self._update_trace)
            if self._check2d_at is not None and \
                    self.radargram_view.picked_position_m != self._check2d_at:
                self.trace_view.clear_reference()  # the 2-D check holds for one position
                self._check2d_at = None

    def _update_detections(self) -> None:
        view = self.radargram_view
        if not self.mark_detections.value or self._raw is None:
            view.set_detections([])
            self.detection_list.value = ""
            return
        found: list[list] = []

        def run() -> None:
            from snowprobe_widgets.detection import detect

            found.append(detect(self._raw, threshold=self.detection_threshold.value))

        if not guarded(self.message, run):
            return
        dets = found[0]
        self._detections = dets
        view.set_detections([(d.position_m, d.time_s, f"{d.score:.0f} dB") for d in dets])
        items = "".join(f"<li>{html.escape(d.reason)}</li>" for d in dets[:8])
        more = f"<li>... and {len(dets) - 8} more</li>" if len(dets) > 8 else ""
        self.detection_list.value = (f"<small>{len(dets)} detection(s):<ul>{items}{more}"
                                     "</ul></small>")

    def _refresh_lazy(self) -> None:
        shown = self.lower.selected_index
        if shown == 2 and self._stale["budget"]:
            self.budget_view.update(self.scenario, self._current_budgets)
            self._stale["budget"] = False
        if shown == self._lower_views.index(self.compare) and self._stale["compare"]:
            self._refresh_compare()
        if shown == 3 and self._stale["materials"]:
            self.materials.scenario = self.scenario
            self._stale["materials"] = False

    # ------------------------------------------------------------------ FDTD
    def run_fdtd(self, background: bool = False) -> float | None:
        """Full-wave check of the snow column at the picked position.

        Runs the 1-D FDTD solver (:func:`snowprobe_widgets.fdtd.fdtd_trace`) over the snow
        layers and ground, and the frequency-domain plane-wave trace of the same media
        frozen at the centre frequency (:func:`snowprobe_widgets.fdtd.frozen_at`); shows
        both and their normalised cross-correlation. Returns that number (None if refused
        or stopped). With ``background=True`` (the page's button) it runs beside the page
        (:class:`LongWork`: progress, stop button) and returns None at once.
        """
        return self.long_work.run(self._fdtd_job, background)

    def _fdtd_job(self) -> float | None:
        s = self.scenario
        mats, d = _column_media(s)
        r = s.radar
        pulse = r.make_pulse()
        tv = self.trace_view
        tv.progress.value = 0.0
        out: list[tuple] = []
        progress = self.long_work.progress(lambda f: setattr(tv.progress, "value", f))

        def run() -> None:
            res = fdtd_trace(mats, d, antenna_height_m=r.antenna_height_m, pulse=pulse,
                             dt_s=r.dt_s, n_samples=r.n_samples, progress=progress)
            frozen = [frozen_at(m, pulse.center_frequency_hz) for m in mats]
            fd = synthesize_trace(frozen, d, antenna_height_m=r.antenna_height_m, pulse=pulse,
                                  dt_s=r.dt_s, n_samples=r.n_samples, mode="plane")
            out.append((res, fd))

        tv.fdtd_button.disabled = True
        try:
            ok = guarded(tv.message, run)
        finally:
            tv.fdtd_button.disabled = False
        if not ok:
            return None
        res, fd = out[0]
        ncc = normalised_correlation(res.trace.amplitude, fd.amplitude)
        x = self.radargram_view.picked_position_m
        where = f" at {x:.2f} m" if x is not None else ""
        tv.show_reference(
            res.trace.time_s, res.trace.amplitude, fd.amplitude,
            f"Full-wave check of the snow column{where}: agreement (normalised "
            f"cross-correlation) <b>{ncc:.4f}</b> (1 = same shape); FDTD {res.grid.n_cells} "
            f"cells x {res.grid.n_steps} steps in {res.elapsed_s:.2f} s. Both use the media "
            "frozen at the centre frequency, as plane waves.")
        self.fdtd_agreement = ncc
        self._check2d_at = None
        return ncc

    def run_fdtd2d(self, background: bool = False) -> float | None:
        """2-D full-wave check of the first buried object at the picked position.

        Runs :func:`snowprobe_widgets.fdtd2d.scenario_check` (the object as a cylinder
        across the line, said on screen) and overlays its echo and the model's echo of the
        object; returns their normalised cross-correlation (None if refused or stopped).
        ``background`` as in :meth:`run_fdtd`.
        """
        return self.long_work.run(self._fdtd2d_job, background)

    def _fdtd2d_job(self) -> float | None:
        tv = self.trace_view
        x = self.radargram_view.picked_position_m
        x = float(self.scenario.survey.position_m[0]) if x is None else float(x)
        tv.progress2d.value = 0.0
        out: list = []
        progress = self.long_work.progress(lambda f: setattr(tv.progress2d, "value", f))

        tv.fdtd2d_button.disabled = True
        try:
            ok = guarded(tv.message, lambda: out.append(
                scenario_check(self.scenario, x, progress=progress)))
        finally:
            tv.fdtd2d_button.disabled = False
        if not ok:
            return None
        res = out[0]
        g = res.fdtd.grid
        tv.show_reference(
            res.fdtd.time_s, res.fdtd.point_source, res.model_amplitude,
            f"2-D check at {x:.2f} m: {html.escape(res.description)}. Agreement with the "
            f"model's echo of the object itself (normalised cross-correlation) "
            f"<b>{res.agreement:.3f}</b>; envelope peaks {res.delay_difference_s * 1e9:+.2f}"
            f" ns apart. Shapes and times compare; amplitudes do not (2-D line source, "
            f"3-D model). FDTD {g.nx} x {g.nz} cells x {g.n_steps} steps, computed to "
            f"{res.fdtd.computed_until_s * 1e9:.1f} ns, in {res.fdtd.elapsed_s:.1f} s.",
            labels=("2-D FDTD, object as a cylinder (normalised)",
                    "model, object alone (normalised)"))
        self.fdtd2d_agreement = res.agreement
        self._check2d_at = x
        return res.agreement

    # ------------------------------------------------------------------ files
    def export_paths(self) -> dict[str, pathlib.Path]:
        """Where :meth:`export` writes: next to the file panel's path, same stem."""
        return self.files.export_paths()

    def export(self, kind: str, *, overwrite: bool | None = None) -> pathlib.Path | None:
        """Write one export next to the scenario file: ``"csv"``, ``"npz"``, ``"png"`` or
        ``"report"`` (notebook use; a served page offers downloads instead)."""
        return self.files.export(kind, overwrite=overwrite)

    def export_bytes(self, kind: str) -> bytes:
        """The bytes of one export of what is on screen (layouts in ``widgets.exports``)."""
        self.flush_views()
        rg, raw = self._shown, self._raw
        if rg is None or raw is None:
            raise ValueError("nothing to export yet")
        view = self.radargram_view
        if kind == "csv":
            return exports.csv_bytes(rg)
        if kind == "budget_csv":
            return exports.budget_csv_bytes(self.scenario, self._current_budgets)
        if kind == "netcdf":
            return exports.netcdf_bytes(rg, raw)
        if kind == "npz":
            return exports.npz_bytes(
                rg, raw, scenario_json=self.scenario.to_json(),
                processing_json=self._chain.to_json() if self._chain else "")
        if kind == "png":
            return exports.figure_png(rg, view.colour_dropdown.value, view.clip_slider.value,
                                      self._figure_title(rg))
        if kind == "report":
            return self.report().encode("utf-8")
        if kind == "compare":
            self._refresh_compare()
            return self.compare.html().encode("utf-8")
        raise ValueError(f"kind = {kind!r}; allowed: {', '.join(EXPORT_KINDS)}")

    def report(self) -> str:
        """The one-page HTML design summary of what is on screen (full tables after a page
        break; :func:`snowprobe_widgets.widgets.exports.report_html`)."""
        self.flush_views()
        s, rg, view = self.scenario, self._shown, self.radargram_view
        if rg is None:
            raise ValueError("nothing to report yet")
        png = exports.figure_png(rg, view.colour_dropdown.value, view.clip_slider.value,
                                 self._figure_title(rg))
        steps = [f"{STEP_TITLES.get(st.name, st.name)} ({', '.join(f'{k}={v:g}' if isinstance(v, float) else f'{k}={v}' for k, v in st.params)})"  # noqa: E501
                 for st in (self._chain.steps if self._chain else ()) if st.enabled]
        dets = [d.reason for d in getattr(self, "_detections", [])] \
            if self.mark_detections.value else []
        caption = (f"{self._figure_title(rg)}: {rg.data.shape[1]} traces, "
                   f"{rg.data.shape[0]} samples; colours {view.colour_dropdown.value}, "
                   f"clipped at the {view.clip_slider.value:g} % amplitude.")
        return exports.report_html(s, picture_png=png, budgets=self._current_budgets,
                                   problems=self._problems, processing=steps,
                                   detections=dets, figure_caption=caption)

    def _figure_title(self, rg: Radargram) -> str:
        which = "processed" if rg is not self._raw else "raw"
        return f"Radargram ({which}) of {self.scenario.name or 'the scenario'}"

    @property
    def message_text(self) -> str:
        """The refusal shown next to the controls ('' when none)."""
        return message_text(self.message)

    def show_message(self, text: str) -> None:
        """Show a plain message next to the controls."""
        show_message(self.message, text)


def _column_media_key(s: Scenario) -> tuple:
    return (s.snowpack, s.ground, s.radar)


__all__ = ["OPEN_CLASS", "PATH_CLASS", "SAVE_CLASS", "CachedSimulation", "ScenarioExplorer",
           "normalised_correlation"]
