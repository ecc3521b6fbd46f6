"""Computed datasets are identified by role and owner species (migration 0002 and the queries API)."""

from __future__ import annotations

import datetime as dt

import pytest
from sqlalchemy import select, text

from levels.errors import AlreadyExistsError, ReservedNameError
from levels.notation import parse_spectrum
from levels.service import lookup
from levels.store import database, queries
from levels.store.schema import Dataset, IonizationLimit, Level, Line


def test_is_reserved_dataset_name():
    for name in ("derived lines Na I A=23", "series limit Na I A=23", "hydrogenic C VI A=12", "rates Fe II A=56",
                 "hydrogenic H I A=1 nl", "DERIVED LINES  Li I A=7", "rates\u00a0Fe II A=56"):
        assert queries.is_reserved_dataset_name(name), name
    for name in ("li/levels", "my derived lines Na I A=23", "hydrogenic runs", "rates of decay", "series limits",
                 "cell-3/derived lines Na I A=23", "measured derived lines Na I A=23"):
        assert not queries.is_reserved_dataset_name(name), name


def test_replace_computed_dataset_touches_only_its_role_and_species(catalog):
    def work(session):
        na = lookup.get_or_create_species(session, parse_spectrum("Na I"))
        li = lookup.get_or_create_species(session, parse_spectrum("Li I"))
        first = queries.replace_computed_dataset(session, na.id, "rates", name="rates Na I A=23", method="m",
                                                 method_version="1", options_json='{"a": 1}', actor="pytest")
        other = queries.replace_computed_dataset(session, li.id, "rates", name="rates Li I A=7", method="m",
                                                 method_version="1", options_json="{}", actor="pytest")
        session.add(IonizationLimit(dataset_id=first.id, species_id=na.id, energy_cm1=41000.0))
        session.flush()
        assert queries.find_computed_dataset(session, na.id, "rates").id == first.id
        second = queries.replace_computed_dataset(session, na.id, "rates", name="rates Na I A=23", method="m",
                                                  method_version="2", options_json="{}", actor="pytest")
        assert second.id != first.id and session.get(Dataset, first.id) is None
        assert queries.find_computed_dataset(session, na.id, "rates").method_version == "2"
        assert queries.find_computed_dataset(session, li.id, "rates").id == other.id
        assert session.scalars(select(IonizationLimit).where(IonizationLimit.dataset_id == first.id)).all() == []
        assert queries.find_computed_dataset(session, na.id, "derived-lines") is None
        with pytest.raises(ValueError):
            queries.find_computed_dataset(session, na.id, "nonsense")
        with pytest.raises(ReservedNameError) as info:
            queries.create_dataset(session, name="rates Na I A=23 ", kind="measured")
        assert info.value.first.field == "name"
        return second.role, second.owner_species_id == na.id, second.kind

    assert catalog.write(work) == ("rates", True, "computed")


def test_one_computed_dataset_per_role_and_species_in_the_schema(catalog):
    def work(session):
        na = lookup.get_or_create_species(session, parse_spectrum("Na I"))
        queries.create_dataset(session, name="a", kind="computed", role="rates", owner_species_id=na.id)
        queries.create_dataset(session, name="b", kind="computed", role="rates", owner_species_id=na.id)

    with pytest.raises(AlreadyExistsError):
        catalog.write(work)

    def user_role(session):
        na = lookup.get_or_create_species(session, parse_spectrum("Na I"))
        queries.create_dataset(session, name="c", kind="measured", role="rates", owner_species_id=na.id)

    from levels.errors import StoreError

    with pytest.raises(StoreError):  # CHECK role_owner: only computed datasets carry a role
        catalog.write(user_role)


def _old_store(engine) -> None:
    """A store at revision 0001 with computed sets of the old code and user sets under their names."""
    database.upgrade(engine, "0001")
    now = dt.datetime(2026, 12, 1, tzinfo=dt.UTC)
    with engine.begin() as conn:
        def q(sql, **params):
            return conn.execute(text(sql), params)

        for sid, z, name, a in ((1, 11, "Na I", 23), (2, 3, "Li I", 7), (3, 6, "C VI", 12)):
            q("INSERT INTO species (id, z, charge, mass_number, name) VALUES (:i, :z, :c, :a, :n)",
              i=sid, z=z, c=5 if z == 6 else 0, a=a, n=name)
        datasets = [  # id, name, kind, method
            (1, "na levels", "measured", "file import"),
            (2, "derived lines Na I A=23", "computed", "ritz-combination"),
            (3, "hydrogenic C VI A=12", "computed", "hydrogenic-dirac-qed"),
            (4, "hydrogenic C VI A=12 nl", "computed", "hydrogenic-dirac-qed"),
            (5, "series limit Na I A=23", "computed", "extended-ritz-fit"),
            (6, "derived lines Li I A=7", "measured", "file import"),  # user data under a reserved name
            (7, "rates Na I A=99", "imported", "file import"),
        ]
        for did, name, kind, method in datasets:
            q("INSERT INTO datasets (id, name, kind, method, method_version, citation, author, description, "
              "options_json, created_at, retracted) VALUES (:i, :n, :k, :m, '', '', 't', '', '{}', :t, 0)",
              i=did, n=name, k=kind, m=method, t=now)
        level_id = 0
        for did, sid in ((1, 1), (1, 1), (3, 3), (3, 3), (4, 3), (4, 3), (6, 2), (6, 2), (7, 1), (7, 1)):
            level_id += 1
            q("INSERT INTO levels (id, dataset_id, species_id, label, configuration, term, two_j, g, parity, "
              "energy_cm1) VALUES (:i, :d, :s, :l, :c, '2S', 1, 2, :p, :e)",
              i=level_id, d=did, s=sid, l=f"l{level_id}", c=f"c{level_id}", p=1 if level_id % 2 else -1,
              e=1000.0 * (level_id % 2))
        for lid, did, sid, lo, up in ((1, 2, 1, 2, 1), (2, 3, 3, 4, 3), (3, 6, 2, 8, 7)):
            q("INSERT INTO lines (id, dataset_id, species_id, lower_id, upper_id, multipole, wavenumber_cm1, "
              "vacuum_nm, medium, note) VALUES (:i, :d, :s, :lo, :up, 'E1', 1000, 10000, '', '')",
              i=lid, d=did, s=sid, lo=lo, up=up)
        q("INSERT INTO ionization_limits (dataset_id, species_id, energy_cm1, method) VALUES (5, 1, 41449, 'x')")
        if engine.dialect.name == "postgresql":
            for table in ("species", "datasets", "levels", "lines"):
                q(f"SELECT setval(pg_get_serial_sequence('{table}', 'id'), (SELECT max(id) FROM {table}))")


def test_migration_0002_fills_roles_and_renames_user_sets(store_url):
    engine = database.make_engine(store_url)
    try:
        _old_store(engine)
        before = database.dump(engine, tables=("levels", "lines", "ionization_limits"))
        assert database.upgrade(engine, "0002") == "0002"   # the revision under test; 0004 adds a column
        assert database.dump(engine, tables=("levels", "lines", "ionization_limits")) == before
        with engine.connect() as conn:
            rows = {r.id: (r.name, r.role, r.owner_species_id) for r in conn.execute(
                text("SELECT id, name, role, owner_species_id FROM datasets"))}
            audit = conn.execute(text("SELECT action, target FROM audit_log")).all()
        assert rows == {
            1: ("na levels", None, None),
            2: ("derived lines Na I A=23", "derived-lines", 1),
            3: ("hydrogenic C VI A=12", "hydrogenic", 3),
            4: ("hydrogenic C VI A=12 nl", "hydrogenic-nl", 3),
            5: ("series limit Na I A=23", "series-limit", 1),
            6: ("user derived lines Li I A=7", None, None),
            7: ("user rates Na I A=99", None, None),
        }
        assert sorted(audit) == [("rename-dataset", "dataset user derived lines Li I A=7"),
                                 ("rename-dataset", "dataset user rates Na I A=99")]
    finally:
        engine.dispose()


def test_migrated_store_passes_check_and_rebuilds_by_role(store_url):
    from levels.catalog import Catalog
    from levels.service import maintenance

    engine = database.make_engine(store_url)
    _old_store(engine)
    engine.dispose()
    catalog = Catalog(store_url, actor="pytest")
    try:
        catalog.init()
        catalog.recompute_lines("Li I")
        with database.read_session(catalog.engine) as session:
            user = session.scalars(select(Dataset).where(Dataset.name == "user derived lines Li I A=7")).one()
            assert len(session.scalars(select(Level).where(Level.dataset_id == user.id)).all()) == 2
            assert len(session.scalars(select(Line).where(Line.dataset_id == user.id)).all()) == 1
        report = maintenance.check(catalog)
        assert report.ok, report.problems
    finally:
        catalog.close()


def test_check_reports_role_problems(catalog, tmp_path):
    from levels.service import maintenance

    path = tmp_path / "na.csv"
    path.write_text("spectrum,configuration,term,j,energy_cm1\nNa I,3s,2S,1/2,0\nNa I,3p,2P°,1/2,17000\n"
                    "Li I,2s,2S,1/2,0\n", encoding="utf-8")  # INVENTED levels
    catalog.import_file(path, dataset="mixed")
    assert maintenance.check(catalog).ok
    with catalog.engine.begin() as conn:  # behind the service's back, as an old tool or a hand edit might
        conn.execute(text("UPDATE datasets SET name = 'rates Na I A=23' WHERE name = 'mixed'"))
        li = conn.execute(text("SELECT id FROM species WHERE z = 3")).scalar()
        conn.execute(text("UPDATE datasets SET owner_species_id = :li WHERE role = 'derived-lines'"), {"li": li})
    problems = maintenance.check(catalog).problems
    assert any("'rates Na I A=23'" in p and "reserved name" in p for p in problems), problems
    assert any("role derived-lines" in p and "not of its owner species" in p for p in problems), problems
