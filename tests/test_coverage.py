"""Coverage of a debris field, worked by hand, the ICAR 2006 line, and the probe line."""

from __future__ import annotations

import numpy as np
import pytest

from snowprobe_widgets.coverage import (
    ICAR_RATE_M2_MIN,
    PLATFORMS,
    DebrisArea,
    Platform,
    ProbeLine,
    coverage,
)


def test_rectangle_with_turns_by_hand():
    # 100 m x 50 m, lanes 2 m apart along the 100 m side: 25 lanes, 24 turns.
    # Track 25 x 100 m = 2500 m at 1 m/s = 2500 s, plus 24 turns x 10 s = 240 s:
    # 2740 s = 45.67 min; rate 5000 m2 / 45.67 min = 109.5 m2/min (worked by hand).
    walker = Platform("walker", 1.0, 0.3, 20.0, 10.0)
    cov = coverage(DebrisArea.rectangle(100.0, 50.0), walker, 2.0)
    assert cov.lanes == 25 and cov.turns == 24
    assert cov.track_m == pytest.approx(2500.0)
    assert cov.transit_m == pytest.approx(0.0)
    assert cov.time_s == pytest.approx(2740.0)
    assert cov.rate_m2_min == pytest.approx(5000.0 / (2740.0 / 60.0))
    assert cov.rate_m2_min == pytest.approx(109.49, abs=0.01)
    assert cov.icar_rate_ok and cov.icar_measurements_ok
    # progress: after the first lane (100 s) 100 m are done; after its turn still 100 m
    assert float(cov.track_done_m(100.0)) == pytest.approx(100.0)
    assert float(cov.track_done_m(110.0)) == pytest.approx(100.0)
    assert float(cov.track_done_m(160.0)) == pytest.approx(150.0)
    assert float(cov.track_done_m(1e6)) == pytest.approx(2500.0)


def test_a_width_not_divisible_by_the_spacing_needs_one_more_lane():
    # 30 m wide at 4 m: ceil(7.5) = 8 lanes
    cov = coverage(DebrisArea.rectangle(60.0, 30.0), PLATFORMS["drone"], 4.0)
    assert cov.lanes == 8
    assert cov.track_m == pytest.approx(8 * 60.0)


def test_icar_line_at_100_m2_per_minute():
    # 1 m/s, no turns, one lane: rate = spacing x 60 m2/min; the line is crossed at
    # spacing 100/60 m (ICAR 2006: 100 m2/min)
    walker = Platform("walker", 1.0, 0.3, 20.0, 0.0)
    below = coverage(DebrisArea.rectangle(600.0, 1.6), walker, 1.6)
    above = coverage(DebrisArea.rectangle(600.0, 1.7), walker, 1.7)
    assert ICAR_RATE_M2_MIN == 100.0
    assert below.rate_m2_min == pytest.approx(96.0)
    assert not below.icar_rate_ok
    assert above.rate_m2_min == pytest.approx(102.0)
    assert above.icar_rate_ok
    slow = Platform("slow radar", 1.0, 0.3, 0.5, 0.0)
    assert not coverage(DebrisArea.rectangle(600.0, 1.7), slow, 1.7).icar_measurements_ok


def test_polygon_equal_to_the_rectangle_gives_the_same_plan():
    rect = coverage(DebrisArea.rectangle(80.0, 40.0), PLATFORMS["helicopter"], 5.0)
    poly = DebrisArea.polygon([(0, 0), (80, 0), (80, 40), (0, 40)])
    assert poly.area_m2 == pytest.approx(3200.0)
    same = coverage(poly, PLATFORMS["helicopter"], 5.0)
    assert same.time_s == pytest.approx(rect.time_s)
    # turned by 90 degrees the lanes run along the 40 m side: more lanes, more turns
    turned = coverage(poly, PLATFORMS["helicopter"], 5.0, heading_deg=90.0)
    assert turned.lanes == 16 and turned.track_m == pytest.approx(16 * 40.0)


def test_triangle_track_and_transit_by_hand():
    # right triangle (0,0), (40,0), (0,40), lanes 10 m apart at y = 5, 15, 25, 35:
    # chords 35, 25, 15, 5 m = 80 m of track. Back and forth: lane 1 ends at x=35, lane 2
    # starts at x=25 (10 m transit), lane 2 ends at 0, lane 3 starts at 0, ends at 15,
    # lane 4 starts at 5 (10 m transit).
    tri = DebrisArea.polygon([(0, 0), (40, 0), (0, 40)])
    cov = coverage(tri, Platform("p", 1.0, 1.0, 10.0, 0.0), 10.0)
    assert cov.track_m == pytest.approx(80.0)
    assert cov.transit_m == pytest.approx(20.0)
    assert cov.time_s == pytest.approx(100.0)


@pytest.mark.parametrize("points, what", [
    ([(0, 0), (1, 1)], "3 to 200"),
    ([(0, 0), (1, 0), (2, 0)], "area"),
    ([(0, 0), (10, 10), (10, 0), (0, 10)], "cross"),
    ([(0, 0), (np.inf, 0), (0, 1)], "finite"),
])
def test_bad_polygons_are_refused(points, what):
    with pytest.raises(ValueError, match=what):
        DebrisArea.polygon(points)


def test_bad_platform_and_spacing_are_refused_by_name():
    with pytest.raises(ValueError, match=r"speed_m_s = -1 m/s is outside"):
        Platform("x", -1.0, 1.0, 10.0, 1.0)
    with pytest.raises(ValueError, match=r"antenna_height_m = 40 m"):
        Platform("x", 1.0, 40.0, 10.0, 1.0)
    with pytest.raises(ValueError, match="spacing_m"):
        coverage(DebrisArea.rectangle(10, 10), PLATFORMS["drone"], 0.0)


def test_presets_name_their_sources():
    for p in PLATFORMS.values():
        assert p.sources and all(("assumption" in s or "common practice" in s
                                  or "(" in s) for s in p.sources)


def test_probe_line_times_and_detection_by_hand():
    # 8 probers, 50 cm grid, 10 s per hole to 1.5 m, 20 s to 3 m, over 100 m2:
    # 400 holes / 8 = 50 holes each: 500 s first pass, 1000 s second pass.
    line = ProbeLine()
    assert line.pass_time_s(100.0, False) == pytest.approx(500.0)
    assert line.pass_time_s(100.0, True) == pytest.approx(1000.0)
    assert line.rate_m2_min(False) == pytest.approx(12.0)
    pod = line.pod([250.0, 500.0, 1000.0, 1500.0], [1.0, 2.0, 4.0], 100.0)
    # 1 m deep: half the first pass 0.44, all 0.88; then 0.88 + 0.12 * 0.88 = 0.9856
    assert pod[:, 0] == pytest.approx([0.44, 0.88, 0.88 + 0.12 * 0.88 * 0.5, 0.9856])
    # 2 m deep: out of reach in the first pass, 0.88 after the full-depth pass
    assert pod[:, 1] == pytest.approx([0.0, 0.0, 0.44, 0.88])
    # 4 m deep: below the 3 m probes
    assert np.all(pod[:, 2] == 0.0)


def test_probe_line_refuses_bad_settings():
    with pytest.raises(ValueError, match="team_size"):
        ProbeLine(team_size=0)
    with pytest.raises(ValueError, match="full_depth_m"):
        ProbeLine(first_depth_m=2.0, full_depth_m=1.0)


def test_too_many_lanes_are_refused_by_name():
    wide = DebrisArea.rectangle(100.0, 10000.0)
    with pytest.raises(ValueError, match=r"spacing_m = 1 m across 10000 m needs 10000 lanes"):
        coverage(wide, PLATFORMS["drone"], 1.0)
    assert coverage(wide, PLATFORMS["drone"], 2.0).lanes == 5000


def test_width_profile_is_the_length_across_the_area():
    # an L-shaped area: 40 m long for y in [0, 10), 10 m long for y in [10, 30)
    ell = DebrisArea.polygon([(0, 0), (40, 0), (40, 10), (10, 10), (10, 30), (0, 30)])
    ys, length = ell.width_profile(samples=6)
    assert list(ys) == pytest.approx([2.5, 7.5, 12.5, 17.5, 22.5, 27.5])
    assert list(length) == pytest.approx([40, 40, 10, 10, 10, 10])
    # a U shape: two 10 m arms above y = 10
    u = DebrisArea.polygon([(0, 0), (30, 0), (30, 20), (20, 20), (20, 10), (10, 10),
                            (10, 20), (0, 20)])
    ys, length = u.width_profile(samples=4)
    assert list(length) == pytest.approx([30, 30, 20, 20])
    # summed over the height it gives the area
    ys, length = u.width_profile(samples=1000)
    assert float(np.sum(length) * 20.0 / 1000) == pytest.approx(u.area_m2, rel=1e-9)
