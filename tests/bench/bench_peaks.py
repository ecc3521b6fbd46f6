"""Benchmark of peak finding and fitting against scipy's curve_fit, one peak at a time.

The project's code finds and fits 1,000 Gaussian peaks (some blended in pairs) in a 200,000-point
spectrum drawn by levels.physics.plasma.spectrum with noise: baseline, noise, detection and windowed fits of
blends together (levels.physics.diagnostics.peaks.find_and_fit). The baseline fits the same peaks one by
one with scipy.optimize.curve_fit over the whole spectrum (a Gaussian plus a constant, started at the
true centre and width); it runs on a 20-peak subset in the same process and is scaled linearly to
1,000 peaks (each of its fits costs the same whole-spectrum evaluations). The centres of both are
compared on the subset.
"""

from __future__ import annotations

import time

import numpy as np
from scipy.optimize import curve_fit

from levels.physics.diagnostics import peaks
from levels.physics.plasma import spectrum as shapes

from tests.bench.harness import BenchResult, best_time

N_PEAKS = 1_000
N_POINTS = 200_000
N_SUBSET = 20


def _spectrum(rng: np.random.Generator):
    """Invented spectrum: 1,000 Gaussian lines of FWHM 6 samples, every tenth with a neighbour 1.5 FWHM away."""
    grid = shapes.make_grid(300.0, 700.0, points=N_POINTS)
    step = grid[1] - grid[0]
    slots = np.linspace(grid[0] + 200 * step, grid[-1] - 200 * step, N_PEAKS)
    centre = slots + rng.uniform(-20, 20, N_PEAKS) * step
    pairs = np.arange(0, N_PEAKS, 10)
    centre[pairs + 1] = centre[pairs] + 9 * step  # blended with its neighbour
    fwhm = 6 * step
    power = rng.uniform(0.5, 2.0, N_PEAKS) * fwhm
    y = shapes.synthetic_spectrum(grid, centre, power, fwhm, 0.0)
    y += 0.1 + 0.02 * (grid - grid[0]) / (grid[-1] - grid[0]) + rng.normal(0, 0.005, grid.size)
    return grid, y, np.sort(centre), fwhm


def _gauss(x, c, a, f, b):
    return a * np.exp(-4 * np.log(2) * ((x - c) / f) ** 2) + b


def bench_peaks_1000_in_200k() -> BenchResult:
    """1,000 peaks in 200,000 points: the windowed fitter versus whole-spectrum curve_fit per peak (scaled)."""
    rng = np.random.default_rng(20261204)
    grid, y, truth, fwhm = _spectrum(rng)
    result = {}

    def ours():
        result["fit"] = peaks.find_and_fit(grid, y, min_snr=5.0)

    figure = best_time(ours, repeat=3)
    fit = result["fit"]

    subset = truth[np.arange(5, N_PEAKS, N_PEAKS // N_SUBSET)[:N_SUBSET]]
    start = time.perf_counter()
    centres = []
    for c in subset:
        popt, _ = curve_fit(_gauss, grid, y, p0=[c, float(np.interp(c, grid, y)), fwhm, 0.1])
        centres.append(popt[0])
    naive_subset_s = time.perf_counter() - start
    baseline = naive_subset_s * (N_PEAKS / N_SUBSET)

    nearest = np.abs(fit.centre[:, None] - truth[None, :]).argmin(axis=0)
    found = int(np.sum(np.abs(fit.centre[nearest] - truth) < fwhm / 4))
    ours_subset = fit.centre[np.abs(fit.centre[:, None] - subset[None, :]).argmin(axis=0)]
    return BenchResult(
        name="peaks_1000_in_200k_points",
        figure=figure,
        baseline=baseline,
        unit="s",
        higher_is_better=False,
        target=20.0,
        details={
            "peaks": N_PEAKS,
            "points": N_POINTS,
            "peaks_found_within_quarter_fwhm": found,
            "peaks_reported": len(fit),
            "curve_fit_subset_peaks": N_SUBSET,
            "curve_fit_subset_s": naive_subset_s,
            "baseline_scaling": f"linear in peaks, x{N_PEAKS // N_SUBSET}",
            "subset_max_centre_difference_in_fwhm": float(np.max(np.abs(ours_subset - np.array(centres))) / fwhm),
        },
    )


if __name__ == "__main__":  # pragma: no cover - manual run
    res = bench_peaks_1000_in_200k()
    print(res.as_dict())
