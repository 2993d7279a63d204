"""The mitigate command, through click's CliRunner."""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest
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
    assert "  best: LVM-C-TU: zone-selective interlocking (short-time delay 0.05 s for an arc in its zone" in text
    assert "LVM-C-TU: short-time delay 0.3 -> 0.1 s [setting]: 6.51 cal/cm2, category 2; selectivity and starting " \
        "kept" in text
    assert "SWG-A: 26.3 cal/cm2 now; ended by LVM-A, LVM-B" in text
    assert "every change that reaches the target costs selectivity (LVM-A with FDR-A1" in text
    assert "only adding one, hardware, could lower it" in text  # MV-MAIN: no device upstream
    assert "qualified persons" in text and "licensed professional engineer" in text  # the cautions
    candidates = pd.read_csv(out / "mitigation.csv")
    buses = pd.read_csv(out / "mitigation_buses.csv")
    assert set(buses["bus"]) == set(candidates["bus"]) | {"MV-MAIN", "GEN-SWBD", "GH-SVC", "GH-MAIN", "TC-SEC"}
    assert {"selectivity_lost", "starting_or_inrush", "incident_energy_cal_cm2", "kind"} <= set(candidates.columns)
    # the PDF: the table of buses, then the best change's time-current plots before and after (its text)
    from pypdf import PdfReader

    pages = [page.extract_text() for page in PdfReader(out / "mitigation.pdf").pages]
    assert "Target 8 cal/cm2" in pages[0] and "qualified persons" in pages[0]
    assert "best: LVM-C-TU: zone-selective interlocking" in pages[0].replace("\n", " ")
    before = next(p for p in pages if "SWG-C, before" in p)
    after = next(p for p in pages if "SWG-C, after: LVM-C-TU: zone-selective interlocking" in p)
    assert "Incident energy 15.6 cal/cm2" in before and "Incident energy 4.24 cal/cm2" in after
    assert "clearing time [s]" in after and "LVM-C-TU (0.48 kV), its zone settings in force" in after
    # the feeders just downstream of the changed main are drawn too, before and after (selectivity)
    assert all(f"{feeder} (0.48 kV)" in page for feeder in ("FDR-C1", "FDR-C2") for page in (before, after))


def test_mitigate_refuses_a_target_that_is_not_a_positive_energy():
    result = CliRunner().invoke(main, ["mitigate", str(DEMO), "--target", "0"])
    assert result.exit_code == 2 and "--target" in result.output
    result = CliRunner().invoke(main, ["mitigate", str(DEMO)])
    assert result.exit_code == 2 and "--target" in result.output


def _tree_bytes(folder):
    return {p.relative_to(folder): p.read_bytes() for p in sorted(Path(folder).rglob("*")) if p.is_file()}


def test_applying_a_candidate_writes_a_revision_whose_study_gives_the_energy_reported(tmp_path):
    # issue 17: "applying a proposed candidate and re-running the study reproduces the energy the finder
    # reported"; the site folder itself is never changed, and the revision differs from it only in the
    # changed device's settings (and the library path, made to point at the same file from the new folder)
    import shutil

    import arcflash

    site_dir = tmp_path / "sites" / "demo"
    shutil.copytree(DEMO, site_dir)
    shutil.copytree(DEMO.parent / "libraries", tmp_path / "sites" / "libraries")
    before = _tree_bytes(site_dir)
    out = tmp_path / "m"
    result = CliRunner().invoke(main, ["mitigate", str(site_dir), "--target", "8", "--out", str(out)])
    assert result.exit_code == 0, result.output
    table = pd.read_csv(out / "mitigation.csv")
    best = table[(table["bus"] == "SWG-C")].iloc[0]
    revision = tmp_path / "revision"
    result = CliRunner().invoke(main, ["mitigate", str(site_dir), "--target", "8", "--apply", str(best["candidate"]),
                                       "--to", str(revision)])
    assert result.exit_code == 0, result.output
    assert f"Revision with candidate {best['candidate']} written to" in result.output
    assert _tree_bytes(site_dir) == before
    note = (revision / "REVISION.md").read_text(encoding="utf-8")
    assert best["change"] in note and "qualified persons" in note
    again = arcflash.run_study(arcflash.load_site(revision)).governing
    assert again.loc["SWG-C", "incident_energy_governing_cal_cm2"] == pytest.approx(best["incident_energy_cal_cm2"],
                                                                                    rel=1e-6)  # the CSV's 6 digits
    changed = {p for p, data in _tree_bytes(revision).items() if before.get(p) != data}
    assert changed == {Path("devices.yaml"), Path("facility.yaml"), Path("REVISION.md")}


def test_apply_refuses_an_existing_folder_a_missing_partner_and_an_unknown_number(tmp_path):
    existing = tmp_path / "there"
    existing.mkdir()
    result = CliRunner().invoke(main, ["mitigate", str(DEMO), "--target", "8", "--apply", "0", "--to", str(existing)])
    assert result.exit_code == 2 and "already exists" in result.output
    result = CliRunner().invoke(main, ["mitigate", str(DEMO), "--target", "8", "--apply", "0"])
    assert result.exit_code == 2 and "--apply and --to go together" in result.output
    result = CliRunner().invoke(main, ["mitigate", str(DEMO), "--target", "8", "--apply", "99999", "--to",
                                       str(tmp_path / "new")])
    assert result.exit_code == 2 and "no candidate has that number" in result.output
    assert not (tmp_path / "new").exists()


def test_applying_a_smaller_fuse_rewrites_the_device_curve_in_the_revision(tmp_path):
    # a hardware candidate (demo: the 65E fuse in place of F-TC's 100E, from the device library): the
    # revision's devices.yaml names the new curve in F-TC's item, every other line as it was
    import shutil

    import arcflash
    from arcflash.study.mitigation import mitigate

    site_dir = tmp_path / "sites" / "demo"
    shutil.copytree(DEMO, site_dir)
    shutil.copytree(DEMO.parent / "libraries", tmp_path / "sites" / "libraries")
    found = mitigate(arcflash.load_site(site_dir), 8.0)
    number = next(j for j, c in enumerate(found.proposals) if c.key == ("curve", "FUSE-65E-15KV"))
    revision = tmp_path / "revision"
    result = CliRunner().invoke(main, ["mitigate", str(site_dir), "--target", "8", "--apply", str(number),
                                       "--to", str(revision)])
    assert result.exit_code == 0, result.output
    old = (site_dir / "devices.yaml").read_text(encoding="utf-8").splitlines()
    new = (revision / "devices.yaml").read_text(encoding="utf-8").splitlines()
    changed = [(a, b) for a, b in zip(old, new) if a != b]
    assert len(old) == len(new) and changed == [
        ("- {id: F-TC, branch: T-C, at_bus: SS-C-PRI, kind: fuse, curve: FUSE-100E-15KV}",
         "- {id: F-TC, branch: T-C, at_bus: SS-C-PRI, kind: fuse, curve: FUSE-65E-15KV}")]
    assert arcflash.load_site(revision).devices["F-TC"].curve == "FUSE-65E-15KV"
