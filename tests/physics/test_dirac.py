"""Tests of levels.physics.one_electron.dirac (one-electron energies) and levels.physics.one_electron.nuclear.

Every reference value carries its source. The precision targets are checks of the
whole theory against measurements: hydrogen 1S-2S, the 2S-2P Lamb shift, the H-D
isotope shift, and reference ionization energies of one-electron ions.
"""

from __future__ import annotations

import math

import numpy as np
import periodictable
import pytest
import scipy.constants as sc
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import solve_ivp
from scipy.optimize import brentq
from sympy.physics.hydrogen import E_nl, E_nl_dirac

from levels.errors import PhysicsInputError, QuantumNumberError
from levels.physics.one_electron import dirac
from levels.physics.one_electron.dirac import (
    MEC2_HZ,
    Corrections,
    bethe_logarithm,
    charge_radius_fm,
    dirac_point_energy,
    ionization_energy_cm1,
    ionization_energy_hz,
    level_contributions_hz,
    level_energies_cm1,
    level_energies_hz,
)
from levels.physics.one_electron.nuclear import (
    ANGELI_MARINOVA_2013,
    fallback_charge_radius_fm,
    nuclear_mass_u,
    nuclear_polarization_1s_hz,
)
from levels.units import ALPHA, CM1_HZ, LAMBDA_C_BAR

EV_PER_HZ = sc.h / sc.e  # exact since the 2019 SI


def _nuclear_mass(symbol: str, mass_number: int) -> float:
    """Nuclear mass in u from the periodictable isotope (atomic) mass."""
    element = getattr(periodictable, symbol)
    return nuclear_mass_u(element.number, element[mass_number].mass)


M_H1 = _nuclear_mass("H", 1)
M_H2 = _nuclear_mass("H", 2)


# ------------------------------------------------------------------------------------
# nuclear masses and radii
# ------------------------------------------------------------------------------------


def test_nuclear_mass_from_periodictable_matches_codata_proton_and_deuteron():
    # CODATA (scipy.constants) proton and deuteron masses in u; periodictable's
    # atomic masses minus the electron and its binding must agree to 1e-9 u (the
    # atomic-mass tables' own uncertainty is ~1e-10 u).
    assert M_H1 == pytest.approx(sc.physical_constants["proton mass in u"][0], abs=1e-9)
    assert M_H2 == pytest.approx(sc.physical_constants["deuteron mass in u"][0], abs=1e-9)
    # alpha particle: CODATA via scipy. Here the electron binding fit (Lunney et al.
    # 2003) gives 75.7 eV against the true 79.0 eV (24.587 + 54.418 eV, the He I and
    # He II ionization energies, mendeleev), i.e. 3.5e-9 u: the tolerance is 5e-9 u.
    assert _nuclear_mass("He", 4) == pytest.approx(sc.physical_constants["alpha particle mass in u"][0], abs=5e-9)


def test_charge_radius_sources():
    r, src = charge_radius_fm(1, 1)
    assert r == pytest.approx(sc.physical_constants["proton rms charge radius"][0] * 1e15, rel=1e-12)
    assert src.startswith("CODATA")
    r, src = charge_radius_fm(1, 2)
    assert r == pytest.approx(sc.physical_constants["deuteron rms charge radius"][0] * 1e15, rel=1e-12)
    r, src = charge_radius_fm(26, 56)
    assert r == 3.7377  # Angeli & Marinova 2013 (from memory), the table entry itself
    assert "Angeli" in src and "from memory" in src
    r, src = charge_radius_fm(43, 98)  # technetium: not tabulated
    assert r == pytest.approx(0.836 * 98 ** (1 / 3) + 0.570)
    assert src.startswith("fallback formula")


def test_fallback_radius_formula_tracks_the_table_for_medium_and_heavy_nuclei():
    # Johnson & Soff 1985 fitted the formula to measured radii of medium and heavy
    # nuclei. Against the tabulated radii (Angeli & Marinova 2013, from memory) with
    # A >= 40 its rms deviation should be within 2 % and no nucleus off by more than
    # 5 % (common practice, no source): a smooth A^(1/3) law misses shell and isotope
    # effects of that size (Ca-48 has the radius of Ca-40, 3.8 % below the law).
    devs = np.array(
        [fallback_charge_radius_fm(a) / r - 1 for (z, a), (r, _) in ANGELI_MARINOVA_2013.items() if a >= 40]
    )
    assert devs.size >= 15
    assert np.sqrt(np.mean(devs**2)) < 0.02
    assert np.max(np.abs(devs)) < 0.05


def test_required_table_entries_present():
    for key in [(1, 1), (1, 2), (1, 3), (2, 3), (2, 4), (3, 6), (3, 7), (6, 12), (7, 14), (8, 16),
                (10, 20), (18, 40), (26, 56), (92, 238)]:
        assert key in ANGELI_MARINOVA_2013


@pytest.mark.parametrize(("z", "a"), [(0, 1), (119, 300), (2, 1)])
def test_charge_radius_rejects_bad_nuclei(z, a):
    with pytest.raises(QuantumNumberError):
        charge_radius_fm(z, a)


# ------------------------------------------------------------------------------------
# Dirac energies: sympy.physics.hydrogen
# ------------------------------------------------------------------------------------


@pytest.mark.parametrize("z", [1, 2, 26, 92])
@pytest.mark.parametrize(("n", "l", "two_j"),
                         [(1, 0, 1), (2, 0, 1), (2, 1, 1), (2, 1, 3), (3, 2, 3), (3, 2, 5), (7, 4, 9)])
def test_dirac_point_energy_matches_sympy_E_nl_dirac(z, n, l, two_j):
    # sympy.physics.hydrogen.E_nl_dirac(n, l, spin_up, Z, c): binding energy in
    # hartree, rest energy excluded, c the speed of light in atomic units; spin_up
    # means j = l + 1/2. c is given as a 40-digit Float so sympy keeps precision.
    c = sympy.Float(1.0 / ALPHA, 40)
    ref = float(E_nl_dirac(n, l, spin_up=(two_j == 2 * l + 1), Z=z, c=c))
    ours = float(dirac_point_energy(z, n, l, two_j))
    assert ours == pytest.approx(ref, rel=1e-12)


@pytest.mark.parametrize("n", [1, 2, 5, 20])
def test_non_relativistic_limit_is_bohr_energy(n):
    # sympy.physics.hydrogen.E_nl: -Z^2/(2 n^2) hartree. With alpha -> 1e-7 the Dirac
    # binding energy must approach it; the fine-structure term is of relative size
    # (Z alpha)^2 < 1e-10 here.
    z = 3
    ref = float(E_nl(n, z))
    ours = float(dirac_point_energy(z, n, 0, 1, alpha=1e-7))
    assert ours == pytest.approx(ref, rel=1e-11)


@pytest.mark.parametrize(("z", "n", "l", "two_j"), [(1, 2, 1, 3), (10, 3, 0, 1), (26, 4, 3, 5)])
def test_dirac_minus_alpha2_expansion_is_order_alpha4(z, n, l, two_j):
    # Bohr energy (sympy E_nl) plus the textbook fine-structure term
    # -(Z^4 alpha^2 / 2 n^4) (n/(j+1/2) - 3/4) hartree; the rest is O((Z alpha)^4 Z^2/n^3),
    # bounded here by (Z alpha)^4 Z^2 / n^3 hartree (coefficients of the next term are < 1).
    x = z * ALPHA
    bohr = float(E_nl(n, z))
    fs = -(z**4) * ALPHA**2 / (2 * n**4) * (n / ((two_j + 1) / 2) - 0.75)
    rest = float(dirac_point_energy(z, n, l, two_j)) - bohr - fs
    assert abs(rest) < x**4 * z**2 / n**3
    assert abs(rest) > 1e-3 * x**4 * z**2 / n**6  # the alpha^4 term is really there


def test_dirac_f_units_agree():
    e_h = dirac_point_energy(5, 3, 1, 3, unit="hartree")
    e_m = dirac_point_energy(5, 3, 1, 3, unit="mc2")
    f = dirac_point_energy(5, 3, 1, 3, unit="f")
    assert e_h * ALPHA**2 == pytest.approx(e_m, rel=1e-14)
    assert f - 1 == pytest.approx(e_m, rel=1e-9)
    with pytest.raises(PhysicsInputError):
        dirac_point_energy(1, 1, 0, 1, unit="eV")


def test_corrections_off_gives_point_dirac_energy_in_hz():
    # The same sympy reference, through the public level API in Hz (hartree = 2 R_inf c h).
    c = sympy.Float(1.0 / ALPHA, 40)
    ref_hartree = float(E_nl_dirac(2, 1, spin_up=False, Z=6, c=c))
    ours = float(level_energies_hz(6, 2, 1, 1, nuclear_mass_u=12.0, corrections=Corrections.none()))
    rydberg_hz = sc.physical_constants["Rydberg constant times c in Hz"][0]
    assert ours == pytest.approx(ref_hartree * 2 * rydberg_hz, rel=1e-12)


# ------------------------------------------------------------------------------------
# precision targets
# ------------------------------------------------------------------------------------


def _hydrogen(n, l, two_j, mass=M_H1, **kw):
    return level_energies_hz(1, n, l, two_j, nuclear_mass_u=mass, **kw)


def test_hydrogen_1s_2s_interval():
    # Parthey et al. 2011, PRL 107, 203001: f(1S-2S) hyperfine centroid
    # 2 466 061 413 187.035(10) kHz. Target: within 3 MHz. Achieved: about -4.6 kHz;
    # the largest omitted term, the two-loop B60 (about +5 kHz here), is listed in
    # the module notes. We assert 10 kHz, which the omitted terms (B60 ~ 5 kHz,
    # three-loop ~ 1.4 kHz) and the CODATA R_inf and r_p uncertainties (2.7 and
    # 1.5 kHz) together allow.
    e = _hydrogen([1, 2], 0, 1)
    interval_khz = (e[1] - e[0]) / 1e3
    assert abs(interval_khz - 2466061413187.035) < 10.0


def test_hydrogen_1s_2s_needs_qed_beyond_leading_order():
    # Parthey et al. 2011 again: the leading terms alone (Dirac, reduced mass,
    # A41/A40/A50, Uehling V40/V50, leading finite size) reach the 3 MHz target
    # but miss the 10 kHz level, so the higher-order terms are doing real work.
    e = _hydrogen([1, 2], 0, 1, corrections=Corrections(higher_order=False))
    interval_khz = (e[1] - e[0]) / 1e3
    assert abs(interval_khz - 2466061413187.035) > 100.0  # Parthey et al. 2011
    assert abs(interval_khz - 2466061413187.035) < 3000.0  # the leading terms reach 3 MHz


def test_hydrogen_2s_2p_lamb_shift():
    # Bezginov et al. 2019, Science 365, 1007: 2S1/2 - 2P1/2 = 1057.829(3) MHz
    # (1057.83 MHz). Target: within 1 MHz. Achieved: +3.5 kHz from 1057.829.
    e = _hydrogen(2, [0, 1], 1)
    lamb_mhz = (e[0] - e[1]) / 1e6
    assert abs(lamb_mhz - 1057.83) < 1.0
    assert abs(lamb_mhz - 1057.829) < 0.010  # 10 kHz: B60 and radius uncertainty are < 2 kHz here


def test_hydrogen_ionization_energy():
    # mendeleev.element('H').ionenergies[1] = 13.598434599702 eV (mendeleev's
    # value); eV from Hz with h/e of scipy's CODATA (exact). Target 2e-9 relative.
    mendeleev = pytest.importorskip("mendeleev")
    ref_ev = mendeleev.element("H").ionenergies[1]
    ours_ev = ionization_energy_hz(1, nuclear_mass_u=M_H1) * EV_PER_HZ
    assert ours_ev == pytest.approx(ref_ev, rel=2e-9)
    # cm-1 and Hz variants agree
    assert ionization_energy_cm1(1, nuclear_mass_u=M_H1) * CM1_HZ == pytest.approx(
        ionization_energy_hz(1, nuclear_mass_u=M_H1), rel=1e-15
    )


@pytest.mark.parametrize(
    ("symbol", "mass_number", "rel"),
    [("He", 4, 1e-6), ("Li", 7, 1e-6), ("C", 12, 1e-6), ("O", 16, 5e-6), ("Ne", 20, 5e-6)],
)
def test_one_electron_ionization_energies_against_mendeleev(symbol, mass_number, rel):
    # mendeleev: element(sym).ionenergies[Z] in eV (the one-electron ion's ionization
    # energy); most abundant isotope. Targets: He, Li, C 1e-6; O, Ne 5e-6.
    # Achieved: He 1.9e-10, Li 1.5e-9, C 4.6e-8, O 1.9e-7, Ne 5.4e-7.
    mendeleev = pytest.importorskip("mendeleev")
    element = mendeleev.element(symbol)
    z = element.atomic_number
    ref_ev = element.ionenergies[z]
    ours_ev = ionization_energy_hz(z, nuclear_mass_u=_nuclear_mass(symbol, mass_number)) * EV_PER_HZ
    assert ours_ev == pytest.approx(ref_ev, rel=rel)


@pytest.mark.parametrize(("symbol", "mass_number"), [("Ar", 40), ("Fe", 56)])
def test_argon_and_iron_residuals(symbol, mass_number):
    """Residual of the Ar17+ and Fe25+ ionization energies against mendeleev.

    Achieved: Ar -0.44 meV (-1.0e-7), Fe +0.034 eV (+3.7e-6, the computed
    ionization energy too large). Without the all-order self-energy remainder
    (A60 alone) they were +0.040 eV and +0.49 eV: the remainder G_SE(Zα) - A60
    is the term that explains those, and what is left comes from the terms the
    module takes only to a finite order in Zα. Bound (common practice, no
    source: the error of a truncated series is below its last included term),
    the linear sum of

    * vacuum polarisation: the last Uehling term, |V60| (Zα)^6 α/π m_e c^2
      (V60(1s) = -0.618724, CODATA 2006, from memory);
    * two-loop: the last term whose coefficient is a number, |B50| (Zα)^5 (α/π)^2
      m_e c^2 (B50 = -21.55447, from memory);
    * one-loop self energy: the linear interpolation of G_SE(1s, Zα) between
      its nodes, bounded by |second divided difference| h^2/8 times the nodes'
      spacing h (0.2 here) times (Zα)^6 α/π m_e c^2;
    * mendeleev's rounding, 1e-4 eV.
    This comes to 0.0074 eV for Ar and 0.060 eV for Fe.
    """
    mendeleev = pytest.importorskip("mendeleev")
    element = mendeleev.element(symbol)
    z = element.atomic_number
    ref_ev = element.ionenergies[z]  # mendeleev, eV (0.1 meV rounding)
    mass = _nuclear_mass(symbol, mass_number)
    ours_ev = ionization_energy_hz(z, nuclear_mass_u=mass) * EV_PER_HZ
    x = z * ALPHA
    mc2_ev = MEC2_HZ * EV_PER_HZ
    vp_last = 0.618724 * ALPHA / math.pi * x**6 * mc2_ev
    two_loop_last = 21.55447 * (ALPHA / math.pi) ** 2 * x**5 * mc2_ev
    zs, dg = dirac._DG_Z, dirac._DG_1S
    second = max(
        abs((dg[i + 1] - dg[i]) / (zs[i + 1] - zs[i]) - (dg[i] - dg[i - 1]) / (zs[i] - zs[i - 1]))
        / (zs[i + 1] - zs[i - 1])
        * 2
        for i in range(2, 4)
    )
    interpolation = second * 10.0**2 / 8 * ALPHA / math.pi * x**6 * mc2_ev
    bound = vp_last + two_loop_last + interpolation + 1e-4
    assert abs(ours_ev - ref_ev) < bound
    # and the remainder is what was missing: with A60 alone the residual is
    # positive and larger than this bound
    without = ours_ev + float(
        level_contributions_hz(z, 1, 0, 1, nuclear_mass_u=mass)["self_energy_higher_order"]
        - _a60_only_self_energy_higher_order(z, mass)
    ) * EV_PER_HZ
    assert without - ref_ev > bound


def _a60_only_self_energy_higher_order(z: int, mass: float) -> float:
    """A62, A61 and A60 terms of the 1s level with G_SE = A60 (CODATA 2006 eq. (33),
    coefficients from memory), in Hz, computed independently of the module."""
    x = z * ALPHA
    mu = 1.0 / (1.0 + sc.physical_constants["electron mass in u"][0] / mass)
    big_l = math.log(x**-2 / mu)
    a61 = 4.0 + 28.0 / 3.0 * math.log(2) - 601.0 / 180.0 - 77.0 / 45.0
    return ALPHA / math.pi * x**6 * mu**3 * (-(big_l**2) + a61 * big_l - 30.92414946) * MEC2_HZ


def test_deuterium_isotope_shift():
    """H-D 1S-2S isotope shift.

    Parthey et al. 2010, PRL 104, 233001: 670 994 334.606(15) kHz (hyperfine
    centroids). Achieved: -13.6 kHz. The reduced mass gives 671.004 GHz of it, the
    nuclear size -5.24 MHz, the (Zα)^5 recoil +1.03 MHz, the deuteron
    polarisability +18.7 kHz.

    Bound 16 kHz, the linear sum of what this theory does not settle for the
    isotope shift: the (Zα)^4 (m_e/m_N)^2 Darwin-Foldy-type recoil term, whose
    form for a spin-1 nucleus (and hence the convention of the deuteron radius) we
    do not model, 11.4 kHz; CODATA 2022 r_d and r_p uncertainties, 1.6 + 1.5 kHz;
    radiative and third-Zemach-moment finite-size corrections, about 1.5 kHz.
    """
    iso = (
        np.diff(_hydrogen([1, 2], 0, 1, mass=M_H2))[0] - np.diff(_hydrogen([1, 2], 0, 1))[0]
    ) / 1e3
    assert abs(iso - 670994334.606) < 16.0
    # the nuclear-size part is needed: without it the shift misses by > 5 MHz
    iso_point = (
        np.diff(_hydrogen([1, 2], 0, 1, mass=M_H2, corrections=Corrections(finite_size=False)))[0]
        - np.diff(_hydrogen([1, 2], 0, 1, corrections=Corrections(finite_size=False)))[0]
    ) / 1e3
    assert abs(iso_point - 670994334.606) > 5000.0
    # the reduced mass alone (Dirac + reduced mass and Barker-Glover) gives the shift to 2e-5
    only_mass = Corrections(self_energy=False, vacuum_polarization=False, finite_size=False, higher_order=False)
    iso_mass = (
        np.diff(_hydrogen([1, 2], 0, 1, mass=M_H2, corrections=only_mass))[0]
        - np.diff(_hydrogen([1, 2], 0, 1, corrections=only_mass))[0]
    ) / 1e3
    assert iso_mass == pytest.approx(670994334.606, rel=2e-5)


# ------------------------------------------------------------------------------------
# finite nuclear size against an independent numerical solution of the Dirac equation
# ------------------------------------------------------------------------------------


def _sphere_eigenvalue(x: float, radius: float, kappa: int, bracket: tuple[float, float]) -> float:
    """Bound-state energy (units of m c^2, rest energy included) of the radial Dirac
    equation for a uniformly charged sphere of radius ``radius`` (units of the
    reduced Compton wavelength), by outward shooting on a logarithmic grid."""
    v0 = -1.5 * x / radius

    def shoot(energy: float) -> float:
        lam = math.sqrt(1.0 - energy * energy)

        def rhs(t, y):
            r = math.exp(t)
            v = -x * (3.0 - r * r / radius**2) / (2.0 * radius) if r < radius else -x / r
            p, q = y
            return [r * (-(kappa / r) * p + (energy + 1.0 - v) * q), r * ((kappa / r) * q - (energy - 1.0 - v) * p)]

        r0 = 1e-6 * radius
        if kappa < 0:
            y0 = [r0, -(energy - 1.0 - v0) * r0**2 / 3.0]
        else:
            y0 = [(energy + 1.0 - v0) * r0**2 / 3.0, r0]
        inner = solve_ivp(rhs, [math.log(r0), math.log(radius)], y0, method="DOP853", rtol=1e-12, atol=1e-30)
        outer = solve_ivp(
            rhs, [math.log(radius), math.log(30.0 / lam)], inner.y[:, -1], method="DOP853", rtol=1e-12, atol=1e-300
        )
        return outer.y[0, -1]

    return brentq(shoot, *bracket, xtol=1e-15)


@pytest.mark.slow
@pytest.mark.parametrize(("z", "n", "l", "two_j", "rel"),
                         [(92, 1, 0, 1, 0.005), (92, 2, 1, 1, 0.03), (50, 2, 0, 1, 0.005)])
def test_finite_size_against_numerical_dirac_solution(z, n, l, two_j, rel):
    # Independent check (no published number): the eigenvalue of the Dirac equation
    # with a uniformly charged sphere, minus the point-nucleus eigenvalue, against
    # the module's finite-size term with an infinitely heavy nucleus. The radius is
    # that of the table (U-238: 5.8571 fm, Sn-120: 4.6519 fm; Angeli & Marinova
    # 2013, from memory); the sphere radius is sqrt(5/3) r_rms.
    r_fm = {92: 5.8571, 50: 4.6519}[z]
    x = z * ALPHA
    sphere = math.sqrt(5.0 / 3.0) * r_fm * 1e-15 / LAMBDA_C_BAR
    kappa = -1 if two_j == 2 * l + 1 else 1
    e_point = 1.0 + float(dirac_point_energy(z, n, l, two_j, unit="mc2"))
    shift = float(
        level_contributions_hz(
            z, n, l, two_j, nuclear_mass_u=1e30, charge_radius_fm=r_fm,
            corrections=Corrections(recoil=False, self_energy=False, vacuum_polarization=False),
        )["finite_size"]
    ) / MEC2_HZ
    numerical = _sphere_eigenvalue(x, sphere, kappa, (e_point + 0.5 * shift, e_point + 1.5 * shift)) - e_point
    assert shift == pytest.approx(numerical, rel=rel)


@pytest.mark.parametrize(("z", "n", "r_fm", "symbol", "a"), [(1, 1, 0.84075, "H", 1), (2, 1, 1.6755, "He", 4),
                                                        (6, 2, 2.4702, "C", 12), (10, 2, 3.0055, "Ne", 20)])
def test_finite_size_against_codata_formula(z, n, r_fm, symbol, a):
    # CODATA 2006 eqs. (59)-(60) (from memory), s states:
    #   E_NS = E0 {1 - C_eta (m_r/m_e)(r/lambdaC) Z alpha
    #              - [ln((m_r/m_e)(r/lambdaC)(Z alpha/n)) + psi(n) + gamma - (5n+9)(n-1)/(4n^2) - C_theta] (Z alpha)^2}
    #   E0 = 2/3 (m_r/m_e)^3 (Z alpha)^4 / n^3 m_e c^2 (r/lambdaC)^2,
    # evaluated here independently with scipy constants. The leading switch must
    # give E0; the full shift must agree with the bracket evaluated without the
    # model-dependent constants to within their size, |C_theta| (Z alpha)^2 + C_eta
    # (r/lambdaC) Z alpha with C_theta <= 0.5, C_eta <= 2 (CODATA's values for the
    # proton and deuteron: 0.47, 0.38 and 1.7, 2.0; from memory).
    mass = _nuclear_mass(symbol, a)
    mu = 1.0 / (1.0 + sc.physical_constants["electron mass in u"][0] / mass)
    x = z * ALPHA
    rc = r_fm * 1e-15 / sc.physical_constants["reduced Compton wavelength"][0]
    e0_hz = 2 / 3 * mu**3 * x**4 / n**3 * rc**2 * sc.m_e * sc.c**2 / sc.h
    psi_gamma = sum(1.0 / k for k in range(1, n))
    bracket = 1 - (math.log(mu * rc * x / n) + psi_gamma - (5 * n + 9) * (n - 1) / (4 * n * n)) * x * x
    lead = level_contributions_hz(
        z, n, 0, 1, nuclear_mass_u=mass, charge_radius_fm=r_fm, corrections=Corrections(higher_order=False)
    )["finite_size"]
    full = level_contributions_hz(z, n, 0, 1, nuclear_mass_u=mass, charge_radius_fm=r_fm)["finite_size"]
    assert float(lead) == pytest.approx(e0_hz, rel=1e-9)
    assert float(full) == pytest.approx(e0_hz * bracket, rel=0.5 * x * x + 2.0 * rc * x)


def test_finite_size_p_half_state_codata():
    # CODATA 2006 eq. (61) (from memory): nP1/2: E_NS = E0 (Z alpha)^2 (n^2 - 1)/(4 n^2),
    # E0 as for s states; p3/2 states have none at this order. The relative
    # correction of next order is (Z alpha)^2 ln(Z alpha r/lambdaC) (2.6e-3 for He+,
    # 5.6e-2 for Ne9+): tested at Z = 2 to 1 %.
    z, n, r_fm, mass = 2, 2, 1.6755, _nuclear_mass("He", 4)
    mu = 1.0 / (1.0 + sc.physical_constants["electron mass in u"][0] / mass)
    x = z * ALPHA
    rc = r_fm * 1e-15 / sc.physical_constants["reduced Compton wavelength"][0]
    e0_hz = 2 / 3 * mu**3 * x**4 / n**3 * rc**2 * sc.m_e * sc.c**2 / sc.h
    c = level_contributions_hz(z, n, 1, [1, 3], nuclear_mass_u=mass, charge_radius_fm=r_fm)["finite_size"]
    assert c[0] == pytest.approx(e0_hz * x * x * (n * n - 1) / (4 * n * n), rel=0.01)
    # p3/2: suppressed relative to p1/2 by about (R/lambdaC)^2 = 3e-5 (R the sphere radius)
    assert 0 < c[1] < 1e-4 * c[0]


def test_nuclear_polarization_only_for_tabulated_nuclei():
    c_d = level_contributions_hz(1, [1, 2], 0, 1, nuclear_mass_u=M_H2)
    # Friar & Payne 1997 (from memory): -21.37 kHz for D 1S, scaling as 1/n^3
    assert c_d["nuclear_polarization"] == pytest.approx([-21370.0, -21370.0 / 8])
    assert nuclear_polarization_1s_hz(2, 4) == 0.0
    assert "nuclear_polarization" not in level_contributions_hz(2, 1, 0, 1, nuclear_mass_u=4.0015)


# ------------------------------------------------------------------------------------
# QED coefficients against independent evaluations
# ------------------------------------------------------------------------------------


def _uehling_1s_all_orders(z: int) -> float:
    """<1s|V_Uehling|1s> in units of m_e c^2, point nucleus, Dirac 1s density
    rho(r) = (2x)^(2g+1)/Gamma(2g+1) r^(2g-2) e^(-2xr) and the Uehling potential
    V(r) = -(2 alpha/(3 pi)) (x/r) int_1^inf dt e^(-2tr) (1 + 1/(2t^2)) sqrt(t^2-1)/t^2
    (Uehling 1935; Berestetskii, Lifshitz & Pitaevskii §114); the r integral is
    done in closed form, the t integral numerically."""
    from scipy.integrate import quad

    x = z * ALPHA
    g = math.sqrt(1.0 - x * x)

    def integrand(t: float) -> float:
        return (1.0 + 0.5 / t**2) * math.sqrt(t * t - 1.0) / t**2 * (2.0 * x + 2.0 * t) ** (-2.0 * g)

    integral = quad(integrand, 1.0, math.inf, epsabs=0.0, epsrel=1e-13, limit=500)[0]
    return -(2.0 * ALPHA * x / (3.0 * math.pi)) * (2.0 * x) ** (2.0 * g + 1.0) / (2.0 * g) * integral


def test_uehling_expansion_matches_all_order_uehling_at_z1():
    # The module's V40 + V50 x + V61 x^2 ln x^-2 + V60 x^2 (CODATA 2006, from memory)
    # against the all-order Uehling expectation value at Z = 1: the next term,
    # (Z alpha)^7, is below 1e-6 of the total, so this checks V50, V61 and V60(1S).
    no_recoil = Corrections(recoil=False, self_energy=False, finite_size=False)
    c = level_contributions_hz(1, 1, 0, 1, nuclear_mass_u=1.0, corrections=no_recoil)
    wk = (19 / 45 - math.pi**2 / 27) * ALPHA**2 + (1 / 16 - 31 * math.pi**2 / 2880) * math.pi * ALPHA**3
    muon = -4 / 15 * (1 / sc.physical_constants["muon-electron mass ratio"][0]) ** 2 * 1.671
    ours = float(c["vacuum_polarization"] + c["vacuum_polarization_higher_order"]) / MEC2_HZ
    ours -= ALPHA**5 / math.pi * (wk + muon)  # keep the electron Uehling part only
    assert ours == pytest.approx(_uehling_1s_all_orders(1), rel=1e-8)
    # and at Z = 26 the truncation error is what the Ar/Fe bound allows (< |V60| x^2)
    c26 = level_contributions_hz(26, 1, 0, 1, nuclear_mass_u=55.92, corrections=no_recoil)
    x = 26 * ALPHA
    scale = ALPHA / math.pi * x**4
    wk26 = (19 / 45 - math.pi**2 / 27) * x**2 + (1 / 16 - 31 * math.pi**2 / 2880) * math.pi * x**3
    ours26 = (float(c26["vacuum_polarization"] + c26["vacuum_polarization_higher_order"]) / MEC2_HZ
              - scale * (wk26 + muon))
    assert abs(ours26 - _uehling_1s_all_orders(26)) < 0.618724 * x**2 * scale


def test_self_energy_assembly_reproduces_all_order_value_at_z1():
    # Mohr's all-order one-loop self energy of hydrogen 1s, F(alpha) = 10.316 793 650
    # (Jentschura, Mohr & Soff 1999, PRL 82, 53; from memory), against the module's
    # A41 + A40 + A50 x + A62, A61 and G_SE(alpha) = -30.29024 (CODATA 2006, from
    # memory) for an infinitely heavy nucleus: two recalled numbers tied together by
    # the coefficient formulas, so this checks A61 and A50 as assembled.
    c = level_contributions_hz(1, 1, 0, 1, nuclear_mass_u=1.0, corrections=Corrections(recoil=False))
    f = float(c["self_energy"] + c["self_energy_higher_order"]) / (ALPHA**5 / math.pi * MEC2_HZ)
    assert f == pytest.approx(10.316793650, abs=2e-7)


# ------------------------------------------------------------------------------------
# Bethe logarithms
# ------------------------------------------------------------------------------------


def test_bethe_logarithm_table_values():
    # Drake & Swainson 1990, PRA 41, 1243 (from memory, also quoted in the CODATA
    # 2006 table of Bethe logarithms).
    assert bethe_logarithm(1, 0) == pytest.approx(2.984128556, abs=1e-9)
    assert bethe_logarithm(2, 0) == pytest.approx(2.811769893, abs=1e-9)
    assert bethe_logarithm(2, 1) == pytest.approx(-0.030016709, abs=1e-9)


def test_bethe_extrapolation_reproduces_withheld_table_row():
    # The extrapolation scheme, applied to n = 5, 6, 7 only, must predict the
    # tabulated n = 8 values (Drake & Swainson 1990) for l = 0..4 to 3e-5 absolute.
    for l in range(5):
        rows = [[1.0, n**-2.0, n**-3.0] for n in (5, 6, 7)]
        coef = np.linalg.solve(rows, [float(bethe_logarithm(n, l)) for n in (5, 6, 7)])
        predicted = coef @ [1.0, 8**-2.0, 8**-3.0]
        assert predicted == pytest.approx(float(bethe_logarithm(8, l)), abs=3e-5), l


def test_bethe_high_l_model_against_table():
    # The l >= 7 model, ln k0(l+1, l) (2 - (l+1)^2/n^2), applied to l = 5, 6 with
    # the tabulated circular values, reproduces ln k0(8, 5), ln k0(8, 6) to 5 %.
    for l in (5, 6):
        circ = float(bethe_logarithm(l + 1, l))
        model = circ * (2.0 - (l + 1) ** 2 / 64.0)
        assert model == pytest.approx(float(bethe_logarithm(8, l)), rel=0.05)


def test_bethe_logarithm_continuous_at_table_edge_and_smooth():
    n = np.arange(2, 60)
    for l in (0, 1, 3, 6):
        vals = bethe_logarithm(n[n > l], l)
        assert np.all(np.isfinite(vals))
        # monotonic in n for fixed l (the tabulated rows are)
        assert np.all(np.diff(vals) < 0), l
    high = bethe_logarithm([9, 20, 50], [8, 8, 30])
    assert np.all(high < 0) and np.all(high > -1e-3)


# ------------------------------------------------------------------------------------
# API, validation, switches
# ------------------------------------------------------------------------------------


def test_corrections_dataclass():
    c = Corrections()
    assert c.as_dict() == {
        "recoil": True, "self_energy": True, "vacuum_polarization": True, "finite_size": True, "higher_order": True
    }
    assert not any(Corrections.none().as_dict().values())
    with pytest.raises(AttributeError):
        c.recoil = False  # frozen


def test_each_switch_removes_its_contribution():
    base = dict(nuclear_mass_u=M_H1)
    full = level_contributions_hz(1, 1, 0, 1, **base)
    assert set(full) >= {"dirac", "recoil", "self_energy", "vacuum_polarization", "finite_size", "two_loop"}
    for name, keys in [
        ("recoil", {"recoil", "recoil_higher_order"}),
        ("self_energy", {"self_energy", "self_energy_higher_order", "two_loop"}),
        ("vacuum_polarization", {"vacuum_polarization", "vacuum_polarization_higher_order"}),
        ("finite_size", {"finite_size", "nuclear_polarization"}),
    ]:
        off = level_contributions_hz(1, 1, 0, 1, corrections=Corrections(**{name: False}), **base)
        assert not (keys & set(off)), name
        total_off = float(level_energies_hz(1, 1, 0, 1, corrections=Corrections(**{name: False}), **base))
        assert total_off != float(level_energies_hz(1, 1, 0, 1, **base))


def test_signs_of_the_corrections():
    c = level_contributions_hz(1, [1, 2, 2], [0, 0, 1], [1, 1, 1], nuclear_mass_u=M_H1)
    assert np.all(c["self_energy"][:2] > 0)  # the Lamb shift raises s levels
    assert np.all(c["vacuum_polarization"][:2] < 0)  # Uehling lowers them
    assert np.all(c["finite_size"] >= 0)
    assert np.all(c["recoil"] > 0)  # reduced mass binds less


def test_cm1_is_hz_over_c():
    hz = level_energies_hz(3, [1, 4], [0, 3], [1, 7], nuclear_mass_u=7.0144)
    cm1 = level_energies_cm1(3, [1, 4], [0, 3], [1, 7], nuclear_mass_u=7.0144)
    np.testing.assert_allclose(cm1, hz / (sc.c * 100), rtol=1e-15)


@pytest.mark.parametrize(
    ("args", "fragment"),
    [
        ((0, 1, 0, 1), "1 <= Z <= 118"),
        ((119, 1, 0, 1), "1 <= Z <= 118"),
        ((1, 0, 0, 1), "n >= 1"),
        ((1, 2, 2, 5), "0 <= l < n"),
        ((1, 2, -1, 1), "0 <= l < n"),
        ((1, 2, 1, 5), "two_j"),
        ((1, 2, 0, -1), "two_j"),
        ((1, 2, 1, 2), "two_j"),
        ((1, 2.5, 1, 1), "integer"),
        ((1.5, 2, 1, 1), "integer"),
    ],
)
def test_quantum_number_validation(args, fragment):
    with pytest.raises(QuantumNumberError, match=fragment.replace("(", r"\(")):
        level_energies_cm1(*args, nuclear_mass_u=1.007)


def test_physical_input_validation():
    with pytest.raises(PhysicsInputError):
        level_energies_hz(1, 1, 0, 1, nuclear_mass_u=-1.0)
    with pytest.raises(PhysicsInputError):
        level_energies_hz(1, 1, 0, 1, nuclear_mass_u=1.007, charge_radius_fm=-0.1)
    with pytest.raises(PhysicsInputError):
        level_energies_hz(1, 1, 0, 1, nuclear_mass_u=float("nan"))


def test_default_radius_is_looked_up_from_mass_number():
    m = _nuclear_mass("Fe", 56)
    a = level_energies_hz(26, 1, 0, 1, nuclear_mass_u=m)
    b = level_energies_hz(26, 1, 0, 1, nuclear_mass_u=m, charge_radius_fm=3.7377)
    assert float(a) == float(b)


def test_broadcasting_shapes():
    n = np.arange(1, 6)[:, None]
    out = level_energies_cm1(2, n, 0, 1, nuclear_mass_u=4.0015)
    assert out.shape == (5, 1)
    assert np.all(np.diff(out[:, 0]) > 0)


@st.composite
def _states(draw):
    n = draw(st.integers(1, 40))
    l = draw(st.integers(0, n - 1))
    two_j = draw(st.sampled_from([2 * l + 1] if l == 0 else [2 * l - 1, 2 * l + 1]))
    return n, l, two_j


@settings(max_examples=40, deadline=None)
@given(z=st.integers(1, 118), states=st.lists(_states(), min_size=1, max_size=12))
def test_vectorised_equals_elementwise(z, states):
    n, l, j = (np.array(v) for v in zip(*states))
    mass = 2.0 * z + 1.0
    vec = level_energies_hz(z, n, l, j, nuclear_mass_u=mass)
    single = [float(level_energies_hz(z, a, b, c, nuclear_mass_u=mass)) for a, b, c in states]
    np.testing.assert_allclose(vec, single, rtol=1e-15, atol=0)


@settings(max_examples=40, deadline=None)
@given(z=st.integers(1, 118), n=st.integers(2, 60), data=st.data())
def test_dirac_j_degeneracy_with_corrections_off(z, n, data):
    # Dirac point-nucleus energies depend on n and j only: (l = j - 1/2) and
    # (l = j + 1/2) coincide (2s1/2 = 2p1/2, 3p3/2 = 3d3/2, ...).
    two_j = data.draw(st.sampled_from(list(range(1, 2 * n - 2, 2))))
    l_low, l_high = (two_j - 1) // 2, (two_j + 1) // 2
    e = level_energies_hz(z, n, [l_low, l_high], two_j, nuclear_mass_u=2.5 * z, corrections=Corrections.none())
    assert e[0] == e[1]
    # and the full theory lifts it, the lower-l level lying higher (the Lamb shift
    # of l = j - 1/2 exceeds that of l = j + 1/2). Checked for Z <= 100: above
    # Z = 102 the finite-order (Zα)^6 self energy of p3/2 states, documented as
    # unreliable there, turns this order round for 3p3/2 / 3d3/2 by a few meV.
    if z <= 100:
        full = level_energies_hz(z, n, [l_low, l_high], two_j, nuclear_mass_u=2.0 * z + 1.0)
        assert full[0] > full[1]


def test_million_states_run_vectorised():
    # Performance is measured in tests/bench/bench_dirac.py; here only that a
    # large call works and is finite.
    rng = np.random.default_rng(1)
    n = rng.integers(1, 200, size=200_000)
    l = (rng.random(n.size) * n).astype(int)
    two_j = np.where((l > 0) & (rng.random(n.size) < 0.5), 2 * l - 1, 2 * l + 1)
    out = level_energies_cm1(26, n, l, two_j, nuclear_mass_u=55.92)
    assert out.shape == n.shape and np.all(np.isfinite(out)) and np.all(out < 0)


def test_module_exports():
    for name in dirac.__all__:
        assert hasattr(dirac, name)
