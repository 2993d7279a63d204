"""Study results as files: CSV, XLSX and the PDF report, each written atomically."""

from __future__ import annotations

import datetime as dt
import hashlib
import json
from pathlib import Path

import pandas as pd

from ..site.fingerprint import site_fingerprint
from .cautions import CAUTION
from .files import write_atomic

#: Columns of the governing table, in order (units in the names).
GOVERNING_COLUMNS = [
    "nominal_kv", "scenario", "governing_case", "device_governing", "bolted_ka", "arcing_current_ka",
    "reduced_arcing_current_ka", "clearing_time_governing_s", "incident_energy_governing_cal_cm2",
    "arc_flash_boundary_governing_mm", "working_distance_mm", "config", "gap_mm", "ppe_category",
    "minimum_arc_rating_cal_cm2", "limited_approach_movable_mm", "limited_approach_fixed_mm",
    "restricted_approach_mm", "clearing_sequence_governing", "flags", "flag_notes",
]


def governing_table(results):
    """The governing rows with the columns people read first."""
    table = results.governing[GOVERNING_COLUMNS].copy()
    table.index.name = "bus"
    return table


def _cell(value):
    if value is None or (isinstance(value, float) and value != value):
        return None  # NaN: an empty cell
    return value.item() if hasattr(value, "item") else value


def _write_xlsx(path, sheets):
    """A workbook written row by row (openpyxl write-only: no cell objects held in memory)."""
    from openpyxl import Workbook

    book = Workbook(write_only=True)
    for name, frame in sheets:
        sheet = book.create_sheet(name)
        sheet.append([str(c) for c in frame.columns])
        for row in frame.itertuples(index=False, name=None):
            sheet.append([_cell(v) for v in row])
    book.save(path)


#: The record of a study run: the fingerprint of the site data it used and the hash of its governing.csv.
STUDY_RECORD = "study.json"


def write_results(site, results, out_dir, report=True, tcc_buses=None):
    """Write ``results.csv`` (every bus × scenario), ``governing.csv``, ``steps.csv`` (device openings of
    arcs followed stage by stage), ``results.xlsx``, ``report.pdf`` and, last, ``study.json`` (the
    fingerprint of the site data and the hash of governing.csv, see :mod:`arcflash.site.fingerprint`).

    Returns
    -------
    dict
        Name -> path of each file written.
    """
    from ..verification import status

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    governing = governing_table(results)
    model = status(getattr(site, "path", None))
    paths = {"results.csv": out / "results.csv", "governing.csv": out / "governing.csv",
             "steps.csv": out / "steps.csv", "results.xlsx": out / "results.xlsx"}
    write_atomic(paths["results.csv"], lambda tmp: results.rows.to_csv(tmp, index=False, float_format="%.10g"))
    write_atomic(paths["governing.csv"], lambda tmp: governing.to_csv(tmp, float_format="%.10g"))
    steps = results.steps if results.steps is not None else pd.DataFrame()
    write_atomic(paths["steps.csv"], lambda tmp: steps.to_csv(tmp, index=False, float_format="%.10g"))

    sheets = [("governing", governing.reset_index()), ("all rows", results.rows), ("openings", steps),
              ("caution", pd.DataFrame({"caution": [CAUTION, model.words]}))]
    write_atomic(paths["results.xlsx"], lambda tmp: _write_xlsx(tmp, sheets))
    if report:
        from .report import write_report

        paths["report.pdf"] = out / "report.pdf"
        write_atomic(paths["report.pdf"], lambda tmp: write_report(site, results, tmp, tcc_buses=tcc_buses,
                                                                         model=model))
    paths[STUDY_RECORD] = out / STUDY_RECORD  # last: it vouches for the governing.csv written above
    record = {"tool": "arcflash", "site": site.facility.name, "study_revision": site.facility.study_revision,
              "written_at": dt.datetime.now(dt.timezone.utc).isoformat(timespec="seconds"),
              "model_verification": {"verified": model.verified, "words": model.words},
              "site_data": site_fingerprint(site),
              "governing_sha256": hashlib.sha256(paths["governing.csv"].read_bytes()).hexdigest()}
    write_atomic(paths[STUDY_RECORD], lambda tmp: Path(tmp).write_text(json.dumps(record, indent=2), encoding="utf-8"))
    return paths
