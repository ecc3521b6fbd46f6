"""Computed one-electron levels and lines carry their theory uncertainty into the store and the CLI."""

import json
import math

import pytest
from click.testing import CliRunner

from levels.catalog import LineQuery
from levels.cli import main
from levels.physics.one_electron import dirac, hydrogenic


def test_levels_lines_and_limit_carry_theory_uncertainty(catalog):
    catalog.compute_hydrogenic("H I", n_max=4)
    levels = {r["label"]: r for r in catalog.level_rows("H I")}
    assert levels["1s 2S1/2"]["unc_cm1"] == 0.0          # the zero of the energy scale
    u2p = levels["2p 2P°1/2"]["unc_cm1"]
    assert 1e-8 < u2p < 1e-3                              # not blank, not absurd (brief's bound for H 2p)
    assert u2p == pytest.approx(float(dirac.level_uncertainties_cm1(1, 2, 1, 1, nuclear_mass_u=1.007276466621)),
                                rel=1e-6)
    rows, _ = catalog.species_lines(LineQuery(spectrum="H I"))
    lya = next(r for r in rows if r["lower"] == "1s 2S1/2" and r["upper"] == "2p 2P°1/2")
    # unc_nm of a line to the ground state: the upper level's uncertainty as a wavelength, lambda^2 u / 1e7
    assert lya["unc_nm"] == pytest.approx(lya["vacuum_nm"] ** 2 * u2p / 1e7, rel=1e-6)
    balmer = next(r for r in rows if r["lower"] == "2p 2P°3/2" and r["upper"] == "3d 2D5/2")
    # the species line list (Ritz engine) propagates the two stored level uncertainties in quadrature
    u_up, u_lo = levels["3d 2D5/2"]["unc_cm1"], levels["2p 2P°3/2"]["unc_cm1"]
    assert balmer["unc_nm"] == pytest.approx(balmer["vacuum_nm"] ** 2 * math.hypot(u_up, u_lo) / 1e7, rel=1e-6)
    # the stored computed line carries the transition's own uncertainty: the two states' parts in quadrature,
    # the Rydberg and radius parts correlated (dirac.transition_uncertainties_cm1); smaller, as it does not
    # count the ground state's part twice
    stored, _ = catalog.line_rows(LineQuery(from_nm=656.0, to_nm=657.0, medium="vacuum"))
    line = next(r for r in stored if r["lower"] == "2p 2P°3/2" and r["upper"] == "3d 2D5/2")
    u_line = float(dirac.transition_uncertainties_cm1(1, [3, 2], [2, 1], [5, 3], [0], [1],
                                                      nuclear_mass_u=1.007276466621)[0])
    assert line["unc_nm"] == pytest.approx(line["vacuum_nm"] ** 2 * u_line / 1e7, rel=1e-6)
    assert 0 < u_line < math.hypot(u_up, u_lo)
    species = catalog.species_rows()[0]
    assert species["ionization_unc_cm1"] is not None and 1e-8 < species["ionization_unc_cm1"] < 1e-5


def test_method_version_records_the_uncertainties(catalog):
    catalog.compute_hydrogenic("He II", n_max=3)
    ds = [d for d in catalog.dataset_rows() if d["name"].startswith("hydrogenic")][0]
    assert str(ds.get("method_version", hydrogenic.METHOD_VERSION)).startswith(hydrogenic.METHOD_VERSION)
    assert int(hydrogenic.METHOD_VERSION) >= 3


def test_cli_show_prints_the_uncertainty(store_url):
    runner = CliRunner()
    runner.invoke(main, ["--db", store_url, "init"])
    assert runner.invoke(main, ["--db", store_url, "hydrogenic", "H I", "--n-max", "3"]).exit_code == 0
    out = runner.invoke(main, ["--db", store_url, "show", "H I", "--format", "json"])
    assert out.exit_code == 0, out.output
    data = json.loads(out.output)
    rows = data["rows"]
    two_p = next(r for r in rows if r["label"] == "2p 2P°1/2")
    assert two_p["unc_cm1"] is not None and two_p["unc_cm1"] > 0
    table = runner.invoke(main, ["--db", store_url, "show", "H I"])
    assert table.exit_code == 0
    line = next(l for l in table.output.splitlines() if "2p 2P°1/2" in l)
    # the uncertainty column shows two significant digits: 3.6e-07 cm-1 for H 2p1/2
    assert f"{two_p['unc_cm1']:.1e}" in line
