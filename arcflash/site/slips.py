"""Unit slips: values that are plainly in the wrong unit, with the value likely meant.

A value typed in volts where kilovolts are asked (480 for 0.48), in amperes where kiloamperes are asked, or in
inches where millimetres are asked is not a value outside a model's tested range (those run and are flagged):
it is a different number than the user meant, and a result computed from it would be wrong without a sign.
Each limit below is far outside anything the quantity takes in the equipment this tool studies (common
practice), so that no plausible value is refused.
"""

from __future__ import annotations

#: Highest nominal voltage of a bus or equipment [kV]; IEEE 1584-2018 itself covers 0.208-15 kV.
MAX_KV = 50.0

#: Highest fault current [kA]; IEEE 1584-2018 covers up to 106 kA (Table 1).
MAX_KA = 1000.0

#: Smallest value of a length in millimetres that is not more likely inches [mm], per quantity.
MIN_MM = {"gap_mm": 3.0, "working_distance_mm": 100.0, "height_mm": 50.0, "width_mm": 50.0, "depth_mm": 50.0}

_INCH_MM = 25.4


def unit_slip(name, value):
    """Why ``value`` of quantity ``name`` is plainly in the wrong unit, or None.

    Parameters
    ----------
    name : str
        Name of the quantity, ending in its unit (``voltage_kv``, ``bolted_ka``, ``gap_mm``) [-]
    value : float
        The value given, in the unit of the name [unit of the name]

    Returns
    -------
    str or None
        What was expected and the value likely meant.

    Examples
    --------
    >>> unit_slip("voltage_kv", 480)
    'a voltage in kV, at most 50 kV (480 looks like volts: 0.48 kV?)'
    >>> unit_slip("voltage_kv", 0.48) is None
    True
    """
    if name.endswith("_kv") and value > MAX_KV:
        return f"a voltage in kV, at most {MAX_KV:g} kV ({value:g} looks like volts: {value / 1000:g} kV?)"
    if name.endswith("_ka") and value > MAX_KA:
        return f"a current in kA, at most {MAX_KA:g} kA ({value:g} looks like amperes: {value / 1000:g} kA?)"
    limit = MIN_MM.get(name)
    if limit is not None and value < limit:
        return (f"a length in mm, at least {limit:g} mm ({value:g} looks like inches: "
                f"{value * _INCH_MM:g} mm?)")
    return None


def check_unit_slips(**values):
    """Raise ValueError naming every value (None ones skipped) that is plainly in the wrong unit."""
    slips = [f"{name} = {value!r}: expected {why}" for name, value in values.items()
             if value is not None and (why := unit_slip(name, value)) is not None]
    if slips:
        raise ValueError("; ".join(slips))
