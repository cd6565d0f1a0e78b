"""Monte Carlo sweeps: seeds and executors, checks before work, summaries, cancel, resume.

Statistical checks run on the demo scene with the receiver noise raised to -30 dBm (the
shipped demo radar has a 112 dB system performance: its person is found at any depth and
wetness the demo snowpack allows, which would make a flat map). Sizes are small so the
file runs in about a minute on two loaded cores.
"""

from __future__ import annotations

import dataclasses
import json
import threading

import numpy as np
import pytest
import xarray as xr
from scipy.stats import binomtest

import snowprobe_widgets
from snowprobe_widgets import heap, sweeps
from snowprobe_widgets.launcher import main as snowprobe_main
from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.sweep_spec import spec_to_json
from snowprobe_widgets.sweeps import Uniform, roc, uncertainty_preset

DEPTH = "persons[0].depth_m"
WET = "snowpack.layers[*].lwc_percent"


def _noisy_demo() -> Scenario:
    base = Scenario.example("shallow_dry_powder")
    return dataclasses.replace(base, radar=dataclasses.replace(base.radar,
                                                               noise_floor_dbm=-30.0))


@pytest.fixture(scope="module")
def small():
    """A small complete sweep, in-process: 2 depths x 3 realizations, dry-debris preset."""
    base = Scenario.example("shallow_dry_powder")
    vary = {DEPTH: [0.4, 1.2]}
    kwargs = dict(uncertain=uncertainty_preset("typical dry debris", list(vary)),
                  realizations=3, seed=7)
    return base, vary, kwargs, sweeps.sweep(base, vary, executor=1, progress=False, **kwargs)


def test_package_level_sweep_is_the_function_and_dims_are_the_paths(small):
    base, vary, kwargs, ds = small
    assert snowprobe_widgets.sweep.__doc__ and callable(snowprobe_widgets.sweep)
    assert ds["detection_probability"].dims == (DEPTH,)
    assert list(ds[DEPTH].values) == vary[DEPTH]
    assert ds["found"].dims == (DEPTH, "realization", "person")
    assert ds.attrs["complete"] == 1 and bool(ds["done"].all())
    assert Scenario.from_json(ds.attrs["base_scenario"]) == base
    assert json.loads(ds.attrs["vary"]) == vary
    for name in ("detection_probability", "false_alarms_per_100m", "echo_to_noise_db"):
        assert ds[name].attrs["units"]


def test_identical_in_process_on_a_pool_and_on_a_dask_cluster(tmp_path):
    distributed = pytest.importorskip("distributed")
    from snowprobe_widgets.sweep_spec import run_command

    base = Scenario.example("shallow_dry_powder")
    vary = {DEPTH: [0.5, 1.1]}
    kw = dict(uncertain={WET: Uniform(0.0, 2.0)}, realizations=3, seed=3, progress=False)
    serial = sweeps.sweep(base, vary, executor=1, **kw)
    pooled = sweeps.sweep(base, vary, executor=2, chunk_size=1, **kw)
    spec = tmp_path / "spec.json"
    spec.write_text(spec_to_json("example:shallow_dry_powder", vary,
                                 {WET: Uniform(0.0, 2.0).to_dict()}, realizations=3, seed=3))
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        on_dask = sweeps.sweep(base, vary, executor=client, chunk_size=2, **kw)
        # the command's --scheduler ADDRESS path, on the same cluster
        assert run_command(str(spec), str(tmp_path / "cli.nc"),
                           scheduler=cluster.scheduler_address, progress=False) == 0
    xr.testing.assert_identical(serial, pooled)
    xr.testing.assert_identical(serial, on_dask)
    xr.testing.assert_identical(serial, sweeps.load(tmp_path / "cli.nc"))
    # nothing uncertain but the clutter: the realizations of a cell share the persons'
    # echo and the detector's migration map, computed once in this process and in each
    # worker as its one-realization chunks arrive
    plain = dict(realizations=4, seed=5, progress=False)
    xr.testing.assert_identical(sweeps.sweep(base, vary, executor=1, **plain),
                                sweeps.sweep(base, vary, executor=2, chunk_size=1, **plain))


def test_probability_falls_with_depth_and_wetness():
    ds = sweeps.sweep(_noisy_demo(), {DEPTH: [0.3, 1.0, 1.7], WET: [0.0, 6.0, 12.0]},
                      realizations=4, executor=2, progress=False)
    p = ds["detection_probability"].transpose(DEPTH, WET).values
    assert np.all(np.isfinite(p))
    # never rising by more than Monte Carlo noise along either field (4 draws: 0.25 steps)
    assert np.all(np.diff(p, axis=0) <= 0.25)
    assert np.all(np.diff(p, axis=1) <= 0.25)
    assert p[0, 0] - p[-1, -1] >= 0.5  # shallow and dry vs deep and wet
    assert p[0, :].mean() > p[-1, :].mean() and p[:, 0].mean() > p[:, -1].mean()


def test_false_alarms_rise_as_the_level_falls(small):
    _base, _vary, _kw, ds = small
    curve = roc(ds, [10.0, 20.0, 40.0])
    fa = curve["false_alarms_per_100m"].mean(DEPTH).values
    assert fa[0] > fa[1] >= fa[2]
    pd = curve["detection_probability"].mean(DEPTH).values
    assert pd[0] >= pd[1] >= pd[2]
    # at the sweep's own level the ROC repeats the dataset's summaries
    at = roc(ds, [float(ds.attrs["level_db"])]).isel(level_db=0)
    for name in ("detection_probability", "false_alarms_per_100m"):
        np.testing.assert_allclose(at[name].values, ds[name].values)


def test_twins_never_count_a_find():
    from snowprobe_widgets.detection import compare_with_truth, detect
    from snowprobe_widgets.sweep_realization import realization_radargrams, reduced_scene

    sc = reduced_scene(Scenario.example("shallow_dry_powder"))
    full, twin, parts = realization_radargrams(sc)
    assert compare_with_truth(detect(full), full.truth).n_hits == 1  # the person is there
    assert not twin.scenario.persons and twin.truth == ()
    # the twin's detections scored against where the person lies find nothing
    assert compare_with_truth(detect(twin, threshold=10.0), full.truth).n_hits == 0
    # the twin is the same ground: the radargram with the persons minus their echoes
    scale = np.max(np.abs(twin.data))
    np.testing.assert_allclose(full.data - parts["persons"].data, twin.data, rtol=0,
                               atol=1e-12 * scale)


def test_parts_add_up_to_one_simulation():
    from snowprobe_widgets.sweep_realization import realization_radargrams
    from snowprobe_widgets.synthesis import simulate

    sc = Scenario.example("crust_and_ski")
    # the second scene differs in its clutter only, so it reuses the first one's
    # persons' echo: the sum must still be its own full simulation
    other = dataclasses.replace(sc, clutter=dataclasses.replace(
        sc.clutter, seed=sc.clutter.seed + 1, scatterer_density_per_m3=3.0))
    deeper = dataclasses.replace(sc, persons=(dataclasses.replace(
        sc.persons[0], depth_m=sc.persons[0].depth_m + 0.1),) + sc.persons[1:])
    for scene in (sc, other, deeper):
        full, _twin, _parts = realization_radargrams(scene)
        ref = simulate(scene)
        # simulate is linear in its parts; the sum differs from one run only by rounding
        assert np.max(np.abs(full.data - ref.data)) <= 1e-9 * np.max(np.abs(ref.data))


@pytest.mark.parametrize(("vary", "uncertain", "words"), [
    ({"persons[0].deep_m": [1.0]}, None, ["persons[0].deep_m", "no declared field", "depth_m"]),
    ({"persons[2].depth_m": [1.0]}, None, ["persons[2].depth_m", "only 1"]),
    ({"radar": [1.0]}, None, ["'radar'", "no declared field"]),
    ({"persons[0].posture": ["sitting"]}, None, ["persons[0].posture", "sitting",
                                                 "lying_flat"]),
    ({"clutter.seed": [1.5]}, None, ["clutter.seed", "1.5", "whole number"]),
    ({DEPTH: [0.5, 150.0]}, None, [DEPTH, "150", "[0, 100]"]),
    ({DEPTH: [0.5, 1.9]}, None, [DEPTH, "1.9", "deeper than the 2 m snowpack"]),
    ({DEPTH: [0.5]}, {WET: Uniform(0.0, 20.0)}, [WET, "20", "[0, 12] %"]),
    ({DEPTH: [0.5]}, {"radar.center_frequency_hz": {"uniform": {"low": 1e6, "high": 8e8}}},
     ["radar.center_frequency_hz", "1e+06", "allowed range [5e+07, "]),
    ({DEPTH: [0.5, 1.6]}, {"persons[0].posture": {"choice": {"options": ["lying_flat",
                                                                          "curled"]}}},
     ["persons[0].depth_m = 1.6", "curled", "deeper than"]),
])
def test_bad_paths_values_and_bounds_refused_before_any_work(monkeypatch, vary, uncertain,
                                                             words):
    def no_work(*_a, **_k):
        raise AssertionError("a realization ran before the checks refused the sweep")

    monkeypatch.setattr(sweeps, "run_realization", no_work)
    with pytest.raises((ValueError, KeyError)) as err:
        sweeps.sweep(Scenario.example("shallow_dry_powder"), vary, uncertain=uncertain,
                     realizations=2, executor=1, progress=False)
    for w in words:
        assert w in str(err.value)


def test_cancel_keeps_the_finished_part_and_resume_completes_it(small, tmp_path):
    base, vary, kwargs, full = small
    stop = threading.Event()

    def after(done: int, _total: int) -> None:
        if done >= 2:
            stop.set()

    part = sweeps.sweep(base, vary, executor=1, progress=False, on_progress=after,
                        cancel=stop, **kwargs)
    assert part.attrs["complete"] == 0
    assert int(part["done"].sum()) == 2
    # the finished realizations are exactly those of the full run
    mask = part["done"].values
    np.testing.assert_array_equal(part["found"].values[mask], full["found"].values[mask])
    assert np.isnan(part["found"].values[~mask]).all()
    path = tmp_path / "partial.nc"
    sweeps.save(part, path)
    again = sweeps.resume(sweeps.load(path), executor=1, progress=False)
    xr.testing.assert_identical(again, full)


def test_netcdf_round_trip_and_scene_of_a_realization(small, tmp_path):
    _base, _vary, _kw, ds = small
    sweeps.save(ds, tmp_path / "sweep.nc")
    back = sweeps.load(tmp_path / "sweep.nc")
    xr.testing.assert_identical(back, ds)
    sc = sweeps.realization_scenario(back, {DEPTH: 1}, 2)
    assert sc.persons[0].depth_m == 1.2
    assert sc.clutter.seed == int(ds["clutter_seed"].values[1, 2])
    drawn = ds[f"drawn {'persons[0].offset_m'}"].values[1, 2]
    assert sc.persons[0].offset_m == pytest.approx(drawn)


@pytest.mark.parametrize(("k", "n"), [(81, 263), (15, 148), (0, 20), (1, 29), (20, 20)])
def test_wilson_interval_matches_scipy(k, n):
    # scipy.stats.binomtest(...).proportion_ci(method="wilson"): Wilson 1927, JASA 22:209
    ref = binomtest(k, n).proportion_ci(confidence_level=0.95, method="wilson")
    lo, hi = sweeps.wilson_interval(k, n)
    assert float(lo) == pytest.approx(ref.low, abs=1e-9)
    assert float(hi) == pytest.approx(ref.high, abs=1e-9)


def test_distributions_stay_in_bounds_and_follow_their_law():
    rng = np.random.default_rng(1)
    d = sweeps.Normal(0.0, 1.0, -0.5, 2.0)
    x = np.array([d.draw(rng) for _ in range(4000)])
    assert x.min() >= -0.5 and x.max() <= 2.0
    # truncated-normal mean (scipy.stats.truncnorm, an independent implementation)
    from scipy.stats import truncnorm

    assert x.mean() == pytest.approx(truncnorm(-0.5, 2.0).mean(), abs=0.03)
    c = sweeps.Choice(("a", "b"), (3.0, 1.0))
    share = np.mean([c.draw(rng) == "a" for _ in range(4000)])
    assert share == pytest.approx(0.75, abs=0.03)
    with pytest.raises(ValueError, match="high"):
        sweeps.Uniform(2.0, 1.0)


def test_command_line_sweep_from_a_spec(tmp_path, capsys):
    spec = tmp_path / "spec.json"
    spec.write_text(spec_to_json("example:shallow_dry_powder", {DEPTH: [0.5, 1.0]},
                                 {WET: {"uniform": {"low": 0.0, "high": 1.0}}},
                                 realizations=2, seed=5))
    out = tmp_path / "result.nc"
    assert snowprobe_main(["sweep", str(spec), "--out", str(out), "--workers", "1",
                           "--quiet"]) == 0
    ds = sweeps.load(out)
    assert ds.attrs["complete"] == 1 and ds["detection_probability"].dims == (DEPTH,)
    ref = sweeps.sweep(Scenario.example("shallow_dry_powder"), {DEPTH: [0.5, 1.0]},
                       uncertain={WET: Uniform(0.0, 1.0)}, realizations=2, seed=5,
                       executor=1, progress=False)
    xr.testing.assert_identical(ds, ref)
    bad = tmp_path / "bad.json"
    bad.write_text(spec_to_json("example:shallow_dry_powder", {"persons[0].dept": [1.0]}))
    assert snowprobe_main(["sweep", str(bad), "--out", str(tmp_path / "x.nc")]) == 2
    err = capsys.readouterr().err
    assert "persons[0].dept" in err and not (tmp_path / "x.nc").exists()
    extra = json.loads(spec.read_text())
    extra["colour"] = "red"
    bad.write_text(json.dumps(extra))
    assert snowprobe_main(["sweep", str(bad), "--out", str(tmp_path / "y.nc")]) == 2
    assert "colour" in capsys.readouterr().err


def test_spec_reads_a_base_file_next_to_it_and_refuses_duplicates(tmp_path):
    from snowprobe_widgets.sweep_spec import SweepSpecError, read_spec

    sc = Scenario.example("two_burials")
    sc.save(tmp_path / "scene.json")
    spec = tmp_path / "spec.json"
    spec.write_text(spec_to_json("scene.json", {"persons[1].offset_m": [0.0, 0.5]},
                                 realizations=4))
    kwargs = read_spec(spec)
    assert kwargs["base"] == sc and kwargs["realizations"] == 4 and kwargs["reduced"]
    spec.write_text('{"format": "snowprobe-sweep-spec", "version": 1, "base": "scene.json",'
                    ' "vary": {}, "vary": {}}')
    with pytest.raises(SweepSpecError, match="given twice"):
        read_spec(spec)
    spec.write_text(spec_to_json("missing.json", {}))
    with pytest.raises(SweepSpecError, match="missing.json"):
        read_spec(spec)


def test_sweeps_import_no_user_interface():
    import subprocess
    import sys

    code = ("import sys; from snowprobe_widgets import sweeps, sweep_spec; "
            "from snowprobe_widgets.scene import Scenario; "
            "sweeps.empty_sweep(Scenario.default(), {'persons[0].depth_m': [0.5]}, "
            "realizations=1); p = sweeps._Progress(1, True, None); p.update(1); p.close(); "
            "bad = [m for m in sys.modules if m.split('.')[0] in ('ipywidgets', 'bqplot')]; "
            "print(bad); sys.exit(1 if bad else 0)")
    res = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=False)
    assert res.returncode == 0, res.stdout + res.stderr


def test_dask_workers_malloc_setting_is_lifted_while_a_chunk_runs():
    """Dask's nanny starts workers with MALLOC_TRIM_THRESHOLD_=65536 (every array above
    128 kB then comes from fresh pages); inside a chunk glibc keeps freed memory."""
    import os
    import subprocess
    import sys

    if heap.glibc() is None:
        pytest.skip("glibc only")
    code = (
        "import resource, numpy as np\n"
        "from snowprobe_widgets import sweeps\n"
        "def faults():\n"
        "    f0 = resource.getrusage(resource.RUSAGE_SELF).ru_minflt\n"
        "    for _ in range(50):\n"
        "        a = np.ones(2**17); del a\n"
        "    return resource.getrusage(resource.RUSAGE_SELF).ru_minflt - f0\n"
        "plain = faults()\n"
        "with sweeps._roomy_malloc():\n"
        "    faults(); roomy = faults()\n"
        "print(plain, roomy, faults())\n")
    env = dict(os.environ, MALLOC_TRIM_THRESHOLD_="65536")
    out = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True,
                         text=True, check=True).stdout.split()
    plain, roomy, after = (int(v) for v in out)
    assert plain >= 50 * 100  # a 1 MB array on fresh pages: 256 faults each
    assert roomy < plain / 10
    assert after >= 50 * 100  # the worker's own setting is back afterwards
