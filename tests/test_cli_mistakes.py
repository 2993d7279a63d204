"""Command-line mistakes, one test per class: each refused with exit 2, naming the option as typed.

Classes (issue 12): a value plainly in the wrong unit; a value that is not a finite number of the right sign;
a value the built site refuses (named by the option that set it, not by an internal field); conflicting
options; an option that needs another.
"""

from __future__ import annotations

import re

import pytest
from click.testing import CliRunner

from arcflash.cli import main

EQUIPMENT = ["equipment", "--class", "switchgear-lv", "--voltage-kv", "0.48", "--bolted-ka", "45",
             "--clearing-time-s", "0.05"]
QUICK = ["quick", "--kva", "500", "--primary-kv", "4.16", "--secondary-kv", "0.48", "--z-percent", "5",
         "--x-over-r", "5", "--class", "switchgear-lv", "--clearing-time-s", "0.1"]
TEST = ["transformer-test", "--kva", "1500", "--primary-kv", "13.8", "--secondary-kv", "0.48", "--applied-v", "632"]
LIBRARY = "site_data/libraries/invented_curves.yaml"
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
    ("--class", "switchboard-xyz", "--class = 'switchboard-xyz': expected one of"),
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
    (without(QUICK, "--clearing-time-s") + ["--curve", "TM-100"], "--curve", "--library"),
])
def test_an_option_without_the_one_it_needs_is_refused(args, option, needs):
    error = refused(args)
    assert f"{option} needs {needs}" in error
