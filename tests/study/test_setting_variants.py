"""Setting variants studied at chosen buses on the site's faults (setting_variants.variant_numbers, the
mitigation finder's evaluation) against the same variants studied whole (uncertainty.study_variants, itself
tested against each variant studied alone): the same governing energy, boundary and bolted current, bit for
bit (arithmetic of the method itself, no outside value)."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np
import pytest

import arcflash
import arcflash.study.faults as faults_module
import arcflash.study.staging as staging
from arcflash.study.mitigation import SearchSpace, _together, candidates_for
from arcflash.study.pipeline import _study
from arcflash.study.setting_variants import changed_devices, variant_numbers
from arcflash.study.uncertainty import study_variants
from tests.synthetic import synthetic_site

DEMO = Path(__file__).resolve().parents[2] / "site_data" / "fenwick_ridge"
#: Zone schemes are not setting variants: a variant with zone settings is studied whole (tests/study/test_zones.py).
NO_ZONES = {"zone_interlocking_delay_s": None, "differential_pickup_multiple": None}


def _candidates(site, devices, space):
    found = [c for d in devices for c in candidates_for(site, d, space)]
    return found


def _assert_equal_at_every_bus(site, candidates, buses=None):
    variants = [c.site_of(site) for c in candidates]
    buses = list(site.buses) if buses is None else buses
    every = list(site.buses)
    whole = study_variants(site, variants)
    variant = np.repeat(np.arange(len(variants)), len(buses))
    asked = variant_numbers(site, variants, variant, buses * len(variants), [c.devices for c in candidates])
    columns = [every.index(b) for b in buses]
    for mine, theirs in zip(asked, whole):
        assert np.array_equal(mine, theirs[:, columns].ravel(), equal_nan=True)
    return asked[0].reshape(len(variants), len(buses))


def test_demo_settings_at_every_bus_equal_the_variants_studied_whole():
    # every device of the demo that a mitigation search may change: mains with the tie closed (staged arcs),
    # relays, maintenance settings made permanent, and two devices changed together
    site = arcflash.load_site(DEMO)
    devices = [d for d in site.devices if site.devices[d].trip_unit is not None or site.devices[d].relay is not None]
    found = _candidates(site, devices, SearchSpace(instantaneous_multiples=(2.0, 6.0), short_time_pickups=(2.0,),
                                                   short_time_delays_s=(0.05,), relay_instantaneous_multiples=(3.0,),
                                                   **NO_ZONES))
    found += [_together([a, b]) for a, b in zip(candidates_for(site, "LVM-A", SearchSpace(**NO_ZONES)),
                                                  candidates_for(site, "LVM-B", SearchSpace(**NO_ZONES)))
              if a.key == b.key]
    energy = _assert_equal_at_every_bus(site, found)
    assert (np.nanmax(energy, axis=1) != np.nanmax(energy[0])).any()  # the settings move energies


def test_a_site_with_ties_staged_everywhere_equals_the_variants_studied_whole(tmp_path, monkeypatch):
    # a synthetic site whose closed ties put many arcs through staged clearing, with motors back-feeding; the
    # arcs of many variants are followed together, each with its own devices
    site = arcflash.load_site(synthetic_site(tmp_path / "ties", 90, ties=3, seed=4))
    clearing = [d for d in site.devices if site.devices[d].trip_unit is not None][:8]
    found = _candidates(site, clearing, SearchSpace(instantaneous_multiples=(2.0, 5.0), short_time_pickups=(1.5,),
                                                    short_time_delays_s=(0.05,), **NO_ZONES))
    assert len(found) >= 20
    followed = []
    follow = staging.follow_arcs

    def counted(context, buses, named=None, reduced=None, variants=None):
        followed.append(np.unique(variants).size if variants is not None else 1)
        return follow(context, buses, named, reduced, variants)

    monkeypatch.setattr(staging, "follow_arcs", counted)
    _assert_equal_at_every_bus(site, found)
    assert max(followed) >= 10


def test_a_lower_back_feed_floor_changes_no_result(tmp_path, monkeypatch):
    # the fault table's back-feed rows below a device's level within the cap are never used: solving with
    # every floor at zero (all rows kept) gives the same study, text included. Variants share one solve with
    # each device's lowest floor on this ground.
    for site in (arcflash.load_site(DEMO), arcflash.load_site(synthetic_site(tmp_path / "t", 120, ties=3, seed=4))):
        rows, stages, _, _ = _study(site)
        solve = faults_module.solve_faults

        def floored(*args, backfeed_min_ka=None, **kwargs):
            return solve(*args, backfeed_min_ka=None if backfeed_min_ka is None else 0.0 * backfeed_min_ka,
                         **kwargs)

        monkeypatch.setattr(faults_module, "solve_faults", floored)
        again, stages_again, _, _ = _study(site)
        monkeypatch.undo()
        assert again.equals(rows) and stages_again.equals(stages)


def test_a_variant_that_changes_more_than_devices_is_refused():
    site = arcflash.load_site(DEMO)
    moved = dataclasses.replace(site, buses=dict(site.buses))
    with pytest.raises(ValueError, match="changes only devices"):
        changed_devices(site, moved)
    device = site.devices["FDR-A1"]
    other = dataclasses.replace(site, devices={**site.devices, "FDR-A1": device.replaced({"at_bus": "MCC-A1"})})
    with pytest.raises(ValueError, match="keeps device FDR-A1 where it is"):
        changed_devices(site, other)
    # zone settings give each bus its own devices: a variant with them is studied whole, never here
    main = site.devices["LVM-A"]
    zoned_site = dataclasses.replace(site, devices={**site.devices,
                                                    "LVM-A": main.replaced({"zone": {"short_time_delay_s": 0.05}})})
    with pytest.raises(ValueError, match="zone settings"):
        variant_numbers(site, [zoned_site], [0], ["SWG-A"])
