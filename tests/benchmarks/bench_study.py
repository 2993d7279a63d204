"""Benchmark: the whole facility study (issue: the facility study).

Targets: on synthetic 1,000- and 10,000-bus facilities with 3 scenarios, the
whole study (faults, clearing, energy, results files, report without per-bus
TCC pages): time at 10,000 at most 11x the time at 1,000; peak memory at
10,000 at most 1 GB. Two variants: radial scenarios, and one scenario with
closed ties (a meshed network, whose fault solve is O(N^2)).

Run:  python tests/benchmarks/bench_study.py [--sizes 1000 10000]
"""

from __future__ import annotations

import argparse
import os
import resource
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import arcflash  # noqa: E402
from arcflash.study.pipeline import run_study  # noqa: E402
from tests.synthetic import synthetic_site  # noqa: E402


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", type=int, nargs="+", default=[1000, 10000])
    args = parser.parse_args()
    if hasattr(os, "sched_setaffinity"):
        os.sched_setaffinity(0, {max(os.sched_getaffinity(0))})
    variants = {
        "radial (normal, utility-min, motors-off)": dict(motors_off=True),
        "with closed ties (normal, utility-min, ties-closed)": dict(ties=None),
    }
    for label, options in variants.items():
        print(label)
        seconds = {}
        for n in args.sizes:
            extra = {"ties": max(1, n // 500)} if options.get("ties", 0) is None else dict(options)
            with tempfile.TemporaryDirectory() as folder:
                site = arcflash.load_site(synthetic_site(Path(folder) / "site", n, **extra))
                out = Path(folder) / "out"
                start = time.perf_counter()
                results = run_study(site, out, tcc_buses=[])
                seconds[n] = time.perf_counter() - start
                size = (out / "report.pdf").stat().st_size
            print(f"  {n:>6} buses x {len(site.scenarios)} scenarios: {seconds[n]:7.2f} s  "
                  f"({len(results.rows):,} rows; report {size / 1e6:.1f} MB; process peak RSS so far "
                  f"{resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024:.0f} MB)")
        if len(seconds) >= 2:
            small, large = min(seconds), max(seconds)
            print(f"  time ratio {large:,} / {small:,} buses: {seconds[large] / seconds[small]:.1f}x  (target <= 11)")
    print(f"process peak RSS {resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024:.0f} MB  (target <= 1024)")


if __name__ == "__main__":
    main()
