"""The McWhirter criterion: the smallest electron density for local thermodynamic equilibrium.

Collisions with electrons must outweigh radiative decay across the largest
energy gap of the species for its levels to follow Boltzmann's law at the
electron temperature; McWhirter's estimate is

.. math:: n_e \\ge 1.6 \\times 10^{18}\\,\\mathrm{m^{-3}}\\;
   \\left(\\frac{T_e}{\\mathrm K}\\right)^{1/2}\\left(\\frac{\\Delta E}{\\mathrm{eV}}\\right)^3

(1.6e12 cm-3 in the original units), a necessary, not sufficient, condition
(Cristoforetti et al. 2010 discuss what else transient and inhomogeneous
plasmas need).

This small module stands in for the LTE-validity function planned in
:mod:`levels.physics.discharge`, which was not there when the diagnostics were written.

References
----------
.. [1] R. W. P. McWhirter, "Spectral intensities", in *Plasma Diagnostic
   Techniques*, ed. R. H. Huddlestone and S. L. Leonard, Academic Press (1965), ch. 5.
.. [2] G. Cristoforetti et al., Spectrochim. Acta B 65, 86 (2010).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

from levels.errors import PhysicsInputError
from levels.units import CM1_EV

__all__ = ["mcwhirter_min_ne_m3", "largest_gap_cm1"]


def mcwhirter_min_ne_m3(te_k: float, delta_e_cm1: float) -> float:
    """Smallest electron density for LTE by McWhirter's criterion.

    Parameters
    ----------
    te_k : float
        Electron temperature, K.
    delta_e_cm1 : float
        Largest energy gap between adjacent levels that must be in equilibrium, cm-1.

    Returns
    -------
    float
        m-3.

    Raises
    ------
    PhysicsInputError
        Non-positive temperature or gap.

    Examples
    --------
    >>> f"{mcwhirter_min_ne_m3(10000.0, 82259.0):.3e}"   # H I 1s-2p, 10.2 eV
    '1.697e+23'
    """
    if not (math.isfinite(te_k) and te_k > 0):
        raise PhysicsInputError("te_k must be finite and > 0")
    if not (math.isfinite(delta_e_cm1) and delta_e_cm1 > 0):
        raise PhysicsInputError("delta_e_cm1 must be finite and > 0")
    return 1.6e18 * math.sqrt(te_k) * (delta_e_cm1 * CM1_EV) ** 3


def largest_gap_cm1(energy_cm1: ArrayLike) -> float:
    """Largest gap between adjacent distinct level energies, cm-1.

    Examples
    --------
    >>> largest_gap_cm1([0.0, 82259.0, 97492.0, 102824.0])
    82259.0
    """
    e = np.unique(np.asarray(energy_cm1, dtype=float))
    if e.size < 2:
        raise PhysicsInputError("need at least two distinct level energies")
    return float(np.max(np.diff(e)))
