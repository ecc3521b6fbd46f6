"""The line engine on an INVENTED alkali-like ion, and line-list export."""

import csv
import io
import json

import pytest
from click.testing import CliRunner

from levels.catalog import LINE_LIST_COLUMNS, LineQuery
from levels.cli import main

# INVENTED test levels of a fictitious alkali-like spectrum, written as "Na I" only so that the
# notation parser accepts them; the energies are made up and describe no real atom.
INVENTED = """spectrum,configuration,term,j,energy_cm1,unc_cm1
Na I,3s,2S,1/2,0,
Na I,4s,2S,1/2,25000.0,0.02
Na I,5s,2S,1/2,33000.0,0.02
Na I,6s,2S,1/2,36500.0,0.03
Na I,3p,2P°,1/2,17000.0,0.01
Na I,3p,2P°,3/2,17020.0,0.01
Na I,4p,2P°,1/2,30200.0,0.02
Na I,4p,2P°,3/2,30207.0,0.02
Na I,5p,2P°,1/2,35100.0,0.03
Na I,5p,2P°,3/2,35103.0,0.03
Na I,3d,2D,3/2,29100.0,0.02
Na I,3d,2D,5/2,29100.5,0.02
Na I,4d,2D,3/2,34600.0,0.03
Na I,4d,2D,5/2,34600.2,0.03
"""


@pytest.fixture
def invented(catalog, tmp_path):
    path = tmp_path / "invented-alkali.csv"
    path.write_text(INVENTED, encoding="utf-8")
    catalog.import_file(path, dataset="invented-alkali")
    return catalog


def test_expected_number_of_e1_lines(invented):
    # counted by hand from the rules: S-P1/2 12, S-P3/2 12, D3/2-P1/2 6, D3/2-P3/2 6, D5/2-P3/2 6
    rows, info = invented.species_lines(LineQuery(spectrum="Na I"))
    assert info["total"] == 42
    assert all(r["multipole"] == "E1" for r in rows)
    assert info["without_rates"] == 42 and all(r["a_per_s"] is None for r in rows)


def test_forbidden_lines_only_on_request(invented):
    # by hand: M1 35 (S-S 6, S-D3/2 8, D3/2-D3/2 1, D3/2-D5/2 4, D5/2-D5/2 1, P-P 15),
    # E2 34 (S-D3/2 8, S-D5/2 8, D-D 6, P1/2-P3/2 9, P3/2-P3/2 3)
    rows, info = invented.species_lines(LineQuery(spectrum="Na I"), multipoles=("E1", "M1", "E2"))
    counts = {m: sum(1 for r in rows if r["multipole"] == m) for m in ("E1", "M1", "E2")}
    assert counts == {"E1": 42, "M1": 35, "E2": 34}


def test_ritz_uncertainty_propagation(invented):
    rows, _ = invented.species_lines(LineQuery(spectrum="Na I"))
    line = next(r for r in rows if r["lower"] == "3p 2P°1/2" and r["upper"] == "4s 2S1/2")
    sigma = 25000.0 - 17000.0
    assert line["wavenumber_cm1"] == pytest.approx(sigma)
    assert line["vacuum_nm"] == pytest.approx(1e7 / sigma)
    # u_lambda = lambda * sqrt(0.01^2 + 0.02^2) / sigma (GUM law of propagation)
    assert line["unc_nm"] == pytest.approx(1e7 / sigma * (0.01**2 + 0.02**2) ** 0.5 / sigma, rel=1e-12)
    ground = next(r for r in rows if r["lower"] == "3s 2S1/2" and r["upper"] == "3p 2P°1/2")
    assert ground["unc_nm"] == pytest.approx(1e7 / 17000.0 * 0.01 / 17000.0, rel=1e-12)


def test_window_in_air_and_filters(invented):
    rows, info = invented.species_lines(LineQuery(spectrum="Na I", from_nm=580, to_nm=600, medium="air"))
    assert [(r["lower"], r["upper"]) for r in rows] == [("3s 2S1/2", "3p 2P°3/2"), ("3s 2S1/2", "3p 2P°1/2")]
    assert all(580 <= r["air_nm"] <= 600 for r in rows)
    capped, _ = invented.species_lines(LineQuery(spectrum="Na I", max_upper_cm1=20000.0))
    assert {r["upper"] for r in capped} == {"3p 2P°1/2", "3p 2P°3/2"}


def test_engine_handles_20000_levels_without_pair_loops():
    """20,000 levels of one species: the vectorised engine builds every E1 pair in a window."""
    import numpy as np

    from levels.physics.lines.combination import build_lines

    rng = np.random.default_rng(1)
    n = 20000
    energy = np.sort(rng.uniform(0, 100000, n))
    two_j = 2 * rng.integers(0, 6, n)  # integer J, as in an atom with an even number of electrons
    parity = rng.choice([-1, 1], n)
    lines = build_lines(energy, np.full(n, 0.01), two_j, parity, min_wavenumber_cm1=14000, max_wavenumber_cm1=14050)
    # brute force on the same window, vectorised per level (reference)
    expected = 0
    for i in range(n):
        d = energy - energy[i]
        ok = (d >= 14000) & (d <= 14050) & (parity != parity[i]) & np.isin(np.abs(two_j - two_j[i]), (0, 2))
        ok &= ~((two_j == 0) & (two_j[i] == 0))
        expected += int(ok.sum())
    assert len(lines) == expected > 1000


def test_cli_lines_export_formats(invented, store_url, tmp_path):
    runner = CliRunner()
    out = tmp_path / "lines.csv"
    result = runner.invoke(main, ["--db", store_url, "lines", "Na I", "--format", "csv", "--output", str(out),
                                  "--air-formula", "edlen1966"])
    assert result.exit_code == 0, result.output
    text = out.read_text(encoding="utf-8")
    header = [line for line in text.splitlines() if line.startswith("#")]
    assert any("air_formula: Edlen 1966" in line for line in header)
    assert any(line.startswith("# datasets: invented-alkali") for line in header)
    body = "\n".join(line for line in text.splitlines() if not line.startswith("#"))
    rows = list(csv.DictReader(io.StringIO(body)))
    assert list(rows[0]) == list(LINE_LIST_COLUMNS) and len(rows) == 42
    assert all(r["a_per_s"] == "" for r in rows)  # unknown rates stay empty, not zero
    js = runner.invoke(main, ["--db", store_url, "lines", "Na I", "--format", "json", "--multipole", "E1,M1,E2"])
    payload = json.loads(js.output)
    assert len(payload["rows"]) == 111 and payload["provenance"]["tool"].startswith("levels ")
    ecsv = runner.invoke(main, ["--db", store_url, "lines", "Na I", "--format", "ecsv", "--from", "580nm",
                                "--to", "600nm"])
    assert ecsv.output.startswith("# %ECSV 1.0") and "{name: vacuum_nm, datatype: float64, unit: \"nm\"}" in ecsv.output


def test_cli_lines_bad_filters(invented, store_url):
    runner = CliRunner()
    for args, message in ((["--from", "700nm", "--to", "600nm"], "empty window"),
                          (["--from", "abc"], "not a number"), (["--multipole", "X9"], "unknown multipole"),
                          (["--from", "-5nm"], "must be greater than zero"), (["--from", "5K"], "unit of temperature")):
        result = runner.invoke(main, ["--db", store_url, "lines", "Na I", *args])
        assert result.exit_code != 0 and message in result.output, (args, result.output)
