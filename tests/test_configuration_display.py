"""Configurations shown with spaces (superscripts on the web); stored and typed forms unchanged (issue 18)."""

from click.testing import CliRunner

from levels.cli import main
from levels.notation import display_configuration, format_configuration, parse_configuration


def test_display_spaces_and_superscripts():
    assert display_configuration("1s2.2s2.2p6.3s") == "1s2 2s2 2p6 3s"
    assert display_configuration("1s2.2s2.2p6.3s", superscripts=True) == "1s² 2s² 2p⁶ 3s"
    # the displayed form parses back to the same configuration, and dots stay accepted
    shown = display_configuration("1s2.2s2.2p6.3s")
    assert parse_configuration(shown) == parse_configuration("1s2.2s2.2p6.3s")
    assert format_configuration(parse_configuration(shown)) == "1s2.2s2.2p6.3s"


def test_cli_table_shows_spaces_csv_keeps_dots(tmp_path):
    db = str(tmp_path / "s.sqlite")
    levels_csv = tmp_path / "levels.csv"
    # invented levels, marked as such
    levels_csv.write_text("spectrum,configuration,term,j,energy_cm1,unc_cm1\n"
                          "Na I,2p6.3s,2S,1/2,0,0.001\n"
                          "Na I,2p6.3p,2P°,1/2,16956.17,0.01\n", encoding="utf-8")
    runner = CliRunner()
    assert runner.invoke(main, ["--db", db, "init"]).exit_code == 0
    res = runner.invoke(main, ["--db", db, "import", str(levels_csv), "--sample", "invented test levels"])
    assert res.exit_code == 0, res.output
    table = runner.invoke(main, ["--db", db, "show", "Na I"]).output
    assert "2p6 3p" in table
    csv = runner.invoke(main, ["--db", db, "show", "Na I", "--format", "csv"]).output
    assert "2p6.3p" in csv and "2p6 3p" not in csv.split("\n", 1)[1].replace("# ", "")
