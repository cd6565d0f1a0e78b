"""The Detection probability dashboard in a real browser: run a small sweep, see the map,
open a cell in the explorer."""

from __future__ import annotations

import re

import pytest
from harness import Launcher, open_dashboard


@pytest.fixture(scope="module")
def server(tmp_path_factory, browser):
    launcher = Launcher(args=[], workdir=tmp_path_factory.mktemp("serve-detectability"))
    try:
        launcher.wait_ready()
        yield launcher
    finally:
        launcher.stop()


def _type_into(page, selector: str, text: str) -> None:
    box = page.locator(selector).first
    box.click()
    page.keyboard.press("Control+A")
    page.keyboard.type(text)
    page.keyboard.press("Enter")


def test_run_a_small_sweep_see_the_map_and_open_a_cell(server, browser):
    context = browser.new_context(viewport={"width": 1500, "height": 1400})
    try:
        page, record, _seconds = open_dashboard(context, server.base_url, "detectability",
                                                90)
        # one field, two values, two realizations, no uncertain fields: a quick sweep
        page.locator(".sp-field-y select").select_option("(none)")
        _type_into(page, ".sp-field-x .sp-field-steps input", "2")
        page.locator(".sp-preset select").select_option(index=0)
        _type_into(page, ".sp-realizations .widget-readout", "2")
        page.locator(".sp-sweep-run").click()
        page.wait_for_function(
            "() => /sweep: complete/.test(document.querySelector("
            "'.sp-detectability-status').textContent)", timeout=180_000)
        assert page.locator(".sp-sweep-progress").inner_text().strip() == "done: 4 realizations"
        status = page.locator(".sp-detectability-status").inner_text()
        assert int(re.search(r"draws=(\d+)", status).group(1)) >= 2
        # the map shows a picture; clicking its middle opens that cell's scene
        picture = page.locator(".sp-detectability-map svg image").first
        assert picture.get_attribute("href").startswith(("blob:", "data:image/png"))
        picture.click()
        page.wait_for_selector(".sp-opened-scene", timeout=120_000)
        page.wait_for_function(
            "() => /draws=([1-9])/.test((document.querySelector('.sp-radargram-status')"
            " || {textContent: ''}).textContent)", timeout=120_000)
        text = page.locator(".sp-detectability-readout").inner_text()
        assert "found" in text and "false alarms" in text
        assert record.page_errors == [] and record.console_errors == []
        assert record.foreign_requests(server.base_url) == []
    finally:
        context.close()
