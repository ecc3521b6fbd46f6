"""Level labels shown with spaces like configurations (issue 18); stored labels, the label columns of exports
and every input keep the dotted form, and typed labels in the spaced form are understood too.

Machine-readable columns (CSV, JSON, ECSV, the API): ``label``, ``lower``, ``upper`` keep the stored label
(``2p6.3p 2P°1/2``). Tables for people (CLI ``table`` format, web pages, figure hovers) show it spaced.
All levels and lines below are invented (round numbers), not measured sodium data.
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from levels.cli import main
from levels.io.display import display_text_columns
from levels.notation import display_label, label_key

LEVELS = ("spectrum,configuration,term,j,energy_cm1,unc_cm1\n"
          "Na I,2p6.3s,2S,1/2,0,0.001\n"
          "Na I,2p6.3p,2P°,1/2,17000.0,0.01\n"
          "Na I,2p6.3p,2P°,3/2,17020.0,0.01\n")


def test_display_label_spaces_the_configuration_only():
    assert display_label("1s2.2s2.2p6.3s 2S1/2") == "1s2 2s2 2p6 3s 2S1/2"
    assert display_label("1s2.2s2.2p6.3s 2S1/2", superscripts=True) == "1s² 2s² 2p⁶ 3s 2S1/2"
    assert display_label("2p5(2P°3/2)3p 2[5/2]3") == "2p5(2P°3/2) 3p 2[5/2]3"
    assert display_label("3d 2D") == "3d 2D"                          # a term without J
    for custom in ("ground", "lvl 7", "", None):                      # not <configuration> <term>: unchanged
        assert display_label(custom) == ("" if custom is None else custom)


@pytest.mark.parametrize("stored", ["1s2.2s2.2p6.3s 2S1/2", "[Ne].3p 2P°3/2", "2p5(2P°3/2)3p 2[5/2]3", "4f14.6s2 1S0"])
def test_shown_label_reads_back_as_the_stored_one(stored):
    assert label_key(display_label(stored)) == stored
    assert label_key(stored) == stored


def test_display_rows_touch_label_and_configuration_cells_only():
    row = {"label": "2p6.3s 2S1/2", "configuration": "2p6.3s", "dataset": "a.b", "energy_cm1": 0.0}
    (shown,) = display_text_columns([row])
    assert shown == {"label": "2p6 3s 2S1/2", "configuration": "2p6 3s", "dataset": "a.b", "energy_cm1": 0.0}
    assert row["label"] == "2p6.3s 2S1/2"                             # the caller's row is not changed


def _store(tmp_path):
    db = f"sqlite:///{tmp_path / 's.sqlite'}"
    runner = CliRunner()
    assert runner.invoke(main, ["--db", db, "init"]).exit_code == 0
    path = tmp_path / "na.csv"
    path.write_text(LEVELS, encoding="utf-8")
    result = runner.invoke(main, ["--db", db, "import", str(path), "--sample", "invented na"])
    assert result.exit_code == 0, result.output
    return runner, db


def test_cli_tables_show_spaced_labels_files_keep_dots(tmp_path):
    runner, db = _store(tmp_path)
    table = runner.invoke(main, ["--db", db, "show", "Na I"]).output
    assert "2p6 3p 2P°1/2" in table and "2p6.3p" not in table
    csv = runner.invoke(main, ["--db", db, "show", "Na I", "--format", "csv"]).output
    body = "\n".join(ln for ln in csv.splitlines() if not ln.startswith("#"))
    assert "2p6.3p 2P°1/2" in body and "2p6 3p" not in body
    lines = runner.invoke(main, ["--db", db, "lines", "Na I", "--medium", "vacuum"]).output
    assert "2p6 3s 2S1/2" in lines and "2p6 3p 2P°3/2" in lines and "2p6.3s" not in lines
    data = json.loads(runner.invoke(main, ["--db", db, "lines", "Na I", "--format", "json"]).output)
    assert {r["lower"] for r in data["lines"]} == {"2p6.3s 2S1/2"}
    assert {r["upper"] for r in data["lines"]} == {"2p6.3p 2P°1/2", "2p6.3p 2P°3/2"}


def test_typed_labels_in_the_shown_form_are_understood(tmp_path):
    runner, db = _store(tmp_path)
    # --lower with the label as the table shows it
    both = runner.invoke(main, ["--db", db, "lines", "Na I", "--lower", "2p6 3s 2S1/2", "--format", "json"])
    assert both.exit_code == 0, both.output
    assert len(json.loads(both.output)["lines"]) == 2
    # a measured-lines file naming its levels in the shown form, and with the core written another way
    lines = tmp_path / "na-lines.csv"
    lines.write_text("spectrum,lower,upper,wavelength_nm,medium,unc_nm\n"
                     f"Na I,2p6 3s 2S1/2,2p6 3p 2P°1/2,{1e7 / 17000.0:.6f},vacuum,0.001\n"
                     f"Na I,[Ne] 3s 2S1/2,1s2.2s2.2p6.3p 2P°3/2,{1e7 / 17020.0:.6f},vacuum,0.001\n",
                     encoding="utf-8")
    result = runner.invoke(main, ["--db", db, "import", str(lines), "--sample", "invented na"])
    assert result.exit_code == 0, result.output
    assert "imported 2 lines" in result.output
    # a label that is no level of the species is still refused, naming file, line and field
    bad = tmp_path / "bad.csv"
    bad.write_text("spectrum,lower,upper,wavelength_nm,medium,unc_nm\n"
                   "Na I,2p6 4s 2S1/2,2p6 3p 2P°1/2,588.0,vacuum,0.001\n", encoding="utf-8")
    refused = runner.invoke(main, ["--db", db, "import", str(bad), "--sample", "invented na"])
    assert refused.exit_code != 0 and "bad.csv" in refused.output and "lower" in refused.output
