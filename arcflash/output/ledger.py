"""The label ledger: which label was issued for which equipment, when, with what content (SQLite).

One file beside the site data (``label-ledger.sqlite``). Every issue of a
batch of labels is one transaction: an interrupted run leaves the ledger as
it was.
"""

from __future__ import annotations

import datetime as dt
import json
import sqlite3
import zlib
from pathlib import Path

LEDGER_NAME = "label-ledger.sqlite"

_SCHEMA = """
CREATE TABLE IF NOT EXISTS issued (
    id INTEGER PRIMARY KEY AUTOINCREMENT,
    equipment_id TEXT NOT NULL,
    study_revision TEXT NOT NULL,
    content_hash TEXT NOT NULL,
    content TEXT NOT NULL,
    issued_at TEXT NOT NULL,
    layout TEXT NOT NULL,
    issued_by TEXT
);
CREATE INDEX IF NOT EXISTS issued_equipment ON issued (equipment_id, id);
CREATE TABLE IF NOT EXISTS site_snapshots (
    id INTEGER PRIMARY KEY AUTOINCREMENT,
    taken_at TEXT NOT NULL,
    elements BLOB NOT NULL
);
CREATE TABLE IF NOT EXISTS issued_context (
    issued_id INTEGER PRIMARY KEY,
    snapshot_id INTEGER NOT NULL,
    study_row TEXT NOT NULL
);
CREATE TABLE IF NOT EXISTS stale_study_overrides (
    id INTEGER PRIMARY KEY AUTOINCREMENT,
    used_at TEXT NOT NULL,
    command TEXT NOT NULL,
    study_dir TEXT NOT NULL,
    reason TEXT NOT NULL,
    changes TEXT NOT NULL,
    equipment TEXT NOT NULL,
    used_by TEXT
);
"""


def ledger_path(site_dir):
    """The ledger file of a site folder."""
    folder = Path(site_dir)
    return (folder if folder.is_dir() else folder.parent) / LEDGER_NAME


def connect(path):
    """Open (creating if needed) a ledger."""
    connection = sqlite3.connect(str(path))
    connection.executescript(_SCHEMA)
    return connection


def _stamp(when):
    return (when or dt.datetime.now(dt.timezone.utc)).isoformat(timespec="seconds")


def _insert(path, table, columns, rows):
    """Insert ``rows`` (tuples in the order of ``columns``) into ``table`` in one transaction."""
    connection = connect(path)
    try:
        with connection:
            connection.executemany(f"INSERT INTO {table} ({', '.join(columns)}) "
                                   f"VALUES ({', '.join('?' * len(columns))})", rows)
    finally:
        connection.close()


def record(path, contents, layout, issued_by=None, when=None, study_rows=None, snapshot=None):
    """Record a batch of issued labels in one transaction.

    With ``study_rows`` (one dict per label: the study values behind it) and ``snapshot`` (the site's
    elements, see :func:`site_snapshot`), what the labels were made from is kept too, so that a later
    ``labels diff`` can say why a label changed.
    """
    stamp = _stamp(when)
    connection = connect(path)
    try:
        with connection:
            snapshot_id = None
            if snapshot is not None:
                snapshot_id = connection.execute(
                    "INSERT INTO site_snapshots (taken_at, elements) VALUES (?, ?)",
                    (stamp, zlib.compress(json.dumps(snapshot, sort_keys=True).encode("utf-8"), 1))).lastrowid
            before = connection.execute("SELECT COALESCE(MAX(id), 0) FROM issued").fetchone()[0]
            connection.executemany(
                "INSERT INTO issued (equipment_id, study_revision, content_hash, content, issued_at, layout, "
                "issued_by) VALUES (?, ?, ?, ?, ?, ?, ?)",
                [(c.equipment_id, c.study_revision, c.content_hash, c.content_json, stamp, layout, issued_by)
                 for c in contents])
            if snapshot_id is not None and study_rows is not None:
                # the rows just inserted, in order (ids only grow: AUTOINCREMENT)
                ids = [row[0] for row in connection.execute("SELECT id FROM issued WHERE id > ? ORDER BY id",
                                                            (before,))]
                connection.executemany("INSERT INTO issued_context (issued_id, snapshot_id, study_row) "
                                       "VALUES (?, ?, ?)",
                                       [(issued_id, snapshot_id, json.dumps(row))
                                        for issued_id, row in zip(ids, study_rows, strict=True)])
    finally:
        connection.close()


def site_snapshot(site):
    """The site's elements as plain data: {section: {id: fields}}, and the facility's fields."""
    sections = ("buses", "utilities", "generators", "motors", "transformers", "cables", "impedances", "switches",
                "devices", "curves", "scenarios")
    snapshot = {section: {str(k): v.model_dump(mode="json") for k, v in getattr(site, section).items()}
                for section in sections}
    snapshot["facility"] = {"facility": site.facility.model_dump(mode="json")}
    return snapshot


def issued_context(path, since=None):
    """The last issued label of each equipment (of study revision ``since``, if given), with what it was made
    from: {equipment_id: {'content': dict, 'issued_at': str, 'study_row': dict or None, 'snapshot_id': int}}."""
    if not Path(path).exists():
        return {}
    connection = connect(path)
    try:
        where = "WHERE study_revision = ?" if since is not None else ""
        rows = connection.execute(
            "SELECT i.equipment_id, i.content, i.issued_at, c.study_row, c.snapshot_id FROM issued i "
            "LEFT JOIN issued_context c ON c.issued_id = i.id WHERE i.id IN "
            f"(SELECT MAX(id) FROM issued {where} GROUP BY equipment_id)", (since,) if since is not None else ()
        ).fetchall()
    finally:
        connection.close()
    return {r[0]: {"content": json.loads(r[1]), "issued_at": r[2],
                   "study_row": json.loads(r[3]) if r[3] else None, "snapshot_id": r[4]} for r in rows}


def snapshot(path, snapshot_id):
    """A site snapshot kept in the ledger (see :func:`site_snapshot`)."""
    connection = connect(path)
    try:
        row = connection.execute("SELECT elements FROM site_snapshots WHERE id = ?", (snapshot_id,)).fetchone()
    finally:
        connection.close()
    return json.loads(zlib.decompress(row[0]).decode("utf-8")) if row else None


def record_override(path, command, study_dir, reason, changes, equipment, used_by=None, when=None):
    """Record that a study no longer matching the site data was used anyway, with the user's reason."""
    _insert(path, "stale_study_overrides", ("used_at", "command", "study_dir", "reason", "changes", "equipment",
                                            "used_by"),
            [(_stamp(when), command, str(study_dir), reason, "; ".join(changes), ", ".join(map(str, equipment)),
              used_by)])


def overrides(path):
    """Every recorded use of a stale study, oldest first, as dicts."""
    connection = connect(path)
    try:
        connection.row_factory = sqlite3.Row
        return [dict(row) for row in connection.execute("SELECT * FROM stale_study_overrides ORDER BY id")]
    finally:
        connection.close()


def latest(path):
    """The last issued label of each equipment: {equipment_id: (content_hash, issued_at, review_by)}."""
    if not Path(path).exists():
        return {}
    connection = connect(path)
    try:
        rows = connection.execute(
            "SELECT equipment_id, content_hash, issued_at, content FROM issued WHERE id IN "
            "(SELECT MAX(id) FROM issued GROUP BY equipment_id)"
        ).fetchall()
    finally:
        connection.close()
    return {r[0]: (r[1], r[2], json.loads(r[3]).get("review_by", "")) for r in rows}


def status(path, contents, today=None):
    """Status of each label: 'current', 'changed since issued', 'never issued' or 'review overdue'.

    Parameters
    ----------
    path : ledger file
    contents : list of LabelContent
        What the labels say now.
    today : datetime.date, optional

    Returns
    -------
    dict
        equipment id -> status.
    """
    today = today or dt.date.today()
    issued = latest(path)
    result = {}
    for content in contents:
        if content.equipment_id not in issued:
            result[content.equipment_id] = "never issued"
            continue
        digest, _, review_by = issued[content.equipment_id]
        if digest != content.content_hash:
            result[content.equipment_id] = "changed since issued"
        elif review_by and dt.date.fromisoformat(review_by) < today:
            result[content.equipment_id] = "review overdue"
        else:
            result[content.equipment_id] = "current"
    return result
