"""One valence electron outside closed shells: checks against published values.

Level energies are typed in from memory of the published spectroscopic
analyses of each spectrum (rounded to 0.01 cm-1 or better; "from memory"), so
the method is fed with measured energies as the issue asks. Lifetimes are
published measurements; each carries its citation ("from memory" where the
figure or the citation is recalled rather than read).

Tolerances are the issue's: single-electron method with core polarisation 3 %
for the alkali resonance levels, plain Coulomb approximation 10 %; Mg II 3p and
Ca II 4p 10 %; Ca II 3d (E2) 25 %; Na D2/D1 line-strength ratio 2 within 1 %.
Values the method misses are marked xfail(strict=True) with the figure.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from levels.errors import PhysicsInputError, QuantumNumberError
from levels.physics.lines.series import rydberg_constant_cm1
from levels.physics.many_electron import coulomb_approximation, model_potential, numerov
from levels.physics.many_electron.core_polarisation import core_polarisability, dipole_operator
from levels.physics.many_electron.single_valence import (
    BASE_REL_UNC,
    E2_COEFFICIENT,
    G_SPIN,
    M1_COEFFICIENT,
    compute_single_valence,
    e2_angular_factor,
    m1_angular_factor,
    wigner_3j,
    wigner_6j,
)
from levels.physics.one_electron import radial, rates

M_E_U = 5.48579909065e-4  # electron mass in u (CODATA 2018)

# (n, l, 2J, energy cm-1, key); ionization energy; atomic mass (u) of the isotope.
# Energies: from memory of the published analyses (rounded).
SPECIES = {
    "Li I": dict(z=3, charge=0, mass=7.016003, limit=43487.15, levels=[
        (2, 0, 1, 0.0, "2s"), (3, 0, 1, 27206.09, "3s"), (4, 0, 1, 35012.03, "4s"), (5, 0, 1, 38299.50, "5s"),
        (2, 1, 1, 14903.66, "2p1/2"), (2, 1, 3, 14904.00, "2p3/2"), (3, 1, 1, 30925.38, "3p1/2"),
        (3, 1, 3, 30925.38, "3p3/2"), (4, 1, 1, 36469.55, "4p1/2"), (4, 1, 3, 36469.55, "4p3/2"),
        (3, 2, 3, 31283.08, "3d3/2"), (3, 2, 5, 31283.08, "3d5/2"), (4, 2, 3, 36623.38, "4d3/2"),
        (4, 2, 5, 36623.38, "4d5/2")]),
    "Na I": dict(z=11, charge=0, mass=22.989769, limit=41449.45, levels=[
        (3, 0, 1, 0.0, "3s"), (4, 0, 1, 25739.99, "4s"), (5, 0, 1, 33200.67, "5s"), (6, 0, 1, 36372.62, "6s"),
        (3, 1, 1, 16956.17, "3p1/2"), (3, 1, 3, 16973.37, "3p3/2"), (4, 1, 1, 30266.99, "4p1/2"),
        (4, 1, 3, 30272.58, "4p3/2"), (5, 1, 1, 35040.38, "5p1/2"), (5, 1, 3, 35042.85, "5p3/2"),
        (3, 2, 5, 29172.84, "3d5/2"), (3, 2, 3, 29172.89, "3d3/2"), (4, 2, 5, 34548.73, "4d5/2"),
        (4, 2, 3, 34548.75, "4d3/2")]),
    "K I": dict(z=19, charge=0, mass=38.963706, limit=35009.814, levels=[
        (4, 0, 1, 0.0, "4s"), (5, 0, 1, 21026.551, "5s"), (6, 0, 1, 27450.710, "6s"), (7, 0, 1, 30274.29, "7s"),
        (4, 1, 1, 12985.186, "4p1/2"), (4, 1, 3, 13042.896, "4p3/2"), (5, 1, 1, 24701.382, "5p1/2"),
        (5, 1, 3, 24720.139, "5p3/2"), (6, 1, 1, 28999.27, "6p1/2"), (6, 1, 3, 29007.71, "6p3/2"),
        (3, 2, 5, 21534.680, "3d5/2"), (3, 2, 3, 21536.988, "3d3/2"), (4, 2, 5, 27397.077, "4d5/2"),
        (4, 2, 3, 27398.147, "4d3/2")]),
    "Rb I": dict(z=37, charge=0, mass=84.911790, limit=33690.81, levels=[
        (5, 0, 1, 0.0, "5s"), (6, 0, 1, 20132.51, "6s"), (7, 0, 1, 26311.44, "7s"), (8, 0, 1, 29046.82, "8s"),
        (5, 1, 1, 12578.950, "5p1/2"), (5, 1, 3, 12816.545, "5p3/2"), (6, 1, 1, 23715.081, "6p1/2"),
        (6, 1, 3, 23792.591, "6p3/2"), (7, 1, 1, 27835.02, "7p1/2"), (7, 1, 3, 27870.11, "7p3/2"),
        (4, 2, 5, 19355.203, "4d5/2"), (4, 2, 3, 19355.649, "4d3/2"), (5, 2, 3, 25703.498, "5d3/2"),
        (5, 2, 5, 25700.536, "5d5/2")]),
    "Cs I": dict(z=55, charge=0, mass=132.905452, limit=31406.4677, levels=[
        (6, 0, 1, 0.0, "6s"), (7, 0, 1, 18535.529, "7s"), (8, 0, 1, 24317.149, "8s"), (9, 0, 1, 26910.66, "9s"),
        (6, 1, 1, 11178.268, "6p1/2"), (6, 1, 3, 11732.307, "6p3/2"), (7, 1, 1, 21765.348, "7p1/2"),
        (7, 1, 3, 21946.397, "7p3/2"), (8, 1, 1, 25708.85, "8p1/2"), (8, 1, 3, 25791.51, "8p3/2"),
        (5, 2, 3, 14499.259, "5d3/2"), (5, 2, 5, 14596.842, "5d5/2"), (6, 2, 3, 22588.82, "6d3/2"),
        (6, 2, 5, 22631.69, "6d5/2")]),
    "Mg II": dict(z=12, charge=1, mass=23.985042, limit=121267.61, levels=[
        (3, 0, 1, 0.0, "3s"), (4, 0, 1, 69804.95, "4s"), (5, 0, 1, 92790.51, "5s"),
        (3, 1, 1, 35669.31, "3p1/2"), (3, 1, 3, 35760.88, "3p3/2"), (4, 1, 1, 80619.50, "4p1/2"),
        (4, 1, 3, 80650.02, "4p3/2"), (3, 2, 5, 71490.19, "3d5/2"), (3, 2, 3, 71491.06, "3d3/2"),
        (4, 2, 5, 93310.59, "4d5/2"), (4, 2, 3, 93311.11, "4d3/2")]),
    "Ca II": dict(z=20, charge=1, mass=39.962591, limit=95751.87, levels=[
        (4, 0, 1, 0.0, "4s"), (5, 0, 1, 52166.93, "5s"), (6, 0, 1, 70677.62, "6s"),
        (3, 2, 3, 13650.19, "3d3/2"), (3, 2, 5, 13710.88, "3d5/2"), (4, 2, 3, 56839.25, "4d3/2"),
        (4, 2, 5, 56858.46, "4d5/2"), (4, 1, 1, 25191.51, "4p1/2"), (4, 1, 3, 25414.40, "4p3/2"),
        (5, 1, 1, 60533.02, "5p1/2"), (5, 1, 3, 60611.28, "5p3/2")]),
}

# Published lifetimes (s)
LIFETIMES = {
    # McAlexander, Abraham & Hulet 1996, Phys. Rev. A 54, R5 (from memory): 27.102(9) ns, both components
    ("Li I", "2p1/2"): 27.102e-9, ("Li I", "2p3/2"): 27.102e-9,
    # Volz & Schmoranzer 1996, Phys. Scr. T65, 48 (from memory)
    ("Na I", "3p1/2"): 16.299e-9, ("Na I", "3p3/2"): 16.254e-9,
    # Wang, Gould, Stwalley et al. 1997, Phys. Rev. A 55, R1569 (from memory)
    ("K I", "4p1/2"): 26.69e-9, ("K I", "4p3/2"): 26.34e-9,
    # Volz & Schmoranzer 1996, Phys. Scr. T65, 48 (from memory)
    ("Rb I", "5p1/2"): 27.70e-9, ("Rb I", "5p3/2"): 26.24e-9,
    # Rafac, Tanner, Livingston & Berry 1999, Phys. Rev. A 60, 3648 (from memory)
    ("Cs I", "6p1/2"): 34.934e-9, ("Cs I", "6p3/2"): 30.499e-9,
    # Ansbacher, Li & Pinnington 1989, Phys. Lett. A 139, 165 (from memory)
    ("Mg II", "3p1/2"): 3.854e-9, ("Mg II", "3p3/2"): 3.810e-9,
    # Hettrich, Ruster, Kaufmann et al. 2015, Phys. Rev. Lett. 115, 143003 (from memory)
    ("Ca II", "4p1/2"): 7.098e-9, ("Ca II", "4p3/2"): 6.924e-9,
    # Kreuter, Becher, Lancaster et al. 2005, Phys. Rev. A 71, 032504 (from memory)
    ("Ca II", "3d3/2"): 1.176, ("Ca II", "3d5/2"): 1.168,
}

_CACHE: dict = {}


def computed(name: str, method: str):
    """Run the method once per species and method (module cache)."""
    key = (name, method)
    if key not in _CACHE:
        sp = SPECIES[name]
        lv = sp["levels"]
        alpha, _ = core_polarisability(sp["z"], sp["charge"])
        core_mass = sp["mass"] - (sp["z"] - sp["charge"]) * M_E_U
        _CACHE[key] = compute_single_valence(
            [v[0] for v in lv], [v[1] for v in lv], [v[2] for v in lv], [v[3] for v in lv], z=sp["z"],
            charge=sp["charge"], ionization_cm1=sp["limit"], rydberg_cm1=rydberg_constant_cm1(core_mass),
            alpha_c=alpha, method=method)
    return _CACHE[key]


def lifetime(name: str, key: str, method: str) -> float:
    res = computed(name, method)
    index = [v[4] for v in SPECIES[name]["levels"]].index(key)
    return float(res.lifetime_s[index])


def _case(name, key, tol, method, miss=None):
    marks = [pytest.mark.xfail(strict=True, reason=miss)] if miss else []
    return pytest.param(name, key, tol, method, marks=marks, id=f"{name}-{key}-{method}")


# misses of this implementation (figures from the run that set these marks)
RESONANCE_CASES = [
    _case("Li I", "2p1/2", 0.03, "model"), _case("Li I", "2p3/2", 0.03, "model"),
    _case("Na I", "3p1/2", 0.03, "model"), _case("Na I", "3p3/2", 0.03, "model"),
    _case("K I", "4p1/2", 0.03, "model"), _case("K I", "4p3/2", 0.03, "model"),
    # Rb and Cs were +3.9/+4.1 % and +5.4/+5.4 % with the tied shape (a2 = a1, a4 = 0): now
    # 28.14/26.68 ns (+1.6/+1.7 %) and 35.63/31.02 ns (+2.0/+1.7 %) with the published a2, a4
    _case("Rb I", "5p1/2", 0.03, "model"), _case("Rb I", "5p3/2", 0.03, "model"),
    _case("Cs I", "6p1/2", 0.03, "model"), _case("Cs I", "6p3/2", 0.03, "model"),
    _case("Li I", "2p1/2", 0.10, "coulomb"), _case("Li I", "2p3/2", 0.10, "coulomb"),
    _case("Na I", "3p1/2", 0.10, "coulomb"), _case("Na I", "3p3/2", 0.10, "coulomb"),
    _case("K I", "4p1/2", 0.10, "coulomb"), _case("K I", "4p3/2", 0.10, "coulomb"),
    _case("Rb I", "5p1/2", 0.10, "coulomb"), _case("Rb I", "5p3/2", 0.10, "coulomb"),
    # plain Bates-Damgaard (bare r): Cs 33.28/29.20 ns (-4.7/-4.3 %); with the core-polarised operator on
    # Coulomb functions it was +13.2/+12.5 %
    _case("Cs I", "6p1/2", 0.10, "coulomb"), _case("Cs I", "6p3/2", 0.10, "coulomb"),
    _case("Mg II", "3p1/2", 0.10, "model"), _case("Mg II", "3p3/2", 0.10, "model"),
    _case("Ca II", "4p1/2", 0.10, "model"), _case("Ca II", "4p3/2", 0.10, "model"),
    _case("Ca II", "3d3/2", 0.25, "model"), _case("Ca II", "3d5/2", 0.25, "model"),
]


@pytest.mark.parametrize("name,key,tol,method", RESONANCE_CASES)
def test_published_lifetimes(name, key, tol, method):
    value = lifetime(name, key, method)
    reference = LIFETIMES[(name, key)]
    assert abs(value / reference - 1) <= tol, f"{name} {key}: {value:.5g} s vs {reference:.5g} s"


def test_resonance_series_use_the_fitted_potential():
    for name in ("Li I", "Na I", "K I", "Rb I", "Cs I"):
        res = computed(name, "model")
        chosen = {(s.l, s.two_j): s.method for s in res.series}
        assert chosen[(0, 1)] == chosen[(1, 1)] == chosen[(1, 3)] == "model potential", name
        assert all(s.fit.rms_nu < 0.01 for s in res.series if s.l <= 1), name


def test_ca_ii_metastable_levels_decay_by_e2_and_m1():
    res = computed("Ca II", "model")
    keys = [v[4] for v in SPECIES["Ca II"]["levels"]]
    kinds = {(keys[lo], keys[up], m) for lo, up, m in zip(res.lower, res.upper, res.multipole)}
    assert ("4s", "3d5/2", "E2") in kinds and ("4s", "3d3/2", "E2") in kinds
    assert ("3d3/2", "3d5/2", "M1") in kinds
    # no E2 lines from levels that decay by E1
    assert not any(m == "E2" and keys[up].startswith("4p") for _, up, m in zip(res.lower, res.upper, res.multipole))


def test_na_d2_d1_line_strength_ratio():
    # LS coupling with spin-independent radial functions: S(D2)/S(D1) = 2 (Condon & Shortley 1935)
    res = computed("Na I", "model")
    keys = [v[4] for v in SPECIES["Na I"]["levels"]]
    pick = {(keys[lo], keys[up]): s for lo, up, s, m in zip(res.lower, res.upper, res.line_strength, res.multipole)
            if m == "E1"}
    ratio = pick[("3s", "3p3/2")] / pick[("3s", "3p1/2")]
    assert abs(ratio / 2 - 1) < 0.01, ratio


def test_radial_integrals_equal_hydrogenic_when_pure_coulomb():
    # Coulomb approximation at integer effective quantum numbers and the model potential with
    # Z = 1 (no core) against the exact integrals of levels.physics.one_electron.radial
    # (Storey & Hummer 1991; Gordon 1929)
    states = [(n, l) for n in range(1, 8) for l in range(n)]
    nu = np.array([n for n, _ in states], dtype=float)
    ls = np.array([l for _, l in states])
    x = numerov.square_root_grid(float(numerov.outer_radius(nu.max(), 0)), 0.005)
    ca = coulomb_approximation.coulomb_radial_functions(x, nu, ls)
    mp = model_potential.model_radial_functions(x, 1, 1.0, 0.0, np.ones(len(nu)), np.ones(len(nu)),
                                                np.zeros(len(nu)), ls, nu)
    for chi in (ca, mp):
        integrals = numerov.radial_integrals(chi, chi, x, x * x)
        worst = 0.0
        for i, (n, l) in enumerate(states):
            for k, (m, l2) in enumerate(states):
                if abs(l - l2) == 1:
                    exact = radial.radial_dipole(n, l, m, l2)
                    worst = max(worst, abs(abs(integrals[i, k]) - abs(exact)) / abs(exact))
        assert worst < 1e-8, worst


def test_hydrogen_rates_through_the_whole_method():
    # with levels at the exact infinite-mass energies the assembly gives the hydrogenic A and f
    # of levels.physics.one_electron.rates (itself checked against closed forms)
    rinf = 109737.31568160  # CODATA 2018 R_inf, cm-1
    n = [1, 2, 2, 2, 3, 3, 3]
    l = [0, 0, 1, 1, 0, 1, 2]
    two_j = [1, 1, 1, 3, 1, 1, 3]
    e = [rinf * (1 - 1 / k**2) for k in n]
    res = compute_single_valence(n, l, two_j, e, z=1, charge=0, ionization_cm1=rinf, rydberg_cm1=rinf,
                                 method="coulomb", step=0.005)
    for lo, up, a, f, s in zip(res.lower, res.upper, res.a_per_s, res.f_abs, res.line_strength):
        exact = rates.line_strength_fs(n[up], l[up], two_j[up], n[lo], l[lo], two_j[lo])
        assert s == pytest.approx(float(exact), rel=1e-7)
        sigma = e[up] - e[lo]
        assert a == pytest.approx(float(rates.einstein_a(s, sigma, two_j[up] + 1)), rel=1e-12)
        assert f == pytest.approx(float(rates.oscillator_strength(s, sigma, two_j[lo] + 1)), rel=1e-6)


def test_wigner_symbols_against_sympy():
    wigner = pytest.importorskip("sympy.physics.wigner")
    from sympy import Rational

    def sympy_value(func, args):
        try:
            return float(func(*[Rational(int(round(2 * v)), 2) for v in args]))
        except ValueError:  # sympy refuses arguments that break a triangle or parity rule: the symbol is 0
            return 0.0

    values = [0, 0.5, 1, 1.5, 2, 2.5, 3]
    rng = np.random.default_rng(7)
    nonzero = 0
    for _ in range(1500):
        args = [float(v) for v in rng.choice(values, 6)]
        exact = sympy_value(wigner.wigner_6j, args)
        nonzero += exact != 0
        assert wigner_6j(*args) == pytest.approx(exact, abs=1e-12)
    assert nonzero > 30
    # the symbols the method uses: {l j 1/2; j' l' k} and {1/2 j l; j' 1/2 1}
    for l in range(5):
        for l2 in range(5):
            for j in (l - 0.5, l + 0.5):
                for j2 in (l2 - 0.5, l2 + 0.5):
                    if j < 0 or j2 < 0:
                        continue
                    for k in (1, 2):
                        args = (l, j, 0.5, j2, l2, k)
                        assert wigner_6j(*args) == pytest.approx(sympy_value(wigner.wigner_6j, args), abs=1e-12)
                    args = (0.5, j, l, j2, 0.5, 1)
                    assert wigner_6j(*args) == pytest.approx(sympy_value(wigner.wigner_6j, args), abs=1e-12)
    for j1, j2, j3 in [(1, 2, 1), (2, 2, 0), (2, 2, 2), (3, 2, 1), (0.5, 2, 1.5), (2.5, 2, 0.5)]:
        for m1 in np.arange(-j1, j1 + 1):
            for m2 in np.arange(-j2, j2 + 1):
                m3 = -m1 - m2
                exact = sympy_value(wigner.wigner_3j, (j1, j2, j3, m1, m2, m3))
                assert wigner_3j(j1, j2, j3, m1, m2, m3) == pytest.approx(exact, abs=1e-12)


def test_rate_coefficients_against_the_usual_numeric_forms():
    # A(E2) = 1.1199e18 S / (g lambda^5[A]), A(M1) = 2.6973e13 S / (g lambda^3[A]): the numeric forms
    # quoted with the NIST-style conversion tables of Wiese & Fuhr 2009, JPCRD 38, 565 (from memory)
    assert E2_COEFFICIENT == pytest.approx(1.1199e-22, rel=1e-4)
    assert M1_COEFFICIENT == pytest.approx(2.6973e-11, rel=1e-4)


def test_angular_factors_sum_rules():
    # the E2 factors of one (l, l') pair sum to 2 (2l+1)(2l'+1) (l 2 l'; 0 0 0)^2 (spin multiplicity 2)
    total = sum(e2_angular_factor(2, tj, 0, 1) for tj in (3, 5))
    assert total == pytest.approx(2 * 5 * 1 * wigner_3j(2, 2, 0, 0, 0, 0) ** 2, rel=1e-12)
    # M1 within a 2P doublet: S = 4/3 mu_B^2 for g_s = 2 (Condon & Shortley 1935; Cowan 1981 eq. 15.x, from memory)
    assert m1_angular_factor(1, 3, 1) / (G_SPIN - 1) ** 2 == pytest.approx(4 / 3, rel=1e-12)
    # and 2D5/2-2D3/2: 12/5 (same source, from memory)
    assert m1_angular_factor(2, 5, 3) / (G_SPIN - 1) ** 2 == pytest.approx(12 / 5, rel=1e-12)


def test_core_polarisation_shrinks_the_dipole_outside_the_core():
    r = np.array([0.01, 5.0, 50.0])
    d = dipole_operator(r, 15.644, 2.5)
    # near the nucleus the form tends to r (1 - alpha / r_c^3) (Hameed et al. 1968)
    assert d[0] == pytest.approx(0.01 * (1 - 15.644 / 2.5**3), rel=1e-4)
    assert d[2] == pytest.approx(50 * (1 - 15.644 / 50**3), rel=1e-9)


def test_too_few_levels_fall_back_to_coulomb_with_a_reason():
    sp = SPECIES["Na I"]
    lv = [v for v in sp["levels"] if v[4] in ("3s", "4s", "3p1/2", "3p3/2")]
    res = compute_single_valence([v[0] for v in lv], [v[1] for v in lv], [v[2] for v in lv], [v[3] for v in lv],
                                 z=11, charge=0, ionization_cm1=sp["limit"], rydberg_cm1=109734.7, alpha_c=0.9448)
    chosen = {(s.l, s.two_j): s for s in res.series}
    assert chosen[(0, 1)].method == "model potential"
    assert chosen[(1, 1)].method == "coulomb approximation"
    assert "fewer than the 2 parameters" in chosen[(1, 1)].reason
    assert any("fewer than the 2 parameters" in w for w in res.warnings)
    with pytest.raises(PhysicsInputError, match="at least 2 levels"):
        model_potential.fit_series(11, 1.0, 0.9448, 1, [2.1], [3])


def test_levels_above_the_limit_and_outside_the_coulomb_range_are_skipped():
    sp = SPECIES["Ca II"]
    lv = sp["levels"] + [(7, 0, 1, 99000.0, "above")]
    res = compute_single_valence([v[0] for v in lv], [v[1] for v in lv], [v[2] for v in lv], [v[3] for v in lv],
                                 z=20, charge=1, ionization_cm1=sp["limit"], rydberg_cm1=109734.8, alpha_c=3.26,
                                 method="coulomb")
    reasons = {lv[i][4]: why for i, why in res.skipped}
    assert "series limit" in reasons["above"]
    assert "outside its range" in reasons["3d3/2"] and "outside its range" in reasons["3d5/2"]
    assert not any(lv[i][4] in ("above", "3d3/2") for i in np.r_[res.lower, res.upper])


def test_malformed_quantum_numbers_are_refused():
    with pytest.raises(QuantumNumberError, match="2J = 5"):
        compute_single_valence([3, 3], [0, 1], [1, 5], [0.0, 17000.0], z=11, charge=0, ionization_cm1=41449.45,
                               rydberg_cm1=109734.7)
    with pytest.raises(QuantumNumberError, match="need 0 <= l < n"):
        compute_single_valence([3, 3], [0, 3], [1, 5], [0.0, 17000.0], z=11, charge=0, ionization_cm1=41449.45,
                               rydberg_cm1=109734.7)
    with pytest.raises(PhysicsInputError, match="method"):
        compute_single_valence([3], [0], [1], [0.0], z=11, charge=0, ionization_cm1=41449.45, rydberg_cm1=1e5,
                               method="magic")


def test_uncertainties_are_numeric_and_follow_the_rule():
    res = computed("Na I", "model")
    assert np.all(np.isfinite(res.rel_unc)) and np.all(res.rel_unc >= BASE_REL_UNC["model potential"] - 1e-12)
    assert np.all(res.rel_unc <= 3.0)
    keys = [v[4] for v in SPECIES["Na I"]["levels"]]
    i = keys.index("3p3/2")
    # a single decay channel: the lifetime carries the line's uncertainty
    assert res.lifetime_rel_unc[i] == pytest.approx(res.rel_unc[(res.upper == i)][0], rel=1e-12)
    # Coulomb-approximation lines are less certain than the fitted-potential ones
    ca = computed("Na I", "coulomb")
    assert ca.lifetime_rel_unc[i] > res.lifetime_rel_unc[i]
    assert math.isnan(res.lifetime_s[keys.index("3s")])


def test_numpy_fallback_of_the_recurrences_gives_the_compiled_result(monkeypatch):
    # LEVELS_NO_JIT=1 (or no numba) runs the numpy loops over columns; both paths must agree
    x = numerov.square_root_grid(400.0, 0.04)
    nu = np.array([1.6274, 2.6432, 3.1337, 4.9870])
    ls = np.array([0, 0, 1, 2])
    v = model_potential.model_potential(x[:, None] ** 2, 11, 1.0, np.full(4, 2.5), np.zeros(4), 0.9448, 1.0)
    g = numerov.numerov_coefficient(x, v, -0.5 / nu**2, ls)
    start = np.minimum(np.searchsorted(x**2, numerov.outer_radius(nu, ls)), len(x) - 1)
    results = []
    for compiled in (True, False):
        monkeypatch.setattr(numerov, "COMPILED", compiled and numerov.COMPILED)
        inward = numerov.normalise(numerov.cut_divergence(numerov.integrate_inward(x, g, start), x), x)
        outward = numerov.integrate_outward(x, g, ls, stop=200)[:200]
        results.append((inward, outward / outward[150]))
    assert np.allclose(results[0][0], results[1][0], rtol=0, atol=1e-10)
    assert np.allclose(results[0][1], results[1][1], rtol=1e-10, atol=1e-12)


def test_terms_without_j_use_the_spin_summed_strength_and_mixing_is_reported():
    # nl terms (J not resolved): S = 2 l_> R^2, the sum of the fine-structure components (6j orthogonality)
    sp = SPECIES["Na I"]
    keep = ("3s", "4s", "5s", "6s", "3p1/2", "3p3/2", "4p1/2", "4p3/2", "5p1/2", "5p3/2")
    lv = [v for v in sp["levels"] if v[4] in keep]
    resolved = compute_single_valence([v[0] for v in lv], [v[1] for v in lv], [v[2] for v in lv],
                                      [v[3] for v in lv], z=11, charge=0, ionization_cm1=sp["limit"],
                                      rydberg_cm1=109734.7, alpha_c=0.9448, method="coulomb")
    # merge each p doublet into its term at the J-averaged energy
    terms = [(3, 0, -1, 0.0), (3, 1, -1, (16956.17 + 2 * 16973.37) / 3)]
    merged = compute_single_valence([t[0] for t in terms], [t[1] for t in terms], [t[2] for t in terms],
                                    [t[3] for t in terms], z=11, charge=0, ionization_cm1=sp["limit"],
                                    rydberg_cm1=109734.7, alpha_c=0.9448, method="coulomb")
    keys = [v[4] for v in lv]
    pick = {(keys[lo], keys[up]): s for lo, up, s in zip(resolved.lower, resolved.upper, resolved.line_strength)}
    total = pick[("3s", "3p1/2")] + pick[("3s", "3p3/2")]
    assert merged.line_strength[0] == pytest.approx(total, rel=2e-3)   # radial functions at slightly other energies
    mixed = compute_single_valence([3, 3], [0, 1], [1, -1], [0.0, 16967.6], z=11, charge=0,
                                   ionization_cm1=sp["limit"], rydberg_cm1=109734.7, method="coulomb")
    assert len(mixed.lower) == 0 and any("J-resolved and unresolved" in w for w in mixed.warnings)


def test_bound_part_of_the_f_sum_of_hydrogen_1s():
    # Thomas-Reiche-Kuhn sum of 1s: 1 = 0.5650 (Lyman series, bound) + 0.4350 (continuum);
    # Bethe & Salpeter 1957, section 63 (values from memory). Here the bound part, n = 2..80 by the
    # radial functions of this package at the exact energies, plus the n^-3 tail beyond 80.
    top = 80
    nu = np.r_[1.0, np.arange(2, top + 1)]
    ls = np.r_[0, np.ones(top - 1, dtype=int)]
    x = numerov.square_root_grid(float(numerov.outer_radius(top, 1)), 0.02)
    chi = coulomb_approximation.coulomb_radial_functions(x, nu, ls)
    radial = numerov.radial_integrals(chi[:, :1], chi[:, 1:], x, x * x)[0]
    n = np.arange(2, top + 1)
    f = (2 / 3) * 0.5 * (1 - 1 / n**2) * radial**2       # f(1s-np) = (2/3) dE |<1s|r|np>|^2, atomic units
    tail = f[-1] * top**3 * np.sum(np.arange(top + 1, 20000, dtype=float) ** -3)
    assert f[0] == pytest.approx(0.4162, abs=1e-4)          # f(1s-2p) = 0.4162 (same source)
    assert f.sum() + tail == pytest.approx(0.5650, abs=2e-4)


def _term_nu(name, l):
    """Principal quantum numbers and effective quantum numbers of the J-averaged terms of one series."""
    sp = SPECIES[name]
    rm = rydberg_constant_cm1(sp["mass"] - sp["z"] * M_E_U)
    ns = sorted({v[0] for v in sp["levels"] if v[1] == l})
    energy = []
    for n in ns:
        rows = [v for v in sp["levels"] if v[0] == n and v[1] == l]
        energy.append(np.average([v[3] for v in rows], weights=[v[2] + 1 for v in rows]))
    return np.array(ns), np.sqrt(rm / (sp["limit"] - np.array(energy)))


@pytest.mark.parametrize("name", ["Li I", "Na I", "K I", "Rb I", "Cs I"])
def test_published_potential_puts_the_measured_terms_at_its_eigenvalues(name):
    # The table of Marinescu, Sadeghpour & Dalgarno 1994 (Table I) is typed in from memory; a wrong digit
    # would move the eigenvalues or change the number of core states the potential binds. With its own
    # cut-offs, each measured term must be an eigenvalue with n - l - 1 nodes: within 2e-3 in effective
    # quantum number for s and d (measured here: <= 1.4e-3), 0.01 for the J-averaged p terms (fine
    # structure is not in the potential; Cs 6p: 8e-3).
    sp = SPECIES[name]
    alpha, _ = core_polarisability(sp["z"], 0)
    for l, limit in ((0, 2e-3), (1, 1e-2), (2, 2e-3)):
        n, nu = _term_nu(name, l)
        a1, a2, a3, a4, r_c = model_potential.published_shape(sp["z"], 0, l)
        rho = model_potential.phase_residual(sp["z"], 1.0, alpha, r_c, a1, a3, l, nu, n - l - 1, a2=a2, a4=a4)
        assert np.max(np.abs(rho)) < limit, (name, l, rho)


def test_the_published_shape_is_what_lets_heavy_alkali_series_be_fitted():
    # the cause of the former Rb/Cs misses: with a2 = a1, a4 = 0 the two parameters cannot make the measured
    # levels eigenvalues (r.m.s. 0.004-0.007 in nu); with the published a2, a4 they can (<= 3e-4)
    for name in ("Rb I", "Cs I"):
        sp = SPECIES[name]
        alpha, _ = core_polarisability(sp["z"], 0)
        rm = rydberg_constant_cm1(sp["mass"] - sp["z"] * M_E_U)
        for l, two_j in ((0, 1), (1, 1), (1, 3)):
            rows = [v for v in sp["levels"] if v[1] == l and v[2] == two_j]
            nu = np.sqrt(rm / (sp["limit"] - np.array([v[3] for v in rows])))
            n = np.array([v[0] for v in rows])
            tied = model_potential.fit_series(sp["z"], 1.0, alpha, l, nu, n)
            shaped = model_potential.fit_series(sp["z"], 1.0, alpha, l, nu, n,
                                                shape=model_potential.published_shape(sp["z"], 0, l)[:4])
            assert tied.rms_nu > 3e-3 and shaped.rms_nu < 5e-4, (name, l, two_j, tied.rms_nu, shaped.rms_nu)
    res = computed("Cs I", "model")
    assert all(s.fit is not None and not math.isnan(s.fit.a2) for s in res.series if s.method == "model potential")


def test_plain_coulomb_approximation_uses_the_bare_dipole_operator():
    # Bates & Damgaard 1949: Coulomb functions and r; the core-polarised operator is kept for pairs of
    # fitted-potential functions (it belongs with the polarisation potential, Hameed et al. 1968)
    sp = SPECIES["Cs I"]
    keys = [v[4] for v in sp["levels"]]
    res = computed("Cs I", "coulomb")
    rm = rydberg_constant_cm1(sp["mass"] - sp["z"] * M_E_U)
    nu = np.sqrt(rm / (sp["limit"] - np.array([sp["levels"][keys.index(k)][3] for k in ("6s", "6p1/2")])))
    x = numerov.square_root_grid(float(numerov.outer_radius(nu.max(), 0)), 0.04)
    chi = coulomb_approximation.coulomb_radial_functions(x, nu, [0, 1])
    bare = numerov.radial_integrals(chi[:, :1], chi[:, 1:], x, x * x)[0, 0]
    line = [s for lo, up, s in zip(res.lower, res.upper, res.line_strength)
            if keys[lo] == "6s" and keys[up] == "6p1/2"][0]
    # S = (2j+1)(2j'+1){l j 1/2; j' l' 1}^2 l_> R^2 = (2/3) R^2 for s1/2 - p1/2 (Condon & Shortley 1935)
    assert line == pytest.approx(2 / 3 * bare**2, rel=1e-9)
    model = computed("Cs I", "model")
    assert model.alpha_c > 0 and all(s.method == "model potential" for s in model.series if s.l <= 1)


def test_thomas_reiche_kuhn_sum_of_the_model_hamiltonian():
    # The sum of f from Na 3s over the complete spectrum of the box-discretised model Hamiltonian (bound,
    # discretised continuum and the potential's own deep 2p state) equals the discrete double-commutator
    # value exactly (to round-off), and for one local potential that value tends to 1 as the step shrinks
    # (TRK: Thomas 1925, Reiche & Thomas 1925, Kuhn 1925, from memory), with the step squared.
    # No published figure for the Pauli-corrected valence sum of this potential is cited here.
    res = computed("Na I", "model")
    fits = {(s.l, s.two_j): s.fit for s in res.series}
    shape = {key: (f.a1, f.a2, f.a3, f.a4) for key, f in fits.items() if f is not None}
    r_c, alpha = fits[(0, 1)].r_c, res.alpha_c
    full = model_potential.dipole_f_sum(11, 1.0, alpha, r_c, 0, 2, {0: shape[(0, 1)], 1: shape[(1, 1)]})
    assert full.total == pytest.approx(full.identity, abs=1e-6)
    # the box's 3s is the measured level (the fit made it an eigenvalue): -0.5 / nu^2 hartree
    n, nu = _term_nu("Na I", 0)
    assert full.energy == pytest.approx(-0.5 / nu[0] ** 2, rel=2e-3)
    f, e = full.f[0], full.final_energy[0]
    assert f[0] < 0 and e[0] < full.energy            # 3s -> the model's 2p (Pauli-forbidden): emission
    assert f[1] == pytest.approx(0.98, abs=0.01)      # 3s -> 3p with the bare r; measured here 0.981
    local = [model_potential.dipole_f_sum(11, 1.0, alpha, r_c, 0, 2, {0: shape[(0, 1)], 1: shape[(0, 1)]},
                                          step=h) for h in (0.02, 0.01)]
    for item in local:
        assert item.total == pytest.approx(item.identity, abs=1e-6)
    gaps = [1 - item.total for item in local]
    assert 0 < gaps[1] < 1e-4 and gaps[0] / gaps[1] == pytest.approx(4, rel=0.05)
