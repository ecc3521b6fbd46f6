"""Real-browser screenshots of the pages issue 18 items 3, 5, 6, 8 changed (headless Chromium, Playwright).

Skipped when /usr/bin/chromium or Playwright is missing; screenshots go to test-artifacts/screenshots/.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from levels.catalog import Catalog

from webui import create_app

from tests.webui.browser_fixtures import BROWSER_MARKS, shot
from tests.webui.conftest import LiveServer, make_config

DEMO = Path(__file__).resolve().parents[2] / "seed_data" / "demo"
pytestmark = BROWSER_MARKS


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
