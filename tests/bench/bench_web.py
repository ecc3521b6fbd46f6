"""Benchmarks of the web site on a large species: diagram decimation and a bounded load test.

The store holds one invented species (Na I labels, invented energies and rates:
synthetic benchmark data, not physics) with 2,000 levels and 20,000 E1 lines,
written through the store layer. The site runs in-process (server time) or under
waitress on a free loopback port (load test; traffic to 127.0.0.1 only, bounded
in count and time).

* ``bench_web_diagram_time``: server time of the diagram endpoint (at most 800
  lines, strongest first) against sending the full line table as JSON.
* ``bench_web_diagram_payload``: the same two responses' sizes in bytes.
* ``bench_web_load``: 4 client threads, 2,000 requests (line-table pages and
  diagrams, 9:1), stopped after 45 s if not done; p95 latencies of both endpoints.
"""

from __future__ import annotations

import functools
import os
import random
import socket
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

import numpy as np

from levels.catalog import Catalog
from levels.notation import Spectrum, format_configuration, l_letter, level_label, parse_configuration
from levels.service import lookup
from levels.store import database, queries
from levels.store.schema import Level, Line

from tests.bench.harness import BenchResult, best_time

N_LEVELS = 2000
N_LINES = 20_000
SPECTRUM = "Na I"
URL_NAME = "Na_I"
LOAD_REQUESTS = 2000
LOAD_THREADS = 4
LOAD_SECONDS = 45.0
#: requests of the one-client pass before the load test
SINGLE_REQUESTS = 200
#: the issue's bound on the diagram's p95 latency under the 4-client load, s
DIAGRAM_P95_TARGET_S = 0.1


def _synthetic_rows():
    """Invented levels (n s..n l of a one-electron-outside-a-core pattern) and invented E1 lines."""
    levels = []
    for n in range(3, 60):
        for l in range(0, n):
            for two_j in sorted({abs(2 * l - 1), 2 * l + 1}):
                # invented energies: a Rydberg-like ladder with invented defects and splittings (cm-1)
                defect = max(1.4 - 0.55 * l, 0.0)
                energy = 41449.0 * (1 - (3 - 1.4) ** 2 / (n - defect) ** 2) + 0.5 * (two_j - 2 * l) / n ** 3
                levels.append((energy, n, l, two_j))
    levels.sort()
    return levels[:N_LEVELS]


@functools.lru_cache(maxsize=1)
def big_store() -> tuple[str, str]:
    """Build (once per process) the benchmark store; return (url, folder)."""
    folder = tempfile.mkdtemp(prefix="levels-bench-web-")
    url = f"sqlite:///{Path(folder) / 'big.sqlite'}"
    catalog = Catalog(url, actor="bench")
    catalog.init()
    rng = np.random.default_rng(2024)
    chosen = _synthetic_rows()

    def work(session):
        species = lookup.get_or_create_species(session, Spectrum(11, 0))
        ds = queries.create_dataset(session, name="synthetic-big", kind="computed", method="synthetic benchmark data",
                                    method_version="1")
        rows = []
        for energy, n, l, two_j in chosen:
            config = format_configuration(parse_configuration(f"1s2.2s2.2p6.{n}{l_letter(l)}"))
            term = f"2{l_letter(l, upper=True)}{'°' if l % 2 else ''}"
            rows.append({"dataset_id": ds.id, "species_id": species.id, "label": level_label(config, term, two_j),
                         "configuration": config, "term": term, "two_j": two_j, "g": two_j + 1,
                         "parity": -1 if l % 2 else 1,
                         "energy_cm1": energy - chosen[0][0], "unc_cm1": None, "multiplicity": 2, "big_l": l,
                         "n": n, "l": l, "lifetime_s": None, "lande_g": None})
        ids = queries.insert_rows(session, Level, rows, returning_ids=True)
        energy = np.array([r["energy_cm1"] for r in rows])
        ell = np.array([r["l"] for r in rows])
        two_j = np.array([r["two_j"] for r in rows])
        lower, upper = np.nonzero((np.abs(ell[:, None] - ell[None, :]) == 1)
                                  & (np.abs(two_j[:, None] - two_j[None, :]) <= 2)
                                  & (energy[None, :] > energy[:, None]))
        pick = rng.choice(len(lower), size=N_LINES, replace=False)
        sigma = energy[upper[pick]] - energy[lower[pick]]
        vac = 1e7 / sigma
        a = 10 ** rng.uniform(2, 9, N_LINES)  # invented rates, s-1
        lines = [{"dataset_id": ds.id, "species_id": species.id, "lower_id": ids[i], "upper_id": ids[k],
                  "multipole": "E1", "wavenumber_cm1": float(s), "vacuum_nm": float(v),
                  "air_nm": None, "a_per_s": float(x), "f_abs": None, "line_strength_au": None, "unc_nm": None,
                  "medium": "", "note": ""}
                 for i, k, s, v, x in zip(lower[pick], upper[pick], sigma, vac, a)]
        queries.insert_rows(session, Line, lines)

    database.run_in_transaction(catalog.engine, work)
    catalog.close()
    return url, folder


def _app():
    from webui import create_app

    url, folder = big_store()
    return create_app({"LEVELS_DB": url, "SECRET_KEY": "bench", "LEVELS_INSTANCE_PATH": folder})


def _diagram_vs_full():
    app = _app()
    client = app.test_client()
    diagram_url = f"/species/{URL_NAME}/diagram.json"
    full_url = f"/species/{URL_NAME}/lines.json"
    diagram = client.get(diagram_url)
    full = client.get(full_url)
    assert diagram.status_code == 200 and full.status_code == 200
    payload = diagram.get_json()
    t_diagram = best_time(lambda: client.get(diagram_url), repeat=3)
    t_full = best_time(lambda: client.get(full_url), repeat=3)
    app.extensions["levels"]["catalog"].close()
    return payload, len(diagram.data), len(full.data), t_diagram, t_full


@functools.lru_cache(maxsize=1)
def _measured():
    return _diagram_vs_full()


def bench_web_diagram_time() -> BenchResult:
    """Server time of the decimated diagram against the full line table (JSON), same species."""
    payload, size_diagram, size_full, t_diagram, t_full = _measured()
    return BenchResult(
        name="web_diagram_time", figure=t_diagram, baseline=t_full, unit="s",
        details={"levels": payload["levels"], "lines_total": payload["lines_total"],
                 "lines_sent": payload["lines_shown"], "lines_omitted": payload["lines_omitted"],
                 "baseline": "GET lines.json: every line of the species, no decimation"},
    )


def bench_web_diagram_payload() -> BenchResult:
    """Bytes sent for the diagram against the full line table (JSON)."""
    payload, size_diagram, size_full, _, _ = _measured()
    return BenchResult(name="web_diagram_payload", figure=float(size_diagram), baseline=float(size_full),
                       unit="bytes", details={"lines_sent": payload["lines_shown"],
                                              "lines_total": payload["lines_total"]})


def _percentile(values: list[float], q: float) -> float:
    if not values:
        return float("nan")
    ordered = sorted(values)
    index = min(len(ordered) - 1, max(0, int(round(q * (len(ordered) - 1)))))
    return ordered[index]


def _free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as probe:
        probe.bind(("127.0.0.1", 0))
        return probe.getsockname()[1]


SERVER_CODE = """
import logging, sys
logging.getLogger("waitress.queue").setLevel(logging.ERROR)
import webui
webui.serve("127.0.0.1", int(sys.argv[2]), threads=4,
            config={"LEVELS_DB": sys.argv[1], "SECRET_KEY": "bench", "LEVELS_INSTANCE_PATH": sys.argv[3]})
"""


def bench_web_load() -> BenchResult:
    """A bounded load test on loopback: p95 latency of line-table pages (figure) and diagrams (baseline).

    The site runs under waitress in its own process (as ``levels serve`` does), so the
    load generator's threads do not share its interpreter lock.
    """
    import requests

    url, folder = big_store()
    port = _free_port()
    base = f"http://127.0.0.1:{port}"
    server = subprocess.Popen([sys.executable, "-c", SERVER_CODE, url, str(port), folder],
                              cwd=str(Path(__file__).resolve().parents[2]),
                              stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        ready_by = time.perf_counter() + 30
        while True:
            try:
                if requests.get(f"{base}/api/v1/openapi.json", timeout=2).status_code == 200:
                    break
            except requests.ConnectionError:
                pass
            if time.perf_counter() > ready_by or server.poll() is not None:
                raise RuntimeError("the web server did not start")
            time.sleep(0.2)
        plan = ["diagram" if i % 10 == 0 else "table" for i in range(LOAD_REQUESTS)]
        random.Random(5).shuffle(plan)
        lock = threading.Lock()
        times: dict[str, list[float]] = {"table": [], "diagram": []}
        single: dict[str, list[float]] = {"table": [], "diagram": []}
        errors = []
        rng = random.Random(11)

        def request(session, kind: str, into: dict[str, list[float]]) -> None:
            if kind == "table":
                start = rng.uniform(200, 5000)
                target = f"{base}/api/v1/species/{URL_NAME}/lines"
                query = {"from_nm": f"{start:.1f}", "to_nm": f"{start * 1.5:.1f}", "limit": 100,
                         "offset": rng.randrange(0, 200)}
            else:
                target = f"{base}/species/{URL_NAME}/diagram.json"
                query = {"min_a": f"{10 ** rng.uniform(2, 6):.3g}"}
            t0 = time.perf_counter()
            response = session.get(target, params=query, timeout=30)
            elapsed = time.perf_counter() - t0
            with lock:
                (into[kind] if response.status_code == 200 else errors).append(elapsed)

        # one client first (the same mix, 10 % diagrams): latency without queueing; also warms the caches
        with requests.Session() as session:
            for kind in plan[:SINGLE_REQUESTS]:
                request(session, kind, single)
        deadline = time.perf_counter() + LOAD_SECONDS

        def worker(items: list[str]) -> None:
            with requests.Session() as session:
                for kind in items:
                    if time.perf_counter() > deadline:
                        return
                    request(session, kind, times)

        workers = [threading.Thread(target=worker, args=(plan[i::LOAD_THREADS],)) for i in range(LOAD_THREADS)]
        t_start = time.perf_counter()
        for w in workers:
            w.start()
        for w in workers:
            w.join()
        wall = time.perf_counter() - t_start
    finally:
        server.terminate()
        try:
            server.wait(timeout=10)
        except subprocess.TimeoutExpired:
            server.kill()
            server.wait()
    done = len(times["table"]) + len(times["diagram"])
    diagram_p95 = _percentile(times["diagram"], 0.95)
    throughput = done / wall if wall else 0.0
    def p50_95_99(values: list[float]) -> str:
        return "/".join(f"{_percentile(values, q) * 1e3:.1f}" for q in (0.5, 0.95, 0.99)) + " ms"

    print(f"web load: {done} of {LOAD_REQUESTS} requests in {wall:.1f} s with {LOAD_THREADS} clients, "
          f"throughput {throughput:.1f} requests/s; diagram p95 {diagram_p95 * 1e3:.1f} ms "
          f"(target <= {DIAGRAM_P95_TARGET_S * 1e3:.0f} ms); p50/p95/p99: diagram {p50_95_99(times['diagram'])}, "
          f"table {p50_95_99(times['table'])}; one client: diagram {p50_95_99(single['diagram'])}, "
          f"table {p50_95_99(single['table'])}; load average {os.getloadavg()[0]:.2f}", file=sys.stderr)
    return BenchResult(
        name="web_load_p95", figure=_percentile(times["table"], 0.95), baseline=diagram_p95,
        unit="s",
        details={"requests_done": done, "requests_planned": LOAD_REQUESTS, "all_done": done == LOAD_REQUESTS,
                 "errors": len(errors), "threads": LOAD_THREADS, "wall_s": wall, "throughput_per_s": throughput,
                 "table_requests": len(times["table"]), "diagram_requests": len(times["diagram"]),
                 "table_p50_s": _percentile(times["table"], 0.5), "table_p95_s": _percentile(times["table"], 0.95),
                 "table_p99_s": _percentile(times["table"], 0.99),
                 "diagram_p50_s": _percentile(times["diagram"], 0.5), "diagram_p95_s": diagram_p95,
                 "diagram_p99_s": _percentile(times["diagram"], 0.99),
                 "diagram_p95_target_s": DIAGRAM_P95_TARGET_S, "diagram_p95_met": diagram_p95 <= DIAGRAM_P95_TARGET_S,
                 "single_client_requests": sum(len(v) for v in single.values()),
                 "single_table_p50_s": _percentile(single["table"], 0.5),
                 "single_table_p95_s": _percentile(single["table"], 0.95),
                 "single_diagram_p50_s": _percentile(single["diagram"], 0.5),
                 "single_diagram_p95_s": _percentile(single["diagram"], 0.95),
                 "load_average_1min": os.getloadavg()[0],
                 "note": "figure = line-table page p95, baseline = diagram p95, both under the same mixed load; "
                         "single_* from one client before the load (same mix); the machine is shared"},
    )


if __name__ == "__main__":
    for bench in (bench_web_diagram_time, bench_web_diagram_payload, bench_web_load):
        result = bench()
        print(result.name, result.as_dict())
