"""Import of 100,000 measured lines with ``levels import``, against raw sqlite3 inserting the same rows.

The files are INVENTED (:mod:`tests.reliability.bigfiles`: six invented Rydberg atoms
to n = 52, and 100,000 E1 pairs between their levels). A template SQLite store holds the
levels (imported once, not timed); each timed run starts from a copy of it.

* Figure: wall time of ``python -m levels --db STORE import lines.csv`` in a fresh process
  (interpreter start-up and the project's import included, as a user sees it; the import
  validates every row, checks each line against its levels, writes the dataset in one
  transaction and rebuilds the derived lines of the species it touches).
* Baseline, measured in the same run: the least a database import of the file can cost here:
  ``csv`` parsing and one ``sqlite3`` ``executemany`` of the same 100,000 rows (level ids
  looked up by spectrum and label, no validation) into a two-table SQLite file, committed.

Ratio = baseline / figure (how many times slower the tool is than the bare insert is
1 / ratio). Best of ``LEVELS_BENCH_IMPORT_REPEAT`` runs (default 2) each.
"""

from __future__ import annotations

import csv
import os
import shutil
import sqlite3
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from tests.bench.harness import BenchResult
from tests.reliability import bigfiles

ROOT = Path(__file__).resolve().parents[2]
REPEAT = int(os.environ.get("LEVELS_BENCH_IMPORT_REPEAT", "2"))
N_LINES = bigfiles.LINES


def _levels_cli(db: Path, *args: str) -> float:
    """Run ``levels --db db ARGS`` in a fresh process; return its wall time (s); raise if it fails."""
    env = dict(os.environ, PYTHONWARNINGS="ignore")
    start = time.perf_counter()
    done = subprocess.run([sys.executable, "-m", "levels", "--db", str(db), *args], cwd=str(ROOT), env=env,
                          capture_output=True, text=True)
    elapsed = time.perf_counter() - start
    if done.returncode != 0:
        raise RuntimeError(f"levels {' '.join(args)} failed ({done.returncode}): {done.stderr.strip()[-2000:]}")
    return elapsed


def _copy_store(template: Path, target: Path) -> None:
    for suffix in ("", "-wal", "-shm"):
        source = Path(str(template) + suffix)
        if source.exists():
            shutil.copyfile(source, Path(str(target) + suffix))


def _raw_insert(levels_csv: Path, lines_csv: Path, target: Path) -> tuple[float, int]:
    """The baseline: parse both files with ``csv`` and insert them with ``sqlite3``; time only the lines."""
    con = sqlite3.connect(target)
    try:
        con.execute("CREATE TABLE level (id INTEGER PRIMARY KEY, spectrum TEXT, label TEXT, energy_cm1 REAL,"
                    " UNIQUE (spectrum, label))")
        con.execute("CREATE TABLE line (id INTEGER PRIMARY KEY, lower_id INTEGER REFERENCES level(id),"
                    " upper_id INTEGER REFERENCES level(id), wavelength_nm REAL, medium TEXT, unc_nm REAL)")
        with levels_csv.open(encoding="utf-8") as handle:
            rows = [r for r in csv.reader(line for line in handle if not line.startswith("#"))][1:]
        con.executemany("INSERT INTO level (spectrum, label, energy_cm1) VALUES (?, ?, ?)",
                        [(s, f"{c} {t}{j}", float(e)) for s, c, t, j, e in rows])
        con.commit()
        start = time.perf_counter()
        ids = {(s, label): i for i, s, label in con.execute("SELECT id, spectrum, label FROM level")}
        with lines_csv.open(encoding="utf-8") as handle:
            reader = csv.reader(line for line in handle if not line.startswith("#"))
            next(reader)
            values = [(ids[(s, lo)], ids[(s, up)], float(nm), medium, float(unc))
                      for s, lo, up, nm, medium, unc in reader]
        con.executemany("INSERT INTO line (lower_id, upper_id, wavelength_nm, medium, unc_nm) VALUES (?, ?, ?, ?, ?)",
                        values)
        con.commit()
        elapsed = time.perf_counter() - start
        count = con.execute("SELECT count(*) FROM line").fetchone()[0]
    finally:
        con.close()
    return elapsed, count


def bench_import_100k_lines() -> BenchResult:
    """``levels import`` of 100,000 measured lines (fresh process) against csv + sqlite3 executemany."""
    with tempfile.TemporaryDirectory(prefix="levels-bench-import-") as name:
        folder = Path(name)
        levels_csv, lines_csv = folder / "atoms.csv", folder / "lines.csv"
        n_levels = bigfiles.write_levels(levels_csv)
        assert bigfiles.write_lines(lines_csv) == N_LINES
        template = folder / "template.sqlite"
        _levels_cli(template, "init")
        t_levels = _levels_cli(template, "import", str(levels_csv))
        figures, baselines = [], []
        for run in range(REPEAT):
            store = folder / f"run{run}.sqlite"
            _copy_store(template, store)
            figures.append(_levels_cli(store, "import", str(lines_csv)))
            raw, count = _raw_insert(levels_csv, lines_csv, folder / f"raw{run}.sqlite")
            assert count == N_LINES
            baselines.append(raw)
        # an empty run of the command line: what start-up alone costs (part of the figure)
        startup = min(_levels_cli(template, "where") for _ in range(2))
    return BenchResult(
        name="import_100k_measured_lines", figure=min(figures), baseline=min(baselines), unit="s",
        details={"lines": N_LINES, "levels_in_store": n_levels, "runs": REPEAT,
                 "figure_runs_s": figures, "baseline_runs_s": baselines,
                 "cli_startup_s": startup, "levels_import_s": t_levels,
                 "lines_per_s": N_LINES / min(figures),
                 "load_average_1min": os.getloadavg()[0],
                 "baseline": "csv.reader + one sqlite3 executemany of the same rows, no validation; "
                             "figure: `levels import` in a fresh process (start-up included)"},
    )


if __name__ == "__main__":
    result = bench_import_100k_lines()
    print(result.name, result.as_dict())
