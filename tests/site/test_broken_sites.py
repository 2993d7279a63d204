"""Every broken site folder under tests/site/broken gives its clear message and exit 2.

Each folder holds the site files and ``expected.txt``: lines that must all
appear in the message, except two kinds of line: ``count: N`` (exactly N
problems: the knock-on errors of a file problem are not listed) and
``absent: TEXT`` (TEXT must not appear).
"""

from __future__ import annotations

from pathlib import Path

import pytest
from click.testing import CliRunner

import arcflash
from arcflash.cli import main
from arcflash.errors import SiteDataError

BROKEN = sorted(p for p in (Path(__file__).parent / "broken").iterdir() if p.is_dir())


def test_at_least_sixty_broken_sites():
    assert len(BROKEN) >= 60


def _expectations(folder):
    lines = [line for line in (folder / "expected.txt").read_text(encoding="utf-8").splitlines() if line]
    present = [line for line in lines if not line.startswith(("count: ", "absent: "))]
    count = [int(line[len("count: "):]) for line in lines if line.startswith("count: ")]
    absent = [line[len("absent: "):] for line in lines if line.startswith("absent: ")]
    return present, (count[0] if count else None), absent


@pytest.mark.parametrize("folder", BROKEN, ids=[p.name for p in BROKEN])
def test_broken_site_message_and_exit_status(folder, tmp_path):
    expected, count, absent = _expectations(folder)
    with pytest.raises(SiteDataError) as info:
        arcflash.load_site(folder)
    message = str(info.value)
    for line in expected:
        assert line in message, f"{line!r} not in:\n{message}"
    for text in absent:
        assert text not in message, f"{text!r} in:\n{message}"
    if count is not None:
        assert len(info.value.problems) == count, message
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
