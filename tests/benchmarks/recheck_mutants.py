"""Re-check surviving mutants against the current tests. Slow; not in CI.

mutmut keeps its own copy of the tests from the start of a run (and its map of which tests reach which
function), so a test written after the run is not seen by it. This script takes the diffs of named
mutants from a mutmut work folder (``mutmut show NAME``), applies each alone to a fresh copy of the
project as it is now, and runs the suite there without the snapshot file, stopping at the first
failure. A mutant is *killed* when a test fails.

Run:  python tests/benchmarks/recheck_mutants.py --from /tmp/arcflash-mutation NAME [NAME ...]
      [--tests tests/study tests/output]
"""

from __future__ import annotations

import argparse
import re
import subprocess
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from planted_bugs import _copy, first_failure  # noqa: E402  (the same scratch copy and suite run)


def _diff(mutmut_dir, name):
    mutmut = str(Path(sys.executable).parent / "mutmut")
    shown = subprocess.run([mutmut, "show", name], cwd=mutmut_dir, capture_output=True, text=True).stdout
    start = shown.find("--- ")
    if start < 0:
        raise SystemExit(f"{name}: no diff from 'mutmut show' in {mutmut_dir}")
    return shown[start:]


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("names", nargs="+")
    parser.add_argument("--from", dest="mutmut_dir", type=Path, required=True)
    parser.add_argument("--work", type=Path, default=Path("/tmp/arcflash-recheck"))
    parser.add_argument("--tests", nargs="+", default=["tests", "arcflash"])
    args = parser.parse_args()
    _copy(args.work)
    survived = []
    for name in args.names:
        diff = _diff(args.mutmut_dir, name)
        target = args.work / re.search(r"^--- (\S+)", diff, flags=re.MULTILINE).group(1)
        original = target.read_text(encoding="utf-8")
        applied = subprocess.run(["patch", "--silent", str(target)], input=diff, text=True, capture_output=True)
        if applied.returncode:
            target.write_text(original, encoding="utf-8")
            print(f"skipped {name}: the diff no longer applies ({applied.stdout.strip() or applied.stderr.strip()})")
            continue
        try:
            failure = first_failure(args.work, args.tests)
        finally:
            target.write_text(original, encoding="utf-8")
        if failure is None:
            survived.append(name)
            print(f"survived {name}")
        else:
            print(f"killed   {name} by {failure}")
    print(f"{len(survived)} of {len(args.names)} survived")


if __name__ == "__main__":
    main()
