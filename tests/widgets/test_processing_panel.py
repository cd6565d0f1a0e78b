"""The Processing panel is built from the STEPS registry and the steps' declarations.

One walk over every registered step: each control of the panel is the control of a
declared parameter (label, unit, tooltip, range inside the declaration), every declared
parameter is on screen or listed as off-screen, and the validators agree with the panel:
the ends of each slider run through the step on a record of the scenario, a value past a
bound the record sets (Nyquist, the record's length) or past a hard bound is refused, in
the screen's words (the parameter's label).
"""

from __future__ import annotations

import ipywidgets as widgets
import numpy as np
import pytest

from snowprobe_widgets import fields
from snowprobe_widgets.processing import (
    STEPS,
    ProcessingChain,
    ProcessingStep,
    step_defaults,
    step_parameters,
)
from snowprobe_widgets.radargram import Radargram
from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.widgets.processing_panel import (
    CHOICE_PARAMETERS,
    OFF_SCREEN,
    ProcessingPanel,
)


@pytest.fixture(scope="module")
def scenario() -> Scenario:
    return Scenario.example("crust_and_ski")


@pytest.fixture(scope="module")
def panel(scenario: Scenario) -> ProcessingPanel:
    return ProcessingPanel(scenario.radar.center_frequency_hz, scenario=scenario)


@pytest.fixture(scope="module")
def record(scenario: Scenario) -> Radargram:
    radar = scenario.radar
    x = np.linspace(0.0, 4.0, 21)
    data = np.random.default_rng(3).standard_normal((radar.n_samples, x.size))
    return Radargram(data, radar.time_s, x)


def _step_box(panel: ProcessingPanel, name: str) -> widgets.VBox:
    children = list(panel.children)
    return children[children.index(panel.switches[name]) + 1]


def _kind_for(name: str, param: str) -> dict[str, object]:
    """The choice that makes ``param`` apply (gain's kind), as extra parameters."""
    if name not in CHOICE_PARAMETERS:
        return {}
    choice, table = CHOICE_PARAMETERS[name]
    if param == choice:
        return {}
    return {choice: next(k for k, ps in table.items() if param in ps)}


def _run(name: str, rg: Radargram, **params: object) -> Radargram:
    func = STEPS.get(name)
    needed = {k: v for k, v in step_defaults(name).items()}
    if name == "bandpass":
        needed.setdefault("low_hz", 100e6)
        needed.setdefault("high_hz", 2e9)
    if name == "migrate":
        needed.setdefault("velocity_m_s", 0.23e9)
    if name == "gain":
        needed = {"kind": needed["kind"]}
    return func(rg, **{**needed, **params})


def test_every_registered_step_is_on_screen_from_its_declarations(panel) -> None:
    walked = 0
    assert set(panel.switches) == set(STEPS.names())
    for name in STEPS.names():
        declared = step_parameters(name)
        on_screen = panel.params[name]
        # every declared parameter has a control or is listed as off-screen, no other
        assert set(on_screen) | set(OFF_SCREEN.get(name, ())) == set(declared)
        assert not set(on_screen) & set(OFF_SCREEN.get(name, ()))
        assert list(_step_box(panel, name).children) == [c for _f, c in on_screen.values()]
        for pname, (f, control) in on_screen.items():
            assert f is fields.declaration(f"step:{name}", pname)
            assert control.tooltip == f.help
            if isinstance(control, widgets.Checkbox):
                assert control.description == f.label
                continue
            assert control.description == f.title
            if isinstance(control, widgets.Dropdown):
                assert [v for _label, v in control.options] == list(f.allowed())
                continue
            lo, hi = f.to_display(f.low), f.to_display(f.high)
            assert lo <= control.min and control.max <= hi, (name, pname)
            walked += 1
    assert walked >= 10


def test_the_panel_ranges_follow_the_record_and_the_step_agrees(panel, scenario,
                                                                 record) -> None:
    checked = 0
    for name, controls in panel.params.items():
        for pname, (f, control) in controls.items():
            if f.kind not in ("number", "optional number", "integer"):
                continue
            extra = _kind_for(name, pname)
            if name == "bandpass":  # the other edge stays on its side
                extra = {"low_hz": 1e6} if pname == "high_hz" else {"high_hz": 0.9 * (
                    0.5 / record.dt_s)}
            if callable(f.soft):
                s_lo, s_hi = f.soft_bounds(scenario, None)
                # the slider spans what this record allows (display units)
                assert control.min == pytest.approx(f.to_display(s_lo), rel=1e-9, abs=1e-9)
                assert control.max == pytest.approx(f.to_display(s_hi), rel=1e-9)
            for end in (control.min, control.max):
                value = f.to_si(end)
                open_end = (end == control.min and f.low_open and f.to_si(end) <= f.low) or (
                    end == control.max and callable(f.soft) and f.high_open)
                if open_end:
                    continue
                if f.kind == "integer":
                    value = int(value)
                out = _run(name, record, **{**extra, pname: value})
                assert np.all(np.isfinite(out.data)), (name, pname, end)
                checked += 1
            # past the top of the range: the step (a record bound) or the chain (a hard
            # bound) refuses it, naming the control's label
            beyond = f.to_si(control.max) * 1.5 + (1 if f.kind == "integer" else 0)
            if f.kind == "integer":
                beyond = int(beyond)
            if callable(f.soft):
                with pytest.raises(fields.FieldError) as err:
                    _run(name, record, **{**extra, pname: beyond})
            else:
                beyond = f.high * 1.5 if f.high > 0 else f.high + 1.0
                if f.kind == "integer":
                    beyond = int(beyond) + 1
                with pytest.raises(fields.FieldError) as err:
                    ProcessingStep(name, {**extra, pname: beyond})
            assert f.label in err.value.screen, err.value.screen
    assert checked >= 20


def test_the_panel_chain_is_accepted_and_shown_back(panel, scenario) -> None:
    chain = ProcessingChain.for_radar(scenario.radar)
    panel.show(chain)
    again = panel.chain()
    for step in chain.steps:
        mine = next(s for s in again.steps if s.name == step.name)
        assert mine.enabled == step.enabled
        for k, v in step.params:
            got = dict(mine.params)[k]
            assert got == (pytest.approx(v, rel=1e-6) if isinstance(v, float) else v), (
                step.name, k)


def test_a_refusal_by_the_step_speaks_the_screen_words(record) -> None:
    nyquist = 0.5 / record.dt_s
    with pytest.raises(fields.FieldError) as err:
        STEPS.get("bandpass")(record, low_hz=100e6, high_hz=1.2 * nyquist)
    assert "high_hz" in str(err.value)  # the technical message names the argument
    assert err.value.screen.startswith("High edge")
    assert "MHz" in err.value.screen and "e+" not in err.value.screen
    with pytest.raises(fields.FieldError) as err:
        STEPS.get("dewow")(record, window_s=2.0 * record.time_s[-1])
    assert err.value.screen.startswith("Window") and "ns" in err.value.screen


def test_a_refused_processing_setting_returns_to_the_chain_on_screen() -> None:
    from snowprobe_widgets.widgets import ScenarioExplorer
    from snowprobe_widgets.widgets._common import message_text

    app = ScenarioExplorer(Scenario.example("crust_and_ski"))
    high = app.processing.control("bandpass", "high_hz")
    before, draws = high.value, app.radargram_view.draws
    high.value = high.max  # the Nyquist frequency itself: the band must stay under it
    text = message_text(app.message)
    assert text.startswith("High edge") and "MHz" in text, text
    assert high.value == before and app.radargram_view.draws == draws
    assert dict(dict((s.name, s.params) for s in app.chain.steps)["bandpass"])[
        "high_hz"] == pytest.approx(high.value * 1e6)
