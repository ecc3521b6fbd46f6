"""Derived lines: the E1 lines a species' stored levels imply (Ritz combination), rebuilt in the writer's transaction.

Every import of levels or lines, a retract or restore and a one-electron recompute rebuild the
species' computed dataset ``derived lines <spectrum> A=<mass>`` (role :data:`DERIVED_ROLE`), so the
line finder and the web tables can use the stored ``species + vacuum_nm`` index. A pair that a stored
*computed* E1 line already covers is not derived again; a pair with a *measured* line keeps its Ritz
line beside it, noted :data:`RITZ_NOTE`. The method is the Ritz combination principle
(:mod:`levels.physics.lines.combination`).
"""

from __future__ import annotations

import os
from collections.abc import Iterable, Sequence

import numpy as np
from sqlalchemy.orm import Session

from levels import __version__
from levels.errors import PhysicsInputError, TooLargeError
from levels.io import records as level_io
from levels.notation import Spectrum
from levels.service import lookup
from levels.store import queries
from levels.store.schema import Species

DERIVED_METHOD = "ritz-combination"
DERIVED_ROLE = "derived-lines"
#: lines computed, converted and inserted per block by the derived-line rebuild
DERIVED_BLOCK = 20_000
#: default most derived lines one species may imply (``levels import --max-derived-lines``,
#: or the environment variable ``LEVELS_MAX_DERIVED_LINES``); about 2.5 GB of SQLite store
#: (~250 bytes per stored line with its indexes) and several minutes of writing at the limit
DEFAULT_MAX_DERIVED_LINES = 10_000_000
MAX_DERIVED_ENV = "LEVELS_MAX_DERIVED_LINES"
RITZ_NOTE = "Ritz value of a pair with an observed line"


def derived_dataset_name(spectrum_name: str, mass_number: int) -> str:
    """Name of the dataset holding a species' lines derived from its levels."""
    return f"derived lines {spectrum_name} A={mass_number}"


def default_max_derived_lines() -> int:
    """The limit of derived lines per species: ``LEVELS_MAX_DERIVED_LINES`` if set, else the default."""
    value = os.environ.get(MAX_DERIVED_ENV, "").strip()
    if not value:
        return DEFAULT_MAX_DERIVED_LINES
    try:
        number = int(float(value))
    except ValueError:
        raise PhysicsInputError(f"{MAX_DERIVED_ENV}={value!r} is not a whole number of lines") from None
    if number < 0:
        raise PhysicsInputError(f"{MAX_DERIVED_ENV} must not be negative, got {number}")
    return number


def rebuild_derived_lines(session: Session, spectra: Iterable[Spectrum], actor: str, *,
                          max_lines: int | None = None, source: str | None = None) -> dict[str, int]:
    """Rebuild the derived lines of each stored species among ``spectra`` in the caller's transaction.

    Species are taken in a sorted order, so concurrent writers take their locks in one order.
    Returns the count of derived lines per species name.
    """
    counts: dict[str, int] = {}
    for spec in sorted(set(spectra), key=lambda sp: (sp.z, sp.charge, sp.mass_number or 0)):
        species = lookup.find_species(session, spec)
        if species is not None:
            counts[species.name] = store_derived_lines(session, species, actor, max_lines=max_lines, source=source)
    return counts


def store_derived_lines(session: Session, species: Species, actor: str, *, max_lines: int | None = None,
                        source: str | None = None) -> int:
    """Replace the species' derived dataset with the E1 lines its levels imply (Ritz values).

    Runs inside the caller's transaction, so an import and its lines land together. The
    dataset is found by role and species (never by name). A pair that a *computed* dataset
    already stores (hydrogenic or rates lines) is not derived again; a pair with a
    *measured* line keeps its Ritz line beside the observed one, noted :data:`RITZ_NOTE`.

    Memory is bounded by design: levels come as numpy columns (:func:`queries.level_columns`),
    pairs are generated, converted and inserted in blocks of :data:`DERIVED_BLOCK` lines
    (:func:`levels.physics.lines.combination.iter_line_blocks`, one driver executemany per block),
    so the peak is one block (about 0.8 kB per line while the driver's tuples exist, ~16 MB
    for 20,000 lines) plus the level columns (~40 bytes per level), one row of pair indices
    (16 bytes per level) and the stored pair keys (8 bytes per stored line), whatever the
    number of lines. ``tests/bench/bench_memory.py`` measures it.

    Raises
    ------
    TooLargeError
        The levels imply more lines than ``max_lines`` (default :func:`default_max_derived_lines`);
        the message names ``source`` and the option that raises the limit.
    """
    from levels.physics.lines import selection
    from levels.physics.lines.combination import iter_line_blocks

    # one writer per species at a time rebuilds its derived lines (row lock on PostgreSQL;
    # SQLite write transactions are serialised already)
    queries.lock_species(session, species.id)
    old = queries.find_computed_dataset(session, species.id, DERIVED_ROLE)
    if old is not None:
        queries.delete_dataset(session, old)
    chosen = [d.id for d in queries.visible_datasets(session) if d.role != DERIVED_ROLE]
    levels = queries.level_columns(session, species.id, chosen)
    if levels["id"].size < 2:
        return 0
    limit = default_max_derived_lines() if max_lines is None else max_lines
    bound = selection.count_candidate_pairs(levels["two_j"], levels["parity"], ("E1",))
    if bound > limit:
        raise TooLargeError(too_many_lines_message(source, int(levels["id"].size), species.name, bound, limit))
    computed = queries.stored_pair_keys(session, species.id, chosen, "E1", observed=False)
    observed = queries.stored_pair_keys(session, species.id, chosen, "E1", observed=True)
    ids = levels["id"]
    ds = None
    count = 0
    for block in iter_line_blocks(levels["energy_cm1"], levels["unc_cm1"], levels["two_j"], levels["parity"],
                                  block=DERIVED_BLOCK):
        lower_ids, upper_ids = ids[block.lower], ids[block.upper]
        keys = queries.pair_keys(lower_ids, upper_ids)
        keep = ~_sorted_member(keys, computed)
        n = int(keep.sum())
        if n == 0:
            continue
        if ds is None:
            ds = queries.create_dataset(
                session, name=derived_dataset_name(species.name, species.mass_number), kind="computed",
                method=DERIVED_METHOD, role=DERIVED_ROLE, owner_species_id=species.id,
                method_version=f"levels {__version__}", author=actor,
                citation="Ritz combination of stored levels (levels.physics.lines.combination)",
                description=f"E1 lines implied by the stored levels of {species.name}",
                options={"air_formula": "iau2000", "multipoles": ["E1"]})
        air = block.air_nm[keep]
        columns = {
            "dataset_id": np.full(n, ds.id), "species_id": np.full(n, species.id),
            "lower_id": lower_ids[keep], "upper_id": upper_ids[keep], "multipole": np.full(n, "E1", dtype=object),
            "wavenumber_cm1": block.wavenumber_cm1[keep], "vacuum_nm": block.vacuum_nm[keep],
            "air_nm": np.where(np.isfinite(air), air, np.nan), "a_per_s": np.full(n, np.nan),
            "f_abs": np.full(n, np.nan), "line_strength_au": np.full(n, np.nan), "unc_nm": block.unc_nm[keep],
            "note": np.where(_sorted_member(keys[keep], observed), RITZ_NOTE, "").astype(object),
        }
        queries.insert_line_columns(session, columns, 0, n)
        count += n
    return count


def too_many_lines_message(source: str | None, n_levels: int, species_name: str, bound: int, limit: int) -> str:
    """The refusal of a rebuild whose levels imply more than ``limit`` derived lines (names the way out)."""
    where = f"{source}: " if source else ""
    return (f"{where}the {n_levels:,} levels of {species_name} imply up to {bound:,} derived E1 lines "
            f"(Ritz combinations), above the limit of {limit:,} (about {bound * 250 / 1e9:.1f} GB of store); "
            f"to store them, pass --max-derived-lines {bound} to 'levels import' (or set {MAX_DERIVED_ENV}="
            f"{bound} for every command that rebuilds them); nothing was written")


def precheck_derived_lines(records: Sequence[level_io.LevelRecord], source: str, max_lines: int | None) -> None:
    """Refuse before writing when a file's own levels of one species already imply too many derived lines.

    The stored levels can only add pairs, so this is a lower bound of what the rebuild would
    refuse; it spares writing (and rolling back) a million levels first.
    """
    from levels.physics.lines import selection

    limit = default_max_derived_lines() if max_lines is None else max_lines
    by_species: dict[Spectrum, list[tuple[int, int]]] = {}
    for rec in records:
        if rec.two_j is not None:
            by_species.setdefault(rec.spectrum, []).append((rec.two_j, rec.parity))
    for spectrum, pairs in by_species.items():
        columns = np.array(pairs, dtype=np.int64)
        bound = selection.count_candidate_pairs(columns[:, 0], columns[:, 1], ("E1",))
        if bound > limit:
            raise TooLargeError(too_many_lines_message(source, len(pairs), spectrum.name, bound, limit))


def _sorted_member(keys: np.ndarray, sorted_keys: np.ndarray) -> np.ndarray:
    """``np.isin(keys, sorted_keys)`` for a sorted, unique ``sorted_keys`` (binary search, no temporary sort)."""
    if sorted_keys.size == 0:
        return np.zeros(keys.size, dtype=bool)
    pos = np.searchsorted(sorted_keys, keys)
    pos[pos == sorted_keys.size] = 0
    return sorted_keys[pos] == keys
