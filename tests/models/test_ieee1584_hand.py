"""IEEE 1584-2018 worked by hand: every configuration at 480 V, 4.16 kV and 13.8 kV, typical and shallow.

An independent calculation (class: independent calculation, not a snapshot):
the equations are written out in plain scalar arithmetic in
tests/ieee1584_by_hand.py, clause by clause, with the coefficients read from the reference tables under
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

import pytest

from arcflash.models import ieee1584
from tests.conftest import load_reference
from tests.ieee1584_by_hand import (LEVELS, arcing_current_at_level, by_hand, correction_factor, interpolate,
                                    low_voltage_current)

CASES = [
    # voltage [kV], bolted [kA], gap [mm], working distance [mm], enclosure H x W x D [mm]
    (0.48, 30.0, 32.0, 455.0, (508.0, 508.0, 508.0)),  # typical, EES just under 20 in
    (0.48, 30.0, 25.0, 455.0, (305.0, 305.0, 150.0)),  # shallow enclosure
    (0.48, 30.0, 25.0, 455.0, (305.0, 305.0, 203.2)),  # shallow at its depth limit, 8 in (clause 4.8, from memory)
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


def test_interpolation_helper_equals_the_written_out_form():
    # IEEE 1584-2018 Eqs. (16)-(19): the package's public interpolation helper (weights form) against the
    # written-out form, at band edges and inside both bands, element-wise on arrays.
    import numpy as np

    voltages = np.array([0.6, 0.9, 1.5, 2.7, 2.71, 4.16, 13.8, 15.0])
    values = (np.array([11.0, 3.0, 7.5, 1.0, 2.0, 9.0, 5.0, 6.0]), np.array([12.0, 4.5, 8.0, 2.5, 2.1, 9.5, 5.5, 7.0]),
              np.array([14.0, 5.0, 9.5, 4.0, 2.2, 9.9, 7.5, 7.7]))
    got = ieee1584.interpolate_by_voltage(voltages, *values)
    expected = [interpolate(v, a, b, c) for v, a, b, c in zip(voltages, *values)]
    np.testing.assert_allclose(got, expected, rtol=1e-12)


@pytest.mark.parametrize("config", ["VCB", "VCBB", "HCB", "VOA", "HOA"])
@pytest.mark.parametrize("voc, ibf, gap, distance, box", CASES)
def test_single_case_helpers_equal_the_hand_calculation(config, voc, ibf, gap, distance, box):
    # The package's public one-quantity helpers (IEEE 1584-2018 Eqs. 1, 2, 13-15, 25), which the batch model does
    # not call, against the written-out forms; arrays of two cases, the second at 1.3 x the bolted current.
    import numpy as np

    from arcflash.models import ieee1584_equations as eq

    height, width, depth = box
    currents = np.array([ibf, 1.3 * ibf])
    for level in LEVELS:
        got = eq.intermediate_arcing_current_ka(currents, gap, config.lower(), level)
        expected = [arcing_current_at_level(config, level, i, gap) for i in currents]
        np.testing.assert_allclose(got, expected, rtol=1e-12)
    from tests.ieee1584_by_hand import variation_factor

    np.testing.assert_allclose(eq.variation_correction_factor(np.array([voc, voc]), config),
                               [variation_factor(config, voc)] * 2, rtol=1e-12)
    np.testing.assert_allclose(eq.enclosure_correction_factor(voc, height, width, depth, config),
                               correction_factor(config, voc, height, width, depth), rtol=1e-12)
    if voc <= 0.6:
        i600 = np.array([arcing_current_at_level(config, 600, i, gap) for i in currents])
        np.testing.assert_allclose(eq.low_voltage_arcing_current_ka(voc, currents, i600),
                                   [low_voltage_current(voc, i, j) for i, j in zip(currents, i600)], rtol=1e-12)


def test_polynomial_helper_and_configuration_names():
    # Horner's rule against the plain sum (common practice), with zero coefficients anywhere; configuration names
    # are case-insensitive and an unknown one is refused (IEEE 1584-2018 clause 4.3 lists five).
    import numpy as np

    from arcflash.models import ieee1584_equations as eq

    x = np.array([0.5, 2.0, 7.0])
    for coefficients in ((0.0, 0.0, 2.0, -1.0, 3.0), (1.5, 0.0, -2.0, 0.0), (0.0, 4.0), (2.5,), (0.0, 1.0, 0.0, 0.0)):
        expected = sum(c * x ** (len(coefficients) - 1 - i) for i, c in enumerate(coefficients))
        np.testing.assert_allclose(eq.polynomial(coefficients, x), expected, rtol=1e-14)
    np.testing.assert_array_equal(eq.polynomial((0.0, 0.0, 0.0), x), np.zeros(3))  # all zero: zero, shaped as x
    # One coefficient per case (arrays), zeros inside arrays are not skipped, ones are added.
    per_case = (np.array([0.0, 1.0, 2.0]), np.array([1.0, 0.0, -1.0]), 1.0, np.array([0.0, 0.0, 3.0]))
    expected = sum(c * x ** (3 - i) for i, c in enumerate(per_case))
    np.testing.assert_allclose(eq.polynomial(per_case, x), expected, rtol=1e-14)
    np.testing.assert_allclose(eq.polynomial((1.0, 1.0, 1.0), x), x * x + x + 1.0, rtol=1e-14)
    assert eq.config_name(" vcbb ") == "VCBB"
    with pytest.raises(ValueError, match="unknown electrode configuration"):
        eq.config_name("VCX")


def test_unknown_depth_counts_as_typical_in_the_helper():
    # docs/method.md reading: an unknown enclosure depth (None or NaN) is a typical enclosure (the larger energy).
    from arcflash.models import ieee1584_equations as eq

    typical = correction_factor("VCB", 0.48, 305.0, 305.0, 1000.0)
    for depth in (None, float("nan")):
        assert float(eq.enclosure_correction_factor(0.48, 305.0, 305.0, depth, "VCB")) == pytest.approx(typical,
                                                                                                        rel=1e-12)
