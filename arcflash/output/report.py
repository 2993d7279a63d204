"""The study report (PDF, reportlab; pictures by matplotlib).

Sections: cover (facility, revision, date, preparer and reviewer blanks, the model's verification status,
the limits of the results); scope and method (standards and editions, what was and was not modelled, the
duration cap, the staged clearing sequence, the conservative choices); input tables in words and units
(sources, transformers with how their %Z was obtained, cables, motors, devices, equipment, scenarios);
results (the governing row of every bus, every scenario and case, study notes, flags); one-line picture;
TCC plots; limits of use. Every page's footer carries the limits of use, the revision, the verification
status and 'page x of y'; a draft (tables not verified) is watermarked.

Tables are :class:`.pdf_table.RowTable`: cells broken into lines here and drawn as PDF operators, far
faster than reportlab's own tables at tens of thousands of rows.
"""

from __future__ import annotations

from xml.sax.saxutils import escape

from reportlab.lib import colors
from reportlab.lib.pagesizes import letter
from reportlab.lib.styles import getSampleStyleSheet
from reportlab.lib.units import inch
from reportlab.pdfgen.canvas import Canvas
from reportlab.platypus import PageBreak, Paragraph, SimpleDocTemplate, Spacer

from ..study.pipeline import FLAG_NOTES
from .cautions import CAUTION
from .pdf_table import RowTable
from .report_tables import (
    cable_rows, device_rows, equipment_rows, every_case_rows, governing_rows, motor_rows, scenario_rows, sources_rows,
    switch_rows, transformer_rows,
)

_STYLES = getSampleStyleSheet()
_SMALL = _STYLES["BodyText"].clone("small", fontSize=7, leading=8.5)
_BODY = _STYLES["BodyText"].clone("body", fontSize=9, leading=11.5)
_H3 = _STYLES["Heading3"].clone("h3", fontSize=10, leading=12, spaceBefore=6, spaceAfter=3)
_STATUS = _STYLES["BodyText"].clone("status", fontSize=11, leading=14, fontName="Helvetica-Bold")
_FOOTER = ("Limits of use: results for qualified persons only; de-energizing is the preferred state; local codes "
           "and licensed engineering practice govern.")


def _p(text, style=_SMALL):
    return Paragraph(escape(str(text)), style)


def flatten(story):
    """The story as a flat list of flowables (nested lists laid out one after another)."""
    flat = []
    for item in story:
        flat.extend(flatten(item) if isinstance(item, list) else [item])
    return flat


def _table(header, rows, widths=None):
    """A table of text cells broken to their column widths (:class:`.pdf_table.RowTable`, split between
    pages by whole rows); ``widths`` in inches, default equal shares of the text width."""
    count = len(header)
    widths = [w * inch for w in widths] if widths else [7.3 * inch / count] * count
    return RowTable(header, rows or [["-"] * count], widths)


#: Standards and editions the study applies, and what each gives.
STANDARDS = (
    ("IEEE Std 1584-2018", "arcing current, reduced arcing current, incident energy, arc-flash boundary; range "
                           "of the model (clause 4.2); typical gaps, enclosures and working distances (Tables 9, 10)"),
    ("NFPA 70E, 2021 edition", "PPE categories and minimum arc ratings (Table 130.7(C)(15)(c)), shock approach "
                               "boundaries (Table 130.4(E)(a)), label content (130.5(H))"),
    ("IEEE C37.112-2018 / IEC 60255-151", "inverse-time relay curves, and trip progress at a changing current"),
    ("NEC (NFPA 70) Chapter 9 Table 9", "cable resistance and reactance per 1000 ft"),
    ("NEC 110.16(B)", "the date on equipment labels"),
)

#: What the study does not model (a reviewer checks that none of it matters at this site).
NOT_MODELLED = (
    "Protection of the utility upstream of the service: an arc at a bus fed straight from the utility is "
    "cleared only by the site's own devices listed in the input tables; where none opens, the arc lasts "
    "until the duration cap and is flagged.",
    "Arcs that are not three-phase (IEEE 1584-2018 covers three-phase AC arcs), DC systems, systems below "
    "208 V or above 15 kV (computed and flagged as outside the model's range).",
    "Fault-current decrement of generators and the utility during the arc; motor contributions are held "
    "for the whole arc unless the facility sets a cut-off.",
    "Current limitation of fuses and current-limiting breakers beyond what their time-current curves show.",
    "Arc-resistant switchgear ratings, remote operation and other ways of working that change the exposure.",
)


def _method(site, governing):
    f = site.facility
    cap = (f"{f.arc_duration_cap_s:g} s (IEEE 1584-2018 guidance; an arc that no device clears sooner lasts "
           "that long, flagged)") if f.arc_duration_cap_s else "none (the facility sets no cap)"
    motors = (f"motor contributions end after {f.motor_contribution_cycles:g} cycles" if f.motor_contribution_cycles
              else "motor contributions last the whole arc")
    story = [Paragraph("Scope and method", _STYLES["Heading2"]), Paragraph("Standards and editions", _H3),
             _table(["standard", "used for"], [list(row) for row in STANDARDS], widths=[2.0, 5.3])]
    modelled = [
        f"{len(site.buses)} buses, {len(site.utilities)} utility sources, {len(site.generators)} generators, "
        f"{len(site.transformers)} transformers, {len(site.cables)} cables, {len(site.impedances)} other "
        f"impedances, {len(site.switches)} switches, {len(site.motors)} motors, {len(site.devices)} protective "
        f"devices; {len(site.scenarios)} scenarios (see the input tables).",
        "Bolted three-phase faults: per-unit positive-sequence network, prefault voltage factor "
        f"{f.voltage_factor:g} pu, {f.s_base_mva:g} MVA base; the utility as an equivalent source at its "
        "stated level; motors and running generators contribute by their subtransient reactance (1 hp taken "
        "as 1 kVA).",
        "Arcing current, incident energy and arc-flash boundary: IEEE 1584-2018 at each bus, for the full and "
        "for the reduced arcing current, each with its own clearing time; the larger energy governs. Inputs "
        "outside the model's range are computed and flagged, never clipped.",
        "Clearing (the staged sequence): each device sees its own share of the arcing current, in its own "
        "voltage, on the slower edge of its band. Where one source feeds the bus and the first device to open "
        "ends the arc, its time is the clearing time. Everywhere else the arc is followed stage by stage: "
        "after each opening the network is solved again, every device gathers trip progress (the integral of "
        "dt/t(I), IEEE C37.112) at its new current, and the energy is summed over the stages; the governing "
        f"device is the one whose opening ended the arc. {motors.capitalize()}.",
        f"Arc-duration cap: {cap}.",
        "PPE: NFPA 70E Table 130.7(C)(15)(c) arc ratings from the incident energy; above 40 cal/cm2 no PPE "
        "category applies. Shock boundaries: NFPA 70E Table 130.4(E)(a).",
    ]
    conservative = [
        "Both arcing cases, every scenario: each bus takes its largest energy over both.",
        "Transformer %Z at the low side of its tolerance with the maximum utility level and the high side with "
        "the minimum (unless a scenario says otherwise).",
        "Devices on the slower (maximum) edge of their time-current band; breaker opening time added to relays.",
        "An unknown enclosure depth counts as a typical enclosure (the larger energy); buses with no geometry "
        "take the typical values of their voltage class (flagged).",
        f"{motors.capitalize()}; printed energies and lengths are rounded up, never down.",
    ]
    story += [Paragraph("What was modelled", _H3)] + [Paragraph(escape(t), _BODY) for t in modelled]
    story += [Paragraph("What was not modelled", _H3)] + [Paragraph(escape("- " + t), _BODY) for t in NOT_MODELLED]
    story += [Paragraph("Conservative choices", _H3)] + [Paragraph(escape("- " + t), _BODY) for t in conservative]
    return story


def _inputs(site, governing):
    sections = [("Sources", sources_rows(site), [1.0, 0.6, 0.55, 1.1, 1.1, 1.0, 1.0, 0.95]),
                ("Transformers", transformer_rows(site), [0.8, 1.1, 0.65, 0.8, 2.3, 0.4, 0.65, 0.6]),
                ("Cables and other impedances", cable_rows(site), [1.0, 1.6, 0.7, 0.4, 2.2, 1.4]),
                ("Switches and ties", switch_rows(site), [1.0, 0.8, 1.8, 0.8, 1.45, 1.45]),
                ("Motors", motor_rows(site), [0.9, 0.9, 0.7, 0.6, 0.6, 0.5, 0.7, 1.4]),
                ("Protective devices and their settings", device_rows(site), [0.9, 1.0, 0.9, 0.8, 3.7]),
                ("Equipment", equipment_rows(site, governing), [0.8, 1.3, 0.55, 1.15, 0.6, 0.45, 1.1, 1.35]),
                ("Scenarios", scenario_rows(site), [0.75, 1.05, 0.6, 0.7, 0.6, 0.6, 0.7, 0.7, 0.6, 1.0])]
    story = [Paragraph("Input tables", _STYLES["Heading2"])]
    for title, (header, rows), widths in sections:
        story += [Paragraph(title, _H3), _table(header, rows or [["-"] * len(header)], widths=widths), Spacer(1, 4)]
    return story


#: The every-scenario-and-case table stops after this many rows (the full table is results.csv).
EVERY_CASE_ROWS = 2000


def _results(site, results):
    governing = results.governing
    header, rows = governing_rows(governing)
    story = [Paragraph("Results: the governing case of every bus, highest energy first", _STYLES["Heading2"]),
             Paragraph("Energy at the working distance; boundaries rounded up in both units; the clearing "
                       "sequence of the governing scenario and case; notes: see 'Study notes'.", _BODY),
             _table(header, rows, widths=[0.75, 0.45, 0.95, 1.3, 0.9, 0.8, 1.05, 0.75, 0.35])]
    header, rows = every_case_rows(results.rows, EVERY_CASE_ROWS)
    story += [PageBreak(), Paragraph("Results: every scenario and arcing case", _STYLES["Heading2"]),
              _table(header, rows, widths=[1.1, 1.1, 0.6, 0.9, 1.2, 0.9, 1.5])]
    total = 2 * len(results.rows)
    if total > len(rows):
        story.append(_p(f"The first {len(rows):,} of {total:,} rows (by bus); every row is in results.csv and "
                        "results.xlsx.", _BODY))
    story += [Spacer(1, 12), Paragraph("Study notes: labels print the numbers of their flags", _STYLES["Heading2"]),
              _table(["note", "meaning"], [[str(k), text] for k, text in FLAG_NOTES.items()], widths=[0.5, 6.8])]
    notes = governing["flag_notes"] if "flag_notes" in governing else [""] * len(governing)
    flagged = [(bus, note, flags) for bus, note, flags in zip(governing.index, notes, governing["flags"]) if flags]
    story += [Spacer(1, 12), Paragraph("Flags (governing rows)", _STYLES["Heading2"]),
              _table(["bus", "notes", "flags"], flagged or [["-", "-", "none"]], widths=[1.2, 0.6, 5.5])]
    return story


def write_report(site, results, path, tcc_buses=None, model=None, uncertainty=None):
    """Write the study report PDF to ``path``.

    Parameters
    ----------
    site : Site
    results : StudyResults
    path : str or pathlib.Path
    tcc_buses : list of str, optional
        Buses with a TCC page (default: the three with the highest energy; [] for none).
    model : arcflash.verification.VerificationStatus, optional
        The model's verification status (default: looked up for the site). It stands on the cover and in
        every page's footer; a draft is watermarked on every page.
    uncertainty : arcflash.study.uncertainty.UncertaintyResult, optional
        Adds the pages of the bands per bus and their drivers.
    """
    from ..verification import status

    f = site.facility
    governing = results.governing
    model = status(getattr(site, "path", None)) if model is None else model
    story = [Spacer(1, 1.0 * inch), Paragraph("Arc-flash hazard study", _STYLES["Title"]),
             Paragraph(escape(f.name), _STYLES["Heading2"]), Paragraph(escape(f.description), _BODY),
             Spacer(1, 12),
             _table(["study revision", "study date", "scenarios", "buses"],
                    [[f.study_revision, f.study_date or "-", ", ".join(site.scenarios), str(len(site.buses))]],
                    widths=[1.2, 1.2, 3.9, 1.0]),
             Spacer(1, 18),
             _table(["", "name", "signature", "date"],
                    [["Prepared by", "\n\n", "", ""], ["Reviewed by", "\n\n", "", ""],
                     ["Approved by", "\n\n", "", ""]], widths=[1.2, 2.4, 2.4, 1.3]),
             Spacer(1, 18), Paragraph("Verification of the model", _STYLES["Heading3"]),
             Paragraph(escape(model.words + "."), _STATUS),
             Paragraph(escape("How to check: 'arcflash selfcheck' lists every intermediate value of the standard's "
                              "worked examples and the coefficient rows used; 'arcflash selfcheck record' stores "
                              "the outcome beside the site data."), _BODY),
             Spacer(1, 12), Paragraph("Limits of the results", _STYLES["Heading3"]),
             Paragraph(escape(CAUTION), _BODY), PageBreak()]
    story += _method(site, governing) + [PageBreak()] + _inputs(site, governing) + [PageBreak()]
    story += _results(site, results)
    if uncertainty is not None:
        from .uncertainty_pdf import uncertainty_story

        story += uncertainty_story(uncertainty, uncertainty.samples, uncertainty.seed, (_STYLES["Heading2"], _BODY),
                                   _table)
    if len(site.buses) <= ONE_LINE_IN_REPORT_MAX_BUSES:
        story += oneline_story(site)
    else:
        story += [PageBreak(), Paragraph("One-line diagram", _STYLES["Heading2"]),
                  Paragraph(escape(f"The one-line diagram of these {len(site.buses):,} buses is a drawing set of its "
                                   "own: oneline.pdf, beside this report."), _BODY)]
    story += _tcc_pages(site, results, tcc_buses)
    story += [PageBreak(), Paragraph("Limits of use", _STYLES["Heading2"]), Paragraph(escape(CAUTION), _BODY)]

    build_pdf(path, story, site, model, f"Arc-flash study - {f.name}")


def build_pdf(path, story, site, model, title):
    """Lay ``story`` out on letter pages into ``path``, every page with the footer (limits of use, the
    model's verification status, facility and revision, page x of y) and, for a draft, the watermark."""
    f = site.facility

    def footer(canvas, doc):
        canvas.saveState()
        if model.draft:
            _watermark(canvas)
        canvas.setFont("Helvetica", 6.5)
        canvas.drawString(0.6 * inch, 0.52 * inch, _FOOTER)
        canvas.drawString(0.6 * inch, 0.40 * inch, model.words)
        canvas.drawString(0.6 * inch, 0.28 * inch, f"{f.name} - study rev {f.study_revision}")
        canvas.restoreState()

    SimpleDocTemplate(str(path), pagesize=letter, leftMargin=0.6 * inch, rightMargin=0.6 * inch,
                      topMargin=0.6 * inch, bottomMargin=0.8 * inch, title=title,
                      ).build(flatten(story), onFirstPage=footer, onLaterPages=footer, canvasmaker=_PageCountCanvas)


def oneline_story(site, diagram=None):
    """The one-line diagram's sheets, each on its own page."""
    from .oneline_pdf import OneLine

    story = []
    for number, sheet in enumerate((diagram or OneLine(site)).sheets(), start=1):
        story += [PageBreak(), Paragraph("One-line diagram" if number == 1 else "One-line diagram (continued)",
                                         _STYLES["Heading2"]), sheet]
    return story


#: Sites with more buses than this get their one-line diagram in its own file, oneline.pdf, beside the
#: report (a drawing set of hundreds of sheets), and the report says so.
ONE_LINE_IN_REPORT_MAX_BUSES = 2000


def write_oneline(site, path, model=None):
    """The one-line diagram alone, as a PDF with the report's footer (for sites above
    :data:`ONE_LINE_IN_REPORT_MAX_BUSES` buses)."""
    from ..verification import status

    model = status(getattr(site, "path", None)) if model is None else model
    story = [Paragraph(f"One-line diagram of {escape(site.facility.name)}", _STYLES["Title"])]
    build_pdf(path, story + oneline_story(site), site, model, f"One-line diagram - {site.facility.name}")


#: The strokes of the watermark's letters on a 4 x 6 grid (drawn as lines, not text, so that text read
#: from the report is not interleaved with stray letters).
_STROKES = {
    "D": [[(0, 0), (0, 6), (2.5, 6), (4, 4.5), (4, 1.5), (2.5, 0), (0, 0)]],
    "R": [[(0, 0), (0, 6), (3, 6), (4, 5), (4, 4), (3, 3), (0, 3)], [(2, 3), (4, 0)]],
    "A": [[(0, 0), (2, 6), (4, 0)], [(1, 3), (3, 3)]],
    "F": [[(4, 6), (0, 6), (0, 0)], [(0, 3), (3, 3)]],
    "T": [[(0, 6), (4, 6)], [(2, 6), (2, 0)]],
}


def _tcc_pages(site, results, tcc_buses):
    """A TCC page per bus: from the study's own page data where it kept them (``results.tcc``), else the
    bus's governing row with its scenario's source paths found again."""
    from ..study.pipeline import default_tcc_buses
    from .tcc_pdf import TccPage

    kept = results.tcc or {}
    buses = list(kept) if tcc_buses is None and kept else (default_tcc_buses(results.governing)
                                                          if tcc_buses is None else list(tcc_buses))
    story = []
    for bus in buses:
        data = kept.get(bus) or _tcc_data_again(site, results, bus)
        story += [PageBreak(), Paragraph(f"Time-current plot: {escape(bus)}", _STYLES["Heading2"]),
                  TccPage(site, data)]
    return story


def _tcc_data_again(site, results, bus):
    """The TCC page data of a bus the study kept none for: its scenario's source paths, solved again."""
    from ..study.clearing import clearing_paths
    from ..study.faults import solve_scenario
    from ..study.tcc_data import PathRecord, tcc_data

    row = results.governing.loc[bus]
    scenario = site.scenario(row["scenario"])
    paths = clearing_paths(site, scenario, solve_scenario(site, scenario.name, for_clearing=True))
    from ..study.pipeline import _zone_rows

    return tcc_data(site, bus, row, PathRecord.from_paths(scenario.name, paths, _zone_rows(site, scenario, paths)),
                    results.steps)


def _watermark(canvas, word="DRAFT"):
    """A light diagonal DRAFT across the page (the results are a draft while the model is not verified)."""
    canvas.saveState()
    canvas.setStrokeColor(colors.Color(0.55, 0.55, 0.55, alpha=0.25))
    canvas.setLineWidth(9)
    canvas.setLineCap(1)
    canvas.setLineJoin(1)
    canvas.translate(letter[0] / 2, letter[1] / 2)
    canvas.rotate(40)
    unit, advance = 13.0, 6.0
    x0 = -(len(word) * advance - 2.0) * unit / 2
    path = canvas.beginPath()
    for number, letter_ in enumerate(word):
        for stroke in _STROKES[letter_]:
            points = [(x0 + (number * advance + x) * unit, (y - 3) * unit) for x, y in stroke]
            path.moveTo(*points[0])
            for point in points[1:]:
                path.lineTo(*point)
    canvas.drawPath(path, stroke=1, fill=0)
    canvas.restoreState()


class _PageCountCanvas(Canvas):
    """A canvas that holds its pages until the end, so that each can say 'page x of y'."""

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self._held = []

    def showPage(self):  # noqa: N802 - reportlab's name
        self._held.append(dict(self.__dict__))
        self._startPage()

    def save(self):
        total = len(self._held)
        for number, state in enumerate(self._held, start=1):
            self.__dict__.update(state)
            self.setFont("Helvetica", 6.5)
            self.drawRightString(letter[0] - 0.6 * inch, 0.28 * inch, f"page {number} of {total}")
            super().showPage()
        super().save()
