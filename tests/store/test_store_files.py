"""Store files on disk: reading a missing store creates nothing; writing a read-only store says so in one line.

Issue 14: a relative ``LEVELS_DB`` path that does not exist used to leave an empty folder (and once an empty
database file) behind; a write to a read-only store ended in SQLite's own message.
"""

from __future__ import annotations

import os

import pytest
from click.testing import CliRunner
from sqlalchemy.engine import make_url

from levels.catalog import Catalog
from levels.cli import main
from levels.errors import StoreError
from levels.store import database

from tests.conftest import BACKENDS, backend_url

LEVEL_FILE = (
    "spectrum,label,configuration,term,j,parity,energy_cm1,unc_cm1\n"
    "Na I,3s,3s,2S,1/2,1,0,0.001\n"
)


def _cli(args, *, cwd, env=None):
    runner = CliRunner()
    old = os.getcwd()
    os.chdir(cwd)
    try:
        return runner.invoke(main, args, env=env, catch_exceptions=False)
    finally:
        os.chdir(old)


@pytest.mark.parametrize("args", [["species"], ["show", "Na I"], ["lines", "Na I"], ["rates", "Na I"],
                                  ["import", "levels.csv", "--sample", "s"], ["hydrogenic", "H I", "--n-max", "2"]])
def test_missing_relative_store_creates_nothing(tmp_path, args):
    (tmp_path / "levels.csv").write_text(LEVEL_FILE)
    result = _cli(args, cwd=tmp_path, env={"LEVELS_DB": "missing/folder/lab.sqlite"})
    assert result.exit_code == 1
    assert "no store file at" in result.output and "missing/folder/lab.sqlite" in result.output
    assert "Traceback" not in result.output
    assert not (tmp_path / "missing").exists()


def test_catalog_on_missing_path_creates_no_folder(tmp_path):
    target = tmp_path / "a" / "b" / "lab.sqlite"
    cat = Catalog(target)
    with pytest.raises(StoreError, match="nothing was created"):
        cat.species_rows()
    with pytest.raises(StoreError, match="no store file"):
        cat.create_sample("cell-1")
    cat.close()
    assert database.current_revision(database.make_engine(target)) is None
    assert not (tmp_path / "a").exists()


def test_init_creates_folder_and_file(tmp_path):
    result = _cli(["init"], cwd=tmp_path, env={"LEVELS_DB": "new/folder/lab.sqlite"})
    assert result.exit_code == 0, result.output
    assert (tmp_path / "new" / "folder" / "lab.sqlite").is_file()
    again = _cli(["species", "--format", "csv"], cwd=tmp_path, env={"LEVELS_DB": "new/folder/lab.sqlite"})
    assert again.exit_code == 0, again.output


def _read_only_url(path) -> str:
    """A URL this process cannot write through: the file chmod 0444, or (as root, who ignores file modes) mode=ro."""
    if os.geteuid() != 0:
        os.chmod(path, 0o444)
        return str(path)
    return f"sqlite:///file:{path}?mode=ro&uri=true"


def test_write_to_read_only_sqlite_store_is_one_clear_line(tmp_path):
    path = tmp_path / "lab.sqlite"
    with Catalog(path) as cat:
        cat.init()
    before = database.dump(database.make_engine(path))
    (tmp_path / "levels.csv").write_text(LEVEL_FILE)
    url = _read_only_url(path)
    result = _cli(["--db", url, "import", "levels.csv", "--sample", "s"], cwd=tmp_path)
    try:
        assert result.exit_code == 1
        lines = result.output.strip().splitlines()
        assert len(lines) == 1, result.output
        assert lines[0].startswith("error: the store at ") and str(path) in lines[0]
        assert "read-only" in lines[0] and "attempt to write a readonly database" in lines[0]
        assert "nothing was written" in lines[0]
        assert "Traceback" not in result.output
        # reading still works
        listed = _cli(["--db", url, "species", "--format", "csv"], cwd=tmp_path)
        assert listed.exit_code == 0, listed.output
    finally:
        os.chmod(path, 0o644)
    assert database.dump(database.make_engine(path)) == before


@pytest.mark.parametrize("backend", BACKENDS)
def test_read_only_error_from_the_transaction(tmp_path, backend):
    with backend_url(backend, tmp_path) as url:
        with Catalog(url) as cat:
            cat.init()
        if backend == "sqlite":
            path = make_url(url).database
            ro_url = _read_only_url(path)
            expected = str(path)
        else:  # every transaction of the session read-only: PostgreSQL answers SQLSTATE 25006
            parsed = make_url(url)
            options = parsed.query.get("options", "")
            ro_url = parsed.update_query_dict(
                {"options": f"{options} -cdefault_transaction_read_only=on".strip()}
            ).render_as_string(hide_password=False)
            expected = "the store at postgresql"
        engine = database.make_engine(ro_url)
        try:
            with pytest.raises(StoreError) as info:
                database.run_in_transaction(engine, lambda s: s.execute(
                    database.text("INSERT INTO samples (name, description, gas_fill, instrument, created_at) "
                                  "VALUES ('x', '', '', '', CURRENT_TIMESTAMP)")))
        finally:
            engine.dispose()
            if backend == "sqlite":
                os.chmod(path, 0o644)
        message = str(info.value)
        assert "\n" not in message
        assert expected in message and "read-only" in message and "nothing was written" in message
