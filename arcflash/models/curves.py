"""Time-current characteristics of protective devices and their clearing times.

Pure and vectorised over currents: every function takes currents in amperes
(at the device's own voltage) and returns times in seconds, ``inf`` where the
device does not operate. Three families:

- relays with a breaker: IEEE C37.112 and IEC 60255-151 inverse-time curves,
  definite-time stages and an instantaneous element
  (:class:`RelaySettings`, :func:`relay_clearing_time_s`);
- low-voltage breakers with electronic trip units: long-time (I²t),
  short-time (fixed or I²t) and instantaneous regions with a tolerance band
  (:class:`TripUnitSettings`, :func:`trip_unit_clearing_time_s`);
- thermal-magnetic breakers and fuses from digitised curve points, log-log
  interpolation, and a fixed clearing time in the instantaneous or
  current-limiting region (:class:`PointCurve`, :func:`point_curve_time_s`).

Breaker opening times default to the values of IEEE 1584-2002 Table 1
(common practice since): 1.5 cycles for molded-case, 3 for insulated-case and
low-voltage power breakers, 5 for medium-voltage breakers, at 60 Hz.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from functools import lru_cache

import numpy as np

#: IEEE C37.112 inverse-time constants A, B, p: t = TD (A/(M^p − 1) + B).
IEEE_C37_112 = {
    "moderately inverse": (0.0515, 0.1140, 0.02),
    "very inverse": (19.61, 0.491, 2.0),
    "extremely inverse": (28.2, 0.1217, 2.0),
}
#: IEC 60255-151 inverse-time constants k, α: t = TMS k/(M^α − 1).
IEC_60255_151 = {
    "standard inverse": (0.14, 0.02),
    "very inverse": (13.5, 1.0),
    "extremely inverse": (80.0, 2.0),
    "long-time inverse": (120.0, 1.0),
}
#: Breaker opening time in cycles when only the trip time is known, IEEE
#: 1584-2002 Table 1 (common practice since).
BREAKER_OPENING_CYCLES = {
    "molded-case": 1.5,
    "insulated-case": 3.0,
    "low-voltage power": 3.0,
    "medium-voltage": 5.0,
    "high-voltage": 8.0,
}
#: Operating time of a relay's instantaneous element: about one cycle, 16 ms
#: at 60 Hz as IEEE 1584-2002 Table 1 notes allow (common practice since;
#: shared/reference/protection.md), and one cycle, 20 ms, at 50 Hz [s].
RELAY_INSTANTANEOUS_S_BY_HZ = {60.0: 0.016, 50.0: 0.020}
#: IEEE C37.112 reset constant tr of each inverse-time curve: below pickup an
#: element's progress falls at the rate 1/t_r, t_r = TD tr/(1 − M²)
#: (shared/reference/protection.md, verified via relay manuals citing C37.112).
IEEE_C37_112_RESET = {"moderately inverse": 4.85, "very inverse": 21.6, "extremely inverse": 29.1}


def _currents(current_a):
    current = np.asarray(current_a, dtype=float)
    if np.isnan(current).any() or (current < 0).any():
        raise ValueError("current_a: expected non-negative numbers")
    return current


def _inverse_time(m, dial, a, b, p):
    """t = dial (a/(m^p − 1) + b) for m > 1, inf otherwise: the form both standards share."""
    with np.errstate(divide="ignore", invalid="ignore"):
        t = dial * (a / (np.power(m, p) - 1.0) + b)
    return np.where(m > 1.0, t, np.inf)


def ieee_c37_112_time_s(multiple, time_dial, curve):
    """Operating time of an IEEE C37.112 inverse-time element.

    .. math:: t = TD \\left(\\frac{A}{M^p - 1} + B\\right), \\quad M = I/I_{pickup} > 1

    IEEE C37.112 (constants of :data:`IEEE_C37_112`); ``inf`` for M <= 1.

    Parameters
    ----------
    multiple : array_like
        Current as a multiple of pickup M [-]
    time_dial : float
        Time dial TD [-]
    curve : str
        'moderately inverse', 'very inverse' or 'extremely inverse' [-]

    Returns
    -------
    numpy.ndarray
        Operating time [s]

    Examples
    --------
    >>> round(float(ieee_c37_112_time_s(5.0, 1.0, "very inverse")), 4)
    1.3081
    """
    if curve not in IEEE_C37_112:
        raise ValueError(f"curve: expected one of {', '.join(IEEE_C37_112)}, got {curve!r}")
    a, b, p = IEEE_C37_112[curve]
    return _inverse_time(np.asarray(multiple, dtype=float), time_dial, a, b, p)


def iec_60255_151_time_s(multiple, tms, curve):
    """Operating time of an IEC 60255-151 inverse-time element.

    .. math:: t = TMS \\frac{k}{M^\\alpha - 1}, \\quad M = I/I_{pickup} > 1

    IEC 60255-151 (constants of :data:`IEC_60255_151`); ``inf`` for M <= 1.

    Parameters
    ----------
    multiple : array_like
        Current as a multiple of pickup M [-]
    tms : float
        Time multiplier setting [-]
    curve : str
        'standard inverse', 'very inverse', 'extremely inverse' or
        'long-time inverse' [-]

    Returns
    -------
    numpy.ndarray
        Operating time [s]

    Examples
    --------
    shared/reference/protection.md: standard inverse, TMS 1, M = 10 gives 2.971 s:

    >>> round(float(iec_60255_151_time_s(10.0, 1.0, "standard inverse")), 3)
    2.971
    """
    if curve not in IEC_60255_151:
        raise ValueError(f"curve: expected one of {', '.join(IEC_60255_151)}, got {curve!r}")
    k, alpha = IEC_60255_151[curve]
    return _inverse_time(np.asarray(multiple, dtype=float), tms, k, 0.0, alpha)


@dataclass(frozen=True)
class DefiniteTimeStage:
    """A definite-time overcurrent stage: operates after ``time_s`` above ``pickup_a``."""

    pickup_a: float
    time_s: float


@dataclass(frozen=True)
class RelaySettings:
    """An overcurrent relay and its breaker. Currents are primary amperes.

    Attributes
    ----------
    pickup_a : float
        Inverse-time pickup, primary [A] (CT ratio × secondary tap)
    standard : str
        'IEEE C37.112' or 'IEC 60255-151'
    curve : str
        Curve name of that standard
    time_dial : float
        TD (IEEE) or TMS (IEC) [-]
    definite_time : tuple of DefiniteTimeStage
        Definite-time stages (primary amperes)
    instantaneous_a : float or None
        Instantaneous pickup, primary [A]
    instantaneous_s : float or None
        Operating time of the instantaneous element; None for about one
        cycle of ``frequency_hz`` (:data:`RELAY_INSTANTANEOUS_S_BY_HZ`) [s]
    breaker_cycles : float
        Breaker opening time [cycles]
    frequency_hz : float
        System frequency [Hz]
    """

    pickup_a: float
    standard: str = "IEEE C37.112"
    curve: str = "very inverse"
    time_dial: float = 1.0
    definite_time: tuple = ()
    instantaneous_a: float | None = None
    instantaneous_s: float | None = None
    breaker_cycles: float = BREAKER_OPENING_CYCLES["medium-voltage"]
    frequency_hz: float = 60.0

    def __post_init__(self):
        table = IEEE_C37_112 if self.standard == "IEEE C37.112" else IEC_60255_151
        if self.standard not in ("IEEE C37.112", "IEC 60255-151"):
            raise ValueError(f"standard: expected 'IEEE C37.112' or 'IEC 60255-151', got {self.standard!r}")
        if self.curve not in table:
            raise ValueError(f"curve: expected one of {', '.join(table)} for {self.standard}, got {self.curve!r}")
        for name in ("pickup_a", "time_dial", "frequency_hz"):
            if not getattr(self, name) > 0:
                raise ValueError(f"{name}: expected a positive number, got {getattr(self, name)!r}")


def _instantaneous_s(relay):
    if relay.instantaneous_s is not None:
        return relay.instantaneous_s
    return RELAY_INSTANTANEOUS_S_BY_HZ.get(float(relay.frequency_hz), 1.0 / relay.frequency_hz)


def relay_parameters(relays):
    """Parameter arrays of several relays, for :func:`relay_clearing_time_batch_s`.

    Both standards share one form, t = TD (A/(M^p − 1) + B): IEC 60255-151 is
    A = k, p = α, B = 0. Definite-time stages are padded with NaN (never).
    ``reset`` is the C37.112 reset constant tr, NaN for an IEC curve (reset
    at once below pickup).
    """
    stages = max((len(r.definite_time) for r in relays), default=0)
    constants = [IEEE_C37_112[r.curve] if r.standard == "IEEE C37.112" else (*IEC_60255_151[r.curve][:1], 0.0,
                 IEC_60255_151[r.curve][1]) for r in relays]
    pad = [list(r.definite_time) + [DefiniteTimeStage(np.nan, np.nan)] * (stages - len(r.definite_time))
           for r in relays]
    return {
        "pickup_a": np.array([r.pickup_a for r in relays], dtype=float),
        "a": np.array([c[0] for c in constants]), "b": np.array([c[1] for c in constants]),
        "p": np.array([c[2] for c in constants]),
        "time_dial": np.array([r.time_dial for r in relays], dtype=float),
        "reset": np.array([IEEE_C37_112_RESET[r.curve] if r.standard == "IEEE C37.112" else np.nan
                           for r in relays]),
        "stage_a": np.array([[s.pickup_a for s in row] for row in pad], dtype=float).reshape(len(relays), stages),
        "stage_s": np.array([[s.time_s for s in row] for row in pad], dtype=float).reshape(len(relays), stages),
        "instantaneous_a": np.array([np.nan if r.instantaneous_a is None else r.instantaneous_a for r in relays]),
        "instantaneous_s": np.array([_instantaneous_s(r) for r in relays], dtype=float),
        "breaker_s": np.array([r.breaker_cycles / r.frequency_hz for r in relays], dtype=float),
    }


def relay_element_times_s(current_a, parameters, which):
    """Operating time of each element of many relays, without the breaker [s].

    Current k goes through relay ``which[k]``. Columns: the inverse-time
    element, each definite-time stage, the instantaneous element; ``inf``
    where the element does not operate (at or below its pickup).

    Returns
    -------
    numpy.ndarray
        Shape ``current.shape + (2 + stages,)`` [s]
    """
    current = _currents(current_a)
    which = np.broadcast_to(np.asarray(which, dtype=np.intp), current.shape)
    par = {name: values[which] for name, values in parameters.items()}
    inverse = _inverse_time(current / par["pickup_a"], par["time_dial"], par["a"], par["b"], par["p"])
    with np.errstate(invalid="ignore"):
        stages = np.where(current[..., None] > par["stage_a"], par["stage_s"], np.inf)
        instantaneous = np.where(current > par["instantaneous_a"], par["instantaneous_s"], np.inf)
    return np.concatenate([inverse[..., None], stages, instantaneous[..., None]], axis=-1)


def relay_reset_times_s(current_a, parameters, which):
    """Time for each relay element to reset fully from the point of operating [s].

    Inverse-time element of an IEEE C37.112 curve below pickup:
    t_r = TD tr/(1 − M²) (IEEE C37.112 reset characteristic); at or above
    pickup ``inf`` (it does not reset). An IEC 60255-151 inverse-time element
    and every definite-time and instantaneous element reset at once (0)
    below their pickup (common practice; resetting at once is the choice
    that delays a later trip, the conservative side for arc flash).
    """
    current = _currents(current_a)
    which = np.broadcast_to(np.asarray(which, dtype=np.intp), current.shape)
    par = {name: values[which] for name, values in parameters.items()}
    m = current / par["pickup_a"]
    with np.errstate(divide="ignore", invalid="ignore"):
        inverse = np.where(m < 1.0, par["time_dial"] * par["reset"] / (1.0 - m * m), np.inf)
    inverse = np.where(np.isnan(inverse), 0.0, inverse)
    others = np.zeros(current.shape + (par["stage_a"].shape[-1] + 1,))
    return np.concatenate([inverse[..., None], others], axis=-1)


def relay_clearing_time_batch_s(current_a, parameters, which):
    """Clearing times of many relays at once: current k goes through relay ``which[k]`` [s].

    The fastest element operates (inverse time, definite-time stages,
    instantaneous), plus the breaker opening time; ``inf`` below every pickup.
    """
    current = _currents(current_a)
    which = np.broadcast_to(np.asarray(which, dtype=np.intp), current.shape)
    return relay_element_times_s(current, parameters, which).min(axis=-1) + parameters["breaker_s"][which]


def relay_clearing_time_s(current_a, relay):
    """Total clearing time: relay operating time plus breaker opening time [s]."""
    current = _currents(current_a)
    return relay_clearing_time_batch_s(current, relay_parameters([relay]), np.zeros(current.shape, dtype=np.intp))


@dataclass(frozen=True)
class TripUnitSettings:
    """Electronic trip unit of a low-voltage breaker.

    Attributes
    ----------
    rating_a : float
        Sensor / plug rating In [A]
    long_time_pickup : float
        LTPU as a multiple of In [-]
    long_time_delay_s : float
        Long-time delay: trip time at 6 × LTPU on the I²t curve [s]
    short_time_pickup : float or None
        STPU as a multiple of LTPU [-]
    short_time_delay_s : float
        Short-time delay (the flat part) [s]
    short_time_i2t : bool
        I²t ramp in the short-time region, through the delay at 10 × LTPU
    instantaneous_pickup : float or None
        Instantaneous pickup as a multiple of In [-]
    instantaneous_s : float
        Trip-unit time in the instantaneous region [s]
    pickup_tolerance : float
        ± tolerance of every pickup, fraction (0.10 common practice) [-]
    time_tolerance : float
        ± tolerance of every delay, fraction [-]
    breaker_cycles : float
        Opening time added to the trip time [cycles]
    frequency_hz : float
        System frequency [Hz]
    """

    rating_a: float
    long_time_pickup: float = 1.0
    long_time_delay_s: float = 10.0
    short_time_pickup: float | None = None
    short_time_delay_s: float = 0.1
    short_time_i2t: bool = False
    instantaneous_pickup: float | None = None
    instantaneous_s: float = 0.0
    pickup_tolerance: float = 0.10
    time_tolerance: float = 0.15
    breaker_cycles: float = BREAKER_OPENING_CYCLES["low-voltage power"]
    frequency_hz: float = 60.0

    def __post_init__(self):
        for name in ("rating_a", "long_time_pickup", "long_time_delay_s", "frequency_hz"):
            if not getattr(self, name) > 0:
                raise ValueError(f"{name}: expected a positive number, got {getattr(self, name)!r}")
        if not 0 <= self.pickup_tolerance < 1 or not 0 <= self.time_tolerance < 1:
            raise ValueError("pickup_tolerance, time_tolerance: expected fractions between 0 and 1")


_BAND = {"min": -1.0, "nominal": 0.0, "max": 1.0}


def trip_unit_parameters(units, frequency_hz=None):
    """Parameter arrays of several trip units (NaN for an absent element).

    ``units`` are objects with the attributes of :class:`TripUnitSettings`;
    ``frequency_hz`` applies to all when given (else each unit's own).
    """
    rows = [vars(u) for u in units]  # dataclasses and pydantic models keep their fields here

    def column(name, absent=np.nan):
        return np.array([absent if row[name] is None else row[name] for row in rows], dtype=float)

    return {
        "rating_a": column("rating_a"), "long_time_pickup": column("long_time_pickup"),
        "long_time_delay_s": column("long_time_delay_s"), "short_time_pickup": column("short_time_pickup"),
        "short_time_delay_s": column("short_time_delay_s"),
        "short_time_i2t": np.array([row["short_time_i2t"] for row in rows], dtype=bool),
        "instantaneous_pickup": column("instantaneous_pickup"), "instantaneous_s": column("instantaneous_s"),
        "pickup_tolerance": column("pickup_tolerance"), "time_tolerance": column("time_tolerance"),
        "breaker_s": np.array([row["breaker_cycles"] / (frequency_hz or row["frequency_hz"]) for row in rows]),
    }


def trip_unit_element_times_s(current_a, parameters, which, band="max"):
    """Trip time of each element of many trip units, without the breaker [s].

    Current k goes through trip unit ``which[k]``. Columns: long time, short
    time, instantaneous; ``inf`` where the element does not operate. Long
    time: t = LTD (6/M)², M = I/LTPU > 1 (I²t through the delay at 6 ×
    pickup). Short time: above STPU × LTPU the short-time element replaces
    the long-time curve (which then takes no part): the delay (or, with I²t,
    the delay (10/M)² but not less than the delay), never slower than the
    long-time curve at the short-time pickup. Instantaneous: above its
    pickup, ``instantaneous_s``. The ``max`` band raises every pickup and
    delay by its tolerance (slowest: the conservative curve for arc flash),
    ``min`` lowers them. Common practice for such trip units; 6 and 10 are
    the usual reference multiples.

    Returns
    -------
    numpy.ndarray
        Shape ``current.shape + (3,)`` [s]
    """
    if band not in _BAND:
        raise ValueError(f"band: expected 'min', 'nominal' or 'max', got {band!r}")
    current = _currents(current_a)
    which = np.broadcast_to(np.asarray(which, dtype=np.intp), current.shape)
    unit = _trip_unit_band(parameters, band)  # per unit, then gathered per current
    lt_pickup, st_pickup = unit["lt_pickup_a"][which], unit["st_pickup_a"][which]
    with np.errstate(invalid="ignore", divide="ignore"):
        inverse_square = 1.0 / np.square(np.where(current > 0.0, current, 1.0))  # no overflow near 0 A
        in_short = current > st_pickup  # NaN pickup: never
        above_long = (current > lt_pickup) & ~in_short
        delay = unit["st_delay_s"][which]
        ramp = np.clip(unit["ramp_a2s"][which] * inverse_square, delay, unit["st_at_pickup_s"][which])
        above = current > unit["inst_pickup_a"][which]
    long_time = np.where(above_long, unit["lt_a2s"][which] * inverse_square, np.inf)
    short_time = np.where(in_short, np.where(unit["st_i2t"][which], ramp, delay), np.inf)
    instantaneous = np.where(above, unit["inst_s"][which], np.inf)
    return np.stack([long_time, short_time, instantaneous], axis=-1)


def _trip_unit_band(parameters, band):
    """Per trip unit, the band's pickups in amperes and the curve constants (kept in ``parameters``).

    Long time t = LTD d (6/M)² = ``lt_a2s``/I² with M = I/``lt_pickup_a``; I²t
    short time delay (10/M)² = ``ramp_a2s``/I², held between the delay and the
    long-time time at the short-time pickup (see :func:`trip_unit_element_times_s`).
    """
    key = ("band", band)
    if key not in parameters:
        sign = _BAND[band]
        p = 1.0 + sign * parameters["pickup_tolerance"]
        d = 1.0 + sign * parameters["time_tolerance"]
        lt_pickup = parameters["long_time_pickup"] * parameters["rating_a"] * p
        stpu = parameters["short_time_pickup"]
        with np.errstate(invalid="ignore"):
            at_pickup = parameters["long_time_delay_s"] * d * (6.0 / stpu) ** 2
            delay = np.minimum(parameters["short_time_delay_s"] * d, at_pickup)
        parameters[key] = {
            "lt_pickup_a": lt_pickup, "st_pickup_a": stpu * lt_pickup,
            "lt_a2s": parameters["long_time_delay_s"] * d * 36.0 * lt_pickup**2,
            "st_delay_s": delay, "st_at_pickup_s": at_pickup, "ramp_a2s": delay * 100.0 * lt_pickup**2,
            "st_i2t": parameters["short_time_i2t"],
            "inst_pickup_a": parameters["instantaneous_pickup"] * parameters["rating_a"] * p,
            "inst_s": parameters["instantaneous_s"],
        }
    return parameters[key]


def trip_unit_time_batch_s(current_a, parameters, which, band="max", clearing=True):
    """Trip (or, with ``clearing``, clearing) times of many trip units at once [s].

    The fastest element of :func:`trip_unit_element_times_s`, plus the
    breaker opening time with ``clearing``.
    """
    current = _currents(current_a)
    which = np.broadcast_to(np.asarray(which, dtype=np.intp), current.shape)
    t = trip_unit_element_times_s(current, parameters, which, band).min(axis=-1)
    return t + parameters["breaker_s"][which] if clearing else t


def trip_unit_trip_time_s(current_a, unit, band="max"):
    """Trip time of one electronic trip unit on the ``band`` curve [s] (see :func:`trip_unit_time_batch_s`)."""
    current = _currents(current_a)
    return trip_unit_time_batch_s(current, trip_unit_parameters([unit]), np.zeros(current.shape, dtype=np.intp),
                                  band, clearing=False)


def trip_unit_clearing_time_s(current_a, unit, band="max"):
    """Trip time on the ``band`` curve plus breaker opening time [s]."""
    current = _currents(current_a)
    return trip_unit_time_batch_s(current, trip_unit_parameters([unit]), np.zeros(current.shape, dtype=np.intp),
                                  band)


@dataclass(frozen=True)
class PointCurve:
    """A digitised time-current band (thermal-magnetic breaker or fuse).

    Attributes
    ----------
    current_a : tuple of float
        Currents of the points, increasing [A]
    max_time_s : tuple of float
        Total clearing (maximum) time at each current, non-increasing [s]
    min_time_s : tuple of float, optional
        Minimum melt / minimum trip time at each current [s]
    instantaneous_a : float or None
        Above this current the device clears in ``instantaneous_s`` (magnetic
        trip, or a fuse's current-limiting range) [A]
    instantaneous_s : float
        Clearing time there; for a current-limiting fuse ½ cycle, and 0.01 s
        below the bottom of a published curve (common practice) [s]
    """

    current_a: tuple
    max_time_s: tuple
    min_time_s: tuple | None = None
    instantaneous_a: float | None = None
    instantaneous_s: float = 0.01
    name: str = field(default="curve", compare=False)

    def __post_init__(self):
        i = np.asarray(self.current_a, dtype=float)
        problems = []
        if i.size < 2:
            problems.append("at least two points")
        elif not np.all(np.isfinite(i)) or (i <= 0).any():
            problems.append("positive currents")
        elif not np.all(np.diff(i) > 0):
            problems.append("currents strictly increasing from point to point")
        for label, times in (("max_time_s", self.max_time_s), ("min_time_s", self.min_time_s)):
            if times is None:
                continue
            t = np.asarray(times, dtype=float)
            if t.shape != i.shape:
                problems.append(f"{label} with one time per current ({i.size})")
            elif (t <= 0).any() or not np.all(np.isfinite(t)):
                problems.append(f"{label} positive")
            elif not np.all(np.diff(t) <= 0):
                problems.append(f"{label} never increasing as the current grows (a time-current curve falls)")
        if self.min_time_s is not None and not problems:
            if (np.asarray(self.min_time_s) > np.asarray(self.max_time_s)).any():
                problems.append("min_time_s at or below max_time_s at every point")
        if problems:
            raise ValueError(f"curve {self.name!r}: expected " + "; ".join(problems))


def point_curve_time_s(current_a, curve, band="max"):
    """Clearing time from a digitised curve, log-log interpolation [s].

    Below the first point the device does not clear (``inf``); between points
    lg t is linear in lg I; above the last point the last time holds, and
    above ``instantaneous_a`` the instantaneous clearing time.

    Parameters
    ----------
    current_a : array_like
        Current through the device [A]
    curve : PointCurve
    band : str
        'max' (total clearing) or 'min' (minimum melt / trip) [-]

    Returns
    -------
    numpy.ndarray
        Clearing time [s]
    """
    if band not in ("min", "max"):
        raise ValueError(f"band: expected 'min' or 'max', got {band!r}")
    current = _currents(current_a)
    return _point_time(current, _lg_current(current), curve, band)


def point_curve_band_s(current_a, curve, rows):
    """:func:`point_curve_time_s` on the total-clearing curve at every current, and on the minimum curve
    at the currents ``rows`` (the logarithm of each current taken once) [s].

    Returns
    -------
    tuple of numpy.ndarray
        Times on the 'max' curve (all currents), on the 'min' curve (``rows``) [s]
    """
    current = _currents(current_a)
    x = _lg_current(current)
    return _point_time(current, x, curve, "max"), _point_time(current[rows], x[rows], curve, "min")


def _lg_current(current):
    with np.errstate(divide="ignore"):
        return np.log10(np.maximum(current, 1e-300))


@lru_cache(maxsize=256)
def _lg_points(curve, band):
    """lg I and lg t of a curve's points, on its ``band`` (cached: a curve is a value)."""
    times = curve.max_time_s if band == "max" or curve.min_time_s is None else curve.min_time_s
    points = np.log10(np.asarray(curve.current_a, dtype=float)), np.log10(np.asarray(times, dtype=float))
    for array in points:
        array.flags.writeable = False
    return points


def _point_time(current, x, curve, band):
    """The work of :func:`point_curve_time_s` (``x``: lg of each current)."""
    lg_i, lg_t = _lg_points(curve, band)
    t = np.power(10.0, np.interp(x, lg_i, lg_t))
    t = np.where(current < curve.current_a[0], np.inf, t)
    if curve.instantaneous_a is not None:
        t = np.where(current > curve.instantaneous_a, np.minimum(t, curve.instantaneous_s), t)
    return t
