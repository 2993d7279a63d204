"""The report's page on how sure each number is: the band of incident energy per bus (P50 with P5–P95
whiskers, the plain study's value marked, sorted by P95, the PPE category edges drawn) and the inputs that
drive each band (:mod:`arcflash.study.uncertainty`)."""

from __future__ import annotations

import math
from xml.sax.saxutils import escape

import numpy as np
from reportlab.lib.units import inch
from reportlab.platypus import Flowable

from ..models.nfpa70e import BOUNDARY_ENERGY_CAL_CM2, PPE_CATEGORY_ARC_RATING_CAL_CM2

#: Energies at which the PPE category changes (NFPA 70E Table 130.7(C)(15)(c)), drawn on the chart [cal/cm²].
CATEGORY_EDGES_CAL_CM2 = (BOUNDARY_ENERGY_CAL_CM2, *PPE_CATEGORY_ARC_RATING_CAL_CM2.values())
#: Buses drawn per chart (one chart per page) and at most in the report (all are in uncertainty.csv).
ROWS_PER_CHART, MOST_BUSES = 55, 220
_ROW_PT = 10.5


class BandChart(Flowable):
    """Horizontal bands, one row per bus: the P5–P95 whisker, a dot at P50, a tick at the plain study's
    value; a logarithmic energy axis with the category edges."""

    def __init__(self, rows, top_cal_cm2, width_in=7.3):
        super().__init__()
        self.rows, self.top = rows, top_cal_cm2
        self.width, self.height = width_in * inch, 40.0 + _ROW_PT * len(rows)

    def wrap(self, available_width, available_height):
        return self.width, self.height

    def _x(self, energy):
        low, high = math.log10(0.1), math.log10(self.top)
        left, right = 80.0, self.width - 10.0
        return left + (math.log10(min(max(energy, 0.1), self.top)) - low) / (high - low) * (right - left)

    def draw(self):
        canvas = self.canv
        bottom, top = 24.0, self.height - 6.0
        canvas.setFont("Helvetica", 6.5)
        for edge in CATEGORY_EDGES_CAL_CM2:
            x = self._x(edge)
            canvas.setStrokeGray(0.6)
            canvas.setDash([2, 2], 0)
            canvas.line(x, bottom, x, top)
            canvas.setDash()
            canvas.setFillGray(0.3)
            canvas.drawCentredString(x, bottom - 9, f"{edge:g}")
        canvas.setFillGray(0.0)
        canvas.drawString(80.0, bottom - 19, "incident energy [cal/cm2], logarithmic; dashed: the PPE category edges "
                                             "(NFPA 70E); bar P5-P95, dot P50, tick the plain study")
        y = top - _ROW_PT / 2
        for bus, p5, p50, p95, plain in self.rows:
            canvas.setFillGray(0.0)
            canvas.setFont("Helvetica", 6.5)
            canvas.drawRightString(74.0, y - 2.2, bus[:18])
            if np.isfinite(p5) and np.isfinite(p95):
                canvas.setStrokeGray(0.0)
                canvas.setLineWidth(1.2)
                canvas.line(self._x(p5), y, self._x(p95), y)
                canvas.line(self._x(p5), y - 2.5, self._x(p5), y + 2.5)
                canvas.line(self._x(p95), y - 2.5, self._x(p95), y + 2.5)
                canvas.circle(self._x(p50), y, 2.0, stroke=0, fill=1)
            if np.isfinite(plain):
                canvas.setStrokeGray(0.45)
                canvas.setLineWidth(1.6)
                canvas.line(self._x(plain), y - 4, self._x(plain), y + 4)
            y -= _ROW_PT


def uncertainty_story(result, samples, seed, styles, table):
    """Flowables of the uncertainty pages: what was sampled, the band charts, the drivers table.

    ``table(header, rows, widths)`` is the report's table maker; ``styles`` its (heading, body) styles.
    """
    from reportlab.platypus import PageBreak, Paragraph

    heading, body = styles
    bands = result.bands.sort_values("incident_energy_p95_cal_cm2", ascending=False, na_position="last")
    shown = bands.head(MOST_BUSES)
    finite = shown["incident_energy_max_cal_cm2"].to_numpy(float)
    top = max(60.0, float(np.nanmax(finite)) * 1.2 if np.isfinite(finite).any() else 60.0)
    names = ", ".join(i.name for i in result.inputs[:12]) + (" ..." if len(result.inputs) > 12 else "")
    story = [PageBreak(), Paragraph("How sure is each number: uncertainty of the incident energy", heading),
             Paragraph(escape(f"{samples} Latin-hypercube samples (seed {seed}) of {len(result.inputs)} inputs within "
                              f"their tolerances ({names}); each sample run through the whole study. Bands of the "
                              f"{len(shown)} buses with the highest P95 (all buses: uncertainty.csv). The share "
                              "of samples above the plain study's category edge is in the table below."), body)]
    rows = [(bus, r.incident_energy_p5_cal_cm2, r.incident_energy_p50_cal_cm2, r.incident_energy_p95_cal_cm2,
             r.incident_energy_plain_cal_cm2) for bus, r in shown.iterrows()]
    for lo in range(0, len(rows), ROWS_PER_CHART):
        story.append(BandChart(rows[lo:lo + ROWS_PER_CHART], top))
    drivers = result.drivers[result.drivers["bus"].isin(shown.index)]
    by_bus = {bus: "; ".join(f"{i} ({rho:+.2f})" for i, rho in zip(part["input"], part["spearman_rho"]))
              for bus, part in drivers.groupby("bus", sort=False)}
    table_rows = [[bus, f"{r.incident_energy_plain_cal_cm2:.2f}", f"{r.incident_energy_p5_cal_cm2:.2f} / "
                   f"{r.incident_energy_p50_cal_cm2:.2f} / {r.incident_energy_p95_cal_cm2:.2f}",
                   f"{r.probability_above_category_edge:.0%} above {r.category_edge_cal_cm2:g}",
                   by_bus.get(bus, "-")] for bus, r in shown.iterrows()]
    story += [PageBreak(), Paragraph("Bands and the inputs that drive them (Spearman rank correlation)", heading),
              table(["bus", "plain study [cal/cm2]", "P5 / P50 / P95 [cal/cm2]", "samples above the category edge",
                     "top drivers"], table_rows, [0.9, 0.8, 1.4, 1.2, 3.0])]
    return story
