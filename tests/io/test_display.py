"""The display policy for numbers shown to people (issue 18, item 1)."""

from levels.io.display import column_style, format_column, format_rows, format_uncertainty, format_with_uncertainty
from levels.io.tables import format_table, format_text_table


def test_no_float_noise_and_exact_zero():
    cells = format_column([109678.77174237584, 0.0, -3.638e-12])
    assert cells == ["109678.77", "0", "0"]


def test_rounded_to_two_digits_of_uncertainty():
    assert format_with_uncertainty(12810.095139301811, 0.02422009211419176) == "12810.095 ± 0.024"
    assert format_uncertainty(0.02422009211419176) == "0.024"


def test_one_style_per_column():
    cells = format_column([71202.4362, 1183600.0, 0.0])
    assert not any("e+" in c for c in cells)
    cells = format_column([4.4e7, 6.3e5, 3.1e2])
    assert all("e" in c for c in cells)
    assert column_style([0.5, 2e-5]) == "scientific"


def test_fine_structure_components_stay_apart():
    # two levels 0.4 cm-1 apart near 3.7e6 cm-1 (C VI 4p-like magnitudes; invented values)
    a, b = format_column([3705112.61, 3705113.01])
    assert a != b


def test_text_table_uses_policy_and_exports_keep_precision():
    rows = [{"label": "x", "energy_cm1": 109678.77174237584, "unc_cm1": 0.02422009211419176}]
    text = format_text_table(rows, ["label", "energy_cm1", "unc_cm1"])
    assert "109678.772" in text and "0.024" in text and "109678.7717" not in text
    csv = format_table(rows, ["label", "energy_cm1", "unc_cm1"], "csv", {})
    assert "109678.77174237584" in csv


def test_rows_mixed_and_missing():
    assert format_rows([{"a": None, "b": "s"}, {"a": 1.5, "b": None}], ["a", "b"]) == [["", "s"], ["1.5", ""]]
