"""Files an explorer writes: radargram data, the link budget, pictures, a design report.

Layouts (this package's own):

* CSV (radargram): a header row ``time_ns`` then each trace's position in m, then one row
  per time sample (time in ns, the amplitude of each trace); ``pandas.read_csv(path)``
  reads it with no options (:meth:`Radargram.to_csv` writes the same).
* CSV (link budget): a header row ``person,term,value,unit,explanation``, one row per
  budget row of each buried person, then the verdict rows (``likely visible``, each
  overruling condition as ``warning``).
* netCDF (classic, via xarray's scipy engine): variables ``amplitude`` (the section on
  screen) and ``raw_amplitude`` on dims ``time_s`` and ``position_m``, units and the
  scenario JSON in the attributes (:meth:`Radargram.to_xarray`).
* NPZ: arrays ``data`` (samples x traces, the section on screen), ``raw_data``,
  ``time_s``, ``position_m``, ``truth_position_m``, ``truth_depth_m``,
  ``truth_time_s`` and text arrays ``scenario_json``, ``processing_json``, ``caution``;
  ``numpy.load(path)`` reads it without pickle.
* PNG: the radargram with axes (position in m, two-way time in ns) and a colour bar
  (:mod:`.figure_png`); :func:`radargram_png` is the bare picture, one pixel per sample.
* HTML: the one-page design summary from the Jinja2 template shipped in
  ``snowprobe_widgets/templates/design_report.html.j2`` (pictures as data URIs), full
  tables after a page break.
"""

from __future__ import annotations

import base64
import csv
import datetime
import html
import io
import os
from typing import Any, BinaryIO

import numpy as np

from snowprobe_widgets import __version__
from snowprobe_widgets.atomic_files import write_atomically
from snowprobe_widgets.cautions import CAUTION_SHORT, CAUTION_TEXT
from snowprobe_widgets.radargram import Radargram, csv_text
from snowprobe_widgets.widgets.figure_png import figure_png
from snowprobe_widgets.widgets.palette_png import (
    COLOUR_MAP_KINDS,
    colour_map,
    encode_palette_png,
    scale_to_index,
)
from snowprobe_widgets.widgets.radargram_view import colour_range
from snowprobe_widgets.widgets.verdict import budget_table_html, cards_html, engineering


def csv_bytes(rg: Radargram) -> bytes:
    """``rg`` as CSV, UTF-8 (layout in the module docstring)."""
    return csv_text(rg).encode("utf-8")


def write_csv(rg: Radargram, path: str | os.PathLike[str]) -> None:
    """Write :func:`csv_bytes` to ``path`` atomically."""
    write_atomically(path, csv_bytes(rg))


def budget_csv_bytes(scenario: Any, budgets: Any) -> bytes:
    """The link budget of each buried person as CSV (layout in the module docstring)."""
    out = io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    w.writerow(["person", "term", "value", "unit", "explanation"])
    for i, b in enumerate(budgets):
        if b is None:
            continue
        who = scenario.persons[i].label or f"person {i + 1}"
        for r in b.rows:
            w.writerow([who, r.term, f"{r.value:.6g}", r.unit, r.explanation])
        w.writerow([who, "likely visible", "yes" if b.likely_visible else "no", "",
                    f"at a detection level of {b.threshold_db:g} dB"])
        for text in b.warnings:
            w.writerow([who, "warning", "", "", text])
    return out.getvalue().encode("utf-8")


def netcdf_bytes(rg: Radargram, raw: Radargram) -> bytes:
    """The section on screen and the raw one as a classic netCDF file (layout above)."""
    import xarray as xr

    shown = rg.to_xarray()
    ds = xr.Dataset({"amplitude": shown, "raw_amplitude": raw.to_xarray()},
                    attrs=dict(shown.attrs))
    ds["raw_amplitude"].attrs["long_name"] = "received amplitude before processing"
    return bytes(ds.to_netcdf(engine="scipy"))  # in memory: no file is written


def _write_npz_to(fh: BinaryIO, rg: Radargram, raw: Radargram, scenario_json: str,
                  processing_json: str) -> None:
    truth = rg.truth
    np.savez_compressed(
        fh, data=rg.data, raw_data=raw.data, time_s=rg.time_s, position_m=rg.position_m,
        truth_position_m=np.array([m.position_m for m in truth], dtype=float),
        truth_depth_m=np.array([m.depth_m for m in truth], dtype=float),
        truth_time_s=np.array([m.apex_time_s for m in truth], dtype=float),
        scenario_json=np.array(scenario_json), processing_json=np.array(processing_json),
        caution=np.array(CAUTION_TEXT))


def npz_bytes(rg: Radargram, raw: Radargram, *, scenario_json: str = "",
              processing_json: str = "") -> bytes:
    """The section on screen and the raw one as NPZ bytes (layout in the docstring)."""
    buffer = io.BytesIO()
    _write_npz_to(buffer, rg, raw, scenario_json, processing_json)
    return buffer.getvalue()


def write_npz(rg: Radargram, raw: Radargram, path: str | os.PathLike[str], *,
              scenario_json: str = "", processing_json: str = "") -> None:
    """Write the section on screen and the raw one as NPZ, atomically."""
    write_atomically(path, lambda fh: _write_npz_to(fh, rg, raw, scenario_json,
                                                    processing_json))


def radargram_png(rg: Radargram, colour_map_name: str, clip_percent: float) -> bytes:
    """The radargram picture in the given colours (one pixel per sample and trace)."""
    lo, hi = colour_range(rg.data, clip_percent, COLOUR_MAP_KINDS[colour_map_name])
    return encode_palette_png(scale_to_index(rg.data, lo, hi), colour_map(colour_map_name),
                              compress_level=6)


def write_png(rg: Radargram, path: str | os.PathLike[str], colour_map_name: str,
              clip_percent: float) -> None:
    """Write :func:`radargram_png` to ``path``."""
    write_atomically(path, radargram_png(rg, colour_map_name, clip_percent))


def scene_svg(scenario: Any, width: int = 360, height: int = 200) -> str:
    """The scene to scale as a small SVG: snow layers (darker when wetter), the ground,
    the buried people and objects, the antenna height and the survey line's extent."""
    snow = scenario.snowpack
    line = scenario.survey
    h = scenario.radar.antenna_height_m
    x0, x1 = line.start_m, line.end_m
    z_top, z_bot = -min(h, 2.0), snow.depth_m + 0.4
    sx = width / (x1 - x0)
    sz = height / (z_bot - z_top)

    def X(x: float) -> float:
        return (x - x0) * sx

    def Z(z: float) -> float:
        return (z - z_top) * sz

    parts = [f"<svg xmlns='http://www.w3.org/2000/svg' width='100%' viewBox='0 0 {width} "
             f"{height}' role='img' aria-label='the scene to scale'>"]
    top = 0.0
    for la in snow.layers:
        shade = int(235 - 12 * min(la.lwc_percent, 12.0))
        fill = "#9fd6e8" if la.ice_crust else f"rgb({shade},{shade + 8},250)"
        parts.append(f"<rect x='0' y='{Z(top):.1f}' width='{width}' "
                     f"height='{max(0.5, la.thickness_m * sz):.1f}' fill='{fill}' "
                     "stroke='#9ab' stroke-width='0.5'/>")
        top += la.thickness_m
    parts.append(f"<rect x='0' y='{Z(top):.1f}' width='{width}' height='{height}' "
                 "fill='#8b6b4a'/>")
    for p in scenario.persons:
        cx, cy = X(p.position_m), Z(p.depth_m + p.body_thickness_m / 2)
        parts.append(f"<ellipse cx='{cx:.1f}' cy='{cy:.1f}' "
                     f"rx='{max(2.0, p.body_length_m * sx / 2):.1f}' "
                     f"ry='{max(2.0, p.body_thickness_m * sz / 2):.1f}' fill='#d9480f'/>")
    for o in scenario.objects:
        parts.append(f"<circle cx='{X(o.position_m):.1f}' cy='{Z(o.depth_m):.1f}' r='3' "
                     "fill='#444'/>")
    parts.append(f"<line x1='0' y1='{Z(-h):.1f}' x2='{width}' y2='{Z(-h):.1f}' "
                 "stroke='#e0119d' stroke-dasharray='4 3'/>")
    parts.append("</svg>")
    return "".join(parts)


def _template() -> Any:
    import jinja2

    env = jinja2.Environment(
        loader=jinja2.PackageLoader("snowprobe_widgets", "templates"),
        autoescape=jinja2.select_autoescape(["html", "j2"]), undefined=jinja2.StrictUndefined)
    return env.get_template("design_report.html.j2")


def report_html(scenario: Any, *, picture_png: bytes, budgets: Any, problems: Any,
                processing: list[str], detections: list[str], figure_caption: str) -> str:
    """The one-page design summary (template ``design_report.html.j2``): verdict cards,
    the scene, key budget rows against the settings, the radargram with axes and colour
    bar, the cautions; every table after a page break."""
    s, r, line, snow = scenario, scenario.radar, scenario.survey, scenario.snowpack
    first = next((b for b in budgets if b is not None), None)
    key_rows: list[tuple[str, str, str]] = []
    if first is not None:
        rows = {row.term: row for row in first.rows}
        for term in ("echo-to-noise ratio", "echo-to-clutter ratio",
                     "deepest detectable burial", "footprint radius"):
            if term in rows:
                key_rows.append((term, engineering(rows[term].value, rows[term].unit), ""))
        for term, have, better in (
                ("trace spacing needed", line.trace_spacing_m, "le"),
                ("time window needed", r.time_window_s * 1e9, "ge")):
            if term in rows:
                need = rows[term].value
                met = have <= need if better == "le" else have >= need
                shown = engineering(have, rows[term].unit)
                key_rows.append((term, engineering(need, rows[term].unit),
                                 f"set: {shown}" + ("" if met else " <b>(not met)</b>")))
    tables = "".join(
        f"<h3>{html.escape(s.persons[i].label or f'person {i + 1}')}</h3>"
        + budget_table_html(b, s) for i, b in enumerate(budgets) if b is not None) \
        or "<p>No link budget: nobody is buried in this scenario.</p>"
    when = datetime.datetime.now(datetime.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    return _template().render(
        name=s.name or "unnamed scenario", caution_text=CAUTION_TEXT,
        caution_short=CAUTION_SHORT, version=__version__, when=when,
        cards_html=cards_html(s, list(budgets), list(problems)),
        scene_svg=scene_svg(s),
        scene_caption=(f"{snow.depth_m:.2f} m of snow over {s.ground.kind}, line "
                       f"{line.start_m:g} to {line.end_m:g} m; dashed: the antenna "
                       f"{r.antenna_height_m:.2f} m up; orange: buried people."),
        key_rows=key_rows,
        radar_summary=(f"{r.pulse} pulse at {r.center_frequency_hz / 1e6:.0f} MHz, "
                       f"{r.transmit_power_dbm:g} dBm, noise floor {r.noise_floor_dbm:g} dBm, "
                       f"stacking {r.stacking}; sampling {r.dt_s * 1e12:.0f} ps over "
                       f"{r.time_window_s * 1e9:.1f} ns; traces every "
                       f"{line.trace_spacing_m * 100:.1f} cm ({line.n_traces} traces)."),
        picture_uri="data:image/png;base64," + base64.b64encode(picture_png).decode("ascii"),
        figure_caption=figure_caption, notes=s.notes, budget_tables=tables,
        snow_depth=f"{snow.depth_m:.2f} m", snow_temperature=f"{snow.temperature_c:g} °C",
        ground=s.ground.kind,
        layers=[(i + 1, f"{la.thickness_m:.2f}", f"{la.density_kg_m3:.0f}",
                 f"{la.lwc_percent:.1f}", "yes" if la.ice_crust else "")
                for i, la in enumerate(snow.layers)],
        processing=processing, detections=detections, scenario_json=s.to_json())


def write_report(path: str | os.PathLike[str], text: str) -> None:
    """Write a report made by :func:`report_html`."""
    write_atomically(path, text.encode("utf-8"))


__all__ = ["budget_csv_bytes", "csv_bytes", "figure_png", "netcdf_bytes", "npz_bytes",
           "radargram_png", "report_html", "scene_svg", "write_csv", "write_npz", "write_png",
           "write_report"]
