"""The single-equipment command, through click's CliRunner."""

from __future__ import annotations

import json
import math

import pytest
from click.testing import CliRunner

from arcflash.cli import main
from arcflash.output.cautions import CAUTION

D2 = ["equipment", "--voltage-kv", "0.48", "--bolted-ka", "45", "--config", "VCB", "--gap-mm", "32",
      "--working-distance-mm", "609.6", "--height-mm", "508", "--width-mm", "508", "--depth-mm", "508",
      "--clearing-time-s", "0.0613", "--reduced-clearing-time-s", "0.319"]


def run(args):
    return CliRunner().invoke(main, args)


def test_readable_table_with_caution():
    result = run(D2)
    assert result.exit_code == 0, result.output
    out = result.output
    # IEEE 1584-2018 Annex D.2 prints the final arcing current 28.793 kA for these inputs.
    assert "28.793" in out
    assert "cal/cm2" in out and "J/cm2" in out
    assert " ft " in out and " mm)" in out  # boundary in ft-in and mm
    assert "Governing case" in out
    assert "LIMITS OF USE" in out and "qualified persons" in out
    assert "Flags: none" in out


def test_json_output():
    result = run(D2 + ["--json"])
    assert result.exit_code == 0, result.output
    record = json.loads(result.output)
    # IEEE 1584-2018 Annex D.2: 28.793 kA (3 decimals printed).
    assert record["full_case"]["arcing_current_ka"] == pytest.approx(28.793, abs=5e-4)
    assert record["caution"] == CAUTION
    assert record["governing"]["case"] in {"full", "reduced"}
    assert record["flags"] == []
    assert record["inputs"]["config"] == "VCB"


def test_equipment_class_supplies_typical_values():
    result = run(["equipment", "--class", "panelboard-shallow", "--voltage-kv", "0.208", "--bolted-ka", "10",
                  "--clearing-time-s", "0.025", "--reduced-clearing-time-s", "0.025", "--json"])
    assert result.exit_code == 0, result.output
    inputs = json.loads(result.output)["inputs"]
    # IEEE 1584-2018 Tables 9 and 10 (from memory): panelboard gap 25 mm, working distance 457.2 mm.
    assert inputs["gap_mm"] == 25.0 and inputs["working_distance_mm"] == 457.2
    assert inputs["equipment_class"] == "panelboard-shallow"


def test_explicit_value_overrides_class():
    result = run(["equipment", "--class", "switchgear-lv", "--gap-mm", "40", "--voltage-kv", "0.48",
                  "--bolted-ka", "30", "--clearing-time-s", "0.05", "--accept-same-reduced-time", "--json"])
    assert json.loads(result.output)["inputs"]["gap_mm"] == 40.0


def test_a_missing_reduced_time_is_refused_unless_accepted_and_then_disclosed():
    refused = run(D2[:-2])
    assert refused.exit_code == 2
    assert "--reduced-clearing-time-s: expected the clearing time at the reduced arcing current" in refused.output
    assert "--accept-same-reduced-time" in refused.output
    accepted = run(D2[:-2] + ["--accept-same-reduced-time"])
    assert accepted.exit_code == 0, accepted.output
    assert "NOT CONSERVATIVE (accepted by you): the full-current clearing time was used" in " ".join(
        accepted.output.split())
    both = run(D2 + ["--accept-same-reduced-time"])
    assert both.exit_code == 2 and "--reduced-clearing-time-s and --accept-same-reduced-time conflict" in both.output
    record = json.loads(run(D2[:-2] + ["--accept-same-reduced-time", "--json"]).output)
    assert record["not_conservative"] and record["reduced_case"]["clearing_time_s"] == 0.0613


def test_equipment_gives_ppe_category_rating_and_shock_boundaries_like_the_study():
    text = " ".join(run(D2).output.split())
    # NFPA 70E Table 130.4(E)(a), 151-750 V: limited 3 ft 6 in (fixed parts), 10 ft 0 in (movable),
    # restricted 1 ft 0 in
    assert "limited approach 3 ft 6 in (1.0 m) fixed parts, 10 ft 0 in (3.0 m) movable conductors" in text
    assert "restricted approach 1 ft 0 in (0.3 m)" in text
    governing = json.loads(run(D2 + ["--json"]).output)["governing"]
    energy = governing["incident_energy_cal_cm2"]
    # NFPA 70E Table 130.7(C)(15)(c): category 1 up to 4, 2 up to 8, 3 up to 25, 4 up to 40 cal/cm2
    expected = next(c for c, top in ((1, 4.0), (2, 8.0), (3, 25.0), (4, 40.0)) if energy <= top)
    assert governing["ppe_category"] == expected and governing["ppe_category_text"] == f"category {expected}"
    assert f"PPE category: category {expected}" in text
    assert governing["minimum_arc_rating_cal_cm2"] >= energy
    assert governing["restricted_approach_mm"] == pytest.approx(304.8)


def test_out_of_range_is_flagged_in_output():
    result = run(["equipment", "--class", "switchgear-lv", "--voltage-kv", "0.48", "--bolted-ka", "120",
                  "--clearing-time-s", "0.05", "--reduced-clearing-time-s", "0.05"])
    assert result.exit_code == 0
    assert "FLAGS" in result.output and "bolted_ka outside 0.5–106 kA" in result.output


@pytest.mark.parametrize("args, message", [
    (["--bolted-ka", "nan"], "'--bolted-ka': expected a finite number, got 'nan'"),
    (["--bolted-ka", "-5"], "'--bolted-ka': expected a positive number, got '-5'"),
    (["--bolted-ka", "ten"], "'--bolted-ka': expected a number, got 'ten'"),
    (["--config", "VXB"], "'VXB' is not one of"),
    (["--strict", "--bolted-ka", "120"], "outside the range of IEEE 1584-2018"),
])
def test_bad_input_exits_2_with_message(args, message):
    base = ["equipment", "--class", "switchgear-lv", "--voltage-kv", "0.48", "--bolted-ka", "45",
            "--clearing-time-s", "0.05", "--reduced-clearing-time-s", "0.05"]
    result = run(base + args)
    assert result.exit_code == 2
    assert message in result.output
    assert "Traceback" not in result.output


def test_missing_geometry_without_class():
    result = run(["equipment", "--voltage-kv", "0.48", "--bolted-ka", "45", "--clearing-time-s", "0.05",
                  "--reduced-clearing-time-s", "0.05", "--config", "VCB"])
    assert result.exit_code == 2
    assert "missing --gap-mm, --working-distance-mm, --height-mm, --width-mm" in result.output


def test_memory_setting_takes_effect_on_glibc_only():
    # The command line asks glibc to map blocks of 1 MB and more on their own (returned when freed);
    # where that C library is absent the call changes nothing and says so.
    import platform

    from arcflash.output.memory import release_large_blocks_promptly

    assert release_large_blocks_promptly() is (platform.libc_ver()[0] == "glibc")


def test_the_larger_case_governs_in_the_single_equipment_command():
    # IEEE 1584-2018 clause 4: both arcing cases are computed and the larger energy governs. Annex D.2's inputs
    # with its clearing times (61.3 ms full, 319 ms reduced): the reduced case governs. Expected values from the
    # independent hand calculation (tests/ieee1584_by_hand.py), 1 cal = 4.184 J.
    from tests.ieee1584_by_hand import by_hand

    hand = by_hand(0.48, 45.0, 32.0, 609.6, 0.0613, 0.319, "VCB", 508.0, 508.0, 508.0)
    assert hand["reduced"][1] > hand["full"][1]
    record = json.loads(run(D2 + ["--json"]).output)
    governing = record["governing"]
    assert governing["case"] == "reduced"
    assert governing["incident_energy_j_cm2"] == pytest.approx(hand["reduced"][1], rel=1e-9)
    assert governing["incident_energy_cal_cm2"] == pytest.approx(hand["reduced"][1] / 4.184, rel=1e-9)
    assert governing["arc_flash_boundary_mm"] == pytest.approx(hand["reduced"][2], rel=1e-9)
    text = " ".join(run(D2).output.split())
    energy_up = math.ceil(hand["reduced"][1] / 4.184 * 100) / 100  # printed rounded up to 0.01
    assert f"Governing case: reduced arcing current incident energy {energy_up:.2f} cal/cm2" in text
