"""Boltzmann and Saha-Boltzmann plots: closed loops through the project's plasma and line-shape physics."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.constants import physical_constants as pc

from levels.errors import PhysicsInputError
from levels.physics.diagnostics import boltzmann, peaks
from levels.physics.one_electron import hydrogenic
from levels.physics.plasma import equilibrium as plasma
from levels.physics.plasma import spectrum as shapes

M_P_U = pc["proton mass in u"][0]
#: second radiation constant c2 = hc/k, m K (CODATA via scipy.constants)
C2_M_K = pc["second radiation constant"][0]


def _balmer_spectrum(te_k: float, seed: int, noise: float = 0.01):
    """H I Balmer lines (n_upper 3..9) in LTE at te_k, drawn on an air-wavelength grid, plus noise."""
    model = hydrogenic.compute(1, nuclear_mass_u=M_P_U, n_max=9, fine_structure=False)
    lines = model.lines
    pop = plasma.boltzmann_populations(model.energy_cm1, model.g, te_k)
    sel = (model.n[lines["lower"]] == 2) & (lines["air_nm"] > 380)
    up = lines["upper"][sel]
    power = plasma.line_emissivity(pop[up], lines["a_per_s"][sel], lines["wavenumber_cm1"][sel])
    grid = shapes.make_grid(380.0, 665.0, 0.005)
    doppler = shapes.doppler_fwhm_nm(lines["vacuum_nm"][sel], 1000.0, 1.008)
    widths = shapes.voigt_widths(doppler, 0.0, 0.03)
    y = shapes.synthetic_spectrum(grid, lines["air_nm"][sel], power, widths.gauss_fwhm_nm, 0.0)
    rng = np.random.default_rng(seed)
    y = y + rng.normal(0, noise * y.max(), y.size)
    return grid, y, model, lines, sel


def _points(grid, y, model, lines, sel):
    return _points_from_fit(peaks.find_and_fit(grid, y), model, lines, sel)


def _points_from_fit(fit, model, lines, sel):
    n_up = model.n[lines["upper"][sel]]
    lam = lines["air_nm"][sel]
    ga = (lines["a_per_s"] * lines["g_upper"])[sel]
    e_up = model.energy_cm1[lines["upper"][sel]]
    e, ln_y, unc = [], [], []
    for c, area, area_unc in zip(fit.centre, fit.area, fit.area_unc):
        n = n_up[np.argmin(np.abs(lam - c))]
        comp = n_up == n  # the blended nl components of one Balmer line
        e.append(np.sum(ga[comp] * e_up[comp]) / ga[comp].sum())
        ln_y.append(float(boltzmann.boltzmann_ln_y(area, c, 1.0, ga[comp].sum())))
        unc.append(area_unc / area)
    return np.array(e), np.array(ln_y), np.array(unc)


def _relative_noise_points(te_k: float, seed: int):
    """1 % noise relative to each sample (shot-noise-like), given to the fit as intensity_unc."""
    grid, y, model, lines, sel = _balmer_spectrum(te_k, seed, noise=0.0)
    unc = 0.01 * y + 1e-4 * y.max()
    y = y + np.random.default_rng(100 + seed).normal(0.0, 1.0, y.size) * unc
    fit = peaks.find_and_fit(grid, y, y_unc=unc)
    return _points_from_fit(fit, model, lines, sel)


@pytest.mark.parametrize("te_k,seed", [(12000.0, 1), (15000.0, 2), (20000.0, 3), (15000.0, 4)])
def test_te_is_recovered_within_3_percent_at_1_percent_noise(te_k, seed):
    e, ln_y, unc = _relative_noise_points(te_k, seed)
    assert e.size >= 6
    fit = boltzmann.fit_boltzmann(e, ln_y, unc)
    assert fit.te_k == pytest.approx(te_k, rel=0.03)
    assert abs(fit.te_k - te_k) < 4 * fit.te_unc_k


def test_noise_free_spectrum_gives_te_exactly():
    e, ln_y, unc = _points(*_balmer_spectrum(15000.0, 0, noise=1e-6))
    assert boltzmann.fit_boltzmann(e, ln_y, unc).te_k == pytest.approx(15000.0, rel=1e-3)


@pytest.mark.xfail(
    strict=True,
    reason="noise sigma = 1 % of the strongest peak height: only 3-5 Balmer lines "
    "pass S/N 5 and Te scatters by 3-6 % (RMS over 8 seeds about 3.5 %)",
)
def test_te_within_3_percent_when_noise_is_1_percent_of_the_strongest_peak():
    errors = []
    for seed in range(8):
        e, ln_y, unc = _points(*_balmer_spectrum(15000.0, seed))
        errors.append(boltzmann.fit_boltzmann(e, ln_y, unc).te_k / 15000.0 - 1.0)
    assert math.sqrt(np.mean(np.square(errors))) < 0.03


def test_slope_uses_the_second_radiation_constant():
    # hc/k from CODATA (scipy.constants "second radiation constant", 1.438776877e-2 m K)
    e = np.array([0.0, 10000.0])
    fit = boltzmann.fit_boltzmann(e, -e * (C2_M_K * 100.0) / 8000.0)
    assert fit.te_k == pytest.approx(8000.0, rel=1e-9)


def test_outlier_is_flagged_and_left_out():
    e = np.linspace(97000.0, 108000.0, 7)
    y = 2.0 - e * 1.4387769 / 10000.0
    y[3] += 0.5
    fit = boltzmann.fit_boltzmann(e, y, np.full(7, 0.02))
    assert fit.outlier.tolist() == [False, False, False, True, False, False, False]
    assert fit.te_k == pytest.approx(10000.0, rel=1e-6)
    assert any("left out" in w for w in fit.warnings)


def test_saha_boltzmann_closed_loop_with_the_project_saha_balance():
    # two stages of an invented element: levels, Saha ratio and populations from levels.physics.plasma.equilibrium
    te, ne, e_ion = 14000.0, 3e22, 60000.0
    e0, g0 = np.array([0.0, 20000.0, 30000.0, 40000.0]), np.array([1.0, 3.0, 5.0, 3.0])
    e1, g1 = np.array([0.0, 15000.0, 25000.0, 35000.0]), np.array([2.0, 2.0, 4.0, 6.0])
    u0, _ = plasma.partition_function(e0, g0, te)
    u1, _ = plasma.partition_function(e1, g1, te)
    ratio = plasma.saha_ratio(te, ne, u0, u1, e_ion)
    n0 = plasma.boltzmann_populations(e0, g0, te) * 1.0
    n1 = plasma.boltzmann_populations(e1, g1, te) * ratio
    a = 1e7
    # line intensity I ~ n_u A / lambda; ln y = ln(I lambda / (g A)) = ln(n_u / g) up to a constant
    upper = np.concatenate([e0[1:], e1[1:]])
    ln_y = np.log(np.concatenate([n0[1:] / g0[1:], n1[1:] / g1[1:]]) * a / a)
    stage = np.array([0, 0, 0, 1, 1, 1])
    fit = boltzmann.fit_saha_boltzmann(upper, ln_y, stage, ionization_cm1=e_ion, ne_m3=ne, te_start_k=9000.0)
    assert fit.te_k == pytest.approx(te, rel=1e-4)


def test_self_absorbed_multiplet_is_flagged():
    assert boltzmann.multiplet_deviations(
        ["a", "a", "a", "b", "b"], [0.0, 0.01, -0.4, 1.0, 1.01], [0.02] * 5, [1.0, 2.0, 6.0, 1.0, 2.0]
    ) == ["a"]


def test_bad_input():
    with pytest.raises(PhysicsInputError, match="at least 2"):
        boltzmann.fit_boltzmann([1.0], [1.0])
    with pytest.raises(PhysicsInputError, match="rises"):
        boltzmann.fit_boltzmann([1.0, 2.0, 3.0], [1.0, 2.0, 3.0])
    with pytest.raises(PhysicsInputError, match="intensity"):
        boltzmann.boltzmann_ln_y(-1.0, 500.0, 2, 1e6)
    assert math.isfinite(boltzmann.saha_shift(1e4, 1e22))
