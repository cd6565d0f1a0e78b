"""The ``snowprobe`` command: listing, version, one-line errors, packaging, and serving
(loopback, token for remote visitors, bounded sessions, clean stop on Ctrl-C) over plain HTTP.
"""

from __future__ import annotations

import os
import re
import socket
import subprocess
import sys
import time
import urllib.error
import urllib.request
from pathlib import Path

import pytest

import snowprobe_widgets
from snowprobe_widgets import launcher
from snowprobe_widgets.cautions import CAUTION_TEXT

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests" / "browser"))

from harness import (  # noqa: E402
    DASHBOARD_REQUEST,
    Launcher,
    http_status,
    launcher_command,
    wait_until,
)


def run(*args: str, timeout: float = 60) -> subprocess.CompletedProcess:
    return subprocess.run([*launcher_command(), *args], capture_output=True, text=True,
                          timeout=timeout)


# ------------------------------------------------------------------ command line, no server


def test_console_script_is_installed():
    from importlib.metadata import entry_points

    names = {ep.name: ep.value for ep in entry_points(group="console_scripts")}
    assert names.get("snowprobe") == "snowprobe_widgets.launcher:main"


def test_version():
    done = run("--version")
    assert done.returncode == 0
    assert done.stdout.strip() == f"snowprobe {snowprobe_widgets.__version__}"


def test_list_names_exactly_the_packaged_dashboards():
    done = run("list")
    assert done.returncode == 0
    names = [line.split()[0] for line in done.stdout.splitlines()]
    shipped = sorted(p.stem for p in (ROOT / "dashboards").glob("*.ipynb"))
    assert sorted(names) == shipped
    assert names[:2] == ["design", "materials"]  # listing order from the notebooks' metadata


@pytest.mark.parametrize("args, says", [
    (["serve", "avalanche-dog"], "no dashboard named 'avalanche-dog'"),
    (["serve", "--port", "70000"], "port 70000 is outside [0, 65535]"),
    (["serve", "--port", "eighty"], "'eighty' is not a whole number"),
    (["serve", "--max-sessions", "0"], "--max-sessions 0 is outside [1, 64]"),
    (["serve", "--idle-minutes", "-3"], "outside [0.05, 1440] minutes"),
    (["serve", "--colour", "red"], "unrecognized arguments: --colour"),
    (["melt"], "invalid choice: 'melt'"),
    ([], "usage"),
])
def test_bad_input_gives_one_line_and_status_2(args, says):
    done = run(*args)
    assert done.returncode == launcher.EXIT_USAGE
    if args:
        lines = done.stderr.strip().splitlines()
        assert len(lines) == 1, done.stderr
        assert lines[0].startswith("snowprobe: ")
        assert says in lines[0]
    else:
        assert says in done.stdout


def test_port_in_use_gives_one_line_and_status_2():
    with socket.socket() as taken:
        taken.bind(("127.0.0.1", 0))
        taken.listen()
        port = taken.getsockname()[1]
        done = run("serve", "--port", str(port), "--no-browser")
    assert done.returncode == launcher.EXIT_USAGE
    lines = done.stderr.strip().splitlines()
    assert lines == [f"snowprobe: port {port} on 127.0.0.1 is already in use; "
                     "choose another with --port"]


@pytest.mark.parametrize("host, loopback", [
    ("127.0.0.1", True), ("127.8.0.3", True), ("::1", True), ("localhost", True),
    ("0.0.0.0", False), ("192.168.1.20", False), ("::", False), ("hut-laptop", False),
])
def test_loopback_addresses(host, loopback):
    assert launcher.is_loopback(host) is loopback


# ------------------------------------------------------------------ packaging


def test_every_subpackage_ships_in_the_wheel():
    """pyproject lists packages by name (dashboards/ is mapped in): none may be forgotten."""
    tomllib = pytest.importorskip("tomllib")
    config = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    listed = set(config["tool"]["setuptools"]["packages"])
    found = {".".join(p.parent.relative_to(ROOT).parts)
             for p in (ROOT / "snowprobe_widgets").rglob("__init__.py")}
    assert found | {"snowprobe_widgets.dashboards"} == listed
    assert config["tool"]["setuptools"]["package-dir"] == {
        "snowprobe_widgets.dashboards": "dashboards"}
    data = config["tool"]["setuptools"]["package-data"]
    assert "voila_template/**/*" in data["snowprobe_widgets"]
    assert "*.ipynb" in data["snowprobe_widgets.dashboards"]


def test_dashboards_resolve_to_the_one_copy_in_dashboards():
    assert launcher.dashboards_dir() == (ROOT / "dashboards").resolve()
    boards = launcher.find_dashboards()
    for board in boards.values():
        assert board.title and board.summary


def test_dashboard_notebooks_are_a_few_lines_that_display_an_app():
    import json

    apps = {"design": "ScenarioExplorer", "materials": "MaterialsExplorer"}
    for name, app in apps.items():
        nb = json.loads((ROOT / "dashboards" / f"{name}.ipynb").read_text(encoding="utf-8"))
        code = [c for c in nb["cells"] if c["cell_type"] == "code"]
        assert len(code) == 1
        source = "".join(code[0]["source"])
        assert f"from snowprobe_widgets.widgets import {app}" in source
        # bound to a name: Voila runs cells without output history, so an unnamed app can be
        # garbage-collected (its widgets closed) before the browser asks for it
        assert re.search(rf"^app = {app}\(\)$", source, re.M)
        assert source.strip().splitlines()[-1] == "app"
        assert all(not c.get("outputs") for c in code)


def test_template_references_nothing_beyond_the_server():
    template = ROOT / "snowprobe_widgets" / "voila_template"
    files = [p for p in template.rglob("*") if p.is_file()]
    assert {p.name for p in files} >= {"index.html.j2", "conf.json", "page.html", "tree.html",
                                       "error.html", "snowprobe.css", "snowprobe-page.js"}
    for path in files:
        text = path.read_text(encoding="utf-8")
        assert not re.search(r"(https?:)?//[a-z0-9.-]+\.[a-z]{2,}/", text, re.I), path
        assert "@import" not in text and "url(" not in text, path


def test_page_config_hook_carries_the_cautions_and_the_list():
    boards = list(launcher.find_dashboards().values())
    config = launcher._page_config_hook(boards)({"baseUrl": "/"}, log=None)
    assert config["snowprobe"]["caution"] == CAUTION_TEXT
    assert [b["name"] for b in config["snowprobe"]["dashboards"]] == [b.name for b in boards]


# ------------------------------------------------------------------ serving over plain HTTP


def _get(url: str, headers: dict[str, str] | None = None) -> tuple[int, str]:
    """Status and body of a GET (a dashboard GET with :data:`DASHBOARD_REQUEST` runs the
    whole notebook before it ends)."""
    try:
        request = urllib.request.Request(url, headers=headers or {})
        with urllib.request.urlopen(request, timeout=120) as reply:
            return reply.status, reply.read().decode("utf-8", "replace")
    except urllib.error.HTTPError as exc:
        return exc.code, exc.read().decode("utf-8", "replace")


@pytest.fixture(scope="module")
def remote_server(tmp_path_factory):
    """All dashboards on every interface (so a token is required), one session at most."""
    server = Launcher(args=["--host", "0.0.0.0", "--max-sessions", "1"],
                      workdir=tmp_path_factory.mktemp("remote"))
    try:
        # the start page refuses visitors without the token: readiness is that refusal
        wait_until(lambda: http_status(server.base_url) in (302, 403), 60,
                   "server answering")
        yield server
    finally:
        server.stop()


def _token(server: Launcher) -> str:
    urls = [re.search(r"\?token=([\w-]+)", line) for line in server.output]
    tokens = [m.group(1) for m in urls if m]
    assert len(tokens) == 1, server.log()  # printed once
    return tokens[0]


def test_remote_serving_prints_the_token_once_and_warns(remote_server):
    token = _token(remote_server)
    assert len(token) >= 24
    log = remote_server.log()
    assert log.count(token) == 1
    assert "WARNING" in log and "gets a Python kernel on this computer" in log


def test_remote_serving_refuses_visitors_without_the_token(remote_server):
    token = _token(remote_server)
    assert http_status(remote_server.base_url) in (302, 403)
    assert http_status(f"{remote_server.base_url}voila/render/materials.ipynb") in (302, 403)
    assert http_status(f"{remote_server.base_url}?token=wrong{token}") in (302, 403)
    status, body = _get(f"{remote_server.base_url}?token={token}")
    assert status == 200 and "data-sp-dashboard" in body


def test_a_visit_gets_the_waiting_page_first_and_it_starts_no_session(remote_server):
    # a browser's visit gets a small finished page at once; its script asks for the
    # dashboard (with launcher.PAGE_HEADER), and only that request starts a session
    token = _token(remote_server)
    url = f"{remote_server.base_url}voila/render/materials.ipynb?token={token}"
    before = set(remote_server.kernel_processes())
    status, body = _get(url)
    assert status == 200
    assert f'data-sp-waiting="{launcher.PAGE_HEADER}"' in body
    assert CAUTION_TEXT in body
    assert "jupyter-config-data" not in body
    time.sleep(2.0)  # a session started by this GET would be running by now
    assert set(remote_server.kernel_processes()) == before


def test_sessions_beyond_the_limit_get_a_busy_page(remote_server):
    token = _token(remote_server)
    url = f"{remote_server.base_url}voila/render/materials.ipynb?token={token}"
    # starts the one allowed kernel (it stays until culled)
    status, first = _get(url, DASHBOARD_REQUEST)
    assert status == 200 and "jupyter-config-data" in first
    status, second = _get(url, DASHBOARD_REQUEST)
    assert status == 503
    assert "All dashboard sessions are in use" in second
    assert "limit" in second and "reload" in second.lower()
    assert "Traceback" not in second
    # it says when to retry, and retries by itself
    assert re.search(r"free up in about \d+ s", second)
    assert '<meta http-equiv="refresh" content="20">' in second
    assert "tries again by itself" in second


def test_ctrl_c_stops_the_server_and_its_kernels(tmp_path):
    server = Launcher(args=["materials"], workdir=tmp_path)
    # single-dashboard mode: the root is the dashboard, so this GET starts a kernel
    wait_until(lambda: http_status(server.base_url, headers=DASHBOARD_REQUEST) == 200, 90,
               "dashboard served")
    assert f"open http://127.0.0.1:{server.port}/" in server.log()
    assert "token" not in server.log()  # loopback: no token, no warning
    kernels = wait_until(server.kernel_processes, 30, "a kernel running")
    assert server.stop(timeout_s=30) == 0
    for process in kernels.values():
        process.wait(timeout=10)  # the kernels end with the server
    assert "stopping the server" in server.log()
    assert http_status(server.base_url) == 0


def test_websocket_pong_timeout_exceeds_the_ping_interval():
    # jupyter_server measures the pong age from the connection at each ping: a timeout no
    # longer than the interval drops every page at its first check
    from pathlib import Path

    from snowprobe_widgets import launcher

    options = launcher.ServeOptions(dashboard=None, host="127.0.0.1", port=0, idle_s=600.0,
                                    max_sessions=4, warm=False, open_browser=False,
                                    workdir=Path("."), verbose=False)
    settings = launcher._voila_config(options, [], None).Voila.tornado_settings
    assert settings["ws_ping_timeout"] > settings["ws_ping_interval"] > 0


# ------------------------------------------------------------------ safe sharing (issue 11)


def test_serve_help_says_who_can_reach_the_page():
    done = run("serve", "--help")
    assert done.returncode == 0
    text = " ".join(done.stdout.split())
    assert "who can reach the page:" in text
    assert "every program and every user account on THIS computer" in text
    assert "--token (on 127.0.0.1) only whoever has the printed address with its token" in text
    assert "other machines on the network too, always with the token" in text
    assert "cannot open or write files on this computer by name" in text


def test_an_unwritable_runtime_folder_is_named_at_start(tmp_path):
    blocker = tmp_path / "a-file"
    blocker.write_text("not a folder")
    env = dict(os.environ, JUPYTER_RUNTIME_DIR=str(blocker / "runtime"))
    done = subprocess.run([*launcher_command(), "serve", "--no-browser", "--port", "0"],
                          capture_output=True, text=True, timeout=60, env=env)
    assert done.returncode == launcher.EXIT_USAGE
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1, done.stderr
    assert f"cannot write to {blocker / 'runtime'}" in lines[0]
    assert "JUPYTER_RUNTIME_DIR" in lines[0]


def test_served_kernels_are_marked_and_bounded():
    from snowprobe_widgets import serving

    options = launcher.ServeOptions(dashboard=None, host="127.0.0.1", port=0, idle_s=600.0,
                                    max_sessions=4, warm=False, open_browser=False,
                                    workdir=Path("."), verbose=False, kernel_memory_mb=600.0)
    env = launcher.kernel_environment(options)
    assert env[serving.SERVED_ENV] == "1"
    assert env[serving.KERNEL_MEMORY_ENV] == "600"
    limits = serving.limits_for_memory(600.0)
    assert int(env[serving.MAX_CELLS_ENV]) == limits.max_cells
    assert limits.max_cells * serving.BYTES_PER_CELL <= 600 * 2**20
    # more sessions on the same computer: less memory each
    assert launcher.default_kernel_memory_mb(2) >= launcher.default_kernel_memory_mb(16)
    assert 256.0 <= launcher.default_kernel_memory_mb(64) <= 4096.0


@pytest.fixture(scope="module")
def token_server(tmp_path_factory):
    """Loopback with --token, a 2 min idle time, two sessions, 600 MB each."""
    server = Launcher(args=["--token", "--idle-minutes", "2", "--max-sessions", "2",
                            "--kernel-memory-mb", "600"],
                      workdir=tmp_path_factory.mktemp("token"))
    try:
        wait_until(lambda: http_status(server.base_url) in (302, 403), 60, "server answering")
        yield server
    finally:
        server.stop()


def test_token_on_loopback(token_server):
    token = _token(token_server)
    assert http_status(token_server.base_url) in (302, 403)
    status, body = _get(f"{token_server.base_url}?token={token}")
    assert status == 200 and "data-sp-dashboard" in body


def test_logout_and_dot_dot_under_the_template_route_answer_404_quietly(token_server):
    token = _token(token_server)
    for path in ("logout", "voila/templates/snowprobe/static/../conf.json",
                 "voila/templates/snowprobe/static/../../../../etc/passwd",
                 "voila/templates/snowprobe/static/..%2f..%2fconf.json", "voila/templates/x"):
        request = urllib.request.Request(f"{token_server.base_url}{path}?token={token}")
        try:
            with urllib.request.urlopen(request, timeout=30) as reply:
                status = reply.status
        except urllib.error.HTTPError as exc:
            status = exc.code
        assert status == 404, path
    assert http_status(f"{token_server.base_url}voila/templates/snowprobe/static/"
                       f"snowprobe.css?token={token}") == 200
    assert "Traceback" not in token_server.log()


def _alive(server, token, kernel_id):
    return http_status(f"{server.base_url}api/kernels/{kernel_id}?token={token}") == 200


def test_a_page_never_connected_is_released_and_a_reload_frees_the_old_session(
        token_server):
    import http.cookiejar
    import resource

    token = _token(token_server)
    url = f"{token_server.base_url}voila/render/materials.ipynb?token={token}"
    browser = urllib.request.build_opener(
        urllib.request.HTTPCookieProcessor(http.cookiejar.CookieJar()))
    page = urllib.request.Request(url, headers=DASHBOARD_REQUEST)
    with browser.open(page, timeout=180) as reply:  # a GET without a browser behind it
        first = re.search(r'"kernelId": "([0-9a-f-]{36})"', reply.read().decode()).group(1)
    assert _alive(token_server, token, first)
    # the kernel's address space is bounded: 600 MB of work + the base allowance
    process = wait_until(lambda: token_server.kernel_processes().get(first), 30, "kernel")
    soft, hard = resource.prlimit(process.pid, resource.RLIMIT_AS)
    assert soft == hard == (600 + launcher.KERNEL_BASE_ADDRESS_SPACE_MB) * 2**20
    # the same browser loads the page again: its unconnected first session is freed
    with browser.open(page, timeout=180) as reply:
        second = re.search(r'"kernelId": "([0-9a-f-]{36})"', reply.read().decode()).group(1)
    assert _alive(token_server, token, second)
    assert not _alive(token_server, token, first)
    # nobody connects to the second one: released a minute after its page's delivery
    # (launcher.NEVER_CONNECTED_S) plus one check, long before the 2 min idle time
    start = time.monotonic()
    wait_until(lambda: not _alive(token_server, token, second), 100,
               "unconnected session released", poll_s=1.0)
    waited = time.monotonic() - start
    assert launcher.NEVER_CONNECTED_S * 0.5 < waited < launcher.NEVER_CONNECTED_S + 30


def test_warm_sessions_come_from_the_session_cap_or_are_refused_beyond_it():
    assert launcher.warm_sessions(0, 8, 5) == 0
    assert launcher.warm_sessions(launcher.WARM_FROM_CAP, 20, 1) == 20
    assert launcher.warm_sessions(launcher.WARM_FROM_CAP, 8, 5) == 1
    assert launcher.warm_sessions(launcher.WARM_FROM_CAP, 3, 5) == 1
    assert launcher.warm_sessions(3, 15, 5) == 3
    with pytest.raises(launcher.LauncherError, match=r"--warm 4 .* 20 sessions .* "
                                                     r"--max-sessions 15"):
        launcher.warm_sessions(4, 15, 5)


def test_warm_sessions_are_counted_ready_when_their_notebook_has_run(capsys):
    import asyncio
    import threading

    options = launcher.ServeOptions(dashboard=None, host="127.0.0.1", port=0, idle_s=600.0,
                                    max_sessions=4, warm=2, open_browser=False,
                                    workdir=Path("."), verbose=False)

    async def check() -> None:
        loop = asyncio.get_running_loop()

        def done(value=None, error=None):
            future = loop.create_future()
            if error is None:
                future.set_result(value)
            else:
                future.set_exception(error)
            return future

        manager = launcher._kernel_manager_class(options)()
        running = loop.create_future()  # a notebook still running
        broken = done(error=RuntimeError("notebook stopped"))
        broken.exception()  # retrieved: no warning at exit
        starting = loop.create_future()  # a kernel still starting (no result yet)
        manager._pools = {"design.ipynb": [
            done({"kernel_id": "a", "task": done(("rendered", None))}),
            done({"kernel_id": "b", "task": running}),
            done({"kernel_id": "c", "task": broken}),
            starting]}
        assert manager.warm_ready() == 1
        manager._say_when_warm()
        assert capsys.readouterr().out == ""  # 1 of 2 is not all
        running.set_result(("rendered", None))
        assert manager.warm_ready() == 2
        manager._say_when_warm()
        manager._say_when_warm()  # said once, not at every look
        said = capsys.readouterr().out
        assert said == f"snowprobe: 2 {launcher.WARM_READY_SAYS}\n"
        manager._pools["design.ipynb"].pop(0)  # a visitor took one: said again when refilled
        manager._say_when_warm()
        manager._pools["design.ipynb"].insert(0, done({"kernel_id": "d",
                                                       "task": done(("rendered", None))}))
        manager._say_when_warm()
        assert capsys.readouterr().out == said
        starting.cancel()

    # in a thread of its own: during the browser tests Playwright's sync API keeps an event
    # loop running in the main thread, where asyncio.run refuses to start
    failed: list[BaseException] = []

    def run() -> None:
        try:
            asyncio.run(check())
        except BaseException as exc:  # handed to the test's thread
            failed.append(exc)

    worker = threading.Thread(target=run)
    worker.start()
    worker.join()
    if failed:
        raise failed[0]
