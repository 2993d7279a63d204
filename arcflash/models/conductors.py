"""Cable impedance from NEC Chapter 9 Table 9.

NEC (NFPA 70) Chapter 9, Table 9: alternating-current resistance and
reactance of 600 V cables, three-phase, 60 Hz, 75 °C, three single
conductors in conduit, ohms to neutral per 1000 ft. The table ships as
package data (``arcflash/data/nec_ch9_table9.csv``, with its citation in its
first line) and is read once, at import.
"""

from __future__ import annotations

import csv
import functools
import io
from importlib import resources

import numpy as np

MATERIALS = ("copper", "aluminum")
CONDUITS = ("pvc", "aluminum", "steel")


def _read_table():
    text = resources.files("arcflash").joinpath("data/nec_ch9_table9.csv").read_text(encoding="utf-8")
    lines = [line for line in text.splitlines() if not line.startswith("#")]
    rows = list(csv.DictReader(io.StringIO("\n".join(lines))))

    def number(value):
        return float(value) if value else np.nan

    return {row["size_awg_kcmil"]: {k: number(v) for k, v in row.items() if k != "size_awg_kcmil"} for row in rows}


#: NEC Chapter 9 Table 9 by conductor size: r_<material>_<conduit> and
#: x_<conduit kind> in ohm per 1000 ft.
NEC_TABLE_9 = _read_table()
#: Conductor sizes of the table, AWG then kcmil.
SIZES = tuple(NEC_TABLE_9)


def normalize_size(size):
    """Canonical table key of a conductor size.

    Accepts '4/0', '4/0 AWG', '#2', '2 AWG', '250 kcmil', '250 MCM', 250.

    Raises
    ------
    ValueError
        The size is not in the table; the message lists the sizes.
    """
    text = str(size).strip().lower().replace("awg", "").replace("kcmil", "").replace("mcm", "")
    text = text.replace("#", "").strip()
    if text.endswith(".0"):
        text = text[:-2]
    if text not in NEC_TABLE_9:
        raise ValueError(f"conductor size {size!r} is not in NEC Chapter 9 Table 9; expected one of {', '.join(SIZES)}")
    return text


@functools.lru_cache(maxsize=4096)  # a table lookup: every cable of a size, in every scenario, reads the same row
def cable_impedance_ohm_per_kft(size, material, conduit):
    """Resistance and reactance per 1000 ft of one conductor, NEC Chapter 9 Table 9.

    Parameters
    ----------
    size : str
        Conductor size, AWG or kcmil [-]
    material : str
        'copper' or 'aluminum' [-]
    conduit : str
        'pvc', 'aluminum' or 'steel' [-]

    Returns
    -------
    tuple of float
        R and X [ohm/1000 ft]

    Examples
    --------
    500 kcmil copper in steel conduit (NEC Chapter 9 Table 9: 0.029, 0.048):

    >>> cable_impedance_ohm_per_kft("500 kcmil", "copper", "steel")
    (0.029, 0.048)
    """
    key = normalize_size(size)
    if material not in MATERIALS:
        raise ValueError(f"material: expected one of {', '.join(MATERIALS)}, got {material!r}")
    if conduit not in CONDUITS:
        raise ValueError(f"conduit: expected one of {', '.join(CONDUITS)}, got {conduit!r}")
    row = NEC_TABLE_9[key]
    r = row[f"r_{'cu' if material == 'copper' else 'al'}_{'al' if conduit == 'aluminum' else conduit}"]
    x = row["x_steel_conduit" if conduit == "steel" else "x_pvc_or_al_conduit"]
    if np.isnan(r):
        raise ValueError(f"NEC Chapter 9 Table 9 gives no {material} resistance for size {size!r}")
    return r, x


def cable_impedance_ohm(size, material, conduit, length_ft, sets=1):
    """Impedance of a cable run of parallel sets.

    Z = (R + jX) per 1000 ft × length / 1000 / sets (NEC Chapter 9 Table 9;
    parallel sets share the current equally, common practice).

    Parameters
    ----------
    size, material, conduit : str
        See :func:`cable_impedance_ohm_per_kft` [-]
    length_ft : float
        Route length [ft]
    sets : int
        Number of parallel sets [-]

    Returns
    -------
    complex
        Impedance per phase [ohm]
    """
    r, x = cable_impedance_ohm_per_kft(size, material, conduit)
    return complex(r, x) * float(length_ft) / 1000.0 / int(sets)
