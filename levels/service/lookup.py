"""Which stored species a spectrum means: the service's choice of the default isotope.

A spectrum written without a mass number (``Li I``) means the element's default isotope
(:func:`levels.isotopes.default_isotope`: the most abundant, from ``periodictable``); where that
isotope is not stored and exactly one isotope of the ion is, that one. The store finds rows by the
mass number it is given (:func:`levels.store.queries.find_species`); the choice of isotope is made here,
so the store needs no isotope tables.
"""

from __future__ import annotations

from sqlalchemy.orm import Session

from levels.isotopes import default_isotope, isotope
from levels.notation import Spectrum
from levels.store import queries
from levels.store.schema import Species


def default_mass_number(spectrum: Spectrum) -> int | None:
    """The mass number a spectrum without one means (None when the spectrum names its isotope).

    >>> from levels.notation import parse_spectrum
    >>> default_mass_number(parse_spectrum("Li I")), default_mass_number(parse_spectrum("D I"))
    (7, None)
    """
    return None if spectrum.mass_number is not None else default_isotope(spectrum.z).mass_number


def find_species(session: Session, spectrum: Spectrum) -> Species | None:
    """The stored species a spectrum means, or None (the default isotope first; else the only one stored)."""
    return queries.find_species(session, spectrum, default_mass_number=default_mass_number(spectrum))


def require_species(session: Session, spectrum: Spectrum) -> Species:
    """Like :func:`find_species` but raise :class:`~levels.errors.NotFoundError` naming the stored isotopes."""
    return queries.require_species(session, spectrum, default_mass_number=default_mass_number(spectrum))


def get_or_create_species(session: Session, spectrum: Spectrum) -> Species:
    """The stored species a spectrum means, created (as the default isotope if none is named) when absent.

    Raises
    ------
    NotFoundError
        No mass is known for the isotope (:func:`levels.isotopes.isotope`).
    """
    found = find_species(session, spectrum)
    if found is not None:
        return found
    mass_number = spectrum.mass_number or default_isotope(spectrum.z).mass_number
    isotope(spectrum.z, mass_number)  # raises NotFoundError for an unknown isotope
    return queries.create_species(session, spectrum, mass_number)
