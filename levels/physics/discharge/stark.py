"""Stark (electron and ion impact) widths of spectral lines.

* Hydrogen Balmer alpha and beta: the fits of Gigosos, González & Cardeñoso (2003)
  to their computer-simulated profiles (full width at half maximum, electron
  temperature near 1 eV, ne ~ 1e20-1e25 m-3; coefficients recalled from memory):
  :math:`w(H\\alpha) = 1.098\\,\\mathrm{nm}\\,(n_e/10^{23}\\,\\mathrm{m^{-3}})^{1/1.47135}`,
  :math:`w(H\\beta) = 4.800\\,\\mathrm{nm}\\,(n_e/10^{23}\\,\\mathrm{m^{-3}})^{1/1.46808}`.
* Other lines of one-electron species: an estimate, the H-beta fit scaled as the
  linear (quasistatic, Holtsmark-field) Stark pattern, whose width grows as
  :math:`\\lambda^2 (n_u^2 - n_l^2)/Z` (Griem 1974) - for hydrogen lines the fits
  do not cover; good to a factor of about two.
* Lines of other species (quadratic Stark effect): an order-of-magnitude estimate
  after Griem's (1968) semi-empirical impact formula,

  .. math:: w = 8\\left(\\frac{\\pi}{3}\\right)^{3/2}\\frac{\\hbar}{m_e a_0}\\,n_e
     \\left(\\frac{E_H}{kT_e}\\right)^{1/2} \\bar g
     \\left[\\frac{\\langle r^2\\rangle_u + \\langle r^2\\rangle_l}{a_0^2}\\right]
     \\quad (\\text{angular FWHM}),

  with the sum over perturbing levels replaced by the hydrogenic mean
  :math:`\\langle r^2\\rangle = \\frac{n^{*2}}{2 Z^2}\\,[5 n^{*2} + 1 - 3 l (l+1)]\\,a_0^2`
  of each level (closure) and a constant effective Gaunt factor 0.2 (a
  simplification of this project; expect a factor of 2-3).

References
----------
.. [1] M. A. Gigosos, M. Á. González and V. Cardeñoso, "Computer simulated Balmer-alpha,
   -beta and -gamma Stark line profiles for non-equilibrium plasmas diagnostics",
   Spectrochim. Acta B 58, 1489-1504 (2003).
.. [2] H. R. Griem, "Semiempirical formulas for the electron-impact widths and shifts
   of isolated ion lines in plasmas", Phys. Rev. 165, 258-266 (1968).
.. [3] H. R. Griem, *Spectral Line Broadening by Plasmas*, Academic Press (1974).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

from levels import units
from levels.errors import PhysicsInputError
from levels.physics.discharge.common import (
    BOHR_M,
    RYDBERG_J,
    as_nonnegative,
    as_positive,
    check_density,
    check_temperature,
)

__all__ = ["BALMER_FITS", "balmer_fwhm_nm", "hydrogenic_stark_fwhm_nm", "mean_r2_bohr2", "quadratic_stark_fwhm_nm"]

#: (n_upper, n_lower) -> (width at 1e23 m-3 in nm, exponent of ne), Gigosos et al. 2003 (from memory)
BALMER_FITS = {(3, 2): (1.098, 1.0 / 1.47135), (4, 2): (4.800, 1.0 / 1.46808)}
_HBETA_NM = 486.13


def balmer_fwhm_nm(n_upper: int, ne_m3: ArrayLike) -> NDArray[np.float64]:
    """Stark FWHM of H-alpha (n_upper 3) or H-beta (4) from the Gigosos et al. (2003) fits.

    Parameters
    ----------
    n_upper : int
        3 (H-alpha) or 4 (H-beta).
    ne_m3 : array_like
        Electron density, m-3.

    Returns
    -------
    numpy.ndarray
        FWHM, nm.

    Raises
    ------
    PhysicsInputError
        Another line, or a bad density.

    References
    ----------
    M. A. Gigosos, M. Á. González, V. Cardeñoso, Spectrochim. Acta B 58, 1489 (2003).

    Examples
    --------
    >>> round(float(balmer_fwhm_nm(4, 1e23)), 3)
    4.8
    """
    if (n_upper, 2) not in BALMER_FITS:
        raise PhysicsInputError(f"the fits cover H-alpha (3-2) and H-beta (4-2), not {n_upper}-2")
    ne = as_positive("ne_m3", ne_m3)
    w0, power = BALMER_FITS[(n_upper, 2)]
    return np.asarray(w0 * (ne / 1e23) ** power)


def hydrogenic_stark_fwhm_nm(n_upper: ArrayLike, n_lower: ArrayLike, wavelength_nm: ArrayLike, ne_m3: float,
                             core_charge: int = 1) -> NDArray[np.float64]:
    """Stark FWHM of lines of one-electron species: fits for H-alpha/H-beta, a scaled estimate otherwise.

    Parameters
    ----------
    n_upper, n_lower : array_like of int
        Principal quantum numbers of the levels.
    wavelength_nm : array_like
        Line wavelengths, nm.
    ne_m3 : float
        Electron density, m-3.
    core_charge : int
        Nuclear charge Z of the one-electron species (1 for hydrogen).

    Returns
    -------
    numpy.ndarray
        FWHM, nm (0 for lines within one shell).

    Notes
    -----
    For Z = 1 and (3, 2), (4, 2) the fits of :func:`balmer_fwhm_nm`; else
    :math:`w = w_{H\\beta}(n_e)\\,(\\lambda/\\lambda_{H\\beta})^2\\,(n_u^2 - n_l^2)/(12\\,Z)`.

    Examples
    --------
    >>> w = hydrogenic_stark_fwhm_nm([4, 5], [2, 2], [486.13, 434.05], 1e23)
    >>> [round(float(x), 3) for x in w]
    [4.8, 6.697]
    """
    ne = check_density(ne_m3)
    nu = np.asarray(n_upper, dtype=float)
    nl = np.asarray(n_lower, dtype=float)
    lam = as_positive("wavelength_nm", wavelength_nm)
    z = float(as_positive("core_charge", core_charge))
    hb = float(balmer_fwhm_nm(4, ne))
    est = hb * (lam / _HBETA_NM) ** 2 * np.abs(nu**2 - nl**2) / 12.0 / z
    if z == 1.0:
        ha = float(balmer_fwhm_nm(3, ne))
        est = np.where((nu == 3) & (nl == 2), ha, np.where((nu == 4) & (nl == 2), hb, est))
    return np.asarray(est)


def mean_r2_bohr2(n_star: ArrayLike, l: ArrayLike, core_charge: ArrayLike = 1) -> NDArray[np.float64]:
    """Hydrogenic <r^2> of a level, in a0^2 (Bethe & Salpeter 1957).

    Examples
    --------
    >>> float(mean_r2_bohr2(1, 0))
    3.0
    """
    n = as_positive("n_star", n_star)
    ll = as_nonnegative("l", l)
    z = as_positive("core_charge", core_charge)
    return np.asarray(n**2 / (2.0 * z**2) * (5.0 * n**2 + 1.0 - 3.0 * ll * (ll + 1.0)))


def quadratic_stark_fwhm_nm(wavelength_nm: ArrayLike, r2_upper_bohr2: ArrayLike, r2_lower_bohr2: ArrayLike,
                            te_k: float, ne_m3: float, gaunt: float = 0.2) -> NDArray[np.float64]:
    """Order-of-magnitude electron-impact (quadratic Stark) FWHM of a line (after Griem 1968).

    Parameters
    ----------
    wavelength_nm : array_like
        Line wavelengths, nm.
    r2_upper_bohr2, r2_lower_bohr2 : array_like
        <r^2> of the two levels, a0^2 (:func:`mean_r2_bohr2`).
    te_k, ne_m3 : float
        Electron temperature (K) and density (m-3).
    gaunt : float
        Effective Gaunt factor (default 0.2).

    Returns
    -------
    numpy.ndarray
        FWHM, nm.

    References
    ----------
    H. R. Griem, Phys. Rev. 165, 258 (1968).

    Examples
    --------
    >>> round(float(quadratic_stark_fwhm_nm(589.0, 39.2, 20.1, 11604.5, 1e22)) * 1e3, 3)   # pm
    4.232
    """
    te = check_temperature(te_k)
    ne = check_density(ne_m3)
    lam = as_positive("wavelength_nm", wavelength_nm)
    r2 = as_nonnegative("r2_upper_bohr2", r2_upper_bohr2) + as_nonnegative("r2_lower_bohr2", r2_lower_bohr2)
    if not (math.isfinite(gaunt) and gaunt > 0):
        raise PhysicsInputError("gaunt must be > 0")
    omega = (8.0 * (math.pi / 3.0) ** 1.5 * units.HBAR / (units.M_E * BOHR_M) * ne
             * math.sqrt(RYDBERG_J / (units.K_B * te)) * gaunt * r2 * BOHR_M**2)
    lam_m = lam * 1e-9
    return np.asarray(lam_m**2 * omega / (2.0 * math.pi * units.C) * 1e9)
