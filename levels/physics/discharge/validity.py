"""Where local thermodynamic equilibrium can be expected: McWhirter's criterion.

Collisions keep the levels of a species in Boltzmann balance when the
collisional de-excitation rate across its largest energy gap is at least ten
times the radiative decay rate; with van Regemorter's excitation rate this
gives the minimum electron density

.. math:: n_e \\ge 1.6\\times10^{12}\\,T_e^{1/2}\\,(\\Delta E)^3\\ \\mathrm{cm^{-3}}
   = 1.6\\times10^{18}\\,T_e^{1/2}\\,(\\Delta E)^3\\ \\mathrm{m^{-3}},

T_e in K, Delta E in eV. It is a necessary condition, not a sufficient one
(transient and inhomogeneous plasmas need more).

References
----------
.. [1] R. W. P. McWhirter, "Spectral intensities", in *Plasma Diagnostic
   Techniques*, ed. R. H. Huddlestone and S. L. Leonard, Academic Press (1965),
   chapter 5, pp. 201-264.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from levels import units
from levels.errors import PhysicsInputError
from levels.physics.discharge.common import check_density, check_temperature

__all__ = ["MCWHIRTER_COEFF_M3", "LteValidity", "mcwhirter_min_density_m3", "largest_gap_cm1", "lte_validity"]

#: the coefficient of McWhirter's criterion, m-3 K^-1/2 eV^-3
MCWHIRTER_COEFF_M3 = 1.6e18


def mcwhirter_min_density_m3(te_k: float, gap_cm1: float) -> float:
    """Smallest electron density at which LTE can hold (McWhirter 1965).

    Parameters
    ----------
    te_k : float
        Electron temperature, K.
    gap_cm1 : float
        Largest energy gap between adjacent levels of the species, cm-1 (>= 0).

    Returns
    -------
    float
        n_e, m-3.

    References
    ----------
    R. W. P. McWhirter (1965), in *Plasma Diagnostic Techniques*, Academic Press, ch. 5.

    Examples
    --------
    >>> round(mcwhirter_min_density_m3(10000.0, 82259.0) / 1e23, 3)   # H 1s - 2, 10^4 K
    1.697
    """
    te = check_temperature(te_k)
    gap = float(gap_cm1)
    if not np.isfinite(gap) or gap < 0:
        raise PhysicsInputError(f"gap_cm1 must be finite and >= 0, got {gap_cm1!r}")
    gap_ev = gap * units.CM1_J / units.E_CHARGE
    return float(MCWHIRTER_COEFF_M3 * te**0.5 * gap_ev**3)


def largest_gap_cm1(energy_cm1: ArrayLike) -> float:
    """Largest energy difference between adjacent levels (sorted by energy), cm-1.

    Examples
    --------
    >>> largest_gap_cm1([0.0, 82259.0, 97492.0, 102824.0])
    82259.0
    """
    e = np.unique(np.asarray(energy_cm1, dtype=float))
    if e.size == 0 or not np.all(np.isfinite(e)):
        raise PhysicsInputError("the species needs finite level energies")
    return float(np.max(np.diff(e))) if e.size > 1 else 0.0


@dataclass(frozen=True)
class LteValidity:
    """McWhirter's criterion evaluated for one species at given conditions."""

    gap_cm1: float
    lte_min_ne_m3: float
    ne_m3: float
    lte_holds: bool

    def sentence(self, spectrum: str, model: str) -> str:
        """One line for people: the criterion and whether it holds."""
        gap_ev = self.gap_cm1 * units.CM1_J / units.E_CHARGE
        verdict = "holds" if self.lte_holds else "does NOT hold"
        return (f"LTE criterion (McWhirter 1965) for the largest gap of {spectrum}, {gap_ev:.3g} eV: "
                f"ne >= {self.lte_min_ne_m3:.3g} m-3; at ne = {self.ne_m3:.3g} m-3 it {verdict}"
                + ("" if self.lte_holds or model != "lte" else
                   "; the LTE model used here is not valid at these conditions: the excited-level populations "
                   "and line intensities can be far off; use the collisional-radiative model (--model cr)"))


def lte_validity(energy_cm1: ArrayLike, te_k: float, ne_m3: float) -> LteValidity:
    """McWhirter's criterion for the largest gap of a species at (Te, ne).

    Examples
    --------
    >>> v = lte_validity([0.0, 82259.0, 97492.0], 10000.0, 1e20)
    >>> v.lte_holds, round(v.lte_min_ne_m3 / 1e23, 2)
    (False, 1.7)
    """
    te = check_temperature(te_k)
    ne = check_density(ne_m3)
    gap = largest_gap_cm1(energy_cm1)
    need = mcwhirter_min_density_m3(te, gap)
    return LteValidity(gap_cm1=gap, lte_min_ne_m3=need, ne_m3=ne, lte_holds=bool(ne >= need))
