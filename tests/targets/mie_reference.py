"""miepython's sphere backscatter in the package's normalisation (a helper for the tests).

miepython (PyPI) computes the exact Mie series (Wiscombe's algorithm; Bohren & Huffman
1983). Its conventions are pinned in tests/targets/test_series.py on a large perfect
conductor.
"""

from __future__ import annotations

import math

import miepython
import numpy as np


def miepython_echo(m: complex, x: float) -> complex:
    """miepython's backscatter as a front-face normalised echo (see series' docstring).

    Magnitude from qback (the radar backscatter efficiency sigma / (pi a^2), which is 1
    for a large perfect conductor: checked below), phase from S1(mu = -1). The phase
    factor -j exp(-2jx) is pinned on a large perfect conductor, whose front-face echo is
    -1 (a specular perfect conductor inverts the field; Knott et al. 1993, Radar Cross
    Section, ch. 5).
    """
    _, _, qback, _ = miepython.efficiencies_mx(m, x)
    s1, _ = miepython.S1_S2(m, x, -1.0, norm="bohren")
    s1 = complex(s1[0])
    amp = math.sqrt(qback) * x / 2 * s1 / abs(s1)
    return -1j * amp * np.exp(-2j * x) / (x / 2)
