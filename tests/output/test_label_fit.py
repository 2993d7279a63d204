"""Every layout: every label of the demo drawn in full, no string past its block, key values legible.

Checks are on the strings the drawing records (:class:`arcflash.output.label_pdf.Placed`): each string's
width (reportlab's font metrics) and baseline lie inside its block's box. Sizes: our stated minimums
(label_pdf.MIN_TEXT_PT; key values 10 pt on 4 x 6 in and 100 x 150 mm stock, issue 13).
"""

from __future__ import annotations

import dataclasses
import io
import unicodedata

import pytest
from click.testing import CliRunner
from hypothesis import given, settings
from hypothesis import strategies as st
from reportlab.pdfbase.pdfmetrics import stringWidth
from reportlab.pdfgen.canvas import Canvas

import arcflash
from arcflash.cli import main
from arcflash.output import label_pdf
from arcflash.output.labels import issue_labels, label_content, layout_names, load_layout
from arcflash.site.schema import PpeBand
from arcflash.study.pipeline import run_study
from tests.conftest import demo_copy
from tests.output.test_label_fields import DEMO

#: An everyday site PPE text of realistic length (invented wording).
SITE_PPE = ("Arc-rated shirt and trousers or coverall, arc-rated face shield and balaclava, hard hat, safety "
            "glasses, hearing protection, leather gloves over rubber insulating gloves, leather footwear")


@pytest.fixture(scope="module")
def demo_labels():
    site = arcflash.load_site(DEMO)
    governing = run_study(site).governing
    contents = [label_content(site, bus, governing.loc[bus]) for bus in governing.index]
    return contents + [dataclasses.replace(contents[0], site_ppe=SITE_PPE)]


def _draw(content, layout):
    width, height = label_pdf._cell(layout)
    return label_pdf.draw_label(Canvas(io.BytesIO()), content, 0.0, height, width, height, layout)


def _joined(placed, block):
    return " ".join(p.text for p in placed if p.block == block)


@pytest.mark.parametrize("name", layout_names())
def test_every_string_lies_inside_its_block(demo_labels, name):
    layout = load_layout(name)
    for content in demo_labels:
        try:
            placed = _draw(content, layout)
        except label_pdf.LabelFitError as exc:  # refused, never cut: only the long site PPE on 4 x 4 in
            assert name == "label-4x4" and content.site_ppe == SITE_PPE and "shorten site_ppe" in str(exc)
            continue
        for p in placed:
            x0, y0, x1, y1 = p.box
            assert x0 - 1e-6 <= p.x and p.x + stringWidth(p.text, p.font, p.size) <= x1 + 1e-6, (name, p)
            assert y0 - 1e-6 <= p.y - 0.25 * p.size and p.y + p.size <= y1 + 1e-6, (name, p)
            assert p.size >= label_pdf.MIN_TEXT_PT - 1e-9, (name, p)


@pytest.mark.parametrize("name", layout_names())
def test_the_full_hazard_statement_and_every_value_are_printed(demo_labels, name):
    layout = load_layout(name)
    for content in demo_labels[:-1]:
        placed = _draw(content, layout)
        assert _joined(placed, "hazard") == content.hazard, (name, content.equipment_id)
        data = _joined(placed, "data")
        for value in (content.nominal_voltage, content.arc_flash_boundary, content.energy_or_category,
                      content.minimum_arc_rating, content.restricted_approach):
            assert " ".join(value.split()) in data, (name, content.equipment_id, value)


def test_a_danger_label_shows_the_energy_and_working_distance(demo_labels):
    danger = [c for c in demo_labels[:-1] if c.signal_word == "DANGER" and "cal/cm2 at" in c.energy_or_category]
    assert danger  # the demo has buses above 40 cal/cm2 (MV-MAIN, TC-SEC)
    for name in layout_names():
        for content in danger:
            data = _joined(_draw(content, load_layout(name)), "data")
            assert "Incident energy at working distance" in data and "PPE category 4" not in data
            assert " ".join(content.energy_or_category.split()) in data


@pytest.mark.parametrize("name", ["label-4x6", "label-100x150"])
def test_key_values_are_at_least_10_pt_and_the_largest_below_the_panel(demo_labels, name):
    layout = load_layout(name)
    for content in demo_labels:
        placed = _draw(content, layout)
        keys = [p for p in placed if p.block == "data" and p.font.endswith("Bold")
                and p.field in ("nominal_voltage", "arc_flash_boundary", "energy_or_category")]
        assert keys and min(p.size for p in keys) >= 10.0
        others = [p for p in placed if p not in keys]
        assert min(p.size for p in keys) > max(p.size for p in others)


def _long_ppe_site(tmp_path):
    """The demo with a site PPE text too long for the 4 x 4 in label, and its governing table."""
    site = arcflash.load_site(DEMO)
    governing = run_study(site).governing
    text = "Arc-rated suit and hood rated 40 cal/cm2 minimum; " * 7
    band = PpeBand(up_to_cal_cm2=100.0, arc_rating_cal_cm2=100.0, text=text)
    site = dataclasses.replace(site, facility=site.facility.model_copy(update={"site_ppe": [band]}),
                               path=tmp_path / "site")
    return site, governing


def test_a_label_that_does_not_fit_is_refused_naming_bus_and_field(demo_labels, tmp_path):
    site, governing = _long_ppe_site(tmp_path)
    with pytest.raises(label_pdf.LabelFitError, match=r"label of SWG-A: .* shorten site_ppe"):
        issue_labels(site, governing, tmp_path / "out", buses=["SWG-A"], layout="label-4x4")
    assert not (tmp_path / "out" / "labels").exists()  # nothing printed, nothing recorded


def test_a_label_that_does_not_fit_late_in_a_run_leaves_no_file(tmp_path, monkeypatch):
    # labels are laid out, drawn and written batch by batch: one that does not fit in a later batch still
    # leaves nothing behind (the earlier batches' files are removed before they reach their names)
    from arcflash.output import labels

    site, governing = _long_ppe_site(tmp_path)
    fitting = [b for b in governing.index  # those without a site PPE line (above 40 cal/cm2, say)
               if not label_pdf.unfit_labels([label_content(site, b, governing.loc[b])], load_layout("label-4x4"))]
    assert len(fitting) >= 2 and "SWG-A" not in fitting
    monkeypatch.setattr(labels, "_BATCH", 1)
    with pytest.raises(label_pdf.LabelFitError, match=r"label of SWG-A: .* shorten site_ppe"):
        issue_labels(site, governing, tmp_path / "out", buses=fitting[:2] + ["SWG-A"], layout="label-4x4")
    assert not (tmp_path / "out").exists()


def test_leftover_temporary_files_are_removed_at_the_next_run(tmp_path):
    import os
    import time

    from arcflash.output.files import LEFTOVER_AGE_S, remove_leftovers

    folder = tmp_path / "labels"
    folder.mkdir()
    old = folder / ".SWG-A-1234abcd.x8f2k1.part.pdf"
    fresh = folder / ".SWG-B-5678abcd.q1w2e3.part.pdf"
    kept = folder / "SWG-A-1234abcd.pdf"
    for path in (old, fresh, kept):
        path.write_bytes(b"%PDF-1.4 partial")
    past = time.time() - LEFTOVER_AGE_S - 5
    os.utime(old, (past, past))
    os.utime(kept, (past, past))
    assert remove_leftovers(folder) == [old.name]  # a fresh one may be another run's, still being written
    assert not old.exists() and fresh.exists() and kept.exists()


def test_the_cli_refuses_a_label_that_does_not_fit(tmp_path):

    site = demo_copy(tmp_path)
    facility = site / "facility.yaml"
    long_text = "Arc-rated suit and hood rated 40 cal/cm2 minimum " * 7
    text = facility.read_text(encoding="utf-8")
    start = text.index("  site_ppe:")
    end = text.index("\n\n", start) if "\n\n" in text[start:] else len(text)
    band = f"  site_ppe:\n    - {{up_to_cal_cm2: 40, arc_rating_cal_cm2: 40, text: {long_text}}}\n"
    facility.write_text(text[:start] + band + text[end:].lstrip("\n"), encoding="utf-8")
    result = CliRunner().invoke(main, ["labels", "print", str(site), "--out", str(tmp_path / "out"),
                                       "--bus", "SWG-A", "--layout", "label-4x4"])
    assert result.exit_code == 2 and "label of SWG-A" in result.output and "shorten site_ppe" in result.output
    assert not (tmp_path / "out").exists()


@pytest.mark.parametrize("name", ["label-4x6", "label-4x4", "sheet-letter-2x2"])
def test_the_printed_qr_code_reads_back_as_its_payload(demo_labels, tmp_path, name):
    # Decoded by an independent reader (zbarimg, Debian package zbar-tools) from the page rendered at 300 dpi.
    import shutil
    import subprocess

    from arcflash.output.label_pdf import write_labels_pdf

    if shutil.which("pdftoppm") is None or shutil.which("zbarimg") is None:
        pytest.skip("pdftoppm (poppler-utils) and zbarimg (zbar-tools) are needed; .ci/run installs them")
    content = demo_labels[0]
    pdf = tmp_path / "label.pdf"
    write_labels_pdf([content], load_layout(name), pdf)
    subprocess.run(["pdftoppm", "-r", "300", "-png", "-f", "1", "-l", "1", str(pdf), str(tmp_path / "page")],
                   check=True)
    png = next(tmp_path.glob("page*.png"))
    read = subprocess.run(["zbarimg", "--raw", "-q", str(png)], capture_output=True, text=True)
    assert read.stdout.strip() == content.qr_payload


@pytest.mark.parametrize("text", ["Gloves (class 0) \\ face shield, caf\u00e9 rated 8 cal/cm\u00b2",
                                  "\u03a9-rated suit \u2265 40 cal/cm2"])
def test_label_text_reads_back_whatever_its_characters(demo_labels, text):
    # cp1252 text is written by the small PDF writer (escaped); other text falls back to reportlab's canvas
    from pypdf import PdfReader

    from arcflash.output.label_pdf import labels_pdf_bytes

    content = dataclasses.replace(demo_labels[1], site_ppe=text)
    data = labels_pdf_bytes([content], load_layout("label-4x6"))
    extracted = " ".join(PdfReader(io.BytesIO(data)).pages[0].extract_text().split())
    # NFKC: a reader may give the ohm sign U+2126 for the font's Omega glyph
    assert unicodedata.normalize("NFKC", text) in unicodedata.normalize("NFKC", extracted)


@settings(max_examples=200, deadline=None)
@given(text=st.text(alphabet=st.sampled_from(list("abcdefgh WXYZ12/().,-\n\u00e9")), max_size=120),
       font=st.sampled_from(["Helvetica", "Helvetica-Bold"]), size=st.floats(6.0, 20.0),
       width=st.floats(0.0, 300.0))
def test_label_wrapping_breaks_lines_as_reportlab_does(text, font, size, width):
    # the wrapping with remembered word widths gives reportlab's own simpleSplit lines, exactly
    from reportlab.lib.utils import simpleSplit

    assert label_pdf._wrap(text, font, size, width) == simpleSplit(text, font, size, width)


@pytest.mark.parametrize("name", ["label-4x6", "sheet-letter-2x2"])
def test_labels_drawn_from_templates_equal_labels_drawn_in_full(demo_labels, name):
    # Regression check of the small writer's templates (our own output against itself): every demo label
    # drawn by filling the strings into an earlier label's operators gives the operators of drawing it in full.
    from arcflash.output import pdf_lite

    layout = load_layout(name)
    mismatches = pdf_lite.TEMPLATE_MISMATCHES[0]
    contents = [c for c in demo_labels if c.site_ppe != SITE_PPE] * 2  # the second round from templates

    def pages(fresh):
        canvas = label_pdf.LabelPages(layout)
        for content in contents:
            if fresh:
                pdf_lite._TEMPLATES.clear()  # recorded anew: the full drawing, strings in place
            canvas.add(content)
        canvas.canvas.showPage()
        return canvas.canvas.pages

    full = pages(fresh=True)
    pdf_lite._TEMPLATES.clear()
    assert pages(fresh=False) == full
    assert len(pdf_lite._TEMPLATES) < len(contents)  # some labels were drawn from templates
    assert pdf_lite.TEMPLATE_MISMATCHES[0] == mismatches  # every label's strings were foreseen in order


def test_a_one_page_document_is_the_general_assembly_of_one_page():
    # regression check of the small writer against itself: the remembered one-page skeleton gives the bytes
    # the object-by-object assembly gives, and pypdf reads the page's text back
    from pypdf import PdfReader

    from arcflash.output import pdf_lite

    args = (288.0, 432.0, "arcflash equipment labels", "D:20261202120000Z")
    for text in ("BT /F1 12 Tf 10 20 Td (Arc-flash boundary) Tj ET",  # short: kept as it is
                 "BT /F1 12 Tf 10 20 Td (Arc-flash boundary) Tj ET\n" + "0 0 1 1 re f\n" * 1000):  # compressed
        stream = pdf_lite.content_stream(text)
        one = pdf_lite.document_bytes([stream], *args)
        assert one == pdf_lite._assembled([stream], *args)
        assert PdfReader(io.BytesIO(one)).pages[0].extract_text() == "Arc-flash boundary"


@settings(max_examples=300, deadline=None)
@given(text=st.text(alphabet=st.sampled_from(list("aeiouWMil1,./ -()\u00e9\u00b0\u00b2\u2265\u03a9")), max_size=30),
       font=st.sampled_from(["Helvetica", "Helvetica-Bold"]), size=st.floats(5.0, 30.0))
def test_text_widths_are_reportlabs(text, font, size):
    # the glyph widths summed without the font lookup give reportlab's stringWidth, exactly
    from arcflash.output.text_wrap import text_width

    assert text_width(text, font, size) == stringWidth(text, font, size)


def test_labels_written_by_the_helper_process_equal_labels_written_in_process(tmp_path, monkeypatch):
    # a large batch goes through the file-writing process; the files are the same as a small batch's
    from arcflash.output import labels

    site = arcflash.load_site(demo_copy(tmp_path))
    governing = run_study(site).governing
    printed = issue_labels(site, governing, tmp_path / "alone")
    monkeypatch.setattr(labels, "_HELPER_FROM", 1)
    again = issue_labels(site, governing, tmp_path / "helped")
    assert [c.content_hash for c in again] == [c.content_hash for c in printed]
    alone = {p.name: p.stat().st_size for p in (tmp_path / "alone" / "labels").iterdir()}
    helped = {p.name: p.stat().st_size for p in (tmp_path / "helped" / "labels").iterdir()}
    assert alone == helped and len(helped) == len(printed)
    assert sorted(p.name for p in (tmp_path / "helped").iterdir()) == ["labels", "labels-sheet.pdf"]
