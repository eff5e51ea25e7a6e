"""Shared timing helper for the benchmark scripts."""

from __future__ import annotations

import statistics
import time

from sympy.core.cache import clear_cache


def median_time(fn, repeat: int) -> float:
    """Median wall time of fn() over ``repeat`` runs after one warm-up, SymPy's cache cleared
    before each run so no run profits from an earlier identical one."""
    fn()
    times = []
    for _ in range(repeat):
        clear_cache()
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return statistics.median(times)
