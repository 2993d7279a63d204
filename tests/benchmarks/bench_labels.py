"""Benchmark: printing labels (issue: equipment labels and the label ledger).

Target: 1,000 labels (single PDFs plus one combined sheet) for a synthetic
facility: cost per label at 1,000 at most 1.2x the cost per label at 100.
The study runs once beforehand (not timed); each run prints and records.

Run:  python tests/benchmarks/bench_labels.py
"""

from __future__ import annotations

import os
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import arcflash  # noqa: E402
from arcflash.output.labels import issue_labels  # noqa: E402
from arcflash.study.pipeline import run_study  # noqa: E402
from tests.synthetic import synthetic_site  # noqa: E402


def main():
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
