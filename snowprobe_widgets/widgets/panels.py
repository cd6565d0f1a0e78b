"""Control panels that turn widget values into a new Scenario (no physics here).

Every panel has the same small protocol:

* ``show(scenario)`` writes the scenario's values into the panel's widgets (without
  firing its change callback);
* ``parts()`` returns the Scenario fields this panel owns, built from the widgets through
  the validating constructors (a refused value raises ``ValueError`` with the model's own
  message); the caller joins every panel's parts into one ``dataclasses.replace`` so the
  whole scenario is validated once, then calls ``commit()`` on success;
* ``on_change(callback)`` registers ``callback()``, called after any user edit.

Every control of a scenario field is built from its declaration in
:mod:`snowprobe_widgets.fields` (label, display unit, range, step, help tooltip) and
recorded in the panel's :attr:`Panel.declared` (control attribute -> declaration); its
slider range follows the scenario on screen (the declaration's soft bounds). Display units
(cm, MHz, ns, ...) are converted to SI through the declarations and nowhere else.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any

import ipywidgets as widgets
import numpy as np

from snowprobe_widgets.fields import Field, declaration, format_parameters, parse_parameters
from snowprobe_widgets.scene import (
    Boulder,
    Branch,
    Clutter,
    Ground,
    Layer,
    MetalPlate,
    Person,
    Scenario,
    Snowpack,
    Survey,
)
from snowprobe_widgets.targets import kind_of
from snowprobe_widgets.widgets._common import (
    dropdown,
    field_control,
    powers_of_two_control,
    section_title,
    set_limits,
    set_visible,
)

#: CSS class of the person depth slider (browser tests drive it).
PERSON_DEPTH_CLASS: str = "sp-person-depth"

_BUTTON = widgets.Layout(width="auto")
#: Rows of buttons wrap in a narrow column.
_WRAP = widgets.Layout(flex_flow="row wrap")


class Panel(widgets.VBox):
    """Base of the control panels: change callbacks and a "do not fire" guard.

    Attributes
    ----------
    declared : dict of str to Field
        The name of each control attribute built from a declaration, and that declaration.
    """

    declared: dict[str, Field]

    def __init__(self, children: list[widgets.Widget], **kwargs: Any) -> None:
        super().__init__(children=children, **kwargs)
        self._callbacks: list[Callable[[], None]] = []
        self._quiet = 0

    def _control(self, attr: str, group: str, name: str, value: Any = None) -> widgets.Widget:
        """Build the control of declared field ``group.name`` and record it as ``attr``."""
        f = declaration(group, name)
        if "declared" not in self.__dict__:
            self.declared = {}
        self.declared[attr] = f
        return field_control(f, value)

    def _field(self, attr: str) -> Field:
        return self.declared[attr]

    def _si(self, attr: str) -> float:
        """The control's value in SI units."""
        return self._field(attr).to_si(getattr(self, attr).value)

    def _put(self, attr: str, value_si: float, limits: tuple[float, float] | None = None
             ) -> None:
        """Show an SI value in a declared control (quietly), its range set to ``limits``
        (SI; default the declaration's fixed soft bounds) and widened to hold the value."""
        f = self._field(attr)
        control = getattr(self, attr)
        lo, hi = limits if limits is not None else f.soft_bounds()
        self._quiet += 1
        try:
            set_limits(control, f, lo, hi, value_si)
            control.tooltip = f.help  # a shared control (debris "Size") follows its item
            control.description = f.title
        finally:
            self._quiet -= 1

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

    def show(self, scenario: Scenario, keep_selection: bool = False) -> None:
        """Show ``scenario`` (``keep_selection``: stay on the chosen layer or item, as after
        a refused edit)."""
        raise NotImplementedError  # pragma: no cover - overridden

    def follow(self, scenario: Scenario) -> None:
        """Set the slider ranges that depend on the rest of ``scenario`` (the soft bounds
        of the declarations), leaving every value as it is."""

    def _follow(self, attr: str, scenario: Any = None, item: Any = None) -> None:
        f = self._field(attr)
        self._put(attr, f.to_si(getattr(self, attr).value), f.soft_bounds(scenario, item))

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
        self.thickness = self._control("thickness", "layer", "thickness_m", 0.5)
        self.density = self._control("density", "layer", "density_kg_m3", 300.0)
        self.lwc = self._control("lwc", "layer", "lwc_percent", 0.0)
        self.crust = self._control("crust", "layer", "ice_crust", False)
        self.crust.description = "Ice crust (700-917 kg/m³, at most 0.3 m)"
        self.dielectric_model = self._control("dielectric_model", "layer", "dielectric_model",
                                              "snow")
        self.add_layer = _button("add layer below", "copy the chosen layer below it")
        self.remove_layer = _button("remove layer")
        self.move_up = _button("move up")
        self.move_down = _button("move down")
        self.add_crust = _button("add ice crust below", "a 2 cm, 850 kg/m3 crust")
        self.all_layers = _button("set for all layers",
                                  "give every snow layer (not the ice crusts) this layer's "
                                  "density and liquid water")
        self.temperature = self._control("temperature", "snowpack", "temperature_c", -5.0)
        self.ground_kind = self._control("ground_kind", "ground", "kind", "soil")
        self.soil_water = self._control("soil_water", "ground", "water_fraction", 0.15)
        self.rock_permittivity = self._control("rock_permittivity", "ground", "permittivity",
                                               6.0)
        self.rock_conductivity = self._control("rock_conductivity", "ground",
                                               "conductivity_s_m", 1e-3)
        self.summary = widgets.HTML()
        super().__init__([
            section_title("Snow layers, surface first"), self.layer_choice,
            widgets.HBox([self.add_layer, self.remove_layer, self.move_up, self.move_down,
                          self.add_crust], layout=_WRAP),
            self.thickness, self.density, self.lwc, self.all_layers, self.crust,
            self.dielectric_model, self.summary,
            section_title("Snow and ground"), self.temperature, self.ground_kind,
            self.soil_water, self.rock_permittivity, self.rock_conductivity])
        self.layer_choice.observe(self._on_pick, names="value")
        self._watch(self.thickness, self.density, self.lwc, self.crust,
                    self.dielectric_model, self.temperature,
                    self.ground_kind, self.soil_water, self.rock_permittivity,
                    self.rock_conductivity)
        self.ground_kind.observe(lambda _: self._sync_ground(), names="value")
        self.add_layer.on_click(lambda _: self._restructure("add"))
        self.remove_layer.on_click(lambda _: self._restructure("remove"))
        self.move_up.on_click(lambda _: self._restructure("up"))
        self.move_down.on_click(lambda _: self._restructure("down"))
        self.add_crust.on_click(lambda _: self._restructure("crust"))
        self.all_layers.on_click(lambda _: self._restructure("all"))

    @property
    def layers(self) -> tuple[Layer, ...]:
        """The layers as the editor holds them now."""
        return tuple(self._layers)

    def show(self, scenario: Scenario, keep_selection: bool = False) -> None:
        self._layers = list(scenario.snowpack.layers)
        self._put("temperature", scenario.snowpack.temperature_c)
        g = scenario.ground
        self._set(self.ground_kind, g.kind)
        self._put("soil_water", g.water_fraction)
        self._put("rock_permittivity", g.permittivity)
        self._put("rock_conductivity", g.conductivity_s_m)
        self._sync_ground()
        self._refresh_choice(int(self.layer_choice.value or 0) if keep_selection else 0)

    def parts(self) -> dict[str, Any]:
        ground = Ground(self.ground_kind.value, water_fraction=self._si("soil_water"),
                        permittivity=self._si("rock_permittivity"),
                        conductivity_s_m=self._si("rock_conductivity"))
        layers = list(self._layers)
        i = int(self.layer_choice.value)
        layers[i] = Layer(self._si("thickness"), self._si("density"), self._si("lwc"),
                          bool(self.crust.value), self.dielectric_model.value)
        snow = Snowpack(tuple(layers), temperature_c=self._si("temperature"))
        self._staged = (layers, i)
        return {"snowpack": snow, "ground": ground}

    def follow(self, scenario: Scenario) -> None:
        i = int(self.layer_choice.value or 0)
        if i < len(scenario.snowpack.layers):
            self._follow("lwc", item=scenario.snowpack.layers[i])

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
            model = "" if layer.dielectric_model == "snow" else f", {layer.dielectric_model}"
            options.append((f"{i + 1}: {tag}{layer.thickness_m:.2f} m, "
                            f"{layer.density_kg_m3:.0f} kg/m3, {layer.lwc_percent:.1f} % water"
                            f"{model}", i))
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
        self._put("thickness", layer.thickness_m)
        self._put("density", layer.density_kg_m3)
        self._put("lwc", layer.lwc_percent,
                  self._field("lwc").soft_bounds(item=layer))
        self._set(self.crust, bool(layer.ice_crust))
        self._set(self.dielectric_model, layer.dielectric_model)

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
        elif action == "all":
            density, lwc = self._si("density"), self._si("lwc")
            layers[:] = [la if la.ice_crust else
                         dataclasses.replace(la, density_kg_m3=density, lwc_percent=lwc)
                         for la in layers]
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

    def _show_list(self, items: Any, scenario: Scenario) -> None:
        self._items = list(items)
        self._scenario = scenario

    def _centre(self) -> float:
        s = self._scenario.survey
        return 0.5 * (s.start_m + s.end_m)

    def _put_geometry(self, item: Any) -> None:
        """Position, depth and offset of ``item``, the sliders spanning the line and the
        snowpack (the soft bounds of the item's declarations)."""
        for attr, name in (("position", "position_m"), ("depth", "depth_m"),
                           ("offset", "offset_m")):
            f = declaration(item.kind, name)
            self.declared[attr] = f
            self._put(attr, getattr(item, name), f.soft_bounds(self._scenario, item))

    def commit(self) -> None:
        if getattr(self, "_staged", None) is not None:
            self._items, self._staged = self._staged, None

    def follow(self, scenario: Scenario) -> None:
        self._scenario = scenario
        i = int(self.choice.value)
        if 0 <= i < len(self._items):
            for attr in ("position", "depth"):
                self._follow(attr, scenario, self._items[i])

    def _selected(self, keep_selection: bool) -> int:
        return max(0, int(self.choice.value)) if keep_selection else 0

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
        self.depth = self._control("depth", "person", "depth_m", 1.0)
        self.depth.add_class(PERSON_DEPTH_CLASS)
        self.position = self._control("position", "person", "position_m", 5.0)
        self.offset = self._control("offset", "person", "offset_m", 0.0)
        self.heading = self._control("heading", "person", "heading_deg", 0.0)
        self.posture = self._control("posture", "person", "posture", "lying_flat")
        self.clothing = self._control("clothing", "person", "clothing_m", 0.01)
        self.height = self._control("height", "person", "height_m", 1.75)
        self.note = widgets.HTML()
        super().__init__([section_title("Buried people"), self.choice,
                          widgets.HBox([self.add, self.remove], layout=_WRAP), self.note,
                          self.depth, self.position, self.offset, self.heading, self.posture,
                          self.clothing, self.height])
        self._item_controls = (self.depth, self.position, self.offset, self.heading,
                               self.posture, self.clothing, self.height)
        self.choice.observe(self._on_pick, names="value")
        self._watch(*self._item_controls)
        self.add.on_click(lambda _: self._append(
            Person(self._centre(), 0.5, label=f"person {len(self._items) + 1}")))
        self.remove.on_click(self._on_remove)

    def show(self, scenario: Scenario, keep_selection: bool = False) -> None:
        index = self._selected(keep_selection)
        self._show_list(scenario.persons, scenario)
        self._refresh(index)

    def parts(self) -> dict[str, Any]:
        persons = list(self._items)
        i = int(self.choice.value)
        if i >= 0:
            persons[i] = dataclasses.replace(
                persons[i], depth_m=self._si("depth"), position_m=self._si("position"),
                offset_m=self._si("offset"), heading_deg=self._si("heading"),
                posture=self.posture.value, clothing_m=self._si("clothing"),
                height_m=self._si("height"))
        self._staged = persons
        return {"persons": tuple(persons)}

    def _label(self, k: int, item: Person) -> str:
        return item.label or f"person {k + 1}"

    def _after_refresh(self, n: int) -> None:
        self.note.value = ("" if n else
                           "<small>Nobody is buried in this scenario: add a person.</small>")

    def _show_item(self, p: Person) -> None:
        self._put_geometry(p)
        self._put("heading", float(np.clip(p.heading_deg, -180.0, 180.0)))
        self._set(self.posture, p.posture)
        self._put("clothing", p.clothing_m)
        self._put("height", p.height_m)


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
        self.position = self._control("position", "boulder", "position_m", 5.0)
        self.depth = self._control("depth", "boulder", "depth_m", 0.5)
        self.offset = self._control("offset", "boulder", "offset_m", 0.0)
        self.size = self._control("size", "boulder", "diameter_m", 0.5)
        self.heading = self._control("heading", "branch", "heading_deg", 0.0)
        self.density = self._control("density", "clutter", "scatterer_density_per_m3", 0.0)
        self.block_size = self._control("block_size", "clutter", "scatterer_size_m", 0.1)
        self.thin_layers = self._control("thin_layers", "clutter", "thin_layer_count", 0)
        self.contrast = self._control("contrast", "clutter", "thin_layer_contrast", 0.05)
        self.seed = self._control("seed", "clutter", "seed", 0)
        self._item_controls = (self.position, self.depth, self.offset, self.size,
                               self.heading)
        super().__init__([
            section_title("Debris objects"), self.choice,
            widgets.HBox([self.add_boulder, self.add_branch, self.add_metal, self.remove],
                         layout=_WRAP),
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

    def show(self, scenario: Scenario, keep_selection: bool = False) -> None:
        index = self._selected(keep_selection)
        self._show_list(scenario.objects, scenario)
        c = scenario.clutter
        self._put("density", c.scatterer_density_per_m3)
        self._put("block_size", c.scatterer_size_m)
        self._put("thin_layers", c.thin_layer_count)
        self._put("contrast", c.thin_layer_contrast)
        self._put("seed", c.seed)
        self._refresh(index)

    def parts(self) -> dict[str, Any]:
        objects = list(self._items)
        i = int(self.choice.value)
        if i >= 0:
            o = objects[i]
            changes: dict[str, Any] = dict(position_m=self._si("position"),
                                           depth_m=self._si("depth"),
                                           offset_m=self._si("offset"))
            kind = kind_of(o)
            changes[kind.size_field] = self._si("size")
            if kind.has_heading:
                changes["heading_deg"] = self._si("heading")
            objects[i] = dataclasses.replace(o, **changes)
        clutter = Clutter(scatterer_density_per_m3=self._si("density"),
                          scatterer_size_m=self._si("block_size"),
                          thin_layer_count=int(self._si("thin_layers")),
                          thin_layer_contrast=self._si("contrast"), seed=int(self.seed.value))
        self._staged = objects
        return {"objects": tuple(objects), "clutter": clutter}

    def _label(self, k: int, item: Any) -> str:
        return f"{k + 1}: {kind_of(item).title}"

    def _show_item(self, o: Any) -> None:
        self._put_geometry(o)
        kind = kind_of(o)
        self.declared["size"] = declaration(o.kind, kind.size_field)
        self._put("size", getattr(o, kind.size_field))
        self._put("heading", float(np.clip(getattr(o, "heading_deg", 0.0), -180, 180)))
        self.heading.disabled = not kind.has_heading


# --------------------------------------------------------------------------- radar
class RadarPanel(Panel):
    """Pulse, power, noise, stacking, antenna, sampling and the survey line."""

    def __init__(self) -> None:
        self.pulse = self._control("pulse", "radar", "pulse", "ricker")
        self.pulse_parameters = self._control("pulse_parameters", "radar", "pulse_parameters",
                                              ())
        self.frequency = self._control("frequency", "radar", "center_frequency_hz", 800e6)
        self.own_bandwidth = widgets.Checkbox(value=True, indent=False,
                                              description="pulse's own bandwidth")
        self.bandwidth = self._control("bandwidth", "radar", "bandwidth_hz", 800e6)
        self.height = self._control("height", "radar", "antenna_height_m", 0.5)
        self.power = self._control("power", "radar", "transmit_power_dbm", 20.0)
        self.noise = self._control("noise", "radar", "noise_floor_dbm", -80.0)
        self.declared["stacking"] = declaration("radar", "stacking")
        self.stacking = powers_of_two_control(self.declared["stacking"], 16)
        self.gain = self._control("gain", "radar", "antenna_gain_dbi", 6.0)
        self.beamwidth = self._control("beamwidth", "radar", "beamwidth_deg", 60.0)
        self.polarization = self._control("polarization", "radar", "polarization",
                                          "across_line")
        self.dt = self._control("dt", "radar", "dt_s", 1e-10)
        self.window = self._control("window", "radar", "time_window_s", 51.2e-9)
        self.spacing = self._control("spacing", "survey", "trace_spacing_m", 0.05)
        self.start = self._control("start", "survey", "start_m", 0.0)
        self.end = self._control("end", "survey", "end_m", 10.0)
        super().__init__([
            section_title("Pulse"), self.pulse, self.pulse_parameters, self.frequency,
            self.own_bandwidth,
            self.bandwidth, section_title("Power and noise"), self.power, self.noise,
            self.stacking, section_title("Antenna"), self.height, self.gain, self.beamwidth,
            self.polarization, section_title("Recording and survey line"), self.dt,
            self.window, self.spacing, self.start, self.end])
        # before the panel fires: settings the new pulse does not take are dropped
        self.pulse.observe(lambda c: self._pulse_switched(), names="value")
        self._watch(self.pulse, self.pulse_parameters, self.frequency, self.own_bandwidth,
                    self.bandwidth, self.height,
                    self.power, self.noise, self.stacking, self.gain, self.beamwidth,
                    self.polarization, self.dt,
                    self.window, self.spacing, self.start, self.end)
        self.own_bandwidth.observe(
            lambda c: setattr(self.bandwidth, "disabled", bool(c["new"])), names="value")
        self.bandwidth.disabled = True
        self._show_parameters("ricker", ())

    def _show_parameters(self, pulse: str, pairs: Any) -> None:
        """Show ``pairs`` in the pulse-parameter box, visible only for a pulse that has
        settings of its own (its tooltip lists them with their defaults)."""
        from snowprobe_widgets.pulses import pulse_parameters

        own = pulse_parameters(pulse)
        self._set(self.pulse_parameters, format_parameters(pairs))
        f = self._field("pulse_parameters")
        self.pulse_parameters.tooltip = f.help + (
            f" This pulse takes: {format_parameters(own.items())}." if own else "")
        set_visible(self.pulse_parameters, bool(own))

    def _pulse_switched(self) -> None:
        from snowprobe_widgets.pulses import pulse_parameters

        if self._quiet:
            return
        own = pulse_parameters(self.pulse.value)
        try:
            pairs = parse_parameters(self.pulse_parameters.value)
        except ValueError:
            pairs = ()
        self._show_parameters(self.pulse.value, tuple(p for p in pairs if p[0] in own))

    def show(self, scenario: Scenario, keep_selection: bool = False) -> None:
        r, s = scenario.radar, scenario.survey
        self._set(self.pulse, r.pulse)
        self._show_parameters(r.pulse, r.pulse_parameters)
        self._put("frequency", r.center_frequency_hz,
                  self._field("frequency").soft_bounds(scenario))
        self._set(self.own_bandwidth, r.bandwidth_hz is None)
        self.bandwidth.disabled = r.bandwidth_hz is None
        if r.bandwidth_hz is not None:
            self._put("bandwidth", r.bandwidth_hz)
        self._put("height", r.antenna_height_m)
        self._put("power", r.transmit_power_dbm)
        self._put("noise", r.noise_floor_dbm, (self._field("noise").low,
                                               min(0.0, r.transmit_power_dbm)))
        if r.stacking not in self.stacking.options:
            self._quiet += 1
            try:
                self.stacking.options = sorted(set(self.stacking.options) | {int(r.stacking)})
            finally:
                self._quiet -= 1
        self._set(self.stacking, int(r.stacking))
        self._put("gain", r.antenna_gain_dbi)
        self._put("beamwidth", r.beamwidth_deg)
        self._set(self.polarization, r.polarization)
        self._radar = r
        self._put("dt", r.dt_s, self._field("dt").soft_bounds(scenario))
        self._put("window", r.time_window_s, self._field("window").soft_bounds(scenario))
        self._put("spacing", s.trace_spacing_m)
        self._put("start", s.start_m)
        self._put("end", s.end_m)

    def follow(self, scenario: Scenario) -> None:
        for attr in ("frequency", "dt", "window"):
            self._follow(attr, scenario)
        tp = scenario.radar.transmit_power_dbm
        self._put("noise", self._si("noise"), (self._field("noise").low, min(0.0, tp)))

    def parts(self) -> dict[str, Any]:
        # fields this panel does not show (antenna band, dynamic range, ringing) are kept
        radar = dataclasses.replace(
            self._radar, pulse=self.pulse.value,
            pulse_parameters=parse_parameters(self.pulse_parameters.value),
            center_frequency_hz=self._si("frequency"),
            bandwidth_hz=None if self.own_bandwidth.value else self._si("bandwidth"),
            transmit_power_dbm=self._si("power"), noise_floor_dbm=self._si("noise"),
            stacking=int(self.stacking.value), antenna_gain_dbi=self._si("gain"),
            dt_s=self._si("dt"), time_window_s=self._si("window"),
            antenna_height_m=self._si("height"), beamwidth_deg=self._si("beamwidth"),
            polarization=self.polarization.value)
        survey = Survey(self._si("start"), self._si("end"), self._si("spacing"))
        return {"radar": radar, "survey": survey}


__all__ = ["PERSON_DEPTH_CLASS", "DebrisPanel", "Panel", "PersonPanel", "RadarPanel",
           "SnowpackEditor", "build_scenario"]
