"""Rydberg series limits from the extended Ritz formula, by weighted nonlinear least squares.

The levels n l of one Rydberg series converge on the series limit E_lim (the
ionization energy when the core is left in its ground state) as

    E_n = E_lim - Z_c^2 R_M / (n - delta_n)^2,
    delta_n = delta_0 + delta_2 / (n - delta_0)^2 + delta_4 / (n - delta_0)^4 + ...

where Z_c is the charge of the core seen by the Rydberg electron (ion charge
+ 1: 1 for a neutral atom), R_M = R_inf M / (M + m_e) the Rydberg constant for
the core mass M, and delta_n the quantum defect (the extended Ritz expansion).
Several series of one species (ns, np, nd ...) converge on the same limit and
are fitted together with one shared E_lim and their own defects.

References
----------
G. W. F. Drake and R. A. Swainson, "Quantum defects and the 1/n dependence of
Rydberg energies: second-order polarization effects", Phys. Rev. A 44,
5448-5459 (1991) (the extended Ritz expansion and its validity).
T. F. Gallagher, *Rydberg Atoms* (Cambridge University Press, 1994), chapter 2.
W. C. Martin, "Series formulas for the spectrum of atomic sodium (Na I)",
J. Opt. Soc. Am. 70, 784-788 (1980) (series-limit determination by the Ritz formula).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
import numpy.typing as npt
from scipy import optimize, stats

from levels import units
from levels.errors import PhysicsInputError, QuantumNumberError

__all__ = ["SeriesFit", "rydberg_constant_cm1", "fit_series_limit"]

# A chi2 above this quantile of the chi2(dof) distribution triggers a warning.
_CHI2_WARN_QUANTILE = 0.99


def rydberg_constant_cm1(nuclear_mass_u: float) -> float:
    """Rydberg constant for a finite core mass, in cm-1.

    Parameters
    ----------
    nuclear_mass_u : float
        Mass M of the core the outer electron moves about, in u: the nucleus
        for a one-electron ion, otherwise the ion core (atomic mass less the
        mass of the electrons not in the core). Positive.

    Returns
    -------
    float
        R_M = R_inf M / (M + m_e), cm-1.

    Raises
    ------
    PhysicsInputError
        A mass that is not positive and finite.

    Notes
    -----
    R_inf and m_e/u are the CODATA values of :mod:`levels.units`.

    References
    ----------
    P. J. Mohr, D. B. Newell, B. N. Taylor, E. Tiesinga, CODATA recommended
    values, Rev. Mod. Phys. (the release named by ``levels.units.CODATA_RELEASE``).

    Examples
    --------
    >>> round(rydberg_constant_cm1(1.007276466621), 3)   # proton
    109677.583
    """
    m = float(nuclear_mass_u)
    if not np.isfinite(m) or m <= 0.0:
        raise PhysicsInputError(f"nuclear_mass_u must be positive and finite, got {nuclear_mass_u!r}")
    return units.R_INF / 100.0 * m / (m + units.M_E_U)


@dataclass(frozen=True)
class SeriesFit:
    """Result of :func:`fit_series_limit`.

    Attributes
    ----------
    limit_cm1 : float
        Fitted series limit, cm-1 (same zero as the level energies).
    limit_unc_cm1 : float
        Standard (1 sigma) uncertainty of the limit, cm-1, from the covariance
        of the weighted fit with the level uncertainties taken as given (not
        scaled by the Birge ratio; see the Notes of :func:`fit_series_limit`).
    quantum_defects : list of list of float
        Per series, [delta_0, delta_2, delta_4, ...] (dimensionless).
    quantum_defect_unc : list of list of float
        Their 1 sigma uncertainties.
    residuals_cm1 : list of ndarray
        Per series, observed minus fitted energy of each level, cm-1.
    chi2 : float
        Sum of squared normalised residuals.
    dof : int
        Degrees of freedom: levels minus parameters.
    birge_ratio : float
        sqrt(chi2 / dof) (NaN when dof = 0); near 1 when the uncertainties are right.
    n_used : list of int
        Number of levels of each series used.
    warnings : list of str
        Plain-language warnings (short series, narrow n range, poor fit).
    """

    limit_cm1: float
    limit_unc_cm1: float
    quantum_defects: list[list[float]]
    residuals_cm1: list[np.ndarray]
    chi2: float
    dof: int
    warnings: list[str] = field(default_factory=list)
    quantum_defect_unc: list[list[float]] = field(default_factory=list)
    birge_ratio: float = float("nan")
    n_used: list[int] = field(default_factory=list)


def _validate(series) -> list[tuple[np.ndarray, np.ndarray, np.ndarray]]:
    if len(series) == 0:
        raise PhysicsInputError("give at least one series")
    out = []
    for k, item in enumerate(series):
        if len(item) != 3:
            raise PhysicsInputError(f"series {k}: expected (n, energy_cm1, unc_cm1)")
        n, e, u = (np.asarray(a, dtype=float).ravel() for a in item)
        if not (n.size == e.size == u.size):
            raise PhysicsInputError(f"series {k}: n, energy and uncertainty arrays differ in length")
        if n.size == 0:
            raise PhysicsInputError(f"series {k} is empty")
        if not np.all(np.isfinite(n)) or np.any(n != np.round(n)) or np.any(n < 1):
            raise QuantumNumberError(f"series {k}: n must be whole numbers >= 1")
        if not np.all(np.isfinite(e)):
            raise PhysicsInputError(f"series {k}: energies must be finite")
        if not np.all(np.isfinite(u)) or np.any(u <= 0.0):
            raise PhysicsInputError(f"series {k}: uncertainties must be positive and finite")
        out.append((n, e, u))
    return out


def _initial_limit(data, amplitude) -> float:
    """Limit from the two highest levels of the longest series, assuming a constant defect.

    With E_a < E_b at n_a < n_b, g(delta) = (E_b - E_a) - A [1/(n_a - delta)^2 -
    1/(n_b - delta)^2] decreases strictly for delta < n_a, so its root is unique.
    """
    n, e, _ = max(data, key=lambda s: np.unique(s[0]).size)
    order = np.argsort(n)
    n, e = n[order], e[order]
    top = np.unique(n)
    if top.size < 2:
        return float(e.max() + amplitude / n.max() ** 2)
    nb = top[-1]
    na = top[-2]
    eb = float(np.mean(e[n == nb]))
    ea = float(np.mean(e[n == na]))
    gap = eb - ea
    if gap <= 0.0:
        return float(max(eb, ea) + amplitude / nb**2)

    def g(delta):
        return gap - amplitude * (1.0 / (na - delta) ** 2 - 1.0 / (nb - delta) ** 2)

    lo = na - 1e-9 * na
    hi_side = -10.0 * nb
    while g(hi_side) < 0.0 and hi_side > -1e6:
        hi_side *= 10.0
    if g(hi_side) < 0.0 or g(lo) > 0.0:
        return float(eb + amplitude / nb**2)
    delta = optimize.brentq(g, hi_side, lo, xtol=1e-14, maxiter=500)
    return float(eb + amplitude / (nb - delta) ** 2)


def fit_series_limit(
    series: Sequence[tuple[npt.ArrayLike, npt.ArrayLike, npt.ArrayLike]],
    *,
    rydberg_cm1: float,
    core_charge: int = 1,
    n_defect_terms: int = 2,
    initial_limit_cm1: float | None = None,
) -> SeriesFit:
    """Fit one shared series limit and per-series quantum defects to Rydberg levels.

    Parameters
    ----------
    series : list of (n, energy_cm1, unc_cm1)
        One tuple per series: principal quantum numbers n (whole numbers >= 1),
        level energies in cm-1 (any common zero, usually the ground level) and
        their 1 sigma uncertainties in cm-1 (positive).
    rydberg_cm1 : float
        Mass-corrected Rydberg constant R_M, cm-1 (see :func:`rydberg_constant_cm1`).
    core_charge : int
        Z_c, the charge of the core seen by the outer electron (ion charge + 1),
        >= 1. Z_c^2 multiplies R_M.
    n_defect_terms : int
        Number of quantum-defect coefficients per series (1 = constant defect,
        2 = delta_0 and delta_2, ...), >= 1.
    initial_limit_cm1 : float, optional
        Starting value for the limit, cm-1; by default estimated from the two
        highest levels of the longest series.

    Returns
    -------
    SeriesFit
        Limit with uncertainty, defects, residuals, chi2, dof and warnings.

    Raises
    ------
    QuantumNumberError
        n not a whole number >= 1.
    PhysicsInputError
        Empty or mismatched arrays, non-positive uncertainties, non-positive
        Rydberg constant, core charge < 1, n_defect_terms < 1, fewer levels
        than parameters, or a fit that does not converge.

    Notes
    -----
    Minimises sum_i ((E_i - E_model(n_i)) / u_i)^2 with
    E_model = E_lim - Z_c^2 R_M / (n - delta_n)^2 and delta_n = delta_0 +
    sum_k delta_2k / (n - delta_0)^(2k), using :func:`scipy.optimize.least_squares`
    with the analytic Jacobian.

    The reported uncertainties are sqrt(diag((J^T W J)^-1)) with the level
    uncertainties taken as absolute, *not* multiplied by the Birge ratio
    sqrt(chi2/dof). When the stated uncertainties are right this interval has
    the nominal 68 % coverage; scaling by the Birge ratio would add the
    sampling noise of chi2 itself. A chi2 beyond the 99 % point of the chi2(dof)
    distribution instead produces a warning that quotes the Birge-scaled
    uncertainty, so a user who distrusts the inputs can adopt it.

    A series is flagged as too short to trust when it has fewer than
    (parameters + 2) levels, and as too narrow when n_max - n_min < 3 + its
    number of defect terms (common practice, no source): the defect expansion
    is then not constrained and the limit is correlated with it.

    References
    ----------
    G. W. F. Drake and R. A. Swainson, Phys. Rev. A 44, 5448 (1991).
    T. F. Gallagher, *Rydberg Atoms* (1994), chapter 2.

    Examples
    --------
    Hydrogen-like levels (no defect) give back the limit:

    >>> import numpy as np
    >>> R = rydberg_constant_cm1(1.007276466621)
    >>> n = np.arange(5, 15)
    >>> fit = fit_series_limit([(n, R * (1 - 1 / n**2), np.full(n.size, 1e-3))], rydberg_cm1=R)
    >>> round(fit.limit_cm1 - R, 6)
    0.0
    """
    data = _validate(series)
    if not np.isfinite(rydberg_cm1) or rydberg_cm1 <= 0.0:
        raise PhysicsInputError("rydberg_cm1 must be positive")
    if int(core_charge) != core_charge or core_charge < 1:
        raise PhysicsInputError("core_charge (ion charge + 1) must be an integer >= 1")
    if int(n_defect_terms) != n_defect_terms or n_defect_terms < 1:
        raise PhysicsInputError("n_defect_terms must be an integer >= 1")
    n_terms = int(n_defect_terms)
    amplitude = float(core_charge) ** 2 * float(rydberg_cm1)
    n_series = len(data)
    n_params = 1 + n_series * n_terms
    n_points = sum(s[0].size for s in data)
    if n_points < n_params:
        raise PhysicsInputError(
            f"{n_points} levels cannot fix {n_params} parameters (1 limit + {n_terms} defects per series)"
        )

    n_all = np.concatenate([s[0] for s in data])
    e_all = np.concatenate([s[1] for s in data])
    u_all = np.concatenate([s[2] for s in data])
    which = np.concatenate([np.full(s[0].size, k) for k, s in enumerate(data)])

    # starting point
    limit0 = float(initial_limit_cm1) if initial_limit_cm1 is not None else _initial_limit(data, amplitude)
    if limit0 <= e_all.max():
        limit0 = float(e_all.max() + amplitude / n_all.max() ** 2)
    p0 = np.zeros(n_params)
    p0[0] = limit0
    for k, (n, e, _) in enumerate(data):
        binding = np.clip(limit0 - e, amplitude / (4 * n.max() ** 2 + 1.0), None)
        n_star = np.sqrt(amplitude / binding)
        p0[1 + k * n_terms] = float(np.median(n - n_star))

    def unpack(p):
        return p[0], p[1:].reshape(n_series, n_terms)

    def model_and_jac(p):
        limit, defects = unpack(p)
        d = defects[which]  # (N, n_terms)
        m = n_all - d[:, 0]
        delta = d[:, 0].copy()
        ddelta_d0 = np.ones_like(m)
        for k in range(1, n_terms):
            delta += d[:, k] / m ** (2 * k)
            ddelta_d0 += 2 * k * d[:, k] / m ** (2 * k + 1)
        n_eff = n_all - delta
        model = limit - amplitude / n_eff**2
        de_ddelta = -2.0 * amplitude / n_eff**3
        jac = np.zeros((n_all.size, n_params))
        jac[:, 0] = 1.0
        cols = 1 + which * n_terms
        rows = np.arange(n_all.size)
        jac[rows, cols] = de_ddelta * ddelta_d0
        for k in range(1, n_terms):
            jac[rows, cols + k] = de_ddelta / m ** (2 * k)
        return model, jac, n_eff

    def residuals(p):
        model, _, _ = model_and_jac(p)
        return (e_all - model) / u_all

    def jacobian(p):
        _, jac, _ = model_and_jac(p)
        return -jac / u_all[:, None]

    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        result = optimize.least_squares(
            residuals, p0, jac=jacobian, method="trf", x_scale="jac", xtol=1e-15, ftol=1e-15, gtol=1e-15,
            max_nfev=2000,
        )
    if not result.success and result.status <= 0:
        raise PhysicsInputError(f"series-limit fit did not converge: {result.message}")
    p = result.x
    model, jac, n_eff = model_and_jac(p)
    if not np.all(np.isfinite(model)) or np.any(n_eff <= 0.0):
        raise PhysicsInputError("series-limit fit did not converge: effective quantum numbers not positive")
    weighted = jac / u_all[:, None]
    cov = _covariance(weighted)
    limit, defects = unpack(p)
    sig = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    resid = e_all - model
    chi2 = float(np.sum((resid / u_all) ** 2))
    dof = int(n_points - n_params)
    birge = float(np.sqrt(chi2 / dof)) if dof > 0 else float("nan")

    messages: list[str] = []
    for k, (n, _, _) in enumerate(data):
        n_par_k = n_terms + 1
        if n.size < n_par_k + 2:
            messages.append(
                f"series {k}: only {n.size} levels for {n_terms} defect term(s) and the limit "
                f"(fewer than {n_par_k + 2}); its defects and their share of the limit are poorly determined"
            )
        span = float(n.max() - n.min())
        if span < 3 + n_terms:
            messages.append(
                f"series {k}: n range {int(n.min())}-{int(n.max())} is too narrow to separate the limit "
                f"from the quantum defects"
            )
    if not np.all(np.isfinite(cov)):
        messages.append("the parameters are not separately determined (singular fit); uncertainties are NaN")
    if dof == 0:
        messages.append("no degrees of freedom: the fit is exact and chi2 cannot test the uncertainties")
    elif chi2 > stats.chi2.ppf(_CHI2_WARN_QUANTILE, dof):
        messages.append(
            f"chi2 = {chi2:.3g} for {dof} degrees of freedom (Birge ratio {birge:.3g}): the level "
            f"uncertainties look too small or the defect expansion too short; scaled by the Birge ratio the "
            f"limit uncertainty would be {sig[0] * birge:.3g} cm-1"
        )
    sig_def = sig[1:].reshape(n_series, n_terms)
    split = np.cumsum([s[0].size for s in data])[:-1]
    return SeriesFit(
        limit_cm1=float(limit),
        limit_unc_cm1=float(sig[0]),
        quantum_defects=[[float(v) for v in row] for row in defects],
        residuals_cm1=list(np.split(resid, split)),
        chi2=chi2,
        dof=dof,
        warnings=messages,
        quantum_defect_unc=[[float(v) for v in row] for row in sig_def],
        birge_ratio=birge,
        n_used=[int(s[0].size) for s in data],
    )


def _covariance(weighted_jac: np.ndarray) -> np.ndarray:
    """(J^T W J)^-1 from the SVD of the weighted Jacobian (robust to poor conditioning)."""
    # column scaling keeps the limit (1e5 cm-1 scale) and defects (O(1)) comparable
    scale = np.sqrt(np.sum(weighted_jac**2, axis=0))
    scale[scale == 0.0] = 1.0
    _, s, vt = np.linalg.svd(weighted_jac / scale, full_matrices=False)
    tiny = s.max() * max(weighted_jac.shape) * np.finfo(float).eps
    if np.any(s <= tiny):
        return np.full((scale.size, scale.size), np.nan)
    cov_scaled = (vt.T / s**2) @ vt
    return cov_scaled / np.outer(scale, scale)
