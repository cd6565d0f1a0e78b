"""The kind registry and protocol: every kind conforms, unknown kinds are refused by name,
a plugin kind works end to end, and an object's own material reaches its echo."""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from typing import ClassVar

import numpy as np
import pytest

from snowprobe_widgets import link_budget, simulate
from snowprobe_widgets.facets import FacetMesh, plate_mesh
from snowprobe_widgets.scenario_files import ScenarioFileError, scenario_from_dict
from snowprobe_widgets.scene import (
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
from snowprobe_widgets.targets import TARGETS, kind_of, kinds_in, validity_warnings
from snowprobe_widgets.targets.base import ANGLES_DEG, Reflection, check_geometry

EXAMPLES = {"person": Person(3.0, 0.8), "boulder": Boulder(3.0, 0.8, 0.5),
            "branch": Branch(3.0, 0.8, 0.1, 2.0, heading_deg=30.0),
            "metal": MetalPlate(3.0, 0.8, 1.7, 0.09, tilt_deg=10.0)}


def _scene(objects=(), persons=(), fc: float = 800e6) -> Scenario:
    return Scenario(Snowpack((Layer(3.0, 300.0),)), Ground("soil", 0.2), tuple(persons),
                    tuple(objects), Radar("ricker", fc, dt_s=1e-10, time_window_s=40e-9),
                    Survey(2.0, 4.0, 0.1), Clutter())


def test_built_in_kinds_are_registered_under_their_objects_kind() -> None:
    assert TARGETS.group == "snowprobe_widgets.targets"
    assert set(TARGETS.names()) >= set(EXAMPLES)
    for name, obj in EXAMPLES.items():
        assert obj.kind == name and kind_of(obj).name == name
    assert [k.name for k in kinds_in("persons")] == ["person"]


@pytest.mark.parametrize("name", sorted(EXAMPLES))
def test_every_kind_follows_the_protocol(name: str) -> None:
    obj = EXAMPLES[name]
    kind = kind_of(obj)
    assert isinstance(kind.title, str) and kind.placement in ("persons", "objects")
    assert isinstance(getattr(obj, kind.size_field), float)
    mesh = kind.mesh(obj, 0.03)
    assert isinstance(mesh, FacetMesh) and mesh.n_facets > 0
    assert np.all(mesh.centre_m[:, 2] >= obj.depth_m - 1e-9)
    f = np.linspace(300e6, 1500e6, 13)
    for pol in ("across_line", "along_line"):
        refl = kind.reflection(obj, complex(1.6, -0.001), 800e6, f, pol)
        assert isinstance(refl, Reflection)
        assert refl.angle_ratio.shape == ANGLES_DEG.shape and refl.spectrum.shape == f.shape
        assert np.all(np.isfinite(refl.facet_spectrum))
    x, z = kind.outline(obj)
    assert x.shape == z.shape and np.all(np.isfinite(x)) and np.all(np.isfinite(z))
    assert all(r > 0 for r in kind.principal_radii_m(obj))
    assert 0 < kind.budget_factor(obj, 0.3, 1.5, 1.3) <= 1.5
    assert all(isinstance(w, str) for w in kind.validity(obj, 1.3, 800e6))
    assert isinstance(kind.appearance(obj), str) and kind.appearance(obj).endswith(".")
    stand_in = kind.cylinder_stand_in(obj)
    if stand_in is not None:
        d, material, what = stand_in
        assert d > 0 and isinstance(what, str)
        assert np.isfinite(complex(material.permittivity(800e6))) or material.perfect_conductor


@dataclass(frozen=True)
class Sledge:
    """A kind nobody registered."""

    kind: ClassVar[str] = "sledge"
    position_m: float
    depth_m: float
    offset_m: float = 0.0

    @property
    def bottom_depth_m(self) -> float:
        return self.depth_m + 0.2


def test_an_unknown_kind_is_refused_by_name_everywhere() -> None:
    sledge = Sledge(3.0, 0.5)
    with pytest.raises(ValueError, match="unknown buried object kind 'sledge'"):
        kind_of(sledge)
    with pytest.raises(ValueError, match=r"objects\[0\] must be a .*got Sledge"):
        _scene((sledge,))
    # the link budget no longer falls back to a flat reflector for it
    with pytest.raises(ValueError, match="sledge"):
        link_budget(_scene(persons=(Person(3.0, 0.5),)), sledge)
    doc = _scene((Boulder(3.0, 0.5, 0.4),)).to_json()
    doc = doc.replace('"type": "boulder"', '"type": "sledge"')
    with pytest.raises(ScenarioFileError, match=r'objects\[0\]\.type: "sledge" is not one of'):
        Scenario.from_json(doc)


@dataclass(frozen=True)
class Disc:
    """A plugin kind for the test: a flat metal disc (drawn as its square)."""

    kind: ClassVar[str] = "disc"
    position_m: float
    depth_m: float
    diameter_m: float = 0.3
    offset_m: float = 0.0
    heading_deg: float = 0.0

    def __post_init__(self) -> None:
        check_geometry(self)

    @property
    def bottom_depth_m(self) -> float:
        return self.depth_m


class DiscKind:
    name = "disc"
    title = "metal disc"
    value_type = Disc
    placement = "objects"
    size_field = "diameter_m"
    has_heading = False

    def mesh(self, obj, facet_size_m):
        side = obj.diameter_m * math.sqrt(math.pi) / 2  # the disc's area
        return plate_mesh((obj.position_m, obj.offset_m, obj.depth_m), side, side,
                          facet_size_m=facet_size_m)

    def reflection(self, obj, snow_eps, fc, freq_hz, polarization):
        n = np.size(freq_hz)
        return Reflection(np.ones_like(ANGLES_DEG), -np.ones(n, complex), np.ones(n))

    def outline(self, obj):
        r = obj.diameter_m / 2
        return np.array([obj.position_m - r, obj.position_m + r]), np.full(2, obj.depth_m)

    def principal_radii_m(self, obj):
        return math.inf, math.inf

    def budget_factor(self, obj, wavelength_m, r_e_m, n):
        return 1.0

    def validity(self, obj, snow_index, freq_hz):
        return ("disc warning",)

    def cylinder_stand_in(self, obj):
        return None

    def appearance(self, obj):
        return "A disc shows as a short flat echo."


def test_a_plugin_kind_works_end_to_end(monkeypatch) -> None:
    # what an entry point in "snowprobe_widgets.targets" does: one more registry entry
    # (a class is instantiated, as an entry point naming the class would give)
    monkeypatch.setitem(TARGETS._items, "disc", DiscKind)
    sc = _scene((Disc(3.0, 0.5),))
    rg = simulate(sc, components=("objects",))
    assert np.max(np.abs(rg.data)) > 0 and rg.truth[0].kind == "disc"
    back = Scenario.from_json(sc.to_json())
    assert back == sc
    assert link_budget(sc, sc.objects[0]).echo_to_noise_db > 0
    assert validity_warnings(sc) == ("disc warning",)
    # the 2-D check asks the kind for its stand-in: a disc has none and is refused by name
    from snowprobe_widgets.fdtd2d import scenario_cylinder

    with pytest.raises(ValueError, match="no cylinder stand-in for a disc"):
        scenario_cylinder(sc)
    # and a file with a misspelt field of the plugin's object names it
    d = dataclasses.asdict(sc.objects[0])
    bad = {"type": "disc", **d, "radius_m": 0.1}
    data = {**_plain(sc), "objects": [bad]}
    with pytest.raises(ScenarioFileError, match=r"objects\[0\]\.radius_m: unknown field"):
        scenario_from_dict(data)


def _plain(sc: Scenario) -> dict:
    import json

    return json.loads(sc.to_json())["scenario"]


def test_a_boulder_keeps_its_conductivity() -> None:
    # the echo of a lossless rock sphere is dominated by its lens (internal) echo; a
    # conducting one loses it: the conductivity reaches the radargram and the budget
    def peak(sigma: float) -> tuple[float, float]:
        sc = _scene((Boulder(3.0, 0.8, 0.5, conductivity_s_m=sigma),))
        rg = simulate(sc, components=("objects",))
        return float(np.max(np.abs(rg.data))), link_budget(sc, sc.objects[0]).echo_to_noise_db

    (p0, b0), (p1, b1) = peak(0.0), peak(0.05)
    assert 20 * math.log10(p0 / p1) > 3.0 and b0 - b1 > 3.0


def test_validity_warnings_are_empty_inside_every_domain() -> None:
    sc = _scene((Boulder(3.0, 0.8, 0.5), Branch(3.0, 0.5, 0.1, 2.0)), (Person(3.0, 1.2),))
    assert validity_warnings(sc) == ()


@pytest.mark.parametrize("obj", [
    Branch(3.0, 1.0, 0.02, 3.0, heading_deg=90.0, water_fraction=0.4),
    Branch(3.0, 1.0, 0.02, 3.0, heading_deg=0.0, water_fraction=0.4),
    Boulder(3.0, 1.0, 0.6, conductivity_s_m=0.0),
], ids=["thin branch along the field", "thin branch across the field", "lossless boulder"])
def test_link_budget_and_radargram_agree_on_series_echoes(obj) -> None:
    # two routes through the same kind: the budget's closed-form range equation with the
    # kind's curvature and spectrum, and the facet sum along refracted rays (as
    # tests/test_budget.py does for the person; 2 dB as there)
    from snowprobe_widgets.radar_equation import noise_rms

    sc = Scenario(Snowpack((Layer(3.0, 300.0),)), Ground("soil", 0.2), (), (obj,),
                  Radar("ricker", 800e6, dt_s=5e-11, time_window_s=50e-9),
                  Survey(0.0, 6.0, 0.05), Clutter())
    rg = simulate(sc, components=("objects",))
    trace = rg.data[:, int(np.argmin(np.abs(rg.position_m - 3.0)))]
    r = sc.radar
    measured = 20 * math.log10(np.max(np.abs(trace))
                               / noise_rms(r.transmit_power_dbm, r.noise_floor_dbm, r.stacking))
    assert abs(link_budget(sc, obj).echo_to_noise_db - measured) < 2.0
