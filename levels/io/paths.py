"""Where output may go: one check for every file a command writes.

Every output path (``--output``, ``--plot``, ``--spectrum``, the target of
``export-store``) passes :func:`check_output_path` before any work is done. It
refuses a path that is, or resolves through symbolic links to,

- the open store or one of its companion files (``-wal``, ``-shm``,
  ``-journal``), also when reached through a hard link, so an export can never
  overwrite the data it was made from;
- a directory;
- a device, FIFO or socket (``/dev/stdout``, ``/dev/sda``): the atomic write
  would replace the node itself.

A symbolic link to an ordinary file (or to a new file in an existing folder)
is followed: the file it points to is replaced and the link stays.
"""

from __future__ import annotations

import os
import stat
from collections.abc import Iterable
from pathlib import Path

from levels.io.tables import OutputError

#: companion files SQLite keeps beside a database file
SQLITE_COMPANIONS = ("", "-wal", "-shm", "-journal")


def store_files(store_url: str | None) -> list[Path]:
    """The files of a SQLite store URL (database and companions); empty for a server store.

    Examples
    --------
    >>> [p.name for p in store_files("sqlite:////tmp/lab.sqlite")]
    ['lab.sqlite', 'lab.sqlite-wal', 'lab.sqlite-shm', 'lab.sqlite-journal']
    >>> store_files("postgresql+psycopg://lab@127.0.0.1/levels")
    []
    """
    if not store_url or not store_url.startswith("sqlite:"):
        return []
    rest = store_url.split(":", 1)[1]
    if not rest.startswith("///"):
        return []
    database = rest[3:].split("?", 1)[0]
    if database.startswith("file:"):
        database = database[5:]
    if not database or database == ":memory:":
        return []
    base = Path(os.path.realpath(database))
    return [Path(f"{base}{suffix}") for suffix in SQLITE_COMPANIONS]


def _same_file(a: Path, b: Path) -> bool:
    try:
        return os.path.samefile(a, b)
    except OSError:
        return False


def check_output_path(path: str | os.PathLike, *, option: str = "--output",
                      protected: Iterable[str | os.PathLike] = (), store_url: str | None = None) -> Path:
    """Refuse an output path that would destroy data or a special file; return the file that will be written.

    Parameters
    ----------
    path : path
        The path the user gave.
    option : str
        The option (or argument) it was given with, named in the message.
    protected : iterable of paths
        Files that must never be written (besides the store's).
    store_url : str, optional
        The open store's URL; a SQLite store's file and companions are protected.

    Returns
    -------
    pathlib.Path
        The resolved path (symbolic links followed).

    Raises
    ------
    OutputError
        The path resolves to the store, a protected file, a directory or a
        device, FIFO or socket.
    """
    given = os.fspath(path)
    if not given.strip():
        raise OutputError(f"{option}: an empty file name")
    resolved = Path(os.path.realpath(given))
    via = "" if os.path.abspath(given) == str(resolved) else f" (through the link to {resolved})"
    guarded = [(c, "the open store") for c in store_files(store_url)]
    guarded += [(Path(os.path.realpath(p)), "the input of this command") for p in protected]
    for candidate, what in guarded:
        if resolved == candidate or _same_file(resolved, candidate):
            raise OutputError(f"{option} {given}: that is {what} ({candidate.name}){via}; writing there would "
                              "destroy it. Choose another file name")
    try:
        info = os.stat(given)  # follows links, also the /proc kind /dev/stdout points through
    except FileNotFoundError:
        return resolved
    except OSError as exc:
        raise OutputError(f"{option} {given}: {exc.strerror or exc}") from None
    if stat.S_ISDIR(info.st_mode):
        raise OutputError(f"{option} {given}: is a directory{via}; give a file name")
    if not stat.S_ISREG(info.st_mode):
        raise OutputError(f"{option} {given}: is a device, pipe or socket{via}, not a regular file; "
                          "give a file name (or leave the option out to print)")
    return resolved
