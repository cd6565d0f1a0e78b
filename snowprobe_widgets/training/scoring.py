"""Scoring a trainee's marks against an exercise's hidden truth.

A mark is ``(position_m, depth_m)``: along the line, and depth below the snow surface as
read on the exercise's :class:`~.exercise.DepthAxis`. A mark finds a buried person when it
lies within that person's tolerances:

* along the line: half the body's extent along the line plus the radius of the first
  Fresnel zone at the body's depth seen from the antenna's height,
  ``sqrt(lambda (d + n h) / 2 + lambda^2 / 16)`` (the footprint, as
  :func:`snowprobe_widgets.budget.fresnel_radius_m` and the link budget compute it;
  REFERENCES 7.7 for h = 0), since the echo's apex can be read anywhere over the body and
  the footprint blurs it;
* in depth: the range resolution ``v / (2 B)`` in the body's layer (REFERENCES 7.6) plus
  the error of the one-velocity depth axis at the body's apex time (the axis is exact
  for a single layer only).

Each person is found at most once, and marks are paired with people so that as many
people as possible are found (``scipy.optimize.linear_sum_assignment``); a second mark
within reach of a person already found is a *duplicate* (neither a find nor a false
alarm); every other mark is a *false alarm*, and the false target it was on, if any, is
named. ``NOBODY`` as the answer is correct when nobody is buried.
"""

from __future__ import annotations

import enum
import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from .._validate import check_range
from ..constants import C0_M_S
from .exercise import Exercise

__all__ = ["NOBODY", "Answer", "MarkOutcome", "Score", "Tolerance", "detector_margins_db",
           "score", "tolerance_for"]


class Answer(enum.Enum):
    """Answers that are not marks."""

    NOBODY = "nobody here"

    def __repr__(self) -> str:
        return "NOBODY"


#: The "nobody is buried here" answer.
NOBODY = Answer.NOBODY
#: Most marks accepted in one answer.
MAX_MARKS = 50
#: Cost of pairing a mark with a person out of its reach (above any sum of in-reach costs).
_OUT_OF_REACH = 1e6


@dataclass(frozen=True)
class Tolerance:
    """How close a mark must be to count for one buried thing.

    Attributes
    ----------
    label : str
    position_m, depth_m : float
        Along-line centre and depth of the top, m.
    lateral_m, vertical_m : float
        Reach along the line and in depth, m.
    half_length_m : float
        Half the thing's extent along the line, m.
    footprint_radius_m : float
        First Fresnel zone radius at its depth, m.
    range_resolution_m : float
        ``v / (2 B)`` in its layer, m.
    depth_axis_error_m : float
        What the one-velocity depth axis misreads at its apex, m.
    """

    label: str
    position_m: float
    depth_m: float
    lateral_m: float
    vertical_m: float
    half_length_m: float
    footprint_radius_m: float
    range_resolution_m: float
    depth_axis_error_m: float

    def reaches(self, position_m: float, depth_m: float) -> bool:
        """True when a mark at ``(position_m, depth_m)`` is within both tolerances."""
        return (abs(position_m - self.position_m) <= self.lateral_m
                and abs(depth_m - self.depth_m) <= self.vertical_m)

    def explanation(self) -> str:
        """The tolerances in words with their parts."""
        return (f"{self.label}: within {self.lateral_m:.2f} m along the line (half its "
                f"length {self.half_length_m:.2f} m + footprint {self.footprint_radius_m:.2f}"
                f" m) and {self.vertical_m:.2f} m in depth (range resolution "
                f"{self.range_resolution_m:.2f} m + depth-scale error "
                f"{self.depth_axis_error_m:.2f} m)")


@dataclass(frozen=True)
class MarkOutcome:
    """What one mark turned out to be.

    Attributes
    ----------
    position_m, depth_m : float
    outcome : str
        ``"find"``, ``"duplicate"`` or ``"false alarm"``.
    person : str
        Label of the person found (or marked again); ``""`` for a false alarm.
    fooled_by : str
        For a false alarm: the false target's kind it lay on, ``"ground"`` near the
        ground echo, or ``"clutter"`` (nothing placed there); ``""`` otherwise.
    """

    position_m: float
    depth_m: float
    outcome: str
    person: str = ""
    fooled_by: str = ""


@dataclass(frozen=True)
class Score:
    """The result of one answer.

    Attributes
    ----------
    finds, misses, false_alarms, duplicates : int
    correct_nobody : bool
        True when the answer was NOBODY and nobody was buried.
    answered_nobody : bool
    tolerances : tuple of Tolerance
        One per buried person, in the scenario's order.
    marks : tuple of MarkOutcome
        One per mark, in the order given.
    missed : tuple of str
        Labels of the people no mark found.
    """

    finds: int
    misses: int
    false_alarms: int
    correct_nobody: bool
    duplicates: int
    answered_nobody: bool
    tolerances: tuple[Tolerance, ...]
    marks: tuple[MarkOutcome, ...]
    missed: tuple[str, ...]

    @property
    def fooled_by(self) -> tuple[str, ...]:
        """What each false alarm lay on (see :attr:`MarkOutcome.fooled_by`)."""
        return tuple(m.fooled_by for m in self.marks if m.outcome == "false alarm")

    def summary(self) -> str:
        """One line in plain words."""
        if self.answered_nobody:
            if self.correct_nobody:
                return "Correct: nobody was buried here."
            return (f"Not right: {self.misses} person(s) were buried here and the answer "
                    "was 'nobody here'.")
        parts = [f"{self.finds} found", f"{self.misses} missed",
                 f"{self.false_alarms} false alarm(s)"]
        if self.duplicates:
            parts.append(f"{self.duplicates} extra mark(s) on someone already found")
        return ", ".join(parts) + "."


# --------------------------------------------------------------------------- tolerances
def _layer_index(thickness_m: np.ndarray, depth_m: float) -> int:
    bottoms = np.cumsum(thickness_m)
    return int(min(np.searchsorted(bottoms, depth_m, side="left"), bottoms.size - 1))


def _half_length_m(obj: Any) -> float:
    """Half the along-line extent of a buried thing's top view, m."""
    if obj.kind == "person":
        h = math.radians(obj.heading_deg)
        return 0.5 * math.hypot(obj.body_length_m * math.cos(h),
                                obj.body_width_m * math.sin(h))
    return float(obj.half_extent_m)


def tolerance_for(exercise: Exercise, position_m: float, depth_m: float, half_length_m: float,
                  label: str) -> Tolerance:
    """The tolerances of a thing at ``depth_m`` in the exercise's snow (see module notes)."""
    from ..budget import fresnel_radius_m, range_resolution_m
    from ..raypaths import layers_above_m
    from ..synthesis import column_optics

    sc = exercise.scenario
    opt = column_optics(sc)
    fc = sc.radar.center_frequency_hz
    j = _layer_index(opt.thickness_m, depth_m)
    n = float(opt.index[j])
    h = sc.radar.antenna_height_m
    above = layers_above_m(opt.thickness_m, depth_m)
    # as the link budget does: the depth in the body's layer that gives the same reduced
    # range h + sum D_j / n_j, seen through the refracting surface
    footprint = fresnel_radius_m(C0_M_S / (fc * n), n * float(np.sum(above / opt.index)),
                                 antenna_height_m=h, index=n)
    resolution = range_resolution_m(sc.radar.make_pulse().bandwidth_hz, n * n)
    axis = exercise.depth_axis
    t_apex = axis.surface_time_s + 2.0 * float(np.dot(above, opt.index)) / C0_M_S
    axis_error = abs(axis.depth_m(t_apex) - depth_m)
    return Tolerance(label, float(position_m), float(depth_m), half_length_m + footprint,
                     resolution + axis_error, half_length_m, footprint, resolution,
                     axis_error)


def _person_tolerances(exercise: Exercise) -> tuple[Tolerance, ...]:
    return tuple(tolerance_for(exercise, p.position_m, p.depth_m, _half_length_m(p),
                               p.label or f"person {i + 1}")
                 for i, p in enumerate(exercise.scenario.persons))


# --------------------------------------------------------------------------- marks
def _check_marks(marks: Any) -> tuple[tuple[float, float], ...]:
    if isinstance(marks, (str, bytes)) or not hasattr(marks, "__iter__"):
        raise ValueError(f"marks must be a sequence of (position_m, depth_m) pairs or NOBODY, "
                         f"got {marks!r}")
    out = []
    for i, m in enumerate(marks):
        if isinstance(m, (str, bytes)) or not hasattr(m, "__len__") or len(m) != 2:
            raise ValueError(f"marks[{i}] = {m!r} is not a (position_m, depth_m) pair")
        x = check_range(f"marks[{i}].position_m", m[0], -1e4, 1e4, unit="m")
        z = check_range(f"marks[{i}].depth_m", m[1], 0.0, 100.0, unit="m")
        out.append((x, z))
    if len(out) > MAX_MARKS:
        raise ValueError(f"marks has {len(out)} entries; at most {MAX_MARKS} allowed")
    return tuple(out)


def _fooled_by(exercise: Exercise, x: float, z: float) -> str:
    """What a false alarm at (x, z) most likely lay on."""
    best = ("clutter", math.inf)
    for ft in exercise.false_targets:
        if ft.position_m is None:  # a crust: any position, its depth
            tol = tolerance_for(exercise, x, ft.depth_m, 0.0, ft.kind)
        else:
            tol = tolerance_for(exercise, ft.position_m, ft.depth_m, ft.half_extent_m, ft.kind)
        if tol.reaches(x, z):
            d = math.hypot((x - tol.position_m) / tol.lateral_m,
                           (z - tol.depth_m) / tol.vertical_m)
            if d < best[1]:
                best = (ft.kind, d)
    if best[0] == "clutter":
        ground = exercise.scenario.snowpack.depth_m
        tol = tolerance_for(exercise, x, ground, 0.0, "ground")
        if abs(z - ground) <= tol.vertical_m:
            return "ground"
    return best[0]


def score(exercise: Exercise, marks: Sequence[tuple[float, float]] | Answer) -> Score:
    """Score an answer: marks ``(position_m, depth_m)`` or :data:`NOBODY`.

    Parameters
    ----------
    exercise : Exercise
    marks : sequence of (float, float), or NOBODY
        Along-line position and depth below the surface of each mark, m (depth >= 0); an
        empty sequence is an answer with no marks (not the same as NOBODY).

    Returns
    -------
    Score
        With ``finds``, ``misses``, ``false_alarms`` (int) and ``correct_nobody`` (bool),
        and the tolerances used, stated per person.
    """
    if not isinstance(exercise, Exercise):
        raise ValueError(f"exercise must be an Exercise, got {type(exercise).__name__}")
    tols = _person_tolerances(exercise)
    labels = tuple(t.label for t in tols)
    if marks is NOBODY:
        return Score(0, len(tols), 0, not tols, 0, True, tols, (), labels)
    pts = _check_marks(marks)
    found: dict[int, int] = {}  # mark index -> person index
    if pts and tols:
        cost = np.full((len(pts), len(tols)), _OUT_OF_REACH)
        for i, (x, z) in enumerate(pts):
            for j, t in enumerate(tols):
                if t.reaches(x, z):
                    cost[i, j] = math.hypot((x - t.position_m) / t.lateral_m,
                                            (z - t.depth_m) / t.vertical_m)
        from scipy.optimize import linear_sum_assignment  # 27 MB: only when scoring

        rows, cols = linear_sum_assignment(cost)
        found = {int(i): int(j) for i, j in zip(rows, cols, strict=True)
                 if cost[i, j] < _OUT_OF_REACH}
    outcomes = []
    for i, (x, z) in enumerate(pts):
        if i in found:
            outcomes.append(MarkOutcome(x, z, "find", labels[found[i]]))
            continue
        near = [j for j, t in enumerate(tols) if t.reaches(x, z)]
        if near:
            # in reach of someone, but that person was found by another mark
            outcomes.append(MarkOutcome(x, z, "duplicate", labels[near[0]]))
        else:
            outcomes.append(MarkOutcome(x, z, "false alarm", "", _fooled_by(exercise, x, z)))
    hit = set(found.values())
    missed = tuple(lab for j, lab in enumerate(labels) if j not in hit)
    n_false = sum(o.outcome == "false alarm" for o in outcomes)
    n_dup = sum(o.outcome == "duplicate" for o in outcomes)
    return Score(len(hit), len(missed), n_false, False, n_dup, False, tols, tuple(outcomes),
                 missed)


def detector_margins_db(exercise: Exercise) -> tuple[float | None, ...]:
    """The automatic detector's margin on each buried person, dB.

    The strongest focused echo within the person's tolerances (``detect`` run with no
    threshold on the raw section) minus the detector's default threshold
    (:data:`snowprobe_widgets.detection.DEFAULT_THRESHOLD_DB`): positive when the
    detector calls the person. ``None`` for a person with no focused echo in reach.
    """
    from ..detection import DEFAULT_THRESHOLD_DB, detect

    dets = detect(exercise.raw, threshold=0.0, max_detections=200)
    out: list[float | None] = []
    for tol in _person_tolerances(exercise):
        scores = [d.score for d in dets if tol.reaches(d.position_m, d.depth_m)]
        out.append(max(scores) - DEFAULT_THRESHOLD_DB if scores else None)
    return tuple(out)
