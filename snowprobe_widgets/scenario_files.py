"""Scenario files: a versioned JSON format of this project's own, read defensively.

A file holds one JSON object::

    {
      "format": "snowprobe-scenario",
      "schema_version": 1,
      "caution": "<the package's one-line caution>",
      "scenario": {"snowpack": {...}, "ground": {...}, "persons": [...],
                   "objects": [{"type": "boulder", ...}, ...], "radar": {...},
                   "survey": {...}, "clutter": {...}, "name": "...", "notes": "..."}
    }

Every field of every value object is written explicitly and must be present on reading,
except fields added after schema version 1 was first written (``radar.polarization``,
``radar.antenna_band_low_hz`` / ``_high_hz``, ``dynamic_range_db``, ``ringing_level_db``,
``ringing_time_s``),
which an older file may lack and then take their default; ``objects`` entries carry a
``"type"`` tag: the name of a registered buried object kind (``"boulder"``, ``"branch"``,
``"metal"``, or a plugin's, see :mod:`snowprobe_widgets.targets`), whose fields the
schema takes from the kind's value object.

Reading never executes anything (plain ``json``, no pickle, no imports by name) and
refuses, with a :class:`ScenarioFileError` naming the JSON path: unknown or missing
fields, wrong types (a bool is not a number), NaN and infinities, duplicate keys, files
over 2 MB, nesting deeper than 16 levels, and any value the constructors refuse (their
message is kept, prefixed with the path). Saving writes a temporary file in the target
folder and renames it over the target, so an interrupted or refused save leaves the
existing file untouched.
"""

from __future__ import annotations

import dataclasses
import json
import math
import os
import pathlib
import stat
from typing import Any

from .atomic_files import write_atomically
from .cautions import CAUTION_SHORT
from .fields import MAX_PARAMETERS, declaration
from .scene import (
    Clutter,
    Ground,
    Layer,
    Person,
    Radar,
    Scenario,
    Snowpack,
    Survey,
)
from .targets import kinds_in

__all__ = [
    "FORMAT",
    "SCHEMA_VERSION",
    "MAX_FILE_BYTES",
    "MAX_NESTING",
    "ScenarioFileError",
    "dumps",
    "loads",
    "save",
    "load",
    "scenario_to_dict",
    "scenario_from_dict",
    "json_schema",
    "write_schema_file",
    "SCHEMA_FILE",
]

FORMAT = "snowprobe-scenario"
SCHEMA_VERSION = 1
MAX_FILE_BYTES = 2_000_000
MAX_NESTING = 16
_MAX_INT_DIGITS = 30


class ScenarioFileError(ValueError):
    """A scenario file or document that cannot be read: the message says where and why."""


# Field kinds of the schema. Nested value objects are given by their spec.
_NUM = "number"
_OPT_NUM = "number or null"
_INT = "integer"
_BOOL = "boolean"
_STR = "string"
_PARAMS = "object of named settings"


class _Spec:
    """How one value object is written and read: its class and each field's kind.

    ``added`` names fields newer than the first files of this schema version: a file
    may lack them, and then they take the dataclass default.
    """

    def __init__(self, cls: type, kinds: dict[str, Any], added: tuple[str, ...] = (),
                 group: str = "") -> None:
        self.cls = cls
        self.kinds = kinds
        self.added = added
        self.group = group

    @property
    def declarations(self) -> str:
        """Its group of declarations in :mod:`snowprobe_widgets.fields` (a buried object
        kind's group is its kind name)."""
        return self.group or self.cls.kind


#: Schema field kind of each annotation a scene value object may use.
_FIELD_KINDS = {"float": _NUM, "float | None": _OPT_NUM, "int": _INT, "bool": _BOOL,
                "str": _STR}


def _spec_of(cls: type) -> _Spec:
    """The spec of a buried object kind's value object, from its dataclass fields."""
    kinds = {}
    for f in dataclasses.fields(cls):
        t = f.type if isinstance(f.type, str) else getattr(f.type, "__name__", repr(f.type))
        if t not in _FIELD_KINDS:
            raise TypeError(f"{cls.__name__}.{f.name} has type {t!r}, which a scenario file "
                            f"cannot hold; allowed: {', '.join(_FIELD_KINDS)}")
        kinds[f.name] = _FIELD_KINDS[t]
    return _Spec(cls, kinds)


def _object_specs() -> dict[str, _Spec]:
    """Specs of the kinds a scenario's ``objects`` may hold, keyed by kind name."""
    return {k.name: _spec_of(k.value_type) for k in kinds_in("objects")}


class _ListOf:
    def __init__(self, spec: _Spec, max_items: int) -> None:
        self.spec = spec
        self.max_items = max_items


class _TaggedListOf:
    def __init__(self, specs: Any, max_items: int) -> None:
        self._specs = specs
        self.max_items = max_items

    @property
    def specs(self) -> dict[str, _Spec]:
        """The tagged specs (read from the kind registry each time: plugins may add)."""
        return self._specs()


_LAYER = _Spec(Layer, {"thickness_m": _NUM, "density_kg_m3": _NUM, "lwc_percent": _NUM,
                       "ice_crust": _BOOL, "dielectric_model": _STR},
               added=("dielectric_model",), group="layer")
_SNOWPACK = _Spec(Snowpack, {"layers": _ListOf(_LAYER, 200), "temperature_c": _NUM},
                  group="snowpack")
_GROUND = _Spec(Ground, {"kind": _STR, "water_fraction": _NUM, "permittivity": _NUM,
                         "conductivity_s_m": _NUM}, group="ground")
_PERSON = _Spec(Person, {
    "position_m": _NUM, "depth_m": _NUM, "offset_m": _NUM, "heading_deg": _NUM,
    "posture": _STR, "height_m": _NUM, "clothing_m": _NUM, "skin_m": _NUM, "fat_m": _NUM,
    "muscle_m": _NUM, "label": _STR}, group="person")
_RADAR = _Spec(Radar, {
    "pulse": _STR, "center_frequency_hz": _NUM, "bandwidth_hz": _OPT_NUM,
    "transmit_power_dbm": _NUM, "noise_floor_dbm": _NUM, "stacking": _INT,
    "antenna_gain_dbi": _NUM, "dt_s": _NUM, "time_window_s": _NUM, "antenna_height_m": _NUM,
    "beamwidth_deg": _NUM, "polarization": _STR, "antenna_band_low_hz": _OPT_NUM,
    "antenna_band_high_hz": _OPT_NUM, "dynamic_range_db": _NUM, "ringing_level_db": _NUM,
    "ringing_time_s": _OPT_NUM, "pulse_parameters": _PARAMS},
    added=("polarization", "antenna_band_low_hz", "antenna_band_high_hz", "dynamic_range_db",
           "ringing_level_db", "ringing_time_s", "pulse_parameters"), group="radar")
_SURVEY = _Spec(Survey, {"start_m": _NUM, "end_m": _NUM, "trace_spacing_m": _NUM},
                group="survey")
_CLUTTER = _Spec(Clutter, {"scatterer_density_per_m3": _NUM, "scatterer_size_m": _NUM,
                           "thin_layer_count": _INT, "thin_layer_contrast": _NUM,
                           "seed": _INT}, group="clutter")
_SCENARIO = _Spec(Scenario, {
    "snowpack": _SNOWPACK, "ground": _GROUND, "persons": _ListOf(_PERSON, 50),
    "objects": _TaggedListOf(_object_specs, 1000), "radar": _RADAR, "survey": _SURVEY,
    "clutter": _CLUTTER, "name": _STR, "notes": _STR}, group="scenario")

#: Every spec, for the test that keeps the schema in step with the dataclasses.
_SPECS: tuple[_Spec, ...] = (_LAYER, _SNOWPACK, _GROUND, _PERSON, _RADAR, _SURVEY, _CLUTTER,
                            _SCENARIO)
_TOP_KEYS = ("format", "schema_version", "caution", "scenario")


# --------------------------------------------------------------------------- writing


def _write(obj: Any, spec: _Spec) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for name, kind in spec.kinds.items():
        value = getattr(obj, name)
        if isinstance(kind, _Spec):
            out[name] = _write(value, kind)
        elif isinstance(kind, _ListOf):
            out[name] = [_write(v, kind.spec) for v in value]
        elif isinstance(kind, _TaggedListOf):
            out[name] = [{"type": v.kind, **_write(v, kind.specs[v.kind])} for v in value]
        elif kind == _INT:
            out[name] = int(value)
        elif kind in (_NUM, _OPT_NUM):
            out[name] = None if value is None else float(value)
        elif kind == _PARAMS:
            out[name] = dict(value)
        else:
            out[name] = value
    return out


def scenario_to_dict(scenario: Scenario) -> dict[str, Any]:
    """The ``"scenario"`` part of a file: plain JSON-ready dicts, lists and numbers."""
    if not isinstance(scenario, Scenario):
        raise ValueError(f"scenario must be a Scenario, got {type(scenario).__name__}")
    return _write(scenario, _SCENARIO)


def dumps(scenario: Scenario) -> str:
    """The complete scenario file as text (UTF-8 JSON, indented, ends with a newline)."""
    doc = {"format": FORMAT, "schema_version": SCHEMA_VERSION, "caution": CAUTION_SHORT,
           "scenario": scenario_to_dict(scenario)}
    return json.dumps(doc, indent=2, ensure_ascii=False, allow_nan=False) + "\n"


def save(scenario: Scenario, path: str | os.PathLike[str]) -> None:
    """Write ``scenario`` to ``path`` atomically.

    The text is built first, then written with
    :func:`snowprobe_widgets.atomic_files.write_atomically`: a temporary file created
    exclusively in the same folder (never through a symbolic link), flushed to disk and
    renamed over ``path``. On any failure the temporary file is removed and an existing
    ``path`` is left as it was; temporaries left by a killed save are removed by the next
    save to that folder. A new file gets mode 0644; a replaced file keeps its permission
    bits.

    Raises
    ------
    ScenarioFileError
        If the path is not usable (a NUL character, a folder), the folder cannot be
        written, or the scenario holds text that cannot be written as UTF-8.
    """
    target = _path_text(path)
    try:
        text = dumps(scenario).encode("utf-8")
    except UnicodeEncodeError as exc:
        raise ScenarioFileError(
            f"cannot save scenario to {target!r}: its text holds a character that is not "
            f"valid Unicode ({exc.object[exc.start:exc.end]!r})") from None
    try:
        write_atomically(target, text)
    except OSError as exc:
        raise ScenarioFileError(
            f"cannot save scenario to {target!r}: {exc.strerror or exc}") from exc


def _path_text(path: Any) -> str:
    """``path`` as text, refusing what no file system accepts (a NUL character)."""
    try:
        name = os.fspath(path)
    except TypeError:
        raise ScenarioFileError(
            f"a scenario file path must be text, got {type(path).__name__}") from None
    if isinstance(name, bytes):
        name = os.fsdecode(name)
    if "\0" in name:
        raise ScenarioFileError(f"scenario file path {name!r} contains a NUL character")
    return name


# --------------------------------------------------------------------------- reading


class _Refused(Exception):
    """Raised inside the JSON parser hooks; turned into a ScenarioFileError."""


def _refuse_constant(name: str) -> Any:
    raise _Refused(f"{name} is not allowed in a scenario file (numbers must be finite)")


def _parse_float(text: str) -> float:
    x = float(text)
    if not math.isfinite(x):
        raise _Refused(f"the number {text[:40]} is too large (numbers must be finite)")
    return x


def _parse_int(text: str) -> int:
    if len(text.lstrip("-")) > _MAX_INT_DIGITS:
        raise _Refused(f"an integer with {len(text.lstrip('-'))} digits is too long (at most "
                       f"{_MAX_INT_DIGITS} digits)")
    return int(text)


def _no_duplicates(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for key, value in pairs:
        if key in out:
            raise _Refused(f"the field {key!r} appears twice in one JSON object")
        out[key] = value
    return out


def _nesting(doc: Any) -> int:
    deepest = 0
    stack = [(doc, 1)]
    while stack:
        node, level = stack.pop()
        if isinstance(node, (dict, list)):
            deepest = max(deepest, level)
            if deepest > MAX_NESTING:
                return deepest
            children = node.values() if isinstance(node, dict) else node
            stack.extend((c, level + 1) for c in children)
    return deepest


def _show(value: Any) -> str:
    if isinstance(value, dict):
        return "an object"
    if isinstance(value, list):
        return "a list"
    if value is None:
        return "null"
    text = json.dumps(value, ensure_ascii=False)
    return text if len(text) <= 60 else text[:57] + "..."


def _read_value(value: Any, kind: Any, path: str) -> Any:
    if isinstance(kind, _Spec):
        return _read(value, kind, path)
    if isinstance(kind, (_ListOf, _TaggedListOf)):
        if not isinstance(value, list):
            raise ScenarioFileError(f"{path}: expected a list, got {_show(value)}")
        if len(value) > kind.max_items:
            raise ScenarioFileError(
                f"{path}: {len(value)} entries; at most {kind.max_items} allowed")
        if isinstance(kind, _ListOf):
            return tuple(_read(v, kind.spec, f"{path}[{i}]") for i, v in enumerate(value))
        return tuple(_read_tagged(v, kind.specs, f"{path}[{i}]") for i, v in enumerate(value))
    if kind == _OPT_NUM and value is None:
        return None
    if kind == _PARAMS:
        if not isinstance(value, dict):
            raise ScenarioFileError(f"{path}: expected an object of named settings, got "
                                    f"{_show(value)}")
        return tuple(value.items())  # checked by the value object's constructor
    if kind in (_NUM, _OPT_NUM):
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise ScenarioFileError(f"{path}: expected a {kind}, got {_show(value)}")
        return float(value)
    if kind == _INT:
        if isinstance(value, float) and value.is_integer():
            return int(value)
        if isinstance(value, bool) or not isinstance(value, int):
            raise ScenarioFileError(f"{path}: expected an integer, got {_show(value)}")
        return value
    if kind == _BOOL:
        if not isinstance(value, bool):
            raise ScenarioFileError(f"{path}: expected true or false, got {_show(value)}")
        return value
    if not isinstance(value, str):
        raise ScenarioFileError(f"{path}: expected a string, got {_show(value)}")
    try:
        value.encode("utf-8")
    except UnicodeEncodeError as exc:
        raise ScenarioFileError(
            f"{path}: holds a character that is not valid Unicode (a lone surrogate "
            f"{value[exc.start]!r} at position {exc.start})") from None
    return value


def _check_keys(data: dict[str, Any], known: tuple[str, ...], path: str,
                optional: tuple[str, ...] = ()) -> None:
    for key in data:
        if key not in known:
            raise ScenarioFileError(
                f"{path}.{key}: unknown field; known: {', '.join(known)}")
    for key in known:
        if key not in data and key not in optional:
            raise ScenarioFileError(f"{path}: missing field {key!r}")


def _read(data: Any, spec: _Spec, path: str) -> Any:
    if not isinstance(data, dict):
        raise ScenarioFileError(f"{path}: expected an object, got {_show(data)}")
    _check_keys(data, tuple(spec.kinds), path, spec.added)
    kwargs = {name: _read_value(data[name], kind, f"{path}.{name}")
              for name, kind in spec.kinds.items() if name in data}
    try:
        return spec.cls(**kwargs)
    except ValueError as exc:
        raise ScenarioFileError(f"{path}: {exc}") from None


def _read_tagged(data: Any, specs: dict[str, _Spec], path: str) -> Any:
    if not isinstance(data, dict):
        raise ScenarioFileError(f"{path}: expected an object, got {_show(data)}")
    tags = ", ".join(repr(t) for t in specs)
    if "type" not in data:
        raise ScenarioFileError(f"{path}: missing field 'type' (one of {tags})")
    tag = data["type"]
    if not isinstance(tag, str) or tag not in specs:
        raise ScenarioFileError(f"{path}.type: {_show(tag)} is not one of {tags}")
    return _read({k: v for k, v in data.items() if k != "type"}, specs[tag], path)


def scenario_from_dict(data: Any, path: str = "scenario") -> Scenario:
    """Build a :class:`Scenario` from the ``"scenario"`` part of a file.

    Parameters
    ----------
    data : dict
        Parsed JSON, as :func:`scenario_to_dict` writes it.
    path : str
        JSON path of ``data`` used in error messages.

    Raises
    ------
    ScenarioFileError
        Naming the path of the first bad field.
    """
    if _nesting(data) > MAX_NESTING:
        raise ScenarioFileError(f"{path}: nested more than {MAX_NESTING} levels deep")
    return _read(data, _SCENARIO, path)


def loads(text: str | bytes, source: str = "") -> Scenario:
    """Read a scenario file's text.

    Parameters
    ----------
    text : str or bytes
        The file's content (bytes are decoded as UTF-8; a byte-order mark is allowed).
    source : str
        Where the text came from, to start error messages with (a file name).

    Raises
    ------
    ScenarioFileError
        For anything but a complete, valid scenario file of a schema version this package
        reads.
    """
    where = f"scenario file {source!r}: " if source else ""
    try:
        return _loads(text)
    except ScenarioFileError as exc:
        raise ScenarioFileError(f"{where}{exc}") from None


def _loads(text: str | bytes) -> Scenario:
    if isinstance(text, (bytes, bytearray)):
        if len(text) > MAX_FILE_BYTES:
            raise ScenarioFileError(
                f"{len(text)} bytes is over the {MAX_FILE_BYTES} byte limit for scenarios")
        try:
            text = bytes(text).decode("utf-8-sig")
        except UnicodeDecodeError as exc:
            raise ScenarioFileError(
                f"not UTF-8 text (bad byte at position {exc.start})") from None
    if not isinstance(text, str):
        raise ScenarioFileError(f"expected JSON text, got {type(text).__name__}")
    if len(text) > MAX_FILE_BYTES:
        raise ScenarioFileError(
            f"{len(text)} characters is over the {MAX_FILE_BYTES} limit for scenarios")
    if not text.strip():
        raise ScenarioFileError("the text is empty")
    try:
        doc = json.loads(text, parse_constant=_refuse_constant, parse_float=_parse_float,
                         parse_int=_parse_int, object_pairs_hook=_no_duplicates)
    except _Refused as exc:
        raise ScenarioFileError(str(exc)) from None
    except RecursionError:
        raise ScenarioFileError(f"nested more than {MAX_NESTING} levels deep") from None
    except json.JSONDecodeError as exc:
        raise ScenarioFileError(
            f"not valid JSON (is the file truncated or damaged?): {exc.msg} at line "
            f"{exc.lineno} column {exc.colno}") from None
    except ValueError as exc:
        raise ScenarioFileError(f"not valid JSON: {exc}") from None
    if _nesting(doc) > MAX_NESTING:
        raise ScenarioFileError(f"nested more than {MAX_NESTING} levels deep")
    if not isinstance(doc, dict):
        raise ScenarioFileError(f"expected a JSON object at the top, got {_show(doc)}")
    if doc.get("format") != FORMAT:
        raise ScenarioFileError(
            f"format: expected {FORMAT!r}, got {_show(doc.get('format'))}: this is not a "
            "snowprobe scenario file")
    version = doc.get("schema_version")
    if isinstance(version, bool) or not isinstance(version, int):
        raise ScenarioFileError(
            f"schema_version: expected an integer, got {_show(version)}")
    if version > SCHEMA_VERSION:
        raise ScenarioFileError(
            f"schema_version {version} is newer than this package reads "
            f"({SCHEMA_VERSION}); update snowprobe_widgets")
    if version != SCHEMA_VERSION:
        raise ScenarioFileError(
            f"schema_version {version} is not a known version (known: {SCHEMA_VERSION})")
    for key in doc:
        if key not in _TOP_KEYS:
            raise ScenarioFileError(f"{key}: unknown field; known: {', '.join(_TOP_KEYS)}")
    if "caution" in doc and not isinstance(doc["caution"], str):
        raise ScenarioFileError(f"caution: expected a string, got {_show(doc['caution'])}")
    if "scenario" not in doc:
        raise ScenarioFileError("missing field 'scenario'")
    return _read(doc["scenario"], _SCENARIO, "scenario")


def load(path: str | os.PathLike[str]) -> Scenario:
    """Read and validate the scenario file at ``path``.

    Only regular files of at most :data:`MAX_FILE_BYTES` are read.

    Raises
    ------
    ScenarioFileError
        If the file cannot be read or is not a valid scenario file; the message starts
        with the file name.
    """
    name = _path_text(path)
    where = f"scenario file {name!r}"
    try:
        if not stat.S_ISREG(os.stat(name).st_mode):  # never open a FIFO or a device
            raise ScenarioFileError(f"{where}: not a regular file")
        with open(name, "rb") as f:
            st = os.fstat(f.fileno())
            if not stat.S_ISREG(st.st_mode):
                raise ScenarioFileError(f"{where}: not a regular file")
            if st.st_size > MAX_FILE_BYTES:
                raise ScenarioFileError(
                    f"{where}: {st.st_size} bytes is over the {MAX_FILE_BYTES} byte limit")
            data = f.read(MAX_FILE_BYTES + 1)
    except OSError as exc:
        raise ScenarioFileError(f"cannot read {where}: {exc.strerror or exc}") from exc
    return loads(data, source=name)


# --------------------------------------------------------------------------- JSON Schema
#: The JSON Schema of scenario files, shipped with the package (``json_schema()`` as text).
SCHEMA_FILE = pathlib.Path(__file__).with_name("data") / "scenario.schema.json"


def _field_schema(group: str, name: str, kind: Any) -> dict[str, Any]:
    if isinstance(kind, _Spec):
        return _object_schema(kind)
    if isinstance(kind, _ListOf):
        return {"type": "array", "maxItems": kind.max_items, "items": _object_schema(kind.spec)}
    if isinstance(kind, _TaggedListOf):
        return {"type": "array", "maxItems": kind.max_items,
                "items": {"oneOf": [_object_schema(spec, tag=tag)
                                    for tag, spec in kind.specs.items()]}}
    try:
        f = declaration(group, name)
    except KeyError:  # a plugin kind's field it did not declare: its type only
        return {"type": {_NUM: "number", _OPT_NUM: ["number", "null"], _INT: "integer",
                         _BOOL: "boolean"}.get(kind, "string")}
    out: dict[str, Any] = {"title": f.label, "description": f.help}
    if f.unit:
        out["unit"] = f.unit
    if f.kind in ("number", "optional number", "integer"):
        out["type"] = {"number": "number", "integer": "integer",
                       "optional number": ["number", "null"]}[f.kind]
        if math.isfinite(f.low):
            out["exclusiveMinimum" if f.low_open else "minimum"] = f.low
        if math.isfinite(f.high):
            out["exclusiveMaximum" if f.high_open else "maximum"] = f.high
    elif f.kind == "boolean":
        out["type"] = "boolean"
    elif f.kind == "parameters":
        out.update({"type": "object", "maxProperties": MAX_PARAMETERS,
                    "propertyNames": {"pattern": "^[A-Za-z_][A-Za-z0-9_]*$",
                                      "maxLength": f.max_length},
                    "additionalProperties": {"type": ["number", "string", "boolean"]}})
    elif f.kind == "choice":
        out["type"] = "string"
        if not callable(f.choices):  # registries that plugins extend are checked on load
            out["enum"] = list(f.allowed())
    else:
        out["type"] = "string"
        out["maxLength"] = f.max_length
    return out


def _object_schema(spec: _Spec, tag: str | None = None) -> dict[str, Any]:
    props = {name: _field_schema(spec.declarations, name, kind)
             for name, kind in spec.kinds.items()}
    required = [k for k in spec.kinds if k not in spec.added]
    if tag is not None:
        props = {"type": {"const": tag}, **props}
        required = ["type", *required]
    return {"type": "object", "title": spec.cls.__name__, "properties": props,
            "required": required, "additionalProperties": False}


def json_schema() -> dict[str, Any]:
    """The JSON Schema (draft 2020-12) of a scenario file, from the field declarations.

    It states the structure, types and each field's hard bounds, label, help and SI unit
    (the keyword ``unit``). Rules that tie fields together (a person inside the snowpack,
    enough samples in the window, the pulse's Nyquist limit) are checked on loading, not by
    the schema. The same schema ships as :data:`SCHEMA_FILE`.
    """
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "title": "snowprobe scenario file",
        "description": f"A scenario of snowprobe_widgets, schema version {SCHEMA_VERSION}. "
                       + CAUTION_SHORT,
        "type": "object",
        "properties": {
            "format": {"const": FORMAT},
            "schema_version": {"const": SCHEMA_VERSION},
            "caution": {"type": "string"},
            "scenario": _object_schema(_SCENARIO),
        },
        "required": ["format", "schema_version", "scenario"],
        "additionalProperties": False,
    }


def write_schema_file(path: str | os.PathLike[str] = SCHEMA_FILE) -> None:
    """Write :func:`json_schema` as indented JSON text (regenerates :data:`SCHEMA_FILE`)."""
    text = json.dumps(json_schema(), indent=2, ensure_ascii=False) + "\n"
    pathlib.Path(path).write_text(text, encoding="utf-8")
