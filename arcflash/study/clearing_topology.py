"""The shape of a scenario's network that clearing reads: source paths, loops, which devices can carry current.

Pure functions of the network arrays (:class:`~arcflash.study.faults.NetworkArrays`) and its spanning forest;
used by :mod:`.clearing` and the staged clearing (:mod:`.staging`).
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import breadth_first_order, connected_components

from ..models.network_forest import spanning_forest
from ..models.network_radial import joined_at


def source_paths(net, source_bus):
    """(bus, device) pairs: the devices on the path from one source bus to every bus.

    Parameters
    ----------
    net : NetworkArrays
        The scenario's network (closed branches only).
    source_bus : int
        Index of the source bus.

    Returns
    -------
    tuple
        Bus indices and device indices (into ``net.device_ids``) of the pairs;
        whether the part of the network reached holds a loop (so that the
        path is one of several); the buses the source reaches.
    """
    return all_source_paths(net, [source_bus])[0]


#: Source paths kept by :func:`all_source_paths` (the latest of distinct networks) [-].
PATHS_KEPT = 8
_PATHS = {}


def all_source_paths(net, source_buses):
    """:func:`source_paths` of each of ``source_buses``, as a list (its arrays read-only).

    Sources in different connected parts of the network are searched together (one breadth-first
    search from an extra node joined to each of them; the parts never meet, so each source's tree is
    the one a search from it alone finds), so a network of many parts (the copies of an uncertainty
    run, :mod:`.stacking`) costs a few searches, not one per source. Remembered by the network's
    content (buses, branch ends, device branches, sources): the stacks of an uncertainty run, copies
    joined alike whatever their impedances, share one search.
    """
    return list(_remembered_paths(net, source_buses)[0])


def joined_source_paths(net, source_buses):
    """:func:`all_source_paths` joined source after source (remembered with them, read-only): the buses and
    devices of the path rows and each row's source number, the buses each source reaches and their source
    numbers, and whether any of the parts reached holds a loop [-]."""
    entry = _remembered_paths(net, source_buses)
    if entry[1] is None:
        found = entry[0]
        empty = np.array([], dtype=np.intp)
        number = np.arange(len(found), dtype=np.intp)
        joined = [np.concatenate([f[k] for f in found]) if found else empty for k in (0, 1, 3)]
        joined.insert(2, np.repeat(number, [f[0].size for f in found]))
        joined.append(np.repeat(number, [f[3].size for f in found]))
        for array in joined:
            array.flags.writeable = False
        entry[1] = (*joined, any(f[2] for f in found))
    return entry[1]


def _remembered_paths(net, source_buses):
    """[the paths of :func:`all_source_paths`, their joined arrays or None], remembered by the network's content."""
    source_buses = np.asarray(source_buses, dtype=np.intp)
    key = (int(net.base_kv.size), source_buses.tobytes(),
           *(np.asarray(a, dtype=np.intp).tobytes() for a in (net.branch_from, net.branch_to, net.device_branch)))
    entry = _PATHS.get(key)
    if entry is None:
        if len(_PATHS) >= PATHS_KEPT:
            _PATHS.pop(next(iter(_PATHS)))  # the oldest
        found = _searched_paths(net, source_buses)
        for buses, devices, _, nodes in found:
            for array in (buses, devices, nodes):
                array.flags.writeable = False
        entry = _PATHS[key] = [found, None]
    return entry


def _searched_paths(net, source_buses):
    """The work of :func:`all_source_paths`."""
    n = net.base_kv.size
    source_buses = np.asarray(source_buses, dtype=np.intp)
    f, t = np.asarray(net.branch_from, dtype=np.intp), np.asarray(net.branch_to, dtype=np.intp)
    graph = sp.coo_matrix((np.ones(f.size), (f, t)), shape=(n, n)).tocsr()
    part = connected_components(graph, directed=False)[1]
    # More branches than a tree needs: a loop (parallel branches between two buses count too).
    nodes_in = np.bincount(part, minlength=part.max(initial=-1) + 1)
    branches_in = np.bincount(part[f], minlength=nodes_in.size)
    # The branch between two buses: the lowest-numbered one joining them.
    pair = np.minimum(f, t) * n + np.maximum(f, t)
    by_pair = np.lexsort((np.arange(pair.size), pair))
    device_order = np.argsort(net.device_branch, kind="stable")
    sorted_branch = np.asarray(net.device_branch)[device_order]
    # Rounds of sources, at most one per part in a round.
    seen, rounds = {}, {}
    for number, bus in enumerate(source_buses.tolist()):
        r = seen[part[bus]] = seen.get(part[bus], -1) + 1
        rounds.setdefault(r, []).append(number)
    found = [None] * source_buses.size
    empty = np.array([], dtype=np.intp)
    for numbers in rounds.values():
        roots = source_buses[numbers]
        order, pred = breadth_first_order(joined_at(graph, roots), n, directed=False, return_predecessors=True)
        order = order[1:]
        nodes = order[pred[order] != n]
        source_of = np.full(n, -1, dtype=np.intp)
        source_of[roots] = np.arange(roots.size)
        wanted = np.minimum(nodes, pred[nodes]) * n + np.maximum(nodes, pred[nodes])
        branch_to_pred = np.full(n, -1, dtype=np.intp)
        branch_to_pred[nodes] = by_pair[np.searchsorted(pair[by_pair], wanted)]
        root_of = np.full(part.max(initial=-1) + 1, -1, dtype=np.intp)
        root_of[part[roots]] = np.arange(roots.size)
        root_of = root_of[part]  # per bus, the round's source in its part (-1: none)
        buses, devices, steps = [], [], []
        target = nodes.copy()
        current = nodes.copy()
        step = 0
        while current.size:
            b = branch_to_pred[current]
            first = np.searchsorted(sorted_branch, b, side="left")
            count = np.searchsorted(sorted_branch, b, side="right") - first
            rows = np.repeat(np.arange(current.size), count)
            offsets = np.arange(rows.size) - np.repeat(np.cumsum(count) - count, count)
            buses.append(target[rows])
            devices.append(device_order[np.repeat(first, count) + offsets])
            steps.append(np.full(rows.size, step, dtype=np.intp))
            current = pred[current]
            keep = source_of[current] < 0
            current, target = current[keep], target[keep]
            step += 1
        buses = np.concatenate(buses) if buses else empty
        devices = np.concatenate(devices) if devices else empty
        steps = np.concatenate(steps) if steps else empty
        owner = root_of[buses]
        arranged = np.lexsort((steps, owner))  # stable: one source's rows step by step, as searched alone
        buses, devices, owner = buses[arranged], devices[arranged], owner[arranged]
        bounds = np.searchsorted(owner, np.arange(roots.size + 1))
        by_source = np.argsort(root_of[nodes], kind="stable")  # each source's nodes together, in search order
        reached = nodes[by_source]
        ends = np.searchsorted(root_of[reached], np.arange(roots.size + 1))
        for k, number in enumerate(numbers):
            p = part[roots[k]]
            found[number] = (buses[bounds[k]:bounds[k + 1]], devices[bounds[k]:bounds[k + 1]],
                             bool(branches_in[p] > nodes_in[p] - 1),
                             np.concatenate(([roots[k]], reached[ends[k]:ends[k + 1]])))
    return found


def non_bridge_branches(net, forest=None):
    """Branches whose opening alone cannot split the network (they lie on a loop) [-].

    In a breadth-first spanning forest every branch outside it closes a loop,
    which makes it and the forest's branches between its two buses
    non-bridges (parallel branches between two buses included). ``forest``:
    the network's :class:`~arcflash.models.network_forest.SpanningForest`
    (made when not given).
    """
    if forest is None:
        forest = spanning_forest(len(net.bus_ids), net.branch_from, net.branch_to)
    loop = forest.child_of < 0
    for b in forest.others:
        u, v = net.branch_from[b], net.branch_to[b]
        while u != v:
            if forest.depth[u] < forest.depth[v]:
                u, v = v, u
            loop[forest.parent_branch[u]] = True
            u = forest.parent[u]
    return loop


def back_feeding_devices(net, forest, on_loop):
    """Devices that may carry a small share of a fault's current: those on a loop, and those on a branch
    that splits the network with a shunt source (utility, generator, motor) on each side [-].

    Any other device carries, for a fault at a bus, either nothing or the whole fault current: its branch
    splits its part in two, one side holds no shunt at all (the network's only shunts are its sources), and
    a fault on the side with the shunts leaves that passive side with no path to ground (no current),
    while a fault on the passive side is fed through the device alone (all of it) [-].
    """
    return _sides(net, forest, on_loop)[0]


def _sides(net, forest, on_loop):
    """:func:`back_feeding_devices`, and for every other device its forest child node and whether its
    passive side (no shunt) is the child's subtree (the other side otherwise) [-]."""
    count = np.bincount(net.shunt_bus, minlength=len(net.bus_ids)) if len(net.shunt_bus) else \
        np.zeros(len(net.bus_ids), dtype=np.intp)
    below = np.concatenate(([0], np.cumsum(count[forest.preorder])))  # shunts before each preorder number
    in_part = np.bincount(forest.base, weights=count, minlength=forest.parts)
    child = forest.child_of[net.device_branch]
    tree = child >= 0
    start = forest.tin[child[tree]]
    inside = np.zeros(child.size)
    inside[tree] = below[start + forest.size[child[tree]]] - below[start]  # shunts in the subtree cut off
    outside = in_part[forest.base[net.branch_from[net.device_branch]]] - inside
    return on_loop[net.device_branch] | ~tree | ((inside > 0) & (outside > 0)), child, inside == 0


def devices_carrying(paths, buses):
    """Devices that may carry current for a fault at any of ``buses`` (bus indices), in any state staged
    clearing reaches, as a mask [-]: those of :func:`back_feeding_devices`, and each other device whose
    passive side holds one of the buses (it carries the whole fault current there, and nothing for a fault
    on its other side). Opening branches or splitting a bus adds no source, so a passive side stays one."""
    forest, (back_feed, child, passive_below) = paths.forest, paths.sides
    carrying = back_feed.copy()
    others = np.flatnonzero(~back_feed)
    if others.size and len(buses):
        start, size = forest.tin[child[others]], forest.size[child[others]]
        at = np.sort(forest.tin[np.unique(np.asarray(buses, dtype=np.intp))])
        below = np.searchsorted(at, start + size) > np.searchsorted(at, start)  # some bus in the subtree
        above = np.searchsorted(at, start) + (at.size - np.searchsorted(at, start + size)) > 0  # some outside
        carrying[others] = np.where(passive_below[others], below, above)
    return carrying
