"""Processing controls, built from the step registry: each step on or off, with its
parameters in display units.

Every registered step (:data:`snowprobe_widgets.processing.STEPS`, plugins included) gets
a switch, and every parameter it declares (:func:`snowprobe_widgets.processing.step_parameters`,
the fields group ``"step:<name>"``) a control built from that declaration by
:func:`~snowprobe_widgets.widgets._common.field_control`: label, display unit, range, step
and tooltip. Ranges that follow the record (a band edge under the Nyquist frequency, a
window inside the record) follow the scenario (:meth:`ProcessingPanel.follow`). The panel
builds a :class:`~snowprobe_widgets.processing.ProcessingChain`; it runs nothing itself.
"""

from __future__ import annotations

import inspect
from collections.abc import Callable
from typing import Any

import ipywidgets as widgets

from snowprobe_widgets.fields import Field
from snowprobe_widgets.processing import (
    STEPS,
    ProcessingChain,
    ProcessingStep,
    step_defaults,
    step_group,
    step_parameters,
)
from snowprobe_widgets.processing.amplitude import KIND_PARAMS
from snowprobe_widgets.widgets._common import (
    field_control,
    section_title,
    set_limits,
    set_visible,
)

#: CSS class of each step's on/off switch (layout tests find them).
SWITCH_CLASS: str = "sp-step-switch"

#: Built-in steps in the order they run, with the plain words shown beside their switch;
#: other registered steps (plugins) follow, titled from their docstring's first line.
STEP_TITLES: dict[str, str] = {
    "time_zero": "time-zero: move the surface echo to a set time",
    "dewow": "dewow: remove the slow drift",
    "background_removal": "background removal: subtract the average trace",
    "gain": "gain: lift late, weak echoes",
    "bandpass": "band-pass: keep the radar's band",
    "migrate": "migration: collapse hyperbolas to points",
    "envelope": "envelope: show echo strength only",
}

#: Declared parameters without a control: left to scripts (the step's own choice on
#: screen) or, for migration's surface time, set by the panel from time-zero.
OFF_SCREEN: dict[str, tuple[str, ...]] = {
    "time_zero": ("pick_time_s", "per_trace"),
    "background_removal": ("window_traces",),
    "gain": ("velocity_m_s", "start_s"),
    "migrate": ("aperture_m", "surface_time_s"),
}

#: Steps whose parameters depend on a choice: (the choice parameter, the parameters and
#: their defaults for each value of it).
CHOICE_PARAMETERS: dict[str, tuple[str, dict[str, dict[str, Any]]]] = {
    "gain": ("kind", KIND_PARAMS),
}


#: Starting values (SI) of parameters whose step has no default for them.
STARTING_VALUES: dict[tuple[str, str], Any] = {
    ("migrate", "velocity_m_s"): 0.23e9,  # dry snow (common practice)
}


def step_names() -> tuple[str, ...]:
    """Registered steps in panel order: the built-ins as they run, then the others."""
    return (tuple(n for n in STEP_TITLES if n in STEPS)
            + tuple(n for n in STEPS.names() if n not in STEP_TITLES))


def step_title(name: str) -> str:
    """The words beside a step's switch (a plugin's: its docstring's first line)."""
    if name in STEP_TITLES:
        return STEP_TITLES[name]
    doc = (inspect.getdoc(STEPS.get(name)) or "").strip().splitlines()
    return f"{name}: {doc[0].rstrip('.')}" if doc else name


def _starting_values(name: str) -> dict[str, Any]:
    """A step's defaults, with the defaults of each choice where the signature has None."""
    values = {k: v for k, v in step_defaults(name).items() if v is not None}
    values.update({k: v for (step, k), v in STARTING_VALUES.items() if step == name})
    for table in CHOICE_PARAMETERS.get(name, ("", {}))[1].values():
        for k, v in table.items():
            values.setdefault(k, v)
    return values


class ProcessingPanel(widgets.VBox):
    """Switches and parameters of the processing chain, one of each per registered step.

    Parameters
    ----------
    center_frequency_hz : float
        Starting values follow ``ProcessingChain.default(center_frequency_hz)``; migration
        and envelope start switched off.
    scenario : Scenario, optional
        Ranges that follow the record start from this scenario's radar (see
        :meth:`follow`); without one they span the declarations' hard bounds.

    Attributes
    ----------
    switches : dict
        Step name -> its on/off checkbox.
    params : dict
        Step name -> {parameter name: (its declaration, its control)}.
    """

    def __init__(self, center_frequency_hz: float = 800e6, *, scenario: Any = None,
                 **kwargs: Any) -> None:
        self._callbacks: list[Callable[[], None]] = []
        self._quiet = 0
        names = step_names()
        self.switches = {name: widgets.Checkbox(value=False, indent=False,
                                                description=step_title(name),
                                                layout=widgets.Layout(width="100%"))
                         for name in names}
        for switch in self.switches.values():
            switch.add_class(SWITCH_CLASS)
        self.params: dict[str, dict[str, tuple[Field, widgets.Widget]]] = {}
        for name in names:
            start = _starting_values(name)
            hidden = OFF_SCREEN.get(name, ())
            self.params[name] = {p: (f, field_control(f, start.get(p)))
                                 for p, f in step_parameters(name).items() if p not in hidden}
        rows: list[widgets.Widget] = [section_title("Processing, in the order it runs")]
        for name, switch in self.switches.items():
            box = widgets.VBox([c for _f, c in self.params[name].values()],
                               layout=widgets.Layout(margin="0 0 0 16px"))
            rows += [switch, box]
        super().__init__(children=rows, **kwargs)
        for control in [*self.switches.values(), *self._controls()]:
            control.observe(self._fire, names="value")
        for name, (choice, _table) in CHOICE_PARAMETERS.items():
            if choice in self.params.get(name, {}):
                self.control(name, choice).observe(lambda _: self._sync_choices(),
                                                   names="value")
        if scenario is not None:
            self.follow(scenario)
        self.show(ProcessingChain.default(center_frequency_hz))

    def _controls(self) -> list[widgets.Widget]:
        return [c for controls in self.params.values() for _f, c in controls.values()]

    def control(self, step: str, name: str) -> widgets.Widget:
        """The control of parameter ``name`` of ``step``."""
        return self.params[step][name][1]

    def on_change(self, callback: Callable[[], None]) -> None:
        """Call ``callback()`` after every user edit."""
        self._callbacks.append(callback)

    def _fire(self, change: Any = None) -> None:
        if not self._quiet:
            for cb in self._callbacks:
                cb()

    def follow(self, scenario: Any) -> None:
        """Set the ranges that follow the record to what ``scenario``'s radar records
        (each declaration's soft bounds; a value outside is kept, the range widened)."""
        self._quiet += 1
        try:
            for controls in self.params.values():
                for f, c in controls.values():
                    if callable(f.soft) and f.kind != "integer":
                        lo, hi = f.soft_bounds(scenario, None)
                        set_limits(c, f, lo, hi)
        finally:
            self._quiet -= 1

    def follow_antenna_height(self, antenna_height_m: float) -> None:
        """Migrate through an air gap of ``antenna_height_m`` (set without firing)."""
        self._quiet += 1
        try:
            self.control("migrate", "antenna_height_m").value = float(antenna_height_m)
        finally:
            self._quiet -= 1

    def _applies(self, step: str, name: str) -> bool:
        if step not in CHOICE_PARAMETERS:
            return True
        choice, table = CHOICE_PARAMETERS[step]
        return name == choice or name in table.get(self.control(step, choice).value, {})

    def _sync_choices(self) -> None:
        for step in CHOICE_PARAMETERS:
            for name, (_f, c) in self.params.get(step, {}).items():
                set_visible(c, self._applies(step, name))

    def show(self, chain: ProcessingChain) -> None:
        """Set the switches and parameters from ``chain`` (without firing)."""
        self._quiet += 1
        try:
            for switch in self.switches.values():
                switch.value = False
            for step in chain.steps:
                if step.name not in self.switches:
                    continue
                self.switches[step.name].value = step.enabled
                for name, value in step.params:
                    if value is not None and name in self.params[step.name]:
                        _put(*self.params[step.name][name], value)
        finally:
            self._quiet -= 1
        self._sync_choices()

    def chain(self) -> ProcessingChain:
        """The chain the controls describe (switched-off steps kept, disabled)."""
        steps = []
        for step, switch in self.switches.items():
            params = {name: _si_value(f, c.value) for name, (f, c) in self.params[step].items()
                      if self._applies(step, name)}
            if step == "migrate":
                # the surface echo sits where time-zero put it, else where the height puts it
                target, control = self.params["time_zero"]["target_time_s"]
                params["surface_time_s"] = (_si_value(target, control.value)
                                            if self.switches["time_zero"].value else None)
            steps.append(ProcessingStep(step, tuple(params.items()), bool(switch.value)))
        return ProcessingChain(tuple(steps))


def _put(f: Field, control: widgets.Widget, value_si: Any) -> None:
    """Show an SI value in a control, widening a slider's range to hold it."""
    if f.kind in ("number", "optional number", "integer"):
        shown = f.to_display(value_si)
        if f.kind == "integer":
            shown = int(shown)
        if hasattr(control, "min") and shown < control.min:
            control.min = shown
        if hasattr(control, "max") and shown > control.max:
            control.max = shown
        control.value = shown
    else:
        control.value = value_si


def _si_value(f: Field, shown: Any) -> Any:
    if f.kind == "integer":
        return int(round(f.to_si(shown)))
    if f.kind in ("number", "optional number"):
        return float(f.to_si(shown))
    return shown


__all__ = ["STEP_TITLES", "SWITCH_CLASS", "OFF_SCREEN", "CHOICE_PARAMETERS",
           "ProcessingPanel", "step_group", "step_names", "step_title"]
