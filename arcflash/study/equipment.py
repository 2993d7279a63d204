"""One piece of equipment: typical values, the IEEE 1584-2018 model, a record.

This is the library side of the single-equipment command; the CLI only parses
options and renders the record this module returns.
"""

from __future__ import annotations

import math

from ..models import ieee1584, nfpa70e
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


#: What a field tool prints when the user accepted the full-current clearing time for the reduced arcing
#: current: on an inverse-time curve the smaller current clears later, so this can under-state the energy.
SAME_TIME_NOT_CONSERVATIVE = (
    "NOT CONSERVATIVE (accepted by you): the full-current clearing time was used for the reduced arcing "
    "current. A device on an inverse-time curve clears the smaller current later, so the energy may be "
    "higher than shown; read the reduced-current time from the device's time-current curve.")


def reduced_clearing_time(clearing_time_s, reduced_clearing_time_s, accept_same_time):
    """The clearing time at the reduced arcing current by the field tools' rule, and what to disclose.

    The user states it, or explicitly accepts the full-current time (disclosed as not conservative);
    anything else is refused.

    Parameters
    ----------
    clearing_time_s : float
        Arc duration at the full arcing current [s]
    reduced_clearing_time_s : float or None
        Arc duration at the reduced arcing current, if stated [s]
    accept_same_time : bool
        The user accepts the full-current time for the reduced current [-]

    Returns
    -------
    tuple
        (reduced clearing time [s], list of not-conservative disclosures)

    Raises
    ------
    ValueError
        Neither stated nor accepted, or both; the message names the inputs.
    """
    if reduced_clearing_time_s is not None and accept_same_time:
        raise ValueError("reduced_clearing_time_s and accept_same_time: give one of them, not both")
    if reduced_clearing_time_s is not None:
        return float(reduced_clearing_time_s), []
    if not accept_same_time:
        raise ValueError(
            "reduced_clearing_time_s: expected the clearing time at the reduced arcing current (read it from the "
            "device's time-current curve: on an inverse curve the smaller current clears later), or "
            "accept_same_time to use the full-current time, which is then reported as not conservative")
    return float(clearing_time_s), [SAME_TIME_NOT_CONSERVATIVE]


def assess_equipment(voltage_kv, bolted_ka, clearing_time_s, reduced_clearing_time_s=None, *,
                     equipment_class=None, config=None, gap_mm=None, working_distance_mm=None,
                     height_mm=None, width_mm=None, depth_mm=None, strict=False, accept_same_time=False):
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
        Arc duration at the reduced arcing current; required unless ``accept_same_time`` [s]
    equipment_class, config, gap_mm, working_distance_mm, height_mm, width_mm, depth_mm
        See :func:`resolve_equipment`.
    strict : bool
        Raise :class:`~arcflash.models.errors.ModelRangeError` instead of flagging [-]
    accept_same_time : bool
        Use the full-current time for the reduced current too; disclosed as not conservative [-]

    Returns
    -------
    dict
        JSON-ready record: method, inputs, full_case, reduced_case, governing (with the PPE category in
        words, minimum arc rating and shock approach boundaries, as the study gives them), enclosure_correction,
        flags, notes, not_conservative, caution.
    """
    check_unit_slips(voltage_kv=voltage_kv, bolted_ka=bolted_ka, gap_mm=gap_mm,
                     working_distance_mm=working_distance_mm, height_mm=height_mm, width_mm=width_mm,
                     depth_mm=depth_mm)
    eq = resolve_equipment(equipment_class, config, gap_mm, working_distance_mm, height_mm, width_mm, depth_mm)
    notes = []
    reduced_clearing_time_s, not_conservative = reduced_clearing_time(clearing_time_s, reduced_clearing_time_s,
                                                                      accept_same_time)
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

    energy = float(r.governing_incident_energy_cal_cm2)
    shock = nfpa70e.shock_boundaries(voltage_kv)
    category = int(nfpa70e.ppe_category(energy)) if math.isfinite(energy) else -2
    governing = {
        "case": "reduced" if bool(r.reduced_governs) else "full",
        "incident_energy_j_cm2": _number(r.governing_incident_energy_j_cm2),
        "incident_energy_cal_cm2": _number(energy),
        "arc_flash_boundary_mm": _number(r.governing_arc_flash_boundary_mm),
        "working_distance_mm": _number(eq["working_distance_mm"]),
        "ppe_category": category,
        "ppe_category_text": nfpa70e.ppe_category_words(category),
        "minimum_arc_rating_cal_cm2": (_number(nfpa70e.minimum_arc_rating_cal_cm2(energy))
                                       if 0 < category and math.isfinite(energy) else None),
        "limited_approach_movable_mm": _number(shock["limited_movable_mm"]),
        "limited_approach_fixed_mm": _number(shock["limited_fixed_mm"]),
        "restricted_approach_mm": _number(shock["restricted_mm"]),
        "shock_boundaries": nfpa70e.shock_boundary_text(voltage_kv),
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
        "not_conservative": not_conservative,
        "caution": CAUTION,
    }


def _number(value):
    """A float for JSON, or None where the model gives no finite value."""
    value = float(value)
    return value if math.isfinite(value) else None
