"""User-facing error types, one per failure family.

Each carries messages a facility engineer can act on. The CLI turns them into
exit status 2 without a traceback.
"""

from __future__ import annotations

import reprlib
from dataclasses import dataclass

from .models.errors import ModelRangeError

__all__ = ["ModelRangeError", "Problem", "SiteDataError"]


@dataclass(frozen=True)
class Problem:
    """One thing wrong in the site data: where, what, and what was expected."""

    file: str
    line: int | None
    field: str
    value: object
    expected: str

    def __str__(self):
        where = f"{self.file}:{self.line}" if self.line else self.file
        value = "" if self.value is _MISSING else f" = {_short(self.value)}"
        return f"{where}: {self.field}{value}: expected {self.expected}"


#: Longest value text printed in a problem [characters]; longer ones are cut with an ellipsis.
VALUE_TEXT_LIMIT = 120


_REPR = reprlib.Repr()
_REPR.maxstring = _REPR.maxother = VALUE_TEXT_LIMIT
_REPR.maxlevel, _REPR.maxlist, _REPR.maxdict = 3, 8, 8


def _short(value):
    text = _REPR.repr(value)
    return text if len(text) <= VALUE_TEXT_LIMIT else text[: VALUE_TEXT_LIMIT - 3] + "..."


class _Missing:
    def __repr__(self):
        return "<missing>"


#: Marker for a field that was not given at all.
_MISSING = _Missing()
MISSING = _MISSING


class SiteDataError(Exception):
    """The site data is invalid; ``problems`` lists every problem found."""

    def __init__(self, problems):
        self.problems = list(problems)
        count = len(self.problems)
        head = f"{count} problem{'s' if count != 1 else ''} in the site data:"
        super().__init__("\n".join([head] + [f"  {p}" for p in self.problems]))
