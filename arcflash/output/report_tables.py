"""The report's tables in words and units: every input a reviewer checks, and the results per bus and per
scenario and case. Each function returns ``(header, rows)`` of plain text cells; :mod:`.report` lays them
out."""

from __future__ import annotations

import numpy as np

from ..models.nfpa70e import ppe_category_words
from ..models.units import mm_to_feet_inches
from .text import energy_text, length_text

def ppe_words(category):
    """A PPE category code in words (:func:`arcflash.models.nfpa70e.ppe_category_words`)."""
    return ppe_category_words(category)


def both_units(mm):
    """A length in both units, both rounded up ('1,067 mm / 3 ft 6 in'), '-' when missing
    (:func:`.text.length_text`)."""
    return length_text(mm, "-")


def lengths_in_both_units(values_mm):
    """:func:`both_units` of every value of an array, computed at once (list of str)."""
    mm = np.asarray(values_mm, dtype=float)
    known = np.isfinite(mm)
    feet, inches = mm_to_feet_inches(np.where(known, mm, 0.0))
    rounded = np.ceil(np.where(known, mm, 0.0) - 1e-9)
    return [f"{r:,.0f} mm / {f} ft {i} in" if k else "-"
            for r, f, i, k in zip(rounded.tolist(), feet.tolist(), inches.tolist(), known.tolist())]


def energies_at(energy_cal_cm2, distance_mm):
    """'5.3 cal/cm2 at 458 mm / 1 ft 6 in' for every pair of arrays (energy rounded up to 0.1 cal/cm2, as
    :func:`.text.energy_text`); 'not computed' where the energy is missing."""
    from ..models.nfpa70e import minimum_arc_rating_cal_cm2

    energy = np.asarray(energy_cal_cm2, dtype=float)
    known = np.isfinite(energy)
    rounded = minimum_arc_rating_cal_cm2(np.where(known, energy, 0.0)).tolist()
    return [f"{e:.1f} cal/cm2 at {d}" if k else "not computed"
            for e, d, k in zip(rounded, lengths_in_both_units(distance_mm), known.tolist())]


def _g(value, unit=""):
    return "-" if value is None else f"{value:g}{(' ' + unit) if unit else ''}"


def _list(items):
    return ", ".join(items) if items else "-"


def sources_rows(site):
    """Utilities with their levels and the scenarios that use each level; generators."""
    header = ["source", "bus", "stated at", "maximum level", "minimum level", "scenarios at maximum",
              "scenarios at minimum", "scenarios with it off"]
    rows = []
    for u in site.utilities.values():
        at = {"max": [], "min": [], "off": []}
        for s in site.scenarios.values():
            at["off" if u.id in s.utilities_off else s.utility].append(s.name)
        rows.append([f"utility {u.id}" + ("" if u.in_service else " (out of service)"), u.bus, _g(u.kv, "kV"),
                     f"{u.max.fault}, X/R {u.max.x_over_r:g}", f"{u.min.fault}, X/R {u.min.x_over_r:g}",
                     _list(at["max"]), _list(at["min"]), _list(at["off"])])
    for g in site.generators.values():
        running = [s.name for s in site.scenarios.values()
                   if (g.running and g.id not in s.generators_stopped) or g.id in s.generators_running]
        rows.append([f"generator {g.id}", g.bus, _g(g.kv, "kV"),
                     f"{g.kva:g} kVA, X''d {g.subtransient_reactance_percent:g} %, X/R {g.x_over_r:g}", "-",
                     _list(running) + " (running)", "-", "-"])
    return header, rows


def transformer_rows(site):
    """Transformers with their %Z and how it was obtained (stated, or derived from test readings)."""
    header = ["transformer", "primary -> secondary bus", "rating", "voltages", "%Z used and how obtained",
              "X/R", "%Z tolerance", "connection"]
    rows = []
    for t in site.transformers.values():
        if t.z_percent is not None:
            how = f"{t.z_percent:g} % (stated, nameplate)"
        else:
            measured = t.test.measured_a if t.test.measured_a is not None else t.rated_primary_a
            current = (f"{measured:g} A measured" if t.test.measured_a is not None
                       else f"rated current {measured:.1f} A")
            how = (f"{t.z_percent_used:.3g} % derived from a short-circuit test: {t.test.applied_v:g} V applied "
                   f"to the primary, {current} (rated primary current {t.rated_primary_a:.1f} A)")
        rows.append([t.id, f"{t.primary_bus} -> {t.secondary_bus}", f"{t.kva:g} kVA",
                     f"{t.primary_kv:g} / {t.secondary_kv:g} kV", how, f"{t.x_over_r:g}",
                     f"+/- {t.z_tolerance_percent:g} %", t.connection or "-"])
    return header, rows


def cable_rows(site):
    """Cables (and impedances such as busway) with their conductors and lengths."""
    header = ["cable", "from -> to", "length", "sets", "conductor", "impedance source"]
    rows = []
    for c in site.cables.values():
        if c.size:
            conductor, source = f"{c.size} {c.material}, {c.conduit} conduit", "NEC Chapter 9 Table 9"
        else:
            conductor = f"R {c.r_ohm_per_kft:g} + jX {c.x_ohm_per_kft:g} ohm per 1000 ft"
            source = "stated"
        rows.append([c.id, f"{c.from_bus} -> {c.to_bus}", str(c.length), str(c.sets), conductor, source])
    for z in site.impedances.values():
        rows.append([f"{z.id} ({z.kind})", f"{z.from_bus} -> {z.to_bus}", "-", "-",
                     f"R {z.r_ohm:g} + jX {z.x_ohm:g} ohm", "stated"])
    return header, rows


def switch_rows(site):
    """Switches, breakers without settings of their own, and ties: where they are and how they normally stand."""
    header = ["switch", "kind", "from -> to", "normally", "closed in scenarios", "opened in scenarios"]
    rows = []
    for w in site.switches.values():
        closes = [s.name for s in site.scenarios.values() if w.id in s.close]
        opens = [s.name for s in site.scenarios.values() if w.id in s.open]
        rows.append([w.id, w.kind, f"{w.from_bus} -> {w.to_bus}", w.normally, _list(closes), _list(opens)])
    return header, rows


def motor_rows(site):
    """Motors and what each contributes to a fault."""
    header = ["motor", "bus", "size", "voltage", "X''d", "X/R", "contributes", "off in scenarios"]
    rows = []
    for m in site.motors.values():
        off = [s.name for s in site.scenarios.values() if s.motors == "off" or m.id in s.motors_off]
        rows.append([m.id, m.bus, str(m.size), _g(m.kv, "kV"), f"{m.subtransient_reactance_percent:g} %",
                     f"{m.x_over_r:g}", "yes" if m.contributes else "no", _list(off)])
    return header, rows


def _relay_words(r, ct):
    """Relay settings in words, secondary amperes converted to primary."""
    ratio = r.ct_primary_a / r.ct_secondary_a
    parts = [f"CT {r.ct_primary_a:g}:{r.ct_secondary_a:g} A",
             f"inverse-time pickup {r.pickup_a:g} A secondary = {r.pickup_a * ratio:,.0f} A primary",
             f"{r.standard} {r.curve} curve, time dial {r.time_dial:g}"]
    parts += [f"definite-time stage {d.pickup_a:g} A secondary = {d.pickup_a * ratio:,.0f} A primary after "
              f"{d.time_s:g} s" for d in r.definite_time]
    if r.instantaneous_a:
        parts.append(f"instantaneous {r.instantaneous_a:g} A secondary = {r.instantaneous_a * ratio:,.0f} A primary")
    parts.append(f"breaker opens in {r.breaker_cycles:g} cycles")
    return parts


def _trip_words(u):
    """Trip-unit settings in words: multiples of the rating and the amperes they give."""
    rating = u.rating_a * u.long_time_pickup
    parts = [f"rating {u.rating_a:g} A",
             f"long-time pickup {u.long_time_pickup:g} x = {rating:,.0f} A, delay {u.long_time_delay_s:g} s at 6 x"]
    if u.short_time_pickup:
        parts.append(f"short-time pickup {u.short_time_pickup:g} x = {u.short_time_pickup * rating:,.0f} A, delay "
                     f"{u.short_time_delay_s:g} s" + (" (I2t in)" if u.short_time_i2t else ""))
    if u.instantaneous_pickup:
        parts.append(f"instantaneous {u.instantaneous_pickup:g} x = {u.instantaneous_pickup * rating:,.0f} A")
    parts.append(f"tolerances: pickup +/- {u.pickup_tolerance * 100:g} %, time +/- {u.time_tolerance * 100:g} %")
    parts.append(f"breaker opens in {u.breaker_cycles:g} cycles")
    return parts


_MAINTENANCE_WORDS = {"instantaneous_pickup": ("instantaneous", " x the long-time pickup"),
                      "instantaneous_a": ("instantaneous", " A secondary"),
                      "short_time_pickup": ("short-time pickup", " x"),
                      "short_time_delay_s": ("short-time delay", " s"),
                      "pickup_a": ("inverse-time pickup", " A secondary"), "time_dial": ("time dial", "")}


def maintenance_words(settings):
    """A device's energy-reducing maintenance settings in words ('instantaneous 2.5 x the long-time pickup')."""
    words = []
    for name, value in settings.items():
        label, unit = _MAINTENANCE_WORDS.get(name, (name.replace("_", " "), ""))
        words.append(f"{label} {value:g}{unit}" if isinstance(value, (int, float)) else f"{label} {value}")
    return "; ".join(words)


def device_settings_words(device):
    """A device's settings in words and units (one string)."""
    if device.relay is not None:
        parts = _relay_words(device.relay, device.relay.ct_primary_a)
    elif device.trip_unit is not None:
        parts = _trip_words(device.trip_unit)
    else:
        parts = [f"time-current curve '{device.curve}' of the device library (its band's slower edge is used)"]
    text = "; ".join(parts)
    if device.maintenance:
        text += f". Energy-reducing maintenance setting: {maintenance_words(device.maintenance)}"
    return text


def device_rows(site):
    """Protective devices with their settings in words and units."""
    kinds = {"relay-breaker": "relay and breaker", "trip-unit-breaker": "breaker, electronic trip unit",
             "thermal-magnetic-breaker": "thermal-magnetic breaker", "fuse": "fuse"}
    header = ["device", "kind", "protects", "at bus", "settings"]
    return header, [[d.id, kinds.get(d.kind, d.kind), d.branch, d.at_bus, device_settings_words(d)]
                    for d in site.devices.values()]


def equipment_rows(site, governing):
    """Equipment at every bus: class, configuration, gap, working distance, enclosure (as the study used)."""
    header = ["bus", "description", "nominal voltage", "equipment class", "configuration", "gap",
              "working distance", "enclosure H x W x D"]
    names = ("height_mm", "width_mm", "depth_mm", "equipment_class", "geometry_note", "config", "gap_mm",
             "working_distance_mm")
    used = {bus: {n: _known(v) for n, v in zip(names, values)}
            for bus, *values in governing[list(names)].itertuples()}
    distance = dict(zip(governing.index, lengths_in_both_units(governing["working_distance_mm"])))
    rows = []
    for bus, b in site.buses.items():
        r = used.get(bus, dict.fromkeys(names))
        size = [r["height_mm"], r["width_mm"], r["depth_mm"]]
        box = "open air" if size[0] is None else " x ".join("?" if v is None else f"{v:g}" for v in size) + " mm"
        cls = (r["equipment_class"] or b.equipment_class or "-") + (" (typical of its voltage)"
                                                                   if r["geometry_note"] else "")
        rows.append([bus, b.description or "-", _g(b.nominal_kv, "kV"), cls, r["config"] or "-",
                     _g(r["gap_mm"], "mm"), distance.get(bus, "-"), box])
    return header, rows


def _known(value):
    """None for a missing cell (None, NaN or empty text), else the value."""
    if value is None or (isinstance(value, float) and not np.isfinite(value)) or value == "":
        return None
    return value


def scenario_rows(site):
    """Scenarios: what each changes from the normal state."""
    header = ["scenario", "description", "utility level", "transformer %Z", "closes", "opens", "switches on",
              "switches off", "motors", "energy-reducing maintenance switching on"]
    rows = []
    for s in site.scenarios.values():
        z = s.transformer_z_side
        motors = "all off" if s.motors == "off" else ("on" + (f" except {_list(s.motors_off)}" if s.motors_off else ""))
        rows.append([s.name, s.description or "-", s.utility + "imum", f"{z} side of its tolerance",
                     _list(s.close), _list(s.open), _list(s.generators_running),
                     _list(s.generators_stopped + [f"utility {u}" for u in s.utilities_off]), motors,
                     _list(s.energy_reducing_maintenance_switching)])
    return header, rows


def governing_rows(governing):
    """Per bus, highest energy first: the governing row with the working distance beside the energy."""
    header = ["bus", "voltage", "scenario / case", "incident energy at working distance", "arc-flash boundary",
              "PPE category", "clearing", "shock: limited (fixed parts) / restricted approach", "notes"]
    ordered = governing.sort_values("incident_energy_governing_cal_cm2", ascending=False, na_position="last")
    rows = []
    notes = ordered["flag_notes"] if "flag_notes" in ordered else [""] * len(ordered)
    sequences = (ordered["clearing_sequence_governing"] if "clearing_sequence_governing" in ordered
                 else [""] * len(ordered))
    energies = energies_at(ordered["incident_energy_governing_cal_cm2"], ordered["working_distance_mm"])
    boundaries = lengths_in_both_units(ordered["arc_flash_boundary_governing_mm"])
    shock = [f"{limited} / {restricted}" for limited, restricted in zip(
        lengths_in_both_units(ordered["limited_approach_fixed_mm"]),
        lengths_in_both_units(ordered["restricted_approach_mm"]))]
    for r, note, sequence, energy, boundary, approach in zip(ordered.itertuples(), notes, sequences, energies,
                                                             boundaries, shock):
        device, time_s = r.device_governing, r.clearing_time_governing_s
        clearing = sequence or (f"{device} opens at {time_s:.3f} s" if device and np.isfinite(time_s) else "-")
        rows.append([r.Index, _g(r.nominal_kv, "kV"), f"{r.scenario} / {r.governing_case or '-'}", energy, boundary,
                     ppe_words(r.ppe_category), clearing, approach, note or "-"])
    return header, rows


def every_case_rows(rows_table, limit=None):
    """Every bus, scenario and arcing case (the full and the reduced arcing current): current, device, time,
    energy. At most ``limit`` rows (highest energy first) when given."""
    header = ["bus", "scenario", "case", "arcing current", "device", "clearing time", "incident energy"]
    table = rows_table.sort_values(["bus", "scenario"])
    out = []
    for r in table.itertuples(index=False):
        for case, current, device, time_s, energy in (
                ("full", r.arcing_current_ka, r.governing_device, r.clearing_time_s, r.incident_energy_cal_cm2),
                ("reduced", r.reduced_arcing_current_ka, r.reduced_governing_device, r.reduced_clearing_time_s,
                 r.reduced_incident_energy_cal_cm2)):
            out.append([r.bus, r.scenario, case, "-" if not np.isfinite(current) else f"{current:.2f} kA",
                        device or "-", "-" if not np.isfinite(time_s) else f"{time_s:.3f} s",
                        "-" if not np.isfinite(energy) else f"{energy_text(energy, 2)} cal/cm2"])
            if limit is not None and len(out) >= limit:
                return header, out
    return header, out
