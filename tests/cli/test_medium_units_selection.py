"""One default medium everywhere, the position column in any spectral unit, identify tolerances in any
spectral unit, and the line selections on the web pages (issue 18 items 2, 4, 5)."""

from __future__ import annotations

import csv
import inspect
import io
import re

import astropy.units as u
import numpy as np
import pytest
from click.testing import CliRunner

import levels
from levels.cli import main
from levels.service.lab import peak_tolerance_nm
from levels.service.vocabulary import DEFAULT_MEDIUM, add_spectral_column, medium_statement

from webui import create_app

from tests.webui.conftest import make_config


@pytest.fixture
def hydrogen(catalog, store_url):
    catalog.compute_hydrogenic("H I", n_max=5)
    return store_url


def _csv_rows(text: str) -> list[dict]:
    return list(csv.DictReader(io.StringIO("\n".join(l for l in text.splitlines() if not l.startswith("#")))))


# ----------------------------------------------------------------- one default medium

def test_every_front_end_declares_the_same_default_medium():
    from levels.api import Store

    from webui.openapi import openapi_document
    from webui.params import LineFilter, line_filter

    cli_default = {p.name: p.default for p in main.commands["lines"].params}["medium"]
    emission_default = {p.name: p.default for p in main.commands["emission"].params}["medium"]
    api_default = inspect.signature(Store.lines).parameters["medium"].default
    api_emission = inspect.signature(Store.emission).parameters["medium"].default
    web_default = line_filter({}).medium
    listed = next(p for p in openapi_document()["paths"]["/species/{spectrum}/lines"]["get"]["parameters"]
                  if p["name"] == "medium")
    assert {cli_default, emission_default, api_default, api_emission, web_default, LineFilter().medium,
            listed["schema"]["default"]} == {DEFAULT_MEDIUM}
    assert DEFAULT_MEDIUM == "air"  # the trade's rule: air at and above 200 nm, vacuum below


def test_defaults_give_the_same_rows_cli_python_api_and_web_api(hydrogen, tmp_path):
    runner = CliRunner()
    args = ["--db", hydrogen, "lines", "H I", "--from", "400nm", "--to", "660nm", "--format", "csv"]
    default = _csv_rows(runner.invoke(main, args).output)
    air = _csv_rows(runner.invoke(main, args + ["--medium", "air"]).output)
    vacuum = _csv_rows(runner.invoke(main, args + ["--medium", "vacuum"]).output)
    assert default == air and default != vacuum
    # an air window 400-660 nm takes the Balmer components of H-alpha (656.28 nm in air, 656.46 in vacuum)
    assert any(r["line_name"] == "Hα" for r in default)

    table = levels.open_store(hydrogen).lines("H I", window=("400nm", "660nm"))
    assert sorted(table["vacuum_nm"].to_value(u.nm)) == pytest.approx(sorted(float(r["vacuum_nm"]) for r in default))
    assert table.meta["provenance"]["medium"] == medium_statement("air")

    app = create_app(make_config(hydrogen, tmp_path))
    try:
        web = app.test_client()
        got = web.get("/api/v1/species/H_I/lines?from_nm=400&to_nm=660&limit=1000").get_json()
        assert sorted(r["vacuum_nm"] for r in got["lines"]) == pytest.approx(sorted(float(r["vacuum_nm"])
                                                                                    for r in default))
        assert got["provenance"]["wavelengths"].startswith("wavelengths in air at and above 200 nm")
        page = web.get("/lines", query_string={"from_nm": 400, "to_nm": 660}).get_data(as_text=True)
        assert re.search(r'name="medium" value="air" checked', page)
        assert "in air at and above 200 nm" in page
    finally:
        app.extensions["levels"]["catalog"].close()


def test_cli_states_the_medium_and_formula_in_table_and_files(hydrogen):
    runner = CliRunner()
    table = runner.invoke(main, ["--db", hydrogen, "lines", "H I", "--air-formula", "edlen1966"]).output
    assert "Wavelengths in air at and above 200 nm (Edlen 1966), in vacuum below" in table
    vac = runner.invoke(main, ["--db", hydrogen, "lines", "H I", "--medium", "vacuum"]).output
    assert "Wavelengths in vacuum" in vac
    text = runner.invoke(main, ["--db", hydrogen, "lines", "H I", "--format", "csv"]).output
    assert "# medium: wavelengths in air at and above 200 nm (Morton 2000), in vacuum below" in text
    assert "# air_formula: " in text


# ----------------------------------------------------------------- the position column in any unit

UNITS = [("Å", "wavelength_angstrom", u.AA), ("µm", "wavelength_um", u.um), ("cm-1", "wavenumber_cm1", u.cm**-1),
         ("eV", "photon_energy_ev", u.eV), ("keV", "photon_energy_kev", u.keV), ("Hz", "frequency_hz", u.Hz),
         ("nm", "wavelength_nm", u.nm)]


@pytest.mark.parametrize(("unit", "column", "astro"), UNITS)
def test_cli_unit_column_agrees_with_astropy_spectral_equivalencies(hydrogen, unit, column, astro):
    runner = CliRunner()
    out = runner.invoke(main, ["--db", hydrogen, "lines", "H I", "--medium", "vacuum", "--unit", unit,
                               "--format", "csv"])
    assert out.exit_code == 0, out.output
    rows = _csv_rows(out.output)
    assert column in rows[0]
    vac = np.array([float(r["vacuum_nm"]) for r in rows]) * u.nm
    ours = np.array([float(r[column]) for r in rows])
    # astropy's spectral equivalencies (vacuum): the reference conversion
    assert ours == pytest.approx(vac.to_value(astro, equivalencies=u.spectral()), rel=1e-9)
    shown = runner.invoke(main, ["--db", hydrogen, "lines", "H I", "--unit", unit]).output
    heading = shown.splitlines()[0]
    assert {"Å": "[Å]", "µm": "[µm]", "cm-1": "[cm⁻¹]", "eV": "photon energy [eV]", "keV": "photon energy [keV]",
            "Hz": "ν [Hz]", "nm": "[nm]"}[unit] in heading


def test_air_lengths_follow_the_medium_rule(hydrogen):
    rows = [{"vacuum_nm": 121.567, "air_nm": None, "wavenumber_cm1": 1e7 / 121.567},
            {"vacuum_nm": 656.4696, "air_nm": 656.2796, "wavenumber_cm1": 1e7 / 656.4696}]
    add_spectral_column(rows, "A", "air")
    assert rows[0]["wavelength_angstrom"] == pytest.approx(1215.67)   # below 200 nm: vacuum
    assert rows[1]["wavelength_angstrom"] == pytest.approx(6562.796)  # above: air
    with pytest.raises(levels.errors.PhysicsInputError, match="unit must be one of"):
        add_spectral_column(rows, "furlong", "air")
    bad = CliRunner().invoke(main, ["--db", hydrogen, "lines", "H I", "--unit", "furlong"])
    assert bad.exit_code != 0 and "--unit" in bad.output


def test_python_api_and_web_api_unit_column(hydrogen, tmp_path):
    table = levels.open_store(hydrogen).lines("H I", window=("0.1um", "0.2um"), medium="vacuum", unit="keV")
    assert table["photon_energy_kev"].unit == u.keV
    assert table["photon_energy_kev"].to_value(u.eV) == pytest.approx(
        table["vacuum_nm"].to_value(u.eV, equivalencies=u.spectral()), rel=1e-9)
    app = create_app(make_config(hydrogen, tmp_path))
    try:
        web = app.test_client()
        got = web.get("/api/v1/species/H_I/lines?from=0.1um&to=0.2um&medium=vacuum&unit=keV").get_json()
        assert "photon_energy_kev" in got["columns"]
        for r in got["lines"]:
            assert r["photon_energy_kev"] == pytest.approx((r["vacuum_nm"] * u.nm).to_value(
                u.keV, equivalencies=u.spectral()), rel=1e-9)
        assert web.get("/api/v1/species/H_I/lines?unit=furlong").status_code == 400
    finally:
        app.extensions["levels"]["catalog"].close()


# ----------------------------------------------------------------- identify tolerance in any unit

@pytest.mark.parametrize("peak_nm", [121.567, 486.1, 656.3, 1875.0])
def test_peak_tolerance_matches_astropy(peak_nm):
    # a wavenumber tolerance d sigma at the peak: the wavelengths of sigma +- d sigma, by astropy
    d_sigma = 0.5
    sigma = (peak_nm * u.nm).to_value(u.cm**-1, equivalencies=u.spectral())
    lo = ((sigma + d_sigma) * u.cm**-1).to_value(u.nm, equivalencies=u.spectral())
    hi = ((sigma - d_sigma) * u.cm**-1).to_value(u.nm, equivalencies=u.spectral())
    assert peak_tolerance_nm(peak_nm, d_sigma) == pytest.approx((hi - lo) / 2, rel=1e-6)


def test_identify_tolerance_in_cm1_ev_and_ghz(hydrogen, tmp_path):
    peaks = tmp_path / "peaks.csv"
    # 656.2952 nm air: 0.010 nm to the red of the 3d5/2 -> 2p3/2 component (656.2852 nm, computed)
    peaks.write_text("peak_nm,medium\n656.2952,air\n", encoding="utf-8")
    runner = CliRunner()

    def matched(tolerance: str) -> bool:
        out = runner.invoke(main, ["--db", hydrogen, "identify", "H I", str(peaks), "--tolerance", tolerance,
                                   "--format", "csv"])
        assert out.exit_code == 0, out.output
        return any(r["upper"] == "3d 2D5/2" and r["lower"] == "2p 2P°3/2" for r in _csv_rows(out.output))

    # 0.010 nm at 656.3 nm is 0.232 cm-1 (d sigma = d lambda / lambda^2): 0.3 cm-1 reaches it, 0.2 does not
    assert matched("0.3cm-1") and not matched("0.2cm-1")
    # the same widths as photon energies and frequencies (astropy: 1 cm-1 = 1.2398e-4 eV = 29.979 GHz)
    ev_per_cm1 = (1 * u.cm**-1).to_value(u.eV, equivalencies=u.spectral())
    ghz_per_cm1 = (1 * u.cm**-1).to_value(u.GHz, equivalencies=u.spectral())
    assert matched(f"{0.3 * ev_per_cm1:.6e}eV") and not matched(f"{0.2 * ev_per_cm1:.6e}eV")
    assert matched(f"{0.3 * ghz_per_cm1:.4f}GHz") and not matched(f"{0.2 * ghz_per_cm1:.4f}GHz")
    assert matched("0.011nm") and not matched("0.009nm")


# ----------------------------------------------------------------- web forms: lower level, series, name

def test_web_line_pages_take_lower_series_and_name(hydrogen, tmp_path):
    app = create_app(make_config(hydrogen, tmp_path))
    try:
        web = app.test_client()
        page = web.get("/species/H_I", query_string={"lower": "2p 2P°3/2", "series": "nd 2D5/2"})
        text = page.get_data(as_text=True)
        assert page.status_code == 200
        for name in ("lower", "series", "line_name"):
            assert f'name="{name}"' in text
        assert 'value="2p 2P°3/2"' in text
        shown = set(re.findall(r'<td class="label">(\d[a-z] 2D5/2)</td>', text))
        assert shown == {"3d 2D5/2", "4d 2D5/2", "5d 2D5/2"}
        # the download link carries the selection, and the file holds the same lines
        link = re.search(r'href="([^"]*lines\.csv[^"]*)"', text).group(1).replace("&amp;", "&")
        body = web.get(link).get_data(as_text=True)
        assert {r["upper"] for r in _csv_rows(body)} == shown and "# selection: lower 2p 2P°3/2" in body
        finder = web.get("/lines", query_string={"species": "H I", "from_nm": 300, "to_nm": 700,
                                                 "line_name": "H-beta"}).get_data(as_text=True)
        assert "<td>Hβ</td>" in finder and "<td>Hα</td>" not in finder
        bad = web.get("/lines", query_string={"from_nm": 300, "to_nm": 700, "line_name": "Zeta-9"})
        assert bad.status_code == 400 and "hydrogen line name" in bad.get_data(as_text=True)
    finally:
        app.extensions["levels"]["catalog"].close()
