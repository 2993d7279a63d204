"""Every broken site folder under tests/site/broken gives its clear message and exit 2.

Each folder holds the site files and ``expected.txt``: lines that must all
appear in the message.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from click.testing import CliRunner

import arcflash
from arcflash.cli import main
from arcflash.errors import SiteDataError

BROKEN = sorted(p for p in (Path(__file__).parent / "broken").iterdir() if p.is_dir())


def test_at_least_fifteen_broken_sites():
    assert len(BROKEN) >= 15


@pytest.mark.parametrize("folder", BROKEN, ids=[p.name for p in BROKEN])
def test_broken_site_message_and_exit_status(folder, tmp_path):
    expected = [line for line in (folder / "expected.txt").read_text(encoding="utf-8").splitlines() if line]
    with pytest.raises(SiteDataError) as info:
        arcflash.load_site(folder)
    message = str(info.value)
    for line in expected:
        assert line in message, f"{line!r} not in:\n{message}"
    out = tmp_path / "faults.csv"
    result = CliRunner().invoke(main, ["faults", str(folder), "--csv", str(out)])
    assert result.exit_code == 2
    assert "Traceback" not in result.output
    assert expected[0] in result.output
    assert not out.exists()  # nothing written


def test_every_problem_names_file_and_line():
    with pytest.raises(SiteDataError) as info:
        arcflash.load_site(Path(__file__).parent / "broken" / "several_problems_at_once")
    problems = info.value.problems
    assert len(problems) == 3
    for problem in problems:
        assert problem.file == "site.yaml" and isinstance(problem.line, int)
