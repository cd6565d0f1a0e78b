"""Clutter clods: the polarity and size of a small dense block's echo against Mie theory.

Independent reference: miepython (exact Mie series; conventions pinned in
test_series.py). A small sphere's echo has the polarity of the dipole term +k^2 a^3 K
(Bohren & Huffman 1983 sec. 5.2), the incident polarity for a denser block, where a flat
denser interface inverts it (Fresnel).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from mie_reference import miepython_echo

from snowprobe_widgets.scene import Clutter, Layer, Snowpack
from snowprobe_widgets.targets.clods import (
    RAYLEIGH_MAX_KA,
    clod_amplitude,
    clod_contrast,
    validity,
)

C = 299_792_458.0  # m/s, exact
FC = 800e6


def _mie_amplitude(n_s: float, n_b: float, radius_m: float) -> complex:
    """Backscattered field x R^2 for a unit incident wave, phase referred to the centre."""
    x = 2 * math.pi * FC * n_s / C * radius_m
    echo = miepython_echo(complex(n_b / n_s), x)  # front-face normalised
    return echo * np.exp(2j * x) * radius_m / 2


@pytest.mark.parametrize("layer", [Layer(1.0, 250.0), Layer(1.0, 400.0, 2.0)])
@pytest.mark.parametrize("ka", [0.05, 0.2, RAYLEIGH_MAX_KA])
def test_small_block_has_the_dipole_polarity_and_size_of_mie(layer: Layer, ka: float) -> None:
    n_s, K, r = clod_contrast(layer, FC)
    n_b = n_s * math.sqrt((1 + 2 * K) / (1 - K))  # e_b / e_s from K
    a = ka / (2 * math.pi * FC * n_s / C)
    amp, rayleigh = clod_amplitude(np.array([n_s]), np.array([K]), np.array([r]),
                                   np.array([a]), FC)
    mie = _mie_amplitude(n_s, n_b, a)
    assert bool(rayleigh[0])
    # polarity: the model's sign is Mie's (its real part dominates: |Im| < |Re| / 5)
    assert abs(mie.imag) < abs(mie.real) / 5
    assert np.sign(amp[0]) == np.sign(mie.real) == np.sign(K) == 1.0
    # and opposite to the Fresnel sign of the block's face, which the model used before
    assert np.sign(r) == -1.0
    # size: within 10 % of Mie up to ka = 0.5 (the dipole term's error there)
    assert amp[0] * n_s == pytest.approx(abs(mie), rel=0.10)


def test_large_block_keeps_the_fresnel_sign_of_its_face() -> None:
    # optical regime (pi a^2 r^2 the smaller cross-section): the face's Fresnel sign
    n_s, K, r = clod_contrast(Layer(1.0, 250.0), FC)
    amp, rayleigh = clod_amplitude(np.array([n_s]), np.array([K]), np.array([r]),
                                   np.array([0.5]), FC)
    assert not bool(rayleigh[0])
    assert amp[0] < 0 and r < 0


def test_validity_warns_outside_the_rayleigh_regime() -> None:
    snow = Snowpack((Layer(2.0, 300.0),))
    big = validity(Clutter(scatterer_density_per_m3=5.0, scatterer_size_m=0.1), snow, FC)
    small = validity(Clutter(scatterer_density_per_m3=5.0, scatterer_size_m=0.01), snow, FC)
    none = validity(Clutter(scatterer_density_per_m3=0.0, scatterer_size_m=0.1), snow, FC)
    assert len(big) == 1 and "debris blocks" in big[0] and "ka = " in big[0]
    assert small == () and none == ()
