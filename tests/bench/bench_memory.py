"""Peak memory of big level imports and of the derived-line rebuild, against the size of the result (issue 19, item 3).

Each case runs in a fresh Python process (so its peak resident set is its own): the
process imports the project, notes its resident set (``VmRSS``), does one unit of work
on a fresh SQLite store, and reports ``ru_maxrss`` (the peak). Figure: peak RSS minus
the RSS before the work, in bytes. Baseline: the size of the result, the growth of the
store file in bytes (levels, derived lines and their indexes) measured in the same run.
Ratio = baseline / figure (> 1: the work needed less memory than its result takes on disk).

Cases (every level here is INVENTED: round formulas, no real atom):

- ``import_1m_levels``: one file of 1,000,000 levels of one species, 999,998 even
  ``ks 2S1/2`` and 2 odd ``kp 2P°`` levels (1,999,996 E1 Ritz lines; the default guard of
  10,000,000 would admit 10 odd levels, but writing 10^7 lines takes ~15 minutes on the
  shared test machine, so the benchmark stops at 2 million).
- ``import_1m_levels_refused``: the same file with 38 odd levels (37,998,556 lines, the size
  of the issue's report): refused by the guard, naming the file and ``--max-derived-lines``.
- ``rebuild_20k_species``: ``recompute_lines`` of a species of 20,000 levels with J from 0
  to 40 and both parities at random (seeded; ~7 million E1 lines), its levels written
  directly beforehand, with the guard raised to admit its lines.

``LEVELS_BENCH_MEMORY_SCALE`` (default 1) scales the level counts down (0.1 runs in seconds).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np

from tests.bench.harness import BenchResult

ROOT = Path(__file__).resolve().parents[2]
SCALE = float(os.environ.get("LEVELS_BENCH_MEMORY_SCALE", "1"))


def write_even_odd_levels(path: Path, n_levels: int, n_odd: int, spectrum: str = "Na I") -> int:
    """INVENTED levels: ``n_levels - n_odd`` even ``ks 2S1/2`` and ``n_odd`` odd ``kp 2P°1/2|3/2``.

    E1 lines = even x odd.
    """
    n_even = n_levels - n_odd
    with path.open("w", encoding="utf-8") as out:
        out.write("# INVENTED levels (tests/bench/bench_memory.py)\nspectrum,configuration,term,j,energy_cm1\n")
        k = np.arange(n_even)
        energy = 0.03 * k  # cm-1, evenly spaced, invented
        block = 100_000
        for start in range(0, n_even, block):
            part = range(start, min(start + block, n_even))
            out.write("".join(f"{spectrum},{i + 1}s,2S,1/2,{energy[i]:.4f}\n" for i in part))
        for i in range(n_odd):
            out.write(f"{spectrum},{i + 2}p,2P°,{'1/2' if i % 2 == 0 else '3/2'},{40000.0 + 7.0 * i:.4f}\n")
    return n_levels


def write_complex_levels(path: Path, n_levels: int, j_max: int = 40, seed: int = 19,
                         spectrum: str = "Fe I") -> int:
    """INVENTED levels of a complex spectrum: integer J in 0..j_max and parity at random (seeded).

    Terms are chosen only to be valid for their J: ``5L`` with L = J (L = 2 for J = 0) up to
    L = 19, beyond that L = 19 and S = J - 19.
    """
    rng = np.random.default_rng(seed)
    j = rng.integers(0, j_max + 1, n_levels)
    odd = rng.random(n_levels) < 0.5
    energy = np.sort(rng.uniform(0.0, 60000.0, n_levels))
    energy[0] = 0.0
    letters = "SPDFGHIKLMNOQRTUVWXY"
    with path.open("w", encoding="utf-8") as out:
        out.write("# INVENTED levels (tests/bench/bench_memory.py)\nspectrum,configuration,term,j,energy_cm1\n")
        for i in range(n_levels):
            jj = int(j[i])
            if jj == 0:
                mult, big_l = 5, 2
            elif jj <= 19:
                mult, big_l = 5, jj
            else:
                mult, big_l = 2 * (jj - 19) + 1, 19
            config = f"3d6.4s.{i + 5}{'p' if odd[i] else 's'}"
            term = f"{mult}{letters[big_l]}{'°' if odd[i] else ''}"
            out.write(f"{spectrum},{config},{term},{jj},{energy[i]:.4f}\n")
    return n_levels


def store_levels_without_rebuild(store: Path, levels_file: Path) -> int:
    """Write a levels file's rows into a measured dataset directly (no derived-line rebuild), for the rebuild case."""
    from levels.io import records
    from levels.io.tables import read_delimited
    from levels.service import lookup
    from levels.store import database, queries
    from levels.store.schema import Level

    table = read_delimited(levels_file, source=levels_file.name)
    recs = records.validate_levels(table.rows, source=levels_file.name)
    engine = database.make_engine(store)

    def work(session):
        ds = queries.create_dataset(session, name="complex", kind="measured")
        species = lookup.get_or_create_species(session, recs[0].spectrum)
        rows = [{"dataset_id": ds.id, "species_id": species.id, "label": r.label, "configuration": r.configuration,
                 "term": r.term, "two_j": r.two_j, "g": r.two_j + 1, "parity": r.parity, "energy_cm1": r.energy_cm1,
                 "unc_cm1": r.unc_cm1, "multiplicity": r.multiplicity, "big_l": r.big_l, "n": r.n, "l": r.l,
                 "lifetime_s": None, "lande_g": None} for r in recs]
        queries.insert_full_rows(session, Level, rows)
        return len(rows)

    try:
        return database.run_in_transaction(engine, work)
    finally:
        engine.dispose()


def _measure(code: str) -> dict:
    """Run ``code`` in a fresh interpreter; it prints one JSON line, which is returned."""
    prelude = (
        "import json, os, resource, time\n"
        "import levels.catalog, levels.cli, levels.physics.lines.combination\n"
        "def rss():\n"
        "    for line in open('/proc/self/status'):\n"
        "        if line.startswith('VmRSS:'):\n"
        "            return int(line.split()[1]) * 1024\n"
        "before = rss()\n"
        "start = time.perf_counter()\n"
    )
    ending = (
        "\nout['seconds'] = time.perf_counter() - start\n"
        "out['rss_before'] = before\n"
        "out['peak_rss'] = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024\n"
        "print(json.dumps(out))\n"
    )
    result = subprocess.run([sys.executable, "-c", prelude + code + ending], cwd=ROOT, capture_output=True,
                            text=True, env={**os.environ, "PYTHONPATH": str(ROOT)}, check=False)
    if result.returncode != 0:
        raise RuntimeError(f"benchmark child failed: {result.stderr[-2000:]}")
    return json.loads(result.stdout.strip().splitlines()[-1])


def _store(folder: Path) -> Path:
    from levels.catalog import Catalog

    path = folder / "store.sqlite"
    catalog = Catalog(path)
    catalog.init()
    catalog.close()
    return path


def _result(name: str, run: dict, store_growth: int, details: dict) -> BenchResult:
    peak = run["peak_rss"] - run["rss_before"]
    details = {**details, "seconds": round(run["seconds"], 1), "peak_rss_bytes": run["peak_rss"],
               "rss_before_bytes": run["rss_before"], "store_growth_bytes": store_growth}
    if details.get("derived_lines"):
        details["peak_bytes_per_derived_line"] = round(peak / details["derived_lines"], 1)
    return BenchResult(name=name, figure=float(peak), baseline=float(store_growth), unit="bytes",
                       higher_is_better=False, details=details)


def _import_case(name: str, n_levels: int, n_odd: int, expect_refusal: bool) -> BenchResult:
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        levels_file = folder / "big-levels.csv"
        write_even_odd_levels(levels_file, n_levels, n_odd)
        store = _store(folder)
        size0 = store.stat().st_size + sum(p.stat().st_size for p in folder.glob("store.sqlite-*"))
        run = _measure(
            f"from levels.catalog import Catalog\n"
            f"from levels.errors import TooLargeError\n"
            f"cat = Catalog({str(store)!r})\n"
            f"out = {{}}\n"
            f"try:\n"
            f"    report = cat.import_file({str(levels_file)!r}, dataset='big')\n"
            f"    out.update(levels=report.levels, derived_lines=report.lines)\n"
            f"except TooLargeError as exc:\n"
            f"    out.update(refused=str(exc))\n"
            f"cat.close()\n")
        size1 = store.stat().st_size + sum(p.stat().st_size for p in folder.glob("store.sqlite-*"))
        details = {"levels_in_file": n_levels, "odd_levels": n_odd, "file_bytes": levels_file.stat().st_size,
                   "derived_lines": run.get("derived_lines", 0), "refused": run.get("refused")}
        if expect_refusal != bool(run.get("refused")):
            details["unexpected"] = "refused" if run.get("refused") else "admitted"
        # a refused import writes nothing: its result is the file it refused
        growth = size1 - size0 if not run.get("refused") else levels_file.stat().st_size
        return _result(name, run, growth, details)


def bench_import_1m_levels() -> BenchResult:
    """Import 1,000,000 levels with their ~2 million Ritz lines."""
    return _import_case("memory_import_1m_levels", int(1_000_000 * SCALE), 2, expect_refusal=False)


def bench_import_1m_levels_refused() -> BenchResult:
    """The issue's size: 1,000,000 levels implying ~38 million lines, refused by the guard (baseline: file size)."""
    return _import_case("memory_import_1m_levels_refused", int(1_000_000 * SCALE), 38,
                        expect_refusal=SCALE * 1_000_000 * 38 > 10_000_000)


def bench_rebuild_20k_species() -> BenchResult:
    """``recompute_lines`` of a 20,000-level species (J 0..40, both parities), guard raised to admit it."""
    n_levels = int(20_000 * SCALE)
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        levels_file = folder / "complex-levels.csv"
        write_complex_levels(levels_file, n_levels)
        store = _store(folder)
        store_levels_without_rebuild(store, levels_file)
        size0 = sum(p.stat().st_size for p in folder.glob("store.sqlite*"))
        run = _measure(
            f"from levels.catalog import Catalog\n"
            f"os.environ['LEVELS_MAX_DERIVED_LINES'] = str(10**9)\n"
            f"cat = Catalog({str(store)!r})\n"
            f"out = {{'derived_lines': cat.recompute_lines('Fe I')}}\n"
            f"cat.close()\n")
        size1 = sum(p.stat().st_size for p in folder.glob("store.sqlite*"))
        return _result("memory_rebuild_20k_species", run, size1 - size0,
                       {"levels": n_levels, "derived_lines": run["derived_lines"], "store_bytes": size1})
