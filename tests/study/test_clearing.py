"""Clearing the arcing fault: source paths, fastest device per path, cap, flags.

Expected times are worked by hand from the demo's (invented) settings and the
device models: a trip unit's short-time delay on the max band is the delay
x 1.15 (time tolerance), plus 3 cycles of breaker opening (IEEE 1584-2002
Table 1, common practice); a relay's instantaneous element 16 ms plus 5 cycles.
"""

from __future__ import annotations

import copy
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

import arcflash
from arcflash.cli import main
from arcflash.study.clearing import clearing_table
from tests.site.helpers import CHAIN, write_site

DEMO = Path(__file__).resolve().parents[2] / "site_data" / "fenwick_ridge"


@pytest.fixture(scope="module")
def demo():
    return arcflash.load_site(DEMO)


@pytest.fixture(scope="module")
def normal(demo):
    return clearing_table(demo, "normal")


def test_lv_switchgear_cleared_by_its_main_short_time(normal):
    # LVM-A: 3000 A, short-time pickup 3 x LTPU, 0.3 s. Max band: pickup 3 x 3000 x 1.1 = 9900 A,
    # delay 0.3 x 1.15 = 0.345 s, + 3/60 s. The arcing current through it (share x I_arc) is above 9900 A.
    row = normal.loc["SWG-A"]
    assert row["governing_device"] == "LVM-A"
    assert row["clearing_time_s"] == pytest.approx(0.3 * 1.15 + 3 / 60, rel=1e-12)
    assert row["arcing_current_ka"] * 0.94 * 1000 > 9900


def test_mv_feeder_relay_instantaneous(normal):
    # 52-A: CT 200:5, instantaneous 40 A secondary = 1600 A primary; the arcing current (~16 kA) is above it:
    # 0.016 s + 5 cycles at 60 Hz.
    row = normal.loc["SS-A-PRI"]
    assert row["governing_device"] == "52-A"
    assert row["clearing_time_s"] == pytest.approx(0.016 + 5 / 60, rel=1e-12)


def test_maintenance_mode_switches_alternate_setting(demo):
    # Maintenance: LVM-A instantaneous at 2.5 x 3000 A (x 1.1 on the max band = 8250 A): 0 s + 3/60 s.
    row = clearing_table(demo, "maintenance-a").loc["SWG-A"]
    assert row["governing_device"] == "LVM-A"
    assert row["clearing_time_s"] == pytest.approx(3 / 60, rel=1e-12)


def test_source_bus_without_device_is_flagged_and_capped(normal):
    row = normal.loc["MV-MAIN"]
    assert row["no_device"] and row["governing_device"] is None
    assert row["clearing_time_s"] == 2.0  # IEEE 1584-2018 guidance: 2 s cap (the demo's setting)
    assert "no protective device between source UTIL-1" in row["clearing_notes"]


def test_long_clearing_is_capped_and_flagged(normal):
    row = normal.loc["PNL-C3"]
    assert row["duration_capped"] and row["clearing_time_s"] == 2.0
    assert "capped at 2 s" in row["clearing_notes"]


def test_de_energised_bus_has_no_time(normal):
    assert np.isnan(normal.loc["GEN-SWBD", "clearing_time_s"])


def test_transformer_throat_cleared_by_primary_fuse(normal):
    # TC-SEC sits between transformer T-C and its secondary main: only the primary fuse F-TC clears it.
    assert normal.loc["TC-SEC", "governing_device"] == "F-TC"


def test_generator_path(demo):
    table = clearing_table(demo, "on-generator")
    assert table.loc["SWG-C", "governing_device"] == "GEN-BKR-TU"
    assert not table.loc["SWG-C", "meshed"]


def _chain_with_main(tmp_path, arc_not_cleared_by=(), main_rating=3000):
    doc = copy.deepcopy(CHAIN)
    doc["buses"][1]["arc_not_cleared_by"] = list(arc_not_cleared_by)
    doc["devices"] += [
        {"id": "MAIN", "branch": "T", "at_bus": "LV", "kind": "trip-unit-breaker",
         "trip_unit": {"rating_a": main_rating, "short_time_pickup": 2.0, "short_time_delay_s": 0.2}},
        {"id": "PRI", "branch": "T", "at_bus": "MV", "kind": "relay-breaker",
         "relay": {"ct_primary_a": 100, "pickup_a": 3.0, "curve": "very inverse", "time_dial": 1.0}},
    ]
    return arcflash.load_site(write_site(tmp_path / "chain", doc))


def test_line_side_of_main_goes_to_next_device(tmp_path):
    own = clearing_table(_chain_with_main(tmp_path / "a"))
    assert own.loc["LV", "governing_device"] == "MAIN"
    line_side = clearing_table(_chain_with_main(tmp_path / "b", arc_not_cleared_by=["MAIN"]))
    assert line_side.loc["LV", "governing_device"] == "PRI"
    assert line_side.loc["LV", "clearing_time_s"] > own.loc["LV", "clearing_time_s"]
    # The main opens once (cutting the bus and the rest of the network off its line side); the arc on the
    # line side stays fed through the transformer until the primary relay opens.
    sequence = line_side.loc["LV", "clearing_sequence"]
    assert sequence.count("MAIN opens") == 1 and sequence.index("MAIN") < sequence.index("PRI opens")


def test_device_that_does_not_trip_is_flagged(tmp_path):
    # A 40,000 A main with no short-time or instantaneous element never trips on this ~20 kA fault,
    # and the primary relay is excluded: no device interrupts the path.
    site = _chain_with_main(tmp_path, arc_not_cleared_by=["PRI"], main_rating=40000)
    row = clearing_table(site).loc["LV"]
    assert row["no_trip"] and row["clearing_time_s"] == 2.0
    assert "no device ends the arc" in row["clearing_notes"]


@pytest.mark.parametrize("suffix", ["png", "svg", "pdf"])
def test_tcc_command(tmp_path, suffix):
    out = tmp_path / f"tcc.{suffix}"
    result = CliRunner().invoke(main, ["tcc", str(DEMO), "SWG-A", "--out", str(out)])
    assert result.exit_code == 0, result.output
    assert out.stat().st_size > 1000


def test_tcc_bad_requests_exit_2(tmp_path):
    runner = CliRunner()
    assert runner.invoke(main, ["tcc", str(DEMO), "SWG-A", "--out", str(tmp_path / "x.jpg")]).exit_code == 2
    result = runner.invoke(main, ["tcc", str(DEMO), "NOWHERE", "--out", str(tmp_path / "x.png")])
    assert result.exit_code == 2 and "unknown bus 'NOWHERE'" in result.output


def test_clearing_command(tmp_path):
    out = tmp_path / "clearing.csv"
    result = CliRunner().invoke(main, ["clearing", str(DEMO), "--csv", str(out)])
    assert result.exit_code == 0, result.output
    assert "LVM-A" in result.output and out.exists()


def test_tie_closed_primary_cleared_by_secondary_mains_on_backfeed(demo):
    # Issue 10's worked case. Tie closed, arc at SS-A-PRI: 52-A opens on its instantaneous element
    # (0.016 s + 5 cycles); the arc is then fed backwards through T-B, the tie and T-A. Each 480 V
    # main then carries the whole backfeed (about 21 kA at 480 V, over the 9900 A short-time pickup on
    # the max band) and clears after 0.3 x 1.15 s + 3 cycles more: 0.0993 + 0.395 = 0.4943 s.
    tied = clearing_table(demo, "tie-closed")
    row = tied.loc["SS-A-PRI"]
    assert row["staged"] and not row["no_trip"]
    assert row["clearing_time_s"] == pytest.approx(0.016 + 5 / 60 + 0.3 * 1.15 + 3 / 60, rel=1e-9)
    assert row["governing_device"] in ("LVM-A", "LVM-B")
    assert row["clearing_sequence"].startswith("52-A opens at 0.099 s")
    assert "devices opened in time order" not in "".join(tied["clearing_notes"])


def test_parallel_feeders_both_must_open(tmp_path):
    # Two parallel cables, each with its own breaker, feed END: the arc at END lasts until both have
    # opened, so the slower breaker governs (a parallel pair is a loop, not a single path). Each carries
    # half the arcing current (~5.1 kA), above both short-time pickups (1760 A and 4400 A on the max band).
    doc = copy.deepcopy(CHAIN)
    doc["cables"].append({**doc["cables"][0], "id": "C2"})
    doc["devices"][0]["trip_unit"]["short_time_pickup"] = 2.0  # CB-C: 0.1 s short time at half the current
    slow = {"rating_a": 2000, "short_time_pickup": 2.0, "short_time_delay_s": 0.5}
    doc["devices"].append({"id": "CB-C2", "branch": "C2", "at_bus": "LV", "kind": "trip-unit-breaker",
                           "trip_unit": slow})
    row = clearing_table(arcflash.load_site(write_site(tmp_path / "parallel", doc))).loc["END"]
    assert row["governing_device"] == "CB-C2"
    assert row["clearing_time_s"] == pytest.approx(0.5 * 1.15 + 3 / 60, rel=1e-12)


def test_tcc_dot_agrees_with_clearing_table(demo, normal):
    # Issue 10: the TCC plot of SWG-4KV showed 52-4M at 0.94 s (its definite-time stage was skipped at a
    # scalar current) while the clearing table gives 0.25 s + 5 cycles.
    from arcflash.study.clearing import device_curve
    from arcflash.study.faults import solve_scenario

    faults = solve_scenario(demo, "normal")
    row = faults.devices.query("fault_bus == 'SWG-4KV' and device == '52-4M'").iloc[0]
    amps = row.current_ka * normal.loc["SWG-4KV", "arcing_current_ka"] / normal.loc["SWG-4KV", "bolted_ka"] * 1000
    t = float(device_curve(demo, "52-4M").clearing_time_s(amps))
    assert t == pytest.approx(0.25 + 5 / 60, rel=1e-12) == normal.loc["SWG-4KV", "clearing_time_s"]


def test_clearing_command_shows_opening_sequences():
    result = CliRunner().invoke(main, ["clearing", str(DEMO), "--scenario", "tie-closed"])
    assert result.exit_code == 0, result.output
    assert "Arcs followed stage by stage" in result.output
    assert "SS-A-PRI: 52-A opens at 0.099 s" in result.output


def test_each_arcing_case_is_timed_at_its_own_current(normal, demo):
    # TC-SEC (480 V secondary of T-C) is cleared by the primary fuse F-TC. Worked from the fuse's digitised
    # curve (site_data/libraries/invented_curves.yaml, FUSE-100E-15KV, invented demo data; the slowest band,
    # log-log between its points: common practice for digitised curves): the fuse carries the bus's share of
    # each arcing current, referred to 13.8 kV. Between (500 A, 4 s) and (1000 A, 0.5 s) the curve is
    # t = 4 (I / 500)^-3. The reduced arcing current, smaller, is timed at its own, longer time.
    from arcflash.study.faults import solve_scenario

    row = normal.loc["TC-SEC"]
    share = solve_scenario(demo, "normal").devices.query("fault_bus == 'TC-SEC' and device == 'F-TC'").iloc[0].share
    for current, column in (("arcing_current_ka", "clearing_time_s"),
                            ("reduced_arcing_current_ka", "reduced_clearing_time_s")):
        fuse_a = row[current] * 1000.0 * share * 0.48 / 13.8
        assert 500.0 < fuse_a < 1000.0
        assert row[column] == pytest.approx(4.0 * (fuse_a / 500.0) ** (np.log(0.5 / 4.0) / np.log(2.0)), rel=1e-9)
    assert row["reduced_clearing_time_s"] > 1.4 * row["clearing_time_s"]


def test_one_stage_opening_sequence_names_the_device_time_and_current(normal):
    # The sequence of a bus cleared in one stage: its governing device, the hand-worked time above
    # (0.3 x 1.15 + 3/60 s for LVM-A's short-time band) and the arcing current of each case, to 3 digits.
    row = normal.loc["SWG-A"]
    assert not row["staged"]
    for prefix in ("", "reduced_"):
        assert row[f"{prefix}clearing_sequence"] == (
            f"LVM-A opens at {0.3 * 1.15 + 3 / 60:.3f} s (arc {row[f'{prefix}arcing_current_ka']:.3g} -> 0 kA)")


def test_a_site_without_any_protective_device_runs_every_arc_to_the_cap(tmp_path):
    # No device at all: nothing clears, every energised bus is flagged and its arc runs to the site's cap
    # (IEEE 1584-2018 2 s guidance, the default cap); the study still runs.
    site = arcflash.load_site(write_site(tmp_path / "bare", {k: v for k, v in CHAIN.items() if k != "devices"}))
    table = clearing_table(site, "normal")
    assert table["no_device"].all() and table["duration_capped"].all()
    np.testing.assert_allclose(table["clearing_time_s"], 2.0)
    np.testing.assert_allclose(table["reduced_clearing_time_s"], 2.0)


def test_source_paths_and_forests_are_remembered_by_the_network_they_come_from(demo):
    # The stacks of an uncertainty run join their copies alike whatever the impedances: their source paths
    # and spanning forests are searched once, remembered by the network's buses, branch ends, device branches
    # and sources; any other network gets its own; what is remembered cannot be changed by a caller.
    import dataclasses

    from arcflash.models.network_forest import spanning_forest
    from arcflash.study import clearing
    from arcflash.study.faults import build_network

    net = build_network(demo, demo.scenario("normal"))
    sources = net.source_bus
    first = clearing.all_source_paths(net, sources)
    other_z = dataclasses.replace(net, branch_z_pu=net.branch_z_pu * 1.1)
    again = clearing.all_source_paths(other_z, sources)
    assert all(a[0] is b[0] and a[1] is b[1] and a[3] is b[3] for a, b in zip(first, again))
    fresh = clearing._searched_paths(net, sources)
    for a, b in zip(first, fresh):
        assert np.array_equal(a[0], b[0]) and np.array_equal(a[1], b[1]) and a[2] == b[2]
        assert np.array_equal(a[3], b[3])
    with pytest.raises(ValueError, match="read-only"):
        first[0][1][0] = 0
    moved = dataclasses.replace(net, device_branch=net.device_branch[::-1].copy())
    assert clearing.all_source_paths(moved, sources)[0][1] is not first[0][1]
    forest = spanning_forest(len(net.bus_ids), net.branch_from, net.branch_to)
    assert spanning_forest(len(net.bus_ids), net.branch_from.copy(), net.branch_to.copy()) is forest
    assert spanning_forest(len(net.bus_ids), net.branch_to, net.branch_from) is not forest
    with pytest.raises(ValueError, match="read-only"):
        forest.parent[0] = 1


def test_the_first_of_each_group_found_without_sorting_the_values_is_the_sorted_one():
    # clearing._first_in_groups (groups made once per scenario, values per arcing case) against
    # _first_of_groups (a sort of keys and values): the same row of every group, on ties (the first in row
    # order), with infinite times, NaN (the largest) and groups of NaN only (their first row).
    from hypothesis import given, settings
    from hypothesis import strategies as st

    from arcflash.study.clearing import _first_in_groups, _first_of_groups, _groups_of

    values_of = st.sampled_from([0.1, 0.2, 0.5, np.inf, np.nan, -0.0, 0.0])

    @settings(max_examples=200, deadline=None)
    @given(st.lists(st.tuples(st.integers(0, 5), values_of), min_size=1, max_size=40))
    def check(pairs):
        keys = np.array([k for k, _ in pairs])
        values = np.array([v for _, v in pairs])
        rows = np.arange(keys.size)
        groups = _groups_of(keys, rows)
        assert np.array_equal(groups[0][_first_in_groups(groups, values)], _first_of_groups(keys, values))

    check()
