"""The collisional-radiative emission model on the store: limits, reports, validity, bad input."""

import json
import math
from pathlib import Path

import pytest
import scipy.constants as sc
from click.testing import CliRunner

from levels.cli import main
from levels.errors import PhysicsInputError

C2 = sc.h * sc.c * 100 / sc.k
DEMO = Path(__file__).resolve().parents[2] / "seed_data" / "demo"


@pytest.fixture
def hydrogen(catalog):
    catalog.compute_hydrogenic("H I", n_max=8)
    return catalog


def _shell(result, n):
    return sum(p["population_rel"] for p in result.populations if p["label"].startswith(str(n)))


def test_cr_at_high_density_reproduces_boltzmann(hydrogen):
    te = 11604.5
    result = hydrogen.emission("H I", te_k=te, ne_m3=1e26, from_nm=380, to_nm=700, model="cr", cutoff_method="none")
    # Boltzmann per ground atom (g_1 = 2): n^2 exp(-E_n/kT), Bohr levels of the reduced-mass atom (scipy.constants)
    r_h = sc.Rydberg / 100 / (1 + sc.m_e / sc.m_p)
    for n in (2, 3, 4, 5):
        assert _shell(result, n) == pytest.approx(n**2 * math.exp(-C2 * r_h * (1 - 1 / n**2) / te), rel=0.05), n
    assert result.validity["lte_holds"] is True
    assert all(abs(p["departure"] - 1) < 0.05 for p in result.populations if p["label"][0] in "2345")


def test_cr_at_low_density_is_coronal(hydrogen):
    args = dict(te_k=11604.5, from_nm=380, to_nm=700, model="cr")
    once = _shell(hydrogen.emission("H I", ne_m3=1e12, **args), 3)
    twice = _shell(hydrogen.emission("H I", ne_m3=2e12, **args), 3)
    assert twice / once == pytest.approx(2.0, rel=0.02)


def test_report_carries_model_populations_and_validity_for_either_model(hydrogen):
    for model in ("lte", "cr"):
        report = hydrogen.emission("H I", te_k=11604.5, ne_m3=1e18, from_nm=380, to_nm=700, model=model).report()
        assert report["model"] == model
        assert set(report["validity"]) >= {"lte_min_ne_m3", "lte_holds"}
        # McWhirter 1965 for the 1s - 2 gap of H (10.2 eV) at 11604.5 K: 1.6e12 T^1/2 dE^3 cm-3
        gap_ev = report["validity"]["largest_gap_cm1"] * sc.h * sc.c * 100 / sc.e
        assert report["validity"]["lte_min_ne_m3"] == pytest.approx(1.6e18 * 11604.5**0.5 * gap_ev**3, rel=1e-9)
        assert report["validity"]["lte_holds"] is False
        first = report["populations"][0]
        assert set(first) == {"label", "energy_cm1", "population_rel", "departure"}
        assert first["population_rel"] == 1.0
        if model == "lte":
            assert all(p["departure"] == 1.0 for p in report["populations"] if p["departure"] is not None)
            assert any("LTE does not hold" in w and "not valid" in w for w in report["warnings"])
        else:
            assert any(p["departure"] < 0.01 for p in report["populations"][1:])
            assert not any("LTE does not hold" in w for w in report["warnings"])


def test_lamp_metrics_follow_the_model_asked_for(hydrogen):
    args = dict(te_k=11604.5, ne_m3=1e17, from_nm=380, to_nm=700)
    lte = hydrogen.emission("H I", **args)
    cr = hydrogen.emission("H I", model="cr", **args)
    assert lte.conditions["model"].startswith("LTE") and cr.conditions["model"].startswith("collisional-radiative")
    def balmer(r, n):
        return sum(x["rel_intensity"] for x in r.lines if x["upper"][0] == str(n) and x["lower"][0] == "2")

    # far below the LTE density the two models give different Balmer decrements (here by more than 10 %)
    assert abs(balmer(cr, 4) / balmer(cr, 3) / (balmer(lte, 4) / balmer(lte, 3)) - 1) > 0.1
    assert cr.metrics["cie_x"] != lte.metrics["cie_x"]


def test_trapping_and_self_absorption_with_a_depth(hydrogen):
    args = dict(te_k=11604.5, ne_m3=1e19, from_nm=100, to_nm=700, medium="vacuum", element_density_m3=1e21,
                model="cr")
    thin = hydrogen.emission("H I", **args)
    thick = hydrogen.emission("H I", path_length_m=0.01, geometry="cylinder", **args)
    def power(r, lower, upper=None):
        return sum(x["emissivity_w_m3_sr"] for x in r.lines
                   if x["lower"][0] == lower and (upper is None or x["upper"][0] == upper))

    # trapped Lyman-alpha photons (escape factors ~0.01-0.02) keep n = 2 populated: it grows many-fold; trapped
    # Lyman-beta photons are re-absorbed until 3p decays to 2s, so H-alpha grows and the escaping Lyman power
    # does not (the energy leaves as Balmer photons instead)
    assert _shell(thick, 2) > 10 * _shell(thin, 2)
    assert power(thick, "2", "3") > 2 * power(thin, "2", "3")
    assert power(thick, "1") <= power(thin, "1")
    assert "trapping iterations" in thick.conditions["model"] and "self-absorbed" in thick.conditions["model"]


def test_pressure_broadening_widens_balmer_lines(hydrogen):
    args = dict(te_k=11604.5, ne_m3=1e22, from_nm=380, to_nm=700)
    wide = hydrogen.emission("H I", broadening="pressure", perturber="Ar", pressure_pa=1e5, **args)
    hb = [r for r in wide.lines if r["upper"].startswith("4") and r["lower"].startswith("2")]
    # Gigosos et al. 2003 fit for H-beta at 1e22 m-3 (4.8 nm at 1e23, exponent 1/1.46808), plus van der Waals
    assert min(r["pressure_fwhm_nm"] for r in hb) >= 4.8 * 0.1 ** (1 / 1.46808)
    assert "Gigosos" in wide.conditions["model"] and "Unsöld" in wide.conditions["model"]


@pytest.mark.parametrize("kwargs, message", [
    ({"model": "cr", "te_k": 0.0}, "te must be positive"),
    ({"model": "cr", "te_k": -3.0}, "te must be positive"),
    ({"model": "cr", "ne_m3": 0.0}, "ne must be positive"),
    ({"model": "cr", "ne_m3": -1e18}, "ne must be positive"),
    ({"model": "cr", "path_length_m": 0.0}, "length must be a positive length"),
    ({"model": "cr", "path_length_m": -1.0}, "length must be a positive length"),
    ({"model": "cr", "path_length_m": 5e4}, "absurd"),
    ({"model": "cr", "loss_rate_per_s": -1.0}, "loss rate"),
    ({"model": "cr", "loss_rate_per_s": float("inf")}, "loss rate"),
    ({"model": "xx"}, "model must be"),
    ({"perturber": "Ar"}, "needs both"),
    ({"perturber": "Unobtainium", "pressure_pa": 1e5}, "unknown perturber"),
    ({"perturber": "Ar", "pressure_pa": -1.0}, "pressure"),
    ({"cool_layer_m": 0.001}, "needs the plasma depth"),
    ({"model": "cr", "ne_m3": 1e31}, "no bound level survives"),
    ({"model": "lte", "ne_m3": 1e31}, "no bound level survives"),
    ({"model": "cr", "te_k": 100.0}, "no upper level of a line of H I is populated"),
])
def test_bad_input_is_refused_with_a_clear_message(hydrogen, kwargs, message):
    args = {"te_k": 11604.5, "ne_m3": 1e19, "from_nm": 380.0, "to_nm": 700.0}
    args.update(kwargs)
    with pytest.raises(PhysicsInputError, match=message):
        hydrogen.emission("H I", **args)


def test_species_without_rates_names_what_is_missing(catalog):
    catalog.import_file(DEMO / "sample-li-cell.csv")
    with pytest.raises(PhysicsInputError, match="ionization energy"):
        catalog.emission("Li I", te_k=5000, ne_m3=1e18, model="cr")
    catalog.fit_limit("Li I", ["ns 2S1/2", "nd 2D5/2"], n_min=4)
    with pytest.raises(PhysicsInputError, match=r"needs oscillator strengths.*for example .* – .*levels rates Li I"):
        catalog.emission("Li I", te_k=5000, ne_m3=1e18, model="cr")


def test_cli_model_cr_json_and_table(hydrogen, store_url):
    runner = CliRunner()
    js = runner.invoke(main, ["--db", store_url, "emission", "H I", "--te", "1eV", "--ne", "1e17m-3", "--model", "cr",
                              "--length", "0.01m", "--loss-rate", "1e4s-1", "--from", "380nm", "--to", "700nm",
                              "--format", "json"])
    assert js.exit_code == 0, js.output
    payload = json.loads(js.output[:js.output.rindex("}") + 1])
    assert payload["model"] == "cr"
    assert set(payload["validity"]) >= {"lte_min_ne_m3", "lte_holds"}
    assert {"label", "energy_cm1", "population_rel", "departure"} <= set(payload["populations"][0])
    assert payload["conditions"]["loss_rate_per_s"] == 1e4 and payload["conditions"]["path_length_m"] == 0.01
    table = runner.invoke(main, ["--db", store_url, "emission", "H I", "--te", "1eV", "--ne", "1e17m-3",
                                 "--from", "380nm", "--to", "700nm"])
    assert table.exit_code == 0
    assert "validity: LTE criterion (McWhirter 1965)" in table.output and "does NOT hold" in table.output
    assert "colour (lte populations)" in table.output


@pytest.mark.parametrize("extra", [["--te", "-1eV"], ["--ne", "0m-3"], ["--length", "-2m"], ["--loss-rate", "fast"],
                                   ["--length", "1e9m"], ["--pressure", "1bar"]])
def test_cli_bad_input_never_crashes(hydrogen, store_url, extra):
    args = ["--db", store_url, "emission", "H I", "--te", "1eV", "--ne", "1e17m-3", "--model", "cr"]
    result = CliRunner().invoke(main, args + extra)
    assert result.exit_code != 0
    assert "Traceback" not in result.output and "error" in result.output.lower()


def test_a_cool_layer_reverses_lyman_alpha(hydrogen):
    # hot, dense and optically thick Lyman alpha seen through 1 mm of ground-state atoms at the gas temperature:
    # the narrow absorption of the cool layer cuts the centre of the broad emission line (self-reversal)
    args = dict(te_k=11604.5, ne_m3=1e20, tgas_k=2000.0, from_nm=121.4, to_nm=121.75, medium="vacuum",
                element_density_m3=1e21, path_length_m=0.01, model="cr", broadening="pressure", grid_points=20001)
    plain = hydrogen.emission("H I", **args)
    reversed_ = hydrogen.emission("H I", cool_layer_m=0.001, **args)
    grid = reversed_.grid_nm
    centre = int(abs(grid - 121.5668).argmin())
    assert plain.spectrum[centre] > 0.9 * plain.spectrum.max()          # a flat-topped thick line
    assert reversed_.spectrum[centre] < 0.01 * reversed_.spectrum.max()  # a deep central dip
    assert reversed_.spectrum.max() > 0.5 * plain.spectrum.max()         # the wings still shine
    assert "outer layer" in reversed_.conditions["model"]
