"""Bolted fault currents against pandapower (test-only reference).

Both sides use the same impedances and the same assumptions: voltage factor 1,
no IEC 60909 correction factors (see ``pandapower_reference.py``). Agreement
is required within 0.1 %; the remaining difference (about 1e-7) comes from our
closed switches, which have 1e-6 pu impedance where pandapower's are ideal.
Buses fed by motors only are de-energised for us (motors do not energise a
bus) but not for pandapower, so only energised buses are compared.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

import arcflash
from arcflash.study.faults import build_network
from tests.study.pandapower_reference import pandapower_bolted_ka
from tests.synthetic import synthetic_site

DEMO = Path(__file__).resolve().parents[2] / "site_data" / "fenwick_ridge"


def _compare(site, scenario):
    net = build_network(site, site.scenario(scenario))
    ours = arcflash.bolted_faults(site, scenario)
    theirs = pandapower_bolted_ka(net, s_base_mva=site.facility.s_base_mva)
    live = ours["energized"].to_numpy()
    assert live.sum() > 0
    np.testing.assert_allclose(ours["bolted_ka"].to_numpy()[live], theirs[live], rtol=1e-3)


@pytest.mark.parametrize("scenario", ["normal", "utility-min", "tie-closed", "on-generator", "motors-off"])
def test_demo_facility(scenario):
    _compare(arcflash.load_site(DEMO), scenario)


@pytest.mark.parametrize("ties, scenario", [(0, "normal"), (6, "ties-closed")])
def test_synthetic_networks(tmp_path, ties, scenario):
    site = arcflash.load_site(synthetic_site(tmp_path / "s", 300, ties=ties, substation_size=60))
    _compare(site, scenario)
