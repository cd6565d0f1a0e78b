"""Where a scenario leaves the calibrated range of a model: plain-language warnings.

Every dielectric model declares the band of its published calibration
(:attr:`snowprobe_widgets.materials.Material.valid_hz`). A scenario whose radar works
outside the band of one of its materials still computes (the models extrapolate
smoothly), but the user must see it: :func:`scenario_warnings` lists one sentence per
model, followed by the buried objects' scattering methods used outside their domain
(:func:`snowprobe_widgets.targets.validity_warnings`); the link budget and the explorer
show them.
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
    """Plain-language sentences: one per material model used outside its calibrated band,
    then the objects' scattering methods outside their domain.

    The band is checked at the radar's centre frequency.

    Parameters
    ----------
    scenario : Scenario

    Returns
    -------
    tuple of str
        Empty when every model of the scene is calibrated at the centre frequency;
        each sentence once, in the order the models occur (snow from the surface down,
        ground, people, objects), then the scattering warnings.
    """
    from .targets import validity_warnings

    fc = scenario.radar.center_frequency_hz
    out: list[str] = []
    for m in _scene_materials(scenario):
        note = m.validity_note(fc)
        if note and note not in out:
            out.append(note)
    return tuple(out) + tuple(w for w in validity_warnings(scenario) if w not in out)
