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


@pytest.mark.parametrize("helper", [False, True])
def test_staged_files_reach_their_names_only_when_published(tmp_path, helper):
    from arcflash.output.files import StagedFiles

    files = {tmp_path / "labels" / f"L{k}.pdf": bytes([k]) * (1000 + 37 * k) for k in range(20)}
    with StagedFiles(helper=helper) as stage:
        for path, data in files.items():
            stage(path, data)
        stage.publish()
    assert {p: p.read_bytes() for p in (tmp_path / "labels").iterdir()} == files  # every byte, no temporary
    with pytest.raises(RuntimeError, match="stopped drawing"), StagedFiles(helper=helper) as stage:
        stage(tmp_path / "labels" / "new.pdf", b"new")
        stage(tmp_path / "labels" / "L0.pdf", b"changed")
        raise RuntimeError("stopped drawing")
    assert sorted(p.name for p in (tmp_path / "labels").iterdir()) == sorted(p.name for p in files)
    assert (tmp_path / "labels" / "L0.pdf").read_bytes() == files[tmp_path / "labels" / "L0.pdf"]


@pytest.mark.parametrize("helper", [False, True])
def test_a_staged_file_that_cannot_be_written_is_named_and_nothing_is_published(tmp_path, helper):
    from arcflash.output.files import StagedFiles

    (tmp_path / "not-a-folder").write_text("a file where a folder should be", encoding="utf-8")
    with pytest.raises(OSError) as caught, StagedFiles(helper=helper) as stage:
        stage(tmp_path / "out" / "a.pdf", b"a")
        stage(tmp_path / "not-a-folder" / "b.pdf", b"b")
        stage(tmp_path / "out" / "c.pdf", b"c")
        stage.publish()
    assert "b.pdf" in str(caught.value.filename) and ".part" not in str(caught.value.filename)
    assert not [p for p in (tmp_path / "out").iterdir()]  # a.pdf was written, then removed: none published


@pytest.mark.parametrize("helper", [False, True])
def test_a_fresh_folder_is_staged_whole_and_renamed_into_place(tmp_path, helper):
    from arcflash.output.files import StagedFiles

    folder = tmp_path / "out" / "labels"
    files = {folder / f"L{k}.pdf": bytes([k]) * 500 for k in range(5)}
    with pytest.raises(RuntimeError, match="stopped"), StagedFiles(helper=helper, fresh=[folder]) as stage:
        for path, data in files.items():
            stage(path, data)
        raise RuntimeError("stopped")
    assert not folder.exists() and not list((tmp_path / "out").iterdir())  # no folder, no staging folder
    with StagedFiles(helper=helper, fresh=[folder]) as stage:
        for path, data in files.items():
            stage(path, data)
        stage(tmp_path / "out" / "sheet.pdf", b"sheet")  # not in a fresh folder: a temporary and a rename
        assert not folder.exists()  # nothing at its name before publishing
        stage.publish()
    assert {p: p.read_bytes() for p in folder.iterdir()} == files
    assert sorted(p.name for p in (tmp_path / "out").iterdir()) == ["labels", "sheet.pdf"]


def test_a_fresh_folder_made_meanwhile_gets_the_files_moved_in(tmp_path):
    from arcflash.output.files import StagedFiles

    folder = tmp_path / "labels"
    with StagedFiles(fresh=[folder]) as stage:
        stage(folder / "a.pdf", b"a")
        folder.mkdir()
        (folder / "other.pdf").write_bytes(b"someone else's")
        stage.publish()
    assert {p.name: p.read_bytes() for p in folder.iterdir()} == {"a.pdf": b"a", "other.pdf": b"someone else's"}
    assert [p.name for p in tmp_path.iterdir()] == ["labels"]


def test_an_old_staging_folder_is_removed_at_the_next_run(tmp_path):
    import time

    from arcflash.output.files import LEFTOVER_AGE_S, remove_leftovers

    old, fresh = tmp_path / ".labels.123-4.part", tmp_path / ".labels.123-5.part"
    for staging in (old, fresh):
        staging.mkdir()
        (staging / "a.pdf").write_bytes(b"a")
    past = time.time() - LEFTOVER_AGE_S - 5
    os.utime(old, (past, past))
    assert remove_leftovers(tmp_path) == [old.name] and not old.exists() and fresh.exists()


def test_staged_files_are_written_in_process_when_no_helper_can_start(tmp_path, monkeypatch):
    import sys

    from arcflash.output.files import StagedFiles

    monkeypatch.setattr(sys, "executable", str(tmp_path / "no-such-python"))
    with StagedFiles(helper=True, fresh=[tmp_path / "labels"]) as stage:
        stage(tmp_path / "labels" / "a.pdf", b"a")
        stage.publish()
    assert (tmp_path / "labels" / "a.pdf").read_bytes() == b"a"
