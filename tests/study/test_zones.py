"""Zone settings (zone-selective interlocking, differential schemes): an arc at a bus of a device's zone sees
the device with its zone settings in force, every other arc sees it as set. Checked against the same site
with the zone settings made the device's own (arithmetic of the method, no outside value): bit for bit at
the zone's buses, and the site as it is elsewhere; studied alone, as variants together, and in the staged
clearing of the demo with its tie closed."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np
import pytest
from pydantic import ValidationError

import arcflash
from arcflash.site.schema import Device
from arcflash.study.clearing import clearing_paths
from arcflash.study.faults import solve_scenario
from arcflash.study.uncertainty import study_variants
from arcflash.study.zones import zone_buses, zoned

DEMO = Path(__file__).resolve().parents[2] / "site_data" / "fenwick_ridge"
ENERGY = "incident_energy_governing_cal_cm2"


def _with(site, ident, device):
    return dataclasses.replace(site, devices={**site.devices, ident: device})


def _energies(site):
    return arcflash.run_study(site).rows.set_index(["scenario", "bus"])[
        ["incident_energy_cal_cm2", "reduced_incident_energy_cal_cm2", "arc_flash_boundary_mm"]]


def test_zone_interlocking_clears_its_own_bus_fast_and_keeps_its_delay_beyond_the_feeders():
    # the demo's main LVM-A (short-time delay 0.3 s) with zone-selective interlocking: an arc at SWG-A (its
    # zone: no device between) sees the unrestrained 0.05 s delay; an arc at MCC-A1, beyond feeder FDR-A1,
    # sees the main restrained, as set. With the tie closed SWG-A's arc is fed over both mains and followed
    # stage by stage.
    site = arcflash.load_site(DEMO)
    main = site.devices["LVM-A"]
    interlocked = _with(site, "LVM-A", main.replaced({"zone": {"short_time_delay_s": 0.05}}))
    fast = _with(site, "LVM-A", zoned(interlocked.devices["LVM-A"]))
    assert fast.devices["LVM-A"].trip_unit.short_time_delay_s == 0.05 and not fast.devices["LVM-A"].zone
    with_zone, as_set, all_fast = _energies(interlocked), _energies(site), _energies(fast)
    for scenario in site.scenarios:
        faults = solve_scenario(site, scenario)
        paths = clearing_paths(site, site.scenarios[scenario], faults)
        inside = [faults.net.bus_ids[k] for k in zone_buses(paths, list(faults.net.device_ids).index("LVM-A"))]
        assert "MCC-A1" not in inside
        assert ("SWG-A" in inside) == (scenario != "on-generator")  # the generator feeds SWG-A another way
        for bus in site.buses:
            expected = all_fast if bus in inside else as_set
            assert np.array_equal(with_zone.loc[(scenario, bus)].to_numpy(float),
                                  expected.loc[(scenario, bus)].to_numpy(float), equal_nan=True), (scenario, bus)
    assert with_zone.loc[("tie-closed", "SWG-A"), "incident_energy_cal_cm2"] < \
        as_set.loc[("tie-closed", "SWG-A"), "incident_energy_cal_cm2"]
    staged = arcflash.run_study(interlocked).rows.set_index(["scenario", "bus"]).loc[("tie-closed", "SWG-A"), "staged"]
    assert staged


def test_a_differential_zone_on_a_relay_and_variants_studied_together_equal_each_alone():
    # a relay-breaker's differential zone modelled as an instantaneous element; the stacked study of variants
    # (an uncertainty run's chunks) gives each variant's own numbers, zone settings included
    site = arcflash.load_site(DEMO)
    relay = "52-4M"  # the 4.16 kV main's relay: inverse time only
    device = site.devices[relay]
    assert device.relay is not None and device.relay.instantaneous_a is None
    differential = _with(site, relay, device.replaced({"zone": {"instantaneous_a": device.relay.pickup_a * 2.0}}))
    interlocked = _with(differential, "LVM-B", site.devices["LVM-B"].replaced({"zone": {"short_time_delay_s": 0.05}}))
    variants = [site, differential, interlocked]
    energy, boundary, _ = study_variants(site, variants)
    for k, variant in enumerate(variants):
        alone = arcflash.run_study(variant).governing.reindex(list(site.buses))
        assert np.array_equal(energy[k], alone[ENERGY].to_numpy(float), equal_nan=True)
        assert np.array_equal(boundary[k], alone["arc_flash_boundary_governing_mm"].to_numpy(float), equal_nan=True)
    assert not np.array_equal(energy[0], energy[1], equal_nan=True)


def test_zone_settings_are_checked_like_maintenance_settings():
    unit = {"rating_a": 800, "short_time_pickup": 6.0, "short_time_delay_s": 0.3}
    with pytest.raises(ValidationError, match="zone.short_time_delay_s"):
        Device(id="X", branch="C", at_bus="LV", trip_unit=unit, zone={"short_time_delay_s": -1})
    with pytest.raises(ValidationError, match="zone settings only on relays and trip units"):
        Device(id="F", branch="C", at_bus="LV", kind="fuse", curve="FUSE-30-LV", zone={"instantaneous_a": 100})


def test_zone_schemes_the_finder_proposes_reach_the_energy_of_the_changed_site_studied_whole():
    # the mitigation finder studies a proposed zone scheme at each bus as the devices whose zone holds the bus
    # working with their zone settings (or the changed site whole where that differs by scenario): each energy
    # it reports equals the study of the site with the scheme, bit for bit (SWG-A and SWG-B: the two mains with
    # the tie closed, whose breaker stands nearer the other bus; SWG-C: one main)
    from arcflash.study.mitigation import mitigate

    site = arcflash.load_site(DEMO)
    found = mitigate(site, 8.0)
    rows = found.candidates[found.candidates["change"].str.contains("zone-selective interlocking")]
    assert {"SWG-A", "SWG-B", "SWG-C"} <= set(rows["bus"]) and (rows["kind"] == "hardware").all()
    assert (rows["selectivity_lost"] == "").all() and (rows["starting_or_inrush"] == "").all()
    for row in rows.itertuples():
        studied = arcflash.run_study(found.proposals[row.candidate].site_of(site)).governing
        assert studied.loc[row.bus, ENERGY] == row.incident_energy_cal_cm2, (row.bus, row.devices)
    best = found.buses.set_index("bus").loc["SWG-C", "best_or_reason"]
    assert best.startswith("LVM-C-TU: zone-selective interlocking")
