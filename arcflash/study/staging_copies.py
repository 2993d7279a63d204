"""Staged clearing of the copies of a stacked site together (an uncertainty run's chunk, :mod:`.stacking`).

In a stacked site every copy has the same arcs: the arc at one bus of the base site, in one arcing case, is
met once per copy. Its copies differ in their numbers (currents, trip times), and mostly not in what happens
to them: the same devices are followed, trip and open in the same stages, the network goes through the same
states. Such copies — a *cohort* — are followed here together: one state (in the base network's numbers,
:mod:`arcflash.models.network_tiles`) and one set of followed devices for all, each copy's numbers in arrays
with one row per copy, the network solved for all copies at once
(:meth:`~arcflash.models.network_stages.NetworkStates.solve_copies`).

Every copy's numbers come from the arithmetic :func:`.staging.follow_arcs` gives it alone, operation for
operation (tested bit for bit). A copy that parts from its cohort — it follows, trips or opens another
device, its arc is capped or not tripped, or it reaches a state the solve for all copies does not take (a
line-side split, several branches to remove) — is left to :func:`.staging.follow_arcs`' own engine, from its
start: its result is then that engine's, as for any arc.
"""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np

from ..models.network_stages import StateKey
from .staging import (CHUNK_ARCS, MAX_STAGES, SIMULTANEOUS_S, StagedArc, _after_openings, _follow_chunk,
                      _governing, _progressed)

__all__ = ["CopyArc", "follow_copies"]

#: Copies that part from their cohort together start again as a cohort of their own when at least this many;
#: fewer are followed alone (a cohort's stage costs some array operations whatever its size) [-].
COHORT_MIN = 8


def follow_copies(context, buses, named, reduced):
    """:func:`.staging.follow_arcs` of a stacked site's arcs (``context.states`` tiled): the same list of
    :class:`~.staging.StagedArc`, each copy's arc followed with its cohort where it keeps to it (see the
    module docstring)."""
    tiles = context.states._tiles
    buses = np.asarray(buses, dtype=np.intp)
    copy = buses // tiles.n0
    results = [None] * buses.size
    alone = []  # positions followed by follow_arcs' own engine
    cohorts = {}
    for k, (bus, case) in enumerate(zip((buses - copy * tiles.n0).tolist(), np.asarray(reduced).tolist())):
        cohorts.setdefault((bus, bool(case)), []).append(k)
    active = [_Cohort(context, bus, case, np.array(members, dtype=np.intp), copy[members])
              for (bus, case), members in cohorts.items()]
    while active:  # a round: one stage of every cohort, their arcing currents found together
        solved = [(cohort, cohort.solve()) for cohort in active]
        solved = [(cohort, found) for cohort, found in solved if found is not None]
        if solved:
            bus = np.concatenate([cohort.stacked_bus for cohort, _ in solved])
            bolted = np.concatenate([found[0] for _, found in solved])
            case = np.concatenate([np.full(cohort.copy.size, cohort.reduced) for cohort, _ in solved])
            arcing, code = context.arcing(bus, bolted, case)
            start = 0
            for cohort, (bolted, current) in solved:
                part = slice(start, start + cohort.copy.size)
                cohort.advance(bolted, current, arcing[part], code[part])
                start = part.stop
        following = []
        for cohort in active:
            for k, arc in cohort.finished:
                arc.named = int(named[k])
                results[k] = arc
            cohort.finished = []
            for group in cohort.left:
                alone.extend(group)
            cohort.left = []
            following.extend(_Cohort(context, cohort.bus, cohort.reduced, np.array(group, dtype=np.intp),
                                     copy[group]) for group in cohort.again)
            cohort.again = []
            if cohort.copy.size:
                following.append(cohort)
        active = following
    if alone:
        alone.sort()
        arcs = [StagedArc(int(buses[k]), reduced=bool(reduced[k]), named=int(named[k])) for k in alone]
        for lo in range(0, len(arcs), CHUNK_ARCS):
            _follow_chunk(context, arcs[lo:lo + CHUNK_ARCS])
        for k, arc in zip(alone, arcs):
            results[k] = arc
    return results


def _rows(pattern):
    """The distinct rows of a boolean matrix, each row's number among them, and their counts."""
    if not pattern.shape[1] or (pattern == pattern[0]).all():
        return pattern[:1], np.zeros(pattern.shape[0], dtype=np.intp), np.array([pattern.shape[0]])
    code = np.packbits(pattern, axis=1)  # one row of bytes per row
    _, first, inverse, counts = np.unique(code.view(np.dtype((np.void, code.shape[1]))).ravel(), return_index=True,
                                          return_inverse=True, return_counts=True)
    return pattern[first], inverse.ravel(), counts


class _Cohort:
    """The copies of one arc (bus ``bus`` of the base network, the ``reduced`` case) followed together."""

    def __init__(self, context, bus, reduced, positions, copies):
        states = context.states
        self.context, self.tiles = context, states._tiles
        self.bus, self.reduced = bus, reduced
        self.position, self.copy = positions, copies
        self.finished, self.left, self.again = [], [], []  # lists of positions: followed alone, or anew
        self.rounds = 0
        d0, n0 = self.tiles.d0, self.tiles.n0
        self.device = copies[:, None] * d0 + np.arange(d0)[None, :]  # each copy's devices
        self.stacked_bus = copies * n0 + bus
        self.key = StateKey()
        self.time = np.zeros(copies.size)
        self.pending = {}  # device (base number) -> opening time of each copy [s]
        self.opened = set()
        self.held = np.zeros(0, dtype=np.intp)
        self.held_progress = np.zeros((copies.size, 0, context.bank.element_count))
        self.history = []  # (dt of each copy [s], device currents of each copy [A])
        self.stages = []  # (start, end, bolted, arcing, range code), one value per copy each
        self.steps = []  # [device, opening time, arcing before, after, bolted before, after]
        # the devices that do not clear this bus's arc, and those on its line side: every copy's are the base
        # site's (stack_tiling), checked by their number
        sets, sides = (self._base_set(context.excluded, 0), self._base_set(context.line_side, 0)) if copies.size \
            else (set(), set())
        self.usable = all(len(context.excluded.get(b, ())) == len(sets) and len(context.line_side.get(b, ())) ==
                          len(sides) for b in self.stacked_bus.tolist())
        self.never = np.array(sorted(sets - sides), dtype=np.intp)
        # staging's own state changes and governing rule, read in the base network (the cohort stands for
        # the arc: its ``bus`` and ``key`` are the base network's)
        self._base_context = SimpleNamespace(states=self.tiles.base, device_branch=self.tiles.base.device_branch,
                                             line_side={bus: sides})

    def _base_set(self, sets, k):
        found = sets.get(int(self.stacked_bus[k]), set())
        return {d - int(self.copy[k]) * self.tiles.d0 for d in found}

    def solve(self):
        """The faults of this stage of every copy: (bolted current [kA], device currents [kA]), or None where
        the copies are followed alone (a state solved otherwise, more stages than MAX_STAGES)."""
        self.rounds += 1
        if not self.usable or self.context.motor_end_s is not None or self.rounds > MAX_STAGES + 1:
            self._leave(np.ones(self.copy.size, dtype=bool))  # not taken together here: followed alone
            return None
        solved = self.context.states.solve_copies(self.key, self.bus, self.copy)
        if solved is None:
            self._leave(np.ones(self.copy.size, dtype=bool))
        return solved

    def _leave(self, mask):
        """Copies ``mask`` part from the cohort: followed alone, from their start."""
        if not mask.any():
            return
        self.left.append(self.position[mask].tolist())
        self._keep(~mask)

    def _keep(self, mask):
        self.position, self.copy, self.device = self.position[mask], self.copy[mask], self.device[mask]
        self.stacked_bus, self.time = self.stacked_bus[mask], self.time[mask]
        self.pending = {d: t[mask] for d, t in self.pending.items()}
        self.held_progress = self.held_progress[mask]
        self.history = [(dt[mask], a[mask]) for dt, a in self.history]
        self.stages = [tuple(v[mask] for v in stage) for stage in self.stages]
        self.steps = [[s[0]] + [v if v is None or isinstance(v, float) else v[mask] for v in s[1:]]
                      for s in self.steps]

    def advance(self, bolted, current, arcing, code):
        """One stage of every copy, its faults solved (:meth:`solve`) and its arcing currents and range codes
        given (a round of ``staging._follow_local`` and ``staging._advance``, the same operations on rows of
        copies); copies that part from the cohort are left on the way."""
        context, tiles = self.context, self.tiles
        m = self.copy.size
        ratio = np.divide(arcing, bolted, out=np.zeros(m), where=bolted > 0)
        device_a = current * (ratio * 1000.0)[:, None]
        # the devices followed (staging._devices): the same for every copy kept
        hot = device_a >= context.hot_a[self.device]
        gone = list(self.pending) + list(self.opened)
        if gone:
            hot[:, gone] = False
        if self.never.size:
            hot[:, self.never] = False
        hot[:, self.held] = True
        # Every copy follows the devices any copy follows: a device a copy would not follow yet (its current
        # below the level at which it clears within the cap, staging._devices) cannot open before the cap
        # there, and the progress it gathers is what staging._progress would replay once it is followed.
        followed = np.flatnonzero(hot.any(axis=0))
        device = self.device[:, followed]
        times, reset, breaker = context.bank.elements(device.ravel(), device_a[:, followed].ravel())
        shape = (m, followed.size, times.shape[1])
        times, reset, breaker = times.reshape(shape), reset.reshape(shape), breaker.reshape(m, followed.size)
        progress = np.zeros(shape)
        fresh = np.ones(followed.size, dtype=bool)
        if self.held.size:
            at = np.searchsorted(followed, self.held)
            progress[:, at] = self.held_progress
            fresh[at] = False
        if self.history and fresh.any():  # followed from now on: progress replayed (staging._progress)
            replayed = np.zeros((m, int(fresh.sum()), shape[2]))
            for dt, past in self.history:
                t, r, _ = context.bank.elements(device[:, fresh].ravel(), past[:, followed[fresh]].ravel())
                replayed = _progressed(replayed, t.reshape(replayed.shape), r.reshape(replayed.shape),
                                       dt[:, None, None])
            progress[:, fresh] = replayed
        with np.errstate(invalid="ignore"):
            remaining = np.where(np.isfinite(times), (1.0 - progress) * times, np.inf)
        trip_in = remaining.min(axis=2) if followed.size else np.zeros((m, 0))
        open_at = self.time[:, None] + trip_in + breaker
        next_time = open_at.min(axis=1) if followed.size else np.full(m, np.inf)
        for at in self.pending.values():
            next_time = np.minimum(next_time, at)
        cap = context.cap_s
        end = next_time if cap is None else np.where(next_time > cap, cap, next_time)
        # an arc capped or not tripped (or a time that is not a number): followed alone (staging._advance's ends)
        with np.errstate(invalid="ignore"):
            apart = ~(np.isfinite(end) & (end >= next_time))
        ok, _, kept = self._agree(None, apart, (bolted, arcing, code, device_a, times, reset, progress, trip_in,
                                                open_at, end))
        if not ok:
            return
        bolted, arcing, code, device_a, times, reset, progress, trip_in, open_at, end = kept
        for step in self.steps:  # the arcing current after an opening: that of the next stage
            if step[3] is None:
                step[3], step[5] = arcing, bolted
        self.stages.append((self.time, end, bolted, arcing, code))
        dt = end - self.time
        updated = _progressed(progress, times, reset, dt[:, None, None])
        tripped = trip_in <= (dt + SIMULTANEOUS_S)[:, None]
        ok, row, (end, dt, open_at, updated, device_a) = self._agree(tripped, None,
                                                                      (end, dt, open_at, updated, device_a))
        if not ok:
            return
        tripped = row
        for j in np.flatnonzero(tripped).tolist():
            self.pending[int(followed[j])] = open_at[:, j]
        self.time = end
        waiting = sorted(self.pending)
        due = np.zeros((end.size, len(waiting)), dtype=bool)
        for j, d in enumerate(waiting):
            due[:, j] = self.pending[d] <= end + SIMULTANEOUS_S
        ok, row, (end, dt, updated, device_a) = self._agree(due, None, (end, dt, updated, device_a))
        if not ok:
            return
        now = [d for d, due_now in zip(waiting, row.tolist()) if due_now]
        for d in now:
            del self.pending[d]
        self.opened.update(now)
        self.key = self._after(self.key, now)
        for d in now:
            self.steps.append([d, end, self.stages[-1][3], None, self.stages[-1][2], None])
        if not tiles.base.reaches_source(self.key, self.bus):
            for step in self.steps:
                if step[3] is None:
                    step[3], step[5] = 0.0, 0.0
            self._finish(end, self._governing(now))
            return
        # held where any copy holds progress (a copy with none there: its zeros, what a replay would give)
        row = ~tripped & updated.any(axis=2).any(axis=0)
        self.held, self.held_progress = followed[row], updated[:, row]
        self.history.append((dt, device_a))

    def _agree(self, pattern, apart, arrays):
        """Keep the copies not ``apart`` (those are followed alone) whose ``pattern`` row (if given) is the most
        frequent among them; the copies of each other row start again as a cohort of their own (followed
        alone if fewer than :data:`COHORT_MIN`). Returns (whether any copy is kept, that row, ``arrays`` — one
        row per copy each — for the copies kept)."""
        keep = np.ones(self.copy.size, dtype=bool) if apart is None else ~apart
        row = None
        if pattern is not None and keep.any():
            rows, inverse, counts = _rows(pattern[keep])
            most = int(np.argmax(counts))
            row = rows[most]
            if rows.shape[0] > 1:
                among = np.flatnonzero(keep)
                for other in range(rows.shape[0]):
                    if other != most:
                        group = self.position[among[inverse == other]].tolist()
                        (self.again if len(group) >= COHORT_MIN else self.left).append(group)
                keep[among[inverse != most]] = False
        elif pattern is not None:
            row = pattern[0] if pattern.shape[0] else None
        kept = tuple(a[keep] for a in arrays)
        if apart is not None and apart.any():
            self.left.append(self.position[apart].tolist())
        self._keep(keep)
        return bool(keep.any()), row, kept

    def _after(self, key, devices):
        """The state after ``devices`` (base numbers) open: ``staging._after_openings`` in the base network."""
        return _after_openings(self._base_context, self, key, devices, False)

    def _governing(self, devices):
        """Of the devices opening at the arc's end, the one that governs: ``staging._governing`` in the base
        network."""
        return _governing(self._base_context, self, devices)

    def _finish(self, end, governing):
        """Every copy's arc ends at ``end`` [s], ``governing`` (base number) its device."""
        d0 = self.tiles.d0
        stages = list(zip(*(zip(*(v.tolist() for v in stage)) for stage in self.stages)))  # per copy
        steps = [[s[0]] + [v if isinstance(v, float) else v.tolist() for v in s[1:]] for s in self.steps]
        for i, (k, copy, bus, ended) in enumerate(zip(self.position.tolist(), self.copy.tolist(),
                                                      self.stacked_bus.tolist(), end.tolist())):
            self.finished.append((k, CopyArc(bus, self.reduced, list(stages[i]), ended, copy * d0 + governing,
                                             (steps, i, copy * d0))))
        self.position = self.position[:0]
        self.copy = self.copy[:0]


class CopyArc:
    """An arc followed with its cohort: what :class:`~.staging.StagedArc` reports of an arc that ended when
    its last device opened (no cap, a trip): ``bus``, ``reduced``, ``named``, ``stages``, ``duration_s``,
    ``governing``, ``no_trip`` and ``capped`` (False), ``steps`` (made when first read)."""

    __slots__ = ("bus", "reduced", "named", "stages", "duration_s", "governing", "_steps")
    no_trip = capped = False
    done = True

    def __init__(self, bus, reduced, stages, duration_s, governing, steps):
        self.bus, self.reduced, self.named, self.stages = bus, reduced, -1, stages
        self.duration_s, self.governing, self._steps = duration_s, governing, steps

    @property
    def steps(self):
        """[device, opening time [s], arcing current before and after [kA], bolted before and after [kA]]."""
        steps, i, shift = self._steps
        return [[shift + s[0]] + [v if isinstance(v, float) else v[i] for v in s[1:]] for s in steps]
