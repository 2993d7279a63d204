"""Cross-checks of a site after each element is valid on its own.

Every reference resolves; ids are unique across element types; the two buses
of a cable, busway or switch have the same nominal kV; transformer, source
and motor voltages match their buses; scenarios name existing elements.
A bus that no utility or generator could reach even with every switch
closed is an error (an island, usually a mistyped id); a bus cut off only in
some scenarios is not: the fault table reports it as de-energised.
"""

from __future__ import annotations

from ..errors import Problem

#: Relative mismatch allowed between a rated voltage and its bus's nominal kV.
VOLTAGE_MATCH = 0.05

#: Relative difference allowed between the voltage ratios of transformers that can run in parallel
#: (IEEE C57.12.00's ratio tolerance of 0.5 %, from memory; the fault model has no circulating current).
PARALLEL_RATIO_MATCH = 0.005

_BUS_REFERENCES = {
    "utilities": ("bus",), "generators": ("bus",), "motors": ("bus",),
    "transformers": ("primary_bus", "secondary_bus"),
    "cables": ("from_bus", "to_bus"), "impedances": ("from_bus", "to_bus"), "switches": ("from_bus", "to_bus"),
    "devices": ("at_bus",),
}
_BRANCHES = ("transformers", "cables", "impedances", "switches")


def _at(origin, section, ident, field, value, expected):
    file, line = origin[(section, ident)]
    return Problem(file, line, f"{section}[{ident}].{field}", value, expected)


def _kv_mismatch(rated, nominal):
    return abs(rated - nominal) > VOLTAGE_MATCH * nominal


def cross_check(facility, elements, origin, invalid=frozenset()):
    """Problems that involve more than one element (list, empty if none).

    ``invalid`` holds ids of items already reported invalid; references to
    them are not reported again.
    """
    problems = []
    buses = elements["buses"]
    owners = {}
    for section, items in elements.items():
        if section in ("buses", "scenarios", "curves"):
            continue
        for ident in items:
            if ident in owners:
                problems.append(_at(origin, section, ident, "id", ident,
                                    f"an id not used by another element (also a {owners[ident][:-1]})"))
            owners.setdefault(ident, section)
    for section, fields in _BUS_REFERENCES.items():
        for ident, element in elements[section].items():
            for name in fields:
                bus = getattr(element, name)
                if bus not in buses and bus not in invalid:
                    problems.append(_at(origin, section, ident, name, bus, "the id of a bus in 'buses'"))
    problems += _voltage_checks(elements, origin)
    problems += _parallel_transformer_checks(elements, origin)
    problems += _device_checks(elements, origin, invalid)
    problems += _protection_checks(elements, origin, invalid)
    problems += _scenario_checks(facility, elements, origin, invalid)
    if not problems and not invalid:
        problems += _island_checks(elements, origin)
    return problems


def _island_checks(elements, origin):
    """Buses that no source can reach with every switch closed."""
    groups = _Groups()
    for section in _BRANCHES:
        for element in elements[section].values():
            a, b = ((element.primary_bus, element.secondary_bus) if section == "transformers"
                    else (element.from_bus, element.to_bus))
            groups.join(a, b)
    find = groups.find
    fed = {find(e.bus) for section in ("utilities", "generators") for e in elements[section].values()}
    return [
        _at(origin, "buses", bus, "id", bus,
            "a bus connected to a utility or generator: no source can reach it, even with every switch closed")
        for bus in elements["buses"] if find(bus) not in fed
    ]


class _Groups:
    """Union-find over bus ids."""

    def __init__(self):
        self.parent = {}

    def find(self, bus):
        self.parent.setdefault(bus, bus)
        while self.parent[bus] != bus:
            self.parent[bus] = self.parent[self.parent[bus]]
            bus = self.parent[bus]
        return bus

    def join(self, a, b):
        self.parent[self.find(a)] = self.find(b)


def _parallel_transformer_checks(elements, origin):
    """Transformers whose primaries and secondaries can be joined (any switch closed) share one ratio."""
    groups = _Groups()
    for section in ("cables", "impedances", "switches"):
        for element in elements[section].values():
            groups.join(element.from_bus, element.to_bus)
    first = {}
    problems = []
    for ident, t in elements["transformers"].items():
        key = (groups.find(t.primary_bus), groups.find(t.secondary_bus))
        ratio = t.primary_kv / t.secondary_kv
        if key not in first:
            first[key] = (ident, t, ratio)
            continue
        other, o, other_ratio = first[key]
        if abs(ratio - other_ratio) > PARALLEL_RATIO_MATCH * other_ratio:
            problems.append(_at(origin, "transformers", ident, "secondary_kv", t.secondary_kv,
                                f"the voltage ratio of {other} ({o.primary_kv:g}/{o.secondary_kv:g} kV), with which "
                                f"it can run in parallel, within 0.5 % (this one is "
                                f"{t.primary_kv:g}/{t.secondary_kv:g} kV)"))
    return problems


def _voltage_checks(elements, origin):
    problems = []
    buses = elements["buses"]

    def kv(bus):
        return buses[bus].nominal_kv if bus in buses else None

    for section in ("cables", "impedances", "switches"):
        for ident, e in elements[section].items():
            a, b = kv(e.from_bus), kv(e.to_bus)
            if a is not None and b is not None and a != b:
                problems.append(_at(origin, section, ident, "to_bus", e.to_bus,
                                    f"a bus of the same nominal kV as {e.from_bus} ({a:g} kV), not {b:g} kV"))
    for ident, t in elements["transformers"].items():
        for side in ("primary", "secondary"):
            nominal, rated = kv(getattr(t, f"{side}_bus")), getattr(t, f"{side}_kv")
            if nominal is not None and _kv_mismatch(rated, nominal):
                problems.append(_at(origin, "transformers", ident, f"{side}_kv", rated,
                                    f"within 5 % of the {side} bus's nominal {nominal:g} kV"))
    for section in ("utilities", "generators", "motors"):
        for ident, e in elements[section].items():
            nominal = kv(e.bus)
            if nominal is not None and _kv_mismatch(e.kv, nominal):
                problems.append(_at(origin, section, ident, "kv", e.kv,
                                    f"within 5 % of bus {e.bus}'s nominal {nominal:g} kV"))
    return problems


def _device_checks(elements, origin, invalid):
    problems = []
    branches = {ident: (section, e) for section in _BRANCHES for ident, e in elements[section].items()}
    for ident, device in elements["devices"].items():
        if device.branch in invalid:
            continue
        if device.branch not in branches:
            problems.append(_at(origin, "devices", ident, "branch", device.branch,
                                "the id of a transformer, cable, impedance or switch"))
            continue
        section, branch = branches[device.branch]
        ends = ((branch.primary_bus, branch.secondary_bus) if section == "transformers"
                else (branch.from_bus, branch.to_bus))
        if device.at_bus not in ends:
            problems.append(_at(origin, "devices", ident, "at_bus", device.at_bus,
                                f"one of the buses of {device.branch}: {ends[0]} or {ends[1]}"))
    return problems


def _protection_checks(elements, origin, invalid):
    """Curves named by devices exist and suit them; maintenance and exclusions name devices."""
    problems = []
    curves, devices = elements["curves"], elements["devices"]
    for ident, device in devices.items():
        if device.curve is None or device.curve in invalid:
            continue
        if device.curve not in curves:
            problems.append(_at(origin, "devices", ident, "curve", device.curve,
                                "the id of a curve in a 'curves:' section or device-library file"))
        elif curves[device.curve].kind != device.kind:
            problems.append(_at(origin, "devices", ident, "curve", device.curve,
                                f"a {device.kind} curve (this one is a {curves[device.curve].kind})"))
    for name, scenario in elements["scenarios"].items():
        for ident in scenario.energy_reducing_maintenance_switching:
            if ident in devices and not devices[ident].maintenance:
                problems.append(_at(origin, "scenarios", name, scenario.switching_key, ident,
                                    "a device with 'maintenance:' settings"))
    for ident, bus in elements["buses"].items():
        for device in bus.arc_not_cleared_by:
            if device not in devices and device not in invalid:
                problems.append(_at(origin, "buses", ident, "arc_not_cleared_by", device, "the id of a device"))
    return problems


def _scenario_checks(facility, elements, origin, invalid):
    problems = []
    lists = {
        "close": ("switches",), "open": ("switches",),
        "generators_running": ("generators",), "generators_stopped": ("generators",),
        "utilities_off": ("utilities",), "motors_off": ("motors",),
        "energy_reducing_maintenance_switching": ("devices",),
    }
    for name, scenario in elements["scenarios"].items():
        for field, sections in lists.items():
            for ident in getattr(scenario, field):
                field = scenario.switching_key if field == "energy_reducing_maintenance_switching" else field
                if ident not in invalid and not any(ident in elements[s] for s in sections):
                    problems.append(_at(origin, "scenarios", name, field, ident,
                                        f"the id of one of the site's {' or '.join(sections)}"))
        both = set(scenario.close) & set(scenario.open)
        if both:
            problems.append(_at(origin, "scenarios", name, "open", sorted(both), "switches not also in 'close'"))
    if facility.default_scenario and facility.default_scenario not in elements["scenarios"]:
        file, line = origin.get(("facility", "default_scenario"), ("(site)", None))
        problems.append(Problem(file, line, "facility.default_scenario", facility.default_scenario,
                                f"one of the scenarios: {', '.join(elements['scenarios'])}"))
    return problems
