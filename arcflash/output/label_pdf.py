"""Drawing labels on PDF pages (reportlab canvas), from :class:`LabelContent` and a layout."""

from __future__ import annotations

from reportlab.graphics import renderPDF
from reportlab.graphics.barcode.qr import QrCodeWidget
from reportlab.graphics.shapes import Drawing
from reportlab.lib.colors import HexColor, black, white
from reportlab.lib.utils import simpleSplit
from reportlab.pdfgen.canvas import Canvas

#: ANSI Z535.4 signal-word panels: DANGER white on safety red, WARNING black on safety orange
#: (sRGB approximations of the Z535.1 safety colours, common practice).
SIGNAL_PANELS = {"DANGER": (HexColor("#C8102E"), white), "WARNING": (HexColor("#FF7900"), black)}


def _wrap(canvas, text, x, y, width, size, bold=False, max_lines=6):
    font = "Helvetica-Bold" if bold else "Helvetica"
    canvas.setFont(font, size)
    lines = simpleSplit(text, font, size, width)[:max_lines]
    for line in lines:
        y -= size * 1.15
        canvas.drawString(x, y, line)
    return y


def _signal(canvas, word, x, y, w, h, size):
    fill, ink = SIGNAL_PANELS[word]
    canvas.setFillColor(fill)
    canvas.rect(x, y - h, w, h, stroke=0, fill=1)
    # Safety alert symbol: a triangle with an exclamation mark, left of the word.
    t = h * 0.62
    tx, ty = x + (w - t - size * 0.62 * len(word)) / 2, y - h / 2 - t / 2
    canvas.setFillColor(ink)
    path = canvas.beginPath()
    path.moveTo(tx, ty)
    path.lineTo(tx + t, ty)
    path.lineTo(tx + t / 2, ty + t)
    path.close()
    canvas.drawPath(path, stroke=0, fill=1)
    canvas.setFillColor(fill)
    canvas.setFont("Helvetica-Bold", t * 0.7)
    canvas.drawCentredString(tx + t / 2, ty + t * 0.12, "!")
    canvas.setFillColor(ink)
    canvas.setFont("Helvetica-Bold", size)
    canvas.drawString(tx + t * 1.25, y - h / 2 - size * 0.35, word)
    canvas.setFillColor(black)


def _data_rows(c):
    shown = "Incident energy at working distance" if c.shows == "energy" else "PPE category"
    rows = [("Nominal voltage", c.nominal_voltage), ("Arc-flash boundary", c.arc_flash_boundary),
            (shown, c.energy_or_category), ("Minimum arc rating of clothing", c.minimum_arc_rating)]
    if c.site_ppe:
        rows.append(("Site PPE", c.site_ppe))
    rows += [("Limited approach (shock)", c.limited_approach), ("Restricted approach (shock)", c.restricted_approach)]
    return rows


def draw_label(canvas, content, x, y, w, h, layout):
    """Draw one label with its top-left corner at (x, y), size w × h points."""
    pad = 4.0
    canvas.setLineWidth(1.2)
    if content.flags:
        canvas.setDash(4, 3)  # a flagged label does not look like a normal one
    canvas.rect(x, y - h, w, h, stroke=1, fill=0)
    canvas.setDash()
    top = y
    for block in layout.blocks:
        bh, size, kind = h * float(block["height"]), float(block["size"]), block["kind"]
        inner_w = w - 2 * pad
        if kind == "signal":
            _signal(canvas, content.signal_word, x, top, w, bh, size)
        elif kind == "hazard":
            text = f"CHECK BEFORE USE - study flags: {content.flags}" if content.flags else content.hazard
            _wrap(canvas, text, x + pad, top - 1, inner_w, size if not content.flags else size * 0.85, bold=True,
                  max_lines=int(bh // (size * 1.0)) or 1)
        elif kind == "data":
            yy = top - 2
            for label, value in _data_rows(content):
                canvas.setFont("Helvetica", size * 0.85)
                canvas.drawString(x + pad, yy - size, label)
                yy = _wrap(canvas, value, x + pad + inner_w * 0.45, yy, inner_w * 0.55, size, bold=True,
                           max_lines=2) - size * 0.25
        elif kind == "identity":
            yy = _wrap(canvas, f"Equipment {content.equipment_id}: {content.description}", x + pad, top - 1,
                       inner_w, size, bold=True, max_lines=2)
            _wrap(canvas, f"Protective device: {content.governing_device}", x + pad, yy, inner_w, size, max_lines=1)
        elif kind == "study":
            _wrap(canvas, f"Study rev {content.study_revision} {content.study_date} - review by {content.review_by}. "
                  "For qualified persons; local codes govern.", x + pad, top - 1, inner_w, size, max_lines=2)
        elif kind == "qr":
            side = bh - 2
            widget = QrCodeWidget(content.qr_payload)
            bx0, by0, bx1, by1 = widget.getBounds()
            drawing = Drawing(side, side, transform=[side / (bx1 - bx0), 0, 0, side / (by1 - by0), 0, 0])
            drawing.add(widget)
            renderPDF.draw(drawing, canvas, x + pad, top - bh + 1)
            _wrap(canvas, f"Label {content.content_hash}", x + pad + side + 4, top - 2, inner_w - side - 4, size,
                  max_lines=2)
        top -= bh


def write_labels_pdf(contents, layout, path):
    """Draw every label on pages of ``layout`` (one or several per page) into ``path``."""
    canvas = Canvas(str(path), pagesize=(layout.page_width, layout.page_height))
    canvas.setTitle("arcflash equipment labels")
    cell_w = (layout.page_width - 2 * layout.margin - (layout.across - 1) * layout.gutter) / layout.across
    cell_h = (layout.page_height - 2 * layout.margin - (layout.down - 1) * layout.gutter) / layout.down
    per_page = layout.across * layout.down
    for number, content in enumerate(contents):
        slot = number % per_page
        if number and slot == 0:
            canvas.showPage()
        col, row = slot % layout.across, slot // layout.across
        x = layout.margin + col * (cell_w + layout.gutter)
        y = layout.page_height - layout.margin - row * (cell_h + layout.gutter)
        draw_label(canvas, content, x, y, cell_w, cell_h, layout)
    canvas.save()
