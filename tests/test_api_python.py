"""The Python API (levels.open_store): typed tables with units, mirroring the command line's numbers."""

import csv
import io
import json
import subprocess
import sys
from pathlib import Path

import astropy.units as u
import numpy as np
import pytest
from astropy.table import QTable
from click.testing import CliRunner

import levels
from levels.api import COLUMN_UNITS, LINE_STRENGTH_AU, RatesUnavailableError
from levels.catalog import EMISSION_COLUMNS, LEVEL_COLUMNS, LINE_COLUMNS, LINE_LIST_COLUMNS, SPECIES_COLUMNS
from levels.cli import main
from levels.errors import InputFileError, LevelsError, PhysicsInputError, UnitError
from levels.service.line_selection import MULTIPLET_EXTRA_COLUMNS

DEMO = Path(__file__).resolve().parents[1] / "seed_data" / "demo" / "sample-li-cell.csv"


@pytest.fixture
def store(catalog):
    """An API store over the test store, with H I (n <= 5) computed and the invented Li cell imported."""
    api = levels.open_store(catalog.url)
    api.hydrogenic("H I", n_max=5)
    api.import_file(DEMO, sample="demo-1")
    yield api
    api.close()


def _cli_csv(url, *args):
    result = CliRunner().invoke(main, ["--db", url, *args, "--format", "csv"], catch_exceptions=False)
    assert result.exit_code == 0, result.output
    header = {}
    for line in result.stdout.splitlines():
        if line.startswith("# ") and ": " in line:
            key, value = line[2:].split(": ", 1)
            header[key] = value
    body = "\n".join(line for line in result.stdout.splitlines() if not line.startswith("#"))
    return header, list(csv.DictReader(io.StringIO(body)))


def _assert_same(table: QTable, rows: list[dict], columns):
    assert table.colnames == list(columns)
    assert len(table) == len(rows) > 0
    for name in columns:
        column = table[name]
        if name in COLUMN_UNITS:
            got = column.to_value(COLUMN_UNITS[name])
            want = np.array([float(r[name]) if r[name] != "" else np.nan for r in rows])
            # the CSV writes floats with repr, so the numbers agree exactly
            np.testing.assert_array_equal(got, want, err_msg=name)
        else:
            assert [str(v) for v in column] == [r[name] if r[name] != "" else ("-1" if column.dtype.kind == "i" else "")
                                               for r in rows], name


@pytest.mark.parametrize("args, kwargs", [
    (("H I", "--from", "90nm", "--to", "2000nm"), dict(spectrum="H I", window=("90nm", "2000nm"))),
    (("H I", "--from", "400nm", "--to", "700nm", "--medium", "vacuum", "--multipole", "E1,M1,E2"),
     dict(spectrum="H I", window=[400, 700] * u.nm, medium="vacuum", multipoles=("E1", "M1", "E2"))),
    (("Li I", "--sort", "a", "--air-formula", "edlen1966"),
     dict(spectrum="Li I", order="a", air_formula="edlen1966")),
    (("--from", "300nm", "--to", "1000nm", "--air-formula", "ciddor1996"),
     dict(window=(3000 * u.AA, "1000nm"), air_formula="ciddor1996")),
    (("H I", "--min-a", "1e7", "--max-upper", "12eV"), dict(spectrum="H I", min_a=1e7 / u.s, max_upper="12eV")),
    (("H I", "--series", "np 2P°3/2", "--lower", "1s 2S1/2"), dict(spectrum="H I", series="np 2P°3/2",
                                                                    lower="1s 2S1/2")),
])
def test_lines_match_the_cli_csv(store, args, kwargs):
    header, rows = _cli_csv(store.url, "lines", *args)
    table = store.lines(**kwargs)
    _assert_same(table, rows, LINE_LIST_COLUMNS)
    provenance = table.meta["provenance"]
    for key in ("datasets", "query", "air_formula", "lines"):
        assert provenance[key] == header[key], key


def test_multiplets_match_the_cli_csv(store):
    header, rows = _cli_csv(store.url, "lines", "H I", "--from", "400nm", "--to", "700nm", "--multiplets")
    table = store.lines("H I", window=("400nm", "700nm"), multiplets=True)
    _assert_same(table, rows, LINE_COLUMNS + MULTIPLET_EXTRA_COLUMNS)
    assert table.meta["provenance"]["multiplets"] == header["multiplets"]


def test_line_table_units_and_pandas(store):
    table = store.lines("H I", window=("400nm", "700nm"))
    assert table["vacuum_nm"].unit == u.nm and table["wavenumber_cm1"].unit == 1 / u.cm
    assert table["a_per_s"].unit == 1 / u.s and table["line_strength_au"].unit == LINE_STRENGTH_AU
    # (e a0)^2 in SI: CODATA e and Bohr radius (scipy.constants) - an outside check of the unit
    import scipy.constants as sc

    bohr = sc.physical_constants["Bohr radius"][0]
    assert (1 * LINE_STRENGTH_AU).to_value(u.C ** 2 * u.m ** 2) == pytest.approx((sc.e * bohr) ** 2, rel=1e-9)
    # sigma = 1e7 / lambda_vac within the store's own numbers
    np.testing.assert_allclose((table["wavenumber_cm1"]).to_value(u.nm ** -1) * table["vacuum_nm"].value, 1.0,
                               rtol=1e-9)
    frame = table.to_pandas()
    assert list(frame.columns) == list(LINE_LIST_COLUMNS) and len(frame) == len(table)


def test_species_and_levels_match_the_cli(store):
    _, rows = _cli_csv(store.url, "species")
    _assert_same(store.species(), rows, SPECIES_COLUMNS)
    _, rows = _cli_csv(store.url, "show", "Li I")
    levels_table = store.levels("Li I")
    _assert_same(levels_table, rows, LEVEL_COLUMNS)
    assert levels_table["energy_cm1"].unit == 1 / u.cm and levels_table["lifetime_s"].unit == u.s


def test_quantities_in_any_unit_give_one_answer(store):
    base = store.lines("H I", window=("400nm", "700nm"))
    for window in ([400, 700] * u.nm, (4000 * u.AA, 0.7 * u.um), ("4000A", "0.7um")):
        other = store.lines("H I", window=window)
        np.testing.assert_array_equal(other["vacuum_nm"].value, base["vacuum_nm"].value)
    # a window given as photon energies (spectral equivalency): 700 nm .. 400 nm
    by_energy = store.lines("H I", window=((400 * u.nm).to(u.eV, u.spectral()), (700 * u.nm).to(u.eV, u.spectral())),
                            medium="vacuum")
    in_vacuum = store.lines("H I", window=("400nm", "700nm"), medium="vacuum")
    assert len(in_vacuum) > 0
    np.testing.assert_array_equal(by_energy["vacuum_nm"].value, in_vacuum["vacuum_nm"].value)


def test_bad_quantities_are_refused(store):
    with pytest.raises(UnitError, match="unit"):
        store.lines("H I", window=(400, 700))
    with pytest.raises(UnitError, match="not a length"):
        store.lines("H I", window=(1 * u.s, 2 * u.s))
    with pytest.raises(UnitError, match="both ends"):
        store.lines(window=("400nm", None))
    with pytest.raises(PhysicsInputError, match="empty window"):
        store.lines("H I", window=("700nm", "400nm"))
    with pytest.raises(UnitError):
        store.emission("H I", te=1.0, ne="1e20m-3")


def test_emission_matches_the_cli_json(store):
    report = store.emission("H I", te=1 * u.eV, ne=1e20 * u.m ** -3, window=("380nm", "700nm"), points=2001)
    result = CliRunner().invoke(main, ["--db", store.url, "emission", "H I", "--te", "1eV", "--ne", "1e20m-3",
                                       "--from", "380nm", "--to", "700nm", "--points", "2001", "--format", "json"],
                                catch_exceptions=False)
    assert result.exit_code == 0, result.output
    payload = json.loads(result.stdout)
    assert report.lines.colnames == list(EMISSION_COLUMNS) and len(report.lines) == len(payload["lines"]) > 0
    np.testing.assert_allclose(report.lines["rel_intensity"].value, [r["rel_intensity"] for r in payload["lines"]],
                               rtol=1e-12)
    np.testing.assert_allclose(report.lines["air_nm"].to_value(u.nm), [r["air_nm"] for r in payload["lines"]],
                               rtol=1e-15)
    assert report.metrics["cie_x"] == pytest.approx(payload["metrics"]["cie_x"], rel=1e-12)
    assert report.spectrum["wavelength"].unit == u.nm and len(report.spectrum) == 2001
    # optically thin: an emission coefficient per unit volume (design: the quantity named for what it is)
    assert report.spectrum["emission_coefficient"].unit == u.W / u.m ** 3 / u.sr / u.nm
    # 1 eV as a temperature is 11604.5 K (CODATA e/k through astropy's equivalency)
    assert report.conditions["te_k"] == pytest.approx(payload["conditions"]["te_k"], rel=1e-9)


def test_import_file_is_all_or_nothing(store, tmp_path):
    bad = tmp_path / "bad.csv"
    bad.write_text("spectrum,configuration,term,j,energy_cm1\nNa I,3s,2S,1/2,0\nNa I,3p,2P°,3/2,abc\n",
                   encoding="utf-8")
    with pytest.raises(InputFileError, match="bad.csv"):
        store.import_file(bad)
    assert "Na I" not in list(store.species()["spectrum"])


def test_rates_match_the_service_or_say_they_are_missing(store):
    import importlib.util

    if importlib.util.find_spec("levels.service.rates") is None:
        with pytest.raises(RatesUnavailableError, match="not available"):
            store.rates("Li I")
        with pytest.raises(NotImplementedError):
            store.rates("Li I")
        return
    from levels.service import rates as service

    result = store.rates("Li I")
    assert result.saved_as == service.rates_dataset_name("Li I", 7)
    # the same computation through the service, not saved: the API's tables carry its numbers with units
    report = service.compute_rates(store._catalog, "Li I", save=False)
    assert result.lines.colnames == list(service.RATES_COLUMNS) and len(result.lines) == len(report.lines) > 0
    np.testing.assert_allclose(result.lines["a_per_s"].to_value(1 / u.s),
                               [np.nan if r["a_per_s"] is None else r["a_per_s"] for r in report.lines], rtol=1e-12)
    np.testing.assert_allclose(result.levels["lifetime_s"].to_value(u.s),
                               [np.nan if r["lifetime_s"] is None else r["lifetime_s"] for r in report.levels],
                               rtol=1e-12)
    assert result.lines["line_strength_au"].unit == LINE_STRENGTH_AU
    # the header is the CLI's (issue 14 item 4): method and version, the output dataset, the air formula
    head = result.lines.meta["provenance"]
    assert head["method"] == report.method and head["method_version"].startswith("levels ")
    assert head["output_dataset"] == result.saved_as and "none applied" in head["air_formula"]
    # A and S of the strongest line agree through the E1 relation A = 64 pi^4 S / (3 h (4 pi eps0) g_u lambda^3)
    # (Condon & Shortley 1935; constants CODATA via scipy.constants; S converted by the table's own unit)
    import scipy.constants as sc

    levels_table = store.levels("Li I")
    g = dict(zip(levels_table["label"], levels_table["g"]))
    row = result.lines[int(np.nanargmax(result.lines["a_per_s"].value))]
    s_si = row["line_strength_au"].to_value(u.C ** 2 * u.m ** 2)
    lam_m = row["vacuum_nm"].to_value(u.m)
    a_from_s = 64 * np.pi ** 4 * s_si / (3 * sc.h * 4 * np.pi * sc.epsilon_0 * g[row["upper"]] * lam_m ** 3)
    assert row["a_per_s"].to_value(1 / u.s) == pytest.approx(a_from_s, rel=1e-6)


def test_import_levels_stays_light():
    code = ("import sys, levels; heavy = [m for m in ('astropy', 'sqlalchemy', 'numpy', 'levels.api') "
            "if m in sys.modules]; print(heavy); assert not heavy; assert callable(levels.open_store)")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert done.returncode == 0, done.stdout + done.stderr


def test_emission_models_and_spectrum_quantity_through_the_api(tmp_path):
    """The Python API forwards the discharge model and names the sampled quantity as the CLI does."""
    import levels

    store = levels.open_store(f"sqlite:///{tmp_path / 'cr.sqlite'}")
    store.init()
    store.hydrogenic("H I", n_max=6)
    thin = store.emission("H I", te="1.5eV", ne="1e17m-3", window=("400nm", "700nm"), model="cr")
    assert thin.model == "cr"
    assert thin.validity["lte_holds"] in (True, False) and thin.validity["lte_min_ne_m3"] > 0
    departures = [p["departure"] for p in thin.populations if p["departure"] is not None]
    # a low-density discharge: excited levels far below their Boltzmann populations (departure << 1)
    assert departures and min(departures) < 0.1
    assert "emission_coefficient" in thin.spectrum.colnames
    assert thin.spectrum["emission_coefficient"].unit == u.W / u.m ** 3 / u.sr / u.nm
    slab = store.emission("H I", te="1.5eV", ne="1e17m-3", window=("400nm", "700nm"), path_length=1 * u.cm)
    assert slab.model == "lte"
    assert slab.spectrum["spectral_radiance"].unit == u.W / u.m ** 2 / u.sr / u.nm
    # a negative loss rate is refused with a clear error, not a crash
    with pytest.raises(LevelsError):
        store.emission("H I", te="1.5eV", ne="1e17m-3", model="cr", loss_rate="-5Hz")
