"""Windows in any spectral unit: units, CLI, web/API parameters and Python API (issue 18, item 2)."""

import math

import pytest
import scipy.constants as sc
from click.testing import CliRunner

from levels.cli import main
from levels.errors import UnitError
from levels.units import spectral_nm


def test_spectral_units_to_nm():
    # hc/E with CODATA constants from scipy, independent of levels.units
    hc_ev_nm = sc.h * sc.c / sc.e * 1e9
    assert math.isclose(spectral_nm("6.9keV").nm, hc_ev_nm / 6900, rel_tol=1e-12)
    assert math.isclose(spectral_nm("15200cm-1").nm, 1e7 / 15200, rel_tol=1e-12)
    assert math.isclose(spectral_nm("617THz").nm, sc.c / 617e12 * 1e9, rel_tol=1e-12)
    assert math.isclose(spectral_nm("4861Å").nm, 486.1, rel_tol=1e-12)
    assert math.isclose(spectral_nm("0.4861um").nm, 486.1, rel_tol=1e-12)
    assert spectral_nm("486nm").is_length and not spectral_nm("2eV").is_length


@pytest.mark.parametrize("text", ["300K", "-5nm", "0eV", "nm", "12"])
def test_spectral_refusals(text):
    with pytest.raises(UnitError):
        spectral_nm(text)


def _store(tmp_path):
    db = str(tmp_path / "s.sqlite")
    runner = CliRunner()
    assert runner.invoke(main, ["--db", db, "init"]).exit_code == 0
    assert runner.invoke(main, ["--db", db, "hydrogenic", "H I", "--n-max", "4"]).exit_code == 0
    return runner, db


def test_cli_window_in_energy_and_wavenumber(tmp_path):
    runner, db = _store(tmp_path)
    # H-alpha near 15233 cm-1 (656.47 nm vacuum); Lyman alpha near 10.2 eV
    res = runner.invoke(main, ["--db", db, "lines", "H I", "--from", "15200cm-1", "--to", "15300cm-1",
                               "--format", "csv"])
    assert res.exit_code == 0, res.output
    rows = [r for r in res.output.splitlines() if r.startswith("H I,")]
    assert rows and all("3d" in r or "3p" in r or "3s" in r for r in rows)
    res = runner.invoke(main, ["--db", db, "lines", "H I", "--from", "10.3eV", "--to", "10.1eV", "--format", "csv"])
    assert res.exit_code == 0, res.output
    rows = [r for r in res.output.splitlines() if r.startswith("H I,")]
    assert rows and all(",1s 2S1/2," in r and ",2p 2P°" in r for r in rows)
    res = runner.invoke(main, ["--db", db, "lines", "H I", "--from", "700nm", "--to", "600nm"])
    assert res.exit_code != 0 and "empty window" in res.output
    res = runner.invoke(main, ["--db", db, "lines", "H I", "--from", "300K"])
    assert res.exit_code != 0 and "--from" in res.output


def test_web_filter_takes_spectral_units():
    from webui.params import BadParameter, line_filter

    flt = line_filter({"from": "15300cm-1", "to": "15200cm-1", "medium": "vacuum"}, strict=True)
    assert math.isclose(flt.from_nm, 1e7 / 15300) and math.isclose(flt.to_nm, 1e7 / 15200)
    air = line_filter({"from": "15300cm-1", "medium": "air"}, strict=True)
    assert air.from_nm < flt.from_nm  # air wavelength is shorter than vacuum
    assert math.isclose(line_filter({"from_nm": "2eV", "medium": "vacuum"}).from_nm, sc.h * sc.c / sc.e * 1e9 / 2)
    # the default medium is air (above 200 nm) on the web as everywhere: 2 eV names a shorter air wavelength
    assert line_filter({"from_nm": "2eV"}).from_nm < sc.h * sc.c / sc.e * 1e9 / 2
    with pytest.raises(BadParameter):
        line_filter({"from_nm": "2eV"}, strict=True)  # the API's from_nm stays plain nm
    with pytest.raises(BadParameter):
        line_filter({"from": "400nm", "from_nm": "400"}, strict=True)


def test_python_api_window(tmp_path):
    import astropy.units as u

    import levels

    _, db = _store(tmp_path)
    store = levels.open_store(db)
    by_energy = store.lines("H I", window=("10.3eV", "10.1eV"), medium="vacuum")
    by_nm = store.lines("H I", window=(1e7 / 10.3 / 8065.54429 * 1.0, 1e7 / 10.1 / 8065.54429) * u.nm,
                        medium="vacuum")
    assert len(by_energy) == len(by_nm) > 0
    assert len(store.lines("H I", window=(618 * u.THz, 610 * u.THz), medium="air")) > 0
