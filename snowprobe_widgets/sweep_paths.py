"""Field paths of sweeps (on the field declarations) and the distributions they draw from.

A path names one field of a :class:`~snowprobe_widgets.scene.Scenario` the way the
scenario file nests it: ``"persons[0].depth_m"``, ``"radar.center_frequency_hz"``,
``"snowpack.layers[*].lwc_percent"`` (``[*]``: every item, all set to the same value).
Paths, labels, units and bounds come from :mod:`snowprobe_widgets.fields` (one
declaration per field, the same the design screen uses): :func:`parse_path` resolves a
path with :func:`~snowprobe_widgets.fields.declaration_at`, :meth:`FieldPath.check`
checks a value against the declared bounds and :meth:`FieldPath.set` sets it with
:func:`~snowprobe_widgets.fields.with_value`, so every constructor re-checks the new
scenario; every refusal names the path, the value and the allowed range.

Distributions (:class:`Uniform`, :class:`Normal` with bounds, :class:`Choice`) are small
frozen value objects with a JSON form; ``draw(rng)`` takes one value from a
``numpy.random.Generator``.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import special

from . import fields
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


@dataclass(frozen=True)
class FieldPath:
    """A field path resolved to its declaration (:class:`snowprobe_widgets.fields.Field`).

    Attributes
    ----------
    text : str
        The path as the user wrote it.
    group, name : str
        The declaration's group and field name (``"person"``, ``"depth_m"``).
    """

    text: str
    group: str
    name: str

    @property
    def field(self) -> fields.Field:
        """The field's declaration: label, units, hard and soft bounds, help."""
        return fields.declaration(self.group, self.name)

    def get(self, scenario: Any) -> list[Any]:
        """Every value the path reaches in ``scenario`` (one, or one per ``[*]`` item)."""
        value = fields.value_at(scenario, self.text)
        return value if isinstance(value, list) else [value]

    def check(self, value: Any) -> Any:
        """``value`` checked against the declared bounds of the field.

        Raises
        ------
        ValueError
            A :class:`~snowprobe_widgets.fields.FieldError` naming the path, the value
            and the allowed range.
        """
        try:
            return fields.check(self.group, self.name, value)
        except fields.FieldError as exc:
            raise self._refusal(value, exc) from None

    def set(self, scenario: Any, value: Any) -> Any:
        """A copy of ``scenario`` with the path's field(s) set to ``value``, re-validated.

        Raises
        ------
        ValueError
            Naming the path, when the declaration or a constructor refuses the value.
        """
        try:
            return fields.with_value(scenario, self.text, value)
        except ValueError as exc:
            raise self._refusal(value, exc) from None

    def _refusal(self, value: Any, exc: ValueError) -> fields.FieldError:
        screen = f"{self.text}: {fields.screen_message(exc)}"
        return fields.FieldError(f"{self.text} = {value!r}: {exc}",
                                 field=getattr(exc, "field", None) or self.field,
                                 value=value, screen=screen)


def parse_path(text: str, scenario: Any) -> FieldPath:
    """Resolve ``text`` to its field declaration and check that ``scenario`` has it.

    Raises
    ------
    ValueError
        On bad syntax, a field with no declaration, or an index beyond the scenario's
        list; the message names the path.
    """
    if not isinstance(text, str) or not text:
        raise ValueError(f"a field path must be a non-empty string, got {text!r}")
    field = fields.declaration_at(text, scenario)  # its errors name the path
    try:
        values = fields.value_at(scenario, text)
    except ValueError as exc:
        raise ValueError(f"field path {text!r}: {exc}") from None
    if isinstance(values, list) and not values:
        raise ValueError(f"field path {text!r}: [*] of an empty list sets nothing")
    return FieldPath(text, field.group, field.name)


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
