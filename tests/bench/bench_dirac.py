"""Benchmarks of the one-electron energies (levels.physics.one_electron.dirac).

* ``bench_levels_million``: energies of 1 000 000 random (n <= 200, l, j) states
  of Fe25+ with every correction, by one vectorised call, against the same
  function called state by state (timed on 2 000 states and given per state).
"""

from __future__ import annotations

import numpy as np

from levels.physics.one_electron.dirac import level_energies_cm1

from tests.bench.harness import BenchResult, best_time

_FE56_NUCLEUS_U = 55.92068  # Fe-56 nucleus, about (only sets the recoil scale here)


def _random_states(count: int, seed: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    n = rng.integers(1, 201, size=count)
    l = (rng.random(count) * n).astype(np.int64)
    two_j = np.where((l > 0) & (rng.random(count) < 0.5), 2 * l - 1, 2 * l + 1)
    return n, l, two_j


def bench_levels_million() -> BenchResult:
    """Per-state time: one vectorised call for 1e6 states vs state-by-state calls."""
    count, loop_count = 1_000_000, 2_000
    n, l, two_j = _random_states(count, seed=7)
    vectorised = best_time(lambda: level_energies_cm1(26, n, l, two_j, nuclear_mass_u=_FE56_NUCLEUS_U), repeat=3)
    ns, ls, js = (a[:loop_count].tolist() for a in (n, l, two_j))

    def loop() -> None:
        for a, b, c in zip(ns, ls, js):
            level_energies_cm1(26, a, b, c, nuclear_mass_u=_FE56_NUCLEUS_U)

    looped = best_time(loop, repeat=1)
    return BenchResult(
        name="dirac.levels_1e6_states",
        figure=vectorised / count,
        baseline=looped / loop_count,
        unit="s/element",
        details={"states": count, "vectorised_total_s": vectorised, "loop_states": loop_count},
    )
