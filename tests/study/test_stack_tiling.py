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
            if field.name == "tiling":  # what the copy-by-copy build knows of its copies, and only it
                assert y is None and x.copies == len(tiled.stack.copies) and x.bus_count == len(site.buses)
            elif isinstance(x, np.ndarray):
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


def _states(net, tiling):
    from arcflash.models.network_stages import NetworkStates

    sources = set(net.source_ids)
    return NetworkStates(net.base_kv, net.branch_from, net.branch_to, net.branch_z_pu, net.shunt_bus,
                         net.shunt_z_pu, np.array([i not in sources for i in net.shunt_ids]), net.source_bus,
                         net.device_branch, net.device_kv, tiling=tiling)


def test_states_read_from_the_base_network_equal_those_of_the_whole_stack(stacks):
    # The topology of a stacked network's states read once from its base network (arcflash.models.network_tiles)
    # against reading it from the whole stacked network: the same plans, the same fed buses, the same faults,
    # bit for bit, for states of one to three openings, line-side splits and ended motors in every copy.
    from arcflash.models.network_stages import StateKey

    site, tiled, _ = stacks
    rng = np.random.default_rng(5)
    cut_off = False  # some faults with no source left: both answers met
    for name in site.scenarios:
        net = build_network(tiled, tiled.scenarios[name])
        quick, whole = _states(net, net.tiling), _states(net, None)
        per_copy = net.device_branch.reshape(net.tiling.copies, -1)
        keys, buses = [], []
        for copy, branches in enumerate(per_copy):
            own = np.arange(copy * net.tiling.bus_count, (copy + 1) * net.tiling.bus_count)
            for _ in range(12):
                opened = frozenset(rng.choice(branches, size=rng.integers(0, 4), replace=False).tolist())
                bus = int(rng.choice(own))
                split = None
                at_bus = [b for b in branches.tolist() if bus in (net.branch_from[b], net.branch_to[b])]
                if at_bus and rng.random() < 0.2:
                    split = (bus, frozenset(at_bus[:1]))
                keys.append(StateKey(opened, bool(rng.random() < 0.1), split))
                buses.append(bus)
        for key, bus in zip(keys, buses):
            assert quick.reaches_source(key, bus) == whole.reaches_source(key, bus), (name, key, bus)
            if key.opened:
                assert quick._update_plan(key) == whole._update_plan(key), (name, key)
        a, b = quick.solve_pairs(keys, buses), whole.solve_pairs(keys, buses)
        assert np.array_equal(a.energized, b.energized) and a.energized.any()
        cut_off |= not a.energized.all()
        assert np.array_equal(a.bolted_ka, b.bolted_ka), name
        assert np.array_equal(a.device_current_ka, b.device_current_ka), name
        some = np.arange(0, net.device_branch.size, 3)  # some devices only
        assert np.array_equal(quick.solve_pairs(keys, buses, devices=some).device_current_ka,
                              b.device_current_ka[:, some]), name
    assert cut_off


def test_a_tiling_the_network_does_not_follow_is_refused(stacks):
    from arcflash.models.network_tiles import Tiling

    site, tiled, _ = stacks
    net = build_network(tiled, tiled.scenarios["normal"])
    t = net.tiling
    moved = net.branch_to.copy()
    moved[t.branch_start[0] + t.branch_step[0]] = t.bus_count + (net.branch_to[t.branch_start[0]] + 1) % t.bus_count
    with pytest.raises(ValueError, match="not joined as its base"):  # copy 1 joins one branch elsewhere
        _states(dataclasses.replace(net, branch_to=moved), t)
    with pytest.raises(ValueError, match="devices"):
        _states(dataclasses.replace(net, device_branch=net.device_branch[::-1].copy()), t)
    with pytest.raises(ValueError, match="buses and branches"):
        _states(net, Tiling(t.copies + 1, t.bus_count, t.branch_start, t.branch_step, t.device_count))
