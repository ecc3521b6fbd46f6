"""The diagram's side list of strongest lines writes each wavelength in the form's medium (headless Chromium).

Air at and above 200 nm when the form asks for air (the default), vacuum when it asks for vacuum; H I's Balmer
lines of the computed store are above 200 nm and its Lyman lines below, so both forms show up. Skipped when
/usr/bin/chromium or Playwright is missing.
"""

from __future__ import annotations

import re

import pytest

from levels.catalog import Catalog
from levels.service.contract import LineQuery

from webui import create_app

from tests.webui.browser_fixtures import BROWSER_MARKS
from tests.webui.conftest import LiveServer, make_config

pytestmark = BROWSER_MARKS


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    folder = tmp_path_factory.mktemp("side-list")
    url = f"sqlite:///{folder / 'store.sqlite'}"
    catalog = Catalog(url, actor="pytest")
    catalog.init()
    catalog.compute_hydrogenic("H I", n_max=5)
    application = create_app(make_config(url, folder))
    with LiveServer(application) as live:
        yield live.url, catalog
    application.extensions["levels"]["catalog"].close()
    catalog.close()


def _side_list(page, url: str) -> list[str]:
    page.goto(url)
    page.wait_for_selector("#diagram[data-state='ready']")
    return page.locator("#strongest .nums").all_inner_texts()


@pytest.mark.parametrize("medium", ["air", "vacuum"])
def test_side_list_follows_the_medium(page, site, medium):
    url, catalog = site
    texts = _side_list(page, f"{url}/species/H_I/diagram?medium={medium}")
    assert texts and page.problems == []
    rows = {round(r["vacuum_nm"], 4): r for r in catalog.line_rows(LineQuery(spectrum="H I"))[0]}
    for text in texts:
        kind, value = re.match(r"λ (air|vac) ([0-9.]+) nm", text).groups()
        if kind == "air":
            assert medium == "air"
            row = next(r for r in rows.values() if r["air_nm"] is not None and f"{r['air_nm']:.4f}" == value)
            assert row["vacuum_nm"] >= 200.0
        else:
            row = rows[float(value)]
            assert medium == "vacuum" or row["air_nm"] is None  # vacuum below 200 nm even in an air listing
    kinds = {t.split()[1] for t in texts}
    assert kinds == ({"air", "vac"} if medium == "air" else {"vac"})
