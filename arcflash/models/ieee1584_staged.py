r"""Incident energy and arc-flash boundary of an arc whose current changes in stages.

While devices open one after another, the bolted current at the faulted bus
— and with it the arcing current — steps from stage to stage. At a fixed
current the IEEE 1584-2018 energy equations are linear in the arc duration
T (Eqs. 4–7 and 8–11 [1]_ carry T as a factor 12.552/50 · T), so the energy
of a staged arc is the sum over stages of the energy at that stage's
current for that stage's duration (common practice; it follows from the
form of the equations).

The arc-flash boundary follows the standard's own route: at each voltage
level of the model (600, 2700 and 14300 V) the energy at distance D is
E_ℓ(D) = E_ℓ(D_w) (D/D_w)^{k12}, with k12 of that level's table (Tables 3–5),
so the stage-summed energy at the working distance D_w gives the boundary
at that level in closed form, AFB_ℓ = D_w (5.0208/E_ℓ(D_w))^{1/k12}
(5.0208 J/cm² = 1.2 cal/cm², Eqs. 12–15 [1]_); above 600 V the level
boundaries are interpolated by voltage exactly as for a single stage
(Eqs. 22–24 [1]_, numbers from memory). With one stage the result equals
:func:`arcflash.models.ieee1584.evaluate`.

References
----------
.. [1] IEEE Std 1584-2018, IEEE Guide for Performing Arc-Flash Hazard
   Calculations, IEEE, 2018.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import ieee1584_tables as tables
from .ieee1584_batch import _LN_BOUNDARY_ENERGY, UPPER_BAND_FROM_KV, _Run
from .ieee1584_equations import LOW_VOLTAGE_LIMIT_KV, lower_band_weights, upper_band_weights
from .ieee1584_inputs import prepare_inputs

_BOUNDARY_ENERGY_J_CM2 = float(np.exp(_LN_BOUNDARY_ENERGY))


@dataclass(frozen=True)
class StagedResult:
    """Per arc (case of the staged evaluation): energy and boundary.

    Attributes
    ----------
    incident_energy_j_cm2 : numpy.ndarray
        Sum over the arc's stages [J/cm²]
    arc_flash_boundary_mm : numpy.ndarray
        Boundary of the summed energy [mm]
    """

    incident_energy_j_cm2: np.ndarray
    arc_flash_boundary_mm: np.ndarray


def _level_energies(name, v, ibf, gap, dist, t, h, w, d, reduced):
    """Energy at the working distance at each model level, cases of one configuration.

    Returns
    -------
    tuple
        Energies (3, n) [J/cm²] (0 where a level takes no part) and weights (3, n) [-].
    """
    n = v.size
    band = (v > LOW_VOLTAGE_LIMIT_KV).astype(np.int8) + (v > UPPER_BAND_FROM_KV).astype(np.int8)
    order = np.argsort(band, kind="stable")
    counts = np.bincount(band, minlength=3)
    v, ibf, gap, dist, t = (x[order] for x in (v, ibf, gap, dist, t))
    h, w, d = (None if x is None else x[order] for x in (h, w, d))
    run = _Run(name, v, ibf, gap, dist, t, t, h, w, d)
    pick = 3 if reduced else 1  # energy_r or energy in the lists of _Run.level
    energy = np.zeros((3, n))
    weight = np.zeros((3, n))
    n_low, n_lower = int(counts[0]), int(counts[1])
    if n_low + n_lower:
        part = slice(0, n_low + n_lower)
        energy[0, part] = run.level(0, part, n_final=n_low)[pick]
        weight[0, :n_low] = 1.0
    if n_low < n:
        part = slice(n_low, n)
        energy[1, part] = run.level(1, part)[pick]
        energy[2, part] = run.level(2, part)[pick]
        upper = slice(n_low + n_lower, n)
        weight[1, upper], weight[2, upper] = upper_band_weights(v[upper])
        if n_lower:
            lower = slice(n_low, n_low + n_lower)
            weight[0, lower], weight[1, lower], weight[2, lower] = lower_band_weights(v[lower])
    back = np.empty(n, dtype=np.intp)
    back[order] = np.arange(n)
    return energy[:, back], weight[:, back]


def staged_incident_energy(arc, n_arcs, voltage_kv, bolted_ka, gap_mm, working_distance_mm, duration_s, config,
                           height_mm=None, width_mm=None, depth_mm=None, reduced=False):
    """Incident energy and boundary of arcs made of stages at different currents.

    One row per stage: the arc it belongs to, and the stage's bolted current
    and duration; the equipment (voltage, gap, distance, configuration,
    enclosure) is repeated on every stage of an arc. The IEEE 1584-2018
    energy of each stage is evaluated at its own arcing current (full or
    reduced) and summed per arc; the boundary comes from the summed energy
    at each model level (see the module docstring).

    Parameters
    ----------
    arc : numpy.ndarray of int
        Arc (0 .. n_arcs - 1) of each stage [-]
    n_arcs : int
        Number of arcs [-]
    voltage_kv, bolted_ka, gap_mm, working_distance_mm : numpy.ndarray
        Per stage: nominal voltage [kV], bolted current [kA], gap [mm],
        working distance [mm]
    duration_s : numpy.ndarray
        Duration of each stage, positive [s]
    config : numpy.ndarray of str
        Electrode configuration of each stage [-]
    height_mm, width_mm, depth_mm : numpy.ndarray, optional
        Enclosure size (NaN for open configurations; depth NaN when unknown) [mm]
    reduced : bool
        Evaluate at the reduced arcing current (IEEE 1584-2018 Eq. 3) [-]

    Returns
    -------
    StagedResult
        Arrays of length ``n_arcs``; an arc with no stage has 0 and 0.

    Examples
    --------
    Two stages of 0.1 s at the same current are one stage of 0.2 s:

    >>> r = staged_incident_energy([0, 0], 1, [0.48] * 2, [30.0] * 2, [32.0] * 2, [609.6] * 2,
    ...                            [0.1, 0.1], ["VCB"] * 2, [508.0] * 2, [508.0] * 2, [508.0] * 2)
    >>> from arcflash.models.ieee1584 import evaluate
    >>> one = evaluate(0.48, 30.0, 32.0, 609.6, 0.2, 0.2, "VCB", 508.0, 508.0, 508.0)
    >>> bool(np.isclose(r.incident_energy_j_cm2[0], one.incident_energy_j_cm2, rtol=1e-12))
    True
    """
    arc = np.asarray(arc, dtype=np.intp)
    cases = prepare_inputs(voltage_kv, bolted_ka, gap_mm, working_distance_mm, duration_s, duration_s, config,
                           height_mm, width_mm, depth_mm)
    level_energy = np.zeros((3, n_arcs))
    level_weight = np.zeros((3, n_arcs))
    level_k12 = np.zeros((3, n_arcs))
    dist = np.zeros(n_arcs)
    for code, name in enumerate(tables.CONFIGURATIONS):
        mask = cases.config_code == code
        if not mask.any():
            continue
        enclosed = name in tables.ENCLOSED_CONFIGURATIONS
        sizes = [getattr(cases, f)[mask] if enclosed else None for f in ("height_mm", "width_mm", "depth_mm")]
        energy, weight = _level_energies(name, cases.voltage_kv[mask], cases.bolted_ka[mask], cases.gap_mm[mask],
                                         cases.working_distance_mm[mask], cases.clearing_time_s[mask], *sizes,
                                         reduced)
        arcs = arc[mask]
        for level in range(3):
            np.add.at(level_energy[level], arcs, energy[level])
            level_weight[level, arcs] = weight[level]
            level_k12[level, arcs] = tables.ENERGY_COEFFICIENTS[level][name][11]
        dist[arcs] = cases.working_distance_mm[mask]
    total = (level_weight * level_energy).sum(axis=0)
    boundary = np.zeros(n_arcs)
    for level in range(3):
        use = (level_weight[level] != 0.0) & (level_energy[level] > 0.0)
        afb = dist[use] * (_BOUNDARY_ENERGY_J_CM2 / level_energy[level, use]) ** (1.0 / level_k12[level, use])
        boundary[use] += level_weight[level, use] * afb
    return StagedResult(incident_energy_j_cm2=total, arc_flash_boundary_mm=boundary)
