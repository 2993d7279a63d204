"""Atomic output files: the usual mode of a new file, no temporary left behind, the earlier file kept on
a failure."""

from __future__ import annotations

import os

import pytest

from arcflash.output.files import write_atomic, write_bytes_atomic


def test_a_written_file_has_the_usual_mode_and_no_temporary_is_left(tmp_path):
    umask = os.umask(0o022)
    try:
        write_bytes_atomic(tmp_path / "out" / "a.pdf", b"data")
    finally:
        os.umask(umask)
    assert (tmp_path / "out" / "a.pdf").read_bytes() == b"data"
    assert oct((tmp_path / "out" / "a.pdf").stat().st_mode & 0o777) == oct(0o644)  # 0666 less the umask 022
    assert [p.name for p in (tmp_path / "out").iterdir()] == ["a.pdf"]


def test_a_failed_write_keeps_the_earlier_file(tmp_path):
    target = tmp_path / "t.csv"
    target.write_text("earlier", encoding="utf-8")

    def failing(temporary):
        with open(temporary, "w", encoding="utf-8") as stream:
            stream.write("half")
        raise RuntimeError("interrupted")

    with pytest.raises(RuntimeError, match="interrupted"):
        write_atomic(target, failing)
    assert target.read_text(encoding="utf-8") == "earlier"
    assert [p.name for p in tmp_path.iterdir()] == ["t.csv"]
