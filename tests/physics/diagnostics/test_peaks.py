"""Peak fitting: closed loop on spectra drawn by levels.physics.plasma.spectrum.

Also scipy's curve_fit on the same data.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import curve_fit
from scipy.special import voigt_profile

from levels.errors import PhysicsInputError
from levels.physics.diagnostics import peaks
from levels.physics.plasma import spectrum as shapes

GRID = shapes.make_grid(655.0, 657.5, points=1251)  # 2 pm steps


def _drawn(centres, powers, gauss, lorentz=0.0):
    """A spectrum of the project's own line-shape code (windowed Voigt), on GRID."""
    return shapes.synthetic_spectrum(GRID, centres, powers, gauss, lorentz)


def test_centre_uncertainty_covers_the_truth_in_about_68_percent_of_trials():
    # 400 noise draws: a correct standard uncertainty covers the true centre in 68.3 % of them
    # (binomial standard deviation of the fraction 0.023); accept 0.62..0.74
    clean = _drawn([656.2], [1.0], 0.02)
    sigma = 0.01 * clean.max()
    covered, fwhm_err = [], []
    for seed in range(400):
        rng = np.random.default_rng(seed)
        fit = peaks.find_and_fit(GRID, clean + 3.0 + rng.normal(0, sigma, GRID.size))
        assert len(fit) == 1
        covered.append(abs(fit.centre[0] - 656.2) <= fit.centre_unc[0])
        fwhm_err.append(fit.fwhm[0] / 0.02 - 1)
    fraction = float(np.mean(covered))
    assert 0.62 <= fraction <= 0.74, fraction
    assert np.max(np.abs(fwhm_err)) < 0.03


def test_blended_peaks_are_fitted_together():
    clean = _drawn([656.0, 656.03], [1.0, 0.5], 0.02)  # 1.5 FWHM apart
    rng = np.random.default_rng(7)
    fit = peaks.find_and_fit(GRID, clean + rng.normal(0, 0.002 * clean.max(), GRID.size), min_snr=5)
    assert len(fit) == 2
    assert fit.group[0] == fit.group[1]
    assert np.allclose(fit.centre, [656.0, 656.03], atol=5 * fit.centre_unc.max())
    assert fit.area[1] / fit.area[0] == pytest.approx(0.5, rel=0.03)
    assert np.allclose(fit.fwhm, 0.02, rtol=0.03)


def test_voigt_fit_recovers_the_lorentz_width():
    clean = _drawn([656.2], [1.0], 0.02, 0.05)
    rng = np.random.default_rng(11)
    fit = peaks.find_and_fit(GRID, clean + rng.normal(0, 0.001 * clean.max(), GRID.size), profile="voigt")
    assert len(fit) == 1
    assert fit.lorentz_fwhm[0] == pytest.approx(0.05, rel=0.03)
    assert fit.fwhm[0] == pytest.approx(float(shapes.voigt_fwhm_nm(0.02, 0.05)), rel=0.03)
    assert fit.area[0] == pytest.approx(1.0, rel=0.03)


def _gauss(x, c, a, f, b0, b1):
    return a * peaks.gauss_profile(x, c, f) + b0 + b1 * (x - x.mean())


def test_gauss_fit_agrees_with_scipy_curve_fit_on_the_same_window():
    rng = np.random.default_rng(3)
    clean = _drawn([656.2], [1.0], 0.02)
    sigma = 0.01 * clean.max()
    y = clean + 2.0 + rng.normal(0, sigma, GRID.size)
    fit = peaks.fit_peaks(GRID, y, [656.2], [0.02], [clean.max()], noise=sigma, window_fwhm=3.0)
    lo, hi = np.searchsorted(GRID, 656.2 - 0.06), np.searchsorted(GRID, 656.2 + 0.06, "right")
    xs, ys = GRID[lo:hi], y[lo:hi]
    popt, pcov = curve_fit(
        _gauss, xs, ys, p0=[656.2, 1.0, 0.02, 2.0, 0.0], sigma=np.full(xs.size, sigma), absolute_sigma=True
    )
    assert fit.centre[0] == pytest.approx(popt[0], abs=1e-9)
    assert fit.area[0] == pytest.approx(popt[1], rel=1e-6)
    assert fit.fwhm[0] == pytest.approx(popt[2], rel=1e-6)
    assert fit.centre_unc[0] == pytest.approx(np.sqrt(pcov[0, 0]), rel=1e-3)
    assert fit.area_unc[0] == pytest.approx(np.sqrt(pcov[1, 1]), rel=1e-3)
    assert fit.fwhm_unc[0] == pytest.approx(np.sqrt(pcov[2, 2]), rel=1e-3)


def test_voigt_fit_agrees_with_scipy_curve_fit():
    rng = np.random.default_rng(5)
    clean = _drawn([656.2], [1.0], 0.02, 0.03)
    sigma = 0.005 * clean.max()
    y = clean + rng.normal(0, sigma, GRID.size)
    fit = peaks.fit_peaks(GRID, y, [656.2], [0.04], [clean.max()], noise=sigma, profile="voigt", window_fwhm=6.0)
    lo, hi = np.searchsorted(GRID, 656.2 - 0.24), np.searchsorted(GRID, 656.2 + 0.24, "right")
    xs, ys = GRID[lo:hi], y[lo:hi]

    def model(x, c, a, fg, fl, b0, b1):
        return a * voigt_profile(x - c, abs(fg) / peaks.FWHM_PER_SIGMA, abs(fl) / 2) + b0 + b1 * (x - x.mean())

    popt, pcov = curve_fit(
        model, xs, ys, p0=[656.2, 1.0, 0.02, 0.02, 0, 0], sigma=np.full(xs.size, sigma), absolute_sigma=True
    )
    assert fit.centre[0] == pytest.approx(popt[0], abs=1e-7)
    assert fit.gauss_fwhm[0] == pytest.approx(abs(popt[2]), rel=1e-4)
    assert fit.lorentz_fwhm[0] == pytest.approx(abs(popt[3]), rel=1e-4)
    assert fit.centre_unc[0] == pytest.approx(np.sqrt(pcov[0, 0]), rel=0.02)


def test_noise_estimate_and_baseline():
    rng = np.random.default_rng(9)
    x = np.arange(20000.0)
    y = 50 + 0.001 * x + rng.normal(0, 1.5, x.size)
    assert peaks.estimate_noise(y) == pytest.approx(1.5, rel=0.03)
    y2 = y + 300 * peaks.gauss_profile(x, 10000.0, 5.0)
    base = peaks.estimate_baseline(y2, 151, 1.5)
    assert abs(base[10000] - (50 + 10.0)) < 1.0


def test_bad_input():
    with pytest.raises(PhysicsInputError, match="profile"):
        peaks.fit_peaks(GRID, GRID, [656.0], [0.02], [1.0], noise=1.0, profile="lorentz")
    with pytest.raises(PhysicsInputError, match="increasing"):
        peaks.fit_peaks(GRID[::-1], GRID, [656.0], [0.02], [1.0], noise=1.0)
    with pytest.raises(PhysicsInputError, match="noise"):
        peaks.find_and_fit(GRID, np.ones_like(GRID))


def test_pure_noise_gives_no_peaks():
    rng = np.random.default_rng(12)
    fit = peaks.find_and_fit(GRID, 10.0 + rng.normal(0, 1.0, GRID.size))
    assert len(fit) == 0 and fit.centre.size == 0
    assert fit.noise == pytest.approx(1.0, rel=0.1)


def test_voigt_centre_uncertainty_coverage():
    # 300 draws (binomial standard deviation of the fraction 0.027); accept 0.60..0.76
    clean = _drawn([656.2], [1.0], 0.02, 0.02)
    sigma = 0.01 * clean.max()
    covered, fwhm_err = [], []
    expected = float(shapes.voigt_fwhm_nm(0.02, 0.02))
    for seed in range(300):
        rng = np.random.default_rng(1000 + seed)
        fit = peaks.find_and_fit(GRID, clean + 3.0 + rng.normal(0, sigma, GRID.size), profile="voigt")
        assert len(fit) == 1
        covered.append(abs(fit.centre[0] - 656.2) <= fit.centre_unc[0])
        fwhm_err.append(fit.fwhm[0] / expected - 1)
    assert 0.60 <= float(np.mean(covered)) <= 0.76
    assert np.max(np.abs(fwhm_err)) < 0.03
