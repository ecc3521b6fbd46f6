"""Code run in child processes by the concurrency tests (spawned: importable, picklable, no fixtures)."""

from __future__ import annotations

import time
import traceback
from pathlib import Path

#: (spectrum, ground configuration, excited configuration); every file of a species names the same states,
#: so the precedence keeps the derived lines of a species small however many files are imported
SPECIES = (("Li I", "2s", "2p"), ("Na I", "3s", "3p"), ("K I", "4s", "4p"), ("Mg II", "3s", "3p"),
           ("Ca II", "4s", "4p"), ("Rb I", "5s", "5p"))
#: Li-like ions, one new species per race round
RACE_SPECIES = ("Be II", "B III", "C IV", "N V", "O VI", "F VII", "Ne VIII", "Na IX", "Mg X", "Al XI",
                "Si XII", "P XIII", "S XIV", "Cl XV", "Ar XVI", "K XVII", "Ca XVIII", "Sc XIX", "Ti XX", "V XXI")


def dataset_name(worker: int, index: int) -> str:
    return f"w{worker}-{index}"


def expected_levels(worker: int, index: int) -> list[tuple[str, float]]:
    """The (label, energy_cm1) rows file ``index`` of ``worker`` holds (1 to 3 levels)."""
    spectrum, ground, excited = SPECIES[(worker + index) % len(SPECIES)]
    rows = [(f"{ground} 2S1/2", 0.0)]
    base = 10000.0 + 1000.0 * worker + index / 1000.0  # distinct per file
    if index % 3 >= 1:
        rows.append((f"{excited} 2P°1/2", base))
    if index % 3 == 2:
        rows.append((f"{excited} 2P°3/2", base + 0.5))
    return rows


def file_text(worker: int, index: int) -> str:
    spectrum, ground, excited = SPECIES[(worker + index) % len(SPECIES)]
    out = ["spectrum,configuration,term,j,energy_cm1"]
    for label, energy in expected_levels(worker, index):
        config, term_j = label.split(" ")
        term, j = (term_j[:3], term_j[3:]) if "°" in term_j else (term_j[:2], term_j[2:])
        out.append(f"{spectrum},{config},{term},{j},{energy!r}")
    return "\n".join(out) + "\n"


def import_many(url: str, worker: int, count: int, directory: str, results) -> None:
    """Import ``count`` tiny files as datasets w<worker>-<i>; report what committed and every error."""
    from levels.catalog import Catalog

    committed, errors = [], []
    start = time.perf_counter()
    with Catalog(url, actor=f"writer-{worker}") as catalog:
        for index in range(count):
            path = Path(directory) / f"{dataset_name(worker, index)}.csv"
            path.write_text(file_text(worker, index), encoding="utf-8")
            try:
                # files with only the ground level repeat their content: imported again on purpose
                report = catalog.import_file(path, dataset=dataset_name(worker, index), again=True)
                committed.append((report.dataset, report.levels))
            except Exception as exc:  # the test asserts there are none; report them all
                errors.append(f"{dataset_name(worker, index)}: {type(exc).__name__}: {exc}")
    results.put(("writer", worker, committed, errors, time.perf_counter() - start))


def poll_datasets(url: str, stop, results) -> None:
    """Read the datasets over and over while writers run; report every half-visible import."""
    from sqlalchemy import func, select

    from levels.catalog import Catalog
    from levels.store.schema import Dataset, Level

    polls, seen_max, violations, derived_empty, errors = 0, 0, [], 0, []
    with Catalog(url, actor="reader") as catalog:
        def raw(session):
            return session.execute(select(Dataset.name, func.count(Level.id))
                                   .outerjoin(Level, Level.dataset_id == Dataset.id)
                                   .where(Dataset.kind == "measured").group_by(Dataset.name)).all()

        while True:
            finished = stop.is_set()
            try:
                # the service path (several statements in one read transaction) every 5th poll, else
                # one statement; a short pause leaves the two cores mostly to the writers
                rows = catalog.dataset_rows() if polls % 5 == 0 or finished else []
                single = catalog.read(raw)
                time.sleep(0.02)
            except Exception as exc:
                errors.append(f"{type(exc).__name__}: {exc}")
                rows, single = [], []
            polls += 1
            measured = [(r["name"], r["levels"]) for r in rows if r["kind"] == "measured"] + list(single)
            seen_max = max(seen_max, len(single))
            for name, count in measured:
                worker, index = (int(x) for x in name[1:].split("-"))
                if count != len(expected_levels(worker, index)):
                    violations.append((name, count))
            derived_empty += sum(1 for r in rows if r["method"] == "ritz-combination" and r["lines"] == 0)
            if finished:
                break
    results.put(("reader", polls, seen_max, violations, derived_empty, errors))


def race(url: str, who: int, rounds: int, barrier, directory: str, results) -> None:
    """Two processes import at the same moment: same dataset name (rounds < half), or same new species."""
    from levels.catalog import Catalog
    from levels.errors import AlreadyExistsError

    outcomes = []
    with Catalog(url, actor=f"racer-{who}") as catalog:
        for k in range(rounds):
            spectrum = RACE_SPECIES[k % len(RACE_SPECIES)]
            path = Path(directory) / f"race-{who}-{k}.csv"
            path.write_text(f"spectrum,configuration,term,j,energy_cm1\n{spectrum},1s2.2s,2S,1/2,0\n"
                            f"{spectrum},1s2.2p,2P°,1/2,{1000.0 + who}\n", encoding="utf-8")
            name = f"race-{k}" if k < rounds // 2 else f"race-{k}-{who}"
            barrier.wait(timeout=120)
            try:
                catalog.import_file(path, dataset=name)
                outcomes.append((k, "ok", ""))
            except AlreadyExistsError as exc:
                outcomes.append((k, "exists", str(exc)))
            except Exception as exc:
                outcomes.append((k, "error", f"{type(exc).__name__}: {exc}\n{traceback.format_exc()}"))
    results.put(("racer", who, outcomes))
