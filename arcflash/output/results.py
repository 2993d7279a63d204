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


#: Units of column-name endings: the heading's unit and the number format (Excel codes) of the workbook.
_UNITS = (("_cal_cm2", "cal/cm2", "0.00"), ("_kv", "kV", "0.000"), ("_ka", "kA", "0.00"), ("_mm", "mm", "#,##0"),
          ("_s", "s", "0.000"), ("_a", "A", "#,##0"), ("_kva", "kVA", "#,##0"))
#: Columns whose numbers are plain ratios.
_RATIOS = {"x_over_r": ("X/R", "0.0"), "nominal_kv": ("nominal voltage [kV]", "0.000")}


def _heading(name):
    """A column name as a heading with its unit: 'incident_energy_governing_cal_cm2' ->
    'incident energy governing [cal/cm2]'; and the column's number format."""
    if name in _RATIOS:
        return _RATIOS[name]
    for ending, unit, number_format in _UNITS:
        if name.endswith(ending):
            return f"{name[:-len(ending)].replace('_', ' ')} [{unit}]", number_format
    return name.replace("_", " "), "0.000"


def _sheet(name, frame):
    """A table as a workbook sheet: headings with units, numbers formatted, yes/no for true/false, the PPE
    category in words."""
    from .report_tables import ppe_words
    from .xlsx_lite import Column, Sheet

    columns = []
    for column in frame.columns:
        values = frame[column]
        if column == "ppe_category":
            columns.append(Column("PPE category", [ppe_words(v) for v in values.tolist()], None, 26))
        elif pd.api.types.is_bool_dtype(values):
            columns.append(Column(column.replace("_", " "), ["yes" if v else "no" for v in values.tolist()], None, 9))
        elif pd.api.types.is_numeric_dtype(values):
            heading, number_format = _heading(column)
            columns.append(Column(heading, [float(v) for v in values.tolist()], number_format,
                                  max(10, min(28, len(heading) + 2))))
        else:
            width = 40 if column in ("flags", "clearing_sequence", "clearing_sequence_governing",
                                     "reduced_clearing_sequence", "clearing_notes") else 14
            columns.append(Column(column.replace("_", " "), values.tolist(), None, width))
    return Sheet(name, columns)


def _limits_sheet(site, model):
    """The first sheet: what the workbook is, the limits of the results and the model's verification."""
    from .xlsx_lite import Column, Sheet

    f = site.facility
    rows = [("facility", f.name), ("study revision", f.study_revision), ("study date", f.study_date or "-"),
            ("limits of use", CAUTION), ("model verification", model.words),
            ("sheets", "governing: the governing case of every bus; every case: every bus, scenario and arcing case; "
                       "openings: device openings of arcs followed stage by stage")]
    return Sheet("limits of use", [Column("item", [r[0] for r in rows], None, 20),
                                   Column("text", [r[1] for r in rows], None, 120)])


def write_csv_tables(folder, results, governing, steps):
    """results.csv (every bus and scenario), governing.csv and steps.csv at full precision; the PPE category
    also in words (``ppe_category_text``)."""
    from .report_tables import ppe_words

    folder = Path(folder)
    rows = results.rows.assign(ppe_category_text=[ppe_words(v) for v in results.rows["ppe_category"].tolist()])
    governing = governing.assign(ppe_category_text=[ppe_words(v) for v in governing["ppe_category"].tolist()])
    write_atomic(folder / "results.csv", lambda tmp: rows.to_csv(tmp, index=False, float_format="%.10g"))
    write_atomic(folder / "governing.csv", lambda tmp: governing.to_csv(tmp, float_format="%.10g"))
    write_atomic(folder / "steps.csv", lambda tmp: steps.to_csv(tmp, index=False, float_format="%.10g"))


def write_xlsx_tables(path, site, results, governing, steps, model=None):
    """results.xlsx: the limits of use first, then one sheet per table (:mod:`.xlsx_lite`)."""
    from ..verification import status
    from .xlsx_lite import write_xlsx

    model = status(getattr(site, "path", None)) if model is None else model
    sheets = [_limits_sheet(site, model), _sheet("governing", governing.reset_index()),
              _sheet("every case", results.rows), _sheet("openings", steps)]
    write_atomic(path, lambda tmp: write_xlsx(tmp, sheets))


#: The record of a study run: the fingerprint of the site data it used and the hash of its governing.csv.
STUDY_RECORD = "study.json"


def write_results(site, results, out_dir, report=True, tcc_buses=None, uncertainty=None):
    """Write ``results.csv`` (every bus × scenario), ``governing.csv``, ``steps.csv`` (device openings of
    arcs followed stage by stage), ``results.xlsx``, ``report.pdf`` and, last, ``study.json`` (the
    fingerprint of the site data and the hash of governing.csv, see :mod:`arcflash.site.fingerprint`).

    With ``uncertainty`` (:func:`arcflash.uncertainty`): ``uncertainty.csv`` and ``drivers.csv``, the
    percentile columns in the governing table, and the report's pages of the bands.

    Returns
    -------
    dict
        Name -> path of each file written.
    """
    from ..verification import status

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    governing = governing_table(results)
    if uncertainty is not None:  # the bands beside each bus's governing row, and their own files
        governing = governing.join(uncertainty.bands.drop(columns=["incident_energy_plain_cal_cm2"]))
        write_atomic(out / "uncertainty.csv", lambda tmp: uncertainty.bands.to_csv(tmp, float_format="%.10g"))
        write_atomic(out / "drivers.csv", lambda tmp: uncertainty.drivers.to_csv(tmp, index=False,
                                                                                 float_format="%.6g"))
    model = status(getattr(site, "path", None))
    paths = {"results.csv": out / "results.csv", "governing.csv": out / "governing.csv",
             "steps.csv": out / "steps.csv", "results.xlsx": out / "results.xlsx"}
    steps = results.steps if results.steps is not None else pd.DataFrame()
    write_csv_tables(out, results, governing, steps)
    write_xlsx_tables(paths["results.xlsx"], site, results, governing, steps, model)
    if report:
        from .report import ONE_LINE_IN_REPORT_MAX_BUSES, write_oneline, write_report

        paths["report.pdf"] = out / "report.pdf"
        write_atomic(paths["report.pdf"], lambda tmp: write_report(site, results, tmp, tcc_buses=tcc_buses,
                                                                         model=model, uncertainty=uncertainty))
        if len(site.buses) > ONE_LINE_IN_REPORT_MAX_BUSES:
            paths["oneline.pdf"] = out / "oneline.pdf"
            write_atomic(paths["oneline.pdf"], lambda tmp: write_oneline(site, tmp, model))
    paths[STUDY_RECORD] = out / STUDY_RECORD  # last: it vouches for the governing.csv written above
    record = {"tool": "arcflash", "site": site.facility.name, "study_revision": site.facility.study_revision,
              "written_at": dt.datetime.now(dt.timezone.utc).isoformat(timespec="seconds"),
              "model_verification": {"verified": model.verified, "words": model.words},
              "site_data": site_fingerprint(site),
              "governing_sha256": hashlib.sha256(paths["governing.csv"].read_bytes()).hexdigest()}
    if uncertainty is not None:
        record["uncertainty"] = {"samples": int(uncertainty.samples), "seed": int(uncertainty.seed)}
    write_atomic(paths[STUDY_RECORD], lambda tmp: Path(tmp).write_text(json.dumps(record, indent=2), encoding="utf-8"))
    return paths
