"""Electron-impact ionization (Lotz) and three-body recombination by detailed balance.

Lotz's empirical cross section for removing one of the ``q`` equivalent electrons
bound by P,

.. math:: \\sigma(E) = a\\,q\\,\\frac{\\ln(E/P)}{E P}\\left\\{1 - b\\,e^{-c\\,(E/P - 1)}\\right\\},
   \\qquad E \\ge P,

averaged over a Maxwellian at Te gives (x = P/kT)

.. math:: S = \\sqrt{\\frac{8}{\\pi m_e}}\\,\\frac{a q}{(kT)^{3/2}}
   \\left[\\frac{E_1(x)}{x} - \\frac{b\\,e^{c}}{x + c}\\,E_1(x + c)\\right]

(6.7e-7 a q T^-3/2 [...] cm3 s-1 with a in 1e-14 cm2 eV2, T in eV). Three-body
recombination into level i is the inverse process; detailed balance with the
Saha equation of that level,

.. math:: \\alpha^{(3)}_i = S_i\\,\\frac{g_i}{2 g_+}\\left(\\frac{h^2}{2\\pi m_e k T_e}\\right)^{3/2}
   e^{P_i/kT_e} \\quad [\\mathrm{m^6\\,s^{-1}}],

keeps the ionization balance of a collision-dominated plasma at its Saha value.

References
----------
.. [1] W. Lotz, "Electron-impact ionization cross-sections and ionization rate
   coefficients for atoms and ions from hydrogen to calcium", Z. Phys. 216,
   241-247 (1968).
.. [2] W. Lotz, "Electron-impact ionization cross-sections for atoms up to
   Z = 108", Z. Phys. 232, 101-107 (1970).
.. [3] T. Fujimoto, *Plasma Spectroscopy*, Oxford University Press (2004) (detailed balance).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.special import exp1

from levels import units
from levels.physics.discharge.common import C2_CM_K, as_nonnegative, as_positive, check_temperature

__all__ = ["LOTZ_SIMPLE", "LOTZ_HYDROGEN", "lotz_rate", "three_body_recombination", "saha_level_factor_m3"]

#: Lotz's parameters (a in m2 eV2, b, c) of the simple form used for every species without its own
#: fit: a = 4.5e-14 cm2 eV2, b = c = 0 (Lotz 1968)
LOTZ_SIMPLE = (4.5e-18, 0.0, 0.0)
#: Lotz's parameters for atomic hydrogen: a = 4.0e-14 cm2 eV2, b = 0.60, c = 0.56 (Lotz 1967/1968; from memory)
LOTZ_HYDROGEN = (4.0e-18, 0.60, 0.56)

_EV_J = units.E_CHARGE


def _scaled_e1(x: NDArray[np.float64]) -> NDArray[np.float64]:
    """e^x E1(x) for x > 0 without overflow (asymptotic series beyond x = 500)."""
    out = np.empty_like(x)
    small = x <= 500.0
    out[small] = np.exp(x[small]) * exp1(x[small])
    xb = x[~small]
    out[~small] = (1.0 - 1.0 / xb + 2.0 / xb**2 - 6.0 / xb**3 + 24.0 / xb**4) / xb
    return out


def _lotz_scaled(binding_cm1, te_k, a_m2_ev2, b, c, q):
    """(S e^{x}, x): the Lotz rate coefficient times e^{P/kT}, m3 s-1, and x = P/kT."""
    te = check_temperature(te_k)
    p = as_positive("binding_cm1", binding_cm1)
    a = as_nonnegative("a_m2_ev2", a_m2_ev2)
    bb = as_nonnegative("b", b)
    cc = as_nonnegative("c", c)
    qq = as_nonnegative("q", q)
    x = np.asarray(C2_CM_K * p / te, dtype=float)
    x, a, bb, cc, qq = np.broadcast_arrays(x, a, bb, cc, qq)
    kt_ev = units.K_B * te / _EV_J
    pref = math.sqrt(8.0 * _EV_J / (math.pi * units.M_E)) * a * qq / kt_ev**1.5   # m3 s-1
    bracket = _scaled_e1(x.astype(float)) / x - bb * _scaled_e1((x + cc).astype(float)) / (x + cc)
    return np.maximum(pref * bracket, 0.0), x


def lotz_rate(binding_cm1: ArrayLike, te_k: float, *, params: tuple = LOTZ_SIMPLE,
              q: ArrayLike = 1.0) -> NDArray[np.float64]:
    """Maxwellian ionization rate coefficient from Lotz's cross section.

    Parameters
    ----------
    binding_cm1 : array_like
        Binding energy P of the level (ionization limit minus level energy), cm-1 (> 0).
    te_k : float
        Electron temperature, K.
    params : (a, b, c)
        Lotz's parameters, a in m2 eV2 (1e-14 cm2 eV2 = 1e-18 m2 eV2); default
        :data:`LOTZ_SIMPLE`; :data:`LOTZ_HYDROGEN` for H I.
    q : array_like
        Number of equivalent electrons in the shell ionized (1 for an excited level).

    Returns
    -------
    numpy.ndarray
        S, m3 s-1.

    Raises
    ------
    PhysicsInputError
        Non-positive binding energy or bad temperature.

    Notes
    -----
    See the module docstring for the formula.

    References
    ----------
    W. Lotz, Z. Phys. 216, 241 (1968).

    Examples
    --------
    >>> s = lotz_rate(109678.8, 13.6057 * 11604.518, params=LOTZ_HYDROGEN)   # H 1s at kT = 13.6 eV
    >>> round(float(s) * 1e6 * 1e9, 2)   # 1e-9 cm3 s-1
    8.43
    """
    a, b, c = params
    scaled, x = _lotz_scaled(binding_cm1, te_k, a, b, c, q)
    with np.errstate(under="ignore"):
        return np.asarray(scaled * np.exp(-np.minimum(x, 745.0)) * (x < 745.0))


def saha_level_factor_m3(g_level: ArrayLike, g_ion: float, te_k: float) -> NDArray[np.float64]:
    """(g_i / 2 g_+) (h^2 / 2 pi m_e k Te)^{3/2}, m3: the Saha ratio n_i / (n_+ n_e) without e^{P/kT}.

    Examples
    --------
    >>> round(float(saha_level_factor_m3(2, 1, 1e4)) * 1e27, 3)   # H 1s at 10^4 K, 1e-27 m3
    0.414
    """
    te = check_temperature(te_k)
    gi = as_positive("g_level", g_level)
    gp = float(as_positive("g_ion", g_ion))
    lam3 = (units.H**2 / (2.0 * math.pi * units.M_E * units.K_B * te)) ** 1.5
    return np.asarray(gi / (2.0 * gp) * lam3)


def three_body_recombination(binding_cm1: ArrayLike, g_level: ArrayLike, g_ion: float, te_k: float, *,
                             params: tuple = LOTZ_SIMPLE, q: ArrayLike = 1.0) -> NDArray[np.float64]:
    """Three-body recombination rate coefficient into each level, from Lotz ionization by detailed balance.

    Parameters
    ----------
    binding_cm1 : array_like
        Binding energy of each level, cm-1.
    g_level : array_like
        Statistical weights of the levels.
    g_ion : float
        Statistical weight of the recombining ion's ground level.
    te_k : float
        Electron temperature, K.
    params, q
        As :func:`lotz_rate`.

    Returns
    -------
    numpy.ndarray
        alpha3, m6 s-1 (the rate per ion is ne^2 alpha3).

    Notes
    -----
    See the module docstring; the e^{-P/kT} of S and the e^{P/kT} of the Saha factor
    cancel analytically, so nothing overflows at low temperature.

    References
    ----------
    T. Fujimoto, *Plasma Spectroscopy*, Oxford (2004).

    Examples
    --------
    >>> a3 = three_body_recombination(109678.8, 2, 1, 11604.5, params=LOTZ_HYDROGEN)
    >>> bool(a3 > 0)
    True
    """
    a, b, c = params
    scaled, _x = _lotz_scaled(binding_cm1, te_k, a, b, c, q)
    return np.asarray(scaled * saha_level_factor_m3(g_level, g_ion, te_k))
