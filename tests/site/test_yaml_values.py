"""Values as users write them in YAML: dates, on/off."""

from __future__ import annotations

import arcflash
from tests.site.helpers import chain, write_site


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
