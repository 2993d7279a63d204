"""Time-current curves and clearing times.

Relay curve values are hand-computed from the published constants
(shared/reference/protection.md: IEEE C37.112 and IEC 60255-151), each shown
as the arithmetic beside it.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from arcflash.models.curves import (
    DefiniteTimeStage,
    PointCurve,
    RelaySettings,
    TripUnitSettings,
    iec_60255_151_time_s,
    ieee_c37_112_time_s,
    point_curve_time_s,
    relay_clearing_time_s,
    trip_unit_clearing_time_s,
    trip_unit_trip_time_s,
)

# Hand-computed from IEEE C37.112: t = A/(M^p - 1) + B at TD = 1.
IEEE_CASES = [
    ("moderately inverse", 2, 0.0515 / (2**0.02 - 1) + 0.1140),   # 3.8032
    ("moderately inverse", 5, 0.0515 / (5**0.02 - 1) + 0.1140),   # 1.6883
    ("moderately inverse", 10, 0.0515 / (10**0.02 - 1) + 0.1140),  # 1.2068
    ("very inverse", 2, 19.61 / 3 + 0.491),                        # 7.0277
    ("very inverse", 5, 19.61 / 24 + 0.491),                       # 1.3081
    ("very inverse", 10, 19.61 / 99 + 0.491),                      # 0.6891
    ("extremely inverse", 2, 28.2 / 3 + 0.1217),                   # 9.5217
    ("extremely inverse", 5, 28.2 / 24 + 0.1217),                  # 1.2967
    ("extremely inverse", 10, 28.2 / 99 + 0.1217),                 # 0.4065
]
# Hand-computed from IEC 60255-151: t = k/(M^alpha - 1) at TMS = 1.
IEC_CASES = [
    ("standard inverse", 2, 0.14 / (2**0.02 - 1)),    # 10.029
    ("standard inverse", 5, 0.14 / (5**0.02 - 1)),    # 4.2797
    ("standard inverse", 10, 0.14 / (10**0.02 - 1)),  # 2.9706
    ("very inverse", 2, 13.5 / 1),                    # 13.5
    ("very inverse", 5, 13.5 / 4),                    # 3.375
    ("very inverse", 10, 13.5 / 9),                   # 1.5
    ("extremely inverse", 2, 80 / 3),                 # 26.667
    ("extremely inverse", 5, 80 / 24),                # 3.3333
    ("extremely inverse", 10, 80 / 99),               # 0.80808
    ("long-time inverse", 2, 120 / 1),                # 120
    ("long-time inverse", 5, 120 / 4),                # 30
    ("long-time inverse", 10, 120 / 9),               # 13.333
]


@pytest.mark.parametrize("curve, m, expected", IEEE_CASES)
def test_ieee_c37_112(curve, m, expected):
    # Source: IEEE C37.112 constants (shared/reference/protection.md), hand-computed.
    assert float(ieee_c37_112_time_s(m, 1.0, curve)) == pytest.approx(expected, rel=1e-12)
    assert float(ieee_c37_112_time_s(m, 2.5, curve)) == pytest.approx(2.5 * expected, rel=1e-12)


@pytest.mark.parametrize("curve, m, expected", IEC_CASES)
def test_iec_60255_151(curve, m, expected):
    # Source: IEC 60255-151 constants (shared/reference/protection.md), hand-computed.
    assert float(iec_60255_151_time_s(m, 1.0, curve)) == pytest.approx(expected, rel=1e-12)


def test_iec_standard_inverse_published_check():
    # Source: shared/reference/protection.md (derived check value): standard inverse, TMS 1, M = 10 -> 2.971 s.
    assert float(iec_60255_151_time_s(10, 1.0, "standard inverse")) == pytest.approx(2.971, abs=5e-4)


def test_no_operation_at_or_below_pickup():
    assert np.isinf(ieee_c37_112_time_s([0.5, 1.0], 1.0, "very inverse")).all()
    assert np.isinf(iec_60255_151_time_s([0.0, 1.0], 1.0, "standard inverse")).all()


def test_unknown_curve_named():
    with pytest.raises(ValueError, match="expected one of moderately inverse"):
        ieee_c37_112_time_s(2.0, 1.0, "inverse-ish")
    with pytest.raises(ValueError, match="for IEC 60255-151"):
        RelaySettings(pickup_a=100, standard="IEC 60255-151", curve="moderately inverse")


def test_relay_elements_and_breaker_time():
    relay = RelaySettings(pickup_a=600.0, standard="IEEE C37.112", curve="very inverse", time_dial=2.0,
                          definite_time=(DefiniteTimeStage(3000.0, 0.4),), instantaneous_a=9000.0)
    breaker = 5 / 60  # IEEE 1584-2002 Table 1: medium-voltage breaker, 5 cycles (common practice)
    t = relay_clearing_time_s([1200.0, 2999.0, 3001.0, 8999.0, 9001.0], relay)
    assert t[0] == pytest.approx(2.0 * (19.61 / 3 + 0.491) + breaker)      # inverse, M = 2
    assert t[1] == pytest.approx(2.0 * (19.61 / ((2999 / 600) ** 2 - 1) + 0.491) + breaker)  # inverse
    assert t[2] == pytest.approx(0.4 + breaker)                             # definite time
    assert t[3] == pytest.approx(0.4 + breaker)
    assert t[4] == pytest.approx(0.016 + breaker)                           # instantaneous, 1 cycle
    assert np.isinf(relay_clearing_time_s(500.0, relay))


UNIT = TripUnitSettings(rating_a=1000.0, long_time_pickup=1.0, long_time_delay_s=10.0, short_time_pickup=4.0,
                        short_time_delay_s=0.2, instantaneous_pickup=10.0, pickup_tolerance=0.10,
                        time_tolerance=0.15, breaker_cycles=3.0)


def test_trip_unit_regions_nominal():
    # Hand-worked on the nominal curve: LTPU 1000 A; long time t = 10 (6/M)^2; short time above 4000 A:
    # 0.2 s; instantaneous above 10,000 A: 0 s.
    t = trip_unit_trip_time_s([999.0, 1001.0, 3000.0, 3999.0, 4001.0, 9999.0, 10001.0], UNIT, "nominal")
    assert np.isinf(t[0])                                   # below long-time pickup
    assert t[1] == pytest.approx(10 * (6 / 1.001) ** 2)     # just above pickup
    assert t[2] == pytest.approx(10 * (6 / 3) ** 2)         # 40 s at 3 x
    assert t[3] == pytest.approx(10 * (6 / 3.999) ** 2)     # just below short-time pickup
    assert t[4] == pytest.approx(0.2)                       # just above: short-time delay
    assert t[5] == pytest.approx(0.2)                       # just below instantaneous
    assert t[6] == pytest.approx(0.0)                       # instantaneous


def test_trip_unit_band_edges():
    # Max band: pickups +10 %, delays +15 %: the short-time pickup moves to 4400 A.
    t = trip_unit_trip_time_s([4300.0, 4500.0, 10500.0, 11100.0], UNIT, "max")
    assert t[0] == pytest.approx(10 * 1.15 * (6 / (4300 / 1100)) ** 2)
    assert t[1] == pytest.approx(0.2 * 1.15)
    assert t[2] == pytest.approx(0.2 * 1.15)                # still below instantaneous (11,000 A)
    assert t[3] == pytest.approx(0.0)
    clearing = trip_unit_clearing_time_s(11100.0, UNIT, "max")
    assert float(clearing) == pytest.approx(3 / 60)        # 3 cycles, IEEE 1584-2002 Table 1 (LV power)


def test_short_time_i2t():
    unit = TripUnitSettings(rating_a=1000.0, short_time_pickup=2.0, short_time_delay_s=0.3, short_time_i2t=True,
                            pickup_tolerance=0.0, time_tolerance=0.0)
    t = trip_unit_trip_time_s([2500.0, 5000.0, 10000.0, 20000.0], unit, "nominal")
    assert t[0] == pytest.approx(min(10 * (6 / 2.5) ** 2, 0.3 * (10 / 2.5) ** 2))  # 4.8 s on the ramp
    assert t[1] == pytest.approx(0.3 * (10 / 5) ** 2)
    assert t[2] == pytest.approx(0.3)
    assert t[3] == pytest.approx(0.3)                       # flat beyond 10 x


@given(st.floats(50.0, 50000.0))
def test_trip_unit_band_order(current):
    t_min = float(trip_unit_trip_time_s(current, UNIT, "min"))
    t_nom = float(trip_unit_trip_time_s(current, UNIT, "nominal"))
    t_max = float(trip_unit_trip_time_s(current, UNIT, "max"))
    assert t_min <= t_nom <= t_max


FUSE = PointCurve(current_a=(200.0, 400.0, 1000.0, 3000.0), max_time_s=(100.0, 10.0, 0.8, 0.02),
                  min_time_s=(60.0, 5.0, 0.4, 0.01), instantaneous_a=6000.0, instantaneous_s=0.008, name="F-200")


def test_point_curve_exact_at_points():
    np.testing.assert_allclose(point_curve_time_s(FUSE.current_a, FUSE, "max"), FUSE.max_time_s, rtol=1e-12)
    np.testing.assert_allclose(point_curve_time_s(FUSE.current_a, FUSE, "min"), FUSE.min_time_s, rtol=1e-12)


def test_point_curve_log_log_between_points():
    # Log-log straight line between (400 A, 10 s) and (1000 A, 0.8 s) at the geometric mean current.
    i = (400.0 * 1000.0) ** 0.5
    assert float(point_curve_time_s(i, FUSE)) == pytest.approx((10.0 * 0.8) ** 0.5, rel=1e-12)


def test_point_curve_ends():
    t = point_curve_time_s([150.0, 5000.0, 7000.0], FUSE)
    assert np.isinf(t[0])                      # below the curve: does not clear
    assert t[1] == pytest.approx(0.02)         # beyond the last point: last time holds
    assert t[2] == pytest.approx(0.008)        # current-limiting range


@pytest.mark.parametrize("kwargs, message", [
    (dict(current_a=(100.0,), max_time_s=(1.0,)), "at least two points"),
    (dict(current_a=(100.0, 100.0), max_time_s=(1.0, 0.5)), "strictly increasing"),
    (dict(current_a=(100.0, 200.0), max_time_s=(1.0, 2.0)), "never increasing"),
    (dict(current_a=(100.0, 200.0), max_time_s=(1.0, 0.5), min_time_s=(2.0, 0.4)), "min_time_s at or below"),
    (dict(current_a=(100.0, 200.0), max_time_s=(1.0,)), "one time per current"),
])
def test_bad_curves_rejected(kwargs, message):
    with pytest.raises(ValueError, match=message):
        PointCurve(**kwargs, name="bad")


RELAY = RelaySettings(pickup_a=400.0, standard="IEC 60255-151", curve="extremely inverse", time_dial=0.3,
                      definite_time=(DefiniteTimeStage(2400.0, 0.3),), instantaneous_a=8000.0)


@given(st.lists(st.floats(1.0, 1e5), min_size=2, max_size=30))
def test_clearing_time_never_increases_with_current(currents):
    currents = np.sort(np.asarray(currents))
    for times in (relay_clearing_time_s(currents, RELAY),
                  trip_unit_clearing_time_s(currents, UNIT, "max"),
                  trip_unit_clearing_time_s(currents, UNIT, "min"),
                  point_curve_time_s(currents, FUSE, "max"),
                  point_curve_time_s(currents, FUSE, "min")):
        finite = np.where(np.isinf(times), 1e300, times)
        assert np.all(np.diff(finite) <= 1e-12 * np.maximum(finite[:-1], 1.0))


def test_definite_time_stage_at_a_scalar_current():
    # A definite-time stage acts at a scalar current as on an array (issue 10: the TCC plot of SWG-4KV
    # missed 52-4M's 0.25 s stage). IEC standard inverse, TMS 0.3, pickup 3000 A; at 20 kA (M = 6.67)
    # the inverse element needs 0.3 x 0.14/(6.67^0.02 - 1) = 1.0822 s; the stage at 18 kA gives 0.25 s;
    # + 5 cycles at 60 Hz (IEEE 1584-2002 Table 1, common practice).
    relay = RelaySettings(pickup_a=3000.0, standard="IEC 60255-151", curve="standard inverse", time_dial=0.3,
                          definite_time=(DefiniteTimeStage(18000.0, 0.25),))
    assert float(relay_clearing_time_s(20000.0, relay)) == pytest.approx(0.25 + 5 / 60, rel=1e-12)
    assert float(relay_clearing_time_s(np.array([20000.0]), relay)[0]) == pytest.approx(0.25 + 5 / 60, rel=1e-12)


@pytest.mark.parametrize("hz, cycle_s", [(60, 0.016), (50, 0.020)])
def test_relay_instantaneous_is_about_one_cycle(hz, cycle_s):
    # Instantaneous element: 16 ms at 60 Hz (shared/reference/protection.md, IEEE 1584-2002 note) and
    # one cycle, 20 ms, at 50 Hz (common practice); breaker 5 cycles of the system frequency.
    relay = RelaySettings(pickup_a=100.0, instantaneous_a=1000.0, frequency_hz=hz)
    assert float(relay_clearing_time_s(5000.0, relay)) == pytest.approx(cycle_s + 5 / hz, rel=1e-12)


def test_trip_unit_at_zero_current_does_not_trip_and_warns_nothing():
    # filterwarnings turns a RuntimeWarning from arcflash into an error: 0 A must be quiet.
    unit = TripUnitSettings(rating_a=800.0, short_time_pickup=6.0, short_time_i2t=True)
    assert np.isinf(trip_unit_clearing_time_s(np.array([0.0, 1e-300]), unit)).all()


def test_both_bands_at_once_equal_each_band_alone():
    # point_curve_band_s takes the logarithm of each current once for both bands: the same times, bit for bit
    # (arithmetic of the batching itself)
    from arcflash.models.curves import point_curve_band_s

    curve = PointCurve(current_a=(200.0, 400.0, 1000.0, 3000.0), max_time_s=(100.0, 10.0, 0.8, 0.02),
                       min_time_s=(40.0, 4.0, 0.3, 0.01), instantaneous_a=5000.0, instantaneous_s=0.008)
    current = np.array([0.0, 150.0, 200.0, 333.0, 1000.0, 2999.0, 4000.0, 6000.0])
    rows = np.array([1, 3, 4, 7])
    slow, fast = point_curve_band_s(current, curve, rows)
    assert np.array_equal(slow, point_curve_time_s(current, curve, band="max"))
    assert np.array_equal(fast, point_curve_time_s(current[rows], curve, band="min"))
    assert (fast[np.isfinite(fast)] <= slow[rows][np.isfinite(fast)]).all()
