"""Option types and error wording of the command line: numbers checked at the border, options named as typed."""

from __future__ import annotations

import math
import re

import click

from .errors import MISSING
from .site.slips import unit_slip


class Number(click.ParamType):
    """A finite number; positive unless ``signed``; refused with the likely value when plainly a unit slip."""

    name = "number"

    def __init__(self, signed=False, zero=False):
        self.signed, self.zero = signed, zero

    def convert(self, value, param, ctx):
        if isinstance(value, float):
            number = value
        else:
            try:
                number = float(str(value).strip())
            except ValueError:
                self.fail(f"expected a number, got {value!r}", param, ctx)
        if not math.isfinite(number):
            self.fail(f"expected a finite number, got {value!r}", param, ctx)
        if not self.signed and (number < 0 or (number == 0 and not self.zero)):
            self.fail(f"expected a {'non-negative' if self.zero else 'positive'} number, got {value!r}", param, ctx)
        why = unit_slip(param.name if param is not None else "", number)
        if why is not None:
            self.fail(f"expected {why}", param, ctx)
        return number


POSITIVE = Number()
NON_NEGATIVE = Number(zero=True)
SIGNED = Number(signed=True)


def option_names(ctx):
    """Internal parameter name -> the option as typed ('gap_mm' -> '--gap-mm'), for the command of ``ctx``."""
    return {p.name: max(p.opts, key=len) for p in ctx.command.params if isinstance(p, click.Option) and p.name}


def in_option_words(message, ctx, extra=None):
    """``message`` with internal names (``gap_mm``, ``buses[SECONDARY].nominal_kv``) replaced by option names.

    ``extra`` maps further internal names (longest matched first) to options.
    """
    names = {**option_names(ctx), **(extra or {})}
    for name in sorted(names, key=len, reverse=True):
        # a plain word ('curve') only where it names a value ('curve: ...', 'curve = ...'), not in prose
        tail = r"(?![\w\]])" if re.search(r"[_\[.]", name) else r"(?=\s*[:=])"
        message = re.sub(rf"(?<![\w\-\[.]){re.escape(name)}{tail}", names[name], message)
    return message


#: Fields of the site that ``arcflash quick`` builds -> the option that set them.
QUICK_FIELDS = {
    "transformers[T].kva": "--kva", "transformers[T].primary_kv": "--primary-kv",
    "transformers[T].secondary_kv": "--secondary-kv", "transformers[T].z_percent": "--z-percent",
    "transformers[T].x_over_r": "--x-over-r", "transformers[T].z_tolerance_percent": "--z-tolerance-percent",
    "transformers[T]": "--z-percent", "buses[SOURCE].nominal_kv": "--primary-kv",
    "buses[SECONDARY].nominal_kv": "--secondary-kv", "buses[EQUIPMENT].nominal_kv": "--secondary-kv",
    "utilities[UTILITY].kv": "--primary-kv", "utilities[UTILITY].max.fault": "--utility-ka",
    "utilities[UTILITY].min.fault": "--utility-ka", "utilities[UTILITY]": "--utility-ka",
    "utilities[UTILITY].max.x_over_r": "--utility-x-over-r", "utilities[UTILITY].min.x_over_r": "--utility-x-over-r",
    "cables[CABLE].length": "--cable-length", "cables[CABLE].size": "--cable-size", "cables[CABLE].sets": "--cable-sets",
    "cables[CABLE].material": "--cable-material", "cables[CABLE].conduit": "--cable-conduit",
    "cables[CABLE]": "--cable-size", "devices[UPSTREAM].curve": "--curve", "facility.device_library": "--library",
    **{f"buses[{bus}].{name}": f"--{name.replace('_', '-')}" for bus in ("SECONDARY", "EQUIPMENT")
       for name in ("gap_mm", "working_distance_mm", "height_mm", "width_mm", "depth_mm", "config")},
    "buses[SECONDARY].equipment_class": "--class", "buses[EQUIPMENT].equipment_class": "--class",
}


def quick_problem_words(problems, ctx):
    """The problems of the site ``arcflash quick`` built, each naming the option that set the value."""
    texts = []
    for problem in problems:
        option = QUICK_FIELDS.get(problem.field) or in_option_words(problem.field, ctx)
        value = "" if problem.value is MISSING else f" = {problem.value!r}"
        texts.append(f"{option}{value}: expected {in_option_words(problem.expected, ctx, QUICK_FIELDS)}")
    return "; ".join(dict.fromkeys(texts))


def _given(ctx, names):
    """The parameters of ``names`` the user gave (a flag counts when set)."""
    return [n for n in names if ctx.params.get(n) not in (None, False)]


def refuse_conflicts(ctx, first, second):
    """UsageError when options of ``first`` and of ``second`` (parameter names) are both given."""
    a, b = _given(ctx, first), _given(ctx, second)
    if a and b:
        words = option_names(ctx)
        raise click.UsageError(f"{' and '.join(words[n] for n in a)} and {' and '.join(words[n] for n in b)} "
                               "conflict: give one or the other, not both")


def refuse_alone(ctx, name, needs):
    """UsageError when option ``name`` is given without any of ``needs`` (parameter names)."""
    if ctx.params.get(name) not in (None, False) and not _given(ctx, needs):
        words = option_names(ctx)
        raise click.UsageError(f"{words[name]} needs {' or '.join(words[n] for n in needs)}")
