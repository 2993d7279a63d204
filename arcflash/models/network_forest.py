"""A spanning forest of a network's branches, and the connected parts of any state read from it.

Used by :mod:`.network_stages` (which buses a state leaves fed) and by the clearing paths. Pure: numpy and
scipy only, no I/O.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import breadth_first_order, connected_components, depth_first_order, shortest_path

from .network_radial import joined_at

#: States of at most this many opened branches are answered by :meth:`ForestQueries.reaches_source` from the
#: spanning forest (each opening a cut; more: the state's parts are found once and kept) [-].
MAX_CUTS_FROM_FOREST = 4


#: Spanning forests kept by :func:`spanning_forest` (the latest of distinct networks) [-].
FORESTS_KEPT = 8
_FORESTS = {}


def spanning_forest(n, branch_from, branch_to):
    """The :class:`SpanningForest` of a network, remembered by its content (``n`` and the branch ends): the
    scenarios of a study, and the stacks of an uncertainty run (copies joined alike, whatever their
    impedances), share one. Its arrays are read-only."""
    key = (n, np.asarray(branch_from, dtype=np.intp).tobytes(), np.asarray(branch_to, dtype=np.intp).tobytes())
    forest = _FORESTS.get(key)
    if forest is None:
        if len(_FORESTS) >= FORESTS_KEPT:
            _FORESTS.pop(next(iter(_FORESTS)))  # the oldest
        forest = _FORESTS[key] = SpanningForest(n, np.asarray(branch_from, dtype=np.intp),
                                                np.asarray(branch_to, dtype=np.intp))
        for value in vars(forest).values():
            if isinstance(value, np.ndarray):
                value.flags.writeable = False
    return forest


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


class ForestQueries:
    """What a network in changing states (:class:`~arcflash.models.network_stages.NetworkStates`) reads from
    its spanning forest: distances in branches, and whether a source still reaches a bus. The class using
    it provides ``_forest()``, ``_topology(key)``, ``_states`` (a cache dict), ``n``, ``branch_from``,
    ``branch_to`` and ``source_bus``."""

    def hops_from(self, bus):
        """Number of branches between ``bus`` and every bus, all branches closed (cached) [-]."""
        cache = self._states.setdefault("hops", {})
        if bus not in cache:
            graph = sp.coo_matrix((np.ones(self.branch_from.size), (self.branch_from, self.branch_to)),
                                  shape=(self.n, self.n))
            cache[bus] = shortest_path(graph, directed=False, unweighted=True, indices=bus)
        return cache[bus]

    def _cuts(self):
        """What :meth:`reaches_source` reads for a few openings, as Python lists (cached): the forest's
        preorder number and subtree size of each node, the child node of each forest branch, the part of
        each node, and per part the preorder numbers of its sources and (branch, preorder numbers of the
        ends) of its branches outside the forest."""
        if "cuts" not in self._states:
            forest = self._forest()
            sources, loops = {}, {}
            for node in self.source_bus.tolist():
                sources.setdefault(int(forest.base[node]), []).append(int(forest.tin[node]))
            ends = zip(forest.others.tolist(), forest.branch_from[forest.others].tolist(),
                       forest.branch_to[forest.others].tolist())
            for branch, a, b in ends:
                loops.setdefault(int(forest.base[a]), []).append((branch, int(forest.tin[a]), int(forest.tin[b])))
            self._states["cuts"] = (forest.tin.tolist(), forest.size.tolist(), forest.child_of.tolist(),
                                    forest.base.tolist(), sources, loops)
        return self._states["cuts"]

    def reaches_source(self, key, bus):
        """Whether a source still reaches ``bus`` (the split node when the state splits it) [-].

        A few branches opened (an arc's openings) are answered from the spanning forest alone: each opened
        forest branch cuts off the subtree below it (an interval of the preorder numbering), so a node's
        piece is the innermost cut around it; the closed branches outside the forest join pieces again
        (a small union of pieces); the bus is fed if a source lies in a piece joined to its own."""
        if key.split is None and len(key.opened) <= MAX_CUTS_FROM_FOREST and ("topology", key) not in self._states:
            tin, size, child_of, part_of, sources, loops = self._cuts()
            part = part_of[bus]
            mine = sources.get(part)
            if not mine:
                return False
            cuts = [(tin[child_of[b]], tin[child_of[b]] + size[child_of[b]]) for b in key.opened if child_of[b] >= 0]

            def piece(x):  # the innermost cut around preorder number x (-1: none, the part's own piece)
                inner, start = -1, -1
                for number, (lo, hi) in enumerate(cuts):
                    if lo <= x < hi and lo > start:
                        inner, start = number, lo
                return inner

            root = {}

            def find(x):
                while root.get(x, x) != x:
                    x = root[x]
                return x

            for branch, a, b in loops.get(part, ()):
                if branch not in key.opened:
                    pa, pb = find(piece(a)), find(piece(b))
                    if pa != pb:
                        root[max(pa, pb)] = min(pa, pb)
            own = find(piece(tin[bus]))
            return any(find(piece(s)) == own for s in mine)
        energized = self._topology(key)[3]
        return bool(energized[self.n if key.split is not None else bus])
