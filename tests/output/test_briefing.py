"""The job briefing sheet (issue 15): scenario chosen and printed, the label's signal word, no permit blanks
above 40 cal/cm2, the site's permit form named, and the boundaries drawn to scale from the front face
(checked on the rendered page)."""

from __future__ import annotations

import shutil
import subprocess

import numpy as np
import pytest
from click.testing import CliRunner
from pypdf import PdfReader

import arcflash
from arcflash.cli import main
from arcflash.output.briefing import NO_PERMIT_ABOVE_40, PERMIT_ITEMS, write_briefing
from arcflash.study.pipeline import run_study
from tests.conftest import demo_copy
from tests.output.test_label_fields import DEMO


def _text(path):
    return " ".join(" ".join(page.extract_text() for page in PdfReader(path).pages).split())


@pytest.fixture(scope="module")
def study():
    site = arcflash.load_site(DEMO)
    return site, run_study(site)


def test_a_chosen_scenario_is_briefed_and_named(tmp_path, study):
    site, results = study
    out = tmp_path / "swg-a.pdf"
    result = CliRunner().invoke(main, ["briefing", str(DEMO), "SWG-A", "--scenario", "maintenance-a", "--out",
                                       str(out)])
    assert result.exit_code == 0, result.output
    text = _text(out)
    row = results.rows[(results.rows["bus"] == "SWG-A") & (results.rows["scenario"] == "maintenance-a")].iloc[0]
    assert row["incident_energy_governing_cal_cm2"] < results.governing.loc["SWG-A",
                                                                            "incident_energy_governing_cal_cm2"]
    assert "Scenario: maintenance-a (Energy-reducing maintenance switching on LVM-A" in text
    energy = float(np.ceil(row["incident_energy_governing_cal_cm2"] * 10 - 1e-9) / 10)
    assert f"{energy:.1f} cal/cm2 at 610 mm / 2 ft 0 in" in text
    assert "WARNING" in text and PERMIT_ITEMS[0] in text
    assert "Use the site's own permit form (name it in facility.permit_form)" in text
    assert "LIMITS OF USE" in text and "licensed professional engineer" in text


def test_above_40_cal_the_sheet_offers_no_permit(tmp_path, study):
    site, results = study
    assert results.governing.loc["MV-MAIN", "incident_energy_governing_cal_cm2"] > 40
    out = tmp_path / "mv.pdf"
    assert CliRunner().invoke(main, ["briefing", str(DEMO), "MV-MAIN", "--out", str(out)]).exit_code == 0
    text = _text(out)
    assert "DANGER" in text and " ".join(NO_PERMIT_ABOVE_40.split()) in text
    assert "de-energize" in text.lower() and "engineered plan" in text
    assert not any(item in text for item in PERMIT_ITEMS) and "Energized electrical work permit" not in text


def test_the_sites_permit_form_is_named(tmp_path):
    site = demo_copy(tmp_path)
    facility = (site / "facility.yaml").read_text(encoding="utf-8")
    (site / "facility.yaml").write_text(facility.replace("facility:\n", "facility:\n  permit_form: Form EW-7 in the "
                                                                        "site safety manual\n", 1), encoding="utf-8")
    out = tmp_path / "b.pdf"
    result = CliRunner().invoke(main, ["briefing", str(site), "SWG-B", "--out", str(out)])
    assert result.exit_code == 0, result.output
    assert "Use the site's own permit form: Form EW-7 in the site safety manual." in _text(out)


@pytest.mark.parametrize("args, words", [
    (["--scenario", "nope"], "--scenario:"),
    (["--scenario", "normal", "--study", "."], "--scenario and --study conflict"),
])
def test_briefing_refusals(tmp_path, args, words):
    result = CliRunner().invoke(main, ["briefing", str(DEMO), "SWG-A", "--out", str(tmp_path / "x.pdf")] + args)
    assert result.exit_code == 2 and words in result.output
    assert not (tmp_path / "x.pdf").exists()


def test_the_boundaries_are_drawn_to_scale_from_the_front_face(tmp_path, study):
    # rendered: along the perpendicular through the middle of the front face, each boundary line lies at its
    # distance (to scale) in front of the face, within 2 px at 100 dpi
    if not shutil.which("pdftoppm"):
        pytest.skip("poppler-utils (pdftoppm) not installed")
    from PIL import Image

    site, results = study
    row = results.governing.loc["SWG-B"]
    pdf = tmp_path / "b.pdf"
    front = write_briefing(site, "SWG-B", row, pdf)
    subprocess.run(["pdftoppm", "-r", "100", "-png", "-f", "1", "-l", "1", str(pdf), str(tmp_path / "p")], check=True)
    page = np.asarray(Image.open(next(tmp_path.glob("p*.png"))).convert("L"), dtype=float)
    px = 100.0 / 72.0
    x = int(round(front["front_x_pt"] * px))
    y_front = (792.0 - front["front_y_pt"]) * px
    column = page[:, x - 1:x + 2].min(axis=1)
    assert column[int(round(y_front))] < 80  # the front face: a thick dark line
    for name in ("arc_flash_boundary_governing_mm", "limited_approach_fixed_mm", "restricted_approach_mm"):
        y = y_front + row[name] * front["points_per_mm"] * px  # further down the page = further in front
        window = page[int(round(y)) - 2:int(round(y)) + 3, x - 8:x + 9]
        assert window.min() < 110, name  # a (possibly dashed) line crosses there
    between = y_front + (row["restricted_approach_mm"] / 2) * front["points_per_mm"] * px
    assert page[int(round(between)), x] > 200  # nothing drawn halfway to the first boundary
