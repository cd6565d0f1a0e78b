"""Published avalanche-burial statistics: survival against burial time, and burial depth.

Survival tables
---------------
Each table is a short list of points (burial duration in minutes, fraction surviving),
digitised by us from what the source states in its text or from a reading of its figure,
with the provenance of every point kept beside it. Between points the curve is a straight
line, and every value read off such a line is *interpolated* (:meth:`SurvivalTable.at`
says so). A table ends at its last sourced point: nothing is extrapolated beyond it.

==================================================  =======  ========  ================
table                                               minutes  fraction  provenance
==================================================  =======  ========  ================
Falk et al. 1994 (Switzerland 1981-1991)            0        1.00      definition S(0)=1
  Nature 368:21                                     15       0.92      stated in the text
                                                    35       0.30      stated in the text
                                                    90       0.27      figure, secondary
                                                    120      0.20      figure, secondary
                                                    130      0.03      figure, secondary
Rauch et al. 2024 (Switzerland 1981-2020)           0        1.00      definition S(0)=1
  JAMA Netw Open 7(9):e2435253                      10       0.91      stated (abstract)
                                                    30       0.30      figure, secondary
                                                    130      0.073     stated (press text)
Procter et al. 2016 (Austria + Switzerland          0        1.00      definition S(0)=1
  2005-2013), Resuscitation 105:173-176             35       0.265     stated 25-28 %, mid
Haegeli et al. 2011, Canada 1980-2005               0        1.00      definition S(0)=1
  CMAJ 183(7):789-795                               5        0.90      class <=10 min
                                                    15.5     0.36      class 11-20 min
Haegeli et al. 2011, Switzerland 1980-2005          0        1.00      definition S(0)=1
                                                    5        0.94      class <=10 min
                                                    15.5     0.71      class 11-20 min
==================================================  =======  ========  ================

Where the points come from:

* *stated*: the number is written in the source (Falk et al. 1994, letter text: "At 15 min the
  survival probability (92%) ... only 30% at 35 min"; Rauch et al. 2024, abstract: "91% ...
  for rescue during the first 10 minutes"; Procter et al. 2016, abstract: "a second drop to
  25-28% at ca. 35 min", entered as the middle of that range; Rauch et al. 2024 as reported by
  its authors' institute (Eurac Research press text, 2024): survival of burials longer than
  130 min 7.3 %, entered at 130 min).
* *figure, secondary*: read off the published figure by someone else and printed as numbers:
  the Falk 1994 points at 90, 120 and 130 min as tabulated by medicalalgorithms.com ("Model
  of Falk et al."); the Rauch 2024 point at 30 min as read by the safeback.no article
  "Interpreting the updated avalanche survival curve" ("by 30 minutes ... reduced down to
  30%"). We did not read these figures ourselves; treat them as approximate.
* *class*: Haegeli et al. 2011 proportions of survivors among people extricated within a
  burial-time class, as reported by the Toronto Star (2011-03-21) from the paper: Canada 90 %
  (<=10 min) and 36 % (11-20 min), Switzerland 94 % and 71 %; we place each at the middle of
  its class (5 and 15.5 min, our choice). The abstract states only that the Canadian curve
  drops earlier and faster.
* *definition*: a survival function is 1 at zero burial time.

No value here is read from a figure from memory. The Procter 2016 table has no point between
0 and 35 min: the published curve has "a rapid initial drop" there, so the straight line
between those points overstates survival in that range and is marked interpolated.

Burial depth
------------
Falk et al. 1994 give the mean head depth of 422 Swiss burials as 105 +- 85 cm (s.d.);
Hohlrieder et al. 2008 (High Alt. Med. Biol. 9(3):229-233) the median depth of 109 victims
found by organised rescue in Tyrol as 1.25 m. Neither gives the shape of the distribution;
depth cannot be negative, so we take a log-normal (our assumption): for Falk its two
parameters match the stated mean and s.d.; for Hohlrieder the median is matched and the
log-s.d. is taken from the Falk fit (our assumption, stated wherever it is used).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special

from ._validate import check_choice, check_range

__all__ = [
    "SurvivalTable",
    "SURVIVAL_TABLES",
    "DEFAULT_SURVIVAL_TABLE",
    "survival_curves",
    "DepthDistribution",
    "DEPTH_DISTRIBUTIONS",
    "DEFAULT_DEPTH_DISTRIBUTION",
    "depth_distribution",
]

_DEF = "definition: a survival function is 1 at zero burial time"


@dataclass(frozen=True)
class SurvivalTable:
    """Survival against burial duration, as digitised points with their provenance.

    Attributes
    ----------
    name : str
        Authors, year and the population ("Rauch et al. 2024 (Switzerland 1981-2020)").
    citation : str
        The publication.
    minutes : tuple of float
        Burial durations of the points, min, increasing, from 0.
    fraction : tuple of float
        Fraction surviving at each point, in [0, 1], non-increasing.
    provenance : tuple of str
        Where each point comes from (see the module docstring).
    """

    name: str
    citation: str
    minutes: tuple[float, ...]
    fraction: tuple[float, ...]
    provenance: tuple[str, ...]

    def __post_init__(self) -> None:
        m = np.asarray(self.minutes, float)
        f = np.asarray(self.fraction, float)
        if not (m.size == f.size == len(self.provenance) >= 2):
            raise ValueError(f"survival table {self.name!r}: minutes, fraction and provenance "
                             "must have the same length, at least 2")
        if m[0] != 0.0 or np.any(np.diff(m) <= 0):
            raise ValueError(f"survival table {self.name!r}: minutes must start at 0 and "
                             "increase")
        if np.any((f < 0) | (f > 1)) or np.any(np.diff(f) > 0):
            raise ValueError(f"survival table {self.name!r}: fractions must lie in [0, 1] "
                             "and never increase")

    @property
    def last_minute(self) -> float:
        """Burial duration of the last sourced point, min; the table says nothing beyond."""
        return float(self.minutes[-1])

    def at(self, minutes: object) -> tuple[np.ndarray, np.ndarray]:
        """Fraction surviving at ``minutes`` (straight lines between the points).

        Returns
        -------
        fraction, interpolated : ndarray, ndarray of bool
            Same shape as ``minutes``; ``interpolated`` is False only on a sourced point.

        Raises
        ------
        ValueError
            If a time is negative or beyond :attr:`last_minute`.
        """
        t = np.asarray(minutes, float)
        if t.size and (not np.all(np.isfinite(t)) or t.min() < 0
                       or t.max() > self.last_minute + 1e-9):
            bad = t[~np.isfinite(t) | (t < 0) | (t > self.last_minute + 1e-9)].flat[0]
            raise ValueError(f"burial time = {bad:g} min is outside the {self.name} table; "
                             f"allowed range [0, {self.last_minute:g}] min")
        m = np.asarray(self.minutes)
        value = np.interp(t, m, np.asarray(self.fraction))
        on_point = np.isclose(t[..., None], m, atol=1e-9, rtol=0).any(axis=-1)
        return value, ~on_point


SURVIVAL_TABLES: dict[str, SurvivalTable] = {t.name: t for t in (
    SurvivalTable(
        "Rauch et al. 2024 (Switzerland 1981-2020)",
        "Rauch S, Brugger H, Falk M, et al. Avalanche survival rates in Switzerland, "
        "1981-2020. JAMA Netw Open 2024;7(9):e2435253",
        (0.0, 10.0, 30.0, 130.0), (1.0, 0.91, 0.30, 0.073),
        (_DEF, "stated in the abstract (91 % for rescue within 10 min)",
         "figure, read by a secondary source (safeback.no: about 30 % by 30 min)",
         "stated by the authors' institute: 7.3 % survival of burials over 130 min")),
    SurvivalTable(
        "Falk et al. 1994 (Switzerland 1981-1991)",
        "Falk M, Brugger H, Adler-Kastner L. Avalanche survival chances. Nature "
        "1994;368:21",
        (0.0, 15.0, 35.0, 90.0, 120.0, 130.0), (1.0, 0.92, 0.30, 0.27, 0.20, 0.03),
        (_DEF, "stated in the text (92 % at 15 min)", "stated in the text (30 % at 35 min)",
         "figure, read by a secondary source (medicalalgorithms.com)",
         "figure, read by a secondary source (medicalalgorithms.com)",
         "figure, read by a secondary source (medicalalgorithms.com)")),
    SurvivalTable(
        "Procter et al. 2016 (Austria and Switzerland 2005-2013)",
        "Procter E, Strapazzon G, Dal Cappello T, et al. Burial duration, depth and air "
        "pocket explain avalanche survival patterns in Austria and Switzerland. "
        "Resuscitation 2016;105:173-176",
        (0.0, 35.0), (1.0, 0.265),
        (_DEF, "stated in the abstract: second drop to 25-28 % at about 35 min (middle of "
         "the range)")),
    SurvivalTable(
        "Haegeli et al. 2011 (Canada 1980-2005)",
        "Haegeli P, Falk M, Brugger H, Etter H-J, Boyd J. Comparison of avalanche survival "
        "patterns in Canada and Switzerland. CMAJ 2011;183(7):789-795",
        (0.0, 5.0, 15.5), (1.0, 0.90, 0.36),
        (_DEF, "survivors among those extricated within 10 min (as reported by the Toronto "
         "Star, 2011), at the class middle", "survivors among those extricated in 11-20 "
         "min (same report), at the class middle")),
    SurvivalTable(
        "Haegeli et al. 2011 (Switzerland 1980-2005)",
        "Haegeli P, Falk M, Brugger H, Etter H-J, Boyd J. Comparison of avalanche survival "
        "patterns in Canada and Switzerland. CMAJ 2011;183(7):789-795",
        (0.0, 5.0, 15.5), (1.0, 0.94, 0.71),
        (_DEF, "survivors among those extricated within 10 min (as reported by the Toronto "
         "Star, 2011), at the class middle", "survivors among those extricated in 11-20 "
         "min (same report), at the class middle")),
)}

#: The table used unless another is chosen: the most recent, largest data set.
DEFAULT_SURVIVAL_TABLE = "Rauch et al. 2024 (Switzerland 1981-2020)"


def survival_curves() -> dict[str, tuple[np.ndarray, np.ndarray]]:
    """Published survival-versus-burial-time curves as point tables.

    Returns
    -------
    dict
        Curve name (authors, year, population) -> ``(minutes, surviving_fraction)``, two
        float arrays of the digitised points. Sources and the provenance of every point:
        the module docstring of :mod:`snowprobe_widgets.burial_statistics` and
        :data:`SURVIVAL_TABLES`.
    """
    return {name: (np.array(t.minutes, float), np.array(t.fraction, float))
            for name, t in SURVIVAL_TABLES.items()}


# --------------------------------------------------------------------------- depth
@dataclass(frozen=True)
class DepthDistribution:
    """A log-normal distribution of burial depth (depth of the top of the body).

    Attributes
    ----------
    name : str
    median_m : float
        Median depth, m.
    log_sd : float
        Standard deviation of ln(depth).
    source : str
        What is published and what is our assumption.
    """

    name: str
    median_m: float
    log_sd: float
    source: str

    def __post_init__(self) -> None:
        check_range("median_m", self.median_m, 0.05, 10.0, unit="m")
        check_range("log_sd", self.log_sd, 0.0, 3.0, low_open=True)

    @property
    def mean_m(self) -> float:
        """Mean depth, m."""
        return self.median_m * math.exp(0.5 * self.log_sd**2)

    def cdf(self, depth_m: object) -> np.ndarray:
        """Probability that a burial is shallower than ``depth_m``."""
        d = np.maximum(np.asarray(depth_m, float), 1e-12)
        return 0.5 * special.erfc(-np.log(d / self.median_m) / (self.log_sd * math.sqrt(2)))

    def weights(self, depth_m: np.ndarray) -> tuple[np.ndarray, float]:
        """Probability mass of each depth of an increasing grid, and the mass beyond it.

        Each grid depth takes the mass between the midpoints to its neighbours (the first
        from 0 m). Returns ``(weights, mass_deeper)``; they add up to 1.
        """
        d = np.asarray(depth_m, float)
        edges = np.concatenate([[0.0], 0.5 * (d[1:] + d[:-1]), [d[-1] + 0.5 * (
            d[-1] - d[-2]) if d.size > 1 else d[-1]]])
        c = self.cdf(edges)
        return np.diff(c), float(1.0 - c[-1])


def _lognormal_from_mean_sd(mean: float, sd: float) -> tuple[float, float]:
    s2 = math.log(1.0 + (sd / mean) ** 2)
    return mean * math.exp(-0.5 * s2), math.sqrt(s2)


_FALK_MEDIAN, _FALK_LOG_SD = _lognormal_from_mean_sd(1.05, 0.85)

DEPTH_DISTRIBUTIONS: dict[str, DepthDistribution] = {d.name: d for d in (
    DepthDistribution(
        "all burials (Falk et al. 1994)", _FALK_MEDIAN, _FALK_LOG_SD,
        "Falk et al. 1994 (Nature 368:21): mean head depth 105 +- 85 cm (s.d.), 422 Swiss "
        "burials; log-normal shape with that mean and s.d. is our assumption"),
    DepthDistribution(
        "organised rescue (Hohlrieder et al. 2008)", 1.25, _FALK_LOG_SD,
        "Hohlrieder et al. 2008 (High Alt. Med. Biol. 9(3):229-233): median 1.25 m, 109 "
        "burials found by organised rescue; log-normal shape and the spread of the Falk "
        "1994 fit are our assumptions"),
)}

#: The distribution used unless another is chosen: organised rescue, who would run a radar.
DEFAULT_DEPTH_DISTRIBUTION = "organised rescue (Hohlrieder et al. 2008)"


def depth_distribution(name: str) -> DepthDistribution:
    """The named burial-depth distribution (one of :data:`DEPTH_DISTRIBUTIONS`)."""
    return DEPTH_DISTRIBUTIONS[check_choice("depth distribution", name,
                                            tuple(DEPTH_DISTRIBUTIONS))]
