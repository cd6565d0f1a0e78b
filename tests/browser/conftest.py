"""Browser-test fixtures: one headless Debian Chromium per test session.

The browser tests skip, with the reason, on a developer machine without /usr/bin/chromium;
under CI (environment CI=true) they fail instead, so a broken CI image cannot pass silently.
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))

from harness import CHROMIUM, CHROMIUM_ARGS, chromium_missing_reason  # noqa: E402


def _under_ci() -> bool:
    return os.environ.get("CI", "").strip().lower() in ("true", "1", "yes")


@pytest.fixture(scope="session")
def browser():
    """A headless Chromium (Debian's; never a Playwright download)."""
    reason = chromium_missing_reason()
    if reason is not None:
        if _under_ci():
            pytest.fail(f"browser tests cannot run under CI: {reason}")
        pytest.skip(f"browser tests skipped: {reason}")
    from playwright.sync_api import sync_playwright

    with sync_playwright() as playwright:
        chromium = playwright.chromium.launch(executable_path=str(CHROMIUM), args=CHROMIUM_ARGS)
        yield chromium
        chromium.close()
