"""Variants that change only protective devices, studied at the buses asked of them (the mitigation
finder's candidates, :mod:`.mitigation`).

A change to a device's settings (its trip unit, relay or maintenance settings) or to its curve moves no
impedance: every scenario's network, bolted faults, device currents, arcing currents and source paths are
the site's own. What a variant changes is how the arcs its changed devices carry are cleared, and so their
energies. Each variant is therefore studied only at the buses asked of it, with the study's own functions
on the site's faults:

- the one-stage reading (:func:`.clearing._pair_times`, :func:`.clearing._one_stage`,
  :func:`.clearing._needs_stages`), every (variant, bus) asked one "bus" of those functions' arrays, its
  path rows and fault pairs the site's rows at that bus;
- staged clearing (:func:`.staging.follow_arcs`) of the arcs that need it, variant by variant, on the
  site's network states (their solves shared);
- the energies (:func:`.pipeline.arc_numbers`) and the governing case and scenario
  (:func:`.uncertainty._governing_values`),

with a device bank that reads each changed device from one bank of every variant's changed devices and
every other device from the site's (:mod:`.bank_variants`).

One thing the fault table takes from the devices: it keeps a device's back-feed rows only where the
device could clear within the arc-duration cap (:func:`.faults.solve_scenario`). A lower floor keeps more
rows and changes no result (the rows below a device's level are never used; tested with the floor at
zero), so the faults are solved once with each device's floor the lowest any variant gives it: every
variant's table is then within the one solved.

Each (variant, bus) asked gets the governing incident energy, arc-flash boundary and bolted current that a
study of the variant gives that bus, bit for bit (tested against :func:`.uncertainty.study_variants`).
"""

from __future__ import annotations

import dataclasses
from types import SimpleNamespace

import numpy as np
import pandas as pd

from ..models.network import base_current_ka
from .bank_variants import PatchedBank, VariantBank
from .device_bank import bank_of_devices
from .zones import has_zones

__all__ = ["changed_devices", "variant_numbers"]


def changed_devices(site, variant):
    """The ids of the devices ``variant`` (a site made from ``site``) replaced; a ValueError where it changes
    anything else, or moves a device to another branch or bus."""
    for f in dataclasses.fields(site):
        if f.name != "devices" and getattr(variant, f.name) is not getattr(site, f.name):
            raise ValueError(f"a setting variant changes only devices; this one changes its {f.name}")
    if variant.devices.keys() != site.devices.keys():
        raise ValueError("a setting variant keeps the site's devices")
    changed = [ident for ident, device in variant.devices.items() if device is not site.devices[ident]]
    for ident in changed:
        was, now = site.devices[ident], variant.devices[ident]
        if (was.branch, was.at_bus) != (now.branch, now.at_bus):
            raise ValueError(f"a setting variant keeps device {ident} where it is")
    return changed


def _gathered(keys, wanted, size):
    """The positions of ``keys`` equal to each of ``wanted``, request by request, in increasing position:
    (positions, the request of each, each position's rank in ``keys`` sorted stably, where each request's
    positions start in that order) [-]."""
    order = np.argsort(keys, kind="stable")
    bounds = np.searchsorted(keys[order], np.arange(size + 1))
    lo, hi = bounds[wanted], bounds[wanted + 1]
    count = hi - lo
    request = np.repeat(np.arange(wanted.size), count)
    at = np.repeat(lo - np.concatenate(([0], np.cumsum(count)[:-1])), count) + np.arange(request.size)
    rank = np.empty(order.size, dtype=np.intp)
    rank[order] = np.arange(order.size)
    return order[at], request, rank, lo


def _remembered_arcing(arcing):
    """``arcing`` (staged clearing's, :func:`.staging.stage_arcing`) remembering each (bus, bolted current,
    case) it was asked: the variants' arcs meet the same network states, so the same stage currents, again
    and again (each value is computed alone, element by element, so it is the same however asked)."""
    known = {}

    def remembered(buses, bolted_ka, reduced):
        keys = list(zip(buses.tolist(), bolted_ka.tolist(), reduced.tolist()))
        todo = [j for j, key in enumerate(keys) if key not in known]
        if todo:
            current, code = arcing(buses[todo], bolted_ka[todo], reduced[todo])
            known.update(zip((keys[j] for j in todo), zip(current.tolist(), code.tolist())))
        found = [known[key] for key in keys]
        return (np.array([c for c, _ in found], dtype=float).reshape(buses.shape),
                np.array([c for _, c in found], dtype=np.int64).reshape(buses.shape))

    return remembered


def variant_numbers(site, variants, variant, bus, changed=None, keep=None):
    """Governing incident energy [cal/cm²], arc-flash boundary [mm] and bolted current of that row [kA] at
    bus ``bus[j]`` of ``variants[variant[j]]``, for each request ``j`` (see the module docstring).

    Parameters
    ----------
    site : Site
    variants : list of Site
        ``site`` with devices replaced (:func:`changed_devices`) [-]
    variant : numpy.ndarray of int
        The variant of each request [-]
    bus : list of str
        The bus of each request [-]
    changed : list of tuple of str, optional
        Per variant, the ids of the devices it replaced (each variant made from ``site`` by replacing these
        alone); found by comparing with ``site`` when not given [-]
    keep : dict, optional
        Receives, per scenario name, what was made for it (``faults``, ``paths``, ``arcs``, the site's
        ``bank``, the ``changed`` devices' bank and its ``entries``, (variant, device id) each) [-]

    Returns
    -------
    tuple of numpy.ndarray
        Energy, boundary and bolted current per request.
    """
    from .arcing import equipment_table
    from .uncertainty import _governing_values

    variant = np.asarray(variant, dtype=np.intp)
    if changed is None:
        changed = [changed_devices(site, v) for v in variants]
    if has_zones(site) or any(v.devices[i].zone for v, mine in zip(variants, changed) for i in mine):
        raise ValueError("zone settings: a setting variant of a site with zones is studied whole "
                         "(uncertainty.study_variants)")
    changes = [[(k, ident, v.devices[ident]) for ident in mine] for k, (v, mine) in enumerate(zip(variants, changed))]
    changes = [c for mine in changes for c in mine]
    equipment = equipment_table(site)
    tables = [_scenario(site, scenario, changes, variant, list(bus), equipment, keep)
              for scenario in site.scenarios.values()]
    return _governing_values(tables, pd.RangeIndex(variant.size))


def _scenario(site, scenario, changes, variant, bus, equipment, keep=None):
    """One scenario's numbers of the requests (the values of :func:`.pipeline.scenario_numbers`, one per
    request)."""
    from .arcing import arcing_currents
    from .clearing import (_needs_stages, _one_stage, _pair_times, arc_duration_s, back_feed_threshold_pu,
                           clearing_paths, staging_context)
    from .device_bank import device_bank
    from .faults import build_network, solve_scenario
    from .pipeline import arc_numbers

    net = build_network(site, scenario)
    ids = list(net.device_ids)
    n_bus, n_dev = len(net.bus_ids), len(ids)
    where = {ident: d for d, ident in enumerate(ids)}
    mine = [(k, where[ident], device) for k, ident, device in changes if ident in where]
    base = device_bank(site, scenario, ids)
    changed = bank_of_devices(site, scenario, [(ids[d], device) for _, d, device in mine]) if mine else None
    cap = site.facility.arc_duration_cap_s
    within = cap if cap is not None else np.inf
    floor = base.threshold_a(within)
    if mine:  # the lowest any variant gives each device: every variant's fault rows are among those solved
        np.minimum.at(floor, np.array([d for _, d, _ in mine], dtype=np.intp), changed.threshold_a(within))
    faults = solve_scenario(site, scenario.name, for_clearing=True, backfeed_floor_ka=floor / 1000.0)
    paths = clearing_paths(site, scenario, faults)
    arcs = arcing_currents(site, faults.buses, equipment)
    if keep is not None:
        keep[scenario.name] = SimpleNamespace(faults=faults, paths=paths, arcs=arcs, bank=base, changed=changed,
                                              entries=[(k, ids[d]) for k, d, _ in mine],
                                              devices=[device for _, _, device in mine])
    solution = faults.solution
    at_bus = pd.Index(net.bus_ids).get_indexer(bus)
    n = at_bus.size
    # every variant's devices (a changed one read from the changed bank); every (variant, device) of the
    # requests' rows and pairs numbered, a bank of those
    changed_key = np.array([k * n_dev + d for k, d, _ in mine], dtype=np.int64)
    every_bank = VariantBank(base, changed, changed_key, int(variant.max(initial=-1)) + 1, n_dev)
    rows, row_request, _, _ = _gathered(paths.bus, at_bus, n_bus)
    pairs, pair_request, pair_rank, pair_start = _gathered(solution.device_fault_bus, at_bus, n_bus)
    keys, compact = np.unique(np.concatenate([variant[row_request].astype(np.int64) * n_dev + paths.device[rows],
                                              variant[pair_request].astype(np.int64) * n_dev + solution.device[pairs]]),
                              return_inverse=True)
    bank = PatchedBank(base, changed, keys % n_dev, every_bank.entry(keys % n_dev, keys // n_dev))
    # the requests' pairs in request order; each row's pair found there
    first_pair = np.concatenate(([0], np.cumsum(np.bincount(pair_request, minlength=n))[:-1]))
    pair = paths.pair[rows]
    pair = np.where(pair >= 0, first_pair[row_request] + pair_rank[np.maximum(pair, 0)] - pair_start[row_request], -1)
    span = int(paths.path.max()) + 1 if paths.path.size else 1
    view = SimpleNamespace(
        bus_ids=range(n), bus=row_request, device=compact[:rows.size], path=row_request * span + paths.path[rows],
        device_ka=paths.device_ka[rows], live=paths.live[rows], pair=pair, by_path=None, by_bus=None,
        bolted_ka=paths.bolted_ka[at_bus], on_loop=paths.on_loop, cap_s=paths.cap_s,
        sources_reaching=paths.sources_reaching[at_bus], energized=paths.energized[at_bus],
        no_device=paths.no_device[at_bus], bank=bank)
    view_faults = SimpleNamespace(
        net=SimpleNamespace(device_branch=net.device_branch[keys % n_dev]),
        solution=SimpleNamespace(device_fault_bus=pair_request, device=compact[rows.size:],
                                 device_current_ka=solution.device_current_ka[pairs]))
    device_base_ka = base_current_ka(site.facility.s_base_mva, net.device_kv)
    bus_base_ka = base_current_ka(site.facility.s_base_mva, net.base_kv)
    levels = every_bank.threshold_a(within)  # each variant's devices' levels within the cap [A]
    threshold_pu = back_feed_threshold_pu(paths, net, base.threshold_a(within), device_base_ka)[at_bus]
    for k in sorted({k for k, d, _ in mine if paths.back_feed[d]}):  # a back-feeding device changed: its part's level
        asked = variant == k
        threshold_pu[asked] = back_feed_threshold_pu(paths, net, levels[k], device_base_ka)[at_bus[asked]]
    index = pd.Index(net.bus_ids)
    one = {}
    for case, column in (("full", "arcing_current_ka"), ("reduced", "reduced_arcing_current_ka")):
        arc_ka = arcs[column].reindex(index).to_numpy(float)
        bolted = paths.bolted_ka
        ratio = np.where(bolted > 0, arc_ka / np.where(bolted > 0, bolted, 1.0), 0.0)[at_bus]
        every, time = _pair_times(view_faults, view, ratio)
        duration, governing = _one_stage(view, time)
        staged = _needs_stages(view_faults, view, ratio, (np.nan_to_num(arc_ka) / bus_base_ka)[at_bus], duration,
                               governing, threshold_pu, site.facility.motor_contribution_end_s, every)
        named = np.where(np.isfinite(duration) & (governing >= 0), keys[np.maximum(governing, 0)] % n_dev, -1)
        one[case] = (duration, staged, named)
    stage_rows = []
    if any(one[case][1].any() for case in one):  # the arcs to follow, of every variant together
        from .staging import follow_arcs

        context = staging_context(site, net, paths, equipment, bank=every_bank, cap_level_a=levels)
        context = dataclasses.replace(context, arcing=_remembered_arcing(context.arcing))
        request = np.concatenate([np.flatnonzero(one[case][1]) for case in one])
        reduced = np.concatenate([np.full(int(one[case][1].sum()), case == "reduced") for case in one])
        named = np.concatenate([one[case][2][one[case][1]] for case in one])
        sort = np.lexsort((reduced, at_bus[request], variant[request]))
        request, reduced, named = request[sort], reduced[sort], named[sort]
        for j, arc in zip(request.tolist(), follow_arcs(context, at_bus[request], named, reduced, variant[request])):
            case = "reduced" if arc.reduced else "full"
            one[case][0][j] = arc.duration_s
            for number, (start, end, bolted_ka, arcing, code) in enumerate(arc.stages):
                stage_rows.append((j, case, number, start, end, bolted_ka, arcing, code))
    stages = pd.DataFrame(stage_rows, columns=["bus", "case", "stage", "start_s", "end_s", "bolted_ka", "arcing_ka",
                                               "range_code"])
    durations = [arc_duration_s(one[case][0], view)[1] for case in ("full", "reduced")]
    eq = equipment.reindex(index)
    at = {name: eq[name].to_numpy(float)[at_bus] for name in ("gap_mm", "working_distance_mm", "height_mm",
                                                               "width_mm", "depth_mm")}
    buses = faults.buses
    kv, bolted = buses["nominal_kv"].to_numpy(float)[at_bus], buses["bolted_ka"].to_numpy(float)[at_bus]
    live = buses["energized"].to_numpy(bool)[at_bus] & (bolted > 0)
    values = arc_numbers(kv, bolted, at, eq["config"].to_numpy(str)[at_bus], live, *durations, stages,
                         pd.RangeIndex(n))
    return (*values, bolted), pd.RangeIndex(n)
