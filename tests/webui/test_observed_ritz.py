"""Observed and Ritz wavelengths side by side (issue 18 item 3): CLI, web tables, line record, API."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from click.testing import CliRunner

from levels.catalog import LINE_COLUMNS, LINE_LIST_COLUMNS, RITZ_COLUMNS, LineQuery, add_ritz_columns
from levels.cli import main

from webui import create_app

from tests.webui.conftest import make_config

DEMO = Path(__file__).resolve().parents[2] / "seed_data" / "demo"
PAIR = ("1s2.2s 2S1/2", "1s2.2p 2P°3/2")
OBSERVED_AIR_NM = 708.08322  # the invented observed wavelength of that pair in lines-li-cell.csv


@pytest.fixture
def li(catalog):
    catalog.import_file(DEMO / "sample-li-cell.csv", sample="li-cell-amber", dataset="li/levels")
    catalog.import_file(DEMO / "lines-li-cell.csv", sample="li-cell-amber", dataset="li/lines")
    return catalog


def _ritz_air(catalog):
    """The Ritz value of PAIR from the stored levels, through the project's air conversion."""
    from levels.physics.lines.air import vacuum_to_air

    rows, _ = catalog.species_lines(LineQuery(spectrum="Li I", from_nm=700, to_nm=710, medium="air"))
    row = next(r for r in rows if (r["lower"], r["upper"]) == PAIR)
    return float(vacuum_to_air(1e7 / (row["upper_cm1"] - row["lower_cm1"]), "iau2000"))


def test_contract_keeps_its_columns_and_adds_trailing_ones():
    assert LINE_LIST_COLUMNS[:len(LINE_COLUMNS)] == LINE_COLUMNS
    assert RITZ_COLUMNS == ("obs_nm", "ritz_nm", "obs_minus_ritz_nm")
    assert LINE_LIST_COLUMNS[len(LINE_COLUMNS):] == RITZ_COLUMNS + ("line_name",)


def test_engine_and_stored_rows_agree(li):
    ritz = _ritz_air(li)
    engine, _ = li.species_lines(LineQuery(spectrum="Li I", from_nm=700, to_nm=710, medium="air"))
    stored, _ = li.line_rows(LineQuery(spectrum="Li I", from_nm=700, to_nm=710, medium="air"))
    e = next(r for r in add_ritz_columns(engine, "air") if (r["lower"], r["upper"]) == PAIR)
    s = next(r for r in add_ritz_columns(stored, "air") if (r["lower"], r["upper"]) == PAIR and r["obs_nm"])
    for row in (e, s):
        assert row["obs_nm"] == pytest.approx(OBSERVED_AIR_NM, abs=1e-9)
        assert row["ritz_nm"] == pytest.approx(ritz, abs=1e-9)
        assert row["obs_minus_ritz_nm"] == pytest.approx(OBSERVED_AIR_NM - ritz, abs=1e-9)
    # the engine's wavelength columns are the Ritz values, and its note says so
    assert e["air_nm"] == pytest.approx(ritz, abs=1e-9) and "Ritz" in e["note"]
    # a derived line beside it: Ritz only, no observed value
    derived = [r for r in stored if (r["lower"], r["upper"]) == PAIR and r["obs_nm"] is None]
    assert derived and derived[0]["ritz_nm"] == pytest.approx(ritz, abs=1e-9)
    assert derived[0]["obs_minus_ritz_nm"] is None
    # in vacuum the observed value is the stored vacuum conversion, the Ritz value 1e7 / sigma
    vac = add_ritz_columns([dict(s)], "vacuum")[0]
    assert vac["obs_nm"] == pytest.approx(s["vacuum_nm"]) and vac["obs_nm"] > OBSERVED_AIR_NM
    assert vac["ritz_nm"] == pytest.approx(1e7 / (s["upper_cm1"] - s["lower_cm1"]))


def test_cli_lines_shows_both(li, store_url):
    runner = CliRunner()
    out = runner.invoke(main, ["--db", store_url, "lines", "Li I", "--from", "700nm", "--to", "710nm",
                               "--format", "json"])
    assert out.exit_code == 0, out.output
    payload = json.loads(out.output[:out.output.rindex("}") + 1])
    assert payload["columns"] == list(LINE_LIST_COLUMNS)
    row = next(r for r in payload["rows"] if (r["lower"], r["upper"]) == PAIR)
    assert row["obs_nm"] == pytest.approx(OBSERVED_AIR_NM) and row["ritz_nm"] == pytest.approx(_ritz_air(li))
    table = runner.invoke(main, ["--db", store_url, "lines", "Li I", "--from", "700nm", "--to", "710nm"]).output
    heading = table.splitlines()[0]
    assert "observed [nm]" in heading and heading.count("Ritz [nm]") == 2  # Ritz, and observed - Ritz


def test_web_tables_record_and_api(li, store_url, tmp_path):
    app = create_app(make_config(store_url, tmp_path))
    try:
        client = app.test_client()
        page = client.get("/species/Li_I?from_nm=700&to_nm=710&medium=air").get_data(as_text=True)
        assert "obs − Ritz" in page and f"{OBSERVED_AIR_NM:.5f}" in page
        assert '<th scope="col">name</th>' not in page  # no hydrogen line names for Li I
        finder = client.get("/lines?from_nm=708&to_nm=708.2&medium=air").get_data(as_text=True)
        assert "obs − Ritz" in finder and f"{OBSERVED_AIR_NM:.5f}" in finder
        api = client.get("/api/v1/species/Li_I/lines?from_nm=700&to_nm=710&medium=air").get_json()
        assert api["columns"][-4:-1] == list(RITZ_COLUMNS)
        measured = next(r for r in api["rows"] if (r["lower"], r["upper"]) == PAIR and r["obs_nm"] is not None)
        assert measured["obs_minus_ritz_nm"] == pytest.approx(OBSERVED_AIR_NM - _ritz_air(li), abs=1e-9)
        stored, _ = li.line_rows(LineQuery(spectrum="Li I", from_nm=700, to_nm=710, medium="air"))
        line_id = next(r["id"] for r in stored if (r["lower"], r["upper"]) == PAIR and r["observed_nm"])
        record = client.get(f"/species/Li_I/lines/{line_id}").get_data(as_text=True)
        assert "Ritz, from the levels" in record and "observed − Ritz" in record
    finally:
        app.extensions["levels"]["catalog"].close()
