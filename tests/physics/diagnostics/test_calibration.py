"""Dispersion calibration: a pixel spectrum of H I and D I Balmer lines with a known cubic dispersion."""

from __future__ import annotations

import numpy as np
import pytest

# nuclear masses in u: proton and deuteron, CODATA (scipy.constants)
from scipy.constants import physical_constants as pc

from levels.errors import PhysicsInputError
from levels.physics.diagnostics import calibration, peaks
from levels.physics.one_electron import hydrogenic
from levels.physics.plasma import spectrum as shapes

M_P_U = pc["proton mass in u"][0]
M_D_U = pc["deuteron mass in u"][0]

#: the "true" dispersion of the invented spectrograph: nm at pixel p (ascending powers)
TRUE = np.array([375.0, 0.02, 1e-7, -2e-12])
N_PIX = 16384


def _balmer_lines():
    """Air wavelengths and g_u A of the Balmer lines (n_upper <= 9) of H I and D I, from the project's physics."""
    lam, strength = [], []
    for mass in (M_P_U, M_D_U):
        model = hydrogenic.compute(1, nuclear_mass_u=mass, n_max=9, fine_structure=False)
        lines = model.lines
        lower_n = model.n[lines["lower"]]
        sel = (lower_n == 2) & (lines["air_nm"] > 380) & (lines["air_nm"] < 700)
        lam.append(lines["air_nm"][sel])
        strength.append((lines["a_per_s"] * lines["g_upper"])[sel] * (1.0 if mass == M_P_U else 0.6))
    return np.concatenate(lam), np.concatenate(strength)


def _pixel_spectrum(seed: int):
    lam, strength = _balmer_lines()
    p = np.arange(N_PIX, dtype=float)
    wl = calibration.evaluate(TRUE, p)
    centre_px = np.interp(lam, wl, p)  # wl is increasing over the detector
    power = strength / strength.max() * 50.0
    # the lamp's upper levels fall off: weight by exp(-E_u/kT) is folded into the invented powers
    y = shapes.synthetic_spectrum(p, centre_px, power, 3.2, 0.0)  # >= 3 samples per FWHM: drawn, not deposited
    rng = np.random.default_rng(seed)
    y = y + 5.0 + rng.normal(0, 0.02, p.size)
    return p, y, lam, strength


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_cubic_dispersion_is_recovered_below_a_fifth_of_a_pixel(seed):
    p, y, lam, strength = _pixel_spectrum(seed)
    fit = peaks.find_and_fit(p, y)
    merged, merged_strength, _ = calibration.merge_blends(lam, strength, 0.02)
    disp = calibration.calibrate(
        fit.centre,
        fit.area,
        fit.fwhm,
        merged,
        merged_strength,
        degree=3,
        rough_range_nm=(370.0, 730.0),
        axis_range=(0.0, N_PIX - 1.0),
    )
    assert disp.rms_pixel < 0.2
    assert disp.used.sum() >= 8  # both isotopes' lines, from H-alpha up the series
    truth = calibration.evaluate(TRUE, p)
    got = calibration.evaluate(disp.coefficients, p)
    step = np.gradient(truth)
    inside = (p > disp.pixel.min()) & (p < disp.pixel.max())
    assert np.max(np.abs(got - truth)[inside] / step[inside]) < 0.5


def test_outlier_is_rejected_and_pairs_are_one_to_one():
    p = np.linspace(0, 4000, 15)
    lam = calibration.evaluate(TRUE, p)
    lam[7] += 0.5
    disp = calibration.fit_dispersion(p, lam, 3, floor_nm=1e-4)
    assert not disp.used[7] and disp.used.sum() == 14
    assert np.allclose(disp.coefficients, TRUE, rtol=1e-6, atol=1e-12)
    pi, li = calibration.match_to_lines([0.0, 0.5, 100.0], [500.0, 0.1], [500.04, 510.0], 0.2)
    assert pi.tolist() == [1, 2] and li.tolist() == [0, 1]


def test_too_few_lines_for_the_degree():
    with pytest.raises(PhysicsInputError, match="at least 5"):
        calibration.fit_dispersion([1.0, 2.0, 3.0], [400.0, 401.0, 402.0], 3)
    with pytest.raises(PhysicsInputError, match="rough wavelength"):
        calibration.calibrate(np.arange(6.0), np.ones(6), np.ones(6), np.arange(6.0), np.ones(6))
