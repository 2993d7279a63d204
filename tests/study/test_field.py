"""Field tools: %Z from test readings and the quick assessment."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest
from click.testing import CliRunner

import arcflash
from arcflash.cli import main
from arcflash.study.field import quick_assessment, transformer_from_test
from arcflash.study.pipeline import study_rows

DEMO = Path(__file__).resolve().parents[2] / "site_data" / "fenwick_ridge"
LIBRARY = DEMO.parent / "libraries" / "invented_curves.yaml"


def test_z_percent_from_test_at_other_current():
    # Hand-worked (IEEE C57.12.90 impedance voltage; linear scaling, common practice): 300 kVA,
    # 13.8 kV: rated primary current 300/(sqrt(3) x 13.8) = 12.551 A. The test reached 10 A at 550 V:
    # at rated current 550 x 12.551/10 = 690.3 V, %Z = 690.3/13800 x 100 = 5.002 %.
    r = transformer_from_test(300, 13.8, 0.48, 550, measured_a=10)
    assert r["rated_primary_a"] == pytest.approx(300 / (math.sqrt(3) * 13.8), rel=1e-12)
    assert r["z_percent"] == pytest.approx(550 * r["rated_primary_a"] / 10 / 13800 * 100, rel=1e-12)
    assert r["z_percent"] == pytest.approx(5.002, abs=5e-4)
    # Infinite-bus current I_FLA x 100 / %Z (common practice).
    assert r["infinite_bus_ka"] == pytest.approx(r["rated_secondary_a"] * 100 / r["z_percent"] / 1000, rel=1e-12)


def test_z_percent_temperature_correction():
    # Resistive part 1.0 % at 20 C corrected to 85 C with Tk = 234.5 (copper; IEEE C57.12.90, from memory):
    # %R85 = 1.0 x 319.5/254.5; the reactive part sqrt(%Z^2 - 1) is kept.
    r = transformer_from_test(300, 13.8, 0.48, 690.0, r_percent=1.0, measured_temp_c=20)
    z = 690.0 / 13800 * 100
    expected = math.sqrt(z**2 - 1.0 + (319.5 / 254.5) ** 2)
    assert r["z_percent"] == pytest.approx(expected, rel=1e-12) and r["z_percent_measured"] == pytest.approx(z)


def test_quick_assessment_matches_the_study(tmp_path):
    # The guard-house service of the demo: UTIL-2 (8 kA, X/R 12 at 13.8 kV), T-GH (300 kVA, 5 %, X/R 4,
    # 7.5 % tolerance), cable C-GH (80 ft of #1 copper in PVC), GH-PNL a deep panelboard behind FDR-GH (TM-225).
    quick = quick_assessment(tmp_path, kva=300, primary_kv=13.8, secondary_kv=0.48, z_percent=5.0, x_over_r=4.0,
                             z_tolerance_percent=7.5, utility_ka=8.0, utility_x_over_r=12.0,
                             cable={"length": "80 ft", "size": "1", "material": "copper", "conduit": "pvc"},
                             equipment={"equipment_class": "panelboard-deep"}, curve="TM-225", library=LIBRARY)
    rows = study_rows(arcflash.load_site(DEMO))
    study = rows[(rows["bus"] == "GH-PNL") & (rows["scenario"] == "normal")].iloc[0]
    for column in ("bolted_ka", "arcing_current_ka", "clearing_time_s", "reduced_clearing_time_s",
                   "incident_energy_governing_cal_cm2", "arc_flash_boundary_governing_mm", "ppe_category"):
        assert quick["row"][column] == pytest.approx(study[column], rel=1e-9), column


def test_quick_states_its_conservative_choices(tmp_path):
    result = quick_assessment(tmp_path, kva=500, primary_kv=4.16, secondary_kv=0.48, z_percent=5.0, x_over_r=5.0,
                              equipment={"equipment_class": "switchgear-lv"}, clearing_time_s=0.2,
                              reduced_clearing_time_s=0.3)
    assert any("infinite" in note for note in result["notes"])
    assert any("low side" in note for note in result["notes"])


def run(args):
    return CliRunner().invoke(main, args)


BASE = ["quick", "--kva", "500", "--primary-kv", "4.16", "--secondary-kv", "0.48", "--z-percent", "5",
        "--x-over-r", "5", "--class", "switchgear-lv", "--clearing-time-s", "0.1", "--reduced-clearing-time-s", "0.1"]


def test_quick_command_text_and_json():
    result = run(BASE)
    assert result.exit_code == 0, result.output
    assert "incident energy" in result.output and "LIMITS OF USE" in result.output and "infinite" in result.output
    record = json.loads(run(BASE + ["--json"]).output)
    assert record["result"]["bolted_ka"] > 0 and record["assumptions"]


@pytest.mark.parametrize("args, message", [
    (["quick", "--primary-kv", "4.16", "--secondary-kv", "0.48", "--z-percent", "5", "--x-over-r", "5"],
     "Missing option '--kva'"),
    (BASE[:8] + ["30"] + BASE[9:], "--z-percent: expected 0.5-25 %"),
    (BASE + ["--cable-length", "-40 ft", "--cable-size", "4/0"], "expected a positive value"),
    (["quick", "--kva", "500", "--primary-kv", "4.16", "--secondary-kv", "0.48", "--z-percent", "5",
      "--x-over-r", "5", "--class", "switchgear-lv", "--library", str(LIBRARY), "--curve", "TM-999"],
     "'TM-999' is not in"),
])
def test_quick_bad_input_exits_2(args, message):
    result = run(args)
    assert result.exit_code == 2, result.output
    assert message in result.output and "Traceback" not in result.output


def test_transformer_test_command():
    result = run(["transformer-test", "--kva", "1500", "--primary-kv", "13.8", "--secondary-kv", "0.48",
                  "--applied-v", "632", "--measured-a", "50"])
    assert result.exit_code == 0 and "5.748 %" in result.output
    bad = run(["transformer-test", "--kva", "1500", "--primary-kv", "13.8", "--secondary-kv", "0.48",
               "--applied-v", "6320"])
    assert bad.exit_code == 2 and "expected 0.5-25 %" in bad.output


def test_briefing_sheet(tmp_path):
    from pypdf import PdfReader

    from arcflash.output.briefing import PERMIT_ITEMS
    from arcflash.output.cautions import CAUTION

    out = tmp_path / "brief.pdf"
    result = run(["briefing", str(DEMO), "SWG-A", "--out", str(out)])
    assert result.exit_code == 0, result.output
    text = " ".join(" ".join(p.extract_text() for p in PdfReader(out).pages).split())
    for expected in ("Job briefing - SWG-A", "480 V", "cal/cm2", "arc-flash boundary", "LVM-", "PPE category",
                     PERMIT_ITEMS[0], PERMIT_ITEMS[-1], " ".join(CAUTION.split()[:10])):
        assert expected in text, expected
    assert run(["briefing", str(DEMO), "NOPE", "--out", str(out)]).exit_code == 2


def test_quick_assessment_caps_the_arc_at_2_s(tmp_path):
    # The 2 s arc-duration guidance of IEEE 1584-2018 (docs/method.md; the exact clause is from memory), the same
    # cap as a facility's default: a stated 5 s clearing time is counted as 2 s, and the row says so.
    result = quick_assessment(tmp_path, kva=500, primary_kv=4.16, secondary_kv=0.48, z_percent=5.0, x_over_r=5.0,
                              equipment={"equipment_class": "switchgear-lv"}, clearing_time_s=5.0,
                              reduced_clearing_time_s=5.0)
    row = result["row"]
    assert row["clearing_time_governing_s"] == 2.0
    assert result["site"].facility.arc_duration_cap_s == 2.0
    assert "capped at 2 s" in row["flags"]


def test_briefing_category_edge_at_40_cal(tmp_path):
    # NFPA 70E Table 130.7(C)(15)(c): exactly 40.0 cal/cm² is category 4 on the briefing sheet as on the label.
    from pypdf import PdfReader

    from arcflash.models import nfpa70e
    from arcflash.output.briefing import write_briefing
    from arcflash.study.pipeline import run_study

    site = arcflash.load_site(DEMO)
    row = run_study(site).governing.loc["SWG-A"].copy()
    for energy, expected in ((40.0, "WARNING"), (40.01, "DANGER")):
        row["incident_energy_governing_cal_cm2"] = energy
        row["ppe_category"] = int(nfpa70e.ppe_category(energy))
        row["minimum_arc_rating_cal_cm2"] = float(nfpa70e.minimum_arc_rating_cal_cm2(energy))
        path = tmp_path / f"{energy}.pdf"
        write_briefing(site, "SWG-A", row, path)
        text = " ".join(" ".join(page.extract_text() for page in PdfReader(path).pages).split())
        assert expected in text, energy
        assert ("category 4" in text) == (energy == 40.0) and ("none applies (above 40 cal/cm2)" in text) == (
            energy > 40.0)


def test_quick_needs_the_equipment_class_and_lists_them():
    k = BASE.index("--class")
    result = run(BASE[:k] + BASE[k + 2:])
    assert result.exit_code == 2
    assert "--class: required" in result.output
    for name in ("switchgear-lv", "mcc-lv-deep", "panelboard-shallow", "switchgear-15kv"):
        assert name in result.output


def test_quick_reduced_time_is_stated_read_from_the_curve_or_accepted_and_disclosed():
    assert BASE[-2] == "--reduced-clearing-time-s"
    stated_only = BASE[:-2]
    refused = run(stated_only)
    assert refused.exit_code == 2, refused.output
    assert "--reduced-clearing-time-s: expected the clearing time at the reduced arcing current" in refused.output
    accepted = run(stated_only + ["--accept-same-reduced-time"])
    assert accepted.exit_code == 0, accepted.output
    flat = " ".join(accepted.output.split())
    assert "NOT CONSERVATIVE - choices you accepted" in flat and "inverse-time curve" in flat
    # the conservative choices no longer claim the full-current time for the reduced case
    assert "full-current time used" not in flat
    record = json.loads(run(stated_only + ["--accept-same-reduced-time", "--json"]).output)
    assert record["not_conservative"] and record["result"]["reduced_clearing_time_s"] == 0.1
    assert stated_only[-2] == "--clearing-time-s"
    curve = stated_only[:-2]
    from_curve = run(curve + ["--library", LIBRARY, "--curve", "TM-100"])
    assert from_curve.exit_code == 0, from_curve.output
    assert "read from the device's curve" in " ".join(from_curve.output.split())
    both = run(curve + ["--library", LIBRARY, "--curve", "TM-100", "--accept-same-reduced-time"])
    assert both.exit_code == 2 and "--curve" in both.output and "--accept-same-reduced-time" in both.output


def test_transformer_test_prints_the_limits_of_use():
    result = run(["transformer-test", "--kva", "1500", "--primary-kv", "13.8", "--secondary-kv", "0.48",
                  "--applied-v", "632"])
    assert result.exit_code == 0 and "LIMITS OF USE" in result.output and "not yet verified" in result.output
