"""Dielectric models of the media a snow radar meets: snow, ice, water, tissue, ground.

Sign convention (used throughout the package): time dependence e^{+j omega t}, so the
complex relative permittivity of a lossy medium is ``eps = eps' - j eps''`` with
``eps'' >= 0``; a DC conductivity sigma adds ``-j sigma / (omega eps0)``. A plane wave
travelling a distance d picks up ``exp(-j k d)`` with ``k = k0 * n`` and
``n = sqrt(eps)`` taken on the branch with ``Im(n) <= 0``.

Every constructor returns a frozen, hashable :class:`Material` that names its published
source. Where published models disagree (dry snow by about 3 %, wet snow by 15-30 % in eps'
at 5 % water) the families offer several models by name through the :data:`MODELS` registry
(keys ``"<family>:<model>"``); other packages add models through the entry-point group
``snowprobe_widgets.materials``.

A scenario layer names its dielectric model (``Layer.dielectric_model``, default
:data:`DEFAULT_LAYER_MODEL`, the package's snow model as it always was). The names a layer
accepts (:func:`layer_model_names`) are the entries of :data:`LAYER_MODELS` (``"snow"``,
``"ice"``, and plugins through the entry-point group ``snowprobe_widgets.layer_models``)
and every pair ``"<dry model>+<wet model>"`` of :data:`MODELS` (``"kovacs+crim"``), plugin
models included; :func:`layer_material` makes the material.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

from ._validate import check_choice, check_frequency, check_pore_water, check_range
from .constants import C0_M_S, EPS0_F_M, MAX_LWC_PERCENT, NP_TO_DB, RHO_ICE_KG_M3
from .registry import Registry

__all__ = [
    "Material", "MODELS", "air", "dry_snow", "wet_snow", "snow", "ice", "water", "tissue",
    "clothing", "soil", "rock", "metal", "dry_snow_models", "wet_snow_models", "TISSUES",
    "velocity_m_ns", "attenuation_db_m", "wavelength_m", "loss_tangent", "refractive_index",
    "DEFAULT_DRY_SNOW_MODEL", "DEFAULT_WET_SNOW_MODEL", "TEMPERATURE_RANGE_C",
    "LAYER_MODELS", "DEFAULT_LAYER_MODEL", "layer_material", "layer_model_names",
]

#: Range of frequencies every constructor accepts, Hz (the synthesiser evaluates whole bands).
FREQ_MIN_HZ = 1e6
FREQ_MAX_HZ = 20e9
#: Temperatures the ice and dry-snow models accept, degC. Matzler's (2006) ice loss holds
#: from 20 to 273 K; the real part (Matzler & Wegmuller 1987, fitted -40...0 degC) changes
#: by 9.1e-4 per degC, so carrying it to -50 degC moves eps' by under 0.01.
TEMPERATURE_RANGE_C = (-50.0, 0.0)


@dataclass(frozen=True)
class Material:
    """A medium with a complex relative permittivity over frequency.

    Attributes
    ----------
    name : str
        Display name ("dry snow 300 kg/m3 (looyenga)").
    source : str
        Published model it follows, with its nominal calibration range.
    kernel : callable
        ``kernel(freq_hz: ndarray, *params) -> complex ndarray``; pure, vectorised.
    params : tuple
        Parameters passed to the kernel (part of equality and hashing).
    freq_min_hz, freq_max_hz : float
        Frequencies outside this range are refused.
    perfect_conductor : bool
        True for metal: layered calculations treat it as a perfect electric conductor.
    valid_hz : tuple of float
        (lowest, highest) frequency of the model's published calibration, Hz. Between it
        and the refusal range the model still computes, and :meth:`validity_note` says so
        in plain words (a scenario shows these notes as warnings).
    model_name : str
        Short name of the model and its source for those notes ("wet-snow model of
        Tiuri et al. 1984"); empty: ``name``.
    """

    name: str
    source: str
    kernel: Callable[..., np.ndarray] = field(repr=False)
    params: tuple = ()
    freq_min_hz: float = FREQ_MIN_HZ
    freq_max_hz: float = FREQ_MAX_HZ
    perfect_conductor: bool = False
    valid_hz: tuple[float, float] = (FREQ_MIN_HZ, FREQ_MAX_HZ)
    model_name: str = ""

    def validity_note(self, freq_hz: float) -> str:
        """A plain-language warning when ``freq_hz`` lies outside :attr:`valid_hz`, else "".

        Parameters
        ----------
        freq_hz : float
            The frequency the model is used at (a radar's centre frequency), Hz.
        """
        lo, hi = self.valid_hz
        if lo <= freq_hz <= hi:
            return ""
        return (f"The {self.model_name or self.name} is calibrated for {_mhz(lo)}-{_mhz(hi)}; "
                f"at {_mhz(freq_hz)} it is extrapolated.")

    def permittivity(self, freq_hz: object) -> np.ndarray:
        """Complex relative permittivity eps' - j eps'' at ``freq_hz`` (Hz, > 0).

        Returns
        -------
        ndarray, complex, same shape as ``freq_hz``

        Raises
        ------
        ValueError
            For non-positive frequencies or frequencies outside the model's range.
        """
        f = check_frequency(freq_hz, self.freq_min_hz, self.freq_max_hz)
        return np.asarray(self.kernel(f, *self.params), dtype=complex)

    def refractive_index(self, freq_hz: object) -> np.ndarray:
        """Complex refractive index sqrt(eps) with Im <= 0 (e^{+j omega t})."""
        n = np.sqrt(self.permittivity(freq_hz))
        return np.where(n.imag > 0, -n, n)

    def velocity_m_ns(self, freq_hz: object) -> np.ndarray:
        """Phase velocity c0 / Re(n), m/ns."""
        return C0_M_S / self.refractive_index(freq_hz).real * 1e-9

    def attenuation_db_m(self, freq_hz: object) -> np.ndarray:
        """One-way amplitude attenuation 8.686 * alpha, dB/m (alpha = -k0 Im(n))."""
        f = np.asarray(freq_hz, dtype=float)
        k0 = 2 * np.pi * f / C0_M_S
        return -k0 * self.refractive_index(f).imag * NP_TO_DB

    def wavelength_m(self, freq_hz: object) -> np.ndarray:
        """Wavelength in the medium, m."""
        f = np.asarray(freq_hz, dtype=float)
        return C0_M_S / (f * self.refractive_index(f).real)

    def loss_tangent(self, freq_hz: object) -> np.ndarray:
        """eps'' / eps'."""
        e = self.permittivity(freq_hz)
        return -e.imag / e.real


def _mhz(freq_hz: float) -> str:
    return f"{freq_hz / 1e9:g} GHz" if freq_hz >= 1e9 else f"{freq_hz / 1e6:g} MHz"


def refractive_index(material: Material, freq_hz: object) -> np.ndarray:
    """Complex refractive index of ``material`` (Im <= 0)."""
    return material.refractive_index(freq_hz)


def velocity_m_ns(material: Material, freq_hz: object) -> np.ndarray:
    """Phase velocity of ``material``, m/ns."""
    return material.velocity_m_ns(freq_hz)


def attenuation_db_m(material: Material, freq_hz: object) -> np.ndarray:
    """One-way amplitude attenuation of ``material``, dB/m."""
    return material.attenuation_db_m(freq_hz)


def wavelength_m(material: Material, freq_hz: object) -> np.ndarray:
    """Wavelength in ``material``, m."""
    return material.wavelength_m(freq_hz)


def loss_tangent(material: Material, freq_hz: object) -> np.ndarray:
    """Loss tangent eps''/eps' of ``material``."""
    return material.loss_tangent(freq_hz)


# --------------------------------------------------------------------------- kernels
def _constant(f: np.ndarray, eps_real: float, sigma_s_m: float) -> np.ndarray:
    return eps_real - 1j * sigma_s_m / (2 * np.pi * f * EPS0_F_M)


def ice_real(temperature_c: float) -> float:
    """Real permittivity of pure ice: 3.1884 + 9.1e-4 T (Mätzler & Wegmüller 1987, eq. 10)."""
    return 3.1884 + 9.1e-4 * temperature_c


@lru_cache(maxsize=64)
def _ice_loss_terms(temperature_c: float) -> tuple[float, float]:
    # the temperature-only parts of Matzler (2006) sec. 5.3, once per temperature
    tk = temperature_c + 273.15
    theta = 300.0 / tk - 1.0
    alpha = (0.00504 + 0.0062 * theta) * float(np.exp(-22.1 * theta))
    b1, b = 0.0207, 335.0
    beta_0 = (b1 / tk) * float(np.exp(b / tk)) / (float(np.exp(b / tk)) - 1.0) ** 2
    dbeta = float(np.exp(-9.963 + 0.0372 * (tk - 273.16)))
    return alpha, beta_0 + dbeta


def ice_imag(f: np.ndarray, temperature_c: float) -> np.ndarray:
    """Loss eps'' of pure ice, Mätzler (2006) 'Microwave dielectric properties of ice', §5.3."""
    alpha, beta = _ice_loss_terms(float(temperature_c))
    fg = f * 1e-9
    return alpha / fg + (beta + 1.16e-11 * fg**2) * fg


def _ice(f: np.ndarray, temperature_c: float) -> np.ndarray:
    return ice_real(temperature_c) - 1j * ice_imag(f, temperature_c)


def _dry_loss(f: np.ndarray, v_ice: float, temperature_c: float) -> np.ndarray:
    # Ulaby & Long (2014) sec. 4-6, Code 4.5: eps''_ds = 0.34 v_i eps''_ice / (1 - 0.42 v_i)^2
    return 0.34 * v_ice * ice_imag(f, temperature_c) / (1.0 - 0.42 * v_ice) ** 2


def _dry_snow(f: np.ndarray, eps_real: float, v_ice: float, temperature_c: float) -> np.ndarray:
    return eps_real - 1j * _dry_loss(f, v_ice, temperature_c)


@lru_cache(maxsize=64)
def _water_terms(t: float) -> tuple[float, float, float, float, float]:
    # the temperature-only parts of Meissner & Wentz (2004), once per temperature
    a = (5.7230, 2.2379e-2, -7.1237e-4, 5.0478, -7.0315e-2, 6.0059e-4,
         3.6143, 2.8841e-2, 1.3652e-1, 1.4825e-3, 2.4166e-4)
    eps_s = (37088.6 - 82.168 * t) / (421.854 + t)
    eps_1 = a[0] + a[1] * t + a[2] * t**2
    nu_1 = (45.0 + t) / (a[3] + a[4] * t + a[5] * t**2)
    eps_inf = a[6] + a[7] * t
    nu_2 = (45.0 + t) / (a[8] + a[9] * t + a[10] * t**2)
    return eps_s, eps_1, nu_1, eps_inf, nu_2


def water_debye(f: np.ndarray, temperature_c: float) -> np.ndarray:
    """Pure water, double Debye of Meissner & Wentz (2004, IEEE TGRS 42(9), eqs. 5-6)."""
    eps_s, eps_1, nu_1, eps_inf, nu_2 = _water_terms(float(temperature_c))
    fg = f * 1e-9
    # their e^{-i omega t} form eps_s/(1 - i f/nu); conjugated to our e^{+j omega t}
    relax_1 = (eps_s - eps_1) / (1 + 1j * fg / nu_1)
    relax_2 = (eps_1 - eps_inf) / (1 + 1j * fg / nu_2)
    return relax_1 + relax_2 + eps_inf


# -------------------------------------------------------------------- registry models
MODELS = Registry("snowprobe_widgets.materials", "dielectric model")

#: Default dry-snow model. Looyenga's mixing rule with eps_ice = 3.15 is the one recommended
#: for snow density/velocity work by Kotlyakov et al. (2017) and lies within the 3 % spread of
#: the empirical fits; it reaches solid ice exactly at 917 kg/m3.
DEFAULT_DRY_SNOW_MODEL = "looyenga"
#: Default wet-snow model. Tiuri et al. (1984) is calibrated at 0.5-1 GHz, the band of snow
#: GPR; the Hallikainen (1986) fits start at 3 GHz. CRIM ("crim") sits 25-30 % higher at 5 %.
DEFAULT_WET_SNOW_MODEL = "tiuri"


def _check_density(density_kg_m3: float) -> float:
    return check_range("density_kg_m3", density_kg_m3, 0.0, RHO_ICE_KG_M3, unit="kg/m3",
                       low_open=True)


#: Dry snow's eps' does not depend on frequency from about 1 MHz to at least 10 GHz
#: (Matzler 1996, abstract); its loss follows ice, Matzler (2006), from 10 MHz up.
_DRY_SNOW_VALID_HZ = (10e6, 10e9)


def _dry(name: str, source: str, eps_real: float, density: float, temperature_c: float,
         valid_hz: tuple[float, float] = _DRY_SNOW_VALID_HZ) -> Material:
    v_ice = density / RHO_ICE_KG_M3
    return Material(f"dry snow {density:g} kg/m3 ({name})", source, _dry_snow,
                    (float(eps_real), v_ice, float(temperature_c)), valid_hz=valid_hz,
                    model_name=f"dry-snow model {name!r} ({source.split(';')[0]})")


@MODELS.register("dry_snow:looyenga")
def _looyenga(density_kg_m3: float, temperature_c: float = -5.0) -> Material:
    """Looyenga (1965, Physica 31, 401) mixing: eps = [1 + v_i (eps_ice^(1/3) - 1)]^3."""
    v = density_kg_m3 / RHO_ICE_KG_M3
    eps = (1.0 + v * (3.15 ** (1 / 3) - 1.0)) ** 3
    return _dry("looyenga", "Looyenga 1965 mixing, eps_ice = 3.15; loss Ulaby & Long 2014 with "
                "Matzler 2006 ice; nominal 1 MHz-10 GHz", eps, density_kg_m3, temperature_c)


@MODELS.register("dry_snow:kovacs")
def _kovacs(density_kg_m3: float, temperature_c: float = -5.0) -> Material:
    """Kovacs, Gow & Morey (1995, CRST 23): eps = (1 + 0.845 rho)^2, rho in g/cm3."""
    eps = (1.0 + 0.845 * density_kg_m3 / 1000.0) ** 2
    return _dry("kovacs", "Kovacs, Gow & Morey 1995 (polar firn); loss Ulaby & Long 2014",
                eps, density_kg_m3, temperature_c)


@MODELS.register("dry_snow:tiuri")
def _tiuri_dry(density_kg_m3: float, temperature_c: float = -5.0) -> Material:
    """Tiuri et al. (1984, IEEE JOE 9(5)): eps = 1 + 1.7 rho + 0.7 rho^2, rho in g/cm3."""
    r = density_kg_m3 / 1000.0
    return _dry("tiuri", "Tiuri et al. 1984; nominal 0.5-12 GHz; loss Ulaby & Long 2014",
                1.0 + 1.7 * r + 0.7 * r**2, density_kg_m3, temperature_c, (0.5e9, 12e9))


@MODELS.register("dry_snow:matzler")
def _matzler_dry(density_kg_m3: float, temperature_c: float = -5.0) -> Material:
    """Mätzler (1996) as in Ulaby & Long (2014) Code 4.5 (v_i with rho_ice = 916.7)."""
    v = density_kg_m3 / 916.7
    eps = 1 + 1.4667 * v + 1.435 * v**3 if v <= 0.45 else (1 + 0.4759 * v) ** 3
    return _dry("matzler", "Matzler 1996 via Ulaby & Long 2014; nominal 1 MHz-10 GHz",
                eps, density_kg_m3, temperature_c)


def _check_lwc(density_kg_m3: float, lwc_percent: float) -> float:
    w = check_range("lwc_percent", lwc_percent, 0.0, MAX_LWC_PERCENT, unit="%")
    check_pore_water(density_kg_m3, w, RHO_ICE_KG_M3)
    return w


def _tiuri_wet_kernel(
    f: np.ndarray, rho_g: float, w: float, v_ice: float, t_c: float
) -> np.ndarray:
    ew = water_debye(f, 0.0)
    scale = 0.10 * w + 0.80 * w**2  # Tiuri et al. 1984, water-scaled form
    dry = 1 + 1.7 * rho_g + 0.7 * rho_g**2 - 1j * _dry_loss(f, v_ice, t_c)
    return dry + scale * ew


@MODELS.register("wet_snow:tiuri")
def _tiuri_wet(density_kg_m3: float, lwc_percent: float, temperature_c: float = 0.0) -> Material:
    """Tiuri et al. (1984): eps = eps_dry + (0.10 W + 0.80 W^2) eps_water, W volume fraction."""
    w = lwc_percent / 100.0
    return Material(f"wet snow {density_kg_m3:g} kg/m3, {lwc_percent:g} % water (tiuri)",
                    "Tiuri et al. 1984 (water-scaled form), water Meissner & Wentz 2004; "
                    "nominal 0.5-1 GHz, W <= 6 %", _tiuri_wet_kernel,
                    (density_kg_m3 / 1000.0, w, density_kg_m3 / RHO_ICE_KG_M3, 0.0),
                    valid_hz=(0.5e9, 1e9), model_name="wet-snow model 'tiuri' (Tiuri et al. 1984)")


def _crim_kernel(f: np.ndarray, v_ice: float, w: float, t_c: float) -> np.ndarray:
    n_ice = np.sqrt(_ice(f, t_c))
    n_w = np.sqrt(water_debye(f, 0.0))
    n = (1.0 - v_ice - w) + v_ice * n_ice + w * n_w
    return n * n


@MODELS.register("wet_snow:crim")
def _crim_wet(density_kg_m3: float, lwc_percent: float, temperature_c: float = 0.0) -> Material:
    """Three-phase CRIM: sqrt(eps) = (1 - v_i - W) + v_i sqrt(eps_ice) + W sqrt(eps_w)."""
    return Material(f"wet snow {density_kg_m3:g} kg/m3, {lwc_percent:g} % water (crim)",
                    "CRIM (Birchak et al. 1974; used for snow by Bradford et al. 2009), ice "
                    "Matzler 2006, water Meissner & Wentz 2004", _crim_kernel,
                    (density_kg_m3 / RHO_ICE_KG_M3, lwc_percent / 100.0, 0.0),
                    valid_hz=(10e6, FREQ_MAX_HZ), model_name="wet-snow model 'crim'")


def dry_snow_models() -> tuple[str, ...]:
    """Names of the available dry-snow models (built in and plugins)."""
    return tuple(n.split(":", 1)[1] for n in MODELS.names("dry_snow:"))


def wet_snow_models() -> tuple[str, ...]:
    """Names of the available wet-snow models (built in and plugins)."""
    return tuple(n.split(":", 1)[1] for n in MODELS.names("wet_snow:"))


# ----------------------------------------------------------------- public constructors
def air() -> Material:
    """Air, taken as vacuum: eps = 1 (its 1.0005 is negligible; common practice for GPR)."""
    return Material("air", "vacuum value (common practice)", _constant, (1.0, 0.0))


def dry_snow(density_kg_m3: float, *, model: str | None = None,
             temperature_c: float = -5.0) -> Material:
    """Dry snow of a given density.

    Parameters
    ----------
    density_kg_m3 : float
        Snow density, kg/m3, in (0, 917] (917: solid ice).
    model : str, optional
        One of :func:`dry_snow_models` (default :data:`DEFAULT_DRY_SNOW_MODEL`).
    temperature_c : float
        Snow temperature in [-50, 0] degC (:data:`TEMPERATURE_RANGE_C`; enters the ice
        loss only).
    """
    d = _check_density(density_kg_m3)
    t = check_range("temperature_c", temperature_c, *TEMPERATURE_RANGE_C, unit="degC")
    return MODELS.get(f"dry_snow:{model or DEFAULT_DRY_SNOW_MODEL}")(d, t)


def wet_snow(density_kg_m3: float, lwc_percent: float, *, model: str | None = None) -> Material:
    """Wet snow at 0 degC.

    Parameters
    ----------
    density_kg_m3 : float
        DRY density (ice and air part only), kg/m3, in (0, 917].
    lwc_percent : float
        Liquid water content, % by volume, in [0, 12] (the range of the published
        calibrations, Hallikainen et al. 1986: 1-12 %), and ice + water <= 100 %.
    model : str, optional
        One of :func:`wet_snow_models` (default :data:`DEFAULT_WET_SNOW_MODEL`).
    """
    d = _check_density(density_kg_m3)
    w = _check_lwc(d, lwc_percent)
    return MODELS.get(f"wet_snow:{model or DEFAULT_WET_SNOW_MODEL}")(d, w)


def _joined(f: np.ndarray, dry: Material, wet: Material, wet_at_zero: Material) -> np.ndarray:
    return (dry.kernel(f, *dry.params) + wet.kernel(f, *wet.params)
            - wet_at_zero.kernel(f, *wet_at_zero.params))


def _joined_name(dry: Material, wet: Material) -> str:
    wet_name, dry_name = wet.model_name or wet.name, dry.model_name or dry.name
    inside = dry.valid_hz[0] <= wet.valid_hz[0] and wet.valid_hz[1] <= dry.valid_hz[1]
    return wet_name if inside else f"{wet_name} with the {dry_name}"


def snow(density_kg_m3: float, lwc_percent: float = 0.0, *, dry_model: str | None = None,
         wet_model: str | None = None, temperature_c: float = -5.0) -> Material:
    """The material of a snow layer: the one place that makes it (scenes call this).

    Dry snow (:func:`dry_snow`) when ``lwc_percent == 0``. With water, the dry model plus
    the wet model's water increment, ``eps_dry(rho, T) + eps_wet(rho, W) - eps_wet(rho, 0)``,
    so that the wet model's dry limit is the dry model and a trace of water draws no
    spurious reflection. For Tiuri et al. (1984) this is their own form (dry snow plus a
    water term, REFERENCES 3a'); for other wet models it is a join of ours. The dry part
    keeps ``temperature_c`` (a layer holding water is at 0 degC in nature; the dry part's
    ice loss is negligible beside the water's, and keeping it makes the join continuous).

    Parameters
    ----------
    density_kg_m3 : float
        Dry density, kg/m3, in (0, 917].
    lwc_percent : float
        Liquid water, % by volume, in [0, 12].
    dry_model, wet_model : str, optional
        Model names (:func:`dry_snow_models`, :func:`wet_snow_models`).
    temperature_c : float
        Snow temperature, degC, in [-50, 0] (ice loss).
    """
    dry = dry_snow(density_kg_m3, model=dry_model, temperature_c=temperature_c)
    if lwc_percent == 0:
        return dry
    wet = wet_snow(density_kg_m3, lwc_percent, model=wet_model)
    wet_at_zero = wet_snow(density_kg_m3, 0.0, model=wet_model)
    dry_key = dry_model or DEFAULT_DRY_SNOW_MODEL
    wet_key = wet_model or DEFAULT_WET_SNOW_MODEL
    return Material(
        f"wet snow {density_kg_m3:g} kg/m3, {lwc_percent:g} % water ({dry_key} + {wet_key})",
        f"{dry.source}; water term of {wet.source}", _joined, (dry, wet, wet_at_zero),
        freq_min_hz=max(dry.freq_min_hz, wet.freq_min_hz),
        freq_max_hz=min(dry.freq_max_hz, wet.freq_max_hz),
        valid_hz=(max(dry.valid_hz[0], wet.valid_hz[0]), min(dry.valid_hz[1], wet.valid_hz[1])),
        model_name=_joined_name(dry, wet))


def ice(temperature_c: float = -5.0) -> Material:
    """Pure ice: eps' from Mätzler & Wegmüller (1987), eps'' from Mätzler (2006)."""
    t = check_range("temperature_c", temperature_c, *TEMPERATURE_RANGE_C, unit="degC")
    return Material(f"ice {t:g} degC", "Matzler & Wegmuller 1987 eq. 10; Matzler 2006 loss; "
                    "nominal 10 MHz-3 THz", _ice, (t,), valid_hz=(10e6, FREQ_MAX_HZ),
                    model_name="ice model (Matzler 2006)")


def water(temperature_c: float = 0.0) -> Material:
    """Liquid pure water, double Debye of Meissner & Wentz (2004); nominal 1-400 GHz, fine below."""
    t = check_range("temperature_c", temperature_c, 0.0, 40.0, unit="degC")
    return Material(f"water {t:g} degC", "Meissner & Wentz 2004 double Debye", water_debye, (t,))


def _cole_cole(f: np.ndarray, eps_inf: float, poles: tuple, sigma_i: float) -> np.ndarray:
    w = 2 * np.pi * f
    eps = np.full(f.shape, eps_inf, dtype=complex)
    for d_eps, tau, alpha in poles:
        if d_eps:
            eps += d_eps / (1 + (1j * w * tau) ** (1 - alpha))
    return eps + sigma_i / (1j * w * EPS0_F_M)


#: Gabriel, Lau & Gabriel (1996), Phys. Med. Biol. 41, 2271, Table 1: eps_inf, poles
#: (delta_eps, tau_s, alpha), sigma_i (S/m).
TISSUES: dict[str, tuple[float, tuple, float]] = {
    "skin": (4.0, ((32.0, 7.234e-12, 0.0), (1100.0, 32.481e-9, 0.20), (0.0, 159.155e-6, 0.20),
                   (0.0, 15.915e-3, 0.20)), 0.0002),
    "fat": (2.5, ((3.0, 7.958e-12, 0.20), (15.0, 15.915e-9, 0.10), (3.3e4, 159.155e-6, 0.05),
                  (1.0e7, 7.958e-3, 0.01)), 0.010),
    "muscle": (4.0, ((50.0, 7.234e-12, 0.10), (7000.0, 353.678e-9, 0.10),
                     (1.2e6, 318.310e-6, 0.10), (2.5e7, 2.274e-3, 0.0)), 0.200),
}


def tissue(name: str) -> Material:
    """Body tissue at 37 degC, four-pole Cole-Cole of Gabriel, Lau & Gabriel (1996), Table 1.

    Parameters
    ----------
    name : {"skin", "fat", "muscle"}
        Dry skin, not-infiltrated fat, muscle. Fitted from 10 Hz to 20 GHz.
    """
    check_choice("name", name, tuple(TISSUES))
    eps_inf, poles, sigma = TISSUES[name]
    return Material(name, "Gabriel, Lau & Gabriel 1996 Table 1 (4-pole Cole-Cole); "
                    "nominal 10 Hz-20 GHz", _cole_cole, (eps_inf, poles, sigma))


def clothing() -> Material:
    """Dry winter clothing: eps' = 1.5, sigma = 1e-4 S/m.

    Dry textiles and down lie near eps' 1.2-2 (value from memory, REFERENCES.md tissue
    caveats); a mid value is used.
    """
    return Material("clothing", "dry textile, eps' 1.5 (from memory: 1.2-2)", _constant,
                    (1.5, 1e-4))


def soil(volumetric_water_fraction: float) -> Material:
    """Mineral soil from Topp, Davis & Annan (1980): K = 3.03 + 9.3 t + 146 t^2 - 76.7 t^3.

    The fit is frequency independent (TDR band, about 20 MHz-1 GHz); a DC conductivity of
    0.001-0.03 S/m growing with water (common practice for moist soils) adds loss.

    Parameters
    ----------
    volumetric_water_fraction : float
        Volumetric water content, m3/m3, in [0, 0.55] (Topp's calibration range).
    """
    t = check_range("volumetric_water_fraction", volumetric_water_fraction, 0.0, 0.55,
                    unit="m3/m3")
    k = 3.03 + 9.3 * t + 146.0 * t**2 - 76.7 * t**3
    sigma = 0.001 + 0.05 * t  # common practice order of magnitude, not from Topp
    return Material(f"soil {t:g} m3/m3 water", "Topp, Davis & Annan 1980; nominal 20 MHz-1 GHz",
                    _constant, (k, sigma), valid_hz=(20e6, 1e9),
                    model_name="soil model (Topp, Davis & Annan 1980)")


def rock(permittivity: float, conductivity_s_m: float = 0.0) -> Material:
    """Non-dispersive medium: constant eps' and DC conductivity (rock, or any frozen medium)."""
    e = check_range("permittivity", permittivity, 1.0, 100.0)
    s = check_range("conductivity_s_m", conductivity_s_m, 0.0, 10.0, unit="S/m")
    return Material(f"rock eps {e:g}, {s:g} S/m", "constant permittivity and conductivity",
                    _constant, (e, s))


def metal() -> Material:
    """Metal (skis, shovel blades): a perfect electric conductor in layered calculations."""
    return Material("metal", "perfect electric conductor", _constant, (1.0, 1e7),
                    perfect_conductor=True)




# --------------------------------------------------------------------------- layer models
#: Dielectric models a scenario layer can name, ``model(density_kg_m3, lwc_percent,
#: temperature_c) -> Material``; plugins add entries through the entry-point group
#: ``snowprobe_widgets.layer_models``. Pairs ``"<dry>+<wet>"`` of :data:`MODELS` are
#: accepted besides (see :func:`layer_model_names`).
LAYER_MODELS = Registry("snowprobe_widgets.layer_models", "layer dielectric model")
#: The model of a layer that names none: :func:`snow` with the default dry and wet models.
DEFAULT_LAYER_MODEL = "snow"


@LAYER_MODELS.register("snow")
def _layer_snow(density_kg_m3: float, lwc_percent: float, temperature_c: float) -> Material:
    """Snow: the default dry model, with water the default wet model's water term."""
    return snow(density_kg_m3, lwc_percent, temperature_c=temperature_c)


@LAYER_MODELS.register("ice")
def _layer_ice(density_kg_m3: float, lwc_percent: float, temperature_c: float) -> Material:
    """Solid ice (:func:`ice`) whatever the layer's density; it holds no liquid water."""
    if lwc_percent != 0:
        raise ValueError(f"lwc_percent = {lwc_percent:g} % is outside the allowed range "
                         "[0, 0] % for dielectric_model = 'ice' (solid ice holds no liquid "
                         "water)")
    return ice(temperature_c)


def _pairs() -> tuple[str, ...]:
    return tuple(f"{d}+{w}" for d in dry_snow_models() for w in wet_snow_models())


def layer_model_names() -> tuple[str, ...]:
    """Names a layer's ``dielectric_model`` accepts: :data:`LAYER_MODELS` entries, then
    every ``"<dry>+<wet>"`` pair of :func:`dry_snow_models` and :func:`wet_snow_models`."""
    return LAYER_MODELS.names() + tuple(p for p in _pairs() if p not in LAYER_MODELS)


def layer_material(model: str, density_kg_m3: float, lwc_percent: float = 0.0, *,
                   temperature_c: float = -5.0) -> Material:
    """The material of a layer of dielectric model ``model`` (a :func:`layer_model_names`
    entry); ``"snow"`` is :func:`snow` with its default models.

    Raises
    ------
    ValueError
        If ``model`` is not a known name (the message lists the known ones).
    """
    if model in LAYER_MODELS:
        return LAYER_MODELS.get(model)(density_kg_m3, lwc_percent, temperature_c)
    dry, plus, wet = str(model).partition("+")
    if not (plus and f"dry_snow:{dry}" in MODELS and f"wet_snow:{wet}" in MODELS):
        check_choice("dielectric_model", model, layer_model_names())
    return snow(density_kg_m3, lwc_percent, dry_model=dry, wet_model=wet,
                temperature_c=temperature_c)
