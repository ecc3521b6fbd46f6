"""Tests of levels.physics.lines.series.

Hydrogen-like levels come from sympy.physics.hydrogen (E_nl: Bohr energies;
E_nl_dirac: Dirac energies), scaled by the reduced-mass Rydberg constant built
here from scipy.constants (CODATA). The noisy series belong to an INVENTED
alkali-like atom (limit and quantum defects made up for the test).
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.constants as sc
from sympy.physics.hydrogen import E_nl, E_nl_dirac

from levels.errors import PhysicsInputError, QuantumNumberError
from levels.physics.lines.series import SeriesFit, fit_series_limit, rydberg_constant_cm1

# CODATA via scipy.constants
R_INF_CM1 = sc.Rydberg / 100.0
M_E_U = sc.physical_constants["electron mass in u"][0]
M_P_U = sc.physical_constants["proton mass in u"][0]
M_ALPHA_U = sc.physical_constants["alpha particle mass in u"][0]
C_AU = 1.0 / sc.fine_structure  # speed of light in atomic units


def r_m(mass_u: float) -> float:
    return R_INF_CM1 / (1.0 + M_E_U / mass_u)


# ----------------------------------------------------------------- Rydberg constant


def test_rydberg_constant_reduced_mass():
    assert rydberg_constant_cm1(M_P_U) == pytest.approx(r_m(M_P_U), rel=1e-14)
    # R_H = 109 677.58 cm-1 (from memory)
    assert rydberg_constant_cm1(M_P_U) == pytest.approx(109677.58, abs=0.01)
    assert rydberg_constant_cm1(1e12) == pytest.approx(R_INF_CM1, rel=1e-14)
    for bad in (0.0, -1.0, float("nan")):
        with pytest.raises(PhysicsInputError):
            rydberg_constant_cm1(bad)


# ----------------------------------------------------------------- hydrogen-like levels


def _bohr_levels(n: np.ndarray, z: int, rm: float) -> tuple[np.ndarray, float]:
    """Level energies above the ground level and the ionization energy, cm-1."""
    hartree_cm1 = 2.0 * rm  # E_nl is in Hartree; 1 Hartree = 2 Ry
    e = np.array([float(E_nl(int(k), z)) for k in n]) * hartree_cm1
    e1 = float(E_nl(1, z)) * hartree_cm1
    return e - e1, -e1


@pytest.mark.parametrize(("z", "mass_u"), [(1, M_P_U), (2, M_ALPHA_U)])
def test_bohr_series_recovers_ionization_energy(z, mass_u):
    rm = r_m(mass_u)
    n = np.arange(6, 31)
    energy, ionization = _bohr_levels(n, z, rm)
    fit = fit_series_limit([(n, energy, np.full(n.size, 1e-4))], rydberg_cm1=rydberg_constant_cm1(mass_u),
                           core_charge=z)
    assert abs(fit.limit_cm1 - ionization) / ionization < 1e-6
    assert abs(fit.quantum_defects[0][0]) < 1e-6
    assert fit.warnings == []


def test_dirac_series_recovers_ionization_energy():
    # Dirac energies (sympy E_nl_dirac, rest mass excluded) of H nS1/2 and nP3/2,
    # reduced-mass scaled; two series share the limit. Relativity appears as a
    # small quantum defect (about alpha^2/(2(j+1/2))).
    rm = r_m(M_P_U)
    hartree_cm1 = 2.0 * rm
    e1 = float(E_nl_dirac(1, 0, True, 1, C_AU)) * hartree_cm1
    ionization = -e1
    series = []
    for l_orb in (0, 1):
        n = np.arange(max(6, l_orb + 1), 31)
        e = np.array([float(E_nl_dirac(int(k), l_orb, True, 1, C_AU)) for k in n]) * hartree_cm1 - e1
        series.append((n, e, np.full(n.size, 1e-4)))
    fit = fit_series_limit(series, rydberg_cm1=rm)
    assert abs(fit.limit_cm1 - ionization) / ionization < 1e-6
    # Expanding the Dirac energy, n* = n - alpha^2/(2(j + 1/2)) + 3 alpha^2/(8n) + O(alpha^4):
    # the exact defect n - n* rises with n towards alpha^2/(2(j + 1/2)), so the
    # fitted delta_0 (the n -> infinity value) lies between the smallest exact
    # defect and that asymptote; the j-independent 1/n term cancels in the
    # difference of the two series, alpha^2/2 - alpha^2/4.
    a2 = sc.fine_structure**2
    for k, ((n, e, _), j_plus_half) in enumerate(zip(series, (1, 2))):
        exact = n - np.sqrt(rm / (ionization - e))
        assert exact.min() < fit.quantum_defects[k][0] < a2 / (2 * j_plus_half)
    assert fit.quantum_defects[0][0] - fit.quantum_defects[1][0] == pytest.approx(a2 / 4, rel=1e-3)


# ----------------------------------------------------------------- INVENTED alkali-like atom

INVENTED_LIMIT = 38000.0  # cm-1, INVENTED
INVENTED_MASS_U = 30.0  # INVENTED core mass
INVENTED_SERIES = [  # (n range, (delta_0, delta_2)), INVENTED
    (np.arange(8, 31), (1.62, 0.31)),
    (np.arange(8, 31), (1.11, 0.18)),
    (np.arange(6, 26), (0.045, -0.02)),
]


def _invented_levels(n, defects, rm):
    m = n - defects[0]
    delta = defects[0] + defects[1] / m**2
    return INVENTED_LIMIT - rm / (n - delta) ** 2


def test_noise_free_invented_series_recover_defects():
    rm = rydberg_constant_cm1(INVENTED_MASS_U)
    series = [(n, _invented_levels(n, d, rm), np.full(n.size, 1e-3)) for n, d in INVENTED_SERIES]
    fit = fit_series_limit(series, rydberg_cm1=rm)
    assert fit.limit_cm1 == pytest.approx(INVENTED_LIMIT, abs=1e-7)
    for got, (_, true) in zip(fit.quantum_defects, INVENTED_SERIES):
        assert got == pytest.approx(list(true), abs=1e-8)
    assert fit.dof == sum(n.size for n, _ in INVENTED_SERIES) - 7
    assert [r.size for r in fit.residuals_cm1] == [n.size for n, _ in INVENTED_SERIES]
    assert fit.chi2 < 1e-6


def test_uncertainty_coverage_1000_trials():
    # 1,000 noisy realisations (fixed seed) of the INVENTED series, each level
    # with its own 1 sigma uncertainty in 0.002-0.02 cm-1. The fraction of trials
    # whose 1 sigma interval covers the true limit is binomial with p = 0.6827
    # and N = 1000: standard deviation sqrt(p (1 - p) / N) = 0.0147, so the band
    # 0.64-0.72 is -2.9 to +2.5 sigma (about 1 % chance of a false failure).
    rng = np.random.default_rng(20240611)
    rm = rydberg_constant_cm1(INVENTED_MASS_U)
    truth = [(n, _invented_levels(n, d, rm)) for n, d in INVENTED_SERIES]
    pulls = np.empty(1000)
    for trial in range(pulls.size):
        series = []
        for n, e in truth:
            unc = rng.uniform(0.002, 0.02, n.size)
            series.append((n, e + rng.normal(0.0, unc), unc))
        fit = fit_series_limit(series, rydberg_cm1=rm)
        pulls[trial] = (fit.limit_cm1 - INVENTED_LIMIT) / fit.limit_unc_cm1
    coverage = np.mean(np.abs(pulls) <= 1.0)
    assert 0.64 <= coverage <= 0.72, coverage
    # mean pull: standard error 1/sqrt(1000) = 0.032; 0.1 is about 3 sigma
    assert abs(np.mean(pulls)) < 0.1


# ----------------------------------------------------------------- warnings and errors


def test_short_and_narrow_series_warn():
    rm = rydberg_constant_cm1(INVENTED_MASS_U)
    n_long = np.arange(8, 31)
    n_short = np.array([10, 11, 12, 13])
    d_long, d_short = INVENTED_SERIES[0][1], INVENTED_SERIES[1][1]
    series = [
        (n_long, _invented_levels(n_long, d_long, rm), np.full(n_long.size, 0.01)),
        (n_short, _invented_levels(n_short, d_short, rm), np.full(n_short.size, 0.01)),
    ]
    fit = fit_series_limit(series, rydberg_cm1=rm)
    text = " ".join(fit.warnings)
    assert "series 1: only 4 levels" in text
    assert "series 1: n range 10-13 is too narrow" in text
    assert "series 0" not in text


def test_underestimated_uncertainties_warn():
    rng = np.random.default_rng(7)
    rm = rydberg_constant_cm1(INVENTED_MASS_U)
    n, d = INVENTED_SERIES[0]
    e = _invented_levels(n, d, rm) + rng.normal(0.0, 0.1, n.size)
    fit = fit_series_limit([(n, e, np.full(n.size, 0.01))], rydberg_cm1=rm)
    assert fit.birge_ratio > 3
    assert any("Birge ratio" in w for w in fit.warnings)


def test_exact_fit_has_no_dof():
    rm = rydberg_constant_cm1(INVENTED_MASS_U)
    n = np.array([10, 14, 20])
    d = INVENTED_SERIES[0][1]
    fit = fit_series_limit([(n, _invented_levels(n, d, rm), np.full(3, 0.01))], rydberg_cm1=rm)
    assert fit.dof == 0
    assert fit.limit_cm1 == pytest.approx(INVENTED_LIMIT, abs=1e-6)
    assert any("no degrees of freedom" in w for w in fit.warnings)


def test_result_is_frozen():
    rm = rydberg_constant_cm1(INVENTED_MASS_U)
    n, d = INVENTED_SERIES[2]
    fit = fit_series_limit([(n, _invented_levels(n, d, rm), np.full(n.size, 0.01))], rydberg_cm1=rm, n_defect_terms=1)
    assert isinstance(fit, SeriesFit)
    with pytest.raises(AttributeError):
        fit.limit_cm1 = 0.0  # type: ignore[misc]
    assert len(fit.quantum_defects[0]) == 1


def test_input_errors():
    rm = rydberg_constant_cm1(INVENTED_MASS_U)
    n = np.arange(8, 15)
    e = _invented_levels(n, (1.0, 0.0), rm)
    u = np.full(n.size, 0.01)
    with pytest.raises(PhysicsInputError, match="uncertainties"):
        fit_series_limit([(n, e, np.zeros(n.size))], rydberg_cm1=rm)
    with pytest.raises(QuantumNumberError):
        fit_series_limit([(n + 0.5, e, u)], rydberg_cm1=rm)
    with pytest.raises(PhysicsInputError, match="cannot fix"):
        fit_series_limit([(n[:2], e[:2], u[:2])], rydberg_cm1=rm)
    with pytest.raises(PhysicsInputError):
        fit_series_limit([], rydberg_cm1=rm)
    with pytest.raises(PhysicsInputError):
        fit_series_limit([(n, e, u)], rydberg_cm1=-1.0)
    with pytest.raises(PhysicsInputError):
        fit_series_limit([(n, e, u)], rydberg_cm1=rm, core_charge=0)
    with pytest.raises(PhysicsInputError):
        fit_series_limit([(n, e[:-1], u)], rydberg_cm1=rm)


def test_initial_limit_argument():
    rm = rydberg_constant_cm1(INVENTED_MASS_U)
    n, d = INVENTED_SERIES[1]
    series = [(n, _invented_levels(n, d, rm), np.full(n.size, 0.01))]
    a = fit_series_limit(series, rydberg_cm1=rm)
    b = fit_series_limit(series, rydberg_cm1=rm, initial_limit_cm1=INVENTED_LIMIT + 50.0)
    assert a.limit_cm1 == pytest.approx(b.limit_cm1, abs=1e-7)
