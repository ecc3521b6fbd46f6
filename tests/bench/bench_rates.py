"""Benchmark of the one-valence-electron rates (levels.physics.many_electron.single_valence).

``bench_single_valence_2000_levels``: every E1 line of a 2,000-level sodium-like
species (n <= 45, all l; energies from a Ritz formula with sodium-like quantum
defects, an invented test species) computed by the vectorised method (series
fits, radial functions integrated many at a time, radial integrals as matrix
products) versus a plain per-line Python implementation of the same method
(scalar Numerov loops for the two radial functions of the line, a scalar
integral loop, the same angular factor and A), timed on a random subset of
lines and scaled to the full count. The series fits are the same work per
species in both, so the baseline is charged the measured fit time once.
Target: 100x, and the whole species under 5 s.
"""

from __future__ import annotations

import math
import time

import numpy as np

from levels.physics.many_electron import model_potential, numerov
from levels.physics.many_electron.single_valence import compute_single_valence
from levels.physics.one_electron import rates

from tests.bench.harness import BenchResult

RYDBERG = 109734.69  # sodium-like core mass, cm-1 (only sets the scale)
LIMIT = 41449.45
ALPHA = 0.9448
#: invented sodium-like quantum defects (of the size of the real ones)
DEFECTS = {0: 1.348, 1: 0.855, 2: 0.015, 3: 0.0016}
SPLIT = {1: 17.2, 2: -0.05}  # invented fine-structure splitting at the lowest n, scaled as n*^-3


def sodium_like(count: int = 2000) -> tuple[np.ndarray, ...]:
    """(n, l, 2J, energy above the lowest level, limit above it) of the ``count`` lowest levels."""
    rows = []
    for n in range(3, 60):
        for l in range(0, n):
            nu = n - DEFECTS.get(l, 0.0)
            e = LIMIT - RYDBERG / nu**2
            for two_j in ((1,) if l == 0 else (2 * l - 1, 2 * l + 1)):
                shift = 0.0
                if l in SPLIT:
                    sign = 1 if two_j == 2 * l + 1 else -1
                    shift = sign * 0.5 * SPLIT[l] * ((3 - DEFECTS[l]) / nu) ** 3
                rows.append((n, l, two_j, e + shift))
    rows.sort(key=lambda r: r[3])
    rows = rows[:count]
    ground = rows[0][3]
    return (np.array([r[0] for r in rows]), np.array([r[1] for r in rows]), np.array([r[2] for r in rows]),
            np.array([r[3] - ground for r in rows]), LIMIT - ground)


def _scalar_function(z, zeta, alpha, params, l, nu, step):
    """One normalised radial function by plain Python loops (the baseline's per-state work)."""
    r_out = float(numerov.outer_radius(nu, l, zeta))
    count = int(math.ceil(math.sqrt(r_out) / step))
    xs = [step * (i + 1) for i in range(count)]
    energy = -0.5 * zeta**2 / nu**2
    kind, a1, a2, a3, a4, rc = params
    a2 = a1 if math.isnan(a2) else a2
    f = []
    for x in xs:
        r = x * x
        if kind == "model":
            e1, e2 = math.exp(-a1 * r), math.exp(-a2 * r)
            charge = zeta + (z - zeta) * e1 - r * (a3 + a4 * r) * e2
            v = -charge / r - alpha / (2 * r**4) * (1 - math.exp(-((r / rc) ** 6)))
        else:
            v = -zeta / r
        g = 8 * x * x * (v - energy) + (2 * l + 0.5) * (2 * l + 1.5) / (x * x)
        f.append(1 - step * step * g / 12)
    chi = [0.0] * count
    chi[-1] = 1e-30
    for i in range(count - 1, 0, -1):
        nxt = chi[i + 1] if i + 1 < count else 0.0
        fn = f[i + 1] if i + 1 < count else 1.0
        chi[i - 1] = ((12 - 10 * f[i]) * chi[i] - fn * nxt) / f[i - 1]
        if abs(chi[i - 1]) > 1e150:
            for k in range(i - 1, count):
                chi[k] /= 1e150
    # cut where |u| stops falling, from the origin
    u = [abs(c) * math.sqrt(x) for c, x in zip(chi, xs)]
    first = 0
    for i in range(count - 1):
        if u[i + 1] > u[i]:
            first = i
            break
    for i in range(first):
        chi[i] = 0.0
    norm = math.sqrt(2 * step * sum(x * x * c * c for x, c in zip(xs, chi)))
    return xs, [c / norm for c in chi]


def _baseline_line(z, zeta, alpha, pa, pb, la, lb, ja, jb, nua, nub, sigma, step):
    xa, ca = _scalar_function(z, zeta, alpha, pa, la, nua, step)
    xb, cb = _scalar_function(z, zeta, alpha, pb, lb, nub, step)
    rc = 0.5 * (pa[5] + pb[5])
    both_model = pa[0] == "model" and pb[0] == "model"
    total = 0.0
    for i in range(min(len(xa), len(xb))):
        r = xa[i] * xa[i]
        # the core-polarised dipole operator only between two model-potential functions, as the method does
        d = r * (1 - alpha / r**3 * (1 - math.exp(-((r / rc) ** 3)))) if both_model else r
        total += xa[i] * xa[i] * ca[i] * cb[i] * d
    radial = 2 * step * total
    up_l, up_j = (la, ja) if nua > nub else (lb, jb)
    lo_l, lo_j = (lb, jb) if nua > nub else (la, ja)
    ang = float(rates.fine_structure_factor(up_l, up_j, lo_l, lo_j))
    strength = ang * max(la, lb) * radial**2
    return rates.A_COEFFICIENT * sigma**3 * strength / (up_j + 1)


def bench_single_valence_2000_levels() -> BenchResult:
    """All E1 lines of a 2,000-level one-valence-electron species vs per-line Python, same method."""
    n, l, tj, e, limit = sodium_like(2000)
    # warm-up on a few levels (loads the compiled Numerov kernels from the numba cache)
    compute_single_valence(n[:40], l[:40], tj[:40], e[:40], z=11, charge=0, ionization_cm1=limit,
                           rydberg_cm1=RYDBERG, alpha_c=ALPHA)
    t0, c0 = time.perf_counter(), time.process_time()
    res = compute_single_valence(n, l, tj, e, z=11, charge=0, ionization_cm1=limit, rydberg_cm1=RYDBERG,
                                 alpha_c=ALPHA)
    t_ours, cpu_ours = time.perf_counter() - t0, time.process_time() - c0
    e1 = res.multipole == "E1"
    count = int(e1.sum())

    # the fits alone (the same per-species work for the baseline)
    t0 = time.perf_counter()
    nu = np.sqrt(RYDBERG / (limit - e))
    params = {}
    for s in res.series:
        if s.method == "model potential":
            sel = (l == s.l) & (tj == s.two_j)
            published = model_potential.published_shape(11, 0, s.l)
            fit = model_potential.fit_series(11, 1.0, ALPHA, s.l, nu[sel], n[sel],
                                             shape=None if published is None else published[:4])
            params[(s.l, s.two_j)] = ("model", fit.a1, fit.a2, fit.a3, fit.a4, fit.r_c)
        else:
            params[(s.l, s.two_j)] = ("coulomb", 0.0, float("nan"), 0.0, 0.0, model_potential.default_cutoff(ALPHA))
    t_fits = time.perf_counter() - t0

    rng = np.random.default_rng(11)
    subset = rng.choice(np.flatnonzero(e1), size=12, replace=False)
    t0 = time.perf_counter()
    check = []
    for k in subset:
        a, b = int(res.lower[k]), int(res.upper[k])
        check.append(_baseline_line(11, 1.0, ALPHA, params[(l[a], tj[a])], params[(l[b], tj[b])], int(l[a]), int(l[b]),
                                    int(tj[a]), int(tj[b]), float(nu[a]), float(nu[b]), float(e[b] - e[a]), 0.04))
    t_subset = time.perf_counter() - t0
    t_baseline = t_fits + t_subset / len(subset) * count
    agree = float(np.max(np.abs(np.array(check) / res.a_per_s[subset] - 1)))
    return BenchResult(name="single_valence_2000_levels", figure=t_ours, baseline=t_baseline, unit="s", target=100.0,
                       details={"levels": int(len(n)), "e1_lines": count, "fits_s": round(t_fits, 3),
                                "baseline_lines_timed": int(len(subset)),
                                "baseline_per_line_s": round(t_subset / len(subset), 4),
                                "max_rel_difference_subset": agree, "cpu_s": round(cpu_ours, 3),
                                "under_5_s": t_ours < 5.0})


if __name__ == "__main__":  # pragma: no cover
    result = bench_single_valence_2000_levels()
    print(result.as_dict())
