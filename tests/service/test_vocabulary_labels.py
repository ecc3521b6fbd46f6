"""One vocabulary for people (issue 18, item 4): labels from levels.service.vocabulary.LABELS everywhere."""

from click.testing import CliRunner

from levels.catalog import LEVEL_COLUMNS, LINE_COLUMNS
from levels.cli import main
from levels.service.vocabulary import LABELS, label


def test_each_label_names_one_quantity():
    # keys that are one quantity under two contract names: uncertainties in cm-1 beside their value, and the
    # observed wavelength (obs_nm of line lists, observed_nm of the optimize report)
    same = {"ionization_unc_cm1", "limit_unc_cm1", "observed_nm"}
    values = [v for k, v in LABELS.items() if k not in same]
    assert len(values) == len(set(values)), "two quantities share a label"
    assert label("a_per_s") != label("mass_number") and "A" != label("a_per_s")
    assert "lande" not in label("g").lower() and "Landé" in label("lande_g")
    assert all(k in LABELS for k in LINE_COLUMNS) and all(k in LABELS for k in LEVEL_COLUMNS)


def test_cli_tables_use_labels_files_keep_keys(tmp_path):
    db = str(tmp_path / "s.sqlite")
    runner = CliRunner()
    assert runner.invoke(main, ["--db", db, "init"]).exit_code == 0
    assert runner.invoke(main, ["--db", db, "hydrogenic", "H I", "--n-max", "3"]).exit_code == 0
    table = runner.invoke(main, ["--db", db, "lines", "H I", "--from", "600nm", "--to", "700nm"]).output
    header = table.splitlines()[0]
    for key in ("a_per_s", "g_lower", "g_upper", "multipole", "vacuum_nm"):
        assert label(key) in header
    assert "a_per_s" not in header and "g_lower" not in header
    shown = runner.invoke(main, ["--db", db, "show", "H I"]).output
    assert " odd " in shown and " even " in shown and label("lande_g") in shown
    csv = runner.invoke(main, ["--db", db, "lines", "H I", "--from", "600nm", "--to", "700nm", "--format", "csv"])
    header = next(line for line in csv.output.splitlines() if not line.startswith("#"))
    assert header.split(",")[: len(LINE_COLUMNS)] == list(LINE_COLUMNS)


def test_air_formula_named_by_author_old_name_accepted(tmp_path):
    from levels.service.vocabulary import air_formula_code

    assert air_formula_code("morton2000") == air_formula_code("iau2000") == "iau2000"
    db = str(tmp_path / "s.sqlite")
    runner = CliRunner()
    runner.invoke(main, ["--db", db, "init"])
    runner.invoke(main, ["--db", db, "hydrogenic", "H I", "--n-max", "3"])
    outputs = [runner.invoke(main, ["--db", db, "lines", "H I", "--from", "650nm", "--to", "660nm", "--format", "csv",
                                    "--air-formula", name]) for name in ("morton2000", "iau2000")]
    assert all(o.exit_code == 0 for o in outputs)
    rows = [[line for line in o.output.splitlines() if line.startswith("H I,")] for o in outputs]
    assert rows[0] and rows[0] == rows[1]
    assert "morton2000" in runner.invoke(main, ["lines", "--help"]).output
