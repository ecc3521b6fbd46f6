"""Nuclear properties needed by one-electron energies: rms charge radius and nuclear mass.

Charge radii come, in this order of preference, from

1. CODATA (through :mod:`scipy.constants`) for the proton and the deuteron, because
   the CODATA Rydberg constant was adjusted together with these radii, so
   hydrogen and deuterium energies computed with them are self-consistent;
2. a table of measured rms charge radii (Angeli & Marinova 2013); every value
   of it in this module was written down from memory and is marked so;
3. the fallback formula of Johnson & Soff (1985), ``r = 0.836 A**(1/3) + 0.570 fm``.

The nuclear mass is the atomic mass less ``Z`` electron masses plus the total
electron binding energy, for which the fit of Lunney, Pearson & Thibault (2003)
is used (the Bohr value, 13.598 eV, for hydrogen).

References
----------
I. Angeli and K. P. Marinova, "Table of experimental nuclear ground state charge
radii: An update", At. Data Nucl. Data Tables 99, 69-95 (2013).

W. R. Johnson and G. Soff, "The Lamb shift in hydrogen-like atoms, 1 <= Z <= 110",
At. Data Nucl. Data Tables 33, 405-446 (1985).

The nuclear polarisation shifts of the 1S level of hydrogen and deuterium are
those used by CODATA (Mohr, Taylor & Newell, Rev. Mod. Phys. 80, 633 (2008),
section IV.A.1.l): -0.070(13) kHz for H (Khriplovich & Sen'kov 2000, as quoted by CODATA) and
-21.37(8) kHz for D (Friar & Payne 1997, Phys. Rev. C 56, 619); values and
citations from memory.

D. Lunney, J. M. Pearson and C. Thibault, "Recent trends in the determination of
nuclear masses", Rev. Mod. Phys. 75, 1021-1082 (2003), eq. (A4).

E. Tiesinga, P. J. Mohr, D. B. Newell, B. N. Taylor, "CODATA recommended values of
the fundamental physical constants: 2018", Rev. Mod. Phys. 93, 025010 (2021).
"""

from __future__ import annotations

import math

import numpy as np
import scipy.constants as sc

from levels.errors import PhysicsInputError, QuantumNumberError
from levels.units import CODATA_RELEASE, M_E_U

__all__ = [
    "ANGELI_MARINOVA_2013",
    "charge_radius_fm",
    "fallback_charge_radius_fm",
    "electron_binding_energy_ev",
    "nuclear_mass_u",
    "nuclear_polarization_1s_hz",
]

#: rms nuclear charge radii in fm, keyed by (Z, A): (radius, uncertainty).
#: Angeli & Marinova 2013, At. Data Nucl. Data Tables 99, 69, Table IV.
#: ALL VALUES FROM MEMORY (not copied from the table); the uncertainties are the
#: ones recalled with them.
ANGELI_MARINOVA_2013: dict[tuple[int, int], tuple[float, float]] = {
    (1, 1): (0.8783, 0.0086),
    (1, 2): (2.1421, 0.0088),
    (1, 3): (1.7591, 0.0363),
    (2, 3): (1.9661, 0.0030),
    (2, 4): (1.6755, 0.0028),
    (3, 6): (2.5890, 0.0390),
    (3, 7): (2.4440, 0.0420),
    (4, 9): (2.5190, 0.0120),
    (5, 10): (2.4277, 0.0499),
    (5, 11): (2.4060, 0.0294),
    (6, 12): (2.4702, 0.0022),
    (6, 13): (2.4614, 0.0034),
    (7, 14): (2.5582, 0.0070),
    (7, 15): (2.6058, 0.0080),
    (8, 16): (2.6991, 0.0052),
    (8, 18): (2.7726, 0.0056),
    (9, 19): (2.8976, 0.0025),
    (10, 20): (3.0055, 0.0021),
    (10, 22): (2.9525, 0.0040),
    (11, 23): (2.9936, 0.0021),
    (12, 24): (3.0570, 0.0016),
    (13, 27): (3.0610, 0.0031),
    (14, 28): (3.1224, 0.0024),
    (15, 31): (3.1889, 0.0019),
    (16, 32): (3.2611, 0.0018),
    (17, 35): (3.3654, 0.0019),
    (18, 36): (3.3905, 0.0024),
    (18, 40): (3.4274, 0.0026),
    (19, 39): (3.4349, 0.0019),
    (20, 40): (3.4776, 0.0019),
    (20, 48): (3.4771, 0.0020),
    (26, 56): (3.7377, 0.0016),
    (28, 58): (3.7757, 0.0020),
    (29, 63): (3.8823, 0.0015),
    (30, 64): (3.9283, 0.0015),
    (36, 84): (4.1884, 0.0022),
    (38, 88): (4.2240, 0.0018),
    (40, 90): (4.2694, 0.0010),
    (50, 120): (4.6519, 0.0021),
    (54, 132): (4.7859, 0.0048),
    (82, 208): (5.5012, 0.0013),
    (83, 209): (5.5211, 0.0026),
    (90, 232): (5.7848, 0.0120),
    (92, 238): (5.8571, 0.0033),
}

# CODATA radii (scipy.constants), preferred for the proton and the deuteron
_CODATA_RADII = {
    (1, 1): "proton rms charge radius",
    (1, 2): "deuteron rms charge radius",
}

#: hydrogen ionization energy used as its electron binding, eV: the Bohr value
#: R_inf h c m_p / (m_p + m_e) from CODATA (scipy.constants), 13.5983 eV; the
#: neglected fine structure and QED (1e-5 relative) do not matter here
_HYDROGEN_BINDING_EV = sc.physical_constants["Rydberg constant times hc in eV"][0] / (
    1.0 + 1.0 / sc.physical_constants["proton-electron mass ratio"][0]
)


def check_z(z: int) -> int:
    """Z as an int after checking it is a whole number in 1..118 (QuantumNumberError otherwise)."""
    try:
        ok = not isinstance(z, (bool, np.bool_)) and float(z).is_integer()
    except (TypeError, ValueError):
        ok = False
    if not ok:
        raise QuantumNumberError(f"Z must be an integer, got {z!r}")
    if not 1 <= int(z) <= 118:
        raise QuantumNumberError(f"Z must satisfy 1 <= Z <= 118, got {z}")
    return int(z)


def _check_nucleus(z: int, mass_number: int) -> tuple[int, int]:
    z = check_z(z)
    try:
        ok = not isinstance(mass_number, bool) and float(mass_number).is_integer()
    except (TypeError, ValueError):
        ok = False
    if not ok:
        raise QuantumNumberError(f"mass number A must be an integer, got {mass_number!r}")
    a = int(mass_number)
    if a < z:
        raise QuantumNumberError(f"mass number must satisfy A >= Z, got A={a} for Z={z}")
    return z, a


def fallback_charge_radius_fm(mass_number: int) -> float:
    """Empirical rms nuclear charge radius from the mass number.

    Parameters
    ----------
    mass_number : int
        Mass number A (>= 1).

    Returns
    -------
    float
        rms charge radius in fm.

    Raises
    ------
    QuantumNumberError
        If ``mass_number < 1``.

    Notes
    -----
    ``r = 0.836 A**(1/3) + 0.570 fm`` (Johnson & Soff 1985), fitted to medium and
    heavy nuclei (A > 9); for the lightest nuclei it is only a rough estimate
    (it gives 1.41 fm for A = 1, where the proton's is 0.84 fm).

    References
    ----------
    W. R. Johnson and G. Soff, At. Data Nucl. Data Tables 33, 405 (1985).

    Examples
    --------
    >>> round(fallback_charge_radius_fm(208), 3)   # measured (Pb-208): 5.50 fm
    5.523
    """
    if mass_number < 1:
        raise QuantumNumberError(f"mass number must satisfy A >= 1, got {mass_number}")
    return 0.836 * mass_number ** (1.0 / 3.0) + 0.570


def charge_radius_fm(z: int, mass_number: int) -> tuple[float, str]:
    """rms nuclear charge radius of the nucleus (Z, A), and where it came from.

    Parameters
    ----------
    z : int
        Atomic number, 1 <= Z <= 118.
    mass_number : int
        Mass number A >= Z.

    Returns
    -------
    radius : float
        rms charge radius in fm.
    source : str
        ``"CODATA <release> (scipy.constants)"`` for the proton and deuteron,
        ``"Angeli & Marinova 2013, ADNDT 99, 69 (from memory)"`` for a tabulated
        nucleus, otherwise ``"fallback formula 0.836 A^(1/3) + 0.570 fm (Johnson &
        Soff 1985)"``.

    Raises
    ------
    QuantumNumberError
        If Z or A is out of range or not an integer.

    Notes
    -----
    The proton radius recalled from Angeli & Marinova (0.8783 fm) is the older
    electron-scattering value; CODATA's (0.8408 fm in 2022) agrees with muonic
    hydrogen and is the one consistent with the CODATA Rydberg constant.

    Examples
    --------
    >>> charge_radius_fm(2, 4)
    (1.6755, 'Angeli & Marinova 2013, ADNDT 99, 69 (from memory)')
    >>> r, src = charge_radius_fm(43, 98)
    >>> round(r, 3), src.startswith("fallback formula")
    (4.424, True)
    """
    z, a = _check_nucleus(z, mass_number)
    key = (z, a)
    if key in _CODATA_RADII:
        value = sc.physical_constants[_CODATA_RADII[key]][0] * 1e15
        return value, f"CODATA {CODATA_RELEASE} (scipy.constants)"
    if key in ANGELI_MARINOVA_2013:
        return ANGELI_MARINOVA_2013[key][0], "Angeli & Marinova 2013, ADNDT 99, 69 (from memory)"
    return (
        fallback_charge_radius_fm(a),
        "fallback formula 0.836 A^(1/3) + 0.570 fm (Johnson & Soff 1985, ADNDT 33, 405)",
    )


#: nuclear polarisation shift of the 1S level in Hz, keyed by (Z, A); scales as
#: delta_l0 / n^3 (CODATA 2006, section IV.A.1.l; values from memory)
_POLARIZATION_1S_HZ = {(1, 1): -70.0, (1, 2): -21370.0}


def nuclear_polarization_1s_hz(z: int, mass_number: int) -> float:
    """Shift of the 1S level by the polarisability of the nucleus, where known.

    Parameters
    ----------
    z : int
        Atomic number, 1 <= Z <= 118.
    mass_number : int
        Mass number A >= Z.

    Returns
    -------
    float
        E/h in Hz (negative: polarisation binds more); 0.0 where no value is
        tabulated (only H-1 and H-2 are). An nS level is shifted by this over n^3.

    Raises
    ------
    QuantumNumberError
        If Z or A is out of range.

    Notes
    -----
    -0.070(13) kHz for H (Khriplovich & Sen'kov 2000), -21.37(8) kHz for D
    (Friar & Payne 1997), as used in the CODATA adjustments (from memory).
    For heavier nuclei the shift is not tabulated here; it is a small part of
    the uncertainty of the finite-size correction.

    Examples
    --------
    >>> nuclear_polarization_1s_hz(1, 2)
    -21370.0
    """
    key = _check_nucleus(z, mass_number)
    return _POLARIZATION_1S_HZ.get(key, 0.0)


def electron_binding_energy_ev(z: int) -> float:
    """Total binding energy of all Z electrons of the neutral atom.

    Parameters
    ----------
    z : int
        Atomic number, 1 <= Z <= 118.

    Returns
    -------
    float
        Binding energy in eV (positive).

    Raises
    ------
    QuantumNumberError
        If Z is out of range.

    Notes
    -----
    ``B_el = 14.4381 Z**2.39 + 1.55468e-6 Z**5.35 eV`` (Lunney, Pearson & Thibault
    2003, eq. A4; coefficients from memory), good to a few per cent, which is far
    more than enough here: B_el / c**2 is below 1e-6 of the nuclear mass. For
    hydrogen the Bohr ionization energy with reduced mass, 13.598 eV, is used.

    Examples
    --------
    >>> round(electron_binding_energy_ev(1), 4)
    13.5983
    >>> round(electron_binding_energy_ev(26) / 1e3, 1)
    34.8
    """
    z = check_z(z)
    if z == 1:
        return _HYDROGEN_BINDING_EV
    return 14.4381 * z**2.39 + 1.55468e-6 * z**5.35


def nuclear_mass_u(z: int, atomic_mass_u: float) -> float:
    """Mass of the bare nucleus from the mass of the neutral atom.

    Parameters
    ----------
    z : int
        Atomic number, 1 <= Z <= 118.
    atomic_mass_u : float
        Mass of the neutral atom in u (for example ``periodictable.Fe[56].mass``).

    Returns
    -------
    float
        Nuclear mass in u: ``M_atom - Z m_e + B_el / c**2``.

    Raises
    ------
    QuantumNumberError
        If Z is out of range.
    PhysicsInputError
        If the atomic mass is not a positive finite number or is lighter than Z electrons.

    Examples
    --------
    >>> round(nuclear_mass_u(1, 1.00782503223), 9)   # CODATA proton: 1.007276467 u
    1.007276467
    """
    z = check_z(z)
    if not (math.isfinite(atomic_mass_u) and atomic_mass_u > z * M_E_U):
        raise PhysicsInputError(
            f"atomic mass must be a finite number larger than Z electron masses, got {atomic_mass_u!r} u"
        )
    u_ev = sc.physical_constants["atomic mass constant energy equivalent in MeV"][0] * 1e6
    return atomic_mass_u - z * M_E_U + electron_binding_energy_ev(z) / u_ev
