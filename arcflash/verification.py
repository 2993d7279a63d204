"""The verification record of the model's coefficient tables, and the status every PPE output carries.

Some IEEE 1584-2018 tables could not be checked against the printed standard when this tool was written
(docs/method.md). The engineer who signs a study holds the standard: ``arcflash selfcheck`` prints every
intermediate value and coefficient row for comparison, and ``arcflash selfcheck record`` stores the
outcome — who, when, tool version, edition, pass or fail per table — with a SHA-256 of each table as this
installation holds it. A table that changes afterwards voids the record.

The record is a JSON file, ``model-verification.json``, beside the site data or in the user's
configuration folder (``$XDG_CONFIG_HOME/arcflash``, else ``~/.config/arcflash``); beside the site data
wins. Each recording is appended, so the file keeps the history; the last one counts.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import hashlib
import json
import os
from dataclasses import dataclass
from pathlib import Path

from .models import ieee1584_tables as tables

RECORD_NAME = "model-verification.json"
#: The standard the tables come from, as the record names it by default.
STANDARD_EDITION = "IEEE Std 1584-2018"

#: The tables an engineer checks against the printed standard, each with the named constants of
#: :mod:`arcflash.models.ieee1584_tables` that hold it. A change to any of them voids a recorded verification.
TABLES_TO_VERIFY = {
    "Table 1": ("ARCING_CURRENT_COEFFICIENTS",),
    "Table 2": ("VARIATION_COEFFICIENTS",),
    "Table 3": ("ENERGY_COEFFICIENTS_600V",),
    "Table 4": ("ENERGY_COEFFICIENTS_2700V",),
    "Table 5": ("ENERGY_COEFFICIENTS_14300V",),
    "Table 6": ("ENCLOSURE_SMALL_MM", "ENCLOSURE_ADJUST_FROM_MM", "ENCLOSURE_MAX_MM", "SHALLOW_DEPTH_MAX_MM"),
    "Table 7": ("ENCLOSURE_ADJUSTMENT_CONSTANTS",),
    "Table 8": ("ENCLOSURE_CORRECTION_TYPICAL", "ENCLOSURE_CORRECTION_SHALLOW"),
    "Tables 9 and 10": ("EQUIPMENT_CLASSES",),
    "Clause 4.2 (range)": ("RANGE_LOW_VOLTAGE", "RANGE_MEDIUM_VOLTAGE", "WORKING_DISTANCE_MIN_MM",
                           "WIDTH_TO_GAP_MIN"),
}

#: Words on every output that sets PPE while the tables are not verified.
NOT_VERIFIED = "Model tables not yet verified against the printed standard - DRAFT"


#: What a label says while the tables are not verified (or failed, or the record no longer applies).
SHORT_NOT_VERIFIED = "DRAFT: model tables not verified"


class VerificationError(ValueError):
    """A record that cannot be made or read; the message says what is wrong and what was expected."""


def _plain(value):
    """A constant as plain JSON data (tuples as lists, dataclasses as dicts, keys sorted on dumping)."""
    if dataclasses.is_dataclass(value):
        return _plain(dataclasses.asdict(value))
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    return value


def table_hashes(module=tables):
    """SHA-256 of each table of :data:`TABLES_TO_VERIFY` as this installation holds it."""
    hashes = {}
    for table, names in TABLES_TO_VERIFY.items():
        data = {name: _plain(getattr(module, name)) for name in names}
        hashes[table] = hashlib.sha256(json.dumps(data, sort_keys=True).encode("utf-8")).hexdigest()
    return hashes


def user_record_path():
    """The user-level record: ``$XDG_CONFIG_HOME/arcflash/model-verification.json`` (default ~/.config)."""
    base = os.environ.get("XDG_CONFIG_HOME") or str(Path.home() / ".config")
    return Path(base) / "arcflash" / RECORD_NAME


def site_record_path(site_dir):
    """The record beside the site data (the site folder, or the folder of a site file)."""
    folder = Path(site_dir)
    return (folder if folder.is_dir() else folder.parent) / RECORD_NAME


def record_path(site_dir=None):
    """The record that applies: beside the site data if there is one, else the user-level one."""
    if site_dir is not None and site_record_path(site_dir).is_file():
        return site_record_path(site_dir)
    return user_record_path()


def _read(path):
    """The recordings in ``path`` (empty list when there is no file)."""
    if not path.is_file():
        return []
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
        recordings = data["recordings"]
        if not isinstance(recordings, list):
            raise TypeError("recordings is not a list")
        return recordings
    except (OSError, ValueError, KeyError, TypeError) as exc:
        raise VerificationError(f"{path}: not a verification record written by arcflash "
                                f"(expected a JSON object with a 'recordings' list; {exc})") from None


@dataclass(frozen=True)
class VerificationStatus:
    """Whether the model tables count as verified, in words for every output that sets PPE."""

    verified: bool
    words: str
    path: str = ""
    detail: str = ""
    short: str = SHORT_NOT_VERIFIED  # the few words a label has room for

    @property
    def draft(self):
        """True while the results are a draft (tables not verified)."""
        return not self.verified


def status(site_dir=None, module=tables):
    """The verification status that applies to a study of ``site_dir`` (or with no site, the user's).

    A record whose table hashes differ from the tables now, or that records a failed table, leaves the
    results a draft; the words say why.
    """
    path = record_path(site_dir)
    try:
        recordings = _read(path)
    except VerificationError as exc:
        return VerificationStatus(False, f"{NOT_VERIFIED} (the record cannot be read)", str(path), str(exc))
    if not recordings:
        return VerificationStatus(False, NOT_VERIFIED, str(path), "no verification recorded")
    last = recordings[-1]
    try:
        by, on, edition = last["verified_by"], last["verified_on"], last["standard_edition"]
        results = {table: entry["result"] for table, entry in last["tables"].items()}
        recorded = {table: entry["sha256"] for table, entry in last["tables"].items()}
    except (KeyError, TypeError, AttributeError):
        return VerificationStatus(False, f"{NOT_VERIFIED} (the record cannot be read)", str(path),
                                  "the last recording lacks verified_by, verified_on, standard_edition or tables")
    now = table_hashes(module)
    changed = [t for t in now if recorded.get(t) != now[t]]
    if changed:
        return VerificationStatus(False, f"{NOT_VERIFIED} (the verification by {by} on {on} no longer applies: "
                                  f"{', '.join(changed)} changed since)", str(path), "tables changed")
    failed = [t for t in now if results.get(t) != "pass"]
    if failed:
        return VerificationStatus(False, f"Model tables FAILED verification by {by} on {on} ({', '.join(failed)}) "
                                  "- DRAFT, do not use for PPE", str(path), "tables failed",
                                  "DRAFT: model tables FAILED verification")
    return VerificationStatus(True, f"Model tables verified against the printed standard ({edition}) by {by} "
                              f"on {on}", str(path), "", f"Model tables verified by {by} on {on}")


def record(path, verified_by, results, verified_on=None, standard_edition=STANDARD_EDITION, note="",
           tool_version=None, module=tables):
    """Append a recording to the record at ``path`` (written through a temporary file) and return it.

    Parameters
    ----------
    path : path
        The record file [-]
    verified_by : str
        Name of the engineer [-]
    results : dict
        'pass' or 'fail' for every table of :data:`TABLES_TO_VERIFY` [-]
    verified_on : str, optional
        Date of the check, ISO format; default today [-]

    Raises
    ------
    VerificationError
        A table missing or unknown, a result other than pass/fail, an empty name, a bad date, or an
        existing record that cannot be read; the message names every problem.
    """
    from . import __version__
    from .output.files import write_atomic

    problems = []
    if not str(verified_by).strip():
        problems.append("the name of who verified is empty")
    unknown = [t for t in results if t not in TABLES_TO_VERIFY]
    missing = [t for t in TABLES_TO_VERIFY if t not in results]
    bad = [f"{t}={r}" for t, r in results.items() if r not in ("pass", "fail")]
    if unknown:
        problems.append(f"unknown table {', '.join(unknown)}; expected {', '.join(TABLES_TO_VERIFY)}")
    if missing:
        problems.append(f"no result for {', '.join(missing)} (every table needs pass or fail)")
    if bad:
        problems.append(f"result {', '.join(bad)}: expected pass or fail")
    on = verified_on or dt.date.today().isoformat()
    try:
        dt.date.fromisoformat(on)
    except (TypeError, ValueError):
        problems.append(f"date {on!r}: expected YYYY-MM-DD")
    if problems:
        raise VerificationError("; ".join(problems))
    path = Path(path)
    recordings = _read(path)
    hashes = table_hashes(module)
    entry = {"verified_by": str(verified_by).strip(), "verified_on": on, "recorded_at":
             dt.datetime.now(dt.timezone.utc).isoformat(timespec="seconds"),
             "tool_version": tool_version or __version__, "standard_edition": standard_edition, "note": note,
             "tables": {t: {"result": results[t], "sha256": hashes[t]} for t in TABLES_TO_VERIFY}}
    text = json.dumps({"format": 1, "recordings": recordings + [entry]}, indent=2, ensure_ascii=False)
    write_atomic(path, lambda tmp: Path(tmp).write_text(text + "\n", encoding="utf-8"))
    return entry
