"""Benchmark: loading and validating a site against merely parsing its files (issue 12).

Target: on a synthetic 10,000-bus site, ``load_site`` (read, validate every item, cross-check) takes at most
3x the time that parsing the same files takes with the C YAML loader and pandas, in the same run. Both are
timed after one untimed call; the reference times its own core calls only (yaml.load on each YAML file's
text, pandas.read_csv on each CSV), not the reading of the files from disk.

Run:  python tests/benchmarks/bench_loading.py [--buses 10000]
"""

from __future__ import annotations

import argparse
import io
import sys
import tempfile
from pathlib import Path

import pandas as pd
import yaml

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from arcflash.site.loader import load_site  # noqa: E402
from tests.benchmarks.timing import best_of  # noqa: E402
from tests.synthetic import synthetic_site  # noqa: E402

TARGET = 3.0


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--buses", type=int, default=10_000)
    n = parser.parse_args().buses
    with tempfile.TemporaryDirectory() as scratch:
        folder = synthetic_site(Path(scratch) / "site", n, ties=max(1, n // 500))
        texts = {p: p.read_text(encoding="utf-8") for p in sorted(folder.iterdir())}
        sizes = ", ".join(f"{p.name} {len(t) / 1e6:.2f} MB" for p, t in texts.items())

        def parse_only():
            for path, text in texts.items():
                if path.suffix == ".csv":
                    pd.read_csv(io.StringIO(text))
                else:
                    yaml.load(text, Loader=yaml.CSafeLoader)  # noqa: S506 - CSafeLoader is safe

        parse_s, _ = best_of(parse_only)
        load_s, site = best_of(lambda: load_site(folder))
    ratio = load_s / parse_s
    print(f"synthetic site: {len(site.buses)} buses, {len(site.devices)} devices, {len(site.cables)} cables "
          f"({sizes})")
    print(f"parse only (C YAML loader + pandas): {parse_s:.3f} s")
    print(f"load_site (read, validate, cross-check): {load_s:.3f} s")
    print(f"ratio {ratio:.2f} (target at most {TARGET:g}): {'met' if ratio <= TARGET else 'NOT met'}")


if __name__ == "__main__":
    main()
