"""A TCC page of the report drawn as vector graphics from the study's own results (:class:`TccData`).

Log-log axes (current referred to the bus's voltage against clearing time), one curve per device on the
bus's source paths (the slower edge of its band, as the study uses it), the bus's bolted, arcing and
reduced arcing currents as vertical lines, and each device's opening in the study as a point. Neutral
colours: devices are told apart by line pattern and named in the key.
"""

from __future__ import annotations

import math

import numpy as np
from reportlab.lib.units import inch
from reportlab.platypus import Flowable

from ..study.clearing import device_curve

#: Plot range: current [A] and time [s], whole decades.
CURRENT_DECADES, TIME_DECADES = (1, 6), (-2, 3)
#: Line patterns of the devices, in turn (on, off lengths in points; empty: solid).
PATTERNS = ((), (5, 2), (1.5, 1.5), (6, 2, 1.5, 2), (3, 3), (8, 3))
_GREYS = (0.0, 0.35)


class TccPage(Flowable):
    """The TCC plot of one bus, ``width_in`` wide, from the study's :class:`arcflash.study.tcc_data.TccData`."""

    def __init__(self, site, data, width_in=7.0, height_in=7.6):
        super().__init__()
        self.site, self.data = site, data
        self.width, self.height = width_in * inch, height_in * inch
        self.curves = []
        currents = np.logspace(0, 6.5, 500)
        for device in data.devices:
            curve = device_curve(site, device.device, maintenance=device.maintenance, zone=device.zone)
            times = np.asarray(curve.clearing_time_s(currents), dtype=float)
            self.curves.append((device, currents * device.kv / data.kv, times))

    def wrap(self, available_width, available_height):
        return self.width, self.height

    def _xy(self, amps, seconds):
        x0, y0, w, h = self.box
        (c0, c1), (t0, t1) = CURRENT_DECADES, TIME_DECADES
        return (x0 + (math.log10(amps) - c0) / (c1 - c0) * w, y0 + (math.log10(seconds) - t0) / (t1 - t0) * h)

    def draw(self):
        canvas, data = self.canv, self.data
        key_height = 14 + 10 * len(data.devices)
        bottom = 40.0 + key_height
        self.box = (44.0, bottom, self.width - 54.0, self.height - bottom - 50.0)
        x0, y0, w, h = self.box
        canvas.saveState()
        self._grid(canvas)
        clip = canvas.beginPath()
        clip.rect(x0, y0, w, h)
        canvas.clipPath(clip, stroke=0, fill=0)
        for number, (device, amps, times) in enumerate(self.curves):
            self._curve(canvas, amps, times, number)
        for label, ka, pattern in (("bolted", data.bolted_ka, ()), ("arcing", data.arcing_ka, (4, 2)),
                                   ("reduced arcing", data.reduced_arcing_ka, (1, 2))):
            if np.isfinite(ka) and ka > 0:
                x, _ = self._xy(ka * 1000.0, 1.0)
                canvas.setDash(list(pattern), 0) if pattern else canvas.setDash()
                canvas.setLineWidth(0.8)
                canvas.setStrokeGray(0.45)
                canvas.line(x, y0, x, y0 + h)
        canvas.setDash()
        points = []
        for number, (device, _, _) in enumerate(self.curves):
            amps = device.arcing_a if self.data.governing_case != "reduced" else device.reduced_arcing_a
            if np.isfinite(amps) and amps > 0 and np.isfinite(device.opens_at_s) and device.opens_at_s > 0:
                x, y = self._xy(amps * device.kv / data.kv, device.opens_at_s)
                canvas.setFillGray(0.0)
                canvas.circle(x, y, 2.2, stroke=0, fill=1)
                points.append((x, y, f"{device.device} opens at {device.opens_at_s:.3f} s"))
        canvas.restoreState()
        self._labels(canvas, points)
        self._key(canvas)

    def _grid(self, canvas):
        x0, y0, w, h = self.box
        (c0, c1), (t0, t1) = CURRENT_DECADES, TIME_DECADES
        canvas.setLineWidth(0.25)
        for decade in range(c0, c1 + 1):
            for step in range(1, 10):
                amps = step * 10.0 ** decade
                if amps > 10.0 ** c1:
                    break
                x, _ = self._xy(amps, 1.0)
                canvas.setStrokeGray(0.55 if step == 1 else 0.85)
                canvas.line(x, y0, x, y0 + h)
                if step == 1:
                    canvas.setFont("Helvetica", 7)
                    canvas.drawCentredString(x, y0 - 10, f"{amps:,.0f}")
        for decade in range(t0, t1 + 1):
            for step in range(1, 10):
                seconds = step * 10.0 ** decade
                if seconds > 10.0 ** t1:
                    break
                _, y = self._xy(1.0 * 10 ** c0, seconds)
                canvas.setStrokeGray(0.55 if step == 1 else 0.85)
                canvas.line(x0, y, x0 + w, y)
                if step == 1:
                    canvas.setFont("Helvetica", 7)
                    canvas.drawRightString(x0 - 3, y - 2.5, f"{seconds:g}")
        canvas.setStrokeGray(0.0)
        canvas.setLineWidth(0.6)
        canvas.rect(x0, y0, w, h, stroke=1, fill=0)
        canvas.setFont("Helvetica", 8)
        canvas.drawCentredString(x0 + w / 2, y0 - 22, f"current [A] referred to {self.data.kv:g} kV")
        canvas.saveState()
        canvas.translate(x0 - 30, y0 + h / 2)
        canvas.rotate(90)
        canvas.drawCentredString(0, 0, "clearing time [s]")
        canvas.restoreState()

    def _curve(self, canvas, amps, times, number):
        shown = np.isfinite(times) & (times > 0)
        if not shown.any():
            return
        canvas.setStrokeGray(_GREYS[number % 2])
        canvas.setLineWidth(1.1)
        pattern = PATTERNS[number % len(PATTERNS)]
        canvas.setDash(list(pattern), 0) if pattern else canvas.setDash()
        path, drawing = canvas.beginPath(), False
        for a, t, ok in zip(amps.tolist(), times.tolist(), shown.tolist()):
            if not ok:
                drawing = False
                continue
            x, y = self._xy(a, min(max(t, 10.0 ** (TIME_DECADES[0] - 1)), 10.0 ** (TIME_DECADES[1] + 1)))
            path.lineTo(x, y) if drawing else path.moveTo(x, y)
            drawing = True
        canvas.drawPath(path, stroke=1, fill=0)

    def _labels(self, canvas, points):
        """The opening points' labels, moved down until none overlaps another."""
        canvas.setFont("Helvetica", 7)
        placed = []
        for x, y, text in sorted(points, key=lambda p: -p[1]):
            width = canvas.stringWidth(text, "Helvetica", 7)
            tx, ty = x + 4, y + 3
            while any(abs(ty - py) < 8 and tx < px + pw and px < tx + width for px, py, pw in placed):
                ty -= 8
            placed.append((tx, ty, width))
            canvas.drawString(tx, ty, text)

    def _key(self, canvas):
        data = self.data
        x0, y0, w, h = self.box
        canvas.setFont("Helvetica-Bold", 9)
        canvas.drawString(x0, y0 + h + 38, f"{data.bus} - scenario '{data.scenario}', {data.governing_case} "
                                           "arcing current governs")
        canvas.setFont("Helvetica", 7)
        canvas.drawString(x0, y0 + h + 26, f"bolted {data.bolted_ka:.2f} kA (solid), arcing {data.arcing_ka:.2f} kA "
                                           f"(dashed), reduced arcing {data.reduced_arcing_ka:.2f} kA (dotted), at "
                                           f"{data.kv:g} kV; points: openings in the study")
        sequence = data.sequence or ("no protective device ends this arc" if not data.governing_device else
                                     f"{data.governing_device} opens at {data.clearing_time_s:.3f} s")
        canvas.drawString(x0, y0 + h + 14, f"Sequence: {sequence}"[:170])
        y = y0 - 38
        if not self.curves:
            canvas.drawString(x0, y, "No protective device on the source paths of this bus.")
        for number, (device, _, _) in enumerate(self.curves):
            pattern = PATTERNS[number % len(PATTERNS)]
            canvas.setStrokeGray(_GREYS[number % 2])
            canvas.setLineWidth(1.1)
            canvas.setDash(list(pattern), 0) if pattern else canvas.setDash()
            canvas.line(x0, y + 2.5, x0 + 30, y + 2.5)
            canvas.setDash()
            words = f"{device.device} ({device.kv:g} kV)"
            words += ", energy-reducing maintenance switching on" if device.maintenance else ""
            words += ", its zone settings in force (the bus is in its zone)" if device.zone else ""
            canvas.drawString(x0 + 36, y, words)
            y -= 10
