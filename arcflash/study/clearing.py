"""Clearing the arcing fault at each bus: which devices, how long.

For each bus and scenario, the arc is fed along one path from every
energising source (utility, running generator). Each protective device on a
path carries its own share of the arcing current — its share of the bolted
fault current times I_arc/I_bf (the arcing current divides like the bolted
one, common practice) — at its own voltage, and clears in the time its curve
gives for that current. A path is interrupted by its fastest device; the arc
ends when every path is interrupted, so the arc duration is the largest of
the paths' times and the governing device is the one that clears that path.
Motors contribute to the fault but are not treated as source paths (their
contribution decays within a few cycles; common practice).

- A bus may list devices that do not clear an arc there
  (``arc_not_cleared_by``, e.g. its main for an arc on the main's line side):
  those are skipped and the next device on the path governs.
- A device that does not trip at its current is noted; a path that no
  device interrupts lasts until the arc-duration cap (2 s by default,
  IEEE 1584-2018 guidance), flagged; so does any duration above the cap.
- Scenario ``maintenance_mode`` switches on a device's maintenance settings.

In a meshed network, where a path's fastest device sits on a loop, devices
open in the order of their clearing times until no source reaches the bus
(elsewhere the path answer is exact: its device's branch is a bridge).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
import scipy.sparse as sp
from scipy.sparse.csgraph import breadth_first_order

from ..models.curves import (
    DefiniteTimeStage,
    RelaySettings,
    TripUnitSettings,
    point_curve_time_s,
    relay_clearing_time_batch_s,
    relay_clearing_time_s,
    relay_parameters,
    trip_unit_clearing_time_s,
    trip_unit_parameters,
    trip_unit_time_batch_s,
)

#: A path whose devices all carry less than this share of the bolted current is negligible [-].
NEGLIGIBLE_PATH_SHARE = 0.01


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


def device_curve(site, device_id, maintenance=False):
    """The clearing-time function of one device, maintenance settings on or off."""
    device = site.devices[device_id]
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
        u = device.trip_unit.model_copy(update=device.maintenance) if maintenance else device.trip_unit
        settings = TripUnitSettings(**u.model_dump(), frequency_hz=frequency)
    else:
        settings = site.curves[device.curve].to_model()
    return DeviceCurve(device_id, device.kind, settings)


def source_paths(net, source_bus):
    """(bus, device) pairs: the devices on the path from one source bus to every bus.

    Parameters
    ----------
    net : NetworkArrays
        The scenario's network (closed branches only).
    source_bus : int
        Index of the source bus.

    Returns
    -------
    tuple
        Bus indices and device indices (into ``net.device_ids``) of the pairs;
        whether the part of the network reached holds a loop (so that the
        path is one of several); the buses the source reaches.
    """
    n = net.base_kv.size
    graph = sp.coo_matrix((np.ones(net.branch_from.size), (net.branch_from, net.branch_to)), shape=(n, n)).tocsr()
    order, pred = breadth_first_order(graph, source_bus, directed=False, return_predecessors=True)
    inside = np.zeros(n, dtype=bool)
    inside[order] = True
    # More branches than a tree needs: a loop (parallel branches between two buses count too).
    meshed = int(np.count_nonzero(inside[net.branch_from] & inside[net.branch_to])) > order.size - 1
    nodes = order[1:]
    # The branch to the predecessor: the lowest-numbered branch joining the two buses.
    pair = np.minimum(net.branch_from, net.branch_to) * n + np.maximum(net.branch_from, net.branch_to)
    by_pair = np.lexsort((np.arange(pair.size), pair))
    wanted = np.minimum(nodes, pred[nodes]) * n + np.maximum(nodes, pred[nodes])
    via = by_pair[np.searchsorted(pair[by_pair], wanted)]
    branch_to_pred = np.full(n, -1, dtype=np.intp)
    branch_to_pred[nodes] = via
    # Devices of each branch.
    device_order = np.argsort(net.device_branch, kind="stable")
    sorted_branch = net.device_branch[device_order]
    buses, devices = [], []
    target = nodes.copy()
    current = nodes.copy()
    while current.size:
        b = branch_to_pred[current]
        first = np.searchsorted(sorted_branch, b, side="left")
        count = np.searchsorted(sorted_branch, b, side="right") - first
        rows = np.repeat(np.arange(current.size), count)
        offsets = np.arange(rows.size) - np.repeat(np.cumsum(count) - count, count)
        buses.append(target[rows])
        devices.append(device_order[np.repeat(first, count) + offsets])
        current = pred[current]
        keep = current != source_bus
        current, target = current[keep], target[keep]
    empty = np.array([], dtype=np.intp)
    return (np.concatenate(buses) if buses else empty, np.concatenate(devices) if devices else empty,
            meshed, np.concatenate(([source_bus], nodes)))


def energising_sources(site, scenario, net):
    """(id, bus index) of each source that energises ``net``: the utilities in service and the
    running generators, as :func:`~arcflash.study.faults.build_network` chose them for the
    scenario (motors are not sources of a path)."""
    return list(zip(net.source_ids, net.source_bus.tolist()))


class DeviceBank:
    """Every device of a site in a scenario, as parameter arrays by kind.

    Evaluates many (device, current) pairs in one call per kind of device
    (and one per digitised curve), so that a whole facility's clearing times
    take a few array operations.
    """

    def __init__(self, site, scenario, device_ids):
        maintenance = set(scenario.maintenance_mode)
        devices = [site.devices[d] for d in device_ids]
        self.kind = np.array([2 if d.curve else (0 if d.relay is not None else 1) for d in devices], dtype=np.int8)
        self.row = np.zeros(len(devices), dtype=np.intp)  # position within its kind's parameter arrays
        for code in range(3):
            self.row[self.kind == code] = np.arange(np.count_nonzero(self.kind == code))
        relays = [device_curve(site, ident, ident in maintenance).settings
                  for ident, d in zip(device_ids, devices) if d.relay is not None]
        # Trip units straight from the validated site data (maintenance overrides applied).
        units = [d.trip_unit.model_copy(update=d.maintenance) if ident in maintenance else d.trip_unit
                 for ident, d in zip(device_ids, devices) if d.trip_unit is not None]
        self.relays = relay_parameters(relays) if relays else None
        self.units = trip_unit_parameters(units, site.facility.frequency_hz) if units else None
        named = [d.curve for d in devices]
        self.curve_names = sorted({name for name in named if name})
        self.curves = {name: site.curves[name].to_model() for name in self.curve_names}
        lookup = {name: k for k, name in enumerate(self.curve_names)}
        self.point_curve = np.array([lookup[n] if n else -1 for n in named], dtype=np.intp)

    def clearing_time_s(self, device, current_a):
        """Clearing time of device ``device[k]`` at ``current_a[k]`` (max band) [s]."""
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
                t[rows] = point_curve_time_s(current_a[rows], self.curves[name], band="max")
        return t

    def _relays(self, current, rows):
        return relay_clearing_time_batch_s(current, self.relays, rows)

    def _units(self, current, rows):
        return trip_unit_time_batch_s(current, self.units, rows, band="max")


def _first_of_groups(keys, values):
    """Index of the smallest value in each run of equal keys (keys sorted)."""
    order = np.lexsort((values, keys))
    first = np.ones(order.size, dtype=bool)
    first[1:] = keys[order][1:] != keys[order][:-1]
    return order[first]


def _joined_notes(n, notes):
    """Per-case text: the notes whose mask holds, joined by '; '."""
    text = np.full(n, "", dtype=object)
    for mask, note in notes:
        if mask.any():
            sep = np.where(text[mask] == "", "", "; ")
            text[mask] = text[mask] + sep + note
    return text


@dataclass(frozen=True)
class ClearingPaths:
    """Everything about a scenario's source paths that does not depend on the arcing currents.

    One row per (source, bus, device on the path): ``bus``, ``device``,
    ``path`` (source × buses + bus), the device's bolted current ``device_ka``
    and ``live`` (the path carries a non-negligible current); per bus
    ``bolted_ka``, ``no_device``, ``energized``; ``notes``, the device bank,
    the source buses and, in a meshed network, which branches lie on a loop.
    """

    bus_ids: list
    device_ids: np.ndarray
    bus: np.ndarray
    device: np.ndarray
    path: np.ndarray
    device_ka: np.ndarray
    live: np.ndarray
    bolted_ka: np.ndarray
    no_device: np.ndarray
    energized: np.ndarray
    meshed: bool
    notes: list
    bank: DeviceBank
    cap_s: float | None
    source_bus: np.ndarray
    on_loop: np.ndarray | None


def clearing_paths(site, scenario, faults):
    """Source paths, device currents and device bank of a scenario (see :class:`ClearingPaths`)."""
    net, solution = faults.net, faults.solution
    n_bus, n_dev = len(net.bus_ids), len(net.device_ids)
    sources = energising_sources(site, scenario, net)
    bus_parts, dev_parts, src_parts, reached = [], [], [], np.zeros((len(sources), n_bus), dtype=bool)
    meshed_any = False
    for number, (_, bus) in enumerate(sources):
        buses, devices, meshed, nodes = source_paths(net, bus)
        meshed_any |= meshed
        bus_parts.append(buses)
        dev_parts.append(devices)
        src_parts.append(np.full(buses.size, number, dtype=np.intp))
        reached[number, nodes] = True
    bus = np.concatenate(bus_parts) if bus_parts else np.array([], dtype=np.intp)
    dev = np.concatenate(dev_parts) if dev_parts else np.array([], dtype=np.intp)
    src = np.concatenate(src_parts) if src_parts else np.array([], dtype=np.intp)
    bus_index = {b: i for i, b in enumerate(net.bus_ids)}
    device_index = {d: i for i, d in enumerate(net.device_ids)}
    excluded = {bus_index[b] * n_dev + device_index[d]
                for b, item in site.buses.items() for d in item.arc_not_cleared_by if d in device_index}
    if excluded:
        keep = ~np.isin(bus * n_dev + dev, list(excluded))
        bus, dev, src = bus[keep], dev[keep], src[keep]
    # Bolted current through each device for a fault at each bus (0 below the table's threshold).
    currents = sp.csr_matrix((solution.device_current_ka, (solution.device_fault_bus, solution.device)),
                             shape=(n_bus, n_dev))
    device_ka = np.asarray(currents[bus, dev]).ravel() if bus.size else np.zeros(0)
    bolted = solution.bolted_ka
    path = src * n_bus + bus
    path_share = np.zeros(len(sources) * n_bus)
    np.maximum.at(path_share, path, device_ka / bolted[bus])
    has_device = np.zeros(len(sources) * n_bus, dtype=bool)
    has_device[path] = True
    bare = reached & ~has_device.reshape(len(sources), n_bus)  # a source reaches the bus through no device
    return ClearingPaths(
        bus_ids=net.bus_ids, device_ids=np.array(net.device_ids, dtype=object), bus=bus, device=dev,
        path=path, device_ka=device_ka, live=path_share[path] >= NEGLIGIBLE_PATH_SHARE, bolted_ka=bolted,
        no_device=bare.any(axis=0), energized=reached.any(axis=0), meshed=meshed_any,
        notes=[(bare[number], f"no protective device between source {source} and this bus")
               for number, (source, _) in enumerate(sources)],
        bank=DeviceBank(site, scenario, net.device_ids), cap_s=site.facility.arc_duration_cap_s,
        source_bus=np.array([b for _, b in sources], dtype=np.intp),
        on_loop=non_bridge_branches(net) if meshed_any else None,
    )


def non_bridge_branches(net):
    """Branches whose opening alone cannot split the network (they lie on a loop) [-].

    A spanning forest is grown breadth-first; every branch outside it closes a
    loop, which makes it and the forest's branches between its two buses
    non-bridges (parallel branches between two buses included).
    """
    n, m = len(net.bus_ids), net.branch_from.size
    graph = sp.coo_matrix((np.arange(1, m + 1), (net.branch_from, net.branch_to)), shape=(n, n)).tocsr()
    graph = (graph + graph.T).tocsr()
    parent = np.full(n, -9999, dtype=np.intp)
    depth = np.zeros(n, dtype=np.intp)
    tree_branch = np.full(n, -1, dtype=np.intp)
    seen = np.zeros(n, dtype=bool)
    for root in range(n):
        if seen[root]:
            continue
        order, pred = breadth_first_order(graph, root, directed=False, return_predecessors=True)
        seen[order] = True
        parent[order] = pred[order]
        for node in order[1:]:
            depth[node] = depth[pred[node]] + 1
    in_tree = np.zeros(m, dtype=bool)
    for b, (f, t) in enumerate(zip(net.branch_from, net.branch_to)):
        child = t if parent[t] == f else (f if parent[f] == t else -1)
        if child >= 0 and tree_branch[child] < 0:
            tree_branch[child] = b
            in_tree[b] = True
    loop = ~in_tree
    for b in np.flatnonzero(~in_tree):
        u, v = net.branch_from[b], net.branch_to[b]
        while u != v:
            if depth[u] < depth[v]:
                u, v = v, u
            loop[tree_branch[u]] = True
            u = parent[u]
    return loop


def _sequential_opening(faults, paths, ratio, sources_bus, buses):
    """Arc duration in a meshed network: open devices in time order until no source reaches the bus.

    Candidates are the devices carrying at least 1 % of the bus fault current,
    each timed at its share of the arcing current as the fault begins (the
    redistribution after an opening is not followed: the remaining devices
    usually see more current and clear sooner, so this errs long).

    Returns
    -------
    tuple of numpy.ndarray
        Duration [s] (inf where never cleared) and governing device index (-1).
    """
    net, solution = faults.net, faults.solution
    n = len(net.bus_ids)
    duration = np.full(n, np.nan)
    governing = np.full(n, -1, dtype=np.intp)
    share = solution.device_share
    rows = np.flatnonzero(share >= NEGLIGIBLE_PATH_SHARE)
    bus, dev = solution.device_fault_bus[rows], solution.device[rows]
    amps = solution.device_current_ka[rows] * ratio[bus] * 1000.0
    times = paths.bank.clearing_time_s(dev, amps)
    branch_of = net.device_branch[dev]
    order = np.lexsort((times, bus))
    bounds = np.searchsorted(bus[order], np.arange(n + 1))
    # One adjacency matrix for all checks; an opened branch is removed by zeroing its entries.
    # Built by hand so that parallel branches keep one entry each (a sparse constructor would sum them).
    m = net.branch_from.size
    rows = np.concatenate([net.branch_from, net.branch_to])
    cols = np.concatenate([net.branch_to, net.branch_from])
    entry_order = np.argsort(rows, kind="stable")
    indptr = np.concatenate(([0], np.cumsum(np.bincount(rows, minlength=n))))
    indices = cols[entry_order]
    branch_of_entry = np.tile(np.arange(m), 2)[entry_order]
    ones = np.ones(indices.size)
    is_source = np.zeros(n, dtype=bool)
    is_source[sources_bus] = True
    for k in buses:
        opened = np.zeros(m, dtype=bool)
        result_t, result_d = np.inf, -1
        for r in order[bounds[k]:bounds[k + 1]]:
            if not np.isfinite(times[r]):
                break
            opened[branch_of[r]] = True
            check = sp.csr_matrix((np.where(opened[branch_of_entry], 0.0, ones), indices, indptr), shape=(n, n))
            check.eliminate_zeros()
            reached = breadth_first_order(check, k, directed=False, return_predecessors=False)
            if not is_source[reached].any():
                result_t, result_d = times[r], dev[r]
                break
        duration[k], governing[k] = result_t, result_d
    return duration, governing


def clearing_times(site, scenario, faults, arcing_ka, reduced_arcing_ka, paths=None):
    """Arc duration and governing device at every bus, for both arcing cases.

    Parameters
    ----------
    site : Site
    scenario : Scenario
    faults : ScenarioFaults
        The scenario's faults (:func:`arcflash.study.faults.solve_scenario`).
    arcing_ka, reduced_arcing_ka : pandas.Series
        Per bus id: the two arcing currents [kA].
    paths : ClearingPaths, optional
        From :func:`clearing_paths` (computed when not given).

    Returns
    -------
    pandas.DataFrame
        Indexed by bus id: ``clearing_time_s``, ``governing_device``,
        ``no_trip``, ``duration_capped`` and the same with ``reduced_``;
        ``no_device``, ``meshed`` and ``clearing_notes`` (text).
    """
    paths = clearing_paths(site, scenario, faults) if paths is None else paths
    n_bus, cap = len(paths.bus_ids), paths.cap_s
    bus, dev, live = paths.bus, paths.device, paths.live
    result = pd.DataFrame(index=pd.Index(paths.bus_ids, name="bus"))
    notes = list(paths.notes)
    result["no_device"] = paths.no_device
    for case, prefix, arc in (("full", "", arcing_ka), ("reduced", "reduced_", reduced_arcing_ka)):
        ratio = arc.reindex(paths.bus_ids).to_numpy(float) / paths.bolted_ka
        time = paths.bank.clearing_time_s(dev, paths.device_ka * ratio[bus] * 1000.0)
        duration = np.full(n_bus, np.nan)
        governing = np.full(n_bus, None, dtype=object)
        path_best_bus = path_best_dev = np.array([], dtype=np.intp)
        if live.any():
            p, t, d, b = paths.path[live], time[live], dev[live], bus[live]
            fastest = _first_of_groups(p, t)  # the fastest device of each path
            path_best_bus, path_best_dev = b[fastest], d[fastest]
            slowest = _first_of_groups(b[fastest], -t[fastest])  # the slowest path of each bus
            chosen = fastest[slowest]
            duration[b[chosen]] = t[chosen]
            governing[b[chosen]] = paths.device_ids[d[chosen]]
        if paths.meshed:
            # The single-path answer is exact where the device it picks sits on a branch whose opening
            # splits the network (a bridge): the path stays closed until then, and is cut then.
            # Elsewhere the bus gets the sequential opening.
            doubtful = paths.energized & np.array([g is None for g in governing])
            doubtful[path_best_bus[paths.on_loop[faults.net.device_branch[path_best_dev]]]] = True
            meshed_t, meshed_d = _sequential_opening(faults, paths, ratio, paths.source_bus,
                                                     np.flatnonzero(doubtful))
            duration = np.where(doubtful, meshed_t, duration)
            governing = np.where(doubtful, np.where(meshed_d >= 0, paths.device_ids[np.maximum(meshed_d, 0)], None),
                                 governing)
        duration = np.where(paths.no_device, np.inf, duration)
        duration = np.where(paths.energized, duration, np.nan)
        governing = np.where(paths.no_device, None, governing)
        no_trip = np.isinf(duration) & ~paths.no_device
        capped = (duration > cap) if cap is not None else np.zeros(n_bus, bool)
        if cap is not None:
            duration = np.minimum(duration, cap)
        result[f"{prefix}clearing_time_s"] = duration
        result[f"{prefix}governing_device"] = governing
        result[f"{prefix}no_trip"] = no_trip
        result[f"{prefix}duration_capped"] = capped
        notes.append((no_trip, f"{case} arcing current: no device on the path trips"))
        if cap is not None:
            notes.append((capped, f"{case} arcing current: arc duration capped at {cap:g} s"))
    result["meshed"] = paths.meshed
    notes.append((np.full(n_bus, paths.meshed), "meshed network: devices opened in time order until no source "
                                                "reaches the bus (current redistribution not followed)"))
    result["clearing_notes"] = _joined_notes(n_bus, notes)
    return result


def clearing_table(site, scenario=None):
    """Faults, arcing currents and arc durations of every bus in one scenario.

    Returns
    -------
    pandas.DataFrame
        Indexed by bus id: the fault table's columns, the arcing currents and
        the columns of :func:`clearing_times`.
    """
    from .arcing import arcing_currents
    from .faults import solve_scenario

    chosen = site.scenario(scenario)
    faults = solve_scenario(site, chosen.name)
    arcs = arcing_currents(site, faults.buses)
    times = clearing_times(site, chosen, faults, arcs["arcing_current_ka"], arcs["reduced_arcing_current_ka"])
    return faults.buses.join(arcs).join(times)
