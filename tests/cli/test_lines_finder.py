"""Line-finder mode of ``levels lines`` (no SPECIES, a window): the export header's air formula is the values'."""

import csv
import io

import numpy as np
import pytest
from click.testing import CliRunner

from levels.cli import main
from levels.physics.lines import air


def _split(text):
    header = [line[2:] for line in text.splitlines() if line.startswith("# ")]
    body = "\n".join(line for line in text.splitlines() if not line.startswith("#"))
    return header, list(csv.DictReader(io.StringIO(body)))


@pytest.fixture
def run(catalog):
    catalog.compute_hydrogenic("H I", n_max=6)
    runner = CliRunner()

    def invoke(*args):
        result = runner.invoke(main, ["--db", catalog.url, *args], catch_exceptions=False)
        assert result.exit_code == 0, result.output
        return result.output

    return invoke


@pytest.mark.parametrize("formula", ["ciddor1996", "edlen1966", "iau2000"])
def test_finder_header_names_the_formula_of_the_values(run, formula):
    header, rows = _split(run("lines", "--from", "400nm", "--to", "700nm", "--medium", "air",
                              "--air-formula", formula, "--format", "csv"))
    assert [h for h in header if h.startswith("air_formula: ")] == [f"air_formula: {air.formula_description(formula)}"]
    assert len(rows) >= 4  # Balmer alpha..delta components of H I up to n = 6
    vacuum = np.array([float(r["vacuum_nm"]) for r in rows])
    got = np.array([float(r["air_nm"]) for r in rows])
    # the values are the asked formula's conversion of the vacuum wavelengths (physics module, same defaults)
    expected = np.asarray(air.vacuum_to_air(vacuum, formula))
    np.testing.assert_allclose(got, expected, rtol=0, atol=1e-9)
    assert ((got >= 400) & (got <= 700)).all()
    if formula != "iau2000":
        # the stored values are IAU ones; the two formulas differ by far more than the check's tolerance here
        assert np.abs(expected - np.asarray(air.vacuum_to_air(vacuum, "iau2000"))).min() > 1e-7


def test_finder_vacuum_window_is_unchanged(run):
    _, rows = _split(run("lines", "--from", "400nm", "--to", "700nm", "--medium", "vacuum", "--format", "csv"))
    assert rows and all(400 <= float(r["vacuum_nm"]) <= 700 for r in rows)
