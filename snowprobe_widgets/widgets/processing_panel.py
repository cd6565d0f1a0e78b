"""Processing controls: each step on or off, with its parameters in display units.

The panel builds a :class:`~snowprobe_widgets.processing.ProcessingChain`; it runs
nothing itself.
"""

from __future__ import annotations

import inspect
from collections.abc import Callable
from typing import Any

import ipywidgets as widgets

from snowprobe_widgets.fields import FIELDS, Field
from snowprobe_widgets.processing import (
    BACKGROUND_METHODS,
    GAIN_KINDS,
    MIGRATION_METHODS,
    STEPS,
    ProcessingChain,
    ProcessingStep,
)
from snowprobe_widgets.widgets._common import (
    dropdown,
    field_control,
    float_slider,
    int_slider,
    section_title,
    set_visible,
)

_NS, _MHZ = 1e-9, 1e6
#: CSS class of each step's on/off switch (layout tests find them).
SWITCH_CLASS: str = "sp-step-switch"

#: Steps in the order they run, with the plain words shown beside their switch.
STEP_TITLES: dict[str, str] = {
    "time_zero": "time-zero: move the surface echo to a set time",
    "dewow": "dewow: remove the slow drift",
    "background_removal": "background removal: subtract the average trace",
    "gain": "gain: lift late, weak echoes",
    "bandpass": "band-pass: keep the radar's band",
    "migrate": "migration: collapse hyperbolas to points",
    "envelope": "envelope: show echo strength only",
}


class ProcessingPanel(widgets.VBox):
    """Switches and parameters of the processing chain.

    Parameters
    ----------
    center_frequency_hz : float
        Starting values follow ``ProcessingChain.default(center_frequency_hz)``; migration
        and envelope start switched off.
    """

    def __init__(self, center_frequency_hz: float = 800e6, **kwargs: Any) -> None:
        self._callbacks: list[Callable[[], None]] = []
        self._quiet = 0
        # built-in steps with their own controls, then every other registered step (a
        # plugin's) with controls built from its parameter declarations
        self.plugin_params = _plugin_steps()
        titles = {**STEP_TITLES, **{name: _plugin_title(name) for name in self.plugin_params}}
        self.switches = {name: widgets.Checkbox(value=False, indent=False, description=title,
                                                layout=widgets.Layout(width="100%"))
                         for name, title in titles.items()}
        for switch in self.switches.values():
            switch.add_class(SWITCH_CLASS)
        self.tz_target = float_slider("target time (ns)", 0.0, 0.0, 50.0, 0.1)
        self.tz_threshold = float_slider("pick level (-)", 0.5, 0.05, 1.0, 0.05)
        self.dewow_window = float_slider("window (ns)", 5.0, 0.2, 50.0, 0.1)
        self.bg_method = dropdown("statistic", list(BACKGROUND_METHODS), "mean")
        self.gain_kind = dropdown("kind", list(GAIN_KINDS), "spreading")
        self.gain_power = float_slider("power of time (-)", 1.0, 0.0, 4.0, 0.1)
        self.gain_atten = float_slider("attenuation (dB/m)", 1.0, 0.0, 100.0, 0.5)
        self.gain_max = float_slider("largest gain (dB)", 40.0, 0.0, 200.0, 1.0,
                                     readout_format=".0f")
        self.gain_window = float_slider("AGC window (ns)", 5.0, 0.2, 50.0, 0.1)
        self.bp_low = float_slider("low edge (MHz)", 200.0, 1.0, 5000.0, 10.0,
                                   readout_format=".0f")
        self.bp_high = float_slider("high edge (MHz)", 2000.0, 10.0, 10000.0, 10.0,
                                    readout_format=".0f")
        self.bp_order = int_slider("filter order", 4, 1, 10)
        self.mig_velocity = float_slider("velocity (m/ns)", 0.23, 0.03, 0.2998, 0.005,
                                         readout_format=".3f")
        self.mig_method = dropdown("method", list(MIGRATION_METHODS), MIGRATION_METHODS[0])
        # migration goes through the air gap: it follows the radar's antenna height
        self.mig_height = float_slider("antenna height (m)", 0.5, 0.0, 30.0, 0.05)
        self._params = {
            "time_zero": (self.tz_target, self.tz_threshold),
            "dewow": (self.dewow_window,),
            "background_removal": (self.bg_method,),
            "gain": (self.gain_kind, self.gain_power, self.gain_atten, self.gain_max,
                     self.gain_window),
            "bandpass": (self.bp_low, self.bp_high, self.bp_order),
            "migrate": (self.mig_velocity, self.mig_method, self.mig_height),
            "envelope": (),
            **{name: tuple(c for _f, c in controls.values())
               for name, controls in self.plugin_params.items()},
        }
        rows: list[widgets.Widget] = [section_title("Processing, in the order it runs")]
        for name, switch in self.switches.items():
            box = widgets.VBox(list(self._params[name]),
                               layout=widgets.Layout(margin="0 0 0 16px"))
            rows += [switch, box]
        super().__init__(children=rows, **kwargs)
        for control in [*self.switches.values(),
                        *(c for cs in self._params.values() for c in cs)]:
            control.observe(self._fire, names="value")
        self.gain_kind.observe(lambda _: self._sync_gain(), names="value")
        self.show(ProcessingChain.default(center_frequency_hz))

    def on_change(self, callback: Callable[[], None]) -> None:
        """Call ``callback()`` after every user edit."""
        self._callbacks.append(callback)

    def _fire(self, change: Any = None) -> None:
        if not self._quiet:
            for cb in self._callbacks:
                cb()

    def follow_antenna_height(self, antenna_height_m: float) -> None:
        """Migrate through an air gap of ``antenna_height_m`` (set without firing)."""
        self._quiet += 1
        try:
            self.mig_height.value = float(antenna_height_m)
        finally:
            self._quiet -= 1

    def _sync_gain(self) -> None:
        kind = self.gain_kind.value
        shown = {"spreading": (self.gain_power, self.gain_max),
                 "exponential": (self.gain_atten, self.gain_max),
                 "agc": (self.gain_window,)}.get(kind, ())
        for c in (self.gain_power, self.gain_atten, self.gain_max, self.gain_window):
            set_visible(c, c in shown)

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
                self._show_params(step.name, dict(step.params))
        finally:
            self._quiet -= 1
        self._sync_gain()

    def _show_params(self, name: str, p: dict[str, Any]) -> None:
        def put(control: widgets.Widget, value: Any) -> None:
            if value is None:
                return
            if hasattr(control, "min") and value < control.min:
                control.min = value
            if hasattr(control, "max") and value > control.max:
                control.max = value
            control.value = value

        if name == "time_zero":
            put(self.tz_target, p.get("target_time_s", 0.0) / _NS)
            put(self.tz_threshold, p.get("threshold"))
        elif name == "dewow":
            put(self.dewow_window, p.get("window_s", 5e-9) / _NS)
        elif name == "background_removal":
            put(self.bg_method, p.get("method"))
        elif name == "gain":
            put(self.gain_kind, p.get("kind"))
            put(self.gain_power, p.get("power"))
            put(self.gain_atten, p.get("attenuation_db_m"))
            put(self.gain_max, p.get("max_gain_db"))
            if p.get("window_s") is not None:
                put(self.gain_window, p["window_s"] / _NS)
        elif name == "bandpass":
            put(self.bp_low, p.get("low_hz", 200e6) / _MHZ)
            put(self.bp_high, p.get("high_hz", 2e9) / _MHZ)
            put(self.bp_order, p.get("order"))
        elif name == "migrate":
            if p.get("velocity_m_s") is not None:
                put(self.mig_velocity, p["velocity_m_s"] / 1e9)
            put(self.mig_method, p.get("method"))
            put(self.mig_height, p.get("antenna_height_m"))

    def chain(self) -> ProcessingChain:
        """The chain the controls describe (switched-off steps kept, disabled)."""
        kind = self.gain_kind.value
        gain: dict[str, Any] = {"kind": kind}
        if kind == "spreading":
            gain.update(power=self.gain_power.value, max_gain_db=self.gain_max.value)
        elif kind == "exponential":
            gain.update(attenuation_db_m=self.gain_atten.value, max_gain_db=self.gain_max.value)
        else:
            gain.update(window_s=self.gain_window.value * _NS)
        params: dict[str, dict[str, Any]] = {
            "time_zero": {"target_time_s": self.tz_target.value * _NS,
                          "threshold": self.tz_threshold.value},
            "dewow": {"window_s": self.dewow_window.value * _NS},
            "background_removal": {"method": self.bg_method.value},
            "gain": gain,
            "bandpass": {"low_hz": self.bp_low.value * _MHZ, "high_hz": self.bp_high.value * _MHZ,
                         "order": int(self.bp_order.value)},
            "migrate": {"velocity_m_s": self.mig_velocity.value * 1e9,
                        "method": self.mig_method.value,
                        "antenna_height_m": self.mig_height.value,
                        "surface_time_s": (self.tz_target.value * _NS
                                           if self.switches["time_zero"].value else None)},
            "envelope": {},
            **{name: {p: _si_value(f, c.value) for p, (f, c) in controls.items()}
               for name, controls in self.plugin_params.items()},
        }
        return ProcessingChain(tuple(
            ProcessingStep(name, tuple(params[name].items()), bool(switch.value))
            for name, switch in self.switches.items()))


def step_group(name: str) -> str:
    """The declarations group of a processing step's parameters: ``"step:<name>"``."""
    return f"step:{name}"


def _plugin_steps() -> dict[str, dict[str, tuple[Field, widgets.Widget]]]:
    """Each registered step without built-in controls, with a control per declared
    parameter (starting at the step function's default where it has one)."""
    out: dict[str, dict[str, tuple[Field, widgets.Widget]]] = {}
    for name in STEPS.names():
        if name in STEP_TITLES:
            continue
        defaults = {k: p.default for k, p in inspect.signature(STEPS.get(name)).parameters.items()
                    if p.default is not inspect.Parameter.empty}
        declared = FIELDS.get(step_group(name), {})
        out[name] = {pname: (f, field_control(f, defaults.get(pname)))
                     for pname, f in declared.items()}
    return out


def _plugin_title(name: str) -> str:
    doc = (inspect.getdoc(STEPS.get(name)) or "").strip().splitlines()
    return f"{name}: {doc[0].rstrip('.')}" if doc else name


def _si_value(f: Field, shown: Any) -> Any:
    if f.kind == "integer":
        return int(f.to_si(shown))
    if f.kind in ("number", "optional number"):
        return float(f.to_si(shown))
    return shown


__all__ = ["STEP_TITLES", "SWITCH_CLASS", "ProcessingPanel", "step_group"]
