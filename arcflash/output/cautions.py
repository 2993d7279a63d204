"""The cautions printed on every output that sets PPE (wording our own)."""

from __future__ import annotations

#: One-paragraph caution shown on every output that sets PPE.
CAUTION = (
    "CAUTION: These results come from the empirical model of IEEE 1584-2018 "
    "applied to the data given, and are only as good as that data. They are "
    "for use by qualified persons. They do not replace putting the equipment "
    "in an electrically safe work condition (de-energized: the preferred "
    "state), local codes and regulations, or the judgement of a licensed "
    "professional engineer, which govern."
)
