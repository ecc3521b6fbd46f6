"""Hydrogen-like atomic data for the discharge tests, from the project's one-electron model."""

import numpy as np
import pytest

from levels.physics.discharge.balance import CRSpecies
from levels.physics.one_electron import hydrogenic

PROTON_MASS_U = 1.007276466621  # CODATA 2018 (scipy.constants: proton mass in u)


def cr_species(z: int = 1, n_max: int = 8, fine_structure: bool = True, mass_u: float = PROTON_MASS_U):
    model = hydrogenic.compute(z, nuclear_mass_u=mass_u, n_max=n_max, fine_structure=fine_structure)
    lines = model.lines
    e = model.energy_cm1
    swap = e[lines["lower"]] > e[lines["upper"]]
    lo = np.where(swap, lines["upper"], lines["lower"])
    up = np.where(swap, lines["lower"], lines["upper"])
    a_sum = np.bincount(up, weights=lines["a_per_s"], minlength=len(e))
    finite = np.isfinite(model.lifetime_s)
    extra = np.zeros(len(e))
    extra[finite] = np.maximum(1.0 / model.lifetime_s[finite] - a_sum[finite], 0.0)
    species = CRSpecies(e, model.g, model.ionization_cm1, 1.0, z, lo, up, lines["a_per_s"], lines["f_abs"],
                        extra_decay_per_s=extra, shell=model.n, hydrogen=(z == 1))
    return model, species


@pytest.fixture(scope="session")
def hydrogen_cr():
    return cr_species(1, 8)
