"""Tests of RadargramView driven without a browser: state of its widgets and marks."""

from __future__ import annotations

import ipywidgets
import numpy as np
import pytest
from ipywidgets.widgets.widget import _instances
from test_palette_png import decode_palette_png

from snowprobe_widgets.radargram import Radargram, TruthMarker
from snowprobe_widgets.widgets import RadargramView
from snowprobe_widgets.widgets.palette_png import colour_map, scale_to_index
from snowprobe_widgets.widgets.radargram_view import (
    DEPTH_LABEL,
    POSITION_LABEL,
    STATUS_CLASS,
    TIME_LABEL,
    _percentiles,
    colour_range,
)

TIME_S = np.arange(512) * 1e-10
POSITION_M = np.arange(200) * 0.05


def _radargram(seed: int = 0, scale: float = 1.0, **kw: object) -> Radargram:
    """Noise plus one hyperbola-shaped band (shape only, no physics claimed)."""
    rng = np.random.default_rng(seed)
    data = 0.05 * rng.normal(size=(TIME_S.size, POSITION_M.size))
    apex_s, x0_m, v_m_s = 20e-9, 5.0, 2.2e8
    t_hyp = np.sqrt(apex_s**2 + (2 * (POSITION_M - x0_m) / v_m_s) ** 2)
    data += np.exp(-(((TIME_S[:, None] - t_hyp[None, :]) / 0.4e-9) ** 2))
    truth = (TruthMarker("person", x0_m, 2.2, apex_s, label="person 1"),
             TruthMarker("metal", 8.0, 1.0, 9e-9))
    kw.setdefault("truth", truth)
    return Radargram(data=scale * data, time_s=TIME_S, position_m=POSITION_M, **kw)


def _draws_in_status(view: RadargramView) -> int:
    text = view.status.value
    return int(text.split("draws=")[1].split()[0])


def _picture(view: RadargramView) -> tuple[np.ndarray, np.ndarray]:
    return decode_palette_png(view.image_mark.image.value)


# --------------------------------------------------------------------------- building
def test_view_builds_with_axes_labels_status_and_picture() -> None:
    rg = _radargram()
    view = RadargramView(rg)
    assert STATUS_CLASS in view.status._dom_classes
    assert view.draws == 1 == _draws_in_status(view)
    labels = [ax.label for ax in view.figure.axes]
    assert labels == [POSITION_LABEL, TIME_LABEL, DEPTH_LABEL]
    assert TIME_LABEL == "two-way time (ns)"
    assert POSITION_LABEL == "position along line (m)"
    assert DEPTH_LABEL == "depth below surface (m)"
    # pixel edges half a step beyond the first and last centres; time in ns, top = early
    np.testing.assert_allclose(view.image_mark.x, [-0.025, 9.975])
    np.testing.assert_allclose(view.image_mark.y, [51.15, -0.05])
    assert view.time_scale.reverse and (view.time_scale.min, view.time_scale.max) == (
        pytest.approx(-0.05), pytest.approx(51.15))
    assert (view.position_scale.min, view.position_scale.max) == (
        pytest.approx(-0.025), pytest.approx(9.975))
    index, palette = _picture(view)
    assert index.shape == (512, 200)
    np.testing.assert_array_equal(palette, colour_map("frost_ember"))
    np.testing.assert_array_equal(index, scale_to_index(rg.data, *view.colour_range))


def test_view_without_radargram_waits() -> None:
    view = RadargramView()
    assert view.draws == 0 and "draws=0" in view.status.value
    view.radargram = _radargram()
    assert view.draws == 1 and "draws=1" in view.status.value


def test_bad_constructor_arguments_are_refused() -> None:
    with pytest.raises(ValueError, match="colour_map"):
        RadargramView(colour_map_name="rainbow")
    with pytest.raises(ValueError, match="clip_percent"):
        RadargramView(clip_percent=20.0)
    with pytest.raises(ValueError, match="png_compress_level"):
        RadargramView(png_compress_level=12)


# --------------------------------------------------------------------------- updating
def test_new_radargram_alternates_two_image_widgets_without_rebuilding() -> None:
    view = RadargramView(_radargram(0))
    figure, marks, mark = view.figure, list(view.figure.marks), view.image_mark
    old = mark.image
    old_png = old.value
    view.radargram = _radargram(1)
    new = mark.image
    assert view.draws == 2 == _draws_in_status(view)
    assert new is not old  # the mark redraws only when handed another widget
    assert old.value == old_png  # the picture left on screen is untouched
    assert old.comm is not None and new.comm is not None  # both kept, neither closed
    assert new.layout is old.layout  # one shared Layout
    assert new.layout.comm is not None
    view.radargram = _radargram(2)
    assert mark.image is old and old.value != old_png  # back to the first, new picture
    assert view.figure is figure and list(view.figure.marks) == marks
    assert view.image_mark is mark


def test_repeated_updates_leave_no_widget_models_behind() -> None:
    view = RadargramView(_radargram(0))
    view.radargram = _radargram(1)
    n_models = len(_instances)
    for seed in range(2, 8):
        view.radargram = _radargram(seed)
    view.clip_slider.value = 95.0
    view.colour_dropdown.value = "slate_snow"
    assert view.draws == 10
    assert len(_instances) == n_models


def test_colour_controls_change_the_picture() -> None:
    view = RadargramView(_radargram())
    first = view.image_mark.image.value
    view.clip_slider.value = 90.0
    assert view.draws == 2
    assert view.image_mark.image.value != first
    lo, hi = view.colour_range
    assert lo == -hi and f"[{lo:.3g}, {hi:.3g}]" in view.status.value
    view.colour_dropdown.value = "alpenglow"
    assert view.draws == 3
    index, palette = _picture(view)
    np.testing.assert_array_equal(palette, colour_map("alpenglow"))
    np.testing.assert_array_equal(
        index, scale_to_index(view.radargram.data, *view.colour_range))


def test_clip_percent_saturates_more_when_lower() -> None:
    view = RadargramView(_radargram(), clip_percent=100.0)
    index_full, _ = _picture(view)
    view.clip_slider.value = 60.0
    index_clip, _ = _picture(view)
    ends = (0, 255)
    assert np.isin(index_clip, ends).sum() > np.isin(index_full, ends).sum()


def test_all_zero_radargram_draws_finite_ranges() -> None:
    zero = Radargram(data=np.zeros((512, 200)), time_s=TIME_S, position_m=POSITION_M)
    view = RadargramView(zero)
    view.set_depth_axis(2e-9, 2.3e8)
    lo, hi = view.colour_range
    assert np.isfinite([lo, hi]).all() and lo < hi
    index, _ = _picture(view)
    np.testing.assert_array_equal(index, 128)  # zero sits on the middle colour
    view.colour_dropdown.value = "lichen"
    index, _ = _picture(view)
    np.testing.assert_array_equal(index, 0)  # a constant takes a sequential map's first
    scales = (view.position_scale, view.time_scale, view.depth_scale)
    assert all(np.isfinite([s.min, s.max]).all() and s.min < s.max for s in scales)
    assert "nan" not in view.status.value.lower()


def test_one_trace_one_sample_radargram_has_a_finite_extent() -> None:
    rg = Radargram(data=np.ones((1, 1)), time_s=[5e-9], position_m=[2.0])
    view = RadargramView(rg)
    x0, x1 = view.image_mark.x
    y0, y1 = view.image_mark.y
    assert np.isfinite([x0, x1, y0, y1]).all() and x1 > x0 and y0 > y1
    assert _picture(view)[0].shape == (1, 1)


def test_colour_range_rules() -> None:
    data = np.array([-4.0, -1.0, 0.0, 2.0, 3.0])
    assert colour_range(data, 100.0, "diverging") == (-4.0, 4.0)
    lo, hi = colour_range(data, 75.0, "sequential")
    assert (lo, hi) == (np.percentile(data, 25.0), np.percentile(data, 75.0))
    # mostly zeros with one spike: the percentile is 0, fall back on the largest magnitude
    spike = np.zeros(1000)
    spike[3] = -7.0
    assert colour_range(spike, 99.0, "diverging") == (-7.0, 7.0)
    assert colour_range(np.full(4, 3.0), 99.0, "sequential") == (3.0, 6.0)


@pytest.mark.parametrize("n", [1, 2, 5, 1000, 131_072])
def test_percentiles_match_numpy_linear_method(n: int) -> None:
    values = np.random.default_rng(n).normal(size=n)
    qs = (0.0, 1.0, 37.3, 50.0, 99.0, 99.9, 100.0)
    got = _percentiles(values.copy(), qs)
    # same linear interpolation as numpy's default; tolerance: a few ulps of rounding
    np.testing.assert_allclose(got, np.percentile(values, qs), rtol=1e-12, atol=1e-15)


# --------------------------------------------------------------------------- markers
def test_truth_markers_follow_the_radargram_and_toggle() -> None:
    view = RadargramView(_radargram())
    mark = view.truth_mark
    np.testing.assert_allclose(mark.x, [5.0, 8.0])
    np.testing.assert_allclose(mark.y, [20.0, 9.0])  # ns
    assert list(mark.names) == ["person 1", "metal"]  # kind when there is no label
    assert mark.visible
    view.truth_toggle.value = False
    assert not mark.visible
    view.truth_toggle.value = True
    assert mark.visible
    view.radargram = _radargram(truth=())
    assert mark.x.size == 0 and mark.y.size == 0


def test_detections_are_drawn_in_ns_and_cleared() -> None:
    view = RadargramView(_radargram())
    view.set_detections([(5.05, 20.5e-9, "hyperbola A"), (1.0, 3e-9, "B")])
    mark = view.detection_mark
    np.testing.assert_allclose(mark.x, [5.05, 1.0])
    np.testing.assert_allclose(mark.y, [20.5, 3.0])
    assert list(mark.names) == ["hyperbola A", "B"]
    view.set_detections([])
    assert mark.x.size == 0 and len(mark.names) == 0
    with pytest.raises(ValueError, match=r"detections\[1\]"):
        view.set_detections([(1.0, 1e-9, "ok"), (1.0, 2e-9)])
    with pytest.raises(ValueError, match=r"detections\[0\]\.time_s"):
        view.set_detections([(1.0, float("nan"), "x")])


# --------------------------------------------------------------------------- depth axis
def test_depth_axis_is_aligned_to_the_time_axis() -> None:
    view = RadargramView(_radargram())
    depth_axis = view.figure.axes[2]
    assert not depth_axis.visible and depth_axis.side == "right"
    assert depth_axis.orientation == view.figure.axes[1].orientation == "vertical"
    t0_s, v_m_s = 4e-9, 2.2e8
    view.set_depth_axis(t0_s, v_m_s)
    assert depth_axis.visible and view.depth_scale.reverse == view.time_scale.reverse

    # both linear scales share the pixel range, so equal ends mean every tick lines up
    def depth(t_ns: float) -> float:
        return v_m_s * (t_ns * 1e-9 - t0_s) / 2  # two-way time to depth, common practice

    assert view.depth_scale.min == pytest.approx(depth(view.time_scale.min))
    assert view.depth_scale.max == pytest.approx(depth(view.time_scale.max))
    assert depth(view.time_scale.max) == pytest.approx(2.2e8 * (51.15e-9 - 4e-9) / 2)
    short = Radargram(data=np.ones((100, 3)), time_s=np.arange(100) * 2e-10,
                      position_m=[0.0, 0.1, 0.2])
    view.radargram = short
    assert view.depth_scale.max == pytest.approx(depth(view.time_scale.max))
    view.clear_depth_axis()
    assert not depth_axis.visible
    with pytest.raises(ValueError, match="velocity_m_s"):
        view.set_depth_axis(0.0, 0.0)
    with pytest.raises(ValueError, match="velocity_m_s"):
        view.set_depth_axis(0.0, 4e8)


# --------------------------------------------------------------------------- picking
def test_click_on_the_picture_picks_the_nearest_trace() -> None:
    view = RadargramView(_radargram())
    seen = []
    view.observe(lambda ch: seen.append(ch["new"]), names="picked_position_m")
    # what bqplot 0.13's Image view sends on a click: data coordinates of the pointer
    view.image_mark._handle_custom_msgs(
        None, {"event": "element_click", "data": {"click_x": 3.012, "click_y": 12.0}})
    assert view.picked_position_m == pytest.approx(3.0)
    assert view.picked_trace_index == 60
    assert seen == [pytest.approx(3.0)]
    pick_line = view.figure.marks[1]
    assert pick_line.visible and np.allclose(pick_line.x, 3.0)
    # malformed or off-picture messages change nothing
    view.image_mark._handle_custom_msgs(None, {"event": "element_click", "data": None})
    view.image_mark._handle_custom_msgs(
        None, {"event": "element_click", "data": {"click_x": float("nan")}})
    assert seen == [pytest.approx(3.0)]
    view.image_mark._handle_custom_msgs(
        None, {"event": "element_click", "data": {"click_x": 99.0, "click_y": 1.0}})
    assert view.picked_trace_index == 199 and view.picked_position_m == pytest.approx(9.95)


def test_pick_survives_a_new_radargram_by_snapping() -> None:
    view = RadargramView(_radargram())
    view.pick_position(9.0)
    coarse = Radargram(data=np.ones((10, 4)), time_s=np.arange(10) * 1e-9,
                       position_m=[0.0, 2.0, 4.0, 6.0])
    view.radargram = coarse
    assert view.picked_position_m == 6.0 and view.picked_trace_index == 3


def test_image_widget_is_an_ipywidgets_image_holding_png() -> None:
    view = RadargramView(_radargram())
    image = view.image_mark.image
    assert isinstance(image, ipywidgets.Image) and image.format == "png"
    assert image.value[:8] == b"\x89PNG\r\n\x1a\n"
