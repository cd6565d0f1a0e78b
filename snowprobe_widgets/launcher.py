"""The ``snowprobe`` command: list the packaged dashboards and serve them through Voila.

``snowprobe list`` names the dashboards, ``snowprobe serve [NAME]`` serves one (or all of
them) on this computer, ``snowprobe sweep SPEC.json --out RESULT.nc`` runs a batch
detection-probability sweep (:mod:`snowprobe_widgets.sweep_spec`), ``snowprobe --version``
prints the version. The dashboards are the
notebooks of the ``snowprobe_widgets.dashboards`` package (the repository's ``dashboards/``
folder, shipped inside the wheel), shown through the package's own Voila template so the
page loads nothing from beyond the server.

Serving is careful with the machine it runs on: every page load starts a Python kernel,
so a session whose page never connects, or whose page closed, is ended within a minute
(:data:`RELEASE_AFTER_S`), a connected page idle for ``--idle-minutes`` is ended too, a
reload frees the older sessions of the same browser, and at most ``--max-sessions`` run at
once (a visitor beyond that gets a page saying when to try again). Each kernel's memory is
bounded (``--kernel-memory-mb``, enforced on the kernel process) and its work per update is
bounded from it (:mod:`snowprobe_widgets.serving`). Kernels know they are served
(``SNOWPROBE_SERVED=1``): their pages upload and download files and never name a server path.

The server binds to 127.0.0.1 unless ``--host`` names another address; then token
authentication is on, the token is printed once, and a warning says that each visitor gets
a kernel here. ``--token`` asks for the token on loopback too (other accounts on a shared
computer can reach a loopback address).

Voila and the Jupyter server are imported only by ``serve``, so ``list`` and ``--version``
start in a few tens of milliseconds.
"""

from __future__ import annotations

import argparse
import errno
import ipaddress
import json
import math
import os
import secrets
import signal
import socket
import sys
import threading
import time
import webbrowser
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from snowprobe_widgets import __version__, serving
from snowprobe_widgets.cautions import CAUTION_TEXT

#: Exit status of a usage error (bad option, unknown dashboard, port in use).
EXIT_USAGE: int = 2

#: Name of the package's Voila template (``voila_template/voila/templates/<name>``).
TEMPLATE_NAME: str = "snowprobe"

#: Default TCP port of ``snowprobe serve``.
DEFAULT_PORT: int = 8750

#: Default idle time, in minutes, after which a session's kernel is ended.
DEFAULT_IDLE_MINUTES: float = 15.0

#: Default upper bound on the number of kernels running at once.
DEFAULT_MAX_SESSIONS: int = 8

#: A session whose page closed is ended this long after its last activity, seconds (or
#: after ``--idle-minutes`` when that is shorter).
RELEASE_AFTER_S: float = 45.0

#: A session whose page never connected is ended this long after its last activity (the
#: end of the page's delivery), seconds: a plain GET without a browser holds a slot for no
#: longer, and a browser slowed by a busy machine still has a minute to connect.
NEVER_CONNECTED_S: float = 60.0

#: How often the launcher looks for sessions to release, seconds.
RELEASE_CHECK_S: float = 5.0

#: Sessions one browser may hold on one dashboard; a further page of it frees the oldest.
SESSIONS_PER_BROWSER: int = 2

#: How long the server waits for a cell's outputs after the kernel's reply, seconds.
IOPUB_WAIT_S: int = 300

#: A warm session taken by a visitor is replaced this long afterwards, seconds: a class
#: arriving together first gets its pages drawn (the browsers need the cores then), and
#: the replacements start after.
WARM_REFILL_DELAY_S: float = 20.0

#: What the launcher prints, after the count, each time all its warm sessions are ready.
WARM_READY_SAYS: str = "warm sessions ready (started and drawn)"

#: ``--warm`` without a number: size the warm pools from the session cap.
WARM_FROM_CAP: int = -1

#: A connected page that has not drawn its dashboard this long after its outputs arrived
#: says so and loads again by itself, seconds (:data:`DRAW_DEADLINE_ENV` overrides it).
DRAW_DEADLINE_S: float = 120.0

#: Environment variable that sets :data:`DRAW_DEADLINE_S` for a server (the browser
#: tests use a short one to watch a page recover).
DRAW_DEADLINE_ENV: str = "SNOWPROBE_DRAW_DEADLINE_S"

#: Cookie naming a browser (a random id, nothing else), so a reload can free its sessions.
VISITOR_COOKIE: str = "snowprobe_visitor"

#: Largest message a page may send, bytes (an upload of a scenario file is at most 2 MB).
MAX_PAGE_MESSAGE_BYTES: int = 4 * 2**20

#: Address space a kernel needs beyond its working memory (code, libraries, thread stacks),
#: MiB: measured at about 450 MiB for a design-dashboard kernel (tests/benchmarks/
#: bench_crowd.py), with room.
KERNEL_BASE_ADDRESS_SPACE_MB: int = 1024

#: Content-Security-Policy of every page: the browser itself refuses anything that is not
#: from this server (the page must work offline; a stray CDN link fails loudly in tests).
PAGE_POLICY: str = (
    "default-src 'self'; script-src 'self' 'unsafe-inline' 'unsafe-eval'; "
    "style-src 'self' 'unsafe-inline'; img-src 'self' data: blob:; font-src 'self' data:; "
    "connect-src 'self'; frame-ancestors 'self'; form-action 'self'; base-uri 'self'"
)

#: The page's LaTeX typesetter (under the server's base address): a script of the template
#: that typesets nothing. The dashboards show no mathematics, yet the widget library hands
#: every control label to the typesetter, and the stock one loaded all of MathJax (about
#: 880 kB of script, started in every visitor's browser).
NO_MATH_SCRIPT: str = f"voila/templates/{TEMPLATE_NAME}/static/no-math.js"

#: Header of the waiting page's request for the dashboard itself. A browser's visit first
#: gets a small complete page (template ``waiting.html``) that asks for the dashboard with
#: this header and shows it when it has come: a document still loading kept each waiting
#: headless browser busy (about 0.1 CPU-s per second of waiting, its loading indicator),
#: which with a class arriving together was most of the machine. A request without the
#: header starts no session.
PAGE_HEADER: str = "X-Snowprobe-Page"

_PACKAGE_DIR = Path(__file__).resolve().parent
_TEMPLATE_ROOT = _PACKAGE_DIR / "voila_template"
_LOOPBACK_NAMES = {"localhost", "localhost.localdomain", "ip6-localhost"}


#: The part of ``snowprobe serve --help`` that says who can reach the page.
SERVE_EPILOG: str = """\
who can reach the page:
  default (--host 127.0.0.1, no --token)
      every program and every user account on THIS computer, without a password;
      no other machine. On a shared computer, add --token.
  --token (on 127.0.0.1)
      only whoever has the printed address with its token, on this computer.
  --host ADDRESS (any other address, e.g. 0.0.0.0)
      other machines on the network too, always with the token. Everyone with the
      address and token gets a session here: share it only with people you trust.
  In every mode the page cannot open or write files on this computer by name:
  scenarios come in by upload and results leave as downloads.

serving more people:
  each session costs the server about 4 CPU-seconds to start and draw (kernel
  and server) and about 140 MB (proportional memory; 190 MB resident); each
  visitor's browser needs about 4 CPU-seconds more. Visitors arriving together
  wait about (visitors x those costs / cores). --warm starts sessions before
  people arrive. For more, use more cores, several servers behind a proxy, or
  JupyterHub (see the README).
"""


class LauncherError(Exception):
    """A problem the person at the keyboard can fix; printed as one line, exit status 2."""


@dataclass(frozen=True)
class Dashboard:
    """One packaged dashboard notebook.

    Attributes
    ----------
    name : str
        Short name used on the command line (the notebook's file stem).
    title : str
        Title shown in the page masthead and the list.
    summary : str
        One plain-language sentence on what the dashboard is for.
    path : pathlib.Path
        The notebook file inside the installed package.
    order : int
        Position in listings (smaller first).
    """

    name: str
    title: str
    summary: str
    path: Path
    order: int = 100


@dataclass(frozen=True)
class ServeOptions:
    """What ``snowprobe serve`` was asked for, after validation.

    Attributes
    ----------
    dashboard : Dashboard or None
        The dashboard to serve alone, or None to serve them all behind a start page.
    host : str
        Address to bind; loopback unless the person asked for another.
    port : int
        TCP port (0: any free port).
    idle_s : float
        Idle time after which a kernel with no open page is ended, in seconds.
    max_sessions : int
        Most kernels running at once; a visitor beyond that gets a "busy" page.
    warm : int
        Sessions per dashboard started and run in advance, before anyone asks (0: none).
        A visitor gets one of them as a finished page; it is replaced
        :data:`WARM_REFILL_DELAY_S` later. Each idle one costs a kernel's memory.
    open_browser : bool
        Open the address in this computer's web browser.
    workdir : pathlib.Path
        Working directory of the kernels.
    verbose : bool
        Show the server's own log lines.
    token_required : bool
        Ask for a token even on a loopback address (always on for other addresses).
    kernel_memory_mb : float or None
        Working memory each kernel may use, MiB (None: from this computer's memory and
        ``max_sessions``, :func:`default_kernel_memory_mb`).
    """

    dashboard: Dashboard | None
    host: str
    port: int
    idle_s: float
    max_sessions: int
    warm: int
    open_browser: bool
    workdir: Path
    verbose: bool
    token_required: bool = False
    kernel_memory_mb: float | None = None

    @property
    def remote(self) -> bool:
        """True when the address can be reached from other machines."""
        return not is_loopback(self.host)

    @property
    def uses_token(self) -> bool:
        """True when visitors need the token (remote address or ``--token``)."""
        return self.remote or self.token_required

    @property
    def memory_mb(self) -> float:
        """Working memory per kernel, MiB."""
        if self.kernel_memory_mb is not None:
            return self.kernel_memory_mb
        return default_kernel_memory_mb(self.max_sessions)


def physical_memory_mb() -> float:
    """This computer's physical memory, MiB (4096 when the system does not say)."""
    try:
        return os.sysconf("SC_PHYS_PAGES") * os.sysconf("SC_PAGE_SIZE") / 2**20
    except (ValueError, OSError, AttributeError):
        return 4096.0


def default_kernel_memory_mb(max_sessions: int) -> float:
    """Working memory per kernel: 70 % of this computer's memory, less 400 MiB for the
    server, shared by ``max_sessions`` kernels; at least 256 MiB, at most 4 GiB."""
    share = (0.7 * physical_memory_mb() - 400.0) / max(1, max_sessions)
    return float(min(max(share, 256.0), 4096.0))


# ----------------------------------------------------------------------------- dashboards


def dashboards_dir() -> Path:
    """The folder of the packaged dashboard notebooks."""
    import snowprobe_widgets.dashboards as package

    return Path(package.__file__).resolve().parent


def find_dashboards() -> dict[str, Dashboard]:
    """The packaged dashboards, keyed by name, in listing order.

    Every ``*.ipynb`` in :func:`dashboards_dir` is a dashboard; its title is the notebook's
    ``metadata.title`` and its summary and order come from ``metadata.snowprobe``.
    """
    found = []
    for path in sorted(dashboards_dir().glob("*.ipynb")):
        try:
            metadata = json.loads(path.read_text(encoding="utf-8")).get("metadata", {})
        except (OSError, ValueError) as exc:
            raise LauncherError(f"dashboard notebook {path} cannot be read: {exc}") from exc
        extra = metadata.get("snowprobe", {})
        found.append(
            Dashboard(
                name=path.stem,
                title=str(metadata.get("title", path.stem)),
                summary=str(extra.get("summary", "")),
                path=path,
                order=int(extra.get("order", 100)),
            )
        )
    found.sort(key=lambda board: (board.order, board.name))
    return {board.name: board for board in found}


def is_loopback(host: str) -> bool:
    """True when ``host`` names this machine only (127.0.0.0/8, ::1, localhost)."""
    if host.lower() in _LOOPBACK_NAMES:
        return True
    try:
        return ipaddress.ip_address(host).is_loopback
    except ValueError:
        return False


def check_port_free(host: str, port: int) -> None:
    """Raise :class:`LauncherError` when ``port`` on ``host`` cannot be bound.

    Binds the way the server will (address reuse on, so a port in TIME_WAIT counts as
    free), then releases the port at once.
    """
    try:
        infos = socket.getaddrinfo(host, port, type=socket.SOCK_STREAM, flags=socket.AI_PASSIVE)
    except socket.gaierror as exc:
        raise LauncherError(f"--host {host!r} is not an address of this machine ({exc})") from exc
    family, kind, proto, _name, address = infos[0]
    with socket.socket(family, kind, proto) as probe:
        probe.setsockopt(socket.SOL_SOCKET, socket.SO_REUSEADDR, 1)
        try:
            probe.bind(address)
        except OSError as exc:
            if exc.errno == errno.EADDRINUSE:
                raise LauncherError(
                    f"port {port} on {host} is already in use; choose another with --port"
                ) from exc
            raise LauncherError(f"cannot listen on {host} port {port}: {exc.strerror}") from exc


# ----------------------------------------------------------------------------- the server


def draw_deadline_s() -> float:
    """:data:`DRAW_DEADLINE_S`, or the value of :data:`DRAW_DEADLINE_ENV` (1 to 3600 s)."""
    text = os.environ.get(DRAW_DEADLINE_ENV, "")
    try:
        value = float(text)
    except ValueError:
        return DRAW_DEADLINE_S
    return min(max(value, 1.0), 3600.0) if math.isfinite(value) else DRAW_DEADLINE_S


def _page_config_hook(boards: Sequence[Dashboard]) -> Callable[..., dict]:
    """A Voila page-config hook adding what the template shows (cautions, dashboard list)."""
    listing = [
        {"name": b.name, "title": b.title, "summary": b.summary, "file": b.path.name}
        for b in boards
    ]

    def hook(page_config: dict, base_url: str = "/", **_ignored: Any) -> dict:
        # a typesetter that typesets nothing instead of MathJax (see NO_MATH_SCRIPT)
        page_config["fullMathjaxUrl"] = f"{base_url.rstrip('/')}/{NO_MATH_SCRIPT}"
        page_config["mathjaxConfig"] = "none"
        page_config["snowprobe"] = {
            "caution": CAUTION_TEXT,
            "version": __version__,
            "dashboards": listing,
            "drawDeadlineS": draw_deadline_s(),
        }
        return page_config

    return hook


#: When each browser last asked the server for anything (its page's scripts, the kernel
#: record): a page still loading on a busy machine keeps its session this way.
_VISITOR_SEEN: dict[str, float] = {}


def _visitor_of(cookie_header: str) -> str | None:
    """The browser id in a Cookie header (None when absent or malformed)."""
    for part in cookie_header.split(";"):
        name, _, value = part.strip().partition("=")
        if name == VISITOR_COOKIE and 16 <= len(value) <= 64 and value.isalnum():
            return value
    return None


def _visitor_transform() -> type:
    """A tornado output transform giving every browser a random id cookie.

    It runs before the handler: a request without the cookie gets a fresh id in its own
    Cookie header (so the kernel it starts is filed under that id) and in the response.
    """
    import tornado.web

    class VisitorCookie(tornado.web.OutputTransform):
        def __init__(self, request: Any) -> None:
            super().__init__(request)
            self._new: str | None = None
            visitor = _visitor_of(request.headers.get("Cookie", ""))
            if visitor is not None:
                _VISITOR_SEEN[visitor] = time.time()
            else:
                self._new = secrets.token_hex(16)
                old = request.headers.get("Cookie", "")
                request.headers["Cookie"] = (f"{old}; " if old else "") + \
                    f"{VISITOR_COOKIE}={self._new}"

        def transform_first_chunk(self, status_code: int, headers: Any, chunk: bytes,
                                  finishing: bool) -> tuple[int, Any, bytes]:
            if self._new is not None:
                headers.add("Set-Cookie", f"{VISITOR_COOKIE}={self._new}; Path=/; "
                                          "HttpOnly; SameSite=Strict")
            return status_code, headers, chunk

    return VisitorCookie


def _kernel_manager_class(options: ServeOptions) -> type:
    """A Jupyter kernel manager that keeps the number and size of sessions bounded.

    * at most ``options.max_sessions`` kernels; beyond that a 503 page saying when one is
      expected to free up;
    * a kernel whose page closed is ended :data:`RELEASE_AFTER_S` after its last
      activity, one whose page never connected (a GET without a browser) after
      :data:`NEVER_CONNECTED_S`;
    * a new page of a dashboard frees the same browser's disconnected sessions of it, and
      its oldest beyond :data:`SESSIONS_PER_BROWSER` (a reload storm holds two slots);
    * each kernel process gets an address-space limit (``resource.prlimit``) so that a
      runaway allocation fails inside that kernel, not the machine;
    * kernels run in ``options.workdir`` rather than in the package folder.
    """

    from jupyter_server.services.kernels.kernelmanager import AsyncMappingKernelManager
    from tornado.ioloop import PeriodicCallback
    from tornado.web import HTTPError

    max_sessions = options.max_sessions
    release_s = min(RELEASE_AFTER_S, options.idle_s)
    address_space = int((options.memory_mb + KERNEL_BASE_ADDRESS_SPACE_MB) * 2**20)

    class BoundedKernelManager(AsyncMappingKernelManager):
        _starting = 0
        _release_callback: Any = None
        _warm_said = False

        def __init__(self, *args: Any, **kwargs: Any) -> None:
            super().__init__(*args, **kwargs)
            self._owner: dict[str, tuple[str, str]] = {}
            self._started: dict[str, float] = {}
            self._last_connected: dict[str, float] = {}
            self._was_pooled: set[str] = set()

        def cwd_for_path(self, path: str, **kwargs: Any) -> str:
            return str(options.workdir)

        def _pool_results(self) -> list[dict]:
            """What Voila's pools hold for the sessions already started: one dict each
            (its ``kernel_id`` and the ``task`` running its notebook)."""
            found = []
            for pool in (getattr(self, "_pools", {}) or {}).values():
                for item in pool:
                    done = getattr(item, "done", None)
                    if done is None or not done() or item.cancelled() or item.exception():
                        continue
                    found.append(item.result())
            return found

        def warm_ready(self) -> int:
            """Warm sessions whose notebook has run to the end: pages ready to hand out."""
            ready = 0
            for started in self._pool_results():
                run = started.get("task")
                if run is not None and run.done() and not run.cancelled() \
                        and run.exception() is None:
                    ready += 1
            return ready

        def _say_when_warm(self) -> None:
            """Print one line each time every warm session has become ready (the operator
            then knows a class can come; ``bench_crowd.py --warm`` waits for it)."""
            wanted = options.warm * len(getattr(self, "_pools", None) or {})
            ready = self.warm_ready()
            if wanted and ready >= wanted and not self._warm_said:
                print(f"snowprobe: {ready} {WARM_READY_SAYS}", flush=True)
            self._warm_said = bool(wanted) and ready >= wanted

        def _pooled(self) -> set[str]:
            """Kernels Voila keeps warm for future visitors (never released here).

            Voila's pools hold tasks whose result names the kernel. A kernel that left
            the pool since the last look was just handed to a visitor: its time without
            a page counts from now, not from when it was started in advance.
            """
            ids: set[str] = set()
            for started in self._pool_results():
                kernel_id = started.get("kernel_id")
                if isinstance(kernel_id, str):
                    ids.add(kernel_id)
            now = time.time()
            for kernel_id in self._was_pooled - ids:
                if kernel_id in self._started:
                    self._started[kernel_id] = now
            self._was_pooled = ids
            return ids

        def _quiet_s(self, kernel_id: str, now: float) -> float | None:
            """Seconds since the kernel had a page or activity; None while a page is open."""
            if self._kernel_connections.get(kernel_id, 0) > 0:
                self._last_connected[kernel_id] = now
                return None
            kernel = self._kernels.get(kernel_id)
            activity = getattr(kernel, "last_activity", None)
            owner = self._owner.get(kernel_id)
            last = max(self._started.get(kernel_id, now),
                       _VISITOR_SEEN.get(owner[0], 0.0) if owner else 0.0,
                       self._last_connected.get(kernel_id, 0.0),
                       activity.timestamp() if activity is not None else 0.0)
            return now - last

        def _grace_s(self, kernel_id: str) -> float:
            """How long a session may be without a page: longer if it never had one."""
            return release_s if kernel_id in self._last_connected else NEVER_CONNECTED_S

        async def release_unattended(self) -> list[str]:
            """End kernels with no page for :data:`RELEASE_AFTER_S`; return their ids."""
            now = time.time()
            pooled = self._pooled()
            ended = []
            for kernel_id in list(self._kernels):
                if kernel_id in pooled or kernel_id not in self._started:
                    continue
                quiet = self._quiet_s(kernel_id, now)
                if quiet is not None and quiet > self._grace_s(kernel_id):
                    ended.append(kernel_id)
            for kernel_id in ended:
                self.log.info("snowprobe: ending session %s (no page for %.0f s)",
                              kernel_id, release_s)
                await self._end(kernel_id)
            return ended

        async def _end(self, kernel_id: str) -> None:
            self._owner.pop(kernel_id, None)
            self._started.pop(kernel_id, None)
            self._last_connected.pop(kernel_id, None)
            if kernel_id in self._kernels:
                try:
                    await self.shutdown_kernel(kernel_id)
                except Exception as exc:  # already gone: nothing to free
                    self.log.debug("snowprobe: session %s: %s", kernel_id, exc)

        async def _free_for(self, owner: tuple[str, str]) -> None:
            """Free the browser's earlier sessions of the same page (see the class notes)."""
            mine = sorted((k for k, o in self._owner.items() if o == owner),
                          key=lambda k: self._started.get(k, 0.0))
            connected = [k for k in mine if self._kernel_connections.get(k, 0) > 0]
            for kernel_id in mine:
                if kernel_id not in connected:
                    await self._end(kernel_id)
            for kernel_id in connected[:max(0, len(connected) - SESSIONS_PER_BROWSER + 1)]:
                await self._end(kernel_id)

        def retry_after_s(self) -> int:
            """When a session is expected to free up, seconds (for the busy page)."""
            now = time.time()
            waits = []
            for kernel_id in self._kernels:
                quiet = self._quiet_s(kernel_id, now)
                if quiet is not None:
                    waits.append(max(self._grace_s(kernel_id) - quiet, 0.0) + RELEASE_CHECK_S)
                else:
                    kernel = self._kernels.get(kernel_id)
                    activity = getattr(kernel, "last_activity", None)
                    idle = now - activity.timestamp() if activity is not None else 0.0
                    waits.append(max(options.idle_s - idle, 0.0) + self.cull_interval)
            return int(math.ceil(min(waits, default=RELEASE_CHECK_S)))

        def _start_releasing(self) -> None:
            if self._release_callback is None:
                self._release_callback = PeriodicCallback(
                    self._look_after, 1000 * RELEASE_CHECK_S)
                self._release_callback.start()

        async def _look_after(self) -> None:
            await self.release_unattended()
            self.refill_warm()
            self._say_when_warm()

        def refill_warm(self) -> int:
            """Drop warm sessions that could not start (every slot was taken) and top the
            warm pools up again as far as slots are free; return how many were started."""
            pools = getattr(self, "_pools", None)
            if not pools or not hasattr(self, "fill_if_needed"):
                return 0
            started = 0
            for name, pool in pools.items():
                for task in [t for t in pool
                             if t.done() and (t.cancelled() or t.exception() is not None)]:
                    pool.remove(task)
                free = max_sessions - len(self._kernels) - self._starting
                target = len(pool) + max(0, min(options.warm - len(pool), free))
                default = self.kernel_pools_config.get("default", {})
                self.kernel_pools_config = {**self.kernel_pools_config,
                                            name: {**default, "pool_size": target}}
                if target > len(pool):
                    started += target - len(pool)
                    self.fill_if_needed(delay=0, notebook_name=name)
            return started

        async def start_kernel(self, *args: Any, **kwargs: Any) -> str:
            self._start_releasing()
            env = dict(kwargs.get("env") or {})
            visitor = _visitor_of(env.pop("HTTP_COOKIE", ""))
            page = env.get("SCRIPT_NAME", "")
            if "env" in kwargs:
                kwargs["env"] = env
            kernel_id = kwargs.get("kernel_id")
            if kernel_id is None or kernel_id not in self:
                if visitor is not None:
                    await self._free_for((visitor, page))
                if len(self._kernels) + self._starting >= max_sessions:
                    await self.release_unattended()
                if len(self._kernels) + self._starting >= max_sessions:
                    wait_s = self.retry_after_s()
                    raise HTTPError(
                        503,
                        reason="All dashboard sessions are in use",
                        log_message=(
                            f"This computer already runs {max_sessions} dashboard sessions, "
                            f"its limit. A session is expected to free up in about {wait_s} "
                            "s (closed pages free theirs within a minute): reload this page "
                            "then. This page also tries again by itself."),
                    )
            self._starting += 1
            try:
                kernel_id = await super().start_kernel(*args, **kwargs)
            finally:
                self._starting -= 1
            self._started[kernel_id] = time.time()
            if visitor is not None:
                self._owner[kernel_id] = (visitor, page)
            self._bound_memory(kernel_id)
            return kernel_id

        def _bound_memory(self, kernel_id: str) -> None:
            import resource

            pid = getattr(getattr(self._kernels.get(kernel_id), "provisioner", None),
                          "pid", None)
            if pid is None or not hasattr(resource, "prlimit"):
                return
            try:
                resource.prlimit(pid, resource.RLIMIT_AS, (address_space, address_space))
            except (OSError, ValueError) as exc:
                self.log.warning("snowprobe: cannot bound the memory of session %s: %s",
                                 kernel_id, exc)

        async def shutdown_kernel(self, kernel_id: str, *args: Any, **kwargs: Any) -> None:
            self._owner.pop(kernel_id, None)
            self._started.pop(kernel_id, None)
            self._last_connected.pop(kernel_id, None)
            await super().shutdown_kernel(kernel_id, *args, **kwargs)

    return BoundedKernelManager


def _voila_config(options: ServeOptions, boards: Sequence[Dashboard], token: str | None) -> Any:
    """The traitlets configuration of the Voila server for ``options``."""
    from traitlets.config import Config

    idle_s = max(1, round(options.idle_s))
    config = Config()
    config.Voila.ip = options.host
    config.Voila.port = options.port
    config.Voila.port_retries = 0
    config.Voila.open_browser = False
    config.Voila.config_file_paths = []  # a stray voila.json in the cwd changes nothing
    config.Voila.log_level = "INFO" if options.verbose else "ERROR"
    config.Voila.tornado_settings = {
        "headers": {"Content-Security-Policy": PAGE_POLICY},
        # keep-alive pings on the kernel websockets: every 30 s, and a page whose pongs stop
        # for 90 s is dropped. jupyter_server checks the pong age at each ping, counting from
        # the connection, so the timeout must exceed the interval: with both at 30 s every
        # page lost its connection at its first check (pages reconnected every 30 s, and five
        # visitors loading at once on two cores never finished).
        "ws_ping_interval": 30000,
        "ws_ping_timeout": 90000,
        # what a page may send in one message: an upload is at most 2 MB
        "websocket_max_message_size": MAX_PAGE_MESSAGE_BYTES,
    }
    if token is not None:
        config.Voila.token = token
    config.VoilaConfiguration.template = TEMPLATE_NAME
    config.VoilaConfiguration.theme = "light"
    config.VoilaConfiguration.show_tracebacks = False
    config.VoilaConfiguration.page_config_hook = _page_config_hook(boards)
    config.VoilaConfiguration.multi_kernel_manager_class = _kernel_manager_class(options)
    # the browser id cookie reaches the kernel manager (which removes it from the kernel's
    # environment) so that a reload can free the same browser's earlier sessions
    config.VoilaConfiguration.http_header_envs = ["Cookie"]
    # Voila's executor waits only 4 s (nbclient's default) for a cell's outputs after the
    # kernel's reply; with ten sessions starting at once the server reads the kernels'
    # output streams (hundreds of widget messages each) more slowly than that, gave up, and
    # sent pages without their dashboard that stayed blank for ever (measured:
    # tests/benchmarks/bench_crowd.py). The outputs do come; wait for them.
    config.VoilaExecutor.iopub_timeout = IOPUB_WAIT_S
    # likewise the kernel's own start (60 s by default): twenty kernels starting together
    # on two cores beside their browsers can take longer than that
    config.VoilaExecutor.startup_timeout = IOPUB_WAIT_S
    config.VoilaConfiguration.preheat_kernel = options.warm > 0
    config.VoilaConfiguration.default_pool_size = max(1, options.warm)
    config.VoilaKernelManager.fill_delay = WARM_REFILL_DELAY_S
    config.MappingKernelManager.cull_idle_timeout = idle_s
    config.MappingKernelManager.cull_interval = max(1, min(60, idle_s // 4))
    config.MappingKernelManager.cull_connected = True
    config.MappingKernelManager.cull_busy = False
    return config


def _print_banner(options: ServeOptions, port: int, token: str | None) -> None:
    """Say where the dashboards are, once, in plain words."""
    shown_host = options.host
    if options.host in ("0.0.0.0", "::", ""):
        shown_host = socket.gethostname()
    if ":" in shown_host:
        shown_host = f"[{shown_host}]"
    url = f"http://{shown_host}:{port}/"
    if token is not None:
        url += f"?token={token}"
    what = f"the {options.dashboard.name} dashboard" if options.dashboard else "all dashboards"
    idle_min = options.idle_s / 60.0
    lines = [
        f"snowprobe {__version__}: serving {what}",
        f"  open {url}",
        f"  at most {options.max_sessions} sessions at once, {options.memory_mb:.0f} MB of "
        f"working memory each; a session ends when its page has been closed for "
        f"{min(RELEASE_AFTER_S, options.idle_s):.0f} s or idle for {idle_min:g} min. Stop the "
        "server with Ctrl-C.",
    ]
    if options.remote:
        lines += [
            "  WARNING: this address is reachable from other machines. Everyone who has it,",
            "  token included, gets a Python kernel on this computer that can read and write",
            "  your files. Share it only with people you trust with this computer.",
        ]
    print("\n".join(lines), flush=True)
    if options.open_browser:
        threading.Thread(target=webbrowser.open, args=(url,), daemon=True).start()


def check_runtime_folders() -> list[Path]:
    """Make sure the folders the server and its kernels write to are writable.

    The Jupyter runtime folder holds each kernel's connection file; the IPython folder its
    profile. A read-only home folder otherwise makes every page answer 500 while the server
    says it is running.

    Raises
    ------
    LauncherError
        Naming the folder that cannot be written and the variable that moves it.
    """
    import tempfile

    from jupyter_core.paths import jupyter_runtime_dir

    folders = [(Path(jupyter_runtime_dir()), "JUPYTER_RUNTIME_DIR",
                "the kernels' connection files")]
    ipython = os.environ.get("IPYTHONDIR") or str(Path.home() / ".ipython")
    folders.append((Path(ipython), "IPYTHONDIR", "the kernels' IPython profile"))
    checked = []
    for folder, variable, what in folders:
        try:
            folder.mkdir(parents=True, exist_ok=True)
            with tempfile.NamedTemporaryFile(dir=folder, prefix=".snowprobe-check-"):
                pass
        except OSError as exc:
            raise LauncherError(
                f"cannot write to {folder} ({what}): {exc.strerror or exc}. Make it "
                f"writable, or set {variable} to a writable folder") from None
        checked.append(folder)
    return checked


def kernel_environment(options: ServeOptions) -> dict[str, str]:
    """Environment variables the served kernels inherit (see :mod:`snowprobe_widgets.serving`).

    ``MALLOC_ARENA_MAX=2`` keeps glibc from giving each of a kernel's threads its own
    memory arena (tens of MB per kernel that a dashboard never uses).
    """
    limits = serving.limits_for_memory(options.memory_mb)
    return {
        serving.SERVED_ENV: "1",
        serving.KERNEL_MEMORY_ENV: f"{options.memory_mb:.0f}",
        serving.MAX_CELLS_ENV: str(limits.max_cells),
        serving.MAX_WORK_ENV: f"{limits.max_work:.6g}",
        "MALLOC_ARENA_MAX": "2",
    }


def _quiet_404_handler() -> type:
    import tornado.web

    class Quiet404(tornado.web.RequestHandler):
        """404 for paths the server has no page for (no traceback, no log line)."""

        def prepare(self) -> None:
            raise tornado.web.HTTPError(404)

        def log_exception(self, *args: Any) -> None:
            return None

    return Quiet404


def _safe_template_static_handler() -> type:
    import tornado.web
    from voila.static_file_handler import TemplateStaticFileHandler

    class SafeTemplateStatic(TemplateStaticFileHandler):
        """Voila's template static files, answering 404 to anything but
        ``<template>/static/<file>`` without ``..`` (Voila's own answers 500 and prints a
        traceback)."""

        def parse_url_path(self, path: str) -> str:
            parts = path.replace("\\", "/").split("/")
            if len(parts) < 3 or parts[1] != "static" or ".." in parts or "" in parts[:2]:
                raise tornado.web.HTTPError(404)
            return super().parse_url_path(path)

    return SafeTemplateStatic


def _waiting_page_first(handler: type, boards: Sequence[Dashboard]) -> type:
    """Voila's dashboard handler, answering a browser's visit with the waiting page first.

    A request without :data:`PAGE_HEADER` gets ``waiting.html`` at once (no session
    started); the page's own script then asks again with the header and gets the dashboard
    from Voila, streamed while its session starts and runs the notebook, and shows it.
    """
    titles = {b.path.name: b.title for b in boards}

    class WaitingPageFirst(handler):  # type: ignore[misc, valid-type]
        async def get_generator(self, path: str | None = None) -> Any:
            single = bool(getattr(self, "notebook_path", None))
            if self.request.headers.get(PAGE_HEADER) == "1" or (single and path):
                async for html in super().get_generator(path=path):
                    yield html
                return
            self.set_header("Content-Type", "text/html")
            self.set_header("Cache-Control", "no-cache, no-store, must-revalidate")
            name = Path(self.notebook_path if single else (path or "")).name
            yield self.render_template("waiting.html", title=titles.get(name, "snowprobe"),
                                       page_header=PAGE_HEADER,
                                       deadline_s=f"{draw_deadline_s():g}",
                                       page_config={"snowprobe": {"caution": CAUTION_TEXT}})

    return WaitingPageFirst


def _replace_targets(router: Any, old: type, new: type) -> int:
    """Route ``router``'s rules (and its nested routers') from handler ``old`` to ``new``."""
    replaced = 0
    for rule in getattr(router, "rules", []):
        if rule.target is old:
            rule.target = new
            replaced += 1
        else:
            replaced += _replace_targets(rule.target, old, new)
    return replaced


def serve(options: ServeOptions) -> int:
    """Run the Voila server for ``options`` until Ctrl-C or SIGTERM; return the exit status."""
    check_port_free(options.host, options.port)
    check_runtime_folders()
    boards = list(find_dashboards().values())
    token = secrets.token_urlsafe(24) if options.uses_token else None
    os.environ.update(kernel_environment(options))

    # Voila finds templates on the Jupyter data path; ours goes first.
    others = [p for p in os.environ.get("JUPYTER_PATH", "").split(os.pathsep) if p]
    os.environ["JUPYTER_PATH"] = os.pathsep.join([str(_TEMPLATE_ROOT), *others])
    import tornado.httpserver
    import tornado.ioloop
    import tornado.netutil
    from voila.app import Voila

    class SnowprobeVoila(Voila):
        """Voila with our own listening step: one-line errors and our own banner."""

        def listen(self) -> None:
            try:
                sockets = tornado.netutil.bind_sockets(self.port, self.ip)
            except OSError as exc:
                raise LauncherError(
                    f"cannot listen on {self.ip} port {self.port}: {exc.strerror}"
                ) from exc
            _harden(self.app)
            server = tornado.httpserver.HTTPServer(self.app)
            server.add_sockets(sockets)
            self.port = sockets[0].getsockname()[1]
            _print_banner(options, self.port, token)
            self.ioloop = tornado.ioloop.IOLoop.current()
            # Ctrl-C stops the loop like SIGTERM does (also when started in the background,
            # where a shell leaves SIGINT ignored); kernels are then shut down in stop().
            signal.signal(signal.SIGINT, self._handle_signal_stop)
            try:
                self.ioloop.start()
            except KeyboardInterrupt:
                pass
            finally:
                print("snowprobe: stopping the server and its sessions", flush=True)
                server.stop()
                self.stop()

    def _harden(app: Any) -> None:
        import tornado.web
        from tornado.routing import HostMatches, Rule

        quiet = _quiet_404_handler()
        static = _safe_template_static_handler()
        quiet_kinds = (quiet, static)
        ours = tornado.web._ApplicationRouter(app, [
            (r"/logout/?", quiet), (r"/voila/templates/(.*)", static)])
        # ahead of every rule Voila and the Jupyter server registered
        app.default_router.rules.insert(
            0, app.default_router.process_rule(Rule(HostMatches(".*$"), ours)))
        logged = app.settings.get("log_function")

        def log_function(handler: Any) -> None:
            if isinstance(handler, quiet_kinds):
                return  # 404s for probing paths: no log line (it would show the token)
            if logged is not None:
                logged(handler)
                return
            from tornado.log import access_log

            status = handler.get_status()
            write = access_log.info if status < 400 else (
                access_log.warning if status < 500 else access_log.error)
            write("%d %s %.2fms", status, handler._request_summary(),
                  1000.0 * handler.request.request_time())

        app.settings["log_function"] = log_function
        app.transforms.append(_visitor_transform())
        from voila.tornado.handler import TornadoVoilaHandler

        if not _replace_targets(app.default_router, TornadoVoilaHandler,
                                _waiting_page_first(TornadoVoilaHandler, boards)):
            raise LauncherError("this Voila version routes dashboards differently; "
                                "install the versions pinned in pyproject.toml")

    target = options.dashboard.path if options.dashboard else dashboards_dir()
    app = SnowprobeVoila(config=_voila_config(options, boards, token))
    app.initialize(argv=[str(target)])
    app.start()
    return 0


# ----------------------------------------------------------------------------- command line


class _Parser(argparse.ArgumentParser):
    """Argument parser whose errors are one line and exit with status 2."""

    def error(self, message: str) -> None:  # type: ignore[override]
        self.exit(EXIT_USAGE, f"snowprobe: {message} (see: snowprobe --help)\n")


def _positive_float(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a number") from None
    if not 0.05 <= value <= 24 * 60:
        raise argparse.ArgumentTypeError(f"{value:g} is outside [0.05, 1440] minutes")
    return value


def _bounded_int(lo: int, hi: int, what: str) -> Callable[[str], int]:
    def parse(text: str) -> int:
        try:
            value = int(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"{text!r} is not a whole number") from None
        if not lo <= value <= hi:
            raise argparse.ArgumentTypeError(f"{what} {value} is outside [{lo}, {hi}]")
        return value

    return parse


def build_parser() -> argparse.ArgumentParser:
    """The ``snowprobe`` argument parser."""
    parser = _Parser(
        prog="snowprobe",
        description="Radar-search planning and training dashboards for avalanche burials. "
        + CAUTION_TEXT,
    )
    parser.add_argument("--version", action="version", version=f"snowprobe {__version__}")
    commands = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    commands.add_parser("list", help="name the dashboards this installation can serve")
    serve_parser = commands.add_parser(
        "serve", help="serve one dashboard (or all of them) in a web browser",
        formatter_class=argparse.RawDescriptionHelpFormatter,
        description="Serve the dashboards to web browsers. Every page gets its own Python "
        "session (kernel) on this computer.",
        epilog=SERVE_EPILOG,
    )
    serve_parser.add_argument(
        "name",
        nargs="?",
        metavar="NAME",
        help="dashboard to serve (default: all of them, with a start page)",
    )
    serve_parser.add_argument(
        "--port",
        type=_bounded_int(0, 65535, "port"),
        default=DEFAULT_PORT,
        help=f"TCP port (default {DEFAULT_PORT}; 0 picks a free one)",
    )
    serve_parser.add_argument(
        "--host",
        default="127.0.0.1",
        help="address to listen on (default 127.0.0.1: this computer only). Any other "
        "address lets other machines in, with a token printed at start",
    )
    serve_parser.add_argument(
        "--token",
        action="store_true",
        help="require the printed token on this computer's own address too (always "
        "required with another --host)",
    )
    serve_parser.add_argument(
        "--kernel-memory-mb",
        type=_bounded_int(128, 65536, "--kernel-memory-mb"),
        default=None,
        help="working memory of each session, MB (default: 70 %% of this computer's memory "
        "less 400 MB, shared by --max-sessions, from 256 to 4096); work that needs more is "
        "refused with a message",
    )
    serve_parser.add_argument(
        "--idle-minutes",
        type=_positive_float,
        default=DEFAULT_IDLE_MINUTES,
        help="end a session whose page is open but unused this long "
        f"(default {DEFAULT_IDLE_MINUTES:g}); a closed page's session ends within a minute",
    )
    serve_parser.add_argument(
        "--max-sessions",
        type=_bounded_int(1, 64, "--max-sessions"),
        default=DEFAULT_MAX_SESSIONS,
        help=f"most sessions (kernels) at once (default {DEFAULT_MAX_SESSIONS})",
    )
    serve_parser.add_argument(
        "--warm",
        nargs="?",
        const=WARM_FROM_CAP,
        default=0,
        type=_bounded_int(1, 64, "--warm"),
        metavar="N",
        help="keep N sessions per dashboard started and drawn in advance, so that people "
        "arriving together get finished pages (without N: --max-sessions shared among "
        "the dashboards served); each waiting session holds a kernel's memory",
    )
    serve_parser.add_argument(
        "--no-browser", action="store_true", help="do not open a web browser"
    )
    serve_parser.add_argument(
        "--verbose", action="store_true", help="show the server's own log lines"
    )
    sweep_parser = commands.add_parser(
        "sweep", help="run a Monte Carlo detection-probability sweep from a spec file"
    )
    sweep_parser.add_argument("spec", metavar="SPEC.json",
                              help="sweep spec (see snowprobe_widgets.sweep_spec)")
    sweep_parser.add_argument("--out", required=True, metavar="RESULT.nc",
                              help="netCDF file to write; an unfinished one of the same "
                              "spec is completed")
    sweep_parser.add_argument("--scheduler", metavar="ADDRESS",
                              help="run on this dask.distributed scheduler "
                              "(tcp://host:8786) instead of the local cores")
    sweep_parser.add_argument("--workers", type=_bounded_int(1, 1024, "--workers"),
                              help="local worker processes (default: one per core)")
    sweep_parser.add_argument("--quiet", action="store_true", help="no progress bar")
    return parser


def warm_sessions(asked: int, max_sessions: int, dashboards: int) -> int:
    """Sessions to keep ready per dashboard for ``--warm`` (:data:`WARM_FROM_CAP`: the
    session cap shared among the ``dashboards`` served, at least one each).

    Raises
    ------
    LauncherError
        When the ready sessions of all dashboards would exceed ``max_sessions``.
    """
    if asked == WARM_FROM_CAP:
        return max(1, max_sessions // max(1, dashboards))
    if asked * dashboards > max_sessions:
        raise LauncherError(
            f"--warm {asked} for {dashboards} dashboard(s) keeps {asked * dashboards} "
            f"sessions ready, more than --max-sessions {max_sessions}: lower --warm or "
            "raise --max-sessions")
    return asked


def _serve_options(args: argparse.Namespace) -> ServeOptions:
    boards = find_dashboards()
    board = None
    if args.name is not None:
        if args.name not in boards:
            known = ", ".join(boards) or "none"
            raise LauncherError(f"no dashboard named {args.name!r} (available: {known})")
        board = boards[args.name]
    interactive = sys.stdout.isatty() and (
        sys.platform in ("darwin", "win32")
        or bool(os.environ.get("DISPLAY") or os.environ.get("WAYLAND_DISPLAY"))
    )
    return ServeOptions(
        dashboard=board,
        host=args.host,
        port=args.port,
        idle_s=args.idle_minutes * 60.0,
        max_sessions=args.max_sessions,
        warm=warm_sessions(args.warm, args.max_sessions, 1 if board else len(boards)),
        open_browser=interactive and not args.no_browser,
        workdir=Path.cwd(),
        verbose=args.verbose,
        token_required=args.token,
        kernel_memory_mb=None if args.kernel_memory_mb is None else float(args.kernel_memory_mb),
    )


def main(argv: Sequence[str] | None = None) -> int:
    """Run the ``snowprobe`` command; return its exit status."""
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        if args.command == "list":
            boards = find_dashboards()
            width = max((len(name) for name in boards), default=0)
            for board in boards.values():
                print(f"{board.name:<{width}}  {board.title}: {board.summary}")
            return 0
        if args.command == "serve":
            return serve(_serve_options(args))
        if args.command == "sweep":
            from snowprobe_widgets.sweep_spec import run_command

            try:
                return run_command(args.spec, args.out, scheduler=args.scheduler,
                                   workers=args.workers, progress=not args.quiet)
            except ValueError as exc:
                raise LauncherError(str(exc)) from None
    except LauncherError as exc:
        print(f"snowprobe: {exc}", file=sys.stderr)
        return EXIT_USAGE
    except KeyboardInterrupt:
        return 130
    parser.print_help()
    return EXIT_USAGE


if __name__ == "__main__":  # pragma: no cover - ``python -m snowprobe_widgets`` is the usual way
    sys.exit(main())
