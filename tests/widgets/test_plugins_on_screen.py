"""A plugin's processing step reaches the screen: a small plugin package built here.

The package is a module and a ``.dist-info`` folder with an entry point in the group
``snowprobe_widgets.processing`` on a temporary path (nothing is installed into the
environment); a fresh interpreter imports the app with that path, so the registries read
the entry point as they would for an installed plugin.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import textwrap

import pytest

PLUGIN = textwrap.dedent('''
    """A test plugin: clip the section at a fraction of its peak."""
    import numpy as np

    from snowprobe_widgets.fields import Field, declare
    from snowprobe_widgets.radargram import ProcessingRecord

    declare(Field("step:peak_clip", "fraction", "number", "Clip at", display_unit="%",
                  scale=0.01, low=0.01, high=1.0, step=1.0, decimals=0,
                  help="Amplitudes above this share of the peak are cut."))


    def peak_clip(rg, fraction=0.5):
        """Clip at a share of the peak."""
        top = fraction * float(np.max(np.abs(rg.data)))
        return rg.with_data(np.clip(rg.data, -top, top),
                            ProcessingRecord("peak_clip", (("fraction", fraction),)))
''')

SCRIPT = textwrap.dedent('''
    import json
    from snowprobe_widgets.widgets import ScenarioExplorer

    app = ScenarioExplorer()
    panel = app.processing
    switch = panel.switches["peak_clip"]
    (field, control), = panel.params["peak_clip"].values()
    out = {"title": switch.description, "label": control.description,
           "tooltip": control.tooltip, "value": control.value,
           "in_panel": switch in panel.children}
    switch.value = True
    control.value = 25.0
    out["chain"] = [[s.name, dict(s.params), s.enabled] for s in app.chain.steps]
    out["peak"] = float(abs(app.radargram.data).max())
    out["raw_peak"] = float(abs(app.raw_radargram.data).max())
    out["history"] = [r.step for r in app.radargram.history]
    print(json.dumps(out))
''')


def test_a_plugin_step_appears_in_the_panel_and_the_chain(tmp_path) -> None:
    (tmp_path / "snowlab_clip.py").write_text(PLUGIN)
    info = tmp_path / "snowlab_clip-0.1.dist-info"
    info.mkdir()
    (info / "METADATA").write_text("Metadata-Version: 2.1\nName: snowlab-clip\nVersion: 0.1\n")
    (info / "entry_points.txt").write_text(
        "[snowprobe_widgets.processing]\npeak_clip = snowlab_clip:peak_clip\n")
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(
        [str(tmp_path), *filter(None, [os.environ.get("PYTHONPATH")])])}
    done = subprocess.run([sys.executable, "-c", SCRIPT], env=env, capture_output=True,
                          text=True, timeout=300, check=False)
    assert done.returncode == 0, done.stderr[-2000:]
    out = json.loads(done.stdout.strip().splitlines()[-1])
    assert out["title"] == "peak_clip: Clip at a share of the peak" and out["in_panel"]
    assert out["label"] == "Clip at (%)"  # from the plugin's declaration
    assert out["tooltip"] == "Amplitudes above this share of the peak are cut."
    assert out["value"] == 50.0  # the step function's default, 0.5, in display units
    steps = {name: (params, on) for name, params, on in out["chain"]}
    assert steps["peak_clip"] == ({"fraction": 0.25}, True)
    assert out["history"][-1] == "peak_clip"


KIT = textwrap.dedent('''
    """A test plugin: a pulse given only by its spectrum, and a layer dielectric model."""
    import numpy as np

    from snowprobe_widgets.materials import rock


    def lab_spectrum(freq_hz, center_frequency_hz, bandwidth_hz, width=0.4):
        """A Gaussian band around the centre frequency (any scale: the package makes the
        waveform's peak 1)."""
        return 5.0 * np.exp(-((freq_hz - center_frequency_hz)
                              / (width * center_frequency_hz)) ** 2)


    def lab_firn(density_kg_m3, lwc_percent, temperature_c):
        """A constant permittivity, 1 + density / 500 kg/m3."""
        return rock(1.0 + density_kg_m3 / 500.0)
''')

KIT_SCRIPT = textwrap.dedent('''
    import dataclasses, json
    import jsonschema
    import numpy as np
    from snowprobe_widgets import scenario_files
    from snowprobe_widgets.scene import Scenario
    from snowprobe_widgets.synthesis import simulate
    from snowprobe_widgets.widgets import ScenarioExplorer

    base = Scenario.default()
    layers = list(base.snowpack.layers)
    layers[0] = dataclasses.replace(layers[0], dielectric_model="lab_firn")
    s = dataclasses.replace(base, radar=dataclasses.replace(base.radar, pulse="lab_chirp"),
                            snowpack=dataclasses.replace(base.snowpack, layers=tuple(layers)))
    rg, rg_base = simulate(s), simulate(base)
    out = {"finite": bool(np.all(np.isfinite(rg.data))),
           "differs": float(np.max(np.abs(rg.data - rg_base.data))) > 0,
           "eps": float(s.snowpack.materials()[0].permittivity(1e9).real),
           "first_density": base.snowpack.layers[0].density_kg_m3}
    doc = json.loads(scenario_files.dumps(s))
    jsonschema.Draft202012Validator(scenario_files.json_schema()).validate(doc)
    out["file"] = [doc["scenario"]["radar"]["pulse"],
                   doc["scenario"]["snowpack"]["layers"][0]["dielectric_model"]]
    out["round_trip"] = scenario_files.loads(json.dumps(doc)) == s
    # the plugin pulse's own parameter, set from a scenario and carried by its file
    narrow = dataclasses.replace(s, radar=dataclasses.replace(
        s.radar, pulse_parameters={"width": 0.2}))
    doc = json.loads(scenario_files.dumps(narrow))
    jsonschema.Draft202012Validator(scenario_files.json_schema()).validate(doc)
    out["parameters_file"] = doc["scenario"]["radar"]["pulse_parameters"]
    out["parameters_round_trip"] = scenario_files.loads(json.dumps(doc)) == narrow
    out["bandwidths"] = [s.radar.make_pulse().bandwidth_hz,
                         narrow.radar.make_pulse().bandwidth_hz]

    app = ScenarioExplorer(base)
    out["pulse_options"] = [v for _l, v in app.radar.pulse.options]
    out["model_options"] = [v for _l, v in app.snowpack.dielectric_model.options]
    draws = app.radargram_view.draws
    app.radar.pulse.value = "lab_chirp"
    app.snowpack.dielectric_model.value = "lab_firn"
    out["on_screen"] = [app.scenario.radar.pulse,
                        app.scenario.snowpack.layers[0].dielectric_model]
    out["redrawn"] = app.radargram_view.draws > draws
    box = app.radar.pulse_parameters
    out["box"] = [box.layout.display, box.tooltip]
    box.value = "width = 0.2"
    out["box_scenario"] = [list(p) for p in app.scenario.radar.pulse_parameters]
    out["message"] = app.message.value
    print(json.dumps(out))
''')


def test_a_plugin_pulse_and_layer_model_reach_synthesis_files_and_screen(tmp_path) -> None:
    (tmp_path / "snowlab_kit.py").write_text(KIT)
    info = tmp_path / "snowlab_kit-0.1.dist-info"
    info.mkdir()
    (info / "METADATA").write_text("Metadata-Version: 2.1\nName: snowlab-kit\nVersion: 0.1\n")
    (info / "entry_points.txt").write_text(
        "[snowprobe_widgets.pulse_spectra]\nlab_chirp = snowlab_kit:lab_spectrum\n\n"
        "[snowprobe_widgets.layer_models]\nlab_firn = snowlab_kit:lab_firn\n")
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(
        [str(tmp_path), *filter(None, [os.environ.get("PYTHONPATH")])])}
    done = subprocess.run([sys.executable, "-c", KIT_SCRIPT], env=env, capture_output=True,
                          text=True, timeout=300, check=False)
    assert done.returncode == 0, done.stderr[-2000:]
    out = json.loads(done.stdout.strip().splitlines()[-1])
    assert out["finite"] and out["differs"]
    assert out["eps"] == 1.0 + out["first_density"] / 500.0  # the plugin's model is used
    assert out["file"] == ["lab_chirp", "lab_firn"] and out["round_trip"]
    assert "lab_chirp" in out["pulse_options"] and "lab_firn" in out["model_options"]
    assert out["on_screen"] == ["lab_chirp", "lab_firn"] and out["redrawn"]
    assert out["message"] == "", out["message"]  # no refusal on the message line
    assert out["parameters_file"] == {"width": 0.2} and out["parameters_round_trip"]
    # a Gaussian band of 1/e half-width w fc has its -6 dB width 2 w fc sqrt(ln 2):
    # halving w halves the measured bandwidth (to the 1/20000 grid of the measurement)
    wide, narrow = out["bandwidths"]
    assert narrow / wide == pytest.approx(0.5, rel=2e-3)
    display, tooltip = out["box"]
    assert display != "none" and "width = 0.4" in tooltip
    assert out["box_scenario"] == [["width", 0.2]]
