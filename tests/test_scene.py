"""Tests of the scenario value objects (snowprobe_widgets.scene and .scene_objects).

Mostly bookkeeping and validation checks; the physics in these objects is small: the
wood mixture of ``Branch`` (CRIM, Birchak et al. 1974, recomputed inline) and the
system-performance figure of ``Radar`` (power ratio plus 10 log10 N for N stacked traces,
common practice).
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

from snowprobe_widgets.scene import (
    Boulder,
    Branch,
    Clutter,
    ClutterField,
    Ground,
    Layer,
    MetalPlate,
    Person,
    Radar,
    Scenario,
    Snowpack,
    Survey,
    _band_high_hz,
)


def simple_scenario(**changes):
    kw = dict(
        snowpack=Snowpack((Layer(1.0, 200.0), Layer(1.5, 350.0))),
        ground=Ground(),
        persons=(Person(5.0, 1.0),),
        objects=(Boulder(2.0, 0.5, 0.4),),
    )
    kw.update(changes)
    return Scenario(**kw)


# --------------------------------------------------------------------------- Layer


def test_layer_stores_floats_and_defaults():
    layer = Layer(1, 300)
    assert layer == Layer(1.0, 300.0, 0.0, False)
    assert isinstance(layer.thickness_m, float) and isinstance(layer.density_kg_m3, float)


@pytest.mark.parametrize("kwargs, words", [
    (dict(thickness_m=0.0, density_kg_m3=300), ["thickness_m", "0", "(0, 100]"]),
    (dict(thickness_m=1.0, density_kg_m3=950), ["density_kg_m3", "950", "[30, 917]"]),
    (dict(thickness_m=1.0, density_kg_m3=300, lwc_percent=-1), ["lwc_percent", "-1"]),
    (dict(thickness_m=1.0, density_kg_m3="abc"), ["density_kg_m3", "'abc'"]),
    (dict(thickness_m=float("nan"), density_kg_m3=300), ["thickness_m", "finite"]),
    (dict(thickness_m=1.0, density_kg_m3=300, ice_crust=1), ["ice_crust", "True or False"]),
    (dict(thickness_m=True, density_kg_m3=300), ["thickness_m", "number"]),
])
def test_layer_bad_values_name_the_field(kwargs, words):
    with pytest.raises(ValueError) as info:
        Layer(**kwargs)
    for w in words:
        assert w in str(info.value)


def test_layer_water_must_fit_in_the_pores():
    # 850 kg/m3 of ice fills 850/917 = 92.7 % of the volume: at most 7.3 % water
    Layer(1.0, 850.0, lwc_percent=7.0)
    with pytest.raises(ValueError, match=r"lwc_percent = 8 .*at most 7\.3 % water"):
        Layer(1.0, 850.0, lwc_percent=8.0)


def test_ice_crust_needs_crust_density_and_thinness():
    Layer(0.02, 850.0, ice_crust=True)
    with pytest.raises(ValueError, match=r"too light for an ice crust.*\[700, 917\]"):
        Layer(0.02, 400.0, ice_crust=True)
    with pytest.raises(ValueError, match=r"thickness_m = 0.5 m is too thick for an ice crust"):
        Layer(0.5, 850.0, ice_crust=True)


# --------------------------------------------------------------------------- Snowpack


def test_snowpack_list_becomes_tuple_and_hashable():
    sp = Snowpack([Layer(0.5, 200.0), Layer(1.5, 300.0)])
    assert isinstance(sp.layers, tuple)
    assert hash(sp) == hash(Snowpack((Layer(0.5, 200.0), Layer(1.5, 300.0))))
    assert sp.depth_m == pytest.approx(2.0)
    np.testing.assert_allclose(sp.interfaces_m, [0.5, 2.0])
    np.testing.assert_allclose(sp.thicknesses_m, [0.5, 1.5])


def test_snowpack_refuses_bad_layers():
    with pytest.raises(ValueError, match="needs 1 to 200 layers"):
        Snowpack(())
    with pytest.raises(ValueError, match=r"layers\[1\] must be a Layer, got dict"):
        Snowpack((Layer(1.0, 200.0), {"thickness_m": 1.0}))
    with pytest.raises(ValueError, match="layers must be a sequence"):
        Snowpack("layers")
    with pytest.raises(ValueError, match=r"temperature_c = 3 degC .*\[-50, 0\]"):
        Snowpack((Layer(1.0, 200.0),), temperature_c=3.0)
    with pytest.raises(ValueError, match="at most 100 m"):
        Snowpack((Layer(60.0, 300.0), Layer(60.0, 300.0)))


def test_layer_at_interfaces_belong_to_the_layer_above():
    sp = Snowpack((Layer(0.5, 200.0), Layer(1.0, 300.0), Layer(0.5, 400.0)))
    assert sp.layer_index(0.0) == 0
    assert sp.layer_index(0.5) == 0
    assert sp.layer_index(0.5001) == 1
    assert sp.layer_index(1.5) == 1
    assert sp.layer_index(2.0) == 2
    assert sp.layer_at(1.7).density_kg_m3 == 400.0
    with pytest.raises(ValueError, match=r"depth_m = 2.1 m is outside the allowed range \[0, 2\]"):
        sp.layer_at(2.1)


def test_with_ice_crust_splits_a_layer_and_keeps_the_depth():
    sp = Snowpack((Layer(0.6, 200.0), Layer(1.4, 330.0)), temperature_c=-6.0)
    out = sp.with_ice_crust(0.45, 0.02, 870.0)
    assert [(round(x.thickness_m, 12), x.density_kg_m3, x.ice_crust) for x in out.layers] == [
        (0.45, 200.0, False), (0.02, 870.0, True), (0.13, 200.0, False), (1.4, 330.0, False)]
    assert out.depth_m == pytest.approx(sp.depth_m, abs=1e-12)
    assert out.temperature_c == -6.0
    assert sp.layers[0].thickness_m == 0.6  # the original is untouched


def test_with_ice_crust_across_an_interface_at_top_and_at_bottom():
    sp = Snowpack((Layer(0.6, 200.0), Layer(1.4, 330.0)))
    across = sp.with_ice_crust(0.55, 0.1)
    assert [round(x.thickness_m, 12) for x in across.layers] == [0.55, 0.1, 1.35]
    assert across.layers[1].ice_crust and across.layers[1].density_kg_m3 == 850.0
    surface = sp.with_ice_crust(0.0, 0.03)
    assert surface.layers[0].ice_crust and round(surface.layers[1].thickness_m, 12) == 0.57
    bottom = sp.with_ice_crust(1.97, 0.03)
    assert bottom.layers[-1].ice_crust and len(bottom.layers) == 3
    near_top = sp.with_ice_crust(0.1, 0.02)
    assert [round(x.thickness_m, 12) for x in near_top.layers] == [0.1, 0.02, 0.48, 1.4]
    whole = Snowpack((Layer(0.02, 300.0), Layer(1.0, 300.0))).with_ice_crust(0.0, 0.02)
    assert len(whole.layers) == 2 and whole.layers[0].ice_crust
    with pytest.raises(ValueError, match="below the 2 m snowpack"):
        sp.with_ice_crust(1.99, 0.05)
    with pytest.raises(ValueError, match="too light for an ice crust"):
        sp.with_ice_crust(0.5, 0.02, density_kg_m3=300.0)


def test_snowpack_materials_are_the_snow_models_of_each_layer():
    from snowprobe_widgets import materials

    sp = Snowpack((Layer(0.5, 200.0), Layer(1.0, 400.0, lwc_percent=3.0)))
    f = np.array([2e8, 8e8, 2e9])
    mats = sp.materials()
    assert len(mats) == 2
    for mat, layer in zip(mats, sp.layers, strict=True):
        expected = materials.snow(layer.density_kg_m3, layer.lwc_percent)
        np.testing.assert_allclose(mat.permittivity(f), expected.permittivity(f))


# --------------------------------------------------------------------------- Ground


def test_ground_kinds_and_material_dispatch():
    from snowprobe_widgets import materials

    f = np.array([5e8, 1e9])
    soil = Ground("soil", water_fraction=0.2)
    np.testing.assert_allclose(soil.material().permittivity(f),
                               materials.soil(0.2).permittivity(f))
    rock = Ground("rock", permittivity=7.0, conductivity_s_m=0.002)
    np.testing.assert_allclose(rock.material().permittivity(f),
                               materials.rock(7.0, 0.002).permittivity(f))
    with pytest.raises(ValueError, match=r"kind = 'clay' is not one of: 'soil', 'rock'"):
        Ground("clay")
    with pytest.raises(ValueError, match="water_fraction = 0.7"):
        Ground(water_fraction=0.7)


# --------------------------------------------------------------------------- Person


def test_person_defaults_and_posture_geometry():
    p = Person(3.0, 1.2)
    assert (p.offset_m, p.heading_deg, p.posture, p.height_m) == (0.0, 0.0, "lying_flat", 1.75)
    assert Person.kind == "person" and p.kind == "person"
    assert p.body_thickness_m == 0.25 and p.body_length_m == 1.75
    assert p.bottom_depth_m == pytest.approx(1.45)
    curled = dataclasses.replace(p, posture="curled")
    assert curled.body_thickness_m == 0.5
    assert curled.body_length_m == pytest.approx(0.875)
    assert curled.half_extent_m == pytest.approx(0.5 * math.hypot(0.875, 0.5))


def test_person_bad_values():
    with pytest.raises(ValueError, match=r"posture = 'sitting' is not one of: 'lying_flat'"):
        Person(1.0, 1.0, posture="sitting")
    with pytest.raises(ValueError, match=r"depth_m = -0.1 m is outside"):
        Person(1.0, -0.1)
    with pytest.raises(ValueError, match="fat_m = 0.2 m"):
        Person(1.0, 1.0, fat_m=0.2)
    with pytest.raises(ValueError, match="does not fit in half the 0.25 m body thickness"):
        Person(1.0, 1.0, clothing_m=0.05, fat_m=0.06, muscle_m=0.05)
    with pytest.raises(ValueError, match="label must be a string"):
        Person(1.0, 1.0, label=3)


def test_tissue_stack_is_clothing_skin_fat_over_muscle():
    from snowprobe_widgets import materials

    p = Person(0.0, 1.0, clothing_m=0.02, skin_m=0.002, fat_m=0.015)
    mats, thick = p.tissue_stack()
    assert thick == (0.02, 0.002, 0.015)
    assert len(mats) == len(thick) + 1
    f = np.array([1e9])
    for mat, ref in zip(mats, (materials.clothing(), materials.tissue("skin"),
                               materials.tissue("fat"), materials.tissue("muscle")),
                        strict=True):
        np.testing.assert_allclose(mat.permittivity(f), ref.permittivity(f))


# --------------------------------------------------------------------------- debris


def test_debris_kinds_and_depths():
    b = Boulder(1.0, 0.5, 0.6)
    assert b.kind == "boulder" and b.centre_depth_m == pytest.approx(0.8)
    assert b.bottom_depth_m == pytest.approx(1.1)
    br = Branch(1.0, 0.5, 0.2, 3.0)
    assert br.kind == "branch" and br.bottom_depth_m == pytest.approx(0.7)
    m = MetalPlate(1.0, 0.5, 1.7, 0.1, tilt_deg=30.0)
    assert m.kind == "metal" and m.label == "ski"
    assert m.bottom_depth_m == pytest.approx(0.5 + 1.7 * 0.5)
    assert m.centre_depth_m == pytest.approx(0.5 + 0.85 * 0.5)
    assert dataclasses.replace(m, tilt_deg=-30.0).bottom_depth_m == pytest.approx(1.35)


def test_debris_bad_values():
    with pytest.raises(ValueError, match=r"diameter_m = 6 m .*\[0.05, 5\]"):
        Boulder(0.0, 0.5, 6.0)
    with pytest.raises(ValueError, match=r"width_m = 0.5 m .*\[0.01, 0.3\]"):
        MetalPlate(0.0, 0.5, 0.3, 0.5)
    with pytest.raises(ValueError, match=r"tilt_deg = 95 deg"):
        MetalPlate(0.0, 0.5, 1.0, 0.1, tilt_deg=95.0)
    with pytest.raises(ValueError, match="frozen must be True or False"):
        Branch(0.0, 0.5, 0.1, 1.0, frozen="no")
    with pytest.raises(ValueError, match="water_fraction = 0.9"):
        Branch(0.0, 0.5, 0.1, 1.0, water_fraction=0.9)


def test_branch_permittivity_is_the_crim_mixture():
    # CRIM (Lichtenecker-Rother, exponent 1/2; Birchak et al. 1974, Proc. IEEE 62:93):
    # sqrt(eps) = (1 - w) sqrt(eps_dry) + w sqrt(eps_water); dry wood 2.0, water 80 and
    # ice 3.15 are the module's stated (from memory) inputs.
    for w in (0.0, 0.1, 0.3, 0.6):
        wet = Branch(0.0, 0.5, 0.1, 1.0, water_fraction=w)
        assert wet.permittivity == pytest.approx(((1 - w) * 2.0**0.5 + w * 80.0**0.5) ** 2)
        ice = dataclasses.replace(wet, frozen=True)
        assert ice.permittivity == pytest.approx(((1 - w) * 2.0**0.5 + w * 3.15**0.5) ** 2)
    # frozen wood near eps 3 matches the "frozen wood" echo level in FIELD_FACTS 1.5
    # (|r| = 0.13 against snow of eps 1.79 means eps of about 3.0)
    assert 2.0 < Branch(0.0, 0.5, 0.1, 1.0, water_fraction=0.6, frozen=True).permittivity < 3.2


# --------------------------------------------------------------------------- Radar


def test_radar_defaults_and_derived_figures():
    r = Radar()
    assert r.n_samples == 512
    assert r.time_s.shape == (512,) and r.time_s[1] == pytest.approx(1e-10)
    # 20 dBm over -80 dBm plus stacking gain 10 log10(16) = 12.04 dB (common practice)
    assert r.system_performance_db == pytest.approx(100.0 + 10 * math.log10(16))
    assert isinstance(r.stacking, int)
    assert r.make_pulse() is not None


@pytest.mark.parametrize("kwargs, words", [
    (dict(center_frequency_hz=7e9), ["center_frequency_hz", "7e+09", "6e+09"]),
    (dict(center_frequency_hz=10e6), ["center_frequency_hz", "1e+07"]),
    (dict(pulse="square"), ["pulse = 'square' is not one of", "'ricker'"]),
    (dict(stacking=0), ["stacking = 0", "[1, 65536]"]),
    (dict(stacking=2.5), ["stacking must be a whole number"]),
    (dict(stacking=True), ["stacking must be a whole number"]),
    (dict(noise_floor_dbm=30.0), ["noise_floor_dbm = 30"]),
    (dict(time_window_s=3e-9), ["30 samples", "[64, 8192]", "time_window_s"]),
    (dict(time_window_s=1e-6), ["10000 samples", "[64, 8192]"]),
    (dict(antenna_height_m=-0.1), ["antenna_height_m = -0.1 m"]),
    (dict(beamwidth_deg=0.0), ["beamwidth_deg = 0 deg"]),
    (dict(bandwidth_hz=-1.0), ["bandwidth_hz = -1 Hz"]),
    (dict(polarization="vertical"), ["polarization = 'vertical' is not one of",
                                     "'across_line'", "'along_line'"]),
])
def test_radar_bad_values_name_the_field(kwargs, words):
    with pytest.raises(ValueError) as info:
        Radar(**kwargs)
    for w in words:
        assert w in str(info.value)


def test_radar_refuses_sampling_coarser_than_nyquist():
    r = Radar(center_frequency_hz=1.5e9, dt_s=1e-11, time_window_s=5.12e-9)
    f_high = _band_high_hz(r.make_pulse())
    limit = 1.0 / (2.0 * f_high)
    ok = dataclasses.replace(r, dt_s=0.99 * limit, time_window_s=512 * 0.99 * limit)
    assert ok.dt_s == pytest.approx(0.99 * limit)
    with pytest.raises(ValueError) as info:
        dataclasses.replace(r, dt_s=1.05 * limit, time_window_s=512 * 1.05 * limit)
    msg = str(info.value)
    assert "dt_s" in msg and "Nyquist" in msg and f"{limit:g}" in msg


# --------------------------------------------------------------------------- Survey


def test_survey_traces_and_positions():
    s = Survey()
    assert s.n_traces == 201
    assert s.position_m[0] == 0.0 and s.position_m[-1] == pytest.approx(10.0)
    assert Survey(0.0, 1.0, 0.3).n_traces == 4  # 0, 0.3, 0.6, 0.9: never past the end
    fast = Survey.from_speed(0.0, 20.0, speed_m_s=2.0, trace_rate_hz=40.0)
    assert fast.trace_spacing_m == pytest.approx(0.05) and fast.n_traces == 401


def test_survey_bad_values():
    with pytest.raises(ValueError, match=r"end_m = 0 m is outside the allowed range \(0, "):
        Survey(0.0, 0.0)
    with pytest.raises(ValueError, match=r"has 100001 traces; at most 20000 allowed"):
        Survey(0.0, 100.0, 0.001)
    with pytest.raises(ValueError, match="speed_m_s = 0 m/s"):
        Survey.from_speed(0.0, 10.0, 0.0, 10.0)
    with pytest.raises(ValueError, match="gives a trace spacing of 200 m"):
        Survey.from_speed(0.0, 10.0, 20.0, 0.1)


# --------------------------------------------------------------------------- Clutter


def test_clutter_realisation_is_seeded_and_inside_the_strip():
    sp = Snowpack((Layer(1.0, 200.0), Layer(1.0, 400.0)))
    sv = Survey(2.0, 12.0, 0.05)
    c = Clutter(scatterer_density_per_m3=5.0, scatterer_size_m=0.2, thin_layer_count=10,
                thin_layer_contrast=0.1, seed=42)
    a, b = c.realise(sp, sv), c.realise(sp, sv)
    assert isinstance(a, ClutterField)
    for name in ("x_m", "y_m", "z_m", "size_m", "layer_depth_m", "layer_thickness_m",
                 "layer_density_change_kg_m3"):
        np.testing.assert_array_equal(getattr(a, name), getattr(b, name))
        assert not getattr(a, name).flags.writeable
    other = dataclasses.replace(c, seed=43).realise(sp, sv)
    assert a.n_scatterers != other.n_scatterers or not np.array_equal(a.x_m, other.x_m)
    assert np.all((a.x_m >= 2.0) & (a.x_m <= 12.0))
    assert np.all(np.abs(a.y_m) <= 1.0)
    assert np.all(a.z_m - a.size_m / 2 >= -1e-12)
    assert np.all(a.z_m + a.size_m / 2 <= 2.0 + 1e-12)
    assert np.all((a.size_m >= 0.1) & (a.size_m <= 0.3))
    assert a.n_layers == 10 and np.all(np.diff(a.layer_depth_m) >= 0)
    assert np.all(a.layer_depth_m + a.layer_thickness_m <= 2.0 + 1e-12)
    # density change is +-10 % of the local layer's density
    local = np.array([sp.layer_at(d).density_kg_m3 for d in a.layer_depth_m])
    np.testing.assert_allclose(np.abs(a.layer_density_change_kg_m3), 0.1 * local)


def test_clutter_count_is_poisson_with_the_stated_mean():
    # volume 10 m x 2 m x 2 m = 40 m3 at 10 /m3: mean 400; over 30 seeds the sample mean
    # has standard error sqrt(400/30) = 3.7, so +-15 is a 4-sigma band.
    sp = Snowpack((Layer(2.0, 300.0),))
    sv = Survey(0.0, 10.0, 0.1)
    c = Clutter(scatterer_density_per_m3=10.0)
    assert c.expected_scatterers(sp, sv) == pytest.approx(400.0)
    counts = [dataclasses.replace(c, seed=s).realise(sp, sv).n_scatterers for s in range(30)]
    assert abs(np.mean(counts) - 400.0) < 15.0
    assert Clutter().realise(sp, sv).n_scatterers == 0


def test_clutter_streams_are_independent():
    sp = Snowpack((Layer(2.0, 300.0),))
    sv = Survey()
    c = Clutter(scatterer_density_per_m3=3.0, thin_layer_count=2, seed=9)
    more_layers = dataclasses.replace(c, thin_layer_count=20).realise(sp, sv)
    np.testing.assert_array_equal(c.realise(sp, sv).x_m, more_layers.x_m)


def test_clutter_bad_values():
    with pytest.raises(ValueError, match="seed = -1"):
        Clutter(seed=-1)
    with pytest.raises(ValueError, match="thin_layer_count must be a whole number"):
        Clutter(thin_layer_count=1.5)
    with pytest.raises(ValueError, match="scatterer_density_per_m3 = 2000"):
        Clutter(scatterer_density_per_m3=2000.0)


# --------------------------------------------------------------------------- Scenario


def test_scenario_converts_lists_and_is_hashable():
    s = simple_scenario(persons=[Person(5.0, 1.0)], objects=[Boulder(2.0, 0.5, 0.4)])
    assert isinstance(s.persons, tuple) and isinstance(s.objects, tuple)
    assert s == simple_scenario() and hash(s) == hash(simple_scenario())
    assert s.targets == s.persons + s.objects
    assert s.radar == Radar() and s.survey == Survey() and s.clutter == Clutter()


def test_scenario_cross_checks():
    with pytest.raises(ValueError, match=r"persons\[0\] \(person 'A'\) at depth_m = 3.2 m "
                                         r"reaches down to 3.45 m, deeper than the 2.5 m "
                                         r"snowpack"):
        simple_scenario(persons=(Person(5.0, 3.2, label="A"),))
    with pytest.raises(ValueError, match=r"objects\[0\] \(boulder\) at depth_m = 2.2 m"):
        simple_scenario(objects=(Boulder(2.0, 2.2, 0.4),))
    with pytest.raises(ValueError, match=r"position_m = 16 m is outside the survey line "
                                         r"\+- 5 m; allowed range \[-5, 15\] m"):
        simple_scenario(persons=(Person(16.0, 1.0),))
    with pytest.raises(ValueError, match=r"offset_m = 6 m is too far from the survey line"):
        simple_scenario(objects=(Branch(3.0, 0.5, 0.1, 1.0, offset_m=6.0),))
    with pytest.raises(ValueError, match=r"objects\[0\] must be a Boulder or Branch or "
                                         r"MetalPlate, got Person"):
        simple_scenario(objects=(Person(1.0, 1.0),))
    with pytest.raises(ValueError, match="radar must be a Radar, got dict"):
        simple_scenario(radar={})
    with pytest.raises(ValueError, match="about 500000 scatterers; at most 100000"):
        simple_scenario(survey=Survey(0.0, 100.0, 0.05),
                        clutter=Clutter(scatterer_density_per_m3=1000.0))
    with pytest.raises(ValueError, match="name is 201 characters long"):
        simple_scenario(name="x" * 201)
    # a person resting exactly on the ground is allowed
    simple_scenario(persons=(Person(5.0, 2.25),))


def test_replace_works_and_revalidates_at_every_level():
    s = simple_scenario()
    layers = list(s.snowpack.layers)
    layers[1] = dataclasses.replace(layers[1], density_kg_m3=500.0)
    changed = dataclasses.replace(
        s,
        snowpack=dataclasses.replace(s.snowpack, layers=layers, temperature_c=-2.0),
        ground=dataclasses.replace(s.ground, kind="rock"),
        persons=(dataclasses.replace(s.persons[0], posture="curled", offset_m=0.5),),
        objects=(dataclasses.replace(s.objects[0], diameter_m=0.8),),
        radar=dataclasses.replace(s.radar, center_frequency_hz=500e6, stacking=4),
        survey=dataclasses.replace(s.survey, end_m=20.0),
        clutter=dataclasses.replace(s.clutter, seed=5),
        name="changed",
    )
    assert changed.snowpack.layers[1].density_kg_m3 == 500.0
    assert isinstance(changed.snowpack.layers, tuple)
    assert changed.persons[0].body_thickness_m == 0.5
    assert changed.radar.system_performance_db == pytest.approx(100 + 10 * math.log10(4))
    assert changed.survey.n_traces == 401
    assert s.name == "" and s.survey.end_m == 10.0  # originals untouched
    with pytest.raises(dataclasses.FrozenInstanceError):
        s.name = "x"
    with pytest.raises(ValueError, match="density_kg_m3 = 1000"):
        dataclasses.replace(s.snowpack.layers[0], density_kg_m3=1000.0)
    with pytest.raises(ValueError, match="deeper than the 1.2 m snowpack"):
        dataclasses.replace(s, snowpack=Snowpack((Layer(1.2, 300.0),)))


def test_clutter_field_of_a_scenario():
    s = simple_scenario(clutter=Clutter(scatterer_density_per_m3=2.0, seed=1))
    a = s.clutter_field()
    b = s.clutter.realise(s.snowpack, s.survey)
    np.testing.assert_array_equal(a.z_m, b.z_m)
