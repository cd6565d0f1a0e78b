"""FilePanel: served pages upload and download only; notebooks write by path, carefully.

The served-mode test drives every widget of every packaged dashboard the way a visitor
could (typing planted paths into every text box, clicking every button, choosing options,
ticking boxes, uploading a file named like a path) while a Python audit hook records every
file the kernel opens, renames or removes. It fails if any of those names a planted path or
writes anything.
"""

from __future__ import annotations

import base64
import datetime
import io
import json
import os
import re
import sys

import ipywidgets as widgets
import numpy as np
import pandas as pd
import pytest

from snowprobe_widgets import launcher, scenario_files
from snowprobe_widgets.atomic_files import PARTIAL_SUFFIX
from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.serving import SERVED_ENV
from snowprobe_widgets.widgets import ScenarioExplorer
from snowprobe_widgets.widgets.file_panel import MAX_UPLOAD_BYTES, UPLOAD_CLASS, FilePanel

MARKER = "planted-marker"
NOW = datetime.datetime.now(datetime.timezone.utc)
_EVENTS: list[tuple] = []
_RECORDING = [False]


def _audit(event: str, args: tuple) -> None:
    if _RECORDING[0] and event in ("open", "os.rename", "os.remove", "os.mkdir", "os.symlink",
                                   "os.truncate", "shutil.copyfile", "os.chmod"):
        _EVENTS.append((event, args))


sys.addaudithook(_audit)


def _all_widgets(root: widgets.Widget) -> list[widgets.Widget]:
    seen: dict[int, widgets.Widget] = {}
    stack = [root]
    while stack:
        w = stack.pop()
        if id(w) in seen:
            continue
        seen[id(w)] = w
        for name in w.keys:
            value = getattr(w, name, None)
            for x in value if isinstance(value, (list, tuple)) else [value]:
                if isinstance(x, widgets.Widget):
                    stack.append(x)
    return list(seen.values())


def _dashboard_roots(path) -> list[widgets.Widget]:
    """Run a dashboard notebook's code as Voila would; return the widgets it displays."""
    nb = json.loads(path.read_text(encoding="utf-8"))
    namespace: dict = {}
    for cell in nb["cells"]:
        if cell["cell_type"] == "code":
            source = "".join(cell["source"])
            exec(compile(source, str(path), "exec"), namespace)  # noqa: S102
    return [v for v in namespace.values() if isinstance(v, widgets.DOMWidget)]


def _bad_writes_and_planted_opens(workdir) -> list[tuple]:
    """File events naming a planted path, or writing where a visitor's relative or home
    path would land (the kernel's folder, the home folder). A dashboard's own internal
    files elsewhere (a sweep's lock files in the temporary folder) are not named by the
    page and are allowed."""
    where = (str(workdir), os.path.expanduser("~"))
    bad = []
    for event, args in _EVENTS:
        text = " ".join(str(a) for a in args)
        if MARKER in text:
            bad.append((event, args))
            continue
        if re.search(r"__pycache__|\.pyc|site-packages", text):
            continue
        path = str(args[0]) if args else ""
        if not os.path.isabs(path):
            path = os.path.join(str(workdir), path)
        if not path.startswith(where):
            continue
        if event == "open":
            mode, flags = (list(args) + [None, None, None])[1:3]
            writing = (isinstance(mode, str) and any(c in mode for c in "wax+")) or (
                isinstance(flags, int) and flags & (os.O_WRONLY | os.O_RDWR | os.O_CREAT))
            if writing:
                bad.append((event, args))
        else:
            bad.append((event, args))
    return bad


@pytest.mark.parametrize("board", list(launcher.find_dashboards().values()),
                         ids=lambda b: b.name)
def test_no_widget_of_a_served_dashboard_opens_or_writes_a_visitor_named_path(
        board, tmp_path, monkeypatch):
    monkeypatch.setenv(SERVED_ENV, "1")
    monkeypatch.chdir(tmp_path)
    victim = tmp_path / f"{MARKER}.json"
    victim.write_text("precious")
    planted = [str(victim), f"../{MARKER}.json", f"~/{MARKER}.json", f"{MARKER}.json",
               str(tmp_path / MARKER / "x.json")]
    roots = _dashboard_roots(board.path)
    assert roots, f"dashboard {board.name} displays no widget"
    good = Scenario.example("two_burials").to_json().encode("utf-8")
    _EVENTS.clear()
    _RECORDING[0] = True
    try:
        for root in roots:
            every = _all_widgets(root)
            texts = [w for w in every if isinstance(w, (widgets.Text, widgets.Textarea,
                                                        widgets.Combobox))]
            for value in planted:
                for w in texts:
                    if not w.disabled:
                        w.value = value
                for w in every:
                    if isinstance(w, widgets.Button) and not w.disabled:
                        w.click()
            for w in every:
                if isinstance(w, widgets.Checkbox) and not w.disabled:
                    w.value = not w.value
                elif isinstance(w, (widgets.Dropdown, widgets.ToggleButtons)) and \
                        not w.disabled:
                    for option in list(w.options)[:4]:
                        w.label = option[0] if isinstance(option, tuple) else str(option)
                elif isinstance(w, widgets.FileUpload):
                    w.value = ({"name": f"../../{MARKER}.json", "type": "application/json",
                                "size": len(good), "content": memoryview(good),
                                "last_modified": NOW},)
            for w in every:
                if isinstance(w, widgets.Button) and not w.disabled:
                    w.click()
    finally:
        _RECORDING[0] = False
    assert _bad_writes_and_planted_opens(tmp_path) == []
    assert victim.read_text() == "precious"
    assert sorted(os.listdir(tmp_path)) == [victim.name]  # nothing written here either


# --------------------------------------------------------------------------- served mode


@pytest.fixture(scope="module")
def served_app() -> ScenarioExplorer:
    os.environ[SERVED_ENV] = "1"
    try:
        return ScenarioExplorer()
    finally:
        del os.environ[SERVED_ENV]


def test_served_mode_has_upload_and_no_path_box(served_app):
    files = served_app.files
    assert files.served
    assert not hasattr(files, "path")
    assert UPLOAD_CLASS in files.upload._dom_classes
    # the only text box is the pulse's own settings, passed to the pulse function alone
    # (never a path: DEVELOPERS.md, "Adding a pulse")
    assert [w for w in _all_widgets(served_app)
            if isinstance(w, (widgets.Text, widgets.Textarea, widgets.Combobox))] == [
        served_app.radar.pulse_parameters]
    assert not files.open_file("/etc/passwd")
    assert "cannot open or write files on the server" in files.message.value
    assert files.save_file("/tmp/x.json") is None and files.export("csv") is None


def test_upload_goes_through_the_validating_loader(served_app):
    files = served_app.files
    before = served_app.scenario
    bad = b'{"format": "snowprobe-scenario", "schema_version": 1, "scenario": {}}'
    files.upload.value = ({"name": "bad.json", "type": "", "size": len(bad),
                           "content": memoryview(bad), "last_modified": NOW},)
    assert "bad.json" in files.message.value and "missing field" in files.message.value
    assert served_app.scenario is before
    assert files.upload.value == ()  # the content is not kept
    big = b" " * (MAX_UPLOAD_BYTES + 1)
    assert not files.load_upload("big.json", big)
    assert "byte limit" in files.message.value and served_app.scenario is before
    good = Scenario.example("deep_wet_spring")
    text = good.to_json().encode("utf-8")
    files.upload.value = ({"name": "spring.json", "type": "", "size": len(text),
                           "content": memoryview(text), "last_modified": NOW},)
    assert served_app.scenario == good
    assert "opened spring.json" in files.status.value


@pytest.mark.parametrize("kind", ["scenario", "csv", "budget_csv", "netcdf", "npz", "png",
                                  "report"])
def test_downloads_carry_the_bytes_in_the_page(served_app, kind):
    files = served_app.files
    name = files.download(kind)
    assert name is not None
    match = re.search(r"download='([^']+)' href='data:([^;]+);base64,([^']+)'",
                      files.download_link.value)
    assert match and match.group(1) == name
    payload = base64.b64decode(match.group(3))
    if kind == "scenario":
        assert scenario_files.loads(payload) == served_app.scenario
    elif kind == "csv":
        table = pd.read_csv(io.BytesIO(payload))  # a header row: no options needed
        assert table.columns[0] == "time_ns"
        np.testing.assert_allclose(table.to_numpy()[:, 1:], served_app.radargram.data,
                                   rtol=1e-8, atol=1e-12)
    elif kind == "budget_csv":
        rows = pd.read_csv(io.BytesIO(payload))
        assert list(rows.columns) == ["person", "term", "value", "unit", "explanation"]
        assert "echo-to-noise ratio" in set(rows["term"])
    elif kind == "netcdf":
        import xarray as xr

        ds = xr.open_dataset(io.BytesIO(payload), engine="scipy")
        np.testing.assert_array_equal(ds["amplitude"].to_numpy(), served_app.radargram.data)
        assert ds["time_s"].attrs["units"] == "s"
    elif kind == "png":
        assert payload[:8] == b"\x89PNG\r\n\x1a\n"
    elif kind == "report":
        assert payload.startswith(b"<!DOCTYPE html>")
    else:
        assert payload[:2] == b"PK"


def test_download_names_come_from_the_scenario_name_made_safe(served_app):
    import dataclasses

    served_app.scenario = dataclasses.replace(served_app.scenario, name="../../etc/x y'")
    name = served_app.files.download("csv")
    assert name == "etc_x_y.csv"


# --------------------------------------------------------------------------- notebook mode


@pytest.fixture()
def panel():
    shown: list[Scenario] = []
    p = FilePanel(get_scenario=Scenario.default, set_scenario=shown.append,
                  export_bytes=lambda kind: b"bytes of " + kind.encode(), served=False)
    p.shown = shown
    return p


def test_saving_over_an_existing_file_needs_overwrite(panel, tmp_path):
    target = tmp_path / "plan.json"
    target.write_text("mine")
    panel.path.value = str(target)
    panel.save_button.click()
    assert target.read_text() == "mine"
    assert "already exists" in panel.message.value
    assert "replace existing files" in panel.message.value
    assert panel.save_file(str(target), overwrite=True) == target
    assert Scenario.load(target) == Scenario.default()
    panel.overwrite.value = True
    assert panel.export("csv") == tmp_path / "plan.csv"
    panel.overwrite.value = False
    assert panel.export("csv") is None and "already exists" in panel.message.value
    assert (tmp_path / "plan.csv").read_bytes() == b"bytes of csv"
    assert not [n for n in os.listdir(tmp_path) if n.endswith(PARTIAL_SUFFIX)]


def test_a_failed_export_leaves_nothing_behind(tmp_path):
    def broken(kind):
        raise ValueError("nothing to export yet")

    p = FilePanel(get_scenario=Scenario.default, set_scenario=lambda s: None,
                  export_bytes=broken, served=False)
    p.path.value = str(tmp_path / "a.json")
    assert p.export("npz") is None
    assert "nothing to export yet" in p.message.value
    assert os.listdir(tmp_path) == []
    p.path.value = str(tmp_path / "missing-folder" / "a.json")
    assert p.save_file() is None and "could not write" in p.message.value


def test_open_by_path_in_a_notebook(panel, tmp_path):
    target = tmp_path / "s.json"
    Scenario.example("two_burials").save(target)
    assert panel.open_file(str(target))
    assert panel.shown == [Scenario.example("two_burials")]
    assert not panel.open_file(str(tmp_path / "none.json"))
    assert "No such file" in panel.message.value
