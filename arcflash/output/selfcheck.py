"""The model's self-check worksheet: IEEE 1584-2018 worked through for the Annex D examples and one case per
configuration and voltage class, every intermediate value and coefficient row listed, as text and PDF.

An engineer compares it with the printed standard and records the outcome (:mod:`arcflash.verification`).
"""

from __future__ import annotations

import io
from dataclasses import dataclass

from ..models import ieee1584_tables as tables
from ..models.ieee1584_steps import coefficient_rows, worked_steps
from ..verification import TABLES_TO_VERIFY, table_hashes


@dataclass(frozen=True)
class CheckCase:
    """A case of the worksheet: its inputs, where they come from, and published values to compare."""

    title: str
    inputs_status: str
    voltage_kv: float
    bolted_ka: float
    gap_mm: float
    working_distance_mm: float
    clearing_time_s: float
    reduced_clearing_time_s: float
    config: str
    height_mm: float | None = None
    width_mm: float | None = None
    depth_mm: float | None = None
    published: tuple = ()  # (symbol, value, unit, status)


_FROM_MEMORY = "from memory: not verified against the printed standard"

#: IEEE 1584-2018 Annex D worked examples (inputs and printed values recalled, not verified: every one is
#: marked so on the worksheet). The arcing currents agree with ../shared/reference/ieee1584_2018_checks.csv.
ANNEX_D_CASES = (
    CheckCase("IEEE 1584-2018 Annex D.1 (medium-voltage example)", _FROM_MEMORY, 4.16, 15.0, 104.0, 914.4, 0.197,
              0.223, "VCB", 1143.0, 762.0, 762.0,
              (("Iarc_600", 11.117, "kA", _FROM_MEMORY), ("Iarc_2700", 12.816, "kA", _FROM_MEMORY),
               ("Iarc_14300", 14.116, "kA", _FROM_MEMORY), ("Iarc", 12.979, "kA", _FROM_MEMORY),
               ("CF", 1.284, "-", _FROM_MEMORY))),
    CheckCase("IEEE 1584-2018 Annex D.2 (low-voltage example)", _FROM_MEMORY, 0.48, 45.0, 32.0, 609.6, 0.0613,
              0.0613, "VCB", 508.0, 508.0, 508.0,
              (("Iarc_600", 32.449, "kA", _FROM_MEMORY), ("Iarc", 28.793, "kA", _FROM_MEMORY))),
)

#: One case per configuration and voltage class (our choice of inputs: typical gaps, sizes and distances of
#: Tables 9 and 10, 20 kA, 0.1 s), so that every row of Tables 1-5 and 7-8 is used at least once.
_CLASS_INPUTS = (("up to 600 V", 0.48, 32.0, 609.6, (508.0, 508.0, 508.0)),
                 ("600 V to 2.7 kV", 2.4, 104.0, 914.4, (914.4, 914.4, 914.4)),
                 ("above 2.7 kV", 13.8, 152.0, 914.4, (1143.0, 762.0, 762.0)))


def class_cases():
    """The per-configuration, per-voltage-class cases of the worksheet."""
    cases = []
    for config in tables.CONFIGURATIONS:
        for words, kv, gap, distance, (h, w, d) in _CLASS_INPUTS:
            enclosed = config in tables.ENCLOSED_CONFIGURATIONS
            cases.append(CheckCase(f"{config}, {words}: {kv:g} kV", "our choice (illustrative)", kv, 20.0, gap,
                                   distance, 0.1, 0.1, config, *((h, w, d) if enclosed else (None, None, None))))
    return tuple(cases)


def worksheet_cases():
    """Every case of the worksheet: the Annex D examples first."""
    return ANNEX_D_CASES + class_cases()


def _inputs(case):
    rows = [("Voc", case.voltage_kv, "kV"), ("Ibf", case.bolted_ka, "kA"), ("G", case.gap_mm, "mm"),
            ("D", case.working_distance_mm, "mm"), ("T", case.clearing_time_s * 1000.0, "ms"),
            ("T_min", case.reduced_clearing_time_s * 1000.0, "ms"), ("configuration", case.config, "")]
    if case.height_mm is not None:
        rows += [("height", case.height_mm, "mm"), ("width", case.width_mm, "mm"), ("depth", case.depth_mm, "mm")]
    return rows


def case_steps(case):
    """The worked steps of a case (:func:`arcflash.models.ieee1584_steps.worked_steps`)."""
    return worked_steps(case.voltage_kv, case.bolted_ka, case.gap_mm, case.working_distance_mm,
                        case.clearing_time_s, case.reduced_clearing_time_s, case.config, case.height_mm,
                        case.width_mm, case.depth_mm)


def _value(value):
    return f"{value:.6g}" if isinstance(value, float) else str(value)


def worksheet_text(status_words, cases=None):
    """The worksheet as plain text."""
    cases = worksheet_cases() if cases is None else cases
    out = ["arcflash self-check: IEEE 1584-2018 worked through, for comparison with the printed standard",
           f"Status: {status_words}",
           "Equation numbers: Eq. (1) and Tables 1-5 as printed; the others from memory (docs/method.md).",
           "", "Tables and their SHA-256 in this installation (a recorded verification holds these):"]
    out += [f"  {table:<20} {digest}" for table, digest in table_hashes().items()]
    for case in cases:
        out += ["", "=" * 100, case.title, f"Inputs ({case.inputs_status}): "
                + ", ".join(f"{name} {_value(value)} {unit}".rstrip() for name, value, unit in _inputs(case)), ""]
        out.append(f"  {'symbol':<14}{'value':>14}  {'unit':<6} {'where':<28} what")
        published = {symbol: (value, unit, status) for symbol, value, unit, status in case.published}
        for step in case_steps(case):
            out.append(f"  {step.symbol:<14}{step.value:>14.6g}  {step.unit:<6} {step.where:<28} {step.words}")
            if step.symbol in published:
                value, unit, status = published[step.symbol]
                out.append(f"  {'':<14}{value:>14g}  {unit:<6} {'printed in Annex D':<28} ({status})")
        out += ["", "  Coefficient rows used:"]
        for row in coefficient_rows(case.config, case.voltage_kv):
            values = "  ".join(f"{name}={value:g}" for name, value in zip(row.names, row.values))
            out.append(f"  {row.table} [{row.row}]: {values}")
    out += ["", "Record the outcome per table with:",
            "  arcflash selfcheck record SITE --by NAME " + " ".join(f"--result '{t}=pass'" for t in
                                                                     list(TABLES_TO_VERIFY)[:2]) + " ...",
            f"  (every table: {', '.join(TABLES_TO_VERIFY)})"]
    return "\n".join(out) + "\n"


def worksheet_pdf_bytes(status_words, cases=None):
    """The worksheet as a PDF (reportlab), one section per case."""
    from reportlab.lib import colors
    from reportlab.lib.pagesizes import letter
    from reportlab.lib.styles import getSampleStyleSheet
    from reportlab.lib.units import inch
    from reportlab.platypus import Paragraph, SimpleDocTemplate, Spacer, Table, TableStyle
    from xml.sax.saxutils import escape

    cases = worksheet_cases() if cases is None else cases
    styles = getSampleStyleSheet()
    small = styles["BodyText"].clone("selfcheck-small", fontSize=7, leading=8.5)
    style = TableStyle([("FONTSIZE", (0, 0), (-1, -1), 7), ("LEADING", (0, 0), (-1, -1), 8.5),
                        ("GRID", (0, 0), (-1, -1), 0.25, colors.HexColor("#9aa5b1")),
                        ("BACKGROUND", (0, 0), (-1, 0), colors.HexColor("#dde3ea")),
                        ("TOPPADDING", (0, 0), (-1, -1), 1), ("BOTTOMPADDING", (0, 0), (-1, -1), 1)])
    story = [Paragraph("IEEE 1584-2018 self-check worksheet", styles["Title"]),
             Paragraph(escape(f"Status: {status_words}"), styles["BodyText"]),
             Paragraph("Every intermediate value in the order of the standard's equations, with the coefficient "
                       "rows used, for comparison with the printed standard. Equation numbers: Eq. (1) and "
                       "Tables 1-5 as printed; the others from memory.", small), Spacer(1, 6)]
    story.append(Table([["table", "SHA-256 in this installation"]] + [[t, d] for t, d in table_hashes().items()],
                       style=style))
    for case in cases:
        story += [Spacer(1, 10), Paragraph(escape(case.title), styles["Heading3"]),
                  Paragraph(escape(f"Inputs ({case.inputs_status}): " + ", ".join(
                      f"{n} {_value(v)} {u}".rstrip() for n, v, u in _inputs(case))), small)]
        published = {symbol: (value, status) for symbol, value, _, status in case.published}
        rows = [["symbol", "value", "unit", "where", "what", "printed (Annex D)"]]
        for step in case_steps(case):
            printed = published.get(step.symbol)
            rows.append([step.symbol, f"{step.value:.6g}", step.unit, step.where, step.words,
                         "" if printed is None else f"{printed[0]:g} ({printed[1]})"])
        story.append(Table(rows, colWidths=[0.8 * inch, 0.8 * inch, 0.45 * inch, 1.3 * inch, 2.2 * inch,
                                            1.75 * inch], style=style, repeatRows=1))
        coefficient = [[row.table, row.row, "  ".join(f"{n}={v:g}" for n, v in zip(row.names, row.values))]
                       for row in coefficient_rows(case.config, case.voltage_kv)]
        story += [Spacer(1, 4), Table([["table", "row", "coefficients"]] + [
            [t, r, Paragraph(escape(c), small)] for t, r, c in coefficient],
            colWidths=[0.6 * inch, 1.0 * inch, 5.7 * inch], style=style, repeatRows=1)]
    buffer = io.BytesIO()

    def footer(canvas, doc):
        canvas.setFont("Helvetica", 7)
        canvas.drawString(0.6 * inch, 0.4 * inch, f"{status_words}  |  page {doc.page}")

    SimpleDocTemplate(buffer, pagesize=letter, leftMargin=0.6 * inch, rightMargin=0.6 * inch,
                      topMargin=0.6 * inch, bottomMargin=0.7 * inch, title="arcflash self-check").build(
        story, onFirstPage=footer, onLaterPages=footer)
    return buffer.getvalue()
