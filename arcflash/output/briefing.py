"""Job briefing sheet for one piece of equipment (PDF): hazard, boundaries to scale, PPE, device, permit blanks."""

from __future__ import annotations

from xml.sax.saxutils import escape

import numpy as np
from reportlab.lib.pagesizes import letter
from reportlab.lib.styles import getSampleStyleSheet
from reportlab.lib.units import inch
from reportlab.platypus import Paragraph, SimpleDocTemplate, Spacer

from ..verification import status
from .cautions import limits_with_status
from .text import energy_text
from .report import _figure, _ft_in, _ppe, _settings, _table, flatten

_STYLES = getSampleStyleSheet()
_BODY = _STYLES["BodyText"].clone("brief", fontSize=8.5, leading=10.5)

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


def _category(category):
    text = _ppe(category)
    return f"PPE category {text}" if text.isdigit() else text


def plan_figure(row):
    """Plan view of the boundaries around the equipment, drawn to scale (metres)."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    from matplotlib.patches import Circle, Rectangle

    width_m = (row.get("width_mm") if np.isfinite(row.get("width_mm", np.nan)) else 600.0) / 1000.0
    rings = [("arc-flash boundary", row["arc_flash_boundary_governing_mm"], "tab:red"),
             ("limited approach (fixed parts)", row["limited_approach_fixed_mm"], "tab:orange"),
             ("restricted approach", row["restricted_approach_mm"], "tab:purple")]
    reach = max([r[1] for r in rings if np.isfinite(r[1])] + [1000.0]) / 1000.0 + width_m
    figure, axes = plt.subplots(figsize=(6.0, 4.2))
    axes.add_patch(Rectangle((-width_m / 2, -0.3), width_m, 0.6, color="0.3"))
    axes.text(0, 0, "equipment", color="white", ha="center", va="center", fontsize=7)
    for label, mm, colour in rings:
        if np.isfinite(mm):
            radius = mm / 1000.0
            axes.add_patch(Circle((0, 0), radius + width_m / 2, fill=False, color=colour, linewidth=1.5,
                                  label=f"{label}: {_ft_in(mm)}"))
    axes.axhline(-0.3, color="0.5", linewidth=0.8)
    axes.text(-reach * 0.95, -0.42, "wall / line-up face", fontsize=6, color="0.4")
    axes.plot([reach * 0.45, reach * 0.45 + 1.0], [-reach * 0.85] * 2, color="black")
    axes.text(reach * 0.45 + 0.5, -reach * 0.8, "1 m", ha="center", fontsize=7)
    axes.set_xlim(-reach, reach)
    axes.set_ylim(-reach, reach)
    axes.set_aspect("equal")
    axes.set_axis_off()
    axes.legend(fontsize=7, loc="upper right")
    axes.set_title("Boundaries around the equipment, plan view, to scale (distances from its front)", fontsize=8)
    figure.tight_layout()
    return figure


def write_briefing(site, bus, row, path):
    """Write the job briefing sheet of ``bus`` (its governing study row) to ``path``."""
    f = site.facility
    device = row["device_governing"]
    settings = _settings(site.devices[device]) if device in site.devices else "no protective device found"
    energy = row["incident_energy_governing_cal_cm2"]
    story = [
        Paragraph(f"Job briefing - {escape(bus)}", _STYLES["Title"]),
        Paragraph(escape(f"{site.buses[bus].description} - {f.name} - study rev {f.study_revision} "
                         f"{f.study_date or ''}"), _BODY),
        Spacer(1, 6),
        _table(["nominal voltage", "scenario / case", "incident energy", "arc-flash boundary", "PPE"],
               [[f"{row['nominal_kv'] * 1000:g} V" if row["nominal_kv"] < 1 else f"{row['nominal_kv']:g} kV",
                 f"{row['scenario']} / {row['governing_case']}",
                 "-" if not np.isfinite(energy) else f"{energy_text(energy)} cal/cm2 at {row['working_distance_mm']:g} mm",
                 _ft_in(row["arc_flash_boundary_governing_mm"]),
                 f"{_category(row['ppe_category'])}; minimum arc rating {row['minimum_arc_rating_cal_cm2']:.1f} cal/cm2"]]),
        Spacer(1, 4),
        _table(["governing protective device", "settings", "clearing time"],
               [[str(device), settings, f"{row['clearing_time_governing_s']:.3f} s"]]),
        Spacer(1, 4),
        _figure(plan_figure(row), width_in=5.0),
    ]
    if row["flags"]:
        story += [Paragraph(escape(f"Study flags: {row['flags']}"), _BODY)]
    story += [Paragraph("Energized electrical work permit - items to fill in by hand", _STYLES["Heading3"]),
              _table(["item", "entry"], [[item, ""] for item in PERMIT_ITEMS],
                     widths=[3.0, 4.2]),
              Spacer(1, 6), Paragraph(escape(limits_with_status(status(getattr(site, "path", None)).words)),
                                      _BODY)]
    SimpleDocTemplate(str(path), pagesize=letter, leftMargin=0.6 * inch, rightMargin=0.6 * inch,
                      topMargin=0.5 * inch, bottomMargin=0.5 * inch, title=f"Job briefing - {bus}").build(flatten(story))
