r"""IEEE 1584-2018 arc-flash model: arcing current, incident energy, boundary.

Implements IEEE Std 1584-2018, *IEEE Guide for Performing Arc-Flash Hazard
Calculations*, clause 4, for three-phase AC systems from 208 V to 15 kV and
the five electrode configurations VCB, VCBB, HCB, VOA and HOA.

Units at the API: kV, kA, mm, seconds; energy in J/cm² as the standard uses
it (:mod:`arcflash.models.units` converts to cal/cm²). Internally the energy
equations take the arc duration in milliseconds, converted in
:func:`evaluate`.

Equation numbers: Eq. (1) and Tables 1–5 are as the standard prints them;
the other equation numbers cited here are from memory (see ``docs/method.md``).

References
----------
.. [1] IEEE Std 1584-2018, IEEE Guide for Performing Arc-Flash Hazard
   Calculations, IEEE, 2018.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np

from . import ieee1584_tables as tables
from .errors import ModelRangeError
from .ieee1584_batch import UPPER_BAND_FROM_KV, evaluate_run
from .ieee1584_equations import (
    LOW_VOLTAGE_LIMIT_KV,
    enclosure_correction_factor,
    intermediate_arcing_current_ka,
    interpolate_by_voltage,
    low_voltage_arcing_current_ka,
    variation_correction_factor,
)
from .ieee1584_inputs import Cases, prepare_inputs
from .ieee1584_range import raise_out_of_range, reasons
from .units import j_cm2_to_cal_cm2

__all__ = [
    "ArcFlashResult",
    "ModelRangeError",
    "enclosure_correction_factor",
    "evaluate",
    "intermediate_arcing_current_ka",
    "interpolate_by_voltage",
    "low_voltage_arcing_current_ka",
    "variation_correction_factor",
]

#: Cases taken together from the batch: sorted, evaluated and put back
#: while their arrays stay in the processor cache [-].
BLOCK_CASES = 65536


def _evaluate_block(config_code, columns, outputs):
    """Evaluate one block of cases into ``outputs`` (views of the results).

    The block is sorted by (configuration, voltage band), so that each
    configuration is one run, band after band, evaluated with scalar
    coefficients; sorting a block rather than the batch keeps the
    permutation in cache.
    """
    v = columns[0]
    key = (v > LOW_VOLTAGE_LIMIT_KV).view(np.int8) + (v > UPPER_BAND_FROM_KV).view(np.int8)
    key += config_code * np.int8(3)
    counts = np.bincount(key, minlength=3 * len(tables.CONFIGURATIONS)).reshape(-1, 3)
    per_config = counts.sum(axis=1)
    if np.count_nonzero(counts) > 1:
        order = np.argsort(key, kind="stable")
        columns = [np.take(c, order) for c in columns]
        sorted_outputs = [np.empty_like(out) for out in outputs]
    else:
        order, sorted_outputs = None, outputs
    start = 0
    for code, name in enumerate(tables.CONFIGURATIONS):
        if not per_config[code]:
            continue
        width = 9 if name in tables.ENCLOSED_CONFIGURATIONS else 6
        part = slice(start, start + per_config[code])
        values = evaluate_run(name, counts[code], *(c[part] for c in columns[:width]))
        for out, value in zip(sorted_outputs, values):
            out[part] = value
        start += per_config[code]
    if order is not None:
        for out, value in zip(outputs, sorted_outputs):
            out[order] = value


def _per_configuration(cases, function, default):
    """Apply ``function(name, mask)`` per configuration present; flat result."""
    out = np.full(cases.voltage_kv.size, default)
    for code, name in enumerate(tables.CONFIGURATIONS):
        mask = cases.config_code == code
        if mask.any():
            out[mask] = function(name, mask)
    return out


@dataclass(frozen=True, eq=False)
class ArcFlashResult:
    """Results of :func:`evaluate`; every public attribute is a numpy array.

    The *full* case uses the arcing current with ``clearing_time_s``; the
    *reduced* case the reduced arcing current with ``reduced_clearing_time_s``.
    The governing case is the one with the larger incident energy (the full
    case on a tie); ``reduced_governs`` tells which. Quantities derived from
    the stored ones are computed on first access.
    """

    arcing_current_ka: np.ndarray
    incident_energy_j_cm2: np.ndarray
    arc_flash_boundary_mm: np.ndarray
    reduced_incident_energy_j_cm2: np.ndarray
    reduced_arc_flash_boundary_mm: np.ndarray
    #: Per-case sum of the bits of ``ieee1584_range.RULES`` broken (0 in range).
    out_of_range_code: np.ndarray
    _cases: Cases

    def _shaped(self, flat):
        return flat.reshape(self._cases.shape)

    @cached_property
    def variation_correction(self):
        """Arcing-current variation correction factor VarCf, Eq. (2) [-]."""
        v = self._cases.voltage_kv
        return self._shaped(
            _per_configuration(self._cases, lambda name, m: variation_correction_factor(v[m], name), np.nan)
        )

    @cached_property
    def reduced_arcing_current_ka(self):
        """Reduced arcing current Iarc (1 - 0.5 VarCf), Eq. (3) [kA]."""
        return self.arcing_current_ka * (1.0 - 0.5 * self.variation_correction)

    @cached_property
    def enclosure_correction(self):
        """Enclosure-size correction factor CF, clause 4.8; 1 in open air [-]."""
        c = self._cases

        def cf(name, m):
            return enclosure_correction_factor(c.voltage_kv[m], c.height_mm[m], c.width_mm[m], c.depth_mm[m], name)

        return self._shaped(_per_configuration(c, cf, 1.0))

    @cached_property
    def reduced_governs(self):
        """True where the reduced-current case gives the larger energy [-]."""
        return self.reduced_incident_energy_j_cm2 > self.incident_energy_j_cm2

    @cached_property
    def governing_incident_energy_j_cm2(self):
        """Incident energy of the governing case [J/cm²]."""
        return np.where(self.reduced_governs, self.reduced_incident_energy_j_cm2, self.incident_energy_j_cm2)

    @cached_property
    def governing_arc_flash_boundary_mm(self):
        """Arc-flash boundary of the governing case [mm]."""
        return np.where(self.reduced_governs, self.reduced_arc_flash_boundary_mm, self.arc_flash_boundary_mm)

    @cached_property
    def out_of_range(self):
        """True where any input lies outside the range of the model [-]."""
        return self.out_of_range_code != 0

    @cached_property
    def out_of_range_reason(self):
        """Per-case text naming each parameter out of range ('' if none)."""
        return reasons(self.out_of_range_code)

    @property
    def incident_energy_cal_cm2(self):
        """Full-case incident energy [cal/cm²]."""
        return j_cm2_to_cal_cm2(self.incident_energy_j_cm2)

    @property
    def reduced_incident_energy_cal_cm2(self):
        """Reduced-case incident energy [cal/cm²]."""
        return j_cm2_to_cal_cm2(self.reduced_incident_energy_j_cm2)

    @property
    def governing_incident_energy_cal_cm2(self):
        """Governing incident energy [cal/cm²]."""
        return j_cm2_to_cal_cm2(self.governing_incident_energy_j_cm2)


def evaluate(
    voltage_kv,
    bolted_ka,
    gap_mm,
    working_distance_mm,
    clearing_time_s,
    reduced_clearing_time_s,
    config,
    height_mm=None,
    width_mm=None,
    depth_mm=None,
    *,
    strict=False,
):
    """Arcing currents, incident energy and arc-flash boundary, IEEE 1584-2018.

    Evaluates the full arcing-current case and the reduced arcing-current
    case (IEEE 1584-2018 [1]_, clause 4) and reports both and the governing
    (larger-energy) one. All arguments broadcast together; one call takes a
    batch of mixed voltages and configurations, grouped internally by
    configuration and voltage class.

    Range of the model (clause 4.2): 0.208–15 kV; bolted current 0.5–106 kA
    up to 600 V and 0.2–65 kA above; gap 6.35–76.2 mm up to 600 V and
    19.05–254 mm above; working distance at least 305 mm; enclosure height
    and width at most 1244.6 mm and width over four times the gap. A case
    outside it is computed anyway and flagged in ``out_of_range`` with its
    reason; ``strict=True`` raises :class:`ModelRangeError` instead. Nothing
    is clipped silently: sizes over 1244.6 mm are replaced by 1244.6 mm as
    the standard directs, and flagged.

    Departures and readings: for voltages up to 600 V the reduced case keeps
    the full intermediate current I_arc,600 in the k3 term of Eq. (7) and
    uses the reduced current in the k13 term; above 600 V the three
    intermediate currents are reduced and used throughout. An unknown
    enclosure depth counts as a typical (not shallow) enclosure, the larger
    energy.

    Parameters
    ----------
    voltage_kv : array_like
        Open-circuit (nominal system) voltage, line to line [kV]
    bolted_ka : array_like
        Bolted three-phase fault current, symmetrical rms [kA]
    gap_mm : array_like
        Gap between conductors [mm]
    working_distance_mm : array_like
        Distance from the arc to the person's face and chest [mm]
    clearing_time_s : array_like
        Arc duration at the full arcing current [s]
    reduced_clearing_time_s : array_like
        Arc duration at the reduced arcing current [s]
    config : str or array_like of str
        Electrode configuration: VCB, VCBB, HCB, VOA or HOA [-]
    height_mm, width_mm : array_like, optional
        Enclosure opening height and width; required for VCB, VCBB, HCB,
        ignored (may be NaN) for VOA and HOA [mm]
    depth_mm : array_like, optional
        Enclosure depth; NaN or None when unknown [mm]
    strict : bool, optional
        Raise :class:`ModelRangeError` on any out-of-range case [-]

    Returns
    -------
    ArcFlashResult
        Arrays in the broadcast shape of the inputs.

    Raises
    ------
    ValueError
        An input is NaN, not positive, of the wrong type, or the
        configuration is unknown; the message names the parameter.
    ModelRangeError
        With ``strict=True``, a case outside the range of the model.

    Examples
    --------
    IEEE 1584-2018 Annex D.2: 480 V, 45 kA, VCB, 32 mm gap, 508 mm box; the
    standard prints a final arcing current of 28.793 kA:

    >>> r = evaluate(0.48, 45, 32, 609.6, 0.0613, 0.0613, "VCB", 508, 508, 508)
    >>> round(float(r.arcing_current_ka), 3)
    28.793

    Annex D.1: 4.16 kV, 15 kA, VCB, 104 mm, 1143 × 762 × 762 mm; 12.979 kA:

    >>> r = evaluate(4.16, 15, 104, 914.4, 0.197, 0.223, "VCB", 1143, 762, 762)
    >>> round(float(r.arcing_current_ka), 3)
    12.979
    """
    cases = prepare_inputs(
        voltage_kv, bolted_ka, gap_mm, working_distance_mm, clearing_time_s,
        reduced_clearing_time_s, config, height_mm, width_mm, depth_mm,
    )
    n = cases.voltage_kv.size
    outputs = [np.empty(n) for _ in range(5)] + [np.empty(n, dtype=np.int16)]
    enclosed_columns = cases.columns(True)
    for lo in range(0, n, BLOCK_CASES):
        block = slice(lo, min(lo + BLOCK_CASES, n))
        _evaluate_block(cases.config_code[block], [c[block] for c in enclosed_columns],
                        [out[block] for out in outputs])
    iarc, e, afb, e_r, afb_r, code = (out.reshape(cases.shape) for out in outputs)
    if strict and code.any():
        raise_out_of_range(code.ravel(), cases)
    return ArcFlashResult(iarc, e, afb, e_r, afb_r, code, cases)
