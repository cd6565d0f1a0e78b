"""Materials lab: how snow, body tissue and soil slow, shorten and absorb radar waves.

Curves of real permittivity, loss factor, velocity, attenuation and wavelength against
frequency, density or water content, drawn from the dielectric models of
:mod:`snowprobe_widgets.materials` (every number comes from a ``Material`` method; this
module only chooses the inputs and draws).
"""

from __future__ import annotations

import html
import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import bqplot
import ipywidgets as widgets
import numpy as np

from snowprobe_widgets import materials as mat
from snowprobe_widgets.widgets._common import (
    as_f32,
    caution_box,
    dropdown,
    float_slider,
    guarded,
    log_slider,
    message_line,
    section_title,
    set_visible,
    share_plain_styles,
)

#: CSS class of the status line; browser tests wait on its ``draws=N`` text.
MATERIALS_STATUS_CLASS: str = "sp-materials-status"

MEDIA: dict[str, str] = {
    "snow (dry or wet)": "snow",
    "body tissue (skin, fat, muscle)": "tissue",
    "soil under the snow": "soil",
}
SWEEPS: dict[str, tuple[str, ...]] = {
    "snow": ("frequency", "density", "liquid water"),
    "tissue": ("frequency",),
    "soil": ("frequency", "soil water"),
}
_SWEEP_AXIS = {
    "frequency": "frequency (MHz)",
    "density": "dry snow density (kg/m3)",
    "liquid water": "liquid water content (% by volume)",
    "soil water": "soil water content (m3/m3)",
}
#: The five quantities drawn, with their axis labels.
QUANTITIES: tuple[tuple[str, str], ...] = (
    ("eps_real", "real permittivity eps' (-)"),
    ("eps_loss", "loss factor eps'' (-)"),
    ("velocity", "velocity (m/ns)"),
    ("attenuation", "one-way attenuation (dB/m)"),
    ("wavelength", "wavelength (cm)"),
)
_LOG_Y = {"eps_loss", "attenuation"}
_LOG_FLOOR = 1e-6
_N_POINTS = 121
_FREQ_RANGE_MHZ = (50.0, 3000.0)
_DENSITY_RANGE = (30.0, 917.0)
_LWC_RANGE = (0.0, 12.0)
_SOIL_RANGE = (0.0, 0.5)
_LINE_COLOURS = ("#1f5fa8", "#c2410c", "#2f855a", "#7b3fa0", "#b7791f")
_MHZ = 1e6


@dataclass(frozen=True)
class _Curve:
    label: str
    x: np.ndarray
    values: dict[str, np.ndarray]


def _evaluate(material: mat.Material, freq_hz: np.ndarray) -> dict[str, np.ndarray]:
    eps = np.atleast_1d(material.permittivity(freq_hz))
    return {
        "eps_real": eps.real,
        "eps_loss": np.maximum(-eps.imag, _LOG_FLOOR),
        "velocity": np.atleast_1d(material.velocity_m_ns(freq_hz)),
        "attenuation": np.maximum(np.atleast_1d(material.attenuation_db_m(freq_hz)), _LOG_FLOOR),
        "wavelength": 100.0 * np.atleast_1d(material.wavelength_m(freq_hz)),
    }


def _sweep_points(x: np.ndarray, make: Callable[[float], mat.Material],
                  freq_hz: float) -> tuple[np.ndarray, dict[str, np.ndarray]]:
    """Evaluate one material per x value at one frequency; values a model refuses are left
    out (for example more water than the pores of dense snow hold)."""
    kept, rows = [], []
    f = np.array([freq_hz])
    for xi in x:
        try:
            rows.append(_evaluate(make(float(xi)), f))
        except ValueError:
            continue
        kept.append(xi)
    if not rows:
        return np.zeros(0), {k: np.zeros(0) for k, _ in QUANTITIES}
    return np.asarray(kept), {k: np.concatenate([r[k] for r in rows]) for k, _ in QUANTITIES}


def _padded_range(lo: float, hi: float, *, log: bool) -> tuple[float, float]:
    """Axis limits around [lo, hi]: a nearly constant curve is drawn flat in the middle of
    a range of +-2 % (linear) or a factor 1.5 (log) instead of magnifying rounding noise."""
    if log:
        lo, hi = max(lo, 1e-30), max(hi, 1e-30)
        if hi / lo < 1.5:
            mid = math.sqrt(lo * hi)
            return mid / 1.5, mid * 1.5
        return lo / 1.1, hi * 1.1
    span = hi - lo
    mid = 0.5 * (lo + hi)
    if span < 0.04 * abs(mid) or span == 0.0:
        half = max(0.02 * abs(mid), 1e-12)
        return mid - half, mid + half
    low = lo - 0.05 * span
    if lo >= 0.0:
        low = max(low, 0.0)  # positive quantities keep a zero floor
    return low, hi + 0.05 * span


def _nice_ticks(lo: float, hi: float, n: int = 6) -> np.ndarray:
    """About ``n`` round tick values (1, 2 or 5 times a power of ten apart) in [lo, hi]."""
    span = hi - lo
    if not span > 0:
        return np.array([lo])
    raw = span / max(n - 1, 1)
    mag = 10.0 ** math.floor(math.log10(raw))
    step = next(m * mag for m in (1, 2, 5, 10) if m * mag >= raw)
    first = math.ceil(lo / step) * step
    return np.arange(first, hi + 0.5 * step, step)


class MaterialsExplorer(widgets.VBox):
    """Explore the dielectric models: curves against frequency, density or water content.

    Parameters
    ----------
    scenario : Scenario, optional
        Takes its radar centre frequency, first snow layer, snow temperature and soil
        water as the starting point (see :attr:`scenario`).

    Notes
    -----
    ``status`` (CSS class :data:`MATERIALS_STATUS_CLASS`) shows ``draws=N`` after every
    redraw. ``readout`` tabulates the values at the chosen point.
    """

    def __init__(self, scenario: Any = None, **kwargs: Any) -> None:
        self._draws = 0
        self._busy = False
        self._scenario = None
        self.medium = dropdown("material", list(MEDIA), "snow (dry or wet)")
        self.sweep = dropdown("across", list(SWEEPS["snow"]), "frequency")
        self.frequency = log_slider("frequency (MHz)", 800.0, *_FREQ_RANGE_MHZ,
                                    readout_format=".0f")
        self.density = float_slider("density (kg/m3)", 300.0, *_DENSITY_RANGE, 1.0,
                                    readout_format=".0f")
        self.lwc = float_slider("liquid water (%)", 0.0, *_LWC_RANGE, 0.1,
                                readout_format=".1f")
        self.temperature = float_slider("snow temperature (degC)", -5.0, -40.0, 0.0, 0.5,
                                        readout_format=".1f")
        self.soil_water = float_slider("soil water (m3/m3)", 0.15, *_SOIL_RANGE, 0.01)
        self.dry_model = dropdown("dry snow model", list(mat.dry_snow_models()),
                                  mat.DEFAULT_DRY_SNOW_MODEL)
        self.wet_model = dropdown("wet snow model", list(mat.wet_snow_models()),
                                  mat.DEFAULT_WET_SNOW_MODEL)
        self.compare_models = widgets.Checkbox(value=False, indent=False,
                                               description="draw every snow model")
        self.message = message_line()
        self.status = widgets.HTML(value="draws=0")
        self.status.add_class(MATERIALS_STATUS_CLASS)
        self.readout = widgets.HTML(value="")

        self._x_scale = bqplot.LinearScale()
        self.figures: dict[str, bqplot.Figure] = {}
        self._lines: dict[str, bqplot.Lines] = {}
        self._rules: dict[str, bqplot.Lines] = {}
        self._x_axes: list[bqplot.Axis] = []
        self._y_scales: dict[str, bqplot.Scale] = {}
        for key, label in QUANTITIES:
            y_scale = bqplot.LogScale() if key in _LOG_Y else bqplot.LinearScale()
            self._y_scales[key] = y_scale
            scales = {"x": self._x_scale, "y": y_scale}
            line = bqplot.Lines(x=np.zeros(0, np.float32), y=np.zeros(0, np.float32),
                                scales=scales, colors=list(_LINE_COLOURS), stroke_width=2,
                                display_legend=True, labels=[])
            rule = bqplot.Lines(x=np.zeros(2, np.float32), y=np.ones(2, np.float32),
                                scales=scales, colors=["#888888"], line_style="dashed",
                                stroke_width=1)
            x_axis = bqplot.Axis(scale=self._x_scale, label=_SWEEP_AXIS["frequency"],
                                 grid_lines="none", tick_format=".4g")
            self._x_axes.append(x_axis)
            y_axis = bqplot.Axis(scale=y_scale, side="left", label=label,
                                 label_offset="45px", grid_lines="dashed", tick_format=".3g",
                                 num_ticks=5)
            self.figures[key] = bqplot.Figure(
                marks=[line, rule], axes=[x_axis, y_axis], legend_location="top-right",
                padding_y=0.0,
                fig_margin={"top": 15, "bottom": 45, "left": 65, "right": 15},
                layout=widgets.Layout(width="420px", height="250px"))
            self._lines[key] = line
            self._rules[key] = rule

        controls = widgets.VBox([
            section_title("What to look at"), self.medium, self.sweep, self.frequency,
            self.density, self.lwc, self.temperature, self.soil_water, self.dry_model,
            self.wet_model, self.compare_models, self.message, self.status])
        f = self.figures
        grid = widgets.VBox([
            widgets.HBox([f["eps_real"], f["eps_loss"]]),
            widgets.HBox([f["velocity"], f["attenuation"]]),
            widgets.HBox([f["wavelength"], widgets.VBox(
                [section_title("At the chosen point"), self.readout],
                layout=widgets.Layout(width="420px", padding="8px"))]),
        ])
        header = widgets.HTML(value=(
            "<h3 style='margin:4px 0'>Materials lab</h3><div>How fast radar waves travel, "
            "how short they get and how much they are absorbed in snow, body tissue and "
            "soil. Dashed grey line: the chosen point.</div>"))
        super().__init__(children=[header, caution_box(), widgets.HBox([controls, grid])],
                         **kwargs)
        share_plain_styles(self)
        for w in (self.medium, self.sweep, self.frequency, self.density, self.lwc,
                  self.temperature, self.soil_water, self.dry_model, self.wet_model,
                  self.compare_models):
            w.observe(self._on_control, names="value")
        if scenario is not None:
            self.scenario = scenario
        else:
            self._sync_visibility()
            self.redraw()

    # ------------------------------------------------------------------ public API
    @property
    def draws(self) -> int:
        """Number of redraws so far."""
        return self._draws

    @property
    def scenario(self) -> Any:
        """The scenario last assigned (or None).

        Assigning one takes the radar centre frequency, the first snow layer's density and
        water, the snow temperature and (for a soil ground) the soil water into the
        controls and redraws once.
        """
        return self._scenario

    @scenario.setter
    def scenario(self, scenario: Any) -> None:
        layer = scenario.snowpack.layers[0]
        self._busy = True
        try:
            self.frequency.value = float(np.clip(scenario.radar.center_frequency_hz / _MHZ,
                                                 *_FREQ_RANGE_MHZ))
            self.density.value = float(layer.density_kg_m3)
            self.lwc.value = float(np.clip(layer.lwc_percent, *_LWC_RANGE))
            self.temperature.value = float(max(scenario.snowpack.temperature_c, -40.0))
            if scenario.ground.kind == "soil":
                self.soil_water.value = float(scenario.ground.water_fraction)
        finally:
            self._busy = False
        self._scenario = scenario
        self._sync_visibility()
        self.redraw()

    def curves(self) -> list[_Curve]:
        """The curves for the current controls (x in display units), one per line."""
        kind = MEDIA[self.medium.value]
        sweep = self.sweep.value
        f_hz = self.frequency.value * _MHZ
        if sweep == "frequency":
            x = np.geomspace(*_FREQ_RANGE_MHZ, _N_POINTS)
            return [_Curve(label, x, _evaluate(m, x * _MHZ)) for label, m in self._materials()]
        lo, hi = {"density": _DENSITY_RANGE, "liquid water": _LWC_RANGE,
                  "soil water": _SOIL_RANGE}[sweep]
        x = np.linspace(lo, hi, _N_POINTS)
        out = []
        for label, make in self._makers(kind, sweep):
            xs, values = _sweep_points(x, make, f_hz)
            out.append(_Curve(label, xs, values))
        return out

    def redraw(self) -> None:
        """Recompute every curve and the readout; a refused input shows a message."""
        guarded(self.message, self._redraw)

    # ------------------------------------------------------------------ internals
    def _snow_models(self) -> list[tuple[str, str]]:
        """(dry model, wet model) pairs to draw."""
        if not self.compare_models.value:
            return [(self.dry_model.value, self.wet_model.value)]
        if self.sweep.value != "liquid water" and self.lwc.value == 0.0:
            return [(d, self.wet_model.value) for d in mat.dry_snow_models()]
        return [(self.dry_model.value, w) for w in mat.wet_snow_models()]

    def _snow(self, density: float, lwc: float, dry: str, wet: str) -> mat.Material:
        return mat.snow(density, lwc, dry_model=dry, wet_model=wet,
                        temperature_c=self.temperature.value)

    def _materials(self) -> list[tuple[str, mat.Material]]:
        kind = MEDIA[self.medium.value]
        if kind == "tissue":
            return [(name, mat.tissue(name)) for name in mat.TISSUES] + [
                ("clothing", mat.clothing())]
        if kind == "soil":
            return [(f"soil {self.soil_water.value:g} m3/m3", mat.soil(self.soil_water.value))]
        d, w = self.density.value, self.lwc.value
        return [(self._snow_label(dry, wet, w), self._snow(d, w, dry, wet))
                for dry, wet in self._snow_models()]

    @staticmethod
    def _snow_label(dry: str, wet: str, lwc: float) -> str:
        return f"wet snow ({wet})" if lwc > 0 else f"dry snow ({dry})"

    def _makers(self, kind: str, sweep: str) -> list[tuple[str, Callable[[float], Any]]]:
        if kind == "soil":
            return [("soil", mat.soil)]
        d, w = self.density.value, self.lwc.value
        out: list[tuple[str, Callable[[float], Any]]] = []
        for dry, wet in self._snow_models():
            if sweep == "density":
                def make(x: float, dry: str = dry, wet: str = wet) -> Any:
                    return self._snow(x, w, dry, wet)
                label = self._snow_label(dry, wet, w)
            else:
                def make(x: float, dry: str = dry, wet: str = wet) -> Any:
                    return self._snow(d, x, dry, wet)
                label = f"snow ({dry} dry, {wet} wet)"
            out.append((label, make))
        return out

    def _point_value(self) -> float:
        sweep = self.sweep.value
        return {"frequency": self.frequency.value, "density": self.density.value,
                "liquid water": self.lwc.value, "soil water": self.soil_water.value}[sweep]

    def _redraw(self) -> None:
        curves = self.curves()
        readout = self._readout_html()  # may refuse: nothing is drawn before this point
        sweep = self.sweep.value
        x_label = _SWEEP_AXIS[sweep]
        for axis in self._x_axes:
            axis.label = x_label
        n = max((c.x.size for c in curves), default=0)
        xs = np.full((len(curves), n), np.nan)
        point = self._point_value()
        for key, _ in QUANTITIES:
            ys = np.full((len(curves), n), np.nan)
            for i, c in enumerate(curves):
                xs[i, :c.x.size] = c.x
                ys[i, :c.x.size] = c.values[key]
                if c.x.size < n:  # repeat the last point: same shape, nothing drawn extra
                    xs[i, c.x.size:] = c.x[-1] if c.x.size else 0.0
                    ys[i, c.x.size:] = c.values[key][-1] if c.x.size else 1.0
            finite = ys[np.isfinite(ys)]
            lo, hi = (float(finite.min()), float(finite.max())) if finite.size else (1.0, 2.0)
            line = self._lines[key]
            with line.hold_sync():
                line.x = as_f32(xs)
                line.y = as_f32(ys)
                line.labels = [c.label for c in curves]
            y_lo, y_hi = _padded_range(lo, hi, log=key in _LOG_Y)
            scale = self._y_scales[key]
            with scale.hold_sync():
                scale.min, scale.max = y_lo, y_hi
            line.display_legend = len(curves) > 1
            rule = self._rules[key]
            with rule.hold_sync():
                rule.x = as_f32([point, point])
                rule.y = as_f32([y_lo, y_hi])
        self._x_scale.min, self._x_scale.max = (float(np.nanmin(xs)), float(np.nanmax(xs))) \
            if xs.size else (0.0, 1.0)
        ticks = _nice_ticks(self._x_scale.min, self._x_scale.max)
        for axis in self._x_axes:
            axis.tick_values = as_f32(ticks)
        self.readout.value = readout
        self._draws += 1
        self.status.value = f"draws={self._draws} | {len(curves)} curve(s) across {sweep}"

    def _readout_html(self) -> str:
        f_hz = self.frequency.value * _MHZ
        rows = []
        for label, m in self._materials():
            v = _evaluate(m, np.array([f_hz]))
            eps = complex(np.atleast_1d(m.permittivity(f_hz))[0])
            rows.append(
                f"<tr><td>{html.escape(label)}</td><td>{eps.real:.3g}</td>"
                f"<td>{-eps.imag:.3g}</td><td>{v['velocity'][0]:.3g}</td>"
                f"<td>{v['attenuation'][0]:.3g}</td><td>{v['wavelength'][0]:.3g}</td></tr>")
        sources = "".join(f"<li>{html.escape(m.name)}: {html.escape(m.source)}</li>"
                          for _, m in self._materials())
        return (f"<div>at {self.frequency.value:.0f} MHz</div>"
                "<table style='border-collapse:collapse' cellpadding='3'>"
                "<tr><th>medium</th><th>eps'</th><th>eps''</th><th>m/ns</th><th>dB/m</th>"
                "<th>cm</th></tr>" + "".join(rows) + "</table>"
                f"<div style='font-size:85%'>Models:<ul>{sources}</ul></div>")

    def _sync_visibility(self) -> None:
        kind = MEDIA[self.medium.value]
        options = SWEEPS[kind]
        if tuple(self.sweep.options) != options:
            self._busy = True
            try:
                keep = self.sweep.value if self.sweep.value in options else options[0]
                self.sweep.options = list(options)
                self.sweep.value = keep
            finally:
                self._busy = False
        snow = kind == "snow"
        for w in (self.density, self.lwc, self.temperature, self.dry_model, self.wet_model,
                  self.compare_models):
            set_visible(w, snow)
        set_visible(self.soil_water, kind == "soil")

    def _on_control(self, change: dict[str, Any]) -> None:
        if self._busy:
            return
        if change["owner"] is self.medium:
            self._sync_visibility()
        self.redraw()


__all__ = ["MATERIALS_STATUS_CLASS", "MEDIA", "QUANTITIES", "SWEEPS", "MaterialsExplorer"]
