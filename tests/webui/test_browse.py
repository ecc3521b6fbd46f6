"""Reading pages: every route, filters, sorting, paging, downloads, diagram data, line records.

Expected values come from the Catalog itself (the service layer the pages must
agree with), never from numbers typed into the test.
"""

from __future__ import annotations

import csv
import html
import io
import json
import re

import pytest

from levels.catalog import LEVEL_COLUMNS, LINE_LIST_COLUMNS, SPECIES_COLUMNS, LineQuery
from levels.notation import display_label
from levels.units import CM1_EV

from tests.webui.conftest import LI_LIMIT_CM1, XSS_DATASET

ROWS_RE = re.compile(r'<span class="count">([\d,]+) rows?')


def row_counts(text: str) -> list[int]:
    return [int(n.replace(",", "")) for n in ROWS_RE.findall(text)]


def level_labels(text: str) -> list[str]:
    """Labels of the level table, in page order (the level table comes first on the species page), as stored:
    the cells show them with spaced configurations (issue 18), which ``label_key`` reads back."""
    from levels.notation import label_key

    section = text.split('id="lines"')[0]
    return [label_key(html.unescape(m)) for m in re.findall(r'<td class="label">(.*?)</td><td>', section)]


def levels_of(catalog, **where):
    rows = catalog.level_rows("Li I")
    for key, test in where.items():
        rows = [r for r in rows if test(r[key])]
    return rows


# ----------------------------------------------------------------- catalogue

def test_catalogue_lists_species_with_counts(reader, shared):
    page = reader.get("/")
    assert page.status_code == 200
    text = page.get_data(as_text=True)
    row = shared["catalog"].species_rows()[0]
    assert 'href="/species/Li_I"' in text
    assert f">{row['levels']:,}<" in text and f">{row['lines']:,}<" in text
    # shown rounded to two digits of its uncertainty (levels.io.display)
    assert f">{LI_LIMIT_CM1:.2f} <span class=\"unc\">± 0.50</span>" in text


@pytest.mark.parametrize("query, found", [("Li", True), ("Li I", True), ("Li_I", True), ("Li+0", True),
                                          ("Fe", False), ("He II", False), ("xss-set", True), ("nothing-like", False)])
def test_catalogue_search(reader, shared, query, found):
    text = reader.get("/", query_string={"q": query}).get_data(as_text=True)
    assert ('href="/species/Li_I"' in text) is found


def test_species_download_formats(reader, shared):
    response = reader.get("/species.csv")
    assert response.status_code == 200 and response.mimetype == "text/csv"
    assert "attachment" in response.headers["Content-Disposition"]
    lines = response.get_data(as_text=True).splitlines()
    assert lines[0].startswith("# tool: levels")
    header = next(l for l in lines if not l.startswith("#"))
    assert header.split(",") == list(SPECIES_COLUMNS)
    payload = reader.get("/species.json").get_json()
    assert payload["columns"] == list(SPECIES_COLUMNS) and payload["rows"][0]["spectrum"] == "Li I"
    assert reader.get("/species.ecsv").get_data(as_text=True).startswith("# %ECSV 1.0")
    assert reader.get("/species.xml").status_code == 404


# ----------------------------------------------------------------- species page: levels

def test_species_page_shows_both_tables(reader, shared):
    page = reader.get("/species/Li_I")
    assert page.status_code == 200
    text = page.get_data(as_text=True)
    levels = shared["catalog"].level_rows("Li I")
    _, total_lines = shared["catalog"].line_rows(LineQuery(spectrum="Li I", limit=1))
    assert row_counts(text) == [len(levels), total_lines]
    assert level_labels(text) == [r["label"] for r in levels][:50]
    # units in the column headers
    for heading in ("energy <span class=\"unit\">[cm⁻¹]", "λ vacuum <span class=\"unit\">[nm]",
                    "A <span class=\"unit\">[s⁻¹]"):
        assert heading in text


@pytest.mark.parametrize("args, where", [
    ({"config": "3d"}, {"configuration": lambda c: "3d" in c}),
    ({"j": "3/2"}, {"j": lambda j: j == "3/2"}),
    ({"j": "1.5"}, {"j": lambda j: j == "3/2"}),
    ({"parity": "odd"}, {"parity": lambda p: p == -1}),
    ({"parity": "even", "config": "s"}, {"parity": lambda p: p == 1, "configuration": lambda c: "s" in c}),
])
def test_level_filters(reader, shared, args, where):
    text = reader.get("/species/Li_I", query_string={**args, "per": 200}).get_data(as_text=True)
    expected = levels_of(shared["catalog"], **where)
    assert row_counts(text)[0] == len(expected) > 0
    assert level_labels(text) == [r["label"] for r in expected]


def test_level_filter_by_dataset(reader, shared):
    text = reader.get("/species/Li_I", query_string={"dataset": XSS_DATASET}).get_data(as_text=True)
    expected = shared["catalog"].level_rows("Li I", [XSS_DATASET])
    assert row_counts(text)[0] == len(expected) == 2
    assert level_labels(text) == [r["label"] for r in expected]


@pytest.mark.parametrize("sort, key", [("energy", "energy_cm1"), ("label", "label"),
                                       ("configuration", "configuration")])
@pytest.mark.parametrize("direction", ["asc", "desc"])
def test_level_sorting(reader, shared, sort, key, direction):
    text = reader.get("/species/Li_I", query_string={"sort": sort, "dir": direction, "per": 200}).get_data(as_text=True)
    labels = level_labels(text)
    rows = {r["label"]: r for r in shared["catalog"].level_rows("Li I")}
    values = [rows[label][key] for label in labels]
    assert values == sorted(values, reverse=direction == "desc")
    assert ('aria-sort="descending"' if direction == "desc" else 'aria-sort="ascending"') in text


def test_level_paging(reader, shared):
    levels = shared["catalog"].level_rows("Li I")
    text = reader.get("/species/Li_I", query_string={"per": 25, "page": 3}).get_data(as_text=True)
    assert level_labels(text) == [r["label"] for r in levels][50:75]
    assert "page 3 of 3" in text
    # a page past the end is empty, not an error
    text = reader.get("/species/Li_I", query_string={"per": 25, "page": 9}).get_data(as_text=True)
    assert level_labels(text) == []


@pytest.mark.parametrize("args, field", [
    ({"j": "5/3"}, "j"), ({"parity": "sideways"}, "parity"), ({"per": "7"}, "per"), ({"page": "0"}, "page"),
    ({"page": "x"}, "page"), ({"sort": "mass"}, "sort"), ({"dataset": "no such set"}, "dataset"),
    ({"from_nm": "abc"}, "from_nm"), ({"to_nm": "-5"}, "to_nm"), ({"medium": "water"}, "medium"),
    ({"multipole": "X9"}, "multipole"), ({"min_a": "-1"}, "min_a"), ({"min_a": "nan"}, "min_a"),
    ({"from_nm": "700", "to_nm": "600"}, "to_nm"), ({"lpage": "-2"}, "lpage"), ({"order": "random"}, "order"),
])
def test_bad_species_filters_give_400_with_the_field(reader, shared, args, field):
    page = reader.get("/species/Li_I", query_string=args)
    assert page.status_code == 400
    text = page.get_data(as_text=True)
    assert f"<b>{field}</b>" in text and "Some filters cannot be used" in text


def test_level_download_follows_filters(reader, shared):
    response = reader.get("/species/Li_I/levels.csv", query_string={"parity": "odd"})
    assert response.status_code == 200
    text = response.get_data(as_text=True)
    comments = [l for l in text.splitlines() if l.startswith("#")]
    assert comments[0].startswith("# tool: levels")
    assert any(line.startswith("# query: levels Li I parity=odd") for line in comments)
    rows = list(csv.DictReader(io.StringIO("\n".join(l for l in text.splitlines() if not l.startswith("#")))))
    assert list(rows[0]) == list(LEVEL_COLUMNS)
    assert [r["label"] for r in rows] == [r["label"] for r in levels_of(shared["catalog"], parity=lambda p: p == -1)]
    ecsv = reader.get("/species/Li_I/levels.ecsv").get_data(as_text=True)
    assert ecsv.startswith("# %ECSV 1.0") and 'unit: "cm-1"' in ecsv
    payload = reader.get("/species/Li_I/levels.json").get_json()
    assert payload["provenance"]["tool"].startswith("levels")
    assert len(payload["rows"]) == len(shared["catalog"].level_rows("Li I"))


# ----------------------------------------------------------------- species page: lines

@pytest.mark.parametrize("args, query", [
    ({"from_nm": "600", "to_nm": "700"}, LineQuery(spectrum="Li I", from_nm=600, to_nm=700)),
    ({"from_nm": "6000A", "to_nm": "0.7um"}, LineQuery(spectrum="Li I", from_nm=600, to_nm=700)),
    ({"from_nm": "600", "to_nm": "700", "medium": "air"},
     LineQuery(spectrum="Li I", from_nm=600, to_nm=700, medium="air")),
    ({"multipole": "E2"}, LineQuery(spectrum="Li I", multipoles=("E2",))),
    ({"multipole": ["E1", "E2"], "min_a": "1e6"}, LineQuery(spectrum="Li I", multipoles=("E1", "E2"), min_a=1e6)),
])
def test_line_filters(reader, shared, args, query):
    text = reader.get("/species/Li_I", query_string=args).get_data(as_text=True)
    rows, total = shared["catalog"].line_rows(query)
    assert total > 0
    assert row_counts(text)[1] == total
    shown = re.findall(r'href="/species/Li_I/lines/(\d+)\?nm=', text)
    assert [int(i) for i in shown] == [r["id"] for r in rows][:50]


def test_line_order_and_paging(reader, shared):
    rows, total = shared["catalog"].line_rows(LineQuery(spectrum="Li I", order="a", limit=25, offset=25))
    text = reader.get("/species/Li_I", query_string={"order": "a", "lper": 25, "lpage": 2}).get_data(as_text=True)
    shown = [int(i) for i in re.findall(r'href="/species/Li_I/lines/(\d+)\?nm=', text)]
    assert shown == [r["id"] for r in rows]


def test_line_download_has_provenance_and_all_rows(reader, shared):
    response = reader.get("/species/Li_I/lines.csv", query_string={"from_nm": 300, "to_nm": 900, "medium": "air"})
    assert response.status_code == 200
    text = response.get_data(as_text=True)
    comments = [l for l in text.splitlines() if l.startswith("#")]
    keys = [l[2:].split(":")[0] for l in comments]
    assert keys[:4] == ["tool", "store", "datasets", "query"] and "medium" in keys and "air_formula" in keys
    body = [l for l in text.splitlines() if not l.startswith("#")]
    assert body[0].split(",") == list(LINE_LIST_COLUMNS)  # the contract columns, then observed/Ritz
    _, total = shared["catalog"].line_rows(LineQuery(spectrum="Li I", from_nm=300, to_nm=900, medium="air"))
    assert len(body) - 1 == total
    assert reader.get("/species/Li_I/lines.csv", query_string={"min_a": "lots"}).status_code == 400


# ----------------------------------------------------------------- diagram

def test_diagram_page(reader, shared):
    page = reader.get("/species/Li_I/diagram", query_string={"min_a": "1e5"})
    assert page.status_code == 200
    text = page.get_data(as_text=True)
    assert 'data-source="/species/Li_I/diagram.json"' in text
    assert "/static/vendor/plotly.min.js" in text and "<script>" not in text
    assert 'value="1e5"' in text
    assert reader.get("/species/Li_I/diagram", query_string={"unit": "parsec"}).status_code == 400


def test_diagram_json_sends_the_strongest_lines_and_counts_the_rest(reader, shared):
    cat = shared["catalog"]
    payload = reader.get("/species/Li_I/diagram.json", query_string={"max_lines": 40}).get_json()
    strongest, total = cat.line_rows(LineQuery(spectrum="Li I", order="a", limit=40))
    assert payload["lines_total"] == total and payload["lines_shown"] == 40
    assert payload["lines_omitted"] == total - 40
    assert [l["id"] for l in payload["strongest"]] == [r["id"] for r in strongest][:len(payload["strongest"])]
    traces = {t.get("meta"): t for t in payload["figure"]["data"] if t.get("meta")}
    drawn = [c[0] for c in traces["lines"]["customdata"]]
    assert len(drawn) + payload["lines_unplaced"] == 40
    assert set(drawn) <= {r["id"] for r in strongest}
    levels = cat.level_rows("Li I")
    assert payload["levels"] == len(levels) == len(traces["levels"]["x"])
    # columns: one per term (multiplicity, L, parity): 2S, 2P°, 2D for these levels
    assert payload["columns"] == len({(r["term"], r["parity"]) for r in levels})
    shape = payload["figure"]["layout"]["shapes"][0]
    assert shape["y0"] == pytest.approx(LI_LIMIT_CM1)


def test_diagram_json_in_ev_and_with_filters(reader, shared):
    cat = shared["catalog"]
    payload = reader.get("/species/Li_I/diagram.json",
                         query_string={"unit": "eV", "from_nm": 300, "to_nm": 1000, "multipole": "E1"}).get_json()
    _, total = cat.line_rows(LineQuery(spectrum="Li I", from_nm=300, to_nm=1000, multipoles=("E1",)))
    assert payload["lines_total"] == total and payload["unit"] == "eV"
    levels = cat.level_rows("Li I")
    ys = [y for t in payload["figure"]["data"] if t.get("meta") == "levels" for y in t["y"]]
    assert max(ys) == pytest.approx(max(r["energy_cm1"] for r in levels) * CM1_EV, rel=1e-6)
    assert "eV" in payload["figure"]["layout"]["yaxis"]["title"]["text"]
    assert payload["figure"]["layout"]["shapes"][0]["y0"] == pytest.approx(LI_LIMIT_CM1 * CM1_EV, rel=1e-6)


@pytest.mark.parametrize("args, field", [({"max_lines": "0"}, "max_lines"), ({"max_lines": "99999"}, "max_lines"),
                                          ({"unit": "K"}, "unit"), ({"from_nm": "1;DROP TABLE lines"}, "from_nm")])
def test_diagram_json_bad_values(reader, shared, args, field):
    response = reader.get("/species/Li_I/diagram.json", query_string=args)
    assert response.status_code == 400 and response.get_json()["error"]["field"] == field


def test_diagram_json_unknown_species_is_json_404(reader, shared):
    response = reader.get("/species/Fe_II/diagram.json")
    assert response.status_code == 404 and response.get_json()["error"]["code"] == "not_found"


# ----------------------------------------------------------------- one line

def test_line_record_json_and_page(reader, shared):
    row = shared["catalog"].line_rows(LineQuery(spectrum="Li I", order="a", limit=1))[0][0]
    payload = reader.get(f"/species/Li_I/lines/{row['id']}.json",
                         query_string={"nm": repr(row["vacuum_nm"])}).get_json()
    # the stored row, plus the Ritz value in both media, observed - Ritz and the hydrogen name (issue 18 items 3, 5)
    extra = {"ritz_vacuum_nm", "ritz_air_nm", "obs_minus_ritz_nm", "line_name"}
    assert {k: v for k, v in payload["line"].items() if k not in extra} == json.loads(json.dumps(row))
    assert set(payload["line"]) >= extra
    assert payload["provenance"]["datasets"] == row["dataset"]
    # without the wavelength hint the line is still found
    assert reader.get(f"/species/Li_I/lines/{row['id']}.json").get_json()["line"]["id"] == row["id"]
    page = reader.get(payload["page"])
    shown = display_label(row["upper"], superscripts=True)   # labels are shown spaced (issue 18)
    assert page.status_code == 200 and html.escape(shown) in page.get_data(as_text=True)
    assert reader.get("/species/Li_I/lines/999999.json").status_code == 404
    assert reader.get("/species/Li_I/lines/999999").status_code == 404
    assert reader.get(f"/species/Li_I/lines/{10**30}").status_code == 404


# ----------------------------------------------------------------- finder, datasets, errors

def test_line_finder(reader, shared):
    cat = shared["catalog"]
    text = reader.get("/lines", query_string={"from_nm": 300, "to_nm": 900}).get_data(as_text=True)
    _, total = cat.line_rows(LineQuery(from_nm=300, to_nm=900))
    assert row_counts(text) == [total]
    text = reader.get("/lines", query_string={"species": "Li I", "from_nm": 300, "to_nm": 900,
                                              "per": 100}).get_data(as_text=True)
    assert row_counts(text) == [total]
    assert reader.get("/lines", query_string={"species": "Fe II"}).status_code == 400
    assert reader.get("/lines", query_string={"species": "not a species"}).status_code == 400
    body = reader.get("/lines.csv", query_string={"from_nm": 300, "to_nm": 900}).get_data(as_text=True)
    assert len([l for l in body.splitlines() if not l.startswith("#")]) == total + 1
    assert reader.get("/lines.json", query_string={"species": "Li_I"}).get_json()["rows"]


def test_dataset_pages(reader, shared):
    text = reader.get("/datasets").get_data(as_text=True)
    assert shared["demo_dataset"] in text and html.escape(XSS_DATASET) in text
    info = shared["catalog"].dataset_info(shared["demo_dataset"])
    page = reader.get(f"/datasets/{info['id']}")
    assert page.status_code == 200 and f">{info['levels']:,}<" in page.get_data(as_text=True)
    assert reader.get("/datasets/987654").status_code == 404
    assert reader.get(f"/datasets/{2**70}").status_code == 404


@pytest.mark.parametrize("path", ["/species/Fe_II", "/species/Zz_IX", "/species/C_VII", "/species/Li_I?mass_number=6",
                                  "/species/Li_I?mass_number=abc", "/species/%00", "/nowhere"])
def test_unknown_things_are_404_pages(reader, shared, path):
    response = reader.get(path)
    assert response.status_code == 404 and response.mimetype == "text/html"
    assert "Not here" in response.get_data(as_text=True)


def test_wrong_method_is_405(reader, shared):
    assert reader.post("/species/Li_I").status_code in (400, 405)  # CSRF may refuse first; never 500
    assert reader.delete("/species/Li_I").status_code == 405


# ----------------------------------------------------------------- kept answers and the store revision

def test_diagram_reads_the_lines_once_per_store_revision(app, store, monkeypatch):
    from levels.store import columns

    calls = []
    real = columns.species_line_columns
    monkeypatch.setattr(columns, "species_line_columns", lambda *a, **k: calls.append(1) or real(*a, **k))
    client = app.test_client()
    first = client.get("/species/Li_I/diagram.json", query_string={"min_a": "1e4"}).get_json()
    second = client.get("/species/Li_I/diagram.json", query_string={"min_a": "1e6", "medium": "air"}).get_json()
    assert len(calls) == 1
    _, total = store["catalog"].line_rows(LineQuery(spectrum="Li I", min_a=1e6, medium="air"))
    assert second["lines_total"] == total < first["lines_total"]


def test_writes_by_another_process_show_at_once(app, store, store_url):
    """A write through another Catalog (as the command line would) changes the revision; nothing stale is served."""
    from levels.catalog import Catalog
    from levels.service.maintenance import retract_dataset

    from tests.webui.conftest import XSS_DATASET

    client = app.test_client()
    before = client.get("/species/Li_I/diagram.json", query_string={"max_lines": 5}).get_json()
    assert 'href="/species/H_I"' not in client.get("/").get_data(as_text=True)
    other = Catalog(store_url, actor="elsewhere")
    try:
        retract_dataset(other, XSS_DATASET, reason="test")
        other.compute_hydrogenic("H I", n_max=2)
    finally:
        other.close()
    after = client.get("/species/Li_I/diagram.json", query_string={"max_lines": 5}).get_json()
    _, total = store["catalog"].line_rows(LineQuery(spectrum="Li I"))
    assert after["lines_total"] == total < before["lines_total"]
    assert after["levels"] == len(store["catalog"].level_rows("Li I"))
    assert 'href="/species/H_I"' in client.get("/").get_data(as_text=True)


def test_diagram_json_is_the_figure_of_the_rows(reader, shared):
    """The array-built figure equals the one built from the service's rows (the earlier, row-by-row path)."""
    from webui.figures import grotrian_figure

    cat = shared["catalog"]
    query = {"max_lines": 60, "medium": "air", "unit": "eV"}
    payload = reader.get("/species/Li_I/diagram.json", query_string=query).get_json()
    rows, _ = cat.line_rows(LineQuery(spectrum="Li I", order="a", limit=60, medium="air"))
    limit = cat.species_row("Li I")["ionization_cm1"]
    built = grotrian_figure(cat.level_rows("Li I"), rows, unit="eV", ionization_cm1=limit, medium="air",
                            title="Li I level diagram")
    assert json.loads(json.dumps(built["figure"])) == payload["figure"]
    assert payload["lines_unplaced"] == built["unplaced"]


@pytest.mark.parametrize("filters", [
    {}, {"order": "a"}, {"order": "strength"}, {"order": "-wavelength"},
    {"from_nm": 300.0, "to_nm": 900.0, "medium": "air"}, {"multipoles": ("E2",), "order": "a"},
    {"min_a": 1e5, "from_nm": 200.0, "order": "strength"},
])
def test_kept_line_pages_are_the_catalogs_rows(shared, filters):
    """Pages served from the kept line columns equal Catalog.line_rows, row for row and value for value."""
    from webui import services
    from webui.params import LineFilter

    cat = shared["catalog"]
    flt = LineFilter(**filters)
    with shared["app"].test_request_context("/"):
        ref = services.resolve_species(services.catalog(), "Li_I")
        for limit, offset in ((None, 0), (7, 0), (7, 5)):
            got, total = services.line_window(ref, flt, limit, offset)
            want, want_total = cat.line_rows(flt.query("Li I", limit=limit, offset=offset))
            assert total == want_total > 0
            assert got == want


def test_a_species_too_large_to_keep_is_served_from_the_store(shared):
    """Above LEVELS_MAX_KEPT_LINES the diagram and the line pages query the store, with the same answers."""
    from webui import services

    app = shared["app"]
    client = app.test_client()
    query = {"max_lines": 30, "medium": "air", "min_a": "1e4"}
    kept = client.get("/species/Li_I/diagram.json", query_string=query).get_json()
    kept_page = client.get("/species/Li_I", query_string={"lper": 25}).get_data(as_text=True)
    app.config["LEVELS_MAX_KEPT_LINES"] = 1
    try:
        with app.test_request_context("/"):
            assert not services.keeps_lines(services.resolve_species(services.catalog(), "Li_I"))
        queried = client.get("/species/Li_I/diagram.json", query_string=query).get_json()
        queried_page = client.get("/species/Li_I", query_string={"lper": 25}).get_data(as_text=True)
    finally:
        del app.config["LEVELS_MAX_KEPT_LINES"]
    assert queried == kept and queried["lines_shown"] == 30
    assert queried_page == kept_page


def test_diagram_json_gzip_is_the_same_text(reader, shared):
    """With Accept-Encoding gzip the diagram comes compressed (its level part compressed once), same text."""
    import gzip

    for query in ({"max_lines": 20}, {"unit": "eV", "medium": "air", "min_a": "1e5"}, {"max_lines": 20}):
        plain = reader.get("/species/Li_I/diagram.json", query_string=query)
        packed = reader.get("/species/Li_I/diagram.json", query_string=query, headers={"Accept-Encoding": "gzip"})
        assert plain.headers.get("Content-Encoding") is None and plain.headers["Vary"] == "Accept-Encoding"
        assert packed.headers["Content-Encoding"] == "gzip" and len(packed.data) < len(plain.data)
        assert gzip.decompress(packed.data) == plain.data
        assert json.loads(plain.data)["figure"]["data"]


@pytest.mark.parametrize("path", ["/lines", "/species/Li_I"])
def test_window_given_with_units_is_shown_in_the_form(reader, shared, path):
    # a window typed in the address bar as from/to (any unit) is what the form shows, so Redraw keeps it
    text = reader.get(path, query_string={"from": "15200cm-1", "to": "700nm"}).get_data(as_text=True)
    assert 'name="from_nm" type="text" value="15200cm-1"' in text
    assert 'name="to_nm" type="text" value="700nm"' in text


def test_line_downloads_use_the_one_json_shape_of_line_rows(reader, shared):
    # issue 14 item 4: line rows are under "lines" everywhere (the CLI, the JSON API, the site's downloads);
    # "rows" stays as an alias with the same content
    for path in ("/lines.json", "/species/Li_I/lines.json"):
        payload = reader.get(path, query_string={"species": "Li_I", "from": "600nm", "to": "700nm"}).get_json()
        assert payload["lines"] and payload["lines"] == payload["rows"]
