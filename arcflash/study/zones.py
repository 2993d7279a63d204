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
outside its differential zone), so selectivity is kept by the scheme itself.

Each bus gets a variant of the devices: the devices with zone settings whose zone holds it (none: variant 0,
the site's own devices); a :class:`~.bank_variants.VariantBank` gives every arc, one-stage or staged, the
devices of its bus's variant.
"""

from __future__ import annotations

import numpy as np

from .bank_variants import VariantBank
from .device_bank import bank_of_devices, zoned

__all__ = ["first_below", "has_zones", "nearest_rows", "zone_buses", "zone_floor_ka", "zone_variants", "zoned"]


def has_zones(site):
    """Whether any device of ``site`` (of a stacked site, its base's or one a copy changed) has zone settings."""
    stack = getattr(site, "stack", None)
    if stack is None:
        return any(device.zone for device in site.devices.values())
    from .stack_tiling import _changed

    return any(device.zone for device in stack.base.devices.values()) or any(
        stack.copies[k].devices[ident].zone for k, changed in enumerate(_changed(stack, "devices")) for ident in changed)


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


def zone_buses(paths, device):
    """The buses (indices) in the zone of device ``device`` (index) in a scenario's paths [-]."""
    nearest = nearest_rows(paths)
    return np.unique(paths.bus[nearest & (paths.device == device)])


def zone_variants(site, scenario, paths):
    """The devices each bus's arcs see: None where no device has zone settings; else (a
    :class:`~.bank_variants.VariantBank` over the scenario's bank ``paths.bank``, the variant of each bus)."""
    if not has_zones(site):
        return None
    ids = list(paths.device_ids)
    n_bus, n_dev = len(paths.bus_ids), len(ids)
    with_zone = np.array([bool(site.devices[ident].zone) for ident in ids], dtype=bool)
    rows = nearest_rows(paths) & with_zone[paths.device]
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
