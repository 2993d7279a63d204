"""Every edge of the NFPA 70E tables the tool applies: PPE categories and shock approach boundaries.

Published values only (files under tests/reference with their sources): each
category limit and each shock-table row is checked just below, at and just
above its edge, so that a moved threshold or a shifted row fails here.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from arcflash.models import nfpa70e

REFERENCE = Path(__file__).resolve().parents[1] / "reference"
CATEGORIES = pd.read_csv(REFERENCE / "nfpa70e_ppe_categories.csv")
SHOCK_ROWS = pd.read_csv(REFERENCE / "nfpa70e_shock_rows.csv")
STEP = 0.01  # cal/cm² either side of an edge


def _category_cases():
    # NFPA 70E Table 130.7(C)(15)(c): a category covers energies up to its minimum arc rating (arc rating at
    # least the incident energy); the arc-flash boundary energy 1.2 cal/cm² (IEEE 1584-2018 3.1) is the floor
    # of category 1; above category 4's 40 cal/cm² no category applies (-1).
    limits = CATEGORIES.set_index("ppe_category")["min_arc_rating_cal_cm2"].astype(float)
    cases = [(1.2 - STEP, 0), (1.2, 1), (1.2 + STEP, 1)]
    for category, limit in limits.items():
        above = int(category) + 1 if category < 4 else -1
        cases += [(limit - STEP, int(category)), (limit, int(category)), (limit + STEP, above)]
    return cases


@pytest.mark.parametrize("energy, expected", _category_cases())
def test_ppe_category_at_every_edge(energy, expected):
    # Source: NFPA 70E Table 130.7(C)(15)(c) via tests/reference/nfpa70e_ppe_categories.csv.
    assert int(nfpa70e.ppe_category(energy)) == expected


def test_exactly_40_cal_is_category_4_and_above_is_none():
    # Source: NFPA 70E Table 130.7(C)(15)(c): category 4 PPE is rated 40 cal/cm², so it covers exactly 40.0.
    assert nfpa70e.ppe_category([40.0, 40.0 + 1e-9]).tolist() == [4, -1]
    assert nfpa70e.NO_CATEGORY_ABOVE_CAL_CM2 == CATEGORIES["min_arc_rating_cal_cm2"].max()


@pytest.mark.parametrize("energy, expected", [(3.01, 3.1), (4.0, 4.0), (7.99, 8.0), (8.0001, 8.1), (0.04, 0.1)])
def test_minimum_arc_rating_is_rounded_up(energy, expected):
    # NFPA 70E 130.5(H)(3)(b): the clothing's arc rating must cover the energy; printed to 0.1 cal/cm², so the
    # value is rounded up, never down (common practice).
    rating = float(nfpa70e.minimum_arc_rating_cal_cm2(energy))
    assert rating == pytest.approx(expected, abs=1e-12) and rating >= energy


def _row_ends():
    return [pytest.param(float(volts), number, row, id=f"{volts:g}V")
            for number, row in SHOCK_ROWS.iterrows() for volts in (row["low_v"], row["high_v"])]


@pytest.mark.parametrize("volts, number, row", _row_ends())
def test_shock_boundaries_at_both_ends_of_every_row(volts, number, row):
    # Source: NFPA 70E Table 130.4(E)(a), AC, imperial (tests/reference/nfpa70e_shock_rows.csv).
    text = nfpa70e.shock_boundary_text(volts / 1000.0)
    assert text["limited_movable"].startswith(row["limited_movable"])
    assert text["limited_fixed"].startswith(row["limited_fixed"])
    assert text["restricted"].startswith(row["restricted"])
    assert int(nfpa70e.shock_boundaries(volts / 1000.0)["row"]) == number


def test_shock_boundaries_outside_the_table():
    # Source: NFPA 70E Table 130.4(E)(a): below 50 V not specified; the table ends at 46 kV.
    for volts in (49.0, 46100.0):
        text = nfpa70e.shock_boundary_text(volts / 1000.0)
        assert text == {"limited_movable": "not specified", "limited_fixed": "not specified",
                        "restricted": "not specified"}
        assert int(nfpa70e.shock_boundaries(volts / 1000.0)["row"]) == -1


def test_printed_shock_boundaries_are_never_below_the_table():
    # The millimetre values behind the printed text match the table's feet and inches (25.4 mm/in, exact).
    b = nfpa70e.shock_boundaries(np.array([0.12, 0.48, 4.16, 13.8, 34.5, 46.0]))
    inches = {"limited_movable_mm": [120] * 6, "limited_fixed_mm": [42, 42, 60, 60, 72, 96],
              "restricted_mm": [np.nan, 12, 26, 26, 31, 33]}
    for column, expected in inches.items():
        np.testing.assert_allclose(b[column], np.array(expected) * 25.4, rtol=1e-12)


def test_categories_are_integers():
    # The category is a table row number, printed as such ("PPE category 2", never "2.0"): integer type.
    assert nfpa70e.ppe_category([0.5, 5.0, 50.0]).dtype.kind == "i"
