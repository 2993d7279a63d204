"""Bolted faults of a site in a scenario: from site data to per-unit arrays and back.

Per-unit system: power base ``facility.s_base_mva`` (100 MVA by default),
voltage base the nominal kV of each bus. Each element becomes a series
branch or a shunt source:

- utility: Z = (kV_stated/kV_bus)² × S_base/S_sc, S_sc = √3 kV I (or the MVA
  given), split by its X/R, at the scenario's level (max or min);
- generator, motor: Z = X''% /100 × S_base/S_rated × (kV_rated/kV_bus)²,
  R = X / (X/R); a motor's hp is taken as kVA (common practice);
- transformer: Z = %Z/100 × S_base/S_rated × (kV_rated/kV_bus)² on the
  secondary side, %Z at the low side of its tolerance for the maximum
  utility level and at the high side for the minimum (unless the scenario
  says otherwise); tap ratios off the bus voltages are not modelled;
- cable: NEC Chapter 9 Table 9 ohms per 1000 ft × length / sets;
- busway or other impedance: its ohms;
- closed switch: a series impedance of 1e-6 pu (negligible, so that a
  breaker's current can be computed); an open switch is left out.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np
import pandas as pd

from ..models.conductors import cable_impedance_ohm
from ..models.network import solve_faults
from ..models.transformer import apply_tolerance
from .remembered import site_memory

#: Impedance of a closed switch [pu].
SWITCH_Z_PU = 1e-6j


@dataclass(frozen=True)
class NetworkArrays:
    """A site in one scenario as numbered buses, branches, shunts and devices."""

    bus_ids: list
    base_kv: np.ndarray
    branch_ids: list
    branch_from: np.ndarray
    branch_to: np.ndarray
    branch_z_pu: np.ndarray
    shunt_ids: list
    shunt_bus: np.ndarray
    shunt_z_pu: np.ndarray
    source_ids: list
    source_bus: np.ndarray
    device_ids: list
    device_branch: np.ndarray
    device_kv: np.ndarray
    #: (section, count) of the branches in order (transformers, cables, impedances, switches), and of the
    #: shunts (utilities, generators, motors; the sources are the first two) [-].
    branch_sections: tuple = ()
    shunt_sections: tuple = ()
    #: A stacked site's network: how it repeats its base site's
    #: (:class:`~arcflash.models.network_tiles.Tiling`); None for any other site.
    tiling: object = None


#: Indexes kept by :func:`bus_index` [-].
_INDEXES_KEPT = 32
_INDEXES = {}


def bus_index(ids):
    """``pandas.Index(ids, name="bus")``, one per list object (remembered while the list lives here): a stacked
    site's tagged id lists are themselves remembered (:func:`.stack_tiling.tagged_ids`), so its scenarios'
    tables share one index, which pandas compares at once (an index of many copies' ids is long)."""
    entry = _INDEXES.get(id(ids))
    if entry is None or entry[0] is not ids:
        if len(_INDEXES) >= _INDEXES_KEPT:
            _INDEXES.clear()
        entry = _INDEXES[id(ids)] = (ids, pd.Index(ids, name="bus"))
    return entry[1]


def _complex(r, x):
    return complex(r, x)


def _from_x(x_pu, x_over_r):
    return complex(x_pu / x_over_r, x_pu)


def _from_z(z_pu, x_over_r):
    r = z_pu / np.sqrt(1.0 + x_over_r**2)
    return complex(r, r * x_over_r)


def _fixed_branches(site, side):
    """(id, from bus, to bus, z_pu) of the transformers (their %Z at ``side`` of its tolerance), cables and
    impedances, which no scenario changes: remembered per site (:mod:`.remembered`) and used again while the
    site holds the same elements (compared item by item: the same objects, or equal ones)."""
    made_of = (tuple(site.transformers.items()), tuple(site.cables.items()), tuple(site.impedances.items()),
               tuple(site.buses.items()), site.facility)
    memory = site_memory("fixed_branches", site)
    if memory.get("made_of") != made_of:
        memory.clear()
        memory["made_of"] = made_of
    if side not in memory:
        memory[side] = _branches_of(site, side)
    return memory[side]


def transformer_z_pu(site, t, side):
    """A transformer's series impedance, its %Z at ``side`` of its tolerance [pu]."""
    z_percent = float(apply_tolerance(t.z_percent_used, t.z_tolerance_percent, side))
    ratio = t.secondary_kv / site.buses[t.secondary_bus].nominal_kv
    z = z_percent / 100.0 * site.facility.s_base_mva / (t.kva / 1000.0) * ratio**2
    return _from_z(z, t.x_over_r)


def cable_z_pu(site, c):
    """A cable's series impedance [pu]."""
    length_ft = c.length_ft
    if c.size is not None:
        z_ohm = cable_impedance_ohm(c.size, c.material, c.conduit, length_ft, c.sets)
    else:
        z_ohm = _complex(c.r_ohm_per_kft, c.x_ohm_per_kft) * length_ft / 1000.0 / c.sets
    return z_ohm / (site.buses[c.from_bus].nominal_kv ** 2 / site.facility.s_base_mva)


def impedance_z_pu(site, i):
    """A busway's or other impedance's series impedance [pu]."""
    return _complex(i.r_ohm, i.x_ohm) / (site.buses[i.from_bus].nominal_kv ** 2 / site.facility.s_base_mva)


def utility_z_pu(site, u, scenario):
    """A utility's source impedance at the scenario's level [pu]."""
    level = getattr(u, scenario.utility)
    z = site.facility.s_base_mva / u.fault_mva(scenario.utility) * (u.kv / site.buses[u.bus].nominal_kv) ** 2
    return _from_z(z, level.x_over_r)


def machine_z_pu(site, m):
    """A generator's or motor's subtransient impedance (a motor's hp taken as kVA) [pu]."""
    x = m.subtransient_reactance_percent / 100.0 * site.facility.s_base_mva / (m.kva / 1000.0)
    x *= (m.kv / site.buses[m.bus].nominal_kv) ** 2
    return _from_x(x, m.x_over_r)


def _branches_of(site, side):
    """The work of :func:`_fixed_branches`."""
    branches = [(ident, t.primary_bus, t.secondary_bus, transformer_z_pu(site, t, side))
                for ident, t in site.transformers.items()]  # (id, from, to, z_pu)
    branches += [(ident, c.from_bus, c.to_bus, cable_z_pu(site, c)) for ident, c in site.cables.items()]
    branches += [(ident, i.from_bus, i.to_bus, impedance_z_pu(site, i)) for ident, i in site.impedances.items()]
    return branches


def build_network(site, scenario):
    """The per-unit arrays of ``site`` in ``scenario`` (a Scenario object); a stacked site's copy by copy
    (:func:`.stack_tiling.stacked_network`)."""
    if site.stack is not None:
        from .stack_tiling import stacked_network

        return stacked_network(site, scenario)
    bus_ids = list(site.buses)
    index = {b: i for i, b in enumerate(bus_ids)}
    base_kv = np.array([site.buses[b].nominal_kv for b in bus_ids])
    side = scenario.transformer_z_side
    branches = list(_fixed_branches(site, side))
    fixed = len(branches)
    for ident, s in site.switches.items():
        closed = (s.normally == "closed" or ident in scenario.close) and ident not in scenario.open
        if closed:
            branches.append((ident, s.from_bus, s.to_bus, SWITCH_Z_PU))

    shunts, sources = [], []  # (id, bus, z_pu); (id, bus) of the utilities and generators that energise
    for ident, u in site.utilities.items():
        if not u.in_service or ident in scenario.utilities_off:
            continue
        shunts.append((ident, u.bus, utility_z_pu(site, u, scenario)))
        sources.append((ident, u.bus))
    utilities = len(shunts)
    for ident, g in site.generators.items():
        running = (g.running or ident in scenario.generators_running) and ident not in scenario.generators_stopped
        if running:
            shunts.append((ident, g.bus, machine_z_pu(site, g)))
            sources.append((ident, g.bus))
    generators = len(shunts) - utilities
    if scenario.motors == "on":
        for ident, m in site.motors.items():
            if m.contributes and ident not in scenario.motors_off:
                shunts.append((ident, m.bus, machine_z_pu(site, m)))

    branch_index = {b[0]: k for k, b in enumerate(branches)}
    devices = [(ident, d) for ident, d in site.devices.items() if d.branch in branch_index]
    return NetworkArrays(
        bus_ids=bus_ids,
        base_kv=base_kv,
        branch_ids=[b[0] for b in branches],
        branch_from=np.array([index[b[1]] for b in branches], dtype=np.intp),
        branch_to=np.array([index[b[2]] for b in branches], dtype=np.intp),
        branch_z_pu=np.array([b[3] for b in branches], dtype=complex),
        shunt_ids=[s[0] for s in shunts],
        shunt_bus=np.array([index[s[1]] for s in shunts], dtype=np.intp),
        shunt_z_pu=np.array([s[2] for s in shunts], dtype=complex),
        source_ids=[ident for ident, _ in sources],
        source_bus=np.array([index[b] for _, b in sources], dtype=np.intp),
        device_ids=[d[0] for d in devices],
        device_branch=np.array([branch_index[d.branch] for _, d in devices], dtype=np.intp),
        device_kv=np.array([site.buses[d.at_bus].nominal_kv for _, d in devices]),
        branch_sections=(("transformers", len(site.transformers)), ("cables", len(site.cables)),
                         ("impedances", len(site.impedances)), ("switches", len(branches) - fixed)),
        shunt_sections=(("utilities", utilities), ("generators", generators),
                        ("motors", len(shunts) - utilities - generators)),
    )


@dataclass(frozen=True, eq=False)
class ScenarioFaults:
    """Fault tables of one scenario, with the network and solution behind them.

    ``devices`` (a table with names) is built on first access: studies work
    from the solution's arrays and need not hold millions of name strings.
    """

    scenario: str
    buses: pd.DataFrame
    net: NetworkArrays
    solution: object

    @cached_property
    def devices(self):
        """Device currents per bus fault: ``fault_bus``, ``device``, ``branch``, ``current_ka``,
        ``share``, ``from_bus``, ``to_bus`` (the direction of the current)."""
        net, solution = self.net, self.solution
        ids = np.array(net.bus_ids, dtype=object)
        branch = net.device_branch[solution.device]
        forward = solution.device_direction > 0
        ends_from, ends_to = ids[net.branch_from[branch]], ids[net.branch_to[branch]]
        return pd.DataFrame(
            {
                "fault_bus": ids[solution.device_fault_bus],
                "device": np.array(net.device_ids, dtype=object)[solution.device],
                "branch": np.array(net.branch_ids, dtype=object)[branch],
                "current_ka": solution.device_current_ka,
                "share": solution.device_share,
                "from_bus": np.where(forward, ends_from, ends_to),
                "to_bus": np.where(forward, ends_to, ends_from),
            }
        )


def solve_scenario(site, scenario=None, for_clearing=False, backfeed_floor_ka=None):
    """Bolted faults at every bus and the device currents, one scenario.

    With ``for_clearing``, back-feed rows (a device carrying current from
    motors or sources below it to a fault elsewhere) are kept only where the
    current could make the device clear within the arc-duration cap: the
    rows clearing can use. Staged clearing solves every device's current
    anew and does not depend on this. ``backfeed_floor_ka`` (per device,
    [kA]) replaces those currents: a lower floor keeps more rows and leaves
    the clearing unchanged (tested), so variants of the site that lower
    devices' settings can share one solve (:mod:`.setting_variants`).

    Returns
    -------
    ScenarioFaults
        ``buses``: indexed by bus id, with ``nominal_kv``, ``bolted_ka``,
        ``x_over_r``, ``energized``. ``devices``: one row per (faulted bus,
        device) where the device carries at least 0.1 % of the fault
        current: ``fault_bus``, ``device``, ``branch``, ``current_ka`` (in the
        device's kV), ``share`` (of the bus fault current), ``from_bus`` and
        ``to_bus`` (the direction of the current through the branch).
    """
    chosen = site.scenario(scenario)
    net = build_network(site, chosen)
    floor = None
    if backfeed_floor_ka is not None:
        floor = np.asarray(backfeed_floor_ka, dtype=float)
    elif for_clearing and net.device_ids:
        from .device_bank import device_bank
        from .zones import zone_floor_ka

        cap = site.facility.arc_duration_cap_s
        floor = device_bank(site, chosen, net.device_ids).threshold_a(cap if cap is not None else np.inf) / 1000.0
        floor = zone_floor_ka(site, chosen, net.device_ids, floor)  # zone settings: their lower levels too
    solution = solve_faults(
        net.base_kv, net.branch_from, net.branch_to, net.branch_z_pu, net.shunt_bus, net.shunt_z_pu,
        net.source_bus, net.device_branch, net.device_kv, voltage_factor=site.facility.voltage_factor,
        s_base_mva=site.facility.s_base_mva, backfeed_min_ka=floor,
    )
    buses = pd.DataFrame(
        {
            "nominal_kv": net.base_kv,
            "bolted_ka": solution.bolted_ka,
            "x_over_r": solution.x_over_r,
            "energized": solution.energized,
        },
        index=bus_index(net.bus_ids),
    )
    buses["scenario"] = chosen.name
    return ScenarioFaults(chosen.name, buses, net, solution)


def bolted_faults(site, scenario=None):
    """Bolted three-phase fault current at every bus of ``site``.

    Parameters
    ----------
    site : Site
        From :func:`arcflash.load_site`.
    scenario : str, optional
        Scenario name; the site's default when None.

    Returns
    -------
    pandas.DataFrame
        Indexed by bus id: ``nominal_kv``, ``bolted_ka``, ``x_over_r``,
        ``energized`` and ``scenario``. A de-energised bus has 0 kA.
    """
    return solve_scenario(site, scenario).buses
