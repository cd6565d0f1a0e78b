"""LongWork's progress callback: few messages to the page, a stop heard at every report."""

from __future__ import annotations

import pytest

from snowprobe_widgets.widgets.long_work import LongWork, WorkStopped


def test_progress_sends_the_bar_hundredths_only_and_stops_at_any_report():
    work = LongWork()
    shown: list[float] = []
    report = work.progress(shown.append)
    for k in range(10_001):
        report(k / 10_000)
    assert 100 <= len(shown) <= 101 and shown[0] == 0.0 and shown[-1] == 1.0
    steps = [b - a for a, b in zip(shown, shown[1:], strict=False)]
    assert min(steps[:-1]) >= 0.01 - 1e-12  # the last one: 1.0 is always shown
    report = work.progress(shown.append)
    report(0.5)
    work.stop()
    with pytest.raises(WorkStopped, match="cancelled"):
        report(0.501)  # not a hundredth on: not shown, but the stop is heard
