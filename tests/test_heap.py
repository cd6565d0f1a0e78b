"""glibc's heap thresholds: freed memory stays with the process after keep_freed_memory."""

from __future__ import annotations

import os
import subprocess
import sys

import pytest

from snowprobe_widgets import heap


def _faults(code: str, env: dict[str, str]) -> list[int]:
    out = subprocess.run([sys.executable, "-c", code], env=dict(os.environ, **env),
                         capture_output=True, text=True, check=True).stdout.split()
    return [int(v) for v in out]


_COUNT = (
    "import resource, numpy as np\n"
    "def faults():\n"
    "    f0 = resource.getrusage(resource.RUSAGE_SELF).ru_minflt\n"
    "    for _ in range(50):\n"
    "        a = np.ones(2**17); del a\n"  # 1 MB: 256 pages
    "    return resource.getrusage(resource.RUSAGE_SELF).ru_minflt - f0\n")


def test_freed_arrays_come_back_without_page_faults_after_keep_freed_memory():
    if heap.glibc() is None:
        pytest.skip("glibc only")
    # a small trim threshold (as dask's nanny sets) puts every 1 MB array on fresh pages
    code = _COUNT + (
        "from snowprobe_widgets.heap import keep_freed_memory\n"
        "plain = faults()\n"
        "assert keep_freed_memory(16 * 2**20, 64 * 2**20)\n"
        "faults(); print(plain, faults())\n")
    plain, kept = _faults(code, {"MALLOC_TRIM_THRESHOLD_": "65536"})
    assert plain >= 50 * 100
    assert kept < plain / 10


def test_a_served_explorer_keeps_freed_memory_and_a_notebook_one_does_not():
    if heap.glibc() is None:
        pytest.skip("glibc only")
    code = _COUNT + (
        "import os\n"
        "from snowprobe_widgets.widgets import ScenarioExplorer\n"
        "ScenarioExplorer(); faults(); notebook = faults()\n"
        "os.environ['SNOWPROBE_SERVED'] = '1'\n"
        "ScenarioExplorer(); faults(); served = faults()\n"
        "print(notebook, served)\n")
    notebook, served = _faults(code, {"MALLOC_TRIM_THRESHOLD_": "65536",
                                      "SNOWPROBE_SERVED": ""})
    assert notebook >= 50 * 100  # the process's own setting is left alone
    assert served < notebook / 10
