"""Real-browser screenshots of the pages issue 18 items 3, 5, 6, 8 changed (headless Chromium, Playwright).

Skipped when /usr/bin/chromium or Playwright is missing; screenshots go to test-artifacts/screenshots/.
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest

from levels.catalog import Catalog

from webui import create_app

from tests.webui.conftest import SCREENSHOTS, LiveServer, make_config

CHROMIUM = "/usr/bin/chromium"
DEMO = Path(__file__).resolve().parents[2] / "seed_data" / "demo"
pytestmark = [
    pytest.mark.browser,
    pytest.mark.skipif(not os.path.exists(CHROMIUM), reason="needs the OS Chromium at /usr/bin/chromium"),
]
sync_api = pytest.importorskip("playwright.sync_api")


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    folder = tmp_path_factory.mktemp("browser18")
    url = f"sqlite:///{folder / 'store.sqlite'}"
    catalog = Catalog(url, actor="pytest")
    catalog.init()
    catalog.compute_hydrogenic("H I", n_max=6)
    catalog.import_file(DEMO / "sample-li-cell.csv", sample="li-cell-amber", dataset="li/levels")
    catalog.import_file(DEMO / "lines-li-cell.csv", sample="li-cell-amber", dataset="li/lines")
    application = create_app(make_config(url, folder))
    with LiveServer(application) as live:
        yield live.url
    application.extensions["levels"]["catalog"].close()
    catalog.close()


@pytest.fixture(scope="module")
def page(tmp_path_factory):
    with sync_api.sync_playwright() as playwright:
        chromium = playwright.chromium.launch(executable_path=CHROMIUM, args=[
            "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking"])
        tab = chromium.new_context(viewport={"width": 1400, "height": 950}).new_page()
        tab.set_default_timeout(20_000)
        problems: list[str] = []
        tab.on("pageerror", lambda e: problems.append(str(e)))
        tab.problems = problems
        yield tab
        chromium.close()


def shot(page, name: str) -> None:
    SCREENSHOTS.mkdir(parents=True, exist_ok=True)
    page.screenshot(path=str(SCREENSHOTS / f"{name}.png"), full_page=True)


def test_line_tables_and_diagram_axes(page, site):
    page.goto(f"{site}/species/Li_I?from_nm=700&to_nm=710&medium=air")
    assert page.locator("th", has_text="Ritz").count() >= 1
    shot(page, "issue18-li-observed-ritz")
    page.goto(f"{site}/species/H_I?from_nm=400&to_nm=700&medium=air")
    assert page.locator("td", has_text="Hα").count() >= 1
    shot(page, "issue18-h-line-names")
    for axis in ("broken", "limit"):
        page.goto(f"{site}/species/H_I/diagram?axis={axis}")
        page.wait_for_selector("#diagram[data-state='ready']")
        assert page.locator("#strongest-title").inner_text().startswith("Strongest lines drawn")
        shot(page, f"issue18-h-diagram-{axis}")
    page.goto(f"{site}/species/Li_I/diagram?axis=broken")
    page.wait_for_selector("#diagram[data-state='ready']")
    assert page.locator("#strongest-title").inner_text() == "Lines drawn, no rates known"
    shot(page, "issue18-li-diagram-broken")
    page.goto(f"{site}/emission?species=H+I&te=1eV&ne=1e19m-3&tgas=600K&from=650nm&to=662nm&medium=air&fwhm=0")
    page.wait_for_timeout(3000)
    shot(page, "issue18-h-emission")
    assert not page.problems, page.problems
