"""Benchmark: the mitigation finder (issue 17: what would bring this bus down).

Target: on a synthetic 1,000-bus facility with 100 buses above the target, the search over at least 20
candidates per clearing device finishes in under 10x the time of one study of it (ratio in one run). The
target energy is set to the 101st-highest governing energy of the plain study, so that exactly the 100 buses
above it are searched; the default search space gives 24 candidates to a trip unit with a short-time element
and 10 to a relay, and the script prints how many each device got.

Run:  python tests/benchmarks/bench_mitigation.py [--buses 1000] [--above 100]
Prints figures and the ratio; not part of the pass/fail suite.
"""

from __future__ import annotations

import sys
import tempfile
import time
from collections import Counter
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import arcflash  # noqa: E402
from arcflash.study.mitigation import mitigate  # noqa: E402
from tests.synthetic import synthetic_site  # noqa: E402


def _argument(name, default):
    return int(sys.argv[sys.argv.index(name) + 1]) if name in sys.argv else default


def main():
    buses, above = _argument("--buses", 1000), _argument("--above", 100)
    with tempfile.TemporaryDirectory() as folder:
        site = arcflash.load_site(synthetic_site(Path(folder) / "site", buses))
    arcflash.run_study(site)  # warm
    start = time.perf_counter()
    governing = arcflash.run_study(site).governing
    plain_s = time.perf_counter() - start
    energy = np.sort(governing["incident_energy_governing_cal_cm2"].dropna().to_numpy())[::-1]
    target = float(energy[above]) if energy.size > above else float(energy[-1])
    start = time.perf_counter()
    found = mitigate(site, target)
    search_s = time.perf_counter() - start
    per_device = Counter(d for c in found.proposals for d in c.devices if len(c.devices) == 1)
    counts = sorted(per_device.values())
    print(f"synthetic {buses} buses: one study {plain_s:.2f} s; target {target:.3g} cal/cm2, "
          f"{len(found.buses)} buses above it")
    print(f"candidates: {len(found.proposals)} on {len(per_device)} devices "
          f"({counts[0] if counts else 0} to {counts[-1] if counts else 0} per device); "
          f"{int((found.buses['status'] == 'candidates').sum())} buses reach the target with selectivity kept")
    print(f"search {search_s:.2f} s; ratio search / one study: {search_s / plain_s:.1f}  (target under 10)")


if __name__ == "__main__":
    main()
