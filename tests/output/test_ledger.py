"""The label ledger: issue, change, reprint exactly what changed; status; interrupted runs."""

from __future__ import annotations

import os
from pathlib import Path

import pytest
import yaml
from click.testing import CliRunner

import arcflash
from arcflash.cli import main
from arcflash.output import files, ledger
from arcflash.output.labels import issue_labels, label_content, labels_of, safe_file_name
from arcflash.study.pipeline import run_study
from tests.conftest import demo_copy

DEMO = Path(__file__).resolve().parents[2] / "site_data" / "fenwick_ridge"


@pytest.fixture()
def site_copy(tmp_path):
    return demo_copy(tmp_path)


def _statuses(site):
    governing = run_study(site).governing
    contents = labels_of(site, governing)
    return ledger.status(ledger.ledger_path(site.path), contents)


def test_issue_change_reprint(site_copy, tmp_path):
    site = arcflash.load_site(site_copy)
    printed = issue_labels(site, run_study(site).governing, tmp_path / "out")
    assert len(printed) == len(site.buses)
    assert set(_statuses(site).values()) == {"current"}
    # Raise one feeder's instantaneous pickup: only the bus it protects changes.
    devices = yaml.safe_load((site_copy / "devices.yaml").read_text())
    for device in devices["devices"]:
        if device["id"] == "FDR-A2":
            device["trip_unit"]["instantaneous_pickup"] = 40.0
    (site_copy / "devices.yaml").write_text(yaml.safe_dump(devices, sort_keys=False))
    site = arcflash.load_site(site_copy)
    states = _statuses(site)
    assert {b for b, s in states.items() if s != "current"} == {"MCC-A2"}
    assert states["MCC-A2"] == "changed since issued"
    reprinted = issue_labels(site, run_study(site).governing, tmp_path / "out2", changed_only=True)
    assert [c.equipment_id for c in reprinted] == ["MCC-A2"]
    assert set(_statuses(site).values()) == {"current"}


def test_interrupted_run_leaves_ledger_and_pdfs(site_copy, tmp_path, monkeypatch):
    site = arcflash.load_site(site_copy)
    governing = run_study(site).governing
    issue_labels(site, governing, tmp_path / "out", buses=["SWG-A"])
    before = ledger.latest(ledger.ledger_path(site.path))
    existing = sorted((tmp_path / "out" / "labels").iterdir())
    calls = {"n": 0}
    real = files._write_beside

    def failing(path, data):  # the third label's file fails while it is written
        calls["n"] += 1
        if calls["n"] == 3:
            with open(Path(path).with_name(f".{Path(path).stem}.x.part.pdf"), "wb") as partial:
                partial.write(data[:10])
            raise OSError("disk full (simulated)")
        return real(path, data)

    monkeypatch.setattr(files, "_write_beside", failing)
    with pytest.raises(OSError, match="simulated"):
        issue_labels(site, governing, tmp_path / "out")
    assert ledger.latest(ledger.ledger_path(site.path)) == before
    assert all(p.stat().st_size > 0 for p in existing)
    # no label of the failed run reached its name: the two written before the failure were removed
    assert sorted(p for p in (tmp_path / "out" / "labels").iterdir() if ".part" not in p.name) == existing
    leftovers = [p for p in (tmp_path / "out" / "labels").iterdir() if ".part" in p.name]
    # what a real interruption leaves (a killed process cannot clean up) is removed by the next run
    for path in leftovers:
        os.utime(path, (0, 0))
    issue_labels(site, governing, tmp_path / "out", buses=["SWG-A"])
    assert not [p for p in (tmp_path / "out" / "labels").iterdir() if ".part" in p.name]


@pytest.mark.parametrize("name", ["../../etc/passwd", "A/B\\C", "..", "bus with spaces & <tags>", "Ωhm-1"])
def test_file_names_stay_in_folder(name):
    file_name = safe_file_name(name, "0123456789abcdef")
    assert "/" not in file_name and "\\" not in file_name and not file_name.startswith(".")
    assert file_name.endswith("-01234567.pdf")


def test_labels_commands(site_copy, tmp_path):
    runner = CliRunner()
    result = runner.invoke(main, ["labels", "print", str(site_copy), "--out", str(tmp_path / "o"), "--bus", "SWG-A"])
    assert result.exit_code == 0, result.output
    assert "1 labels printed" in result.output and "LIMITS OF USE" in result.output
    assert (tmp_path / "o" / "labels-sheet.pdf").exists()
    status = runner.invoke(main, ["labels", "status", str(site_copy)])
    assert status.exit_code == 0 and "1 current" in status.output and "never issued" in status.output
    bad = runner.invoke(main, ["labels", "print", str(site_copy), "--out", str(tmp_path / "p"), "--bus", "NOPE"])
    assert bad.exit_code == 2 and "unknown bus 'NOPE'" in bad.output


def test_labels_from_an_earlier_study(site_copy, tmp_path):
    runner = CliRunner()
    study = tmp_path / "study"
    assert runner.invoke(main, ["study", str(site_copy), "--out", str(study), "--quiet", "--no-report"]).exit_code == 0
    from_file = runner.invoke(main, ["labels", "print", str(site_copy), "--out", str(tmp_path / "a"),
                                     "--study", str(study), "--bus", "MCC-B1"])
    assert from_file.exit_code == 0, from_file.output
    # The label made from governing.csv equals the one made from a fresh study (same content hash).
    site = arcflash.load_site(site_copy)
    fresh = label_content(site, "MCC-B1", run_study(site).governing.loc["MCC-B1"])
    assert ledger.latest(ledger.ledger_path(site.path))["MCC-B1"][0] == fresh.content_hash
    missing = runner.invoke(main, ["labels", "print", str(site_copy), "--out", str(tmp_path / "b"),
                                   "--study", str(tmp_path)])
    assert missing.exit_code == 2 and "no governing.csv" in missing.output


def test_a_study_that_no_longer_matches_the_site_is_refused_unless_a_reason_is_recorded(site_copy, tmp_path):
    # issue 13: a label printed from a study made before a breaker setting changed printed the old energy
    runner = CliRunner()
    study = tmp_path / "study"
    assert runner.invoke(main, ["study", str(site_copy), "--out", str(study), "--quiet", "--no-report"]).exit_code == 0
    devices = site_copy / "devices.yaml"
    devices.write_text(devices.read_text(encoding="utf-8") + "\n# setting sheet rev B\n", encoding="utf-8")
    label = ["labels", "print", str(site_copy), "--out", str(tmp_path / "a"), "--study", str(study), "--bus", "SWG-A"]
    brief = ["briefing", str(site_copy), "SWG-A", "--out", str(tmp_path / "b.pdf"), "--study", str(study)]
    for command in (label, brief):
        refused = runner.invoke(main, command)
        assert refused.exit_code == 2 and "devices.yaml changed" in refused.output
        assert "--accept-stale-study" in refused.output
    assert not (tmp_path / "a").exists() and not (tmp_path / "b.pdf").exists()
    book = ledger.ledger_path(site_copy)
    assert ledger.latest(book) == {}
    accepted = runner.invoke(main, label + ["--accept-stale-study", "comment line only", "--issued-by", "J. Doe"])
    assert accepted.exit_code == 0, accepted.output
    assert runner.invoke(main, brief + ["--accept-stale-study", "comment line only"]).exit_code == 0
    records = ledger.overrides(book)
    assert [(r["command"], r["reason"], r["changes"], r["equipment"]) for r in records] == [
        ("labels print", "comment line only", "devices.yaml changed", "SWG-A"),
        ("briefing", "comment line only", "devices.yaml changed", "SWG-A")]
    assert records[0]["used_by"] == "J. Doe"
    blank = runner.invoke(main, label + ["--accept-stale-study", "  "])
    assert blank.exit_code == 2 and "expected a reason in words" in blank.output


def test_a_study_whose_governing_table_was_edited_or_has_no_record_is_stale(site_copy, tmp_path):
    from arcflash.output.labels import study_staleness

    study = tmp_path / "study"
    assert CliRunner().invoke(main, ["study", str(site_copy), "--out", str(study), "--quiet",
                                     "--no-report"]).exit_code == 0
    site = arcflash.load_site(site_copy)
    assert study_staleness(study, site) == []
    table = study / "governing.csv"
    table.write_text(table.read_text(encoding="utf-8").replace("WARNING", "WARNING "), encoding="utf-8")
    table.write_bytes(table.read_bytes() + b"\n")
    assert study_staleness(study, site) == [
        "governing.csv is not the one the study wrote (edited, or the run was interrupted)"]
    (study / "study.json").unlink()
    assert "no readable study.json" in study_staleness(study, site)[0]
