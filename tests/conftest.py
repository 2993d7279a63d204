"""Shared test helpers: published reference data with their sources."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

import pandas as pd
from hypothesis import settings

# The user-level model-verification record (arcflash.verification) lives under XDG_CONFIG_HOME: the tests
# use an empty folder of their own, so that a record on the machine running them changes no result.
os.environ["XDG_CONFIG_HOME"] = tempfile.mkdtemp(prefix="arcflash-test-config-")

# No per-example deadline: on a loaded machine (CI, mutation runs) a slow example is not a failure.
# Loaded here, before any test module is imported, so that every @given test sees it.
settings.register_profile("arcflash", max_examples=60, deadline=None)
settings.load_profile("arcflash")

REFERENCE_DIR = Path(__file__).parent / "reference"
#: The demo facility and its device library.
DEMO = Path(__file__).resolve().parents[1] / "site_data" / "fenwick_ridge"


def demo_copy(folder):
    """A copy of the demo facility at ``folder/site`` with its device library beside it, without the label
    ledger or verification record a run in the checkout may have left in site_data/ [-]."""
    import shutil

    left = shutil.ignore_patterns("label-ledger.sqlite", "model-verification.json")
    shutil.copytree(DEMO, Path(folder) / "site", ignore=left)
    shutil.copytree(DEMO.parent / "libraries", Path(folder) / "libraries", ignore=left)
    return Path(folder) / "site"


def load_reference(name):
    """A reference table from ``tests/reference``; every row names its source."""
    table = pd.read_csv(REFERENCE_DIR / name)
    assert "source" in table.columns and table["source"].notna().all(), f"{name} lacks a source column"
    return table


def printed_tolerance(digits):
    """Half a unit in the last printed decimal place."""
    return 0.5 * 10.0 ** (-int(digits))
