"""Unit conversions."""

from __future__ import annotations

import numpy as np
import pytest

from arcflash.models.units import cal_cm2_to_j_cm2, j_cm2_to_cal_cm2, mm_to_feet_inches


def test_calorie():
    # Source: thermochemical calorie, 1 cal = 4.184 J (common practice; 1.2 cal/cm2 = 5.0208 J/cm2).
    assert float(j_cm2_to_cal_cm2(4.184)) == pytest.approx(1.0, rel=1e-15)
    assert float(cal_cm2_to_j_cm2(1.2)) == pytest.approx(5.0208, rel=1e-15)


def test_feet_inches_round_up():
    # 1 in = 25.4 mm exactly (common practice). A boundary is shown rounded up to the next inch.
    feet, inches = mm_to_feet_inches(np.array([304.8, 305.0, 1000.0, 3048.0]))
    assert list(zip(feet.tolist(), inches.tolist())) == [(1, 0), (1, 1), (3, 4), (10, 0)]
