"""Transformer helpers: rated current, %Z from a short-circuit test, fault current.

Pure functions of numbers or arrays. References: the impedance-voltage test of
IEEE C57.12.90 (short the secondary, raise the primary voltage until rated
current flows); the infinite-bus current I = I_FLA × 100 / %Z (common
practice).
"""

from __future__ import annotations

import numpy as np

_SQRT3 = float(np.sqrt(3.0))

#: Range of %Z a power or distribution transformer has, lowest to highest [%] (common practice: small dry-type
#: units sit near 1-3 %, large power transformers up to about 20 %). A value outside it is a typing slip
#: (0.0575 for 5.75) or a misread test, and is refused wherever a %Z is read.
PLAUSIBLE_Z_PERCENT = (0.5, 25.0)

#: Largest test current of a short-circuit test, as a multiple of rated current [-] (common practice: the
#: impedance-voltage test of IEEE C57.12.90 circulates rated current; field tests use less).
MAX_TEST_CURRENT_MULTIPLE = 1.2


def rated_current_a(kva, kv, phases=3):
    """Rated (full-load) current.

    I = S / (√3 V) for three-phase, S / V for single-phase (common practice).

    Parameters
    ----------
    kva : array_like
        Rated power [kVA]
    kv : array_like
        Rated line-to-line voltage of the winding [kV]
    phases : int
        3 or 1 [-]

    Returns
    -------
    numpy.ndarray
        Rated current [A]

    Examples
    --------
    3000 kVA at 480 V (published FLA 3608.4 A, see tests):

    >>> round(float(rated_current_a(3000, 0.48)), 1)
    3608.4
    """
    kva = np.asarray(kva, dtype=float)
    kv = np.asarray(kv, dtype=float)
    if phases == 3:
        return kva / (_SQRT3 * kv)
    if phases == 1:
        return kva / kv
    raise ValueError(f"phases: expected 1 or 3, got {phases!r}")


def percent_impedance_from_test(applied_v, rated_primary_v, measured_a=None, rated_a=None):
    """%Z from the impedance-voltage (short-circuit) test.

    The secondary is shorted and the primary voltage raised until a current
    flows; %Z = V_applied / V_rated × 100 at rated current. A test at another
    current is scaled linearly: V_at_rated = V_measured × I_rated / I_measured.
    Method of IEEE C57.12.90 (impedance voltage); the linear scaling is common
    practice.

    Parameters
    ----------
    applied_v : array_like
        Primary voltage applied during the test [V]
    rated_primary_v : array_like
        Rated primary voltage [V]
    measured_a, rated_a : array_like, optional
        Current reached in the test and the rated current of the same winding;
        both or neither [A]

    Returns
    -------
    numpy.ndarray
        Percent impedance [%]

    Examples
    --------
    >>> float(percent_impedance_from_test(690, 12000))
    5.75
    """
    ratio = 1.0
    if (measured_a is None) != (rated_a is None):
        raise ValueError("measured_a and rated_a: give both (test at another current) or neither")
    if measured_a is not None:
        ratio = np.asarray(rated_a, dtype=float) / np.asarray(measured_a, dtype=float)
    return np.asarray(applied_v, dtype=float) * ratio / np.asarray(rated_primary_v, dtype=float) * 100.0


def resistance_at_temperature(r_measured, measured_c, reference_c, conductor="copper"):
    """Resistance corrected to a reference temperature.

    R_ref = R_meas × (Tk + T_ref)/(Tk + T_meas), Tk = 234.5 for copper and 225
    for aluminium (IEEE C57.12.90 resistance correction; constants from memory).

    Parameters
    ----------
    r_measured : array_like
        Resistance (or %R) at the measured temperature [any]
    measured_c, reference_c : array_like
        Winding temperatures [°C]
    conductor : str
        'copper' or 'aluminum' [-]

    Returns
    -------
    numpy.ndarray
        Resistance at the reference temperature [same unit]
    """
    tk = {"copper": 234.5, "aluminum": 225.0, "aluminium": 225.0}.get(conductor)
    if tk is None:
        raise ValueError(f"conductor: expected 'copper' or 'aluminum', got {conductor!r}")
    return np.asarray(r_measured, dtype=float) * (tk + np.asarray(reference_c)) / (tk + np.asarray(measured_c))


def infinite_bus_fault_ka(kva, kv, z_percent):
    """Bolted secondary fault current with an infinite source: I_FLA × 100 / %Z.

    Parameters
    ----------
    kva : array_like
        Rated power [kVA]
    kv : array_like
        Secondary line-to-line voltage [kV]
    z_percent : array_like
        Percent impedance [%]

    Returns
    -------
    numpy.ndarray
        Fault current [kA]

    Examples
    --------
    1500 kVA, 480 V, 5.75 %; IAEI Magazine (Aug 2018) prints 31,374 A from an
    FLA rounded to 1804 A:

    >>> round(float(infinite_bus_fault_ka(1500, 0.48, 5.75)), 1)
    31.4
    """
    return rated_current_a(kva, kv) * 100.0 / np.asarray(z_percent, dtype=float) / 1000.0


def apply_tolerance(z_percent, tolerance_percent, side):
    """Percent impedance at the low or high side of its tolerance band.

    The maximum fault current uses the low side (common practice).

    Parameters
    ----------
    z_percent : array_like
        Nameplate percent impedance [%]
    tolerance_percent : array_like
        Tolerance, e.g. 7.5 [%]
    side : str
        'low', 'nominal' or 'high' [-]

    Returns
    -------
    numpy.ndarray
        Percent impedance [%]
    """
    sign = {"low": -1.0, "nominal": 0.0, "high": 1.0}.get(side)
    if sign is None:
        raise ValueError(f"side: expected 'low', 'nominal' or 'high', got {side!r}")
    return np.asarray(z_percent, dtype=float) * (1.0 + sign * np.asarray(tolerance_percent, dtype=float) / 100.0)


def split_impedance(z, x_over_r):
    """Resistance and reactance of an impedance magnitude with a given X/R.

    Parameters
    ----------
    z : array_like
        Impedance magnitude [any]
    x_over_r : array_like
        Ratio X/R [-]

    Returns
    -------
    tuple of numpy.ndarray
        R and X [same unit]
    """
    xr = np.asarray(x_over_r, dtype=float)
    r = np.asarray(z, dtype=float) / np.sqrt(1.0 + xr * xr)
    return r, r * xr
