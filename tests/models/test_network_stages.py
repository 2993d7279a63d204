"""The network in the states staged clearing reaches: low-rank update against a fresh factorisation.

Both solve the same superposition (common practice); the update must give the
same bolted currents and device currents as factorising the state itself, on
radial and meshed networks, for random sets of opened device branches.
"""

from __future__ import annotations

import numpy as np
import pytest

import arcflash
from arcflash.models.network_stages import StateKey
from arcflash.study.faults import build_network
from arcflash.study.staging import network_states
from tests.synthetic import synthetic_site


def _assert_same_currents(a, b):
    """The same faults solved two ways (low-rank update, own factorisation): the same buses energised, the
    bolted and device currents equal to 1e-7 of the largest bolted current (both exact superpositions,
    common practice; the difference is rounding)."""
    assert (a.energized == b.energized).all()
    np.testing.assert_allclose(a.bolted_ka, b.bolted_ka, rtol=1e-7)
    scale = max(b.bolted_ka.max(), 1.0)
    assert np.abs(a.device_current_ka - b.device_current_ka).max() <= 1e-7 * scale * 1000


def _solved_two_ways(folder, scenario, buses, substation_size):
    """A synthetic site's network in ``scenario`` and two NetworkStates of it: one updating states from the
    base state's factors, one factorising every state on its own."""
    site = arcflash.load_site(synthetic_site(folder, buses, ties=6, substation_size=substation_size))
    net = build_network(site, site.scenario(scenario))
    updated, fresh = network_states(site, net), network_states(site, net)
    fresh._update_plan = lambda key: None  # every state factorised on its own
    return site, net, updated, fresh


@pytest.mark.parametrize("scenario", ["normal", "ties-closed"])
def test_update_equals_fresh_factorisation(tmp_path, scenario):
    _, net, updated, fresh = _solved_two_ways(tmp_path / "s", scenario, 400, 80)
    rng = np.random.default_rng(7)
    for _ in range(12):
        opened = frozenset(int(b) for b in net.device_branch[rng.choice(net.device_branch.size, 3, replace=False)])
        buses = rng.choice(len(net.bus_ids), 25, replace=False)
        _assert_same_currents(updated.solve(StateKey(opened), buses), fresh.solve(StateKey(opened), buses))
    assert updated.factorisations == 1 and fresh.factorisations > 10  # one factorisation serves every state


@pytest.mark.parametrize("scenario", ["normal", "ties-closed"])
def test_one_branch_updates_solved_together_equal_each_alone_and_a_fresh_factorisation(tmp_path, scenario):
    # States one opened branch away from the base state are updated all at once, mixed with base-state and
    # multi-branch faults in one call: each fault must get the bits it gets alone, and the currents of
    # factorising its state itself.
    site, net, together, fresh = _solved_two_ways(tmp_path / "s", scenario, 300, 60)
    rng = np.random.default_rng(5)
    branches = net.device_branch[rng.choice(net.device_branch.size, 30, replace=False)].tolist()
    keys = [StateKey(frozenset({b})) for b in branches] + [StateKey()] * 5
    keys += [StateKey(frozenset(branches[k:k + 2])) for k in range(0, 10, 2)]
    buses = rng.choice(len(net.bus_ids), len(keys))
    batch = together.solve_pairs(keys, buses)
    for k, (key, bus) in enumerate(zip(keys, buses)):
        alone = network_states(site, net).solve_pairs([key], [bus])
        assert batch.energized[k] == alone.energized[0]
        assert batch.bolted_ka[k] == alone.bolted_ka[0]
        assert (batch.device_current_ka[k] == alone.device_current_ka[0]).all()
        _assert_same_currents(alone, fresh.solve(key, [bus]))  # alone: bit for bit the batch's row


def test_line_side_split_moves_the_fault_off_the_bus(tmp_path):
    # A state that splits a transformer branch's end off its secondary bus: the fault on the split node is
    # fed through the transformer only; the bus (with its motors) no longer feeds it.
    from tests.site.helpers import chain, write_site

    doc = chain(motors=[{"id": "M", "bus": "LV", "size": "300 hp", "kv": 0.46}])
    site = arcflash.load_site(write_site(tmp_path / "c", doc))
    net = build_network(site, site.scenario(None))
    states = network_states(site, net)
    lv, t = net.bus_ids.index("LV"), net.branch_ids.index("T")
    whole = states.solve(StateKey(), [lv])
    split = states.solve(StateKey(split=(lv, frozenset({t}))), [lv])
    assert split.energized[0] and 0 < split.bolted_ka[0] < whole.bolted_ka[0]


@pytest.mark.parametrize("scenario", ["normal", "ties-closed"])
def test_update_ties_on_parts_without_shunts(tmp_path, scenario):
    # Opening the devices around a bus without motors cuts it off on several sides (and, opened further
    # out, chains of such buses): the update keeps one opened branch per such part, hanging it on a part
    # with a shunt. Same answer as factorising the state, still one factorisation.
    import scipy.sparse as sp
    from scipy.sparse.csgraph import breadth_first_order

    _, net, updated, fresh = _solved_two_ways(tmp_path / "s", scenario, 400, 80)
    n = len(net.bus_ids)
    graph = sp.coo_matrix((np.ones(net.branch_from.size), (net.branch_from, net.branch_to)), shape=(n, n))
    device_branches = set(int(b) for b in net.device_branch)
    no_shunt = np.setdiff1d(np.arange(n), net.shunt_bus)
    rng = np.random.default_rng(11)
    multi_cut = 0
    for bus in rng.choice(no_shunt, 40, replace=False):
        near = breadth_first_order(graph, int(bus), directed=False, return_predecessors=False)[:4]
        opened = frozenset(b for b in range(net.branch_from.size) if b in device_branches
                           and (net.branch_from[b] in near or net.branch_to[b] in near))
        if len(opened) < 2:
            continue
        key = StateKey(opened)
        plan = updated._update_plan(key)
        multi_cut += plan is not None and len(plan) < len(opened)
        buses = rng.choice(n, 20, replace=False)
        _assert_same_currents(updated.solve(key, buses), fresh.solve(key, buses))
    assert multi_cut >= 5  # the case this test is about was reached
    assert updated.factorisations == 1


@pytest.mark.parametrize("scenario", ["normal", "ties-closed"])
def test_parts_of_a_state_from_the_forest_equal_a_graph_search(tmp_path, scenario):
    # The connected parts of a state (forest branches cut, the other closed branches joining pieces again)
    # must be those a plain graph search finds (the same partition of the buses).
    import scipy.sparse as sp
    from scipy.sparse.csgraph import connected_components

    from arcflash.models.network_forest import SpanningForest

    site = arcflash.load_site(synthetic_site(tmp_path / "s", 400, ties=6, substation_size=80))
    net = build_network(site, site.scenario(scenario))
    n, m = len(net.bus_ids), net.branch_from.size
    forest = SpanningForest(n, net.branch_from, net.branch_to)
    rng = np.random.default_rng(5)
    for count in (0, 1, 3, 8, 30, 120):
        closed = np.ones(m, dtype=bool)
        closed[rng.choice(m, count, replace=False)] = False
        graph = sp.coo_matrix((np.ones(int(closed.sum())), (net.branch_from[closed], net.branch_to[closed])),
                              shape=(n, n))
        expected = connected_components(graph, directed=False)[1]
        label = forest.components(closed)
        pairs = np.unique(np.stack([label, expected]), axis=1)  # a one-to-one map between the two labellings
        assert np.unique(pairs[0]).size == pairs.shape[1] == np.unique(pairs[1]).size


@pytest.mark.parametrize("scenario", ["normal", "ties-closed", "twin"])
def test_a_source_reaches_a_bus_after_a_few_openings_as_the_parts_of_the_state_say(tmp_path, scenario):
    # reaches_source answers a few openings from the spanning forest alone (radial or with loops closed); it
    # must agree with the energised parts of the whole state (computed here with a plain graph search) for
    # every branch opened alone and for random sets of two to four
    import scipy.sparse as sp
    from scipy.sparse.csgraph import connected_components

    from arcflash.models.network_stages import StateKey
    from arcflash.study.staging import network_states

    import dataclasses

    site = arcflash.load_site(synthetic_site(tmp_path / "s", 200, ties=3, substation_size=50))
    net = build_network(site, site.scenario("ties-closed" if scenario == "twin" else scenario))
    if scenario == "twin":  # every tenth branch doubled by a parallel twin (a loop of two branches)
        twin = np.arange(0, net.branch_from.size, 10)
        net = dataclasses.replace(net, branch_from=np.concatenate([net.branch_from, net.branch_from[twin]]),
                                  branch_to=np.concatenate([net.branch_to, net.branch_to[twin]]),
                                  branch_z_pu=np.concatenate([net.branch_z_pu, net.branch_z_pu[twin]]))
    states = network_states(site, net)
    n, m = len(net.bus_ids), net.branch_from.size
    rng = np.random.default_rng(4)
    openings = [[branch] for branch in range(m)]  # every branch alone, then random sets of two to four
    openings += [list(rng.choice(m, size, replace=False)) for size in (2, 3, 4) for _ in range(m // 3)]
    for opened in openings:
        closed = np.ones(m, dtype=bool)
        closed[opened] = False
        graph = sp.coo_matrix((np.ones(int(closed.sum())), (net.branch_from[closed], net.branch_to[closed])),
                              shape=(n, n))
        label = connected_components(graph, directed=False)[1]
        fed = np.isin(label, label[net.source_bus])
        key = StateKey(frozenset(int(b) for b in opened))
        for bus in rng.choice(n, 5):
            assert states.reaches_source(key, int(bus)) == bool(fed[bus])


def test_a_block_diagonal_solve_touches_only_the_parts_of_its_right_hand_side():
    # PartsLU solves only the parts (and columns) where the right-hand side has entries: the solution must
    # equal a solve of the whole matrix (linear algebra: the blocks are independent), and be exactly zero
    # in the parts the right-hand side leaves untouched.
    import scipy.sparse as sp
    from scipy.sparse.linalg import splu

    from arcflash.models.network_factors import PartsLU

    rng = np.random.default_rng(2)
    sizes = [4, 6, 5]
    blocks = [np.eye(k) * 4.0 + rng.random((k, k)) + 1j * rng.random((k, k)) for k in sizes]
    whole = sp.block_diag(blocks, format="csc")
    starts = np.cumsum([0] + sizes)
    rows = [np.arange(a, b) for a, b in zip(starts[:-1], starts[1:])]
    parts = PartsLU(whole.shape, [(r, splu(sp.csc_matrix(block))) for r, block in zip(rows, blocks)])
    rhs = np.zeros((whole.shape[0], 3), dtype=complex)
    rhs[1, 0] = 1.0  # part 0 only
    rhs[12, 1] = 2.0 - 1.0j  # part 2 only
    rhs[[0, 5], 2] = [1.0, -1.0]  # parts 0 and 1
    solved = parts.solve(rhs)
    np.testing.assert_allclose(solved, splu(whole).solve(rhs), rtol=1e-12, atol=1e-14)
    assert not solved[rows[1], 0].any() and not solved[rows[2], 0].any()
    assert not solved[rows[0], 1].any() and not solved[rows[1], 1].any()
    assert not solved[rows[2], 2].any()
    np.testing.assert_array_equal(parts.solve(rhs[:, 0]), solved[:, 0])


def test_the_parts_of_a_block_diagonal_matrix_are_factorised_when_first_solved():
    # factorised(): a part is factorised only when a right-hand side reaches it (a stack of many copies whose
    # arcs are followed in a few of them factorises those few); each solve equals the whole matrix's solve
    # (linear algebra: the blocks are independent), and equals the part's own factors' solve bit for bit.
    import scipy.sparse as sp
    from scipy.sparse.linalg import splu

    from arcflash.models.network_factors import factorised

    rng = np.random.default_rng(3)
    sizes = [4, 6, 5]
    blocks = [np.eye(k) * 4.0 + rng.random((k, k)) + 1j * rng.random((k, k)) for k in sizes]
    whole = sp.block_diag(blocks, format="csr")
    part = np.repeat(np.arange(3), sizes)
    memo = {}
    parts = factorised(whole, part, memo)
    assert len(memo) == 0 and np.array_equal(parts.row_part, part)
    assert np.array_equal(parts.local, np.concatenate([np.arange(k) for k in sizes]))
    rhs = np.zeros(whole.shape[0], dtype=complex)
    rhs[12] = 1.0  # part 2 only
    solved = parts.solve(rhs)
    assert len(memo) == 1
    np.testing.assert_allclose(solved, splu(whole.tocsc()).solve(rhs), rtol=1e-12, atol=1e-14)
    np.testing.assert_array_equal(solved[10:], splu(sp.csc_matrix(blocks[2])).solve(rhs[10:]))
    rhs[0] = 1.0
    parts.solve(rhs)
    assert len(memo) == 2  # part 1 still never factorised


def test_a_small_part_is_inverted_and_its_columns_do_not_depend_on_what_is_solved_with_them():
    # network_factors.new_factors: up to DENSE_ROWS rows the matrix is inverted (a DenseInverse), above it
    # SuperLU factorises it; both solve the same system (linear algebra, to rounding), and a DenseInverse's
    # columns (unit right-hand sides, and the +1/-1 pairs of the low-rank updates) are exact picks and
    # differences of the inverse's columns, the same bit for bit whether solved alone or together.
    import scipy.sparse as sp
    from scipy.sparse.linalg import splu

    from arcflash.models.network_factors import DENSE_ROWS, DenseInverse, new_factors, solve_each

    rng = np.random.default_rng(4)
    for n in (5, DENSE_ROWS, DENSE_ROWS + 1):
        y = sp.random(n, n, density=0.2, random_state=n, format="csc") * (1 + 1j) + sp.eye(n) * 6.0
        y = sp.csc_matrix(y)
        made = new_factors(n, y.indptr, y.indices, y.data)
        assert isinstance(made, DenseInverse) == (n <= DENSE_ROWS)
        rhs = np.zeros((n, 6), dtype=complex)
        rhs[rng.integers(0, n, 6), np.arange(6)] = 1.0
        rhs[(np.arange(3) + 1) % n, np.arange(3)] -= 1.0  # some +1/-1 pairs
        together = solve_each(made, rhs)
        np.testing.assert_allclose(together, splu(y).solve(rhs), rtol=1e-12, atol=1e-14)
        for column in range(6):
            assert np.array_equal(solve_each(made, rhs[:, [column]])[:, 0], together[:, column])
        if isinstance(made, DenseInverse):
            assert np.array_equal(new_factors(n, y.indptr, y.indices, y.data, y).inverse, made.inverse)


def test_a_solve_asked_for_some_devices_gives_their_columns_of_the_full_solve(tmp_path):
    # solve_pairs(devices=...) reports only those devices' currents (staged clearing asks for the devices of
    # its arcs' own parts): each must equal its column of the full solve, bit for bit (the same arithmetic
    # per device), in the base state and after openings
    from arcflash.models.network_stages import StateKey
    from arcflash.study.staging import network_states

    site = arcflash.load_site(synthetic_site(tmp_path / "s", 200, ties=3, substation_size=50))
    net = build_network(site, site.scenario("ties-closed"))
    states = network_states(site, net)
    rng = np.random.default_rng(8)
    devices = np.sort(rng.choice(net.device_branch.size, net.device_branch.size // 3, replace=False))
    buses = rng.choice(len(net.bus_ids), 30, replace=False)
    keys = [StateKey()] * 10 + [StateKey(frozenset({int(b)})) for b in rng.choice(net.device_branch, 20)]
    full = states.solve_pairs(keys, buses)
    some = states.solve_pairs(keys, buses, devices=devices)
    assert np.array_equal(some.bolted_ka, full.bolted_ka) and np.array_equal(some.energized, full.energized)
    assert np.array_equal(some.device_current_ka, full.device_current_ka[:, devices])
    assert (some.device_current_ka > 0).any()


def test_a_matrix_met_again_reuses_its_factors_and_solves_the_same(monkeypatch):
    # The scenarios of a site share the LU factors of their base states, remembered by matrix: the demo's
    # maintenance scenario has the network of its normal one, so its base state is not factorised again,
    # and its faults solve the same, bit for bit, as with a factorisation of its own (a factorisation
    # depends on its matrix alone)
    import arcflash.models.network_factors as factors_module
    from arcflash.models.network_factors import PartsLU
    from tests.output.test_label_fields import DEMO

    site = arcflash.load_site(DEMO)
    nets = [build_network(site, site.scenario(name)) for name in ("normal", "maintenance-a")]
    assert all(np.array_equal(getattr(nets[0], f), getattr(nets[1], f))
               for f in ("branch_from", "branch_to", "branch_z_pu", "shunt_bus", "shunt_z_pu"))
    buses = np.arange(len(nets[0].bus_ids))
    first = network_states(site, nets[0])
    expected = first.solve(StateKey(), buses)
    made = []
    real = factors_module.new_factors
    monkeypatch.setattr(factors_module, "new_factors", lambda *a: made.append(a) or real(*a))

    def factors(states):
        lu = states._prepared(StateKey())[1]
        return [part for _, part in lu.factors] if isinstance(lu, PartsLU) else [lu]

    again = network_states(site, nets[1])  # the same site: its scenarios share the memory
    solved = again.solve(StateKey(), buses)
    assert made == [] and all(a is b for a, b in zip(factors(again), factors(first), strict=True))
    assert np.array_equal(solved.bolted_ka, expected.bolted_ka)
    assert np.array_equal(solved.device_current_ka, expected.device_current_ka)
    alone = network_states(arcflash.load_site(DEMO), nets[1])  # another site: factorised afresh, the same answer
    fresh = alone.solve(StateKey(), buses)
    assert len(made) == len(factors(alone)) and np.array_equal(fresh.bolted_ka, expected.bolted_ka)
    assert np.array_equal(fresh.device_current_ka, expected.device_current_ka)


def test_a_branch_opened_in_another_part_changes_nothing_for_a_fault():
    # Two parts (nodes 0-5 with a utility at 0, a motor at 2 and a loop 1-4-5; nodes 6-8 with a source at 6):
    # a state with branches opened in both parts, each fault updated by its own part's branches only, against
    # factorising the state itself (hand-made network, invented impedances).
    from arcflash.models.network_stages import NetworkStates

    branch_from, branch_to = np.array([0, 1, 2, 1, 4, 5, 6, 7]), np.array([1, 2, 3, 4, 5, 1, 7, 8])
    z = np.array([0.01 + 0.05j, 0.02 + 0.04j, 0.03 + 0.03j, 0.01 + 0.02j, 0.02 + 0.02j, 0.015 + 0.01j,
                  0.02 + 0.06j, 0.01 + 0.03j])

    def states():
        return NetworkStates(np.ones(9), branch_from, branch_to, z, np.array([0, 2, 6]),
                             np.array([0.001 + 0.01j, 0.5 + 2.0j, 0.002 + 0.02j]), np.array([False, True, False]),
                             np.array([0, 6]), np.arange(8), np.ones(8))

    updated, fresh = states(), states()
    fresh._update_plan = lambda key: None
    for opened in ({3}, {7}, {3, 7}, {1, 4, 7}):
        key = StateKey(frozenset(opened))
        _assert_same_currents(updated.solve(key, np.arange(9)), fresh.solve(key, np.arange(9)))
