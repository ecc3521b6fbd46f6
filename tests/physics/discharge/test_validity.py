"""McWhirter's LTE criterion against its formula."""

import pytest
import scipy.constants as sc

from levels.errors import PhysicsInputError
from levels.physics.discharge import validity

CM1_EV = sc.h * sc.c * 100 / sc.e


@pytest.mark.parametrize("te_k, gap_cm1", [(10000.0, 82259.0), (5000.0, 16956.0), (30000.0, 329179.0)])
def test_mcwhirter_against_its_formula(te_k, gap_cm1):
    # McWhirter 1965: ne >= 1.6e12 Te^{1/2} dE^3 cm-3, Te in K, dE in eV
    expected_m3 = 1.6e12 * te_k**0.5 * (gap_cm1 * CM1_EV) ** 3 * 1e6
    assert validity.mcwhirter_min_density_m3(te_k, gap_cm1) == pytest.approx(expected_m3, rel=1e-12)


def test_validity_uses_the_largest_gap_and_says_so():
    energies = [0.0, 82259.0, 97492.0, 102824.0]
    need = validity.mcwhirter_min_density_m3(10000.0, 82259.0)
    assert not validity.lte_validity(energies, 10000.0, 0.99 * need).lte_holds
    v = validity.lte_validity(energies, 10000.0, 1.01 * need)
    assert v.lte_holds and v.gap_cm1 == 82259.0
    low = validity.lte_validity(energies, 10000.0, 1e18)
    assert "does NOT hold" in low.sentence("H I", "lte") and "not valid" in low.sentence("H I", "lte")
    assert "not valid" not in low.sentence("H I", "cr")


@pytest.mark.parametrize("te, ne", [(0.0, 1e20), (-1.0, 1e20), (1e4, 0.0), (1e4, -3.0), (1e4, float("inf"))])
def test_bad_conditions(te, ne):
    with pytest.raises(PhysicsInputError):
        validity.lte_validity([0.0, 1.0], te, ne)
