"""The store on SQLite and PostgreSQL: schema, constraints, import, precedence, audit."""

import math
from pathlib import Path

import pytest
from sqlalchemy import insert, select
from sqlalchemy.exc import IntegrityError

from levels.catalog import LEVEL_COLUMNS, SPECIES_COLUMNS, Catalog, LineQuery
from levels.errors import AlreadyExistsError, NotFoundError, StoreError
from levels.service.contract import LEVEL_VALUE_KEYS
from levels.store import database
from levels.store.schema import AuditEntry, Dataset, Level, Sample, Species

DEMO = Path(__file__).resolve().parents[2] / "seed_data" / "demo" / "sample-li-cell.csv"


def test_init_is_idempotent_and_at_head(catalog):
    assert database.current_revision(catalog.engine) == database.head_revision()
    assert catalog.init() == database.head_revision()


def test_uninitialised_store_is_refused(store_url):
    cat = Catalog(store_url)
    # PostgreSQL: an empty database is "not initialised"; SQLite: a missing file is refused without creating it
    with pytest.raises(StoreError, match=r"not initialised|no store file at .*levels init.*nothing was created"):
        cat.species_rows()
    cat.close()


def test_sqlite_pragmas(tmp_path):
    engine = database.make_engine(tmp_path / "p.sqlite")
    with engine.connect() as conn:
        assert conn.exec_driver_sql("PRAGMA journal_mode").scalar() == "wal"
        assert conn.exec_driver_sql("PRAGMA foreign_keys").scalar() == 1
        assert conn.exec_driver_sql("PRAGMA busy_timeout").scalar() == database.SQLITE_BUSY_TIMEOUT_MS


def test_import_then_show_and_species(catalog):
    report = catalog.import_file(DEMO, sample="demo-1")
    assert report.levels == 53 and report.species == ["Li I"] and report.dataset == "demo-1/sample-li-cell"
    rows = catalog.level_rows("Li I")
    assert len(rows) == 53
    assert list(rows[0]) == list(LEVEL_COLUMNS) + list(LEVEL_VALUE_KEYS)
    assert rows[0]["label"] == "1s2.2s 2S1/2" and rows[0]["energy_cm1"] == 0.0
    # the quantum numbers as values beside their texts: 2S1/2 is 2S+1 = 2, L = 0, 2J = 1
    assert (rows[0]["multiplicity"], rows[0]["L"], rows[0]["two_j"], rows[0]["parity"]) == (2, 0, 1, 1)
    energies = [r["energy_cm1"] for r in rows]
    assert energies == sorted(energies)
    species = catalog.species_rows()
    assert [list(r)[:len(SPECIES_COLUMNS)] for r in species] == [list(SPECIES_COLUMNS)]
    assert species[0]["levels"] == 53 and species[0]["mass_number"] == 7


def test_import_writes_sample_dataset_and_audit(catalog):
    catalog.import_file(DEMO, sample="demo-1")

    def look(session):
        ds = session.scalars(select(Dataset).where(Dataset.kind == "measured")).one()
        sample = session.scalars(select(Sample)).one()
        audit = session.scalars(select(AuditEntry)).all()
        return ds.kind, ds.sample_id == sample.id, ds.author, [(a.action, a.actor) for a in audit]

    kind, linked, author, audit = catalog.read(look)
    assert kind == "measured" and linked and author == "pytest"
    assert audit == [("import-levels", "pytest")]


def test_import_derives_the_e1_lines_of_the_new_levels(catalog):
    report = catalog.import_file(DEMO, sample="demo-1")
    rows, total = catalog.line_rows(LineQuery(spectrum="Li I"))
    assert total == report.lines > 0
    assert all(r["multipole"] == "E1" and r["a_per_s"] is None for r in rows)
    assert all(r["upper_cm1"] > r["lower_cm1"] for r in rows)


def test_second_import_gets_a_new_dataset_name_and_explicit_clash_is_refused(catalog):
    catalog.import_file(DEMO, sample="s")
    second = catalog.import_file(DEMO, sample="s", again=True)
    assert second.dataset == "s/sample-li-cell (2)"
    # the same content under a taken name: the content rule speaks first, --again leaves the name clash
    with pytest.raises(AlreadyExistsError, match="already imported as dataset .*--again"):
        catalog.import_file(DEMO, dataset="s/sample-li-cell")
    with pytest.raises(AlreadyExistsError, match="already exists"):
        catalog.import_file(DEMO, dataset="s/sample-li-cell", again=True)


def test_precedence_first_dataset_wins(catalog, tmp_path):
    a = tmp_path / "a.csv"
    a.write_text("spectrum,configuration,term,j,energy_cm1\nNa I,3s,2S,1/2,0\nNa I,3p,2P°,1/2,100.0\n",
                 encoding="utf-8")
    b = tmp_path / "b.csv"
    b.write_text("spectrum,configuration,term,j,energy_cm1\nNa I,3s,2S,1/2,0\nNa I,3p,2P°,1/2,200.0\n"
                 "Na I,3p,2P°,3/2,210.0\n", encoding="utf-8")
    catalog.import_file(a, dataset="A")
    catalog.import_file(b, dataset="B")
    first_a = {r["label"]: (r["energy_cm1"], r["dataset"]) for r in catalog.level_rows("Na I", ["A", "B"])}
    first_b = {r["label"]: (r["energy_cm1"], r["dataset"]) for r in catalog.level_rows("Na I", ["B", "A"])}
    assert first_a["3p 2P°1/2"] == (100.0, "A") and first_a["3p 2P°3/2"] == (210.0, "B")
    assert first_b["3p 2P°1/2"] == (200.0, "B")
    with pytest.raises(NotFoundError):
        catalog.level_rows("Na I", ["C"])
    with pytest.raises(NotFoundError, match="no species K I"):
        catalog.level_rows("K I")


def _raw_level(catalog, **overrides):
    def work(session):
        sp = Species(z=11, charge=0, mass_number=23, name="Na I")
        ds = Dataset(name="raw", kind="measured")
        session.add_all([sp, ds])
        session.flush()
        row = dict(dataset_id=ds.id, species_id=sp.id, label="x", configuration="3s", term="2S", two_j=1, g=2,
                   parity=1, energy_cm1=0.0)
        row.update(overrides)
        session.execute(insert(Level), [row])
    with database.session_factory(catalog.engine)() as session, session.begin():
        work(session)


@pytest.mark.parametrize("overrides", [
    {"two_j": -1, "g": 0}, {"g": 3}, {"parity": 0},
    {"energy_cm1": math.inf}, {"energy_cm1": -math.inf}, {"energy_cm1": math.nan},
    {"unc_cm1": -1.0}, {"species_id": 999}, {"dataset_id": 999},
])
def test_schema_constraints_refuse_bad_rows(catalog, overrides):
    with pytest.raises(IntegrityError):
        _raw_level(catalog, **overrides)


def test_unique_state_per_dataset_in_schema(catalog):
    _raw_level(catalog)

    def again(session):
        ds = session.scalars(select(Dataset)).one()
        sp = session.scalars(select(Species)).one()
        session.execute(insert(Level), [dict(dataset_id=ds.id, species_id=sp.id, label="y", configuration="3s",
                                             term="2S", two_j=1, g=2, parity=1, energy_cm1=1.0)])
    with pytest.raises(AlreadyExistsError):
        database.run_in_transaction(catalog.engine, again)


def test_failed_transaction_leaves_nothing(catalog):
    before = database.dump(catalog.engine)

    def work(session):
        session.add(Dataset(name="half", kind="measured"))
        session.flush()
        raise RuntimeError("crash in the middle")
    with pytest.raises(RuntimeError):
        database.run_in_transaction(catalog.engine, work)
    assert database.dump(catalog.engine) == before


def test_dump_is_identical_across_backends_for_same_content(catalog, tmp_path):
    catalog.import_file(DEMO, sample="demo-1")
    text_dump = database.dump(catalog.engine)
    assert "-- levels:" in text_dump and text_dump.count("\n") > 53


def test_line_finder_index_exists(catalog):
    from sqlalchemy import inspect

    names = {ix["name"] for ix in inspect(catalog.engine).get_indexes("lines")}
    assert "ix_lines_species_vacuum" in names


def test_unknown_backend_is_refused():
    with pytest.raises(StoreError, match="not supported"):
        database.normalize_url("mysql://x@y/z")
