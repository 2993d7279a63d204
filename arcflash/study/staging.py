"""Staged clearing: follow an arcing fault as devices open, stage by stage.

Where more than one device can act on an arc before it ends — a bus fed
over more than one path, a device that opens before the one that ends the
arc — the arc is followed in time (the conventions below are stated with
their sources in ``docs/protection.md``):

- Stage s: the network in its present state (devices opened so far
  removed, :mod:`arcflash.models.network_stages`) gives the bolted current
  at the faulted bus, the arcing current from it (IEEE 1584-2018, the same
  equipment; full or reduced case), and every device's current: its share
  of the bolted current times I_arc/I_bf, in its own kV.
- Each element of each device accumulates trip progress ∫ dt / t(I(t)) (the
  integral form of the inverse-time characteristic, IEEE C37.112). An
  element below its pickup resets: an IEEE C37.112 inverse-time element by
  its reset characteristic, every other element at once.
- The element whose progress reaches 1 first trips its device; the branch
  opens after the breaker opening time (0 for digitised total-clearing
  curves). A device that has tripped opens even if its current falls.
- After each opening the network is solved again; the arc ends when no
  source reaches the faulted point. The device whose opening left no
  source connected governs. The arc-duration cap ends it otherwise.
- Motor contributions may end after a stated time (site option); by default
  they last the whole arc.
- A device listed in the bus's ``arc_not_cleared_by`` that stands at the
  bus (its ``at_bus``) has the arc on its line side: its opening separates
  the bus (its motors, ties) from the arc, which stays fed through the
  device's branch. A listed device standing elsewhere never opens for that
  bus's arc (the arc stays fed through it: the longer, conservative arc).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field

import numpy as np

from ..models import ieee1584
from ..models.network_stages import NetworkStates, StateKey
from .remembered import site_memory

#: Two openings closer than this are simultaneous [s].
SIMULTANEOUS_S = 1e-9
#: Most openings followed for one arc [-].
MAX_STAGES = 64
#: Arcs solved together (memory: two arrays of this many rows by the devices of their network parts) [-].
CHUNK_ARCS = 128


#: Shared defaults of a new arc (read-only; an arc replaces them, never changes them in place).
BASE_STATE = StateKey()
NO_DEVICES = np.zeros(0, dtype=np.intp)
NO_PROGRESS = np.zeros((0, 1))
NO_DEVICES.flags.writeable = False
NO_PROGRESS.flags.writeable = False


@dataclass
class StagedArc:
    """One arc (bus, arcing case) followed stage by stage.

    ``stages`` rows: (start [s], end [s], bolted [kA], arcing [kA], range
    code); ``steps`` rows: (device index, opening time [s], arcing current
    at the bus before and after [kA], bolted before and after [kA]).
    """

    bus: int
    reduced: bool = False
    variant: int = 0  # which of a variant bank's device sets the arc sees (StagingContext.bank)
    key: StateKey = BASE_STATE
    time_s: float = 0.0
    held_device: np.ndarray = field(default_factory=lambda: NO_DEVICES)  # replaced, never changed in place
    held_progress: np.ndarray = field(default_factory=lambda: NO_PROGRESS)
    history: list = field(default_factory=list)
    opened: set = field(default_factory=set)
    opening: dict = field(default_factory=dict)
    stages: list = field(default_factory=list)
    steps: list = field(default_factory=list)
    done: bool = False
    duration_s: float = np.inf
    governing: int = -1
    named: int = -1
    no_trip: bool = False
    capped: bool = False


@dataclass(frozen=True)
class StagingContext:
    """What the staged clearing of one scenario needs.

    Attributes
    ----------
    states : NetworkStates
        The scenario's network, solvable in any state.
    bank : DeviceBank
        Clearing-time elements of every device; or a bank of several variants of the devices
        (:class:`~arcflash.study.setting_variants.VariantBank`), each arc reading its own (``StagedArc.variant``:
        ``elements`` takes the variant of each pair, ``threshold_a`` gives one row per variant).
    device_branch : numpy.ndarray of int
        Branch of each device [-]
    arcing : callable
        ``arcing(bus_indices, bolted_ka, reduced)`` -> (arcing current [kA],
        range code); ``reduced`` (bool per fault) asks for the reduced
        arcing current.
    excluded : dict
        Bus index -> set of device indices in its ``arc_not_cleared_by``.
    line_side : dict
        Bus index -> those of them that stand at the bus (``at_bus``): the
        arc is on their line side.
    hot_a : numpy.ndarray
        Per device, a current below which it does not clear within the cap
        (a lower bound; without a cap, below which none of its elements
        operates); one row per variant with a variant bank [A]
    cap_s : float or None
        Arc-duration cap [s]
    motor_end_s : float or None
        Time after which motor contributions end; None: never [s]
    carrying : callable, optional
        ``carrying(bus_indices)``: a mask of the devices that may carry
        current for a fault at any of the buses, in any state (the others
        carry none); every device when None [-]
    """

    states: object
    bank: object
    device_branch: np.ndarray
    arcing: object
    excluded: dict
    line_side: dict
    hot_a: np.ndarray
    cap_s: float | None
    motor_end_s: float | None
    carrying: object = None


def follow_arcs(context, buses, named=None, reduced=None, variants=None):
    """Follow the arcs at ``buses`` (bus indices) until each ends; see the module docstring.

    ``reduced`` (bool per arc) marks the arcs of the reduced-arcing-current
    case; both cases of a bus are best given next to each other (they share
    the bus's fault columns).

    ``named`` (device index per bus, -1 for none) is the device that ends
    each arc by the one-stage reading at the currents of its inception; an
    arc that reaches the duration cap names it as its governing device,
    unless it opened before the cap (then the device that would open next
    is named). ``variants`` (per arc) is the variant of the devices each arc sees, with a variant bank.

    Arcs are taken in chunks of :data:`CHUNK_ARCS`; the arcs of a chunk
    advance together, one stage per round: one network solve and one curve
    evaluation per round.

    Returns
    -------
    list of StagedArc
    """
    named = np.full(len(buses), -1) if named is None else named
    reduced = np.zeros(len(buses), dtype=bool) if reduced is None else reduced
    variants = np.zeros(len(buses), dtype=np.intp) if variants is None else np.asarray(variants, dtype=np.intp)
    if getattr(context.states, "_tiles", None) is not None:  # a stacked site: each arc's copies together
        from .staging_copies import follow_copies

        if not variants.any():
            if getattr(context.bank, "variants", None) is not None:  # variant 0 of a variant bank: as set
                context = dataclasses.replace(context, bank=context.bank.base, hot_a=context.hot_a[0])
            return follow_copies(context, buses, named, reduced)
        # arcs in a variant of the devices (zone settings) are followed alone, the others with their copies
        buses = np.asarray(buses)
        alone = np.flatnonzero(variants != 0)
        together = np.flatnonzero(variants == 0)
        found = [None] * len(buses)
        own = dataclasses.replace(context, bank=context.bank.base, hot_a=context.hot_a[0])  # variant 0: as set
        for j, arc in zip(together.tolist(), follow_copies(own, buses[together], named[together],
                                                           reduced[together])):
            found[j] = arc
        arcs = [StagedArc(int(buses[j]), reduced=bool(reduced[j]), named=int(named[j]), variant=int(variants[j]))
                for j in alone.tolist()]
        for lo in range(0, len(arcs), CHUNK_ARCS):
            _follow_chunk(context, arcs[lo:lo + CHUNK_ARCS])
        for j, arc in zip(alone.tolist(), arcs):
            found[j] = arc
        return found
    arcs = [StagedArc(int(k), reduced=bool(r), named=int(d), variant=int(v))
            for k, d, r, v in zip(buses, named, reduced, variants)]
    for lo in range(0, len(arcs), CHUNK_ARCS):  # a chunk at a time: trip progress is held for few arcs
        _follow_chunk(context, arcs[lo:lo + CHUNK_ARCS])
    return arcs


class _DevicesOf:
    """The devices of the network parts a chunk's arcs are in, numbered 0, 1, ... (``subset``: their
    indices in the whole network): a solve reports only their currents, the bank is read through them.
    A device of another part carries no current in any state of these arcs (opening branches and
    splitting a bus never join parts), so it never operates and leaving it out changes nothing."""

    def __init__(self, states, bank, subset):
        self.states, self.bank, self.subset = states, bank, subset
        self.branch_from, self.branch_to = states.branch_from, states.branch_to
        self.element_count = bank.element_count
        self.variants = getattr(bank, "variants", None)

    def solve_pairs(self, keys, fault_bus):
        return self.states.solve_pairs(keys, fault_bus, devices=self.subset)

    def reaches_source(self, key, bus):
        return self.states.reaches_source(key, bus)

    def hops_from(self, bus):
        return self.states.hops_from(bus)

    def elements(self, device, current_a, variants=None):
        return _elements(self.bank, self.subset[device], current_a, variants)

    def threshold_a(self, within_s):
        return self.bank.threshold_a(within_s)[..., self.subset]


def _local(context, chunk):
    """``context`` with only the devices of the parts the arcs of ``chunk`` are in (:class:`_DevicesOf`),
    and those devices' indices in the whole network; ``context`` itself where that is every device."""
    states = context.states
    device_part = states.part_of_node()[states.branch_from[context.device_branch]]
    buses = [arc.bus for arc in chunk]
    mine = np.isin(device_part, states.part_of_node()[buses])
    if context.carrying is not None:  # a device that carries no current never operates: left out too
        mine &= context.carrying(buses)
    mine[[arc.named for arc in chunk if arc.named >= 0]] = True  # each arc's own numbers, whatever its part
    subset = np.flatnonzero(mine)
    if subset.size == device_part.size:
        return context, None
    local = np.full(device_part.size, -1, dtype=np.intp)
    local[subset] = np.arange(subset.size)
    view = _DevicesOf(states, context.bank, subset)
    buses = {arc.bus for arc in chunk}

    def renumbered(sets):
        return {bus: {int(local[d]) for d in devices if local[d] >= 0} for bus, devices in sets.items() if bus in buses}

    return dataclasses.replace(context, states=view, bank=view, device_branch=context.device_branch[subset],
                               hot_a=context.hot_a[..., subset],
                               excluded=renumbered(context.excluded), line_side=renumbered(context.line_side)), local


def _follow_chunk(context, chunk):
    """Advance the arcs of ``chunk`` together, one stage per round, until each ends (in the numbering of the
    devices of their own parts, see :func:`_local`; the arcs report the whole network's numbers)."""
    context, local = _local(context, chunk)
    if local is None:
        _follow_local(context, chunk)
        return
    for arc in chunk:
        arc.named = int(local[arc.named]) if arc.named >= 0 else -1
    _follow_local(context, chunk)
    subset = context.states.subset
    for arc in chunk:
        arc.named = int(subset[arc.named]) if arc.named >= 0 else -1
        arc.governing = int(subset[arc.governing]) if arc.governing >= 0 else -1
        for step in arc.steps:
            step[0] = int(subset[step[0]])
        arc.opened = {int(subset[d]) for d in arc.opened}
        arc.opening = {int(subset[d]): at for d, at in arc.opening.items()}


def _follow_local(context, chunk):
    """Advance the arcs of ``chunk`` together, one stage per round, until each ends."""
    active = list(chunk)
    for _ in range(MAX_STAGES + 1):
        if not active:
            break
        at = np.array([a.bus for a in active], dtype=np.intp)
        solved = context.states.solve_pairs([a.key for a in active], at)
        arcing_ka, code = context.arcing(at, solved.bolted_ka, np.array([a.reduced for a in active], dtype=bool))
        ratio = np.divide(arcing_ka, solved.bolted_ka, out=np.zeros(at.size), where=solved.bolted_ka > 0)
        device_a = solved.device_current_ka * (ratio * 1000.0)[:, None]
        rows, devices = _devices(context, active, device_a)
        sizes = np.bincount(rows, minlength=len(active))
        times, reset, breaker = _elements(context.bank, devices, device_a[rows, devices],
                                          np.array([a.variant for a in active], dtype=np.intp)[rows])
        bounds = np.concatenate(([0], np.cumsum(sizes)))
        chosen = [devices[bounds[j]:bounds[j + 1]] for j in range(len(active))]
        # Trip progress so far (zero for an arc with none held and no past stages), then the time each
        # followed device needs to trip, for every arc at once.
        progress = _progress(context, active, rows, devices, times.shape)
        with np.errstate(invalid="ignore"):
            remaining = np.where(np.isfinite(times), (1.0 - progress) * times, np.inf)
        trip_in = remaining.min(axis=1) if devices.size else np.zeros(0)
        open_at = np.repeat(np.array([a.time_s for a in active]), sizes) + trip_in + breaker
        first = np.full(len(active), np.inf)
        some = sizes > 0
        if some.any():
            first[some] = np.minimum.reduceat(open_at, bounds[:-1][some])
        ends = [_stage_end(context, arc, float(first[j])) for j, arc in enumerate(active)]
        # every followed device's progress at its stage's end, for every arc at once (read where the arc goes on)
        dt = np.array([end - arc.time_s if np.isfinite(end) else 0.0 for arc, (_, end, _) in zip(active, ends)])
        dt_rows = np.repeat(dt, sizes)
        updated = _progressed(progress, times, reset, dt_rows[:, None])
        # where each arc goes on: the devices that trip in this stage, and the progress held of the others
        tripped = trip_in <= dt_rows + SIMULTANEOUS_S
        held = np.flatnonzero(~tripped & updated.any(axis=1))
        held_bounds = np.searchsorted(held, bounds)
        held_device, held_progress = devices[held], updated[held]
        trips = np.flatnonzero(tripped)
        trip_bounds = np.searchsorted(trips, bounds).tolist()
        trips = list(zip(devices[trips].tolist(), open_at[trips].tolist()))
        for j, arc in enumerate(active):
            part = slice(bounds[j], bounds[j + 1])
            _advance(context, arc, solved.bolted_ka[j], arcing_ka[j], int(code[j]), chosen[j], device_a[j],
                     open_at[part], ends[j], trips[trip_bounds[j]:trip_bounds[j + 1]],
                     (held_device[held_bounds[j]:held_bounds[j + 1]], held_progress[held_bounds[j]:held_bounds[j + 1]]))
        for arc in active:
            if arc.done:  # its trip progress and history are no longer needed
                arc.held_device, arc.held_progress = NO_DEVICES, NO_PROGRESS
                arc.history = []
        active = [a for a in active if not a.done]
    for arc in active:  # more openings than MAX_STAGES: flagged; the rest of the arc at its largest current
        arc.done, arc.no_trip = True, True
        worst = max(arc.stages, key=lambda stage: stage[2])
        arc.duration_s = context.cap_s if context.cap_s is not None else np.inf
        arc.stages.append((arc.time_s, arc.duration_s, worst[2], worst[3], worst[4]))
        for step in arc.steps:
            if step[3] is None:
                step[3], step[5] = np.nan, np.nan


def _warm(context, arc, device_a):
    """Devices whose current reaches one of their elements' pickups, less those that have tripped and
    those that never open for this bus, as a mask [-] (the bank's lower bounds of the pickups, found when
    first needed: few arcs come here)."""
    warm = device_a >= _of_arc(context.bank.threshold_a(np.inf), arc)  # below: no element operates
    if arc.opening or arc.opened:  # tripped (opening pending) or opened: never again
        warm[list(arc.opening) + list(arc.opened)] = False
    excluded = context.excluded.get(arc.bus, set())
    if excluded:
        never = list(excluded - context.line_side.get(arc.bus, set()))
        warm[never] = False
    return warm


def _elements(bank, devices, current_a, variants):
    """``bank.elements`` of ``devices`` at ``current_a``; a variant bank's, each pair in its arc's variant."""
    if getattr(bank, "variants", None) is None:
        return bank.elements(devices, current_a)
    return bank.elements(devices, current_a, variants)


def _of_arc(per_device, arc):
    """A per-device array of the context, the arc's variant's row where it has one per variant."""
    return per_device if per_device.ndim == 1 else per_device[arc.variant]


def _devices(context, arcs, device_a):
    """Devices to follow in this stage, as (arc, device) pairs sorted by arc then device: those whose
    current could make them clear within the cap, and those already followed that still hold trip
    progress (``device_a``: one row of device currents per arc [A]).

    A device whose current has stayed below the smallest current at which it clears within the cap
    cannot open before the cap (each element's time then exceeds the cap less the opening time, so its
    progress cannot reach 1 in time): it is not followed until its current first reaches that level;
    then its progress so far is replayed from the arc's history (:func:`_replay`), so nothing is lost.
    """
    hot_a = context.hot_a if context.hot_a.ndim == 1 else context.hot_a[[arc.variant for arc in arcs]]
    hot = device_a >= hot_a  # below: it does not clear within the cap (nor operates without one)
    for j, arc in enumerate(arcs):
        if arc.opening or arc.opened:  # tripped (opening pending) or opened: never again
            hot[j, list(arc.opening) + list(arc.opened)] = False
        excluded = context.excluded.get(arc.bus, set())
        if excluded:
            hot[j, list(excluded - context.line_side.get(arc.bus, set()))] = False
        if arc.held_device.size:
            hot[j, arc.held_device] = True
    return np.nonzero(hot)


def _progressed(progress, times, reset, dt):
    """Trip progress after ``dt`` at constant current: rising at 1/t where an element operates, else
    resetting (at once where ``reset`` is 0, at 1/reset where finite, held where infinite)."""
    with np.errstate(invalid="ignore", divide="ignore"):
        rising = np.where(np.isfinite(times), progress + dt / times, 0.0)
        falling = np.where(reset > 0.0, np.maximum(progress - dt / reset, 0.0), 0.0)
    return np.where(np.isfinite(times), rising, np.where(np.isinf(reset), progress, falling))


def _replay(context, arc, devices):
    """Trip progress of ``devices`` at the arc's present time, from the currents of its past stages."""
    progress = np.zeros((devices.size, context.bank.element_count))
    for dt, device_a in arc.history:
        times, reset, _ = _elements(context.bank, devices, device_a[devices], np.full(devices.size, arc.variant))
        progress = _progressed(progress, times, reset, dt)
    return progress


def _progress(context, arcs, rows, devices, shape):
    """Trip progress of the followed devices (pairs ``rows``, ``devices``: arc, device, sorted by arc then
    device) at each arc's present time: held from the last stage (a device holding progress is always
    followed), or, for a device followed from now on, replayed from its arc's history (:func:`_replay`;
    here every such device of every arc at once, one past stage after another)."""
    progress = np.zeros(shape)
    new = np.ones(rows.size, dtype=bool)
    holding = [j for j, arc in enumerate(arcs) if arc.held_device.size]
    if holding:
        width = int(devices.max()) + 1
        at = np.searchsorted(rows * width + devices,
                             np.concatenate([j * width + arcs[j].held_device for j in holding]))
        progress[at] = np.concatenate([arcs[j].held_progress for j in holding])
        new[at] = False
    length = np.array([len(arc.history) for arc in arcs], dtype=np.intp)
    fresh = np.flatnonzero(new & (length[rows] > 0))  # followed from now on, in arcs with a history
    if fresh.size:
        owner = rows[fresh]
        replayed = np.zeros((fresh.size, shape[1]))
        for h in range(int(length[owner].max())):
            live = length[owner] > h
            at, mine = fresh[live], owner[live]
            past = np.unique(mine)
            dt = np.array([arcs[j].history[h][0] for j in past.tolist()])[np.searchsorted(past, mine)]
            currents = np.stack([arcs[j].history[h][1] for j in past.tolist()])  # one row per arc
            current = currents[np.searchsorted(past, mine), devices[at]]
            times, reset, _ = _elements(context.bank, devices[at], current,
                                        np.array([arcs[j].variant for j in mine.tolist()], dtype=np.intp))
            replayed[live] = _progressed(replayed[live], times, reset, dt[:, None])
        progress[fresh] = replayed
    return progress


def _stage_end(context, arc, first_s):
    """(next event, end of this stage, whether motor contributions end at it) of ``arc``, the first opening
    of its followed devices being at ``first_s``: the next opening (or the end of motor contributions),
    at most the cap [s]."""
    next_time = min([first_s] + list(arc.opening.values()))
    motors_end = (context.motor_end_s is not None and not arc.key.motors_off
                  and context.motor_end_s >= arc.time_s)
    if motors_end:
        next_time = min(next_time, context.motor_end_s)
    end = next_time
    if context.cap_s is not None and end > context.cap_s:
        end = context.cap_s
    return next_time, end, motors_end


def _advance(context, arc, bolted_ka, arcing_ka, code, devices, device_a, open_at, stage_end, trips, held):
    """One stage of ``arc``: from its present time to the next opening (or the end); ``open_at`` of the
    followed ``devices``, the stage's end (:func:`_stage_end`), the (device, opening time) of those that trip
    in the stage (``trips``) and the (devices, progress) of the others still holding progress at its end
    (``held``) are given."""
    if arc.steps and arc.steps[-1][3] is None:
        for step in arc.steps:
            if step[3] is None:
                step[3], step[5] = arcing_ka, bolted_ka
    next_time, end, motors_end = stage_end
    arc.stages.append((arc.time_s, end, bolted_ka, arcing_ka, code))
    if not np.isfinite(end) or end < next_time:  # nothing more opens, or the cap comes first
        arc.done, arc.duration_s = True, end
        arc.no_trip = not np.isfinite(next_time)
        arc.capped = np.isfinite(end) and end < next_time
        if arc.capped and arc.named >= 0 and arc.named not in arc.opened:
            arc.governing = arc.named  # the device that would end the arc at its inception currents
            arc.no_trip = False
        elif arc.capped:  # that device has opened: name the device that would open next
            arc.governing = _next_to_open(context, arc, devices, open_at, device_a)
            arc.no_trip = arc.governing < 0
        return
    dt = end - arc.time_s
    for d, at in trips:
        arc.opening[d] = at
    arc.time_s = end
    now = sorted(d for d, at in arc.opening.items() if at <= end + SIMULTANEOUS_S)
    for d in now:
        del arc.opening[d]
    arc.opened.update(now)
    arc.key = _after_openings(context, arc, arc.key, now, motors_end and end >= context.motor_end_s)
    for d in now:
        arc.steps.append([d, end, arcing_ka, None, bolted_ka, None])
    if not context.states.reaches_source(arc.key, arc.bus):
        for step in arc.steps:
            if step[3] is None:
                step[3], step[5] = 0.0, 0.0
        arc.done, arc.duration_s = True, end
        arc.governing = _governing(context, arc, now)
        return
    arc.held_device, arc.held_progress = held  # the arc goes on: its devices' progress is held
    arc.history.append((dt, device_a.copy()))


def _next_to_open(context, arc, devices, open_at, device_a):
    """The device that would open next after the cap (-1: none): of those tripped already, the
    followed ``devices`` (opening at ``open_at``) and those not followed (their progress replayed)."""
    pending = dict(arc.opening)
    others = _warm(context, arc, device_a)
    others[devices] = False
    others = np.flatnonzero(others)  # not followed: below the cap's level
    if others.size:
        times, _, breaker = _elements(context.bank, others, device_a[others], np.full(others.size, arc.variant))
        progress = _replay(context, arc, others)
        with np.errstate(invalid="ignore"):
            at = arc.time_s + np.where(np.isfinite(times), (1.0 - progress) * times, np.inf).min(axis=1) + breaker
        devices, open_at = np.concatenate([devices, others]), np.concatenate([open_at, at])
    if open_at.size and np.isfinite(open_at.min()):
        pending[int(devices[np.argmin(open_at)])] = float(open_at.min())
    return min(pending, key=pending.get) if pending else -1


def _after_openings(context, arc, key, devices, motors_off):
    """The state after ``devices`` open (and motor contributions end, with ``motors_off``)."""
    opened, split = set(key.opened), key.split
    line_side = context.line_side.get(arc.bus, set())
    for d in devices:
        branch = int(context.device_branch[d])
        if d in line_side:  # on the arc's source side: the bus is cut from the arc, not the arc from its source
            moved = set(split[1]) if split else set()
            split = (arc.bus, frozenset(moved | {branch}))
        else:
            opened.add(branch)
    return StateKey(frozenset(opened), key.motors_off or motors_off, split)


def _governing(context, arc, devices):
    """Of the devices opening at the arc's end, the one whose opening left no source connected.

    Where several would have done so alone (devices in series), or none
    would have alone (every one was needed), the one nearest the faulted bus
    (fewest branches away) governs.
    """
    if len(devices) == 1:
        return devices[0]
    before = StateKey(frozenset(set(arc.key.opened) - {int(context.device_branch[d]) for d in devices}),
                      arc.key.motors_off, arc.key.split)
    enough = [d for d in devices
              if not context.states.reaches_source(_after_openings(context, arc, before, [d], False), arc.bus)]
    enough = enough or list(devices)
    hops = context.states.hops_from(arc.bus)
    branch_from, branch_to = context.states.branch_from, context.states.branch_to
    return min(enough, key=lambda d: min(hops[branch_from[context.device_branch[d]]],
                                         hops[branch_to[context.device_branch[d]]]))


def network_states(site, net):
    """:class:`~arcflash.models.network_stages.NetworkStates` of a scenario's network arrays (the site's
    scenarios share the factors of their base states while the site lives: :mod:`.remembered`)."""
    sources = set(net.source_ids)
    return NetworkStates(
        net.base_kv, net.branch_from, net.branch_to, net.branch_z_pu, net.shunt_bus, net.shunt_z_pu,
        np.array([ident not in sources for ident in net.shunt_ids], dtype=bool), net.source_bus,
        net.device_branch, net.device_kv, voltage_factor=site.facility.voltage_factor,
        s_base_mva=site.facility.s_base_mva, base_factors=site_memory("base_factors", site), tiling=net.tiling)


def stage_arcing(net, equipment):
    """``arcing(bus_indices, bolted_ka, reduced)``: IEEE 1584-2018 arcing current of a stage and its
    range code, with each bus's own equipment: the arcing current, or where ``reduced`` the reduced
    arcing current (Eq. 3).
    """
    eq = equipment.reindex(net.bus_ids)
    columns = {name: eq[name].to_numpy(float) for name in ("gap_mm", "working_distance_mm", "height_mm",
                                                            "width_mm", "depth_mm")}
    config = eq["config"].to_numpy(str)

    def arcing(buses, bolted_ka, reduced):
        current = np.zeros(buses.size)
        code = np.zeros(buses.size, dtype=np.int64)
        live = bolted_ka > 0
        if live.any():
            b = buses[live]
            r = ieee1584.evaluate(net.base_kv[b], bolted_ka[live], columns["gap_mm"][b],
                                  columns["working_distance_mm"][b], 1.0, 1.0, config[b], columns["height_mm"][b],
                                  columns["width_mm"][b], columns["depth_mm"][b])
            current[live] = np.where(reduced[live], r.reduced_arcing_current_ka, r.arcing_current_ka)
            code[live] = r.out_of_range_code
        return current, code

    return arcing
