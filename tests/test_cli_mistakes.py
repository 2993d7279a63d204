"""Command-line mistakes, one test per class: each refused with exit 2, naming the option as typed.

Classes (issue 12): a value plainly in the wrong unit; a value that is not a finite number of the right sign;
a value the built site refuses (named by the option that set it, not by an internal field); conflicting
options; an option that needs another.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from click.testing import CliRunner

from arcflash.cli import main

EQUIPMENT = ["equipment", "--class", "switchgear-lv", "--voltage-kv", "0.48", "--bolted-ka", "45",
             "--clearing-time-s", "0.05", "--reduced-clearing-time-s", "0.05"]
QUICK = ["quick", "--kva", "500", "--primary-kv", "4.16", "--secondary-kv", "0.48", "--z-percent", "5",
         "--x-over-r", "5", "--class", "switchgear-lv", "--clearing-time-s", "0.1", "--reduced-clearing-time-s", "0.1"]
TEST = ["transformer-test", "--kva", "1500", "--primary-kv", "13.8", "--secondary-kv", "0.48", "--applied-v", "632"]
ROOT = Path(__file__).resolve().parents[1]
DEMO = str(ROOT / "site_data" / "fenwick_ridge")
LIBRARY = str(ROOT / "site_data" / "libraries" / "invented_curves.yaml")
INTERNAL = re.compile(r"buses\[|cables\[|transformers\[|utilities\[|\b[a-z]+_(?:kv|ka|mm|s|a|v|percent)\b")


def refused(args):
    result = CliRunner().invoke(main, args)
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output and not isinstance(result.exception, (KeyError, ValueError, TypeError))
    error = result.output.split("Error: ", 1)[1]
    assert not INTERNAL.search(error), f"internal name in: {error}"
    return error


def with_option(args, option, value):
    """``args`` with ``option`` set to ``value`` (replaced if present, else added)."""
    args = list(args)
    if option in args:
        args[args.index(option) + 1] = value
        return args
    return args + [option, value]


def without(args, option):
    """``args`` without ``option`` and its value."""
    k = args.index(option)
    return args[:k] + args[k + 2:]


@pytest.mark.parametrize("args, option, value, likely", [
    (EQUIPMENT, "--voltage-kv", "480", "0.48 kV?"),                 # volts typed as kV
    (EQUIPMENT, "--bolted-ka", "45000", "45 kA?"),                  # amperes typed as kA
    (EQUIPMENT, "--working-distance-mm", "18", "457.2 mm?"),        # inches typed as mm
    (EQUIPMENT, "--gap-mm", "1.25", "31.75 mm?"),
    (QUICK, "--secondary-kv", "480", "0.48 kV?"),
    (QUICK, "--utility-ka", "25000", "25 kA?"),
    (TEST, "--primary-kv", "13800", "13.8 kV?"),
])
def test_a_unit_slip_is_refused_with_the_likely_value(args, option, value, likely):
    error = refused(with_option(args, option, value))
    assert f"'{option}'" in error and likely in error


def test_a_plausible_value_outside_the_model_range_runs_and_is_flagged():
    # 120 kA at 480 V is above IEEE 1584-2018's 106 kA (Table 1) but plausible: it runs, with a flag.
    result = CliRunner().invoke(main, with_option(EQUIPMENT, "--bolted-ka", "120"))
    assert result.exit_code == 0 and "FLAGS" in result.output


@pytest.mark.parametrize("value, words", [
    ("inf", "expected a finite number"), ("nan", "expected a finite number"),
    ("-0.05", "expected a positive number"), ("0", "expected a positive number"),
    ("fast", "expected a number, got 'fast'"),
])
def test_a_number_that_is_not_finite_and_positive_is_refused(value, words):
    error = refused(with_option(EQUIPMENT, "--clearing-time-s", value))
    assert "'--clearing-time-s'" in error and words in error


@pytest.mark.parametrize("option, value, words", [
    ("--cable-length", "200 yd", "--cable-length = '200 yd': expected a unit among ft, m, km"),
    ("--cable-size", "7/0", "--cable-size = '7/0': expected a conductor size"),
    ("--class", "switchboard-xyz", "Invalid value for '--class': 'switchboard-xyz' is not one of"),
    ("--z-percent", "0.0575", "--z-percent: expected 0.5-25 %"),
])
def test_a_value_the_built_site_refuses_names_the_option(option, value, words):
    args = QUICK + (["--cable-length", "200 ft", "--cable-size", "4/0"] if option.startswith("--cable") else [])
    error = refused(with_option(args, option, value))
    assert words in error


@pytest.mark.parametrize("args, first, second", [
    (QUICK + ["--applied-v", "250"], "--z-percent", "--applied-v"),
    (QUICK + ["--library", LIBRARY, "--curve", "TM-100"], "--curve", "--clearing-time-s"),
])
def test_conflicting_options_are_refused_naming_both(args, first, second):
    error = refused(args)
    assert first in error and second in error and "not both" in error


@pytest.mark.parametrize("args, option, needs", [
    (QUICK + ["--cable-size", "4/0"], "--cable-size", "--cable-length"),
    (without(QUICK, "--z-percent") + ["--measured-a", "30"], "--measured-a", "--applied-v"),
    (TEST + ["--measured-temp-c", "20"], "--measured-temp-c", "--r-percent"),
    (without(without(QUICK, "--clearing-time-s"), "--reduced-clearing-time-s") + ["--curve", "TM-100"], "--curve", "--library"),
])
def test_an_option_without_the_one_it_needs_is_refused(args, option, needs):
    error = refused(args)
    assert f"{option} needs {needs}" in error


@pytest.mark.parametrize("content, words", [
    (b"", "is not a table written by 'arcflash study'"),
    (b"\xff\xfe\x00junk", "is not a table written by 'arcflash study'"),
    (b"junk,,\n1,2,3\n", "lacks the column 'bus'"),
])
@pytest.mark.parametrize("command", [["labels", "print", DEMO, "--out"],
                                     ["briefing", DEMO, "SWG-A", "--out"]])
def test_a_study_folder_that_holds_no_study_is_refused(tmp_path, content, words, command):
    study = tmp_path / "study"
    study.mkdir()
    (study / "governing.csv").write_bytes(content)
    out = tmp_path / ("labels" if command[0] == "labels" else "brief.pdf")
    # no study.json: the table checks are reached only with the stale-study override (a test's reason)
    error = refused(command + [str(out), "--study", str(study), "--accept-stale-study", "junk table (test)"])
    assert "--study" in error and words in error
    assert not out.exists()


def test_a_study_table_with_text_in_a_number_column_is_refused(tmp_path):
    from arcflash.output.labels import GOVERNING_COLUMNS

    study = tmp_path / "study"
    study.mkdir()
    row = {c: "1" for c in GOVERNING_COLUMNS} | {"bus": "SWG-A", "incident_energy_governing_cal_cm2": "high"}
    (study / "governing.csv").write_text(",".join(row) + "\n" + ",".join(row.values()) + "\n", encoding="utf-8")
    error = refused(["briefing", DEMO, "SWG-A", "--out", str(tmp_path / "b.pdf"),
                     "--study", str(study), "--accept-stale-study", "junk table (test)"])
    assert "text in the number column 'incident_energy_governing_cal_cm2'" in error


@pytest.mark.parametrize("command", [["faults", DEMO, "--csv"], ["briefing", DEMO, "SWG-A", "--out"],
                                     ["study", DEMO, "--no-report", "--quiet", "--out"]])
def test_an_output_path_that_cannot_be_written_is_named(tmp_path, command):
    blocker = tmp_path / "a-file"
    blocker.write_text("not a folder", encoding="utf-8")
    target = blocker / ("out.pdf" if command[0] == "briefing" else "out.csv" if command[0] == "faults" else "out")
    result = CliRunner().invoke(main, command + [str(target)])
    assert result.exit_code == 2 and "Traceback" not in result.output, result.output
    assert f"cannot use {target}" in result.output and "Bolted" not in result.output


@pytest.mark.parametrize("content, words", [
    (b"[1, 2", "expected valid YAML"), (b"\xff", "expected UTF-8 text"), (b"- 1\n", "is not a device-library file"),
    (b"curves: 5\n", "is not a device-library file"), (b"curves: [1]\n", "'TM-100' is not in"),
])
def test_a_device_library_that_is_not_one_is_refused(tmp_path, content, words):
    library = tmp_path / "library.yaml"
    library.write_bytes(content)
    error = refused(without(without(QUICK, "--clearing-time-s"), "--reduced-clearing-time-s") + ["--library", str(library), "--curve", "TM-100"])
    assert words in error and ("--library" in error or "--curve" in error)


def test_a_reader_that_goes_away_ends_the_command_quietly(monkeypatch):
    # `arcflash labels diff SITE | head`: the pipe closes; no "Error:" and no traceback, exit 1
    import arcflash.cli as cli

    def closed(*args, **kwargs):
        raise BrokenPipeError(32, "Broken pipe")

    monkeypatch.setattr(cli, "fault_table", closed)
    result = CliRunner().invoke(main, ["faults", DEMO])
    assert result.exit_code == 1 and "Error" not in result.output and "Traceback" not in result.output
