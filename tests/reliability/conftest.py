"""Fixtures of the reliability tests: a store with a little of everything, raw SQL access."""

from __future__ import annotations

import sqlite3
from pathlib import Path

import pytest
from sqlalchemy import text
from sqlalchemy.engine import make_url

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "seed_data" / "demo"


def fill(catalog, *, n_max: int = 5) -> None:
    """Computed H I and He II, the invented Li cell (levels, lines, sample) and a fitted limit."""
    catalog.compute_hydrogenic("H I", n_max=n_max)
    catalog.compute_hydrogenic("He II", n_max=n_max, fine_structure=False)
    catalog.import_file(DEMO / "sample-li-cell.csv", sample="li-cell-amber", dataset="li/levels",
                        sample_conditions={"description": "invented cell, ° and µ in text", "pressure_pa": 50.0,
                                           "tgas_k": 750.0})
    catalog.import_file(DEMO / "lines-li-cell.csv", sample="li-cell-amber", dataset="li/lines")
    catalog.fit_limit("Li I", ["ns 2S1/2", "nd 2D5/2"], n_min=4)


@pytest.fixture
def filled(catalog):
    """An initialised store on each backend holding every table's kind of row."""
    fill(catalog)
    return catalog


def raw_execute(catalog, *statements: str) -> None:
    """Run SQL behind the schema's back: SQLite with foreign keys and CHECKs off, PostgreSQL as is."""
    if catalog.engine.dialect.name == "sqlite":
        catalog.engine.dispose()
        conn = sqlite3.connect(make_url(catalog.url).database, isolation_level=None)
        try:
            conn.execute("PRAGMA foreign_keys=OFF")
            conn.execute("PRAGMA ignore_check_constraints=ON")
            for statement in statements:
                conn.execute(statement)
        finally:
            conn.close()
        return
    with catalog.engine.begin() as conn:
        for statement in statements:
            conn.execute(text(statement))


@pytest.fixture
def postgres_url():
    """URL of a fresh, empty PostgreSQL schema (skips when LEVELS_TEST_POSTGRES_URL is not set)."""
    from tests.conftest import POSTGRES_URL, postgres_schema

    if not POSTGRES_URL:
        pytest.skip("LEVELS_TEST_POSTGRES_URL is not set: PostgreSQL leg skipped")
    with postgres_schema() as url:
        yield url
