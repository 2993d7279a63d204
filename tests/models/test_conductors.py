"""Cable impedance from NEC Chapter 9 Table 9."""

from __future__ import annotations

import csv
from pathlib import Path

import pytest

from arcflash.models.conductors import NEC_TABLE_9, cable_impedance_ohm, cable_impedance_ohm_per_kft, normalize_size

SHARED = Path(__file__).resolve().parents[1] / "reference" / "nec_ch9_table9.csv"


def test_package_table_matches_reference_transcription():
    # Source: NEC (NFPA 70) Chapter 9 Table 9, transcription in tests/reference/nec_ch9_table9.csv.
    with open(SHARED, encoding="utf-8") as handle:
        rows = list(csv.DictReader(handle))
    assert len(rows) == len(NEC_TABLE_9)
    for row in rows:
        shipped = NEC_TABLE_9[row["size_awg_kcmil"]]
        for key, value in row.items():
            if key in ("size_awg_kcmil", "source"):
                continue
            assert (shipped[key] == float(value)) if value else shipped[key] != shipped[key], (row, key)


@pytest.mark.parametrize("size, material, conduit, r, x", [
    ("500 kcmil", "copper", "steel", 0.029, 0.048),   # NEC Chapter 9 Table 9
    ("4/0", "copper", "pvc", 0.062, 0.041),           # NEC Chapter 9 Table 9
    ("#2", "aluminum", "aluminum", 0.32, 0.045),      # NEC Chapter 9 Table 9
    ("1000", "aluminum", "steel", 0.025, 0.046),      # NEC Chapter 9 Table 9
])
def test_table_values(size, material, conduit, r, x):
    assert cable_impedance_ohm_per_kft(size, material, conduit) == (r, x)


def test_length_and_parallel_sets():
    # 200 ft of 2 sets of 4/0 Al in PVC: (0.10 + j0.041) x 0.2 / 2 (NEC Ch. 9 Table 9; sets share equally,
    # common practice).
    assert cable_impedance_ohm("4/0", "aluminum", "pvc", 200, 2) == pytest.approx(complex(0.01, 0.0041))


def test_unknown_size_lists_sizes():
    with pytest.raises(ValueError, match="not in NEC Chapter 9 Table 9; expected one of 14, 12"):
        normalize_size("5/0")


def test_no_aluminum_14_awg():
    with pytest.raises(ValueError, match="no aluminum resistance"):
        cable_impedance_ohm_per_kft("14", "aluminum", "pvc")
