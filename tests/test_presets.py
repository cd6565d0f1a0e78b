"""Snow and platform presets keep what they do not name (layers' dielectric models)."""

from __future__ import annotations

import dataclasses

import pytest

from snowprobe_widgets.examples import make_example
from snowprobe_widgets.fields import FieldError
from snowprobe_widgets.plan import _deep_enough
from snowprobe_widgets.presets import SNOW_PRESETS, apply_snow


def _with_model(model: str):
    s = make_example("two_burials")
    layers = tuple(dataclasses.replace(la, dielectric_model=model) for la in s.snowpack.layers)
    return dataclasses.replace(s, snowpack=dataclasses.replace(s.snowpack, layers=layers))


@pytest.mark.parametrize("name", list(SNOW_PRESETS))
def test_snow_presets_keep_each_layers_dielectric_model(name: str) -> None:
    s = apply_snow(_with_model("kovacs+crim"), name)
    snow = [la for la in s.snowpack.layers if not la.ice_crust]
    assert snow and {la.dielectric_model for la in snow} == {"kovacs+crim"}


def test_a_model_that_cannot_take_the_preset_refuses_it_by_name() -> None:
    # the "ice" model holds no liquid water: wet spring debris must be refused, naming the
    # layer's dielectric model, instead of silently switching the layer to another model
    with pytest.raises(FieldError) as err:
        apply_snow(_with_model("ice"), "Wet spring debris")
    assert err.value.field.name == "dielectric_model"
    assert "Dielectric model ice" in err.value.screen


def test_deepening_the_snow_for_a_plan_keeps_the_bottom_layers_model() -> None:
    s = _with_model("matzler+tiuri")
    deeper = _deep_enough(s, s.snowpack.depth_m + 2.0)
    assert deeper.snowpack.depth_m == pytest.approx(s.snowpack.depth_m + 2.0)
    assert {la.dielectric_model for la in deeper.snowpack.layers} == {"matzler+tiuri"}
