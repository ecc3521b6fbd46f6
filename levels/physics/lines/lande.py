"""Landé g-factors of levels in LS (Russell-Saunders) coupling.

    g_J = g_L [J(J+1) - S(S+1) + L(L+1)] / [2J(J+1)] + g_S [J(J+1) + S(S+1) - L(L+1)] / [2J(J+1)]

with g_L = 1 and g_S = |g_e| = 2.00231930436... (CODATA electron g-factor via
:mod:`scipy.constants`). J = 0 levels have no magnetic moment; g is returned as 0
there (the Zeeman shift m_J g_J is zero anyway).

References
----------
R. D. Cowan, *The Theory of Atomic Structure and Spectra* (University of
California Press, 1981), Sec. 17-2.
H. A. Bethe and E. E. Salpeter, *Quantum Mechanics of One- and Two-Electron
Atoms* (Springer, 1957), Sec. 47.
"""

from __future__ import annotations

import numpy as np
import scipy.constants as sc
from numpy.typing import ArrayLike

from levels.errors import QuantumNumberError

#: |g_e|, the free-electron spin g-factor (CODATA through scipy.constants)
G_S = abs(sc.physical_constants["electron g factor"][0])


def lande_g_ls(two_s: ArrayLike, big_l: ArrayLike, two_j: ArrayLike, g_s: float = G_S) -> np.ndarray:
    """Landé g_J of LS-coupled levels, vectorised.

    Parameters
    ----------
    two_s : array_like of int
        2S (multiplicity - 1).
    big_l : array_like of int
        Total orbital angular momentum L.
    two_j : array_like of int
        2J; must satisfy |L - S| <= J <= L + S with integer L + S - J.
    g_s : float
        Electron spin g-factor (default |g_e| from CODATA; 2 for the textbook value).

    Returns
    -------
    numpy.ndarray
        g_J (dimensionless); 0 where J = 0.

    Raises
    ------
    QuantumNumberError
        J not allowed by S and L.

    Examples
    --------
    >>> float(lande_g_ls(1, 1, 3, g_s=2.0))   # 2P3/2
    1.3333333333333333
    >>> float(lande_g_ls(1, 0, 1, g_s=2.0))   # 2S1/2
    2.0
    """
    s2, l_, j2 = np.broadcast_arrays(np.asarray(two_s), np.asarray(big_l), np.asarray(two_j))
    if np.any(s2 < 0) or np.any(l_ < 0) or np.any(j2 < 0):
        raise QuantumNumberError("2S, L and 2J must be non-negative")
    if np.any(j2 < np.abs(2 * l_ - s2)) or np.any(j2 > 2 * l_ + s2) or np.any((j2 - 2 * l_ - s2) % 2):
        raise QuantumNumberError("J must be one of |L-S|, ..., L+S")
    j = j2 / 2.0
    s = s2 / 2.0
    jj = j * (j + 1)
    ss = s * (s + 1)
    ll = l_ * (l_ + 1.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        g = ((jj - ss + ll) + g_s * (jj + ss - ll)) / (2 * jj)
    return np.where(j2 == 0, 0.0, g)
