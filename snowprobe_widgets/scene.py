"""The survey scenario: the scene, the radar, the survey line and the debris clutter.

A :class:`Scenario` is a frozen, hashable value object validated on construction (its own
fields and their consistency: every buried thing lies inside the snow and near the line),
so ``dataclasses.replace`` works at every level and re-checks the result. The physical
scene objects (:class:`Layer`, :class:`Snowpack`, :class:`Ground`, :class:`Person`,
:class:`Boulder`, :class:`Branch`, :class:`MetalPlate`) live in
:mod:`snowprobe_widgets.scene_objects` and are re-exported here.

Coordinates: ``x`` along the survey line (``position_m``), ``y`` across it
(``offset_m``), ``z`` depth below the snow surface, positive down; SI units throughout.
"""

from __future__ import annotations

import functools
import math
import os
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ._validate import check_range
from .fields import SAMPLES, FieldError, declaration, plain_number
from .fields import check as _check
from .scene_objects import (
    Boulder,
    Branch,
    DebrisObject,
    Ground,
    Layer,
    MetalPlate,
    Person,
    Snowpack,
)
from .targets import kinds_in

__all__ = [
    "Layer",
    "Snowpack",
    "Ground",
    "Person",
    "Boulder",
    "Branch",
    "MetalPlate",
    "DebrisObject",
    "Radar",
    "Survey",
    "Clutter",
    "ClutterField",
    "Scenario",
]

_MAX_TRACES = 20_000
_MAX_PERSONS = 50
_MAX_OBJECTS = 1000
_MAX_SCATTERERS = 100_000
#: Buried things must lie within this distance of the survey line (along and across), m.
_LINE_MARGIN_M = 5.0
#: Half-width of the strip around the line that the clutter fills, m.
_CLUTTER_HALF_WIDTH_M = 1.0
#: Thickness range of the clutter's thin random layers, m (invented demo figures).
_THIN_LAYER_M = (0.01, 0.05)
_DEPTH_TOL_M = 1e-9
#: Highest centre frequency a radar may have, Hz (declared in fields.py).
MAX_CENTER_FREQUENCY_HZ = declaration("radar", "center_frequency_hz").high
#: Amplitude level of the half-power points of the two-way (transmit x receive) response,
#: read on the one-way spectrum: |S|^2 = 1/2 of its peak where |S| = 2^(-1/4) of it.
TWO_WAY_HALF_POWER = 2.0 ** -0.25


def _set(obj: object, name: str, value: Any) -> None:
    object.__setattr__(obj, name, value)


def _check_fields(obj: object, group: str, names: tuple[str, ...]) -> None:
    """Check each named field of ``obj`` against its declaration in ``fields``."""
    for name in names:
        _set(obj, name, _check(group, name, getattr(obj, name)))


def _frozen(x: Any) -> np.ndarray:
    a = np.array(x, dtype=float, copy=True)
    a.setflags(write=False)
    return a


# --------------------------------------------------------------------------- radar


@dataclass(frozen=True)
class Radar:
    """The radar system: pulse, power, noise, sampling, antenna.

    Parameters
    ----------
    pulse : str
        Pulse-shape key of :func:`snowprobe_widgets.pulses.pulse_names` ("ricker", ...).
    center_frequency_hz : float
        Centre frequency, Hz, in [50 MHz, 6 GHz] (to 6 GHz the materials hold; published
        drone-borne ultra-wideband radars for avalanche victims work at 0.7-4.5 GHz).
        Where a model of the scene is not calibrated at it, the scenario says so
        (:func:`snowprobe_widgets.validity.scenario_warnings`).
    bandwidth_hz : float or None
        Bandwidth, Hz, for pulses that take one; ``None`` uses the pulse's natural band.
    transmit_power_dbm : float
        Transmitted power, dBm, in [-30, 60].
    noise_floor_dbm : float
        RMS receiver noise of one raw (unstacked) trace, dBm, in [-200, 0]; below the
        transmit power.
    stacking : int
        Number of raw traces averaged per recorded trace, in [1, 65536].
    antenna_gain_dbi : float
        Antenna gain, dBi, in [-10, 30].
    dt_s : float
        Sampling interval, s, in [1 ps, 10 ns]; at most 1/(2 f_high) of the pulse band.
    time_window_s : float
        Recording window, s; ``round(time_window_s / dt_s)`` samples, 64 to 8192.
    antenna_height_m : float
        Antenna height above the snow surface, m, in [0.05, 50] (sled-borne to helicopter). The
        point-antenna model needs the antenna off the surface: a ground-coupled antenna
        (height 0) is outside it and refused.
    beamwidth_deg : float
        Full -3 dB beamwidth in air, deg, in [5, 180].
    polarization : {"across_line", "along_line"}
        Direction of the antenna's electric field over the snow, relative to the survey
        line. Default "across_line": the antennas' long axes across the line, the usual
        broadside arrangement of a survey (common practice). Matters for objects whose
        echo depends on it (a thin branch along or across the field).
    antenna_band_low_hz, antenna_band_high_hz : float or None
        Band the antenna radiates and receives with its stated gain, Hz, in (0, 20 GHz],
        low < high. ``None`` takes the edge of the half-power band of the pulse sent and
        received: an antenna's band is quoted at its half-power points (common practice),
        and a monostatic antenna's echo passes its response twice, the pulse being its
        one-way response (by reciprocity it receives as it radiates), so the echo's band
        is where |S|^2 stays above half its peak, |S| above 2^(-1/4) of it: 0.72-1.31 f_c
        for a Ricker pulse (from REFERENCES 8.1). The link budget counts only echo energy
        inside it.
    dynamic_range_db : float
        Instantaneous dynamic range of the receiver, dB, in [20, 200]: the gain is set so
        the surface echo does not clip, and nothing more than this below it is recorded.
        Default 96 dB, a 16-bit digitiser (6.02 dB per bit; common practice).
    ringing_level_db : float
        Residual antenna ringing and direct coupling (after background removal), as a
        received amplitude relative to the transmitted power, dB, in [-200, 0]; it masks
        echoes arriving within ``ringing_time_s`` of transmission. Default -60 dB, an
        assumed figure (no published value at hand): set it from the antenna's data.
    ringing_time_s : float or None
        How long the ringing lasts after transmission, s, in [0, 1 us]; ``None``: three
        periods of the centre frequency (an assumed figure, as above).
    pulse_parameters : mapping or tuple of (name, value) pairs
        The pulse shape's own settings
        (:func:`snowprobe_widgets.pulses.pulse_parameters` lists them with their defaults;
        e.g. ``{"n_steps": 512}`` for "stepped_frequency", or a plugin spectrum function's
        keyword parameters). Held as a sorted tuple of pairs; empty: the defaults. A name
        the pulse does not take is refused.
    """

    pulse: str = "ricker"
    center_frequency_hz: float = 800e6
    bandwidth_hz: float | None = None
    transmit_power_dbm: float = 20.0
    noise_floor_dbm: float = -80.0
    stacking: int = 16
    antenna_gain_dbi: float = 6.0
    dt_s: float = 1e-10
    time_window_s: float = 51.2e-9
    antenna_height_m: float = 0.5
    beamwidth_deg: float = 60.0
    polarization: str = "across_line"
    antenna_band_low_hz: float | None = None
    antenna_band_high_hz: float | None = None
    dynamic_range_db: float = 96.0
    ringing_level_db: float = -60.0
    ringing_time_s: float | None = None
    pulse_parameters: tuple[tuple[str, Any], ...] = ()

    def __post_init__(self) -> None:
        _check_fields(self, "radar", ("pulse", "pulse_parameters", "center_frequency_hz",
                                      "bandwidth_hz", "transmit_power_dbm"))
        self._check_pulse_parameters()
        _set(self, "noise_floor_dbm", _check(
            "radar", "noise_floor_dbm", self.noise_floor_dbm,
            high=min(0.0, self.transmit_power_dbm), high_open=self.transmit_power_dbm <= 0.0))
        _check_fields(self, "radar", ("stacking", "antenna_gain_dbi", "dt_s", "time_window_s"))
        lo, hi = SAMPLES
        n = self.n_samples
        if not lo <= n <= hi:
            window = declaration("radar", "time_window_s")
            raise FieldError(
                f"time_window_s = {self.time_window_s:g} s at dt_s = {self.dt_s:g} s gives "
                f"{n} samples; allowed range [{lo}, {hi}] samples",
                field=window, value=self.time_window_s,
                screen=f"Time window {window.show(self.time_window_s)} at a sample interval "
                       f"of {declaration('radar', 'dt_s').show(self.dt_s)} gives {n} "
                       f"samples; {lo} to {hi} allowed: use a window of "
                       f"{window.show(lo * self.dt_s)} to {window.show(hi * self.dt_s)}, or "
                       "change the sample interval.")
        _check_fields(self, "radar", ("antenna_height_m", "beamwidth_deg", "polarization",
                                      "antenna_band_low_hz", "antenna_band_high_hz"))
        lo_band, hi_band = self.antenna_band_hz
        if lo_band >= hi_band:
            low = declaration("radar", "antenna_band_low_hz")
            raise FieldError(
                f"antenna band {lo_band:g}-{hi_band:g} Hz is empty: antenna_band_low_hz must "
                "lie below antenna_band_high_hz", field=low, value=lo_band,
                screen=f"Antenna band {low.show(lo_band)} to {low.show(hi_band)} is empty: "
                       "set its low edge below its high edge.")
        _check_fields(self, "radar", ("dynamic_range_db", "ringing_level_db",
                                      "ringing_time_s"))
        f_high = _band_high_hz(self.make_pulse())
        limit = 1.0 / (2.0 * f_high)
        if self.dt_s > limit * (1 + 1e-9):
            dt = declaration("radar", "dt_s")
            raise FieldError(
                f"dt_s = {self.dt_s:g} s is too coarse for the pulse: its band reaches "
                f"{f_high:g} Hz, so the Nyquist limit needs dt_s <= 1/(2 f_high) = "
                f"{limit:g} s",
                field=dt, value=self.dt_s,
                screen=f"Sample interval {dt.show(self.dt_s)} is too coarse for a "
                       f"{plain_number(self.center_frequency_hz / 1e6)} MHz pulse: use "
                       f"{plain_number(math.floor(limit / 1e-12 * 10) / 10)} ps or less, or "
                       "a lower centre frequency.")

    def _check_pulse_parameters(self) -> None:
        """Refuse a setting the pulse does not take, a value not of its default's type, or
        one the pulse itself refuses, naming ``pulse_parameters``."""
        from . import pulses

        if not self.pulse_parameters:
            return
        f = declaration("radar", "pulse_parameters")
        accepted = pulses.pulse_parameters(self.pulse)
        unknown = [k for k, _ in self.pulse_parameters if k not in accepted]
        if unknown:
            names = ", ".join(f"{k} (default {v!r})" for k, v in accepted.items()) or "none"
            raise FieldError(
                f"pulse_parameters: pulse {self.pulse!r} has no parameter {unknown[0]!r}; "
                f"its parameters: {names}", field=f, value=self.pulse_parameters,
                screen=f"Pulse parameters: the {self.pulse.replace('_', ' ')} pulse has no "
                       f"setting {unknown[0]}; it takes: {names}.")
        for key, value in self.pulse_parameters:
            want = _parameter_type(accepted[key])
            if want is not None and not isinstance(value, want[0]):
                raise FieldError(
                    f"pulse_parameters: {key} = {value!r} must be {want[1]} (its default is "
                    f"{accepted[key]!r})", field=f, value=self.pulse_parameters,
                    screen=f"Pulse parameters: {key} takes {want[1]} (default "
                           f"{accepted[key]!r}), not {value!r}.")
        try:  # the values, as the pulse itself checks them
            self.make_pulse()
        except FieldError:
            raise
        except (TypeError, ValueError) as exc:
            raise FieldError(f"pulse_parameters: {exc}", field=f, value=self.pulse_parameters,
                             screen=f"Pulse parameters: {exc}.") from None

    @property
    def n_samples(self) -> int:
        """Samples per trace, ``round(time_window_s / dt_s)``."""
        return int(round(self.time_window_s / self.dt_s))

    @property
    def time_s(self) -> np.ndarray:
        """Two-way travel time of each sample, s, shape (n_samples,), from 0."""
        return np.arange(self.n_samples) * self.dt_s

    @property
    def system_performance_db(self) -> float:
        """Transmit power over the stacked noise floor, dB:
        ``transmit_power_dbm - noise_floor_dbm + 10 log10(stacking)`` (stacking N traces
        lowers uncorrelated noise power N-fold; common practice)."""
        return float(self.transmit_power_dbm - self.noise_floor_dbm
                     + 10.0 * math.log10(self.stacking))

    @property
    def antenna_band_hz(self) -> tuple[float, float]:
        """(low, high) edges of the antenna's band, Hz: the fields, or the two-way
        half-power band of the pulse where they are ``None``."""
        lo, hi = self.antenna_band_low_hz, self.antenna_band_high_hz
        if lo is None or hi is None:
            p_lo, p_hi = self.make_pulse().band_hz(TWO_WAY_HALF_POWER)
            lo = p_lo if lo is None else lo
            hi = p_hi if hi is None else hi
        return float(lo), float(hi)

    @property
    def ringing_duration_s(self) -> float:
        """How long the antenna rings after transmission, s (``ringing_time_s`` or three
        periods of the centre frequency)."""
        if self.ringing_time_s is not None:
            return float(self.ringing_time_s)
        return 3.0 / self.center_frequency_hz

    def make_pulse(self) -> Any:
        """The transmitted pulse (``pulses.make_pulse(pulse, center_frequency_hz,
        bandwidth_hz, **pulse_parameters)``)."""
        from . import pulses

        return pulses.make_pulse(self.pulse, self.center_frequency_hz, self.bandwidth_hz,
                                 **dict(self.pulse_parameters))


def _parameter_type(default: Any) -> tuple[tuple[type, ...], str] | None:
    """The type a pulse parameter's value must have, from its default (a value of a
    parameter whose default is None is not constrained)."""
    if isinstance(default, bool):
        return (bool,), "true or false"
    if isinstance(default, int):
        return (int,), "a whole number"
    if isinstance(default, float):
        return (int, float), "a number"
    if isinstance(default, str):
        return (str,), "a word"
    return None


def _band_high_hz(pulse: Any) -> float:
    """Upper edge of the pulse's band, Hz: where its amplitude spectrum falls below
    -60 dB of the peak (a common-practice sampling criterion)."""
    return float(pulse.band_hz(1e-3)[1])


# --------------------------------------------------------------------------- survey


@dataclass(frozen=True)
class Survey:
    """A straight survey line with evenly spaced traces.

    Parameters
    ----------
    start_m, end_m : float
        Along-line coordinates of the first and last trace, m, in [-10 km, 10 km],
        ``end_m > start_m``.
    trace_spacing_m : float
        Distance between traces, m, in [1 mm, 100 m]; at most 20,000 traces in all.
    """

    start_m: float = 0.0
    end_m: float = 10.0
    trace_spacing_m: float = 0.05

    def __post_init__(self) -> None:
        _check_fields(self, "survey", ("start_m",))
        _set(self, "end_m", _check("survey", "end_m", self.end_m, low=self.start_m,
                                   low_open=True))
        _check_fields(self, "survey", ("trace_spacing_m",))
        n = self.n_traces
        if n > _MAX_TRACES:
            spacing = declaration("survey", "trace_spacing_m")
            raise FieldError(
                f"a {self.length_m:g} m line at trace_spacing_m = {self.trace_spacing_m:g} m "
                f"has {n} traces; at most {_MAX_TRACES} allowed (shorten the line or widen "
                "the spacing)",
                field=spacing, value=self.trace_spacing_m,
                screen=f"A {plain_number(self.length_m)} m line at a trace spacing of "
                       f"{spacing.show(self.trace_spacing_m)} has {n} traces; at most "
                       f"{_MAX_TRACES}: widen the spacing to "
                       f"{spacing.show(self.length_m / (_MAX_TRACES - 1))} or more, or "
                       "shorten the line.")

    @classmethod
    def from_speed(
        cls, start_m: float, end_m: float, speed_m_s: float, trace_rate_hz: float
    ) -> Survey:
        """A survey from the platform speed and the trace rate: spacing = speed / rate.

        Parameters
        ----------
        speed_m_s : float
            Platform speed along the line, m/s, in (0, 100].
        trace_rate_hz : float
            Recorded traces per second, Hz, in (0, 1 MHz].
        """
        v = check_range("speed_m_s", speed_m_s, 0.0, 100.0, unit="m/s", low_open=True)
        r = check_range("trace_rate_hz", trace_rate_hz, 0.0, 1e6, unit="Hz", low_open=True)
        spacing = v / r
        if not 1e-3 <= spacing <= 100.0:
            raise ValueError(
                f"speed_m_s = {v:g} m/s at trace_rate_hz = {r:g} Hz gives a trace spacing "
                f"of {spacing:g} m; allowed range [0.001, 100] m")
        return cls(start_m, end_m, spacing)

    @property
    def length_m(self) -> float:
        """Line length, m."""
        return self.end_m - self.start_m

    @property
    def n_traces(self) -> int:
        """Number of traces: every spacing step from ``start_m`` not past ``end_m``
        (within 1e-9 of a step, so 0..10 m at 0.05 m gives 201)."""
        return int(math.floor(self.length_m / self.trace_spacing_m + 1e-9)) + 1

    @property
    def position_m(self) -> np.ndarray:
        """Along-line position of each trace, m, shape (n_traces,)."""
        return self.start_m + np.arange(self.n_traces) * self.trace_spacing_m


# --------------------------------------------------------------------------- clutter


@dataclass(frozen=True, eq=False)
class ClutterField:
    """One seeded realisation of the debris clutter (read-only arrays).

    Attributes
    ----------
    x_m, y_m, z_m : ndarray, shape (n_scatterers,)
        Scatterer centres: along-line, across-line, depth below the surface, m.
    size_m : ndarray, shape (n_scatterers,)
        Scatterer diameters, m.
    layer_depth_m, layer_thickness_m : ndarray, shape (n_layers,)
        Top depth and thickness of each thin random layer, m, sorted by depth.
    layer_density_change_kg_m3 : ndarray, shape (n_layers,)
        Density of the thin layer minus that of the snow around it, kg/m3.
    """

    x_m: np.ndarray
    y_m: np.ndarray
    z_m: np.ndarray
    size_m: np.ndarray
    layer_depth_m: np.ndarray
    layer_thickness_m: np.ndarray
    layer_density_change_kg_m3: np.ndarray

    def __post_init__(self) -> None:
        for f in ("x_m", "y_m", "z_m", "size_m", "layer_depth_m", "layer_thickness_m",
                  "layer_density_change_kg_m3"):
            _set(self, f, _frozen(getattr(self, f)))

    @property
    def n_scatterers(self) -> int:
        """Number of small scatterers."""
        return int(self.x_m.size)

    @property
    def n_layers(self) -> int:
        """Number of thin random layers."""
        return int(self.layer_depth_m.size)


@dataclass(frozen=True)
class Clutter:
    """Statistics of the debris clutter: small random scatterers and thin random layers.

    Parameters
    ----------
    scatterer_density_per_m3 : float
        Mean number of small scatterers (clods, blocks) per m3 of snow, in [0, 1000].
    scatterer_size_m : float
        Mean scatterer diameter, m, in [0.005, 2]; each size is drawn uniformly from
        0.5 to 1.5 times it.
    thin_layer_count : int
        Number of thin random layers, in [0, 500].
    thin_layer_contrast : float
        Relative density change of each thin layer against the snow around it, in [0, 1].
    seed : int
        Random seed, in [0, 2**32 - 1]; one seed always gives the same clutter.
    """

    scatterer_density_per_m3: float = 0.0
    scatterer_size_m: float = 0.1
    thin_layer_count: int = 0
    thin_layer_contrast: float = 0.05
    seed: int = 0

    def __post_init__(self) -> None:
        _check_fields(self, "clutter", ("scatterer_density_per_m3", "scatterer_size_m",
                                        "thin_layer_count", "thin_layer_contrast", "seed"))

    def expected_scatterers(self, snowpack: Snowpack, survey: Survey) -> float:
        """Mean number of scatterers in the strip of +-1 m about the line, through the snow."""
        volume = survey.length_m * 2 * _CLUTTER_HALF_WIDTH_M * snowpack.depth_m
        return self.scatterer_density_per_m3 * volume

    def realise(self, snowpack: Snowpack, survey: Survey) -> ClutterField:
        """Draw the clutter for this snowpack and survey line.

        Scatterers: a Poisson number with mean :meth:`expected_scatterers`, centres uniform
        in x over the line, in y over +-1 m, in z over the snow depth (kept inside the
        snow where the size allows). Thin layers: ``thin_layer_count`` of them, tops
        uniform over the depth, thicknesses uniform in 1-5 cm (invented demo figures),
        density change ``+-thin_layer_contrast`` times the local layer density (random
        sign), clipped to keep the density within [30, 917] kg/m3. Scatterers and layers
        draw from independent streams of the seed, so changing one leaves the other alone.
        The last two draws are kept (the field is read-only), so the several readers of
        one update, and moves that change none of the three, draw nothing again.
        """
        return _realised(self, snowpack, survey)

    def _draw(self, snowpack: Snowpack, survey: Survey) -> ClutterField:
        depth = snowpack.depth_m
        seq_scat, seq_layers = np.random.SeedSequence(self.seed).spawn(2)
        rng = np.random.default_rng(seq_scat)
        n = int(rng.poisson(self.expected_scatterers(snowpack, survey)))
        x = rng.uniform(survey.start_m, survey.end_m, n)
        y = rng.uniform(-_CLUTTER_HALF_WIDTH_M, _CLUTTER_HALF_WIDTH_M, n)
        size = self.scatterer_size_m * rng.uniform(0.5, 1.5, n)
        r = np.minimum(0.5 * size, 0.5 * depth)
        z = r + rng.uniform(0.0, 1.0, n) * (depth - 2 * r)

        rng = np.random.default_rng(seq_layers)
        m = self.thin_layer_count
        top = np.sort(rng.uniform(0.0, depth, m))
        thick = np.minimum(rng.uniform(*_THIN_LAYER_M, m), depth - top)
        sign = rng.choice(np.array([-1.0, 1.0]), m)
        local = np.array([snowpack.layer_at(d).density_kg_m3 for d in top])
        new = np.clip(local * (1.0 + sign * self.thin_layer_contrast), 30.0, 917.0)
        return ClutterField(x, y, z, size, top, thick, new - local)


@functools.lru_cache(maxsize=2)  # a big field holds megabytes: the current and the last
def _realised(clutter: Clutter, snowpack: Snowpack, survey: Survey) -> ClutterField:
    return clutter._draw(snowpack, survey)


# --------------------------------------------------------------------------- scenario


@dataclass(frozen=True)
class Scenario:
    """A complete survey: snow, ground, what is buried, the radar and the survey line.

    Parameters
    ----------
    snowpack : Snowpack
    ground : Ground
    persons : sequence of Person
        Buried people (empty when nobody is buried); at most 50.
    objects : sequence of Boulder, Branch, MetalPlate (or a plugin kind's object)
        Debris and equipment; at most 1000. Every object's ``kind`` must be registered in
        :data:`snowprobe_widgets.targets.TARGETS`.
    radar : Radar
    survey : Survey
    clutter : Clutter
    name : str
        Short name (at most 200 characters).
    notes : str
        Free description (at most 20,000 characters).

    Raises
    ------
    ValueError
        On a wrong type, or when a person or object reaches below the snowpack, lies more
        than 5 m beyond either end of the survey line or more than 5 m to its side, or the
        clutter would hold more than 100,000 scatterers.
    """

    snowpack: Snowpack
    ground: Ground
    persons: tuple[Person, ...] = ()
    objects: tuple[DebrisObject, ...] = ()
    radar: Radar = field(default_factory=Radar)
    survey: Survey = field(default_factory=Survey)
    clutter: Clutter = field(default_factory=Clutter)
    name: str = ""
    notes: str = ""

    def __post_init__(self) -> None:
        for fname, cls in (("snowpack", Snowpack), ("ground", Ground), ("radar", Radar),
                           ("survey", Survey), ("clutter", Clutter)):
            value = getattr(self, fname)
            if not isinstance(value, cls):
                raise ValueError(f"{fname} must be a {cls.__name__}, got {type(value).__name__}")
        persons = self._tuple_of("persons", self.persons,
                                 tuple(k.value_type for k in kinds_in("persons")), _MAX_PERSONS)
        objects = self._tuple_of("objects", self.objects,
                                 tuple(k.value_type for k in kinds_in("objects")), _MAX_OBJECTS)
        _set(self, "persons", persons)
        _set(self, "objects", objects)
        _check_fields(self, "scenario", ("name", "notes"))
        snow = self.snowpack.depth_m
        s = self.survey
        for (where, item), who in zip(self._labelled_targets(), self._screen_names(),
                                      strict=True):
            label = getattr(item, "label", "")
            what = f"{where} ({item.kind} {label!r})" if label else f"{where} ({item.kind})"
            if item.bottom_depth_m > snow + _DEPTH_TOL_M:
                room = snow - (item.bottom_depth_m - item.depth_m)
                raise FieldError(
                    f"{what} at depth_m = {item.depth_m:g} m reaches down to "
                    f"{item.bottom_depth_m:g} m, deeper than the {snow:g} m snowpack",
                    field=declaration(item.kind, "depth_m"), value=item.depth_m,
                    screen=f"{who}: depth to top {plain_number(item.depth_m)} m puts the "
                           f"bottom at {plain_number(item.bottom_depth_m)} m, below the "
                           f"{plain_number(snow)} m of snow: use at most "
                           f"{plain_number(max(0.0, math.floor(100 * room) / 100))} m, or "
                           "add snow.")
            lo, hi = s.start_m - _LINE_MARGIN_M, s.end_m + _LINE_MARGIN_M
            if not lo <= item.position_m <= hi:
                raise FieldError(
                    f"{what} position_m = {item.position_m:g} m is outside the survey line "
                    f"+- {_LINE_MARGIN_M:g} m; allowed range [{lo:g}, {hi:g}] m",
                    field=declaration(item.kind, "position_m"), value=item.position_m,
                    screen=f"{who}: position along line {plain_number(item.position_m)} m is "
                           f"more than {_LINE_MARGIN_M:g} m beyond the line "
                           f"({plain_number(s.start_m)} to {plain_number(s.end_m)} m): use "
                           f"{plain_number(lo)} to {plain_number(hi)} m, or move the line.")
            if abs(item.offset_m) > _LINE_MARGIN_M:
                raise FieldError(
                    f"{what} offset_m = {item.offset_m:g} m is too far from the survey line; "
                    f"allowed range [-{_LINE_MARGIN_M:g}, {_LINE_MARGIN_M:g}] m",
                    field=declaration(item.kind, "offset_m"), value=item.offset_m,
                    screen=f"{who}: offset from line {plain_number(item.offset_m)} m is too "
                           f"far to the side: use -{_LINE_MARGIN_M:g} to "
                           f"{_LINE_MARGIN_M:g} m.")
        n_scat = self.clutter.expected_scatterers(self.snowpack, self.survey)
        if n_scat > _MAX_SCATTERERS:
            raise ValueError(
                f"clutter scatterer_density_per_m3 = "
                f"{self.clutter.scatterer_density_per_m3:g} /m3 over this line and snowpack "
                f"means about {n_scat:.0f} scatterers; at most {_MAX_SCATTERERS} allowed")

    @staticmethod
    def _tuple_of(name: str, value: Any, classes: tuple[type, ...], max_n: int) -> tuple:
        if isinstance(value, (str, bytes)) or not hasattr(value, "__iter__"):
            raise ValueError(f"{name} must be a sequence, got {value!r}")
        items = tuple(value)
        if len(items) > max_n:
            raise ValueError(f"{name} has {len(items)} entries; at most {max_n} allowed")
        allowed = " or ".join(c.__name__ for c in classes)
        for i, item in enumerate(items):
            if not isinstance(item, classes):
                raise ValueError(f"{name}[{i}] must be a {allowed}, got {type(item).__name__}")
        return items

    def _screen_names(self) -> list[str]:
        """What the screen calls each target: "Person 1", "Object 2 (boulder)"."""
        return ([p.label or f"Person {i + 1}" for i, p in enumerate(self.persons)]
                + [f"Object {i + 1} ({o.kind})" for i, o in enumerate(self.objects)])

    def _labelled_targets(self) -> list[tuple[str, Any]]:
        return ([(f"persons[{i}]", p) for i, p in enumerate(self.persons)]
                + [(f"objects[{i}]", o) for i, o in enumerate(self.objects)])

    @property
    def targets(self) -> tuple[Any, ...]:
        """Every buried thing: the persons, then the objects."""
        return self.persons + self.objects

    def clutter_field(self) -> ClutterField:
        """The seeded clutter of this scenario (``clutter.realise(snowpack, survey)``)."""
        return self.clutter.realise(self.snowpack, self.survey)

    def _repr_html_(self) -> str:
        from .notebook_html import scenario_html

        return scenario_html(self)

    # ----------------------------------------------------------------- files

    def to_json(self) -> str:
        """The scenario as a versioned JSON document (see :mod:`scenario_files`)."""
        from .scenario_files import dumps

        return dumps(self)

    @classmethod
    def from_json(cls, text: str | bytes) -> Scenario:
        """Read a scenario from JSON text, validating every field.

        Raises
        ------
        ScenarioFileError
            On malformed, truncated, oversized or unknown content.
        """
        from .scenario_files import loads

        return loads(text)

    def save(self, path: str | os.PathLike[str]) -> None:
        """Write the scenario to ``path`` atomically (temporary file, then rename)."""
        from .scenario_files import save

        save(self, path)

    @classmethod
    def load(cls, path: str | os.PathLike[str]) -> Scenario:
        """Read a scenario file written by :meth:`save` (or by hand), validating it."""
        from .scenario_files import load

        return load(path)

    # ----------------------------------------------------------------- demos

    @staticmethod
    def examples() -> tuple[str, ...]:
        """Names of the shipped demo scenarios (and any added by plugins)."""
        from .examples import example_names

        return example_names()

    @classmethod
    def example(cls, name: str) -> Scenario:
        """Build the demo scenario ``name`` (one of :meth:`examples`)."""
        from .examples import make_example

        return make_example(name)

    @classmethod
    def default(cls) -> Scenario:
        """The default demo: a shallow burial in dry powder."""
        return cls.example("shallow_dry_powder")
