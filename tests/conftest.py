"""Shared fixtures: a fresh store on SQLite always, and on PostgreSQL when LEVELS_TEST_POSTGRES_URL is set.

Each PostgreSQL test gets its own schema (named after a random id), selected
through the connection's search_path, and dropped afterwards.
"""

from __future__ import annotations

import contextlib
import os
import uuid

import pytest
from sqlalchemy import create_engine, text
from sqlalchemy.engine import make_url

from levels.catalog import Catalog


def _import_colour_cleanly() -> None:
    """Import colour-science once without its side effects (see levels.physics.colour)."""
    from levels.physics.colour import import_colour_science

    import_colour_science()


_import_colour_cleanly()

POSTGRES_URL = os.environ.get("LEVELS_TEST_POSTGRES_URL")
BACKENDS = ["sqlite"] + (["postgresql"] if POSTGRES_URL else [])


def _postgres_schema_url(base: str, schema: str) -> str:
    url = make_url(base)
    if url.drivername == "postgresql":
        url = url.set(drivername="postgresql+psycopg")
    url = url.update_query_dict({"options": f"-csearch_path={schema}"})
    return url.render_as_string(hide_password=False)


@contextlib.contextmanager
def postgres_schema():
    """URL of a fresh PostgreSQL schema of its own (random name), dropped afterwards."""
    schema = f"t_{uuid.uuid4().hex[:16]}"
    admin = create_engine(_postgres_schema_url(POSTGRES_URL, "public"))
    with admin.begin() as conn:
        conn.execute(text(f'CREATE SCHEMA "{schema}"'))
    try:
        yield _postgres_schema_url(POSTGRES_URL, schema)
    finally:
        with admin.begin() as conn:
            conn.execute(text(f'DROP SCHEMA "{schema}" CASCADE'))
        admin.dispose()


@contextlib.contextmanager
def backend_url(backend: str, folder):
    """A fresh, empty store URL on ``backend`` ("sqlite" in ``folder``, or "postgresql")."""
    if backend == "sqlite":
        yield f"sqlite:///{folder / 'store.sqlite'}"
        return
    with postgres_schema() as url:
        yield url


@pytest.fixture(params=BACKENDS)
def store_url(request, tmp_path):
    """URL of an empty, not yet initialised store on each backend."""
    with backend_url(request.param, tmp_path) as url:
        yield url


@pytest.fixture
def catalog(store_url):
    """An initialised, empty store behind the service layer."""
    cat = Catalog(store_url, actor="pytest")
    cat.init()
    yield cat
    cat.close()
