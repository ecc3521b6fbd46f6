"""Line lists: multiplets, lower-level and series filters, customary hydrogen names (issue 18 item 5)."""

from __future__ import annotations

import json

import pytest
import scipy.constants as const
from click.testing import CliRunner

from levels.catalog import LineQuery
from levels.cli import main
from levels.notation import hydrogen_line_name, hydrogen_series_of_name
from levels.service.line_selection import add_line_names, filter_lines, merge_multiplets

# reduced-mass factor of hydrogen: CODATA via scipy.constants
MU = 1 / (1 + const.m_e / const.m_p)
R_H_CM1 = const.Rydberg / 100 * MU


@pytest.fixture
def hydrogen(catalog):
    catalog.compute_hydrogenic("H I", n_max=7)
    return catalog


def _rows(catalog, lo, hi, medium="vacuum"):
    rows, _ = catalog.species_lines(LineQuery(spectrum="H I", from_nm=lo, to_nm=hi, medium=medium))
    return rows


def test_names_of_the_series():
    assert [hydrogen_line_name("H I", 1, n) for n in (2, 3, 4, 5, 6, 7)] == ["Lyα", "Lyβ", "Lyγ", "Lyδ", "Lyε", "Ly7"]
    assert [hydrogen_line_name("T I", lo, lo + 1) for lo in range(1, 7)] == ["Lyα", "Hα", "Paα", "Brα", "Pfα", "Huα"]
    assert hydrogen_line_name("He II", 3, 4) is None and hydrogen_line_name("H I", 7, 8) is None
    for lo in range(1, 7):
        for hi in range(lo + 1, lo + 12):
            assert hydrogen_series_of_name(hydrogen_line_name("H I", lo, hi)) == (lo, hi)


def test_named_lines_sit_at_the_rydberg_wavelengths(hydrogen):
    # Rydberg formula with the reduced mass (CODATA via scipy.constants); relativistic and QED shifts of
    # the lower shell are of order alpha^2 R / n_lower^2 (fine-structure order; Bethe & Salpeter 1957,
    # from memory), the bound used for every component
    rows = add_line_names(_rows(hydrogen, 90, 5000))
    for name, lo, hi in (("Hα", 2, 3), ("Hβ", 2, 4), ("Lyα", 1, 2), ("Paα", 3, 4), ("Brα", 4, 5)):
        named = [r for r in rows if r["line_name"] == name]
        assert named, name
        rydberg_nm = 1e7 / (R_H_CM1 * (1 / lo**2 - 1 / hi**2))
        spread = rydberg_nm**2 / 1e7 * const.alpha**2 * R_H_CM1 / lo**2
        for r in named:
            assert abs(r["vacuum_nm"] - rydberg_nm) < spread, (name, r["vacuum_nm"], rydberg_nm)


def test_multiplet_sums_against_sympy(hydrogen):
    from sympy import integrate, oo, symbols
    from sympy.physics.hydrogen import R_nl

    merged = merge_multiplets(_rows(hydrogen, 650, 660), medium="vacuum")
    m = next(r for r in merged if (r["lower"], r["upper"]) == ("2p 2P°", "3d 2D"))
    assert m["members"] == 3 and m["g_lower"] == 6 and m["g_upper"] == 10 and m["weighting"] == "gf"
    # multiplet line strength of a one-electron n l -> n' l' pair: S = 2 max(l, l') R^2 (spin doubles the
    # orbital sum), R the radial dipole integral; sympy.physics.hydrogen, scaled by the reduced mass (a_mu^2)
    r = symbols("r", positive=True)
    radial = float(integrate(R_nl(2, 1, r, 1) * R_nl(3, 2, r, 1) * r**3, (r, 0, oo)))
    s_ref = 2 * 2 * radial**2 / MU**2
    assert m["line_strength_au"] == pytest.approx(s_ref, rel=2e-4)
    # g_L f_M = sum g_l f, and A_M from g_U A_M = sum g_u A: components summed by hand
    comps = [c for c in _rows(hydrogen, 650, 660) if c["lower"].startswith("2p ") and c["upper"].startswith("3d ")]
    assert m["gf"] == pytest.approx(sum(c["g_lower"] * c["f_abs"] for c in comps))
    assert m["a_per_s"] == pytest.approx(sum(c["g_upper"] * c["a_per_s"] for c in comps) / 10)
    # A(3d -> 2p) = 6.4651e7 s-1: Wiese & Fuhr 2009, JPCRD 38, 565 (from memory)
    assert m["a_per_s"] == pytest.approx(6.4651e7, rel=1e-3)
    # the gf-weighted wavelength lies between the components
    assert min(c["vacuum_nm"] for c in comps) <= m["vacuum_nm"] <= max(c["vacuum_nm"] for c in comps)


def test_lower_and_series_filters(hydrogen):
    rows = _rows(hydrogen, 350, 700)
    picked = filter_lines(rows, lower="2p 2P°3/2", series="nd 2D5/2")
    assert [r["upper"] for r in sorted(picked, key=lambda r: -r["vacuum_nm"])] == [
        "3d 2D5/2", "4d 2D5/2", "5d 2D5/2", "6d 2D5/2", "7d 2D5/2"]
    assert {r["lower"] for r in filter_lines(rows, lower="2s*")} == {"2s 2S1/2"}
    assert {(r["lower"][0], r["upper"][0]) for r in filter_lines(rows, name="H-beta")} == {("2", "4")}


def test_cli_lines_options(hydrogen, store_url):
    runner = CliRunner()
    base = ["--db", store_url, "lines", "H I", "--from", "380nm", "--to", "700nm", "--format", "json"]
    out = runner.invoke(main, base + ["--multiplets"])
    assert out.exit_code == 0, out.output
    payload = json.loads(out.output)
    assert payload["columns"][-3:] == ["gf", "members", "weighting"] and "multiplets" in payload["provenance"]
    assert {(r["lower"], r["upper"]) for r in payload["rows"]} >= {("2p 2P°", "3d 2D"), ("2s 2S", "3p 2P°")}
    out = runner.invoke(main, base + ["--lower", "2p 2P°3/2", "--series", "nd 2D5/2"])
    rows = json.loads(out.output)["rows"]
    assert [r["line_name"] for r in sorted(rows, key=lambda r: r["vacuum_nm"])] == ["Hε", "Hδ", "Hγ", "Hβ", "Hα"]
    bad = runner.invoke(main, ["--db", store_url, "lines", "H I", "--name", "Zeta-9"])
    assert bad.exit_code != 0 and "not a hydrogen line name" in bad.output


def test_emission_figure_labels_carry_the_name():
    import numpy as np

    from levels.figures import spectrum_figure

    rows = [dict(spectrum="H I", lower="2p 2P°3/2", upper="3d 2D5/2", vacuum_nm=656.47, air_nm=656.28,
                 rel_intensity=1.0, a_per_s=5.4e7),
            dict(spectrum="He II", lower="3d 2D5/2", upper="4f 2F°7/2", vacuum_nm=468.7, air_nm=468.57,
                 rel_intensity=0.5, a_per_s=1e8)]
    fig = spectrum_figure(np.array([400.0, 700.0]), np.array([0.0, 1.0]), rows, medium="air", title="t")
    labels = [t for t in fig["data"][1]["text"] if t]
    assert any(t.startswith("H I Hα 2p") for t in labels)
    assert any(t.startswith("He II 3d") for t in labels)  # no name given for He II
