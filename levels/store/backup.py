"""Whole-store export and import in the open ``levels-store`` format (JSON lines with a checksum).

An export file moves every row of a store, with its ids, between SQLite and
PostgreSQL (or serves as a backup) without losing a bit. The format is plain
UTF-8 text, one JSON value (RFC 8259) per line, ``\\n`` line ends:

Line 1, the **header**, a JSON object::

    {"format": "levels-store", "version": 1, "schema_revision": "0001",
     "tables": ["species", "samples", "datasets", "levels", "lines",
                "ionization_limits", "audit_log"],
     "columns": {"species": [["id", "integer"], ["z", "integer"], ...], ...},
     "counts": {"species": 4, ...}, "written_by": "levels 0.1.0"}

- ``format`` is always ``"levels-store"``; ``version`` is the format version
  (this module writes and reads version :data:`FORMAT_VERSION`);
- ``schema_revision`` is the store's schema (Alembic) revision; an import
  needs the same revision in the target;
- ``tables`` gives the order of the rows (parents before children, so foreign
  keys hold at every step); ``columns`` gives each table's columns in order with
  their value type (``integer``, ``float``, ``text``, ``datetime``);
- ``counts`` gives the number of rows of each table.

Then one line per **row**, tables in the header's order, rows by ascending
``id``: ``{"table": "levels", "row": {"id": 1, "dataset_id": 1, ...}}`` with
every column of the table, in the header's column order. Values:

- ``integer``: a JSON integer;
- ``float``: a JSON number written as the shortest decimal that reads back
  as the same IEEE 754 double (Python's ``repr``; any correctly rounding
  JSON reader recovers the exact bits); the non-finite values, which JSON
  numbers cannot spell, are the strings ``"NaN"``, ``"Infinity"`` and
  ``"-Infinity"``;
- ``text``: a JSON string;
- ``datetime``: a string ``YYYY-MM-DDTHH:MM:SS.ffffffZ`` in UTC;
- ``null`` for a missing value.

The last line, the **checksum**, is ``{"sha256": "<64 hex digits>"}``: the
SHA-256 of every byte before it (header and rows with their line ends).

The file depends only on the store's content: it carries no export time and
no store address, so two stores holding the same rows give byte-identical
files, whatever their backend, and a file's checksum identifies its content.
A file name ending in ``.gz`` is written and read gzip-compressed (the
checksum covers the uncompressed text; the gzip header carries no time).

Import (:func:`import_store`) checks the whole file first (checksum, header,
schema revision) and refuses a store that already holds rows; then it inserts
everything in ONE transaction, re-computing the checksum as it goes, so a
file changed during the import is also refused and nothing is written. On
PostgreSQL the id sequences are set past the largest imported id.
"""

from __future__ import annotations

import datetime as dt
import gzip
import hashlib
import io
import json
import math
import os
import re
import stat
import tempfile
import zlib
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path

from sqlalchemy import DateTime, Engine, Float, Integer, String, Text, func, insert, select, text
from sqlalchemy.orm import Session

from levels import __version__
from levels.errors import LevelsError, StoreError
from levels.store import database
from levels.store.schema import TABLE_ORDER, Base

FORMAT_NAME = "levels-store"
FORMAT_VERSION = 1
#: rows inserted per executemany during an import
INSERT_CHUNK = 5000
#: rows fetched per round trip during an export
FETCH_CHUNK = 10000
_CHECKSUM = re.compile(rb'^\{"sha256":"([0-9a-f]{64})"\}\n$')
_DATETIME = re.compile(r"^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{6}Z$")
_NON_FINITE = {"NaN": math.nan, "Infinity": math.inf, "-Infinity": -math.inf}


class StoreFileError(LevelsError, ValueError):
    """A store export file is damaged, of another format or revision, or does not fit the target."""


@dataclass
class TransferSummary:
    """What an export or import moved.

    Attributes
    ----------
    path : str
        The file.
    counts : dict
        Rows per table.
    sha256 : str
        Checksum of the file's content (hex).
    schema_revision : str
        Schema revision of the rows.
    """

    path: str
    counts: dict[str, int]
    sha256: str
    schema_revision: str
    extra: dict = field(default_factory=dict)

    @property
    def total(self) -> int:
        """All rows moved."""
        return sum(self.counts.values())


# ----------------------------------------------------------------- values

def column_kind(column) -> str:
    """The value type of a column in the file: ``integer``, ``float``, ``text`` or ``datetime``."""
    kind = column.type
    if isinstance(kind, DateTime):
        return "datetime"
    if isinstance(kind, Float):
        return "float"
    if isinstance(kind, Integer):
        return "integer"
    if isinstance(kind, (String, Text)):
        return "text"
    raise TypeError(f"column {column} has a type the store format does not know: {kind!r}")


def encode_value(value, kind: str):
    """A stored value as its JSON value in the file.

    Examples
    --------
    >>> encode_value(0.1, "float"), encode_value(float("inf"), "float")
    (0.1, 'Infinity')
    >>> import datetime as dt
    >>> encode_value(dt.datetime(2026, 5, 4, 3, 2, 1, 5), "datetime")
    '2026-05-04T03:02:01.000005Z'
    """
    if value is None:
        return None
    if kind == "float":
        value = float(value)
        if math.isfinite(value):
            return value
        return "NaN" if math.isnan(value) else ("Infinity" if value > 0 else "-Infinity")
    if kind == "datetime":
        if value.tzinfo is not None:
            value = value.astimezone(dt.UTC).replace(tzinfo=None)
        return value.strftime("%Y-%m-%dT%H:%M:%S.%fZ")
    if kind == "integer":
        return int(value)
    return str(value)


def decode_value(value, kind: str, where: str):
    """A JSON value of the file as the value to store; raise StoreFileError on a wrong type.

    Examples
    --------
    >>> decode_value("-Infinity", "float", "x")
    -inf
    >>> decode_value("2026-05-04T03:02:01.000005Z", "datetime", "x").isoformat()
    '2026-05-04T03:02:01.000005+00:00'
    """
    if value is None:
        return None
    if kind == "integer":
        if isinstance(value, int) and not isinstance(value, bool):
            return value
    elif kind == "float":
        if isinstance(value, float):
            return value
        if isinstance(value, int) and not isinstance(value, bool) and abs(value) <= 2 ** 53:
            return float(value)
        if isinstance(value, str) and value in _NON_FINITE:
            return _NON_FINITE[value]
    elif kind == "text":
        if isinstance(value, str):
            return value
    elif kind == "datetime":
        if isinstance(value, str) and _DATETIME.match(value):
            return dt.datetime.strptime(value, "%Y-%m-%dT%H:%M:%S.%fZ").replace(tzinfo=dt.UTC)
    raise StoreFileError(f"{where}: {json.dumps(value)[:60]} is not a valid {kind} value")


_ENCODER = json.JSONEncoder(ensure_ascii=False, separators=(",", ":"), allow_nan=False)


def _dumps(obj) -> bytes:
    return (_ENCODER.encode(obj) + "\n").encode("utf-8")


def _encoder(kind: str) -> Callable:
    """A fast per-column version of :func:`encode_value`."""
    if kind == "float":
        def encode_float(value):
            if value is None:
                return None
            value = float(value)
            return value if math.isfinite(value) else encode_value(value, "float")
        return encode_float
    if kind == "integer":
        return lambda value: None if value is None else int(value)
    if kind == "text":
        return lambda value: None if value is None else str(value)
    return lambda value: encode_value(value, kind)


def _reject_constant(name: str):
    raise ValueError(f"bare {name} is not JSON; non-finite floats are written as strings")


def _loads(line: bytes, where: str):
    try:
        return json.loads(line.decode("utf-8"), parse_constant=_reject_constant)
    except (UnicodeDecodeError, ValueError) as exc:
        raise StoreFileError(f"{where}: not a JSON line ({exc})") from None


def table_columns() -> dict[str, list[tuple[str, str]]]:
    """Columns of every table of the schema, in order, with their value types."""
    return {name: [(c.name, column_kind(c)) for c in Base.metadata.tables[name].columns] for name in TABLE_ORDER}


# ----------------------------------------------------------------- files

def _is_gzip(path: Path) -> bool:
    return path.suffix == ".gz"


#: longest line read from a store file (a row is far shorter; the header lists every column)
MAX_LINE_BYTES = 64 << 20


@contextmanager
def _open_read(path: Path) -> Iterator[io.BufferedIOBase]:
    """Open a store file: only a regular file (checked with os.stat, then on the open descriptor, never blocking)."""
    try:
        info = os.stat(path)
    except OSError as exc:
        raise StoreFileError(f"{path}: cannot read the file: {exc.strerror or exc}") from None
    if not stat.S_ISREG(info.st_mode):
        what = ("a directory" if stat.S_ISDIR(info.st_mode) else "a named pipe (FIFO)" if stat.S_ISFIFO(info.st_mode)
                else "a device" if stat.S_ISCHR(info.st_mode) or stat.S_ISBLK(info.st_mode) else "not a regular file")
        raise StoreFileError(f"{path}: is {what}, not a regular file; nothing was written")
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0))
    except OSError as exc:
        raise StoreFileError(f"{path}: cannot read the file: {exc.strerror or exc}") from None
    if not stat.S_ISREG(os.fstat(fd).st_mode):
        os.close(fd)
        raise StoreFileError(f"{path}: is not a regular file; nothing was written")
    os.set_blocking(fd, True)
    raw = os.fdopen(fd, "rb")
    handle = gzip.GzipFile(fileobj=raw, mode="rb") if _is_gzip(path) else raw
    try:
        with handle:
            yield handle
    finally:
        raw.close()


def _lines(handle, path: Path) -> Iterator[bytes]:
    """The lines of a store file, each at most MAX_LINE_BYTES long (a longer one is refused, not read whole)."""
    number = 0
    try:
        while True:
            line = handle.readline(MAX_LINE_BYTES + 1)
            if not line:
                return
            number += 1
            if len(line) > MAX_LINE_BYTES:
                raise StoreFileError(f"{path}:{number}: line is longer than {MAX_LINE_BYTES} bytes; this is not "
                                     f"a {FORMAT_NAME} file; nothing was written")
            yield line
    except (OSError, EOFError, gzip.BadGzipFile, zlib.error) as exc:
        raise StoreFileError(f"{path}: the compressed file is damaged ({exc}); nothing was written") from None


def verify_file(path: str | os.PathLike) -> dict:
    """Check a store file's checksum and header; return the header.

    Raises
    ------
    StoreFileError
        Truncated file (no checksum line), checksum mismatch, not a
        ``levels-store`` file, or an unknown format version.
    """
    path = Path(path)
    digest = hashlib.sha256()
    header_line = previous = None
    with _open_read(path) as handle:
        for line in _lines(handle, path):
            if previous is not None:
                digest.update(previous)
            if header_line is None:
                header_line = line
            previous = line
    if header_line is None:
        raise StoreFileError(f"{path}: the file is empty; it is not a {FORMAT_NAME} file")
    header = _parse_header(header_line, path)
    match = _CHECKSUM.match(previous or b"")
    if previous is header_line or match is None:
        raise StoreFileError(f"{path}: the last line is not a checksum line; the file is truncated or not "
                             f"a complete {FORMAT_NAME} file; nothing was written")
    expected = match.group(1).decode()
    if digest.hexdigest() != expected:
        raise StoreFileError(f"{path}: checksum mismatch (file says {expected[:16]}..., content gives "
                             f"{digest.hexdigest()[:16]}...): the file is damaged or was edited; nothing was written")
    header["sha256"] = expected
    return header


def _parse_header(line: bytes, path: Path) -> dict:
    try:
        header = json.loads(line.decode("utf-8"))
    except (UnicodeDecodeError, ValueError):
        header = None
    if not isinstance(header, dict) or header.get("format") != FORMAT_NAME:
        raise StoreFileError(f"{path}: not a {FORMAT_NAME} file (the first line is not its header)")
    version = header.get("version")
    if not isinstance(version, int) or version < 1 or version > FORMAT_VERSION:
        raise StoreFileError(f"{path}: format version {version!r} is not supported (this levels reads "
                             f"version {FORMAT_VERSION}); use a newer levels")
    for key, kind in (("schema_revision", str), ("tables", list), ("columns", dict), ("counts", dict)):
        if not isinstance(header.get(key), kind):
            raise StoreFileError(f"{path}: the header lacks a valid {key!r}")
    return header


def _check_header_fits(header: dict, path: Path) -> None:
    """The header describes exactly the tables and columns of this schema revision."""
    head = database.head_revision()
    if header["schema_revision"] != head:
        raise StoreFileError(f"{path}: the file holds schema revision {header['schema_revision']}, this levels "
                             f"stores revision {head}; import it with the levels version that wrote it, "
                             "upgrade that store ('levels init') and export again")
    expected = table_columns()
    if list(header["tables"]) != list(TABLE_ORDER):
        raise StoreFileError(f"{path}: the file lists tables {header['tables']}, expected {list(TABLE_ORDER)}")
    for name in TABLE_ORDER:
        given = [tuple(c) if isinstance(c, list) else c for c in header["columns"].get(name, [])]
        if given != expected[name]:
            raise StoreFileError(f"{path}: the columns of table {name} in the file do not match this schema")
        count = header["counts"].get(name)
        if not isinstance(count, int) or count < 0:
            raise StoreFileError(f"{path}: the header lacks a row count for table {name}")


# ----------------------------------------------------------------- export

def _snapshot(engine: Engine):
    """A connection whose reads all see one snapshot of the store."""
    conn = engine.connect()
    if not database.is_sqlite(engine):
        conn = conn.execution_options(isolation_level="REPEATABLE READ")
    return conn


def export_store(engine: Engine, path: str | os.PathLike,
                 progress: Callable[[str, int, int], None] | None = None) -> TransferSummary:
    """Write every row of the store to ``path`` in the ``levels-store`` format (atomically).

    All tables are read in one transaction (one consistent snapshot, also on
    PostgreSQL), so writers may go on meanwhile. The file appears under its
    name only when complete (temporary file, fsync, rename).

    Parameters
    ----------
    engine : sqlalchemy.Engine
        The store (at the current schema revision).
    path : path
        The file to write; ``.gz`` compresses it.
    progress : callable, optional
        ``progress(table, done, total)`` after each chunk of rows.

    Returns
    -------
    TransferSummary
        Counts per table and the checksum.

    Raises
    ------
    StoreError
        The store is not initialised or not at the current schema revision.
    """
    database.require_current(engine)
    target = Path(os.path.realpath(path))
    columns = table_columns()
    notify = progress or (lambda table, done, total: None)
    try:
        try:
            mode = stat.S_IMODE(os.stat(target).st_mode)
        except FileNotFoundError:
            mode = 0o666 & ~_umask()
        target.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent)
    except OSError as exc:
        raise StoreError(f"cannot write {path}: {exc.strerror or exc}; nothing was written") from None
    digest = hashlib.sha256()
    try:
        with os.fdopen(fd, "wb") as raw:
            out = gzip.GzipFile(filename="", mode="wb", fileobj=raw, mtime=0) if _is_gzip(target) else raw

            def write(data: bytes, hashed: bool = True) -> None:
                if hashed:
                    digest.update(data)
                out.write(data)

            with _snapshot(engine) as conn, conn.begin():
                counts = {name: int(conn.scalar(select(func.count()).select_from(Base.metadata.tables[name])))
                          for name in TABLE_ORDER}
                revision = _revision_on(conn)
                write(_dumps({"format": FORMAT_NAME, "version": FORMAT_VERSION, "schema_revision": revision,
                              "tables": list(TABLE_ORDER),
                              "columns": {n: [list(c) for c in columns[n]] for n in TABLE_ORDER},
                              "counts": counts, "written_by": f"levels {__version__}"}))
                for name in TABLE_ORDER:
                    table = Base.metadata.tables[name]
                    names = [col for col, _ in columns[name]]
                    encoders = [_encoder(kind) for _, kind in columns[name]]
                    prefix = f'{{"table":{json.dumps(name)},"row":'
                    done = 0
                    result = conn.execution_options(stream_results=True, yield_per=FETCH_CHUNK).execute(
                        select(table).order_by(table.c.id))
                    for part in result.partitions(FETCH_CHUNK):
                        text_rows = [prefix + _ENCODER.encode(dict(zip(names, [f(v) for f, v in zip(encoders, row)])))
                                     + "}\n" for row in part]
                        write("".join(text_rows).encode("utf-8"))
                        done += len(part)
                        notify(name, done, counts[name])
                    if done != counts[name]:
                        raise StoreError(f"table {name} changed during the export ({counts[name]} rows counted, "
                                         f"{done} read); export again")
            checksum = digest.hexdigest()
            write(_dumps({"sha256": checksum}), hashed=False)
            if out is not raw:
                out.close()
            raw.flush()
            os.fsync(raw.fileno())
        os.chmod(tmp, mode)
        os.replace(tmp, target)
    except OSError as exc:
        with _suppress():
            os.unlink(tmp)
        raise StoreError(f"cannot write {path}: {exc.strerror or exc}; nothing was written") from None
    except BaseException:
        with _suppress():
            os.unlink(tmp)
        raise
    return TransferSummary(str(target), counts, checksum, revision or "")


def _umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def _revision_on(conn) -> str | None:
    """The schema revision seen by an open connection (inside its snapshot)."""
    from alembic.runtime.migration import MigrationContext

    return MigrationContext.configure(conn).get_current_revision()


@contextmanager
def _suppress():
    try:
        yield
    except OSError:
        pass


# ----------------------------------------------------------------- import

def store_counts(session: Session) -> dict[str, int]:
    """Rows per table of the store seen by ``session``."""
    return {name: int(session.execute(select(func.count()).select_from(Base.metadata.tables[name])).scalar_one())
            for name in TABLE_ORDER}


def check_empty(session: Session, where: str) -> None:
    """Refuse a target store that holds any row."""
    counts = store_counts(session)
    held = {name: n for name, n in counts.items() if n}
    if held:
        listed = ", ".join(f"{name}: {n}" for name, n in held.items())
        raise StoreFileError(f"the target store {where} is not empty ({listed}); import-store fills an empty "
                             "store only (name a new file or database with --db)")


def insert_rows_from_file(session: Session, path: str | os.PathLike, header: dict,
                          check_row: Callable[[str, dict, str], None] | None = None) -> dict[str, int]:
    """Insert every row of a verified file in the caller's transaction; return the rows per table.

    The checksum and the row counts are verified again while reading, so a file
    that changed since :func:`verify_file` raises and the caller's transaction
    rolls back.
    """
    path = Path(path)
    columns = table_columns()
    order = {name: i for i, name in enumerate(TABLE_ORDER)}
    counts = {name: 0 for name in TABLE_ORDER}
    digest = hashlib.sha256()
    pending: list[dict] = []
    current: str | None = None
    last_id: int | None = None
    checksum_line: bytes | None = None

    postgres = session.get_bind().dialect.name == "postgresql"

    def flush() -> None:
        if not pending:
            return
        table = current
        if table is None:   # unreachable: a row is appended only after its table became ``current``
            raise StoreFileError(f"{path}: rows without a table")
        if postgres:
            _copy_rows(session, table, [c for c, _ in columns[table]], pending)
        else:
            session.execute(insert(Base.metadata.tables[table]), pending)
        pending.clear()

    with _open_read(path) as handle:
        for number, line in enumerate(_lines(handle, path), start=1):
            if checksum_line is not None:
                raise StoreFileError(f"{path}:{number - 1}: a checksum line before the end of the file")
            if number == 1:
                digest.update(line)
                continue
            if line.startswith(b'{"sha256"'):
                checksum_line = line
                continue
            digest.update(line)
            where = f"{path}:{number}"
            obj = _loads(line, where)
            if not isinstance(obj, dict) or set(obj) != {"table", "row"} or not isinstance(obj["row"], dict):
                raise StoreFileError(f"{where}: expected {{\"table\": ..., \"row\": {{...}}}}")
            name = obj["table"]
            if name not in order:
                raise StoreFileError(f"{where}: unknown table {name!r}")
            if name != current:
                if current is not None and order[name] < order[current]:
                    raise StoreFileError(f"{where}: rows of {name} after rows of {current}; the file is out of order")
                flush()
                current, last_id = name, None
            row = obj["row"]
            kinds = columns[name]
            if list(row) != [c for c, _ in kinds]:
                raise StoreFileError(f"{where}: the row's columns do not match table {name}")
            values = {col: decode_value(row[col], kind, f"{where}: {name}.{col}") for col, kind in kinds}
            if values["id"] is None or (last_id is not None and values["id"] <= last_id):
                raise StoreFileError(f"{where}: ids of {name} must be present and increasing")
            if check_row is not None:
                check_row(name, values, where)
            last_id = values["id"]
            pending.append(values)
            counts[name] += 1
            if len(pending) >= INSERT_CHUNK:
                flush()
    flush()
    match = _CHECKSUM.match(checksum_line or b"")
    if match is None or digest.hexdigest() != match.group(1).decode() or match.group(1).decode() != header["sha256"]:
        raise StoreFileError(f"{path}: the file changed while it was imported (checksum differs); nothing was written")
    for name in TABLE_ORDER:
        if counts[name] != header["counts"][name]:
            raise StoreFileError(f"{path}: table {name} has {counts[name]} rows, the header says "
                                 f"{header['counts'][name]}; nothing was written")
    return counts


def _copy_rows(session: Session, table: str, names: list[str], rows: list[dict]) -> None:
    """Bulk-load rows on PostgreSQL with COPY (in the session's transaction)."""
    import psycopg

    driver = session.connection().connection.driver_connection   # None only once the connection is invalidated
    if driver is None:
        raise StoreFileError("the PostgreSQL connection was closed during the import; nothing was written")
    cursor = driver.cursor()
    try:
        with cursor.copy(f"COPY {table} ({', '.join(names)}) FROM STDIN") as copy:
            for row in rows:
                copy.write_row([row[n] for n in names])
    except psycopg.Error as exc:
        raise StoreError(f"the store refused the rows of table {table}: "
                         f"{database._first_line(str(exc))}; nothing was written") from None


def reset_sequences(session: Session) -> None:
    """On PostgreSQL, make every table's id sequence continue after its largest id."""
    if session.get_bind().dialect.name != "postgresql":
        return
    for name in TABLE_ORDER:
        session.execute(text(
            f"SELECT setval(pg_get_serial_sequence('{name}', 'id'), "
            f"COALESCE((SELECT MAX(id) FROM {name}), 0) + 1, false)"))


def import_store(engine: Engine, path: str | os.PathLike, *,
                 after: Callable[[Session, dict, dict], None] | None = None,
                 check_row: Callable[[str, dict, str], None] | None = None) -> TransferSummary:
    """Fill an empty store with every row of a ``levels-store`` file, all or nothing.

    Parameters
    ----------
    engine : sqlalchemy.Engine
        The target store: uninitialised (the schema is created first) or at the
        current revision and empty.
    path : path
        The file (``.gz`` is read compressed).
    after : callable, optional
        ``after(session, header, counts)`` runs inside the import transaction
        once the rows are in (used to add an audit entry).
    check_row : callable, optional
        ``check_row(table, values, where)`` sees every decoded row before it is
        inserted and raises :class:`StoreFileError` to refuse the file (the
        service layer applies the stored-value rules of ``levels.io.limits``).

    Returns
    -------
    TransferSummary

    Raises
    ------
    StoreFileError
        Damaged or foreign file, other schema revision, or a target that is not empty.
    StoreError
        The target is at another schema revision, or the database refused the rows.
    """
    path = Path(path)
    header = verify_file(path)
    _check_header_fits(header, path)
    if database.current_revision(engine) is None:
        database.upgrade(engine)
    database.require_current(engine)
    where = database.display_url(str(engine.url))

    def work(session: Session) -> dict[str, int]:
        check_empty(session, where)
        counts = insert_rows_from_file(session, path, header, check_row=check_row)
        session.flush()
        reset_sequences(session)
        if after is not None:
            after(session, header, counts)
        return counts

    counts = database.run_in_transaction(engine, work)
    return TransferSummary(str(path), counts, header["sha256"], header["schema_revision"])
