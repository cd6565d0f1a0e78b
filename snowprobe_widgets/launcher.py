"""The ``snowprobe`` command: list the packaged dashboards and serve them through Voila.

``snowprobe list`` names the dashboards, ``snowprobe serve [NAME]`` serves one (or all of
them) on this computer, ``snowprobe sweep SPEC.json --out RESULT.nc`` runs a batch
detection-probability sweep (:mod:`snowprobe_widgets.sweep_spec`), ``snowprobe --version``
prints the version. The dashboards are the
notebooks of the ``snowprobe_widgets.dashboards`` package (the repository's ``dashboards/``
folder, shipped inside the wheel), shown through the package's own Voila template so the
page loads nothing from beyond the server.

Serving is careful with the machine it runs on: every page load starts a Python kernel
(about 100 MB each with Voila 0.5, and it stays after the visitor leaves), so idle kernels
are ended after ``--idle-minutes`` and at most ``--max-sessions`` run at once. The server
binds to 127.0.0.1 unless ``--host`` names another address; then token authentication is
on, the token is printed once, and a warning says that each visitor gets a kernel here.

Voila and the Jupyter server are imported only by ``serve``, so ``list`` and ``--version``
start in a few tens of milliseconds.
"""

from __future__ import annotations

import argparse
import errno
import ipaddress
import json
import os
import secrets
import signal
import socket
import sys
import threading
import webbrowser
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from snowprobe_widgets import __version__
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

#: Content-Security-Policy of every page: the browser itself refuses anything that is not
#: from this server (the page must work offline; a stray CDN link fails loudly in tests).
PAGE_POLICY: str = (
    "default-src 'self'; script-src 'self' 'unsafe-inline' 'unsafe-eval'; "
    "style-src 'self' 'unsafe-inline'; img-src 'self' data: blob:; font-src 'self' data:; "
    "connect-src 'self'; frame-ancestors 'self'; form-action 'self'; base-uri 'self'"
)

_PACKAGE_DIR = Path(__file__).resolve().parent
_TEMPLATE_ROOT = _PACKAGE_DIR / "voila_template"
_LOOPBACK_NAMES = {"localhost", "localhost.localdomain", "ip6-localhost"}


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
    warm : bool
        Keep one kernel per dashboard started and run in advance (faster first page,
        one idle kernel per dashboard).
    open_browser : bool
        Open the address in this computer's web browser.
    workdir : pathlib.Path
        Working directory of the kernels (where relative save paths land).
    verbose : bool
        Show the server's own log lines.
    """

    dashboard: Dashboard | None
    host: str
    port: int
    idle_s: float
    max_sessions: int
    warm: bool
    open_browser: bool
    workdir: Path
    verbose: bool

    @property
    def remote(self) -> bool:
        """True when the address can be reached from other machines."""
        return not is_loopback(self.host)


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


def _page_config_hook(boards: Sequence[Dashboard]) -> Callable[..., dict]:
    """A Voila page-config hook adding what the template shows (cautions, dashboard list)."""
    listing = [
        {"name": b.name, "title": b.title, "summary": b.summary, "file": b.path.name}
        for b in boards
    ]

    def hook(page_config: dict, **_ignored: Any) -> dict:
        page_config["snowprobe"] = {
            "caution": CAUTION_TEXT,
            "version": __version__,
            "dashboards": listing,
        }
        return page_config

    return hook


def _kernel_manager_class(max_sessions: int, workdir: Path) -> type:
    """A Jupyter kernel manager that refuses kernels beyond ``max_sessions``.

    Its kernels run in ``workdir`` rather than in the (possibly read-only) package folder.
    """
    from jupyter_server.services.kernels.kernelmanager import AsyncMappingKernelManager
    from tornado.web import HTTPError

    class BoundedKernelManager(AsyncMappingKernelManager):
        _starting = 0

        def cwd_for_path(self, path: str, **kwargs: Any) -> str:
            return str(workdir)

        async def start_kernel(self, *args: Any, **kwargs: Any) -> str:
            kernel_id = kwargs.get("kernel_id")
            if kernel_id is None or kernel_id not in self:
                if len(self._kernels) + self._starting >= max_sessions:
                    raise HTTPError(
                        503,
                        reason="All dashboard sessions are in use",
                        log_message=(
                            f"This computer already runs {max_sessions} dashboard sessions, "
                            "its limit. Close dashboard tabs you no longer use; idle sessions "
                            "end by themselves after a while. Then reload this page."
                        ),
                    )
            self._starting += 1
            try:
                return await super().start_kernel(*args, **kwargs)
            finally:
                self._starting -= 1

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
    }
    if token is not None:
        config.Voila.token = token
    config.VoilaConfiguration.template = TEMPLATE_NAME
    config.VoilaConfiguration.theme = "light"
    config.VoilaConfiguration.show_tracebacks = False
    config.VoilaConfiguration.page_config_hook = _page_config_hook(boards)
    config.VoilaConfiguration.multi_kernel_manager_class = _kernel_manager_class(
        options.max_sessions, options.workdir
    )
    config.VoilaConfiguration.preheat_kernel = options.warm
    config.VoilaConfiguration.default_pool_size = 1
    config.MappingKernelManager.cull_idle_timeout = idle_s
    config.MappingKernelManager.cull_interval = max(1, min(60, idle_s // 4))
    config.MappingKernelManager.cull_connected = False
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
        f"  sessions end after {idle_min:g} min without an open page; at most "
        f"{options.max_sessions} at once. Stop the server with Ctrl-C.",
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


def serve(options: ServeOptions) -> int:
    """Run the Voila server for ``options`` until Ctrl-C or SIGTERM; return the exit status."""
    check_port_free(options.host, options.port)
    boards = list(find_dashboards().values())
    token = secrets.token_urlsafe(24) if options.remote else None

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
        "serve", help="serve one dashboard (or all of them) in a web browser"
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
        "--idle-minutes",
        type=_positive_float,
        default=DEFAULT_IDLE_MINUTES,
        help="end a session this long after its page was closed "
        f"(default {DEFAULT_IDLE_MINUTES:g})",
    )
    serve_parser.add_argument(
        "--max-sessions",
        type=_bounded_int(1, 64, "--max-sessions"),
        default=DEFAULT_MAX_SESSIONS,
        help=f"most sessions (kernels) at once (default {DEFAULT_MAX_SESSIONS})",
    )
    serve_parser.add_argument(
        "--warm",
        action="store_true",
        help="keep one session per dashboard ready in advance (faster first page, "
        "one idle kernel per dashboard)",
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
        warm=args.warm,
        open_browser=interactive and not args.no_browser,
        workdir=Path.cwd(),
        verbose=args.verbose,
    )


def main(argv: Sequence[str] | None = None) -> int:
    """Run the ``snowprobe`` command; return its exit status."""
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        if args.command == "list":
            for board in find_dashboards().values():
                print(f"{board.name:<12} {board.title}: {board.summary}")
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
