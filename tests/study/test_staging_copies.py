"""The copies of a stacked site's arcs followed together (arcflash.study.staging_copies) against each arc
followed alone by staged clearing's own engine (arcflash.study.staging): the same durations, governing
devices, stages and openings, bit for bit (arithmetic of the batching itself, no outside value)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import arcflash
import arcflash.study.staging_copies as copies_module
from arcflash.study.arcing import arcing_currents, equipment_table
from arcflash.study.clearing import clear_arcs, clearing_paths
from arcflash.study.faults import solve_scenario
from arcflash.study.stacking import stacked_site
from arcflash.study.staging import CHUNK_ARCS, StagedArc, _follow_chunk
from arcflash.study.uncertainty import sample_design, sample_site, uncertain_inputs
from tests.study.test_stack_tiling import _demo_with_more_inputs


def _cleared(site, name):
    faults = solve_scenario(site, name, for_clearing=True)
    equipment = equipment_table(site)
    arcs = arcing_currents(site, faults.buses, equipment)
    return clear_arcs(site, site.scenario(name), faults, arcs["arcing_current_ka"],
                      arcs["reduced_arcing_current_ka"], clearing_paths(site, site.scenario(name), faults), equipment)


def _stack(site, samples, seed):
    inputs = uncertain_inputs(site)
    return stacked_site([sample_site(site, inputs, values) for values in sample_design(inputs, samples, seed)],
                        base=site)


def _synthetic(tmp_path):
    from tests.synthetic import synthetic_site

    return arcflash.load_site(synthetic_site(tmp_path / "s", 120, ties=3, substation_size=40))


@pytest.mark.parametrize("source", ["demo", "synthetic"])
def test_copies_followed_together_equal_each_followed_alone(source, tmp_path, monkeypatch):
    # Enough copies for cohorts of many copies, which then part (a device that trips in some copies only):
    # those that part start again as cohorts of their own or are followed alone; line-side splits (the demo's
    # MV-MAIN) leave the cohort. Every result must be the one staging's own engine gives each arc alone.
    site = _demo_with_more_inputs() if source == "demo" else _synthetic(tmp_path)
    stack = _stack(site, 60 if source == "demo" else 24, seed=3)
    seen = {"together": 0, "again": 0, "alone": 0}
    finish, agree, alone_engine = copies_module._Cohort._finish, copies_module._Cohort._agree, copies_module._follow_chunk

    def finished(cohort, *args):
        seen["together"] += cohort.copy.size
        return finish(cohort, *args)

    def agreed(cohort, *args):
        before = sum(len(group) for group in cohort.again)
        found = agree(cohort, *args)
        seen["again"] += sum(len(group) for group in cohort.again) - before
        return found

    def followed_alone(context, arcs):
        seen["alone"] += len(arcs)
        return alone_engine(context, arcs)

    monkeypatch.setattr(copies_module._Cohort, "_finish", finished)
    monkeypatch.setattr(copies_module._Cohort, "_agree", agreed)
    monkeypatch.setattr(copies_module, "_follow_chunk", followed_alone)
    together = {name: _cleared(stack, name) for name in site.scenarios}
    assert seen["together"] > 100 and seen["again"] > 0 and seen["alone"] > 0, seen

    def every_arc_alone(context, buses, named, reduced):
        arcs = [StagedArc(int(b), reduced=bool(r), named=int(d)) for b, d, r in zip(buses, named, reduced)]
        for lo in range(0, len(arcs), CHUNK_ARCS):
            _follow_chunk(context, arcs[lo:lo + CHUNK_ARCS])
        return arcs

    monkeypatch.setattr(copies_module, "follow_copies", every_arc_alone)
    for name in site.scenarios:
        expected = _cleared(stack, name)
        for field in ("table", "stages", "steps"):
            pd.testing.assert_frame_equal(getattr(together[name], field), getattr(expected, field),
                                          check_exact=True, obj=f"{name} {field}")


@pytest.mark.parametrize("source", ["demo", "synthetic"])
def test_following_a_device_before_it_can_clear_in_time_changes_nothing(source, tmp_path, monkeypatch):
    # What a cohort relies on to follow every device any of its copies follows: staging follows a device only
    # once its current reaches the level at which it could clear within the duration cap (below it, it cannot
    # open before the cap; its progress so far is replayed when it is followed). Following every device from
    # the start (that level at zero) must leave every result as it was, bit for bit.
    import arcflash.study.staging as staging

    site = _demo_with_more_inputs() if source == "demo" else _synthetic(tmp_path)
    stack = _stack(site, 12, seed=9)
    expected = {(id(target), name): _cleared(target, name) for target in (site, stack) for name in site.scenarios}
    real = staging.StagingContext

    def every_device(**fields):
        fields["hot_a"] = np.zeros_like(fields["hot_a"])
        return real(**fields)

    monkeypatch.setattr(staging, "StagingContext", every_device)
    for target in (site, stack):
        for name in site.scenarios:
            found, before = _cleared(target, name), expected[(id(target), name)]
            for field in ("table", "stages", "steps"):
                pd.testing.assert_frame_equal(getattr(found, field), getattr(before, field), check_exact=True,
                                              obj=f"{name} {field}")
