"""Training exercises: levels, reproducibility, plausibility, scoring, debrief, records.

Scoring is checked on hand-built scenes (one snow layer, so the depth scale is exact) with
tolerances worked by hand from the published formulas: first Fresnel zone
sqrt(lambda (d + n h) / 2 + lambda^2 / 16) (REFERENCES 7.7 for h = 0) and range resolution
c / (2 B n) (REFERENCES 7.6).
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
import math
import random
import subprocess
import sys

import numpy as np
import pytest
from scipy import stats

from snowprobe_widgets import link_budget
from snowprobe_widgets.constants import C0_M_S
from snowprobe_widgets.scene import (
    Boulder,
    Clutter,
    Ground,
    Layer,
    Person,
    Radar,
    Scenario,
    Snowpack,
    Survey,
)
from snowprobe_widgets.training import (
    LEVEL_TABLE,
    LEVELS,
    NOBODY,
    Exercise,
    FalseTarget,
    LevelFileError,
    RecordFileError,
    RoundRecord,
    SessionRecord,
    answer_key_html,
    class_summary,
    debrief,
    get_level,
    level_from_json,
    level_to_json,
    make_exercise,
    round_seed,
    score,
)
from snowprobe_widgets.training.debrief import _hyperbola
from snowprobe_widgets.training.exercise import _clear
from snowprobe_widgets.training.scoring import detector_margins_db

# --------------------------------------------------------------------------- levels


def test_levels_are_named_easiest_first_and_declared_harder():
    assert LEVELS == tuple(lv.name for lv in LEVEL_TABLE)
    assert LEVELS[0] == "first_look" and len(LEVELS) >= 4
    for easy, hard in zip(LEVEL_TABLE, LEVEL_TABLE[1:], strict=False):
        assert hard.burial_depth_m[1] > easy.burial_depth_m[1]
        assert hard.lwc_percent[1] >= easy.lwc_percent[1]
        assert hard.scatterer_density_per_m3[1] > easy.scatterer_density_per_m3[1]
    assert LEVEL_TABLE[0].lwc_percent == (0.0, 0.0)  # dry powder
    assert LEVEL_TABLE[-1].lwc_percent[0] > 0  # wet spring
    assert any(lv.two_people_share > 0 for lv in LEVEL_TABLE)
    assert all(lv.nobody_share > 0 for lv in LEVEL_TABLE)


@pytest.mark.parametrize("name", LEVELS)
def test_nobody_share_holds_within_its_binomial_99_interval(name):
    lv = get_level(name)
    n = 200
    nobody = sum(make_exercise(name, seed).nobody_buried for seed in range(n))
    lo, hi = stats.binom.interval(0.99, n, lv.nobody_share)
    assert lo <= nobody <= hi, (nobody, lo, hi)


@pytest.mark.parametrize("name", [lv.name for lv in LEVEL_TABLE if lv.two_people_share > 0])
def test_two_person_share_holds(name):
    lv = get_level(name)
    n = 200
    two = sum(len(make_exercise(name, seed).scenario.persons) == 2 for seed in range(n))
    lo, hi = stats.binom.interval(0.99, n, lv.two_people_share)
    assert lo <= two <= hi, (two, lo, hi)


def test_same_level_and_seed_same_exercise_different_seed_different():
    a = make_exercise("debris_field", 12345)
    np.random.seed(1)  # noqa: NPY002 - the global random state must not matter
    random.seed(2)
    b = make_exercise("debris_field", 12345)
    assert a.scenario == b.scenario
    assert a.scenario.to_json() == b.scenario.to_json()
    assert a.false_targets == b.false_targets
    assert make_exercise("debris_field", 12346).scenario != a.scenario
    # the level is part of the stream: same seed, other level, other scene
    assert make_exercise("look_alikes", 12345).scenario != a.scenario


def _fingerprint(level: str, seed: int) -> str:
    return hashlib.sha256(make_exercise(level, seed).scenario.to_json().encode()).hexdigest()


def test_exercise_does_not_depend_on_the_interpreter_hash_seed():
    # a fresh interpreter with another string-hash seed must draw the same scene
    code = ("from tests.test_training import _fingerprint; "
            "print(_fingerprint('wet_spring', 77))")
    out = {}
    for hash_seed in ("1", "999"):
        res = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                             env={"PYTHONHASHSEED": hash_seed, "PATH": ""}, check=False,
                             cwd=str(__import__("pathlib").Path(__file__).parents[1]))
        assert res.returncode == 0, res.stderr
        out[hash_seed] = res.stdout.strip()
    assert out["1"] == out["999"] == _fingerprint("wet_spring", 77)


def test_round_seeds_are_fixed_per_session_and_distinct():
    seeds = [round_seed(2026, i) for i in range(10)]
    assert seeds == [round_seed(2026, i) for i in range(10)]
    assert len(set(seeds)) == 10
    assert seeds != [round_seed(2027, i) for i in range(10)]
    with pytest.raises(ValueError, match="seed"):
        round_seed(-1, 0)


@pytest.mark.parametrize("name", LEVELS)
def test_generated_scenes_are_valid_and_plausible(name):
    lv = get_level(name)
    for seed in range(40):
        ex = make_exercise(name, seed)
        sc = ex.scenario
        assert isinstance(sc, Scenario)
        assert Scenario.from_json(sc.to_json()) == sc  # valid through the file loader too
        snow = sc.snowpack
        layers = [la for la in snow.layers if not la.ice_crust]
        # denser with depth, wettest on top; wet snow is at 0 degC
        dens = [la.density_kg_m3 for la in layers]
        lwc = [la.lwc_percent for la in layers]
        assert dens == sorted(dens) and lwc == sorted(lwc, reverse=True)
        if max(lwc) > 0:
            assert snow.temperature_c == 0.0
        else:
            assert snow.temperature_c < 0.0
        assert 1 + sum(la.ice_crust for la in snow.layers) >= 1
        things = list(sc.targets)
        for p in sc.persons:
            lo, hi = lv.burial_depth_m
            assert lo <= p.depth_m <= hi
            assert 1.5 - 1e-9 <= p.position_m <= sc.survey.end_m - 1.5 + 1e-9
            assert lv.person_offset_m[0] - 1e-12 <= abs(p.offset_m) <= lv.person_offset_m[1]
        deepest = max([t.bottom_depth_m for t in sc.persons], default=0.0)
        assert snow.depth_m - deepest >= lv.snow_below_m[0] - 1e-9
        for i, a in enumerate(things):
            assert a.bottom_depth_m <= snow.depth_m
            for b in things[i + 1:]:
                assert _clear(a, b), (name, seed, a, b)
        # a crust passes above or below every buried thing
        top = 0.0
        for la in snow.layers:
            if la.ice_crust:
                for t in things:
                    assert top + la.thickness_m <= t.depth_m or t.bottom_depth_m <= top
            top += la.thickness_m
        kinds = {f.kind for f in ex.false_targets}
        assert kinds <= set(lv.false_target_kinds) | {"crust"}
        assert len([f for f in ex.false_targets if f.kind != "crust"]) == len(sc.objects)
        # the record reaches the ground echo (1.3 x its two-way time, Annan's rule)
        n = [m.refractive_index(sc.radar.center_frequency_hz).real for m in snow.materials()]
        t_ground = (2 * sc.radar.antenna_height_m + 2 * float(np.dot(snow.thicknesses_m, n))
                    ) / C0_M_S
        assert sc.radar.time_window_s >= 1.3 * t_ground - 1e-15
        assert sc.radar.center_frequency_hz in lv.center_frequency_hz


def test_false_targets_of_every_kind_appear():
    seen = set()
    for name in LEVELS:
        for seed in range(60):
            seen |= {f.kind for f in make_exercise(name, seed).false_targets}
    assert seen == {"boulder", "branch", "ski", "metal_gear", "crust"}


def _person_exercises(name: str, n: int) -> list[Exercise]:
    out, seed = [], 0
    while len(out) < n:
        ex = make_exercise(name, seed)
        seed += 1
        if ex.scenario.persons:
            out.append(ex)
    return out


def test_levels_differ_measurably_in_depth_wetness_clutter_and_detector_margin():
    stats_by_level = []
    for name in LEVELS:
        exs = _person_exercises(name, 10)
        depth = np.mean([p.depth_m for ex in exs for p in ex.scenario.persons])
        wet = np.mean([max(la.lwc_percent for la in ex.scenario.snowpack.layers)
                       for ex in exs])
        clutter = np.mean([ex.scenario.clutter.scatterer_density_per_m3 for ex in exs])
        margins = [m for ex in exs for m in detector_margins_db(ex)[:1]]
        margin = float(np.median([-99.0 if m is None else m for m in margins]))
        stats_by_level.append((depth, wet, clutter, margin))
        print(name, f"depth {depth:.2f} m, wettest {wet:.2f} %, clutter {clutter:.1f} /m3, "
                    f"median detector margin {margin:+.1f} dB")
    for (d0, w0, c0, m0), (d1, w1, c1, m1) in zip(stats_by_level, stats_by_level[1:],
                                                  strict=False):
        assert d1 > d0 and w1 >= w0 and c1 > c0
        assert m1 < m0
    assert stats_by_level[-1][1] > 1.0  # the last level is wet


# --------------------------------------------------------------------------- level files


def test_level_file_round_trip_and_based_on():
    lv = get_level("look_alikes")
    assert level_from_json(level_to_json(lv)) == lv
    own = level_from_json(json.dumps({
        "format": "snowprobe_widgets.training_level", "version": 1, "based_on": "first_look",
        "level": {"name": "gully", "title": "Gully", "burial_depth_m": [1.0, 1.4],
                  "nobody_share": 0.5}}))
    assert own.burial_depth_m == (1.0, 1.4) and own.nobody_share == 0.5
    assert own.density_kg_m3 == get_level("first_look").density_kg_m3
    ex = make_exercise(own, 3)
    assert all(1.0 <= p.depth_m <= 1.4 for p in ex.scenario.persons)


@pytest.mark.parametrize(("level", "field"), [
    ({"burial_depth_m": [1.5, 1.0]}, "burial_depth_m"),
    ({"burial_depth_m": [0.5]}, "burial_depth_m"),
    ({"density_kg_m3": [10.0, 200.0]}, "density_kg_m3"),
    ({"lwc_percent": [0.0, 4.0]}, "density_kg_m3"),  # wet snow needs settled snow
    ({"density_kg_m3": [800.0, 900.0], "lwc_percent": [0.0, 12.0]}, "lwc_percent"),
    ({"nobody_share": 1.5}, "nobody_share"),
    ({"nobody_share": 0.6, "two_people_share": 0.6}, "two_people_share"),
    ({"false_target_count": [1, 2]}, "false_target_kinds"),
    ({"false_target_kinds": ["piano"], "false_target_count": [1, 1]}, "false_target_kinds"),
    ({"center_frequency_hz": [5e9]}, "center_frequency_hz"),
    ({"scatterer_density_per_m3": [0, 5000]}, "scatterer_density_per_m3"),
    ({"temperature_c": [-80, -5]}, "temperature_c"),
    ({"name": "Bad Name!"}, "name"),
    ({"colour": "red"}, "colour"),
])
def test_bad_level_file_names_the_field(level, field):
    doc = {"format": "snowprobe_widgets.training_level", "version": 1,
           "based_on": "first_look", "level": {"name": "mine", **level}}
    with pytest.raises(LevelFileError, match=field):
        level_from_json(json.dumps(doc))


def test_level_file_without_base_needs_every_field_and_rejects_junk():
    with pytest.raises(LevelFileError, match="missing level field"):
        level_from_json(json.dumps({"format": "snowprobe_widgets.training_level",
                                    "version": 1, "level": {"name": "x"}}))
    with pytest.raises(LevelFileError, match="not valid JSON"):
        level_from_json("{nope")
    with pytest.raises(LevelFileError, match="format"):
        level_from_json(json.dumps({"format": "other", "version": 1, "level": {}}))
    with pytest.raises(LevelFileError, match="based_on"):
        level_from_json(json.dumps({"format": "snowprobe_widgets.training_level",
                                    "version": 1, "based_on": "nope", "level": {}}))
    with pytest.raises(ValueError, match="level"):
        make_exercise("no_such_level", 1)


# --------------------------------------------------------------------------- scoring
FC = 800e6
RHO = 300.0


def _hand_exercise(persons=(), objects=(), false_targets=()) -> Exercise:
    """One dry layer (the one-velocity depth scale is then exact), 800 MHz."""
    sc = Scenario(snowpack=Snowpack((Layer(3.0, RHO),), temperature_c=-5.0),
                  ground=Ground("soil", 0.1), persons=tuple(persons), objects=tuple(objects),
                  radar=Radar("ricker", FC, dt_s=1e-10, time_window_s=51.2e-9,
                              antenna_height_m=0.5),
                  survey=Survey(0.0, 10.0, 0.05), clutter=Clutter())
    return Exercise(get_level("first_look"), 0, sc, tuple(false_targets))


def _hand_tolerances(depth_m: float, half_length_m: float) -> tuple[float, float]:
    """Lateral and vertical reach worked from the published formulas."""
    from snowprobe_widgets import materials

    n = materials.snow(RHO).refractive_index(FC).real
    lam = C0_M_S / (FC * n)
    # first Fresnel zone seen from h = 0.5 m through the surface: sqrt(lam (d + n h) / 2
    # + lam^2 / 16) (REFERENCES 7.7 for h = 0; the paraxial Fermat form of the budget,
    # checked against an exact Fermat zone in tests/test_budget.py)
    fresnel = math.sqrt(lam * (depth_m + n * 0.5) / 2 + lam**2 / 16)
    bandwidth = Radar("ricker", FC).make_pulse().bandwidth_hz
    resolution = C0_M_S / (2 * bandwidth * n)  # REFERENCES 7.6
    return half_length_m + fresnel, resolution


def test_tolerances_come_from_footprint_and_resolution_and_are_stated():
    p = Person(5.0, 1.0, heading_deg=90.0)  # across the line: half length = width / 2
    ex = _hand_exercise([p])
    r = score(ex, [])
    (tol,) = r.tolerances
    lat, vert = _hand_tolerances(1.0, 0.45 / 2)
    assert tol.lateral_m == pytest.approx(lat, rel=1e-9)
    assert tol.vertical_m == pytest.approx(vert, abs=1e-6)  # + depth-scale error ~ 0
    assert tol.depth_axis_error_m < 1e-9
    # the same numbers as the link budget's footprint and resolution
    b = link_budget(ex.scenario, p)
    assert tol.footprint_radius_m == pytest.approx(b.footprint_radius_m, rel=1e-9)
    assert tol.range_resolution_m == pytest.approx(b.range_resolution_m, rel=1e-9)
    assert "footprint" in tol.explanation() and "range resolution" in tol.explanation()
    # along the line: the whole body length (1.75 m / 2) when it lies along the line
    (tol0,) = score(_hand_exercise([Person(5.0, 1.0, heading_deg=0.0)]), []).tolerances
    assert tol0.lateral_m == pytest.approx(_hand_tolerances(1.0, 1.75 / 2)[0], rel=1e-9)
    # deeper: a wider footprint
    (tol2,) = score(_hand_exercise([Person(5.0, 2.0, heading_deg=90.0)]), []).tolerances
    assert tol2.lateral_m > tol.lateral_m


def test_marks_at_exact_distances():
    ex = _hand_exercise([Person(5.0, 1.0, heading_deg=90.0)])
    lat, vert = _hand_tolerances(1.0, 0.225)
    eps = 1e-6
    inside = [(5.0 + lat - eps, 1.0), (5.0 - lat + eps, 1.0), (5.0, 1.0 + vert - eps),
              (5.0, 1.0 - vert + eps), (5.0 + lat - eps, 1.0 + vert - eps)]
    for m in inside:
        r = score(ex, [m])
        assert (r.finds, r.misses, r.false_alarms, r.correct_nobody) == (1, 0, 0, False), m
    outside = [(5.0 + lat + eps, 1.0), (5.0, 1.0 + vert + eps), (5.0, 1.0 - vert - eps)]
    for m in outside:
        r = score(ex, [m])
        assert (r.finds, r.misses, r.false_alarms) == (0, 1, 1), m
        assert r.fooled_by == ("clutter",)
    assert isinstance(r.finds, int) and isinstance(r.correct_nobody, bool)


def test_several_marks_on_one_person_count_once():
    ex = _hand_exercise([Person(5.0, 1.0, heading_deg=90.0)])
    r = score(ex, [(5.0, 1.0), (5.1, 1.05), (4.9, 0.95), (8.0, 1.0)])
    assert (r.finds, r.misses, r.false_alarms, r.duplicates) == (1, 0, 1, 2)
    assert [m.outcome for m in r.marks] == ["find", "duplicate", "duplicate", "false alarm"]


def test_marks_between_two_people():
    a, b = Person(4.0, 1.0, heading_deg=90.0), Person(5.0, 1.0, heading_deg=90.0)
    ex = _hand_exercise([a, b])
    lat, _ = _hand_tolerances(1.0, 0.225)
    assert 0.5 < lat < 1.0  # the midpoint 4.5 m reaches both people
    one = score(ex, [(4.5, 1.0)])
    assert (one.finds, one.misses, one.false_alarms, one.duplicates) == (1, 1, 0, 0)
    # a mark near person 1 and one between: the one between must go to person 2
    two = score(ex, [(4.5, 1.0), (4.05, 1.0)])
    assert (two.finds, two.misses, two.false_alarms) == (2, 0, 0)
    assert {m.person for m in two.marks} == {"person 1", "person 2"}
    # people too far apart for a mark between them to reach either
    far = score(_hand_exercise([Person(3.0, 1.0, heading_deg=90.0),
                                Person(6.0, 1.0, heading_deg=90.0)]), [(4.5, 1.0)])
    assert (far.finds, far.misses, far.false_alarms) == (0, 2, 1)


def test_nobody_buried():
    empty = _hand_exercise()
    r = score(empty, NOBODY)
    assert (r.finds, r.misses, r.false_alarms, r.correct_nobody) == (0, 0, 0, True)
    r = score(empty, [(2.0, 0.5)])
    assert (r.finds, r.misses, r.false_alarms, r.correct_nobody) == (0, 0, 1, False)
    r = score(empty, [])
    assert r.correct_nobody is False and r.false_alarms == 0
    r = score(_hand_exercise([Person(5.0, 1.0)]), NOBODY)
    assert (r.finds, r.misses, r.false_alarms, r.correct_nobody) == (0, 1, 0, False)


def test_false_alarm_names_what_fooled_the_trainee():
    rock = Boulder(2.0, 0.6, 0.5)
    ft = FalseTarget("boulder", "boulder", 2.0, 0.6, 1.1, 0.25)
    ex = _hand_exercise([Person(7.0, 1.0)], [rock], [ft])
    r = score(ex, [(2.05, 0.62), (5.0, 2.99)])
    assert r.fooled_by == ("boulder", "ground")


@pytest.mark.parametrize("marks", ["here", [(1.0,)], [(1.0, -0.5)], [(float("nan"), 1.0)],
                                   [(1.0, 1.0)] * 51])
def test_bad_marks_are_refused_by_name(marks):
    with pytest.raises(ValueError, match="marks"):
        score(_hand_exercise(), marks)


# --------------------------------------------------------------------------- debrief


def test_debrief_explains_from_the_scene():
    rock = Boulder(2.0, 0.6, 0.5, permittivity=6.0)
    ft = FalseTarget("boulder", "boulder 0.5 m across", 2.0, 0.6, 1.1, 0.25)
    ex = _hand_exercise([Person(7.0, 1.0)], [rock], [ft])
    d = debrief(ex, score(ex, [(7.0, 1.0)]))
    text = d.text()
    # the boulder's double echo: 2 D sqrt(eps) / c = 2 * 0.5 * sqrt(6) / c = 8.2 ns
    assert f"{2 * 0.5 * math.sqrt(6.0) / C0_M_S * 1e9:.1f} ns apart" in text
    assert "Dry snow absorbs little" in text
    assert "found person 1" in text and "footprint" in text
    t_deep, w_deep = _hyperbola(ex, 1.0, 0.0)
    t_half, w_half = _hyperbola(ex, 0.5, 0.0)
    assert w_deep > w_half and t_deep > t_half  # deeper: later and wider
    assert f"{w_deep:.2f} m either side" in text
    empty = _hand_exercise()
    assert "Nobody was buried" in debrief(empty, score(empty, NOBODY)).text()


def test_debrief_of_wet_scene_with_crust_and_metal():
    for seed in range(200):
        ex = make_exercise("wet_spring", seed)
        kinds = {f.kind for f in ex.false_targets}
        if ex.scenario.persons and {"crust", "ski"} <= kinds:
            break
    else:
        pytest.fail("no wet scene with a crust and a ski in 200 seeds")
    text = debrief(ex, score(ex, NOBODY)).text()
    assert "Wet snow" in text or "wet snow" in text
    assert "continuous bright line across the whole section" in text
    assert "Metal reflects all of the wave" in text
    assert "automatic detector" in text.lower()


# --------------------------------------------------------------------------- records


def _record(label: str, level: str = "first_look") -> SessionRecord:
    ex = _hand_exercise([Person(5.0, 1.0, heading_deg=90.0)])
    rec = SessionRecord(label, level, 42)
    rec = rec.with_round(RoundRecord.from_score(1, 11, score(ex, [(5.0, 1.0)]), 12.5))
    rec = rec.with_round(RoundRecord.from_score(2, 12, score(ex, [(8.0, 1.0)]), 30.0))
    empty = _hand_exercise()
    return rec.with_round(RoundRecord.from_score(3, 13, score(empty, NOBODY), 7.5))


def test_session_record_round_trips_as_json_and_csv():
    rec = _record("team B, trainee 3")
    assert SessionRecord.from_json(rec.to_json()) == rec
    assert SessionRecord.from_csv(rec.to_csv()) == rec
    assert SessionRecord.read(rec.to_csv().encode()) == rec
    assert rec.to_csv().startswith("# Planning and training aid")
    assert rec.rounds[1].fooled_by == ("clutter",) and rec.rounds[2].marks is None


@pytest.mark.parametrize(("mutate", "field"), [
    (lambda d: d.update(label="x" * 100), "label"),
    (lambda d: d["rounds"][0].update(finds=5), "finds"),
    (lambda d: d["rounds"][0].update(seconds=-1), "seconds"),
    (lambda d: d["rounds"][0].update(colour=1), "colour"),
    (lambda d: d["rounds"][0].update(fooled_by=["ghost"]), "fooled_by"),
    (lambda d: d.update(session_seed="x"), "session_seed"),
])
def test_bad_session_record_names_the_field(mutate, field):
    d = json.loads(_record("a").to_json())
    mutate(d)
    with pytest.raises(RecordFileError, match=field):
        SessionRecord.from_json(json.dumps(d))


def test_class_summary_adds_up_by_level_trainee_and_what_fooled_them():
    recs = [_record("a"), _record("b"), _record("c", "wet_spring")]
    s = class_summary(recs)
    first = next(r for r in s.rows if r["level"] == "first_look")
    assert first["trainees"] == 2 and first["rounds"] == 6
    assert (first["people"], first["finds"], first["misses"], first["false_alarms"]) == (
        4, 2, 2, 2)
    assert (first["nobody_rounds"], first["nobody_correct"]) == (2, 2)
    assert first["median_seconds"] == 12.5
    assert s.fooled_by == (("clutter", 3),)
    assert len(s.trainees) == 3
    assert "What fooled them" in s.to_html() and "by level" in s.to_csv()


def test_answer_key_lists_every_round_of_the_session():
    page = answer_key_html("look_alikes", 99, 3)
    assert "Caution." in page
    for i in range(3):
        ex = make_exercise("look_alikes", round_seed(99, i))
        assert f"Round {i + 1} (exercise seed {round_seed(99, i)})" in page
        for p in ex.scenario.persons:
            assert f"{p.position_m:.1f} m along the line, top {p.depth_m:.2f} m deep" in page
        if not ex.scenario.persons:
            assert "Nobody buried" in page
    with pytest.raises(ValueError, match="rounds"):
        answer_key_html("look_alikes", 99, 0)


def test_searcher_view_holds_no_truth():
    ex = _person_exercises("look_alikes", 1)[0]
    view = ex.searcher_view()
    assert view.radargram.truth == () and view.radargram.scenario is None
    for p in ex.scenario.persons:
        assert f"{p.depth_m:.2f}" not in view.prompt
    assert np.array_equal(view.radargram.data, ex.processed.data)


def test_training_imports_no_widgets():
    code = ("import sys, snowprobe_widgets.training; "
            "bad = [m for m in sys.modules if m.split('.')[0] in ('ipywidgets', 'bqplot')]; "
            "sys.exit(1 if bad else 0)")
    assert subprocess.run([sys.executable, "-c", code], check=False).returncode == 0


def test_level_is_a_frozen_value():
    lv = get_level("first_look")
    with pytest.raises(dataclasses.FrozenInstanceError):
        lv.nobody_share = 0.9  # type: ignore[misc]
