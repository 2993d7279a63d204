"""Bolted faults on a network whose state changes as devices open.

While an arcing fault is being cleared, protective devices open one after
another; each opening removes a branch and changes every current. A
*network state* is the set of branches opened so far, whether the motor
contributions have ended, and (for an arc on a device's line side) the
branches whose end at the faulted bus has been separated from that bus.
For each state this module gives, for a fault at any bus, the bolted
current and the current through every protective device — every device,
with no pruning of small currents: a device carrying little at inception can
carry the whole fault later.

One sparse LU factorisation serves a state; every bus fault in that state
is a column solve with it (Thevenin, superposition with a flat prefault
voltage c, as :mod:`.network`). Faults that reach the same state (the same
devices opened) share the factorisation, so the work grows with the number
of distinct states, not with the number of stages of every bus.

Pure: numpy and scipy only, no I/O.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from .network import admittance_matrix, base_current_ka
from .network_factors import COLUMNS_TOGETHER_ROWS, PartsLU, factorised, solve_each
from .network_forest import ForestQueries, SpanningForest, spanning_forest
from .network_tiles import TiledTopology, Tiling

__all__ = ["NetworkStates", "SpanningForest", "StageFaults", "StateKey", "Tiling"]

#: Fault columns solved together [-].
BLOCK_COLUMNS = 128
#: Base-state fault columns kept for reuse by later stages of the same arcs [-].
BASE_COLUMNS_KEPT = 160
#: Branches of smaller impedance (closed switches, 1e-6 pu) are not removed by a low-rank
#: update: the update's small matrix would lose most of its digits; the state is factorised [pu].
LOW_RANK_MIN_Z_PU = 1e-4


@dataclass(frozen=True)
class StateKey:
    """A network state: opened branches, motors ended, line-side split.

    ``split`` is ``(bus, branches)``: those branches' ends at ``bus`` are moved
    to a new node (the line side of a device that does not clear an arc at
    ``bus``), and a fault at ``bus`` is placed on that new node.
    """

    opened: frozenset = frozenset()
    motors_off: bool = False
    split: tuple | None = None


@dataclass(frozen=True)
class StageFaults:
    """Faults at some buses in one state.

    Attributes
    ----------
    energized : numpy.ndarray of bool
        A source still reaches the faulted point [-]
    bolted_ka : numpy.ndarray
        Bolted three-phase current at the faulted point, 0 where not
        energised [kA]
    device_current_ka : numpy.ndarray
        Shape (faults, devices): current through each device in its own kV
        base, 0 where opened or cut off [kA]
    """

    energized: np.ndarray
    bolted_ka: np.ndarray
    device_current_ka: np.ndarray


class NetworkStates(ForestQueries):
    """A per-unit network and its devices, solved in any state (see the module docstring).

    Parameters
    ----------
    base_kv : numpy.ndarray
        Voltage base of each bus [kV]
    branch_from, branch_to, branch_z_pu, shunt_bus, shunt_z_pu
        Branches and shunt sources, see
        :func:`arcflash.models.network.admittance_matrix` [-], [-], [pu], [-], [pu]
    shunt_is_motor : numpy.ndarray of bool
        The shunt is a motor (contributes, does not energise; ends when a
        state has ``motors_off``) [-]
    source_bus : numpy.ndarray of int
        Buses of the energising sources (utility, running generators) [-]
    device_branch : numpy.ndarray of int
        Branch of each protective device [-]
    device_kv : numpy.ndarray
        Voltage base on the device's side [kV]
    voltage_factor : float
        Prefault voltage c [pu]
    s_base_mva : float
        Power base [MVA]
    base_factors : dict, optional
        Where the LU factors of the base state's parts are remembered by their matrices; networks given
        the same dict (the scenarios of one site) share them: a part a scenario leaves as another had it,
        or a scenario whose network equals another's, is not factorised again [-]
    tiling : Tiling, optional
        The network is copies of one base network (an uncertainty run's stack): the topology of its states
        is read from the base network, once for all copies (:mod:`.network_tiles`) [-]
    """

    def __init__(self, base_kv, branch_from, branch_to, branch_z_pu, shunt_bus, shunt_z_pu, shunt_is_motor,
                 source_bus, device_branch, device_kv, voltage_factor=1.0, s_base_mva=100.0, base_factors=None,
                 tiling=None):
        self.base_kv = np.asarray(base_kv, dtype=float)
        self.n = self.base_kv.size
        self.branch_from = np.asarray(branch_from, dtype=np.intp)
        self.branch_to = np.asarray(branch_to, dtype=np.intp)
        self.branch_z_pu = np.asarray(branch_z_pu, dtype=complex)
        self.shunt_bus = np.asarray(shunt_bus, dtype=np.intp)
        self.shunt_z_pu = np.asarray(shunt_z_pu, dtype=complex)
        self.shunt_is_motor = np.asarray(shunt_is_motor, dtype=bool)
        self.source_bus = np.asarray(source_bus, dtype=np.intp)
        self.device_branch = np.asarray(device_branch, dtype=np.intp)
        self.device_base_ka = base_current_ka(s_base_mva, np.asarray(device_kv, dtype=float))
        self._device_scale = self.device_base_ka / np.abs(self.branch_z_pu[self.device_branch])  # [kA/pu]
        self.voltage_factor = float(voltage_factor)
        self.s_base_mva = float(s_base_mva)
        self._states = {}
        self._base_factors = {} if base_factors is None else base_factors
        self._tiles = None if tiling is None else TiledTopology(self, tiling, _topology_only)

    def _topology(self, key):
        """Branch ends (after any split), closed branches and energised nodes of a state (cached)."""
        cache_key = ("topology", key)
        if cache_key in self._states:
            return self._states[cache_key]
        n = self.n
        f, t = self.branch_from, self.branch_to  # copied only when a split rewires them
        extra = 0
        if key.split is not None:
            f, t = f.copy(), t.copy()
            bus, branches = key.split
            branches = np.asarray(sorted(branches), dtype=np.intp)
            extra = 1
            f[branches] = np.where(f[branches] == bus, n, f[branches])
            t[branches] = np.where(t[branches] == bus, n, t[branches])
        m = n + extra
        closed = np.ones(f.size, dtype=bool)
        if key.opened:
            closed[np.fromiter(key.opened, dtype=np.intp)] = False
        if key.split is None:
            label = self._forest().components(closed)
        else:
            graph = sp.coo_matrix((np.ones(int(closed.sum())), (f[closed], t[closed])), shape=(m, m))
            label = connected_components(graph, directed=False)[1].astype(np.int32)
        fed = np.zeros(int(label.max(initial=-1)) + 1, dtype=bool)
        fed[label[self.source_bus]] = True
        energized = fed[label]
        topology = (f, t, closed, energized, label)
        self._states[cache_key] = topology
        return topology

    def _forest(self):
        """Spanning forest of all branches (cached), for the parts of a state without a split."""
        if "forest" not in self._states:
            self._states["forest"] = spanning_forest(self.n, self.branch_from, self.branch_to)
        return self._states["forest"]

    def _prepared(self, key):
        """Renumbering of the energised nodes and LU factorisation of a state (cached)."""
        if key in self._states:
            return self._states[key]
        f, t, closed, energized, _ = self._topology(key)
        index = np.full(energized.size, -1, dtype=np.intp)
        active = np.flatnonzero(energized)
        index[active] = np.arange(active.size)
        use = closed & energized[f]
        shunt = energized[self.shunt_bus] & ~(self.shunt_is_motor & key.motors_off)
        lu = None
        if active.size:
            y = admittance_matrix(active.size, index[f[use]], index[t[use]], self.branch_z_pu[use],
                                  index[self.shunt_bus[shunt]], self.shunt_z_pu[shunt])
            memo = self._base_factors if key == StateKey() else self._states.setdefault("blocks", {})
            lu = factorised(y, self._topology(key)[4][active], memo)
        self._states[key] = (index, lu)
        return index, lu

    @property
    def factorisations(self):
        """Number of LU factorisations made so far (one per distinct state solved) [-]."""
        return sum(1 for key in self._states if isinstance(key, StateKey))

    def _update_plan(self, key):
        """Branches whose removal turns the base state into ``key`` by a low-rank update, or None.

        None (factorise the state itself) for a line-side split, ended motor
        contributions, a near-zero-impedance branch among the removed ones
        (a closed switch: the update would lose its precision), or a part
        left without any shunt that no opened branch can tie to a part with
        one. Opened branches that cut off a part without shunts are kept
        where needed, one per such part, tying it to a part with a shunt:
        it then hangs on as a dead end that carries nothing (no source, no
        fault inside), and the updated matrix stays regular.
        """
        if key.split is not None or key.motors_off:
            return None
        cache_key = ("plan", key)
        if cache_key not in self._states:  # the arcs of both arcing cases of a bus often reach the same states
            self._states[cache_key] = self._plan(key)
        return self._states[cache_key]

    def _plan(self, key):
        """The work of :meth:`_update_plan` (a list of branches, never changed by its callers, or None)."""
        applied = self._tiles.plan(key) if self._tiles is not None else False
        if applied is False:
            applied = self._plan_topology(key)
        if applied is None or any(abs(self.branch_z_pu[b]) < LOW_RANK_MIN_Z_PU for b in applied):
            return None
        return applied

    def _plan_topology(self, key):
        """The branches of :meth:`_plan` as the network's topology gives them (before the check of their
        impedances), or None."""
        f, t, _, _, label = self._topology(key)
        parts = label.max() + 1
        grounded = np.zeros(parts, dtype=bool)
        grounded[label[self.shunt_bus]] = True
        root = np.arange(parts)

        def find(x):
            while root[x] != x:
                root[x] = root[root[x]]
                x = root[x]
            return x

        applied, touched = [], set()
        for b in sorted(key.opened):
            touched.update((int(label[f[b]]), int(label[t[b]])))
            a, c = find(label[f[b]]), find(label[t[b]])
            if a != c and not (grounded[a] and grounded[c]):  # kept: ties a part without shunts on
                root[a] = c
                grounded[c] |= grounded[a]
            else:
                applied.append(b)
        if not all(grounded[find(p)] for p in touched):
            return None
        return applied

    def reaches_source(self, key, bus):
        if self._tiles is not None:
            found = self._tiles.reaches_source(key, bus)
            if found is not None:
                return found
        return super().reaches_source(key, bus)

    reaches_source.__doc__ = ForestQueries.reaches_source.__doc__

    def _part_at(self, key, point):
        """(whether a source reaches ``point``, its part: a hashable token) in state ``key``."""
        if self._tiles is not None and key.split is None:
            found = self._tiles.part_at(key, point)
            if found is not None:
                return found
        _, _, _, energized, label = self._topology(key)
        return bool(energized[point]), int(label[point])

    def _carrying(self, key, part, b, position):
        """Positions (ascending) among the wanted devices (branches ``b``; ``position``: each device's
        position, -1 where not wanted) of those closed, energised and in ``part`` (of :meth:`_part_at`) in
        state ``key``: those that may carry a fault's current there."""
        if isinstance(part, tuple):
            return self._tiles.carrying(key, part, position)
        f, _, closed, energized, label = self._topology(key)
        return np.flatnonzero(closed[b] & (label[f[b]] == part) & energized[f[b]])

    def _base_parts(self):
        """The base state's factors part by part: the part of each row, and (rows, LU) of each part."""
        if "base_parts" not in self._states:
            _, lu = self._prepared(StateKey())
            if isinstance(lu, PartsLU):
                parts = (lu.row_part, lu.factors)
            else:
                parts = (np.zeros(lu.shape[0], dtype=np.intp), [(np.arange(lu.shape[0]), lu)])
            self._states["base_parts"] = parts
        return self._states["base_parts"]

    def _cached_columns(self, cache_name, keys, row_of, fill):
        """Solved columns of the base state, cached by key, each on the rows of its own part only (the rest
        of a column is zero); ``row_of(key)`` gives a row where the key's right-hand side has an entry, and
        ``fill(rhs, missing, local)`` sets the right-hand sides of the keys not yet solved (``local``: the
        position of each row within its part) [pu]."""
        cache = self._states.setdefault(cache_name, {})
        missing = [k for k in dict.fromkeys(keys) if k not in cache]
        if missing:
            row_part, factors = self._base_parts()
            local = self._base_local()
            by_part = {}  # the missing keys of each part, in order
            for k, number in zip(missing, row_part[[row_of(k) for k in missing]].tolist()):
                by_part.setdefault(number, []).append(k)
            for number, mine in by_part.items():
                rows, lu = factors[number]
                rhs = np.zeros((rows.size, len(mine)), dtype=complex)
                fill(rhs, mine, local)
                solved = solve_each(lu, rhs)
                for column, k in enumerate(mine):
                    cache[k] = solved[:, column]
        return [cache[k] for k in keys]

    def _base_columns(self, col):
        """Z[:, c] of the base state for each position c, on the rows of c's part, as a list (the last
        :data:`BASE_COLUMNS_KEPT` kept) [pu]."""
        def fill(rhs, missing, local):
            rhs[local[missing], np.arange(len(missing))] = 1.0

        columns = self._cached_columns("base_columns", col.tolist(), lambda c: c, fill)
        cache = self._states["base_columns"]
        for old in list(cache)[:max(0, len(cache) - BASE_COLUMNS_KEPT)]:  # the oldest first
            del cache[old]
        return columns

    def _update_columns(self, branches):
        """Z u_b of the base state for each branch b, on the rows of b's part (cached) [pu]."""
        return np.column_stack(self._update_column_list(branches))

    def _update_column_list(self, branches):
        """Z u_b of the base state for each branch b, on the rows of b's part (cached), as a list [pu]."""
        index, _ = self._prepared(StateKey())

        def fill(rhs, missing, local):
            cols = np.arange(len(missing))
            rhs[local[index[self.branch_from[missing]]], cols] += 1.0
            rhs[local[index[self.branch_to[missing]]], cols] -= 1.0

        return self._cached_columns("update_columns", list(branches), lambda b: index[self.branch_from[b]], fill)

    def solve(self, key, fault_bus):
        """Faults at ``fault_bus`` (bus indices), all in state ``key`` (see :meth:`solve_pairs`)."""
        fault_bus = np.asarray(fault_bus, dtype=np.intp)
        return self.solve_pairs([key] * fault_bus.size, fault_bus)

    def part_of_node(self):
        """The connected part of each node with every branch closed (equal numbers, one part) [-]."""
        return self._forest().base

    def solve_pairs(self, keys, fault_bus, devices=None):
        """Fault k at bus ``fault_bus[k]`` in state ``keys[k]``, for every k.

        A state reached by opening branches is solved from the base state's
        factorisation: the base columns Z[:, bus] of all such faults in one
        block solve, then a low-rank (Woodbury) update for each fault's
        opened branches where that is exact and well conditioned
        (:meth:`_update_plan`). Other states are solved with their own
        factorisation.

        Parameters
        ----------
        keys : sequence of StateKey
            The state of each fault; with a split, the fault is on the split node.
        fault_bus : numpy.ndarray of int
            Faulted buses [-]
        devices : numpy.ndarray of int, optional
            The devices whose currents are wanted (columns of ``device_current_ka`` in this order); every
            device when None [-]

        Returns
        -------
        StageFaults
        """
        fault_bus = np.asarray(fault_bus, dtype=np.intp)
        devices = np.arange(self.device_branch.size) if devices is None else np.asarray(devices, dtype=np.intp)
        count = fault_bus.size
        bolted = np.zeros(count)
        current = np.zeros((count, devices.size))
        on = np.zeros(count, dtype=bool)
        plans = [self._update_plan(key) if key.opened else None for key in keys]
        base_part = self.part_of_node()
        for k, plan in enumerate(plans):  # a branch opened in another part changes nothing for this fault
            if plan and (base_part[self.branch_from[plan]] != base_part[fault_bus[k]]).any():
                plans[k] = [b for b in plan if base_part[self.branch_from[b]] == base_part[fault_bus[k]]]
        from_base = [k for k in range(count) if plans[k] is not None or keys[k] == StateKey()]
        own = {}
        for k in range(count):
            if plans[k] is None and keys[k] != StateKey():
                own.setdefault(keys[k], []).append(k)
        base = StateKey()
        for lo in range(0, len(from_base), BLOCK_COLUMNS):
            rows = np.array(from_base[lo:lo + BLOCK_COLUMNS], dtype=np.intp)
            self._fill(base, rows, fault_bus, [keys[k] for k in rows], [plans[k] for k in rows], devices, bolted,
                       current, on)
        for key, rows in own.items():
            for lo in range(0, len(rows), BLOCK_COLUMNS):
                part = np.array(rows[lo:lo + BLOCK_COLUMNS], dtype=np.intp)
                self._fill(key, part, fault_bus, [key] * part.size, [None] * part.size, devices, bolted, current, on)
        return StageFaults(energized=on, bolted_ka=bolted, device_current_ka=current)

    def _fill(self, solved_key, rows, fault_bus, keys, plans, devices, bolted, current, on):
        """Solve faults ``rows`` with the factorisation of ``solved_key``, each updated by its plan; currents of
        ``devices`` (the columns of ``current``)."""
        index, lu = self._prepared(solved_key)
        b = self.device_branch[devices]
        scale = self._device_scale[devices]
        points, live_rows, parts = [], [], []
        for row, key in zip(rows, keys):
            point = self.n if key.split is not None else int(fault_bus[row])
            energized, part = self._part_at(key, point)
            if energized:
                points.append(point)
                live_rows.append(row)
                parts.append(part)
        if not live_rows:
            return
        wanted = np.full(self.device_branch.size, -1, dtype=np.intp)  # each device's column (-1: not wanted)
        wanted[devices] = np.arange(devices.size)
        live_rows = np.array(live_rows, dtype=np.intp)
        by_row = dict(zip(rows.tolist(), zip(keys, plans)))
        col = index[np.array(points, dtype=np.intp)]
        from_base = solved_key == StateKey()
        if from_base:  # columns on the rows of their part only (a stack of many parts: each copy's own)
            row_part, factors = self._base_parts()
            position = np.full(lu.shape[0], -1, dtype=np.intp)
            base_columns = self._base_columns(col)
        else:
            rhs = np.zeros((lu.shape[0], col.size), dtype=complex)
            rhs[col, np.arange(col.size)] = 1.0
            z_all = solve_each(lu, rhs)  # Z[:, k] of each fault in the factorised state
            position = np.arange(lu.shape[0])
        base_f, base_t = index[self.branch_from[b]], index[self.branch_to[b]]
        # Faults in the same state and the same part of the network are taken together.
        groups, in_base = {}, []
        for j, (row, part) in enumerate(zip(live_rows.tolist(), parts)):
            key = by_row[row][0]
            if from_base and key == solved_key:  # faults in the base state itself: taken together below
                in_base.append(j)
                continue
            groups.setdefault((key, part), []).append(j)
        if in_base:
            self._fill_base(np.array(in_base, dtype=np.intp), col, np.array(points, dtype=np.intp), live_rows,
                            fault_bus, base_columns, b, scale, bolted, current, on)
        if from_base:  # states one branch (or none) away from the base state: every such group at once
            single = {g: js for g, js in groups.items() if len(by_row[int(live_rows[js[0]])][1]) <= 1}
            if single:
                self._fill_rank_one(single, by_row, col, live_rows, fault_bus, base_columns, b, wanted, scale,
                                    bolted, current, on)
                groups = {g: js for g, js in groups.items() if g not in single}
        for (key, part), js in groups.items():
            js = np.array(js, dtype=np.intp)
            plan = by_row[int(live_rows[js[0]])][1]
            if from_base:
                rows = factors[row_part[col[js[0]]]][0]  # the faults' part of the base state
                position[rows] = np.arange(rows.size)
                z = np.column_stack([base_columns[j] for j in js])
            else:
                z = z_all[:, js]
            if plan:
                # Y' = Y - U diag(y) U^T: Z' = Z - W (-diag(z_b) + U^T W)^-1 W^T, W = Z U (Woodbury).
                w = self._update_columns(plan)
                ends = (position[index[self.branch_from[plan]]], position[index[self.branch_to[plan]]])
                small = np.diag(-self.branch_z_pu[plan]) + (w[ends[0]] - w[ends[1]])
                rhs = w[position[col[js]]].T  # two branches or more (one or none: _fill_rank_one)
                if w.shape[0] >= COLUMNS_TOGETHER_ROWS:  # a part alone in its stack: its batch is its own
                    z = z - w @ np.linalg.solve(small, rhs)
                else:  # each fault on its own: a batch's make-up would reach the last digits of its sums
                    z = z - np.column_stack([w @ np.linalg.solve(small, rhs[:, [c]]) for c in range(js.size)])
            i_fault = self.voltage_factor / z[position[col[js]], np.arange(js.size)]  # [pu]
            rows_js = live_rows[js]
            on[rows_js] = True
            bolted[rows_js] = np.abs(i_fault) * base_current_ka(self.s_base_mva, self.base_kv[fault_bus[rows_js]])
            # A device carries current only if closed and in the faulted point's part of the network.
            idx = self._carrying(key, part, b, wanted)
            if key.split is not None:  # the split state's own numbering
                f, t = self._topology(key)[:2]
                ends_f, ends_t = position[index[f[b[idx]]]], position[index[t[b[idx]]]]
            else:
                ends_f, ends_t = position[base_f[idx]], position[base_t[idx]]
            # |I_d| = |Z[f, k] - Z[t, k]| |I_k| / |z_d| in the device's own kV, one row per fault.
            zt = np.ascontiguousarray(z.T)
            i_dev = np.abs(zt[:, ends_f] - zt[:, ends_t])
            i_dev *= np.abs(i_fault)[:, None]
            i_dev *= scale[idx][None, :]
            if idx.size == b.size:
                current[rows_js] = i_dev
            else:
                current[np.ix_(rows_js, idx)] = i_dev

    def _fill_rank_one(self, groups, by_row, col, live_rows, fault_bus, base_columns, b, wanted, scale, bolted,
                       current, on):
        """Faults ``groups`` ((state, part) -> positions) in states that differ from the base state by one
        opened branch or none (their plans), all at once: each fault's base column (``base_columns``, on its
        part's rows) updated by its branch (Woodbury, rank one), element by element as :meth:`_fill` does
        for one group; faults whose parts differ in size are taken size by size."""
        index, _ = self._prepared(StateKey())
        local = self._base_local()
        f_all, t_all = self.branch_from, self.branch_to
        ends_f, ends_t = local[index[f_all[b]]], local[index[t_all[b]]]  # each device's rows in its part
        faults, branch, pairs = [], [], []  # pairs: (fault, device) of each fault's devices
        for (key, part), js in groups.items():
            plan = by_row[int(live_rows[js[0]])][1]
            idx = self._carrying(key, part, b, wanted)
            for j in js:
                pairs.append((len(faults), idx))
                faults.append(j)
                branch.append(plan[0] if plan else -1)
        faults, branch = np.array(faults, dtype=np.intp), np.array(branch, dtype=np.intp)
        pair_fault = np.repeat([k for k, _ in pairs], [idx.size for _, idx in pairs])
        pair_device = np.concatenate([idx for _, idx in pairs])
        sizes = np.array([base_columns[j].size for j in faults.tolist()], dtype=np.intp)
        kinds = np.unique(sizes)
        for size in kinds.tolist():
            mine = np.flatnonzero(sizes == size) if kinds.size > 1 else np.arange(faults.size)
            z = np.stack([base_columns[j] for j in faults[mine].tolist()])  # one row per fault
            point = local[col[faults[mine]]]
            updated = np.flatnonzero(branch[mine] >= 0)
            if updated.size:
                opened = branch[mine][updated]
                w = np.stack(self._update_column_list(opened.tolist()))
                rows = np.arange(updated.size)
                small = -self.branch_z_pu[opened] + (w[rows, local[index[f_all[opened]]]]
                                                    - w[rows, local[index[t_all[opened]]]])
                ratio = w[rows, point[updated]] / small
                if updated.size == z.shape[0]:  # every fault updated (the usual case): in place
                    z -= w * ratio[:, None]
                else:
                    z[updated] = z[updated] - w * ratio[:, None]
            i_fault = self.voltage_factor / z[np.arange(mine.size), point]  # [pu]
            rows_js = live_rows[faults[mine]]
            on[rows_js] = True
            bolted[rows_js] = np.abs(i_fault) * base_current_ka(self.s_base_mva, self.base_kv[fault_bus[rows_js]])
            # |I_d| = |Z[f, k] - Z[t, k]| |I_k| / |z_d| in the device's own kV, for each fault's devices
            if kinds.size > 1:
                position = np.full(faults.size, -1, dtype=np.intp)
                position[mine] = np.arange(mine.size)
                pick = np.flatnonzero(position[pair_fault] >= 0)
                at, d = position[pair_fault[pick]], pair_device[pick]
            else:
                at, d = pair_fault, pair_device
            i_dev = np.abs(z[at, ends_f[d]] - z[at, ends_t[d]])
            i_dev *= np.abs(i_fault)[at]
            i_dev *= scale[d]
            current[rows_js[at], d] = i_dev

    def _fill_base(self, js, col, points, live_rows, fault_bus, base_columns, b, scale, bolted, current, on):
        """Faults ``js`` in the base state, every part at once: each fault's column on the rows of its own part
        (``base_columns``), the currents of the devices ``b`` (branches; ``scale`` [kA/pu]) closed and
        energised in its part; the arithmetic of each value is that of :meth:`_fill`'s groups."""
        f, _, closed, energized, label = self._topology(StateKey())
        index, _ = self._prepared(StateKey())
        local = self._base_local()
        sizes = np.array([base_columns[j].size for j in js.tolist()], dtype=np.intp)
        offsets = np.cumsum(sizes) - sizes
        flat = np.concatenate([base_columns[j] for j in js.tolist()])
        i_fault = self.voltage_factor / flat[offsets + local[col[js]]]  # [pu]
        rows_js = live_rows[js]
        on[rows_js] = True
        bolted[rows_js] = np.abs(i_fault) * base_current_ka(self.s_base_mva, self.base_kv[fault_bus[rows_js]])
        # (fault, device) pairs: the devices closed and energised in the fault's part, sorted by part
        usable = np.flatnonzero(closed[b] & energized[f[b]])
        part = label[f[b[usable]]]
        order = np.argsort(part, kind="stable")
        usable, part = usable[order], part[order]
        fault_part = label[points[js]]
        lo = np.searchsorted(part, fault_part, "left")
        count = np.searchsorted(part, fault_part, "right") - lo
        fault = np.repeat(np.arange(js.size), count)
        d = usable[np.repeat(lo, count) + np.arange(fault.size) - np.repeat(np.cumsum(count) - count, count)]
        start = offsets[fault]
        ends_f, ends_t = local[index[self.branch_from[b]]], local[index[self.branch_to[b]]]  # per device
        # |I_d| = |Z[f, k] - Z[t, k]| |I_k| / |z_d| in the device's own kV
        i_dev = np.abs(flat[start + ends_f[d]] - flat[start + ends_t[d]])
        i_dev *= np.abs(i_fault)[fault]
        i_dev *= scale[d]
        current[rows_js[fault], d] = i_dev

    def _base_local(self):
        """Position of each row of the base state's factorisation within its part (cached) [-]."""
        if "base_local" not in self._states:
            _, lu = self._prepared(StateKey())
            self._states["base_local"] = lu.local if isinstance(lu, PartsLU) else np.arange(lu.shape[0])
        return self._states["base_local"]


def _topology_only(n, branch_from, branch_to, shunt_bus, source_bus, device_branch):
    """A :class:`NetworkStates` whose topology alone is read (a tiled network's base, :mod:`.network_tiles`):
    its impedances and voltages are placeholders."""
    return NetworkStates(np.ones(n), branch_from, branch_to, np.ones(branch_from.size, dtype=complex), shunt_bus,
                         np.ones(shunt_bus.size, dtype=complex), np.zeros(shunt_bus.size, dtype=bool), source_bus,
                         device_branch, np.ones(device_branch.size))
