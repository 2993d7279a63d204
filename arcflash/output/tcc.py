"""Time-current characteristic (TCC) plot of the devices protecting a bus (matplotlib)."""

from __future__ import annotations

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402

from ..study.clearing import device_curve, energising_sources, source_paths  # noqa: E402
from ..study.faults import build_network, solve_scenario  # noqa: E402
from ..study.arcing import arcing_currents  # noqa: E402


def devices_protecting(site, scenario, bus):
    """Ids of the devices on the source paths of ``bus``, nearest first."""
    net = build_network(site, scenario)
    index = net.bus_ids.index(bus)
    found = []
    for _, source in energising_sources(site, scenario, net):
        buses, devices, _, _ = source_paths(net, source)
        found += [net.device_ids[d] for d in devices[buses == index]]
    return list(dict.fromkeys(found))


def _in_zone(site, scenario, faults, bus):
    """The devices with zone settings whose zone holds ``bus`` in the scenario (:mod:`arcflash.study.zones`)."""
    from ..study.clearing import clearing_paths
    from ..study.zones import has_zones, zone_rows

    if not has_zones(site):
        return set()
    paths = clearing_paths(site, scenario, faults)
    rows = zone_rows(site, scenario, paths) & (paths.bus == list(paths.bus_ids).index(bus))
    return {str(paths.device_ids[d]) for d in np.unique(paths.device[rows]).tolist()
            if site.devices[str(paths.device_ids[d])].zone}


def tcc_figure(site, bus, scenario=None, reference_kv=None):
    """A log-log TCC figure for ``bus``: its protecting devices, its fault currents.

    Currents are referred to ``reference_kv`` (the bus's nominal kV by
    default). Vertical lines mark the bolted, arcing and reduced arcing
    currents at the bus; a dot marks each device's clearing time at its own
    share of the arcing current.

    Returns
    -------
    matplotlib.figure.Figure
    """
    chosen = site.scenario(scenario)
    faults = solve_scenario(site, chosen.name)
    arcs = arcing_currents(site, faults.buses)
    bus_kv = site.buses[bus].nominal_kv
    ref = reference_kv or bus_kv
    figure, axes = plt.subplots(figsize=(7.5, 8.5))
    currents = np.logspace(0, 6, 600)
    table = faults.devices[faults.devices["fault_bus"] == bus].set_index("device")
    ratio = arcs.loc[bus, "arcing_current_ka"] / faults.buses.loc[bus, "bolted_ka"]
    maintenance = set(chosen.energy_reducing_maintenance_switching)
    zone = _in_zone(site, chosen, faults, bus)
    for device in devices_protecting(site, chosen, bus):
        curve = device_curve(site, device, maintenance=device in maintenance, zone=device in zone)
        device_kv = site.buses[site.devices[device].at_bus].nominal_kv
        times = curve.clearing_time_s(currents)
        shown = np.isfinite(times)
        label = device + (" (energy-reducing maintenance switching on)" if device in maintenance else "")
        label += " (zone settings in force)" if device in zone else ""
        line, = axes.plot(currents[shown] * device_kv / ref, times[shown], label=label)
        if device in table.index:
            amps = table.loc[device, "current_ka"] * ratio * 1000.0
            t = float(curve.clearing_time_s(amps))
            if np.isfinite(t):
                axes.plot([amps * device_kv / ref], [t], "o", color=line.get_color())
                axes.annotate(f"{t:.3f} s", (amps * device_kv / ref, t), textcoords="offset points",
                              xytext=(6, 4), fontsize=8)
    marks = [("bolted", faults.buses.loc[bus, "bolted_ka"], "-", 0.012),
             ("arcing", arcs.loc[bus, "arcing_current_ka"], "--", 0.05),
             ("reduced arcing", arcs.loc[bus, "reduced_arcing_current_ka"], ":", 0.2)]
    for label, ka, style, height in marks:
        if np.isfinite(ka) and ka > 0:
            amps = ka * 1000.0 * bus_kv / ref
            axes.axvline(amps, color="0.3", linestyle=style, linewidth=1)
            axes.text(amps, height, f" {label} {ka:.2f} kA", rotation=90, fontsize=8, va="bottom", ha="right")
    axes.set_xscale("log")
    axes.set_yscale("log")
    axes.set_xlim(10, 1e6)
    axes.set_ylim(0.01, 1000)
    axes.grid(True, which="both", linewidth=0.3)
    axes.set_xlabel(f"Current [A] referred to {ref:g} kV")
    axes.set_ylabel("Clearing time [s]")
    axes.set_title(f"{bus} - scenario '{chosen.name}' - devices on its source paths", fontsize=10)
    if axes.get_legend_handles_labels()[0]:
        axes.legend(fontsize=8, loc="upper right")
    else:
        axes.text(0.5, 0.5, "no protective device on the source paths of this bus", transform=axes.transAxes,
                  ha="center", fontsize=9)
    figure.tight_layout()
    return figure
