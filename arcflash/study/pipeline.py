"""The facility study: every scenario, both arcing cases, the governing case per bus.

For each scenario: bolted faults (:mod:`.faults`), arcing currents and
equipment geometry (:mod:`.arcing`), arc durations and governing devices
(:mod:`.clearing`), then incident energy and arc-flash boundary by
IEEE 1584-2018 with those durations, PPE by NFPA 70E, and the flags. The
governing row of a bus is its largest incident energy over scenarios and
arcing cases.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..collector import collector_paused
from ..models import ieee1584, nfpa70e
from ..models.ieee1584_range import reason_text
from ..models.ieee1584_staged import staged_incident_energy
from ..models.units import j_cm2_to_cal_cm2
from .arcing import arcing_currents, equipment_table
from .clearing import clear_arcs, clearing_paths
from .faults import solve_scenario
from .tcc_data import PathRecord, tcc_data

#: IEEE 1584-2018 (clause 4.2 note): at 240 V or less with a bolted current under 2 kA
#: a sustained arc is less likely; results are still reported.
LOW_VOLTAGE_NOTE_KV, LOW_CURRENT_NOTE_KA = 0.24, 2.0


@dataclass(frozen=True)
class StudyResults:
    """All rows (bus × scenario), the governing row of each bus, and the opening sequences.

    ``steps`` has one row per device opening of every arc followed stage by
    stage (``scenario``, ``bus``, ``case``, ``device``, ``opening_time_s``,
    arcing and bolted current at the bus before and after); ``stages`` one
    row per stage of those arcs.
    """

    rows: pd.DataFrame
    governing: pd.DataFrame
    steps: pd.DataFrame | None = None
    stages: pd.DataFrame | None = None
    tcc: dict | None = None  # bus -> TccData of the buses with a TCC page (arcflash.study.tcc_data)


#: The energy and boundary columns of a scenario's rows, in the order :func:`_energies` gives them.
ENERGY_COLUMNS = ("incident_energy_cal_cm2", "reduced_incident_energy_cal_cm2", "arc_flash_boundary_mm",
                  "reduced_arc_flash_boundary_mm")


def _energies(kv, bolted_ka, gap_mm, working_distance_mm, time_s, reduced_time_s, config, height_mm, width_mm,
              depth_mm):
    """IEEE 1584-2018 of one-stage arcs: the result, and the values of :data:`ENERGY_COLUMNS` [cal/cm², mm]."""
    r = ieee1584.evaluate(kv, bolted_ka, gap_mm, working_distance_mm, time_s, reduced_time_s, config, height_mm,
                          width_mm, depth_mm)
    return r, (j_cm2_to_cal_cm2(r.incident_energy_j_cm2), j_cm2_to_cal_cm2(r.reduced_incident_energy_j_cm2),
               r.arc_flash_boundary_mm, r.reduced_arc_flash_boundary_mm)


def _staged_case(stages, case, lookup):
    """The arcs of ``case`` followed stage by stage, summed stage by stage: (their stage rows, their buses,
    each row's arc, the IEEE 1584-2018 staged result), or None; ``lookup(buses)`` gives the nominal kV, gap,
    working distance, configuration, height, width and depth of each row's bus."""
    part = stages[(stages["case"] == case) & (stages["end_s"] > stages["start_s"])]
    if part.empty:
        return None
    buses = pd.unique(part["bus"])
    arc = pd.Index(buses).get_indexer(part["bus"])
    kv, gap, distance, config, height, width, depth = lookup(part["bus"])
    r = staged_incident_energy(arc, len(buses), kv, part["bolted_ka"].to_numpy(float), gap, distance,
                               (part["end_s"] - part["start_s"]).to_numpy(float), config, height, width, depth,
                               reduced=case == "reduced")
    return part, buses, arc, r


def _staged_energy(table, stages):
    """Energy and boundary of the arcs followed stage by stage, summed stage by stage."""
    def lookup(buses):
        eq = table.loc[buses]
        return (eq["nominal_kv"].to_numpy(float), eq["gap_mm"].to_numpy(float),
                eq["working_distance_mm"].to_numpy(float), eq["config"].to_numpy(str), eq["height_mm"].to_numpy(float),
                eq["width_mm"].to_numpy(float), eq["depth_mm"].to_numpy(float))

    for case, prefix in (("full", ""), ("reduced", "reduced_")):
        found = _staged_case(stages, case, lookup)
        if found is None:
            continue
        part, buses, arc, r = found
        table.loc[buses, f"{prefix}incident_energy_cal_cm2"] = j_cm2_to_cal_cm2(r.incident_energy_j_cm2)
        table.loc[buses, f"{prefix}arc_flash_boundary_mm"] = r.arc_flash_boundary_mm
        code = np.zeros(len(buses), dtype=np.int64)
        np.bitwise_or.at(code, arc, part["range_code"].to_numpy(np.int64))
        flagged = code != 0
        if flagged.any():
            texts = [reason_text(c) for c in code[flagged]]
            current = table.loc[buses[flagged], "model_range"].to_numpy(object)
            table.loc[buses[flagged], "model_range"] = [
                t if not c else (c if t in c else f"{c}; {t}") for c, t in zip(current, texts)]


def scenario_numbers(site, scenario, equipment):
    """Per bus, in the network's order: the incident energy and arc-flash boundary of both arcing cases (the
    values of :data:`ENERGY_COLUMNS`) and the bolted current, with the buses' index: the numbers of a
    scenario's rows (:func:`_scenario_rows`, the same values) without the rows themselves (an uncertainty
    run's chunks read only these)."""
    faults = solve_scenario(site, scenario.name, for_clearing=True)
    buses = faults.buses
    arcs = arcing_currents(site, buses, equipment)
    paths = clearing_paths(site, scenario, faults)
    times = clear_arcs(site, scenario, faults, arcs["arcing_current_ka"], arcs["reduced_arcing_current_ka"], paths,
                       equipment, sequences=False, numbers_only=True)
    eq = equipment if equipment.index.equals(buses.index) else equipment.reindex(buses.index)
    at = {name: eq[name].to_numpy(float) for name in ("gap_mm", "working_distance_mm", "height_mm", "width_mm",
                                                        "depth_mm")}
    config = eq["config"].to_numpy(str)
    kv, bolted = buses["nominal_kv"].to_numpy(float), buses["bolted_ka"].to_numpy(float)
    duration = times.table.reindex(buses.index)
    live = buses["energized"].to_numpy(bool) & (bolted > 0)
    values = arc_numbers(kv, bolted, at, config, live, duration["clearing_time_s"].to_numpy(float),
                         duration["reduced_clearing_time_s"].to_numpy(float), times.stages, pd.Index(buses.index))
    return (*values, bolted), buses.index


def arc_numbers(kv, bolted, at, config, live, clearing_time_s, reduced_clearing_time_s, stages, position):
    """The values of :data:`ENERGY_COLUMNS` of arcs (one per entry of ``position``, the labels the ``bus``
    column of ``stages`` holds): the one-stage energies of the ``live`` ones from their arc durations, those
    followed stage by stage (``stages``, :func:`~.clearing.clear_arcs`) summed stage by stage; NaN elsewhere.
    ``kv`` [kV], ``bolted`` [kA], ``at`` (gap, working distance, height, width, depth [mm]) and ``config`` are
    each arc's bus's [cal/cm², mm]."""
    values = [np.full(kv.size, np.nan) for _ in ENERGY_COLUMNS]
    if live.any():
        _, found = _energies(kv[live], bolted[live], at["gap_mm"][live], at["working_distance_mm"][live],
                             clearing_time_s[live], reduced_clearing_time_s[live], config[live],
                             at["height_mm"][live], at["width_mm"][live], at["depth_mm"][live])
        for into, value in zip(values, found):
            into[live] = value

    def lookup(labels):
        p = position.get_indexer(labels)
        return (kv[p], at["gap_mm"][p], at["working_distance_mm"][p], config[p], at["height_mm"][p],
                at["width_mm"][p], at["depth_mm"][p])

    for case, energy, boundary in (("full", values[0], values[2]), ("reduced", values[1], values[3])):
        found = _staged_case(stages, case, lookup)
        if found is not None:
            _, labels, _, r = found
            p = position.get_indexer(labels)
            energy[p] = j_cm2_to_cal_cm2(r.incident_energy_j_cm2)
            boundary[p] = r.arc_flash_boundary_mm
    return values


def _scenario_rows(site, scenario, equipment, stated_times=None):
    faults = solve_scenario(site, scenario.name, for_clearing=True)
    buses = faults.buses
    arcs = arcing_currents(site, buses, equipment)
    paths = clearing_paths(site, scenario, faults)
    cleared = clear_arcs(site, scenario, faults, arcs["arcing_current_ka"], arcs["reduced_arcing_current_ka"],
                         paths, equipment)
    times = cleared.table
    table = buses.join(arcs).join(times).join(equipment)
    cap = site.facility.arc_duration_cap_s
    for bus, (t, tr) in (stated_times or {}).items():  # stated times take the site's duration cap like any other
        capped = [cap is not None and t > cap, cap is not None and tr > cap]
        table.loc[bus, ["clearing_time_s", "reduced_clearing_time_s"]] = [
            min(t, cap) if capped[0] else t, min(tr, cap) if capped[1] else tr]
        table.loc[bus, ["governing_device", "reduced_governing_device"]] = ["stated clearing time"] * 2
        table.loc[bus, ["no_device", "no_trip", "reduced_no_trip"]] = False
        table.loc[bus, ["duration_capped", "reduced_duration_capped"]] = capped
        table.loc[bus, "clearing_notes"] = "; ".join(
            f"{case} arcing current: arc duration capped at {cap:g} s"
            for case, hit in zip(("full", "reduced"), capped) if hit)
        table.loc[bus, ["clearing_sequence", "reduced_clearing_sequence"]] = ""
        table.loc[bus, "staged"] = False
    live = table.index[table["energized"] & (table["bolted_ka"] > 0)]
    for column in ENERGY_COLUMNS:
        table[column] = np.nan
    table["model_range"] = ""
    if len(live):
        eq = table.loc[live]
        r, values = _energies(
            eq["nominal_kv"].to_numpy(float), eq["bolted_ka"].to_numpy(float), eq["gap_mm"].to_numpy(float),
            eq["working_distance_mm"].to_numpy(float), eq["clearing_time_s"].to_numpy(float),
            eq["reduced_clearing_time_s"].to_numpy(float), eq["config"].to_numpy(str),
            eq["height_mm"].to_numpy(float), eq["width_mm"].to_numpy(float), eq["depth_mm"].to_numpy(float),
        )
        for column, value in zip(ENERGY_COLUMNS, values):
            table.loc[live, column] = value
        table.loc[live, "model_range"] = r.out_of_range_reason
    stages = cleared.stages[~cleared.stages["bus"].isin(list(stated_times or {}))]
    steps = cleared.steps[~cleared.steps["bus"].isin(list(stated_times or {}))]
    _staged_energy(table, stages)
    return table, stages, steps, PathRecord.from_paths(scenario.name, paths, _zone_rows(site, scenario, paths))


def _zone_rows(site, scenario, paths):
    """Which path rows' devices' zone holds the bus (:func:`.zones.zone_rows`), None on a site without zone
    settings."""
    from .zones import has_zones, zone_rows

    return zone_rows(site, scenario, paths) if has_zones(site) else None


#: The kinds of study flag, numbered: a label prints the numbers of its row's flags ("STUDY NOTES 2, 5") and
#: the report explains each number. The numbers never change, so a label changes only when its own flags do.
FLAG_NOTES = {
    1: "de-energised in the governing scenario",
    2: "an input outside the tested range of IEEE 1584-2018 (clause 4.2): the result is extrapolated",
    3: "a note on how the arc is cleared (see the clearing notes)",
    4: "240 V or less with under 2 kA bolted current: a sustained arc is less likely (IEEE 1584-2018)",
    5: "above 40 cal/cm2: no PPE category applies",
    6: "enclosure geometry taken from the typical class of the voltage",
}


def _finish(table):
    """Governing arcing case of each row, PPE, shock boundaries and flags."""
    reduced = table["reduced_incident_energy_cal_cm2"] > table["incident_energy_cal_cm2"]
    table["governing_case"] = np.where(table["energized"], np.where(reduced, "reduced", "full"), "")
    table["incident_energy_governing_cal_cm2"] = np.where(
        reduced, table["reduced_incident_energy_cal_cm2"], table["incident_energy_cal_cm2"])
    table["arc_flash_boundary_governing_mm"] = np.where(
        reduced, table["reduced_arc_flash_boundary_mm"], table["arc_flash_boundary_mm"])
    table["clearing_time_governing_s"] = np.where(reduced, table["reduced_clearing_time_s"], table["clearing_time_s"])
    table["device_governing"] = np.where(reduced, table["reduced_governing_device"], table["governing_device"])
    table["clearing_sequence_governing"] = np.where(reduced, table["reduced_clearing_sequence"],
                                                    table["clearing_sequence"])
    energy = table["incident_energy_governing_cal_cm2"].to_numpy(float)
    table["ppe_category"] = np.where(np.isfinite(energy), nfpa70e.ppe_category(np.nan_to_num(energy)), -2)
    table["minimum_arc_rating_cal_cm2"] = nfpa70e.minimum_arc_rating_cal_cm2(energy)
    shock = nfpa70e.shock_boundaries(table["nominal_kv"].to_numpy(float))
    table["limited_approach_movable_mm"] = shock["limited_movable_mm"]
    table["limited_approach_fixed_mm"] = shock["limited_fixed_mm"]
    table["restricted_approach_mm"] = shock["restricted_mm"]
    flags, kinds = [], []
    for row in table.itertuples():
        parts = []  # (kind, text)
        if not row.energized:
            parts.append((1, "de-energised in this scenario"))
        else:
            if row.model_range:
                parts.append((2, f"outside the range of IEEE 1584-2018: {row.model_range}"))
            if row.clearing_notes:
                parts.append((3, row.clearing_notes))
            if row.nominal_kv <= LOW_VOLTAGE_NOTE_KV and row.bolted_ka < LOW_CURRENT_NOTE_KA:
                parts.append((4, "240 V or less with under 2 kA bolted: a sustained arc is less likely "
                                 "(IEEE 1584-2018); results reported"))
            if row.incident_energy_governing_cal_cm2 > nfpa70e.NO_CATEGORY_ABOVE_CAL_CM2:
                parts.append((5, "above 40 cal/cm2: no PPE category applies; de-energize before work"))
            if row.geometry_note:
                parts.append((6, row.geometry_note))
        flags.append("; ".join(text for _, text in parts))
        kinds.append(",".join(str(kind) for kind, _ in parts))
    table["flag_notes"] = kinds
    table["flags"] = flags
    return table


def study_rows(site, progress=None, stated_times=None):
    """Every bus in every scenario (one row each), with the governing arcing case.

    Parameters
    ----------
    site : Site
    progress : callable, optional
        Called with each scenario name as it is done.
    stated_times : dict, optional
        Bus -> (clearing time, reduced clearing time) [s] used instead of the
        devices' (a quick assessment with a stated clearing time).

    Returns
    -------
    pandas.DataFrame
        Columns with units in their names; ``bus`` and ``scenario`` first.
    """
    return _study(site, progress, stated_times)[0]


#: Buses that get a TCC page when none are named: this many with the highest energy.
DEFAULT_TCC_PAGES = 3


def default_tcc_buses(governing):
    """The buses with the highest governing energy (at most :data:`DEFAULT_TCC_PAGES`, energy above zero)."""
    energy = governing["incident_energy_governing_cal_cm2"].fillna(-1)
    return list(energy[energy > 0].nlargest(DEFAULT_TCC_PAGES).index)


def _study(site, progress=None, stated_times=None):
    """Rows, opening steps and stages of every scenario."""
    equipment = equipment_table(site)
    parts, all_steps, all_stages, records = [], [], [], {}
    for scenario in site.scenarios.values():
        table, stages, steps, records[scenario.name] = _scenario_rows(site, scenario, equipment, stated_times)
        parts.append(table.reset_index())
        all_stages.append(stages.assign(scenario=scenario.name))
        all_steps.append(steps.assign(scenario=scenario.name))
        if progress:
            progress(scenario.name)
    rows = _finish(pd.concat(parts, ignore_index=True))
    first = ["bus", "scenario"]

    def ordered(frames):
        frame = pd.concat([f for f in frames if len(f)] or frames[:1], ignore_index=True)
        return frame[["scenario"] + [c for c in frame.columns if c != "scenario"]]

    return (rows[first + [c for c in rows.columns if c not in first]], ordered(all_steps), ordered(all_stages),
            records)


def governing_rows(rows):
    """The governing row of each bus: its largest incident energy over scenarios and cases.

    A bus de-energised in every scenario keeps one row, flagged.
    """
    energy = rows["incident_energy_governing_cal_cm2"].fillna(-1.0)
    order = np.lexsort((-energy.to_numpy(), rows["bus"].to_numpy()))
    ranked = rows.iloc[order]
    governing = ranked.drop_duplicates("bus", keep="first").set_index("bus")
    return governing.reindex(pd.unique(rows["bus"]))


def run_study(site, out_dir=None, progress=None, report=True, tcc_buses=None):
    """Run the facility study; write results and report when ``out_dir`` is given.

    Parameters
    ----------
    site : Site
        From :func:`arcflash.load_site`.
    out_dir : str or pathlib.Path, optional
        Folder for ``results.csv``, ``governing.csv``, ``results.xlsx`` and
        ``report.pdf``.
    progress : callable, optional
        Called with each scenario name as it is done.
    report : bool
        Write the PDF report too (with ``out_dir``).
    tcc_buses : list of str, optional
        Buses that get a TCC page in the report (default: the three with the
        highest energy); their page data are taken from the study (``tcc``).

    Returns
    -------
    StudyResults
        ``rows`` (every bus × scenario) and ``governing`` (one row per bus).
    """
    with collector_paused():  # the tables and pages of a large site are many objects (arcflash/collector.py)
        return _run_study(site, out_dir, progress, report, tcc_buses)


def _run_study(site, out_dir, progress, report, tcc_buses):
    """The work of :func:`run_study`."""
    rows, steps, stages, records = _study(site, progress)
    governing = governing_rows(rows)
    pages = default_tcc_buses(governing) if tcc_buses is None else list(tcc_buses)
    tcc = {bus: tcc_data(site, bus, governing.loc[bus], records[governing.loc[bus, "scenario"]], steps)
           for bus in pages}
    del records  # the path rows of every scenario are large; the pages keep what they show
    results = StudyResults(rows=rows, governing=governing, steps=steps, stages=stages, tcc=tcc)
    if out_dir is not None:
        from ..output.results import write_results

        write_results(site, results, out_dir, report=report, tcc_buses=tcc_buses)
    return results
