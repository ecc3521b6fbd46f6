"""Radiative recombination into each level: Kramers photoionization cross section and the Milne relation.

Kramers' semiclassical photoionization cross section of a level of principal
quantum number n in the field of a charge z (hydrogenic, Gaunt factor 1),

.. math:: \\sigma_{bf}(\\nu) = \\frac{64\\pi\\alpha a_0^2}{3\\sqrt3}\\,\\frac{n}{z^2}
   \\left(\\frac{\\nu_n}{\\nu}\\right)^3, \\qquad h\\nu_n = P,

with the effective quantum number n* = z (R_inf hc / P)^{1/2} for a level bound
by P, turned into the recombination cross section by the Milne relation
:math:`\\sigma_{fb} = (g_i/g_+)\\,(h\\nu)^2/(m_e c v)^2\\,\\sigma_{bf}` and averaged
over a Maxwellian, gives in closed form (x = P/kT)

.. math:: \\alpha_i = \\frac{g_i}{g_+}\\sqrt{\\frac{2}{\\pi}}\\,
   \\frac{\\sigma_0\\,n^*\\,P^3}{z^2\\,m_e^{3/2} c^2 (kT)^{3/2}}\\,e^{x}E_1(x).

References
----------
.. [1] H. A. Kramers, "On the theory of X-ray absorption and of the continuous
   X-ray spectrum", Phil. Mag. 46, 836-871 (1923).
.. [2] E. A. Milne, "Statistical equilibrium in relation to the photo-electric
   effect", Phil. Mag. 47, 209-241 (1924).
.. [3] G. B. Rybicki and A. P. Lightman, *Radiative Processes in Astrophysics*,
   Wiley (1979), section 10.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.special import exp1

from levels import units
from levels.physics.discharge.common import BOHR_M, C2_CM_K, RYDBERG_CM1, as_positive, check_temperature

__all__ = ["KRAMERS_SIGMA0_M2", "radiative_recombination"]

#: 64 pi alpha a0^2 / (3 sqrt 3), m2 (7.91e-18 cm2: Kramers' threshold cross section of H 1s)
KRAMERS_SIGMA0_M2 = 64.0 * math.pi * units.ALPHA * BOHR_M**2 / (3.0 * math.sqrt(3.0))


def radiative_recombination(binding_cm1: ArrayLike, g_level: ArrayLike, g_ion: float, core_charge: int,
                            te_k: float) -> NDArray[np.float64]:
    """Radiative recombination rate coefficient into each level (Kramers, Milne).

    Parameters
    ----------
    binding_cm1 : array_like
        Binding energy P of each level, cm-1 (> 0).
    g_level : array_like
        Statistical weight of each level.
    g_ion : float
        Statistical weight of the recombining ion's ground level.
    core_charge : int
        Charge z of the recombining ion (1 for a neutral atom formed).
    te_k : float
        Electron temperature, K.

    Returns
    -------
    numpy.ndarray
        alpha_i, m3 s-1.

    Raises
    ------
    PhysicsInputError
        Non-positive energies, weights or charge.

    Notes
    -----
    See the module docstring. For one-electron ions the levels of shell n share
    alpha_n in proportion to g_i / (2 n^2).

    References
    ----------
    H. A. Kramers, Phil. Mag. 46, 836 (1923); E. A. Milne, Phil. Mag. 47, 209 (1924).

    Examples
    --------
    >>> a = radiative_recombination(109678.8, 2, 1, 1, 1e4)   # H 1s, Kramers
    >>> round(float(a) * 1e6 * 1e13, 2)   # 1e-13 cm3 s-1
    1.95
    """
    te = check_temperature(te_k)
    p = as_positive("binding_cm1", binding_cm1)
    gi = as_positive("g_level", g_level)
    gp = float(as_positive("g_ion", g_ion))
    z = float(as_positive("core_charge", core_charge))
    n_star = z * np.sqrt(RYDBERG_CM1 / p)
    p_j = p * units.CM1_J
    kt = units.K_B * te
    x = C2_CM_K * p / te
    big = x > 500.0
    scaled = np.empty_like(x)
    scaled[~big] = np.exp(x[~big]) * exp1(x[~big])
    xb = x[big]
    scaled[big] = (1.0 - 1.0 / xb + 2.0 / xb**2 - 6.0 / xb**3) / xb
    pref = math.sqrt(2.0 / math.pi) / (units.M_E**1.5 * units.C**2 * kt**1.5)
    return np.asarray(gi / gp * pref * KRAMERS_SIGMA0_M2 * n_star / z**2 * p_j**3 * scaled)
