"""A class arriving at once: first-picture time for 5, 10 and 20 browsers, and memory.

Run by hand (not collected by pytest)::

    python tests/benchmarks/bench_crowd.py            # 1 (baseline), 5, 10, 20 browsers
    python tests/benchmarks/bench_crowd.py 1 10        # chosen crowd sizes
    python tests/benchmarks/bench_crowd.py 20 --warm   # only the warm (or --cold) servers

For each crowd size it starts the real launcher on a free loopback port twice: "cold"
(``snowprobe serve``, every page starts its kernel when it arrives) and "warm"
(``snowprobe serve design --warm --max-sessions N``: N sessions started and drawn in
advance, the pool sized from the session cap), opens that many headless Debian Chromium
pages at the same moment (one browser context each, as separate visitors), and waits for
each page's first picture (the radargram status line reports a draw). It prints each
page's seconds (or "never" past the deadline), the ratio of the slowest to the
single-visitor baseline of the same run, the CPU seconds the browsers, the kernels and
the server spent on the crowd, the server's resident memory and each kernel's resident
(RSS), proportional (PSS: shared libraries divided among the kernels that map them) and
unique (USS) memory while all pages are open. PSS is what one more visitor costs.
Browsers and server share this machine, as in the browser tests: timings are upper
bounds under whatever else runs here (the load average is printed).

A last table shows what a kernel's memory is made of: the resident memory added by each
import a design-dashboard kernel makes, measured in a fresh interpreter.

Goals (issue 11): every page renders, every time; 20 together within 60 s each; kernel
memory per visitor <= 150 MB.
"""

from __future__ import annotations

import asyncio
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "browser"))

from harness import (  # noqa: E402
    CHROMIUM,
    CHROMIUM_ARGS,
    READY_JS,
    STATIC_PATH,
    STATUS_SELECTOR,
    Launcher,
    dashboard_url,
)

from snowprobe_widgets.launcher import WARM_READY_SAYS  # noqa: E402

DEADLINE_S = 180.0

IMPORT_STEPS = [
    ("python + psutil", ""),
    ("ipykernel + ipywidgets (every kernel)", "import ipykernel.ipkernel, ipywidgets"),
    ("numpy", "import numpy"),
    ("scipy.fft + scipy.special + scipy.ndimage", "import scipy.fft, scipy.special, "
                                                  "scipy.ndimage"),
    ("pandas (imported by bqplot)", "import pandas"),
    ("bqplot", "import bqplot"),
    ("snowprobe_widgets model layer", "import snowprobe_widgets.synthesis, "
                                      "snowprobe_widgets.processing, snowprobe_widgets.budget"),
    ("snowprobe_widgets.widgets (all apps)", "import snowprobe_widgets.widgets"),
    ("ScenarioExplorer() built and drawn", "app = snowprobe_widgets.widgets.ScenarioExplorer()"),
]


def _load() -> str:
    one, five, fifteen = os.getloadavg()
    return f"load average {one:.1f} / {five:.1f} / {fifteen:.1f} on {os.cpu_count()} cores"


async def _visitor(browser, url: str) -> tuple[float | None, str]:
    context = await browser.new_context(viewport={"width": 1500, "height": 1100})
    page = await context.new_page()
    start = time.perf_counter()
    try:
        await page.goto(url, wait_until="commit", timeout=DEADLINE_S * 1000)
        await page.wait_for_function(READY_JS, arg=STATUS_SELECTOR["design"],
                                     timeout=DEADLINE_S * 1000, polling=250)
        return time.perf_counter() - start, ""
    except Exception as exc:  # a page that never drew: recorded, not raised
        state = await page.evaluate(
            "() => ({ready: document.body && document.body.getAttribute('data-sp-ready'),"
            " draw: document.body && document.body.getAttribute('data-sp-draw'),"
            " kernel: document.body && document.body.getAttribute('data-sp-kernel'),"
            " emptyCells: document.querySelectorAll('.jp-Cell.jp-mod-noOutputs').length,"
            " widgets: document.querySelectorAll('#rendered_cells .jupyter-widgets').length,"
            " loadingWidget: document.body && document.body.innerText.includes("
            "'Loading widget'), notice: (document.querySelector('#sp-notice') || {})"
            ".innerText})")
        return None, f"{type(exc).__name__}; page state {state}"


def _cpu_s(server: Launcher) -> dict[str, float]:
    """CPU seconds used so far by the server, its kernels and every Chromium process."""
    import psutil

    def used(process: psutil.Process) -> float:
        times = process.cpu_times()
        return times.user + times.system

    out = {"server": used(psutil.Process(server.process.pid)), "kernels": 0.0,
           "browsers": 0.0}
    for process in server.kernel_processes().values():
        try:
            out["kernels"] += used(process)
        except psutil.Error:
            continue
    for process in psutil.Process().children(recursive=True):  # our browser only
        try:
            if process.name().startswith("chrom"):
                out["browsers"] += used(process)
        except psutil.Error:
            continue
    return out


async def _crowd(server: Launcher, url: str, count: int) -> tuple[list, dict]:
    from playwright.async_api import async_playwright

    async with async_playwright() as playwright:
        browser = await playwright.chromium.launch(executable_path=str(CHROMIUM),
                                                   args=CHROMIUM_ARGS)
        try:
            before = _cpu_s(server)
            results = await asyncio.gather(*(_visitor(browser, url)
                                             for _ in range(count)))
            after = _cpu_s(server)
            memory = _memory(server)
            memory["cpu_s"] = {k: after[k] - before[k] for k in after}
        finally:
            await browser.close()
    return results, memory


def _memory(server: Launcher) -> dict:
    import psutil

    out = {"server_mb": psutil.Process(server.process.pid).memory_info().rss / 2**20,
           "kernels": []}
    for process in server.kernel_processes().values():
        try:
            full = process.memory_full_info()
        except (psutil.NoSuchProcess, psutil.AccessDenied):
            continue
        out["kernels"].append((full.rss / 2**20, full.pss / 2**20, full.uss / 2**20))
    return out


def _wait_warm(server: Launcher, count: int) -> float:
    """Wait until the launcher says its ``count`` warm sessions are ready; seconds.

    The launcher prints that line when every pooled session's notebook has run to the
    end. (A wait on the kernels' CPU time, used before, failed when a kernel spent less
    than its threshold: a kernel with lighter imports never looked "ready".)
    """
    import psutil

    start = time.perf_counter()
    said = f"snowprobe: {count} {WARM_READY_SAYS}"
    while not any(line.startswith(said) for line in list(server.output)):
        if server.process.poll() is not None:
            raise RuntimeError(f"the launcher stopped:\n{server.log()}")
        if time.perf_counter() - start > 2 * DEADLINE_S:
            kernels = list(server.kernel_processes().values())
            spent = []
            for kernel in kernels:
                try:
                    spent.append(sum(kernel.cpu_times()[:2]))
                except psutil.Error:
                    continue
            raise RuntimeError(
                f"{count} warm sessions not ready after {2 * DEADLINE_S:.0f} s: "
                f"{len(kernels)} kernels running, CPU seconds spent "
                f"{min(spent, default=0):.1f}-{max(spent, default=0):.1f}")
        time.sleep(0.5)
    return time.perf_counter() - start


def _run(count: int, warm: bool) -> tuple[list, dict]:
    with tempfile.TemporaryDirectory() as workdir:
        if warm:
            args = ["design", "--warm", "--max-sessions", str(count)]
        else:
            # all dashboards behind a start page: polling the start page starts no kernel
            args = ["--max-sessions", str(count + 2)]
        server = Launcher(args=args, workdir=Path(workdir))
        try:
            server.wait_ready(path=STATIC_PATH)
            ready_s = _wait_warm(server, count) if warm else 0.0
            url = server.base_url if warm else dashboard_url(server.base_url, "design")
            results, memory = asyncio.run(_crowd(server, url, count))
            memory["warm_ready_s"] = ready_s
            return results, memory
        finally:
            server.stop()


def _import_costs() -> list[tuple[str, float]]:
    code = ["import psutil, sys; p = psutil.Process(); last = p.memory_info().rss",
            "import snowprobe_widgets"]
    for label, statement in IMPORT_STEPS:
        code.append(statement or "pass")
        code.append("now = p.memory_info().rss; "
                    f"print({label!r} + '\\t' + str((now - last) / 2**20)); last = now")
    # scipy.signal pulled stats, optimize, interpolate, sparse, linalg and spatial in
    # (about 48 MB); processing.dsp replaces it: say if any of them still comes in
    code.append("heavy = [m for m in ('scipy.signal', 'scipy.stats', 'scipy.optimize', "
                "'scipy.interpolate', 'scipy.integrate') if m in sys.modules]; "
                "print('heavy scipy modules loaded: ' + (', '.join(heavy) or 'none') "
                "+ '\t0')")
    done = subprocess.run([sys.executable, "-c", "\n".join(code)], capture_output=True,
                          text=True, check=True, env=dict(os.environ, MALLOC_ARENA_MAX="2"))
    rows = [line.split("\t") for line in done.stdout.splitlines() if "\t" in line]
    return [(label, float(mb)) for label, mb in rows]


def _report(count: int, warm: bool, started: str, results: list, memory: dict,
            baseline: float | None) -> None:
    seconds = [s for s, _ in results if s is not None]
    failed = [why for s, why in results if s is None]
    shown = ", ".join("never" if s is None else f"{s:.1f}" for s, _ in results)
    mode = "warm (--warm, sessions drawn in advance)" if warm else "cold"
    print(f"\n{count} browser(s) together, {mode} ({started} at start)")
    if warm:
        print(f"  warm sessions ready {memory['warm_ready_s']:.0f} s after the server")
    print(f"  first picture (s): {shown}")
    print(f"  rendered {len(seconds)} of {count}; slowest "
          f"{max(seconds) if seconds else float('nan'):.1f} s"
          + (f" = {max(seconds) / baseline:.1f} x the single visitor" if baseline and
             seconds else ""))
    cpu = memory["cpu_s"]
    print(f"  CPU seconds during the crowd: browsers {cpu['browsers']:.1f}, kernels "
          f"{cpu['kernels']:.1f}, server {cpu['server']:.1f} "
          f"(per page {sum(cpu.values()) / count:.1f}, of which the browser "
          f"{cpu['browsers'] / count:.1f})")
    for why in failed:
        print(f"  not drawn: {why}")
    kernels = memory["kernels"]
    if kernels:
        columns = list(zip(*kernels, strict=True))
        parts = [f"{name} {min(c):.0f}-{max(c):.0f} MB (mean {sum(c) / len(c):.0f})"
                 for name, c in zip(("RSS", "PSS", "unique"), columns, strict=True)]
        print(f"  server {memory['server_mb']:.0f} MB; {len(kernels)} kernels: "
              + ", ".join(parts))


def main(argv: list[str]) -> None:
    modes = [m for m in ("cold", "warm") if f"--{m}" in argv] or ["cold", "warm"]
    sizes = [int(a) for a in argv if not a.startswith("--")] or [1, 5, 10, 20]
    print(f"bench_crowd: design dashboard, {_load()}")
    baseline = None
    for count in sizes:
        for warm in (False, True) if count > 1 else (False,):
            if ("warm" if warm else "cold") not in modes:
                continue
            started = _load()
            results, memory = _run(count, warm)
            if count == 1 and results[0][0] is not None:
                baseline = results[0][0]
            _report(count, warm, started, results, memory, baseline)
    print("\nwhat a kernel's memory is made of (resident MB added by each step):")
    total = 0.0
    for label, mb in _import_costs():
        total += mb
        print(f"  {mb:6.1f}  {label}   (running total {total:.0f})")


if __name__ == "__main__":
    main(sys.argv[1:])
