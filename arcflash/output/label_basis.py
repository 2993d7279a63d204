"""Labels printed on a percentile of an uncertainty run (``labels print --basis p95``).

A study run with ``--uncertainty N`` keeps, per bus, the P5/P50/P95/max of the incident energy and of the
arc-flash boundary over N samples of the uncertain inputs. A label on basis ``p95`` (or ``max``) prints,
for each bus, the higher of that percentile and the plain study's governing value: a basis never prints an
energy or boundary below the study's own (under-stated energy is the unsafe direction; our choice). The PPE
category and minimum arc rating follow the value printed, and the label states its basis, which the ledger
keeps with the label's content.
"""

from __future__ import annotations

import numpy as np

from ..models import nfpa70e

#: Bases a label may be printed on, with the columns of the study's governing table they read.
BASES = {
    "p95": ("incident_energy_p95_cal_cm2", "arc_flash_boundary_p95_mm", "P95"),
    "max": ("incident_energy_max_cal_cm2", "arc_flash_boundary_max_mm", "highest"),
}


def uncertainty_samples(study_dir):
    """Samples of the uncertainty run recorded in a study folder's ``study.json``, or None [-]."""
    import json
    from pathlib import Path

    try:
        record = json.loads((Path(study_dir) / "study.json").read_text(encoding="utf-8"))
        return int(record["uncertainty"]["samples"])
    except (OSError, ValueError, KeyError, TypeError):
        return None


class BasisError(ValueError):
    """The study cannot give the basis asked for (no uncertainty run, or an unknown basis)."""


def governing_on_basis(governing, basis, samples=None):
    """The governing table with each bus's energy and boundary on ``basis``.

    Parameters
    ----------
    governing : pandas.DataFrame
        A study's governing table with the percentile columns of an uncertainty run (``governing.csv`` of
        ``arcflash study --uncertainty N``).
    basis : str
        'study' (the table as it is) or a key of :data:`BASES`.
    samples : int, optional
        Samples of the uncertainty run, for the words on the label [-].

    Returns
    -------
    pandas.DataFrame
        A copy: incident energy and boundary the higher of the plain value and the percentile, PPE category
        and minimum arc rating recomputed from that energy (NFPA 70E Table 130.7(C)(15)(c); 130.5(H)), and
        an ``energy_basis`` column in words.

    Raises
    ------
    BasisError
        An unknown basis, or a table without the percentile columns.
    """
    if basis == "study":
        return governing
    if basis not in BASES:
        raise BasisError(f"--basis: expected one of study, {', '.join(BASES)}; got {basis!r}")
    energy_column, boundary_column, words = BASES[basis]
    if energy_column not in governing.columns or boundary_column not in governing.columns:
        raise BasisError(f"--basis {basis} needs a study run with --uncertainty N (its governing.csv has the "
                         f"column {energy_column}); run 'arcflash study SITE --uncertainty 1000 --out DIR' and "
                         "pass --study DIR")
    table = governing.copy()
    plain_energy = table["incident_energy_governing_cal_cm2"].to_numpy(dtype=float)
    plain_boundary = table["arc_flash_boundary_governing_mm"].to_numpy(dtype=float)
    energy = np.fmax(plain_energy, table[energy_column].to_numpy(dtype=float))  # NaN only where both are
    boundary = np.fmax(plain_boundary, table[boundary_column].to_numpy(dtype=float))
    known = np.isfinite(energy)
    table["incident_energy_governing_cal_cm2"] = energy
    table["arc_flash_boundary_governing_mm"] = boundary
    table["ppe_category"] = np.where(known, nfpa70e.ppe_category(np.nan_to_num(energy)), table["ppe_category"])
    table["minimum_arc_rating_cal_cm2"] = np.where(
        known, nfpa70e.minimum_arc_rating_cal_cm2(np.nan_to_num(energy)), np.nan)
    of = f" of {samples:,} samples" if samples else " of the uncertainty run"
    table["energy_basis"] = f"energy and boundary: the higher of the study and the {words}{of}"
    return table
