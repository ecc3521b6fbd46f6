"""Hydrogen line names and line selections on the web site and the API (issue 18 item 5)."""

from __future__ import annotations

import pytest

from webui import create_app

from tests.webui.conftest import make_config


@pytest.fixture
def site(catalog, store_url, tmp_path):
    catalog.compute_hydrogenic("H I", n_max=5)
    app = create_app(make_config(store_url, tmp_path))
    yield app.test_client()
    app.extensions["levels"]["catalog"].close()


def test_api_line_name_and_filters(site):
    base = "/api/v1/species/H_I/lines?from_nm=380&to_nm=700&medium=air"
    every = site.get(base).get_json()
    assert "line_name" in every["columns"]
    assert {r["line_name"] for r in every["rows"]} == {"Hα", "Hβ", "Hγ"}
    alpha = site.get(base + "&line_name=H-alpha").get_json()
    assert alpha["total"] == len(alpha["rows"]) > 0
    assert {r["line_name"] for r in alpha["rows"]} == {"Hα"}
    assert all(r["lower"].startswith("2") and r["upper"].startswith("3") for r in alpha["rows"])
    series = site.get(base + "&lower=2p 2P°3/2&series=nd 2D5/2").get_json()
    assert [r["upper"] for r in series["rows"]] == ["5d 2D5/2", "4d 2D5/2", "3d 2D5/2"]
    paged = site.get(base + "&lower=2p*&limit=2&offset=1").get_json()
    assert len(paged["rows"]) == 2 and paged["total"] > 3
    bad = site.get(base + "&line_name=Zeta-9")
    assert bad.status_code == 400 and bad.get_json()["error"]["field"] == "line_name"


def test_species_table_and_diagram_hover_name_the_lines(site):
    page = site.get("/species/H_I?from_nm=600&to_nm=700&medium=air").get_data(as_text=True)
    assert "<th scope=\"col\">name</th>" in page and "<td>Hα</td>" in page
    diagram = site.get("/species/H_I/diagram.json?medium=air")
    assert diagram.status_code == 200
    assert "Hα: " in diagram.get_data(as_text=True)
