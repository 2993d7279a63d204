"""A new revision of a site folder with some devices' settings changed (``arcflash mitigate --apply``).

The user's folder is never touched: the revision is a copy in a new folder, where only the YAML items of the
changed devices are rewritten (every other line, comments included, is copied as it was), with a note of
what changed and why (``REVISION.md``, which the loader does not read). The copy is loaded back and each
changed device compared with the change asked for; on any difference, or any error, the new folder is
removed.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import yaml

__all__ = ["RevisionError", "write_revision"]


class RevisionError(ValueError):
    """A revision that cannot be written as asked (the message says why)."""


def write_revision(site_dir, site, settings, note, new_dir):
    """Copy ``site_dir`` (the folder ``site`` was loaded from) to ``new_dir`` (which must not exist) with the
    ``settings`` changed (device -> {settings group, or 'device' for the device's own fields: {field: value}})
    and ``note`` written to REVISION.md;
    the new folder's path.

    Raises
    ------
    RevisionError
        ``new_dir`` exists, a device is not an item of a YAML file, or the copy does not load back with
        exactly the settings asked for.
    """
    from .loader import load_site

    source, target = Path(site_dir), Path(new_dir)
    if target.exists():
        raise RevisionError(f"{target}: already exists (a revision is written to a new folder)")
    if not source.is_dir():
        raise RevisionError(f"{source}: a revision is written from a site folder")
    edits = {}
    for device, groups in settings.items():
        file, line = site.origin.get(("devices", device), (None, None))
        if file is None or line is None or Path(file).suffix.lower() not in (".yaml", ".yml"):
            raise RevisionError(f"device {device}: not an item of a YAML file of {source}")
        edits.setdefault(Path(file).name, []).append((line, device, groups))
    shutil.copytree(source, target)
    try:
        _libraries_moved(site, source, target)
        for name, items in edits.items():
            path = target / name
            lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
            for line, device, groups in sorted(items, reverse=True):  # from the bottom: line numbers stay valid
                lines = _rewritten(lines, line, device, groups)
            path.write_text("".join(lines), encoding="utf-8")
        (target / "REVISION.md").write_text(note, encoding="utf-8")
        again = load_site(target)
        for device, groups in settings.items():
            for group, fields in groups.items():
                now = (again.devices[device] if group == "device" else getattr(again.devices[device], group)).model_dump()
                wrong = {f: now.get(f) for f, v in fields.items() if now.get(f) != v}
                if wrong:
                    raise RevisionError(f"device {device}: {group} reads back {wrong}, not {fields}")
    except Exception:
        shutil.rmtree(target, ignore_errors=True)
        raise
    return target


def _libraries_moved(site, source, target):
    """Point the copy's relative device-library paths at the same files from its own folder (a text edit of
    each path on the lines of the ``device_library`` entry)."""
    import os

    file, line = site.origin.get(("facility", "device_library"), (None, None))
    relative = [p for p in site.facility.device_library if not os.path.isabs(p)]
    if file is None or line is None or not relative:
        return
    path = target / Path(file).name
    lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
    for k in range(line - 1, len(lines)):
        if k > line - 1 and (not lines[k].startswith((" ", "-")) or lines[k].lstrip().startswith("#")):
            break  # past the entry (its list may run over the next lines)
        for old in relative:
            new = os.path.relpath((source / old).resolve(), target.resolve())
            if old in lines[k] and new != old:
                lines[k] = lines[k].replace(old, new)
    path.write_text("".join(lines), encoding="utf-8")


def _rewritten(lines, line, device, groups):
    """``lines`` with the YAML list item starting at ``line`` (1-based; device ``device``) rewritten with
    ``groups`` set."""
    start = line - 1
    head = lines[start]
    indent = len(head) - len(head.lstrip(" "))
    if not head.lstrip(" ").startswith("- "):
        raise RevisionError(f"device {device}: its item does not start at line {line} as a list item")
    end = start + 1
    while end < len(lines):
        text = lines[end]
        body = text.strip()
        if body and not body.startswith("#") and len(text) - len(text.lstrip(" ")) <= indent:
            break  # the next item, or the next key of the section's level
        end += 1
    while end > start + 1 and not lines[end - 1].strip():
        end -= 1  # blank lines after the item stay where they are
    item = yaml.safe_load("".join(line_[indent:] if line_.startswith(" " * indent) else line_
                                  for line_ in lines[start:end]))
    if not isinstance(item, list) or len(item) != 1 or not isinstance(item[0], dict) or item[0].get("id") != device:
        raise RevisionError(f"device {device}: its item at line {line} could not be read back")
    item = item[0]
    for group, fields in groups.items():
        if group == "device":  # the device's own fields (its curve)
            item.update(fields)
        else:
            item[group] = {**(item.get(group) or {}), **fields}
    dumped = yaml.safe_dump([item], sort_keys=False, default_flow_style=None, width=110)
    new = [" " * indent + text + "\n" for text in dumped.splitlines()]
    return lines[:start] + new + lines[end:]
