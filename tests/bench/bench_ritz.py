"""Benchmark: Ritz level optimisation, 10,000 lines and 3,000 levels (INVENTED scheme).

Figure: :func:`levels.physics.lines.ritz.optimize_levels` (sparse assembly and
connectivity, normal equations factorised as chosen by ``method="auto"``),
including energies, the covariance diagonal and every line's Ritz uncertainty.
Baseline: :func:`numpy.linalg.lstsq` on the dense weighted design matrix of the
same problem, energies only (so the comparison favours the baseline).
"""

from __future__ import annotations

import time

import numpy as np

from levels.physics.lines.ritz import optimize_levels

from tests.bench.harness import BenchResult, best_time

N_LEVELS = 3000
N_LINES = 10_000


def _invented_problem(seed: int = 3000):
    rng = np.random.default_rng(seed)
    energy = np.concatenate([[0.0], np.sort(rng.uniform(1000.0, 90000.0, N_LEVELS - 1))])
    perm = rng.permutation(N_LEVELS)
    a = np.concatenate([perm[:-1], rng.integers(0, N_LEVELS, 2 * N_LINES)])
    b = np.concatenate([perm[1:], rng.integers(0, N_LEVELS, 2 * N_LINES)])
    keep = a != b
    a, b = a[keep][:N_LINES], b[keep][:N_LINES]
    lower = np.where(energy[a] < energy[b], a, b)
    upper = np.where(energy[a] < energy[b], b, a)
    unc = rng.uniform(0.001, 0.05, lower.size)
    sigma = energy[upper] - energy[lower] + rng.normal(0.0, unc)
    return energy, lower, upper, sigma, unc


def _dense_lstsq(lower, upper, sigma, unc):
    m = lower.size
    a = np.zeros((m, N_LEVELS))
    rows = np.arange(m)
    a[rows, upper] += 1.0
    a[rows, lower] -= 1.0
    aw = a[:, 1:] / unc[:, None]  # level 0 fixed at 0 cm-1
    x, *_ = np.linalg.lstsq(aw, sigma / unc, rcond=None)
    return np.concatenate([[0.0], x])


def bench_ritz_10000_lines_3000_levels() -> BenchResult:
    _, lower, upper, sigma, unc = _invented_problem()
    fit = optimize_levels(lower, upper, sigma, unc, N_LEVELS)
    figure = best_time(lambda: optimize_levels(lower, upper, sigma, unc, N_LEVELS), repeat=3)

    start = time.perf_counter()
    sparse_fit = optimize_levels(lower, upper, sigma, unc, N_LEVELS, method="sparse")
    sparse_time = time.perf_counter() - start

    start = time.perf_counter()
    reference = _dense_lstsq(lower, upper, sigma, unc)
    baseline = time.perf_counter() - start

    return BenchResult(
        name="ritz_10000_lines_3000_levels",
        figure=figure,
        baseline=baseline,
        unit="s",
        higher_is_better=False,
        target=None,
        details={
            "n_lines": int(lower.size),
            "n_levels": N_LEVELS,
            "auto_method": fit.method,
            "sparse_method_s": sparse_time,
            "max_abs_diff_vs_lstsq_cm1": float(np.max(np.abs(fit.energy_cm1 - reference))),
            "max_abs_diff_sparse_vs_dense_cm1": float(np.max(np.abs(sparse_fit.energy_cm1 - fit.energy_cm1))),
            "chi2_per_dof": fit.chi2 / fit.dof,
            "baseline_note": "numpy.linalg.lstsq, energies only (no covariance)",
        },
    )


if __name__ == "__main__":  # pragma: no cover
    result = bench_ritz_10000_lines_3000_levels()
    for key, value in result.as_dict().items():
        print(f"{key}: {value}")
