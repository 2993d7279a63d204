"""Source paths and the spanning forest on networks of many parts (the stacked copies of an uncertainty run).

Checks against a plain reading of the graph (common practice: a breadth-first search gives the fewest
branches from a source to each bus); no outside values.
"""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import shortest_path

from arcflash.models.network_forest import SpanningForest
from arcflash.study.clearing import all_source_paths


def _random_network(rng):
    n = int(rng.integers(2, 30))
    m = int(rng.integers(0, 45))
    f, t = rng.integers(0, n, m), rng.integers(0, n, m)
    keep = f != t
    f, t = f[keep], t[keep]
    devices = rng.integers(0, f.size, int(rng.integers(0, 30))) if f.size else np.zeros(0, dtype=np.intp)
    return SimpleNamespace(base_kv=np.ones(n), branch_from=f, branch_to=t, device_branch=devices)


def test_each_source_searched_with_others_equals_it_searched_alone():
    # Sources in different parts share one search: each one's pairs, in order, must be its own search's.
    rng = np.random.default_rng(11)
    for _ in range(150):
        net = _random_network(rng)
        n = net.base_kv.size
        sources = list(rng.choice(n, size=int(rng.integers(1, min(n, 6) + 1)), replace=False))
        together = all_source_paths(net, sources)
        for source, got in zip(sources, together):
            alone = all_source_paths(net, [source])[0]
            assert np.array_equal(got[0], alone[0]) and np.array_equal(got[1], alone[1])
            assert got[2] == alone[2] and np.array_equal(np.sort(got[3]), np.sort(alone[3]))


def test_paths_name_every_device_between_source_and_bus_on_a_tree():
    # On a tree (no loops) the devices of a bus's path are those on the branches between it and the source.
    rng = np.random.default_rng(3)
    for _ in range(200):
        n = int(rng.integers(2, 25))
        parent = np.array([int(rng.integers(0, k)) for k in range(1, n)])
        f, t = np.arange(1, n), parent
        devices = rng.integers(0, n - 1, int(rng.integers(0, 20)))
        net = SimpleNamespace(base_kv=np.ones(n), branch_from=f, branch_to=t, device_branch=devices)
        buses, found, meshed, reached = all_source_paths(net, [0])[0]
        assert not meshed and np.array_equal(np.sort(reached), np.arange(n))
        for bus in range(1, n):
            on_path, node = set(), bus
            while node != 0:
                on_path.add(node - 1)  # branch k joins bus k+1 to its parent
                node = parent[node - 1]
            expected = sorted(d for d in range(devices.size) if devices[d] in on_path)
            assert sorted(found[buses == bus].tolist()) == expected


def test_spanning_forest_is_a_breadth_first_forest_of_every_part():
    rng = np.random.default_rng(7)
    for _ in range(150):
        net = _random_network(rng)
        n, f, t = net.base_kv.size, net.branch_from, net.branch_to
        forest = SpanningForest(n, f, t)
        hops = shortest_path(sp.coo_matrix((np.ones(f.size), (f, t)), shape=(n, n)).tocsr(), directed=False,
                             unweighted=True)
        roots = np.flatnonzero(forest.parent < 0)
        # Every node's depth is its fewest branches from its part's root; a parent is one branch nearer.
        for node in range(n):
            root = roots[np.isfinite(hops[roots, node]) | (roots == node)][0]
            assert forest.depth[node] == (0 if root == node else hops[root, node])
            if forest.parent[node] >= 0:
                b = forest.parent_branch[node]
                assert {int(f[b]), int(t[b])} == {node, int(forest.parent[node])}
        # Each subtree is one interval of the preorder.
        for node in range(n):
            inside = forest.preorder[forest.tin[node]:forest.tin[node] + forest.size[node]]
            for other in inside:
                up = other
                while up != node and up >= 0:
                    up = forest.parent[up]
                assert up == node
