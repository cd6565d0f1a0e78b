"""Speed of the processing layer on a 200-trace x 512-sample radargram.

Run by hand: ``python tests/benchmarks/bench_processing.py``. Prints the median time of
each step and of the default chain, with ratios to two baselines measured in the same
run: a plain numpy copy of the data and the mean background removal step. The band-pass
and envelope (numpy, :mod:`snowprobe_widgets.processing.dsp`) are also timed against
scipy.signal's ``sosfiltfilt`` and ``hilbert`` on the same data in the same run, on this
section and on a long one (1,000 traces x 2,048 samples); scipy.signal is imported here
only, never by the package.
"""

from __future__ import annotations

import os
import time

import numpy as np
from timing import median_s

from snowprobe_widgets import processing as P
from snowprobe_widgets.radargram import Radargram

NT, NX = 512, 200
DT_S, DX_M = 0.1e-9, 0.03
FC_HZ = 800e6


def synthetic() -> Radargram:
    """Two diffractors, a flat layer, a DC offset and noise (invented test section)."""
    t = np.arange(NT) * DT_S
    x = np.arange(NX) * DX_M

    def ricker(u: np.ndarray) -> np.ndarray:
        a = (np.pi * FC_HZ * u) ** 2
        return (1 - 2 * a) * np.exp(-a)

    d = 0.2 + ricker(t - 6e-9)[:, None] * np.ones(NX)
    for x0, t0 in ((2.0, 18e-9), (4.1, 30e-9)):
        th = np.sqrt(t0**2 + (2 * (x - x0) / 0.23e9) ** 2)
        d = d + (t0 / th)[None, :] * ricker(t[:, None] - th[None, :])
    d += 0.02 * np.random.default_rng(1).standard_normal(d.shape)
    return Radargram(d, t, x)


def _against_scipy(rg: Radargram) -> list[tuple[str, float]]:
    from scipy import signal

    from snowprobe_widgets.processing import dsp

    rows = []
    long = np.random.default_rng(2).standard_normal((2048, 1000))
    sos = dsp.butter_bandpass_sos(4, 0.25 * FC_HZ, 2.5 * FC_HZ, 1.0 / DT_S)
    for label, data, repeats in (("this section", rg.data, 30), ("1000 x 2048", long, 5)):
        ours = median_s(lambda d=data: dsp.sos_filtfilt(sos, d), repeats)
        ref = median_s(lambda d=data: signal.sosfiltfilt(sos, d, axis=0), repeats)
        rows.append((f"band-pass order 4, {label}: scipy.signal.sosfiltfilt", ref))
        rows.append((f"band-pass order 4, {label}: dsp.sos_filtfilt ({ours / ref:.2f} x "
                     "scipy)", ours))
    ref = median_s(lambda: signal.hilbert(rg.data, axis=0), 50)
    ours = median_s(lambda: dsp.analytic_signal(rg.data), 50)
    rows.append(("analytic signal: scipy.signal.hilbert", ref))
    rows.append((f"analytic signal: dsp.analytic_signal ({ours / ref:.2f} x scipy)", ours))
    return rows


def main() -> None:
    rg = synthetic()
    chain = P.ProcessingChain.default(FC_HZ)
    t_end = time.perf_counter() + 1.0  # warm up (CPU clock, caches, FFT plans) for 1 s
    while time.perf_counter() < t_end:
        chain.apply(rg)
        P.background_removal(rg)
    base_copy = median_s(lambda: np.array(rg.data, copy=True), 200)
    base_mean = median_s(lambda: P.background_removal(rg), 100)
    rows = [("numpy copy (baseline)", base_copy), ("background_removal mean (baseline)",
                                                   base_mean)]
    for step in chain.steps:
        rows.append((f"  step {step.name} {dict(step.params)}", median_s(
            lambda s=step: s.apply(rg), 50)))
    rows.append(("default chain (enabled steps)", median_s(lambda: chain.apply(rg), 50)))
    rows.append(("migrate fk", median_s(lambda: P.migrate(rg, 0.23e9), 10)))
    rows.append(("migrate kirchhoff (full aperture)",
                 median_s(lambda: P.migrate(rg, 0.23e9, method="kirchhoff"), 5)))
    rows.append(("velocity_analysis (221 velocities)",
                 median_s(lambda: P.velocity_analysis(rg, 2.0, 18e-9), 10)))
    rows.append(("envelope", median_s(lambda: P.envelope(rg), 50)))
    rows.append(("time_to_depth", median_s(lambda: P.time_to_depth(rg, 0.23e9), 50)))
    rows += _against_scipy(rg)
    rows.append(("background_removal mean (baseline, again at the end)",
                 median_s(lambda: P.background_removal(rg), 100)))
    one, five, _ = os.getloadavg()
    print(f"radargram {NX} traces x {NT} samples; medians; load average {one:.1f} / "
          f"{five:.1f} on {os.cpu_count()} cores (timings are upper bounds under load)")
    print(f"{'what':<72} {'ms':>9} {'x copy':>9} {'x mean-rm':>10}")
    for name, s in rows:
        print(f"{name:<72} {1e3 * s:9.3f} {s / base_copy:9.1f} {s / base_mean:10.2f}")


if __name__ == "__main__":
    main()
