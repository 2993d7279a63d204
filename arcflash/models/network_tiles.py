"""A network made of copies of one base network: its states' topology read from the base network.

An uncertainty run studies many variants of one site at once, each a copy in one stacked network: the
copies' impedances differ, their branches and buses are joined alike (the copies never meet). What a state
leaves connected — which buses a source still reaches, which devices carry a fault's current, which
opened branches a low-rank update may remove — depends on the branches' ends alone, so a state of one copy
is answered by the same state of the base network, found once for every copy that reaches it (the copies of
one arc mostly reach the same states): the work no longer grows with the number of copies.

Pure: numpy only, no I/O.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Tiling", "TiledTopology"]


@dataclass(frozen=True)
class Tiling:
    """How a stacked network repeats its base network.

    Attributes
    ----------
    copies : int
        Number of copies [-]
    bus_count : int
        Buses of one copy: copy c's bus k is bus ``c * bus_count + k`` [-]
    branch_start : numpy.ndarray of int
        Per base branch: its index in the stacked network for copy 0 [-]
    branch_step : numpy.ndarray of int
        Per base branch: the step between its copies' indices [-]
    device_count : int
        Devices of one copy: copy c's device j is device ``c * device_count + j`` [-]
    """

    copies: int
    bus_count: int
    branch_start: np.ndarray
    branch_step: np.ndarray
    device_count: int


class TiledTopology:
    """The topology of the states of a stacked network (``states``, a
    :class:`~arcflash.models.network_stages.NetworkStates`), read from its base network (``base``: the
    same class over copy 0's branch ends, sources and shunts). Checks that the stacked network does repeat
    its base as ``tiling`` says (a ValueError otherwise)."""

    def __init__(self, states, tiling, base_factory):
        n0, copies = int(tiling.bus_count), int(tiling.copies)
        start = np.asarray(tiling.branch_start, dtype=np.intp)
        step = np.asarray(tiling.branch_step, dtype=np.intp)
        self.n0, self.d0, self.copies = n0, int(tiling.device_count), copies
        copy = np.arange(copies, dtype=np.intp)[:, None]
        where = start[None, :] + copy * step[None, :]  # (copies, base branches)
        m = states.branch_from.size
        if states.n != n0 * copies or where.size != m or np.unique(where).size != m:
            raise ValueError("the tiling does not cover the stacked network's buses and branches once each")
        f0, t0 = states.branch_from[start], states.branch_to[start]
        shift = copy * n0
        if ((f0 >= n0) | (t0 >= n0)).any() or not (
                np.array_equal(states.branch_from[where], f0[None, :] + shift)
                and np.array_equal(states.branch_to[where], t0[None, :] + shift)):
            raise ValueError("the stacked network's copies are not joined as its base network")
        for nodes in (states.shunt_bus, states.source_bus):
            counts = np.bincount(nodes, minlength=states.n).reshape(copies, n0)
            if not (counts == counts[:1]).all():
                raise ValueError("the stacked network's copies do not hold the same shunts and sources")
        devices = states.device_branch.reshape(copies, self.d0) if self.d0 else np.zeros((copies, 0), np.intp)
        if states.device_branch.size != copies * self.d0:
            raise ValueError("the tiling does not cover the stacked network's devices")
        self.branch_copy = np.empty(m, dtype=np.intp)
        self.branch_base = np.empty(m, dtype=np.intp)
        self.branch_copy[where] = copy
        self.branch_base[where] = np.arange(start.size)[None, :]
        device_base = self.branch_base[devices[0]] if self.d0 else np.zeros(0, dtype=np.intp)
        if not np.array_equal(devices, where[:, device_base]):
            raise ValueError("the stacked network's copies do not hold the same devices")
        self.start, self.step = start, step
        self._copy_of_branch = self.branch_copy.tolist()
        self._base_of_branch = self.branch_base.tolist()
        in_copy0 = states.shunt_bus < n0
        self.base = base_factory(n0, f0, t0, states.shunt_bus[in_copy0], states.source_bus[states.source_bus < n0],
                                 device_base)
        self._keys, self._reaches, self._plans, self._carrying = {}, {}, {}, {}
        self.low_rank_min_z_pu = states.low_rank_min_z_pu

    def base_key(self, key, copy):
        """The base network's state of ``key`` in copy ``copy``, or None where ``key`` opens or splits a branch
        of another copy."""
        found = self._keys.get((key, copy))
        if found is None and (key, copy) not in self._keys:
            found = self._keys[(key, copy)] = self._translated(key, copy)
        return found

    def _translated(self, key, copy):
        of, base = self._copy_of_branch, self._base_of_branch
        if any(of[b] != copy for b in key.opened):
            return None
        split = None
        if key.split is not None:
            bus, branches = key.split
            if bus // self.n0 != copy or any(of[b] != copy for b in branches):
                return None
            split = (bus - copy * self.n0, frozenset(base[b] for b in branches))
        return type(key)(frozenset(base[b] for b in key.opened), key.motors_off, split)

    def reaches_source(self, key, bus):
        """Whether a source still reaches ``bus`` in state ``key`` (None: not answered here) [-]."""
        copy = bus // self.n0
        base_key = self.base_key(key, copy)
        if base_key is None:
            return None
        at = (base_key, bus - copy * self.n0)
        found = self._reaches.get(at)
        if found is None:
            found = self._reaches[at] = self.base.reaches_source(base_key, at[1])
        return found

    def plan(self, key):
        """The opened branches a low-rank update removes to reach ``key`` (a state without split or ended
        motors), in the stacked network's numbers, before the check of their impedances; None where the
        state must be factorised; False: not answered here (``key`` opens branches of several copies)."""
        if not key.opened:
            return False
        copy = self._copy_of_branch[next(iter(key.opened))]
        base_key = self.base_key(key, copy)
        if base_key is None:
            return False
        applied = self.base_plan(base_key)
        if applied is None:
            return None
        return [int(self.start[b] + copy * self.step[b]) for b in applied]

    def base_plan(self, base_key):
        """The opened branches of the base network's state ``base_key`` (no split, motors contributing) a
        low-rank update removes, in the base network's numbers (remembered), before the check of their
        impedances; None where the state must be factorised."""
        if base_key not in self._plans:
            self._plans[base_key] = self.base._plan_topology(base_key)
        return self._plans[base_key]

    def part_at(self, key, point):
        """(whether a source reaches ``point``, its part: a hashable token) in state ``key`` (no split), or
        None where not answered here [-]."""
        copy = point // self.n0
        base_key = self.base_key(key, copy)
        if base_key is None or base_key.split is not None:
            return None
        _, _, _, energized, label = self.base._topology(base_key)
        local = point - copy * self.n0
        return bool(energized[local]), (copy, int(label[local]))

    def carrying(self, key, part, position):
        """Positions of the devices closed, energised and in ``part`` (a token of :meth:`part_at`) in state
        ``key`` — those that may carry a fault's current there — in ascending order, ``position`` giving each
        device's position (-1: not wanted) [-]."""
        copy, label_number = part
        wanted = position[self.base_carrying(self.base_key(key, copy), label_number) + copy * self.d0]
        return np.sort(wanted[wanted >= 0])

    def base_carrying(self, base_key, label_number):
        """The base network's devices closed, energised and in the part ``label_number`` of its state
        ``base_key`` (remembered) [-]."""
        at = (base_key, label_number)
        found = self._carrying.get(at)
        if found is None:
            f, _, closed, energized, label = self.base._topology(base_key)
            b = self.base.device_branch
            found = self._carrying[at] = np.flatnonzero(closed[b] & (label[f[b]] == label_number) & energized[f[b]])
        return found
