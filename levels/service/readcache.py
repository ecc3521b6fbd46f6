"""A read cache for one store, keyed by the store's revision (invalidated by every write).

Pages and figures ask the same questions many times between writes: the species
table with its counts, a species' levels, a species' stored lines. This cache
answers them from memory as long as the store's revision
(:func:`levels.store.database.store_revision`: the audit log's count and largest
id, and the datasets') is unchanged; every write, by this process or another
(the command line), changes the revision, and the next question reloads.

Stored lines are kept as numpy columns (:class:`SpeciesLines`), so filtering a
window, picking the strongest lines and counting the rest are array operations.
"""

from __future__ import annotations

import threading
from collections import OrderedDict
from collections.abc import Callable, Hashable, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, TypeVar, cast

import numpy as np

from levels.errors import PhysicsInputError
from levels.notation import Spectrum
from levels.service import lookup
from levels.service.contract import LevelRow, LineRow, SpeciesRow
from levels.store import columns as store_columns
from levels.store import database, queries

if TYPE_CHECKING:  # the service floor does not import the old hub at run time (no import circle)
    from levels.catalog import Catalog

T = TypeVar("T")
#: the keys of a stored line's row, as ``levels.store.queries.line_row`` gives them (``spectrum`` added per row)
LINE_ROW_COLUMNS = ("id", "lower", "upper", "lower_cm1", "upper_cm1", "wavenumber_cm1", "vacuum_nm", "air_nm",
                    "multipole", "a_per_s", "f_abs", "line_strength_au", "g_lower", "g_upper", "unc_nm", "dataset",
                    "observed_nm", "medium", "intensity", "note", "lower_id", "upper_id",
                    *store_columns.LINE_LEVEL_VALUE_KEYS)
Revision = tuple[int, ...]


@dataclass(frozen=True)
class SpeciesLines:
    """One species' stored lines (every visible dataset) as arrays, with the orders views ask for.

    Attributes
    ----------
    spectrum : str
        The species' name.
    columns : dict of str to numpy.ndarray
        :data:`levels.store.columns.LINE_ARRAY_COLUMNS` plus ``dataset`` (dataset names);
        wavelengths in nm, wavenumbers and energies in cm-1, ``a_per_s`` in s-1, NaN where unknown.
    by_a : numpy.ndarray
        Row indices by Einstein A, largest first, lines without A last, ties by vacuum wavelength.
    """

    spectrum: str
    columns: dict[str, np.ndarray]
    by_a: np.ndarray
    _orders: dict = field(default_factory=dict, repr=False, compare=False)

    def __len__(self) -> int:
        return len(self.columns["id"])

    def mask(self, *, from_nm: float | None = None, to_nm: float | None = None, medium: str = "vacuum",
             multipoles: Sequence[str] | None = None, min_a: float | None = None) -> np.ndarray:
        """Rows inside a window (nm, in ``medium``; lines without an air wavelength by their vacuum one),
        of the given multipoles, with A >= ``min_a`` (s-1; lines without A fail that test)."""
        if medium not in ("vacuum", "air"):
            raise PhysicsInputError(f"medium must be 'vacuum' or 'air', not {medium!r}")
        c = self.columns
        keep = np.ones(len(self), dtype=bool)
        wavelength = c["vacuum_nm"]
        if medium == "air":
            wavelength = np.where(np.isnan(c["air_nm"]), c["vacuum_nm"], c["air_nm"])
        if from_nm is not None:
            keep &= wavelength >= from_nm
        if to_nm is not None:
            keep &= wavelength <= to_nm
        if multipoles:
            keep &= np.isin(c["multipole"], list(multipoles))
        if min_a is not None:
            keep &= c["a_per_s"] >= min_a
        return keep

    def strongest(self, keep: np.ndarray, limit: int) -> np.ndarray:
        """Indices of at most ``limit`` rows among ``keep``, largest A first."""
        return self.by_a[keep[self.by_a]][:limit]

    def order(self, kind: str) -> np.ndarray:
        """Row indices in a line-list order (the store's: ``wavelength`` by vacuum wavelength then id,
        ``-wavelength`` reversed, ``strength`` by S and ``a`` by A, largest first, unknown last, then by
        vacuum wavelength)."""
        found = self._orders.get(kind)
        if found is not None:
            return found
        c = self.columns
        if kind == "wavelength":
            found = np.lexsort((c["id"], c["vacuum_nm"]))
        elif kind == "-wavelength":
            found = np.lexsort((c["id"], -c["vacuum_nm"]))
        elif kind == "strength":
            s = c["line_strength_au"]
            found = np.lexsort((c["vacuum_nm"], np.where(np.isnan(s), np.inf, -s)))
        elif kind == "a":
            found = self.by_a
        else:
            raise PhysicsInputError(f"order must be one of wavelength, -wavelength, strength, a; not {kind!r}")
        self._orders[kind] = found
        return found

    def page(self, keep: np.ndarray, kind: str, offset: int = 0, limit: int | None = None) -> np.ndarray:
        """Indices of the rows among ``keep`` in order ``kind``, from ``offset``, at most ``limit``."""
        ordered = self.order(kind)
        chosen = ordered[keep[ordered]]
        stop = None if limit is None else offset + limit
        return chosen[offset:stop]

    def line_rows(self, index: np.ndarray) -> list[LineRow]:
        """Rows ``index`` as the store's line-list rows (``levels.store.queries.line_row``: the
        line-list columns, ``id``, ``observed_nm``, ``medium``, ``intensity``, ``note``, the level ids and
        their quantum numbers)."""
        rows = self.rows(index, LINE_ROW_COLUMNS)
        for row in rows:
            row["spectrum"] = self.spectrum
        return cast(list[LineRow], rows)  # LINE_ROW_COLUMNS and spectrum: keys of the contract

    def rows(self, index: np.ndarray, names: Sequence[str]) -> list[dict]:
        """Rows ``index`` as dicts of plain Python values (NaN becomes None)."""
        out: list[dict] = [{} for _ in range(len(index))]
        for name in names:
            values = self.columns[name][index].tolist()
            if self.columns[name].dtype.kind == "f":
                values = [None if v != v else v for v in values]
            for row, value in zip(out, values):
                row[name] = value
        return out


class ReadCache:
    """Answers of one store's read questions, kept until the store's revision changes.

    Parameters
    ----------
    catalog : Catalog
        The store.
    max_entries : int
        Answers kept (least recently used dropped first).
    """

    def __init__(self, catalog: Catalog, max_entries: int = 64):
        self.catalog = catalog
        self.max_entries = max_entries
        self._entries: OrderedDict[tuple, object] = OrderedDict()
        self._lock = threading.Lock()
        self._revision: Revision | None = None

    def revision(self) -> Revision:
        """The store's current revision (one small query)."""
        self.catalog.check_ready()
        return database.store_revision(self.catalog.engine)

    def clear(self) -> None:
        """Forget every answer."""
        with self._lock:
            self._entries.clear()

    def get(self, key: Hashable, revision: Revision, build: Callable[[], T]) -> T:
        """The answer to ``key`` at ``revision``, built by ``build()`` when not kept."""
        with self._lock:
            if self._revision is not None and revision < self._revision:
                stale = True  # a request that read the revision before a newer one was seen: answer, keep nothing
            else:
                stale = False
                if revision != self._revision:
                    self._entries.clear()
                    self._revision = revision
            full = (revision, key)
            if full in self._entries:
                self._entries.move_to_end(full)
                return self._entries[full]  # type: ignore[return-value]
        value = build()
        with self._lock:
            if not stale and revision == self._revision:
                self._entries[(revision, key)] = value
                while len(self._entries) > self.max_entries:
                    self._entries.popitem(last=False)
        return value

    # ------------------------------------------------------------- questions
    def species_rows(self, revision: Revision) -> list[SpeciesRow]:
        """:meth:`Catalog.species_rows` (shared: callers must not change the rows)."""
        return self.get(("species",), revision, self.catalog.species_rows)

    def level_rows(self, spectrum: Spectrum, revision: Revision) -> list[LevelRow]:
        """:meth:`Catalog.level_rows` of a species under the default precedence (shared)."""
        return self.get(("levels", spectrum), revision, lambda: self.catalog.level_rows(spectrum))

    def species_lines(self, spectrum: Spectrum, revision: Revision) -> SpeciesLines:
        """The species' stored lines of every visible dataset, as arrays (shared)."""
        return self.get(("lines", spectrum), revision, lambda: self._load_lines(spectrum))

    def _load_lines(self, spectrum: Spectrum) -> SpeciesLines:
        def work(session):
            species = lookup.require_species(session, spectrum)
            chosen = queries.visible_datasets(session)
            cols = store_columns.species_line_columns(session, species.id, [d.id for d in chosen])
            return species.name, {d.id: d.name for d in chosen}, cols

        name, names, cols = self.catalog.read(work)
        ids = cols["dataset_id"]
        dataset = np.empty(len(ids), dtype=object)
        for dataset_id in np.unique(ids).tolist():
            dataset[ids == dataset_id] = names.get(dataset_id, "")
        cols["dataset"] = dataset
        a = cols["a_per_s"]
        by_a = np.lexsort((cols["vacuum_nm"], np.where(np.isnan(a), np.inf, -a)))
        return SpeciesLines(spectrum=name, columns=cols, by_a=by_a)
