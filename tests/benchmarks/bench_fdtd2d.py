"""Speed of the 2-D FDTD reference, and the hyperbola-flank comparison it supports.

Run by hand: ``python tests/benchmarks/bench_fdtd2d.py``. Prints

1. the time per cell-step of :func:`snowprobe_widgets.fdtd2d.solve_scene` for TE and TM
   on a 2 m x 2 m layered scene at 8, 10 and 14 cells per shortest wavelength (ratios
   against the 10-cell TE run of the same session);
2. the flank/apex echo ratio of a metal cylinder (radius 0.2 m, axis 1 m deep in dry
   snow, antenna 0.5 m up, 800 MHz; TE with the radar's field across the line, TM with it
   along the line) at 0, 20, 40, 53 and 55 deg in air: the 2-D FDTD,
   independent 2-D ray theory, and the model's facet sum of a long branch across the line
   (3-D, converted to 2-D by sqrt(R_perp), see tests/test_hyperbola_flank.py), with the
   run time of each FDTD position;
3. the 2-D check of the explorer on the demo scenarios (cells, steps, seconds).

Timings on the shared development machine are upper bounds under load.
"""

from __future__ import annotations

import math
import sys
import time
from pathlib import Path

import numpy as np
from scipy.signal import hilbert

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from test_hyperbola_flank import _cylinder_go_2d  # noqa: E402

from snowprobe_widgets import materials as mat  # noqa: E402
from snowprobe_widgets.fdtd2d import (  # noqa: E402
    BuriedCylinder,
    Scene2D,
    cylinder_trace,
    grid_step_m,
    scenario_check,
    solve_scene,
)
from snowprobe_widgets.pulses import make_pulse  # noqa: E402
from snowprobe_widgets.radar_equation import beam_weight  # noqa: E402
from snowprobe_widgets.scene import Clutter, Radar, Scenario, Survey  # noqa: E402
from snowprobe_widgets.scene_objects import Branch, Ground, Layer, Snowpack  # noqa: E402
from snowprobe_widgets.synthesis import simulate  # noqa: E402


def speed() -> None:
    pulse = make_pulse("ricker", 800e6)
    f_hi = pulse.band_hz(1e-2)[1]
    scene = Scene2D((-1.0, 1.0), (-0.6, 1.4), ((0.5, 1.4, 0.0), (2.0, 1.8, 1e-4)),
                    cylinder=(0.2, 0.8, 0.15, 6.0, 1e-3, False))
    print("1. speed: 2 m x 2 m, two snow layers, rock cylinder, 8 ns")
    print("   pol  cells/wl    cells   steps   wall (s)   cpu (s)   ns/cell-step (cpu)   "
          "x TE@10")
    base = None
    for pol in ("TE", "TM"):
        for cpw in (8.0, 10.0, 14.0):
            dx = grid_step_m(f_hi, scene.max_index(), cpw, 0.15)
            t = time.perf_counter()
            c = time.process_time()
            res = solve_scene(scene, polarization=pol, source_m=(0.0, -0.5),
                              receivers_m=[(0.0, -0.5)], current=pulse.waveform,
                              duration_s=8e-9, dx_m=dx, center_frequency_hz=800e6)
            el = time.perf_counter() - t
            cpu = time.process_time() - c
            per = cpu / (res.grid.cells * res.grid.n_steps) * 1e9
            if pol == "TE" and cpw == 10.0:
                base = per
            ratio = f"{per / base:6.2f}" if base else "   -  "
            print(f"   {pol}   {cpw:6.0f}   {res.grid.cells:7d}  {res.grid.n_steps:6d}  "
                  f"{el:8.2f}  {cpu:8.2f}   {per:10.1f}             {ratio}")


def flank(pol: str, radar_polarization: str) -> None:
    fc, h, radius, depth = 800e6, 0.5, 0.2, 1.0
    snow = mat.snow(350.0)
    n = float(snow.refractive_index(fc).real)
    radar = Radar(center_frequency_hz=fc, dt_s=2.5e-11, time_window_s=40e-9,
                  beamwidth_deg=180.0, antenna_height_m=h, polarization=radar_polarization)
    pulse = radar.make_pulse()
    cyl = BuriedCylinder(0.0, depth, radius, mat.metal())
    sc = Scenario(Snowpack((Layer(4.0, 350.0),)), Ground(),
                  objects=(Branch(0.0, depth - radius, 2 * radius, 8.0, heading_deg=90.0),),
                  radar=radar, survey=Survey(-0.02, 1.7, 0.01),
                  clutter=Clutter(scatterer_density_per_m3=0))
    rg = simulate(sc, components=("objects",))
    env = np.abs(hilbert(rg.data, axis=0)).max(axis=0)
    x = rg.position_m
    print(f"\n2. flank/apex of a buried metal cylinder, {pol} (radar {radar_polarization}), dB")
    print("   deg   FDTD    2-D rays (TE)   model   model-FDTD   FDTD run (s)")
    apex = None
    for deg in (0.0, 20.0, 40.0, 53.0, 55.0):
        th = math.radians(deg)
        go, x_c, rperp = _cylinder_go_2d(th, h, n, depth, radius)
        tr = cylinder_trace([snow, snow], [3.0], cyl, antenna_x_m=x_c, antenna_height_m=h,
                            pulse=pulse, dt_s=2e-11, n_samples=1500, polarization=pol)
        peak = float(np.abs(hilbert(tr.amplitude)).max())
        model = np.interp(x_c, x, env) / beam_weight(th, 180.0) * math.sqrt(rperp)
        if apex is None:
            apex = (peak, go, model)
        f_db = 20 * math.log10(peak / apex[0])
        g_db = 20 * math.log10(go / apex[1])
        m_db = 20 * math.log10(model / apex[2])
        print(f"   {deg:4.0f}  {f_db:6.2f}   {g_db:6.2f}          {m_db:6.2f}     "
              f"{m_db - f_db:+.2f}        {tr.elapsed_s:6.1f}")


def demos() -> None:
    print("\n3. the explorer's 2-D check, antenna 0.3 m from the first object")
    for name in Scenario.examples():
        s = Scenario.example(name)
        if not s.targets:
            continue
        try:
            c = time.process_time()
            r = scenario_check(s, s.targets[0].position_m + 0.3)
            cpu = time.process_time() - c
        except ValueError as exc:
            print(f"   {name:20s} refused: {exc}")
            continue
        g = r.fdtd.grid
        print(f"   {name:20s} {s.targets[0].kind:8s} agreement {r.agreement:+.3f}  "
              f"{g.nx}x{g.nz} cells x {g.n_steps} steps  wall {r.fdtd.elapsed_s:6.1f} s  "
              f"cpu {cpu:6.1f} s")


if __name__ == "__main__":
    speed()
    flank("TE", "across_line")
    flank("TM", "along_line")
    demos()
