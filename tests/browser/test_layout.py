"""The design dashboard at the screen sizes people use: geometry checks, not pixels.

At 1024 x 768 (tablet), 1280 x 800 and 1440 x 900: the control column is wide enough to
read and has no horizontal scroll, no label or tab title in it is cut, every processing
step's on/off switch lies inside the column, no developer counter shows; at 1280 x 800 the
verdict cards are visible without scrolling.
"""

from __future__ import annotations

import os

import pytest
from harness import Launcher, open_dashboard

from snowprobe_widgets.widgets.explorer import CONTROLS_CLASS
from snowprobe_widgets.widgets.processing_panel import SWITCH_CLASS
from snowprobe_widgets.widgets.verdict import VERDICT_CLASS

SIZES = [(1024, 768), (1280, 800), (1440, 900)]
#: Narrowest control column that still shows a label, a slider and its value side by side.
MIN_COLUMN_PX = 320

#: JavaScript: every visible label or tab title inside ``root`` that is cut (its text is
#: wider than its box), as "text (scroll width > client width)".
CUT_JS = """(root) => {
  const out = [];
  const box = document.querySelector(root);
  for (const el of box.querySelectorAll('.widget-label, .lm-TabBar-tabLabel, label')) {
    if (el.offsetParent === null || !el.textContent.trim()) continue;
    if (el.scrollWidth > el.clientWidth + 1) {
      out.push(`${el.textContent.trim()} (${el.scrollWidth} > ${el.clientWidth})`);
    }
  }
  return out;
}"""


#: JavaScript: the visible elements inside ``root`` that reach past its right edge.
WIDE_JS = """(root) => {
  const box = document.querySelector(root);
  const right = box.getBoundingClientRect().right;
  const out = [];
  for (const el of box.querySelectorAll('*')) {
    const r = el.getBoundingClientRect();
    if (el.offsetParent !== null && r.width > 0 && r.right > right + 1) {
      out.push(`${el.tagName}.${el.className} (${Math.round(r.right - right)} px)`);
    }
  }
  return out.slice(0, 8);
}"""


@pytest.fixture(scope="module")
def server(tmp_path_factory, browser):
    launcher = Launcher(args=[], workdir=tmp_path_factory.mktemp("layout"))
    try:
        launcher.wait_ready()
        yield launcher
    finally:
        launcher.stop()


@pytest.fixture(scope="module", params=SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
def page(request, server, browser):
    width, height = request.param
    context = browser.new_context(viewport={"width": width, "height": height})
    page, _record, _seconds = open_dashboard(context, server.base_url, "design", 90.0)
    page.wait_for_selector(f".{VERDICT_CLASS} .sp-verdict-card", timeout=30_000)
    shots = os.environ.get("SNOWPROBE_SHOTS")  # a folder for screenshots to look at by eye
    if shots:
        page.screenshot(path=f"{shots}/design-{width}x{height}.png")
    yield page
    context.close()


def _box(page, selector: str) -> dict:
    box = page.locator(selector).first.bounding_box()
    assert box is not None, f"{selector} is not shown"
    return box


def test_control_column_is_readable_and_does_not_scroll_sideways(page) -> None:
    column = f".{CONTROLS_CLASS}"
    box = _box(page, column)
    assert box["width"] >= MIN_COLUMN_PX
    widths = page.eval_on_selector(column, "el => [el.scrollWidth, el.clientWidth]")
    assert widths[0] <= widths[1] + 1, (f"control column scrolls sideways: {widths}: "
                                        f"{page.evaluate(WIDE_JS, column)}")
    assert page.evaluate(CUT_JS, column) == []
    # the page itself does not scroll sideways either
    assert page.evaluate("document.documentElement.scrollWidth") <= \
        page.viewport_size["width"] + 1


def test_every_processing_switch_is_inside_the_column(page) -> None:
    column = f".{CONTROLS_CLASS}"
    page.locator(f"{column} .lm-TabBar-tab", has_text="Processing").first.click()
    page.wait_for_selector(f".{SWITCH_CLASS}", state="visible")
    col = _box(page, column)
    switches = page.locator(f".{SWITCH_CLASS}")
    assert switches.count() >= 7
    for i in range(switches.count()):
        b = switches.nth(i).bounding_box()
        assert b is not None and b["width"] > 0 and b["height"] > 0
        assert col["x"] - 1 <= b["x"] and b["x"] + b["width"] <= col["x"] + col["width"] + 1
    assert page.evaluate(CUT_JS, column) == []
    page.locator(f"{column} .lm-TabBar-tab", has_text="Person").first.click()


def test_no_developer_counters_on_the_page(page) -> None:
    text = page.evaluate("document.body.innerText")
    assert "draws=" not in text and "updates=" not in text and "simulated:" not in text


def test_verdict_cards_are_above_the_fold_at_1280x800(page) -> None:
    card = _box(page, f".{VERDICT_CLASS} .sp-verdict-card")
    size = page.viewport_size
    if (size["width"], size["height"]) == (1280, 800):
        assert card["y"] >= 0 and card["y"] + card["height"] <= size["height"]
    assert card["width"] <= size["width"]
