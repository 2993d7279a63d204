"""Drawing labels on PDF pages (reportlab canvas), from :class:`LabelContent` and a layout.

Text is never clipped: each text block is laid out (wrapped to its width) at the layout's sizes; when the
blocks do not fit the label's height, every size is scaled down together, but never below its minimum
(:data:`MIN_TEXT_PT`, and the layout's ``key_min`` for the key values). A label that still does not fit is
refused (:class:`LabelFitError`, naming the equipment and the field), never printed cut off. Space left
over is shared between the blocks. Every string drawn is recorded (:class:`Placed`) so that tests can
check it lies inside its block.
"""

from __future__ import annotations

import datetime as dt
import functools
import io
import itertools
import operator
from dataclasses import dataclass
from pathlib import Path
from typing import NamedTuple

import numpy as np
from reportlab.lib.colors import HexColor, black, white
from reportlab.pdfbase.pdfmetrics import stringWidth
from reportlab.pdfgen.canvas import Canvas

from .pdf_lite import LiteCanvas, _string
from .qr import qr_image_hex, qr_matrix
from .text_wrap import wrap as _wrap

#: ANSI Z535.4 signal-word panels: DANGER white on safety red, WARNING black on safety orange
#: (sRGB approximations of the Z535.1 safety colours, common practice).
SIGNAL_PANELS = {"DANGER": (HexColor("#C8102E"), white), "WARNING": (HexColor("#FF7900"), black)}

#: Smallest text on a label [pt at print size]: 7 pt is about 2.5 mm capital height, read at arm's length
#: (common practice for equipment labels; our choice).
MIN_TEXT_PT = 7.0

#: Smallest size of the key values (voltage, boundary, energy or category) unless a layout says otherwise
#: [pt]; the 4 x 6 in and 100 x 150 mm layouts ask 10 pt (``key_min``).
MIN_KEY_PT = 8.0

#: The fixed marker of a label whose study result is flagged; the report explains the numbered note.
FLAG_MARKER = "STUDY NOTES {note}: this result is flagged - see these notes in the study report."

_LEADING = 1.18
_BLOCK_GAP = 2.0
_PAD = 4.0
_REGULAR, _BOLD = "Helvetica", "Helvetica-Bold"


class LabelFitError(ValueError):
    """A label's text does not fit its layout at the smallest legible size."""


@dataclass(frozen=True)
class Placed:
    """One string drawn: its block, the field it shows, text, font, size, baseline start and the block's box
    (x0, y0, x1, y1)."""

    block: str
    field: str
    text: str
    font: str
    size: float
    x: float
    y: float
    box: tuple


class _Piece(NamedTuple):
    """A text to wrap in a column: field name (for errors), text, font, size, column start and width (shares).
    A named tuple: pieces are keys of the remembered line breaks, and a tuple hashes quickly."""

    field: str
    text: str
    bold: bool
    size: float
    minimum: float
    column: float = 0.0
    width: float = 1.0
    row: int = 0


_ROW = operator.attrgetter("row")


def _issued_text(issued_on):
    return (issued_on or dt.date.today()).isoformat()


#: The rows of the data block: field, its heading on the label, whether it is a key value.
_DATA_ROWS = (("nominal_voltage", "Nominal voltage", True), ("arc_flash_boundary", "Arc-flash boundary", True),
              ("energy_or_category", None, True), ("minimum_arc_rating", "Minimum arc rating of clothing", False),
              ("site_ppe", "Site PPE", False), ("limited_approach", "Limited approach (shock)", False),
              ("restricted_approach", "Restricted approach (shock)", False))


@functools.lru_cache(maxsize=64)
def _data_labels(size, energy, site_ppe):
    """The data block's headings as pieces, and (field, key value?, row) of each row: the same on every label
    of a layout that shows the energy (or the category) and has (or has not) a site PPE row."""
    headings, rows = [], []
    for field, heading, is_key in _DATA_ROWS:
        if field == "site_ppe" and not site_ppe:
            continue
        if heading is None:
            heading = "Incident energy at working distance" if energy else "PPE category"
        headings.append(_Piece(field, heading, False, size, MIN_TEXT_PT, 0.0, 0.36, len(rows)))
        rows.append((field, is_key, len(rows)))
    return tuple(headings), tuple(rows)


def _pieces(kind, content, block, key_min, issued_on):
    """The text pieces of a block at the layout's sizes (before any scaling)."""
    size = float(block["size"])
    if kind == "hazard":
        return [_Piece("hazard", content.hazard, True, size, MIN_TEXT_PT)]
    if kind == "data":
        key = float(block.get("key_size", size))
        energy = content.shows == "energy" or content.signal_word == "DANGER"
        pieces = []
        for label, (field, is_key, number) in zip(*_data_labels(size, energy, bool(content.site_ppe))):
            pieces.append(label)
            pieces.append(_Piece(field, getattr(content, field), True, key if is_key else size,
                                 key_min if is_key else MIN_TEXT_PT, 0.38, 0.62, number))
        return pieces
    if kind == "identity":
        pieces = [_Piece("equipment_id", f"Equipment {content.equipment_id}: {content.description}".rstrip(": "),
                         True, size, MIN_TEXT_PT, row=0),
                  _Piece("governing_device", f"Arc cleared: {content.governing_device}", False, size, MIN_TEXT_PT,
                         row=1)]
        if content.flags:
            pieces.append(_Piece("flags", FLAG_MARKER.format(note=content.study_note or "-"), True, size,
                                 MIN_TEXT_PT, row=2))
        return pieces
    if kind == "study":
        status = f"{content.model_status}. " if content.model_status else ""
        basis = f"; {content.energy_basis}" if content.energy_basis else ""
        text = (f"Study rev {content.study_revision} of {content.study_date or 'undated'}{basis}; label issued "
                f"{_issued_text(issued_on)}; review by {content.review_by}. {status}For qualified persons; local "
                "codes and licensed engineering practice govern.")
        return [_Piece("study", text, False, size, MIN_TEXT_PT)]
    if kind == "qr":
        return [_Piece("qr", f"Label {content.content_hash}", False, size, min(size, MIN_TEXT_PT))]
    raise ValueError(f"layout block kind: unknown {kind!r}")


@functools.lru_cache(maxsize=32768)
def _lines(piece, scale, width):
    """(size, lines) of a piece at ``scale``; None when the size would fall below its minimum. Remembered:
    the lines found while fitting a label are the lines drawn."""
    size = piece.size * scale
    if size < piece.minimum - 1e-9:
        return None
    font = _BOLD if piece.bold else _REGULAR
    return size, _wrap(piece.text, font, size, width * piece.width - (2.0 if piece.column else 0.0))


def _block_height(pieces, scale, width, laid):
    """Height of a block's pieces laid out at ``scale`` (rows side by side, columns stacked), or None; each
    piece's (size, lines) is put in ``laid``."""
    rows = {}
    for piece in pieces:
        got = _lines(piece, scale, width)
        if got is None:
            return None
        laid[piece] = got
        height = len(got[1]) * got[0] * _LEADING
        if height > rows.get(piece.row, -1.0):
            rows[piece.row] = height
    return sum(rows.values()) + _BLOCK_GAP * max(0, len(rows) - 1)


def _fit_scale(blocks, width, available):
    """(scale, block heights, lines of each piece) at the largest scale, at most 1, at which the text blocks
    fit ``available`` points (to 1 %), or (None, None, None).

    Scale 1 (the layout's sizes) is tried first; otherwise a bisection between the smallest scale the
    minimum sizes allow and 1.
    """
    def heights_at(scale):
        laid = {}
        heights = [_block_height(pieces, scale, width, laid) for _, pieces, _ in blocks]
        if None in heights:
            return None
        return (heights, laid) if sum(heights) + _BLOCK_GAP * len(blocks) <= available else False

    best = heights_at(1.0)
    if best:
        return (1.0,) + best
    pieces = [piece for _, block, _ in blocks for piece in block]
    low = max(piece.minimum / piece.size for piece in pieces)  # below this a size falls under its minimum
    fits_low = heights_at(low) if low <= 1.0 else None
    if not fits_low:
        return None, None, None
    high, best = 1.0, (low,) + fits_low
    while high - low > 0.01:
        middle = (low + high) / 2.0
        found = heights_at(middle)
        if found:
            low, best = middle, (middle,) + found
        else:
            high = middle
    return best


def _too_long(content, blocks, width):
    """(field, block) that takes the most lines at the smallest sizes: what to name when a label does not fit."""
    worst = None
    for kind, pieces, _ in blocks:
        for piece in pieces:
            font = _BOLD if piece.bold else _REGULAR
            lines = len(_wrap(piece.text, font, piece.minimum, width * piece.width))
            if worst is None or lines > worst[0]:
                worst = (lines, piece.field, kind)
    return worst[1], worst[2]


def _in_rows(pieces):
    """A block's pieces in the order drawn: row by row, in their order within a row."""
    return sorted(pieces, key=_ROW)


def _draw_pieces(canvas, pieces, scale, x, top, width, placed, kind, box, laid=None):
    """Draw a block's pieces; ``laid`` holds their (size, lines) from the label's plan when known."""
    y_row = top
    for _, in_row in itertools.groupby(_in_rows(pieces), key=_ROW):
        lowest = y_row
        for piece in in_row:
            size, lines = laid[piece] if laid is not None else _lines(piece, scale, width)
            font = _BOLD if piece.bold else _REGULAR
            canvas.setFont(font, size)
            y = y_row
            for line in lines:
                y -= size * _LEADING
                px = x + width * piece.column
                canvas.drawString(px, y + size * (_LEADING - 1.0), line)
                if placed is not None:
                    placed.append(Placed(kind, piece.field, line, font, size, px, y + size * (_LEADING - 1.0), box))
            lowest = min(lowest, y)
        y_row = lowest - _BLOCK_GAP


def _signal(canvas, word, x, y, w, h, size):
    """The signal-word panel with its top-left corner at (x, y), drawn in its own coordinates (so that the
    small PDF writer can repeat its operators from label to label)."""
    canvas.saveState()
    canvas.transform(1, 0, 0, 1, x, y)
    if hasattr(canvas, "reuse"):
        canvas.reuse(("signal", word, w, h, size), lambda c: _signal_panel(c, word, w, h, size))
    else:
        _signal_panel(canvas, word, w, h, size)
    canvas.restoreState()


def _signal_panel(canvas, word, w, h, size, x=0.0, y=0.0):
    fill, ink = SIGNAL_PANELS[word]
    canvas.setFillColor(fill)
    canvas.rect(x, y - h, w, h, stroke=0, fill=1)
    # Safety alert symbol: a triangle with an exclamation mark, left of the word.
    size = min(size, h * 0.8)
    t = h * 0.62
    tx, ty = x + (w - t * 1.25 - stringWidth(word, _BOLD, size)) / 2, y - h / 2 - t / 2
    canvas.setFillColor(ink)
    path = canvas.beginPath()
    path.moveTo(tx, ty)
    path.lineTo(tx + t, ty)
    path.lineTo(tx + t / 2, ty + t)
    path.close()
    canvas.drawPath(path, stroke=0, fill=1)
    canvas.setFillColor(fill)
    canvas.setFont(_BOLD, t * 0.7)
    canvas.drawCentredString(tx + t / 2, ty + t * 0.12, "!")
    canvas.setFillColor(ink)
    canvas.setFont(_BOLD, size)
    canvas.drawString(tx + t * 1.25, y - h / 2 - size * 0.35, word)
    canvas.setFillColor(black)


@functools.lru_cache(maxsize=4096)
def qr_modules(payload):
    """The QR code of ``payload`` (:func:`arcflash.output.qr.qr_matrix`) as rectangles of dark modules.

    Returns
    -------
    tuple
        (module count, read-only integer array of rows (x, y, width, height) in module units, y up from the
        symbol's bottom edge: the dark runs of each row, a run merged with the identical runs directly
        below it).
    """
    matrix = qr_matrix(payload)
    count = matrix.shape[0]
    padded = np.zeros((count, count + 2), dtype=np.int8)
    padded[:, 1:-1] = matrix
    edges = np.diff(padded, axis=1)
    row_start, col_start = np.nonzero(edges == 1)
    _, col_end = np.nonzero(edges == -1)
    length = col_end - col_start
    # a run that repeats the one directly above it (same columns) extends that rectangle downwards
    key = col_start * (count + 1) + length
    order = np.lexsort((row_start, key))
    key, row = key[order], row_start[order]
    starts = np.ones(order.size, dtype=bool)
    starts[1:] = (key[1:] != key[:-1]) | (row[1:] != row[:-1] + 1)
    first = np.flatnonzero(starts)
    rows = np.diff(np.append(first, order.size))
    top, col, width = row[first], col_start[order][first], length[order][first]
    rectangles = np.column_stack((col, count - top - rows, width, rows))
    rectangles.setflags(write=False)
    return count, rectangles


def _qr(canvas, content, x, top, side):
    """The label's QR code, with the 4-module quiet zone of ISO/IEC 18004 (from memory), drawn in module
    units: through an image mask (the small PDF writer) or as filled rectangles."""
    count = qr_matrix(content.qr_payload).shape[0]
    module = side / (count + 8)
    canvas.saveState()
    canvas.transform(module, 0, 0, module, x + 4 * module, top - (count + 4) * module)
    canvas.setFillColor(black)
    if hasattr(canvas, "image_mask"):  # the small PDF writer paints the modules through an image mask
        canvas.image_mask(count, qr_image_hex(content.qr_payload))
    else:
        path = canvas.beginPath()
        for rx, ry, width, height in qr_modules(content.qr_payload)[1].tolist():
            path.rect(rx, ry, width, height)
        canvas.drawPath(path, stroke=0, fill=1)
    canvas.restoreState()


_PLANS = {}
_PLANS_KEPT = 50_000  # every label of a 10,000-bus facility in two layouts, planned to fit then drawn


def plan_label(content, w, h, layout, issued_on=None):
    """:func:`_plan_label`, remembered: a label is planned to check it fits, then planned again to draw it.

    Remembered by the identities of the content and the layout (the entry holds both, so no other object
    can take their identities while the entry is kept)."""
    key = (id(content), w, h, id(layout), issued_on)
    entry = _PLANS.get(key)
    if entry is None or entry[0] is not layout or entry[1] is not content:
        if len(_PLANS) >= _PLANS_KEPT:
            _PLANS.clear()
        entry = _PLANS[key] = (layout, content, _plan_label(content, w, h, layout, issued_on))
    return entry[2]


_PARTS = {}


def _layout_parts(layout, h):
    """Of a layout at cell height ``h``: the key values' smallest size, the fixed blocks' heights, the text
    blocks (kind, block) and the height left for them; remembered by the layout's identity (held)."""
    entry = _PARTS.get((id(layout), h))
    if entry is None or entry[0] is not layout:
        key_min = float(getattr(layout, "key_min", None) or MIN_KEY_PT)
        fixed = {b["kind"]: h * float(b["height"]) for b in layout.blocks if b["kind"] in ("signal", "qr")}
        text_blocks = [(b["kind"], b) for b in layout.blocks if b["kind"] not in ("signal", "qr")]
        if len(_PARTS) >= 256:
            _PARTS.clear()
        entry = _PARTS[(id(layout), h)] = (layout, (key_min, fixed, text_blocks, h - sum(fixed.values()) - 2.0))
    return entry[1]


def _plan_label(content, w, h, layout, issued_on=None):
    """Lay a label's text out in a w × h point cell without drawing: the fixed block heights, the text
    pieces, the common scale and the text block heights.

    Raises
    ------
    LabelFitError
        The text does not fit at the smallest sizes; the message names the equipment and the field.
    """
    inner_w = w - 2 * _PAD
    key_min, fixed, text_blocks, available = _layout_parts(layout, h)
    texts = [(kind, _pieces(kind, content, b, key_min, issued_on), b) for kind, b in text_blocks]
    scale, heights, laid = _fit_scale(texts, inner_w, available)
    if scale is None:
        field, kind = _too_long(content, texts, inner_w)
        raise LabelFitError(f"label of {content.equipment_id}: the text does not fit layout {layout.name} at the "
                            f"smallest legible size ({MIN_TEXT_PT:g} pt; key values {key_min:g} pt): "
                            f"shorten {field} (in the {kind} block)")
    return fixed, texts, scale, heights, available, key_min, laid


def draw_label(canvas, content, x, y, w, h, layout, issued_on=None, record=True):
    """Draw one label with its top-left corner at (x, y), size w × h points.

    On the small PDF writer and without a record, a label drawn like an earlier one but for its strings (same
    layout, place, signal word, sizes and line counts) is drawn from that one's operators
    (:meth:`LiteCanvas.template`).

    Returns
    -------
    list of Placed
        Every string drawn, with its block's box (empty when ``record`` is false: printing needs no record).

    Raises
    ------
    LabelFitError
        The text does not fit at the smallest sizes; the message names the equipment and the field.
    """
    plan = plan_label(content, w, h, layout, issued_on)
    if not record and hasattr(canvas, "template"):
        key, values = _template_key(content, x, y, w, h, layout, plan, issued_on)
        canvas.template(key, layout, values,
                        lambda c: _draw_planned(c, content, x, y, w, h, layout, plan, issued_on, None))
        return []
    placed = [] if record else None
    _draw_planned(canvas, content, x, y, w, h, layout, plan, issued_on, placed)
    return placed if record else []


def _qr_box_width(w, side):
    """Width of the text beside the QR code in a label w points wide [pt]."""
    return (w - _PAD) - (_PAD + side + 4)


def _template_key(content, x, y, w, h, layout, plan, issued_on):
    """(key, strings) of a label for :meth:`LiteCanvas.template`: the key holds everything the drawing
    depends on but its strings; the strings (PDF tokens) in the order :func:`_draw_planned` draws them."""
    fixed, texts, scale, _, _, key_min, laid = plan
    lines, qr_at, text_blocks = [], None, iter(texts)  # each drawn piece's lines, in drawing order
    for block in layout.blocks:
        kind = block["kind"]
        if kind == "qr":
            qr_at = len(lines)  # the symbol is drawn before the text beside it
            width = _qr_box_width(w, fixed[kind] - 2)
            lines += [_lines(p, 1.0, width)[1] for p in _pieces("qr", content, block, key_min, issued_on)]
        elif kind != "signal":
            lines += [laid[p][1] for p in _in_rows(next(text_blocks)[1])]
    counts = tuple(map(len, lines))
    values = list(map(_string, itertools.chain.from_iterable(lines)))
    if qr_at is not None:
        values.insert(sum(counts[:qr_at]), qr_image_hex(content.qr_payload))
    key = ("label", x, y, w, h, content.signal_word, bool(content.flags), bool(content.site_ppe), scale,
           counts, qr_matrix(content.qr_payload).shape[0], id(layout))
    return key, tuple(values)


def _draw_planned(canvas, content, x, y, w, h, layout, plan, issued_on, placed):
    """Draw a planned label (:func:`plan_label`); each string drawn is appended to ``placed`` unless None."""
    inner_w = w - 2 * _PAD
    fixed, texts, scale, heights, available, key_min, laid = plan
    qr_text = [b for b in layout.blocks if b["kind"] == "qr"]
    slack = (available - sum(heights) - _BLOCK_GAP * len(texts)) / max(1, len(texts))
    canvas.setLineWidth(1.2)
    if content.flags:
        canvas.setDash(4, 3)  # a flagged label does not look like a normal one
    canvas.rect(x, y - h, w, h, stroke=1, fill=0)
    canvas.setDash()
    top, heights, text_blocks = y, iter(heights), iter(texts)
    for block in layout.blocks:
        kind = block["kind"]
        if kind == "signal":
            _signal(canvas, content.signal_word, x, top, w, fixed[kind], float(block["size"]))
            top -= fixed[kind]
            continue
        if kind == "qr":
            side = fixed[kind] - 2
            _qr(canvas, content, x + _PAD, top - 1, side)
            pieces = _pieces("qr", content, qr_text[0], key_min, issued_on)
            box = (x + _PAD + side + 4, top - fixed[kind], x + w - _PAD, top)
            _draw_pieces(canvas, pieces, 1.0, box[0], top - 2, _qr_box_width(w, side), placed, kind, box)
            top -= fixed[kind]
            continue
        _, pieces, _ = next(text_blocks)  # the text blocks, in layout order
        height = next(heights) + _BLOCK_GAP + slack
        box = (x + _PAD, top - height, x + w - _PAD, top)
        _draw_pieces(canvas, pieces, scale, x + _PAD, top - 1, inner_w, placed, kind, box, laid)
        top -= height


def unfit_labels(contents, layout, issued_on=None):
    """The messages of the labels that do not fit ``layout`` (laid out, not drawn), issued on ``issued_on``
    (default today)."""
    cell_w, cell_h = _cell(layout)
    problems = []
    for content in contents:
        try:
            plan_label(content, cell_w, cell_h, layout, issued_on)
        except LabelFitError as exc:
            problems.append(str(exc))
    return problems


def _cell(layout):
    cell_w = (layout.page_width - 2 * layout.margin - (layout.across - 1) * layout.gutter) / layout.across
    cell_h = (layout.page_height - 2 * layout.margin - (layout.down - 1) * layout.gutter) / layout.down
    return cell_w, cell_h


def write_labels_pdf(contents, layout, path, issued_on=None):
    """Draw every label on pages of ``layout`` (one or several per page) into ``path``
    (:func:`labels_pdf_bytes`)."""
    Path(path).write_bytes(labels_pdf_bytes(contents, layout, issued_on))


def labels_pdf_bytes(contents, layout, issued_on=None):
    """The PDF of every label on pages of ``layout``, as bytes (:class:`LabelPages`)."""
    pages = LabelPages(layout, issued_on)
    for content in contents:
        pages.add(content)
    return pages.finish()


class LabelPages:
    """A PDF of labels on pages of a layout (one or several per page), built one label at a time, so that a
    batch can draw each label's single PDF and its place on the combined sheet together.

    The small PDF writer of :mod:`.pdf_lite` draws them; when a label's text is outside what
    WinAnsiEncoding holds (cp1252), the document is drawn again with reportlab's canvas.
    """

    def __init__(self, layout, issued_on=None):
        self.layout, self.issued_on = layout, issued_on
        self.pagesize = (layout.page_width, layout.page_height)
        self.cell = _cell(layout)
        self.contents = []
        self.buffer = None  # reportlab's output, once the small writer has given up
        self.canvas = self._new_canvas(LiteCanvas(self.pagesize))

    def _new_canvas(self, canvas):
        canvas.setTitle("arcflash equipment labels")
        return canvas

    def add(self, content):
        """Draw one more label (a new page when the last is full)."""
        try:
            self._draw(content, len(self.contents))
        except UnicodeEncodeError:
            self.buffer = io.BytesIO()
            self.canvas = self._new_canvas(Canvas(self.buffer, pagesize=self.pagesize))
            for number, earlier in enumerate(self.contents):
                self._draw(earlier, number)
            self._draw(content, len(self.contents))
        self.contents.append(content)

    def _draw(self, content, number):
        layout, (cell_w, cell_h) = self.layout, self.cell
        per_page = layout.across * layout.down
        slot = number % per_page
        if number and slot == 0:
            self.canvas.showPage()
        col, row = slot % layout.across, slot // layout.across
        x = layout.margin + col * (cell_w + layout.gutter)
        y = layout.page_height - layout.margin - row * (cell_h + layout.gutter)
        draw_label(self.canvas, content, x, y, cell_w, cell_h, layout, self.issued_on, record=False)

    def finish(self):
        """The document's bytes."""
        self.canvas.save()
        return self.buffer.getvalue() if self.buffer is not None else self.canvas.getvalue()
