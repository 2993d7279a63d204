"""What a time-current (TCC) page shows, taken from the study's own results.

The study keeps, per scenario, the devices on the source paths of every bus with the current each carries
in a bolted fault at that bus (:class:`PathRecord`, compact integer and float arrays). A TCC page of a bus
then needs no new fault solution: its devices, the current through each at the bus's arcing currents, and
the governing row's currents, device, time and opening sequence.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class PathRecord:
    """One scenario's source-path rows (bus, device, the device's bolted current at that bus), by bus."""

    scenario: str
    bus_ids: list
    device_ids: np.ndarray
    order: np.ndarray  # path rows sorted by bus
    starts: np.ndarray  # first sorted row of each bus (length buses + 1)
    device: np.ndarray
    device_ka: np.ndarray
    zone: np.ndarray = None  # per row: the device's zone holds the bus (arcflash.study.zones.zone_rows)

    @classmethod
    def from_paths(cls, scenario, paths, zone=None):
        """From a scenario's :class:`arcflash.study.clearing.ClearingPaths` (``zone``: which rows' devices' zone
        holds the bus, :func:`arcflash.study.zones.zone_rows`; none where not given)."""
        order = np.argsort(paths.bus, kind="stable").astype(np.int64)
        starts = np.searchsorted(paths.bus[order], np.arange(len(paths.bus_ids) + 1))
        return cls(scenario, list(paths.bus_ids), np.asarray(paths.device_ids), order, starts,
                   np.asarray(paths.device), np.asarray(paths.device_ka, dtype=float),
                   np.zeros(paths.bus.size, dtype=bool) if zone is None else zone)

    def devices_at(self, bus):
        """(device ids, bolted current through each [kA at its own voltage], whether the bus is in its zone) on
        the source paths of ``bus``, in path order, each device once (its largest current)."""
        k = self.bus_ids.index(bus)
        rows = self.order[self.starts[k]:self.starts[k + 1]]
        found, zone = {}, {}
        for d, ka, near in zip(self.device[rows].tolist(), self.device_ka[rows].tolist(), self.zone[rows].tolist()):
            found[d] = max(found.get(d, 0.0), ka)
            zone[d] = zone.get(d, False) or near
        return [str(self.device_ids[d]) for d in found], list(found.values()), [zone[d] for d in found]


@dataclass(frozen=True)
class TccDevice:
    """A device on the page: id, its voltage, whether its maintenance setting is on, the current through it
    at the bus's arcing and reduced arcing currents [A at its own voltage] (NaN where the study followed
    the arc stage by stage through a device off the bus's source paths), and when it opened in the study."""

    device: str
    kv: float
    maintenance: bool
    arcing_a: float
    reduced_arcing_a: float
    opens_at_s: float = float("nan")  # its opening in the study's sequence of the governing case, if any
    zone: bool = False  # its zone settings are in force: the bus is in its zone (arcflash.study.zones)


@dataclass(frozen=True)
class TccData:
    """A bus's TCC page: the governing scenario and case, the bus's currents, its devices, and how the arc
    ended (device, time, opening sequence) as the study found it."""

    bus: str
    scenario: str
    kv: float
    bolted_ka: float
    arcing_ka: float
    reduced_arcing_ka: float
    devices: tuple
    governing_case: str
    governing_device: str | None
    clearing_time_s: float
    sequence: str


def tcc_data(site, bus, row, record, steps=None):
    """The TCC page of ``bus`` from its governing study row, the path record of that row's scenario and the
    study's opening steps (``StudyResults.steps``; devices that opened in the governing case's sequence)."""
    scenario = site.scenario(row["scenario"])
    maintenance = set(scenario.energy_reducing_maintenance_switching)
    case = str(row["governing_case"] or "")
    opened = {}
    if steps is not None and len(steps):
        mine = steps[(steps["bus"] == bus) & (steps["scenario"] == scenario.name) & (steps["case"] == case)]
        for device, at in zip(mine["device"], mine["opening_time_s"]):
            opened.setdefault(device, float(at))
    device = row["device_governing"]
    if isinstance(device, str) and device in site.devices and device not in opened:
        opened[device] = float(row["clearing_time_governing_s"])
    ids, bolted_through, in_zone = record.devices_at(bus)
    zone = {d for d, inside in zip(ids, in_zone) if inside and site.devices[d].zone}
    bolted = float(row["bolted_ka"])
    share = {d: (0.0 if bolted <= 0 else ka / bolted) for d, ka in zip(ids, bolted_through)}
    nan = float("nan")
    devices = tuple(
        TccDevice(d, site.buses[site.devices[d].at_bus].nominal_kv, d in maintenance,
                  share[d] * float(row["arcing_current_ka"]) * 1000.0 if d in share else nan,
                  share[d] * float(row["reduced_arcing_current_ka"]) * 1000.0 if d in share else nan,
                  opened.get(d, nan), d in zone)
        for d in list(share) + [d for d in opened if d not in share and d in site.devices])
    return TccData(bus, scenario.name, site.buses[bus].nominal_kv, bolted, float(row["arcing_current_ka"]),
                   float(row["reduced_arcing_current_ka"]), devices, case,
                   device if isinstance(device, str) and device else None, float(row["clearing_time_governing_s"]),
                   str(row.get("clearing_sequence_governing") or ""))
