"""TrainingSession: blind radargram rounds, marks, debrief, summary and an instructor's view.

The widget holds no physics and, before an answer is submitted, no truth: the round's
:class:`~snowprobe_widgets.training.Exercise` stays in a private Python attribute, and
what reaches the browser is the searcher's view only (the processed section stripped of
its truth, the depth scale, the prompt). After "submit" the debrief shows the scene to
scale with the truth, the trainee's marks and the detector's picks.

Controls are large (at least 44 px high, for gloved fingers on a tablet) and every hint is
written out, never in a hover tooltip only. Files leave by browser download (data-URL
links) and come in by upload: nothing is written on the server.
"""

from __future__ import annotations

import base64
import html
import secrets
import time
from typing import Any

import bqplot
import ipywidgets as widgets
import numpy as np

from snowprobe_widgets import training as T
from snowprobe_widgets.widgets import exports
from snowprobe_widgets.widgets._common import (
    as_f32,
    caution_box,
    download_link,
    message_line,
    set_visible,
    share_plain_styles,
    show_message,
)
from snowprobe_widgets.widgets.radargram_view import RadargramView
from snowprobe_widgets.widgets.views import CrossSectionView

__all__ = ["STATUS_CLASS", "TrainingSession", "download_link"]

#: CSS class of the status line; browser tests wait on its ``draws=N`` and ``state=``.
#: Controls carry ``sp-training-<part>`` classes (rounds, seed, label, start, nobody,
#: submit, next, radargram) and download links ``sp-download``.
STATUS_CLASS = "sp-training-status"
#: Smallest touch target, px (WCAG 2.5.5 target size: 44 x 44 CSS px).
TOUCH_PX = 48
_MAX_ROUNDS = 30
_MARK_COLOUR = "#00c853"
_PICK_COLOUR = "#ffd400"
#: A tap this close to a mark removes it, as a fraction of the line and of the window
#: (about 22 px on a 900 x 440 px picture: half a touch target).
_NEAR_FRACTION = (0.025, 0.05)
_S_TO_NS = 1e9


#: Inline look of the training page's download links: a touch-sized button.
_DOWNLOAD_STYLE = (f"display:inline-block;min-height:{TOUCH_PX}px;line-height:{TOUCH_PX}px;"
                   "padding:0 16px;margin:4px 8px 4px 0;background:#0b3d91;color:#fff;"
                   "border-radius:4px;text-decoration:none;font-weight:bold")


def _button(text: str, style: str = "", width: str = "auto") -> widgets.Button:
    b = widgets.Button(description=text, button_style=style,
                       layout=widgets.Layout(height=f"{TOUCH_PX}px", min_width="120px",
                                             width=width, margin="4px"))
    b.style.font_weight = "bold"
    return b


def _big(w: widgets.Widget, width: str = "300px") -> widgets.Widget:
    w.layout = widgets.Layout(height=f"{TOUCH_PX}px", width=width, margin="4px")
    return w


def _box_html(title: str, body: str, colour: str = "#0b3d91") -> str:
    return (f"<div style='border-left:6px solid {colour};padding:6px 12px;margin:6px 0;"
            f"background:#f7f9fc;color:#111;font-size:110%'><b>{html.escape(title)}</b>"
            f"<div>{body}</div></div>")


class TrainingSession(widgets.VBox):
    """Rounds of blind radargrams to mark, scored and debriefed, with a session record.

    Parameters
    ----------
    level : str
        Starting level, one of :data:`snowprobe_widgets.training.LEVELS`.
    rounds : int
        Rounds in a session, 1-30.
    seed : int or None
        Session seed (the same for a whole class to get the same rounds); ``None`` draws
        one, shown on screen.
    label : str
        The trainee's free label (no name needed).

    Notes
    -----
    Parts, all public: ``label``, ``level``, ``rounds``, ``seed``, ``start_button``
    (setup); ``radargram_view``, ``nobody_button``, ``clear_button``, ``submit_button``,
    ``next_button`` (a round); ``section`` (the debrief's cross-section, built at the
    first debrief); ``summary`` and ``downloads`` (the end); ``instructor`` widgets under
    ``key_*`` and ``records_upload``. :attr:`record` is the session so far.
    """

    def __init__(self, level: str = T.LEVELS[0], rounds: int = 5, seed: int | None = None,
                 label: str = "", **kwargs: Any) -> None:
        self._levels: dict[str, T.Level] = {n: T.get_level(n) for n in T.LEVELS}
        self._exercise: T.Exercise | None = None
        self._marks: list[tuple[float, float]] = []  # (position_m, time_s) on screen
        self._round = 0
        self._shown_at = 0.0
        self._state = "setup"
        self._draws = 0
        self.record: T.SessionRecord | None = None
        self.last_score: T.Score | None = None
        self.last_debrief: T.Debrief | None = None
        self.section: CrossSectionView | None = None

        # ---------------------------------------------------------------- setup
        self.label = _big(widgets.Text(value=label, placeholder="e.g. team B 3",
                                       description="your label"))
        self.level = _big(widgets.Dropdown(options=self._level_options(), value=level,
                                           description="level"), "420px")
        self.rounds = _big(widgets.BoundedIntText(value=rounds, min=1, max=_MAX_ROUNDS,
                                                  description="rounds"), "180px")
        self.seed = _big(widgets.BoundedIntText(
            value=secrets.randbelow(1_000_000) if seed is None else seed, min=0,
            max=T.exercise.MAX_SEED, description="session seed"), "260px")
        self.start_button = _button("start session", "primary")
        self.level_upload = widgets.FileUpload(accept=".json", multiple=False,
                                               description="add a level file (JSON)",
                                               layout=widgets.Layout(height=f"{TOUCH_PX}px",
                                                                     width="auto"))
        self.level_note = widgets.HTML()
        setup_help = widgets.HTML(
            "<div style='color:#222'>Pick a level, the number of rounds and a session "
            "seed: everyone with the same three gets the same rounds. Your label goes on "
            "your record; no name is needed.</div>")
        self.setup = widgets.VBox([
            setup_help, widgets.HBox([self.label, self.level], layout=_wrap()),
            widgets.HBox([self.rounds, self.seed, self.start_button, self.level_upload],
                         layout=_wrap()), self.level_note])

        # ---------------------------------------------------------------- a round
        self.progress = widgets.IntProgress(value=0, min=0, max=rounds,
                                            layout=widgets.Layout(width="300px",
                                                                  height="24px"))
        self.progress_text = widgets.HTML()
        self.prompt = widgets.HTML()
        self.radargram_view = RadargramView(show_truth=False, height_px=440)
        set_visible(self.radargram_view.truth_toggle, False)
        view = self.radargram_view
        scales = {"x": view.position_scale, "y": view.time_scale}
        self._mark_glyphs = bqplot.Scatter(
            x=np.zeros(0), y=np.zeros(0), names=[], display_names=True, scales=scales,
            marker="circle", colors=[_MARK_COLOUR], fill=False, stroke_width=4,
            default_size=TOUCH_PX * TOUCH_PX)
        view.figure.marks = [*view.figure.marks, self._mark_glyphs]
        view.image_mark.on_element_click(self._on_picture_tap)
        self._mark_glyphs.on_element_click(self._on_mark_tap)
        self.nobody_button = widgets.ToggleButton(
            value=False, description="nobody here", tooltip="nobody here",
            layout=widgets.Layout(height=f"{TOUCH_PX}px", width="auto", min_width="140px",
                                  margin="4px"))
        self.nobody_button.style.font_weight = "bold"
        self.clear_button = _button("remove all marks")
        self.submit_button = _button("submit answer", "success")
        self.next_button = _button("next round", "primary")
        self.marks_text = widgets.HTML()
        self.message = message_line()
        self.status = widgets.HTML()
        self.status.add_class(STATUS_CLASS)
        self.debrief_box = widgets.VBox()
        for w, cls in ((self.rounds, "sp-training-rounds"), (self.seed, "sp-training-seed"),
                       (self.label, "sp-training-label"),
                       (self.start_button, "sp-training-start"),
                       (self.nobody_button, "sp-training-nobody"),
                       (self.submit_button, "sp-training-submit"),
                       (self.next_button, "sp-training-next"),
                       (self.radargram_view, "sp-training-radargram")):
            w.add_class(cls)
        self.nobody_button.observe(self._on_nobody, names="value")
        self.clear_button.on_click(lambda _: self.clear_marks())
        self.submit_button.on_click(lambda _: self.submit())
        self.next_button.on_click(lambda _: self.next_round())
        self.start_button.on_click(lambda _: self.start())
        self.level.observe(lambda _: self._describe_level(), names="value")
        self.level_upload.observe(self._on_level_upload, names="value")
        self.answer_bar = widgets.HBox([self.nobody_button, self.clear_button,
                                        self.submit_button, self.next_button],
                                       layout=_wrap())
        self.round_box = widgets.VBox([
            widgets.HBox([self.progress, self.progress_text]), self.prompt,
            self.radargram_view, self.marks_text, self.answer_bar, self.message,
            self.debrief_box])

        # ---------------------------------------------------------------- the end
        self.summary = widgets.HTML()
        self.downloads = widgets.HTML()
        self.summary_box = widgets.VBox([self.summary, self.downloads])

        train = widgets.VBox([self.setup, self.status, self.round_box, self.summary_box])
        self.guide = widgets.VBox([widgets.HTML("<p>Open this page to build the guide's "
                                                "pictures.</p>")])
        self._guide_built = False
        self.instructor = self._build_instructor()
        self.tabs = widgets.Tab(children=[train, self.guide, self.instructor],
                                titles=["Train", "How to read a radargram", "Instructor"])
        self.tabs.observe(lambda _: self._on_tab(), names="selected_index")
        header = widgets.HTML(
            "<h2 style='margin:4px 0'>Radargram reading practice</h2><div style='font-size:"
            "110%;color:#111'>Find the buried people in radargrams of invented avalanche "
            "scenes, then see what was really there.</div>")
        super().__init__(children=[header, caution_box(), self.tabs], **kwargs)
        share_plain_styles(self)
        self._describe_level()
        self.start()

    # ------------------------------------------------------------------ public API
    @property
    def state(self) -> str:
        """``"marking"``, ``"debrief"`` or ``"summary"``."""
        return self._state

    @property
    def round_number(self) -> int:
        """1-based number of the round on screen."""
        return self._round

    @property
    def marks(self) -> tuple[tuple[float, float], ...]:
        """The marks of this round as ``(position_m, depth_m)``."""
        ex = self._exercise
        if ex is None:
            return ()
        axis = ex.depth_axis
        return tuple((x, axis.depth_m(t)) for x, t in self._marks)

    def start(self) -> bool:
        """Start a session with the setup's label, level, rounds and seed."""
        try:
            self.record = T.SessionRecord(self.label.value, self._level().name,
                                          int(self.seed.value))
        except ValueError as exc:
            show_message(self.message, str(exc))
            return False
        self.progress.max = int(self.rounds.value)
        self._round = 0
        self.summary.value = ""
        self.downloads.value = ""
        set_visible(self.round_box, True)
        self.next_round()
        return True

    def tap(self, position_m: float, time_s: float) -> None:
        """Place a mark at a point of the picture, or remove the mark there (as a tap)."""
        if self._state != "marking" or self._exercise is None:
            return
        rg = self.radargram_view.radargram
        span_x = float(rg.position_m[-1] - rg.position_m[0]) * _NEAR_FRACTION[0]
        span_t = float(rg.time_s[-1] - rg.time_s[0]) * _NEAR_FRACTION[1]
        for i, (x, t) in enumerate(self._marks):
            if abs(x - position_m) <= span_x and abs(t - time_s) <= span_t:
                self.remove_mark(i)
                return
        if self._exercise.depth_axis.depth_m(time_s) < 0:
            show_message(self.message, "That is above the snow surface: tap inside the "
                                       "snow to place a mark.")
            return
        if len(self._marks) >= T.scoring.MAX_MARKS:
            show_message(self.message, f"At most {T.scoring.MAX_MARKS} marks.")
            return
        show_message(self.message, "")
        self.nobody_button.value = False
        self._marks.append((float(position_m), float(time_s)))
        self._draw_marks()

    def remove_mark(self, index: int) -> None:
        """Remove mark ``index`` (0-based)."""
        if self._state == "marking" and 0 <= index < len(self._marks):
            del self._marks[index]
            self._draw_marks()

    def clear_marks(self) -> None:
        """Remove every mark of this round."""
        if self._state == "marking":
            self._marks.clear()
            self._draw_marks()

    def submit(self) -> T.Score | None:
        """Score the answer, reveal the truth and show the debrief."""
        ex = self._exercise
        if self._state != "marking" or ex is None:
            return None
        if not self._marks and not self.nobody_button.value:
            show_message(self.message, "Place at least one mark, or press 'nobody here'.")
            return None
        answer = T.NOBODY if self.nobody_button.value else list(self.marks)
        seconds = time.monotonic() - self._shown_at
        result = T.score(ex, answer)
        self.last_score = result
        self.last_debrief = T.debrief(ex, result)
        assert self.record is not None
        self.record = self.record.with_round(T.RoundRecord.from_score(
            self._round, ex.seed, result, seconds))
        self._state = "debrief"
        self._reveal(ex, result)
        last = self._round >= self.progress.max
        self.next_button.description = "see the summary" if last else "next round"
        self._set_round_controls()
        self._touch_status()
        return result

    def next_round(self) -> None:
        """Draw and show the next round (or the summary after the last one)."""
        if self.record is None:
            return
        if self._round >= self.progress.max:
            self._show_summary()
            return
        self._round += 1
        seed = T.round_seed(self.record.session_seed, self._round - 1)
        ex = T.make_exercise(self._level_of_record(), seed)
        view = ex.searcher_view()
        self._exercise = ex
        self._marks = []
        self._state = "marking"
        self._set_round_controls()  # before any status update says "marking"
        self.debrief_box.children = []
        self.nobody_button.value = False
        rv = self.radargram_view
        rv.set_detections([])
        rv.truth_mark.visible = False
        rv.radargram = view.radargram
        rv.set_depth_axis(view.depth_axis.surface_time_s, view.depth_axis.velocity_m_s)
        self._draw_marks()
        self.prompt.value = _box_html(f"Round {self._round}", html.escape(view.prompt))
        self.progress.value = self._round - 1
        self.progress_text.value = (f"<b>Round {self._round} of {self.progress.max}</b> · "
                                    f"{html.escape(self._level_of_record().title)} · session "
                                    f"seed {self.record.session_seed}")
        show_message(self.message, "")
        self._shown_at = time.monotonic()
        self._touch_status()

    # ------------------------------------------------------------------ internals
    def _level_options(self) -> list[tuple[str, str]]:
        return [(lv.title, name) for name, lv in self._levels.items()]

    def _level(self) -> T.Level:
        return self._levels[self.level.value]

    def _level_of_record(self) -> T.Level:
        assert self.record is not None
        return self._levels[self.record.level]

    def _describe_level(self) -> None:
        lv = self._level()
        self.level_note.value = (f"<div style='color:#222'>{html.escape(lv.description)} "
                                 f"About {lv.nobody_share:.0%} of scenes have nobody buried, "
                                 f"{lv.two_people_share:.0%} have two people.</div>")

    def _on_level_upload(self, change: dict[str, Any]) -> None:
        files = change["new"]
        if not files:
            return
        item = files[0]
        try:
            lv = T.level_from_json(bytes(item["content"]))
        except ValueError as exc:
            show_message(self.message, f"{item['name']}: {exc}")
            return
        self._levels[lv.name] = lv
        self.level.options = self._level_options()
        self.level.value = lv.name
        self.key_level.options = self._level_options()
        show_message(self.message, "")

    def _set_round_controls(self) -> None:
        marking = self._state == "marking"
        for b in (self.nobody_button, self.clear_button, self.submit_button):
            b.disabled = not marking
        set_visible(self.next_button, self._state == "debrief")

    def _touch_status(self) -> None:
        self._draws += 1
        self.status.value = (f"<small>draws={self._draws} round={self._round}/"
                             f"{self.progress.max} state={self._state} "
                             f"marks={len(self._marks)}</small>")

    def _draw_marks(self) -> None:
        xs = [x for x, _ in self._marks]
        ts = [t * _S_TO_NS for _, t in self._marks]
        with self._mark_glyphs.hold_sync():
            self._mark_glyphs.x = as_f32(xs)
            self._mark_glyphs.y = as_f32(ts)
            self._mark_glyphs.names = [str(i + 1) for i in range(len(xs))]
        if self.nobody_button.value:
            text = "Your answer: <b>nobody here</b>."
        elif self._marks:
            items = ", ".join(f"<b>{i + 1}</b>: {x:.1f} m along, {z:.2f} m deep"
                              for i, (x, z) in enumerate(self.marks))
            text = f"Your marks ({len(self._marks)}): {items}. Tap a mark again to remove it."
        else:
            text = ("No marks yet: tap the picture where you think a person lies, or press "
                    "'nobody here'.")
        self.marks_text.value = f"<div style='font-size:110%;color:#111'>{text}</div>"
        if self._state == "marking":
            self._touch_status()

    def _on_picture_tap(self, _mark: Any, content: dict[str, Any]) -> None:
        try:
            x = float(content["data"]["click_x"])
            t_ns = float(content["data"]["click_y"])
        except (KeyError, TypeError, ValueError):
            return
        if np.isfinite(x) and np.isfinite(t_ns):
            self.tap(x, t_ns / _S_TO_NS)

    def _on_mark_tap(self, _mark: Any, content: dict[str, Any]) -> None:
        try:
            self.remove_mark(int(content["data"]["index"]))
        except (KeyError, TypeError, ValueError):
            return

    def _on_nobody(self, change: dict[str, Any]) -> None:
        if change["new"] and self._state == "marking":
            self._marks.clear()
        self._draw_marks()

    # ------------------------------------------------------------------ debrief
    def _reveal(self, ex: T.Exercise, result: T.Score) -> None:
        rv = self.radargram_view
        rv.radargram = ex.processed  # now with its truth markers
        rv.truth_mark.visible = True
        rv.set_detections([(d.position_m, d.time_s, f"detector {d.score:.0f} dB")
                           for d in ex.detections])
        if self.section is None:
            self.section = CrossSectionView(height_px=300)
            sc = {"x": self.section.x_scale, "y": self.section.z_scale}
            self._section_marks = bqplot.Scatter(
                x=np.zeros(0), y=np.zeros(0), scales=sc, marker="circle", fill=False,
                colors=[_MARK_COLOUR], stroke_width=3, default_size=400, names=[],
                display_names=True)
            self._section_picks = bqplot.Scatter(
                x=np.zeros(0), y=np.zeros(0), scales=sc, marker="cross",
                colors=[_PICK_COLOUR], stroke="black", default_size=120)
            self.section.figure.marks = [*self.section.figure.marks, self._section_marks,
                                         self._section_picks]
        self.section.update(ex.scenario)
        marks = [(m.position_m, m.depth_m) for m in result.marks]
        with self._section_marks.hold_sync():
            self._section_marks.x = as_f32([x for x, _ in marks])
            self._section_marks.y = as_f32([z for _, z in marks])
            self._section_marks.names = [str(i + 1) for i in range(len(marks))]
        with self._section_picks.hold_sync():
            self._section_picks.x = as_f32([d.position_m for d in ex.detections])
            self._section_picks.y = as_f32([d.depth_m for d in ex.detections])
        d = self.last_debrief
        assert d is not None
        colour = "#1b7e3c" if (result.misses == 0 and result.false_alarms == 0) else "#b3261e"
        parts = [_box_html("Result", f"<span style='font-size:120%'>"
                                     f"{html.escape(d.headline)}</span>", colour)]
        for title, sentences in d.sections:
            items = "".join(f"<li>{html.escape(s)}</li>" for s in sentences)
            parts.append(f"<h4 style='margin:8px 0 2px'>{html.escape(title)}</h4>"
                         f"<ul style='margin:0;color:#111'>{items}</ul>")
        legend = ("<div style='color:#111'>Scene to scale. <b style='color:"
                  f"{_MARK_COLOUR}'>green circles</b>: your marks; <b style='color:#8a6d00'>"
                  "yellow crosses</b>: the automatic detector; orange shapes: the people; "
                  "grey and black: rocks, wood and metal. On the radargram the diamonds mark "
                  "what was really there.</div>")
        self.debrief_box.children = [self.section, widgets.HTML(legend),
                                     widgets.HTML("".join(parts))]

    def _show_summary(self) -> None:
        rec = self.record
        assert rec is not None
        self._state = "summary"
        self.progress.value = self.progress.max
        set_visible(self.round_box, False)
        rows = "".join(
            f"<tr><td>{r.round}</td><td>{r.people}</td><td>{r.finds}</td><td>{r.misses}</td>"
            f"<td>{r.false_alarms}</td><td>{'yes' if r.correct_nobody else '-'}</td>"
            f"<td>{html.escape(', '.join(r.fooled_by) or '-')}</td><td>{r.seconds:.0f}</td>"
            "</tr>" for r in rec.rounds)
        total = (sum(r.people for r in rec.rounds), sum(r.finds for r in rec.rounds),
                 sum(r.misses for r in rec.rounds), sum(r.false_alarms for r in rec.rounds))
        self.summary.value = _box_html(
            "Session summary",
            f"{html.escape(rec.label or 'no label')} · {html.escape(rec.level)} · seed "
            f"{rec.session_seed}: {total[1]} of {total[0]} people found, {total[3]} false "
            f"alarm(s).<table class='sp-table' border='1' cellpadding='6' style='border-"
            "collapse:collapse;margin-top:6px'><tr><th>round</th><th>people</th><th>found"
            "</th><th>missed</th><th>false alarms</th><th>'nobody' right</th><th>fooled by"
            f"</th><th>seconds</th></tr>{rows}</table>")
        stem = f"training-{rec.level}-{rec.session_seed}"
        self.downloads.value = (
            "<div>Save your record (give it to your instructor):</div>"
            + download_link(rec.to_csv(), f"{stem}.csv", "text/csv", "download record (CSV)",
                            style=_DOWNLOAD_STYLE)
            + download_link(rec.to_json(), f"{stem}.json", "application/json",
                            "download record (JSON)", style=_DOWNLOAD_STYLE))
        self._touch_status()

    # ------------------------------------------------------------------ guide
    def _on_tab(self) -> None:
        if self.tabs.selected_index == 1 and not self._guide_built:
            self._build_guide()

    def _build_guide(self) -> None:
        from snowprobe_widgets.processing import ProcessingChain
        from snowprobe_widgets.synthesis import simulate

        self._guide_built = True
        parts = [
            "<h3>Reading a radargram</h3><p style='font-size:110%;color:#111'>The radar "
            "walks along the line and records, at every step, the echoes coming back from "
            "below. Across the picture runs the line (metres); down it runs the two-way "
            "time (ns), which the right-hand scale turns into depth below the snow. Flat "
            "lines are layers, the surface and the ground; a buried thing shows as a "
            "hyperbola, whose apex is straight above it. These pictures are made by this "
            "program's model from invented scenes.</p>"]
        for g in T.guide_scenes():
            fc = g.scenario.radar.center_frequency_hz
            rg = ProcessingChain.default(fc).apply(simulate(g.scenario))
            png = exports.radargram_png(rg, "frost_ember", 99.0)
            src = "data:image/png;base64," + base64.b64encode(png).decode("ascii")
            parts.append(
                f"<figure style='margin:12px 0'><figcaption style='font-size:110%;color:#111'>"
                f"<b>{html.escape(g.title)}</b>. {html.escape(g.caption)}</figcaption>"
                f"<img src='{src}' alt='{html.escape(g.title)}: radargram' "
                "style='width:100%;max-width:760px;height:260px;image-rendering:auto'>"
                f"<div><small>{rg.position_m[-1]:.0f} m across, "
                f"{rg.time_s[-1] * _S_TO_NS:.0f} ns down, {fc / 1e6:.0f} MHz.</small></div>"
                "</figure>")
        self.guide.children = [widgets.HTML("".join(parts))]

    # ------------------------------------------------------------------ instructor
    def _build_instructor(self) -> widgets.VBox:
        self.key_level = _big(widgets.Dropdown(options=self._level_options(),
                                               value=T.LEVELS[0], description="level"),
                              "420px")
        self.key_seed = _big(widgets.BoundedIntText(value=2026, min=0,
                                                    max=T.exercise.MAX_SEED,
                                                    description="session seed"), "260px")
        self.key_rounds = _big(widgets.BoundedIntText(value=5, min=1, max=_MAX_ROUNDS,
                                                      description="rounds"), "180px")
        self.key_button = _button("make the answer key", "warning")
        self.key_use_button = _button("use these settings in the Train tab")
        self.key_output = widgets.HTML()
        self.records_upload = widgets.FileUpload(
            accept=".json,.csv", multiple=True, description="load trainees' records",
            layout=widgets.Layout(height=f"{TOUCH_PX}px", width="auto"))
        self.class_output = widgets.HTML()
        self.key_button.on_click(lambda _: self.make_answer_key())
        self.key_use_button.on_click(lambda _: self.use_class_settings())
        self.records_upload.observe(self._on_records, names="value")
        intro = widgets.HTML(
            "<div style='color:#111;font-size:105%'>For the instructor. Give the class one "
            "level, one session seed and one number of rounds: every trainee then gets the "
            "same rounds in the same order. The answer key lists what each round holds; "
            "keep it from the trainees until the session is over. After the session, load "
            "the records the trainees downloaded to see the class summary.</div>")
        return widgets.VBox([
            intro, widgets.HBox([self.key_level, self.key_seed, self.key_rounds],
                                layout=_wrap()),
            widgets.HBox([self.key_button, self.key_use_button], layout=_wrap()),
            self.key_output,
            widgets.HTML("<h4>Class summary</h4>"), self.records_upload, self.class_output])

    def use_class_settings(self) -> bool:
        """Start a session here with the instructor's level, seed and rounds."""
        self.level.value = self.key_level.value
        self.seed.value = int(self.key_seed.value)
        self.rounds.value = int(self.key_rounds.value)
        self.tabs.selected_index = 0
        return self.start()

    def make_answer_key(self) -> str:
        """Build the printable answer key of the instructor's settings (and a download)."""
        lv = self._levels[self.key_level.value]
        page = T.answer_key_html(lv, int(self.key_seed.value), int(self.key_rounds.value))
        body = page.split("<body>", 1)[1].rsplit("</body>", 1)[0]
        self.key_output.value = (
            download_link(page, f"answer-key-{lv.name}-{self.key_seed.value}.html",
                          "text/html", "download the answer key (printable HTML)",
                          style=_DOWNLOAD_STYLE)
            + f"<div style='border:1px solid #999;padding:8px;color:#111'>{body}</div>")
        return page

    def load_records(self, files: list[tuple[str, bytes]]) -> T.ClassSummary | None:
        """Read trainees' records (name, content) and show the class summary."""
        recs, problems = [], []
        for name, content in files:
            try:
                recs.append(T.SessionRecord.read(content))
            except ValueError as exc:
                problems.append(f"<li>{html.escape(name)}: {html.escape(str(exc))}</li>")
        note = f"<ul style='color:#8a1c1c'>{''.join(problems)}</ul>" if problems else ""
        if not recs:
            self.class_output.value = note
            return None
        summary = T.class_summary(recs)
        self.class_output.value = (
            f"<div>{len(recs)} record(s) loaded.</div>" + note + summary.to_html()
            + download_link(summary.to_csv(), "class-summary.csv", "text/csv",
                            "download the class summary (CSV)", style=_DOWNLOAD_STYLE))
        return summary

    def _on_records(self, change: dict[str, Any]) -> None:
        files = [(f["name"], bytes(f["content"])) for f in change["new"] or ()]
        if files:
            self.load_records(files)


def _wrap() -> widgets.Layout:
    return widgets.Layout(flex_flow="row wrap", align_items="center")
