"""The desk in a real browser (Chromium, site on 127.0.0.1): a measured-lines file is checked and written, a
peaks file gets one message saying what it is and where it goes (issue 14, item 5)."""

from __future__ import annotations

from tests.webui.browser_fixtures import BROWSER_MARKS
from tests.webui.conftest import dataset_names
from tests.webui.test_browser import site  # noqa: F401  (fixtures)
from tests.webui.test_desk_file_kinds import PEAKS_CSV, line_count, ritz_lines_csv

pytestmark = BROWSER_MARKS


def test_a_lines_file_is_checked_then_written(page, site, tmp_path):  # noqa: F811
    cat = site["catalog"]
    path = tmp_path / "li-lines.csv"
    path.write_bytes(ritz_lines_csv(cat))
    before = line_count(cat)
    page.goto(site["url"] + "/desk/")
    page.set_input_files("#up-file", str(path))
    page.fill("#up-dataset", "browser/li-lines")
    page.get_by_role("button", name="Check the file").click()
    page.locator("#rows-title").wait_for()
    assert page.locator("#rows-title").inner_text() == "2 measured lines ready, no problems"
    page.get_by_role("button", name="Write these 2 measured lines as one dataset").click()
    page.wait_for_url("**/datasets/*")
    assert cat.dataset_info("browser/li-lines")["lines"] == 2 and line_count(cat) == before + 2
    assert not page.problems


def test_a_peaks_file_is_named_not_read_as_levels(page, site, tmp_path):  # noqa: F811
    cat = site["catalog"]
    path = tmp_path / "peaks.csv"
    path.write_bytes(PEAKS_CSV)
    before = dataset_names(cat)
    page.goto(site["url"] + "/desk/")
    page.set_input_files("#up-file", str(path))
    page.get_by_role("button", name="Check the file").click()
    title = page.locator("#problems-title")
    title.wait_for()
    assert title.inner_text() == "This is a peaks file — nothing was written"
    alert = page.get_by_role("alert").inner_text()
    assert "levels identify SPECIES peaks.csv" in alert and "unknown column" not in alert
    assert page.locator("table.problems-table").count() == 0
    assert dataset_names(cat) == before and not page.problems
