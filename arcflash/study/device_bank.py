"""Protective devices as clearing-time functions: one device (:func:`device_curve`), or every device
of a site in a scenario as parameter arrays evaluated in bulk (:class:`DeviceBank`)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..models.curves import (
    DefiniteTimeStage,
    RelaySettings,
    TripUnitSettings,
    point_curve_band_s,
    point_curve_time_s,
    relay_clearing_time_s,
    trip_unit_clearing_time_s,
    relay_clearing_time_batch_s,
    relay_element_times_s,
    relay_parameters,
    relay_reset_times_s,
    trip_unit_element_times_s,
    trip_unit_parameters,
    trip_unit_time_batch_s,
)

#: (device, current) pairs evaluated together by :meth:`DeviceBank.clearing_time_s` [-].
EVALUATION_BLOCK = 1 << 16


@dataclass(frozen=True)
class DeviceCurve:
    """A device's clearing-time function, ready to evaluate on currents [A] -> [s]."""

    device: str
    kind: str
    settings: object

    def clearing_time_s(self, current_a):
        """Clearing time on the slowest curve of the band (conservative for arc flash) [s]."""
        if isinstance(self.settings, RelaySettings):
            return relay_clearing_time_s(current_a, self.settings)
        if isinstance(self.settings, TripUnitSettings):
            return trip_unit_clearing_time_s(current_a, self.settings, band="max")
        return point_curve_time_s(current_a, self.settings, band="max")


def zoned(device):
    """``device`` with its zone settings in force over its own, none left to switch (:mod:`.zones`)."""
    group = "trip_unit" if device.trip_unit is not None else "relay"
    return device.replaced({group: getattr(device, group).replaced(device.zone), "zone": {}})


def device_curve(site, device_id, maintenance=False, zone=False):
    """The clearing-time function of one device, maintenance settings on or off, zone settings in force or not
    (an arc in its zone, :mod:`.zones`)."""
    device = site.devices[device_id]
    device = zoned(device) if zone and device.zone else device
    frequency = site.facility.frequency_hz
    if device.relay is not None:
        r = device.relay.model_copy(update=device.maintenance) if maintenance else device.relay
        ratio = r.ct_primary_a / r.ct_secondary_a
        settings = RelaySettings(
            pickup_a=r.pickup_a * ratio, standard=r.standard, curve=r.curve, time_dial=r.time_dial,
            definite_time=tuple(DefiniteTimeStage(s.pickup_a * ratio, s.time_s) for s in r.definite_time),
            instantaneous_a=None if r.instantaneous_a is None else r.instantaneous_a * ratio,
            breaker_cycles=r.breaker_cycles, frequency_hz=frequency,
        )
    elif device.trip_unit is not None:
        u = trip_unit_in_use(device, maintenance)
        settings = TripUnitSettings(**u.model_dump(), frequency_hz=frequency)
    else:
        settings = site.curves[device.curve].to_model()
    return DeviceCurve(device_id, device.kind, settings)


def trip_unit_in_use(device, maintenance):
    """A device's trip unit with its maintenance settings applied where ``maintenance`` is on."""
    return device.trip_unit.model_copy(update=device.maintenance) if maintenance else device.trip_unit


def threshold_source(site, device, maintenance):
    """What a device's clearing thresholds are made of (remembered by identity, :meth:`DeviceBank._threshold_a`):
    the device, its maintenance state, the frequency and its digitised curve (None for none)."""
    return device, maintenance, site.facility.frequency_hz, site.curves.get(device.curve) if device.curve else None


class DeviceBank:
    """Every device of a site in a scenario, as parameter arrays by kind.

    Evaluates many (device, current) pairs in one call per kind of device
    (and one per digitised curve), so that a whole facility's clearing times
    take a few array operations.
    """

    def __init__(self, site, scenario, device_ids):
        maintenance = set(scenario.energy_reducing_maintenance_switching)
        devices = [site.devices[d] for d in device_ids]
        self.kind = np.array([2 if d.curve else (0 if d.relay is not None else 1) for d in devices], dtype=np.int8)
        self.row = np.zeros(len(devices), dtype=np.intp)  # position within its kind's parameter arrays
        for code in range(3):
            self.row[self.kind == code] = np.arange(np.count_nonzero(self.kind == code))
        relays = [device_curve(site, ident, ident in maintenance).settings
                  for ident, d in zip(device_ids, devices) if d.relay is not None]
        # Trip units straight from the validated site data (maintenance overrides applied).
        units = [trip_unit_in_use(d, ident in maintenance) for ident, d in zip(device_ids, devices)
                 if d.trip_unit is not None]
        self.relays = relay_parameters(relays) if relays else None
        self.units = trip_unit_parameters(units, site.facility.frequency_hz) if units else None
        # what each device's curve is made of (for thresholds remembered device by device)
        self._sources = [threshold_source(site, d, ident in maintenance) for ident, d in zip(device_ids, devices)]
        named = [d.curve for d in devices]
        self.curve_names = sorted({name for name in named if name})
        self.curves = {name: site.curves[name].to_model() for name in self.curve_names}
        lookup = {name: k for k, name in enumerate(self.curve_names)}
        self.point_curve = np.array([lookup[n] if n else -1 for n in named], dtype=np.intp)
        # where each digitised curve's device clears inside its band (+1: the total-clearing curve)
        self.curve_position = np.array([d.curve_band_position if d.curve else 1.0 for d in devices])

    def clearing_time_s(self, device, current_a):
        """Clearing time of device ``device[k]`` at ``current_a[k]`` (max band) [s].

        Taken in blocks of :data:`EVALUATION_BLOCK` pairs, so that the
        temporary arrays stay small however long the input.
        """
        device, current_a = np.asarray(device, dtype=np.intp), np.asarray(current_a, dtype=float)
        if device.size > EVALUATION_BLOCK:
            t = np.empty(current_a.shape)
            for lo in range(0, device.size, EVALUATION_BLOCK):
                t[lo:lo + EVALUATION_BLOCK] = self.clearing_time_s(device[lo:lo + EVALUATION_BLOCK],
                                                                   current_a[lo:lo + EVALUATION_BLOCK])
            return t
        t = np.full(current_a.shape, np.inf)
        kind = self.kind[device]
        for code, evaluate in ((0, self._relays), (1, self._units)):
            pick = kind == code
            if pick.any():
                t[pick] = evaluate(current_a[pick], self.row[device[pick]])
        pick = np.flatnonzero(kind == 2)
        which = self.point_curve[device[pick]]
        for number, name in enumerate(self.curve_names):
            rows = pick[which == number]
            if rows.size:
                t[rows] = self._point_times(device[rows], current_a[rows], name)
        return t

    def _point_times(self, device, current, name):
        """Clearing times of devices ``device`` on digitised curve ``name`` at ``current`` [A] [s]: the
        total-clearing curve, or for a device placed inside its band (position p < 1) the curve that lies
        (1 - p)/2 of the way from it to the minimum curve in lg t at every current (log-log interpolation
        between the two, as between the points of one curve); where the two curves agree (the
        instantaneous region, a point they share), their time."""
        curve = self.curves[name]
        position = self.curve_position[device]
        maybe = np.flatnonzero(position < 1.0) if curve.min_time_s is not None else np.zeros(0, dtype=np.intp)
        if not maybe.size:
            return point_curve_time_s(current, curve, band="max")
        t, fast = point_curve_band_s(current, curve, maybe)  # the minimum curve where a device may use it
        finite = np.isfinite(t[maybe])
        inside, fast = maybe[finite], fast[finite]
        if inside.size:
            slow = t[inside]
            p = position[inside]
            between = np.power(10.0, (1.0 - p) / 2.0 * np.log10(fast) + (1.0 + p) / 2.0 * np.log10(slow))
            t[inside] = np.where(fast == slow, slow, between)
        return t

    def _relays(self, current, rows):
        return relay_clearing_time_batch_s(current, self.relays, rows)

    @property
    def element_count(self):
        """Columns of :meth:`elements`: the most elements any device has [-]."""
        stages = self.relays["stage_a"].shape[1] if self.relays is not None else 0
        return max(2 + stages if self.relays is not None else 1, 3 if self.units is not None else 1, 1)

    def elements(self, device, current_a):
        """Each element of device ``device[k]`` at ``current_a[k]``, for staged clearing.

        Returns
        -------
        tuple of numpy.ndarray
            Trip time of each element without the breaker, ``inf`` where it
            does not operate (m, E) [s]; time to reset fully from the point
            of operating below its pickup (0: at once; ``inf``: holds) (m, E)
            [s]; breaker opening time added after the trip (0 for digitised
            total-clearing curves) (m,) [s]. Relays: inverse time,
            definite-time stages, instantaneous; trip units: long time,
            short time, instantaneous (max band); digitised curves: one
            element, the total-clearing (max) curve.
        """
        device = np.asarray(device, dtype=np.intp)
        current = np.asarray(current_a, dtype=float)
        width = self.element_count
        times = np.full((device.size, width), np.inf)
        reset = np.zeros((device.size, width))
        breaker = np.zeros(device.size)
        kind = self.kind[device]
        pick = np.flatnonzero(kind == 0)
        if pick.size:
            rows = self.row[device[pick]]
            t = relay_element_times_s(current[pick], self.relays, rows)
            times[pick, :t.shape[1]] = t
            reset[pick, :t.shape[1]] = relay_reset_times_s(current[pick], self.relays, rows)
            breaker[pick] = self.relays["breaker_s"][rows]
        pick = np.flatnonzero(kind == 1)
        if pick.size:
            rows = self.row[device[pick]]
            times[pick, :3] = trip_unit_element_times_s(current[pick], self.units, rows, band="max")
            breaker[pick] = self.units["breaker_s"][rows]
        pick = np.flatnonzero(kind == 2)
        which = self.point_curve[device[pick]]
        for number, name in enumerate(self.curve_names):
            rows = pick[which == number]
            if rows.size:
                times[rows, 0] = self._point_times(device[rows], current[rows], name)
        return times, reset, breaker

    def threshold_a(self, within_s):
        """Smallest current at which each device clears within ``within_s`` (``inf``: never) [A].

        Bisection on the logarithm of the current: clearing times never
        increase with current. ``within_s`` infinite asks for the smallest
        current at which the device clears at all (a finite time): a lower
        bound of its smallest pickup. The value returned is always a current
        at which the device does not yet clear in time (or 1 mA), so a lower
        bound. Remembered per bank and duration (a copy is returned).
        """
        known = self.__dict__.setdefault("_thresholds", {})
        if within_s not in known:
            known[within_s] = self._threshold_a(within_s)
        return known[within_s].copy()

    def _threshold_a(self, within_s):
        """:meth:`threshold_a` device by device: taken from :data:`_THRESHOLDS` for a device (the same
        object, maintenance state, frequency and curve) met before, by bisection for the others together
        (an uncertainty sample that moves a few devices recomputes only those)."""
        return self._thresholds_of(np.arange(self.kind.size), self._sources, within_s)

    def _thresholds_of(self, positions, sources, within_s, memo=None):
        """:meth:`_threshold_a` of the devices at ``positions``, made of ``sources`` (see ``_sources``),
        remembered in ``memo`` (default :data:`_THRESHOLDS`)."""
        memo = _THRESHOLDS if memo is None else memo
        found = np.full(positions.size, np.nan)
        keys = []
        for k, (device, on, frequency, curve) in enumerate(sources):
            key = (id(device), on, frequency, id(curve), within_s)
            entry = memo.get(key)
            if entry is not None and entry[0] is device and entry[1] is curve:
                found[k] = entry[2]
            keys.append(key)
        todo = np.flatnonzero(np.isnan(found))
        if todo.size:
            found[todo] = self._bisect(positions[todo], within_s)
            if len(memo) + todo.size > _THRESHOLDS_KEPT:
                memo.clear()
            for k in todo.tolist():
                device, _, _, curve = sources[k]
                memo[keys[k]] = (device, curve, float(found[k]))
        return found

    def _bisect(self, device, within_s):
        """Smallest current at which each of ``device`` (positions) clears within ``within_s`` [A]:
        bisection on the logarithm of the current, :data:`BISECTION_HALVINGS` halvings.

        For a few devices, the halvings are taken :data:`BISECTION_LEVELS` at a time: every midpoint the
        next levels may need (a tree of them) is evaluated in one call, then each device walks down its
        tree; the midpoints are those of one halving after another (the same arithmetic), in a quarter of
        the calls, which for few devices cost more than the evaluations."""
        n = device.size
        lo, hi = np.full(n, BISECTION_LOW), np.full(n, 8.0)  # 1 mA .. 100 MA
        within_s = min(within_s, np.finfo(float).max)  # within an infinite time: a finite one
        never = ~(self.clearing_time_s(device, np.full(n, 1e8)) <= within_s)
        levels = BISECTION_LEVELS if n <= BISECTION_TREE_DEVICES else 1
        column = np.arange(n)
        for done in range(0, BISECTION_HALVINGS, levels):
            count = min(levels, BISECTION_HALVINGS - done)
            a, b = lo[None, :], hi[None, :]  # the (lo, hi) of every node of a level, in tree order
            mids = []
            for level in range(count):
                m = 0.5 * (a + b)
                mids.append(m)
                if level < count - 1:  # children: a fast midpoint is the left one's hi, a slow one the right one's lo
                    a, b = np.stack([a, m], axis=1).reshape(-1, n), np.stack([m, b], axis=1).reshape(-1, n)
            flat = np.concatenate(mids)
            fast = (self.clearing_time_s(np.tile(device, flat.shape[0]), 10.0 ** flat.ravel()) <= within_s)
            fast = fast.reshape(flat.shape)
            node = np.zeros(n, dtype=np.intp)
            start = 0
            for mid in mids:  # walk down: a fast midpoint becomes hi (left child), a slow one lo (right child)
                f = fast[start + node, column]
                hi = np.where(f, mid[node, column], hi)
                lo = np.where(f, lo, mid[node, column])
                start += mid.shape[0]
                node = 2 * node + ~f
        return np.where(never, np.inf, 10.0 ** lo)

    def _units(self, current, rows):
        return trip_unit_time_batch_s(current, self.units, rows, band="max")


#: Lower end of the threshold bisection, lg of the current in A (1 mA) [-].
BISECTION_LOW = -3.0
#: Halvings of the threshold bisection: 11 decades / 2**18, the threshold found within 1e-4 of itself (below it:
#: the value returned is a current at which the device does not yet clear in time, a lower bound, which is all
#: its uses need: they leave out rows and devices that cannot clear in time) [-].
BISECTION_HALVINGS = 18
#: Halvings of the threshold bisection evaluated in one call for few devices (a tree of 2**L - 1 midpoints) [-].
BISECTION_LEVELS = 4
#: At most this many devices take the halvings several at a time (more: one call per halving costs less) [-].
BISECTION_TREE_DEVICES = 128

def bank_of_devices(site, scenario, devices):
    """A bank of ``devices`` ((id, device) pairs: replacements of devices of ``site``, each its own entry, in
    order), the maintenance settings on for those whose id the scenario switches on."""
    from types import SimpleNamespace

    names = [str(e) for e in range(len(devices))]
    switched = set(scenario.energy_reducing_maintenance_switching)
    holder = SimpleNamespace(devices=dict(zip(names, (d for _, d in devices))), facility=site.facility,
                             curves=site.curves)
    on = SimpleNamespace(energy_reducing_maintenance_switching=[n for n, (ident, _) in zip(names, devices)
                                                                if ident in switched])
    return DeviceBank(holder, on, names)


_BANKS = {}
_BANKS_KEPT = 64

#: Clearing thresholds by device (see :meth:`DeviceBank._threshold_a`): key -> (device, curve, threshold);
#: the entry keeps the objects whose identities the key holds.
_THRESHOLDS = {}
_THRESHOLDS_KEPT = 200_000


def device_bank(site, scenario, device_ids):
    """The :class:`DeviceBank` of a scenario, remembered: samples of an uncertainty run (and repeated studies)
    share the site's devices, so the bank and its thresholds are built once. The key holds the identity of
    every device, curve and setting it is built from (an element replaced in the site gives a new bank);
    the entry keeps them alive, so no identity is reused while it is kept. A stacked site's is built copy
    by copy from its base site's (:func:`.stack_tiling.stacked_bank`)."""
    if site.stack is not None:
        from .stack_tiling import stacked_bank

        return stacked_bank(site, scenario, device_ids)
    maintenance = frozenset(scenario.energy_reducing_maintenance_switching)
    parts = tuple(site.devices[d] for d in device_ids) + tuple(site.curves.values())
    key = (tuple(device_ids), tuple(map(id, parts)), maintenance, site.facility.frequency_hz)
    entry = _BANKS.get(key)
    if entry is None:
        if len(_BANKS) >= _BANKS_KEPT:
            _BANKS.clear()
        entry = _BANKS[key] = (parts, DeviceBank(site, scenario, device_ids))
    return entry[1]
