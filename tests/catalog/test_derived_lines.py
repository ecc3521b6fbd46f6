"""The derived-line rebuild: streamed in blocks, same lines as the one-shot builder, a guard that names the way out.

Issue 19, item 3. Levels are INVENTED (tests/bench/bench_memory.py writes them).
"""

from __future__ import annotations

import tracemalloc

import numpy as np
import pytest
from click.testing import CliRunner
from sqlalchemy import select

from levels.catalog import Catalog, LineQuery
from levels.cli import main
from levels.errors import TooLargeError
from levels.physics.lines.combination import build_lines
from levels.service import derived as derived_module
from levels.store.database import dump
from levels.store.schema import Level

from tests.bench.bench_memory import write_complex_levels, write_even_odd_levels


def test_guard_names_the_file_and_the_option(catalog, tmp_path, monkeypatch):
    path = tmp_path / "big.csv"
    write_even_odd_levels(path, 203, 3)  # 200 even x 3 odd = 600 E1 pairs
    before = dump(catalog.engine)
    with pytest.raises(TooLargeError) as info:
        catalog.import_file(path, dataset="big", max_derived_lines=599)
    message = str(info.value)
    assert message.startswith("big.csv: ") and "600 derived E1 lines" in message
    assert "--max-derived-lines 600" in message and "LEVELS_MAX_DERIVED_LINES" in message
    assert dump(catalog.engine) == before
    monkeypatch.setenv("LEVELS_MAX_DERIVED_LINES", "100")
    refused = CliRunner().invoke(main, ["--db", catalog.url, "import", str(path), "--dataset", "big"])
    assert refused.exit_code != 0 and "big.csv" in refused.output and "--max-derived-lines" in refused.output
    assert dump(catalog.engine) == before
    done = CliRunner().invoke(main, ["--db", catalog.url, "import", str(path), "--dataset", "big",
                                     "--max-derived-lines", "600"])
    assert done.exit_code == 0, done.output
    assert catalog.dataset_info("derived lines Na I A=23")["lines"] == 600


def test_streamed_rebuild_gives_the_lines_of_the_one_shot_builder(catalog, tmp_path, monkeypatch):
    path = tmp_path / "complex.csv"
    write_complex_levels(path, 400, j_max=6, seed=3)
    monkeypatch.setattr(derived_module, "DERIVED_BLOCK", 97)  # many blocks, and blocks cut inside group products
    catalog.import_file(path, dataset="complex")
    rows, total = catalog.line_rows(LineQuery(spectrum="Fe I", datasets=("derived lines Fe I A=56",)))
    levels = catalog.read(lambda s: s.scalars(select(Level).order_by(Level.energy_cm1, Level.id)).all())
    reference = build_lines(np.array([lv.energy_cm1 for lv in levels]), np.full(len(levels), np.nan),
                            np.array([lv.two_j for lv in levels]), np.array([lv.parity for lv in levels]))
    ids = np.array([lv.id for lv in levels])
    want = {(int(ids[a]), int(ids[b])): v for a, b, v in zip(reference.lower, reference.upper, reference.vacuum_nm)}
    got = {(r["lower_id"], r["upper_id"]): r["vacuum_nm"] for r in rows}
    assert total == len(reference) > 10 * 97 and got.keys() == want.keys()
    assert all(got[k] == pytest.approx(want[k], rel=1e-13) for k in want)


@pytest.mark.slow
def test_rebuild_memory_does_not_grow_with_the_number_of_lines(tmp_path):
    """Peak Python allocations of recompute_lines over 20,000 levels: 20,000 and 80,000 lines cost about the same."""
    peaks = {}
    for n_odd in (1, 4):
        path = tmp_path / f"levels-{n_odd}.csv"
        write_even_odd_levels(path, 20_000 + n_odd, n_odd)  # 20,000 even x n_odd odd levels
        cat = Catalog(tmp_path / f"store-{n_odd}.sqlite", actor="pytest")
        cat.init()
        cat.import_file(path, dataset="big")
        tracemalloc.start()
        count = cat.recompute_lines("Na I")
        peaks[count] = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
        cat.close()
    (small, peak_small), (large, peak_large) = sorted(peaks.items())
    assert (small, large) == (20_000, 80_000)
    # the old rebuild held every line as Python objects at once (~0.8 kB per line: 64 MB for 80,000);
    # streamed, the peak is one block of 20,000 lines plus the level columns, whatever the number of lines
    assert peak_large < 1.2 * peak_small + 2e6, peaks
    assert peak_large < 30e6, peaks
