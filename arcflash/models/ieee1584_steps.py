r"""IEEE 1584-2018 worked step by step: every intermediate value in the order the standard's equations give
them, with the coefficient rows used, for an engineer to compare against the printed standard.

The study's own evaluation (:func:`arcflash.models.ieee1584.evaluate`) is arranged for speed (logarithms,
interpolation weights, cases grouped by configuration). This module follows the standard's equations one
by one in plain arithmetic, reading the same coefficient tables (:mod:`.ieee1584_tables`), so that what it
lists is what the engineer finds in the standard; the tests check that both give the same results.

Equation numbers: Eq. (1) and Tables 1–5 as printed in IEEE Std 1584-2018; the other equation numbers are
from memory (docs/method.md).

References
----------
.. [1] IEEE Std 1584-2018, IEEE Guide for Performing Arc-Flash Hazard Calculations, IEEE, 2018.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from . import ieee1584_tables as tables

#: Voltage levels of the intermediate model, as the symbols print them [V].
LEVELS_V = tables.INTERMEDIATE_VOLTAGES_V
#: Energy constant of Eqs. (4)–(7): 12.552/50 J/cm² per ms at the model's scale [J/cm²/ms].
_C = 12.552 / 50.0


@dataclass(frozen=True)
class Step:
    """One intermediate value: symbol, what it is, where in the standard, value and unit."""

    symbol: str
    words: str
    where: str
    value: float
    unit: str


@dataclass(frozen=True)
class CoefficientRow:
    """One row of a coefficient table as used: table, row (configuration and level), names and values."""

    table: str
    row: str
    names: tuple
    values: tuple


def _poly(coefficients, x):
    """k1 x^(n-1) + ... + kn, highest power first."""
    n = len(coefficients)
    return sum(k * x ** (n - 1 - i) for i, k in enumerate(coefficients))


def _interpolated(voltage_kv, x600, x2700, x14300):
    """X1, X2, X3 of Eqs. (16)–(18) (and (19)–(24)) and the value that applies (X3 up to 2.7 kV, else X2)."""
    x1 = (x2700 - x600) / 2.1 * (voltage_kv - 2.7) + x2700
    x2 = (x14300 - x2700) / 11.6 * (voltage_kv - 14.3) + x14300
    x3 = x1 * (2.7 - voltage_kv) / 2.1 + x2 * (voltage_kv - 0.6) / 2.1
    return x1, x2, x3, (x3 if voltage_kv <= 2.7 else x2)


def _equivalent_in(config, voltage_kv, size_mm, shallow, vertical):
    """One enclosure dimension after the size rules of clause 4.8 (Tables 6 and 7) [in]."""
    if size_mm < tables.ENCLOSURE_SMALL_MM:
        return 0.03937 * size_mm if shallow else 20.0
    if size_mm <= tables.ENCLOSURE_ADJUST_FROM_MM or (vertical and config == "VCB"):
        return 0.03937 * min(size_mm, tables.ENCLOSURE_MAX_MM)
    a, b = tables.ENCLOSURE_ADJUSTMENT_CONSTANTS[config]
    size = min(size_mm, tables.ENCLOSURE_MAX_MM)
    return (tables.ENCLOSURE_ADJUST_FROM_MM + (size - tables.ENCLOSURE_ADJUST_FROM_MM) * (voltage_kv + a) / b) / 25.4


def _energy_exponent(row, bolted_ka, gap_mm, distance_mm, current_k3_ka, current_k13_ka, cf):
    """The exponent of 10 in Eqs. (4)–(7) (Tables 3–5), without the duration term."""
    k = row
    denominator = sum(k[3 + i] * bolted_ka ** (7 - i) for i in range(7))  # k4 Ibf^7 + ... + k10 Ibf
    return (k[0] + k[1] * math.log10(gap_mm) + k[2] * current_k3_ka / denominator + k[10] * math.log10(bolted_ka)
            + k[11] * math.log10(distance_mm) + k[12] * math.log10(current_k13_ka) + math.log10(1.0 / cf))


def _energy_and_boundary(row, bolted_ka, gap_mm, distance_mm, time_ms, current_k3_ka, current_k13_ka, cf):
    """Eqs. (4)–(7): incident energy [J/cm²]; Eqs. (8)–(11): arc-flash boundary [mm], at one level."""
    energy = _C * time_ms * 10 ** _energy_exponent(row, bolted_ka, gap_mm, distance_mm, current_k3_ka,
                                                   current_k13_ka, cf)
    at_one_mm = _energy_exponent(row, bolted_ka, gap_mm, 1.0, current_k3_ka, current_k13_ka, cf)
    boundary = 10 ** ((at_one_mm - math.log10(20.0 / time_ms)) / -row[11])
    return energy, boundary


def worked_steps(voltage_kv, bolted_ka, gap_mm, working_distance_mm, clearing_time_s, reduced_clearing_time_s,
                 config, height_mm=None, width_mm=None, depth_mm=None):
    """Every intermediate value of IEEE 1584-2018 clause 4 for one case, in the order of the standard.

    Parameters
    ----------
    voltage_kv : float
        Open-circuit voltage [kV]
    bolted_ka : float
        Bolted three-phase fault current [kA]
    gap_mm : float
        Gap between conductors [mm]
    working_distance_mm : float
        Working distance [mm]
    clearing_time_s, reduced_clearing_time_s : float
        Arc duration at the arcing current and at the reduced arcing current [s]
    config : str
        VCB, VCBB, HCB, VOA or HOA [-]
    height_mm, width_mm, depth_mm : float, optional
        Enclosure opening height, width and depth (enclosed configurations; depth may be None) [mm]

    Returns
    -------
    list of Step
        In order: intermediate arcing currents (Eq. 1), the final arcing current (Eq. 25 up to 600 V,
        Eqs. 16–18 above), VarCf and the reduced arcing current (Eqs. 2, 3), the enclosure's equivalent size
        and correction factor (clause 4.8, Eqs. 13–15), then for each case (arcing current, reduced arcing
        current) the intermediate and final incident energies (Eqs. 4–7, 19–21) and arc-flash boundaries
        (Eqs. 8–11, 22–24).
    """
    v, ibf, gap, dist = float(voltage_kv), float(bolted_ka), float(gap_mm), float(working_distance_mm)
    low = v <= 0.6
    steps = []

    def add(symbol, words, where, value, unit):
        steps.append(Step(symbol, words, where, float(value), unit))
        return value

    intermediate = {}
    for level, row in zip(LEVELS_V, tables.ARCING_CURRENT_COEFFICIENTS[config]):
        value = 10 ** (row[0] + row[1] * math.log10(ibf) + row[2] * math.log10(gap)) * _poly(row[3:], ibf)
        intermediate[level] = add(f"Iarc_{level}", f"intermediate arcing current at {level} V", "Eq. (1), Table 1",
                                  value, "kA")
    if low:
        i600 = intermediate[600]
        iarc = add("Iarc", "final arcing current (Voc up to 600 V)", "Eq. (25)",
                   1.0 / math.sqrt((0.6 / v) ** 2 * (1.0 / i600 ** 2 - (0.6 ** 2 - v ** 2) / (0.6 ** 2 * ibf ** 2))),
                   "kA")
    else:
        x1, x2, x3, iarc = _interpolated(v, *(intermediate[level] for level in LEVELS_V))
        add("Iarc_1", "interpolated between 600 and 2700 V", "Eq. (16)", x1, "kA")
        add("Iarc_2", "interpolated between 2700 and 14300 V", "Eq. (17)", x2, "kA")
        add("Iarc_3", "interpolated between Iarc_1 and Iarc_2", "Eq. (18)", x3, "kA")
        add("Iarc", "final arcing current (Iarc_3 up to 2.7 kV, Iarc_2 above)", "clause 4.4", iarc, "kA")
    var_cf = add("VarCf", "arcing-current variation correction factor", "Eq. (2), Table 2",
                 _poly(tables.VARIATION_COEFFICIENTS[config], v), "-")
    add("Iarc_min", "reduced arcing current Iarc (1 - 0.5 VarCf)", "Eq. (3)", iarc * (1.0 - 0.5 * var_cf), "kA")
    cf = 1.0
    if config in tables.ENCLOSED_CONFIGURATIONS:
        depth = float("nan") if depth_mm is None else float(depth_mm)
        h, w = float(height_mm), float(width_mm)
        shallow = (low and v < 0.6 and h < tables.ENCLOSURE_SMALL_MM and w < tables.ENCLOSURE_SMALL_MM
                   and depth <= tables.SHALLOW_DEPTH_MAX_MM)
        add("Height_1", "equivalent height", "clause 4.8, Tables 6 and 7",
            _equivalent_in(config, v, h, shallow, True), "in")
        add("Width_1", "equivalent width", "clause 4.8, Tables 6 and 7",
            _equivalent_in(config, v, w, shallow, False), "in")
        ees = add("EES", "equivalent enclosure size (Height_1 + Width_1)/2", "Eq. (13)",
                  (steps[-2].value + steps[-1].value) / 2.0, "in")
        b = (tables.ENCLOSURE_CORRECTION_SHALLOW if shallow else tables.ENCLOSURE_CORRECTION_TYPICAL)[config]
        polynomial = _poly(b, ees)
        cf = add("CF", f"enclosure size correction factor ({'shallow' if shallow else 'typical'} enclosure)",
                 "Eq. (15), Table 8" if shallow else "Eq. (14), Table 8", 1.0 / polynomial if shallow else polynomial,
                 "-")
    for case, time_s, factor in (("", clearing_time_s, 1.0), ("_min", reduced_clearing_time_s, 1.0 - 0.5 * var_cf)):
        time_ms = float(time_s) * 1000.0
        words = "at the reduced arcing current" if case else "at the arcing current"
        add(f"T{case}", f"arc duration {words}", "input", time_ms, "ms")
        if low:
            final = iarc * factor
            row = tables.ENERGY_COEFFICIENTS[0][config]
            # Up to 600 V the k3 term keeps Iarc_600 and the k13 term takes the final (reduced) current.
            energy, boundary = _energy_and_boundary(row, ibf, gap, dist, time_ms, intermediate[600], final, cf)
            add(f"E_le600{case}", f"incident energy {words}", "Eq. (7), Table 3", energy, "J/cm2")
            add(f"AFB_le600{case}", f"arc-flash boundary {words}", "Eq. (11), Table 3", boundary, "mm")
            continue
        energies, boundaries = {}, {}
        for number, (level, table) in enumerate(zip(LEVELS_V, ("Table 3", "Table 4", "Table 5"))):
            current = intermediate[level] * factor
            energies[level], boundaries[level] = _energy_and_boundary(
                tables.ENERGY_COEFFICIENTS[number][config], ibf, gap, dist, time_ms, current, current, cf)
            add(f"E_{level}{case}", f"incident energy at {level} V, {words}", f"Eq. ({4 + number}), {table}",
                energies[level], "J/cm2")
        for level, table in zip(LEVELS_V, ("Table 3", "Table 4", "Table 5")):
            add(f"AFB_{level}{case}", f"arc-flash boundary at {level} V, {words}",
                f"Eq. ({8 + LEVELS_V.index(level)}), {table}", boundaries[level], "mm")
        for symbol, values, first, unit in (("E", energies, 19, "J/cm2"), ("AFB", boundaries, 22, "mm")):
            x1, x2, x3, final = _interpolated(v, *(values[level] for level in LEVELS_V))
            add(f"{symbol}_1{case}", "interpolated between 600 and 2700 V", f"Eq. ({first})", x1, unit)
            add(f"{symbol}_2{case}", "interpolated between 2700 and 14300 V", f"Eq. ({first + 1})", x2, unit)
            add(f"{symbol}_3{case}", f"interpolated between {symbol}_1 and {symbol}_2", f"Eq. ({first + 2})", x3,
                unit)
            add(f"{symbol}{case}", f"final {'incident energy' if symbol == 'E' else 'arc-flash boundary'} {words}",
                "clause 4.6" if symbol == "E" else "clause 4.7", final, unit)
    return steps


def final_values(steps):
    """The final results of :func:`worked_steps`: arcing current, reduced arcing current [kA], energy and
    reduced-case energy [J/cm²], boundary and reduced-case boundary [mm], by name."""
    by_symbol = {s.symbol: s.value for s in steps}
    low = "E_le600" in by_symbol
    energy, boundary = ("E_le600", "AFB_le600") if low else ("E", "AFB")
    return {"arcing_current_ka": by_symbol["Iarc"], "reduced_arcing_current_ka": by_symbol["Iarc_min"],
            "incident_energy_j_cm2": by_symbol[energy], "reduced_incident_energy_j_cm2": by_symbol[energy + "_min"],
            "arc_flash_boundary_mm": by_symbol[boundary],
            "reduced_arc_flash_boundary_mm": by_symbol[boundary + "_min"]}


def coefficient_rows(config, voltage_kv, enclosed=True):
    """The coefficient rows a case uses: Table 1 (three levels), Table 2, Tables 3–5 (the levels used),
    Table 7 and Table 8 (enclosed configurations)."""
    low = float(voltage_kv) <= 0.6
    rows = [CoefficientRow("Table 1", f"{config}, {level} V", tuple(f"k{i}" for i in range(1, 11)), tuple(row))
            for level, row in zip(LEVELS_V, tables.ARCING_CURRENT_COEFFICIENTS[config])]
    rows.append(CoefficientRow("Table 2", config, tuple(f"k{i}" for i in range(1, 8)),
                               tuple(tables.VARIATION_COEFFICIENTS[config])))
    for number, table in enumerate(("Table 3", "Table 4", "Table 5")):
        if low and number:
            break
        rows.append(CoefficientRow(table, f"{config}, {LEVELS_V[number]} V", tuple(f"k{i}" for i in range(1, 14)),
                                   tuple(tables.ENERGY_COEFFICIENTS[number][config])))
    if enclosed and config in tables.ENCLOSED_CONFIGURATIONS:
        rows.append(CoefficientRow("Table 7", config, ("A", "B"), tuple(tables.ENCLOSURE_ADJUSTMENT_CONSTANTS[config])))
        for kind, table in (("typical", tables.ENCLOSURE_CORRECTION_TYPICAL),
                            ("shallow", tables.ENCLOSURE_CORRECTION_SHALLOW)):
            rows.append(CoefficientRow("Table 8", f"{config}, {kind}", ("b1", "b2", "b3"), tuple(table[config])))
    return rows
