"""Dataset names carry nothing CSV readers or spreadsheets treat specially; the same file is not
imported twice by accident (issue 14, items 1 and 2; migration 0003)."""

from __future__ import annotations

import datetime as dt

import pandas as pd
import pytest
from click.testing import CliRunner
from sqlalchemy import text

from levels.cli import main
from levels.errors import AlreadyExistsError, InputFileError
from levels.store import backup, database, queries

# INVENTED potassium-like sample: made-up energies, not measured values
K_LEVELS = ("spectrum,configuration,term,j,energy_cm1,unc_cm1\n"
            "K I,4s,2S,1/2,0,0.01\nK I,4p,2P°,1/2,13000.0,0.02\nK I,4p,2P°,3/2,13060.0,0.02\n")


def _file(tmp_path, name, body):
    path = tmp_path / name
    path.write_text(body, encoding="utf-8")
    return path


@pytest.mark.parametrize("name", ["k#2", "=SUM(A1)", "+1", "-x", "@cmd", "a\nb", "tab\there", " lead", "trail ", ""])
def test_bad_names_have_a_problem(name):
    assert queries.dataset_name_problem(name) is not None
    assert queries.dataset_name_problem(queries.plain_dataset_name(name)) is None


@pytest.mark.parametrize("name", ["k-cell/k-cell-A (2)", "user rates Na I A=99", "cell 3 (replaced, id 4)",
                                  "a-b", "x=1", "e-mail@lab"])
def test_plain_names_pass(name):
    assert queries.dataset_name_problem(name) is None


def test_second_import_is_refused_and_again_numbers_plainly(catalog, tmp_path):
    path = _file(tmp_path, "k-cell-A.csv", K_LEVELS)
    first = catalog.import_file(path, sample="k-cell")
    assert first.dataset == "k-cell/k-cell-A"
    with pytest.raises(AlreadyExistsError, match="already imported as dataset 'k-cell/k-cell-A'.*--again"):
        catalog.import_file(path, sample="k-cell")
    # same rows under other comments and line ends: the same content
    copy = _file(tmp_path, "copy.csv", "# a comment\r\n" + K_LEVELS.replace("\n", "\r\n"))
    with pytest.raises(AlreadyExistsError, match="already imported"):
        catalog.import_file(copy, sample="other")
    second = catalog.import_file(path, sample="k-cell", again=True)
    assert second.dataset == "k-cell/k-cell-A (2)"
    assert any("already imported" in w for w in second.warnings)
    # an explicit new name does not make the data new: refused too, naming the dataset and --again
    with pytest.raises(AlreadyExistsError,
                       match="already imported as dataset 'k-cell/k-cell-A'.*new dataset name.*--again"):
        catalog.import_file(path, dataset="k-cell copy for the fit")
    assert "k-cell copy for the fit" not in {d["name"] for d in catalog.dataset_rows()}
    named = catalog.import_file(path, dataset="k-cell copy for the fit", again=True)
    assert named.dataset == "k-cell copy for the fit"
    assert any("already imported as dataset 'k-cell/k-cell-A'" in w for w in named.warnings)
    # a changed file is new content
    changed = _file(tmp_path, "k-cell-B.csv", K_LEVELS.replace("13060.0", "13061.0"))
    assert catalog.import_file(changed, sample="k-cell").dataset == "k-cell/k-cell-B"


def test_cli_refuses_a_repeated_file_and_again_imports_it(tmp_path):
    db = f"sqlite:///{tmp_path / 's.sqlite'}"
    runner = CliRunner()
    path = _file(tmp_path, "k.csv", K_LEVELS)
    assert runner.invoke(main, ["--db", db, "init"]).exit_code == 0
    assert runner.invoke(main, ["--db", db, "import", str(path)]).exit_code == 0
    refused = runner.invoke(main, ["--db", db, "import", str(path)])
    assert refused.exit_code != 0 and "--again" in refused.output
    again = runner.invoke(main, ["--db", db, "import", str(path), "--again"])
    assert again.exit_code == 0, again.output
    assert "'k (2)'" in again.output


@pytest.mark.parametrize("bad", ["k#1", "=HYPERLINK(1)", "@x", "-minus"])
def test_explicit_bad_names_are_refused_naming_the_field(catalog, tmp_path, bad):
    path = _file(tmp_path, "k.csv", K_LEVELS)
    with pytest.raises(InputFileError) as caught:
        catalog.import_file(path, dataset=bad)
    assert caught.value.problems[0].field == "dataset"
    in_file = _file(tmp_path, "k2.csv", K_LEVELS.replace("unc_cm1\n", "unc_cm1,dataset\n")
                    .replace("0.01\n", f"0.01,\"{bad}\"\n").replace("0.02\n", f"0.02,\"{bad}\"\n"))
    with pytest.raises(InputFileError) as caught:
        catalog.import_file(in_file)
    assert caught.value.problems[0].field == "dataset"
    with pytest.raises(Exception, match="no dataset|not found|No dataset"):
        catalog.dataset_info(bad)


def test_file_stems_and_samples_become_plain_names(catalog, tmp_path):
    report = catalog.import_file(_file(tmp_path, "=run#3.csv", K_LEVELS), sample="@k cell")
    assert report.dataset == "k cell/=run (3)"


def test_exported_dataset_column_survives_pandas_comment_reader(tmp_path):
    db = f"sqlite:///{tmp_path / 's.sqlite'}"
    runner = CliRunner()
    path = _file(tmp_path, "k-cell-A.csv", K_LEVELS)
    runner.invoke(main, ["--db", db, "init"])
    for extra in ([], ["--again"]):
        result = runner.invoke(main, ["--db", db, "import", str(path), "--sample", "k-cell", *extra])
        assert result.exit_code == 0, result.output
    out = tmp_path / "k.csv"
    result = runner.invoke(main, ["--db", db, "show", "K I", "--dataset", "k-cell/k-cell-A (2)", "--format", "csv",
                                  "--output", str(out)])
    assert result.exit_code == 0, result.output
    frame = pd.read_csv(out, comment="#")
    assert list(frame["dataset"]) == ["k-cell/k-cell-A (2)"] * 3


def _store_at_0002(engine) -> None:
    database.upgrade(engine, "0002")
    now = dt.datetime(2026, 12, 1, tzinfo=dt.UTC)
    names = [(1, "k-cell/k-cell-A"), (2, "k-cell/k-cell-A#2"), (3, "=SUM(1)"), (4, "two\nlines"),
             (5, "x (5)"), (6, "x#5"), (7, "@@"), (8, "fine name")]
    with engine.begin() as conn:
        conn.execute(text("INSERT INTO species (id, z, charge, mass_number, name) VALUES (1, 19, 0, 39, 'K I')"))
        for did, name in names:
            conn.execute(text("INSERT INTO datasets (id, name, kind, method, method_version, citation, author, "
                              "description, options_json, created_at, retracted) VALUES "
                              "(:i, :n, 'measured', 'file import', '', '', 't', '', '{}', :t, 0)"),
                         {"i": did, "n": name, "t": now})
            conn.execute(text("INSERT INTO levels (id, dataset_id, species_id, label, configuration, term, two_j, g, "
                              "parity, energy_cm1) VALUES (:i, :i, 1, '4s 2S1/2', '4s', '2S', 1, 2, 1, 0)"),
                         {"i": did})
        if engine.dialect.name == "postgresql":
            for table in ("species", "datasets", "levels"):
                conn.execute(text(f"SELECT setval(pg_get_serial_sequence('{table}', 'id'), "
                                  f"(SELECT max(id) FROM {table}))"))


def test_migration_0003_renames_and_audits_and_adds_the_hash_column(store_url):
    engine = database.make_engine(store_url)
    try:
        _store_at_0002(engine)
        before = database.dump(engine, tables=("levels",))
        assert database.upgrade(engine, "0003") == "0003"   # the revision under test; 0004 adds a column
        assert database.dump(engine, tables=("levels",)) == before
        with engine.connect() as conn:
            rows = dict(conn.execute(text("SELECT id, name FROM datasets")).all())
            hashes = conn.execute(text("SELECT content_sha256 FROM datasets")).scalars().all()
            audit = conn.execute(text("SELECT target, actor FROM audit_log")).all()
        assert rows == {1: "k-cell/k-cell-A", 2: "k-cell/k-cell-A (2)", 3: "SUM(1)", 4: "two lines",
                        5: "x (5)", 6: "x (5) (6)", 7: "dataset", 8: "fine name"}
        assert hashes == [None] * 8
        assert sorted(t for t, _ in audit) == sorted(f"dataset {rows[i]}" for i in (2, 3, 4, 6, 7))
        assert {a for _, a in audit} == {"levels init (migration 0003)"}
        assert all(queries.dataset_name_problem(n) is None for n in rows.values())
    finally:
        engine.dispose()


def test_export_store_carries_the_content_hash(catalog, tmp_path):
    from levels.catalog import Catalog

    catalog.import_file(_file(tmp_path, "k.csv", K_LEVELS), sample="k-cell")
    target = tmp_path / "store.levels"
    backup.export_store(catalog.engine, target)
    other = Catalog(f"sqlite:///{tmp_path / 'copy.sqlite'}", actor="pytest")
    try:
        other.init()
        backup.import_store(other.engine, target)
        with other.engine.connect() as conn:
            digest = conn.execute(text("SELECT content_sha256 FROM datasets WHERE name = 'k-cell/k'")).scalar()
        assert digest is not None and len(digest) == 64
        with pytest.raises(AlreadyExistsError):  # the copy still knows the file
            other.import_file(_file(tmp_path, "k.csv", K_LEVELS), sample="k-cell")
    finally:
        other.close()
