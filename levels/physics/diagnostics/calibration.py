"""Wavelength calibration: matching lamp peaks to known lines and fitting a dispersion polynomial.

A reference-lamp spectrum gives peak positions ``p`` (pixel, or a rough
wavelength axis); the stored lines of the lamp's species give wavelengths
``lambda``. The calibration is the polynomial

.. math:: \\lambda(p) = \\sum_{k=0}^{d} c_k\\, p^k

fitted by weighted linear least squares to the matched pairs, with iterative
outlier rejection (a pair whose residual exceeds ``clip`` times the robust
scale of the residuals, 1.4826 MAD, is rejected and the fit repeated until no
pair changes).

Matching without a good first guess (a pixel axis) is a pattern search: every
pair of strong peaks and every pair of strong lines define a linear map
``lambda = a + b p``; maps with a dispersion ``b`` within a factor of the
rough one (from the given wavelength range) are scored by how many peaks land
within a tolerance of a line, and the best map seeds an iteration that raises
the polynomial degree step by step, re-matching every peak each time (the
voting idea of the Hough transform, here on pairs; each match votes with the
square root of the product of the relative peak and line strengths). While the map is still
rough, peaks and lines closer than half the matching tolerance are treated
as one (weighted centroids), so close pairs such as the H/D isotope pairs
cannot be crossed; the tolerance shrinks with the fit's residuals.

References
----------
.. [1] P. V. C. Hough, "Method and means for recognizing complex patterns",
   US patent 3,069,654 (1962); R. O. Duda and P. E. Hart, Commun. ACM 15, 11
   (1972) (voting over candidate parameters).
.. [2] P. R. Bevington and D. K. Robinson, *Data Reduction and Error Analysis
   for the Physical Sciences*, 3rd ed., McGraw-Hill (2003), ch. 7 (linear least squares).
.. [3] P. J. Rousseeuw and C. Croux, J. Am. Stat. Assoc. 88, 1273 (1993) (MAD scale).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray

from levels.errors import PhysicsInputError

__all__ = ["Dispersion", "fit_dispersion", "evaluate", "linear_seed", "match_to_lines", "calibrate", "merge_blends"]


@dataclass
class Dispersion:
    """A fitted dispersion polynomial and the pairs it used.

    ``coefficients`` are ascending powers of the raw axis value (pixel):
    lambda = c0 + c1 p + c2 p^2 + ... (nm). ``used`` is a boolean mask over the
    pairs given to the fit; ``residual_nm`` = observed line minus polynomial.
    """

    degree: int
    coefficients: NDArray[np.float64]
    pixel: NDArray[np.float64]
    line_nm: NDArray[np.float64]
    residual_nm: NDArray[np.float64]
    used: NDArray[np.bool_]
    rms_nm: float
    rms_pixel: float
    warnings: list[str] = field(default_factory=list)
    line_index: NDArray[np.intp] | None = None
    peak_index: NDArray[np.intp] | None = None


def evaluate(coefficients: ArrayLike, pixel: ArrayLike) -> NDArray[np.float64]:
    """Wavelength of ``pixel`` from ascending polynomial coefficients.

    Examples
    --------
    >>> evaluate([400.0, 0.1, 1e-6], [0.0, 1000.0]).tolist()
    [400.0, 501.0]
    """
    return np.polynomial.polynomial.polyval(np.asarray(pixel, dtype=float), np.asarray(coefficients, dtype=float))


def fit_dispersion(
    pixel: ArrayLike,
    line_nm: ArrayLike,
    degree: int = 3,
    *,
    weights: ArrayLike | None = None,
    clip: float = 4.0,
    floor_nm: float = 0.0,
    max_iter: int = 20,
) -> Dispersion:
    """Least-squares dispersion polynomial with iterative outlier rejection.

    Parameters
    ----------
    pixel : array_like
        Peak positions on the raw axis.
    line_nm : array_like
        Matched line wavelengths, nm.
    degree : int
        Polynomial degree (0..7); at least ``degree + 2`` pairs are needed.
    weights : array_like, optional
        ``1 / sigma_nm`` per pair (default equal).
    clip : float
        Rejection threshold in robust standard deviations of the residuals.
    floor_nm : float
        Residuals below this are never rejected (protects a nearly perfect fit).
    max_iter : int
        Largest number of reject-and-refit passes.

    Returns
    -------
    Dispersion

    Raises
    ------
    PhysicsInputError
        Too few pairs for the degree, bad degree, non-finite input.

    Examples
    --------
    >>> p = np.arange(0.0, 2000.0, 100.0)
    >>> lam = 400 + 0.05 * p + 2e-6 * p**2
    >>> lam[5] += 1.0                       # a wrong match
    >>> d = fit_dispersion(p, lam, 2, floor_nm=1e-6)
    >>> int((~d.used).sum()), round(float(d.coefficients[1]), 6)
    (1, 0.05)
    """
    p = np.asarray(pixel, dtype=float)
    lam = np.asarray(line_nm, dtype=float)
    if isinstance(degree, bool) or int(degree) != degree or not 0 <= degree <= 7:
        raise PhysicsInputError(f"degree must be an integer 0..7, got {degree!r}")
    if p.shape != lam.shape or p.ndim != 1:
        raise PhysicsInputError("pixel and line_nm must be 1-D arrays of one length")
    if not (np.all(np.isfinite(p)) and np.all(np.isfinite(lam))):
        raise PhysicsInputError("pixel and line_nm must be finite")
    if p.size < degree + 2:
        raise PhysicsInputError(
            f"a degree-{degree} dispersion needs at least {degree + 2} matched lines, "
            f"found {p.size}; lower --degree or add lines"
        )
    w = np.ones_like(p) if weights is None else np.asarray(weights, dtype=float)
    used = np.ones(p.size, dtype=bool)
    warnings: list[str] = []
    lo, hi = float(p.min()), float(p.max())
    span = (hi - lo) / 2.0 or 1.0
    mid = (hi + lo) / 2.0
    for _ in range(max_iter):
        t = (p[used] - mid) / span
        a = np.polynomial.polynomial.polyvander(t, degree) * w[used, None]
        coef_t, *_ = np.linalg.lstsq(a, lam[used] * w[used], rcond=None)
        model = np.polynomial.polynomial.polyval((p - mid) / span, coef_t)
        resid = lam - model
        r_used = resid[used]
        scale = 1.4826 * np.median(np.abs(r_used - np.median(r_used)))
        limit = max(clip * scale, floor_nm)
        new = np.abs(resid) <= limit if scale > 0 else used.copy()
        if new.sum() < degree + 2:
            warnings.append("outlier rejection would leave too few lines; stopped rejecting")
            break
        if np.array_equal(new, used):
            break
        used = new
    # ascending power-series coefficients of the raw pixel
    poly_t = np.polynomial.Polynomial(coef_t)
    shift = np.polynomial.Polynomial([-mid / span, 1.0 / span])
    coefficients = poly_t(shift).coef
    coefficients = np.concatenate([coefficients, np.zeros(degree + 1 - coefficients.size)])
    resid = lam - evaluate(coefficients, p)
    dof = max(int(used.sum()) - (degree + 1), 1)
    rms = float(np.sqrt(np.sum(resid[used] ** 2) / dof))
    slope = np.abs(np.polynomial.polynomial.polyval(p, np.polynomial.polynomial.polyder(coefficients)))
    rms_px = float(np.sqrt(np.sum((resid[used] / slope[used]) ** 2) / dof))
    return Dispersion(
        degree=int(degree),
        coefficients=np.asarray(coefficients, dtype=float),
        pixel=p,
        line_nm=lam,
        residual_nm=np.asarray(resid, dtype=float),
        used=used,
        rms_nm=rms,
        rms_pixel=rms_px,
        warnings=warnings,
    )


def merge_blends(line_nm: ArrayLike, strength: ArrayLike, resolution_nm: float) -> tuple[NDArray, NDArray, list]:
    """Merge lines closer than ``resolution_nm`` into one (strength-weighted mean wavelength).

    Returns
    -------
    (wavelength_nm, strength, members)
        Merged wavelengths (sorted), summed strengths, and the input indices of each merged line.

    Examples
    --------
    >>> lam, s, members = merge_blends([500.0, 500.001, 510.0], [1.0, 3.0, 1.0], 0.01)
    >>> lam.round(5).tolist(), s.tolist(), [m.tolist() for m in members]
    ([500.00075, 510.0], [4.0, 1.0], [[0, 1], [2]])
    """
    lam = np.asarray(line_nm, dtype=float)
    s = np.asarray(strength, dtype=float)
    order = np.argsort(lam)
    if order.size == 0:
        return np.zeros(0), np.zeros(0), []
    breaks = np.flatnonzero(np.diff(lam[order]) > resolution_nm) + 1
    members = np.split(order, breaks)
    merged = np.array([np.average(lam[m], weights=s[m]) if s[m].sum() > 0 else lam[m].mean() for m in members])
    return merged, np.array([s[m].sum() for m in members]), members


def _nearest(sorted_values: NDArray, query: NDArray) -> tuple[NDArray, NDArray]:
    """Index into ``sorted_values`` of the nearest value to each query, and the distance."""
    j = np.clip(np.searchsorted(sorted_values, query), 1, sorted_values.size - 1)
    left, right = sorted_values[j - 1], sorted_values[j]
    pick = np.where(np.abs(query - left) <= np.abs(right - query), j - 1, j)
    return pick, np.abs(sorted_values[pick] - query)


def _map_votes(mapped: np.ndarray, lines_sorted: np.ndarray, weight_p: np.ndarray, weight_l: np.ndarray,
               tolerance_nm: float) -> tuple[np.ndarray, np.ndarray]:
    """Weighted votes and match counts of candidate maps (rows of ``mapped``: peaks mapped to nm).

    A peak votes for its map when it lands within ``tolerance_nm`` of a line, with weight
    ``weight_p[peak] * weight_l[line]``; a line reached by several peaks of one map counts
    once, with its best vote.
    """
    near, dist = _nearest(lines_sorted, mapped.ravel())
    near, dist = near.reshape(mapped.shape), dist.reshape(mapped.shape)
    hit = dist <= tolerance_nm
    rows = np.broadcast_to(np.arange(mapped.shape[0])[:, None], mapped.shape)[hit]
    keys = rows * lines_sorted.size + near[hit]
    w = (weight_p[None, :] * weight_l[near])[hit]
    order = np.lexsort((-w, keys))
    keys, w, rows = keys[order], w[order], rows[order]
    first = np.ones(keys.size, dtype=bool)
    first[1:] = keys[1:] != keys[:-1]
    votes = np.bincount(rows[first], weights=w[first], minlength=mapped.shape[0])
    count = np.bincount(rows[first], minlength=mapped.shape[0])
    return votes, count


def linear_seed(
    peak_pixel: ArrayLike,
    peak_strength: ArrayLike,
    line_nm: ArrayLike,
    line_strength: ArrayLike,
    *,
    rough_dispersion: float,
    tolerance_nm: float,
    dispersion_range: tuple[float, float] = (0.7, 1.4),
    n_peaks: int = 15,
    n_lines: int = 25,
    rough_ends: tuple | None = None,
    ends_tolerance: float = 0.06,
) -> tuple[float, float, int]:
    """Best linear map lambda = a + b p by voting over peak pairs and line pairs.

    Parameters
    ----------
    peak_pixel, peak_strength : array_like
        Peak positions (raw axis) and their areas.
    line_nm, line_strength : array_like
        Candidate line wavelengths (nm) and expected strengths.
    rough_dispersion : float
        Expected nm per pixel (negative for a reversed axis).
    tolerance_nm : float
        A peak mapped within this of a line counts as a match.
    dispersion_range : (float, float)
        Accepted factor range of b / rough_dispersion.
    n_peaks, n_lines : int
        How many of the strongest peaks and lines vote.
    rough_ends : ((p0, lambda0), (p1, lambda1)), optional
        The rough wavelengths of two axis values (the ends of the frame); maps that put
        either end further than ``ends_tolerance`` of the rough span away are not considered.

    Returns
    -------
    (a, b, matches)

    Raises
    ------
    PhysicsInputError
        Fewer than 2 peaks or lines, or no map with at least 2 matches.

    Examples
    --------
    >>> lines = np.array([410.0, 434.0, 486.0, 656.0, 700.0])
    >>> pix = (lines[:4] - 380.0) / 0.1
    >>> a, b, n = linear_seed(pix, np.ones(4), lines, np.ones(5), rough_dispersion=0.11, tolerance_nm=0.5)
    >>> round(a, 3), round(b, 4), n
    (380.0, 0.1, 4)
    """
    pp = np.asarray(peak_pixel, dtype=float)
    ps = np.asarray(peak_strength, dtype=float)
    ll = np.asarray(line_nm, dtype=float)
    ls = np.asarray(line_strength, dtype=float)
    if pp.size < 2 or ll.size < 2:
        raise PhysicsInputError(
            f"matching needs at least 2 peaks and 2 candidate lines (found {pp.size} peaks, {ll.size} lines)"
        )
    pick_p = np.argsort(-ps)[:n_peaks]
    pick_l = np.argsort(-ls)[:n_lines]
    top_p, top_l = pp[pick_p], ll[pick_l]
    # each match votes with sqrt(relative peak strength x relative line strength): strong peaks should
    # land on strong lines
    weight_p = np.sqrt(np.clip(ps[pick_p] / max(ps[pick_p].max(), 1e-300), 0, None))
    line_order = np.argsort(top_l)
    weight_l = np.sqrt(np.clip(ls[pick_l] / max(ls[pick_l].max(), 1e-300), 0, None))[line_order]
    i, j = np.triu_indices(top_p.size, 1)
    k, m = np.triu_indices(top_l.size, 1)
    p1, p2 = top_p[i][:, None], top_p[j][:, None]
    l1, l2 = top_l[k][None, :], top_l[m][None, :]
    both = []
    for la, lb in ((l1, l2), (l2, l1)):
        b = (lb - la) / (p2 - p1)
        a = la - b * p1
        both.append((a.ravel(), b.ravel()))
    a = np.concatenate([both[0][0], both[1][0]])
    b = np.concatenate([both[0][1], both[1][1]])
    ratio = b / rough_dispersion
    ok = (ratio >= dispersion_range[0]) & (ratio <= dispersion_range[1])
    if rough_ends is not None:
        (q0, l0), (q1, l1) = rough_ends
        room = ends_tolerance * abs(l1 - l0)
        ok &= (np.abs(a + b * q0 - l0) <= room) & (np.abs(a + b * q1 - l1) <= room)
    a, b = a[ok], b[ok]
    if a.size == 0:
        raise PhysicsInputError(
            "no pair of peaks and lines gives a dispersion near the expected one; "
            "check the wavelength range given for the axis"
        )
    # votes are counted among the strong peaks and lines only: a crowd of weak lines (a series
    # converging on its limit) would otherwise let any map match something
    lines_sorted = np.sort(top_l)
    best = (0, -1.0, 0.0, 0.0)
    chunk = max(1, 2_000_000 // max(top_p.size, 1))
    for s0 in range(0, a.size, chunk):
        aa, bb = a[s0 : s0 + chunk, None], b[s0 : s0 + chunk, None]
        mapped = aa + bb * top_p[None, :]
        votes, count = _map_votes(mapped, lines_sorted, weight_p, weight_l, tolerance_nm)
        top = int(np.argmax(votes))
        if votes[top] > best[1] or best[0] == 0:
            best = (int(count[top]), float(votes[top]), float(aa[top, 0]), float(bb[top, 0]))
    if best[0] < 2:
        raise PhysicsInputError("no linear map matches two or more peaks to lines within the tolerance")
    return best[2], best[3], best[0]


def quadratic_seed(
    peak_pixel: ArrayLike,
    peak_strength: ArrayLike,
    line_nm: ArrayLike,
    line_strength: ArrayLike,
    *,
    rough_ends: tuple,
    tolerance_nm: float,
    dispersion_range: tuple[float, float] = (0.6, 1.6),
    ends_tolerance: float = 0.06,
    n_peaks: int = 12,
    n_lines: int = 20,
) -> tuple[NDArray, int]:
    """Best quadratic map by voting over triples of strong peaks and triples of strong lines.

    Each ordered triple of peaks and triple of lines fixes a parabola lambda(p); parabolas whose
    slope stays within ``dispersion_range`` of the rough dispersion and whose ends lie within
    ``ends_tolerance`` of the rough span of the rough end wavelengths are scored: every strong line
    reached (within ``tolerance_nm``) by a mapped strong peak adds sqrt(relative peak strength x
    relative line strength), once per line. A parabola takes in the curvature of a grating
    dispersion, which a straight line through two peaks cannot.

    Returns
    -------
    (coefficients, matches)
        Ascending coefficients (c0, c1, c2) of the best parabola and how many lines it reached.

    Raises
    ------
    PhysicsInputError
        Fewer than 3 peaks or lines, or no acceptable parabola.

    Examples
    --------
    >>> pix = np.array([300.0, 900.0, 2100.0, 5400.0])
    >>> lines = np.append(evaluate([398.0, 0.04, -1e-6], pix), 700.0)     # and one line off the frame
    >>> coef, n = quadratic_seed(pix, np.ones(4), lines, np.ones(5), rough_ends=((0, 400), (6000, 600)),
    ...                          tolerance_nm=0.5)
    >>> np.round(coef, 7).tolist(), n
    ([398.0, 0.04, -1e-06], 4)
    """
    pp = np.asarray(peak_pixel, dtype=float)
    ps = np.asarray(peak_strength, dtype=float)
    ll = np.asarray(line_nm, dtype=float)
    ls = np.asarray(line_strength, dtype=float)
    if pp.size < 3 or ll.size < 3:
        raise PhysicsInputError(f"a curved first guess needs at least 3 peaks and 3 lines (found {pp.size}, {ll.size})")
    (q0, l0), (q1, l1) = rough_ends
    rough = (l1 - l0) / (q1 - q0)
    pick_p = np.sort(np.argsort(-ps)[:n_peaks])
    pick_l = np.argsort(-ls)[:n_lines]
    top_p = pp[pick_p][np.argsort(pp[pick_p])]
    wp = np.sqrt(np.clip(ps[pick_p][np.argsort(pp[pick_p])] / ps[pick_p].max(), 0, None))
    order_l = np.argsort(ll[pick_l])
    top_l = ll[pick_l][order_l]
    wl = np.sqrt(np.clip(ls[pick_l][order_l] / max(ls[pick_l].max(), 1e-300), 0, None))
    trip_p = np.array(
        [(a, b, c) for a in range(top_p.size) for b in range(a + 1, top_p.size) for c in range(b + 1, top_p.size)]
    )
    trip_l = np.array(
        [(a, b, c) for a in range(top_l.size) for b in range(a + 1, top_l.size) for c in range(b + 1, top_l.size)]
    )
    if rough < 0:
        trip_l = trip_l[:, ::-1]
    x = top_p[trip_p]  # (P, 3)
    best: tuple[float, NDArray[np.float64] | None, int] = (-1.0, None, 0)
    chunk = max(1, 400_000 // max(x.shape[0], 1))
    for s0 in range(0, trip_l.shape[0], chunk):
        y = top_l[trip_l[s0 : s0 + chunk]]  # (L, 3)
        x0, x1, x2 = (x[:, None, n] for n in range(3))
        y0, y1, y2 = (y[None, :, n] for n in range(3))
        d01 = (y1 - y0) / (x1 - x0)
        d12 = (y2 - y1) / (x2 - x1)
        c2 = (d12 - d01) / (x2 - x0)
        c1 = d01 - c2 * (x0 + x1)
        c0 = y0 - c1 * x0 - c2 * x0 * x0
        ok = np.ones(c0.shape, dtype=bool)
        for q in (q0, q1):
            slope = (c1 + 2 * c2 * q) / rough
            ok &= (slope >= dispersion_range[0]) & (slope <= dispersion_range[1])
        room = ends_tolerance * abs(l1 - l0)
        ok &= (np.abs(c0 + c1 * q0 + c2 * q0 * q0 - l0) <= room) & (np.abs(c0 + c1 * q1 + c2 * q1 * q1 - l1) <= room)
        if not ok.any():
            continue
        c0, c1, c2 = c0[ok], c1[ok], c2[ok]
        mapped = c0[:, None] + c1[:, None] * top_p[None, :] + c2[:, None] * top_p[None, :] ** 2
        votes, count = _map_votes(mapped, top_l, wp, wl, tolerance_nm)
        top = int(np.argmax(votes))
        if votes[top] > best[0]:
            best = (float(votes[top]), np.array([c0[top], c1[top], c2[top]]), int(count[top]))
    if best[1] is None or best[2] < 3:
        raise PhysicsInputError(
            "no smooth map puts three or more strong peaks on strong lines; check the species, "
            "the medium and the rough wavelength range"
        )
    return best[1], best[2]


def match_to_lines(
    peak_pixel: ArrayLike, coefficients: ArrayLike, line_nm: ArrayLike, tolerance_nm: float
) -> tuple[NDArray[np.intp], NDArray[np.intp]]:
    """One-to-one matches of peaks to lines under a dispersion: nearest line within tolerance.

    A line claimed by several peaks goes to the nearest one. ``tolerance_nm`` may be one
    value per peak; where it is wider than the smallest, the window must hold exactly one line.

    Returns
    -------
    (peak_index, line_index)

    Examples
    --------
    >>> match_to_lines([0.0, 10.0, 20.0], [500.0, 1.0], [500.1, 510.0, 540.0], 0.5)
    (array([0, 1]), array([0, 1]))
    """
    pp = np.asarray(peak_pixel, dtype=float)
    ll = np.asarray(line_nm, dtype=float)
    if pp.size == 0 or ll.size == 0:
        return np.zeros(0, dtype=np.intp), np.zeros(0, dtype=np.intp)
    order = np.argsort(ll)
    mapped = evaluate(coefficients, pp)
    if ll.size == 1:
        j, dist = np.zeros(pp.size, dtype=np.intp), np.abs(mapped - ll[0])
    else:
        j, dist = _nearest(ll[order], mapped)
    tol = np.broadcast_to(np.asarray(tolerance_nm, dtype=float), pp.shape)
    ok = dist <= tol
    widened = tol > tol.min()
    if widened.any() and ll.size > 1:
        # a widened window must hold one line only (else the match would be a guess)
        lo = np.searchsorted(ll[order], mapped - tol, "left")
        hi = np.searchsorted(ll[order], mapped + tol, "right")
        ok &= ~widened | (hi - lo == 1)
    peaks, lines, dists = np.flatnonzero(ok), order[j[ok]], dist[ok]
    best: dict[int, tuple[float, int]] = {}
    for pi, li, d in zip(peaks.tolist(), lines.tolist(), dists.tolist()):
        if li not in best or d < best[li][0]:
            best[li] = (d, pi)
    pairs = sorted((pi, li) for li, (_, pi) in best.items())
    return (np.array([p for p, _ in pairs], dtype=np.intp), np.array([li for _, li in pairs], dtype=np.intp))


def _clusters(pp, ps, ll, ls, coef, scale):
    """Peaks (by mapped wavelength) and lines closer than ``scale`` nm merged into weighted centroids."""
    order = np.argsort(evaluate(coef, pp))
    mapped = evaluate(coef, pp[order])
    groups = np.split(order, np.flatnonzero(np.diff(mapped) > scale) + 1)
    cp = np.array([np.average(pp[g], weights=np.maximum(ps[g], 1e-300)) for g in groups])
    cl, _, _ = merge_blends(ll, ls, scale)
    return cp, cl


def _stage(pp, ps, ll, ls, coef, tol, degree, clip, floor, scale=None, spread=None):
    """One match-and-fit step on merged peaks and lines; the degree is limited by the matches."""
    cp, cl = _clusters(pp, ps, ll, ls, coef, tol / 2.0 if scale is None else scale)
    reach = tol if spread is None else np.maximum(tol, 4.0 * spread(cp))
    pi, li = match_to_lines(cp, coef, cl, reach)
    use_deg = min(degree, max(pi.size - 2, 0))
    if use_deg < 1:
        raise PhysicsInputError(
            f"only {pi.size} peaks matched lines while refining the calibration "
            "(check the species, the medium and the wavelength range)"
        )
    return fit_dispersion(cp[pi], cl[li], use_deg, clip=clip, floor_nm=floor), pi


def prediction_sigma(fit: Dispersion) -> Callable[[ArrayLike], NDArray[np.float64]]:
    """Standard uncertainty (nm) of the fitted polynomial at any pixel, from its covariance.

    Far outside the fitted pixels the uncertainty grows as the polynomial extrapolates.

    Examples
    --------
    >>> p = np.linspace(0, 1000, 12)
    >>> fit = fit_dispersion(p, 400 + 0.1 * p + np.random.default_rng(0).normal(0, 0.01, 12), 1)
    >>> bool(prediction_sigma(fit)(np.array([3000.0]))[0] > prediction_sigma(fit)(np.array([500.0]))[0])
    True
    """
    used = fit.used
    p = fit.pixel[used]
    mid, span = (p.max() + p.min()) / 2.0, (p.max() - p.min()) / 2.0 or 1.0
    a = np.polynomial.polynomial.polyvander((p - mid) / span, fit.degree)
    cov = np.linalg.pinv(a.T @ a) * max(fit.rms_nm, 1e-12) ** 2

    def sigma(query):
        v = np.polynomial.polynomial.polyvander((np.asarray(query, dtype=float) - mid) / span, fit.degree)
        return np.sqrt(np.maximum(np.einsum("ij,jk,ik->i", v, cov, v), 0.0))

    return sigma


def _settle(pp, ps, ll, ls, coef, tol, degree, clip, floor):
    """Phase A of :func:`calibrate`: fixed tolerance and merging scale, degree raised step by step."""
    previous = -1
    spread = None
    start = min(max(len(coef) - 1, 1), degree)
    for deg in list(range(start, degree + 1)) + [degree] * 10:
        step, pi = _stage(pp, ps, ll, ls, coef, tol, deg, clip, max(floor, tol / 4.0), spread=spread)
        coef = step.coefficients
        if step.degree == degree:
            if pi.size == previous:
                break
            previous = pi.size
            spread = prediction_sigma(step)
    return coef, tol


def calibrate(
    peak_pixel: ArrayLike,
    peak_strength: ArrayLike,
    peak_width: ArrayLike,
    line_nm: ArrayLike,
    line_strength: ArrayLike,
    *,
    degree: int = 3,
    rough_coefficients: ArrayLike | None = None,
    rough_range_nm: tuple[float, float] | None = None,
    axis_range: tuple[float, float] | None = None,
    tolerance_nm: float | None = None,
    clip: float = 4.0,
) -> Dispersion:
    """Match peaks to lines and fit the dispersion, raising the degree step by step.

    Parameters
    ----------
    peak_pixel, peak_strength, peak_width : array_like
        Fitted peaks on the raw axis (centre, area, FWHM in axis units).
    line_nm, line_strength : array_like
        Reference lines (nm, in the medium of the calibration) and expected strengths.
    degree : int
        Final polynomial degree.
    rough_coefficients : array_like, optional
        A first guess of the dispersion (for a rough wavelength axis: ``[0, 1]``).
    rough_range_nm : (float, float), optional
        Wavelengths of the first and last sample of the axis, roughly (needed without
        ``rough_coefficients``); with ``axis_range`` it gives the rough dispersion, and
        the first map must put both ends within 6 % of this span of them.
    axis_range : (float, float), optional
        First and last value of the raw axis.
    tolerance_nm : float, optional
        First match tolerance (default: 3 peak widths mapped to nm, at least 2 samples).
    clip : float
        Outlier rejection threshold (robust sigmas).

    Returns
    -------
    Dispersion
        With ``peak_index`` and ``line_index`` of the pairs (into the inputs).

    Raises
    ------
    PhysicsInputError
        No usable seed or too few matches.
    """
    pp = np.asarray(peak_pixel, dtype=float)
    ps = np.asarray(peak_strength, dtype=float)
    pw = np.asarray(peak_width, dtype=float)
    ll = np.asarray(line_nm, dtype=float)
    ls = np.asarray(line_strength, dtype=float)
    if pp.size < degree + 2:
        raise PhysicsInputError(f"a degree-{degree} calibration needs at least {degree + 2} peaks; found {pp.size}")
    width_px = float(np.median(pw)) if pw.size else 1.0
    notes = []
    if pw.size >= degree + 4:
        # a peak much wider than the instrument's width is an unresolved blend: no place in a calibration
        isolated = pw <= 1.5 * width_px
        if (~isolated).any() and isolated.sum() >= degree + 2:
            notes.append(
                f"{int((~isolated).sum())} peak(s) wider than 1.5 times the median width (unresolved "
                "blends) were left out of the matching"
            )
            keep_index = np.flatnonzero(isolated)
            pp, ps, pw = pp[isolated], ps[isolated], pw[isolated]
        else:
            keep_index = np.arange(pp.size)
    else:
        keep_index = np.arange(pp.size)
    if rough_coefficients is not None:
        coef = np.asarray(rough_coefficients, dtype=float)
        disp = float(np.polynomial.polynomial.polyval(np.median(pp), np.polynomial.polynomial.polyder(coef)))
        tol = tolerance_nm or max(3.0 * width_px * abs(disp), 1e-6)
    else:
        if rough_range_nm is None or axis_range is None:
            raise PhysicsInputError("a pixel axis needs the rough wavelength range of its first and last sample")
        disp = (rough_range_nm[1] - rough_range_nm[0]) / (axis_range[1] - axis_range[0])
        tol = tolerance_nm or max(3.0 * width_px, 2.0) * abs(disp) * 3.0
        ends = ((axis_range[0], rough_range_nm[0]), (axis_range[1], rough_range_nm[1]))
        if degree >= 2 and pp.size >= 3:
            coef, _ = quadratic_seed(pp, ps, ll, ls, rough_ends=ends, tolerance_nm=tol)
        else:
            a, b, _ = linear_seed(pp, ps, ll, ls, rough_dispersion=disp, tolerance_nm=tol, rough_ends=ends)
            coef = np.array([a, b])
    # coarse to fine: while the map is rough, peaks and lines closer than half the tolerance are
    # taken as one (area- or strength-weighted); the tolerance shrinks as the fit improves
    base_tol = 0.5 * width_px * abs(disp)
    floor = 0.05 * width_px * abs(disp)
    # phase A: at the first tolerance, with peaks and lines merged at half of it, raise the degree
    # until the matched set settles (far clusters come in while close pairs are still one)
    coef, tol = _settle(pp, ps, ll, ls, coef, tol, degree, clip, floor)
    # phase B: narrow the tolerance (and the merging scale) as the residuals allow
    spread = None
    for _ in range(30):
        step, pi = _stage(pp, ps, ll, ls, coef, tol, degree, clip, max(floor, tol / 4.0), spread=spread)
        coef = step.coefficients
        spread = prediction_sigma(step) if step.degree == degree else None
        new_tol = max(4.0 * step.rms_nm, base_tol)
        if new_tol >= 0.8 * tol:
            tol = new_tol
            break
        tol = max(new_tol, tol / 2.0)
    # final passes on the single peaks and lines, until the matched set settles
    previous = None
    for _ in range(5):
        pi, li = match_to_lines(pp, coef, ll, tol)
        if pi.size < degree + 2:
            raise PhysicsInputError(
                f"only {pi.size} peaks matched lines; a degree-{degree} calibration needs "
                f"{degree + 2} (check the species, the medium and the wavelength range)"
            )
        fit = fit_dispersion(pp[pi], ll[li], degree, clip=clip, floor_nm=floor)
        fit.peak_index, fit.line_index = pi, li
        coef = fit.coefficients
        key = (tuple(pi.tolist()), tuple(li.tolist()))
        if key == previous:
            break
        previous = key
    fit.peak_index = keep_index[fit.peak_index]
    fit.warnings.extend(notes)
    if degree and fit.used.sum() < degree + 4:
        fit.warnings.append(
            f"only {int(fit.used.sum())} lines fix a degree-{degree} polynomial; "
            "its residuals say little about its accuracy between the lines"
        )
    return fit
