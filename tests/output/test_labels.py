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
                     "Equipment SWG-A", "Arc cleared: ", "review by 2031-12-01"):
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
    # Common practice (shared/reference/nfpa70e.md): DANGER where the energy is above 40 cal/cm2.
    site, governing = study
    content = label_content(site, "TC-SEC", governing.loc["TC-SEC"])
    assert governing.loc["TC-SEC", "incident_energy_governing_cal_cm2"] > 40
    assert content.signal_word == "DANGER" and "No PPE category applies" in content.hazard
    assert "de-energize" in content.hazard and "engineered plan" in content.hazard
    assert content.minimum_arc_rating == "not applicable"


def _with_energy(row, energy):
    from arcflash.models import nfpa70e

    changed = row.copy()
    changed["incident_energy_governing_cal_cm2"] = energy
    changed["ppe_category"] = int(nfpa70e.ppe_category(energy))
    changed["minimum_arc_rating_cal_cm2"] = float(nfpa70e.minimum_arc_rating_cal_cm2(energy))
    return changed


@pytest.mark.parametrize("energy, word, category_text", [
    (39.99, "WARNING", "PPE category 4"), (40.0, "WARNING", "PPE category 4"),
    (40.01, "DANGER", "no PPE category applies"),
])
def test_danger_edge_is_the_category_edge(study, energy, word, category_text):
    # NFPA 70E Table 130.7(C)(15)(c): category 4 PPE is rated 40 cal/cm2, so exactly 40.0 is category 4 (WARNING)
    # and only above it does no category apply (DANGER) — the same edge as the study's ppe_category.
    site, governing = study
    row = _with_energy(governing.loc["SWG-A"], energy)
    content = label_content(site, "SWG-A", row, shows="category")
    assert content.signal_word == word
    assert category_text in content.energy_or_category
    energy_mode = label_content(site, "SWG-A", row, shows="energy")
    assert energy_mode.signal_word == word
    assert (energy_mode.minimum_arc_rating == "not applicable") == (word == "DANGER")


@pytest.mark.parametrize("energy, printed", [(3.94, "4.0"), (4.0, "4.0"), (0.51, "0.6"), (39.96, "40.0"),
                                             (12.3000001, "12.4")])
def test_printed_energy_is_rounded_up(study, energy, printed):
    # Common practice: a printed energy is never below the computed one (rounded up to 0.1 cal/cm2).
    site, governing = study
    content = label_content(site, "SWG-A", _with_energy(governing.loc["SWG-A"], energy), shows="energy")
    assert content.energy_or_category.startswith(f"{printed} cal/cm2 at ")


@pytest.mark.parametrize("mm, printed", [(914.4, "915 mm / 3 ft 0 in"), (914.5, "915 mm / 3 ft 1 in"),
                                         (1000.1, "1,001 mm / 3 ft 4 in"), (1200.0, "1,200 mm / 4 ft 0 in"),
                                         (1219.2, "1,220 mm / 4 ft 0 in")])
def test_printed_boundary_is_rounded_up_in_both_units(study, mm, printed):
    # Common practice: a printed boundary is never shorter than the computed one, in millimetres and in
    # feet-inches, both from the one value (25.4 mm/in exactly; 914.4 mm is 3 ft exactly).
    site, governing = study
    row = governing.loc["SWG-A"].copy()
    row["arc_flash_boundary_governing_mm"] = mm
    assert label_content(site, "SWG-A", row).arc_flash_boundary == printed


def test_hash_is_stable_and_content_sensitive(study):
    site, governing = study
    row = governing.loc["SWG-A"]
    assert label_content(site, "SWG-A", row).content_hash == label_content(site, "SWG-A", row).content_hash
    changed = row.copy()
    changed["incident_energy_governing_cal_cm2"] += 0.5
    assert label_content(site, "SWG-A", changed).content_hash != label_content(site, "SWG-A", row).content_hash


@given(texts=st.lists(st.text(max_size=40), min_size=20, max_size=20))
def test_the_hashed_json_is_the_standard_librarys(study, texts):
    # the label's JSON is written field by field; it must stay the text json.dumps gives (sorted keys, not
    # ASCII-escaped), or every issued label's hash would change; a field added later (the energy basis) is
    # left out while empty, so a label printed before it existed keeps its hash
    import dataclasses
    import json

    site, governing = study
    content = label_content(site, "SWG-A", governing.loc["SWG-A"])
    content = dataclasses.replace(content, **dict(zip(content.__dataclass_fields__, texts)))
    fields = {k: v for k, v in content.as_dict().items() if k != "energy_basis" or v}
    assert content.content_json == json.dumps(fields, sort_keys=True, ensure_ascii=False)


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


def _ft_in_m(mm):
    # Independent rounding (common practice: never below the computed boundary): up to the whole mm and inch.
    import math

    inches = math.ceil(mm / 25.4 - 1e-9)
    return f"{math.ceil(mm - 1e-9):,} mm / {inches // 12} ft {inches % 12} in"


@pytest.mark.parametrize("shows", ["energy", "category"])
def test_printed_label_values_read_back_from_the_pdf(study, tmp_path, shows):
    # The values a worker reads, taken back from the PDF text of the printed labels for buses that cover the
    # cases: below 1.2 cal/cm2 (JB-C4), category 1 (MCC-C2), category 3 (SWG-C), DANGER at 13.8 kV (MV-MAIN) and
    # at 480 V (TC-SEC). Expected text is built here from the study row with the rules of NFPA 70E 130.5(H) and
    # Table 130.7(C)(15)(c) (category by the energy, never both; DANGER above 40 cal/cm2; values rounded up).
    import math

    site, governing = study
    for bus in ("JB-C4", "MCC-C2", "SWG-C", "MV-MAIN", "TC-SEC"):
        row = governing.loc[bus]
        path = tmp_path / f"{bus}-{shows}.pdf"
        write_labels_pdf([label_content(site, bus, row, shows=shows)], load_layout("label-4x6"), path)
        text = _text(path)
        energy = float(row["incident_energy_governing_cal_cm2"])
        danger = energy > 40.0
        assert ("DANGER" in text) == danger and ("WARNING" in text) == (not danger), bus
        volts = f"{row['nominal_kv'] * 1000:.0f} V" if row["nominal_kv"] < 1 else f"{row['nominal_kv']:g} kV"
        assert volts in text, bus
        assert _ft_in_m(float(row["arc_flash_boundary_governing_mm"])) in text, bus
        device = label_content(site, bus, row, shows=shows).governing_device
        named = row["device_governing"]  # the device ending the arc, in words
        assert device.startswith(f"{named} opens to end the arc" if named else "no protective device"), bus
        assert device in text, bus
        if danger:
            assert "No PPE category applies" in text and "PPE category 4" not in text
            # the energy and its working distance stay on a DANGER label
            printed = f"{math.ceil(energy * 10.0 - 1e-9) / 10.0:.1f} cal/cm2 at {_ft_in_m(float(row['working_distance_mm']))}"
            assert printed in text, bus
        elif shows == "energy":
            printed = f"{math.ceil(energy * 10.0 - 1e-9) / 10.0:.1f} cal/cm2 at {_ft_in_m(float(row['working_distance_mm']))}"
            assert printed in text, bus
            assert "PPE category" not in text, bus
        else:
            category = 0 if energy < 1.2 else next(c for c, limit in ((1, 4), (2, 8), (3, 25), (4, 40)) if energy <= limit)
            shown = "none needed (below 1.2 cal/cm2)" if category == 0 else f"PPE category {category}"
            assert shown in text, bus
            assert "Incident energy" not in text and "cal/cm2 at" not in text, bus
            # Never both: the category field holds the category alone, no energy beside it.
            assert label_content(site, bus, row, shows=shows).energy_or_category == shown, bus
