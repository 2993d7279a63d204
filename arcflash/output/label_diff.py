"""Why each label changed since it was last issued: the maintenance lead's question.

For every bus whose label content differs from the last issued label (from the ledger), three things:

- the label's values side by side (old, new);
- the study's values stage by stage (bolted current, arcing current, the device that ends the arc, the
  clearing time, the incident energy, the governing scenario) from the values kept beside the issued label;
- the inputs that changed since the issue (from the site snapshot kept in the ledger), each marked
  *upstream* when it lies between the bus and a source (a branch on the shortest path with every switch
  closed, a device on such a branch, its curve, a source) or is site-wide (facility settings, scenarios),
  else *elsewhere* (it can still matter, e.g. a motor contributing through the network);

and whether the label now needs a different PPE category.
"""

from __future__ import annotations

from collections import deque
from dataclasses import dataclass, field

import pandas as pd

from ..models.nfpa70e import ppe_category_words
from . import ledger
from .labels import labels_of, study_values

#: The label fields compared (LabelContent names) with their words.
LABEL_FIELDS = {
    "signal_word": "signal word", "energy_or_category": "incident energy or PPE category",
    "arc_flash_boundary": "arc-flash boundary", "minimum_arc_rating": "minimum arc rating",
    "site_ppe": "site PPE", "governing_device": "clearing line", "nominal_voltage": "nominal voltage",
    "study_note": "study notes", "study_revision": "study revision", "study_date": "study date",
    "hazard": "hazard statement", "limited_approach": "limited approach", "restricted_approach": "restricted approach",
}

#: The study's stages, in the order they build on each other, with their words.
STAGES = {
    "scenario": "governing scenario", "bolted_ka": "bolted fault current [kA]",
    "arcing_current_ka": "arcing current [kA]", "device_governing": "device that ends the arc",
    "clearing_time_governing_s": "clearing time [s]", "governing_case": "governing arcing case",
    "incident_energy_governing_cal_cm2": "incident energy [cal/cm2]",
    "arc_flash_boundary_governing_mm": "arc-flash boundary [mm]", "ppe_category": "PPE category",
}

_SITE_WIDE = ("facility", "scenarios")
_BRANCHES = ("transformers", "cables", "impedances", "switches")


@dataclass
class LabelChange:
    """What changed on one bus's label, and why."""

    bus: str
    issued_at: str
    fields: list = field(default_factory=list)   # (field words, old, new)
    stages: list = field(default_factory=list)   # (stage words, old, new)
    causes: list = field(default_factory=list)   # (element, field, old, new, 'upstream' or 'elsewhere')
    old_category: object = None
    new_category: object = None
    traced: bool = True                          # False when the ledger kept no study values or snapshot

    @property
    def new_ppe_category_needed(self):
        """True when the PPE category differs from the issued label's (None: not known)."""
        if self.old_category is None:
            return None
        return self.old_category != self.new_category


def _flatten(value, prefix=""):
    if isinstance(value, dict):
        items = {}
        for key, inner in value.items():
            items.update(_flatten(inner, f"{prefix}.{key}" if prefix else str(key)))
        return items
    return {prefix: value}


def element_changes(old, new):
    """(section, id, field, old, new) for every input that differs between two site snapshots."""
    changes = []
    for section in sorted(set(old) | set(new)):
        before, after = old.get(section, {}), new.get(section, {})
        for ident in sorted(set(before) | set(after)):
            if ident not in before:
                changes.append((section, ident, "(added)", None, "added"))
            elif ident not in after:
                changes.append((section, ident, "(removed)", "present", None))
            else:
                a, b = _flatten(before[ident]), _flatten(after[ident])
                changes += [(section, ident, name, a.get(name), b.get(name)) for name in sorted(set(a) | set(b))
                            if a.get(name) != b.get(name)]
    return changes


def upstream_of(site, bus):
    """(section, id) of the elements between ``bus`` and the sources: the branches on the shortest path to each
    utility or generator (every switch closed), the devices on them and their curves, the sources."""
    links = {}
    for section in _BRANCHES:
        for ident, element in getattr(site, section).items():
            a, b = ((element.primary_bus, element.secondary_bus) if section == "transformers"
                    else (element.from_bus, element.to_bus))
            links.setdefault(a, []).append((b, section, ident))
            links.setdefault(b, []).append((a, section, ident))
    came = {bus: None}
    queue = deque([bus])
    while queue:
        here = queue.popleft()
        for there, section, ident in links.get(here, []):
            if there not in came:
                came[there] = (here, section, ident)
                queue.append(there)
    found = set()
    for section in ("utilities", "generators"):
        for ident, source in getattr(site, section).items():
            if source.bus not in came:
                continue
            found.add((section, ident))
            step = came[source.bus]
            while step is not None:
                here, branch_section, branch = step
                found.add((branch_section, branch))
                step = came[here]
    branches = {ident for section, ident in found if section in _BRANCHES}
    for ident, device in site.devices.items():
        if device.branch in branches:
            found.add(("devices", ident))
            if device.curve:
                found.add(("curves", device.curve))
    return found


def label_changes(site, governing, book, since=None):
    """The :class:`LabelChange` of every bus whose label differs from the last issued one.

    Parameters
    ----------
    site : Site
        The site data as they are now [-]
    governing : pandas.DataFrame
        The governing table of a study of them [-]
    book : path
        The label ledger [-]
    since : str, optional
        Compare with the last labels issued for this study revision [-]
    """
    issued = ledger.issued_context(book, since)
    current = ledger.site_snapshot(site)
    snapshots = {}
    changes = []
    for content in labels_of(site, governing):
        bus = content.equipment_id
        if bus not in issued:
            continue
        old, new = issued[bus], content.as_dict()
        names = [name for name in new if old["content"].get(name, "") != new[name]]
        if not names:
            continue
        change = LabelChange(bus=bus, issued_at=old["issued_at"])
        change.fields = [(LABEL_FIELDS.get(name, name.replace("_", " ")), old["content"].get(name, ""), new[name])
                         for name in names]
        row = governing.loc[bus]
        change.new_category = _category(row.get("ppe_category"))
        if old["study_row"] is None or old["snapshot_id"] is None:
            change.traced = False
        else:
            now = study_values(row)
            change.stages = [(words, old["study_row"].get(name), now.get(name)) for name, words in STAGES.items()
                             if old["study_row"].get(name) != now.get(name)]
            change.old_category = _category(old["study_row"].get("ppe_category"))
            if old["snapshot_id"] not in snapshots:
                snapshots[old["snapshot_id"]] = ledger.snapshot(book, old["snapshot_id"])
            upstream = upstream_of(site, bus)
            for section, ident, name, before, after in element_changes(snapshots[old["snapshot_id"]], current):
                where = ("upstream" if section in _SITE_WIDE or (section, ident) in upstream or
                         (section == "buses" and ident == bus) else "elsewhere")
                element = "facility" if section == "facility" else f"{section}[{ident}]"
                change.causes.append((element, name, before, after, where))
            change.causes.sort(key=lambda cause: cause[4] != "upstream")
        changes.append(change)
    return changes


def _category(value):
    try:
        return None if value is None or pd.isna(value) else int(value)
    except (TypeError, ValueError):
        return None


def _category_words(value):
    return "unknown" if value is None else ppe_category_words(value)


def _value(value):
    """A value as printed: numbers to 6 significant digits, None as '-'."""
    if value is None:
        return "-"
    if isinstance(value, float):
        return f"{value:.6g}"
    return str(value)


def changes_table(changes):
    """One row per changed label value, stage and input: bus, kind, item, old, new, where."""
    rows = []
    for change in changes:
        rows += [(change.bus, "label", words, _value(old), _value(new), "") for words, old, new in change.fields]
        rows += [(change.bus, "stage", words, _value(old), _value(new), "") for words, old, new in change.stages]
        rows += [(change.bus, "input", f"{element}.{name}", _value(old), _value(new), where)
                 for element, name, old, new, where in change.causes]
        if change.new_ppe_category_needed:
            rows.append((change.bus, "PPE", "PPE category", _category_words(change.old_category),
                         _category_words(change.new_category), "new PPE category needed"))
    return pd.DataFrame(rows, columns=["bus", "kind", "item", "old", "new", "where"])


def changes_text(changes):
    """The changes in words, bus by bus."""
    if not changes:
        return "No label differs from the last one issued."
    lines = []
    for change in changes:
        lines.append(f"{change.bus} (last issued {change.issued_at})")
        if change.new_ppe_category_needed:
            lines.append(f"  NEW PPE CATEGORY: {_category_words(change.old_category)} -> "
                         f"{_category_words(change.new_category)}")
        for words, old, new in change.fields:
            lines.append(f"  label  {words}: {_value(old)} -> {_value(new)}")
        for words, old, new in change.stages:
            lines.append(f"  study  {words}: {_value(old)} -> {_value(new)}")
        for element, name, old, new, where in change.causes:
            lines.append(f"  input  {element}.{name}: {_value(old)} -> {_value(new)} ({where})")
        if not change.traced:
            lines.append("  (issued before arcflash kept what labels were made from: the cause is not traced)")
        elif not change.causes:
            lines.append("  no input changed: the change comes from the method or the tool version")
    return "\n".join(lines)


def write_changes_pdf(changes, path, site):
    """The changes as a page for the crew: one table, the buses needing a new PPE category first."""
    from xml.sax.saxutils import escape

    from reportlab.lib import colors
    from reportlab.lib.pagesizes import landscape, letter
    from reportlab.lib.styles import getSampleStyleSheet
    from reportlab.lib.units import inch
    from reportlab.platypus import Paragraph, SimpleDocTemplate, Spacer, Table, TableStyle

    from .cautions import CAUTION

    styles = getSampleStyleSheet()
    small = styles["BodyText"].clone("small", fontSize=7.5, leading=9)
    ordered = sorted(changes, key=lambda c: not c.new_ppe_category_needed)
    table = changes_table(ordered)
    cells = [[Paragraph(escape(str(v)) if v is not None else "-", small) for v in row]
             for row in [list(table.columns)] + table.astype(object).values.tolist()]
    story = [Paragraph(escape(f"Why the labels changed - {site.facility.name}"), styles["Heading2"]),
             Paragraph(escape(f"{len(changes)} labels differ from the last ones issued; "
                              f"{sum(bool(c.new_ppe_category_needed) for c in changes)} need a new PPE category."),
                       small), Spacer(1, 6)]
    if len(cells) > 1:
        grid = Table(cells, colWidths=[1.0 * inch, 0.6 * inch, 3.0 * inch, 1.8 * inch, 1.8 * inch, 1.4 * inch],
                     repeatRows=1)
        grid.setStyle(TableStyle([("GRID", (0, 0), (-1, -1), 0.25, colors.grey),
                                  ("BACKGROUND", (0, 0), (-1, 0), colors.lightgrey),
                                  ("VALIGN", (0, 0), (-1, -1), "TOP")]))
        story.append(grid)
    story += [Spacer(1, 8), Paragraph(escape(CAUTION), small)]
    SimpleDocTemplate(str(path), pagesize=landscape(letter), leftMargin=0.4 * inch, rightMargin=0.4 * inch,
                      topMargin=0.4 * inch, bottomMargin=0.4 * inch).build(story)
