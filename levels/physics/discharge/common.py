"""Shared constants and argument checks of the discharge modules (no physics law of its own).

Rate coefficients in this sub-package are in m3 s-1, temperatures in K,
energies in cm-1 unless a name says otherwise.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

from levels import units
from levels.errors import PhysicsInputError

__all__ = ["RYDBERG_J", "RYDBERG_CM1", "C2_CM_K", "BOHR_M", "RATE_UNIT_M3_S", "check_temperature",
           "check_density", "as_positive", "as_nonnegative"]

#: Rydberg energy R_inf h c, J (infinite nuclear mass)
RYDBERG_J = units.R_INF * units.H * units.C
#: Rydberg constant, cm-1
RYDBERG_CM1 = units.R_INF / 100.0
#: second radiation constant h c / k, cm K
C2_CM_K = units.CM1_J / units.K_B
#: Bohr radius, m
BOHR_M = units.HBAR / (units.M_E * units.C * units.ALPHA)
#: 2 sqrt(pi) alpha c a0^2, m3 s-1: the unit of the Maxwellian rate coefficient of a collision strength
RATE_UNIT_M3_S = 2.0 * math.sqrt(math.pi) * units.ALPHA * units.C * BOHR_M**2

#: accepted electron temperatures, K
TE_MIN_K, TE_MAX_K = 1.0, 1e9
#: accepted electron densities, m-3 (as levels.physics.plasma.equilibrium)
NE_MIN_M3, NE_MAX_M3 = 1e6, 1e32


def check_temperature(te_k: float, name: str = "te_k") -> float:
    """A finite electron temperature in the accepted range, K; PhysicsInputError otherwise."""
    try:
        te = float(te_k)
    except (TypeError, ValueError):
        raise PhysicsInputError(f"{name} must be a number, got {te_k!r}") from None
    if not math.isfinite(te) or te <= 0:
        raise PhysicsInputError(f"{name} must be finite and > 0 K, got {te_k!r}")
    if not TE_MIN_K <= te <= TE_MAX_K:
        raise PhysicsInputError(f"{name} = {te:g} K is outside the accepted {TE_MIN_K:g}..{TE_MAX_K:g} K")
    return te


def check_density(ne_m3: float, name: str = "ne_m3") -> float:
    """A finite electron density in the accepted range, m-3; PhysicsInputError otherwise."""
    try:
        ne = float(ne_m3)
    except (TypeError, ValueError):
        raise PhysicsInputError(f"{name} must be a number, got {ne_m3!r}") from None
    if not math.isfinite(ne) or ne <= 0:
        raise PhysicsInputError(f"{name} must be finite and > 0 m-3, got {ne_m3!r}")
    if not NE_MIN_M3 <= ne <= NE_MAX_M3:
        raise PhysicsInputError(f"{name} = {ne:g} m-3 is outside the accepted {NE_MIN_M3:g}..{NE_MAX_M3:g} m-3 "
                                "(a value in cm-3 must be multiplied by 1e6)")
    return ne


def as_positive(name: str, value: ArrayLike) -> NDArray[np.float64]:
    """Array of finite values > 0, or PhysicsInputError naming ``name``."""
    arr = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(arr)) or np.any(arr <= 0):
        raise PhysicsInputError(f"{name} must be finite and > 0")
    return arr


def as_nonnegative(name: str, value: ArrayLike) -> NDArray[np.float64]:
    """Array of finite values >= 0, or PhysicsInputError naming ``name``."""
    arr = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(arr)) or np.any(arr < 0):
        raise PhysicsInputError(f"{name} must be finite and >= 0")
    return arr
