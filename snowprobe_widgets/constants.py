"""Physical constants in SI units (CODATA 2018 values)."""

from __future__ import annotations

#: Speed of light in vacuum, m/s.
C0_M_S: float = 299_792_458.0
#: Vacuum permittivity, F/m.
EPS0_F_M: float = 8.8541878128e-12
#: Vacuum permeability, H/m.
MU0_H_M: float = 1.25663706212e-6
#: Density of pure bubble-free ice, kg/m3 (the value used by the snow mixing formulas).
RHO_ICE_KG_M3: float = 917.0
#: Density of liquid water near 0 degC, kg/m3.
RHO_WATER_KG_M3: float = 1000.0
#: Amplitude nepers to decibels: 20 / ln(10).
NP_TO_DB: float = 8.685889638065037
#: Highest volumetric liquid water content, %, the wet-snow models are calibrated for
#: (materials.wet_snow); the one limit both ``Layer`` and the materials apply.
MAX_LWC_PERCENT: float = 12.0
