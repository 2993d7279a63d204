"""Read YAML and CSV files keeping the line of every item and key.

YAML is read with a safe loader (no arbitrary objects; libyaml's parser
where available). Mappings come back as
:class:`LineMap` (a dict that knows its line and the line of each key),
sequences as :class:`LineList`.
"""

from __future__ import annotations

import csv
import io
from pathlib import Path

import yaml

from ..errors import MISSING, Problem

#: Largest site-data file read [bytes]. A 10,000-bus site needs a few MB; a larger file is almost surely
#: not site data, and reading it would take minutes.
MAX_FILE_BYTES = 20 * 1024 * 1024

#: Most values that YAML aliases (``*name``) may add to a document beyond those written out. Aliases share
#: one object, so a few lines can stand for billions of values (an 'alias bomb'); legitimate use adds few.
MAX_ALIAS_VALUES = 100_000


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


_MERGE_TAG = "tag:yaml.org,2002:merge"


def _mapping(loader, node):
    """A LineMap; merge keys (``<<: *defaults``) give defaults that the mapping's own keys override."""
    own = [(k, v) for k, v in node.value if k.tag != _MERGE_TAG]
    loader.flatten_mapping(node)
    merged = node.value[: len(node.value) - len(own)]
    result = LineMap()
    result.line = node.start_mark.line + 1
    for key_node, value_node in merged:
        key = loader.construct_object(key_node, deep=True)
        result[key] = loader.construct_object(value_node, deep=True)
        result.key_lines[key] = key_node.start_mark.line + 1
    seen = set()
    for key_node, value_node in own:
        key = loader.construct_object(key_node, deep=True)
        if key in seen:
            raise yaml.constructor.ConstructorError(
                None, None, f"duplicate key {key!r}", key_node.start_mark
            )
        seen.add(key)
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


def read_text(path, problems, encoding="utf-8"):
    """The text of a site-data file, or None with a problem noted.

    Refused, each with the file and (where there is one) the line: a file larger than
    :data:`MAX_FILE_BYTES`; an empty file; bytes that are not UTF-8 (the line of the first one).
    """
    path = Path(path)
    try:
        size = path.stat().st_size
        if size > MAX_FILE_BYTES:
            problems.append(Problem(path.name, None, "file", f"{size / 1e6:.1f} MB",
                                    f"a site-data file of at most {MAX_FILE_BYTES // (1024 * 1024)} MB"))
            return None
        data = path.read_bytes()
    except OSError as exc:
        problems.append(Problem(path.name, None, "file", MISSING, f"a readable file ({exc.strerror or exc})"))
        return None
    try:
        text = data.decode(encoding)
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        problems.append(Problem(path.name, line, "file", MISSING,
                                f"UTF-8 text (byte 0x{data[exc.start]:02x} on this line is not UTF-8: "
                                "save the file as UTF-8)"))
        return None
    if not text.strip().lstrip("\ufeff").strip():
        problems.append(Problem(path.name, 1, "file", MISSING, "site data (the file is empty)"))
        return None
    return text


def _values_with_aliases_expanded(document, limit):
    """Number of values in ``document`` counting each alias as a copy; stops once above ``limit``."""
    sizes = {}

    def size(value):
        if not isinstance(value, (dict, list)):
            return 1
        key = id(value)
        if key not in sizes:
            sizes[key] = 0  # a recursive alias counts as one value
            children = value.values() if isinstance(value, dict) else value
            total = 1
            for child in children:
                total += size(child)
                if total > limit:
                    break
            sizes[key] = total
        return sizes[key]

    return size(document)


def _written_values(document):
    """Number of distinct values (each shared object once)."""
    seen, stack, count = set(), [document], 0
    while stack:
        value = stack.pop()
        count += 1
        if isinstance(value, (dict, list)) and id(value) not in seen:
            seen.add(id(value))
            stack.extend(value.values() if isinstance(value, dict) else value)
    return count


def read_yaml(path, problems):
    """The document of a YAML file, or None (with a problem noted) if unreadable."""
    path = Path(path)
    text = read_text(path, problems)
    if text is None:
        return None
    try:
        document = yaml.load(text, Loader=_LineLoader)  # noqa: S506 - _LineLoader is a SafeLoader
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        line = mark.line + 1 if mark is not None else None
        reason = getattr(exc, "problem", None) or str(exc)
        problems.append(Problem(path.name, line, "YAML", MISSING, f"valid YAML ({reason})"))
        return None
    except RecursionError:
        problems.append(Problem(path.name, None, "YAML", MISSING, "YAML nested less deeply"))
        return None
    written = _written_values(document)
    if _values_with_aliases_expanded(document, written + MAX_ALIAS_VALUES) > written + MAX_ALIAS_VALUES:
        problems.append(Problem(path.name, None, "YAML", MISSING,
                                f"aliases (*name) that add at most {MAX_ALIAS_VALUES:,} values to the document "
                                "(these expand to more: an alias bomb?)"))
        return None
    return document


def read_csv(path, problems):
    """Rows of a CSV file as :class:`LineMap` (empty cells left out), or None.

    A UTF-8 byte-order mark and Windows line endings are accepted (spreadsheets write them). A header
    naming a column twice, and a row with more cells than the header, are problems at their line (the
    second value or the extra cell would otherwise be lost without a word).
    """
    path = Path(path)
    text = read_text(path, problems, encoding="utf-8-sig")
    if text is None:
        return None
    reader = csv.DictReader(io.StringIO(text, newline=""))
    try:
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
    except csv.Error as exc:
        problems.append(Problem(path.name, reader.line_num, "file", MISSING, f"a readable CSV file ({exc})"))
        return None
    return rows
