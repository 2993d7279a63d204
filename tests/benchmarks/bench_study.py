"""Benchmark: the whole facility study, loading included (issues: the facility study; staged clearing).

Targets: on synthetic 1,000- and 10,000-bus facilities with 3 scenarios, the
whole study (load_site, faults, clearing with staged arcs, energy, results
files, report without per-bus TCC pages): time at 10,000 at most 11x the time
at 1,000, also with a closed-tie scenario (a meshed network); peak memory of
the 10,000-bus study with closed ties at most 600 MB.

Each (variant, size) runs in a fresh process, so that its peak RSS is its
own; each process first runs a 100-bus study untimed (imports, caches) and,
as the command line does, has freed blocks of 1 MB and more returned to the
system at once (arcflash/output/memory.py).

Run:  python tests/benchmarks/bench_study.py [--sizes 1000 10000]
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

VARIANTS = {
    "radial": "radial (normal, utility-min, motors-off)",
    "ties": "with closed ties (normal, utility-min, ties-closed; n/500 ties)",
}


def _options(variant, n):
    return dict(motors_off=True) if variant == "radial" else dict(ties=max(1, n // 500))


def one(variant, n):
    """Time one study in this process; print JSON."""
    import arcflash
    from arcflash.output.memory import release_large_blocks_promptly
    from arcflash.study.pipeline import run_study
    from tests.synthetic import synthetic_site

    release_large_blocks_promptly()  # as the command line does (arcflash/output/memory.py)

    with tempfile.TemporaryDirectory() as folder:
        warm = synthetic_site(Path(folder) / "warm", 100, **_options(variant, 100))
        run_study(arcflash.load_site(warm), Path(folder) / "warm-out", tcc_buses=[])
        source = synthetic_site(Path(folder) / "site", n, **_options(variant, n))
        start = time.perf_counter()
        site = arcflash.load_site(source)
        loaded = time.perf_counter() - start
        results = run_study(site, Path(folder) / "out", tcc_buses=[])
        seconds = time.perf_counter() - start
    print(json.dumps({"seconds": seconds, "load_s": loaded, "rows": len(results.rows),
                      "staged": int(results.rows["staged"].sum()),
                      "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}))


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", type=int, nargs="+", default=[1000, 10000])
    parser.add_argument("--one", nargs=2, metavar=("VARIANT", "N"), help=argparse.SUPPRESS)
    args = parser.parse_args()
    if hasattr(os, "sched_setaffinity"):
        os.sched_setaffinity(0, {max(os.sched_getaffinity(0))})
    if args.one:
        one(args.one[0], int(args.one[1]))
        return
    for variant, label in VARIANTS.items():
        print(label)
        seconds = {}
        for n in args.sizes:
            done = subprocess.run([sys.executable, __file__, "--one", variant, str(n)], capture_output=True,
                                  text=True, check=True)
            figures = json.loads(done.stdout.strip().splitlines()[-1])
            seconds[n] = figures["seconds"]
            print(f"  {n:>6} buses x 3 scenarios: {figures['seconds']:7.2f} s (load {figures['load_s']:.2f} s; "
                  f"{figures['rows']:,} rows, {figures['staged']:,} staged; peak RSS {figures['peak_mb']:.0f} MB)")
        if len(seconds) >= 2:
            small, large = min(seconds), max(seconds)
            print(f"  time ratio {large:,} / {small:,} buses: {seconds[large] / seconds[small]:.1f}x  (target <= 11)")
    print("peak memory target: 10,000 buses with closed ties <= 600 MB")


if __name__ == "__main__":
    main()
