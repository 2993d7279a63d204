r"""IEEE 1584-2018 equations, one function each, vectorised.

Each function implements one equation (or one small group) of IEEE Std
1584-2018 clause 4 and cites it. :func:`arcflash.models.ieee1584.evaluate`
combines them over a batch; these functions are public for checks and for
other tools.

Equation numbers: Eq. (1) and Tables 1–5 are as the standard prints them;
the other equation numbers cited here are from memory (see ``docs/method.md``).

References
----------
.. [1] IEEE Std 1584-2018, IEEE Guide for Performing Arc-Flash Hazard
   Calculations, IEEE, 2018.
"""

from __future__ import annotations

import numpy as np

from . import ieee1584_tables as tables

_LN10 = float(np.log(10.0))
#: Energy constant 12.552/50 of Eqs. (4)–(7) [J/cm² per ms at the model's scale].
ENERGY_CONSTANT = 12.552 / 50.0
#: The 20 in the lg(20/T) term of the boundary Eqs. (8)–(11): the boundary is
#: where E = 20 × 12.552/50 = 5.0208 J/cm² (1.2 cal/cm²) [1], clause 4.7.
BOUNDARY_TERM = 20.0
#: Open-circuit voltages up to this use the low-voltage forms, Eqs. (7), (11), (25) [kV].
LOW_VOLTAGE_LIMIT_KV = 0.6


def pow10(x):
    """10**x through exp, which numpy vectorises (10.0**x does not)."""
    y = np.multiply(x, _LN10)
    return np.exp(y, out=y) if isinstance(y, np.ndarray) else np.exp(y)


def _is_zero(c):
    return np.ndim(c) == 0 and c == 0.0


def polynomial(coefficients, x):
    """Horner evaluation, highest power first.

    Coefficients are scalars or arrays that broadcast with ``x`` (one
    coefficient per case); scalar leading zeros are skipped.
    """
    coefficients = list(coefficients)
    while len(coefficients) > 1 and _is_zero(coefficients[0]):
        coefficients.pop(0)
    if len(coefficients) == 1:
        return np.broadcast_to(np.asarray(coefficients[0], dtype=float), np.shape(x)).copy()
    result = np.multiply(coefficients[0], x)
    if not _is_zero(coefficients[1]):
        result += coefficients[1]
    for c in coefficients[2:]:
        result *= x
        if not _is_zero(c):
            result += c
    return result


def config_name(config):
    name = str(config).strip().upper()
    if name not in tables.CONFIGURATIONS:
        raise ValueError(
            f"config: unknown electrode configuration {config!r}; "
            f"expected one of {', '.join(tables.CONFIGURATIONS)}"
        )
    return name


def intermediate_arcing_current_ka(bolted_ka, gap_mm, config, level_v):
    r"""Intermediate average arcing current at 600, 2700 or 14300 V.

    .. math::
        I_{arc,V} = 10^{k_1 + k_2 \lg I_{bf} + k_3 \lg G}
        (k_4 I_{bf}^6 + k_5 I_{bf}^5 + k_6 I_{bf}^4 + k_7 I_{bf}^3
        + k_8 I_{bf}^2 + k_9 I_{bf} + k_{10})

    IEEE 1584-2018 [1]_, Eq. (1) with the coefficients of Table 1.

    Parameters
    ----------
    bolted_ka : array_like
        Bolted three-phase fault current, symmetrical rms [kA]
    gap_mm : array_like
        Gap between conductors [mm]
    config : str
        Electrode configuration, one of VCB, VCBB, HCB, VOA, HOA [-]
    level_v : int
        Intermediate voltage level: 600, 2700 or 14300 [V]

    Returns
    -------
    numpy.ndarray
        Intermediate average arcing current [kA]

    Examples
    --------
    IEEE 1584-2018 Annex D.1 (4.16 kV VCB, 15 kA, 104 mm) prints 11.117 kA at
    600 V:

    >>> round(float(intermediate_arcing_current_ka(15, 104, "VCB", 600)), 3)
    11.117
    """
    row = tables.ARCING_CURRENT_COEFFICIENTS[config_name(config)][
        tables.INTERMEDIATE_VOLTAGES_V.index(int(level_v))
    ]
    ibf = np.asarray(bolted_ka, dtype=float)
    gap = np.asarray(gap_mm, dtype=float)
    return intermediate_from_logs(row, np.log10(ibf), np.log10(gap), ibf)[0]


def intermediate_from_logs(row, lg_ibf, lg_gap, ibf):
    """Eq. (1) from precomputed logarithms; also returns the polynomial.

    Parameters
    ----------
    row : sequence of float
        k1..k10, one row of Table 1 [-]
    lg_ibf, lg_gap : numpy.ndarray
        lg of the bolted current [lg kA] and of the gap [lg mm]
    ibf : numpy.ndarray
        Bolted current [kA]

    Returns
    -------
    tuple of numpy.ndarray
        Arcing current [kA] and the polynomial factor k4 I^6 + ... + k10 [-]
    """
    k1, k2, k3 = row[:3]
    exponent = k2 * lg_ibf
    exponent += k1
    exponent += k3 * lg_gap
    poly = polynomial(row[3:], ibf)
    return pow10(exponent) * poly, poly


def low_voltage_arcing_current_ka(voltage_kv, bolted_ka, iarc_600_ka):
    r"""Final arcing current for open-circuit voltages up to 600 V.

    .. math::
        I_{arc} = \left[\left(\frac{0.6}{V_{oc}}\right)^2
        \left(\frac{1}{I_{arc,600}^2}
        - \frac{0.6^2 - V_{oc}^2}{0.6^2\, I_{bf}^2}\right)\right]^{-1/2}

    IEEE 1584-2018 [1]_, Eq. (25) (number from memory). Where the bracket is
    not positive the equation has no solution; the result is then NaN and
    :func:`evaluate` flags the case.

    Parameters
    ----------
    voltage_kv : array_like
        Open-circuit (system) voltage, line to line [kV]
    bolted_ka : array_like
        Bolted three-phase fault current [kA]
    iarc_600_ka : array_like
        Intermediate arcing current at 600 V from Eq. (1) [kA]

    Returns
    -------
    numpy.ndarray
        Final arcing current [kA]

    Examples
    --------
    IEEE 1584-2018 Annex D.2 (480 V, 45 kA, VCB, 32 mm; I_arc_600 printed as
    32.449 kA) prints 28.793 kA:

    >>> i600 = intermediate_arcing_current_ka(45, 32, "VCB", 600)
    >>> round(float(low_voltage_arcing_current_ka(0.48, 45, i600)), 3)
    28.793
    """
    v = np.asarray(voltage_kv, dtype=float)
    ibf = np.asarray(bolted_ka, dtype=float)
    i600 = np.asarray(iarc_600_ka, dtype=float)
    v2 = v * v
    bracket = (0.36 / v2) * (1.0 / (i600 * i600) - (0.36 - v2) / (0.36 * ibf * ibf))
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(bracket > 0.0, 1.0 / np.sqrt(np.where(bracket > 0.0, bracket, 1.0)), np.nan)


def interpolate_by_voltage(voltage_kv, value_600, value_2700, value_14300):
    r"""Interpolate a quantity between the 600, 2700 and 14300 V results.

    .. math::
        X_1 = \frac{X_{2700} - X_{600}}{2.1}(V_{oc} - 2.7) + X_{2700} \\
        X_2 = \frac{X_{14300} - X_{2700}}{11.6}(V_{oc} - 14.3) + X_{14300} \\
        X_3 = X_1 \frac{2.7 - V_{oc}}{2.1} + X_2 \frac{V_{oc} - 0.6}{2.1}

    The result is :math:`X_3` for :math:`0.6 < V_{oc} \le 2.7` kV and
    :math:`X_2` above. IEEE 1584-2018 [1]_, Eqs. (16)–(18) for the arcing
    current, (19)–(21) for incident energy and (22)–(24) for the arc-flash
    boundary (numbers from memory); the same form for all three.

    Parameters
    ----------
    voltage_kv : array_like
        Open-circuit voltage, 0.6 to 15 kV [kV]
    value_600, value_2700, value_14300 : array_like
        The quantity at 600 V, 2700 V and 14300 V [any unit]

    Returns
    -------
    numpy.ndarray
        The quantity at the given voltage [same unit]

    Examples
    --------
    IEEE 1584-2018 Annex D.1 (4.16 kV, 15 kA, VCB, 104 mm) prints 12.979 kA
    from the intermediate currents 11.117, 12.816 and 14.116 kA:

    >>> levels = [intermediate_arcing_current_ka(15, 104, "VCB", v) for v in (600, 2700, 14300)]
    >>> round(float(interpolate_by_voltage(4.16, *levels)), 3)
    12.979
    """
    v = np.asarray(voltage_kv, dtype=float)
    w600, w2700, w14300 = interpolation_weights(v)
    return w600 * value_600 + w2700 * value_2700 + w14300 * value_14300


def upper_band_weights(voltage_kv):
    """Weights of X_2700 and X_14300 in X_2, for 2.7 kV < Voc (X_600 has none).

    X_2 = X_14300 (1 + s) - X_2700 s with s = (Voc - 14.3)/11.6; the same
    interpolation as :func:`interpolate_by_voltage`, as weights.
    """
    s = (voltage_kv - 14.3) / 11.6
    return -s, 1.0 + s


def lower_band_weights(voltage_kv):
    """Weights of X_600, X_2700, X_14300 in X_3, for 0.6 < Voc <= 2.7 kV.

    With p = (2.7 - Voc)/2.1, q = (Voc - 0.6)/2.1 and s as in
    :func:`upper_band_weights`, X_1 = X_2700 (1 - p) + X_600 p, so
    X_3 = p X_1 + q X_2 = p² X_600 + (p (1 - p) - q s) X_2700 + q (1 + s) X_14300.
    """
    p = (2.7 - voltage_kv) / 2.1
    q = (voltage_kv - 0.6) / 2.1
    minus_s, one_plus_s = upper_band_weights(voltage_kv)
    return p * p, p * (1.0 - p) + q * minus_s, q * one_plus_s


def interpolation_weights(voltage_kv):
    """Weights of the 600, 2700 and 14300 V values at each voltage (0.6–15 kV)."""
    upper = voltage_kv > 2.7
    w2700_u, w14300_u = upper_band_weights(voltage_kv)
    w600_l, w2700_l, w14300_l = lower_band_weights(voltage_kv)
    return (
        np.where(upper, 0.0, w600_l),
        np.where(upper, w2700_u, w2700_l),
        np.where(upper, w14300_u, w14300_l),
    )


def variation_correction_factor(voltage_kv, config):
    r"""Arcing-current variation correction factor VarCf.

    .. math::
        \mathrm{VarCf} = k_1 V_{oc}^6 + k_2 V_{oc}^5 + k_3 V_{oc}^4
        + k_4 V_{oc}^3 + k_5 V_{oc}^2 + k_6 V_{oc} + k_7

    The reduced arcing current is :math:`I_{arc} (1 - 0.5\,\mathrm{VarCf})`.
    IEEE 1584-2018 [1]_, Eqs. (2) and (3) with Table 2 (numbers from memory).

    Parameters
    ----------
    voltage_kv : array_like
        Open-circuit voltage [kV]
    config : str
        Electrode configuration [-]

    Returns
    -------
    numpy.ndarray
        VarCf [-]
    """
    v = np.asarray(voltage_kv, dtype=float)
    return polynomial(tables.VARIATION_COEFFICIENTS[config_name(config)], v)


def enclosure_correction_factor(voltage_kv, height_mm, width_mm, depth_mm, config):
    r"""Enclosure-size correction factor CF.

    Width and height are first adjusted (IEEE 1584-2018 [1]_, clause 4.8,
    Table 6; the width/height adjustment (clause 4.8) with A and B of Table 7):

    * below 508 mm: 20 in for a typical enclosure, the actual size for a
      shallow one;
    * 508 mm to 660.4 mm: the actual size;
    * above 660.4 mm: :math:`(660.4 + (d - 660.4)(V_{oc} + A)/B)/25.4`, but
      the height of VCB keeps its actual size;
    * above 1244.6 mm: 1244.6 mm is used.

    Then :math:`EES = (H_1 + W_1)/2` (Eq. 13, inches) and
    :math:`CF = b_1 EES^2 + b_2 EES + b_3` for a typical enclosure (Eq. 14) or
    :math:`1/(b_1 EES^2 + b_2 EES + b_3)` for a shallow one (Eq. 15), Table 8.
    A shallow enclosure has :math:`V_{oc} < 0.6` kV, height and width below
    508 mm and depth at most 203.2 mm. An unknown depth (NaN) counts as
    typical, which gives the larger energy. Open-air configurations have
    CF = 1. Equation and table numbers from memory.

    Parameters
    ----------
    voltage_kv : array_like
        Open-circuit voltage [kV]
    height_mm, width_mm : array_like
        Enclosure opening height and width [mm]
    depth_mm : array_like
        Enclosure depth; NaN when unknown [mm]
    config : str
        Electrode configuration [-]

    Returns
    -------
    numpy.ndarray
        CF [-]

    Examples
    --------
    IEEE 1584-2018 Annex D.1, 1143 × 762 × 762 mm at 4.16 kV, VCB (CF 1.284,
    from memory):

    >>> round(float(enclosure_correction_factor(4.16, 1143, 762, 762, "VCB")), 3)
    1.284
    """
    name = config_name(config)
    v = np.asarray(voltage_kv, dtype=float)
    h = np.asarray(height_mm, dtype=float)
    w = np.asarray(width_mm, dtype=float)
    d = np.asarray(depth_mm, dtype=float)
    if name not in tables.ENCLOSED_CONFIGURATIONS:
        return np.ones(np.broadcast(v, h, w, d).shape)
    return enclosure_correction_from_constants(
        v, h, w, d,
        *tables.ENCLOSURE_ADJUSTMENT_CONSTANTS[name],
        name != "VCB",
        tables.ENCLOSURE_CORRECTION_TYPICAL[name],
        tables.ENCLOSURE_CORRECTION_SHALLOW[name],
    )


def enclosure_correction_from_constants(v, h, w, d, a, b, height_by_equation, typical_b, shallow_b):
    """clause 4.8 with the constants given, scalars or one per case.

    Parameters
    ----------
    v, h, w, d : numpy.ndarray
        Voltage [kV], enclosure height, width and depth [mm]
    a, b : float or numpy.ndarray
        A and B of Table 7 [-]
    height_by_equation : bool or numpy.ndarray
        Whether the height above 660.4 mm follows the adjustment equation (VCBB, HCB) or
        keeps its actual size (VCB) [-]
    typical_b, shallow_b : sequence of float or numpy.ndarray
        b1, b2, b3 of Table 8, typical and shallow [-]

    Returns
    -------
    numpy.ndarray
        CF [-]
    """
    small, adjust, largest = tables.ENCLOSURE_SMALL_MM, tables.ENCLOSURE_ADJUST_FROM_MM, tables.ENCLOSURE_MAX_MM
    shallow = v < LOW_VOLTAGE_LIMIT_KV
    if shallow.any():
        shallow = shallow & (h < small) & (w < small) & (d <= tables.SHALLOW_DEPTH_MAX_MM)
    any_shallow = bool(shallow.any())
    slope = (v + a) / b  # clause 4.8, width/height adjustment

    def adjusted_in(size_mm, by_equation):
        size = np.minimum(size_mm, largest)
        actual = 0.03937 * size  # [1] Table 6 prints the factor as 0.03937
        if np.ndim(by_equation) or by_equation:
            scaled = (size - adjust) * slope
            scaled += adjust
            scaled /= 25.4
            large = np.where(by_equation, scaled, actual) if np.ndim(by_equation) else scaled
            actual = np.where(size <= adjust, actual, large)
        # Below 508 mm: 20 in for a typical enclosure, the actual size if shallow.
        below = (size < small) & ~shallow if any_shallow else size < small
        return np.where(below, 20.0, actual)

    ees = adjusted_in(h, height_by_equation)
    ees += adjusted_in(w, True)
    ees *= 0.5  # EES, clause 4.8, inches
    typical = polynomial(typical_b, ees)  # CF, typical enclosure
    if not any_shallow:
        return typical
    return np.where(shallow, 1.0 / polynomial(shallow_b, ees), typical)  # CF, shallow enclosure
