"""Files an explorer writes: radargram data (CSV, NPZ), its picture (PNG), a design report.

Layouts (this package's own):

* CSV: ``#`` comment lines (caution, scenario name, units, the trace positions), then one
  row per time sample: ``time_ns, amplitude at trace 1, ..., amplitude at trace n``;
  ``numpy.loadtxt(path, delimiter=",")`` reads it back.
* NPZ: arrays ``data`` (samples x traces, the section on screen), ``raw_data``,
  ``time_s``, ``position_m``, ``truth_position_m``, ``truth_depth_m``,
  ``truth_time_s`` and text arrays ``scenario_json``, ``processing_json``, ``caution``;
  ``numpy.load(path)`` reads it without pickle.
* PNG: the radargram picture, one pixel per sample and trace, in the view's colours.
* HTML: one self-contained page (picture as a data URI).
"""

from __future__ import annotations

import base64
import datetime
import html
import io
import os
from typing import Any, BinaryIO

import numpy as np

from snowprobe_widgets import __version__
from snowprobe_widgets.atomic_files import write_atomically
from snowprobe_widgets.cautions import CAUTION_SHORT, CAUTION_TEXT
from snowprobe_widgets.radargram import Radargram
from snowprobe_widgets.widgets.palette_png import (
    COLOUR_MAP_KINDS,
    colour_map,
    encode_palette_png,
    scale_to_index,
)
from snowprobe_widgets.widgets.radargram_view import colour_range


def csv_bytes(rg: Radargram, *, title: str = "") -> bytes:
    """``rg`` as CSV text, UTF-8 (layout in the module docstring)."""
    lines = [f"# {CAUTION_SHORT}",
             f"# radargram {title}".rstrip(),
             "# columns: two-way time (ns), then the amplitude of each trace (model units)",
             "# position_m: " + ",".join(f"{x:.6g}" for x in rg.position_m)]
    table = np.column_stack([rg.time_s * 1e9, rg.data])
    body = "\n".join(",".join(f"{v:.9g}" for v in row) for row in table)
    return ("\n".join(lines) + "\n" + body + "\n").encode("utf-8")


def write_csv(rg: Radargram, path: str | os.PathLike[str], *, title: str = "") -> None:
    """Write :func:`csv_bytes` to ``path`` atomically."""
    write_atomically(path, csv_bytes(rg, title=title))


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


def report_html(scenario: Any, *, picture_png: bytes, budget_html: str, verdict: str,
                processing: list[str], detections: list[str],
                figure_caption: str) -> str:
    """A one-page design report: the scenario, the radargram, link budget and cautions."""
    uri = "data:image/png;base64," + base64.b64encode(picture_png).decode("ascii")
    r, s, snow = scenario.radar, scenario.survey, scenario.snowpack
    layer_rows = "".join(
        f"<tr><td>{i + 1}</td><td>{la.thickness_m:.2f}</td><td>{la.density_kg_m3:.0f}</td>"
        f"<td>{la.lwc_percent:.1f}</td><td>{'yes' if la.ice_crust else ''}</td></tr>"
        for i, la in enumerate(snow.layers))
    persons = "".join(
        f"<li>{html.escape(p.label or f'person {i + 1}')}: {p.depth_m:.2f} m deep at "
        f"{p.position_m:.2f} m along the line, {p.offset_m:.2f} m to the side, "
        f"{html.escape(p.posture)}</li>" for i, p in enumerate(scenario.persons)) or \
        "<li>nobody buried</li>"
    steps = "".join(f"<li>{html.escape(t)}</li>" for t in processing) or "<li>none</li>"
    found = "".join(f"<li>{html.escape(t)}</li>" for t in detections) or \
        "<li>no detections listed</li>"
    when = datetime.datetime.now(datetime.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    name = html.escape(scenario.name or "unnamed scenario")
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<title>Radar search design: {name}</title>
<style>
body {{ font-family: sans-serif; max-width: 60em; margin: 1em auto; color: #1b1b1b; }}
table {{ border-collapse: collapse; }} td, th {{ border: 1px solid #bbb; padding: 2px 6px; }}
.caution {{ background: #fff8e1; border: 1px solid #e0b84c; padding: 8px 12px; }}
pre {{ background: #f4f4f4; padding: 8px; overflow-x: auto; font-size: 80%; }}
img {{ width: 100%; image-rendering: pixelated; border: 1px solid #999; }}
</style></head><body>
<h1>Radar search design: {name}</h1>
<p class="caution"><b>Caution.</b> {html.escape(CAUTION_TEXT)}</p>
<p>{html.escape(scenario.notes)}</p>
<h2>Verdict</h2><p><b>{html.escape(verdict)}</b></p>
<h2>Radar and survey</h2>
<p>{html.escape(r.pulse)} pulse at {r.center_frequency_hz / 1e6:.0f} MHz,
{r.transmit_power_dbm:g} dBm, noise floor {r.noise_floor_dbm:g} dBm, stacking {r.stacking},
antenna {r.antenna_height_m:.2f} m above the snow; sampling {r.dt_s * 1e12:.0f} ps over
{r.time_window_s * 1e9:.1f} ns; line {s.start_m:g} to {s.end_m:g} m every
{s.trace_spacing_m * 100:.1f} cm ({s.n_traces} traces).</p>
<h2>Snow ({snow.depth_m:.2f} m, {snow.temperature_c:g} degC) over {html.escape(
        scenario.ground.kind)}</h2>
<table><tr><th>layer</th><th>thickness (m)</th><th>density (kg/m3)</th>
<th>liquid water (%)</th><th>ice crust</th></tr>{layer_rows}</table>
<h2>Buried</h2><ul>{persons}</ul>
<h2>Radargram</h2><img alt="radargram" src="{uri}">
<p><small>{html.escape(figure_caption)}</small></p>
<h3>Processing</h3><ol>{steps}</ol>
<h3>Detections</h3><ul>{found}</ul>
<h2>Link budget</h2>{budget_html}
<h2>Scenario file</h2><pre>{html.escape(scenario.to_json())}</pre>
<p><small>Written by snowprobe_widgets {html.escape(__version__)} on {when}.
{html.escape(CAUTION_SHORT)}</small></p>
</body></html>
"""


def write_report(path: str | os.PathLike[str], text: str) -> None:
    """Write a report made by :func:`report_html`."""
    write_atomically(path, text.encode("utf-8"))


__all__ = ["csv_bytes", "npz_bytes", "radargram_png", "report_html", "write_csv", "write_npz",
           "write_png", "write_report"]
