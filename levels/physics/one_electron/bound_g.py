"""g-factor of an electron bound in a one-electron ion: Dirac value plus the free-electron anomaly.

For a state ``(n, l, j)`` of an electron bound to a point nucleus of charge Z,
the Dirac equation gives the magnetic g-factor in closed form (Breit 1928 for
the ground state; the general state from the same first-order Zeeman energy of
the Dirac eigenfunctions):

.. math::

    g_D = \\frac{\\kappa}{j(j+1)} \\left( \\kappa\\,\\frac{E_{n\\kappa}}{m_e c^2} - \\frac12 \\right),

with the Dirac quantum number :math:`\\kappa = -(j + 1/2)` for ``j = l + 1/2`` and
:math:`\\kappa = +(j + 1/2)` for ``j = l - 1/2``, and :math:`E_{n\\kappa}` the Dirac energy
including the rest energy (:func:`levels.physics.one_electron.dirac.dirac_point_energy`,
``unit="f"``). For the ground state this is Breit's
:math:`g_D(1s) = \\tfrac23\\,(1 + 2\\sqrt{1 - (Z\\alpha)^2})`; in the limit
:math:`Z\\alpha \\to 0` it becomes the LS Landé factor with :math:`g_s = 2`.

The electron's anomalous moment is added with its free-electron value, weighted
as the spin part of the LS Landé factor:

.. math::

    g = g_D + (g_e - 2)\\,\\frac{j(j+1) + \\tfrac34 - l(l+1)}{2 j (j+1)},

``g_e`` the CODATA free-electron value (:mod:`scipy.constants`).

What is left out, and its size: the binding corrections to the anomaly, led by
:math:`(\\alpha/\\pi)(Z\\alpha)^2/6` for 1s (Grotch 1970, from memory) and the
:math:`(\\alpha/\\pi)(Z\\alpha)^4 \\ln (Z\\alpha)^{-2}` terms (Pachucki et al. 2005,
from memory); nuclear recoil, of order :math:`(Z\\alpha)^2 m_e/M`; finite nuclear
size, of order :math:`(Z\\alpha)^4 (R/\\lambda_C)^2`. For C5+ these come to about 1e-6,
for Si13+ about 1e-5 of g; for uranium the one-loop binding terms reach a few 1e-4.
The LS value (:mod:`levels.physics.lines.lande`) misses the Dirac binding term, which is
:math:`-\\tfrac43 (1-\\gamma)`, :math:`\\gamma = \\sqrt{1-(Z\\alpha)^2}`, for 1s: 0.35 (17 %) for U91+.

References
----------
G. Breit, "The magnetic moment of the electron", Nature 122, 649 (1928).
H. Grotch, "Electron g factor in hydrogenic atoms", Phys. Rev. Lett. 24, 39 (1970) (from memory).
K. Pachucki, A. Czarnecki, U. D. Jentschura and V. A. Yerokhin, "Complete two-loop
correction to the bound-electron g factor", Phys. Rev. A 72, 022108 (2005) (from memory).
"""

from __future__ import annotations

import numpy as np
import scipy.constants as sc
from numpy.typing import ArrayLike, NDArray

from levels.physics.one_electron.dirac import _check_states, _check_z, dirac_point_energy

__all__ = ["G_E", "bound_electron_g", "dirac_g_factor", "kappa"]

#: |g_e|, the free-electron g-factor (CODATA through scipy.constants)
G_E = abs(sc.physical_constants["electron g factor"][0])


def kappa(l: ArrayLike, two_j: ArrayLike) -> NDArray[np.int64]:
    """Dirac quantum number: ``-(j + 1/2)`` for ``j = l + 1/2``, ``+(j + 1/2)`` for ``j = l - 1/2``.

    Examples
    --------
    >>> kappa([0, 1, 1, 2], [1, 1, 3, 3]).tolist()
    [-1, 1, -2, 2]
    """
    l_arr = np.asarray(l, dtype=np.int64)
    j_arr = np.asarray(two_j, dtype=np.int64)
    size = (j_arr + 1) // 2
    return np.where(j_arr == 2 * l_arr + 1, -size, size)


def dirac_g_factor(z: int, n: ArrayLike, l: ArrayLike, two_j: ArrayLike) -> NDArray[np.float64]:
    """g-factor of a Dirac electron in the state ``(n, l, j)`` of a point nucleus of charge ``z``.

    Parameters
    ----------
    z : int
        Nuclear charge, 1..118.
    n, l, two_j : array_like of int
        Quantum numbers (``two_j`` = 2j = 2l +- 1); broadcast together.

    Returns
    -------
    ndarray of float
        :math:`g_D`, no anomalous moment (module docstring).

    Raises
    ------
    QuantumNumberError, PhysicsInputError
        As :func:`levels.physics.one_electron.dirac.dirac_point_energy`.

    Examples
    --------
    >>> round(float(dirac_g_factor(1, 1, 0, 1)), 9)   # Breit: (2/3)(1 + 2 sqrt(1 - alpha^2))
    1.999964499
    >>> round(float(dirac_g_factor(92, 1, 0, 1)), 4)   # U91+
    1.6548
    """
    z = _check_z(z)
    n_arr, l_arr, j_arr = _check_states(n, l, two_j)
    f = dirac_point_energy(z, n_arr, l_arr, j_arr, unit="f")
    k = kappa(l_arr, j_arr).astype(np.float64)
    j = j_arr / 2.0
    return k / (j * (j + 1.0)) * (k * f - 0.5)


def bound_electron_g(z: int, n: ArrayLike, l: ArrayLike, two_j: ArrayLike, g_e: float = G_E) -> NDArray[np.float64]:
    """g-factor of a bound electron: Dirac value plus the weighted free-electron anomaly.

    Parameters
    ----------
    z : int
        Nuclear charge, 1..118.
    n, l, two_j : array_like of int
        Quantum numbers; broadcast together.
    g_e : float, optional
        Free-electron g-factor (default CODATA :data:`G_E`).

    Returns
    -------
    ndarray of float
        g of each state (module docstring for the neglected terms).

    Examples
    --------
    >>> round(float(bound_electron_g(6, 1, 0, 1)), 7)   # C5+ ground state
    2.0010407
    """
    n_arr, l_arr, j_arr = _check_states(n, l, two_j)
    jj = j_arr / 2.0 * (j_arr / 2.0 + 1.0)
    spin_weight = (jj + 0.75 - l_arr * (l_arr + 1.0)) / (2.0 * jj)
    return dirac_g_factor(z, n_arr, l_arr, j_arr) + (g_e - 2.0) * spin_weight
