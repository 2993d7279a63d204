"""Study results as files: CSV, XLSX and the PDF report, each written atomically."""

from __future__ import annotations

from pathlib import Path

import pandas as pd

from .cautions import CAUTION
from .files import write_atomic

#: Columns of the governing table, in order (units in the names).
GOVERNING_COLUMNS = [
    "nominal_kv", "scenario", "governing_case", "device_governing", "bolted_ka", "arcing_current_ka",
    "reduced_arcing_current_ka", "clearing_time_governing_s", "incident_energy_governing_cal_cm2",
    "arc_flash_boundary_governing_mm", "working_distance_mm", "config", "gap_mm", "ppe_category",
    "minimum_arc_rating_cal_cm2", "limited_approach_movable_mm", "limited_approach_fixed_mm",
    "restricted_approach_mm", "flags",
]


def governing_table(results):
    """The governing rows with the columns people read first."""
    table = results.governing[GOVERNING_COLUMNS].copy()
    table.index.name = "bus"
    return table


def write_results(site, results, out_dir, report=True, tcc_buses=None):
    """Write ``results.csv`` (every bus × scenario), ``governing.csv``, ``results.xlsx`` and ``report.pdf``.

    Returns
    -------
    dict
        Name -> path of each file written.
    """
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    governing = governing_table(results)
    paths = {"results.csv": out / "results.csv", "governing.csv": out / "governing.csv",
             "results.xlsx": out / "results.xlsx"}
    write_atomic(paths["results.csv"], lambda tmp: results.rows.to_csv(tmp, index=False, float_format="%.6g"))
    write_atomic(paths["governing.csv"], lambda tmp: governing.to_csv(tmp, float_format="%.6g"))

    def xlsx(tmp):
        # Write-only workbook: rows stream out instead of a cell object per value held in memory.
        with pd.ExcelWriter(tmp, engine="openpyxl", engine_kwargs={"write_only": True}) as writer:
            governing.to_excel(writer, sheet_name="governing")
            results.rows.to_excel(writer, sheet_name="all rows", index=False)
            pd.DataFrame({"caution": [CAUTION]}).to_excel(writer, sheet_name="caution", index=False)

    write_atomic(paths["results.xlsx"], xlsx)
    if report:
        from .report import write_report

        paths["report.pdf"] = out / "report.pdf"
        write_atomic(paths["report.pdf"], lambda tmp: write_report(site, results, tmp, tcc_buses=tcc_buses))
    return paths
