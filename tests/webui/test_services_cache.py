"""Answers the site keeps per store revision: line-table rows written once, finished diagram figures, ETags.

Each kept answer is compared with the answer built afresh (the rows of ``Catalog.line_rows``, a
species whose lines are not kept), and each is shown to follow a write by another process.
"""

from __future__ import annotations

import gzip
import json

import pytest

from levels.catalog import Catalog, LineQuery
from levels.catalog import add_ritz_columns as catalog_add_ritz_columns

from tests.webui.conftest import XSS_DATASET

API_QUERIES = [
    {}, {"limit": 7}, {"limit": 7, "offset": 5}, {"order": "a", "limit": 9}, {"order": "strength"},
    {"order": "-wavelength", "medium": "air", "limit": 11, "offset": 3},
    {"from_nm": 300, "to_nm": 900, "medium": "air"}, {"multipole": "E2", "order": "a"},
    {"min_a": "1e5", "from_nm": 200, "order": "strength", "limit": 4}, {"offset": 100000},
    {"from_nm": 1, "to_nm": 2},
]


def _retract(catalog: Catalog, name: str) -> None:
    try:
        from levels.service.maintenance import retract_dataset
    except ImportError:  # before the maintenance module moved to the service floor
        from levels.maintenance import retract_dataset
    retract_dataset(catalog, name, reason="test")


def _unkept(app, path: str, **kwargs):
    """The answer of ``path`` built without kept line columns (the store queried, rows encoded each time)."""
    app.config["LEVELS_MAX_KEPT_LINES"] = 0
    try:
        return app.test_client().get(path, **kwargs)
    finally:
        del app.config["LEVELS_MAX_KEPT_LINES"]


@pytest.mark.parametrize("query", API_QUERIES)
def test_api_line_pages_from_written_rows_are_the_same_bytes(shared, query):
    """An API line page joined from rows written once equals, byte for byte, the page encoded row by row."""
    app = shared["app"]
    path = "/api/v1/species/Li_I/lines"
    client = app.test_client()
    first = client.get(path, query_string=query)
    again = client.get(path, query_string=query)  # every row of the page is now written
    fresh = _unkept(app, path, query_string=query)
    assert first.status_code == again.status_code == fresh.status_code == 200
    assert first.data == again.data == fresh.data
    body = json.loads(first.data)
    _, total = shared["catalog"].line_rows(LineQuery(
        spectrum="Li I", medium=query.get("medium", "vacuum"), from_nm=query.get("from_nm"),
        to_nm=query.get("to_nm"), multipoles=(query["multipole"],) if "multipole" in query else None,
        min_a=float(query["min_a"]) if "min_a" in query else None))
    assert body["total"] == total


def test_written_rows_follow_a_write_by_another_process(app, store, store_url):
    """Rows written before a write are not served after it: the page equals the freshly encoded one."""
    path = "/api/v1/species/Li_I/lines"
    client = app.test_client()
    before = client.get(path, query_string={"limit": 500})
    assert XSS_DATASET in before.get_data(as_text=True)
    other = Catalog(store_url, actor="elsewhere")
    try:
        _retract(other, XSS_DATASET)
    finally:
        other.close()
    after = client.get(path, query_string={"limit": 500})
    assert XSS_DATASET not in after.get_data(as_text=True)
    assert after.data == _unkept(app, path, query_string={"limit": 500}).data
    assert json.loads(after.data)["total"] < json.loads(before.data)["total"]


def test_ritz_columns_without_label_parsing_are_the_catalogs(app, store):
    """services.add_ritz_columns gives the catalog's values: line names for H I, None (unparsed) for Li I."""
    from webui import services
    from webui.params import LineFilter

    store["catalog"].compute_hydrogenic("H I", n_max=4)
    with app.test_request_context("/"):
        for name, medium in (("Li_I", "air"), ("Li_I", "vacuum"), ("H_I", "air")):
            ref = services.resolve_species(services.catalog(), name)
            rows, total = services.line_window(ref, LineFilter(medium=medium))
            assert total > 0
            want = catalog_add_ritz_columns([dict(r) for r in rows], medium)
            got = services.add_ritz_columns(ref, [dict(r) for r in rows], medium)
            assert got == want
            if name == "H_I":
                assert {r["line_name"] for r in got} >= {"Lyα", "Hα"}


def test_a_figure_is_kept_under_the_lines_it_draws(app, store, monkeypatch):
    """Two filters that draw the same lines share one finished figure; the heads still differ; the kept
    figure equals the figure of a species whose lines are not kept."""
    import webui.browse

    calls = []
    real = webui.browse.diagram_json_rest
    monkeypatch.setattr(webui.browse, "diagram_json_rest", lambda *a, **k: calls.append(1) or real(*a, **k))
    client = app.test_client()
    path = "/species/Li_I/diagram.json"
    low = client.get(path, query_string={"max_lines": 5, "min_a": "1e2"}).get_json()
    high = client.get(path, query_string={"max_lines": 5, "min_a": "1e3"}).get_json()
    assert low["lines_shown"] == high["lines_shown"] == 5
    assert [r["id"] for r in low["strongest"]] == [r["id"] for r in high["strongest"]]
    assert low["lines_total"] > high["lines_total"]
    assert len(calls) == 1  # the second request wrote only its head
    assert low["figure"] == high["figure"]
    packed = client.get(path, query_string={"max_lines": 5, "min_a": "1e3"}, headers={"Accept-Encoding": "gzip"})
    assert packed.headers["Content-Encoding"] == "gzip"
    assert json.loads(gzip.decompress(packed.data)) == high
    other = client.get(path, query_string={"max_lines": 6}).get_json()
    assert len(calls) == 2 and other["figure"] != low["figure"]
    fresh = _unkept(app, path, query_string={"max_lines": 5, "min_a": "1e3"}).get_json()
    assert fresh == high


def test_a_kept_figure_follows_a_write_by_another_process(app, store, store_url):
    """After a write the figure is drawn again (the retracted dataset's lines leave it)."""
    client = app.test_client()
    path = "/species/Li_I/diagram.json"
    query = {"max_lines": 400}
    before = client.get(path, query_string=query)
    other = Catalog(store_url, actor="elsewhere")
    try:
        _retract(other, XSS_DATASET)
    finally:
        other.close()
    after = client.get(path, query_string=query)
    assert after.get_json()["lines_total"] < before.get_json()["lines_total"]
    assert after.get_json()["figure"] != before.get_json()["figure"]
    assert after.get_json() == _unkept(app, path, query_string=query).get_json()


def test_diagram_etag_answers_304_until_the_store_changes(app, store, store_url):
    """A repeated diagram request with its ETag gets 304 Not Modified; another query or a write gets 200."""
    client = app.test_client()
    path = "/species/Li_I/diagram.json"
    first = client.get(path, query_string={"max_lines": 8})
    tag = first.headers["ETag"]
    assert first.status_code == 200 and tag.startswith('W/"') and first.headers["Cache-Control"] == "no-cache"
    repeat = client.get(path, query_string={"max_lines": 8}, headers={"If-None-Match": tag})
    assert repeat.status_code == 304 and repeat.data == b"" and repeat.headers["ETag"] == tag
    other_query = client.get(path, query_string={"max_lines": 9}, headers={"If-None-Match": tag})
    assert other_query.status_code == 200 and other_query.headers["ETag"] != tag
    writer = Catalog(store_url, actor="elsewhere")
    try:
        writer.compute_hydrogenic("H I", n_max=2)
    finally:
        writer.close()
    after = client.get(path, query_string={"max_lines": 8}, headers={"If-None-Match": tag})
    assert after.status_code == 200 and after.headers["ETag"] != tag
    assert after.get_json() == first.get_json()  # the write did not touch Li I
