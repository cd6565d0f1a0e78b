"""The person kind: physical optics with the tissue stack, and its validity domain."""

from __future__ import annotations

import math

import miepython
import numpy as np
import pytest

from snowprobe_widgets.facets import ellipsoid_mesh, po_backscatter
from snowprobe_widgets.layered import reflection
from snowprobe_widgets.scene import Layer, Person, Radar, Scenario, Snowpack
from snowprobe_widgets.scene_objects import Ground
from snowprobe_widgets.targets import kind_of, validity_warnings
from snowprobe_widgets.targets.person import MIN_KA


def _po_minus_mie_db(ka: float) -> float:
    a, R = 0.2, 2000.0
    k = ka / a
    mesh = ellipsoid_mesh((0, 0, R), (a, a, a), facet_size_m=min(2 * math.pi / k / 10, a / 5))
    e = po_backscatter(mesh, np.array([k]), (0, 0, 0), reflection=-1.0)[0]
    sigma_po = 4 * math.pi * R**4 * abs(e) ** 2
    sigma_mie = miepython.efficiencies_mx(complex(1e4, -1e4), ka)[2] * math.pi * a * a
    return 10 * math.log10(sigma_po / sigma_mie)


def test_physical_optics_is_rough_below_its_domain() -> None:
    # the reason for MIN_KA: a conducting sphere's physical-optics backscatter against
    # the exact Mie series (miepython; Bohren & Huffman 1983) is off by more than 3 dB
    # somewhere below ka = MIN_KA, and within 4 dB from ka = 2 up (creeping waves, which
    # PO lacks, give the remaining ripple; Knott et al. 1993 ch. 5)
    below = [abs(_po_minus_mie_db(ka)) for ka in np.linspace(0.4, MIN_KA, 4)]
    above = [abs(_po_minus_mie_db(ka)) for ka in (2.0, 3.0, 5.0, 8.0)]
    assert max(below) > 3.0
    assert max(above) < 4.0


def _scene(fc: float) -> Scenario:
    return Scenario(Snowpack((Layer(3.0, 300.0),)), Ground(), (Person(5.0, 1.0),),
                    radar=Radar(center_frequency_hz=fc, dt_s=1e-10, time_window_s=60e-9))


def test_body_at_50_mhz_is_outside_and_at_800_mhz_inside() -> None:
    # the example: at 50 MHz the body has ka ~ 0.3 in the snow
    low = validity_warnings(_scene(50e6))
    assert len(low) == 1 and "50 MHz" in low[0] and "ka = 0.29" in low[0]
    assert validity_warnings(_scene(800e6)) == ()


def test_normal_incidence_spectrum_is_the_tissue_stack() -> None:
    # regression of the move into targets/: the kind's spectrum is layered.reflection of
    # snow | clothing | skin | fat | muscle (tested against tmm in test_layered.py)
    p = Person(0.0, 1.0)
    f = np.linspace(300e6, 1500e6, 7)
    mats, thick = p.tissue_stack()
    want = reflection(f, [1.6] + [m.permittivity(f) for m in mats], thick)
    got = kind_of(p).reflection(p, complex(1.6, -0.001), 800e6, f, "across_line")
    assert np.allclose(got.spectrum, want, rtol=1e-12)
    assert np.all(got.po_shape == 1.0) and got.angle_ratio[0] == pytest.approx(1.0)
