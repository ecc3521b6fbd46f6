"""Store maintenance as units of work on a :class:`~levels.catalog.Catalog`.

What a lab needs to keep years of measured levels safe, next to the catalog's
own writes:

- :func:`check` - the integrity check of :mod:`levels.store.integrity`;
- :func:`export_store` / :func:`import_store` - the whole store to and from
  one ``levels-store`` file (:mod:`levels.store.backup`), for backups and for
  moving between SQLite and PostgreSQL;
- :func:`history` - the audit log (who wrote what, when);
- :func:`retract_dataset` / :func:`restore_dataset` - hide a measured or
  imported dataset from every default query without deleting a row, and
  bring it back. Both run in one transaction that also rebuilds the derived
  lines of the dataset's species (their levels change with the precedence) and
  writes an audit entry.

Every write here goes through :meth:`Catalog.write` (one transaction with
retries) and records an audit entry in the same transaction.
"""

from __future__ import annotations

import json
import os
from collections.abc import Callable
from typing import TYPE_CHECKING

from sqlalchemy.orm import Session

from levels.errors import LevelsError
from levels.io import limits
from levels.io.paths import check_output_path
from levels.service.derived import store_derived_lines
from levels.store import backup, integrity, queries
from levels.store.schema import TABLE_ORDER, AuditEntry, Base

if TYPE_CHECKING:
    from levels.catalog import Catalog

#: kinds of dataset that can be retracted (computed sets are replaced by recomputing them)
RETRACTABLE_KINDS = ("measured", "imported")
HISTORY_COLUMNS = ("id", "at", "actor", "action", "target", "detail")


class DatasetStateError(LevelsError, ValueError):
    """The dataset is not in a state that allows the operation (already retracted, computed, ...)."""


# ----------------------------------------------------------------- check

def check(catalog: Catalog) -> integrity.StoreReport:
    """Integrity report of the catalog's store (see :mod:`levels.store.integrity`).

    Returns
    -------
    levels.store.integrity.StoreReport
        Counts per table, checks run and problems found (``report.ok`` when none).
    """
    report = integrity.inspect_store(catalog.engine)
    existing = {name for name, count in report.counts.items() if count >= 0}
    if existing:
        report.checks.append("stored values within the limits both engines hold and the project's rules "
                             "(levels.io.limits: whole-number ranges, text lengths, no control characters, "
                             "finite bounds, level energies not negative)")
        try:
            report.problems.extend(limit_problems(catalog, existing))
        except Exception as exc:  # a damaged file: the database's own check has said so already
            report.problems.append(f"store: the stored-value check could not run: {str(exc).splitlines()[0]}")
    return report


def limit_problems(catalog: Catalog, tables=TABLE_ORDER) -> list[str]:
    """Rows holding a value the store's limits or the project's rules refuse (:mod:`levels.io.limits`).

    One line per table and column: how many rows, the first ids, and what is wrong with the first one.
    """
    problems: list[str] = []

    def report(name: str, column: str, ids: list[int], total: int, first: str) -> None:
        shown = ", ".join(str(i) for i in ids[:integrity.SHOWN_IDS]) + (", ..." if total > integrity.SHOWN_IDS else "")
        problems.append(f"{name}: {total} row{'s' if total != 1 else ''} whose {column} the rules "
                        f"refuse (id {shown}); id {ids[0]}: {column} {first}")

    def work(session: Session) -> None:
        for name in TABLE_ORDER:
            if name not in tables:
                continue
            stored = Base.metadata.tables[name].c
            specs = limits.COLUMNS[name]
            # numbers: one query per column, the bounds as SQL (NaN fails every comparison on SQLite, where
            # it is stored as NULL anyway, and passes 'x > -1e300 AND x < 1e300' on neither engine)
            for column, spec in specs.items():
                if spec.kind not in ("int", "float") or column not in stored:
                    continue
                high = None if spec.infinity_ok and spec.high == float("inf") else spec.high
                ids, total, value = queries.rows_outside(session, name, column, low=spec.low, low_open=spec.low_open,
                                                         high=high, high_open=spec.high_open,
                                                         first=integrity.SHOWN_IDS + 1)
                if ids:
                    report(name, column, ids, total, limits.value_problem(name, column, value) or f"is {value!r}")
            # texts: length and control characters, read in chunks
            texts = [c for c, spec in specs.items() if spec.kind == "text" and c in stored]
            if not texts:
                continue
            found: dict[str, tuple[list[int], str]] = {}
            for row in queries.text_rows(session, name, texts):
                for column, value in zip(texts, row[1:]):
                    if value is None or (value.isprintable() and len(value) <= (specs[column].length or len(value))):
                        continue
                    message = limits.value_problem(name, column, value)
                    if message:
                        ids, _ = found.setdefault(column, ([], message))
                        ids.append(row[0])
            for column, (ids, first) in found.items():
                report(name, column, ids, len(ids), first)

    with database_read(catalog) as session:
        work(session)
    return problems


def database_read(catalog: Catalog):
    """A read session on the catalog's store that works on any schema revision (for ``check``)."""
    from levels.store import database

    return _ReadSession(database.session_factory(catalog.engine))


class _ReadSession:
    def __init__(self, factory):
        self.session = factory()

    def __enter__(self) -> Session:
        self.session.begin()
        return self.session

    def __exit__(self, *exc) -> None:
        self.session.rollback()
        self.session.close()


# ----------------------------------------------------------------- export / import

def export_store(catalog: Catalog, path: str | os.PathLike,
                 progress: Callable[[str, int, int], None] | None = None) -> backup.TransferSummary:
    """Write the whole store to ``path`` (``levels-store`` JSON lines; ``.gz`` compresses).

    A read: nothing is written to the store, so no audit entry.
    """
    check_output_path(path, option="export-store FILE", store_url=catalog.url)
    return backup.export_store(catalog.engine, path, progress=progress)


def import_store(catalog: Catalog, path: str | os.PathLike, *, audit: bool = True) -> backup.TransferSummary:
    """Fill the catalog's empty store from a ``levels-store`` file, all or nothing.

    Parameters
    ----------
    catalog : Catalog
        The target store (uninitialised or empty at the current schema).
    path : path
        The file written by :func:`export_store`.
    audit : bool
        Record an ``import-store`` audit entry after the imported rows (default).
        With False the store becomes an exact replica of the exported one
        (its own export file is byte-identical to ``path``).

    Raises
    ------
    levels.store.backup.StoreFileError
        Damaged file (checksum), another format or schema revision, or a non-empty store.
    """

    def record(session: Session, header: dict, counts: dict) -> None:
        if audit:
            queries.record_audit(session, "import-store", f"file {os.path.basename(os.fspath(path))}",
                                 {"sha256": header["sha256"], "rows": counts,
                                  "format_version": header["version"], "written_by": header.get("written_by")},
                                 actor=catalog.actor)

    return backup.import_store(catalog.engine, path, after=record, check_row=check_store_row)


def check_store_row(table: str, values: dict, where: str) -> None:
    """Refuse a row of a store file that the limits or the project's rules refuse (before anything is written).

    Raises
    ------
    levels.store.backup.StoreFileError
        Naming file, line, table and column.
    """
    problems = limits.row_problems(table, values)
    if problems:
        column, message = problems[0]
        raise backup.StoreFileError(f"{where}: {table}.{column} {message}; nothing was written")


# ----------------------------------------------------------------- history

def history(catalog: Catalog, *, limit: int | None = 50, action: str | None = None,
            target: str | None = None) -> list[dict]:
    """Audit entries, newest first.

    Parameters
    ----------
    limit : int or None
        At most this many entries (None or 0: all).
    action : str, optional
        Only entries of this action (``import-levels``, ``retract-dataset`` ...).
    target : str, optional
        Only entries whose target contains this text (``dataset li-cell-amber``).

    Returns
    -------
    list of dict
        Rows with HISTORY_COLUMNS; ``at`` is ISO 8601 UTC, ``detail`` a dict.
    """
    if limit is not None and limit < 0:
        raise ValueError("limit must not be negative")

    def work(session: Session) -> list[dict]:
        return [audit_row(entry) for entry in queries.audit_entries(session, limit=limit, action=action,
                                                                     target=target)]

    return catalog.read(work)


def audit_row(entry: AuditEntry) -> dict:
    """An audit entry as a row of HISTORY_COLUMNS."""
    try:
        detail = json.loads(entry.detail_json or "{}")
    except ValueError:
        detail = {"unparsed": entry.detail_json}
    return {"id": entry.id, "at": backup.encode_value(entry.at, "datetime"), "actor": entry.actor,
            "action": entry.action, "target": entry.target, "detail": detail}


# ----------------------------------------------------------------- retract / restore

def _set_retracted(catalog: Catalog, dataset: str | int, retracted: bool, reason: str) -> dict:
    verb = "retract" if retracted else "restore"

    def work(session: Session) -> dict:
        ds = queries.require_dataset(session, dataset)
        if ds.kind not in RETRACTABLE_KINDS:
            raise DatasetStateError(
                f"dataset {ds.name!r} is {ds.kind}; only measured or imported datasets are retracted "
                "(a computed dataset is replaced by computing it again)")
        if bool(ds.retracted) == retracted:
            state = "already retracted" if retracted else "not retracted"
            raise DatasetStateError(f"dataset {ds.name!r} is {state}")
        ds.retracted = 1 if retracted else 0
        session.flush()
        derived = {}
        for species in queries.dataset_species(session, ds):
            derived[species.name] = store_derived_lines(session, species, catalog.actor)
        dependent = queries.dependent_line_counts(session, ds) if retracted else {}
        detail = {"dataset_id": ds.id, "kind": ds.kind, "reason": reason, "derived_lines": derived}
        if dependent:
            detail["lines_of_other_datasets"] = dependent
        queries.record_audit(session, f"{verb}-dataset", f"dataset {ds.name}", detail, actor=catalog.actor)
        warnings = [f"{count} line{'s' if count != 1 else ''} of dataset {name!r} join levels of {ds.name!r}; "
                    f"they stay in {name!r} (retract it too if they should go)"
                    for name, count in dependent.items()]
        return {"dataset": ds.name, "dataset_id": ds.id, "kind": ds.kind, "retracted": retracted,
                "species": list(derived), "derived_lines": derived, "warnings": warnings}

    return catalog.write(work)


def retract_dataset(catalog: Catalog, dataset: str | int, *, reason: str = "") -> dict:
    """Hide a measured or imported dataset from default queries, keeping every row.

    In one transaction: ``datasets.retracted = 1``, the derived lines of each
    species of the dataset rebuilt from the levels still visible, and a
    ``retract-dataset`` audit entry (with ``reason``). A query that names the
    dataset explicitly still sees it.

    Parameters
    ----------
    catalog : Catalog
    dataset : str or int
        Dataset name or id.
    reason : str
        Why (kept in the audit log).

    Returns
    -------
    dict
        ``dataset``, ``dataset_id``, ``kind``, ``retracted``, ``species``,
        ``derived_lines`` (species name -> lines rebuilt) and ``warnings`` (lines
        of other datasets that join this dataset's levels).

    Raises
    ------
    NotFoundError
        No such dataset.
    DatasetStateError
        The dataset is computed or already retracted.
    """
    return _set_retracted(catalog, dataset, True, reason)


def restore_dataset(catalog: Catalog, dataset: str | int, *, reason: str = "") -> dict:
    """Bring a retracted dataset back into default queries (the reverse of :func:`retract_dataset`).

    Raises
    ------
    NotFoundError
        No such dataset.
    DatasetStateError
        The dataset is computed or not retracted.
    """
    return _set_retracted(catalog, dataset, False, reason)
