"""Control panels that turn widget values into a new Scenario (no physics here).

Every panel has the same small protocol:

* ``show(scenario)`` writes the scenario's values into the panel's widgets (without
  firing its change callback);
* ``parts()`` returns the Scenario fields this panel owns, built from the widgets through
  the validating constructors (a refused value raises ``ValueError`` with the model's own
  message); the caller joins every panel's parts into one ``dataclasses.replace`` so the
  whole scenario is validated once, then calls ``commit()`` on success;
* ``on_change(callback)`` registers ``callback()``, called after any user edit.

Display units (cm, MHz, ns, ...) are converted to SI here and nowhere else.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any

import ipywidgets as widgets
import numpy as np

from snowprobe_widgets import pulses
from snowprobe_widgets.scene import (
    Boulder,
    Branch,
    Clutter,
    Ground,
    Layer,
    MetalPlate,
    Person,
    Radar,
    Scenario,
    Snowpack,
    Survey,
)
from snowprobe_widgets.scene_objects import GROUND_KINDS, POSTURES
from snowprobe_widgets.targets import kind_of
from snowprobe_widgets.widgets._common import (
    dropdown,
    float_slider,
    int_slider,
    log_slider,
    section_title,
    set_visible,
)

#: CSS class of the person depth slider (browser tests drive it).
PERSON_DEPTH_CLASS: str = "sp-person-depth"

_CM, _MHZ, _NS, _PS = 1e-2, 1e6, 1e-9, 1e-12
_BUTTON = widgets.Layout(width="auto")


class Panel(widgets.VBox):
    """Base of the control panels: change callbacks and a "do not fire" guard."""

    def __init__(self, children: list[widgets.Widget], **kwargs: Any) -> None:
        super().__init__(children=children, **kwargs)
        self._callbacks: list[Callable[[], None]] = []
        self._quiet = 0

    def on_change(self, callback: Callable[[], None]) -> None:
        """Call ``callback()`` after every user edit of this panel."""
        self._callbacks.append(callback)

    def _watch(self, *controls: widgets.Widget) -> None:
        for c in controls:
            c.observe(self._fire, names="value")

    def _fire(self, change: Any = None) -> None:
        if self._quiet:
            return
        for cb in self._callbacks:
            cb()

    def _set(self, control: widgets.Widget, value: Any) -> None:
        """Set a control without firing (values outside a slider's range widen it)."""
        self._quiet += 1
        try:
            if isinstance(control, (widgets.FloatSlider, widgets.IntSlider)):
                if value < control.min:
                    control.min = value
                if value > control.max:
                    control.max = value
            if isinstance(control, widgets.FloatLogSlider):
                lo, hi = 10 ** control.min, 10 ** control.max
                if not lo <= value <= hi:
                    control.min = float(np.log10(min(lo, value)))
                    control.max = float(np.log10(max(hi, value)))
            control.value = value
        finally:
            self._quiet -= 1

    def show(self, scenario: Scenario) -> None:  # pragma: no cover - overridden
        raise NotImplementedError

    def parts(self) -> dict[str, Any]:  # pragma: no cover - overridden
        raise NotImplementedError

    def commit(self) -> None:
        """Keep what the last :meth:`parts` built (called once the scenario was accepted)."""


def build_scenario(base: Scenario, panels: list[Panel]) -> Scenario:
    """``base`` with every panel's parts, validated once; commits the panels on success."""
    fields: dict[str, Any] = {}
    for p in panels:
        fields.update(p.parts())
    out = dataclasses.replace(base, **fields)
    for p in panels:
        p.commit()
    return out


def _button(text: str, tooltip: str = "") -> widgets.Button:
    return widgets.Button(description=text, tooltip=tooltip or text, layout=_BUTTON)


# --------------------------------------------------------------------------- snow
class SnowpackEditor(Panel):
    """Layers from the surface down (add, remove, reorder, edit), ice crusts, the ground."""

    def __init__(self) -> None:
        self._layers: list[Layer] = [Layer(1.0, 300.0)]
        self.layer_choice = dropdown("layer", [("1", 0)], 0)
        self.thickness = float_slider("thickness (m)", 0.5, 0.01, 5.0, 0.01)
        self.density = float_slider("density (kg/m3)", 300.0, 30.0, 917.0, 5.0,
                                    readout_format=".0f")
        self.lwc = float_slider("liquid water (%)", 0.0, 0.0, 12.0, 0.1, readout_format=".1f")
        self.crust = widgets.Checkbox(value=False, indent=False,
                                      description="ice crust (700-917 kg/m3, at most 0.3 m)")
        self.add_layer = _button("add layer below", "copy the chosen layer below it")
        self.remove_layer = _button("remove layer")
        self.move_up = _button("move up")
        self.move_down = _button("move down")
        self.add_crust = _button("add ice crust below", "a 2 cm, 850 kg/m3 crust")
        self.temperature = float_slider("snow temperature (degC)", -5.0, -50.0, 0.0, 0.5,
                                        readout_format=".1f")
        self.ground_kind = dropdown("ground", list(GROUND_KINDS), "soil")
        self.soil_water = float_slider("soil water (m3/m3)", 0.15, 0.0, 0.5, 0.01)
        self.rock_permittivity = float_slider("rock permittivity (-)", 6.0, 2.0, 40.0, 0.1,
                                              readout_format=".1f")
        self.rock_conductivity = float_slider("rock conductivity (mS/m)", 1.0, 0.0, 100.0, 0.1,
                                              readout_format=".1f")
        self.summary = widgets.HTML()
        super().__init__([
            section_title("Snow layers, surface first"), self.layer_choice,
            widgets.HBox([self.add_layer, self.remove_layer, self.move_up, self.move_down,
                          self.add_crust]),
            self.thickness, self.density, self.lwc, self.crust, self.summary,
            section_title("Snow and ground"), self.temperature, self.ground_kind,
            self.soil_water, self.rock_permittivity, self.rock_conductivity])
        self.layer_choice.observe(self._on_pick, names="value")
        self._watch(self.thickness, self.density, self.lwc, self.crust, self.temperature,
                    self.ground_kind, self.soil_water, self.rock_permittivity,
                    self.rock_conductivity)
        self.ground_kind.observe(lambda _: self._sync_ground(), names="value")
        self.add_layer.on_click(lambda _: self._restructure("add"))
        self.remove_layer.on_click(lambda _: self._restructure("remove"))
        self.move_up.on_click(lambda _: self._restructure("up"))
        self.move_down.on_click(lambda _: self._restructure("down"))
        self.add_crust.on_click(lambda _: self._restructure("crust"))

    @property
    def layers(self) -> tuple[Layer, ...]:
        """The layers as the editor holds them now."""
        return tuple(self._layers)

    def show(self, scenario: Scenario) -> None:
        self._layers = list(scenario.snowpack.layers)
        self._set(self.temperature, float(scenario.snowpack.temperature_c))
        g = scenario.ground
        self._set(self.ground_kind, g.kind)
        self._set(self.soil_water, float(g.water_fraction))
        self._set(self.rock_permittivity, float(g.permittivity))
        self._set(self.rock_conductivity, float(g.conductivity_s_m * 1e3))
        self._sync_ground()
        self._refresh_choice(0)

    def parts(self) -> dict[str, Any]:
        ground = Ground(self.ground_kind.value, water_fraction=self.soil_water.value,
                        permittivity=self.rock_permittivity.value,
                        conductivity_s_m=self.rock_conductivity.value * 1e-3)
        layers = list(self._layers)
        i = int(self.layer_choice.value)
        layers[i] = Layer(self.thickness.value, self.density.value, self.lwc.value,
                          bool(self.crust.value))
        snow = Snowpack(tuple(layers), temperature_c=self.temperature.value)
        self._staged = (layers, i)
        return {"snowpack": snow, "ground": ground}

    def commit(self) -> None:
        staged = getattr(self, "_staged", None)
        if staged is None:
            return
        self._staged = None
        layers, i = staged
        changed = layers != self._layers
        self._layers = layers
        if changed:
            self._refresh_choice(i)

    def _sync_ground(self) -> None:
        soil = self.ground_kind.value == "soil"
        set_visible(self.soil_water, soil)
        for c in (self.rock_permittivity, self.rock_conductivity):
            set_visible(c, not soil)

    def _refresh_choice(self, index: int) -> None:
        index = int(np.clip(index, 0, len(self._layers) - 1))
        options = []
        for i, layer in enumerate(self._layers):
            tag = "ice crust, " if layer.ice_crust else ""
            options.append((f"{i + 1}: {tag}{layer.thickness_m:.2f} m, "
                            f"{layer.density_kg_m3:.0f} kg/m3, {layer.lwc_percent:.1f} % water",
                            i))
        self._quiet += 1
        try:
            self.layer_choice.options = options
            self.layer_choice.value = index
        finally:
            self._quiet -= 1
        self._show_layer(index)
        depth = sum(la.thickness_m for la in self._layers)
        self.summary.value = f"<small>{len(self._layers)} layer(s), {depth:.2f} m of snow</small>"
        self.remove_layer.disabled = len(self._layers) <= 1

    def _show_layer(self, index: int) -> None:
        layer = self._layers[index]
        self._set(self.thickness, float(layer.thickness_m))
        self._set(self.density, float(layer.density_kg_m3))
        self._set(self.lwc, float(layer.lwc_percent))
        self._set(self.crust, bool(layer.ice_crust))

    def _on_pick(self, change: Any) -> None:
        if self._quiet or change["new"] is None:
            return
        self._show_layer(int(change["new"]))

    def _restructure(self, action: str) -> None:
        i = int(self.layer_choice.value)
        layers = self._layers
        if action == "add":
            layers.insert(i + 1, layers[i])
            i += 1
        elif action == "remove" and len(layers) > 1:
            layers.pop(i)
            i = min(i, len(layers) - 1)
        elif action == "up" and i > 0:
            layers[i - 1], layers[i] = layers[i], layers[i - 1]
            i -= 1
        elif action == "down" and i < len(layers) - 1:
            layers[i + 1], layers[i] = layers[i], layers[i + 1]
            i += 1
        elif action == "crust":
            layers.insert(i + 1, Layer(0.02, 850.0, 0.0, ice_crust=True))
            i += 1
        self._refresh_choice(i)
        self._fire()


# --------------------------------------------------------------------------- person
class _ListPanel(Panel):
    """A panel editing one item of a list (people, debris objects) picked in a dropdown.

    Subclasses set ``self.choice``, ``self.remove``, ``self.position`` and
    ``self._item_controls``, and define :meth:`_label`, :meth:`_show_item` and
    ``_EMPTY`` (the dropdown text when the list is empty).
    """

    _EMPTY = "none"
    _items: list[Any]

    def _label(self, k: int, item: Any) -> str:  # pragma: no cover - overridden
        raise NotImplementedError

    def _show_item(self, item: Any) -> None:  # pragma: no cover - overridden
        raise NotImplementedError

    def _after_refresh(self, n: int) -> None:
        """Hook after the list was redrawn with ``n`` items."""

    def _show_list(self, items: Any, survey: Any) -> None:
        self._items = list(items)
        self._quiet += 1
        try:
            self.position.min, self.position.max = -1e4, 1e4
            self.position.min, self.position.max = survey.start_m - 5.0, survey.end_m + 5.0
        finally:
            self._quiet -= 1

    def _centre(self) -> float:
        return 0.5 * (self.position.min + self.position.max)

    def commit(self) -> None:
        if getattr(self, "_staged", None) is not None:
            self._items, self._staged = self._staged, None

    def _refresh(self, index: int) -> None:
        n = len(self._items)
        options = ([(self._label(k, item), k) for k, item in enumerate(self._items)]
                   or [(self._EMPTY, -1)])
        index = int(np.clip(index, 0, n - 1)) if n else -1
        self._quiet += 1
        try:
            self.choice.options = options
            self.choice.value = index
        finally:
            self._quiet -= 1
        for c in self._item_controls:
            c.disabled = n == 0
        self.remove.disabled = n == 0
        self._after_refresh(n)
        if n:
            self._show_item(self._items[index])

    def _on_pick(self, change: Any) -> None:
        if self._quiet or change["new"] is None or change["new"] < 0:
            return
        self._show_item(self._items[int(change["new"])])

    def _append(self, item: Any) -> None:
        self._items.append(item)
        self._refresh(len(self._items) - 1)
        self._fire()

    def _on_remove(self, _: Any) -> None:
        i = int(self.choice.value)
        if i < 0:
            return
        self._items.pop(i)
        self._refresh(i)
        self._fire()


class PersonPanel(_ListPanel):
    """The buried people: depth, position, offset, heading, posture, clothing."""

    _EMPTY = "nobody buried"

    def __init__(self) -> None:
        self._items: list[Person] = []
        self.choice = dropdown("person", [(self._EMPTY, -1)], -1)
        self.add = _button("add a person")
        self.remove = _button("remove this person")
        self.depth = float_slider("depth to top (m)", 1.0, 0.0, 10.0, 0.05,
                                  tooltip="snow surface to the top of the body")
        self.depth.add_class(PERSON_DEPTH_CLASS)
        self.position = float_slider("position along line (m)", 5.0, -5.0, 15.0, 0.05)
        self.offset = float_slider("offset from line (m)", 0.0, -5.0, 5.0, 0.05)
        self.heading = float_slider("heading to line (deg)", 0.0, -180.0, 180.0, 5.0,
                                    readout_format=".0f")
        self.posture = dropdown("posture", list(POSTURES), "lying_flat")
        self.clothing = float_slider("clothing (cm)", 1.0, 0.0, 10.0, 0.1, readout_format=".1f")
        self.height = float_slider("body height (m)", 1.75, 0.5, 2.3, 0.05)
        self.note = widgets.HTML()
        super().__init__([section_title("Buried people"), self.choice,
                          widgets.HBox([self.add, self.remove]), self.note, self.depth,
                          self.position, self.offset, self.heading, self.posture,
                          self.clothing, self.height])
        self._item_controls = (self.depth, self.position, self.offset, self.heading,
                               self.posture, self.clothing, self.height)
        self.choice.observe(self._on_pick, names="value")
        self._watch(*self._item_controls)
        self.add.on_click(lambda _: self._append(
            Person(self._centre(), 0.5, label=f"person {len(self._items) + 1}")))
        self.remove.on_click(self._on_remove)

    def show(self, scenario: Scenario) -> None:
        self._show_list(scenario.persons, scenario.survey)
        self._refresh(0)

    def parts(self) -> dict[str, Any]:
        persons = list(self._items)
        i = int(self.choice.value)
        if i >= 0:
            persons[i] = dataclasses.replace(
                persons[i], depth_m=self.depth.value, position_m=self.position.value,
                offset_m=self.offset.value, heading_deg=self.heading.value,
                posture=self.posture.value, clothing_m=self.clothing.value * _CM,
                height_m=self.height.value)
        self._staged = persons
        return {"persons": tuple(persons)}

    def _label(self, k: int, item: Person) -> str:
        return item.label or f"person {k + 1}"

    def _after_refresh(self, n: int) -> None:
        self.note.value = ("" if n else
                           "<small>Nobody is buried in this scenario: add a person.</small>")

    def _show_item(self, p: Person) -> None:
        self._set(self.depth, float(p.depth_m))
        self._set(self.position, float(p.position_m))
        self._set(self.offset, float(p.offset_m))
        self._set(self.heading, float(np.clip(p.heading_deg, -180.0, 180.0)))
        self._set(self.posture, p.posture)
        self._set(self.clothing, float(p.clothing_m / _CM))
        self._set(self.height, float(p.height_m))


# --------------------------------------------------------------------------- debris
class DebrisPanel(_ListPanel):
    """Boulders, branches and metal objects, and the random debris clutter."""

    _EMPTY = "no debris objects"

    def __init__(self) -> None:
        self._items: list[Any] = []
        self.choice = dropdown("object", [(self._EMPTY, -1)], -1)
        self.add_boulder = _button("add boulder")
        self.add_branch = _button("add branch")
        self.add_metal = _button("add metal object")
        self.remove = _button("remove object")
        self.position = float_slider("position along line (m)", 5.0, -5.0, 15.0, 0.05)
        self.depth = float_slider("depth to top (m)", 0.5, 0.0, 10.0, 0.05)
        self.offset = float_slider("offset from line (m)", 0.0, -5.0, 5.0, 0.05)
        self.size = float_slider("size (m)", 0.5, 0.01, 5.0, 0.01,
                                 tooltip="diameter of a boulder or branch, length of metal")
        self.heading = float_slider("heading to line (deg)", 0.0, -180.0, 180.0, 5.0,
                                    readout_format=".0f")
        self.density = float_slider("debris blocks (per m3)", 0.0, 0.0, 50.0, 0.5,
                                    readout_format=".1f")
        self.block_size = float_slider("block size (cm)", 10.0, 0.5, 100.0, 0.5,
                                       readout_format=".1f")
        self.thin_layers = int_slider("thin random layers", 0, 0, 50)
        self.contrast = float_slider("thin layer contrast (-)", 0.05, 0.0, 0.5, 0.01)
        self.seed = widgets.BoundedIntText(value=0, min=0, max=2**32 - 1,
                                           description="random seed",
                                           style={"description_width": "150px"})
        self._item_controls = (self.position, self.depth, self.offset, self.size,
                               self.heading)
        super().__init__([
            section_title("Debris objects"), self.choice,
            widgets.HBox([self.add_boulder, self.add_branch, self.add_metal, self.remove]),
            *self._item_controls,
            section_title("Debris clutter (seeded)"), self.density, self.block_size,
            self.thin_layers, self.contrast, self.seed])
        self.choice.observe(self._on_pick, names="value")
        self._watch(*self._item_controls, self.density, self.block_size, self.thin_layers,
                    self.contrast, self.seed)
        self.add_boulder.on_click(lambda _: self._append(Boulder(self._centre(), 0.5, 0.5)))
        self.add_branch.on_click(
            lambda _: self._append(Branch(self._centre(), 0.4, 0.1, 2.0)))
        self.add_metal.on_click(
            lambda _: self._append(MetalPlate(self._centre(), 0.3, 1.7, 0.09)))
        self.remove.on_click(self._on_remove)

    def show(self, scenario: Scenario) -> None:
        self._show_list(scenario.objects, scenario.survey)
        c = scenario.clutter
        self._set(self.density, float(c.scatterer_density_per_m3))
        self._set(self.block_size, float(c.scatterer_size_m / _CM))
        self._set(self.thin_layers, int(c.thin_layer_count))
        self._set(self.contrast, float(c.thin_layer_contrast))
        self._set(self.seed, int(c.seed))
        self._refresh(0)

    def parts(self) -> dict[str, Any]:
        objects = list(self._items)
        i = int(self.choice.value)
        if i >= 0:
            o = objects[i]
            changes: dict[str, Any] = dict(position_m=self.position.value,
                                           depth_m=self.depth.value, offset_m=self.offset.value)
            kind = kind_of(o)
            changes[kind.size_field] = self.size.value
            if kind.has_heading:
                changes["heading_deg"] = self.heading.value
            objects[i] = dataclasses.replace(o, **changes)
        clutter = Clutter(scatterer_density_per_m3=self.density.value,
                          scatterer_size_m=self.block_size.value * _CM,
                          thin_layer_count=self.thin_layers.value,
                          thin_layer_contrast=self.contrast.value, seed=int(self.seed.value))
        self._staged = objects
        return {"objects": tuple(objects), "clutter": clutter}

    def _label(self, k: int, item: Any) -> str:
        return f"{k + 1}: {kind_of(item).title}"

    def _show_item(self, o: Any) -> None:
        self._set(self.position, float(o.position_m))
        self._set(self.depth, float(o.depth_m))
        self._set(self.offset, float(o.offset_m))
        kind = kind_of(o)
        self._set(self.size, float(getattr(o, kind.size_field)))
        self._set(self.heading, float(np.clip(getattr(o, "heading_deg", 0.0), -180, 180)))
        self.heading.disabled = not kind.has_heading


# --------------------------------------------------------------------------- radar
_STACKING = tuple(2**k for k in range(17))
#: Radar.polarization values with their plain names.
_POLARIZATION_OPTIONS = [("across the line", "across_line"), ("along the line", "along_line")]


class RadarPanel(Panel):
    """Pulse, power, noise, stacking, antenna, sampling and the survey line."""

    def __init__(self) -> None:
        self.pulse = dropdown("pulse shape", list(pulses.pulse_names()), "ricker")
        self.frequency = log_slider("centre frequency (MHz)", 800.0, 50.0, 6000.0,
                                    readout_format=".0f")
        self.own_bandwidth = widgets.Checkbox(value=True, indent=False,
                                              description="pulse's own bandwidth")
        self.bandwidth = log_slider("bandwidth (MHz)", 800.0, 10.0, 6000.0, readout_format=".0f")
        self.height = log_slider("antenna height (m)", 0.5, 0.05, 30.0, readout_format=".2f")
        self.power = float_slider("transmit power (dBm)", 20.0, -30.0, 60.0, 1.0,
                                  readout_format=".0f")
        self.noise = float_slider("noise floor (dBm)", -80.0, -200.0, 0.0, 1.0,
                                  readout_format=".0f")
        self.stacking = dropdown("stacking (traces)", list(_STACKING), 16)
        self.gain = float_slider("antenna gain (dBi)", 6.0, -10.0, 30.0, 0.5, readout_format=".1f")
        self.beamwidth = float_slider("beamwidth (deg)", 60.0, 5.0, 180.0, 1.0,
                                      readout_format=".0f")
        self.polarization = dropdown("electric field", _POLARIZATION_OPTIONS, "across_line")
        self.dt = log_slider("sample interval (ps)", 100.0, 1.0, 10000.0, readout_format=".0f")
        self.window = log_slider("time window (ns)", 51.2, 1.0, 100000.0, readout_format=".1f")
        self.spacing = log_slider("trace spacing (cm)", 5.0, 0.1, 10000.0, readout_format=".1f")
        self.start = float_slider("line start (m)", 0.0, -100.0, 100.0, 0.5, readout_format=".1f")
        self.end = float_slider("line end (m)", 10.0, -100.0, 200.0, 0.5, readout_format=".1f")
        super().__init__([
            section_title("Pulse"), self.pulse, self.frequency, self.own_bandwidth,
            self.bandwidth, section_title("Power and noise"), self.power, self.noise,
            self.stacking, section_title("Antenna"), self.height, self.gain, self.beamwidth,
            self.polarization, section_title("Recording and survey line"), self.dt,
            self.window, self.spacing, self.start, self.end])
        self._watch(self.pulse, self.frequency, self.own_bandwidth, self.bandwidth, self.height,
                    self.power, self.noise, self.stacking, self.gain, self.beamwidth,
                    self.polarization, self.dt,
                    self.window, self.spacing, self.start, self.end)
        self.own_bandwidth.observe(
            lambda c: setattr(self.bandwidth, "disabled", bool(c["new"])), names="value")
        self.bandwidth.disabled = True

    def show(self, scenario: Scenario) -> None:
        r, s = scenario.radar, scenario.survey
        self._set(self.pulse, r.pulse)
        self._set(self.frequency, r.center_frequency_hz / _MHZ)
        self._set(self.own_bandwidth, r.bandwidth_hz is None)
        self.bandwidth.disabled = r.bandwidth_hz is None
        if r.bandwidth_hz is not None:
            self._set(self.bandwidth, r.bandwidth_hz / _MHZ)
        self._set(self.height, float(r.antenna_height_m))
        self._set(self.power, float(r.transmit_power_dbm))
        self._set(self.noise, float(r.noise_floor_dbm))
        self._set(self.stacking, int(r.stacking) if r.stacking in _STACKING else 16)
        if r.stacking not in _STACKING:
            self._quiet += 1
            try:
                self.stacking.options = sorted(set(_STACKING) | {int(r.stacking)})
                self.stacking.value = int(r.stacking)
            finally:
                self._quiet -= 1
        self._set(self.gain, float(r.antenna_gain_dbi))
        self._set(self.beamwidth, float(r.beamwidth_deg))
        self._set(self.polarization, r.polarization)
        self._set(self.dt, r.dt_s / _PS)
        self._set(self.window, r.time_window_s / _NS)
        self._set(self.spacing, s.trace_spacing_m / _CM)
        self._set(self.start, float(s.start_m))
        self._set(self.end, float(s.end_m))

    def parts(self) -> dict[str, Any]:
        radar = Radar(
            pulse=self.pulse.value, center_frequency_hz=self.frequency.value * _MHZ,
            bandwidth_hz=None if self.own_bandwidth.value else self.bandwidth.value * _MHZ,
            transmit_power_dbm=self.power.value, noise_floor_dbm=self.noise.value,
            stacking=int(self.stacking.value), antenna_gain_dbi=self.gain.value,
            dt_s=self.dt.value * _PS, time_window_s=self.window.value * _NS,
            antenna_height_m=self.height.value, beamwidth_deg=self.beamwidth.value,
            polarization=self.polarization.value)
        survey = Survey(self.start.value, self.end.value, self.spacing.value * _CM)
        return {"radar": radar, "survey": survey}


__all__ = ["PERSON_DEPTH_CLASS", "DebrisPanel", "Panel", "PersonPanel", "RadarPanel",
           "SnowpackEditor", "build_scenario"]
