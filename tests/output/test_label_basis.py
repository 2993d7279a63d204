"""Labels printed on a percentile of an uncertainty run (issue 16: ``labels print --basis p95``)."""

from __future__ import annotations

import json
import sqlite3

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner

from arcflash.cli import main
from arcflash.models import nfpa70e
from arcflash.output.label_basis import BasisError, governing_on_basis
from tests.conftest import demo_copy


def _table(plain, p95, boundary=1000.0, boundary_p95=1200.0):
    return pd.DataFrame({"incident_energy_governing_cal_cm2": plain, "arc_flash_boundary_governing_mm": boundary,
                         "incident_energy_p95_cal_cm2": p95, "arc_flash_boundary_p95_mm": boundary_p95,
                         "incident_energy_max_cal_cm2": p95, "arc_flash_boundary_max_mm": boundary_p95,
                         "ppe_category": nfpa70e.ppe_category(plain), "minimum_arc_rating_cal_cm2": plain},
                        index=pd.Index([f"B{k}" for k in range(len(plain))], name="bus"))


def test_a_basis_never_prints_below_the_study_and_its_category_follows():
    table = governing_on_basis(_table([3.9, 9.0, 39.0], [4.3, 7.0, 41.0]), "p95", samples=1000)
    # the higher of study and P95, bus by bus; NFPA 70E categories of the value printed (our rule: a basis
    # never lowers a label)
    assert table["incident_energy_governing_cal_cm2"].tolist() == [4.3, 9.0, 41.0]
    assert table["ppe_category"].tolist() == [2, 3, -1]  # 4.3 > 4 (category 1's rating); 41 > 40: none
    assert table["minimum_arc_rating_cal_cm2"].tolist() == [4.3, 9.0, 41.0]
    assert (table["arc_flash_boundary_governing_mm"] == 1200.0).all()
    assert table["energy_basis"].iloc[0] == "energy and boundary: the higher of the study and the P95 of 1,000 samples"


def test_a_basis_needs_an_uncertainty_run():
    plain = _table([3.9], [4.3]).drop(columns=["incident_energy_p95_cal_cm2", "arc_flash_boundary_p95_mm"])
    with pytest.raises(BasisError, match="--basis p95 needs a study run with --uncertainty N"):
        governing_on_basis(plain, "p95")
    assert governing_on_basis(plain, "study") is plain


def test_labels_printed_on_p95_state_it_and_the_ledger_keeps_it(tmp_path):
    from pypdf import PdfReader

    site = demo_copy(tmp_path)
    runner = CliRunner()
    study = runner.invoke(main, ["study", str(site), "--out", str(tmp_path / "study"), "--no-report", "--quiet",
                                 "--uncertainty", "6", "--seed", "3"])
    assert study.exit_code == 0, study.output
    result = runner.invoke(main, ["labels", "print", str(site), "--out", str(tmp_path / "labels"), "--bus", "SWG-A",
                                  "--study", str(tmp_path / "study"), "--basis", "p95"])
    assert result.exit_code == 0, result.output
    governing = pd.read_csv(tmp_path / "study" / "governing.csv", index_col=0)
    printed = float(result.output.split("SWG-A")[1].split()[1])  # "SWG-A  WARNING  2.4 cal/cm2 at ..."
    raised = max(governing.loc["SWG-A", "incident_energy_governing_cal_cm2"],
                 governing.loc["SWG-A", "incident_energy_p95_cal_cm2"])
    assert printed == np.ceil(round(raised * 10, 9)) / 10  # rounded up to 0.1 cal/cm2, as every label
    pdf = next((tmp_path / "labels" / "labels").glob("SWG-A-*.pdf"))
    text = " ".join(PdfReader(pdf).pages[0].extract_text().split())
    assert "energy and boundary: the higher of the study and the P95 of 6 samples" in text
    with sqlite3.connect(site / "label-ledger.sqlite") as ledger:
        content = json.loads(ledger.execute("SELECT content FROM issued ORDER BY id DESC LIMIT 1").fetchone()[0])
    assert content["energy_basis"] == "energy and boundary: the higher of the study and the P95 of 6 samples"


def test_a_basis_without_an_uncertainty_study_is_refused(tmp_path):
    site = demo_copy(tmp_path)
    runner = CliRunner()
    alone = runner.invoke(main, ["labels", "print", str(site), "--out", str(tmp_path / "l"), "--basis", "p95"])
    assert alone.exit_code == 2 and "--basis p95 needs --study DIR" in alone.output
    study = runner.invoke(main, ["study", str(site), "--out", str(tmp_path / "study"), "--no-report", "--quiet"])
    assert study.exit_code == 0, study.output
    plain = runner.invoke(main, ["labels", "print", str(site), "--out", str(tmp_path / "l"), "--basis", "max",
                                 "--study", str(tmp_path / "study")])
    assert plain.exit_code == 2 and "needs a study run with --uncertainty N" in plain.output
    assert not (tmp_path / "l").exists()
