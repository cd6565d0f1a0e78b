"""Frequency-domain trace synthesis: echo times, amplitudes, spreading, no wrap-around."""

from __future__ import annotations

import math

import numpy as np
import pytest

from snowprobe_widgets import materials as mat
from snowprobe_widgets.pulses import make_pulse
from snowprobe_widgets.trace import synthesize_trace

C = 299_792_458.0  # speed of light, m/s (CODATA, exact)
PULSE = make_pulse("ricker", 1e9)


def _peak_near(trace, t_s: float, half_width: int = 15) -> tuple[int, float]:
    dt = trace.time_s[1] - trace.time_s[0]
    i0 = int(round(t_s / dt))
    lo = max(i0 - half_width, 0)
    seg = trace.amplitude[lo:i0 + half_width]
    j = int(np.argmax(np.abs(seg)))
    return lo + j, float(seg[j])


@pytest.mark.parametrize("mode", ["plane", "point"])
def test_echo_times_follow_layer_velocities(mode: str) -> None:
    # independent two-way times: t = 2 h / c + sum 2 d_i sqrt(eps_i) / c for lossless media
    # (radar travel time, common practice)
    eps = [1.96, 4.0, 9.0]
    d = [1.0, 0.5]
    h = 0.6
    media = [mat.rock(e) for e in eps]
    dt = 20e-12
    tr = synthesize_trace(media, d, antenna_height_m=h, pulse=PULSE, dt_s=dt, n_samples=1024,
                          mode=mode)
    times = [2 * h / C, 2 * h / C + 2 * 1.0 * 1.4 / C, 2 * h / C + 2 * 1.4 / C + 2 * 0.5 * 2 / C]
    for t_ref in times:
        i, _ = _peak_near(tr, t_ref)
        assert abs(i - t_ref / dt) <= 1.0
    np.testing.assert_allclose([t for _, t in tr.echoes], times, rtol=1e-12)


def test_plane_mode_surface_echo_is_fresnel_coefficient() -> None:
    # normal-incidence Fresnel coefficient r = (1 - n) / (1 + n) (Born & Wolf 1999, sec. 1.5)
    n = 2.0
    h = 0.75
    dt = 2 * h / C / 200  # the echo falls on a sample
    tr = synthesize_trace([mat.rock(n**2)], [], antenna_height_m=h, pulse=PULSE, dt_s=dt,
                          n_samples=400, mode="plane")
    i, a = _peak_near(tr, 2 * h / C)
    assert i == 200
    assert a == pytest.approx((1 - n) / (1 + n), rel=1e-4)


def test_point_mode_spreading_of_surface_echo() -> None:
    # image-source spreading: a flat reflector at height h returns r / (2 h) per unit
    # spherical wave (image theory; e.g. Balanis, Advanced Engineering Electromagnetics)
    n = 2.0
    out = {}
    for h in (0.5, 1.0):
        dt = 2 * h / C / 200
        tr = synthesize_trace([mat.rock(n**2)], [], antenna_height_m=h, pulse=PULSE, dt_s=dt,
                              n_samples=400, mode="point")
        out[h] = _peak_near(tr, 2 * h / C)[1]
    r = (1 - n) / (1 + n)
    assert out[0.5] == pytest.approx(r / (2 * 0.5), rel=1e-4)
    assert out[0.5] / out[1.0] == pytest.approx(2.0, rel=1e-4)


def test_point_mode_spreading_through_a_layer() -> None:
    # paraxial image distance of a source seen through a layer: h + d / n (Cerveny 2001,
    # ch. 4, from memory); amplitude (1 - r1^2) r2 / (2 (h + d / n1))
    h, d, n1, n2 = 0.5, 1.0, 1.5, 3.0
    c1 = (1 - n1) / (1 + n1)
    c2 = (n1 - n2) / (n1 + n2)
    t_ref = 2 * h / C + 2 * d * n1 / C
    dt = t_ref / 400
    tr = synthesize_trace([mat.rock(n1**2), mat.rock(n2**2)], [d], antenna_height_m=h,
                          pulse=PULSE, dt_s=dt, n_samples=600, mode="point")
    i, a = _peak_near(tr, t_ref)
    assert i == 400
    assert a == pytest.approx((1 - c1**2) * c2 / (2 * (h + d / n1)), rel=1e-4)


def test_lossy_layer_attenuates_by_its_loss() -> None:
    # two-way loss exp(-2 alpha d) with alpha = k0 Im(n) at the centre frequency; a
    # narrow-band pulse keeps the ratio close to it (plane-wave attenuation, common practice)
    p = make_pulse("modulated_gaussian", 1e9, 150e6)
    d = 1.0
    dry = mat.rock(2.0, 0.0)
    wet = mat.rock(2.0, 0.01)
    amps = []
    for layer in (dry, wet):
        tr = synthesize_trace([layer, mat.rock(8.0)], [d], antenna_height_m=0.5, pulse=p,
                              dt_s=25e-12, n_samples=1024, mode="plane")
        t_ref = 2 * 0.5 / C + 2 * d * math.sqrt(2.0) / C
        amps.append(abs(_peak_near(tr, t_ref, 40)[1]))
    n_wet = np.sqrt(wet.permittivity(1e9))
    alpha = 2 * math.pi * 1e9 / C * abs(n_wet.imag)
    assert amps[1] / amps[0] == pytest.approx(math.exp(-2 * alpha * d), rel=0.03)


def test_nothing_wraps_around_from_late_echoes() -> None:
    # a strong reflector far beyond a short window must not appear before the surface echo
    dt = 25e-12
    tr = synthesize_trace([mat.rock(1.5), mat.metal()], [6.0], antenna_height_m=0.5,
                          pulse=PULSE, dt_s=dt, n_samples=512, mode="plane")
    before_surface = tr.amplitude[: int(2 * 0.5 / C / dt) - 60]
    assert np.max(np.abs(before_surface)) < 1e-6  # a wrapped echo would be ~0.1
    assert tr.echoes[-1][1] > tr.time_s[-1]  # the metal echo lies beyond the window


def test_plane_mode_multiples_decay_without_wrap() -> None:
    # plane mode keeps all multiples; with a window much longer than the column they must
    # have decayed, and the start of the window stays clean
    dt = 25e-12
    tr = synthesize_trace([mat.rock(4.0), mat.metal()], [0.3], antenna_height_m=0.3,
                          pulse=PULSE, dt_s=dt, n_samples=4096, mode="plane")
    assert np.max(np.abs(tr.amplitude[:20])) < 1e-6  # band-edge ripple ~1e-8
    assert np.all(np.isfinite(tr.amplitude))


def test_model_layer_imports_without_widgets() -> None:
    import subprocess
    import sys

    code = ("import sys, snowprobe_widgets.trace, snowprobe_widgets.fdtd, "
            "snowprobe_widgets.scene, snowprobe_widgets.materials; "
            "bad = [m for m in sys.modules if m.split('.')[0] in ('ipywidgets', 'bqplot')]; "
            "print(bad); sys.exit(1 if bad else 0)")
    res = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=False)
    assert res.returncode == 0, res.stdout + res.stderr


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"mode": "sideways"}, "mode"),
        ({"antenna_height_m": -0.1}, "antenna_height_m"),
        ({"n_samples": 4}, "n_samples"),
        ({"dt_s": 1e-9}, "dt_s"),
        ({"thickness_m": [0.0]}, "thickness_m"),
        ({"thickness_m": [0.5, 0.5]}, "thickness_m"),
        ({"materials": [mat.metal(), mat.rock(3.0)]}, "perfect conductor"),
    ],
)
def test_bad_inputs(kwargs: dict, field: str) -> None:
    args = {"materials": [mat.dry_snow(300.0), mat.rock(5.0)], "thickness_m": [1.0],
            "antenna_height_m": 0.5, "pulse": PULSE, "dt_s": 25e-12, "n_samples": 256,
            "mode": "point"}
    args.update(kwargs)
    with pytest.raises(ValueError, match=field):
        synthesize_trace(args.pop("materials"), args.pop("thickness_m"), **args)
