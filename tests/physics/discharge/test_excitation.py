"""Excitation rates: van Regemorter's formula, constant collision strengths, Gaunt factor, hydrogen fits."""

import math

import numpy as np
import pytest
import scipy.constants as sc
from scipy.special import exp1

from levels.errors import PhysicsInputError
from levels.physics.discharge import excitation, hydrogen_rates
from levels.physics.discharge.balance import rate_coefficients

C2 = sc.h * sc.c * 100 / sc.k  # cm K
RY_CM1 = sc.Rydberg / 100


def test_gaunt_factor_meets_the_bethe_limit_at_small_y():
    # high-energy (Bethe) limit of the Maxwellian Gaunt factor: sqrt(3)/(2 pi) e^y E1(y) (van Regemorter 1962, eq. 17)
    y = 0.01
    bethe = math.sqrt(3) / (2 * math.pi) * math.exp(y) * exp1(y)
    assert float(excitation.gaunt_factor(y)) == pytest.approx(bethe, rel=0.05)
    assert float(excitation.gaunt_factor(y / 10)) == pytest.approx(math.sqrt(3) / (2 * math.pi) * math.exp(y / 10)
                                                                  * exp1(y / 10), rel=0.05)


def test_ion_gaunt_factor_levels_off_at_two_tenths():
    # van Regemorter 1962: for positive ions P(y) -> 0.2 at large y
    assert np.allclose(excitation.gaunt_factor([5.0, 50.0, 500.0], ion=True), 0.2)


@pytest.mark.parametrize("te_k", [3000.0, 11604.5, 1e5])
def test_van_regemorter_against_its_numerical_form(te_k):
    # van Regemorter 1962 in the usual numerical form (from memory):
    # C = 3.15e-7 f (Ry/dE)^{3/2} beta^{1/2} e^{-beta} P(beta) cm3 s-1
    f, de = 0.6407, 15233.0
    beta = C2 * de / te_k
    gaunt = float(excitation.gaunt_factor(beta))
    expected_cm3 = 3.15e-7 * f * (RY_CM1 / de) ** 1.5 * math.sqrt(beta) * math.exp(-beta) * gaunt
    assert float(excitation.van_regemorter_rate(f, de, te_k)) * 1e6 == pytest.approx(expected_cm3, rel=2e-3)


def test_collision_strength_rate_against_the_numerical_form():
    # Seaton 1962: C_lu = 8.629e-6 / (g_l sqrt(T)) Omega exp(-dE/kT) cm3 s-1, T in K (from memory)
    te, omega, gl, de = 8000.0, 0.7, 3.0, 20000.0
    expected = 8.629e-6 / (gl * math.sqrt(te)) * omega * math.exp(-C2 * de / te)
    assert float(excitation.collision_strength_rate(omega, gl, de, te)) * 1e6 == pytest.approx(expected, rel=1e-3)


def test_detailed_balance_of_every_collision_pair(hydrogen_cr):
    _model, species = hydrogen_cr
    te = 15000.0
    rates = rate_coefficients(species, te)
    lo, up = rates.pair_lower, rates.pair_upper
    assert lo.size >= np.unique(species.lower * species.size + species.upper).size   # every radiative pair, at least
    assert set(np.unique(rates.pair_source).tolist()) >= {0, 1}   # Vriens & Smeets and van Regemorter pairs
    # n_l C_lu = n_u C_ul for Boltzmann populations at Te (constants from scipy, independently of the module)
    e, g = species.energy_cm1, species.g
    forward = g[lo] * np.exp(-C2 * e[lo] / te) * rates.excitation
    backward = g[up] * np.exp(-C2 * e[up] / te) * rates.deexcitation
    nonzero = forward > 0
    assert np.max(np.abs(backward[nonzero] / forward[nonzero] - 1.0)) < 1e-10


def test_vriens_smeets_and_van_regemorter_agree_for_lyman_alpha():
    # two independent published approximations for H 1 -> 2 (f = 0.4162, Wiese & Fuhr 2009, from memory)
    for kt_ev in (2.0, 5.0, 10.0, 30.0, 100.0):
        te = kt_ev * sc.e / sc.k
        vs = float(hydrogen_rates.vriens_smeets_excitation(1, 2, 0.4162, te))
        vr = float(excitation.van_regemorter_rate(0.4162, 0.75 * RY_CM1, te))
        assert vs == pytest.approx(vr, rel=0.2), kt_ev


@pytest.mark.parametrize("call", [
    lambda: excitation.van_regemorter_rate(-0.1, 1000.0, 1e4),
    lambda: excitation.van_regemorter_rate(0.1, 0.0, 1e4),
    lambda: excitation.van_regemorter_rate(0.1, 1000.0, 0.0),
    lambda: excitation.van_regemorter_rate(0.1, 1000.0, -5.0),
    lambda: excitation.collision_strength_rate(1.0, 0.0, 1000.0, 1e4),
    lambda: hydrogen_rates.vriens_smeets_excitation(2, 2, 0.1, 1e4),
])
def test_bad_input_is_refused(call):
    with pytest.raises(PhysicsInputError):
        call()
