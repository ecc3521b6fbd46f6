"""The level diagram's option to draw the lines implied by the levels (the line engine), not only stored ones.

Expected counts come from ``Catalog.species_lines`` and ``Catalog.line_rows`` themselves.
"""

from __future__ import annotations

import pytest

from levels.catalog import Catalog, LineQuery

from webui import create_app

from tests.webui.conftest import make_config


@pytest.fixture(scope="module")
def h_site(tmp_path_factory):
    folder = tmp_path_factory.mktemp("diagram-engine")
    url = f"sqlite:///{folder / 'store.sqlite'}"
    cat = Catalog(url, actor="pytest")
    cat.init()
    cat.compute_hydrogenic("H I", n_max=5)
    application = create_app(make_config(url, folder))
    yield {"client": application.test_client(), "catalog": cat}
    application.extensions["levels"]["catalog"].close()
    cat.close()


def test_engine_draws_forbidden_lines_the_store_does_not_hold(h_site):
    cat, web = h_site["catalog"], h_site["client"]
    _, stored_e2 = cat.line_rows(LineQuery(spectrum="H I", multipoles=("E2",), limit=1))
    _, info = cat.species_lines(LineQuery(spectrum="H I", limit=1), multipoles=("E2",))
    assert info["total"] > stored_e2  # the levels imply E2 lines that are not stored
    plain = web.get("/species/H_I/diagram.json?multipole=E2").get_json()
    assert plain["engine"] is False and plain["lines_total"] == stored_e2
    body = web.get("/species/H_I/diagram.json?multipole=E2&engine=1&max_lines=5000").get_json()
    assert body["engine"] is True
    assert body["lines_total"] == info["total"] == body["lines_shown"]
    assert body["lines_without_rates"] == info["without_rates"]
    assert {ln["multipole"] for ln in body["strongest"]} == {"E2"}
    assert all(ln["id"] is None for ln in body["strongest"])  # engine rows have no stored record


def test_engine_default_is_e1_and_respects_the_limit(h_site):
    cat, web = h_site["catalog"], h_site["client"]
    _, info = cat.species_lines(LineQuery(spectrum="H I", limit=1), multipoles=("E1",))
    body = web.get("/species/H_I/diagram.json?engine=1&max_lines=7").get_json()
    assert body["lines_total"] == info["total"] and body["lines_shown"] == 7
    assert body["lines_omitted"] == info["total"] - 7


@pytest.mark.parametrize("query, field_name", [("engine=1&multipole=M2", "multipole"), ("engine=yes", "engine")])
def test_engine_bad_options_are_400(h_site, query, field_name):
    web = h_site["client"]
    response = web.get(f"/species/H_I/diagram.json?{query}")
    assert response.status_code == 400 and response.get_json()["error"]["field"] == field_name
    page = web.get(f"/species/H_I/diagram?{query}")
    assert page.status_code == 400


def test_diagram_page_offers_the_engine_option(h_site):
    text = h_site["client"].get("/species/H_I/diagram?engine=1").get_data(as_text=True)
    assert 'name="engine" value="1" checked' in text
    assert "include lines implied by the levels (Ritz wavelengths from level pairs)" in text
