"""Physical constants and unit-aware quantity parsing.

Constants come from :mod:`scipy.constants`, which ships one CODATA adjustment;
:data:`CODATA_RELEASE` names it. Every module of :mod:`levels.physics` takes its
constants from here so the release is chosen once (astropy.constants style).

Quantities typed by users carry their unit (``656.3nm``, ``6563A``, ``1.2eV``,
``15000K``, ``1e18m-3``, ``1e12cm-3``); :func:`parse_quantity` converts them to
SI-like base units of one dimension and raises :class:`~levels.errors.UnitError`
with the offending text otherwise.

References
----------
E. Tiesinga, P. J. Mohr, D. B. Newell, B. N. Taylor, "CODATA recommended values
of the fundamental physical constants: 2018", Rev. Mod. Phys. 93, 025010 (2021);
and the 2022 adjustment (Mohr, Newell, Taylor, Tiesinga, Rev. Mod. Phys. 97, 025002 (2025)).
"""

from __future__ import annotations

import math
import re
from typing import NamedTuple

import scipy.constants as sc

from levels.errors import UnitError

#: speed of light in vacuum, m/s (exact)
C = sc.c
#: Planck constant, J s (exact)
H = sc.h
HBAR = sc.hbar
#: elementary charge, C (exact)
E_CHARGE = sc.e
K_B = sc.k
M_E = sc.m_e
M_P = sc.m_p
#: atomic mass constant, kg
M_U = sc.physical_constants["atomic mass constant"][0]
#: electron mass in u
M_E_U = sc.physical_constants["electron mass in u"][0]
ALPHA = sc.fine_structure
#: Rydberg constant R_inf, 1/m
R_INF = sc.Rydberg
#: R_inf c, Hz
R_INF_C_HZ = sc.physical_constants["Rydberg constant times c in Hz"][0]
#: Hartree energy, J
E_HARTREE = sc.physical_constants["Hartree energy"][0]
#: Bohr radius, m
A0 = sc.physical_constants["Bohr radius"][0]
#: reduced Compton wavelength of the electron, m
LAMBDA_C_BAR = sc.physical_constants["reduced Compton wavelength"][0]
EPS0 = sc.epsilon_0

#: 1 cm-1 in J
CM1_J = H * C * 100.0
#: 1 cm-1 in eV
CM1_EV = CM1_J / E_CHARGE
#: 1 cm-1 in Hz
CM1_HZ = C * 100.0
#: 1 eV in K
EV_K = E_CHARGE / K_B


def _codata_release() -> str:
    """Identify the CODATA adjustment shipped by the installed scipy.

    The electron mass changed in the last digits between adjustments; the
    values below are the published ones of each release.
    """
    me = sc.m_e
    known = {
        "2022": 9.1093837139e-31,  # CODATA 2022, Rev. Mod. Phys. 97, 025002
        "2018": 9.1093837015e-31,  # CODATA 2018, Rev. Mod. Phys. 93, 025010
        "2014": 9.10938356e-31,  # CODATA 2014, Rev. Mod. Phys. 88, 035009
    }
    for release, value in known.items():
        if abs(me - value) < 5e-41:
            return release
    return "unknown"


#: CODATA release of the constants in use ("2022", "2018", ...)
CODATA_RELEASE = _codata_release()

_NUMBER = r"[-+]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][-+]?[0-9]+)?"
_QUANTITY = re.compile(rf"^\s*({_NUMBER})\s*([A-Za-zµμÅ°/^\-0-9]*)\s*$")

# unit -> (dimension, factor to base unit)
# bases: length m, energy J, wavenumber m-1 handled via energy, temperature K,
# number density m-3
_UNITS: dict[str, tuple[str, float]] = {
    "nm": ("length", 1e-9),
    "um": ("length", 1e-6),
    "µm": ("length", 1e-6),
    "μm": ("length", 1e-6),
    "pm": ("length", 1e-12),
    "mm": ("length", 1e-3),
    "m": ("length", 1.0),
    "A": ("length", 1e-10),
    "Å": ("length", 1e-10),
    "angstrom": ("length", 1e-10),
    "eV": ("energy", E_CHARGE),
    "meV": ("energy", 1e-3 * E_CHARGE),
    "keV": ("energy", 1e3 * E_CHARGE),
    "J": ("energy", 1.0),
    "cm-1": ("energy", CM1_J),
    "cm^-1": ("energy", CM1_J),
    "/cm": ("energy", CM1_J),
    "K": ("temperature", 1.0),
    "m-3": ("density", 1.0),
    "m^-3": ("density", 1.0),
    "/m3": ("density", 1.0),
    "cm-3": ("density", 1e6),
    "cm^-3": ("density", 1e6),
    "/cm3": ("density", 1e6),
    "s": ("time", 1.0),
    "ns": ("time", 1e-9),
    "us": ("time", 1e-6),
    "ms": ("time", 1e-3),
    "Hz": ("frequency", 1.0),
    "kHz": ("frequency", 1e3),
    "MHz": ("frequency", 1e6),
    "GHz": ("frequency", 1e9),
    "THz": ("frequency", 1e12),
    "PHz": ("frequency", 1e15),
    "Pa": ("pressure", 1.0),
    "kPa": ("pressure", 1e3),
    "hPa": ("pressure", 1e2),
    "mbar": ("pressure", 1e2),
    "bar": ("pressure", 1e5),
    "Torr": ("pressure", 101325.0 / 760.0),
}

_BASE_NAMES = {
    "length": "m",
    "energy": "J",
    "temperature": "K",
    "density": "m-3",
    "time": "s",
    "pressure": "Pa",
    "frequency": "Hz",
}


def parse_quantity(text: str, dimension: str, default_unit: str | None = None) -> float:
    """Parse ``text`` as a number with a unit of ``dimension``; return it in base units.

    Parameters
    ----------
    text : str
        For example ``"656.3nm"``, ``"6563 A"``, ``"1.2eV"``, ``"1e18m-3"``.
    dimension : {"length", "energy", "temperature", "density", "time", "pressure", "frequency"}
        The dimension expected. A temperature may also be given in eV
        (``1eV`` = 11604.5 K, energy divided by Boltzmann's constant).
    default_unit : str, optional
        Unit assumed when ``text`` is a bare number; without it a bare number is an error.

    Returns
    -------
    float
        The value in the base unit of the dimension (m, J, K, m-3, s, Pa, Hz).

    Raises
    ------
    UnitError
        Unparseable number, unknown unit, wrong dimension, or a non-finite value.

    Examples
    --------
    >>> round(parse_quantity("656.3nm", "length") * 1e9, 6)
    656.3
    >>> round(parse_quantity("1eV", "temperature"))
    11605
    >>> parse_quantity("1e12cm-3", "density")
    1e+18
    """
    if not isinstance(text, str):
        raise UnitError(f"quantity must be text, got {type(text).__name__}")
    if dimension not in _BASE_NAMES:
        raise ValueError(f"unknown dimension {dimension!r}")
    match = _QUANTITY.match(text)
    if not match:
        raise UnitError(f"{text!r} is not a number followed by a unit (for example '656.3nm')")
    number_text, unit = match.group(1), match.group(2)
    value = float(number_text)
    if not math.isfinite(value):
        raise UnitError(f"{text!r} is not a finite number")
    if not unit:
        if default_unit is None:
            raise UnitError(f"{text!r} has no unit; write it with one, for example {_example(dimension)}")
        unit = default_unit
    if unit not in _UNITS:
        raise UnitError(f"{text!r}: unknown unit {unit!r}")
    unit_dim, factor = _UNITS[unit]
    if dimension == "temperature" and unit_dim == "energy":
        result = value * factor / K_B
    elif unit_dim != dimension:
        raise UnitError(f"{text!r}: {unit!r} is a unit of {unit_dim}, expected a {dimension}")
    else:
        result = value * factor
    if not math.isfinite(result):
        raise UnitError(f"{text!r} is too large a {dimension}")
    return result


def _example(dimension: str) -> str:
    return {
        "length": "'656.3nm'",
        "energy": "'1.2eV'",
        "temperature": "'15000K' or '1.2eV'",
        "density": "'1e18m-3'",
        "time": "'1.5ns'",
        "pressure": "'101325Pa'",
        "frequency": "'457THz'",
    }[dimension]


def wavelength_nm(text: str) -> float:
    """Parse a wavelength with a unit and return it in nm (``"6563A"`` -> 656.3)."""
    value = parse_quantity(text, "length") * 1e9
    if not math.isfinite(value):
        raise UnitError(f"{text!r} is too large a wavelength")
    return value


class SpectralValue(NamedTuple):
    """A position in a spectrum typed in any spectral unit, as a wavelength in nm."""

    #: the wavelength, nm
    nm: float
    #: True when typed as a length (so in the medium of the query); False for a wavenumber, energy or
    #: frequency, which name a vacuum wavelength
    is_length: bool


def spectral_nm(text: str) -> SpectralValue:
    """Parse a spectral position in any spectral unit and return its wavelength in nm.

    Lengths (nm, Å or A, µm or um, pm, mm, m) stay in the medium the query names;
    wavenumbers (cm-1), photon energies (eV, keV, meV, J) and frequencies (Hz to
    PHz) are converted to the vacuum wavelength hc/E, 1/σ or c/ν.

    Parameters
    ----------
    text : str
        For example ``"486nm"``, ``"4861A"``, ``"15200cm-1"``, ``"6.9keV"``, ``"616THz"``.

    Returns
    -------
    SpectralValue
        ``nm`` (the wavelength, nm) and ``is_length`` (False: a vacuum wavelength).

    Raises
    ------
    UnitError
        Unparseable text, an unknown unit or one of another dimension, zero or a negative value.

    Examples
    --------
    >>> round(spectral_nm("4861A").nm, 9), spectral_nm("4861A").is_length
    (486.1, True)
    >>> round(spectral_nm("15200cm-1").nm, 4), spectral_nm("15200cm-1").is_length
    (657.8947, False)
    >>> round(spectral_nm("6.9keV").nm, 6)
    0.179687
    """
    match = _QUANTITY.match(text) if isinstance(text, str) else None
    unit = match.group(2) if match else ""
    dimension = _UNITS.get(unit, ("length", 1.0))[0]
    if dimension not in ("length", "energy", "frequency"):
        raise UnitError(f"{text!r}: {unit!r} is a unit of {dimension}, expected a wavelength, wavenumber, "
                        "photon energy or frequency (486nm, 4861A, 20570cm-1, 2.55eV, 617THz)")
    value = parse_quantity(text, dimension)
    if value <= 0:
        raise UnitError(f"{text!r}: a {'wavelength' if dimension == 'length' else dimension} must be greater than zero")
    if dimension == "length":
        nm = value * 1e9
    elif dimension == "energy":
        nm = H * C / value * 1e9
    else:
        nm = C / value * 1e9
    if not math.isfinite(nm) or nm <= 0:
        raise UnitError(f"{text!r} is out of range")
    return SpectralValue(nm, dimension == "length")


def temperature_k(text: str) -> float:
    """Parse a temperature in K or eV and return it in K."""
    return parse_quantity(text, "temperature")


def density_m3(text: str) -> float:
    """Parse a number density in m-3 or cm-3 and return it in m-3."""
    return parse_quantity(text, "density")
