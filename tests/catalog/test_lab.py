"""Lab workflow on the store: measured lines, series limits, optimisation, identification."""

from pathlib import Path

import pytest
from click.testing import CliRunner

from levels.cli import main
from levels.errors import InputFileError
from levels.store.database import dump

DEMO = Path(__file__).resolve().parents[2] / "seed_data" / "demo"
HEADER = "spectrum,lower,upper,wavelength_nm,medium,unc_nm\n"


@pytest.fixture
def lab(catalog):
    catalog.import_file(DEMO / "sample-li-cell.csv", sample="li-cell-amber", dataset="li/levels")
    return catalog


def _write(tmp_path, name, body):
    path = tmp_path / name
    path.write_text(HEADER + body, encoding="utf-8")
    return path


def test_measured_lines_import_and_optimize(lab):
    report = lab.import_file(DEMO / "lines-li-cell.csv", sample="li-cell-amber", dataset="li/lines")
    assert report.lines == 40
    result = lab.optimize_levels("li/lines", fix="1s2.2s 2S1/2")
    by_label = {lv["label"]: lv for lv in result["levels"]}
    assert by_label["1s2.2s 2S1/2"]["flag"] == "fixed" and by_label["1s2.2s 2S1/2"]["unc_cm1"] == 0
    # the optimised values stay within 4 of their uncertainties of the (invented) stored ones,
    # since the invented lines were generated from those levels with noise of the stated size
    for lv in result["levels"]:
        if lv["unc_cm1"]:
            assert abs(lv["energy_cm1"] - lv["stored_cm1"]) < 4 * (lv["unc_cm1"] + 0.03), lv
    assert result["dof"] > 0 and len(result["lines"]) == 40
    assert any("single line" in w for w in result["warnings"])


@pytest.mark.parametrize("body, field, message", [
    ("Li I,1s2.2s 2S1/2,1s2.9z 2P°1/2,300.0,air,0.001\n", "upper", "no level labelled"),
    ("Li I,1s2.2s 2S1/2,1s2.3s 2S1/2,374.9,air,0.001\n", "multipole", "needs a change of parity"),
    ("Li I,1s2.2s 2S1/2,1s2.2p 2P°1/2,-708.2,air,0.001\n", "wavelength_nm", "greater than zero"),
    ("Li I,1s2.2s 2S1/2,1s2.2p 2P°1/2,0,air,0.001\n", "wavelength_nm", "greater than zero"),
    ("Li I,1s2.2s 2S1/2,1s2.2p 2P°1/2,708.2,air,0.001\nLi I,1s2.2s 2S1/2,1s2.2p 2P°1/2,708.3,air,0.001\n",
     "upper", "duplicate line"),
    ("Li I,1s2.2s 2S1/2,1s2.2p 2P°1/2,708.2,glass,0.001\n", "medium", "not a medium"),
    ("Li I,1s2.2s 2S1/2,1s2.2p 2P°1/2,150.0,air,0.001\n", "medium", "above 200 nm"),
    ("Li I,1s2.2s 2S1/2,1s2.2p 2P°1/2,708.2,air,0\n", "unc_nm", "greater than zero"),
    ("Li I,1s2.2p 2P°1/2,1s2.2s 2S1/2,708.2,air,0.001\n", "lower", "is not below"),
    ("Be I,2s2 1S,2s2p 1P°,234.9,air,0.001\n", "spectrum", "no levels of Be I"),
])
def test_bad_line_files_write_nothing(lab, tmp_path, body, field, message):
    before = dump(lab.engine)
    with pytest.raises(InputFileError) as info:
        lab.import_file(_write(tmp_path, "bad-lines.csv", body))
    problem = info.value.problems[0]
    assert problem.field == field and message in problem.message and problem.line is not None
    assert dump(lab.engine) == before


def test_disconnected_level_graph_is_a_warning(lab, tmp_path):
    # two lines that share no level with the fixed ground level chain: 3s-3p is cut off from 2s
    body = ("Li I,1s2.2s 2S1/2,1s2.2p 2P°3/2,708.08322,air,0.002\n"
            "Li I,1s2.3s 2S1/2,1s2.4p 2P°1/2,1086.0,air,0.01\n")
    # 1086.0 nm is a rough value, 13 cm-1 off the levels' Ritz wavenumber: accepted only with a reason
    lab.import_file(_write(tmp_path, "islands.csv", body), dataset="islands", allow_off_ritz="rough value, graph test")
    report = lab.optimize_levels("islands")
    assert any("not connected" in w for w in report["warnings"])
    flags = {lv["label"]: lv["flag"] for lv in report["levels"]}
    assert flags["1s2.3s 2S1/2"] == "disconnected" and report["levels"][0]["flag"] == "fixed"


def test_series_limit_recovers_hydrogenic_ionization_energy(catalog):
    catalog.compute_hydrogenic("H I", n_max=20)
    report = catalog.fit_limit("H I", ["ns 2S1/2", "nd 2D5/2"], n_min=6, save=False)
    computed = report["stored_limit_cm1"]
    assert computed is not None
    assert abs(report["limit_cm1"] - computed) / computed < 1e-6


def test_series_limit_of_the_invented_sample_is_stored_and_shown(lab):
    report = lab.fit_limit("Li I", ["ns 2S1/2", "nd 2D5/2"], n_min=4)
    # the invented generator used a limit of 43490 cm-1 and a 2s defect of 0.401 (generate_li_cell.py):
    # relative to the ground level that is R_M / (2 - 0.401)^2
    import scipy.constants as sc

    from levels.isotopes import isotope
    from levels.physics.lines.series import rydberg_constant_cm1

    truth = rydberg_constant_cm1(isotope(3, 7).nuclear_mass_u) / (2 - 0.401) ** 2
    assert abs(report["limit_cm1"] - truth) < 4 * report["limit_unc_cm1"]
    species = lab.species_rows()[0]
    assert species["ionization_cm1"] == pytest.approx(report["limit_cm1"])
    assert species["ionization_unc_cm1"] == pytest.approx(report["limit_unc_cm1"])
    del sc


def test_identify_peaks(lab):
    # every invented Li peak is within 3 combined uncertainties of its line, not all within 0.003 nm
    # (the window is the tolerance unless the uncertainty-based one is asked for, issue 18)
    rows = lab.identify_peaks(["Li I"], DEMO / "peaks-li-cell.csv", tolerance_nm=0.003, window="uncertainty")
    unmatched = [r for r in rows if r["note"] == "unmatched"]
    assert {r["peak_nm"] for r in unmatched} == {589.41, 777.55}  # the two invented impurity peaks
    firsts = [r for r in rows if r["rank"] == 1]
    assert len(firsts) == 40
    assert all(abs(r["delta_nm"]) < 0.01 for r in firsts)


def test_cli_lab_commands(lab, store_url):
    runner = CliRunner()
    imp = runner.invoke(main, ["--db", store_url, "import", str(DEMO / "lines-li-cell.csv"), "--dataset", "li/lines"])
    assert imp.exit_code == 0 and "imported 40 lines" in imp.output
    opt = runner.invoke(main, ["--db", store_url, "optimize", "li/lines", "--format", "json"])
    import json

    payload = json.loads(opt.output[:opt.output.rindex("}") + 1])
    assert set(payload) >= {"levels", "lines", "chi2", "dof", "warnings"}
    assert set(payload["levels"][0]) >= {"label", "energy_cm1", "unc_cm1", "n_lines"}
    assert set(payload["lines"][0]) >= {"lower", "upper", "observed_nm", "medium", "residual_cm1", "flag"}
    lim = runner.invoke(main, ["--db", store_url, "limit", "Li I", "--series", "ns 2S1/2", "--n-min", "4",
                               "--format", "json", "--no-save"])
    report = json.loads(lim.output[:lim.output.rindex("}") + 1])
    assert set(report) >= {"limit_cm1", "limit_unc_cm1", "series", "warnings"}
    assert set(report["series"][0]) >= {"pattern", "n_used", "quantum_defects", "residuals_cm1"}
    ident = runner.invoke(main, ["--db", store_url, "identify", "Li I", str(DEMO / "peaks-li-cell.csv"),
                                 "--format", "csv", "--tolerance", "0.003nm"])
    header = [ln for ln in ident.output.splitlines() if not ln.startswith("#")][0]
    assert header == "peak_nm,medium,rank,spectrum,lower,upper,line_nm,delta_nm,a_per_s,note"
