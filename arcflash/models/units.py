"""Unit conversions, each in one place.

IEEE 1584-2018 works in J/cm²; people read cal/cm². The calorie here is the
thermochemical calorie, 1 cal = 4.184 J, the one under the 1.2 cal/cm² =
5.0 J/cm² threshold of IEEE 1584-2018 (clause 3.1, arc-flash boundary).
"""

from __future__ import annotations

import numpy as np

#: Joules per thermochemical calorie [J/cal] (common practice; 1.2 cal = 5.0208 J).
J_PER_CAL = 4.184
#: Millimetres per inch [mm/in] (exact by definition).
MM_PER_INCH = 25.4


def j_cm2_to_cal_cm2(energy_j_cm2):
    """Convert incident energy from J/cm² to cal/cm².

    Parameters
    ----------
    energy_j_cm2 : array_like
        Incident energy [J/cm²]

    Returns
    -------
    numpy.ndarray
        Incident energy [cal/cm²]

    Examples
    --------
    >>> float(j_cm2_to_cal_cm2(5.0208))
    1.2
    """
    return np.asarray(energy_j_cm2, dtype=float) / J_PER_CAL


def cal_cm2_to_j_cm2(energy_cal_cm2):
    """Convert incident energy from cal/cm² to J/cm².

    Parameters
    ----------
    energy_cal_cm2 : array_like
        Incident energy [cal/cm²]

    Returns
    -------
    numpy.ndarray
        Incident energy [J/cm²]
    """
    return np.asarray(energy_cal_cm2, dtype=float) * J_PER_CAL


def mm_to_feet_inches(length_mm, *, round_up=True):
    """Split a length into whole feet and whole inches.

    Boundaries are shown rounded *up* to the next whole inch by default, so a
    displayed boundary is never shorter than the computed one.

    Parameters
    ----------
    length_mm : array_like
        Length [mm]
    round_up : bool, optional
        Round up to the next inch (default) instead of to the nearest inch [-]

    Returns
    -------
    tuple of numpy.ndarray
        Whole feet [ft] and remaining whole inches [in], both integer arrays.

    Examples
    --------
    >>> feet, inches = mm_to_feet_inches(1000.0)
    >>> int(feet), int(inches)
    (3, 4)
    """
    inches = np.asarray(length_mm, dtype=float) / MM_PER_INCH
    # 1e-9 keeps an exact whole inch (e.g. 304.8 mm) from rounding up to the next.
    total = np.ceil(inches - 1e-9) if round_up else np.rint(inches)
    total = total.astype(np.int64)
    return total // 12, total % 12
