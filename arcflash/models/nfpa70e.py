"""NFPA 70E (2021 numbering, unchanged in 2024): PPE categories and shock boundaries.

Pure and vectorised. Values from shared/reference/nfpa70e.md:

- Table 130.7(C)(15)(c): minimum arc rating of each PPE category (verified);
- Table 130.4(E)(a): shock approach boundaries for AC systems, by nominal
  phase-to-phase voltage (imperial verified; metric from memory; the
  50–150 V / 151–750 V split from memory of the current edition).
"""

from __future__ import annotations

import numpy as np

#: Table 130.7(C)(15)(c): PPE category -> minimum arc rating [cal/cm²].
PPE_CATEGORY_ARC_RATING_CAL_CM2 = {1: 4.0, 2: 8.0, 3: 25.0, 4: 40.0}
#: Incident energy of the arc-flash boundary, 1.2 cal/cm² (IEEE 1584-2018 3.1) [cal/cm²].
BOUNDARY_ENERGY_CAL_CM2 = 1.2
#: Above this energy no PPE category applies (Table 130.7(C)(15)(c) ends at 40) [cal/cm²].
NO_CATEGORY_ABOVE_CAL_CM2 = 40.0

#: Table 130.4(E)(a), AC: (upper voltage of the row [V], limited approach for an exposed
#: movable conductor [mm], limited approach for an exposed fixed circuit part [mm],
#: restricted approach [mm] or None for "avoid contact"; imperial text). Metric from memory.
SHOCK_BOUNDARIES = (
    (150.0, 3048.0, 1066.8, None, ("10 ft 0 in", "3 ft 6 in", "avoid contact")),
    (750.0, 3048.0, 1066.8, 304.8, ("10 ft 0 in", "3 ft 6 in", "1 ft 0 in")),
    (15000.0, 3048.0, 1524.0, 660.4, ("10 ft 0 in", "5 ft 0 in", "2 ft 2 in")),
    (36000.0, 3048.0, 1828.8, 787.4, ("10 ft 0 in", "6 ft 0 in", "2 ft 7 in")),
    (46000.0, 3048.0, 2438.4, 838.2, ("10 ft 0 in", "8 ft 0 in", "2 ft 9 in")),
)
#: Metric values as the table prints them (from memory) [m].
SHOCK_BOUNDARIES_METRIC_M = ((3.0, 1.0, None), (3.0, 1.0, 0.3), (3.0, 1.5, 0.7), (3.0, 1.8, 0.8), (3.0, 2.5, 0.8))


def ppe_category(incident_energy_cal_cm2):
    """PPE category whose minimum arc rating covers the incident energy.

    NFPA 70E Table 130.7(C)(15)(c): category 1, 2, 3, 4 for at most 4, 8, 25,
    40 cal/cm²; 0 where the energy is below 1.2 cal/cm² (no arc-rated PPE
    category is needed by the energy); -1 above 40 cal/cm² (no category
    applies). The table approach of 130.7(C)(15)(a)/(b) is not used: the
    category here follows the calculated energy (common practice for labels
    that show a category).

    Parameters
    ----------
    incident_energy_cal_cm2 : array_like
        Incident energy at the working distance [cal/cm²]

    Returns
    -------
    numpy.ndarray of int
        0, 1, 2, 3, 4 or -1 [-]

    Examples
    --------
    >>> ppe_category([0.9, 1.2, 4.0, 4.1, 25.0, 40.0, 40.1]).tolist()
    [0, 1, 1, 2, 3, 4, -1]
    """
    e = np.asarray(incident_energy_cal_cm2, dtype=float)
    limits = np.array(list(PPE_CATEGORY_ARC_RATING_CAL_CM2.values()))
    category = np.searchsorted(limits, e, side="left") + 1
    category = np.where(e < BOUNDARY_ENERGY_CAL_CM2, 0, category)
    return np.where(e > NO_CATEGORY_ABOVE_CAL_CM2, -1, category).astype(int)


def minimum_arc_rating_cal_cm2(incident_energy_cal_cm2):
    """Minimum arc rating of clothing: the incident energy, rounded up to 0.1 cal/cm².

    NFPA 70E 130.5(H)(3)(b) asks for the minimum arc rating of clothing; an
    arc rating at least equal to the incident energy (common practice),
    rounded up so that the printed value is never below the computed one.

    Parameters
    ----------
    incident_energy_cal_cm2 : array_like
        Incident energy [cal/cm²]

    Returns
    -------
    numpy.ndarray
        Minimum arc rating [cal/cm²]

    Examples
    --------
    >>> minimum_arc_rating_cal_cm2([3.01, 8.0]).tolist()
    [3.1, 8.0]
    """
    e = np.asarray(incident_energy_cal_cm2, dtype=float)
    return np.ceil(np.round(e * 10.0, 9)) / 10.0


def shock_boundaries(nominal_kv):
    """Shock approach boundaries of NFPA 70E Table 130.4(E)(a) (AC), by nominal voltage.

    Parameters
    ----------
    nominal_kv : array_like
        Nominal phase-to-phase voltage [kV]

    Returns
    -------
    dict of numpy.ndarray
        ``limited_movable_mm``, ``limited_fixed_mm``, ``restricted_mm`` (NaN
        for "avoid contact", and all NaN below 50 V: not specified), and the
        row index ``row`` (-1 below 50 V or above 46 kV).

    Examples
    --------
    >>> b = shock_boundaries(0.48)
    >>> float(b["limited_fixed_mm"]), float(b["restricted_mm"])
    (1066.8, 304.8)
    """
    volts = np.asarray(nominal_kv, dtype=float) * 1000.0
    uppers = np.array([row[0] for row in SHOCK_BOUNDARIES])
    row = np.searchsorted(uppers, volts, side="left")
    valid = (volts >= 50.0) & (row < len(SHOCK_BOUNDARIES))
    row = np.where(valid, row, -1)
    safe = np.clip(row, 0, len(SHOCK_BOUNDARIES) - 1)

    def column(k):
        values = np.array([np.nan if r[k] is None else r[k] for r in SHOCK_BOUNDARIES])
        return np.where(valid, values[safe], np.nan)

    return {"limited_movable_mm": column(1), "limited_fixed_mm": column(2), "restricted_mm": column(3), "row": row}


def shock_boundary_text(nominal_kv):
    """The boundaries of one voltage as printed: imperial and metric strings.

    Returns
    -------
    dict
        ``limited_movable``, ``limited_fixed``, ``restricted``: e.g.
        '3 ft 6 in (1.0 m)'; 'not specified' below 50 V.
    """
    row = int(shock_boundaries(nominal_kv)["row"])
    if row < 0:
        return {k: "not specified" for k in ("limited_movable", "limited_fixed", "restricted")}
    imperial, metric = SHOCK_BOUNDARIES[row][4], SHOCK_BOUNDARIES_METRIC_M[row]
    out = {}
    for key, text, m in zip(("limited_movable", "limited_fixed", "restricted"), imperial, metric):
        out[key] = text if m is None else f"{text} ({m:.1f} m)"
    return out


#: PPE category codes of :func:`ppe_category` (and the study's tables) that are not a category, in words.
PPE_CATEGORY_WORDS = {-2: "not computed", -1: "none applies (above 40 cal/cm2)",
                      0: "none needed (below 1.2 cal/cm2)"}


def ppe_category_words(category):
    """A PPE category code in words: 'category 2', 'none applies (above 40 cal/cm2)', ...

    Parameters
    ----------
    category : int or float
        Code from :func:`ppe_category` (NaN or None: not computed) [-]

    Examples
    --------
    >>> ppe_category_words(2), ppe_category_words(-1)
    ('category 2', 'none applies (above 40 cal/cm2)')
    """
    if category is None or (isinstance(category, float) and not np.isfinite(category)):
        return PPE_CATEGORY_WORDS[-2]
    code = int(category)
    return PPE_CATEGORY_WORDS.get(code, f"category {code}")
