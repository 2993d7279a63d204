"""A small PDF canvas for labels: the part of reportlab's canvas interface the label drawing uses, written
straight to PDF operators.

A label is a few dozen strings and rectangles; reportlab's general canvas spends most of a label's time
on bookkeeping it does not need here. This one writes PDF 1.4 (ISO 32000-1 structure: catalog, page tree,
pages with one compressed content stream each, the two standard fonts Helvetica and Helvetica-Bold with
WinAnsiEncoding, an information dictionary, a cross-reference table). Text widths for wrapping still come
from reportlab's font metrics, which describe the same standard fonts and encoding.

Text that WinAnsiEncoding (cp1252) cannot hold raises :class:`UnicodeEncodeError`; the caller then draws
with reportlab's canvas instead.
"""

from __future__ import annotations

import functools
import time
import zlib

from reportlab.pdfbase.pdfmetrics import stringWidth

_FONTS = {"Helvetica": "F1", "Helvetica-Bold": "F2"}


def _number(value):
    """A PDF number: to three decimals, trailing zeros dropped (never an exponent)."""
    text = ("%.3f" % value).rstrip("0").rstrip(".")
    return "0" if text == "-0" else text


#: zlib level of the content streams: level 3 takes about half the time of the default 6 for about 8 % more
#: bytes on a label (measured on the demo's labels).
_DEFLATE_LEVEL = 3

#: Drawings repeated from label to label (:meth:`LiteCanvas.reuse`), as operators and the font they leave set.
_REUSED = {}
_REUSED_KEPT = 256

#: Labels drawn again with other strings (:meth:`LiteCanvas.template`): their operators with the strings as
#: slots, by a key of everything else the drawing depends on.
_TEMPLATES = {}
_TEMPLATES_KEPT = 1024

#: Where a slot stands in operators being recorded (a character no operator or escaped string contains).
_SLOT = "\x00"

#: Templates not kept because the strings drawn were not the ones foreseen, in that order (the drawing was
#: kept as drawn; a test checks this stays zero).
TEMPLATE_MISMATCHES = [0]

@functools.lru_cache(maxsize=65536)
def _string(text):
    """A PDF literal string of ``text`` in WinAnsiEncoding, as ASCII text (other bytes as octal escapes),
    remembered (label texts repeat from label to label); UnicodeEncodeError outside cp1252."""
    if text.isascii() and text.isprintable():  # the usual case: printable ASCII, only \ ( ) to escape
        if "\\" in text or "(" in text or ")" in text:
            text = text.replace("\\", "\\\\").replace("(", "\\(").replace(")", "\\)")
        return "(" + text + ")"
    out = ["("]
    for byte in text.encode("cp1252"):
        if byte in b"()\\":
            out.append("\\" + chr(byte))
        elif byte < 32 or byte > 126:
            out.append(f"\\{byte:03o}")
        else:
            out.append(chr(byte))
    return "".join(out) + ")"


def _rgb(color):
    return f"{_number(color.red)} {_number(color.green)} {_number(color.blue)}"


class Path_:
    """A path being built (moveTo, lineTo, rect, close)."""

    def __init__(self):
        self.ops = []

    def moveTo(self, x, y):  # noqa: N802 - reportlab's name
        self.ops.append(f"{_number(x)} {_number(y)} m")

    def lineTo(self, x, y):  # noqa: N802
        self.ops.append(f"{_number(x)} {_number(y)} l")

    def rect(self, x, y, w, h):
        self.ops.append(f"{_number(x)} {_number(y)} {_number(w)} {_number(h)} re")

    def close(self):
        self.ops.append("h")


class LiteCanvas:
    """The canvas calls of :mod:`arcflash.output.label_pdf`, written as PDF operators."""

    def __init__(self, pagesize):
        self.width, self.height = pagesize
        self.title = ""
        self.pages = []
        self.ops = []
        self.font = ("F1", 10.0)
        self.slots = None  # while a template is recorded: the strings drawn, in order

    def setTitle(self, title):  # noqa: N802
        self.title = title

    def setFont(self, name, size):  # noqa: N802
        self.font = (_FONTS[name], float(size))

    def setFillColor(self, color):  # noqa: N802
        self.ops.append(f"{_rgb(color)} rg")

    def setLineWidth(self, width):  # noqa: N802
        self.ops.append(f"{_number(width)} w")

    def setDash(self, on=None, off=None):  # noqa: N802
        self.ops.append("[] 0 d" if on is None else f"[{_number(on)} {_number(off)}] 0 d")

    def drawString(self, x, y, text):  # noqa: N802
        font, size = self.font
        literal = _string(text)
        if self.slots is not None:
            self.slots.append(literal)
            literal = _SLOT
        self.ops.append("BT /%s %.3f Tf %.3f %.3f Td %s Tj ET" % (font, size, x, y, literal))

    def drawCentredString(self, x, y, text):  # noqa: N802
        name = next(k for k, v in _FONTS.items() if v == self.font[0])
        self.drawString(x - stringWidth(text, name, self.font[1]) / 2.0, y, text)

    def rect(self, x, y, w, h, stroke=1, fill=0):
        self.ops.append(f"{_number(x)} {_number(y)} {_number(w)} {_number(h)} re {_paint(stroke, fill)}")

    def saveState(self):  # noqa: N802
        self.ops.append("q")

    def restoreState(self):  # noqa: N802
        self.ops.append("Q")

    def transform(self, a, b, c, d, e, f):
        self.ops.append(" ".join(_number(v) for v in (a, b, c, d, e, f)) + " cm")

    def image_mask(self, count, hex_rows):
        """Paint the current fill colour through a 1-bit image mask filling a square of ``count`` units from
        the origin: an inline image (ISO 32000-1 clause 8.9.7) of ``count`` x ``count`` samples, 1 painted, rows
        top first, each padded to whole bytes, given as hexadecimal digits (ASCIIHexDecode)."""
        if self.slots is not None:
            self.slots.append(hex_rows)
            hex_rows = _SLOT
        self.ops.append(f"{count} 0 0 {count} 0 0 cm BI /W {count} /H {count} /IM true /BPC 1 /D [1 0] /F /AHx "
                        f"ID {hex_rows}> EI")

    def template(self, key, owner, values, draw):
        """Emit what ``draw(self)`` emits with the strings ``values`` (PDF tokens: literal strings as
        :func:`_string` gives them, image data), in the order drawn, in its slots.

        The first drawing under ``key`` (with ``owner``, an object the key names by identity and the entry
        keeps) is recorded with its strings as slots; later ones only fill the slots. The key must describe
        everything the drawing depends on except the strings. If the strings drawn are not ``values``, the
        drawing is kept as drawn and no template is kept.
        """
        entry = _TEMPLATES.get(key)
        if entry is not None and entry[0] is owner:
            self.ops.append(entry[1] % values)
            self.font = entry[2]
            return
        start, self.slots = len(self.ops), []
        try:
            draw(self)
        finally:
            recorded, self.slots = tuple(self.slots), None
        template = "\n".join(self.ops[start:]).replace("%", "%%").replace(_SLOT, "%s")
        self.ops[start:] = [template % recorded]
        if recorded != tuple(values):
            TEMPLATE_MISMATCHES[0] += 1
            return
        if len(_TEMPLATES) >= _TEMPLATES_KEPT:
            _TEMPLATES.clear()
        _TEMPLATES[key] = (owner, template, self.font)

    def reuse(self, key, draw):
        """Emit what ``draw(self)`` emits, remembered under ``key`` (a hashable description of everything the
        drawing depends on): a drawing repeated on many labels is formatted once."""
        entry = _REUSED.get(key)
        if entry is None:
            start, slots, self.slots = len(self.ops), self.slots, None  # no slots in a reused drawing
            try:
                draw(self)
            finally:
                self.slots = slots
            if len(_REUSED) >= _REUSED_KEPT:
                _REUSED.clear()
            entry = _REUSED[key] = (self.ops[start:], self.font)
        else:
            self.ops.extend(entry[0])
        self.font = entry[1]

    def beginPath(self):  # noqa: N802
        return Path_()

    def drawPath(self, path, stroke=1, fill=0):  # noqa: N802
        self.ops.append(" ".join(path.ops) + f" {_paint(stroke, fill)}")

    def showPage(self):  # noqa: N802
        self.pages.append(self.ops)
        self.ops = []

    def save(self):
        """Finish the document (its bytes: :meth:`getvalue`)."""
        if self.ops or not self.pages:
            self.showPage()
        self.data = self._document()

    def getvalue(self):
        """The document's bytes, after :meth:`save`."""
        return self.data

    def _document(self):
        stamp = _creation_stamp()
        return document_bytes([content_stream("\n".join(ops)) for ops in self.pages], self.width, self.height,
                              self.title, stamp)


_STAMP = [None, ""]


def _creation_stamp():
    """The PDF date of now (UTC), made once a second (a batch writes thousands of documents)."""
    second = int(time.time())
    if _STAMP[0] != second:
        _STAMP[:] = [second, time.strftime("D:%Y%m%d%H%M%SZ", time.gmtime(second))]
    return _STAMP[1]


#: Content streams shorter than this are kept as they are [bytes]: a single label's (about 3 KB) would
#: shrink by half, for more time than the rest of its document takes (zlib's set-up and pass).
_DEFLATE_ABOVE = 8192


def content_stream(text):
    """A page's operators as (filter entry of the stream dictionary, stream data): compressed with zlib
    (level :data:`_DEFLATE_LEVEL`) when longer than :data:`_DEFLATE_ABOVE` bytes."""
    data = text.encode("ascii")
    if len(data) < _DEFLATE_ABOVE:
        return "", data
    return " /Filter /FlateDecode", zlib.compress(data, _DEFLATE_LEVEL)


def document_bytes(streams, width, height, title, stamp):
    """A PDF of one page per content stream (``streams``, as :func:`content_stream` gives them), every page ``width`` x ``height``
    points, with the two fonts of :data:`_FONTS`; ``stamp`` the creation date (PDF date string).

    Objects: 1 catalog, 2.. fonts, then the page tree, then a stream and its page per page, then the
    information dictionary. A one-page document is assembled around a remembered skeleton.
    """
    if len(streams) != 1:
        return _assembled(streams, width, height, title, stamp)
    head, page, tail_start = _one_page_skeleton(width, height, title)
    entry, data = streams[0]
    stream = b"5 0 obj\n<< /Length %d%s >>\nstream\n" % (len(data), entry.encode("ascii")) + data \
        + b"\nendstream\nendobj\n"
    info = ("7 0 obj\n<< /Title %s /Producer (arcflash) /CreationDate (%s) >>\nendobj\n"
            % (_string(title), stamp)).encode("ascii")
    offsets = tail_start + (len(head), len(head) + len(stream), len(head) + len(stream) + len(page))
    xref = offsets[-1] + len(info)
    return b"".join((head, stream, page, info, _xref(offsets),
                     b"trailer\n<< /Size 8 /Root 1 0 R /Info 7 0 R >>\nstartxref\n%d\n%%%%EOF\n" % xref))


def _assembled(streams, width, height, title, stamp):
    """:func:`document_bytes`, object by object (any number of pages)."""
    objects = []  # bytes of objects 1..n

    def add(body):
        objects.append(body if isinstance(body, bytes) else body.encode("latin-1"))
        return len(objects)

    catalog = add("")  # filled in below, once the page tree's number is known
    fonts = {key: add(f"<< /Type /Font /Subtype /Type1 /BaseFont /{name} /Encoding /WinAnsiEncoding >>")
             for name, key in _FONTS.items()}
    resources = "<< /Font << " + " ".join(f"/{k} {n} 0 R" for k, n in fonts.items()) + " >> >>"
    tree = add("")
    kids = []
    for entry, data in streams:
        stream = add(f"<< /Length {len(data)}{entry} >>\nstream\n".encode("ascii") + data + b"\nendstream")
        kids.append(add(f"<< /Type /Page /Parent {tree} 0 R /MediaBox [0 0 {_number(width)} "
                        f"{_number(height)}] /Resources {resources} /Contents {stream} 0 R >>"))
    objects[tree - 1] = (f"<< /Type /Pages /Kids [{' '.join(f'{k} 0 R' for k in kids)}] "
                         f"/Count {len(kids)} >>").encode("ascii")
    objects[catalog - 1] = f"<< /Type /Catalog /Pages {tree} 0 R >>".encode("ascii")
    info = add(f"<< /Title {_string(title)} /Producer (arcflash) /CreationDate ({stamp}) >>")
    out = bytearray(_HEADER)
    offsets = []
    for number, body in enumerate(objects, start=1):
        offsets.append(len(out))
        out += f"{number} 0 obj\n".encode("ascii") + body + b"\nendobj\n"
    xref = len(out)
    out += _xref(offsets)
    out += (f"trailer\n<< /Size {len(objects) + 1} /Root {catalog} 0 R /Info {info} 0 R >>\n"
            f"startxref\n{xref}\n%%EOF\n").encode("ascii")
    return bytes(out)


_HEADER = b"%PDF-1.4\n%\xe2\xe3\xcf\xd3\n"


def _xref(offsets):
    """The cross-reference table of objects 1.. at ``offsets``."""
    return (f"xref\n0 {len(offsets) + 1}\n0000000000 65535 f \n".encode("ascii")
            + b"".join(b"%010d 00000 n \n" % offset for offset in offsets))


@functools.lru_cache(maxsize=16)
def _one_page_skeleton(width, height, title):
    """The fixed parts of a one-page document (:func:`document_bytes`): objects 1-4 with the header, object
    6 (the page) and the offsets of objects 1-4 (the bytes :func:`_assembled` writes for them)."""
    fonts = " ".join(f"/{key} {number} 0 R" for number, key in enumerate(_FONTS.values(), start=2))
    bodies = [b"<< /Type /Catalog /Pages 4 0 R >>"]
    bodies += [f"<< /Type /Font /Subtype /Type1 /BaseFont /{name} /Encoding /WinAnsiEncoding >>".encode("ascii")
               for name in _FONTS]
    bodies.append(b"<< /Type /Pages /Kids [6 0 R] /Count 1 >>")
    head, offsets = bytearray(_HEADER), []
    for number, body in enumerate(bodies, start=1):
        offsets.append(len(head))
        head += b"%d 0 obj\n" % number + body + b"\nendobj\n"
    page = (f"6 0 obj\n<< /Type /Page /Parent 4 0 R /MediaBox [0 0 {_number(width)} {_number(height)}] "
            f"/Resources << /Font << {fonts} >> >> /Contents 5 0 R >>\nendobj\n").encode("ascii")
    return bytes(head), page, tuple(offsets)


def _paint(stroke, fill):
    return {(1, 1): "B", (1, 0): "S", (0, 1): "f", (0, 0): "n"}[(1 if stroke else 0, 1 if fill else 0)]
