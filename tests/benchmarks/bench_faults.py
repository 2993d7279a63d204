"""Benchmark: all-bus bolted faults plus device-current shares (issue: site data and fault currents).

Targets: on a synthetic 10,000-bus facility, at least 30x faster than
pandapower's short-circuit calculation on the same network in the same run,
results within 0.1 %, peak memory at most 1 GB. Reports 1,000 and 10,000 buses,
radial (normal scenario) and, for information, meshed (ties closed).

Run:  python tests/benchmarks/bench_faults.py [--sizes 1000 10000] [--skip-pandapower]
Prints figures and ratios; not part of the pass/fail suite.
"""

from __future__ import annotations

import argparse
import os
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import arcflash  # noqa: E402
from arcflash.models.network import solve_faults  # noqa: E402
from arcflash.study.faults import build_network  # noqa: E402
from tests.study.pandapower_reference import pandapower_bolted_ka  # noqa: E402
from tests.synthetic import synthetic_site  # noqa: E402


def ours(net):
    return solve_faults(net.base_kv, net.branch_from, net.branch_to, net.branch_z_pu, net.shunt_bus,
                        net.shunt_z_pu, net.source_bus, net.device_branch, net.device_kv)


def timed(function, repeats=1):
    best, result = float("inf"), None
    for _ in range(repeats):
        start = time.perf_counter()
        result = function()
        best = min(best, time.perf_counter() - start)
    return best, result


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", type=int, nargs="+", default=[1000, 10000])
    parser.add_argument("--skip-pandapower", action="store_true")
    args = parser.parse_args()
    if hasattr(os, "sched_setaffinity"):
        os.sched_setaffinity(0, {max(os.sched_getaffinity(0))})
    for n in args.sizes:
        with tempfile.TemporaryDirectory() as folder:
            site = arcflash.load_site(synthetic_site(folder, n, ties=max(1, n // 500)))
        for scenario in ("normal", "ties-closed"):
            net = build_network(site, site.scenario(scenario))
            seconds, solution = timed(lambda: ours(net), repeats=3)
            tracemalloc.start()  # a separate call: tracing slows allocation down
            ours(net)
            _, peak = tracemalloc.get_traced_memory()
            tracemalloc.stop()
            print(f"{n:>6} buses, {scenario:<11} ours: {seconds:7.3f} s  ({solution.device.size:,} device rows, "
                  f"peak {peak / 2**20:.0f} MB traced)")
            if args.skip_pandapower or scenario != "normal":
                continue
            pp_seconds, theirs = timed(lambda: pandapower_bolted_ka(net))
            live = solution.energized
            worst = np.max(np.abs(solution.bolted_ka[live] / theirs[live] - 1))
            print(f"{'':>6}        pandapower: {pp_seconds:7.3f} s   ratio {pp_seconds / seconds:6.1f}x "
                  f"(target >= 30)   max difference {worst:.1e} (target <= 1e-3)")


if __name__ == "__main__":
    main()
