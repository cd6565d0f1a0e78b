"""Demo scenarios, set in an invented place: the Tarnhollow valley below Mount Ebbenfell.

Every scenario here is made up for training and testing; the place, the people and the
avalanches are fictional, and the snow, ground and burial figures are plausible
illustrations (burial depths around the published median of about 1 m; Falk et al. 1994,
Nature 368:21), not records of real events. Each keeps its radargram small (about 200
traces x 512 samples) so that it simulates quickly.

More demos can be added by other packages through the entry-point group
``snowprobe_widgets.scenarios`` (a name mapped to a function returning a ``Scenario``).
"""

from __future__ import annotations

from collections.abc import Callable

from .registry import Registry
from .scene import (
    Boulder,
    Branch,
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

__all__ = ["EXAMPLES", "example_names", "make_example"]

#: Registry of demo scenario factories, keyed by name.
EXAMPLES = Registry("snowprobe_widgets.scenarios", "example scenario")

_SETTING = (
    "Invented scenario in the fictional Tarnhollow valley below Mount Ebbenfell; not a "
    "real incident. "
)


def example_names() -> tuple[str, ...]:
    """Names of the demo scenarios, sorted."""
    return EXAMPLES.names()


def make_example(name: str) -> Scenario:
    """Build the demo scenario called ``name``.

    Raises
    ------
    ValueError
        If no demo has that name (the message lists the known ones), or a plugin's
        factory does not return a ``Scenario``.
    """
    factory: Callable[[], object] = EXAMPLES.get(name)
    scenario = factory()
    if not isinstance(scenario, Scenario):
        raise ValueError(
            f"example scenario {name!r} did not build a Scenario "
            f"(got {type(scenario).__name__})")
    return scenario


@EXAMPLES.register("shallow_dry_powder")
def shallow_dry_powder() -> Scenario:
    """A ski tourer 0.6 m down in cold, dry powder over frozen soil, seen at 800 MHz."""
    return Scenario(
        snowpack=Snowpack((
            Layer(0.3, 120.0),
            Layer(0.5, 220.0),
            Layer(0.7, 300.0),
            Layer(0.5, 350.0),
        ), temperature_c=-8.0),
        ground=Ground("soil", water_fraction=0.10),
        persons=(Person(5.0, 0.6, heading_deg=90.0, posture="lying_flat",
                        label="ski tourer"),),
        radar=Radar("ricker", 800e6, dt_s=1e-10, time_window_s=51.2e-9),
        survey=Survey(0.0, 10.0, 0.05),
        clutter=Clutter(scatterer_density_per_m3=2.0, scatterer_size_m=0.08,
                        thin_layer_count=3, thin_layer_contrast=0.05, seed=11),
        name="shallow_dry_powder",
        notes=_SETTING + "A small slab released in the north bowl after a cold storm; one "
        "ski tourer lies flat, across the survey line, 0.6 m under light dry snow (2 m in "
        "all, -8 degC). The easy case: the body's echo stands well clear of the layering.",
    )


@EXAMPLES.register("deep_wet_spring")
def deep_wet_spring() -> Scenario:
    """A person curled up 1.8 m down in wet spring debris, seen at 400 MHz."""
    return Scenario(
        snowpack=Snowpack((
            Layer(0.4, 450.0, lwc_percent=4.0),
            Layer(1.2, 520.0, lwc_percent=3.0),
            Layer(1.0, 480.0, lwc_percent=2.0),
            Layer(0.6, 400.0, lwc_percent=0.5),
        ), temperature_c=0.0),
        ground=Ground("soil", water_fraction=0.30),
        persons=(Person(6.0, 1.8, heading_deg=20.0, posture="curled", label="hiker"),),
        radar=Radar("ricker", 400e6, transmit_power_dbm=27.0, stacking=64, dt_s=2e-10,
                    time_window_s=102.4e-9, antenna_height_m=0.3),
        survey=Survey(0.0, 12.0, 0.06),
        clutter=Clutter(scatterer_density_per_m3=5.0, scatterer_size_m=0.25,
                        thin_layer_count=8, thin_layer_contrast=0.10, seed=7),
        name="deep_wet_spring",
        notes=_SETTING + "A wet-snow avalanche in the Ebbenfell gully on a warm April "
        "afternoon: 3.2 m of dense, moist-to-wet debris (0.5-4 % liquid water) at 0 degC, "
        "with clods up to about 0.4 m. One person lies curled 1.8 m down. The hard case: "
        "wet snow absorbs the higher frequencies, so the radar runs at 400 MHz.",
    )


@EXAMPLES.register("debris_no_burial")
def debris_no_burial() -> Scenario:
    """Boulders and branches in a debris field with nobody buried: a false-alarm case."""
    return Scenario(
        snowpack=Snowpack((
            Layer(1.5, 420.0),
            Layer(1.0, 350.0),
        ), temperature_c=-3.0),
        ground=Ground("rock", permittivity=7.0, conductivity_s_m=0.002),
        objects=(
            Boulder(3.0, 0.8, 0.6),
            Boulder(8.5, 1.4, 0.9, offset_m=0.5, permittivity=8.0),
            Branch(5.5, 0.5, 0.12, 2.5, heading_deg=30.0, water_fraction=0.35),
            Branch(11.0, 1.1, 0.3, 4.0, offset_m=-0.8, heading_deg=80.0, water_fraction=0.4,
                   frozen=True),
        ),
        radar=Radar("ricker", 500e6, dt_s=1e-10, time_window_s=51.2e-9),
        survey=Survey(0.0, 14.0, 0.07),
        clutter=Clutter(scatterer_density_per_m3=8.0, scatterer_size_m=0.3,
                        thin_layer_count=6, thin_layer_contrast=0.08, seed=3),
        name="debris_no_burial",
        notes=_SETTING + "The runout of the Tarnhollow forest path after a mixed avalanche "
        "that brought down rocks and broke trees: 1.5 m of debris over 1 m of old snow on "
        "bedrock, two boulders, a green branch and a frozen trunk, and nobody buried. "
        "Every hyperbola here is a false alarm.",
    )


@EXAMPLES.register("crust_and_ski")
def crust_and_ski() -> Scenario:
    """A person 1 m down under a melt-freeze crust, next to a lost ski."""
    snowpack = Snowpack((Layer(0.6, 200.0), Layer(1.4, 330.0)), temperature_c=-6.0)
    return Scenario(
        snowpack=snowpack.with_ice_crust(0.45, 0.02, density_kg_m3=870.0),
        ground=Ground("soil", water_fraction=0.12),
        persons=(Person(4.5, 1.0, heading_deg=0.0, posture="lying_flat",
                        label="snowshoer"),),
        objects=(MetalPlate(2.2, 0.7, 1.7, 0.09, heading_deg=20.0, tilt_deg=15.0,
                            label="lost ski"),),
        radar=Radar("ricker", 800e6, dt_s=1e-10, time_window_s=51.2e-9),
        survey=Survey(0.0, 8.0, 0.04),
        clutter=Clutter(scatterer_density_per_m3=1.0, scatterer_size_m=0.1,
                        thin_layer_count=2, thin_layer_contrast=0.05, seed=5),
        name="crust_and_ski",
        notes=_SETTING + "On the Ebbenfell shoulder a 2 cm melt-freeze crust lies 0.45 m "
        "down. A snowshoer is buried flat 1 m deep beneath it, and a lost ski lies tilted "
        "about 2 m away, shallower. The crust gives a bright flat echo; the ski's echo is "
        "brighter than the body's.",
    )


@EXAMPLES.register("two_burials")
def two_burials() -> Scenario:
    """Two people in wind-packed snow, one shallow and flat, one deeper, curled, off-line."""
    return Scenario(
        snowpack=Snowpack((
            Layer(0.5, 280.0),
            Layer(1.0, 380.0),
            Layer(1.0, 420.0),
        ), temperature_c=-10.0),
        ground=Ground("rock", permittivity=6.0, conductivity_s_m=0.001),
        persons=(
            Person(3.0, 0.9, heading_deg=0.0, posture="lying_flat", label="person 1"),
            Person(7.5, 1.4, offset_m=0.4, heading_deg=60.0, posture="curled",
                   label="person 2"),
        ),
        radar=Radar("ricker", 600e6, dt_s=1e-10, time_window_s=51.2e-9),
        survey=Survey(0.0, 10.0, 0.05),
        clutter=Clutter(scatterer_density_per_m3=3.0, scatterer_size_m=0.15,
                        thin_layer_count=4, thin_layer_contrast=0.06, seed=21),
        name="two_burials",
        notes=_SETTING + "A wind-slab release above the Tarnhollow hut caught two people: "
        "one lies flat 0.9 m down on the line, the other is curled 1.4 m down and 0.4 m "
        "to the side of it. Both must be found.",
    )
