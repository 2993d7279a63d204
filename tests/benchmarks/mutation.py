"""Mutation testing of the safety-critical modules (issue: validation suite). Slow; not part of CI.

Tool: mutmut (3.x, from PyPI; maintained, works on a plain pytest suite, and
runs each mutant against only the tests that cover the mutated function, which
keeps a run of thousands of mutants within an hour or two). Install it into the
development environment first: ``pip install mutmut``.

The project is copied (the files git knows) into a scratch folder, mutmut's
settings are written there (setup.cfg), and ``mutmut run`` mutates the chosen
modules one small change at a time: an operator, a constant, a comparison, a
return value. A mutant is *killed* when a test fails, *survived* when the
whole selected suite passes. Survivors are listed for review: each must be
killed by a new test or explained as equivalent (docs/validation.md).

A full run of every safety-critical module is several hours on 2 cores; ``--sample F`` runs a random
fraction F of each module's mutants (seeded; at least 60 per module) and reports the score of that sample with a 95 % interval
(Wilson), so that a run fits in a session. ``--functions PATTERN ...`` restricts the run to mutants of the
matching functions (fnmatch on mutmut's names, e.g. ``'*labels.x_label_content*'``).

Run:  python tests/benchmarks/mutation.py [--modules arcflash/models/nfpa70e.py ...] [--work DIR] [--jobs 2]
      [--sample 0.2 --seed 1] [--functions PATTERN ...]
Prints the score per module and the surviving mutants' names; ``mutmut show NAME``
in the work folder shows a mutant's diff.
"""

from __future__ import annotations

import argparse
import collections
import fnmatch
import json
import math
import random
import shutil
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
#: The modules whose errors can under-state a hazard (issue: validation suite).
SAFETY_CRITICAL = (
    "arcflash/models/ieee1584.py", "arcflash/models/ieee1584_equations.py", "arcflash/models/ieee1584_batch.py",
    "arcflash/models/ieee1584_range.py", "arcflash/models/ieee1584_staged.py", "arcflash/models/nfpa70e.py",
    "arcflash/models/network.py", "arcflash/models/network_radial.py", "arcflash/study/clearing.py",
    "arcflash/output/labels.py",
)


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--modules", nargs="+", default=list(SAFETY_CRITICAL))
    parser.add_argument("--work", type=Path, default=Path("/tmp/arcflash-mutation"))
    parser.add_argument("--jobs", type=int, default=2)
    parser.add_argument("--sample", type=float, default=1.0, help="fraction of each module's mutants to run")
    parser.add_argument("--seed", type=int, default=1)
    parser.add_argument("--functions", nargs="+", default=None, help="fnmatch patterns of mutant names")
    args = parser.parse_args()
    if shutil.which("mutmut", path=str(Path(sys.executable).parent)) is None:
        sys.exit("mutmut is not installed in this environment: pip install mutmut")
    if args.work.exists():
        shutil.rmtree(args.work)
    files = subprocess.run(["git", "ls-files"], cwd=ROOT, check=True, capture_output=True, text=True).stdout.split()
    for name in files:
        target = args.work / name
        target.parent.mkdir(parents=True, exist_ok=True)
        shutil.copy2(ROOT / name, target)
    def listed(key, values):  # setup.cfg lists: one value per line
        return f"{key}=\n" + "".join(f"    {v}\n" for v in values)

    (args.work / "setup.cfg").write_text(
        "[mutmut]\n" + listed("source_paths", ["arcflash/"]) + listed("only_mutate", args.modules)
        + listed("also_copy", ["site_data/", "label_layouts/", "docs/"])
        + listed("pytest_add_cli_args_test_selection", ["tests/", "--ignore=tests/benchmarks"]),
        encoding="utf-8")
    mutmut = str(Path(sys.executable).parent / "mutmut")
    chosen = None
    with open(args.work / "mutmut-run.log", "w", encoding="utf-8") as log:  # its progress display, kept apart
        def run(names):
            subprocess.run([mutmut, "run", "--max-children", str(args.jobs), *names], cwd=args.work, check=False,
                           stdout=log, stderr=subprocess.STDOUT)

        if args.sample >= 1.0 and not args.functions:
            run([])
        else:
            # Generate the mutants and the test statistics with one small run, then pick the names.
            first = args.modules[0].removesuffix(".py").replace("/", ".")
            run([f"{first}.*__mutmut_1"])
            names = _all_names(args.work)
            if args.functions:
                names = [n for n in names if any(fnmatch.fnmatch(n, pattern) for pattern in args.functions)]
            chosen = set()
            rng = random.Random(args.seed)
            by_module = collections.defaultdict(list)
            for name in names:
                by_module[_module(name)].append(name)
            for module_names in by_module.values():
                # At least 60 per module (or all): a small module's score is otherwise too loose to read.
                k = len(module_names) if args.sample >= 1.0 else min(len(module_names),
                                                                      max(60, round(args.sample * len(module_names))))
                chosen.update(rng.sample(sorted(module_names), k))
            run(sorted(chosen))
    listing = subprocess.run([mutmut, "results", "--all", "true"], cwd=args.work, capture_output=True,
                             text=True).stdout
    status = {}
    for line in listing.splitlines():
        name, _, state = line.strip().rpartition(": ")
        if name and (chosen is None or name in chosen):  # a sampled run scores its sample only
            status[name] = state
    per_module = collections.defaultdict(collections.Counter)
    for name, state in status.items():
        per_module[_module(name)][state] += 1
    print(f"{'module':<45} {'killed':>7} {'survived':>9} {'other':>6} {'score':>6}  95 % interval")
    for module, counts in sorted(per_module.items()):
        killed, survived = counts["killed"], counts["survived"]
        other = sum(counts.values()) - killed - survived
        score = killed / max(killed + survived, 1)
        low, high = _wilson(killed, killed + survived)
        print(f"{module:<45} {killed:>7} {survived:>9} {other:>6} {score:>6.1%}  {low:.1%}-{high:.1%}")
    total_killed = sum(c["killed"] for c in per_module.values())
    total_survived = sum(c["survived"] for c in per_module.values())
    print(f"all: {total_killed} killed, {total_survived} survived, "
          f"score {total_killed / max(total_killed + total_survived, 1):.1%} (before removing equivalent mutants)")
    print("survivors:")
    for name, state in sorted(status.items()):
        if state == "survived":
            print("  " + name)


def _module(name):
    return name.split(".x")[0].split("__mutmut")[0]


def _all_names(work):
    names = []
    for meta in (work / "mutants").rglob("*.meta"):
        names += list(json.loads(meta.read_text(encoding="utf-8")).get("exit_code_by_key", {}))
    return sorted(names)


def _wilson(killed, total, z=1.96):
    """95 % Wilson score interval of a proportion (common practice for a sampled rate)."""
    if total == 0:
        return 0.0, 1.0
    p = killed / total
    centre = (p + z * z / (2 * total)) / (1 + z * z / total)
    half = z * math.sqrt(p * (1 - p) / total + z * z / (4 * total * total)) / (1 + z * z / total)
    return centre - half, centre + half


if __name__ == "__main__":
    main()
