"""Exports by contract: every format read back by pandas and astropy equals the store, value and type
(issue 14, item 3). Levels and lines are INVENTED (random energies of a potassium-like sample)."""

from __future__ import annotations

import json
import math
import os
import stat

import numpy as np
import pandas as pd
import pytest
from astropy import units as u
from astropy.table import QTable, Table, vstack
from click.testing import CliRunner
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from levels.catalog import LEVEL_COLUMNS, LINE_LIST_COLUMNS, Catalog, LineQuery, add_ritz_columns
from levels.cli import main
from levels.io.tables import COLUMN_CONTRACT, column_type

LEVEL_HEADER = "spectrum,configuration,term,j,energy_cm1,unc_cm1\n"
LINE_HEADER = "spectrum,lower,upper,wavelength_nm,medium,unc_nm,a_per_s,f_abs\n"


def _levels_file(spectrum: str, energies: list[float], uncs: list[float]) -> str:
    """ns 2S1/2 and np 2P°1/2,3/2 levels: INVENTED energies (ground 4s at 0)."""
    rows = [f"{spectrum},4s,2S,1/2,0,0.001"]
    for i, (e, unc) in enumerate(zip(energies, uncs)):
        n = 4 + i // 3
        kind = i % 3
        if kind == 0:
            rows.append(f"{spectrum},{n}p,2P°,1/2,{e!r},{unc!r}")
        elif kind == 1:
            rows.append(f"{spectrum},{n}p,2P°,3/2,{e!r},{unc!r}")
        else:
            rows.append(f"{spectrum},{n + 1}s,2S,1/2,{e!r},{unc!r}")
    return LEVEL_HEADER + "\n".join(rows) + "\n"


def _run(runner, db, *args):
    result = runner.invoke(main, ["--db", db, *args])
    assert result.exit_code == 0, result.output
    return result


def _same(stored, read) -> bool:
    """One cell: the store's value against what a reader gave (None, NaN, masked and "" are "missing")."""
    missing_read = read is None or read is np.ma.masked or (isinstance(read, float) and math.isnan(read)) or read == ""
    if stored is None or (isinstance(stored, float) and math.isnan(stored)) or stored == "":
        return missing_read
    if isinstance(stored, float) and math.isinf(stored):
        return read == stored
    if isinstance(stored, (int, float)) and not isinstance(stored, bool):
        return not missing_read and float(read) == float(stored)
    return str(read) == str(stored)


def _check_pandas(path, rows, columns):
    frame = pd.read_csv(path, comment="#", float_precision="round_trip", keep_default_na=False,
                        na_values=[""])
    assert list(frame.columns) == list(columns)
    assert len(frame) == len(rows)
    for col in columns:
        kind = frame[col].dtype.kind
        dtype = column_type(col)
        present = [r.get(col) for r in rows if r.get(col) not in (None, "")]
        if dtype == "float64":
            assert kind == "f", (col, frame[col].dtype)
        elif dtype == "int64" and present:
            assert kind in "if", (col, frame[col].dtype)
        elif dtype == "string" and present:
            assert kind == "O", (col, frame[col].dtype)
        for stored, read in zip((r.get(col) for r in rows), frame[col].tolist()):
            assert _same(stored, read), (col, stored, read)


def _check_json(path, rows, columns, key):
    payload = json.loads(path.read_text(encoding="utf-8"))
    assert payload["columns"] == list(columns)
    got = payload[key]
    assert len(got) == len(rows)
    for stored, read in zip(rows, got):
        for col in columns:
            value = read[col]
            dtype = column_type(col)
            if value is not None:  # the JSON type is the contract's, whatever the value
                assert isinstance(value, {"float64": float, "int64": int, "string": str}[dtype]), (col, value)
            assert _same(stored.get(col), value), (col, stored.get(col), value)


def _check_astropy(path, rows, columns):
    table = Table.read(path, format="ascii.ecsv")
    assert table.colnames == list(columns) and len(table) == len(rows)
    for col in columns:
        dtype, unit = COLUMN_CONTRACT[col]
        kind = table[col].dtype.kind
        assert kind == {"float64": "f", "int64": "i", "string": "U"}[dtype], (col, table[col].dtype)
        if unit:
            assert table[col].unit == u.Unit(unit), col
        for stored, read in zip((r.get(col) for r in rows), table[col].tolist()):
            assert _same(stored, read), (col, stored, read)
    qtable = QTable.read(path, format="ascii.ecsv")
    for col in columns:
        if COLUMN_CONTRACT[col][1]:
            assert isinstance(qtable[col], u.Quantity), col
    return table


@pytest.mark.slow
@settings(max_examples=3, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(energies=st.lists(st.floats(1000.0, 30000.0, allow_nan=False).map(lambda x: round(x, 4)),
                         min_size=2, max_size=6, unique=True),
       seed=st.integers(0, 2**16), with_rates=st.booleans())
def test_every_export_reads_back_equal_to_the_store(tmp_path_factory, energies, seed, with_rates):
    rng = np.random.default_rng(seed)
    tmp = tmp_path_factory.mktemp("rt")
    db = f"sqlite:///{tmp / 'store.sqlite'}"
    runner = CliRunner()
    _run(runner, db, "init")
    uncs = [float(round(x, 4)) for x in rng.uniform(0.001, 0.05, len(energies))]
    levels_path = tmp / "k-sample.csv"
    levels_path.write_text(_levels_file("K I", energies, uncs), encoding="utf-8")
    _run(runner, db, "import", str(levels_path), "--sample", "k-cell")
    if with_rates:  # measured vacuum lines on the Ritz value of the 4s - 4p pairs, with invented A and f
        lines = []
        for i, e in enumerate(energies[:2]):
            label = "4p 2P°1/2" if i == 0 else "4p 2P°3/2"
            lines.append(f"K I,4s 2S1/2,{label},{1e7 / e!r},vacuum,0.001,{float(rng.uniform(1e6, 1e8))!r},"
                         f"{float(rng.uniform(0.01, 1))!r}")
        lines_path = tmp / "k-lines.csv"
        lines_path.write_text(LINE_HEADER + "\n".join(lines) + "\n", encoding="utf-8")
        _run(runner, db, "import", str(lines_path), "--sample", "k-cell")

    catalog = Catalog(db, actor="pytest")
    try:
        level_rows = catalog.level_rows("K I")
        line_rows, _ = catalog.species_lines(LineQuery(spectrum="K I", medium="vacuum"))
        add_ritz_columns(line_rows, "vacuum")
    finally:
        catalog.close()
    assert line_rows, "the invented levels imply E1 lines"

    for fmt in ("csv", "json", "ecsv"):
        out = tmp / f"levels.{fmt}"
        _run(runner, db, "show", "K I", "--format", fmt, "--output", str(out))
        lines_out = tmp / f"lines.{fmt}"
        _run(runner, db, "lines", "K I", "--medium", "vacuum", "--format", fmt, "--output", str(lines_out))
        if fmt == "csv":
            _check_pandas(out, level_rows, LEVEL_COLUMNS)
            _check_pandas(lines_out, line_rows, LINE_LIST_COLUMNS)
        elif fmt == "json":
            _check_json(out, level_rows, LEVEL_COLUMNS, "rows")
            _check_json(lines_out, line_rows, LINE_LIST_COLUMNS, "lines")
        else:
            _check_astropy(out, level_rows, LEVEL_COLUMNS)
            _check_astropy(lines_out, line_rows, LINE_LIST_COLUMNS)


def test_ecsv_exports_of_different_species_and_datasets_vstack(tmp_path):
    """One export with rates, one without (empty a_per_s, f_abs, line_strength_au, computed unc_nm)."""
    db = f"sqlite:///{tmp_path / 'store.sqlite'}"
    runner = CliRunner()
    _run(runner, db, "init")
    levels_path = tmp_path / "k.csv"
    levels_path.write_text(_levels_file("K I", [13000.0, 13060.0, 21000.0], [0.01, 0.01, 0.02]), encoding="utf-8")
    _run(runner, db, "import", str(levels_path))
    _run(runner, db, "hydrogenic", "He II", "--n-max", "3")
    tables = []
    for spectrum, name in (("K I", "k.ecsv"), ("He II", "he.ecsv")):
        _run(runner, db, "lines", spectrum, "--format", "ecsv", "--output", str(tmp_path / name))
        tables.append(QTable.read(tmp_path / name, format="ascii.ecsv"))
    assert tables[0]["a_per_s"].unit == u.Unit("s-1")
    both = vstack(tables, metadata_conflicts="silent")
    assert len(both) == len(tables[0]) + len(tables[1])
    assert both["line_strength_au"].unit.is_equivalent(u.C ** 2 * u.m ** 2)
    assert both["vacuum_nm"].to(u.um).unit == u.um
    # the He II rates survive the stack; the K I rows stay empty (masked), not strings
    assert np.isfinite(np.asarray(both["a_per_s"][len(tables[0]):].value, dtype=float)).all()


def test_export_files_get_the_umask_mode(tmp_path):
    db = f"sqlite:///{tmp_path / 'store.sqlite'}"
    runner = CliRunner()
    _run(runner, db, "init")
    levels_path = tmp_path / "k.csv"
    levels_path.write_text(_levels_file("K I", [13000.0, 13060.0], [0.01, 0.01]), encoding="utf-8")
    _run(runner, db, "import", str(levels_path))
    old = os.umask(0o022)
    try:
        out = tmp_path / "lines.csv"
        _run(runner, db, "lines", "K I", "--format", "csv", "--output", str(out))
        assert stat.S_IMODE(out.stat().st_mode) == 0o644
        os.umask(0o027)
        out2 = tmp_path / "lines2.ecsv"
        _run(runner, db, "lines", "K I", "--format", "ecsv", "--output", str(out2))
        assert stat.S_IMODE(out2.stat().st_mode) == 0o640
    finally:
        os.umask(old)
