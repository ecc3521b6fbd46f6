"""Spectra: grid tied to the narrowest profile (web = CLI), the quantity named, the band-overlap note
(issue 18 item 6)."""

from __future__ import annotations

import csv
import io

import numpy as np
import pytest
from click.testing import CliRunner

from levels.cli import main
from levels.service.emission import MAX_AUTO_POINTS, spectrum_grid_points
from levels.units import temperature_k

from webui import create_app

from tests.webui.conftest import make_config

CONDITIONS = dict(te_k=temperature_k("1eV"), ne_m3=1e19, tgas_k=600.0, from_nm=650.0, to_nm=662.0, medium="air")


@pytest.fixture
def hydrogen(catalog):
    catalog.compute_hydrogenic("H I", n_max=5)
    return catalog


def test_grid_step_is_at_most_a_fifth_of_the_narrowest_line(hydrogen):
    result = hydrogen.emission("H I", **CONDITIONS)
    c = result.conditions
    assert c["grid_step_nm"] <= c["narrowest_fwhm_nm"] / 5 * (1 + 1e-9)
    # a five times finer grid changes the peak by less than 1 % (the sampled peak has converged)
    fine = hydrogen.emission("H I", grid_points=5 * len(result.grid_nm), **CONDITIONS)
    assert float(result.spectrum.max()) == pytest.approx(float(fine.spectrum.max()), rel=0.01)
    # the old coarse web grid (4001 points over 380-780 nm) misses the peak and says so
    coarse = hydrogen.emission("H I", grid_points=4001, **{**CONDITIONS, "from_nm": 380.0, "to_nm": 780.0})
    assert any("under-sampled" in w for w in coarse.warnings)
    assert float(coarse.spectrum.max()) < 0.9 * float(result.spectrum.max())
    points, warning = spectrum_grid_points(100.0, 2000.0, 1e-4)
    assert points == MAX_AUTO_POINTS and "capped" in warning


def test_path_length_gives_radiance_equal_to_emission_coefficient_times_length_when_thin(hydrogen):
    thin = hydrogen.emission("H I", **CONDITIONS)
    assert thin.spectrum_quantity == "emission coefficient" and thin.spectrum_unit == "W m-3 sr-1 nm-1"
    # a slab far thinner than one optical depth: I = epsilon L (formal solution of radiative transfer,
    # Rybicki & Lightman 1979, eq. 1.30; from memory)
    length = 1e-9
    slab = hydrogen.emission("H I", path_length_m=length, **CONDITIONS)
    assert slab.spectrum_quantity == "spectral radiance" and slab.spectrum_unit == "W m-2 sr-1 nm-1"
    assert float(slab.spectrum.max()) == pytest.approx(float(thin.spectrum.max()) * length, rel=0.02)


def test_web_and_cli_spectra_are_equal(hydrogen, store_url, tmp_path):
    out = tmp_path / "spectrum.csv"
    runner = CliRunner()
    result = runner.invoke(main, ["--db", store_url, "emission", "H I", "--te", "1eV", "--ne", "1e19m-3",
                                  "--tgas", "600K", "--from", "650nm", "--to", "662nm", "--medium", "air",
                                  "--spectrum", str(out)])
    assert result.exit_code == 0, result.output
    assert "overlap at 380-400 nm" in result.output
    text = out.read_text(encoding="utf-8")
    rows = list(csv.reader(io.StringIO("\n".join(ln for ln in text.splitlines() if not ln.startswith("#")))))
    assert rows[0] == ["wavelength_nm", "emission_coefficient"]
    cli = np.array([[float(a), float(b)] for a, b in rows[1:]])
    app = create_app(make_config(store_url, tmp_path))
    try:
        body = app.test_client().get("/emission.json", query_string={
            "species": "H I", "te": "1eV", "ne": "1e19m-3", "tgas": "600K", "from": "650nm", "to": "662nm",
            "medium": "air", "fwhm": "0"}).get_json()
    finally:
        app.extensions["levels"]["catalog"].close()
    web = next(t for t in body["figure"]["data"] if t["meta"] == "spectrum")
    assert len(web["x"]) == len(cli)
    assert max(web["y"]) == pytest.approx(cli[:, 1].max(), rel=1e-9)
    assert "emission coefficient" in body["figure"]["layout"]["yaxis"]["title"]["text"]
