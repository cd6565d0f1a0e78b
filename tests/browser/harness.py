"""Drive the real ``snowprobe`` launcher and a headless Debian Chromium (tests and benchmarks).

Nothing here sleeps for a fixed time: every wait is on a condition (the server answers, a page
element says it is drawn, a file exists, a kernel is gone), with a deadline.
"""

from __future__ import annotations

import json
import os
import re
import signal
import socket
import subprocess
import sys
import threading
import time
import urllib.error
import urllib.request
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from snowprobe_widgets.launcher import PAGE_HEADER

#: Debian's Chromium; Playwright's own browser download is never used.
CHROMIUM = Path("/usr/bin/chromium")

#: Flags for a quiet, headless, offline-friendly Chromium.
CHROMIUM_ARGS: list[str] = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
]

#: JavaScript condition: the template showed the outputs and a status line reports a draw.
READY_JS = """(statusSelector) => {
  if (!document.body || document.body.getAttribute('data-sp-ready') !== 'true') return false;
  const status = document.querySelector(statusSelector);
  if (!status) return false;
  const m = /draws=(\\d+)/.exec(status.textContent);
  return !!m && Number(m[1]) >= 1
    && document.querySelectorAll('.bqplot svg').length > 0
    && document.querySelectorAll('.widget-slider, .widget-dropdown').length > 0;
}"""

#: A file every server answers without starting a kernel (the page's own script).
STATIC_PATH = "voila/static/voila.js"

#: The status line each dashboard updates after drawing.
STATUS_SELECTOR = {"design": ".sp-radargram-status", "materials": ".sp-materials-status",
                   "training": ".sp-training-status",
                   "detectability": ".sp-detectability-status", "plan": ".sp-plan-status"}


def chromium_missing_reason() -> str | None:
    """Why the browser tests cannot run here, or None when they can."""
    if not CHROMIUM.exists():
        return f"{CHROMIUM} is absent (Debian package 'chromium'; CI installs it)"
    try:
        import playwright.sync_api  # noqa: F401
    except ImportError:
        return "the Python package 'playwright' is not installed (pip install -e '.[test]')"
    return None


def free_port() -> int:
    """A TCP port on 127.0.0.1 that nothing listens on right now."""
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as probe:
        probe.bind(("127.0.0.1", 0))
        return int(probe.getsockname()[1])


def launcher_command() -> list[str]:
    """The installed ``snowprobe`` console script (or ``python -m`` if it is not on disk)."""
    script = Path(sys.executable).with_name("snowprobe")
    if script.exists():
        return [str(script)]
    return [sys.executable, "-m", "snowprobe_widgets"]


def wait_until(condition: Callable[[], Any], timeout_s: float, what: str,
               poll_s: float = 0.1) -> Any:
    """Poll ``condition`` until it returns something truthy; raise after ``timeout_s``."""
    deadline = time.monotonic() + timeout_s
    while True:
        value = condition()
        if value:
            return value
        if time.monotonic() > deadline:
            raise TimeoutError(f"not within {timeout_s:g} s: {what}")
        time.sleep(poll_s)


class _NoRedirect(urllib.request.HTTPRedirectHandler):
    def redirect_request(self, *args: Any, **kwargs: Any) -> None:
        return None


_OPENER = urllib.request.build_opener(_NoRedirect)


#: Headers of a GET for a dashboard itself: without them a dashboard address answers with
#: the waiting page (``launcher.PAGE_HEADER``), which starts no session.
DASHBOARD_REQUEST: dict[str, str] = {PAGE_HEADER: "1"}


def http_status(url: str, timeout_s: float = 5.0, headers: dict[str, str] | None = None) -> int:
    """HTTP status of a GET, redirects not followed (0 when nothing answers)."""
    try:
        request = urllib.request.Request(url, headers=headers or {})
        with _OPENER.open(request, timeout=timeout_s) as reply:
            return int(reply.status)
    except urllib.error.HTTPError as exc:
        return int(exc.code)
    except (urllib.error.URLError, OSError):
        return 0


@dataclass
class Launcher:
    """A ``snowprobe serve`` subprocess on a free loopback port.

    Parameters
    ----------
    args : sequence of str
        Extra arguments after ``serve`` (a dashboard name, ``--idle-minutes``, ...).
    workdir : pathlib.Path
        Working directory of the server (and so of its kernels).
    env : dict of str to str
        Extra environment variables of the server.
    """

    args: Sequence[str]
    workdir: Path
    port: int = field(default_factory=free_port)
    env: dict[str, str] = field(default_factory=dict)
    output: list[str] = field(default_factory=list)

    def __post_init__(self) -> None:
        command = [*launcher_command(), "serve", *self.args, "--port", str(self.port),
                   "--no-browser"]
        env = dict(os.environ, PYTHONUNBUFFERED="1", **self.env)
        self.process = subprocess.Popen(
            command, cwd=self.workdir, env=env, stdout=subprocess.PIPE,
            stderr=subprocess.STDOUT, text=True)
        self._reader = threading.Thread(target=self._read, daemon=True)
        self._reader.start()

    def _read(self) -> None:
        assert self.process.stdout is not None
        for line in self.process.stdout:
            self.output.append(line.rstrip("\n"))

    @property
    def base_url(self) -> str:
        return f"http://127.0.0.1:{self.port}/"

    def log(self) -> str:
        return "\n".join(self.output)

    def wait_ready(self, timeout_s: float = 60.0, path: str = "") -> float:
        """Poll ``path`` until it answers 200; seconds taken.

        The default, the start page of a server of all dashboards, starts no kernel; a
        server of one dashboard shows that dashboard there (a kernel per poll), so poll
        :data:`STATIC_PATH` instead.
        """
        start = time.monotonic()

        def ready() -> bool:
            if self.process.poll() is not None:
                raise RuntimeError(f"launcher exited with {self.process.returncode}:\n{self.log()}")
            return http_status(self.base_url + path, timeout_s=2.0) == 200

        wait_until(ready, timeout_s, f"launcher answering on {self.base_url}", poll_s=0.2)
        return time.monotonic() - start

    def kernel_processes(self) -> dict[str, Any]:
        """Running kernel processes of this server, keyed by kernel id (psutil objects)."""
        import psutil

        found = {}
        try:
            children = psutil.Process(self.process.pid).children(recursive=True)
        except psutil.NoSuchProcess:
            return {}
        for child in children:
            try:
                command = " ".join(child.cmdline())
            except (psutil.NoSuchProcess, psutil.ZombieProcess, psutil.AccessDenied):
                continue
            match = re.search(r"kernel-([0-9a-f-]{36})\.json", command)
            if match and "ipykernel" in command and child.status() != psutil.STATUS_ZOMBIE:
                found[match.group(1)] = child
        return found

    def kernel_status(self, kernel_id: str) -> int:
        """HTTP status of the server's record of a kernel: 200 alive, 404 gone."""
        return http_status(f"{self.base_url}api/kernels/{kernel_id}")

    def stop(self, timeout_s: float = 30.0) -> int:
        """Ctrl-C the server (SIGINT) and wait for it; kill it if it does not stop."""
        if self.process.poll() is None:
            self.process.send_signal(signal.SIGINT)
            try:
                self.process.wait(timeout=timeout_s)
            except subprocess.TimeoutExpired:
                self.process.kill()
                self.process.wait(timeout=10)
        self._reader.join(timeout=5)
        return int(self.process.returncode)


@dataclass
class PageRecord:
    """What a page did: every request URL, console errors, uncaught page errors."""

    requests: list[str] = field(default_factory=list)
    console_errors: list[str] = field(default_factory=list)
    page_errors: list[str] = field(default_factory=list)

    def attach(self, page: Any) -> None:
        page.on("request", lambda request: self.requests.append(request.url))
        page.on("console", lambda msg: msg.type == "error" and self.console_errors.append(
            f"{msg.text} @ {msg.location.get('url', '')}"))
        page.on("pageerror", lambda exc: self.page_errors.append(str(exc)))

    def foreign_requests(self, base_url: str) -> list[str]:
        """Requests for anything not on the server (data: URLs and its own blobs are local)."""
        origin = base_url.rstrip("/")
        local = (origin + "/", "data:", f"blob:{origin}/")
        return [url for url in self.requests if not url.startswith(local)]


def dashboard_url(base_url: str, name: str) -> str:
    """Address of a dashboard on a server that serves them all."""
    return f"{base_url}voila/render/{name}.ipynb"


def open_dashboard(context: Any, base_url: str, name: str,
                   timeout_s: float = 60.0) -> tuple[Any, PageRecord, float]:
    """Open a dashboard in a new page; return the page, its record and seconds to first render.

    First render: the template shows the outputs, the dashboard's status line reports a draw,
    and at least one plot and one control are in the page.
    """
    page = context.new_page()
    record = PageRecord()
    record.attach(page)
    start = time.perf_counter()
    page.goto(dashboard_url(base_url, name), wait_until="commit", timeout=timeout_s * 1000)
    page.wait_for_function(READY_JS, arg=STATUS_SELECTOR[name], timeout=timeout_s * 1000,
                           polling=50)
    return page, record, time.perf_counter() - start


def kernel_id_of(page: Any) -> str:
    """The kernel id the page is connected to (from the page configuration)."""
    text = page.locator("#jupyter-config-data").first.text_content()
    return str(json.loads(text)["kernelId"])


def draws(page: Any, selector: str) -> int:
    """The ``draws=N`` counter of a status line."""
    match = re.search(r"draws=(\d+)", page.locator(selector).first.text_content() or "")
    return int(match.group(1)) if match else -1


def open_concurrently(base_url: str, name: str, count: int, timeout_s: float,
                      while_open: Callable[[list[str]], Any] | None = None
                      ) -> tuple[list[float], list[str], Any]:
    """Open ``count`` sessions of a dashboard at the same moment, each in its own context.

    Runs Playwright's asyncio API in a worker thread (the sync API cannot start several
    navigations at once). Returns the seconds to first render of each session, their kernel
    ids, and what ``while_open(kernel_ids)`` returned while all pages were still open. The
    pages are closed before returning, as visitors leaving would.
    """
    import asyncio

    from playwright.async_api import async_playwright

    async def one(browser: Any) -> tuple[float, str, Any]:
        context = await browser.new_context(viewport={"width": 1500, "height": 1100})
        page = await context.new_page()
        start = time.perf_counter()
        await page.goto(dashboard_url(base_url, name), wait_until="commit",
                        timeout=timeout_s * 1000)
        await page.wait_for_function(READY_JS, arg=STATUS_SELECTOR[name],
                                     timeout=timeout_s * 1000, polling=100)
        seconds = time.perf_counter() - start
        text = await page.locator("#jupyter-config-data").first.text_content()
        return seconds, str(json.loads(text)["kernelId"]), context

    async def run() -> tuple[list[float], list[str], Any]:
        async with async_playwright() as playwright:
            browser = await playwright.chromium.launch(executable_path=str(CHROMIUM),
                                                       args=CHROMIUM_ARGS)
            try:
                results = await asyncio.gather(*(one(browser) for _ in range(count)))
                ids = [kernel for _s, kernel, _c in results]
                extra = while_open(ids) if while_open is not None else None
                for _s, _k, context in results:
                    await context.close()
                return [s for s, _k, _c in results], ids, extra
            finally:
                await browser.close()

    box: dict[str, Any] = {}

    def worker() -> None:
        try:
            box["result"] = asyncio.run(run())
        except BaseException as exc:  # handed to the caller's thread
            box["error"] = exc

    thread = threading.Thread(target=worker)
    thread.start()
    thread.join()
    if "error" in box:
        raise box["error"]
    return box["result"]
