"""A spanning forest of a network's branches, and the connected parts of any state read from it.

Used by :mod:`.network_stages` (which buses a state leaves fed) and by the clearing paths. Pure: numpy and
scipy only, no I/O.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import breadth_first_order, connected_components, depth_first_order

from .network_radial import joined_at


class SpanningForest:
    """A breadth-first spanning forest of a network's branches.

    Attributes: ``parent`` (-1 at a root), ``depth``, ``parent_branch`` (the
    forest branch from each node to its parent, -1 at a root), ``child_of``
    (per branch, the child node it joins to its parent, -1 outside the
    forest), ``others`` (branches outside the forest: each closes a loop).

    :meth:`components` finds the connected parts of a state quickly: opening
    forest branches cuts subtrees off (nested intervals of a preorder
    numbering); the branches outside the forest that are still closed then
    join some of those pieces again (a small graph of pieces).
    """

    def __init__(self, n, branch_from, branch_to):
        m = branch_from.size
        graph = sp.coo_matrix((np.arange(1, m + 1), (branch_from, branch_to)), shape=(n, n)).tocsr()
        graph = (graph + graph.T).tocsr()  # parallel branches: one entry (sum), found by the tree test below
        parts, base = connected_components(graph, directed=False)
        roots = np.unique(base, return_index=True)[1]
        # One search from an extra node n joined to every part's root: each part is searched as from its
        # root alone (the parts never meet), in one call however many parts there are.
        order, pred = breadth_first_order(joined_at(graph, roots), n, directed=False, return_predecessors=True)
        parent = np.full(n, -1, dtype=np.intp)
        nodes = order[1:]
        parent[nodes] = np.where(pred[nodes] == n, -1, pred[nodes])
        depth = np.zeros(n, dtype=np.intp)
        up = parent.copy()
        while (up >= 0).any():  # one step up the forest per round, every node at once
            depth += up >= 0
            up = np.where(up >= 0, parent[np.maximum(up, 0)], -1)
        # Preorder of the forest itself (not of the whole graph): each subtree is one interval.
        child = np.flatnonzero(parent >= 0)
        forest = sp.coo_matrix((np.ones(child.size), (child, parent[child])), shape=(n, n)).tocsr()
        self.preorder = depth_first_order(joined_at(forest, roots), n, directed=False, return_predecessors=False)[1:]
        self.tin = np.empty(n, dtype=np.intp)
        self.tin[self.preorder] = np.arange(n)
        self.size = np.ones(n, dtype=np.intp)
        for d in range(depth.max(initial=0), 0, -1):
            level = np.flatnonzero(depth == d)
            np.add.at(self.size, parent[level], self.size[level])
        # The forest branch of each child node: the first of the branches between it and its parent.
        child = np.where(parent[branch_to] == branch_from, branch_to,
                         np.where(parent[branch_from] == branch_to, branch_from, -1))
        self.child_of = np.full(m, -1, dtype=np.intp)
        joins = np.flatnonzero(child >= 0)
        first = joins[np.unique(child[joins], return_index=True)[1]]
        self.child_of[first] = child[first]
        self.depth, self.parent = depth, parent
        self.parent_branch = np.full(n, -1, dtype=np.intp)
        in_forest = self.child_of >= 0
        self.parent_branch[self.child_of[in_forest]] = np.flatnonzero(in_forest)
        self.base = base.astype(np.int32)
        self.parts = int(parts)
        self.branch_from, self.branch_to = branch_from, branch_to
        self.others = np.flatnonzero(self.child_of < 0)  # branches outside the forest

    def components(self, closed):
        """Connected-part label of each node with only the ``closed`` branches in (int32; equal labels, one
        part: the labels are not numbered 0, 1, 2, ...) [-]."""
        cut = self.child_of[~closed]
        cut = cut[cut >= 0]
        by_position = self.base[self.preorder].astype(np.int32)
        if cut.size:
            cut = cut[np.argsort(self.depth[cut], kind="stable")]  # deeper cuts overwrite shallower ones
            for number, child in enumerate(cut):
                by_position[self.tin[child]:self.tin[child] + self.size[child]] = self.parts + number
        label = by_position[self.tin]
        joining = self.others[closed[self.others]]
        if cut.size and joining.size:
            ends = label[self.branch_from[joining]], label[self.branch_to[joining]]
            apart = ends[0] != ends[1]  # a closed loop branch joining two pieces again (others join nothing)
            if apart.any():
                lookup = np.arange(label.max() + 1, dtype=np.int32)
                root = {}

                def find(x):
                    while root.get(x, x) != x:
                        x = root[x]
                    return x

                for a, b in zip(ends[0][apart].tolist(), ends[1][apart].tolist()):
                    a, b = find(a), find(b)
                    if a != b:
                        root[max(a, b)] = min(a, b)  # each joined group: its lowest piece
                for piece in root:
                    lookup[piece] = find(piece)
                label = lookup[label]
        return label
