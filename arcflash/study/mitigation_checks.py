"""What a mitigation candidate costs: selectivity with the devices downstream of each changed device, and
nuisance trips on motor starting and transformer inrush (:mod:`.mitigation`).

Every candidate of a device is checked in the same array operations: the changed devices of every
candidate are one device bank (each its own entry), the site's other devices are the site's own bank.

Selectivity is checked pair by pair, the changed device against each device downstream of it (one whose
buses, fed from a source, are all fed through the changed one), for faults at each bus beyond the downstream
device, over the range of currents the downstream device carries for that fault (from the reduced arcing
current to the bolted current). Where those ranges overlap they are merged into one interval, checked at
:data:`RANGE_POINTS` currents at least and :data:`POINTS_PER_DECADE` a decade, spaced evenly in lg I, with
the changed device carrying at each the largest share of the downstream device's current any fault of the
interval gives it (a larger current makes it faster: the conservative reading). The changed device's
fastest time (minimum band, without the breaker; a relay's curve with its breaker's) must not come before
the downstream device's total clearing time plus a coordination margin (:data:`RELAY_MARGIN_S` where a
relay is one of the pair, none between two banded devices, whose bands carry their tolerances). Where a
change sets a new pickup, the currents around that pickup's band (:data:`PICKUP_EDGES`) are checked too.
Only what a change breaks is charged to it: a current at which the site as it is already fails the check
is not.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
import scipy.sparse as sp

from ..models.curves import point_curve_time_s, trip_unit_time_batch_s
from ..models.transformer import rated_current_a

#: Coordination time interval where a relay is one of the pair [s] (common practice: 0.2 s between
#: static relays and the devices they back up; 0.3 s with electromechanical relays, from memory).
RELAY_MARGIN_S = 0.2
#: Motor starting: locked-rotor current as a multiple of full-load current, times an asymmetry allowance
#: for instantaneous elements (common practice: 6 x FLA, 1.5 asymmetrical) [-], held for [s].
MOTOR_START_MULTIPLE = 6.0 * 1.5
MOTOR_START_S = 10.0
#: Transformer magnetising inrush: a multiple of rated current for a time (common practice: 12 x for 0.1 s).
INRUSH_MULTIPLE = 12.0
INRUSH_S = 0.1
#: Currents at which a pair's selectivity is checked over each interval of the currents the downstream device
#: carries (lg-spaced, both ends included): at least this many [-], and at least this many a decade [-].
RANGE_POINTS = 12
POINTS_PER_DECADE = 24
#: Where a change sets a new pickup, selectivity is also checked at these multiples of the top of its band:
#: every 1 % from 0.60 to 1.01, so within 1 % above the band's lower edge, where the changed device's time
#: drops, for tolerances up to 25 % (the edge of a 10 % band lies at 0.818) [-].
PICKUP_EDGES = tuple(np.round(np.arange(0.60, 1.015, 0.01), 2))


class _PairCurrents:
    """The bolted current through each device for a fault at each bus (a fault solution's pairs, twice-listed
    pairs summed; 0 for a pair not listed) [kA]: ``currents(fault_bus, device)``."""

    def __init__(self, solution, n_bus, n_dev):
        matrix = sp.csr_matrix((solution.device_current_ka, (solution.device_fault_bus, solution.device)),
                               shape=(n_bus, n_dev)).tocoo()
        self.shape = (n_bus, n_dev)
        self._keys = matrix.row.astype(np.int64) * n_dev + matrix.col
        order = np.argsort(self._keys)
        self._keys, self._values = self._keys[order], matrix.data[order]

    def __call__(self, fault_bus, device):
        key = np.asarray(fault_bus, dtype=np.int64) * self.shape[1] + np.asarray(device, dtype=np.int64)
        at = np.minimum(np.searchsorted(self._keys, key), max(self._keys.size - 1, 0))
        found = (self._keys.size > 0) & (self._keys[at] == key) if self._keys.size else np.zeros(key.shape, bool)
        return np.where(found, self._values[at] if self._keys.size else 0.0, 0.0)


class _Scenario(NamedTuple):
    """What the checks read of one scenario of the site as it is: its name, the scenario, the faults, the
    device ids, the path rows' (source number, bus index, device index), each (fault bus, device) pair's bolted
    current (:class:`_PairCurrents` [kA]), each bus's reduced arcing over bolted current [-], the site's device bank
    and the bank of the candidates' changed devices."""

    name: str
    scenario: object
    faults: object
    ids: list
    rows: tuple
    current: object
    low: np.ndarray
    bank: object
    changed: object


class _Pairs(NamedTuple):
    """A changed device's pairs in one scenario, as intervals of current: per interval, its downstream device
    (``other``, device index), the largest ratio of the changed device's current to the downstream device's
    among the faults it covers (``ratio``), its ends (``lo``, ``hi``, the downstream device's current [A]),
    the margin [s]; its faults (the interval of each, bus indices, and the downstream device's current range
    for each [A]); per point checked (``interval``: the interval of each), the downstream device's current
    (``amps_d`` [A]), the changed device's (``amps_u`` [A]) and the downstream device's total clearing time on
    the site as it is (``t_d`` [s])."""

    other: np.ndarray
    ratio: np.ndarray
    lo: np.ndarray
    hi: np.ndarray
    margin: np.ndarray
    faults: tuple
    interval: np.ndarray
    amps_d: np.ndarray
    amps_u: np.ndarray
    t_d: np.ndarray


def _intervals(d, lo, hi):
    """The fault ranges (``lo`` .. ``hi``) of each downstream device ``d`` merged where they overlap: the
    interval of each range, numbered in order of device, then current [-]."""
    order = np.lexsort((lo, d))
    interval = np.empty(order.size, dtype=np.intp)
    if order.size:
        device, start = d[order], lo[order]
        first = np.flatnonzero(np.r_[True, device[1:] != device[:-1]])
        top = _running_max(hi[order], first)  # the highest end so far among the device's ranges
        new = np.zeros(order.size, dtype=bool)
        new[first] = True
        new[1:] |= start[1:] > top[:-1]  # a range beginning above every range before it starts an interval
        interval[order] = np.cumsum(new) - 1
    return interval


def _running_max(values, starts):
    """The running maximum of ``values``, restarting at each of ``starts`` (group starts, the first 0)."""
    out = values.copy()
    bounds = np.r_[starts, values.size]
    for a, b in zip(bounds[:-1].tolist(), bounds[1:].tolist()):
        out[a:b] = np.maximum.accumulate(values[a:b])
    return out


def fastest_s(bank, entry, current_a):
    """The fastest time of bank ``bank``'s device ``entry[k]`` at ``current_a[k]``: a trip unit's or
    digitised curve's minimum band without the breaker (a curve with none, its only curve), a relay's curve
    with its breaker's opening [s]."""
    entry, current = np.asarray(entry, dtype=np.intp), np.asarray(current_a, dtype=float)
    t = np.full(current.shape, np.inf)
    kind = bank.kind[entry]
    pick = kind == 1
    if pick.any():
        t[pick] = trip_unit_time_batch_s(current[pick], bank.units, bank.row[entry[pick]], band="min",
                                         clearing=False)
    pick = kind == 0
    if pick.any():
        t[pick] = bank.clearing_time_s(entry[pick], current[pick])
    for number, name in enumerate(bank.curve_names):
        pick = (kind == 2) & (bank.point_curve[entry] == number)
        if pick.any():
            curve = bank.curves[name]
            t[pick] = point_curve_time_s(current[pick], curve, band="min" if curve.min_time_s is not None else "max")
    return t


class Checks:
    """Selectivity, starting and inrush of every candidate (:class:`~.mitigation.Candidate`) of ``site``, each
    made in ``sites`` (the site with that candidate's change)."""

    def __init__(self, site, candidates, sites, solved=None):
        from .arcing import arcing_currents, equipment_table
        from .clearing import clearing_paths
        from .device_bank import bank_of_devices, device_bank
        from .faults import solve_scenario

        solved = solved or {}

        self.site, self.candidates = site, candidates
        # every (candidate, changed device): an entry of the changed devices' bank
        self.entries = [(j, ident) for j, c in enumerate(candidates) for ident in c.devices]
        self.entry_of = {key: e for e, key in enumerate(self.entries)}
        changed = [(ident, sites[j].devices[ident]) for j, ident in self.entries]
        self.scenarios = []
        equipment = equipment_table(site)
        for name, scenario in site.scenarios.items():
            made = solved.get(name)
            if made is not None:  # the faults and paths a candidate's study made (the same forward currents)
                faults, paths, arcs, bank = made.faults, made.paths, made.arcs, made.bank
            else:
                faults = solve_scenario(site, name, for_clearing=True)
                paths = clearing_paths(site, scenario, faults)
                arcs = arcing_currents(site, faults.buses, equipment)
                bank = device_bank(site, scenario, list(faults.net.device_ids))
            if made is not None and made.entries == self.entries and all(
                    a is b for a, b in zip(made.devices, (device for _, device in changed))):
                bank_changed = made.changed
            else:
                bank_changed = bank_of_devices(site, scenario, changed) if changed else None
            bolted = faults.buses["bolted_ka"].to_numpy(float)
            reduced = arcs["reduced_arcing_current_ka"].to_numpy(float)
            low = np.where(bolted > 0, reduced / np.where(bolted > 0, bolted, 1.0), np.nan)
            sol = faults.solution
            ids = list(faults.net.device_ids)
            current = _PairCurrents(sol, len(faults.net.bus_ids), len(ids))
            rows = (paths.path // len(paths.bus_ids), paths.bus, paths.device)
            self.scenarios.append(_Scenario(name, scenario, faults, ids, rows, current, low, bank, bank_changed))
        self._pairs_of, self._reduced = {}, {}

    def _pairs(self, number, device):
        """The pairs of ``device`` in scenario ``number`` (:class:`_Pairs`; remembered)."""
        key = (number, device)
        if key not in self._pairs_of:
            self._pairs_of[key] = self._made_pairs(self.scenarios[number], device)
        return self._pairs_of[key]

    def _made_pairs(self, one, device):
        """The work of :meth:`_pairs`."""
        src, bus, dev = one.rows
        u = one.ids.index(device)
        n_bus, n_dev = one.current.shape
        n_src = int(src.max()) + 1 if src.size else 1
        mine = np.zeros(n_src * n_bus, dtype=bool)
        mine[(src * n_bus + bus)[dev == u]] = True
        inside = mine[src * n_bus + bus]
        group = dev * n_src + src
        total = np.bincount(group, minlength=n_dev * n_src)
        within = np.bincount(group[inside], minlength=n_dev * n_src)
        own = np.bincount(src[dev == u], minlength=n_src)
        # (downstream device, source) whose buses from that source are all, and fewer than all, of u's
        below = (total > 0) & (within == total) & (total < np.tile(own, n_dev))
        below[u * n_src:(u + 1) * n_src] = False
        rows = np.flatnonzero(below[group])
        d, k = dev[rows], bus[rows]
        if d.size:
            found = np.unique(d.astype(np.int64) * n_bus + k)
            d, k = found // n_bus, found % n_bus
        i_u, i_d = one.current(k, np.full(k.size, u)), one.current(k, d)
        low = one.low[k]
        keep = (i_u > 0) & (i_d > 0) & np.isfinite(low)
        d, k, i_u, i_d, low = d[keep], k[keep], i_u[keep], i_d[keep], low[keep]
        lo, hi = 1000.0 * np.maximum(low, 1e-3) * i_d, 1000.0 * i_d
        which = _intervals(d, lo, hi)
        n = int(which.max()) + 1 if which.size else 0
        other = np.zeros(n, dtype=np.intp)
        other[which] = d
        start, end, ratio = np.full(n, np.inf), np.zeros(n), np.zeros(n)
        np.minimum.at(start, which, lo)
        np.maximum.at(end, which, hi)
        np.maximum.at(ratio, which, i_u / i_d)
        # points: RANGE_POINTS over each interval at least, at most 1/POINTS_PER_DECADE decade apart
        count = np.maximum(RANGE_POINTS, np.ceil(POINTS_PER_DECADE * np.log10(end / start)).astype(int) + 1) \
            if other.size else np.zeros(0, dtype=int)
        interval = np.repeat(np.arange(other.size), count)
        step = (np.arange(interval.size) - np.repeat(np.cumsum(count) - count, count)) / np.repeat(count - 1, count)
        amps_d = start[interval] * np.power(end[interval] / start[interval], step)
        amps_u = amps_d * ratio[interval]
        margin = np.where((one.bank.kind[u] == 0) | (one.bank.kind[other] == 0), RELAY_MARGIN_S, 0.0)
        t_d = one.bank.clearing_time_s(other[interval], amps_d)
        faults = (which, k, lo, hi)
        return _Pairs(other, ratio, start, end, margin, faults, interval, amps_d, amps_u, t_d)

    def _times(self, one, device, entries, amps):
        """``device``'s fastest time as each entry of the changed bank sets it (``entries``, m) at ``amps``
        ((m, ...) [A]); the site's own where an entry is -1 [s]."""
        flat = np.broadcast_to(np.asarray(entries)[(slice(None),) + (None,) * (amps.ndim - 1)], amps.shape)
        t = np.empty(amps.shape)
        site = flat < 0
        if site.any():
            t[site] = fastest_s(one.bank, np.full(int(site.sum()), one.ids.index(device)), amps[site])
        if (~site).any():
            t[~site] = fastest_s(one.changed, flat[~site], amps[~site])
        return t

    def _violations(self, device, candidates):
        """Per candidate (positions in ``candidates``), the set of (downstream device, fault bus, scenario) where
        ``device`` as the candidate sets it acts before the downstream device clears, less the margin, at a
        current where the site as it is does not."""
        found = [set() for _ in candidates]
        m = len(candidates)
        entries = np.array([self.entry_of[(j, device)] for j in candidates], dtype=np.intp)
        pickups = np.array([self.candidates[j].pickup_a.get(device, np.nan) for j in candidates])
        edges_u = pickups[:, None] * np.array(PICKUP_EDGES)[None, :]  # the changed device's current [A]
        for number, one in enumerate(self.scenarios):
            if device not in one.ids:
                continue
            pairs = self._pairs(number, device)
            if not pairs.other.size:
                continue
            # the points of every interval, then those around each new pickup's band an interval holds
            edges_d = edges_u[:, None, :] / pairs.ratio[None, :, None]
            valid = (edges_d >= pairs.lo[None, :, None]) & (edges_d <= pairs.hi[None, :, None])
            c_e, i_e, _ = np.nonzero(valid)
            q = pairs.interval.size
            interval = np.concatenate([np.tile(pairs.interval, m), i_e])
            candidate = np.concatenate([np.repeat(np.arange(m), q), c_e])
            amps_d = np.concatenate([np.tile(pairs.amps_d, m), edges_d[valid]])
            amps_u_e = np.broadcast_to(edges_u[:, None, :], edges_d.shape)[valid]
            t_u = np.concatenate([self._times(one, device, entries, np.broadcast_to(pairs.amps_u, (m, q))).ravel(),
                                  self._times(one, device, entries[c_e], amps_u_e)])
            was_u = np.concatenate([np.tile(self._times(one, device, np.array([-1]), pairs.amps_u[None])[0], m),
                                    self._times(one, device, np.full(c_e.size, -1), amps_u_e)])
            t_d = np.concatenate([np.tile(pairs.t_d, m), one.bank.clearing_time_s(pairs.other[i_e], edges_d[valid])])
            was_d = t_d.copy()
            for c, j in enumerate(candidates):  # a downstream device the candidate changes too: as it sets it
                for other in set(self.candidates[j].devices) - {device}:
                    if other in one.ids:
                        at = np.flatnonzero((candidate == c) & (pairs.other[interval] == one.ids.index(other)))
                        t_d[at] = one.changed.clearing_time_s(np.full(at.size, self.entry_of[(j, other)]), amps_d[at])
            margin = pairs.margin[interval]
            with np.errstate(invalid="ignore"):
                bad = np.isfinite(t_u) & np.isfinite(t_d) & (t_u < t_d + margin)
                bad &= ~(np.isfinite(was_u) & np.isfinite(was_d) & (was_u < was_d + margin))
            self._name_faults(found, one, pairs, candidate[bad], interval[bad], amps_d[bad])
        return found

    @staticmethod
    def _name_faults(found, one, pairs, candidate, interval, amps_d):
        """Add to ``found`` (one set per candidate) the (downstream device, fault bus, scenario) of each point
        failed (its ``candidate``, ``interval``, downstream current ``amps_d`` [A]): the faults of the interval
        whose range holds a failed current (all of the interval's where rounding leaves none)."""
        if not candidate.size:
            return
        which, k, lo, hi = pairs.faults
        groups, group = np.unique(candidate.astype(np.int64) * pairs.other.size + interval, return_inverse=True)
        g_interval = groups % pairs.other.size
        # every (group, fault of its interval)
        by_interval = np.argsort(which, kind="stable")
        bounds = np.searchsorted(which[by_interval], np.arange(pairs.other.size + 1))
        count = bounds[g_interval + 1] - bounds[g_interval]
        owner = np.repeat(np.arange(groups.size), count)
        fault = by_interval[np.repeat(bounds[g_interval], count) + np.arange(owner.size)
                            - np.repeat(np.cumsum(count) - count, count)]
        # a failed current of the group within the fault's range: ranks of all the currents compared
        low, high = lo[fault] * (1 - 1e-12), hi[fault] * (1 + 1e-12)
        values, rank = np.unique(np.concatenate([amps_d, low, high]), return_inverse=True)
        point, low_rank, high_rank = np.split(rank.astype(np.int64), [amps_d.size, amps_d.size + low.size])
        keys = np.sort(group.astype(np.int64) * values.size + point)
        inside = (np.searchsorted(keys, owner * values.size + high_rank, side="right")
                  > np.searchsorted(keys, owner * values.size + low_rank, side="left"))
        none = np.bincount(owner[inside], minlength=groups.size) == 0
        hit = inside | none[owner]
        for c, other, bus in zip((groups[owner[hit]] // pairs.other.size).tolist(),
                                 pairs.other[g_interval[owner[hit]]].tolist(), k[fault[hit]].tolist()):
            found[c].add((one.ids[other], one.faults.net.bus_ids[bus], one.name))

    def costs(self):
        """Per candidate, what it costs that the site as it is does not: ({(changed device, downstream device):
        fault buses} where selectivity is lost, [starting or inrush troubles])."""
        out = [({}, []) for _ in self.candidates]
        by_device = {}
        for j, candidate in enumerate(self.candidates):
            for device in candidate.devices:
                by_device.setdefault(device, []).append(j)
        for device, mine in by_device.items():
            found = self._violations(device, mine)
            troubles = self._starting(device, [-1] + mine)
            for c, j in enumerate(mine):
                for other, bus, _ in sorted(found[c]):
                    out[j][0].setdefault((device, other), set()).add(bus)
                out[j][1].extend(t for t in troubles[c + 1] if t not in troubles[0])
        return out

    def _starting(self, device, candidates):
        """Per candidate (positions; -1 the site as it is), the troubles of ``device`` with the largest
        downstream motor's start or a fed transformer's inrush (texts)."""
        one = self.scenarios[0]
        if device not in one.ids:
            return [[] for _ in candidates]
        src, bus, dev = one.rows
        u = one.ids.index(device)
        bus_ids = list(one.faults.net.bus_ids)
        at = {bus_ids[k] for k in np.unique(bus[dev == u]).tolist()}
        kv = one.faults.net.device_kv[u]
        site = self.site
        checks = []  # (text, current [A], within [s])
        motors = [m for m in site.motors.values() if m.bus in at]
        if motors:
            largest = max(motors, key=lambda m: m.kva)
            amps = MOTOR_START_MULTIPLE * rated_current_a(largest.kva, largest.kv) * largest.kv / kv
            checks.append((f"trips on {largest.id}'s start ({amps:.0f} A)", amps, MOTOR_START_S))
        own = site.devices[device]  # a device on a transformer's primary side sees its inrush
        for t in site.transformers.values():
            if t.primary_bus in at or (own.branch == t.id and own.at_bus == t.primary_bus):
                amps = INRUSH_MULTIPLE * rated_current_a(t.kva, t.primary_kv) * t.primary_kv / kv
                checks.append((f"trips on {t.id}'s inrush ({amps:.0f} A)", amps, INRUSH_S))
        if not checks:
            return [[] for _ in candidates]
        entries = np.array([self.entry_of.get((j, device), -1) for j in candidates], dtype=np.intp)
        amps = np.broadcast_to(np.array([a for _, a, _ in checks])[None, :], (len(candidates), len(checks)))
        t = self._times(one, device, entries, np.ascontiguousarray(amps))
        limit = np.array([s for _, _, s in checks])
        return [[text for (text, _, _), hit in zip(checks, t[c] < limit) if hit] for c in range(len(candidates))]

    def reduced_reaches(self, bus, device, pickup_a):
        """Whether ``device``'s current at the reduced arcing current of a fault at ``bus`` reaches its new
        pickup ``pickup_a`` (max band [A]) in some scenario."""
        if (bus, device) not in self._reduced:  # the largest such current over the scenarios [A]
            largest = 0.0
            for one in self.scenarios:
                if device in one.ids and bus in one.faults.net.bus_ids:
                    k, u = list(one.faults.net.bus_ids).index(bus), one.ids.index(device)
                    i_u = one.current(np.array([k]), np.array([u]))[0]
                    if i_u and np.isfinite(one.low[k]):
                        largest = max(largest, i_u * one.low[k] * 1000.0)
            self._reduced[(bus, device)] = largest
        return self._reduced[(bus, device)] >= pickup_a and self._reduced[(bus, device)] > 0
