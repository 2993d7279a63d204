"""Label content (NFPA 70E 130.5(H)) and label PDFs for every shipped layout."""

from __future__ import annotations

from pathlib import Path

import pytest
from hypothesis import given
from hypothesis import strategies as st
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


def _render_png(pdf, tmp_path):
    import shutil as _shutil
    import subprocess

    if _shutil.which("pdftoppm") is None:
        pytest.skip("pdftoppm (Debian package poppler-utils) is not installed; .ci/run installs it")
    stem = tmp_path / "page"
    subprocess.run(["pdftoppm", "-r", "50", "-png", "-f", "1", "-l", "1", str(pdf), str(stem)], check=True)
    return next(tmp_path.glob("page*.png"))


@pytest.mark.parametrize("name", ["label-4x6", "label-4x4", "label-100x150", "sheet-letter-2x2", "sheet-a4-2x2"])
def test_rendered_layout_has_signal_colour(study, tmp_path, name):
    import matplotlib.image as mpimg
    import numpy as np

    site, governing = study
    layout = load_layout(name)
    for bus, colour in (("SWG-A", (0xFF, 0x79, 0x00)), ("TC-SEC", (0xC8, 0x10, 0x2E))):
        folder = tmp_path / bus
        folder.mkdir()
        pdf = folder / "label.pdf"
        write_labels_pdf([label_content(site, bus, governing.loc[bus])], layout, pdf)
        image = mpimg.imread(_render_png(pdf, folder))
        rgb = (image[..., :3] * 255).round().astype(int)
        # Pages rendered at 50 dpi: the page size in pixels follows the layout's size in points.
        assert rgb.shape[1] == pytest.approx(layout.page_width / 72 * 50, abs=1.5)
        assert rgb.shape[0] == pytest.approx(layout.page_height / 72 * 50, abs=1.5)
        # The signal-word panel's colour (ANSI Z535.4 panel: WARNING orange, DANGER red) is present.
        close = (np.abs(rgb - np.array(colour)).sum(axis=-1) < 40).mean()
        assert close > 0.01, (bus, close)


@given(energy=st.floats(0.05, 120.0), distance=st.floats(305.0, 1500.0))
def test_content_hash_stable_for_unchanged_input(study, energy, distance):
    site, governing = study
    row = governing.loc["SWG-A"].copy()
    row["incident_energy_governing_cal_cm2"] = energy
    row["working_distance_mm"] = distance
    first = label_content(site, "SWG-A", row).content_hash
    assert all(label_content(site, "SWG-A", row.copy()).content_hash == first for _ in range(3))
