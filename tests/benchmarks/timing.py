"""Timing helper shared by the benchmark scripts (not part of the pass/fail suite)."""

from __future__ import annotations

import time


def best_of(function, repeats=3, warm_up=True):
    """Best wall time of ``repeats`` calls (after one untimed call when ``warm_up``) and the last result [s]."""
    if warm_up:
        function()
    best, result = float("inf"), None
    for _ in range(repeats):
        start = time.perf_counter()
        result = function()
        best = min(best, time.perf_counter() - start)
    return best, result
