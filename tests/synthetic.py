"""Synthetic facilities of N buses (invented), for tests and benchmarks.

A 13.8 kV service bus with a utility feeds unit substations (13.8/0.48 kV
transformers); each substation's switchboard feeds a random radial tree of
480 V buses through NEC Table 9 cables, with motors on some buses and a
protective device at the source end of every cable (a trip unit or a
thermal-magnetic breaker) and on every transformer secondary. With ``ties`` > 0, that many normally open ties join random pairs
of 480 V buses of different substations, and the scenario ``ties-closed``
closes them all (a meshed network).
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import yaml

#: An invented 225 A thermal-magnetic breaker curve.
SYNTHETIC_CURVE = {"id": "TM-225", "kind": "thermal-magnetic-breaker", "current_a": [290, 450, 900, 1500, 2250],
                   "max_time_s": [1500, 300, 40, 12, 6], "min_time_s": [400, 80, 12, 4, 2],
                   "instantaneous_a": 2250, "instantaneous_s": 0.025}
_SIZES = ["500 kcmil", "350 kcmil", "4/0", "2/0", "1/0", "2", "4", "6"]


def synthetic_site(folder, n_buses, ties=0, seed=1, substation_size=200, motors_off=False):
    """Write a synthetic facility of ``n_buses`` buses into ``folder``; return the folder."""
    rng = np.random.default_rng(seed)
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    n_sub = max(1, n_buses // substation_size)
    buses = [("MV", 13.8, "switchgear-15kv")]
    transformers, cables, devices, motors, lv_by_sub = [], [], [], [], []
    per_sub = (n_buses - 1 - n_sub) // n_sub
    counter = 0
    for s in range(n_sub):
        sub = f"S{s}"
        buses.append((f"{sub}-SWBD", 0.48, "switchgear-lv"))
        transformers.append({"id": f"T{s}", "primary_bus": "MV", "secondary_bus": f"{sub}-SWBD", "kva": 2000,
                             "primary_kv": 13.8, "secondary_kv": 0.48, "z_percent": 5.75, "x_over_r": 8})
        devices.append({"id": f"M{s}", "branch": f"T{s}", "at_bus": f"{sub}-SWBD", "kind": "trip-unit-breaker",
                        "trip_unit": {"rating_a": 3000, "short_time_pickup": 3.0, "short_time_delay_s": 0.3}})
        nodes = [f"{sub}-SWBD"]
        count = per_sub + (n_buses - 1 - n_sub - per_sub * n_sub if s == n_sub - 1 else 0)
        for k in range(count):
            bus = f"{sub}-B{k}"
            parent = nodes[int(rng.integers(max(0, len(nodes) - 20), len(nodes)))]
            kind = "mcc-lv-deep" if rng.random() < 0.3 else "panelboard-deep"
            buses.append((bus, 0.48, kind))
            counter += 1
            cable = f"C{counter}"
            depth_size = _SIZES[min(len(_SIZES) - 1, int(rng.integers(0, len(_SIZES))))]
            cables.append([cable, parent, bus, f"{int(rng.integers(20, 300))} ft", 1, depth_size, "copper", "steel"])
            if rng.random() < 0.5:
                devices.append({"id": f"D{counter}", "branch": cable, "at_bus": parent,
                                "kind": "thermal-magnetic-breaker", "curve": "TM-225"})
            else:
                devices.append({"id": f"D{counter}", "branch": cable, "at_bus": parent, "kind": "trip-unit-breaker",
                                "trip_unit": {"rating_a": int(rng.choice([250, 400, 600, 800])),
                                              "short_time_pickup": 6.0, "short_time_delay_s": 0.1,
                                              "instantaneous_pickup": 10.0}})
            if kind.startswith("mcc") and rng.random() < 0.5:
                motors.append({"id": f"MOT-{bus}", "bus": bus, "size": f"{int(rng.integers(10, 150))} hp", "kv": 0.46})
            nodes.append(bus)
        lv_by_sub.append(nodes)
    switches = []
    for t in range(ties):
        a, b = rng.choice(len(lv_by_sub), size=2, replace=False) if len(lv_by_sub) > 1 else (0, 0)
        x = lv_by_sub[a][int(rng.integers(0, len(lv_by_sub[a])))]
        y = lv_by_sub[b][int(rng.integers(0, len(lv_by_sub[b])))]
        if x != y:
            switches.append({"id": f"TIE{t}", "from_bus": x, "to_bus": y, "kind": "tie", "normally": "open"})
    scenarios = [{"name": "normal"}, {"name": "utility-min", "utility": "min"}]
    if motors_off:
        scenarios.append({"name": "motors-off", "motors": "off"})
    if switches:
        scenarios.append({"name": "ties-closed", "close": [s["id"] for s in switches]})
    document = {
        "facility": {"name": f"Synthetic facility, {n_buses} buses (invented)", "default_scenario": "normal"},
        "utilities": [{"id": "U", "bus": "MV", "kv": 13.8, "max": {"fault": "20 kA", "x_over_r": 15},
                       "min": {"fault": "10 kA", "x_over_r": 10}}],
        "transformers": transformers,
        "motors": motors,
        "switches": switches,
        "scenarios": scenarios,
        "curves": [SYNTHETIC_CURVE],
        "devices": devices,
    }
    (folder / "site.yaml").write_text(yaml.safe_dump(document, sort_keys=False), encoding="utf-8")
    with open(folder / "buses.csv", "w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["id", "nominal_kv", "equipment_class"])
        writer.writerows(buses)
    with open(folder / "cables.csv", "w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["id", "from_bus", "to_bus", "length", "sets", "size", "material", "conduit"])
        writer.writerows(cables)
    return folder
