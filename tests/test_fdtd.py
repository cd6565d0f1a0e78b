"""The FDTD reference solver against the frequency-domain trace, and its own checks."""

from __future__ import annotations

import numpy as np
import pytest

from snowprobe_widgets import materials as mat
from snowprobe_widgets.fdtd import fdtd_trace, frozen_at, plan_grid
from snowprobe_widgets.pulses import make_pulse
from snowprobe_widgets.trace import synthesize_trace

C = 299_792_458.0
F0 = 1e9
PULSE = make_pulse("ricker", F0)
DT = 25e-12
N = 1024


@pytest.fixture(scope="module")
def body_scene():
    # a person lying in dry snow over moist soil: snow, clothing, skin, fat, muscle, snow, soil
    media = [mat.dry_snow(300.0), mat.clothing(), mat.tissue("skin"), mat.tissue("fat"),
             mat.tissue("muscle"), mat.dry_snow(350.0), mat.soil(0.2)]
    thick = [0.8, 0.005, 0.0015, 0.01, 0.05, 0.4]
    ref = fdtd_trace(media, thick, antenna_height_m=0.5, pulse=PULSE, dt_s=DT, n_samples=N)
    fd = synthesize_trace([frozen_at(m, F0) for m in media], thick, antenna_height_m=0.5,
                          pulse=PULSE, dt_s=DT, n_samples=N, mode="plane")
    return fd, ref


def test_fdtd_matches_frequency_domain_trace(body_scene) -> None:
    # two independent solutions of the same 1-D Maxwell problem: the Yee scheme (Yee 1966;
    # Taflove & Hagness 2005) and the exact layered-media response (Born & Wolf 1999 sec. 1.6)
    fd, ref = body_scene
    a, b = fd.amplitude, ref.trace.amplitude
    ncc = a @ b / np.sqrt((a @ a) * (b @ b))
    assert ncc >= 0.99
    assert ncc >= 0.9999  # measured 0.999994: guard the margin, not just the requirement


def test_fdtd_echo_peaks_match_in_time_and_amplitude(body_scene) -> None:
    fd, ref = body_scene
    a, b = fd.amplitude, ref.trace.amplitude
    # surface, body (the tissue echoes overlap in one wavelet), snow under body, ground
    for label, t in fd.echoes:
        if label in ("interface 2", "interface 3", "interface 4"):
            continue
        i0 = int(round(t / DT))
        sl = slice(max(i0 - 20, 0), i0 + 20)
        ia = int(np.argmax(np.abs(a[sl])))
        ib = int(np.argmax(np.abs(b[sl])))
        assert abs(ia - ib) <= 1, label
        assert b[sl][ib] == pytest.approx(a[sl][ia], rel=0.03), label


def test_fdtd_free_surface_is_fresnel() -> None:
    # a single lossless half-space: peak -1/3 for n = 2 (Born & Wolf 1999, sec. 1.5)
    h = 0.45
    dt = 2 * h / C / 120
    res = fdtd_trace([mat.rock(4.0)], [], antenna_height_m=h, pulse=PULSE, dt_s=dt,
                     n_samples=300)
    a = res.trace.amplitude
    i = int(np.argmax(np.abs(a)))
    assert abs(i - 120) <= 1
    assert a[i] == pytest.approx(-1 / 3, rel=0.01)
    assert res.grid.courant == pytest.approx(1.0)


def test_fdtd_metal_ground_reflects_minus_one() -> None:
    h = 0.3
    dt = 2 * h / C / 100
    res = fdtd_trace([mat.metal()], [], antenna_height_m=h, pulse=PULSE, dt_s=dt,
                     n_samples=200)
    a = res.trace.amplitude
    i = int(np.argmax(np.abs(a)))
    assert abs(i - 100) <= 1
    assert a[i] == pytest.approx(-1.0, rel=0.01)


def test_grid_resolves_the_thinnest_layer_and_the_shortest_wavelength() -> None:
    media = [mat.dry_snow(300.0), mat.tissue("skin"), mat.tissue("muscle")]
    grid, eps, sigma, pec = plan_grid(media, [0.5, 0.002], antenna_height_m=0.5, pulse=PULSE,
                                      window_s=20e-9, cells_per_wavelength=20)
    assert grid.dz_m <= 0.002 / 4
    n_muscle = np.sqrt(frozen_at(mat.tissue("muscle"), F0).permittivity(F0).real)
    f_hi = PULSE.band_hz(1e-3)[1]
    assert grid.dz_m <= C / (f_hi * n_muscle * 20) * (1 + 1e-12)
    assert not pec
    assert eps[0] == pytest.approx(1.0) and sigma[0] == 0.0
    assert eps[-1] == pytest.approx(n_muscle**2)


def test_frozen_material_keeps_value_at_its_frequency() -> None:
    m = mat.tissue("muscle")
    fm = frozen_at(m, F0)
    assert complex(fm.permittivity(F0)) == pytest.approx(complex(m.permittivity(F0)), rel=1e-12)
    assert frozen_at(mat.metal(), F0).perfect_conductor


def test_progress_is_reported() -> None:
    seen: list[float] = []
    fdtd_trace([mat.rock(3.0)], [], antenna_height_m=0.2, pulse=PULSE, dt_s=DT, n_samples=64,
               progress=seen.append)
    assert seen[-1] == 1.0
    assert len(seen) >= 10
    assert all(np.diff(seen) >= 0)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"antenna_height_m": 0.0}, "antenna_height_m"),
        ({"cells_per_wavelength": 3}, "cells_per_wavelength"),
        ({"n_samples": 2}, "n_samples"),
        ({"thickness_m": [-1.0]}, "thickness_m"),
    ],
)
def test_bad_inputs(kwargs: dict, field: str) -> None:
    args = {"materials": [mat.dry_snow(300.0), mat.rock(5.0)], "thickness_m": [1.0],
            "antenna_height_m": 0.5, "pulse": PULSE, "dt_s": DT, "n_samples": 128}
    args.update(kwargs)
    with pytest.raises(ValueError, match=field):
        fdtd_trace(args.pop("materials"), args.pop("thickness_m"), **args)
