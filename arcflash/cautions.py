"""The limits of the results, in one place: every output that sets PPE reads them from here (wording our own).

Kept outside the output package so that the study (``arcflash.study``) can read them too.
"""

from __future__ import annotations

#: One paragraph on the limits of the results, shown on every output that sets PPE.
LIMITS_OF_USE = (
    "LIMITS OF USE: These results come from the empirical model of IEEE 1584-2018 "
    "applied to the data given, and are only as good as that data. They are "
    "for use by qualified persons. They do not replace putting the equipment "
    "in an electrically safe work condition (de-energized: the preferred "
    "state), local codes and regulations, or the judgement of a licensed "
    "professional engineer, which govern."
)
#: The earlier name of :data:`LIMITS_OF_USE`.
CAUTION = LIMITS_OF_USE


def limits_with_status(status_words):
    """The limits of use followed by the model's verification status (:mod:`arcflash.verification`)."""
    return f"{LIMITS_OF_USE} {status_words}."
