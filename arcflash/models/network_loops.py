"""The loop update of a meshed network's parts, taken for parts alike together (used by :mod:`.network`).

A network with few loops is solved on a spanning tree, then corrected by a low-rank update per part
(:func:`arcflash.models.network._tree_plus_loops`). The copies of an uncertainty run are parts of the same
size: each quantity of the update is then one array with a part axis, each value computed as for its part
alone (element by element, or a matrix product per part). Pure: numpy only, no I/O.
"""

from __future__ import annotations

import numpy as np


def parts_alike(tree, loop_a, loops, device_from):
    """The parts of ``tree`` that hold closing edges (``loops``, one end ``loop_a`` each), in groups of parts
    alike in size: for each group, (buses, closing edges, devices) as arrays of one row per part (G × P,
    G × R, G × D), each row in increasing order; devices are positions in ``device_from`` (their buses)."""
    top_of_loop = tree.top[loop_a]
    tops, closing = np.unique(top_of_loop, return_counts=True)

    def grouped(tops_of):
        order = np.argsort(tops_of, kind="stable")
        ranked = tops_of[order]
        return order, np.searchsorted(ranked, tops), np.searchsorted(ranked, tops, "right")

    node_order, node_lo, node_hi = grouped(tree.top)
    loop_order, loop_lo, _ = grouped(top_of_loop)
    device_order, device_lo, device_hi = grouped(tree.top[device_from])
    sizes = np.stack([node_hi - node_lo, closing, device_hi - device_lo], axis=1)
    for size, r, count in np.unique(sizes, axis=0).tolist():
        same = np.flatnonzero((sizes == (size, r, count)).all(axis=1))
        yield (node_order[node_lo[same][:, None] + np.arange(size)], loops[loop_order[loop_lo[same][:, None]
                                                                                       + np.arange(r)]],
               device_order[device_lo[same][:, None] + np.arange(count)])


def loop_rows(out, tree, sub, nodes, w, wm, g, chosen, rows, single, arrays, local, i_fault, voltage_factor,
              min_share, block, back_floor=None):
    """Device rows of parts alike (``nodes``: G × P) for devices near their loops (``chosen``: G × count,
    ``block`` at a time; their rows of ``g``: ``rows``), appended to ``out``: each part's full columns, the
    tree's corrected by the update (``w``, ``wm``, ``g`` per part); ``single``: one scaled tree column per
    device, else a column pair."""
    i, j, child, scale_in, scale_out, bdev, live = arrays
    at = np.arange(nodes.shape[0])[:, None]
    for lo in range(0, chosen.shape[1], block):
        part = chosen[:, lo:lo + block]
        half = part.shape[1]
        correction = w @ g[at, rows[:, lo:lo + block]].transpose(0, 2, 1)
        if single:
            tree_diff = tree.columns(child[part], scale_in[part], scale_out[part], nodes=nodes)
            diff = tree_diff - correction  # Z[:, i] - Z[:, j]
        else:
            cols = tree.columns(np.concatenate([i[part], j[part]], axis=1), nodes=nodes)
            diff = cols[:, :, :half]
            diff -= cols[:, :, half:]
            diff -= correction
        z_b = sub.z[bdev[part]]
        limit = (min_share * np.abs(z_b)) ** 2
        square = diff.real ** 2
        square += diff.imag ** 2
        gg, kk, dd = np.nonzero(square >= limit[:, None, :])
        picked = diff[gg, kk, dd]
        bus = nodes[gg, kk]  # the faulted buses
        current_pu = -picked * i_fault[bus] / z_b[gg, dd]
        if single:  # Z_T[k, j] at the picked rows, from the scaled column
            c_d = child[part][gg, dd]
            inside = tree.in_subtree(c_d, bus)
            if back_floor is not None:  # a bridge's back-feed rows below its floor (0 elsewhere) are left out
                keep = np.flatnonzero(inside | (np.abs(current_pu) >= back_floor[part][gg, dd]))
                gg, kk, dd, picked, bus, current_pu, c_d, inside = (x[keep] for x in (gg, kk, dd, picked, bus,
                                                                                       current_pu, c_d, inside))
            z_c = tree_diff[gg, kk, dd] / np.where(inside, scale_in[part][gg, dd], scale_out[part][gg, dd])
            z_p = z_c * np.where(inside, tree.up[c_d], 1.0 / tree.down[c_d])
            z_j_tree = np.where(j[part][gg, dd] == c_d, z_c, z_p)
        else:
            z_j_tree = cols[gg, kk, half + dd]
        # Direction: that of the active power through the branch, Re((V_i + V_j)/2 conj(I_ij)), with
        # Z[:, i] + Z[:, j] = (Z[:, i] - Z[:, j]) + 2 Z[:, j], Z[k, j] corrected at the picked rows only.
        z_j = z_j_tree - np.einsum("pc,pc->p", wm[gg, kk], w[gg, local[j[part]][gg, dd]])
        both = picked + 2.0 * z_j
        volts = 2.0 * voltage_factor - both * i_fault[bus]
        toward_j = (volts * np.conj(current_pu)).real >= 0.0
        out[0].append(bus)
        out[1].append(live[part][gg, dd])
        out[2].append(current_pu)
        out[3].append(np.where(toward_j, 1, -1))
