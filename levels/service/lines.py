"""Line lists: stored lines, the line engine of one species, and the Ritz columns of a listing.

Units of work on one store (``catalog.read``/``catalog.write``) that :class:`levels.catalog.Catalog`
exposes as methods. The engine builds every line the selection rules allow between a species' levels
under a precedence of datasets (Ritz combination, :mod:`levels.physics.lines.combination`) and merges the
rates of stored lines; the stored lines come from :func:`levels.store.queries.select_lines`.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import cast

import numpy as np
from sqlalchemy.orm import Session

from levels.errors import NotFoundError, PhysicsInputError
from levels.notation import hydrogen_line_name, parse_spectrum, principal_number
from levels.service import duplicates, lookup
from levels.service.contract import MULTIPOLE_CODES, LineQuery, LineRow
from levels.service.derived import store_derived_lines
from levels.store import queries
from levels.store.schema import Level, Line


def line_rows(catalog, query: LineQuery, *, air_formula: str | None = None) -> tuple[list[LineRow], int]:
    """Stored lines matching ``query`` (rows carry LINE_COLUMNS plus ids), and the total count.

    With ``air_formula``, every ``air_nm`` is in that formula: rows of datasets that
    recorded another formula (or none) are recomputed from ``vacuum_nm``, and an air
    window is applied as its vacuum equivalent under that formula. Without it, air
    wavelengths are as each dataset stored them.
    """
    from levels.service import vocabulary

    check_line_query(query)
    if air_formula is not None:
        vocabulary.check_air_formula(air_formula)

    def work(session: Session) -> tuple[list[LineRow], int]:
        chosen = queries.visible_datasets(session, query.datasets)
        recorded = {d.name: vocabulary.recorded_air_formula(d.options_json) for d in chosen}
        convert = air_formula is not None and any(code != air_formula for code in recorded.values())
        species_ids = None
        if query.spectrum is not None:
            species_ids = [lookup.require_species(session, query.spectrum).id]
        window = {}
        if query.medium == "air" and convert and air_formula is not None:
            lo, hi = vocabulary.air_window_to_vacuum(query.from_nm, query.to_nm, air_formula)
            window = dict(from_vacuum_nm=lo, to_vacuum_nm=hi)
        elif query.medium == "air":
            window = dict(from_air_nm=query.from_nm, to_air_nm=query.to_nm)
        else:
            window = dict(from_vacuum_nm=query.from_nm, to_vacuum_nm=query.to_nm)
        rows, total = queries.select_lines(
            session, dataset_ids=[d.id for d in chosen], species_ids=species_ids,
            multipoles=query.multipoles, min_a=query.min_a, max_upper_cm1=query.max_upper_cm1,
            order=query.order, limit=query.limit, offset=query.offset, **window)
        if convert and air_formula is not None:
            vocabulary.reexpress_air(rows, air_formula, recorded)
        return cast(list[LineRow], rows), total  # the store's line_row: the contract's keys

    return catalog.read(work)


def species_lines(catalog, query: LineQuery, *, multipoles: Sequence[str] = ("E1",),
                  air_formula: str = "iau2000") -> tuple[list[LineRow], dict]:
    """Every line of one species that the selection rules allow between its levels (the engine).

    Levels come from the precedence of datasets (``query.datasets`` or the default);
    wavenumbers, vacuum and air wavelengths and their uncertainties follow from the
    levels (Ritz). Rates stored for the same pair (same two levels and multipole) in
    a visible dataset are kept; otherwise A, f and S stay empty. Stored lines between
    the chosen levels that the J rules cannot build (terms without J) are added.

    Returns
    -------
    (rows, info)
        Rows with LINE_COLUMNS (plus ``note``), filtered, sorted and paged as asked;
        ``info`` has ``total``, ``datasets``, ``without_rates`` and ``air_formula``.
    """
    if query.spectrum is None:
        raise PhysicsInputError("the line engine works on one species; give a spectrum")
    check_line_query(query)
    for m in multipoles:
        if m not in ("E1", "M1", "E2"):
            raise PhysicsInputError(f"the engine builds E1, M1 and E2 lines, not {m!r}")
    window = vacuum_window(query, air_formula)
    spec = query.spectrum

    def work(session: Session):
        species = lookup.require_species(session, spec)
        chosen = queries.visible_datasets(session, query.datasets)
        levels = queries.levels_by_precedence(session, species, chosen)
        stored = queries.stored_lines_between(session, [lv.id for lv in levels], [d.id for d in chosen])
        notes.extend(duplicates.line_list_notes(session, species, chosen))
        return species.name, chosen, levels, stored

    notes: list[str] = []
    name, chosen, levels, stored = catalog.read(work)
    rows = engine_rows(name, levels, stored, {d.id: d.name for d in chosen}, multipoles=multipoles,
                       window=window, max_upper_cm1=query.max_upper_cm1, air_formula=air_formula)
    # a level without a stored lifetime takes the one its computed rates give (levels rates)
    from levels.service.rates import lifetimes_from_lines

    computed = lifetimes_from_lines(levels[0].species_id if levels else None, chosen, stored)
    for row in rows if computed else ():
        if row["lower_lifetime_s"] is None and row["lower_id"] in computed:
            row["lower_lifetime_s"] = computed[row["lower_id"]]
        if row["upper_lifetime_s"] is None and row["upper_id"] in computed:
            row["upper_lifetime_s"] = computed[row["upper_id"]]
    # which datasets a row draws on: its own (stored line) and its two levels' (not a column; for provenance)
    names_by_id = {d.id: d.name for d in chosen}
    level_set = {lv.id: names_by_id.get(lv.dataset_id, "") for lv in levels}
    for row in rows:
        row["source_datasets"] = tuple(dict.fromkeys(
            n for n in (row.get("dataset"), level_set.get(row.get("lower_id")), level_set.get(row.get("upper_id")))
            if n))
    if query.min_a is not None:
        rows = [r for r in rows if r["a_per_s"] is not None and r["a_per_s"] >= query.min_a]
    rows = sort_rows(rows, query.order)
    info = {"total": len(rows), "datasets": [d.name for d in chosen],
            "without_rates": sum(1 for r in rows if r["a_per_s"] is None), "air_formula": air_formula,
            "warnings": notes}
    stop = None if query.limit is None else query.offset + query.limit
    return rows[query.offset:stop], info


def recompute_lines(catalog, spectrum: str) -> int:
    """Rebuild the stored derived E1 lines of a species from its levels (default precedence)."""
    spec = parse_spectrum(spectrum)

    def work(session: Session) -> int:
        species = lookup.require_species(session, spec)
        count = store_derived_lines(session, species, catalog.actor)
        queries.record_audit(session, "recompute-lines", f"species {species.name}",
                             {"derived_lines": count}, actor=catalog.actor)
        return count

    return catalog.write(work)


def line_record(catalog, line_id: int) -> LineRow:
    """One stored line by id, with its levels (NotFoundError if absent)."""

    def work(session: Session) -> LineRow:
        row = queries.line_record(session, int(line_id))
        if row is None:
            raise NotFoundError(f"no line with id {line_id}")
        return cast(LineRow, row)

    return catalog.read(work)


def check_line_query(query: LineQuery) -> None:
    """Refuse a line query with an unknown medium, multipole or order, or a bad window or page."""
    if query.medium not in ("vacuum", "air"):
        raise PhysicsInputError(f"medium must be 'vacuum' or 'air', not {query.medium!r}")
    for name in ("from_nm", "to_nm", "min_a", "max_upper_cm1"):
        value = getattr(query, name)
        if value is not None and not math.isfinite(value):
            raise PhysicsInputError(f"{name} must be a finite number")
    for name in ("from_nm", "to_nm"):
        value = getattr(query, name)
        if value is not None and value <= 0:
            raise PhysicsInputError(f"{name} must be a positive wavelength, got {value:g} nm")
    if query.from_nm is not None and query.to_nm is not None and query.from_nm > query.to_nm:
        raise PhysicsInputError(f"empty window: from {query.from_nm:g} nm is above to {query.to_nm:g} nm")
    if query.multipoles:
        unknown = [m for m in query.multipoles if m not in MULTIPOLE_CODES]
        if unknown:
            raise PhysicsInputError(f"unknown multipole {unknown[0]!r}; use {', '.join(MULTIPOLE_CODES)}")
    if query.order not in queries.LINE_ORDERS:
        raise PhysicsInputError(f"order must be one of {', '.join(queries.LINE_ORDERS)}")
    if query.limit is not None and query.limit < 0 or query.offset < 0:
        raise PhysicsInputError("limit and offset must not be negative")


def vacuum_window(query: LineQuery, air_formula: str) -> tuple[float, float]:
    """The query window as vacuum wavenumbers (cm-1): (min, max)."""
    from levels.physics.lines import air
    lo, hi = query.from_nm, query.to_nm
    if query.medium == "air":
        # air wavelengths exist above 200 nm only; below, the window is in vacuum by convention
        if lo is not None and lo > 200.0:
            lo = float(air.air_to_vacuum(lo, air_formula))
        if hi is not None and hi > 200.0:
            hi = float(air.air_to_vacuum(hi, air_formula))
    max_sigma = 1e7 / lo if lo else math.inf
    min_sigma = 1e7 / hi if hi else 0.0
    return min_sigma, max_sigma


def engine_rows(spectrum: str, levels: Sequence[Level], stored: Sequence, dataset_names: Mapping[int, str], *,
                multipoles: Sequence[str], window: tuple[float, float], max_upper_cm1: float | None,
                air_formula: str) -> list[LineRow]:
    """Rows of the engine's lines, with stored rates merged (see :func:`species_lines`)."""
    from levels.physics.lines.combination import build_lines

    resolved = [lv for lv in levels if lv.two_j is not None]
    index = {lv.id: i for i, lv in enumerate(resolved)}
    # several stored lines of one pair (a measured line, its derived Ritz line, computed rates): the one
    # with rates wins, then the dataset first in precedence
    rank = {dataset_id: i for i, dataset_id in enumerate(dataset_names)}
    by_pair: dict[tuple, Line] = {}
    for ln in sorted(stored, key=lambda ln: (ln.a_per_s is None, rank.get(ln.dataset_id, len(rank)), ln.id),
                     reverse=True):
        by_pair[(ln.lower_id, ln.upper_id, ln.multipole)] = ln
    observed_by_pair: dict[tuple, Line] = {}
    for ln in sorted(stored, key=lambda ln: (rank.get(ln.dataset_id, len(rank)), ln.id), reverse=True):
        if ln.observed_nm is not None:
            observed_by_pair[(ln.lower_id, ln.upper_id, ln.multipole)] = ln
    rows: list[LineRow] = []
    seen: set[tuple] = set()
    if resolved:
        lines = build_lines(
            np.array([lv.energy_cm1 for lv in resolved]),
            np.array([np.nan if lv.unc_cm1 is None else lv.unc_cm1 for lv in resolved]),
            np.array([lv.two_j for lv in resolved]), np.array([lv.parity for lv in resolved]),
            multipoles=multipoles, two_s=np.array([-1 if lv.multiplicity is None else lv.multiplicity - 1
                                                   for lv in resolved]),
            min_wavenumber_cm1=window[0], max_wavenumber_cm1=window[1],
            max_upper_cm1=math.inf if max_upper_cm1 is None else max_upper_cm1, air_formula=air_formula)
        for k in range(len(lines)):
            lo, up = resolved[int(lines.lower[k])], resolved[int(lines.upper[k])]
            multipole = str(lines.multipole[k])
            known = by_pair.get((lo.id, up.id, multipole))
            seen.add((lo.id, up.id, multipole))
            rows.append(engine_row(spectrum, lo, up, multipole, float(lines.wavenumber_cm1[k]),
                                    float(lines.vacuum_nm[k]), float(lines.air_nm[k]), float(lines.unc_nm[k]),
                                    known, dataset_names, bool(lines.intercombination[k])))
            obs = observed_by_pair.get((lo.id, up.id, multipole))
            if obs is not None:
                rows[-1]["obs_vacuum_nm"], rows[-1]["obs_air_nm"] = obs.vacuum_nm, obs.air_nm
                rows[-1]["note"] = "; ".join(filter(None, [rows[-1]["note"], "Ritz wavelengths; observed in obs_nm"]))
    del index
    level_by_id = {lv.id: lv for lv in levels}
    for ln in stored:
        key = (ln.lower_id, ln.upper_id, ln.multipole)
        if key in seen or ln.multipole not in multipoles:
            continue
        sigma = ln.wavenumber_cm1
        if not window[0] <= sigma <= window[1]:
            continue
        lo, up = level_by_id[ln.lower_id], level_by_id[ln.upper_id]
        if max_upper_cm1 is not None and up.energy_cm1 > max_upper_cm1:
            continue
        rows.append(engine_row(spectrum, lo, up, ln.multipole, sigma, ln.vacuum_nm,
                                math.nan if ln.air_nm is None else ln.air_nm,
                                math.nan if ln.unc_nm is None else ln.unc_nm, ln, dataset_names, False))
    return rows


def add_ritz_columns(rows: Sequence[LineRow], medium: str, *, air_formula: str = "iau2000") -> Sequence[LineRow]:
    """Fill :data:`RITZ_COLUMNS` (``obs_nm``, ``ritz_nm``, ``obs_minus_ritz_nm``) and ``line_name`` of line
    rows, in place (``line_name``: :func:`levels.notation.hydrogen_line_name`, None but for H I, D I, T I).

    The Ritz wavelength follows from the two levels (vacuum 1e7 / (E_upper - E_lower) nm, in air by
    ``air_formula`` above 200 nm); the observed one is a measured line's own wavelength (a stored row
    with ``observed_nm``) or, for an engine row, that of the stored measured line of the same pair.
    Both are given in ``medium`` (air above 200 nm when ``medium`` is "air", else vacuum).

    Parameters
    ----------
    rows : sequence of dict
        Line rows (:func:`line_rows` or :func:`species_lines`).
    medium : {"air", "vacuum"}
        Medium of the listing.
    air_formula : str
        Refractive index of air for Ritz values computed here.

    Returns
    -------
    The same rows.

    Examples
    --------
    >>> row = dict(lower_cm1=0.0, upper_cm1=20000.0, vacuum_nm=500.01, air_nm=None, observed_nm=500.01)
    >>> r = add_ritz_columns([row], "vacuum")[0]
    >>> r["ritz_nm"], round(r["obs_minus_ritz_nm"], 6)
    (500.0, 0.01)
    """
    from levels.physics.lines import air
    want_air = medium == "air"
    for row in rows:
        obs_vac, obs_air = row.get("obs_vacuum_nm"), row.get("obs_air_nm")
        if obs_vac is None and row.get("observed_nm") is not None:
            obs_vac, obs_air = row["vacuum_nm"], row["air_nm"]
        lo, up = row.get("lower_cm1"), row.get("upper_cm1")
        ritz_vac: float | None
        ritz_air: float | None
        if obs_vac is None:
            ritz_vac, ritz_air = row["vacuum_nm"], row["air_nm"]
        elif lo is not None and up is not None and up > lo:
            ritz_vac = 1e7 / (up - lo)
            ritz_air = float(air.vacuum_to_air(ritz_vac, air_formula)) if ritz_vac > 200 else None
        else:
            ritz_vac = ritz_air = None
        use_air = want_air and (ritz_air if obs_vac is None else obs_air) is not None
        ritz = ritz_air if use_air else ritz_vac
        obs = (obs_air if use_air else obs_vac) if obs_vac is not None else None
        row["ritz_nm"] = ritz
        row["obs_nm"] = obs
        row["obs_minus_ritz_nm"] = obs - ritz if obs is not None and ritz is not None else None
        row["line_name"] = hydrogen_line_name(row["spectrum"], principal_number(row["lower"]),
                                              principal_number(row["upper"])) if "spectrum" in row else None
    return rows


def engine_row(spectrum: str, lo: Level, up: Level, multipole: str, sigma: float, vacuum: float, air_nm: float,
               unc_nm: float, known: Line | None, dataset_names: Mapping[int, str], inter: bool) -> LineRow:
    """One engine line between levels ``lo`` and ``up``, with the rates of the stored line ``known`` (or None)."""
    notes = []
    if inter:
        notes.append("intercombination")
    if known is None:
        notes.append("rates unknown")
    row: LineRow = {
        "spectrum": spectrum, "lower": lo.label, "upper": up.label, "lower_cm1": lo.energy_cm1,
        "upper_cm1": up.energy_cm1, "wavenumber_cm1": sigma, "vacuum_nm": vacuum,
        "air_nm": None if not math.isfinite(air_nm) else air_nm, "multipole": multipole,
        "a_per_s": known.a_per_s if known is not None else None,
        "f_abs": known.f_abs if known is not None else None,
        "line_strength_au": known.line_strength_au if known is not None else None,
        "g_lower": lo.g, "g_upper": up.g, "unc_nm": None if not math.isfinite(unc_nm) else unc_nm,
        "dataset": dataset_names.get(known.dataset_id if known is not None else up.dataset_id, ""),
        "note": "; ".join(notes), "lower_id": lo.id, "upper_id": up.id,
        "lower_lifetime_s": lo.lifetime_s, "upper_lifetime_s": up.lifetime_s,
        "lower_two_j": lo.two_j, "upper_two_j": up.two_j, "lower_parity": lo.parity, "upper_parity": up.parity,
        "lower_multiplicity": lo.multiplicity, "upper_multiplicity": up.multiplicity, "lower_L": lo.big_l,
        "upper_L": up.big_l,
    }
    return row


def sort_rows(rows: list[LineRow], order: str) -> list[LineRow]:
    """Line rows in a query's order (:data:`levels.store.queries.LINE_ORDERS`)."""
    if order == "wavelength":
        return sorted(rows, key=lambda r: r["vacuum_nm"])
    if order == "-wavelength":
        return sorted(rows, key=lambda r: -r["vacuum_nm"])
    def value(row: LineRow) -> float | None:
        return row["line_strength_au"] if order == "strength" else row["a_per_s"]

    return sorted(rows, key=lambda r: (value(r) is None, -(value(r) or 0.0), r["vacuum_nm"]))
