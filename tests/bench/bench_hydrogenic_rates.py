"""Benchmarks of the hydrogenic radial integrals and E1 rates (levels.physics.one_electron.radial / rates).

* ``bench_radial_vs_quad``: 200 radial dipole integrals with n <= 30, by the
  vectorised recurrence versus numerical integration (scipy quad) of the
  lambdified ``sympy.physics.hydrogen.R_nl`` product; per-element time.
* ``bench_e1_rates_n200``: every nl-resolved E1 line of hydrogen up to n = 200,
  by the vectorised driver versus per-line scalar calls (scalar radial integral,
  line strength, A and f) timed on a random subset and scaled to the full count.
"""

from __future__ import annotations

import time
import warnings

import numpy as np

from levels.physics.one_electron.radial import radial_dipole, radial_dipole_array, table_size
from levels.physics.one_electron.rates import A_COEFFICIENT, F_COEFFICIENT, hydrogenic_e1_lines

from tests.bench.harness import BenchResult, best_time

_R_INF_CM1 = 109737.31568160  # only sets the scale of the wavenumbers here


def _random_elements(count: int, n_top: int, seed: int) -> list[tuple[int, int, int, int]]:
    rng = np.random.default_rng(seed)
    out: list[tuple[int, int, int, int]] = []
    while len(out) < count:
        n = int(rng.integers(2, n_top + 1))
        n2 = int(rng.integers(1, n))
        l2 = int(rng.integers(0, n2))
        l = l2 + int(rng.choice([-1, 1]))
        if 0 <= l < n:
            out.append((n, l, n2, l2))
    return out


def bench_radial_vs_quad() -> BenchResult:
    """Per-element time: vectorised recurrence vs scipy quad of lambdified sympy R_nl."""
    import sympy as sp
    from scipy.integrate import quad
    from sympy.physics.hydrogen import R_nl

    elements = _random_elements(200, 30, seed=2024)
    n, l, n2, l2 = (np.array(c) for c in zip(*elements))

    t_ours = best_time(lambda: radial_dipole_array(n, l, n2, l2), repeat=7, number=10)
    ours = radial_dipole_array(n, l, n2, l2)
    t_scalar = best_time(lambda: [radial_dipole(*e) for e in elements], repeat=3)

    r = sp.Symbol("r", positive=True)
    t0 = time.perf_counter()
    integrands = [sp.lambdify(r, R_nl(a, b, r) * R_nl(c, d, r) * r**3, "numpy") for a, b, c, d in elements]
    t_lambdify = time.perf_counter() - t0

    quad_values = np.empty(len(elements))
    t0 = time.perf_counter()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for i, ((a, _, c, _), f) in enumerate(zip(elements, integrands)):
            upper = 6.0 * max(a, c) ** 2 + 60.0
            quad_values[i] = quad(f, 0.0, upper, limit=1000, epsabs=0.0, epsrel=1e-12)[0]
    t_quad = time.perf_counter() - t0

    # accuracy-matched numerical integration: the same quad with the integrand
    # evaluated in 35-digit mpmath (float64 loses digits to cancellation at n ~ 30);
    # timed on the first 8 elements only
    import mpmath

    subset = elements[:8]
    t0 = time.perf_counter()
    mp_rel = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for i, (a, b, c, d) in enumerate(subset):
            g = sp.lambdify(r, R_nl(a, b, r) * R_nl(c, d, r) * r**3, "mpmath")

            def f(x: float, g=g) -> float:
                with mpmath.workdps(35):
                    return float(g(mpmath.mpf(x)))

            value = quad(f, 0.0, 6.0 * max(a, c) ** 2 + 60.0, limit=1000, epsabs=0.0, epsrel=1e-13)[0]
            mp_rel.append(abs(value / ours[i] - 1.0))
    t_mp = (time.perf_counter() - t0) / len(subset)

    per = len(elements)
    rel = np.abs(quad_values / ours - 1.0)
    return BenchResult(
        name="radial_dipole_vs_quad_sympy_R_nl",
        figure=t_ours / per,
        baseline=t_quad / per,
        unit="s/element",
        higher_is_better=False,
        target=1e4,
        details={
            "elements": per,
            "n_max": int(max(n.max(), n2.max())),
            "baseline": "scipy.integrate.quad of lambdified sympy R_nl*R_nl*r^3 (lambdify time excluded)",
            "quad_plus_lambdify_s_per_element": (t_quad + t_lambdify) / per,
            "ratio_including_lambdify": (t_quad + t_lambdify) / t_ours,
            "scalar_radial_dipole_s_per_element": t_scalar / per,
            "quad_vs_recurrence_median_rel_diff": float(np.median(rel)),
            "quad_vs_recurrence_max_rel_diff": float(rel.max()),
            "accurate_quad_35digit_s_per_element": t_mp,
            "ratio_vs_accurate_quad": t_mp / (t_ours / per),
            "accurate_quad_vs_recurrence_max_rel_diff": float(max(mp_rel)),
        },
    )


def bench_e1_rates_n200() -> BenchResult:
    """All nl-resolved E1 lines of hydrogen to n = 200: vectorised driver vs scalar calls."""
    n_max = 200
    mu = 0.999455679425
    n = np.concatenate([np.full(k, k) for k in range(1, n_max + 1)])
    l = np.concatenate([np.arange(k) for k in range(1, n_max + 1)])
    E = _R_INF_CM1 * mu * (1.0 - 1.0 / n.astype(float) ** 2)

    result: dict = {}

    def run() -> None:
        result["out"] = hydrogenic_e1_lines(n, l, None, E, z=1, mass_ratio=mu, fine_structure=False)

    t_vec = best_time(run, repeat=2)
    out = result["out"]
    n_lines = int(out["upper"].size)

    # baseline: the same quantities line by line with the scalar radial integral,
    # on a random subset of the lines, scaled to the full count
    rng = np.random.default_rng(5)
    subset = rng.choice(n_lines, size=20_000, replace=False)
    up, lo = out["upper"][subset], out["lower"][subset]
    quads = list(zip(n[up].tolist(), l[up].tolist(), n[lo].tolist(), l[lo].tolist()))

    def scalar() -> list[tuple[float, float, float]]:
        rows = []
        for a, b, c, d in quads:
            R = radial_dipole(a, b, c, d, 1, mu)
            S = 2.0 * max(b, d) * R * R
            sigma = _R_INF_CM1 * mu * (1.0 / (c * c) - 1.0 / (a * a))
            rows.append((S, A_COEFFICIENT * sigma**3 * S / (2 * (2 * b + 1)),
                         F_COEFFICIENT * sigma * S / (2 * (2 * d + 1))))
        return rows

    t_sub = best_time(scalar, repeat=1)
    ref_S = np.array([row[0] for row in scalar()])
    t_base = t_sub * n_lines / subset.size

    t0 = time.perf_counter()
    n_fs, l_fs, j_fs = [], [], []
    for k in range(1, n_max + 1):
        for ll in range(k):
            for tj in (2 * ll - 1, 2 * ll + 1):
                if tj > 0:
                    n_fs.append(k)
                    l_fs.append(ll)
                    j_fs.append(tj)
    nf, lf, jf = np.array(n_fs), np.array(l_fs), np.array(j_fs)
    alpha2 = 5.325135e-5  # alpha^2, only to split the j levels here
    Ef = _R_INF_CM1 * mu * (1 - 1 / nf**2 - alpha2 / nf**3 * (2.0 / (jf + 1) - 0.75 / nf))
    t_setup = time.perf_counter() - t0
    t0 = time.perf_counter()
    out_fs = hydrogenic_e1_lines(nf, lf, jf, Ef, z=1, mass_ratio=mu, fine_structure=True)
    t_fs = time.perf_counter() - t0

    return BenchResult(
        name="hydrogen_e1_lines_nl_n200",
        figure=t_vec,
        baseline=t_base,
        unit="s",
        higher_is_better=False,
        target=None,
        details={
            "n_max": n_max,
            "lines": n_lines,
            "expected_lines": table_size(n_max),
            "baseline": "per-line scalar radial_dipole + S, A, f in Python, timed on 20000 random lines, scaled",
            "baseline_subset_s": t_sub,
            "subset_max_rel_diff_S": float(np.max(np.abs(ref_S / out["S"][subset] - 1.0))),
            "fine_structure_lines": int(out_fs["upper"].size),
            "fine_structure_s": t_fs,
            "fine_structure_setup_s": t_setup,
        },
    )


if __name__ == "__main__":
    for bench in (bench_radial_vs_quad, bench_e1_rates_n200):
        res = bench()
        print(res.name, f"figure={res.figure:.4g} {res.unit}", f"baseline={res.baseline:.4g}", f"ratio={res.ratio:.4g}")
        for k, v in res.details.items():
            print("   ", k, v)
