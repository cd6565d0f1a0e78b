"""The radargram value object: a time x position section plus where it came from.

Axis convention used everywhere in the package: ``data[i_sample, i_trace]``, so that
``data.shape == (time_s.size, position_m.size)``. Time is two-way travel time in seconds
from the moment the pulse leaves the antenna (time-zero before any alignment).
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from typing import Any

import numpy as np


def _frozen_array(x: Any, dtype: Any = float) -> np.ndarray:
    a = np.array(x, dtype=dtype, copy=True)
    a.setflags(write=False)
    return a


@dataclass(frozen=True)
class TruthMarker:
    """What is really buried: one entry per person or debris object of a scenario.

    Attributes
    ----------
    kind : str
        ``"person"``, ``"boulder"``, ``"branch"``, ``"metal"``, ...
    position_m : float
        Along-line position of the object's top point, m.
    depth_m : float
        Depth of the object's top below the snow surface, m.
    apex_time_s : float
        Expected two-way travel time from the antenna straight above the object's top, s.
    offset_m : float
        Across-line offset of the object from the survey line, m.
    label : str
        Free text for display ("person 1", "lost ski").
    """

    kind: str
    position_m: float
    depth_m: float
    apex_time_s: float
    offset_m: float = 0.0
    label: str = ""


@dataclass(frozen=True)
class ProcessingRecord:
    """One processing step applied to a radargram: its registry name and parameters."""

    step: str
    params: tuple[tuple[str, Any], ...] = ()

    def as_dict(self) -> dict[str, Any]:
        """The step as a JSON-ready mapping ``{"step": ..., "params": {...}}``."""
        return {"step": self.step, "params": dict(self.params)}


@dataclass(frozen=True, eq=False)
class Radargram:
    """A B-scan: traces side by side along the survey line.

    Attributes
    ----------
    data : ndarray, shape (n_samples, n_traces)
        Received amplitude (arbitrary linear units proportional to volts), read-only.
    time_s : ndarray, shape (n_samples,)
        Two-way travel time of each sample, s, increasing.
    position_m : ndarray, shape (n_traces,)
        Along-line antenna position of each trace, m, increasing.
    scenario : object or None
        The ``Scenario`` it was simulated from (``None`` for measured data).
    truth : tuple of TruthMarker
        What is really buried (empty for measured data).
    history : tuple of ProcessingRecord
        Processing steps applied so far, in order.
    """

    data: np.ndarray
    time_s: np.ndarray
    position_m: np.ndarray
    scenario: Any = None
    truth: tuple[TruthMarker, ...] = ()
    history: tuple[ProcessingRecord, ...] = field(default=())

    def __post_init__(self) -> None:
        data = _frozen_array(self.data)
        time_s = _frozen_array(self.time_s)
        position_m = _frozen_array(self.position_m)
        if data.ndim != 2:
            raise ValueError(f"data must be 2-D (samples x traces), got shape {data.shape}")
        if data.shape != (time_s.size, position_m.size):
            raise ValueError(
                f"data shape {data.shape} does not match time_s ({time_s.size}) x "
                f"position_m ({position_m.size})"
            )
        if not np.all(np.isfinite(data)):
            raise ValueError("data contains NaN or infinite values")
        object.__setattr__(self, "data", data)
        object.__setattr__(self, "time_s", time_s)
        object.__setattr__(self, "position_m", position_m)
        object.__setattr__(self, "truth", tuple(self.truth))
        object.__setattr__(self, "history", tuple(self.history))

    @property
    def dt_s(self) -> float:
        """Sampling interval, s."""
        return float(self.time_s[1] - self.time_s[0]) if self.time_s.size > 1 else 0.0

    @property
    def dx_m(self) -> float:
        """Trace spacing, m (mean spacing when irregular)."""
        if self.position_m.size < 2:
            return 0.0
        return float((self.position_m[-1] - self.position_m[0]) / (self.position_m.size - 1))

    def to_xarray(self) -> Any:
        """The radargram as an ``xarray.DataArray`` (see :func:`to_xarray`)."""
        return to_xarray(self)

    def to_csv(self, path: str | os.PathLike[str]) -> None:
        """Write the radargram as CSV: a header row (``time_ns``, then each trace's
        position in m), one row per sample; ``pandas.read_csv(path)`` reads it with no
        options."""
        from .atomic_files import write_atomically

        write_atomically(path, csv_text(self).encode("utf-8"))

    def _repr_html_(self) -> str:
        return repr_html(self)

    def with_data(self, data: np.ndarray, record: ProcessingRecord | None = None,
                  **changes: Any) -> Radargram:
        """A new radargram with ``data`` replaced and ``record`` appended to the history."""
        history = self.history + ((record,) if record is not None else ())
        kw: dict[str, Any] = dict(
            data=data, time_s=self.time_s, position_m=self.position_m,
            scenario=self.scenario, truth=self.truth, history=history,
        )
        kw.update(changes)
        return Radargram(**kw)


def _json_history(history: tuple[ProcessingRecord, ...]) -> str:
    import json

    return json.dumps([r.as_dict() for r in history], default=str)


def to_xarray(rg: Radargram) -> Any:
    """``rg`` as an ``xarray.DataArray`` named ``amplitude`` with dims ``("time_s",
    "position_m")``; coordinates and attributes carry their units, the processing history
    and, for a simulated radargram, the scenario as JSON (``attrs["scenario_json"]``)."""
    import xarray as xr

    from .cautions import CAUTION_SHORT

    attrs = {"units": "model units (linear, proportional to volts)",
             "long_name": "received amplitude", "caution": CAUTION_SHORT,
             "processing_json": _json_history(rg.history)}
    if rg.scenario is not None:
        attrs["scenario_json"] = rg.scenario.to_json()
    return xr.DataArray(
        np.asarray(rg.data), dims=("time_s", "position_m"), name="amplitude",
        coords={"time_s": ("time_s", np.asarray(rg.time_s),
                           {"units": "s", "long_name": "two-way travel time"}),
                "position_m": ("position_m", np.asarray(rg.position_m),
                               {"units": "m", "long_name": "position along the survey line"})},
        attrs=attrs)


def csv_text(rg: Radargram) -> str:
    """``rg`` as CSV text: a header row ``time_ns`` then each trace's position in metres,
    then one row per sample (time in ns, then the amplitude of each trace)."""
    names = ["time_ns"] + [f"{x:.9g}" for x in rg.position_m]
    rows = np.column_stack([np.asarray(rg.time_s) * 1e9, rg.data])
    body = "\n".join(",".join(f"{v:.9g}" for v in row) for row in rows)
    return ",".join(names) + "\n" + body + "\n"


def repr_html(rg: Radargram) -> str:
    """A short notebook summary of ``rg``."""
    import html

    n_t, n_x = rg.data.shape
    name = getattr(rg.scenario, "name", "") if rg.scenario is not None else ""
    steps = ", ".join(r.step for r in rg.history) or "none (raw)"
    truth = ", ".join(f"{m.label or m.kind} at {m.position_m:.2f} m, {m.depth_m:.2f} m deep"
                      for m in rg.truth) or "none given"
    return (f"<div><b>Radargram</b>{' of ' + html.escape(name) if name else ''}: "
            f"{n_x} traces from {rg.position_m[0]:.2f} to {rg.position_m[-1]:.2f} m "
            f"(every {100 * rg.dx_m:.1f} cm) x {n_t} samples over "
            f"{rg.time_s[-1] * 1e9:.1f} ns (every {rg.dt_s * 1e12:.0f} ps)<br>"
            f"processing: {html.escape(steps)}<br>buried: {html.escape(truth)}</div>")
