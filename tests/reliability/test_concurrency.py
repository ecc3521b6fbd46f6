"""Concurrent writers and readers on one store (SQLite, and PostgreSQL when configured).

Four writer processes import 500 tiny files each while a reader process polls
the datasets; afterwards every committed row is there exactly once, no writer
saw an error, and the reader never saw a dataset without all its levels. Two
processes racing for the same dataset name get one success and one clear
AlreadyExistsError.
"""

from __future__ import annotations

import multiprocessing
import queue
import time
from collections import Counter

import pytest
from sqlalchemy import func, select

from levels.catalog import Catalog
from levels.store import integrity
from levels.store.schema import AuditEntry, Dataset, Level, Species

from . import _workers

WRITERS = 4
IMPORTS_PER_WRITER = 500
RACE_ROUNDS = 20


def _collect(results, expected: int, timeout: float) -> list:
    out, deadline = [], time.monotonic() + timeout
    while len(out) < expected:
        try:
            out.append(results.get(timeout=max(1.0, deadline - time.monotonic())))
        except queue.Empty:
            break
    return out


@pytest.mark.slow
def test_four_writers_and_a_reader(store_url, tmp_path):
    setup = Catalog(store_url, actor="pytest")
    setup.init()
    ctx = multiprocessing.get_context("spawn")
    results, stop = ctx.Queue(), ctx.Event()
    reader = ctx.Process(target=_workers.poll_datasets, args=(store_url, stop, results))
    writers = [ctx.Process(target=_workers.import_many,
                           args=(store_url, w, IMPORTS_PER_WRITER, str(tmp_path), results)) for w in range(WRITERS)]
    started = time.perf_counter()
    reader.start()
    for p in writers:
        p.start()
    messages = _collect(results, WRITERS, timeout=600)
    stop.set()
    messages += _collect(results, 1, timeout=120)
    for p in writers + [reader]:
        p.join(timeout=60)
    elapsed = time.perf_counter() - started
    writer_reports = [m for m in messages if m[0] == "writer"]
    reader_reports = [m for m in messages if m[0] == "reader"]
    assert len(writer_reports) == WRITERS and len(reader_reports) == 1, messages

    # no error surfaced to any writer, and every import committed
    errors = [e for m in writer_reports for e in m[3]]
    assert errors == []
    committed = {name: n for m in writer_reports for name, n in m[2]}
    expected = {_workers.dataset_name(w, i): _workers.expected_levels(w, i)
                for w in range(WRITERS) for i in range(IMPORTS_PER_WRITER)}
    assert committed == {name: len(rows) for name, rows in expected.items()}

    # every committed row is in the store exactly once
    def stored(session):
        levels = session.execute(select(Dataset.name, Level.label, Level.energy_cm1)
                                 .join(Dataset, Dataset.id == Level.dataset_id)
                                 .where(Dataset.kind == "measured")).all()
        audit = session.execute(select(AuditEntry.target).where(AuditEntry.action == "import-levels")).scalars().all()
        species = session.scalars(select(Species.name)).all()
        total = session.scalar(select(func.count()).select_from(Level))
        return levels, audit, species, total

    levels, audit, species, total_levels = setup.read(stored)
    want = Counter((name, label, energy) for name, rows in expected.items() for label, energy in rows)
    assert Counter(map(tuple, levels)) == want
    # files hold 1, 2, 3 levels in turn: 167 x 1 + 167 x 2 + 166 x 3 = 999 per writer
    assert total_levels == sum(len(rows) for rows in expected.values()) == WRITERS * 999
    assert Counter(audit) == Counter(f"dataset {name}" for name in expected)
    assert sorted(species) == sorted(s for s, _, _ in _workers.SPECIES)
    # the derived lines of each species are the ones its final levels give
    derived = {r["name"]: r["lines"] for r in setup.dataset_rows() if r["method"] == "ritz-combination"}
    assert len(derived) == len(_workers.SPECIES)
    for spectrum, _, _ in _workers.SPECIES:
        name = next(n for n in derived if n.startswith(f"derived lines {spectrum} A="))
        assert derived[name] == setup.recompute_lines(spectrum) == 2
    assert integrity.check_store(setup.engine) == []

    # the reader ran during the writes and never saw half an import
    _, polls, seen_max, violations, derived_empty, reader_errors = reader_reports[0]
    assert reader_errors == [] and violations == []
    assert polls >= 3 and seen_max == len(expected)
    print(f"\n{setup.engine.dialect.name}: {len(expected)} imports, {total_levels} levels by {WRITERS} writers "
          f"in {elapsed:.1f} s; reader polls {polls}; derived sets seen empty {derived_empty}")
    if setup.engine.dialect.name == "sqlite":
        # one snapshot per read transaction: a derived set is never seen between its delete and re-insert
        assert derived_empty == 0
    setup.close()


def test_racing_for_one_dataset_name(store_url, tmp_path):
    setup = Catalog(store_url, actor="pytest")
    setup.init()
    ctx = multiprocessing.get_context("spawn")
    results, barrier = ctx.Queue(), ctx.Barrier(2)
    racers = [ctx.Process(target=_workers.race, args=(store_url, who, RACE_ROUNDS, barrier, str(tmp_path), results))
              for who in range(2)]
    for p in racers:
        p.start()
    messages = _collect(results, 2, timeout=300)
    for p in racers:
        p.join(timeout=60)
    assert len(messages) == 2, messages
    by_round: dict[int, list] = {}
    for _, _, outcomes in messages:
        for k, status, text in outcomes:
            by_round.setdefault(k, []).append((status, text))
    assert sorted(by_round) == list(range(RACE_ROUNDS))
    for k, pair in by_round.items():
        statuses = sorted(s for s, _ in pair)
        if k < RACE_ROUNDS // 2:   # same dataset name: one wins, the other is told clearly
            assert statuses == ["exists", "ok"], pair
            message = next(t for s, t in pair if s == "exists")
            assert f"race-{k}" in message and "already exists" in message
        else:                      # same new species, different names: both succeed
            assert statuses == ["ok", "ok"], pair

    def look(session):
        names = session.scalars(select(Dataset.name).where(Dataset.name.like("race-%"))).all()
        species = session.execute(select(Species.name, func.count()).group_by(Species.name)).all()
        return names, dict(species)

    names, species = setup.read(look)
    assert len(names) == len(set(names)) == RACE_ROUNDS // 2 + 2 * (RACE_ROUNDS - RACE_ROUNDS // 2)
    assert species == {name: 1 for name in _workers.RACE_SPECIES[:RACE_ROUNDS]}
    assert integrity.check_store(setup.engine) == []
    setup.close()
