"""Breaking text into lines that fit a width, in the standard PDF fonts (labels and report tables)."""

from __future__ import annotations

from reportlab.pdfbase.pdfmetrics import stringWidth

_WORD_WIDTHS = {}


def word_width(word, font, size):
    """reportlab's width of ``word`` [pt], remembered (words repeat from label to label)."""
    key = (word, font, size)
    width = _WORD_WIDTHS.get(key)
    if width is None:
        if len(_WORD_WIDTHS) >= 200_000:
            _WORD_WIDTHS.clear()
        width = _WORD_WIDTHS[key] = stringWidth(word, font, size)
    return width


def wrap(text, font, size, max_width):
    """The lines of ``text`` broken at spaces to ``max_width`` points: the lines of reportlab's
    ``simpleSplit`` (the same rule, the same widths, summed word by word in the same order), with each
    word's width remembered."""
    if not max_width:
        return text.split("\n")
    space = word_width(" ", font, size)
    lines = []
    for paragraph in text.split("\n"):
        line, used = [], -space
        for word in paragraph.split():
            width = word_width(word, font, size)
            if used + space + width <= max_width or not line:
                line.append(word)
                used = used + space + width
            else:
                lines.append(" ".join(line))
                line, used = [word], width
        if line:
            lines.append(" ".join(line))
    return lines
