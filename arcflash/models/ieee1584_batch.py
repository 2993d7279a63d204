"""Evaluation of IEEE 1584-2018 over a group of cases that share a configuration.

:func:`arcflash.models.ieee1584.evaluate` sorts a batch by configuration and
voltage band and calls :func:`evaluate_group` on each run of cases, so that
every coefficient is a scalar. The equations are rearranged here only to share
work between the full and reduced cases and between the energy and the
boundary; each step names the equation of IEEE 1584-2018 it implements (see
:mod:`.ieee1584_equations` for the equations one by one; numbers other than
Eq. (1) and Tables 1–5 are from memory).
"""

from __future__ import annotations

import numpy as np

from . import ieee1584_tables as tables
from .ieee1584_equations import (
    BOUNDARY_TERM,
    ENERGY_CONSTANT,
    enclosure_correction_factor,
    low_voltage_arcing_current_ka,
    lower_band_weights,
    polynomial,
    upper_band_weights,
)
from .ieee1584_range import range_code

_LN10 = float(np.log(10.0))
#: lg(12.552/50) plus 3 for seconds to milliseconds, added to lg T [s].
_LG_ENERGY_PER_S = float(np.log10(ENERGY_CONSTANT)) + 3.0
#: lg(12.552/50 × 20): the boundary energy 5.0208 J/cm² on the same scale.
_LG_BOUNDARY_ENERGY = float(np.log10(ENERGY_CONSTANT * BOUNDARY_TERM))

#: Voltage bands: up to 600 V (Eqs. 7, 11, 25); 0.6–2.7 kV (three levels,
#: Eqs. 16–24, X_3); above 2.7 kV (2700 and 14300 V only, X_2).
LOW_BAND, LOWER_BAND, UPPER_BAND = 0, 1, 2
_LEVELS = {LOW_BAND: (0,), LOWER_BAND: (0, 1, 2), UPPER_BAND: (1, 2)}

for _level, _table in enumerate(tables.ENERGY_COEFFICIENTS):
    for _c in tables.CONFIGURATIONS:
        # The energy denominators k4..k10 of Tables 3–5 repeat Table 1, so that
        # I_arc/(k4 Ibf^7 + ... + k10 Ibf) = 10^(k1 + k2 lg Ibf + k3 lg G)/Ibf.
        if tuple(_table[_c][3:10]) != tuple(tables.ARCING_CURRENT_COEFFICIENTS[_c][_level][3:]):
            raise AssertionError(f"IEEE 1584 Tables 3-5 k4..k10 differ from Table 1 ({_c}, level {_level})")


def _level_terms(name, level, lg_ibf, lg_gap, ibf, polys):
    """Eq. (1) at one level: current, its lg, and the k3-term ratio.

    Returns I_arc,V [kA], lg I_arc,V and q = I_arc,V/(k4 Ibf^7 + ... + k10 Ibf),
    which equals 10^(k1 + k2 lg Ibf + k3 lg G)/Ibf because Tables 3–5 repeat
    k4..k10 of Table 1. ``polys`` caches the polynomial and its lg by
    coefficients (2700 V and 14300 V share them for most configurations).
    """
    row = tables.ARCING_CURRENT_COEFFICIENTS[name][level]
    k1, k2, k3 = row[:3]
    key = tuple(row[3:])
    if key not in polys:
        poly = polynomial(key, ibf)
        polys[key] = (poly, np.log10(poly))
    poly, lg_poly = polys[key]
    exponent = k2 * lg_ibf
    exponent += k1
    exponent += k3 * lg_gap
    lg_current = exponent + lg_poly
    exponent *= _LN10
    scale = np.exp(exponent, out=exponent)  # 10^(k1 + k2 lg Ibf + k3 lg G)
    return scale * poly, lg_current, scale / ibf


def _energy_boundary(x, k12, lg_dist):
    """E = 10^(x + k12 lg D) and AFB = 10^((x - lg(20 C))/-k12), x holding lg(C T)."""
    boundary = x - _LG_BOUNDARY_ENERGY
    boundary *= _LN10 / -k12
    np.exp(boundary, out=boundary)
    energy = k12 * lg_dist
    energy += x
    energy *= _LN10
    np.exp(energy, out=energy)
    return energy, boundary


def _weighted_sum(weights, values):
    total = weights[0] * values[0]
    for weight, value in zip(weights[1:], values[1:]):
        value *= weight  # the level results are not used again
        total += value
    return total


def evaluate_group(name, band, v, ibf, gap, dist, t_s, tr_s, h=None, w=None, d=None):
    """Full and reduced-case results for cases of one configuration and band.

    Parameters
    ----------
    name : str
        Electrode configuration [-]
    band : int
        LOW_BAND, LOWER_BAND or UPPER_BAND [-]
    v, ibf, gap, dist, t_s, tr_s : numpy.ndarray
        Voltage [kV], bolted current [kA], gap [mm], working distance [mm],
        full- and reduced-case arc duration [s]
    h, w, d : numpy.ndarray, optional
        Enclosure height, width, depth for enclosed configurations [mm]

    Returns
    -------
    tuple of numpy.ndarray
        Arcing current [kA], energy [J/cm²], boundary [mm], reduced energy
        [J/cm²], reduced boundary [mm], range code (int16).
    """
    lg_ibf = np.log10(ibf)
    lg_gap = np.log10(gap)
    lg_dist = np.log10(dist)
    lg_ct = np.log10(t_s)
    lg_ct += _LG_ENERGY_PER_S  # lg(12.552/50 · T[ms]), Eqs. (3)-(7)
    shift_r = np.log10(tr_s / t_s)  # the reduced case differs in T ...
    half_var = polynomial(tables.VARIATION_COEFFICIENTS[name], v)  # Eq. (2), Table 2
    half_var *= -0.5  # ... and in Iarc_min = Iarc (1 - 0.5 VarCf), Eq. (3)
    lg_factor = np.log10(1.0 + half_var)
    enclosed = h is not None
    if enclosed:
        lg_cf = np.log10(enclosure_correction_factor(v, h, w, d, name))  # Eqs. (11)-(15)
    polys = {}
    results = []
    for level in _LEVELS[band]:
        i_v, lg_i, q = _level_terms(name, level, lg_ibf, lg_gap, ibf, polys)
        k1, k2, k3 = tables.ENERGY_COEFFICIENTS[level][name][:3]
        k11, k12, k13 = tables.ENERGY_COEFFICIENTS[level][name][10:13]
        if band == LOW_BAND:
            i_v = low_voltage_arcing_current_ka(v, ibf, i_v)  # Eq. (25)
            lg_i = np.log10(i_v)  # Eq. (7): the final current in the k13 term
        # Eqs. (3)-(11): x = k1 + k2 lg G + k3 q + k11 lg Ibf + k13 lg Iarc
        # + lg(1/CF) + lg(C T).
        x = k13 * lg_i
        x += k1
        x += k2 * lg_gap
        if k11:
            x += k11 * lg_ibf
        if enclosed:
            x -= lg_cf
        k3q = k3 * q
        x += k3q
        x += lg_ct
        energy, boundary = _energy_boundary(x, k12, lg_dist)
        # Reduced case: lg Iarc_min = lg Iarc + lg(1 - 0.5 VarCf) in the k13
        # term; above 600 V the intermediate current of the k3 term is reduced
        # too (up to 600 V it stays I_arc,600).
        x += shift_r
        x += k13 * lg_factor
        if band != LOW_BAND:
            x += k3q * half_var
        results.append((i_v, energy, boundary, *_energy_boundary(x, k12, lg_dist)))
    if band == LOW_BAND:
        values = results[0]
    else:
        weights = upper_band_weights(v) if band == UPPER_BAND else lower_band_weights(v)
        # Eqs. (16)-(24): one linear interpolation for every quantity.
        values = [_weighted_sum(weights, [r[k] for r in results]) for k in range(5)]
    code = range_code(band == LOW_BAND, v, ibf, gap, dist, enclosed, h, w, values[0] if band == LOW_BAND else None)
    return (*values, code)
