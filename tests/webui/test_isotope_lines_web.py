"""Lines of an isotope that is not the default one, on the web pages (the line queries carry its Spectrum).

Two computed He II isotopes share the spectrum name; the page of the lighter one (``?mass_number=3``) lists its
own lines, its downloads hold them, and its diagram draws them: before, its pages said its lines could not be
listed.
"""

from __future__ import annotations

import csv
import io

import pytest

from webui import create_app

from tests.webui.conftest import make_config


@pytest.fixture
def isotopes_site(catalog, store_url, tmp_path):
    catalog.compute_hydrogenic("He II", n_max=3)
    catalog.compute_hydrogenic("He II", mass_number=3, n_max=3)
    application = create_app(make_config(store_url, tmp_path))
    yield application.test_client(), catalog
    application.extensions["levels"]["catalog"].close()


def _csv_rows(text: str) -> list[dict]:
    return list(csv.DictReader(io.StringIO("\n".join(l for l in text.splitlines() if not l.startswith("#")))))


def test_the_lighter_isotope_lists_its_own_lines(isotopes_site):
    client, _catalog = isotopes_site
    page = client.get("/species/He_II", query_string={"mass_number": 3})
    assert page.status_code == 200
    text = page.get_data(as_text=True)
    assert "cannot be listed" not in text and "hydrogenic He II A=3" in text
    light = _csv_rows(client.get("/species/He_II/lines.csv", query_string={"mass_number": 3, "medium": "vacuum"})
                      .get_data(as_text=True))
    heavy = _csv_rows(client.get("/species/He_II/lines.csv", query_string={"medium": "vacuum"}).get_data(as_text=True))
    assert light and {r["dataset"] for r in light} == {"hydrogenic He II A=3"}
    assert heavy and {r["dataset"] for r in heavy} == {"hydrogenic He II A=4"}
    # the same transitions, the lighter nucleus's at longer wavelengths (smaller reduced mass)
    by_pair = {(r["lower"], r["upper"]): float(r["vacuum_nm"]) for r in heavy}
    gross = [r for r in light if r["lower"][0] != r["upper"][0]]
    assert gross and all(float(r["vacuum_nm"]) > by_pair[(r["lower"], r["upper"])] for r in gross)


def test_the_lighter_isotope_has_a_diagram_with_lines(isotopes_site):
    client, _catalog = isotopes_site
    body = client.get("/species/He_II/diagram.json", query_string={"mass_number": 3}).get_json()
    assert body["lines_total"] > 0 and body["lines_shown"] > 0


def test_the_json_api_reaches_the_isotope_by_mass_number(isotopes_site):
    client, _catalog = isotopes_site
    light = client.get("/api/v1/species/He_II/lines", query_string={"mass_number": 3, "medium": "vacuum"}).get_json()
    heavy = client.get("/api/v1/species/He_II/lines", query_string={"medium": "vacuum"}).get_json()
    assert {r["dataset"] for r in light["lines"]} == {"hydrogenic He II A=3"}
    assert {r["dataset"] for r in heavy["lines"]} == {"hydrogenic He II A=4"}
    levels = client.get("/api/v1/species/He_II/levels", query_string={"mass_number": 3}).get_json()
    assert {r["dataset"] for r in levels["rows"]} == {"hydrogenic He II A=3"}
    missing = client.get("/api/v1/species/He_II/levels", query_string={"mass_number": 5})
    assert missing.status_code == 404 and missing.get_json()["error"]["code"] == "not_found"
    bad = client.get("/api/v1/species/He_II/levels", query_string={"mass_number": "three"})
    assert bad.status_code == 400 and bad.get_json()["error"]["field"] == "mass_number"
