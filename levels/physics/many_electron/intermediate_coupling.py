"""Intermediate coupling of an open core plus one electron, fitted to measured levels, and its E1 rates.

Method (Cowan, *The Theory of Atomic Structure and Spectra*, University of
California Press, 1981, chapters 12-14 and 16; Condon & Shortley, *The Theory of
Atomic Spectra*, Cambridge University Press, 1935, chapters VI-IX):

1. Within one configuration the energy matrix of every J is
   ``E0 + sum_k f_k F^k + sum_k g_k G^k + zeta_core A_core + zeta_outer A_outer``
   (:mod:`.slater_condon`); its radial parameters are fitted by least squares to
   the measured levels of the configuration, each measured level matched to an
   eigenvalue of its J by energy order (the parameter fit of Cowan 1981, sec. 16-1).
2. Starting values come from a central-field estimate: hydrogenic orbitals whose
   effective charge reproduces each subshell's binding energy give F^k and G^k;
   the hydrogenic spin-orbit estimate of Landé (``zeta = alpha^2 R Z^2 z_o / (n*^3
   l (l + 1/2) (l + 1))``, Landé 1924, Z. Phys. 25, 46; form as recalled from
   memory) gives zeta. The fit starts from these and from scaled copies
   (x 1/3, 1, 3 of the Slater integrals; x 1/2, 1, 2 of zeta) and keeps the best.
3. Line strengths: the reduced dipole matrix element between eigenvectors of two
   configurations that differ by one electron l -> l +- 1 (angular part from
   Racah algebra, taken between determinants) times the radial integral
   ``<n l|r|n' l'>`` of the jumping electron, which here comes from the Coulomb
   approximation (Bates & Damgaard 1949, Phil. Trans. R. Soc. A 242, 101; Seaton 1958,
   MNRAS 118, 504): the Coulomb function decaying at large r for the effective
   quantum number of the electron's binding energy, obtained by inward Numerov
   integration and cut where it starts to diverge toward the origin (the functions
   of :mod:`.coulomb_approximation`, shared with the one-valence-electron method).

Uncertainty rule (``a_rel_unc``, relative, of A, f and S alike): the root sum of
squares of

* ``BASE_REL_UNC`` = 0.25: the method's typical miss on strong lines between two
  excited configurations in the published comparisons of
  ``tests/physics/many_electron/test_coupled_rates.py`` (the 23 strongest lines of
  Ne I 2p5 3p - 2p5 3s and Ar I 3p5 4p - 3p5 4s: rms of ln(A/A_published) 0.21,
  20 lines within 16 %, three mixing-sensitive Ne lines off by 35-49 %; rounded up);
* ``RANGE_REL_UNC`` = 0.5 added when the lower configuration has closed shells
  only (a resonance line to the ground state: the Coulomb approximation is at the
  edge of its range there; the Hg I 6s6p 1P1 lifetime of the tests is off by a
  factor of about 1.3, the 3P1 lifetime by about 2). Where an effective quantum
  number has no classically allowed Coulomb orbit (nu^2 <= l(l+1): a core electron
  jumps, as in the noble-gas resonance lines) the method gives no line at all;
* the propagated fit uncertainty: the line strength recomputed with each free
  parameter moved by its standard error (from the fit's covariance; when the fit
  has no degree of freedom the standard errors assume a residual of 1 % of the
  configuration's spread), added in quadrature, so a poorly fitted configuration or
  an intercombination line fed by uncertain mixing gets a larger figure;
* the radial sensitivity: the relative change of S when either electron's effective
  quantum number is taken at the configuration's lowest or highest measured level
  instead of its average (large where the Coulomb integral is near a cancellation,
  as for Hg I 6s2 - 6s6p);
* a cancellation term ``0.05 / CF`` (capped at 3), with Cowan's cancellation factor
  ``CF = (|sum_i a_i| / sum_i |a_i|)^2`` over the contributions of the LS basis
  states to the amplitude (Cowan 1981, sec. 14-15, from memory): lines whose
  amplitude is a small difference of large parts are unreliable.

The lifetime uncertainty is the A-weighted mean of the line figures of the decays
(fully correlated errors, the cautious choice).
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy import optimize, special

from levels import units
from levels.errors import PhysicsInputError
from levels.physics.many_electron import coulomb_approximation, numerov
from levels.physics.many_electron.slater_condon import ConfigurationModel

__all__ = [
    "BASE_REL_UNC",
    "RANGE_REL_UNC",
    "FitResult",
    "coulomb_dipole_integral",
    "hydrogenic_slater_integral",
    "central_field_start",
    "fit_configuration",
    "energies",
    "assign_in_order",
    "cancellation_factor",
    "combine_rel_unc",
]

BASE_REL_UNC = 0.25
RANGE_REL_UNC = 0.5
#: cancellation term: CANCEL_REL_UNC / CF, capped at CANCEL_CAP
CANCEL_REL_UNC = 0.05
CANCEL_CAP = 3.0
#: step of the square-root grid of the Coulomb functions, a0^(1/2)
GRID_STEP = 0.01
#: Rydberg constant (infinite mass), cm-1
R_CM1 = units.R_INF / 100.0
#: alpha^2 R, cm-1 (Landé's spin-orbit estimate)
ALPHA2_R_CM1 = units.ALPHA**2 * R_CM1


# ----------------------------------------------------------------- radial functions

def coulomb_dipole_integral(nu_a: float, l_a: int, nu_b: float, l_b: int, zeta: float = 1.0) -> float:
    """Radial dipole integral <nu_a l_a|r|nu_b l_b> of the Coulomb approximation, Bohr radii.

    Parameters
    ----------
    nu_a, nu_b : float
        Effective quantum numbers ``zeta sqrt(R / binding)`` of the two states (> 0).
    l_a, l_b : int
        Orbital angular momenta.
    zeta : float
        Net charge seen by the electron (ion charge + 1).

    Returns
    -------
    float
        The integral in a0 (sign of the Coulomb functions' outer lobes positive).

    Raises
    ------
    PhysicsInputError
        Non-positive effective quantum number.

    Examples
    --------
    >>> round(abs(coulomb_dipole_integral(2.0, 1, 1.0, 0)), 4)     # H 2p-1s: 128 sqrt(6)/243
    1.2903
    """
    if not (nu_a > 0 and nu_b > 0 and math.isfinite(nu_a) and math.isfinite(nu_b)):
        raise PhysicsInputError("effective quantum numbers must be positive")
    return float(_coulomb_dipole_cached(round(float(nu_a), 10), int(l_a), round(float(nu_b), 10), int(l_b),
                                        float(zeta)))


@functools.lru_cache(maxsize=1024)
def _coulomb_dipole_cached(nu_a: float, l_a: int, nu_b: float, l_b: int, zeta: float) -> float:
    r_max = float(numerov.outer_radius(max(nu_a, nu_b), min(l_a, l_b), zeta))
    x = numerov.square_root_grid(1.05 * r_max, GRID_STEP)
    chi = coulomb_approximation.coulomb_radial_functions(x, [nu_a, nu_b], [l_a, l_b], zeta)
    return float(numerov.radial_integrals(chi[:, :1], chi[:, 1:], x, x**2)[0, 0])


def _hydrogenic_p(n: int, l: int, z_eff: float, r: NDArray[np.float64]) -> NDArray[np.float64]:
    """Hydrogenic P_nl(r) = r R_nl(r) for charge z_eff (normalised)."""
    rho = 2.0 * z_eff * r / n
    norm = math.sqrt((2.0 * z_eff / n) ** 3 * math.factorial(n - l - 1) / (2.0 * n * math.factorial(n + l)))
    return r * norm * np.exp(-rho / 2.0) * rho**l * special.eval_genlaguerre(n - l - 1, 2 * l + 1, rho)


def hydrogenic_slater_integral(k: int, a: tuple[int, int, float], b: tuple[int, int, float],
                               exchange: bool) -> float:
    """F^k(a, b) or G^k(a, b) of hydrogenic orbitals, hartree.

    Parameters
    ----------
    k : int
        Rank.
    a, b : (n, l, z_eff)
        Principal and orbital quantum number and effective charge of each orbital.
    exchange : bool
        G^k (exchange) when true, else F^k (direct).

    Returns
    -------
    float

    Examples
    --------
    >>> round(hydrogenic_slater_integral(0, (1, 0, 1.0), (1, 0, 1.0), False), 6)   # F0(1s,1s) = 5/8 Z
    0.625
    """
    scale = max(a[0] ** 2 / a[2], b[0] ** 2 / b[2])
    r = np.linspace(1e-6, 40.0 * scale, 20001)
    h = r[1] - r[0]
    pa, pb = _hydrogenic_p(a[0], a[1], a[2], r), _hydrogenic_p(b[0], b[1], b[2], r)
    rho1 = pa * pb if exchange else pa * pa
    rho2 = pa * pb if exchange else pb * pb
    # Y(r) = r^-(k+1) int_0^r rho2 s^k ds + r^k int_r^inf rho2 s^-(k+1) ds
    inner = np.cumsum(rho2 * r**k) * h
    outer = (np.sum(rho2 * r ** (-k - 1)) - np.cumsum(rho2 * r ** (-k - 1))) * h
    y = inner / r ** (k + 1) + outer * r**k
    return float(np.sum(rho1 * y) * h)


def central_field_start(model: ConfigurationModel, z: int, charge: int, binding_cm1: ArrayLike,
                        e0_cm1: float) -> NDArray[np.float64]:
    """Starting values of the parameters (cm-1) of a configuration from a central-field estimate.

    Parameters
    ----------
    model : ConfigurationModel
        The configuration's angular structure.
    z : int
        Atomic number.
    charge : int
        Ion charge (0 for a neutral atom).
    binding_cm1 : array_like
        Binding energy of an electron of each open subshell, cm-1 (> 0), in the model's order.
    e0_cm1 : float
        Starting average energy, cm-1.

    Returns
    -------
    ndarray
        ``[E0, *model.parameters]`` in cm-1.
    """
    shells = model.shells.shells
    binding = np.atleast_1d(np.asarray(binding_cm1, dtype=float))
    zo = charge + 1.0
    nu = zo * np.sqrt(R_CM1 / binding)
    orbitals = [(n, l, n / nu_i * zo) for (n, l, _), nu_i in zip(shells, nu)]
    hartree_cm1 = 2.0 * R_CM1
    values = [e0_cm1]
    for name in model.parameters:
        if name.startswith("F") or name.startswith("G"):
            k = int(name[1:])
            values.append(hydrogenic_slater_integral(k, orbitals[0], orbitals[1], name.startswith("G"))
                          * hartree_cm1)
        else:
            index = 0 if name in ("zeta_core", "zeta") else 1
            l = shells[index][1]
            values.append(ALPHA2_R_CM1 * z**2 * zo / (nu[index] ** 3 * l * (l + 0.5) * (l + 1)))
    return np.array(values)


# ----------------------------------------------------------------- the fit

def energies(model: ConfigurationModel, params: ArrayLike) -> dict[int, tuple[NDArray, NDArray]]:
    """Eigenvalues (ascending, cm-1) and eigenvectors of every J for ``[E0, *parameters]``.

    Examples
    --------
    >>> from levels.physics.many_electron.slater_condon import configuration_model, open_shells
    >>> m = configuration_model(open_shells(((6, 0, 1), (6, 1, 1))))
    >>> [round(float(e), 3) for e in energies(m, [0.0, 3.0, 0.0])[2][0]]   # 3P1, 1P1 at -G1/3, +G1/3
    [-1.0, 1.0]
    """
    p = np.asarray(params, dtype=float)
    out = {}
    for two_j, sub in model.subspaces.items():
        h = p[0] * np.eye(sub.basis.shape[1])
        if len(sub.matrices):
            h = h + np.tensordot(p[1:], sub.matrices, axes=1)
        values, vectors = np.linalg.eigh(h)
        out[two_j] = (values, vectors)
    return out


def assign_in_order(calculated: ArrayLike, measured: ArrayLike) -> NDArray[np.int64]:
    """Match sorted measured energies to sorted eigenvalues keeping the order, least squares.

    Parameters
    ----------
    calculated : array_like, shape (n,)
        Eigenvalues, ascending.
    measured : array_like, shape (k,), k <= n
        Measured energies, ascending.

    Returns
    -------
    ndarray of int, shape (k,)
        Index of the eigenvalue given to each measured level (increasing).

    Examples
    --------
    >>> assign_in_order([0.0, 10.0, 20.0], [9.0, 21.0]).tolist()
    [1, 2]
    """
    c = np.asarray(calculated, dtype=float)
    m = np.asarray(measured, dtype=float)
    n, k = len(c), len(m)
    if k > n:
        raise PhysicsInputError(f"{k} measured levels for {n} states")
    if k == n:
        return np.arange(n)
    cost = np.full((k + 1, n + 1), np.inf)
    cost[0, :] = 0.0
    for i in range(1, k + 1):
        for j in range(i, n + 1):
            cost[i, j] = min(cost[i, j - 1], cost[i - 1, j - 1] + (c[j - 1] - m[i - 1]) ** 2)
    out = np.zeros(k, dtype=np.int64)
    j = n
    for i in range(k, 0, -1):
        while cost[i, j] == cost[i, j - 1]:
            j -= 1
        out[i - 1] = j - 1
        j -= 1
    return out


@dataclass
class FitResult:
    """Fitted parameters of one configuration and the eigenvectors matched to measured levels."""

    names: tuple[str, ...]
    values: NDArray[np.float64]
    errors: NDArray[np.float64]
    fixed: tuple[str, ...]
    residuals_cm1: NDArray[np.float64]
    rms_cm1: float
    dof: int
    #: per measured level (input order): (two_j, eigenvector column index within its J)
    assignment: list[tuple[int, int]] = field(default_factory=list)
    eigen: dict[int, tuple[NDArray, NDArray]] = field(default_factory=dict)
    #: covariance of the free parameters (same order as ``free``)
    free: tuple[int, ...] = ()
    covariance: NDArray[np.float64] | None = None


#: order in which parameters are kept free when there are fewer levels than parameters
def _priority(names: tuple[str, ...]) -> list[int]:
    def rank(name: str) -> tuple:
        if name == "E0":
            return (0, 0)
        if name in ("zeta_core", "zeta"):
            return (1, 0)
        if name.startswith("G"):
            return (2, int(name[1:]))
        if name.startswith("F"):
            return (3, int(name[1:]))
        return (4, 0)
    return sorted(range(len(names)), key=lambda i: rank(names[i]))


def fit_configuration(model: ConfigurationModel, two_j: ArrayLike, energy_cm1: ArrayLike,
                      start: ArrayLike) -> FitResult:
    """Least-squares fit of ``[E0, *model.parameters]`` to measured levels of one configuration.

    Parameters
    ----------
    model : ConfigurationModel
    two_j : array_like of int, shape (k,)
        2J of each measured level.
    energy_cm1 : array_like, shape (k,)
        Their energies, cm-1.
    start : array_like
        Central-field starting values (:func:`central_field_start`), cm-1.

    Returns
    -------
    FitResult
        With fewer levels than parameters, the least important parameters (outer
        spin-orbit, high-rank Slater integrals first) stay fixed at their starting
        values and are listed in ``fixed``.

    Raises
    ------
    PhysicsInputError
        When a J has more measured levels than the configuration has states of that J,
        or a J the configuration does not have.

    Examples
    --------
    >>> from levels.physics.many_electron.slater_condon import configuration_model, open_shells
    >>> m = configuration_model(open_shells(((6, 0, 1), (6, 1, 1))))
    >>> fit = fit_configuration(m, [0, 2, 4, 2], [-100.0, -60.0, 50.0, 400.0], [0.0, 300.0, 60.0])
    >>> fit.dof, round(fit.rms_cm1, 1) < 40
    (1, True)
    """
    tj = np.asarray(two_j, dtype=np.int64)
    e = np.asarray(energy_cm1, dtype=float)
    names = ("E0",) + model.parameters
    x0 = np.asarray(start, dtype=float).copy()
    for value in np.unique(tj):
        sub = model.subspaces.get(int(value))
        if sub is None:
            raise PhysicsInputError(f"the configuration has no level with J = {_j_text(int(value))}")
        count = int(np.sum(tj == value))
        if count > sub.basis.shape[1]:
            raise PhysicsInputError(f"{count} measured levels with J = {_j_text(int(value))}; the configuration "
                                    f"has {sub.basis.shape[1]}")
    n_free = min(len(names), len(e))
    free = tuple(sorted(_priority(names)[:n_free]))
    fixed = tuple(names[i] for i in range(len(names)) if i not in free)
    groups = {int(v): np.flatnonzero(tj == v)[np.argsort(e[tj == v], kind="stable")] for v in np.unique(tj)}

    def full(x_free: NDArray) -> NDArray:
        p = x0.copy()
        p[list(free)] = x_free
        return p

    def residuals(x_free: NDArray) -> NDArray:
        eig = energies(model, full(x_free))
        out = np.empty(len(e))
        for value, idx in groups.items():
            calc = eig[value][0]
            chosen = assign_in_order(calc, e[idx])
            out[idx] = calc[chosen] - e[idx]
        return out

    lower = np.array([-np.inf if names[i] == "E0" else 0.0 for i in free])
    best = None
    scales = [(s_slater, s_zeta) for s_slater in (1.0, 1 / 3, 3.0) for s_zeta in (1.0, 0.5, 2.0)]
    for s_slater, s_zeta in scales:
        guess = np.array([x0[i] * (s_slater if names[i][0] in "FG" else s_zeta if names[i].startswith("zeta")
                                   else 1.0) for i in free])
        guess = np.maximum(guess, lower + 1e-9)
        result = optimize.least_squares(residuals, guess, bounds=(lower, np.inf), x_scale="jac")
        if best is None or result.cost < best.cost - 1e-9:
            best = result
    assert best is not None  # scales is a fixed, non-empty list: the loop ran at least once
    x_best = full(best.x)
    res = residuals(best.x)
    dof = len(e) - len(free)
    rms = float(np.sqrt(np.mean(res**2))) if len(e) else 0.0
    spread = float(np.ptp(e)) if len(e) > 1 else 0.0
    sigma2 = float(np.sum(res**2) / dof) if dof > 0 else (0.01 * spread) ** 2
    sigma2 = max(sigma2, (1e-4 * spread) ** 2)
    jac = best.jac
    try:
        cov = np.linalg.pinv(jac.T @ jac) * sigma2
    except np.linalg.LinAlgError:
        cov = np.full((len(free), len(free)), np.nan)
    errors = np.zeros(len(names))
    errors[list(free)] = np.sqrt(np.maximum(np.diag(cov), 0.0))
    eig = energies(model, x_best)
    assignment: list[tuple[int, int]] = [(0, 0)] * len(e)
    for value, idx in groups.items():
        chosen = assign_in_order(eig[value][0], e[idx])
        for k, column in zip(idx, chosen):
            assignment[int(k)] = (value, int(column))
    return FitResult(names, x_best, errors, fixed, res, rms, dof, assignment, eig, free, cov)


def _j_text(two_j: int) -> str:
    return str(two_j // 2) if two_j % 2 == 0 else f"{two_j}/2"


# ----------------------------------------------------------------- uncertainties

def cancellation_factor(contributions: ArrayLike) -> float:
    """Cowan's cancellation factor ``(|sum a_i| / sum |a_i|)^2`` of an amplitude's contributions.

    Examples
    --------
    >>> cancellation_factor([1.0, 1.0]), round(cancellation_factor([1.0, -0.9]), 6)
    (1.0, 0.00277)
    """
    a = np.asarray(contributions, dtype=float)
    total = float(np.sum(np.abs(a)))
    if total == 0.0:
        return 0.0
    return (abs(float(np.sum(a))) / total) ** 2


def combine_rel_unc(fit_rel: ArrayLike, cancellation: ArrayLike, out_of_range: ArrayLike,
                    radial_rel: ArrayLike = 0.0) -> NDArray[np.float64]:
    """The relative uncertainty rule of this module (see the module docstring).

    Parameters
    ----------
    fit_rel : array_like
        Relative change of S from the fit's parameter uncertainties.
    cancellation : array_like
        Cancellation factor CF (0..1).
    out_of_range : array_like of bool
        Whether the Coulomb approximation is at the edge of its range for the line.
    radial_rel : array_like
        Relative change of S when the radial integral is taken at the effective quantum
        number of the configuration's lowest or highest level instead of its average.

    Returns
    -------
    ndarray

    Examples
    --------
    >>> combine_rel_unc([0.0], [1.0], [False]).round(3).tolist()
    [0.255]
    """
    fit = np.asarray(fit_rel, dtype=float)
    cf = np.asarray(cancellation, dtype=float)
    rng = np.asarray(out_of_range, dtype=bool)
    cancel = np.minimum(CANCEL_CAP, CANCEL_REL_UNC / np.maximum(cf, 1e-12))
    radial = np.asarray(radial_rel, dtype=float)
    return np.sqrt(BASE_REL_UNC**2 + np.where(rng, RANGE_REL_UNC, 0.0) ** 2 + fit**2 + cancel**2 + radial**2)
