"""The mitigate command, through click's CliRunner."""

from __future__ import annotations

from pathlib import Path

import pandas as pd
from click.testing import CliRunner

from arcflash.cli import main

DEMO = Path(__file__).resolve().parents[1] / "site_data" / "fenwick_ridge"


def test_mitigate_names_each_bus_above_target_its_best_change_or_why_none_and_writes_the_tables(tmp_path):
    out = tmp_path / "m"
    result = CliRunner().invoke(main, ["mitigate", str(DEMO), "--target", "8", "--top", "2", "--out", str(out)])
    assert result.exit_code == 0, result.output
    text = result.output
    assert "Target: 8 cal/cm2" in text
    assert "SWG-C: 15.6 cal/cm2 now; ended by LVM-C-TU" in text
    assert "  best: LVM-C-TU: short-time delay 0.3 -> 0.1 s" in text
    assert "SWG-A: 26.3 cal/cm2 now; ended by LVM-A, LVM-B" in text
    assert "every change that reaches the target costs selectivity (LVM-A with FDR-A1" in text
    assert "only adding one, hardware, could lower it" in text  # MV-MAIN: no device upstream
    assert "qualified persons" in text and "licensed professional engineer" in text  # the cautions
    candidates = pd.read_csv(out / "mitigation.csv")
    buses = pd.read_csv(out / "mitigation_buses.csv")
    assert set(buses["bus"]) == set(candidates["bus"]) | {"MV-MAIN", "GEN-SWBD", "GH-SVC", "GH-MAIN", "TC-SEC"}
    assert {"selectivity_lost", "starting_or_inrush", "incident_energy_cal_cm2", "kind"} <= set(candidates.columns)


def test_mitigate_refuses_a_target_that_is_not_a_positive_energy():
    result = CliRunner().invoke(main, ["mitigate", str(DEMO), "--target", "0"])
    assert result.exit_code == 2 and "--target" in result.output
    result = CliRunner().invoke(main, ["mitigate", str(DEMO)])
    assert result.exit_code == 2 and "--target" in result.output
