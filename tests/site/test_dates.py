"""Study dates as users write them in YAML."""

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
