"""Datasets and lab samples: their records with counts, and new samples with their conditions.

Units of work on one store that :class:`levels.catalog.Catalog` exposes as methods; the SQL is in
:mod:`levels.store.queries`.
"""

from __future__ import annotations

import json

from sqlalchemy.orm import Session

from levels.errors import AlreadyExistsError, InputFileError, Problem
from levels.service.contract import SAMPLE_CONDITION_FIELDS
from levels.store import queries
from levels.store.schema import Dataset, Sample


def dataset_info(catalog, name_or_id: str | int) -> dict:
    """A dataset's record with its counts of levels and lines."""

    def work(session: Session) -> dict:
        ds = queries.require_dataset(session, name_or_id)
        return dataset_summary(session, ds)

    return catalog.read(work)


def dataset_rows(catalog, include_retracted: bool = False) -> list[dict]:
    """Every dataset in precedence order with counts."""

    def work(session: Session) -> list[dict]:
        return [dataset_summary(session, ds)
                for ds in queries.visible_datasets(session, include_retracted=include_retracted)]

    return catalog.read(work)


def create_sample(catalog, name: str, **conditions) -> dict:
    """Create a lab sample with its conditions (SAMPLE_CONDITION_FIELDS); the name must be new."""
    unknown = set(conditions) - set(SAMPLE_CONDITION_FIELDS)
    if unknown:
        raise ValueError(f"unknown sample fields: {', '.join(sorted(unknown))}")
    if not name or not name.strip() or len(name) > 200:
        raise InputFileError([Problem("<form>", None, "name", "a sample name of 1 to 200 characters is required")])

    def work(session: Session) -> dict:
        if queries.find_sample(session, name.strip()) is not None:
            raise AlreadyExistsError(f"a sample named {name.strip()!r} already exists")
        sample = queries.get_or_create_sample(session, name.strip(), **conditions)
        queries.record_audit(session, "create-sample", f"sample {sample.name}", dict(conditions), actor=catalog.actor)
        return sample_summary(sample)

    return catalog.write(work)


def sample_rows(catalog) -> list[dict]:
    """Every sample with its conditions and dataset names."""
    def work(session: Session) -> list[dict]:
        return [sample_summary(s) for s in queries.all_samples(session)]

    return catalog.read(work)


def sample_summary(sample: Sample) -> dict:
    """A sample as a mapping with its conditions and dataset names."""
    out = {"id": sample.id, "name": sample.name}
    for name in SAMPLE_CONDITION_FIELDS:
        out[name] = getattr(sample, name)
    out["created_at"] = sample.created_at.isoformat() if sample.created_at else None
    out["datasets"] = [d.name for d in sample.datasets]
    return out


def dataset_summary(session: Session, ds: Dataset) -> dict:
    """A dataset as a mapping (for reports and the API)."""
    n_levels, n_lines = queries.dataset_counts(session, ds.id)
    return {
        "id": ds.id, "name": ds.name, "kind": ds.kind, "method": ds.method, "method_version": ds.method_version,
        "citation": ds.citation, "author": ds.author, "description": ds.description,
        "options": json.loads(ds.options_json or "{}"), "created_at": ds.created_at.isoformat(),
        "sample": ds.sample.name if ds.sample else None, "retracted": bool(ds.retracted),
        "levels": n_levels, "lines": n_lines,
    }
