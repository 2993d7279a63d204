"""Plain-text rendering of arc-flash results for the terminal."""

from __future__ import annotations

import math
import textwrap

from ..models.units import MM_PER_INCH
from .cautions import CAUTION


def length_text(length_mm, missing="not computed"):
    """A length in millimetres and in feet and inches, both from the same value, both rounded up (one rule:
    a printed length is never shorter than the computed one).

    Parameters
    ----------
    length_mm : float or None
        The length [mm]
    missing : str
        What a missing length (None or NaN) prints as [-]

    Examples
    --------
    >>> length_text(457.2), length_text(1066.8), length_text(None, "-")
    ('458 mm / 1 ft 6 in', '1,067 mm / 3 ft 6 in', '-')
    """
    if length_mm is None or not math.isfinite(length_mm):
        return missing
    feet, inches = _feet_inches_up(length_mm)
    return f"{math.ceil(length_mm - 1e-9):,.0f} mm / {feet} ft {inches} in"


def _feet_inches_up(length_mm):
    """:func:`arcflash.models.units.mm_to_feet_inches` (rounded up) of one finite length, in plain Python
    (the same operations; a label's lengths one at a time) [ft, in]."""
    return divmod(math.ceil(float(length_mm) / MM_PER_INCH - 1e-9), 12)


def _tenth_up(energy_cal_cm2):
    """:func:`arcflash.models.nfpa70e.minimum_arc_rating_cal_cm2` of one finite value, in plain Python: the
    same operations (numpy's round to 9 decimals is rint(x * 1e9) / 1e9, Python's round of a float to an
    integer is the same half-to-even rint) [cal/cm²]."""
    return math.ceil(round(float(energy_cal_cm2) * 10.0 * 1e9) / 1e9) / 10.0


def energy_text(incident_energy_cal_cm2, decimals=1):
    """An incident energy rounded **up** to the given decimals: the printed value is never below the computed one.

    Parameters
    ----------
    incident_energy_cal_cm2 : float or None
        Incident energy (any energy unit; the rounding is the same) [cal/cm²]
    decimals : int
        Decimals printed [-]

    Returns
    -------
    str
        'not computed' for None or NaN.

    Examples
    --------
    >>> energy_text(3.94), energy_text(4.0), energy_text(39.96), energy_text(0.1234, 2)
    ('4.0', '4.0', '40.0', '0.13')
    """
    if incident_energy_cal_cm2 is None or not math.isfinite(incident_energy_cal_cm2):
        return "not computed"
    if decimals == 1:  # the same round-up as the minimum arc rating (NFPA 70E)
        return f"{_tenth_up(incident_energy_cal_cm2):.1f}"
    scale = 10.0 ** decimals
    # round(., 9) first: a value already at the printed step (1.23 stored as 1.2300000000000002) stays.
    return f"{math.ceil(round(float(incident_energy_cal_cm2) * scale, 9)) / scale:.{decimals}f}"


def feet_inches(length_mm):
    """A length as ``3 ft 7 in (1,083 mm)``, rounded up to the inch and the mm.

    Parameters
    ----------
    length_mm : float
        Length [mm]

    Returns
    -------
    str
        The length in feet and inches, then in millimetres.

    Examples
    --------
    >>> feet_inches(1082.44)
    '3 ft 7 in (1,083 mm)'
    """
    if length_mm is None or not math.isfinite(length_mm):
        return "not computed"
    feet, inches = _feet_inches_up(length_mm)
    return f"{feet} ft {inches} in ({math.ceil(length_mm - 1e-9):,} mm)"


def _fmt(value, spec):
    return "not computed" if value is None else format(value, spec)


def _row(label, *values, width=30):
    return f"  {label:<{width}}" + "".join(f"{v:>24}" for v in values)


def _rating_words(governing):
    """The minimum arc rating of a governing record in words."""
    if governing["minimum_arc_rating_cal_cm2"] is not None:
        return f"{governing['minimum_arc_rating_cal_cm2']:.1f} cal/cm2"
    if governing["ppe_category"] == -1:
        return "none applies: above 40 cal/cm2 de-energize, or work only under an engineered plan"
    if governing["ppe_category"] == 0:
        return "none required (below 1.2 cal/cm2): non-melting natural-fibre clothing"
    return "not computed"


def _not_conservative(disclosures):
    """The lines that disclose choices the user accepted that can under-state the hazard."""
    if not disclosures:
        return []
    lines = ["NOT CONSERVATIVE - choices you accepted that can under-state the hazard:"]
    lines += [textwrap.fill(d, 78, initial_indent="  ! ", subsequent_indent="    ") for d in disclosures]
    return lines + [""]


def equipment_report(record):
    """Render one equipment result (the dict of :func:`arcflash.cli` ``--json``).

    Parameters
    ----------
    record : dict
        Inputs, results, flags and caution as built by the CLI.

    Returns
    -------
    str
        A readable multi-line report.
    """
    i, full, red, gov = record["inputs"], record["full_case"], record["reduced_case"], record["governing"]
    enclosure = "open air (not used)" if i["height_mm"] is None else (
        f"{i['height_mm']:g} x {i['width_mm']:g} x "
        + (f"{i['depth_mm']:g}" if i["depth_mm"] is not None else "(depth unknown)")
        + " mm (H x W x D)"
    )
    lines = [
        f"Arc-flash result for one equipment - {record['method']}",
        "",
        "Inputs",
        _row("nominal voltage", f"{i['voltage_kv']:g} kV"),
        _row("bolted fault current", f"{i['bolted_ka']:g} kA"),
        _row("electrode configuration", i["config"]),
        _row("gap", f"{i['gap_mm']:g} mm"),
        _row("working distance", f"{i['working_distance_mm']:g} mm"),
        f"  {'enclosure':<30}{enclosure}",
    ]
    if i.get("equipment_class"):
        lines.append(f"  {'typical values from class':<30}{i['equipment_class']}")
    lines += [
        "",
        _row("Results", "full arcing current", "reduced current"),
        _row("arcing current (kA)", _fmt(full["arcing_current_ka"], ".3f"), _fmt(red["arcing_current_ka"], ".3f")),
        _row("clearing time (s)", _fmt(full["clearing_time_s"], ".3f"), _fmt(red["clearing_time_s"], ".3f")),
        _row("incident energy (cal/cm2)", energy_text(full["incident_energy_cal_cm2"], 2),
             energy_text(red["incident_energy_cal_cm2"], 2)),
        _row("incident energy (J/cm2)", energy_text(full["incident_energy_j_cm2"], 2),
             energy_text(red["incident_energy_j_cm2"], 2)),
        _row("arc-flash boundary", feet_inches(full["arc_flash_boundary_mm"]),
             feet_inches(red["arc_flash_boundary_mm"])),
        _row("enclosure correction factor", f"{record['enclosure_correction']:.3f}"),
        "",
        f"Governing case: {gov['case']} arcing current",
        f"  incident energy {energy_text(gov['incident_energy_cal_cm2'], 2)} cal/cm2 "
        f"({energy_text(gov['incident_energy_j_cm2'], 2)} J/cm2) at {i['working_distance_mm']:g} mm",
        f"  arc-flash boundary {feet_inches(gov['arc_flash_boundary_mm'])}",
        f"  PPE category: {gov['ppe_category_text']}",
        f"  minimum arc rating of clothing: {_rating_words(gov)}",
        f"  limited approach {gov['shock_boundaries']['limited_fixed']} fixed parts, "
        f"{gov['shock_boundaries']['limited_movable']} movable conductors; "
        f"restricted approach {gov['shock_boundaries']['restricted']} (NFPA 70E Table 130.4(E)(a))",
        "",
    ]
    lines += _not_conservative(record.get("not_conservative"))
    if record["notes"]:
        lines.append("Notes")
        lines += [textwrap.fill(n, 78, initial_indent="  - ", subsequent_indent="    ") for n in record["notes"]]
        lines.append("")
    if record["flags"]:
        lines.append("FLAGS - outside the tested range of the model; results extrapolated:")
        lines += [textwrap.fill(f, 78, initial_indent="  ! ", subsequent_indent="    ") for f in record["flags"]]
    else:
        lines.append("Flags: none (all inputs inside the range of IEEE 1584-2018)")
    lines += ["", textwrap.fill(CAUTION, 78)]
    return "\n".join(lines)


def fault_table(facility_name, scenario, buses):
    """Bolted fault table of one scenario as text.

    Parameters
    ----------
    facility_name, scenario : str
        Titles [-]
    buses : pandas.DataFrame
        From :func:`arcflash.bolted_faults`.

    Returns
    -------
    str
    """
    lines = [f"Bolted three-phase faults - {facility_name} - scenario '{scenario}'", "",
             f"  {'bus':<16}{'kV':>8}{'bolted kA':>12}{'X/R':>8}"]
    for bus, row in buses.iterrows():
        if row["energized"]:
            lines.append(f"  {bus:<16}{row['nominal_kv']:>8.3f}{row['bolted_ka']:>12.3f}{row['x_over_r']:>8.2f}")
        else:
            lines.append(f"  {bus:<16}{row['nominal_kv']:>8.3f}    de-energised")
    off = buses.index[~buses["energized"]].tolist()
    if off:
        lines += ["", f"De-energised in this scenario (no source reaches them): {', '.join(off)}"]
    return "\n".join(lines)


def clearing_report(facility_name, scenario, table):
    """Arc durations of one scenario as text (one line per bus, notes below).

    Parameters
    ----------
    facility_name, scenario : str
        Titles [-]
    table : pandas.DataFrame
        From :func:`arcflash.study.clearing.clearing_table`.

    Returns
    -------
    str
    """
    lines = [f"Arcing-fault clearing - {facility_name} - scenario '{scenario}'", "",
             f"  {'bus':<14}{'Iarc kA':>9}{'t (s)':>8}  {'governing':<12}{'Iarc,min kA':>12}{'t (s)':>8}  governing"]
    for bus, row in table.iterrows():
        if not row["energized"]:
            lines.append(f"  {bus:<14}  de-energised")
            continue
        lines.append(
            f"  {bus:<14}{row['arcing_current_ka']:>9.2f}{row['clearing_time_s']:>8.3f}  "
            f"{str(row['governing_device'] or 'none'):<12}{row['reduced_arcing_current_ka']:>12.2f}"
            f"{row['reduced_clearing_time_s']:>8.3f}  {row['reduced_governing_device'] or 'none'}"
        )
    if "staged" in table and table["staged"].any():
        lines += ["", "Arcs followed stage by stage as devices open (full arcing current)"]
        lines += [f"  {bus}: {row['clearing_sequence']}" for bus, row in table[table["staged"]].iterrows()
                  if row["clearing_sequence"]]
    noted = [(bus, note) for bus, note in table["clearing_notes"].items() if note]
    if noted:
        lines += ["", "Notes"] + [f"  {bus}: {note}" for bus, note in noted]
    return "\n".join(lines)


def quick_report(row, notes, not_conservative=None):
    """A quick assessment as text: currents, time, energy, boundary, PPE, shock boundaries, the choices made
    (conservative ones, and any the user accepted that are not), caution."""
    from ..models.nfpa70e import shock_boundary_text

    shock = shock_boundary_text(float(row["nominal_kv"]))
    category = int(row["ppe_category"])
    ppe = {-1: "none applies (above 40 cal/cm2): de-energize", 0: "below 1.2 cal/cm2", -2: "-"}.get(
        category, f"PPE category {category} (NFPA 70E Table 130.7(C)(15)(c))")
    lines = [
        "Quick assessment (IEEE 1584-2018, NFPA 70E)", "",
        _row("bolted fault current", _fmt(row["bolted_ka"], ".2f") + " kA"),
        _row("arcing current", _fmt(row["arcing_current_ka"], ".2f") + " kA"),
        _row("reduced arcing current", _fmt(row["reduced_arcing_current_ka"], ".2f") + " kA"),
        _row("clearing time (governing)", _fmt(row["clearing_time_governing_s"], ".3f") + " s"),
        _row("upstream device", str(row["device_governing"])),
        _row("incident energy", energy_text(row["incident_energy_governing_cal_cm2"], 2)
             + f" cal/cm2 at {row['working_distance_mm']:g} mm"),
        _row("arc-flash boundary", feet_inches(row["arc_flash_boundary_governing_mm"])),
        _row("minimum arc rating", _fmt(row["minimum_arc_rating_cal_cm2"], ".1f") + " cal/cm2"),
        f"  {'PPE':<30}{ppe}",
        f"  {'limited approach':<30}{shock['limited_fixed']} fixed parts, {shock['limited_movable']} movable",
        f"  {'restricted approach':<30}{shock['restricted']}",
        "",
    ]
    lines += _not_conservative(not_conservative)
    if notes:
        lines.append("Conservative choices made")
        lines += [textwrap.fill(n, 78, initial_indent="  - ", subsequent_indent="    ") for n in notes]
        lines.append("")
    lines.append(("FLAGS: " + row["flags"]) if row["flags"] else "Flags: none")
    lines += ["", textwrap.fill(CAUTION, 78)]
    return "\n".join(lines)
