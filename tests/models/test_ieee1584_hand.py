"""IEEE 1584-2018 worked by hand: every configuration at 480 V, 4.16 kV and 13.8 kV, typical and shallow.

An independent calculation (class: independent calculation, not a snapshot):
the equations are written out below in plain scalar arithmetic, clause by
clause, with the coefficients read from the reference tables under
tests/reference (Tables 1, 2, 3, 4, 5, 7, 8 with their sources and status),
not from the package. The package's vectorised model must agree to rounding
(rel 1e-9) on the arcing currents, incident energies and arc-flash
boundaries of both arcing cases. A dropped term, a wrong interpolation
weight, a swapped coefficient or a wrong enclosure rule shows here.

Readings shared with the package (docs/method.md): above 600 V the reduced
case reduces the three intermediate currents and uses them throughout; up to
600 V it reduces the final current only (k3 term keeps I_arc,600).
"""

from __future__ import annotations

import math

import pytest

from arcflash.models import ieee1584
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


CASES = [
    # voltage [kV], bolted [kA], gap [mm], working distance [mm], enclosure H x W x D [mm]
    (0.48, 30.0, 32.0, 455.0, (508.0, 508.0, 508.0)),  # typical, EES just under 20 in
    (0.48, 30.0, 25.0, 455.0, (305.0, 305.0, 150.0)),  # shallow enclosure
    (0.48, 30.0, 25.0, 455.0, (356.0, 305.0, 254.0)),  # small but deep: typical, 20 in
    (4.16, 20.0, 104.0, 910.0, (1143.0, 762.0, 762.0)),  # adjusted sizes (clause 4.8)
    (13.8, 20.0, 152.0, 910.0, (1143.0, 914.0, 914.0)),
    (1.5, 25.0, 60.0, 610.0, (660.4, 600.0, 500.0)),  # between 600 and 2700 V: Eqs. (16)-(19), third form
]


@pytest.mark.parametrize("config", ["VCB", "VCBB", "HCB", "VOA", "HOA"])
@pytest.mark.parametrize("voc, ibf, gap, distance, box", CASES)
def test_model_equals_the_hand_calculation(config, voc, ibf, gap, distance, box):
    height, width, depth = box
    hand = by_hand(voc, ibf, gap, distance, 0.2, 0.35, config, height, width, depth)
    r = ieee1584.evaluate(voc, ibf, gap, distance, 0.2, 0.35, config, height, width, depth)
    names = {"full": ("arcing_current_ka", "incident_energy_j_cm2", "arc_flash_boundary_mm"),
             "reduced": ("reduced_arcing_current_ka", "reduced_incident_energy_j_cm2", "reduced_arc_flash_boundary_mm")}
    for case, values in hand.items():
        for name, expected in zip(names[case], values):
            assert float(getattr(r, name)) == pytest.approx(expected, rel=1e-9), (case, name)


def test_the_hand_calculation_reproduces_annex_d_currents():
    # IEEE 1584-2018 Annex D.1 and D.2 (tests/reference/ieee1584_2018_annex_d.csv, recalled, reproduced exactly
    # from the verified Table 1): the hand calculation's own currents, so that it is anchored to the annex.
    annex = load_reference("ieee1584_2018_annex_d.csv")
    for row in annex.itertuples():
        if row.quantity.startswith("iarc_"):
            level = int(row.quantity.split("_")[1])
            value = arcing_current_at_level(row.config, level, row.bolted_ka, row.gap_mm)
        elif row.quantity == "iarc" and row.voltage_kv <= 0.6:
            value = low_voltage_current(row.voltage_kv, row.bolted_ka,
                                        arcing_current_at_level(row.config, 600, row.bolted_ka, row.gap_mm))
        elif row.quantity == "iarc":
            value = interpolate(row.voltage_kv, *(arcing_current_at_level(row.config, lv, row.bolted_ka, row.gap_mm)
                                                  for lv in LEVELS))
        else:
            value = correction_factor(row.config, row.voltage_kv, row.height_mm, row.width_mm, row.depth_mm)
        assert value == pytest.approx(row.published_value, abs=0.5 * 10.0 ** -row.digits), row.quantity


@pytest.mark.parametrize("reduced_time_s", [0.1, 0.2, 0.6])
def test_the_larger_case_governs(reduced_time_s):
    # IEEE 1584-2018 clause 4 (both arcing currents, each with its own clearing time; the larger energy is used):
    # by hand, the governing energy and boundary are those of the larger of the two cases.
    hand = by_hand(0.48, 30.0, 32.0, 455.0, 0.2, reduced_time_s, "VCB", 508.0, 508.0, 508.0)
    r = ieee1584.evaluate(0.48, 30.0, 32.0, 455.0, 0.2, reduced_time_s, "VCB", 508.0, 508.0, 508.0)
    case = max(hand, key=lambda c: hand[c][1])
    assert bool(r.reduced_governs) == (case == "reduced")
    assert float(r.governing_incident_energy_j_cm2) == pytest.approx(hand[case][1], rel=1e-9)
    assert float(r.governing_arc_flash_boundary_mm) == pytest.approx(hand[case][2], rel=1e-9)
