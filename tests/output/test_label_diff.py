"""Why each label changed (issue 13): the diff names the changed input for a %Z change, a setting change, a
cable-length change and a scenario added, with the study stage it moved and the label values side by side.

The expectations are the physics of the change (a lower %Z raises the bolted current downstream; a
higher instantaneous pickup moves the clearing to a slower element; a longer cable lowers the bolted
current at its far end), not numbers taken from the tool.
"""

from __future__ import annotations

import shutil

import pytest
import yaml
from click.testing import CliRunner

import arcflash
from arcflash.cli import main
from arcflash.output import ledger
from arcflash.output.label_diff import changes_table, label_changes, upstream_of
from arcflash.output.labels import issue_labels
from arcflash.study.pipeline import run_study
from tests.conftest import demo_copy
from tests.output.test_label_fields import DEMO

BUSES = ["SWG-A", "MCC-A2", "PNL-A1", "PNL-A4", "SWG-C", "GEN-SWBD", "MCC-C2"]


@pytest.fixture(scope="module")
def issued_once(tmp_path_factory):
    """A copy of the demo with labels issued for BUSES (and its ledger), made once."""
    base = tmp_path_factory.mktemp("issued")
    demo_copy(base)
    site = arcflash.load_site(base / "site")
    issue_labels(site, run_study(site).governing, base / "out", buses=BUSES)
    return base


@pytest.fixture()
def issued(issued_once, tmp_path):
    """A fresh copy of the issued site (site folder, ledger inside it, device library beside it)."""
    shutil.copytree(issued_once / "site", tmp_path / "site")
    shutil.copytree(issued_once / "libraries", tmp_path / "libraries")
    return tmp_path / "site"


def _changes(site_dir):
    site = arcflash.load_site(site_dir)
    return {c.bus: c for c in label_changes(site, run_study(site).governing, ledger.ledger_path(site_dir))}


def _edit(path, change):
    document = yaml.safe_load(path.read_text(encoding="utf-8"))
    change(document)
    path.write_text(yaml.safe_dump(document, sort_keys=False), encoding="utf-8")


def test_nothing_changed_nothing_listed(issued):
    assert _changes(issued) == {}


def test_a_transformer_impedance_change_is_named_with_the_bolted_current_it_moved(issued):
    def lower(document):
        for t in document["transformers"]:
            if t["id"] == "T-A":
                t["z_percent"] = 4.5
    _edit(issued / "branches.yaml", lower)
    changes = _changes(issued)
    swg = changes["SWG-A"]
    assert ("transformers[T-A]", "z_percent", 5.75, 4.5, "upstream") in swg.causes
    bolted = dict((words, (old, new)) for words, old, new in swg.stages)["bolted fault current [kA]"]
    assert bolted[1] > bolted[0]  # lower %Z, more fault current
    assert any(words == "incident energy or PPE category" for words, _, _ in swg.fields)
    assert "SWG-C" not in changes or all(where == "elsewhere" for *_, where in changes["SWG-C"].causes
                                         if _[0] == "transformers[T-A]")


def test_a_breaker_setting_change_is_named_with_the_clearing_it_moved(issued):
    def raise_pickup(document):
        for device in document["devices"]:
            if device["id"] == "FDR-A2":
                device["trip_unit"]["instantaneous_pickup"] = 40.0
    _edit(issued / "devices.yaml", raise_pickup)
    changes = _changes(issued)
    assert set(changes) == {"MCC-A2"}  # only the bus the feeder protects
    mcc = changes["MCC-A2"]
    assert [c for c in mcc.causes if c[0] == "devices[FDR-A2]"] == [
        ("devices[FDR-A2]", "trip_unit.instantaneous_pickup", 10.0, 40.0, "upstream")]
    stages = dict((words, (old, new)) for words, old, new in mcc.stages)
    assert stages["clearing time [s]"][1] > stages["clearing time [s]"][0]  # the instantaneous no longer acts


def test_a_cable_length_change_is_named(issued):
    text = (issued / "cables.csv").read_text(encoding="utf-8")
    (issued / "cables.csv").write_text(text.replace("C-PA1,SWG-A,PNL-A1,150 ft", "C-PA1,SWG-A,PNL-A1,450 ft"),
                                       encoding="utf-8")
    changes = _changes(issued)
    pnl = changes["PNL-A1"]
    assert ("cables[C-PA1]", "length", "150 ft", "450 ft", "upstream") in pnl.causes
    bolted = dict((words, (old, new)) for words, old, new in pnl.stages)["bolted fault current [kA]"]
    assert bolted[1] < bolted[0]  # a longer cable, less fault current at its end
    table = changes_table(changes.values())
    assert ((table["bus"] == "PNL-A1") & (table["kind"] == "input") & (table["item"] == "cables[C-PA1].length")).any()


def test_a_scenario_added_is_named(issued):
    def add(document):
        document["scenarios"].append({"name": "generator-parallel", "description": "Generator run in parallel",
                                      "close": ["GEN-BKR"], "generators_running": ["GEN-1"]})
    _edit(issued / "facility.yaml", add)
    changes = _changes(issued)
    assert changes  # more fault current somewhere on the generator's side
    for change in changes.values():
        assert ("scenarios[generator-parallel]", "(added)", None, "added", "upstream") in change.causes
        assert any(words == "governing scenario" for words, _, _ in change.stages)


def test_upstream_is_the_path_to_the_sources():
    site = arcflash.load_site(DEMO)
    path = upstream_of(site, "PNL-A4")
    assert {("cables", "C-PA4"), ("cables", "C-PA1"), ("transformers", "T-A"), ("utilities", "UTIL-1"),
            ("devices", "FDR-PA4")} <= path
    assert ("cables", "C-A2") not in path  # a sibling feeder


def test_the_diff_command_writes_text_csv_and_a_page(issued, tmp_path):
    text = (issued / "cables.csv").read_text(encoding="utf-8")
    (issued / "cables.csv").write_text(text.replace("C-PA1,SWG-A,PNL-A1,150 ft", "C-PA1,SWG-A,PNL-A1,450 ft"),
                                       encoding="utf-8")
    result = CliRunner().invoke(main, ["labels", "diff", str(issued), "--csv", str(tmp_path / "d.csv"),
                                       "--pdf", str(tmp_path / "d.pdf")])
    assert result.exit_code == 0, result.output
    assert "PNL-A1" in result.output and "cables[C-PA1].length: 150 ft -> 450 ft (upstream)" in result.output
    assert "qualified persons" in result.output.lower()
    assert (tmp_path / "d.csv").stat().st_size > 0 and (tmp_path / "d.pdf").read_bytes()[:4] == b"%PDF"
