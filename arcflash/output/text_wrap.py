"""Breaking text into lines that fit a width, in the standard PDF fonts (labels and report tables)."""

from __future__ import annotations

from reportlab.pdfbase.pdfmetrics import getFont, stringWidth

_WORD_WIDTHS = {}  # {(font, size): {word: width}}
_WORDS_KEPT = 200_000
_KEPT = [0]


def _widths(font, size):
    """The remembered word widths of one font and size (all forgotten once too many are kept)."""
    widths = _WORD_WIDTHS.get((font, size))
    if widths is None:
        if _KEPT[0] >= _WORDS_KEPT:
            _WORD_WIDTHS.clear()
            _KEPT[0] = 0
        widths = _WORD_WIDTHS[(font, size)] = {}
    return widths


_GLYPH_WIDTHS = {}


def text_width(text, font, size):
    """reportlab's ``stringWidth`` of ``text`` [pt]: for text in cp1252 (the standard fonts' WinAnsiEncoding),
    the same sum of the font's glyph widths times 0.001 times the size, without the font lookup per call;
    other text goes to reportlab (which substitutes fonts for it)."""
    table = _GLYPH_WIDTHS.get(font)
    if table is None:
        table = _GLYPH_WIDTHS[font] = getFont(font).widths.__getitem__
    try:
        codes = text.encode("cp1252")
    except UnicodeEncodeError:
        return stringWidth(text, font, size)
    return sum(map(table, codes)) * 0.001 * size


def word_width(word, font, size, widths=None):
    """reportlab's width of ``word`` [pt], remembered (words repeat from label to label); ``widths``: the
    font and size's table (:func:`_widths`), if at hand."""
    widths = _widths(font, size) if widths is None else widths
    width = widths.get(word)
    if width is None:
        width = widths[word] = text_width(word, font, size)
        _KEPT[0] += 1
    return width


def wrap(text, font, size, max_width):
    """The lines of ``text`` broken at spaces to ``max_width`` points: the lines of reportlab's
    ``simpleSplit`` (the same rule, the same widths, summed word by word in the same order), with each
    word's width remembered."""
    if not max_width:
        return text.split("\n")
    widths = _widths(font, size)
    space = word_width(" ", font, size, widths)
    lines = []
    for paragraph in text.split("\n"):
        line, used = [], -space
        for word in paragraph.split():
            width = widths.get(word)
            if width is None:
                width = word_width(word, font, size, widths)
            if used + space + width <= max_width or not line:
                line.append(word)
                used = used + space + width
            else:
                lines.append(" ".join(line))
                line, used = [word], width
        if line:
            lines.append(" ".join(line))
    return lines
