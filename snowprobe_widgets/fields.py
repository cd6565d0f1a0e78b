"""One declaration per scenario field: type, units, label, help, hard and soft bounds.

Every field of every scenario value object (:class:`~snowprobe_widgets.scene.Radar`,
:class:`~snowprobe_widgets.scene.Person`, ...) is declared here once, as a :class:`Field`.
The constructors validate with :func:`check`, the scenario file's JSON Schema
(:func:`snowprobe_widgets.scenario_files.json_schema`) is written from the declarations, the
widget panels build their sliders (range, step, label, unit, tooltip) from them, and every
refusal carries a message in the screen's language (:attr:`FieldError.screen`: the
control's label, display units, plain numbers, what to change) next to the technical one
(``str(error)``: the argument name, the SI value and the allowed range).

* **Hard bounds** (:attr:`Field.low`, :attr:`Field.high`) are what the constructors accept.
* **Soft bounds** (:meth:`Field.soft_bounds`) are the part of that range that makes sense
  for the rest of the scenario (a burial depth within the snowpack, a position along the
  line, a centre frequency the sampling interval can record); sliders span them.

Field paths name a field inside a scenario the way the scenario file nests it:
``"radar.center_frequency_hz"``, ``"persons[0].depth_m"``, ``"snowpack.layers[*].lwc_percent"``
(``[*]``: every item), ``"name"``. :func:`declaration_at` resolves a path to its
declaration, :func:`value_at` reads it and :func:`with_value` returns a validated scenario
with it replaced (values in SI units).

This module is part of the model layer: it imports no user-interface library.
"""

from __future__ import annotations

import dataclasses
import math
import re
from dataclasses import dataclass
from typing import Any

import numpy as np

from ._validate import check_choice, check_int, check_range
from .constants import MAX_LWC_PERCENT

__all__ = [
    "Field",
    "FieldError",
    "FIELDS",
    "GROUPS",
    "OBJECT_GROUPS",
    "check",
    "declaration",
    "declaration_at",
    "value_at",
    "with_value",
    "screen_message",
    "plain_number",
    "parse_parameters",
    "format_parameters",
]

_INF = math.inf


class FieldError(ValueError):
    """A refused value: ``str(error)`` is the technical message (argument name, SI value,
    allowed range); :attr:`screen` says the same in the screen's words.

    Attributes
    ----------
    field : Field or None
        The declaration of the refused field.
    value : object
        The refused value (SI units).
    screen : str
        Label, display units, plain numbers and what to change.
    """

    def __init__(self, message: str, *, field: Field | None = None, value: Any = None,
                 screen: str = "") -> None:
        super().__init__(message)
        self.field = field
        self.value = value
        self.screen = screen or message


def screen_message(error: BaseException) -> str:
    """The message of ``error`` for a screen: :attr:`FieldError.screen` if it has one,
    else ``str(error)``."""
    return getattr(error, "screen", "") or str(error)


def plain_number(x: float, digits: int = 3) -> str:
    """``x`` with at most ``digits`` significant digits and no exponent ("0.047", "2500")."""
    if x == 0:
        return "0"
    if not math.isfinite(x):
        return f"{x:g}"
    mag = math.floor(math.log10(abs(x)))
    decimals = max(0, digits - 1 - mag)
    text = f"{round(x, decimals):.{decimals}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def _nice(x: float, down: bool) -> float:
    """``x`` rounded to two significant digits, towards zero (``down``) or away from it."""
    if x <= 0 or not math.isfinite(x):
        return x
    q = 10 ** (math.floor(math.log10(x)) - 1)
    return (math.floor(x / q) if down else math.ceil(x / q)) * q


@dataclass(frozen=True)
class Field:
    """The declaration of one scenario field.

    Attributes
    ----------
    group : str
        The value object it belongs to (a key of :data:`GROUPS`: ``"radar"``, ``"person"``).
    name : str
        Attribute name, with its SI unit (``"center_frequency_hz"``).
    kind : str
        ``"number"``, ``"optional number"`` (None allowed), ``"integer"``, ``"boolean"``,
        ``"string"``, ``"choice"`` or ``"parameters"`` (named settings: a mapping of names
        to numbers, strings or booleans, held as a sorted tuple of pairs; see
        :func:`parse_parameters`).
    label : str
        What the screen calls it ("Centre frequency").
    unit : str
        SI unit ("Hz"; "" for pure numbers).
    display_unit : str
        Unit on the screen ("MHz").
    scale : float
        SI value of one display unit (1e6 for MHz): ``display = si / scale``.
    low, high : float
        Hard bounds (SI) the constructors accept; ``low_open`` / ``high_open`` exclude them.
    help : str
        One or two plain sentences for tooltips and the schema's description.
    soft : tuple of float or callable, optional
        Soft bounds (SI): a fixed ``(low, high)`` or ``f(scenario, item) -> (low, high)``
        where ``item`` is the value object holding the field.
    step : float
        Slider step in display units (0: chosen from the range).
    log : bool
        The slider moves on a logarithmic scale.
    decimals : int
        Decimals shown for a display value.
    choices : tuple of str or callable
        Allowed values of a ``"choice"`` field (a callable for registries that plugins
        extend, such as the pulse shapes).
    max_length : int
        Longest ``"string"`` accepted; for ``"parameters"``, the longest name.
    """

    group: str
    name: str
    kind: str
    label: str
    unit: str = ""
    display_unit: str = ""
    scale: float = 1.0
    low: float = -_INF
    high: float = _INF
    low_open: bool = False
    high_open: bool = False
    help: str = ""
    soft: Any = None
    step: float = 0.0
    log: bool = False
    decimals: int = 2
    choices: Any = ()
    max_length: int = 0

    @property
    def path(self) -> str:
        """``"group.name"``, e.g. ``"radar.dt_s"``."""
        return f"{self.group}.{self.name}"

    @property
    def title(self) -> str:
        """The label with its display unit, as on a control: "Centre frequency (MHz)"."""
        return f"{self.label} ({self.display_unit})" if self.display_unit else self.label

    def allowed(self) -> tuple[str, ...]:
        """The allowed values of a ``"choice"`` field."""
        c = self.choices
        return tuple(c() if callable(c) else c)

    def to_display(self, si: float) -> float:
        """An SI value in display units."""
        return si / self.scale

    def to_si(self, shown: float) -> float:
        """A display value in SI units."""
        return shown * self.scale

    def show(self, si: float) -> str:
        """An SI value as the screen shows it, with its display unit ("2500 MHz")."""
        text = plain_number(self.to_display(si), max(3, self.decimals + 1))
        unit = self.display_unit
        if unit == "°":
            return f"{text}°"
        return f"{text} {unit}" if unit else text

    def soft_bounds(self, scenario: Any = None, item: Any = None) -> tuple[float, float]:
        """The sensible part of the hard range for this scenario (SI), within the hard
        bounds; the hard bounds when the field has none or neither a scenario nor an item
        is given (bounds that follow an item alone, such as the water that fits in a layer
        of snow, need only the item)."""
        lo, hi = self.low, self.high
        s = self.soft
        if callable(s):
            if scenario is None and item is None:
                return lo, hi
            s = s(scenario, item)
        if s is None:
            return lo, hi
        s_lo, s_hi = float(s[0]), float(s[1])
        s_lo, s_hi = max(lo, s_lo), min(hi, s_hi)
        if s_hi < s_lo:
            return lo, hi
        return s_lo, s_hi


# --------------------------------------------------------------------------- soft bounds
def _depth_in_snow(scenario: Any, item: Any) -> tuple[float, float]:
    thick = item.bottom_depth_m - item.depth_m if item is not None else 0.0
    return 0.0, max(0.0, scenario.snowpack.depth_m - thick)


def _line(scenario: Any, item: Any) -> tuple[float, float]:
    return scenario.survey.start_m, scenario.survey.end_m


def _frequency_for_dt(scenario: Any, item: Any) -> tuple[float, float]:
    r = scenario.radar
    return 50e6, r.center_frequency_hz * _nyquist_dt_s(r) / r.dt_s


def _dt_for_pulse(scenario: Any, item: Any) -> tuple[float, float]:
    return 1e-12, _nyquist_dt_s(scenario.radar)


def _window_for_dt(scenario: Any, item: Any) -> tuple[float, float]:
    lo, hi = SAMPLES
    return lo * scenario.radar.dt_s, hi * scenario.radar.dt_s


def _lwc_for_density(scenario: Any, item: Any) -> tuple[float, float]:
    if item is None:
        return 0.0, MAX_LWC_PERCENT
    return 0.0, 100.0 * (1.0 - item.density_kg_m3 / RHO_ICE_KG_M3)


def _nyquist_dt_s(radar: Any) -> float:
    """Coarsest sample interval that records ``radar``'s pulse: 1 / (2 f_high), where
    its band ends at -60 dB of the peak (common practice)."""
    return 1.0 / (2.0 * float(radar.make_pulse().band_hz(1e-3)[1]))


# --------------------------------------------------------------------------- declarations
#: Samples per trace a radar may record.
SAMPLES = (64, 8192)
#: Densest snow is bubble-free ice, kg/m3.
RHO_ICE_KG_M3 = 917.0


def _polarizations() -> tuple[str, ...]:
    from .targets import POLARIZATIONS

    return tuple(POLARIZATIONS)


def _layer_models() -> tuple[str, ...]:
    from .materials import layer_model_names

    return layer_model_names()


def _pulse_names() -> tuple[str, ...]:
    from .pulses import pulse_names

    return tuple(pulse_names())


def _f(group: str, name: str, kind: str, label: str, **kw: Any) -> Field:
    return Field(group, name, kind, label, **kw)


def _geometry(group: str, what: str, depth_help: str) -> list[Field]:
    return [
        _f(group, "position_m", "number", "Position along line", unit="m", display_unit="m",
           low=-1e4, high=1e4, soft=_line, step=0.05,
           help=f"Where the {what}'s centre lies along the survey line, measured from the "
                "line's zero (the survey line's start and end use the same axis)."),
        _f(group, "depth_m", "number", "Depth to top", unit="m", display_unit="m", low=0.0,
           high=100.0, soft=_depth_in_snow, step=0.05, help=depth_help),
        _f(group, "offset_m", "number", "Offset from line", unit="m", display_unit="m",
           low=-100.0, high=100.0, soft=(-5.0, 5.0), step=0.05,
           help=f"How far the {what} lies to the side of the survey line (positive: to "
                "the left walking from the line's start to its end)."),
    ]


def _heading(group: str, what: str) -> Field:
    return _f(group, "heading_deg", "number", "Heading to line", unit="deg",
              display_unit="°", low=-360.0, high=360.0, soft=(-180.0, 180.0), step=5.0,
              decimals=0,
              help=f"Angle between the {what}'s long axis and the survey line (0: along "
                   "the line, 90: across it).")


_DECLARED: list[Field] = [
    # ---- snow layer
    _f("layer", "thickness_m", "number", "Thickness", unit="m", display_unit="m", low=0.0,
       high=100.0, low_open=True, soft=(0.01, 5.0), step=0.01,
       help="Thickness of this layer of snow or debris."),
    # lightest snow accepted: very light new snow is about 30-50 kg/m3 (common practice)
    _f("layer", "density_kg_m3", "number", "Density", unit="kg/m3", display_unit="kg/m³",
       low=30.0, high=RHO_ICE_KG_M3, step=5.0, decimals=0,
       help="Dry density (ice and air, without the liquid water): fresh powder 50-150, "
            "wind-packed 250-400, avalanche debris 300-550, ice 917 kg/m³."),
    # at most 12 %: the wet-snow models' calibrated range (materials.wet_snow); "slush"
    # starts near 15 % (Fierz et al. 2009, UNESCO-IHP Tech. Doc. Hydrol. 83, wetness classes)
    _f("layer", "lwc_percent", "number", "Liquid water", unit="%", display_unit="%",
       low=0.0, high=MAX_LWC_PERCENT, soft=_lwc_for_density, step=0.1, decimals=1,
       help="Liquid water by volume: 0 % in cold dry snow, 3-8 % in wet spring snow. Wet "
            "snow slows the wave and absorbs it."),
    _f("layer", "ice_crust", "boolean", "Ice crust",
       help="A melt-freeze crust or ice lens: 700-917 kg/m³ and at most 0.3 m thick."),
    _f("layer", "dielectric_model", "choice", "Dielectric model", choices=_layer_models,
       help="Which published model turns density and water into permittivity: snow (the "
            "default), a dry+wet pair, ice, or a plugin's model."),
    # ---- snowpack
    _f("snowpack", "temperature_c", "number", "Snow temperature", unit="degC",
       display_unit="°C", low=-50.0, high=0.0, step=0.5, decimals=1,
       help="Temperature of the snow; colder dry snow absorbs a little less."),
    # ---- ground
    _f("ground", "kind", "choice", "Ground", choices=("soil", "rock"),
       help="What lies under the snow: soil (with water) or rock."),
    _f("ground", "water_fraction", "number", "Soil water", unit="m3/m3", display_unit="m³/m³",
       low=0.0, high=0.5, step=0.01,
       help="Volume fraction of water in the soil; wetter soil reflects more."),
    _f("ground", "permittivity", "number", "Rock permittivity", low=2.0, high=40.0, step=0.1,
       decimals=1, help="Relative permittivity of the rock (most rock is about 5-9)."),
    _f("ground", "conductivity_s_m", "number", "Rock conductivity", unit="S/m",
       display_unit="mS/m", scale=1e-3, low=0.0, high=1.0, soft=(0.0, 0.1), step=0.1,
       decimals=1, help="Electrical conductivity of the rock; more conductive rock absorbs "
                        "more."),
    # ---- person
    *_geometry("person", "person", "Snow surface to the top of the body. Half of all "
                                   "burials are about 1 m deep or less."),
    _heading("person", "body"),
    _f("person", "posture", "choice", "Posture", choices=("lying_flat", "curled"),
       help="Lying flat (about 25 cm thick) or curled up (about 50 cm)."),
    _f("person", "height_m", "number", "Body height", unit="m", display_unit="m", low=0.5,
       high=2.3, step=0.05, help="Standing height of the person."),
    _f("person", "clothing_m", "number", "Clothing", unit="m", display_unit="cm", scale=1e-2,
       low=0.0, high=0.1, step=0.1, decimals=1,
       help="Thickness of the clothing over the chest."),
    _f("person", "skin_m", "number", "Skin", unit="m", display_unit="mm", scale=1e-3,
       low=0.0005, high=0.005, step=0.1, decimals=1, help="Thickness of the skin."),
    _f("person", "fat_m", "number", "Fat", unit="m", display_unit="cm", scale=1e-2,
       low=0.001, high=0.1, step=0.1, decimals=1, help="Thickness of the fat layer."),
    _f("person", "muscle_m", "number", "Muscle", unit="m", display_unit="cm", scale=1e-2,
       low=0.005, high=0.1, step=0.1, decimals=1, help="Thickness of the muscle layer."),
    _f("person", "label", "string", "Name", max_length=100,
       help="A name for the screen and the report."),
    # ---- any buried object kind without declarations of its own (plugin kinds)
    *_geometry("object", "object", "Snow surface to the top of the object."),
    _heading("object", "object"),
    # ---- debris objects
    *_geometry("boulder", "boulder", "Snow surface to the top of the boulder."),
    _f("boulder", "diameter_m", "number", "Size", unit="m", display_unit="m", low=0.05,
       high=5.0, step=0.01, help="Diameter of the boulder."),
    _f("boulder", "permittivity", "number", "Rock permittivity", low=2.0, high=40.0,
       step=0.1, decimals=1, help="Relative permittivity of the rock (about 5-9)."),
    _f("boulder", "conductivity_s_m", "number", "Rock conductivity", unit="S/m",
       display_unit="mS/m", scale=1e-3, low=0.0, high=1.0, soft=(0.0, 0.1), step=0.1,
       decimals=1, help="Electrical conductivity of the rock."),
    *_geometry("branch", "branch", "Snow surface to the top of the branch."),
    _f("branch", "diameter_m", "number", "Size", unit="m", display_unit="m", low=0.01,
       high=1.5, step=0.01, help="Diameter of the branch or trunk."),
    _f("branch", "length_m", "number", "Length", unit="m", display_unit="m", low=0.1,
       high=20.0, step=0.1, help="Length of the branch or trunk."),
    _heading("branch", "branch"),
    _f("branch", "water_fraction", "number", "Wood water", unit="m3/m3",
       display_unit="m³/m³", low=0.0, high=0.6, step=0.01,
       help="Volume fraction of water in the wood (green wood about 0.3-0.5)."),
    _f("branch", "frozen", "boolean", "Frozen wood", help="The wood's water is frozen."),
    *_geometry("metal", "metal object", "Snow surface to the shallowest point of the metal."),
    _f("metal", "length_m", "number", "Size", unit="m", display_unit="m", low=0.02, high=3.0,
       step=0.01, help="Length of the metal object (ski, shovel blade, phone)."),
    _f("metal", "width_m", "number", "Width", unit="m", display_unit="m", low=0.01,
       high=1.0, step=0.01, help="Width of the metal object; at most its length."),
    _heading("metal", "metal object"),
    _f("metal", "tilt_deg", "number", "Tilt", unit="deg", display_unit="°", low=-90.0,
       high=90.0, step=5.0, decimals=0, help="Dip of the long axis below the horizontal."),
    _f("metal", "label", "string", "Name", max_length=100, help="What the object is."),
    # ---- radar
    _f("radar", "pulse", "choice", "Pulse shape", choices=_pulse_names,
       help="Shape of the transmitted pulse; plugins can add shapes."),
    _f("radar", "pulse_parameters", "parameters", "Pulse parameters", max_length=40,
       help="The pulse shape's own settings as name = value pairs, separated by commas "
            "(for example n_steps = 512 of a stepped-frequency sweep); empty: its defaults."),
    # to 6 GHz the materials hold; drone-borne ultra-wideband radars for avalanche victims
    # work at 0.7-4.5 GHz (see scene.Radar)
    _f("radar", "center_frequency_hz", "number", "Centre frequency", unit="Hz",
       display_unit="MHz", scale=1e6, low=50e6, high=6e9, soft=_frequency_for_dt, log=True,
       decimals=0, help="Higher frequencies resolve more detail but are absorbed faster "
                        "in wet snow."),
    _f("radar", "bandwidth_hz", "optional number", "Bandwidth", unit="Hz", display_unit="MHz",
       scale=1e6, low=0.0, high=6e9, low_open=True, soft=(10e6, 6e9), log=True, decimals=0,
       help="Width of the pulse's band; empty: the pulse shape's own bandwidth."),
    _f("radar", "transmit_power_dbm", "number", "Transmit power", unit="dBm",
       display_unit="dBm", low=-30.0, high=60.0, step=1.0, decimals=0,
       help="Power the radar sends, in dBm (decibels above one milliwatt: 0 dBm = 1 mW, "
            "30 dBm = 1 W)."),
    _f("radar", "noise_floor_dbm", "number", "Noise floor", unit="dBm", display_unit="dBm",
       low=-200.0, high=0.0, step=1.0, decimals=0,
       help="Receiver noise of one raw trace, in dBm; must lie below the transmit power."),
    _f("radar", "stacking", "integer", "Stacking", display_unit="traces", low=1, high=65536,
       decimals=0, help="Raw traces averaged into each recorded trace: each doubling "
                        "lowers the noise by 3 dB."),
    _f("radar", "antenna_gain_dbi", "number", "Antenna gain", unit="dBi", display_unit="dBi",
       low=-10.0, high=30.0, step=0.5, decimals=1, help="Gain of the antenna over an "
                                                        "isotropic one."),
    _f("radar", "dt_s", "number", "Sample interval", unit="s", display_unit="ps", scale=1e-12,
       low=1e-12, high=1e-8, soft=_dt_for_pulse, log=True, decimals=0,
       help="Time between samples of a trace; it must be short enough for the pulse's "
            "highest frequency."),
    _f("radar", "time_window_s", "number", "Time window", unit="s", display_unit="ns",
       scale=1e-9, low=0.0, high=1e-4, low_open=True, soft=_window_for_dt, log=True,
       decimals=1, help="How long each trace records, in two-way time (down to the "
                        "reflector and back); it must reach the deepest burial."),
    _f("radar", "antenna_height_m", "number", "Antenna height", unit="m", display_unit="m",
       low=0.05, high=50.0, log=True, decimals=2,
       help="Height of the antenna above the snow: a sled 0.05-1 m, a drone 5-30 m, a "
            "helicopter 10-50 m."),
    _f("radar", "beamwidth_deg", "number", "Beamwidth", unit="deg", display_unit="°",
       low=5.0, high=180.0, step=1.0, decimals=0,
       help="Full width of the antenna beam at half power (-3 dB), in air."),
    _f("radar", "polarization", "choice", "Polarisation", choices=_polarizations,
       help="Direction of the antenna's electric field relative to the survey line; it "
            "matters for long thin objects such as a branch."),
    _f("radar", "antenna_band_low_hz", "optional number", "Antenna band, low edge",
       unit="Hz", display_unit="MHz", scale=1e6, low=0.0, high=20e9, low_open=True, log=True,
       decimals=0, help="Lowest frequency the antenna radiates with its stated gain; empty: "
                        "the half-power band of the pulse sent and received."),
    _f("radar", "antenna_band_high_hz", "optional number", "Antenna band, high edge",
       unit="Hz", display_unit="MHz", scale=1e6, low=0.0, high=20e9, low_open=True, log=True,
       decimals=0, help="Highest frequency the antenna radiates with its stated gain; empty: "
                        "the half-power band of the pulse sent and received."),
    _f("radar", "dynamic_range_db", "number", "Dynamic range", unit="dB", display_unit="dB",
       low=20.0, high=200.0, step=1.0, decimals=0,
       help="How much weaker than the surface echo an echo may be and still be recorded "
            "(96 dB for a 16-bit digitiser)."),
    _f("radar", "ringing_level_db", "number", "Antenna ringing", unit="dB", display_unit="dB",
       low=-200.0, high=0.0, step=1.0, decimals=0,
       help="What is left of the antenna's own ringing after background removal, relative "
            "to the transmitted power; it hides echoes that arrive while it lasts."),
    _f("radar", "ringing_time_s", "optional number", "Ringing time", unit="s",
       display_unit="ns", scale=1e-9, low=0.0, high=1e-6, decimals=1,
       help="How long the antenna rings after sending; empty: three periods of the centre "
            "frequency."),
    # ---- survey
    _f("survey", "start_m", "number", "Line start", unit="m", display_unit="m", low=-1e4,
       high=1e4, soft=(-100.0, 100.0), step=0.5, decimals=1,
       help="Where the first trace is recorded along the line."),
    _f("survey", "end_m", "number", "Line end", unit="m", display_unit="m", low=-1e4,
       high=1e4, soft=(-100.0, 200.0), step=0.5, decimals=1,
       help="Where the last trace is recorded; beyond the line start."),
    _f("survey", "trace_spacing_m", "number", "Trace spacing", unit="m", display_unit="cm",
       scale=1e-2, low=1e-3, high=100.0, soft=(1e-3, 100.0), log=True, decimals=1,
       help="Distance between traces along the line; a hyperbola needs several traces "
            "across it."),
    # ---- clutter
    _f("clutter", "scatterer_density_per_m3", "number", "Debris blocks", unit="1/m3",
       display_unit="per m³", low=0.0, high=1000.0, soft=(0.0, 50.0), step=0.5, decimals=1,
       help="Mean number of snow blocks and clods per cubic metre of debris; they make "
            "clutter, echoes that are not the person."),
    _f("clutter", "scatterer_size_m", "number", "Block size", unit="m", display_unit="cm",
       scale=1e-2, low=0.005, high=2.0, soft=(0.005, 1.0), step=0.5, decimals=1,
       help="Mean diameter of the debris blocks."),
    _f("clutter", "thin_layer_count", "integer", "Thin random layers", low=0, high=500,
       soft=(0, 50), decimals=0, help="Number of thin random layers in the debris."),
    _f("clutter", "thin_layer_contrast", "number", "Thin layer contrast", low=0.0, high=1.0,
       soft=(0.0, 0.5), step=0.01, help="Relative density change of each thin layer."),
    _f("clutter", "seed", "integer", "Random seed", low=0, high=2**32 - 1, decimals=0,
       help="One seed always gives the same clutter."),
    # ---- scenario
    _f("scenario", "name", "string", "Scenario name", max_length=200,
       help="A short name for the screen and files."),
    _f("scenario", "notes", "string", "Notes", max_length=20_000,
       help="A free description."),
]

#: Every declaration, by group then field name.
FIELDS: dict[str, dict[str, Field]] = {}
for _field in _DECLARED:
    FIELDS.setdefault(_field.group, {})[_field.name] = _field

#: The groups, in the order a scenario file nests them.
GROUPS: tuple[str, ...] = tuple(FIELDS)
#: The groups of ``Scenario.objects`` entries, by their ``kind``.
OBJECT_GROUPS: tuple[str, ...] = ("boulder", "branch", "metal")


def declaration(group: str, name: str) -> Field:
    """The declaration of field ``name`` of ``group``.

    A buried-object kind added by a plugin without declarations of its own gets the
    generic ``"object"`` declarations of the shared geometry (position, depth, offset,
    heading); a plugin declares its other fields with :func:`declare`.

    Raises
    ------
    KeyError
        If there is no such declaration.
    """
    found = FIELDS.get(group, {}).get(name)
    if found is None and group not in FIELDS:
        found = FIELDS["object"].get(name)
    if found is None:
        raise KeyError(f"no declared field {group}.{name}")
    return found


def declare(*new: Field) -> None:
    """Add declarations (a plugin's buried-object kind declares its own fields so).

    Raises
    ------
    ValueError
        If a field of that group and name is already declared.
    """
    for f in new:
        if f.name in FIELDS.get(f.group, {}):
            raise ValueError(f"field {f.group}.{f.name} is already declared")
    for f in new:
        FIELDS.setdefault(f.group, {})[f.name] = f
        _DECLARED.append(f)


# --------------------------------------------------------------------------- checking
def _range_words(f: Field, lo: float, hi: float) -> str:
    return f"{plain_number(f.to_display(lo), 4)} to {f.show(hi)}"


def check(group: str, name: str, value: Any, *, low: float | None = None,
          high: float | None = None, low_open: bool | None = None,
          high_open: bool | None = None) -> Any:
    """Return ``value`` checked against its declaration, or raise :class:`FieldError`.

    Numbers come back as ``float``, integers as ``int`` (integral floats accepted),
    booleans as ``bool``. ``low``/``high`` (SI) narrow the declared bounds where another
    field of the same object limits this one (the noise floor below the transmit power).
    """
    f = declaration(group, name)
    lo = f.low if low is None else low
    hi = f.high if high is None else high
    lo_open = f.low_open if low_open is None else low_open
    hi_open = f.high_open if high_open is None else high_open
    kind = f.kind
    try:
        if kind == "optional number" and value is None:
            return None
        if kind in ("number", "optional number"):
            return check_range(name, value, lo, hi, unit=f.unit, low_open=lo_open,
                               high_open=hi_open)
        if kind == "integer":
            return check_int(name, value, int(lo), int(hi))
        if kind == "boolean":
            if not isinstance(value, (bool, np.bool_)):
                raise ValueError(f"{name} must be True or False, got {value!r}")
            return bool(value)
        if kind == "choice":
            if not isinstance(value, str):
                raise ValueError(f"{name} must be a name (a string), got {value!r}")
            return check_choice(name, value, f.allowed())
        if kind == "parameters":
            return _check_parameters(name, value, f.max_length)
        if not isinstance(value, str):
            raise ValueError(f"{name} must be a string, got {value!r}")
        if len(value) > f.max_length:
            raise ValueError(
                f"{name} is {len(value)} characters long; at most {f.max_length} allowed")
        try:
            value.encode("utf-8")
        except UnicodeEncodeError as exc:
            raise ValueError(f"{name} holds a character that is not valid Unicode (a lone "
                             f"surrogate {value[exc.start]!r} at position {exc.start})") from None
        return value
    except FieldError:
        raise
    except ValueError as exc:
        raise FieldError(str(exc), field=f, value=value,
                         screen=_screen_refusal(f, value, lo, hi, lo_open, hi_open)) from None


#: Most named settings a ``"parameters"`` field holds; longest text value.
MAX_PARAMETERS = 32
_MAX_PARAMETER_TEXT = 200
_NAME = re.compile(r"[A-Za-z_][A-Za-z0-9_]*")


def _check_parameters(name: str, value: Any, max_name: int
                      ) -> tuple[tuple[str, bool | int | float | str], ...]:
    """Named settings as a sorted tuple of ``(name, value)`` pairs, from a mapping or
    pairs; values are booleans, integers, finite numbers or short strings."""
    if isinstance(value, dict):
        items = list(value.items())
    elif isinstance(value, (tuple, list)) and all(
            isinstance(p, (tuple, list)) and len(p) == 2 for p in value):
        items = [tuple(p) for p in value]
    else:
        raise ValueError(f"{name} must be a mapping of names to values, got {value!r}")
    if len(items) > MAX_PARAMETERS:
        raise ValueError(f"{name} holds {len(items)} settings; at most {MAX_PARAMETERS}")
    out: dict[str, bool | int | float | str] = {}
    for key, v in items:
        if not isinstance(key, str) or not _NAME.fullmatch(key) or len(key) > max_name:
            raise ValueError(f"{name}: {key!r} is not a parameter name (letters, digits and "
                             f"_, not starting with a digit, at most {max_name} characters)")
        if key in out:
            raise ValueError(f"{name}: {key!r} is given twice")
        if isinstance(v, (bool, np.bool_)):
            out[key] = bool(v)
        elif isinstance(v, (int, np.integer)):
            if abs(int(v)) > 2**53:
                raise ValueError(f"{name}: {key} = {v} is too large (at most 2**53)")
            out[key] = int(v)
        elif isinstance(v, (float, np.floating)) and math.isfinite(v):
            out[key] = float(v)
        elif isinstance(v, str) and len(v) <= _MAX_PARAMETER_TEXT:
            try:
                v.encode("utf-8")
            except UnicodeEncodeError:
                raise ValueError(f"{name}: {key} holds a character that is not valid "
                                 "Unicode") from None
            out[key] = v
        else:
            raise ValueError(f"{name}: {key} = {v!r} must be a finite number, true/false or "
                             f"a text of at most {_MAX_PARAMETER_TEXT} characters")
    return tuple(sorted(out.items()))


def parse_parameters(text: str) -> tuple[tuple[str, bool | int | float | str], ...]:
    """Named settings typed as ``"name = value, name = value"`` (the screen's form):
    numbers become numbers, ``true``/``false`` booleans, anything else text.

    Raises
    ------
    FieldError
        For a piece that is not ``name = value`` (naming it).
    """
    items = []
    for piece in (p.strip() for p in str(text).split(",")):
        if not piece:
            continue
        key, eq, raw = piece.partition("=")
        key, raw = key.strip(), raw.strip()
        if not eq or not key or not raw:
            raise FieldError(
                f"pulse_parameters: {piece!r} is not name = value",
                field=declaration("radar", "pulse_parameters"), value=text,
                screen=f"Pulse parameters: write name = value pairs separated by commas "
                       f"('{piece}' is not one).")
        value: bool | int | float | str = raw
        if raw.lower() in ("true", "false"):
            value = raw.lower() == "true"
        else:
            for conv in (int, float):
                try:
                    value = conv(raw)
                    break
                except ValueError:
                    continue
        items.append((key, value))
    return check("radar", "pulse_parameters", items)


def format_parameters(pairs: Any) -> str:
    """Named settings in the screen's form, ``"name = value, ..."`` (see
    :func:`parse_parameters`)."""
    def show(v: Any) -> str:
        return ("true" if v else "false") if isinstance(v, bool) else f"{v}"

    return ", ".join(f"{k} = {show(v)}" for k, v in pairs)


def _screen_refusal(f: Field, value: Any, lo: float, hi: float, lo_open: bool,
                    hi_open: bool) -> str:
    kind = f.kind
    if kind == "parameters":
        return (f"{f.label}: write name = value pairs (names of letters, digits and _; "
                "values numbers, true/false or short words).")
    if kind == "boolean":
        return f"{f.label}: choose yes or no."
    if kind == "choice":
        return f"{f.label}: choose one of {', '.join(f.allowed())}."
    if kind == "string":
        if not isinstance(value, str):
            return f"{f.label}: type some text."
        return f"{f.label} is {len(value)} characters long: shorten it to {f.max_length}."
    try:
        x = float(value)
    except OverflowError:  # an integer too long for a float: far out of any range
        x = math.inf if value > 0 else -math.inf
    except (TypeError, ValueError):
        return f"{f.label}: type a number."
    if math.isinf(x) and isinstance(value, (int, np.integer)) and not isinstance(value, bool):
        return f"{f.label} is far too large: use {_range_words(f, lo, hi)}."
    if isinstance(value, bool) or not math.isfinite(x):
        return f"{f.label}: type a number."
    if kind == "integer" and x != int(x):
        return f"{f.label}: type a whole number."
    if (x <= lo) if lo_open else (x < lo):
        what = "more than" if lo_open else "at least"
        bound = lo
    else:
        what = "less than" if hi_open else "at most"
        bound = hi
    if math.isinf(lo) or math.isinf(hi):
        span = f"use {what} {f.show(bound)}"
    else:
        span = f"use {_range_words(f, lo, hi)}"
    return f"{f.label} {f.show(x)} is out of range: {span}."


def refusal(f: Field, message: str, screen: str, value: Any) -> FieldError:
    """A :class:`FieldError` for a consistency rule of ``f`` (two fields together)."""
    return FieldError(message, field=f, value=value, screen=screen)


# --------------------------------------------------------------------------- paths
_TOKEN = re.compile(r"([A-Za-z_][A-Za-z0-9_]*)(\[(\*|\d+)\])?")
#: Group of the items in each container of a scenario (``objects`` go by their kind).
_CONTAINERS = {"snowpack": "snowpack", "ground": "ground", "radar": "radar",
               "survey": "survey", "clutter": "clutter", "persons": "person",
               "layers": "layer"}


def _parse(path: str) -> list[tuple[str, str | None]]:
    if not isinstance(path, str) or not path:
        raise ValueError(f"path must be a field path such as 'persons[0].depth_m', "
                         f"got {path!r}")
    out = []
    for part in path.split("."):
        m = _TOKEN.fullmatch(part)
        if m is None:
            raise ValueError(f"path {path!r}: {part!r} is not a field name with an "
                             "optional [index] or [*]")
        out.append((m.group(1), m.group(3)))
    return out


def declaration_at(path: str, scenario: Any = None) -> Field:
    """The declaration of the field at ``path`` of a scenario.

    Parameters
    ----------
    path : str
        ``"radar.dt_s"``, ``"persons[0].depth_m"``, ``"persons[*].depth_m"``,
        ``"snowpack.layers[2].lwc_percent"``, ``"objects[1].diameter_m"``, ``"name"``.
    scenario : Scenario, optional
        Needed only for ``objects[i]`` paths whose field several object kinds share
        with different declarations (then the kind of item ``i`` decides).

    Raises
    ------
    ValueError
        If the path names no declared field.
    """
    tokens = _parse(path)
    group = "scenario"
    objects_at: str | None = None
    for k, (name, index) in enumerate(tokens):
        last = k == len(tokens) - 1
        if last:
            if index is not None:
                raise ValueError(f"path {path!r} ends in a list, not a field")
            if objects_at is not None:
                return _object_field(path, name, objects_at, scenario)
            if name in FIELDS.get(group, {}):
                return FIELDS[group][name]
            raise ValueError(f"path {path!r}: {group} has no declared field {name!r}; "
                             f"known: {', '.join(FIELDS.get(group, {}))}")
        if name == "objects" and group == "scenario" and index is not None:
            objects_at = index
            continue
        if name not in _CONTAINERS or objects_at is not None:
            raise ValueError(f"path {path!r}: {name!r} is not a part of a scenario")
        needs_index = name in ("persons", "layers")
        if needs_index != (index is not None):
            raise ValueError(f"path {path!r}: {name!r} "
                             + ("needs an [index] or [*]" if needs_index else
                                "takes no index"))
        group = _CONTAINERS[name]
    raise ValueError(f"path {path!r} names no field")  # pragma: no cover - loop returns


def _object_field(path: str, name: str, index: str, scenario: Any) -> Field:
    if scenario is not None and index != "*":
        i = int(index)
        if i >= len(scenario.objects):
            raise ValueError(f"path {path!r}: the scenario has {len(scenario.objects)} "
                             "debris objects")
        group = scenario.objects[i].kind
        if name in FIELDS.get(group, {}):
            return FIELDS[group][name]
        raise ValueError(f"path {path!r}: a {group} has no declared field {name!r}")
    found = [FIELDS[g][name] for g in OBJECT_GROUPS if name in FIELDS.get(g, {})]
    if not found:
        raise ValueError(f"path {path!r}: no debris object has a field {name!r}")
    if len({(f.low, f.high, f.unit) for f in found}) > 1 and scenario is None:
        raise ValueError(f"path {path!r}: {name!r} differs between object kinds; pass the "
                         "scenario so the object's kind decides")
    return found[0]


def value_at(scenario: Any, path: str) -> Any:
    """The value at ``path`` (SI); a list of values when the path holds ``[*]``."""
    declaration_at(path, scenario)
    return _get(scenario, _parse(path))


def _get(obj: Any, tokens: list[tuple[str, str | None]]) -> Any:
    (name, index), rest = tokens[0], tokens[1:]
    value = getattr(obj, name)
    if index is None:
        return _get(value, rest) if rest else value
    if index == "*":
        return [_get(v, rest) for v in value]
    i = int(index)
    if i >= len(value):
        raise ValueError(f"{name}[{i}]: there are only {len(value)}")
    return _get(value[i], rest)


def with_value(scenario: Any, path: str, value: Any) -> Any:
    """``scenario`` with the field at ``path`` set to ``value`` (SI), validated.

    Every value object on the way is rebuilt with ``dataclasses.replace``, so the
    constructors check the new value and the whole scenario's consistency. A ``[*]`` in
    the path sets the field of every item.

    Raises
    ------
    ValueError
        If the path names no declared field, or the value is refused (a
        :class:`FieldError` whose :attr:`~FieldError.screen` message suits a screen).
    """
    declaration_at(path, scenario)
    return _set(scenario, _parse(path), value)


def _set(obj: Any, tokens: list[tuple[str, str | None]], value: Any) -> Any:
    (name, index), rest = tokens[0], tokens[1:]
    if index is None:
        new = _set(getattr(obj, name), rest, value) if rest else value
        return dataclasses.replace(obj, **{name: new})
    items = list(getattr(obj, name))
    chosen = range(len(items)) if index == "*" else [int(index)]
    for i in chosen:
        if i >= len(items):
            raise ValueError(f"{name}[{i}]: there are only {len(items)}")
        item = items[i]
        if rest[1:]:
            items[i] = _set(item, rest, value)
        else:
            items[i] = dataclasses.replace(item, **{rest[0][0]: value})
    return dataclasses.replace(obj, **{name: tuple(items)})


def iter_declarations() -> list[Field]:
    """Every declaration, in declaration order."""
    return list(_DECLARED)


__all__ += ["iter_declarations", "declare", "refusal", "SAMPLES", "RHO_ICE_KG_M3"]
