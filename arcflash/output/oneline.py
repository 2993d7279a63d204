"""A one-line picture of a site drawn by the tool (matplotlib): sources, transformers, buses, devices."""

from __future__ import annotations

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402

#: Sites with more buses than this get no one-line picture (it would not be legible).
MAX_BUSES = 300


def _branches(site):
    for ident, t in site.transformers.items():
        yield ident, t.primary_bus, t.secondary_bus, "transformer", True
    for ident, c in site.cables.items():
        yield ident, c.from_bus, c.to_bus, "cable", True
    for ident, i in site.impedances.items():
        yield ident, i.from_bus, i.to_bus, "impedance", True
    for ident, s in site.switches.items():
        yield ident, s.from_bus, s.to_bus, "switch", s.normally == "closed"


def _layout(site):
    """Tidy-tree positions: depth down the page, leaves spread across."""
    neighbours = {b: [] for b in site.buses}
    for ident, a, b, kind, closed in _branches(site):
        neighbours[a].append((b, ident, kind, closed))
        neighbours[b].append((a, ident, kind, closed))
    roots = [u.bus for u in site.utilities.values()] + [g.bus for g in site.generators.values()]
    roots += [b for b in site.buses if b not in roots]
    children, depth, seen, drawn = {}, {}, set(), []
    for root in roots:
        if root in seen:
            continue
        seen.add(root)
        depth[root] = 0
        queue = [root]
        while queue:
            node = queue.pop(0)
            children[node] = []
            for other, ident, kind, closed in sorted(neighbours[node], key=lambda n: (not n[3], n[0])):
                if other in seen:
                    if node < other or (other, node) not in {(d[0], d[1]) for d in drawn}:
                        drawn.append((node, other, ident, kind, closed, False))
                    continue
                seen.add(other)
                depth[other] = depth[node] + 1
                children[node].append(other)
                drawn.append((node, other, ident, kind, closed, True))
                queue.append(other)
    x, next_x = {}, [0.0]

    def place(node):
        if not children[node]:
            x[node] = next_x[0]
            next_x[0] += 1.0
        else:
            for child in children[node]:
                place(child)
            x[node] = sum(x[c] for c in children[node]) / len(children[node])

    for root in roots:
        if root not in x and depth.get(root) == 0:
            place(root)
    return x, depth, drawn


def oneline_figure(site):
    """The one-line picture, or None for a site of more than :data:`MAX_BUSES` buses."""
    if len(site.buses) > MAX_BUSES:
        return None
    x, depth, drawn = _layout(site)
    width = max(6.0, 0.9 * (max(x.values()) + 1))
    height = max(4.0, 1.3 * (max(depth.values()) + 1))
    figure, axes = plt.subplots(figsize=(width, height))
    device_at = {}
    for ident, device in site.devices.items():
        device_at.setdefault(device.branch, []).append((ident, device.at_bus))
    for a, b, ident, kind, closed, tree in drawn:
        xa, ya, xb, yb = x[a], -depth[a], x[b], -depth[b]
        style = "-" if closed else "--"
        axes.plot([xa, xb], [ya, yb], style, color="0.25" if tree else "0.6", linewidth=1.0, zorder=1)
        mx, my = (xa + xb) / 2, (ya + yb) / 2
        if kind == "transformer":
            axes.plot([mx, mx], [my + 0.06, my - 0.06], "o", markersize=9, markerfacecolor="white",
                      markeredgecolor="0.2", zorder=3)
        if kind == "switch":
            axes.text(mx + 0.05, my, "NO" if not closed else "", fontsize=6, color="0.4")
        for device, at_bus in device_at.get(ident, []):
            near = (xa, ya) if at_bus == a else (xb, yb)
            fx, fy = near[0] + (mx - near[0]) * 0.45, near[1] + (my - near[1]) * 0.45
            axes.plot([fx], [fy], "s", markersize=5, color="tab:red", zorder=4)
            axes.text(fx + 0.06, fy, device, fontsize=5, color="tab:red", va="center")
    for bus, item in site.buses.items():
        if bus not in x:
            continue
        axes.plot([x[bus] - 0.3, x[bus] + 0.3], [-depth[bus]] * 2, color="black", linewidth=3, zorder=2)
        axes.text(x[bus], -depth[bus] + 0.12, f"{bus}\n{item.nominal_kv:g} kV", fontsize=6, ha="center",
                  va="bottom")
    for label, items in (("U", site.utilities.values()), ("G", site.generators.values()),
                         ("M", site.motors.values())):
        for item in items:
            if item.bus in x:
                dy = 0.45 if label != "M" else -0.4
                axes.plot([x[item.bus]], [-depth[item.bus] + dy], "o", markersize=11, markerfacecolor="white",
                          markeredgecolor="black", zorder=3)
                axes.text(x[item.bus], -depth[item.bus] + dy, label, fontsize=7, ha="center", va="center", zorder=4)
    axes.set_axis_off()
    axes.set_title(f"One-line picture of {site.facility.name} (drawn by arcflash; red squares: protective "
                   "devices; dashed: normally open)", fontsize=8)
    figure.tight_layout()
    return figure
