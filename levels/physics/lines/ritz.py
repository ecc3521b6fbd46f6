"""Level energies from measured line wavenumbers (Ritz combination principle), by weighted least squares.

Every measured line gives one equation sigma_i = E_upper(i) - E_lower(i)
with uncertainty u_i. With one level's energy fixed, the energies of all
levels connected to it through lines follow from the weighted linear least
squares problem

    minimise  chi2 = sum_i ((sigma_i - E_upper(i) + E_lower(i)) / u_i)^2 .

Its normal matrix A^T W A (A the signed incidence matrix of the level graph,
W = diag(1/u_i^2)) is the weighted graph Laplacian with the fixed level's
row and column removed: sparse, symmetric and positive definite on the levels
connected to the fixed one. The covariance of the energies is its inverse;
the Ritz wavenumber E_u - E_l of each line then carries the uncertainty
sqrt(C_uu + C_ll - 2 C_ul).

References
----------
W. Ritz, "On a new law of series spectra", Astrophys. J. 28, 237-243 (1908).
P. R. Bevington and D. K. Robinson, *Data Reduction and Error Analysis for
the Physical Sciences*, 3rd ed. (McGraw-Hill, 2003), chapter 7 (linear least
squares and the covariance matrix).
X. S. Li, "An overview of SuperLU: algorithms, implementation, and user
interface", ACM Trans. Math. Softw. 31, 302-325 (2005) (the sparse factor).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import numpy.typing as npt
import scipy.linalg as sla
import scipy.sparse as sp
import scipy.sparse.csgraph as csgraph
import scipy.sparse.linalg as spla
from scipy import stats

from levels.errors import PhysicsInputError

__all__ = ["RitzFit", "optimize_levels", "DENSE_MAX_LEVELS"]

#: Up to this many free levels the covariance is taken from a dense Cholesky
#: inverse (fastest: the fill-in of a sparse factor of a level graph is large);
#: above it, from blocked sparse LU solves with memory O(levels x block).
DENSE_MAX_LEVELS = 4000
_BLOCK = 256
_OUTLIER_SIGMA = 3.0
_CHI2_WARN_QUANTILE = 0.99
_REFINE_STEPS = 3


@dataclass(frozen=True)
class RitzFit:
    """Result of :func:`optimize_levels`.

    Attributes
    ----------
    energy_cm1 : ndarray, shape (n_levels,)
        Optimised level energies, cm-1; NaN for levels not connected to the fixed one.
    unc_cm1 : ndarray, shape (n_levels,)
        Their 1 sigma uncertainties relative to the fixed level, cm-1 (0 for
        the fixed level, NaN where not connected).
    n_lines : ndarray of int, shape (n_levels,)
        Number of input lines that end on each level.
    residual_cm1 : ndarray, shape (n_lines,)
        Observed minus Ritz wavenumber of each line, cm-1 (NaN if disconnected).
    normalized_residual : ndarray, shape (n_lines,)
        residual_cm1 / unc_cm1 of the line.
    line_flags : ndarray of str, shape (n_lines,)
        '' , 'outlier' (|normalized residual| > 3) or 'disconnected'.
    level_flags : ndarray of str, shape (n_levels,)
        '', 'fixed', 'single-line level' (determined by one transition only)
        or 'disconnected'.
    chi2 : float
        Sum of squared normalised residuals over the connected lines.
    dof : int
        Connected lines minus free levels.
    warnings : list of str
        Plain-language warnings.
    ritz_cm1 : ndarray, shape (n_lines,)
        Ritz wavenumber E_upper - E_lower of each line, cm-1.
    ritz_unc_cm1 : ndarray, shape (n_lines,)
        Its 1 sigma uncertainty from the covariance, cm-1.
    birge_ratio : float
        sqrt(chi2 / dof), NaN when dof = 0.
    method : str
        "dense" or "sparse": how the normal equations were factorised
        ("none" when no level besides the fixed one is connected).
    """

    energy_cm1: np.ndarray
    unc_cm1: np.ndarray
    n_lines: np.ndarray
    residual_cm1: np.ndarray
    normalized_residual: np.ndarray
    line_flags: np.ndarray
    level_flags: np.ndarray
    chi2: float
    dof: int
    warnings: list[str] = field(default_factory=list)
    ritz_cm1: np.ndarray = field(default_factory=lambda: np.empty(0))
    ritz_unc_cm1: np.ndarray = field(default_factory=lambda: np.empty(0))
    birge_ratio: float = float("nan")
    method: str = "dense"


def _validate(lower, upper, wavenumber_cm1, unc_cm1, n_levels, fixed_index, fixed_energy_cm1):
    if int(n_levels) != n_levels or n_levels < 1:
        raise PhysicsInputError("n_levels must be an integer >= 1")
    n_levels = int(n_levels)
    lo = np.asarray(lower)
    up = np.asarray(upper)
    for name, arr in (("lower", lo), ("upper", up)):
        if arr.size and arr.dtype.kind not in "iu":
            if arr.dtype.kind != "f" or np.any(arr != np.round(arr)):
                raise PhysicsInputError(f"{name} must hold integer level indices")
    lo = lo.astype(np.int64).ravel()
    up = up.astype(np.int64).ravel()
    sigma = np.asarray(wavenumber_cm1, dtype=float).ravel()
    unc = np.asarray(unc_cm1, dtype=float).ravel()
    if not (lo.size == up.size == sigma.size == unc.size):
        raise PhysicsInputError("lower, upper, wavenumber_cm1 and unc_cm1 must have the same length")
    if np.any((lo < 0) | (lo >= n_levels) | (up < 0) | (up >= n_levels)):
        raise PhysicsInputError(f"level indices must lie in 0..{n_levels - 1}")
    if np.any(lo == up):
        raise PhysicsInputError("a line must join two different levels (lower == upper found)")
    if not np.all(np.isfinite(sigma)) or np.any(sigma <= 0.0):
        raise PhysicsInputError("wavenumbers must be positive and finite (cm-1)")
    if not np.all(np.isfinite(unc)) or np.any(unc <= 0.0):
        raise PhysicsInputError("line uncertainties must be positive and finite (cm-1)")
    if int(fixed_index) != fixed_index or not 0 <= fixed_index < n_levels:
        raise PhysicsInputError(f"fixed_index must lie in 0..{n_levels - 1}")
    if not np.isfinite(fixed_energy_cm1):
        raise PhysicsInputError("fixed_energy_cm1 must be finite")
    return lo, up, sigma, unc, n_levels, int(fixed_index), float(fixed_energy_cm1)


def _preview(indices: np.ndarray, limit: int = 10) -> str:
    shown = ", ".join(str(int(i)) for i in indices[:limit])
    return shown + (", ..." if indices.size > limit else "")


class _DenseSolver:
    """Cholesky factor of the normal matrix; the full inverse on request."""

    def __init__(self, normal: sp.spmatrix):
        self._factor = sla.cho_factor(normal.toarray(), lower=True, check_finite=False)

    def solve(self, rhs: np.ndarray) -> np.ndarray:
        return sla.cho_solve(self._factor, rhs, check_finite=False)

    def covariance_entries(self, rows: np.ndarray, cols: np.ndarray):
        c, _ = self._factor
        inv, info = sla.lapack.dpotri(c, lower=1, overwrite_c=0)
        if info != 0:  # pragma: no cover - the factor exists, so the inverse does
            raise PhysicsInputError("normal matrix could not be inverted")
        inv = np.tril(inv) + np.tril(inv, -1).T
        return np.diag(inv).copy(), inv[rows, cols]


class _SparseSolver:
    """Sparse LU (symmetric mode, minimum-degree ordering) with blocked inverse columns."""

    def __init__(self, normal: sp.spmatrix):
        self._lu = spla.splu(
            sp.csc_matrix(normal),
            permc_spec="MMD_AT_PLUS_A",
            diag_pivot_thresh=0.0,
            options={"SymmetricMode": True},
        )
        self._n = normal.shape[0]

    def solve(self, rhs: np.ndarray) -> np.ndarray:
        return self._lu.solve(rhs)

    def covariance_entries(self, rows: np.ndarray, cols: np.ndarray):
        n = self._n
        diag = np.empty(n)
        pairs = np.empty(rows.size)
        order = np.argsort(cols, kind="stable")
        cols_sorted = cols[order]
        for j0 in range(0, n, _BLOCK):
            j1 = min(n, j0 + _BLOCK)
            block = np.zeros((n, j1 - j0))
            block[np.arange(j0, j1), np.arange(j1 - j0)] = 1.0
            x = self._lu.solve(block)
            diag[j0:j1] = x[np.arange(j0, j1), np.arange(j1 - j0)]
            a, b = np.searchsorted(cols_sorted, [j0, j1])
            sel = order[a:b]
            pairs[sel] = x[rows[sel], cols[sel] - j0]
        return diag, pairs


def optimize_levels(
    lower: npt.ArrayLike,
    upper: npt.ArrayLike,
    wavenumber_cm1: npt.ArrayLike,
    unc_cm1: npt.ArrayLike,
    n_levels: int,
    *,
    fixed_index: int = 0,
    fixed_energy_cm1: float = 0.0,
    method: str = "auto",
) -> RitzFit:
    """Optimise level energies from measured lines by weighted linear least squares.

    Parameters
    ----------
    lower, upper : array_like of int, shape (m,)
        Indices (0..n_levels-1) of each line's lower and upper level.
    wavenumber_cm1 : array_like of float, shape (m,)
        Measured vacuum wavenumber of each line, cm-1 (positive).
    unc_cm1 : array_like of float, shape (m,)
        Its 1 sigma uncertainty, cm-1 (positive).
    n_levels : int
        Number of levels (>= 1); levels without lines are allowed.
    fixed_index : int
        The reference level whose energy is held fixed.
    fixed_energy_cm1 : float
        Its energy, cm-1.
    method : {"auto", "dense", "sparse"}
        How to factorise the normal equations: "auto" uses "dense" up to
        :data:`DENSE_MAX_LEVELS` free levels and "sparse" above.

    Returns
    -------
    RitzFit
        Energies with uncertainties, per-line residuals and flags, chi2, dof
        and warnings.

    Raises
    ------
    PhysicsInputError
        Mismatched arrays, indices out of range, a line with lower == upper,
        non-positive wavenumbers or uncertainties, a bad ``fixed_index`` or
        an unknown ``method``. A level graph that is not connected is *not*
        an error: see Notes.

    Notes
    -----
    Normal equations: (A^T W A) E = A^T W sigma over the free levels, with
    the fixed level's column moved to the right-hand side. They are solved for
    corrections to the current energies, with the line residuals recomputed
    from the lines before each step (three steps of iterative refinement), so
    the energies are accurate to far better than their uncertainties even when
    the weights span many decades.

    Covariance: C = (A^T W A)^-1, with the line uncertainties taken as absolute
    (not scaled by the Birge ratio; a chi2 beyond the 99 % point of chi2(dof)
    gives a warning instead). Up to :data:`DENSE_MAX_LEVELS` free levels the
    matrix is factorised densely (Cholesky, LAPACK dpotrf) and inverted
    (dpotri): for a level graph a sparse factor fills in heavily, and the dense
    inverse of a 3000-level problem takes well under a second. Above that, a
    sparse LU factor (SuperLU, minimum-degree ordering) solves for blocks of
    256 columns of C, keeping the diagonal and the entries C_ul needed by the
    lines; memory stays O(levels x 256).

    Levels not connected to the fixed level through lines cannot be placed:
    their energies and uncertainties are NaN, their flag and those of their
    lines are 'disconnected', and a warning names them.

    ``normalized_residual`` is residual / u_line. For a line that alone
    determines a level the residual is zero by construction; such levels are
    flagged 'single-line level' (one neighbouring level, however many times
    that transition was measured).

    References
    ----------
    W. Ritz, Astrophys. J. 28, 237 (1908).
    P. R. Bevington and D. K. Robinson, *Data Reduction and Error Analysis for
    the Physical Sciences* (2003), chapter 7.

    Examples
    --------
    Three levels, three lines forming a closed loop (INVENTED numbers):

    >>> fit = optimize_levels([0, 1, 0], [1, 2, 2], [100.0, 50.0, 150.3], [0.1, 0.1, 0.1], 3)
    >>> [round(float(e), 2) for e in fit.energy_cm1]
    [0.0, 100.1, 150.2]
    >>> round(fit.chi2, 3), fit.dof
    (3.0, 1)
    """
    if method not in ("auto", "dense", "sparse"):
        raise PhysicsInputError("method must be 'auto', 'dense' or 'sparse'")
    lo, up, sigma, unc, n_levels, fixed, e_fixed = _validate(
        lower, upper, wavenumber_cm1, unc_cm1, n_levels, fixed_index, fixed_energy_cm1
    )
    m = lo.size
    messages: list[str] = []
    n_lines = (np.bincount(lo, minlength=n_levels) + np.bincount(up, minlength=n_levels)).astype(np.int64)

    # connectivity of the level graph
    adjacency = sp.coo_matrix((np.ones(m), (lo, up)), shape=(n_levels, n_levels)).tocsr()
    _, labels = csgraph.connected_components(adjacency, directed=False)
    connected = labels == labels[fixed]
    free = connected.copy()
    free[fixed] = False
    free_idx = np.flatnonzero(free)
    n_free = free_idx.size
    col = np.full(n_levels, -1, dtype=np.int64)
    col[free_idx] = np.arange(n_free)
    used = connected[lo]  # both ends share the component
    lo_u, up_u, sig_u, unc_u = lo[used], up[used], sigma[used], unc[used]
    w = 1.0 / unc_u**2
    cl, cu = col[lo_u], col[up_u]

    energy = np.full(n_levels, np.nan)
    energy[connected] = e_fixed
    variance = np.full(n_levels, np.nan)
    variance[fixed] = 0.0
    ritz_var = np.full(m, np.nan)

    chosen = "dense" if (method == "dense" or (method == "auto" and n_free <= DENSE_MAX_LEVELS)) else "sparse"
    if n_free > 0:
        normal = _normal_matrix(cl, cu, w, n_free)
        solver = _DenseSolver(normal) if chosen == "dense" else _SparseSolver(normal)
        for _ in range(_REFINE_STEPS):
            resid = sig_u - (energy[up_u] - energy[lo_u])
            rhs = np.zeros(n_free)
            wr = w * resid
            np.add.at(rhs, cu[cu >= 0], wr[cu >= 0])
            np.subtract.at(rhs, cl[cl >= 0], wr[cl >= 0])
            energy[free_idx] += solver.solve(rhs)
        # covariance entries: diagonal, and C_ul for lines with both ends free
        both = (cl >= 0) & (cu >= 0)
        diag, c_ul = solver.covariance_entries(cu[both], cl[both])
        variance[free_idx] = diag
        var_u = np.where(cu >= 0, diag[np.maximum(cu, 0)], 0.0)
        var_l = np.where(cl >= 0, diag[np.maximum(cl, 0)], 0.0)
        cov_ul = np.zeros(cu.size)
        cov_ul[both] = c_ul
        ritz_var[used] = var_u + var_l - 2.0 * cov_ul

    ritz = np.full(m, np.nan)
    ritz[used] = energy[up_u] - energy[lo_u]
    residual = sigma - ritz
    normalized = residual / unc
    chi2 = float(np.sum(normalized[used] ** 2))
    dof = int(used.sum() - n_free)
    birge = float(np.sqrt(chi2 / dof)) if dof > 0 else float("nan")

    line_flags = np.full(m, "", dtype=object)
    outlier = used & (np.abs(normalized) > _OUTLIER_SIGMA)
    line_flags[outlier] = "outlier"
    line_flags[~used] = "disconnected"

    # distinct neighbours of each level (a repeated measurement is one transition)
    pair_key = np.unique(np.minimum(lo, up) * n_levels + np.maximum(lo, up))
    neighbours = np.bincount(pair_key // n_levels, minlength=n_levels) + np.bincount(
        pair_key % n_levels, minlength=n_levels
    )
    level_flags = np.full(n_levels, "", dtype=object)
    single = free & (neighbours == 1)
    level_flags[single] = "single-line level"
    level_flags[~connected] = "disconnected"
    level_flags[fixed] = "fixed"

    if np.any(~connected):
        lonely = np.flatnonzero(~connected)
        messages.append(
            f"{lonely.size} level(s) not connected to the fixed level {fixed} by any chain of lines "
            f"(energies NaN): {_preview(lonely)}"
        )
    if np.any(single):
        messages.append(f"{int(single.sum())} level(s) determined by a single transition: "
                        f"{_preview(np.flatnonzero(single))}")
    if np.any(outlier):
        messages.append(
            f"{int(outlier.sum())} line(s) more than {_OUTLIER_SIGMA:g} sigma from their Ritz wavenumber: "
            f"{_preview(np.flatnonzero(outlier))}"
        )
    if dof > 0 and chi2 > stats.chi2.ppf(_CHI2_WARN_QUANTILE, dof):
        messages.append(
            f"chi2 = {chi2:.4g} for {dof} degrees of freedom (Birge ratio {birge:.3g}): the line "
            f"uncertainties look too small; multiply the level uncertainties by {birge:.3g} to scale them"
        )
    if n_free > 0 and dof == 0:
        messages.append("no redundant lines (dof = 0): the energies are not checked by any combination")

    return RitzFit(
        energy_cm1=energy,
        unc_cm1=np.sqrt(np.clip(variance, 0.0, None)),
        n_lines=n_lines,
        residual_cm1=residual,
        normalized_residual=normalized,
        line_flags=line_flags.astype(str),
        level_flags=level_flags.astype(str),
        chi2=chi2,
        dof=dof,
        warnings=messages,
        ritz_cm1=ritz,
        ritz_unc_cm1=np.sqrt(np.clip(ritz_var, 0.0, None)),
        birge_ratio=birge,
        method=chosen if n_free > 0 else "none",
    )


def _normal_matrix(cl: np.ndarray, cu: np.ndarray, w: np.ndarray, n_free: int) -> sp.csc_matrix:
    """A^T W A over the free levels; a column index of -1 marks the fixed level."""
    has_u = cu >= 0
    has_l = cl >= 0
    both = has_u & has_l
    rows = np.concatenate([cu[has_u], cl[has_l], cu[both], cl[both]])
    cols = np.concatenate([cu[has_u], cl[has_l], cl[both], cu[both]])
    vals = np.concatenate([w[has_u], w[has_l], -w[both], -w[both]])
    return sp.coo_matrix((vals, (rows, cols)), shape=(n_free, n_free)).tocsc()
