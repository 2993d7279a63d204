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

The paths are those of a radial network; in a meshed network one path per
source is followed (a breadth-first spanning tree) and the bus is flagged.
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
    relay_clearing_time_s,
    trip_unit_clearing_time_s,
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
    branch_ids = np.arange(1, net.branch_from.size + 1)
    graph = sp.coo_matrix((branch_ids, (net.branch_from, net.branch_to)), shape=(n, n)).tocsr()
    graph = (graph + graph.T).tocsr()
    order, pred = breadth_first_order(graph, source_bus, directed=False, return_predecessors=True)
    inside = np.zeros(n, dtype=bool)
    inside[order] = True
    within = inside[net.branch_from] & inside[net.branch_to]
    a, b = net.branch_from[within], net.branch_to[within]
    edges = np.unique(np.minimum(a, b) * n + np.maximum(a, b))
    meshed = edges.size > order.size - 1  # parallel branches between two buses are not a loop
    nodes = order[1:]
    via = np.asarray(graph[nodes, pred[nodes]]).ravel() - 1  # the branch to the predecessor
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


def _sources(site, scenario, net):
    index = {b: i for i, b in enumerate(net.bus_ids)}
    found = [(ident, index[u.bus]) for ident, u in site.utilities.items()
             if u.in_service and ident not in scenario.utilities_off]
    found += [(ident, index[g.bus]) for ident, g in site.generators.items()
              if (g.running or ident in scenario.generators_running) and ident not in scenario.generators_stopped]
    return found


def clearing_times(site, scenario, net, device_table, bolted_ka, arcing_ka, reduced_arcing_ka):
    """Arc duration and governing device at every bus, for both arcing cases.

    Parameters
    ----------
    site : Site
    scenario : Scenario
    net : NetworkArrays
        The scenario's network (:func:`arcflash.study.faults.build_network`).
    device_table : pandas.DataFrame
        Device currents per bus fault (``solve_scenario(...).devices``).
    bolted_ka, arcing_ka, reduced_arcing_ka : pandas.Series
        Per bus id: bolted fault current and the two arcing currents [kA].

    Returns
    -------
    pandas.DataFrame
        Indexed by bus id: ``clearing_time_s``, ``governing_device``,
        ``reduced_clearing_time_s``, ``reduced_governing_device``,
        ``duration_capped``, ``no_trip``, ``no_device``, ``meshed`` and
        ``clearing_notes`` (text).
    """
    bus_ids = np.array(net.bus_ids, dtype=object)
    device_ids = np.array(net.device_ids, dtype=object)
    cap = site.facility.arc_duration_cap_s
    parts, reached, meshed_any = [], [], False
    for source, bus in _sources(site, scenario, net):
        buses, devices, meshed, nodes = source_paths(net, bus)
        meshed_any |= meshed
        parts.append(pd.DataFrame({"bus": bus_ids[buses], "device": device_ids[devices], "source": source}))
        reached.append(pd.DataFrame({"bus": bus_ids[nodes], "source": source}))
    pairs = pd.concat(parts, ignore_index=True) if parts else pd.DataFrame(columns=["bus", "device", "source"])
    excluded = {(b, d) for b, bus in site.buses.items() for d in bus.arc_not_cleared_by}
    if excluded and len(pairs):
        pairs = pairs[[(b, d) not in excluded for b, d in zip(pairs["bus"], pairs["device"])]]
    currents = device_table.set_index(["fault_bus", "device"])["current_ka"]
    key = pd.MultiIndex.from_arrays([pairs["bus"], pairs["device"]])
    pairs = pairs.assign(device_ka=currents.reindex(key).fillna(0.0).to_numpy())
    pairs["share"] = pairs["device_ka"].to_numpy() / bolted_ka.reindex(pairs["bus"]).to_numpy()
    ratio = {"full": arcing_ka / bolted_ka, "reduced": reduced_arcing_ka / bolted_ka}
    times = {case: np.full(len(pairs), np.inf) for case in ratio}
    maintenance = set(scenario.maintenance_mode)
    for device, rows in pairs.groupby("device").indices.items():
        curve = device_curve(site, device, maintenance=device in maintenance)
        for case, r in ratio.items():
            amps = pairs["device_ka"].to_numpy()[rows] * r.reindex(pairs["bus"].to_numpy()[rows]).to_numpy() * 1000.0
            times[case][rows] = curve.clearing_time_s(amps)
    result = pd.DataFrame(index=pd.Index(net.bus_ids, name="bus"))
    notes = {b: [] for b in net.bus_ids}
    # A path with no device at all (the source's own bus included) is never interrupted.
    reached_frame = pd.concat(reached, ignore_index=True) if reached else pd.DataFrame(columns=["bus", "source"])
    with_devices = set(zip(pairs["bus"], pairs["source"]))
    bare = {(b, src) for b, src in zip(reached_frame["bus"], reached_frame["source"]) if (b, src) not in with_devices}
    no_device = result.index.isin([b for b, _ in bare])
    result["no_device"] = no_device
    for bus, source in sorted(bare):
        notes[bus].append(f"no protective device between source {source} and this bus")
    live = pairs.groupby(["bus", "source"])["share"].transform("max") >= NEGLIGIBLE_PATH_SHARE
    for case, prefix in (("full", ""), ("reduced", "reduced_")):
        frame = pairs.assign(time=times[case])[live.to_numpy()]
        fastest = frame.sort_values("time", kind="stable").groupby(["bus", "source"], sort=False).first()
        slowest_path = fastest.sort_values("time", ascending=False, kind="stable").groupby(level="bus").first()
        duration = slowest_path["time"].reindex(result.index).to_numpy()
        governing = slowest_path["device"].reindex(result.index).to_numpy()
        energized = result.index.isin(reached_frame["bus"])
        duration = np.where(no_device, np.inf, np.where(energized, duration, np.nan))
        governing = np.where(no_device, None, governing)
        no_trip = np.isinf(duration) & ~no_device
        capped = (duration > cap) if cap is not None else np.zeros(len(result), bool)
        if cap is not None:
            duration = np.minimum(duration, cap)
        result[f"{prefix}clearing_time_s"] = duration
        result[f"{prefix}governing_device"] = governing
        result[f"{prefix}no_trip"] = no_trip
        result[f"{prefix}duration_capped"] = capped
        for bus in result.index[no_trip]:
            notes[bus].append(f"{case} arcing current: no device on the path trips")
        for bus in result.index[capped]:
            notes[bus].append(f"{case} arcing current: arc duration capped at {cap:g} s")
    result["meshed"] = meshed_any
    if meshed_any:
        for bus in result.index:
            notes[bus].append("meshed network: clearing followed along one path per source; check parallel paths")
    result["clearing_notes"] = ["; ".join(notes[b]) for b in result.index]
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
    from .faults import build_network, solve_scenario

    chosen = site.scenario(scenario)
    faults = solve_scenario(site, chosen.name)
    arcs = arcing_currents(site, faults.buses)
    net = build_network(site, chosen)
    times = clearing_times(site, chosen, net, faults.devices, faults.buses["bolted_ka"],
                           arcs["arcing_current_ka"], arcs["reduced_arcing_current_ka"])
    return faults.buses.join(arcs).join(times)
