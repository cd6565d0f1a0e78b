"""The explorer's 2-D full-wave check (headless): runs, drives its progress bar, says what
it approximates, and refuses what it cannot model with a message instead of a traceback."""

from __future__ import annotations

import dataclasses

import pytest

from snowprobe_widgets.scene import MetalPlate, Scenario
from snowprobe_widgets.widgets.explorer import ScenarioExplorer


@pytest.fixture(scope="module")
def app() -> ScenarioExplorer:
    return ScenarioExplorer()


def test_2d_check_runs_at_the_picked_trace_and_reports_agreement(app) -> None:
    s = Scenario.default()
    app.scenario = dataclasses.replace(s, radar=dataclasses.replace(s.radar,
                                                                   time_window_s=25.6e-9))
    app.radargram_view.pick_position(5.2)
    seen: list[float] = []
    app.trace_view.progress2d.observe(lambda c: seen.append(c["new"]), names="value")
    ncc = app.run_fdtd2d()
    assert ncc is not None
    # the person is a conductor stand-in of the same top and polarity: the shapes agree
    # (measured 0.93 on the demo scenarios) though a body is not a cylinder
    assert ncc > 0.7
    assert len(seen) > 10 and seen[-1] == 1.0
    text = app.trace_view.agreement.value
    assert f"{ncc:.3f}" in text and "perfectly conducting cylinder" in text
    assert "2-D FDTD" in app.trace_view.reference.labels[0]
    assert app.trace_view.reference.visible
    assert app.trace_view.message.value == ""
    # it holds for one position and one scenario: moving the pick or the person clears it
    app.radargram_view.pick_position(4.0)
    assert not app.trace_view.reference.visible
    assert app.run_fdtd2d() is not None
    app.person.depth.value = 0.7
    assert not app.trace_view.reference.visible


def test_2d_check_refuses_without_a_stand_in(app) -> None:
    s = Scenario.default()
    app.scenario = dataclasses.replace(
        s, persons=(), objects=(MetalPlate(5.0, 0.5, 0.3, 0.2),))
    assert app.run_fdtd2d() is None
    assert "no cylinder stand-in" in app.trace_view.message.value
    app.scenario = dataclasses.replace(s, persons=())
    assert app.run_fdtd2d() is None
    assert "has none" in app.trace_view.message.value
