"""Shared test helpers: published reference data with their sources."""

from __future__ import annotations

from pathlib import Path

import pandas as pd

REFERENCE_DIR = Path(__file__).parent / "reference"


def load_reference(name):
    """A reference table from ``tests/reference``; every row names its source."""
    table = pd.read_csv(REFERENCE_DIR / name)
    assert "source" in table.columns and table["source"].notna().all(), f"{name} lacks a source column"
    return table


def printed_tolerance(digits):
    """Half a unit in the last printed decimal place."""
    return 0.5 * 10.0 ** (-int(digits))
