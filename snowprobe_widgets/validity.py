"""Where a scenario leaves the calibrated range of a model: plain-language warnings.

Every dielectric model declares the band of its published calibration
(:attr:`snowprobe_widgets.materials.Material.valid_hz`). A scenario whose radar works
outside the band of one of its materials still computes (the models extrapolate
smoothly), but the user must see it: :func:`scenario_warnings` lists one sentence per
model and the link budget and the explorer show them.
"""

from __future__ import annotations

from typing import Any

__all__ = ["scenario_warnings"]


def _scene_materials(scenario: Any) -> list[Any]:
    mats = list(scenario.snowpack.materials()) + [scenario.ground.material()]
    for person in scenario.persons:
        mats += list(person.tissue_stack()[0])
    for obj in scenario.objects:
        make = getattr(obj, "material", None)
        if make is not None:
            mats.append(make())
    return mats


def scenario_warnings(scenario: Any) -> tuple[str, ...]:
    """One plain-language sentence per material model used outside its calibrated band.

    The band is checked at the radar's centre frequency.

    Parameters
    ----------
    scenario : Scenario

    Returns
    -------
    tuple of str
        Empty when every model of the scene is calibrated at the centre frequency;
        each sentence once, in the order the models occur (snow from the surface down,
        ground, people, objects).
    """
    fc = scenario.radar.center_frequency_hz
    out: list[str] = []
    for m in _scene_materials(scenario):
        note = m.validity_note(fc)
        if note and note not in out:
            out.append(note)
    return tuple(out)
