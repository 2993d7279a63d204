"""The study report (PDF, reportlab; pictures by matplotlib).

Sections: cover (facility, study revision and date, preparer fields); method
and assumptions; input summary; results sorted by energy; highest-risk list;
flags; one-line picture; TCC plots of the buses of interest; cautions. The
caution stands in every page's footer as well.
"""

from __future__ import annotations

import io
from xml.sax.saxutils import escape

import numpy as np
from reportlab.lib import colors
from reportlab.lib.pagesizes import letter
from reportlab.lib.styles import getSampleStyleSheet
from reportlab.lib.units import inch
from reportlab.pdfgen.canvas import Canvas
from reportlab.platypus import Image, PageBreak, Paragraph, SimpleDocTemplate, Spacer, Table, TableStyle

from ..models.units import mm_to_feet_inches
from ..study.pipeline import FLAG_NOTES
from .cautions import CAUTION
from .text import energy_text

_STYLES = getSampleStyleSheet()
_SMALL = _STYLES["BodyText"].clone("small", fontSize=7, leading=8.5)
_BODY = _STYLES["BodyText"].clone("body", fontSize=9, leading=11.5)
_STATUS = _STYLES["BodyText"].clone("status", fontSize=11, leading=14, fontName="Helvetica-Bold")
_FOOTER = "Limits of use: results for qualified persons only; de-energizing is the preferred state; local codes and licensed engineering practice govern."


def _p(text, style=_SMALL):
    return Paragraph(escape(str(text)), style)


def _ft_in(mm):
    if mm is None or not np.isfinite(mm):
        return "-"
    feet, inches = mm_to_feet_inches(mm)
    return f"{int(feet)}' {int(inches)}\" ({int(np.ceil(mm - 1e-9)):,} mm)"


_TABLE_STYLE = TableStyle([
    ("BACKGROUND", (0, 0), (-1, 0), colors.HexColor("#dde3ea")),
    ("GRID", (0, 0), (-1, -1), 0.25, colors.HexColor("#9aa5b1")),
    ("VALIGN", (0, 0), (-1, -1), "TOP"),
])
#: Rows per table piece: long tables are built in pieces (splitting one long
#: table across pages costs time that grows with the square of its length).
_ROWS_PER_PIECE = 40


class _Pieces(list):
    """Several table pieces that stand in a story as one flowable list."""


#: Tables longer than this use plain text cells (no wrapping), which build far faster.
_PLAIN_ABOVE_ROWS = 200
_PLAIN_STYLE = TableStyle([("FONTSIZE", (0, 0), (-1, -1), 6.5), ("LEADING", (0, 0), (-1, -1), 8),
                           ("BOTTOMPADDING", (0, 0), (-1, -1), 1), ("TOPPADDING", (0, 0), (-1, -1), 1)])


def flatten(story):
    """A story whose table pieces (see :func:`_table`) are laid out one after another."""
    flat = []
    for item in story:
        flat.extend(item if isinstance(item, _Pieces) else [item])
    return flat


def _table(header, rows, widths=None):
    plain = len(rows) > _PLAIN_ABOVE_ROWS
    cell = (lambda c: str(c)) if plain else _p
    head = [_p(h) for h in header]
    pieces = _Pieces()
    per_piece = _ROWS_PER_PIECE * (2 if plain else 1)
    for lo in range(0, max(len(rows), 1), per_piece):
        data = [head] + [[cell(c) for c in row] for row in rows[lo:lo + per_piece]]
        table = Table(data, colWidths=widths, repeatRows=1)
        table.setStyle(_TABLE_STYLE)
        if plain:
            table.setStyle(_PLAIN_STYLE)
        pieces.append(table)
    return pieces


def _figure(figure, width_in=7.0):
    import matplotlib.pyplot as plt

    buffer = io.BytesIO()
    figure.savefig(buffer, format="png", dpi=130)
    plt.close(figure)
    buffer.seek(0)
    w, h = figure.get_size_inches()
    return Image(buffer, width=width_in * inch, height=width_in * inch * h / w)


def _ppe(category):
    return {-1: "none applies (> 40)", 0: "below 1.2 cal/cm2", -2: "-"}.get(int(category), str(int(category)))


def _results_rows(governing):
    ordered = governing.sort_values("incident_energy_governing_cal_cm2", ascending=False, na_position="last")
    rows = []
    for bus, r in ordered.iterrows():
        energy = r["incident_energy_governing_cal_cm2"]
        rows.append([bus, f"{r['nominal_kv']:g}", f"{r['scenario']} / {r['governing_case'] or '-'}",
                     r["device_governing"] or "-",
                     "-" if not np.isfinite(r["clearing_time_governing_s"]) else f"{r['clearing_time_governing_s']:.3f}",
                     "-" if not np.isfinite(energy) else energy_text(energy, 2),
                     _ft_in(r["arc_flash_boundary_governing_mm"]), _ppe(r["ppe_category"])])
    return rows


def _inputs(site):
    story = [Paragraph("Input summary", _STYLES["Heading2"])]
    story.append(_table(["utility", "bus", "kV", "maximum", "minimum"],
                        [[u.id, u.bus, f"{u.kv:g}", f"{u.max.fault}, X/R {u.max.x_over_r:g}",
                          f"{u.min.fault}, X/R {u.min.x_over_r:g}"] for u in site.utilities.values()]))
    if site.generators:
        story += [Spacer(1, 6), _table(["generator", "bus", "kVA", "kV", "X''d %", "X/R", "running"],
                                       [[g.id, g.bus, f"{g.kva:g}", f"{g.kv:g}", f"{g.subtransient_reactance_percent:g}",
                                         f"{g.x_over_r:g}", "yes" if g.running else "no"]
                                        for g in site.generators.values()])]
    story += [Spacer(1, 6), _table(
        ["transformer", "primary", "secondary", "kVA", "kV", "%Z", "X/R", "tol. %"],
        [[t.id, t.primary_bus, t.secondary_bus, f"{t.kva:g}", f"{t.primary_kv:g}/{t.secondary_kv:g}",
          f"{t.z_percent:g}" if t.z_percent else f"test {t.test.applied_v:g} V", f"{t.x_over_r:g}",
          f"{t.z_tolerance_percent:g}"] for t in site.transformers.values()])]
    story += [Spacer(1, 6), _table(
        ["cable", "from", "to", "length", "sets", "conductor / impedance"],
        [[c.id, c.from_bus, c.to_bus, c.length, str(c.sets),
          f"{c.size} {c.material} in {c.conduit}" if c.size else f"{c.r_ohm_per_kft}+j{c.x_ohm_per_kft} ohm/kft"]
         for c in list(site.cables.values())[:400]])]
    if len(site.cables) > 400:
        story.append(_p(f"... and {len(site.cables) - 400} more cables (see the site data)."))
    story += [Spacer(1, 6), _table(["device", "kind", "branch", "at bus", "settings"],
                                   [[d.id, d.kind, d.branch, d.at_bus, _settings(d)]
                                    for d in list(site.devices.values())[:400]])]
    if len(site.devices) > 400:
        story.append(_p(f"... and {len(site.devices) - 400} more devices (see the site data)."))
    return story


def _settings(device):
    if device.relay is not None:
        r = device.relay
        text = (f"CT {r.ct_primary_a:g}:{r.ct_secondary_a:g}, pickup {r.pickup_a:g} A, {r.standard} {r.curve}, "
                f"TD {r.time_dial:g}")
        return text + (f", inst {r.instantaneous_a:g} A" if r.instantaneous_a else "")
    if device.trip_unit is not None:
        u = device.trip_unit
        text = f"{u.rating_a:g} A, LT {u.long_time_pickup:g}x/{u.long_time_delay_s:g} s"
        if u.short_time_pickup:
            text += f", ST {u.short_time_pickup:g}x/{u.short_time_delay_s:g} s"
        if u.instantaneous_pickup:
            text += f", I {u.instantaneous_pickup:g}x"
        return text + (f"; maintenance {device.maintenance}" if device.maintenance else "")
    return f"curve {device.curve}"


def _method(site):
    f = site.facility
    cap = f"{f.arc_duration_cap_s:g} s" if f.arc_duration_cap_s else "none"
    items = [
        "Bolted three-phase faults: per-unit positive-sequence network, prefault voltage factor "
        f"{f.voltage_factor:g} pu, {f.s_base_mva:g} MVA base; transformer %Z at the low side of its tolerance "
        "for the maximum utility level and the high side for the minimum; motors contribute, 1 hp taken as 1 kVA.",
        "Arcing current, incident energy and arc-flash boundary: IEEE 1584-2018, both the full and the reduced "
        "arcing current with their own clearing times; the larger energy governs. Inputs outside the model's "
        "range are computed and flagged.",
        "Clearing: each device at its own share of the arcing current in its own kV, slowest (maximum) curve of "
        "its band. Where one source feeds the bus and its path's fastest device is the first to open, that "
        "device ends the arc. Everywhere else the arc is followed stage by stage: after each opening the "
        "network is solved again, every device gathers trip progress (the integral of dt/t(I), IEEE C37.112) "
        "at its new current, and the energy is summed over the stages; the governing device is the one whose "
        "opening ended the arc. Motor contributions "
        + (f"end after {f.motor_contribution_cycles:g} cycles" if f.motor_contribution_cycles else
           "last the whole arc") + f". Arc-duration cap: {cap} (IEEE 1584-2018 guidance).",
        "PPE category by NFPA 70E (2021) Table 130.7(C)(15)(c) arc ratings from the calculated energy; shock "
        "approach boundaries by Table 130.4(E)(a). Above 40 cal/cm2 no PPE category applies.",
        "Coefficient tables and typical values marked 'from memory' in docs/method.md await a check against the "
        "printed standard.",
    ]
    return [Paragraph("Method and assumptions", _STYLES["Heading2"])] + [Paragraph(escape(i), _BODY) for i in items]


def write_report(site, results, path, tcc_buses=None, model=None):
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
    """
    from ..verification import status

    from .oneline import oneline_figure
    from .tcc import tcc_figure

    f = site.facility
    governing = results.governing
    model = status(getattr(site, "path", None)) if model is None else model
    story = [Spacer(1, 1.2 * inch), Paragraph("Arc-flash hazard study", _STYLES["Title"]),
             Paragraph(escape(f.name), _STYLES["Heading2"]), Paragraph(escape(f.description), _BODY),
             Spacer(1, 12),
             _table(["study revision", "study date", "scenarios", "buses"],
                    [[f.study_revision, f.study_date or "-", ", ".join(site.scenarios), str(len(site.buses))]]),
             Spacer(1, 24),
             _table(["", "name", "signature", "date"],
                    [["Prepared by", "", "", ""], ["Checked by", "", "", ""], ["Approved by", "", "", ""]],
                    widths=[1.2 * inch, 2.2 * inch, 2.2 * inch, 1.2 * inch]),
             Spacer(1, 18), Paragraph("Verification of the model", _STYLES["Heading3"]),
             Paragraph(escape(model.words + "."), _STATUS),
             Paragraph(escape("How to check: 'arcflash selfcheck' lists every intermediate value of the standard's "
                              "worked examples and the coefficient rows used; 'arcflash selfcheck record' stores "
                              "the outcome beside the site data."), _BODY),
             Spacer(1, 18), Paragraph(escape(CAUTION), _BODY), PageBreak()]
    story += _method(site) + [PageBreak()] + _inputs(site) + [PageBreak()]
    story += [Paragraph("Results, governing case per bus, highest energy first", _STYLES["Heading2"]),
              _table(["bus", "kV", "scenario / case", "device", "t (s)", "E (cal/cm2)", "arc-flash boundary",
                      "PPE category"], _results_rows(governing))]
    energy = governing["incident_energy_governing_cal_cm2"].fillna(-1)
    risky = governing[(energy > 40) | energy.isin(energy.nlargest(10))]
    story += [PageBreak(), Paragraph("Highest-risk equipment", _STYLES["Heading2"]),
              _table(["bus", "kV", "scenario / case", "device", "t (s)", "E (cal/cm2)", "arc-flash boundary",
                      "PPE category"], _results_rows(risky))]
    staged = [(bus, f"{r['scenario']} / {r['governing_case']}", r["clearing_sequence_governing"])
              for bus, r in governing.iterrows() if r.get("staged") and r["clearing_sequence_governing"]]
    if staged:
        story += [Spacer(1, 12), Paragraph("Opening sequences of arcs followed stage by stage (governing rows)",
                                           _STYLES["Heading2"]),
                  _table(["bus", "scenario / case", "openings in order: time, arcing current at the bus before -> "
                          "after"], staged, widths=[1.1 * inch, 1.4 * inch, 4.5 * inch])]
    story += [Spacer(1, 12), Paragraph("Study notes: labels print the numbers of their flags", _STYLES["Heading2"]),
              _table(["note", "meaning"], [[str(k), text] for k, text in FLAG_NOTES.items()],
                     widths=[0.5 * inch, 6.5 * inch])]
    flagged = [(bus, r.get("flag_notes", ""), r["flags"]) for bus, r in governing.iterrows() if r["flags"]]
    story += [Spacer(1, 12), Paragraph("Flags (governing rows)", _STYLES["Heading2"]),
              _table(["bus", "notes", "flags"], flagged or [["-", "-", "none"]],
                     widths=[1.2 * inch, 0.6 * inch, 5.2 * inch])]
    figure = oneline_figure(site)
    story += [PageBreak(), Paragraph("One-line picture", _STYLES["Heading2"])]
    story += [_figure(figure)] if figure is not None else [_p("Omitted: too many buses to draw legibly.")]
    if tcc_buses is None:
        tcc_buses = list(energy[energy > 0].nlargest(3).index)
    for bus in tcc_buses:
        scenario = governing.loc[bus, "scenario"]
        story += [PageBreak(), Paragraph(f"Time-current plot: {escape(bus)} ({escape(scenario)})", _STYLES["Heading2"]),
                  _figure(tcc_figure(site, bus, scenario), width_in=6.0)]
    story += [PageBreak(), Paragraph("Cautions", _STYLES["Heading2"]), Paragraph(escape(CAUTION), _BODY)]

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
                      topMargin=0.6 * inch, bottomMargin=0.8 * inch, title=f"Arc-flash study - {f.name}",
                      ).build(flatten(story), onFirstPage=footer, onLaterPages=footer, canvasmaker=_PageCountCanvas)


def _watermark(canvas):
    """A light diagonal DRAFT across the page (the results are a draft while the model is not verified)."""
    canvas.saveState()
    canvas.setFillColor(colors.Color(0.55, 0.55, 0.55, alpha=0.18))
    canvas.setFont("Helvetica-Bold", 96)
    canvas.translate(letter[0] / 2, letter[1] / 2)
    canvas.rotate(40)
    canvas.drawCentredString(0, -30, "DRAFT")
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
