"""Conditions that overrule the link budget (the verdict-card cases), per buried person."""

from __future__ import annotations

import dataclasses
import re

import pytest

import snowprobe_widgets as sw
from snowprobe_widgets.budget import link_budget
from snowprobe_widgets.constants import C0_M_S
from snowprobe_widgets.detection import DEFAULT_THRESHOLD_DB
from snowprobe_widgets.fields import with_value
from snowprobe_widgets.scene import Scenario


@pytest.fixture(scope="module")
def base() -> Scenario:
    return Scenario.example("shallow_dry_powder")  # ski tourer 0.6 m down, 800 MHz


def _number(text: str, before: str) -> float:
    return float(re.search(r"([0-9.]+) " + re.escape(before), text).group(1))


def test_the_demo_is_likely_visible_with_no_warnings(base: Scenario) -> None:
    lb = link_budget(base)
    assert lb.likely_visible is True and lb.warnings == ()
    assert lb.threshold_db == DEFAULT_THRESHOLD_DB  # one level, one default


def test_window_that_ends_before_the_echo_names_the_window_needed(base: Scenario) -> None:
    high = with_value(base, "radar.antenna_height_m", 10.0)  # a drone 10 m up, 51.2 ns
    lb = link_budget(high)
    assert not lb.likely_visible and len(lb.warnings) == 1
    text = lb.warnings[0]
    assert "time window (51.2 ns) ends before the echo of ski tourer" in text
    # 10 m of air alone takes 2 x 10 m / c0 = 66.7 ns two ways; Annan's 1.3 x margin
    # (REFERENCES 7.9) puts the window needed above 1.3 x 66.7 = 86.7 ns
    needed = _number(text, "ns.")
    assert 2 * 10.0 / C0_M_S * 1.3e9 < needed < 100.0
    fixed = with_value(high, "radar.time_window_s", needed * 1e-9)
    assert link_budget(fixed).warnings == ()


def test_coarse_spacing_names_the_spacing_needed(base: Scenario) -> None:
    coarse = with_value(base, "survey.trace_spacing_m", 5.0)
    lb = link_budget(coarse)
    assert not lb.likely_visible and len(lb.warnings) == 1
    text = lb.warnings[0]
    assert "trace spacing (500.0 cm) is coarser than the hyperbola of ski tourer needs" in text
    # quarter wavelength in snow of eps' 1.6 at 800 MHz is 7.41 cm (REFERENCES 7.9 table);
    # the densest layer here is 350 kg/m3, eps' about 1.6 (REFERENCES 1.2)
    needed = _number(text, "cm or less")
    assert 6.9 <= needed <= 7.6
    assert link_budget(with_value(base, "survey.trace_spacing_m", needed / 100)).warnings == ()


def test_person_off_the_line_says_how_far(base: Scenario) -> None:
    off = with_value(base, "persons[0].offset_m", 5.0)
    lb = link_budget(off)
    assert lb.echo_to_noise_db > lb.threshold_db  # the budget alone would call it
    assert not lb.likely_visible and len(lb.warnings) == 1
    text = lb.warnings[0]
    assert text.startswith("Ski tourer lies ") and "to the side of the survey line" in text
    # the body (1.75 m x 0.45 m) reaches at most 0.9 m from its centre: its nearest point
    # is at least 4.1 m off; the beam (60 deg, 0.5 m up) reaches well under 2 m at 0.6 m
    assert _number(text, "m to the side") >= 4.0
    assert "move the line" in text
    assert link_budget(with_value(base, "persons[0].offset_m", 0.3)).warnings == ()


def test_detection_level_not_met_overrules(base: Scenario) -> None:
    lb = link_budget(base, threshold_db=60.0)  # the clutter sits about 51 dB below the echo
    assert not lb.likely_visible
    assert lb.warnings[-1].endswith("below the detection level of 60 dB.")
    assert link_budget(base, threshold_db=30.0).likely_visible


def test_every_condition_is_named_when_several_apply(base: Scenario) -> None:
    bad = dataclasses.replace(
        # 10 m up a 60 deg beam covers 5.8 m to each side: narrow it to 20 deg (1.8 m)
        base, radar=dataclasses.replace(base.radar, antenna_height_m=10.0, beamwidth_deg=20.0),
        survey=dataclasses.replace(base.survey, trace_spacing_m=5.0),
        persons=(dataclasses.replace(base.persons[0], offset_m=5.0),))
    lb = link_budget(bad, threshold_db=60.0)
    words = ["time window", "trace spacing", "to the side", "detection level"]
    assert len(lb.warnings) == 4
    for w, text in zip(words, lb.warnings, strict=True):
        assert w in text
    assert all(w in lb.verdict for w in lb.warnings)


def test_link_budgets_one_per_person_in_order() -> None:
    s = Scenario.example("two_burials")
    budgets = sw.link_budgets(s)
    assert [b.target_depth_m for b in budgets] == [p.depth_m for p in s.persons]
    assert [b.target_label for b in budgets] == ["person 1", "person 2"]
    assert sw.link_budgets(Scenario.example("debris_no_burial")) == ()
    with pytest.raises(ValueError, match="must be a Scenario"):
        sw.link_budgets("two_burials")
