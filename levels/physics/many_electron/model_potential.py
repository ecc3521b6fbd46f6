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
:math:`a_1` and :math:`a_3`. For the alkali atoms Li to Cs the other two,
:math:`a_2` and :math:`a_4`, are the published ones (:data:`PUBLISHED_PARAMETERS`,
Marinescu et al. 1994, Table I, values from memory) and the fit starts from the
published :math:`a_1, a_3`; for every other spectrum :math:`a_2 = a_1` and
:math:`a_4 = 0`. The cut-off is :math:`r_c = \\alpha_c^{1/3}` (at least 0.5 a0;
the published per-l cut-offs were tried and give K 4p lifetimes 3.5 % long, the
rule here 1.8 %); :math:`\\alpha_c` comes from :mod:`.core_polarisation`.

Why the published :math:`a_2, a_4` matter: with :math:`a_2 = a_1, a_4 = 0` the
two parameters cannot make the Rb and Cs series eigenvalues (r.m.s. residual
0.004-0.007 in effective quantum number against 1e-5 to 3e-4 with the published
shape; a 2-D scan of :math:`a_1, a_3` finds no better minimum) and the functions
inside the core come out wrong enough to make the resonance lifetimes 4-5 %
too long; with the published shape and :math:`a_1, a_3` refitted per J they are
within 2 % (figures in ``tests/physics/many_electron/test_single_valence.py``).

The fit asks that every measured level
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
functions of the rate calculation. (Fitting one potential per l to the
J-averaged terms instead of one per J gives the same K, Rb and Cs resonance
lifetimes within 0.02 %: the fine structure is not what limits them.)

The model's own spectrum obeys the Thomas-Reiche-Kuhn sum rule in a form that
holds exactly for a box-discretised Hamiltonian (:func:`dipole_f_sum`): the
issue's check of the valence f sum.

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
           "model_radial_functions", "default_cutoff", "PUBLISHED_PARAMETERS", "published_shape", "dipole_f_sum",
           "FSum"]

#: parameters fitted per series (a1, a3)
N_PARAMETERS = 2
#: at most this many of the lowest levels of a series enter its fit (the rest follow)
MAX_FIT_LEVELS = 6
#: grid step of the fits, in sqrt(a0)
FIT_STEP = 0.02

#: Published parameters of the potential, (Z, ion charge) -> per l = 0, 1, 2, >=3: (a1, a2, a3, a4, r_c)
#: (a1, a2 in a0^-1, a3 in a0^-2, a4 in a0^-3, r_c in a0), Marinescu, Sadeghpour & Dalgarno 1994, Phys. Rev. A
#: 49, 982, Table I
#: (values from memory; checked in the tests: with their r_c they bind the right number of core states and
#: put the measured ns levels of each atom within 0.01 of an eigenvalue in effective quantum number).
#: Here a2 and a4 are used as published and a1, a3 refitted per series (start values).
PUBLISHED_PARAMETERS: dict[tuple[int, int], tuple[tuple[float, float, float, float, float], ...]] = {
    (3, 0): ((2.47718079, 1.84150932, -0.02169712, -0.11988362, 0.61340824),
             (3.45414648, 2.55151080, -0.21646561, -0.06990078, 0.61566441),
             (2.51909839, 2.43712450, 0.32505524, 0.10602430, 2.34126273),
             (2.51909839, 2.43712450, 0.32505524, 0.10602430, 2.34126273)),
    (11, 0): ((4.82223117, 2.45449865, -1.12255048, -1.42631393, 0.45489422),
              (5.08382502, 2.18226881, -1.19534623, -1.03142861, 0.45798739),
              (3.53324124, 2.48697936, -0.75688448, -1.27852357, 0.71875312),
              (1.11056646, 1.05458759, 1.73203428, -0.09265696, 28.6735059)),
    (19, 0): ((3.56079437, 1.83909642, -1.74701102, -1.03237313, 0.83167545),
              (3.65670429, 1.67520788, -2.07416615, -0.89030421, 0.85235381),
              (4.12713694, 1.79837462, -1.69935174, -0.98913582, 0.83216907),
              (1.42310446, 1.27861156, 4.77441476, -0.94829262, 6.50294371)),
    (37, 0): ((3.69628474, 1.64915255, -9.86069196, 0.19579987, 1.66242117),
              (4.44088978, 1.92828831, -16.79597770, -0.81633140, 1.50195124),
              (3.78717363, 1.57027864, -11.65588970, 0.52942835, 4.86851938),
              (2.39848933, 1.76810544, -12.07106780, 0.77256589, 4.79831327)),
    (55, 0): ((3.49546309, 1.47533800, -9.72143084, 0.02629242, 1.92046930),
              (4.69366096, 1.71398344, -24.65624280, -0.09543125, 2.13383095),
              (4.32466196, 1.61365288, -6.70128850, -0.74095193, 0.93007296),
              (3.01048361, 1.40000001, -3.20036138, 0.00034538, 1.99969677)),
}


def published_shape(z: int, charge: int, l: int) -> tuple[float, float, float, float, float] | None:
    """The published :math:`(a_1, a_2, a_3, a_4, r_c)` of a series, or None where none is tabulated.

    Examples
    --------
    >>> published_shape(55, 0, 1)[:2]
    (4.69366096, 1.71398344)
    >>> published_shape(20, 1, 0) is None
    True
    """
    table = PUBLISHED_PARAMETERS.get((int(z), int(charge)))
    if table is None:
        return None
    return table[min(int(l), 3)]


@dataclass
class SeriesFit:
    """The fitted potential of one series and how well it reproduces the levels.

    Attributes
    ----------
    a1, a3 : float
        Fitted parameters (a0^-1 and a0^-2).
    a2, a4 : float
        Fixed parameters (a0^-1, NaN meaning ``a2 = a1``; a0^-3).
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
    #: a2 (a0^-1; NaN: tied to a1) and a4 (a0^-3), held fixed in the fit
    a2: float = float("nan")
    a4: float = 0.0
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


def screened_charge(r: ArrayLike, z: int, zeta: float, a1: ArrayLike, a3: ArrayLike, a2: ArrayLike | None = None,
                    a4: ArrayLike = 0.0) -> NDArray[np.float64]:
    """Effective charge :math:`Z_l(r) = \\zeta + (Z - \\zeta)e^{-a_1 r} - r(a_3 + a_4 r) e^{-a_2 r}`.

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
    a2 : array_like, optional
        Parameter of the second exponential; None, or NaN per element, means ``a2 = a1``.
    a4 : array_like
        Parameter (default 0).

    Returns
    -------
    ndarray

    Examples
    --------
    >>> screened_charge([0.0, 100.0], 11, 1.0, 2.0, 0.0).tolist()
    [11.0, 1.0]
    >>> round(float(screened_charge(1.0, 11, 1.0, 2.0, 1.0, a2=1.0, a4=1.0)), 6)   # 1 + 10 e^-2 - 2 e^-1
    1.617594
    """
    r_ = np.asarray(r, dtype=np.float64)
    a1_ = np.asarray(a1, dtype=np.float64)
    a2_ = a1_ if a2 is None else np.where(np.isnan(np.asarray(a2, dtype=np.float64)), a1_, a2)
    e1 = np.exp(-a1_ * r_)
    e2 = np.exp(-a2_ * r_)
    return zeta + (z - zeta) * e1 - r_ * (np.asarray(a3, dtype=np.float64) + np.asarray(a4, dtype=np.float64) * r_) * e2


def model_potential(r: ArrayLike, z: int, zeta: float, a1: ArrayLike, a3: ArrayLike, alpha_c: float,
                    r_c: ArrayLike, a2: ArrayLike | None = None, a4: ArrayLike = 0.0) -> NDArray[np.float64]:
    """The model potential :math:`V_l(r)`, hartree (see the module docstring).

    Examples
    --------
    >>> round(float(model_potential(50.0, 11, 1.0, 2.0, 0.0, 0.0, 1.0)), 6)
    -0.02
    """
    r_ = np.asarray(r, dtype=np.float64)
    return -screened_charge(r_, z, zeta, a1, a3, a2, a4) / r_ + polarisation_potential(r_, alpha_c, r_c)


def _turning_radius(nu: NDArray[np.float64], l: NDArray[np.int64], zeta: float) -> NDArray[np.float64]:
    return (nu**2 + nu * np.sqrt(np.maximum(nu**2 - l * (l + 1.0), 0.0))) / zeta


def phase_residual(z: int, zeta: float, alpha_c: float, r_c: float, a1: ArrayLike, a3: ArrayLike, l: ArrayLike,
                   nu: ArrayLike, nodes: ArrayLike, step: float = FIT_STEP, a2: ArrayLike | None = None,
                   a4: ArrayLike = 0.0) -> NDArray[np.float64]:
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
    a2, a4 : array_like, optional
        Fixed parameters per column (None: ``a2 = a1``; 0).

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
    a2_ = np.full(a1_.shape, np.nan) if a2 is None else np.atleast_1d(np.asarray(a2, dtype=np.float64))
    a4_ = np.atleast_1d(np.asarray(a4, dtype=np.float64))
    a1_, a3_, nu_, l_, nodes_, a2_, a4_ = np.broadcast_arrays(a1_, a3_, nu_, l_, nodes_, a2_, a4_)
    r_out = numerov.outer_radius(nu_, l_, zeta, decades=12.0)
    x = numerov.square_root_grid(float(r_out.max()), step)
    r = x * x
    v = model_potential(r[:, None], z, zeta, a1_[None, :], a3_[None, :], alpha_c, r_c, a2_[None, :], a4_[None, :])
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
               r_c: float | None = None, step: float = FIT_STEP,
               shape: tuple[float, float, float, float] | None = None) -> SeriesFit:
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
    shape : (a1, a2, a3, a4), optional
        Published parameters (:func:`published_shape`): a2 and a4 are held at these
        values and the fit starts from a1, a3. Without it ``a2 = a1``, ``a4 = 0`` and
        the start is a scan over a1.

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
    a2_fixed = float("nan") if shape is None else float(shape[1])
    a4_fixed = 0.0 if shape is None else float(shape[3])

    def batch(params: NDArray[np.float64]) -> NDArray[np.float64]:
        """Residuals for several parameter sets at once: shape (sets, k)."""
        sets = params.shape[0]
        rho = phase_residual(z, zeta, alpha_c, rc, np.repeat(params[:, 0], k), np.repeat(params[:, 1], k),
                             np.full(sets * k, l), np.tile(nu_, sets), np.tile(nodes, sets), step,
                             a2=np.full(sets * k, a2_fixed), a4=np.full(sets * k, a4_fixed))
        return rho.reshape(sets, k)

    if shape is not None:
        x0 = np.array([float(shape[0]), float(shape[2])])
    else:
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
    rho_shift = phase_residual(z, zeta, alpha_c, rc, params[0], params[1], np.full(k, l), nu_ + d_nu, nodes, step,
                               a2=a2_fixed, a4=a4_fixed)
    slope = (rho_shift - rho) / d_nu
    with np.errstate(divide="ignore", invalid="ignore"):
        residual_nu = np.where(np.abs(slope) > 1e-6, -rho / slope, rho)
    if not np.all(np.isfinite(residual_nu)):
        converged, message = False, "non-finite residuals"
        residual_nu = np.where(np.isfinite(residual_nu), residual_nu, 1.0)
    return SeriesFit(a1=float(params[0]), a3=float(params[1]), r_c=rc, alpha_c=float(alpha_c), a2=a2_fixed,
                     a4=a4_fixed, residual_nu=residual_nu, converged=converged, message=message)


def model_radial_functions(x: NDArray[np.float64], z: int, zeta: float, alpha_c: float, r_c: ArrayLike,
                           a1: ArrayLike, a3: ArrayLike, l: ArrayLike, nu: ArrayLike, a2: ArrayLike | None = None,
                           a4: ArrayLike = 0.0) -> NDArray[np.float64]:
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
    a2, a4 : array_like, shape (M,), optional
        Fixed parameters per column (None or NaN: ``a2 = a1``; 0).

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
    a2_ = np.full(nu_.shape, np.nan) if a2 is None else np.broadcast_to(np.asarray(a2, dtype=np.float64), nu_.shape)
    a4_ = np.broadcast_to(np.asarray(a4, dtype=np.float64), nu_.shape)
    v = model_potential(r[:, None], z, zeta, np.atleast_1d(a1)[None, :], np.atleast_1d(a3)[None, :], alpha_c,
                        np.atleast_1d(r_c)[None, :], a2_[None, :], a4_[None, :])
    g = numerov.numerov_coefficient(x, v, -0.5 * zeta**2 / nu_**2, l_)
    chi = numerov.integrate_inward(x, g, start)
    return numerov.normalise(numerov.cut_divergence(chi, x), x)


@dataclass
class FSum:
    """Oscillator strengths from one state of a box-discretised model Hamiltonian to its whole spectrum.

    Attributes
    ----------
    energy : float
        Energy of the initial state in the box, hartree.
    final_l : list of int
        The final series (l - 1 and/or l + 1).
    final_energy : list of ndarray
        Every eigenvalue of each final series' Hamiltonian in the box, hartree (ascending).
    f : list of ndarray
        Absorption oscillator strengths to each of them (negative for final states below).
    identity : float
        What the discrete sum rule says :math:`\\sum f` must be (see :func:`dipole_f_sum`).
    """

    energy: float
    final_l: list[int]
    final_energy: list[NDArray[np.float64]]
    f: list[NDArray[np.float64]]
    identity: float

    @property
    def total(self) -> float:
        """:math:`\\sum f` over every final state."""
        return float(sum(float(np.sum(v)) for v in self.f))


def _box_hamiltonian(x: NDArray[np.float64], z: int, zeta: float, alpha_c: float, r_c: float, l: int,
                     shape: tuple[float, float, float, float]) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Diagonal and off-diagonal of :math:`B^{-1/2} A B^{-1/2}` (the Numerov form on the square-root grid)."""
    h = float(x[1] - x[0])
    a1, a2, a3, a4 = shape
    v = model_potential(x * x, z, zeta, a1, a3, alpha_c, r_c, a2, a4)
    centrifugal = (2.0 * l + 0.5) * (2.0 * l + 1.5) / x**2
    # -chi'' + (8 x^2 V + c / x^2) chi = 8 x^2 E chi, Dirichlet at 0 and past the last point
    b = 8.0 * x * x
    diag = (2.0 / h**2 + 8.0 * x * x * v + centrifugal) / b
    off = -1.0 / h**2 / np.sqrt(b[:-1] * b[1:])
    return diag, off


def dipole_f_sum(z: int, zeta: float, alpha_c: float, r_c: float, l: int, nodes: int,
                 shapes: dict[int, tuple[float, float, float, float]], *, r_max: float = 100.0,
                 step: float = 0.01) -> FSum:
    """Thomas-Reiche-Kuhn sum of the model Hamiltonian: f from one state to its complete box spectrum.

    The radial equation of each series is discretised on the square-root grid
    (the Numerov form :math:`-\\chi'' + g\\chi = 0` of :mod:`.numerov`, three-point
    second difference, :math:`\\chi = 0` at the origin and at ``r_max``): a
    symmetric tridiagonal matrix after scaling by :math:`(8x^2)^{-1/2}`, whose
    eigenvectors are a complete basis (bound states, the box's discretised
    continuum and the deep states the potential binds where the core orbitals
    are). The bare dipole operator r gives, by the double commutator
    :math:`[r, [H, r]]`, the exact discrete sum rule

    .. math::

        \\sum_k f_k = \\sum_{l'} \\frac{2}{3}\\frac{l_>}{2l+1}\\Big[K +
        \\langle r^2 (V_{l'} - V_l)\\rangle + \\tfrac12\\big(l'(l'+1) - l(l+1)\\big)\\Big],
        \\quad K = \\sum_i y_i y_{i+1}\\frac{(x_i + x_{i+1})^2}{8x_ix_{i+1}} \\to \\tfrac12,

    which for one local potential (:math:`V_{l'} = V_l`) tends to the
    Thomas-Reiche-Kuhn value 1 as the step shrinks (Thomas 1925; Reiche & Thomas
    1925; Kuhn 1925; the radial form as in Bethe & Salpeter 1957, section 61,
    from memory). An l-dependent potential is not local: its sum differs from 1
    by the middle term.

    Parameters
    ----------
    z : int
        Nuclear charge.
    zeta : float
        Net core charge.
    alpha_c, r_c : float
        Core polarisability (a0^3) and cut-off (a0) of the polarisation potential.
    l : int
        Orbital angular momentum of the initial state.
    nodes : int
        Its radial nodes (``n - l - 1``; the states below are the potential's core states).
    shapes : dict
        ``l -> (a1, a2, a3, a4)`` for ``l`` and for each final series ``l +- 1`` to include.
    r_max : float
        Box radius, a0.
    step : float
        Grid step in sqrt(a0).

    Returns
    -------
    FSum

    Raises
    ------
    PhysicsInputError
        No parameters for ``l`` or for any final series, or ``nodes`` beyond the box's states.

    References
    ----------
    W. Thomas, Naturwissenschaften 13, 627 (1925); F. Reiche and W. Thomas, Z. Phys. 34, 510 (1925);
    W. Kuhn, Z. Phys. 33, 408 (1925) (citations from memory). H. A. Bethe and E. E. Salpeter, *Quantum
    Mechanics of One- and Two-Electron Atoms* (Springer, 1957).

    Examples
    --------
    Hydrogen 1s (no core: the screening terms vanish with Z = 1):

    >>> s = dipole_f_sum(1, 1.0, 0.0, 1.0, 0, 0, {0: (1.0, 1.0, 0.0, 0.0), 1: (1.0, 1.0, 0.0, 0.0)}, r_max=60.0)
    >>> round(s.energy, 4), bool(abs(s.total - s.identity) < 1e-7), bool(abs(s.total - 1) < 1e-4)
    (-0.5, True, True)
    """
    from scipy.linalg import eigh_tridiagonal

    if l not in shapes:
        raise PhysicsInputError(f"no potential parameters for the initial series l = {l}")
    finals = [lf for lf in (l - 1, l + 1) if lf >= 0 and lf in shapes]
    if not finals:
        raise PhysicsInputError(f"no potential parameters for a final series l = {l} +- 1")
    x = numerov.square_root_grid(r_max, step)
    r = x * x
    diag, off = _box_hamiltonian(x, z, zeta, alpha_c, r_c, l, shapes[l])
    energies, vectors = eigh_tridiagonal(diag, off, select="i", select_range=(nodes, nodes))
    if energies.size == 0:
        raise PhysicsInputError(f"the box holds no state with {nodes} nodes")
    y = vectors[:, 0]
    e0 = float(energies[0])
    b1, b2, b3, b4 = shapes[l]
    v_l = model_potential(r, z, zeta, b1, b3, alpha_c, r_c, b2, b4)
    k_term = float(np.sum(y[:-1] * y[1:] * (x[:-1] + x[1:]) ** 2 / (8.0 * x[:-1] * x[1:])))
    out_e, out_f, identity = [], [], 0.0
    for lf in finals:
        d_f, o_f = _box_hamiltonian(x, z, zeta, alpha_c, r_c, lf, shapes[lf])
        e_f, vec_f = eigh_tridiagonal(d_f, o_f)
        radial = (y * r) @ vec_f
        weight = (2.0 / 3.0) * max(l, lf) / (2 * l + 1)
        out_e.append(e_f)
        out_f.append(weight * (e_f - e0) * radial**2)
        a1, a2, a3, a4 = shapes[lf]
        dv = model_potential(r, z, zeta, a1, a3, alpha_c, r_c, a2, a4) - v_l
        identity += weight * (k_term + float(np.sum(y * y * r * r * dv)) + 0.5 * (lf * (lf + 1) - l * (l + 1)))
    return FSum(energy=e0, final_l=finals, final_energy=out_e, f=out_f, identity=identity)
