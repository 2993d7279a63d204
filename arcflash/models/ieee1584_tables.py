"""Coefficient tables and typical values of IEEE 1584-2018.

Every table is a named constant that cites its table in IEEE Std 1584-2018,
*IEEE Guide for Performing Arc-Flash Hazard Calculations*. The status of each
value (read in a public reproduction of the table, or recalled) is given beside
it: ``verified`` means the value was checked against a public reproduction of
the table; ``from memory`` means it was recalled and has not yet been checked
against the printed standard.

The electrode configurations are the five of IEEE 1584-2018 clause 3.1:
VCB, VCBB, HCB (in a box) and VOA, HOA (open air).
"""

from __future__ import annotations

from dataclasses import dataclass

#: Electrode configurations in the order used for internal integer codes.
CONFIGURATIONS: tuple[str, ...] = ("VCB", "VCBB", "HCB", "VOA", "HOA")

#: Configurations inside an enclosure (the enclosure-size correction applies).
ENCLOSED_CONFIGURATIONS: tuple[str, ...] = ("VCB", "VCBB", "HCB")

#: The three voltage levels of the intermediate model [V] (IEEE 1584-2018, 4.4).
INTERMEDIATE_VOLTAGES_V: tuple[int, ...] = (600, 2700, 14300)

# ---------------------------------------------------------------------------
# Table 1 — coefficients k1..k10 of Eq. (1), the intermediate average arcing
# current. Rows per configuration, in the order 600 V, 2700 V, 14300 V.
# Status: verified, except HOA, which is from memory for k1..k3 at 600 V and
# for the whole 2700 V and 14300 V rows (k4..k10 at 600 V verified via Table 3).
# ---------------------------------------------------------------------------
ARCING_CURRENT_COEFFICIENTS: dict[str, tuple[tuple[float, ...], ...]] = {
    "VCB": (
        (-0.04287, 1.035, -0.083, 0.0, 0.0, -4.783e-09, 1.962e-06, -0.000229, 0.003141, 1.092),
        (0.0065, 1.001, -0.024, -1.557e-12, 4.556e-10, -4.186e-08, 8.346e-07, 5.482e-05, -0.003191, 0.9729),
        (0.005795, 1.015, -0.011, -1.557e-12, 4.556e-10, -4.186e-08, 8.346e-07, 5.482e-05, -0.003191, 0.9729),
    ),
    "VCBB": (
        (-0.017432, 0.98, -0.05, 0.0, 0.0, -5.767e-09, 2.524e-06, -0.00034, 0.01187, 1.013),
        (0.002823, 0.995, -0.0125, 0.0, -9.204e-11, 2.901e-08, -3.262e-06, 0.0001569, -0.004003, 0.9825),
        (0.014827, 1.01, -0.01, 0.0, -9.204e-11, 2.901e-08, -3.262e-06, 0.0001569, -0.004003, 0.9825),
    ),
    "HCB": (
        (0.054922, 0.988, -0.11, 0.0, 0.0, -5.382e-09, 2.316e-06, -0.000302, 0.0091, 0.9725),
        (0.001011, 1.003, -0.0249, 0.0, 0.0, 4.859e-10, -1.814e-07, -9.128e-06, -0.0007, 0.9881),
        (0.008693, 0.999, -0.02, 0.0, -5.043e-11, 2.233e-08, -3.046e-06, 0.000116, -0.001145, 0.9839),
    ),
    "VOA": (
        (0.043785, 1.04, -0.18, 0.0, 0.0, -4.783e-09, 1.962e-06, -0.000229, 0.003141, 1.092),
        (-0.02395, 1.006, -0.0188, -1.557e-12, 4.556e-10, -4.186e-08, 8.346e-07, 5.482e-05, -0.003191, 0.9729),
        # k10 printed truncated as 0.972 in the reproduction read; 0.9729 by the row pattern.
        (0.005371, 1.0102, -0.029, -1.557e-12, 4.556e-10, -4.186e-08, 8.346e-07, 5.482e-05, -0.003191, 0.9729),
    ),
    "HOA": (
        (0.111147, 1.008, -0.24, 0.0, 0.0, -3.895e-09, 1.641e-06, -0.000197, 0.002615, 1.1),
        (0.000435, 1.006, -0.038, 0.0, 0.0, 7.859e-10, -1.914e-07, -9.128e-06, -0.0007, 0.9981),
        (0.000904, 0.999, -0.02, 0.0, 0.0, 7.859e-10, -1.914e-07, -9.128e-06, -0.0007, 0.9981),
    ),
}

# ---------------------------------------------------------------------------
# Table 2 — coefficients k1..k7 of the arcing-current variation correction
# factor VarCf = k1 V^6 + k2 V^5 + ... + k6 V + k7, V in kV. Status: verified.
# ---------------------------------------------------------------------------
VARIATION_COEFFICIENTS: dict[str, tuple[float, ...]] = {
    "VCB": (0.0, -1.4269e-06, 8.3137e-05, -0.0019382, 0.022366, -0.12645, 0.30226),
    "VCBB": (1.138e-06, -6.0287e-05, 0.0012758, -0.013778, 0.080217, -0.24066, 0.33524),
    "HCB": (0.0, -3.097e-06, 0.00016405, -0.0033609, 0.033308, -0.16182, 0.34627),
    "VOA": (9.5606e-07, -5.1543e-05, 0.0011161, -0.01242, 0.075125, -0.23584, 0.33696),
    "HOA": (0.0, -3.1555e-06, 0.0001682, -0.0034607, 0.034124, -0.1599, 0.34629),
}

# ---------------------------------------------------------------------------
# Tables 3, 4 and 5 — coefficients k1..k13 of the incident-energy and
# arc-flash-boundary equations at 600 V (Table 3), 2700 V (Table 4) and
# 14300 V (Table 5). Status: Table 3 verified. Tables 4 and 5 from memory,
# except Table 4 VCB k1..k3 (2.40021, 0.165, 0.354202), verified. In every row
# k4..k10 repeat the Table 1 row of the same configuration and voltage; the
# test suite checks that pattern.
# ---------------------------------------------------------------------------
ENERGY_COEFFICIENTS_600V: dict[str, tuple[float, ...]] = {
    "VCB": (0.753364, 0.566, 1.752636, 0.0, 0.0, -4.783e-09, 1.962e-06, -0.000229, 0.003141, 1.092, 0.0, -1.598, 0.957),
    "VCBB": (3.068459, 0.26, -0.098107, 0.0, 0.0, -5.767e-09, 2.524e-06, -0.00034, 0.01187, 1.013, -0.06, -1.809, 1.19),
    "HCB": (4.073745, 0.344, -0.370259, 0.0, 0.0, -5.382e-09, 2.316e-06, -0.000302, 0.0091, 0.9725, 0.0, -2.03, 1.036),
    "VOA": (0.679294, 0.746, 1.222636, 0.0, 0.0, -4.783e-09, 1.962e-06, -0.000229, 0.003141, 1.092, 0.0, -1.598, 0.997),
    "HOA": (3.470417, 0.465, -0.261863, 0.0, 0.0, -3.895e-09, 1.641e-06, -0.000197, 0.002615, 1.1, 0.0, -1.99, 1.04),
}

ENERGY_COEFFICIENTS_2700V: dict[str, tuple[float, ...]] = {
    "VCB": (2.40021, 0.165, 0.354202, -1.557e-12, 4.556e-10, -4.186e-08, 8.346e-07, 5.482e-05, -0.003191, 0.9729, 0.0, -1.569, 0.9778),
    "VCBB": (3.870592, 0.185, -0.736618, 0.0, -9.204e-11, 2.901e-08, -3.262e-06, 0.0001569, -0.004003, 0.9825, 0.0, -1.742, 1.09),
    "HCB": (3.486391, 0.177, -0.193101, 0.0, 0.0, 4.859e-10, -1.814e-07, -9.128e-06, -0.0007, 0.9881, 0.027, -1.723, 1.055),
    "VOA": (3.880724, 0.105, -1.906033, -1.557e-12, 4.556e-10, -4.186e-08, 8.346e-07, 5.482e-05, -0.003191, 0.9729, 0.0, -1.515, 1.115),
    "HOA": (3.616266, 0.149, -0.761561, 0.0, 0.0, 7.859e-10, -1.914e-07, -9.128e-06, -0.0007, 0.9981, 0.0, -1.639, 1.078),
}

ENERGY_COEFFICIENTS_14300V: dict[str, tuple[float, ...]] = {
    "VCB": (3.825917, 0.11, -0.999749, -1.557e-12, 4.556e-10, -4.186e-08, 8.346e-07, 5.482e-05, -0.003191, 0.9729, 0.0, -1.568, 0.99),
    "VCBB": (3.644309, 0.215, -0.585522, 0.0, -9.204e-11, 2.901e-08, -3.262e-06, 0.0001569, -0.004003, 0.9825, 0.0, -1.677, 1.06),
    "HCB": (3.044516, 0.125, 0.245106, 0.0, -5.043e-11, 2.233e-08, -3.046e-06, 0.000116, -0.001145, 0.9839, 0.0, -1.655, 1.084),
    "VOA": (3.405454, 0.12, -0.93245, -1.557e-12, 4.556e-10, -4.186e-08, 8.346e-07, 5.482e-05, -0.003191, 0.9729, 0.0, -1.534, 0.979),
    "HOA": (2.04049, 0.177, 1.005092, 0.0, 0.0, 7.859e-10, -1.914e-07, -9.128e-06, -0.0007, 0.9981, -0.05, -1.633, 1.151),
}

#: Tables 3, 4, 5 in the order of :data:`INTERMEDIATE_VOLTAGES_V`.
ENERGY_COEFFICIENTS: tuple[dict[str, tuple[float, ...]], ...] = (
    ENERGY_COEFFICIENTS_600V,
    ENERGY_COEFFICIENTS_2700V,
    ENERGY_COEFFICIENTS_14300V,
)

# ---------------------------------------------------------------------------
# Table 7 — constants A and B of the width/height adjustment (clause 4.8), the width and height
# adjustment of enclosures larger than 660.4 mm. Status: from memory.
# ---------------------------------------------------------------------------
ENCLOSURE_ADJUSTMENT_CONSTANTS: dict[str, tuple[float, float]] = {
    "VCB": (4.0, 20.0),
    "VCBB": (10.0, 24.0),
    "HCB": (10.0, 22.0),
}

# ---------------------------------------------------------------------------
# Table 8 — coefficients b1, b2, b3 of the CF equations, typical enclosure and
# (shallow enclosure). Status: from memory. Self-check used by the tests:
# each polynomial equals 1.0 (to the printed digits) at EES = 20 in, the
# reference enclosure of the model.
# ---------------------------------------------------------------------------
ENCLOSURE_CORRECTION_TYPICAL: dict[str, tuple[float, float, float]] = {
    "VCB": (-0.000302, 0.03441, 0.4325),
    "VCBB": (-0.0002976, 0.032, 0.479),
    "HCB": (-0.0001923, 0.01935, 0.6899),
}
ENCLOSURE_CORRECTION_SHALLOW: dict[str, tuple[float, float, float]] = {
    "VCB": (0.002222, -0.02556, 0.6222),
    "VCBB": (-0.002778, 0.1194, -0.2778),
    "HCB": (-0.0005556, 0.03722, 0.4778),
}

# ---------------------------------------------------------------------------
# Clause 4.8 / Table 6 — enclosure-size thresholds [mm]. Status: from memory.
# ---------------------------------------------------------------------------
#: Below this height or width the enclosure may count as shallow, and a
#: typical enclosure is taken as 20 in (508 mm) [mm].
ENCLOSURE_SMALL_MM = 508.0
#: Dimension above which clause 4.8, width/height adjustment adjust width and height [mm].
ENCLOSURE_ADJUST_FROM_MM = 660.4
#: Largest height or width of the model; larger enclosures use this value [mm].
ENCLOSURE_MAX_MM = 1244.6
#: A shallow enclosure has depth at most this value (and Voc < 600 V) [mm].
SHALLOW_DEPTH_MAX_MM = 203.2


@dataclass(frozen=True)
class ModelRange:
    """Range of validity of IEEE 1584-2018 (clause 4.2), one voltage class."""

    voltage_min_kv: float
    voltage_max_kv: float
    bolted_min_ka: float
    bolted_max_ka: float
    gap_min_mm: float
    gap_max_mm: float


#: Clause 4.2 (range of the model), low-voltage class 208 V to 600 V.
RANGE_LOW_VOLTAGE = ModelRange(0.208, 0.600, 0.5, 106.0, 6.35, 76.2)
#: Clause 4.2 (range of the model), 601 V to 15 kV.
RANGE_MEDIUM_VOLTAGE = ModelRange(0.600, 15.0, 0.2, 65.0, 19.05, 254.0)
#: Clause 4.2: the working distance is at least 305 mm [mm].
WORKING_DISTANCE_MIN_MM = 305.0
#: Clause 4.2: enclosure width greater than four times the gap.
WIDTH_TO_GAP_MIN = 4.0


@dataclass(frozen=True)
class EquipmentClass:
    """Typical values for one class of equipment.

    Gap and enclosure size from IEEE 1584-2018 Table 9, working distance from
    Table 10 (status: from memory). The electrode configuration is not fixed
    by the standard; VCB is the usual assumption (common practice) and a
    study should check HCB where the terminals are horizontal.
    """

    key: str
    description: str
    nominal_kv_max: float
    gap_mm: float
    height_mm: float
    width_mm: float
    depth_mm: float
    working_distance_mm: float
    config: str = "VCB"


#: Typical equipment classes, IEEE 1584-2018 Tables 9 and 10 (from memory).
#: A depth of 203.2 mm marks a shallow enclosure; the deep variants use
#: 254 mm, any depth over 203.2 mm giving the same result.
EQUIPMENT_CLASSES: dict[str, EquipmentClass] = {
    c.key: c
    for c in (
        EquipmentClass("switchgear-15kv", "15 kV switchgear", 15.0, 152.0, 1143.0, 762.0, 762.0, 914.4),
        EquipmentClass("mcc-15kv", "15 kV motor control center", 15.0, 152.0, 914.4, 914.4, 914.4, 914.4),
        EquipmentClass("switchgear-5kv", "5 kV switchgear", 5.0, 104.0, 914.4, 914.4, 914.4, 914.4),
        EquipmentClass("switchgear-5kv-tall", "5 kV switchgear, tall section", 5.0, 104.0, 1143.0, 762.0, 762.0, 914.4),
        EquipmentClass("mcc-5kv", "5 kV motor control center", 5.0, 104.0, 660.4, 660.4, 660.4, 914.4),
        EquipmentClass("switchgear-lv", "Low-voltage switchgear", 0.6, 32.0, 508.0, 508.0, 508.0, 609.6),
        EquipmentClass("mcc-lv-shallow", "Low-voltage MCC, shallow", 0.6, 25.0, 355.6, 304.8, 203.2, 457.2),
        EquipmentClass("mcc-lv-deep", "Low-voltage MCC, deep", 0.6, 25.0, 355.6, 304.8, 254.0, 457.2),
        EquipmentClass("panelboard-shallow", "Panelboard, shallow", 0.6, 25.0, 355.6, 304.8, 203.2, 457.2),
        EquipmentClass("panelboard-deep", "Panelboard, deep", 0.6, 25.0, 355.6, 304.8, 254.0, 457.2),
        EquipmentClass("junction-box-shallow", "Cable junction box, shallow", 0.6, 13.0, 355.6, 304.8, 203.2, 457.2),
        EquipmentClass("junction-box-deep", "Cable junction box, deep", 0.6, 13.0, 355.6, 304.8, 254.0, 457.2),
    )
}
