"""ScenarioExplorer driven without a browser: controls -> scenario -> views, files, exports."""

from __future__ import annotations

import dataclasses
import io
import threading
import time
from typing import Any

import numpy as np
import pytest

from snowprobe_widgets.cautions import CAUTION_TEXT
from snowprobe_widgets.scene import Layer, Person, Scenario
from snowprobe_widgets.synthesis import simulate
from snowprobe_widgets.widgets import ScenarioExplorer
from snowprobe_widgets.widgets.explorer import (
    OPEN_CLASS,
    PATH_CLASS,
    SAVE_CLASS,
    CachedSimulation,
    normalised_correlation,
)
from snowprobe_widgets.widgets.panels import PERSON_DEPTH_CLASS
from snowprobe_widgets.widgets.radargram_view import STATUS_CLASS


@pytest.fixture(scope="module")
def app() -> ScenarioExplorer:
    return ScenarioExplorer()


@pytest.fixture(autouse=True)
def _reset(app: ScenarioExplorer) -> None:
    app.scenario = Scenario.default()


def _apex_s(app: ScenarioExplorer) -> float:
    return float(np.asarray(app.radargram_view.truth_mark.y)[0]) * 1e-9


def _same(a: np.ndarray, b: np.ndarray) -> bool:
    """Equal to 1 part in 1e6 of the larger section's peak (the data are ~1e-6 in size)."""
    scale = max(float(np.max(np.abs(a))), float(np.max(np.abs(b))), 1e-300)
    return a.shape == b.shape and bool(np.max(np.abs(a - b)) <= 1e-6 * scale)


def _draws(app: ScenarioExplorer) -> int:
    return int(app.radargram_view.status.value.split("draws=")[1].split()[0])


# --------------------------------------------------------------------------- hooks
def test_css_hooks_and_cautions_are_present(app: ScenarioExplorer) -> None:
    assert PERSON_DEPTH_CLASS == "sp-person-depth"
    assert "sp-person-depth" in app.person.depth._dom_classes
    assert "sp-radargram-status" == STATUS_CLASS
    assert STATUS_CLASS in app.radargram_view.status._dom_classes
    assert (SAVE_CLASS, OPEN_CLASS, PATH_CLASS) == ("sp-save", "sp-open", "sp-file-path")
    assert SAVE_CLASS in app.files.save_button._dom_classes
    assert OPEN_CLASS in app.files.open_button._dom_classes
    assert PATH_CLASS in app.files.path._dom_classes
    texts = [c.value for c in app.children if hasattr(c, "value")]
    assert any(CAUTION_TEXT[:50] in t for t in texts)
    assert not app.person.depth.continuous_update  # heavy slider: released value only


# --------------------------------------------------------------------------- controls
def test_deeper_person_moves_the_truth_apex_later_and_changes_the_picture(
        app: ScenarioExplorer) -> None:
    apex0, draws0 = _apex_s(app), _draws(app)
    data0 = app.radargram.data.copy()
    app.person.depth.value = 1.2
    assert app.scenario.persons[0].depth_m == 1.2
    assert _apex_s(app) > apex0 + 2e-9  # 0.6 m more of dry snow: several ns two-way
    assert _draws(app) == draws0 + 1
    assert not _same(app.radargram.data, data0)


@pytest.mark.parametrize(("control", "value", "check"), [
    ("position", 7.0, lambda s: s.persons[0].position_m == 7.0),
    ("offset", 0.8, lambda s: s.persons[0].offset_m == 0.8),
    ("heading", 30.0, lambda s: s.persons[0].heading_deg == 30.0),
    ("posture", "curled", lambda s: s.persons[0].posture == "curled"),
    ("clothing", 3.0, lambda s: abs(s.persons[0].clothing_m - 0.03) < 1e-12),
])
def test_each_person_control_reaches_the_scenario(app: ScenarioExplorer, control: str,
                                                  value: object, check) -> None:
    before = app.raw_radargram.data.copy()
    getattr(app.person, control).value = value
    assert app.message_text == ""
    assert check(app.scenario)
    assert not _same(app.raw_radargram.data, before)


def test_person_position_moves_truth_marker(app: ScenarioExplorer) -> None:
    app.person.position.value = 2.0
    assert float(np.asarray(app.radargram_view.truth_mark.x)[0]) == pytest.approx(2.0)


@pytest.mark.parametrize(("control", "value", "check"), [
    ("frequency", 500.0, lambda s: s.radar.center_frequency_hz == pytest.approx(500e6)),
    ("height", 1.0, lambda s: s.radar.antenna_height_m == pytest.approx(1.0)),
    ("power", 30.0, lambda s: s.radar.transmit_power_dbm == 30.0),
    ("noise", -60.0, lambda s: s.radar.noise_floor_dbm == -60.0),
    ("stacking", 64, lambda s: s.radar.stacking == 64),
    ("pulse", "gaussian1", lambda s: s.radar.pulse == "gaussian1"),
])
def test_each_radar_control_reaches_the_scenario(app: ScenarioExplorer, control: str,
                                                 value: object, check) -> None:
    before = app.raw_radargram.data.copy()
    getattr(app.radar, control).value = value
    assert app.message_text == ""
    assert check(app.scenario)
    assert not _same(app.raw_radargram.data, before)


def test_polarization_control_reaches_the_scenario_and_survives_other_controls(
        app: ScenarioExplorer) -> None:
    app.radar.polarization.value = "along_line"
    assert app.scenario.radar.polarization == "along_line"
    app.radar.power.value = 25.0
    assert app.scenario.radar.polarization == "along_line"


def test_validity_warnings_show_under_the_status_line(app: ScenarioExplorer) -> None:
    # the model's words (targets.validity_warnings), escaped, one line each
    app.radar.frequency.value = 50.0
    assert "the body is small against the wavelength" in app.validity.value
    app.radar.frequency.value = 800.0
    assert "the body is small" not in app.validity.value


def test_material_band_warnings_and_air_gap_migration_follow_the_scenario(
        app: ScenarioExplorer) -> None:
    # a material model outside its calibrated band is said on screen (validity line),
    # and the migration step migrates through the radar's air gap
    app.scenario = Scenario.example("deep_wet_spring")  # Tiuri wet snow at 400 MHz
    assert "Tiuri et al. 1984" in app.validity.value
    assert app.processing.control("migrate", "antenna_height_m").value == pytest.approx(0.3)
    app.radar.height.value = 2.0
    assert app.processing.control("migrate", "antenna_height_m").value == pytest.approx(2.0)
    params = dict(next(st for st in app.processing.chain().steps if st.name == "migrate").params)
    assert params["antenna_height_m"] == pytest.approx(2.0)
    app.scenario = Scenario.default()
    assert "Tiuri" not in app.validity.value


def test_trace_spacing_and_window_change_the_section_shape(app: ScenarioExplorer) -> None:
    app.radar.spacing.value = 10.0
    assert app.radargram.data.shape[1] == 101
    app.radar.window.value = 102.4
    assert app.radargram.data.shape[0] == 1024


def test_higher_antenna_delays_the_surface_echo(app: ScenarioExplorer) -> None:
    def surface_s() -> float:
        return dict(app._column_echoes())["surface"]

    t0 = surface_s()
    app.radar.height.value = 1.5
    assert surface_s() == pytest.approx(t0 + 2 * 1.0 / 299_792_458.0, rel=1e-6)


def test_snowpack_editor_edits_adds_removes_and_reorders(app: ScenarioExplorer) -> None:
    ed = app.snowpack
    n = len(app.scenario.snowpack.layers)
    ed.layer_choice.value = 3
    ed.lwc.value = 5.0
    assert app.scenario.snowpack.layers[3].lwc_percent == 5.0
    ed.add_layer.click()
    assert len(app.scenario.snowpack.layers) == n + 1
    ed.add_crust.click()
    layers = app.scenario.snowpack.layers
    assert len(layers) == n + 2 and layers[5].ice_crust
    ed.move_up.click()
    assert app.scenario.snowpack.layers[4].ice_crust
    ed.remove_layer.click()
    assert len(app.scenario.snowpack.layers) == n + 1
    assert not any(la.ice_crust for la in app.scenario.snowpack.layers)
    ed.ground_kind.value = "rock"
    assert app.scenario.ground.kind == "rock"
    colours = list(app.section.layers.fill_colors)
    assert len(colours) == n + 1 and colours[3] != colours[0]  # wet layer drawn darker


def test_wetter_snow_weakens_the_ground_echo(app: ScenarioExplorer) -> None:
    """Water in the snow absorbs: the deep part of the raw section loses energy."""
    def late_energy() -> float:
        rg = app.raw_radargram
        t_g = dict(app._column_echoes())["ground"]
        rows = rg.time_s > t_g - 1e-9
        return float(np.sum(rg.data[rows] ** 2))

    e_dry = late_energy()
    for i in range(4):
        app.snowpack.layer_choice.value = i
        app.snowpack.lwc.value = 4.0
    assert late_energy() < 0.5 * e_dry


def test_debris_and_clutter_controls(app: ScenarioExplorer) -> None:
    d = app.debris
    d.add_boulder.click()
    assert [o.kind for o in app.scenario.objects] == ["boulder"]
    d.position.value = 2.0
    d.size.value = 0.4
    assert app.scenario.objects[0].position_m == 2.0
    assert app.scenario.objects[0].diameter_m == 0.4
    assert len(app.radargram.truth) == 2
    d.add_metal.click()
    assert app.scenario.objects[1].kind == "metal"
    d.remove.click()
    assert len(app.scenario.objects) == 1
    before = app.raw_radargram.data.copy()
    d.seed.value = 99
    assert app.scenario.clutter.seed == 99
    assert not _same(app.raw_radargram.data, before)
    d.density.value = 10.0
    assert app.scenario.clutter.scatterer_density_per_m3 == 10.0


def test_processing_change_does_not_resimulate_and_colour_does_not_reprocess(
        app: ScenarioExplorer) -> None:
    runs = dict(app.simulation.runs)
    shown = app.radargram.data.copy()
    app.processing.switches["background_removal"].value = False
    assert app.simulation.runs == runs
    assert not _same(app.radargram.data, shown)
    assert app.chain is not None and not app.chain.steps[2].enabled
    processed = app.radargram
    app.radargram_view.clip_slider.value = 90.0
    assert app.radargram is processed  # same object: no reprocessing
    app.processing.control("dewow", "window_s").value = 10.0
    assert dict(app.chain.steps[1].params)["window_s"] == pytest.approx(10e-9)
    app.show_processed.value = "raw"
    assert app.radargram is app.raw_radargram
    app.show_processed.value = "processed"


def test_person_change_resimulates_only_the_objects(app: ScenarioExplorer) -> None:
    runs = dict(app.simulation.runs)
    app.person.depth.value = 0.9
    assert app.simulation.runs["objects"] == runs["objects"] + 1
    assert app.simulation.runs["column"] == runs["column"]
    assert app.simulation.runs["noise"] == runs["noise"]


@pytest.mark.parametrize("name", ["two_burials", "crust_and_ski", "deep_wet_spring"])
def test_cached_parts_add_up_to_the_full_simulation(name: str) -> None:
    s = Scenario.example(name)
    full = simulate(s)
    parts = CachedSimulation()(s)
    scale = float(np.max(np.abs(full.data)))
    np.testing.assert_allclose(parts.data, full.data, rtol=0, atol=1e-9 * scale)
    assert parts.truth == full.truth
    moved = dataclasses.replace(s, persons=tuple(
        dataclasses.replace(p, depth_m=p.depth_m + 0.1) for p in s.persons))
    cache = CachedSimulation()
    cache(s)
    np.testing.assert_allclose(cache(moved).data, simulate(moved).data, rtol=0,
                               atol=1e-9 * scale)


# --------------------------------------------------------------------------- refusals
def test_depth_slider_spans_the_snowpack_and_refusal_restores_the_controls(
        app: ScenarioExplorer) -> None:
    assert app.person.depth.max == pytest.approx(1.75)  # 2 m of snow, a 0.25 m thick body
    app.person.depth.value = 1.75
    good = app.scenario
    picture = app.radargram_view.image_mark.image.value
    draws = _draws(app)
    thickness = app.snowpack.thickness.value
    app.snowpack.layer_choice.value = len(good.snowpack.layers) - 1
    bottom = app.snowpack.thickness.value
    app.snowpack.thickness.value = 0.1  # the person (1 m down) no longer fits
    assert app.message_text == ("ski tourer: depth to top 1.75 m puts the bottom at 2 m, below "
                                "the 1.6 m of snow: use at most 1.35 m, or add snow.")
    assert "depth_m" not in app.message_text
    assert app.scenario is good
    assert app.snowpack.thickness.value == bottom  # the control shows the accepted value
    assert app.radargram_view.image_mark.image.value == picture
    assert _draws(app) == draws
    app.snowpack.layer_choice.value = 0
    assert app.snowpack.thickness.value == thickness
    app.person.depth.value = 1.2
    assert app.message_text == ""
    assert app.scenario.persons[0].depth_m == 1.2


def test_refused_layer_and_radar_values_show_plain_messages(app: ScenarioExplorer) -> None:
    good = app.scenario
    app.snowpack.crust.value = True  # layer 1 is 120 kg/m3: too light for a crust
    assert "too light for an ice crust" in app.message_text
    assert "kg/m³" in app.message_text and "untick Ice crust" in app.message_text
    assert app.scenario is good
    assert app.snowpack.crust.value is False
    app.radar.dt.value = 10 ** app.radar.dt.max  # the coarsest interval a Ricker allows
    assert app.message_text == ""
    app.radar.pulse.value = "gaussian1"  # a wider band: the interval is too coarse
    text = app.message_text
    assert text.startswith("Sample interval") and "is too coarse for a 800 MHz pulse: use" in text
    assert "or a lower centre frequency" in text and "e-" not in text and "dt_s" not in text
    assert app.radar.pulse.value == "ricker"


def test_no_person_budget_shows_message(app: ScenarioExplorer) -> None:
    app.person.remove.click()
    assert app.scenario.persons == ()
    app.lower.selected_index = 2
    assert app.budget_view.budget is None
    assert app.budget_view.message.value != ""
    app.lower.selected_index = 0


# --------------------------------------------------------------------------- views
def test_pick_updates_trace_spectrum_and_antenna_marker(app: ScenarioExplorer) -> None:
    app.radargram_view.pick_position(2.0)
    tv = app.trace_view
    assert "2.00 m" in tv.title.value
    y = np.asarray(tv.line.y)
    np.testing.assert_allclose(y, app.radargram.data[:, 40].astype(np.float32))
    assert y.dtype == np.float32
    names = list(tv.echo_marks.names)
    assert names[0] == "surface" and "ground" in names
    assert float(np.asarray(app.section.antenna.x)[0]) == pytest.approx(2.0)
    app.radargram_view.pick_position(5.0)
    assert any("ski tourer" in n for n in tv.echo_marks.names)
    spec = np.asarray(app.spectrum_view.lines.y)
    assert spec.shape[0] == 2 and np.max(spec) == pytest.approx(0.0, abs=1e-4)


def test_ray_paths_reach_the_person(app: ScenarioExplorer) -> None:
    app.radargram_view.pick_position(3.0)
    app.section.show_rays.value = True
    x = np.atleast_2d(np.asarray(app.section.rays.x))[0]
    z = np.atleast_2d(np.asarray(app.section.rays.y))[0]
    p = app.scenario.persons[0]
    assert x[0] == pytest.approx(3.0) and z[0] == pytest.approx(-0.5)
    assert x[-1] == pytest.approx(p.position_m, abs=2e-3)
    assert z[-1] == pytest.approx(p.depth_m, abs=1e-6)
    slopes = np.diff(x) / np.diff(z)
    assert slopes[0] > slopes[1]  # bent towards the vertical entering the snow (Snell)
    app.section.show_rays.value = False


def test_detections_are_marked_on_demand(app: ScenarioExplorer) -> None:
    assert np.asarray(app.radargram_view.detection_mark.x).size == 0
    app.mark_detections.value = True
    xs = np.asarray(app.radargram_view.detection_mark.x)
    assert xs.size >= 1
    assert np.min(np.abs(xs - 5.0)) < 0.5  # one of them over the buried person
    app.mark_detections.value = False
    assert np.asarray(app.radargram_view.detection_mark.x).size == 0


def test_fdtd_check_reports_agreement_and_drives_the_progress_bar(
        app: ScenarioExplorer) -> None:
    seen: list[float] = []
    app.trace_view.progress.observe(lambda c: seen.append(c["new"]), names="value")
    ncc = app.run_fdtd()
    assert ncc is not None and 0.99 < ncc <= 1.0
    assert len(seen) > 10 and seen[-1] == 1.0
    assert f"{ncc:.4f}" in app.trace_view.agreement.value
    assert app.trace_view.reference.visible
    app.person.depth.value = 0.8  # the column is unchanged: the check stays
    assert app.trace_view.reference.visible
    app.snowpack.temperature.value = -2.0  # the column changed: the check is cleared
    assert not app.trace_view.reference.visible


def test_normalised_correlation() -> None:
    a = np.sin(np.linspace(0, 20, 400))
    assert normalised_correlation(a, 3 * a) == pytest.approx(1.0)
    assert normalised_correlation(a, -a) == pytest.approx(-1.0)
    assert abs(normalised_correlation(a, np.cos(np.linspace(0, 20, 400)))) < 0.1


def test_budget_and_materials_update_when_shown(app: ScenarioExplorer) -> None:
    app.lower.selected_index = 2
    text = app.budget_view.verdict.value
    assert "0.6 m" in text
    app.person.depth.value = 1.2
    assert "1.2 m" in app.budget_view.verdict.value
    app.lower.selected_index = 3
    draws = app.materials.draws
    app.scenario = Scenario.example("deep_wet_spring")
    assert app.materials.draws == draws + 1
    assert app.materials.frequency.value == 400.0
    app.lower.selected_index = 0


# --------------------------------------------------------------------------- scenario
def test_assigning_a_scenario_updates_controls_and_views(app: ScenarioExplorer) -> None:
    other = Scenario.example("two_burials")
    app.scenario = other
    assert app.scenario is other
    assert app.person.choice.options[1][0] == "person 2"
    assert app.person.depth.value == 0.9
    assert app.radar.frequency.value == pytest.approx(600.0)
    assert np.asarray(app.radargram_view.truth_mark.x).tolist() == [3.0, 7.5]
    assert len(app.section.layers.fill_colors) == 3
    app.person.choice.value = 1
    assert app.person.depth.value == 1.4
    app.person.depth.value = 1.5
    assert [p.depth_m for p in app.scenario.persons] == [0.9, 1.5]


def test_construct_with_scenario() -> None:
    s = Scenario.example("debris_no_burial")
    app = ScenarioExplorer(s)
    assert app.scenario is s
    assert app.person.depth.disabled
    assert "Nobody is buried" in app.person.note.value


# --------------------------------------------------------------------------- files
def test_save_then_open_restores_the_scenario(app: ScenarioExplorer, tmp_path) -> None:
    app.person.depth.value = 1.1
    app.snowpack.layer_choice.value = 1
    app.snowpack.density.value = 260.0
    saved = app.scenario
    path = tmp_path / "plan.json"
    app.files.path.value = str(path)
    app.files.save_button.click()
    assert path.exists() and "saved" in app.files.status.value
    app.scenario = Scenario.example("two_burials")
    app.files.open_button.click()
    assert app.scenario == saved
    assert app.person.depth.value == 1.1


def test_opening_a_bad_file_shows_a_message(app: ScenarioExplorer, tmp_path) -> None:
    good = app.scenario
    bad = tmp_path / "bad.json"
    bad.write_text("{not json")
    app.files.path.value = str(bad)
    assert not app.open_file()
    assert app.files.message.value != "" and app.scenario is good
    app.files.path.value = str(tmp_path / "missing.json")
    assert not app.open_file()
    assert "No such file" in app.files.message.value and app.scenario is good


def test_exports_parse_back(app: ScenarioExplorer, tmp_path) -> None:
    import pandas as pd
    from PIL import Image

    app.files.path.value = str(tmp_path / "plan.json")
    kinds = ("csv", "budget_csv", "netcdf", "npz", "png", "report")
    paths = {k: app.export(k) for k in kinds}
    rg = app.radargram
    table = pd.read_csv(paths["csv"])  # header row: time_ns, then each trace position
    assert table.columns[0] == "time_ns"
    np.testing.assert_allclose(table.columns[1:].astype(float), rg.position_m, atol=1e-9)
    np.testing.assert_allclose(table["time_ns"], rg.time_s * 1e9, rtol=1e-8)
    np.testing.assert_allclose(table.to_numpy()[:, 1:], rg.data, rtol=1e-8, atol=1e-12)
    budget = pd.read_csv(paths["budget_csv"])
    assert set(budget["person"]) == {"ski tourer"}
    assert budget.loc[budget["term"] == "likely visible", "value"].item() == "yes"
    import xarray as xr

    with xr.open_dataset(paths["netcdf"], engine="scipy") as ds:
        np.testing.assert_array_equal(ds["amplitude"].to_numpy(), rg.data)
        np.testing.assert_array_equal(ds["raw_amplitude"].to_numpy(), app.raw_radargram.data)
        assert Scenario.from_json(ds.attrs["scenario_json"]) == app.scenario
    with np.load(paths["npz"]) as z:
        np.testing.assert_array_equal(z["data"], rg.data)
        np.testing.assert_array_equal(z["raw_data"], app.raw_radargram.data)
        np.testing.assert_array_equal(z["position_m"], rg.position_m)
        assert Scenario.from_json(str(z["scenario_json"])) == app.scenario
        assert float(z["truth_depth_m"][0]) == app.scenario.persons[0].depth_m
    with Image.open(paths["png"]) as picture:  # the radargram framed by axes and a bar
        assert picture.format == "PNG"
        assert picture.width > 800 and picture.height > 400
    report = paths["report"].read_text()
    assert CAUTION_TEXT in report
    assert report.count("data:image/png;base64,") == 1 and "<svg" in report
    assert "echo-to-noise ratio" in report and "likely visible" in report
    assert "sp-verdict-card" in report and "break-before: page" in report
    assert "&#34;format&#34;" in report or "&quot;format&quot;" in report  # scenario JSON
    assert io.StringIO(report).readline().startswith("<!DOCTYPE html>")


def test_person_panel_add_person(app: ScenarioExplorer) -> None:
    app.person.add.click()
    assert len(app.scenario.persons) == 2
    assert isinstance(app.scenario.persons[1], Person)
    assert Layer is not None


def test_updates_build_no_new_widgets(app: ScenarioExplorer) -> None:
    from ipywidgets.widgets.widget import _instances

    app.person.depth.value = 0.7
    n = len(_instances)
    for d in (0.8, 0.9, 1.0, 0.8):
        app.person.depth.value = d
    app.processing.switches["dewow"].value = False
    app.radargram_view.pick_position(3.0)
    assert len(_instances) == n


def _closed_widgets(root) -> list[str]:
    import ipywidgets

    seen: set[int] = set()
    bad: list[str] = []

    def walk(w, path: str) -> None:
        if id(w) in seen:
            return
        seen.add(id(w))
        if w.comm is None:
            bad.append(f"{path} ({type(w).__name__})")
        for name in w.keys:
            value = getattr(w, name, None)
            for i, x in enumerate(value if isinstance(value, (list, tuple)) else [value]):
                if isinstance(x, ipywidgets.Widget):
                    walk(x, f"{path}.{name}[{i}]")

    walk(root, "app")
    return bad


def test_every_widget_in_the_apps_is_open() -> None:
    # a closed model anywhere in the tree shows "Error displaying widget: model not found"
    # in the browser (seen when a method of the app shadowed ipywidgets' Widget.open)
    from snowprobe_widgets.widgets import MaterialsExplorer

    app = ScenarioExplorer()
    assert _closed_widgets(app) == []
    app.scenario = Scenario.example("two_burials")
    assert _closed_widgets(app) == []
    assert _closed_widgets(MaterialsExplorer()) == []


def test_hiding_one_control_hides_nothing_else() -> None:
    # controls share one layout model to keep the page light; hiding one (the soil water
    # when the ground is rock) must give it a layout of its own first
    app = ScenarioExplorer()
    editor = app.snowpack
    editor.ground_kind.value = "rock"
    assert editor.soil_water.layout.display == "none"
    shown = [editor.rock_permittivity, app.person.depth] if hasattr(app.person, "depth") \
        else [editor.rock_permittivity]
    assert all(w.layout.display != "none" for w in shown)
    editor.ground_kind.value = "soil"
    assert editor.soil_water.layout.display != "none"
    assert editor.rock_permittivity.layout.display == "none"


def test_the_app_sends_few_widget_models() -> None:
    # every open model goes to each browser on start-up; plain layouts and styles are
    # shared (605 models before sharing, 358 after, measured)
    import ipywidgets

    before = len(ipywidgets.widgets.widget._instances)
    ScenarioExplorer()
    assert len(ipywidgets.widgets.widget._instances) - before < 420


# --------------------------------------------------------------------------- bounded work


def test_work_over_the_page_limit_is_refused_saying_what_to_reduce(monkeypatch) -> None:
    from snowprobe_widgets import serving

    monkeypatch.setenv(serving.MAX_CELLS_ENV, str(512 * 300))  # the default: 512 x 201
    monkeypatch.setenv(serving.MAX_WORK_ENV, "1e12")
    app = ScenarioExplorer()
    assert app.message_text == ""
    first = app.scenario
    picture = app.radargram_view.image_mark.image.value
    app.radar.window.value = app.radar.window.value * 2  # twice the samples
    text = app.message_text
    assert "over this page's limit" in text and "fewer traces" in text
    assert "shorter time window" in text
    assert app.scenario is first
    assert app.radargram_view.image_mark.image.value == picture
    monkeypatch.setenv(serving.MAX_WORK_ENV, "10")
    monkeypatch.setenv(serving.MAX_CELLS_ENV, str(10**9))
    app.radar.window.value = app.radar.window.value / 2 * 1.01
    assert "clutter scatterer density" in app.message_text


def test_a_fault_in_a_callback_shows_a_plain_message_and_keeps_the_last_state(
        app: ScenarioExplorer, monkeypatch) -> None:
    good = app.scenario
    depth = app.person.depth.value
    picture = app.radargram_view.image_mark.image.value

    def broken(*args, **kwargs):
        raise RuntimeError("a fault deep in the model")

    monkeypatch.setattr(app.simulation, "__call__", broken, raising=False)
    monkeypatch.setattr(type(app.simulation), "__call__", broken)
    app.person.depth.value = depth + 0.2
    assert "Something went wrong here (RuntimeError)" in app.message_text
    assert "Traceback" not in app.message.value
    assert app.scenario is good
    assert app.person.depth.value == depth  # controls back beside the picture they made
    assert app.radargram_view.image_mark.image.value == picture
    monkeypatch.undo()

    def no_memory(*args, **kwargs):
        raise MemoryError

    monkeypatch.setattr(type(app.simulation), "__call__", no_memory)
    app.person.depth.value = depth + 0.2
    assert "more memory than this session may use" in app.message_text
    assert app.scenario is good


def test_the_full_wave_check_runs_beside_the_page_and_can_be_stopped(app: ScenarioExplorer
                                                                      ) -> None:
    tv = app.trace_view
    assert app.long_work.stop_button.disabled
    started = threading.Event()
    real = app.long_work.progress

    def slow_progress(show):
        report = real(show)

        def wrapped(fraction):
            started.set()
            time.sleep(0.01)  # a slow machine: the visitor has time to press stop
            report(fraction)

        return wrapped

    app.long_work.progress = slow_progress
    tv.fdtd_button.click()  # the page's button: returns at once, work in a thread
    assert started.wait(60)
    assert not app.long_work.stop_button.disabled
    app.long_work.stop_button.click()
    app.long_work.thread.join(60)
    assert not app.long_work.running
    assert "Stopped: the calculation was cancelled" in tv.message.value
    assert app.long_work.stop_button.disabled
    assert tv.progress.value < 1.0  # stopped before the end
    app.long_work.progress = real
    assert app.run_fdtd() is not None  # a later check runs to the end



# --------------------------------------------------------------------------- picture first
def _watch(app: ScenarioExplorer) -> tuple[list[str], Any]:
    """Record, in order, which of the app's views change; returns (order, stop)."""
    order: list[str] = []
    watched = [(app.radargram_view.image_mark, "image", "picture"),
               (app.verdicts, "value", "verdicts"), (app.status, "value", "status"),
               (app.trace_view.line, "y", "trace")]
    handlers = []
    for widget, trait, name in watched:
        handler = (lambda n: lambda change: order.append(n))(name)
        widget.observe(handler, names=trait)
        handlers.append((widget, trait, handler))

    def stop() -> None:
        for widget, trait, handler in handlers:
            widget.unobserve(handler, names=trait)

    return order, stop


def test_a_move_draws_the_picture_before_any_other_view(app: ScenarioExplorer) -> None:
    order, stop = _watch(app)
    try:
        app.person.depth.value = 1.3
    finally:
        stop()
    assert order[0] == "picture"
    # no event loop here: the other views follow within the same call
    assert {"verdicts", "status", "trace"} <= set(order)
    assert "1.3 m down" in app.verdicts.value


def test_served_views_follow_the_picture_once_per_burst_of_moves() -> None:
    import asyncio

    app = ScenarioExplorer()
    app.views_follow_s = 0.05
    calls = []
    app.verdicts.observe(lambda change: calls.append(change["new"]), names="value")

    async def moves() -> None:
        draws = app.radargram_view.draws
        for depth in (0.9, 1.0, 1.1):  # three moves faster than views_follow_s
            app.person.depth.value = depth
        assert app.radargram_view.draws == draws + 3  # every move drew its picture
        assert calls == [] and "1.1 m down" not in app.verdicts.value  # cards not yet
        await asyncio.sleep(0.3)
        assert len(calls) == 1 and "1.1 m down" in calls[0]  # once, for the last move
        app.person.depth.value = 1.2
        assert app.budgets[0].target_depth_m == pytest.approx(1.2)  # reading flushes them
        assert "1.2 m down" in app.verdicts.value
        await asyncio.sleep(0.2)
        assert len(calls) == 2  # the flushed update does not run again

    _run_in_own_loop(moves)


def _run_in_own_loop(coroutine_function) -> None:
    """Run ``coroutine_function()`` to its end in an event loop of its own, in a thread of
    its own: Playwright's sync API (browser tests in the same session) keeps an event loop
    running in the main thread. An assertion inside is raised here."""
    import asyncio

    failures: list[BaseException] = []

    def run() -> None:
        try:
            asyncio.run(coroutine_function())
        except BaseException as exc:  # an assertion inside, reported below
            failures.append(exc)

    worker = threading.Thread(target=run)
    worker.start()
    worker.join(60)
    assert not worker.is_alive()
    if failures:
        raise failures[0]


def test_a_served_kernel_gives_freed_memory_back_after_an_idle_wait(monkeypatch) -> None:
    import asyncio

    from snowprobe_widgets.widgets import explorer

    released: list[float] = []
    monkeypatch.setattr(explorer, "release_freed_memory", lambda: released.append(1) or True)
    app = ScenarioExplorer()
    app.views_follow_s, app.heap_idle_release_s = 0.02, 0.2

    async def moves() -> None:
        app.person.depth.value = 0.9
        await asyncio.sleep(0.12)  # the views followed; the idle wait runs
        app.person.depth.value = 1.0  # a move restarts it
        await asyncio.sleep(0.12)
        assert released == []
        await asyncio.sleep(0.3)
        assert released == [1]  # once, after the last move's idle wait

    _run_in_own_loop(moves)
