"""Uncertainty runs (issue 16): zero tolerances give the plain study exactly; a one-input case against its
closed form; the same seed gives the same result however the samples are split and wherever they run;
widening a tolerance never narrows a band."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import yaml
from click.testing import CliRunner

import arcflash
from arcflash.cli import main
from arcflash.study.uncertainty import run_chunk, sample_design, uncertain_inputs, uncertainty

DEMO = Path(__file__).resolve().parents[2] / "site_data" / "fenwick_ridge"

#: One utility (level between 100 and 500 MVA at 13.8 kV), one transformer, one bus, no device: the arc lasts
#: the 2 s cap whatever the current (a fixed clearing time). Invented data.
SMALL = {
    "facility": {"name": "one bus", "tolerances": {"transformer_z": "as_stated", "cable_length_percent": 0}},
    "buses": [{"id": "HV", "nominal_kv": 13.8}, {"id": "LV", "nominal_kv": 0.48, "equipment_class": "switchgear-lv"}],
    "utilities": [{"id": "U", "bus": "HV", "kv": 13.8, "max": {"fault": "500 MVA", "x_over_r": 10},
                   "min": {"fault": "100 MVA", "x_over_r": 10}}],
    "transformers": [{"id": "T", "primary_bus": "HV", "secondary_bus": "LV", "kva": 1500, "primary_kv": 13.8,
                      "secondary_kv": 0.48, "z_percent": 5.75, "x_over_r": 6, "z_tolerance_percent": 0}],
}


def _small(tmp_path, **tolerances):
    doc = yaml.safe_load(yaml.safe_dump(SMALL))
    doc["facility"]["tolerances"].update(tolerances)
    folder = tmp_path / "small"
    folder.mkdir(exist_ok=True)
    (folder / "site.yaml").write_text(yaml.safe_dump(doc), encoding="utf-8")
    return arcflash.load_site(folder)


def _as_stated(site, **tolerances):
    """``site`` with every tolerance zero or as stated, but those given."""
    stated = {"utility_level": "as_stated", "transformer_z": "as_stated", "cable_length_percent": 0.0,
              "device_band": "slowest", "motor_running_fraction_min": 1.0}
    facility = site.facility.model_copy(update={"tolerances": site.facility.tolerances.model_copy(update={
        **stated, **tolerances})})
    return type(site)(**{**site.__dict__, "facility": facility})


def test_with_every_tolerance_zero_each_sample_is_the_plain_study(tmp_path):
    site = _as_stated(arcflash.load_site(DEMO))
    assert uncertain_inputs(site) == []
    plain = arcflash.run_study(site).governing.reindex(list(site.buses))
    energy, boundary, bolted = run_chunk(site, [], sample_design([], 2, seed=3))
    for k in range(2):
        assert np.array_equal(energy[k], plain["incident_energy_governing_cal_cm2"].to_numpy(float), equal_nan=True)
        assert np.array_equal(boundary[k], plain["arc_flash_boundary_governing_mm"].to_numpy(float), equal_nan=True)
        assert np.array_equal(bolted[k], plain["bolted_ka"].to_numpy(float), equal_nan=True)


def _bolted_ka(level_mva):
    """Closed form (ohms at 480 V, prefault voltage factor 1): I = V / (sqrt(3) |Zs + Zt|), the source
    V^2/S at X/R 10 and the transformer %Z/100 V^2/S_T at X/R 6 (common practice)."""
    kv = 0.48

    def z(magnitude, x_over_r):
        angle = math.atan(x_over_r)
        return complex(magnitude * math.cos(angle), magnitude * math.sin(angle))

    total = z(kv ** 2 / level_mva, 10.0) + z(0.0575 * kv ** 2 / 1.5, 6.0)
    return kv / (math.sqrt(3.0) * abs(total))


def test_one_input_against_its_closed_form(tmp_path):
    # The level is uniform between 100 and 500 MVA; the bolted current rises with it, so its q-quantile is the
    # current at the level's q-quantile. A Latin hypercube puts exactly one of n samples in each 1/n of the
    # range: the sample quantile of the level lies within 400/n MVA of the true one, and the current within
    # the change of the current over that span (the sampling error the test allows).
    site = _small(tmp_path)
    samples = 200
    result = uncertainty(site, samples=samples, seed=7, chunk_size=100)
    assert [i.name for i in result.inputs] == ["utilities[U].level"]
    bolted = result.bolted_ka[:, list(site.buses).index("LV")]
    for q in (5, 50, 95):
        level = 100.0 + q / 100.0 * 400.0
        allowed = _bolted_ka(level + 400.0 / samples) - _bolted_ka(level - 400.0 / samples)
        assert np.percentile(bolted, q) == pytest.approx(_bolted_ka(level), abs=allowed)
    assert bolted.min() >= _bolted_ka(100.0) - 1e-9 and bolted.max() <= _bolted_ka(500.0) + 1e-9
    # the driver of the bus's energy, against scipy's own Spearman correlation (an independent computation)
    from scipy.stats import spearmanr

    driver = result.drivers[result.drivers["bus"] == "LV"].iloc[0]
    column = result.energy_cal_cm2[:, list(site.buses).index("LV")]
    assert driver["input"] == "utilities[U].level"
    assert driver["spearman_rho"] == pytest.approx(spearmanr(result.design[:, 0], column).statistic, abs=1e-12)


def test_the_same_seed_gives_the_same_result_whatever_the_split(tmp_path):
    site = _small(tmp_path, gap_tolerance_mm=5.0, working_distance_tolerance_mm=50.0)
    whole = uncertainty(site, samples=6, seed=11, chunk_size=6)
    for other in (uncertainty(site, samples=6, seed=11, chunk_size=1),
                  uncertainty(site, samples=6, seed=11, chunk_size=4, workers=1),
                  uncertainty(site, samples=6, seed=11, chunk_size=2, workers=2)):
        assert np.array_equal(other.energy_cal_cm2, whole.energy_cal_cm2, equal_nan=True)
        assert np.array_equal(other.boundary_mm, whole.boundary_mm, equal_nan=True)
        assert other.bands.equals(whole.bands)
    assert not np.array_equal(uncertainty(site, samples=6, seed=12).energy_cal_cm2, whole.energy_cal_cm2)


@pytest.mark.parametrize("narrow, wide", [
    ({"utility_level": "as_stated", "working_distance_tolerance_mm": 50.0},
     {"utility_level": "as_stated", "working_distance_tolerance_mm": 150.0}),
    ({"utility_level": "as_stated", "working_distance_tolerance_mm": 10.0},
     {"utility_level": "as_stated", "working_distance_tolerance_mm": 300.0}),
])
def test_widening_a_tolerance_never_narrows_a_band(tmp_path, narrow, wide):
    # The working distance alone, widened symmetrically: the energy falls monotonically with the distance, so
    # with the same seed each sample's distance moves outward and every percentile of the band does too. (For an input the energy is not monotone in, such as the gap, a percentile band can
    # narrow when its range widens: the property is not claimed there.)
    first = uncertainty(_small(tmp_path, **narrow), samples=40, seed=5)
    second = uncertainty(_small(tmp_path, **wide), samples=40, seed=5)
    for name, unit in (("incident_energy", "cal_cm2"), ("arc_flash_boundary", "mm")):
        assert (second.bands[f"{name}_p5_{unit}"] <= first.bands[f"{name}_p5_{unit}"] + 1e-9).all()
        assert (second.bands[f"{name}_p95_{unit}"] >= first.bands[f"{name}_p95_{unit}"] - 1e-9).all()
        assert (second.bands[f"{name}_max_{unit}"] >= first.bands[f"{name}_max_{unit}"] - 1e-9).all()


def test_study_command_writes_the_bands_and_drivers(tmp_path):
    runner = CliRunner()
    site = _small(tmp_path)
    result = runner.invoke(main, ["study", str(site.path), "--out", str(tmp_path / "out"), "--quiet",
                                  "--uncertainty", "8", "--seed", "2"])
    assert result.exit_code == 0, result.output
    from pypdf import PdfReader

    report = " ".join(" ".join(p.extract_text() for p in PdfReader(tmp_path / "out" / "report.pdf").pages).split())
    assert "How sure is each number" in report and "8 Latin-hypercube samples (seed 2)" in report
    assert "utilities[U].level (+1.00)" in report
    governing = (tmp_path / "out" / "governing.csv").read_text(encoding="utf-8").splitlines()[0]
    assert "incident_energy_p95_cal_cm2" in governing and "probability_above_category_edge" in governing
    assert "Uncertainty: 8 samples of 1 inputs (seed 2)" in result.output
    bands = (tmp_path / "out" / "uncertainty.csv").read_text(encoding="utf-8")
    assert "incident_energy_p95_cal_cm2" in bands and "probability_above_category_edge" in bands
    drivers = (tmp_path / "out" / "drivers.csv").read_text(encoding="utf-8")
    assert "utilities[U].level" in drivers
    alone = runner.invoke(main, ["study", str(site.path), "--out", str(tmp_path / "x"), "--workers", "2"])
    assert alone.exit_code == 2 and "--workers needs --uncertainty" in alone.output


def test_a_remembered_device_bank_follows_the_site_it_was_built_from():
    # the bank (device curves and their clearing thresholds) is shared by the samples of a run; a device
    # replaced in the site gives a bank of its own
    from arcflash.study.device_bank import device_bank

    site = arcflash.load_site(DEMO)
    scenario = site.scenarios["normal"]
    ids = list(site.devices)
    first = device_bank(site, scenario, ids)
    assert device_bank(site, scenario, ids) is first
    assert device_bank(site, site.scenarios["maintenance-a"], ids) is not first
    changed = dict(site.devices)
    unit = changed["FDR-A2"].trip_unit.model_copy(update={"instantaneous_pickup": 40.0})
    changed["FDR-A2"] = changed["FDR-A2"].model_copy(update={"trip_unit": unit})
    other = type(site)(**{**site.__dict__, "devices": changed})
    again = device_bank(other, scenario, ids)
    assert again is not first
    k = ids.index("FDR-A2")
    assert again.threshold_a(0.05)[k] > first.threshold_a(0.05)[k]  # a higher instantaneous pickup


def _governing(site, inputs, values):
    """Governing energy and bolted current of every bus of one sample [cal/cm2, kA]."""
    energy, _, bolted = run_chunk(site, inputs, np.array([values], dtype=float))
    return energy[0], bolted[0]


def test_trip_units_at_the_slow_edge_of_their_band_are_the_plain_study_and_faster_edges_never_higher():
    site = _as_stated(arcflash.load_site(DEMO), device_band="within_band")
    inputs = uncertain_inputs(site)
    assert inputs and all(i.name.endswith(".band_position") and (i.low, i.high) == (-1.0, 1.0) for i in inputs)
    plain = arcflash.run_study(site).governing.reindex(list(site.buses))
    slowest, _ = _governing(site, inputs, [1.0] * len(inputs))
    # the same curve reached two ways (settings moved, or tolerances applied): equal but for the order of
    # floating-point products
    assert np.allclose(slowest, plain["incident_energy_governing_cal_cm2"].to_numpy(float), rtol=1e-9,
                       equal_nan=True)
    for position in (-1.0, 0.0):  # a faster curve everywhere clears no later (common practice: the band)
        faster, _ = _governing(site, inputs, [position] * len(inputs))
        both = np.isfinite(faster) & np.isfinite(slowest)
        assert (faster[both] <= slowest[both] * (1 + 1e-9)).all()
        assert (faster[both] < slowest[both] * (1 - 1e-6)).any()


def test_a_motor_running_at_a_share_of_its_size_contributes_less():
    site = _as_stated(arcflash.load_site(DEMO), motor_running_fraction_min=0.25)
    inputs = uncertain_inputs(site)
    assert {i.name for i in inputs} == {f"motors[{m}].running_fraction" for m in site.motors}
    assert all((i.low, i.high) == (0.25, 1.0) for i in inputs)
    plain = arcflash.run_study(site).governing.reindex(list(site.buses))
    full, bolted_full = _governing(site, inputs, [1.0] * len(inputs))
    assert np.array_equal(full, plain["incident_energy_governing_cal_cm2"].to_numpy(float), equal_nan=True)
    _, bolted_quarter = _governing(site, inputs, [0.25] * len(inputs))
    at = list(site.buses).index("MCC-4KV")  # the 1000 hp motor's own bus: its share of the fault current falls
    assert bolted_quarter[at] < bolted_full[at]
    live = np.isfinite(bolted_full)
    assert (bolted_quarter[live] <= bolted_full[live] * (1 + 1e-12)).all()


def _assert_samples_together_equal_alone(site, samples, seed):
    """Each copy's energy, boundary and bolted current in one stacked chunk equal its sample's own study,
    bit for bit."""
    from arcflash.study.uncertainty import sample_site

    inputs = uncertain_inputs(site)
    design = sample_design(inputs, samples, seed=seed)
    energy, boundary, bolted = run_chunk(site, inputs, design)
    for k, values in enumerate(design):
        alone = arcflash.run_study(sample_site(site, inputs, values)).governing.reindex(list(site.buses))
        assert np.array_equal(energy[k], alone["incident_energy_governing_cal_cm2"].to_numpy(float), equal_nan=True)
        assert np.array_equal(boundary[k], alone["arc_flash_boundary_governing_mm"].to_numpy(float), equal_nan=True)
        assert np.array_equal(bolted[k], alone["bolted_ka"].to_numpy(float), equal_nan=True)


def test_samples_studied_together_equal_each_sample_studied_alone():
    # the sample axis: a chunk's samples run as disconnected copies of the site in one study; each copy's
    # energy, boundary and bolted current equal its sample's own study, bit for bit
    _assert_samples_together_equal_alone(arcflash.load_site(DEMO), 5, seed=11)


def test_samples_of_a_site_with_loops_and_ties_studied_together_equal_each_studied_alone(tmp_path):
    # the same on a synthetic site whose scenarios close ties (several loops per copy, staged arcs on loops,
    # line-side and multi-source cases): a stack's solvers keep every copy's arithmetic its own
    from tests.synthetic import synthetic_site

    site = arcflash.load_site(synthetic_site(tmp_path / "s", 120, ties=3, substation_size=40))
    _assert_samples_together_equal_alone(site, 3, seed=5)


@pytest.mark.parametrize("within_s", [0.05, 0.5, 2.0, math.inf])
def test_clearing_thresholds_taken_several_halvings_at_a_time_equal_one_halving_at_a_time(monkeypatch, within_s):
    # the bisection evaluates a tree of midpoints per call for few devices: the same midpoints as one
    # halving after another, so the same thresholds, bit for bit (arithmetic of the bisection itself)
    import arcflash.study.device_bank as bank_module
    from arcflash.study.faults import build_network

    site = arcflash.load_site(DEMO)
    scenario = site.scenario("maintenance-a")
    bank = bank_module.DeviceBank(site, scenario, build_network(site, scenario).device_ids)
    devices = np.arange(bank.kind.size)
    tree = bank._bisect(devices, within_s)
    monkeypatch.setattr(bank_module, "BISECTION_LEVELS", 1)
    assert np.array_equal(tree, bank._bisect(devices, within_s))
    found = np.isfinite(tree)
    above = bank.clearing_time_s(devices[found], tree[found] * (1.0 + 1e-4))  # found within 1e-4 of itself
    assert (above <= within_s).all()  # just above its threshold a device clears in time
    assert np.isfinite(above).all()  # within an infinite time: within a finite one
    at = bank.clearing_time_s(devices[found], tree[found])
    assert (at > within_s).all() or within_s == math.inf  # at it, not yet: a lower bound
    if within_s == math.inf:  # the smallest current that makes a device clear at all: its smallest pickup
        assert np.isinf(at).all()
        assert (tree[found] > 1.0).all()  # above 1 A for every device of the demo, not the bisection's 1 mA end


def test_a_part_that_solves_its_columns_together_is_never_stacked_with_another_copy():
    # Factors of at least COLUMNS_TOGETHER_ROWS rows solve several right-hand sides in one SuperLU call,
    # whose rounding depends on the batch; that is safe only because such a part's copy is stacked alone
    # (its batches are then those of its sample studied alone). A copy's parts have at most its buses plus
    # the one node a line-side split adds.
    from types import SimpleNamespace

    from arcflash.models.network_factors import COLUMNS_TOGETHER_ROWS
    from arcflash.study.stacking import stack_size

    assert stack_size(SimpleNamespace(buses=range(COLUMNS_TOGETHER_ROWS - 1))) == 1
    largest_shared = max(n for n in range(1, COLUMNS_TOGETHER_ROWS) if stack_size(SimpleNamespace(buses=range(n))) > 1)
    assert largest_shared + 1 < COLUMNS_TOGETHER_ROWS


def test_a_site_with_loops_gives_the_same_result_whatever_the_chunks(tmp_path):
    # the synthetic site with ties closed (staged arcs on loops, states solved from the base state with
    # low-rank updates): a sample's arcs fall into different batches with chunks of 24, 5 or 1 samples, and
    # a batch's make-up must not reach even the last digit of any result (solves column by column)
    from tests.synthetic import synthetic_site

    site = arcflash.load_site(synthetic_site(tmp_path / "s", 120, ties=3, substation_size=40))
    inputs = uncertain_inputs(site)
    design = sample_design(inputs, 24, seed=3)
    whole = run_chunk(site, inputs, design)
    for size in (5, 1):
        parts = [run_chunk(site, inputs, design[lo:lo + size]) for lo in range(0, len(design), size)]
        for k in range(3):
            assert np.array_equal(np.concatenate([p[k] for p in parts]), whole[k], equal_nan=True)


def test_a_digitised_curve_inside_its_band_lies_between_its_minimum_and_total_clearing_curves():
    # a fuse or thermal-magnetic breaker sampled inside its band: +1 is the total-clearing curve the study
    # uses (bit for bit), -1 the library's minimum curve, and in between lg t moves monotonically from one
    # to the other at every current (the band as the library draws it; instantaneous region unchanged)
    from arcflash.models.curves import point_curve_time_s
    from arcflash.study.device_bank import DeviceBank
    from arcflash.study.faults import build_network
    from arcflash.study.uncertainty import _at_band_position

    site = arcflash.load_site(DEMO)
    scenario = site.scenario("normal")
    ids = build_network(site, scenario).device_ids
    fuse = ids.index("F-TA")
    curve = site.curves[site.devices["F-TA"].curve].to_model()
    current = np.geomspace(curve.current_a[0], curve.current_a[-1] * 3.0, 200)
    device = np.full(current.size, fuse)
    plain = DeviceBank(site, scenario, ids).clearing_time_s(device, current)
    times = {}
    for position in (-1.0, -0.5, 0.0, 0.5, 1.0):
        devices = dict(site.devices, **{"F-TA": _at_band_position(site.devices["F-TA"], position)})
        moved = type(site)(**{**site.__dict__, "devices": devices})
        times[position] = DeviceBank(moved, scenario, ids).clearing_time_s(device, current)
    assert np.array_equal(times[1.0], plain)
    assert np.array_equal(plain, point_curve_time_s(current, curve, band="max"))
    np.testing.assert_allclose(times[-1.0], point_curve_time_s(current, curve, band="min"), rtol=1e-12)
    ordered = [times[p] for p in (-1.0, -0.5, 0.0, 0.5, 1.0)]
    assert all((a <= b * (1 + 1e-12)).all() for a, b in zip(ordered, ordered[1:]))
    assert (times[0.0] < plain * (1 - 1e-3)).any()


def test_devices_sampled_inside_their_band_are_trip_units_with_tolerances_and_curves_with_a_minimum_curve():
    site = arcflash.load_site(DEMO)
    banded = {i.ident for i in uncertain_inputs(site) if i.section == "devices"}
    for ident, device in site.devices.items():
        if device.trip_unit is not None:
            expected = device.trip_unit.pickup_tolerance > 0 or device.trip_unit.time_tolerance > 0
        elif device.curve is not None:
            expected = site.curves[device.curve].min_time_s is not None
        else:  # a relay: one characteristic, no band in the site data
            expected = False
        assert (ident in banded) == expected, ident
    assert any(site.devices[i].curve for i in banded) and any(site.devices[i].trip_unit for i in banded)
