"""An ordered, serialisable list of processing steps."""

from __future__ import annotations

import inspect
import json
import math
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass
from typing import Any

from ..fields import check as check_field
from ..radargram import ProcessingRecord, Radargram
from ._common import STEPS, step_parameters

__all__ = ["ProcessingStep", "ProcessingChain", "CHAIN_FORMAT", "CHAIN_VERSION",
           "step_defaults"]

#: Value of the ``"format"`` field of a serialised chain.
CHAIN_FORMAT = "snowprobe_widgets.processing_chain"
#: Version of the serialised layout.
CHAIN_VERSION = 1

_JSON_SCALARS = (str, int, float, bool, type(None))

#: A step that can report its progress takes a keyword argument of this name (a callable
#: given the fraction done); it is no parameter of the step's record or of a chain file.
PROGRESS_ARGUMENT = "progress"


def _step_parameters(name: str) -> tuple[tuple[str, ...], bool, dict[str, Any]]:
    """Keyword names a registered step accepts, whether it takes ``**kwargs``, and the
    defaults it declares."""
    func = STEPS.get(name)
    try:
        sig = inspect.signature(func)
    except (TypeError, ValueError):
        return (), True, {}
    params = [p for p in list(sig.parameters.values())[1:]  # the first is the radargram
              if p.name != PROGRESS_ARGUMENT]
    names = tuple(p.name for p in params
                  if p.kind in (p.POSITIONAL_OR_KEYWORD, p.KEYWORD_ONLY))
    defaults = {p.name: p.default for p in params if p.default is not p.empty}
    return names, any(p.kind is p.VAR_KEYWORD for p in params), defaults


def _reports_progress(func: Callable[..., Any]) -> bool:
    try:
        return PROGRESS_ARGUMENT in inspect.signature(func).parameters
    except (TypeError, ValueError):
        return False


def step_defaults(name: str) -> dict[str, Any]:
    """The default of each parameter of step ``name`` that has one (from its signature)."""
    return _step_parameters(name)[2]


def _check_params(name: str, params: Iterable[tuple[str, Any]]) -> tuple[tuple[str, Any], ...]:
    allowed, open_ended, defaults = _step_parameters(name)
    declared = step_parameters(name)
    out = []
    for key, value in params:
        if not isinstance(key, str):
            raise ValueError(f"step {name!r}: parameter names must be strings, got {key!r}")
        if not open_ended and key not in allowed:
            raise ValueError(
                f"step {name!r} has no parameter {key!r}; allowed: {', '.join(allowed)}"
            )
        if not isinstance(value, _JSON_SCALARS):
            raise ValueError(
                f"step {name!r}: parameter {key} = {value!r} must be a number, string, "
                "bool or None"
            )
        if isinstance(value, float) and not math.isfinite(value):
            raise ValueError(f"step {name!r}: parameter {key} = {value!r} is not a finite number")
        # the declaration's hard bounds (the step narrows them to its record when it runs);
        # None stands for the step's own choice where its default is None
        if key in declared and not (value is None and key in defaults
                                    and defaults[key] is None):
            value = check_field(declared[key].group, key, value)
        out.append((key, value))
    keys = [k for k, _ in out]
    if len(set(keys)) != len(keys):
        raise ValueError(f"step {name!r}: a parameter is given twice in {keys}")
    return tuple(out)


@dataclass(frozen=True)
class ProcessingStep:
    """One entry of a :class:`ProcessingChain`.

    Attributes
    ----------
    name : str
        Key in :data:`STEPS`.
    params : tuple of (str, object)
        Keyword arguments of the step (numbers, strings, bools or None); a mapping is
        accepted and turned into pairs.
    enabled : bool
        Disabled steps stay in the chain but are skipped by :meth:`ProcessingChain.apply`.
    """

    name: str
    params: tuple[tuple[str, Any], ...] = ()
    enabled: bool = True

    def __post_init__(self) -> None:
        if not isinstance(self.name, str) or self.name not in STEPS:
            known = ", ".join(repr(n) for n in STEPS.names())
            raise ValueError(f"unknown processing step {self.name!r}; known: {known}")
        params = self.params.items() if isinstance(self.params, Mapping) else self.params
        object.__setattr__(self, "params", _check_params(self.name, params))
        if not isinstance(self.enabled, bool):
            raise ValueError(f"enabled must be true or false, got {self.enabled!r}")

    def apply(self, rg: Radargram,
              progress: Callable[[float], None] | None = None) -> Radargram:
        """Run this step on ``rg`` (regardless of ``enabled``).

        ``progress`` is passed on to a step that reports its own progress (one taking a
        ``progress`` keyword, such as :func:`~snowprobe_widgets.processing.migrate`); an
        exception it raises stops the step there.
        """
        func = STEPS.get(self.name)
        kwargs = dict(self.params)
        if progress is not None and _reports_progress(func):
            kwargs[PROGRESS_ARGUMENT] = progress
        return func(rg, **kwargs)

    def to_dict(self) -> dict[str, Any]:
        """``{"name": ..., "params": {...}, "enabled": ...}``."""
        return {"name": self.name, "params": dict(self.params), "enabled": self.enabled}

    @classmethod
    def from_dict(cls, d: Mapping[str, Any]) -> ProcessingStep:
        """Inverse of :meth:`to_dict`; refuses unknown fields."""
        if not isinstance(d, Mapping):
            raise ValueError(f"a step must be a mapping, got {type(d).__name__}")
        extra = set(d) - {"name", "params", "enabled"}
        if extra:
            raise ValueError(f"unknown step field(s) {sorted(extra)}; allowed: name, params, "
                             "enabled")
        if "name" not in d:
            raise ValueError("a step needs a 'name'")
        params = d.get("params", {})
        if not isinstance(params, Mapping):
            raise ValueError(f"step {d['name']!r}: params must be a mapping, got {params!r}")
        return cls(d["name"], tuple(params.items()), d.get("enabled", True))


def _default_steps(fc: float, dt_s: float | None, record_s: float | None,
                   ) -> tuple[ProcessingStep, ...]:
    window_s = 4.0 / fc
    dewow_on = True
    if record_s is not None and dt_s is not None:
        # the window must lie in [2 dt, record] (dewow's own limits); half the record
        # keeps a short recording's echoes from being averaged away with the wow
        window_s = max(min(window_s, 0.5 * record_s), 2.0 * dt_s)
        dewow_on = window_s <= record_s
    low_hz, high_hz = 0.25 * fc, 2.5 * fc
    if dt_s is not None:
        # the band must stay under Nyquist: 0.9 of it leaves the filter a transition band
        high_hz = min(high_hz, 0.9 * 0.5 / dt_s)
        low_hz = min(low_hz, 0.5 * high_hz)
    return (
        ProcessingStep("time_zero", (("target_time_s", 0.0), ("threshold", 0.5)),
                       enabled=False),
        ProcessingStep("dewow", (("window_s", window_s),), enabled=dewow_on),
        ProcessingStep("background_removal", (("method", "median"),)),
        ProcessingStep("gain", (("kind", "spreading"), ("power", 1.0),
                                ("max_gain_db", 40.0))),
        ProcessingStep("bandpass", (("low_hz", low_hz), ("high_hz", high_hz),
                                    ("order", 4))),
    )


@dataclass(frozen=True)
class ProcessingChain:
    """Processing steps applied in order.

    Attributes
    ----------
    steps : tuple of ProcessingStep
    """

    steps: tuple[ProcessingStep, ...] = ()

    def __post_init__(self) -> None:
        steps = tuple(self.steps)
        for s in steps:
            if not isinstance(s, ProcessingStep):
                raise ValueError(f"steps must be ProcessingStep objects, got {s!r}")
        object.__setattr__(self, "steps", steps)

    # ---------------------------------------------------------------- running
    def apply(self, rg: Radargram,
              progress: Callable[[float], None] | None = None) -> Radargram:
        """Run the enabled steps in order; each appends its record to the history.

        ``progress``, when given, is called with the fraction of the chain done: after each
        enabled step, and inside a step that reports its own progress (a migration of a
        long line, in bands), each step taking an equal share. An exception it raises
        stops the chain there, inside such a step too.
        """
        if not isinstance(rg, Radargram):
            raise ValueError(f"radargram must be a Radargram, got {type(rg).__name__}")
        enabled = [step for step in self.steps if step.enabled]
        n = len(enabled)
        for done, step in enumerate(enabled):
            inside = None if progress is None else (
                lambda f, done=done: progress((done + min(max(f, 0.0), 1.0)) / n))
            rg = step.apply(rg, inside)
            if progress is not None:
                progress((done + 1) / n)
        return rg

    # ---------------------------------------------------------------- building
    @classmethod
    def default(cls, center_frequency_hz: float = 800e6, *, dt_s: float | None = None,
                record_s: float | None = None) -> ProcessingChain:
        """A starting chain for simulated radargrams of an antenna at ``center_frequency_hz``.

        time-zero (disabled; enable it when the antenna is held above the snow), dewow over
        four periods, median background removal (the mean would print a strong hyperbola's
        apex as a band across the whole section), spreading gain ``t**1`` capped at 40 dB and a
        band-pass from fc/4 to 2.5 fc (order 4). The choices are common practice, not
        taken from a source.

        Given the sampling interval ``dt_s`` and the record length ``record_s`` (both s),
        the defaults adapt so that the chain runs on that record: the band's top stays at
        0.9 of the Nyquist frequency (the bottom at most half the top), and the dewow window
        at most half the record (at least two samples; dewow is switched off when even that
        does not fit). :meth:`for_radar` passes them from a :class:`Radar`.
        """
        from .._validate import check_range

        fc = check_range("center_frequency_hz", center_frequency_hz, 10e6, 10e9, unit="Hz")
        dt = None if dt_s is None else check_range("dt_s", dt_s, 0.0, 1.0, unit="s",
                                                   low_open=True)
        record = None if record_s is None else check_range("record_s", record_s, 0.0, 1.0,
                                                           unit="s", low_open=True)
        return cls(_default_steps(fc, dt, record))

    @classmethod
    def for_radar(cls, radar: Any) -> ProcessingChain:
        """:meth:`default` adapted to a :class:`~snowprobe_widgets.scene.Radar`'s sampling."""
        return cls.default(radar.center_frequency_hz, dt_s=radar.dt_s,
                           record_s=radar.n_samples * radar.dt_s)

    def fitted_to(self, radar: Any) -> ProcessingChain:
        """A copy whose band-pass and dewow settings fit ``radar``'s sampling.

        Settings that already fit are kept; a band-pass edge at or above the Nyquist
        frequency, or a dewow window outside [2 dt, record], takes the value
        :meth:`for_radar` would choose. Used when the radar changes under a chain the
        user tuned, so that every radar the model accepts can still be processed.
        """
        dt = radar.dt_s
        record = radar.n_samples * dt
        nyquist = 0.5 / dt
        fresh = {s.name: (dict(s.params), s.enabled)
                 for s in type(self).for_radar(radar).steps}
        out = []
        for step in self.steps:
            params, enabled = dict(step.params), step.enabled
            if step.name == "bandpass":
                if not 0.0 < params.get("low_hz", 0.0) < params.get("high_hz", 0.0) < nyquist:
                    default = fresh["bandpass"][0]
                    params["low_hz"], params["high_hz"] = default["low_hz"], default["high_hz"]
            elif step.name == "dewow":
                if not 2.0 * dt <= params.get("window_s", 0.0) <= record:
                    params["window_s"] = fresh["dewow"][0]["window_s"]
                    enabled = enabled and fresh["dewow"][1]
            out.append(ProcessingStep(step.name, tuple(params.items()), enabled))
        return ProcessingChain(tuple(out))

    @classmethod
    def from_history(cls, history: Iterable[ProcessingRecord]) -> ProcessingChain:
        """The chain that replays a radargram's history."""
        return cls(tuple(ProcessingStep(r.step, r.params) for r in history))

    def names(self) -> tuple[str, ...]:
        """Step names in order."""
        return tuple(s.name for s in self.steps)

    def _require(self, name: str) -> None:
        if name not in self.names():
            raise ValueError(f"the chain has no step {name!r}; it has: "
                             f"{', '.join(self.names()) or 'no steps'}")

    def with_step(self, name: str, **params: Any) -> ProcessingChain:
        """A copy with step ``name`` and ``params`` appended at the end."""
        return ProcessingChain(self.steps + (ProcessingStep(name, tuple(params.items())),))

    def without(self, name: str) -> ProcessingChain:
        """A copy without any step called ``name``."""
        self._require(name)
        return ProcessingChain(tuple(s for s in self.steps if s.name != name))

    def replace_params(self, name: str, **params: Any) -> ProcessingChain:
        """A copy where every step called ``name`` has ``params`` set (others kept)."""
        self._require(name)
        out = []
        for s in self.steps:
            if s.name == name:
                merged = dict(s.params)
                merged.update(params)
                s = ProcessingStep(s.name, tuple(merged.items()), s.enabled)
            out.append(s)
        return ProcessingChain(tuple(out))

    def with_enabled(self, name: str, enabled: bool = True) -> ProcessingChain:
        """A copy where every step called ``name`` is switched on or off."""
        self._require(name)
        return ProcessingChain(tuple(
            ProcessingStep(s.name, s.params, enabled) if s.name == name else s
            for s in self.steps))

    # ---------------------------------------------------------------- files
    def to_dict(self) -> dict[str, Any]:
        """A JSON-ready mapping with format tag, version and the steps."""
        return {"format": CHAIN_FORMAT, "version": CHAIN_VERSION,
                "steps": [s.to_dict() for s in self.steps]}

    @classmethod
    def from_dict(cls, d: Mapping[str, Any]) -> ProcessingChain:
        """Inverse of :meth:`to_dict`; refuses unknown fields, steps and parameters."""
        if not isinstance(d, Mapping):
            raise ValueError(f"a processing chain must be a mapping, got {type(d).__name__}")
        extra = set(d) - {"format", "version", "steps"}
        if extra:
            raise ValueError(f"unknown processing chain field(s) {sorted(extra)}; allowed: "
                             "format, version, steps")
        if d.get("format") != CHAIN_FORMAT:
            raise ValueError(f"format = {d.get('format')!r} is not {CHAIN_FORMAT!r}")
        if d.get("version") != CHAIN_VERSION:
            raise ValueError(f"version = {d.get('version')!r} is not supported; "
                             f"allowed: {CHAIN_VERSION}")
        steps = d.get("steps", [])
        if not isinstance(steps, list):
            raise ValueError(f"steps must be a list, got {type(steps).__name__}")
        return cls(tuple(ProcessingStep.from_dict(s) for s in steps))

    def to_json(self, indent: int | None = 2) -> str:
        """:meth:`to_dict` as JSON text."""
        return json.dumps(self.to_dict(), indent=indent)

    @classmethod
    def from_json(cls, text: str) -> ProcessingChain:
        """Inverse of :meth:`to_json`."""
        try:
            d = json.loads(text)
        except json.JSONDecodeError as exc:
            raise ValueError(f"processing chain is not valid JSON: {exc}") from None
        return cls.from_dict(d)
