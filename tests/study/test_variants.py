"""Variants of a site studied together (uncertainty.study_variants, the sample axis an uncertainty run and a
mitigation search share) against each variant studied alone: the same governing energy, boundary and bolted
current, bit for bit (arithmetic of the stacking itself, no outside value)."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np

import arcflash
from arcflash.study.uncertainty import study_variants

DEMO = Path(__file__).resolve().parents[2] / "site_data" / "fenwick_ridge"


def _with_device(site, ident, **update):
    devices = dict(site.devices)
    devices[ident] = devices[ident].replaced(update)
    return dataclasses.replace(site, devices=devices)


def _with_unit(site, ident, **settings):
    unit = site.devices[ident].trip_unit
    return _with_device(site, ident, trip_unit=unit.replaced(settings))


def _with_relay(site, ident, **settings):
    relay = site.devices[ident].relay
    return _with_device(site, ident, relay=relay.replaced(settings))


def _assert_together_equal_alone(site, variants):
    energy, boundary, bolted = study_variants(site, variants)
    for k, variant in enumerate(variants):
        alone = arcflash.run_study(variant).governing.reindex(list(site.buses))
        assert np.array_equal(energy[k], alone["incident_energy_governing_cal_cm2"].to_numpy(float), equal_nan=True)
        assert np.array_equal(boundary[k], alone["arc_flash_boundary_governing_mm"].to_numpy(float), equal_nan=True)
        assert np.array_equal(bolted[k], alone["bolted_ka"].to_numpy(float), equal_nan=True)
    return energy


def test_settings_changed_device_by_device_studied_together_equal_each_alone():
    # the changes a mitigation search makes: trip-unit pickups and delays, a relay's instantaneous element,
    # maintenance settings made permanent; each variant a copy in one stack (their parameters written over the
    # base's repeated ones)
    site = arcflash.load_site(DEMO)
    lvm = site.devices["LVM-A"]
    variants = [site,
                _with_unit(site, "FDR-A1", instantaneous_pickup=4.0),
                _with_unit(site, "LVM-B", short_time_delay_s=0.05),
                _with_device(site, "LVM-A", trip_unit=lvm.trip_unit.replaced(lvm.maintenance)),
                _with_relay(site, "52-A", instantaneous_a=20.0, time_dial=1.0),
                _with_unit(_with_unit(site, "FDR-B1", instantaneous_pickup=3.0), "LVM-A", instantaneous_pickup=3.0)]
    energy = _assert_together_equal_alone(site, variants)
    assert not np.array_equal(energy[0], energy[3], equal_nan=True)  # the maintenance settings change energies


def test_a_device_given_another_curve_is_studied_together_as_alone(monkeypatch):
    # a smaller fuse or breaker from the device library: a kind or curve the base bank does not repeat, so
    # the stack's bank is built device by device; still each variant's own numbers
    import arcflash.study.stack_tiling as tiling

    refused = []
    real = tiling._tileable
    monkeypatch.setattr(tiling, "_tileable", lambda *a: refused.append(real(*a)) or refused[-1])
    site = arcflash.load_site(DEMO)
    variants = [_with_device(site, "FDR-PA1", curve="TM-100"), _with_device(site, "FU-PB2", curve="FUSE-30-LV"),
                site]
    _assert_together_equal_alone(site, variants)
    assert False in refused
