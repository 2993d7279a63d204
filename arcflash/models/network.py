"""Three-phase bolted faults on a per-unit network (positive sequence).

The network is given as arrays: bus voltage bases, series branches with their
per-unit impedances, and shunt sources (utility, generator and motor
impedances behind a 1 pu internal voltage). For every bus the bolted
symmetrical fault current is I = c / Z_kk (Thevenin, superposition with a
flat prefault voltage c), and for every protective-device branch the current
it carries during that fault, I_ij = (V_i - V_j)/z_ij with
V = c - Z[:, k] I_f (common practice; the method of IEC 60909 without its
correction factors).

Pure: numpy and scipy only, no I/O.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import breadth_first_order, connected_components
from scipy.sparse.linalg import splu

from .network_loops import loop_rows, parts_alike
from .network_radial import RadialNetwork, edge_between, joined_at

_SQRT3 = float(np.sqrt(3.0))
#: Right-hand sides solved together [-].
BLOCK_COLUMNS = 256
#: Up to this many closing branches (ties, loops, parallel paths) a meshed network is solved as a
#: spanning tree plus a low-rank update; above it by sparse LU [-].
MAX_LOOPS_FOR_UPDATE = 200
#: A device whose share of every bus fault current the loops change by less than this keeps the
#: spanning tree's rows (its current then differs by at most 0.1 % at the table's 1e-3 threshold) [-].
LOOP_SHARE_TOLERANCE = 1e-6


@dataclass(frozen=True)
class FaultSolution:
    """Bolted faults at every bus and device currents (long table).

    Attributes
    ----------
    z_thevenin_pu : numpy.ndarray of complex
        Thevenin impedance at each bus, NaN where de-energised [pu]
    bolted_ka : numpy.ndarray
        Bolted three-phase fault current, 0 where de-energised [kA]
    x_over_r : numpy.ndarray
        X/R of the Thevenin impedance [-]
    energized : numpy.ndarray of bool
        The bus is connected to a source [-]
    device_fault_bus, device : numpy.ndarray of int
        Rows of the device table: faulted bus, device index [-]
    device_current_ka : numpy.ndarray
        Current through the device, in the device's own kV base [kA]
    device_share : numpy.ndarray
        Device current over the bus fault current (per unit of I_f) [-]
    device_direction : numpy.ndarray of int
        +1 where the current flows from the branch's first bus to its second,
        -1 the other way [-]. In a radial network the direction is along the
        tree: from the sources' side into the subtree holding the fault, or
        out of a subtree whose motors or generators feed a fault elsewhere.
        A meshed network has no such tree; there the direction is that of the
        active power through the branch.
    """

    z_thevenin_pu: np.ndarray
    bolted_ka: np.ndarray
    x_over_r: np.ndarray
    energized: np.ndarray
    device_fault_bus: np.ndarray
    device: np.ndarray
    device_current_ka: np.ndarray
    device_share: np.ndarray
    device_direction: np.ndarray


def base_current_ka(s_base_mva, kv):
    """Base current I = S / (√3 V) [kA] for a base power [MVA] and voltage [kV]."""
    return s_base_mva / (_SQRT3 * np.asarray(kv, dtype=float))


def admittance_matrix(n_bus, branch_from, branch_to, branch_z_pu, shunt_bus, shunt_z_pu):
    """Sparse bus admittance matrix Y (CSC) of series branches and shunts.

    Parameters
    ----------
    n_bus : int
        Number of buses [-]
    branch_from, branch_to : numpy.ndarray of int
        Bus indices of each series branch [-]
    branch_z_pu : numpy.ndarray of complex
        Series impedance of each branch [pu]
    shunt_bus : numpy.ndarray of int
        Bus of each shunt source [-]
    shunt_z_pu : numpy.ndarray of complex
        Impedance of each shunt source to the internal voltage [pu]

    Returns
    -------
    scipy.sparse.csc_matrix
        Y [pu]
    """
    y = 1.0 / np.asarray(branch_z_pu, dtype=complex)
    f = np.asarray(branch_from, dtype=np.intp)
    t = np.asarray(branch_to, dtype=np.intp)
    s = np.asarray(shunt_bus, dtype=np.intp)
    rows = np.concatenate([f, t, f, t, s])
    cols = np.concatenate([f, t, t, f, s])
    vals = np.concatenate([y, y, -y, -y, 1.0 / np.asarray(shunt_z_pu, dtype=complex)])
    return sp.coo_matrix((vals, (rows, cols)), shape=(n_bus, n_bus)).tocsc()


def part_labels(n_bus, branch_from, branch_to):
    """The connected part of each bus, joined by the branches given [-]."""
    graph = sp.coo_matrix(
        (np.ones(len(branch_from)), (np.asarray(branch_from, dtype=np.intp), np.asarray(branch_to, dtype=np.intp))),
        shape=(n_bus, n_bus),
    )
    return connected_components(graph, directed=False)[1]


def energized_buses(n_bus, branch_from, branch_to, source_bus):
    """Buses connected through branches to at least one source bus [-]."""
    label = part_labels(n_bus, branch_from, branch_to)
    return np.isin(label, label[np.asarray(source_bus, dtype=np.intp)])


def solve_faults(base_kv, branch_from, branch_to, branch_z_pu, shunt_bus, shunt_z_pu, source_bus,
                 device_branch=(), device_kv=(), voltage_factor=1.0, s_base_mva=100.0, min_share=1e-3,
                 backfeed_min_ka=None):
    """Bolted three-phase faults at every bus and the current through each device.

    A network of several energised parts (not joined by any branch) gives each part the results it would
    have alone, bit for bit (the samples of an uncertainty run are studied as disconnected copies of the
    site, :mod:`arcflash.study.stacking`): a radial network is solved node by node, one with loops part by
    part.

    Parameters
    ----------
    base_kv : numpy.ndarray
        Voltage base (nominal kV) of each bus [kV]
    branch_from, branch_to, branch_z_pu
        Series branches, see :func:`admittance_matrix` [-], [-], [pu]
    shunt_bus, shunt_z_pu
        Shunt sources, see :func:`admittance_matrix` [-], [pu]
    source_bus : numpy.ndarray of int
        Buses with a source that energises the network (utility, running
        generator); motors alone do not energise a bus [-]
    device_branch : numpy.ndarray of int
        Branch index of each protective device [-]
    device_kv : numpy.ndarray
        Voltage base on the device's side of its branch [kV]
    voltage_factor : float
        Prefault voltage c [pu]
    s_base_mva : float
        Power base [MVA]
    min_share : float
        Device currents below this fraction of the bus fault current are
        left out of the device table [-]
    backfeed_min_ka : numpy.ndarray, optional
        Per device: in a radial network (or the spanning tree of a meshed
        one, for devices away from its loops), rows where the device carries
        back-feed (from sources or motors below it, for a fault elsewhere)
        below this current are left out too, and a device whose back-feed can
        never reach it (its subtree's contribution at full voltage) is not
        explored at all (e.g. the smallest current at which the device
        clears within the arc-duration cap) [kA]

    Returns
    -------
    FaultSolution
    """
    return _solved(base_kv, branch_from, branch_to, branch_z_pu, shunt_bus, shunt_z_pu, source_bus, device_branch,
                   device_kv, voltage_factor, s_base_mva, min_share, backfeed_min_ka, True)


def _solved(base_kv, branch_from, branch_to, branch_z_pu, shunt_bus, shunt_z_pu, source_bus, device_branch, device_kv,
            voltage_factor, s_base_mva, min_share, backfeed_min_ka, apart):
    """:func:`solve_faults`; with ``apart``, a network of several parts with loops is solved part by part."""
    base_kv = np.asarray(base_kv, dtype=float)
    n = base_kv.size
    branch_from = np.asarray(branch_from, dtype=np.intp)
    branch_to = np.asarray(branch_to, dtype=np.intp)
    branch_z_pu = np.asarray(branch_z_pu, dtype=complex)
    shunt_bus = np.asarray(shunt_bus, dtype=np.intp)
    shunt_z_pu = np.asarray(shunt_z_pu, dtype=complex)
    device_branch = np.asarray(device_branch, dtype=np.intp)
    device_kv = np.asarray(device_kv, dtype=float)
    source_bus = np.asarray(source_bus, dtype=np.intp)
    label = part_labels(n, branch_from, branch_to)
    parts = np.unique(label[source_bus])
    energized = np.isin(label, parts)
    z_th = np.full(n, np.nan + 0j)
    rows = _empty_rows()
    if energized.any():
        index = np.full(n, -1, dtype=np.intp)
        active = np.flatnonzero(energized)
        index[active] = np.arange(active.size)
        keep = energized[branch_from]
        sub = _Active(
            m=active.size,
            f=np.where(keep, index[branch_from], -1),
            t=np.where(keep, index[branch_to], -1),
            z=branch_z_pu,
            keep=keep,
            shunt_bus=index[shunt_bus[energized[shunt_bus]]],
            shunt_y=1.0 / shunt_z_pu[energized[shunt_bus]],
            roots=_one_per_part(active.size, index[branch_from[keep]], index[branch_to[keep]],
                                index[source_bus]),
        )
        live = np.flatnonzero(keep[device_branch]) if device_branch.size else np.array([], dtype=np.intp)
        merged = _merged_edges(sub)
        if apart and parts.size > 1 and not _is_radial(sub, merged):
            # parts with loops solved one by one (the loop and sparse solves would mix them); the radial
            # solve works node by node, so a part's arithmetic never depends on another's either way
            return _by_part(label, parts, base_kv, branch_from, branch_to, branch_z_pu, shunt_bus, shunt_z_pu,
                            source_bus, device_branch, device_kv, voltage_factor, s_base_mva, min_share,
                            backfeed_min_ka)
        floor = None
        if backfeed_min_ka is not None:
            floor = np.asarray(backfeed_min_ka, dtype=float)[live] / base_current_ka(s_base_mva, device_kv[live])
        if _is_radial(sub, merged):
            diag, (k, d, current_pu, direction) = _radial(sub, merged, device_branch, live, voltage_factor, min_share,
                                                          floor)
        elif _loop_count(sub, merged, label[active]) <= MAX_LOOPS_FOR_UPDATE:
            diag, (k, d, current_pu, direction) = _tree_plus_loops(sub, merged, device_branch, live, voltage_factor,
                                                                   min_share, floor)
        else:
            diag, (k, d, current_pu, direction) = _meshed(sub, device_branch, live, voltage_factor, min_share)
        z_th[active] = diag
        i_fault = voltage_factor / np.abs(diag[k])
        rows = (active[k], d, np.abs(current_pu) * base_current_ka(s_base_mva, device_kv[d]),
                np.abs(current_pu) / i_fault, direction)
    bolted = np.where(energized, voltage_factor / np.abs(z_th), 0.0) * base_current_ka(s_base_mva, base_kv)
    bolted = np.nan_to_num(bolted, nan=0.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        x_over_r = z_th.imag / z_th.real
    return FaultSolution(
        z_thevenin_pu=z_th,
        bolted_ka=bolted,
        x_over_r=x_over_r,
        energized=energized,
        device_fault_bus=rows[0],
        device=rows[1],
        device_current_ka=rows[2],
        device_share=rows[3],
        device_direction=np.asarray(rows[4], dtype=np.int8),
    )


def _by_part(label, parts, base_kv, branch_from, branch_to, branch_z_pu, shunt_bus, shunt_z_pu, source_bus,
             device_branch, device_kv, voltage_factor, s_base_mva, min_share, backfeed_min_ka):
    """:func:`solve_faults` of a network of several energised parts, in groups (buses, branches, shunts,
    sources and devices renumbered within each) whose parts are each solved as alone: the radial parts, the
    parts with few loops, and each part with many loops on its own; the results put together part by part."""
    n = base_kv.size
    z_th = np.full(n, np.nan + 0j)
    bolted, x_over_r, energized = np.zeros(n), np.full(n, np.nan), np.zeros(n, dtype=bool)
    rows = [[] for _ in range(5)]
    # The radial parts are solved together (node by node: each as alone), so are the parts with few loops
    # (a tree for all, the update part by part); a part with many loops alone (its own sparse solve).
    pairs = np.unique(np.minimum(branch_from, branch_to).astype(np.int64) * n + np.maximum(branch_from, branch_to))
    count = np.bincount(label[pairs // n], minlength=label.max() + 1) - np.bincount(label, minlength=label.max() + 1) + 1
    loops = (count > 0) | np.bincount(label[pairs[pairs // n == pairs % n] // n], minlength=label.max() + 1).astype(bool)
    few = loops & (count <= MAX_LOOPS_FOR_UPDATE)
    groups = [group for group in (parts[~loops[parts]], parts[few[parts]]) if group.size]
    groups += [np.array([p]) for p in parts[loops[parts] & ~few[parts]]]
    for group in groups:
        buses = np.flatnonzero(np.isin(label, group))
        local = np.full(n, -1, dtype=np.intp)
        local[buses] = np.arange(buses.size)
        inside = np.zeros(label.max() + 1, dtype=bool)
        inside[group] = True
        branches = np.flatnonzero(inside[label[branch_from]])
        shunts = np.flatnonzero(inside[label[shunt_bus]])
        devices = np.flatnonzero(inside[label[branch_from[device_branch]]]) if device_branch.size else device_branch
        branch_local = np.full(branch_from.size, -1, dtype=np.intp)
        branch_local[branches] = np.arange(branches.size)
        one = _solved(
            base_kv[buses], local[branch_from[branches]], local[branch_to[branches]], branch_z_pu[branches],
            local[shunt_bus[shunts]], shunt_z_pu[shunts], local[source_bus[inside[label[source_bus]]]],
            branch_local[device_branch[devices]], device_kv[devices], voltage_factor, s_base_mva, min_share,
            None if backfeed_min_ka is None else np.asarray(backfeed_min_ka, dtype=float)[devices], False)
        z_th[buses], bolted[buses], x_over_r[buses] = one.z_thevenin_pu, one.bolted_ka, one.x_over_r
        energized[buses] = one.energized
        for column, values in zip(rows, (buses[one.device_fault_bus], devices[one.device], one.device_current_ka,
                                         one.device_share, one.device_direction)):
            column.append(values)
    rows = [np.concatenate(column) for column in rows]
    by_part = np.argsort(label[rows[0]], kind="stable")  # the rows part by part, each part's in its own order
    rows = [column[by_part] for column in rows]
    return FaultSolution(
        z_thevenin_pu=z_th, bolted_ka=bolted, x_over_r=x_over_r, energized=energized,
        device_fault_bus=rows[0].astype(np.intp), device=rows[1].astype(np.intp),
        device_current_ka=rows[2].astype(float), device_share=rows[3].astype(float),
        device_direction=rows[4].astype(np.int8),
    )


@dataclass(frozen=True)
class _Active:
    """The energised part: buses renumbered 0..m-1; branches outside it have -1 ends."""

    m: int
    f: np.ndarray
    t: np.ndarray
    z: np.ndarray
    keep: np.ndarray
    shunt_bus: np.ndarray
    shunt_y: np.ndarray
    roots: np.ndarray


def _empty_rows():
    empty = np.array([], dtype=np.intp)
    return empty, empty, np.array([]), np.array([]), empty


def _one_per_part(m, f, t, sources):
    """One source bus of each connected part of the energised network."""
    graph = sp.coo_matrix((np.ones(f.size), (f, t)), shape=(m, m))
    _, label = connected_components(graph, directed=False)
    _, first = np.unique(label[sources], return_index=True)
    return sources[first]


def _merged_edges(sub):
    """Parallel branches merged: edge of each kept branch, edge ends, edge admittance."""
    idx = np.flatnonzero(sub.keep)
    a = np.minimum(sub.f[idx], sub.t[idx])
    b = np.maximum(sub.f[idx], sub.t[idx])
    pairs, edge_of = np.unique(a * sub.m + b, return_inverse=True)
    edge_y = np.zeros(pairs.size, dtype=complex)
    np.add.at(edge_y, edge_of, 1.0 / sub.z[idx])
    branch_edge = np.full(sub.keep.size, -1, dtype=np.intp)
    branch_edge[idx] = edge_of
    return branch_edge, pairs // sub.m, pairs % sub.m, edge_y


def _is_radial(sub, merged):
    """True when the energised network, parallel branches merged (``_merged_edges``), is a forest."""
    _, ea, eb, _ = merged
    return bool(np.all(ea != eb)) and ea.size == sub.m - sub.roots.size


def _spanning_forest(sub, merged):
    """Whether each merged edge belongs to a breadth-first spanning forest grown from the roots."""
    _, ea, eb, _ = merged
    graph = sp.coo_matrix((np.arange(1, ea.size + 1), (ea, eb)), shape=(sub.m, sub.m)).tocsr()
    graph = (graph + graph.T).tocsr()  # merged edges are unique pairs: no entries are summed
    in_tree = np.zeros(ea.size, dtype=bool)
    roots = np.asarray(sub.roots, dtype=np.intp)
    order, pred = breadth_first_order(joined_at(graph, roots), sub.m, directed=False, return_predecessors=True)
    nodes = order[1:][pred[order[1:]] != sub.m]  # one search for all parts (an extra node joined to each root)
    in_tree[edge_between(sub.m, ea, eb, nodes, pred[nodes])] = True
    return in_tree


def _loop_count(sub, merged, part):
    """Closing edges of the part with the most (``part``: the part of each bus): merged edges beyond a
    spanning tree, one per independent loop [-]."""
    parts = int(part.max(initial=-1)) + 1
    return int((np.bincount(part[merged[1]], minlength=parts) - np.bincount(part, minlength=parts) + 1).max(initial=0))


def _tree_plus_loops(sub, merged, device_branch, live, voltage_factor, min_share, floor=None):
    """Meshed network: a spanning tree solved by :mod:`.network_radial`, the closing edges added by a
    low-rank (Woodbury) update.

    With U the incidence columns of the r closing edges and D their
    admittances, Y = Y_T + U D U^T, so Z = Z_T - W M^-1 W^T with W = Z_T U
    (2r tree columns, O(N r)) and M = D^-1 + U^T W (r x r). The diagonal
    costs O(N r). Devices whose share of any fault current the update changes
    by less than :data:`LOOP_SHARE_TOLERANCE` (bounded by |g_d| times the
    largest |W| of each column) keep the tree's rows, rescaled to the meshed
    fault current; the others (on or near a loop) get full rows, corrected
    by the update: one tree column each, scaled on either side of the
    device's tree edge (:meth:`RadialNetwork.columns`), or a column pair
    where the device is not on a tree edge or nothing below it feeds back.
    ``floor`` prunes back-feed rows as in :func:`_radial`: the tree's, and those of the devices near a loop
    that stand on a bridge (no closing edge has one end below them) for faults outside their subtree.
    """
    branch_edge, ea, eb, edge_y = merged
    in_tree = _spanning_forest(sub, merged)
    tree_id = np.full(ea.size, -1, dtype=np.intp)
    tree_id[in_tree] = np.arange(int(in_tree.sum()))
    tree_merged = (np.where(branch_edge >= 0, tree_id[np.maximum(branch_edge, 0)], -1), ea[in_tree], eb[in_tree],
                   edge_y[in_tree])
    shunt = np.zeros(sub.m, dtype=complex)
    np.add.at(shunt, sub.shunt_bus, sub.shunt_y)
    tree = RadialNetwork(sub.m, ea[in_tree], eb[in_tree], edge_y[in_tree], shunt, sub.roots)
    bdev = device_branch[live]
    i, j = sub.f[bdev], sub.t[bdev]
    all_loops = np.flatnonzero(~in_tree)
    # The update part by part (several parts: the copies of an uncertainty run), each with its own rows,
    # closing edges and devices, so that a part's arithmetic is the one it has alone; parts of the same
    # size (buses, closing edges, devices) are taken together, one array per quantity with a part axis.
    diag = tree.z_kk.copy()
    affected = tree_merged[0][bdev] < 0
    local = np.full(sub.m, -1, dtype=np.intp)  # each bus's position within its part
    batches = []
    for nodes, loops, devices in parts_alike(tree, ea[all_loops], all_loops, i):
        trees, size = nodes.shape
        r = loops.shape[1]
        local[nodes] = np.arange(size)
        at = np.arange(trees)[:, None]
        a, b = local[ea[loops]], local[eb[loops]]
        columns = tree.columns(np.concatenate([ea[loops], eb[loops]], axis=1), nodes=nodes)  # each part's rows
        w = columns[:, :, :r] - columns[:, :, r:]  # Z_T U
        m = np.zeros((trees, r, r), dtype=complex)
        m[:, np.arange(r), np.arange(r)] = 1.0 / edge_y[loops]
        m_inv = np.linalg.inv(m + (w[at, a] - w[at, b]))
        wm = w @ m_inv
        diag[nodes] = tree.z_kk[nodes] - np.einsum("kc,kc->k", wm.reshape(-1, r), w.reshape(-1, r)).reshape(trees, size)
        g = (w[at, local[i[devices]]] - w[at, local[j[devices]]]) @ m_inv  # one row per device of each part
        bound = np.abs(1.0 / sub.z[bdev[devices]]) * (np.abs(g) @ np.abs(w).max(axis=1)[:, :, None])[:, :, 0]
        affected[devices] |= bound >= LOOP_SHARE_TOLERANCE
        batches.append((nodes, w, wm, g, devices))
    _, (k, d, current, direction) = _radial(sub, tree_merged, device_branch, live[~affected], voltage_factor,
                                            min_share, None if floor is None else floor[~affected], tree=tree)
    out = [[k], [d], [current * tree.z_kk[k] / diag[k]], [direction]]
    i_fault = voltage_factor / diag
    # A device on a tree edge p-c (c the child): Z_T[k, p] = Z_T[k, c] up[c] for k in c's subtree, and
    # Z_T[k, c] / down[c] elsewhere, so Z_T[:, i] - Z_T[:, j] is one tree column Z_T[:, c], scaled per
    # region; where nothing below c feeds back (down[c] = 1) both columns are spread instead.
    edge_id = tree_merged[0][bdev]
    child = np.where((tree.parent[j] == i) & (tree.edge[j] == edge_id), j, i)
    sign = np.where(child == j, 1.0, -1.0)  # Z_T[:, i] - Z_T[:, j] = sign (Z_T[:, p] - Z_T[:, c])
    scale_in = sign * (tree.up[child] - 1.0)
    scale_out = sign * (1.0 / tree.down[child] - 1.0)
    one = affected & (edge_id >= 0) & (np.abs(scale_out) > 1e-100)
    # ``floor`` prunes the back-feed rows (faults outside the child's subtree) of devices on a bridge, as
    # _radial does for the tree's: a tree edge is a bridge when no closing edge has one end below it.
    back_floor = None
    if floor is not None and one.any():
        back_floor = np.zeros(live.size)
        edge_devices = np.flatnonzero(one)
        c = child[edge_devices][:, None]
        crossing = tree.in_subtree(c, ea[all_loops][None, :]) != tree.in_subtree(c, eb[all_loops][None, :])
        bridge = edge_devices[~crossing.any(axis=1)]
        back_floor[bridge] = floor[bridge]
    for nodes, w, wm, g, devices in batches:
        wanted = [(affected[devices] & one[devices], True), (affected[devices] & ~one[devices], False)]
        # parts with as many devices of each kind are taken together, each part's devices in its own order
        counts = np.stack([picked.sum(axis=1) for picked, _ in wanted], axis=1)
        for kind in np.unique(counts, axis=0):
            same = np.flatnonzero((counts == kind).all(axis=1))
            for (picked, single), count in zip(wanted, kind.tolist()):
                if count:
                    chosen = devices[same][picked[same]].reshape(same.size, count)
                    rows = np.argsort(~picked[same], axis=1, kind="stable")[:, :count]  # their rows of g
                    loop_rows(out, tree, sub, nodes[same], w[same], wm[same], g[same], chosen, rows, single,
                              (i, j, child, scale_in, scale_out, bdev, live), local, i_fault, voltage_factor,
                              min_share, BLOCK_COLUMNS // 2, back_floor if single else None)
    return diag, tuple(np.concatenate(x) for x in out)


def _meshed(sub, device_branch, live, voltage_factor, min_share):
    """General network: sparse LU of Y, Z columns solved in blocks (many loops)."""
    idx = np.flatnonzero(sub.keep)
    y = admittance_matrix(sub.m, sub.f[idx], sub.t[idx], sub.z[idx], sub.shunt_bus, 1.0 / sub.shunt_y)
    lu = splu(y)
    m = sub.m
    diag = np.empty(m, dtype=complex)
    for lo in range(0, m, BLOCK_COLUMNS):
        cols = np.arange(lo, min(lo + BLOCK_COLUMNS, m))
        rhs = np.zeros((m, cols.size), dtype=complex)
        rhs[cols, np.arange(cols.size)] = 1.0
        diag[cols] = lu.solve(rhs)[cols, np.arange(cols.size)]
    i_fault = voltage_factor / diag
    out = [[], [], [], []]
    for lo in range(0, live.size, BLOCK_COLUMNS // 2):
        devices = live[lo:lo + BLOCK_COLUMNS // 2]
        b = device_branch[devices]
        cols = np.arange(devices.size)
        rhs = np.zeros((m, 2 * devices.size), dtype=complex)
        rhs[sub.f[b], cols] += 1.0
        rhs[sub.t[b], cols] -= 1.0
        rhs[sub.f[b], cols + devices.size] += 1.0
        rhs[sub.t[b], cols + devices.size] += 1.0
        solved = lu.solve(rhs)  # Y is symmetric: rows k hold Z_ki -/+ Z_kj
        drop = -solved[:, : devices.size] * i_fault[:, None]  # V_i - V_j during the fault at k
        total = 2.0 * voltage_factor - solved[:, devices.size:] * i_fault[:, None]  # V_i + V_j
        current_pu = drop / sub.z[b][None, :]
        share = np.abs(current_pu) / np.abs(i_fault)[:, None]
        k, d = np.nonzero(share >= min_share)
        # Direction in a meshed network: that of the active power through the branch,
        # Re((V_i + V_j)/2 conj(I_ij)) (in a radial one, _radial uses the tree instead).
        toward_j = (total[k, d] * np.conj(current_pu[k, d])).real >= 0.0
        out[0].append(k)
        out[1].append(devices[d])
        out[2].append(current_pu[k, d])
        out[3].append(np.where(toward_j, 1, -1))
    return diag, _joined(out)


def _joined(out):
    if not out[0]:
        return _empty_rows()[:2] + (np.array([], dtype=complex), np.array([], dtype=np.int8))
    return tuple(np.concatenate(part) for part in out)


def _radial(sub, merged, device_branch, live, voltage_factor, min_share, backfeed_floor_pu=None, tree=None):
    """Radial network: the passes of :mod:`.network_radial`, O(N) for the diagonal (``tree`` built
    from ``merged`` when not given)."""
    branch_edge, ea, eb, edge_y = merged
    if tree is None:
        shunt = np.zeros(sub.m, dtype=complex)
        np.add.at(shunt, sub.shunt_bus, sub.shunt_y)
        tree = RadialNetwork(sub.m, ea, eb, edge_y, shunt, sub.roots)
    child_of_edge = np.full(edge_y.size, -1, dtype=np.intp)
    has_parent = tree.parent >= 0
    child_of_edge[tree.edge[has_parent]] = np.flatnonzero(has_parent)
    b = device_branch[live]
    child = child_of_edge[branch_edge[b]]
    fraction = (1.0 / sub.z[b]) / edge_y[branch_edge[b]]  # share of a merged parallel edge
    toward_child = np.where(sub.t[b] == child, 1, -1)  # +1 when from -> to is parent -> child
    out = [[], [], [], []]
    # Faults below the device: current from the parent into the child's subtree.
    mask = np.zeros(sub.m, dtype=bool)
    mask[child] = True
    k, node, current = tree.downstream_currents(mask, voltage_factor)
    # Each row (fault, child node) applies to every device on that child's edge.
    order = np.argsort(child, kind="stable")
    starts = np.searchsorted(child[order], node, side="left")
    counts = np.searchsorted(child[order], node, side="right") - starts
    rows = np.repeat(np.arange(node.size), counts)
    offsets = np.arange(rows.size) - np.repeat(np.cumsum(counts) - counts, counts)
    pick = order[np.repeat(starts, counts) + offsets]
    i_dev = current[rows] * fraction[pick]
    share = np.abs(i_dev) * np.abs(tree.z_kk[k[rows]]) / voltage_factor
    keep = share >= min_share
    out[0].append(k[rows][keep])
    out[1].append(live[pick][keep])
    out[2].append(i_dev[keep])
    out[3].append(toward_child[pick][keep])
    # Faults elsewhere: sources inside the child's subtree feed out through the device.
    # |Z_pk| <= |Z_pp| bounds the share by |Z_pp x gain|; devices below the threshold are skipped.
    gain = tree.contrib[child] * fraction
    parent = tree.parent[child]
    reach = np.abs(tree.z_kk[parent] * gain) >= min_share
    if backfeed_floor_pu is not None:
        # |Z_pk / Z_kk| <= 1: the back-feed current never exceeds c |gain| [pu].
        reach &= voltage_factor * np.abs(gain) >= backfeed_floor_pu
    candidates = np.flatnonzero(reach)
    if candidates.size:
        nodes, which = np.unique(parent[candidates], return_inverse=True)
        limit = np.full(nodes.size, np.inf)
        np.minimum.at(limit, which, min_share / np.abs(gain[candidates]))
        # Z[k, p] for the faults k near each parent bus p: only entries above the smallest useful value.
        col, k, z_kp = tree.local_columns(nodes, limit)
        # Expand each (fault, parent) entry to the devices below that parent.
        per_column = np.argsort(which, kind="stable")
        first = np.searchsorted(which[per_column], col, side="left")
        count = np.searchsorted(which[per_column], col, side="right") - first
        rows = np.repeat(np.arange(k.size), count)
        offsets = np.arange(rows.size) - np.repeat(np.cumsum(count) - count, count)
        dev = candidates[per_column[np.repeat(first, count) + offsets]]
        k, z_kp = k[rows], z_kp[rows]
        current = z_kp * gain[dev] * voltage_factor / tree.z_kk[k]
        keep = (np.abs(current) * np.abs(tree.z_kk[k]) / voltage_factor >= min_share) & ~tree.in_subtree(child[dev], k)
        if backfeed_floor_pu is not None:
            keep &= np.abs(current) >= backfeed_floor_pu[dev]
        k, dev = k[keep], dev[keep]
        out[0].append(k)
        out[1].append(live[dev])
        out[2].append(current[keep])
        out[3].append(-toward_child[dev])
    return tree.z_kk, _joined(out)
