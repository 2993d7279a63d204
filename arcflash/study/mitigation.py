"""What would bring a bus down: setting and procedure changes on the devices that clear it, searched for every
bus above a target energy at once, each kept only with what it costs in selectivity and starting.

For every bus whose governing incident energy is above the target, the devices that end its arcs (in any
scenario and arcing case above the target) get candidate changes from a stated search space
(:class:`SearchSpace`): lower instantaneous pickups, lower short-time pickups and delays of trip units,
lower instantaneous pickups of relays, the device's energy-reducing maintenance settings made the working
setting (a procedure), and hardware: zone-selective interlocking or a differential zone (zone settings,
:mod:`.zones`), a smaller fuse or breaker from the device library. Every candidate is studied through the whole chain — faults, staged
clearing, both arcing cases, every scenario — at each bus whose clearing devices it changes, all
candidates together (:func:`~arcflash.study.setting_variants.variant_numbers`: a setting moves no fault
current, so the site's faults serve every candidate; each number is the one a study of the changed site
gives, bit for bit).

Each candidate is checked (:mod:`.mitigation_checks`) against:

- **selectivity** with every device downstream of a changed one, over the range of currents that device
  carries for faults beyond it (from the reduced arcing current to the bolted current): the changed
  device's fastest time must not come before the downstream device's total clearing time plus a
  coordination margin (0.2 s where a relay is one of the pair, none between banded devices, whose bands
  carry their tolerances). Only what the change breaks is charged to it: pairs the site already leaves
  uncoordinated are reported as they are, not as a cost.
- **starting and inrush**: no trip within 10 s at 9 times the largest downstream motor's full-load current,
  nor within 0.1 s at 12 times the rated current of a transformer it feeds (common practice).
- whether the arcing current in the reduced case still reaches the new instantaneous pickup (else the
  energy reached rests on the full arcing current only; the energies reported take both cases anyway).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..models import nfpa70e
from .mitigation_checks import (  # noqa: F401 (the constants' earlier home)
    INRUSH_MULTIPLE, INRUSH_S, MOTOR_START_MULTIPLE, MOTOR_START_S, PICKUP_EDGES, RANGE_POINTS, RELAY_MARGIN_S, Checks)

__all__ = ["Candidate", "MitigationResult", "SearchSpace", "candidates_for", "mitigate"]


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
    smaller_devices : bool
        Propose, in place of a fuse or thermal-magnetic breaker, each smaller one of the same kind among the
        site's curves and device library, rated for the voltage (hardware) [-]
    zone_interlocking_delay_s : float or None
        Propose zone-selective interlocking to a trip unit with a short-time element: for an arc in its zone,
        its short-time delay at this unrestrained band (hardware; common practice: the shortest band of
        electronic trip units); None: not proposed [s]
    differential_pickup_multiple : float or None
        Propose a differential scheme to a relay-breaker: for an arc in its zone, an instantaneous element at
        this multiple of its inverse-time pickup (hardware; conservative: a differential element is more
        sensitive than the overcurrent pickup); None: not proposed [-]
    """

    instantaneous_multiples: tuple = (1.5, 2.0, 2.5, 3.0, 3.5, 4.0, 4.5, 5.0, 6.0, 7.0, 8.0, 9.0, 10.0, 11.0, 12.0)
    short_time_pickups: tuple = (1.5, 2.0, 2.5, 3.0, 3.5, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 10.0)
    short_time_delays_s: tuple = (0.05, 0.1, 0.15, 0.2, 0.25, 0.3, 0.4, 0.5)
    relay_instantaneous_multiples: tuple = (1.5, 2.0, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0, 12.0, 15.0, 20.0, 25.0, 30.0)
    maintenance: bool = True
    smaller_devices: bool = True
    zone_interlocking_delay_s: float | None = 0.05
    differential_pickup_multiple: float | None = 1.0


@dataclass(frozen=True)
class Candidate:
    """A change to one device or more: ``kind`` 'setting', 'procedure' or 'hardware', ``change`` in words, ``updates``
    (device -> its new fields), ``key`` (what the change sets, the same for the same change on another
    device), ``pickup_a`` (device -> its new instantaneous or short-time pickup, max band [A])."""

    devices: tuple
    kind: str
    change: str
    updates: dict
    key: tuple
    pickup_a: dict
    #: device -> {settings group ('trip_unit', 'relay', or 'device' for the device's own fields): {field: new
    #: value}}: the change as site data.
    settings: dict = dataclasses.field(default_factory=dict)

    def site_of(self, site):
        """The site with this change made (a variant: its devices replaced)."""
        return _with_devices(site, {ident: site.devices[ident].replaced(update) for ident, update in self.updates.items()})


class _Overlay(Mapping):
    """A site's devices with some replaced, the others read from the site's own mapping (a candidate's site:
    a copy of a large site's devices per candidate would cost more than its study)."""

    def __init__(self, base, replaced):
        self._base, self._replaced = base, replaced

    def __getitem__(self, ident):
        return self._replaced[ident] if ident in self._replaced else self._base[ident]

    def __iter__(self):
        return iter(self._base)

    def __len__(self):
        return len(self._base)


def _with_devices(site, replaced):
    """``site`` with the devices of ``replaced`` (id -> device) in place of its own."""
    return dataclasses.replace(site, devices=_Overlay(site.devices, replaced))


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
        if "curve" in update or "zone" in update:
            settings = {"device": dict(update)}
        else:
            group = "trip_unit" if "trip_unit" in update else "relay"
            was = getattr(device, group).model_dump()
            now = update[group].model_dump()
            settings = {group: {f: v for f, v in now.items() if was.get(f) != v}}
        found.append(Candidate((device_id,), kind, f"{device_id}: {change}", {device_id: update}, key,
                               {} if pickup_a is None else {device_id: pickup_a}, {device_id: settings}))

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
    delay = space.zone_interlocking_delay_s
    if delay is not None and not device.zone and unit is not None and unit.short_time_pickup is not None \
            and unit.short_time_delay_s > delay:
        add("hardware", f"zone-selective interlocking (short-time delay {delay:g} s for an arc in its zone; the "
                        f"devices downstream must restrain it)", {"zone": {"short_time_delay_s": delay}}, ("zone",))
    multiple = space.differential_pickup_multiple
    if multiple is not None and not device.zone and relay is not None:
        setting = multiple * relay.pickup_a
        add("hardware", f"differential protection of its zone (an instantaneous element at {setting:g} A "
                        f"secondary for an arc in its zone)", {"zone": {"instantaneous_a": setting}}, ("zone",))
    if space.smaller_devices and device.curve is not None:
        for name, curve in _smaller(site, device):
            add("hardware", f"{device.kind} {device.curve} -> {name} (a smaller one, rated {curve.rated_kv:g} kV: "
                            f"confirm it carries the load)", {"curve": name}, ("curve", name),
                curve.instantaneous_a)
    return found


def _smaller(site, device):
    """(id, curve) of the site's curves (its device library's included) that could replace ``device``'s: the
    same kind, rated for the voltage of its bus, and smaller (it starts to operate at a lower current: the
    first current of its band below the present one's), smallest last."""
    present = site.curves[device.curve]
    kv = site.buses[device.at_bus].nominal_kv
    found = [(name, curve) for name, curve in site.curves.items()
             if name != device.curve and curve.kind == present.kind and curve.rated_kv is not None
             and curve.rated_kv >= kv and curve.current_a[0] < present.current_a[0]]
    return sorted(found, key=lambda item: -item[1].current_a[0])


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
    # each candidate at the buses whose clearing devices it changes (only) is studied
    asked = [(j, bus) for bus in high for j, c in enumerate(every) if set(c.devices) <= set(clearing[bus])]
    sites = [c.site_of(site) for c in every]
    solved = {}
    after = _reached(site, every, sites, asked, before, solved)
    checks = Checks(site, every, sites, solved)
    costs = checks.costs()
    table = []
    for j, bus in asked:
        candidate = every[j]
        reached = after[j, bus]
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
        least = [-_size(every[j], site) for j in candidates["candidate"]]
        candidates = candidates.assign(_keeps=keeps, _least=least).sort_values(
            ["bus", "reaches_target", "_keeps", "incident_energy_cal_cm2", "changes", "_least"],
            ascending=[True, False, False, True, True, True], kind="stable")
        candidates = candidates.drop(columns=["_keeps", "_least"]).reset_index(drop=True)
        order = {b: k for k, b in enumerate(high)}
        candidates = candidates.iloc[np.argsort(candidates["bus"].map(order).to_numpy(), kind="stable")]
        candidates = candidates.reset_index(drop=True)
    return MitigationResult(candidates, _bus_summary(high, before, clearing, candidates, costs, target_cal_cm2),
                            float(target_cal_cm2), every)


def _reached(site, every, sites, asked, before, solved):
    """The governing energy each candidate reaches at each bus asked ((candidate, bus) -> [cal/cm²]): by
    :func:`~.setting_variants.variant_numbers` (``solved`` receives what it made of each scenario).

    A zone scheme proposed (zone settings on devices) is studied at a bus with those of its devices whose zone
    holds the bus in every scenario where they feed it made to work with their zone settings, the others as
    set: what the scheme gives there. Where a device's zone holds the bus in some of those scenarios only,
    and on a site that has zone settings already, the changed site is studied whole
    (:func:`~.uncertainty.study_variants`)."""
    from .setting_variants import variant_numbers
    from .uncertainty import study_variants
    from .zones import has_zones, zoned

    if not asked:
        return {}
    buses = list(site.buses)
    whole = set(range(len(every))) if has_zones(site) else set()
    states = _zone_states(site, every, asked) if not whole else {}
    variants, number, requests = [], {}, []  # the sites studied, by (candidate, devices zoned); each request's
    for j, bus in asked:
        if j in whole:
            continue
        state = states.get((j, bus))
        if state is None:
            key = (j, None)
        elif "some" in state.values():
            whole.add(j)
            continue
        else:
            key = (j, tuple(d for d, s in state.items() if s == "every"))
        if key not in number:
            number[key] = len(variants)
            zoned_here = key[1] or ()
            variants.append((sites[j] if key[1] is None else _with_devices(
                site, {d: zoned(sites[j].devices[d]) for d in zoned_here}),
                every[j].devices if key[1] is None else zoned_here))
        requests.append((j, bus, number[key]))
    requests = [r for r in requests if r[0] not in whole]
    after = {}
    if requests:
        energy = variant_numbers(site, [v for v, _ in variants], [k for _, _, k in requests],
                                 [b for _, b, _ in requests], [c for _, c in variants], keep=solved)[0]
        after = {(j, bus): e for (j, bus, _), e in zip(requests, energy)}
    if whole:
        chosen = sorted(whole)
        energy = study_variants(site, [sites[j] for j in chosen])[0]
        for j, bus in asked:
            if j in whole:
                after[j, bus] = energy[chosen.index(j), buses.index(bus)]
    return after


def _zone_states(site, every, asked):
    """Per (zone candidate, bus) asked: per device of the candidate, whether the bus is in its zone in
    'every' scenario where it feeds the bus, in 'no' scenario, or in 'some' [-]."""
    from .clearing import clearing_paths
    from .faults import solve_scenario
    from .zones import zone_rows

    wanted = [(j, bus) for j, bus in asked if every[j].key == ("zone",)]
    if not wanted:
        return {}
    scenarios = []
    for name, scenario in site.scenarios.items():
        paths = clearing_paths(site, scenario, solve_scenario(site, name, for_clearing=True))
        scenarios.append((paths, list(paths.bus_ids), list(paths.device_ids), zone_rows(site, scenario, paths), {}))
    states = {}
    for j, bus in wanted:
        state = {}
        for device in every[j].devices:
            inside = []
            for paths, bus_ids, ids, rows, zones in scenarios:
                if device not in ids:
                    continue
                d, k = ids.index(device), bus_ids.index(bus)
                if d not in zones:
                    zones[d] = set(paths.bus[rows & (paths.device == d)].tolist())
                if ((paths.bus == k) & (paths.device == d)).any():
                    inside.append(k in zones[d])
            state[device] = "every" if inside and all(inside) else ("no" if not any(inside) else "some")
        states[j, bus] = state
    return states


def _size(candidate, site):
    """How much of a device a change leaves (the higher, the less it changes): the new pickup or delay, or
    the first current of a replacing device's band [-, s, A]."""
    if candidate.key[0] == "curve":
        return float(site.curves[candidate.key[1]].current_a[0])
    return float(candidate.key[1]) if len(candidate.key) > 1 else 0.0


_COLUMNS = ["candidate", "bus", "devices", "change", "kind", "changes", "incident_energy_before_cal_cm2",
            "incident_energy_cal_cm2", "ppe_category", "reaches_target", "selectivity_lost", "starting_or_inrush",
            "reduced_arcing_reaches_pickup"]


def _bus_summary(high, before, clearing, candidates, costs, target):
    """Per bus above the target: the best candidate that reaches it with selectivity and starting kept, or
    what prevents one."""
    out = []
    # the table's columns as arrays, and each bus's rows (in their ranked order)
    column = {name: candidates[name].to_numpy() for name in ("bus", "reaches_target", "selectivity_lost",
                                                              "starting_or_inrush", "change", "candidate",
                                                              "incident_energy_cal_cm2")}
    good_rows = column["reaches_target"].astype(bool) & (column["selectivity_lost"] == "") & \
        (column["starting_or_inrush"] == "")
    rows_of = {}
    for k, bus in enumerate(column["bus"].tolist()):
        rows_of.setdefault(bus, []).append(k)
    for bus in high:
        mine = np.array(rows_of.get(bus, []), dtype=np.intp)
        good = mine[good_rows[mine]]
        reaching = mine[column["reaches_target"][mine].astype(bool)]
        if good.size:
            best = good[0]
            status, note = "candidates", (f"{column['change'][best]} "
                                          f"({column['incident_energy_cal_cm2'][best]:.3g} cal/cm2)")
        elif not clearing[bus]:
            status, note = "none", ("no protective device of the site ends its arc (it lasts to the duration cap, "
                                    "or a stated time): only adding one, hardware, could lower it")
        elif not mine.size:
            status, note = "none", "no change in the searched space for " + ", ".join(clearing[bus])
        elif not reaching.size:
            status, note = "none", (f"no change in the searched space reaches {target:g} cal/cm2 (lowest "
                                    f"{np.nanmin(column['incident_energy_cal_cm2'][mine].astype(float)):.3g})")
        else:
            reaching = column["candidate"][reaching].tolist()
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
