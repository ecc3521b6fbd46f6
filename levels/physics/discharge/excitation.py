"""Electron-impact excitation and de-excitation rate coefficients in a Maxwellian plasma.

Allowed (E1) transitions: the effective-Gaunt-factor formula of van Regemorter
(1962), which takes the collision strength of an optically allowed transition to
be proportional to its absorption oscillator strength,

.. math:: \\Omega_{lu} = \\frac{8\\pi}{\\sqrt3}\\,g_l f_{lu}\\,\\frac{R_\\infty hc}{\\Delta E}\\,
   \\bar g(\\beta), \\qquad \\beta = \\frac{\\Delta E}{kT_e},

with the Maxwellian-averaged Gaunt factor P(beta) of van Regemorter's Table 1
(separate columns for neutral atoms and for positive ions). Forbidden
transitions (no oscillator strength) get a constant collision strength, a stated
default the caller can override. The Maxwellian rate coefficient of a collision
strength Omega that does not depend on energy is (Seaton 1958; Fujimoto 2004)

.. math:: C_{lu} = 2\\sqrt\\pi\\,\\alpha c a_0^2\\,\\sqrt{\\frac{R_\\infty hc}{kT_e}}\\,
   \\frac{\\Omega_{lu}}{g_l}\\,e^{-\\beta},

and de-excitation follows from detailed balance,
:math:`C_{ul} = C_{lu}\\,(g_l/g_u)\\,e^{\\beta}`.

References
----------
.. [1] H. van Regemorter, "Rate of collisional excitation in stellar atmospheres",
   Astrophys. J. 136, 906-915 (1962).
.. [2] M. J. Seaton, "The quantum defect method", Mon. Not. R. Astron. Soc. 118,
   504-518 (1958), and in *Atomic and Molecular Processes*, ed. D. R. Bates,
   Academic Press (1962) (impact-parameter method, rate of a collision strength).
.. [3] T. Fujimoto, *Plasma Spectroscopy*, Oxford University Press (2004).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.special import exp1

from levels.errors import PhysicsInputError
from levels.physics.discharge.common import (
    C2_CM_K,
    RATE_UNIT_M3_S,
    RYDBERG_CM1,
    as_nonnegative,
    as_positive,
    check_temperature,
)

__all__ = ["DEFAULT_FORBIDDEN_OMEGA", "gaunt_factor", "van_regemorter_rate", "collision_strength_rate",
           "deexcitation_rate"]

#: collision strength given to a transition without an oscillator strength (forbidden lines) unless the
#: caller sets one: 0.1 (common practice, no source; measured values of low-lying forbidden transitions of
#: neutral atoms and ions mostly lie between 0.01 and a few)
DEFAULT_FORBIDDEN_OMEGA = 0.1

#: van Regemorter 1962, Table 1: the effective Gaunt factor P(y), y = Delta E / kT (values from memory)
_Y = np.array([0.01, 0.02, 0.04, 0.1, 0.2, 0.4, 1.0, 2.0, 4.0, 10.0])
_P_NEUTRAL = np.array([1.16, 0.956, 0.758, 0.493, 0.331, 0.209, 0.100, 0.063, 0.040, 0.023])
_P_ION = np.array([1.16, 0.977, 0.788, 0.554, 0.403, 0.290, 0.214, 0.201, 0.200, 0.200])
#: sqrt(3) / (2 pi): the Bethe (high-energy) limit P(y) -> sqrt(3)/(2 pi) e^y E1(y)
_BETHE = math.sqrt(3.0) / (2.0 * math.pi)


def gaunt_factor(y: ArrayLike, ion: bool | ArrayLike = False) -> NDArray[np.float64]:
    """Maxwellian-averaged effective Gaunt factor P(y) of van Regemorter (1962).

    Parameters
    ----------
    y : array_like
        Delta E / (k Te) (dimensionless, > 0).
    ion : bool or array_like of bool
        True for a positive ion (the factor levels off at 0.2), False for a neutral atom.

    Returns
    -------
    numpy.ndarray
        P(y) (dimensionless).

    Raises
    ------
    PhysicsInputError
        Non-positive or non-finite ``y``.

    Notes
    -----
    Inside 0.01 <= y <= 10 the table is interpolated in log y - log P. Below
    y = 0.01 the Bethe limit sqrt(3)/(2 pi) e^y E1(y) is used, scaled to meet the
    table at y = 0.01; above y = 10 the neutral column falls as y^-1/2 from its last
    value, the ion column stays at 0.2.

    References
    ----------
    H. van Regemorter, Astrophys. J. 136, 906 (1962), Table 1.

    Examples
    --------
    >>> [round(float(p), 3) for p in gaunt_factor([0.1, 1.0], ion=False)]
    [0.493, 0.1]
    >>> round(float(gaunt_factor(30.0, ion=True)), 3)
    0.2
    """
    yy = as_positive("y", y)
    yy, is_ion = np.broadcast_arrays(yy, np.asarray(ion, dtype=bool))
    ly = np.log(np.clip(yy, _Y[0], _Y[-1]))
    p_n = np.exp(np.interp(ly, np.log(_Y), np.log(_P_NEUTRAL)))
    p_i = np.exp(np.interp(ly, np.log(_Y), np.log(_P_ION)))
    out = np.where(is_ion, p_i, p_n)
    low = yy < _Y[0]
    if np.any(low):
        bethe = _BETHE * np.exp(yy[low]) * exp1(yy[low])
        scale = _P_NEUTRAL[0] / (_BETHE * math.exp(_Y[0]) * float(exp1(_Y[0])))
        out[low] = bethe * scale
    high = (yy > _Y[-1]) & ~is_ion
    out[high] = _P_NEUTRAL[-1] * np.sqrt(_Y[-1] / yy[high])
    return out


def collision_strength_rate(omega: ArrayLike, g_lower: ArrayLike, delta_e_cm1: ArrayLike,
                            te_k: float) -> NDArray[np.float64]:
    """Excitation rate coefficient of a constant (Maxwellian-averaged) collision strength.

    Parameters
    ----------
    omega : array_like
        Effective collision strength (dimensionless, >= 0).
    g_lower : array_like
        Statistical weight of the lower level.
    delta_e_cm1 : array_like
        Excitation energy, cm-1 (> 0).
    te_k : float
        Electron temperature, K.

    Returns
    -------
    numpy.ndarray
        C_lu, m3 s-1.

    Notes
    -----
    .. math:: C_{lu} = 2\\sqrt\\pi\\,\\alpha c a_0^2\\,(R_\\infty hc/kT_e)^{1/2}\\,
       (\\Omega/g_l)\\,e^{-\\Delta E/kT_e}

    (8.63e-6 T^-1/2 Omega/g_l exp(-Delta E/kT) cm3 s-1 with T in K).

    References
    ----------
    M. J. Seaton (1962), in *Atomic and Molecular Processes*, ed. D. R. Bates;
    T. Fujimoto, *Plasma Spectroscopy* (2004).

    Examples
    --------
    >>> c = collision_strength_rate(1.0, 1.0, 1e-9, 1e4)   # Omega = g_l = 1, T = 1e4 K
    >>> round(float(c) * 1e6 * 1e4**0.5 * 1e6, 3)   # 1e-6 cm3 s-1 K^1/2
    8.629
    """
    te = check_temperature(te_k)
    om = as_nonnegative("omega", omega)
    gl = as_positive("g_lower", g_lower)
    de = as_positive("delta_e_cm1", delta_e_cm1)
    beta = C2_CM_K * de / te
    return np.asarray(RATE_UNIT_M3_S * math.sqrt(C2_CM_K * RYDBERG_CM1 / te) * om / gl * np.exp(-beta))


def van_regemorter_rate(f_abs: ArrayLike, delta_e_cm1: ArrayLike, te_k: float,
                        ion: bool | ArrayLike = False) -> NDArray[np.float64]:
    """Excitation rate coefficient of an allowed transition (van Regemorter 1962).

    Parameters
    ----------
    f_abs : array_like
        Absorption oscillator strength f_lu (dimensionless, >= 0).
    delta_e_cm1 : array_like
        Transition energy, cm-1 (> 0).
    te_k : float
        Electron temperature, K.
    ion : bool or array_like of bool
        Whether the target is a positive ion (chooses the Gaunt-factor column).

    Returns
    -------
    numpy.ndarray
        C_lu, m3 s-1.

    Raises
    ------
    PhysicsInputError
        Negative f, non-positive energy, bad temperature.

    Notes
    -----
    .. math:: C_{lu} = 2\\sqrt\\pi\\,\\alpha c a_0^2 \\sqrt{\\frac{R_\\infty hc}{kT_e}}\\,
       \\frac{8\\pi}{\\sqrt3}\\,f_{lu}\\,\\frac{R_\\infty hc}{\\Delta E}\\,P(\\beta)\\,e^{-\\beta}

    that is 3.15e-7 f (Ry/Delta E)^{3/2} beta^{1/2} e^{-beta} P(beta) cm3 s-1.

    References
    ----------
    H. van Regemorter, Astrophys. J. 136, 906 (1962).

    Examples
    --------
    >>> c = van_regemorter_rate(0.4162, 82259.0, 11604.5)   # H 1s-2p, 1 eV
    >>> round(float(c) * 1e6 * 1e13, 2)   # 1e-13 cm3 s-1
    5.47
    """
    te = check_temperature(te_k)
    f = as_nonnegative("f_abs", f_abs)
    de = as_positive("delta_e_cm1", delta_e_cm1)
    beta = C2_CM_K * de / te
    omega_over_g = 8.0 * math.pi / math.sqrt(3.0) * f * (RYDBERG_CM1 / de) * gaunt_factor(beta, ion)
    return np.asarray(RATE_UNIT_M3_S * math.sqrt(C2_CM_K * RYDBERG_CM1 / te) * omega_over_g * np.exp(-beta))


def deexcitation_rate(excitation_m3_s: ArrayLike, g_lower: ArrayLike, g_upper: ArrayLike,
                      delta_e_cm1: ArrayLike, te_k: float) -> NDArray[np.float64]:
    """De-excitation rate coefficient from the excitation one by detailed balance.

    Parameters
    ----------
    excitation_m3_s : array_like
        C_lu, m3 s-1.
    g_lower, g_upper : array_like
        Statistical weights.
    delta_e_cm1 : array_like
        Transition energy, cm-1 (>= 0).
    te_k : float
        Electron temperature, K.

    Returns
    -------
    numpy.ndarray
        C_ul, m3 s-1.

    Notes
    -----
    .. math:: C_{ul} = C_{lu}\\,\\frac{g_l}{g_u}\\,e^{\\Delta E/kT_e}

    so that collisions alone keep Boltzmann populations (Fujimoto 2004). Evaluated as
    the product with the exponential of the excitation rate cancelled where the caller
    gives C_lu = 0 (then C_ul = 0).

    References
    ----------
    T. Fujimoto, *Plasma Spectroscopy*, Oxford (2004).

    Examples
    --------
    >>> round(float(deexcitation_rate(1e-15, 2, 8, 0.0, 1e4)) * 1e15, 3)
    0.25
    """
    te = check_temperature(te_k)
    c = as_nonnegative("excitation_m3_s", excitation_m3_s)
    gl = as_positive("g_lower", g_lower)
    gu = as_positive("g_upper", g_upper)
    de = as_nonnegative("delta_e_cm1", delta_e_cm1)
    with np.errstate(over="ignore", invalid="ignore"):
        out = c * (gl / gu) * np.exp(C2_CM_K * de / te)
    return np.asarray(np.where(c > 0, out, 0.0))


if not np.all(np.diff(_P_NEUTRAL) < 0):  # pragma: no cover - a guard on the table typed above
    raise PhysicsInputError("van Regemorter table must decrease")
