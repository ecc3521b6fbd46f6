"""The Python API: a store opened from Python, with methods that mirror the command line.

``levels.open_store(db)`` takes the same store names as ``--db`` (a SQLite file
path, a ``sqlite:///`` or ``postgresql+psycopg://`` URL, or None for the default
SQLite file in the user data directory) and returns a :class:`Store`. Its
methods return :class:`astropy.table.QTable` tables whose columns are those of
the command line's exports, in the same order, with astropy units on every
physical column (``.to_pandas()`` gives a pandas frame). Missing values of
numeric columns (an unknown Einstein A, no air wavelength below 200 nm) are NaN.
Every table carries the export header of the command line in
``table.meta["provenance"]``.

Quantities are taken as astropy Quantities (``460 * u.nm``, ``1 * u.eV``) or as
text with a unit (``"460nm"``, ``"4600A"``, ``"1.2eV"``, ``"1e18m-3"``), parsed
by :mod:`levels.units`. Bare numbers are refused where a unit matters.

This module is a front end: it calls the service layer (:mod:`levels.catalog`,
:mod:`levels.service`) and never the store or the physics directly.

Examples
--------
>>> import tempfile, pathlib, levels
>>> folder = pathlib.Path(tempfile.mkdtemp())
>>> store = levels.open_store(folder / "lab.sqlite")
>>> store.init()
>>> store.hydrogenic("H I", n_max=3)["levels"]
9
>>> lines = store.lines("H I", window=("600nm", "700nm"))
>>> lines["air_nm"].unit
Unit("nm")
>>> store.close()
"""

from __future__ import annotations

import importlib
import importlib.util
import math
import os
import warnings
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from astropy import constants as const
from astropy import units as u
from astropy.table import QTable

from levels.catalog import Catalog
from levels.errors import LevelsError, UnitError
from levels.notation import parse_spectrum
from levels.service.contract import (
    EMISSION_COLUMNS,
    LEVEL_COLUMNS,
    LINE_COLUMNS,
    LINE_LIST_COLUMNS,
    SPECIES_COLUMNS,
    ImportReport,
    LineQuery,
)
from levels.service.line_selection import MULTIPLET_EXTRA_COLUMNS, MULTIPLETS_NOTE, filter_lines, merge_multiplets
from levels.service.lines import add_ritz_columns
from levels.service.vocabulary import (
    DEFAULT_AIR_FORMULA,
    DEFAULT_MEDIUM,
    add_spectral_column,
    air_formula_code,
    air_formula_description,
    air_wavelengths,
    medium_statement,
)
from levels.units import parse_quantity, spectral_nm

__all__ = ["open_store", "Store", "EmissionReport", "RatesResult", "LINE_STRENGTH_AU", "RatesUnavailableError",
           "COLUMN_UNITS"]

#: the atomic unit of line strength, (e a0)^2
LINE_STRENGTH_AU = u.def_unit("e2_a0_2", (const.e.si * const.a0) ** 2,
                              doc="atomic unit of the line strength S, (e a0)^2")
#: astropy unit of every physical column of the tables (columns not named are text or counts)
COLUMN_UNITS: dict[str, u.UnitBase] = {
    "energy_cm1": u.cm ** -1, "unc_cm1": u.cm ** -1, "lifetime_s": u.s,
    "ionization_cm1": u.cm ** -1, "ionization_unc_cm1": u.cm ** -1,
    "lower_cm1": u.cm ** -1, "upper_cm1": u.cm ** -1, "wavenumber_cm1": u.cm ** -1,
    "vacuum_nm": u.nm, "air_nm": u.nm, "unc_nm": u.nm, "a_per_s": u.s ** -1,
    "f_abs": u.dimensionless_unscaled, "line_strength_au": LINE_STRENGTH_AU,
    "lande_g": u.dimensionless_unscaled, "rel_intensity": u.dimensionless_unscaled,
    "photon_share": u.dimensionless_unscaled,
    "a_rel_unc": u.dimensionless_unscaled, "lifetime_rel_unc": u.dimensionless_unscaled,
    "obs_nm": u.nm, "ritz_nm": u.nm, "obs_minus_ritz_nm": u.nm, "gf": u.dimensionless_unscaled,
    # the position column in the unit asked (Store.lines(unit=...))
    "wavelength_nm": u.nm, "wavelength_angstrom": u.AA, "wavelength_um": u.um, "photon_energy_ev": u.eV,
    "photon_energy_kev": u.keV, "frequency_hz": u.Hz,
}
#: columns that hold whole numbers (kept as integers; missing ones become -1)
INTEGER_COLUMNS = ("z", "charge", "mass_number", "levels", "lines", "g", "n", "l", "parity", "g_lower", "g_upper",
                   "members")
#: spectral radiance unit of the sampled emission spectrum
RADIANCE_UNIT = u.W / u.m ** 3 / u.sr / u.nm


class RatesUnavailableError(LevelsError, NotImplementedError):
    """The rates of many-electron species (``levels rates``) are not available in this version."""


class CautionWarning(UserWarning):
    """A safety caution of a result (for example ultraviolet output of a lamp)."""


# ----------------------------------------------------------------- quantities

def _quantity(value: Any, name: str, unit: u.UnitBase, dimension: str, *, equivalencies=None) -> float:
    """``value`` (Quantity or text with a unit) as a float in ``unit``."""
    if isinstance(value, u.Quantity):
        try:
            converted = value.to_value(unit, equivalencies=equivalencies or [])
        except u.UnitConversionError as exc:
            raise UnitError(f"{name}: {value} is not a {dimension}: {exc}") from None
        if np.ndim(converted) != 0:
            raise UnitError(f"{name}: give one value, not an array")
        result = float(converted)
    elif isinstance(value, str) and dimension in _BASE_UNITS:
        base = parse_quantity(value, "frequency" if dimension == "rate" else dimension)
        result = float((base * _BASE_UNITS[dimension]).to_value(unit, equivalencies=equivalencies or []))
    else:
        raise UnitError(f"{name}: give a quantity with a unit, e.g. an astropy Quantity or text like "
                        f"{_EXAMPLES[dimension]!r}; got {value!r}")
    if not math.isfinite(result):
        raise UnitError(f"{name}: {value!r} is not finite")
    return result


_EXAMPLES = {"length": "460nm", "energy": "5eV", "temperature": "1.2eV", "density": "1e18m-3",
             "pressure": "1000Pa", "rate": "1e3Hz"}
#: SI base unit in which levels.units.parse_quantity returns each dimension ("rate" is read as a frequency)
_BASE_UNITS = {"length": u.m, "energy": u.J, "temperature": u.K, "density": u.m ** -3, "pressure": u.Pa,
               "rate": u.s ** -1}


def _wavelength_nm(value: Any, name: str) -> float | None:
    if value is None:
        return None
    return _quantity(value, name, u.nm, "length", equivalencies=u.spectral())


def _window_bound(value: Any, name: str, medium: str) -> tuple[float, bool] | None:
    """One window bound in any spectral unit: (wavelength in nm in ``medium``, typed as a length).

    Wavenumbers, energies and frequencies name vacuum wavelengths; in an air window they are
    re-expressed in air (above the 200 nm floor) with the default air formula.
    """
    if value is None:
        return None
    if isinstance(value, str):
        try:
            bound = spectral_nm(value)
        except UnitError as exc:
            raise UnitError(f"{name}: {exc}") from None
        nm: float | None = bound.nm
        is_length = bound.is_length
    else:
        nm = _wavelength_nm(value, name)
        is_length = isinstance(value, u.Quantity) and value.unit.physical_type == "length"
    if nm is None or not nm > 0:
        raise UnitError(f"{name}: {value!r} must be a positive spectral position")
    if medium == "air" and not is_length:
        air = float(air_wavelengths([nm], DEFAULT_AIR_FORMULA)[0])
        nm = air if math.isfinite(air) else nm
    return nm, is_length


def _window(window: Any, medium: str = "vacuum") -> tuple[float | None, float | None]:
    """A window given as (from, to) - quantities, text or None - or as one Quantity array of two.

    Either end may be in any spectral unit (``"6.9keV"``, ``"15200cm-1"``, ``"617THz"``, ``4861 * u.AA``);
    bounds that are not lengths may come in either order.
    """
    if window is None:
        return None, None
    if isinstance(window, u.Quantity):
        if window.shape != (2,):
            raise UnitError("window: give two wavelengths, (from, to)")
        window = (window[0], window[1])
    if isinstance(window, str) or not isinstance(window, Sequence) or len(window) != 2:
        raise UnitError("window: give two wavelengths, (from, to), e.g. ('400nm', '700nm')")
    first = _window_bound(window[0], "window[0]", medium)
    second = _window_bound(window[1], "window[1]", medium)
    lo = first[0] if first else None
    hi = second[0] if second else None
    if lo is not None and hi is not None and first and second and not (first[1] and second[1]) and lo > hi:
        lo, hi = hi, lo
    return lo, hi


def _per_second(value: Any, name: str) -> float | None:
    if value is None:
        return None
    if isinstance(value, u.Quantity):
        return _quantity(value, name, u.s ** -1, "rate")
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return float(value)  # the name says s-1, as the CLI's --min-a
    raise UnitError(f"{name}: give a number of s-1 or a Quantity, got {value!r}")


_EXAMPLES["rate"] = "1e6 / u.s"


# ----------------------------------------------------------------- tables

def _column(name: str, values: list) -> Any:
    if name in COLUMN_UNITS:
        array = np.array([np.nan if v is None or v == "" else float(v) for v in values], dtype=float)
        return array * COLUMN_UNITS[name]
    if name in INTEGER_COLUMNS:
        if all(isinstance(v, (int, np.integer)) and not isinstance(v, bool) for v in values):
            return np.array(values, dtype=np.int64)
        return np.array([-1 if v is None or v == "" else int(v) for v in values], dtype=np.int64)
    return np.array(["" if v is None else str(v) for v in values], dtype=str) if values else np.array([], dtype=str)


def rows_to_table(rows: Sequence[Mapping], columns: Sequence[str], provenance: Mapping | None = None) -> QTable:
    """A QTable of ``rows`` with ``columns`` in order, units on the physical columns.

    Parameters
    ----------
    rows : sequence of mapping
        Rows of a service call (as the command line exports them).
    columns : sequence of str
        Column names, in order.
    provenance : mapping, optional
        The export header (tool, store, datasets, query ...), kept in ``meta["provenance"]``.

    Returns
    -------
    astropy.table.QTable

    Examples
    --------
    >>> t = rows_to_table([{"vacuum_nm": 656.47, "a_per_s": None, "lower": "2p 2P°1/2"}],
    ...                   ("lower", "vacuum_nm", "a_per_s"))
    >>> t["vacuum_nm"].unit, bool(np.isnan(t["a_per_s"][0].value))
    (Unit("nm"), True)
    """
    table = QTable({name: _column(name, [row.get(name) for row in rows]) for name in columns})
    table.meta["provenance"] = dict(provenance or {})
    return table


@dataclass
class EmissionReport:
    """What :meth:`Store.emission` returns.

    Attributes
    ----------
    lines : QTable
        Line rows of the window with ``rel_intensity`` and ``photon_share`` (dimensionless).
    spectrum : QTable
        The sampled synthetic spectrum: ``wavelength`` (nm, in ``medium``) and either
        ``emission_coefficient`` (W m-3 sr-1 nm-1, optically thin) or ``spectral_radiance``
        (W m-2 sr-1 nm-1, through a slab of the given path length).
    metrics : dict
        Lamp metrics (CIE 1931 x, y; CIE 1976 u', v'; CCT in K and Duv or None; efficacy in lm/W;
        UV-C, UV-B, UV-A, visible and IR power shares).
    conditions : dict
        Te (K), ne (m-3), Tgas (K), the partition-function cutoff, the model and the datasets used.
    warnings : list of str
        Warnings and safety cautions (cautions are also issued as :class:`CautionWarning`).
    """

    lines: QTable
    spectrum: QTable
    metrics: dict
    conditions: dict
    warnings: list[str] = field(default_factory=list)
    #: "lte" or "cr"
    model: str = "lte"
    #: per level: label, energy_cm1, population_rel (per ground-state population), departure (over Boltzmann)
    populations: list[dict] = field(default_factory=list)
    #: the LTE criterion (McWhirter 1965): lte_min_ne_m3 and lte_holds
    validity: dict = field(default_factory=dict)


@dataclass
class RatesResult:
    """What :meth:`Store.rates` returns.

    Attributes
    ----------
    lines : QTable
        ``lower, upper, vacuum_nm [nm], multipole, a_per_s [1/s], a_rel_unc, f_abs,
        line_strength_au [(e a0)^2]``.
    levels : QTable
        ``label, lifetime_s [s], lifetime_rel_unc``.
    method : str
        The method used (``auto`` resolves per configuration).
    datasets : list of str
        Datasets whose levels were used.
    skipped : list of dict
        Levels left out, each with its ``label`` and ``reason``.
    warnings : list of str
    saved_as : str or None
        The computed dataset written (None when not saved).
    ionization : Quantity or None
        The ionization limit used (1/cm); ``ionization_source`` says whether stored or fitted.
    """

    lines: QTable
    levels: QTable
    method: str
    datasets: list[str]
    skipped: list[dict] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    saved_as: str | None = None
    ionization: Any = None
    ionization_source: str = ""


# ----------------------------------------------------------------- the store

def open_store(db: str | os.PathLike | None = None, *, actor: str | None = None) -> Store:
    """Open a store, as ``levels --db`` does.

    Parameters
    ----------
    db : str or path-like, optional
        A SQLite file path, a SQLAlchemy URL (``sqlite:///...``,
        ``postgresql+psycopg://user@127.0.0.1/db``); default: environment
        ``LEVELS_DB`` when set, else the SQLite file in the user data directory
        (``levels where`` prints it).
    actor : str, optional
        Who writes (recorded in the audit log); default the OS user.

    Returns
    -------
    Store
        Close it with :meth:`Store.close` or use it in a ``with`` block.

    Raises
    ------
    StoreError
        A malformed URL or an unsupported backend.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> with open_store(pathlib.Path(tempfile.mkdtemp()) / "x.sqlite") as store:
    ...     store.init()
    ...     len(store.species())
    0
    """
    if db is None:
        db = os.environ.get("LEVELS_DB") or None
    return Store(Catalog(db, actor=actor))


class Store:
    """One store, with methods that mirror the command line (see :func:`open_store`)."""

    def __init__(self, catalog: Catalog):
        self._catalog = catalog

    # ------------------------------------------------------------- plumbing
    @property
    def url(self) -> str:
        """The store's SQLAlchemy URL."""
        return self._catalog.url

    @property
    def display_url(self) -> str:
        """The URL with any password hidden."""
        return self._catalog.display_url

    def __repr__(self) -> str:
        return f"<levels store {self.display_url}>"

    def close(self) -> None:
        """Release the store's connections."""
        self._catalog.close()

    def __enter__(self) -> Store:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def init(self) -> None:
        """Create the store, or upgrade its schema (``levels init``)."""
        self._catalog.init()

    # ------------------------------------------------------------- writes
    def hydrogenic(self, spectrum: str, *, n_max: int = 20, mass_number: int | None = None,
                   fine_structure: bool = True) -> dict:
        """Compute a one-electron ion into the store (``levels hydrogenic``).

        Parameters
        ----------
        spectrum : str
            ``"H I"``, ``"D I"``, ``"He II"``, ... ``"U XCII"``.
        n_max : int
            Highest principal quantum number (1..1000).
        mass_number : int, optional
            Isotope (default: the spectrum's own, D/T, or the most abundant).
        fine_structure : bool
            Levels n l j (True) or nl terms (False).

        Returns
        -------
        dict
            ``dataset``, ``spectrum``, ``mass_number``, ``levels`` and ``lines`` (counts),
            ``ionization_cm1`` (cm-1) and the corrections applied.
        """
        return self._catalog.compute_hydrogenic(spectrum, n_max=n_max, mass_number=mass_number,
                                                fine_structure=fine_structure)

    def import_file(self, path: str | os.PathLike, sample: str | None = None, *, dataset: str | None = None,
                    kind: str = "measured", citation: str = "") -> dict:
        """Import measured levels or lines from a file as a new dataset, all-or-nothing (``levels import``).

        Parameters
        ----------
        path : str or path-like
            A levels file or a measured-lines file (the header tells which).
        sample : str, optional
            Attach the dataset to this lab sample (created if new).
        dataset : str, optional
            Name of the new dataset (default: from the file name).
        kind : {"measured", "imported"}
            ``imported`` for values from the literature (give ``citation``).
        citation : str
            Where the values come from.

        Returns
        -------
        dict
            ``dataset``, ``dataset_id``, ``kind``, ``sample``, ``species``, ``levels``, ``lines``, ``warnings``.

        Raises
        ------
        InputFileError
            Every problem of the file, with file, line and field; nothing is written.
        """
        report: ImportReport = self._catalog.import_file(path, sample=sample, dataset=dataset, kind=kind,
                                                         citation=citation)
        return {"source": report.source, "dataset": report.dataset, "dataset_id": report.dataset_id,
                "kind": report.kind, "sample": report.sample, "species": list(report.species),
                "levels": report.levels, "lines": report.lines, "warnings": list(report.warnings)}

    # ------------------------------------------------------------- reads
    def species(self) -> QTable:
        """The stored species with counts and ionization energy (``levels species``).

        Returns
        -------
        QTable
            Columns ``spectrum, z, charge, mass_number, levels, lines, ionization_cm1 [1/cm],
            ionization_unc_cm1 [1/cm], datasets``.
        """
        rows = self._catalog.species_rows()
        return rows_to_table(rows, SPECIES_COLUMNS, self._catalog.provenance("species"))

    def levels(self, spectrum: str, *, datasets: Sequence[str] | None = None) -> QTable:
        """The levels of a species under a precedence of datasets (``levels show``).

        Parameters
        ----------
        spectrum : str
            Spectrum notation (``"Na I"``, ``"He II"``, ``"C5+"``).
        datasets : sequence of str, optional
            Datasets in order of precedence (default: measured, imported, computed).

        Returns
        -------
        QTable
            Columns ``spectrum, label, configuration, term, j, parity, energy_cm1 [1/cm], unc_cm1 [1/cm],
            g, n, l, lifetime_s [s], lande_g, dataset``, by energy.
        """
        rows = self._catalog.level_rows(spectrum, list(datasets) if datasets else None)
        used = sorted({r["dataset"] for r in rows})
        return rows_to_table(rows, LEVEL_COLUMNS, self._catalog.provenance(f"show {spectrum}", used))

    def lines(self, spectrum: str | None = None, window: Any = None, medium: str = DEFAULT_MEDIUM,
              multipoles: Sequence[str] = ("E1",), min_a: Any = None, *, max_upper: Any = None,
              datasets: Sequence[str] | None = None, order: str = "wavelength", limit: int | None = None,
              air_formula: str = DEFAULT_AIR_FORMULA, lower: str | None = None, series: str | None = None,
              name: str | None = None, multiplets: bool = False, unit: str | None = None) -> QTable:
        """A line list (``levels lines``).

        With ``spectrum``, every line the selection rules allow between the species'
        levels (Ritz wavelengths, stored rates merged); without it, the stored lines
        of every species in ``window`` (a line finder, which needs a window).

        Parameters
        ----------
        spectrum : str, optional
            Spectrum notation; None searches all species.
        window : (from, to), optional
            Wavelengths with units (``("400nm", "700nm")``, ``[400, 700] * u.nm``) in ``medium``;
            either end may be None. Below 200 nm a window is in vacuum by convention. Ends may also be
            wavenumbers, photon energies or frequencies (``("15200cm-1", "16000cm-1")``, ``"6.9keV"``,
            ``617 * u.THz``): they name vacuum wavelengths, converted to ``medium``.
        medium : {"air", "vacuum"}
            Medium of the window and of the position column: ``"air"`` (the default of every front end)
            means air at and above 200 nm, vacuum below; ``meta["provenance"]["medium"]`` says it in words.
        multipoles : sequence of str
            Any of ``"E1", "M1", "E2"``.
        min_a : float or Quantity, optional
            Smallest Einstein A (s-1; lines without a known A are left out).
        unit : str, optional
            Add the position column in this unit (``"Å"``, ``"µm"``, ``"cm-1"``, ``"eV"``, ``"keV"``,
            ``"Hz"``, ``"nm"``; ``"A"`` and ``"um"`` accepted): ``wavelength_angstrom [Angstrom]``,
            ``wavelength_um``, ``wavenumber_cm1``, ``photon_energy_ev``, ``photon_energy_kev``,
            ``frequency_hz`` or ``wavelength_nm`` (lengths in ``medium``). Every physical column carries
            its astropy unit, so ``table["vacuum_nm"].to(u.eV, u.spectral())`` works as well.
        max_upper : str or Quantity, optional
            Highest upper-level energy (``"50000cm-1"``, ``"6.2eV"``).
        datasets : sequence of str, optional
            Datasets in order of precedence.
        order : {"wavelength", "strength", "a"}
            Sort order.
        limit : int, optional
            At most this many lines.
        air_formula : {"morton2000", "edlen1966", "ciddor1996"}
            Formula of the air wavelengths (``"iau2000"`` is accepted as an alias of ``"morton2000"``).
        lower, series, name : str, optional
            Keep lines whose lower level matches ``lower``, whose upper level matches the series
            pattern ``series`` (``"np 2P°3/2"``), whose customary name is ``name`` (as ``levels lines
            --lower/--series/--name``).
        multiplets : bool
            Sum fine-structure components into multiplets (``--multiplets``).

        Returns
        -------
        QTable
            The columns of ``levels lines`` (``spectrum, lower, upper, lower_cm1 [1/cm], upper_cm1,
            wavenumber_cm1, vacuum_nm [nm], air_nm [nm], multipole, a_per_s [1/s], f_abs,
            line_strength_au [(e a0)^2], g_lower, g_upper, unc_nm [nm], dataset``, then ``obs_nm,
            ritz_nm, obs_minus_ritz_nm`` [nm] and ``line_name``; with ``multiplets`` the line-list
            columns and ``gf, members, weighting``).

        Raises
        ------
        PhysicsInputError
            A bad window, medium, multipole or order.
        UnitError
            A quantity without a unit or of the wrong kind.
        """
        air_formula = air_formula_code(air_formula)
        from_nm, to_nm = _window(window, medium)
        query = LineQuery(spectrum=None if spectrum is None else parse_spectrum(spectrum), from_nm=from_nm,
                          to_nm=to_nm, medium=medium,
                          multipoles=tuple(m.strip().upper() for m in multipoles), min_a=_per_second(min_a, "min_a"),
                          max_upper_cm1=None if max_upper is None else _quantity(
                              max_upper, "max_upper", u.cm ** -1, "energy", equivalencies=u.spectral()),
                          datasets=tuple(datasets) if datasets else None, order=order,
                          limit=None if (lower or series or name) else limit)
        if spectrum is None:
            if from_nm is None or to_nm is None:
                raise UnitError("without a spectrum, give a window with both ends (a line finder)")
            rows, total = self._catalog.line_rows(query, air_formula=air_formula)
            used = sorted({r["dataset"] for r in rows})
            without = sum(1 for r in rows if r["a_per_s"] is None)
        else:
            rows, info = self._catalog.species_lines(query, multipoles=query.multipoles or ("E1",),
                                                     air_formula=air_formula)
            used, total, without = info["datasets"], info["total"], info["without_rates"]
        provenance = self._catalog.provenance(
            query.describe(), used, air_formula=air_formula_description(air_formula),
            lines=f"{len(rows)} of {total}", rates=f"{without} lines without known rates (A, f, S empty)")
        columns: tuple[str, ...] = LINE_LIST_COLUMNS
        if lower or series or name:
            rows = filter_lines(rows, lower=lower, series=series, name=name)[:limit]
            provenance["selection"] = (f"lower {lower or 'any'}; upper series {series or 'any'}; "
                                       f"name {name or 'any'}: {len(rows)} lines")
        # the datasets behind the rows (a line's own and its levels'), before multiplets are summed (as the CLI)
        contributed = {n for r in rows for n in (r.get("source_datasets") or (r.get("dataset"),))}
        if multiplets:
            rows = merge_multiplets(rows, medium=medium, air_formula=air_formula)
            columns = LINE_COLUMNS + MULTIPLET_EXTRA_COLUMNS
            provenance["multiplets"] = MULTIPLETS_NOTE
        else:
            add_ritz_columns(rows, medium, air_formula=air_formula)
        provenance["datasets"] = "; ".join(n for n in used if n in contributed) or "(none)"
        provenance["medium"] = medium_statement(medium, air_formula)
        if unit is not None:
            key, heading = add_spectral_column(rows, unit, medium)
            provenance["unit"] = f"{key}: {heading}"
            if key not in columns:
                columns = tuple(columns) + (key,)
        return rows_to_table(rows, columns, provenance)

    def emission(self, spectrum: str, *, te: Any, ne: Any, tgas: Any = "300K", window: Any = None,
                 medium: str = DEFAULT_MEDIUM, instrument_fwhm: Any = None, path_length: Any = None,
                 element_density: Any = None, cutoff: str = "debye", datasets: Sequence[str] | None = None,
                 points: int | None = None, model: str = "lte", loss_rate: Any = None, geometry: str = "slab",
                 broadening: str = "thermal", perturber: str | None = None, pressure: Any = None,
                 forbidden_omega: float | None = None) -> EmissionReport:
        """Predicted emission of a species in a discharge (``levels emission``).

        Populations follow Boltzmann at the electron temperature and Saha with the
        next ion (LTE); lines are optically thin unless ``path_length`` is given.

        Parameters
        ----------
        spectrum : str
            Spectrum notation.
        te : str or Quantity
            Electron temperature (``"1.0eV"``, ``"11600K"``, ``1 * u.eV``).
        ne : str or Quantity
            Electron density (``"1e18m-3"``, ``1e12 * u.cm**-3``).
        tgas : str or Quantity
            Gas temperature (Doppler width).
        window : (from, to), optional
            Window in ``medium``, in any spectral unit (as for :meth:`lines`).
        medium : {"air", "vacuum"}
            Medium of the window and of the sampled spectrum.
        instrument_fwhm : str or Quantity, optional
            Gaussian instrument profile FWHM (a wavelength).
        path_length : str or Quantity, optional
            Uniform slab thickness for the resonance-line escape factor.
        element_density : str or Quantity, optional
            Density of the element, all charge states (default: ``ne``).
        cutoff : {"debye", "inglis-teller", "none"}
            Partition-function cutoff.
        datasets : sequence of str, optional
            Datasets in order of precedence.
        points : int, optional
            Points of the sampled spectrum (default: a step of a fifth of the narrowest line width).
        model : {"lte", "cr"}
            Populations from local thermodynamic equilibrium or from the collisional-radiative balance.
        loss_rate : str or Quantity, optional
            Wall/diffusion loss rate of metastable levels (``"1e3 s-1"``), collisional-radiative model.
        geometry : {"slab", "cylinder"}
            Shape of the emitting volume for the escape factors (``path_length`` is its depth or diameter).
        broadening : str
            Line broadening beyond Doppler and natural widths (as ``levels emission --broadening``).
        perturber : str, optional
            Buffer gas for van der Waals broadening (``"Ar"``).
        pressure : str or Quantity, optional
            Its pressure (``"1000Pa"``, ``1 * u.bar``).
        forbidden_omega : float, optional
            Collision strength for pairs without an f value (collisional-radiative model).

        Returns
        -------
        EmissionReport
        """
        te_k = _quantity(te, "te", u.K, "temperature", equivalencies=u.temperature_energy())
        ne_m3 = _quantity(ne, "ne", u.m ** -3, "density")
        tgas_k = _quantity(tgas, "tgas", u.K, "temperature", equivalencies=u.temperature_energy())
        from_nm, to_nm = _window(window, medium)
        result = self._catalog.emission(
            spectrum, te_k=te_k, ne_m3=ne_m3, tgas_k=tgas_k, from_nm=from_nm, to_nm=to_nm, medium=medium,
            instrument_fwhm_nm=_wavelength_nm(instrument_fwhm, "instrument_fwhm") or 0.0,
            path_length_m=None if path_length is None else _quantity(path_length, "path_length", u.m, "length"),
            element_density_m3=None if element_density is None else _quantity(element_density, "element_density",
                                                                               u.m ** -3, "density"),
            cutoff_method=cutoff, datasets=list(datasets) if datasets else None, grid_points=points,
            model=model, geometry=geometry, broadening=broadening, perturber=perturber,
            loss_rate_per_s=0.0 if loss_rate is None else _quantity(loss_rate, "loss_rate", u.s ** -1, "rate"),
            pressure_pa=None if pressure is None else _quantity(pressure, "pressure", u.Pa, "pressure"),
            forbidden_omega=forbidden_omega)
        provenance = self._catalog.provenance(
            f"emission {spectrum}; te {te_k:.6g} K; ne {ne_m3:.6g} m-3; tgas {tgas_k:.6g} K; "
            f"window {from_nm if from_nm is not None else '-'}..{to_nm if to_nm is not None else '-'} nm {medium}",
            result.conditions["datasets"], model=result.conditions.get("model"),
            cutoff=result.conditions.get("cutoff"))
        for text in result.warnings:
            if text.startswith("CAUTION"):
                warnings.warn(text, CautionWarning, stacklevel=2)
        grid = np.asarray(result.grid_nm, dtype=float)
        density = np.asarray(result.spectrum, dtype=float)
        # the sampled quantity is named for what it is: an emission coefficient when optically thin,
        # a spectral radiance through the slab when a path length is given
        column = result.spectrum_quantity.replace(" ", "_")
        unit = RADIANCE_UNIT if result.spectrum_quantity == "emission coefficient" else RADIANCE_UNIT * u.m
        sampled = QTable({"wavelength": grid * u.nm, column: density * unit})
        sampled.meta["provenance"] = {**provenance, "medium": medium}
        return EmissionReport(lines=rows_to_table(result.lines, EMISSION_COLUMNS, provenance), spectrum=sampled,
                              metrics=dict(result.metrics), conditions=dict(result.conditions),
                              warnings=list(result.warnings), model=result.model,
                              populations=list(result.populations), validity=dict(result.validity))

    def rates(self, spectrum: str, *, method: str = "auto", datasets: Sequence[str] | None = None,
              save: bool = True) -> RatesResult:
        """E1 (and E2/M1) rates of a many-electron species from its stored levels (``levels rates``).

        The rates are stored as the computed dataset ``rates <spectrum> A=<mass>`` (replaced
        on a re-run, one transaction) unless ``save`` is False.

        Parameters
        ----------
        spectrum : str
            Spectrum notation (``"Na I"``, ``"Ca II"``).
        method : {"auto", "single", "coupled"}
            ``single``: one electron outside closed shells; ``coupled``: an open core plus one
            electron in intermediate coupling; ``auto`` picks per configuration.
        datasets : sequence of str, optional
            Datasets whose levels are used, in order of precedence.
        save : bool
            Store the computed dataset (True) or only report.

        Returns
        -------
        RatesResult

        Raises
        ------
        RatesUnavailableError
            This installation has no rates service (``levels/service/rates.py``).
        PhysicsInputError
            Unknown method; no limit stored and none can be fitted; no level treated.
        """
        if importlib.util.find_spec("levels.service.rates") is None:
            raise RatesUnavailableError(
                "rates of many-electron species ('levels rates') are not available in this version")
        rates_service = importlib.import_module("levels.service.rates")
        report = rates_service.compute_rates(self._catalog, spectrum, method=method,
                                             datasets=list(datasets) if datasets else None, save=save)
        # the header the CLI writes (method and version, output dataset, limit source, air formula), here too
        extra = {k: v for k, v in report.provenance().items() if k not in ("datasets", "query", "rows")}
        provenance = self._catalog.provenance(f"rates {spectrum}; method {method}", report.datasets, **extra)
        return RatesResult(
            lines=rows_to_table(report.lines, rates_service.RATES_COLUMNS, provenance),
            levels=rows_to_table(report.levels, rates_service.LIFETIME_COLUMNS, provenance),
            method=report.method, datasets=list(report.datasets), skipped=list(report.skipped),
            warnings=list(report.warnings), saved_as=report.saved_as,
            ionization=None if report.ionization_cm1 is None else report.ionization_cm1 / u.cm,
            ionization_source=report.ionization_source)
