"""Benchmark: staged clearing against the one-stage answer (issue: staged clearing).

Target: on a synthetic 10,000-bus facility with 20 closed ties, clearing every
bus in both arcing cases with staged clearing (arcs followed stage by stage
where the one-stage answer is not exact) costs no more than 3x the one-stage
clearing of the same scenario, in the same run. The one-stage pass is the
same code with staging switched off (every bus takes its source-path answer).

Two ratios are printed, both against that one-stage pass:
- "arcs alone": faults, arcing currents and source paths prepared outside
  the timer; only the clearing of the arcs is timed (the strictest reading);
- "scenario": the scenario's fault solve (with device currents), arcing
  currents, source paths and clearing timed together: the work a study does
  for one scenario's clearing, one stage or staged (the reading in which
  re-solving "stays near the one-stage cost": one stage is one fault solve
  read against the curves).
Each pass runs once untimed first, then the best of three is reported.

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

        def whole(name=name, scenario=scenario):
            solved = solve_scenario(site, name, for_clearing=True)
            currents = arcing_currents(site, solved.buses, equipment)
            return clearing.clear_arcs(site, scenario, solved, currents["arcing_current_ka"],
                                       currents["reduced_arcing_current_ka"],
                                       clearing.clearing_paths(site, scenario, solved), equipment)

        one_stage = lambda *a: np.zeros(len(paths.bus_ids), dtype=bool)  # noqa: E731
        clearing._needs_stages = one_stage
        one_s, _ = best_of(run)
        one_whole_s, _ = best_of(whole)
        clearing._needs_stages = staged_rule
        staged_s, result = best_of(run)
        staged_whole_s, _ = best_of(whole)
        table = result.table
        print(f"{args.buses:,} buses, {name:<11}: {int(table['staged'].sum()):,} buses followed stage by stage, "
              f"{len(result.steps):,} openings")
        print(f"    arcs alone: one-stage {one_s:6.3f} s, staged {staged_s:6.3f} s, ratio {staged_s / one_s:5.1f}x")
        print(f"    scenario  : one-stage {one_whole_s:6.3f} s, staged {staged_whole_s:6.3f} s, "
              f"ratio {staged_whole_s / one_whole_s:5.1f}x (target <= 3)")


if __name__ == "__main__":
    main()
