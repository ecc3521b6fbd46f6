"""Tests of levels.physics.plasma.equilibrium against CODATA (scipy.constants), textbooks and direct integration."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.constants as sc
from scipy.integrate import quad
from scipy.optimize import brentq
from scipy.special import expn

from levels.errors import PhysicsInputError
from levels.physics.plasma import equilibrium as pl

# hydrogen (1H) term energies E_n = R_H (1 - 1/n^2) with the reduced-mass Rydberg constant,
# all from CODATA through scipy.constants (Bohr model with reduced mass)
R_H_CM1 = sc.Rydberg / 100.0 / (1.0 + sc.m_e / sc.m_p)
N = np.arange(1, 201)
E_H = R_H_CM1 * (1.0 - 1.0 / N**2)
G_H = 2.0 * N**2
C2_CM_K = sc.h * sc.c * 100.0 / sc.k  # second radiation constant in cm K, written out


# ----------------------------------------------------------------------------- Boltzmann


def test_boltzmann_against_direct_scipy_evaluation():
    rng = np.random.default_rng(3)
    energy = np.concatenate(([0.0], np.sort(rng.uniform(0, 60000, 40))))
    g = rng.integers(1, 12, energy.size).astype(float)
    te = 9000.0
    # n_i/n = g_i exp(-E_i/kT) / sum g_j exp(-E_j/kT), E_i = h c (100 E_i[cm-1]) (Mihalas 1978)
    w = g * np.exp(-sc.h * sc.c * 100.0 * energy / (sc.k * te))
    expected = w / w.sum()
    got = pl.boltzmann_populations(energy, g, te)
    np.testing.assert_allclose(got, expected, rtol=1e-12, atol=0)
    assert got.sum() == pytest.approx(1.0, abs=1e-14)


def test_boltzmann_hydrogen_n2_equals_n1_near_85400_K():
    # Carroll & Ostlie, An Introduction to Modern Astrophysics, 2nd ed. (2007), sec. 8.1 worked example
    # (from memory): with g = 2n^2 and E2 - E1 = 10.2 eV, N2 = N1 at T = 85,400 K.
    # The book rounds 10.2 eV and quotes 3 significant figures, hence the 50 K tolerance.
    def diff(t):
        f = pl.boltzmann_populations(E_H[:2], G_H[:2], t)
        return f[1] - f[0]

    t_equal = brentq(diff, 5e4, 2e5)
    assert abs(t_equal - 85400.0) < 50.0
    # and the exact value from the closed form T = (E2 - E1) / (k ln 4), scipy constants
    assert t_equal == pytest.approx(C2_CM_K * (E_H[1] - E_H[0]) / math.log(4.0), rel=1e-9)


def test_boltzmann_cutoff_mask_excludes_levels_and_renormalises():
    energy = np.array([0.0, 1000.0, 2000.0])
    g = np.array([1.0, 3.0, 5.0])
    mask = np.array([True, True, False])
    got = pl.boltzmann_populations(energy, g, 3000.0, cutoff_mask=mask)
    w = g[:2] * np.exp(-C2_CM_K * energy[:2] / 3000.0)
    np.testing.assert_allclose(got, [*(w / w.sum()), 0.0], rtol=1e-12)
    # all levels dissolved: zeros, not an exception
    assert pl.boltzmann_populations(energy, g, 3000.0, cutoff_mask=[False] * 3).tolist() == [0.0, 0.0, 0.0]


def test_boltzmann_no_overflow_at_low_temperature():
    f = pl.boltzmann_populations([0.0, 1e5], [1.0, 1.0], 10.0)
    assert f.tolist() == [1.0, 0.0]


# ----------------------------------------------------------------------------- partition function


def test_partition_function_reports_the_cutoff_it_applied():
    te, ne = 12000.0, 1e21
    cut = pl.plasma_cutoff(te, ne, 1, method="debye")
    u, mask = pl.partition_function(E_H, G_H, te, ionization_cm1=R_H_CM1, lowering_cm1=cut.lowering_cm1)
    # the included levels are exactly those bound below the lowered limit
    np.testing.assert_array_equal(mask, E_H < R_H_CM1 - cut.lowering_cm1)
    # the highest included n agrees with the reported hydrogenic n_max (R_inf vs R_H: < 1 level)
    assert abs(N[mask].max() - cut.n_max) < 1.0
    # direct sum over the included levels
    direct = np.sum(G_H[mask] * np.exp(-sc.h * sc.c * 100 * E_H[mask] / (sc.k * te)))
    assert u == pytest.approx(direct, rel=1e-13)


def test_partition_function_hydrogen_cool_and_warm():
    # kT << chi: U(H I) -> g_1 = 2 (Mihalas 1978); at 5000 K, ne = 1e18 m-3 to 1e-6
    cut = pl.plasma_cutoff(5000.0, 1e18, 1)
    u, _ = pl.partition_function(E_H, G_H, 5000.0, ionization_cm1=R_H_CM1, lowering_cm1=cut.lowering_cm1)
    assert u == pytest.approx(2.0, abs=1e-6)
    # at 10 000 K the n^2 growth of the near-limit levels matters: U - 2 is close to
    # exp(-chi/kT) * sum_{n<=n_max} 2 n^2 ~ exp(-chi/kT) (2/3) n_max^3 (asymptotic estimate,
    # common practice, no source), so the reported cutoff sets U
    cut = pl.plasma_cutoff(1e4, 1e20, 1)
    u, mask = pl.partition_function(E_H, G_H, 1e4, ionization_cm1=R_H_CM1, lowering_cm1=cut.lowering_cm1)
    estimate = math.exp(-C2_CM_K * R_H_CM1 / 1e4) * (2.0 / 3.0) * cut.n_max**3
    assert 0.03 < u - 2.0 < 0.07
    assert (u - 2.0) == pytest.approx(estimate, rel=0.15)


def test_partition_function_lowering_beyond_limit_returns_zero():
    u, mask = pl.partition_function([0.0, 10.0], [1, 1], 5000.0, ionization_cm1=100.0, lowering_cm1=200.0)
    assert u == 0.0 and not mask.any()


# ----------------------------------------------------------------------------- Saha


def saha_direct(te, ne, u_lo, u_up, chi_cm1, dchi_cm1=0.0):
    """n_{z+1}/n_z = (2/ne) (U+/U) (2 pi m_e k T / h^2)^1.5 exp(-(chi-dchi)/kT), SI, scipy constants
    (Griem 1997)."""
    lam3 = (2 * sc.pi * sc.m_e * sc.k * te / sc.h**2) ** 1.5
    return 2.0 / ne * u_up / u_lo * lam3 * math.exp(-(chi_cm1 - dchi_cm1) * sc.h * sc.c * 100 / (sc.k * te))


@pytest.mark.parametrize("te,ne", [(5000.0, 1e18), (1e4, 1e20), (2e4, 1e23), (1e5, 1e25)])
def test_saha_against_direct_scipy_evaluation(te, ne):
    got = pl.saha_ratio(te, ne, 2.0, 1.0, R_H_CM1, 30.0)
    assert got == pytest.approx(saha_direct(te, ne, 2.0, 1.0, R_H_CM1, 30.0), rel=1e-12)


def test_saha_constant_matches_mihalas():
    # Mihalas, Stellar Atmospheres, 2nd ed. (1978) (from memory):
    # N_j / N_{j+1} = n_e Phi_j(T), Phi_j = 2.07e-16 (U_j / U_{j+1}) T^{-3/2} exp(chi/kT) cm^3.
    te, ne_cm3 = 1e4, 1e14
    ratio = pl.saha_ratio(te, ne_cm3 * 1e6, 1.0, 1.0, 1e-12)  # chi -> 0: exp factor is 1
    phi = 1.0 / (ratio * ne_cm3) * te**1.5
    assert phi == pytest.approx(2.07e-16, rel=5e-3)  # 3 significant figures quoted


def test_hydrogen_fraction_ionized_at_10000_K():
    # pure hydrogen at 10 000 K and ne = 1e20 m-3, partition function summed with the Debye cutoff
    te, ne = 1e4, 1e20
    cut = pl.plasma_cutoff(te, ne, 1)
    u_i, _ = pl.partition_function(E_H, G_H, te, ionization_cm1=R_H_CM1, lowering_cm1=cut.lowering_cm1)
    frac = pl.ionization_balance(te, ne, [u_i, 1.0], [R_H_CM1], [cut.lowering_cm1])
    r = saha_direct(te, ne, u_i, 1.0, R_H_CM1, cut.lowering_cm1)
    assert frac[1] == pytest.approx(r / (1 + r), rel=1e-12)
    # hand check with U_I = 2, U_II = 1, no lowering: ratio = (2 pi m_e k T/h^2)^1.5 exp(-chi/kT)/ne
    # = 2.4147e21 T^1.5 m-3 K^-1.5 (Saha constant, from memory) * 1e6 * exp(-15.7807) / 1e20 = 3.386
    frac_u2 = pl.ionization_balance(te, ne, [2.0, 1.0], [R_H_CM1])
    assert frac_u2[1] == pytest.approx(3.386 / 4.386, abs=2e-4)
    # the near-limit levels (U_I = 2.05 with the Debye cutoff) lower it slightly
    assert 0.76 < frac[1] < frac_u2[1]


def test_hydrogen_half_ionized_near_9600_K_at_pe_20_pa():
    # Carroll & Ostlie, An Introduction to Modern Astrophysics, 2nd ed. (2007), sec. 8.1 and its figure of the
    # H ionization fraction
    # (from memory): pure hydrogen with electron pressure Pe = 20 N m-2 is half ionized at
    # T ~ 9600 K; quoted to 2 significant figures, so within 50 K.
    def log_ratio(t):
        ne = 20.0 / (sc.k * t)
        cut = pl.plasma_cutoff(t, ne, 1)
        u_i, _ = pl.partition_function(E_H, G_H, t, ionization_cm1=R_H_CM1, lowering_cm1=cut.lowering_cm1)
        return math.log(pl.saha_ratio(t, ne, u_i, 1.0, R_H_CM1, cut.lowering_cm1))

    t_half = brentq(log_ratio, 7000.0, 13000.0)
    assert abs(t_half - 9600.0) < 50.0


def test_ionization_balance_three_stages_chains_saha():
    te, ne = 25000.0, 1e22
    u = [1.0, 2.0, 1.0]
    chi = [198310.7, 438908.9]  # He I, He II ionization energies, cm-1 (from memory; any values do here)
    low = [10.0, 20.0]
    f = pl.ionization_balance(te, ne, u, chi, low)
    assert f.sum() == pytest.approx(1.0, abs=1e-14)
    assert f[1] / f[0] == pytest.approx(saha_direct(te, ne, u[0], u[1], chi[0], low[0]), rel=1e-12)
    assert f[2] / f[1] == pytest.approx(saha_direct(te, ne, u[1], u[2], chi[1], low[1]), rel=1e-12)


def test_ionization_balance_no_overflow_extremes():
    f = pl.ionization_balance(3000.0, 1e6, [1, 1, 1, 1], [5e5, 6e5, 7e5])
    assert f[0] == pytest.approx(1.0) and np.all(np.isfinite(f))
    f = pl.ionization_balance(1e6, 1e6, [1, 1, 1], [1e4, 2e4])
    assert f[2] == pytest.approx(1.0) and np.all(np.isfinite(f))


def test_saha_dissolved_lower_stage():
    assert pl.saha_ratio(1e4, 1e20, 0.0, 1.0, 1e5) == math.inf
    assert math.isnan(pl.saha_ratio(1e4, 1e20, 0.0, 0.0, 1e5))
    f = pl.ionization_balance(1e4, 1e20, [0.0, 1.0], [1e5])
    assert f.tolist() == [0.0, 1.0]


# ----------------------------------------------------------------------------- cutoffs


def test_debye_length_formula_and_nrl_formulary():
    te, ne = 15000.0, 3e21
    # lambda_D = sqrt(eps0 k T / (ne e^2)) (Griem 1997), scipy constants
    assert pl.debye_length_m(te, ne) == pytest.approx(math.sqrt(sc.epsilon_0 * sc.k * te / (ne * sc.e**2)), rel=1e-14)
    # NRL Plasma Formulary (Naval Research Laboratory; from memory):
    # lambda_De = 7.43e2 Te^1/2 ne^-1/2 cm, Te in eV, ne in cm-3
    te_ev, ne_cm3 = 2.0, 1e15
    got_cm = pl.debye_length_m(te_ev * sc.e / sc.k, ne_cm3 * 1e6) * 100
    assert got_cm == pytest.approx(7.43e2 * math.sqrt(te_ev / ne_cm3), rel=1e-3)


def test_debye_lowering_formula():
    te, ne = 20000.0, 1e23
    lam = math.sqrt(sc.epsilon_0 * sc.k * te / (ne * sc.e**2))
    for charge in (1, 2, 5):
        # Delta E = (z+1) e^2 / (4 pi eps0 lambda_D) (Griem 1997), converted to cm-1
        expected = charge * sc.e**2 / (4 * sc.pi * sc.epsilon_0 * lam) / (sc.h * sc.c * 100)
        assert pl.debye_lowering_cm1(te, ne, charge) == pytest.approx(expected, rel=1e-13)
    # e^2 / (4 pi eps0) = 1.44 eV nm (from memory): Delta E[eV] * lambda_D[nm] = 1.44 for z+1 = 1
    d_ev = pl.debye_lowering_cm1(te, ne, 1) * sc.h * sc.c * 100 / sc.e
    assert d_ev * lam * 1e9 == pytest.approx(1.44, rel=2e-3)


def test_inglis_teller_published_relation():
    # Inglis & Teller 1939, ApJ 90, 439: log10 N[cm-3] = 23.26 - 7.5 log10 n_max
    for n_max in (5.0, 10.0, 20.0, 40.0):
        ne_cm3 = 10 ** (23.26 - 7.5 * math.log10(n_max))
        assert pl.inglis_teller_n_max(ne_cm3 * 1e6) == pytest.approx(n_max, rel=1e-12)
    # the constant is N n^7.5 = 0.027 a0^-3 of the same paper (as quoted in reviews, from memory),
    # with the Bohr radius from CODATA: log10(0.027 / a0[cm]^3) = 23.2606
    a0_cm = sc.physical_constants["Bohr radius"][0] * 100
    ne = 1e21
    n = pl.inglis_teller_n_max(ne)
    assert ne * 1e-6 * n**7.5 == pytest.approx(0.027 / a0_cm**3, rel=2e-3)  # 23.26 is rounded to 0.01 dex


def test_inglis_teller_charge_scaling_from_stark_merging():
    # The generalisation to a core of charge Z follows from the merging argument: the linear
    # Stark half-splitting (3/2) n^2 e a0 F / Z equals half the spacing 2 Z^2 Ry / n^3 in the
    # normal field F0 = 2.61 e N^(2/3) / (4 pi eps0) (Holtsmark; Griem 1997).
    # Solve that condition numerically for Z = 1, 2, 3 and compare the ratios of n_max.
    ry = sc.physical_constants["Rydberg constant times hc in J"][0]
    a0 = sc.physical_constants["Bohr radius"][0]
    ne = 1e22

    def n_merge(z):
        f0 = 2.61 * sc.e * ne ** (2 / 3) / (4 * sc.pi * sc.epsilon_0)
        return brentq(lambda n: 1.5 * n**2 * sc.e * a0 * f0 / z - z**2 * ry / n**3, 1.0, 1e4)

    for z in (2, 3):
        expected_ratio = n_merge(z) / n_merge(1)
        got_ratio = pl.inglis_teller_n_max(ne, z) / pl.inglis_teller_n_max(ne, 1)
        assert got_ratio == pytest.approx(expected_ratio, rel=1e-9)


def test_plasma_cutoff_methods_consistent_and_described():
    te, ne = 11604.518, 1e22
    d = pl.plasma_cutoff(te, ne, 1, method="debye")
    assert d.method == "debye"
    assert d.lowering_cm1 == pytest.approx(pl.debye_lowering_cm1(te, ne, 1))
    assert d.n_max == pytest.approx(math.sqrt(sc.Rydberg / 100 / d.lowering_cm1))
    assert "Debye" in d.description and "cm-1" in d.description
    it = pl.plasma_cutoff(te, ne, 2, method="inglis-teller")
    assert it.n_max == pytest.approx(pl.inglis_teller_n_max(ne, 2))
    assert it.lowering_cm1 == pytest.approx(sc.Rydberg / 100 * 4 / it.n_max**2)
    none = pl.plasma_cutoff(te, ne, 1, method="none")
    assert none.lowering_cm1 == 0.0 and none.n_max is None
    with pytest.raises(PhysicsInputError, match="unknown cutoff method"):
        pl.plasma_cutoff(te, ne, 1, method="bogus")


# ----------------------------------------------------------------------------- emission, optical depth


def test_line_emissivity_formula():
    n_u, a, sigma = 3e15, 4.41e7, 15233.07
    # eps = n_u A h nu / (4 pi), nu = c * 100 * sigma (Griem 1997)
    expected = n_u * a * sc.h * sc.c * 100 * sigma / (4 * sc.pi)
    assert float(pl.line_emissivity(n_u, a, sigma)) == pytest.approx(expected, rel=1e-14)


def test_line_center_optical_depth_against_gaussian_written_in_sigma():
    n_l, f, lam, dlam, length = 2e17, 0.641, 656.28e-9, 3.2e-12, 0.02
    # pi e^2/(m_e c) = 0.02654 cm^2 s^-1 in Gaussian units (from memory) = 2.654e-6 m^2 s^-1 in SI
    sigma_int = sc.e**2 / (4 * sc.epsilon_0 * sc.m_e * sc.c)
    assert sigma_int == pytest.approx(2.654e-6, rel=1e-3)
    # Gaussian in frequency with standard deviation s_nu = dnu / (2 sqrt(2 ln 2)), peak 1/(s_nu sqrt(2 pi))
    dnu = sc.c * dlam / lam**2
    s_nu = dnu / (2 * math.sqrt(2 * math.log(2)))
    # integral over the line of the absorption coefficient recovers sigma_int f n_l (quadrature)
    integral = quad(lambda v: math.exp(-0.5 * (v / s_nu) ** 2) / (s_nu * math.sqrt(2 * math.pi)),
                    -10 * s_nu, 10 * s_nu)[0]
    assert integral == pytest.approx(1.0, rel=1e-10)
    expected = sigma_int * f * n_l * length / (s_nu * math.sqrt(2 * math.pi))
    assert float(pl.line_center_optical_depth(n_l, f, lam, dlam, length)) == pytest.approx(expected, rel=1e-12)
    # stimulated emission: tau * (1 - g_l n_u / (g_u n_l))
    tau_se = pl.line_center_optical_depth(n_l, f, lam, dlam, length, g_lower=8, g_upper=18, upper_population_m3=1e17)
    assert float(tau_se) == pytest.approx(expected * (1 - 8 * 1e17 / (18 * n_l)), rel=1e-12)


def _escape_by_definition(tau0: float) -> float:
    """Escape probability from the definition: uniform emission in depth z in [0, 1], frequency x
    with Doppler profile exp(-x^2)/sqrt(pi), optical depth tau0 exp(-x^2) through the slab; the
    isotropic average over direction cosines toward the nearer face is E2(tau z)/2 (definition
    of the exponential integral E2 = int_0^1 exp(-t/mu) dmu, Abramowitz & Stegun 5.1.4)."""

    def over_z(tau):
        f = lambda z: 0.5 * (expn(2, tau * z) + expn(2, tau * (1 - z)))  # noqa: E731
        return quad(f, 0.0, 1.0, epsabs=1e-12, points=[0.5], limit=200)[0]

    g = lambda x: math.exp(-x * x) / math.sqrt(math.pi) * over_z(tau0 * math.exp(-x * x))  # noqa: E731
    return 2.0 * quad(g, 0.0, 8.0, epsabs=1e-11, limit=200)[0]


@pytest.mark.parametrize("tau0", [0.1, 2.0, 30.0])
def test_escape_factor_slab_against_definition(tau0):
    assert float(pl.escape_factor(tau0)) == pytest.approx(_escape_by_definition(tau0), rel=1e-6)


def test_escape_factor_monochromatic_and_limits():
    # single frequency: P(T) = (1/T) int_0^1 int_0^1 (1/2)[exp(-T z/mu) + exp(-T(1-z)/mu)] dmu dz
    for t in (1e-3, 0.5, 5.0):
        inner = lambda z, t=t: quad(lambda mu: 0.5 * (math.exp(-t * z / mu) + math.exp(-t * (1 - z) / mu)),  # noqa: E731
                                    0, 1)[0]
        expected = quad(inner, 0, 1, limit=200)[0]
        assert float(pl.escape_factor(t, kind="slab-monochromatic")) == pytest.approx(expected, rel=1e-7)
    assert pl.escape_factor([0.0])[0] == pytest.approx(1.0, abs=1e-12)
    # optically thick monochromatic slab: P -> 1/(2T) (half the photons come from each surface layer)
    assert float(pl.escape_factor(1e6, kind="slab-monochromatic")) == pytest.approx(0.5e-6, rel=1e-5)


# ----------------------------------------------------------------------------- validation


@pytest.mark.parametrize("te", [0.0, -5.0, float("nan"), float("inf")])
def test_bad_temperature_rejected(te):
    with pytest.raises(PhysicsInputError, match="temperature"):
        pl.boltzmann_populations([0.0], [1.0], te)
    with pytest.raises(PhysicsInputError, match="temperature"):
        pl.saha_ratio(te, 1e20, 1, 1, 1e5)


@pytest.mark.parametrize("ne", [1e5, 1e33, -1.0, 0.0])
def test_density_out_of_range_rejected(ne):
    with pytest.raises(PhysicsInputError, match="electron density must lie in 1e\\+06..1e\\+32 m-3"):
        pl.debye_length_m(1e4, ne)
    with pytest.raises(PhysicsInputError, match="electron density"):
        pl.ionization_balance(1e4, ne, [1, 1], [1e5])


def test_negative_statistical_weight_rejected():
    with pytest.raises(PhysicsInputError, match="statistical weights"):
        pl.partition_function([0.0, 100.0], [1.0, -3.0], 5000.0)
    with pytest.raises(PhysicsInputError, match="statistical weights"):
        pl.boltzmann_populations([0.0, 100.0], [1.0, -3.0], 5000.0)


def test_other_validation():
    with pytest.raises(PhysicsInputError, match="charge_after"):
        pl.debye_lowering_cm1(1e4, 1e20, 0)
    with pytest.raises(PhysicsInputError, match="one more entry"):
        pl.ionization_balance(1e4, 1e20, [1, 1], [1e5, 2e5])
    with pytest.raises(PhysicsInputError, match="needs ionization_cm1"):
        pl.partition_function([0.0], [1.0], 5000.0, lowering_cm1=5.0)
    with pytest.raises(PhysicsInputError, match="tau0"):
        pl.escape_factor(-1.0)
    with pytest.raises(PhysicsInputError, match="together"):
        pl.line_center_optical_depth(1e16, 0.5, 5e-7, 1e-12, 0.01, g_lower=2)
