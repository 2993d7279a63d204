"""The model's self-check worksheet and its verification record (issue 14), and the status on every output.

Published values: tests/reference/ieee1584_2018_annex_d.csv (IEEE 1584-2018 Annex D.1 and D.2, each row with
its source and status; the arcing currents agree with ../shared/reference/ieee1584_2018_checks.csv).
Tolerances: half a unit in the last printed digit.
"""

from __future__ import annotations

import io
import json

import numpy as np
import pytest
from click.testing import CliRunner
from hypothesis import given
from hypothesis import strategies as st
from pypdf import PdfReader

from arcflash import verification
from arcflash.cli import main
from arcflash.models import ieee1584_tables as tables
from arcflash.models.ieee1584 import evaluate
from arcflash.models.ieee1584_steps import coefficient_rows, final_values, worked_steps
from arcflash.output.selfcheck import ANNEX_D_CASES, case_steps, worksheet_cases, worksheet_pdf_bytes, worksheet_text
from tests.conftest import demo_copy, load_reference, printed_tolerance

ALL_PASS = {table: "pass" for table in verification.TABLES_TO_VERIFY}
#: Reference quantities -> worksheet symbols.
SYMBOLS = {"iarc_600": "Iarc_600", "iarc_2700": "Iarc_2700", "iarc_14300": "Iarc_14300", "iarc": "Iarc",
           "enclosure_correction": "CF"}


def _demo_copy(folder):
    """The demo site and its device library, copied (records are written beside the site data)."""
    return demo_copy(folder)


def _annex_case(label):
    return next(case for case in ANNEX_D_CASES if label in case.title)


@pytest.mark.parametrize("row", load_reference("ieee1584_2018_annex_d.csv").to_dict("records"),
                         ids=lambda r: f"{r['clause_or_example'][:8]}-{r['quantity']}")
def test_the_worksheet_gives_the_annex_d_values(row):
    # IEEE 1584-2018 Annex D.1 / D.2 (source and status per row in the reference file)
    case = _annex_case(row["clause_or_example"].split()[1])
    assert (case.voltage_kv, case.bolted_ka, case.gap_mm, case.config) == (
        row["voltage_kv"], row["bolted_ka"], row["gap_mm"], row["config"])
    assert (case.height_mm, case.width_mm, case.depth_mm) == (row["height_mm"], row["width_mm"], row["depth_mm"])
    values = {step.symbol: step.value for step in case_steps(case)}
    assert values[SYMBOLS[row["quantity"]]] == pytest.approx(row["published_value"],
                                                            abs=printed_tolerance(row["digits"]))


def test_the_worksheet_prints_the_published_value_beside_the_computed_one():
    text = worksheet_text("status words")
    assert "IEEE 1584-2018 Annex D.1" in text and "12.979" in text and "28.793" in text
    # inputs of the worked examples that are not verified are marked so
    assert text.count("Inputs (from memory: not verified against the printed standard)") == 2
    assert "printed in Annex D" in text


@given(config=st.sampled_from(tables.CONFIGURATIONS), voltage_kv=st.floats(0.208, 15.0),
       bolted=st.floats(0.0, 1.0), gap=st.floats(0.0, 1.0), distance_mm=st.floats(305.0, 3000.0),
       time_s=st.floats(0.005, 2.0), longer=st.floats(1.0, 4.0), height_mm=st.floats(250.0, 1500.0),
       width_mm=st.floats(250.0, 1500.0), depth_mm=st.one_of(st.none(), st.floats(100.0, 1000.0)))
def test_the_worked_steps_end_where_the_study_model_does(config, voltage_kv, bolted, gap, distance_mm, time_s,
                                                         longer, height_mm, width_mm, depth_mm):
    # Two arrangements of the same equations and tables: the steps in the standard's order, and the study's
    # evaluation in logarithms and weights. Inside the model's range they agree to rounding.
    low = voltage_kv <= 0.6
    bolted_ka = (0.5 + bolted * 105.5) if low else (0.2 + bolted * 64.8)
    gap_mm = (6.35 + gap * 69.85) if low else (19.05 + gap * 234.95)
    width_mm = max(width_mm, 4.0 * gap_mm + 1.0)
    model = evaluate(voltage_kv, bolted_ka, gap_mm, distance_mm, time_s, time_s * longer, config, height_mm,
                     width_mm, np.nan if depth_mm is None else depth_mm)
    steps = final_values(worked_steps(voltage_kv, bolted_ka, gap_mm, distance_mm, time_s, time_s * longer, config,
                                      height_mm, width_mm, depth_mm))
    for name, value in steps.items():
        assert value == pytest.approx(float(getattr(model, name)), rel=1e-9), name


def test_every_coefficient_row_is_on_the_worksheet():
    used = {(row.table, row.row) for case in worksheet_cases()
            for row in coefficient_rows(case.config, case.voltage_kv)}
    for config in tables.CONFIGURATIONS:
        for level in tables.INTERMEDIATE_VOLTAGES_V:
            assert ("Table 1", f"{config}, {level} V") in used
        assert ("Table 2", config) in used
        for table, level in (("Table 3", 600), ("Table 4", 2700), ("Table 5", 14300)):
            assert (table, f"{config}, {level} V") in used
    for config in tables.ENCLOSED_CONFIGURATIONS:
        assert ("Table 7", config) in used and ("Table 8", f"{config}, shallow") in used


def test_a_recorded_verification_is_the_status_until_a_table_changes(tmp_path, monkeypatch):
    path = verification.site_record_path(tmp_path)
    assert not verification.status(tmp_path).verified
    assert "not yet verified" in verification.status(tmp_path).words
    verification.record(path, "A. Engineer", ALL_PASS, "2026-11-30")
    state = verification.status(tmp_path)
    assert state.verified and state.words == ("Model tables verified against the printed standard "
                                              "(IEEE Std 1584-2018) by A. Engineer on 2026-11-30")
    changed = dict(tables.ENERGY_COEFFICIENTS_2700V)
    changed["VCB"] = (2.40022,) + changed["VCB"][1:]  # one digit of one coefficient
    monkeypatch.setattr(tables, "ENERGY_COEFFICIENTS_2700V", changed)
    voided = verification.status(tmp_path)
    assert not voided.verified and "Table 4 changed since" in voided.words and "DRAFT" in voided.words


def test_a_failed_table_leaves_the_results_a_draft(tmp_path):
    verification.record(verification.site_record_path(tmp_path), "A. Engineer", {**ALL_PASS, "Table 5": "fail"})
    state = verification.status(tmp_path)
    assert not state.verified and "FAILED" in state.words and "Table 5" in state.words


def test_the_record_keeps_its_history(tmp_path):
    path = verification.site_record_path(tmp_path)
    verification.record(path, "First", {**ALL_PASS, "Table 4": "fail"}, "2026-11-01")
    verification.record(path, "Second", ALL_PASS, "2026-11-20")
    recordings = json.loads(path.read_text(encoding="utf-8"))["recordings"]
    assert [r["verified_by"] for r in recordings] == ["First", "Second"]
    assert verification.status(tmp_path).verified


def test_a_record_names_every_problem_at_once(tmp_path):
    with pytest.raises(verification.VerificationError) as caught:
        verification.record(tmp_path / "r.json", " ", {"Table 1": "ok", "Table 99": "pass"}, "30/11/2026")
    message = str(caught.value)
    for words in ("name of who verified is empty", "unknown table Table 99", "no result for Table 2",
                  "Table 1=ok: expected pass or fail", "expected YYYY-MM-DD"):
        assert words in message
    assert not (tmp_path / "r.json").exists()


def test_an_unreadable_record_is_a_draft_not_a_crash(tmp_path):
    verification.site_record_path(tmp_path).write_text("{not json", encoding="utf-8")
    state = verification.status(tmp_path)
    assert not state.verified and "cannot be read" in state.words


def test_the_user_level_record_applies_without_one_beside_the_site(tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path / "config"))
    verification.record(verification.user_record_path(), "B. Reviewer", ALL_PASS, "2026-10-01")
    assert verification.status(tmp_path / "site").verified
    assert verification.status(None).verified


def test_selfcheck_commands(tmp_path):
    runner = CliRunner()
    shown = runner.invoke(main, ["selfcheck", "--pdf", str(tmp_path / "check.pdf")])
    assert shown.exit_code == 0, shown.output
    assert "Annex D.2" in shown.output and "Table 1 [VCB, 600 V]" in shown.output
    pdf_text = " ".join(page.extract_text() for page in PdfReader(tmp_path / "check.pdf").pages)
    assert "Annex D.1" in pdf_text and "not yet verified" in pdf_text
    site = _demo_copy(tmp_path)
    arguments = ["selfcheck", "record", str(site), "--by", "C. Checker", "--on", "2026-12-01"]
    refused = runner.invoke(main, arguments + ["--result", "Table 1=pass"])
    assert refused.exit_code == 2 and "no result for Table 2" in refused.output
    malformed = runner.invoke(main, arguments + ["--result", "Table 1"])
    assert malformed.exit_code == 2 and "expected TABLE=pass or TABLE=fail" in malformed.output
    recorded = runner.invoke(main, arguments + [x for t in ALL_PASS for x in ("--result", f"{t}=pass")])
    assert recorded.exit_code == 0, recorded.output
    assert "verified against the printed standard" in recorded.output
    status = runner.invoke(main, ["selfcheck", "status", str(site)])
    assert "by C. Checker on 2026-12-01" in status.output


def test_every_ppe_output_carries_the_status(tmp_path):
    # draft first: labels, report pages, results and the command's text; then verified, no watermark
    runner = CliRunner()
    site = _demo_copy(tmp_path)
    study = runner.invoke(main, ["study", str(site), "--out", str(tmp_path / "draft"), "--quiet"])
    assert study.exit_code == 0 and "not yet verified" in study.output
    pages = PdfReader(tmp_path / "draft" / "report.pdf").pages
    assert all("Model tables not yet verified against the printed standard - DRAFT" in p.extract_text()
               for p in pages)
    assert all(f"page {n} of {len(pages)}" in p.extract_text() for n, p in enumerate(pages, start=1))
    printed = runner.invoke(main, ["labels", "print", str(site), "--out", str(tmp_path / "labels"),
                                   "--bus", "SWG-A"])
    assert printed.exit_code == 0, printed.output
    label = next((tmp_path / "labels" / "labels").glob("SWG-A-*.pdf"))
    assert "DRAFT: model tables not verified" in " ".join(PdfReader(label).pages[0].extract_text().split())
    sheet = runner.invoke(main, ["briefing", str(site), "SWG-A", "--out", str(tmp_path / "brief.pdf")])
    assert sheet.exit_code == 0 and "not yet verified" in sheet.output
    brief = " ".join(" ".join(p.extract_text().split()) for p in PdfReader(tmp_path / "brief.pdf").pages)
    assert "LIMITS OF USE" in brief and "Model tables not yet verified against the printed standard" in brief
    verification.record(verification.site_record_path(site), "C. Checker", ALL_PASS, "2026-12-01")
    runner.invoke(main, ["study", str(site), "--out", str(tmp_path / "signed"), "--quiet"])
    record = json.loads((tmp_path / "signed" / "study.json").read_text(encoding="utf-8"))
    assert record["model_verification"]["verified"] is True
    first = PdfReader(tmp_path / "signed" / "report.pdf").pages[0].extract_text()
    assert "verified against the printed standard (IEEE Std 1584-2018) by C. Checker on 2026-12-01" in first
    assert "DRAFT" not in first
    quick = runner.invoke(main, ["equipment", "--voltage-kv", "0.48", "--bolted-ka", "20", "--clearing-time-s",
                                 "0.1", "--reduced-clearing-time-s", "0.1", "--class", "switchgear-lv"])
    assert "not yet verified" in quick.output  # no site: the (empty) user-level record applies


def test_the_worksheet_pdf_has_a_page_per_case_or_more():
    data = worksheet_pdf_bytes("status words", ANNEX_D_CASES)
    reader = PdfReader(io.BytesIO(data))
    text = " ".join(page.extract_text() for page in reader.pages)
    assert "E_le600" in text and "AFB_14300" in text and "status words" in text
