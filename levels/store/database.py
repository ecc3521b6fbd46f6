"""Engines, sessions, migrations and dumps for SQLite and PostgreSQL stores.

A store is named by a SQLAlchemy URL (``sqlite:///path``,
``postgresql+psycopg://user@host:port/db``) or by a plain file path, which
means SQLite. SQLite connections get WAL journaling, foreign keys and a busy
timeout; every write goes through :func:`write_session`, one transaction per
unit of work, retried with backoff when SQLite reports ``database is locked``.
"""

from __future__ import annotations

import contextlib
import functools
import json
import math
import os
import random
import sys
import time
from collections.abc import Callable, Iterator
from pathlib import Path
from typing import TypeVar

from sqlalchemy import Engine, create_engine, event, inspect, select, text
from sqlalchemy.engine import make_url
from sqlalchemy.exc import ArgumentError, DatabaseError, DBAPIError, IntegrityError, InternalError, OperationalError
from sqlalchemy.orm import Session, sessionmaker

from levels.errors import AlreadyExistsError, StoreError
from levels.store.schema import TABLE_ORDER, Base

MIGRATIONS_DIR = Path(__file__).resolve().parent / "migrations"
SQLITE_BUSY_TIMEOUT_MS = 30_000
T = TypeVar("T")


def default_store_path() -> Path:
    """The default SQLite file in the user's data directory.

    Linux and other Unix: ``$XDG_DATA_HOME/levels/levels.sqlite`` (default
    ``~/.local/share``); macOS: ``~/Library/Application Support/levels``;
    Windows: ``%LOCALAPPDATA%\\levels``.
    """
    if sys.platform == "win32":
        base = Path(os.environ.get("LOCALAPPDATA", Path.home() / "AppData" / "Local"))
    elif sys.platform == "darwin":
        base = Path.home() / "Library" / "Application Support"
    else:
        base = Path(os.environ.get("XDG_DATA_HOME") or Path.home() / ".local" / "share")
    return base / "levels" / "levels.sqlite"


def normalize_url(url_or_path: str | os.PathLike | None) -> str:
    """Turn a store name into a SQLAlchemy URL; ``None`` means the default SQLite file.

    Raises
    ------
    StoreError
        The URL names a backend other than SQLite or PostgreSQL, or is malformed.
    """
    if url_or_path is None or str(url_or_path) == "":
        return f"sqlite:///{default_store_path()}"
    text_ = str(url_or_path)
    if "://" not in text_:
        return f"sqlite:///{Path(text_).expanduser().resolve()}"
    try:
        url = make_url(text_)
    except ArgumentError as exc:
        raise StoreError(f"malformed store URL {text_!r}: {exc}") from None
    backend = url.get_backend_name()
    if backend not in ("sqlite", "postgresql"):
        raise StoreError(f"store URL {text_!r}: backend {backend!r} is not supported (use sqlite or postgresql)")
    if backend == "postgresql" and url.drivername == "postgresql":
        url = url.set(drivername="postgresql+psycopg")
    return url.render_as_string(hide_password=False)


def display_url(url: str) -> str:
    """The URL with any password hidden, for messages and export headers."""
    return make_url(url).render_as_string(hide_password=True)


def _sqlite_pragmas(dbapi_connection, _record) -> None:
    cursor = dbapi_connection.cursor()
    cursor.execute("PRAGMA foreign_keys=ON")
    cursor.execute(f"PRAGMA busy_timeout={SQLITE_BUSY_TIMEOUT_MS}")
    cursor.execute("PRAGMA journal_mode=WAL")
    cursor.execute("PRAGMA synchronous=NORMAL")
    cursor.close()


def _sqlite_read_pragmas(dbapi_connection, _record) -> None:
    cursor = dbapi_connection.cursor()
    cursor.execute(f"PRAGMA busy_timeout={SQLITE_BUSY_TIMEOUT_MS}")
    cursor.close()


def _sqlite_begin(conn) -> None:
    # a write transaction takes the write lock at its start (BEGIN IMMEDIATE): no lock
    # upgrade half-way, so concurrent writers wait on the busy timeout instead of
    # failing mid-transaction; reads stay deferred and never block writers under WAL
    if conn.get_execution_options().get("levels_write"):
        conn.exec_driver_sql("BEGIN IMMEDIATE")
    else:
        conn.exec_driver_sql("BEGIN")


def sqlite_file(url: str) -> Path | None:
    """The file of a SQLite store named by a plain path or ``sqlite:///path`` URL.

    ``None`` for other backends, in-memory stores and ``file:`` URIs (whose file
    SQLite itself opens as the URI says).

    Examples
    --------
    >>> sqlite_file("sqlite:////tmp/lab.sqlite")
    PosixPath('/tmp/lab.sqlite')
    >>> sqlite_file("sqlite://") is None
    True
    """
    parsed = make_url(normalize_url(url))
    name = parsed.database or ""
    if parsed.get_backend_name() != "sqlite" or name in ("", ":memory:") or name.startswith("file:"):
        return None
    return Path(name)


def _create_sqlite_folder(engine: Engine) -> None:
    """Create the folder of a new SQLite store file (only ``levels init`` and store imports create stores)."""
    path = sqlite_file(engine.url.render_as_string(hide_password=False))
    if path is None or path.exists():
        return
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise StoreError(f"cannot create the folder of the store {path}: {exc.strerror or exc}") from None


def make_engine(url_or_path: str | os.PathLike | None, *, echo: bool = False) -> Engine:
    """Create an engine for a store URL or path.

    Nothing is created on disk here: a SQLite file and its folder are made by
    :func:`upgrade` (``levels init``) only, so a mistyped path that a command only
    reads leaves no empty folder or file behind.
    """
    url = normalize_url(url_or_path)
    parsed = make_url(url)
    if parsed.get_backend_name() == "sqlite":
        database = parsed.database or ""
        read_only = bool(database) and database != ":memory:" and Path(database).exists() \
            and not os.access(database, os.W_OK)
        if read_only:  # a store we may not write is opened read-only (immutable when no -shm can be made)
            import sqlite3
            from urllib.parse import quote

            uri = f"file:{quote(str(Path(database).resolve()))}?mode=ro" + (
                "" if os.access(Path(database).resolve().parent, os.W_OK) else "&immutable=1")
            engine = create_engine(url, echo=echo, creator=lambda: sqlite3.connect(
                uri, uri=True, timeout=SQLITE_BUSY_TIMEOUT_MS / 1000, check_same_thread=False))
        else:
            engine = create_engine(url, echo=echo, connect_args={"timeout": SQLITE_BUSY_TIMEOUT_MS / 1000})
        event.listen(engine, "connect", _sqlite_pragmas if not read_only else _sqlite_read_pragmas)

        @event.listens_for(engine, "connect")
        def _no_pysqlite_transactions(dbapi_connection, _record):
            dbapi_connection.isolation_level = None

        event.listen(engine, "begin", _sqlite_begin)
        return engine
    try:
        return create_engine(url, echo=echo, pool_pre_ping=True)
    except ModuleNotFoundError as exc:
        raise StoreError(f"PostgreSQL needs the 'postgres' extra: pip install 'levels[postgres]' ({exc})") from None


def is_sqlite(engine: Engine) -> bool:
    """Whether the engine talks to SQLite."""
    return engine.dialect.name == "sqlite"


# ----------------------------------------------------------------- migrations

def _alembic_config(engine: Engine):
    from alembic.config import Config

    config = Config()
    config.set_main_option("script_location", str(MIGRATIONS_DIR))
    config.set_main_option("sqlalchemy.url", engine.url.render_as_string(hide_password=False).replace("%", "%%"))
    return config


def upgrade(engine: Engine, revision: str = "head") -> str:
    """Create or upgrade the schema to ``revision`` through the Alembic migrations.

    Returns
    -------
    str
        The revision the store is at afterwards.
    """
    from alembic import command

    _create_sqlite_folder(engine)
    config = _alembic_config(engine)
    try:
        with engine.begin() as connection:
            config.attributes["connection"] = connection
            command.upgrade(config, revision)
    except OperationalError as exc:
        raise StoreError(f"cannot create or upgrade the store at {display_url(str(engine.url))}: {exc.orig}") from None
    return current_revision(engine) or ""


def current_revision(engine: Engine) -> str | None:
    """The Alembic revision of the store, ``None`` for an empty or foreign database."""
    from alembic.runtime.migration import MigrationContext

    path = sqlite_file(engine.url.render_as_string(hide_password=False))
    if path is not None and not path.exists():
        return None  # connecting would create an empty file
    try:
        with engine.connect() as connection:
            return MigrationContext.configure(connection).get_current_revision()
    except DatabaseError as exc:
        raise StoreError(f"cannot open the store at {display_url(str(engine.url))}: {exc.orig}") from None


@functools.lru_cache(maxsize=1)
def head_revision() -> str:
    """The newest revision the code knows (read once per process)."""
    from alembic.script import ScriptDirectory

    config = _alembic_config(create_engine("sqlite://"))
    return ScriptDirectory.from_config(config).get_current_head() or ""


def require_current(engine: Engine) -> None:
    """Refuse to work on a store that was never initialised or needs an upgrade."""
    revision = current_revision(engine)
    if revision is None:
        raise StoreError(
            f"the store at {display_url(str(engine.url))} is not initialised; run 'levels init' first"
        )
    if revision != head_revision():
        raise StoreError(
            f"the store at {display_url(str(engine.url))} is at schema {revision}; run 'levels init' to upgrade"
        )


# ----------------------------------------------------------------- sessions

def session_factory(engine: Engine) -> sessionmaker[Session]:
    """A sessionmaker bound to ``engine`` (objects stay usable after commit)."""
    return sessionmaker(engine, expire_on_commit=False)


def _is_locked(exc: OperationalError) -> bool:
    message = str(exc.orig).lower()
    return "database is locked" in message or "database is busy" in message


def _is_serialization_failure(exc: OperationalError) -> bool:
    code = getattr(exc.orig, "sqlstate", None)
    return code in ("40001", "40P01")


def _is_read_only(exc: DBAPIError) -> bool:
    # SQLite: "attempt to write a readonly database"; PostgreSQL: SQLSTATE 25006 read_only_sql_transaction
    return "readonly database" in str(exc.orig).lower() or getattr(exc.orig, "sqlstate", None) == "25006"


def read_only_error(engine: Engine, exc: DBAPIError) -> StoreError:
    """The project's one-line error for a write to a store this process may not write.

    Names the store and the cause SQLite or PostgreSQL gave, and, for a SQLite file,
    whether the file or its folder lacks write permission.
    """
    url = engine.url
    path = sqlite_file(url.render_as_string(hide_password=False))
    uri = url.get_backend_name() == "sqlite" and (url.database or "").startswith("file:")
    where = str(path) if path is not None else url.database if uri else display_url(str(url))
    cause = _first_line(str(exc.orig))
    if path is not None and path.exists() and not os.access(path, os.W_OK):
        why = "the file is not writable by this user"
    elif path is not None and not os.access(path.parent, os.W_OK):
        why = "its folder is not writable by this user (SQLite keeps the -wal and -shm files there)"
    elif uri and "mode=ro" in url.render_as_string(hide_password=False):
        why = "opened with mode=ro"
    else:
        why = "the database refuses writes"
    return StoreError(f"the store at {where} is read-only ({why}): {cause}; nothing was written "
                      "(use a writable store or copy, or fix the permissions)")


def run_in_transaction(engine: Engine, work: Callable[[Session], T], *, attempts: int = 8) -> T:
    """Run ``work(session)`` in one transaction, committed at the end, rolled back on error.

    SQLite ``database is locked`` and PostgreSQL serialization failures are retried
    with exponential backoff and jitter. A unique-constraint violation is retried
    twice (two writers creating the same new species or default dataset name at
    once: the retry finds the other's row), then becomes
    :class:`~levels.errors.AlreadyExistsError`.
    """
    factory = session_factory(engine.execution_options(levels_write=True))
    delay = 0.05
    unique_retries = 2
    for attempt in range(1, attempts + 1):
        try:
            with factory() as session, session.begin():
                return work(session)
        except OperationalError as exc:
            if attempt < attempts and (_is_locked(exc) or _is_serialization_failure(exc)):
                time.sleep(delay * (1 + random.random()))
                delay = min(delay * 2, 2.0)
                continue
            if _is_read_only(exc):
                raise read_only_error(engine, exc) from None
            raise StoreError(f"the store could not complete the write: {exc.orig}") from None
        except InternalError as exc:  # PostgreSQL: a read-only transaction or standby (SQLSTATE 25006)
            if _is_read_only(exc):
                raise read_only_error(engine, exc) from None
            raise
        except IntegrityError as exc:
            message = str(exc.orig)
            if "unique" in message.lower() or getattr(exc.orig, "sqlstate", None) == "23505":
                if unique_retries > 0 and attempt < attempts:
                    unique_retries -= 1
                    time.sleep(delay * (1 + random.random()))
                    continue
                raise AlreadyExistsError(f"already exists: {_first_line(message)}") from None
            raise StoreError(f"the store refused the write: {_first_line(message)}") from None
    raise AssertionError("unreachable")


def _first_line(message: str) -> str:
    return message.strip().splitlines()[0] if message.strip() else message


@contextlib.contextmanager
def read_session(engine: Engine) -> Iterator[Session]:
    """A session for reads (one consistent snapshot per transaction).

    SQLite gives a snapshot per read transaction under WAL; on PostgreSQL the
    session runs REPEATABLE READ so every statement of it sees the same moment.
    """
    bind = engine if is_sqlite(engine) else engine.execution_options(isolation_level="REPEATABLE READ")
    with session_factory(bind)() as session:
        yield session


# ----------------------------------------------------------------- dumps

def _canonical(value):
    if isinstance(value, float):
        if math.isnan(value) or math.isinf(value):
            return repr(value)
        return float.hex(value)
    if hasattr(value, "isoformat"):
        if getattr(value, "tzinfo", None) is not None:
            value = value.astimezone(__import__("datetime").timezone.utc).replace(tzinfo=None)
        return value.isoformat()
    return value


def dump(engine: Engine, *, tables: tuple[str, ...] = TABLE_ORDER) -> str:
    """A canonical text dump of every row of the store's tables, ordered by primary key.

    Floats are written exactly (hex), times in UTC, so two dumps are equal exactly
    when the stores hold the same data, whatever the backend.
    """
    lines = []
    inspector = inspect(engine)
    existing = set(inspector.get_table_names())
    with engine.connect() as connection:
        for name in tables:
            if name not in existing:
                lines.append(f"-- {name}: absent")
                continue
            table = Base.metadata.tables[name]
            # the columns the store has (an older revision lacks the newer ones)
            present = {c["name"] for c in inspector.get_columns(name)}
            kept = [c for c in table.columns if c.name in present]
            columns = [c.name for c in kept]
            lines.append(f"-- {name}: {','.join(columns)}")
            for row in connection.execute(select(*kept).order_by(*table.primary_key.columns)):
                lines.append(json.dumps([_canonical(v) for v in row], ensure_ascii=False))
    return "\n".join(lines) + "\n"


def sqlite_integrity_check(engine: Engine) -> list[str]:
    """Problems reported by SQLite's own ``PRAGMA integrity_check`` and ``foreign_key_check``."""
    if not is_sqlite(engine):
        return []
    problems: list[str] = []
    with engine.connect() as connection:
        rows = [r[0] for r in connection.exec_driver_sql("PRAGMA integrity_check")]
        if rows != ["ok"]:
            problems.extend(f"integrity_check: {r}" for r in rows)
        for row in connection.exec_driver_sql("PRAGMA foreign_key_check"):
            problems.append(f"foreign_key_check: table {row[0]} row {row[1]} refers to missing {row[2]}")
    return problems


def ping(engine: Engine) -> None:
    """Open a connection and run a trivial query, raising StoreError if the store is unreachable."""
    try:
        with engine.connect() as connection:
            connection.execute(text("SELECT 1"))
    except DatabaseError as exc:
        raise StoreError(f"cannot reach the store at {display_url(str(engine.url))}: "
                         f"{_first_line(str(exc.orig))}") from None


def store_revision(engine: Engine) -> tuple[int, int, int, int]:
    """A cheap fingerprint of the store's state, changed by every write.

    Every unit of work appends an audit entry in its own transaction, so the
    count and the largest id of the audit log change with each write (the count
    also catches a transaction with a lower id committing after a higher one on
    PostgreSQL); the count and largest id of the datasets catch a store filled
    without audit entries (``import-store`` without audit).

    Returns
    -------
    tuple of int
        ``(audit entries, largest audit id, datasets, largest dataset id)``; equal
        tuples mean nothing was written in between.
    """
    from levels.store.schema import AuditEntry, Dataset

    audit, datasets = AuditEntry.__tablename__, Dataset.__tablename__
    # one plain statement on a pooled connection: no session or ORM set-up, a fraction of a millisecond
    sql = (f"SELECT (SELECT count(*) FROM {audit}), (SELECT max(id) FROM {audit}), "
           f"(SELECT count(*) FROM {datasets}), (SELECT max(id) FROM {datasets})")
    with engine.connect() as connection:
        row = connection.exec_driver_sql(sql).one()
    return tuple(int(v or 0) for v in row)  # type: ignore[return-value]
