"""The limits of the results (kept for earlier imports; the text lives in :mod:`arcflash.cautions`)."""

from __future__ import annotations

from ..cautions import CAUTION, LIMITS_OF_USE, limits_with_status

__all__ = ["CAUTION", "LIMITS_OF_USE", "limits_with_status"]
