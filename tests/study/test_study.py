"""The facility study end to end on the demo facility."""

from __future__ import annotations

import math
import shutil
from pathlib import Path

import pytest
import yaml
from click.testing import CliRunner
from pypdf import PdfReader

import arcflash
from arcflash.cli import main
from arcflash.models.ieee1584_tables import EQUIPMENT_CLASSES
from arcflash.output.cautions import CAUTION
from arcflash.study.pipeline import run_study
from tests.ieee1584_by_hand import by_hand

DEMO = Path(__file__).resolve().parents[2] / "site_data" / "fenwick_ridge"


@pytest.fixture(scope="module")
def study(tmp_path_factory):
    out = tmp_path_factory.mktemp("study")
    site = arcflash.load_site(DEMO)
    return site, run_study(site, out), out


def _split(z, x_over_r):
    r = z / math.sqrt(1 + x_over_r**2)
    return complex(r, r * x_over_r)


def _row(results, bus, scenario):
    rows = results.rows
    return rows[(rows["bus"] == bus) & (rows["scenario"] == scenario)].iloc[0]


def _energy_cal(bus_kv, bolted, cls, t, tr):
    """Full-case incident energy by the hand calculation of tests/ieee1584_by_hand.py (not the package's model),
    with the class's typical gap, distance and enclosure [cal/cm²]."""
    c = EQUIPMENT_CLASSES[cls]
    depth = c.depth_mm if c.depth_mm is not None else math.nan
    hand = by_hand(bus_kv, bolted, c.gap_mm, c.working_distance_mm, t, tr, c.config, c.height_mm, c.width_mm, depth)
    return hand["full"][1] / 4.184


def test_hand_calculation_medium_voltage_bus(study):
    # SS-A-PRI, scenario motors-off (no motor contribution, so the hand sum is exact):
    # utility 18 kA at 13.8 kV, X/R 15, plus cable C-MV-A, 650 ft of (0.0276 + j0.0411) ohm/1000 ft.
    _, results, _ = study
    z = _split(13.8 / (math.sqrt(3) * 18.0), 15.0) + complex(0.0276, 0.0411) * 0.65
    bolted = 13.8 / (math.sqrt(3) * abs(z))
    row = _row(results, "SS-A-PRI", "motors-off")
    assert row["bolted_ka"] == pytest.approx(bolted, rel=1e-6)
    # Clearing: relay 52-A, CT 200:5, instantaneous 40 A x 40 = 1600 A primary, far below the arcing
    # current: 16 ms + 5 cycles at 60 Hz (IEEE 1584-2002 Table 1, common practice).
    t = 0.016 + 5 / 60
    assert row["clearing_time_s"] == pytest.approx(t, rel=1e-12)
    assert row["governing_device"] == "52-A"
    # Energy: IEEE 1584-2018 worked by hand (tests/ieee1584_by_hand.py) with the 15 kV switchgear typical values;
    # 1 cal = 4.184 J.
    assert row["incident_energy_cal_cm2"] == pytest.approx(_energy_cal(13.8, bolted, "switchgear-15kv", t, t), rel=1e-6)


def test_hand_calculation_low_voltage_bus(study):
    # MCC-A2, scenario motors-off: utility and MV cable referred to 480 V, transformer T-A (2000 kVA,
    # 5.75 % at the low side of its 7.5 % tolerance, X/R 8), cable C-A2 (240 ft 4/0 Cu in steel:
    # 0.063 + j0.051 ohm/1000 ft, NEC Chapter 9 Table 9).
    _, results, _ = study
    ratio = (0.48 / 13.8) ** 2
    z = (_split(13.8 / (math.sqrt(3) * 18.0), 15.0) + complex(0.0276, 0.0411) * 0.65) * ratio
    z += _split(0.0575 * 0.925 * 0.48**2 / 2.0, 8.0) + complex(0.063, 0.051) * 0.24
    bolted = 0.48 / (math.sqrt(3) * abs(z))
    row = _row(results, "MCC-A2", "motors-off")
    assert row["bolted_ka"] == pytest.approx(bolted, rel=1e-6)
    # FDR-A2: 400 A trip unit, instantaneous 10 x 400 A (x 1.1 on the max band = 4400 A); the arcing
    # current exceeds it, so the breaker clears in 0 s + 3 cycles.
    assert row["arcing_current_ka"] * 1000 > 4400
    t = 3 / 60
    assert row["clearing_time_s"] == pytest.approx(t, rel=1e-12)
    energy = _energy_cal(0.48, bolted, "mcc-lv-deep", t, row["reduced_clearing_time_s"])
    assert row["incident_energy_cal_cm2"] == pytest.approx(energy, rel=1e-6)


def test_governing_row_is_the_largest_energy(study):
    _, results, _ = study
    rows = results.rows
    for bus, governing in results.governing.iterrows():
        energies = rows.loc[rows["bus"] == bus, "incident_energy_governing_cal_cm2"].dropna()
        if len(energies):
            assert governing["incident_energy_governing_cal_cm2"] == energies.max()


def test_ppe_and_shock_boundaries(study):
    _, results, _ = study
    g = results.governing
    # NFPA 70E Table 130.4(E)(a): 151-750 V: limited (fixed part) 3 ft 6 in, restricted 1 ft 0 in.
    assert g.loc["SWG-A", "limited_approach_fixed_mm"] == pytest.approx(1066.8)
    assert g.loc["SWG-A", "restricted_approach_mm"] == pytest.approx(304.8)
    over = g[g["incident_energy_governing_cal_cm2"] > 40]
    assert (over["ppe_category"] == -1).all() and over["flags"].str.contains("de-energize").all()


def test_result_files_and_report(study):
    site, results, out = study
    for name in ("results.csv", "governing.csv", "results.xlsx", "report.pdf"):
        assert (out / name).stat().st_size > 0
    text = "\n".join(page.extract_text() for page in PdfReader(out / "report.pdf").pages)
    flat = " ".join(text.split())
    for bus in site.buses:
        assert bus in text
    assert " ".join(CAUTION.split()[:12]) in flat
    assert "Prepared by" in text and "One-line diagram" in text


def test_change_one_device_changes_only_its_buses(tmp_path):
    # Raising FDR-A2's instantaneous pickup must change exactly the buses it protects (MCC-A2).
    copy = tmp_path / "site"
    shutil.copytree(DEMO, copy)
    (tmp_path / "libraries").mkdir()
    shutil.copy(DEMO.parent / "libraries" / "invented_curves.yaml", tmp_path / "libraries")
    before = run_study(arcflash.load_site(copy), report=False).governing
    devices = yaml.safe_load((copy / "devices.yaml").read_text())
    for device in devices["devices"]:
        if device["id"] == "FDR-A2":
            device["trip_unit"]["instantaneous_pickup"] = 40.0
    (copy / "devices.yaml").write_text(yaml.safe_dump(devices, sort_keys=False))
    after = run_study(arcflash.load_site(copy), report=False).governing
    column = "incident_energy_governing_cal_cm2"
    changed = set(before.index[(before[column] - after[column]).abs() > 1e-9])
    assert changed == {"MCC-A2"}


def test_study_command(tmp_path):
    result = CliRunner().invoke(main, ["study", str(DEMO), "--out", str(tmp_path), "--quiet", "--no-report"])
    assert result.exit_code == 0, result.output
    assert "Highest incident energy" in result.output and "LIMITS OF USE" in result.output
    assert (tmp_path / "results.xlsx").exists() and not (tmp_path / "report.pdf").exists()


def test_every_flag_has_its_note_number(study):
    # pipeline.FLAG_NOTES: the numbers labels print; a row has notes exactly when it has flags
    from arcflash.study.pipeline import FLAG_NOTES

    _, results, _ = study
    rows = results.rows
    assert ((rows["flags"] != "") == (rows["flag_notes"] != "")).all()
    for notes, flags, energy, energized in zip(rows["flag_notes"], rows["flags"],
                                               rows["incident_energy_governing_cal_cm2"], rows["energized"]):
        numbers = {int(n) for n in notes.split(",") if n}
        assert numbers <= set(FLAG_NOTES)
        assert (5 in numbers) == (bool(energized) and energy > 40.0)  # NFPA 70E: no category above 40
        assert (1 in numbers) == (not energized)
        assert (2 in numbers) == ("outside the range of IEEE 1584-2018" in flags)
