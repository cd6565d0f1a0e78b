"""Training levels: the ranges a blind exercise is drawn from, declared as data.

A :class:`Level` is a frozen table row: for each part of the scene (burial depth, snow
layers and wetness, crusts, debris clutter, false targets, how many people, the radar)
the range or the choices that :func:`snowprobe_widgets.training.make_exercise` draws from.
The shipped levels are :data:`LEVEL_TABLE`, easiest first; their names are
:data:`snowprobe_widgets.training.LEVELS`.

Every range is checked against the scene constructors it feeds (``Layer``, ``Person``,
``Clutter``, ``Radar``, ...), so a level that could draw a scene the model refuses is
refused itself, with the level's field named.

An instructor's own level is a JSON file::

    {"format": "snowprobe_widgets.training_level", "version": 1,
     "based_on": "first_look",
     "level": {"name": "gully_practice", "title": "Gully practice",
               "burial_depth_m": [1.0, 1.6], "nobody_share": 0.3}}

``based_on`` (optional) names a shipped level whose values fill the fields not given;
without it every field is required. Ranges are ``[low, high]`` lists, choices are lists,
shares are numbers in [0, 1]. Unknown fields are refused. All figures in the shipped table
are invented for training, chosen to look like the demo scenarios
(:mod:`snowprobe_widgets.examples`); they are not statistics of real burials.
"""

from __future__ import annotations

import dataclasses
import json
import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from .._validate import check_choice, check_range

__all__ = [
    "FALSE_TARGET_KINDS",
    "LEVEL_FORMAT",
    "LEVEL_TABLE",
    "LEVEL_VERSION",
    "Level",
    "LevelFileError",
    "get_level",
    "level_from_json",
    "level_to_json",
]

#: What can be put in a scene to look like a person: rocks, wood, a lost ski, a rescuer's
#: metal gear (a shovel blade), and melt-freeze crusts across the line.
FALSE_TARGET_KINDS: tuple[str, ...] = ("boulder", "branch", "ski", "metal_gear", "crust")
#: Value of the ``"format"`` field of a level file.
LEVEL_FORMAT = "snowprobe_widgets.training_level"
#: Version of the level-file layout.
LEVEL_VERSION = 1
#: Most bytes read from a level file.
_MAX_FILE_BYTES = 100_000
#: Centre frequencies a level may use, Hz (the band the default processing is tuned for).
_FREQUENCY_RANGE_HZ = (200e6, 1.5e9)


class LevelFileError(ValueError):
    """A level file or mapping that cannot be used; the message names the field."""


@dataclass(frozen=True)
class Level:
    """The ranges one training level draws its scenes from.

    Ranges are ``(low, high)`` pairs drawn uniformly (whole numbers for counts); choices
    are tuples drawn with equal chances.

    Attributes
    ----------
    name : str
        Key, lower-case letters, digits and ``_`` (at most 40 characters).
    title : str
        Display name.
    description : str
        One or two sentences for the trainee.
    burial_depth_m : (float, float)
        Depth of the top of each buried body below the surface, m.
    snow_below_m : (float, float)
        Snow between the deepest buried thing and the ground, m.
    layer_count : (int, int)
        Snow layers from the surface down.
    density_kg_m3 : (float, float)
        Dry density of the layers, kg/m3; drawn values are sorted so the snow gets denser
        with depth (settled and packed debris under fresher snow).
    lwc_percent : (float, float)
        Liquid water content of the layers, % by volume; sorted so the wettest snow is at
        the top (melt water enters from the surface). Any water puts the pack at 0 degC.
    temperature_c : (float, float)
        Temperature of a dry pack, degC (a wet pack is at 0 degC).
    crust_share : float
        Chance that a melt-freeze crust lies across the line, in [0, 1].
    scatterer_density_per_m3, scatterer_size_m : (float, float)
        Debris clutter: clods per m3 and their mean size, m.
    thin_layer_count : (int, int)
        Thin random layers in the debris.
    false_target_count : (int, int)
        Rocks, wood and gear put in the scene besides any people.
    false_target_kinds : tuple of str
        Which of :data:`FALSE_TARGET_KINDS` other than ``"crust"`` may be drawn (empty when
        ``false_target_count`` is (0, 0)).
    nobody_share, two_people_share : float
        Chance of a scene with nobody buried, and with two people; the rest have one.
    person_offset_m : (float, float)
        Across-line distance of a person from the survey line, m.
    postures : tuple of str
        Body postures to draw from (``"lying_flat"``, ``"curled"``).
    center_frequency_hz : tuple of float
        Radar centre frequencies to draw from, Hz.
    transmit_power_dbm : (float, float)
        Radar transmit power, dBm.
    antenna_height_m : (float, float)
        Antenna height above the snow, m.
    line_length_m : (float, float)
        Length of the survey line, m (traces every 5 cm).
    soil_water_fraction : (float, float)
        Water content of the soil under the snow, m3/m3.
    """

    name: str
    title: str
    description: str
    burial_depth_m: tuple[float, float]
    snow_below_m: tuple[float, float]
    layer_count: tuple[int, int]
    density_kg_m3: tuple[float, float]
    lwc_percent: tuple[float, float]
    temperature_c: tuple[float, float]
    crust_share: float
    scatterer_density_per_m3: tuple[float, float]
    scatterer_size_m: tuple[float, float]
    thin_layer_count: tuple[int, int]
    false_target_count: tuple[int, int]
    false_target_kinds: tuple[str, ...]
    nobody_share: float
    two_people_share: float
    person_offset_m: tuple[float, float]
    postures: tuple[str, ...]
    center_frequency_hz: tuple[float, ...]
    transmit_power_dbm: tuple[float, float]
    antenna_height_m: tuple[float, float]
    line_length_m: tuple[float, float]
    soil_water_fraction: tuple[float, float]

    def __post_init__(self) -> None:
        _check_level(self)

    @property
    def one_person_share(self) -> float:
        """Chance of a scene with exactly one person buried."""
        return 1.0 - self.nobody_share - self.two_people_share


# --------------------------------------------------------------------------- checks
_RANGES = ("burial_depth_m", "snow_below_m", "layer_count", "density_kg_m3", "lwc_percent",
           "temperature_c", "scatterer_density_per_m3", "scatterer_size_m",
           "thin_layer_count", "false_target_count", "person_offset_m", "transmit_power_dbm",
           "antenna_height_m", "line_length_m", "soil_water_fraction")
_COUNTS = ("layer_count", "thin_layer_count", "false_target_count")
_SHARES = ("crust_share", "nobody_share", "two_people_share")
_CHOICES = ("false_target_kinds", "postures", "center_frequency_hz")
_TEXTS = ("name", "title", "description")


def _field_error(level: str, field: str, problem: str) -> LevelFileError:
    return LevelFileError(f"level {level!r}: field {field!r}: {problem}")


def _pair(level: str, field: str, value: Any, whole: bool) -> tuple:
    if isinstance(value, (str, bytes)) or not hasattr(value, "__len__") or len(value) != 2:
        raise _field_error(level, field, f"must be a pair [low, high], got {value!r}")
    out = []
    for v in value:
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
            raise _field_error(level, field, f"must hold two finite numbers, got {value!r}")
        if whole and float(v) != int(v):
            raise _field_error(level, field, f"must hold two whole numbers, got {value!r}")
        out.append(int(v) if whole else float(v))
    if out[0] > out[1]:
        raise _field_error(level, field, f"low {out[0]:g} is above high {out[1]:g}")
    return tuple(out)


def _constructor(level: str, field: str, build: Any) -> None:
    """Run a scene constructor on a range end; its refusal becomes the field's."""
    try:
        build()
    except ValueError as exc:
        raise _field_error(level, field, str(exc)) from None


def _check_level(lv: Level) -> None:
    # local import: the scene layer sits beside this module, not below it
    from ..scene import Clutter, Ground, Layer, Person, Radar, Snowpack

    name = lv.name if isinstance(lv.name, str) else repr(lv.name)
    for f in _TEXTS:
        value = getattr(lv, f)
        if not isinstance(value, str):
            raise _field_error(name, f, f"must be text, got {value!r}")
    if not (0 < len(lv.name) <= 40 and all(c.isascii() and (c.isalnum() or c == "_")
                                           and not c.isupper() for c in lv.name)):
        raise _field_error(name, "name", "must be 1-40 lower-case letters, digits or '_'")
    if len(lv.title) > 80 or len(lv.description) > 600:
        raise _field_error(name, "title" if len(lv.title) > 80 else "description",
                           "is too long (title at most 80, description 600 characters)")
    for f in _RANGES:
        object.__setattr__(lv, f, _pair(name, f, getattr(lv, f), f in _COUNTS))
    for f in _SHARES:
        try:
            object.__setattr__(lv, f, check_range(f, getattr(lv, f), 0.0, 1.0))
        except ValueError as exc:
            raise _field_error(name, f, str(exc)) from None
    if lv.nobody_share + lv.two_people_share > 1.0 + 1e-12:
        raise _field_error(name, "two_people_share",
                           f"nobody_share + two_people_share = "
                           f"{lv.nobody_share + lv.two_people_share:g} is above 1")
    for f in _CHOICES:
        value = getattr(lv, f)
        if isinstance(value, (str, bytes)) or not hasattr(value, "__iter__"):
            raise _field_error(name, f, f"must be a list, got {value!r}")
        object.__setattr__(lv, f, tuple(value))
    try:
        for k in lv.false_target_kinds:
            check_choice("false_target_kinds", k, FALSE_TARGET_KINDS[:-1])
        for p in lv.postures:
            check_choice("postures", p, ("lying_flat", "curled"))
    except ValueError as exc:
        raise _field_error(name, "false_target_kinds" if "kinds" in str(exc) else "postures",
                           str(exc)) from None
    if not lv.postures:
        raise _field_error(name, "postures", "needs at least one posture")
    if lv.false_target_count[1] > 0 and not lv.false_target_kinds:
        raise _field_error(name, "false_target_kinds",
                           "is empty but false_target_count allows false targets")
    if lv.false_target_count[1] > 6:
        raise _field_error(name, "false_target_count",
                           f"high {lv.false_target_count[1]} is above 6 (a readable scene)")
    if not (1 <= lv.layer_count[0] and lv.layer_count[1] <= 12):
        raise _field_error(name, "layer_count", "must lie in [1, 12]")
    if not lv.center_frequency_hz:
        raise _field_error(name, "center_frequency_hz", "needs at least one frequency")
    for fc in lv.center_frequency_hz:
        try:
            check_range("center_frequency_hz", fc, *_FREQUENCY_RANGE_HZ, unit="Hz")
        except ValueError as exc:
            raise _field_error(name, "center_frequency_hz", str(exc)) from None
    # each range end through the constructor it feeds
    d_lo, d_hi = lv.density_kg_m3
    for f, lo, hi in (("burial_depth_m", 0.1, 5.0), ("snow_below_m", 0.1, 10.0),
                      ("line_length_m", 8.0, 40.0), ("person_offset_m", 0.0, 2.0)):
        for end in getattr(lv, f):
            _constructor(name, f, lambda e=end, f=f, lo=lo, hi=hi: check_range(
                f, e, lo, hi, unit="m"))
    for end in lv.burial_depth_m:
        _constructor(name, "burial_depth_m", lambda e=end: Person(0.0, e))
    for end in lv.density_kg_m3:
        _constructor(name, "density_kg_m3", lambda e=end: Layer(1.0, e))
    for end in lv.lwc_percent:
        # the wettest snow must fit in the pores of the densest
        _constructor(name, "lwc_percent", lambda e=end: Layer(1.0, d_hi, e))
    if lv.lwc_percent[1] > 0 and d_lo < 250.0:
        raise _field_error(name, "density_kg_m3",
                           f"low {d_lo:g} kg/m3 with wet snow: wet snow has settled to at "
                           "least 250 kg/m3 (common practice)")
    for end in lv.temperature_c:
        _constructor(name, "temperature_c", lambda e=end: Snowpack((Layer(1.0, d_lo),), e))
    for f in ("scatterer_density_per_m3", "scatterer_size_m", "thin_layer_count"):
        for end in getattr(lv, f):
            _constructor(name, f, lambda e=end, f=f: Clutter(**{f: e}))
    for end in lv.transmit_power_dbm:
        _constructor(name, "transmit_power_dbm", lambda e=end: Radar(transmit_power_dbm=e))
    for end in lv.antenna_height_m:
        _constructor(name, "antenna_height_m", lambda e=end: Radar(antenna_height_m=e))
    for end in lv.soil_water_fraction:
        _constructor(name, "soil_water_fraction", lambda e=end: Ground("soil", e))


# --------------------------------------------------------------------------- table
def _row(**kw: Any) -> Level:
    return Level(**kw)


#: The shipped levels, easiest first (invented training figures; see the module notes).
LEVEL_TABLE: tuple[Level, ...] = (
    _row(name="first_look", title="1. First look: shallow, dry powder",
         description="One person (or nobody) shallow in cold dry powder, little debris. "
                     "Learn what a body's hyperbola looks like.",
         burial_depth_m=(0.4, 0.9), snow_below_m=(0.6, 1.2), layer_count=(2, 3),
         density_kg_m3=(100.0, 250.0), lwc_percent=(0.0, 0.0), temperature_c=(-12.0, -4.0),
         crust_share=0.0, scatterer_density_per_m3=(0.5, 2.0),
         scatterer_size_m=(0.05, 0.1), thin_layer_count=(0, 2), false_target_count=(0, 0),
         false_target_kinds=(), nobody_share=0.15, two_people_share=0.0,
         person_offset_m=(0.0, 0.2), postures=("lying_flat",), center_frequency_hz=(800e6,),
         transmit_power_dbm=(20.0, 20.0), antenna_height_m=(0.4, 0.6),
         line_length_m=(10.0, 10.0), soil_water_fraction=(0.05, 0.15)),
    _row(name="look_alikes", title="2. Look-alikes: rocks, wood, crusts",
         description="Wind-packed dry snow with a crust now and then and one or two "
                     "rocks or branches that can pass for a person. Sometimes two people.",
         burial_depth_m=(0.6, 1.3), snow_below_m=(0.6, 1.2), layer_count=(2, 4),
         density_kg_m3=(200.0, 400.0), lwc_percent=(0.0, 0.0), temperature_c=(-10.0, -2.0),
         crust_share=0.4, scatterer_density_per_m3=(1.0, 4.0),
         scatterer_size_m=(0.08, 0.15), thin_layer_count=(1, 4), false_target_count=(1, 2),
         false_target_kinds=("boulder", "branch"), nobody_share=0.2, two_people_share=0.15,
         person_offset_m=(0.0, 0.3), postures=("lying_flat", "curled"),
         center_frequency_hz=(600e6, 800e6), transmit_power_dbm=(20.0, 24.0),
         antenna_height_m=(0.3, 0.6), line_length_m=(10.0, 12.0),
         soil_water_fraction=(0.05, 0.2)),
    _row(name="debris_field", title="3. Debris field: moist, cluttered, lost gear",
         description="Moist debris with clods, rocks, wood and lost metal gear (a ski, a "
                     "shovel blade). Deeper burials, two people more often.",
         burial_depth_m=(0.8, 1.7), snow_below_m=(0.6, 1.5), layer_count=(3, 4),
         density_kg_m3=(300.0, 480.0), lwc_percent=(0.0, 1.5), temperature_c=(-4.0, -1.0),
         crust_share=0.3, scatterer_density_per_m3=(2.0, 6.0),
         scatterer_size_m=(0.12, 0.25), thin_layer_count=(3, 8), false_target_count=(1, 3),
         false_target_kinds=("boulder", "branch", "ski", "metal_gear"), nobody_share=0.2,
         two_people_share=0.25, person_offset_m=(0.0, 0.4),
         postures=("lying_flat", "curled"), center_frequency_hz=(500e6, 600e6),
         transmit_power_dbm=(24.0, 27.0), antenna_height_m=(0.3, 0.5),
         line_length_m=(10.0, 12.0), soil_water_fraction=(0.1, 0.3)),
    _row(name="wet_spring", title="4. Wet spring debris: deep and wet",
         description="Deep burials in wet spring debris at 0 degC: the water eats the "
                     "echo. Dense clutter, rocks, wood and gear.",
         burial_depth_m=(1.5, 2.5), snow_below_m=(0.6, 1.5), layer_count=(3, 5),
         density_kg_m3=(380.0, 550.0), lwc_percent=(3.0, 7.0), temperature_c=(0.0, 0.0),
         crust_share=0.2, scatterer_density_per_m3=(18.0, 30.0),
         scatterer_size_m=(0.3, 0.5), thin_layer_count=(5, 10), false_target_count=(1, 3),
         false_target_kinds=("boulder", "branch", "ski", "metal_gear"), nobody_share=0.2,
         two_people_share=0.25, person_offset_m=(0.0, 0.5),
         postures=("lying_flat", "curled"), center_frequency_hz=(400e6, 500e6),
         transmit_power_dbm=(24.0, 27.0), antenna_height_m=(0.3, 0.5),
         line_length_m=(10.0, 12.0), soil_water_fraction=(0.2, 0.35)),
)

_BY_NAME = {lv.name: lv for lv in LEVEL_TABLE}


def get_level(level: str | Level) -> Level:
    """The shipped level called ``level`` (a :class:`Level` is returned unchanged).

    Raises
    ------
    ValueError
        If no shipped level has that name (the message lists them).
    """
    if isinstance(level, Level):
        return level
    if not isinstance(level, str):
        raise ValueError(f"level must be a level name or a Level, got {type(level).__name__}")
    check_choice("level", level, tuple(_BY_NAME))
    return _BY_NAME[level]


# --------------------------------------------------------------------------- files
_FIELDS = tuple(f.name for f in dataclasses.fields(Level))


def level_to_json(level: Level) -> str:
    """A level as the JSON text :func:`level_from_json` reads."""
    body = {f: (list(v) if isinstance(v, tuple) else v)
            for f in _FIELDS for v in [getattr(level, f)]}
    return json.dumps({"format": LEVEL_FORMAT, "version": LEVEL_VERSION, "level": body},
                      indent=2)


def level_from_json(text: str | bytes) -> Level:
    """Read an instructor's level from JSON text (layout in the module docstring).

    Raises
    ------
    LevelFileError
        On malformed JSON, a wrong format or version, an unknown or missing field, or a
        value the scene constructors refuse; the message names the field.
    """
    if isinstance(text, bytes):
        if len(text) > _MAX_FILE_BYTES:
            raise LevelFileError(f"level file is {len(text)} bytes; at most "
                                 f"{_MAX_FILE_BYTES} allowed")
        try:
            text = text.decode("utf-8")
        except UnicodeDecodeError:
            raise LevelFileError("level file is not UTF-8 text") from None
    if len(text) > _MAX_FILE_BYTES:
        raise LevelFileError(f"level file is {len(text)} characters; at most "
                             f"{_MAX_FILE_BYTES} allowed")
    try:
        doc = json.loads(text)
    except json.JSONDecodeError as exc:
        raise LevelFileError(f"level file is not valid JSON: {exc}") from None
    if not isinstance(doc, Mapping):
        raise LevelFileError("level file must hold a JSON object")
    extra = set(doc) - {"format", "version", "based_on", "level"}
    if extra:
        raise LevelFileError(f"level file: unknown field(s) {sorted(extra)}; allowed: "
                             "format, version, based_on, level")
    if doc.get("format") != LEVEL_FORMAT:
        raise LevelFileError(f"level file: field 'format' = {doc.get('format')!r} is not "
                             f"{LEVEL_FORMAT!r}")
    if doc.get("version") != LEVEL_VERSION:
        raise LevelFileError(f"level file: field 'version' = {doc.get('version')!r}; "
                             f"allowed: {LEVEL_VERSION}")
    body = doc.get("level")
    if not isinstance(body, Mapping):
        raise LevelFileError("level file: field 'level' must be an object of level fields")
    unknown = sorted(set(body) - set(_FIELDS))
    if unknown:
        raise LevelFileError(f"level file: unknown level field(s) {unknown}; allowed: "
                             f"{', '.join(_FIELDS)}")
    values: dict[str, Any] = {}
    base = doc.get("based_on")
    if base is not None:
        try:
            values = {f: getattr(get_level(base), f) for f in _FIELDS}
        except ValueError as exc:
            raise LevelFileError(f"level file: field 'based_on': {exc}") from None
    values.update(body)
    missing = [f for f in _FIELDS if f not in values]
    if missing:
        raise LevelFileError(f"level file: missing level field(s) {missing} (or give "
                             "'based_on' with a shipped level's name)")
    return Level(**values)
