"""Real-browser tests: headless Chromium (the OS package) driven by Playwright against the live site.

Skipped when /usr/bin/chromium or Playwright is missing. The site runs under
waitress in a thread on a free loopback port over its own SQLite store.
Screenshots of the main pages go to test-artifacts/screenshots/ (gitignored).
"""

from __future__ import annotations

import csv
import io
from pathlib import Path

import pytest

from levels.catalog import LINE_COLUMNS, LINE_LIST_COLUMNS, Catalog, LineQuery
from levels.store.schema import Level

from webui import create_app

from tests.webui.browser_fixtures import BROWSER_MARKS, shot
from tests.webui.conftest import (
    MULTI_ERROR_CSV,
    LiveServer,
    count_rows,
    dataset_names,
    fill_store,
    make_config,
)

pytestmark = BROWSER_MARKS


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    folder = tmp_path_factory.mktemp("browser")
    url = f"sqlite:///{folder / 'store.sqlite'}"
    catalog = Catalog(url, actor="pytest")
    catalog.init()
    facts = fill_store(catalog)
    application = create_app(make_config(url, folder))
    with LiveServer(application) as live:
        yield {"url": live.url, **facts, "folder": folder}
    application.extensions["levels"]["catalog"].close()
    catalog.close()


def test_catalogue_and_species_page_with_a_level_filter(page, site):
    page.goto(site["url"] + "/")
    shot(page, "catalogue")
    page.get_by_role("link", name="Li I", exact=True).click()
    page.wait_for_url("**/species/Li_I")
    shot(page, "species", full_page=False)
    field = page.locator("#lv-j")
    field.fill("3/2")
    field.press("Enter")  # the filter form works from the keyboard
    page.wait_for_url("**j=3%2F2**")
    js = page.locator("section#levels table tbody tr td:nth-child(4)").all_inner_texts()
    expected = [r for r in site["catalog"].level_rows("Li I") if r["j"] == "3/2"]
    assert js == ["3/2"] * len(expected) and len(js) > 0
    assert page.problems == []


def test_diagram_filters_redraw_without_reload_and_a_click_shows_the_line(page, site):
    cat = site["catalog"]
    page.goto(site["url"] + "/species/Li_I/diagram")
    plot = page.locator("#diagram[data-state=ready]")
    plot.wait_for()
    _, total = cat.line_rows(LineQuery(spectrum="Li I", limit=1))
    assert plot.get_attribute("data-lines-total") == str(total)
    page.evaluate("window.__sameDocument = 'yes'")
    _, strong = cat.line_rows(LineQuery(spectrum="Li I", min_a=1e7, limit=1))
    assert strong < total
    page.locator("#dg-min_a").fill("1e7")
    # waits use selectors: the site's CSP forbids evaluating strings, which the page's own test hooks respect
    page.locator(f'#diagram[data-state=ready][data-lines-total="{strong}"]').wait_for()
    assert page.evaluate("window.__sameDocument") == "yes"  # no reload happened
    assert "min_a=1e7" in page.url  # the address bar is a permalink
    assert f"of {strong:,} lines drawn" in page.locator("#diagram-status").inner_text()
    shot(page, "diagram")

    # click the line marker that stands furthest from every other marker, and read its record
    info = page.evaluate("""() => {
        const gd = document.getElementById('diagram');
        const traces = gd.querySelectorAll('.scatterlayer .trace');
        const centre = el => { const r = el.getBoundingClientRect(); return [r.x + r.width / 2, r.y + r.height / 2]; };
        const all = [];
        gd.data.forEach((t, i) => { if (t.meta) { traces[i].querySelectorAll('path.point').forEach(
            (el, k) => all.push({trace: i, k: k, xy: centre(el), line: t.meta === 'lines'})); } });
        let best = null, bestGap = -1;
        for (const p of all.filter(q => q.line)) {
            let gap = Infinity;
            for (const q of all) {
                if (q !== p) { gap = Math.min(gap, Math.hypot(p.xy[0] - q.xy[0], p.xy[1] - q.xy[1])); }
            }
            if (gap > bestGap) { bestGap = gap; best = p; }
        }
        return {id: gd.data[best.trace].customdata[best.k][0], x: best.xy[0], y: best.xy[1], gap: bestGap};
    }""")
    assert info["gap"] > 3  # pixels: the click cannot land on a neighbour
    page.mouse.move(info["x"], info["y"])
    page.mouse.click(info["x"], info["y"])
    record = page.locator("#record[data-line-id]")
    record.wait_for()
    shown_id = int(record.get_attribute("data-line-id"))
    assert shown_id == info["id"]
    row = next(r for r in cat.line_rows(LineQuery(spectrum="Li I"))[0] if r["id"] == shown_id)
    assert page.locator("#record dd[data-field=upper]").inner_text() == row["upper"]
    assert float(page.locator("#record dd[data-field=a_per_s]").get_attribute("data-value")) == row["a_per_s"]
    assert float(page.locator("#record dd[data-field=a_per_s]").inner_text()) == pytest.approx(row["a_per_s"], rel=1e-9)
    shot(page, "diagram-record")

    # the same from the keyboard: the list of strongest lines
    first = cat.line_rows(LineQuery(spectrum="Li I", min_a=1e7, order="a", limit=1))[0][0]
    page.evaluate("document.querySelector('#record').removeAttribute('data-line-id')")
    page.locator("#strongest button").first.focus()
    page.keyboard.press("Enter")
    page.locator(f'#record[data-line-id="{first["id"]}"]').wait_for()
    assert page.locator("#record dd[data-field=lower]").inner_text() == first["lower"]
    assert page.problems == []


def test_level_form_with_one_bad_field_shows_the_message_beside_it(page, site):
    before = count_rows(site["catalog"], Level)
    page.goto(site["url"] + "/desk/")
    page.select_option("#lv-target", site["demo_dataset"])
    page.fill("#lv-spectrum", "Li I")
    page.fill("#lv-configuration", "1s2.21s")
    page.fill("#lv-term", "2S")
    page.fill("#lv-j", "5/3")
    page.fill("#lv-energy_cm1", "43230.1")
    page.get_by_role("button", name="Add the level").click()
    message = page.locator("#lv-j-error")
    message.wait_for()
    assert "not a whole or half-integer" in message.inner_text()
    assert page.locator("#lv-j").get_attribute("aria-invalid") == "true"
    assert page.locator("#lv-configuration").input_value() == "1s2.21s"  # what was typed is kept
    assert page.locator(".field-error").count() == 1
    page.locator("#lv-j").scroll_into_view_if_needed()
    shot(page, "desk-error", full_page=False)
    assert count_rows(site["catalog"], Level) == before


def test_upload_with_errors_lists_them_all_and_writes_nothing(page, site, tmp_path):
    cat = site["catalog"]
    before = (dataset_names(cat), count_rows(cat, Level))
    path = tmp_path / "bad-run.csv"
    path.write_bytes(MULTI_ERROR_CSV)
    page.goto(site["url"] + "/desk/")
    page.set_input_files("#up-file", str(path))
    page.get_by_role("button", name="Check the file").click()
    table = page.locator("table.problems-table tbody tr")
    table.first.wait_for()
    _, problems = cat.preview_levels(MULTI_ERROR_CSV, source="bad-run.csv")
    assert table.count() == len(problems) == 5
    lines = page.locator("table.problems-table tbody tr td:first-child").all_inner_texts()
    assert lines == [str(p.line) for p in problems]
    assert "nothing was written" in page.locator("#problems-title").inner_text()
    shot(page, "upload-errors")
    assert (dataset_names(cat), count_rows(cat, Level)) == before


def test_download_a_line_list_and_read_its_header(page, site):
    page.goto(site["url"] + "/species/Li_I?from_nm=600&to_nm=700&medium=air")
    with page.expect_download() as waiting:
        page.locator("#lines").get_by_role("link", name="CSV", exact=True).click()
    download = waiting.value
    assert download.suggested_filename == "Li_I-lines.csv"
    text = Path(download.path()).read_text(encoding="utf-8")
    comments = [line for line in text.splitlines() if line.startswith("#")]
    assert comments[0].startswith("# tool: levels ")
    assert any(line.startswith("# query: lines Li I; window 600-700 nm air") for line in comments)
    rows = list(csv.reader(io.StringIO("\n".join(l for l in text.splitlines() if not l.startswith("#")))))
    # the contract columns first, then the documented trailing columns (observed/Ritz, line name)
    assert rows[0] == list(LINE_LIST_COLUMNS)
    assert rows[0][:len(LINE_COLUMNS)] == list(LINE_COLUMNS)
    _, total = site["catalog"].line_rows(LineQuery(spectrum="Li I", from_nm=600, to_nm=700, medium="air"))
    assert len(rows) - 1 == total > 0


@pytest.fixture(scope="module")
def emission_site(tmp_path_factory):
    """A live site whose store holds the test content and computed H I (n <= 8, with rates)."""
    folder = tmp_path_factory.mktemp("browser-emission")
    url = f"sqlite:///{folder / 'store.sqlite'}"
    catalog = Catalog(url, actor="pytest")
    catalog.init()
    facts = fill_store(catalog)
    catalog.compute_hydrogenic("H I", n_max=8)
    application = create_app(make_config(url, folder))
    with LiveServer(application) as live:
        yield {"url": live.url, **facts}
    application.extensions["levels"]["catalog"].close()
    catalog.close()


def test_emission_workbench_draws_the_spectrum_metrics_and_swatch(page, emission_site):
    from levels.physics.colour import srgb_swatch
    from levels.units import temperature_k

    page.goto(emission_site["url"] + "/")
    page.get_by_role("link", name="Emission", exact=True).click()
    page.wait_for_url("**/emission")
    page.locator("#em-species").select_option("H I")
    page.locator("#em-te").fill("1eV")
    page.locator("#em-ne").fill("1e19m-3")
    page.locator("#em-from").fill("380nm")
    page.locator("#em-to").fill("700nm")
    page.get_by_role("button", name="Compute").click()
    page.wait_for_url("**species=H+I**")
    plot = page.locator("#emission-plot[data-state=ready]")
    plot.wait_for()
    # the figure is drawn: plotly put into the SVG the spectrum and line sticks of the model asked for,
    # the same two of the other model beside it, and the departure coefficients of both models
    assert page.locator("#emission-plot .scatterlayer .trace").count() == 6
    result = emission_site["catalog"].emission("H I", te_k=temperature_k("1eV"), ne_m3=1e19, tgas_k=600.0,
                                               from_nm=380.0, to_nm=700.0, medium="air",
                                               instrument_fwhm_nm=0.05, grid_points=4001)
    assert plot.get_attribute("data-lines-total") == str(len(result.lines))
    metrics = page.locator("#metrics").inner_text()
    assert f"{result.metrics['cie_x']:.4f}, {result.metrics['cie_y']:.4f}" in metrics
    assert "lm/W" in metrics
    hex_colour = srgb_swatch(result.metrics["cie_x"], result.metrics["cie_y"])
    painted = page.evaluate("() => getComputedStyle(document.getElementById('swatch')).backgroundColor")
    rgb = tuple(int(hex_colour[i:i + 2], 16) for i in (1, 3, 5))
    assert painted == f"rgb({rgb[0]}, {rgb[1]}, {rgb[2]})"
    # nothing covers the colour (the placeholder pattern goes once the swatch is painted)
    assert page.evaluate("() => getComputedStyle(document.getElementById('swatch')).backgroundImage") == "none"
    first = page.locator("#emission-lines tbody tr").first.locator("td").all_inner_texts()
    assert first[:2] == [result.lines[0]["lower"], result.lines[0]["upper"]]
    assert page.locator("#busy").is_hidden()
    shot(page, "emission")
    assert page.problems == []
