"""Long updates of the design page (a big survey, a long migration) run beside the page
with a progress bar and a stop button; a stop keeps what the page showed before."""

from __future__ import annotations

import dataclasses
import time

import pytest

from snowprobe_widgets.widgets import ScenarioExplorer
from snowprobe_widgets.widgets.long_work import LongWork


@pytest.fixture()
def app() -> ScenarioExplorer:
    app = ScenarioExplorer()
    app.background_updates = True  # as on a served page
    return app


def _deeper(app: ScenarioExplorer):
    s = app.scenario
    return dataclasses.replace(s, persons=tuple(
        dataclasses.replace(p, depth_m=p.depth_m + 0.2) for p in s.persons))


def test_a_long_update_runs_beside_the_page_and_shows_its_progress(app):
    app.long_update_work = 0.0  # every update counts as long
    seen: list[float] = []
    app.update_work.bar.observe(lambda c: seen.append(c["new"]), names="value")
    target = _deeper(app)
    before = app.updates
    app.scenario = target
    assert app.update_work.box.layout.display == "flex"  # bar and stop shown at once
    app.update_work.thread.join(120)
    assert app.scenario == target and app.updates == before + 1
    assert app.update_work.box.layout.display == "none"
    assert seen and max(seen) == pytest.approx(1.0) and seen == sorted(seen)
    assert app.message_text == ""


def test_stopping_a_long_update_keeps_the_picture_and_scenario_on_screen(app):
    app.long_update_work = 0.0
    old, shown, updates = app.scenario, app.radargram, app.updates
    started = []
    real = app.update_work.progress

    def stop_at_first_report(show=None):
        report = real(show)

        def wrapped(fraction: float) -> None:
            if not started:
                started.append(fraction)
                app.update_work.stop_button.click()  # the visitor presses stop
            report(fraction)

        return wrapped

    app.update_work.progress = stop_at_first_report
    app.scenario = _deeper(app)
    app.update_work.thread.join(120)
    assert started
    assert app.scenario == old and app.radargram is shown and app.updates == updates
    assert "Stopped: the calculation was cancelled" in app.message_text
    # the controls show the scenario on screen again, not the one that was stopped
    assert app.person.depth.value == pytest.approx(old.persons[0].depth_m)


def test_a_long_migration_runs_beside_the_page_and_can_be_stopped(app):
    app.long_migration_cells = 0  # every migration counts as long
    chain = app.processing.chain().with_step("migrate", velocity_m_s=2.2e8)
    processed = app.radargram
    app.update_work.progress = _stopping(app.update_work)
    app.processing.show(chain)
    app._on_processing()  # what a change of the processing controls calls
    app.update_work.thread.join(120)
    assert app.radargram is processed  # stopped: the section on screen stays
    assert "Stopped" in app.message_text
    # the controls went back too: migration is off again on screen
    assert "migrate" not in [st.name for st in app.processing.chain().steps if st.enabled]
    del app.update_work.progress  # back to the class's method
    app.processing.show(chain)
    app._on_processing()
    app.update_work.thread.join(120)
    assert app.radargram is not processed
    assert any(r.step == "migrate" for r in app.radargram.history)


def test_changes_during_a_long_update_are_refused_in_words(app):
    app.long_update_work = 0.0
    gate = []
    real = app.update_work.progress

    def hold(show=None):
        report = real(show)

        def wrapped(fraction: float) -> None:
            while not gate:
                time.sleep(0.01)
            report(fraction)

        return wrapped

    app.update_work.progress = hold
    app.scenario = _deeper(app)
    app.scenario = _deeper(app)  # a second change while the first one runs
    assert "still working on the last change" in app.message_text
    gate.append(True)
    app.update_work.thread.join(120)


def _stopping(work: LongWork):
    real = work.progress

    def progress(show=None):
        report = real(show)

        def wrapped(fraction: float) -> None:
            work.stop()
            report(fraction)

        return wrapped

    return progress


def test_stop_during_a_long_migration_ends_it_inside_the_step(app, monkeypatch):
    """The stop is heard inside the migration (at its next band of wavenumbers), not
    only after it: the work ends at the first report after the stop."""
    from snowprobe_widgets.processing import migration

    monkeypatch.setattr(migration, "_CACHED_MAP_SAMPLES", 0)
    monkeypatch.setattr(migration, "_MAP_CHUNK_CELLS", 10_000)  # many small bands
    app.long_migration_cells = 0
    # through a 3 m air gap: a set of Stolt migrations, the longest step by far
    chain = app.processing.chain().with_step("migrate", velocity_m_s=2.2e8,
                                             antenna_height_m=3.0)
    n_steps = len([s for s in chain.steps if s.enabled])
    processed = app.radargram
    real = app.update_work.progress
    reports: list[float] = []
    stopped_at: list[tuple[float, int]] = []

    def stop_inside_the_migration(show=None):
        report = real(show)

        def wrapped(fraction: float) -> None:
            reports.append(fraction)
            if not stopped_at and (n_steps - 1) / n_steps < fraction < 1.0:
                stopped_at.append((time.perf_counter(), len(reports)))
                app.update_work.stop_button.click()  # the visitor presses stop
            report(fraction)

        return wrapped

    app.update_work.progress = stop_inside_the_migration
    app.processing.show(chain)
    app._on_processing()
    app.update_work.thread.join(120)
    ended = time.perf_counter()
    assert stopped_at, "the migration reported no progress of its own"
    when, count = stopped_at[0]
    assert len(reports) == count  # the report at which stop was pressed ended the work
    assert reports[-1] < 1.0  # the chain never finished
    assert ended - when < 10.0  # bounded (upper bound under load; it is milliseconds)
    assert app.radargram is processed and "Stopped" in app.message_text
