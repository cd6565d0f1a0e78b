"""Session records, the instructor's class summary and the printable answer key.

A :class:`SessionRecord` holds what one trainee did: a free label (no name needed), the
level, the session seed and, per round, the marks, the score and the seconds taken. It is
saved as JSON (``to_json`` / ``from_json``, with a format tag and version, unknown fields
refused) or CSV (one row per round; ``to_csv`` / ``from_csv``). Layouts are this package's
own:

* JSON: ``{"format": "snowprobe_widgets.training_session", "version": 1, "label": ...,
  "level": ..., "session_seed": ..., "rounds": [{"round": 1, "seed": ..., "marks":
  [[position_m, depth_m], ...] or "nobody", "people": ..., "finds": ..., "misses": ...,
  "false_alarms": ..., "duplicates": ..., "correct_nobody": ..., "fooled_by": [...],
  "seconds": ...}, ...]}``;
* CSV: a ``#`` caution line, then the header ``label,level,session_seed,round,seed,marks,
  people,finds,misses,false_alarms,duplicates,correct_nobody,fooled_by,seconds`` with marks
  written ``x:z`` separated by ``;`` (or ``nobody``) and fooled_by separated by ``;``.

:func:`class_summary` adds records up by level and by what fooled the trainees;
:func:`answer_key_html` lists what every round of a session holds, for the instructor.
"""

from __future__ import annotations

import csv
import html
import io
import json
from collections import Counter
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from .._validate import check_range
from ..cautions import CAUTION_SHORT, CAUTION_TEXT
from .exercise import MAX_SEED, make_exercise, round_seed
from .levels import Level, get_level
from .scoring import Score

__all__ = [
    "RECORD_FORMAT",
    "RECORD_VERSION",
    "ClassSummary",
    "RecordFileError",
    "RoundRecord",
    "SessionRecord",
    "answer_key_html",
    "class_summary",
]

RECORD_FORMAT = "snowprobe_widgets.training_session"
RECORD_VERSION = 1
_MAX_ROUNDS = 200
_MAX_LABEL = 60
_MAX_FILE_BYTES = 2_000_000
_CSV_FIELDS = ("label", "level", "session_seed", "round", "seed", "marks", "people", "finds",
               "misses", "false_alarms", "duplicates", "correct_nobody", "fooled_by",
               "seconds")
_FOOLED_KINDS = ("boulder", "branch", "ski", "metal_gear", "crust", "ground", "clutter")


class RecordFileError(ValueError):
    """A session record that cannot be read; the message names the field."""


def _check_label(label: Any) -> str:
    if not isinstance(label, str):
        raise ValueError(f"label must be text, got {label!r}")
    if len(label) > _MAX_LABEL or any(ord(c) < 32 for c in label):
        raise ValueError(f"label = {label!r} must be at most {_MAX_LABEL} characters on one "
                         "line")
    return label


def _whole(name: str, value: Any, lo: int, hi: int) -> int:
    if isinstance(value, bool) or not isinstance(value, int):
        raise ValueError(f"{name} must be a whole number, got {value!r}")
    return int(check_range(name, value, lo, hi))


@dataclass(frozen=True)
class RoundRecord:
    """One answered round.

    Attributes
    ----------
    round : int
        1-based round number.
    seed : int
        The exercise's seed (:func:`~.exercise.round_seed` of the session).
    marks : tuple of (float, float) or None
        The marks ``(position_m, depth_m)``, kept to the millimetre; ``None`` when the
        answer was "nobody here".
    people : int
        How many people were buried.
    finds, misses, false_alarms, duplicates : int
    correct_nobody : bool
    fooled_by : tuple of str
        What each false alarm lay on.
    seconds : float
        From the round shown to the answer submitted, s, kept to 0.01 s.
    """

    round: int
    seed: int
    marks: tuple[tuple[float, float], ...] | None
    people: int
    finds: int
    misses: int
    false_alarms: int
    duplicates: int
    correct_nobody: bool
    fooled_by: tuple[str, ...]
    seconds: float

    def __post_init__(self) -> None:
        _whole("round", self.round, 1, _MAX_ROUNDS)
        _whole("seed", self.seed, 0, MAX_SEED)
        for f in ("people", "finds", "misses", "false_alarms", "duplicates"):
            _whole(f, getattr(self, f), 0, 1000)
        if self.finds + self.misses != self.people:
            raise ValueError(f"finds + misses = {self.finds + self.misses} is not people = "
                             f"{self.people}")
        if not isinstance(self.correct_nobody, bool):
            raise ValueError(f"correct_nobody must be true or false, got "
                             f"{self.correct_nobody!r}")
        if self.marks is not None:
            object.__setattr__(self, "marks", tuple(
                (round(check_range(f"marks[{i}].position_m", m[0], unit="m"), 3),
                 round(check_range(f"marks[{i}].depth_m", m[1], 0.0, 100.0, unit="m"), 3))
                for i, m in enumerate(self.marks)))
        fooled = tuple(self.fooled_by)
        for k in fooled:
            if k not in _FOOLED_KINDS:
                raise ValueError(f"fooled_by holds {k!r}; allowed: {', '.join(_FOOLED_KINDS)}")
        object.__setattr__(self, "fooled_by", fooled)
        object.__setattr__(self, "seconds", round(check_range(
            "seconds", self.seconds, 0.0, 86400.0, unit="s"), 2))

    @classmethod
    def from_score(cls, round_number: int, seed: int, result: Score,
                   seconds: float) -> RoundRecord:
        """The record of a scored round."""
        marks = None if result.answered_nobody else tuple(
            (m.position_m, m.depth_m) for m in result.marks)
        return cls(round_number, seed, marks, len(result.tolerances), result.finds,
                   result.misses, result.false_alarms, result.duplicates,
                   result.correct_nobody, result.fooled_by, float(seconds))

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready mapping (marks ``"nobody"`` for that answer)."""
        return {"round": self.round, "seed": self.seed,
                "marks": "nobody" if self.marks is None else [list(m) for m in self.marks],
                "people": self.people, "finds": self.finds, "misses": self.misses,
                "false_alarms": self.false_alarms, "duplicates": self.duplicates,
                "correct_nobody": self.correct_nobody, "fooled_by": list(self.fooled_by),
                "seconds": self.seconds}


@dataclass(frozen=True)
class SessionRecord:
    """What one trainee did in one session.

    Attributes
    ----------
    label : str
        Free label chosen by the trainee or the instructor (no name needed), one line of at
        most 60 characters.
    level : str
        Level name.
    session_seed : int
    rounds : tuple of RoundRecord
    """

    label: str
    level: str
    session_seed: int
    rounds: tuple[RoundRecord, ...] = ()

    def __post_init__(self) -> None:
        _check_label(self.label)
        if not isinstance(self.level, str) or not 0 < len(self.level) <= 40:
            raise ValueError(f"level must be a level name, got {self.level!r}")
        _whole("session_seed", self.session_seed, 0, MAX_SEED)
        rounds = tuple(self.rounds)
        if len(rounds) > _MAX_ROUNDS:
            raise ValueError(f"rounds has {len(rounds)} entries; at most {_MAX_ROUNDS}")
        for i, r in enumerate(rounds):
            if not isinstance(r, RoundRecord):
                raise ValueError(f"rounds[{i}] must be a RoundRecord, got {type(r).__name__}")
        object.__setattr__(self, "rounds", rounds)

    def with_round(self, record: RoundRecord) -> SessionRecord:
        """A new record with ``record`` appended."""
        return SessionRecord(self.label, self.level, self.session_seed,
                             self.rounds + (record,))

    # ----------------------------------------------------------------- files
    def to_json(self) -> str:
        """The record as JSON text (layout in the module docstring)."""
        return json.dumps({"format": RECORD_FORMAT, "version": RECORD_VERSION,
                           "label": self.label, "level": self.level,
                           "session_seed": self.session_seed,
                           "rounds": [r.to_dict() for r in self.rounds]}, indent=1)

    def to_csv(self) -> str:
        """The record as CSV text, one row per round (layout in the module docstring)."""
        out = io.StringIO()
        out.write(f"# {CAUTION_SHORT}\n")
        w = csv.writer(out, lineterminator="\n")
        w.writerow(_CSV_FIELDS)
        for r in self.rounds:
            marks = "nobody" if r.marks is None else ";".join(
                f"{x:.3f}:{z:.3f}" for x, z in r.marks)
            w.writerow([self.label, self.level, self.session_seed, r.round, r.seed, marks,
                        r.people, r.finds, r.misses, r.false_alarms, r.duplicates,
                        "true" if r.correct_nobody else "false", ";".join(r.fooled_by),
                        f"{r.seconds:.2f}"])
        return out.getvalue()

    @classmethod
    def from_json(cls, text: str | bytes) -> SessionRecord:
        """Read a record written by :meth:`to_json`.

        Raises
        ------
        RecordFileError
            Naming the field that is wrong.
        """
        doc = _parse_json(text)
        extra = set(doc) - {"format", "version", "label", "level", "session_seed", "rounds"}
        if extra:
            raise RecordFileError(f"session record: unknown field(s) {sorted(extra)}")
        if doc.get("format") != RECORD_FORMAT or doc.get("version") != RECORD_VERSION:
            raise RecordFileError(f"session record: field 'format'/'version' = "
                                  f"{doc.get('format')!r}/{doc.get('version')!r}; expected "
                                  f"{RECORD_FORMAT!r}/{RECORD_VERSION}")
        rounds = doc.get("rounds")
        if not isinstance(rounds, list):
            raise RecordFileError("session record: field 'rounds' must be a list")
        parsed = []
        for i, r in enumerate(rounds):
            if not isinstance(r, Mapping):
                raise RecordFileError(f"session record: rounds[{i}] must be an object")
            keys = set(RoundRecord.__dataclass_fields__)
            bad = set(r) ^ keys
            if bad:
                raise RecordFileError(f"session record: rounds[{i}] has unknown or missing "
                                      f"field(s) {sorted(bad)}")
            kw = dict(r)
            kw["marks"] = None if kw["marks"] == "nobody" else kw["marks"]
            if kw["marks"] is not None and not (isinstance(kw["marks"], list) and all(
                    isinstance(m, list) and len(m) == 2 for m in kw["marks"])):
                raise RecordFileError(f"session record: rounds[{i}].marks must be 'nobody' "
                                      "or a list of [position_m, depth_m] pairs")
            if not isinstance(kw["fooled_by"], list):
                raise RecordFileError(f"session record: rounds[{i}].fooled_by must be a list")
            parsed.append(_guard(f"rounds[{i}]", lambda kw=kw: RoundRecord(**kw)))
        return _guard("", lambda: cls(doc.get("label"), doc.get("level"),
                                      doc.get("session_seed"), tuple(parsed)))

    @classmethod
    def from_csv(cls, text: str | bytes) -> SessionRecord:
        """Read a record written by :meth:`to_csv` (one trainee, one level, one seed)."""
        text = _text(text)
        rows = list(csv.reader(line for line in io.StringIO(text) if not line.startswith("#")))
        if not rows or tuple(rows[0]) != _CSV_FIELDS:
            raise RecordFileError(f"session CSV: the header must be {','.join(_CSV_FIELDS)}")
        if len(rows) < 2:
            raise RecordFileError("session CSV: no rounds")
        records = []
        heads = set()
        for n, row in enumerate(rows[1:], start=2):
            if len(row) != len(_CSV_FIELDS):
                raise RecordFileError(f"session CSV line {n}: {len(row)} fields, expected "
                                      f"{len(_CSV_FIELDS)}")
            d = dict(zip(_CSV_FIELDS, row, strict=True))
            heads.add((d["label"], d["level"], d["session_seed"]))

            def build(d: dict[str, str] = d) -> RoundRecord:
                marks = None if d["marks"] == "nobody" else tuple(
                    (float(a), float(b)) for a, b in
                    (m.split(":") for m in d["marks"].split(";") if m))
                return RoundRecord(
                    int(d["round"]), int(d["seed"]), marks, int(d["people"]), int(d["finds"]),
                    int(d["misses"]), int(d["false_alarms"]), int(d["duplicates"]),
                    {"true": True, "false": False}[d["correct_nobody"]],
                    tuple(k for k in d["fooled_by"].split(";") if k), float(d["seconds"]))

            records.append(_guard(f"line {n}", build))
        if len(heads) != 1:
            raise RecordFileError("session CSV: label, level and session_seed must be the same "
                                  "on every line")
        label, level, seed = heads.pop()
        return _guard("", lambda: cls(label, level, int(seed), tuple(records)))

    @classmethod
    def read(cls, text: str | bytes) -> SessionRecord:
        """Read a record in either layout (JSON if it starts with ``{``, else CSV)."""
        t = _text(text)
        return cls.from_json(t) if t.lstrip().startswith("{") else cls.from_csv(t)


def _text(text: str | bytes) -> str:
    if isinstance(text, bytes):
        if len(text) > _MAX_FILE_BYTES:
            raise RecordFileError(f"session record is {len(text)} bytes; at most "
                                  f"{_MAX_FILE_BYTES}")
        try:
            text = text.decode("utf-8")
        except UnicodeDecodeError:
            raise RecordFileError("session record is not UTF-8 text") from None
    if not isinstance(text, str):
        raise RecordFileError(f"session record must be text, got {type(text).__name__}")
    if len(text) > _MAX_FILE_BYTES:
        raise RecordFileError(f"session record is {len(text)} characters; at most "
                              f"{_MAX_FILE_BYTES}")
    return text


def _parse_json(text: str | bytes) -> dict[str, Any]:
    try:
        doc = json.loads(_text(text))
    except json.JSONDecodeError as exc:
        raise RecordFileError(f"session record is not valid JSON: {exc}") from None
    if not isinstance(doc, dict):
        raise RecordFileError("session record must hold a JSON object")
    return doc


def _guard(where: str, build: Any) -> Any:
    try:
        return build()
    except (ValueError, TypeError, KeyError) as exc:
        prefix = f"session record {where}: " if where else "session record: "
        raise RecordFileError(prefix + str(exc)) from None


# --------------------------------------------------------------------------- summary
@dataclass(frozen=True)
class ClassSummary:
    """Records of a class added up.

    Attributes
    ----------
    rows : tuple of dict
        One per level (in the order met): ``level``, ``trainees``, ``rounds``, ``people``,
        ``finds``, ``misses``, ``false_alarms``, ``nobody_rounds``, ``nobody_correct``,
        ``median_seconds``.
    trainees : tuple of dict
        One per (label, level): ``label``, ``level``, ``rounds``, ``finds``, ``misses``,
        ``false_alarms``, ``median_seconds``.
    fooled_by : tuple of (str, int)
        False alarms by what they lay on, most first.
    """

    rows: tuple[dict[str, Any], ...]
    trainees: tuple[dict[str, Any], ...]
    fooled_by: tuple[tuple[str, int], ...]

    def to_csv(self) -> str:
        """The per-trainee table as CSV text, then the by-level table and the fooled-by
        counts, each under its own ``#`` title."""
        out = io.StringIO()
        out.write(f"# {CAUTION_SHORT}\n# by trainee\n")
        for table in (self.trainees, self.rows):
            if table:
                w = csv.DictWriter(out, fieldnames=list(table[0]), lineterminator="\n")
                w.writeheader()
                w.writerows(table)
            if table is self.trainees:
                out.write("# by level\n")
        out.write("# false alarms by what they lay on\nkind,count\n")
        out.writelines(f"{k},{n}\n" for k, n in self.fooled_by)
        return out.getvalue()

    def to_html(self) -> str:
        """The tables as an HTML fragment."""
        def table(rows: Sequence[Mapping[str, Any]]) -> str:
            if not rows:
                return "<p>No rounds yet.</p>"
            head = "".join(f"<th>{html.escape(str(k).replace('_', ' '))}</th>" for k in rows[0])
            body = "".join("<tr>" + "".join(f"<td>{html.escape(_cell(v))}</td>"
                                            for v in r.values()) + "</tr>" for r in rows)
            return (f"<table class='sp-table' border='1' cellpadding='4' "
                    f"style='border-collapse:collapse'><tr>{head}</tr>{body}</table>")

        fooled = [{"what the false alarm lay on": k, "count": n} for k, n in self.fooled_by]
        return ("<h4>By level</h4>" + table(self.rows) + "<h4>By trainee</h4>"
                + table(self.trainees) + "<h4>What fooled them</h4>" + table(fooled))


def _cell(v: Any) -> str:
    return f"{v:.1f}" if isinstance(v, float) else str(v)


def _median(values: list[float]) -> float:
    s = sorted(values)
    n = len(s)
    if n == 0:
        return 0.0
    return s[n // 2] if n % 2 else 0.5 * (s[n // 2 - 1] + s[n // 2])


def class_summary(records: Iterable[SessionRecord]) -> ClassSummary:
    """Add up session records by level, by trainee and by what fooled them."""
    recs = list(records)
    for i, r in enumerate(recs):
        if not isinstance(r, SessionRecord):
            raise ValueError(f"records[{i}] must be a SessionRecord, got {type(r).__name__}")
    by_level: dict[str, list[SessionRecord]] = {}
    for r in recs:
        by_level.setdefault(r.level, []).append(r)
    rows = []
    for level, group in by_level.items():
        rounds = [x for r in group for x in r.rounds]
        nobody = [x for x in rounds if x.people == 0]
        rows.append({
            "level": level, "trainees": len({r.label for r in group}), "rounds": len(rounds),
            "people": sum(x.people for x in rounds), "finds": sum(x.finds for x in rounds),
            "misses": sum(x.misses for x in rounds),
            "false_alarms": sum(x.false_alarms for x in rounds),
            "nobody_rounds": len(nobody),
            "nobody_correct": sum(x.correct_nobody for x in nobody),
            "median_seconds": _median([x.seconds for x in rounds])})
    trainees: dict[tuple[str, str], list[RoundRecord]] = {}
    for r in recs:
        trainees.setdefault((r.label, r.level), []).extend(r.rounds)
    people = [{"label": label, "level": level, "rounds": len(rs),
               "finds": sum(x.finds for x in rs), "misses": sum(x.misses for x in rs),
               "false_alarms": sum(x.false_alarms for x in rs),
               "median_seconds": _median([x.seconds for x in rs])}
              for (label, level), rs in trainees.items()]
    fooled = Counter(k for r in recs for x in r.rounds for k in x.fooled_by)
    return ClassSummary(tuple(rows), tuple(people),
                        tuple(sorted(fooled.items(), key=lambda kv: (-kv[1], kv[0]))))


# --------------------------------------------------------------------------- answer key
def answer_key_html(level: str | Level, session_seed: int, rounds: int) -> str:
    """A printable page listing what every round of a session holds (for the instructor).

    Every trainee who uses the same level, session seed and number of rounds gets these
    rounds in this order.
    """
    lv = get_level(level)
    n = _whole("rounds", rounds, 1, _MAX_ROUNDS)
    _whole("session_seed", session_seed, 0, MAX_SEED)
    items = []
    for i in range(n):
        seed = round_seed(session_seed, i)
        ex = make_exercise(lv, seed)
        sc = ex.scenario
        people = "".join(
            f"<li>{html.escape(p.label)}: {p.position_m:.1f} m along the line, top "
            f"{p.depth_m:.2f} m deep, {p.posture.replace('_', ' ')}, "
            f"{abs(p.offset_m):.1f} m off the line</li>" for p in sc.persons) \
            or "<li><b>Nobody buried</b></li>"
        fakes = "".join(f"<li>{html.escape(f.description)}</li>" for f in ex.false_targets) \
            or "<li>none</li>"
        wet = max(la.lwc_percent for la in sc.snowpack.layers)
        items.append(
            f"<section style='page-break-inside:avoid'><h3>Round {i + 1} (exercise seed "
            f"{seed})</h3><p>{sc.survey.length_m:g} m line, "
            f"{sc.radar.center_frequency_hz / 1e6:.0f} MHz; snow {sc.snowpack.depth_m:.2f} m "
            f"deep, up to {wet:.1f} % water.</p><p>Buried:</p><ul>{people}</ul>"
            f"<p>False targets:</p><ul>{fakes}</ul></section>")
    return (
        "<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'>"
        f"<title>Answer key: {html.escape(lv.title)}, seed {session_seed}</title>"
        "<style>body{font-family:sans-serif;max-width:48em;margin:1em auto;color:#111}"
        ".caution{border:2px solid #b7791f;background:#fff8e1;padding:.5em}</style></head>"
        f"<body><h1>Answer key</h1><p class='caution'><b>Caution.</b> "
        f"{html.escape(CAUTION_TEXT)}</p><p>Level <b>{html.escape(lv.title)}</b>, session "
        f"seed <b>{session_seed}</b>, {n} round(s). Keep this page from the trainees until "
        "the session is over.</p>" + "".join(items) + "</body></html>")
