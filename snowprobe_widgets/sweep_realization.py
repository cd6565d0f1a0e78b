"""One Monte Carlo realization of a sweep: simulate, process, detect, score.

A realization is a scenario with every uncertain field drawn and its own clutter seed. It
is simulated twice over the same ground: as it is, and as its *nobody-buried twin* (the
same snow, clutter, debris and noise with the persons removed), so the false-alarm side
is measured where the persons are not. Both radargrams go through the default processing
chain and the detector; the detections are scored against the truth with
:func:`snowprobe_widgets.detection.compare_with_truth`.

The radargram is built from three linear parts of
:func:`snowprobe_widgets.synthesis.simulate` (the layered column with its thin clutter
layers and the receiver noise; clutter scatterers and debris objects; the persons), so
the twin shares two of them and the echo-to-clutter ratio can be measured on the clutter
part alone. The sum equals one full simulation to rounding (``simulate`` is linear in
its parts; tests/test_sweeps.py checks it).

**Reduced scene** (the default in sweeps): only what the detector uses is simulated:
the base line's traces within :data:`LINE_HALF_WIDTH_M` of the persons (the same trace
positions, the same spacing), debris objects within reach of that stretch, and samples up
to a little past the ground echo (the detector never searches below the ground). The
physics is unchanged; the random clutter and noise are drawn for the shorter line, so a
reduced scene is another draw of the same statistics, not a crop of the full one.
"""

from __future__ import annotations

import dataclasses
import functools
import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from .constants import C0_M_S
from .detection import DEFAULT_THRESHOLD_DB, compare_with_truth, detect
from .processing import ProcessingChain
from .radar_equation import noise_rms
from .radargram import Radargram
from .scene import Clutter
from .synthesis import column_optics, simulate

__all__ = [
    "LINE_HALF_WIDTH_M",
    "WINDOW_PAST_GROUND_PERIODS",
    "MAX_ALARMS",
    "RealizationResult",
    "reduced_scene",
    "realization_radargrams",
    "run_realization",
]

#: Half-length of the stretch of line simulated around the persons in a reduced scene, m.
#: Long enough that a body's focused echo fills well under a quarter of the traces (the
#: detector's background is the 75th percentile over the traces) and that the twin's
#: clutter-only line gives a false-alarm rate per metre (invented figure, checked against
#: the full line in tests/test_sweep_realization.py).
LINE_HALF_WIDTH_M = 3.0
#: Samples kept past the ground echo in a reduced scene, in periods of the centre
#: frequency: the detector stops 1.2 periods above the ground and reads 3 periods beyond
#: its searched times; one more keeps the band-pass filter's end effects out of them.
WINDOW_PAST_GROUND_PERIODS = 4.0
#: Most twin detections recorded per realization (the detector's own cap is 50).
MAX_ALARMS = 50
#: Traces a reduced line keeps at least (the detector needs 8).
_MIN_TRACES = 16
#: The clutter of the scenario the persons' echoes are computed on (it has no part in them).
_NO_CLUTTER = Clutter()
#: Margin around the line within which buried things must lie (scene.Scenario's rule).
_LINE_MARGIN_M = 5.0


@dataclass(frozen=True)
class RealizationResult:
    """What one realization records (arrays over the base scenario's persons).

    Attributes
    ----------
    found : ndarray of float, shape (n_persons,)
        1.0 where the detector at ``level_db`` found the person, else 0.0.
    person_score_db : ndarray, shape (n_persons,)
        Strongest detection score within the matching tolerance of each person, dB; NaN
        when no detection there scored even ``floor_db``.
    false_alarms : int
        Detections at ``level_db`` on the scene with the persons that matched no person.
    twin_false_alarms : int
        Detections at ``level_db`` on the nobody-buried twin (every one is a false alarm).
    twin_alarm_score_db : ndarray, shape (MAX_ALARMS,)
        Scores of the twin's detections at ``floor_db`` or more, strongest first, NaN-padded.
    line_length_m : float
        Length of the simulated line (for false alarms per metre), m.
    echo_to_noise_db, echo_to_clutter_db : ndarray, shape (n_persons,)
        Peak of each person's raw echo over the receiver noise rms, and over the rms of
        the clutter scatterers and debris echoes within one period of the person's apex
        time, dB (NaN where the scene has no clutter echo there).
    """

    found: np.ndarray
    person_score_db: np.ndarray
    false_alarms: int
    twin_false_alarms: int
    twin_alarm_score_db: np.ndarray
    line_length_m: float
    echo_to_noise_db: np.ndarray
    echo_to_clutter_db: np.ndarray


def reduced_scene(scenario: Any) -> Any:
    """The part of ``scenario`` a realization needs (see the module notes).

    The line keeps the base line's traces within :data:`LINE_HALF_WIDTH_M` of the
    persons (at least 16 traces, never beyond the base line), objects farther than
    5 m from it are left out, and the time window ends
    :data:`WINDOW_PAST_GROUND_PERIODS` periods after the ground echo (never later than the
    base window, at least 64 samples).
    """
    survey = scenario.survey
    dx = survey.trace_spacing_m
    xs = [p.position_m for p in scenario.persons]
    if xs:
        lo = max(survey.start_m, min(xs) - LINE_HALF_WIDTH_M)
        hi = min(survey.end_m, max(xs) + LINE_HALF_WIDTH_M)
        k0 = max(0, math.ceil((lo - survey.start_m) / dx - 1e-9))
        k1 = min(survey.n_traces - 1, math.floor((hi - survey.start_m) / dx + 1e-9))
        if k1 - k0 + 1 < _MIN_TRACES:
            k1 = min(survey.n_traces - 1, k0 + _MIN_TRACES - 1)
            k0 = max(0, k1 - _MIN_TRACES + 1)
        survey = dataclasses.replace(survey, start_m=survey.start_m + k0 * dx,
                                     end_m=survey.start_m + k1 * dx)
    objects = tuple(o for o in scenario.objects
                    if survey.start_m - _LINE_MARGIN_M <= o.position_m
                    <= survey.end_m + _LINE_MARGIN_M)
    radar = scenario.radar
    optics = column_optics(scenario)
    fc = radar.center_frequency_hz
    t_ground = (2.0 * radar.antenna_height_m + 2.0 * float(optics.thickness_m @ optics.index)
                ) / C0_M_S
    n_need = math.ceil((t_ground + WINDOW_PAST_GROUND_PERIODS / fc) / radar.dt_s)
    n = min(radar.n_samples, max(64, n_need))
    if n < radar.n_samples:
        radar = dataclasses.replace(radar, time_window_s=n * radar.dt_s)
    return dataclasses.replace(scenario, survey=survey, objects=objects, radar=radar)


def _without_scatterers(scenario: Any) -> Any:
    return dataclasses.replace(scenario, clutter=dataclasses.replace(
        scenario.clutter, scatterer_density_per_m3=0.0), objects=())


@functools.lru_cache(maxsize=4)
def _persons_echo(scenario: Any) -> Radargram:
    """The persons' echoes alone. They do not depend on the clutter (no multiple
    scattering in the model), so the realizations of a grid cell that draw nothing
    about the persons, the snow or the radar share one (the key is the whole scenario
    with the clutter set aside; a radargram's arrays are read-only)."""
    return simulate(scenario, components=("objects",))


def realization_radargrams(scenario: Any) -> tuple[Radargram, Radargram, dict[str, Radargram]]:
    """(with persons, nobody-buried twin, parts) for ``scenario`` as given.

    Parts: ``"column"`` (layers, thin clutter layers and receiver noise: the noise is
    seeded by the clutter seed, which the part keeps), ``"clutter"`` (clutter scatterers
    and debris objects) and ``"persons"``; the twin is column + clutter, the radargram
    with the persons adds the persons' echoes.
    """
    twin = dataclasses.replace(scenario, persons=())
    parts = {
        "column": simulate(_without_scatterers(twin),
                           components=("layers", "clutter", "noise")),
        "clutter": simulate(twin, components=("clutter", "objects")),
        "persons": _persons_echo(dataclasses.replace(scenario, objects=(),
                                                     clutter=_NO_CLUTTER)),
    }
    base = parts["column"]
    twin_data = parts["column"].data + parts["clutter"].data
    twin_rg = Radargram(twin_data, base.time_s, base.position_m, scenario=twin, truth=())
    full = Radargram(twin_data + parts["persons"].data, base.time_s, base.position_m,
                     scenario=scenario, truth=parts["persons"].truth)
    return full, twin_rg, parts


def _person_scores(dets: list, truth: tuple, n_persons: int) -> np.ndarray:
    """Strongest detection score within the matching tolerance of each person marker."""
    out = np.full(n_persons, np.nan)
    people = [m for m in truth if m.kind == "person"]
    for i, m in enumerate(people):
        near = [d for d in dets if compare_with_truth([d], [m]).n_hits]
        if near:
            out[i] = max(d.score for d in near)
    return out


def _echo_ratios(parts: dict[str, Radargram], scenario: Any) -> tuple[np.ndarray, np.ndarray]:
    radar = scenario.radar
    rms = noise_rms(radar.transmit_power_dbm, radar.noise_floor_dbm, radar.stacking)
    echo = parts["persons"]
    clutter = parts["clutter"].data
    t = echo.time_s
    period = 1.0 / radar.center_frequency_hz
    enr, ecr = [], []
    for marker in echo.truth:
        near = np.abs(t - marker.apex_time_s) <= period
        peak = float(np.max(np.abs(echo.data[near]))) if np.any(near) else 0.0
        peak = peak if peak > 0 else float(np.max(np.abs(echo.data)))
        enr.append(20.0 * math.log10(peak / rms) if peak > 0 else np.nan)
        c_rms = float(np.sqrt(np.mean(clutter[near] ** 2))) if np.any(near) else 0.0
        ecr.append(20.0 * math.log10(peak / c_rms) if c_rms > 0 and peak > 0 else np.nan)
    return np.array(enr), np.array(ecr)


def run_realization(scenario: Any, *, level_db: float = DEFAULT_THRESHOLD_DB,
                    floor_db: float = 10.0, reduced: bool = True) -> RealizationResult:
    """Simulate, process and detect one drawn scenario and its twin; score both.

    Parameters
    ----------
    scenario : Scenario
        The realization (uncertain fields drawn, its own clutter seed), at least one person.
    level_db : float
        Detector level for ``found`` and the false-alarm counts, dB.
    floor_db : float
        Lowest score recorded (the detector runs at this level, so :func:`roc` can move the
        level down to it without re-simulating), dB, at most ``level_db``.
    reduced : bool
        Simulate the reduced scene (default) or the whole base line and window.
    """
    scene = reduced_scene(scenario) if reduced else scenario
    full, twin, parts = realization_radargrams(scene)
    chain = ProcessingChain.default(scene.radar.center_frequency_hz)
    dets = detect(full, threshold=floor_db, chain=chain)
    twin_dets = detect(twin, threshold=floor_db, chain=chain)
    at_level = [d for d in dets if d.score >= level_db]
    report = compare_with_truth(at_level, full.truth)
    people = [m for m in full.truth if m.kind == "person"]
    hit_markers = {id(m) for _d, m in report.hits}
    found = np.array([1.0 if id(m) in hit_markers else 0.0 for m in people])
    scores = np.full(MAX_ALARMS, np.nan)
    twin_scores = sorted((d.score for d in twin_dets), reverse=True)[:MAX_ALARMS]
    scores[:len(twin_scores)] = twin_scores
    enr, ecr = _echo_ratios(parts, scene)
    return RealizationResult(
        found=found,
        person_score_db=_person_scores(dets, full.truth, len(people)),
        false_alarms=report.n_false_alarms,
        twin_false_alarms=sum(1 for s in twin_scores if s >= level_db),
        twin_alarm_score_db=scores,
        line_length_m=float(scene.survey.length_m),
        echo_to_noise_db=enr,
        echo_to_clutter_db=ecr,
    )
