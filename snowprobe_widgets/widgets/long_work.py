"""LongWork: run a long calculation beside the page, with progress and a stop button.

A kernel handles one message at a time: a calculation run inside a button's callback
keeps the page from reaching the kernel until it ends, so a stop button could never be
heard. LongWork runs the calculation in a worker thread instead (widget updates from it
reach the page as usual); the calculation reports progress through :meth:`progress`, which
raises :class:`WorkStopped` once the visitor pressed stop.
"""

from __future__ import annotations

import threading
from collections.abc import Callable
from typing import Any

import ipywidgets as widgets

#: Smallest advance of the fraction done that the progress bar is sent.
_BAR_STEP = 0.01


class WorkStopped(ValueError):
    """The visitor stopped the calculation (shown as a plain message, like a refusal)."""


class LongWork:
    """One long calculation at a time, with a stop button.

    Parameters
    ----------
    label : str
        Text of the stop button.

    Attributes
    ----------
    stop_button : ipywidgets.Button
        Enabled while a calculation runs.
    bar : ipywidgets.FloatProgress
        The fraction done of a calculation reporting through ``progress()`` with no
        display of its own.
    box : ipywidgets.HBox
        The bar and the stop button, shown only while a calculation runs (for pages
        that show them only then).
    thread : threading.Thread or None
        The worker of the last calculation started in the background.
    """

    def __init__(self, label: str = "stop the calculation") -> None:
        self.stop_button = widgets.Button(description=label, disabled=True)
        self.stop_button.on_click(lambda _: self.stop())
        self.bar = widgets.FloatProgress(value=0.0, min=0.0, max=1.0,
                                         layout=widgets.Layout(width="240px"))
        self.box = widgets.HBox([self.bar, self.stop_button],
                                layout=widgets.Layout(display="none"))
        self._stop = threading.Event()
        self.thread: threading.Thread | None = None

    @property
    def running(self) -> bool:
        """True while a background calculation runs."""
        return self.thread is not None and self.thread.is_alive()

    def stop(self) -> None:
        """Ask the running calculation to stop at its next progress report."""
        self._stop.set()

    def progress(self, show: Callable[[float], None] | None = None
                 ) -> Callable[[float], None]:
        """A progress callback that shows the fraction done (on ``show``, else on
        :attr:`bar`, in steps of at least a hundredth), or stops the work by raising
        :class:`WorkStopped` (at every report, shown or not)."""
        def on_bar(fraction: float) -> None:
            self.bar.value = fraction

        shown = on_bar if show is None else show
        last = [-1.0]

        def report(fraction: float) -> None:
            if self._stop.is_set():
                raise WorkStopped("Stopped: the calculation was cancelled; the page keeps "
                                  "what it showed before.")
            fraction = float(min(max(fraction, 0.0), 1.0))
            # a step of a hundredth or more: a long step reports far more often than
            # the bar can show, and every change is a message to the page
            if fraction - last[0] >= _BAR_STEP or fraction in (0.0, 1.0):
                last[0] = fraction
                shown(fraction)

        return report

    def run(self, job: Callable[[], Any], background: bool = False) -> Any:
        """Run ``job``; in the background return None at once, else return its result.

        Raises
        ------
        ValueError
            When a background calculation is still running.
        """
        if self.running:
            raise ValueError("a calculation is already running: wait for it or stop it")
        self._stop.clear()
        self.stop_button.disabled = False
        self.bar.value = 0.0
        self.box.layout.display = "flex"

        def work() -> Any:
            try:
                return job()
            finally:
                self.stop_button.disabled = True
                self.box.layout.display = "none"

        if not background:
            return work()
        self.thread = threading.Thread(target=work, name="snowprobe-long-work", daemon=True)
        self.thread.start()
        return None


__all__ = ["LongWork", "WorkStopped"]
