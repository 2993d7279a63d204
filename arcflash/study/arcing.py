"""Equipment geometry of every bus and its arcing currents (IEEE 1584-2018)."""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..models import ieee1584
from .equipment import resolve_equipment


def default_class(nominal_kv):
    """Typical equipment class by voltage when a bus gives neither class nor geometry."""
    if nominal_kv <= 0.6:
        return "switchgear-lv"
    return "switchgear-5kv" if nominal_kv <= 5.0 else "switchgear-15kv"


def equipment_table(site):
    """Electrode configuration, gap, working distance and enclosure of every bus.

    Explicit values win over the bus's equipment class; a bus with neither
    takes the typical class of its voltage (noted in ``geometry_note``).

    Returns
    -------
    pandas.DataFrame
        Indexed by bus id.
    """
    if site.stack is not None:  # a stacked site's, copy by copy
        from .stack_tiling import stacked_equipment

        return stacked_equipment(site).copy()
    rows = {ident: equipment_row(bus) for ident, bus in site.buses.items()}
    table = pd.DataFrame.from_dict(rows, orient="index")
    table.index.name = "bus"
    return table


def equipment_row(bus):
    """One bus's row of :func:`equipment_table` (a dict)."""
    given = [bus.gap_mm, bus.working_distance_mm, bus.config]
    cls = bus.equipment_class
    note = ""
    if cls is None and any(v is None for v in given):
        cls = default_class(bus.nominal_kv)
        note = f"typical values of '{cls}' assumed (no equipment class given)"
    values = resolve_equipment(cls, bus.config, bus.gap_mm, bus.working_distance_mm,
                               bus.height_mm, bus.width_mm, bus.depth_mm)
    values["geometry_note"] = note
    return values


def arcing_currents(site, buses, equipment=None):
    """Arcing and reduced arcing current at every energised bus.

    Parameters
    ----------
    site : Site
    buses : pandas.DataFrame
        Fault table (``nominal_kv``, ``bolted_ka``, ``energized``) by bus id.
    equipment : pandas.DataFrame, optional
        From :func:`equipment_table` (computed when not given).

    Returns
    -------
    pandas.DataFrame
        ``arcing_current_ka``, ``reduced_arcing_current_ka`` (NaN where
        de-energised), indexed like ``buses``.
    """
    equipment = equipment_table(site) if equipment is None else equipment
    bolted = buses["bolted_ka"].to_numpy(float)
    live = buses["energized"].to_numpy(bool) & (bolted > 0)
    arcing, reduced = np.full(live.size, np.nan), np.full(live.size, np.nan)
    if live.any():
        eq = equipment if equipment.index.equals(buses.index) else equipment.loc[buses.index]
        result = ieee1584.evaluate(
            buses["nominal_kv"].to_numpy(float)[live], bolted[live],
            *(eq[name].to_numpy(float)[live] for name in ("gap_mm", "working_distance_mm")), 1.0, 1.0,
            eq["config"].to_numpy(str)[live],
            *(eq[name].to_numpy(float)[live] for name in ("height_mm", "width_mm", "depth_mm")),
        )
        arcing[live], reduced[live] = result.arcing_current_ka, result.reduced_arcing_current_ka
    return pd.DataFrame({"arcing_current_ka": arcing, "reduced_arcing_current_ka": reduced}, index=buses.index)
