"""Benchmark: the study's result files (issue 14: a study report an engineer can review and sign).

Targets, on a synthetic 10,000-bus facility, in one run: results.xlsx in at most 3x the time of the CSV
files of the same tables (results.csv, governing.csv, steps.csv); the report PDF without TCC pages in at
most 3x that CSV time. Each writer first runs once on a 100-bus facility, untimed (imports, caches).

Also (issue 14): the peak memory of the whole ``arcflash study`` command with its default TCC pages on
the synthetic 10,000-bus facility with closed ties, in a fresh process: at most 1 GB.

Run:  python tests/benchmarks/bench_report.py [--buses 10000]
"""

from __future__ import annotations

import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import pandas as pd  # noqa: E402

import arcflash  # noqa: E402
from arcflash.output.report import write_report  # noqa: E402
from arcflash.output.results import governing_table, write_csv_tables, write_xlsx_tables  # noqa: E402
from arcflash.study.pipeline import run_study  # noqa: E402
from tests.synthetic import synthetic_site  # noqa: E402


def _timed(function):
    start = time.perf_counter()
    function()
    return time.perf_counter() - start


def _writers(site, results, folder):
    folder.mkdir(parents=True, exist_ok=True)
    governing = governing_table(results)
    steps = results.steps if results.steps is not None else pd.DataFrame()
    return {"csv": lambda: write_csv_tables(folder, results, governing, steps),
            "xlsx": lambda: write_xlsx_tables(folder / "results.xlsx", site, results, governing, steps),
            "report": lambda: write_report(site, results, folder / "report.pdf", tcc_buses=[])}


_PEAK = """
import resource, sys
from arcflash.cli import main
try:
    main(["study", sys.argv[1], "--out", sys.argv[2], "--quiet"], prog_name="arcflash", standalone_mode=False)
finally:
    print("peak", resource.getrusage(resource.RUSAGE_SELF).ru_maxrss, file=sys.stderr)
"""


def peak_memory_mb(buses, folder):
    """Peak resident memory of 'arcflash study' (report with its default TCC pages) in a fresh process."""
    site = synthetic_site(folder / "peak-site", buses, ties=max(1, buses // 500))
    done = subprocess.run([sys.executable, "-c", _PEAK, str(site),
                           str(folder / "peak-out")], capture_output=True, text=True, check=True,
                          cwd=Path(__file__).resolve().parents[2])
    return int(done.stderr.split("peak")[-1]) / 1024.0


def main():
    buses = int(sys.argv[sys.argv.index("--buses") + 1]) if "--buses" in sys.argv else 10_000
    with tempfile.TemporaryDirectory() as scratch:
        folder = Path(scratch)
        warm = arcflash.load_site(synthetic_site(folder / "warm", 100))
        for write in _writers(warm, run_study(warm), folder / "warm-out").values():
            write()
        site = arcflash.load_site(synthetic_site(folder / "site", buses))
        results = run_study(site)
        seconds = {name: _timed(write) for name, write in _writers(site, results, folder / "out").items()}
    print(f"synthetic facility of {buses} buses, {len(results.rows)} result rows")
    for name, value in seconds.items():
        print(f"  {name:<7}{value:7.2f} s")
    print(f"ratio xlsx / csv:   {seconds['xlsx'] / seconds['csv']:.2f}  (target at most 3)")
    print(f"ratio report / csv: {seconds['report'] / seconds['csv']:.2f}  (target at most 3)")
    with tempfile.TemporaryDirectory() as scratch:
        peak = peak_memory_mb(buses, Path(scratch))
    print(f"peak memory of 'arcflash study' with its default TCC pages, closed ties: {peak:.0f} MB "
          "(target at most 1024)")


if __name__ == "__main__":
    main()
