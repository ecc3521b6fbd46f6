"""Benchmark harness: every benchmark measures its figure and its baseline in the same run.

A benchmark module ``tests/bench/bench_<topic>.py`` defines functions named
``bench_<name>()`` that return a :class:`BenchResult`. ``python -m tests.bench``
(see README) runs them all, prints figure, baseline and ratio, and writes JSON.
No benchmark asserts an absolute time.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import asdict, dataclass, field


@dataclass
class BenchResult:
    """One benchmark's outcome.

    Attributes
    ----------
    name : str
        Short identifier, unique across the suite.
    figure : float
        The measured quantity of the project's code (seconds unless ``unit`` says otherwise).
    baseline : float
        The same quantity for the baseline, measured in the same run.
    unit : str
        Unit of ``figure`` and ``baseline`` (``"s"``, ``"s/element"``, ``"bytes"``).
    higher_is_better : bool
        False for times and sizes (ratio = baseline / figure, so > 1 means faster or smaller).
    target : float or None
        The ratio the issue asks for, if any.
    details : dict
        Extra figures worth quoting (counts, sizes).
    """

    name: str
    figure: float
    baseline: float
    unit: str = "s"
    higher_is_better: bool = False
    target: float | None = None
    details: dict = field(default_factory=dict)

    @property
    def ratio(self) -> float:
        """How many times better than the baseline (> 1 is better)."""
        if self.higher_is_better:
            return self.figure / self.baseline if self.baseline else float("inf")
        return self.baseline / self.figure if self.figure else float("inf")

    def as_dict(self) -> dict:
        out = asdict(self)
        out["ratio"] = self.ratio
        out["meets_target"] = None if self.target is None else self.ratio >= self.target
        return out


def best_time(func: Callable[[], object], repeat: int = 3, number: int = 1) -> float:
    """Smallest wall time in seconds of ``number`` calls of ``func``, over ``repeat`` tries."""
    best = float("inf")
    for _ in range(repeat):
        start = time.perf_counter()
        for _ in range(number):
            func()
        best = min(best, (time.perf_counter() - start) / number)
    return best
