"""Optical-depth effects on a synthetic spectrum: self-absorption in a uniform slab, self-reversal by a cool layer.

Along a line of sight through a uniform slab of thickness L with emission
coefficient :math:`\\varepsilon(\\lambda) = \\sum_i \\varepsilon_i \\phi_i(\\lambda)`
and absorption coefficient :math:`\\kappa(\\lambda) = \\sum_i S_i \\phi_i(\\lambda)`
(the same profiles; S_i the integrated absorption of line i), the emergent
radiance is the formal solution of the transfer equation

.. math:: I(\\lambda) = \\frac{\\varepsilon(\\lambda)}{\\kappa(\\lambda)}
   \\left(1 - e^{-\\kappa(\\lambda) L}\\right),

which tends to :math:`\\varepsilon L` when thin and flattens line tops at the source
function when thick (self-absorption). A cooler outer layer of thickness L_c and
absorption coefficient :math:`\\kappa_c(\\lambda)` (narrower lines: lower gas
temperature, fewer charged perturbers) multiplies it by
:math:`e^{-\\kappa_c L_c}`, which cuts a dip into the centre of a broad
self-absorbed line: self-reversal. The integrated absorption per line is

.. math:: S_i = \\frac{e^2}{4\\varepsilon_0 m_e c}\\,f_i\\,n_{l,i}
   \\left(1 - \\frac{g_l n_u}{g_u n_l}\\right)\\frac{\\lambda_i^2}{c}
   \\quad [\\mathrm{m^{-1}}\\ \\text{per unit of}\\ \\int\\phi\\,d\\lambda].

References
----------
.. [1] H. R. Griem, *Principles of Plasma Spectroscopy*, Cambridge University Press
   (1997), ch. 7 (radiative transfer in spectral lines, self-reversal).
.. [2] G. B. Rybicki and A. P. Lightman, *Radiative Processes in Astrophysics*,
   Wiley (1979), ch. 1 (formal solution for a uniform medium).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

from levels import units
from levels.errors import PhysicsInputError
from levels.physics.discharge.common import as_nonnegative, as_positive

__all__ = ["integrated_absorption_m1_nm", "slab_radiance"]

_SIGMA_INT = units.E_CHARGE**2 / (4.0 * units.EPS0 * units.M_E * units.C)   # m2 s-1


def integrated_absorption_m1_nm(f_abs: ArrayLike, lower_density_m3: ArrayLike, wavelength_nm: ArrayLike, *,
                                g_lower: ArrayLike | None = None, g_upper: ArrayLike | None = None,
                                upper_density_m3: ArrayLike | None = None) -> NDArray[np.float64]:
    """Integrated absorption S_i of each line, m-1 nm (kappa(lambda) = S_i phi_i(lambda) with phi in nm-1).

    Parameters
    ----------
    f_abs : array_like
        Absorption oscillator strengths.
    lower_density_m3 : array_like
        Lower-level densities, m-3.
    wavelength_nm : array_like
        Wavelengths, nm.
    g_lower, g_upper, upper_density_m3 : array_like, optional
        All three for the stimulated-emission correction.

    Returns
    -------
    numpy.ndarray
        S, m-1 nm.

    Examples
    --------
    >>> round(float(integrated_absorption_m1_nm(0.641, 1e16, 656.28)) * 1e3, 3)
    24.441
    """
    f = as_nonnegative("f_abs", f_abs)
    n_l = as_nonnegative("lower_density_m3", lower_density_m3)
    lam = as_positive("wavelength_nm", wavelength_nm) * 1e-9
    s = _SIGMA_INT * f * n_l * lam**2 / units.C * 1e9
    extra = (g_lower, g_upper, upper_density_m3)
    if any(x is not None for x in extra):
        if g_lower is None or g_upper is None or upper_density_m3 is None:
            raise PhysicsInputError("stimulated emission needs g_lower, g_upper and upper_density_m3 together")
        gl, gu = as_positive("g_lower", g_lower), as_positive("g_upper", g_upper)
        n_u = as_nonnegative("upper_density_m3", upper_density_m3)
        with np.errstate(divide="ignore", invalid="ignore"):
            stim = np.where(n_l > 0, 1.0 - gl * n_u / (gu * n_l), 0.0)
        s = s * np.clip(stim, 0.0, 1.0)
    return np.asarray(s)


def slab_radiance(emission: ArrayLike, absorption_m1: ArrayLike, length_m: float, *,
                  cool_absorption_m1: ArrayLike | None = None, cool_length_m: float = 0.0) -> NDArray[np.float64]:
    """Emergent spectrum of a uniform slab (and an optional cool absorbing layer), per unit length.

    Parameters
    ----------
    emission : array_like
        Emission coefficient on a wavelength grid (any unit per nm, e.g. W m-3 sr-1 nm-1).
    absorption_m1 : array_like
        Absorption coefficient of the slab on the same grid, m-1.
    length_m : float
        Slab thickness along the line of sight, m.
    cool_absorption_m1 : array_like, optional
        Absorption coefficient of a cool outer layer, m-1.
    cool_length_m : float
        Its thickness, m.

    Returns
    -------
    numpy.ndarray
        I / L: the radiance divided by the slab length, in the unit of ``emission`` (equal to
        ``emission`` where the slab is thin), so thin and thick spectra compare directly.

    Raises
    ------
    PhysicsInputError
        Negative coefficients, mismatched shapes, absurd lengths.

    Examples
    --------
    >>> [round(float(x), 4) for x in slab_radiance([1.0, 1.0, 1.0], [0.0, 1.0, 100.0], 0.01)]
    [1.0, 0.995, 0.6321]
    """
    eps = as_nonnegative("emission", emission)
    kap = as_nonnegative("absorption_m1", absorption_m1)
    if eps.shape != kap.shape:
        raise PhysicsInputError("emission and absorption must be on the same grid")
    length = float(length_m)
    if not (math.isfinite(length) and 0 < length <= 1e3):
        raise PhysicsInputError(f"the slab length must be > 0 and at most 1000 m, got {length_m!r} m")
    tau = kap * length
    with np.errstate(divide="ignore", invalid="ignore"):
        factor = np.where(tau > 1e-8, -np.expm1(-tau) / tau, 1.0 - tau / 2.0)
    out = eps * factor
    if cool_absorption_m1 is not None:
        kc = as_nonnegative("cool_absorption_m1", cool_absorption_m1)
        if kc.shape != eps.shape:
            raise PhysicsInputError("the cool layer's absorption must be on the same grid")
        lc = float(cool_length_m)
        if not (math.isfinite(lc) and 0 <= lc <= 1e3):
            raise PhysicsInputError(f"the cool layer must be 0..1000 m thick, got {cool_length_m!r} m")
        out = out * np.exp(-kc * lc)
    return np.asarray(out)
