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

import itertools
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from .network import admittance_matrix, base_current_ka
from .network_factors import PartsLU, factorised, solve_each
from .network_fills import StateFills
from .network_forest import ForestQueries, SpanningForest, spanning_forest
from .network_tiles import TiledTopology, Tiling

__all__ = ["NetworkStates", "SpanningForest", "StageFaults", "StateKey", "Tiling"]

#: Fault columns solved together [-].
BLOCK_COLUMNS = 128
#: Values of the base-state fault columns kept for reuse by later stages of the same arcs (32 MB; the oldest
#: columns go first) [-].
BASE_COLUMN_VALUES_KEPT = 2_000_000
#: Branches of smaller impedance (closed switches, 1e-6 pu) are not removed by a low-rank
#: update: the update's small matrix would lose most of its digits; the state is factorised [pu].
LOW_RANK_MIN_Z_PU = 1e-4


class StateKey(NamedTuple):
    """A network state: opened branches, motors ended, line-side split.

    ``split`` is ``(bus, branches)``: those branches' ends at ``bus`` are moved
    to a new node (the line side of a device that does not clear an arc at
    ``bus``), and a fault at ``bus`` is placed on that new node.

    A named tuple (immutable, hashed and compared as a tuple): staged clearing makes and looks up one for
    every stage of every arc.
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


class NetworkStates(StateFills, ForestQueries):
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

    _BASE = StateKey()  # the base state: every branch closed, motors contributing, no split
    low_rank_min_z_pu = LOW_RANK_MIN_Z_PU

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
        values up to :data:`BASE_COLUMN_VALUES_KEPT` kept) [pu]."""
        def fill(rhs, missing, local):
            rhs[local[missing], np.arange(len(missing))] = 1.0

        cache = self._states.setdefault("base_columns", {})
        before = len(cache)
        columns = self._cached_columns("base_columns", col.tolist(), lambda c: c, fill)
        added = itertools.islice(reversed(cache.values()), len(cache) - before)  # the columns solved now
        kept = self._states.get("base_column_values", 0) + sum(c.size for c in added)
        while kept > BASE_COLUMN_VALUES_KEPT and len(cache) > 1:  # the oldest first
            kept -= cache.pop(next(iter(cache))).size
        self._states["base_column_values"] = kept
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
