"""Every panel control that edits a scenario field is built from that field's declaration."""

from __future__ import annotations

import math

import ipywidgets as widgets
import pytest

from snowprobe_widgets import fields
from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.widgets import ScenarioExplorer

#: Controls of the panels that pick or switch rather than hold a scenario field.
_NOT_FIELDS = {"layer_choice", "choice", "own_bandwidth"}
_VALUE_CONTROLS = (widgets.FloatSlider, widgets.FloatLogSlider, widgets.IntSlider,
                   widgets.BoundedIntText, widgets.Dropdown, widgets.Checkbox, widgets.Text)


@pytest.fixture(scope="module")
def app() -> ScenarioExplorer:
    return ScenarioExplorer(Scenario.example("crust_and_ski"))


def _attrs(panel: widgets.Widget) -> dict[str, widgets.Widget]:
    return {k: v for k, v in vars(panel).items() if isinstance(v, _VALUE_CONTROLS)}


def test_every_panel_control_comes_from_a_declaration(app: ScenarioExplorer) -> None:
    walked = 0
    for panel in (app.person, app.snowpack, app.debris, app.radar):
        for attr, control in _attrs(panel).items():
            if attr in _NOT_FIELDS:
                continue
            f = panel.declared[attr]  # KeyError: a control built by hand
            assert isinstance(f, fields.Field)
            assert fields.declaration(f.group, f.name) is f
            if isinstance(control, widgets.Checkbox):
                assert control.tooltip == f.help
                continue
            assert control.description == f.title
            assert control.tooltip == f.help
            if isinstance(control, (widgets.FloatSlider, widgets.IntSlider,
                                    widgets.BoundedIntText)):
                lo, hi = control.min, control.max
            elif isinstance(control, widgets.FloatLogSlider):
                lo, hi = 10 ** control.min, 10 ** control.max
            else:
                allowed = set(f.allowed()) if f.kind == "choice" else None
                if allowed is not None:
                    assert {v for _label, v in control.options} == allowed
                continue
            # the slider spans part of the declared hard range, in display units
            tol = 1e-9 * max(1.0, abs(hi))
            assert f.to_display(f.low) - tol <= lo and hi <= f.to_display(f.high) + tol, attr
            if isinstance(control, widgets.FloatSlider):
                assert control.step == pytest.approx(f.step)
            walked += 1
    assert walked >= 25


def test_slider_ranges_follow_the_scenario(app: ScenarioExplorer) -> None:
    s = app.scenario
    person = s.persons[0]
    assert app.person.depth.max == pytest.approx(s.snowpack.depth_m - person.body_thickness_m)
    assert (app.person.position.min, app.person.position.max) == (s.survey.start_m,
                                                                  s.survey.end_m)
    nyquist_ps = fields.declaration("radar", "dt_s").soft_bounds(s)[1] * 1e12
    assert 10 ** app.radar.dt.max == pytest.approx(nyquist_ps, rel=1e-9)
    f_max = fields.declaration("radar", "center_frequency_hz").soft_bounds(s)[1]
    assert 10 ** app.radar.frequency.max == pytest.approx(f_max / 1e6, rel=1e-9)
    # every depth the slider offers is accepted by the model
    for depth in (app.person.depth.min, app.person.depth.max):
        fields.with_value(s, "persons[0].depth_m", depth)
    # a thicker snowpack widens the depth slider
    app.snowpack.layer_choice.value = len(s.snowpack.layers) - 1
    app.snowpack.thickness.value = app.snowpack.thickness.value + 1.0
    assert app.person.depth.max == pytest.approx(app.scenario.snowpack.depth_m
                                                 - person.body_thickness_m)
    assert not math.isclose(app.person.depth.max, s.snowpack.depth_m - 0.25)
