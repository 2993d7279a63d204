"""Benchmark: printing labels (issues: equipment labels and the label ledger; labels a worker can trust).

Targets:
- 1,000 labels (single PDFs plus one combined sheet) for a synthetic facility: cost per label at 1,000 at
  most 1.2x the cost per label at 100 (each run prints and records; the study runs once, untimed);
- with ``--facility N`` (issue 13: N = 10,000): every label of a synthetic N-bus facility in at most the
  time of its study, in the same run. The study is timed as ``arcflash study --no-report`` does it (load,
  study, result files); the labels as ``arcflash labels print`` does it (single PDFs, the sheet, the ledger).

With ``--labels-in FOLDER`` the labels of the facility run are written under FOLDER instead of the run's
temporary folder (say a RAM folder such as /dev/shm, to see what the disk's file creation adds: 10,000
files cost from 0.2 to 1.5 s on our CI machine's ext4 disk, varying from run to run).

Run:  python tests/benchmarks/bench_labels.py [--facility 10000 [--labels-in FOLDER]]
"""

from __future__ import annotations

import os
import shutil
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import arcflash  # noqa: E402
from arcflash.output.labels import issue_labels  # noqa: E402
from arcflash.study.pipeline import run_study  # noqa: E402
from tests.synthetic import synthetic_site  # noqa: E402


def facility(n, labels_in=None):
    """Every label of a synthetic n-bus facility against its study, in one run."""
    from arcflash.output.results import write_results

    with tempfile.TemporaryDirectory() as folder:
        path = synthetic_site(Path(folder) / "site", n)
        warm = synthetic_site(Path(folder) / "warm", 100)  # imports and caches, untimed
        warm_site = arcflash.load_site(warm)
        issue_labels(warm_site, run_study(warm_site).governing, Path(folder) / "warm-out")
        start = time.perf_counter()
        site = arcflash.load_site(path)
        results = run_study(site)
        write_results(site, results, Path(folder) / "study", report=False)
        study_s = time.perf_counter() - start
        out = Path(tempfile.mkdtemp(dir=labels_in)) if labels_in else Path(folder) / "labels"
        start = time.perf_counter()
        printed = issue_labels(site, results.governing, out)
        labels_s = time.perf_counter() - start
        if labels_in:
            shutil.rmtree(out)
    print(f"synthetic facility of {n} buses: study {study_s:.1f} s; {len(printed)} labels {labels_s:.1f} s "
          f"({labels_s / len(printed) * 1000:.1f} ms per label)")
    print(f"ratio labels / study: {labels_s / study_s:.2f} (target at most 1)"
          + (f"; labels written under {labels_in}" if labels_in else ""))


def main():
    if "--facility" in sys.argv:
        labels_in = sys.argv[sys.argv.index("--labels-in") + 1] if "--labels-in" in sys.argv else None
        facility(int(sys.argv[sys.argv.index("--facility") + 1]), labels_in)
        return
    if hasattr(os, "sched_setaffinity"):
        os.sched_setaffinity(0, {max(os.sched_getaffinity(0))})
    with tempfile.TemporaryDirectory() as folder:
        site = arcflash.load_site(synthetic_site(Path(folder) / "site", 1000))
        governing = run_study(site).governing
        per_label = {}
        for count in (100, 1000, 100):
            buses = list(governing.index[:count])
            start = time.perf_counter()
            issue_labels(site, governing, Path(folder) / f"out{count}", buses=buses)
            per_label[count] = min(per_label.get(count, float("inf")), (time.perf_counter() - start) / count)
        for count, seconds in sorted(per_label.items()):
            print(f"{count:>5} labels: {seconds * 1000:6.2f} ms per label")
        print(f"ratio per label 1,000 / 100: {per_label[1000] / per_label[100]:.2f}  (target <= 1.2)")


if __name__ == "__main__":
    main()
