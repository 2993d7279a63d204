"""Fault currents checked against hand calculations in ohms (common practice:
per-phase Thevenin sum of series impedances referred to one voltage)."""

from __future__ import annotations

import cmath
import math

import pytest

import arcflash
from arcflash.study.faults import solve_scenario
from tests.site.helpers import chain, write_site


def _split(z, x_over_r):
    r = z / math.sqrt(1 + x_over_r**2)
    return complex(r, r * x_over_r)


def test_utility_transformer_cable_chain(tmp_path):
    site = arcflash.load_site(write_site(tmp_path / "chain", chain()))
    table = arcflash.bolted_faults(site)
    # Utility, 10 kA at 13.8 kV, X/R 10, in ohms at 13.8 kV, referred to 480 V by (0.48/13.8)^2.
    z_utility = _split(13.8**2 / (math.sqrt(3) * 13.8 * 10.0), 10.0) * (0.48 / 13.8) ** 2
    # Transformer 1000 kVA, 5.75 %, X/R 6, in ohms at 480 V (tolerance 0 in this site).
    z_transformer = _split(0.0575 * 0.48**2 / 1.0, 6.0)
    # 200 ft of 4/0 copper in steel conduit: (0.063 + j0.051) ohm/1000 ft, NEC Chapter 9 Table 9.
    z_cable = complex(0.063, 0.051) * 0.2
    z_mv = _split(13.8**2 / (math.sqrt(3) * 13.8 * 10.0), 10.0)
    for bus, z, kv in (("MV", z_mv, 13.8), ("LV", z_utility + z_transformer, 0.48),
                       ("END", z_utility + z_transformer + z_cable, 0.48)):
        expected_ka = kv / (math.sqrt(3) * abs(z))
        assert table.loc[bus, "bolted_ka"] == pytest.approx(expected_ka, rel=1e-9), bus
        assert table.loc[bus, "x_over_r"] == pytest.approx(z.imag / z.real, rel=1e-9), bus
    assert table.loc["MV", "bolted_ka"] == pytest.approx(10.0, rel=1e-12)  # the utility's own figure


def test_voltage_factor_scales_current(tmp_path):
    doc = chain(facility={"name": "Chain", "voltage_factor": 1.05})
    scaled = arcflash.bolted_faults(arcflash.load_site(write_site(tmp_path / "c", doc)))
    base = arcflash.bolted_faults(arcflash.load_site(write_site(tmp_path / "d", chain())))
    assert (scaled["bolted_ka"] / base["bolted_ka"]).to_numpy() == pytest.approx(1.05, rel=1e-12)


def test_transformer_tolerance_low_side_for_maximum(tmp_path):
    transformers = chain()["transformers"]
    transformers[0]["z_tolerance_percent"] = 7.5
    site = arcflash.load_site(write_site(tmp_path / "t", chain(transformers=transformers)))
    z_utility = _split(13.8 / (math.sqrt(3) * 10.0), 10.0) * (0.48 / 13.8) ** 2
    # Common practice: maximum fault current with %Z at the low side of its tolerance (x 0.925).
    z_transformer = _split(0.0575 * 0.925 * 0.48**2, 6.0)
    expected = 0.48 / (math.sqrt(3) * abs(z_utility + z_transformer))
    assert arcflash.bolted_faults(site).loc["LV", "bolted_ka"] == pytest.approx(expected, rel=1e-9)


def test_device_current_divides_between_two_sources(tmp_path):
    # A generator at END and the utility side feed a fault at END; the cable breaker carries only the
    # utility side's share: I = V / (Z_utility + Z_transformer + Z_cable) (hand calculation, ohms at 480 V).
    doc = chain(generators=[{"id": "G", "bus": "END", "kva": 500, "kv": 0.48,
                             "subtransient_reactance_percent": 15, "x_over_r": 20, "running": True}])
    result = solve_scenario(arcflash.load_site(write_site(tmp_path / "g", doc)))
    z_up = (_split(13.8 / (math.sqrt(3) * 10.0), 10.0) * (0.48 / 13.8) ** 2
            + _split(0.0575 * 0.48**2, 6.0) + complex(0.063, 0.051) * 0.2)
    x_g = 0.15 * 0.48**2 / 0.5
    z_g = complex(x_g / 20, x_g)
    v_phase = 0.48 / math.sqrt(3)
    row = result.devices.query("fault_bus == 'END' and device == 'CB-C'").iloc[0]
    assert row.current_ka == pytest.approx(v_phase / abs(z_up), rel=1e-6)
    total = v_phase * abs(1 / z_up + 1 / z_g)
    assert result.buses.loc["END", "bolted_ka"] == pytest.approx(total, rel=1e-9)
    assert row.share == pytest.approx(abs(1 / z_up) / abs(1 / z_up + 1 / z_g), rel=1e-6)
    assert (row.from_bus, row.to_bus) == ("LV", "END")  # toward the fault
    # Fault at LV: the generator feeds back through the cable, END -> LV.
    back = result.devices.query("fault_bus == 'LV' and device == 'CB-C'").iloc[0]
    assert (back.from_bus, back.to_bus) == ("END", "LV")
    assert cmath.isfinite(complex(back.current_ka))


def test_de_energised_bus_reported(tmp_path):
    doc = chain(switches=[{"id": "S", "from_bus": "LV", "to_bus": "ISLAND", "normally": "open"}],
                buses=chain()["buses"] + [{"id": "ISLAND", "nominal_kv": 0.48}])
    table = arcflash.bolted_faults(arcflash.load_site(write_site(tmp_path / "i", doc)))
    assert not table.loc["ISLAND", "energized"] and table.loc["ISLAND", "bolted_ka"] == 0.0
    assert table.loc["END", "energized"]


def test_motor_contribution_by_hand(tmp_path):
    # Hand calculation in ohms (common practice): a 400 hp motor group at LV, 1 hp taken as 1 kVA, X'' = 16.7 %
    # on 400 kVA at its rated 460 V, X/R 10: X'' ohms = 0.167 x 0.46^2 / 0.4 (the same ohms on the 480 V bus,
    # no transformer between); in parallel with
    # the utility + transformer path. The fault at LV sums both; the motor feeder device is not involved, and a
    # fault at END (200 ft of 4/0 Cu downstream) sees the parallel combination plus the cable.
    doc = chain(motors=[{"id": "M", "bus": "LV", "size": "400 hp", "kv": 0.46}])
    table = arcflash.bolted_faults(arcflash.load_site(write_site(tmp_path / "m", doc)))
    z_up = _split(13.8 / (math.sqrt(3) * 10.0), 10.0) * (0.48 / 13.8) ** 2 + _split(0.0575 * 0.48**2, 6.0)
    x_m = 0.167 * 0.46**2 / 0.4  # ohms at 460 V
    z_m = complex(x_m / 10.0, x_m)
    z_lv = 1.0 / (1.0 / z_up + 1.0 / z_m)
    v_phase = 0.48 / math.sqrt(3)
    assert table.loc["LV", "bolted_ka"] == pytest.approx(v_phase / abs(z_lv), rel=1e-9)
    assert table.loc["END", "bolted_ka"] == pytest.approx(v_phase / abs(z_lv + complex(0.063, 0.051) * 0.2), rel=1e-9)
    # The motor's share at LV is about 4.5x its rated current (1/X''): a doubled reactance or a dropped motor
    # moves this by several percent.
    without = arcflash.bolted_faults(arcflash.load_site(write_site(tmp_path / "n", chain())))
    motor_ka = v_phase / abs(z_m)
    assert motor_ka == pytest.approx(400 / (math.sqrt(3) * 0.46) / 1000 / 0.167 * (0.48 / 0.46), rel=0.01)
    assert table.loc["LV", "bolted_ka"] - without.loc["LV", "bolted_ka"] > 0.9 * motor_ka


def test_remembered_branches_follow_a_replaced_element():
    # The branches no scenario changes are remembered per site while it holds the same elements: a cable
    # replaced in the site (twice as long) must give the new impedance, and putting the old one back the old.
    from arcflash.study.faults import build_network
    from tests.study.test_clearing import DEMO

    site = arcflash.load_site(DEMO)
    scenario = site.scenario(None)
    ident = next(c for c, cable in site.cables.items() if cable.size is not None)
    before = build_network(site, scenario)
    k = before.branch_ids.index(ident)
    original = site.cables[ident]
    from arcflash.study.uncertainty import _quantity

    longer = _quantity(original.length_ft * 2.0, "ft")
    site.cables[ident] = original.model_copy(update={"length": longer})
    after = build_network(site, scenario)
    # a cable's impedance is proportional to its length (common practice)
    assert after.branch_z_pu[k] == pytest.approx(2.0 * before.branch_z_pu[k], rel=1e-12)
    site.cables[ident] = original
    assert build_network(site, scenario).branch_z_pu[k] == before.branch_z_pu[k]
