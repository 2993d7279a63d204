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
    # sees the main restrained, as set. With the tie closed, the tie breaker and the other main carry SWG-A's
    # fault current from the other side and may restrain it: SWG-A is then in no zone (the longer arc).
    site = arcflash.load_site(DEMO)
    main = site.devices["LVM-A"]
    interlocked = _with(site, "LVM-A", main.replaced({"zone": {"short_time_delay_s": 0.05}}))
    fast = _with(site, "LVM-A", zoned(interlocked.devices["LVM-A"]))
    assert fast.devices["LVM-A"].trip_unit.short_time_delay_s == 0.05 and not fast.devices["LVM-A"].zone
    with_zone, as_set, all_fast = _energies(interlocked), _energies(site), _energies(fast)
    for scenario in site.scenarios:
        faults = solve_scenario(site, scenario)
        paths = clearing_paths(site, site.scenarios[scenario], faults)
        inside = [faults.net.bus_ids[k] for k in zone_buses(interlocked, site.scenarios[scenario], paths,
                                                            list(faults.net.device_ids).index("LVM-A"))]
        assert "MCC-A1" not in inside
        # the generator feeds SWG-A another way; the closed tie restrains
        assert ("SWG-A" in inside) == (scenario not in ("on-generator", "tie-closed"))
        for bus in site.buses:
            expected = all_fast if bus in inside else as_set
            assert np.array_equal(with_zone.loc[(scenario, bus)].to_numpy(float),
                                  expected.loc[(scenario, bus)].to_numpy(float), equal_nan=True), (scenario, bus)
    assert with_zone.loc[("normal", "SWG-A"), "incident_energy_cal_cm2"] < \
        as_set.loc[("normal", "SWG-A"), "incident_energy_cal_cm2"]


def _motor_chain(tmp_path, feeder_rating_a, feeder_short_time):
    # an invented 480 V chain: MAIN (short-time delay 0.4 s, zone-selective interlocking at 0.05 s) feeding LV,
    # and feeder FDR from LV to an MCC with a 200 hp motor, whose contribution FDR carries back to a fault at LV
    from tests.site.helpers import lv_substation, write_site

    document = {
        "facility": {"name": "Zone restraint chain (invented)"},
        **lv_substation(("MCC", "mcc-lv-deep")),
        "cables": [{"id": "C1", "from_bus": "LV", "to_bus": "MCC", "length": "30 ft", "size": "500",
                    "material": "copper", "conduit": "steel", "sets": 2}],
        "motors": [{"id": "M1", "bus": "MCC", "size": "200 hp", "kv": 0.46}],
        "devices": [{"id": "MAIN", "branch": "T", "at_bus": "LV", "kind": "trip-unit-breaker",
                     "trip_unit": {"rating_a": 2000, "short_time_pickup": 3.0, "short_time_delay_s": 0.4},
                     "zone": {"short_time_delay_s": 0.05}},
                    {"id": "FDR", "branch": "C1", "at_bus": "LV", "kind": "trip-unit-breaker",
                     "trip_unit": {"rating_a": feeder_rating_a, "short_time_pickup": feeder_short_time,
                                   "short_time_delay_s": 0.1}}],
    }
    return arcflash.load_site(write_site(tmp_path / f"chain-{feeder_rating_a}-{feeder_short_time}", document))


def _chain_variants(site):
    """The chain with MAIN's zone settings, without them, and with them made its own settings."""
    main = site.devices["MAIN"]
    return site, _with(site, "MAIN", main.replaced({"zone": {}})), _with(site, "MAIN", zoned(main))


def test_a_feeder_carrying_motor_current_above_its_short_time_pickup_restrains_the_main(tmp_path):
    # the case built to break the zone model: for a fault at LV the motor's contribution flows back through
    # FDR. Where it reaches FDR's short-time pickup band (a 100 A feeder at 2 x: its band's lower edge 180 A),
    # FDR may restrain MAIN: LV is in no zone and MAIN keeps its 0.4 s delay (the longer arc, as if it had no
    # zone settings). Where it cannot (a 800 A feeder at 10 x: 7,200 A, above the motor's contribution), LV is
    # in MAIN's zone: MAIN trips at its unrestrained 0.05 s delay.
    from arcflash.study.zones import restrained

    for rating_a, multiple, inside in ((100, 2.0, False), (800, 10.0, True)):
        sites = _chain_variants(_motor_chain(tmp_path, rating_a, multiple))
        with_zone, no_zone, all_fast = (arcflash.run_study(s).rows.set_index(["scenario", "bus"]) for s in sites)
        faults = solve_scenario(sites[0], "normal")
        paths = clearing_paths(sites[0], sites[0].scenarios["normal"], faults)
        at = list(faults.net.bus_ids).index("LV")
        assert restrained(sites[0], sites[0].scenarios["normal"], paths)[at] == (not inside)
        expected = all_fast if inside else no_zone
        for column in ("incident_energy_cal_cm2", "clearing_time_s"):
            assert with_zone.loc[("normal", "LV"), column] == expected.loc[("normal", "LV"), column]
        assert all_fast.loc[("normal", "LV"), "clearing_time_s"] < no_zone.loc[("normal", "LV"), "clearing_time_s"]


def test_zones_everywhere_studied_as_variants_together_equal_each_alone():
    # every trip unit with a short-time element interlocked, every relay-breaker with a differential zone (an
    # instantaneous element at its pickup): with the tie closed the primary switchgear's arcs are in the
    # feeder relays' zones and followed stage by stage; the stacked study of variants (an uncertainty run's
    # chunks) gives each variant's own numbers, zone settings included
    site = arcflash.load_site(DEMO)
    zones = {}
    for ident, device in site.devices.items():
        if device.trip_unit is not None and device.trip_unit.short_time_pickup is not None:
            zones[ident] = device.replaced({"zone": {"short_time_delay_s": 0.05}})
        elif device.relay is not None:
            zones[ident] = device.replaced({"zone": {"instantaneous_a": device.relay.pickup_a}})
    everywhere = dataclasses.replace(site, devices={**site.devices, **zones})
    one_relay = _with(site, "52-4M", zones["52-4M"])
    variants = [site, everywhere, one_relay]
    energy, boundary, _ = study_variants(site, variants)
    for k, variant in enumerate(variants):
        alone = arcflash.run_study(variant).governing.reindex(list(site.buses))
        assert np.array_equal(energy[k], alone[ENERGY].to_numpy(float), equal_nan=True)
        assert np.array_equal(boundary[k], alone["arc_flash_boundary_governing_mm"].to_numpy(float), equal_nan=True)
    assert not np.array_equal(energy[0], energy[1], equal_nan=True)
    assert not np.array_equal(energy[0], energy[2], equal_nan=True)
    rows = arcflash.run_study(everywhere).rows.set_index(["scenario", "bus"])
    assert rows.loc[("tie-closed", "SS-A-PRI"), "staged"]  # an arc in a zone, followed stage by stage


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
