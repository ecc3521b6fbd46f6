"""Bound-electron g-factors of one-electron ions (levels.physics.one_electron.bound_g)."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.constants as sc

from levels.errors import PhysicsInputError, QuantumNumberError
from levels.isotopes import isotope
from levels.physics.lines.lande import lande_g_ls
from levels.physics.one_electron.bound_g import G_E, bound_electron_g, dirac_g_factor, kappa

ALPHA = sc.fine_structure


def test_ground_state_is_breits_formula_for_every_element():
    # Breit 1928, Nature 122, 649: g_D(1s) = (2/3) (1 + 2 sqrt(1 - (Z alpha)^2))
    z = np.arange(1, 119)
    got = np.array([float(dirac_g_factor(int(k), 1, 0, 1)) for k in z])
    breit = 2.0 / 3.0 * (1.0 + 2.0 * np.sqrt(1.0 - (z * ALPHA) ** 2))
    np.testing.assert_allclose(got, breit, rtol=1e-14, atol=0)


@pytest.mark.parametrize("z", [1, 10, 50, 92])
def test_n2_closed_forms(z):
    # closed forms of the n = 2 Dirac g-factors (from memory; they follow from the
    # Dirac energies E(2s) = E(2p1/2) = sqrt((1+gamma)/2), E(2p3/2) = sqrt(1 - (Z alpha)^2/4)):
    # 2s: (2/3)(1 + sqrt(2(1+gamma))), 2p1/2: (2/3)(sqrt(2(1+gamma)) - 1), 2p3/2: (4/15)(1 + 2 sqrt(4 - (Z alpha)^2))
    x = z * ALPHA
    gamma = math.sqrt(1.0 - x * x)
    got = dirac_g_factor(z, 2, [0, 1, 1], [1, 1, 3])
    ref = [2 / 3 * (1 + math.sqrt(2 * (1 + gamma))), 2 / 3 * (math.sqrt(2 * (1 + gamma)) - 1),
           4 / 15 * (1 + 2 * math.sqrt(4 - x * x))]
    np.testing.assert_allclose(got, ref, rtol=1e-13, atol=0)


def test_low_z_limit_is_the_ls_lande_factor():
    # Z alpha -> 0: g_D -> LS Lande g with g_s = 2, and g -> LS with the free g_e
    # (Bethe & Salpeter 1957, sec. 47); the Dirac binding terms are of order (Z alpha)^2
    n = np.array([k for k in range(1, 11) for l in range(k) for _ in (0, 1)])
    l = np.array([l for k in range(1, 11) for l in range(k) for _ in (0, 1)])
    two_j = np.array([2 * l + s for k in range(1, 11) for l in range(k) for s in (1, -1)])
    ok = two_j > 0
    n, l, two_j = n[ok], l[ok], two_j[ok]
    ls2 = lande_g_ls(np.ones_like(l), l, two_j, g_s=2.0)
    assert np.max(np.abs(dirac_g_factor(1, n, l, two_j) - ls2)) < ALPHA**2
    assert np.max(np.abs(bound_electron_g(1, n, l, two_j) - lande_g_ls(np.ones_like(l), l, two_j))) < ALPHA**2
    # and the binding term is really there: the 1s value is below 2 by (4/3)(1 - gamma)
    assert 2.0 - float(dirac_g_factor(1, 1, 0, 1)) == pytest.approx(4 / 3 * (1 - math.sqrt(1 - ALPHA**2)), rel=1e-9)


@pytest.mark.parametrize("z, mass_number, measured, unc", [
    # Haeffner et al. 2000, PRL 85, 5308: g(12C5+) = 2.001 041 596(5) (from memory)
    (6, 12, 2.001041596, 5e-9),
    # Sturm et al. 2011, PRL 107, 023002: g(28Si13+) = 1.995 348 958 7(5)(3)(8) (from memory)
    (14, 28, 1.9953489587, 1e-9),
])
def test_ground_state_against_measured_hydrogen_like_ions(z, mass_number, measured, unc):
    nuclear_mass_u = isotope(z, mass_number).nuclear_mass_u  # periodictable masses
    got = float(bound_electron_g(z, 1, 0, 1))
    x = z * ALPHA
    a_pi = ALPHA / math.pi
    # the terms the module leaves out (module docstring), their magnitudes:
    grotch = a_pi * x**2 / 6                                   # Grotch 1970 (from memory)
    log_term = a_pi * x**4 * 32 / 9 * math.log(x**-2)          # Pachucki et al. 2005 (from memory)
    recoil = x**2 * sc.m_e / (nuclear_mass_u * sc.atomic_mass)
    budget = grotch + log_term + recoil + unc
    assert abs(got - measured) < budget
    # the measured value needs the Dirac binding term: the LS value with g_e misses it
    assert abs(G_E - measured) > 10 * budget


def test_uranium_ground_state_far_from_the_ls_value():
    # the case the LS formula gets badly wrong: U91+ 1s, Breit's formula plus the anomaly
    g = float(bound_electron_g(92, 1, 0, 1))
    x = 92 * ALPHA
    assert g == pytest.approx(2 / 3 * (1 + 2 * math.sqrt(1 - x * x)) + (G_E - 2), rel=1e-14)
    assert G_E - g > 0.3


def test_kappa_and_errors():
    assert kappa([0, 1, 1, 2, 2], [1, 1, 3, 3, 5]).tolist() == [-1, 1, -2, 2, -3]
    with pytest.raises(QuantumNumberError):
        dirac_g_factor(1, 2, 1, 5)
    with pytest.raises(QuantumNumberError):
        bound_electron_g(1, 1, 1, 1)
    with pytest.raises((PhysicsInputError, QuantumNumberError)):
        dirac_g_factor(0, 1, 0, 1)
