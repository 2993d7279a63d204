"""One piece of equipment: typical values, the IEEE 1584-2018 model, a record.

This is the library side of the single-equipment command; the CLI only parses
options and renders the record this module returns.
"""

from __future__ import annotations

import math

from ..models import ieee1584
from ..models.ieee1584_tables import ENCLOSED_CONFIGURATIONS, EQUIPMENT_CLASSES
from ..models.units import j_cm2_to_cal_cm2
from ..cautions import CAUTION
from ..site.slips import check_unit_slips

METHOD = "IEEE 1584-2018"


def resolve_equipment(equipment_class=None, config=None, gap_mm=None, working_distance_mm=None,
                      height_mm=None, width_mm=None, depth_mm=None):
    """Fill unset equipment values from an equipment class; explicit values win.

    Parameters
    ----------
    equipment_class : str, optional
        Key of :data:`EQUIPMENT_CLASSES` [-]
    config : str, optional
        Electrode configuration [-]
    gap_mm, working_distance_mm, height_mm, width_mm, depth_mm : float, optional
        Explicit values [mm]

    Returns
    -------
    dict
        config, gap_mm, working_distance_mm, height_mm, width_mm, depth_mm and
        the class key (None if no class).

    Raises
    ------
    ValueError
        Unknown class, or a value neither given nor supplied by a class.
    """
    typical = None
    if equipment_class is not None:
        typical = EQUIPMENT_CLASSES.get(equipment_class)
        if typical is None:
            raise ValueError(
                f"equipment class: unknown {equipment_class!r}; expected one of {', '.join(EQUIPMENT_CLASSES)}"
            )

    def pick(name, value):
        return value if value is not None else (getattr(typical, name) if typical else None)

    values = {
        "config": (config or (typical.config if typical else None)),
        "gap_mm": pick("gap_mm", gap_mm),
        "working_distance_mm": pick("working_distance_mm", working_distance_mm),
        "height_mm": pick("height_mm", height_mm),
        "width_mm": pick("width_mm", width_mm),
        "depth_mm": pick("depth_mm", depth_mm),
        "equipment_class": equipment_class,
    }
    missing = [k for k in ("config", "gap_mm", "working_distance_mm") if values[k] is None]
    if values["config"] is not None and values["config"].upper() in ENCLOSED_CONFIGURATIONS:
        missing += [k for k in ("height_mm", "width_mm") if values[k] is None]
    elif values["config"] is not None:
        values.update(height_mm=None, width_mm=None, depth_mm=None)  # open air: not used
    if missing:
        raise ValueError(
            f"missing {', '.join(missing)}: give them, or an equipment class that supplies them"
        )
    values["config"] = values["config"].upper()
    return values


def assess_equipment(voltage_kv, bolted_ka, clearing_time_s, reduced_clearing_time_s=None, *,
                     equipment_class=None, config=None, gap_mm=None, working_distance_mm=None,
                     height_mm=None, width_mm=None, depth_mm=None, strict=False):
    """Arc-flash result of one piece of equipment as a plain record.

    Parameters
    ----------
    voltage_kv : float
        Nominal system voltage [kV]
    bolted_ka : float
        Bolted three-phase fault current [kA]
    clearing_time_s : float
        Arc duration at the full arcing current [s]
    reduced_clearing_time_s : float, optional
        Arc duration at the reduced arcing current; when not given the full
        duration is used and a note says so [s]
    equipment_class, config, gap_mm, working_distance_mm, height_mm, width_mm, depth_mm
        See :func:`resolve_equipment`.
    strict : bool
        Raise :class:`~arcflash.models.errors.ModelRangeError` instead of flagging [-]

    Returns
    -------
    dict
        JSON-ready record: method, inputs, full_case, reduced_case, governing,
        enclosure_correction, flags, notes, caution.
    """
    check_unit_slips(voltage_kv=voltage_kv, bolted_ka=bolted_ka, gap_mm=gap_mm,
                     working_distance_mm=working_distance_mm, height_mm=height_mm, width_mm=width_mm,
                     depth_mm=depth_mm)
    eq = resolve_equipment(equipment_class, config, gap_mm, working_distance_mm, height_mm, width_mm, depth_mm)
    notes = []
    if reduced_clearing_time_s is None:
        reduced_clearing_time_s = clearing_time_s
        notes.append(
            "No clearing time was given for the reduced arcing current; the full-current "
            "clearing time was used. A protective device is often slower at the lower current: "
            "read it from the device's time-current curve."
        )
    if eq["config"] in ENCLOSED_CONFIGURATIONS and eq["depth_mm"] is None:
        notes.append("Enclosure depth unknown: the enclosure is taken as typical (not shallow), the larger energy.")
    r = ieee1584.evaluate(
        voltage_kv, bolted_ka, eq["gap_mm"], eq["working_distance_mm"], clearing_time_s,
        reduced_clearing_time_s, eq["config"], eq["height_mm"], eq["width_mm"], eq["depth_mm"], strict=strict,
    )

    def case(current, energy, boundary, time_s):
        return {
            "arcing_current_ka": _number(current),
            "clearing_time_s": _number(time_s),
            "incident_energy_j_cm2": _number(energy),
            "incident_energy_cal_cm2": _number(j_cm2_to_cal_cm2(energy)),
            "arc_flash_boundary_mm": _number(boundary),
        }

    governing = {
        "case": "reduced" if bool(r.reduced_governs) else "full",
        "incident_energy_j_cm2": _number(r.governing_incident_energy_j_cm2),
        "incident_energy_cal_cm2": _number(r.governing_incident_energy_cal_cm2),
        "arc_flash_boundary_mm": _number(r.governing_arc_flash_boundary_mm),
    }
    reason = str(r.out_of_range_reason)
    return {
        "method": METHOD,
        "inputs": {"voltage_kv": float(voltage_kv), "bolted_ka": float(bolted_ka), **eq},
        "full_case": case(r.arcing_current_ka, r.incident_energy_j_cm2, r.arc_flash_boundary_mm, clearing_time_s),
        "reduced_case": case(r.reduced_arcing_current_ka, r.reduced_incident_energy_j_cm2,
                             r.reduced_arc_flash_boundary_mm, reduced_clearing_time_s),
        "governing": governing,
        "enclosure_correction": float(r.enclosure_correction),
        "flags": [part for part in reason.split("; ") if part],
        "notes": notes,
        "caution": CAUTION,
    }


def _number(value):
    """A float for JSON, or None where the model gives no finite value."""
    value = float(value)
    return value if math.isfinite(value) else None
