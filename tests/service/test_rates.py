"""``levels rates`` on the store: computed dataset, precedence, lifetimes, bad input, all-or-nothing.

Runs on SQLite and, with LEVELS_TEST_POSTGRES_URL, on PostgreSQL (the ``catalog`` fixture).
Na I level energies: from memory of the published analyses (as in
tests/physics/many_electron/test_single_valence.py).
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

import levels.catalog as catalog_module
import levels.service.derived as derived_module
from levels.cli import main
from levels.errors import PhysicsInputError
from levels.service import rates as rates_service
from levels.store.database import dump

HEADER = "spectrum,configuration,term,j,energy_cm1,unc_cm1\n"
# Na I levels (cm-1), from memory of the published analyses
NA_LEVELS = """Na I,3s,2S,1/2,0.0,
Na I,4s,2S,1/2,25739.99,0.01
Na I,5s,2S,1/2,33200.67,0.01
Na I,6s,2S,1/2,36372.62,0.01
Na I,3p,2P°,1/2,16956.17,0.01
Na I,3p,2P°,3/2,16973.37,0.01
Na I,4p,2P°,1/2,30266.99,0.01
Na I,4p,2P°,3/2,30272.58,0.01
Na I,5p,2P°,1/2,35040.38,0.01
Na I,5p,2P°,3/2,35042.85,0.01
Na I,3d,2D,5/2,29172.84,0.01
Na I,3d,2D,3/2,29172.89,0.01
Na I,4d,2D,5/2,34548.73,0.01
Na I,4d,2D,3/2,34548.75,0.01
"""


def _levels_file(tmp_path, body, name="na.csv"):
    path = tmp_path / name
    path.write_text(HEADER + body, encoding="utf-8")
    return path


@pytest.fixture
def sodium(catalog, tmp_path):
    catalog.import_file(_levels_file(tmp_path, NA_LEVELS), dataset="na-levels")
    return catalog


def _rates_datasets(catalog):
    return [d for d in catalog.dataset_rows() if d["name"].startswith("rates ")]


def test_rates_are_stored_and_used_by_show_lines_and_emission(sodium):
    report = rates_service.compute_rates(sodium, "Na I")
    assert report.saved_as == "rates Na I A=23"
    assert any("no stored ionization limit" in w and "fitted here" in w for w in report.warnings)
    # fitted from the s, p, d series (n <= 6 only, so a few cm-1 is what the extended Ritz fit can do);
    # the analyses give 41449.45 cm-1 (from memory)
    assert report.ionization_cm1 == pytest.approx(41449.45, abs=5.0)
    assert not report.skipped
    rows = {(r["lower"], r["upper"], r["multipole"]): r for r in report.lines}
    d2 = rows[("3s 2S1/2", "3p 2P°3/2", "E1")]
    assert 0 < d2["a_rel_unc"] < 1 and d2["a_per_s"] == pytest.approx(1 / 16.254e-9, rel=0.03)
    # levels show: lifetimes from the computed rates (Volz & Schmoranzer 1996: 16.254 ns, from memory)
    shown = {r["label"]: r for r in sodium.level_rows("Na I")}
    assert shown["3p 2P°3/2"]["lifetime_s"] == pytest.approx(16.254e-9, rel=0.03)
    assert shown["3s 2S1/2"]["lifetime_s"] is None
    # the engine's line list carries the stored rates
    lines, info = sodium.species_lines(catalog_module.LineQuery(spectrum="Na I", medium="vacuum"))
    by_pair = {(r["lower"], r["upper"]): r for r in lines}
    assert by_pair[("3s 2S1/2", "3p 2P°3/2")]["a_per_s"] == pytest.approx(d2["a_per_s"])
    assert by_pair[("3s 2S1/2", "3p 2P°3/2")]["dataset"] == "rates Na I A=23"
    assert info["without_rates"] == 0
    # the dataset records method, version, parameters and the levels it used
    info = sodium.dataset_info("rates Na I A=23")
    assert info["kind"] == "computed" and "single-valence" in info["method"]
    assert len(info["options"]["levels_used"]) == 14 and "parameters" in info["options"]
    # emission works for the species (it has rates now)
    result = sodium.emission("Na I", te_k=5000.0, ne_m3=1e19, from_nm=580.0, to_nm=600.0)
    assert any(abs(r["vacuum_nm"] - 589.16) < 0.05 for r in result.lines)


def test_rerun_replaces_the_dataset_in_one_transaction_and_is_audited(sodium, store_url):
    first = rates_service.compute_rates(sodium, "Na I")
    second = rates_service.compute_rates(sodium, "Na I", method="single")
    assert first.saved_as == second.saved_as
    assert len(_rates_datasets(sodium)) == 1
    from levels.service import maintenance

    entries = [e for e in maintenance.history(sodium) if e["action"] == "compute-rates"]
    assert len(entries) == 2 and all(e["target"] == "dataset rates Na I A=23" for e in entries)


def test_measured_rates_win_over_computed_ones(sodium, tmp_path):
    rates_service.compute_rates(sodium, "Na I")
    lines = tmp_path / "na-lines.csv"
    lines.write_text("spectrum,lower,upper,wavelength_nm,medium,unc_nm,a_per_s\n"
                     f"Na I,3s 2S1/2,3p 2P°3/2,{1e7 / 16973.37:.4f},vacuum,0.001,6.0e7\n", encoding="utf-8")
    sodium.import_file(lines, dataset="na-measured-lines")
    rows, _ = sodium.species_lines(catalog_module.LineQuery(spectrum="Na I", medium="vacuum"))
    d2 = [r for r in rows if (r["lower"], r["upper"]) == ("3s 2S1/2", "3p 2P°3/2")]
    assert d2[0]["a_per_s"] == pytest.approx(6.0e7) and d2[0]["dataset"] == "na-measured-lines"
    shown = {r["label"]: r for r in sodium.level_rows("Na I")}
    assert shown["3p 2P°3/2"]["lifetime_s"] == pytest.approx(1 / 6.0e7, rel=1e-9)


def test_untreatable_and_contradictory_levels_are_skipped_with_reasons(sodium, tmp_path):
    extra = ("Na I,2p5.3s.3p,4D,7/2,300000.0,0.1\n"     # open core: not this method
             "Na I,4f,2P°,3/2,34586.9,0.01\n")          # an f electron cannot make a 2P term
    sodium.import_file(_levels_file(tmp_path, extra, "extra.csv"), dataset="na-extra")
    report = rates_service.compute_rates(sodium, "Na I", method="single")
    reasons = {s["label"]: s["reason"] for s in report.skipped}
    assert "not one electron outside closed shells" in reasons["2p5.3s.3p 4D7/2"]
    assert "contradicts configuration 4f" in reasons["4f 2P°3/2"]
    used = {r["lower"] for r in report.lines} | {r["upper"] for r in report.lines}
    assert "4f 2P°3/2" not in used and "2p5.3s.3p 4D7/2" not in used


def test_auto_hands_open_core_levels_to_the_coupled_method_or_reports_its_absence(sodium, tmp_path, monkeypatch):
    sodium.import_file(_levels_file(tmp_path, "Na I,2p5.3s.3p,4D,7/2,300000.0,0.1\n", "core.csv"), dataset="core")
    monkeypatch.setattr(rates_service, "_coupled_function", lambda: (None, None))
    report = rates_service.compute_rates(sodium, "Na I", method="auto")
    reasons = {s["label"]: s["reason"] for s in report.skipped}
    assert "coupled method" in reasons["2p5.3s.3p 4D7/2"]
    with pytest.raises(PhysicsInputError, match="no rates could be computed"):
        rates_service.compute_rates(sodium, "Na I", method="coupled")


def test_too_few_levels_for_the_potential_fall_back_and_say_so(catalog, tmp_path):
    body = "\n".join(NA_LEVELS.splitlines()[:6]) + "\n"   # 3s, 4s, 5s, 6s, 3p1/2, 3p3/2
    catalog.import_file(_levels_file(tmp_path, body), dataset="na-few")
    catalog.fit_limit("Na I", ["ns 2S1/2"])
    report = rates_service.compute_rates(catalog, "Na I")
    assert "stored in dataset" in report.ionization_source
    assert any("fewer than the 2 parameters" in w and "Coulomb approximation" in w for w in report.warnings)
    series = report.parameters["single-valence 1.0"]["series"]
    assert {(s["l"], s["method"]) for s in series} == {(0, "model potential"), (1, "coulomb approximation")}


def test_no_limit_and_no_series_is_a_clear_error_and_writes_nothing(catalog, tmp_path):
    catalog.import_file(_levels_file(tmp_path, "Na I,3s,2S,1/2,0,\nNa I,3p,2P°,1/2,16956.17,0.01\n"), dataset="two")
    before = dump(catalog.engine)
    with pytest.raises(PhysicsInputError, match="no stored ionization limit"):
        rates_service.compute_rates(catalog, "Na I")
    assert dump(catalog.engine) == before


def test_a_failure_while_storing_leaves_the_store_as_it_was(sodium, monkeypatch):
    rates_service.compute_rates(sodium, "Na I")
    before = dump(sodium.engine)

    def broken(*args, **kwargs):
        raise RuntimeError("disk full (simulated)")

    monkeypatch.setattr(derived_module, "rebuild_derived_lines", broken)
    with pytest.raises(RuntimeError, match="simulated"):
        rates_service.compute_rates(sodium, "Na I", method="single")
    assert dump(sodium.engine) == before
    assert len(_rates_datasets(sodium)) == 1


def test_unknown_method_and_species(catalog):
    with pytest.raises(PhysicsInputError, match="method must be one of"):
        rates_service.compute_rates(catalog, "Na I", method="best")
    with pytest.raises(Exception, match="Na I"):
        rates_service.compute_rates(catalog, "Na I")


def test_cli_json_report_has_the_contract_keys(sodium, store_url, tmp_path):
    out = tmp_path / "rates.json"
    result = CliRunner().invoke(main, ["--db", store_url, "rates", "Na I", "--format", "json", "--output", str(out)])
    assert result.exit_code == 0, result.output
    payload = json.loads(out.read_text(encoding="utf-8"))
    assert {"spectrum", "method", "datasets", "lines", "levels", "skipped", "warnings"} <= set(payload)
    assert set(payload["lines"][0]) == {"lower", "upper", "vacuum_nm", "multipole", "a_per_s", "a_rel_unc", "f_abs",
                                        "line_strength_au"}
    assert set(payload["levels"][0]) == {"label", "lifetime_s", "lifetime_rel_unc"}
    table = CliRunner().invoke(main, ["--db", store_url, "rates", "Na I"])
    assert table.exit_code == 0 and "stored as computed dataset 'rates Na I A=23'" in table.output
    csv = CliRunner().invoke(main, ["--db", store_url, "rates", "Na I", "--format", "csv"])
    assert csv.exit_code == 0 and "lower,upper,vacuum_nm,multipole,a_per_s,a_rel_unc" in csv.output


def test_demo_computes_rates_of_its_invented_samples(catalog, tmp_path, monkeypatch):
    import shutil

    from levels import demo

    # a copy of the demo folder with one more invented level sample (the Na I levels above, marked invented)
    folder = tmp_path / "demo"
    shutil.copytree(demo.DEMO_DIR, folder)
    (folder / "sample-zz-extra.csv").write_text("# INVENTED test sample\n" + HEADER + NA_LEVELS, encoding="utf-8")
    monkeypatch.setattr(demo, "DEMO_DIR", folder)
    out = demo.build_demo(catalog, n_max=2)
    assert any(line.startswith("computed rates of the invented Li I levels") for line in out)
    assert any(line.startswith("computed rates of the invented Na I levels") for line in out)
    names = {d["name"] for d in catalog.dataset_rows()}
    assert {"rates Li I A=7", "rates Na I A=23"} <= names
    result = catalog.emission("Li I", te_k=5800.0, ne_m3=1e19, from_nm=600.0, to_nm=720.0)
    assert result.lines and all(r["a_per_s"] for r in result.lines)
    first = sorted(n for n in (d["name"] for d in catalog.dataset_rows()) if n.startswith("rates "))
    again = demo.build_demo(catalog, n_max=2)   # a second run refreshes, nothing doubles
    assert any("already in the store" in line for line in again)
    assert sorted(n for n in (d["name"] for d in catalog.dataset_rows()) if n.startswith("rates ")) == first


def test_web_api_and_diagram_use_the_computed_rates(sodium, store_url, tmp_path):
    from webui import create_app

    rates_service.compute_rates(sodium, "Na I")
    app = create_app({"LEVELS_DB": store_url, "SECRET_KEY": "test-secret", "LEVELS_API_TOKEN": "test-token",
                      "TESTING": True, "LEVELS_UPLOAD_DIR": str(tmp_path / "up"),
                      "LEVELS_INSTANCE_PATH": str(tmp_path / "instance")})
    try:
        client = app.test_client()
        lines = client.get("/api/v1/species/Na_I/lines?from_nm=589&to_nm=590&medium=vacuum")
        assert lines.status_code == 200
        rows = lines.get_json()["rows"]
        d2 = [r for r in rows if r["upper"] == "3p 2P°3/2" and r["lower"] == "3s 2S1/2"]
        assert d2 and d2[0]["a_per_s"] == pytest.approx(1 / 16.254e-9, rel=0.03)
        levels = client.get("/api/v1/species/Na_I/levels").get_json()["rows"]
        p3 = [r for r in levels if r["label"] == "3p 2P°3/2"]
        assert p3[0]["lifetime_s"] == pytest.approx(16.254e-9, rel=0.03)
        figure = client.get("/species/Na_I/diagram.json")
        assert figure.status_code == 200 and "3p 2P°3/2" in figure.get_data(as_text=True)
    finally:
        app.extensions["levels"]["catalog"].close()


def test_engine_rows_carry_the_computed_lifetimes_for_natural_widths(sodium):
    rates_service.compute_rates(sodium, "Na I")
    rows, _ = sodium.species_lines(catalog_module.LineQuery(spectrum="Na I", medium="vacuum"))
    d2 = [r for r in rows if (r["lower"], r["upper"]) == ("3s 2S1/2", "3p 2P°3/2")][0]
    assert d2["upper_lifetime_s"] == pytest.approx(16.254e-9, rel=0.03)
    assert d2["lower_lifetime_s"] is None   # the ground level does not decay


def test_levels_with_a_decay_outside_the_coupled_method_get_no_lifetime(catalog):
    """The invented Ne glow sample: levels that also decay by a core-electron jump (refused by the
    coupled method) must not get a lifetime from their remaining lines, in the report or in `levels show`."""
    from pathlib import Path

    from levels.service.rates import compute_rates

    demo = Path(__file__).resolve().parents[2] / "seed_data" / "demo" / "sample-ne-glow.csv"
    catalog.import_file(demo, sample="ne-glow-test")
    catalog.fit_limit("Ne I", ["2p5(2P°3/2)ns 2[3/2]°2"])
    report = compute_rates(catalog, "Ne I", method="auto")
    incomplete = set(report.parameters.get("lifetime_incomplete_level_ids", []))
    assert incomplete, "the sample has levels decaying to 2p6, which the coupled method refuses"
    labels = {row["label"]: row for row in catalog.level_rows("Ne I")}
    reported = {row["label"] for row in report.levels}
    with_lifetime = {label for label, row in labels.items() if row.get("lifetime_s") is not None}
    assert reported, "complete levels keep their lifetimes"
    assert reported <= with_lifetime
    ids = {row["level_id"] for row in report.levels}
    assert not (ids & incomplete)
    assert len(with_lifetime) == len(reported)
