"""Parametric model potential with core polarisation, fitted per series to measured levels.

The valence electron of an alkali-like spectrum moves in the l-dependent
potential of Marinescu, Sadeghpour & Dalgarno (1994),

.. math::

    V_l(r) = -\\frac{Z_l(r)}{r} - \\frac{\\alpha_c}{2r^4}\\big[1 - e^{-(r/r_c)^6}\\big],
    \\qquad
    Z_l(r) = \\zeta + (Z - \\zeta)e^{-a_1 r} - r(a_3 + a_4 r)e^{-a_2 r},

written here for an ion of net core charge :math:`\\zeta` (ion charge + 1; the
paper treats neutral atoms, :math:`\\zeta = 1`). This module fits two
parameters per series (one l, and one J where the levels are J-resolved):
:math:`a_1` and :math:`a_3`, with :math:`a_2 = a_1`, :math:`a_4 = 0` and the
cut-off :math:`r_c = \\alpha_c^{1/3}` (at least 0.5 a0); :math:`\\alpha_c`
comes from :mod:`.core_polarisation`. The fit asks that every measured level
of the series be an eigenvalue of :math:`V_l` with the right number of
radial nodes, ``n - l - 1`` (so the core orbitals the potential also binds
sit below it): the regular solution integrated outward (:mod:`.numerov`) and
the decaying one integrated inward meet at the outer turning point, and the
residual is their phase difference in units of pi less the node count (zero
at an eigenvalue; roughly the error of the effective quantum number). A
series with fewer levels than the two parameters is not fitted: the caller
falls back to the Coulomb approximation.

The fitted potential is then integrated inward at each *measured* energy
(as Zimmerman et al. 1979 do with published parameters) to give the radial
functions of the rate calculation.

References
----------
M. Marinescu, H. R. Sadeghpour and A. Dalgarno, "Dispersion coefficients for
alkali-metal dimers", Phys. Rev. A 49, 982-988 (1994).
M. L. Zimmerman, M. G. Littman, M. M. Kash and D. Kleppner, Phys. Rev. A 20, 2251 (1979).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy import optimize

from levels.errors import PhysicsInputError
from levels.physics.many_electron import numerov
from levels.physics.many_electron.core_polarisation import polarisation_potential

__all__ = ["N_PARAMETERS", "SeriesFit", "screened_charge", "model_potential", "phase_residual", "fit_series",
           "model_radial_functions", "default_cutoff"]

#: parameters fitted per series (a1, a3)
N_PARAMETERS = 2
#: at most this many of the lowest levels of a series enter its fit (the rest follow)
MAX_FIT_LEVELS = 6
#: grid step of the fits, in sqrt(a0)
FIT_STEP = 0.02


@dataclass
class SeriesFit:
    """The fitted potential of one series and how well it reproduces the levels.

    Attributes
    ----------
    a1, a3 : float
        Fitted parameters (a0^-1 and a0^-2).
    r_c : float
        Polarisation cut-off radius, a0.
    alpha_c : float
        Core polarisability used, a0^3.
    residual_nu : ndarray
        Per fitted level: model eigenvalue minus measured, in effective quantum number.
    converged : bool
    message : str
    """

    a1: float
    a3: float
    r_c: float
    alpha_c: float
    residual_nu: NDArray[np.float64] = field(default_factory=lambda: np.zeros(0))
    converged: bool = True
    message: str = ""

    @property
    def rms_nu(self) -> float:
        """Root-mean-square residual in effective quantum number."""
        return float(np.sqrt(np.mean(self.residual_nu**2))) if self.residual_nu.size else float("nan")


def default_cutoff(alpha_c: float) -> float:
    """Polarisation cut-off :math:`r_c = \\max(\\alpha_c^{1/3}, 0.5)` a0 (common practice, no source).

    Examples
    --------
    >>> default_cutoff(1.0), default_cutoff(0.0)
    (1.0, 0.5)
    """
    return max(float(alpha_c) ** (1.0 / 3.0), 0.5)


def screened_charge(r: ArrayLike, z: int, zeta: float, a1: ArrayLike, a3: ArrayLike) -> NDArray[np.float64]:
    """Effective charge :math:`Z_l(r) = \\zeta + (Z - \\zeta)e^{-a_1 r} - a_3 r e^{-a_1 r}`.

    Parameters
    ----------
    r : array_like
        Radius, a0.
    z : int
        Nuclear charge.
    zeta : float
        Net charge of the core (ion charge + 1).
    a1, a3 : array_like
        Parameters (broadcast against ``r``).

    Returns
    -------
    ndarray

    Examples
    --------
    >>> screened_charge([0.0, 100.0], 11, 1.0, 2.0, 0.0).tolist()
    [11.0, 1.0]
    """
    r_ = np.asarray(r, dtype=np.float64)
    e = np.exp(-np.asarray(a1, dtype=np.float64) * r_)
    return zeta + (z - zeta) * e - np.asarray(a3, dtype=np.float64) * r_ * e


def model_potential(r: ArrayLike, z: int, zeta: float, a1: ArrayLike, a3: ArrayLike, alpha_c: float,
                    r_c: ArrayLike) -> NDArray[np.float64]:
    """The model potential :math:`V_l(r)`, hartree (see the module docstring).

    Examples
    --------
    >>> round(float(model_potential(50.0, 11, 1.0, 2.0, 0.0, 0.0, 1.0)), 6)
    -0.02
    """
    r_ = np.asarray(r, dtype=np.float64)
    return -screened_charge(r_, z, zeta, a1, a3) / r_ + polarisation_potential(r_, alpha_c, r_c)


def _turning_radius(nu: NDArray[np.float64], l: NDArray[np.int64], zeta: float) -> NDArray[np.float64]:
    return (nu**2 + nu * np.sqrt(np.maximum(nu**2 - l * (l + 1.0), 0.0))) / zeta


def phase_residual(z: int, zeta: float, alpha_c: float, r_c: float, a1: ArrayLike, a3: ArrayLike, l: ArrayLike,
                   nu: ArrayLike, nodes: ArrayLike, step: float = FIT_STEP) -> NDArray[np.float64]:
    """How far each measured level is from an eigenvalue of the model potential.

    Parameters
    ----------
    z : int
        Nuclear charge.
    zeta : float
        Net core charge.
    alpha_c, r_c : float
        Core polarisability (a0^3) and cut-off (a0).
    a1, a3 : array_like, shape (M,)
        Potential parameters per column.
    l : array_like of int, shape (M,)
    nu : array_like, shape (M,)
        Measured effective quantum numbers (energy :math:`-\\zeta^2/(2\\nu^2)` hartree).
    nodes : array_like of int, shape (M,)
        Radial nodes the level must have (``n - l - 1``).
    step : float
        Grid step in sqrt(a0).

    Returns
    -------
    ndarray, shape (M,)
        Phase mismatch at the outer turning point in units of pi, less the node
        count: 0 for an eigenvalue with the right nodes.

    Examples
    --------
    >>> rho = phase_residual(1, 1.0, 0.0, 1.0, [1.0, 1.0], [0.0, 0.0], [0, 1], [2.0, 2.0], [1, 0])
    >>> bool(np.all(np.abs(rho) < 1e-3))   # hydrogen n = 2 levels are eigenvalues
    True
    """
    a1_, a3_, nu_ = (np.atleast_1d(np.asarray(v, dtype=np.float64)) for v in (a1, a3, nu))
    l_ = np.atleast_1d(np.asarray(l, dtype=np.int64))
    nodes_ = np.atleast_1d(np.asarray(nodes, dtype=np.float64))
    a1_, a3_, nu_, l_, nodes_ = np.broadcast_arrays(a1_, a3_, nu_, l_, nodes_)
    r_out = numerov.outer_radius(nu_, l_, zeta, decades=12.0)
    x = numerov.square_root_grid(float(r_out.max()), step)
    r = x * x
    v = model_potential(r[:, None], z, zeta, a1_[None, :], a3_[None, :], alpha_c, r_c)
    g = numerov.numerov_coefficient(x, v, -0.5 * zeta**2 / nu_**2, l_)
    match = np.clip(np.searchsorted(r, _turning_radius(nu_, l_, zeta)), 3, len(x) - 3)
    start = np.minimum(np.searchsorted(r, r_out), len(x) - 2)
    cols = np.arange(len(nu_))
    out = numerov.integrate_outward(x, g, l_, stop=int(match.max()) + 1)
    inward = numerov.integrate_inward(x, g[: , :], np.maximum(start, match + 2))
    h = step
    with np.errstate(over="ignore", invalid="ignore"):
        top = int(match.max()) + 2
        # rescale each column of the outward solution so the angle is defined where it is finite
        d_out = np.gradient(out[:top], h, axis=0)
        theta = np.unwrap(np.arctan2(out[:top], d_out), axis=0)
    theta_out = theta[match, cols]
    d_in = (inward[match + 1, cols] - inward[match - 1, cols]) / (2 * h)
    theta_in = np.mod(np.arctan2(inward[match, cols], d_in), np.pi)
    return (theta_out - theta_in) / np.pi - nodes_


def fit_series(z: int, zeta: float, alpha_c: float, l: int, nu: ArrayLike, n: ArrayLike, *,
               r_c: float | None = None, step: float = FIT_STEP) -> SeriesFit:
    """Fit :math:`a_1, a_3` of one series so its measured levels are eigenvalues.

    Parameters
    ----------
    z : int
        Nuclear charge.
    zeta : float
        Net core charge (ion charge + 1).
    alpha_c : float
        Core polarisability, a0^3 (0 when unknown).
    l : int
        Orbital angular momentum of the series.
    nu : array_like
        Effective quantum numbers of its measured levels.
    n : array_like of int
        Their principal quantum numbers (for the node count ``n - l - 1``).
    r_c : float, optional
        Cut-off radius (default :func:`default_cutoff`).
    step : float
        Grid step.

    Returns
    -------
    SeriesFit

    Raises
    ------
    PhysicsInputError
        Fewer levels than :data:`N_PARAMETERS`, or ``n <= l``.

    Examples
    --------
    >>> fit = fit_series(1, 1.0, 0.0, 1, [2.0, 3.0], [2, 3])   # hydrogen: the screening plays no part
    >>> bool(fit.rms_nu < 1e-4)
    True
    """
    nu_ = np.asarray(nu, dtype=np.float64)
    n_ = np.asarray(n, dtype=np.int64)
    if nu_.size < N_PARAMETERS:
        raise PhysicsInputError(f"a series needs at least {N_PARAMETERS} levels to fit the potential "
                                f"({N_PARAMETERS} parameters), got {nu_.size}")
    if np.any(n_ <= l):
        raise PhysicsInputError(f"principal quantum numbers must exceed l = {l}")
    order = np.argsort(nu_)[:MAX_FIT_LEVELS]
    nu_, n_ = nu_[order], n_[order]
    nodes = n_ - l - 1
    rc = default_cutoff(alpha_c) if r_c is None else float(r_c)
    k = nu_.size

    def batch(params: NDArray[np.float64]) -> NDArray[np.float64]:
        """Residuals for several parameter sets at once: shape (sets, k)."""
        sets = params.shape[0]
        rho = phase_residual(z, zeta, alpha_c, rc, np.repeat(params[:, 0], k), np.repeat(params[:, 1], k),
                             np.full(sets * k, l), np.tile(nu_, sets), np.tile(nodes, sets), step)
        return rho.reshape(sets, k)

    # start: scan a1 (a3 = 0) for the smallest summed squared residual
    scan = np.geomspace(0.05, 40.0, 20)
    rho_scan = batch(np.c_[scan, np.zeros_like(scan)])
    score = np.where(np.isfinite(rho_scan).all(axis=1), np.sum(rho_scan**2, axis=1), np.inf)
    best = int(np.argmin(score))
    x0 = np.array([scan[best], 0.0])
    delta = np.array([1e-4, 1e-4])

    def fun(p):
        return batch(p[None, :])[0]

    def jac(p):
        rows = batch(np.vstack([p, p + np.diag(delta)]))
        return ((rows[1:] - rows[0]) / delta[:, None]).T

    try:
        sol = optimize.least_squares(fun, x0, jac=jac, bounds=([0.01, -100.0], [80.0, 100.0]), xtol=1e-10,
                                     ftol=1e-12, gtol=1e-12, max_nfev=60)
        params, converged, message = sol.x, bool(sol.success), str(sol.message)
    except (ValueError, FloatingPointError) as exc:  # non-finite residuals
        params, converged, message = x0, False, f"fit failed: {exc}"
    rho = fun(params)
    # residual in effective quantum number: rho over its slope in nu
    d_nu = 1e-4
    rho_shift = phase_residual(z, zeta, alpha_c, rc, params[0], params[1], np.full(k, l), nu_ + d_nu, nodes, step)
    slope = (rho_shift - rho) / d_nu
    with np.errstate(divide="ignore", invalid="ignore"):
        residual_nu = np.where(np.abs(slope) > 1e-6, -rho / slope, rho)
    if not np.all(np.isfinite(residual_nu)):
        converged, message = False, "non-finite residuals"
        residual_nu = np.where(np.isfinite(residual_nu), residual_nu, 1.0)
    return SeriesFit(a1=float(params[0]), a3=float(params[1]), r_c=rc, alpha_c=float(alpha_c),
                     residual_nu=residual_nu, converged=converged, message=message)


def model_radial_functions(x: NDArray[np.float64], z: int, zeta: float, alpha_c: float, r_c: ArrayLike,
                           a1: ArrayLike, a3: ArrayLike, l: ArrayLike, nu: ArrayLike) -> NDArray[np.float64]:
    """Normalised radial functions of the fitted potentials at the measured energies.

    Parameters
    ----------
    x : ndarray, shape (G,)
        Square-root grid reaching the orbit of the largest ``nu``.
    z, zeta, alpha_c
        As in :func:`fit_series`.
    r_c, a1, a3 : array_like, shape (M,)
        Fitted parameters per column.
    l : array_like of int, shape (M,)
    nu : array_like, shape (M,)
        Measured effective quantum numbers.

    Returns
    -------
    ndarray, shape (G, M)
        :math:`\\chi` (:math:`u = x^{1/2}\\chi`), normalised, outermost lobe positive.

    Examples
    --------
    >>> x = numerov.square_root_grid(100.0, 0.005)
    >>> chi = model_radial_functions(x, 1, 1.0, 0.0, [1.0], [1.0], [0.0], [0], [1.0])
    >>> u = np.sqrt(x) * chi[:, 0]; r = x * x
    >>> bool(np.max(np.abs(u - 2 * r * np.exp(-r))) < 1e-6)
    True
    """
    nu_ = np.atleast_1d(np.asarray(nu, dtype=np.float64))
    l_ = np.atleast_1d(np.asarray(l, dtype=np.int64))
    r = x * x
    r_out = numerov.outer_radius(nu_, l_, zeta)
    start = np.minimum(np.searchsorted(r, r_out), len(x) - 1)
    v = model_potential(r[:, None], z, zeta, np.atleast_1d(a1)[None, :], np.atleast_1d(a3)[None, :], alpha_c,
                        np.atleast_1d(r_c)[None, :])
    g = numerov.numerov_coefficient(x, v, -0.5 * zeta**2 / nu_**2, l_)
    chi = numerov.integrate_inward(x, g, start)
    return numerov.normalise(numerov.cut_divergence(chi, x), x)
