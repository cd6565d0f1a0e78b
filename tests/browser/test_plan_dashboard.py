"""The plan dashboard in a real browser on a tablet-sized screen (1024 x 768), served by the
real ``snowprobe`` launcher: changing the lane spacing updates the curves and the plan, and
the printable plan downloads and opens with its cautions."""

from __future__ import annotations

import pytest
from harness import STATUS_SELECTOR, Launcher, draws, open_dashboard

from snowprobe_widgets.cautions import CAUTION_TEXT

SELECTOR = STATUS_SELECTOR["plan"]


@pytest.fixture(scope="module")
def page(tmp_path_factory, browser):
    launcher = Launcher(args=[], workdir=tmp_path_factory.mktemp("serve-plan"))
    context = browser.new_context(viewport={"width": 1024, "height": 768},
                                  accept_downloads=True)
    try:
        launcher.wait_ready()
        opened, record, seconds = open_dashboard(context, launcher.base_url, "plan", 90.0)
        print(f"[browser] plan at 1024x768: first render {seconds:.2f} s")
        yield opened, record, launcher
    finally:
        context.close()
        launcher.stop()


def _set_spacing(page, value_m: float) -> None:
    readout = page.locator(".sp-plan-spacing .widget-readout")
    readout.click()
    page.keyboard.press("Control+A")
    page.keyboard.type(f"{value_m:.2f}")
    page.keyboard.press("Enter")


def _wait_for_redraw(page, before: int) -> None:
    page.wait_for_function(
        """([sel, n]) => {
             const m = /draws=(\\d+)/.exec(document.querySelector(sel).textContent);
             return m && Number(m[1]) > n;
           }""", arg=[SELECTOR, before], timeout=60_000)


def test_fits_a_tablet_screen_without_sideways_scrolling(page):
    p, record, _launcher = page
    width = p.evaluate("() => document.scrollingElement.scrollWidth")
    assert width <= 1024
    assert p.locator(".sp-plan-spacing").is_visible()
    assert CAUTION_TEXT in p.locator(".sp-caution-band").inner_text()
    assert record.console_errors == [] and record.page_errors == []


def test_spacing_updates_the_curves_and_the_plan(page):
    p, record, launcher = page
    before = draws(p, SELECTOR)
    status_before = p.locator(SELECTOR).inner_text()
    text_before = p.locator("body").inner_text()
    paths_before = p.locator(".bqplot svg path.line").evaluate_all(
        "els => els.map(e => e.getAttribute('d'))")
    current = float(p.locator(".sp-plan-spacing .widget-readout").inner_text())
    _set_spacing(p, 6.0 if current < 5 else 2.0)
    _wait_for_redraw(p, before)
    assert p.locator(SELECTOR).inner_text() != status_before
    p.wait_for_function(
        "([old]) => Array.from(document.querySelectorAll('.bqplot svg path.line'))"
        ".map(e => e.getAttribute('d')).join('|') !== old", arg=["|".join(
            str(x) for x in paths_before)], timeout=30_000)
    text_after = p.locator("body").inner_text()
    assert "m lane spacing" in text_after and text_after != text_before
    assert record.foreign_requests(launcher.base_url) == []


def test_printable_plan_downloads_and_opens(page, browser):
    p, record, launcher = page
    p.locator(".sp-plan-report button, button.sp-plan-report").first.click()
    link = p.locator("a.sp-plan-download")
    link.wait_for(timeout=30_000)
    with p.expect_download(timeout=30_000) as info:
        link.click()
    path = info.value.path()
    text = open(path, encoding="utf-8").read()
    assert info.value.suggested_filename == "search-plan.html"
    assert CAUTION_TEXT in text and "preparation and training only" in text
    view = browser.new_page()
    try:
        view.set_content(text)
        assert view.locator("h1").inner_text().startswith("Radar search plan")
        assert view.locator("svg").count() == 1
        assert "lane spacing" in view.locator("body").inner_text()
        # printed, it is one page (A4, headless Chromium's PDF printer)
        pdf = view.pdf(format="A4")
        assert pdf.count(b"/Type /Page") - pdf.count(b"/Type /Pages") == 1
    finally:
        view.close()
    assert record.foreign_requests(launcher.base_url) == []
