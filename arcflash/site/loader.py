"""Load a facility folder into a validated :class:`Site`.

A facility is a folder of YAML files (any names, ``*.yaml`` / ``*.yml``),
each holding any of the sections of :class:`~.schema.SiteFile`, and CSV files
named after a section (``buses.csv``, ``cables.csv``, …) for long lists.
Everything is validated before anything is computed; every problem found is
reported at once, each with file, line, field, value and what was expected.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from pydantic import ValidationError

from ..collector import collector_paused
from ..errors import MISSING, Problem, SiteDataError
from . import checks
from .base import FIELD_MARK
from .reading import LineList, LineMap, read_csv, read_yaml
from .schema import SECTIONS, Facility, Scenario

#: The scenario used when a facility defines none.
NORMAL = Scenario(name="normal", description="Normal state: utility at maximum, switches as drawn.")


@dataclass(frozen=True)
class Site:
    """A validated facility: its elements by id and where each was defined."""

    path: Path
    facility: Facility
    buses: dict
    utilities: dict
    generators: dict
    motors: dict
    transformers: dict
    cables: dict
    impedances: dict
    switches: dict
    devices: dict
    curves: dict
    scenarios: dict
    origin: dict = field(repr=False)
    #: Things the site data say in a way still read but to be changed (earlier names), each with its place.
    warnings: list = field(default_factory=list, repr=False)
    #: For a site of stacked copies (an uncertainty run's chunk, :mod:`arcflash.study.stacking`): the site
    #: they are variants of and the variants, which let the study build its arrays copy by copy.
    stack: object = field(default=None, repr=False, compare=False)

    @property
    def default_scenario(self):
        """Name of the scenario used when none is asked for."""
        return self.facility.default_scenario or next(iter(self.scenarios))

    def scenario(self, name=None):
        """A scenario by name (the default when None); KeyError lists the names."""
        name = name or self.default_scenario
        if name not in self.scenarios:
            raise KeyError(f"unknown scenario {name!r}; the site has {', '.join(self.scenarios)}")
        return self.scenarios[name]


def _expected(error, model):
    """What was expected, in words, from a pydantic error."""
    kind, message = error["type"], error["msg"]
    if kind == "missing":
        return "a value (this field is required)"
    if kind == "extra_forbidden":
        return f"a known field: {', '.join(model.model_fields)}"
    for prefix in ("Value error, ", "Assertion failed, "):
        if message.startswith(prefix):
            return message[len(prefix):]
    message = message.split(", unable to parse")[0]
    if message.startswith("Input should be "):
        message = message[len("Input should be "):]
        if message.startswith(("greater", "less")):
            message = "a number " + message
    return message[:1].lower() + message[1:]


def _at_path(item, path):
    """(line, value) of ``path`` (keys and list indexes) inside ``item``: the deepest line known, MISSING if
    absent."""
    line = item.line if isinstance(item, LineMap) else None
    value = item
    for key in path:
        if isinstance(value, dict) and key in value:
            line = value.key_lines.get(key, line) if isinstance(value, LineMap) else line
        elif isinstance(value, list) and isinstance(key, int) and 0 <= key < len(value):
            line = value.item_lines[key] if isinstance(value, LineList) else line
        else:
            return line, MISSING
        value = value[key]
    return line, value


def _validation_problems(exc, file, item, label, model):
    problems = []
    for error in exc.errors():
        loc = tuple(error["loc"])
        expected, value = _expected(error, model), error.get("input", MISSING)
        if expected.startswith(FIELD_MARK):  # a model check naming its field: report it there
            named, expected = expected[1:].split(FIELD_MARK, 1)
            loc += tuple(named.split("."))
            expected = expected.strip()
            value = _at_path(item, loc)[1]
        line = _at_path(item, loc)[0]
        if error["type"] == "missing" or not loc:
            value = MISSING
        name = ".".join(str(part) for part in loc) if loc else "(item)"
        problems.append(Problem(file, line, f"{label}.{name}", value, expected))
    return problems


def site_files(path):
    """The site-data files of a folder (or the one file given), sorted; SiteDataError if there are none."""
    path = Path(path)
    if path.is_file():
        return [path]
    if not path.is_dir():
        raise SiteDataError([Problem(str(path), None, "site", MISSING, "an existing folder of site-data files")])
    files = sorted(p for p in path.iterdir() if p.suffix.lower() in {".yaml", ".yml", ".csv"})
    if not files:
        raise SiteDataError([Problem(str(path), None, "site", MISSING, "YAML or CSV site-data files in the folder")])
    return files


def _read_documents(files, problems):
    """(file name, section, item) for every item of every file; facility entries apart."""
    items, facilities = [], []
    for path in files:
        if path.suffix.lower() == ".csv":
            section = path.stem
            if section not in SECTIONS:
                problems.append(Problem(path.name, None, "file name", path.name,
                                        f"a CSV named after a section: {', '.join(f'{s}.csv' for s in SECTIONS)}"))
                continue
            rows = read_csv(path, problems)
            items += [(path.name, section, row) for row in rows or []]
            continue
        before = len(problems)
        document = read_yaml(path, problems)
        if document is None:
            if len(problems) == before:
                problems.append(Problem(path.name, 1, "file", MISSING, "site data (the file holds only comments)"))
            continue
        if not isinstance(document, dict):
            kind = "a list" if isinstance(document, list) else type(document).__name__
            problems.append(Problem(path.name, getattr(document, "line", 1), "document", kind,
                                    "a mapping of sections (facility, buses, cables, ...)"))
            continue
        for section, content in document.items():
            line = document.key_lines.get(section)
            if section == "facility":
                facilities.append((path.name, content))
            elif section == TEMPLATES:
                continue  # a place for YAML anchors (&name) that items merge in with <<: *name
            elif section not in SECTIONS:
                problems.append(Problem(path.name, line, "section", section,
                                        f"one of facility, {', '.join(SECTIONS)}, {TEMPLATES}"))
            elif not isinstance(content, list):
                problems.append(Problem(path.name, line, section, content, "a list of items"))
            else:
                items += [(path.name, section, item) for item in content]
    return items, facilities


def _facility_lines(facilities):
    """(file, line) of each key of the facility section, and of each device-library entry."""
    if not facilities:
        return {}
    file, content = facilities[0]
    lines = {key: (file, line) for key, line in getattr(content, "key_lines", {}).items()}
    libraries = content.get("device_library") if isinstance(content, dict) else None
    for k, line in enumerate(getattr(libraries, "item_lines", [])):
        lines[("device_library", k)] = (file, line)
    return lines


def _read_libraries(folder, names, problems, where):
    """Items of device-library files: only 'curves:' sections."""
    items = []
    for k, name in enumerate(names):
        library = (folder / name).resolve()
        if not library.is_file():
            file, line = where.get(("device_library", k), where.get("device_library", ("(site)", None)))
            problems.append(Problem(file, line, "facility.device_library", name,
                                    f"an existing device-library file (looked for {library})"))
            continue
        found, facilities = _read_documents([library], problems)
        for file, section, item in found:
            if section != "curves":
                problems.append(Problem(file, getattr(item, "line", None), "section", section,
                                        "only 'curves:' in a device-library file"))
            else:
                items.append((file, section, item))
        if facilities:
            problems.append(Problem(library.name, None, "facility", MISSING, "no 'facility:' in a device-library file"))
    return items


def _validate_facility(facilities, problems, unreadable):
    if not facilities and unreadable:
        return None  # the facility may be in the file that could not be read
    if not facilities:
        problems.append(Problem("(site)", None, "facility", MISSING, "one 'facility:' section in a YAML file"))
        return None
    if len(facilities) > 1:
        for file, content in facilities[1:]:
            problems.append(Problem(file, getattr(content, "line", None), "facility", MISSING,
                                    f"a single 'facility:' section (first one in {facilities[0][0]})"))
    file, content = facilities[0]
    try:
        return Facility.model_validate(content)
    except ValidationError as exc:
        problems += _validation_problems(exc, file, content, "facility", Facility)
    return None


class _Invalid(set):
    """Ids of invalid items; once an invalid item has no usable id, any id may be it (``unnamed``)."""

    unnamed = False

    def __contains__(self, ident):
        return self.unnamed or super().__contains__(ident)

    def __bool__(self):
        return self.unnamed or super().__len__() > 0


#: Top-level YAML section that is not read: it holds anchors (``&lv-motor``) for merge keys (``<<: *lv-motor``).
TEMPLATES = "templates"

#: Fields of the problems that concern a whole file (listed first; the cross-checks wait for them).
FILE_FIELDS = ("file", "YAML", "site", "sections")


def _missing_sections(given, path):
    """A site needs buses and a source; without them every reference would fail on its own line.

    ``given`` holds the sections with at least one item (valid or not).
    """
    folder = path if path.is_dir() else path.parent
    problems = []
    if "buses" not in given:
        problems.append(Problem(f"{folder.name or folder}/", None, "sections", "buses",
                                "a 'buses:' section in a YAML file, or a buses.csv, with at least one bus"))
    if "utilities" not in given and "generators" not in given:
        problems.append(Problem(f"{folder.name or folder}/", None, "sections", "utilities",
                                "a 'utilities:' (or 'generators:') section with at least one source"))
    return problems


def load_site(path):
    """Read, validate and cross-check a facility folder.

    Parameters
    ----------
    path : str or pathlib.Path
        Folder of site-data files (or one YAML file).

    Returns
    -------
    Site

    Raises
    ------
    SiteDataError
        With every problem found, each naming file, line, field, value and
        what was expected.
    """
    with collector_paused():  # a large site is many objects that live on (arcflash/collector.py)
        return _load_site(path)


def _load_site(path):
    """The work of :func:`load_site`."""
    files = site_files(path)
    problems = []
    items, facilities = _read_documents(files, problems)
    facility = _validate_facility(facilities, problems, unreadable=bool(problems))
    where = _facility_lines(facilities)
    if facility is not None and facility.device_library:
        items += _read_libraries(Path(path) if Path(path).is_dir() else Path(path).parent,
                                 facility.device_library, problems, where)
    elements = {section: {} for section in SECTIONS}
    origin = {("facility", key): at for key, at in where.items() if isinstance(key, str)}
    invalid = _Invalid()  # ids of items already reported invalid: references to them are not reported again
    for file, section, item in items:
        key = "name" if section == "scenarios" else "id"
        ident = item.get(key, "?") if isinstance(item, dict) else "?"
        ident = ident if isinstance(ident, (str, int, float)) else "?"
        label = f"{section}[{ident}]"
        if not isinstance(item, dict):
            problems.append(Problem(file, None, label, item, "a mapping of fields"))
            continue
        try:
            element = SECTIONS[section].model_validate(item)
        except ValidationError as exc:
            problems += _validation_problems(exc, file, item, label, SECTIONS[section])
            invalid.add(ident)
            invalid.unnamed |= ident in ("?", "") or not isinstance(item.get(key), str)
            continue
        ident = getattr(element, key)
        where = (file, item.line if isinstance(item, LineMap) else None)
        if ident in elements[section]:
            first = origin[(section, ident)]
            problems.append(Problem(file, where[1], f"{label}.{key}", ident,
                                    f"a unique {key} (also defined at {first[0]}:{first[1]})"))
            continue
        elements[section][ident] = element
        origin[(section, ident)] = where
    if not elements["scenarios"]:
        elements["scenarios"] = {NORMAL.name: NORMAL}
        origin[("scenarios", NORMAL.name)] = ("(built in)", None)
    unreadable = any(p.field in FILE_FIELDS for p in problems)
    if not unreadable:
        missing = _missing_sections({section for _, section, _ in items}, Path(path))
        problems += missing
        unreadable = bool(missing)
    if facility is not None and not unreadable:
        # With a file unreadable or a required section missing, references into it would all be reported
        # again: the cross-checks wait until the files are mended.
        problems += checks.cross_check(facility, elements, origin, invalid)
    if problems:
        raise SiteDataError(sorted(problems, key=lambda p: p.field not in FILE_FIELDS))
    return Site(path=Path(path), facility=facility, origin=origin, warnings=_earlier_names(elements, origin),
                **elements)


def _earlier_names(elements, origin):
    """Warnings for keys read under an earlier name, each at its file and line."""
    warnings = []
    for name, scenario in elements["scenarios"].items():
        if scenario.maintenance_mode is not None:
            file, line = origin[("scenarios", name)]
            warnings.append(f"{file}:{line}: scenarios[{name}].maintenance_mode: read, but that is the earlier "
                            "name; write energy_reducing_maintenance_switching (the energy-reducing maintenance "
                            "switching of NEC 240.87(B)(3))")
    return warnings
