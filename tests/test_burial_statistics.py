"""Survival tables and burial-depth distributions against the published numbers.

Each check names the publication and the statement it reproduces (the provenance of every
table point is in snowprobe_widgets.burial_statistics). These are checks of our digitised
tables against the sources, not of a model.
"""

from __future__ import annotations

import numpy as np
import pytest

from snowprobe_widgets.burial_statistics import (
    DEPTH_DISTRIBUTIONS,
    SURVIVAL_TABLES,
    SurvivalTable,
)
from snowprobe_widgets.plan import survival_curves

RAUCH = "Rauch et al. 2024 (Switzerland 1981-2020)"
FALK = "Falk et al. 1994 (Switzerland 1981-1991)"
PROCTER = "Procter et al. 2016 (Austria and Switzerland 2005-2013)"


def test_curves_are_named_with_their_source_and_are_survival_functions():
    curves = survival_curves()
    assert set(curves) == set(SURVIVAL_TABLES)
    for name, (minutes, fraction) in curves.items():
        assert any(word in name for word in ("Falk", "Rauch", "Procter", "Haegeli"))
        assert any(str(y) in name for y in (1994, 2011, 2016, 2024))
        assert minutes[0] == 0.0 and fraction[0] == 1.0
        assert np.all(np.diff(minutes) > 0) and np.all(np.diff(fraction) <= 0)


def test_rauch_2024_91_percent_at_10_minutes():
    # Rauch et al. 2024, abstract: survival 91 % (95 % CI 80-100 %) for rescue within 10 min
    value, interpolated = SURVIVAL_TABLES[RAUCH].at(10.0)
    assert float(value) == pytest.approx(0.91)
    assert not bool(interpolated)
    # the >90 % phase ends at 10 min (Rauch 2024 press text: shrunk from 18 to 10 min)
    assert float(SURVIVAL_TABLES[RAUCH].at(11.0)[0]) < 0.90


def test_falk_1994_92_percent_at_15_and_30_percent_at_35_minutes():
    # Falk, Brugger & Adler-Kastner 1994, Nature 368:21: "At 15 min the survival
    # probability (92%) ... drops precipitously to only 30% at 35 min"
    table = SURVIVAL_TABLES[FALK]
    assert float(table.at(15.0)[0]) == pytest.approx(0.92)
    assert float(table.at(35.0)[0]) == pytest.approx(0.30)
    # the steep drop lies between those two points: the slope there is the steepest
    m, f = survival_curves()[FALK]
    slopes = np.diff(f) / np.diff(m)
    assert np.argmin(slopes) == list(m).index(15.0)


def test_procter_2016_second_drop_to_25_28_percent_at_35_minutes():
    # Procter et al. 2016, Resuscitation 105:173: "a second drop to 25-28% at ca. 35 min"
    value, interpolated = SURVIVAL_TABLES[PROCTER].at(35.0)
    assert 0.25 <= float(value) <= 0.28
    assert not bool(interpolated)


def test_interpolated_values_are_marked_and_nothing_is_extrapolated():
    table = SURVIVAL_TABLES[RAUCH]
    values, interpolated = table.at([0.0, 5.0, 10.0, 60.0, 130.0])
    assert list(interpolated) == [False, True, False, True, False]
    assert values[1] == pytest.approx(0.955)  # halfway between 1.0 and 0.91
    with pytest.raises(ValueError, match=r"burial time = 131 min is outside"):
        table.at(131.0)
    with pytest.raises(ValueError, match="outside"):
        table.at(-1.0)


def test_a_malformed_table_is_refused():
    with pytest.raises(ValueError, match="never increase"):
        SurvivalTable("x", "y", (0.0, 10.0), (0.5, 0.9), ("a", "b"))
    with pytest.raises(ValueError, match="start at 0"):
        SurvivalTable("x", "y", (1.0, 10.0), (1.0, 0.9), ("a", "b"))


def test_falk_depth_distribution_has_the_published_mean_and_sd():
    # Falk et al. 1994: mean head depth 105 +- 85 cm (s.d.); our log-normal keeps both
    dist = DEPTH_DISTRIBUTIONS["all burials (Falk et al. 1994)"]
    assert dist.mean_m == pytest.approx(1.05, rel=1e-9)
    var = dist.median_m**2 * np.exp(dist.log_sd**2) * (np.exp(dist.log_sd**2) - 1)
    assert np.sqrt(var) == pytest.approx(0.85, rel=1e-9)


def test_organised_rescue_median_is_1_25_m():
    # Hohlrieder et al. 2008: median burial depth 1.25 m in organised rescue
    dist = DEPTH_DISTRIBUTIONS["organised rescue (Hohlrieder et al. 2008)"]
    assert float(dist.cdf(1.25)) == pytest.approx(0.5)


def test_depth_weights_add_up_with_the_mass_beyond():
    dist = DEPTH_DISTRIBUTIONS["organised rescue (Hohlrieder et al. 2008)"]
    grid = np.array([0.25, 0.5, 1.0, 2.0, 4.0])
    w, deeper = dist.weights(grid)
    assert np.all(w > 0)
    assert w.sum() + deeper == pytest.approx(1.0)
    # the mass beyond is the tail past the last bin edge (4 m + half the last step)
    assert deeper == pytest.approx(1 - float(dist.cdf(5.0)))
