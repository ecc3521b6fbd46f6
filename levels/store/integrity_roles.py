"""Store check of computed-dataset roles (part of ``levels check``; issue 19, item 1).

Computed datasets the tool rebuilds are found by role and owner species, never by
name. This check reports what would break that:

- a dataset whose role has rows (levels, lines, ionization limits) of another species
  than its owner;
- a dataset without a role whose name has a reserved form (``derived lines ...``,
  ``series limit ...``, ``hydrogenic ...``, ``rates ... A=<mass>``): the next rebuild of
  the computed dataset of that name would be refused as a duplicate name.
"""

from __future__ import annotations

from sqlalchemy import select

from levels.store import queries
from levels.store.schema import Dataset, IonizationLimit, Level, Line


def role_problems(conn) -> list[str]:
    """Problems of computed-dataset roles, one text each (empty when all is well).

    Parameters
    ----------
    conn : sqlalchemy.engine.Connection
        An open connection to the store.

    Returns
    -------
    list of str
        ``datasets row <id> ...`` messages.
    """
    problems = []
    for model in (Level, Line, IonizationLimit):
        rows = conn.execute(
            select(Dataset.id, Dataset.name, Dataset.role, model.species_id).distinct()
            .join(model, model.dataset_id == Dataset.id)
            .where(Dataset.role.is_not(None), model.species_id != Dataset.owner_species_id)
            .order_by(Dataset.id)).all()
        for dataset_id, name, role, species_id in rows:
            problems.append(f"datasets row {dataset_id} ({name!r}, role {role}) holds {model.__tablename__} of "
                            f"species {species_id}, not of its owner species")
    for dataset_id, name in conn.execute(select(Dataset.id, Dataset.name).where(Dataset.role.is_(None))
                                         .order_by(Dataset.id)):
        if queries.is_reserved_dataset_name(name):
            problems.append(f"datasets row {dataset_id} ({name!r}) is not a computed dataset of the tool but has a "
                            "reserved name; rename it (a rebuild of the computed dataset of that name would fail)")
    return problems
