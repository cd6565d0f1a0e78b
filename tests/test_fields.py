"""Field declarations: validation, screen messages, paths, and the JSON Schema file."""

from __future__ import annotations

import json
import math
import re

import jsonschema
import pytest

from snowprobe_widgets import fields, scenario_files
from snowprobe_widgets.fields import (
    FieldError,
    declaration,
    declaration_at,
    plain_number,
    screen_message,
    value_at,
    with_value,
)
from snowprobe_widgets.scene import Boulder, Branch, MetalPlate, Radar, Scenario

_EXPONENT = re.compile(r"\d[eE][+-]?\d")


def _schema_of(group: str) -> dict:
    """The schema of the objects of ``group`` inside the scenario file schema."""
    sc = scenario_files.json_schema()["properties"]["scenario"]
    props = sc["properties"]
    where = {"scenario": sc, "snowpack": props["snowpack"], "ground": props["ground"],
             "radar": props["radar"], "survey": props["survey"], "clutter": props["clutter"],
             "layer": props["snowpack"]["properties"]["layers"]["items"],
             "person": props["persons"]["items"]}
    if group in where:
        return where[group]
    for option in props["objects"]["items"]["oneOf"]:
        if option["properties"]["type"]["const"] == group:
            return option
    raise KeyError(group)


def _owner(group: str) -> object:
    """A valid value object of ``group`` to replace fields in."""
    s = Scenario.example("crust_and_ski")
    return {"scenario": s, "snowpack": s.snowpack, "ground": s.ground, "radar": s.radar,
            "survey": s.survey, "clutter": s.clutter, "layer": s.snowpack.layers[0],
            "person": s.persons[0], "boulder": Boulder(1.0, 0.5, 0.5),
            "branch": Branch(1.0, 0.5, 0.1, 2.0), "metal": MetalPlate(1.0, 0.5, 1.7, 0.1)}[group]


def _outside(f: fields.Field) -> float:
    """A value just outside the declared hard range."""
    if math.isfinite(f.high):
        return f.high + max(1.0, abs(f.high))
    return f.low - max(1.0, abs(f.low))


# processing steps declare their parameters too ("step:<name>"): they are no part of a
# scenario file; tests/widgets/test_processing_panel.py walks them
@pytest.mark.parametrize("f", [f for f in fields.iter_declarations()
                               if not f.group.startswith("step:")], ids=lambda f: f.path)
def test_every_declaration_agrees_with_the_schema_and_the_constructors(f) -> None:
    import dataclasses

    if f.group == "object":  # the geometry of plugin kinds that declare none of their own
        assert fields.declaration("sledge", f.name) is f
        with pytest.raises(FieldError):
            fields.check("sledge", f.name, _outside(f))
        return
    prop = _schema_of(f.group)["properties"][f.name]
    assert prop["title"] == f.label and prop["description"] == f.help and f.help
    owner = _owner(f.group)
    if f.kind in ("number", "optional number", "integer"):
        assert prop.get("exclusiveMinimum" if f.low_open else "minimum") == f.low
        assert prop.get("exclusiveMaximum" if f.high_open else "maximum", math.inf) == f.high
        bad = _outside(f)
        with pytest.raises(FieldError) as info:
            fields.check(f.group, f.name, bad)
        assert info.value.field is f
        screen = info.value.screen
        assert screen.startswith(f.label)
        assert "_" not in f.name or f.name not in screen  # no internal names
        assert not _EXPONENT.search(screen), screen
        # the constructor refuses it through the same declaration
        with pytest.raises(FieldError) as built:
            dataclasses.replace(owner, **{f.name: int(bad) if f.kind == "integer" else bad})
        assert built.value.field is f and f.name in str(built.value)
        # both hard bounds that are closed are accepted by the declaration
        for edge, is_open in ((f.low, f.low_open), (f.high, f.high_open)):
            if math.isfinite(edge) and not is_open:
                assert fields.check(f.group, f.name, edge) == edge
    elif f.kind == "choice":
        if callable(f.choices):
            assert "enum" not in prop  # a registry plugins extend: checked on loading
        else:
            assert prop["enum"] == list(f.allowed())
        with pytest.raises(FieldError):
            dataclasses.replace(owner, **{f.name: "no such thing"})
    elif f.kind == "boolean":
        assert prop["type"] == "boolean"
        with pytest.raises(FieldError, match="must be True or False"):
            dataclasses.replace(owner, **{f.name: "yes"})
    elif f.kind == "parameters":
        assert prop["type"] == "object"
        assert prop["propertyNames"]["maxLength"] == f.max_length
        with pytest.raises(FieldError) as built:
            dataclasses.replace(owner, **{f.name: {"x" * (f.max_length + 1): 1}})
        assert built.value.field is f and built.value.screen.startswith(f.label)
    else:
        assert prop["maxLength"] == f.max_length
        with pytest.raises(FieldError, match="characters long"):
            dataclasses.replace(owner, **{f.name: "x" * (f.max_length + 1)})


def test_schema_lists_every_declared_field_and_nothing_else() -> None:
    for group, declared in fields.FIELDS.items():
        if group == "object" or group.startswith("step:"):  # processing steps: no file part
            continue
        props = set(_schema_of(group)["properties"]) - {"type"}
        scalar = {k for k in props if "properties" not in _schema_of(group)["properties"][k]
                  and _schema_of(group)["properties"][k].get("type") != "array"}
        assert scalar == set(declared), group


def test_shipped_schema_file_is_json_schema() -> None:
    shipped = json.loads(scenario_files.SCHEMA_FILE.read_text(encoding="utf-8"))
    assert shipped == scenario_files.json_schema()
    jsonschema.Draft202012Validator.check_schema(shipped)


@pytest.mark.parametrize("name", Scenario.examples())
def test_every_demo_file_passes_the_schema(name: str) -> None:
    doc = json.loads(Scenario.example(name).to_json())
    jsonschema.Draft202012Validator(scenario_files.json_schema()).validate(doc)


@pytest.mark.parametrize("path, value", [
    ("persons[0].depth_m", -0.5),
    ("radar.center_frequency_hz", 7e9),
    ("survey.trace_spacing_m", 0.0),
    ("snowpack.layers[0].density_kg_m3", 1000.0),
    ("clutter.seed", 1.5),
    ("ground.kind", "clay"),
    ("objects[0].tilt_deg", 95.0),
])
def test_schema_and_loader_refuse_the_same_out_of_range_values(path: str, value) -> None:
    doc = json.loads(Scenario.example("crust_and_ski").to_json())
    node = doc["scenario"]
    *parents, last = path.replace("]", "").replace("[", ".").split(".")
    for p in parents:
        node = node[int(p)] if p.isdigit() else node[p]
    node[last] = value
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(doc, scenario_files.json_schema())
    with pytest.raises(scenario_files.ScenarioFileError):
        scenario_files.loads(json.dumps(doc))


# --------------------------------------------------------------------------- messages
def test_nyquist_refusal_speaks_the_screens_language() -> None:
    with pytest.raises(FieldError) as info:
        Radar("ricker", 2.5e9, dt_s=1e-10, time_window_s=51.2e-9)
    assert "dt_s" in str(info.value) and "Nyquist" in str(info.value)
    text = info.value.screen
    assert text.startswith("Sample interval 100 ps is too coarse for a 2500 MHz pulse: use ")
    assert text.endswith(" ps or less, or a lower centre frequency.")
    limit = float(text.split("use ")[1].split(" ps")[0])
    Radar("ricker", 2.5e9, dt_s=limit * 1e-12, time_window_s=51.2e-9)  # the advice works
    assert screen_message(info.value) == text
    assert screen_message(ValueError("plain")) == "plain"


def test_out_of_range_message_names_label_display_unit_and_range() -> None:
    with pytest.raises(FieldError) as info:
        Radar(center_frequency_hz=7e9)
    assert info.value.screen == "Centre frequency 7000 MHz is out of range: use 50 to 6000 MHz."
    with pytest.raises(FieldError) as info:
        fields.check("clutter", "seed", 2.5)
    assert info.value.screen == "Random seed: type a whole number."


def test_plain_number() -> None:
    assert plain_number(4.7558e-11 * 1e12) == "47.6"
    assert plain_number(2500.0) == "2500"
    assert plain_number(0.001173) == "0.00117"
    assert plain_number(-0.0) == "0"


# --------------------------------------------------------------------------- paths
def test_paths_resolve_read_and_replace() -> None:
    s = Scenario.example("two_burials")
    assert declaration_at("persons[0].depth_m") is declaration("person", "depth_m")
    assert declaration_at("persons[*].depth_m").label == "Depth to top"
    assert declaration_at("snowpack.layers[2].lwc_percent").display_unit == "%"
    assert declaration_at("radar.center_frequency_hz").display_unit == "MHz"
    assert declaration_at("name") is declaration("scenario", "name")
    assert value_at(s, "persons[*].depth_m") == [0.9, 1.4]
    deeper = with_value(s, "persons[1].depth_m", 1.5)
    assert [p.depth_m for p in deeper.persons] == [0.9, 1.5]
    wet = with_value(s, "snowpack.layers[*].lwc_percent", 2.0)
    assert {la.lwc_percent for la in wet.snowpack.layers} == {2.0}
    assert with_value(s, "radar.center_frequency_hz", 500e6).radar.center_frequency_hz == 500e6
    with pytest.raises(FieldError) as info:  # validated like any scenario
        with_value(s, "persons[0].depth_m", 50.0)
    assert "below the" in info.value.screen


def test_object_paths_follow_the_objects_kind() -> None:
    s = Scenario.example("crust_and_ski")
    kind = s.objects[0].kind
    assert declaration_at("objects[0].depth_m", s) is declaration(kind, "depth_m")
    with pytest.raises(ValueError, match="differs between object kinds"):
        declaration_at("objects[0].diameter_m")


@pytest.mark.parametrize("path", ["", "radar", "radar.nope", "persons.depth_m",
                                  "radar[0].dt_s", "persons[0]", "persons[x].depth_m",
                                  "objects[0].nope"])
def test_bad_paths_are_refused(path: str) -> None:
    with pytest.raises(ValueError):
        declaration_at(path)
