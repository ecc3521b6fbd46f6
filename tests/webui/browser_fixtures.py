"""Headless Chromium for the real-browser tests (Playwright over the OS Chromium): the marks and the screenshot
helper, defined once. The ``browser`` and ``page`` fixtures live in ``tests/webui/conftest.py``; a test module
sets ``pytestmark = BROWSER_MARKS`` (skipped when /usr/bin/chromium or Playwright is missing).
"""

from __future__ import annotations

import importlib.util
import os

import pytest

from tests.webui.conftest import CHROMIUM, SCREENSHOTS

BROWSER_MARKS = [
    pytest.mark.browser,
    pytest.mark.skipif(not os.path.exists(CHROMIUM), reason="needs the OS Chromium at /usr/bin/chromium"),
    pytest.mark.skipif(importlib.util.find_spec("playwright") is None, reason="needs Playwright"),
]


def shot(page, name: str, full_page: bool = True) -> None:
    """A screenshot into test-artifacts/screenshots/."""
    SCREENSHOTS.mkdir(parents=True, exist_ok=True)
    page.screenshot(path=str(SCREENSHOTS / f"{name}.png"), full_page=full_page)
