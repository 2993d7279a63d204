"""A fingerprint of the site data a study was computed from: one hash per file, and the tool version.

A study records it (``study.json``); labels and briefings made from an earlier study compare it with the site
data as it is now, so that a label is never printed from data that have since changed without the user
saying so (an override the label ledger records with its reason).
"""

from __future__ import annotations

import hashlib
import os
from importlib import metadata
from pathlib import Path

from .loader import site_files


def tool_version():
    """The installed arcflash version ('unknown' when run from a source tree that was never installed)."""
    try:
        return metadata.version("arcflash")
    except metadata.PackageNotFoundError:
        return "unknown"


def site_fingerprint(site):
    """{'files': {name: sha256}, 'tool_version': ...} of the files ``site`` was loaded from.

    The files are those :func:`~.loader.load_site` reads (the site's YAML and CSV files) and the device-library
    files the facility names, keyed by their path relative to the site folder.
    """
    folder = site.path if site.path.is_dir() else site.path.parent
    paths = list(site_files(site.path)) + [(folder / name).resolve() for name in site.facility.device_library]
    files = {}
    for path in paths:  # keyed relative to the site folder, so that moving site and libraries together is no change
        key = Path(os.path.relpath(Path(path).resolve(), folder.resolve())).as_posix()
        files[key] = hashlib.sha256(Path(path).read_bytes()).hexdigest()
    return {"files": dict(sorted(files.items())), "tool_version": tool_version()}


def fingerprint_changes(recorded, current):
    """What differs between two fingerprints, in words (empty list if nothing)."""
    changes = []
    before, now = recorded.get("files", {}), current.get("files", {})
    changes += [f"{name} changed" for name in sorted(before) if name in now and before[name] != now[name]]
    changes += [f"{name} added" for name in sorted(now) if name not in before]
    changes += [f"{name} removed" for name in sorted(before) if name not in now]
    if recorded.get("tool_version") != current.get("tool_version"):
        changes.append(f"arcflash version {recorded.get('tool_version')} -> {current.get('tool_version')}")
    return changes
