"""Label content (NFPA 70E 130.5(H)) and label PDFs for every shipped layout."""

from __future__ import annotations

from pathlib import Path

import pytest
from pypdf import PdfReader

import arcflash
from arcflash.output.label_pdf import write_labels_pdf
from arcflash.output.labels import label_content, layout_names, load_layout
from arcflash.study.pipeline import run_study

DEMO = Path(__file__).resolve().parents[2] / "site_data" / "fenwick_ridge"


@pytest.fixture(scope="module")
def study():
    site = arcflash.load_site(DEMO)
    return site, run_study(site).governing


def _text(path):
    return " ".join(" ".join(page.extract_text() for page in PdfReader(path).pages).split())


def test_content_fields_per_130_5_h(study, tmp_path):
    # NFPA 70E 130.5(H): nominal voltage, arc-flash boundary, incident energy with working distance or the
    # PPE category, minimum arc rating; plus shock boundaries, equipment, device, study and review dates.
    site, governing = study
    content = label_content(site, "SWG-A", governing.loc["SWG-A"])
    path = tmp_path / "label.pdf"
    write_labels_pdf([content], load_layout("label-4x6"), path)
    text = _text(path)
    for expected in ("480 V", "Arc-flash boundary", content.arc_flash_boundary, "Incident energy at working distance",
                     content.energy_or_category, "Minimum arc rating", content.minimum_arc_rating,
                     "Limited approach", "3 ft 6 in (1.0 m)", "Restricted approach", "1 ft 0 in (0.3 m)",
                     "Equipment SWG-A", "Protective device", "review by 2031-12-01"):
        assert expected in text, expected
    assert "cal/cm2" in content.energy_or_category and " ft " in content.arc_flash_boundary


@pytest.mark.parametrize("shows", ["energy", "category"])
def test_never_both_energy_and_category(study, tmp_path, shows):
    site, governing = study
    content = label_content(site, "MCC-B1", governing.loc["MCC-B1"], shows=shows)
    path = tmp_path / f"{shows}.pdf"
    write_labels_pdf([content], load_layout("label-4x4"), path)
    text = _text(path)
    assert ("PPE category" in text) == (shows == "category")
    assert ("Incident energy" in text) == (shows == "energy")


def test_danger_above_40_cal(study):
    # Common practice (shared/reference/nfpa70e.md): DANGER where the energy is 40 cal/cm2 or more.
    site, governing = study
    content = label_content(site, "TC-SEC", governing.loc["TC-SEC"])
    assert governing.loc["TC-SEC", "incident_energy_governing_cal_cm2"] > 40
    assert content.signal_word == "DANGER" and "NOT PERMITTED" in content.hazard
    assert content.minimum_arc_rating == "not applicable"


def test_hash_is_stable_and_content_sensitive(study):
    site, governing = study
    row = governing.loc["SWG-A"]
    assert label_content(site, "SWG-A", row).content_hash == label_content(site, "SWG-A", row).content_hash
    changed = row.copy()
    changed["incident_energy_governing_cal_cm2"] += 0.5
    assert label_content(site, "SWG-A", changed).content_hash != label_content(site, "SWG-A", row).content_hash


@pytest.mark.parametrize("name, size_pt", [
    ("label-4x6", (288, 432)), ("label-4x4", (288, 288)), ("label-100x150", (283.46, 425.2)),
    ("sheet-letter-2x2", (612, 792)), ("sheet-a4-2x2", (595.28, 841.89)),
])
def test_layout_page_sizes(study, tmp_path, name, size_pt):
    site, governing = study
    assert name in layout_names()
    contents = [label_content(site, bus, governing.loc[bus]) for bus in ("SWG-A", "MCC-A2", "PNL-B2", "TC-SEC", "JB-C4")]
    layout = load_layout(name)
    path = tmp_path / f"{name}.pdf"
    write_labels_pdf(contents, layout, path)
    page = PdfReader(path).pages[0]
    assert float(page.mediabox.width) == pytest.approx(size_pt[0], abs=0.05)
    assert float(page.mediabox.height) == pytest.approx(size_pt[1], abs=0.05)
    per_page = layout.across * layout.down
    assert len(PdfReader(path).pages) == -(-len(contents) // per_page)
