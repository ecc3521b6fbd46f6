"""Electric-dipole line strengths, oscillator strengths, Einstein A, lifetimes of one-electron ions.

Conventions
-----------
* **Line strength** ``S`` is in atomic units :math:`e^2 a_0^2` and is the sum of
  :math:`|\\langle i|\\mathbf{r}|k\\rangle|^2` over *all* magnetic substates of both
  levels, spin included. For nl terms (spin summed, ``g = 2(2l+1)``)

  .. math:: S(nl, n'l') = 2\\,l_>\\,R^2, \\qquad l_> = \\max(l, l'),

  the factor 2 being the spin multiplicity; for fine-structure levels
  (``g = 2j+1``)

  .. math::

      S(nlj, n'l'j') = (2j+1)(2j'+1)
          \\begin{Bmatrix} l & j & 1/2 \\\\ j' & l' & 1 \\end{Bmatrix}^2 \\, l_> R^2 ,

  so that :math:`\\sum_{j j'} S(nlj, n'l'j') = S(nl, n'l')` (6j orthogonality).
  ``R`` is the radial integral of :mod:`levels.physics.one_electron.radial`.
* **Mass convention**: ``R`` (and so ``S``) belongs to the reduced-mass,
  charge-``z`` atom, ``R = R_H(infinite mass) / (z * m_r/m_e)``; the transition
  energies are *inputs*, taken from the caller's computed levels (Dirac,
  recoil, QED...). For ``z > 1`` the dipole operator of the internal motion
  about the centre of mass carries the effective charge
  :math:`e\\,(M + z m_e)/(M + m_e) = e\\,[1 + (z-1)(1 - m_r/m_e)]`
  (derived here from :math:`\\mathbf d = -e\\mathbf r_e + z e\\mathbf r_N`; it is 1 for
  hydrogen and consistent with the Thomas-Reiche-Kuhn sum of the two-body
  system), applied as its square to ``S`` unless ``dipole_recoil=False``.
* **Oscillator strength and Einstein A** (Cowan 1981, chapter 14, in SI form),
  with wavenumber :math:`\\sigma` in m-1:

  .. math::

      A_{ul} = \\frac{16\\pi^3 \\sigma^3 (e a_0)^2}{3\\varepsilon_0 h\\,g_u} S
             \\approx 2.0261\\times10^{-6}\\,\\frac{\\sigma_{cm}^3 S}{g_u}\\ \\mathrm{s^{-1}},
      \\qquad
      f_{lu} = \\frac23 \\frac{h c \\sigma}{E_h} \\frac{S}{g_l}
             \\approx 3.0376\\times10^{-6}\\,\\frac{\\sigma_{cm} S}{g_l}.

  ``f`` is defined with the electron mass (so it sums to :math:`m_e/m_r` for
  hydrogen, the Thomas-Reiche-Kuhn value of the two-body atom).

The 6j symbols with a spin 1/2 have closed forms (Edmonds 1957, Table 5); for
:math:`L = l_>` the three allowed fine-structure components carry the fractions
of :math:`L R^2`:

===============================================  ============================
component (j of the l_> level, j of the other)   factor
===============================================  ============================
(L + 1/2, L - 1/2)                               :math:`2(L+1)/(2L+1)`
(L - 1/2, L - 1/2)                               :math:`2/((2L-1)(2L+1))`
(L - 1/2, L - 3/2)                               :math:`2(L-1)/(2L-1)`
===============================================  ============================

(``Delta j = 2`` vanishes.) The tests check them against
:func:`sympy.physics.wigner.wigner_6j`.

The metastable 2s level decays mainly by two-photon emission (nonrelativistic
rate 8.2290 z^6 s-1 for infinite nuclear mass; Goldman & Drake 1981, value from
memory) and by a magnetic-dipole photon (leading-order rate
:math:`\\alpha^{11} z^{10} m_e c^2/(972\\hbar) \\approx 2.496\\times10^{-6} z^{10}`
s-1; formula and value from memory, as quoted by Parpia & Johnson 1982); see
:func:`two_photon_rate_2s`, :func:`m1_rate_2s` and :func:`metastable_decay_rates`.

References
----------
R. D. Cowan, *The Theory of Atomic Structure and Spectra* (University of
California Press, Berkeley, 1981), chapter 14.

A. R. Edmonds, *Angular Momentum in Quantum Mechanics* (Princeton University
Press, 1957), Table 5.

H. A. Bethe and E. E. Salpeter, *Quantum Mechanics of One- and Two-Electron
Atoms* (Springer, Berlin, 1957), sections 59-63.

S. P. Goldman and G. W. F. Drake, "Relativistic two-photon decay rates of
2s1/2 hydrogenic ions", Phys. Rev. A 24, 183 (1981) (citation from memory).

F. A. Parpia and W. R. Johnson, "Radiative decay rates of metastable
one-electron atoms", Phys. Rev. A 26, 1142 (1982) (citation from memory).

P. J. Storey and D. G. Hummer, Comput. Phys. Commun. 66, 129 (1991).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from levels import units
from levels.errors import PhysicsInputError, QuantumNumberError
from levels.physics.one_electron import radial

__all__ = [
    "fine_structure_factor",
    "line_strength_nl",
    "line_strength_fs",
    "einstein_a",
    "oscillator_strength",
    "lifetimes",
    "branching_ratios",
    "two_photon_rate_2s",
    "m1_rate_2s",
    "metastable_decay_rates",
    "hydrogenic_e1_lines",
    "A_COEFFICIENT",
    "F_COEFFICIENT",
]

#: A = A_COEFFICIENT * sigma_cm1**3 * S / g_upper, s^-1 (S in e^2 a0^2).
A_COEFFICIENT: float = 16.0 * math.pi**3 * 100.0**3 * (units.E_CHARGE * units.A0) ** 2 / (3.0 * units.EPS0 * units.H)
#: f = F_COEFFICIENT * sigma_cm1 * S / g_lower (S in e^2 a0^2).
F_COEFFICIENT: float = 2.0 / 3.0 * units.CM1_J / units.E_HARTREE

#: Nonrelativistic 2s -> 1s two-photon rate of hydrogen with infinite nuclear
#: mass, s^-1 (Goldman & Drake 1981, Phys. Rev. A 24, 183; value from memory).
TWO_PHOTON_2S_H: float = 8.2290


# ----------------------------------------------------------------------------
# helpers
# ----------------------------------------------------------------------------


def _float_array(value: ArrayLike, name: str) -> NDArray[np.float64]:
    try:
        arr = np.asarray(value, dtype=np.float64)
    except (TypeError, ValueError) as exc:
        raise PhysicsInputError(f"{name} must be numeric") from exc
    if not np.all(np.isfinite(arr)):
        raise PhysicsInputError(f"{name} must be finite everywhere")
    return arr


def _check_two_j(l: NDArray[np.int64], two_j: NDArray[np.int64], name: str = "") -> None:
    ok = (two_j == 2 * l + 1) | ((two_j == 2 * l - 1) & (l > 0))
    if not np.all(ok):
        raise QuantumNumberError(f"two_j{name} must be 2l+1 or 2l-1 (j = l +- 1/2, j >= 1/2) everywhere")


def _recoil_factor(z: int, mass_ratio: float, dipole_recoil: bool) -> float:
    """Square of the effective dipole charge (M + z m_e)/(M + m_e) = 1 + (z-1)(1 - m_r/m_e)."""
    if not dipole_recoil:
        return 1.0
    c = 1.0 + (float(z) - 1.0) * (1.0 - float(mass_ratio))
    return c * c


# ----------------------------------------------------------------------------
# line strengths
# ----------------------------------------------------------------------------


def fine_structure_factor(l_u: ArrayLike, two_j_u: ArrayLike, l_l: ArrayLike,
                          two_j_l: ArrayLike) -> NDArray[np.float64]:
    """Angular factor :math:`(2j_u+1)(2j_l+1)\\{l_u\\ j_u\\ \\tfrac12;\\ j_l\\ l_l\\ 1\\}^2`.

    Parameters
    ----------
    l_u, two_j_u : array_like of int
        Orbital quantum number and twice the total angular momentum of one level.
    l_l, two_j_l : array_like of int
        The same for the other level (the factor is symmetric).

    Returns
    -------
    ndarray of float
        The factor multiplying :math:`l_> R^2` in the fine-structure line strength
        (dimensionless); 0 where ``|l_u - l_l| != 1`` or ``|j_u - j_l| > 1``.
        The factors of one nl pair sum to 2.

    Raises
    ------
    QuantumNumberError
        ``two_j`` not ``2l +- 1`` (with j >= 1/2), negative ``l``.

    Notes
    -----
    Closed forms of the 6j symbol with one argument 1/2 (Edmonds 1957, Table 5),
    with ``L = max(l_u, l_l)``: :math:`2(L+1)/(2L+1)` for (L+1/2, L-1/2),
    :math:`2/(4L^2-1)` for (L-1/2, L-1/2), :math:`2(L-1)/(2L-1)` for
    (L-1/2, L-3/2), the first j being that of the level with ``l = L``.

    References
    ----------
    A. R. Edmonds, *Angular Momentum in Quantum Mechanics* (Princeton, 1957), Table 5.

    Examples
    --------
    >>> fine_structure_factor([1, 1], [3, 1], [0, 0], [1, 1])  # 2p3/2-1s, 2p1/2-1s
    array([1.33333333, 0.66666667])
    >>> fine_structure_factor(2, 5, 1, 1)  # 3d5/2-2p1/2: Delta j = 2
    array(0.)
    """
    lu, ju, ll, jl = np.broadcast_arrays(
        radial._as_int_array(l_u, "l_u"),
        radial._as_int_array(two_j_u, "two_j_u"),
        radial._as_int_array(l_l, "l_l"),
        radial._as_int_array(two_j_l, "two_j_l"),
    )
    if np.any(lu < 0) or np.any(ll < 0):
        raise QuantumNumberError("l must be >= 0 everywhere")
    _check_two_j(lu, ju, "_u")
    _check_two_j(ll, jl, "_l")
    big_is_u = lu > ll
    L = np.maximum(lu, ll).astype(np.float64)
    tb = np.where(big_is_u, ju, jl)  # 2j of the level with l = L
    ts = np.where(big_is_u, jl, ju)
    twoL = 2 * np.maximum(lu, ll)
    e1 = np.abs(lu - ll) == 1
    with np.errstate(divide="ignore", invalid="ignore"):
        main = 2.0 * (L + 1.0) / (2.0 * L + 1.0)
        sat = 2.0 / ((2.0 * L - 1.0) * (2.0 * L + 1.0))
        other = 2.0 * (L - 1.0) / (2.0 * L - 1.0)
    out = np.zeros(L.shape)
    out = np.where(e1 & (tb == twoL + 1) & (ts == twoL - 1), main, out)
    out = np.where(e1 & (tb == twoL - 1) & (ts == twoL - 1), sat, out)
    out = np.where(e1 & (tb == twoL - 1) & (ts == twoL - 3), other, out)
    return out


def line_strength_nl(
    n_u: ArrayLike,
    l_u: ArrayLike,
    n_l: ArrayLike,
    l_l: ArrayLike,
    z: int = 1,
    mass_ratio: float = 1.0,
    dipole_recoil: bool = True,
) -> NDArray[np.float64]:
    """E1 line strength between nl terms (spin summed) of a one-electron ion.

    Parameters
    ----------
    n_u, l_u : array_like of int
        Principal and orbital quantum numbers of the upper term.
    n_l, l_l : array_like of int
        Those of the lower term (broadcast against the upper ones).
    z : int, optional
        Nuclear charge.
    mass_ratio : float, optional
        Reduced mass over electron mass, ``m_r/m_e`` (1 = infinite nuclear mass).
    dipole_recoil : bool, optional
        Apply the centre-of-mass effective dipole charge (module docstring);
        no effect for ``z = 1`` or ``mass_ratio = 1``.

    Returns
    -------
    ndarray of float
        :math:`S = 2 l_> R^2` in :math:`e^2 a_0^2`, summed over all
        ``2(2l_u+1) * 2(2l_l+1)`` substates (spin factor 2 included; use
        ``g = 2(2l+1)``). 0 where ``|l_u - l_l| != 1``.

    Raises
    ------
    QuantumNumberError
        ``n < 1``, ``l`` outside ``0 .. n-1`` or non-integers.
    PhysicsInputError
        Bad ``z`` or ``mass_ratio``.

    Notes
    -----
    ``R`` is the reduced-mass radial integral :math:`R_H/(z\\,m_r/m_e)`
    (:func:`levels.physics.one_electron.radial.radial_dipole_array`).

    References
    ----------
    R. D. Cowan, *The Theory of Atomic Structure and Spectra* (1981), chapter 14.

    Examples
    --------
    >>> round(float(line_strength_nl(2, 1, 1, 0)), 6)   # 2 * 1 * (128 sqrt(6)/243)^2
    3.329574
    >>> float(line_strength_nl(3, 2, 1, 0))             # Delta l = 2: not E1
    0.0
    """
    R = radial.radial_dipole_array(n_u, l_u, n_l, l_l, z=z, mass_ratio=mass_ratio)
    lu, ll = np.broadcast_arrays(radial._as_int_array(l_u, "l_u"), radial._as_int_array(l_l, "l_l"))
    lbig = np.broadcast_to(np.maximum(lu, ll), R.shape)
    e1 = np.isfinite(R)
    S = np.where(e1, 2.0 * lbig * np.where(e1, R, 0.0) ** 2, 0.0)
    return S * _recoil_factor(z, mass_ratio, dipole_recoil)


def line_strength_fs(
    n_u: ArrayLike,
    l_u: ArrayLike,
    two_j_u: ArrayLike,
    n_l: ArrayLike,
    l_l: ArrayLike,
    two_j_l: ArrayLike,
    z: int = 1,
    mass_ratio: float = 1.0,
    dipole_recoil: bool = True,
) -> NDArray[np.float64]:
    """E1 line strength between fine-structure levels ``n l j`` of a one-electron ion.

    Parameters
    ----------
    n_u, l_u, two_j_u : array_like of int
        Upper level: principal and orbital quantum numbers, twice ``j``.
    n_l, l_l, two_j_l : array_like of int
        Lower level.
    z : int, optional
        Nuclear charge.
    mass_ratio : float, optional
        ``m_r/m_e``.
    dipole_recoil : bool, optional
        Apply the centre-of-mass effective dipole charge (module docstring).

    Returns
    -------
    ndarray of float
        :math:`S = (2j_u+1)(2j_l+1)\\{l_u j_u \\tfrac12; j_l l_l 1\\}^2 l_> R^2`
        in :math:`e^2 a_0^2` (use ``g = 2j+1``); 0 for non-E1 combinations.

    Raises
    ------
    QuantumNumberError
        Malformed quantum numbers (``two_j`` not ``2l +- 1``, ``l >= n`` ...).
    PhysicsInputError
        Bad ``z`` or ``mass_ratio``.

    Notes
    -----
    Nonrelativistic radial integrals with LS-coupled angular factors
    (:func:`fine_structure_factor`); summed over ``j_u, j_l`` this is
    :func:`line_strength_nl`.

    References
    ----------
    A. R. Edmonds (1957), Table 5; R. D. Cowan (1981), chapter 14.

    Examples
    --------
    >>> S = line_strength_fs([2, 2], [1, 1], [3, 1], [1, 1], [0, 0], [1, 1])
    >>> S.round(6), round(float(S.sum()), 6)
    (array([2.219716, 1.109858]), 3.329574)
    """
    F = fine_structure_factor(l_u, two_j_u, l_l, two_j_l)
    R = radial.radial_dipole_array(n_u, l_u, n_l, l_l, z=z, mass_ratio=mass_ratio)
    F, R = np.broadcast_arrays(F, R)
    lu, ll = np.broadcast_arrays(radial._as_int_array(l_u, "l_u"), radial._as_int_array(l_l, "l_l"))
    lbig = np.broadcast_to(np.maximum(lu, ll), R.shape)
    e1 = np.isfinite(R) & (F > 0)
    S = np.where(e1, F * lbig * np.where(e1, R, 0.0) ** 2, 0.0)
    return S * _recoil_factor(z, mass_ratio, dipole_recoil)


# ----------------------------------------------------------------------------
# rates
# ----------------------------------------------------------------------------


def einstein_a(S: ArrayLike, wavenumber_cm1: ArrayLike, g_upper: ArrayLike) -> NDArray[np.float64]:
    """Einstein spontaneous-emission coefficient of an E1 line.

    Parameters
    ----------
    S : array_like of float
        Line strength in :math:`e^2 a_0^2` (>= 0).
    wavenumber_cm1 : array_like of float
        Transition wavenumber in cm-1 (>= 0), from the caller's level energies.
    g_upper : array_like of float
        Statistical weight of the upper level (> 0), consistent with ``S``.

    Returns
    -------
    ndarray of float
        ``A`` in s-1.

    Raises
    ------
    PhysicsInputError
        Negative or non-finite ``S`` or wavenumber, non-positive ``g_upper``.

    Notes
    -----
    :math:`A = 16\\pi^3\\sigma^3 (e a_0)^2 S / (3\\varepsilon_0 h g_u)` with
    :math:`\\sigma` in m-1, i.e. :math:`2.0261\\times10^{-6}\\sigma_{cm}^3 S/g_u` s-1.

    References
    ----------
    R. D. Cowan, *The Theory of Atomic Structure and Spectra* (1981), chapter 14.

    Examples
    --------
    >>> f"{float(einstein_a(3.333202, 82258.19, 6)):.4e}"   # 2p-1s of H, reduced mass
    '6.2649e+08'
    """
    S_ = _float_array(S, "S")
    sigma = _float_array(wavenumber_cm1, "wavenumber_cm1")
    g = _float_array(g_upper, "g_upper")
    if np.any(S_ < 0):
        raise PhysicsInputError("line strength S must be >= 0")
    if np.any(sigma < 0):
        raise PhysicsInputError("wavenumber_cm1 must be >= 0 (upper level above lower level)")
    if np.any(g <= 0):
        raise PhysicsInputError("g_upper must be > 0")
    return A_COEFFICIENT * sigma**3 * S_ / g


def oscillator_strength(S: ArrayLike, wavenumber_cm1: ArrayLike, g_lower: ArrayLike) -> NDArray[np.float64]:
    """Absorption oscillator strength of an E1 line.

    Parameters
    ----------
    S : array_like of float
        Line strength in :math:`e^2 a_0^2` (>= 0).
    wavenumber_cm1 : array_like of float
        Transition wavenumber in cm-1 (>= 0).
    g_lower : array_like of float
        Statistical weight of the lower level (> 0), consistent with ``S``.

    Returns
    -------
    ndarray of float
        ``f_abs`` (dimensionless).

    Raises
    ------
    PhysicsInputError
        Negative or non-finite ``S`` or wavenumber, non-positive ``g_lower``.

    Notes
    -----
    :math:`f = \\tfrac23 (\\Delta E / E_h) S / g_l` with the Hartree energy of the
    electron mass, i.e. :math:`3.0376\\times10^{-6}\\sigma_{cm} S/g_l`.

    References
    ----------
    R. D. Cowan, *The Theory of Atomic Structure and Spectra* (1981), chapter 14.

    Examples
    --------
    >>> round(float(oscillator_strength(3.329574, 0.75 * 109737.31568, 2)), 4)
    0.4162
    """
    S_ = _float_array(S, "S")
    sigma = _float_array(wavenumber_cm1, "wavenumber_cm1")
    g = _float_array(g_lower, "g_lower")
    if np.any(S_ < 0):
        raise PhysicsInputError("line strength S must be >= 0")
    if np.any(sigma < 0):
        raise PhysicsInputError("wavenumber_cm1 must be >= 0 (upper level above lower level)")
    if np.any(g <= 0):
        raise PhysicsInputError("g_lower must be > 0")
    return F_COEFFICIENT * sigma * S_ / g


def _total_rates(
    upper_index: ArrayLike, a_per_s: ArrayLike, n_states: int, extra_rates: ArrayLike | None
) -> tuple[NDArray[np.int64], NDArray[np.float64], NDArray[np.float64]]:
    up = radial._as_int_array(upper_index, "upper_index").ravel()
    a = _float_array(a_per_s, "a_per_s").ravel()
    n_states = radial._as_int(n_states, "n_states")
    if n_states < 0:
        raise PhysicsInputError("n_states must be >= 0")
    if up.shape != a.shape:
        raise PhysicsInputError(f"upper_index and a_per_s differ in length ({up.size} vs {a.size})")
    if up.size and (up.min() < 0 or up.max() >= n_states):
        raise PhysicsInputError(f"upper_index must lie in 0 .. n_states-1 = {n_states - 1}")
    if np.any(a < 0):
        raise PhysicsInputError("a_per_s must be >= 0")
    total = np.bincount(up, weights=a, minlength=n_states).astype(np.float64)
    if extra_rates is not None:
        extra = _float_array(extra_rates, "extra_rates").ravel()
        if extra.size != n_states:
            raise PhysicsInputError(f"extra_rates must have n_states = {n_states} entries, got {extra.size}")
        if np.any(extra < 0):
            raise PhysicsInputError("extra_rates must be >= 0")
        total = total + extra
    return up, a, total


def lifetimes(
    upper_index: ArrayLike, a_per_s: ArrayLike, n_states: int, extra_rates: ArrayLike | None = None
) -> NDArray[np.float64]:
    """Radiative lifetime of every state, :math:`\\tau_i = 1/\\sum_k A_{ik}`.

    Parameters
    ----------
    upper_index : array_like of int
        Upper-state index of each line (0 .. n_states-1).
    a_per_s : array_like of float
        Einstein A of each line, s-1.
    n_states : int
        Number of states.
    extra_rates : array_like of float, optional
        Further decay rate of each state in s-1 (length ``n_states``), for
        example :func:`metastable_decay_rates` (two-photon and M1 decay of 2s).

    Returns
    -------
    ndarray of float
        Lifetimes in s; ``inf`` where nothing decays (ground state).

    Raises
    ------
    PhysicsInputError
        Mismatched lengths, indices out of range, negative rates.

    Examples
    --------
    >>> lifetimes([1, 2, 2], [5.0e8, 1.0e7, 3.0e7], 3).tolist()
    [inf, 2e-09, 2.5e-08]
    """
    _, _, total = _total_rates(upper_index, a_per_s, n_states, extra_rates)
    with np.errstate(divide="ignore"):
        return np.where(total > 0, 1.0 / np.where(total > 0, total, 1.0), np.inf)


def branching_ratios(
    upper_index: ArrayLike, a_per_s: ArrayLike, n_states: int, extra_rates: ArrayLike | None = None
) -> NDArray[np.float64]:
    """Branching ratio of every line, :math:`A_{ik}/\\sum_{k'} A_{ik'}`.

    Parameters
    ----------
    upper_index : array_like of int
        Upper-state index of each line.
    a_per_s : array_like of float
        Einstein A of each line, s-1.
    n_states : int
        Number of states.
    extra_rates : array_like of float, optional
        Further decay channels of each state (s-1) that count in the denominator.

    Returns
    -------
    ndarray of float
        Branching ratio of each line (dimensionless); NaN where the upper state
        has no decay at all.

    Raises
    ------
    PhysicsInputError
        Mismatched lengths, indices out of range, negative rates.

    Examples
    --------
    >>> branching_ratios([2, 2], [1.0e7, 3.0e7], 3)
    array([0.25, 0.75])
    """
    up, a, total = _total_rates(upper_index, a_per_s, n_states, extra_rates)
    denom = total[up]
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(denom > 0, a / np.where(denom > 0, denom, 1.0), np.nan)


def two_photon_rate_2s(z: int, mass_ratio: float = 1.0) -> float:
    """Two-photon decay rate 2s -> 1s + 2 photons of a one-electron ion.

    Parameters
    ----------
    z : int
        Nuclear charge (>= 1).
    mass_ratio : float, optional
        ``m_r/m_e``; the nonrelativistic rate scales as ``m_r`` (energies ~ m_r,
        lengths ~ 1/m_r in :math:`\\omega^3\\omega'^3|M|^2 d\\omega`).

    Returns
    -------
    float
        Rate in s-1: :math:`8.2290\\,z^6\\,(m_r/m_e)`.

    Raises
    ------
    PhysicsInputError
        ``z`` not an integer >= 1 or ``mass_ratio`` not > 0.

    Notes
    -----
    Nonrelativistic value for infinite nuclear mass, 8.2290 s-1 for hydrogen
    (Goldman & Drake 1981; value from memory), with its exact nonrelativistic
    :math:`z^6` scaling. Relativistic corrections of relative order
    :math:`(\\alpha z)^2` (a few per cent near z = 30, tens of per cent for
    the heaviest ions) are not included.

    References
    ----------
    S. P. Goldman and G. W. F. Drake, Phys. Rev. A 24, 183 (1981).

    Examples
    --------
    >>> two_photon_rate_2s(1)
    8.229
    >>> round(two_photon_rate_2s(2), 2)
    526.66
    """
    radial._check_scale(z, mass_ratio)
    return TWO_PHOTON_2S_H * float(z) ** 6 * float(mass_ratio)


def m1_rate_2s(z: int) -> float:
    """Magnetic-dipole decay rate 2s1/2 -> 1s1/2 of a one-electron ion.

    Parameters
    ----------
    z : int
        Nuclear charge (>= 1).

    Returns
    -------
    float
        Rate in s-1, :math:`\\alpha^{11} z^{10} m_e c^2 / (972\\hbar)`
        (:math:`2.496\\times10^{-6} z^{10}` s-1).

    Raises
    ------
    PhysicsInputError
        ``z`` not an integer >= 1.

    Notes
    -----
    Leading relativistic order; formula and value from memory (as quoted by
    Parpia & Johnson 1982). It is 3e-7 of the two-photon rate for hydrogen and
    overtakes it near z = 40; higher orders in :math:`\\alpha z` and the
    reduced mass are not included.

    References
    ----------
    F. A. Parpia and W. R. Johnson, Phys. Rev. A 26, 1142 (1982).

    Examples
    --------
    >>> f"{m1_rate_2s(1):.3e}"
    '2.496e-06'
    """
    radial._check_scale(z, 1.0)
    return units.ALPHA**11 * float(z) ** 10 * units.M_E * units.C**2 / (972.0 * units.HBAR)


def metastable_decay_rates(
    n: ArrayLike, l: ArrayLike, z: int, mass_ratio: float = 1.0, include_m1: bool = True
) -> NDArray[np.float64]:
    """Non-E1 decay rate of each state: two-photon (+ M1) for 2s, 0 elsewhere.

    Parameters
    ----------
    n, l : array_like of int
        Quantum numbers of the states (nl terms or fine-structure levels).
    z : int
        Nuclear charge.
    mass_ratio : float, optional
        ``m_r/m_e``.
    include_m1 : bool, optional
        Add :func:`m1_rate_2s`.

    Returns
    -------
    ndarray of float
        Rates in s-1, to pass as ``extra_rates`` to :func:`lifetimes`.

    Raises
    ------
    QuantumNumberError
        Malformed quantum numbers.
    PhysicsInputError
        Bad ``z`` or ``mass_ratio``.

    Examples
    --------
    >>> metastable_decay_rates([1, 2, 2], [0, 0, 1], 1, include_m1=False)
    array([0.   , 8.229, 0.   ])
    """
    n_ = radial._as_int_array(n, "n")
    l_ = radial._as_int_array(l, "l")
    n_, l_ = np.broadcast_arrays(n_, l_)
    radial._check_nl_arrays(n_, l_)
    rate = two_photon_rate_2s(z, mass_ratio)
    if include_m1:
        rate += m1_rate_2s(z)
    return np.where((n_ == 2) & (l_ == 0), rate, 0.0)


# ----------------------------------------------------------------------------
# driver
# ----------------------------------------------------------------------------


class _StateIndex:
    """Map integer state keys to positions in the caller's arrays (-1 where absent).

    A dense table when the key range is small (fast), a sorted search otherwise.
    """

    _DENSE_LIMIT = 1 << 25

    def __init__(self, keys: NDArray[np.int64], key_range: int):
        self._dense = key_range <= self._DENSE_LIMIT
        order = np.argsort(keys, kind="stable")
        sorted_keys = keys[order]
        self.duplicated = bool(np.any(sorted_keys[1:] == sorted_keys[:-1]))
        if self._dense:
            self._table = np.full(key_range, -1, dtype=np.int64)
            self._table[keys] = np.arange(keys.size, dtype=np.int64)
        else:
            self._sorted = sorted_keys
            self._order = order

    def __call__(self, query: NDArray[np.int64]) -> NDArray[np.int64]:
        if self._dense:
            return self._table[query]
        pos = np.minimum(np.searchsorted(self._sorted, query), self._sorted.size - 1)
        return np.where(self._sorted[pos] == query, self._order[pos], -1)


def hydrogenic_e1_lines(
    n: ArrayLike,
    l: ArrayLike,
    two_j: ArrayLike | None,
    energy_cm1: ArrayLike,
    z: int,
    mass_ratio: float,
    fine_structure: bool = True,
    dipole_recoil: bool = True,
) -> dict[str, NDArray[Any]]:
    """Every E1 line among the given states of a one-electron ion, with S, f and A.

    Parameters
    ----------
    n, l : array_like of int, shape (N,)
        Quantum numbers of the states.
    two_j : array_like of int, shape (N,), or None
        Twice ``j`` of each state when ``fine_structure`` (``2l +- 1``); ignored
        otherwise (may be None or -1).
    energy_cm1 : array_like of float, shape (N,)
        Energies of the states in cm-1 (any common zero), from the caller's
        computed levels; they decide which state of a pair is the upper one and
        give the wavenumbers.
    z : int
        Nuclear charge.
    mass_ratio : float
        ``m_r/m_e`` of the isotope (line strengths of the reduced-mass atom).
    fine_structure : bool, optional
        True: states are levels ``n l j`` with ``g = 2j+1``; False: nl terms
        with ``g = 2(2l+1)``.
    dipole_recoil : bool, optional
        Apply the centre-of-mass effective dipole charge (module docstring).

    Returns
    -------
    dict of str to ndarray
        One entry per line (every E1 pair whose energies differ; equal energies
        give no line): ``"upper"``, ``"lower"`` (int64 indices into the input
        arrays), ``"wavenumber_cm1"`` (cm-1), ``"S"`` (:math:`e^2a_0^2`),
        ``"f_abs"``, ``"a_per_s"`` (s-1), ``"g_upper"``, ``"g_lower"``.
        Same-shell pairs (``n_u == n_l``, e.g. 2p3/2 -> 2s1/2) are included when
        their energies differ. Lines are ordered by shell pair, not by energy.

    Raises
    ------
    QuantumNumberError
        Malformed quantum numbers or a state listed twice.
    PhysicsInputError
        Arrays of different lengths, non-finite energies, bad ``z`` or ``mass_ratio``.

    Notes
    -----
    Radial integrals of all shell pairs come from one vectorised recurrence
    (:mod:`levels.physics.one_electron.radial`); S, f and A as in the module docstring, with
    the wavenumber :math:`|E_a - E_b|` of the supplied levels.

    References
    ----------
    P. J. Storey and D. G. Hummer, Comput. Phys. Commun. 66, 129 (1991);
    R. D. Cowan (1981), chapter 14.

    Examples
    --------
    >>> R = 109677.583  # cm-1, R_inf * m_r/m_e: Bohr levels of hydrogen with reduced mass
    >>> n = [1, 2, 2]; l = [0, 0, 1]
    >>> E = [R * (1 - 1 / k**2) for k in n]
    >>> out = hydrogenic_e1_lines(n, l, None, E, z=1, mass_ratio=0.999455679, fine_structure=False)
    >>> out["upper"].tolist(), out["lower"].tolist()
    ([2], [0])
    >>> f"{out['a_per_s'][0]:.4e}", round(float(out["f_abs"][0]), 4)
    ('6.2649e+08', 0.4164)
    """
    n_ = np.atleast_1d(radial._as_int_array(n, "n")).ravel()
    l_ = np.atleast_1d(radial._as_int_array(l, "l")).ravel()
    energy = np.atleast_1d(_float_array(energy_cm1, "energy_cm1")).ravel()
    if not (n_.size == l_.size == energy.size):
        raise PhysicsInputError(
            f"n, l and energy_cm1 must have the same length ({n_.size}, {l_.size}, {energy.size})"
        )
    radial._check_nl_arrays(n_, l_)
    divisor = radial._check_scale(z, mass_ratio)
    if fine_structure:
        if two_j is None:
            raise QuantumNumberError("two_j is required when fine_structure=True")
        tj = np.atleast_1d(radial._as_int_array(two_j, "two_j")).ravel()
        if tj.size != n_.size:
            raise PhysicsInputError(f"two_j must have the same length as n ({tj.size} vs {n_.size})")
        _check_two_j(l_, tj)
        slot = (tj > 2 * l_).astype(np.int64)  # 1: j = l + 1/2, 0: j = l - 1/2
    else:
        tj = None
        slot = np.zeros_like(n_)

    empty_i = np.zeros(0, dtype=np.int64)
    empty_f = np.zeros(0, dtype=np.float64)
    result_empty = {
        "upper": empty_i, "lower": empty_i.copy(), "wavenumber_cm1": empty_f,
        "S": empty_f.copy(), "f_abs": empty_f.copy(), "a_per_s": empty_f.copy(),
        "g_upper": empty_f.copy(), "g_lower": empty_f.copy(),
    }
    if n_.size == 0:
        return result_empty

    n_max = int(n_.max())
    K = n_max + 1
    state_keys = (n_ * K + l_) * 2 + slot
    lookup = _StateIndex(state_keys, 2 * K * K)
    if lookup.duplicated:
        raise QuantumNumberError("a state (n, l" + (", j" if fine_structure else "") + ") is listed twice")

    # rows: every E1 nl pair between the shells present, plus same-shell pairs;
    # ku/kl are the state keys (slot 0) of the two nl terms, L = l_>
    shells = np.unique(n_)
    i_lo, i_hi = np.triu_indices(shells.size, k=1)
    n_hi, n_lo = shells[i_hi], shells[i_lo]
    P, Q, _, _ = radial._pairs_kernel(n_hi, n_lo)
    l_p = radial._ramp(n_lo) + 1  # upper l (= l_>) of the P rows
    l_q = radial._ramp(n_lo - 1) + 1  # lower l (= l_>) of the Q rows
    same = shells[shells >= 2]
    l_s = radial._ramp(same - 1) + 1
    n_s = np.repeat(same, same - 1)
    base_hi = np.concatenate([np.repeat(n_hi * K, n_lo), np.repeat(n_hi * K, n_lo - 1), n_s * K])
    base_lo = np.concatenate([np.repeat(n_lo * K, n_lo), np.repeat(n_lo * K, n_lo - 1), n_s * K])
    L = np.concatenate([l_p, l_q, l_s])
    big_is_u = np.concatenate([np.ones(l_p.size, bool), np.zeros(l_q.size, bool), np.ones(l_s.size, bool)])
    ku = (base_hi + np.where(big_is_u, L, L - 1)) * 2
    kl = (base_lo + np.where(big_is_u, L - 1, L)) * 2
    del base_hi, base_lo, l_p, l_q
    R = np.concatenate([P, Q, radial._same_n(n_s.astype(np.float64), l_s.astype(np.float64))])
    del P, Q
    # S per unit of l_> R^2 (reduced-mass radial integral, recoil dipole charge)
    weight = L * (R * R) * (_recoil_factor(z, mass_ratio, dipole_recoil) / (divisor * divisor))
    del R

    if not fine_structure:
        a_idx = lookup(ku)
        b_idx = lookup(kl)
        S = 2.0 * weight
    else:
        Lf = L.astype(np.float64)
        parts_a, parts_b, parts_S = [], [], []
        # (slot of the l_> level, slot of the l_< level, factor); slot 1: j = l + 1/2
        combos = (
            (1, 1, 2.0 * (Lf + 1.0) / (2.0 * Lf + 1.0)),  # (L+1/2, L-1/2)
            (0, 1, 2.0 / ((2.0 * Lf - 1.0) * (2.0 * Lf + 1.0))),  # (L-1/2, L-1/2)
            (0, 0, 2.0 * (Lf - 1.0) / (2.0 * Lf - 1.0)),  # (L-1/2, L-3/2)
        )
        for slot_big, slot_small, factor in combos:
            a_i = lookup(ku + np.where(big_is_u, slot_big, slot_small))
            b_i = lookup(kl + np.where(big_is_u, slot_small, slot_big))
            ok = factor > 0
            parts_a.append(a_i[ok])
            parts_b.append(b_i[ok])
            parts_S.append(factor[ok] * weight[ok])
        a_idx = np.concatenate(parts_a)
        b_idx = np.concatenate(parts_b)
        S = np.concatenate(parts_S)
    del ku, kl, weight, L, big_is_u

    ok = (a_idx >= 0) & (b_idx >= 0)
    if not ok.all():
        a_idx, b_idx, S = a_idx[ok], b_idx[ok], S[ok]
    signed = energy[a_idx] - energy[b_idx]
    ok = signed != 0.0
    if not ok.all():
        a_idx, b_idx, S, signed = a_idx[ok], b_idx[ok], S[ok], signed[ok]
    a_is_upper = signed > 0
    upper = np.where(a_is_upper, a_idx, b_idx)
    lower = np.where(a_is_upper, b_idx, a_idx)
    sigma = np.abs(signed)
    if fine_structure:
        assert tj is not None
        g = (tj + 1).astype(np.float64)
    else:
        g = (2.0 * (2 * l_ + 1)).astype(np.float64)
    g_u, g_l = g[upper], g[lower]
    return {
        "upper": upper,
        "lower": lower,
        "wavenumber_cm1": sigma,
        "S": S,
        "f_abs": F_COEFFICIENT * sigma * S / g_l,
        "a_per_s": A_COEFFICIENT * sigma**3 * S / g_u,
        "g_upper": g_u,
        "g_lower": g_l,
    }
