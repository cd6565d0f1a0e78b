"""Field-team training: blind radargram exercises, marks, scoring, debrief and records.

An instructor (or a trainee alone) draws exercises from a level; the trainee sees only the
processed radargram (:meth:`Exercise.searcher_view`), marks where a person lies or answers
:data:`NOBODY`, and :func:`score` compares the answer with the hidden truth
(:attr:`Exercise.scenario`); :func:`debrief` explains the round from the scene.

>>> from snowprobe_widgets.training import LEVELS, make_exercise, score, NOBODY
>>> ex = make_exercise(LEVELS[0], seed=7)
>>> result = score(ex, [(4.2, 0.7)])          # or score(ex, NOBODY)
>>> result.finds, result.misses, result.false_alarms, result.correct_nobody  # doctest: +SKIP

Modules: :mod:`.levels` (the declared level table and level files), :mod:`.exercise`
(drawing scenes), :mod:`.scoring`, :mod:`.debrief`, :mod:`.records` (session records,
class summary, answer key), :mod:`.guide` (scenes for the reading guide). No
user-interface library is imported here.
"""

from __future__ import annotations

from .debrief import Debrief, debrief
from .exercise import (
    DepthAxis,
    Exercise,
    FalseTarget,
    SearcherView,
    make_exercise,
    round_seed,
)
from .guide import GuideScene, guide_scenes
from .levels import (
    FALSE_TARGET_KINDS,
    LEVEL_TABLE,
    Level,
    LevelFileError,
    get_level,
    level_from_json,
    level_to_json,
)
from .records import (
    ClassSummary,
    RecordFileError,
    RoundRecord,
    SessionRecord,
    answer_key_html,
    class_summary,
)
from .scoring import NOBODY, MarkOutcome, Score, Tolerance, score

#: The shipped level names, easiest first.
LEVELS: tuple[str, ...] = tuple(lv.name for lv in LEVEL_TABLE)

__all__ = [
    "FALSE_TARGET_KINDS",
    "LEVELS",
    "LEVEL_TABLE",
    "NOBODY",
    "ClassSummary",
    "Debrief",
    "DepthAxis",
    "Exercise",
    "FalseTarget",
    "GuideScene",
    "Level",
    "LevelFileError",
    "MarkOutcome",
    "RecordFileError",
    "RoundRecord",
    "Score",
    "SearcherView",
    "SessionRecord",
    "Tolerance",
    "answer_key_html",
    "class_summary",
    "debrief",
    "get_level",
    "guide_scenes",
    "level_from_json",
    "level_to_json",
    "make_exercise",
    "round_seed",
    "score",
]
