"""Sweep specification files for batch runs (``snowprobe sweep SPEC.json``).

A spec is one JSON object of this project's own format::

    {
      "format": "snowprobe-sweep-spec",
      "version": 1,
      "base": "avalanche.json",          # a scenario file, relative to the spec's folder,
                                         # or "example:shallow_dry_powder" for a demo
      "vary": {"persons[0].depth_m": [0.5, 1.0, 1.5, 2.0]},
      "uncertain": {"snowpack.layers[*].lwc_percent": {"uniform": {"low": 0, "high": 2}}},
      "realizations": 50,                # optional, default 50
      "seed": 0,                         # optional, default 0
      "level_db": 20.0,                  # optional, the detector's default level
      "floor_db": 10.0,                  # optional
      "reduced_scene": true              # optional
    }

Reading is strict: plain ``json`` (no code, no pickle), at most 1 MB, unknown or
missing fields refused with the field's name, the base scenario read by the scenario-file
reader, and every path, value and distribution checked by :func:`sweeps.sweep`'s own
checks before anything runs.
"""

from __future__ import annotations

import json
import os
from pathlib import Path
from typing import Any

from .detection import DEFAULT_THRESHOLD_DB
from .scene import Scenario

__all__ = ["SPEC_FORMAT", "SPEC_VERSION", "SweepSpecError", "read_spec", "spec_to_json"]

SPEC_FORMAT = "snowprobe-sweep-spec"
SPEC_VERSION = 1
_MAX_BYTES = 1_000_000
_REQUIRED = ("format", "version", "base", "vary")
_OPTIONAL: dict[str, Any] = {"uncertain": {}, "realizations": 50, "seed": 0,
                             "level_db": DEFAULT_THRESHOLD_DB, "floor_db": 10.0,
                             "reduced_scene": True}
_EXAMPLE = "example:"


class SweepSpecError(ValueError):
    """A spec that cannot be used: the message names the file and the field."""


def _no_duplicates(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    keys = [k for k, _ in pairs]
    dup = {k for k in keys if keys.count(k) > 1}
    if dup:
        raise SweepSpecError(f"field(s) {sorted(dup)} given twice")
    return dict(pairs)


def _refuse_constant(name: str) -> Any:
    raise SweepSpecError(f"{name} is not a number JSON allows")


def read_spec(path: str | os.PathLike[str]) -> dict[str, Any]:
    """Read a spec file; return the keyword arguments of :func:`sweeps.sweep` (``base``
    as a Scenario, ``vary``, ``uncertain``, ``realizations``, ``seed``, ``level_db``,
    ``floor_db``, ``reduced``).

    Raises
    ------
    SweepSpecError
        On an unreadable, oversized or malformed file, or a missing or unknown field.
    """
    p = Path(path)
    try:
        size = p.stat().st_size
        if size > _MAX_BYTES:
            raise SweepSpecError(f"{p}: {size} bytes; a sweep spec is at most {_MAX_BYTES}")
        text = p.read_text(encoding="utf-8")
        doc = json.loads(text, object_pairs_hook=_no_duplicates,
                         parse_constant=_refuse_constant)
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise SweepSpecError(f"{p}: cannot be read as JSON: {exc}") from None
    except SweepSpecError as exc:
        raise SweepSpecError(f"{p}: {exc}") from None
    if not isinstance(doc, dict):
        raise SweepSpecError(f"{p}: a sweep spec is a JSON object")
    missing = [k for k in _REQUIRED if k not in doc]
    extra = sorted(set(doc) - set(_REQUIRED) - set(_OPTIONAL))
    if missing or extra:
        raise SweepSpecError(f"{p}: missing field(s) {missing}, unknown field(s) {extra}; "
                             f"fields: {', '.join(_REQUIRED + tuple(_OPTIONAL))}")
    if doc["format"] != SPEC_FORMAT or doc["version"] != SPEC_VERSION:
        raise SweepSpecError(f"{p}: format/version = {doc['format']!r}/{doc['version']!r}; "
                             f"expected {SPEC_FORMAT!r}/{SPEC_VERSION}")
    base = doc["base"]
    if not isinstance(base, str) or not base:
        raise SweepSpecError(f"{p}: base must name a scenario file or 'example:NAME'")
    try:
        if base.startswith(_EXAMPLE):
            scenario = Scenario.example(base[len(_EXAMPLE):])
        else:
            scenario = Scenario.load(p.parent / base)
    except (OSError, ValueError) as exc:
        raise SweepSpecError(f"{p}: base {base!r}: {exc}") from None
    for key in ("vary", "uncertain"):
        if not isinstance(doc.get(key, {}), dict):
            raise SweepSpecError(f"{p}: {key} must be an object of field path -> ...")
    opts = {k: doc.get(k, v) for k, v in _OPTIONAL.items()}
    if not isinstance(opts["reduced_scene"], bool):
        raise SweepSpecError(f"{p}: reduced_scene must be true or false")
    return {"base": scenario, "vary": doc["vary"], "uncertain": opts["uncertain"],
            "realizations": opts["realizations"], "seed": opts["seed"],
            "level_db": opts["level_db"], "floor_db": opts["floor_db"],
            "reduced": opts["reduced_scene"]}


def spec_to_json(base: str, vary: dict[str, list], uncertain: dict[str, Any] | None = None,
                 **options: Any) -> str:
    """A spec document as text (``base`` is a file name or ``"example:NAME"``)."""
    unknown = set(options) - set(_OPTIONAL)
    if unknown:
        raise ValueError(f"unknown spec option(s) {sorted(unknown)}")
    doc = {"format": SPEC_FORMAT, "version": SPEC_VERSION, "base": base, "vary": vary,
           "uncertain": uncertain or {}, **options}
    return json.dumps(doc, indent=2, allow_nan=False) + "\n"


def run_command(spec_path: str, out_path: str, *, scheduler: str | None = None,
                workers: int | None = None, progress: bool = True) -> int:
    """What ``snowprobe sweep`` does: read the spec, run (or resume) the sweep, save it.

    When ``out_path`` already holds an unfinished sweep of the same spec, only its
    missing realizations run. Ctrl-C saves the finished part (exit status 130); running
    the same command again completes it.

    Returns
    -------
    int
        0 when the sweep is complete, 130 when it was interrupted.
    """
    from . import sweeps

    kwargs = read_spec(spec_path)
    client = None
    if scheduler is not None:
        try:
            from distributed import Client
        except ImportError:
            raise SweepSpecError("--scheduler needs the 'distributed' package "
                                 "(pip install 'dask[distributed]')") from None
        client = Client(scheduler)
    executor: Any = client if client is not None else workers
    try:
        start = sweeps.empty_sweep(**kwargs)
        if os.path.exists(out_path):
            previous = sweeps.load(out_path)
            same = {k: v for k, v in previous.attrs.items() if k != "complete"}
            if same != {k: v for k, v in start.attrs.items() if k != "complete"}:
                raise SweepSpecError(f"{out_path} holds a different sweep; choose another "
                                     "--out or remove it")
            start = previous
        ds = sweeps.resume(start, executor=executor, progress=progress)
        sweeps.save(ds, out_path)
    finally:
        if client is not None:
            client.close()
    done = int(ds["done"].sum())
    print(f"{out_path}: {done} of {ds['done'].size} realizations"
          + ("" if ds.attrs["complete"] else " (stopped early: run the same command to "
             "finish it)"))
    return 0 if ds.attrs["complete"] else 130
