"""A stacked site's arrays built copy by copy from its base site's (arcflash.study.stack_tiling) against
building them from the stacked site element by element: the same arrays, tables and banks, bit for bit
(arithmetic of the stacking itself)."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import arcflash
from arcflash.study.arcing import equipment_table
from arcflash.study.clearing import _not_clearing
from arcflash.study.device_bank import DeviceBank, device_bank
from arcflash.study.faults import build_network
from arcflash.study.stacking import stacked_site
from arcflash.study.uncertainty import sample_design, sample_site, uncertain_inputs

DEMO = Path(__file__).resolve().parents[2] / "site_data" / "fenwick_ridge"


def _demo_with_more_inputs():
    """The demo with gaps and working distances sampled too, and a bus whose arc one device at the bus (the
    arc on its line side) and one elsewhere do not clear."""
    site = arcflash.load_site(DEMO)
    tolerances = site.facility.tolerances.model_copy(update={"gap_tolerance_mm": 5.0,
                                                             "working_distance_tolerance_mm": 50.0})
    buses = dict(site.buses)
    buses["MV-MAIN"] = buses["MV-MAIN"].model_copy(update={"arc_not_cleared_by": ["52-A", "F-TA"]})
    return dataclasses.replace(site, facility=site.facility.model_copy(update={"tolerances": tolerances}),
                               buses=buses)


def _synthetic(tmp_path):
    from tests.synthetic import synthetic_site

    return arcflash.load_site(synthetic_site(tmp_path / "s", 120, ties=3, substation_size=40))


@pytest.fixture(params=["demo", "synthetic"])
def stacks(request, tmp_path):
    """(base site, the stacked site built copy by copy, the same built element by element)."""
    site = _demo_with_more_inputs() if request.param == "demo" else _synthetic(tmp_path)
    inputs = uncertain_inputs(site)
    tiled = stacked_site([sample_site(site, inputs, values) for values in sample_design(inputs, 6, seed=4)],
                         base=site)
    return site, tiled, dataclasses.replace(tiled, stack=None)


def test_network_arrays_equal_those_built_element_by_element(stacks):
    site, tiled, plain = stacks
    for name in site.scenarios:
        a, b = build_network(tiled, tiled.scenarios[name]), build_network(plain, plain.scenarios[name])
        for field in dataclasses.fields(a):
            x, y = getattr(a, field.name), getattr(b, field.name)
            if isinstance(x, np.ndarray):
                assert x.dtype == y.dtype and np.array_equal(x, y), (name, field.name)
            else:
                assert x == y, (name, field.name)
        assert not np.array_equal(a.branch_z_pu[:len(site.transformers)], a.branch_z_pu[len(site.transformers):
                                                                                       2 * len(site.transformers)])


def test_equipment_equals_the_table_built_bus_by_bus(stacks):
    site, tiled, plain = stacks
    pd.testing.assert_frame_equal(equipment_table(tiled), equipment_table(plain), check_exact=True)


def test_device_banks_and_their_thresholds_equal_those_built_device_by_device(stacks):
    site, tiled, plain = stacks
    for name in site.scenarios:
        own = device_bank(site, site.scenarios[name], build_network(site, site.scenarios[name]).device_ids)
        own.clearing_time_s(np.arange(own.kind.size), np.full(own.kind.size, 3000.0))  # the base's own caches made
        ids = build_network(plain, plain.scenarios[name]).device_ids
        a, b = device_bank(tiled, tiled.scenarios[name], ids), DeviceBank(plain, plain.scenarios[name], ids)
        every, amps = np.arange(len(ids)), np.geomspace(100.0, 50000.0, len(ids))
        assert np.array_equal(a.clearing_time_s(every, amps), b.clearing_time_s(every, amps))
        for attribute in ("kind", "row", "point_curve", "curve_position"):
            assert np.array_equal(getattr(a, attribute), getattr(b, attribute)), (name, attribute)
        for group in ("relays", "units"):
            x, y = getattr(a, group), getattr(b, group)
            assert (x is None) == (y is None)
            for key in [k for k in x or {} if isinstance(k, str)]:  # the parameters (not the curves' caches)
                assert np.array_equal(x[key], y[key], equal_nan=True), (name, group, key)
        assert a.curve_names == b.curve_names
        for within_s in (0.5, 2.0, np.inf):
            assert np.array_equal(a.threshold_a(within_s), b.threshold_a(within_s)), (name, within_s)


def test_devices_that_do_not_clear_an_arc_equal_those_read_bus_by_bus():
    site = _demo_with_more_inputs()
    inputs = uncertain_inputs(site)
    tiled = stacked_site([sample_site(site, inputs, v) for v in sample_design(inputs, 4, seed=2)], base=site)
    plain = dataclasses.replace(tiled, stack=None)
    for name in site.scenarios:
        net = build_network(plain, plain.scenarios[name])
        excluded, line_side = _not_clearing(tiled, tiled.scenarios[name], net)
        assert (excluded, line_side) == _not_clearing(plain, plain.scenarios[name], net)
        assert len(excluded) == 4 and len(line_side) == 4  # one bus a copy


def test_samples_with_more_inputs_studied_together_equal_each_studied_alone():
    from tests.study.test_uncertainty import _assert_samples_together_equal_alone

    site = _demo_with_more_inputs()
    assert {item.section for item in uncertain_inputs(site)} >= {"buses", "devices", "cables", "transformers",
                                                                 "utilities"}
    _assert_samples_together_equal_alone(site, 3, seed=8)


@pytest.mark.parametrize("source", ["demo", "synthetic"])
def test_a_scenarios_numbers_equal_its_rows(source, tmp_path):
    # An uncertainty chunk reads each scenario's energies, boundaries and bolted currents as arrays
    # (scenario_numbers) rather than as rows: the same values, bit for bit, staged arcs included
    from arcflash.study.pipeline import ENERGY_COLUMNS, _scenario_rows, scenario_numbers

    site = _demo_with_more_inputs() if source == "demo" else _synthetic(tmp_path)
    equipment = equipment_table(site)
    staged = 0
    for scenario in site.scenarios.values():
        rows = _scenario_rows(site, scenario, equipment)[0]
        values, index = scenario_numbers(site, scenario, equipment)
        assert index.equals(rows.index)
        for column, value in zip(ENERGY_COLUMNS + ("bolted_ka",), values):
            assert np.array_equal(value, rows[column].to_numpy(float), equal_nan=True), (scenario.name, column)
        staged += int(rows["staged"].sum())
    assert staged > 0
