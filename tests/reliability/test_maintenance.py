"""Audit log and undo: every write is logged; retract and restore hide and bring back datasets atomically."""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner
from sqlalchemy import select

from levels.catalog import LineQuery
from levels.cli import main
from levels.errors import NotFoundError
from levels.io.records import validate_levels
from levels.service import maintenance
from levels.store import database, integrity
from levels.store.schema import AuditEntry

from .conftest import DEMO


def _audit(catalog) -> list[tuple[str, str, str]]:
    return catalog.read(lambda s: [(a.action, a.target, a.actor) for a in
                                   s.scalars(select(AuditEntry).order_by(AuditEntry.id))])


def _derived(catalog, spectrum="Li I A=7") -> int:
    rows = [r for r in catalog.dataset_rows() if r["name"] == f"derived lines {spectrum}"]
    return rows[0]["lines"] if rows else 0


def test_every_catalog_write_records_one_audit_entry(catalog):
    steps = [
        (lambda: catalog.compute_hydrogenic("H I", n_max=4), ("compute-hydrogenic", "dataset hydrogenic H I A=1")),
        (lambda: catalog.import_file(DEMO / "sample-li-cell.csv", sample="s", dataset="li/levels"),
         ("import-levels", "dataset li/levels")),
        (lambda: catalog.import_file(DEMO / "lines-li-cell.csv", dataset="li/lines"),
         ("import-lines", "dataset li/lines")),
        (lambda: catalog.fit_limit("Li I", ["ns 2S1/2"], n_min=4), ("fit-limit", "dataset series limit Li I A=7")),
        (lambda: catalog.create_sample("cell-9", gas_fill="Ne"), ("create-sample", "sample cell-9")),
        (lambda: catalog.add_levels("li/levels", validate_levels(
            [(1, {"spectrum": "Li I", "configuration": "1s2.30s", "term": "2S", "j": "1/2", "energy_cm1": "42800"})],
            source="<form>")), ("add-levels", "dataset li/levels")),
        (lambda: catalog.import_dataset(validate_levels(
            [(1, {"spectrum": "Na I", "configuration": "3s", "term": "2S", "j": "1/2", "energy_cm1": "0"})],
            source="<api>"), [], name="na/api", source="<api>"), ("import-dataset", "dataset na/api")),
        (lambda: maintenance.retract_dataset(catalog, "li/lines", reason="r"), ("retract-dataset", "dataset li/lines")),
        (lambda: maintenance.restore_dataset(catalog, "li/lines"), ("restore-dataset", "dataset li/lines")),
    ]
    for run, (action, target) in steps:
        before = _audit(catalog)
        run()
        after = _audit(catalog)
        assert after[:-1] == before and after[-1] == (action, target, "pytest")


def test_recompute_lines_records_an_audit_entry(catalog):
    catalog.import_file(DEMO / "sample-li-cell.csv", dataset="li/levels")
    before = _audit(catalog)
    count = catalog.recompute_lines("Li I")
    after = _audit(catalog)
    assert count == _derived(catalog) > 0
    assert after[:-1] == before and after[-1][:2] == ("recompute-lines", "species Li I")


def test_importing_measured_lines_rebuilds_the_derived_lines(catalog):
    # a measured E1 line stands beside the derived (Ritz) line of the same two levels, which is noted
    # as such (issue 19: a measured line never hides the Ritz line of its pair)
    levels = catalog.import_file(DEMO / "sample-li-cell.csv", dataset="li/levels")
    assert _derived(catalog) == levels.lines > 0
    measured = catalog.import_file(DEMO / "lines-li-cell.csv", dataset="li/lines")
    rows, _ = catalog.line_rows(LineQuery(spectrum="Li I", datasets=("li/lines",)))
    pairs = {(r["lower_id"], r["upper_id"]) for r in rows if r["multipole"] == "E1"}
    assert measured.lines == len(rows) and pairs
    assert _derived(catalog) == levels.lines
    derived, _ = catalog.line_rows(LineQuery(spectrum="Li I", datasets=("derived lines Li I A=7",)))
    assert {(r["lower_id"], r["upper_id"]) for r in derived if r["note"]} == pairs
    maintenance.retract_dataset(catalog, "li/lines", reason="check")
    assert _derived(catalog) == levels.lines


@pytest.fixture
def li(catalog):
    levels = catalog.import_file(DEMO / "sample-li-cell.csv", sample="cell", dataset="li/levels")
    catalog.import_file(DEMO / "lines-li-cell.csv", sample="cell", dataset="li/lines")
    catalog.compute_hydrogenic("H I", n_max=3)
    return catalog, levels


def test_retract_hides_levels_keeps_rows_and_restore_brings_them_back(li):
    catalog, levels = li
    counts_before = integrity.inspect_store(catalog.engine).counts
    assert len(catalog.level_rows("Li I")) == 53
    derived_before = _derived(catalog)
    assert derived_before == levels.lines > 0  # the 40 measured E1 pairs keep their Ritz lines too

    result = maintenance.retract_dataset(catalog, "li/levels", reason="cell leaked")
    assert result["retracted"] is True and result["species"] == ["Li I"] and result["derived_lines"] == {"Li I": 0}
    assert result["warnings"] == ["40 lines of dataset 'li/lines' join levels of 'li/levels'; they stay in "
                                  "'li/lines' (retract it too if they should go)"]
    assert catalog.level_rows("Li I") == []
    assert len(catalog.level_rows("Li I", ["li/levels"])) == 53  # named explicitly, still there
    assert "li/levels" not in [r["name"] for r in catalog.dataset_rows()]
    assert "li/levels" in [r["name"] for r in catalog.dataset_rows(include_retracted=True)]
    assert _derived(catalog) == 0
    counts = integrity.inspect_store(catalog.engine).counts
    assert counts["levels"] == counts_before["levels"]  # nothing deleted
    assert integrity.check_store(catalog.engine) == []

    maintenance.restore_dataset(catalog, "li/levels")
    assert len(catalog.level_rows("Li I")) == 53
    rebuilt = _derived(catalog)
    # restore rebuilds the same lines a fresh recompute gives
    assert rebuilt == catalog.recompute_lines("Li I") > 0
    assert integrity.check_store(catalog.engine) == []
    actions = [a for a, _, _ in _audit(catalog)][-3:]
    assert actions == ["retract-dataset", "restore-dataset", "recompute-lines"]


def test_retracting_measured_lines_gives_their_pairs_back_to_the_derived_set(li):
    catalog, levels = li
    rows, total = catalog.line_rows(LineQuery(spectrum="Li I", datasets=("li/lines",)))
    assert total == 40
    maintenance.retract_dataset(catalog, "li/lines")
    # with the measured lines hidden, the derived set is again what the levels alone imply
    assert _derived(catalog) == levels.lines
    rows, total = catalog.line_rows(LineQuery(spectrum="Li I"))
    assert all(r["dataset"] != "li/lines" for r in rows)


@pytest.mark.parametrize("name, error, message", [
    ("hydrogenic H I A=1", maintenance.DatasetStateError, "is computed; only measured or imported"),
    ("derived lines Li I A=7", maintenance.DatasetStateError, "is computed"),
    ("no such set", NotFoundError, "no dataset 'no such set'"),
])
def test_refused_retractions_change_nothing(li, name, error, message):
    catalog, _ = li
    before = database.dump(catalog.engine)
    with pytest.raises(error, match=message):
        maintenance.retract_dataset(catalog, name)
    assert database.dump(catalog.engine) == before


def test_retract_twice_and_restore_unretracted_are_refused(li):
    catalog, _ = li
    with pytest.raises(maintenance.DatasetStateError, match="is not retracted"):
        maintenance.restore_dataset(catalog, "li/levels")
    maintenance.retract_dataset(catalog, "li/levels")
    before = database.dump(catalog.engine)
    with pytest.raises(maintenance.DatasetStateError, match="is already retracted"):
        maintenance.retract_dataset(catalog, "li/levels")
    assert database.dump(catalog.engine) == before


def test_retract_is_all_or_nothing(li, monkeypatch):
    catalog, _ = li
    before = database.dump(catalog.engine)

    def broken(session, species, actor):
        raise RuntimeError("crash while rebuilding the derived lines")

    monkeypatch.setattr(maintenance, "store_derived_lines", broken)
    with pytest.raises(RuntimeError):
        maintenance.retract_dataset(catalog, "li/levels")
    assert database.dump(catalog.engine) == before


def test_retract_by_id(li):
    catalog, levels = li
    result = maintenance.retract_dataset(catalog, str(levels.dataset_id))
    assert result["dataset"] == "li/levels"


def test_history_newest_first_with_filters(li):
    catalog, _ = li
    rows = maintenance.history(catalog)
    assert [r["action"] for r in rows] == ["compute-hydrogenic", "import-lines", "import-levels"]
    assert list(rows[0]) == list(maintenance.HISTORY_COLUMNS)
    assert rows[0]["at"].endswith("Z") and rows[0]["detail"]["n_max"] == 3
    assert [r["action"] for r in maintenance.history(catalog, limit=1)] == ["compute-hydrogenic"]
    assert [r["target"] for r in maintenance.history(catalog, action="import-lines")] == ["dataset li/lines"]
    assert [r["target"] for r in maintenance.history(catalog, target="li/le")] == ["dataset li/levels"]
    assert maintenance.history(catalog, target="%") == []  # LIKE wildcards are plain text


def test_cli_retract_restore_history(li):
    catalog, _ = li
    runner = CliRunner()
    result = runner.invoke(main, ["--db", catalog.url, "retract", "li/levels", "--reason", "leak"])
    assert result.exit_code == 0, result.output
    assert "retracted dataset 'li/levels'" in result.output and "derived lines rebuilt (Li I: 0 lines)" in result.output
    assert "warning: 40 lines of dataset 'li/lines'" in result.output
    shown = runner.invoke(main, ["--db", catalog.url, "show", "Li I"])
    assert "1s2.2s 2S1/2" not in shown.output
    again = runner.invoke(main, ["--db", catalog.url, "retract", "li/levels"])
    assert again.exit_code == 1 and "error: dataset 'li/levels' is already retracted" in again.output
    result = runner.invoke(main, ["--db", catalog.url, "restore", "li/levels"])
    assert result.exit_code == 0 and "restored dataset 'li/levels'" in result.output
    table = runner.invoke(main, ["--db", catalog.url, "history", "--limit", "2"])
    assert table.exit_code == 0
    body = table.output.splitlines()
    assert body[0].split() == ["id", "at", "actor", "action", "target", "detail"]
    assert "restore-dataset" in body[2] and "retract-dataset" in body[3] and '"reason": "leak"' in body[3]
    as_json = json.loads(runner.invoke(main, ["--db", catalog.url, "history", "--format", "json",
                                              "--action", "retract-dataset"]).output)
    assert len(as_json) == 1 and as_json[0]["detail"]["reason"] == "leak"
    assert as_json[0]["detail"]["lines_of_other_datasets"] == {"li/lines": 40}
