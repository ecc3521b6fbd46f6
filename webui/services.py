"""A thin adapter between the web views and :class:`levels.catalog.Catalog`.

The site holds no physics and no SQL: everything here calls public Catalog
methods and arranges their results for pages (filtering and paging the level
table, resolving a species from its URL name, finding one line by id), from
the values the rows carry (``two_j``, ``multiplicity``, ``L`` of a level;
``dataset_names`` of a species), never by parsing their texts back. Line
queries name a species by its :class:`~levels.notation.Spectrum`, mass number
included, so every stored isotope's lines are listed.

Where the Catalog has no method for a request, the work is done here on the
results of the methods it has; one that would replace a workaround:
``level_page(spectrum, datasets, configuration, two_j, parity, order, limit,
offset)`` instead of filtering and paging ``level_rows()`` in Python (a species
has at most a few thousand levels, and the rows are kept per store revision).
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import re
import threading
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from flask import Response, current_app, g, has_request_context, request

from levels.catalog import Catalog
from levels.errors import NotationError, NotFoundError
from levels.isotopes import default_isotope
from levels.notation import Spectrum, parse_spectrum
from levels.service.contract import LINE_LIST_COLUMNS, LevelRow, LineQuery, LineRow, SpeciesRow
from levels.service.lines import add_ritz_columns as catalog_add_ritz_columns
from levels.service.readcache import ReadCache, SpeciesLines
from levels.units import CM1_EV

from webui.downloads import clean
from webui.params import LevelFilter, LineFilter, Page

#: the longest list of lines scanned when a line is looked up without its wavelength
LINE_SCAN_CHUNK = 5000


def catalog() -> Catalog:
    """The application's one Catalog."""
    return current_app.extensions["levels"]["catalog"]


# ----------------------------------------------------------------- species

@dataclass(frozen=True)
class SpeciesRef:
    """A stored species as the site addresses it.

    Attributes
    ----------
    row : SpeciesRow
        Its species row.
    spectrum : Spectrum
        Z, charge and mass number.
    url_name : str
        Spectrum notation with ``_`` for the space (``He_II``).
    mass_query : int or None
        The ``mass_number`` query parameter needed to address it (None for the default isotope).
    """

    row: SpeciesRow
    spectrum: Spectrum
    url_name: str
    mass_query: int | None

    @property
    def name(self) -> str:
        return self.row["spectrum"]

    @property
    def datasets(self) -> list[str]:
        return list(self.row["dataset_names"])

    def url_args(self) -> dict:
        """Keyword arguments of ``url_for`` for this species."""
        out: dict[str, object] = {"spectrum": self.url_name}
        if self.mass_query is not None:
            out["mass_number"] = self.mass_query
        return out


def _by_name_choice(rows: Sequence[SpeciesRow], z: int, charge: int) -> SpeciesRow | None:
    """The isotope a spectrum name without a mass number resolves to (as the store does)."""
    same = [r for r in rows if r["z"] == z and r["charge"] == charge]
    if not same:
        return None
    default_a = default_isotope(z).mass_number
    for row in same:
        if row["mass_number"] == default_a:
            return row
    return same[0] if len(same) == 1 else None


def _ref(row: SpeciesRow, rows: Sequence[SpeciesRow]) -> SpeciesRef:
    spec = Spectrum(row["z"], row["charge"], row["mass_number"])
    named = parse_spectrum(row["spectrum"])
    chosen = row if named.mass_number is not None else _by_name_choice(rows, row["z"], row["charge"])
    reachable = chosen is row
    return SpeciesRef(row=row, spectrum=spec, url_name=row["spectrum"].replace(" ", "_"),
                      mass_query=None if reachable else row["mass_number"])


_CACHE_LOCK = threading.Lock()


def _app_cache(name: str, cat: Catalog | None = None, **options) -> ReadCache:
    """The application's cache called ``name``, made on first use (once, under a lock)."""
    store = current_app.extensions["levels"]
    cache = store.get(name)
    if cache is None:
        with _CACHE_LOCK:
            cache = store.get(name)
            if cache is None:
                cache = ReadCache(cat or store["catalog"], **options)
                store[name] = cache
    return cache


def read_cache(cat: Catalog | None = None) -> ReadCache:
    """The application's read cache (answers kept per store revision; see :mod:`levels.service.readcache`)."""
    return _app_cache("read_cache", cat)


def revision() -> tuple[int, ...]:
    """The store's revision, read once per request (every write changes it)."""
    value = g.get("levels_revision")
    if value is None:
        value = read_cache().revision()
        g.levels_revision = value
    return value


def cached(key, build):
    """``build()``, kept until the store changes (shared between requests: do not modify the result)."""
    return read_cache().get(key, revision(), build)


#: figures kept (serialised and gzip-compressed) per store revision, least recently used dropped first
MAX_KEPT_FIGURES = 16


def figure_cache() -> ReadCache:
    """The application's cache of finished figures (kept apart from the read answers, which are smaller and
    asked for by every request, so a run of different figures never pushes them out)."""
    return _app_cache("figure_cache", max_entries=MAX_KEPT_FIGURES)


def cached_figure(key, build):
    """``build()`` (a finished figure), kept until the store changes (shared: do not modify the result)."""
    return figure_cache().get(key, revision(), build)


def digest(values: np.ndarray) -> bytes:
    """A short digest of an array's values (a key of what a figure draws)."""
    data = np.ascontiguousarray(values)
    return hashlib.blake2b(str(data.dtype).encode() + data.tobytes(), digest_size=16).digest()


#: changes with every start of the site, so a browser never keeps an answer of older code
_STARTED = os.urandom(8).hex()


def response_tag(*parts) -> str:
    """A weak entity tag of the current GET request's answer: the store revision, the path, the query and
    ``parts`` (settings the answer depends on); equal tags mean the same answer."""
    text = repr((_STARTED, revision(), request.path, request.query_string, parts))
    return hashlib.blake2b(text.encode("utf-8"), digest_size=16).hexdigest()


def tagged(response: Response, tag: str) -> Response:
    """``response`` with its weak ETag, revalidated by the browser at each use (``Cache-Control: no-cache``)."""
    response.set_etag(tag, weak=True)
    response.headers["Cache-Control"] = "no-cache"
    response.vary.add("Accept-Encoding")
    return response


def not_modified(tag: str) -> Response:
    """A 304 Not Modified answer for a request whose ``If-None-Match`` holds ``tag``."""
    return tagged(Response(status=304), tag)


def species_rows(cat: Catalog) -> list[SpeciesRow]:
    """``Catalog.species_rows()``, kept until the store's revision changes.

    ``species_rows`` counts every species' levels and lines, which on a large store
    costs more than the page itself; the answer is shared by every request until
    the store is written to (by this site or by another process: the revision is
    read at each request), so it is never stale. The rows are shared: do not modify them.
    """
    if not has_request_context():
        return cat.species_rows()
    return read_cache(cat).species_rows(revision())


def forget_species() -> None:
    """Drop the kept answers and figures (after this site wrote to the store; the revision would tell anyway)."""
    read_cache().clear()
    figure_cache().clear()
    g.pop("levels_revision", None)


def species_refs(cat: Catalog) -> list[SpeciesRef]:
    """Every stored species, by Z, charge and mass number."""
    rows = species_rows(cat)
    return [_ref(row, rows) for row in rows]


def mass_number_of(text: str | None) -> int | None:
    """The mass number a ``mass_number`` parameter names (None when absent or empty).

    Raises
    ------
    NotFoundError
        The text is not a whole number of at most three digits.
    """
    if text in (None, ""):
        return None
    if not str(text).isascii() or not str(text).isdigit() or len(str(text)) > 3:
        raise NotFoundError(f"mass number {text!r} is not a whole number")
    return int(str(text))


def resolve_species(cat: Catalog, url_name: str, mass_number: str | None = None) -> SpeciesRef:
    """The stored species named in a URL (``He_II``, ``C5+``), optionally one isotope.

    Raises
    ------
    NotFoundError
        The name is not spectrum notation, the mass number not a whole number, or no such species is stored.
    """
    try:
        spec = parse_spectrum(url_name)
    except NotationError as exc:
        raise NotFoundError(f"{url_name!r} is not a species name: {exc}") from None
    wanted_a = mass_number_of(mass_number)
    wanted_a = wanted_a if wanted_a is not None else spec.mass_number
    rows = species_rows(cat)
    if wanted_a is not None:
        match = [r for r in rows if r["z"] == spec.z and r["charge"] == spec.charge and r["mass_number"] == wanted_a]
        row = match[0] if match else None
    else:
        row = _by_name_choice(rows, spec.z, spec.charge)
    if row is None:
        raise NotFoundError(f"no species {spec.name}{f' (A = {wanted_a})' if wanted_a else ''} in the store")
    return _ref(row, rows)


def search_species(refs: Sequence[SpeciesRef], text: str) -> list[SpeciesRef]:
    """Species matching a search text.

    An element symbol (``Fe``) matches every ion of the element; spectrum or ion
    notation (``Fe II``, ``C5+``) matches that ion; anything else is a
    case-insensitive substring of the spectrum name or of a dataset name.
    """
    text = text.strip()
    if not text:
        return list(refs)
    try:
        spec = parse_spectrum(text)
    except NotationError:
        spec = None
    if spec is not None:
        if re.fullmatch(r"[A-Z][a-z]?", text):
            return [r for r in refs if r.row["z"] == spec.z]
        return [r for r in refs if r.row["z"] == spec.z and r.row["charge"] == spec.charge]
    needle = text.lower()
    return [r for r in refs if needle in r.name.lower() or needle in (r.row.get("datasets") or "").lower()]


def ionization_ev(row: Mapping[str, Any]) -> float | None:
    """The ionization energy of a species row in eV (None when unknown)."""
    value = row.get("ionization_cm1")
    return None if value is None else value * CM1_EV


# ----------------------------------------------------------------- levels

_LEVEL_SORT_KEYS = {
    "energy": lambda r: (r["energy_cm1"], r["label"]),
    "label": lambda r: (r["label"], r["energy_cm1"]),
    "configuration": lambda r: (r["configuration"], r["energy_cm1"]),
    "term": lambda r: (r["term"], r["energy_cm1"]),
    "j": lambda r: (r["two_j"] is None, r["two_j"] or 0, r["energy_cm1"]),
    "unc": lambda r: (math.inf if r["unc_cm1"] is None else r["unc_cm1"], r["energy_cm1"]),
    "dataset": lambda r: (r["dataset"], r["energy_cm1"]),
}


def filtered_levels(cat: Catalog, ref: SpeciesRef, flt: LevelFilter) -> list[LevelRow]:
    """The species' levels under the filter, sorted (all of them, no paging).

    Raises
    ------
    BadParameter
        The dataset named is not one of the species' datasets.
    """
    from webui.params import BadParameter

    datasets = None
    if flt.dataset:
        if flt.dataset not in ref.datasets:
            raise BadParameter("dataset", f"{ref.name} has no levels in a dataset named {flt.dataset!r}")
        datasets = [flt.dataset]
    if datasets is None and has_request_context():
        rows = list(species_levels(ref))
    else:
        rows = cat.level_rows(ref.spectrum, datasets)
    if flt.configuration:
        needle = flt.configuration.lower()
        rows = [r for r in rows if needle in r["configuration"].lower()]
    if flt.two_j is not None:
        rows = [r for r in rows if r["two_j"] == flt.two_j]
    if flt.parity is not None:
        rows = [r for r in rows if r["parity"] == flt.parity]
    rows.sort(key=_LEVEL_SORT_KEYS[flt.sort], reverse=flt.descending)
    return rows


def level_page(cat: Catalog, ref: SpeciesRef, flt: LevelFilter, page: Page) -> tuple[list[LevelRow], int]:
    """One page of the filtered level table and the number of rows in all pages."""
    rows = filtered_levels(cat, ref, flt)
    return rows[page.offset:page.offset + page.per], len(rows)


# ----------------------------------------------------------------- lines

def query_spectrum(ref: SpeciesRef | None) -> Spectrum | None:
    """The spectrum of line queries, with its mass number (None = all species)."""
    return None if ref is None else ref.spectrum


#: species with more stored lines than this are read page by page from the store, not kept in memory
MAX_KEPT_LINES = 250_000


def keeps_lines(ref: SpeciesRef) -> bool:
    """Whether the species' stored lines are kept in memory (``LEVELS_MAX_KEPT_LINES``, default
    :data:`MAX_KEPT_LINES`; a one-electron ion to n = 1000 has millions of lines and is not)."""
    limit = current_app.config.get("LEVELS_MAX_KEPT_LINES", MAX_KEPT_LINES)
    return int(ref.row.get("lines") or 0) <= int(limit)


def line_window(ref: SpeciesRef, flt: LineFilter, limit: int | None = None, offset: int = 0,
                order: str | None = None) -> tuple[list[LineRow], int]:
    """Lines of one species under the filter, in the filter's order (or ``order``), ``limit`` from ``offset``,
    and how many match in all: the rows ``Catalog.line_rows`` gives, from the species' line columns kept
    per store revision (no query, no count per request; a species too large to keep is queried)."""
    if not keeps_lines(ref):
        return catalog().line_rows(flt.query(query_spectrum(ref), limit=limit, offset=offset, order=order))
    lines = read_cache().species_lines(ref.spectrum, revision())
    keep = lines.mask(from_nm=flt.from_nm, to_nm=flt.to_nm, medium=flt.medium, multipoles=flt.multipoles,
                      min_a=flt.min_a)
    return lines.line_rows(lines.page(keep, order or flt.order, offset, limit)), int(keep.sum())


def add_ritz_columns(ref: SpeciesRef | None, rows: list[LineRow], medium: str) -> list[LineRow]:
    """:func:`levels.catalog.add_ritz_columns` for rows of one species (the same values, in place).

    Only H I, D I and T I lines have customary names; for every other species ``line_name`` is None
    without parsing each row's two level labels, which costs more than the rest of a page of 100 rows.
    """
    if ref is None or (ref.spectrum.z == 1 and ref.spectrum.charge == 0):
        return list(catalog_add_ritz_columns(rows, medium))
    named = [row.pop("spectrum", None) for row in rows]  # no spectrum: the catalog names no line
    catalog_add_ritz_columns(rows, medium)
    for row, name in zip(rows, named):
        if name is not None:
            row["spectrum"] = name
    return rows


def _line_texts(ref: SpeciesRef, lines: SpeciesLines, medium: str) -> np.ndarray:
    """Each stored line's row of the JSON line list in ``medium`` (``LINE_LIST_COLUMNS``, Ritz columns and
    line names filled, serialised as :func:`webui.downloads.json_response` writes it), None where not yet
    written: kept per store revision and filled as pages ask for rows, so no request pays for all of them."""
    return cached(("line-texts", ref.spectrum, medium), lambda: np.full(len(lines), None, dtype=object))


def line_page_json(ref: SpeciesRef, flt: LineFilter, limit: int | None = None,
                   offset: int = 0) -> tuple[list[str], int, list[str]] | None:
    """:func:`line_window` as JSON text: each row serialised as the API writes it (``LINE_LIST_COLUMNS``
    with the Ritz columns), how many rows match in all, and the datasets of the rows. A row is written
    once per store revision and medium, then joined into pages. None when the species' lines are not
    kept (too many): then use :func:`line_window`."""
    if not keeps_lines(ref):
        return None
    lines = read_cache().species_lines(ref.spectrum, revision())
    keep = lines.mask(from_nm=flt.from_nm, to_nm=flt.to_nm, medium=flt.medium, multipoles=flt.multipoles,
                      min_a=flt.min_a)
    index = lines.page(keep, flt.order, offset, limit)
    texts = _line_texts(ref, lines, flt.medium)
    chosen = texts[index]
    missing = index[np.equal(chosen, np.array(None, dtype=object))]  # None as the 0-d object array numpy makes of it
    if len(missing):
        rows = add_ritz_columns(ref, lines.line_rows(missing), flt.medium)
        # the same values and text as json_response(json_table(rows, LINE_LIST_COLUMNS, ...)) gives each row
        texts[missing] = [json.dumps({c: clean(row.get(c)) for c in LINE_LIST_COLUMNS}, ensure_ascii=False,
                                     allow_nan=False, separators=(",", ":")) for row in rows]
        chosen = texts[index]
    used = sorted(set(lines.columns["dataset"][index].tolist()))
    return chosen.tolist(), int(keep.sum()), used


def json_rows_response(payload: dict, placeholder: list, row_texts: Sequence[str]) -> Response:
    """``json_response(payload)`` where each value of ``payload`` that is the list ``placeholder`` (the
    same object) stands for the rows already serialised in ``row_texts``: the same bytes as serialising
    the rows themselves, without encoding them again."""
    def dumps(value) -> str:
        return json.dumps(value, ensure_ascii=False, allow_nan=False, separators=(",", ":"))

    rows = "[" + ",".join(row_texts) + "]"
    body = "{" + ",".join(dumps(key) + ":" + (rows if value is placeholder else dumps(value))
                          for key, value in payload.items()) + "}"
    return Response(body, mimetype="application/json")


def line_page(cat: Catalog, ref: SpeciesRef | None, flt: LineFilter, page: Page) -> tuple[list[LineRow], int]:
    """One page of lines matching the filter, and the total count."""
    if ref is not None and has_request_context():
        return line_window(ref, flt, page.per, page.offset)
    return cat.line_rows(flt.query(query_spectrum(ref), limit=page.per, offset=page.offset))


def all_lines(cat: Catalog, ref: SpeciesRef | None, flt: LineFilter) -> list[LineRow]:
    """Every line matching the filter (for downloads)."""
    if ref is not None and has_request_context():
        return line_window(ref, flt)[0]
    rows, _total = cat.line_rows(flt.query(query_spectrum(ref)))
    return rows


def strongest_lines(cat: Catalog, ref: SpeciesRef, flt: LineFilter, limit: int) -> tuple[list[LineRow], int]:
    """The ``limit`` lines with the largest Einstein A under the filter, and how many match in all."""
    return cat.line_rows(flt.query(query_spectrum(ref), limit=limit, order="a"))


def species_levels(ref: SpeciesRef) -> list[LevelRow]:
    """The species' levels under the default precedence (kept per store revision; shared, do not modify)."""
    return read_cache().level_rows(ref.spectrum, revision())


def diagram_lines(ref: SpeciesRef, flt: LineFilter, limit: int) -> tuple[SpeciesLines | None, np.ndarray, int]:
    """The stored lines a diagram draws: the species' line columns (kept per store revision), the indices
    of the ``limit`` strongest under the filter (largest A first, as ``strongest_lines`` orders them), and
    how many match in all. None for the columns when the species' lines are not kept (too many): then ask
    :func:`strongest_lines`."""
    if not keeps_lines(ref):
        return None, np.empty(0, dtype=np.int64), 0
    lines = read_cache().species_lines(ref.spectrum, revision())
    keep = lines.mask(from_nm=flt.from_nm, to_nm=flt.to_nm, medium=flt.medium, multipoles=flt.multipoles,
                      min_a=flt.min_a)
    return lines, lines.strongest(keep, limit), int(keep.sum())


def find_line(cat: Catalog, ref: SpeciesRef, line_id: int, near_vacuum_nm: float | None = None) -> LineRow:
    """One stored line of a species by id.

    With the line's vacuum wavelength the search is a narrow window (fast);
    without it the species' lines are scanned in chunks.

    Raises
    ------
    NotFoundError
        No line with that id belongs to the species.
    """
    if near_vacuum_nm is not None and math.isfinite(near_vacuum_nm) and near_vacuum_nm > 0:
        rows, _ = cat.line_rows(LineQuery(spectrum=ref.spectrum, from_nm=near_vacuum_nm * (1 - 1e-9),
                                          to_nm=near_vacuum_nm * (1 + 1e-9), medium="vacuum"))
        for row in rows:
            if row["id"] == line_id:
                return row
    offset = 0
    while True:
        rows, total = cat.line_rows(LineQuery(spectrum=ref.spectrum, limit=LINE_SCAN_CHUNK, offset=offset))
        for row in rows:
            if row["id"] == line_id:
                return row
        offset += LINE_SCAN_CHUNK
        if offset >= total or not rows:
            break
    raise NotFoundError(f"no line {line_id} of {ref.name} in the store")


# ----------------------------------------------------------------- datasets and samples

def writable_datasets(cat: Catalog) -> list[dict]:
    """Measured and imported datasets that are not retracted (targets of the level form)."""
    return [d for d in cat.dataset_rows() if d["kind"] in ("measured", "imported") and not d["retracted"]]


def air_formula(cat: Catalog, dataset_names: Sequence[str]) -> str:
    """The air-wavelength formula recorded in the options of the datasets used (when they say)."""
    found = []
    for name in dataset_names:
        try:
            options = cat.dataset_info(name).get("options") or {}
        except NotFoundError:
            continue
        for key in ("air_formula", "air"):
            if options.get(key) and str(options[key]) not in found:
                found.append(str(options[key]))
    return "; ".join(found) if found else "as stored by each dataset (not recorded in its options)"
