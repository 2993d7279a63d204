"""IEEE 1584-2018 written out by hand: an independent scalar calculation for the tests.

The equations in plain arithmetic, clause by clause, with the coefficients read
from the reference tables under tests/reference (Tables 1, 2, 3, 4, 5, 7, 8
with their sources and status), not from the package. Used by
tests/models/test_ieee1584_hand.py (against the model) and by the study's
hand calculations. Readings shared with the package (docs/method.md): above
600 V the reduced case reduces the three intermediate currents and uses them
throughout; up to 600 V it reduces the final current only (k3 term keeps
I_arc,600); an unknown enclosure depth counts as typical.
"""

from __future__ import annotations

import math

from tests.conftest import load_reference

LEVELS = (600, 2700, 14300)


def _rows(name, *keys):
    table = load_reference(name)
    return {tuple(row[k] for k in keys): row for _, row in table.iterrows()}


T1 = _rows("ieee1584_2018_table1.csv", "config", "voc_v")
T2 = _rows("ieee1584_2018_table2.csv", "config")
ENERGY = {600: _rows("ieee1584_2018_table3.csv", "config"), 2700: _rows("ieee1584_2018_table4.csv", "config"),
          14300: _rows("ieee1584_2018_table5.csv", "config")}
T7 = _rows("ieee1584_2018_table7.csv", "config")
T8 = _rows("ieee1584_2018_table8.csv", "config", "enclosure")


def k(row, i):
    return float(row[f"k{i}"])


def arcing_current_at_level(config, level, ibf, gap):
    """Eq. (1): intermediate arcing current at 600, 2700 or 14300 V [kA]."""
    r = T1[(config, level)]
    poly = (k(r, 4) * ibf**6 + k(r, 5) * ibf**5 + k(r, 6) * ibf**4 + k(r, 7) * ibf**3 + k(r, 8) * ibf**2
            + k(r, 9) * ibf + k(r, 10))
    return 10 ** (k(r, 1) + k(r, 2) * math.log10(ibf) + k(r, 3) * math.log10(gap)) * poly


def variation_factor(config, voc):
    """Eq. (2): VarCf, Voc in kV (Table 2 coefficients k1..k7)."""
    r = T2[(config,)]
    return sum(k(r, i) * voc ** (7 - i) for i in range(1, 8))


def interpolate(voc, v600, v2700, v14300):
    """Eqs. (16)-(19) (and the same form for energy and boundary): the value at Voc above 600 V."""
    first = (v2700 - v600) / 2.1 * (voc - 2.7) + v2700
    second = (v14300 - v2700) / 11.6 * (voc - 14.3) + v14300
    third = first * (2.7 - voc) / 2.1 + second * (voc - 0.6) / 2.1
    return third if voc <= 2.7 else second


def low_voltage_current(voc, ibf, iarc_600):
    """Eq. (25): final arcing current up to 600 V [kA]."""
    return 1.0 / math.sqrt((0.6 / voc) ** 2 * (1.0 / iarc_600**2 - (0.6**2 - voc**2) / (0.6**2 * ibf**2)))


def equivalent_size_in(config, voc, size, typical, vertical):
    """Clause 4.8 size rules (Table 7 constants): one equivalent dimension [in]."""
    if size < 508.0:
        return 20.0 if typical else 0.03937 * size
    if size <= 660.4:
        return 0.03937 * size
    adjusted = vertical and config == "VCB"  # a VCB height above 660.4 mm is taken as it is
    size = min(size, 1244.6)
    if adjusted:
        return 0.03937 * size
    a, b = float(T7[(config,)]["A"]), float(T7[(config,)]["B"])
    return (660.4 + (size - 660.4) * (voc + a) / b) / 25.4


def correction_factor(config, voc, height, width, depth):
    """Eqs. (13)-(15): enclosure-size correction factor CF (1 in open air)."""
    if config in ("VOA", "HOA"):
        return 1.0
    shallow = voc < 0.6 and height < 508.0 and width < 508.0 and depth <= 203.2
    ees = (equivalent_size_in(config, voc, height, not shallow, True)
           + equivalent_size_in(config, voc, width, not shallow, False)) / 2.0
    r = T8[(config, "shallow" if shallow else "typical")]
    poly = float(r["b1"]) * ees**2 + float(r["b2"]) * ees + float(r["b3"])
    return 1.0 / poly if shallow else poly


def energy_exponent(config, level, ibf, gap, distance, i_k3, i_k13, cf):
    """Eqs. (3)-(6) without the time factor: the exponent of 10 (Tables 3, 4, 5)."""
    r = ENERGY[level][(config,)]
    denominator = (k(r, 4) * ibf**7 + k(r, 5) * ibf**6 + k(r, 6) * ibf**5 + k(r, 7) * ibf**4 + k(r, 8) * ibf**3
                   + k(r, 9) * ibf**2 + k(r, 10) * ibf)
    return (k(r, 1) + k(r, 2) * math.log10(gap) + k(r, 3) * i_k3 / denominator + k(r, 11) * math.log10(ibf)
            + k(r, 12) * math.log10(distance) + k(r, 13) * math.log10(i_k13) + math.log10(1.0 / cf))


def energy_j_cm2(config, level, ibf, gap, distance, time_ms, i_k3, i_k13, cf):
    """Eqs. (3)-(6): incident energy [J/cm²], T in ms."""
    return 12.552 / 50.0 * time_ms * 10 ** energy_exponent(config, level, ibf, gap, distance, i_k3, i_k13, cf)


def boundary_mm(config, level, ibf, gap, time_ms, i_k3, i_k13, cf):
    """Eqs. (7)-(10): arc-flash boundary at 5.0 J/cm² (1.2 cal/cm²) [mm]."""
    r = ENERGY[level][(config,)]
    without_distance = energy_exponent(config, level, ibf, gap, 1.0, i_k3, i_k13, cf)  # lg D term is zero at D = 1
    return 10 ** ((without_distance - math.log10(20.0 / time_ms)) / -k(r, 12))


def by_hand(voc, ibf, gap, distance, time_s, reduced_time_s, config, height, width, depth):
    cf = correction_factor(config, voc, height, width, depth)
    full = {level: arcing_current_at_level(config, level, ibf, gap) for level in LEVELS}
    var = variation_factor(config, voc)
    out = {}
    for case, time_ms in (("full", time_s * 1000.0), ("reduced", reduced_time_s * 1000.0)):
        if voc <= 0.6:
            i_final = low_voltage_current(voc, ibf, full[600])
            if case == "reduced":
                i_final *= 1.0 - 0.5 * var  # Eq. (3)
            e = energy_j_cm2(config, 600, ibf, gap, distance, time_ms, full[600], i_final, cf)
            afb = boundary_mm(config, 600, ibf, gap, time_ms, full[600], i_final, cf)
        else:
            levels = {lv: (i if case == "full" else i * (1.0 - 0.5 * var)) for lv, i in full.items()}
            i_final = interpolate(voc, *(levels[lv] for lv in LEVELS))
            e = interpolate(voc, *(energy_j_cm2(config, lv, ibf, gap, distance, time_ms, levels[lv], levels[lv], cf)
                                   for lv in LEVELS))
            afb = interpolate(voc, *(boundary_mm(config, lv, ibf, gap, time_ms, levels[lv], levels[lv], cf)
                                     for lv in LEVELS))
        out[case] = (i_final, e, afb)
    return out
