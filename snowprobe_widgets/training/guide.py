"""Scenes for the guide on reading a radargram: one feature each, drawn by the model.

Each :class:`GuideScene` is a small invented scenario (6 m line, 800 MHz, dry snow) showing
one thing a searcher must tell apart: a body's hyperbola, the same body deeper, a boulder,
metal, an ice crust. Captions and scenes are our own.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..scene import (
    Boulder,
    Clutter,
    Ground,
    Layer,
    MetalPlate,
    Person,
    Radar,
    Scenario,
    Snowpack,
    Survey,
)

__all__ = ["GuideScene", "guide_scenes"]


@dataclass(frozen=True)
class GuideScene:
    """One picture of the guide: a title, a caption and the scene it is made from."""

    title: str
    caption: str
    scenario: Scenario


def _scene(name: str, persons: tuple = (), objects: tuple = (), crust: bool = False,
           ) -> Scenario:
    snow = Snowpack((Layer(0.8, 250.0), Layer(1.6, 330.0)), temperature_c=-6.0)
    if crust:
        snow = snow.with_ice_crust(0.5, 0.03, 860.0)
    return Scenario(snowpack=snow, ground=Ground("soil", 0.1), persons=persons,
                    objects=objects, radar=Radar("ricker", 800e6, dt_s=1e-10,
                                                 time_window_s=38.4e-9),
                    survey=Survey(0.0, 6.0, 0.04),
                    clutter=Clutter(scatterer_density_per_m3=1.0, scatterer_size_m=0.06,
                                    seed=5),
                    name=name, notes="Invented scene for the radargram-reading guide.")


def guide_scenes() -> tuple[GuideScene, ...]:
    """The guide's scenes, in reading order."""
    shallow = Person(3.0, 0.6, heading_deg=90.0)
    deep = Person(3.0, 1.5, heading_deg=90.0)
    rock = Boulder(3.0, 0.7, 0.6, permittivity=7.0)
    ski = MetalPlate(3.0, 0.7, 1.7, 0.09, heading_deg=0.0, label="lost ski")
    return (
        GuideScene("A person 0.6 m down",
                   "A buried body gives a hyperbola: the antenna meets the echo first "
                   "straight above the body (the apex, the top of the body) and later on "
                   "either side. Mark the apex.", _scene("guide person", (shallow,))),
        GuideScene("The same person 1.5 m down",
                   "Deeper, the apex comes later and the hyperbola is wider and flatter, "
                   "and weaker: the wave spread out over a longer path.",
                   _scene("guide deep", (deep,))),
        GuideScene("A boulder 0.6 m across",
                   "A rock also gives a hyperbola, often with a second echo from its "
                   "bottom just below the first. Its size and the double echo tell it "
                   "apart from a body; when in doubt, probe.",
                   _scene("guide boulder", objects=(rock,))),
        GuideScene("A lost ski along the line",
                   "Metal reflects all of the wave: a very bright, flat echo as long as the "
                   "object, often with ringing stripes below it.",
                   _scene("guide ski", objects=(ski,))),
        GuideScene("An ice crust 0.5 m down",
                   "A crust or a layer boundary runs across the whole section as a "
                   "continuous line: a layer, not a body.",
                   _scene("guide crust", crust=True)),
    )
