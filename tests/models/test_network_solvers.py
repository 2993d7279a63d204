"""The radial (tree) solver against the general (sparse LU) solver on the same networks.

Both implement the same superposition (common practice); on a radial network
they must give the same Thevenin impedances and the same device currents.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

import arcflash
import arcflash.models.network as network
from arcflash.study.faults import build_network
from tests.synthetic import synthetic_site

DEMO = Path(__file__).resolve().parents[2] / "site_data" / "fenwick_ridge"


def _solve(net, meshed, monkeypatch, voltage_factor=1.0):
    with monkeypatch.context() as patch:
        if meshed:  # the sparse LU solve (not the tree-plus-loops solve, which reuses the radial one)
            patch.setattr(network, "_is_radial", lambda sub, merged: False)
            patch.setattr(network, "MAX_LOOPS_FOR_UPDATE", -1)
            patch.setattr(network, "BLOCK_COLUMNS", 14)  # several column blocks, the last one partial
        else:
            def refuse(*args):
                raise AssertionError("the general solver was used on a radial network")
            patch.setattr(network, "_meshed", refuse)
        return network.solve_faults(net.base_kv, net.branch_from, net.branch_to, net.branch_z_pu, net.shunt_bus,
                                    net.shunt_z_pu, net.source_bus, net.device_branch, net.device_kv,
                                    voltage_factor=voltage_factor)


def _key(solution):
    """One key per device row (fault bus, device) and the order that sorts the rows by it."""
    key = solution.device_fault_bus.astype(np.int64) * 1_000_000 + solution.device
    return key, np.argsort(key)


def _sorted(solution):
    key, order = _key(solution)
    return key[order], solution.device_current_ka[order]


def _sorted_rows(solution, net):
    order = _key(solution)[1]
    return solution.device_fault_bus[order], np.asarray(net.device_branch)[solution.device[order]]


def _sorted_share(solution):
    return solution.device_share[_key(solution)[1]]


def _directions(solution):
    return solution.device_direction[_key(solution)[1]]


@pytest.mark.parametrize("source", ["demo", "synthetic"])
def test_radial_equals_general(source, tmp_path, monkeypatch):
    folder = DEMO if source == "demo" else synthetic_site(tmp_path / "s", 400, substation_size=100)
    site = arcflash.load_site(folder)
    net = build_network(site, site.scenario("normal"))
    for c in (1.0, 1.05):  # IEC 60909 voltage factor c_max = 1.05 for LV (common practice)
        radial = _solve(net, False, monkeypatch, c)
        general = _solve(net, True, monkeypatch, c)
        live = radial.energized
        np.testing.assert_allclose(radial.z_thevenin_pu[live], general.z_thevenin_pu[live], rtol=1e-7)
        key_r, current_r = _sorted(radial)
        key_g, current_g = _sorted(general)
        np.testing.assert_array_equal(key_r, key_g)
        np.testing.assert_allclose(current_r, current_g, rtol=1e-6)
        # Directions: the tree's (toward the fault) and the LU solve's (active power, Re(V conj I)) agree
        # wherever the device carries at least half the fault, except on a branch ending at the faulted bus,
        # where the active power is near zero and its sign is noise (seen on the demo without motors); where
        # motors feed a smaller share they may differ (seen: 22 of 24,560 rows of the synthetic site, shares up
        # to 0.35). The direction is reported only (fault tables); clearing does not use it.
        fault_bus, branch = _sorted_rows(general, net)
        at_fault = (net.branch_from[branch] == fault_bus) | (net.branch_to[branch] == fault_bus)
        big = (_sorted_share(general) >= 0.5) & ~at_fault
        np.testing.assert_array_equal(_directions(radial)[big], _directions(general)[big])


def test_parallel_branches_are_merged(monkeypatch):
    # Two equal parallel branches between a source bus and a load bus: the radial solver merges
    # them and gives each device half the edge current (arithmetic).
    z = 0.1 + 0.5j
    net = dict(base_kv=[13.8, 13.8], branch_from=[0, 0], branch_to=[1, 1], branch_z_pu=[z, z],
               shunt_bus=[0], shunt_z_pu=[0.01 + 0.1j], source_bus=[0], device_branch=[0, 1],
               device_kv=[13.8, 13.8])
    solution = network.solve_faults(**net)
    z_th = 1 / (1 / (0.01 + 0.1j)) + z / 2
    assert solution.z_thevenin_pu[1] == pytest.approx(z_th, rel=1e-12)
    at_1 = solution.device_fault_bus == 1
    np.testing.assert_allclose(solution.device_share[at_1], [0.5, 0.5], rtol=1e-12)


@pytest.mark.parametrize("source", ["demo", "synthetic"])
def test_tree_plus_loops_equals_sparse_lu(source, tmp_path, monkeypatch):
    # A meshed network (ties closed) solved as spanning tree + low-rank update against the general sparse
    # LU solve: same Thevenin impedances, same device rows and currents (rows whose share is within the
    # update's tolerance of the table's 1e-3 threshold may fall on either side of it).
    if source == "demo":
        site, scenario = arcflash.load_site(DEMO), "tie-closed"
    else:
        site, scenario = arcflash.load_site(synthetic_site(tmp_path / "s", 400, ties=8, substation_size=80)), \
            "ties-closed"
    net = build_network(site, site.scenario(scenario))
    args = (net.base_kv, net.branch_from, net.branch_to, net.branch_z_pu, net.shunt_bus, net.shunt_z_pu,
            net.source_bus, net.device_branch, net.device_kv)
    with monkeypatch.context() as patch:
        patch.setattr(network, "_meshed", lambda *a: (_ for _ in ()).throw(AssertionError("LU used")))
        update = network.solve_faults(*args)
    with monkeypatch.context() as patch:
        patch.setattr(network, "MAX_LOOPS_FOR_UPDATE", -1)
        general = network.solve_faults(*args)
    live = general.energized
    np.testing.assert_allclose(update.z_thevenin_pu[live], general.z_thevenin_pu[live], rtol=1e-7)
    key_u, current_u = _sorted(update)
    key_g, current_g = _sorted(general)
    common, at_u, at_g = np.intersect1d(key_u, key_g, return_indices=True)
    assert common.size > 0.99 * key_g.size
    np.testing.assert_allclose(current_u[at_u], current_g[at_g], rtol=1e-3)
    share_g = _sorted_share(general)
    only_g = np.setdiff1d(np.arange(key_g.size), at_g)
    assert np.all(share_g[only_g] < 1e-3 + 1e-5)
    direction_u = _directions(update)[at_u]
    direction_g = _directions(general)[at_g]
    big = current_g[at_g] > 1e-2 * current_g.max()
    fault_bus, branch = _sorted_rows(general, net)
    big &= ~((net.branch_from[branch] == fault_bus) | (net.branch_to[branch] == fault_bus))[at_g]  # see above
    assert np.mean(direction_u[big] == direction_g[big]) > 0.99


def test_scaled_tree_columns_scale_each_side_of_the_source(tmp_path):
    # RadialNetwork.columns with per-source factors inside and outside the source's subtree equals the
    # plain columns multiplied region by region (the spreading down the tree is linear); the meshed solve
    # relies on it to get Z_T[:, p] - Z_T[:, c] of a tree edge from one column.
    from arcflash.models.network_radial import RadialNetwork

    rng = np.random.default_rng(3)
    n = 60
    parent = np.array([-1] + [int(rng.integers(0, k)) for k in range(1, n)])
    a, b = parent[1:], np.arange(1, n)
    edge_y = 1.0 / (rng.uniform(0.01, 0.2, n - 1) + 1j * rng.uniform(0.05, 0.5, n - 1))
    shunt = np.where(rng.random(n) < 0.3, 1.0 / (0.5 + 3j), 0.0)
    shunt[0] = 1.0 / (0.001 + 0.01j)
    tree = RadialNetwork(n, a, b, edge_y, shunt, [0])
    sources = rng.choice(np.arange(1, n), 12, replace=False)
    s_in, s_out = rng.normal(size=12) + 1j * rng.normal(size=12), rng.normal(size=12) + 1j * rng.normal(size=12)
    plain, scaled = tree.columns(sources), tree.columns(sources, s_in, s_out)
    for col, s in enumerate(sources):
        inside = tree.in_subtree(np.full(n, s), np.arange(n))
        expected = plain[:, col] * np.where(inside, s_in[col], s_out[col])
        np.testing.assert_allclose(scaled[:, col], expected, rtol=1e-12)
        # and the identities used: Z_T[k, p] = Z_T[k, c] up[c] inside, Z_T[k, c] / down[c] outside
        p = tree.parent[s]
        z_p = tree.columns([p])[:, 0]
        np.testing.assert_allclose(z_p, plain[:, col] * np.where(inside, tree.up[s], 1.0 / tree.down[s]),
                                   rtol=1e-12)


def test_tree_columns_of_one_part_are_its_rows_of_the_whole_columns():
    # RadialNetwork.columns(nodes=...) computes only the rows of one tree of a forest (the meshed solve of
    # a stacked site asks for each copy's rows alone): they must be those rows of the whole array, bit for
    # bit, scaled or not, and the rows of the other trees of the whole array are zero
    from arcflash.models.network_radial import RadialNetwork

    rng = np.random.default_rng(6)
    sizes = [25, 40, 18]
    starts = np.cumsum([0] + sizes)
    n = int(starts[-1])
    a, b = [], []
    for lo, size in zip(starts[:-1], sizes):
        for k in range(1, size):
            a.append(lo + int(rng.integers(0, k)))
            b.append(lo + k)
    a, b = np.array(a), np.array(b)
    edge_y = 1.0 / (rng.uniform(0.01, 0.2, a.size) + 1j * rng.uniform(0.05, 0.5, a.size))
    shunt = np.where(rng.random(n) < 0.3, 1.0 / (0.5 + 3j), 0.0)
    shunt[starts[:-1]] = 1.0 / (0.001 + 0.01j)
    tree = RadialNetwork(n, a, b, edge_y, shunt, list(starts[:-1]))
    for lo, hi in zip(starts[:-1], starts[1:]):
        nodes = np.arange(lo, hi)
        sources = rng.choice(nodes, 6, replace=False)
        s_in, s_out = rng.normal(size=6) + 1j * rng.normal(size=6), rng.normal(size=6) + 1j * rng.normal(size=6)
        for scales in ((), (s_in, s_out)):
            whole = tree.columns(sources, *scales)
            assert np.array_equal(tree.columns(sources, *scales, nodes=nodes), whole[nodes])
            assert not whole[np.setdiff1d(np.arange(n), nodes)].any()


@pytest.mark.parametrize("scenario, most_loops", [("normal", None), ("tie-closed", None), ("on-generator", None),
                                                  ("tie-closed", 0)])
def test_two_separate_networks_solved_together_equal_each_solved_alone(scenario, most_loops, monkeypatch):
    # a part's results never depend on another part (the samples of an uncertainty run are studied as
    # disconnected copies): radial parts node by node, parts with few loops on one spanning tree with the
    # update part by part, parts with many loops (most_loops 0: every loop is "many") each with its own
    # sparse solve; equal bit for bit
    if most_loops is not None:
        monkeypatch.setattr(network, "MAX_LOOPS_FOR_UPDATE", most_loops)
    site = arcflash.load_site(DEMO)
    net = build_network(site, site.scenario(scenario))
    n, nb = len(net.base_kv), len(net.branch_from)

    def solve(base_kv, f, t, z, sb, sz, src, db, dkv):
        return network.solve_faults(base_kv, f, t, z, sb, sz, src, db, dkv)

    alone = solve(net.base_kv, net.branch_from, net.branch_to, net.branch_z_pu, net.shunt_bus, net.shunt_z_pu,
                  net.source_bus, net.device_branch, net.device_kv)
    both = solve(np.concatenate([net.base_kv] * 2), np.concatenate([net.branch_from, net.branch_from + n]),
                 np.concatenate([net.branch_to, net.branch_to + n]), np.concatenate([net.branch_z_pu] * 2),
                 np.concatenate([net.shunt_bus, net.shunt_bus + n]), np.concatenate([net.shunt_z_pu] * 2),
                 np.concatenate([net.source_bus, net.source_bus + n]),
                 np.concatenate([net.device_branch, net.device_branch + nb]), np.concatenate([net.device_kv] * 2))
    devices = len(net.device_branch)
    for copy in (0, 1):
        buses = slice(copy * n, (copy + 1) * n)
        assert np.array_equal(both.bolted_ka[buses], alone.bolted_ka)
        assert np.array_equal(both.z_thevenin_pu[buses], alone.z_thevenin_pu, equal_nan=True)
        rows = (both.device_fault_bus >= copy * n) & (both.device_fault_bus < (copy + 1) * n)
        key = (both.device_fault_bus[rows] - copy * n) * 1_000_000 + both.device[rows] - copy * devices
        mine = np.argsort(key)
        theirs = _key(alone)[1]
        assert np.array_equal(key[mine], _key(alone)[0][theirs])
        assert np.array_equal(both.device_current_ka[rows][mine], alone.device_current_ka[theirs])
        assert np.array_equal(both.device_direction[rows][mine], alone.device_direction[theirs])


def test_tree_columns_of_several_trees_at_once_equal_each_tree_alone():
    # RadialNetwork.columns with one row of sources and buses per tree (parts alike of a stacked site, their
    # loop updates taken together) must give each tree's columns bit for bit as its own call does.
    from arcflash.models.network_radial import RadialNetwork

    rng = np.random.default_rng(8)
    size, trees = 30, 4
    n = size * trees
    a, b = [], []
    for t in range(trees):
        for k in range(1, size):
            a.append(t * size + int(rng.integers(0, k)))
            b.append(t * size + k)
    a, b = np.array(a), np.array(b)
    edge_y = 1.0 / (rng.uniform(0.01, 0.2, a.size) + 1j * rng.uniform(0.05, 0.5, a.size))
    shunt = np.where(rng.random(n) < 0.3, 1.0 / (0.5 + 3j), 0.0)
    shunt[::size] = 1.0 / (0.001 + 0.01j)
    tree = RadialNetwork(n, a, b, edge_y, shunt, list(range(0, n, size)))
    nodes = np.arange(n).reshape(trees, size)
    sources = np.stack([rng.choice(row, 5, replace=False) for row in nodes])
    s_in, s_out = rng.normal(size=(2,) + sources.shape) + 1j * rng.normal(size=(2,) + sources.shape)
    for scales in ((), (s_in, s_out)):
        together = tree.columns(sources, *scales, nodes=nodes)
        for t in range(trees):
            alone = tree.columns(sources[t], *(s[t] for s in scales), nodes=nodes[t])
            assert np.array_equal(together[t], alone)


def test_parts_unlike_and_alike_solved_together_equal_each_solved_alone(tmp_path):
    # Parts with loops are updated in groups of parts alike in size (an uncertainty run's copies); parts of
    # other sizes, and copies whose values differ (so that other devices come near their loops), must each
    # get the results they have alone, bit for bit.
    demo = arcflash.load_site(DEMO)
    nets = [build_network(demo, demo.scenario("tie-closed"))]
    synthetic = arcflash.load_site(synthetic_site(tmp_path / "s", 120, ties=3, substation_size=40))
    nets.append(build_network(synthetic, synthetic.scenario("ties-closed")))
    rng = np.random.default_rng(4)
    parts = [nets[0], nets[1], nets[0], nets[0], nets[1]]
    values = [net.branch_z_pu * (1.0 if k < 2 else 10.0 ** rng.uniform(-1.0, 1.0, net.branch_z_pu.size))
              for k, net in enumerate(parts)]
    values[3] = nets[0].branch_z_pu * np.where(np.isin(nets[0].branch_ids, demo.scenario("tie-closed").close), 1e9, 1.0)
    offsets = np.cumsum([0] + [len(net.base_kv) for net in parts])
    branch_offsets = np.cumsum([0] + [len(net.branch_from) for net in parts])
    device_offsets = np.cumsum([0] + [len(net.device_branch) for net in parts])

    def joined(name, shift=None):
        arrays = [getattr(net, name) for net in parts]
        if shift is not None:
            arrays = [x + s for x, s in zip(arrays, shift)]
        return np.concatenate(arrays)

    both = network.solve_faults(joined("base_kv"), joined("branch_from", offsets), joined("branch_to", offsets),
                                 np.concatenate(values), joined("shunt_bus", offsets), joined("shunt_z_pu"),
                                 joined("source_bus", offsets), joined("device_branch", branch_offsets),
                                 joined("device_kv"))
    for k, net in enumerate(parts):
        alone = network.solve_faults(net.base_kv, net.branch_from, net.branch_to, values[k], net.shunt_bus,
                                     net.shunt_z_pu, net.source_bus, net.device_branch, net.device_kv)
        buses = slice(offsets[k], offsets[k + 1])
        assert np.array_equal(both.bolted_ka[buses], alone.bolted_ka)
        assert np.array_equal(both.z_thevenin_pu[buses], alone.z_thevenin_pu, equal_nan=True)
        rows = (both.device_fault_bus >= offsets[k]) & (both.device_fault_bus < offsets[k + 1])
        key = (both.device_fault_bus[rows] - offsets[k]) * 1_000_000 + both.device[rows] - device_offsets[k]
        mine, (theirs_key, theirs) = np.argsort(key), _key(alone)
        assert np.array_equal(key[mine], theirs_key[theirs])
        assert np.array_equal(both.device_current_ka[rows][mine], alone.device_current_ka[theirs])
        assert np.array_equal(both.device_direction[rows][mine], alone.device_direction[theirs])


@pytest.mark.parametrize("scenario", ["normal", "ties-closed"])
def test_the_back_feed_floor_leaves_out_exactly_the_rows_fed_out_through_a_bridge_below_the_floor(scenario,
                                                                                                   tmp_path):
    # The floor (each device's smallest current that clears within the cap) prunes a device's back-feed rows:
    # those of faults on the side of its branch that holds the utility, fed out through the device by motors
    # on its other side. A radial network and a meshed one (the loop update's rows too): exactly the rows of
    # a bridge feeding out below its floor are left out; every other row is kept with the very same current.
    import scipy.sparse as sp
    from scipy.sparse.csgraph import connected_components

    from arcflash.study.clearing import non_bridge_branches
    from arcflash.study.device_bank import DeviceBank

    site = arcflash.load_site(synthetic_site(tmp_path / "s", 240, ties=4, substation_size=60))
    net = build_network(site, site.scenario(scenario))
    args = (net.base_kv, net.branch_from, net.branch_to, net.branch_z_pu, net.shunt_bus, net.shunt_z_pu,
            net.source_bus, net.device_branch, net.device_kv)
    floor_ka = DeviceBank(site, site.scenario(scenario), net.device_ids).threshold_a(2.0) / 1000.0
    whole = network.solve_faults(*args)
    pruned = network.solve_faults(*args, backfeed_min_ka=floor_ka)
    key_w, current_w = _sorted(whole)
    key_p, current_p = _sorted(pruned)
    kept = np.isin(key_w, key_p)
    np.testing.assert_array_equal(key_w[kept], key_p)
    np.testing.assert_array_equal(current_w[kept], current_p)
    order = _key(whole)[1]
    bus, device = whole.device_fault_bus[order], whole.device[order]
    # rows fed out through a bridge: the fault on the side with the utility, which the other side lacks
    fed_out = np.zeros(bus.size, dtype=bool)
    n, bridge = len(net.bus_ids), ~non_bridge_branches(net)
    for d in np.flatnonzero(bridge[net.device_branch]).tolist():
        others = np.flatnonzero(np.arange(net.branch_from.size) != net.device_branch[d])
        graph = sp.coo_matrix((np.ones(others.size), (net.branch_from[others], net.branch_to[others])), shape=(n, n))
        part = connected_components(graph, directed=False)[1]
        rows = np.flatnonzero(device == d)
        far = part[net.branch_to[net.device_branch[d]]]
        far = np.where(part[bus[rows]] == far, part[net.branch_from[net.device_branch[d]]], far)
        fed_out[rows] = np.isin(part[bus[rows]], part[net.source_bus]) & ~np.isin(far, part[net.source_bus])
    below = current_w < floor_ka[device]
    assert (fed_out & below).sum() > 0
    np.testing.assert_array_equal(~kept, fed_out & below)
