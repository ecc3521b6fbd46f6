"""Measured lines are checked against their levels, and never hide the Ritz line of their pair (issue 19, item 5).

The levels are INVENTED round numbers (no real atom); the rules checked are the exact E1/E2
selection rules (Cowan 1981, section 14.1) and the Ritz combination principle (Ritz 1908).
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from levels.catalog import RITZ_NOTE, LineQuery
from levels.cli import main
from levels.errors import InputFileError
from levels.service import maintenance
from levels.store.database import dump

LEVELS = ("spectrum,configuration,term,j,energy_cm1,unc_cm1\n"
          "Na I,3s,2S,1/2,0,0.01\nNa I,3p,2P°,1/2,17000,0.01\nNa I,3p,2P°,3/2,17020,0.01\n"
          "Na I,4s,2S,1/2,25000,0.01\nNa I,3d,2D,5/2,29000,0.01\nNa I,4f,2F°,5/2,34500,0.01\n")
HEADER = "spectrum,lower,upper,wavelength_nm,medium,unc_nm,multipole\n"
# 1e7 / 17000 cm-1 = 588.235294 nm (vacuum): on the Ritz value of 3s - 3p 2P°1/2
GOOD = "Na I,3s 2S1/2,3p 2P°1/2,588.235294,vacuum,0.0005,E1\n"


@pytest.fixture
def na(catalog, tmp_path):
    path = tmp_path / "na-levels.csv"
    path.write_text(LEVELS, encoding="utf-8")
    catalog.import_file(path, dataset="na levels")
    return catalog


def _lines(tmp_path, body, name="lines.csv"):
    path = tmp_path / name
    path.write_text(HEADER + body, encoding="utf-8")
    return path


@pytest.mark.parametrize("body, field, words", [
    # 25 % longer than the Ritz wavelength
    ("Na I,3s 2S1/2,3p 2P°1/2,735.294118,vacuum,0.001,E1\n", "wavelength_nm", "from the Ritz wavenumber 17000"),
    # a thousand times too short (a unit slip)
    ("Na I,3s 2S1/2,3p 2P°1/2,0.588235294,vacuum,0.000001,E1\n", "wavelength_nm", "from the Ritz wavenumber 17000"),
    # 0.2 cm-1 off (1e7 / 588.228374 nm = 17000.200 cm-1) with 0.0141 cm-1 combined uncertainty: 14 sigma
    ("Na I,3s 2S1/2,3p 2P°1/2,588.228374,vacuum,0.0000001,E1\n", "wavelength_nm", "combined standard uncertainties"),
    # E1 with Delta J = 2 (parity changes, so only the J rule forbids it)
    ("Na I,3s 2S1/2,4f 2F°5/2,289.855072,vacuum,0.001,E1\n", "multipole", "ΔJ = 2"),
    # E2 between two J = 1/2 levels
    ("Na I,3s 2S1/2,4s 2S1/2,400.0,vacuum,0.001,E2\n", "multipole", "J + J' < 2"),
])
def test_lines_off_their_levels_are_refused(na, tmp_path, body, field, words):
    before = dump(na.engine)
    with pytest.raises(InputFileError) as info:
        na.import_file(_lines(tmp_path, body), dataset="bad")
    problem = info.value.first
    assert problem.source == "lines.csv" and problem.line == 2 and problem.field == field
    assert words in problem.message, problem.message
    assert dump(na.engine) == before


def test_a_line_within_its_uncertainty_is_accepted(na, tmp_path):
    # 1e7 / 588.2347 nm - 17000 cm-1 = +0.0017 cm-1, 0.1 combined standard uncertainty
    report = na.import_file(_lines(tmp_path, "Na I,3s 2S1/2,3p 2P°1/2,588.2347,vacuum,0.0005,E1\n"), dataset="ok")
    assert report.lines == 1


def test_off_ritz_lines_accepted_with_a_recorded_reason(na, tmp_path):
    body = "Na I,3s 2S1/2,3p 2P°1/2,735.294118,vacuum,0.001,E1\n"
    report = na.import_file(_lines(tmp_path, body), dataset="drifting lamp",
                            allow_off_ritz="lamp drifted; kept for the record")
    assert report.lines == 1 and any("accepted" in w for w in report.warnings)
    info = na.dataset_info("drifting lamp")
    assert info["options"]["allow_off_ritz"] == "lamp drifted; kept for the record"
    assert info["options"]["off_ritz_lines"] == 1
    rows, _ = na.line_rows(LineQuery(spectrum="Na I", datasets=("drifting lamp",)))
    assert "off its Ritz wavenumber" in rows[0]["note"] and "lamp drifted" in rows[0]["note"]
    # the selection rules are not overridable
    with pytest.raises(InputFileError):
        na.import_file(_lines(tmp_path, "Na I,3s 2S1/2,4s 2S1/2,400.0,vacuum,0.001,E2\n"), dataset="e2",
                       allow_off_ritz="no")


def test_cli_allow_off_ritz(na, tmp_path):
    path = _lines(tmp_path, "Na I,3s 2S1/2,3p 2P°1/2,735.294118,vacuum,0.001,E1\n")
    refused = CliRunner().invoke(main, ["--db", na.url, "import", str(path), "--dataset", "x"])
    assert refused.exit_code != 0 and "lines.csv:2: wavelength_nm" in refused.output
    assert "--allow-off-ritz" in refused.output
    done = CliRunner().invoke(main, ["--db", na.url, "import", str(path), "--dataset", "x",
                                     "--allow-off-ritz", "survey of a drifting lamp"])
    assert done.exit_code == 0, done.output
    assert json.loads(json.dumps(na.dataset_info("x")["options"]))["allow_off_ritz"] == "survey of a drifting lamp"


def test_a_measured_line_keeps_the_ritz_line_of_its_pair(na, tmp_path):
    all_before, total_before = na.line_rows(LineQuery(spectrum="Na I"))
    na.import_file(_lines(tmp_path, GOOD), dataset="na lines")
    rows, total = na.line_rows(LineQuery(spectrum="Na I"))
    pair = [r for r in rows if (r["lower"], r["upper"]) == ("3s 2S1/2", "3p 2P°1/2")]
    assert sorted(r["dataset"] for r in pair) == ["derived lines Na I A=23", "na lines"]
    ritz = next(r for r in pair if r["dataset"].startswith("derived"))
    assert ritz["note"] == RITZ_NOTE and ritz["wavenumber_cm1"] == 17000.0
    assert total == total_before + 1
    assert {(r["lower"], r["upper"]) for r in all_before} <= {(r["lower"], r["upper"]) for r in rows}
    # the window query of the line finder shows both
    window, _ = na.line_rows(LineQuery(spectrum="Na I", from_nm=588.2, to_nm=588.3, medium="vacuum"))
    assert len(window) == 2
    assert maintenance.check(na).ok
