"""The study report, results.xlsx and the CSV files of the demo facility, read back as a reviewer reads them.

Extracted-text checks of every report section (issue 14); the values printed are the study's own (their
validation is elsewhere, docs/validation.md), so these check what the report says and how, not the physics.
"""

from __future__ import annotations

import io
import zipfile

import pandas as pd
import pytest
from openpyxl import load_workbook
from pypdf import PdfReader

import arcflash
from arcflash.output.report_tables import device_settings_words, ppe_words
from arcflash.output.results import write_results
from arcflash.study.pipeline import run_study
from tests.output.test_label_fields import DEMO


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    site = arcflash.load_site(DEMO)
    results = run_study(site)
    out = tmp_path_factory.mktemp("study")
    write_results(site, results, out, tcc_buses=[])
    pages = [" ".join(page.extract_text().split()) for page in PdfReader(out / "report.pdf").pages]
    return site, results, out, pages


def _section(pages, heading, until):
    text = " ".join(pages)
    start = text.index(heading)
    return text[start:text.index(until, start + len(heading))]


def test_cover(written):
    site, _, _, pages = written
    cover = pages[0]
    for words in (site.facility.name, "study revision", site.facility.study_revision, site.facility.study_date,
                  "Prepared by", "Reviewed by", "Approved by", "Verification of the model",
                  "Model tables not yet verified against the printed standard - DRAFT", "Limits of the results",
                  "qualified persons"):
        assert words in cover, words


def test_scope_and_method(written):
    _, _, _, pages = written
    scope = _section(pages, "Scope and method", "Input tables")
    for words in ("IEEE Std 1584-2018", "NFPA 70E, 2021 edition", "IEEE C37.112", "NEC (NFPA 70) Chapter 9 Table 9",
                  "What was modelled", "What was not modelled", "Protection of the utility upstream of the service",
                  "Arc-duration cap: 2 s", "stage by stage", "Conservative choices", "slower (maximum) edge"):
        assert words in scope, words


def test_input_tables(written):
    site, _, _, pages = written
    inputs = _section(pages, "Input tables", "Results: the governing case")
    # sources with the scenarios at each level
    assert "utility UTIL-1" in inputs and "18 kA, X/R 15" in inputs and "utility-min" in inputs
    # T-C's %Z derived from its test readings, shown with them (not 'test 632 V')
    t_c = site.transformers["T-C"]
    assert (f"{t_c.z_percent_used:.3g} % derived from a short-circuit test: 632 V applied to the primary, "
            "50 A measured") in inputs
    assert "5.75 % (stated, nameplate)" in inputs
    # devices in words and amperes, maintenance settings in words (never a dict)
    assert "{" not in inputs and "instantaneous_pickup" not in inputs
    assert "long-time pickup 1 x = 1,600 A" in inputs
    maintained = next(d for d in site.devices.values() if d.maintenance)
    assert "Energy-reducing maintenance setting: " in device_settings_words(maintained)
    assert "Energy-reducing maintenance setting" in inputs
    for words in ("Cables and other impedances", "500 kcmil copper, steel conduit", "NEC Chapter 9 Table 9",
                  "Motors", "Equipment", "switchgear-lv", "610 mm / 2 ft 0 in", "508 x 508 x 508 mm",
                  "Scenarios", "maintenance-a"):
        assert words in inputs, words
    for section in ("motors", "devices", "buses", "scenarios"):
        for ident in getattr(site, section):
            assert ident in inputs, ident


def test_results_tables(written):
    site, results, _, pages = written
    governing = _section(pages, "Results: the governing case", "Results: every scenario")
    # energy with its working distance, boundaries in both units, PPE in words, the governing scenario
    assert "cal/cm2 at 610 mm / 2 ft 0 in" in governing and "cal/cm2 at 915 mm / 3 ft 0 in" in governing
    assert "none applies (above 40 cal/cm2)" in governing and "category 2" in governing
    assert " mm / " in governing and " ft " in governing
    assert "tie-closed / " in governing and "opens at" in governing
    assert "1,067 mm / 3 ft 6 in / 305 mm / 1 ft 0 in" in governing  # NFPA 70E Table 130.4(E)(a), 151-750 V
    every = _section(pages, "Results: every scenario and arcing case", "Study notes")
    assert every.count(" reduced ") >= len(results.rows) - 5
    for scenario in site.scenarios:
        assert scenario in every
    notes = _section(pages, "Study notes", "One-line diagram")
    assert "de-energised in the governing scenario" in notes and "Flags (governing rows)" in notes


def test_every_page_has_the_footer(written):
    site, _, _, pages = written
    for number, page in enumerate(pages, start=1):
        assert "Limits of use: results for qualified persons only" in page
        assert f"study rev {site.facility.study_revision}" in page and f"page {number} of {len(pages)}" in page
        assert "Model tables not yet verified" in page


def test_workbook(written):
    site, results, out, _ = written
    book = load_workbook(out / "results.xlsx")
    assert book.sheetnames == ["limits of use", "governing", "every case", "openings"]
    first = {row[0]: row[1] for row in book["limits of use"].iter_rows(values_only=True)}
    assert first["limits of use"].startswith("LIMITS OF USE") and "not yet verified" in first["model verification"]
    sheet = book["governing"]
    assert sheet.freeze_panes == "A2"
    heading = [c.value for c in sheet[1]]
    assert "incident energy governing [cal/cm2]" in heading and "working distance [mm]" in heading
    assert "PPE category" in heading and "ppe_category" not in heading
    energy = heading.index("incident energy governing [cal/cm2]")
    assert sheet.cell(row=2, column=energy + 1).number_format == "0.00"
    categories = {row[heading.index("PPE category")] for row in sheet.iter_rows(min_row=2, values_only=True)}
    assert categories <= {ppe_words(c) for c in (-2, -1, 0, 1, 2, 3, 4)} and "category 2" in categories
    every = pd.read_excel(out / "results.xlsx", sheet_name="every case")
    assert len(every) == len(results.rows) and set(every["energized"]) <= {"yes", "no"}
    # full precision kept in the cells (the format only rounds what is shown)
    assert every["bolted [kA]"].tolist() == pytest.approx(results.rows["bolted_ka"].tolist(), rel=1e-15)


def test_workbook_is_well_formed_xml(written):
    from xml.dom.minidom import parseString

    _, _, out, _ = written
    with zipfile.ZipFile(out / "results.xlsx") as archive:
        for name in archive.namelist():
            if name.endswith((".xml", ".rels")):
                parseString(archive.read(name))


def test_csv_keeps_precision_and_gains_ppe_words(written):
    _, results, out, _ = written
    rows = pd.read_csv(out / "results.csv")
    governing = pd.read_csv(out / "governing.csv", index_col="bus")
    assert rows["ppe_category_text"].tolist() == [ppe_words(c) for c in results.rows["ppe_category"]]
    assert governing.loc["SWG-A", "ppe_category_text"] == ppe_words(results.governing.loc["SWG-A", "ppe_category"])
    assert rows["incident_energy_cal_cm2"].tolist() == pytest.approx(
        results.rows["incident_energy_cal_cm2"].tolist(), rel=1e-9, nan_ok=True)  # 10 significant digits


def test_xlsx_text_that_xml_cannot_hold_is_replaced_not_lost(tmp_path):
    from arcflash.output.xlsx_lite import Column, Sheet, write_xlsx

    write_xlsx(tmp_path / "t.xlsx", [Sheet("s", [Column("a", ["x < y & z", "bell\x07", None]),
                                                 Column("b", [1.5, float("nan"), 3.0], "0.0")])])
    sheet = load_workbook(io.BytesIO((tmp_path / "t.xlsx").read_bytes()))["s"]
    assert [c.value for c in sheet["A"]] == ["a", "x < y & z", "bell\ufffd", None]
    assert [c.value for c in sheet["B"]] == ["b", 1.5, None, 3.0]
