"""Every export names the tool, the store, exactly the datasets behind its rows, the query and the air
formula (issue 14, item 4). Levels are INVENTED."""

from __future__ import annotations

import json

from click.testing import CliRunner

from levels.cli import main

K_LEVELS = ("spectrum,configuration,term,j,energy_cm1,unc_cm1\n"  # INVENTED energies
            "K I,4s,2S,1/2,0,0.01\nK I,4p,2P°,1/2,13000.0,0.02\nK I,4p,2P°,3/2,13060.0,0.02\n")


def _header(text: str) -> dict:
    out = {}
    for line in text.splitlines():
        if not line.startswith("# "):
            break
        key, _, value = line[2:].partition(": ")
        out[key] = value
    return out


def _store(tmp_path):
    db = f"sqlite:///{tmp_path / 's.sqlite'}"
    runner = CliRunner()
    assert runner.invoke(main, ["--db", db, "init"]).exit_code == 0
    path = tmp_path / "k-cell-A.csv"
    path.write_text(K_LEVELS, encoding="utf-8")
    assert runner.invoke(main, ["--db", db, "import", str(path), "--dataset", "k-cell-A"]).exit_code == 0
    assert runner.invoke(main, ["--db", db, "hydrogenic", "H I", "--n-max", "3"]).exit_code == 0
    return runner, db


def test_line_list_names_only_its_own_datasets(tmp_path):
    runner, db = _store(tmp_path)
    h = _header(runner.invoke(main, ["--db", db, "lines", "H I", "--format", "csv"]).output)
    assert h["datasets"] == "hydrogenic H I A=1"  # not the K I datasets
    k = _header(runner.invoke(main, ["--db", db, "lines", "K I", "--format", "csv"]).output)
    assert set(k["datasets"].split("; ")) == {"k-cell-A", "derived lines K I A=39"}
    for header in (h, k):
        assert header["tool"].startswith("levels ") and header["store"].startswith("sqlite:///")
        assert header["query"].startswith("lines ") and header["air_formula"]


def test_species_and_identify_name_their_datasets_and_air_formula(tmp_path):
    runner, db = _store(tmp_path)
    species = _header(runner.invoke(main, ["--db", db, "species", "--format", "csv"]).output)
    assert species["datasets"] != "(none)" and "k-cell-A" in species["datasets"]
    assert "hydrogenic H I A=1" in species["datasets"]
    peaks = tmp_path / "peaks.csv"
    peaks.write_text("peak_nm,medium\n656.28,air\n", encoding="utf-8")
    ident = runner.invoke(main, ["--db", db, "identify", "H I", str(peaks), "--tolerance", "0.1nm", "--format", "csv"])
    assert ident.exit_code == 0, ident.output
    header = _header(ident.output)
    assert header["datasets"] == "hydrogenic H I A=1"
    assert header["air_formula"] and "none applied" not in header["air_formula"]


def test_line_rows_have_one_json_key(tmp_path):
    runner, db = _store(tmp_path)
    payload = json.loads(runner.invoke(main, ["--db", db, "lines", "H I", "--format", "json"]).output)
    assert payload["lines"] and payload["lines"] == payload["rows"]  # "rows" kept as an alias for older readers


def test_emission_export_names_its_air_formula(tmp_path):
    runner, db = _store(tmp_path)
    result = runner.invoke(main, ["--db", db, "emission", "H I", "--te", "1eV", "--ne", "1e18m-3", "--from", "400nm",
                                  "--to", "700nm", "--format", "csv"])
    assert result.exit_code == 0, result.output
    header = _header(result.output)
    assert header["datasets"] == "hydrogenic H I A=1"
    assert header["air_formula"] and "none applied" not in header["air_formula"]
