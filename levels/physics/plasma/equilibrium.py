"""Level populations of a plasma in local thermodynamic equilibrium.

Boltzmann excitation at an excitation (electron) temperature, Saha-Eggert
ionization balance between adjacent charge states, partition functions with a
physical cutoff of the bound-level sum (Debye-Hückel lowering of the
ionization energy, or the Inglis-Teller merging limit), optically thin line
emissivity, line-centre optical depth and the escape probability of a uniform
slab.

Temperatures are in K (convert eV with :data:`levels.units.EV_K`), number
densities in m-3, level energies and ionization energies in cm-1 above the
ground level of the charge state they belong to.

Every cutoff applied is returned to the caller (:class:`Cutoff`, and the
``included_mask`` of :func:`partition_function`), never applied silently.

References
----------
.. [1] H. R. Griem, *Principles of Plasma Spectroscopy*, Cambridge University
   Press (1997) (Saha-Boltzmann equilibrium, Debye-Hückel lowering of
   the ionization energy, partition-function cutoff).
.. [2] D. Mihalas, *Stellar Atmospheres*, 2nd ed., W. H. Freeman (1978)
   (Boltzmann and Saha equations, partition functions).
.. [3] D. R. Inglis and E. Teller, "Ionic depression of series limits in
   one-electron spectra", Astrophys. J. 90, 439-448 (1939).
.. [4] F. E. Irons, "The escape factor in plasma spectroscopy - I. The escape
   factor defined and evaluated", J. Quant. Spectrosc. Radiat. Transfer 22,
   1-20 (1979).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.special import expn

from levels import units
from levels.errors import PhysicsInputError

__all__ = [
    "NE_MIN_M3",
    "NE_MAX_M3",
    "Cutoff",
    "boltzmann_populations",
    "partition_function",
    "debye_length_m",
    "debye_lowering_cm1",
    "inglis_teller_n_max",
    "plasma_cutoff",
    "saha_ratio",
    "ionization_balance",
    "line_emissivity",
    "line_center_optical_depth",
    "escape_factor",
]

#: smallest electron density accepted, m-3 (tenuous space and glow-discharge plasmas lie above it)
NE_MIN_M3 = 1e6
#: largest electron density accepted, m-3 (solid density is ~1e29-1e30 m-3; above 1e32 m-3 nothing
#: of this module - ideal, non-degenerate electron gas - applies at any lamp or arc temperature)
NE_MAX_M3 = 1e32

#: second radiation constant h c / k in cm K
_C2_CM_K = units.CM1_J / units.K_B
#: Rydberg constant R_inf in cm-1
_RYDBERG_CM1 = units.R_INF / 100.0
#: e^2 / (4 pi eps0), J m
_COULOMB_J_M = units.E_CHARGE**2 / (4.0 * math.pi * units.EPS0)


# ---------------------------------------------------------------------------------------------
# validation helpers
# ---------------------------------------------------------------------------------------------


def _check_te(te_k: float) -> float:
    te = float(te_k)
    if not math.isfinite(te) or te <= 0.0:
        raise PhysicsInputError(f"temperature must be finite and > 0 K, got {te_k!r}")
    return te


def _check_ne(ne_m3: float) -> float:
    ne = float(ne_m3)
    if not math.isfinite(ne) or not (NE_MIN_M3 <= ne <= NE_MAX_M3):
        raise PhysicsInputError(
            f"electron density must lie in {NE_MIN_M3:g}..{NE_MAX_M3:g} m-3, got {ne_m3!r} "
            "(a value in cm-3 must be multiplied by 1e6)"
        )
    return ne


def _check_levels(energy_cm1: ArrayLike, g: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    energy = np.atleast_1d(np.asarray(energy_cm1, dtype=float))
    weight = np.atleast_1d(np.asarray(g, dtype=float))
    if energy.ndim != 1 or weight.shape != energy.shape:
        raise PhysicsInputError(
            f"energy_cm1 and g must be 1-D arrays of one length, got shapes {energy.shape} and {weight.shape}"
        )
    if energy.size == 0:
        raise PhysicsInputError("no levels given (energy_cm1 is empty)")
    if not np.all(np.isfinite(energy)):
        raise PhysicsInputError("level energies must be finite")
    if not np.all(np.isfinite(weight)) or np.any(weight < 0):
        raise PhysicsInputError("statistical weights g must be finite and >= 0")
    return energy, weight


def _check_charge(charge_after: int) -> int:
    if isinstance(charge_after, bool) or int(charge_after) != charge_after or charge_after < 1:
        raise PhysicsInputError(
            f"charge_after (charge of the ion formed) must be an integer >= 1, got {charge_after!r}")
    return int(charge_after)


# ---------------------------------------------------------------------------------------------
# Boltzmann excitation and partition functions
# ---------------------------------------------------------------------------------------------


def boltzmann_populations(
    energy_cm1: ArrayLike,
    g: ArrayLike,
    te_k: float,
    *,
    cutoff_mask: ArrayLike | None = None,
) -> NDArray[np.float64]:
    """Fractional Boltzmann populations of the levels of one charge state.

    Parameters
    ----------
    energy_cm1 : array_like
        Level energies above the ground level, cm-1.
    g : array_like
        Statistical weights ``2J + 1`` (dimensionless, >= 0), same length.
    te_k : float
        Excitation temperature, K.
    cutoff_mask : array_like of bool, optional
        Levels to include (for example the ``included_mask`` of :func:`partition_function`);
        excluded levels get population 0. Default: all levels.

    Returns
    -------
    numpy.ndarray
        Fraction of the charge state's particles in each level (dimensionless); sums to 1
        over the included levels. All zeros when no level is included (every level
        dissolved by the cutoff).

    Raises
    ------
    PhysicsInputError
        ``te_k <= 0``, negative ``g``, mismatched lengths, or an empty level list.

    Notes
    -----
    .. math:: \\frac{n_i}{n} = \\frac{g_i\\,e^{-E_i/kT}}{\\sum_{j\\,\\mathrm{incl.}} g_j\\,e^{-E_j/kT}},
       \\qquad E/k = c_2\\,E[\\mathrm{cm^{-1}}],\\ c_2 = hc/k

    evaluated with a log-sum-exp so that no exponential overflows (Mihalas 1978).

    References
    ----------
    D. Mihalas, *Stellar Atmospheres*, 2nd ed., Freeman (1978).

    Examples
    --------
    >>> f = boltzmann_populations([0.0, 82258.9], [2, 8], 85373.0)   # H n=1, n=2
    >>> [round(float(x), 3) for x in f]
    [0.5, 0.5]
    """
    energy, weight = _check_levels(energy_cm1, g)
    te = _check_te(te_k)
    include = weight > 0
    if cutoff_mask is not None:
        mask = np.asarray(cutoff_mask, dtype=bool)
        if mask.shape != energy.shape:
            raise PhysicsInputError(f"cutoff_mask must have shape {energy.shape}, got {mask.shape}")
        include &= mask
    out = np.zeros_like(energy)
    if not np.any(include):
        return out
    with np.errstate(divide="ignore"):
        log_w = np.log(weight[include]) - _C2_CM_K * energy[include] / te
    log_w -= log_w.max()
    w = np.exp(log_w)
    out[include] = w / w.sum()
    return out


def partition_function(
    energy_cm1: ArrayLike,
    g: ArrayLike,
    te_k: float,
    *,
    ionization_cm1: float | None = None,
    lowering_cm1: float = 0.0,
) -> tuple[float, NDArray[np.bool_]]:
    """Internal partition function of one charge state, with the bound-level cutoff it used.

    Parameters
    ----------
    energy_cm1 : array_like
        Level energies above this charge state's ground level, cm-1.
    g : array_like
        Statistical weights (dimensionless, >= 0).
    te_k : float
        Excitation temperature, K.
    ionization_cm1 : float, optional
        Ionization energy of this charge state, cm-1. Without it every level is summed.
    lowering_cm1 : float, optional
        Lowering of the ionization energy by the plasma, cm-1 (see :func:`plasma_cutoff`);
        levels at or above ``ionization_cm1 - lowering_cm1`` are no longer bound and are
        excluded. Needs ``ionization_cm1``.

    Returns
    -------
    U : float
        Partition function (dimensionless), relative to the ground level (E = 0).
        0.0 when the cutoff removes every level.
    included_mask : numpy.ndarray of bool
        True for each level included in the sum - the cutoff, reported.

    Raises
    ------
    PhysicsInputError
        ``te_k <= 0``, negative ``g``, negative lowering, or a lowering without an ionization energy.

    Notes
    -----
    .. math:: U(T) = \\sum_{E_i < \\chi - \\Delta\\chi} g_i\\,e^{-c_2 E_i / T}

    The sum over bound levels diverges without a cutoff (g grows as n^2 while E tends to
    the limit); the plasma sets it (Griem 1997).

    References
    ----------
    H. R. Griem, *Principles of Plasma Spectroscopy*, Cambridge (1997);
    D. Mihalas, *Stellar Atmospheres*, 2nd ed. (1978).

    Examples
    --------
    >>> U, used = partition_function([0.0, 100.0, 2.0e5], [1, 3, 5], 5000.0, ionization_cm1=1.5e5)
    >>> round(U, 4), used.tolist()
    (3.9149, [True, True, False])
    """
    energy, weight = _check_levels(energy_cm1, g)
    te = _check_te(te_k)
    lowering = float(lowering_cm1)
    if not math.isfinite(lowering) or lowering < 0:
        raise PhysicsInputError(f"lowering_cm1 must be finite and >= 0, got {lowering_cm1!r}")
    if ionization_cm1 is None:
        if lowering != 0.0:
            raise PhysicsInputError("lowering_cm1 needs ionization_cm1 (the limit it lowers)")
        mask = np.ones(energy.shape, dtype=bool)
    else:
        limit = float(ionization_cm1)
        if not math.isfinite(limit) or limit <= 0:
            raise PhysicsInputError(f"ionization_cm1 must be finite and > 0, got {ionization_cm1!r}")
        mask = energy < limit - lowering
    if not np.any(mask):
        return 0.0, mask
    u = float(np.sum(weight[mask] * np.exp(-_C2_CM_K * energy[mask] / te)))
    return u, mask


# ---------------------------------------------------------------------------------------------
# plasma cutoffs
# ---------------------------------------------------------------------------------------------


def debye_length_m(te_k: float, ne_m3: float) -> float:
    """Electron Debye length.

    Parameters
    ----------
    te_k : float
        Electron temperature, K.
    ne_m3 : float
        Electron density, m-3 (accepted range :data:`NE_MIN_M3` .. :data:`NE_MAX_M3`).

    Returns
    -------
    float
        Debye length, m.

    Raises
    ------
    PhysicsInputError
        ``te_k <= 0`` or ``ne_m3`` outside the accepted range.

    Notes
    -----
    .. math:: \\lambda_D = \\sqrt{\\frac{\\varepsilon_0 k T_e}{n_e e^2}}

    Electrons only (a choice of this module). Including the screening by the ions as well,
    with T_i = T_e and singly charged ions, shortens it by 1/sqrt(2) (Griem 1997) and so
    raises the lowering of :func:`debye_lowering_cm1` by sqrt(2).

    References
    ----------
    H. R. Griem, *Principles of Plasma Spectroscopy*, Cambridge (1997).

    Examples
    --------
    >>> round(debye_length_m(11604.518, 1e22) * 1e9, 2)   # 1 eV, 1e16 cm-3
    74.34
    """
    te = _check_te(te_k)
    ne = _check_ne(ne_m3)
    return math.sqrt(units.EPS0 * units.K_B * te / (ne * units.E_CHARGE**2))


def debye_lowering_cm1(te_k: float, ne_m3: float, charge_after: int) -> float:
    """Debye-Hückel lowering of the ionization energy.

    Parameters
    ----------
    te_k : float
        Electron temperature, K.
    ne_m3 : float
        Electron density, m-3.
    charge_after : int
        Charge ``z + 1`` of the ion formed by the ionization (1 for a neutral atom).

    Returns
    -------
    float
        Lowering Delta E of the ionization energy, cm-1.

    Raises
    ------
    PhysicsInputError
        ``te_k <= 0``, ``ne_m3`` out of range, or ``charge_after < 1``.

    Notes
    -----
    .. math:: \\Delta E = \\frac{(z+1)\\,e^2}{4\\pi\\varepsilon_0\\,\\lambda_D}

    with the electron Debye length of :func:`debye_length_m` (Griem 1997).
    It requires many particles in a Debye sphere, N_D = 4 pi ne lambda_D^3 / 3 >> 1.

    References
    ----------
    H. R. Griem, *Principles of Plasma Spectroscopy*, Cambridge (1997).

    Examples
    --------
    >>> round(debye_lowering_cm1(11604.518, 1e22, 1), 1)
    156.2
    """
    z1 = _check_charge(charge_after)
    lam = debye_length_m(te_k, ne_m3)
    return z1 * _COULOMB_J_M / lam / units.CM1_J


def inglis_teller_n_max(ne_m3: float, z_eff: float = 1) -> float:
    """Principal quantum number of the last resolved level (Inglis-Teller merging limit).

    Parameters
    ----------
    ne_m3 : float
        Electron density (= density of singly charged perturbing ions), m-3.
    z_eff : float, optional
        Charge seen by the Rydberg electron (the charge ``z + 1`` of the ion core;
        1 for a neutral atom).

    Returns
    -------
    float
        n_max (dimensionless, not rounded): levels above merge into a quasi-continuum.

    Raises
    ------
    PhysicsInputError
        ``ne_m3`` out of range or ``z_eff <= 0``.

    Notes
    -----
    Inglis & Teller (1939) for hydrogen perturbed by singly charged ions:

    .. math:: \\log_{10} N[\\mathrm{cm^{-3}}] = 23.26 - 7.5\\,\\log_{10} n_{max}
       \\quad (N\\,n_{max}^{7.5} = 0.027\\,a_0^{-3})

    For a core of charge Z the scaling is derived here from the same merging argument (it
    is not a fit published by Inglis & Teller): the linear Stark splitting of level n
    scales as n^2 a0 F / Z, the spacing of adjacent levels as Z^2 / n^3, and the normal
    field F as N^(2/3), so N is proportional to Z^4.5 n^-7.5:

    .. math:: \\log_{10} n_e[\\mathrm{cm^{-3}}] = 23.26 + 4.5\\,\\log_{10} Z - 7.5\\,\\log_{10} n_{max}

    References
    ----------
    D. R. Inglis and E. Teller, Astrophys. J. 90, 439 (1939);
    H. R. Griem, *Principles of Plasma Spectroscopy*, Cambridge (1997).

    Examples
    --------
    >>> round(inglis_teller_n_max(1e21), 2)   # 1e15 cm-3
    12.63
    """
    ne = _check_ne(ne_m3)
    z = float(z_eff)
    if not math.isfinite(z) or z <= 0:
        raise PhysicsInputError(f"z_eff must be finite and > 0, got {z_eff!r}")
    log_n = (23.26 + 4.5 * math.log10(z) - math.log10(ne * 1e-6)) / 7.5
    return 10.0**log_n


@dataclass(frozen=True)
class Cutoff:
    """The bound-level cutoff applied to one charge state, reported with the result.

    Attributes
    ----------
    method : str
        ``"debye"``, ``"inglis-teller"`` or ``"none"``.
    lowering_cm1 : float
        Lowering of the ionization energy, cm-1 (0 for ``"none"``).
    n_max : float or None
        Effective principal quantum number of the highest bound level (hydrogenic
        estimate), None for ``"none"``.
    description : str
        One sentence saying what was applied and at which conditions.
    """

    method: str
    lowering_cm1: float
    n_max: float | None
    description: str


def plasma_cutoff(te_k: float, ne_m3: float, charge_after: int, method: str = "debye") -> Cutoff:
    """The partition-function cutoff of a charge state at given plasma conditions.

    Parameters
    ----------
    te_k : float
        Electron temperature, K.
    ne_m3 : float
        Electron density, m-3.
    charge_after : int
        Charge ``z + 1`` of the ion formed when this charge state ionizes.
    method : {"debye", "inglis-teller", "none"}
        ``"debye"``: Debye-Hückel lowering (:func:`debye_lowering_cm1`), with the hydrogenic
        n_max = (z+1) sqrt(R / Delta E). ``"inglis-teller"``: n_max from
        :func:`inglis_teller_n_max`, with the hydrogenic lowering R (z+1)^2 / n_max^2.
        ``"none"``: no cutoff (only for levels lists that end well below the limit).

    Returns
    -------
    Cutoff
        Method, lowering in cm-1, n_max and a description (which also gives the number of
        electrons in a Debye sphere, the validity condition of the Debye-Hückel picture).

    Raises
    ------
    PhysicsInputError
        Bad conditions or an unknown method.

    Notes
    -----
    The hydrogenic relation between n and the distance below the limit,
    chi - E_n = R_inf (z+1)^2 / n^2, converts one form of the cutoff into the other.

    References
    ----------
    H. R. Griem, *Principles of Plasma Spectroscopy*, Cambridge (1997);
    D. R. Inglis and E. Teller, Astrophys. J. 90, 439 (1939).

    Examples
    --------
    >>> c = plasma_cutoff(11604.518, 1e22, 1)
    >>> c.method, round(c.lowering_cm1, 1), round(c.n_max, 1)
    ('debye', 156.2, 26.5)
    """
    te = _check_te(te_k)
    ne = _check_ne(ne_m3)
    z1 = _check_charge(charge_after)
    lam = debye_length_m(te, ne)
    n_debye = 4.0 * math.pi / 3.0 * ne * lam**3
    conditions = f"Te = {te:.6g} K, ne = {ne:.3g} m-3, ion formed of charge {z1}"
    if method == "debye":
        lowering = debye_lowering_cm1(te, ne, z1)
        n_max = z1 * math.sqrt(_RYDBERG_CM1 / lowering)
        text = (
            f"Debye-Hückel lowering of the ionization energy by {lowering:.4g} cm-1 "
            f"(Debye length {lam:.3g} m, {n_debye:.3g} electrons per Debye sphere; "
            f"hydrogenic n_max {n_max:.3g}) at {conditions}"
        )
        return Cutoff("debye", lowering, n_max, text)
    if method == "inglis-teller":
        n_max = inglis_teller_n_max(ne, z1)
        lowering = _RYDBERG_CM1 * z1**2 / n_max**2
        text = (
            f"Inglis-Teller merging limit n_max {n_max:.3g} (levels within {lowering:.4g} cm-1 of the "
            f"ionization limit dropped) at {conditions}"
        )
        return Cutoff("inglis-teller", lowering, n_max, text)
    if method == "none":
        return Cutoff("none", 0.0, None, f"no cutoff of the bound-level sum at {conditions}")
    raise PhysicsInputError(f"unknown cutoff method {method!r}; expected 'debye', 'inglis-teller' or 'none'")


# ---------------------------------------------------------------------------------------------
# Saha ionization balance
# ---------------------------------------------------------------------------------------------


def _saha_log_factor(te: float) -> float:
    """log of 2 (2 pi m_e k T / h^2)^{3/2}, m-3."""
    return math.log(2.0) + 1.5 * math.log(2.0 * math.pi * units.M_E * units.K_B * te / units.H**2)


def saha_ratio(
    te_k: float,
    ne_m3: float,
    u_lower: float,
    u_upper: float,
    ionization_cm1: float,
    lowering_cm1: float = 0.0,
) -> float:
    """Density ratio n_{z+1} / n_z of two adjacent charge states (Saha-Eggert equation).

    Parameters
    ----------
    te_k : float
        Electron temperature, K.
    ne_m3 : float
        Electron density, m-3.
    u_lower, u_upper : float
        Partition functions of charge states z and z+1 (dimensionless, >= 0).
    ionization_cm1 : float
        Ionization energy of charge state z, cm-1 (> 0).
    lowering_cm1 : float, optional
        Lowering of that ionization energy, cm-1 (>= 0).

    Returns
    -------
    float
        n_{z+1} / n_z (dimensionless). ``inf`` when ``u_lower`` is 0 and ``u_upper`` is not
        (every level of the lower state dissolved); ``nan`` when both are 0.

    Raises
    ------
    PhysicsInputError
        Bad temperature, density, partition functions or energies.

    Notes
    -----
    .. math:: \\frac{n_{z+1}\\,n_e}{n_z} = 2\\,\\frac{U_{z+1}}{U_z}
       \\left(\\frac{2\\pi m_e k T_e}{h^2}\\right)^{3/2}
       \\exp\\!\\left(-\\frac{\\chi_z - \\Delta\\chi_z}{k T_e}\\right)

    (Griem 1997; Mihalas 1978). The factor 2 is the spin degeneracy of
    the free electron. Assumes a non-degenerate electron gas.

    References
    ----------
    H. R. Griem, *Principles of Plasma Spectroscopy*, Cambridge (1997);
    D. Mihalas, *Stellar Atmospheres*, 2nd ed., Freeman (1978).

    Examples
    --------
    >>> round(saha_ratio(1e4, 1e20, 2.0, 1.0, 109678.77), 3)   # hydrogen, 10 000 K
    3.385
    """
    te = _check_te(te_k)
    ne = _check_ne(ne_m3)
    u_lo, u_up = float(u_lower), float(u_upper)
    if not (math.isfinite(u_lo) and math.isfinite(u_up)) or u_lo < 0 or u_up < 0:
        raise PhysicsInputError("partition functions must be finite and >= 0")
    chi = float(ionization_cm1)
    dchi = float(lowering_cm1)
    if not math.isfinite(chi) or chi <= 0:
        raise PhysicsInputError(f"ionization_cm1 must be finite and > 0, got {ionization_cm1!r}")
    if not math.isfinite(dchi) or dchi < 0:
        raise PhysicsInputError(f"lowering_cm1 must be finite and >= 0, got {lowering_cm1!r}")
    if u_lo == 0.0:
        return math.nan if u_up == 0.0 else math.inf
    if u_up == 0.0:
        return 0.0
    log_r = _saha_log_factor(te) + math.log(u_up / u_lo) - _C2_CM_K * (chi - dchi) / te - math.log(ne)
    return math.exp(log_r) if log_r < 700.0 else math.inf


def ionization_balance(
    te_k: float,
    ne_m3: float,
    u_list: ArrayLike,
    ionization_list_cm1: ArrayLike,
    lowering_list: ArrayLike | float = 0.0,
) -> NDArray[np.float64]:
    """Fractions of an element's particles in each charge state at given Te and ne.

    Parameters
    ----------
    te_k : float
        Electron temperature, K.
    ne_m3 : float
        Electron density, m-3 (held fixed: the caller's charge balance sets it).
    u_list : array_like
        Partition functions of charge states 0, 1, ..., N (N + 1 values, >= 0).
    ionization_list_cm1 : array_like
        Ionization energies of charge states 0 .. N-1, cm-1 (N values, > 0).
    lowering_list : array_like or float, optional
        Lowering of each of those ionization energies, cm-1 (N values or one for all).

    Returns
    -------
    numpy.ndarray
        N + 1 fractions (dimensionless) summing to 1. A charge state whose partition function
        is 0 (all levels dissolved) gets fraction 0.

    Raises
    ------
    PhysicsInputError
        Bad conditions, lengths that do not match, negative values.

    Notes
    -----
    Chaining the Saha equation (:func:`saha_ratio`) telescopes to

    .. math:: n_z \\propto U_z \\left(\\frac{2 (2\\pi m_e k T)^{3/2}}{n_e h^3}\\right)^{z}
       \\exp\\!\\left(-\\sum_{j<z} \\frac{\\chi_j - \\Delta\\chi_j}{k T}\\right)

    which is evaluated in logarithms so that no ratio overflows.

    References
    ----------
    H. R. Griem, *Principles of Plasma Spectroscopy*, Cambridge (1997).

    Examples
    --------
    >>> f = ionization_balance(1e4, 1e20, [2.0, 1.0], [109678.77])
    >>> [round(float(x), 4) for x in f]
    [0.2281, 0.7719]
    """
    te = _check_te(te_k)
    ne = _check_ne(ne_m3)
    u = np.atleast_1d(np.asarray(u_list, dtype=float))
    chi = np.atleast_1d(np.asarray(ionization_list_cm1, dtype=float))
    if u.ndim != 1 or chi.ndim != 1 or u.size != chi.size + 1:
        raise PhysicsInputError(
            f"u_list needs one more entry than ionization_list_cm1 (got {u.size} and {chi.size})"
        )
    dchi = np.broadcast_to(np.asarray(lowering_list, dtype=float), chi.shape) if chi.size else np.zeros(0)
    if not np.all(np.isfinite(u)) or np.any(u < 0):
        raise PhysicsInputError("partition functions must be finite and >= 0")
    if not np.all(np.isfinite(chi)) or np.any(chi <= 0):
        raise PhysicsInputError("ionization energies must be finite and > 0")
    if not np.all(np.isfinite(dchi)) or np.any(dchi < 0):
        raise PhysicsInputError("lowerings must be finite and >= 0")
    if not np.any(u > 0):
        raise PhysicsInputError("every partition function is 0: no charge state has a bound level")
    z = np.arange(u.size, dtype=float)
    log_step = _saha_log_factor(te) - math.log(ne)
    cum = np.concatenate(([0.0], np.cumsum(_C2_CM_K * (chi - dchi) / te)))
    with np.errstate(divide="ignore"):
        log_w = np.log(u) + z * log_step - cum
    log_w -= log_w[np.isfinite(log_w)].max()
    w = np.exp(log_w)
    return w / w.sum()


# ---------------------------------------------------------------------------------------------
# emission and optical depth
# ---------------------------------------------------------------------------------------------


def line_emissivity(upper_population_m3: ArrayLike, a_per_s: ArrayLike,
                    wavenumber_cm1: ArrayLike) -> NDArray[np.float64]:
    """Optically thin emission coefficient of spectral lines, integrated over the line.

    Parameters
    ----------
    upper_population_m3 : array_like
        Density of atoms in the upper level, m-3.
    a_per_s : array_like
        Einstein A coefficient, s-1.
    wavenumber_cm1 : array_like
        Vacuum wavenumber of the line, cm-1.

    Returns
    -------
    numpy.ndarray
        Emissivity, W m-3 sr-1 (broadcast shape of the inputs).

    Raises
    ------
    PhysicsInputError
        Negative or non-finite input.

    Notes
    -----
    .. math:: \\varepsilon = \\frac{n_u A_{ul}\\,h\\nu}{4\\pi}, \\qquad \\nu = c\\,\\sigma

    (isotropic emission; Griem 1997).

    References
    ----------
    H. R. Griem, *Principles of Plasma Spectroscopy*, Cambridge (1997).

    Examples
    --------
    >>> round(float(line_emissivity(1e16, 4.41e7, 15233.0)), 1)   # W m-3 sr-1
    10619.2
    """
    n_u = np.asarray(upper_population_m3, dtype=float)
    a = np.asarray(a_per_s, dtype=float)
    sigma = np.asarray(wavenumber_cm1, dtype=float)
    for name, arr in (("upper_population_m3", n_u), ("a_per_s", a), ("wavenumber_cm1", sigma)):
        if not np.all(np.isfinite(arr)) or np.any(arr < 0):
            raise PhysicsInputError(f"{name} must be finite and >= 0")
    return np.asarray(n_u * a * units.CM1_J * sigma / (4.0 * math.pi))


def line_center_optical_depth(
    lower_population_m3: ArrayLike,
    f_abs: ArrayLike,
    wavelength_m: ArrayLike,
    doppler_fwhm_m: ArrayLike,
    path_length_m: float,
    *,
    g_lower: ArrayLike | None = None,
    g_upper: ArrayLike | None = None,
    upper_population_m3: ArrayLike | None = None,
) -> NDArray[np.float64]:
    """Optical depth at the centre of a Doppler-broadened line along a uniform path.

    Parameters
    ----------
    lower_population_m3 : array_like
        Density in the lower level, m-3.
    f_abs : array_like
        Absorption oscillator strength (dimensionless).
    wavelength_m : array_like
        Line wavelength, m.
    doppler_fwhm_m : array_like
        Doppler FWHM of the line, m (same medium as ``wavelength_m``).
    path_length_m : float
        Length of the uniform absorbing path, m.
    g_lower, g_upper, upper_population_m3 : array_like, optional
        Give all three to correct for stimulated emission, factor
        ``1 - (g_lower n_upper) / (g_upper n_lower)``.

    Returns
    -------
    numpy.ndarray
        Line-centre optical depth tau0 (dimensionless).

    Raises
    ------
    PhysicsInputError
        Negative input, zero width, or only some of the stimulated-emission arguments.

    Notes
    -----
    .. math:: \\tau_0 = \\frac{e^2}{4\\varepsilon_0 m_e c} f\\, n_l\\, L\\,
       \\phi_\\nu(\\nu_0), \\qquad
       \\phi_\\nu(\\nu_0) = \\frac{2}{\\Delta\\nu_D}\\sqrt{\\frac{\\ln 2}{\\pi}}, \\quad
       \\Delta\\nu_D = \\frac{c\\,\\Delta\\lambda_D}{\\lambda^2}

    (e^2/(4 eps0 m_e c) = pi e^2/(m_e c) in Gaussian units; Griem 1997).

    References
    ----------
    H. R. Griem, *Principles of Plasma Spectroscopy*, Cambridge (1997).

    Examples
    --------
    >>> round(float(line_center_optical_depth(1e18, 0.641, 656.28e-9, 4.6e-12, 0.01)), 2)
    4.99
    """
    n_l = np.asarray(lower_population_m3, dtype=float)
    f = np.asarray(f_abs, dtype=float)
    lam = np.asarray(wavelength_m, dtype=float)
    dlam = np.asarray(doppler_fwhm_m, dtype=float)
    length = float(path_length_m)
    for name, arr in (("lower_population_m3", n_l), ("f_abs", f)):
        if not np.all(np.isfinite(arr)) or np.any(arr < 0):
            raise PhysicsInputError(f"{name} must be finite and >= 0")
    for name, arr in (("wavelength_m", lam), ("doppler_fwhm_m", dlam)):
        if not np.all(np.isfinite(arr)) or np.any(arr <= 0):
            raise PhysicsInputError(f"{name} must be finite and > 0")
    if not math.isfinite(length) or length < 0:
        raise PhysicsInputError(f"path_length_m must be finite and >= 0, got {path_length_m!r}")
    sigma_int = units.E_CHARGE**2 / (4.0 * units.EPS0 * units.M_E * units.C)  # m2 Hz
    phi0 = 2.0 * math.sqrt(math.log(2.0) / math.pi) * lam**2 / (units.C * dlam)  # s
    tau = sigma_int * f * n_l * length * phi0
    extra = (g_lower, g_upper, upper_population_m3)
    if any(x is not None for x in extra):
        if any(x is None for x in extra):
            raise PhysicsInputError("stimulated emission needs g_lower, g_upper and upper_population_m3 together")
        gl = np.asarray(g_lower, dtype=float)
        gu = np.asarray(g_upper, dtype=float)
        n_u = np.asarray(upper_population_m3, dtype=float)
        if np.any(gl <= 0) or np.any(gu <= 0) or np.any(n_u < 0):
            raise PhysicsInputError("g_lower, g_upper must be > 0 and upper_population_m3 >= 0")
        with np.errstate(divide="ignore", invalid="ignore"):
            stim = np.where(n_l > 0, 1.0 - gl * n_u / (gu * n_l), 0.0)
        tau = tau * stim
    return np.asarray(tau)


#: Gauss-Legendre nodes for the frequency integral of the Doppler escape factor
_GL_X, _GL_W = np.polynomial.legendre.leggauss(200)


def _escape_monochromatic(tau: NDArray[np.float64]) -> NDArray[np.float64]:
    """Mean escape probability of a uniform slab at one frequency, (1/2 - E3(T)) / T."""
    tau = np.asarray(tau, dtype=float)
    out = np.ones_like(tau)
    small = tau < 1e-6
    big = ~small
    out[small] = 1.0 - 0.5 * tau[small] * (1.5 - np.euler_gamma - np.log(np.maximum(tau[small], 1e-300)))
    t = tau[big]
    out[big] = (0.5 - expn(3, t)) / t
    return out


def escape_factor(tau0: ArrayLike, kind: str = "slab") -> NDArray[np.float64]:
    """Mean escape probability of line photons emitted uniformly in a homogeneous slab.

    Parameters
    ----------
    tau0 : array_like
        Optical depth through the whole slab thickness along its normal, at line centre
        (:func:`line_center_optical_depth` with the slab thickness as path), >= 0.
    kind : {"slab", "slab-monochromatic"}
        ``"slab"``: a Doppler (Gaussian) line with complete frequency redistribution;
        ``"slab-monochromatic"``: a single frequency of optical depth ``tau0``.

    Returns
    -------
    numpy.ndarray
        Escape probability (dimensionless, 1 for an optically thin slab). The emergent line
        power is the optically thin power times this factor.

    Raises
    ------
    PhysicsInputError
        Negative or non-finite ``tau0`` or an unknown ``kind``.

    Notes
    -----
    Emission uniform in depth and isotropic; a photon emitted at optical depth t escapes
    through the nearer face with probability E2(t)/2, so averaging over depth gives, at
    one frequency of slab optical depth T,

    .. math:: P(T) = \\frac{1}{T}\\int_0^T E_2(t)\\,dt = \\frac{1/2 - E_3(T)}{T}

    and for the line, with tau(x) = tau0 exp(-x^2) in Doppler units x,

    .. math:: P_{line}(\\tau_0) = \\frac{1}{\\sqrt\\pi}\\int e^{-x^2} P(\\tau_0 e^{-x^2})\\,dx

    (the first-flight escape factor of Irons 1979), evaluated with 200-point
    Gauss-Legendre quadrature over |x| <= X, X^2 = ln(tau0) + 40 (beyond it the slab is
    thin and the Gaussian weight negligible).

    References
    ----------
    F. E. Irons, J. Quant. Spectrosc. Radiat. Transfer 22, 1-20 (1979);
    T. Holstein, Phys. Rev. 72, 1212 (1947).

    Examples
    --------
    >>> [round(float(p), 4) for p in escape_factor([0.0, 1.0, 10.0])]
    [1.0, 0.4984, 0.1017]
    """
    tau = np.atleast_1d(np.asarray(tau0, dtype=float))
    if not np.all(np.isfinite(tau)) or np.any(tau < 0):
        raise PhysicsInputError("tau0 must be finite and >= 0")
    if kind == "slab-monochromatic":
        out = _escape_monochromatic(tau)
    elif kind == "slab":
        x_max = np.sqrt(np.log(np.maximum(tau, 1.0)) + 40.0)  # (m,)
        x = 0.5 * (_GL_X[None, :] + 1.0) * x_max[:, None]  # nodes on [0, X]
        w = 0.5 * _GL_W[None, :] * x_max[:, None]
        gauss = np.exp(-(x**2))
        p = _escape_monochromatic((tau[:, None] * gauss).ravel()).reshape(x.shape)
        out = 2.0 / math.sqrt(math.pi) * np.sum(w * gauss * p, axis=1)
    else:
        raise PhysicsInputError(f"unknown escape-factor kind {kind!r}; expected 'slab' or 'slab-monochromatic'")
    return out.reshape(np.shape(tau0))
