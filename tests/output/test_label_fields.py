"""Every field of a label, worked by hand from a hand-built study row (no network, no curves).

The hazard values (energy, boundary, category, minimum arc rating, shock boundaries) are checked against
NFPA 70E and the rounding rules; the wording of the hazard sentences is our own and is pinned here as a
regression check of the text (it is not validated by anything outside).
Also: label lengths and layouts, the review date, file names, reading an earlier study's governing.csv,
and which labels a batch prints.
"""

from __future__ import annotations

import datetime as dt
import math
from pathlib import Path
from types import SimpleNamespace

import pandas as pd
import pytest

import arcflash
from arcflash.output import ledger
from arcflash.output.labels import (
    BELOW_ONSET_RATING, DANGER_STATEMENT, LabelContent, _points, _review_by, issue_labels, label_content,
    layout_names, load_layout, read_governing, safe_file_name,
)
from tests.conftest import demo_copy

DEMO = Path(__file__).resolve().parents[2] / "site_data" / "fenwick_ridge"
#: Our own wording of the three hazard sentences (regression of the text, not validation).
ENERGIZED = "Arc-flash and shock hazard. Qualified persons only, with the PPE below."
NOT_PERMITTED = DANGER_STATEMENT
NOT_COMPUTED = "Arc-flash hazard not computed for this equipment: treat as energized and dangerous."
# NFPA 70E Table 130.4(E)(a), 151 V - 750 V row: limited approach 10 ft 0 in (movable), 3 ft 6 in (fixed),
# restricted 1 ft 0 in; 751 V - 15 kV row: 10 ft 0 in, 5 ft 0 in, 2 ft 2 in.
LIMITED_480 = "3 ft 6 in (1.0 m) fixed parts; 10 ft 0 in (3.0 m) movable conductors"
LIMITED_13_8 = "5 ft 0 in (1.5 m) fixed parts; 10 ft 0 in (3.0 m) movable conductors"


#: Site PPE bands (invented wording), as facility.site_ppe holds them.
BANDS = (SimpleNamespace(up_to_cal_cm2=1.2, arc_rating_cal_cm2=0.0, text="Natural-fibre clothing"),
         SimpleNamespace(up_to_cal_cm2=8.0, arc_rating_cal_cm2=8.0, text="8 cal/cm2 shirt and trousers"),
         SimpleNamespace(up_to_cal_cm2=25.0, arc_rating_cal_cm2=25.0, text="25 cal/cm2 suit"))


def _site(label_shows="energy", site_ppe=(), study_date="2026-06-01", revision="R3"):
    facility = SimpleNamespace(label_shows=label_shows, site_ppe=site_ppe, study_date=study_date,
                               study_revision=revision)
    buses = {"PNL-7": SimpleNamespace(description="Panel seven"), "SWG-9": SimpleNamespace(description="MV gear")}
    return SimpleNamespace(facility=facility, buses=buses)


def _row(energy=5.23, kv=0.48, boundary_mm=1000.0, distance_mm=457.2, category=2, rating=5.3, device="CB-1",
         flags=""):
    return pd.Series({"incident_energy_governing_cal_cm2": energy, "nominal_kv": kv, "working_distance_mm": distance_mm,
                      "arc_flash_boundary_governing_mm": boundary_mm, "ppe_category": category,
                      "minimum_arc_rating_cal_cm2": rating, "device_governing": device, "flags": flags})


def _expected(**changes):
    base = dict(equipment_id="PNL-7", description="Panel seven", signal_word="WARNING", hazard=ENERGIZED,
                nominal_voltage="480 V",
                # 1000 mm = 39.37 in, rounded up to 40 in = 3 ft 4 in (both units from the one value, rounded up).
                arc_flash_boundary="1,000 mm / 3 ft 4 in", shows="energy",
                # 5.23 rounded up to 0.1 cal/cm2; 457.2 mm up to 458 mm; 457.2 mm = 18 in exactly = 1 ft 6 in.
                energy_or_category="5.3 cal/cm2 at 458 mm / 1 ft 6 in", minimum_arc_rating="5.3 cal/cm2",
                site_ppe="", limited_approach=LIMITED_480, restricted_approach="1 ft 0 in (0.3 m)",
                governing_device="CB-1 opens to end the arc", study_revision="R3", study_date="2026-06-01",
                # NFPA 70E 130.5: the data are reviewed at intervals not over 5 years.
                review_by="2031-06-01", flags="",
                # no verification recorded (the tests' own empty configuration folder): a draft
                model_status="DRAFT: model tables not verified")
    base.update(changes)
    return LabelContent(**base)


def test_energy_label_every_field():
    assert label_content(_site(), "PNL-7", _row()) == _expected()


def test_category_label_every_field():
    # NFPA 70E Table 130.7(C)(15)(c): 5.23 cal/cm2 is above 4 and up to 8 -> category 2 (the row's category).
    got = label_content(_site(label_shows="category"), "PNL-7", _row())
    assert got == _expected(shows="category", energy_or_category="PPE category 2")


def test_the_argument_overrides_the_facility_choice():
    assert label_content(_site(label_shows="category"), "PNL-7", _row(), shows="energy") == _expected()


def test_below_1_2_cal_in_both_modes():
    # IEEE 1584-2018 3.1 / NFPA 70E: 1.2 cal/cm2 is the onset of a second-degree burn (the boundary energy).
    row = _row(energy=0.81, category=0, rating=0.9, boundary_mm=300.0)
    energy = label_content(_site(), "PNL-7", row)
    # No clothing is rated below 1.2 cal/cm2: the label says what applies in words (BELOW_ONSET_RATING).
    assert energy == _expected(energy_or_category="0.9 cal/cm2 at 458 mm / 1 ft 6 in",
                               minimum_arc_rating=BELOW_ONSET_RATING, arc_flash_boundary="300 mm / 1 ft 0 in")
    category = label_content(_site(), "PNL-7", row, shows="category")
    assert category == _expected(shows="category", energy_or_category="none needed (below 1.2 cal/cm2)",
                                 minimum_arc_rating=BELOW_ONSET_RATING, arc_flash_boundary="300 mm / 1 ft 0 in")
    assert "1.2 cal/cm2" in BELOW_ONSET_RATING and "none required" in BELOW_ONSET_RATING


@pytest.mark.parametrize("shows", ["energy", "category"])
def test_danger_label_every_field(shows):
    # NFPA 70E Table 130.7(C)(15)(c): no category above 40 cal/cm2 -> DANGER, no arc rating printed; the
    # energy and its working distance stay on the label in both modes (914.4 mm up to 915 mm = 3 ft 0 in).
    row = _row(energy=52.0, kv=13.8, boundary_mm=12000.0, distance_mm=914.4, category=-1, rating=52.0,
               device="R-52", flags="capped at 2 s")
    got = label_content(_site(), "SWG-9", row, shows=shows)
    assert got == _expected(equipment_id="SWG-9", description="MV gear", signal_word="DANGER", hazard=NOT_PERMITTED,
                            nominal_voltage="13.8 kV", arc_flash_boundary="12,000 mm / 39 ft 5 in", shows=shows,
                            energy_or_category="52.0 cal/cm2 at 915 mm / 3 ft 0 in: no PPE category applies",
                            minimum_arc_rating="not applicable", limited_approach=LIMITED_13_8,
                            restricted_approach="2 ft 2 in (0.7 m)", governing_device="R-52 opens to end the arc",
                            flags="capped at 2 s", study_note="see report")  # a table without flag_notes
    assert "No PPE category applies" in got.hazard and "de-energize" in got.hazard


def test_energy_not_computed_is_danger():
    row = _row(energy=math.nan, boundary_mm=math.nan, device=None, flags=None)
    got = label_content(_site(site_ppe=BANDS), "PNL-7", row)
    # no energy, no band: the site PPE is not printed beside a hazard that was not computed
    assert got == _expected(signal_word="DANGER", hazard=NOT_COMPUTED, arc_flash_boundary="not computed",
                            energy_or_category="not computed", minimum_arc_rating="not applicable",
                            site_ppe="", governing_device="no protective device ends this arc")


def test_unknown_display_mode_is_refused():
    with pytest.raises(ValueError, match="expected 'energy' or 'category', got 'both'"):
        label_content(_site(), "PNL-7", _row(), shows="both")


def test_exactly_1_2_cal_is_not_below_1_2():
    # IEEE 1584-2018 3.1: the boundary is where the energy is 1.2 cal/cm2; exactly 1.2 is at it, not below it.
    got = label_content(_site(), "PNL-7", _row(energy=1.2, category=1, rating=1.2))
    assert got.energy_or_category == "1.2 cal/cm2 at 458 mm / 1 ft 6 in"
    assert got.minimum_arc_rating == "1.2 cal/cm2"


def test_an_empty_device_cell_says_no_device_ends_the_arc():
    assert label_content(_site(), "PNL-7", _row(device="")).governing_device == "no protective device ends this arc"


def test_the_clearing_line_names_a_scenario_other_than_the_normal_one():
    site = _site()
    site.default_scenario = "normal"
    row = _row()
    assert label_content(site, "PNL-7", row).governing_device == "CB-1 opens to end the arc"
    row["scenario"] = "normal"
    assert label_content(site, "PNL-7", row).governing_device == "CB-1 opens to end the arc (scenario normal)"
    row["scenario"] = "tie-closed"
    assert label_content(site, "PNL-7", row).governing_device == "CB-1 opens to end the arc (worst case: tie-closed)"


@pytest.mark.parametrize("kv, text", [(0.208, "208 V"), (0.6, "600 V"), (1.0, "1 kV"), (4.16, "4.16 kV")])
def test_nominal_voltage_text(kv, text):
    assert label_content(_site(), "PNL-7", _row(kv=kv)).nominal_voltage == text


def test_review_date_five_years_on():
    assert _review_by("2028-02-29") == "2033-02-28"  # no 29 February in 2033: the day before
    assert _review_by("2026-12-02") == "2031-12-02"
    today = dt.date.today()
    for missing in (None, "", "not a date"):
        assert dt.date.fromisoformat(_review_by(missing)) > today.replace(year=today.year + 4, day=1)
        assert _review_by(missing)[:4] == str(today.year + 5)


@pytest.mark.parametrize("text, points", [("4 in", 288.0), (" 0.5in ", 36.0), ("100 mm", 100 * 72 / 25.4),
                                          ("6 in", 432.0)])
def test_layout_lengths(text, points):
    assert _points(text) == pytest.approx(points, rel=1e-12)  # 72 points to the inch (PDF), 25.4 mm to the inch


@pytest.mark.parametrize("text", ["4 cm", "4", "in", "-4 in", "four in"])
def test_layout_length_without_a_known_unit_is_refused(text):
    with pytest.raises(ValueError, match="expected a length with a unit"):
        _points(text)


def test_layout_read_from_its_file(tmp_path):
    layout = load_layout("label-4x6")
    assert (layout.name, layout.page_width, layout.page_height, layout.across, layout.down) == (
        "label-4x6", 288.0, 432.0, 1, 1)
    assert layout.margin == pytest.approx(0.12 * 72) and layout.gutter == pytest.approx(0.15 * 72)
    assert [b["kind"] for b in layout.blocks] == ["signal", "hazard", "data", "identity", "study", "qr"]
    own = tmp_path / "own.yaml"
    own.write_text("name: own\npage: {width: 100 mm, height: 50 mm}\nmargin: 2 mm\nlabels_across: 2\n"
                   "labels_down: 3\nblocks: []\n", encoding="utf-8")
    by_path = load_layout(own)
    assert (by_path.name, by_path.across, by_path.down, by_path.gutter, by_path.blocks) == ("own", 2, 3, 0.0, ())
    assert by_path.page_width == pytest.approx(100 * 72 / 25.4) and by_path.margin == pytest.approx(2 * 72 / 25.4)
    assert {"label-4x6", "label-4x4", "sheet-letter-2x2"} <= set(layout_names())


@pytest.mark.parametrize("equipment, stem", [
    ("SWG-A", "SWG-A"), ("bus with spaces & <tags>", "bus_with_spaces_tags"), ("..", "equipment"),
    ("../../etc/passwd", "etc_passwd"), ("Ωhm-1", "hm-1"), ("A" * 100, "A" * 80), ("XFMR-X", "XFMR-X")])
def test_label_file_names(equipment, stem):
    assert safe_file_name(equipment, "0123456789abcdef") == f"{stem}-01234567.pdf"


@pytest.fixture()
def site_copy(tmp_path):
    return arcflash.load_site(demo_copy(tmp_path))


#: A table written by hand has no study record: reading it needs the override that a stale study needs.
HAND_BUILT = "hand-built table (test)"


def _governing_csv(folder, site, drop=None):
    rows = []
    for bus in site.buses:
        if bus != drop:
            rows.append(dict(bus=bus, incident_energy_governing_cal_cm2=3.0, nominal_kv=0.48,
                             working_distance_mm=457.2, arc_flash_boundary_governing_mm=900.0, ppe_category=1,
                             minimum_arc_rating_cal_cm2=3.0, device_governing="" if bus == drop else "CB-X",
                             flags=""))
    folder.mkdir(parents=True, exist_ok=True)
    pd.DataFrame(rows).to_csv(folder / "governing.csv", index=False)


def test_reading_an_earlier_study(site_copy, tmp_path):
    with pytest.raises(ValueError, match="no governing.csv in"):
        read_governing(tmp_path / "nothing", site_copy)
    first = next(iter(site_copy.buses))
    _governing_csv(tmp_path / "other", site_copy, drop=first)
    with pytest.raises(ValueError, match=f"lacks bus '{first}' of the site"):
        read_governing(tmp_path / "other", site_copy, accept_stale=HAND_BUILT)
    _governing_csv(tmp_path / "study", site_copy)
    frame = pd.read_csv(tmp_path / "study" / "governing.csv")
    frame.loc[0, "device_governing"] = None  # an arc no device clears: empty cell
    frame.loc[1, "device_governing"] = "NA"  # a device may be called NA: read as text, not as missing
    frame.to_csv(tmp_path / "study" / "governing.csv", index=False)
    table = read_governing(tmp_path / "study", site_copy, accept_stale=HAND_BUILT)
    assert table.loc[first, "device_governing"] is None and table.loc[first, "flags"] == ""
    assert label_content(site_copy, first, table.loc[first]).governing_device == "no protective device ends this arc"
    assert set(site_copy.buses) <= set(table.index)
    assert table.iloc[1]["device_governing"] == "NA"


def test_a_batch_prints_the_chosen_labels_only(site_copy, tmp_path):
    _governing_csv(tmp_path / "study", site_copy)
    governing = read_governing(tmp_path / "study", site_copy, accept_stale=HAND_BUILT)
    chosen = list(site_copy.buses)[:2]
    printed = issue_labels(site_copy, governing, tmp_path / "out", buses=chosen, issued_by="tester")
    assert [c.equipment_id for c in printed] == chosen
    files = sorted(p.name for p in (tmp_path / "out" / "labels").iterdir())
    assert files == sorted(safe_file_name(c.equipment_id, c.content_hash) for c in printed)
    assert (tmp_path / "out" / "labels-sheet.pdf").stat().st_size > 0
    book = ledger.ledger_path(site_copy.path)
    assert set(ledger.latest(book)) == set(chosen)
    again = issue_labels(site_copy, governing, tmp_path / "again", changed_only=True)
    assert sorted(c.equipment_id for c in again) == sorted(set(site_copy.buses) - set(chosen))
    nothing = issue_labels(site_copy, governing, tmp_path / "none", changed_only=True)
    assert nothing == [] and not (tmp_path / "none" / "labels-sheet.pdf").exists()
    with pytest.raises(KeyError, match="unknown bus 'NOPE'"):
        issue_labels(site_copy, governing, tmp_path / "bad", buses=["NOPE"])


@pytest.mark.parametrize("energy, text", [(0.81, "Natural-fibre clothing"), (1.2, "8 cal/cm2 shirt and trousers"),
                                          (5.23, "8 cal/cm2 shirt and trousers"), (8.0, "8 cal/cm2 shirt and trousers"),
                                          (8.01, "25 cal/cm2 suit"), (25.0, "25 cal/cm2 suit")])
def test_site_ppe_by_band(energy, text):
    # the first band whose upper energy covers the label's energy (a band covers its upper edge)
    got = label_content(_site(site_ppe=BANDS), "PNL-7", _row(energy=energy, rating=max(energy, 1.2)))
    assert got.site_ppe == text


def test_an_energy_above_every_band_is_refused():
    with pytest.raises(ValueError, match=r"label of PNL-7: no site PPE band .* covers 25.1 cal/cm2 .*add a band"):
        label_content(_site(site_ppe=BANDS), "PNL-7", _row(energy=25.01, category=4, rating=25.1))


def test_site_ppe_rated_below_the_minimum_arc_rating_is_refused():
    # a band whose PPE is rated below the energies it covers (the schema refuses such a band; this is the
    # label's own check behind it): 7.96 cal/cm2 needs 8.0, the band's PPE is rated 4
    under = (SimpleNamespace(up_to_cal_cm2=8.0, arc_rating_cal_cm2=4.0, text="4 cal/cm2 shirt"),)
    with pytest.raises(ValueError, match="rated 4 cal/cm2, below the label's minimum arc rating 8.0 cal/cm2"):
        label_content(_site(site_ppe=under), "PNL-7", _row(energy=7.96, rating=8.0))


def test_a_danger_label_prints_no_site_ppe():
    row = _row(energy=52.0, kv=13.8, boundary_mm=12000.0, distance_mm=914.4, category=-1, rating=52.0)
    assert label_content(_site(site_ppe=BANDS), "SWG-9", row).site_ppe == ""


def test_a_flagged_label_carries_the_numbers_of_its_study_notes():
    # the numbers of pipeline.FLAG_NOTES (fixed, so a label changes only when its own flags change)
    row = _row(flags="outside the range of IEEE 1584-2018: gap_mm outside 6.35-76.2; above 40 cal/cm2")
    row["flag_notes"] = "2,5"
    assert label_content(_site(), "PNL-7", row).study_note == "2, 5"
    row["flag_notes"] = 5  # one number, read back from a CSV as a number
    assert label_content(_site(), "PNL-7", row).study_note == "5"
    assert label_content(_site(), "PNL-7", _row()).study_note == ""
