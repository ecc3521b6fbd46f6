"""The service contract: what front ends send to and get from the service floor.

Typed requests (:class:`LineQuery`, which names its species by a :class:`~levels.notation.Spectrum`), reports
(:class:`ImportReport`), typed rows (:class:`SpeciesRow`, :class:`LevelRow`, :class:`LineRow`: the contract's
columns first, then values the front ends use instead of parsing texts) and the columns of every row shape
(species, levels, lines, emission, samples), defined once; :mod:`levels.catalog` re-exports them so older
imports keep working.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TypedDict

from levels.io import records as level_io
from levels.isotopes import default_isotope
from levels.notation import Spectrum, parse_spectrum
from levels.service.vocabulary import DEFAULT_MEDIUM
from levels.store.columns import LINE_LEVEL_VALUE_KEYS  # noqa: F401 (part of the contract: LineRow's values)

SPECIES_COLUMNS = ("spectrum", "z", "charge", "mass_number", "levels", "lines", "ionization_cm1",
                   "ionization_unc_cm1", "datasets")
LEVEL_COLUMNS = level_io.LEVEL_COLUMNS
#: keys a :class:`LevelRow` carries after :data:`LEVEL_COLUMNS`: quantum numbers as values (not output columns)
LEVEL_VALUE_KEYS = ("two_j", "multiplicity", "L")
LEVEL_UNITS = {"energy_cm1": "cm-1", "unc_cm1": "cm-1", "lifetime_s": "s"}
LINE_COLUMNS = ("spectrum", "lower", "upper", "lower_cm1", "upper_cm1", "wavenumber_cm1", "vacuum_nm", "air_nm",
                "multipole", "a_per_s", "f_abs", "line_strength_au", "g_lower", "g_upper", "unc_nm", "dataset")
EMISSION_COLUMNS = LINE_COLUMNS + ("rel_intensity", "photon_share")
#: trailing columns of a line list (after LINE_COLUMNS): the observed wavelength of a measured line, the
#: Ritz wavelength from its two levels, and observed - Ritz; all in the listing's medium (air above 200 nm
#: when the medium is air, else vacuum), empty where the line has no observed wavelength
RITZ_COLUMNS = ("obs_nm", "ritz_nm", "obs_minus_ritz_nm")
#: and the customary name of a hydrogen line (H I, D I, T I: "Hα", "Lyβ"; empty otherwise)
LINE_LIST_COLUMNS = LINE_COLUMNS + RITZ_COLUMNS + ("line_name",)
LINE_UNITS = {"lower_cm1": "cm-1", "upper_cm1": "cm-1", "wavenumber_cm1": "cm-1", "vacuum_nm": "nm", "air_nm": "nm",
              "a_per_s": "s-1", "line_strength_au": "e2 a0^2", "unc_nm": "nm", "obs_nm": "nm", "ritz_nm": "nm",
              "obs_minus_ritz_nm": "nm"}
LINE_HEADINGS = {"lower_cm1": "lower [cm-1]", "upper_cm1": "upper [cm-1]", "wavenumber_cm1": "σ [cm-1]",
                 "vacuum_nm": "λ vac [nm]", "air_nm": "λ air [nm]", "a_per_s": "A [s-1]", "f_abs": "f",
                 "line_strength_au": "S [au]", "unc_nm": "unc [nm]", "obs_nm": "observed [nm]",
                 "ritz_nm": "Ritz [nm]", "obs_minus_ritz_nm": "obs - Ritz [nm]", "line_name": "name"}
MULTIPOLE_CODES = ("E1", "M1", "E2", "M2", "E3", "2E1")
#: default refusal limit of a computed dataset's rows (2 GB)
DEFAULT_MAX_STORE_BYTES = 2_000_000_000
SAMPLE_CONDITION_FIELDS = ("description", "gas_fill", "pressure_pa", "current_a", "instrument", "te_k", "ne_m3",
                           "tgas_k", "path_length_m")


class SpeciesRow(TypedDict):
    """A species as the service returns it: the :data:`SPECIES_COLUMNS` first, in that order, then values for
    the front ends: ``dataset_names`` (the datasets of the ``datasets`` text, as a tuple) and ``all_limits``
    (every stored ionization limit in words, first the one that holds)."""

    spectrum: str
    z: int
    charge: int
    mass_number: int
    levels: int
    lines: int
    ionization_cm1: float | None
    ionization_unc_cm1: float | None
    datasets: str
    dataset_names: tuple[str, ...]
    all_limits: str


class LevelRow(TypedDict):
    """A level as the service returns it: the :data:`LEVEL_COLUMNS` first, in that order (the contract users
    script against; every writer selects exactly these), then the level's quantum numbers as values
    (:data:`LEVEL_VALUE_KEYS`), so that no front end has to parse them back out of the texts.

    ``j`` is the text of J (``"3/2"``, empty when unresolved), ``parity`` +1 (even) or -1 (odd); energies in cm-1,
    ``lifetime_s`` in s. ``two_j`` is 2J (None when J is not resolved); ``multiplicity`` (2S+1) and ``L`` are
    those of the LS term (None for a jK-coupled or unknown term).
    """

    spectrum: str
    label: str
    configuration: str
    term: str
    j: str
    parity: int
    energy_cm1: float
    unc_cm1: float | None
    g: int | None
    n: int | None
    l: int | None
    lifetime_s: float | None
    lande_g: float | None
    dataset: str
    two_j: int | None
    multiplicity: int | None
    L: int | None


class LineRow(TypedDict, total=False):
    """A line as the service returns it: the :data:`LINE_LIST_COLUMNS` (energies cm-1, wavelengths nm, A in s-1,
    S in atomic units e^2 a0^2; every writer selects exactly these), then values for the front ends.

    Every row carries the quantum numbers of its two levels (:data:`LINE_LEVEL_VALUE_KEYS`: 2J, parity, and 2S+1
    and L of an LS term, None where the level has none) and their ids. A stored line's row also has its ``id``,
    ``observed_nm``, ``medium``, ``intensity`` and ``note``; a row of the line engine has the levels' lifetimes,
    the observed wavelengths of a measured line of the same pair (``obs_vacuum_nm``, ``obs_air_nm``) and the
    datasets it draws on (``source_datasets``).
    """

    spectrum: str
    lower: str
    upper: str
    lower_cm1: float
    upper_cm1: float
    wavenumber_cm1: float
    vacuum_nm: float
    air_nm: float | None
    multipole: str
    a_per_s: float | None
    f_abs: float | None
    line_strength_au: float | None
    g_lower: int | None
    g_upper: int | None
    unc_nm: float | None
    dataset: str
    obs_nm: float | None
    ritz_nm: float | None
    obs_minus_ritz_nm: float | None
    line_name: str | None
    # values after the columns
    lower_two_j: int | None
    upper_two_j: int | None
    lower_parity: int
    upper_parity: int
    lower_multiplicity: int | None
    upper_multiplicity: int | None
    lower_L: int | None
    upper_L: int | None
    lower_id: int
    upper_id: int
    id: int
    observed_nm: float | None
    medium: str | None
    intensity: float | None
    note: str | None
    lower_lifetime_s: float | None
    upper_lifetime_s: float | None
    obs_vacuum_nm: float | None
    obs_air_nm: float | None
    source_datasets: tuple[str, ...]
    # a multiplet's row (levels.service.line_selection.merge_multiplets: lower and upper are terms): sum of g_l f,
    # number of components, and how its wavenumber was averaged
    gf: float | None
    members: int
    weighting: str


def spectrum_text(spectrum: Spectrum) -> str:
    """Spectrum notation, with the mass number only where it is not the element's default isotope's (the one a
    name without it means): ``Li I`` for lithium 7 as for plain ``Li I``, ``He II A=3``, ``D I``.

    >>> spectrum_text(Spectrum(3, 0, 7)), spectrum_text(Spectrum(3, 0)), spectrum_text(Spectrum(2, 1, 3))
    ('Li I', 'Li I', 'He II A=3')
    """
    if spectrum.mass_number is None or spectrum.mass_number == default_isotope(spectrum.z).mass_number:
        return spectrum.name
    return spectrum.isotope_name


@dataclass(frozen=True)
class LineQuery:
    """A line-list request: species (None = all), window, medium, filters, order and page.

    ``spectrum`` is a :class:`levels.notation.Spectrum` (with its mass number, an isotope that is not the
    default one is reached too); spectrum notation (``"He II"``, ``"C5+"``, ``"He II A=3"``) is parsed into one.
    The window ``from_nm``-``to_nm`` is in ``medium`` (default :data:`levels.service.vocabulary.DEFAULT_MEDIUM`:
    air at and above 200 nm, vacuum below).

    >>> LineQuery(spectrum="C5+").spectrum.name, LineQuery().medium
    ('C VI', 'air')
    """

    spectrum: Spectrum | None = None
    from_nm: float | None = None
    to_nm: float | None = None
    medium: str = DEFAULT_MEDIUM
    multipoles: tuple[str, ...] | None = None
    min_a: float | None = None
    max_upper_cm1: float | None = None
    datasets: tuple[str, ...] | None = None
    order: str = "wavelength"
    limit: int | None = None
    offset: int = 0

    def __post_init__(self) -> None:
        if isinstance(self.spectrum, str):
            object.__setattr__(self, "spectrum", parse_spectrum(self.spectrum))

    def describe(self) -> str:
        """The query in words for export headers."""
        parts = [f"lines {spectrum_text(self.spectrum) if self.spectrum is not None else '(all species)'}"]
        if self.from_nm is not None or self.to_nm is not None:
            upper = "inf" if self.to_nm is None else f"{self.to_nm:.10g}"
            parts.append(f"window {self.from_nm or 0:.10g}-{upper} nm {self.medium}")
        if self.multipoles:
            parts.append("multipoles " + ",".join(self.multipoles))
        if self.min_a is not None:
            parts.append(f"A >= {self.min_a:g} s-1")
        if self.max_upper_cm1 is not None:
            parts.append(f"upper <= {self.max_upper_cm1:g} cm-1")
        parts.append(f"order {self.order}")
        return "; ".join(parts)


@dataclass
class ImportReport:
    """What an import wrote."""

    source: str
    kind: str
    dataset: str
    dataset_id: int
    sample: str | None
    species: list[str]
    levels: int = 0
    lines: int = 0
    warnings: list[str] = field(default_factory=list)
