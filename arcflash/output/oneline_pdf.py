"""The one-line diagram of the report, drawn as vector graphics in neutral colours and split into sheets.

Layout: the site's buses as a tree from its sources, each bus a bar at its depth; a bus stands in the
column of its first child, so every column holds one branch drop per row band
and every label has its own column. A branch drops vertically from its parent's bar to its child's, with
its symbols on the drop: the protective device at either end (IEEE 315 / IEC 60617 style: circuit breaker
as a square, fuse as a rectangle crossed by the line), a transformer as two overlapping circles, a switch
as a blade (open when normally open), other impedances as a small rectangle; a cable is the plain line.
Sources above the top bus (utility: a circle with a sine; generator: a circle with G), motors and
generators named under their bus with a circle marked M or G. Ties and loops that close the tree are
drawn dashed where both ends are on one sheet and listed under the sheet.

Sheets hold :data:`SHEET_COLUMNS` columns and :data:`SHEET_ROWS` bus rows; a branch that crosses to
another sheet ends in a note naming the bus and sheet it continues to. Every string placed is recorded
(:attr:`OneLineSheet.placed`), so tests can check that no two overlap.
"""

from __future__ import annotations

from collections import deque
from dataclasses import dataclass

from reportlab.lib.units import inch
from reportlab.platypus import Flowable

from .pdf_table import text_width
from .text_wrap import wrap

#: Column width and row height of the grid [pt]; columns and bus rows per sheet.
COLUMN_PT, ROW_PT = 74.0, 80.0
SHEET_COLUMNS, SHEET_ROWS = 7, 7
_TOP_PT = 46.0  # room above the first bus row (sources)
_FONT, _BOLD, _SIZE = "Helvetica", "Helvetica-Bold", 6.0


@dataclass(frozen=True)
class TextBox:
    """A string placed on a sheet: text and its box (x0, y0, x1, y1) [pt]."""

    text: str
    box: tuple


def _branches(site):
    """Every branch as (id, one bus, other bus, kind, closed in the normal state)."""
    for ident, t in site.transformers.items():
        yield ident, t.primary_bus, t.secondary_bus, "transformer", True
    for ident, c in site.cables.items():
        yield ident, c.from_bus, c.to_bus, "cable", True
    for ident, i in site.impedances.items():
        yield ident, i.from_bus, i.to_bus, "impedance", True
    for ident, w in site.switches.items():
        yield ident, w.from_bus, w.to_bus, "switch", w.normally == "closed"


def _first_leaf_columns(site):
    """Column and depth of every bus, and the branches, each once: ``(bus, bus, id, kind, closed, tree)``.

    A breadth-first tree from the sources (closed branches first); a leaf takes the next free column in
    depth-first order and a bus the column of its first child. Branches that close a loop (``tree``
    false) are kept to be drawn dashed and listed.
    """
    neighbours = {b: [] for b in site.buses}
    for ident, a, b, kind, closed in _branches(site):
        neighbours[a].append((b, ident, kind, closed))
        neighbours[b].append((a, ident, kind, closed))
    roots = [u.bus for u in site.utilities.values()] + [g.bus for g in site.generators.values()] + list(site.buses)
    depth, children, drawn, used = {}, {}, [], set()
    for root in roots:
        if root in depth:
            continue
        depth[root] = 0
        queue = deque([root])
        while queue:
            node = queue.popleft()
            children[node] = []
            for other, ident, kind, closed in sorted(neighbours[node], key=lambda n: (not n[3], n[0])):
                if ident in used:
                    continue
                used.add(ident)
                if other in depth:
                    drawn.append((node, other, ident, kind, closed, False))
                    continue
                depth[other] = depth[node] + 1
                children[node].append(other)
                drawn.append((node, other, ident, kind, closed, True))
                queue.append(other)
    column, order, free = {}, [], 0
    for root in (r for r in depth if depth[r] == 0):
        stack = [root]
        while stack:  # depth first, children in order
            node = stack.pop()
            order.append(node)
            if not children[node]:
                column[node] = free
                free += 1
            stack.extend(reversed(children[node]))
    for node in reversed(order):
        if children[node]:
            column[node] = column[children[node][0]]
    return column, depth, drawn


class OneLine:
    """The one-line diagram of a site as sheets (:meth:`sheets`)."""

    def __init__(self, site):
        self.site = site
        self.column, self.depth, self.drawn = _first_leaf_columns(site)
        self.devices = {}
        for ident, device in site.devices.items():
            self.devices.setdefault(device.branch, []).append(device)
        self.kinds = {ident: (kind, closed) for ident, _, _, kind, closed in _branches(site)}
        keys = sorted({self.sheet_of(b) for b in self.column}, key=lambda k: (k[1], k[0]))
        self.numbers = {key: number for number, key in enumerate(keys, start=1)}
        # what each sheet draws, found once: its buses, the branches it draws or lists, children by bus
        self.machines = {}
        for letter, items in (("M", site.motors.values()), ("G", site.generators.values())):
            for item in items:
                self.machines.setdefault(item.bus, []).append((letter, item.id))
        self.buses_on, self.branches_on, self.children = {}, {}, {}
        for bus in self.column:
            self.buses_on.setdefault(self.sheet_of(bus), []).append(bus)
        for entry in self.drawn:
            a, b, tree = entry[0], entry[1], entry[5]
            sheets = {self.sheet_of(a), self.sheet_of(b)}
            if tree:
                self.children.setdefault(a, []).append(b)
                sheets.add((self.column[b] // SHEET_COLUMNS, self.depth[a] // SHEET_ROWS))
            for key in sheets:
                self.branches_on.setdefault(key, []).append(entry)

    def sheet_of(self, bus):
        return self.column[bus] // SHEET_COLUMNS, self.depth[bus] // SHEET_ROWS

    def sheets(self):
        """One flowable per sheet, in reading order."""
        return [OneLineSheet(self, key, number, len(self.numbers)) for key, number in self.numbers.items()]


class OneLineSheet(Flowable):
    """One sheet of the one-line diagram."""

    def __init__(self, diagram, key, number, total):
        super().__init__()
        self.diagram, self.key, self.number, self.total = diagram, key, number, total
        self.width = 7.3 * inch
        self.height = _TOP_PT + SHEET_ROWS * ROW_PT + 30.0
        self.placed = []

    def wrap(self, available_width, available_height):
        return self.width, self.height

    def _xy(self, bus):
        sheet_column, sheet_row = self.key
        x = 8.0 + (self.diagram.column[bus] - sheet_column * SHEET_COLUMNS) * COLUMN_PT
        y = self.height - _TOP_PT - (self.diagram.depth[bus] - sheet_row * SHEET_ROWS) * ROW_PT
        return x, y

    def _text(self, x, y, text, bold=False, limit=COLUMN_PT - 10.0):
        """Draw ``text`` at (x, y) within ``limit`` points: broken at spaces, made smaller (not below 4.5 pt)
        until it takes at most two lines that fit; never cut. Record each line's box."""
        font, size = (_BOLD if bold else _FONT), _SIZE
        lines = wrap(text, font, size, limit)
        while (len(lines) > 2 or max(text_width(line, font, size) for line in lines) > limit) and size > 4.5:
            size -= 0.25
            lines = wrap(text, font, size, limit)
        self.canv.setFont(font, size)
        for number, line in enumerate(lines):
            self.canv.drawString(x, y - number * (size + 1), line)
            width = text_width(line, font, size)
            self.placed.append(TextBox(line, (x, y - number * (size + 1) - 0.22 * size, x + width,
                                              y - number * (size + 1) + 0.75 * size)))

    def draw(self):
        canvas, diagram = self.canv, self.diagram
        canvas.saveState()
        canvas.setStrokeGray(0.0)
        canvas.setFillGray(0.0)
        mine = diagram.buses_on.get(self.key, [])
        listed, onward = [], {}
        for a, b, ident, kind, closed, tree in diagram.branches_on.get(self.key, []):
            if not tree:
                listed.append((ident, a, b, closed))
                if diagram.sheet_of(a) == self.key and diagram.sheet_of(b) == self.key:
                    (xa, ya), (xb, yb) = self._xy(a), self._xy(b)
                    canvas.setDash([3, 2], 0)
                    canvas.setLineWidth(0.6)
                    canvas.line(xa + 4, ya, xb + 4, yb)
                    canvas.setDash()
                continue
            if diagram.sheet_of(b) == self.key or (diagram.sheet_of(a) == self.key and self._in_columns(b)):
                self._drop(a, b, ident, kind, closed)
            elif diagram.sheet_of(a) == self.key:
                onward.setdefault(a, []).append(b)
        for bus in mine:
            self._bus(bus)
        for bus in mine:
            if diagram.depth[bus] == 0:
                self._sources(bus)
        self._legend(listed, onward)
        canvas.restoreState()

    def _in_columns(self, bus):
        """Whether ``bus`` stands in this sheet's columns (on this sheet or one above or below it)."""
        return self.diagram.column[bus] // SHEET_COLUMNS == self.key[0]

    def _bus(self, bus):
        canvas, diagram, site = self.canv, self.diagram, self.diagram.site
        x, y = self._xy(bus)
        kids = [b for b in diagram.children.get(bus, []) if self._in_columns(b)]
        right = max([self._xy(k)[0] for k in kids] + [x]) + 18.0
        canvas.setLineWidth(2.6)
        canvas.line(x - 6.0, y, right, y)
        item = site.buses[bus]
        self._text(x + 3.0, y - 8.0, bus, bold=True)
        machines = diagram.machines.get(bus, [])
        words = f"{item.nominal_kv:g} kV"
        self._text(x + 3.0, y - 15.0, words)
        if machines:
            letters = sorted({letter for letter, _ in machines})
            cx = x + 6.0
            for letter in letters:
                self._machine(cx, y - 22.0, letter)
                cx += 9.0
            names = ", ".join(ident for _, ident in machines)
            self._text(cx - 2.0, y - 24.0, names if len(machines) <= 2 else f"{len(machines)} machines",
                       limit=COLUMN_PT - (cx - x) - 6.0)

    def _machine(self, cx, cy, letter, radius=3.6):
        canvas = self.canv
        canvas.setLineWidth(0.6)
        canvas.circle(cx, cy, radius, stroke=1, fill=0)
        canvas.setFont(_BOLD, 4.5)
        canvas.drawCentredString(cx, cy - 1.6, letter)

    def _drop(self, a, b, ident, kind, closed):
        """The branch from bus ``a`` (row above) down to bus ``b``, with its symbols and labels."""
        canvas, diagram = self.canv, self.diagram
        here_a, here_b = diagram.sheet_of(a) == self.key, diagram.sheet_of(b) == self.key
        xb, yb = self._xy(b)
        xa, ya = self._xy(a)
        top = ya if here_a else min(self.height - 4.0, yb + ROW_PT)
        bottom = yb if here_b else max(4.0, ya - ROW_PT)
        canvas.setLineWidth(0.9)
        canvas.line(xb, top, xb, bottom)
        labels = []
        if not here_b:
            labels.append((bottom + 2.0, f"to {b}, sheet {diagram.numbers[diagram.sheet_of(b)]}"))
        if not here_a:
            labels.append((top - 8.0, f"from {a}, sheet {diagram.numbers[diagram.sheet_of(a)]}"))
        mid = (top + bottom) / 2.0
        devices = diagram.devices.get(ident, [])
        for device in devices:
            dy = top - 30.0 if device.at_bus == a else bottom + 14.0
            self._device(xb, dy, device.kind)
            labels.append((dy - 2.0, device.id))
        if kind == "transformer":
            t = diagram.site.transformers[ident]
            self._transformer(xb, mid - 2.0)
            labels.append((mid - 4.0, f"{ident} {t.kva:g} kVA"))
        elif kind == "switch":
            self._switch(xb, mid, closed)
            labels.append((mid - 2.0, f"{ident}" + ("" if closed else " (open)")))
        elif kind == "impedance":
            canvas.setFillGray(1.0)
            canvas.rect(xb - 2.5, mid - 5.0, 5.0, 10.0, stroke=1, fill=1)
            canvas.setFillGray(0.0)
            labels.append((mid - 2.0, ident))
        else:
            labels.append((mid - 2.0, f"{ident} {diagram.site.cables[ident].length}" if ident in diagram.site.cables
                           else ident))
        used = []
        for ly, text in sorted(labels, reverse=True):
            while any(abs(ly - u) < 9.0 for u in used):
                ly -= 9.0
            used.append(ly)
            self._text(xb + 6.0, ly, text)

    def _device(self, x, y, kind):
        canvas = self.canv
        canvas.setLineWidth(0.8)
        canvas.setFillGray(1.0)
        if kind == "fuse":
            canvas.rect(x - 2.5, y - 5.0, 5.0, 10.0, stroke=1, fill=1)
            canvas.line(x, y - 5.0, x, y + 5.0)
        else:  # a circuit breaker: a square
            canvas.rect(x - 3.5, y - 3.5, 7.0, 7.0, stroke=1, fill=1)
        canvas.setFillGray(0.0)

    def _transformer(self, x, y, radius=5.5):
        canvas = self.canv
        canvas.setLineWidth(0.8)
        canvas.setFillGray(1.0)
        canvas.circle(x, y + radius * 0.7, radius, stroke=1, fill=1)
        canvas.circle(x, y - radius * 0.7, radius, stroke=1, fill=0)
        canvas.setFillGray(0.0)

    def _switch(self, x, y, closed):
        canvas = self.canv
        canvas.setStrokeGray(1.0)
        canvas.setLineWidth(2.0)
        canvas.line(x, y - 5.0, x, y + 5.0)
        canvas.setStrokeGray(0.0)
        canvas.setLineWidth(0.9)
        canvas.line(x, y - 5.0, x + (0.0 if closed else 5.0), y + 5.0)

    def _sources(self, bus):
        canvas, site = self.canv, self.diagram.site
        x, y = self._xy(bus)
        for utility in (u for u in site.utilities.values() if u.bus == bus):
            canvas.setLineWidth(0.9)
            canvas.line(x, y, x, y + 22.0)
            canvas.circle(x, y + 28.0, 6.0, stroke=1, fill=0)
            path = canvas.beginPath()
            path.moveTo(x - 4.0, y + 28.0)
            path.curveTo(x - 2.0, y + 32.0, x - 0.5, y + 32.0, x, y + 28.0)
            path.curveTo(x + 0.5, y + 24.0, x + 2.0, y + 24.0, x + 4.0, y + 28.0)
            canvas.drawPath(path, stroke=1, fill=0)
            self._text(x + 9.0, y + 30.0, f"utility {utility.id}")
            self._text(x + 9.0, y + 22.0, f"{utility.max.fault} max")

    def _legend(self, listed, onward):
        """Two lines under the sheet: the symbols, the ties and loops, and the branches continued on other
        sheets (the full lists are in the report's input tables)."""
        diagram = self.diagram
        mine = [f"{ident} ({a} - {b}{'' if closed else ', normally open'})" for ident, a, b, closed in listed
                if diagram.sheet_of(a) == self.key or diagram.sheet_of(b) == self.key]
        further = [f"{a} to {', '.join(kids[:3])}{' ...' if len(kids) > 3 else ''} on sheet "
                   f"{', '.join(str(n) for n in sorted({diagram.numbers[diagram.sheet_of(k)] for k in kids}))}"
                   for a, kids in onward.items()]
        lines = [f"One-line sheet {self.number} of {self.total}. Squares: circuit breakers; crossed "
                 "rectangles: fuses; two circles: transformers; M/G: motors, generators; dashed: ties and loops."]
        for title, items in (("Ties and loops here", mine), ("Continued", further)):
            if items:
                lines.append(self._fitted(f"{title}: ", items))
        for number, line in enumerate(lines[:3]):
            y = 20.0 - 8.0 * number
            self.canv.setFont(_FONT, _SIZE)
            self.canv.drawString(0, y, line)
            self.placed.append(TextBox(line, (0, y - 1.5, text_width(line, _FONT, _SIZE), y + 4.5)))

    def _fitted(self, title, items):
        """``title`` and as many items as fit the sheet's width, then how many more (see the input tables)."""
        text = title + items[0]
        for number, item in enumerate(items[1:], start=1):
            more = f"; and {len(items) - number} more (see the input tables)"
            if text_width(text + "; " + item + more, _FONT, _SIZE) > self.width:
                return text + more
            text += "; " + item
        return text
