"""The emission workbench: form, results, figure JSON, downloads, bad input, escaping.

Expected numbers come from ``Catalog.emission`` itself with the same conditions
(the service the pages must agree with), never from values typed into the test.
The physics of the emission model is tested in the package's own tests.
"""

from __future__ import annotations

import csv
import html
import io
import json
import re

import pytest

from levels.catalog import EMISSION_COLUMNS, Catalog
from levels.physics.colour import srgb_swatch
from levels.service.emission import UV_CAUTION
from levels.units import temperature_k

from webui import create_app

from tests.webui.conftest import XSS_LABEL, fill_store, make_config

#: levels only (no rates): the import derives E1 lines without Einstein A
NO_RATES_CSV = ("spectrum,configuration,term,j,energy_cm1\n"
                "Na I,2p6.3s,2S,1/2,0\n"
                "Na I,2p6.3p,2P°,1/2,16956.17\n"
                "Na I,2p6.3p,2P°,3/2,16973.37\n").encode()
#: INVENTED two-level K I sample (numbers made up for the test): an Einstein A but no f value and no
#: ionization energy, so the collisional-radiative model cannot run for it
K_LEVELS_CSV = ("spectrum,configuration,term,j,energy_cm1\n"
                "K I,4s,2S,1/2,0\n"
                "K I,4p,2P°,3/2,13000.0\n").encode()
K_LINES_CSV = ("spectrum,lower,upper,wavelength_nm,medium,unc_nm,a_per_s\n"
               "K I,4s 2S1/2,4p 2P°3/2,769.2307692,vacuum,0.001,3.0e7\n").encode()
VISIBLE = {"species": "H I", "te": "1eV", "ne": "1e19m-3", "tgas": "600K", "from": "380nm", "to": "780nm",
           "medium": "air", "fwhm": "0.05nm"}
VUV = {"species": "H I", "te": "1.5eV", "ne": "1e19m-3", "tgas": "600K", "from": "90nm", "to": "130nm",
       "medium": "vacuum", "fwhm": "0"}


@pytest.fixture(scope="module")
def bench(tmp_path_factory):
    folder = tmp_path_factory.mktemp("emission")
    url = f"sqlite:///{folder / 'store.sqlite'}"
    cat = Catalog(url, actor="pytest")
    cat.init()
    fill_store(cat)
    cat.compute_hydrogenic("H I", n_max=8)
    cat.import_file("na.csv", content=NO_RATES_CSV, source="na.csv", dataset="na levels only")
    cat.import_file("k.csv", content=K_LEVELS_CSV, source="k.csv", dataset="invented k levels")
    cat.import_file("k-lines.csv", content=K_LINES_CSV, source="k-lines.csv", dataset="invented k lines")
    application = create_app(make_config(url, folder))
    yield {"app": application, "catalog": cat}
    application.extensions["levels"]["catalog"].close()
    cat.close()


@pytest.fixture
def web(bench):
    return bench["app"].test_client()


def expected(cat: Catalog, **over):
    """The Catalog's own result for the VISIBLE conditions (in SI units)."""
    kwargs = dict(te_k=temperature_k("1eV"), ne_m3=1e19, tgas_k=600.0, from_nm=380.0, to_nm=780.0, medium="air",
                  instrument_fwhm_nm=0.05, grid_points=None)  # the sampling rule's grid, as the page uses
    kwargs.update(over)
    return cat.emission("H I", **kwargs)


def test_navigation_links_the_workbench_and_the_form_lists_species_with_rates(web):
    page = web.get("/")
    assert 'href="/emission"' in page.get_data(as_text=True)
    form = web.get("/emission")
    assert form.status_code == 200
    text = form.get_data(as_text=True)
    options = re.findall(r'<option value="([^"]*)"', text.split('name="species"')[1].split("</select>")[0])
    assert "H I" in options and "Li I" in options
    assert "Na I" not in options  # stored, but none of its lines has an Einstein A
    assert 'aria-current="page">Emission' in text
    assert "uv-caution" not in text and "emission-plot" not in text  # nothing computed yet


def test_result_page_shows_metrics_swatch_lines_and_assumptions(web, bench):
    page = web.get("/emission", query_string=VISIBLE)
    assert page.status_code == 200
    assert "unsafe-inline" in page.headers["Content-Security-Policy"].split("style-src")[1].split(";")[0]
    text = page.get_data(as_text=True)
    ref = expected(bench["catalog"])
    m = ref.metrics
    assert f"{m['cie_x']:.4f}, {m['cie_y']:.4f}" in text
    assert f"{m['cie_u_prime']:.4f}, {m['cie_v_prime']:.4f}" in text
    assert f"{m['efficacy_lm_per_w']:.1f} lm/W" in text
    if m["cct_k"] is None:
        assert "far from the Planckian locus" in text
    else:
        assert f"{m['cct_k']:.0f} K" in text
    assert f'data-swatch="{srgb_swatch(m["cie_x"], m["cie_y"])}"' in text
    assert 'style="' not in text  # the CSP of other pages forbids style attributes; the swatch is painted by JS
    for head in ("λ air [nm]", "λ vacuum [nm]", "rel. intensity", "photon share", "Einstein A [s⁻¹]"):
        assert f">{head}</th>" in text
    table = text.split('id="emission-lines"')[1].split("</table>")[0]
    first = re.search(r"<tbody>\s*<tr><td class=\"label\">(.*?)</td><td class=\"label\">(.*?)</td>", table)
    shown = (html.unescape(first.group(1)), html.unescape(first.group(2)))
    assert shown == (ref.lines[0]["lower"], ref.lines[0]["upper"])
    assert html.escape(ref.conditions["model"]) in text and html.escape(ref.conditions["cutoff"]) in text
    assert "uv-caution" not in text  # the visible window puts no power into UV-C/UV-B
    for share in ("share_uv_c", "share_uv_b", "share_uv_a", "share_visible", "share_ir"):
        assert f"{m[share] * 100:.2f} %" in text


def test_uv_caution_is_shown_for_a_vacuum_uv_window_of_h_i(web, bench):
    page = web.get("/emission", query_string=VUV)
    assert page.status_code == 200
    text = page.get_data(as_text=True)
    assert 'id="uv-caution"' in text and 'role="alert"' in text
    assert html.escape(UV_CAUTION) in text
    # the caution comes first in the result, before the figure
    assert text.index('id="uv-caution"') < text.index('id="emission-plot"')
    assert 'id="swatch-none"' in text  # Lyman lines only: no visible light, no colour
    body = web.get("/emission.json", query_string=VUV).get_json()
    assert body["caution"] is True and body["warnings"][0] == UV_CAUTION
    assert body["metrics"]["share_uv_c"] > 0.01


def test_figure_json_has_the_spectrum_and_agrees_with_the_catalog(web, bench):
    response = web.get("/emission.json", query_string=VISIBLE)
    assert response.status_code == 200 and response.mimetype == "application/json"
    body = response.get_json()
    ref = expected(bench["catalog"])
    spectrum = next(t for t in body["figure"]["data"] if t["meta"] == "spectrum")
    # the grid is as fine as the narrowest line needs; the drawn curve is its min-max envelope (issue 18 item 6)
    from webui.figures import DISPLAY_POINTS

    assert len(spectrum["x"]) == len(spectrum["y"]) <= min(len(ref.grid_nm), DISPLAY_POINTS)
    assert max(spectrum["y"]) == pytest.approx(float(ref.spectrum.max()), rel=1e-12)
    assert body["lines_total"] == len(ref.lines)
    assert body["strongest"][0]["lower"] == ref.lines[0]["lower"]
    assert body["metrics"]["cie_x"] == pytest.approx(ref.metrics["cie_x"], rel=1e-12)
    assert body["swatch"] == srgb_swatch(ref.metrics["cie_x"], ref.metrics["cie_y"])
    assert body["conditions"]["model"] == ref.conditions["model"]
    assert "wavelength in air [nm]" == body["figure"]["layout"]["xaxis"]["title"]["text"]


@pytest.mark.parametrize("fmt", ["csv", "json", "ecsv"])
def test_line_list_downloads_have_provenance_and_the_emission_columns(web, bench, fmt):
    response = web.get(f"/emission/lines.{fmt}", query_string=VISIBLE)
    assert response.status_code == 200
    assert "attachment" in response.headers["Content-Disposition"]
    ref = expected(bench["catalog"])
    text = response.get_data(as_text=True)
    if fmt == "csv":
        head = [ln for ln in text.splitlines() if ln.startswith("#")]
        assert any(ln.startswith("# tool: levels") for ln in head)
        assert any("datasets: hydrogenic H I" in ln for ln in head)
        assert any(ln.startswith("# model: ") for ln in head)
        rows = list(csv.reader(io.StringIO("\n".join(ln for ln in text.splitlines() if not ln.startswith("#")))))
        assert rows[0] == list(EMISSION_COLUMNS)
        assert len(rows) - 1 == len(ref.lines)
        assert float(rows[1][EMISSION_COLUMNS.index("rel_intensity")]) == pytest.approx(1.0)
    elif fmt == "json":
        payload = json.loads(text)
        assert payload["columns"] == list(EMISSION_COLUMNS)
        assert payload["provenance"]["tool"].startswith("levels")
        assert payload["provenance"]["model"] == ref.conditions["model"]
        assert len(payload["rows"]) == len(ref.lines)
        shares = sum(r["photon_share"] for r in payload["rows"])
        assert shares == pytest.approx(1.0, rel=1e-9)  # photon shares of the window add up to one
    else:
        assert text.startswith("# %ECSV")
        assert '#   tool: "levels' in text and "#   model: " in text
        assert "{name: vacuum_nm, datatype: float64, unit: \"nm\"}" in text
        body = [ln for ln in text.splitlines() if not ln.startswith("#")]
        assert body[0].split(",") == list(EMISSION_COLUMNS) and len(body) - 1 == len(ref.lines)


def test_spectrum_csv_download_samples_the_result(web, bench):
    response = web.get("/emission/spectrum.csv", query_string=VISIBLE)
    assert response.status_code == 200 and response.mimetype == "text/csv"
    text = response.get_data(as_text=True)
    head = [ln for ln in text.splitlines() if ln.startswith("#")]
    # optically thin: the spectrum is an emission coefficient (issue 18 item 6)
    assert any("emission_coefficient in W m-3 sr-1 nm-1" in ln for ln in head)
    rows = list(csv.reader(io.StringIO("\n".join(ln for ln in text.splitlines() if not ln.startswith("#")))))
    assert rows[0] == ["wavelength_nm", "emission_coefficient"]
    ref = expected(bench["catalog"])
    assert len(rows) - 1 == len(ref.grid_nm)
    assert float(rows[1][0]) == pytest.approx(float(ref.grid_nm[0]))


def test_the_uv_caution_goes_into_the_download_header(web):
    text = web.get("/emission/lines.csv", query_string=VUV).get_data(as_text=True)
    assert any(ln.startswith("# caution: CAUTION") for ln in text.splitlines())


def test_eV_and_bare_numbers_are_read_like_the_cli(web, bench):
    """1 eV (as a temperature) and 11604.518 K give the same result; a bare window number is nm."""
    a = web.get("/emission.json", query_string=VISIBLE).get_json()
    same = {**VISIBLE, "te": f"{temperature_k('1eV'):.10f}", "from": "380", "to": "7800A"}
    b = web.get("/emission.json", query_string=same).get_json()
    assert b["metrics"]["cie_x"] == pytest.approx(a["metrics"]["cie_x"], rel=1e-9)
    assert b["lines_total"] == a["lines_total"]


@pytest.mark.parametrize("change, field_name", [
    ({"te": "-5K"}, "te"),
    ({"te": "hot"}, "te"),
    ({"ne": "1e19kg"}, "ne"),
    ({"from": "500nm", "to": "400nm"}, "to"),
    ({"medium": "water"}, "medium"),
    ({"path": "-1m"}, "path"),
    ({"species": ""}, "species"),
    ({"species": "Na I"}, "species"),   # stored, but without Einstein A values
    ({"species": "Xe IX"}, "species"),  # not stored
    ({"from": "2000nm", "to": "2001nm"}, "from"),  # no line in the window
])
def test_bad_input_shows_the_message_beside_the_form_and_400_for_json(web, change, field_name):
    query = {**VISIBLE, **change}
    page = web.get("/emission", query_string=query)
    assert page.status_code == 400
    text = page.get_data(as_text=True)
    assert 'id="emission-problems"' in text and f"<b>{field_name}</b>" in text
    assert "emission-plot" not in text
    body = web.get("/emission.json", query_string=query)
    assert body.status_code == 400
    assert body.get_json()["error"]["field"] == field_name
    assert web.get("/emission/lines.csv", query_string=query).status_code == 400
    assert web.get("/emission/spectrum.csv", query_string=query).status_code == 400


def test_species_without_rates_says_why(web):
    body = web.get("/emission.json", query_string={**VISIBLE, "species": "Na I"}).get_json()
    assert "Einstein A" in body["error"]["message"]


def test_text_from_the_request_and_the_store_is_escaped(web, bench):
    nasty = "<script>alert(1)</script>"
    text = web.get("/emission", query_string={**VISIBLE, "species": nasty, "te": nasty}).get_data(as_text=True)
    assert nasty not in text and html.escape(nasty) in text
    # Li I carries a level labelled with HTML in one dataset; whatever the result shows is escaped
    page = web.get("/emission", query_string={**VISIBLE, "species": "Li I", "from": "", "to": ""})
    assert page.status_code == 200
    assert XSS_LABEL not in page.get_data(as_text=True)
    body = web.get("/emission.json", query_string={**VISIBLE, "species": "Li I", "from": "", "to": ""}).get_json()
    sticks = next(t for t in body["figure"]["data"] if t["meta"] == "lines")
    hovers = [h for h in sticks["hovertext"] if h]
    assert hovers and all("<script" not in h for h in hovers)


# ----------------------------------------------------------------- the two population models

CR = {**VISIBLE, "ne": "1e17m-3", "model": "cr", "loss": "1e3"}


def test_cr_page_shows_validity_both_models_and_departures(web, bench):
    page = web.get("/emission", query_string=CR)
    assert page.status_code == 200, page.get_data(as_text=True)[:2000]
    text = page.get_data(as_text=True)
    cr = expected(bench["catalog"], ne_m3=1e17, model="cr", loss_rate_per_s=1e3)
    lte = expected(bench["catalog"], ne_m3=1e17)
    assert 'id="emission-validity"' in text and html.escape(cr.validity["text"]) in text
    assert "does NOT hold" in cr.validity["text"]
    compare = text.split('id="emission-compare"')[1].split("</table>")[0]
    assert "collisional-radiative (asked for)" in compare
    for res in (cr, lte):
        assert f"{res.metrics['cie_x']:.4f}, {res.metrics['cie_y']:.4f}" in compare
    table = text.split('id="emission-departures"')[1].split("</table>")[0]
    assert html.escape(cr.populations[1]["label"]) in table
    assert html.escape(cr.conditions["model"]) in text


def test_figure_json_puts_lte_left_cr_right_and_departures_below(web, bench):
    body = web.get("/emission.json", query_string=CR).get_json()
    assert body["model"] == "cr"
    assert set(body["validity"]) >= {"lte_min_ne_m3", "lte_holds"}
    assert set(body["comparison"]) == {"lte", "cr"} and "metrics" in body["comparison"]["lte"]
    data = body["figure"]["data"]
    primary = next(t for t in data if t.get("meta") == "spectrum")
    other = next(t for t in data if t.get("meta") == "spectrum-lte")
    assert primary["xaxis"] == "x2" and other["xaxis"] == "x"          # LTE on the left, CR on the right
    cr = expected(bench["catalog"], ne_m3=1e17, model="cr", loss_rate_per_s=1e3)
    assert max(primary["y"]) == pytest.approx(float(cr.spectrum.max()), rel=1e-12)
    dep = next(t for t in data if t.get("meta") == "departure-cr")
    assert dep["xaxis"] == "x3" and body["figure"]["layout"]["yaxis3"]["type"] == "log"
    by_label = {p["label"]: p for p in cr.populations}
    assert dep["y"][1] == pytest.approx(by_label[html.unescape(dep["text"][1])]["departure"], rel=1e-12)
    lte_dep = next(t for t in data if t.get("meta") == "departure-lte")
    assert set(lte_dep["y"]) == {1.0}


def test_a_species_the_cr_model_cannot_treat_still_shows_lte_and_says_why(web):
    query = {**VISIBLE, "species": "K I", "from": "", "to": ""}
    page = web.get("/emission", query_string=query)
    assert page.status_code == 200, page.get_data(as_text=True)[-3000:]
    text = page.get_data(as_text=True)
    compare = text.split('id="emission-compare"')[1].split("</table>")[0]
    assert "not available" in compare and "collisional-radiative model not available" in compare
    assert "ionization energy" in compare
    body = web.get("/emission.json", query_string=query).get_json()
    assert "ionization energy" in body["comparison"]["cr"]["error"]
    assert not any(t.get("meta") == "spectrum-cr" for t in body["figure"]["data"])
    cr_only = web.get("/emission.json", query_string={**query, "model": "cr"})
    assert cr_only.status_code == 400 and cr_only.get_json()["error"]["field"] == "species"


@pytest.mark.parametrize("change, field_name", [
    ({"model": "nlte"}, "model"),
    ({"loss": "fast"}, "loss"),
    ({"loss": "-5"}, "loss"),
    ({"perturber": "Ar"}, "pressure"),
    ({"perturber": "Unobtainium", "pressure": "1bar"}, "perturber"),
    ({"pressure": "1bar"}, "perturber"),
    ({"pressure": "-1bar", "perturber": "Ar"}, "pressure"),
    ({"path": "1e7m"}, "path"),
    ({"broadening": "magic"}, "broadening"),
])
def test_bad_model_input_is_a_400_naming_the_field(web, change, field_name):
    query = {**CR, **change}
    page = web.get("/emission", query_string=query)
    assert page.status_code == 400
    assert f"<b>{field_name}</b>" in page.get_data(as_text=True)
    assert web.get("/emission.json", query_string=query).get_json()["error"]["field"] == field_name
