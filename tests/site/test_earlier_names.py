"""Keys read under an earlier name: still read, with a warning at their file and line; never both names."""

from __future__ import annotations

from pathlib import Path

from click.testing import CliRunner

import arcflash
from arcflash.cli import main
from tests.conftest import demo_copy

DEMO = Path(__file__).resolve().parents[2] / "site_data" / "fenwick_ridge"


def _copy(tmp_path, old, new):
    site = demo_copy(tmp_path)
    text = (site / "facility.yaml").read_text(encoding="utf-8")
    assert old in text
    (site / "facility.yaml").write_text(text.replace(old, new), encoding="utf-8")
    return site


def test_maintenance_mode_is_read_with_a_warning_at_its_line(tmp_path):
    site = _copy(tmp_path, "energy_reducing_maintenance_switching: [LVM-A]", "maintenance_mode: [LVM-A]")
    loaded = arcflash.load_site(site)
    assert loaded.scenarios["maintenance-a"].energy_reducing_maintenance_switching == ["LVM-A"]
    line = next(n for n, text in enumerate((site / "facility.yaml").read_text().splitlines(), start=1)
                if "name: maintenance-a" in text)
    assert loaded.warnings == [f"facility.yaml:{line}: scenarios[maintenance-a].maintenance_mode: read, but that is "
                               "the earlier name; write energy_reducing_maintenance_switching (the energy-reducing "
                               "maintenance switching of NEC 240.87(B)(3))"]
    result = CliRunner().invoke(main, ["clearing", str(site), "--scenario", "maintenance-a"])
    assert result.exit_code == 0 and f"warning: facility.yaml:{line}: scenarios[maintenance-a].maintenance_mode" \
        in result.output
    # the same results as under the new name
    again = arcflash.run_study(arcflash.load_site(DEMO)).governing["incident_energy_governing_cal_cm2"]
    assert arcflash.run_study(loaded).governing["incident_energy_governing_cal_cm2"].equals(again)


def test_both_names_at_once_are_refused(tmp_path):
    site = _copy(tmp_path, "energy_reducing_maintenance_switching: [LVM-A]",
                 "energy_reducing_maintenance_switching: [LVM-A]\n    maintenance_mode: [LVM-A]")
    result = CliRunner().invoke(main, ["clearing", str(site)])
    assert result.exit_code == 2
    assert "maintenance_mode" in result.output and "only one of maintenance_mode (its earlier name)" in result.output
