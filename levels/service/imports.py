"""The one import path: levels, measured lines and whole datasets into a store, all-or-nothing.

Files are read and validated by :mod:`levels.io` first, collecting every problem with file, line and
field; then the dataset, its sample, the species, the rows, the rebuilt derived lines
(:mod:`levels.service.derived`) and an audit entry are written in one transaction
(``catalog.write``). Nothing is written when anything is wrong. :class:`levels.catalog.Catalog`
exposes these units of work as methods.
"""

from __future__ import annotations

import hashlib
import json
import os
from collections.abc import Mapping, Sequence
from pathlib import Path

from sqlalchemy.orm import Session

from levels.errors import AlreadyExistsError, InputFileError, PhysicsInputError, Problem, ReservedNameError
from levels.io import records as level_io
from levels.io.tables import read_delimited
from levels.notation import Spectrum
from levels.service import lookup
from levels.service.contract import ImportReport
from levels.service.derived import precheck_derived_lines, rebuild_derived_lines
from levels.service.duplicates import import_duplicate_warnings, refuse_same_state_twice
from levels.store import queries
from levels.store.schema import Dataset, Level

# ------------------------------------------------------------- units of work

def import_file(catalog, path: str | os.PathLike, *, sample: str | None = None, dataset: str | None = None,
                kind: str = "measured", citation: str = "", description: str = "",
                sample_conditions: Mapping[str, object] | None = None,
                content: bytes | None = None, source: str | None = None,
                allow_off_ritz: str | None = None, max_derived_lines: int | None = None,
                again: bool = False) -> ImportReport:
    """Import a levels or lines file as a new dataset, all-or-nothing.

    The whole file is validated first; any problem raises
    :class:`~levels.errors.InputFileError` and nothing is written. Then the
    dataset, its sample (created if new), the species, the levels and an audit
    entry are written in one transaction.

    Parameters
    ----------
    catalog : levels.catalog.Catalog
        The store.
    allow_off_ritz : str, optional
        For a lines file: why lines off their levels' Ritz wavenumbers are accepted
        (recorded in the dataset's options and the audit log); without it they are refused.
    max_derived_lines : int, optional
        Most derived lines one species may imply (default
        :func:`levels.service.derived.default_max_derived_lines`).
    again : bool
        Import a file whose content (header and rows; comments and blank lines aside) is
        already in the store once more under an automatic name; without it (and without an
        explicit ``dataset`` name, which imports the copy with a warning) such a file is refused
        (:class:`~levels.errors.AlreadyExistsError` naming the dataset that holds it).
    """
    name = source or Path(path).name
    raw = content if content is not None else path
    table = read_delimited(raw, source=name)
    digest = table_content_sha256(table)
    kind_of_file = detect_file_kind(table.columns, name, table.header_line)
    if kind_of_file == "lines":
        line_records = level_io.validate_lines(
            checked_columns(table, level_io.LINE_FILE_COLUMNS, level_io.LINE_FILE_REQUIRED), source=name)
        del table
        return import_line_records(catalog, line_records, source=name, sample=sample, dataset=dataset, kind=kind,
                                   citation=citation, description=description,
                                   sample_conditions=sample_conditions, allow_off_ritz=allow_off_ritz,
                                   max_derived_lines=max_derived_lines, content_sha256=digest, again=again)
    records = level_io.validate_levels(
        checked_columns(table, level_io.LEVEL_COLUMNS, level_io.LEVEL_REQUIRED),
        source=name, default_dataset=dataset)
    del table  # the raw rows (about half a kilobyte per level) are not needed for the write
    return import_level_records(catalog, records, source=name, sample=sample, kind=kind, citation=citation,
                                description=description, sample_conditions=sample_conditions,
                                max_derived_lines=max_derived_lines, content_sha256=digest, again=again)


def import_level_records(catalog, records: Sequence[level_io.LevelRecord], *, source: str,
                         sample: str | None = None, kind: str = "measured", citation: str = "",
                         description: str = "",
                         sample_conditions: Mapping[str, object] | None = None,
                         max_derived_lines: int | None = None, content_sha256: str | None = None,
                         again: bool = False) -> ImportReport:
    """Write validated level records as one new dataset (one transaction)."""
    if kind not in ("measured", "imported"):
        raise ValueError("imports make measured or imported datasets")
    if not records:
        raise InputFileError([Problem(source, None, None, "no levels to import")])
    explicit_name = records[0].dataset
    if explicit_name:
        refuse_reserved(explicit_name, source, records[0].line, "dataset")
    precheck_derived_lines(records, source, max_derived_lines)
    warnings: list[str] = []

    def work(session: Session) -> ImportReport:
        ds = new_file_dataset(session, catalog.actor, source=source, name=explicit_name, sample=sample,
                              sample_conditions=sample_conditions, kind=kind, citation=citation,
                              description=description or f"imported from {source}",
                              content_sha256=content_sha256, again=again, warnings=warnings)
        species_ids, n_levels = insert_level_records(session, records, ds.id)
        warnings.extend(import_duplicate_warnings(session, ds.id, ds.name, source, species_ids.values()))
        derived = sum(rebuild_derived_lines(session, species_ids, catalog.actor, max_lines=max_derived_lines,
                                            source=source).values())
        names = sorted({s.name for s in species_ids})
        queries.record_audit(session, "import-levels", f"dataset {ds.name}",
                             {"source": source, "levels": n_levels, "species": names,
                              "sample": sample}, actor=catalog.actor)
        return ImportReport(source=source, kind=kind, dataset=ds.name, dataset_id=ds.id, sample=sample,
                            species=names, levels=n_levels, lines=derived, warnings=list(warnings))

    return catalog.write(work)


def import_line_records(catalog, records: Sequence[level_io.LineRecord], *, source: str, sample: str | None = None,
                        dataset: str | None = None, kind: str = "measured", citation: str = "",
                        description: str = "", sample_conditions: Mapping[str, object] | None = None,
                        air_formula: str = "iau2000", allow_off_ritz: str | None = None,
                        max_derived_lines: int | None = None, content_sha256: str | None = None,
                        again: bool = False) -> ImportReport:
    """Write validated measured lines as one new dataset; labels resolve to stored levels.

    Each line is checked against its levels (selection rules of its multipole, Ritz
    wavenumber; see :func:`levels.lab.store_measured_lines`); ``allow_off_ritz`` gives the
    reason to accept lines off their Ritz wavenumbers, kept in the dataset's options.
    """
    from levels.service import lab

    if not records:
        raise InputFileError([Problem(source, None, None, "no lines to import")])

    if dataset:
        refuse_reserved(dataset, source, None, "dataset")
    warnings: list[str] = []

    def work(session: Session) -> ImportReport:
        ds = new_file_dataset(session, catalog.actor, source=source, name=dataset, sample=sample,
                              sample_conditions=sample_conditions, kind=kind, citation=citation,
                              description=description or f"lines imported from {source}",
                              content_sha256=content_sha256, again=again, warnings=warnings,
                              options={"air_formula": air_formula})
        checked: dict = {}
        count = lab.store_measured_lines(session, records, ds.id, source, air_formula,
                                         allow_off_ritz=allow_off_ritz, report=checked)
        record_off_ritz(ds, allow_off_ritz, checked, warnings, source)
        derived = rebuild_derived_lines(session, {r.spectrum for r in records}, catalog.actor,
                                        max_lines=max_derived_lines, source=source)
        names = sorted({r.spectrum.name for r in records})
        queries.record_audit(session, "import-lines", f"dataset {ds.name}",
                             {"source": source, "lines": count, "species": names, "sample": sample,
                              "derived_lines": derived, "off_ritz": checked.get("off_ritz", 0),
                              "allow_off_ritz": allow_off_ritz}, actor=catalog.actor)
        return ImportReport(source=source, kind=kind, dataset=ds.name, dataset_id=ds.id, sample=sample,
                            species=names, lines=count, warnings=list(warnings))

    return catalog.write(work)


def import_dataset(catalog, level_records: Sequence[level_io.LevelRecord],
                   line_records: Sequence[level_io.LineRecord], *, name: str, source: str,
                   sample: str | None = None, kind: str = "measured", citation: str = "",
                   description: str = "", air_formula: str = "iau2000",
                   line_source: str | None = None, allow_off_ritz: str | None = None,
                   max_derived_lines: int | None = None, method: str = "file import") -> ImportReport:
    """One new dataset with levels and/or measured lines, in one transaction.

    ``method`` says how the data came in (``"file import"``; the JSON API records its own).

    Line labels resolve against the store's levels with the new levels first
    (the new dataset is the newest measured one), so a body may carry a
    sample's levels and the lines between them together.
    """
    from levels.service import lab

    if not level_records and not line_records:
        raise InputFileError([Problem(source, None, None, "a dataset needs levels or lines")])
    if kind not in ("measured", "imported"):
        raise ValueError("imports make measured or imported datasets")
    refuse_reserved(name, source, None, "name")

    def work(session: Session) -> ImportReport:
        sample_row = queries.get_or_create_sample(session, sample) if sample else None
        ds = queries.create_dataset(session, name=name, kind=kind, citation=citation, author=catalog.actor,
                                    description=description or f"imported from {source}", method=method,
                                    sample=sample_row, options={"air_formula": air_formula})
        species_ids, n_levels = insert_level_records(session, level_records, ds.id)
        same_states = import_duplicate_warnings(session, ds.id, ds.name, source, species_ids.values())
        checked: dict = {}
        count = (lab.store_measured_lines(session, line_records, ds.id, line_source or source, air_formula,
                                          allow_off_ritz=allow_off_ritz, report=checked)
                 if line_records else 0)
        record_off_ritz(ds, allow_off_ritz, checked, [], source)
        spectra = set(species_ids) | {r.spectrum for r in line_records}
        derived = rebuild_derived_lines(session, spectra, catalog.actor, max_lines=max_derived_lines, source=source)
        names = sorted({r.spectrum.name for r in level_records} | {r.spectrum.name for r in line_records})
        queries.record_audit(session, "import-dataset", f"dataset {ds.name}",
                             {"source": source, "levels": n_levels, "lines": count, "species": names,
                              "sample": sample, "derived_lines": derived}, actor=catalog.actor)
        return ImportReport(source=source, kind=kind, dataset=ds.name, dataset_id=ds.id, sample=sample,
                            species=names, levels=n_levels, lines=count, warnings=same_states)

    return catalog.write(work)


def add_levels(catalog, dataset: str | int, records: Sequence[level_io.LevelRecord], *,
               source: str = "<form>") -> int:
    """Add validated levels to an existing measured or imported dataset (one transaction)."""

    def work(session: Session) -> int:
        ds = queries.require_dataset(session, dataset)
        if ds.kind == "computed":
            raise PhysicsInputError(f"dataset {ds.name!r} is computed; add measured levels to a measured dataset")
        species_ids, n_levels = insert_level_records(session, records, ds.id)
        refuse_same_state_twice(session, ds.id, ds.name)
        rebuild_derived_lines(session, species_ids, catalog.actor, source=source)
        queries.record_audit(session, "add-levels", f"dataset {ds.name}", {"source": source, "levels": n_levels},
                             actor=catalog.actor)
        return n_levels

    return catalog.write(work)


def preview_levels(content: bytes, source: str) -> tuple[list[level_io.LevelRecord], list[Problem]]:
    """Parse and validate an uploaded levels file without writing: (records, problems)."""
    try:
        table = read_delimited(content, source=source)
        records = level_io.validate_levels(
            checked_columns(table, level_io.LEVEL_COLUMNS, level_io.LEVEL_REQUIRED), source=source)
    except InputFileError as exc:
        return [], exc.problems
    return records, []


# ------------------------------------------------------------- file checks

def detect_file_kind(columns: Sequence[str], source: str, header_line: int) -> str:
    """``"lines"`` when the header has ``wavelength_nm``, else ``"levels"`` (the default kind)."""
    return "lines" if "wavelength_nm" in set(columns) else "levels"


def checked_columns(table, known: Sequence[str], required: Sequence[str]):
    """The table's rows when its header has only ``known`` columns and every ``required`` one.

    Raises
    ------
    InputFileError
        Every unknown and every missing column, each naming the file and header line.
    """
    problems = []
    for col in table.columns:
        if col not in known:
            problems.append(Problem(table.source, table.header_line, col,
                                    f"unknown column; known columns are {', '.join(known)}"))
    for col in required:
        if col not in table.columns:
            problems.append(Problem(table.source, table.header_line, col, "required column is missing from the header"))
    if problems:
        raise InputFileError(problems)
    return table.rows


def table_content_sha256(table) -> str:
    """SHA-256 (hex) of a read table's content: its columns and rows in order, without
    comments, blank lines or line numbers, so a copy of a file with other comments or
    line ends has the same digest."""
    digest = hashlib.sha256(json.dumps(list(table.columns), ensure_ascii=False).encode("utf-8"))
    for _, row in table.rows:
        digest.update(b"\n")
        digest.update(json.dumps([row.get(c, "") for c in table.columns], ensure_ascii=False).encode("utf-8"))
    return digest.hexdigest()


# ------------------------------------------------------------- writing, in the caller's transaction

def insert_level_records(session: Session, records: Sequence[level_io.LevelRecord],
                         dataset_id: int, block: int = 20_000) -> tuple[dict[Spectrum, int], int]:
    """Insert validated levels into a dataset (species created as needed); return species ids and the count.

    Rows are built and sent to the driver a block at a time, so a file of 10^6 levels never
    holds 10^6 row dicts besides its records.
    """
    species_ids: dict[Spectrum, int] = {}
    for start in range(0, len(records), block):
        rows = []
        for rec in records[start:start + block]:
            if rec.spectrum not in species_ids:
                species_ids[rec.spectrum] = lookup.get_or_create_species(session, rec.spectrum).id
            rows.append(level_insert_row(rec, dataset_id, species_ids[rec.spectrum]))
        queries.insert_full_rows(session, Level, rows)
    session.flush()
    return species_ids, len(records)


def level_insert_row(rec: level_io.LevelRecord, dataset_id: int, species_id: int) -> dict:
    """The ``levels`` table row of a validated level (LS Landé g filled in where the file gave none)."""
    lande = rec.lande_g
    if lande is None and rec.multiplicity is not None and rec.big_l is not None:  # an LS term gives both
        from levels.physics.lines.lande import lande_g_ls

        lande = float(lande_g_ls(rec.multiplicity - 1, rec.big_l, rec.two_j))
    return {
        "dataset_id": dataset_id, "species_id": species_id, "label": rec.label,
        "configuration": rec.configuration, "state_configuration": rec.state_configuration,
        "term": rec.term, "two_j": rec.two_j, "g": rec.two_j + 1,
        "parity": rec.parity,
        "energy_cm1": rec.energy_cm1, "unc_cm1": rec.unc_cm1, "multiplicity": rec.multiplicity,
        "big_l": rec.big_l, "n": rec.n, "l": rec.l, "lifetime_s": rec.lifetime_s, "lande_g": lande,
    }


def record_off_ritz(ds: Dataset, reason: str | None, checked: Mapping, warnings: list[str], source: str) -> None:
    """Keep the reason for accepted off-Ritz lines in the dataset's options, and say so."""
    off = int(checked.get("off_ritz", 0) or 0)
    if reason is None:
        return
    options = json.loads(ds.options_json or "{}")
    options.update({"allow_off_ritz": reason, "off_ritz_lines": off})
    ds.options_json = json.dumps(options, sort_keys=True)
    if off:
        warnings.append(f"{source}: {off} line{'s' if off != 1 else ''} off {'their' if off != 1 else 'its'} Ritz "
                        f"wavenumber accepted ({reason}); each carries a note")


# ------------------------------------------------------------- dataset names

def new_file_dataset(session: Session, actor: str, *, source: str, name: str | None, sample: str | None,
                     sample_conditions: Mapping | None, kind: str, citation: str, description: str,
                     content_sha256: str | None, again: bool, warnings: list[str],
                     options: Mapping | None = None) -> Dataset:
    """The dataset a file import writes into: the same content refused unless ``again``, the explicit ``name``
    or a free plain one, the sample made on first use."""
    refuse_same_content(session, content_sha256, again, source, warnings, named=bool(name))
    dataset_name = name or free_dataset_name(session, source, sample, kind, warnings)
    sample_row = None
    if sample:
        sample_row = queries.get_or_create_sample(session, sample, **dict(sample_conditions or {}))
    return queries.create_dataset(session, name=dataset_name, kind=kind, citation=citation, author=actor,
                                  description=description, method="file import", sample=sample_row,
                                  content_sha256=content_sha256, options=dict(options) if options else None)


def refuse_same_content(session: Session, content_sha256: str | None, again: bool, source: str,
                        warnings: list[str], named: bool = False) -> None:
    """Refuse a file whose content a dataset already holds unless ``again`` (then note it).

    An explicit new dataset name (``named``) is refused too: a new name does not make the data
    new, and two copies would count every level and line twice."""
    if content_sha256 is None:
        return
    earlier = queries.datasets_with_content(session, content_sha256)
    if not earlier:
        return
    names = ", ".join(repr(ds.name) for ds in earlier)
    if not again:
        why = "; a new dataset name does not make the data new" if named else ""
        raise AlreadyExistsError(f"{source}: the same content was already imported as dataset {names}{why}; "
                                 "nothing was written (import it once more with --again)")
    warnings.append(f"{source}: the same content was already imported as dataset {names}; imported again "
                    "as asked")


def refuse_reserved(name: str, source: str, line: int | None, field_name: str) -> None:
    """Raise :class:`ReservedNameError` naming ``field_name`` when a user dataset name has a reserved form
    (and :class:`~levels.errors.InputFileError` when it is not a plain name)."""
    if queries.is_reserved_dataset_name(name):
        raise ReservedNameError([Problem(source, line, field_name, queries.reserved_name_message(name))])
    problem = queries.dataset_name_problem(name)
    if problem is not None:
        raise InputFileError([Problem(source, line, field_name, f"dataset name {name!r} {problem}")])


def free_dataset_name(session: Session, source: str, sample: str | None, kind: str = "measured",
                      warnings: list[str] | None = None) -> str:
    """``sample/file-stem``, with `` (2)``, `` (3)`` ... appended when taken.

    The name is made plain first (:func:`levels.store.queries.plain_dataset_name`): no
    ``#``, no leading formula character, no control character.

    A file stem of a reserved form (``derived lines Na I A=23.csv``) is prefixed by the
    dataset's kind (``measured derived lines Na I A=23``), with a warning: the name was
    not chosen by the user, so the import goes ahead under a name no rebuild can take.
    """
    stem = Path(source).stem or "import"
    if not sample and queries.is_reserved_dataset_name(stem):
        renamed = f"{kind} {stem}"
        if warnings is not None:
            warnings.append(f"{source}: the file name {stem!r} has the form of a computed dataset's name; "
                            f"the dataset is named {renamed!r} (give --dataset to choose another)")
        stem = renamed
    base = queries.plain_dataset_name(f"{sample + '/' if sample else ''}{stem}")
    name, number = base, 1
    while queries.find_dataset(session, name) is not None:
        number += 1
        name = queries.numbered_dataset_name(base, number)
    return name
