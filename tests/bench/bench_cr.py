"""Benchmark of the collisional-radiative steady state: sparse LU against a dense solve of the same matrix.

The species: the one-electron ion He II with fine structure up to n = 32 (1,024 levels,
every E1 pair of them radiating and coupled by van Regemorter collisions, 31,744 lines),
at Te = 5 eV, ne = 1e20 m-3. Both solvers get the identical scaled system
(:func:`levels.physics.discharge.balance.scaled_system`): the project's code solves it
with ``scipy.sparse.linalg.spsolve`` (SuperLU), the baseline with ``numpy.linalg.solve``
on the same matrix as a dense array. The whole solve (rate coefficients, matrix, scaling,
LU) is timed as well, to check it stays under a second.
"""

from __future__ import annotations

import time

import numpy as np
from scipy.sparse.linalg import spsolve

from levels.physics.discharge import balance
from levels.physics.one_electron import hydrogenic

from tests.bench.harness import BenchResult, best_time

N_MAX = 32
TE_K = 5.0 * 11604.518
NE_M3 = 1e20


def _species() -> balance.CRSpecies:
    model = hydrogenic.compute(2, nuclear_mass_u=4.001506179, n_max=N_MAX, fine_structure=True)
    lines = model.lines
    e = model.energy_cm1
    swap = e[lines["lower"]] > e[lines["upper"]]
    lower = np.where(swap, lines["upper"], lines["lower"])
    upper = np.where(swap, lines["lower"], lines["upper"])
    return balance.CRSpecies(e, model.g, model.ionization_cm1, 1.0, 2, lower, upper, lines["a_per_s"],
                             lines["f_abs"])


def bench_cr_sparse_vs_dense() -> BenchResult:
    """1,024-level CR balance: sparse LU versus numpy.linalg.solve on the same matrix."""
    species = _species()
    rates = balance.rate_coefficients(species, TE_K)
    matrix = balance.rate_matrix(species, rates, NE_M3)
    a, rhs, scale = balance.scaled_system(matrix, balance.saha_boltzmann_log(species, TE_K, NE_M3))
    dense = a.toarray()

    figure = best_time(lambda: spsolve(a, rhs), repeat=5)
    baseline = best_time(lambda: np.linalg.solve(dense, rhs), repeat=3)
    x_sparse = spsolve(a, rhs)
    x_dense = np.linalg.solve(dense, rhs)
    agree = float(np.max(np.abs(x_sparse - x_dense) / np.maximum(np.abs(x_dense), 1e-300)))

    start = time.perf_counter()
    balance.solve_steady_state(species, TE_K, NE_M3)
    whole = time.perf_counter() - start
    whole = min(whole, best_time(lambda: balance.solve_steady_state(species, TE_K, NE_M3), repeat=3))
    result = BenchResult(
        name="cr_solve_1024_levels_sparse_vs_dense",
        figure=figure,
        baseline=baseline,
        unit="s",
        higher_is_better=False,
        target=20.0,
        details={
            "levels": species.size,
            "lines": int(species.lower.size),
            "collision_pairs": int(rates.pair_lower.size),
            "matrix_nonzeros": int(matrix.nnz),
            "whole_solve_s": whole,
            "whole_solve_under_1s": whole < 1.0,
            "max_rel_difference_sparse_dense": agree,
        },
    )
    print(f"CR solve, {species.size} levels: sparse LU {figure * 1e3:.2f} ms, dense numpy.linalg.solve "
          f"{baseline * 1e3:.1f} ms, ratio {result.ratio:.1f}x (target 20x); whole solve {whole:.3f} s (target < 1 s); "
          f"largest relative difference {agree:.1e}")
    return result


if __name__ == "__main__":  # pragma: no cover - manual run
    print(bench_cr_sparse_vs_dense().as_dict())
