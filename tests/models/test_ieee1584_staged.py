"""Energy and boundary of staged arcs against the single-stage IEEE 1584-2018 evaluation.

Structural checks: the staged evaluation must reproduce the standard's single
evaluation for one stage (energy and boundary, both arcing cases, every
configuration and voltage band), and a stage split in two at the same current
must give the same energy and boundary (energy linear in T, Eqs. 4-11).
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from arcflash.models.ieee1584 import evaluate
from arcflash.models.ieee1584_staged import staged_incident_energy

CONFIGS = ["VCB", "VCBB", "HCB", "VOA", "HOA"]


def _cases(n, seed=1):
    rng = np.random.default_rng(seed)
    v = rng.choice([0.208, 0.48, 0.6, 1.0, 2.4, 4.16, 13.8, 14.9], n)
    gap = np.where(v <= 0.6, 32.0, np.where(v < 5, 104.0, 152.0))
    return dict(voltage_kv=v, bolted_ka=rng.uniform(1, 40, n), gap_mm=gap, working_distance_mm=rng.uniform(450, 1000, n),
                config=rng.choice(CONFIGS, n), height_mm=np.full(n, 914.0), width_mm=np.full(n, 914.0),
                depth_mm=np.full(n, 914.0)), rng


@pytest.mark.parametrize("reduced", [False, True])
def test_one_stage_equals_the_single_evaluation(reduced):
    cases, rng = _cases(2000)
    t = rng.uniform(0.02, 2.0, 2000)
    single = evaluate(cases["voltage_kv"], cases["bolted_ka"], cases["gap_mm"], cases["working_distance_mm"], t, t,
                      cases["config"], cases["height_mm"], cases["width_mm"], cases["depth_mm"])
    staged = staged_incident_energy(np.arange(2000), 2000, duration_s=t, reduced=reduced, **cases)
    energy = single.reduced_incident_energy_j_cm2 if reduced else single.incident_energy_j_cm2
    boundary = single.reduced_arc_flash_boundary_mm if reduced else single.arc_flash_boundary_mm
    np.testing.assert_allclose(staged.incident_energy_j_cm2, energy, rtol=1e-12)
    np.testing.assert_allclose(staged.arc_flash_boundary_mm, boundary, rtol=1e-12)


@settings(max_examples=40, deadline=None)
@given(v=st.sampled_from([0.208, 0.48, 1.0, 4.16, 13.8]), ibf=st.floats(1.0, 40.0), config=st.sampled_from(CONFIGS),
       first=st.floats(0.01, 1.0), second=st.floats(0.01, 1.0), reduced=st.booleans())
def test_a_stage_split_in_two_is_the_same_arc(v, ibf, config, first, second, reduced):
    gap = 32.0 if v <= 0.6 else 104.0
    common = dict(gap_mm=[gap] * 2, working_distance_mm=[610.0] * 2, config=[config] * 2, height_mm=[914.0] * 2,
                  width_mm=[914.0] * 2, depth_mm=[914.0] * 2, reduced=reduced)
    split = staged_incident_energy([0, 0], 1, [v] * 2, [ibf] * 2, duration_s=[first, second], **common)
    whole = staged_incident_energy([0, 1], 2, [v] * 2, [ibf] * 2, duration_s=[first + second, first], **common)
    assert split.incident_energy_j_cm2[0] == pytest.approx(whole.incident_energy_j_cm2[0], rel=1e-12)
    assert split.arc_flash_boundary_mm[0] == pytest.approx(whole.arc_flash_boundary_mm[0], rel=1e-12)
    # More time at any current never lowers the energy or the boundary.
    assert split.incident_energy_j_cm2[0] > whole.incident_energy_j_cm2[1]
    assert split.arc_flash_boundary_mm[0] > whole.arc_flash_boundary_mm[1]
