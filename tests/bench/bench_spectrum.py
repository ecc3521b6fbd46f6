"""Benchmark of the windowed synthetic spectrum against a naive full-grid evaluation.

The project's code draws 100,000 Voigt lines on a 200,000-point grid. The baseline evaluates
scipy's Voigt profile of every line on every grid point; that is run on a 1,000-line subset in
the same process and scaled linearly (its cost is exactly proportional to the number of lines)
to 100,000 lines. The windowed result on the subset is compared with the naive one as well.
"""

from __future__ import annotations

import time

import numpy as np
from scipy.special import voigt_profile

from levels.physics.plasma.spectrum import make_grid, synthetic_spectrum, voigt_fwhm_nm

from tests.bench.harness import BenchResult, best_time

N_LINES = 100_000
N_POINTS = 200_000
N_SUBSET = 1_000
_FWHM_PER_SIGMA = 2.0 * np.sqrt(2.0 * np.log(2.0))


def _lines(grid: np.ndarray, rng: np.random.Generator) -> tuple[np.ndarray, ...]:
    """Invented line list: a Gaussian instrument profile of 3 grid steps plus Doppler widths of
    heavy atoms, natural/pressure Lorentz widths 1e-5..1e-3 nm, log-normal powers."""
    step = grid[1] - grid[0]
    centre = rng.uniform(grid[0], grid[-1], N_LINES)
    power = rng.lognormal(0.0, 1.0, N_LINES)
    gauss = np.sqrt((3.0 * step) ** 2 + (rng.uniform(0.5e-3, 2e-3, N_LINES)) ** 2)
    lorentz = rng.uniform(1e-5, 1e-3, N_LINES)
    return centre, power, gauss, lorentz


def _naive(grid: np.ndarray, centre, power, gauss, lorentz) -> np.ndarray:
    out = np.zeros_like(grid)
    for c, p, g, l in zip(centre, power, gauss, lorentz):
        out += p * voigt_profile(grid - c, g / _FWHM_PER_SIGMA, l / 2.0)
    return out


def bench_synthetic_spectrum() -> BenchResult:
    """100,000 lines on 200,000 points: windowed kernel versus the naive full grid (scaled)."""
    rng = np.random.default_rng(20240601)
    grid = make_grid(250.0, 1050.0, points=N_POINTS)
    centre, power, gauss, lorentz = _lines(grid, rng)

    figure = best_time(lambda: synthetic_spectrum(grid, centre, power, gauss, lorentz), repeat=3)

    sub = slice(0, N_SUBSET)
    args = (centre[sub], power[sub], gauss[sub], lorentz[sub])
    start = time.perf_counter()
    naive = _naive(grid, *args)
    naive_subset_s = time.perf_counter() - start
    baseline = naive_subset_s * (N_LINES / N_SUBSET)

    windowed = synthetic_spectrum(grid, *args)
    max_diff_rel_peak = float(np.max(np.abs(windowed - naive)) / np.max(naive))
    fv = voigt_fwhm_nm(gauss, lorentz)
    evaluations = int(np.sum(np.minimum(2.0 * 50.0 * fv / (grid[1] - grid[0]), N_POINTS)))
    return BenchResult(
        name="synthetic_spectrum_100k_lines_200k_points",
        figure=figure,
        baseline=baseline,
        unit="s",
        higher_is_better=False,
        target=None,
        details={
            "lines": N_LINES,
            "grid_points": N_POINTS,
            "grid_step_nm": float(grid[1] - grid[0]),
            "approx_profile_evaluations": evaluations,
            "naive_subset_lines": N_SUBSET,
            "naive_subset_s": naive_subset_s,
            "baseline_scaling": "linear in lines, x100",
            "subset_max_abs_diff_over_peak": max_diff_rel_peak,
        },
    )


if __name__ == "__main__":  # pragma: no cover - manual run
    result = bench_synthetic_spectrum()
    print(result.as_dict())
