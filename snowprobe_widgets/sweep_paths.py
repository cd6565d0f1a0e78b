"""Dotted paths into a scenario and the distributions a sweep draws from.

A path names one field of a :class:`~snowprobe_widgets.scene.Scenario` the way Python
would reach it: ``"persons[0].depth_m"``, ``"radar.center_frequency_hz"``,
``"snowpack.layers[*].lwc_percent"`` (``[*]`` means every item of the list, all set to
the same value). Setting a value rebuilds the frozen value objects with
``dataclasses.replace``, so every constructor re-checks its field and the error names the
path, the value and the allowed range.

Distributions (:class:`Uniform`, :class:`Normal` with bounds, :class:`Choice`) are small
frozen value objects with a JSON form; ``draw(rng)`` takes one value from a
``numpy.random.Generator``.
"""

from __future__ import annotations

import dataclasses
import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import special

from ._validate import check_range

__all__ = [
    "FieldPath",
    "parse_path",
    "Uniform",
    "Normal",
    "Choice",
    "Distribution",
    "distribution_from_dict",
]

_NAME = re.compile(r"[A-Za-z_][A-Za-z0-9_]*")
_INDEX = re.compile(r"\[(\*|\d+)\]")


@dataclass(frozen=True)
class FieldPath:
    """A parsed dotted path: attribute names and list indices (``None`` for ``[*]``).

    Attributes
    ----------
    text : str
        The path as the user wrote it.
    steps : tuple of (str or int or None)
        Attribute names (str) and list indices (int, or None for every item).
    """

    text: str
    steps: tuple[str | int | None, ...]

    def get(self, obj: Any) -> list[Any]:
        """Every value the path reaches in ``obj`` (one, or one per ``[*]`` item)."""
        return _get(obj, self.steps, self.text)

    def set(self, obj: Any, value: Any) -> Any:
        """A copy of ``obj`` with the path's field(s) set to ``value``, re-validated.

        Raises
        ------
        ValueError
            Naming the path, when the value is refused by the field's constructor.
        """
        try:
            return _set(obj, self.steps, value, self.text)
        except ValueError as exc:
            raise ValueError(f"{self.text} = {value!r}: {exc}") from None


def parse_path(text: str, scenario: Any) -> FieldPath:
    """Parse ``text`` and check that it names a settable field of ``scenario``.

    A settable field holds a number, a string or a bool (not a value object or a list).

    Raises
    ------
    ValueError
        On bad syntax, an unknown field, an index beyond the list, or a path that ends on
        a value object or a list; the message names the path.
    """
    if not isinstance(text, str) or not text:
        raise ValueError(f"a field path must be a non-empty string, got {text!r}")
    steps: list[str | int | None] = []
    pos = 0
    while pos < len(text):
        if steps and text[pos] == ".":
            pos += 1
        m = _NAME.match(text, pos)
        if m is None:
            raise ValueError(f"field path {text!r}: expected a field name at character "
                             f"{pos + 1}")
        steps.append(m.group(0))
        pos = m.end()
        while True:
            m = _INDEX.match(text, pos)
            if m is None:
                break
            steps.append(None if m.group(1) == "*" else int(m.group(1)))
            pos = m.end()
        if pos < len(text) and text[pos] != ".":
            raise ValueError(f"field path {text!r}: unexpected {text[pos]!r} at character "
                             f"{pos + 1}")
    path = FieldPath(text, tuple(steps))
    for leaf in path.get(scenario):
        if dataclasses.is_dataclass(leaf) or isinstance(leaf, (tuple, list)):
            raise ValueError(f"field path {text!r} names a group of fields, not one value; "
                             "name a number field inside it")
        if not isinstance(leaf, (int, float, str, bool, np.number)) and leaf is not None:
            raise ValueError(f"field path {text!r} names a {type(leaf).__name__}, not a value")
    return path


def _fields_of(obj: Any) -> list[str]:
    return [f.name for f in dataclasses.fields(obj)]


def _get(obj: Any, steps: Sequence[str | int | None], text: str) -> list[Any]:
    if not steps:
        return [obj]
    head, rest = steps[0], steps[1:]
    if isinstance(head, str):
        if not dataclasses.is_dataclass(obj) or head not in _fields_of(obj):
            known = ", ".join(_fields_of(obj)) if dataclasses.is_dataclass(obj) else "none"
            raise ValueError(f"field path {text!r}: {type(obj).__name__} has no field "
                             f"{head!r}; its fields: {known}")
        return _get(getattr(obj, head), rest, text)
    if not isinstance(obj, tuple):
        raise ValueError(f"field path {text!r}: {type(obj).__name__} is not a list, so it "
                         "takes no [index]")
    if head is None:
        if not obj:
            raise ValueError(f"field path {text!r}: [*] of an empty list sets nothing")
        return [v for item in obj for v in _get(item, rest, text)]
    if not 0 <= head < len(obj):
        raise ValueError(f"field path {text!r}: index {head} is outside the list of "
                         f"{len(obj)} item(s); allowed range [0, {len(obj) - 1}]")
    return _get(obj[head], rest, text)


def _set(obj: Any, steps: Sequence[str | int | None], value: Any, text: str) -> Any:
    if not steps:
        return value
    head, rest = steps[0], steps[1:]
    if isinstance(head, str):
        if not dataclasses.is_dataclass(obj) or head not in _fields_of(obj):
            raise ValueError(f"field path {text!r}: {type(obj).__name__} has no field {head!r}")
        return dataclasses.replace(obj, **{head: _set(getattr(obj, head), rest, value, text)})
    items = list(obj)
    targets = range(len(items)) if head is None else (head,)
    for i in targets:
        items[i] = _set(items[i], rest, value, text)
    return tuple(items)


# --------------------------------------------------------------------------- distributions


def _finite(name: str, value: Any) -> float:
    return check_range(name, value)


@dataclass(frozen=True)
class Uniform:
    """Uniform between ``low`` and ``high`` (inclusive), ``low <= high``."""

    low: float
    high: float

    def __post_init__(self) -> None:
        object.__setattr__(self, "low", _finite("low", self.low))
        object.__setattr__(self, "high", check_range("high", self.high, self.low))

    def draw(self, rng: np.random.Generator) -> float:
        """One value."""
        return float(self.low + (self.high - self.low) * rng.random())

    def extremes(self) -> tuple[Any, ...]:
        """The values a field must accept for every draw to be valid."""
        return (self.low, self.high)

    def to_dict(self) -> dict[str, Any]:
        """``{"uniform": {"low": ..., "high": ...}}``."""
        return {"uniform": {"low": self.low, "high": self.high}}


@dataclass(frozen=True)
class Normal:
    """Normal with ``mean`` and standard deviation ``sd``, truncated to [low, high].

    Drawn by the inverse of the normal distribution function over the truncated range
    (exact, one uniform number per draw, so the stream of draws never depends on how many
    would have been rejected).
    """

    mean: float
    sd: float
    low: float
    high: float

    def __post_init__(self) -> None:
        object.__setattr__(self, "mean", _finite("mean", self.mean))
        object.__setattr__(self, "sd", check_range("sd", self.sd, 0.0, low_open=True))
        object.__setattr__(self, "low", _finite("low", self.low))
        object.__setattr__(self, "high", check_range("high", self.high, self.low,
                                                     low_open=True))

    def draw(self, rng: np.random.Generator) -> float:
        """One value in [low, high]."""
        a = special.ndtr((self.low - self.mean) / self.sd)
        b = special.ndtr((self.high - self.mean) / self.sd)
        u = a + (b - a) * rng.random()
        if b - a <= 0.0:  # the range lies far in one tail: its nearest end is the limit
            return self.low if self.low > self.mean else self.high
        x = self.mean + self.sd * float(special.ndtri(u))
        return float(min(max(x, self.low), self.high))

    def extremes(self) -> tuple[Any, ...]:
        """The values a field must accept for every draw to be valid."""
        return (self.low, self.high)

    def to_dict(self) -> dict[str, Any]:
        """``{"normal": {"mean": ..., "sd": ..., "low": ..., "high": ...}}``."""
        return {"normal": {"mean": self.mean, "sd": self.sd, "low": self.low,
                           "high": self.high}}


@dataclass(frozen=True)
class Choice:
    """One of ``options`` (numbers or strings), with optional ``weights`` (summing > 0)."""

    options: tuple[Any, ...]
    weights: tuple[float, ...] | None = None

    def __post_init__(self) -> None:
        opts = tuple(self.options) if not isinstance(self.options, str) else (self.options,)
        if not opts:
            raise ValueError("options must list at least one value")
        for o in opts:
            if not isinstance(o, (int, float, str)) or isinstance(o, float) and not \
                    math.isfinite(o):
                raise ValueError(f"options must be finite numbers or strings, got {o!r}")
        object.__setattr__(self, "options", opts)
        if self.weights is not None:
            w = tuple(check_range("weights", x, 0.0) for x in self.weights)
            if len(w) != len(opts) or sum(w) <= 0:
                raise ValueError(f"weights must be {len(opts)} non-negative numbers with a "
                                 f"positive sum, got {self.weights!r}")
            object.__setattr__(self, "weights", w)

    def draw(self, rng: np.random.Generator) -> Any:
        """One of the options."""
        if self.weights is None:
            return self.options[int(rng.integers(len(self.options)))]
        p = np.cumsum(self.weights) / sum(self.weights)
        i = int(np.searchsorted(p, rng.random(), side="right"))
        return self.options[min(i, len(self.options) - 1)]

    def extremes(self) -> tuple[Any, ...]:
        """Every option (each must be valid)."""
        return self.options

    def to_dict(self) -> dict[str, Any]:
        """``{"choice": {"options": [...], "weights": [...] or null}}``."""
        return {"choice": {"options": list(self.options),
                           "weights": None if self.weights is None else list(self.weights)}}


Distribution = Uniform | Normal | Choice

_KINDS: dict[str, tuple[type, tuple[str, ...], tuple[str, ...]]] = {
    "uniform": (Uniform, ("low", "high"), ()),
    "normal": (Normal, ("mean", "sd", "low", "high"), ()),
    "choice": (Choice, ("options",), ("weights",)),
}


def distribution_from_dict(d: Any, where: str = "distribution") -> Distribution:
    """A distribution from its JSON form (see each class's ``to_dict``); a distribution
    object is returned unchanged.

    Raises
    ------
    ValueError
        On an unknown kind, missing or unknown keys, or a bad value (naming ``where``).
    """
    if isinstance(d, (Uniform, Normal, Choice)):
        return d
    if not isinstance(d, Mapping) or len(d) != 1:
        raise ValueError(f"{where} must be one of {{'uniform': ...}}, {{'normal': ...}}, "
                         f"{{'choice': ...}}, got {d!r}")
    (kind, body), = d.items()
    if kind not in _KINDS:
        raise ValueError(f"{where}: unknown distribution {kind!r}; known: "
                         f"{', '.join(_KINDS)}")
    cls, required, optional = _KINDS[kind]
    if not isinstance(body, Mapping):
        raise ValueError(f"{where}.{kind} must be a mapping of {', '.join(required)}")
    missing = [k for k in required if k not in body]
    extra = [k for k in body if k not in required + optional]
    if missing or extra:
        raise ValueError(f"{where}.{kind}: missing {missing} / unknown {extra}; fields: "
                         f"{', '.join(required + optional)}")
    args = dict(body)
    if kind == "choice":
        if isinstance(args["options"], (str, Mapping)) or not isinstance(
                args["options"], Sequence):
            raise ValueError(f"{where}.choice.options must be a list")
        args["options"] = tuple(args["options"])
        if args.get("weights") is not None:
            args["weights"] = tuple(args["weights"])
    try:
        return cls(**args)
    except (TypeError, ValueError) as exc:
        raise ValueError(f"{where}.{kind}: {exc}") from None
