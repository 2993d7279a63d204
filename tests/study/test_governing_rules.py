"""The study's per-row safety rules on rows built by hand: the governing arcing case, the PPE category
edge at 40 cal/cm², the flags.

Independent of the network and curves: each row states both arcing cases, and
the rules must pick and classify as NFPA 70E and IEEE 1584-2018 say.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from arcflash.study.pipeline import _finish


def _rows(full, reduced, full_time=0.5, reduced_time=0.8):
    n = len(full)
    return pd.DataFrame({
        "energized": [True] * n, "nominal_kv": [0.48] * n, "bolted_ka": [30.0] * n,
        "incident_energy_cal_cm2": full, "reduced_incident_energy_cal_cm2": reduced,
        "arc_flash_boundary_mm": [1000.0] * n, "reduced_arc_flash_boundary_mm": [1200.0] * n,
        "clearing_time_s": [full_time] * n, "reduced_clearing_time_s": [reduced_time] * n,
        "governing_device": ["A"] * n, "reduced_governing_device": ["B"] * n,
        "clearing_sequence": [""] * n, "reduced_clearing_sequence": [""] * n,
        "model_range": [""] * n, "clearing_notes": [""] * n, "geometry_note": [""] * n,
    })


def test_the_larger_arcing_case_governs_with_its_own_time_and_device():
    # IEEE 1584-2018 (4.9, the reduced arcing current): both cases are computed, each with its own clearing time;
    # the larger incident energy governs (its boundary, time and device go with it).
    table = _finish(_rows([5.0, 9.0], [7.0, 6.0]))
    assert table["governing_case"].tolist() == ["reduced", "full"]
    assert table["incident_energy_governing_cal_cm2"].tolist() == [7.0, 9.0]
    assert table["arc_flash_boundary_governing_mm"].tolist() == [1200.0, 1000.0]
    assert table["clearing_time_governing_s"].tolist() == [0.8, 0.5]
    assert table["device_governing"].tolist() == ["B", "A"]


def test_category_edge_at_40_cal_in_the_study():
    # NFPA 70E Table 130.7(C)(15)(c): category 4 PPE is rated 40 cal/cm² and covers exactly 40.0; above it no
    # category applies (-1) and the row is flagged.
    table = _finish(_rows([39.99, 40.0, 40.01], [0.0, 0.0, 0.0]))
    assert table["ppe_category"].tolist() == [4, 4, -1]
    flagged = ["no PPE category applies" in text for text in table["flags"]]
    assert flagged == [False, False, True]
    np.testing.assert_allclose(table["minimum_arc_rating_cal_cm2"], [40.0, 40.0, 40.1])


def test_category_edges_below_40_in_the_study():
    # NFPA 70E Table 130.7(C)(15)(c) ratings 4, 8, 25 cal/cm² and the 1.2 cal/cm² boundary energy (IEEE 1584-2018 3.1).
    energies = [1.19, 1.2, 4.0, 4.01, 8.0, 8.01, 25.0, 25.01]
    table = _finish(_rows(energies, [0.0] * len(energies)))
    assert table["ppe_category"].tolist() == [0, 1, 1, 2, 2, 3, 3, 4]
