"""McWhirter's LTE criterion."""

from __future__ import annotations

import pytest
from scipy.constants import physical_constants as pc

from levels.errors import PhysicsInputError
from levels.physics import hydrogenic
from levels.physics.diagnostics import lte


def test_coefficient_and_scaling():
    # McWhirter 1965 (in Huddlestone & Leonard, Plasma Diagnostic Techniques, ch. 5):
    # ne >= 1.6e12 cm-3 T^(1/2) dE^3, T in K, dE in eV -- coefficient from memory
    ev_cm1 = pc["electron volt-inverse meter relationship"][0] / 100.0  # CODATA, cm-1 per eV
    assert lte.mcwhirter_min_ne_m3(10000.0, ev_cm1) == pytest.approx(1.6e12 * 1e6 * 100.0, rel=1e-9)
    assert lte.mcwhirter_min_ne_m3(40000.0, 2 * ev_cm1) == pytest.approx(2 * 8 * 1.6e18 * 100.0, rel=1e-9)


def test_hydrogen_needs_the_resonance_gap():
    # the largest gap of H I is 1s-2p, 3/4 of the Rydberg energy (R_inf from CODATA, reduced mass aside)
    model = hydrogenic.compute(1, nuclear_mass_u=pc["proton mass in u"][0], n_max=6, fine_structure=False)
    gap = lte.largest_gap_cm1(model.energy_cm1)
    assert gap == pytest.approx(0.75 * pc["Rydberg constant"][0] / 100.0, rel=1e-3)


def test_bad_input():
    with pytest.raises(PhysicsInputError):
        lte.mcwhirter_min_ne_m3(-1.0, 1000.0)
    with pytest.raises(PhysicsInputError):
        lte.largest_gap_cm1([5.0])
