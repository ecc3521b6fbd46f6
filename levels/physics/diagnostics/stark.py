"""Electron density from the Stark width of the hydrogen Balmer lines H-alpha and H-beta.

The full width at half maximum of the Stark-broadened line follows the fits
to computer-simulated profiles (ions and electrons moving, for reduced
emitter-perturber masses and temperatures of laboratory plasmas) by Gigosos,
González & Cardeñoso (2003), in their temperature-independent form

.. math:: n_e = 10^{23}\\,\\mathrm{m^{-3}}
   \\left(\\frac{\\Delta\\lambda_{1/2}}{w_0}\\right)^{b}

with ``w0 = 1.098 nm, b = 1.47135`` for H-alpha and ``w0 = 4.800 nm,
b = 1.46808`` for H-beta (the coefficients as widely quoted from that paper;
recalled here from memory, see the tests).

The measured width contains the instrument profile and Doppler broadening
(Gaussian) besides the Stark width; the Stark profile is taken as the
Lorentzian part of a Voigt profile (common practice, no source: the
simulated profiles are not Lorentzian, but near the half maximum the
approximation is used throughout the literature), so the Stark FWHM follows
from the measured Voigt FWHM and the Gaussian FWHM by inverting the
Olivero-Longbothum relation (:func:`lorentz_fwhm_from_voigt`).

References
----------
.. [1] M. A. Gigosos, M. Á. González and V. Cardeñoso, "Computer simulated
   Balmer-alpha, -beta and -gamma Stark line profiles for non-equilibrium
   plasmas diagnostics", Spectrochim. Acta B 58, 1489-1504 (2003).
.. [2] J. J. Olivero and R. L. Longbothum, JQSRT 17, 233 (1977).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from levels.errors import PhysicsInputError

__all__ = ["STARK_FITS", "stark_fwhm_nm", "electron_density_m3", "lorentz_fwhm_from_voigt", "balmer_line"]

#: (w0 in nm, exponent b, vacuum wavelength nm) of the width fits; from memory of Gigosos et al. (2003)
STARK_FITS = {
    "H-alpha": (1.098, 1.47135, 656.4696),
    "H-beta": (4.800, 1.46808, 486.2710),
}
#: densities the simulations cover, m-3 (the fits are not used outside; from memory of the paper's range)
NE_RANGE_M3 = (1e20, 1e25)


def _line(line: str) -> tuple[float, float, float]:
    try:
        return STARK_FITS[line]
    except KeyError:
        raise PhysicsInputError(f"no Stark-width fit for {line!r}; known: {', '.join(STARK_FITS)}") from None


def balmer_line(vacuum_nm: float, tolerance_nm: float = 2.0) -> str | None:
    """Name of the Balmer line ("H-alpha", "H-beta") near a vacuum wavelength, or None.

    Examples
    --------
    >>> balmer_line(656.28 * 1.000277), balmer_line(500.0)
    ('H-alpha', None)
    """
    for name, (_, _, lam) in STARK_FITS.items():
        if abs(vacuum_nm - lam) <= tolerance_nm:
            return name
    return None


def stark_fwhm_nm(line: str, ne_m3: ArrayLike) -> NDArray[np.float64]:
    """Stark FWHM of a Balmer line at electron density ``ne_m3`` (the fit inverted).

    Parameters
    ----------
    line : {"H-alpha", "H-beta"}
    ne_m3 : array_like
        Electron density, m-3.

    Returns
    -------
    numpy.ndarray
        FWHM, nm.

    Examples
    --------
    >>> round(float(stark_fwhm_nm("H-beta", 1e23)), 3)
    4.8
    """
    w0, b, _ = _line(line)
    ne = np.asarray(ne_m3, dtype=float)
    if not np.all(np.isfinite(ne)) or np.any(ne <= 0):
        raise PhysicsInputError("ne_m3 must be finite and > 0")
    return w0 * (ne / 1e23) ** (1.0 / b)


def electron_density_m3(
    line: str, stark_fwhm: ArrayLike, stark_fwhm_unc: ArrayLike = 0.0
) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Electron density and its uncertainty from the Stark FWHM of H-alpha or H-beta.

    Parameters
    ----------
    line : {"H-alpha", "H-beta"}
    stark_fwhm : array_like
        Stark FWHM, nm (instrument and Doppler widths removed).
    stark_fwhm_unc : array_like
        Its standard uncertainty, nm.

    Returns
    -------
    (ne_m3, ne_unc_m3)
        m-3; ``sigma_ne / ne = b sigma_w / w``.

    Raises
    ------
    PhysicsInputError
        Unknown line, non-positive width.

    Examples
    --------
    >>> ne, unc = electron_density_m3("H-alpha", 1.098, 0.01098)
    >>> float(ne), round(float(unc / ne), 5)
    (1e+23, 0.01471)
    """
    w0, b, _ = _line(line)
    w = np.asarray(stark_fwhm, dtype=float)
    if not np.all(np.isfinite(w)) or np.any(w <= 0):
        raise PhysicsInputError("the Stark width must be finite and > 0")
    ne = 1e23 * (w / w0) ** b
    return ne, ne * b * np.asarray(stark_fwhm_unc, dtype=float) / w


def lorentz_fwhm_from_voigt(voigt_fwhm: ArrayLike, gauss_fwhm: ArrayLike) -> NDArray[np.float64]:
    """Lorentzian FWHM of a Voigt profile of known total and Gaussian FWHM.

    Inverts ``f_V = 0.5346 f_L + sqrt(0.2166 f_L^2 + f_G^2)`` (Olivero & Longbothum 1977):
    the smaller root of ``(0.5346^2 - 0.2166) f_L^2 - 1.0692 f_V f_L + f_V^2 - f_G^2 = 0``.

    Returns
    -------
    numpy.ndarray
        f_L (same unit); 0 where the Gaussian alone explains the width (``f_G >= f_V``).

    Examples
    --------
    >>> round(float(lorentz_fwhm_from_voigt(1.0, 0.0)), 4), float(lorentz_fwhm_from_voigt(1.0, 1.2))
    (1.0, 0.0)
    """
    fv = np.asarray(voigt_fwhm, dtype=float)
    fg = np.asarray(gauss_fwhm, dtype=float)
    a = 0.5346**2 - 0.2166
    disc = (1.0692 * fv) ** 2 - 4.0 * a * (fv * fv - fg * fg)
    root = (1.0692 * fv - np.sqrt(np.maximum(disc, 0.0))) / (2.0 * a)
    return np.where(fg >= fv, 0.0, np.maximum(root, 0.0))
