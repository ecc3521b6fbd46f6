"""Pressure broadening by neutral atoms: resonance (self) broadening and van der Waals broadening.

* Resonance broadening of a line whose lower (or upper) level is connected to
  the ground level by a resonance line of wavelength lambda_r and oscillator
  strength f_r, by ground-state atoms of the same species of density N (impact
  theory of Ali & Griem 1965, in the numerical form quoted by Griem 1964, from memory):

  .. math:: w = 8.6\\times10^{-30}\\,\\sqrt{g_l/g_u}\\;\\lambda^2\\lambda_r f_r N
     \\quad [\\AA;\\ \\lambda,\\lambda_r\\ \\text{in}\\ \\AA,\\ N\\ \\text{in cm}^{-3}],

  that is 8.6e-16 sqrt(g_l/g_u) lambda^2 lambda_r f_r N in SI units (m, m-3).
* Van der Waals broadening by a foreign gas (Unsöld's estimate): the interaction
  C6/r^6 with :math:`C_6 = \\alpha c\\,\\alpha_p\\,(\\langle r^2\\rangle_u - \\langle r^2\\rangle_l)`
  (alpha_p the perturber's polarizability volume, <r^2> hydrogenic with the
  effective quantum number), and the impact width (angular FWHM)

  .. math:: \\gamma_6 = 8.08\\,C_6^{2/5}\\,\\bar v^{3/5} N_p, \\qquad
     \\bar v = \\sqrt{8 k T/(\\pi\\mu)}

  (Unsöld 1955; known to underestimate measured widths by a factor of about 2).

Polarizability volumes of the perturber gases are from the CRC Handbook of
Chemistry and Physics (D. R. Lide, ed.), "Atomic and molecular polarizabilities"
(values from memory, checked in the tests against ``mendeleev``).

References
----------
.. [1] S. Ali and H. R. Griem, "Theory of resonance broadening of spectral lines by
   atom-atom impacts", Phys. Rev. 140, A1044-A1049 (1965); Phys. Rev. 144, 366 (1966).
.. [2] H. R. Griem, *Plasma Spectroscopy*, McGraw-Hill (1964).
.. [3] A. Unsöld, *Physik der Sternatmosphären*, 2nd ed., Springer (1955).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

from levels import units
from levels.errors import PhysicsInputError
from levels.physics.discharge.common import BOHR_M, as_nonnegative, as_positive

__all__ = ["PERTURBERS", "perturber_density_m3", "resonance_fwhm_nm", "van_der_waals_fwhm_nm"]

#: perturber gas -> (polarizability volume in 1e-30 m3 = A^3, mass in u); CRC Handbook, from memory
PERTURBERS = {
    "He": (0.2050, 4.0026), "Ne": (0.3956, 20.180), "Ar": (1.6411, 39.948), "Kr": (2.4844, 83.798),
    "Xe": (4.044, 131.29), "H2": (0.787, 2.016), "N2": (1.740, 28.014), "Hg": (5.02, 200.59),
}


def perturber_density_m3(pressure_pa: float, tgas_k: float) -> float:
    """Ideal-gas number density p / kT, m-3.

    Examples
    --------
    >>> round(perturber_density_m3(101325.0, 273.15) / 1e25, 4)   # Loschmidt
    2.6868
    """
    p = float(pressure_pa)
    t = float(tgas_k)
    if not (math.isfinite(p) and 0 < p <= 1e9):
        raise PhysicsInputError(f"pressure must be > 0 and at most 1 GPa, got {pressure_pa!r} Pa")
    if not (math.isfinite(t) and t > 0):
        raise PhysicsInputError(f"gas temperature must be > 0 K, got {tgas_k!r}")
    return p / (units.K_B * t)


def resonance_fwhm_nm(wavelength_nm: ArrayLike, resonance_nm: ArrayLike, f_resonance: ArrayLike,
                      g_ratio: ArrayLike, ground_density_m3: float) -> NDArray[np.float64]:
    """Resonance (self) broadening FWHM (Ali & Griem 1965).

    Parameters
    ----------
    wavelength_nm : array_like
        Wavelength of the broadened line, nm.
    resonance_nm : array_like
        Wavelength of the resonance line that connects the level to the ground, nm.
    f_resonance : array_like
        Absorption oscillator strength of that resonance line.
    g_ratio : array_like
        g_ground / g_resonance-level of that resonance line.
    ground_density_m3 : float
        Density of ground-state atoms of the species, m-3.

    Returns
    -------
    numpy.ndarray
        FWHM, nm.

    Examples
    --------
    >>> round(float(resonance_fwhm_nm(589.0, 589.0, 0.64, 0.5, 1e23)) * 1e3, 2)   # pm
    7.95
    """
    lam = as_positive("wavelength_nm", wavelength_nm) * 1e-9
    lam_r = as_positive("resonance_nm", resonance_nm) * 1e-9
    f = as_nonnegative("f_resonance", f_resonance)
    ratio = as_positive("g_ratio", g_ratio)
    n = float(as_nonnegative("ground_density_m3", ground_density_m3))
    return np.asarray(8.6e-16 * np.sqrt(ratio) * lam**2 * lam_r * f * n * 1e9)


def van_der_waals_fwhm_nm(wavelength_nm: ArrayLike, r2_upper_bohr2: ArrayLike, r2_lower_bohr2: ArrayLike,
                          emitter_mass_u: float, perturber: str, pressure_pa: float,
                          tgas_k: float) -> NDArray[np.float64]:
    """Van der Waals FWHM by a foreign gas (Unsöld's estimate).

    Parameters
    ----------
    wavelength_nm : array_like
        Line wavelengths, nm.
    r2_upper_bohr2, r2_lower_bohr2 : array_like
        Hydrogenic <r^2> of the upper and lower level, a0^2.
    emitter_mass_u : float
        Mass of the emitting atom, u.
    perturber : str
        One of :data:`PERTURBERS` (``"Ar"``, ``"He"``, ``"Xe"``, ...).
    pressure_pa : float
        Perturber pressure, Pa.
    tgas_k : float
        Gas temperature, K.

    Returns
    -------
    numpy.ndarray
        FWHM, nm.

    Raises
    ------
    PhysicsInputError
        Unknown perturber, bad pressure or temperature.

    Examples
    --------
    >>> round(float(van_der_waals_fwhm_nm(589.0, 39.2, 20.1, 22.99, "Ar", 101325.0, 300.0)) * 1e3, 1)   # pm
    14.7
    """
    if perturber not in PERTURBERS:
        raise PhysicsInputError(f"unknown perturber gas {perturber!r}; known: {', '.join(PERTURBERS)}")
    alpha_p, m_p = PERTURBERS[perturber]
    n_p = perturber_density_m3(pressure_pa, tgas_k)
    lam = as_positive("wavelength_nm", wavelength_nm) * 1e-9
    dr2 = np.abs(as_nonnegative("r2_upper_bohr2", r2_upper_bohr2) - as_nonnegative("r2_lower_bohr2", r2_lower_bohr2))
    m_e = float(as_positive("emitter_mass_u", emitter_mass_u))
    mu = m_e * m_p / (m_e + m_p) * units.M_U
    v = math.sqrt(8.0 * units.K_B * float(tgas_k) / (math.pi * mu))
    c6 = units.ALPHA * units.C * alpha_p * 1e-30 * dr2 * BOHR_M**2
    gamma6 = 8.08 * c6**0.4 * v**0.6 * n_p
    return np.asarray(lam**2 * gamma6 / (2.0 * math.pi * units.C) * 1e9)
