"""Clear messages without side effects: another isotope stored; a store path that does not exist
(issue 14, item 6)."""

from __future__ import annotations

import pytest
from click.testing import CliRunner

from levels.cli import main
from levels.errors import NotFoundError


def test_show_names_the_stored_isotopes(catalog):
    runner = CliRunner()
    result = runner.invoke(main, ["--db", catalog.url, "hydrogenic", "He II", "--mass-number", "4", "--n-max", "2"])
    assert result.exit_code == 0, result.output
    shown = runner.invoke(main, ["--db", catalog.url, "show", "3He II"])
    assert shown.exit_code != 0
    assert "no species He II A=3" in shown.output and "stored isotopes of He II: A = 4" in shown.output
    with pytest.raises(NotFoundError, match="stored isotopes of He II: A = 4"):
        catalog.level_rows("He II A=3")
    assert len(catalog.level_rows("He II")) > 0  # the one stored isotope is still found without a mass number


@pytest.mark.parametrize("args", [["import", "k.csv"], ["hydrogenic", "H I", "--n-max", "2"],
                                  ["show", "H I"], ["lines", "H I"], ["species"]])
def test_relative_store_path_that_does_not_exist_creates_no_file(tmp_path, monkeypatch, args):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "k.csv").write_text("spectrum,configuration,term,j,energy_cm1\nK I,4s,2S,1/2,0\n", encoding="utf-8")
    monkeypatch.setenv("LEVELS_DB", "stores/none.sqlite")
    result = CliRunner().invoke(main, args)
    assert result.exit_code != 0
    assert "no store file at" in result.output and "none.sqlite" in result.output
    assert not (tmp_path / "stores" / "none.sqlite").exists()
