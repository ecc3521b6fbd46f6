"""Electron-impact excitation of atomic hydrogen between principal shells (Vriens & Smeets 1980).

The rate coefficient of excitation p -> q (q > p) in a Maxwellian plasma of
temperature kT (in eV), in cm3 s-1:

.. math:: K_{pq} = 1.6\\times10^{-7}\\,\\frac{(kT)^{1/2}}{kT + \\Gamma_{pq}}\\,e^{-E_{pq}/kT}
   \\left[A_{pq}\\ln\\left(\\frac{0.3\\,kT}{R} + \\Delta_{pq}\\right) + B_{pq}\\right]

with :math:`A_{pq} = 2 R f_{pq} / E_{pq}`,
:math:`B_{pq} = \\frac{4R^2}{q^3}\\left(\\frac{1}{E_{pq}^2} + \\frac{4E_p}{3E_{pq}^3}
+ b_p\\frac{E_p^2}{E_{pq}^4}\\right)`,
:math:`b_p = \\frac{1.4\\ln p}{p} - \\frac{0.7}{p} - \\frac{0.51}{p^2} + \\frac{1.16}{p^3}
- \\frac{0.55}{p^4}`, :math:`\\Delta_{pq} = e^{-B_{pq}/A_{pq}} + 0.06\\,s^2/(q p^2)`,
:math:`\\Gamma_{pq} = R\\ln(1 + p^3 kT/R)\\,[3 + 11(s/p)^2] /
[6 + 1.6 q s + 0.3/s^2 + 0.8 q^{3/2} s^{-1/2} |s - 0.6|]`, s = q - p,
E_p = R/p^2 the binding energy of shell p, R = 13.6057 eV, and f_pq the
absorption oscillator strength of the shell pair (formulas recalled from memory;
the tests compare them with van Regemorter's formula for 1-2).

References
----------
.. [1] L. Vriens and A. H. M. Smeets, "Cross-section and rate formulas for
   electron-impact ionization, excitation, deexcitation, and total depopulation
   of excited atoms", Phys. Rev. A 22, 940-951 (1980).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from levels import units
from levels.errors import PhysicsInputError
from levels.physics.discharge.common import RYDBERG_J, as_nonnegative, check_temperature

__all__ = ["vriens_smeets_excitation"]

_R_EV = RYDBERG_J / units.E_CHARGE


def vriens_smeets_excitation(p: ArrayLike, q: ArrayLike, f_pq: ArrayLike, te_k: float) -> NDArray[np.float64]:
    """Excitation rate coefficient of hydrogen from shell p to shell q (Vriens & Smeets 1980).

    Parameters
    ----------
    p, q : array_like of int
        Principal quantum numbers, 1 <= p < q.
    f_pq : array_like
        Absorption oscillator strength of the shell pair p -> q (summed over the
        upper sublevels, averaged over the lower ones).
    te_k : float
        Electron temperature, K.

    Returns
    -------
    numpy.ndarray
        K_pq, m3 s-1.

    Raises
    ------
    PhysicsInputError
        p < 1 or q <= p, negative f.

    References
    ----------
    L. Vriens and A. H. M. Smeets, Phys. Rev. A 22, 940 (1980).

    Examples
    --------
    >>> k = vriens_smeets_excitation(1, 2, 0.4162, 10 * 11604.518)   # 1 -> 2 at 10 eV
    >>> round(float(k) * 1e6 * 1e9, 2)   # 1e-9 cm3 s-1
    6.91
    """
    te = check_temperature(te_k)
    pp = np.asarray(p, dtype=float)
    qq = np.asarray(q, dtype=float)
    f = as_nonnegative("f_pq", f_pq)
    if np.any(pp < 1) or np.any(qq <= pp) or np.any(pp != np.round(pp)) or np.any(qq != np.round(qq)):
        raise PhysicsInputError("shells must be whole numbers with 1 <= p < q")
    kt = units.K_B * te / units.E_CHARGE
    r = _R_EV
    ep = r / pp**2
    epq = ep - r / qq**2
    s = qq - pp
    with np.errstate(divide="ignore", invalid="ignore", over="ignore", under="ignore"):
        a = 2.0 * r / epq * f
        bp = 1.4 * np.log(pp) / pp - 0.7 / pp - 0.51 / pp**2 + 1.16 / pp**3 - 0.55 / pp**4
        b = 4.0 * r**2 / qq**3 * (1.0 / epq**2 + 4.0 / 3.0 * ep / epq**3 + bp * ep**2 / epq**4)
        delta = np.where(a > 0, np.exp(-b / np.where(a > 0, a, 1.0)), 0.0) + 0.06 * s**2 / (qq * pp**2)
        gamma = (r * np.log(1.0 + pp**3 * kt / r) * (3.0 + 11.0 * (s / pp) ** 2)
                 / (6.0 + 1.6 * qq * s + 0.3 / s**2 + 0.8 * qq**1.5 / np.sqrt(s) * np.abs(s - 0.6)))
        k_cm3 = (1.6e-7 * np.sqrt(kt) / (kt + gamma) * np.exp(-epq / kt)
                 * (a * np.log(0.3 * kt / r + delta) + b))
    return np.asarray(np.maximum(k_cm3, 0.0) * 1e-6)
