"""What a dashboard kernel imports: each dashboard's code cells run in a fresh interpreter,
as a served kernel runs them, must leave the heavy parts of scipy unimported.

``scipy.signal`` alone pulled scipy.stats, optimize, interpolate, spatial, sparse and
linalg into every kernel (about 48 MB resident of a design kernel's ~189 MB, measured with
tests/benchmarks/bench_crowd.py); ``scipy.integrate`` pulls ``scipy.optimize`` (27 MB).
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

DASHBOARDS = Path(__file__).resolve().parents[2] / "dashboards"

#: Modules no dashboard kernel needs for its page (the linear assignment of the training
#: score imports scipy.optimize when a trainee's marks are scored, not before).
HEAVY = ("scipy.signal", "scipy.stats", "scipy.interpolate", "scipy.integrate",
         "scipy.optimize")

#: After the design page's first draw: the steps of the default chain that the first draw
#: leaves off, and the velocity scan, on the section on screen.
DESIGN_MORE = """
from snowprobe_widgets import processing as P
shown = app._shown
assert "draws=1" in app.radargram_view.status.value, app.radargram_view.status.value
P.envelope(shown)
P.time_zero(shown)
P.velocity_analysis(shown, float(shown.position_m[100]), float(shown.time_s[200]))
"""


def _cells(name: str) -> str:
    notebook = json.loads((DASHBOARDS / f"{name}.ipynb").read_text())
    return "\n".join("".join(c["source"]) for c in notebook["cells"]
                     if c["cell_type"] == "code")


@pytest.mark.parametrize("name", sorted(p.stem for p in DASHBOARDS.glob("*.ipynb")))
def test_dashboard_kernel_leaves_heavy_scipy_unimported(name: str) -> None:
    code = _cells(name)
    assert "app = " in code
    if name == "design":
        code += DESIGN_MORE
    code += ("\nimport sys, json\n"
             f"print(json.dumps([m for m in {HEAVY!r} if m in sys.modules]))\n")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=240)
    assert done.returncode == 0, done.stderr[-2000:]
    loaded = json.loads(done.stdout.strip().splitlines()[-1])
    assert loaded == [], f"the {name} dashboard's kernel imported {loaded}"
