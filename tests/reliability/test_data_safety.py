"""Issue 19 (data safety), store side: check and import-store apply the storage limits, exports never
destroy the store, read-only stores can be read, read commands never create a store.

Runs on SQLite and, when LEVELS_TEST_POSTGRES_URL is set, PostgreSQL (the ``catalog``/``filled`` fixtures).
"""

from __future__ import annotations

import errno
import json
import os
import shutil
import stat
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from levels.cli import main
from levels.errors import StoreError
from levels.io.tables import OutputError
from levels.service import maintenance
from levels.store.database import dump

from .conftest import raw_execute


def _first_level_id(catalog) -> int:
    rows = json.loads(CliRunner().invoke(main, ["--db", catalog.url, "show", "Li I", "--format", "json"]).output)
    assert rows["rows"]
    return catalog.read(lambda s: s.execute(__import__("sqlalchemy").text(
        "SELECT min(id) FROM levels WHERE label = :label"), {"label": rows["rows"][1]["label"]}).scalar())


def test_check_reports_values_the_rules_refuse(filled):
    """Item 4/6: rows written behind the schema's back (negative energy, escape in a label) are named by check."""
    level_id = _first_level_id(filled)
    raw_execute(filled, f"UPDATE levels SET energy_cm1 = -5.0 WHERE id = {level_id}",
                f"UPDATE levels SET label = 'g' || char(27) || '[2J' WHERE id = {level_id}"
                if filled.engine.dialect.name == "sqlite" else
                f"UPDATE levels SET label = 'g' || chr(27) || '[2J' WHERE id = {level_id}")
    report = maintenance.check(filled)
    assert (f"levels: 1 row whose label the rules refuse (id {level_id}); id {level_id}: label holds the control "
            "character U+001B; terminal control characters are refused") in report.problems
    assert (f"levels: 1 row whose energy_cm1 the rules refuse (id {level_id}); id {level_id}: energy_cm1 is -5; "
            "it must not be negative") in report.problems
    result = CliRunner().invoke(main, ["--db", filled.url, "check"])
    assert result.exit_code == 1 and "\x1b" not in result.output and "Traceback" not in result.output


def test_check_reports_a_label_longer_than_postgresql_holds(filled):
    """Item 6: a 5,000-character label (storable on SQLite only) is a problem for check."""
    if filled.engine.dialect.name != "sqlite":
        pytest.skip("PostgreSQL refuses the row itself (varchar(200))")
    level_id = _first_level_id(filled)
    raw_execute(filled, f"UPDATE levels SET label = '{'x' * 5000}' WHERE id = {level_id}")
    problems = maintenance.check(filled).problems
    assert (f"levels: 1 row whose label the rules refuse (id {level_id}); id {level_id}: label is 5000 characters "
            "long; at most 200 are stored") in problems


def test_sound_store_passes_the_new_rules(filled):
    assert maintenance.limit_problems(filled) == []


def test_import_store_refuses_negative_energy_with_a_valid_checksum(filled, tmp_path, catalog):
    """Item 6: import-store applies the rules even when the checksum is right; nothing is written."""
    import hashlib

    path = tmp_path / "bad.jsonl"
    maintenance.export_store(filled, path)
    lines = path.read_bytes().splitlines(keepends=True)
    index = next(i for i, line in enumerate(lines) if line.startswith(b'{"table":"levels"'))
    row = json.loads(lines[index])
    row["row"]["energy_cm1"] = -1.0
    lines[index] = (json.dumps(row, ensure_ascii=False, separators=(",", ":")) + "\n").encode()
    body = b"".join(lines[:-1])
    path.write_bytes(body + (json.dumps({"sha256": hashlib.sha256(body).hexdigest()}, separators=(",", ":"))
                             + "\n").encode())
    target = type(filled)(str(tmp_path / "target.sqlite"), actor="pytest")
    target.init()
    before = dump(target.engine)
    with pytest.raises(maintenance.backup.StoreFileError,
                       match=rf"bad.jsonl:{index + 1}: levels.energy_cm1 is -1; it must not be negative; "
                             "nothing was written"):
        maintenance.import_store(target, path)
    assert dump(target.engine) == before
    target.close()


def test_export_onto_the_store_is_refused(filled, tmp_path):
    """Item 2: export-store onto the open store (or through a link to it) is refused; the store is unchanged."""
    if filled.engine.dialect.name != "sqlite":
        pytest.skip("a server store has no file to overwrite")
    store_file = Path(filled.url[len("sqlite:///"):])
    before = store_file.read_bytes()
    link = tmp_path / "backup.jsonl"
    link.symlink_to(store_file)
    for target in (store_file, link, Path(f"{store_file}-wal")):
        with pytest.raises(OutputError, match="that is the open store"):
            maintenance.export_store(filled, target)
    result = CliRunner().invoke(main, ["--db", filled.url, "show", "Li I", "--format", "csv", "--output",
                                       str(store_file)])
    assert result.exit_code == 1 and "wrote" not in result.output
    assert store_file.read_bytes() == before and link.is_symlink()


def test_export_follows_the_umask(filled, tmp_path):
    old = os.umask(0o027)
    try:
        maintenance.export_store(filled, tmp_path / "a.jsonl")
    finally:
        os.umask(old)
    assert stat.S_IMODE((tmp_path / "a.jsonl").stat().st_mode) == 0o640


def test_export_on_a_full_disk_is_one_line(filled, tmp_path, monkeypatch):
    from levels.store import backup

    def full(_fd):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(backup.os, "fsync", full)
    folder = tmp_path / "out"
    folder.mkdir()
    target = folder / "a.jsonl"
    with pytest.raises(StoreError) as info:
        maintenance.export_store(filled, target)
    assert str(info.value) == f"cannot write {target}: No space left on device; nothing was written"
    assert list(folder.iterdir()) == []


def test_cli_output_on_a_full_disk_is_one_line(filled, tmp_path, monkeypatch):
    from levels.io import tables

    def full(_fd):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(tables.os, "fsync", full)
    out = tmp_path / "li.csv"
    result = CliRunner().invoke(main, ["--db", filled.url, "show", "Li I", "--format", "csv", "--output", str(out)])
    assert result.exit_code == 1 and "Traceback" not in result.output
    assert result.output.strip() == f"error: cannot write {out}: No space left on device; nothing was written"
    assert not out.exists()


def test_read_commands_never_create_a_store(tmp_path):
    """Item 6: a read command on a mistyped path creates no folder and no store."""
    missing = tmp_path / "no" / "such" / "lab.sqlite"
    for args in (["where"], ["species"], ["show", "Li I"], ["lines", "Li I"], ["check"], ["history"],
                 ["export-store", str(tmp_path / "x.jsonl")]):
        result = CliRunner().invoke(main, ["--db", str(missing), *args])
        assert "Traceback" not in result.output
    assert not (tmp_path / "no").exists()


def _as_nobody(args: list[str]) -> tuple[int, str]:
    """Run the CLI in a forked child with the uid/gid of 'nobody' (root only); return exit code and output."""
    import sqlite3  # noqa: F401 - loaded before the child loses access to the standard library

    read_fd, write_fd = os.pipe()
    pid = os.fork()
    if pid == 0:  # pragma: no cover - child
        try:
            os.close(read_fd)
            os.setgroups([])
            os.setgid(65534)
            os.setuid(65534)
            result = CliRunner().invoke(main, args)
            os.write(write_fd, json.dumps([result.exit_code, result.output + (
                "" if result.exception is None or isinstance(result.exception, SystemExit)
                else repr(result.exception))]).encode())
        finally:
            os._exit(0)
    os.close(write_fd)
    chunks = []
    while chunk := os.read(read_fd, 65536):
        chunks.append(chunk)
    os.close(read_fd)
    os.waitpid(pid, 0)
    code, output = json.loads(b"".join(chunks))
    return code, output


def test_read_only_store_can_be_read(filled, tmp_path):
    """Item 6: a store the user may not write (file and folder read-only) is opened read-only and read."""
    if filled.engine.dialect.name != "sqlite":
        pytest.skip("SQLite file permissions")
    import tempfile

    filled.close()
    folder = Path(tempfile.mkdtemp(prefix="levels-read-only-"))  # outside pytest's owner-only folders
    store = folder / "lab.sqlite"
    shutil.copy(filled.url[len("sqlite:///"):], store)
    args = ["--db", str(store), "show", "Li I", "--format", "csv"]
    CliRunner().invoke(main, args)  # warm every lazy import while the standard library is reachable
    shutil.copy(filled.url[len("sqlite:///"):], store)
    for leftover in folder.glob("lab.sqlite-*"):
        leftover.unlink()
    store.chmod(0o444)
    folder.chmod(0o555)
    try:
        before = store.read_bytes()
        if os.geteuid() == 0:
            if sys.platform != "linux":
                pytest.skip("needs Linux to drop root privileges")
            code, output = _as_nobody(args)
            write_code, write_output = _as_nobody(["--db", str(store), "retract", "li/levels"])
        else:
            result = CliRunner().invoke(main, args)
            code, output = result.exit_code, result.output
            result = CliRunner().invoke(main, ["--db", str(store), "retract", "li/levels"])
            write_code, write_output = result.exit_code, result.output
        assert code == 0, repr(output)
        assert "1s2.2s 2S1/2" in output
        assert write_code == 1 and "Traceback" not in write_output and write_output.startswith("error: ")
        assert store.read_bytes() == before
        assert sorted(p.name for p in folder.iterdir()) == ["lab.sqlite"]
    finally:
        folder.chmod(0o755)
        store.chmod(0o644)
        shutil.rmtree(folder, ignore_errors=True)
