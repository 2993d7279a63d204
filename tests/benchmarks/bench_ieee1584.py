"""Benchmark: IEEE 1584-2018 batch evaluation (issue: foundation and arc model).

Targets: a mixed batch of 1,000,000 cases (all five configurations, 208 V to
15 kV, in random order) in one call at >= 5 million cases/s on one core;
>= 100x faster than calling ``evaluate`` one case at a time in the same run;
peak memory of the batch call <= 1 GB.

Run:  python tests/benchmarks/bench_ieee1584.py [--cases N]
Prints figures and ratios; it is not part of the pass/fail test suite.
"""

from __future__ import annotations

import argparse
import os
import resource
import time
import tracemalloc

import numpy as np

from arcflash.models.ieee1584 import evaluate
from arcflash.models.ieee1584_tables import CONFIGURATIONS


def mixed_batch(n, seed=2018):
    """n cases inside the model's range, configurations and voltages mixed at random."""
    rng = np.random.default_rng(seed)
    v = rng.uniform(0.208, 15.0, n)
    low = v <= 0.6
    gap = np.where(low, rng.uniform(6.35, 76.2, n), rng.uniform(19.05, 254.0, n))
    return dict(
        voltage_kv=v,
        bolted_ka=np.where(low, rng.uniform(0.5, 106.0, n), rng.uniform(0.2, 65.0, n)),
        gap_mm=gap,
        working_distance_mm=rng.uniform(305.0, 3000.0, n),
        clearing_time_s=rng.uniform(0.01, 2.0, n),
        reduced_clearing_time_s=rng.uniform(0.01, 2.0, n),
        config=np.array(CONFIGURATIONS)[rng.integers(0, len(CONFIGURATIONS), n)],
        height_mm=rng.uniform(300.0, 1244.6, n),
        width_mm=np.maximum(rng.uniform(300.0, 1244.6, n), 4.1 * gap),
        depth_mm=rng.uniform(150.0, 1000.0, n),
    )


def best_time(function, repeats):
    best = float("inf")
    for _ in range(repeats):
        start = time.perf_counter()
        function()
        best = min(best, time.perf_counter() - start)
    return best


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cases", type=int, default=1_000_000)
    parser.add_argument("--single", type=int, default=2_000, help="cases timed one at a time")
    parser.add_argument("--repeats", type=int, default=15)
    args = parser.parse_args()
    if hasattr(os, "sched_setaffinity"):
        os.sched_setaffinity(0, {max(os.sched_getaffinity(0))})  # one core (the last: the first takes more interrupts)

    batch = mixed_batch(args.cases)
    evaluate(**batch)  # warm-up
    batch_s = best_time(lambda: evaluate(**batch), args.repeats)
    batch_rate = args.cases / batch_s

    singles = [{k: v[i] for k, v in batch.items()} for i in range(args.single)]
    loop_s = best_time(lambda: [evaluate(**case) for case in singles], 2)
    loop_rate = args.single / loop_s

    tracemalloc.start()
    evaluate(**batch)
    _, peak_bytes = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    rss_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024

    print(f"cases in batch                 {args.cases:,}")
    print(f"batch time (best of {args.repeats})         {batch_s * 1e3:.1f} ms")
    print(f"batch rate                     {batch_rate / 1e6:.2f} M cases/s   (target >= 5)")
    print(f"one-at-a-time rate             {loop_rate:,.0f} cases/s ({args.single:,} cases)")
    print(f"batch / one-at-a-time          {batch_rate / loop_rate:,.0f}x   (target >= 100)")
    print(f"peak memory of the batch call  {peak_bytes / 2**20:.0f} MB traced   (target <= 1024)")
    print(f"process peak RSS               {rss_mb:.0f} MB (inputs included)")


if __name__ == "__main__":
    main()
