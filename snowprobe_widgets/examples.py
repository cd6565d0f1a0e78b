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


# --------------------------------------------------------------------------- literature
#: Scenarios of our own built on published experiments: name -> the paper whose setup
#: they follow. The tests assert the outcome the paper reports, in kind.
LITERATURE: dict[str, str] = {
    "heilig2006_airborne_dry": "Heilig & Schneebeli (2006), Airborne detection of avalanche "
    "victims with ground penetrating radar, ISSW 2006, Telluride",
    "jenssen2021_drone_wet": "Jenssen & Jacobsen (2020, J. Electromagn. Waves Appl. 34(14); "
    "2021, Remote Sensing 13(13):2610) and the UiT/NORCE report on UAV-borne UWB radar",
    "yamaguchi1991_plates_wet": "Yamaguchi, Mitsumoto, Sengoku & Abe (1991), Detection of "
    "objects buried in wet snowpack by an FM-CW radar, IEEE TGRS 29(2):201-208",
}


def _literature_note(name: str, setup: str, outcome: str, ours: str) -> str:
    return (f"Our own scenario built on a published setup, not a record of the experiment: "
            f"{LITERATURE[name]}. Their setup: {setup} What they report: {outcome} What is "
            f"ours: {ours}")


@EXAMPLES.register("heilig2006_airborne_dry")
def heilig2006_airborne_dry() -> Scenario:
    """A 400 MHz antenna 6 m over dry snow, a body-sized target 1 m down (Heilig 2006)."""
    name = "heilig2006_airborne_dry"
    return Scenario(
        snowpack=Snowpack((Layer(0.8, 180.0), Layer(1.2, 280.0), Layer(0.8, 340.0)),
                          temperature_c=-6.0),
        ground=Ground("soil", water_fraction=0.1),
        persons=(Person(5.0, 1.0, heading_deg=90.0, posture="lying_flat",
                        label="phantom"),),
        radar=Radar("ricker", 400e6, dt_s=3.125e-10, time_window_s=160e-9,
                    antenna_height_m=6.0),
        survey=Survey(0.0, 10.0, 0.05),
        clutter=Clutter(scatterer_density_per_m3=0.5, scatterer_size_m=0.1,
                        thin_layer_count=3, thin_layer_contrast=0.05, seed=13),
        name=name,
        notes=_literature_note(
            name, "a 400 MHz antenna on a self-built aerial railway about 6 m above the "
            "snow, a phantom of three water bags buried in dry snow, a 160 ns window.",
            "even very different dry snow was deeply penetrable and the phantom 'could "
            "easily be detected'.",
            "the 2.8 m dry snowpack, the 1 m depth, a lying adult standing in for the "
            "water-bag phantom (both are body-sized, water-rich reflectors), the line and "
            "the clutter."),
    )


@EXAMPLES.register("jenssen2021_drone_wet")
def jenssen2021_drone_wet() -> Scenario:
    """A 0.7-4.5 GHz drone radar 3 m up, a person under 1.5 m of wet snow (Jenssen 2021)."""
    name = "jenssen2021_drone_wet"
    return Scenario(
        snowpack=Snowpack((Layer(0.5, 380.0, lwc_percent=3.0),
                           Layer(1.5, 420.0, lwc_percent=2.0)), temperature_c=0.0),
        ground=Ground("soil", water_fraction=0.25),
        persons=(Person(3.0, 1.5, heading_deg=90.0, posture="lying_flat",
                        label="person"),),
        radar=Radar("stepped_frequency", 2.6e9, bandwidth_hz=3.8e9, transmit_power_dbm=10.0,
                    noise_floor_dbm=-100.0, stacking=256, dt_s=5e-11, time_window_s=51.2e-9,
                    antenna_height_m=3.0, antenna_band_low_hz=0.7e9,
                    antenna_band_high_hz=4.5e9),
        survey=Survey(0.0, 6.0, 0.03),
        name=name,
        notes=_literature_note(
            name, "an ultra-wideband pseudo-noise radar of 0.7-4.5 GHz (about 5 cm range "
            "resolution) on an octocopter a few metres above the snow, processed with "
            "f-k migration.",
            "the snowpack's layering resolved in wet snow, and a person detected under "
            "1.5 m of wet snow.",
            "the stepped-frequency sweep standing in for the pseudo-noise waveform, the "
            "3 m height, the wetness (2-3 % water), the power, noise and stacking, the "
            "soil. The snow models are calibrated below this band: the scenario says so."),
    )


@EXAMPLES.register("yamaguchi1991_plates_wet")
def yamaguchi1991_plates_wet() -> Scenario:
    """An L-band FM-CW radar over metal targets 70-90 cm down in very wet snow (1991)."""
    name = "yamaguchi1991_plates_wet"
    return Scenario(
        snowpack=Snowpack((Layer(1.6, 450.0, lwc_percent=6.0),), temperature_c=0.0),
        ground=Ground("soil", water_fraction=0.3),
        objects=(MetalPlate(2.0, 0.9, 0.6, 0.1, heading_deg=90.0, label="metal plate"),
                 MetalPlate(5.0, 0.7, 0.6, 0.03, heading_deg=90.0,
                            label="pipe-sized strip")),
        radar=Radar("stepped_frequency", 1.5e9, bandwidth_hz=1.0e9, transmit_power_dbm=20.0,
                    noise_floor_dbm=-90.0, stacking=16, dt_s=1e-10, time_window_s=51.2e-9,
                    antenna_height_m=0.3),
        survey=Survey(0.0, 7.0, 0.05),
        name=name,
        notes=_literature_note(
            name, "an L-band FM-CW radar of at most 100 mW over a heavily wet natural "
            "snowpack.",
            "a 10 x 60 cm metal plate mapped at 90 cm and a 3 cm metal pipe at 70 cm.",
            "the 1-2 GHz sweep, the 6 % water, the density, the antenna height, a 3 cm "
            "wide strip standing in for the pipe, the noise and stacking."),
    )
