"""The boulder kind: a dielectric sphere's whole echo, internal (lens) echo included.

Independent reference: miepython (PyPI; exact Mie series, Bohren & Huffman 1983), with its
phase convention pinned in tests/targets/test_series.py. The model's path is the one the
synthesis takes: the kind's facet mesh, weighted by its local angle dependence, summed in
a homogeneous medium (facets.py's physical-optics kernel) and multiplied by the kind's
facet spectrum.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from facet_reference import EPS_SNOW, facet_sum
from mie_reference import miepython_echo
from scipy.signal import hilbert

from snowprobe_widgets import simulate
from snowprobe_widgets.scene import (
    Boulder,
    Clutter,
    Ground,
    Layer,
    Radar,
    Scenario,
    Snowpack,
    Survey,
)
from snowprobe_widgets.targets import kind_of

C = 299_792_458.0  # m/s, exact
R_M = 90.0  # range to the sphere's top: far field (2 D^2 / lambda < 5 m here)
FREQ_HZ = np.linspace(400e6, 1500e6, 23)


def _facet_sum(obj: Boulder, freq_hz: np.ndarray) -> np.ndarray:
    """The synthesis' path in a homogeneous medium, as a front-face normalised echo."""
    facet = C / (math.sqrt(EPS_SNOW) * freq_hz.max()) / 10
    e, refl = facet_sum(obj, freq_hz, min(facet, obj.diameter_m / 10), "across_line")
    # front-face normalisation: a / 2 at range^2, phase of the top
    k = 2 * math.pi * freq_hz * math.sqrt(EPS_SNOW) / C
    a = obj.diameter_m / 2
    rc = R_M + a
    return e * refl.facet_spectrum * rc**2 / (a / 2) * np.exp(2j * k * R_M)


def _mie(obj: Boulder, freq_hz: np.ndarray) -> np.ndarray:
    n = np.sqrt(obj.material().permittivity(freq_hz) / EPS_SNOW)
    x = 2 * math.pi * freq_hz * math.sqrt(EPS_SNOW) / C * obj.diameter_m / 2
    return np.array([miepython_echo(complex(m), float(xx)) for m, xx in zip(n, x, strict=True)])


def _db(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    return 20 * np.log10(np.abs(a) / np.abs(b))


CASES = [(d, s) for d in (0.2, 0.4, 0.6) for s in (0.0, 0.01, 0.05)]


@pytest.mark.parametrize(("diameter", "sigma"), CASES)
def test_whole_echo_within_3_db_of_mie(diameter: float, sigma: float) -> None:
    # the issue's check: lossless and lossy rock (eps' 6; 0.01 and 0.05 S/m), 0.2-0.6 m,
    # 400-1500 MHz, backscatter amplitude at every frequency within 3 dB of Mie
    rock = Boulder(0.0, R_M, diameter, permittivity=6.0, conductivity_s_m=sigma)
    err = _db(_facet_sum(rock, FREQ_HZ), _mie(rock, FREQ_HZ))
    assert np.max(np.abs(err)) < 3.0


def test_plain_physical_optics_would_fail_the_same_check() -> None:
    # the check can fail: the front face alone (Fresnel r times the facet sum, the model
    # before the series) misses the lossless rock's lens echo by more than 10 dB
    rock = Boulder(0.0, R_M, 0.4, permittivity=6.0, conductivity_s_m=0.0)
    kind = kind_of(rock)
    refl = kind.reflection(rock, complex(EPS_SNOW), 800e6, FREQ_HZ, "across_line")
    n = np.sqrt(6.0 / EPS_SNOW)
    front_only = _facet_sum(rock, FREQ_HZ) / refl.spectrum * (1 - n) / (1 + n)
    assert np.max(np.abs(_db(front_only, _mie(rock, FREQ_HZ)))) > 10.0


@pytest.mark.parametrize(("diameter", "sigma"), [(0.2, 0.0), (0.6, 0.0), (0.6, 0.05)])
def test_pulse_weighted_peak_within_3_db_of_mie(diameter: float, sigma: float) -> None:
    # the echo of an 800 MHz Ricker pulse (the spectra above, 50-2500 MHz, transformed to
    # time): its peak against the same from Mie
    rock = Boulder(0.0, R_M, diameter, permittivity=6.0, conductivity_s_m=sigma)
    n_t, dt = 2048, 2e-11
    f = np.fft.rfftfreq(n_t, dt)
    band = (f > 50e6) & (f < 2500e6)
    fc = 800e6
    ricker = (f[band] / fc) ** 2 * np.exp(-((f[band] / fc) ** 2))
    peaks = []
    for echo in (_facet_sum(rock, f[band]), _mie(rock, f[band])):
        spec = np.zeros(f.size, complex)
        spec[band] = ricker * echo
        peaks.append(np.max(np.abs(np.fft.irfft(spec, n=n_t))))
    assert abs(20 * math.log10(peaks[0] / peaks[1])) < 3.0


def test_internal_echo_arrives_4_a_n_over_c_after_the_front_in_the_radargram() -> None:
    # geometric optics of the axial ray through the sphere (Bohren & Huffman 1983 ch. 4:
    # the glory / lens echo): a delay of 2 x 2a n_rock / c after the front face; for a
    # lossless rock of eps 6 in dry snow the exact series puts it 10-18 dB above the front
    snow = Layer(3.0, 300.0)
    rock = Boulder(3.0, 1.0, 0.6, permittivity=6.0, conductivity_s_m=0.0)
    sc = Scenario(Snowpack((snow,)), Ground("soil", 0.2), (), (rock,),
                  Radar("ricker", 800e6, dt_s=5e-11, time_window_s=60e-9,
                        antenna_height_m=0.5), Survey(2.0, 4.0, 0.05), Clutter())
    rg = simulate(sc, components=("objects",))
    env = np.abs(hilbert(rg.data[:, int(np.argmin(np.abs(rg.position_m - 3.0)))]))
    n = float(snow.material().refractive_index(800e6).real)
    t_front = 2 * 0.5 / C + 2 * 1.0 * n / C
    t_back = t_front + 4 * 0.3 * math.sqrt(6.0) / C
    t = rg.time_s

    def peak_near(t0: float) -> tuple[float, float]:
        near = np.abs(t - t0) < 1.5e-9
        j = int(np.argmax(np.where(near, env, 0.0)))
        return float(t[j]), float(env[j])

    t1, e1 = peak_near(t_front)
    t2, e2 = peak_near(t_back)
    assert abs(t1 - t_front) < 0.3e-9 and abs(t2 - t_back) < 0.3e-9
    assert 10.0 < 20 * math.log10(e2 / e1) < 20.0
