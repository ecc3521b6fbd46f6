"""Tests of levels.physics.lines.ritz.

Level schemes and lines are INVENTED (random energies, random level graphs).
The outside reference is numpy.linalg.lstsq: the same weighted least-squares
problem written as a dense design matrix, its solution and its covariance
(A_w^+ (A_w^+)^T with the pseudo-inverse A_w^+ = lstsq(A_w, I)).
"""

from __future__ import annotations

import numpy as np
import pytest

from levels.errors import PhysicsInputError
from levels.physics.lines.ritz import RitzFit, optimize_levels


def invented_scheme(rng, n_levels, n_lines, unc_range=(0.001, 0.05)):
    """INVENTED levels (level 0 at 0) and a connected random set of lines with Gaussian noise."""
    energy = np.concatenate([[0.0], np.sort(rng.uniform(1000.0, 90000.0, n_levels - 1))])
    perm = rng.permutation(n_levels)
    a = np.concatenate([perm[:-1], rng.integers(0, n_levels, n_lines)])[:n_lines]
    b = np.concatenate([perm[1:], rng.integers(0, n_levels, n_lines)])[:n_lines]
    keep = a != b
    a, b = a[keep], b[keep]
    lower = np.where(energy[a] < energy[b], a, b)
    upper = np.where(energy[a] < energy[b], b, a)
    unc = rng.uniform(*unc_range, lower.size)
    sigma = energy[upper] - energy[lower] + rng.normal(0.0, unc)
    return energy, lower, upper, sigma, unc


def dense_reference(lower, upper, sigma, unc, n_levels, fixed=0, e_fixed=0.0):
    """numpy.linalg.lstsq on the weighted design matrix; returns energies and covariance."""
    m = lower.size
    free = np.array([i for i in range(n_levels) if i != fixed])
    col = -np.ones(n_levels, dtype=int)
    col[free] = np.arange(free.size)
    a = np.zeros((m, free.size))
    rows = np.arange(m)
    mu, ml = col[upper] >= 0, col[lower] >= 0
    a[rows[mu], col[upper][mu]] += 1.0
    a[rows[ml], col[lower][ml]] -= 1.0
    rhs = sigma.copy()
    rhs += np.where(lower == fixed, e_fixed, 0.0) - np.where(upper == fixed, e_fixed, 0.0)
    aw = a / unc[:, None]
    x, *_ = np.linalg.lstsq(aw, rhs / unc, rcond=None)
    pinv, *_ = np.linalg.lstsq(aw, np.eye(m), rcond=None)
    cov = pinv @ pinv.T
    energy = np.empty(n_levels)
    energy[free] = x
    energy[fixed] = e_fixed
    full_cov = np.zeros((n_levels, n_levels))
    full_cov[np.ix_(free, free)] = cov
    return energy, full_cov


# ----------------------------------------------------------------- against numpy.linalg.lstsq


@pytest.mark.parametrize("method", ["dense", "sparse"])
def test_matches_dense_lstsq(method):
    rng = np.random.default_rng(11)
    _, lo, up, sig, unc = invented_scheme(rng, 40, 150)
    fit = optimize_levels(lo, up, sig, unc, 40, fixed_index=3, fixed_energy_cm1=1234.5, method=method)
    energy, cov = dense_reference(lo, up, sig, unc, 40, fixed=3, e_fixed=1234.5)
    assert fit.method == method
    np.testing.assert_allclose(fit.energy_cm1, energy, rtol=1e-12, atol=1e-9)
    free = np.arange(40) != 3
    np.testing.assert_allclose(fit.unc_cm1[free] ** 2, np.diag(cov)[free], rtol=1e-8)
    assert fit.unc_cm1[3] == 0.0
    ritz_var = cov[up, up] + cov[lo, lo] - 2 * cov[up, lo]
    np.testing.assert_allclose(fit.ritz_unc_cm1**2, ritz_var, rtol=1e-8)
    resid = sig - (energy[up] - energy[lo])
    np.testing.assert_allclose(fit.residual_cm1, resid, atol=1e-9)
    assert fit.chi2 == pytest.approx(np.sum((resid / unc) ** 2), rel=1e-9)
    assert fit.dof == lo.size - 39


def test_weights_spanning_many_decades():
    # uncertainties from 1e-5 to 10 cm-1: refinement keeps the solution exact
    rng = np.random.default_rng(5)
    _, lo, up, sig, unc = invented_scheme(rng, 30, 120, unc_range=(1e-5, 1e-5))
    unc = unc * 10.0 ** rng.integers(0, 7, unc.size)
    fit = optimize_levels(lo, up, sig, unc, 30)
    energy, cov = dense_reference(lo, up, sig, unc, 30)
    np.testing.assert_allclose(fit.energy_cm1, energy, rtol=0, atol=1e-8)
    np.testing.assert_allclose(fit.unc_cm1[1:] ** 2, np.diag(cov)[1:], rtol=1e-8)


# ----------------------------------------------------------------- recovery of the truth


def test_pull_distribution_of_recovered_levels():
    # 500 independent trials (fixed seed). Within one trial the level errors are
    # correlated (all are measured from the fixed level), so one level and one
    # line per trial enter the pull samples, which are then independent.
    # Coverage of the 1 sigma interval: binomial p = 0.6827, N = 500, standard
    # deviation 0.0208; the band 0.62-0.745 is +-3 sigma. Pull spread: the sample
    # standard deviation of 500 unit normals has standard error 1/sqrt(2 x 500) =
    # 0.032; 0.9-1.1 is about +-3 sigma.
    rng = np.random.default_rng(314159)
    level_pulls, line_pulls, chi2_over_dof = [], [], []
    for _ in range(500):
        truth, lo, up, sig, unc = invented_scheme(rng, 60, 200)
        fit = optimize_levels(lo, up, sig, unc, 60)
        k = rng.integers(1, 60)
        level_pulls.append((fit.energy_cm1[k] - truth[k]) / fit.unc_cm1[k])
        i = rng.integers(0, lo.size)
        line_pulls.append((fit.ritz_cm1[i] - (truth[up[i]] - truth[lo[i]])) / fit.ritz_unc_cm1[i])
        chi2_over_dof.append(fit.chi2 / fit.dof)
    for pulls in (np.array(level_pulls), np.array(line_pulls)):
        assert 0.62 <= np.mean(np.abs(pulls) <= 1.0) <= 0.745
        assert 0.9 <= np.std(pulls) <= 1.1
        assert abs(np.mean(pulls)) < 3 / np.sqrt(pulls.size)
    # chi2/dof averages 1 (dof about 140: its standard deviation ~0.12 per trial)
    assert abs(np.mean(chi2_over_dof) - 1.0) < 3 * 0.12 / np.sqrt(500)


def test_large_problem_sparse_and_dense_agree():
    rng = np.random.default_rng(2)
    _, lo, up, sig, unc = invented_scheme(rng, 600, 2000)
    dense = optimize_levels(lo, up, sig, unc, 600, method="dense")
    sparse = optimize_levels(lo, up, sig, unc, 600, method="sparse")
    np.testing.assert_allclose(sparse.energy_cm1, dense.energy_cm1, rtol=0, atol=1e-9)
    np.testing.assert_allclose(sparse.unc_cm1, dense.unc_cm1, rtol=1e-9)
    np.testing.assert_allclose(sparse.ritz_unc_cm1, dense.ritz_unc_cm1, rtol=1e-8)


# ----------------------------------------------------------------- graph structure and flags


def test_disconnected_graph_warns_and_gives_nan():
    # levels 0-1-2 form a loop; 3-4 are joined only to each other; 5 has no line
    lo = np.array([0, 1, 0, 3])
    up = np.array([1, 2, 2, 4])
    sig = np.array([100.0, 50.0, 150.0, 30.0])
    unc = np.full(4, 0.01)
    fit = optimize_levels(lo, up, sig, unc, 6)
    assert np.all(np.isfinite(fit.energy_cm1[:3]))
    assert np.all(np.isnan(fit.energy_cm1[3:])) and np.all(np.isnan(fit.unc_cm1[3:]))
    assert fit.level_flags.tolist() == ["fixed", "", "", "disconnected", "disconnected", "disconnected"]
    assert fit.line_flags.tolist() == ["", "", "", "disconnected"]
    assert np.isnan(fit.residual_cm1[3])
    assert any("3 level(s) not connected" in w and "3, 4, 5" in w for w in fit.warnings)
    assert fit.dof == 1
    assert fit.n_lines.tolist() == [2, 2, 2, 1, 1, 0]


def test_fixed_level_without_lines():
    fit = optimize_levels([1], [2], [10.0], [0.1], 3, fixed_index=0, fixed_energy_cm1=5.0)
    assert fit.energy_cm1[0] == 5.0
    assert np.all(np.isnan(fit.energy_cm1[1:]))
    assert fit.method == "none"
    assert fit.warnings


def test_duplicate_line():
    # the same transition measured twice with equal uncertainty acts as one line
    # with uncertainty u/sqrt(2) at the mean wavenumber
    lo = np.array([0, 1, 1, 0])
    up = np.array([1, 2, 2, 2])
    sig = np.array([100.0, 50.02, 49.98, 150.01])
    unc = np.array([0.01, 0.02, 0.02, 0.01])
    twice = optimize_levels(lo, up, sig, unc, 3)
    once = optimize_levels(lo[[0, 1, 3]], up[[0, 1, 3]], [100.0, 50.0, 150.01], [0.01, 0.02 / np.sqrt(2), 0.01], 3)
    np.testing.assert_allclose(twice.energy_cm1, once.energy_cm1, atol=1e-10)
    np.testing.assert_allclose(twice.unc_cm1, once.unc_cm1, rtol=1e-10)
    assert twice.dof == once.dof + 1
    assert twice.n_lines.tolist() == [2, 3, 3]
    assert twice.residual_cm1[1] == pytest.approx(twice.residual_cm1[2] + 0.04, abs=1e-10)


def test_single_line_level_flag():
    # 0-1-2 loop plus level 3 reached only from 2 (measured twice)
    lo = np.array([0, 1, 0, 2, 2])
    up = np.array([1, 2, 2, 3, 3])
    sig = np.array([100.0, 50.0, 150.0, 20.0, 20.01])
    fit = optimize_levels(lo, up, sig, np.full(5, 0.01), 4)
    assert fit.level_flags.tolist() == ["fixed", "", "", "single-line level"]
    assert any("single transition" in w for w in fit.warnings)
    # its energy follows the mean of its two measurements
    assert fit.energy_cm1[3] - fit.energy_cm1[2] == pytest.approx(20.005, abs=1e-10)


def test_outlier_flag():
    rng = np.random.default_rng(9)
    truth, lo, up, sig, unc = invented_scheme(rng, 50, 300)
    sig = sig.copy()
    sig[17] += 30 * unc[17]  # a badly measured line in a redundant network
    fit = optimize_levels(lo, up, sig, unc, 50)
    assert fit.line_flags[17] == "outlier"
    assert np.sum(fit.line_flags == "outlier") <= 4
    assert any("more than 3 sigma" in w for w in fit.warnings)


def test_shifting_the_fixed_energy_shifts_every_level():
    rng = np.random.default_rng(4)
    _, lo, up, sig, unc = invented_scheme(rng, 20, 60)
    a = optimize_levels(lo, up, sig, unc, 20)
    b = optimize_levels(lo, up, sig, unc, 20, fixed_energy_cm1=1000.0)
    np.testing.assert_allclose(b.energy_cm1 - a.energy_cm1, 1000.0, atol=1e-9)
    np.testing.assert_allclose(b.unc_cm1, a.unc_cm1, rtol=1e-12)


def test_result_type():
    fit = optimize_levels([0], [1], [10.0], [0.1], 2)
    assert isinstance(fit, RitzFit)
    assert fit.energy_cm1.tolist() == [0.0, 10.0]
    assert fit.unc_cm1[1] == pytest.approx(0.1)
    assert fit.dof == 0 and fit.level_flags[1] == "single-line level"


@pytest.mark.parametrize(
    "kwargs",
    [
        dict(lower=[0], upper=[0]),
        dict(lower=[0], upper=[5]),
        dict(wavenumber_cm1=[-1.0]),
        dict(unc_cm1=[0.0]),
        dict(fixed_index=9),
        dict(n_levels=0),
        dict(method="qr"),
        dict(lower=[0, 1]),
    ],
)
def test_input_errors(kwargs):
    args = dict(lower=[0], upper=[1], wavenumber_cm1=[1.0], unc_cm1=[0.1], n_levels=2)
    args.update(kwargs)
    with pytest.raises(PhysicsInputError):
        optimize_levels(**args)
