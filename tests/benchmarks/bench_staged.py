"""Benchmark: staged clearing against the one-stage answer (issue: staged clearing).

Target: on a synthetic 10,000-bus facility with 20 closed ties, clearing every
bus in both arcing cases with staged clearing (arcs followed stage by stage
where the one-stage answer is not exact) costs no more than 3x the one-stage
clearing of the same scenario, in the same run. The one-stage pass is the
same code with staging switched off (every bus takes its source-path answer).
Faults, arcing currents and source paths are prepared outside the timer;
each pass runs once untimed first, then the best of three is reported.

Run:  python tests/benchmarks/bench_staged.py [--buses 10000] [--ties 20]
Prints figures and ratios; not part of the pass/fail suite.
"""

from __future__ import annotations

import argparse
import os
import sys
import tempfile
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

import arcflash  # noqa: E402
import arcflash.study.clearing as clearing  # noqa: E402
from arcflash.study.arcing import arcing_currents, equipment_table  # noqa: E402
from arcflash.study.faults import solve_scenario  # noqa: E402
from tests.synthetic import synthetic_site  # noqa: E402
from timing import best_of  # noqa: E402


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--buses", type=int, default=10000)
    parser.add_argument("--ties", type=int, default=20)
    args = parser.parse_args()
    if hasattr(os, "sched_setaffinity"):
        os.sched_setaffinity(0, {max(os.sched_getaffinity(0))})
    with tempfile.TemporaryDirectory() as folder:
        site = arcflash.load_site(synthetic_site(folder, args.buses, ties=args.ties))
    equipment = equipment_table(site)
    staged_rule = clearing._needs_stages
    for name in ("normal", "ties-closed"):
        scenario = site.scenario(name)
        faults = solve_scenario(site, name, for_clearing=True)
        arcs = arcing_currents(site, faults.buses, equipment)
        paths = clearing.clearing_paths(site, scenario, faults)

        def run():
            return clearing.clear_arcs(site, scenario, faults, arcs["arcing_current_ka"],
                                       arcs["reduced_arcing_current_ka"], paths, equipment)

        clearing._needs_stages = lambda *a: np.zeros(len(paths.bus_ids), dtype=bool)
        one_s, _ = best_of(run)
        clearing._needs_stages = staged_rule
        staged_s, result = best_of(run)
        table = result.table
        print(f"{args.buses:,} buses, {name:<11}: one-stage {one_s:6.3f} s, staged {staged_s:6.3f} s, "
              f"ratio {staged_s / one_s:5.1f}x (target <= 3); {int(table['staged'].sum()):,} buses followed "
              f"stage by stage, {len(result.steps):,} openings")


if __name__ == "__main__":
    main()
