"""Bolted fault currents against pandapower (test-only reference).

Both sides use the same impedances and the same assumptions: voltage factor 1,
no IEC 60909 correction factors (see ``pandapower_reference.py``). The
agreement seen is about 1e-7 (from our closed switches, which have 1e-6 pu
impedance where pandapower's are ideal); the checks ask for 1e-6, which is
what the switches explain, and far inside the issue's 0.1 %. Modelling of the
elements themselves is checked in ``test_faults_pandapower_elements.py``.
Buses fed by motors only are de-energised for us (motors do not energise a
bus) but not for pandapower, so only energised buses are compared.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

import arcflash
from arcflash.study.faults import build_network
from tests.study.pandapower_reference import pandapower_bolted_ka
from tests.synthetic import synthetic_site

DEMO = Path(__file__).resolve().parents[2] / "site_data" / "fenwick_ridge"


def _compare(site, scenario):
    net = build_network(site, site.scenario(scenario))
    ours = arcflash.bolted_faults(site, scenario)
    theirs = pandapower_bolted_ka(net, s_base_mva=site.facility.s_base_mva)
    live = ours["energized"].to_numpy()
    assert live.sum() > 0
    np.testing.assert_allclose(ours["bolted_ka"].to_numpy()[live], theirs[live], rtol=1e-6)


@pytest.mark.parametrize("scenario", ["normal", "utility-min", "tie-closed", "on-generator", "motors-off"])
def test_demo_facility(scenario):
    _compare(arcflash.load_site(DEMO), scenario)


@pytest.mark.parametrize("ties, scenario", [(0, "normal"), (6, "ties-closed")])
def test_synthetic_networks(tmp_path, ties, scenario):
    site = arcflash.load_site(synthetic_site(tmp_path / "s", 300, ties=ties, substation_size=60))
    _compare(site, scenario)


def test_every_stage_of_staged_clearing(tmp_path):
    # Issue 10: each stage's bolted current at the faulted bus, with the branches of the devices opened so
    # far removed, against pandapower on the same network with those branches left out (within 1e-6; the
    # issue asks 0.1 %).
    from types import SimpleNamespace

    from arcflash.study.arcing import arcing_currents
    from arcflash.study.clearing import clear_arcs
    from arcflash.study.faults import solve_scenario

    site = arcflash.load_site(synthetic_site(tmp_path / "s", 150, ties=6, substation_size=30))
    scenario = site.scenario("ties-closed")
    faults = solve_scenario(site, scenario.name)
    arcs = arcing_currents(site, faults.buses)
    steps = clear_arcs(site, scenario, faults, arcs["arcing_current_ka"], arcs["reduced_arcing_current_ka"]).steps
    net = faults.net
    branch_of = dict(zip(net.device_ids, net.device_branch))
    bus_index = {b: i for i, b in enumerate(net.bus_ids)}
    full = steps[steps["case"] == "full"]
    multi = [bus for bus, group in full.groupby("bus") if (group["bolted_after_ka"] > 0).any()]
    assert len(multi) >= 3  # arcs that outlive their first opening
    checked = 0
    for bus in multi[:4]:
        opened = set()
        for _, together in full[full["bus"] == bus].groupby("opening_time_s"):  # simultaneous openings
            opened |= {branch_of[device] for device in together["device"]}
            step = together.iloc[-1]
            if step.bolted_after_ka <= 0:
                continue
            keep = np.array([b not in opened for b in range(net.branch_from.size)])
            reduced = SimpleNamespace(base_kv=net.base_kv, branch_from=net.branch_from[keep],
                                      branch_to=net.branch_to[keep], branch_z_pu=net.branch_z_pu[keep],
                                      shunt_bus=net.shunt_bus, shunt_z_pu=net.shunt_z_pu)
            theirs = pandapower_bolted_ka(reduced, s_base_mva=site.facility.s_base_mva)[bus_index[bus]]
            assert step.bolted_after_ka == pytest.approx(theirs, rel=1e-6), (bus, step.device)
            checked += 1
    assert checked >= 3
