"""Whole-store export and import: lossless round trips, refusals that write nothing."""

from __future__ import annotations

import gzip
import hashlib
import json
import math

import pytest
from click.testing import CliRunner
from sqlalchemy import select, update

from levels.catalog import Catalog
from levels.cli import main
from levels.errors import StoreError
from levels.service import maintenance
from levels.store import backup, database, integrity
from levels.store.schema import AuditEntry, Level, Sample

from .conftest import DEMO, fill

TRICKY_TEXT = 'two\nlines, "quoted", tab\there, ° µ ✓ \u2028 and a backslash \\'


def _rich(catalog: Catalog) -> None:
    """Everything fill() writes, plus a retracted dataset, awkward text and awkward floats."""
    fill(catalog)
    catalog.create_sample("odd sample ✓", description=TRICKY_TEXT, gas_fill="Ne + 1% Ar", pressure_pa=0.1 + 0.2,
                          current_a=-1.2345678901234567e-5, te_k=math.pi * 1e4, ne_m3=9.999999999999999e39)
    catalog.import_file(DEMO / "sample-li-cell.csv", dataset="li/levels-second-look", again=True)
    maintenance.retract_dataset(catalog, "li/levels-second-look", reason=TRICKY_TEXT)

    def awkward(session):
        first, second, third = session.scalars(select(Level.id).order_by(Level.id).limit(3)).all()
        session.execute(update(Level).where(Level.id == first).values(lifetime_s=math.inf, unc_cm1=5e-324))
        session.execute(update(Level).where(Level.id == second).values(lande_g=-2.2250738585072014e-308,
                                                                        lifetime_s=1.7976931348623157e308))
        session.execute(update(Level).where(Level.id == third).values(unc_cm1=0.1 + 0.7))

    catalog.write(awkward)


def _export(catalog: Catalog, path) -> bytes:
    maintenance.export_store(catalog, path)
    return path.read_bytes()


def _rewrite(path, transform) -> None:
    """Apply ``transform`` to the row lines (header included) and write a fresh, valid checksum."""
    lines = path.read_bytes().splitlines(keepends=True)[:-1]
    lines = transform(lines)
    body = b"".join(lines)
    path.write_bytes(body + json.dumps({"sha256": hashlib.sha256(body).hexdigest()},
                                       separators=(",", ":")).encode() + b"\n")


@pytest.fixture
def exported(tmp_path):
    """A file exported from a rich SQLite store, with that store's dump."""
    source = Catalog(tmp_path / "source.sqlite", actor="pytest")
    source.init()
    _rich(source)
    path = tmp_path / "store.jsonl"
    _export(source, path)
    dump = database.dump(source.engine)
    source.close()
    return path, dump


def test_sqlite_to_postgresql_to_sqlite_is_lossless(tmp_path, postgres_url):
    first = Catalog(tmp_path / "first.sqlite", actor="pytest")
    first.init()
    _rich(first)
    file_a = tmp_path / "a.jsonl"
    bytes_a = _export(first, file_a)

    pg = Catalog(postgres_url, actor="pytest")
    maintenance.import_store(pg, file_a, audit=False)
    file_b = tmp_path / "b.jsonl"
    bytes_b = _export(pg, file_b)

    last = Catalog(tmp_path / "last.sqlite", actor="pytest")
    maintenance.import_store(last, file_b, audit=False)
    bytes_c = _export(last, tmp_path / "c.jsonl")

    assert bytes_a == bytes_b == bytes_c
    assert database.dump(first.engine) == database.dump(pg.engine) == database.dump(last.engine)
    assert integrity.check_store(pg.engine) == [] and integrity.check_store(last.engine) == []
    # the awkward values came back bit for bit from PostgreSQL
    lifetimes = pg.read(lambda s: s.scalars(select(Level.lifetime_s).order_by(Level.id).limit(2)).all())
    assert lifetimes == [math.inf, 1.7976931348623157e308]
    description = pg.read(lambda s: s.scalar(select(Sample.description).where(Sample.name == "odd sample ✓")))
    assert description == TRICKY_TEXT
    # the id sequences continue after the imported ids: new writes work and get fresh ids
    before = pg.read(lambda s: s.scalar(select(Level.id).order_by(Level.id.desc()).limit(1)))
    report = pg.import_file(DEMO / "sample-li-cell.csv", dataset="after-the-move", again=True)
    first_new = pg.read(lambda s: s.scalar(select(Level.id).where(Level.dataset_id == report.dataset_id)
                                           .order_by(Level.id).limit(1)))
    assert first_new == before + 1
    assert integrity.check_store(pg.engine) == []
    for cat in (first, pg, last):
        cat.close()


def test_round_trip_from_each_backend_into_sqlite(catalog, tmp_path):
    _rich(catalog)
    file_a = tmp_path / "a.jsonl"
    bytes_a = _export(catalog, file_a)
    copy = Catalog(tmp_path / "copy.sqlite", actor="pytest")
    summary = maintenance.import_store(copy, file_a, audit=False)
    assert summary.counts == {name: n for name, n in integrity.inspect_store(catalog.engine).counts.items()}
    assert all(n > 0 for n in summary.counts.values())  # every table is exercised
    assert _export(copy, tmp_path / "b.jsonl") == bytes_a
    assert database.dump(copy.engine) == database.dump(catalog.engine)
    copy.close()


def test_gzip_file_round_trip(exported, tmp_path):
    path, dump = exported
    copy = Catalog(tmp_path / "copy.sqlite", actor="pytest")
    maintenance.import_store(copy, path, audit=False)
    gz = tmp_path / "store.jsonl.gz"
    maintenance.export_store(copy, gz)
    assert gzip.decompress(gz.read_bytes()) == path.read_bytes()
    again = tmp_path / "again.jsonl.gz"
    maintenance.export_store(copy, again)
    assert again.read_bytes() == gz.read_bytes()  # no time or name in the gzip header
    other = Catalog(tmp_path / "other.sqlite", actor="pytest")
    maintenance.import_store(other, gz, audit=False)
    assert database.dump(other.engine) == dump
    copy.close()
    other.close()


def test_import_records_one_audit_entry_by_default(exported, catalog):
    path, dump = exported
    summary = maintenance.import_store(catalog, path)
    entries = catalog.read(lambda s: s.scalars(select(AuditEntry).order_by(AuditEntry.id)).all())
    assert entries[-1].action == "import-store" and entries[-1].actor == "pytest"
    detail = json.loads(entries[-1].detail_json)
    assert detail["sha256"] == summary.sha256 and detail["rows"] == summary.counts
    assert len(entries) == summary.counts["audit_log"] + 1
    # apart from that entry, the store is the exported one
    assert database.dump(catalog.engine).startswith(dump.split("-- audit_log:")[0])


@pytest.mark.parametrize("where", ["header", "row", "checksum", "last-row"])
def test_one_changed_byte_is_refused_and_nothing_written(exported, catalog, where):
    path, _ = exported
    data = bytearray(path.read_bytes())
    lines = bytes(data).splitlines(keepends=True)
    offsets = [0]
    for line in lines:
        offsets.append(offsets[-1] + len(line))
    index = {"header": 0, "row": len(lines) // 2, "checksum": len(lines) - 1, "last-row": len(lines) - 2}[where]
    line = lines[index]
    # change one digit (keeps the line valid JSON, so only the checksum can tell)
    position = next(i for i in range(len(line) - 1, -1, -1) if chr(line[i]).isdigit())
    data[offsets[index] + position] = ord("7") if line[position] != ord("7") else ord("3")
    path.write_bytes(bytes(data))
    before = database.dump(catalog.engine)
    with pytest.raises(backup.StoreFileError, match="checksum mismatch|not a levels-store|checksum line"):
        maintenance.import_store(catalog, path)
    assert database.dump(catalog.engine) == before
    result = CliRunner().invoke(main, ["--db", catalog.url, "import-store", str(path)])
    assert result.exit_code == 1 and "error:" in result.output and "Traceback" not in result.output
    assert database.dump(catalog.engine) == before


def test_checksum_refusal_leaves_an_uninitialised_target_alone(exported, tmp_path):
    path, _ = exported
    data = bytearray(path.read_bytes())
    data[len(data) // 2] ^= 0x01
    path.write_bytes(bytes(data))
    target = tmp_path / "never.sqlite"
    result = CliRunner().invoke(main, ["--db", str(target), "import-store", str(path)])
    assert result.exit_code == 1
    assert "checksum mismatch" in result.output and "nothing was written" in result.output
    assert not target.exists() or database.current_revision(database.make_engine(target)) is None


def test_non_empty_target_is_refused(exported, catalog):
    path, _ = exported
    catalog.import_file(DEMO / "sample-li-cell.csv", dataset="already here")
    before = database.dump(catalog.engine)
    with pytest.raises(backup.StoreFileError, match=r"is not empty \(species: 1, datasets: 2, levels: 53"):
        maintenance.import_store(catalog, path)
    assert database.dump(catalog.engine) == before


def test_truncated_file_is_refused(exported, catalog):
    path, _ = exported
    lines = path.read_bytes().splitlines(keepends=True)
    path.write_bytes(b"".join(lines[: len(lines) // 2]))
    before = database.dump(catalog.engine)
    with pytest.raises(backup.StoreFileError, match="truncated"):
        maintenance.import_store(catalog, path)
    assert database.dump(catalog.engine) == before


def test_missing_row_with_recomputed_checksum_is_refused_by_the_counts(exported, catalog):
    path, _ = exported
    _rewrite(path, lambda lines: [ln for ln in lines if not ln.startswith(b'{"table":"audit_log","row":{"id":2,')])
    before = database.dump(catalog.engine)
    with pytest.raises(backup.StoreFileError, match="table audit_log has 7 rows, the header says 8"):
        maintenance.import_store(catalog, path)
    assert database.dump(catalog.engine) == before


def test_bad_row_late_in_the_file_rolls_everything_back(exported, catalog):
    path, _ = exported

    def break_last_level(lines):
        index = max(i for i, ln in enumerate(lines) if ln.startswith(b'{"table":"levels"'))
        lines[index] = lines[index].replace(b'"parity":1,', b'"parity":0,').replace(b'"parity":-1,', b'"parity":0,')
        return lines

    _rewrite(path, break_last_level)
    before = database.dump(catalog.engine)
    with pytest.raises(StoreError, match="store refused the (write|rows of table levels)"):
        maintenance.import_store(catalog, path)
    assert database.dump(catalog.engine) == before


@pytest.mark.parametrize("change, message", [
    (lambda h: h.update(schema_revision="0000"), "schema revision 0000"),
    (lambda h: h.update(version=99), "format version 99 is not supported"),
    (lambda h: h.update(format="other"), "not a levels-store file"),
    (lambda h: h["columns"]["levels"].pop(), "columns of table levels"),
])
def test_foreign_header_is_refused(exported, catalog, change, message):
    path, _ = exported

    def edit(lines):
        header = json.loads(lines[0])
        change(header)
        lines[0] = json.dumps(header, separators=(",", ":")).encode() + b"\n"
        return lines

    _rewrite(path, edit)
    before = database.dump(catalog.engine)
    with pytest.raises(backup.StoreFileError, match=message):
        maintenance.import_store(catalog, path)
    assert database.dump(catalog.engine) == before


@pytest.mark.parametrize("old, new, message", [
    (b'"energy_cm1":0.0', b'"energy_cm1":"0.0"', "is not a valid float value"),
    (b'"energy_cm1":0.0', b'"energy_cm1":NaN', "not a JSON line"),
    (b'"two_j":1,', b'"two_j":1.5,', "is not a valid integer value"),
])
def test_wrongly_typed_value_is_refused(exported, catalog, old, new, message):
    path, _ = exported

    def edit(lines):
        index = next(i for i, ln in enumerate(lines) if ln.startswith(b'{"table":"levels"') and old in ln)
        lines[index] = lines[index].replace(old, new, 1)
        return lines

    _rewrite(path, edit)
    before = database.dump(catalog.engine)
    with pytest.raises(backup.StoreFileError, match=message):
        maintenance.import_store(catalog, path)
    assert database.dump(catalog.engine) == before


def test_file_changed_during_import_is_refused(exported, catalog):
    path, _ = exported
    header = backup.verify_file(path)
    header["sha256"] = "0" * 64
    with pytest.raises(backup.StoreFileError, match="changed while it was imported"):
        catalog.write(lambda session: backup.insert_rows_from_file(session, path, header))
    assert integrity.inspect_store(catalog.engine).counts["levels"] == 0


def test_export_of_an_uninitialised_store_is_refused(tmp_path):
    cat = Catalog(tmp_path / "empty.sqlite")
    with pytest.raises(StoreError, match="not initialised"):
        maintenance.export_store(cat, tmp_path / "x.jsonl")
    assert not (tmp_path / "x.jsonl").exists()
    cat.close()


def test_cli_export_and_import(filled, tmp_path):
    path = tmp_path / "cli.jsonl"
    result = CliRunner().invoke(main, ["--db", filled.url, "export-store", str(path)])
    assert result.exit_code == 0, result.output
    counts = integrity.inspect_store(filled.engine).counts
    assert f"exported {sum(counts.values())} rows" in result.output
    sha = hashlib.sha256(b"".join(path.read_bytes().splitlines(keepends=True)[:-1])).hexdigest()
    assert f"sha256 {sha}" in result.output
    target = tmp_path / "target.sqlite"
    result = CliRunner().invoke(main, ["--db", str(target), "import-store", str(path), "--no-audit"])
    assert result.exit_code == 0, result.output
    assert f"sha256 {sha} verified" in result.output
    assert database.dump(database.make_engine(target)) == database.dump(filled.engine)
    again = CliRunner().invoke(main, ["--db", str(target), "import-store", str(path)])
    assert again.exit_code == 1 and "is not empty" in again.output


def test_format_is_as_documented(exported):
    """Header keys, row shape, value spellings and checksum as docs/store-format.md says."""
    path, _ = exported
    lines = path.read_bytes().splitlines(keepends=True)
    header = json.loads(lines[0])
    assert header["format"] == "levels-store" and header["version"] == 1
    assert header["tables"] == ["species", "samples", "datasets", "levels", "lines", "ionization_limits", "audit_log"]
    assert sum(header["counts"].values()) == len(lines) - 2
    rows = [json.loads(ln) for ln in lines[1:-1]]
    assert [r["table"] for r in rows] == sorted((r["table"] for r in rows), key=header["tables"].index)
    level_rows = [r["row"] for r in rows if r["table"] == "levels"]
    assert level_rows[0]["lifetime_s"] == "Infinity" and level_rows[0]["unc_cm1"] == 5e-324
    assert level_rows[2]["unc_cm1"] == 0.1 + 0.7 and b'"unc_cm1":0.7999999999999999' in lines[1 + [
        r["table"] for r in rows].index("levels") + 2]
    assert all(r["row"]["at"].endswith("Z") and len(r["row"]["at"]) == 27 for r in rows if r["table"] == "audit_log")
    assert json.loads(lines[-1]) == {"sha256": hashlib.sha256(b"".join(lines[:-1])).hexdigest()}


def test_export_during_writes_is_a_consistent_snapshot(catalog, tmp_path):
    """Exports taken while another connection keeps importing are each one committed state."""
    import threading

    from levels.store.schema import Dataset

    from . import _workers

    fill(catalog, n_max=8)
    done = threading.Event()
    errors = []

    def writer():
        try:
            with Catalog(catalog.url, actor="writer") as other:
                for index in range(60):
                    path = tmp_path / f"{_workers.dataset_name(9, index)}.csv"
                    path.write_text(_workers.file_text(9, index), encoding="utf-8")
                    other.import_file(path, dataset=_workers.dataset_name(9, index), again=True)
        except Exception as exc:  # reported below
            errors.append(exc)
        finally:
            done.set()

    thread = threading.Thread(target=writer)
    thread.start()
    snapshots = []
    while not done.is_set():
        path = tmp_path / f"snap-{len(snapshots)}.jsonl"
        maintenance.export_store(catalog, path)
        snapshots.append(path)
    thread.join()
    final = tmp_path / "snap-final.jsonl"
    maintenance.export_store(catalog, final)
    snapshots.append(final)
    assert errors == []
    seen = set()
    for number, path in enumerate(snapshots):
        copy = Catalog(tmp_path / f"copy-{number}.sqlite", actor="pytest")
        maintenance.import_store(copy, path, audit=False)
        assert integrity.check_store(copy.engine) == []
        names = copy.read(lambda s: s.scalars(select(Dataset.name).where(Dataset.name.like("w9-%"))).all())
        for name in names:  # each dataset complete, with its audit entry
            rows = copy.level_rows(_workers.SPECIES[(9 + int(name.split("-")[1])) % len(_workers.SPECIES)][0],
                                   [name])
            assert len(rows) == len(_workers.expected_levels(9, int(name.split("-")[1])))
        audit = copy.read(lambda s: s.scalars(select(AuditEntry.target).where(AuditEntry.target.like("dataset w9-%")))
                          .all())
        assert sorted(audit) == sorted(f"dataset {n}" for n in names)
        seen.add(len(names))
        copy.close()
    assert len(snapshots) >= 2 and max(seen) == 60 and min(seen) < 60  # the exports overlapped the writes
