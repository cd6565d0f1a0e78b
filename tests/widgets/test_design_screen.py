"""The design screen's verdict cards, budget table, presets, undo, reset and scenario picker."""

from __future__ import annotations

import re

import pytest

from snowprobe_widgets.budget import link_budget
from snowprobe_widgets.detection import DEFAULT_THRESHOLD_DB
from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.widgets import ScenarioExplorer
from snowprobe_widgets.widgets.glossary import GLOSSARY
from snowprobe_widgets.widgets.verdict import budget_table_html, engineering


@pytest.fixture(scope="module")
def app() -> ScenarioExplorer:
    return ScenarioExplorer()


@pytest.fixture(autouse=True)
def _reset(app: ScenarioExplorer) -> None:
    app.detection_threshold.value = DEFAULT_THRESHOLD_DB
    app.scenario = Scenario.default()


def _cards(app: ScenarioExplorer) -> list[str]:
    return re.findall(r"<b style='color:#[0-9a-f]+'>(.*?)</b>", app.verdicts.value)


def test_one_card_per_person_in_plain_words() -> None:
    app = ScenarioExplorer(Scenario.example("two_burials"))
    cards = _cards(app)
    assert len(cards) == 2
    assert re.fullmatch(r"Person 1, 0\.9 m down: echo \d+ dB above noise and \d+ dB above "
                        r"clutter: likely visible", cards[0])
    assert cards[1].startswith("Person 2, 1.4 m down: ")
    assert [b.target_depth_m for b in app.budgets] == [0.9, 1.4]


def test_card_names_what_overrules_and_follows_the_screen(app: ScenarioExplorer) -> None:
    assert _cards(app)[0].endswith("likely visible")
    assert "sp-verdict-yes" in app.verdicts.value
    app.radar.height.value = 10.0  # 10 m up with a 51.2 ns window: the echo comes too late
    card = app.verdicts.value
    assert _cards(app)[0].endswith("not likely visible as set up")
    assert "time window (51.2 ns) ends before the echo" in card and "sp-verdict-no" in card
    assert app.budgets[0].warnings == link_budget(app.scenario).warnings


def test_detection_level_on_screen_reaches_the_card(app: ScenarioExplorer) -> None:
    assert app.budgets[0].threshold_db == DEFAULT_THRESHOLD_DB
    app.detection_threshold.value = 60.0
    assert app.budgets[0].threshold_db == 60.0
    assert "below the detection level of 60 dB" in app.verdicts.value


def test_no_person_card(app: ScenarioExplorer) -> None:
    app.person.remove.click()
    assert "Nobody is buried" in app.verdicts.value
    assert app.budgets == ()


def test_budget_table_rounds_and_compares_needs_with_settings() -> None:
    s = Scenario.default()
    coarse = s.__class__(**{**s.__dict__, "survey": s.survey.__class__(0.0, 10.0, 0.5)})
    text = budget_table_html(link_budget(coarse), coarse)
    assert not re.search(r"\d\.\d{4,}", text)  # no engineering noise like -0.001173 dB
    assert "spectral shaping" not in text and "pulse and target across the band" in text
    noise = re.search(r"receiver noise after stacking</td><td[^>]*>(-?[0-9.]+) dBm", text)
    assert noise and float(noise.group(1)) < 0  # a noise power, negative in dBm
    assert "set: 50.0 cm, NOT met" in text  # trace spacing
    assert "set: 51.2 ns, met" in text  # time window
    assert engineering(-0.001173, "dB") == "0.0 dB"
    assert engineering(0.073, "m") == "7.3 cm"


def test_undo_and_reset() -> None:
    app = ScenarioExplorer()
    start = app.scenario
    assert app.undo_button.disabled and not app.undo()
    app.person.depth.value = 1.2
    app.radar.power.value = 30.0
    assert not app.undo_button.disabled
    assert app.undo()
    assert app.scenario.radar.transmit_power_dbm == start.radar.transmit_power_dbm
    assert app.radar.power.value == start.radar.transmit_power_dbm
    assert app.scenario.persons[0].depth_m == 1.2
    app.reset()
    assert app.scenario == start and app.person.depth.value == start.persons[0].depth_m


def test_presets_keep_the_layers_and_the_people(app: ScenarioExplorer) -> None:
    before = app.scenario
    app.snow_preset.value = "Wet spring debris"
    s = app.scenario
    assert {la.lwc_percent for la in s.snowpack.layers} == {5.0}
    assert s.snowpack.depth_m == pytest.approx(before.snowpack.depth_m)
    assert s.persons == before.persons
    assert app.snow_preset.value == "(choose)"
    app.platform_preset.value = "Helicopter (10-50 m; 30 m)"
    r = app.scenario.radar
    assert r.antenna_height_m == 30.0 and r.time_window_s > 2 * 30.0 / 3e8
    assert app.radar.height.value == pytest.approx(30.0)
    assert "time window" not in app.verdicts.value  # the window was widened to reach


def test_set_for_all_layers(app: ScenarioExplorer) -> None:
    app.snowpack.density.value = 400.0
    app.snowpack.lwc.value = 2.0
    app.snowpack.all_layers.click()
    layers = app.scenario.snowpack.layers
    assert {(la.density_kg_m3, la.lwc_percent) for la in layers} == {(400.0, 2.0)}


def test_scenario_picker_names_the_scenario_on_screen(app: ScenarioExplorer) -> None:
    assert app.demo.value == "shallow_dry_powder"
    assert dict((v, k) for k, v in app.demo.options)["shallow_dry_powder"] == \
        "Shallow dry powder"
    app.person.depth.value = 1.1
    assert app.demo.value == "" and app.demo.label == "Shallow dry powder (changed)"
    app.demo.value = "deep_wet_spring"
    assert app.scenario.name == "deep_wet_spring" and app.demo.label == "Deep wet spring"


def test_counters_are_hidden_and_the_glossary_is_a_page(app: ScenarioExplorer) -> None:
    assert app.status.layout.display == "none"
    assert app.radargram_view.status.layout.display == "none"
    assert "updates=" in app.status.value  # still there for tests
    titles = list(app.lower.titles)
    app.lower.selected_index = titles.index("Glossary")
    for term in ("dB", "dBm", "two-way time", "clutter", "footprint"):
        assert f"<b>{term}</b>" in app.glossary.value and GLOSSARY[term]
    app.lower.selected_index = 0
    assert "dB" in app.detection_threshold.tooltip


def test_pin_a_change_b_and_compare(app: ScenarioExplorer, tmp_path) -> None:
    from snowprobe_widgets.widgets.compare import budget_differences

    with pytest.raises(ValueError, match="pin a design"):
        ScenarioExplorer().compare.html()
    app.pin_design()
    a_data = app.radargram.data
    app.radar.frequency.value = 500.0
    titles = list(app.lower.titles)
    app.lower.selected_index = titles.index("Compare A/B")
    view = app.compare
    assert view.a.radargram.data is a_data and view.b.scenario is app.scenario
    assert view.pictures.value.count("<img alt='radargram") == 2
    assert "one scale for A and B" in view.pictures.value
    assert view.cards.value.count("sp-verdict-card") == 2
    (name, rows), = budget_differences(view.a, view.b)
    assert name == "Ski tourer"
    gain = dict((t, d) for t, _a, _b, d in rows)["antenna gain and aperture"]
    # G lambda / 4 pi grows by 20 log10(800 / 500) = 4.1 dB at the lower frequency
    assert gain == "+4.1 dB"
    app.files.path.value = str(tmp_path / "plan.json")
    out = app.export("compare")
    text = out.read_text(encoding="utf-8")
    assert "Caution." in text and text.count("data:image/png;base64,") == 3  # A, B, scale
    assert "B - A" in text
    app.lower.selected_index = 0


def test_a_preset_the_layers_model_refuses_is_explained_and_changes_nothing(
        app: ScenarioExplorer) -> None:
    import dataclasses

    s = app.scenario
    ice = tuple(dataclasses.replace(la, dielectric_model="ice") for la in s.snowpack.layers)
    app.scenario = dataclasses.replace(s, snowpack=dataclasses.replace(s.snowpack, layers=ice))
    before = app.scenario
    app.snow_preset.value = "Wet spring debris"
    assert app.scenario == before
    assert "Dielectric model ice" in app.message.value
    assert app.snow_preset.value == "(choose)"
