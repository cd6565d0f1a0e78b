"""The debrief of a round: plain sentences computed from the scene, the answer and the detector.

Numbers come from the model: the link budget of each person
(:func:`snowprobe_widgets.link_budget`: noise and clutter margins, attenuation per layer,
spreading, surface transmission), refracted ray times (:func:`~snowprobe_widgets.raypaths.
solve_rays`) for the hyperbola's width, the scene's objects for the false targets, and the
automatic detector (:func:`snowprobe_widgets.detect`) for its picks.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from .exercise import Exercise
from .scoring import Score, Tolerance

__all__ = ["Debrief", "debrief"]

#: Echo margins (dB over noise and clutter together) read as clear / faint (common practice
#: for a visible hyperbola on a display: about 10 dB; invented split for the wording).
_CLEAR_DB, _FAINT_DB = 20.0, 6.0


@dataclass(frozen=True)
class Debrief:
    """What happened in a round, in plain language.

    Attributes
    ----------
    headline : str
        The score in one line.
    sections : tuple of (str, tuple of str)
        Titled groups of sentences: the answer, each person, the false targets, the
        automatic detector.
    """

    headline: str
    sections: tuple[tuple[str, tuple[str, ...]], ...]

    def text(self) -> str:
        """Everything as plain text, one sentence per line."""
        lines = [self.headline]
        for title, sentences in self.sections:
            lines.append(f"{title}:")
            lines += [f"- {s}" for s in sentences]
        return "\n".join(lines)


def _hyperbola(exercise: Exercise, depth_m: float, offset_m: float) -> tuple[float, float]:
    """Apex two-way time (s) of a point at ``depth_m``, and how far along the line its
    echo's time grows by one period from the apex (m)."""
    from ..raypaths import solve_rays
    from ..synthesis import column_optics

    sc = exercise.scenario
    opt = column_optics(sc)
    along = np.linspace(0.0, 6.0, 601)
    res = solve_rays(np.hypot(along, offset_m), np.full_like(along, depth_m),
                     antenna_height_m=sc.radar.antenna_height_m, thickness_m=opt.thickness_m,
                     index=opt.index, alpha_np_m=opt.alpha_np_m)
    rise = res.time_s - res.time_s[0]
    period = 1.0 / sc.radar.center_frequency_hz
    return float(res.time_s[0]), float(np.interp(period, rise, along))


def _person_sentences(exercise: Exercise, person: Any, tol: Tolerance,
                      found: bool) -> tuple[str, ...]:
    from ..budget import link_budget

    sc = exercise.scenario
    b = link_budget(sc, person)
    margin = -10.0 * math.log10(10 ** (-b.echo_to_noise_db / 10)
                                + 10 ** (-b.echo_to_clutter_db / 10))
    word = ("clear" if margin >= _CLEAR_DB else "faint" if margin >= _FAINT_DB
            else "hidden in the noise and clutter")
    where = (f"{person.label or 'A person'} lay {person.depth_m:.2f} m deep at "
             f"{person.position_m:.1f} m along the line, {person.posture.replace('_', ' ')}, "
             f"{abs(person.offset_m):.1f} m to the side of it. "
             f"{'You found them.' if found else 'You did not mark them.'}")
    strength = (f"Its echo was {word}: {b.echo_to_noise_db:.0f} dB above the receiver noise "
                f"and {b.echo_to_clutter_db:.0f} dB above the debris clutter.")
    att = sum(r.value for r in b.rows if r.term.startswith("attenuation in layer"))
    spreading = b.row("two-way spreading").value
    surface = b.row("surface and layer transmission").value
    wet = [la.lwc_percent for la in sc.snowpack.layers if la.lwc_percent > 0]
    if wet and -att >= _FAINT_DB:
        why = (f"Wet snow above it (up to {max(wet):.1f} % water) absorbed {-att:.0f} dB on "
               "the way down and back: liquid water is what weakens a radar echo most.")
    elif wet:
        why = (f"The wet snow above it (up to {max(wet):.1f} % water) absorbed "
               f"{-att:.1f} dB on the way down and back; spreading over the path cost more "
               f"({-spreading:.0f} dB): the deeper the body, the weaker its echo.")
    else:
        why = (f"Dry snow absorbs little: {-att:.1f} dB over the way down and back. Most "
               f"of the loss is spreading over the path ({-spreading:.0f} dB): the deeper "
               "the body, the weaker its echo.")
    why += (f" The snow surface and the layer boundaries reflected away {-surface:.1f} dB "
            "more.")
    t_apex, w = _hyperbola(exercise, person.depth_m, person.offset_m)
    _t, w_half = _hyperbola(exercise, 0.5 * person.depth_m, person.offset_m)
    shape = (f"The apex of its hyperbola is the top of the body, at {t_apex * 1e9:.1f} ns "
             f"two-way time; the depth scale reads that as "
             f"{exercise.depth_axis.depth_m(t_apex):.2f} m. The flanks fall one period "
             f"({1e9 / sc.radar.center_frequency_hz:.2f} ns) below the apex within "
             f"{w:.2f} m either side; a body at half the depth would give a narrower "
             f"hyperbola ({w_half:.2f} m): wide and flat means deep.")
    reach = f"A mark counted within reach of it: {tol.explanation()}."
    return (where, strength, why, shape, reach)


def _false_target_sentence(exercise: Exercise, ft: Any) -> str:
    sc = exercise.scenario
    obj = next((o for o in sc.objects if o.position_m == ft.position_m
                and o.depth_m == ft.depth_m), None)
    if ft.kind == "crust":
        t = exercise.depth_axis.time_s(ft.depth_m) * 1e9
        return (f"An {ft.description}: a continuous bright line across the whole section at "
                f"about {t:.1f} ns. A layer, not a body: a body's echo is a hyperbola a few "
                "metres wide at most.")
    if obj is None:
        return f"A {ft.description}."
    from ..budget import link_budget
    from ..targets import kind_of

    # how the object looks (its kind says) and how its echo compares with the person's
    b = link_budget(sc, obj)
    strength = f" Here it stood {b.echo_to_noise_db:.0f} dB above the noise."
    if sc.persons:
        bp = link_budget(sc, sc.persons[0])
        diff = b.echo_to_noise_db - bp.echo_to_noise_db
        strength += (f" That is {abs(diff):.0f} dB {'stronger' if diff >= 0 else 'weaker'}"
                     f" than {sc.persons[0].label or 'the person'}'s echo.")
    return f"A {ft.description}. {kind_of(obj).appearance(obj)}{strength}"


def debrief(exercise: Exercise, result: Score) -> Debrief:
    """The debrief of ``exercise`` answered with ``result`` (from :func:`score`)."""
    sc = exercise.scenario
    answer: list[str] = []
    for m in result.marks:
        if m.outcome == "find":
            answer.append(f"Your mark at {m.position_m:.1f} m, {m.depth_m:.2f} m deep found "
                          f"{m.person}.")
        elif m.outcome == "duplicate":
            answer.append(f"Your mark at {m.position_m:.1f} m, {m.depth_m:.2f} m deep was a "
                          f"second mark on {m.person}: no harm, but one probe team is enough.")
        else:
            what = {"clutter": "debris clutter or noise, nothing placed there",
                    "ground": "the ground echo"}.get(m.fooled_by, f"a {m.fooled_by}")
            answer.append(f"Your mark at {m.position_m:.1f} m, {m.depth_m:.2f} m deep was a "
                          f"false alarm: it lay on {what}.")
    if result.answered_nobody:
        answer.append("You answered 'nobody here'.")
    elif not result.marks:
        answer.append("You placed no mark and did not answer 'nobody here'.")
    found = {m.person for m in result.marks if m.outcome == "find"}
    sections: list[tuple[str, tuple[str, ...]]] = [("Your answer", tuple(answer))]
    if sc.persons:
        for p, tol in zip(sc.persons, result.tolerances, strict=True):
            sections.append((tol.label.capitalize(), _person_sentences(
                exercise, p, tol, tol.label in found)))
    else:
        sections.append(("Nobody buried", (
            "Nobody was buried in this scene: every echo came from the snow layers, the "
            "ground, debris clutter or the objects below.",)))
    fakes = tuple(_false_target_sentence(exercise, ft) for ft in exercise.false_targets)
    ground_t = exercise.depth_axis.time_s(sc.snowpack.depth_m) * 1e9
    fakes += (f"The ground, {sc.snowpack.depth_m:.2f} m down, is the last long bright line, "
              f"at about {ground_t:.1f} ns.",)
    sections.append(("What else was there", fakes))
    sections.append(("The automatic detector", _detector_sentences(exercise, result)))
    return Debrief(result.summary(), tuple(sections))


def _detector_sentences(exercise: Exercise, result: Score) -> tuple[str, ...]:
    from ..detection import DEFAULT_THRESHOLD_DB
    from .scoring import detector_margins_db

    dets = exercise.detections
    out = [] if dets else ["The automatic detector marked nothing in this section."]
    for d in dets:
        hit = next((t.label for t in result.tolerances
                    if t.reaches(d.position_m, d.depth_m)), "")
        what = f"on {hit}" if hit else "a false alarm"
        out.append(f"It marked {d.position_m:.1f} m, {d.depth_m:.2f} m deep "
                   f"({d.score:.0f} dB over the background): {what}.")
    for tol, m in zip(result.tolerances, detector_margins_db(exercise), strict=True):
        if m is None:
            out.append(f"It saw no focused echo within reach of {tol.label}.")
        else:
            out.append(f"Its margin on {tol.label}: {m:+.0f} dB against its "
                       f"{DEFAULT_THRESHOLD_DB:.0f} dB threshold "
                       f"({'called' if m >= 0 else 'not called'}).")
    return tuple(out)
