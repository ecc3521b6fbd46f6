"""Run every benchmark: ``python -m tests.bench [-k SUBSTRING] [--json FILE]``.

Discovers ``tests/bench/bench_*.py``, calls each ``bench_*`` function, prints
name, figure, baseline (measured in the same run) and ratio, and writes all
results to a JSON file (default ``bench-results.json``) so runs can be compared.
"""

from __future__ import annotations

import argparse
import importlib
import json
import platform
import sys
import time
import traceback
from pathlib import Path

from tests.bench.harness import BenchResult

HERE = Path(__file__).resolve().parent


def discover(pattern: str | None):
    for path in sorted(HERE.glob("bench_*.py")):
        module = importlib.import_module(f"tests.bench.{path.stem}")
        for name in sorted(dir(module)):
            if name.startswith("bench_") and callable(getattr(module, name)):
                if pattern and pattern not in f"{path.stem}.{name}":
                    continue
                yield f"{path.stem}.{name}", getattr(module, name)


def _fmt(value: float, unit: str) -> str:
    return f"{value:.4g} {unit}"


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("-k", dest="pattern", help="only benchmarks whose name contains this")
    parser.add_argument("--json", default="bench-results.json", help="where to write the results")
    args = parser.parse_args(argv)
    results, failures = [], []
    started = time.perf_counter()
    print(f"{'benchmark':55s} {'figure':>16s} {'baseline':>16s} {'ratio':>10s}  target")
    for qualified, func in discover(args.pattern):
        t0 = time.perf_counter()
        try:
            result: BenchResult = func()
        except Exception:  # a broken benchmark is reported, the others still run
            failures.append(qualified)
            print(f"{qualified:55s} FAILED")
            traceback.print_exc()
            continue
        entry = result.as_dict()
        entry["benchmark"] = qualified
        entry["wall_s"] = time.perf_counter() - t0
        results.append(entry)
        target = ("" if result.target is None
                  else f">= {result.target:g} " + ("met" if entry["meets_target"] else "NOT met"))
        print(f"{result.name:55s} {_fmt(result.figure, result.unit):>16s} {_fmt(result.baseline, result.unit):>16s} "
              f"{result.ratio:10.3g}  {target}")
        for key, value in result.details.items():
            print(f"    {key}: {value}")
    total = time.perf_counter() - started
    payload = {"python": sys.version, "machine": platform.machine(), "total_s": total, "results": results,
               "failed": failures}
    Path(args.json).write_text(json.dumps(payload, indent=1, default=str), encoding="utf-8")
    print(f"{len(results)} benchmarks in {total:.1f} s, {len(failures)} failed; results in {args.json}")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
