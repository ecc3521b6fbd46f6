"""`levels check`: a sound store passes; each kind of damage is found and named (both backends)."""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner
from sqlalchemy import text

from levels.cli import main
from levels.errors import StoreError
from levels.store import database, integrity

from .conftest import raw_execute


def _one(catalog, sql: str):
    with catalog.engine.connect() as conn:
        return conn.execute(text(sql)).scalar()


def test_sound_store_has_no_problems(filled):
    report = integrity.inspect_store(filled.engine)
    assert report.problems == []
    assert report.revision == report.head == database.head_revision()
    assert report.counts["species"] == 3 and report.counts["levels"] > 53 and report.counts["audit_log"] == 5
    # the fitted limit's dataset holds only an ionization limit: not an orphan
    assert _one(filled, "SELECT count(*) FROM datasets WHERE method = 'extended-ritz-fit'") == 1
    assert integrity.check_store(filled.engine) == []


def test_cli_check_reports_counts_and_exits_zero(filled):
    result = CliRunner().invoke(main, ["--db", filled.url, "check"])
    assert result.exit_code == 0, result.output
    assert "no problems found" in result.output
    levels = _one(filled, "SELECT count(*) FROM levels")
    assert any(line.split() == ["levels", str(levels)] for line in result.output.splitlines())
    as_json = CliRunner().invoke(main, ["--db", filled.url, "check", "--format", "json"])
    payload = json.loads(as_json.output)
    assert payload["ok"] is True and payload["counts"]["levels"] == levels


def _first_line_id(catalog, where: str = "") -> int:
    return _one(catalog, f"SELECT min(id) FROM lines {where}")


@pytest.mark.parametrize("damage, expected", [
    ("swap", "whose lower level is not below the upper level in energy"),
    ("wavenumber", "differs from 1e7 / vacuum_nm"),
    ("species", "joining levels of another species than the line's own"),
    ("orphan", "holds no levels, lines or ionization limits"),
    ("revision", "the store is at revision 0000"),
    ("options", "options_json of dataset"),
    ("audit", "detail_json is not a JSON object"),
    ("species_name", "does not match Z = 1, charge 0"),
])
def test_invariant_damage_is_found(filled, damage, expected):
    line = _first_line_id(filled, "WHERE medium = ''")
    he_level = _one(filled, "SELECT min(l.id) FROM levels l JOIN species s ON s.id = l.species_id WHERE s.z = 2")
    statements = {
        "swap": [f"UPDATE lines SET lower_id = upper_id, upper_id = lower_id WHERE id = {line}"],
        "wavenumber": [f"UPDATE lines SET wavenumber_cm1 = wavenumber_cm1 * (1 + 1e-7) WHERE id = {line}"],
        "species": [f"UPDATE lines SET upper_id = {he_level} WHERE id = {line}"],
        "orphan": ["INSERT INTO datasets (name, kind, method, method_version, citation, author, description, "
                   "options_json, created_at, retracted) VALUES ('empty', 'measured', '', '', '', 'x', '', '{}', "
                   "'2026-01-01 00:00:00.000000', 0)"],
        "revision": ["UPDATE alembic_version SET version_num = '0000'"],
        "options": ["UPDATE datasets SET options_json = '{not json' WHERE id = 1"],
        "audit": ["UPDATE audit_log SET detail_json = '[1, 2' WHERE id = 2"],
        "species_name": ["UPDATE species SET name = 'He II' WHERE z = 1"],
    }[damage]
    raw_execute(filled, *statements)
    problems = integrity.check_store(filled.engine)
    assert any(expected in p for p in problems), problems
    if damage in ("swap", "wavenumber", "species"):
        assert any(f"(id {line}" in p for p in problems if expected in p)
    result = CliRunner().invoke(main, ["--db", filled.url, "check"])
    assert result.exit_code == 1
    assert expected in result.output and "problem" in result.output


def test_rows_behind_the_constraints_are_found(filled):
    """Rows written with foreign keys and CHECKs switched off (SQLite) or triggers disabled (PostgreSQL)."""
    line = _first_line_id(filled)
    level = _one(filled, "SELECT min(id) FROM levels")
    if filled.engine.dialect.name == "postgresql":
        try:
            raw_execute(filled, "ALTER TABLE lines DISABLE TRIGGER ALL",
                        f"UPDATE lines SET lower_id = 999999 WHERE id = {line}",
                        "ALTER TABLE levels DISABLE TRIGGER ALL")
        except Exception as exc:  # DISABLE TRIGGER ALL needs a superuser
            pytest.skip(f"cannot disable triggers on this server: {exc}")
        raw_execute(filled, "ALTER TABLE levels DROP CONSTRAINT ck_levels_energy_finite",
                    f"UPDATE levels SET energy_cm1 = 'Infinity' WHERE id = {level}",
                    "ALTER TABLE levels ADD CONSTRAINT ck_levels_energy_finite "
                    "CHECK (energy_cm1 > -1e300 AND energy_cm1 < 1e300) NOT VALID")
    else:
        raw_execute(filled, f"UPDATE lines SET lower_id = 999999 WHERE id = {line}",
                    f"UPDATE levels SET energy_cm1 = 1e308 WHERE id = {level}")
    problems = integrity.check_store(filled.engine)
    text_ = "\n".join(problems)
    assert (f"pointing through lower_id to a missing levels row (foreign key fk_lines_lower_id_levels) (id {line})"
            in text_)
    assert f"lines: 1 row whose lower level does not exist (id {line})" in text_
    assert "breaking the CHECK constraint ck_levels_energy_finite" in text_
    assert "levels: 1 row whose energy_cm1 is not a finite number" in text_
    if filled.engine.dialect.name == "sqlite":
        assert "sqlite: foreign_key_check: table lines" in text_
    else:
        assert "postgresql: constraint ck_levels_energy_finite of levels is NOT VALID" in text_
        assert "is disabled (foreign keys of that table are not enforced)" in text_


def test_missing_constraint_is_found_on_postgresql(filled):
    if filled.engine.dialect.name != "postgresql":
        pytest.skip("SQLite cannot drop a constraint; its own check covers the file")
    raw_execute(filled, "ALTER TABLE lines DROP CONSTRAINT uq_lines_pair")
    problems = integrity.check_store(filled.engine)
    assert "postgresql: table lines lacks its constraint uq_lines_pair" in problems


def test_missing_table_is_found(filled):
    raw_execute(filled, "DROP TABLE audit_log")
    report = integrity.inspect_store(filled.engine)
    assert "schema: table audit_log is missing" in report.problems
    assert report.counts["audit_log"] == -1


def test_damaged_sqlite_file_is_reported_not_crashed(tmp_path):
    from levels.catalog import Catalog

    from .conftest import fill

    path = tmp_path / "damaged.sqlite"
    cat = Catalog(path, actor="pytest")
    cat.init()
    fill(cat)
    with cat.engine.connect() as conn:
        conn.exec_driver_sql("PRAGMA wal_checkpoint(TRUNCATE)")
        page_size = conn.exec_driver_sql("PRAGMA page_size").scalar()
    cat.close()
    data = bytearray(path.read_bytes())
    pages = len(data) // page_size
    assert pages > 20
    # overwrite three pages in the middle of the file with a pattern
    start = (pages // 2) * page_size
    data[start:start + 3 * page_size] = bytes([0xA5]) * (3 * page_size)
    path.write_bytes(bytes(data))
    result = CliRunner().invoke(main, ["--db", str(path), "check"])
    assert result.exit_code == 1
    assert "problem:" in result.output or "error:" in result.output
    assert "Traceback" not in result.output


def test_not_a_database_is_a_clear_error(tmp_path):
    path = tmp_path / "text.sqlite"
    path.write_text("this is not a database file " * 200, encoding="utf-8")
    result = CliRunner().invoke(main, ["--db", str(path), "check"])
    assert result.exit_code == 1
    assert "not a database" in result.output
    engine = database.make_engine(path)
    with pytest.raises(StoreError):
        integrity.check_store(engine)


@pytest.mark.parametrize("command", [["check"], ["history"], ["retract", "x"], ["restore", "x"],
                                     ["export-store", "out.jsonl"]])
def test_missing_file_is_not_created(tmp_path, command):
    path = tmp_path / "typo.sqlite"
    result = CliRunner().invoke(main, ["--db", str(path), *command])
    assert result.exit_code == 1 and f"error: no store file at {path}" in result.output
    assert not path.exists()
