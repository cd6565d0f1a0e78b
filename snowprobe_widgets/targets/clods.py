"""Clutter clods: small blocks of denser snow in avalanche debris, as point scatterers.

They are not scene objects one by one: :class:`snowprobe_widgets.scene.Clutter` realises
them (seeded positions and sizes); this module holds their scattering. Each block is a
sphere of snow ``CLUTTER_BLOCK_EXTRA_DENSITY_KG_M3`` denser than the layer around it,
with radar cross-section min(Rayleigh, optical): the Rayleigh sphere
4 pi k^4 a^6 |K|^2 below ka ~ 1 and the optical pi a^2 |r|^2 above (van de Hulst 1957,
from memory; the min rule is common practice). The field amplitude carries the sign of
the physics in each regime: in the Rayleigh regime the dipole term +k^2 a^3 K (Bohren &
Huffman 1983, section 5.2: a small sphere's backscatter has the polarity of its
polarisability, the incident polarity for a denser block), in the optical regime the
Fresnel sign of the front face (inverted for a denser block). Between the two limits
(ka ~ 0.5-3) the real echo oscillates with size: ``validity`` warns there.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from .. import materials as mat
from ..constants import C0_M_S, RHO_ICE_KG_M3

__all__ = ["CLUTTER_BLOCK_EXTRA_DENSITY_KG_M3", "RAYLEIGH_MAX_KA", "clod_contrast",
           "clod_amplitude", "validity"]

#: Density added to the local snow for a clutter block (invented demo figure: hard
#: debris clods are denser than the snow around them).
CLUTTER_BLOCK_EXTRA_DENSITY_KG_M3 = 250.0
#: Largest ka of the Rayleigh regime: there the dipole term is within about 10 % of the
#: exact Mie backscatter of a weakly contrasting sphere (tests/targets/test_clods.py
#: checks it against miepython).
RAYLEIGH_MAX_KA = 0.5


def clod_contrast(layer: Any, fc: float) -> tuple[float, float, float]:
    """(n of the snow, Rayleigh factor K, normal-incidence r) of a debris block in ``layer``.

    The block is snow of the layer's water content and CLUTTER_BLOCK_EXTRA_DENSITY_KG_M3
    denser (at most the pore space allows); K = (e_b - e_s) / (e_b + 2 e_s) and
    r = (n_s - n_b) / (n_s + n_b) from the real permittivities at ``fc``.
    """
    rho_b = min(layer.density_kg_m3 + CLUTTER_BLOCK_EXTRA_DENSITY_KG_M3,
                RHO_ICE_KG_M3 * (1 - layer.lwc_percent / 100.0))
    model = layer.dielectric_model
    e_s = complex(mat.layer_material(model, layer.density_kg_m3, layer.lwc_percent)
                  .permittivity(fc)).real
    e_b = complex(mat.layer_material(model, rho_b, layer.lwc_percent).permittivity(fc)).real
    n_s, n_b = math.sqrt(e_s), math.sqrt(e_b)
    return n_s, (e_b - e_s) / (e_b + 2 * e_s), (n_s - n_b) / (n_s + n_b)


def clod_amplitude(n_s: np.ndarray, K: np.ndarray, r: np.ndarray, radius_m: np.ndarray,
                   fc: float) -> tuple[np.ndarray, np.ndarray]:
    """Backscatter amplitude of blocks at ``fc`` and whether each is in the Rayleigh regime.

    Returns
    -------
    amplitude : ndarray
        sqrt(sigma / 4 pi) / n_s with the regime's sign (+K Rayleigh, r optical): the
        field per unit incident spherical wave times R^2, in the package's normalisation.
    rayleigh : ndarray of bool
        True where the Rayleigh cross-section is the smaller (amplitude grows as f^2).
    """
    k = 2 * math.pi * fc * n_s / C0_M_S
    sig_r = 4 * math.pi * k**4 * radius_m**6 * K**2
    sig_o = math.pi * radius_m * radius_m * r * r
    rayleigh = sig_r < sig_o
    sign = np.where(rayleigh, np.sign(K), np.sign(r))
    return sign * np.sqrt(np.minimum(sig_r, sig_o) / (4 * math.pi)) / n_s, rayleigh


def validity(clutter: Any, snowpack: Any, fc: float) -> tuple[str, ...]:
    """Warnings where the blocks' mean size is outside the Rayleigh regime at ``fc``."""
    if clutter.scatterer_density_per_m3 <= 0:
        return ()
    n_s = max(clod_contrast(layer, fc)[0] for layer in snowpack.layers)
    ka = 2 * math.pi * fc * n_s / C0_M_S * clutter.scatterer_size_m / 2
    if ka <= RAYLEIGH_MAX_KA:
        return ()
    return (f"At {fc / 1e6:.0f} MHz the {clutter.scatterer_size_m * 100:.0f} cm debris "
            f"blocks are not small against the wavelength (ka = {ka:.1f}); their echo "
            "uses the smaller of the Rayleigh and optical limits, which only bounds it: "
            "treat the clutter level as rough.",)
