"""Design dashboard in a real browser: slider-to-picture latency, first render, kernel memory.

Run by hand (not collected by pytest)::

    python tests/benchmarks/bench_dashboard.py [--moves 30] [--renders 3]

``--renders 0`` measures the moves only (no first renders, no ``--warm`` server).
``--gap-ms 300`` pauses after each painted picture, as a person tapping the arrow key; by
default the next key follows the paint at once, so a move may also wait for the views that
follow the last picture (:attr:`ScenarioExplorer.views_follow_s`).

Starts the real ``snowprobe`` launcher on a free loopback port and Debian's headless Chromium.

* Slider to picture: a key press on the person-depth slider (dispatched inside the page, so
  no automation round trip is counted; the depth walks 12 steps deeper and back, so each
  move but the turns shows a new picture) until the radargram's status says ``draws=N+1``, the
  picture's image has been replaced, and two animation frames have passed (the new picture is
  painted). One move at a time. Baseline, same run: the same move made in Python on a
  ``ScenarioExplorer`` in this process (model + PNG, no browser, no kernel messages).
* First render: navigation start until the page shows the outputs with a drawn radargram;
  each visit starts a fresh kernel. Also with ``--warm`` (a session made ready in advance).
* Split of a move (medians): when the key's message leaves the page, when the kernel made
  the picture's message (the move's largest; its header's date), when that message arrives,
  when the picture is set in the page, and the two frames until it is painted.
* Memory: resident set of the design kernel after the moves, and of the server.
* Load: the machine's load average before and after (timings are upper bounds under load).

Goals: median latency <= 80 ms (issue 12: not slower than ~80 ms), 95th percentile < 200 ms,
first render < 5 s, kernel < 300 MB. Where a move's time goes: DEVELOPERS.md, "What a
person move costs".
"""

from __future__ import annotations

import argparse
import os
import statistics
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "browser"))

from harness import (  # noqa: E402
    CHROMIUM,
    CHROMIUM_ARGS,
    Launcher,
    chromium_missing_reason,
    kernel_id_of,
    open_dashboard,
    wait_until,
)

#: Page script recording every websocket message: arrival time and size of each message in,
#: the time each message out leaves, and for large messages (the picture) the time the
#: kernel made it (its header's date: kernel and browser share this machine's clock). So
#: a move splits into: key to message out, on to the kernel's picture, on to its arrival,
#: on to the picture set in the page, on to the paint.
WS_SPY_JS = """(() => {
  const Orig = window.WebSocket;
  const decoder = new TextDecoder();
  window.__spArrivals = [];
  window.__spSent = [];
  const clock = () => performance.now();
  const madeAt = (d) => {  // the kernel's date of a message, on the page's clock
    try {
      let header;
      if (typeof d === 'string') {
        header = JSON.parse(d).header;
      } else {  // the binary websocket protocol: offsets, then channel, header, ...
        const view = new DataView(d);
        const a = Number(view.getBigUint64(16, true)), b = Number(view.getBigUint64(24, true));
        header = JSON.parse(decoder.decode(new Uint8Array(d, a, b - a)));
      }
      return Date.parse(header.date) - performance.timeOrigin;
    } catch (e) { return NaN; }
  };
  window.WebSocket = class extends Orig {
    constructor(...args) {
      super(...args);
      this.addEventListener('message', e => {
        const d = e.data, t = clock();
        const n = typeof d === 'string' ? d.length : (d.byteLength || d.size || 0);
        window.__spArrivals.push([t, n, n > 8000 ? madeAt(d) : NaN]);
      });
    }
    send(d) { window.__spSent.push(clock()); return super.send(d); }
  };
})();"""

#: Steps the depth walks one way before it turns (12 x 5 cm from the default 0.6 m stays
#: within the snowpack for every version of the dashboard).
WALK = 12

MOVES_JS = """async ([moves, gapMs]) => {
  const WALK = """ + str(WALK) + """;
  const status = document.querySelector('.sp-radargram-status');
  const figure = status.closest('.widget-vbox');
  const handle = document.querySelector('.sp-person-depth .noUi-handle');
  const count = () => Number(/draws=(\\d+)/.exec(status.textContent)[1]);
  const href = () => figure.querySelector('svg image').getAttribute('href');
  const frame = () => new Promise(r => requestAnimationFrame(() => r()));
  const out = [];
  for (let i = 0; i < moves; i++) {
    if (gapMs > 0) await new Promise(r => setTimeout(r, gapMs));
    const n0 = count(), h0 = href();
    const done = new Promise(resolve => {
      const check = () => {
        if (count() > n0 && href() !== h0) { observer.disconnect(); resolve(); return true; }
        return false;
      };
      const observer = new MutationObserver(check);
      observer.observe(figure, {subtree: true, attributes: true, childList: true,
                                characterData: true});
      check();
    });
    const seen = (window.__spArrivals || []).length, sent = (window.__spSent || []).length;
    // WALK steps deeper, then WALK back, and again: every move but the turns shows a new
    // depth (going back and forth would show the picture of two moves ago again, which
    // the view's second image widget still holds, so the kernel would not send it)
    const k = window.__spSteps = (window.__spSteps || 0) + 1;
    const deeper = Math.floor((k - 1) / WALK) % 2 === 0;
    const t0 = performance.now();
    handle.dispatchEvent(new KeyboardEvent('keydown', {
      key: deeper ? 'ArrowRight' : 'ArrowLeft', bubbles: true}));
    await done;
    const tSet = performance.now() - t0;
    await frame(); await frame();
    const total = performance.now() - t0;
    const msgs = (window.__spArrivals || []).slice(seen).filter(([t]) => t - t0 <= tSet);
    const big = msgs.length ? msgs.reduce((a, b) => (b[1] > a[1] ? b : a)) : [NaN, 0, NaN];
    const out0 = (window.__spSent || [])[sent];
    out.push([total, big[0] - t0, tSet, (out0 === undefined ? NaN : out0 - t0), big[2] - t0]);
  }
  return out;
}"""


def python_baseline_ms(moves: int) -> list[float]:
    """The same depth moves on a ScenarioExplorer in this process (no browser, no kernel)."""
    from snowprobe_widgets.widgets import ScenarioExplorer

    app = ScenarioExplorer()
    slider = app.person.depth
    start_value = slider.value
    times = []
    for i in range(moves):
        before = app.radargram_view.draws
        t0 = time.perf_counter()
        slider.value = start_value + (slider.step if i % 2 == 0 else 0.0)
        times.append((time.perf_counter() - t0) * 1e3)
        assert app.radargram_view.draws > before, "the move did not redraw"
    return times


def first_renders(browser, launcher: Launcher, count: int) -> list[float]:
    seconds = []
    for _ in range(count):
        context = browser.new_context(viewport={"width": 1500, "height": 1100})
        _page, _record, s = open_dashboard(context, launcher.base_url, "design", 120)
        seconds.append(s)
        context.close()
    return seconds


def wait_pool_ready(launcher: Launcher, kernels: int, timeout_s: float = 120) -> None:
    """Wait until ``kernels`` kernels run and are idle (the warm pool has run the notebooks)."""
    import json
    import urllib.request

    def idle() -> bool:
        ids = list(launcher.kernel_processes())
        if len(ids) < kernels:
            return False
        for kernel_id in ids:
            with urllib.request.urlopen(f"{launcher.base_url}api/kernels/{kernel_id}") as r:
                if json.load(r)["execution_state"] != "idle":
                    return False
        return True

    wait_until(idle, timeout_s, "warm sessions ready", poll_s=0.5)


def percentile(values: list[float], q: float) -> float:
    return float(np.percentile(np.asarray(values), q))


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--moves", type=int, default=30)
    parser.add_argument("--renders", type=int, default=3)
    parser.add_argument("--gap-ms", type=float, default=0.0,
                        help="pause after each painted picture before the next key press")
    args = parser.parse_args()
    reason = chromium_missing_reason()
    if reason:
        print(f"cannot run: {reason}")
        return 1
    from playwright.sync_api import sync_playwright

    load_before = os.getloadavg()[0]
    baseline = python_baseline_ms(args.moves)
    workdir = Path(tempfile.mkdtemp(prefix="bench-dashboard-"))
    with sync_playwright() as playwright:
        browser = playwright.chromium.launch(executable_path=str(CHROMIUM), args=CHROMIUM_ARGS)
        cold = Launcher(args=["--max-sessions", "16"], workdir=workdir)
        try:
            ready_s = cold.wait_ready()
            renders = first_renders(browser, cold, args.renders)
            context = browser.new_context(viewport={"width": 1500, "height": 1100})
            context.add_init_script(WS_SPY_JS)
            page, record, _s = open_dashboard(context, cold.base_url, "design", 120)
            page.evaluate(MOVES_JS, [3, args.gap_ms])  # warm-up moves, not counted
            moves = page.evaluate(MOVES_JS, [args.moves, args.gap_ms])
            latencies = [m[0] for m in moves]
            kernel = cold.kernel_processes()[kernel_id_of(page)]
            kernel_mb = kernel.memory_info().rss / 2**20
            import psutil

            server_mb = psutil.Process(cold.process.pid).memory_info().rss / 2**20
            errors = record.console_errors + record.page_errors
            context.close()
        finally:
            cold.stop()
        warm_render = float("nan")
        if args.renders > 0:
            warm = Launcher(args=["--warm"], workdir=workdir)
            try:
                warm.wait_ready()
                wait_pool_ready(warm, kernels=2)
                warm_render = first_renders(browser, warm, 1)[0]
            finally:
                warm.stop()
        browser.close()

    med, p95 = statistics.median(latencies), percentile(latencies, 95)
    base_med = statistics.median(baseline)
    pace = f"{args.gap_ms:g} ms apart" if args.gap_ms > 0 else "each on the last one's paint"
    print(f"design dashboard, {args.moves} slider moves, one at a time ({pace}); load average "
          f"{load_before:.1f} before, {os.getloadavg()[0]:.1f} after ({os.cpu_count()} cores)")
    print(f"  slider to painted picture: median {med:.0f} ms, p95 {p95:.0f} ms, "
          f"max {max(latencies):.0f} ms   (goal: median <= 80, p95 < 200)")
    split = [statistics.median(m[j] for m in moves) for j in (3, 4, 1, 2, 0)]
    print("  split (medians, ms after the key): message to the kernel leaves {:.1f}, picture "
          "made in the kernel {:.1f}, its message arrives {:.1f}, picture set {:.1f}, painted "
          "(two frames) {:.1f}".format(*split))
    print(f"  baseline, same move in Python (no browser): median {base_med:.1f} ms; "
          f"browser/baseline ratio {med / base_med:.1f}x")
    print(f"  server ready (start page answers) after {ready_s:.1f} s")
    if renders:
        print(f"  first render, fresh kernel: {', '.join(f'{s:.2f}' for s in renders)} s "
              f"(median {statistics.median(renders):.2f} s; goal < 5 s)")
        print(f"  first render with --warm (session ready in advance): {warm_render:.2f} s")
    print(f"  design kernel resident memory after the moves: {kernel_mb:.0f} MB (goal < 300); "
          f"server {server_mb:.0f} MB")
    print(f"  console errors during the run: {len(errors)}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
