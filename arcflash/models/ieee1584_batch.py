"""Evaluation of IEEE 1584-2018 over a run of cases of one configuration.

:func:`arcflash.models.ieee1584.evaluate` sorts each block of a batch by
configuration and voltage band, and calls :func:`evaluate_run` once per
configuration, so that every coefficient is a scalar. Within a run the cases
come in band order (up to 600 V, 0.6–2.7 kV, above 2.7 kV), so each voltage
level of the model is computed on one contiguous slice:

* 600 V (Table 1, 3) for the cases up to 2.7 kV;
* 2700 V and 14300 V (Tables 1, 4, 5) for the cases above 600 V.

The equations are rearranged only to share work: the full and reduced cases
share one exponent, energy and boundary share it too, and logarithms are
natural, with the coefficients that multiply a constant scaled by ln 10
(lg x = ln x / ln 10). :mod:`.ieee1584_equations` has the equations one by
one; numbers other than Eq. (1) and Tables 1–5 are from memory.
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
#: ln(12.552/50 × 1000): the energy constant with T in s instead of ms.
_LN_ENERGY_PER_S = float(np.log(ENERGY_CONSTANT * 1000.0))
#: ln(12.552/50 × 20): the boundary energy 5.0208 J/cm² on the ln(C·T) scale.
_LN_BOUNDARY_ENERGY = float(np.log(ENERGY_CONSTANT * BOUNDARY_TERM))

#: Voltage bands: up to 600 V (Eqs. 7, 11, 25); 0.6–2.7 kV (three levels,
#: Eqs. 16–24, X_3); above this voltage only 2700 and 14300 V enter (X_2) [kV].
UPPER_BAND_FROM_KV = 2.7

for _level, _table in enumerate(tables.ENERGY_COEFFICIENTS):
    for _c in tables.CONFIGURATIONS:
        # The energy denominators k4..k10 of Tables 3–5 repeat Table 1, so that
        # I_arc/(k4 Ibf^7 + ... + k10 Ibf) = 10^(k1 + k2 lg Ibf + k3 lg G)/Ibf.
        if tuple(_table[_c][3:10]) != tuple(tables.ARCING_CURRENT_COEFFICIENTS[_c][_level][3:]):
            raise AssertionError(f"IEEE 1584 Tables 3-5 k4..k10 differ from Table 1 ({_c}, level {_level})")


class _Run:
    """Per-case terms of a run that every voltage level uses (natural logs)."""

    def __init__(self, name, v, ibf, gap, dist, t_s, tr_s, h, w, d):
        self.name, self.v, self.ibf = name, v, ibf
        self.ln_ibf = np.log(ibf)
        self.ln_gap = np.log(gap)
        self.ln_dist = np.log(dist)
        # ln(12.552/50 · T[ms]) - ln CF: the duration and enclosure terms of Eqs. (4)-(11).
        self.base = np.log(t_s)
        self.base += _LN_ENERGY_PER_S
        if h is not None:
            self.base -= np.log(enclosure_correction_factor(v, h, w, d, name))  # clause 4.8
        self.shift_r = np.log(tr_s / t_s)  # the reduced case has its own duration ...
        self.half_var = polynomial(tables.VARIATION_COEFFICIENTS[name], v)  # Eq. (2), Table 2
        self.half_var *= -0.5  # ... and Iarc_min = Iarc (1 - 0.5 VarCf), Eq. (3)
        self.ln_factor = np.log1p(self.half_var)
        self.polys = {}

    def level(self, level, part, n_final=0):
        """Eq. (1) and the energy and boundary at one level for cases ``part``.

        The first ``n_final`` cases of ``part`` are at most 600 V: for them the
        k13 term takes the Eq. (25) current and the reduction applies to it
        only (Eq. 7); above 600 V the intermediate current is reduced in both
        the k3 and the k13 terms.

        Returns
        -------
        list of numpy.ndarray
            Current [kA] (Eq. 25 for the first ``n_final``), energy [J/cm²],
            boundary [mm], reduced energy [J/cm²], reduced boundary [mm].
        """
        row = tables.ARCING_CURRENT_COEFFICIENTS[self.name][level]
        ibf, ln_ibf, ln_gap = self.ibf[part], self.ln_ibf[part], self.ln_gap[part]
        key = (tuple(row[3:]), part.start, part.stop)
        if key not in self.polys:
            poly = polynomial(row[3:], ibf)
            with np.errstate(invalid="ignore", divide="ignore"):
                # Far outside the model's range (flagged) the polynomial may not be positive: NaN results.
                self.polys[key] = (poly, np.log(poly))
        poly, ln_poly = self.polys[key]
        # Eq. (1): I = 10^(k1 + k2 lg Ibf + k3 lg G) × poly.
        scaled = row[1] * ln_ibf
        scaled += row[0] * _LN10
        scaled += row[2] * ln_gap
        ln_current = scaled + ln_poly
        scale = np.exp(scaled, out=scaled)
        current = scale * poly
        scale /= ibf  # q = I/(k4 Ibf^7 + ... + k10 Ibf) = 10^(k1 + ...)/Ibf
        k1, k2, k3 = tables.ENERGY_COEFFICIENTS[level][self.name][:3]
        k11, k12, k13 = tables.ENERGY_COEFFICIENTS[level][self.name][10:13]
        k3q = scale
        k3q *= k3 * _LN10
        if n_final:
            low = slice(0, n_final)
            current[low] = low_voltage_arcing_current_ka(self.v[part][low], ibf[low], current[low])  # Eq. (25)
            ln_current[low] = np.log(current[low])
        # Eqs. (4)-(11) times ln 10: x = ln10 (k1 + k2 lg G + k3 q + k11 lg Ibf
        # + k13 lg Iarc + lg(1/CF) + lg(C T)).
        x = k13 * ln_current
        x += k1 * _LN10
        x += k2 * ln_gap
        if k11:
            x += k11 * ln_ibf
        x += k3q
        x += self.base[part]
        boundary = x - _LN_BOUNDARY_ENERGY
        boundary *= 1.0 / -k12
        np.exp(boundary, out=boundary)
        x += k12 * self.ln_dist[part]
        energy = np.exp(x, out=x)
        # Reduced case: + k13 ln(1 - 0.5 VarCf), + ln(T_min/T), and above
        # 600 V also the reduction of the intermediate current in the k3 term.
        delta = k13 * self.ln_factor[part]
        delta += self.shift_r[part]
        k3q *= self.half_var[part]
        if n_final:
            k3q[:n_final] = 0.0
        delta += k3q
        boundary_r = delta * (1.0 / -k12)
        np.exp(boundary_r, out=boundary_r)
        boundary_r *= boundary
        energy_r = np.exp(delta, out=delta)
        energy_r *= energy
        return [current, energy, boundary, energy_r, boundary_r]


def evaluate_run(name, band_counts, v, ibf, gap, dist, t_s, tr_s, h=None, w=None, d=None):
    """Full and reduced-case results for a run of one configuration.

    Parameters
    ----------
    name : str
        Electrode configuration [-]
    band_counts : sequence of int
        Number of cases in each band, in the order of the run: up to 600 V,
        0.6–2.7 kV, above 2.7 kV [-]
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
    n_low, n_lower, _ = (int(c) for c in band_counts)
    n = v.size
    run = _Run(name, v, ibf, gap, dist, t_s, tr_s, h, w, d)
    low, lower, medium = slice(0, n_low), slice(n_low, n_low + n_lower), slice(n_low, n)
    results = [np.empty(n) for _ in range(5)]
    code = np.zeros(n, dtype=np.int16)
    if n_low + n_lower:
        at_600 = run.level(0, slice(0, n_low + n_lower), n_final=n_low)
        for out, value in zip(results, at_600):
            out[low] = value[low]
        code[low] = range_code(True, v[low], ibf[low], gap[low], dist[low], h is not None,
                               None if h is None else h[low], None if w is None else w[low], results[0][low])
    if n_low < n:
        # Eqs. (16)-(24): one interpolation for every quantity; weights per band.
        w2700, w14300 = np.empty(n - n_low), np.empty(n - n_low)
        w2700[n_lower:], w14300[n_lower:] = upper_band_weights(v[n_low + n_lower:])
        if n_lower:
            w600, w2700[:n_lower], w14300[:n_lower] = lower_band_weights(v[lower])
        totals = [value * w2700 for value in run.level(1, medium)]
        for total, value in zip(totals, run.level(2, medium)):
            value *= w14300
            total += value
        if n_lower:
            for total, value in zip(totals, at_600):
                value = value[lower] * w600
                total[:n_lower] += value
        for out, total in zip(results, totals):
            out[medium] = total
        code[medium] = range_code(False, v[medium], ibf[medium], gap[medium], dist[medium], h is not None,
                                  None if h is None else h[medium], None if w is None else w[medium])
    return (*results, code)
