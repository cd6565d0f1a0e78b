"""Radargram exports for other tools: xarray, CSV, and the notebook summaries."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

from snowprobe_widgets import link_budget, simulate
from snowprobe_widgets.processing import ProcessingChain
from snowprobe_widgets.scene import Scenario


@pytest.fixture(scope="module")
def rg():
    s = Scenario.default()
    return ProcessingChain.for_radar(s.radar).apply(simulate(s))


def test_to_xarray_dims_coords_units_and_scenario(rg) -> None:
    da = rg.to_xarray()
    assert da.dims == ("time_s", "position_m") and da.name == "amplitude"
    np.testing.assert_array_equal(da.to_numpy(), rg.data)
    np.testing.assert_array_equal(da["time_s"].to_numpy(), rg.time_s)
    np.testing.assert_array_equal(da["position_m"].to_numpy(), rg.position_m)
    assert da["time_s"].attrs["units"] == "s" and da["position_m"].attrs["units"] == "m"
    assert Scenario.from_json(da.attrs["scenario_json"]) == rg.scenario
    steps = [r["step"] for r in json.loads(da.attrs["processing_json"])]
    assert steps == [r.step for r in rg.history] and steps


def test_to_csv_reads_back_with_pandas_and_no_options(rg, tmp_path) -> None:
    path = tmp_path / "section.csv"
    rg.to_csv(path)
    table = pd.read_csv(path)
    assert table.shape == (rg.data.shape[0], rg.data.shape[1] + 1)
    assert table.columns[0] == "time_ns"
    np.testing.assert_allclose(table.columns[1:].astype(float), rg.position_m, atol=1e-9)
    np.testing.assert_allclose(table["time_ns"], rg.time_s * 1e9, rtol=1e-8)
    np.testing.assert_allclose(table.to_numpy()[:, 1:], rg.data, rtol=1e-8, atol=1e-15)


def test_notebook_summaries_are_short_and_readable(rg) -> None:
    text = rg._repr_html_()
    assert "201 traces" in text and "512 samples" in text and "ski tourer" in text
    s = rg.scenario
    assert "Scenario shallow_dry_powder" in s._repr_html_() and "800 MHz" in s._repr_html_()
    lb = link_budget(s)
    html = lb._repr_html_()
    assert "likely visible" in html and "echo-to-noise ratio" in html
    for summary in (text, s._repr_html_(), html):
        assert len(summary) < 2000
