"""Range-of-validity checks for IEEE 1584-2018 (clause 4.2), per case.

Each rule sets one bit of a per-case code; the reason text of a case joins
the texts of its bits. Nothing is clipped here: the model computes every case
and these checks say which results lie outside the tested range.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import ieee1584_tables as tables
from .errors import ModelRangeError
from .ieee1584_inputs import case_label

_LV = tables.RANGE_LOW_VOLTAGE
_MV = tables.RANGE_MEDIUM_VOLTAGE


@dataclass(frozen=True)
class RangeRule:
    """One validity rule: the parameter it concerns and the range it enforces."""

    bit: int
    parameter: str
    expected: str


VOLTAGE, BOLTED_LV, BOLTED_MV, GAP_LV, GAP_MV = 1, 2, 4, 8, 16
DISTANCE, HEIGHT, WIDTH, WIDTH_GAP, NO_SOLUTION = 32, 64, 128, 256, 512

#: The rules of IEEE 1584-2018 clause 4.2, in bit order.
RULES: tuple[RangeRule, ...] = (
    RangeRule(VOLTAGE, "voltage_kv", f"{_LV.voltage_min_kv}–{_MV.voltage_max_kv:g} kV"),
    RangeRule(BOLTED_LV, "bolted_ka", f"{_LV.bolted_min_ka}–{_LV.bolted_max_ka:g} kA at 208–600 V"),
    RangeRule(BOLTED_MV, "bolted_ka", f"{_MV.bolted_min_ka}–{_MV.bolted_max_ka:g} kA above 600 V"),
    RangeRule(GAP_LV, "gap_mm", f"{_LV.gap_min_mm}–{_LV.gap_max_mm} mm at 208–600 V"),
    RangeRule(GAP_MV, "gap_mm", f"{_MV.gap_min_mm}–{_MV.gap_max_mm:g} mm above 600 V"),
    RangeRule(DISTANCE, "working_distance_mm", f"at least {tables.WORKING_DISTANCE_MIN_MM:g} mm"),
    RangeRule(HEIGHT, "height_mm", f"at most {tables.ENCLOSURE_MAX_MM} mm ({tables.ENCLOSURE_MAX_MM} mm used)"),
    RangeRule(WIDTH, "width_mm", f"at most {tables.ENCLOSURE_MAX_MM} mm ({tables.ENCLOSURE_MAX_MM} mm used)"),
    RangeRule(WIDTH_GAP, "width_mm", f"more than {tables.WIDTH_TO_GAP_MIN:g} × gap"),
    RangeRule(NO_SOLUTION, "bolted_ka", "inputs for which the low-voltage arcing-current equation has a solution"),
)


def range_code(low_voltage, v, ibf, gap, dist, enclosed, h=None, w=None, iarc=None):
    """Per-case bit code of the rules of :data:`RULES` broken, for one group.

    Parameters
    ----------
    low_voltage : bool
        The cases are at most 600 V [-]
    v, ibf, gap, dist : numpy.ndarray
        Voltage [kV], bolted current [kA], gap [mm], working distance [mm]
    enclosed : bool
        The configuration is in a box (VCB, VCBB, HCB) [-]
    h, w : numpy.ndarray, optional
        Enclosure height and width, when enclosed [mm]
    iarc : numpy.ndarray, optional
        Final arcing current up to 600 V, NaN where Eq. (25) has no solution [kA]

    Returns
    -------
    numpy.ndarray of int16
        Sum of the bits of the rules broken by each case.
    """
    rng = _LV if low_voltage else _MV
    code = np.zeros(v.shape, dtype=np.int16)
    if v.size and iarc is None and _all_inside(rng, low_voltage, v, ibf, gap, dist, enclosed, h, w):
        return code
    checks = [
        (VOLTAGE, lambda: (v < _LV.voltage_min_kv) if low_voltage else (v > _MV.voltage_max_kv)),
        (BOLTED_LV if low_voltage else BOLTED_MV, lambda: (ibf < rng.bolted_min_ka) | (ibf > rng.bolted_max_ka)),
        (GAP_LV if low_voltage else GAP_MV, lambda: (gap < rng.gap_min_mm) | (gap > rng.gap_max_mm)),
        (DISTANCE, lambda: dist < tables.WORKING_DISTANCE_MIN_MM),
    ]
    if enclosed:
        checks += [
            (HEIGHT, lambda: h > tables.ENCLOSURE_MAX_MM),
            (WIDTH, lambda: w > tables.ENCLOSURE_MAX_MM),
            (WIDTH_GAP, lambda: w <= tables.WIDTH_TO_GAP_MIN * gap),
        ]
    if iarc is not None:
        checks.append((NO_SOLUTION, lambda: np.isnan(iarc)))
    for bit, test in checks:
        broken = test()
        if broken.any():
            np.bitwise_or(code, bit, out=code, where=broken)
    return code


def _all_inside(rng, low_voltage, v, ibf, gap, dist, enclosed, h, w):
    """Quick test by extremes: True when no case of the group can break a rule."""
    inside = (
        (v.min() >= _LV.voltage_min_kv if low_voltage else v.max() <= _MV.voltage_max_kv)
        and rng.bolted_min_ka <= ibf.min() and ibf.max() <= rng.bolted_max_ka
        and rng.gap_min_mm <= gap.min() and gap.max() <= rng.gap_max_mm
        and dist.min() >= tables.WORKING_DISTANCE_MIN_MM
    )
    if inside and enclosed:
        inside = (
            h.max() <= tables.ENCLOSURE_MAX_MM and w.max() <= tables.ENCLOSURE_MAX_MM
            and w.min() > tables.WIDTH_TO_GAP_MIN * gap.max()
        )
    return bool(inside)


def reason_text(code):
    """Reason text for one code: every broken rule, joined by '; '."""
    return "; ".join(f"{r.parameter} outside {r.expected}" for r in RULES if code & r.bit)


def reasons(code):
    """Object array of reason texts ('' where the case is in range)."""
    reason = np.full(code.shape, "", dtype=object)
    flagged = code != 0
    if flagged.any():
        present = np.flatnonzero(np.bincount(code[flagged]))
        lookup = np.full(int(present.max()) + 1, "", dtype=object)
        for value in present:
            lookup[value] = reason_text(int(value))
        reason[flagged] = lookup[code[flagged]]
    return reason


def raise_out_of_range(code, cases, limit=5):
    """Raise :class:`ModelRangeError` naming the first flagged cases.

    Parameters
    ----------
    code : numpy.ndarray of int16
        Flat per-case code from :func:`range_code`, original case order.
    cases : Cases
        Flat inputs (see :mod:`.ieee1584_inputs`).
    limit : int
        Number of cases named in the message [-]
    """
    indices = np.flatnonzero(code)
    lines = []
    for index in indices[:limit]:
        case = case_label(index, cases.shape)
        for rule in RULES:
            if code[index] & rule.bit:
                if rule.bit == WIDTH_GAP:
                    value = f"{cases.width_mm[index]:g} with gap_mm = {cases.gap_mm[index]:g}"
                else:
                    value = f"{getattr(cases, rule.parameter)[index]:g}"
                where = f"{case}: " if case else ""
                lines.append(f"{where}{rule.parameter} = {value}, expected {rule.expected}")
    more = f" (and {indices.size - limit} more cases)" if indices.size > limit else ""
    raise ModelRangeError("outside the range of IEEE 1584-2018 (clause 4.2): " + "; ".join(lines) + more)
