"""Isotope masses against a second, independent library (mendeleev)."""

import pytest

from levels.errors import NotationError, NotFoundError
from levels.isotopes import default_isotope, isotope, nuclear_mass_u
from levels.units import M_E_U


@pytest.mark.parametrize("z, a", [(1, 1), (1, 2), (1, 3), (2, 3), (2, 4), (6, 12), (26, 56), (92, 238)])
def test_atomic_masses_agree_with_mendeleev(z, a):
    # mendeleev isotope table (masses from the Atomic Mass Evaluation, via mendeleev's data)
    from mendeleev import element

    reference = {iso.mass_number: iso.mass for iso in element(z).isotopes}[a]
    assert isotope(z, a).atomic_mass_u == pytest.approx(reference, rel=2e-9, abs=2e-6)


def test_carbon_12_is_exactly_12_u():
    # definition of the unified atomic mass unit (SI Brochure, 9th edition)
    assert isotope(6, 12).atomic_mass_u == pytest.approx(12.0, abs=1e-9)


def test_proton_and_deuteron_masses_match_codata():
    import scipy.constants as sc

    # CODATA proton and deuteron masses in u, through scipy.constants
    proton = sc.physical_constants["proton mass in u"][0]
    deuteron = sc.physical_constants["deuteron mass in u"][0]
    assert isotope(1, 1).nuclear_mass_u == pytest.approx(proton, rel=1e-10)
    assert isotope(1, 2).nuclear_mass_u == pytest.approx(deuteron, rel=1e-10)


def test_alpha_particle_mass_matches_codata():
    import scipy.constants as sc

    from levels.isotopes import EV_IN_U

    # CODATA alpha particle mass in u. The electron binding of He (79 eV) enters
    # through the Lunney et al. fit, documented as good to 5 %: allow 5 % of 79 eV.
    alpha = sc.physical_constants["alpha particle mass in u"][0]
    assert isotope(2, 4).nuclear_mass_u == pytest.approx(alpha, abs=0.05 * 79.0 * EV_IN_U)


@pytest.mark.parametrize("z", [2, 6, 10, 26, 47])
def test_electron_binding_fit_against_summed_ionization_energies(z):
    # total binding = sum of all successive ionization energies (mendeleev's tables)
    from mendeleev import element

    from levels.isotopes import electron_binding_ev

    total = sum(element(z).ionenergies.values())
    assert electron_binding_ev(z) == pytest.approx(total, rel=0.05)


def test_nuclear_mass_subtracts_electrons_and_adds_binding():
    from levels.isotopes import EV_IN_U, electron_binding_ev

    m = nuclear_mass_u(56.0, 26)
    assert m == pytest.approx(56.0 - 26 * M_E_U + electron_binding_ev(26) * EV_IN_U, rel=1e-15)


@pytest.mark.parametrize("z, a", [(1, 1), (2, 4), (6, 12), (26, 56), (10, 20), (92, 238), (43, 98)])
def test_default_isotopes(z, a):
    # most abundant natural isotopes (IUPAC isotopic compositions); Tc has none, nearest standard mass
    assert default_isotope(z).mass_number == a


def test_unknown_isotope_and_element():
    with pytest.raises(NotFoundError, match="Fe-500"):
        isotope(26, 500)
    with pytest.raises(NotationError):
        isotope(119)
