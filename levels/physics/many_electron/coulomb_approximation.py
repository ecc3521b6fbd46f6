"""The Coulomb approximation: radial functions from the effective quantum numbers alone.

Outside the core an electron of a many-electron atom moves in the Coulomb
field of the net charge :math:`\\zeta` (ion charge + 1). Its radial function
there is the Whittaker function that decays at large r, fixed entirely by the
measured binding energy through the effective quantum number
:math:`\\nu = \\zeta\\sqrt{R_M/(E_{lim} - E)}`. Bates and Damgaard used this
function everywhere (tabulating the resulting dipole integrals); Seaton showed
why it works for transitions whose integrand lies outside the core. Here the
function is obtained by inward Numerov integration of the pure Coulomb
equation at the measured energy (:mod:`.numerov`), cut where it starts to
diverge toward the origin, which reproduces the exact hydrogenic functions
when :math:`\\nu` is an integer.

Range and accuracy (the rule used for the uncertainty of its rates): good
where the transition integrand lies well outside the core (Rydberg series,
resonance lines of alkali-like spectra: with the bare dipole operator r, as
Bates and Damgaard used it, the Li-Cs resonance lifetimes of the tests come
out within 1-5 %, Cs 6p1/2 -4.7 % the largest), poor where it cancels or lies
inside the core. The core-polarisation correction of the dipole operator is
not for these functions: they lack the polarisation potential that goes with
it, and with it the Cs 6p lifetimes come out 13 % long.

References
----------
D. R. Bates and A. Damgaard, "The calculation of the absolute strengths of
spectral lines", Phil. Trans. R. Soc. A 242, 101-122 (1949).
M. J. Seaton, "The quantum defect method", Mon. Not. R. Astron. Soc. 118, 504-518 (1958).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from levels.errors import PhysicsInputError
from levels.physics.many_electron import numerov

__all__ = ["coulomb_radial_functions", "effective_quantum_number"]

#: relative uncertainty of a Coulomb-approximation line strength where the integrand does not cancel
#: (the largest miss of the resonance-line tests in tests/physics/many_electron, Cs 6p1/2 -4.7 %, rounded up)
BASE_REL_UNC = 0.05


def effective_quantum_number(binding_cm1: ArrayLike, rydberg_cm1: float, zeta: float = 1.0) -> NDArray[np.float64]:
    """Effective quantum number :math:`\\nu = \\zeta\\sqrt{R_M / B}` of a level bound by ``B``.

    Parameters
    ----------
    binding_cm1 : array_like
        Binding energy (series limit minus level energy), cm-1, > 0.
    rydberg_cm1 : float
        Rydberg constant of the core mass, cm-1.
    zeta : float
        Net charge seen by the electron (ion charge + 1).

    Returns
    -------
    ndarray

    Raises
    ------
    PhysicsInputError
        A level at or above the limit.

    Examples
    --------
    >>> round(float(effective_quantum_number(109678.77 / 4, 109678.77)), 12)
    2.0
    """
    b = np.asarray(binding_cm1, dtype=np.float64)
    if np.any(~np.isfinite(b)) or np.any(b <= 0):
        raise PhysicsInputError("every level must lie below the series limit (binding energy > 0)")
    return zeta * np.sqrt(rydberg_cm1 / b)


def coulomb_radial_functions(x: NDArray[np.float64], nu: ArrayLike, l: ArrayLike,
                             zeta: float = 1.0) -> NDArray[np.float64]:
    """Normalised Coulomb-approximation radial functions on a square-root grid.

    Parameters
    ----------
    x : ndarray, shape (G,)
        Uniform grid in :math:`\\sqrt r` (:func:`.numerov.square_root_grid`), reaching
        :func:`.numerov.outer_radius` of the largest ``nu``.
    nu : array_like, shape (M,)
        Effective quantum numbers (> l for a bound orbit outside the barrier is not
        required; > 0).
    l : array_like of int, shape (M,)
        Orbital angular momenta.
    zeta : float
        Net charge (ion charge + 1).

    Returns
    -------
    ndarray, shape (G, M)
        :math:`\\chi` with :math:`u(r) = x^{1/2}\\chi`, :math:`\\int u^2 dr = 1`,
        the outermost lobe positive.

    Raises
    ------
    PhysicsInputError
        Non-positive ``nu`` or a grid too short.

    Examples
    --------
    >>> x = numerov.square_root_grid(200.0, 0.01)
    >>> chi = coulomb_radial_functions(x, [2.0, 1.0], [1, 0])
    >>> round(abs(float(numerov.radial_integrals(chi[:, :1], chi[:, 1:], x, x**2)[0, 0])), 8)  # 128 sqrt(6)/243
    1.2902662
    """
    nu_ = np.atleast_1d(np.asarray(nu, dtype=np.float64))
    l_ = np.atleast_1d(np.asarray(l, dtype=np.int64))
    if np.any(~np.isfinite(nu_)) or np.any(nu_ <= 0):
        raise PhysicsInputError("effective quantum numbers must be positive")
    r_out = numerov.outer_radius(nu_, l_, zeta)
    r = x**2
    start = np.minimum(np.searchsorted(r, r_out), len(x) - 1)
    if np.any(r[-1] < 0.5 * r_out):
        raise PhysicsInputError(f"the grid ends at r = {r[-1]:.4g} a0, short of the orbit of nu = {nu_.max():.4g}")
    energy = -0.5 * zeta**2 / nu_**2
    g = numerov.numerov_coefficient(x, -zeta / r, energy, l_)
    chi = numerov.integrate_inward(x, g, start)
    return numerov.normalise(numerov.cut_divergence(chi, x), x)
