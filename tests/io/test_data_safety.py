"""Issue 19 (data safety), file side: output paths, atomic writes, input limits, the storage-limit table.

Each test names the item of the issue it covers. The bad-input catalogue
(tests/reliability/test_bad_inputs.py) holds the per-message cases; here are the
mechanisms: what a write does to modes, links and the old file, what a read
does with devices, pipes and files that are larger than allowed.
"""

from __future__ import annotations

import errno
import os
import stat
import threading
import time
from pathlib import Path

import pytest

from levels.errors import InputFileError
from levels.io import limits, tables
from levels.io.paths import check_output_path, store_files
from levels.io.tables import OutputError, read_source, write_atomic

# ----------------------------------------------------------------- item 2: outputs


@pytest.mark.parametrize("mask, mode", [(0o022, 0o644), (0o077, 0o600), (0o002, 0o664)])
def test_new_output_follows_the_umask(tmp_path, mask, mode):
    old = os.umask(mask)
    try:
        write_atomic(tmp_path / "out.csv", "a,b\n")
    finally:
        os.umask(old)
    assert stat.S_IMODE((tmp_path / "out.csv").stat().st_mode) == mode


def test_replaced_output_keeps_its_mode(tmp_path):
    target = tmp_path / "out.csv"
    target.write_text("old\n")
    target.chmod(0o640)
    write_atomic(target, "new\n")
    assert target.read_text() == "new\n" and stat.S_IMODE(target.stat().st_mode) == 0o640


def test_symlink_to_a_file_is_followed_and_kept(tmp_path):
    real = tmp_path / "real.csv"
    real.write_text("old\n")
    link = tmp_path / "link.csv"
    link.symlink_to(real)
    write_atomic(link, "new\n")
    assert link.is_symlink() and real.read_text() == "new\n"


def test_full_disk_is_one_line_and_the_old_file_stays(tmp_path, monkeypatch):
    target = tmp_path / "out.csv"
    target.write_text("old\n")

    def full(_fd):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(tables.os, "fsync", full)
    with pytest.raises(OutputError) as info:
        write_atomic(target, "new\n")
    assert str(info.value) == f"cannot write {target}: No space left on device; nothing was written"
    assert target.read_text() == "old\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out.csv"]  # no temporary file left


def test_permission_denied_is_one_line(tmp_path, monkeypatch):
    def denied(*_a, **_k):
        raise PermissionError(errno.EACCES, os.strerror(errno.EACCES))

    monkeypatch.setattr(tables.tempfile, "mkstemp", denied)
    with pytest.raises(OutputError, match=r"^cannot write .*out.csv: Permission denied; nothing was written$"):
        write_atomic(tmp_path / "out.csv", "x")


def test_store_and_its_companions_are_protected(tmp_path):
    store = tmp_path / "lab.sqlite"
    store.write_bytes(b"SQLite format 3\x00")
    url = f"sqlite:///{store}"
    for suffix in ("", "-wal", "-shm", "-journal"):
        with pytest.raises(OutputError, match="that is the open store"):
            check_output_path(f"{store}{suffix}", store_url=url)
    hard = tmp_path / "hard.csv"
    os.link(store, hard)
    with pytest.raises(OutputError, match="that is the open store"):
        check_output_path(hard, store_url=url)
    link = tmp_path / "link.csv"
    link.symlink_to(store)
    with pytest.raises(OutputError, match=r"through the link to"):
        check_output_path(link, store_url=url)
    assert check_output_path(tmp_path / "other.csv", store_url=url) == tmp_path / "other.csv"


@pytest.mark.parametrize("given", ["/dev/null", "/dev/zero", "/dev/full"])
def test_devices_are_refused(given):
    if not os.path.exists(given):
        pytest.skip(f"{given} does not exist here")
    with pytest.raises(OutputError, match="is a device, pipe or socket"):
        check_output_path(given, option="--plot")


def test_directory_and_fifo_are_refused(tmp_path):
    with pytest.raises(OutputError, match="is a directory"):
        check_output_path(tmp_path, option="--spectrum")
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    with pytest.raises(OutputError, match=r"^--output .*pipe: is a device, pipe or socket"):
        check_output_path(fifo)


def test_server_store_has_no_files():
    assert store_files("postgresql+psycopg://postgres@127.0.0.1:5432/test") == []
    assert store_files("sqlite:///:memory:") == []


# ----------------------------------------------------------------- item 3: inputs


def _within(seconds: float, func, *args):
    """Run func in a thread; fail (instead of hanging the suite) when it blocks longer than ``seconds``."""
    box: dict = {}

    def run():
        try:
            box["value"] = func(*args)
        except BaseException as exc:  # noqa: BLE001 - handed to the test
            box["error"] = exc

    thread = threading.Thread(target=run, daemon=True)
    thread.start()
    thread.join(seconds)
    assert not thread.is_alive(), f"{func.__name__} blocked for more than {seconds} s"
    if "error" in box:
        raise box["error"]
    return box.get("value")


def test_fifo_is_refused_without_blocking(tmp_path):
    fifo = tmp_path / "peaks.csv"
    os.mkfifo(fifo)
    with pytest.raises(InputFileError, match=r"peaks.csv: is a named pipe \(FIFO\)"):
        _within(5, read_source, fifo)


@pytest.mark.parametrize("device", ["/dev/zero", "/dev/urandom"])
def test_endless_device_behind_a_link_is_refused(tmp_path, device):
    link = tmp_path / "levels.csv"
    link.symlink_to(device)
    start = time.perf_counter()
    with pytest.raises(InputFileError, match="levels.csv: is a device, not a regular file"):
        _within(5, read_source, link)
    assert time.perf_counter() - start < 5


def test_cap_counts_the_bytes_read(tmp_path):
    path = tmp_path / "big.csv"
    path.write_bytes(b"x" * 101)
    with pytest.raises(InputFileError, match="more than the 100 bytes accepted"):
        read_source(path, max_bytes=100)
    assert read_source(path, max_bytes=101)[1] == b"x" * 101
    with pytest.raises(InputFileError, match="more than the 100 bytes accepted"):
        read_source(b"y" * 101, max_bytes=100)


def test_directory_is_refused(tmp_path):
    with pytest.raises(InputFileError, match="is a directory, not a file"):
        read_source(tmp_path)


# ----------------------------------------------------------------- item 4: one table of limits


def test_limit_table_mirrors_the_schema():
    """Every table and column of the schema has its limits, with the schema's lengths and kinds."""
    from sqlalchemy import DateTime, Float, Integer, String

    from levels.store.schema import TABLE_ORDER, Base

    assert set(limits.COLUMNS) == set(TABLE_ORDER)
    for name in TABLE_ORDER:
        table = Base.metadata.tables[name]
        assert set(limits.COLUMNS[name]) == {c.name for c in table.columns}, name
        for column in table.columns:
            spec = limits.COLUMNS[name][column.name]
            kind = column.type
            if isinstance(kind, DateTime):
                assert spec.kind == "datetime", column
            elif isinstance(kind, Float):
                assert spec.kind == "float", column
                assert spec.low is not None and spec.high is not None, column
            elif isinstance(kind, Integer):
                assert spec.kind == "int" and limits.INT_MIN <= spec.low and spec.high <= limits.INT_MAX, column
            elif isinstance(kind, String):
                assert spec.kind == "text" and spec.length == kind.length, column
            else:
                assert spec.kind == "text" and spec.length is None, column
            assert spec.nullable == bool(column.nullable and not column.primary_key) or spec.kind == "text", column


def test_schema_finite_bound_is_the_table_bound():
    from levels.store import schema

    assert float(schema.FINITE_LIMIT) == limits.FLOAT_LIMIT


@pytest.mark.parametrize("table, column, value, expected", [
    ("levels", "n", 2 ** 63, "is 9223372036854775808, above the largest storable 2147483647"),
    ("levels", "energy_cm1", -1.0, "is -1; it must not be negative"),
    ("levels", "lande_g", 1e301, "is 1e+301, above the largest accepted 1000"),
    ("lines", "a_per_s", 1e300, "is 1e+300, above the largest storable 1e+300"),
    ("lines", "unc_nm", -1e-3, "is -0.001; it must not be negative"),
    ("levels", "label", "x" * 5000, "is 5000 characters long; at most 200 are stored"),
    ("samples", "name", "a\x1bb", "holds the control character U+001B; terminal control characters are refused"),
    ("datasets", "description", "two\nlines\tand a tab", None),
    ("datasets", "description", "bell\x07",
     "holds the control character U+0007; terminal control characters are refused"),
    ("levels", "lifetime_s", float("inf"), None),
    ("levels", "lifetime_s", 0.0, "is 0; it must be greater than zero"),
])
def test_value_problems(table, column, value, expected):
    assert limits.value_problem(table, column, value) == expected


def test_control_characters_of_every_kind():
    for char in ["\x00", "\x1b", "\x7f", "\x85", "\x9b", "\u202e", "\u2066"]:
        assert limits.control_character(f"a{char}b") == f"U+{ord(char):04X}"
    assert limits.control_character("3d 2D5/2 ° µ Å") is None


def test_table_printing_escapes_control_characters():
    text = tables.format_text_table([{"label": "g\x1b[2Jx"}], ["label"])
    assert "\x1b" not in text and "g\\u001b[2Jx" in text


def test_utf32_is_named(tmp_path):
    path = tmp_path / "w.csv"
    path.write_bytes("spectrum\nLi I\n".encode("utf-32"))
    with pytest.raises(InputFileError, match=r"w.csv:1: the file is UTF-32 text"):
        tables.read_delimited(path)


def test_quoted_newline_is_named_not_counted():
    with pytest.raises(InputFileError) as info:
        tables.read_delimited(b'a,b\n1,"x\ny"\n', source="q.csv")
    assert str(info.value.problems[0]) == ("q.csv:2: malformed CSV: a quoted field is not closed on this line (a field "
                                           "may not hold a line break; keep each row on one line)")


def test_unicode_digits_are_not_numbers_in_quantities():
    from levels.errors import UnitError
    from levels.units import parse_quantity

    for text in ("٦٥٦nm", "６５６nm", "656_3nm"):
        with pytest.raises(UnitError):
            parse_quantity(text, "length")
    assert Path  # keep the import used by the module for the path helpers
