"""One full training round in a real browser: tap a mark, submit, debrief, download the record.

Real ``snowprobe`` launcher, Debian's headless Chromium with a touch screen (a phone-sized
tap on the radargram), the training dashboard as a trainee meets it.
"""

from __future__ import annotations

import re

import pytest
from harness import Launcher, open_dashboard

from snowprobe_widgets.cautions import CAUTION_TEXT
from snowprobe_widgets.training import SessionRecord

STATUS = ".sp-training-status"


@pytest.fixture(scope="module")
def server(tmp_path_factory, browser):
    launcher = Launcher(args=[], workdir=tmp_path_factory.mktemp("serve-training"))
    try:
        launcher.wait_ready()
        yield launcher
    finally:
        launcher.stop()


def _wait_state(page, state: str, timeout_ms: int = 60_000) -> None:
    page.wait_for_function(
        "([sel, s]) => (document.querySelector(sel)?.textContent || '').includes('state=' + s)",
        arg=[STATUS, state], timeout=timeout_ms)


def _status(page) -> str:
    return page.locator(STATUS).first.inner_text()


def test_one_full_round_with_a_tap_debrief_and_download(server, browser, tmp_path):
    context = browser.new_context(viewport={"width": 1024, "height": 1300}, has_touch=True,
                                  accept_downloads=True)
    page, record, seconds = open_dashboard(context, server.base_url, "training", 120)
    print(f"[browser] training: first round shown after {seconds:.2f} s")
    assert CAUTION_TEXT in page.locator(".sp-caution-band").inner_text()
    # a one-round session with a label
    page.locator(".sp-training-label input").fill("browser trainee")
    rounds = page.locator(".sp-training-rounds input")
    rounds.fill("1")
    rounds.press("Enter")
    page.locator(".sp-training-start").click()
    page.wait_for_function(
        "(sel) => /round=1\\/1 state=marking marks=0/.test("
        "document.querySelector(sel).textContent)", arg=STATUS, timeout=60_000)
    # the truth is nowhere in the page before the answer
    body = page.locator("body").inner_text()
    assert "What else was there" not in body and "person 1" not in body
    # tap inside the snow, two thirds down the picture, as a finger would
    picture = page.locator(".sp-training-radargram svg image").first
    box = picture.bounding_box()
    assert box is not None and box["width"] > 300 and box["height"] > 200
    tap_x, tap_y = box["x"] + 0.5 * box["width"], box["y"] + 0.66 * box["height"]
    page.touchscreen.tap(tap_x, tap_y)
    page.wait_for_function("(sel) => /marks=1/.test(document.querySelector(sel).textContent)",
                           arg=STATUS, timeout=30_000)
    assert "Your marks (1)" in page.locator("body").inner_text()
    # the mark on screen is a touch target of at least 44 px
    glyph = page.locator(".sp-training-radargram svg .dot").last
    gbox = glyph.bounding_box()
    assert gbox is not None and min(gbox["width"], gbox["height"]) >= 40
    submit = page.locator(".sp-training-submit")
    sbox = submit.bounding_box()
    assert sbox is not None and sbox["height"] >= 44
    submit.tap()
    _wait_state(page, "debrief")
    page.wait_for_function("() => document.body.innerText.includes('What else was there')",
                           timeout=30_000)
    text = page.locator("body").inner_text()
    assert "automatic detector" in text.lower() and "Your mark at" in text
    assert re.search(r"\d+ found, \d+ missed, \d+ false alarm", text) or "nobody" in text
    # the summary and its download
    page.locator(".sp-training-next").tap()
    _wait_state(page, "summary")
    with page.expect_download(timeout=30_000) as info:
        page.locator("a.sp-download").first.click()
    download = info.value
    assert download.suggested_filename.endswith(".csv")
    saved = tmp_path / download.suggested_filename
    download.save_as(saved)
    rec = SessionRecord.from_csv(saved.read_text(encoding="utf-8"))
    assert rec.label == "browser trainee" and len(rec.rounds) == 1
    assert rec.rounds[0].marks is not None and len(rec.rounds[0].marks) == 1
    assert record.console_errors == [] and record.page_errors == []
    assert record.foreign_requests(server.base_url) == []
    context.close()
