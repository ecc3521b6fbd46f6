"""The same level imported under two notations of the closed core (issue 14, item 1): recognised as one
state, reported on import (not refused), listed once in line lists; migration 0004 fills existing stores.

Every level below is invented (round numbers, not measured values of potassium).
"""

from __future__ import annotations

import datetime as dt

from click.testing import CliRunner
from sqlalchemy import inspect, select, text

from levels.cli import main
from levels.service.contract import LineQuery
from levels.store import database
from levels.store.schema import Level

HEADER = "spectrum,configuration,term,j,energy_cm1,unc_cm1\n"
#: invented K I levels, core bracketed
K_BRACKETED = HEADER + ("K I,[Ar].4s,2S,1/2,0,0.001\n"
                        "K I,[Ar].4p,2P°,1/2,13000.0,0.01\n"
                        "K I,[Ar].4p,2P°,3/2,13060.0,0.01\n"
                        "K I,[Ar].5s,2S,1/2,21000.0,0.01\n")
#: the same invented levels, core left out, energies a little different (another sample)
K_OMITTED = HEADER + ("K I,4s,2S,1/2,0,0.001\n"
                      "K I,4p,2P°,1/2,13000.02,0.01\n"
                      "K I,4p,2P°,3/2,13060.02,0.01\n"
                      "K I,5s,2S,1/2,21000.03,0.01\n")
#: and written out in full
K_FULL = HEADER + ("K I,1s2.2s2.2p6.3s2.3p6.4s,2S,1/2,0,0.001\n"
                   "K I,1s2.2s2.2p6.3s2.3p6.4p,2P°,3/2,13060.01,0.01\n")
#: other states only (a 3d level): nothing to report
K_OTHER = HEADER + "K I,[Ar].3d,2D,5/2,21500.0,0.01\n"


def _file(tmp_path, name: str, content: str):
    path = tmp_path / name
    path.write_text(content, encoding="utf-8")
    return path


def test_second_notation_is_stored_as_the_same_state_and_reported(catalog, tmp_path):
    first = catalog.import_file(_file(tmp_path, "k-a.csv", K_BRACKETED), sample="k-cell")
    assert first.warnings == []
    second = catalog.import_file(_file(tmp_path, "k-b.csv", K_OMITTED), sample="k-cell")
    assert second.levels == 4
    (warning,) = second.warnings
    assert "k-b.csv" in warning and "4 levels of K I" in warning
    assert repr(second.dataset) in warning and repr(first.dataset) in warning
    assert "'4s 2S1/2' = '[Ar].4s 2S1/2'" in warning and "both are kept" in warning
    third = catalog.import_file(_file(tmp_path, "k-c.csv", K_FULL), sample="k-cell")
    assert len(third.warnings) == 2                      # one per other dataset holding the states
    assert all("2 levels of K I" in w for w in third.warnings)
    assert catalog.import_file(_file(tmp_path, "k-d.csv", K_OTHER), sample="k-cell").warnings == []

    def work(session):
        return session.execute(select(Level.configuration, Level.state_configuration)
                               .order_by(Level.id)).all()

    stored = catalog.read(work)
    assert stored[0] == ("[Ar].4s", "[Ar].4s")          # the form given is kept beside the canonical one
    assert stored[4] == ("4s", "[Ar].4s")
    assert stored[8] == ("1s2.2s2.2p6.3s2.3p6.4s", "[Ar].4s")


def test_line_list_over_both_datasets_lists_each_line_once_and_says_why(catalog, tmp_path):
    a = catalog.import_file(_file(tmp_path, "k-a.csv", K_BRACKETED), sample="k-cell")
    rows_one, info_one = catalog.species_lines(LineQuery(spectrum="K I", datasets=(a.dataset,)))
    assert info_one["warnings"] == []
    b = catalog.import_file(_file(tmp_path, "k-b.csv", K_OMITTED), sample="k-cell")
    rows, info = catalog.species_lines(LineQuery(spectrum="K I"))
    pairs = [(r["lower_cm1"] < r["upper_cm1"], r["lower"].split()[-1], r["upper"].split()[-1],
              round(r["wavenumber_cm1"], -1)) for r in rows]
    assert len(rows) == len(rows_one) == 4 and len(set(pairs)) == 4
    (note,) = info["warnings"]
    assert note.startswith("K I: 4 states are held by several datasets") and "[Ar].4s 2S1/2" in note
    # precedence: the newest measured dataset comes first, so its levels are the ones listed
    assert f"{b.dataset!r}, {a.dataset!r}" in note
    assert {r["lower"] for r in rows} <= {"4s 2S1/2", "4p 2P°1/2", "4p 2P°3/2"}
    # with an explicit precedence the other dataset's levels are listed, still once each
    rows_a, _ = catalog.species_lines(LineQuery(spectrum="K I", datasets=(a.dataset, b.dataset)))
    assert len(rows_a) == 4 and {r["lower"] for r in rows_a} <= {"[Ar].4s 2S1/2", "[Ar].4p 2P°1/2", "[Ar].4p 2P°3/2"}


def test_cli_import_and_lines_print_the_report(store_url, tmp_path):
    runner = CliRunner()
    assert runner.invoke(main, ["--db", store_url, "init"]).exit_code == 0
    a = runner.invoke(main, ["--db", store_url, "import", str(_file(tmp_path, "k-a.csv", K_BRACKETED)),
                             "--sample", "k-cell"])
    assert a.exit_code == 0, a.output
    b = runner.invoke(main, ["--db", store_url, "import", str(_file(tmp_path, "k-b.csv", K_OMITTED)),
                             "--sample", "k-cell"])
    assert b.exit_code == 0, b.output
    assert "note: k-b.csv: 4 levels of K I in the new dataset 'k-cell/k-b'" in b.output
    assert "of dataset 'k-cell/k-a'" in b.output
    lines = runner.invoke(main, ["--db", store_url, "lines", "K I", "--format", "csv"])
    assert lines.exit_code == 0, lines.output
    assert "warning: K I: 4 states are held by several datasets" in lines.stderr
    body = [ln for ln in lines.stdout.splitlines() if ln and not ln.startswith("#")]
    assert len(body) == 1 + 4                            # header and four lines, not eight
    assert any(ln.startswith("# states:") for ln in lines.stdout.splitlines())


def test_migration_0004_fills_the_canonical_configuration(store_url):
    engine = database.make_engine(store_url)
    try:
        database.upgrade(engine, "0003")
        now = dt.datetime(2026, 12, 1, tzinfo=dt.UTC)
        with engine.begin() as conn:
            conn.execute(text("INSERT INTO species (id, z, charge, mass_number, name) VALUES (1, 19, 0, 39, 'K I')"))
            for did in (1, 2):
                conn.execute(text("INSERT INTO datasets (id, name, kind, method, method_version, citation, author, "
                                  "description, options_json, created_at, retracted) VALUES "
                                  "(:i, :n, 'measured', 'file import', '', '', 't', '', '{}', :t, 0)"),
                             {"i": did, "n": f"k{did}", "t": now})
            for lid, did, config in ((1, 1, "[Ar].4s"), (2, 2, "4s"), (3, 2, "1s2.2s2.2p6.3s2.3p6.4p"),
                                     (4, 1, "odd text")):
                conn.execute(text("INSERT INTO levels (id, dataset_id, species_id, label, configuration, term, "
                                  "two_j, g, parity, energy_cm1) VALUES (:i, :d, 1, :l, :c, '2S', 1, 2, 1, :e)"),
                             {"i": lid, "d": did, "l": f"{config} 2S1/2", "c": config, "e": float(lid)})
        before = database.dump(engine, tables=("species", "datasets", "lines"))
        assert database.upgrade(engine) == database.head_revision()
        assert database.dump(engine, tables=("species", "datasets", "lines")) == before
        with engine.connect() as conn:
            got = dict(conn.execute(text("SELECT id, state_configuration FROM levels")).all())
            configs = dict(conn.execute(text("SELECT id, configuration FROM levels")).all())
        assert got == {1: "[Ar].4s", 2: "[Ar].4s", 3: "[Ar].4p", 4: None}
        assert configs == {1: "[Ar].4s", 2: "4s", 3: "1s2.2s2.2p6.3s2.3p6.4p", 4: "odd text"}
        indexes = {ix["name"]: ix["column_names"] for ix in inspect(engine).get_indexes("levels")}
        assert indexes["ix_levels_species_state"] == ["species_id", "state_configuration", "term", "two_j"]
    finally:
        engine.dispose()


def test_adding_the_same_state_in_another_notation_to_one_dataset_is_refused(catalog, tmp_path):
    import pytest

    from levels.errors import AlreadyExistsError
    from levels.io.records import validate_levels

    a = catalog.import_file(_file(tmp_path, "k-a.csv", K_BRACKETED), sample="k-cell")
    (same,) = validate_levels([(1, {"spectrum": "K I", "configuration": "4s", "term": "2S", "j": "1/2",
                                    "energy_cm1": "0"})], source="<form>")
    with pytest.raises(AlreadyExistsError, match=r"already holds the state \[Ar\].4s 2S1/2 of K I"):
        catalog.add_levels(a.dataset, [same])
    (new,) = validate_levels([(1, {"spectrum": "K I", "configuration": "4d", "term": "2D", "j": "3/2",
                                   "energy_cm1": "22000"})], source="<form>")
    assert catalog.add_levels(a.dataset, [new]) == 1
    assert len(catalog.level_rows("K I", [a.dataset])) == 5
