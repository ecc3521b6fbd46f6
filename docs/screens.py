"""Screenshots of every page of the web site over the invented demo store, for reviews.

Builds the demo store in a temporary folder, serves the site on a free loopback port and saves one
full-page PNG per page with headless Chromium (the OS package) driven by Playwright.

Usage::

    python docs/screens.py OUTPUT_FOLDER
"""

from __future__ import annotations

import re
import sys
import tempfile
from pathlib import Path
from urllib.parse import quote

from click.testing import CliRunner

from levels.cli import main

from webui import create_app

from tests.webui.conftest import LiveServer, make_config

PAGES = {
    "catalogue": "/",
    "species-li-i": "/species/" + quote("Li I"),
    "species-h-i": "/species/" + quote("H I"),
    "diagram-li-i": "/species/" + quote("Li I") + "/diagram",
    "diagram-h-i": "/species/" + quote("H I") + "/diagram",
    "line-finder": "/lines?from=400nm&to=700nm",
    "multiplets-li-i": "/species/" + quote("Li I") + "?from=600nm&to=1000nm&multiplets=true#lines",
    "datasets": "/datasets",
    "dataset-1": "/datasets/1",
    "line-record": "/species/" + quote("Li I") + "/lines/{first_line}",
    "desk": "/desk/",
    "emission": "/emission",
    "analysis": "/analysis/",
}


def main_(out: Path) -> None:
    """Build the demo store, serve it and save every page of ``PAGES`` under ``out``."""
    from playwright.sync_api import sync_playwright

    out.mkdir(parents=True, exist_ok=True)
    with tempfile.TemporaryDirectory() as folder:
        url = f"sqlite:///{Path(folder) / 'demo.sqlite'}"
        result = CliRunner().invoke(main, ["--db", url, "demo"])
        if result.exit_code != 0:
            raise SystemExit(result.output)
        application = create_app(make_config(url, Path(folder)))
        with LiveServer(application) as live, sync_playwright() as playwright:
            browser = playwright.chromium.launch(executable_path="/usr/bin/chromium",
                                                 args=["--headless", "--no-sandbox", "--disable-gpu"])
            page = browser.new_page(viewport={"width": 1400, "height": 950})
            species_html = page.request.get(live.url + PAGES["species-li-i"]).text()
            first_line = re.search(r"/lines/(\d+)", species_html).group(1)  # the first line record linked
            for name, path in PAGES.items():
                response = page.goto(live.url + path.format(first_line=first_line))
                page.wait_for_timeout(1500)
                page.screenshot(path=str(out / f"{name}.png"), full_page=True)
                page.screenshot(path=str(out / f"{name}-top.png"))  # the first screen, readable at a glance
                print(f"{name}: {path.format(first_line=first_line)} -> {response.status if response else '?'}")
            browser.close()


if __name__ == "__main__":
    main_(Path(sys.argv[1]))
