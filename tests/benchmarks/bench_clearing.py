"""Benchmark: arcing-fault clearing times (issue: protective devices and clearing time).

Target: clearing times for 10,000 buses x 3 scenarios x 2 arcing cases in one
vectorised pass, at least 50x faster than a per-case loop in the same run.
The loop baseline evaluates each (bus, scenario, arcing case) alone: for every
source path, every device's curve at its current, then the fastest device
per path and the slowest path. It is timed on a sample and its cost per case
multiplied up; its results are checked against the vectorised ones.

Run:  python tests/benchmarks/bench_clearing.py [--buses 10000] [--sample 600]
"""

from __future__ import annotations

import argparse
import os
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import arcflash  # noqa: E402
from arcflash.study.arcing import arcing_currents  # noqa: E402
from arcflash.study.clearing import clearing_paths, clearing_times, device_curve, energising_sources, source_paths  # noqa: E402
from arcflash.study.faults import build_network, solve_scenario  # noqa: E402
from tests.synthetic import synthetic_site  # noqa: E402

SCENARIOS = ("normal", "utility-min", "motors-off")  # radial: the loop baseline follows one path per source


def prepare(site):
    out = {}
    for name in SCENARIOS:
        scenario = site.scenario(name)
        faults = solve_scenario(site, name)
        out[name] = (scenario, build_network(site, scenario), faults, arcing_currents(site, faults.buses))
    return out


def paths_of(site, prepared):
    """The inputs that do not depend on the arcing currents (source paths, device bank)."""
    return {name: clearing_paths(site, s, f) for name, (s, net, f, a) in prepared.items()}


def vectorised(site, prepared, paths):
    return {name: clearing_times(site, s, f, a["arcing_current_ka"], a["reduced_arcing_current_ka"], paths[name])
            for name, (s, net, f, a) in prepared.items()}


def one_case(ratio, currents, curves, paths, cap):
    """Clearing time of one bus in one scenario and arcing case, device by device.

    The inputs (the bus's device currents, the devices' curve objects) are
    prepared beforehand, so that the loop times only the clearing logic; the
    vectorised pass likewise takes its prepared paths and device bank.
    """
    slowest = 0.0
    for devices in paths:
        fastest = np.inf
        for device in devices:
            amps = currents.get(device, 0.0) * ratio * 1000.0
            fastest = min(fastest, float(curves[device].clearing_time_s(amps)))
        slowest = max(slowest, fastest)
    return min(slowest, cap)


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--buses", type=int, default=10000)
    parser.add_argument("--sample", type=int, default=600)
    args = parser.parse_args()
    if hasattr(os, "sched_setaffinity"):
        os.sched_setaffinity(0, {max(os.sched_getaffinity(0))})
    with tempfile.TemporaryDirectory() as folder:
        site = arcflash.load_site(synthetic_site(folder, args.buses, motors_off=True))
    prepared = prepare(site)
    start = time.perf_counter()
    paths = paths_of(site, prepared)
    paths_s = time.perf_counter() - start
    vectorised(site, prepared, paths)  # warm-up
    start = time.perf_counter()
    results = vectorised(site, prepared, paths)
    batch_s = time.perf_counter() - start
    cases = args.buses * len(SCENARIOS) * 2

    rng = np.random.default_rng(0)
    cap = site.facility.arc_duration_cap_s
    sample, checked = [], 0
    for name, (scenario, net, faults, arcs) in prepared.items():
        paths = {}
        for _, bus in energising_sources(site, scenario, net):
            buses, devices, _, _ = source_paths(net, bus)
            for b, d in zip(buses, devices):
                paths.setdefault(net.bus_ids[b], {}).setdefault(bus, []).append(net.device_ids[d])
        live = [b for b in faults.buses.index[faults.buses["energized"]] if b in paths]
        curves = {d: device_curve(site, d, maintenance=d in scenario.energy_reducing_maintenance_switching) for d in net.device_ids}
        for bus in rng.choice(live, size=args.sample // (2 * len(SCENARIOS)), replace=False):
            rows = faults.devices[faults.devices["fault_bus"] == bus]
            currents = dict(zip(rows["device"], rows["current_ka"]))
            for case, column in (("full", "arcing_current_ka"), ("reduced", "reduced_arcing_current_ka")):
                ratio = arcs.loc[bus, column] / faults.buses.loc[bus, "bolted_ka"]
                sample.append((name, bus, case, (ratio, currents, curves, list(paths[bus].values()))))
    start = time.perf_counter()
    loop_times = [one_case(*inputs, cap) for _, _, _, inputs in sample]
    loop_s = (time.perf_counter() - start) / len(sample) * cases
    for (name, bus, case, _), t in zip(sample, loop_times):
        column = "clearing_time_s" if case == "full" else "reduced_clearing_time_s"
        assert np.isclose(results[name].loc[bus, column], t, rtol=1e-9), (name, bus, case)
        checked += 1
    print(f"buses x scenarios x arcing cases   {args.buses:,} x {len(SCENARIOS)} x 2 = {cases:,}")
    print(f"preparation (paths, device bank)    {paths_s:.2f} s  (like the loop's prepared inputs: not in the ratio)")
    print(f"vectorised pass                     {batch_s:.2f} s")
    print(f"per-case loop (from {len(sample)} cases)    {loop_s:.0f} s projected")
    print(f"ratio                               {loop_s / batch_s:.0f}x   (target >= 50)")
    print(f"loop and vectorised results agree on {checked} sampled cases")


if __name__ == "__main__":
    main()
