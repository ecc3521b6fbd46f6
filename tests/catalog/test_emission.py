"""Discharge emission on the store: Balmer intensities, metrics, cautions, bad input."""

import json
import math

import numpy as np
import pytest
import scipy.constants as sc
from click.testing import CliRunner

from levels.cli import main
from levels.errors import PhysicsInputError, TooLargeError
from levels.service.emission import UV_CAUTION


@pytest.fixture
def hydrogen(catalog):
    catalog.compute_hydrogenic("H I", n_max=10)
    return catalog


def _multiplet(lines, n_upper, n_lower=2):
    return sum(r["rel_intensity"] for r in lines
               if r["upper"].startswith(str(n_upper)) and r["lower"].startswith(str(n_lower)))


def test_balmer_decrement_against_independent_computation(hydrogen):
    te = 12000.0
    result = hydrogen.emission("H I", te_k=te, ne_m3=1e18, from_nm=400, to_nm=700)
    ratio = _multiplet(result.lines, 4) / _multiplet(result.lines, 3)
    # independent: LTE line power ratio = (g4 A42 sigma42 exp(-E4/kT)) / (g3 A32 sigma32 exp(-E3/kT)),
    # multiplet A values of Wiese & Fuhr 2009, JPCRD 38, 565 (from memory): H-alpha 4.4101e7 s-1,
    # H-beta 8.4193e6 s-1; g = 2 n^2; Bohr energies of the reduced-mass atom from CODATA (scipy.constants)
    r_h = sc.Rydberg / 100 / (1 + sc.m_e / sc.m_p)
    e = {n: r_h * (1 - 1 / n**2) for n in (2, 3, 4)}
    kt = sc.k * te / (sc.h * sc.c * 100)
    expected = ((32 * 8.4193e6 * (e[4] - e[2]) * math.exp(-e[4] / kt))
                / (18 * 4.4101e7 * (e[3] - e[2]) * math.exp(-e[3] / kt)))
    assert ratio == pytest.approx(expected, rel=1e-3)


def test_shares_and_metrics_are_consistent(hydrogen):
    result = hydrogen.emission("H I", te_k=11000, ne_m3=1e19, tgas_k=600, from_nm=380, to_nm=700)
    assert sum(r["photon_share"] for r in result.lines) == pytest.approx(1.0, rel=1e-12)
    assert max(r["rel_intensity"] for r in result.lines) == 1.0
    m = result.metrics
    assert set(m) == {"cie_x", "cie_y", "cie_u_prime", "cie_v_prime", "cct_k", "duv", "efficacy_lm_per_w",
                      "share_uv_c", "share_uv_b", "share_uv_a", "share_visible", "share_ir"}
    assert m["cct_k"] is None and m["duv"] is None  # a Balmer spectrum is far from the Planckian locus
    assert 0 < m["cie_y"] < m["cie_x"]  # purple-red: H-alpha dominates
    assert not any(w == UV_CAUTION for w in result.warnings)
    # the sampled spectrum holds the power of the lines (trapezoid integral, grid resolves the lines)
    integral = float(np.trapezoid(result.spectrum, result.grid_nm))
    assert integral == pytest.approx(sum(r["emissivity_w_m3_sr"] for r in result.lines), rel=2e-2)


def test_vacuum_ultraviolet_window_prints_the_caution(hydrogen):
    result = hydrogen.emission("H I", te_k=11000, ne_m3=1e19, from_nm=90, to_nm=300, medium="vacuum")
    assert result.metrics["share_uv_c"] > 0.9
    assert result.warnings[0] == UV_CAUTION


def test_optically_thick_resonance_lines(hydrogen):
    # a weakly ionized fill: 1e22 m-3 of hydrogen (about 40 Pa at room temperature), 1 cm thick
    args = dict(te_k=11000, ne_m3=1e19, from_nm=90, to_nm=700, medium="vacuum", element_density_m3=1e22)
    thin = hydrogen.emission("H I", **args)
    thick = hydrogen.emission("H I", **args, path_length_m=0.01)
    lyman_thin = sum(r["emissivity_w_m3_sr"] for r in thin.lines if r["lower"] == "1s 2S1/2")
    lyman_thick = sum(r["emissivity_w_m3_sr"] for r in thick.lines if r["lower"] == "1s 2S1/2")
    balmer_thin = sum(r["emissivity_w_m3_sr"] for r in thin.lines if r["lower"].startswith("2"))
    balmer_thick = sum(r["emissivity_w_m3_sr"] for r in thick.lines if r["lower"].startswith("2"))
    assert lyman_thick < 0.5 * lyman_thin
    # every line with an f value gets its escape factor; n = 2 holds ~1e-4 of the 6e19 m-3 atoms left neutral,
    # so the Balmer lines stay nearly thin (H-alpha centre optical depth well below 1): reduced, but little
    assert balmer_thick < balmer_thin
    assert balmer_thick == pytest.approx(balmer_thin, rel=0.02)
    assert any("optically thick" in w for w in thick.warnings)


@pytest.mark.parametrize("kwargs, error, message", [
    ({"te_k": -5.0}, PhysicsInputError, "te must be positive"),
    ({"te_k": 0.0}, PhysicsInputError, "te must be positive"),
    ({"ne_m3": 1e40}, PhysicsInputError, "outside the accepted"),
    ({"ne_m3": 0.0}, PhysicsInputError, "ne must be positive"),
    ({"from_nm": 700.0, "to_nm": 600.0}, PhysicsInputError, "empty window"),
    ({"from_nm": 1000.0, "to_nm": 1001.0}, PhysicsInputError, "no line with a known A"),
    ({"grid_points": 10**9}, TooLargeError, "points"),
])
def test_bad_emission_input(hydrogen, kwargs, error, message):
    args = {"te_k": 11000.0, "ne_m3": 1e19, "from_nm": 380.0, "to_nm": 700.0}
    args.update(kwargs)
    with pytest.raises(error, match=message):
        hydrogen.emission("H I", **args)


def test_species_without_rates_says_which_lines_lack_them(catalog):
    from pathlib import Path

    demo = Path(__file__).resolve().parents[2] / "seed_data" / "demo" / "sample-li-cell.csv"
    catalog.import_file(demo)
    with pytest.raises(PhysicsInputError, match=r"no line of Li I has a known Einstein A.*572 lines lack A values"):
        catalog.emission("Li I", te_k=5000, ne_m3=1e18)


def test_cli_emission_outputs(hydrogen, store_url, tmp_path):
    runner = CliRunner()
    plot, spectrum, out = tmp_path / "s.html", tmp_path / "s.csv", tmp_path / "lines.csv"
    result = runner.invoke(main, ["--db", store_url, "emission", "H I", "--te", "1eV", "--ne", "1e13cm-3",
                                  "--tgas", "600K", "--from", "380nm", "--to", "700nm", "--instrument-fwhm", "0.05nm",
                                  "--plot", str(plot), "--spectrum", str(spectrum), "--output", str(out)])
    assert result.exit_code == 0, result.output
    assert "luminous efficacy" in result.output and "CIE 1931" in result.output
    html = plot.read_text(encoding="utf-8")
    # self-contained: the plotly bundle is inlined, no script is loaded from the network
    assert "<title>H I at Te" in html and 'src="http' not in html and len(html) > 1_000_000
    header = out.read_text(encoding="utf-8").splitlines()
    columns = [ln for ln in header if not ln.startswith("#")][0].split(",")
    assert columns[-2:] == ["rel_intensity", "photon_share"]
    assert any(ln.startswith("# air_formula") or ln.startswith("# model") for ln in header)
    js = runner.invoke(main, ["--db", store_url, "emission", "H I", "--te", "11000K", "--ne", "1e19m-3",
                              "--from", "90nm", "--to", "130nm", "--medium", "vacuum", "--format", "json"])
    payload = json.loads(js.output[:js.output.rindex("}") + 1])
    assert set(payload) >= {"conditions", "lines", "metrics", "warnings"}
    assert set(payload["conditions"]) >= {"te_k", "ne_m3", "tgas_k", "cutoff"}
    assert payload["warnings"][0].startswith("CAUTION")
    assert "CAUTION" in js.output.split("\n", 1)[0] or "CAUTION" in js.output
