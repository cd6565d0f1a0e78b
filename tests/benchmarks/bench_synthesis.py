"""Speed and memory of radargram synthesis.

Run by hand: ``python tests/benchmarks/bench_synthesis.py``. Prints the median time to
simulate 200 traces x 512 samples with one person, about 20 clutter scatterers and 6
layers; how it grows with the number of traces and of object facets; the peak memory of
the computation (tracemalloc, numpy allocations included) against the size of the result;
and a chunked 2,000-trace line. Goal (issue 3): < 30 ms and < 100 MB for the base case.
"""

from __future__ import annotations

import time
import tracemalloc
from unittest import mock

from timing import median_s

from snowprobe_widgets import synthesis
from snowprobe_widgets.scene import (
    Clutter,
    Ground,
    Layer,
    Person,
    Radar,
    Scenario,
    Snowpack,
    Survey,
)


def _median_ms(fn, repeats: int = 20) -> float:
    return 1e3 * median_s(fn, repeats)


def _scene(n_traces: int = 200) -> Scenario:
    layers = (Layer(0.3, 150.0), Layer(0.4, 200.0), Layer(0.05, 750.0, ice_crust=True),
              Layer(0.6, 280.0), Layer(0.5, 330.0), Layer(0.8, 380.0))
    snow = Snowpack(layers)
    spacing = 0.05
    survey = Survey(0.0, spacing * (n_traces - 1), spacing)
    volume = survey.length_m * 2.0 * snow.depth_m
    clutter = Clutter(scatterer_density_per_m3=20.0 / volume, scatterer_size_m=0.1,
                      thin_layer_count=2, seed=5)
    return Scenario(snow, Ground("soil", 0.2), (Person(survey.length_m / 2, 1.1),), (),
                    Radar("ricker", 800e6, dt_s=1e-10, time_window_s=51.2e-9), survey,
                    clutter, name="benchmark line")


def _peak_mb(fn) -> float:
    tracemalloc.start()
    fn()
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return peak / 1e6


def main() -> None:
    base = _scene(200)
    n_clutter = base.clutter_field().n_scatterers
    synthesis.simulate(base)  # warm-up
    t_base = _median_ms(lambda: synthesis.simulate(base), 15)
    t_layers = _median_ms(lambda: synthesis.simulate(base, components=("layers",)), 15)
    mem = _peak_mb(lambda: synthesis.simulate(base))
    result_mb = base.radar.n_samples * base.survey.n_traces * 8 / 1e6
    print(f"base: 200 traces x {base.radar.n_samples} samples, 1 person, {n_clutter} clutter "
          f"scatterers, {len(base.snowpack.layers)} layers")
    print(f"  simulate median            : {t_base:7.1f} ms (median of 15)")
    print(f"  layers only (baseline)     : {t_layers:7.1f} ms  -> ratio {t_base / t_layers:.1f}x")
    print(f"  peak memory                : {mem:7.1f} MB (result itself {result_mb:.1f} MB)")
    print("growth with traces (same scene, line lengthened):")
    print("  traces   time (ms)   ms/trace   peak MB")
    for n in (100, 200, 400, 800):
        sc = _scene(n)
        t = _median_ms(lambda s=sc: synthesis.simulate(s), 5)
        m = _peak_mb(lambda s=sc: synthesis.simulate(s))
        print(f"  {n:6d} {t:11.1f} {t / n:10.3f} {m:9.1f}")
    print("growth with facets (person mesh refined; 200 traces):")
    print("  facet scale   facets   time (ms)")
    real = synthesis.object_mesh
    for scale in (1.0, 0.7, 0.5):
        counts: list[int] = []

        def meshed(obj, size, k=scale, seen=counts):
            mesh = real(obj, size * k)
            seen.append(mesh.n_facets)
            return mesh
        with mock.patch.object(synthesis, "object_mesh", meshed):
            t = _median_ms(lambda: synthesis.simulate(base), 5)
        print(f"  {scale:11.1f} {counts[-1]:8d} {t:11.1f}")
    long = _scene(2000)
    t0 = time.perf_counter()
    m_long = _peak_mb(lambda: synthesis.simulate(long, chunk_traces=256))
    t_long = time.perf_counter() - t0
    res_long = long.radar.n_samples * 2000 * 8 / 1e6
    print(f"2000-trace line, chunks of 256: {t_long:.2f} s, peak {m_long:.1f} MB "
          f"(result {res_long:.1f} MB; peak minus result {m_long - res_long:.1f} MB)")


if __name__ == "__main__":
    main()
