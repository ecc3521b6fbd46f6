"""Computed one-electron ions in the store: wavelengths against published values, rates, replacement."""

import json
import math

import numpy as np
import pytest
from click.testing import CliRunner

from levels.catalog import LineQuery
from levels.cli import main
from levels.errors import PhysicsInputError


@pytest.fixture
def hydrogen(catalog):
    catalog.compute_hydrogenic("H I", n_max=8)
    return catalog


def _component(rows, lower, upper):
    hits = [r for r in rows if r["lower"] == lower and r["upper"] == upper]
    assert len(hits) == 1, (lower, upper)
    return hits[0]


def _weighted_air(rows, n_upper):
    """gf-weighted air wavelength of the Balmer multiplet n_upper -> 2."""
    parts = [r for r in rows if r["upper"].startswith(f"{n_upper}") and r["lower"].startswith("2")]
    gf = np.array([r["g_lower"] * r["f_abs"] for r in parts])
    return float(np.sum(gf * np.array([r["air_nm"] for r in parts])) / gf.sum())


def test_balmer_and_lyman_wavelengths(hydrogen):
    rows, _ = hydrogen.species_lines(LineQuery(spectrum="H I"))
    # H-alpha fine-structure components in air, from memory (standard line tables): 656.2852, 656.2710 nm
    assert _component(rows, "2p 2P°3/2", "3d 2D5/2")["air_nm"] == pytest.approx(656.2852, abs=2e-4)
    assert _component(rows, "2p 2P°1/2", "3d 2D3/2")["air_nm"] == pytest.approx(656.2710, abs=2e-4)
    # Lyman-alpha components in vacuum, from memory: 121.5668 nm (2p3/2) and 121.5674 nm (2p1/2)
    assert _component(rows, "1s 2S1/2", "2p 2P°3/2")["vacuum_nm"] == pytest.approx(121.5668, abs=2e-4)
    assert _component(rows, "1s 2S1/2", "2p 2P°1/2")["vacuum_nm"] == pytest.approx(121.5674, abs=2e-4)
    assert _component(rows, "1s 2S1/2", "2p 2P°1/2")["air_nm"] is None  # below 200 nm: vacuum only
    # Balmer multiplets in air, from memory: H-beta 486.134 (the Fraunhofer F line), H-gamma 434.047,
    # H-delta 410.174 nm
    assert _weighted_air(rows, 4) == pytest.approx(486.134, abs=2e-3)
    assert _weighted_air(rows, 5) == pytest.approx(434.047, abs=2e-3)
    assert _weighted_air(rows, 6) == pytest.approx(410.174, abs=2e-3)


def test_helium_ii_4686(catalog):
    catalog.compute_hydrogenic("He II", n_max=5)
    rows, _ = catalog.species_lines(LineQuery(spectrum="He II", from_nm=468, to_nm=469.5, medium="air"))
    assert rows, "He II n = 4 -> 3 lines expected near 468.6 nm"
    gf = np.array([r["g_lower"] * r["f_abs"] for r in rows])
    centroid = float(np.sum(gf * np.array([r["air_nm"] for r in rows])) / gf.sum())
    # He II 4686 A multiplet (n = 4 -> 3), air, from memory: 468.57 nm
    assert centroid == pytest.approx(468.57, abs=0.01)


def test_stored_rates_and_lifetimes(hydrogen):
    levels = {r["label"]: r for r in hydrogen.level_rows("H I")}
    # 2p lifetime 1.596 ns (Bethe & Salpeter 1957; Wiese & Fuhr 2009)
    assert levels["2p 2P°1/2"]["lifetime_s"] == pytest.approx(1.596e-9, rel=1e-3)
    # 2s decays by two photons at 8.2290 s-1 (Goldman & Drake 1981, from memory): lifetime about 0.1215 s
    assert levels["2s 2S1/2"]["lifetime_s"] == pytest.approx(1 / 8.2290, rel=2e-3)
    assert levels["1s 2S1/2"]["lifetime_s"] is None and levels["1s 2S1/2"]["energy_cm1"] == 0.0
    # Landé g of 2P3/2 in LS coupling with g_s = 2.0023: about 4/3 (Bethe & Salpeter 1957, Sec. 47)
    assert levels["2p 2P°3/2"]["lande_g"] == pytest.approx(4 / 3, rel=1e-3)
    rows, _ = hydrogen.species_lines(LineQuery(spectrum="H I"))
    # Wiese & Fuhr 2009, JPCRD 38, 565: A(3d5/2 - 2p3/2) = 6.4651e7 s-1 (from memory)
    assert _component(rows, "2p 2P°3/2", "3d 2D5/2")["a_per_s"] == pytest.approx(6.4651e7, rel=2e-4)


def test_ionization_limit_stored(hydrogen):
    import scipy.constants as sc

    row = hydrogen.species_rows()[0]
    ev = row["ionization_cm1"] * 100 * sc.h * sc.c / sc.e
    # mendeleev's hydrogen ionization energy 13.598434599702 eV (the value the physics tests use)
    assert ev == pytest.approx(13.598434599702, rel=2e-9)


def test_rerun_replaces_the_dataset_in_one_transaction(hydrogen):
    first = hydrogen.dataset_rows()
    hydrogen.compute_hydrogenic("H I", n_max=4)
    second = hydrogen.dataset_rows()
    assert [d["name"] for d in first] == [d["name"] for d in second]
    assert second[0]["levels"] == 16 and second[0]["lines"] < first[0]["lines"]


def test_nl_terms_without_fine_structure(catalog):
    report = catalog.compute_hydrogenic("D I", n_max=5, fine_structure=False)
    assert report["levels"] == 15
    levels = catalog.level_rows("D I")
    assert levels[1]["label"] == "2s 2S" and levels[1]["j"] == "" and levels[2]["g"] == 6
    rows, info = catalog.species_lines(LineQuery(spectrum="D I"))
    assert info["total"] == report["lines"] and all(r["a_per_s"] is not None for r in rows)


@pytest.mark.parametrize("args, message", [
    (["hydrogenic", "He I"], "has 2 electrons"),
    (["hydrogenic", "Xq I"], "unknown element symbol"),
    (["hydrogenic", "H I", "--n-max", "0"], "n_max must be"),
    (["hydrogenic", "H I", "--n-max", "2000"], "above the supported 1000"),
    (["hydrogenic", "H I", "--n-max", "400"], "GB, more than the limit"),
    (["hydrogenic", "H I", "--mass-number", "9"], "no mass known for H-9"),
    (["hydrogenic", "Fe XXVI", "--mass-number", "30"], "no mass known for Fe-30"),
    (["hydrogenic", "He II A=3", "--mass-number", "4"], "give it once"),
    (["hydrogenic", "11He II"], "no mass known for He-11"),
])
def test_bad_hydrogenic_requests(store_url, args, message):
    runner = CliRunner()
    runner.invoke(main, ["--db", store_url, "init"])
    result = runner.invoke(main, ["--db", store_url, *args])
    assert result.exit_code == 1 and message in result.output, result.output


def test_z_outside_range_is_refused(catalog):
    from levels.errors import NotationError
    from levels.notation import Spectrum

    with pytest.raises(NotationError):
        catalog.compute_hydrogenic(Spectrum(119, 118))
    with pytest.raises(PhysicsInputError):
        catalog.compute_hydrogenic("H I", n_max=-3)


def test_cli_hydrogenic_prints_summary(store_url):
    runner = CliRunner()
    runner.invoke(main, ["--db", store_url, "init"])
    result = runner.invoke(main, ["--db", store_url, "hydrogenic", "He II", "--n-max", "6"])
    assert result.exit_code == 0 and "36 levels" in result.output and "ionization energy" in result.output
    assert math.isfinite(float(result.output.split("ionization energy ")[1].split()[0]))


def test_isotope_named_in_spectrum_notation(store_url):
    # '3He II' and 'He II A=3' name the helium-3 ion everywhere a spectrum is asked for
    runner = CliRunner()
    runner.invoke(main, ["--db", store_url, "init"])
    assert runner.invoke(main, ["--db", store_url, "hydrogenic", "3He II", "--n-max", "3"]).exit_code == 0
    assert runner.invoke(main, ["--db", store_url, "hydrogenic", "He II", "--n-max", "2"]).exit_code == 0
    three = runner.invoke(main, ["--db", store_url, "show", "He II A=3", "--format", "json"])
    four = runner.invoke(main, ["--db", store_url, "show", "He II", "--format", "json"])
    rows3, rows4 = json.loads(three.output)["rows"], json.loads(four.output)["rows"]
    assert len(rows3) == 9 and {r["dataset"] for r in rows3} == {"hydrogenic He II A=3"}
    assert len(rows4) == 4 and {r["dataset"] for r in rows4} == {"hydrogenic He II A=4"}
    # the lighter nucleus recoils more: every excited level of 3He+ lies below that of 4He+
    # (reduced-mass scaling; Bethe & Salpeter 1957, from memory)
    e3 = {r["label"]: r["energy_cm1"] for r in rows3}
    assert all(e3[r["label"]] < r["energy_cm1"] for r in rows4 if r["energy_cm1"] > 0)


def test_heavy_ion_g_factor_is_the_bound_electron_value(catalog):
    # Breit 1928, Nature 122, 649: g_D(1s) = (2/3)(1 + 2 sqrt(1 - (Z alpha)^2)), plus the
    # free-electron anomaly g_e - 2 (CODATA); the LS value 2.0023 would be 17 % off for U91+
    import scipy.constants as sc

    catalog.compute_hydrogenic("U XCII", n_max=2)
    levels = {r["label"]: r for r in catalog.level_rows("U XCII")}
    x = 92 * sc.fine_structure
    g_e = abs(sc.physical_constants["electron g factor"][0])
    assert levels["1s 2S1/2"]["lande_g"] == pytest.approx(2 / 3 * (1 + 2 * math.sqrt(1 - x * x)) + g_e - 2, rel=1e-12)
