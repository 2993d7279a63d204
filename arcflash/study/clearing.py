"""Clearing the arcing fault at each bus: which devices, how long.

For each bus and scenario, the arc is fed along one path from every
energising source (utility, running generator). Each protective device on a
path carries its own share of the arcing current — its share of the bolted
fault current times I_arc/I_bf (the arcing current divides like the bolted
one, common practice) — at its own voltage, and clears in the time its curve
gives for that current. A path is interrupted by its fastest device; the arc
ends when every path is interrupted, so the arc duration is the largest of
the paths' times and the governing device is the one that clears that path.
Motors contribute to the fault but do not energise a bus: they are not
source paths.

- A bus may list devices that do not clear an arc there
  (``arc_not_cleared_by``, e.g. its main for an arc on the main's line side):
  those are skipped and the next device on the path governs.
- A device that does not trip at its current is noted; a path that no
  device interrupts lasts until the arc-duration cap (2 s by default,
  IEEE 1584-2018 guidance), flagged; so does any duration above the cap.
- A scenario's ``energy_reducing_maintenance_switching`` (NEC 240.87(B)(3)) switches on a device's
  maintenance settings.

That one-stage answer is taken only where it is exact (one source, the
governing device on a bridge, no other device opening first; see
:func:`_needs_stages`). Every other bus is followed stage by stage as
devices open (:mod:`.staging`), with the energy summed by stage.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
import scipy.sparse as sp

from ..models.network_forest import spanning_forest
from .clearing_topology import (  # noqa: F401 (re-exported: the module's earlier home)
    PATHS_KEPT, _searched_paths, _sides, all_source_paths, back_feeding_devices, devices_carrying,
    joined_source_paths, non_bridge_branches, source_paths)
from .device_bank import DeviceBank, DeviceCurve, device_bank, device_curve  # noqa: F401 (re-exported)

#: A path whose devices all carry less than this share of the bolted current is negligible [-].
NEGLIGIBLE_PATH_SHARE = 0.01


def energising_sources(site, scenario, net):
    """(id, bus index) of each source that energises ``net``: the utilities in service and the
    running generators, as :func:`~arcflash.study.faults.build_network` chose them for the
    scenario (motors are not sources of a path)."""
    return list(zip(net.source_ids, net.source_bus.tolist()))


def _first_of_groups(keys, values):
    """Index of the smallest value in each group of equal keys (the first such index on a tie; NaN counts as
    the largest value)."""
    order = np.lexsort((values, keys))
    first = np.ones(order.size, dtype=bool)
    first[1:] = keys[order][1:] != keys[order][:-1]
    return order[first]


def _joined_notes(n, notes):
    """Per-case text: the notes at the rows each names (a mask, or row indices), joined by '; '."""
    text = np.full(n, "", dtype=object)
    for rows, note in notes:
        where = np.flatnonzero(rows) if rows.dtype == bool else rows
        if where.size:
            sep = np.where(text[where] == "", "", "; ")
            text[where] = text[where] + sep + note
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
    #: (buses a source reaches through no device, that source's number, the sources' ids): see ``notes``.
    bare: tuple
    bank: DeviceBank
    cap_s: float | None
    source_bus: np.ndarray
    on_loop: np.ndarray
    sources_reaching: np.ndarray
    excluded: dict
    line_side: dict
    back_feed: np.ndarray
    bus_part: np.ndarray
    forest: object = None
    sides: tuple = ()
    #: Per row: its (fault bus, device) pair's position in the scenario's fault solution, -1 for none [-].
    pair: np.ndarray = None
    #: The ``live`` rows grouped by path ((rows, group starts): each group in row order), and the paths
    #: grouped by bus likewise (positions among the paths, in the order of ``by_path``'s groups) [-].
    by_path: tuple = None
    by_bus: tuple = None

    @property
    def notes(self):
        """(buses, text) of the buses a source reaches through no device, one per such source."""
        bare_bus, bare_src, names = self.bare
        return [(buses, f"no protective device between source {names[number]} and this bus")
                for number, buses in _grouped(bare_src, bare_bus)]


def clearing_paths(site, scenario, faults):
    """Source paths, device currents and device bank of a scenario (see :class:`ClearingPaths`)."""
    net, solution = faults.net, faults.solution
    n_bus, n_dev = len(net.bus_ids), len(net.device_ids)
    sources = energising_sources(site, scenario, net)
    # path rows (bus, device, source number); (source, bus) reached
    bus, dev, src, reached_bus, reached_src, meshed_any = joined_source_paths(net, [bus for _, bus in sources])
    excluded_by_bus, line_side = _not_clearing(site, scenario, net)
    excluded = {k * n_dev + d for k, devices in excluded_by_bus.items() for d in devices}
    if excluded:
        keep = ~np.isin(bus * n_dev + dev, list(excluded))
        bus, dev, src = bus[keep], dev[keep], src[keep]
    # Bolted current through each device for a fault at each bus (0 below the table's threshold).
    currents = sp.csr_matrix((solution.device_current_ka, (solution.device_fault_bus, solution.device)),
                             shape=(n_bus, n_dev))
    device_ka = np.asarray(currents[bus, dev]).ravel() if bus.size else np.zeros(0)
    pair = np.full(bus.size, -1, dtype=np.intp)
    if bus.size:
        pairs = sp.csr_matrix((np.arange(1, solution.device.size + 1), (solution.device_fault_bus, solution.device)),
                              shape=(n_bus, n_dev))
        pair = np.asarray(pairs[bus, dev]).ravel().astype(np.intp) - 1
        pair[(pair >= 0) & (solution.device_current_ka[np.maximum(pair, 0)] != device_ka)] = -1  # twice listed
    bolted = solution.bolted_ka
    path = src * n_bus + bus
    paths_found, row_path = np.unique(path, return_inverse=True)
    path_share = np.zeros(paths_found.size)
    np.maximum.at(path_share, row_path, device_ka / bolted[bus])
    live = path_share[row_path] >= NEGLIGIBLE_PATH_SHARE
    by_path = _groups_of(path, np.flatnonzero(live))
    by_bus = _groups_of(bus[by_path[0][by_path[1]]], np.arange(by_path[1].size))
    bare = ~np.isin(reached_src * n_bus + reached_bus, paths_found)  # a source reaches the bus through no device
    no_device = np.zeros(n_bus, dtype=bool)
    no_device[reached_bus[bare]] = True
    bare_src, bare_bus = reached_src[bare], reached_bus[bare]
    forest = spanning_forest(n_bus, net.branch_from, net.branch_to)
    on_loop = non_bridge_branches(net, forest)
    sides = _sides(net, forest, on_loop)
    return ClearingPaths(
        bus_ids=net.bus_ids, device_ids=np.array(net.device_ids, dtype=object), bus=bus, device=dev,
        path=path, device_ka=device_ka, live=live, bolted_ka=bolted,
        no_device=no_device, energized=np.bincount(reached_bus, minlength=n_bus) > 0, meshed=meshed_any,
        bare=(bare_bus, bare_src, [ident for ident, _ in sources]),
        bank=device_bank(site, scenario, net.device_ids), cap_s=site.facility.arc_duration_cap_s,
        source_bus=np.array([b for _, b in sources], dtype=np.intp),
        on_loop=on_loop, sources_reaching=np.bincount(reached_bus, minlength=n_bus), excluded=excluded_by_bus,
        line_side=line_side, back_feed=sides[0], bus_part=forest.base, forest=forest, sides=sides, pair=pair,
        by_path=by_path, by_bus=by_bus,
    )


def _grouped(keys, values):
    """(key, its values in their order) for each distinct key, in increasing order."""
    order = np.argsort(keys, kind="stable")
    found, starts = np.unique(keys[order], return_index=True)
    return zip(found.tolist(), np.split(values[order], starts[1:]))


def _not_clearing(site, scenario, net):
    """Per bus index, the indices of the devices in its ``arc_not_cleared_by``, and of those standing at the
    bus (the arc on their line side). A stacked site's are its base site's, copy by copy (the samples change
    neither list: buses and devices keep their numbering within each copy)."""
    if site.stack is not None:
        from .faults import build_network

        base = site.stack.base
        chosen = base.scenario(scenario.name)
        excluded, line_side = _not_clearing(base, chosen, build_network(base, chosen))
        n_bus, n_dev = len(base.buses), len(net.device_ids) // len(site.stack.copies)
        return tuple({k * n_bus + bus: {k * n_dev + d for d in devices} for k in range(len(site.stack.copies))
                      for bus, devices in sets.items()} for sets in (excluded, line_side))
    listed = [(b, item.arc_not_cleared_by) for b, item in site.buses.items() if item.arc_not_cleared_by]
    bus_index = {b: i for i, b in enumerate(net.bus_ids)} if listed else {}
    device_index = {d: i for i, d in enumerate(net.device_ids)} if listed else {}
    excluded_by_bus, line_side = {}, {}
    for b, devices in listed:
        for d in devices:
            if d in device_index:
                excluded_by_bus.setdefault(bus_index[b], set()).add(device_index[d])
                if site.devices[d].at_bus == b:  # the bus's own device: the arc is on its line side
                    line_side.setdefault(bus_index[b], set()).add(device_index[d])
    return excluded_by_bus, line_side


@dataclass(frozen=True)
class ClearingResult:
    """Arc durations of a scenario (:func:`clear_arcs`).

    Attributes
    ----------
    table : pandas.DataFrame
        Per bus, see :func:`clearing_times`.
    stages : pandas.DataFrame
        One row per stage of every arc that was followed stage by stage:
        ``bus``, ``case`` ('full' or 'reduced'), ``stage``, ``start_s``,
        ``end_s``, ``bolted_ka``, ``arcing_ka``, ``range_code``.
    steps : pandas.DataFrame
        One row per device opening of those arcs: ``bus``, ``case``,
        ``device``, ``opening_time_s``, ``arcing_before_ka``,
        ``arcing_after_ka``, ``bolted_before_ka``, ``bolted_after_ka``.
    """

    table: pd.DataFrame
    stages: pd.DataFrame
    steps: pd.DataFrame


def _groups_of(keys, rows):
    """``rows`` grouped by their ``keys`` (stable: each group in the order of ``rows``): (the rows in group
    order, the start of each group) [-]."""
    rows = rows[np.argsort(keys[rows], kind="stable")]
    starts = np.flatnonzero(np.diff(keys[rows], prepend=-1) != 0) if rows.size else np.zeros(0, dtype=np.intp)
    return rows, starts


def _first_in_groups(groups, values):
    """Per group of :func:`_groups_of`, the position (in its row order) of its smallest value, the first on
    a tie, NaN counting as the largest: what :func:`_first_of_groups` finds, without sorting the values."""
    rows, starts = groups
    v = values[rows]
    best = np.fmin.reduceat(v, starts)
    number = np.repeat(np.arange(starts.size), np.diff(np.append(starts, rows.size)))
    hits = np.flatnonzero(v == best[number])
    first = starts.copy()  # a group of NaN only: its first row
    found, at = np.unique(number[hits], return_index=True)
    first[found] = hits[at]
    return first


def _one_stage(paths, time, live=None):
    """Duration and governing device index per bus from the source paths (-1: none); ``live`` (per
    path row) replaces the paths' own choice of rows that carry current."""
    n_bus = len(paths.bus_ids)
    duration = np.full(n_bus, np.nan)
    governing = np.full(n_bus, -1, dtype=np.intp)
    if live is None and paths.by_path is not None:  # the paths' own rows, grouped once
        rows = paths.by_path[0]
        if rows.size:
            fastest = rows[_first_in_groups(paths.by_path, time)]  # the fastest device of each path
            chosen = fastest[paths.by_bus[0][_first_in_groups(paths.by_bus, -time[fastest])]]  # the slowest path
            duration[paths.bus[chosen]] = time[chosen]
            governing[paths.bus[chosen]] = paths.device[chosen]
        return duration, governing
    live = paths.live if live is None else live
    if live.any():
        p, t, d, b = paths.path[live], time[live], paths.device[live], paths.bus[live]
        fastest = _first_of_groups(p, t)  # the fastest device of each path
        slowest = _first_of_groups(b[fastest], -t[fastest])  # the slowest path of each bus
        chosen = fastest[slowest]
        duration[b[chosen]] = t[chosen]
        governing[b[chosen]] = d[chosen]
    return duration, governing


def _name_capped(paths, states, buses, ratio, governing, zones=None):
    """The device named for arcs capped before any opening, at ``buses`` fed over several paths, from
    every device's current (none pruned): the fastest device of the slowest path at the inception currents.

    The fault table keeps a back-feed row only where the device could clear within the cap, so a
    path whose devices are all slower than the cap may have no rows there; the device that would end
    such an arc after the cap is then found from the full currents of those buses.
    """
    from ..models.network_stages import StateKey

    rows = np.flatnonzero(np.isin(paths.bus, buses))
    if not rows.size:
        return governing
    solved = states.solve(StateKey(), buses)
    where = np.searchsorted(buses, paths.bus[rows])
    device_ka = solved.device_current_ka[where, paths.device[rows]]
    share = np.zeros(len(paths.bus_ids) * (paths.path.max() // len(paths.bus_ids) + 1))
    np.maximum.at(share, paths.path[rows], device_ka / paths.bolted_ka[paths.bus[rows]])
    live = np.zeros(paths.path.size, dtype=bool)
    live[rows] = share[paths.path[rows]] >= NEGLIGIBLE_PATH_SHARE
    time = np.full(paths.path.size, np.inf)
    time[rows] = _times(paths, zones, paths.device[rows], device_ka * ratio[paths.bus[rows]] * 1000.0, paths.bus[rows])
    _, named = _one_stage(paths, time, live)
    governing = governing.copy()
    governing[buses] = named[buses]
    return governing


def _times(paths, zones, device, current_a, bus):
    """Clearing times of ``device`` at ``current_a`` for arcs at ``bus``: the scenario's bank's, or with zone
    settings (``zones``: :func:`.zones.zone_variants`) the devices of each bus's variant [s]."""
    if zones is None:
        return paths.bank.clearing_time_s(device, current_a)
    return zones[0].clearing_time_s(device, current_a, zones[1][bus])


def _pair_times(faults, paths, ratio, zones=None):
    """Clearing time of every (fault bus, device) pair of the fault solution, and of every path row, at the
    currents of the fault's inception (``ratio``: arcing over bolted current per bus) [s]: a row read from its
    pair's time where its current is the pair's (the same product, so the same time), else evaluated."""
    solution = faults.solution
    every = _times(paths, zones, solution.device,
                   np.nan_to_num(solution.device_current_ka * ratio[solution.device_fault_bus] * 1000.0),
                   solution.device_fault_bus)
    amps = paths.device_ka * ratio[paths.bus] * 1000.0
    read = (paths.pair >= 0) & np.isfinite(amps)
    time = np.empty(amps.size)
    time[read] = every[paths.pair[read]]
    if not read.all():
        time[~read] = _times(paths, zones, paths.device[~read], amps[~read], paths.bus[~read])
    return every, time


def _needs_stages(faults, paths, ratio, arcing_pu, duration, governing, threshold_pu, motor_end_s, every):
    """Buses whose one-stage answer is not exact: they are followed stage by stage.

    The one-stage answer is exact where no device left out of the device
    table (under 0.1 % of the bolted current) could clear within the
    duration cap at the largest current it may carry there (``threshold_pu``
    per bus: the lowest level at which a device of its part that may carry
    such a share clears within the cap, :func:`back_feeding_devices`), no motor
    contribution ends before the answer's time, and either

    - exactly one source reaches the bus, the governing device's branch
      splits the network (its opening cuts the bus from that source) and no
      device opens before it at the currents of the fault's inception; or
    - no device at all opens within the duration cap at those currents: the
      network does not change before the cap, so the arc burns at its
      inception current until the cap (the governing device named is the
      one-stage answer's, the device that would end it later).

    ``every``: the clearing time of each pair of the fault solution at the
    inception currents (:func:`_pair_times`) [s].
    """
    net, solution = faults.net, faults.solution
    n_bus = len(paths.bus_ids)
    bus = solution.device_fault_bus
    first = np.full(n_bus, np.inf)
    if bus.size:
        np.minimum.at(first, bus, every)
    bridge = np.zeros(n_bus, dtype=bool)
    has = governing >= 0
    bridge[has] = ~paths.on_loop[net.device_branch[governing[has]]]
    cap = paths.cap_s
    with np.errstate(invalid="ignore"):
        answer_s = np.minimum(duration, cap) if cap is not None else duration
        exact = ((paths.sources_reaching == 1) & bridge & (first >= duration - 1e-9))
        if cap is not None:  # nothing opens before the cap
            exact |= first > cap
        exact &= ~(1e-3 * arcing_pu >= threshold_pu)
    if motor_end_s is not None:
        exact &= ~(answer_s > motor_end_s)
    return paths.energized & ~paths.no_device & ~exact


def back_feed_threshold_pu(paths, net, cap_level_a, device_base_ka):
    """Per bus: the lowest current at which a device of its part that may carry a share under the device
    table's threshold clears within the cap (``cap_level_a`` per device [A]; any other device carries nothing
    or the whole current there: :func:`back_feeding_devices`), in per unit of the device's base [pu]."""
    level_pu = np.where(paths.back_feed, cap_level_a / 1000.0 / device_base_ka, np.inf)
    threshold_pu = np.full(int(paths.bus_part.max(initial=-1)) + 1, np.inf)
    np.minimum.at(threshold_pu, paths.bus_part[net.branch_from[net.device_branch]], level_pu)
    return threshold_pu[paths.bus_part]


def arc_duration_s(duration, paths):
    """Each bus's arc duration from the devices' (``duration``): ``inf`` where no device stands between a
    source and the bus, NaN where it is de-energised; and the same taken at most to the site's duration cap
    (``paths.cap_s``), which an energy is computed with [s]."""
    duration = np.where(paths.energized, np.where(paths.no_device, np.inf, duration), np.nan)
    return duration, (np.minimum(duration, paths.cap_s) if paths.cap_s is not None else duration)


def staging_context(site, net, paths, equipment, states=None, cap_level_a=None, bank=None):
    """The :class:`~.staging.StagingContext` of a scenario: its network states (made when not given), the device
    bank (``paths.bank`` unless given), each device's clearing level within the cap (``cap_level_a``, from the
    bank when not given) [A]."""
    from .staging import StagingContext, network_states, stage_arcing

    bank = paths.bank if bank is None else bank
    cap = paths.cap_s
    return StagingContext(
        states=states or network_states(site, net), bank=bank, device_branch=net.device_branch,
        arcing=stage_arcing(net, equipment), excluded=paths.excluded, line_side=paths.line_side,
        hot_a=bank.threshold_a(cap if cap is not None else np.inf) if cap_level_a is None else cap_level_a,
        cap_s=cap, motor_end_s=site.facility.motor_contribution_end_s,
        carrying=lambda buses: devices_carrying(paths, buses))


def _sequence_text(steps, device_ids):
    return "; ".join(f"{device_ids[d]} opens at {t:.3f} s (arc {before:.3g} -> {after:.3g} kA)"
                     for d, t, before, after, *_ in steps)


def clear_arcs(site, scenario, faults, arcing_ka, reduced_arcing_ka, paths=None, equipment=None, sequences=True,
               numbers_only=False):
    """Arc duration, governing device and opening sequence at every bus, both arcing cases.

    Buses whose one-stage answer is exact (see :func:`_needs_stages`) take
    it; every other bus is followed stage by stage (:mod:`.staging`).

    Parameters
    ----------
    site : Site
    scenario : Scenario
    faults : ScenarioFaults
        The scenario's faults (:func:`arcflash.study.faults.solve_scenario`).
    arcing_ka, reduced_arcing_ka : pandas.Series
        Per bus id: the two arcing currents at inception [kA].
    paths : ClearingPaths, optional
        From :func:`clearing_paths` (computed when not given).
    equipment : pandas.DataFrame, optional
        From :func:`arcflash.study.arcing.equipment_table` (computed when not given).
    sequences : bool
        Write the opening sequence of each arc (text); an uncertainty run, which reads only the numbers,
        leaves it empty.
    numbers_only : bool
        Only what the energies need: the table holds ``no_device`` and the two clearing times, ``stages``
        the stages of the arcs followed, ``steps`` nothing (an uncertainty run's chunks).

    Returns
    -------
    ClearingResult
    """
    from ..models.network import base_current_ka
    from .arcing import equipment_table
    from .faults import bus_index
    from .staging import follow_arcs, network_states
    from .zones import zone_variants

    paths = clearing_paths(site, scenario, faults) if paths is None else paths
    equipment = equipment_table(site) if equipment is None else equipment
    net = faults.net
    n_bus, cap = len(paths.bus_ids), paths.cap_s
    motor_end_s = site.facility.motor_contribution_end_s
    device_base_ka = base_current_ka(site.facility.s_base_mva, net.device_kv)
    zones = zone_variants(site, scenario, paths)  # None: no device has zone settings
    bank = paths.bank if zones is None else zones[0]
    cap_level_a = bank.threshold_a(cap if cap is not None else np.inf)  # clears within the cap from here
    if zones is None:
        threshold_pu = back_feed_threshold_pu(paths, net, cap_level_a, device_base_ka)
    else:  # each bus at its variant's levels
        threshold_pu = np.empty(n_bus)
        for v in np.unique(zones[1]).tolist():
            mine = zones[1] == v
            threshold_pu[mine] = back_feed_threshold_pu(paths, net, cap_level_a[v], device_base_ka)[mine]
    bus_base_ka = base_current_ka(site.facility.s_base_mva, net.base_kv)
    index = bus_index(paths.bus_ids)
    result = pd.DataFrame(index=index)
    notes = [] if numbers_only else list(paths.notes)
    result["no_device"] = paths.no_device
    cases = (("full", "", arcing_ka), ("reduced", "reduced_", reduced_arcing_ka))
    one = {}  # per case: inception arcing current, one-stage duration and device, buses followed
    states = None
    for case, _, arc in cases:
        arc_ka = (arc if arc.index.equals(index) else arc.reindex(index)).to_numpy(float)
        ratio = np.where(paths.bolted_ka > 0, arc_ka / np.where(paths.bolted_ka > 0, paths.bolted_ka, 1.0), 0.0)
        every, time = _pair_times(faults, paths, ratio, zones)
        duration, governing = _one_stage(paths, time)
        staged = _needs_stages(faults, paths, ratio, np.nan_to_num(arc_ka) / bus_base_ka, duration, governing,
                               threshold_pu, motor_end_s, every)
        if cap is not None and not numbers_only:  # capped before any opening, fed over several paths: name
            # the device from the full currents
            several = np.flatnonzero(~staged & paths.energized & ~paths.no_device & (paths.sources_reaching > 1)
                                     & (duration > cap))
            if several.size:
                states = states or network_states(site, net)
                governing = _name_capped(paths, states, several, ratio, governing, zones)
        one[case] = (arc_ka, duration, governing, staged)
    followed = {case: [] for case, _, _ in cases}
    if any(one[case][3].any() for case, _, _ in cases):
        context = staging_context(site, net, paths, equipment, states, cap_level_a, bank)
        # Both cases of a bus side by side: they share the bus's fault columns.
        bus = np.concatenate([np.flatnonzero(one[case][3]) for case, _, _ in cases])
        reduced = np.concatenate([np.full(int(one[case][3].sum()), case == "reduced") for case, _, _ in cases])
        named = np.concatenate([np.where(np.isfinite(one[case][1]), one[case][2], -1)[one[case][3]]
                                for case, _, _ in cases])  # the one-stage device, where it trips
        order = np.lexsort((reduced, bus))
        for arc in follow_arcs(context, bus[order], named[order], reduced[order],
                               None if zones is None else zones[1][bus[order]]):
            followed["reduced" if arc.reduced else "full"].append(arc)
    stage_rows, step_rows = [], []
    any_staged = np.zeros(n_bus, dtype=bool)
    for case, prefix, _ in cases:
        arc_ka, duration, governing, staged = one[case]
        sequence = np.full(n_bus, "", dtype=object)
        within = duration <= cap if cap is not None else np.isfinite(duration)  # openings after the cap: none listed
        for k in np.flatnonzero(paths.energized & ~staged & (governing >= 0) & within) if sequences else ():
            sequence[k] = _sequence_text([(governing[k], duration[k], arc_ka[k], 0.0)], paths.device_ids)
        no_trip_staged = np.zeros(n_bus, dtype=bool)
        capped_staged = np.zeros(n_bus, dtype=bool)
        for arc in followed[case]:
            k = arc.bus
            duration[k] = arc.duration_s
            governing[k] = arc.governing
            no_trip_staged[k], capped_staged[k] = arc.no_trip, arc.capped
            if sequences:
                sequence[k] = _sequence_text(arc.steps, paths.device_ids)
            for number, (start, end, bolted, arcing, code) in enumerate(arc.stages):
                stage_rows.append((paths.bus_ids[k], case, number, start, end, bolted, arcing, code))
            for d, t, before, after, bolted_before, bolted_after in () if numbers_only else arc.steps:
                step_rows.append((paths.bus_ids[k], case, paths.device_ids[d], t, before, after,
                                  bolted_before, bolted_after))
        any_staged |= staged
        duration, capped_s = arc_duration_s(duration, paths)
        governing = np.where(paths.no_device, -1, governing)
        no_trip = (np.isinf(duration) & ~paths.no_device) | no_trip_staged
        capped = ((duration > cap) if cap is not None else np.zeros(n_bus, bool)) | capped_staged
        duration = capped_s
        result[f"{prefix}clearing_time_s"] = duration
        if numbers_only:
            continue
        names = np.full(n_bus, None, dtype=object)
        names[governing >= 0] = paths.device_ids[governing[governing >= 0]]
        result[f"{prefix}governing_device"] = names
        result[f"{prefix}no_trip"] = no_trip
        result[f"{prefix}duration_capped"] = capped
        result[f"{prefix}clearing_sequence"] = sequence
        notes.append((no_trip, f"{case} arcing current: no device ends the arc"))
        if cap is not None:
            notes.append((capped, f"{case} arcing current: arc duration capped at {cap:g} s"))
    if not numbers_only:
        result["meshed"] = paths.meshed
        result["staged"] = any_staged
        result["clearing_notes"] = _joined_notes(n_bus, notes)
    stages = pd.DataFrame(stage_rows, columns=["bus", "case", "stage", "start_s", "end_s", "bolted_ka",
                                               "arcing_ka", "range_code"])
    steps = pd.DataFrame(step_rows, columns=["bus", "case", "device", "opening_time_s", "arcing_before_ka",
                                             "arcing_after_ka", "bolted_before_ka", "bolted_after_ka"])
    return ClearingResult(result, stages, steps)


def clearing_times(site, scenario, faults, arcing_ka, reduced_arcing_ka, paths=None, equipment=None):
    """Arc duration and governing device at every bus, for both arcing cases.

    The per-bus table of :func:`clear_arcs` (same parameters).

    Returns
    -------
    pandas.DataFrame
        Indexed by bus id: ``clearing_time_s``, ``governing_device`` (the
        device whose opening ended the arc), ``no_trip``,
        ``duration_capped``, ``clearing_sequence`` (the openings in order)
        and the same with ``reduced_``; ``no_device``, ``meshed``,
        ``staged`` (followed stage by stage) and ``clearing_notes`` (text).
    """
    return clear_arcs(site, scenario, faults, arcing_ka, reduced_arcing_ka, paths, equipment).table


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
