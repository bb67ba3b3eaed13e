"""Helpers for the benchmarks: timing by medians and ratio reports.

Benchmarks print ratios against a baseline measured in the same run on the same
machine; they never fail a test run. Run one with ``python -m benchmarks.bench_store``.
"""

from __future__ import annotations

import statistics
import time
from collections.abc import Callable


def median_time(fn: Callable[[], object], repeat: int = 7, warmup: int = 1) -> float:
    """Median wall time of ``fn`` in seconds over ``repeat`` runs after ``warmup`` runs."""
    for _ in range(warmup):
        fn()
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def report(name: str, ours: float, baseline: float, target: float, baseline_name: str) -> bool:
    """Print one line: our time, the baseline's, the ratio and whether it meets ``target``."""
    ratio = ours / baseline if baseline > 0 else float("inf")
    ok = ratio <= target
    print(f"{name:<44} {ours * 1000:9.1f} ms   {baseline_name} {baseline * 1000:9.1f} ms   "
          f"ratio {ratio:5.2f}  (target ≤ {target:g}×)  {'ok' if ok else 'MISSED'}")
    return ok


def compare(ours: Callable[[], object], base: Callable[[], object], repeat: int = 7,
            warmup: int = 1) -> tuple[float, float]:
    """Median times of ``ours`` and ``base``, run alternately so that a change in the
    machine's load during the run falls on both alike."""
    for _ in range(warmup):
        ours()
        base()
    a, b = [], []
    for _ in range(repeat):
        t0 = time.perf_counter()
        ours()
        a.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        base()
        b.append(time.perf_counter() - t0)
    return statistics.median(a), statistics.median(b)
