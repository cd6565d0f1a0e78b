"""Every public constructor refuses a value of the wrong kind with a message naming the field.

Covers the defects "huge integers raise OverflowError" and "arrays or strings where numbers
belong are accepted or raise a TypeError with no field name", and the single liquid-water
limit shared by ``Layer`` and the wet-snow models.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from snowprobe_widgets import materials
from snowprobe_widgets._validate import check_choice, check_range
from snowprobe_widgets.constants import MAX_LWC_PERCENT, RHO_ICE_KG_M3
from snowprobe_widgets.scene import Layer, Scenario

BAD_VALUES = {
    "huge integer": 10**400,
    "array": np.array([1.0, 2.0]),
    "0-d array": np.array(3.0),
    "numeric string": "3",
    "list": [1.0],
    "complex": 1 + 0j,
}


def _instances():
    demo = Scenario.example("debris_no_burial")
    crust = Scenario.example("crust_and_ski")
    base = Scenario.default()
    objs = [base.snowpack, base.snowpack.layers[0], base.ground, base.radar, base.survey,
            base.clutter, *base.persons, *demo.objects, *crust.objects]
    seen, out = set(), []
    for o in objs:
        if type(o) not in seen:
            seen.add(type(o))
            out.append(o)
    return out


def _number_fields():
    for obj in _instances():
        for f in dataclasses.fields(obj):
            value = getattr(obj, f.name)
            if isinstance(value, (float, int)) and not isinstance(value, bool):
                yield pytest.param(obj, f.name, id=f"{type(obj).__name__}.{f.name}")


@pytest.mark.parametrize("obj, field", list(_number_fields()))
@pytest.mark.parametrize("kind", list(BAD_VALUES))
def test_wrong_kind_of_number_is_refused_naming_the_field(obj, field, kind):
    with pytest.raises(ValueError) as info:
        dataclasses.replace(obj, **{field: BAD_VALUES[kind]})
    message = str(info.value)
    assert field in message
    assert len(message) < 300  # a 401-digit number is described, not printed


def test_text_fields_refuse_numbers_and_arrays_naming_the_field():
    radar = Scenario.default().radar
    for bad in (np.array(["ricker"]), 3, None):
        with pytest.raises(ValueError, match="pulse"):
            dataclasses.replace(radar, pulse=bad)
    with pytest.raises(ValueError, match="name"):
        dataclasses.replace(Scenario.default(), name="bad \ud800 name")


def test_check_range_describes_rather_than_prints_huge_values():
    with pytest.raises(ValueError, match=r"depth_m = an integer of 401 digits is far too large"):
        check_range("depth_m", 10**400, 0, 10)
    assert check_range("depth_m", np.float32(2.5), 0, 10) == 2.5
    assert check_range("n", np.int64(3), 0, 10) == 3.0
    with pytest.raises(ValueError, match="kind = an array"):
        check_choice("kind", np.array(["a"]), ("a", "b"))


@pytest.mark.parametrize("density", np.linspace(30.0, 917.0, 60))
def test_one_liquid_water_limit_for_layer_and_materials(density):
    # probe just below, at and just above the pore-volume limit, to the last bit
    room = 100.0 * (1.0 - density / RHO_ICE_KG_M3)
    for lwc in (np.nextafter(room, -1), room, np.nextafter(room, 200), MAX_LWC_PERCENT):
        if not 0.0 <= lwc <= MAX_LWC_PERCENT:
            continue
        try:
            layer = Layer(1.0, density, float(lwc))
        except ValueError:
            layer = None
        try:
            materials.snow(density, float(lwc))
            material_ok = True
        except ValueError:
            material_ok = False
        assert (layer is not None) == material_ok, (density, lwc)
        if layer is not None:
            layer.material()  # what simulate calls: accepted by the scene means usable
