"""Peak identification: the window is the tolerance asked for, the sign of delta_nm, ambiguity judged by rates."""

import json
from pathlib import Path

import pytest
from click.testing import CliRunner

from levels.cli import main
from levels.errors import PhysicsInputError
from levels.io.records import PeakRecord
from levels.service import lab

DEMO = Path(__file__).resolve().parents[2] / "seed_data" / "demo"


def _peak(nm, unc=None, medium="vacuum"):
    return PeakRecord(peak_nm=nm, medium=medium, unc_nm=unc, intensity=None, note="", line=None)


def _line(nm, upper, a=None, unc=0.0, g_upper=2, lower="a"):
    return dict(spectrum="X I", lower=lower, upper=upper, vacuum_nm=nm, air_nm=None, unc_nm=unc,
                a_per_s=a, g_upper=g_upper)


def test_tolerance_is_the_window_unless_uncertainty_asked():
    peaks = [_peak(500.013, unc=0.004)]
    lines = [_line(500.000, "b", unc=0.002)]
    # 0.013 nm away: outside a 0.003 nm window, although 3 combined sigma (0.0134 nm) would reach it
    assert lab.identify(peaks, lines, tolerance_nm=0.003)[0]["note"] == "unmatched"
    wide = lab.identify(peaks, lines, tolerance_nm=0.003, window="uncertainty")
    assert wide[0]["rank"] == 1 and wide[0]["delta_nm"] == pytest.approx(0.013)
    assert lab.identify(peaks, lines, tolerance_nm=0.003, window="uncertainty", n_sigma=2)[0]["note"] == "unmatched"
    with pytest.raises(PhysicsInputError):
        lab.identify(peaks, lines, tolerance_nm=0.003, window="3sigma")


def test_delta_is_peak_minus_line():
    red = lab.identify([_peak(600.002)], [_line(600.000, "b")], tolerance_nm=0.005)[0]
    blue = lab.identify([_peak(599.998)], [_line(600.000, "b")], tolerance_nm=0.005)[0]
    assert red["delta_nm"] == pytest.approx(0.002) and blue["delta_nm"] == pytest.approx(-0.002)


def test_weak_candidate_is_no_rival():
    peak = [_peak(400.000)]
    # g_u A: 2e8 against 1e6 (below 1/10): one real candidate
    rows = lab.identify(peak, [_line(400.001, "b", a=1e8), _line(399.999, "c", a=5e5)], tolerance_nm=0.005)
    assert [r["note"] for r in rows] == ["", ""] and rows[0]["upper"] == "b"
    # 2e8 against 4e7 (1/5): both are rivals
    rows = lab.identify(peak, [_line(400.001, "b", a=1e8), _line(399.999, "c", a=2e7)], tolerance_nm=0.005)
    assert {r["note"] for r in rows} == {"ambiguous"}
    # unknown rate beside a known one: strength cannot be judged, still a rival
    rows = lab.identify(peak, [_line(400.001, "b", a=1e8), _line(399.999, "c")], tolerance_nm=0.005)
    assert {r["note"] for r in rows} == {"ambiguous"}
    # an observed line and the Ritz value of the same pair are one transition, not two rivals
    rows = lab.identify(peak, [_line(400.001, "b"), _line(399.9995, "b")], tolerance_nm=0.005)
    assert {r["note"] for r in rows} == {""}


def test_cli_identify_keeps_inside_tolerance(catalog, store_url):
    catalog.import_file(DEMO / "sample-li-cell.csv", sample="li-cell-amber", dataset="li/levels")
    runner = CliRunner()
    args = ["--db", store_url, "identify", "Li I", str(DEMO / "peaks-li-cell.csv"), "--tolerance", "0.003nm"]
    table = runner.invoke(main, args)
    assert table.exit_code == 0, table.output
    assert "peak - line [nm]" in table.output
    out = runner.invoke(main, args + ["--format", "json"]).output
    rows = json.loads(out)["rows"]
    assert set(rows[0]) == {"peak_nm", "medium", "rank", "spectrum", "lower", "upper", "line_nm", "delta_nm",
                            "a_per_s", "note"}
    deltas = [abs(r["delta_nm"]) for r in rows if r["delta_nm"] is not None]
    assert deltas and max(deltas) <= 0.003 + 1e-12
    for r in rows:
        if r["delta_nm"] is not None:
            assert r["delta_nm"] == pytest.approx(r["peak_nm"] - r["line_nm"], abs=1e-9)
    out = runner.invoke(main, args + ["--format", "json", "--window", "uncertainty"]).output
    wide = json.loads(out)["rows"]
    assert max(abs(r["delta_nm"]) for r in wide if r["delta_nm"] is not None) > 0.003
