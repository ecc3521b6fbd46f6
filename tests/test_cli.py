"""The command line, driven through click's runner on SQLite and PostgreSQL."""

import csv
import io
import json
from pathlib import Path

import pytest
from click.testing import CliRunner

from levels.catalog import LEVEL_COLUMNS, SPECIES_COLUMNS
from levels.cli import main

DEMO = Path(__file__).resolve().parents[1] / "seed_data" / "demo" / "sample-li-cell.csv"
BAD = Path(__file__).resolve().parent / "data" / "bad_levels"


@pytest.fixture
def run(store_url):
    runner = CliRunner()

    def invoke(*args):
        return runner.invoke(main, ["--db", store_url, *args], catch_exceptions=False)
    return invoke


def _csv_rows(text):
    body = "\n".join(line for line in text.splitlines() if not line.startswith("#"))
    return list(csv.DictReader(io.StringIO(body)))


def test_init_import_show_species(run):
    assert run("init").exit_code == 0
    result = run("import", str(DEMO), "--sample", "demo-1")
    assert result.exit_code == 0, result.output
    assert "imported 53 levels of Li I" in result.output
    shown = run("show", "Li I", "--format", "csv")
    assert shown.exit_code == 0
    assert shown.output.startswith("# tool: levels ")
    rows = _csv_rows(shown.output)
    assert len(rows) == 53 and list(rows[0]) == list(LEVEL_COLUMNS)
    species = run("species", "--format", "json")
    payload = json.loads(species.output)
    assert payload["columns"] == list(SPECIES_COLUMNS)
    assert payload["rows"][0]["spectrum"] == "Li I" and payload["rows"][0]["levels"] == 53
    table = run("species")
    assert "Li I" in table.output and "ionization [cm⁻¹]" in table.output


def test_ecsv_output_file(run, tmp_path):
    run("init")
    run("import", str(DEMO))
    out = tmp_path / "li.ecsv"
    result = run("show", "Li I", "--format", "ecsv", "--output", str(out))
    assert result.exit_code == 0
    text = out.read_text(encoding="utf-8")
    assert text.startswith("# %ECSV 1.0")
    assert "{name: energy_cm1, datatype: float64, unit: \"cm-1\"}" in text
    assert "#   query: \"show Li I\"" in text


def test_bad_import_prints_file_line_field_and_exits_1(run):
    run("init")
    result = run("import", str(BAD / "j_five_thirds.csv"))
    assert result.exit_code == 1
    assert "error: j_five_thirds.csv:17: j: '5/3' is not a whole or half-integer" in result.output
    assert "nothing was written" in result.output


def test_commands_before_init_say_so(run):
    result = run("species")
    assert result.exit_code == 1 and "levels init" in result.output


def test_where_reports_schema(run):
    assert "not initialised" in run("where").output
    run("init")
    assert "(current)" in run("where").output


def test_show_unknown_species(run):
    run("init")
    result = run("show", "Xq I")
    assert result.exit_code == 1 and "unknown element symbol 'Xq'" in result.output


def test_help_has_examples():
    runner = CliRunner()
    for command in ("init", "where", "species", "show", "import"):
        result = runner.invoke(main, [command, "--help"])
        assert result.exit_code == 0 and "Example" in result.output, command
