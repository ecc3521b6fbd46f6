"""Isotope masses: atomic and nuclear, for every isotope the reference library carries.

Atomic masses and natural abundances come from :mod:`periodictable` (which
carries the Atomic Mass Evaluation masses and IUPAC isotopic compositions).
The nuclear mass is the atomic mass minus Z electron masses plus the total
electron binding energy divided by c^2:

    M_nuc = M_atom - Z m_e + B_e(Z) / c^2

with B_e from the fit of Lunney, Pearson & Thibault (2003), from memory:
B_e(Z) = 14.4381 Z^2.39 + 1.55468e-6 Z^5.35 eV (within 5 % of the summed
ionization energies from He to Ag, tested;
for hydrogen it gives 14.4 eV instead of 13.6 eV, a mass error of 1e-9 u,
negligible in every use here).

The default isotope of an element is its most abundant one; for elements with
no natural abundance (Tc, Pm, Po, U in periodictable's table, ...), the isotope
whose mass number is nearest the library's standard atomic mass (for U that
gives 238, for Tc 98).

References
----------
D. Lunney, J. M. Pearson, C. Thibault, "Recent trends in the determination of
nuclear masses", Rev. Mod. Phys. 75, 1021 (2003), Eq. (A4).
P. A. Kienzle, periodictable (Python package), isotope masses from the Atomic
Mass Evaluation.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache

import periodictable

from levels.errors import NotationError, NotFoundError
from levels.notation import Z_MAX, element_symbol
from levels.physics.one_electron.nuclear import electron_binding_energy_ev
from levels.physics.one_electron.nuclear import nuclear_mass_u as _nuclear_mass_u
from levels.units import E_CHARGE, M_U, C

#: 1 eV/c^2 in u
EV_IN_U = E_CHARGE / (C**2 * M_U)


@dataclass(frozen=True)
class Isotope:
    """One isotope: Z, A, atomic mass, nuclear mass (u) and natural abundance (percent)."""

    z: int
    mass_number: int
    atomic_mass_u: float
    nuclear_mass_u: float
    abundance_percent: float

    @property
    def label(self) -> str:
        """``"Fe-56"``."""
        return f"{element_symbol(self.z)}-{self.mass_number}"


def electron_binding_ev(z: int) -> float:
    """Total electron binding energy of the neutral atom, eV (see :mod:`levels.physics.one_electron.nuclear`)."""
    return electron_binding_energy_ev(z)


def nuclear_mass_u(atomic_mass_u: float, z: int) -> float:
    """Nuclear mass in u from the atomic mass: ``M_atom - Z m_e + B_e/c^2``."""
    return _nuclear_mass_u(z, atomic_mass_u)


def _element(z: int):
    if not isinstance(z, int) or not 1 <= z <= Z_MAX:
        raise NotationError(f"atomic number {z!r} is outside 1..{Z_MAX}")
    return periodictable.elements[z]


@cache
def isotopes_of(z: int) -> tuple[Isotope, ...]:
    """All isotopes of element ``z`` with a known mass, lightest first."""
    element = _element(z)
    out = []
    for iso in element:
        mass = getattr(iso, "mass", None)
        if mass is None or mass <= 0:
            continue
        out.append(Isotope(z, int(iso.isotope), float(mass), nuclear_mass_u(float(mass), z),
                           float(iso.abundance or 0.0)))
    return tuple(out)


def isotope(z: int, mass_number: int | None = None) -> Isotope:
    """The isotope (Z, A); with ``mass_number=None`` the default isotope of the element.

    Raises
    ------
    NotFoundError
        The reference library has no mass for that isotope.

    Examples
    --------
    >>> isotope(1, 2).label
    'H-2'
    >>> isotope(92).mass_number
    238
    """
    if mass_number is None:
        return default_isotope(z)
    for iso in isotopes_of(z):
        if iso.mass_number == mass_number:
            return iso
    known = [i.mass_number for i in isotopes_of(z)]
    span = f"{known[0]}..{known[-1]}" if known else "none"
    raise NotFoundError(f"no mass known for {element_symbol(z)}-{mass_number} (known mass numbers: {span})")


@cache
def default_isotope(z: int) -> Isotope:
    """Most abundant isotope; where no abundance is known, the one nearest the standard atomic mass."""
    isotopes = isotopes_of(z)
    if not isotopes:
        raise NotFoundError(f"no isotope masses known for {element_symbol(z)}")
    abundant = [i for i in isotopes if i.abundance_percent > 0]
    if abundant:
        return max(abundant, key=lambda i: i.abundance_percent)
    standard = float(_element(z).mass)
    return min(isotopes, key=lambda i: (abs(i.mass_number - standard), i.mass_number))
