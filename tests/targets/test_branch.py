"""The branch kind: both polarisations against the exact infinite-cylinder series.

Reference: the series of Bohren & Huffman 1983 sec. 8.4 (snowprobe_widgets.targets.series,
itself checked against published limits in test_series.py). The model's path is the
synthesis': the kind's facet mesh of a finite branch, weighted by its local angle
dependence, summed in a homogeneous medium and multiplied by the kind's facet spectrum.
A finite cylinder's broadside radar cross-section in the far field is
sigma = 2 L^2 sigma_2d / lambda (Knott, Shaeffer & Tuley 1993, Radar Cross Section,
table of PO formulas; from memory), which turns the 3-D facet sum into an echo width.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from facet_reference import EPS_SNOW, facet_sum

from snowprobe_widgets import simulate
from snowprobe_widgets.scene import (
    Branch,
    Clutter,
    Ground,
    Layer,
    Radar,
    Scenario,
    Snowpack,
    Survey,
)
from snowprobe_widgets.targets import kind_of
from snowprobe_widgets.targets.series import cylinder_echo

C = 299_792_458.0  # m/s, exact
R_M = 90.0  # far field of a 1.5 m branch up to 1.5 GHz (2 L^2 / lambda < 30 m)
FREQ_HZ = np.linspace(400e6, 1500e6, 12)
#: (radar polarisation, series case) for a branch along the survey line (heading 0)
POLS = [("along_line", "along"), ("across_line", "across")]


def _echo_width(obj: Branch, freq_hz: np.ndarray, polarization: str,
                series: bool = True) -> np.ndarray:
    """sigma_2d of the synthesis' path (facet sum x facet spectrum), m."""
    k = 2 * math.pi * freq_hz * math.sqrt(EPS_SNOW) / C
    e, refl = facet_sum(obj, freq_hz, min(C / (math.sqrt(EPS_SNOW) * freq_hz.max()) / 10,
                                          0.05), polarization)
    if series:
        e = e * refl.facet_spectrum
    else:  # plain physical optics: the front face's Fresnel coefficient
        n = math.sqrt(obj.permittivity / EPS_SNOW)
        e = e * (1 - n) / (1 + n)
    rc = R_M + obj.diameter_m / 2
    sigma = 4 * math.pi * rc**4 * np.abs(e) ** 2
    return sigma * (2 * math.pi / k) / (2 * obj.length_m**2)


def _series_width(obj: Branch, freq_hz: np.ndarray, case: str) -> np.ndarray:
    x = 2 * math.pi * freq_hz * math.sqrt(EPS_SNOW) / C * obj.diameter_m / 2
    m = math.sqrt(obj.permittivity / EPS_SNOW)
    return math.pi * obj.diameter_m / 2 * np.abs(cylinder_echo(x, m, case)) ** 2


@pytest.mark.parametrize("diameter", [0.02, 0.05, 0.2, 0.6])
@pytest.mark.parametrize(("polarization", "case"), POLS)
def test_both_polarisations_within_3_db_of_the_series(diameter: float, polarization: str,
                                                      case: str) -> None:
    # the check: 2-60 cm, both polarisations, 400-1500 MHz, within 3 dB
    branch = Branch(0.0, R_M, diameter, 1.5, water_fraction=0.3)
    got = _echo_width(branch, FREQ_HZ, polarization)
    want = _series_width(branch, FREQ_HZ, case)
    assert np.max(np.abs(10 * np.log10(got / want))) < 3.0


def test_plain_physical_optics_fails_for_a_thin_branch() -> None:
    # the check can fail: physical optics alone (the model before the series) is off by
    # more than 3 dB for a 2 cm branch in at least one polarisation
    branch = Branch(0.0, R_M, 0.02, 1.5, water_fraction=0.3)
    po = _echo_width(branch, FREQ_HZ, "along_line", series=False)
    worst = max(np.max(np.abs(10 * np.log10(po / _series_width(branch, FREQ_HZ, case))))
                for _, case in POLS)
    assert worst > 3.0


def test_a_heading_mixes_the_polarisations_as_cos2_and_sin2() -> None:
    # co-polarised echo of a cylinder turned by beta in the field: along cos^2 + across
    # sin^2 (the cylinder's scattering matrix rotated; Ruck et al. 1970 ch. 4, from memory)
    f = np.array([800e6])
    b0 = Branch(0.0, 2.0, 0.03, 2.0, heading_deg=0.0)
    b30 = Branch(0.0, 2.0, 0.03, 2.0, heading_deg=30.0)
    kind = kind_of(b0)
    along = kind.reflection(b0, complex(EPS_SNOW), 800e6, f, "along_line").spectrum
    across = kind.reflection(b0, complex(EPS_SNOW), 800e6, f, "across_line").spectrum
    mixed = kind.reflection(b30, complex(EPS_SNOW), 800e6, f, "along_line").spectrum
    c2 = math.cos(math.radians(30.0)) ** 2
    assert mixed == pytest.approx(c2 * along + (1 - c2) * across, rel=1e-12)


def _branch_peak(polarization: str) -> float:
    branch = Branch(3.0, 0.6, 0.02, 3.0, heading_deg=90.0, water_fraction=0.4)
    sc = Scenario(Snowpack((Layer(2.0, 300.0),)), Ground("soil", 0.2), (), (branch,),
                  Radar("ricker", 800e6, dt_s=5e-11, time_window_s=30e-9,
                        antenna_height_m=0.5, polarization=polarization),
                  Survey(2.0, 4.0, 0.05), Clutter())
    rg = simulate(sc, components=("objects",))
    return float(np.max(np.abs(rg.data[:, int(np.argmin(np.abs(rg.position_m - 3.0)))])))


def test_a_thin_branch_across_the_line_answers_the_field_across_the_line() -> None:
    # a 2 cm wet branch across the line: the usual broadside antenna (field across the
    # line, along the branch) sees it far above the field along the line; the two
    # radargram peaks differ as the series' two echoes do over the pulse's main band
    # (0.5-1.5 fc; Bohren & Huffman 1983 sec. 8.4), within 1 dB
    strong, weak = _branch_peak("across_line"), _branch_peak("along_line")
    ratio_db = 20 * math.log10(strong / weak)
    branch = Branch(3.0, 0.6, 0.02, 3.0, water_fraction=0.4)
    eps_s = Layer(2.0, 300.0).material().permittivity(800e6).real
    x = 2 * math.pi * np.linspace(400e6, 1200e6, 9) * math.sqrt(eps_s) / C * 0.01
    m = math.sqrt(branch.permittivity / eps_s)
    series_db = 20 * np.log10(np.abs(cylinder_echo(x, m, "along") / cylinder_echo(x, m, "across")))
    assert ratio_db > 10.0
    assert series_db.min() - 1.0 < ratio_db < series_db.max() + 1.0
