"""Bolted faults on a radial network in time proportional to its size.

For a network whose branches form a tree (parallel branches between the same
two buses merged), the Thevenin impedance of every bus follows from two
passes over the tree, and the current through a branch for a fault at any
bus from the voltage drops along the tree (common practice: series-parallel
reduction; the same results as inverting the admittance matrix, which
``network.py`` does for meshed networks and which the tests compare).

Notation, for a node c with parent p through impedance z_c:

- ``Yd[c]``: admittance at c of c's own sources and everything below c;
- ``contrib[c] = Yd[c]/(1 + z_c Yd[c])``: what c's subtree adds at p;
- ``Yu[c]``: admittance at c of everything above c (through z_c);
- ``A[c] = Yd[p] + Yu[p] - contrib[c]``: admittance at p of everything but
  c's subtree; Z_kk = 1/(Yd[k] + Yu[k]).

A fault at k drops the voltage at k by c (the voltage factor). Climbing from
k, the drop at the parent of m is the drop at m times
``up[m] = 1/(1 + z_m A[m])``, and the current into m's subtree through z_m
is (drop at m) × A[m]/(1 + z_m A[m]). For a fault outside c's subtree, the
current out of it through z_c is (drop at p) × contrib[c], and the drop at p
is c Z_pk / Z_kk (a column of Z, spread down the tree with
``down[m] = 1/(1 + z_m Yd[m])``).
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import breadth_first_order, depth_first_order

#: Columns of Z spread down the tree together [-].
BLOCK_COLUMNS = 256


def edge_between(n, edge_a, edge_b, u, v):
    """Index of the edge joining ``u[k]`` and ``v[k]`` (edges are distinct pairs of buses; each pair given
    must be one of them) [-]."""
    key = np.minimum(edge_a, edge_b).astype(np.int64) * n + np.maximum(edge_a, edge_b)
    order = np.argsort(key, kind="stable")
    wanted = np.minimum(u, v).astype(np.int64) * n + np.maximum(u, v)
    return order[np.searchsorted(key[order], wanted)]


def joined_at(graph, roots):
    """``graph`` (n x n, CSR) with an extra node n joined to each of ``roots`` (CSR, n + 1 square).

    A search from node n then searches each root's connected part as a search from that root alone would
    (the same order of neighbours: node n is the last neighbour of each root), in one call.
    """
    n = graph.shape[0]
    g = graph.tocoo()
    roots = np.asarray(roots, dtype=np.intp)
    extra = np.full(roots.size, n, dtype=np.intp)
    joined = sp.csr_matrix((np.concatenate([g.data, np.ones(2 * roots.size, dtype=g.data.dtype)]),
                            (np.concatenate([g.row, roots, extra]), np.concatenate([g.col, extra, roots]))),
                           shape=(n + 1, n + 1))
    joined.sum_duplicates()
    return joined


class RadialNetwork:
    """A tree (forest) of energised buses with the passes of the module docstring.

    Parameters
    ----------
    n : int
        Number of buses (all energised) [-]
    edge_a, edge_b : numpy.ndarray of int
        Buses of each (merged) edge [-]
    edge_y : numpy.ndarray of complex
        Total admittance of each edge [pu]
    shunt_y : numpy.ndarray of complex
        Shunt source admittance at each bus [pu]
    roots : sequence of int
        One source bus per connected part [-]
    """

    def __init__(self, n, edge_a, edge_b, edge_y, shunt_y, roots):
        graph = sp.coo_matrix((np.arange(1, edge_a.size + 1), (edge_a, edge_b)), shape=(n, n)).tocsr()
        graph = graph + graph.T
        roots = np.asarray(roots, dtype=np.intp).reshape(-1)
        self.parent = np.full(n, -1, dtype=np.intp)
        self.edge = np.full(n, -1, dtype=np.intp)  # merged edge to the parent
        # One search from an extra node n joined to every root (the parts never meet, so each part is
        # searched as from its root alone), its order then put part by part in the order of ``roots``.
        joined = joined_at(graph, roots)
        order, pred = breadth_first_order(joined, n, directed=False, return_predecessors=True)
        preorder = depth_first_order(joined, n, directed=False, return_predecessors=False)[1:]
        order = order[1:]
        nodes = order[pred[order] != n]
        self.parent[nodes] = pred[nodes]
        self.edge[nodes] = edge_between(n, edge_a, edge_b, nodes, pred[nodes])
        self.depth = np.zeros(n, dtype=np.intp)
        up = self.parent.copy()
        while (up >= 0).any():  # one step up per round, every node at once
            self.depth += up >= 0
            up = np.where(up >= 0, self.parent[np.maximum(up, 0)], -1)
        top_of = np.where(self.parent >= 0, self.parent, np.arange(n))
        while True:  # each node's root, by pointer jumping
            further = top_of[top_of]
            if np.array_equal(further, top_of):
                break
            top_of = further
        rank = np.full(n, -1, dtype=np.intp)
        rank[roots] = np.arange(roots.size)
        rank = rank[top_of]
        self.top = top_of  # the root of each node's part
        self.order = order[np.argsort(rank[order], kind="stable")]
        preorder = preorder[np.argsort(rank[preorder], kind="stable")]
        levels = np.argsort(self.depth[self.order], kind="stable")
        by_depth = self.order[levels]
        bounds = np.searchsorted(self.depth[by_depth], np.arange(self.depth.max() + 2))
        self.levels = [by_depth[bounds[d]:bounds[d + 1]] for d in range(1, self.depth.max() + 1)]
        self.levels_root = by_depth[bounds[0]:bounds[1]]
        self.tin = np.empty(n, dtype=np.intp)
        self.tin[preorder] = np.arange(n)
        self.size = np.ones(n, dtype=np.intp)
        for level in reversed(self.levels):
            np.add.at(self.size, self.parent[level], self.size[level])
        z = np.zeros(n, dtype=complex)
        has_parent = self.parent >= 0
        z[has_parent] = 1.0 / edge_y[self.edge[has_parent]]
        self.z = z
        yd = np.asarray(shunt_y, dtype=complex).copy()
        contrib = np.zeros(n, dtype=complex)
        for level in reversed(self.levels):
            contrib[level] = yd[level] / (1.0 + z[level] * yd[level])
            np.add.at(yd, self.parent[level], contrib[level])
        yu = np.zeros(n, dtype=complex)
        a = np.zeros(n, dtype=complex)
        for level in self.levels:
            p = self.parent[level]
            a[level] = yd[p] + yu[p] - contrib[level]
            yu[level] = a[level] / (1.0 + z[level] * a[level])
        self.yd, self.yu, self.a, self.contrib = yd, yu, a, contrib
        self.z_kk = 1.0 / (yd + yu)
        self.up = 1.0 / (1.0 + z * a)
        self.down = 1.0 / (1.0 + z * yd)
        # Children of each node, grouped (CSR): children[child_start[p]:child_start[p + 1]].
        has_parent = np.flatnonzero(self.parent >= 0)
        by_parent = has_parent[np.argsort(self.parent[has_parent], kind="stable")]
        self.children = by_parent
        self.child_start = np.concatenate(([0], np.cumsum(np.bincount(self.parent[has_parent], minlength=n))))

    def in_subtree(self, root, nodes):
        """Whether each of ``nodes`` lies in the subtree of ``root`` (element-wise) [-]."""
        t = self.tin[nodes]
        start = self.tin[root]
        return (t >= start) & (t < start + self.size[root])

    def downstream_currents(self, edge_nodes_mask, voltage_factor):
        """Currents into a device's subtree for faults inside it.

        Returns
        -------
        tuple of numpy.ndarray
            Faulted bus, child node of the edge, current into the child [pu].
        """
        faults = np.arange(self.parent.size)
        node = faults.copy()
        drop = np.full(node.size, voltage_factor, dtype=complex)
        out_k, out_node, out_i = [], [], []
        while node.size:
            live = self.parent[node] >= 0
            faults, node, drop = faults[live], node[live], drop[live]
            pick = edge_nodes_mask[node]
            a, z = self.a[node[pick]], self.z[node[pick]]
            out_k.append(faults[pick])
            out_node.append(node[pick])
            out_i.append(drop[pick] * a / (1.0 + z * a))
            drop = drop * self.up[node]
            node = self.parent[node]
        return np.concatenate(out_k), np.concatenate(out_node), np.concatenate(out_i)

    def local_columns(self, sources, threshold):
        """The entries of Z[:, s] of magnitude at least ``threshold`` [pu], for each s in ``sources``.

        Moving away from s along the tree, |Z[x, s]| never grows (each step
        multiplies by ``up`` or ``down``, both of magnitude at most 1 in a
        passive network: 1 + z Y with z and Y of non-negative resistance and
        reactance has magnitude at least 1), so the walk stops where the
        value falls below the threshold; the work is proportional to the
        entries returned, not to the network's size.

        Parameters
        ----------
        sources : numpy.ndarray of int
            Buses s [-]
        threshold : numpy.ndarray
            Smallest magnitude kept, per source [pu]

        Returns
        -------
        tuple of numpy.ndarray
            Source position (into ``sources``), bus x, Z[x, s] [pu].
        """
        sources = np.asarray(sources, dtype=np.intp)
        threshold = np.asarray(threshold, dtype=float)
        col = np.arange(sources.size)
        node = sources.copy()
        value = self.z_kk[node].copy()
        keep = np.abs(value) >= threshold
        col, node, value = col[keep], node[keep], value[keep]
        came_from = np.full(col.size, -1, dtype=np.intp)  # the child a climbing walk came from
        out_col, out_node, out_value = [col], [node], [value]
        frontier = [(col, node, value, came_from)]
        # Climb: each source's path to its root while the value stays above the threshold.
        climb_col, climb_node, climb_value = col, node, value
        while climb_col.size:
            live = self.parent[climb_node] >= 0
            climb_col, climb_node, climb_value = climb_col[live], climb_node[live], climb_value[live]
            climb_value = climb_value * self.up[climb_node]
            child = climb_node
            climb_node = self.parent[climb_node]
            keep = np.abs(climb_value) >= threshold[climb_col]
            climb_col, climb_node, climb_value, child = (x[keep] for x in (climb_col, climb_node, climb_value,
                                                                           child))
            out_col.append(climb_col)
            out_node.append(climb_node)
            out_value.append(climb_value)
            frontier.append((climb_col, climb_node, climb_value, child))
        # Descend from every node reached so far into its other children, level by level.
        col = np.concatenate([f[0] for f in frontier])
        node = np.concatenate([f[1] for f in frontier])
        value = np.concatenate([f[2] for f in frontier])
        came_from = np.concatenate([f[3] for f in frontier])
        while col.size:
            count = self.child_start[node + 1] - self.child_start[node]
            rows = np.repeat(np.arange(col.size), count)
            offsets = np.arange(rows.size) - np.repeat(np.cumsum(count) - count, count)
            child = self.children[self.child_start[node][rows] + offsets]
            value = value[rows] * self.down[child]
            col = col[rows]
            keep = (child != came_from[rows]) & (np.abs(value) >= threshold[col])
            col, node, value = col[keep], child[keep], value[keep]
            came_from = np.full(col.size, -1, dtype=np.intp)
            out_col.append(col)
            out_node.append(node)
            out_value.append(value)
        return np.concatenate(out_col), np.concatenate(out_node), np.concatenate(out_value)

    def columns(self, sources, scale_in=None, scale_out=None, nodes=None):
        """Z[:, s] for each bus s in ``sources`` (N × len(sources)) [pu].

        With ``scale_in`` and ``scale_out`` (one factor per source), the rows
        of each column inside the source's subtree are multiplied by its
        ``scale_in`` and the others by its ``scale_out`` (the spreading down
        the tree is linear, so the two regions are scaled where they start:
        the source itself, and its ancestors) [-].

        With ``nodes`` (the buses of one tree of the forest, every source in it), only their rows, in that
        order (len(nodes) × len(sources)): the other rows are zero, and each row kept is computed as in
        the whole array. With 2-D ``sources`` and ``nodes`` (one row each per tree, G trees with as many
        buses and sources each; ``scale_in`` and ``scale_out`` shaped like ``sources``), the columns of
        each tree on its own rows (G × len(nodes[0]) × len(sources[0])), each value as that tree's call
        alone gives it.
        """
        if np.ndim(sources) == 2:
            return self._columns_of_trees(np.asarray(sources, dtype=np.intp), scale_in, scale_out,
                                          np.asarray(nodes, dtype=np.intp))
        cols = np.arange(len(sources))
        return self._spread(np.asarray(sources, dtype=np.intp), cols, cols, scale_in, scale_out, cols.size, nodes)

    def _columns_of_trees(self, sources, scale_in, scale_out, nodes):
        """:meth:`columns` of several trees at once (2-D ``sources`` and ``nodes``, see there)."""
        trees, b = sources.shape
        flat_in = None if scale_in is None else np.asarray(scale_in).ravel()
        flat_out = None if scale_out is None else np.asarray(scale_out).ravel()
        v = self._spread(sources.ravel(), np.arange(sources.size), np.tile(np.arange(b), trees), flat_in,
                         flat_out, b, nodes.ravel())
        return v.reshape(trees, nodes.shape[1], b)

    def _spread(self, node, source, cols, scale_in, scale_out, b, nodes):
        """The columns of sources ``node`` (numbered ``source``, written to columns ``cols``): each source's
        value walked up to its root, then spread down level by level [pu]."""
        n = self.parent.size
        value = self.z_kk[node].copy()
        path = [(node, cols, value if scale_in is None else value * scale_in)]  # sources, ancestors, values
        while source.size:
            live = self.parent[node] >= 0
            node, value, cols, source = node[live], value[live], cols[live], source[live]
            value = value * self.up[node]
            node = self.parent[node]
            path.append((node, cols, value if scale_out is None else value * scale_out[source]))
        path_node = np.concatenate([p[0] for p in path])
        path_col = np.concatenate([p[1] for p in path])
        path_value = np.concatenate([p[2] for p in path])
        order = np.argsort(self.depth[path_node], kind="stable")
        path_node, path_col, path_value = path_node[order], path_col[order], path_value[order]
        bounds = np.searchsorted(self.depth[path_node], np.arange(self.depth.max() + 2))
        if nodes is None:
            row, roots, levels = np.arange(n), self.levels_root, self.levels
        else:
            nodes = np.asarray(nodes, dtype=np.intp)
            row = np.full(n, -1, dtype=np.intp)
            row[nodes] = np.arange(nodes.size)
            depth = self.depth[nodes]
            roots = nodes[depth == 0]
            levels = [nodes[depth == d] for d in range(1, int(depth.max(initial=0)) + 1)]
        v = np.empty((row.size if nodes is None else nodes.size, b), dtype=complex)
        v[row[roots]] = 0.0
        at = slice(bounds[0], bounds[1])
        v[row[path_node[at]], path_col[at]] = path_value[at]
        for depth, level in enumerate(levels, start=1):
            v[row[level]] = v[row[self.parent[level]]] * self.down[level][:, None]
            at = slice(bounds[depth], bounds[depth + 1])
            v[row[path_node[at]], path_col[at]] = path_value[at]
        return v
