"""Printed incident energies round up in every text output (terminal, quick assessment, report table).

Rule (common practice, and the reason NFPA 70E's minimum arc rating is "at least" the incident energy):
a printed hazard value is never below the computed one.
"""

from __future__ import annotations

import math

import pandas as pd
import pytest
from hypothesis import given
from hypothesis import strategies as st

from arcflash.output.text import energy_text, quick_report


@pytest.mark.parametrize("value, decimals, printed", [
    (3.141, 2, "3.15"), (3.14, 2, "3.14"), (1.23, 2, "1.23"), (0.001, 2, "0.01"), (7.9999, 2, "8.00"),
    (3.141, 1, "3.2"), (8.0, 1, "8.0"), (40.0001, 1, "40.1"), (13.1, 3, "13.100"), (13.1001, 3, "13.101"),
])
def test_energy_text_rounds_up(value, decimals, printed):
    assert energy_text(value, decimals) == printed
    assert float(printed) >= value - 1e-12


@given(value=st.one_of(st.floats(0.0, 1e7), st.sampled_from([304.8, 3.01, 8.0, 40.0, 1.2, 0.15, 12.7, 609.6])))
def test_plain_rounding_equals_the_models(value):
    # the label's one-value roundings are the array functions' operations in plain Python: equal, not close
    import numpy as np

    from arcflash.models.nfpa70e import minimum_arc_rating_cal_cm2
    from arcflash.models.units import mm_to_feet_inches
    from arcflash.output.text import _feet_inches_up, _tenth_up

    assert _tenth_up(value) == float(minimum_arc_rating_cal_cm2(value))
    assert _feet_inches_up(value) == tuple(int(v) for v in mm_to_feet_inches(np.float64(value)))


@pytest.mark.parametrize("value", [None, math.nan])
def test_energy_text_unknown(value):
    assert energy_text(value, 2) == "not computed"


def test_quick_assessment_prints_the_energy_rounded_up():
    row = pd.Series({"nominal_kv": 0.48, "ppe_category": 2, "bolted_ka": 20.0, "arcing_current_ka": 12.0,
                     "reduced_arcing_current_ka": 10.0, "clearing_time_governing_s": 0.2, "device_governing": "CB-1",
                     "incident_energy_governing_cal_cm2": 4.2101, "working_distance_mm": 457.2,
                     "arc_flash_boundary_governing_mm": 1000.0, "minimum_arc_rating_cal_cm2": 4.3, "flags": ""})
    text = quick_report(row, [])
    assert "4.22 cal/cm2 at 457.2 mm" in text  # 4.2101 rounds up, not to 4.21
    assert " ".join("minimum arc rating 4.3 cal/cm2".split()) in " ".join(text.split())
