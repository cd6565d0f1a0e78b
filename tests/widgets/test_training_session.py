"""TrainingSession driven without a browser: a full session, and no truth before submit.

"No truth before submit" is checked on everything the browser could receive: every trait
of every widget reachable from the app (as ``share_plain_styles`` walks them), arrays,
numbers and text. The same check run after submit must find the truth (so it can fail).
"""

from __future__ import annotations

import base64
import json
import re

import ipywidgets as widgets
import numpy as np
import pytest

from snowprobe_widgets import training as T
from snowprobe_widgets.cautions import CAUTION_TEXT
from snowprobe_widgets.widgets import TrainingSession
from snowprobe_widgets.widgets.training import STATUS_CLASS, TOUCH_PX


def _widgets(root: widgets.Widget) -> list[widgets.Widget]:
    seen: dict[int, widgets.Widget] = {}

    def walk(w: widgets.Widget) -> None:
        if id(w) in seen:
            return
        seen[id(w)] = w
        for name in w.keys:
            value = getattr(w, name, None)
            for x in value if isinstance(value, (list, tuple)) else [value]:
                if isinstance(x, widgets.Widget):
                    walk(x)

    walk(root)
    return list(seen.values())


def _values(x, out_num: list, out_text: list) -> None:
    if isinstance(x, str):
        out_text.append(x)
    elif isinstance(x, (bytes, bytearray, memoryview)):
        return  # pictures: the searcher's radargram is meant to be seen
    elif isinstance(x, np.ndarray):
        if x.dtype.kind in "fiu":
            out_num.extend(np.asarray(x, float).ravel().tolist())
        else:
            for v in x.ravel():
                _values(v, out_num, out_text)
    elif isinstance(x, bool) or x is None:
        return
    elif isinstance(x, (int, float)):
        out_num.append(float(x))
    elif isinstance(x, dict):
        for v in x.values():
            _values(v, out_num, out_text)
    elif isinstance(x, (list, tuple)):
        for v in x:
            _values(v, out_num, out_text)


def _leaks(app: TrainingSession, ex: T.Exercise) -> list[str]:
    """Where the hidden truth shows in the browser-visible state (empty: nowhere)."""
    nums: list[float] = []
    texts: list[str] = []
    for w in _widgets(app):
        for name in w.keys:
            if name.startswith("_"):
                continue
            _values(getattr(w, name, None), nums, texts)
    arr = np.array(nums)
    found = []
    truth_numbers = []
    for m in ex.raw.truth:
        truth_numbers += [m.position_m, m.depth_m, m.apex_time_s, m.apex_time_s * 1e9]
    for f in ex.false_targets:
        truth_numbers += [f.depth_m] + ([f.position_m] if f.position_m is not None else [])
    for v in truth_numbers:
        if arr.size and np.any(np.abs(arr - v) <= 1e-6 * abs(v)):  # float32 rounding
            found.append(f"number {v!r}")
    blob = "\n".join(texts)
    for p in ex.scenario.persons:
        for pattern in (f"{p.position_m:.1f} m along the line", f"{p.depth_m:.2f} m deep",
                        p.label):
            if pattern in blob:
                found.append(f"text {pattern!r}")
    for f in ex.false_targets:
        if f.description in blob:
            found.append(f"text {f.description!r}")
    return found


@pytest.fixture()
def app() -> TrainingSession:
    # look_alikes, seed 4: rounds with people and false targets (see the asserts below)
    return TrainingSession(level="look_alikes", rounds=3, seed=4, label="team B 3")


def test_layout_is_touch_sized_with_cautions_and_a_status(app):
    assert app.state == "marking" and app.round_number == 1
    assert STATUS_CLASS in app.status._dom_classes
    assert re.search(r"draws=\d+ round=1/3 state=marking", app.status.value)
    assert TOUCH_PX >= 44
    for b in (app.start_button, app.nobody_button, app.clear_button, app.submit_button,
              app.next_button):
        assert int(b.layout.height.rstrip("px")) >= 44
    for c in (app.label, app.level, app.rounds, app.seed):
        assert int(c.layout.height.rstrip("px")) >= 44
    assert app._mark_glyphs.default_size >= 44 * 44  # a mark is a touch target
    assert any(CAUTION_TEXT in getattr(c, "value", "") for c in app.children)
    # no hover-only information: no widget carries a tooltip the page does not also show
    assert all(not getattr(w, "tooltip", None) for w in _widgets(app)
               if isinstance(w, widgets.Button))
    # the radargram view offers no truth toggle to the trainee
    assert app.radargram_view.truth_toggle.layout.display == "none"


def test_full_session_marks_submit_debrief_summary_export(app):
    seen_people = seen_nobody = False
    for rnd in range(1, 4):
        ex = app._exercise
        assert _leaks(app, ex) == []  # round shown: nothing of the truth in the browser
        axis = ex.depth_axis
        if ex.scenario.persons:
            seen_people = True
            p = ex.scenario.persons[0]
            # a mark on the person, a little off its exact numbers (a trainee's tap holds
            # their own numbers, not the truth's)
            on_x, on_t = p.position_m + 0.13, axis.time_s(p.depth_m + 0.04)
            app.tap(on_x, on_t)
            app.tap(on_x + 0.05, on_t + 0.1e-9)  # the same place again:
            assert app.marks == ()  # tapping a mark again removes it
            app.tap(on_x, on_t)
            app.tap(0.3, axis.time_s(0.2))  # and a false alarm
            app.tap(0.3, axis.time_s(-0.1) - 1e-9)  # above the snow: refused, no mark
            assert len(app.marks) == 2 and "above the snow" in app.message.value
            assert _leaks(app, ex) == []  # marks placed: still nothing
            app.nobody_button.value = True  # 'nobody here' clears the marks...
            assert app.marks == ()
            app.nobody_button.value = False
            app.tap(on_x, on_t)
            app.tap(0.3, axis.time_s(0.2))
            assert _leaks(app, ex) == []
            result = app.submit()
            assert (result.finds, result.false_alarms) == (1, 1)
            assert result.misses == len(ex.scenario.persons) - 1
        else:
            seen_nobody = True
            app.submit()  # nothing marked: refused with a message
            assert app.state == "marking" and "nobody here" in app.message.value
            app.nobody_button.value = True
            assert _leaks(app, ex) == []
            result = app.submit()
            assert result.correct_nobody is True
        assert app.state == "debrief"
        # the debrief reveals: the check above finds the truth now (it can fail)
        if ex.scenario.persons:
            assert _leaks(app, ex) != []
            assert len(app.radargram_view.truth_mark.x) == len(ex.raw.truth)
        assert app.section is not None and app.section.draws >= rnd
        debrief_html = app.debrief_box.children[-1].value
        assert "What else was there" in debrief_html and "automatic detector" in debrief_html
        assert list(app._section_marks.x) == pytest.approx(
            [m.position_m for m in result.marks], abs=1e-4)
        app.next_round()
    assert seen_people and seen_nobody, "the fixture's seed should give both kinds of round"
    assert app.state == "summary"
    assert "Session summary" in app.summary.value
    rec = app.record
    assert rec is not None and len(rec.rounds) == 3 and rec.label == "team B 3"
    links = re.findall(r"download='([^']+)' href='data:([^;]+);base64,([^']+)'",
                       app.downloads.value)
    assert [(n, m) for n, m, _ in links] == [("training-look_alikes-4.csv", "text/csv"),
                                             ("training-look_alikes-4.json",
                                              "application/json")]
    csv_text = base64.b64decode(links[0][2]).decode()
    json_text = base64.b64decode(links[1][2]).decode()
    assert T.SessionRecord.from_csv(csv_text) == T.SessionRecord.from_json(json_text)
    assert json.loads(json_text)["label"] == "team B 3"


def test_same_seed_same_rounds_for_a_class():
    a = TrainingSession(level="debris_field", rounds=2, seed=77)
    b = TrainingSession(level="debris_field", rounds=2, seed=77)
    assert a._exercise.scenario == b._exercise.scenario
    assert a._exercise.scenario == T.make_exercise("debris_field", T.round_seed(77, 0)).scenario


def test_bad_label_is_refused_and_keeps_the_session(app):
    app.label.value = "x" * 200
    assert app.start() is False
    assert "label" in app.message.value and app.state == "marking"


def test_level_file_upload_adds_a_level_or_names_the_bad_field(app):
    good = json.dumps({"format": "snowprobe_widgets.training_level", "version": 1,
                       "based_on": "first_look", "level": {"name": "gully",
                                                           "title": "Gully practice"}})
    app._on_level_upload({"new": ({"name": "gully.json", "content": good.encode()},)})
    assert app.level.value == "gully" and "gully" in dict((v, k) for k, v in app.level.options)
    bad = good.replace('"title"', '"colour"')
    app._on_level_upload({"new": ({"name": "bad.json", "content": bad.encode()},)})
    assert "colour" in app.message.value and app.level.value == "gully"
    assert app.start() and app.record.level == "gully"


def test_instructor_answer_key_and_class_summary(app):
    app.key_level.value = "look_alikes"
    app.key_seed.value = 4
    app.key_rounds.value = 3
    page = app.make_answer_key()
    assert page == T.answer_key_html("look_alikes", 4, 3)
    assert "download the answer key" in app.key_output.value
    # the key matches what the trainee's session (same level, seed) shows
    first = T.make_exercise("look_alikes", T.round_seed(4, 0))
    assert app._exercise.scenario == first.scenario
    rec = T.SessionRecord("t1", "look_alikes", 4).with_round(T.RoundRecord(
        1, 5, ((1.0, 0.5),), 1, 0, 1, 1, 0, False, ("boulder",), 20.0))
    summary = app.load_records([("t1.json", rec.to_json().encode()),
                                ("t1.csv", rec.to_csv().encode()),
                                ("junk.json", b"{\"format\": 1}")])
    assert summary is not None and summary.fooled_by == (("boulder", 2),)
    assert "junk.json" in app.class_output.value and "format" in app.class_output.value
    assert "download the class summary" in app.class_output.value
    # the instructor's settings start the same session in the Train tab
    assert app.use_class_settings()
    assert app.record.session_seed == 4 and app.progress.max == 3
    assert app._exercise.scenario == first.scenario and app.tabs.selected_index == 0


def test_guide_is_built_when_opened_with_model_pictures(app):
    assert not app._guide_built
    app.tabs.selected_index = 1
    text = app.guide.children[0].value
    assert text.count("data:image/png;base64,") == len(T.guide_scenes())
    assert "hyperbola" in text
