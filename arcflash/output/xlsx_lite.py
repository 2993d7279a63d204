"""A small XLSX writer for the study's tables: one sheet per table, header row frozen, number formats per
column, column widths; text as inline strings.

An XLSX file is a zip of XML parts (ECMA-376 / ISO/IEC 29500, SpreadsheetML). The general writers build an
object per cell; for a 10,000-bus study (about a million cells) that is most of the study's time. This one
formats each column of a table at once and writes the rows as text, which keeps the workbook within a few
times the time of the same tables as CSV.
"""

from __future__ import annotations

import math
import re
import zipfile
from dataclasses import dataclass, field

#: Characters that XML 1.0 does not allow (control characters other than tab, newline, return).
_NOT_XML = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff]")


def _text(value):
    """A string as XML character data."""
    text = str(value)
    if "&" in text or "<" in text or ">" in text:
        text = text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    return _NOT_XML.sub("\ufffd", text)


@dataclass
class Column:
    """A column: heading, values, number format (Excel code; None for text) and width [characters]."""

    heading: str
    values: list
    number_format: str | None = None
    width: float = 12.0


@dataclass
class Sheet:
    """A sheet: name (at most 31 characters) and columns of equal length."""

    name: str
    columns: list = field(default_factory=list)


#: Rows of a sheet formatted and written at once (the sheet is streamed into the zip, a block at a time) [-].
ROWS_AT_ONCE = 4096


def _cells(column, style, lo, hi):
    """The cells of rows ``lo:hi`` of a column as XML, one string per row."""
    values = column.values[lo:hi]
    if column.number_format is None:
        known = {}
        out = []
        for value in values:
            if value is None or (isinstance(value, float) and math.isnan(value)) or value == "":
                out.append("<c/>")
                continue
            cell = known.get(value)
            if cell is None:
                cell = known[value] = f'<c t="inlineStr"><is><t xml:space="preserve">{_text(value)}</t></is></c>'
            out.append(cell)
        return out
    empty = f'<c s="{style}"/>'
    start = f'<c s="{style}"><v>'
    return [empty if value is None or value != value or value in (math.inf, -math.inf)
            else f"{start}{value!r}</v></c>" for value in values]


def _write_sheet(stream, sheet, styles):
    """A sheet's XML written to ``stream`` (bytes), its rows :data:`ROWS_AT_ONCE` at a time: a large table
    never stands in memory as text all at once."""
    heading = "<row>" + "".join(f'<c t="inlineStr" s="1"><is><t>{_text(c.heading)}</t></is></c>'
                                for c in sheet.columns) + "</row>"
    widths = "".join(f'<col min="{i}" max="{i}" width="{c.width:g}" customWidth="1"/>'
                     for i, c in enumerate(sheet.columns, start=1))
    stream.write(('<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
                  '<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
                  '<sheetViews><sheetView workbookViewId="0"><pane ySplit="1" topLeftCell="A2" activePane="bottomLeft" '
                  'state="frozen"/></sheetView></sheetViews>'
                  + (f"<cols>{widths}</cols>" if widths else "") + "<sheetData>" + heading).encode("utf-8"))
    count = len(sheet.columns[0].values) if sheet.columns else 0
    for lo in range(0, count, ROWS_AT_ONCE):
        columns = [_cells(c, styles[c.number_format], lo, lo + ROWS_AT_ONCE) for c in sheet.columns]
        stream.write("".join("<row>" + "".join(cells) + "</row>" for cells in zip(*columns)).encode("utf-8"))
    stream.write(b"</sheetData></worksheet>")


def _styles_xml(formats):
    """Styles: 0 default, 1 bold heading, then one per number format (custom ids from 164)."""
    codes = "".join(f'<numFmt numFmtId="{164 + i}" formatCode="{_text(code)}"/>' for i, code in enumerate(formats))
    xfs = ('<xf numFmtId="0" fontId="0" fillId="0" borderId="0" xfId="0"/>'
           '<xf numFmtId="0" fontId="1" fillId="0" borderId="0" xfId="0" applyFont="1"/>'
           + "".join(f'<xf numFmtId="{164 + i}" fontId="0" fillId="0" borderId="0" xfId="0" applyNumberFormat="1"/>'
                     for i in range(len(formats))))
    return ('<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
            '<styleSheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
            f'<numFmts count="{len(formats)}">{codes}</numFmts>'
            '<fonts count="2"><font><sz val="10"/><name val="Calibri"/></font>'
            '<font><b/><sz val="10"/><name val="Calibri"/></font></fonts>'
            '<fills count="2"><fill><patternFill patternType="none"/></fill>'
            '<fill><patternFill patternType="gray125"/></fill></fills>'
            '<borders count="1"><border><left/><right/><top/><bottom/><diagonal/></border></borders>'
            '<cellStyleXfs count="1"><xf numFmtId="0" fontId="0" fillId="0" borderId="0"/></cellStyleXfs>'
            f'<cellXfs count="{2 + len(formats)}">{xfs}</cellXfs>'
            '<cellStyles count="1"><cellStyle name="Normal" xfId="0" builtinId="0"/></cellStyles></styleSheet>')


def write_xlsx(path, sheets):
    """Write ``sheets`` (list of :class:`Sheet`) as an XLSX workbook to ``path``."""
    formats = sorted({c.number_format for s in sheets for c in s.columns if c.number_format is not None})
    styles = {None: 0, **{code: 2 + i for i, code in enumerate(formats)}}
    names = [s.name[:31] for s in sheets]
    main = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
    relations = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
    package = "http://schemas.openxmlformats.org/package/2006/relationships"
    with zipfile.ZipFile(path, "w", compression=zipfile.ZIP_DEFLATED, compresslevel=1) as archive:
        archive.writestr("[Content_Types].xml", (
            '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
            '<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
            '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/>'
            '<Default Extension="xml" ContentType="application/xml"/>'
            '<Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.'
            'spreadsheetml.sheet.main+xml"/>'
            '<Override PartName="/xl/styles.xml" ContentType="application/vnd.openxmlformats-officedocument.'
            'spreadsheetml.styles+xml"/>'
            + "".join(f'<Override PartName="/xl/worksheets/sheet{i}.xml" ContentType="application/'
                      'vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>'
                      for i in range(1, len(sheets) + 1)) + "</Types>"))
        archive.writestr("_rels/.rels", (
            f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<Relationships xmlns="{package}">'
            f'<Relationship Id="rId1" Type="{relations}/officeDocument" Target="xl/workbook.xml"/>'
            "</Relationships>"))
        archive.writestr("xl/workbook.xml", (
            f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<workbook xmlns="{main}" '
            f'xmlns:r="{relations}"><sheets>'
            + "".join(f'<sheet name="{_text(n)}" sheetId="{i}" r:id="rId{i}"/>' for i, n in enumerate(names, 1))
            + "</sheets></workbook>"))
        archive.writestr("xl/_rels/workbook.xml.rels", (
            f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<Relationships xmlns="{package}">'
            + "".join(f'<Relationship Id="rId{i}" Type="{relations}/worksheet" Target="worksheets/sheet{i}.xml"/>'
                      for i in range(1, len(sheets) + 1))
            + f'<Relationship Id="rId{len(sheets) + 1}" Type="{relations}/styles" Target="styles.xml"/>'
            "</Relationships>"))
        archive.writestr("xl/styles.xml", _styles_xml(formats))
        for i, sheet in enumerate(sheets, start=1):
            with archive.open(f"xl/worksheets/sheet{i}.xml", "w") as stream:
                _write_sheet(stream, sheet, styles)
