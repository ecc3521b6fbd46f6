"""Queries and writes on the store (the only module besides ``database`` that speaks SQL).

All functions take an open :class:`~sqlalchemy.orm.Session`; the caller owns
the transaction (see :func:`levels.store.database.run_in_transaction`).
"""

from __future__ import annotations

import getpass
import itertools
import json
import re
import unicodedata
from collections.abc import Iterable, Sequence
from typing import cast

import numpy as np
from sqlalchemy import Table, and_, delete, func, insert, or_, select
from sqlalchemy.orm import Session

from levels.errors import (
    AlreadyExistsError,
    DatasetInUseError,
    InputFileError,
    NotFoundError,
    Problem,
    ReservedNameError,
)
from levels.notation import Spectrum
from levels.store.columns import level_values
from levels.store.schema import (
    COMPUTED_ROLES,
    AuditEntry,
    Dataset,
    IonizationLimit,
    Level,
    Line,
    Sample,
    Species,
    utcnow,
)

#: the levels table as a Core table (bulk UPDATEs by id, outside the ORM's session bookkeeping)
_LEVELS_TABLE = cast(Table, Level.__table__)

KIND_RANK = {"measured": 0, "imported": 1, "computed": 2}


def current_actor() -> str:
    """The OS user running this process (the default author of writes)."""
    try:
        return getpass.getuser()
    except Exception:  # getpass raises several kinds when no user database entry exists
        return "unknown"


def record_audit(session: Session, action: str, target: str, detail: dict | None = None,
                 actor: str | None = None) -> None:
    """Append one audit entry in the caller's transaction."""
    session.add(AuditEntry(at=utcnow(), actor=actor or current_actor(), action=action, target=target,
                           detail_json=json.dumps(detail or {}, sort_keys=True, default=str)))


# ----------------------------------------------------------------- species

def find_species(session: Session, spectrum: Spectrum, *, default_mass_number: int | None = None) -> Species | None:
    """The stored species for a spectrum, or None.

    Without a mass number, the isotope ``default_mass_number`` is preferred (the service's choice,
    :func:`levels.service.lookup.find_species`); if it is absent and exactly one isotope of that ion
    is stored, that one is taken.
    """
    if spectrum.mass_number is not None:
        return session.scalars(select(Species).where(
            Species.z == spectrum.z, Species.charge == spectrum.charge,
            Species.mass_number == spectrum.mass_number)).one_or_none()
    rows = session.scalars(select(Species).where(Species.z == spectrum.z, Species.charge == spectrum.charge)
                           .order_by(Species.mass_number)).all()
    if not rows:
        return None
    for row in rows:
        if default_mass_number is not None and row.mass_number == default_mass_number:
            return row
    return rows[0] if len(rows) == 1 else None


def require_species(session: Session, spectrum: Spectrum, *, default_mass_number: int | None = None) -> Species:
    """Like :func:`find_species` but raise :class:`NotFoundError`."""
    species = find_species(session, spectrum, default_mass_number=default_mass_number)
    if species is None:
        others = session.scalars(select(Species).where(Species.z == spectrum.z, Species.charge == spectrum.charge)
                                 .order_by(Species.mass_number)).all()
        if others:
            stored = ", ".join(f"A = {s.mass_number}" for s in others)
            ask = Spectrum(spectrum.z, spectrum.charge).name
            example = Spectrum(spectrum.z, spectrum.charge, others[0].mass_number).isotope_name
            raise NotFoundError(f"no species {spectrum.isotope_name} in the store; stored isotopes of {ask}: "
                                f"{stored} (name one, e.g. '{example}')")
        raise NotFoundError(f"no species {spectrum.isotope_name} in the store")
    return species


def create_species(session: Session, spectrum: Spectrum, mass_number: int) -> Species:
    """Add a species (isotope ``mass_number``; hydrogen's isotopes get their own names, D I, T I)."""
    named = Spectrum(spectrum.z, spectrum.charge, mass_number)
    species = Species(z=spectrum.z, charge=spectrum.charge, mass_number=mass_number,
                      name=named.name if spectrum.z == 1 else spectrum.name)
    session.add(species)
    session.flush()
    return species


def species_spectrum(species: Species) -> Spectrum:
    """The Spectrum of a stored species."""
    return Spectrum(species.z, species.charge, species.mass_number)


def lock_species(session: Session, species_id: int) -> None:
    """Take the species' row lock for the rest of the transaction (PostgreSQL; SQLite writers are serialised)."""
    session.execute(select(Species.id).where(Species.id == species_id).with_for_update(key_share=True))


# ----------------------------------------------------------------- samples and datasets

def find_dataset(session: Session, name: str) -> Dataset | None:
    """A dataset by name, or None."""
    return session.scalars(select(Dataset).where(Dataset.name == name)).one_or_none()


def datasets_with_content(session: Session, content_sha256: str) -> list[Dataset]:
    """Datasets made from a file of this content (SHA-256 hex), oldest first."""
    return list(session.scalars(select(Dataset).where(Dataset.content_sha256 == content_sha256)
                                .order_by(Dataset.id)))


def require_dataset(session: Session, name_or_id: str | int) -> Dataset:
    """A dataset by name or numeric id, or :class:`NotFoundError`."""
    dataset = None
    if isinstance(name_or_id, int) or (isinstance(name_or_id, str) and name_or_id.isdigit()):
        dataset = session.get(Dataset, int(name_or_id))
    if dataset is None and isinstance(name_or_id, str):
        dataset = find_dataset(session, name_or_id)
    if dataset is None:
        raise NotFoundError(f"no dataset {name_or_id!r} in the store")
    return dataset


def create_dataset(session: Session, *, name: str, kind: str, method: str = "", method_version: str = "",
                   citation: str = "", author: str | None = None, description: str = "",
                   options: dict | None = None, sample: Sample | None = None,
                   role: str | None = None, owner_species_id: int | None = None,
                   content_sha256: str | None = None) -> Dataset:
    """Add a dataset; its name must be new.

    A user dataset (``role`` None) may not take a reserved name
    (:func:`is_reserved_dataset_name`); front ends check first and name their own
    field, this is the last guard.
    """
    if role is None and is_reserved_dataset_name(name):
        raise ReservedNameError([Problem("<store>", None, "name", reserved_name_message(name))])
    problem = dataset_name_problem(name)
    if problem is not None:
        raise InputFileError([Problem("<store>", None, "name", f"dataset name {name!r} {problem}")])
    if role is not None and role not in COMPUTED_ROLES:
        raise ValueError(f"unknown computed-dataset role {role!r}; known: {', '.join(COMPUTED_ROLES)}")
    if find_dataset(session, name) is not None:
        raise AlreadyExistsError(f"a dataset named {name!r} already exists")
    dataset = Dataset(name=name, kind=kind, method=method, method_version=method_version, citation=citation,
                      author=author or current_actor(), description=description,
                      options_json=json.dumps(options or {}, sort_keys=True), created_at=utcnow(),
                      sample=sample, retracted=0, role=role, owner_species_id=owner_species_id,
                      content_sha256=content_sha256)
    session.add(dataset)
    session.flush()
    return dataset


# ----------------------------------------------------------------- computed datasets (by role and species)

#: the name forms of computed datasets: ``<prefix> <spectrum> A=<mass>`` (hydrogenic ones may end in ``nl``);
#: matched case-insensitively on the NFKC-normalised name with runs of white space collapsed, and
#: deliberately broad (anything between the prefix and ``A=<digits>``) so no look-alike slips through
RESERVED_NAME_PATTERN = re.compile(r"^(derived lines|series limit|hydrogenic|rates)\b.*\ba\s*=\s*\d+", re.IGNORECASE)
RESERVED_NAME_FORMS = ("derived lines <spectrum> A=<mass>", "series limit <spectrum> A=<mass>",
                       "hydrogenic <spectrum> A=<mass>", "rates <spectrum> A=<mass>")


def is_reserved_dataset_name(name: str) -> bool:
    """Whether ``name`` has a form the tool keeps for its own computed datasets.

    Examples
    --------
    >>> is_reserved_dataset_name("derived lines Na I A=23"), is_reserved_dataset_name("Rates  fe II a = 56")
    (True, True)
    >>> is_reserved_dataset_name("my derived lines Na I A=23"), is_reserved_dataset_name("hydrogenic runs")
    (False, False)
    """
    text = " ".join(unicodedata.normalize("NFKC", str(name)).split())
    return bool(RESERVED_NAME_PATTERN.match(text))


#: characters a dataset name may not start with: spreadsheets run a cell starting with these as a formula
FORMULA_STARTS = ("=", "+", "-", "@")


def dataset_name_problem(name: str) -> str | None:
    """Why ``name`` cannot name a dataset, or None.

    A dataset name travels into every export's ``dataset`` column, so it may not
    hold what common readers treat specially: ``#`` (a comment to
    ``pandas.read_csv(comment="#")``, the reader the exports' header calls for),
    a leading ``=``, ``+``, ``-`` or ``@`` (a formula to spreadsheets), line
    breaks or other control characters, nor white space at either end.

    Examples
    --------
    >>> dataset_name_problem("k-cell/k-cell-A (2)") is None
    True
    >>> dataset_name_problem("k-cell#2")
    "contains '#', which CSV readers treat as the start of a comment; use a plain form such as 'k-cell (2)'"
    >>> dataset_name_problem("=1+1")
    "starts with '=', which spreadsheets run as a formula"
    """
    text = str(name)
    if not text.strip():
        return "is empty"
    if text != text.strip():
        return "starts or ends with white space"
    if "#" in text:
        return ("contains '#', which CSV readers treat as the start of a comment; "
                f"use a plain form such as {plain_dataset_name(text)!r}")
    if any(unicodedata.category(c) in ("Cc", "Zl", "Zp") for c in text):
        return "contains a line break or another control character"
    if text[0] in FORMULA_STARTS:
        return f"starts with {text[0]!r}, which spreadsheets run as a formula"
    return None


def plain_dataset_name(text: str) -> str:
    """``text`` made into an acceptable dataset name (see :func:`dataset_name_problem`).

    A trailing ``#<n>`` (the numbering of old stores) becomes `` (<n>)``, any other
    ``#`` and every control character a space, runs of white space one space, and
    leading formula characters are dropped.

    Examples
    --------
    >>> plain_dataset_name("k-cell/k-cell-A#2"), plain_dataset_name("=run#1 x"), plain_dataset_name("@@")
    ('k-cell/k-cell-A (2)', 'run 1 x', 'dataset')
    """
    text = re.sub(r"\s*#\s*(\d+)\s*$", r" (\1)", str(text))
    text = "".join(" " if c == "#" or unicodedata.category(c) in ("Cc", "Zl", "Zp") else c for c in text)
    text = " ".join(text.split())
    text = text.lstrip("".join(FORMULA_STARTS) + " ")
    return text or "dataset"


def numbered_dataset_name(base: str, number: int) -> str:
    """The plain numbering form for the ``number``-th dataset of one name: ``base (2)``."""
    return f"{base} ({number})"


def reserved_name_message(name: str) -> str:
    """The refusal text for a reserved user dataset name."""
    return (f"{name!r} has the form of a dataset the tool computes and rebuilds itself "
            f"({'; '.join(RESERVED_NAME_FORMS)}); choose another name, e.g. 'measured {name.strip()}'")


def find_computed_dataset(session: Session, species_id: int, role: str) -> Dataset | None:
    """The computed dataset of ``role`` owned by species ``species_id``, or None (never looked up by name)."""
    if role not in COMPUTED_ROLES:
        raise ValueError(f"unknown computed-dataset role {role!r}; known: {', '.join(COMPUTED_ROLES)}")
    return session.scalars(select(Dataset).where(Dataset.role == role,
                                                 Dataset.owner_species_id == species_id)).one_or_none()


def replace_computed_dataset(session: Session, species_id: int, role: str, *, name: str, method: str,
                             method_version: str, options_json: str, actor: str, citation: str = "",
                             description: str = "", keep_referenced_levels: bool = False) -> Dataset:
    """Delete the computed dataset of (``role``, species) with its lines, levels and limits; create the new one.

    Only the dataset found by role and owner species is deleted; a user dataset of any
    name is never touched. The caller's transaction holds both steps.

    Parameters
    ----------
    species_id : int
        Owner species.
    role : str
        One of :data:`levels.store.schema.COMPUTED_ROLES`.
    name, method, method_version, options_json, actor, citation, description
        The new dataset's record (``options_json`` is JSON text).
    keep_referenced_levels : bool
        Levels of the old dataset that lines of *other* datasets join are moved into the
        new dataset (same ids) instead of deleted; the caller updates them. Without it,
        such levels make the replacement fail (deleting them would delete those lines).

    Returns
    -------
    Dataset
        The new dataset (flushed, with its id).

    Raises
    ------
    DatasetInUseError
        Lines of other datasets join levels of the old dataset and ``keep_referenced_levels`` is False.
    """
    old = find_computed_dataset(session, species_id, role)
    moved: list[int] = []
    if old is not None:
        moved = referenced_level_ids(session, old.id)
        if moved and not keep_referenced_levels:
            raise DatasetInUseError(
                f"dataset {old.name!r} cannot be replaced: {len(moved)} of its levels are joined by lines of "
                "other datasets")
        if moved:
            # free the name and the (role, owner) slot first, keep the old row until its levels moved
            old.name = f"{old.name} (replaced, id {old.id})"
            old.role = None
            session.flush()
        else:
            delete_dataset(session, old)
    options = json.loads(options_json or "{}")
    dataset = create_dataset(session, name=name, kind="computed", method=method, method_version=method_version,
                             citation=citation, author=actor, description=description, options=options,
                             role=role, owner_species_id=species_id)
    if old is not None and moved:
        session.execute(delete(Line).where(Line.dataset_id == old.id))
        session.execute(delete(IonizationLimit).where(IonizationLimit.dataset_id == old.id))
        for start in range(0, len(moved), 5000):
            session.execute(_LEVELS_TABLE.update().where(Level.id.in_(moved[start:start + 5000]))
                            .values(dataset_id=dataset.id))
        delete_dataset(session, old)
    return dataset


def upsert_kept_levels(session: Session, dataset_id: int, rows: Sequence[dict], *, source: str) -> list[int]:
    """Insert a computed dataset's level rows; rows whose label a kept level has update that level instead.

    Kept levels are those :func:`replace_computed_dataset` moved into the new dataset
    (``keep_referenced_levels``): other datasets' lines join them, so their ids must stay.

    Returns
    -------
    list of int
        Level ids in the order of ``rows``.

    Raises
    ------
    DatasetInUseError
        A kept level has no row of the same label (the new computation lacks a state
        that lines of another dataset join).
    """
    kept = dict(session.execute(select(Level.label, Level.id).where(Level.dataset_id == dataset_id)).all())
    if not kept:
        return insert_rows(session, Level, rows, returning_ids=True)
    labels = {row["label"] for row in rows}
    lost = sorted(set(kept) - labels)
    if lost:
        raise DatasetInUseError(
            f"{source}: the new computation has no level {', '.join(lost[:5])}"
            f"{' ...' if len(lost) > 5 else ''}, which lines of other datasets join; compute at least those states "
            "(e.g. a larger n_max) or retract those lines first")
    fresh = [row for row in rows if row["label"] not in kept]
    fresh_ids = iter(insert_rows(session, Level, fresh, returning_ids=True))
    for row in rows:
        if row["label"] in kept:
            values = {k: v for k, v in row.items() if k not in ("dataset_id", "species_id")}
            session.execute(_LEVELS_TABLE.update().where(Level.id == kept[row["label"]]).values(**values))
    return [kept[row["label"]] if row["label"] in kept else next(fresh_ids) for row in rows]


def referenced_level_ids(session: Session, dataset_id: int) -> list[int]:
    """Ids of the dataset's levels that lines of other user datasets (no computed role) join."""
    own = select(Level.id).where(Level.dataset_id == dataset_id)
    user = select(Dataset.id).where(Dataset.role.is_(None))
    rows = session.execute(select(Line.lower_id, Line.upper_id).where(
        Line.dataset_id != dataset_id, Line.dataset_id.in_(user),
        (Line.lower_id.in_(own)) | (Line.upper_id.in_(own)))).all()
    if not rows:
        return []
    own_ids = set(session.scalars(own))
    return sorted({i for pair in rows for i in pair if i in own_ids})


def find_sample(session: Session, name: str) -> Sample | None:
    """A sample by name, or None."""
    return session.scalars(select(Sample).where(Sample.name == name)).one_or_none()


def get_or_create_sample(session: Session, name: str, **conditions) -> Sample:
    """The sample of that name, created with ``conditions`` when absent."""
    sample = find_sample(session, name)
    if sample is None:
        sample = Sample(name=name, created_at=utcnow(), **conditions)
        session.add(sample)
        session.flush()
    return sample


def all_samples(session: Session) -> list[Sample]:
    """Every sample, by name."""
    return list(session.scalars(select(Sample).order_by(Sample.name)))


def dataset_counts(session: Session, dataset_id: int) -> tuple[int, int]:
    """The numbers of levels and of lines a dataset holds."""
    levels = session.scalar(select(func.count()).select_from(Level).where(Level.dataset_id == dataset_id))
    lines = session.scalar(select(func.count()).select_from(Line).where(Line.dataset_id == dataset_id))
    return int(levels or 0), int(lines or 0)


def add_ionization_limit(session: Session, *, dataset_id: int, species_id: int, energy_cm1: float,
                         unc_cm1: float | None, method: str) -> IonizationLimit:
    """Add an ionization limit to a dataset in the caller's transaction."""
    limit = IonizationLimit(dataset_id=dataset_id, species_id=species_id, energy_cm1=energy_cm1, unc_cm1=unc_cm1,
                            method=method)
    session.add(limit)
    return limit


def delete_dataset(session: Session, dataset: Dataset) -> None:
    """Delete a dataset with its lines, levels and limits (used when a computed set is replaced)."""
    session.execute(delete(Line).where(Line.dataset_id == dataset.id))
    session.execute(delete(IonizationLimit).where(IonizationLimit.dataset_id == dataset.id))
    session.execute(delete(Level).where(Level.dataset_id == dataset.id))
    session.delete(dataset)
    session.flush()


# ----------------------------------------------------------------- bulk writes

def insert_rows(session: Session, model, rows: Sequence[dict], *, returning_ids: bool = False,
                chunk: int = 5000) -> list[int]:
    """Insert many rows of ``model`` with executemany; return their ids in order if asked."""
    ids: list[int] = []
    for start in range(0, len(rows), chunk):
        part = rows[start:start + chunk]
        if not part:
            continue
        if returning_ids:
            result = session.execute(insert(model).returning(model.id, sort_by_parameter_order=True), part)
            ids.extend(result.scalars().all())
        else:
            session.execute(insert(model), part)
    return ids


LINE_INSERT_COLUMNS = ("dataset_id", "species_id", "lower_id", "upper_id", "multipole", "wavenumber_cm1",
                       "vacuum_nm", "air_nm", "a_per_s", "f_abs", "line_strength_au", "unc_nm")


def insert_line_columns(session: Session, columns: dict, start: int, stop: int) -> None:
    """Insert lines given as column arrays (rows ``start:stop``) with one driver-level executemany.

    This is the bulk path for computed datasets (hundreds of thousands of rows):
    values go straight to the driver as bound parameters (qmark or format style),
    NaN becomes NULL, ``medium`` takes '' and ``note`` the optional ``columns["note"]`` or ''.
    """
    import numpy as np

    parts = []
    for name in LINE_INSERT_COLUMNS:
        values = np.asarray(columns[name])[start:stop]
        if values.dtype.kind == "f":
            listed = values.tolist()
            parts.append([None if v != v else v for v in listed])
        else:
            parts.append(values.tolist())
    blanks = [""] * (stop - start)
    notes = np.asarray(columns["note"])[start:stop].tolist() if "note" in columns else blanks
    _driver_insert(session, Line, LINE_INSERT_COLUMNS + ("medium", "note"), list(zip(*parts, blanks, notes)))


def insert_full_rows(session: Session, model, rows: Sequence[dict], chunk: int = 20000) -> None:
    """Insert rows that give every column but the id, with driver-level executemany (no ORM bookkeeping).

    About twice as fast as :func:`insert_rows` for 10^5 rows. Values go to the driver as they are; no
    Python-side column defaults apply, hence the rule that every column is given.
    """
    if not rows:
        return
    names = tuple(c.name for c in model.__table__.columns if c.name != "id")
    if set(rows[0]) != set(names):
        raise ValueError(f"insert_full_rows needs every column of {model.__tablename__} but id; "
                         f"missing {sorted(set(names) - set(rows[0]))}, extra {sorted(set(rows[0]) - set(names))}")
    for start in range(0, len(rows), chunk):
        _driver_insert(session, model, names, [tuple(r[n] for n in names) for r in rows[start:start + chunk]])


def _driver_insert(session: Session, model, names: Sequence[str], tuples: list[tuple]) -> None:
    """One executemany of ``INSERT INTO <table> (names) VALUES (...)`` on the session's connection."""
    mark = "?" if session.get_bind().dialect.paramstyle == "qmark" else "%s"
    sql = f"INSERT INTO {model.__tablename__} ({', '.join(names)}) VALUES ({', '.join([mark] * len(names))})"
    session.connection().exec_driver_sql(sql, tuples)


# ----------------------------------------------------------------- reads

def visible_datasets(session: Session, names: Sequence[str] | None = None,
                     include_retracted: bool = False) -> list[Dataset]:
    """Datasets in precedence order.

    With ``names``, exactly those (in the given order; retracted ones only if named).
    Without, every non-retracted dataset: measured first, then imported, then
    computed, newest first within a kind.
    """
    if names:
        return [require_dataset(session, name) for name in names]
    query = select(Dataset)
    if not include_retracted:
        query = query.where(Dataset.retracted == 0)
    datasets = session.scalars(query).all()
    return sorted(datasets, key=lambda d: (KIND_RANK.get(d.kind, 9), -d.created_at.timestamp(), -d.id))


def levels_by_precedence(session: Session, species: Species, datasets: Sequence[Dataset]) -> list[Level]:
    """Levels of a species, one per state: the first dataset in ``datasets`` that has the state wins.

    A state is the canonical configuration (``state_configuration``; the closed core written out,
    bracketed or left out is one state), the term and 2J.
    """
    if not datasets:
        return []
    rank = {d.id: i for i, d in enumerate(datasets)}
    rows = session.scalars(select(Level).where(Level.species_id == species.id,
                                               Level.dataset_id.in_(list(rank)))).all()
    chosen: dict[tuple, Level] = {}
    for level in sorted(rows, key=lambda lv: rank[lv.dataset_id]):
        chosen.setdefault((level.state_configuration or level.configuration, level.term, level.two_j), level)
    return sorted(chosen.values(), key=lambda lv: (lv.energy_cm1, lv.label))


def level_columns(session: Session, species_id: int, dataset_ids: Sequence[int], *,
                  resolved_only: bool = True, batch: int = 20_000) -> dict[str, np.ndarray]:
    """The species' levels chosen by precedence, as numpy columns (no ORM objects, for 10^6 levels).

    Same choice as :func:`levels_by_precedence` (for each state, configuration + term + 2J,
    the first of ``dataset_ids`` that has it), made by the database with a window function;
    rows arrive in batches of ``batch``.

    Returns
    -------
    dict
        ``id`` (int64), ``energy_cm1``, ``unc_cm1`` (float64, NaN = none), ``two_j``, ``parity`` (int64),
        ordered by energy.
    """
    from sqlalchemy import case

    names = ("id", "energy_cm1", "unc_cm1", "two_j", "parity")
    empty = {n: np.empty(0, dtype=float if n in ("energy_cm1", "unc_cm1") else np.int64) for n in names}
    ids = list(dataset_ids)
    if not ids:
        return empty
    where = [Level.species_id == species_id, Level.dataset_id.in_(ids)]
    if resolved_only:
        where.append(Level.two_j.is_not(None))
    rank = case({dataset_id: i for i, dataset_id in enumerate(ids)}, value=Level.dataset_id)
    order = func.row_number().over(partition_by=(func.coalesce(Level.state_configuration, Level.configuration),
                                                 Level.term, Level.two_j),
                                   order_by=rank).label("choice")
    inner = select(Level.id, Level.energy_cm1, Level.unc_cm1, Level.two_j, Level.parity, order).where(*where).subquery()
    query = select(inner.c.id, inner.c.energy_cm1, inner.c.unc_cm1, inner.c.two_j, inner.c.parity).where(
        inner.c.choice == 1).order_by(inner.c.energy_cm1, inner.c.id)
    chunks: dict[str, list[np.ndarray]] = {n: [] for n in names}
    result = session.execute(query.execution_options(yield_per=batch))
    for part in result.partitions():
        flat = list(zip(*part))
        chunks["id"].append(np.array(flat[0], dtype=np.int64))
        chunks["energy_cm1"].append(np.array(flat[1], dtype=float))
        chunks["unc_cm1"].append(np.array([np.nan if v is None else v for v in flat[2]], dtype=float))
        chunks["two_j"].append(np.array([-1 if v is None else v for v in flat[3]], dtype=np.int64))
        chunks["parity"].append(np.array(flat[4], dtype=np.int64))
    if not chunks["id"]:
        return empty
    return {n: np.concatenate(chunks[n]) for n in names}


def species_counts(session: Session, dataset_ids: Iterable[int]) -> dict[int, dict]:
    """Per species id: number of levels, lines and the dataset names, over the given datasets."""
    ids = list(dataset_ids)
    out: dict[int, dict] = {}
    if not ids:
        return out
    for species_id, count in session.execute(
            select(Level.species_id, func.count()).where(Level.dataset_id.in_(ids)).group_by(Level.species_id)):
        out.setdefault(species_id, {"levels": 0, "lines": 0, "datasets": set()})["levels"] = count
    for species_id, count in session.execute(
            select(Line.species_id, func.count()).where(Line.dataset_id.in_(ids)).group_by(Line.species_id)):
        out.setdefault(species_id, {"levels": 0, "lines": 0, "datasets": set()})["lines"] = count
    for species_id, name in session.execute(
            select(Level.species_id, Dataset.name).join(Dataset, Dataset.id == Level.dataset_id)
            .where(Level.dataset_id.in_(ids)).distinct()):
        out.setdefault(species_id, {"levels": 0, "lines": 0, "datasets": set()})["datasets"].add(name)
    return out


def ionization_limit(session: Session, species: Species, datasets: Sequence[Dataset]) -> IonizationLimit | None:
    """The ionization limit of a species from the first dataset in precedence order that has one."""
    rank = {d.id: i for i, d in enumerate(datasets)}
    if not rank:
        return None
    rows = session.scalars(select(IonizationLimit).where(IonizationLimit.species_id == species.id,
                                                         IonizationLimit.dataset_id.in_(list(rank)))).all()
    return min(rows, key=lambda r: rank[r.dataset_id]) if rows else None


def ionization_limits(session: Session, species: Species,
                      datasets: Sequence[Dataset]) -> list[tuple[IonizationLimit, str]]:
    """Every ionization limit of a species in the given datasets, in their precedence, with dataset names."""
    rank = {d.id: i for i, d in enumerate(datasets)}
    names = {d.id: d.name for d in datasets}
    if not rank:
        return []
    rows = session.scalars(select(IonizationLimit).where(IonizationLimit.species_id == species.id,
                                                         IonizationLimit.dataset_id.in_(list(rank)))).all()
    return [(r, names[r.dataset_id]) for r in sorted(rows, key=lambda r: rank[r.dataset_id])]


def all_species(session: Session) -> list[Species]:
    """Every stored species, by Z, charge and mass number."""
    return list(session.scalars(select(Species).order_by(Species.z, Species.charge, Species.mass_number)))


# ----------------------------------------------------------------- lines

LINE_ORDERS = ("wavelength", "strength", "-wavelength", "a")


def _line_filters(query, *, lower, upper, species_ids, dataset_ids, from_vacuum_nm, to_vacuum_nm,
                  from_air_nm, to_air_nm, multipoles, min_a, max_upper_cm1):
    from sqlalchemy import and_, or_

    query = query.where(Line.dataset_id.in_(list(dataset_ids)))
    if species_ids is not None:
        query = query.where(Line.species_id.in_(list(species_ids)))
    if from_vacuum_nm is not None:
        query = query.where(Line.vacuum_nm >= from_vacuum_nm)
    if to_vacuum_nm is not None:
        query = query.where(Line.vacuum_nm <= to_vacuum_nm)
    if from_air_nm is not None:
        query = query.where(or_(Line.air_nm >= from_air_nm, and_(Line.air_nm.is_(None), Line.vacuum_nm >= from_air_nm)))
    if to_air_nm is not None:
        query = query.where(or_(Line.air_nm <= to_air_nm, and_(Line.air_nm.is_(None), Line.vacuum_nm <= to_air_nm)))
    if multipoles:
        query = query.where(Line.multipole.in_(list(multipoles)))
    if min_a is not None:
        query = query.where(Line.a_per_s >= min_a)
    if max_upper_cm1 is not None:
        query = query.where(upper.energy_cm1 <= max_upper_cm1)
    return query


def select_lines(session: Session, *, dataset_ids: Sequence[int], species_ids: Sequence[int] | None = None,
                 from_vacuum_nm: float | None = None, to_vacuum_nm: float | None = None,
                 from_air_nm: float | None = None, to_air_nm: float | None = None,
                 multipoles: Sequence[str] | None = None, min_a: float | None = None,
                 max_upper_cm1: float | None = None, order: str = "wavelength",
                 limit: int | None = None, offset: int = 0) -> tuple[list[dict], int]:
    """Stored lines with their levels, filtered, sorted and paged; also the total count.

    All values are bound parameters; ``order`` is one of :data:`LINE_ORDERS`.
    """
    from sqlalchemy.orm import aliased

    if order not in LINE_ORDERS:
        raise ValueError(f"order must be one of {', '.join(LINE_ORDERS)}")
    lower, upper = aliased(Level), aliased(Level)
    filters = dict(lower=lower, upper=upper, species_ids=species_ids, dataset_ids=dataset_ids,
                   from_vacuum_nm=from_vacuum_nm, to_vacuum_nm=to_vacuum_nm, from_air_nm=from_air_nm,
                   to_air_nm=to_air_nm, multipoles=multipoles, min_a=min_a, max_upper_cm1=max_upper_cm1)
    base = (select(Line.id).join(upper, upper.id == Line.upper_id))
    total = session.scalar(select(func.count()).select_from(_line_filters(base, **filters).subquery()))
    query = (select(Line, lower, upper, Species.name, Dataset.name)
             .join(lower, lower.id == Line.lower_id).join(upper, upper.id == Line.upper_id)
             .join(Species, Species.id == Line.species_id).join(Dataset, Dataset.id == Line.dataset_id))
    query = _line_filters(query, **filters)
    if order == "wavelength":
        query = query.order_by(Line.vacuum_nm, Line.id)
    elif order == "-wavelength":
        query = query.order_by(Line.vacuum_nm.desc(), Line.id)
    elif order == "strength":
        query = query.order_by(Line.line_strength_au.desc().nulls_last(), Line.vacuum_nm)
    else:
        query = query.order_by(Line.a_per_s.desc().nulls_last(), Line.vacuum_nm)
    if limit is not None:
        query = query.limit(limit)
    if offset:
        query = query.offset(offset)
    rows = [line_row(line, lo, up, species_name, dataset_name)
            for line, lo, up, species_name, dataset_name in session.execute(query)]
    return rows, int(total or 0)


def stored_lines_between(session: Session, level_ids: Sequence[int], dataset_ids: Sequence[int]) -> list[Line]:
    """Stored lines of the given datasets whose both levels are among ``level_ids``."""
    if not level_ids or not dataset_ids:
        return []
    wanted = set(level_ids)
    rows: list[Line] = []
    ids = list(wanted)
    for start in range(0, len(ids), 5000):
        part = ids[start:start + 5000]
        rows.extend(session.scalars(select(Line).where(Line.upper_id.in_(part),
                                                       Line.dataset_id.in_(list(dataset_ids)))))
    return [ln for ln in rows if ln.lower_id in wanted]


_PAIR_SHIFT = 1 << 32  # level ids are 32-bit integers, so keys never collide


def stored_pair_keys(session: Session, species_id: int, dataset_ids: Sequence[int], multipole: str = "E1",
                     observed: bool | None = None) -> np.ndarray:
    """Sorted keys ``lower_id * 2**32 + upper_id`` of the species' stored lines of one multipole in the datasets.

    Two columns only (no ORM objects), so a species with 10^5 stored lines costs a fraction of a second.
    ``observed`` True keeps measured lines only (an observed wavelength), False computed ones only.
    """
    if not dataset_ids:
        return np.empty(0, dtype=np.int64)
    query = select(Line.lower_id, Line.upper_id).where(
        Line.species_id == species_id, Line.dataset_id.in_(list(dataset_ids)), Line.multipole == multipole)
    if observed is not None:
        query = query.where(Line.observed_nm.is_not(None) if observed else Line.observed_nm.is_(None))
    pairs = session.execute(query).all()
    flat = np.fromiter(itertools.chain.from_iterable(pairs), dtype=np.int64, count=2 * len(pairs))
    return np.unique(pair_keys(flat[0::2], flat[1::2]))


def pair_keys(lower_ids: np.ndarray, upper_ids: np.ndarray) -> np.ndarray:
    """One int64 key per (lower id, upper id) pair, for vectorised membership tests."""
    return np.asarray(lower_ids, dtype=np.int64) * _PAIR_SHIFT + np.asarray(upper_ids, dtype=np.int64)



def line_row(line: Line, lower: Level, upper: Level, spectrum: str, dataset: str) -> dict:
    """A stored line as a row of the line-list contract, with its id, observation, note, level ids and the
    levels' quantum numbers (:data:`levels.store.columns.LINE_LEVEL_VALUE_KEYS`)."""
    return {
        "id": line.id, "spectrum": spectrum, "lower": lower.label, "upper": upper.label,
        "lower_cm1": lower.energy_cm1, "upper_cm1": upper.energy_cm1, "wavenumber_cm1": line.wavenumber_cm1,
        "vacuum_nm": line.vacuum_nm, "air_nm": line.air_nm, "multipole": line.multipole,
        "a_per_s": line.a_per_s, "f_abs": line.f_abs, "line_strength_au": line.line_strength_au,
        "g_lower": lower.g, "g_upper": upper.g, "unc_nm": line.unc_nm, "dataset": dataset,
        "observed_nm": line.observed_nm, "medium": line.medium, "intensity": line.intensity, "note": line.note,
        "lower_id": lower.id, "upper_id": upper.id, **level_values(lower, upper),
    }


def line_record(session: Session, line_id: int) -> dict | None:
    """One stored line by id as :func:`line_row` (with its levels, species and dataset names), or None."""
    line = session.get(Line, line_id)
    if line is None:
        return None
    # foreign keys guarantee the line's levels, species and dataset exist
    species = session.get_one(Species, line.species_id)
    dataset = session.get_one(Dataset, line.dataset_id)
    return line_row(line, session.get_one(Level, line.lower_id), session.get_one(Level, line.upper_id), species.name,
                    dataset.name)


def dataset_lines(session: Session, dataset_id: int) -> list[Line]:
    """Every line of a dataset, by id."""
    return list(session.scalars(select(Line).where(Line.dataset_id == dataset_id).order_by(Line.id)))


def levels_by_id(session: Session, level_ids: Sequence[int]) -> dict[int, Level]:
    """The levels of the given ids, by id."""
    return {lv.id: lv for lv in session.scalars(select(Level).where(Level.id.in_(list(level_ids))))}


# ----------------------------------------------------------------- maintenance

def rows_outside(session: Session, table_name: str, column: str, *, low: float | None, low_open: bool,
                 high: float | None, high_open: bool, first: int) -> tuple[list[int], int, object]:
    """Rows of a table whose non-null ``column`` lies outside [low, high] (open ends where asked).

    Returns up to ``first`` ids in order, the total count, and the first such row's value (None when
    there is none); either bound may be None (unbounded).
    """
    from levels.store.schema import Base

    table = Base.metadata.tables[table_name]
    col = table.c[column]
    inside = []
    if low is not None:
        inside.append(col > low if low_open else col >= low)
    if high is not None:
        inside.append(col < high if high_open else col <= high)
    if not inside:
        return [], 0, None
    bad = select(table.c.id).where(col.is_not(None), ~and_(*inside))
    ids = list(session.scalars(bad.order_by(table.c.id).limit(first)))
    if not ids:
        return [], 0, None
    total = int(session.execute(select(func.count()).select_from(bad.subquery())).scalar_one())
    return ids, total, session.scalar(select(col).where(table.c.id == ids[0]))


def text_rows(session: Session, table_name: str, columns: Sequence[str], *, yield_per: int = 10000):
    """``(id, value, ...)`` of every row of a table with the given text columns, by id, read in chunks."""
    from levels.store.schema import Base

    table = Base.metadata.tables[table_name]
    query = select(table.c.id, *[table.c[c] for c in columns]).order_by(table.c.id)
    yield from session.execute(query.execution_options(yield_per=yield_per))


def audit_entries(session: Session, *, limit: int | None = None, action: str | None = None,
                  target: str | None = None) -> list[AuditEntry]:
    """Audit entries, newest first: of one ``action``, whose target contains ``target``, at most ``limit``."""
    query = select(AuditEntry).order_by(AuditEntry.id.desc())
    if action:
        query = query.where(AuditEntry.action == action)
    if target:
        query = query.where(AuditEntry.target.contains(target, autoescape=True))
    if limit:
        query = query.limit(limit)
    return list(session.scalars(query))


def dataset_species(session: Session, dataset: Dataset) -> list[Species]:
    """The species a dataset has levels, lines or limits of, by Z, charge and mass number."""
    ids = set(session.scalars(select(Level.species_id).where(Level.dataset_id == dataset.id).distinct()))
    ids |= set(session.scalars(select(Line.species_id).where(Line.dataset_id == dataset.id).distinct()))
    ids |= set(session.scalars(select(IonizationLimit.species_id)
                               .where(IonizationLimit.dataset_id == dataset.id).distinct()))
    if not ids:
        return []
    return list(session.scalars(select(Species).where(Species.id.in_(ids))
                                .order_by(Species.z, Species.charge, Species.mass_number)))


def dependent_line_counts(session: Session, dataset: Dataset) -> dict[str, int]:
    """Lines of other visible datasets that join levels of ``dataset``: dataset name -> count."""
    own = select(Level.id).where(Level.dataset_id == dataset.id)
    rows = session.execute(
        select(Dataset.name, func.count(Line.id)).join(Dataset, Dataset.id == Line.dataset_id)
        .where(Line.dataset_id != dataset.id, Dataset.retracted == 0,
               or_(Line.lower_id.in_(own), Line.upper_id.in_(own)))
        .group_by(Dataset.name).order_by(Dataset.name))
    return {name: int(count) for name, count in rows}


# ----------------------------------------------------------------- the same state in several datasets

def same_state_levels(session: Session, dataset_id: int, *, species_ids: Sequence[int] | None = None,
                      limit: int = 10_000) -> list[tuple]:
    """Levels of ``dataset_id`` whose state a level of another user dataset of the same species holds.

    A state is (species, canonical configuration ``state_configuration``, term, 2J). Only datasets
    that are not retracted and that the tool does not rebuild (``role`` NULL) are compared; levels
    without a canonical configuration take no part.

    Returns
    -------
    list of tuple
        ``(species name, label in dataset_id, label in the other dataset, other dataset name,
        state_configuration, term, two_j)``, ordered by species, other dataset and label; at most ``limit``.
    """
    from sqlalchemy.orm import aliased

    new = aliased(Level)
    old = aliased(Level)
    query = (select(Species.name, new.label, old.label, Dataset.name, new.state_configuration, new.term, new.two_j)
             .join(old, (old.species_id == new.species_id) & (old.state_configuration == new.state_configuration)
                   & (old.term == new.term)
                   & ((old.two_j == new.two_j) | (old.two_j.is_(None) & new.two_j.is_(None))))
             .join(Dataset, Dataset.id == old.dataset_id)
             .join(Species, Species.id == new.species_id)
             .where(new.dataset_id == dataset_id, old.dataset_id != dataset_id, Dataset.retracted == 0,
                    Dataset.role.is_(None), new.state_configuration.is_not(None))
             .order_by(Species.name, Dataset.name, new.label).limit(limit))
    if species_ids is not None:
        query = query.where(new.species_id.in_(list(species_ids)))
    return [tuple(row) for row in session.execute(query)]


def states_in_several_datasets(session: Session, species_id: int, dataset_ids: Sequence[int]) -> list[tuple]:
    """States of a species held by more than one of ``dataset_ids``: (state configuration, term, two_j, count).

    The state is the canonical configuration (or the configuration where none is stored), term and 2J.
    """
    ids = list(dataset_ids)
    if not ids:
        return []
    state = func.coalesce(Level.state_configuration, Level.configuration)
    query = (select(state, Level.term, Level.two_j, func.count(func.distinct(Level.dataset_id)))
             .where(Level.species_id == species_id, Level.dataset_id.in_(ids))
             .group_by(state, Level.term, Level.two_j)
             .having(func.count(func.distinct(Level.dataset_id)) > 1)
             .order_by(state, Level.term, Level.two_j))
    return [tuple(row) for row in session.execute(query)]


def states_twice_in_dataset(session: Session, dataset_id: int) -> list[tuple]:
    """States (species name, canonical configuration, term, two_j) that one dataset holds more than once."""
    query = (select(Species.name, Level.state_configuration, Level.term, Level.two_j)
             .join(Species, Species.id == Level.species_id)
             .where(Level.dataset_id == dataset_id, Level.state_configuration.is_not(None))
             .group_by(Species.name, Level.state_configuration, Level.term, Level.two_j)
             .having(func.count() > 1)
             .order_by(Species.name, Level.state_configuration, Level.term, Level.two_j))
    return [tuple(row) for row in session.execute(query)]
