"""The cyclic collector is paused while a site is read and studied, and left as it was found."""

from __future__ import annotations

import gc
from pathlib import Path

import pytest

import arcflash
from arcflash.collector import collector_paused

DEMO = Path(__file__).resolve().parents[1] / "site_data" / "fenwick_ridge"


@pytest.mark.parametrize("enabled", [True, False])
def test_the_collector_is_paused_within_and_restored_after_even_on_an_error(enabled):
    was = gc.isenabled()
    try:
        gc.enable() if enabled else gc.disable()
        with collector_paused():
            assert not gc.isenabled()
        assert gc.isenabled() == enabled
        with pytest.raises(KeyError):
            with collector_paused():
                raise KeyError("x")
        assert gc.isenabled() == enabled
    finally:
        gc.enable() if was else gc.disable()


@pytest.mark.parametrize("enabled", [True, False])
def test_reading_and_studying_a_site_leave_the_collector_as_they_found_it(enabled, monkeypatch):
    import arcflash.study.pipeline as pipeline

    seen = []
    real = pipeline._study
    monkeypatch.setattr(pipeline, "_study", lambda *a, **k: (seen.append(gc.isenabled()), real(*a, **k))[1])
    was = gc.isenabled()
    try:
        gc.enable() if enabled else gc.disable()
        site = arcflash.load_site(DEMO)
        assert gc.isenabled() == enabled
        arcflash.run_study(site)
        assert gc.isenabled() == enabled
        assert seen == [False]  # paused while the study runs
    finally:
        gc.enable() if was else gc.disable()
