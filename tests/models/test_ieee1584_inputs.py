"""Bad input and range-of-model flags for :func:`arcflash.models.ieee1584.evaluate`."""

from __future__ import annotations

import numpy as np
import pytest

from arcflash.models.errors import ModelRangeError
from arcflash.models.ieee1584 import evaluate

GOOD = dict(voltage_kv=0.48, bolted_ka=20.0, gap_mm=32.0, working_distance_mm=609.6, clearing_time_s=0.1,
            reduced_clearing_time_s=0.2, config="VCB", height_mm=508.0, width_mm=508.0, depth_mm=508.0)


def call(**changes):
    return evaluate(**{**GOOD, **changes})


@pytest.mark.parametrize("name", ["voltage_kv", "bolted_ka", "gap_mm", "working_distance_mm",
                                  "clearing_time_s", "reduced_clearing_time_s", "height_mm", "width_mm"])
@pytest.mark.parametrize("bad", [float("nan"), -1.0, 0.0, float("inf"), "ten", True])
def test_bad_values_name_the_parameter(name, bad):
    with pytest.raises(ValueError, match=f"^{name}: "):
        call(**{name: bad})


def test_nan_depth_means_unknown_not_error():
    r = call(depth_mm=float("nan"))
    assert np.isfinite(r.incident_energy_j_cm2)


def test_bad_value_in_an_array_names_the_case():
    with pytest.raises(ValueError, match=r"bolted_ka: expected a finite positive number, got -3.0 \(case 2\)"):
        call(bolted_ka=[10.0, 20.0, -3.0])


def test_all_bad_parameters_reported_together():
    with pytest.raises(ValueError) as info:
        call(gap_mm=-1.0, clearing_time_s=float("nan"), config="VBC")
    message = str(info.value)
    assert "gap_mm" in message and "clearing_time_s" in message and "config" in message


def test_unknown_configuration_lists_the_five():
    with pytest.raises(ValueError, match="expected one of VCB, VCBB, HCB, VOA, HOA"):
        call(config="VXB")
    with pytest.raises(ValueError, match="expected one of VCB, VCBB, HCB, VOA, HOA"):
        call(config=np.array(["VCB", "HOX"] * 1000))


def test_configuration_is_case_insensitive():
    assert float(call(config=" vcbb ").arcing_current_ka) == float(call(config="VCBB").arcing_current_ka)


def test_configuration_must_be_text():
    with pytest.raises(ValueError, match="config: expected a configuration name"):
        call(config=3)


def test_enclosure_required_for_enclosed_configurations():
    with pytest.raises(ValueError, match="height_mm: required for the enclosed configurations"):
        call(height_mm=None)
    with pytest.raises(ValueError, match=r"width_mm: .*missing for case 0"):
        call(config=["VCB", "VOA"], width_mm=[float("nan"), float("nan")])


def test_open_air_needs_no_enclosure():
    r = evaluate(0.48, 20.0, 32.0, 609.6, 0.1, 0.1, "VOA")
    assert float(r.enclosure_correction) == 1.0


def test_inputs_that_do_not_broadcast():
    with pytest.raises(ValueError, match="do not broadcast"):
        call(bolted_ka=[1.0, 2.0], gap_mm=[25.0, 32.0, 40.0])


# Range of the model: IEEE 1584-2018 clause 4.2 (values in arcflash.models.ieee1584_tables).
@pytest.mark.parametrize("changes, parameter", [
    (dict(voltage_kv=0.2), "voltage_kv"),
    (dict(voltage_kv=15.5, gap_mm=104.0), "voltage_kv"),
    (dict(bolted_ka=0.45), "bolted_ka"),
    (dict(bolted_ka=107.0), "bolted_ka"),
    (dict(voltage_kv=4.16, gap_mm=104.0, bolted_ka=66.0), "bolted_ka"),
    (dict(gap_mm=80.0), "gap_mm"),
    (dict(voltage_kv=4.16, gap_mm=18.0), "gap_mm"),
    (dict(working_distance_mm=300.0), "working_distance_mm"),
    (dict(height_mm=1300.0), "height_mm"),
    (dict(width_mm=1300.0), "width_mm"),
    (dict(width_mm=120.0), "width_mm"),
])
def test_out_of_range_is_flagged_and_computed(changes, parameter):
    r = call(**changes)
    assert bool(r.out_of_range)
    assert parameter in str(r.out_of_range_reason)
    assert np.isfinite(r.incident_energy_j_cm2)  # computed anyway
    with pytest.raises(ModelRangeError, match=parameter):
        call(**changes, strict=True)


def test_strict_names_case_value_and_range():
    with pytest.raises(ModelRangeError, match=r"case 1: bolted_ka = 120, expected 0.5–106 kA at 208–600 V"):
        evaluate(0.48, [20.0, 120.0], 32.0, 609.6, 0.1, 0.1, "VCB", 508, 508, strict=True)


def test_in_range_is_not_flagged():
    r = call()
    assert not bool(r.out_of_range) and str(r.out_of_range_reason) == ""


def test_open_air_ignores_enclosure_limits():
    r = call(config="VOA", height_mm=5000.0, width_mm=10.0)
    assert not bool(r.out_of_range)


def test_size_above_cap_uses_cap():
    # IEEE 1584-2018 clause 4.8 (from memory): sizes above 1244.6 mm are taken as 1244.6 mm.
    capped = call(voltage_kv=4.16, gap_mm=104.0, height_mm=2000.0, width_mm=2000.0)
    at_cap = call(voltage_kv=4.16, gap_mm=104.0, height_mm=1244.6, width_mm=1244.6)
    assert float(capped.enclosure_correction) == float(at_cap.enclosure_correction)
    assert bool(capped.out_of_range) and not bool(at_cap.out_of_range)


def test_strict_message_names_every_broken_rule_of_the_first_five_cases():
    # IEEE 1584-2018 clause 4.2 ranges (from memory for the wording): 0.5-106 kA at 208-600 V, working
    # distance at least 305 mm, enclosure width more than 4 x gap. The message is read by the user: every
    # broken rule of the first five flagged cases, then how many more.
    lv = "bolted_ka = 120, expected 0.5–106 kA at 208–600 V"
    near = "working_distance_mm = 300, expected at least 305 mm"
    with pytest.raises(ModelRangeError) as raised:
        evaluate(0.48, [20.0] + [120.0] * 7, 32.0, 300.0, 0.1, 0.1, "VCB", 508, 508, strict=True)
    named = [f"case 0: {near}"] + [f"case {k}: {text}" for k in range(1, 5) for text in (lv, near)]
    assert str(raised.value) == ("outside the range of IEEE 1584-2018 (clause 4.2): " + "; ".join(named)
                                 + " (and 3 more cases)")
    with pytest.raises(ModelRangeError) as one:  # a single case is not numbered
        evaluate(0.48, 120.0, 32.0, 300.0, 0.1, 0.1, "VCB", 508, 508, strict=True)
    assert str(one.value) == f"outside the range of IEEE 1584-2018 (clause 4.2): {lv}; {near}"
    with pytest.raises(ModelRangeError) as narrow:
        evaluate(0.48, 20.0, 32.0, 609.6, 0.1, 0.1, "VCB", 508, 60, strict=True)
    assert str(narrow.value) == ("outside the range of IEEE 1584-2018 (clause 4.2): "
                                 "width_mm = 60 with gap_mm = 32, expected more than 4 × gap")
    with pytest.raises(ModelRangeError) as five:  # exactly five flagged cases: no "more"
        evaluate(0.48, [120.0] * 5, 32.0, 609.6, 0.1, 0.1, "VCB", 508, 508, strict=True)
    assert str(five.value).endswith(f"case 4: {lv}")
    flagged = evaluate(0.48, 120.0, 32.0, 300.0, 0.1, 0.1, "VCB", 508, 508)
    assert str(flagged.out_of_range_reason) == ("bolted_ka outside 0.5–106 kA at 208–600 V; "
                                                "working_distance_mm outside at least 305 mm")


@pytest.mark.parametrize("edge", [
    dict(voltage_kv=0.208), dict(gap_mm=6.35, width_mm=508.0), dict(gap_mm=76.2), dict(working_distance_mm=305.0),
    dict(bolted_ka=0.5), dict(bolted_ka=106.0), dict(height_mm=1244.6), dict(width_mm=1244.6),
    dict(voltage_kv=15.0, gap_mm=104.0), dict(voltage_kv=4.16, gap_mm=19.05), dict(voltage_kv=4.16, gap_mm=254.0, width_mm=1244.6),
    dict(voltage_kv=4.16, gap_mm=104.0, bolted_ka=65.0), dict(voltage_kv=4.16, gap_mm=104.0, bolted_ka=0.2),
])
def test_the_ends_of_the_model_range_are_inside(edge):
    # IEEE 1584-2018 clause 4.2 (from memory): the range is closed, its ends are inside. Each edge case is
    # evaluated beside a case far outside (working distance 100 mm), so that the per-case checks run.
    r = evaluate(**{**GOOD, **edge, "working_distance_mm": [edge.get("working_distance_mm", 609.6), 100.0]})
    assert r.out_of_range.tolist() == [False, True], str(r.out_of_range_reason[0])


def test_a_low_voltage_gap_is_checked_against_the_low_voltage_range():
    # IEEE 1584-2018 clause 4.2 (from memory): 6.35-76.2 mm at 208-600 V, 19.05-254 mm above 600 V.
    r = evaluate(**{**GOOD, "gap_mm": [80.0, 32.0], "width_mm": 508.0})
    assert str(r.out_of_range_reason[0]) == "gap_mm outside 6.35–76.2 mm at 208–600 V"
    assert not bool(r.out_of_range[1])
