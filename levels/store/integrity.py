"""Integrity check of a store: the database's own checks plus the project's invariants.

:func:`check_store` answers one question: can the data in this store be
trusted as it is? It runs, in order,

1. the database's own check: on SQLite ``PRAGMA integrity_check`` (b-tree
   structure, indexes, NOT NULL and CHECK constraints) and ``PRAGMA
   foreign_key_check``; on PostgreSQL a look at the system catalogues: every
   primary key, unique, foreign-key and CHECK constraint the schema declares is
   present and validated (not ``NOT VALID``), every index is valid and ready,
   and no trigger of the store's tables (foreign keys are enforced by
   triggers) has been disabled;
2. the schema's constraints re-evaluated against the rows by plain queries on
   either backend (a row that slipped past a constraint, for instance written
   while foreign keys were switched off, is named by id): NOT NULL columns,
   CHECK expressions, unique keys and every foreign key;
3. the project's invariants, which no single constraint can state:

   - the schema is at the revision this code knows (:func:`database.head_revision`)
     and every table and column of :data:`levels.store.schema.Base` exists;
   - every line's two levels exist and belong to the line's species;
   - the lower level of a line is below the upper one in energy;
   - energies (levels, ionization limits) and wavenumbers are finite;
   - ``wavenumber_cm1`` agrees with ``vacuum_nm``:
     :math:`|\\sigma\\lambda_{vac} / 10^7 - 1| \\le 10^{-9}` (``vacuum_nm`` in nm,
     ``wavenumber_cm1`` in cm-1);
   - no orphan dataset: every dataset holds levels, lines or ionization
     limits (a computed set of limits alone, as a series fit stores, is fine);
   - JSON fields (dataset options, audit details) parse, and each species'
     name spells its own Z and charge.

Each problem is one line of text naming the table, the rule, how many rows
break it and the first few ids, so a person can go and look.
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field

from sqlalchemy import (
    CheckConstraint,
    Engine,
    ForeignKeyConstraint,
    UniqueConstraint,
    and_,
    func,
    inspect,
    or_,
    select,
    text,
)
from sqlalchemy.exc import DBAPIError
from sqlalchemy.orm import aliased

from levels.errors import StoreError
from levels.store import database
from levels.store.schema import TABLE_ORDER, AuditEntry, Base, Dataset, IonizationLimit, Level, Line, Species

#: largest |relative| difference accepted between wavenumber_cm1 and 1e7 / vacuum_nm
WAVENUMBER_TOLERANCE = 1e-9
#: ids quoted per problem
SHOWN_IDS = 5


@dataclass
class StoreReport:
    """What :func:`inspect_store` found.

    Attributes
    ----------
    backend : str
        ``"sqlite"`` or ``"postgresql"``.
    revision : str or None
        Schema revision of the store (None: not initialised).
    head : str
        Schema revision of this code.
    counts : dict
        Rows per table (tables in :data:`TABLE_ORDER`), -1 for a missing table.
    checks : list of str
        The checks that were run, in words.
    problems : list of str
        One line per problem; empty when the store is sound.
    """

    backend: str
    revision: str | None
    head: str
    counts: dict[str, int] = field(default_factory=dict)
    checks: list[str] = field(default_factory=list)
    problems: list[str] = field(default_factory=list)

    @property
    def ok(self) -> bool:
        """True when no problem was found."""
        return not self.problems

    def as_dict(self) -> dict:
        """The report as plain JSON-ready data."""
        return {"backend": self.backend, "revision": self.revision, "head": self.head, "counts": dict(self.counts),
                "checks": list(self.checks), "problems": list(self.problems), "ok": self.ok}


def check_store(engine: Engine) -> list[str]:
    """Every integrity problem of the store, one line each (empty list: the store is sound).

    Parameters
    ----------
    engine : sqlalchemy.Engine
        The store (SQLite or PostgreSQL).

    Returns
    -------
    list of str
        Problems found by the database's own check, the re-checked constraints
        and the project's invariants (see the module docstring).

    Raises
    ------
    StoreError
        The store cannot be opened at all (unreachable server, not a database file).
    """
    return inspect_store(engine).problems


def inspect_store(engine: Engine) -> StoreReport:
    """Run every check of :func:`check_store` and return counts, checks run and problems.

    Raises
    ------
    StoreError
        The store cannot be opened at all.
    """
    where = database.display_url(str(engine.url))
    try:
        database.ping(engine)
        revision = database.current_revision(engine)
    except DBAPIError as exc:  # a SQLite file that is not a database fails in the connect pragmas
        raise StoreError(f"cannot open the store at {where}: {database._first_line(str(exc.orig))}") from None
    backend = engine.dialect.name
    report = StoreReport(backend=backend, revision=revision, head=database.head_revision())
    _run_checks(engine, report)
    return report


# ----------------------------------------------------------------- driver

def _step(report: StoreReport, name: str, func_, *args) -> None:
    """Run one check; a query that fails (a damaged file) is itself reported, and the next check runs."""
    try:
        func_(*args)
    except DBAPIError as exc:
        report.problems.append(f"store: the {name} check could not run: {database._first_line(str(exc.orig))}")


def _run_checks(engine: Engine, report: StoreReport) -> None:
    existing = set(inspect(engine).get_table_names())
    _step(report, "schema", _check_schema, engine, report, existing)
    for name in TABLE_ORDER:
        report.counts[name] = -1
        if name in existing:
            _step(report, f"{name} count", _count, engine, report, name)
    if database.is_sqlite(engine):
        report.checks.append("SQLite PRAGMA integrity_check and foreign_key_check")
        _step(report, "SQLite integrity_check", _sqlite_pragma, engine, report, "integrity_check")
        _step(report, "SQLite foreign_key_check", _sqlite_pragma, engine, report, "foreign_key_check")
    else:
        report.checks.append("PostgreSQL catalogue: constraints present and validated, indexes valid, triggers on")
        _step(report, "PostgreSQL catalogue", lambda: report.problems.extend(_postgres_catalogue(engine, existing)))
    present = [Base.metadata.tables[n] for n in TABLE_ORDER if n in existing]
    counted: list[int] = []

    def constraints() -> None:
        with engine.connect() as conn:
            counted.append(_recheck_constraints(conn, present, report.problems))

    _step(report, "constraint", constraints)
    report.checks.append(f"{counted[0] if counted else 'not all'} schema constraints re-checked row by row")
    if {"lines", "levels", "ionization_limits", "datasets", "species"} <= existing:
        def invariants() -> None:
            with engine.connect() as conn:
                report.checks.append(_invariants(conn, report.problems))

        _step(report, "invariant", invariants)
        _step(report, "computed-dataset role", lambda: report.problems.extend(_role_problems(engine)))


def _count(engine: Engine, report: StoreReport, name: str) -> None:
    with engine.connect() as conn:
        table = Base.metadata.tables[name]
        report.counts[name] = int(conn.execute(select(func.count()).select_from(table)).scalar_one())


def _sqlite_pragma(engine: Engine, report: StoreReport, pragma: str) -> None:
    with engine.connect() as conn:
        if pragma == "integrity_check":
            rows = [r[0] for r in conn.exec_driver_sql("PRAGMA integrity_check(100)")]
            if rows != ["ok"]:
                report.problems.extend(f"sqlite: integrity_check: {r}" for r in rows)
        else:
            broken = conn.exec_driver_sql("PRAGMA foreign_key_check").all()
            for row in broken[:SHOWN_IDS]:
                report.problems.append(f"sqlite: foreign_key_check: table {row[0]} row {row[1]} refers to "
                                       f"missing {row[2]}")
            if len(broken) > SHOWN_IDS:
                report.problems.append(f"sqlite: foreign_key_check: {len(broken) - SHOWN_IDS} more rows refer to "
                                       "missing parents")


def _check_schema(engine: Engine, report: StoreReport, existing: set[str]) -> None:
    report.checks.append("schema revision and tables")
    if report.revision is None:
        report.problems.append("schema: the store is not initialised (no schema revision); run 'levels init'")
    elif report.revision != report.head:
        report.problems.append(f"schema: the store is at revision {report.revision}, this code expects "
                               f"{report.head}; run 'levels init' to upgrade")
    insp = inspect(engine)
    for name in TABLE_ORDER:
        if name not in existing:
            report.problems.append(f"schema: table {name} is missing")
            continue
        have = {c["name"] for c in insp.get_columns(name)}
        want = [c.name for c in Base.metadata.tables[name].columns]
        missing = [c for c in want if c not in have]
        if missing:
            report.problems.append(f"schema: table {name} lacks column(s) {', '.join(missing)}")


def _ids(rows) -> str:
    ids = [str(r) for r in rows[:SHOWN_IDS]]
    return ", ".join(ids) + (", ..." if len(rows) > SHOWN_IDS else "")


def _report_rows(conn, problems: list[str], query, what: str, table: str) -> None:
    """Run ``query`` (selecting ids, ordered) and add one problem line if it returns rows.

    The line reads ``<table>: <count> row(s) <what> (id <first ids>)``.
    """
    ids = list(conn.scalars(query.limit(SHOWN_IDS + 1)))
    if not ids:
        return
    total = conn.scalar(select(func.count()).select_from(query.order_by(None).limit(None).subquery()))
    problems.append(f"{table}: {total} row{'s' if total != 1 else ''} {what} (id {_ids(ids)})")


# ----------------------------------------------------------------- constraints

def _recheck_constraints(conn, tables, problems: list[str]) -> int:
    """Evaluate NOT NULL, CHECK, unique and foreign-key constraints by queries; return how many."""
    count = 0
    for table in tables:
        pk = table.c.id
        for column in table.columns:
            if not column.nullable and not column.primary_key:
                count += 1
                _report_rows(conn, problems, select(pk).where(column.is_(None)).order_by(pk),
                             f"with no value in the required column {column.name}", table.name)
        for constraint in sorted(table.constraints, key=lambda c: str(c.name)):
            if isinstance(constraint, CheckConstraint):
                count += 1
                condition = text(f"NOT ({constraint.sqltext.text})")
                _report_rows(conn, problems, select(pk).where(condition).order_by(pk),
                             f"breaking the CHECK constraint {constraint.name} ({constraint.sqltext.text})", table.name)
            elif isinstance(constraint, UniqueConstraint):
                count += 1
                cols = list(constraint.columns)
                dup = (select(*cols).where(*[c.is_not(None) for c in cols]).group_by(*cols)
                       .having(func.count() > 1).subquery())
                query = (select(pk).join(dup, and_(*[c == dup.c[c.name] for c in cols])).order_by(pk))
                _report_rows(conn, problems, query,
                             f"repeating the ({', '.join(c.name for c in cols)}) of another row "
                             f"(unique constraint {constraint.name})", table.name)
            elif isinstance(constraint, ForeignKeyConstraint):
                count += 1
                element = constraint.elements[0]
                child, parent_col = element.parent, element.column
                parent = aliased(parent_col.table)
                query = (select(pk).outerjoin(parent, child == parent.c[parent_col.name])
                         .where(child.is_not(None), parent.c[parent_col.name].is_(None)).order_by(pk))
                _report_rows(conn, problems, query,
                             f"pointing through {child.name} to a missing {parent_col.table.name} row "
                             f"(foreign key {constraint.name})", table.name)
    return count


def _postgres_catalogue(engine: Engine, existing: set[str]) -> list[str]:
    problems = []
    tables = [n for n in TABLE_ORDER if n in existing]
    with engine.connect() as conn:
        rows = conn.execute(text(
            "SELECT c.relname, k.conname, k.contype, k.convalidated FROM pg_constraint k "
            "JOIN pg_class c ON c.oid = k.conrelid "
            "WHERE c.relnamespace = (SELECT oid FROM pg_namespace WHERE nspname = current_schema())"
        )).all()
        found = {(r[0], r[1]): (r[2], r[3]) for r in rows}
        for name in tables:
            for constraint in Base.metadata.tables[name].constraints:
                key = (name, str(constraint.name))
                if key not in found:
                    problems.append(f"postgresql: table {name} lacks its constraint {constraint.name}")
                elif not found[key][1]:
                    problems.append(f"postgresql: constraint {constraint.name} of {name} is NOT VALID "
                                    "(rows written before it was added were never checked)")
        for relname, indexname, valid, ready in conn.execute(text(
                "SELECT t.relname, i.relname, x.indisvalid, x.indisready FROM pg_index x "
                "JOIN pg_class i ON i.oid = x.indexrelid JOIN pg_class t ON t.oid = x.indrelid "
                "WHERE t.relnamespace = (SELECT oid FROM pg_namespace WHERE nspname = current_schema())")):
            if relname in tables and not (valid and ready):
                problems.append(f"postgresql: index {indexname} of {relname} is not valid; rebuild it (REINDEX)")
        for relname, trigger in conn.execute(text(
                "SELECT c.relname, t.tgname FROM pg_trigger t JOIN pg_class c ON c.oid = t.tgrelid "
                "WHERE c.relnamespace = (SELECT oid FROM pg_namespace WHERE nspname = current_schema()) "
                "AND t.tgenabled = 'D'")):
            if relname in tables:
                problems.append(f"postgresql: trigger {trigger} of {relname} is disabled "
                                "(foreign keys of that table are not enforced)")
    return problems


# ----------------------------------------------------------------- invariants

def _not_finite(column):
    return or_(column.is_(None), ~and_(column > -1e300, column < 1e300))


def _invariants(conn, problems: list[str]) -> str:
    lower, upper = aliased(Level), aliased(Level)
    # every line's levels exist and belong to the line's species
    _report_rows(conn, problems, select(Line.id).outerjoin(lower, lower.id == Line.lower_id)
                 .where(lower.id.is_(None)).order_by(Line.id), "whose lower level does not exist", "lines")
    _report_rows(conn, problems, select(Line.id).outerjoin(upper, upper.id == Line.upper_id)
                 .where(upper.id.is_(None)).order_by(Line.id), "whose upper level does not exist", "lines")
    _report_rows(conn, problems, select(Line.id).join(lower, lower.id == Line.lower_id)
                 .join(upper, upper.id == Line.upper_id)
                 .where(or_(lower.species_id != Line.species_id, upper.species_id != Line.species_id))
                 .order_by(Line.id), "joining levels of another species than the line's own", "lines")
    # lower below upper in energy
    _report_rows(conn, problems, select(Line.id).join(lower, lower.id == Line.lower_id)
                 .join(upper, upper.id == Line.upper_id).where(lower.energy_cm1 >= upper.energy_cm1)
                 .order_by(Line.id), "whose lower level is not below the upper level in energy", "lines")
    # finite energies and wavenumbers
    for model, column in ((Level, Level.energy_cm1), (IonizationLimit, IonizationLimit.energy_cm1),
                          (Line, Line.wavenumber_cm1), (Line, Line.vacuum_nm)):
        _report_rows(conn, problems, select(model.id).where(_not_finite(column)).order_by(model.id),
                     f"whose {column.key} is not a finite number", model.__tablename__)
    # wavenumber consistent with the vacuum wavelength: |sigma * lambda / 1e7 - 1| <= 1e-9
    _report_rows(conn, problems, select(Line.id).where(
        func.abs(Line.wavenumber_cm1 * Line.vacuum_nm - 1e7) > WAVENUMBER_TOLERANCE * 1e7).order_by(Line.id),
        f"whose wavenumber_cm1 differs from 1e7 / vacuum_nm by more than {WAVENUMBER_TOLERANCE:g} (relative)",
        "lines")
    # orphan datasets
    has_levels = select(Level.id).where(Level.dataset_id == Dataset.id).exists()
    has_lines = select(Line.id).where(Line.dataset_id == Dataset.id).exists()
    has_limits = select(IonizationLimit.id).where(IonizationLimit.dataset_id == Dataset.id).exists()
    orphans = conn.execute(select(Dataset.id, Dataset.name).where(~has_levels, ~has_lines, ~has_limits)
                           .order_by(Dataset.id)).all()
    for ds_id, name in orphans:
        problems.append(f"datasets: dataset {name!r} (id {ds_id}) holds no levels, lines or ionization limits "
                        "(an orphan left by an incomplete write)")
    # JSON fields and species names
    for ds_id, name, options in conn.execute(select(Dataset.id, Dataset.name, Dataset.options_json)):
        if not _is_json_object(options):
            problems.append(f"datasets: options_json of dataset {name!r} (id {ds_id}) is not a JSON object")
    bad_audit = [row[0] for row in conn.execute(select(AuditEntry.id, AuditEntry.detail_json)
                                                .order_by(AuditEntry.id)) if not _is_json_object(row[1])]
    if bad_audit:
        problems.append(f"audit_log: {len(bad_audit)} entries whose detail_json is not a JSON object "
                        f"(id {_ids(bad_audit)})")
    from levels.errors import NotationError
    from levels.notation import parse_spectrum

    for sp_id, z, charge, name in conn.execute(select(Species.id, Species.z, Species.charge, Species.name)):
        try:
            spec = parse_spectrum(name)
        except NotationError:
            problems.append(f"species: name {name!r} (id {sp_id}) is not a spectrum")
            continue
        if (spec.z, spec.charge) != (z, charge):
            problems.append(f"species: name {name!r} (id {sp_id}) does not match Z = {z}, charge {charge}")
    return ("invariants: line levels exist and share the species, lower below upper, finite energies, "
            "wavenumber = 1e7/vacuum_nm, no orphan datasets, JSON fields, species names")


def _is_json_object(value) -> bool:
    try:
        return isinstance(json.loads(value), dict)
    except (TypeError, ValueError):
        return False


def _role_problems(engine: Engine) -> list[str]:
    from levels.store.integrity_roles import role_problems

    with engine.connect() as conn:
        return role_problems(conn)
