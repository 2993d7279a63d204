"""Plant each bug class of the validation issue again and check a non-snapshot test fails. Slow; not in CI.

Every entry below is one deliberate bug that would under-state a hazard (the classes listed in the
validation issue: coefficient digits, a dropped term, interpolation weights, the governing case in the
model, the study and the field tool, the reduced case's clearing time, the slowest source path, motors,
PPE and shock tables, label rounding and signal word, the quick assessment's cap). The project is
copied (the files git knows) to a scratch folder; each bug is planted alone in the copy and the whole
suite runs there **without the snapshot file** (``tests/models/test_ieee1584_regression.py``, our own
output, validates nothing), stopping at the first failure. A bug is *caught* when some test fails.

Run:  python tests/benchmarks/planted_bugs.py [--work DIR] [--only NAME ...]
Prints one line per bug (caught by which test, or MISSED) and exits 1 if any was missed.
"""

from __future__ import annotations

import argparse
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
SNAPSHOT = "tests/models/test_ieee1584_regression.py"

#: (name, file, text to replace, replacement): each is replaced exactly once.
BUGS = (
    ("table4-2700V-last-digit", "arcflash/models/ieee1584_tables.py",
     '"VCBB": (3.870592, 0.185,', '"VCBB": (3.870593, 0.185,'),
    ("table5-14300V-last-digit", "arcflash/models/ieee1584_tables.py",
     '"VCB": (3.825917, 0.11,', '"VCB": (3.825918, 0.11,'),
    ("table8-enclosure-last-digit", "arcflash/models/ieee1584_tables.py",
     '"VCBB": (-0.0002976, 0.032, 0.479)', '"VCBB": (-0.0002976, 0.032, 0.478)'),
    ("energy-term-k11-dropped", "arcflash/models/ieee1584_batch.py",
     "            x += k11 * ln_ibf", "            x += 0.0 * ln_ibf"),
    ("interpolation-weight-600-2700", "arcflash/models/ieee1584_equations.py",
     "    p = (2.7 - voltage_kv) / 2.1", "    p = (2.7 - voltage_kv) / 2.0"),
    ("model-governing-smaller", "arcflash/models/ieee1584.py",
     "return self.reduced_incident_energy_j_cm2 > self.incident_energy_j_cm2",
     "return self.reduced_incident_energy_j_cm2 < self.incident_energy_j_cm2"),
    ("study-governing-smaller", "arcflash/study/pipeline.py",
     'reduced = table["reduced_incident_energy_cal_cm2"] > table["incident_energy_cal_cm2"]',
     'reduced = table["reduced_incident_energy_cal_cm2"] < table["incident_energy_cal_cm2"]'),
    ("study-governing-row-smallest-scenario", "arcflash/study/pipeline.py",
     "order = np.lexsort((-energy.to_numpy(), rows[\"bus\"].to_numpy()))",
     "order = np.lexsort((energy.to_numpy(), rows[\"bus\"].to_numpy()))"),
    ("field-tool-governing-full-only", "arcflash/study/equipment.py",
     '"incident_energy_cal_cm2": _number(r.governing_incident_energy_cal_cm2)',
     '"incident_energy_cal_cm2": _number(r.incident_energy_cal_cm2)'),
    ("reduced-case-timed-at-full-current", "arcflash/study/clearing.py",
     '("reduced", "reduced_", reduced_arcing_ka))', '("reduced", "reduced_", arcing_ka))'),
    ("fastest-source-path", "arcflash/study/clearing.py",
     "slowest = _first_of_groups(b[fastest], -t[fastest])", "slowest = _first_of_groups(b[fastest], t[fastest])"),
    ("motors-dropped", "arcflash/study/faults.py",
     '    if scenario.motors == "on":\n        for ident, m in site.motors.items():',
     '    if False:\n        for ident, m in site.motors.items():'),
    ("motor-reactance-doubled", "arcflash/study/faults.py",
     "x = m.subtransient_reactance_percent / 100.0 * s_base", "x = m.subtransient_reactance_percent / 50.0 * s_base"),
    ("ppe-threshold-8-to-9", "arcflash/models/nfpa70e.py", "{1: 4.0, 2: 8.0, 3: 25.0, 4: 40.0}",
     "{1: 4.0, 2: 9.0, 3: 25.0, 4: 40.0}"),
    ("shock-boundary-rounded-down", "arcflash/models/nfpa70e.py",
     "(750.0, 3048.0, 1066.8, 304.8,", "(750.0, 3048.0, 1060.0, 304.8,"),
    ("label-never-both-broken", "arcflash/output/labels.py",
     "            shown = at_distance\n",
     "            shown = f\"{at_distance}, PPE category {int(row['ppe_category'])}\"\n"),
    ("label-boundary-ft-in-rounded-down", "arcflash/models/units.py",
     "total = np.ceil(inches - 1e-9) if round_up else np.rint(inches)",
     "total = np.floor(inches) if round_up else np.rint(inches)"),
    ("label-boundary-millimetres-rounded-down", "arcflash/output/labels.py",
     'f"{np.ceil(mm - 1e-9):,.0f} mm', 'f"{np.floor(mm):,.0f} mm'),
    ("label-energy-rounded-to-nearest", "arcflash/output/text.py",
     'return f"{float(minimum_arc_rating_cal_cm2(incident_energy_cal_cm2)):.1f}"',
     'return f"{float(incident_energy_cal_cm2):.1f}"'),
    ("danger-threshold-40-to-50", "arcflash/output/labels.py",
     "DANGER_ABOVE_CAL_CM2 = NO_CATEGORY_ABOVE_CAL_CM2", "DANGER_ABOVE_CAL_CM2 = 50.0"),
    ("quick-assessment-cap-2-to-3", "arcflash/study/field.py",
     '"arc_duration_cap_s": 2.0}', '"arc_duration_cap_s": 3.0}'),
)


def _copy(work):
    if work.exists():
        shutil.rmtree(work)
    files = subprocess.run(["git", "ls-files"], cwd=ROOT, check=True, capture_output=True, text=True).stdout.split()
    for name in files:
        target = work / name
        target.parent.mkdir(parents=True, exist_ok=True)
        shutil.copy2(ROOT / name, target)


def first_failure(work, tests=("tests", "arcflash")):
    """Run the suite in the copy without the snapshot file, stopping at the first failure.

    Returns
    -------
    str or None
        The first failing test (or pytest's last line when none is named); None when the suite passes.
    """
    run = subprocess.run([sys.executable, "-m", "pytest", "-x", "-q", "-p", "no:cacheprovider", "--ignore", SNAPSHOT,
                          *tests], cwd=work, capture_output=True, text=True,
                         env={**os.environ, "PYTHONPATH": str(work)})
    if run.returncode == 0:
        return None
    failed = re.findall(r"^FAILED (\S+)", run.stdout, flags=re.MULTILINE)
    return failed[0] if failed else run.stdout.strip().splitlines()[-1]


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--work", type=Path, default=Path("/tmp/arcflash-planted"))
    parser.add_argument("--only", nargs="+", default=None)
    args = parser.parse_args()
    _copy(args.work)
    where = subprocess.run([sys.executable, "-c", "import arcflash; print(arcflash.__file__)"], cwd=args.work,
                           capture_output=True, text=True, env={**os.environ, "PYTHONPATH": str(args.work)}).stdout
    if not where.startswith(str(args.work)):
        sys.exit(f"the copy's package is not the one imported ({where.strip()})")
    missed = []
    for name, file, old, new in BUGS:
        if args.only and name not in args.only:
            continue
        path = args.work / file
        original = path.read_text(encoding="utf-8")
        if original.count(old) != 1:
            sys.exit(f"{name}: the text to replace occurs {original.count(old)} times in {file} (update this script)")
        path.write_text(original.replace(old, new), encoding="utf-8")
        try:
            failure = first_failure(args.work)
        finally:
            path.write_text(original, encoding="utf-8")
        if failure is None:
            missed.append(name)
            print(f"MISSED  {name}")
        else:
            print(f"caught  {name:<40} by {failure}")
    print(f"{len(missed)} missed")
    sys.exit(1 if missed else 0)


if __name__ == "__main__":
    main()
