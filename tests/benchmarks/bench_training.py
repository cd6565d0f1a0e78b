"""Training dashboard in a real browser: "next round" to the new picture, and a class of 12.

Run by hand (not collected by pytest)::

    python tests/benchmarks/bench_training.py [--rounds 10] [--class-size 12]

Starts the real ``snowprobe`` launcher on a free loopback port and Debian's headless Chromium.

* Next round: after a submitted answer, a click on "next round" (dispatched inside the page)
  until the status says the new round is being marked, the radargram's picture has been
  replaced and two animation frames have passed (painted). Median of ``--rounds``.
  Baseline, same run: ``TrainingSession.next_round()`` in this process on the same seeds
  (drawing the scene, simulating, processing, the PNG; no browser, no kernel messages).
  Goal: median under 1 s.
* A class: ``--class-size`` browsers open the dashboard at the same moment (one kernel
  each); seconds until each shows its first round. Baseline, same run: one browser alone.
  What limits it is printed: the CPU time one kernel needs to start (interpreter, imports,
  first round), measured in a fresh interpreter here, times the class over the cores.
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "browser"))

from harness import (  # noqa: E402
    CHROMIUM,
    CHROMIUM_ARGS,
    READY_JS,
    STATUS_SELECTOR,
    Launcher,
    chromium_missing_reason,
    dashboard_url,
    open_dashboard,
)

NEXT_JS = """async (rounds) => {
  const status = document.querySelector('.sp-training-status');
  const figure = document.querySelector('.sp-training-radargram');
  const text = () => status.textContent;
  const href = () => figure.querySelector('svg image').getAttribute('href');
  const frame = () => new Promise(r => requestAnimationFrame(() => r()));
  const until = (check) => new Promise((resolve, reject) => {
    const timer = setTimeout(() => { observer.disconnect();
                                     reject(new Error('stuck at: ' + text())); }, 60000);
    const observer = new MutationObserver(() => { if (check()) { observer.disconnect();
                                                                clearTimeout(timer);
                                                                resolve(); } });
    observer.observe(document.body, {subtree: true, attributes: true, childList: true,
                                     characterData: true});
    if (check()) { observer.disconnect(); clearTimeout(timer); resolve(); }
  });
  const button = (cls) => document.querySelector(cls + ' button') ||
                          document.querySelector('button' + cls);
  const out = [];
  for (let i = 0; i < rounds; i++) {
    button('.sp-training-nobody').click();
    await until(() => /marks=0/.test(text()) && button('.sp-training-nobody')
                      .classList.contains('mod-active'));
    button('.sp-training-submit').click();
    await until(() => /state=debrief/.test(text()));
    const h0 = href();
    const round = Number(/round=(\\d+)/.exec(text())[1]);
    const t0 = performance.now();
    button('.sp-training-next').click();
    await until(() => /state=marking/.test(text()) &&
                      Number(/round=(\\d+)/.exec(text())[1]) === round + 1 && href() !== h0);
    await frame(); await frame();
    out.push(performance.now() - t0);
  }
  return out;
}"""

STARTUP_CODE = ("import time; t=time.process_time(); "
                "from snowprobe_widgets.widgets import TrainingSession; "
                "app = TrainingSession(rounds=12, seed=1); "
                "print(time.process_time() - t)")


def python_baseline_ms(rounds: int) -> list[float]:
    """``next_round`` in this process, same level and session seed as the browser run."""
    from snowprobe_widgets.widgets import TrainingSession

    app = TrainingSession(rounds=rounds + 1, seed=2026, label="bench")
    times = []
    for _ in range(rounds):
        app.nobody_button.value = True
        app.submit()
        t0 = time.perf_counter()
        app.next_round()
        times.append((time.perf_counter() - t0) * 1e3)
    return times


def kernel_start_cpu_s() -> float:
    """CPU seconds of a fresh interpreter importing the widgets and showing round 1."""
    res = subprocess.run([sys.executable, "-c", STARTUP_CODE], capture_output=True, text=True,
                         check=True)
    return float(res.stdout.strip().splitlines()[-1])


def class_arrives(base_url: str, count: int, limit_s: float) -> list[float | None]:
    """``count`` browsers open the dashboard at once; seconds to each first round (None:
    not within ``limit_s``). Unlike ``harness.open_concurrently`` a slow visitor does not
    end the measurement of the others."""
    import asyncio

    from playwright.async_api import async_playwright

    async def one(browser: object) -> float | None:
        context = await browser.new_context(viewport={"width": 1300, "height": 1100})
        page = await context.new_page()
        start = time.perf_counter()
        try:
            await page.goto(dashboard_url(base_url, "training"), wait_until="commit",
                            timeout=limit_s * 1000)
            await page.wait_for_function(READY_JS, arg=STATUS_SELECTOR["training"],
                                         timeout=limit_s * 1000, polling=250)
            return time.perf_counter() - start
        except Exception:  # a timeout: reported as "not within the limit"
            return None
        finally:
            await context.close()

    async def run() -> list[float | None]:
        async with async_playwright() as playwright:
            browser = await playwright.chromium.launch(executable_path=str(CHROMIUM),
                                                       args=CHROMIUM_ARGS)
            try:
                return list(await asyncio.gather(*(one(browser) for _ in range(count))))
            finally:
                await browser.close()

    box: dict[str, list[float | None]] = {}
    # in a thread of its own, as harness.open_concurrently does (no event loop of the
    # sync API around it)
    worker = threading.Thread(target=lambda: box.update(result=asyncio.run(run())))
    worker.start()
    worker.join()
    return box["result"]


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=10)
    parser.add_argument("--class-size", type=int, default=12)
    parser.add_argument("--limit", type=float, default=900.0,
                        help="seconds a class member may wait for the first round")
    args = parser.parse_args()
    reason = chromium_missing_reason()
    if reason:
        print(f"cannot run: {reason}")
        return 1
    from playwright.sync_api import sync_playwright

    baseline = python_baseline_ms(args.rounds)
    startup_cpu = kernel_start_cpu_s()
    load = os.getloadavg()
    workdir = Path(tempfile.mkdtemp(prefix="bench-training-"))
    launcher = Launcher(args=["--max-sessions", str(args.class_size + 4)], workdir=workdir)
    try:
        launcher.wait_ready()
        with sync_playwright() as playwright:
            browser = playwright.chromium.launch(executable_path=str(CHROMIUM),
                                                 args=CHROMIUM_ARGS)
            context = browser.new_context(viewport={"width": 1300, "height": 1300})
            page, record, alone_s = open_dashboard(context, launcher.base_url, "training", 180)
            rounds = page.locator(".sp-training-rounds input")
            rounds.fill(str(args.rounds + 2))
            rounds.press("Enter")
            page.locator(".sp-training-seed input").fill("2026")
            page.locator(".sp-training-seed input").press("Enter")
            page.locator(".sp-training-start").click()
            page.wait_for_function(
                "(n) => document.querySelector('.sp-training-status').textContent"
                ".includes(`round=1/${n} state=marking`)", arg=args.rounds + 2,
                timeout=60_000)
            page.evaluate(NEXT_JS, 1)  # warm-up round, not counted
            latencies = page.evaluate(NEXT_JS, args.rounds)
            errors = record.console_errors + record.page_errors
            context.close()
            browser.close()
        med = statistics.median(latencies)
        base = statistics.median(baseline)
        cores = os.cpu_count() or 1
        print(f"training dashboard (load average before the run: {load[0]:.1f} on {cores} "
              "cores)")
        print(f"  'next round' to the new picture painted, {args.rounds} rounds: median "
              f"{med:.0f} ms, max {max(latencies):.0f} ms   (goal: median < 1000 ms)")
        print(f"  baseline, next_round() in Python (no browser): median {base:.0f} ms; "
              f"browser/baseline {med / base:.2f}x")
        print(f"  one browser alone to its first round: {alone_s:.1f} s")
        print(f"  console errors during the run: {len(errors)}", flush=True)
        load = os.getloadavg()
        seconds = class_arrives(launcher.base_url, args.class_size, args.limit)
    finally:
        launcher.stop()
    reached = sorted(s for s in seconds if s is not None)
    print(f"  {args.class_size} browsers at once (load average {load[0]:.1f}): "
          f"{len(reached)} reached their first round within {args.limit:.0f} s", end="")
    if reached:
        print(f"; median {statistics.median(reached):.1f} s, slowest {reached[-1]:.1f} s "
              f"({reached[-1] / alone_s:.1f}x one alone)")
    else:
        print()
    print(f"  limit: one kernel needs {startup_cpu:.1f} s of CPU to start and show round 1 "
          f"(fresh interpreter, imports, first round); {args.class_size} of them on {cores} "
          f"cores need at least {args.class_size * startup_cpu / cores:.1f} s, before the "
          "browsers' own work and anything else running on the machine")
    return 0


if __name__ == "__main__":
    sys.exit(main())
