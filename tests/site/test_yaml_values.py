"""Values as users write them: YAML dates, on/off and merge keys; file size; quantities."""

from __future__ import annotations

import pytest

import arcflash
from arcflash.errors import SiteDataError
from arcflash.site.reading import MAX_FILE_BYTES
from tests.site.helpers import CHAIN, chain, write_site


def test_an_unquoted_date_is_read_as_written(tmp_path):
    # YAML reads 2026-06-01 as a date, not text; it was refused ("expected a valid string"). It is kept as
    # written and checked to be a day that exists (an impossible day: tests/site/broken/study_date_not_a_day).
    folder = write_site(tmp_path / "site", chain(facility={"name": "Dated (invented)", "study_date": "2026-06-01"}))
    text = (folder / "site.yaml").read_text(encoding="utf-8").replace("'2026-06-01'", "2026-06-01")
    (folder / "site.yaml").write_text(text, encoding="utf-8")
    assert "study_date: 2026-06-01\n" in text
    assert arcflash.load_site(folder).facility.study_date == "2026-06-01"


def test_unquoted_on_and_off_mean_the_words_in_an_on_off_field(tmp_path):
    # YAML 1.1 reads unquoted on/off as booleans; in a field whose choices are 'on' and 'off' the user meant
    # the word (a boolean where a number belongs is refused: tests/site/broken/yes_where_a_number_belongs).
    folder = write_site(tmp_path / "site", chain(scenarios=[{"name": "quiet", "motors": "off"},
                                                            {"name": "busy", "motors": "on"}]))
    text = (folder / "site.yaml").read_text(encoding="utf-8")
    text = text.replace("motors: 'off'", "motors: off").replace("motors: 'on'", "motors: on")
    (folder / "site.yaml").write_text(text, encoding="utf-8")
    assert "motors: off\n" in text and "motors: on\n" in text
    site = arcflash.load_site(folder)
    assert (site.scenario("quiet").motors, site.scenario("busy").motors) == ("off", "on")


def test_a_csv_with_a_byte_order_mark_and_windows_line_endings_is_read(tmp_path):
    # Spreadsheets save CSV as UTF-8 with a byte-order mark and CRLF line ends; before, the mark made the first
    # column's name unknown and every row an error.
    folder = tmp_path / "site"
    folder.mkdir()
    document = chain()
    del document["cables"]
    write_site(folder, document)
    (folder / "cables.csv").write_bytes(
        "\ufeffid,from_bus,to_bus,length,size,material,conduit\r\nC,LV,END,200 ft,4/0,copper,steel\r\n".encode("utf-8"))
    site = arcflash.load_site(folder)
    assert site.cables["C"].length == "200 ft" and site.cables["C"].to_bus == "END"


def test_merge_keys_give_defaults_that_the_item_overrides(tmp_path):
    # YAML merge keys (<<: *name) are how YAML users avoid repeating values; anchors may sit in 'templates:'.
    document = chain()
    document.pop("motors", None)
    folder = write_site(tmp_path / "site", document)
    text = (folder / "site.yaml").read_text(encoding="utf-8") + (
        "templates:\n"
        "  lv-motor: &lv-motor {kv: 0.46, x_over_r: 8, subtransient_reactance_percent: 20}\n"
        "motors:\n"
        "- {<<: *lv-motor, id: M1, bus: END, size: 50 hp}\n"
        "- {<<: *lv-motor, id: M2, bus: END, size: 75 hp, x_over_r: 12}\n"
    )
    (folder / "site.yaml").write_text(text, encoding="utf-8")
    motors = arcflash.load_site(folder).motors
    assert (motors["M1"].kv, motors["M1"].x_over_r, motors["M1"].subtransient_reactance_percent) == (0.46, 8, 20)
    assert motors["M2"].x_over_r == 12  # the item's own key wins over the template's
    assert motors["M2"].kva == 75


def test_a_key_written_twice_in_one_item_is_still_refused_beside_a_merge(tmp_path):
    folder = write_site(tmp_path / "site", chain())
    text = (folder / "site.yaml").read_text(encoding="utf-8") + (
        "templates:\n  base: &base {kv: 0.46}\n"
        "motors:\n- {<<: *base, id: M1, bus: END, size: 50 hp, kv: 0.46, kv: 0.48}\n")
    (folder / "site.yaml").write_text(text, encoding="utf-8")
    with pytest.raises(SiteDataError, match="duplicate key 'kv'"):
        arcflash.load_site(folder)


def test_a_file_above_the_size_limit_is_refused_without_reading_it(tmp_path):
    folder = write_site(tmp_path / "site", chain())
    with open(folder / "huge.yaml", "wb") as handle:  # sparse: no disk space, no time
        handle.truncate(MAX_FILE_BYTES + 1)
    with pytest.raises(SiteDataError) as info:
        arcflash.load_site(folder)
    assert [str(p) for p in info.value.problems] == [
        f"huge.yaml: file = '{(MAX_FILE_BYTES + 1) / 1e6:.1f} MB': expected a site-data file of at most 20 MB"]


def test_quantities_reach_the_study_as_numbers_in_the_units_of_their_names(tmp_path):
    site = arcflash.load_site(write_site(tmp_path / "site", chain()))
    cable, utility = site.cables["C"], site.utilities["U"]
    assert cable.length_ft == 200.0 and cable.length == "200 ft"  # the text kept for the report
    # S = sqrt(3) x 13.8 kV x 10 kA (common practice)
    assert utility.fault_mva("max") == pytest.approx(3 ** 0.5 * 13.8 * 10)
    metres = arcflash.load_site(write_site(tmp_path / "m", chain(cables=[{**CHAIN["cables"][0], "length": "45 m"}])))
    assert metres.cables["C"].length_ft == pytest.approx(45 / 0.3048)  # 1 ft = 0.3048 m exactly (definition)


def test_a_replaced_copy_is_what_pydantic_gives_and_shares_no_mutable_state():
    from tests.study.test_clearing import DEMO

    demo = arcflash.load_site(DEMO)
    # SiteModel.replaced makes the copies of an uncertainty run without pydantic's generic copy: it must
    # give what model_copy(update=...) gives, field by field, and leave the original untouched.
    device = next(d for d in demo.devices.values() if d.curve)
    unit_device = next(d for d in demo.devices.values() if d.trip_unit is not None)
    for element, update in ((device, {"id": "X"}), (unit_device, {"maintenance": {"instantaneous_pickup": 2.0}}),
                            (demo.transformers[next(iter(demo.transformers))], {"z_percent": 6.1}),
                            (device, None)):
        made, expected = element.replaced(update), element.model_copy(update=update)
        assert type(made) is type(expected)
        assert made == expected
        assert made.model_fields_set == expected.model_fields_set
        assert made.__pydantic_private__ == expected.__pydantic_private__
    moved = device.replaced()
    moved._curve_band_position = -0.5
    assert moved.curve_band_position == -0.5 and device.curve_band_position == 1.0
