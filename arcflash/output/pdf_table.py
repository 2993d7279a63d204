"""A long table for reportlab documents, drawn straight as PDF operators.

reportlab's own ``Table`` keeps a style and a cell object for every cell and draws each string through its
text-object machinery; for a report with tens of thousands of rows that is most of the report's time. This
flowable takes cells already broken into lines, splits itself between pages by whole rows (repeating the
header), and draws a page of rows as one block of operators: a filled header, the grid as one path, each
text line as one text operator. Text is written in WinAnsiEncoding, as reportlab writes its standard fonts;
a line that encoding cannot hold is drawn through reportlab's canvas instead.
"""

from __future__ import annotations

from reportlab.pdfbase.pdfmetrics import getFont, stringWidth
from reportlab.platypus import Flowable

from .pdf_lite import _string
from .text_wrap import word_width, wrap

#: Table text: font, bold font, size, leading [pt]; cell padding left/right and top/bottom [pt].
FONT, BOLD, SIZE_PT, LEADING_PT, PAD_X, PAD_Y = "Helvetica", "Helvetica-Bold", 6.5, 7.8, 2.0, 1.5
#: Header fill and grid colour (RGB 0-1).
HEAD_FILL, GRID_RGB, GRID_WIDTH = (0.867, 0.89, 0.918), (0.604, 0.647, 0.694), 0.25
#: No character of Helvetica or Helvetica-Bold is wider than 1.015 em (from their font metrics): a text of
#: n characters is at most n times this wide [pt].
_WIDEST_PT = 1.015 * SIZE_PT
_ASCENT = 0.78  # baseline below the top of a line, as a share of the size (Helvetica's ascender, 718/1000)


def _glyph_widths(font):
    """{character: width at 1 pt} of the cp1252 characters of a standard font (its metrics, as reportlab
    reads them)."""
    widths = getFont(font).widths
    table = {}
    for code in range(32, 256):
        try:
            table[bytes([code]).decode("cp1252")] = widths[code] / 1000.0
        except UnicodeDecodeError:
            continue
    return table


_GLYPHS = {name: _glyph_widths(name) for name in (FONT, BOLD)}


def text_width(text, font=FONT, size=SIZE_PT):
    """Width of ``text`` [pt]: the sum of its glyph widths (reportlab's metrics; other characters through
    reportlab's ``stringWidth``)."""
    glyphs = _GLYPHS[font]
    try:
        return sum(map(glyphs.__getitem__, text)) * size
    except KeyError:
        return stringWidth(text, font, size)


def cell_lines(text, width_pt, font=FONT):
    """``text`` broken into lines of at most ``width_pt`` points; a word too long for the width is cut."""
    text = "-" if text is None else str(text)
    if "\n" not in text and (len(text) * _WIDEST_PT <= width_pt or text_width(text, font) <= width_pt):
        return [text]
    lines = []
    for line in wrap(text, font, SIZE_PT, width_pt):
        while len(line) > 1 and word_width(line, font, SIZE_PT) > width_pt:
            cut = len(line) - 1
            while cut > 1 and word_width(line[:cut], font, SIZE_PT) > width_pt:
                cut = max(1, int(cut * 0.8))
            lines.append(line[:cut])
            line = line[cut:]
        lines.append(line)
    return lines or [""]


class RowTable(Flowable):
    """A table of text cells with fixed column widths, split by whole rows, header repeated on each page.

    Parameters
    ----------
    header : list of str
        Column headings [-]
    rows : list of list
        Cell values (shown with ``str``) [-]
    widths_pt : list of float
        Column widths [pt]
    """

    def __init__(self, header, rows, widths_pt, _laid=None, _span=None):
        super().__init__()
        self.widths = list(widths_pt)
        if _laid is None:
            text_widths = [w - 2 * PAD_X for w in self.widths]
            head = [cell_lines(h, w, BOLD) for h, w in zip(header, text_widths)]
            known = [{} for _ in text_widths]  # a text repeated in a column is broken once
            body = []
            for row in rows:
                cells = []
                for value, width, seen in zip(row, text_widths, known):
                    lines = seen.get(value)
                    if lines is None:
                        lines = seen[value] = cell_lines(value, width)
                    cells.append(lines)
                body.append(cells)
            heights = [max(len(c) for c in row) * LEADING_PT + 2 * PAD_Y for row in body]
            _laid = (head, max(len(c) for c in head) * LEADING_PT + 2 * PAD_Y, body, heights)
        self.laid = _laid
        self.span = _span if _span is not None else (0, len(_laid[2]))

    def _height(self):
        start, stop = self.span
        return self.laid[1] + sum(self.laid[3][start:stop])

    def wrap(self, available_width, available_height):
        self.width = sum(self.widths)
        self.height = self._height()
        return self.width, self.height

    def split(self, available_width, available_height):
        head_height, heights = self.laid[1], self.laid[3]
        start, stop = self.span
        used, cut = head_height, start
        while cut < stop and used + heights[cut] <= available_height:
            used += heights[cut]
            cut += 1
        if cut == start:
            return []  # not even one row fits: the table starts on the next page
        if cut == stop:
            return [self]
        return [RowTable(None, None, self.widths, self.laid, (start, cut)),
                RowTable(None, None, self.widths, self.laid, (cut, stop))]

    def draw(self):
        canvas = self.canv
        head, head_height, body, heights = self.laid
        start, stop = self.span
        regular, bold = (canvas._doc.getInternalFontName(name) for name in (FONT, BOLD))
        canvas.setFont(FONT, SIZE_PT)  # the page's resources hold the fonts
        total = self._height()
        lefts = [sum(self.widths[:i]) for i in range(len(self.widths) + 1)]
        right = lefts[-1]
        ops = ["q %.3f %.3f %.3f rg 0 %.2f %.2f %.2f re f Q" % (*HEAD_FILL, total - head_height, right, head_height)]
        starts = ["BT %s %.2f Tf %.2f " % (font, SIZE_PT, left + PAD_X) for font in (regular, bold) for left in lefts]
        columns = len(lefts)
        rows = [(head, head_height, columns)] + [(body[i], heights[i], 0) for i in range(start, stop)]
        top, grid, fallback, strings = total, [], [], {}
        for cells, height, offset in rows:
            grid.append("0 %.2f m %.2f %.2f l" % (top, right, top))
            for column, lines in enumerate(cells):
                y = top - PAD_Y - SIZE_PT * _ASCENT
                for line in lines:
                    if line:
                        text = strings.get(line)
                        if text is None:
                            try:
                                text = strings[line] = _string(line)
                            except UnicodeEncodeError:
                                fallback.append((lefts[column] + PAD_X, y, line, BOLD if offset else FONT))
                                y -= LEADING_PT
                                continue
                        ops.append("%s%.2f Td %s Tj ET" % (starts[offset + column], y, text))
                    y -= LEADING_PT
            top -= height
        grid.append("0 0 m %.2f 0 l" % right)
        grid += ["%.2f 0 m %.2f %.2f l" % (x, x, total) for x in lefts]
        ops.append("q %.2f w %.3f %.3f %.3f RG %s S Q" % (GRID_WIDTH, *GRID_RGB, " ".join(grid)))
        ops.append("0 g")
        canvas._code.append("\n".join(ops))
        for x, y, line, name in fallback:
            canvas.setFont(name, SIZE_PT)
            canvas.drawString(x, y, line)
