"""Tests of levels.physics.plasma.spectrum against CODATA (scipy.constants), scipy's Voigt function and a
naive full-grid evaluation."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.constants as sc
from scipy.integrate import quad, trapezoid
from scipy.optimize import brentq
from scipy.special import voigt_profile

from levels.errors import PhysicsInputError, TooLargeError
from levels.physics.plasma import spectrum as sp

FWHM_PER_SIGMA = 2 * math.sqrt(2 * math.log(2))


def naive_spectrum(grid, centre, power, fg, fl):
    """Every line on every grid point with scipy's Voigt profile (no window)."""
    out = np.zeros_like(grid)
    for c, p, g, l in zip(centre, power, fg, fl):
        out += p * voigt_profile(grid - c, g / FWHM_PER_SIGMA, l / 2)
    return out


# ----------------------------------------------------------------------------- widths


def test_doppler_width_h_alpha_against_textbook_formula():
    # H-alpha (air 656.28 nm) of 1H at a gas temperature of 1000 K.
    lam, t = 656.28, 1000.0
    m_h = sc.physical_constants["proton mass in u"][0] + sc.physical_constants["electron mass in u"][0]
    # FWHM = lambda sqrt(8 k T ln 2 / (M c^2)) (Griem 1997), scipy constants written out
    m_kg = m_h * sc.physical_constants["atomic mass constant"][0]
    expected = lam * math.sqrt(8 * sc.k * t * math.log(2) / (m_kg * sc.c**2))
    assert float(sp.doppler_fwhm_nm(lam, t, m_h)) == pytest.approx(expected, rel=1e-14)
    # handbook form Delta lambda = 7.16e-7 lambda sqrt(T/M), T in K, M in u (from memory)
    assert float(sp.doppler_fwhm_nm(lam, t, m_h)) == pytest.approx(7.16e-7 * lam * math.sqrt(t / m_h), rel=1e-3)
    assert float(sp.doppler_fwhm_nm(lam, t, m_h)) * 1e3 == pytest.approx(14.80, abs=0.01)  # pm


def test_natural_width_lyman_alpha():
    # H 2p lifetime 1.596 ns, A(2p-1s) = 6.2649e8 s-1 (from memory); natural width
    # A / (2 pi) = 99.7 MHz (from memory)
    a = 6.2649e8
    lam = 121.567
    fwhm_nm = float(sp.natural_fwhm_nm(lam, 1.0 / a))
    dnu = fwhm_nm * 1e-9 * sc.c / (lam * 1e-9) ** 2
    assert dnu == pytest.approx(a / (2 * sc.pi), rel=1e-12)
    assert dnu / 1e6 == pytest.approx(99.7, abs=0.05)
    # both levels decaying: rates add (Griem 1997)
    both = float(sp.natural_fwhm_nm(lam, 2e-9, 5e-9))
    assert both == pytest.approx((lam * 1e-9) ** 2 / sc.c * (1 / 2e-9 + 1 / 5e-9) / (2 * sc.pi) * 1e9, rel=1e-13)


def test_voigt_fwhm_against_scipy_profile():
    # the exact FWHM of scipy's Voigt profile, found by root finding, against the
    # Olivero & Longbothum (1977) formula; bound 2.4e-4 as documented in voigt_fwhm_nm
    worst = 0.0
    for ratio in np.geomspace(1e-3, 1e3, 120):
        fg, fl = 1.0, ratio
        s, g = fg / FWHM_PER_SIGMA, fl / 2
        half = voigt_profile(0.0, s, g) / 2
        exact = 2 * brentq(lambda x, s=s, g=g, half=half: voigt_profile(x, s, g) - half, 0, 10 * (fg + fl),
                           xtol=1e-14)
        worst = max(worst, abs(float(sp.voigt_fwhm_nm(fg, fl)) / exact - 1))
    assert worst < 2.4e-4


def test_voigt_widths_combine_in_quadrature_and_linearly():
    w = sp.voigt_widths(0.003, 1e-4, 0.004, extra_lorentz_fwhm_nm=2e-4)
    assert float(w.gauss_fwhm_nm) == pytest.approx(0.005, rel=1e-14)
    assert float(w.lorentz_fwhm_nm) == pytest.approx(3e-4, rel=1e-14)
    # the convolution of two Gaussians is a Gaussian with variances added: check numerically
    s1, s2 = 0.003 / FWHM_PER_SIGMA, 0.004 / FWHM_PER_SIGMA
    x = 0.0021
    conv = quad(lambda t: voigt_profile(t, s1, 0) * voigt_profile(x - t, s2, 0), -0.05, 0.05, points=[0, x])[0]
    assert conv == pytest.approx(voigt_profile(x, float(w.gauss_fwhm_nm) / FWHM_PER_SIGMA, 0), rel=1e-8)


# ----------------------------------------------------------------------------- profile pieces


def test_wing_expansion_against_scipy_voigt():
    worst = 0.0
    for a in np.geomspace(1e-5, 1e3, 120):
        sigma, gamma = 1.0, a
        fv = float(sp.voigt_fwhm_nm(FWHM_PER_SIGMA * sigma, 2 * gamma))
        x = np.linspace(4 * fv, 80 * fv, 400)
        worst = max(worst, float(np.max(np.abs(sp.voigt_wing(x, sigma, gamma) / voigt_profile(x, sigma, gamma) - 1))))
    assert worst < 2e-5  # the bound stated in the module docstring


def test_window_fraction_against_quadrature():
    for fg, fl, k in [(1.0, 0.0, 4), (1.0, 0.01, 50), (1.0, 1.0, 4), (0.1, 1.0, 50), (0.0, 1.0, 10)]:
        fv = float(sp.voigt_fwhm_nm(fg, fl))
        w = k * fv
        s, g = fg / FWHM_PER_SIGMA, fl / 2
        tail = quad(lambda x, s=s, g=g: voigt_profile(x, s, g), w, np.inf, epsabs=0, epsrel=1e-12, limit=400)[0]
        assert float(sp.window_power_fraction(w, fg, fl)) == pytest.approx(1 - 2 * tail, abs=1e-11)


# ----------------------------------------------------------------------------- synthetic spectrum


def test_single_line_equals_scipy_voigt_in_core_and_wing():
    grid = sp.make_grid(640.0, 670.0, 0.0005)
    c, p, fg, fl = 656.2801, 3.0, 0.012, 0.003
    s = sp.synthetic_spectrum(grid, [c], [p], fg, fl)
    fv = float(sp.voigt_fwhm_nm(fg, fl))
    f = float(sp.window_power_fraction(50 * fv, fg, fl))
    exact = p * voigt_profile(grid - c, fg / FWHM_PER_SIGMA, fl / 2) / f
    d = np.abs(grid - c)
    core = d <= 4 * fv
    wing = (d > 4 * fv) & (d <= 50 * fv)
    np.testing.assert_allclose(s[core], exact[core], rtol=1e-12)
    np.testing.assert_allclose(s[wing], exact[wing], rtol=2e-5)
    assert np.all(s[d > 50 * fv + 1e-9] == 0.0)


@pytest.mark.parametrize(
    "fg,fl",
    [(0.0125, 0.0), (0.0, 0.0125), (0.010, 0.004), (0.002, 0.012), (0.08, 0.001)],
)
@pytest.mark.parametrize("grid_kind", ["uniform", "geometric", "decreasing"])
def test_power_conserved_per_line(fg, fl, grid_kind):
    step = 0.004  # FWHM > 3 steps for every case: sampled, not deposited
    if grid_kind == "uniform":
        grid = sp.make_grid(500.0, 520.0, step)
    elif grid_kind == "geometric":
        grid = np.geomspace(500.0, 520.0, 5000)  # step 0.0039..0.0041 nm
    else:
        grid = sp.make_grid(500.0, 520.0, step)[::-1]
    for c in (505.0, 510.0013, 514.77):
        s = sp.synthetic_spectrum(grid, [c], [1.7], fg, fl)
        assert np.count_nonzero(s) > 20  # drawn as a profile
        integral = abs(trapezoid(s, grid))
        assert integral == pytest.approx(1.7, rel=1e-3)


def test_unresolved_lines_deposited_with_their_power():
    grid = sp.make_grid(400.0, 401.0, 0.01)
    c = np.array([400.2034, 400.5, 400.7771])
    p = np.array([1.0, 2.0, 0.5])
    s = sp.synthetic_spectrum(grid, c, p, 0.001, 0.0)  # FWHM 0.1 step
    assert trapezoid(s, grid) == pytest.approx(p.sum(), rel=1e-12)
    # every non-zero point is within one grid step of a line centre
    near = np.min(np.abs(grid[s != 0][:, None] - c[None, :]), axis=1)
    assert np.all(near <= 0.01 + 1e-12)
    # the power-weighted mean wavelength is the line centre (linear shares)
    one = sp.synthetic_spectrum(grid, c[:1], p[:1], 0.001, 0.0)
    w = one * np.gradient(grid)
    assert np.sum(w * grid) / np.sum(w) == pytest.approx(c[0], abs=1e-9)


def test_windowed_equals_naive_within_documented_wing_error():
    rng = np.random.default_rng(7)
    grid = sp.make_grid(600.0, 620.0, 0.002)
    n = 120
    c = rng.uniform(602.0, 618.0, n)
    p = rng.uniform(0.1, 3.0, n)
    fg = rng.uniform(0.006, 0.03, n)
    fl = rng.uniform(0.0, 0.006, n)
    fl[:20] = 0.0  # some pure Gaussians
    fast = sp.synthetic_spectrum(grid, c, p, fg, fl)
    full = naive_spectrum(grid, c, p, fg, fl)
    # documented bound: inside a window P V (1/F - 1 + 2e-5/F); outside P V
    bound = np.zeros_like(grid)
    fv = sp.voigt_fwhm_nm(fg, fl)
    half = np.where(fl > 0, 50.0, 4.0) * fv
    frac = sp.window_power_fraction(half, fg, fl)
    l1_bound = 0.0
    for i in range(n):
        v = p[i] * voigt_profile(grid - c[i], fg[i] / FWHM_PER_SIGMA, fl[i] / 2)
        inside = np.abs(grid - c[i]) <= half[i]
        bound += np.where(inside, v * (1 / frac[i] - 1 + 2e-5 / frac[i]), v)
        l1_bound += 2 * p[i] * (1 - frac[i]) + 2e-5 * p[i]
    assert np.all(np.abs(fast - full) <= bound * (1 + 1e-9) + 1e-15)
    assert trapezoid(np.abs(fast - full), grid) <= l1_bound
    # and the error is not vacuous: the spectra agree to a small fraction of the peak
    assert np.max(np.abs(fast - full)) < 0.01 * full.max()


def test_lines_outside_grid_contribute_only_their_inside_part():
    grid = sp.make_grid(500.0, 501.0, 0.001)
    s = sp.synthetic_spectrum(grid, [499.99], [1.0], 0.01, 0.0)
    expected = voigt_profile(grid - 499.99, 0.01 / FWHM_PER_SIGMA, 0) / float(sp.window_power_fraction(0.04, 0.01, 0.0))
    np.testing.assert_allclose(s, np.where(grid - 499.99 <= 0.04 + 1e-12, expected, 0), rtol=1e-12, atol=1e-300)


def test_many_lines_vectorised_matches_sum_of_single_lines():
    rng = np.random.default_rng(11)
    grid = sp.make_grid(300.0, 310.0, 0.002)
    n = 200
    c, p = rng.uniform(300, 310, n), rng.uniform(0, 1, n)
    fg, fl = rng.uniform(0.006, 0.05, n), rng.uniform(0, 0.01, n)
    together = sp.synthetic_spectrum(grid, c, p, fg, fl)
    apart = sum(sp.synthetic_spectrum(grid, c[i : i + 1], p[i : i + 1], fg[i], fl[i]) for i in range(n))
    np.testing.assert_allclose(together, apart, rtol=1e-10, atol=1e-12 * together.max())


# ----------------------------------------------------------------------------- guards


def test_make_grid_refuses_too_large_grid_with_the_size_needed():
    with pytest.raises(TooLargeError, match=r"800,000,001 points \(6,400\.0 MB"):
        sp.make_grid(200.0, 1000.0, 1e-6)
    with pytest.raises(TooLargeError, match="limit is 1,000 points"):
        sp.make_grid(200.0, 1000.0, points=1001, max_points=1000)
    assert sp.make_grid(200.0, 1000.0, points=1000, max_points=1000).size == 1000


def test_synthetic_spectrum_guards():
    grid = sp.make_grid(500.0, 501.0, 0.001)
    with pytest.raises(TooLargeError, match="1,001 points"):
        sp.synthetic_spectrum(grid, [500.5], [1.0], 0.01, 0.0, max_points=1000)
    with pytest.raises(TooLargeError, match="profile evaluations"):
        sp.synthetic_spectrum(grid, [500.5] * 100, [1.0] * 100, 0.01, 0.01, max_evaluations=1000)
    with pytest.raises(PhysicsInputError, match="strictly monotonic"):
        sp.synthetic_spectrum(np.array([1.0, 2.0, 2.0, 3.0]), [2.0], [1.0], 0.1, 0.0)
    with pytest.raises(PhysicsInputError, match="power"):
        sp.synthetic_spectrum(grid, [500.5], [-1.0], 0.01, 0.0)
    with pytest.raises(PhysicsInputError, match="core_widths"):
        sp.synthetic_spectrum(grid, [500.5], [1.0], 0.01, 0.0, core_widths=2.0)
    with pytest.raises(PhysicsInputError, match="one entry per line"):
        sp.synthetic_spectrum(grid, [500.5, 500.6], [1.0, 2.0, 3.0], 0.01, 0.0)
    with pytest.raises(PhysicsInputError, match="exactly one"):
        sp.make_grid(1.0, 2.0)
    with pytest.raises(PhysicsInputError, match="0 < from_nm < to_nm"):
        sp.make_grid(2.0, 1.0, 0.1)
    with pytest.raises(PhysicsInputError, match="mass_u"):
        sp.doppler_fwhm_nm(500.0, 300.0, 0.0)


def test_natural_width_validation_and_stable_levels():
    assert float(sp.natural_fwhm_nm(500.0, np.inf, np.inf)) == 0.0
    with pytest.raises(PhysicsInputError, match="tau_upper_s"):
        sp.natural_fwhm_nm(500.0, 0.0)
    with pytest.raises(PhysicsInputError, match="tau_lower_s"):
        sp.natural_fwhm_nm(500.0, 1e-8, -1.0)
