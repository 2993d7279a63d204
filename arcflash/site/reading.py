"""Read YAML and CSV files keeping the line of every item and key.

YAML is read with a safe loader (no arbitrary objects; libyaml's parser
where available). Mappings come back as
:class:`LineMap` (a dict that knows its line and the line of each key),
sequences as :class:`LineList`.
"""

from __future__ import annotations

import csv
from pathlib import Path

import yaml

from ..errors import MISSING, Problem


class LineMap(dict):
    """A dict with ``line`` (its first line) and ``key_lines`` (line of each key)."""

    line = None

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self.key_lines = {}


class LineList(list):
    """A list with ``line`` and ``item_lines``."""

    line = None

    def __init__(self, *args):
        super().__init__(*args)
        self.item_lines = []


#: libyaml's parser where PyYAML was built with it (about 10x faster on large files), else pure Python.
_SAFE_BASE = getattr(yaml, "CSafeLoader", yaml.SafeLoader)


class _LineLoader(_SAFE_BASE):
    """Safe YAML loader that records lines and rejects duplicate keys."""


def _mapping(loader, node):
    result = LineMap()
    result.line = node.start_mark.line + 1
    for key_node, value_node in node.value:
        key = loader.construct_object(key_node, deep=True)
        if key in result:
            raise yaml.constructor.ConstructorError(
                None, None, f"duplicate key {key!r}", key_node.start_mark
            )
        result[key] = loader.construct_object(value_node, deep=True)
        result.key_lines[key] = key_node.start_mark.line + 1
    return result


def _sequence(loader, node):
    result = LineList(loader.construct_object(item, deep=True) for item in node.value)
    result.line = node.start_mark.line + 1
    result.item_lines = [item.start_mark.line + 1 for item in node.value]
    return result


_LineLoader.add_constructor(yaml.resolver.BaseResolver.DEFAULT_MAPPING_TAG, _mapping)
_LineLoader.add_constructor(yaml.resolver.BaseResolver.DEFAULT_SEQUENCE_TAG, _sequence)
# Dates stay the text written (2026-06-01): the schema checks that the day exists, with the file and line,
# instead of YAML raising outside the problem list on 2026-02-30.
_LineLoader.add_constructor("tag:yaml.org,2002:timestamp", lambda loader, node: loader.construct_scalar(node))


def read_yaml(path, problems):
    """The document of a YAML file, or None (with a problem noted) if unreadable."""
    path = Path(path)
    try:
        with open(path, encoding="utf-8") as handle:
            return yaml.load(handle, Loader=_LineLoader)  # noqa: S506 - _LineLoader is a SafeLoader
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        line = mark.line + 1 if mark is not None else None
        reason = getattr(exc, "problem", None) or str(exc)
        problems.append(Problem(path.name, line, "YAML", MISSING, f"valid YAML ({reason})"))
    except (OSError, UnicodeDecodeError) as exc:
        problems.append(Problem(path.name, None, "file", MISSING, f"a readable UTF-8 file ({exc})"))
    return None


def read_csv(path, problems):
    """Rows of a CSV file as :class:`LineMap` (empty cells left out), or None.

    A UTF-8 byte-order mark and Windows line endings are accepted (spreadsheets write them). A header
    naming a column twice, and a row with more cells than the header, are problems at their line (the
    second value or the extra cell would otherwise be lost without a word).
    """
    path = Path(path)
    try:
        with open(path, encoding="utf-8-sig", newline="") as handle:
            reader = csv.DictReader(handle)
            header = [name.strip() for name in (reader.fieldnames or [])]
            seen = set()
            for name in header:
                if name and name in seen:
                    problems.append(Problem(path.name, 1, "header", name, "each column named once"))
                seen.add(name)
            rows = LineList()
            rows.line = 1
            for row in reader:
                number = reader.line_num  # the row's last line (a quoted cell may span lines)
                if None in row:
                    problems.append(Problem(path.name, number, "row", row[None],
                                            f"at most {len(header)} cells, as the header has"))
                item = LineMap({k.strip(): v.strip() for k, v in row.items() if k and v is not None and v.strip()})
                item.line = number
                item.key_lines = {k: number for k in item}
                rows.append(item)
                rows.item_lines.append(number)
            return rows
    except (OSError, UnicodeDecodeError, csv.Error) as exc:
        problems.append(Problem(path.name, None, "file", MISSING, f"a readable CSV file ({exc})"))
    return None

