"""Zone settings: zone-selective interlocking and differential schemes (a device's ``zone:`` settings).

A device's zone is the buses it feeds with no other protective device between: on a source path to such a
bus, the device is the one nearest the bus (of the devices on the path, it feeds the fewest buses from that
source; in a radial network the devices of a path feed nested sets of buses). For an arc at a bus of its
zone, a device works with its ``zone:`` settings in force over its own (common practice):

- zone-selective interlocking: no device downstream sees the fault and restrains the device, so its
  short-time element trips with its unrestrained delay (``zone: {short_time_delay_s: 0.05}``, say);
- a differential scheme: the fault lies inside the zone its current transformers bound, and its relay trips
  the breaker at once (modelled as an instantaneous element: ``zone: {instantaneous_a: ...}``).

For an arc elsewhere, the device keeps its own settings (a downstream device restrains it, or the fault lies
outside its differential zone), so selectivity is kept by the scheme itself. A device that is not on the
bus's source paths but carries current for its fault (motors or a source behind it feeding the fault back)
may see it too and restrain the devices upstream: where any such device's largest back-fed current (the
bolted one) reaches the current from which it may restrain (its short-time pickup band's lower edge; a
relay's pickup), the bus is taken to be in no zone-selective interlocking zone (the longer arc, the
conservative reading; tested). A differential zone is bounded by its current transformers: a current fed
back through it leaves the zone and is not seen.

Each bus gets a variant of the devices: the devices with zone settings whose zone holds it (none: variant 0,
the site's own devices); a :class:`~.bank_variants.VariantBank` gives every arc, one-stage or staged, the
devices of its bus's variant.
"""

from __future__ import annotations

import numpy as np

from .bank_variants import VariantBank
from .device_bank import bank_of_devices, zoned

__all__ = ["first_below", "has_zones", "nearest_rows", "restrained", "restraint_pickup_a", "zone_buses", "zone_floor_ka", "zone_rows",
           "zone_variants", "zoned"]


def has_zones(site):
    """Whether any device of ``site`` (of a stacked site, its base's or one a copy changed) has zone settings
    (remembered while the site lives: each scenario asks several times)."""
    from .remembered import site_memory

    memory = site_memory("zones", site)
    if "any" not in memory:
        stack = getattr(site, "stack", None)
        if stack is None:
            memory["any"] = any(device.zone for device in site.devices.values())
        else:
            from .stack_tiling import _changed

            memory["any"] = any(device.zone for device in stack.base.devices.values()) or any(
                stack.copies[k].devices[ident].zone
                for k, changed in enumerate(_changed(stack, "devices")) for ident in changed)
    return memory["any"]


def nearest_rows(paths):
    """Per path row, whether its device is the nearest to the row's bus on its path (it feeds the fewest
    buses from the path's source) [-]."""
    n_bus = len(paths.bus_ids)
    source = paths.path // n_bus
    n_src = int(source.max()) + 1 if source.size else 1
    group = paths.device.astype(np.int64) * n_src + source
    fed = np.bincount(group)[group] if group.size else np.zeros(0, dtype=np.int64)
    fewest = np.full(int(paths.path.max()) + 1 if paths.path.size else 0, np.iinfo(np.int64).max)
    np.minimum.at(fewest, paths.path, fed)
    return fed == fewest[paths.path]


def restraint_pickup_a(device):
    """The current from which ``device`` may send a restraint signal upstream [A]: the lower edge of a trip
    unit's short-time pickup band, a relay's inverse-time pickup (primary amperes); ``inf`` for a device that
    cannot (a fuse, a digitised curve, a trip unit without a short-time element)."""
    unit, relay = device.trip_unit, device.relay
    if unit is not None and unit.short_time_pickup is not None:
        return unit.short_time_pickup * unit.long_time_pickup * unit.rating_a * (1.0 - unit.pickup_tolerance)
    if relay is not None:
        return relay.pickup_a * relay.ct_primary_a / relay.ct_secondary_a
    return np.inf


def restrained(site, scenario, paths):
    """Per bus (index): whether a device off its source paths carries, for a fault there, at least the current
    from which it may restrain (:func:`restraint_pickup_a`; its back-fed bolted current, from a fault table
    whose back-fed rows are those at or above that current): zone-selective interlocking upstream of the bus
    is then taken to be restrained [-]."""
    from .faults import solve_scenario

    ids = list(paths.device_ids)
    n_bus, n_dev = len(paths.bus_ids), len(ids)
    pickup = np.array([restraint_pickup_a(site.devices[ident]) for ident in ids], dtype=float)
    # the back-fed rows below a device's restraint pickup are left out of the solve: they restrain nothing
    solution = solve_scenario(site, scenario.name, backfeed_floor_ka=pickup / 1000.0).solution
    on_path = np.zeros(n_bus * n_dev, dtype=bool)
    on_path[paths.bus.astype(np.int64) * n_dev + paths.device] = True
    off = ~on_path[solution.device_fault_bus.astype(np.int64) * n_dev + solution.device]
    seen = solution.device_current_ka * 1000.0 >= pickup[solution.device]
    found = np.zeros(n_bus, dtype=bool)
    found[solution.device_fault_bus[off & seen]] = True
    return found


def zone_rows(site, scenario, paths):
    """Per path row: whether its device's zone holds the row's bus: the nearest device (:func:`nearest_rows`),
    and for a trip unit (zone-selective interlocking) the bus not restrained (:func:`restrained`; a relay's
    differential zone is bounded by its current transformers, which a back-fed current crosses twice) [-]."""
    relay = np.array([site.devices[ident].relay is not None for ident in paths.device_ids], dtype=bool)
    return nearest_rows(paths) & (relay[paths.device] | ~restrained(site, scenario, paths)[paths.bus])


def zone_buses(site, scenario, paths, device):
    """The buses (indices) in the zone of device ``device`` (index) in a scenario's paths [-]."""
    return np.unique(paths.bus[zone_rows(site, scenario, paths) & (paths.device == device)])


def zone_variants(site, scenario, paths):
    """The devices each bus's arcs see: None where no device has zone settings; else (a
    :class:`~.bank_variants.VariantBank` over the scenario's bank ``paths.bank``, the variant of each bus)."""
    if not has_zones(site):
        return None
    ids = list(paths.device_ids)
    n_bus, n_dev = len(paths.bus_ids), len(ids)
    with_zone = np.array([bool(site.devices[ident].zone) for ident in ids], dtype=bool)
    rows = zone_rows(site, scenario, paths) & with_zone[paths.device]
    pairs = np.unique(paths.bus[rows].astype(np.int64) * n_dev + paths.device[rows])
    bus, device = pairs // n_dev, pairs % n_dev
    variant = np.zeros(n_bus, dtype=np.intp)
    keys, found = {}, {}
    for k in np.unique(bus).tolist():  # a variant per set of zone devices (by their ids in the base site)
        mine = device[bus == k]
        key = tuple(sorted(ids[d].split("\x1f")[0] for d in mine.tolist()))
        variant[k] = keys.setdefault(key, len(keys) + 1)
        for d in mine.tolist():
            found[variant[k] * n_dev + d] = d
    entries = sorted(found)
    changed = bank_of_devices(site, scenario, [(ids[found[e]], zoned(site.devices[ids[found[e]]])) for e in entries])
    return VariantBank(paths.bank, changed, entries, len(keys) + 1, n_dev), variant


def zone_floor_ka(site, scenario, device_ids, floor_ka):
    """``floor_ka`` (per device, the current from which it clears within the arc-duration cap [kA]) lowered
    to the zone settings' level for the devices that have them [kA]."""
    if not has_zones(site):
        return floor_ka
    mine = [(d, ident) for d, ident in enumerate(device_ids) if site.devices[ident].zone]
    if not mine:
        return floor_ka
    cap = site.facility.arc_duration_cap_s
    levels = bank_of_devices(site, scenario, [(ident, zoned(site.devices[ident])) for _, ident in mine]).threshold_a(
        cap if cap is not None else np.inf) / 1000.0
    floor_ka = np.array(floor_ka, dtype=float)
    at = np.array([d for d, _ in mine], dtype=np.intp)
    floor_ka[at] = np.minimum(floor_ka[at], levels)
    return floor_ka


def first_below(paths, device):
    """The devices just downstream of ``device`` (index): on the source path to a bus it feeds, the next
    device toward the bus (the one of those it feeds a subset of buses through that feeds the most) [-]."""
    n_bus = len(paths.bus_ids)
    source = paths.path // n_bus
    n_src = int(source.max()) + 1 if source.size else 1
    group = paths.device.astype(np.int64) * n_src + source
    fed = np.bincount(group)[group] if group.size else np.zeros(0, dtype=np.int64)
    mine = paths.device == device
    through = np.zeros(int(paths.path.max()) + 1 if paths.path.size else 0, dtype=np.int64)
    through[paths.path[mine]] = fed[mine]  # per path: how many buses the device feeds from its source
    below = ~mine & (fed < through[paths.path])
    if not below.any():
        return np.zeros(0, dtype=np.intp)
    most = np.zeros(through.size, dtype=np.int64)
    np.maximum.at(most, paths.path[below], fed[below])
    return np.unique(paths.device[below & (fed == most[paths.path])])
