"""What a kernel needs to know when the ``snowprobe`` launcher serves it to visitors.

The launcher sets environment variables that its kernels inherit:

* :data:`SERVED_ENV` = ``"1"``: this kernel runs a dashboard for a page visitor, so no widget
  may open or write a server path the visitor names (files come in by upload and leave by
  download);
* :data:`MAX_CELLS_ENV`, :data:`MAX_WORK_ENV`: the per-update work budget, set from the
  memory each kernel may use (:data:`KERNEL_MEMORY_ENV`, enforced by the launcher on the
  kernel process) and the number of sessions.

Nothing here imports a UI library; the widgets read these values through
:func:`served` and :func:`work_limits`.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from typing import Any

__all__ = [
    "BYTES_PER_CELL",
    "DEFAULT_LIMITS",
    "KERNEL_MEMORY_ENV",
    "MAX_CELLS_ENV",
    "MAX_WORK_ENV",
    "SERVED_ENV",
    "WorkLimits",
    "limits_for_memory",
    "served",
    "work_limits",
    "work_of",
]

#: Set to "1" by ``snowprobe serve`` for its kernels.
SERVED_ENV: str = "SNOWPROBE_SERVED"
#: Memory each served kernel may use, MiB (the launcher bounds the kernel process by it).
KERNEL_MEMORY_ENV: str = "SNOWPROBE_KERNEL_MEMORY_MB"
#: Most samples x traces in one update.
MAX_CELLS_ENV: str = "SNOWPROBE_MAX_CELLS"
#: Most samples x traces x clutter scatterers in one update.
MAX_WORK_ENV: str = "SNOWPROBE_MAX_WORK"

#: Memory one sample of one trace costs an explorer update at its peak, bytes: the
#: simulation's temporaries (about 200 B per cell measured with tracemalloc on the demo
#: scenarios, tests/benchmarks/bench_crowd.py) plus the explorer's cached parts, processed
#: and shown sections (6 float64 copies), with a factor 1.5 of room.
BYTES_PER_CELL: int = 400

#: Samples x traces x scatterers one update may ask for: about 1 ns each on one core of the
#: reference machine (tests/benchmarks/bench_crowd.py), so about 20 s at most.
_WORK_PER_UPDATE: float = 2.0e10


@dataclass(frozen=True)
class WorkLimits:
    """The most work one update of a dashboard may ask for.

    Attributes
    ----------
    max_cells : int
        Samples x traces (bounds memory).
    max_work : float
        Samples x traces x clutter scatterers (bounds time).
    """

    max_cells: int
    max_work: float

    def check(self, scenario: Any) -> None:
        """Refuse a scenario over the limits with a message that says what to reduce.

        Raises
        ------
        ValueError
            Naming the numbers, the limit and the controls that lower them.
        """
        samples = scenario.radar.n_samples
        traces = scenario.survey.n_traces
        cells = samples * traces
        if cells > self.max_cells:
            raise ValueError(
                f"this survey asks for {traces:,} traces x {samples:,} samples = {cells:,} "
                f"values, over this page's limit of {self.max_cells:,}: use fewer traces (a "
                "wider trace spacing or a shorter line) or fewer samples (a shorter time "
                "window or a coarser sampling interval)")
        scatterers = scenario.clutter_field().n_scatterers
        work = work_of(scenario)
        if work > self.max_work:
            raise ValueError(
                f"this survey asks for {traces:,} traces x {samples:,} samples x "
                f"{scatterers:,} clutter scatterers = {work:.3g} units of work, over this "
                f"page's limit of {self.max_work:.3g}: lower the clutter scatterer density, "
                "use fewer traces (a wider spacing or a shorter line) or fewer samples")


def work_of(scenario: Any) -> float:
    """Samples x traces x clutter scatterers (at least one) of a scenario's update: what
    :attr:`WorkLimits.max_work` bounds, about 1 ns each on one core."""
    cells = scenario.radar.n_samples * scenario.survey.n_traces
    return float(cells) * max(scenario.clutter_field().n_scatterers, 1)


def limits_for_memory(memory_mb: float) -> WorkLimits:
    """The work limits of a kernel allowed ``memory_mb`` MiB."""
    cells = int(max(memory_mb, 1.0) * 2**20 / BYTES_PER_CELL)
    return WorkLimits(max_cells=cells, max_work=_WORK_PER_UPDATE)


#: Limits in a notebook with no launcher settings: 2 GiB of sections.
DEFAULT_LIMITS: WorkLimits = limits_for_memory(2048.0)


def served() -> bool:
    """True in a kernel the ``snowprobe`` launcher started for a page visitor."""
    return os.environ.get(SERVED_ENV, "") == "1"


def work_limits() -> WorkLimits:
    """The limits the launcher set for this kernel, else :data:`DEFAULT_LIMITS`."""
    try:
        cells = int(os.environ[MAX_CELLS_ENV])
        work = float(os.environ[MAX_WORK_ENV])
    except (KeyError, ValueError):
        return DEFAULT_LIMITS
    return WorkLimits(max_cells=max(cells, 1), max_work=max(work, 1.0))
