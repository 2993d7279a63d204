"""Exception types raised by the models (no dependencies beyond Python)."""

from __future__ import annotations


class ModelRangeError(ValueError):
    """An input lies outside the range of validity of a published model.

    Raised only in strict mode; otherwise such cases are computed and flagged.
    """
