"""The collisional-radiative balance: LTE and corona limits from one solver, trapping, losses, bad input."""

import math

import numpy as np
import pytest
import scipy.constants as sc

from levels.errors import PhysicsInputError
from levels.physics.discharge import balance
from levels.physics.discharge.balance import CRSpecies, rate_coefficients, rate_matrix, solve_steady_state

from tests.physics.discharge.conftest import PROTON_MASS_U, cr_species

C2 = sc.h * sc.c * 100 / sc.k


def _shell_population(model, result, n):
    return float(np.sum(result.population_rel[model.n == n]))


def test_high_density_gives_boltzmann_populations_of_hydrogen(hydrogen_cr):
    model, species = hydrogen_cr
    te = 11604.5
    result = solve_steady_state(species, te, 1e26)
    # Boltzmann relative to the ground level, independent of the project: Bohr levels of the reduced-mass
    # atom (scipy.constants Rydberg, electron and proton masses), g_n = 2 n^2, g_1 = 2
    r_h = sc.Rydberg / 100 / (1 + sc.m_e / sc.m_p)
    for n in (2, 3, 4, 5):
        expected = n**2 * math.exp(-C2 * r_h * (1 - 1 / n**2) / te)
        assert _shell_population(model, result, n) == pytest.approx(expected, rel=0.05), n


def test_high_density_gives_the_saha_ionization_balance(hydrogen_cr):
    _model, species = hydrogen_cr
    te, ne = 11604.5, 1e26
    result = solve_steady_state(species, te, ne)
    # Saha (scipy.constants): n_+ ne / n_1s = (2 g_+ / g_1s) (2 pi m k T / h^2)^{3/2} exp(-chi/kT), g_+ = 1, g_1s = 2
    chi = species.ionization_cm1
    saha = (2 * math.pi * sc.m_e * sc.k * te / sc.h**2) ** 1.5 * math.exp(-C2 * chi / te) / ne
    assert result.ion_rel == pytest.approx(saha, rel=0.05)


def test_departures_tend_to_one_as_density_grows(hydrogen_cr):
    _model, species = hydrogen_cr
    spread = []
    for ne in (1e20, 1e22, 1e24, 1e26):
        d = solve_steady_state(species, 11604.5, ne).departure[1:]
        spread.append(float(np.max(np.abs(np.log(d)))))
    assert spread == sorted(spread, reverse=True) and spread[-1] < 0.01


@pytest.mark.parametrize("ne", [1e12, 1e13])
def test_corona_limit_n3_population_grows_linearly_with_density(hydrogen_cr, ne):
    model, species = hydrogen_cr
    once = _shell_population(model, solve_steady_state(species, 11604.5, ne), 3)
    twice = _shell_population(model, solve_steady_state(species, 11604.5, 2 * ne), 3)
    assert twice / once == pytest.approx(2.0, rel=0.02)


def test_sparse_solution_equals_a_dense_solve_of_the_same_matrix(hydrogen_cr):
    _model, species = hydrogen_cr
    te, ne = 20000.0, 1e20
    rates = rate_coefficients(species, te)
    m = rate_matrix(species, rates, ne).toarray()
    a = m.copy()
    a[0, :] = 0.0
    a[0, 0] = 1.0
    rhs = np.zeros(m.shape[0])
    rhs[0] = 1.0
    dense = np.linalg.solve(a, rhs)
    sparse = solve_steady_state(species, te, ne, rates=rates)
    ours = np.concatenate([sparse.population_rel, [sparse.ion_rel]])
    big = dense > 1e-200
    assert np.allclose(ours[big], dense[big], rtol=1e-6)
    # and the solution is a steady state: M n = 0 (column sums zero: particles conserved)
    assert np.allclose(m.sum(axis=0), 0.0, atol=1e-6 * np.abs(np.diag(m)).max())
    assert np.max(np.abs(m[1:] @ ours)) < 1e-8 * np.max(np.abs(m) @ ours)


def _toy(meta=True):
    # invented three-level atom: ground, metastable (no E1 decay), radiating level
    return CRSpecies([0.0, 40000.0, 60000.0], [1, 3, 3], 90000.0, 2.0, 1,
                     [0, 1], [2, 2], [1e8, 1e7], [0.3, 0.2])


def test_metastable_loss_lowers_the_metastable():
    sp_ = _toy()
    assert sp_.metastable().tolist() == [False, True, False]
    kept = solve_steady_state(sp_, 15000.0, 1e17)
    lost = solve_steady_state(sp_, 15000.0, 1e17, loss_rate_per_s=1e5)
    assert lost.population_rel[1] < 0.5 * kept.population_rel[1]


def test_trapping_lowers_the_escape_of_resonance_lines_only(hydrogen_cr):
    model, species = hydrogen_cr
    lam = 1e7 / (species.energy_cm1[species.upper] - species.energy_cm1[species.lower]) * 1e-9
    dop = lam * math.sqrt(8 * sc.k * 600 * math.log(2) / (PROTON_MASS_U * sc.atomic_mass * sc.c**2))
    thin = solve_steady_state(species, 11604.5, 1e19)
    thick = balance.solve_with_trapping(species, 11604.5, 1e19, total_density_m3=1e21, size_m=0.01,
                                        geometry="cylinder", wavelength_m=lam, doppler_fwhm_m=dop)
    # Lyman alpha: centre optical depths ~ 110 and 220 (f = 0.139 and 0.277 of the two fine-structure components)
    # over the 1 cm radius (n_1s ~ 1e21 m-3, 600 K Doppler width): escape factors of a few per cent at most
    lyman = species.lower == 0
    lyman_alpha = lyman & (model.n[species.upper] == 2)
    assert np.all(thick.escape[lyman_alpha] < 0.05)
    assert np.all(thick.escape[lyman] < 0.9)
    assert np.all(thick.escape[~lyman] > 0.99)
    assert thick.iterations > 2 and not thick.warnings
    # trapped Lyman photons keep atoms excited: n = 2 grows
    assert _shell_population(model, thick, 2) > 2 * _shell_population(model, thin, 2)


@pytest.mark.parametrize("kwargs", [dict(te_k=0.0), dict(te_k=-100.0), dict(ne_m3=0.0), dict(ne_m3=-1e18),
                                    dict(ne_m3=float("nan")), dict(loss_rate_per_s=-1.0)])
def test_bad_conditions_are_refused(kwargs):
    args = dict(te_k=1e4, ne_m3=1e18)
    args.update(kwargs)
    with pytest.raises(PhysicsInputError):
        solve_steady_state(_toy(), **args)


@pytest.mark.parametrize("size", [0.0, -1.0, 1e9, float("inf")])
def test_absurd_sizes_are_refused(size):
    sp_ = _toy()
    with pytest.raises(PhysicsInputError, match="size"):
        balance.solve_with_trapping(sp_, 1e4, 1e18, total_density_m3=1e20, size_m=size, geometry="slab",
                                    wavelength_m=[1e-7, 3e-7], doppler_fwhm_m=[1e-12, 1e-12])


def test_inconsistent_species_data_is_refused():
    with pytest.raises(PhysicsInputError, match="ionization energy"):
        CRSpecies([0.0, 5.0], [1, 1], 3.0, 1.0, 1, [0], [1], [1.0], [0.1])
    with pytest.raises(PhysicsInputError, match="upper level"):
        CRSpecies([0.0, 5.0], [1, 1], 30.0, 1.0, 1, [1], [0], [1.0], [0.1])


def test_helium_ion_balance_solves():
    model, species = cr_species(2, 6, mass_u=4.001506179)
    result = solve_steady_state(species, 5 * 11604.5, 1e20)
    assert np.all(np.isfinite(result.population_rel)) and result.population_rel[0] == 1.0
