"""The one-line diagram: every bus drawn once, no two strings overlapping (on the sheets' own record of what
they placed, and on the word boxes poppler reads from the rendered report), sheets that point at each other.
"""

from __future__ import annotations

import io
import re
import shutil
import subprocess

import pytest
from pypdf import PdfReader
from reportlab.pdfgen.canvas import Canvas

import arcflash
from arcflash.output.oneline_pdf import OneLine
from arcflash.output.results import write_results
from arcflash.study.pipeline import run_study
from tests.output.test_label_fields import DEMO
from tests.synthetic import synthetic_site


def _overlaps(boxes):
    """Pairs of (text, box) whose boxes overlap by more than 0.1 pt both ways."""
    found = []
    for i, (a, (ax0, ay0, ax1, ay1)) in enumerate(boxes):
        for b, (bx0, by0, bx1, by1) in boxes[i + 1:]:
            if ax0 < bx1 - 0.1 and bx0 < ax1 - 0.1 and ay0 < by1 - 0.1 and by0 < ay1 - 0.1:
                found.append((a, b))
    return found


def _drawn_sheets(site):
    sheets = OneLine(site).sheets()
    for sheet in sheets:
        sheet.wrap(0, 0)
        sheet.drawOn(Canvas(io.BytesIO()), 0, 0)
    return sheets


@pytest.mark.parametrize("buses", [None, 300])
def test_every_bus_once_and_no_text_overlaps(tmp_path, buses):
    site = arcflash.load_site(DEMO if buses is None else synthetic_site(tmp_path / "site", buses))
    sheets = _drawn_sheets(site)
    names = [p.text for sheet in sheets for p in sheet.placed]
    for bus in site.buses:
        assert names.count(bus) == 1, bus
    for sheet in sheets:
        assert _overlaps([(p.text, p.box) for p in sheet.placed]) == [], sheet.number
        right = max(p.box[2] for p in sheet.placed)
        assert right <= sheet.width + 1e-6  # nothing past the sheet's edge


def test_sheets_point_at_each_other(tmp_path):
    site = arcflash.load_site(synthetic_site(tmp_path / "site", 300))
    sheets = _drawn_sheets(site)
    assert len(sheets) > 1 and all(s.total == len(sheets) for s in sheets)
    notes = " ".join(p.text for sheet in sheets for p in sheet.placed)
    assert re.search(r"from \S+, sheet \d+", notes) and "Continued:" in notes


def test_the_rendered_report_has_no_overlapping_words_on_the_one_line(tmp_path):
    # every page rendered at 60 dpi (it must render); the one-line pages' words read back with their boxes
    if not (shutil.which("pdftoppm") and shutil.which("pdftotext")):
        pytest.skip("poppler-utils (pdftoppm, pdftotext) not installed")
    site = arcflash.load_site(DEMO)
    write_results(site, run_study(site), tmp_path, tcc_buses=[])
    pdf = tmp_path / "report.pdf"
    subprocess.run(["pdftoppm", "-r", "60", "-png", str(pdf), str(tmp_path / "page")], check=True)
    pages = PdfReader(pdf).pages
    assert len(list(tmp_path.glob("page*.png"))) == len(pages)
    sheets = [n for n, page in enumerate(pages, start=1) if "One-line sheet" in page.extract_text()]
    assert sheets
    html = subprocess.run(["pdftotext", "-bbox", "-f", str(sheets[0]), "-l", str(sheets[-1]), str(pdf), "-"],
                          capture_output=True, text=True, check=True).stdout
    for page in html.split("<page ")[1:]:
        words = [(w, tuple(float(v) for v in box)) for *box, w in re.findall(
            r'<word xMin="([\d.]+)" yMin="([\d.]+)" xMax="([\d.]+)" yMax="([\d.]+)">([^<]*)</word>', page)]
        assert words and _overlaps(words) == []
