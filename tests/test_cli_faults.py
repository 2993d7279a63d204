"""The fault-table and schema commands, through click's CliRunner."""

from __future__ import annotations

import json
from pathlib import Path

import pandas as pd
import pytest
from click.testing import CliRunner

from arcflash.cli import main
from arcflash.site.schema import site_json_schema

DEMO = str(Path(__file__).resolve().parents[1] / "site_data" / "fenwick_ridge")


def run(args):
    return CliRunner().invoke(main, args)


def test_fault_table_and_csv(tmp_path):
    out, devices = tmp_path / "faults.csv", tmp_path / "devices.csv"
    result = run(["faults", DEMO, "--csv", str(out), "--devices-csv", str(devices)])
    assert result.exit_code == 0, result.output
    assert "scenario 'normal'" in result.output and "SWG-A" in result.output
    table = pd.read_csv(out, index_col="bus")
    assert len(table) == 37 and set(table.columns) >= {"nominal_kv", "bolted_ka", "x_over_r", "energized"}
    shares = pd.read_csv(devices)
    assert set(shares.columns) == {"fault_bus", "device", "branch", "current_ka", "share", "from_bus", "to_bus"}
    assert not list(tmp_path.glob(".*.part*"))  # no temporary files left


def test_scenario_with_de_energised_buses():
    result = run(["faults", DEMO, "--scenario", "on-generator"])
    assert result.exit_code == 0
    assert "De-energised in this scenario" in result.output and "MV-MAIN" in result.output


def test_unknown_scenario_exits_2():
    result = run(["faults", DEMO, "--scenario", "storm"])
    assert result.exit_code == 2
    assert "unknown scenario 'storm'" in result.output


def test_missing_folder_exits_2(tmp_path):
    result = run(["faults", str(tmp_path / "nowhere")])
    assert result.exit_code == 2
    assert "expected an existing folder of site-data files" in result.output


def test_schema_command_matches_published_schema():
    result = run(["site-schema"])
    assert result.exit_code == 0
    printed = json.loads(result.output)
    published = json.loads((Path(__file__).resolve().parents[1] / "docs" / "site-data.schema.json").read_text(encoding="utf-8"))
    assert printed == published == json.loads(json.dumps(site_json_schema()))
    assert {"buses", "cables", "transformers", "scenarios"} <= set(printed["properties"])


@pytest.mark.parametrize("scenario", ["normal", "utility-min", "tie-closed", "on-generator", "motors-off"])
def test_demo_scenarios_run(scenario):
    assert run(["faults", DEMO, "--scenario", scenario]).exit_code == 0
