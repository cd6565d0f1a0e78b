"""FilePanel: scenario files and exports, delivered the safe way for where the app runs.

Two modes, chosen by :func:`snowprobe_widgets.serving.served` unless given:

* **served** (a dashboard page from ``snowprobe serve``): the page never names a server path.
  A scenario comes in by upload from the visitor's computer (``ipywidgets.FileUpload``, at
  most :data:`MAX_UPLOAD_BYTES`, read by the same validating loader as files,
  :func:`snowprobe_widgets.scenario_files.loads`); the scenario and every export leave as a
  download link the visitor's browser saves (a ``data:`` URL inside the page: no server
  file is written, nothing is read from the server's disk);
* **notebook** (the user's own kernel): a path box, ``open_file`` / ``save_file`` and
  exports written next to the scenario file, each through
  :func:`snowprobe_widgets.atomic_files.write_atomically`. Writing over an existing file
  needs ``overwrite=True`` (the "replace existing files" box in the widget).
"""

from __future__ import annotations

import html
import pathlib
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import ipywidgets as widgets

from snowprobe_widgets import scenario_files
from snowprobe_widgets.atomic_files import write_atomically
from snowprobe_widgets.scene import Scenario
from snowprobe_widgets.serving import served as _served_by_launcher
from snowprobe_widgets.widgets._common import (
    download_link,
    guarded,
    message_line,
    show_message,
)

#: CSS classes of the file controls (browser tests rely on them).
SAVE_CLASS, OPEN_CLASS, PATH_CLASS = "sp-save", "sp-open", "sp-file-path"
UPLOAD_CLASS, DOWNLOAD_CLASS = "sp-upload", "sp-download"

#: Largest scenario file an upload may bring (the loader's own limit).
MAX_UPLOAD_BYTES: int = scenario_files.MAX_FILE_BYTES


@dataclass(frozen=True)
class ExportKind:
    """One kind of export: button label, file-name ending and media type."""

    label: str
    ending: str
    media_type: str


#: The exports the panel offers, keyed by the name ``export`` / ``download`` take.
EXPORT_KINDS: dict[str, ExportKind] = {
    "csv": ExportKind("data as CSV", ".csv", "text/csv"),
    "budget_csv": ExportKind("link budget as CSV", "_budget.csv", "text/csv"),
    "netcdf": ExportKind("data as netCDF", ".nc", "application/x-netcdf"),
    "npz": ExportKind("data as NPZ", ".npz", "application/octet-stream"),
    "png": ExportKind("picture as PNG", ".png", "image/png"),
    "report": ExportKind("design report (HTML)", "_report.html", "text/html"),
    "compare": ExportKind("A/B comparison (HTML)", "_compare.html", "text/html"),
}


def _file_stem(name: str) -> str:
    """A safe download file-name stem from a scenario name (letters, digits, - and _)."""
    kept = "".join(c if c.isalnum() or c in "-_" else "_" for c in name.strip())[:60]
    return kept.strip("_") or "scenario"


def _size_text(n_bytes: int) -> str:
    return f"{n_bytes / 1e6:.1f} MB" if n_bytes >= 100_000 else f"{n_bytes / 1e3:.0f} kB"


class FilePanel(widgets.VBox):
    """Open, save and export around one app, by upload/download or by path.

    Parameters
    ----------
    get_scenario : callable
        Returns the scenario on screen.
    set_scenario : callable
        Shows a scenario that was opened or uploaded.
    export_bytes : callable
        ``export_bytes(kind) -> bytes`` for each key of :data:`EXPORT_KINDS`; raises
        ValueError when there is nothing to export.
    served : bool, optional
        Force a mode (default: served when the ``snowprobe`` launcher runs this kernel).

    Attributes
    ----------
    message : ipywidgets.HTML
        Plain-language refusals.
    status : ipywidgets.HTML
        What was last opened, saved or prepared.
    """

    def __init__(self, *, get_scenario: Callable[[], Scenario],
                 set_scenario: Callable[[Scenario], None],
                 export_bytes: Callable[[str], bytes], served: bool | None = None,
                 **kwargs: Any) -> None:
        self.served = _served_by_launcher() if served is None else bool(served)
        self._get_scenario = get_scenario
        self._set_scenario = set_scenario
        self._export_bytes = export_bytes
        self.message = message_line()
        self.status = widgets.HTML()
        self.demo = widgets.Dropdown(options=list(Scenario.examples()), description="demo")
        self.demo_button = widgets.Button(description="start from demo")
        self.demo_button.on_click(lambda _: self._load_demo())
        self.save_button = widgets.Button(description="save scenario")
        self.save_button.add_class(SAVE_CLASS)
        self.export_buttons = {k: widgets.Button(description=e.label)
                               for k, e in EXPORT_KINDS.items()}
        if self.served:
            rows = self._served_controls()
        else:
            rows = self._notebook_controls()
        super().__init__(children=[*rows, self.message, self.status], **kwargs)

    # ------------------------------------------------------------------ served mode
    def _served_controls(self) -> list[widgets.Widget]:
        self.upload = widgets.FileUpload(
            accept=".json,application/json", multiple=False,
            description="open a scenario file", layout=widgets.Layout(width="220px"))
        self.upload.add_class(UPLOAD_CLASS)
        self.upload.observe(self._on_upload, names="value")
        self.download_link = widgets.HTML()
        self.download_link.add_class(DOWNLOAD_CLASS)
        self.save_button.on_click(lambda _: self.download("scenario"))
        for kind, button in self.export_buttons.items():
            button.on_click(lambda _, k=kind: self.download(k))
        return [
            widgets.HBox([self.upload, self.save_button, self.demo, self.demo_button]),
            widgets.HBox([widgets.HTML("download to your computer:"),
                          *self.export_buttons.values()]),
            self.download_link,
        ]

    def _on_upload(self, change: dict) -> None:
        files = change["new"]
        if not files:
            return
        item = files[0]
        try:
            self.load_upload(str(item.get("name", "")), item.get("content", b""),
                             int(item.get("size", 0)))
        finally:
            # the content stays in the kernel (and in the page) until cleared
            self.upload.unobserve(self._on_upload, names="value")
            self.upload.value = ()
            self.upload.observe(self._on_upload, names="value")

    def load_upload(self, name: str, content: Any, size: int | None = None) -> bool:
        """Read an uploaded scenario file's bytes with the validating loader; True if shown.

        ``name`` only labels messages: nothing is opened by name.
        """
        label = name[:80]
        n = len(content) if size is None else int(size)
        if n > MAX_UPLOAD_BYTES or len(content) > MAX_UPLOAD_BYTES:
            show_message(self.message, f"{label}: {n:,} bytes is over the {MAX_UPLOAD_BYTES:,} "
                                       "byte limit for scenario files; nothing was changed")
            return False
        loaded: list[Scenario] = []
        ok = guarded(self.message, lambda: loaded.append(
            scenario_files.loads(bytes(content), source=label)))
        if ok:
            self._set_scenario(loaded[0])
            self.status.value = f"opened {html.escape(label)} (uploaded)"
        return ok

    def download(self, kind: str) -> str | None:
        """Offer the scenario (``"scenario"``) or an export as a link the browser saves.

        Returns the offered file name (None when refused). No server file is written.
        """
        if kind != "scenario" and kind not in EXPORT_KINDS:
            raise ValueError(f"kind = {kind!r}; allowed: scenario, {', '.join(EXPORT_KINDS)}")
        stem = _file_stem(self._get_scenario().name)
        payload: list[bytes] = []
        if kind == "scenario":
            ending, media = ".json", "application/json"
            ok = guarded(self.message, lambda: payload.append(
                scenario_files.dumps(self._get_scenario()).encode("utf-8")))
        else:
            ending, media = EXPORT_KINDS[kind].ending, EXPORT_KINDS[kind].media_type
            ok = guarded(self.message, lambda: payload.append(self._export_bytes(kind)))
        if not ok:
            self.download_link.value = ""
            return None
        data = payload[0]
        name = stem + ending
        self.download_link.value = download_link(
            data, name, media, f"Save {name} ({_size_text(len(data))}) to your computer",
            css_class="sp-download-link")
        self.status.value = f"{html.escape(name)} is ready to download"
        return name

    # ------------------------------------------------------------------ notebook mode
    def _notebook_controls(self) -> list[widgets.Widget]:
        self.path = widgets.Text(value="scenario.json", description="file",
                                 placeholder="path/to/scenario.json",
                                 layout=widgets.Layout(width="360px"))
        self.path.add_class(PATH_CLASS)
        self.open_button = widgets.Button(description="open")
        self.open_button.add_class(OPEN_CLASS)
        self.overwrite = widgets.Checkbox(value=False, indent=False,
                                          description="replace existing files")
        self.open_button.on_click(lambda _: self.open_file())
        self.save_button.on_click(lambda _: self.save_file())
        for kind, button in self.export_buttons.items():
            button.on_click(lambda _, k=kind: self.export(k))
        return [
            widgets.HBox([self.path, self.open_button, self.save_button, self.overwrite]),
            widgets.HBox([self.demo, self.demo_button]),
            widgets.HBox([widgets.HTML("export next to the file:"),
                          *self.export_buttons.values()]),
        ]

    def _refuse_in_served_mode(self) -> bool:
        if self.served:
            show_message(self.message, "This dashboard page cannot open or write files on "
                                       "the server: open a scenario with the upload button "
                                       "and save with the download links.")
            return True
        return False

    def _target(self, path: str | None) -> pathlib.Path:
        return pathlib.Path(path or self.path.value).expanduser()

    def _write(self, target: pathlib.Path, make: Callable[[], bytes],
               overwrite: bool | None) -> bool:
        replace = self.overwrite.value if overwrite is None else bool(overwrite)

        def run() -> None:
            if "\0" in str(target):
                raise ValueError(f"the path {str(target)!r} contains a NUL character")
            if not replace and (target.exists() or target.is_symlink()):
                raise ValueError(
                    f"{target} already exists: tick 'replace existing files' to write over "
                    "it (in code: overwrite=True)")
            payload = make()
            try:
                write_atomically(target, payload)
            except OSError as exc:
                raise ValueError(f"could not write {target}: {exc.strerror or exc}") from None

        return guarded(self.message, run)

    def save_file(self, path: str | None = None, *,
                  overwrite: bool | None = None) -> pathlib.Path | None:
        """Save the scenario on screen to ``path`` (default: the path box).

        An existing file is replaced only with ``overwrite=True`` (default: the "replace
        existing files" box). Returns the path written, or None when refused.
        """
        if self._refuse_in_served_mode():
            return None
        target = self._target(path)
        if self._write(target, lambda: scenario_files.dumps(
                self._get_scenario()).encode("utf-8"), overwrite):
            self.status.value = f"saved {html.escape(str(target))}"
            return target
        return None

    def open_file(self, path: str | None = None) -> bool:
        """Open a scenario file (default: the path box); True on success."""
        if self._refuse_in_served_mode():
            return False
        target = self._target(path)
        loaded: list[Scenario] = []
        ok = guarded(self.message, lambda: loaded.append(scenario_files.load(target)))
        if ok:
            self._set_scenario(loaded[0])
            self.status.value = f"opened {html.escape(str(target))}"
        return ok

    def export_paths(self) -> dict[str, pathlib.Path]:
        """Where the exports go: next to the path box's file, same stem."""
        base = self._target(None)
        stem = base.with_suffix("") if base.suffix else base
        return {k: stem.with_name(stem.name + e.ending) for k, e in EXPORT_KINDS.items()}

    def export(self, kind: str, *, overwrite: bool | None = None) -> pathlib.Path | None:
        """Write one export next to the scenario file (notebook mode); its path or None."""
        if kind not in EXPORT_KINDS:
            raise ValueError(f"kind = {kind!r}; allowed: {', '.join(EXPORT_KINDS)}")
        if self._refuse_in_served_mode():
            return None
        target = self.export_paths()[kind]
        if self._write(target, lambda: self._export_bytes(kind), overwrite):
            self.status.value = f"wrote {html.escape(str(target))}"
            return target
        return None

    # ------------------------------------------------------------------ both
    def _load_demo(self) -> None:
        if guarded(self.message, lambda: self._set_scenario(Scenario.example(self.demo.value))):
            self.status.value = f"demo {html.escape(self.demo.value)}"


__all__ = ["DOWNLOAD_CLASS", "EXPORT_KINDS", "MAX_UPLOAD_BYTES", "OPEN_CLASS", "PATH_CLASS",
           "SAVE_CLASS", "UPLOAD_CLASS", "ExportKind", "FilePanel"]
