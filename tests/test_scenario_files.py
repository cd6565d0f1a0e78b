"""Tests of scenario files: JSON round trip, atomic saves and refusal of bad files."""

from __future__ import annotations

import copy
import dataclasses
import json
import os

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from snowprobe_widgets import scenario_files
from snowprobe_widgets.scenario_files import (
    FORMAT,
    MAX_FILE_BYTES,
    SCHEMA_VERSION,
    ScenarioFileError,
    dumps,
    load,
    loads,
    save,
    scenario_from_dict,
    scenario_to_dict,
)
from snowprobe_widgets.scene import (
    Boulder,
    Branch,
    Clutter,
    Ground,
    Layer,
    MetalPlate,
    Person,
    Radar,
    Scenario,
    Snowpack,
    Survey,
    _band_high_hz,
)

# --------------------------------------------------------------------------- strategies


def _num(lo, hi):
    return st.floats(lo, hi, allow_nan=False, allow_infinity=False)


def _text(max_size):
    return st.text(max_size=max_size)


@st.composite
def layers(draw):
    crust = draw(st.booleans()) and draw(st.integers(0, 3)) == 0
    if crust:
        return Layer(draw(_num(0.001, 0.3)), draw(_num(700.0, 917.0)), 0.0, True)
    density = draw(_num(30.0, 917.0))
    max_lwc = min(12.0, 100.0 * (1.0 - density / 917.0))
    return Layer(draw(_num(0.01, 3.0)), density, draw(_num(0.0, max(0.0, max_lwc - 1e-6))))


@st.composite
def geometry(draw, survey, max_depth_m):
    return dict(
        position_m=draw(_num(survey.start_m - 5.0, survey.end_m + 5.0)),
        offset_m=draw(_num(-5.0, 5.0)),
        depth_m=draw(_num(0.0, max_depth_m)),
    )


@st.composite
def persons(draw, survey, snow_m):
    posture = draw(st.sampled_from(["lying_flat", "curled"]))
    thick = 0.25 if posture == "lying_flat" else 0.5
    g = draw(geometry(survey, snow_m - thick))
    return Person(**g, heading_deg=draw(_num(-360.0, 360.0)), posture=posture,
                  height_m=draw(_num(0.5, 2.3)), clothing_m=draw(_num(0.0, 0.05)),
                  skin_m=draw(_num(0.0005, 0.005)), fat_m=draw(_num(0.001, 0.03)),
                  muscle_m=draw(_num(0.005, 0.03)), label=draw(_text(20)))


@st.composite
def debris(draw, survey, snow_m):
    kind = draw(st.sampled_from(["boulder", "branch", "metal"]))
    if kind == "boulder":
        d = draw(_num(0.05, min(5.0, snow_m)))
        g = draw(geometry(survey, snow_m - d))
        return Boulder(**g, diameter_m=d, permittivity=draw(_num(2.0, 40.0)),
                       conductivity_s_m=draw(_num(0.0, 1.0)))
    if kind == "branch":
        d = draw(_num(0.01, min(1.5, snow_m)))
        g = draw(geometry(survey, snow_m - d))
        return Branch(**g, diameter_m=d, length_m=draw(_num(0.1, 20.0)),
                      heading_deg=draw(_num(-360.0, 360.0)),
                      water_fraction=draw(_num(0.0, 0.6)), frozen=draw(st.booleans()))
    length = draw(_num(0.02, min(3.0, snow_m)))
    tilt = draw(_num(-90.0, 90.0))
    g = draw(geometry(survey, max(0.0, snow_m - length)))
    return MetalPlate(**g, length_m=length, width_m=draw(_num(0.01, min(1.0, length))),
                      heading_deg=draw(_num(-360.0, 360.0)), tilt_deg=tilt,
                      label=draw(_text(20)))


@st.composite
def radars(draw):
    from snowprobe_widgets import pulses

    pulse = draw(st.sampled_from(sorted(pulses.pulse_names())))
    fc = draw(_num(50e6, 3e9))
    bw = draw(st.one_of(st.none(), _num(0.5, 1.5).map(lambda x: x * fc)))
    try:
        f_high = _band_high_hz(pulses.make_pulse(pulse, fc, bw))
    except ValueError:
        bw = None
        f_high = _band_high_hz(pulses.make_pulse(pulse, fc, None))
    dt = draw(_num(0.2, 0.99)) / (2.0 * f_high)
    n = draw(st.integers(64, 8192))
    return Radar(pulse, fc, bw, transmit_power_dbm=draw(_num(-30.0, 60.0)),
                 noise_floor_dbm=draw(_num(-200.0, -31.0)), stacking=draw(st.integers(1, 65536)),
                 antenna_gain_dbi=draw(_num(-10.0, 30.0)), dt_s=dt, time_window_s=n * dt,
                 antenna_height_m=draw(_num(0.05, 30.0)), beamwidth_deg=draw(_num(5.0, 180.0)),
                 polarization=draw(st.sampled_from(["across_line", "along_line"])))


@st.composite
def scenarios(draw):
    snowpack = Snowpack(tuple(draw(st.lists(layers(), min_size=1, max_size=6))),
                        temperature_c=draw(_num(-50.0, 0.0)))
    start = draw(_num(-100.0, 100.0))
    survey = Survey(start, start + draw(_num(0.5, 50.0)), draw(_num(0.05, 2.0)))
    snow = snowpack.depth_m
    ground = Ground(draw(st.sampled_from(["soil", "rock"])), draw(_num(0.0, 0.5)),
                    draw(_num(2.0, 40.0)), draw(_num(0.0, 1.0)))
    people = draw(st.lists(persons(survey, snow), max_size=3)) if snow >= 0.5 else []
    things = draw(st.lists(debris(survey, snow), max_size=4)) if snow >= 0.1 else []
    clutter = Clutter(draw(_num(0.0, 10.0)), draw(_num(0.005, 2.0)), draw(st.integers(0, 500)),
                      draw(_num(0.0, 1.0)), draw(st.integers(0, 2**32 - 1)))
    return Scenario(snowpack, ground, tuple(people), tuple(things), draw(radars()), survey,
                    clutter, draw(_text(40)), draw(_text(200)))


def good_doc():
    s = Scenario(
        Snowpack((Layer(0.5, 200.0), Layer(1.0, 300.0), Layer(1.0, 400.0, 1.0))),
        Ground(),
        persons=(Person(5.0, 1.0, label="p"),),
        objects=(Boulder(2.0, 0.5, 0.4), Branch(3.0, 0.4, 0.1, 2.0),
                 MetalPlate(4.0, 0.3, 1.7, 0.1)),
        name="test", notes="notes",
    )
    return s, json.loads(s.to_json())


# --------------------------------------------------------------------------- round trip


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(scenarios())
def test_json_round_trip_of_random_scenarios(scenario):
    text = scenario.to_json()
    back = Scenario.from_json(text)
    assert back == scenario
    assert back.to_json() == text
    assert Scenario.from_json(text.encode("utf-8")) == scenario


def test_every_field_is_written_and_the_schema_matches_the_dataclasses():
    # the hand-written schema must list exactly the dataclass fields, in order
    for spec in scenario_files._SPECS:
        assert tuple(spec.kinds) == tuple(f.name for f in dataclasses.fields(spec.cls))
    s, doc = good_doc()
    assert doc["format"] == FORMAT and doc["schema_version"] == SCHEMA_VERSION
    assert isinstance(doc["caution"], str) and "does not replace" in doc["caution"]
    sc = doc["scenario"]
    assert set(sc) == {f.name for f in dataclasses.fields(Scenario)}
    assert set(sc["radar"]) == {f.name for f in dataclasses.fields(Radar)}
    assert sc["radar"]["bandwidth_hz"] is None
    assert set(sc["snowpack"]["layers"][0]) == {f.name for f in dataclasses.fields(Layer)}
    assert [o["type"] for o in sc["objects"]] == ["boulder", "branch", "metal"]
    assert set(sc["objects"][2]) == {"type"} | {f.name for f in dataclasses.fields(MetalPlate)}
    assert scenario_to_dict(s) == sc
    assert scenario_from_dict(sc) == s


def test_save_and_load(tmp_path):
    s, _ = good_doc()
    path = tmp_path / "scene.json"
    s.save(path)
    assert Scenario.load(path) == s
    assert load(str(path)) == s
    assert (path.stat().st_mode & 0o777) == 0o644
    assert os.listdir(tmp_path) == ["scene.json"]
    # saving again replaces the file and keeps its permission bits
    os.chmod(path, 0o600)
    save(dataclasses.replace(s, name="second"), path)
    assert Scenario.load(path).name == "second"
    assert (path.stat().st_mode & 0o777) == 0o600
    assert os.listdir(tmp_path) == ["scene.json"]


def test_failed_save_leaves_the_existing_file_untouched(tmp_path, monkeypatch):
    s, _ = good_doc()
    path = tmp_path / "scene.json"
    s.save(path)
    before = path.read_bytes()

    def broken_replace(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(scenario_files.os, "replace", broken_replace)
    with pytest.raises(ScenarioFileError, match="cannot save scenario .*No space left"):
        save(dataclasses.replace(s, name="other"), path)
    assert path.read_bytes() == before
    assert os.listdir(tmp_path) == ["scene.json"]  # the temporary file is gone
    monkeypatch.undo()

    def broken_fsync(fd):
        raise KeyboardInterrupt

    monkeypatch.setattr(scenario_files.os, "fsync", broken_fsync)
    with pytest.raises(KeyboardInterrupt):
        save(dataclasses.replace(s, name="other"), path)
    assert path.read_bytes() == before
    assert os.listdir(tmp_path) == ["scene.json"]
    monkeypatch.undo()

    with pytest.raises(ValueError, match="scenario must be a Scenario"):
        save({"not": "a scenario"}, path)
    assert path.read_bytes() == before


def test_save_refuses_folders_and_missing_folders(tmp_path):
    s, _ = good_doc()
    with pytest.raises(ScenarioFileError, match="it is a folder"):
        save(s, tmp_path)
    with pytest.raises(ScenarioFileError, match="cannot save scenario"):
        save(s, tmp_path / "no_such_folder" / "x.json")


# --------------------------------------------------------------------------- refusals


def _edit(fn):
    _, doc = good_doc()
    fn(doc)
    return json.dumps(doc)


def _set_path(doc, keys, value):
    node = doc
    for k in keys[:-1]:
        node = node[k]
    node[keys[-1]] = value


MALFORMED = [
    ("", "the text is empty"),
    ("   \n", "the text is empty"),
    ("{", "not valid JSON (is the file truncated or damaged?)"),
    ("hello", "not valid JSON"),
    ("[1, 2]", "expected a JSON object at the top, got a list"),
    ('{"format": "something-else"}', "format: expected 'snowprobe-scenario'"),
    ('{"format": "snowprobe-scenario"}', "schema_version: expected an integer, got null"),
    ('{"format": "snowprobe-scenario", "schema_version": "1"}',
     'schema_version: expected an integer, got "1"'),
    ('{"format": "snowprobe-scenario", "schema_version": true}',
     "schema_version: expected an integer, got true"),
    ('{"format": "snowprobe-scenario", "schema_version": 2, "scenario": {}}',
     "schema_version 2 is newer than this package reads (1)"),
    ('{"format": "snowprobe-scenario", "schema_version": 0, "scenario": {}}',
     "schema_version 0 is not a known version"),
    ('{"format": "snowprobe-scenario", "schema_version": 1}', "missing field 'scenario'"),
    ('{"format": "snowprobe-scenario", "schema_version": 1, "scenario": [], "x": 1}',
     "x: unknown field; known: format, schema_version, caution, scenario"),
    ('{"format": "snowprobe-scenario", "schema_version": 1, "scenario": NaN}',
     "NaN is not allowed"),
    ('{"format": "snowprobe-scenario", "schema_version": 1, "scenario": 1e999}',
     "too large (numbers must be finite)"),
    ('{"format": "snowprobe-scenario", "format": "snowprobe-scenario"}',
     "the field 'format' appears twice"),
    ('{"format": "snowprobe-scenario", "schema_version": 1' + "0" * 50 + "}",
     "digits is too long"),
]


@pytest.mark.parametrize("text, message", MALFORMED)
def test_malformed_text_gives_a_clear_error(text, message):
    with pytest.raises(ScenarioFileError) as info:
        loads(text)
    assert message in str(info.value)


FIELD_ERRORS = [
    (["scenario", "radar", "puls"], "ricker",
     "scenario.radar.puls: unknown field; known: pulse, center_frequency_hz"),
    (["scenario", "__class__"], "os.system",
     "scenario.__class__: unknown field; known: snowpack, ground"),
    (["scenario", "snowpack", "layers", 2, "density_kg_m3"], "abc",
     'scenario.snowpack.layers[2].density_kg_m3: expected a number, got "abc"'),
    (["scenario", "snowpack", "layers", 0, "thickness_m"], True,
     "scenario.snowpack.layers[0].thickness_m: expected a number, got true"),
    (["scenario", "snowpack", "layers", 0, "ice_crust"], 0,
     "scenario.snowpack.layers[0].ice_crust: expected true or false, got 0"),
    (["scenario", "snowpack", "layers"], {"a": 1},
     "scenario.snowpack.layers: expected a list, got an object"),
    (["scenario", "snowpack", "layers", 1], [1, 2],
     "scenario.snowpack.layers[1]: expected an object, got a list"),
    (["scenario", "radar", "stacking"], 16.5,
     "scenario.radar.stacking: expected an integer, got 16.5"),
    (["scenario", "radar", "stacking"], "16",
     'scenario.radar.stacking: expected an integer, got "16"'),
    (["scenario", "radar", "dt_s"], None, "scenario.radar.dt_s: expected a number, got null"),
    (["scenario", "radar", "center_frequency_hz"], 7e9,
     "scenario.radar: center_frequency_hz = 7e+09 Hz is outside the allowed range"),
    (["scenario", "persons", 0, "depth_m"], 3.0,
     "scenario: persons[0] (person 'p') at depth_m = 3 m reaches down to 3.25 m, deeper "
     "than the 2.5 m snowpack"),
    (["scenario", "persons", 0, "posture"], "sitting",
     "scenario.persons[0]: posture = 'sitting' is not one of"),
    (["scenario", "objects", 0, "type"], "person",
     "scenario.objects[0].type: \"person\" is not one of 'boulder', 'branch', 'metal'"),
    (["scenario", "objects", 1, "type"], 3,
     "scenario.objects[1].type: 3 is not one of"),
    (["scenario", "objects", 2, "tilt_deg"], 120.0,
     "scenario.objects[2]: tilt_deg = 120 deg is outside the allowed range"),
    (["scenario", "name"], 7, "scenario.name: expected a string, got 7"),
    (["scenario", "radar", "polarization"], "vertical",
     "scenario.radar: polarization = 'vertical' is not one of: 'across_line', 'along_line'"),
    (["scenario", "ground"], "soil", 'scenario.ground: expected an object, got "soil"'),
    (["scenario", "snowpack", "layers"], [],
     "scenario.snowpack: layers has 0 entries; a snowpack needs 1 to 200 layers"),
    (["caution"], 5, "caution: expected a string, got 5"),
]


@pytest.mark.parametrize("keys, value, message", FIELD_ERRORS)
def test_bad_fields_are_named_by_their_json_path(keys, value, message):
    text = _edit(lambda d: _set_path(d, keys, value))
    with pytest.raises(ScenarioFileError) as info:
        loads(text)
    assert message in str(info.value)


def test_missing_fields_and_type_tags():
    text = _edit(lambda d: d["scenario"]["radar"].pop("dt_s"))
    with pytest.raises(ScenarioFileError, match=r"scenario.radar: missing field 'dt_s'"):
        loads(text)
    text = _edit(lambda d: d["scenario"]["objects"][0].pop("type"))
    with pytest.raises(ScenarioFileError, match=r"scenario.objects\[0\]: missing field 'type'"):
        loads(text)
    # a field of one object type is unknown in another
    text = _edit(lambda d: d["scenario"]["objects"][0].update(label="rock"))
    with pytest.raises(ScenarioFileError, match=r"scenario.objects\[0\].label: unknown field"):
        loads(text)


def test_a_file_from_before_the_polarization_field_loads_with_its_default():
    # radar.polarization was added to schema version 1 later: older files lack it
    text = _edit(lambda d: d["scenario"]["radar"].pop("polarization"))
    assert loads(text).radar.polarization == "across_line"
    s, _ = good_doc()
    along = dataclasses.replace(s, radar=dataclasses.replace(s.radar, polarization="along_line"))
    assert loads(along.to_json()).radar.polarization == "along_line"


@pytest.mark.parametrize("constant", ["NaN", "Infinity", "-Infinity"])
def test_non_finite_constants_anywhere_are_refused(constant):
    text = _edit(lambda d: None).replace('"thickness_m": 0.5', f'"thickness_m": {constant}')
    assert constant in text
    with pytest.raises(ScenarioFileError, match=f"{constant} is not allowed"):
        loads(text)


def test_lists_longer_than_the_limit_are_refused_before_building():
    text = _edit(lambda d: d["scenario"].update(persons=[{}] * 51))
    with pytest.raises(ScenarioFileError, match=r"scenario.persons: 51 entries; at most 50"):
        loads(text)


def test_deep_nesting_is_refused_without_a_crash():
    for depth in (20, 100_000):
        text = _edit(lambda d: None).replace('"notes": "notes"',
                                             '"notes": ' + "[" * depth + "]" * depth)
        with pytest.raises(ScenarioFileError, match="nested more than 16 levels deep"):
            loads(text)
    with pytest.raises(ScenarioFileError, match="nested more than 16 levels deep"):
        scenario_from_dict({"a": json.loads("[" * 20 + "]" * 20)})


def test_oversized_and_undecodable_input():
    _, doc = good_doc()
    doc["scenario"]["notes"] = "x" * (MAX_FILE_BYTES + 10)
    big = json.dumps(doc)
    with pytest.raises(ScenarioFileError, match="over the 2000000 limit"):
        loads(big)
    with pytest.raises(ScenarioFileError, match="over the 2000000 byte limit"):
        loads(big.encode())
    with pytest.raises(ScenarioFileError, match="not UTF-8 text"):
        loads(b'{"format": "\xff\xfe"}')
    with pytest.raises(ScenarioFileError, match="expected JSON text, got int"):
        loads(42)
    ok = _edit(lambda d: None)
    assert loads(b"\xef\xbb\xbf" + ok.encode()) == good_doc()[0]  # a byte-order mark is fine


def test_every_truncation_of_a_file_gives_a_clear_error():
    text = good_doc()[0].to_json()
    cut_points = range(0, len(text) - 2, 7)
    for cut in cut_points:
        with pytest.raises(ScenarioFileError):
            loads(text[:cut])


_json_leaf = st.one_of(st.none(), st.booleans(), st.integers(-10**6, 10**6),
                       st.floats(allow_nan=False, allow_infinity=False), st.text(max_size=5),
                       st.just([]), st.just({}), st.just({"type": "boulder"}))


def _leaf_paths(node, prefix=()):
    if isinstance(node, dict):
        for k, v in node.items():
            yield from _leaf_paths(v, prefix + (k,))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            yield from _leaf_paths(v, prefix + (i,))
    yield prefix


@settings(max_examples=150, deadline=None)
@given(st.data())
def test_random_damage_gives_a_scenario_or_a_clear_error(data):
    _, doc = good_doc()
    paths = [p for p in _leaf_paths(doc) if p]
    keys = data.draw(st.sampled_from(paths))
    damaged = copy.deepcopy(doc)
    if data.draw(st.booleans()):
        _set_path(damaged, list(keys), data.draw(_json_leaf))
    else:
        parent = damaged
        for k in keys[:-1]:
            parent = parent[k]
        del parent[keys[-1]]
    try:
        result = loads(json.dumps(damaged))
    except ScenarioFileError as exc:
        assert str(exc)
    else:
        assert isinstance(result, Scenario)


# --------------------------------------------------------------------------- files on disk


def test_load_errors_name_the_file_and_leave_it_untouched(tmp_path):
    bad = tmp_path / "bad.json"
    bad.write_text(_edit(lambda d: _set_path(d, ["scenario", "radar", "puls"], 1)))
    before = bad.read_bytes()
    with pytest.raises(ScenarioFileError) as info:
        Scenario.load(bad)
    assert str(info.value).startswith(f"scenario file {str(bad)!r}: scenario.radar.puls")
    assert bad.read_bytes() == before
    with pytest.raises(ScenarioFileError, match="cannot read scenario file .*No such file"):
        load(tmp_path / "missing.json")
    with pytest.raises(ScenarioFileError, match="not a regular file"):
        load(tmp_path)
    huge = tmp_path / "huge.json"
    with open(huge, "wb") as f:
        f.truncate(MAX_FILE_BYTES + 1)
    with pytest.raises(ScenarioFileError, match="over the 2000000 byte limit"):
        load(huge)


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
def test_load_does_not_open_a_named_pipe(tmp_path):
    fifo = tmp_path / "pipe.json"
    os.mkfifo(fifo)
    with pytest.raises(ScenarioFileError, match="not a regular file"):
        load(fifo)


def test_dumps_writes_utf8_json_text():
    s, _ = good_doc()
    text = dumps(s)
    assert text.endswith("\n")
    assert json.loads(text)["scenario"]["name"] == "test"
    unicode = dataclasses.replace(s, name="Lawine \u00e9t\u00e9 \u2744")
    assert "\u2744" in dumps(unicode) and Scenario.from_json(dumps(unicode)) == unicode


# --------------------------------------------------------------------------- smaller defects


def test_a_nul_byte_in_a_path_is_a_clear_error(tmp_path):
    s, _ = good_doc()
    for call in (lambda: save(s, f"{tmp_path}/a\0b.json"),
                 lambda: scenario_files.load(f"{tmp_path}/a\0b.json")):
        with pytest.raises(ScenarioFileError, match="contains a NUL character"):
            call()
    assert os.listdir(tmp_path) == []


def test_a_lone_surrogate_is_refused_on_loading_naming_the_field():
    _, doc = good_doc()
    doc["scenario"]["name"] = "\ud800"
    text = json.dumps(doc)  # ASCII JSON: the escape \ud800 reaches the parser
    with pytest.raises(ScenarioFileError, match=r"scenario\.name: .*lone surrogate"):
        scenario_files.loads(text)
    with pytest.raises(ValueError, match="name holds a character that is not valid Unicode"):
        dataclasses.replace(Scenario.default(), name="x\udfffy")


def test_an_over_long_integer_is_a_clear_error():
    _, doc = good_doc()
    text = json.dumps(doc).replace('"seed": 0', '"seed": ' + "9" * 400)
    assert "9" * 400 in text
    with pytest.raises(ScenarioFileError, match="an integer with 400 digits is too long"):
        scenario_files.loads(text)


def test_leftovers_of_a_killed_save_are_cleaned_by_the_next_save(tmp_path):
    import subprocess
    import sys

    s, _ = good_doc()
    code = ("import os, sys\nfrom snowprobe_widgets import atomic_files\n"
            "real = os.replace\n"
            "def die(*a):\n    os._exit(9)\n"
            "os.replace = die\n"
            "from snowprobe_widgets.scene import Scenario\n"
            "Scenario.default().save(sys.argv[1])\n")
    done = subprocess.run([sys.executable, "-c", code, str(tmp_path / "a.json")])
    assert done.returncode == 9
    assert len(os.listdir(tmp_path)) == 1  # the killed save's temporary file
    save(s, tmp_path / "b.json")
    assert os.listdir(tmp_path) == ["b.json"]


# ------------------------------------------------------------------ a layer's dielectric model
def test_a_layer_model_is_written_read_and_old_files_keep_the_default() -> None:
    import dataclasses
    import json

    import jsonschema

    from snowprobe_widgets import scenario_files
    from snowprobe_widgets.scene import Scenario

    base = Scenario.example("crust_and_ski")
    layers = list(base.snowpack.layers)
    layers[0] = dataclasses.replace(layers[0], dielectric_model="kovacs+crim")
    s = dataclasses.replace(base, snowpack=dataclasses.replace(base.snowpack,
                                                               layers=tuple(layers)))
    doc = json.loads(scenario_files.dumps(s))
    assert doc["scenario"]["snowpack"]["layers"][0]["dielectric_model"] == "kovacs+crim"
    jsonschema.Draft202012Validator(scenario_files.json_schema()).validate(doc)
    assert scenario_files.loads(json.dumps(doc)) == s
    # a file written before the field existed loads unchanged, with the default model
    old = json.loads(scenario_files.dumps(base))
    for layer in old["scenario"]["snowpack"]["layers"]:
        del layer["dielectric_model"]
    jsonschema.Draft202012Validator(scenario_files.json_schema()).validate(old)
    assert scenario_files.loads(json.dumps(old)) == base
    assert all(la.dielectric_model == "snow" for la in base.snowpack.layers)
    # an unknown model: refused with the field's path and the known names
    doc["scenario"]["snowpack"]["layers"][0]["dielectric_model"] = "granite"
    with pytest.raises(scenario_files.ScenarioFileError,
                       match=r"layers\[0\].*dielectric_model = 'granite'.*'snow'"):
        scenario_files.loads(json.dumps(doc))
