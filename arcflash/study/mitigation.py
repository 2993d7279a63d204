"""What would bring a bus down: setting and procedure changes on the devices that clear it, searched for every
bus above a target energy at once, each kept only with what it costs in selectivity and starting.

For every bus whose governing incident energy is above the target, the devices that end its arcs (in any
scenario and arcing case above the target) get candidate changes from a stated search space
(:class:`SearchSpace`): lower instantaneous pickups, lower short-time pickups and delays of trip units,
lower instantaneous pickups of relays, and the device's energy-reducing maintenance settings made the
working setting (a procedure). Every candidate is a variant of the site studied through the whole chain —
faults, staged clearing, both arcing cases, every scenario — all variants together
(:func:`~arcflash.study.uncertainty.study_variants`).

Each candidate is checked against:

- **selectivity** with every device downstream of the changed one: for faults at every bus beyond the
  downstream device, over the range of fault currents there (from the reduced arcing current to the
  bolted current), the changed device's fastest time must not come before the downstream device's total
  clearing time plus a coordination margin (:data:`RELAY_MARGIN_S` where a relay is involved, none between
  banded devices, whose bands carry their tolerances). Only what the change breaks is charged to it: pairs
  the site already leaves uncoordinated are reported as they are, not as a cost.
- **starting and inrush**: no trip within :data:`MOTOR_START_S` at :data:`MOTOR_START_MULTIPLE` times the
  largest downstream motor's full-load current, nor within :data:`INRUSH_S` at :data:`INRUSH_MULTIPLE`
  times the rated current of a transformer it feeds (common practice).
- whether the arcing current in the reduced case still reaches the new instantaneous pickup (else the
  energy reached rests on the full arcing current only; the energies reported take both cases anyway).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np
import pandas as pd

from ..models import nfpa70e
from ..models.curves import point_curve_time_s, trip_unit_time_batch_s
from ..models.transformer import rated_current_a

__all__ = ["Candidate", "MitigationResult", "SearchSpace", "candidates_for", "mitigate"]

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
#: Points over the range of fault currents at which selectivity is checked (log-spaced) [-].
RANGE_POINTS = 12
#: Where a change sets a new pickup, selectivity is also checked at these multiples of the top of its band:
#: every 1 % from 0.60 to 1.01, so within 1 % above the band's lower edge, where the changed device's time
#: drops, for tolerances up to 25 % (the edge of a 10 % band lies at 0.818) [-].
PICKUP_EDGES = tuple(np.round(np.arange(0.60, 1.015, 0.01), 2))


@dataclass(frozen=True)
class SearchSpace:
    """The changes the finder may propose (each one change to one device).

    Attributes
    ----------
    instantaneous_multiples : tuple of float
        Trip-unit instantaneous pickups, multiples of the rating [-]
    short_time_pickups : tuple of float
        Trip-unit short-time pickups, multiples of the long-time pickup [-]
    short_time_delays_s : tuple of float
        Trip-unit short-time delays [s]
    relay_instantaneous_multiples : tuple of float
        Relay instantaneous pickups, multiples of the inverse-time pickup [-]
    maintenance : bool
        Propose a device's energy-reducing maintenance settings as its working settings (a procedure) [-]
    """

    instantaneous_multiples: tuple = (2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 10.0, 12.0)
    short_time_pickups: tuple = (1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0)
    short_time_delays_s: tuple = (0.05, 0.1, 0.2, 0.3, 0.4)
    relay_instantaneous_multiples: tuple = (2.0, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0, 12.0, 15.0, 20.0)
    maintenance: bool = True


@dataclass(frozen=True)
class Candidate:
    """A change to one device or more: ``kind`` 'setting' or 'procedure', ``change`` in words, ``updates``
    (device -> its new fields), ``key`` (what the change sets, the same for the same change on another
    device), ``pickup_a`` (device -> its new instantaneous or short-time pickup, max band [A])."""

    devices: tuple
    kind: str
    change: str
    updates: dict
    key: tuple
    pickup_a: dict
    #: device -> {settings group ('trip_unit' or 'relay'): {field: new value}}: the change as site data.
    settings: dict = dataclasses.field(default_factory=dict)

    def site_of(self, site):
        """The site with this change made (a variant: its devices replaced)."""
        devices = dict(site.devices)
        for ident, update in self.updates.items():
            devices[ident] = devices[ident].replaced(update)
        return dataclasses.replace(site, devices=devices)


def _together(candidates):
    """One candidate making every one of ``candidates`` (the same change on several devices)."""
    first = candidates[0]
    devices = tuple(d for c in candidates for d in c.devices)
    return Candidate(devices, first.kind, " + ".join(devices) + ": " + first.change.split(": ", 1)[-1],
                     {k: v for c in candidates for k, v in c.updates.items()}, first.key,
                     {k: v for c in candidates for k, v in c.pickup_a.items()},
                     {k: v for c in candidates for k, v in c.settings.items()})


@dataclass(frozen=True)
class MitigationResult:
    """``candidates``: one row per (bus above target, candidate on devices that end its arcs), ranked per bus;
    ``buses``: one row per bus above target, its best candidate or why none reaches the target."""

    candidates: pd.DataFrame
    buses: pd.DataFrame
    target_cal_cm2: float
    #: The candidates themselves (:class:`Candidate`; ``candidates["candidate"]`` is the position of each row's):
    #: ``proposals[k].site_of(site)`` is the site with that change made.
    proposals: list = dataclasses.field(default_factory=list)


def candidates_for(site, device_id, space):
    """The changes of ``space`` to device ``device_id`` of ``site``: only those that lower a setting (or turn
    its maintenance settings on), as a list of :class:`Candidate`."""
    device = site.devices[device_id]
    found = []

    def add(kind, change, update, key, pickup_a=None):
        group = "trip_unit" if "trip_unit" in update else "relay"
        was = getattr(device, group).model_dump()
        now = update[group].model_dump()
        found.append(Candidate((device_id,), kind, f"{device_id}: {change}", {device_id: update}, key,
                               {} if pickup_a is None else {device_id: pickup_a},
                               {device_id: {group: {f: v for f, v in now.items() if was.get(f) != v}}}))

    unit = device.trip_unit
    if unit is not None:
        band = 1.0 + unit.pickup_tolerance
        for m in space.instantaneous_multiples:
            if (unit.instantaneous_pickup is None or m < unit.instantaneous_pickup) and m >= unit.long_time_pickup:
                was = "none" if unit.instantaneous_pickup is None else f"{unit.instantaneous_pickup:g}"
                add("setting", f"instantaneous pickup {was} -> {m:g} x rating",
                    {"trip_unit": unit.replaced({"instantaneous_pickup": m})}, ("instantaneous_pickup", m),
                    m * unit.rating_a * band)
        for m in space.short_time_pickups:
            if unit.short_time_pickup is None or m < unit.short_time_pickup:
                was = "none" if unit.short_time_pickup is None else f"{unit.short_time_pickup:g}"
                add("setting", f"short-time pickup {was} -> {m:g} x long-time pickup",
                    {"trip_unit": unit.replaced({"short_time_pickup": m})}, ("short_time_pickup", m),
                    m * unit.long_time_pickup * unit.rating_a * band)
        if unit.short_time_pickup is not None:
            for delay in space.short_time_delays_s:
                if delay < unit.short_time_delay_s:
                    add("setting", f"short-time delay {unit.short_time_delay_s:g} -> {delay:g} s",
                        {"trip_unit": unit.replaced({"short_time_delay_s": delay})}, ("short_time_delay_s", delay),
                        unit.short_time_pickup * unit.long_time_pickup * unit.rating_a * band)
    relay = device.relay
    if relay is not None:
        ratio = relay.ct_primary_a / relay.ct_secondary_a
        for m in space.relay_instantaneous_multiples:
            setting = m * relay.pickup_a
            if relay.instantaneous_a is None or setting < relay.instantaneous_a:
                was = "none" if relay.instantaneous_a is None else f"{relay.instantaneous_a:g}"
                add("setting", f"relay instantaneous {was} -> {setting:g} A secondary ({m:g} x pickup)",
                    {"relay": relay.replaced({"instantaneous_a": setting})}, ("relay_instantaneous", m),
                    setting * ratio)
    if space.maintenance and device.maintenance:
        settings = ", ".join(f"{k} {v:g}" for k, v in device.maintenance.items())
        update = ({"trip_unit": unit.replaced(device.maintenance)} if unit is not None
                  else {"relay": relay.replaced(device.maintenance)} if relay is not None else None)
        if update is not None:
            add("procedure", f"energy-reducing maintenance settings on ({settings})", update, ("maintenance",))
    return found


def mitigate(site, target_cal_cm2, space=None):
    """Candidate changes for every bus whose governing incident energy is above ``target_cal_cm2``.

    Parameters
    ----------
    site : Site
    target_cal_cm2 : float
        Incident energy to reach [cal/cm²]
    space : SearchSpace, optional
        What may change (default :class:`SearchSpace`) [-]

    Returns
    -------
    MitigationResult
    """
    from .pipeline import _study
    from .uncertainty import study_variants

    space = SearchSpace() if space is None else space
    rows, steps, _, _ = _study(site, None)
    energy = rows["incident_energy_governing_cal_cm2"].to_numpy(float)
    buses = list(site.buses)
    above_rows = rows[np.nan_to_num(energy) > target_cal_cm2]
    before = rows.groupby("bus")["incident_energy_governing_cal_cm2"].max().reindex(buses)
    high = [b for b in buses if before[b] > target_cal_cm2]
    clearing = {b: [] for b in high}
    named = [(bus, device) for column in ("governing_device", "reduced_governing_device")
             for bus, device in zip(above_rows["bus"], above_rows[column])]
    if steps is not None and len(steps):  # an arc several devices end together: each of them
        arcs = above_rows[["scenario", "bus"]].drop_duplicates()
        last = steps.merge(arcs, on=["scenario", "bus"])
        last = last[last["opening_time_s"] == last.groupby(["scenario", "bus", "case"])["opening_time_s"]
                    .transform("max")]
        named += list(zip(last["bus"], last["device"]))
    for bus, device in named:
        if isinstance(device, str) and device in site.devices and device not in clearing[bus]:
            clearing[bus].append(device)
    devices = list(dict.fromkeys(d for b in high for d in clearing[b]))
    found = {d: candidates_for(site, d, space) for d in devices}
    every = [c for d in devices for c in found[d]]
    for group in dict.fromkeys(tuple(sorted(clearing[b])) for b in high if len(clearing[b]) > 1):
        # arcs that several devices end together (fed over several paths): the same change on all of them
        keys = [{c.key: c for c in found[d]} for d in group]
        every += [_together([mine[key] for mine in keys]) for key in keys[0] if all(key in mine for mine in keys)]
    after = study_variants(site, [c.site_of(site) for c in every])[0] if every else np.zeros((0, len(buses)))
    checks = _Checks(site)
    costs = [checks.cost(c, c.site_of(site)) for c in every]
    table = []
    position = {b: k for k, b in enumerate(buses)}
    for bus in high:
        for j, candidate in enumerate(every):
            if not set(candidate.devices) <= set(clearing[bus]):
                continue
            reached = after[j, position[bus]]
            pairs, troubles = costs[j]
            table.append({
                "candidate": j, "bus": bus, "devices": " + ".join(candidate.devices), "change": candidate.change,
                "kind": candidate.kind, "changes": len(candidate.devices),
                "incident_energy_before_cal_cm2": before[bus], "incident_energy_cal_cm2": reached,
                "ppe_category": int(nfpa70e.ppe_category(reached)) if np.isfinite(reached) else -2,
                "reaches_target": bool(reached <= target_cal_cm2),
                "selectivity_lost": "; ".join(f"{device} with {other} (faults at {_few(sorted(buses))})"
                                              for (device, other), buses in pairs.items()),
                "starting_or_inrush": "; ".join(troubles),
                "reduced_arcing_reaches_pickup": all(checks.reduced_reaches(bus, d, a)
                                                     for d, a in candidate.pickup_a.items()),
            })
    candidates = pd.DataFrame(table, columns=_COLUMNS)
    if len(candidates):
        # per bus: those reaching the target first, then those keeping selectivity and starting, the lowest
        # energy, the fewest changes, and the least change (the highest new pickup or delay) on a tie
        keeps = (candidates["selectivity_lost"] == "") & (candidates["starting_or_inrush"] == "")
        least = [-every[j].key[1] if len(every[j].key) > 1 else 0.0 for j in candidates["candidate"]]
        candidates = candidates.assign(_keeps=keeps, _least=least).sort_values(
            ["bus", "reaches_target", "_keeps", "incident_energy_cal_cm2", "changes", "_least"],
            ascending=[True, False, False, True, True, True], kind="stable")
        candidates = candidates.drop(columns=["_keeps", "_least"]).reset_index(drop=True)
        order = {b: k for k, b in enumerate(high)}
        candidates = candidates.iloc[np.argsort(candidates["bus"].map(order).to_numpy(), kind="stable")]
        candidates = candidates.reset_index(drop=True)
    return MitigationResult(candidates, _bus_summary(high, before, clearing, candidates, costs, target_cal_cm2),
                            float(target_cal_cm2), every)


_COLUMNS = ["candidate", "bus", "devices", "change", "kind", "changes", "incident_energy_before_cal_cm2",
            "incident_energy_cal_cm2", "ppe_category", "reaches_target", "selectivity_lost", "starting_or_inrush",
            "reduced_arcing_reaches_pickup"]


def _bus_summary(high, before, clearing, candidates, costs, target):
    """Per bus above the target: the best candidate that reaches it with selectivity and starting kept, or
    what prevents one."""
    out = []
    for bus in high:
        mine = candidates[candidates["bus"] == bus] if len(candidates) else candidates
        good = mine[mine["reaches_target"] & (mine["selectivity_lost"] == "") & (mine["starting_or_inrush"] == "")]
        if len(good):
            best = good.iloc[0]
            status, note = "candidates", f"{best['change']} ({best['incident_energy_cal_cm2']:.3g} cal/cm2)"
        elif not clearing[bus]:
            status, note = "none", ("no protective device of the site ends its arc (it lasts to the duration cap, "
                                    "or a stated time): only adding one, hardware, could lower it")
        elif not len(mine):
            status, note = "none", "no change in the searched space for " + ", ".join(clearing[bus])
        elif not mine["reaches_target"].any():
            status, note = "none", (f"no change in the searched space reaches {target:g} cal/cm2 (lowest "
                                    f"{mine['incident_energy_cal_cm2'].min():.3g})")
        else:
            reaching = mine[mine["reaches_target"]]["candidate"].tolist()
            pairs = dict.fromkeys(f"{device} with {other}" for j in reaching for device, other in costs[j][0])
            troubles = dict.fromkeys(t.split(" (")[0] for j in reaching for t in costs[j][1])
            why = ([f"selectivity ({', '.join(pairs)})"] if pairs else []) + (
                [f"starting or inrush ({', '.join(troubles)})"] if troubles else [])
            status, note = "none", "every change that reaches the target costs " + " and ".join(why)
        out.append({"bus": bus, "incident_energy_before_cal_cm2": before[bus], "devices": ", ".join(clearing[bus]),
                    "status": status, "best_or_reason": note})
    return pd.DataFrame(out, columns=["bus", "incident_energy_before_cal_cm2", "devices", "status",
                                      "best_or_reason"])


def _few(names, shown=3):
    """Up to ``shown`` names, and how many more."""
    more = len(names) - shown
    return ", ".join(names[:shown]) + (f" and {more} more" if more > 0 else "")


class _Scenario(NamedTuple):
    """What the checks read of one scenario of the site as it is: its faults and device ids, the buses each
    source feeds through each device (``fed``: (source number, device id) -> bus indices), each (bus,
    device) pair's bolted current [kA], each bus's reduced arcing over bolted current [-], its device bank."""

    name: str
    scenario: object
    faults: object
    ids: list
    fed: dict
    current: dict
    low: np.ndarray
    bank: object


class _Checks:
    """Selectivity, starting and inrush of a changed device, against the site as it is."""

    def __init__(self, site):
        from .arcing import arcing_currents, equipment_table
        from .clearing import clearing_paths
        from .device_bank import device_bank
        from .faults import solve_scenario

        self.site = site
        self.scenarios = []
        equipment = equipment_table(site)
        for name, scenario in site.scenarios.items():
            faults = solve_scenario(site, name)
            paths = clearing_paths(site, scenario, faults)
            arcs = arcing_currents(site, faults.buses, equipment)
            bolted = faults.buses["bolted_ka"].to_numpy(float)
            reduced = arcs["reduced_arcing_current_ka"].to_numpy(float)
            low = np.where(bolted > 0, reduced / np.where(bolted > 0, bolted, 1.0), np.nan)
            sol = faults.solution
            current = {(int(k), int(d)): float(i)
                       for k, d, i in zip(sol.device_fault_bus, sol.device, sol.device_current_ka)}
            ids = list(faults.net.device_ids)
            fed = {}  # (source, device) -> buses fed through it
            for src, bus, dev in zip(paths.path // len(paths.bus_ids), paths.bus, paths.device):
                fed.setdefault((int(src), ids[int(dev)]), set()).add(int(bus))
            bank = device_bank(site, scenario, ids)
            self.scenarios.append(_Scenario(name, scenario, faults, ids, fed, current, low, bank))
        self._base, self._checks = {}, {}

    def _fastest_s(self, site, scenario, ids, device, current_a):
        """The changed device's fastest time (minimum band, no breaker time; a relay's curve with its breaker's) [s]."""
        from .device_bank import device_bank

        bank = device_bank(site, scenario, ids)
        d = ids.index(device)
        current = np.asarray(current_a, dtype=float)
        kind = bank.kind[d]
        if kind == 1:
            return trip_unit_time_batch_s(current, bank.units, np.full(current.size, bank.row[d]), band="min",
                                          clearing=False)
        if kind == 2:
            curve = bank.curves[bank.curve_names[bank.point_curve[d]]]
            return point_curve_time_s(current, curve, band="min" if curve.min_time_s is not None else "max")
        return bank.clearing_time_s(np.full(current.size, d), current)

    def _pairs(self, number, device):
        """The checks of ``device``'s selectivity in scenario ``number`` (remembered; they depend on the site's
        network alone): per (downstream device, fault bus beyond it), the two devices' currents at
        :data:`RANGE_POINTS` points from the reduced arcing current to the bolted current [A], and the margin
        [s]."""
        key = (number, device)
        if key not in self._checks:
            ids, fed, current, low, bank = (getattr(self.scenarios[number], f)
                                            for f in ("ids", "fed", "current", "low", "bank"))
            u = ids.index(device)
            checks = set()
            for (src, other), buses in fed.items():
                mine = fed.get((src, device))
                if other == device or not mine or not buses < mine:
                    continue
                d = ids.index(other)
                checks.update((d, k) for k in buses
                              if current.get((k, u)) and current.get((k, d)) and np.isfinite(low[k]))
            checks = sorted(checks)
            d = np.array([c[0] for c in checks], dtype=np.intp)
            k = np.array([c[1] for c in checks], dtype=np.intp)
            steps = np.linspace(0.0, 1.0, RANGE_POINTS)[None, :]
            scale = np.power(np.maximum(low[k], 1e-3)[:, None], 1.0 - steps) if k.size else np.zeros((0, RANGE_POINTS))
            amps_u = np.array([current[(j, u)] for j in k.tolist()])[:, None] * scale * 1000.0 if k.size else scale
            amps_d = np.array([current[(j, e)] for j, e in zip(k.tolist(), d.tolist())])[:, None] * scale * 1000.0 \
                if k.size else scale
            margin = np.where((bank.kind[u] == 0) | (bank.kind[d] == 0), RELAY_MARGIN_S, 0.0)
            self._checks[key] = (d, k, amps_u, amps_d, margin)
        return self._checks[key]

    def _violations(self, site, device, pickup_a=None):
        """(downstream device, fault bus, scenario) where ``device`` of ``site`` acts before the downstream
        device clears (less the margin), over the range of fault currents; with ``pickup_a`` (the device's new
        pickup, top of its band [A]) also at the currents around that pickup's band, where its time drops."""
        from .device_bank import device_bank

        found = set()
        for number, one in enumerate(self.scenarios):
            if device not in one.ids:
                continue
            d, k, amps_u, amps_d, margin = self._pairs(number, device)
            if not d.size:
                continue
            if pickup_a is not None:  # the band's edges (tolerances up to 25 %) within each fault's range
                edges = pickup_a * np.array(PICKUP_EDGES)[None, :]
                share = edges / amps_u[:, -1:]  # as a part of the bolted-current point
                inside = (share >= amps_u[:, :1] / amps_u[:, -1:]) & (share <= 1.0)
                share = np.where(inside, share, 1.0)
                amps_u = np.concatenate([amps_u, amps_u[:, -1:] * share], axis=1)
                amps_d = np.concatenate([amps_d, amps_d[:, -1:] * share], axis=1)
            t_u = self._fastest_s(site, one.scenario, one.ids, device, amps_u.ravel()).reshape(amps_u.shape)
            t_d = device_bank(site, one.scenario, one.ids).clearing_time_s(np.repeat(d, amps_d.shape[1]),
                                                                           amps_d.ravel()).reshape(amps_d.shape)
            with np.errstate(invalid="ignore"):
                bad = (np.isfinite(t_u) & np.isfinite(t_d) & (t_u < t_d + margin[:, None])).any(axis=1)
            found.update((one.ids[e], one.faults.net.bus_ids[j], one.name)
                         for e, j in zip(d[bad].tolist(), k[bad].tolist()))
        return found

    def cost(self, candidate, site):
        """What a candidate made in ``site`` costs that the site as it is does not: ({(changed device,
        downstream device): fault buses} where selectivity is lost, [starting or inrush troubles])."""
        new = []
        for device in candidate.devices:
            if device not in self._base:
                self._base[device] = self._violations(self.site, device)
            new += [(device, *v) for v in sorted(self._violations(site, device, candidate.pickup_a.get(device))
                                                 - self._base[device])]
        by_pair = {}
        for device, other, bus, _ in new:
            by_pair.setdefault((device, other), set()).add(bus)
        troubles = []
        for device in candidate.devices:
            if ("starting", device) not in self._base:
                self._base[("starting", device)] = self._starting(self.site, device)
            troubles += [t for t in self._starting(site, device) if t not in self._base[("starting", device)]]
        return by_pair, troubles

    def _starting(self, site, device):
        """Troubles with the largest downstream motor's start or a fed transformer's inrush for ``device`` as
        set in ``site`` (texts)."""
        troubles = []
        for one in self.scenarios[:1]:
            scenario, faults, ids, fed = one.scenario, one.faults, one.ids, one.fed
            if device not in ids:
                continue
            buses = set().union(*[b for (src, d), b in fed.items() if d == device]) if fed else set()
            bus_ids = list(faults.net.bus_ids)
            at = {bus_ids[k] for k in buses}
            kv = faults.net.device_kv[ids.index(device)]
            motors = [m for m in site.motors.values() if m.bus in at]
            if motors:
                largest = max(motors, key=lambda m: m.kva)
                amps = MOTOR_START_MULTIPLE * rated_current_a(largest.kva, largest.kv) * largest.kv / kv
                if self._fastest_s(site, scenario, ids, device, [amps])[0] < MOTOR_START_S:
                    troubles.append(f"trips on {largest.id}'s start ({amps:.0f} A)")
            own = site.devices[device]  # a device on a transformer's primary side sees its inrush
            fed_transformers = [t for t in site.transformers.values()
                                if t.primary_bus in at or (own.branch == t.id and own.at_bus == t.primary_bus)]
            for t in fed_transformers:
                amps = INRUSH_MULTIPLE * rated_current_a(t.kva, t.primary_kv) * t.primary_kv / kv
                if self._fastest_s(site, scenario, ids, device, [amps])[0] < INRUSH_S:
                    troubles.append(f"trips on {t.id}'s inrush ({amps:.0f} A)")
        return troubles

    def reduced_reaches(self, bus, device, pickup_a):
        """Whether ``device``'s current at the reduced arcing current of a fault at ``bus`` reaches its new
        pickup ``pickup_a`` (max band [A]) in some scenario."""
        for one in self.scenarios:
            if device in one.ids and bus in one.faults.net.bus_ids:
                k, u = list(one.faults.net.bus_ids).index(bus), one.ids.index(device)
                i_u = one.current.get((k, u))
                if i_u and np.isfinite(one.low[k]) and i_u * one.low[k] * 1000.0 >= pickup_a:
                    return True
        return False
