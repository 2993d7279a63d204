"""Job briefing sheet for one piece of equipment (PDF): the label's signal word, the hazard, the boundaries
to scale from the exposed parts at the front, PPE, the clearing device, and the energized-work items.

Above 40 cal/cm² no PPE category applies: the sheet says that energized work needs the equipment
de-energized or an engineered plan under the site's program, and shows no permit blanks.
"""

from __future__ import annotations

import math
from xml.sax.saxutils import escape

import numpy as np
from reportlab.lib.pagesizes import letter
from reportlab.lib.styles import getSampleStyleSheet
from reportlab.lib.units import inch
from reportlab.platypus import Flowable, Paragraph, SimpleDocTemplate, Spacer

from ..models.nfpa70e import ppe_category_words
from ..verification import status
from .cautions import limits_with_status
from .label_pdf import _signal
from .labels import DANGER_STATEMENT, signal_word
from .report import _table, flatten
from .report_tables import both_units, device_settings_words
from .text import energy_text

_STYLES = getSampleStyleSheet()
_BODY = _STYLES["BodyText"].clone("brief", fontSize=8.5, leading=10.5)
_STRONG = _STYLES["BodyText"].clone("brief-strong", fontSize=10, leading=13, fontName="Helvetica-Bold")

#: What an energized electrical work permit holds, NFPA 70E 130.2(B)(2) (2021; list from memory),
#: in our own words, as blanks to fill by hand.
PERMIT_ITEMS = (
    "Circuit and equipment to be worked on, and their location",
    "Work to be done",
    "Why the work cannot be done de-energized",
    "Safe work practices to be used",
    "Shock risk assessment: voltage, limited and restricted approach boundaries, shock PPE",
    "Arc-flash risk assessment: incident energy or PPE category, arc-flash PPE, arc-flash boundary",
    "How unqualified persons will be kept out of the work area",
    "Job briefing held, including the hazards of this job (who, when)",
    "Approval of the energized work (names, signatures, date)",
)

#: Said instead of the permit blanks above 40 cal/cm² (our wording).
NO_PERMIT_ABOVE_40 = ("No energized work under a PPE category: above 40 cal/cm2 no PPE category applies. De-energize "
                      "the equipment and verify the absence of voltage, or work only under an engineered plan of the "
                      "site's electrical safety program. This sheet offers no permit to fill in.")

#: Assumed plan size of equipment whose enclosure is not known (a common section) [mm].
_UNKNOWN_SIZE_MM = 600.0


class SignalBanner(Flowable):
    """The signal-word panel of the equipment's label, across the sheet."""

    def __init__(self, word, width_in=7.3, height_in=0.45):
        super().__init__()
        self.word, self.width, self.height = word, width_in * inch, height_in * inch

    def wrap(self, available_width, available_height):
        return self.width, self.height

    def draw(self):
        _signal(self.canv, self.word, 0, self.height, self.width, self.height, 22)


class BoundaryPlan(Flowable):
    """Plan view, to scale: the equipment, its front (where the exposed energized parts are), and each
    boundary as the set of points at that distance in front of the front face (a line parallel to the face
    and quarter circles around its ends). ``front`` holds, after drawing, the page position of the middle of
    the front face and the scale (points per millimetre), for checking the drawing."""

    STYLES = (("arc-flash boundary", "arc_flash_boundary_governing_mm", 1.8, ()),
              ("limited approach (fixed parts)", "limited_approach_fixed_mm", 1.0, (5, 3)),
              ("restricted approach", "restricted_approach_mm", 1.0, (1.5, 2)))

    def __init__(self, row, width_in=7.0, height_in=3.6):
        super().__init__()
        self.row, self.width, self.height = row, width_in * inch, height_in * inch
        self.front = None

    def wrap(self, available_width, available_height):
        return self.width, self.height

    def _mm(self, name, default=float("nan")):
        value = self.row.get(name, default)
        return float(value) if value is not None and np.isfinite(value) else default

    def draw(self):
        canvas = self.canv
        width_mm = self._mm("width_mm", _UNKNOWN_SIZE_MM)
        depth_mm = self._mm("depth_mm", _UNKNOWN_SIZE_MM)
        rings = [(label, self._mm(column), line, dash) for label, column, line, dash in self.STYLES]
        reach = max([r for _, r, _, _ in rings if np.isfinite(r)] + [1000.0])
        plot_w, plot_h = self.width * 0.62, self.height - 30.0
        scale = min(plot_w / (width_mm + 2 * reach), plot_h / (depth_mm + reach))  # points per millimetre
        cx, front_y = plot_w / 2.0, self.height - 10.0 - depth_mm * scale
        half = width_mm * scale / 2.0
        canvas.saveState()
        canvas.setFillGray(0.55)
        canvas.rect(cx - half, front_y, 2 * half, depth_mm * scale, stroke=0, fill=1)
        canvas.setStrokeGray(0.0)
        canvas.setLineWidth(2.2)
        canvas.line(cx - half, front_y, cx + half, front_y)  # the front face
        canvas.setFont("Helvetica", 7)
        canvas.setFillGray(1.0)
        canvas.drawCentredString(cx, front_y + depth_mm * scale / 2.0 - 2.5, "equipment")
        canvas.setFillGray(0.0)
        for label, radius_mm, line, dash in rings:
            if not np.isfinite(radius_mm):
                continue
            r = radius_mm * scale
            canvas.setLineWidth(line)
            canvas.setDash(list(dash), 0) if dash else canvas.setDash()
            path = canvas.beginPath()
            path.moveTo(cx - half - r, front_y)
            path.arcTo(cx - half - r, front_y - r, cx - half + r, front_y + r, startAng=180, extent=90)
            path.lineTo(cx + half, front_y - r)
            path.arcTo(cx + half - r, front_y - r, cx + half + r, front_y + r, startAng=270, extent=90)
            canvas.drawPath(path, stroke=1, fill=0)
        canvas.setDash()
        canvas.setLineWidth(1.0)
        bar = 1000.0 * scale  # a 1 m scale bar
        canvas.line(8, 10, 8 + bar, 10)
        canvas.line(8, 7, 8, 13)
        canvas.line(8 + bar, 7, 8 + bar, 13)
        canvas.drawString(12 + bar, 7.5, "1 m")
        key_x, key_y = plot_w + 16.0, self.height - 24.0
        canvas.setFont("Helvetica-Bold", 8)
        canvas.drawString(key_x, key_y + 10, "Plan view, to scale; distances from the front face")
        canvas.setFont("Helvetica", 7.5)
        for label, radius_mm, line, dash in rings:
            canvas.setLineWidth(line)
            canvas.setDash(list(dash), 0) if dash else canvas.setDash()
            canvas.line(key_x, key_y + 2.5, key_x + 26, key_y + 2.5)
            canvas.setDash()
            canvas.drawString(key_x + 32, key_y, f"{label}: {both_units(radius_mm)}")
            key_y -= 13
        canvas.drawString(key_x, key_y - 4, "Thick line: the front face, where the exposed energized")
        canvas.drawString(key_x, key_y - 13, "parts are; the boundaries are measured from it.")
        canvas.restoreState()
        self.front = (*canvas.absolutePosition(cx, front_y), scale)


def write_briefing(site, bus, row, path):
    """Write the job briefing sheet of ``bus`` from its study row (the governing row, or the row of a chosen
    scenario) to ``path``.

    Returns
    -------
    dict
        Where the boundary plan put the middle of the front face on the page (``front_x_pt``,
        ``front_y_pt``, from the page's lower left corner) and its scale (``points_per_mm``).
    """
    f = site.facility
    device = row["device_governing"]
    settings = device_settings_words(site.devices[device]) if device in site.devices else "no protective device found"
    energy = float(row["incident_energy_governing_cal_cm2"])
    word = signal_word(energy)
    danger = word == "DANGER"
    minimum = row["minimum_arc_rating_cal_cm2"]
    category = ppe_category_words(row["ppe_category"])
    rating = ("none applies" if danger else "none required (below 1.2 cal/cm2)" if int(row["ppe_category"]) == 0
              else f"{minimum:.1f} cal/cm2")
    story = [
        SignalBanner(word), Spacer(1, 6),
        Paragraph(f"Job briefing - {escape(bus)}", _STYLES["Title"]),
        Paragraph(escape(f"{site.buses[bus].description} - {f.name} - study rev {f.study_revision} "
                         f"{f.study_date or ''}"), _BODY),
        Paragraph(escape(f"Scenario: {row['scenario']} "
                         f"({(site.scenario(row['scenario']).description or 'as named').rstrip('.')}); "
                         f"{row['governing_case']} arcing current governs."), _STRONG),
        Spacer(1, 6),
        _table(["nominal voltage", "incident energy at working distance", "arc-flash boundary", "PPE category",
                "minimum arc rating"],
               [[f"{row['nominal_kv'] * 1000:g} V" if row["nominal_kv"] < 1 else f"{row['nominal_kv']:g} kV",
                 "not computed" if not math.isfinite(energy) else
                 f"{energy_text(energy)} cal/cm2 at {both_units(row['working_distance_mm'])}",
                 both_units(row["arc_flash_boundary_governing_mm"]), category, rating]],
               widths=[1.0, 2.0, 1.5, 1.7, 1.1]),
        Spacer(1, 4),
        _table(["governing protective device", "settings", "clearing time"],
               [[str(device), settings, f"{row['clearing_time_governing_s']:.3f} s"]], widths=[1.6, 4.7, 1.0]),
        Spacer(1, 6), BoundaryPlan(row), Spacer(1, 4),
    ]
    if row["flags"]:
        story += [Paragraph(escape(f"Study flags: {row['flags']}"), _BODY)]
    if danger:
        story += [Spacer(1, 6), Paragraph(escape(DANGER_STATEMENT), _STRONG), Paragraph(escape(NO_PERMIT_ABOVE_40),
                                                                                       _BODY)]
    else:
        form = getattr(f, "permit_form", None)
        story += [Paragraph("Energized electrical work permit", _STYLES["Heading3"]),
                  Paragraph(escape(f"Use the site's own permit form: {form}." if form else
                                   "Use the site's own permit form (name it in facility.permit_form). The items "
                                   "below are a reminder of what it covers, not a permit."), _BODY),
                  _table(["item (NFPA 70E 130.2(B)(2), from memory)", "entry"], [[item, ""] for item in PERMIT_ITEMS],
                         widths=[3.0, 4.3])]
    story += [Spacer(1, 6), Paragraph(escape(limits_with_status(status(getattr(site, "path", None)).words)), _BODY)]
    SimpleDocTemplate(str(path), pagesize=letter, leftMargin=0.6 * inch, rightMargin=0.6 * inch,
                      topMargin=0.5 * inch, bottomMargin=0.5 * inch,
                      title=f"Job briefing - {bus}").build(flatten(story))
    plan = next(item for item in story if isinstance(item, BoundaryPlan))
    x, y, scale = plan.front
    return {"front_x_pt": x, "front_y_pt": y, "points_per_mm": scale}
