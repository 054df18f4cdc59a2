"""Figures for the review package (matplotlib, object API only: no global state).

This file imports nothing from planshear at module level: the figure worker processes
run it alone (``python -c 'runpy.run_path(<this file>)' <batch>``), with numpy and
matplotlib only, which starts in a third of the time the whole package takes.

Palette and line styles (colour-blind safe, distinguishable in black-and-white print):
each assumption has a colour, a line style and a marker (flexible: orange, long dashes,
squares; rigid: purple, dash-dot, triangles; semi-rigid: blue-green, solid, circles);
walls red, members green, grid grey. The same colours are used in the HTML report.

Every figure function takes plain data (numbers, arrays, dicts, plan-level dataclasses)
so that :func:`render` can draw it in a separate process. :func:`render` draws a figure
once: PNG for the PDF pages and the HTML report (and, where asked, SVG for the vector
plan drawing). Figures use fixed margins instead of tight layout, which measured as
about a quarter of the drawing time.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.collections import PolyCollection
from matplotlib.figure import Figure
from matplotlib.ticker import MaxNLocator

__all__ = ["STYLE", "plan_figure", "member_diagram_figure", "unit_shear_figure", "shear_map_figure",
           "deflected_figure", "span_deflection_figure", "line_gaps", "broken_at", "render", "DPI"]

#: Resolution of the PNG figures (dots per inch): sharp enough on paper at the 7-inch
#: width of a page; the PDF's time to compress the images grows with its square.
DPI = 130

STYLE = {
    "flexible": {"color": "#b35806", "linestyle": (0, (6, 2)), "marker": "s"},
    "rigid": {"color": "#542788", "linestyle": "-.", "marker": "^"},
    "semirigid": {"color": "#1f6f8b", "linestyle": "-", "marker": "o"},
}
INK = "#222222"
PAPER = "#fbfaf6"
WALL = "#c0392b"
MEMBER = "#16a085"
GRID = "#9a9a9a"
SINGULAR = "#d9d9d9"  # zones of singular finite-element peaks


def _figure(width: float = 7.5, height: float = 4.5, margins: tuple[float, float, float, float] | None = None
            ) -> tuple[Figure, object]:
    """A figure with one axes; ``margins`` (left, bottom, right, top) in inches, default
    room for tick labels, axis labels and a title."""
    fig = Figure(figsize=(width, height), facecolor=PAPER)
    FigureCanvasAgg(fig)
    left, bottom, right, top = margins or (0.75, 0.55, 0.2, 0.35)
    ax = fig.add_axes([left / width, bottom / height, 1 - (left + right) / width, 1 - (bottom + top) / height])
    ax.set_facecolor("white")
    for spine in ax.spines.values():
        spine.set_color(INK)
    ax.tick_params(colors=INK, labelsize=8)
    # Up to 7 ticks per axis: ticks are most of an axes' drawing time.
    ax.xaxis.set_major_locator(MaxNLocator(7))
    ax.yaxis.set_major_locator(MaxNLocator(7))
    return fig, ax


def _labels(fig: Figure, ax, title: str, xlabel: str = "", ylabel: str = "") -> None:
    """Title and axis labels as figure text at fixed places around the axes (matplotlib's
    own placement measures every tick label first: a quarter of a diagram's drawing time).
    The margins of :func:`_figure` leave room for them."""
    box = ax.get_position()
    width, height = fig.get_size_inches()
    fig.text(0.5 * (box.x0 + box.x1), box.y1 + 0.07 / height, title, ha="center", va="bottom", fontsize=9,
             color=INK)
    if xlabel:
        fig.text(0.5 * (box.x0 + box.x1), box.y0 - 0.3 / height, xlabel, ha="center", va="top", fontsize=8,
                 color=INK)
    if ylabel:
        fig.text(box.x0 - 0.55 / width, 0.5 * (box.y0 + box.y1), ylabel, ha="right", va="center", rotation=90,
                 rotation_mode="anchor", fontsize=8, color=INK)


#: Colour of loads on the plan (Dark2 orange: apart from the assumption colours and the wall red).
LOAD = "#d95f02"
#: Label offsets tried in turn (points): 8 directions at growing distances.
_OFFSETS = [(r * dx, r * dy) for r in (5, 12, 22, 34, 48, 66, 88)
            for dx, dy in ((1, 1), (1, -1), (-1, 1), (-1, -1), (1, 0), (-1, 0), (0, 1), (0, -1))]


#: A light box behind plan labels so that lines do not strike through them.
_LABEL_BOX = {"boxstyle": "square,pad=0.1", "fc": "white", "ec": "none", "alpha": 0.8}


class _LabelPlacer:
    """Places annotations where their drawn extent overlaps no label placed before (and
    no registered obstacle), trying :data:`_OFFSETS` in turn; far offsets get a leader
    line. Extents come from the figure's renderer, so the layout must be final first."""

    def __init__(self, fig: Figure, ax) -> None:
        self.ax = ax
        self.renderer = fig.canvas.get_renderer()
        self.boxes: list = []

    def obstacle(self, artist) -> None:
        self.boxes.append(artist.get_window_extent(self.renderer))

    def place(self, text: str, xy, offsets=None, **style) -> object:
        inside = self.ax.get_window_extent(self.renderer)
        best, least = None, np.inf
        for dx, dy in offsets or _OFFSETS:
            leader = {"arrowstyle": "-", "lw": 0.5, "color": style.get("color", INK), "shrinkA": 0, "shrinkB": 2} \
                if max(abs(dx), abs(dy)) > 12 else None
            ann = self.ax.annotate(text, xy, xytext=(dx, dy), textcoords="offset points", fontsize=7,
                                   ha="left" if dx > 0 else "right" if dx < 0 else "center",
                                   va="bottom" if dy > 0 else "top" if dy < 0 else "center",
                                   arrowprops=leader, zorder=9, bbox=_LABEL_BOX, **style)
            box = ann.get_window_extent(self.renderer)
            fits = (box.x0 >= inside.x0 and box.x1 <= inside.x1 and box.y0 >= inside.y0 and box.y1 <= inside.y1)
            if fits and not any(box.overlaps(b) for b in self.boxes):
                self.boxes.append(box)
                return ann
            ann.remove()
            overlap = sum(max(0.0, min(box.x1, b.x1) - max(box.x0, b.x0)) * max(0.0, min(box.y1, b.y1) - max(box.y0, b.y0))
                          for b in self.boxes) + (0.0 if fits else box.width * box.height)
            if overlap < least:
                best, least = (dx, dy), overlap
        # Nowhere free: the candidate with the least overlap (the demo's test would catch it).
        ann = self.ax.annotate(text, xy, xytext=best, textcoords="offset points", fontsize=7, zorder=9,
                               bbox=_LABEL_BOX, **style)
        self.boxes.append(ann.get_window_extent(self.renderer))
        return ann


def _nice(length: float) -> float:
    """A round length (1, 2 or 5 × 10^k) not above ``length``."""
    power = 10.0 ** np.floor(np.log10(length))
    return max(m * power for m in (1, 2, 5) if m * power <= length)


def _dimension(ax, a: float, b: float, at: float, horizontal: bool, text_offset: float, unit: str,
               placed: list) -> None:
    """A dimension line between a and b at ``at`` (plan units) with end ticks and its length."""
    tick = 0.6 * text_offset
    if horizontal:
        ax.plot([a, b], [at, at], color=INK, lw=0.6)
        for x in (a, b):
            ax.plot([x, x], [at - tick, at + tick], color=INK, lw=0.6)
        placed.append(ax.text(0.5 * (a + b), at + text_offset, f"{b - a:g} {unit}", fontsize=6.5, ha="center",
                              va="bottom", color=INK))
    else:
        ax.plot([at, at], [a, b], color=INK, lw=0.6)
        for y in (a, b):
            ax.plot([at - tick, at + tick], [y, y], color=INK, lw=0.6)
        placed.append(ax.text(at + text_offset, 0.5 * (a + b), f"{b - a:g} {unit}", fontsize=6.5, ha="left",
                              va="center", rotation=90, color=INK))


def plan_figure(doc: dict, plan) -> Figure:
    """The plan as a reviewer checks it: outline, openings, zones, grid lines, walls,
    members; the loads (area weights shaded with their value, line weights as heavy lines,
    point weights as squares, wind faces with arrows); the center of mass and of rigidity;
    dimension strings (grid spacing and overall) and a scale bar. Labels are placed where
    they overlap no other label (renderer extents), with leader lines where moved far."""
    from ..loads import windward_segments  # figures are drawn after the analysis
    from ..units import OutputUnits

    units = OutputUnits.for_plan(plan.length_unit)
    unit = plan.length_unit
    scale = 1.0 / plan.length_scale
    fig, ax = _figure(7.5, 6.0, (0.1, 0.1, 0.1, 0.45))  # axes off: room for the two-line title only
    outline = np.vstack([plan.outline, plan.outline[:1]]) * scale
    (x0, y0), (x1, y1) = outline.min(axis=0), outline.max(axis=0)
    width, depth = x1 - x0, y1 - y0
    size = max(width, depth)
    ax.set_xlim(x0 - 0.2 * size, x1 + 0.2 * size)
    ax.set_ylim(y0 - 0.22 * size, y1 + 0.2 * size)
    ax.set_aspect("equal", adjustable="box")
    ax.set_axis_off()
    ax.set_title("Plan: walls (red), collectors (green dashed; dotted: implied in the semi-rigid model),\n"
                 "loads (orange; wind shown for +x and +y), zones (hatched), CM center of mass, CR center of rigidity",
                 fontsize=8)
    labels = _LabelPlacer(fig, ax)

    ax.fill(outline[:, 0], outline[:, 1], color="#f1eee4", zorder=0)
    ax.plot(outline[:, 0], outline[:, 1], color=INK, lw=1.6, zorder=3)
    for opening in plan.openings:
        xy = np.vstack([opening, opening[:1]]) * scale
        ax.fill(xy[:, 0], xy[:, 1], color="white", zorder=2)
        ax.plot(xy[:, 0], xy[:, 1], color=INK, lw=1.0, ls=":", zorder=3)
        ax.plot([xy[0, 0], xy[2, 0]], [xy[0, 1], xy[2, 1]], color=INK, lw=0.5, zorder=3)
    # Grid bubbles at the top and right ends, dimension strings beyond them; wind arrows
    # come in from the bottom and left.
    bubble = 0.06 * size
    for line in plan.grid_lines:
        a, b = line.point(line.t_min) * scale, line.point(line.t_max) * scale
        ax.plot([a[0], b[0]], [a[1], b[1]], color=GRID, lw=0.6, ls=(0, (8, 3, 2, 3)), zorder=1)
        if line.family == "x":
            at = np.array([a[0], y1 + bubble])
        elif line.family == "y":
            at = np.array([x1 + bubble, a[1]])
        else:
            at = b + bubble * (b - a) / np.linalg.norm(b - a)
        ax.plot([b[0], at[0]], [b[1], at[1]], color=GRID, lw=0.5, zorder=1)
        labels.obstacle(ax.text(*at, line.name, fontsize=8, color=INK, ha="center", va="center", zorder=8,
                                bbox={"boxstyle": "circle,pad=0.2", "fc": "white", "ec": GRID, "lw": 0.6}))
    for member in plan.members:
        line = plan.line(member.line)
        a, b = line.point(member.t_from) * scale, line.point(member.t_to) * scale
        ax.plot([a[0], b[0]], [a[1], b[1]], color=MEMBER, lw=2.2, ls="--", zorder=4)
    # Collectors the semi-rigid model implies on wall pieces without a declared member.
    for piece in doc["assumptions"].get("semirigid", {}).get("wall_pieces", ()):
        line = plan.line(piece["line"])
        for segment in piece.get("segments", ()):
            if segment["kind"] == "implied":
                a = line.point(segment["from"] * plan.length_scale) * scale
                b = line.point(segment["to"] * plan.length_scale) * scale
                ax.plot([a[0], b[0]], [a[1], b[1]], color=MEMBER, lw=1.4, ls=":", zorder=4)
    for wall in plan.walls:
        a, b = wall.start * scale, wall.end * scale
        labels.obstacle(ax.plot([a[0], b[0]], [a[1], b[1]], color=WALL, lw=4.5, solid_capstyle="butt", zorder=5)[0])

    # Dimension strings: grid spacing (inner) and overall (outer), top and right.
    placed: list = []
    gap = 0.05 * size
    text_offset = 0.012 * size
    for horizontal, family, lo, hi, base in ((True, "x", x0, x1, y1 + bubble + gap),
                                             (False, "y", y0, y1, x1 + bubble + gap)):
        index = 0 if horizontal else 1
        stations = [float(g.origin[index] * scale) for g in plan.grid_lines if g.family == family]
        chain = sorted({round(v, 6) for v in [lo, hi, *stations] if lo - 1e-9 * size <= v <= hi + 1e-9 * size})
        if len(chain) > 2:  # the chain would only repeat the overall dimension
            for a, b in zip(chain[:-1], chain[1:], strict=True):
                _dimension(ax, a, b, base, horizontal, text_offset, unit, placed)
        _dimension(ax, lo, hi, base + gap, horizontal, text_offset, unit, placed)
    # Scale bar below the plan on the right: four blocks of a round length.
    step = _nice(width / 8)
    bar_y = y0 - 0.17 * size
    start = x1 - 4 * step
    for k in range(4):
        ax.fill([start + k * step, start + (k + 1) * step, start + (k + 1) * step, start + k * step],
                [bar_y, bar_y, bar_y + 0.012 * size, bar_y + 0.012 * size],
                color=INK if k % 2 == 0 else "white", ec=INK, lw=0.6, zorder=3)
    for k in (0, 2, 4):
        placed.append(ax.text(start + k * step, bar_y - 0.008 * size, f"{k * step:g}", fontsize=6.5, ha="center",
                              va="top", color=INK))
    placed.append(ax.text(start - 0.02 * size, bar_y + 0.006 * size, f"scale ({unit})", fontsize=6.5, ha="right",
                          va="center", color=INK))
    for text in placed:
        labels.obstacle(text)

    # Loads: area weights shaded with their value, line weights, point weights, wind faces.
    later: list = []  # (priority, text, point, colour) of the labels, placed at the end
    pressure = (1.0 / 47.880258980336, "psf") if units.force == "kip" else (1.0 / 1000.0, "kN/m²")
    seismic = [load for load in plan.loads if load.kind == "seismic"]
    for load in seismic:
        areas, line_weights, points = _load_parts(plan, load)
        for geometry, value in areas:
            for polygon in getattr(geometry, "geoms", [geometry]):
                xy = np.asarray(polygon.exterior.coords) * scale
                ax.fill(xy[:, 0], xy[:, 1], color=LOAD, alpha=0.10, lw=0, zorder=0.5)
            spot = np.asarray(geometry.representative_point().coords[0]) * scale
            later.append((3, f"{load.name}: {value * pressure[0]:.3g} {pressure[1]}", spot, LOAD))
        for a, b, q in line_weights:
            a, b = a * scale, b * scale
            labels.obstacle(ax.plot([a[0], b[0]], [a[1], b[1]], color=LOAD, lw=3.0, alpha=0.8, zorder=6)[0])
            later.append((2, f"{load.name}: {units.line_force_out(q):.3g} {units.line_force}", 0.5 * (a + b), LOAD))
        for x, y, p in points:
            marker = ax.plot(x * scale, y * scale, marker="s", ms=7, color=LOAD, mec=INK, mew=0.5, zorder=7)[0]
            labels.obstacle(marker)
            later.append((2, f"{load.name}: {units.force_out(p):.3g} {units.force}", (x * scale, y * scale), LOAD))
    for load in plan.loads:
        if load.kind != "edge":
            continue
        for axis in load.directions:
            direction = np.eye(2)[0 if axis == "x" else 1]
            for a, b, _ in windward_segments(plan, axis, +1):
                a, b = a * scale, b * scale
                count = max(2, int(np.linalg.norm(b - a) / (0.12 * size)) + 1)
                for t in np.linspace(0.15, 0.85, count):
                    tip = a + t * (b - a)
                    ax.annotate("", tip, xytext=tip - 0.07 * size * direction, zorder=6,
                                arrowprops={"arrowstyle": "-|>", "color": LOAD, "lw": 1.0})
            tail = a + 0.15 * (b - a) - 0.07 * size * direction
            later.append((2, f"{load.name}+{axis}: {units.line_force_out(load.intensity):.3g} {units.line_force}",
                          tail, LOAD))
    for zone in plan.zones:
        xy = np.asarray(zone.polygon.exterior.coords) * scale
        ax.fill(xy[:, 0], xy[:, 1], facecolor="none", edgecolor="#7f8c8d", hatch="///", lw=0.8, zorder=1)
        later.append((3, f"zone {zone.name}", np.asarray(zone.polygon.representative_point().coords[0]) * scale,
                      "#555555"))
    for wall in plan.walls:
        later.append((1, wall.id, 0.5 * (wall.start + wall.end) * scale, WALL))
    for name, load in doc["plan"]["loads"].items():
        if "center_of_mass" in load:  # positions in results.json are in plan units
            cm = np.asarray(load["center_of_mass"], dtype=float)
            labels.obstacle(ax.plot(cm[0], cm[1], marker="P", ms=9, color=INK, mfc="white", zorder=7)[0])
            later.append((0, f"CM ({name})", cm, INK))
    rigid = doc["assumptions"].get("rigid", {})
    if "center_of_rigidity" in rigid:
        cr = np.asarray(rigid["center_of_rigidity"], dtype=float)
        labels.obstacle(ax.plot(cr[0], cr[1], marker="X", ms=9, color=INK, zorder=7)[0])
        later.append((0, "CR", cr, INK))
    # Labels last, most important first: centers, walls, loads, zones.
    for _, text, xy, color in sorted(later, key=lambda item: item[0]):
        labels.place(text, xy, color=color)
    return fig


def _load_parts(plan, load):
    """Area weights (geometry m, N/m²), line weights (start, end m, N/m) and point weights
    (x, y m, N) of a seismic load, as planshear.loads takes them."""
    from ..loads import _weight_parts

    areas, lines, points = _weight_parts(plan, load)
    return areas, lines, [(x, y, p) for x, y, p, _ in points]


def member_diagram_figure(title: str, xlabel: str, ylabel: str, series: list[dict], marks: list[dict],
                          note: str = "") -> Figure:
    """Axial force along a collector or chord. ``series``: dicts with ``assumption``,
    ``label``, ``points`` ([[s, N], …], NaN rows break the line), ``governs`` (drawn
    heavy) and optional ``reversed`` (a seismic diagram with the load reversed: dotted); ``marks``: dicts with ``assumption``, ``s``, ``value`` and ``text`` (the design
    value, annotated beside its point)."""
    rows = _key_rows(len(series))
    bottom = 0.62 + KEY_ROW * rows + (0.16 if note else 0.0)
    fig, ax = _figure(7.5, 2.4 + bottom, (0.75, bottom, 0.2, 0.3))
    entries = []
    for item in series:
        diagram = np.asarray(item["points"], dtype=float).reshape(-1, 2)
        style = STYLE[item["assumption"]]
        line = {"color": style["color"], "ls": (0, (1, 1.2)) if item.get("reversed") else style["linestyle"],
                "lw": 2.2 if item["governs"] else 0.9, "alpha": 1.0 if item["governs"] else 0.75}
        ax.plot(diagram[:, 0], diagram[:, 1], **line)
        entries.append((item["label"], line))
    _marks(ax, marks, bold=True)
    ax.axhline(0.0, color=INK, lw=0.6)
    ax.margins(y=0.25)  # room for the design-value labels
    _labels(fig, ax, title, xlabel, ylabel)
    _key(fig, entries, 0.06 + (0.16 if note else 0.0))
    if note:
        fig.text(0.01, 0.04 / fig.get_size_inches()[1], note, fontsize=6.5, color=INK)
    return fig


#: Height of a row of the key under a diagram (in) and entries per row.
KEY_ROW = 0.16
KEY_COLUMNS = 3


def _key_rows(entries: int) -> int:
    return -(-entries // KEY_COLUMNS)


def _key(fig: Figure, entries: list[tuple[str, dict]], bottom: float) -> None:
    """The key of a diagram along the bottom of the figure, ``bottom`` inches up: a short
    stroke of each line style and its label, in rows (drawn directly: matplotlib's legend
    measures and packs its boxes, an eighth of a diagram's drawing time)."""
    from matplotlib.lines import Line2D
    from matplotlib.patches import Rectangle

    width, height = fig.get_size_inches()
    column = (width - 0.9) / KEY_COLUMNS
    rows = _key_rows(len(entries))
    for k, (label, style) in enumerate(entries):
        x = 0.75 + (k % KEY_COLUMNS) * column
        y = bottom + (rows - 1 - k // KEY_COLUMNS) * KEY_ROW + 0.05
        if style.get("patch"):
            fig.add_artist(Rectangle((x / width, (y - 0.04) / height), 0.3 / width, 0.08 / height,
                                     transform=fig.transFigure, color=style["patch"], lw=0))
        else:
            fig.add_artist(Line2D([x / width, (x + 0.3) / width], [y / height] * 2, transform=fig.transFigure,
                                  **style))
        fig.text((x + 0.36) / width, y / height, label, fontsize=6.5, va="center", color=INK)


def _marks(ax, marks: list[dict], bold: bool) -> None:
    """Marked values: a hollow marker and a boxed label on the side of the point that
    faces the middle of the axes (labels near the ends stay inside the figure)."""
    if not marks:
        return
    ax.autoscale_view()
    lo, hi = ax.get_xlim()
    for mark in marks:
        style = STYLE[mark["assumption"]]
        ax.plot([mark["s"]], [mark["value"]], marker=style["marker"], color=style["color"], ms=8, mfc="white", mew=1.6)
        right = mark["s"] > 0.5 * (lo + hi)
        up = mark["value"] >= 0
        ax.annotate(mark["text"], (mark["s"], mark["value"]), xytext=(-8 if right else 8, 8 if up else -10),
                    textcoords="offset points", ha="right" if right else "left", va="bottom" if up else "top",
                    fontsize=7, color=INK, weight="bold" if bold else "normal",
                    bbox={"boxstyle": "round,pad=0.2", "fc": "white", "ec": style["color"], "lw": 0.8})


def unit_shear_figure(title: str, xlabel: str, ylabel: str, series: list[dict], shaded: list[tuple[float, float]],
                      marks: list[dict], note: str) -> Figure:
    """Unit shear along a span: ``series`` dicts with ``assumption``, ``label``, ``s``,
    ``values`` and optional ``thin`` (a secondary curve); ``shaded`` (s0, s1) zones where
    finite-element values are singular peaks (not design values); ``marks`` as in
    :func:`member_diagram_figure`."""
    rows = _key_rows(len(series) + bool(shaded))
    bottom = 0.62 + KEY_ROW * rows + 0.16
    fig, ax = _figure(7.5, 2.7 + bottom, (0.75, bottom, 0.2, 0.3))
    for s0, s1 in shaded:
        ax.axvspan(s0, s1, color=SINGULAR, lw=0, zorder=0)
    entries = []
    for item in series:
        style = STYLE[item["assumption"]]
        thin = item.get("thin", False)
        line = {"color": style["color"], "ls": ":" if thin else style["linestyle"], "lw": 0.9 if thin else 1.6}
        ax.plot(item["s"], item["values"], **line)
        entries.append((item["label"], line))
    if shaded:
        entries.append(("singular finite-element peaks: not design values", {"patch": SINGULAR}))
    _marks(ax, marks, bold=False)
    ax.set_ylim(bottom=0.0)
    ax.margins(y=0.2)
    _labels(fig, ax, title, xlabel, ylabel)
    _key(fig, entries, 0.22)
    fig.text(0.01, 0.04 / fig.get_size_inches()[1], note, fontsize=6.5, color=INK)
    return fig


def line_gaps(doc: dict, line: str) -> list[tuple[float, float]]:
    """Gaps (start, end) between the pieces of a line, from the idealized results."""
    for method in doc["assumptions"].values():
        for case_doc in method["cases"].values():
            pieces = case_doc.get("lines", {}).get(line, {}).get("pieces")
            if pieces:
                return [(a["to"], b["from"]) for a, b in zip(pieces[:-1], pieces[1:], strict=True) if b["from"] > a["to"]]
    return []


def broken_at(points: list, gaps: list[tuple[float, float]]) -> list:
    """Diagram points with a NaN row wherever consecutive points straddle a gap."""
    out: list = []
    for point in points:
        if out and any(out[-1][0] <= g0 and point[0] >= g1 for g0, g1 in gaps):
            out.append([np.nan, np.nan])
        out.append(point)
    return out


def shear_map_figure(polygons: np.ndarray, values: np.ndarray, title: str, label: str) -> Figure:
    """Unit shear per element: ``polygons`` (n_e, corners, 2) in plan units, ``values``
    (n_e,) in output units; the maximum marked."""
    fig, ax = _figure(7.5, 5.0, (0.7, 0.5, 0.3, 0.35))
    collection = PolyCollection(polygons, array=values, cmap="cividis", edgecolors="face", linewidths=0.1)
    collection.set_rasterized(True)  # keeps vector output small
    ax.add_collection(collection)
    cbar = fig.colorbar(collection, ax=ax, shrink=0.8)
    cbar.set_label(label, fontsize=8)
    k = int(np.argmax(values))
    where = polygons[k].mean(axis=0)
    ax.plot(*where, marker="*", ms=12, color=WALL, mec="white")
    ax.annotate(f"max {values[k]:.3g} (local; may be a singular peak)", where, xytext=(6, 6),
                textcoords="offset points", fontsize=8, color=WALL)
    ax.autoscale_view()
    ax.set_aspect("equal")
    _labels(fig, ax, title)
    return fig


def deflected_figure(moved: np.ndarray, values: np.ndarray, outline: np.ndarray, title: str, label: str) -> Figure:
    """Deformed elements ``moved`` (n_e, corners, 2, plan units, magnified) coloured by
    ``values`` (n_e,), with the undeformed ``outline`` (n, 2) dashed."""
    fig, ax = _figure(7.5, 5.0, (0.7, 0.5, 0.3, 0.35))
    collection = PolyCollection(moved, array=values, cmap="viridis", edgecolors="face", linewidths=0.1)
    collection.set_rasterized(True)
    ax.add_collection(collection)
    closed = np.vstack([outline, outline[:1]])
    ax.plot(closed[:, 0], closed[:, 1], color=INK, lw=0.8, ls="--")
    cbar = fig.colorbar(collection, ax=ax, shrink=0.8)
    cbar.set_label(label, fontsize=8)
    ax.autoscale_view()
    ax.set_aspect("equal")
    _labels(fig, ax, title)
    return fig


def span_deflection_figure(spans: list[dict], case: str, axis: str, units: dict, disp_factor: float,
                           length_scale: float, length_unit: str) -> Figure:
    """The diaphragm's own deflection along the span for one load case (ASCE 7-16
    §12.3.1.3): in each span between lines of resistance, the displacement along the load
    averaged across the depth, relative to the straight line between the support drifts.
    MDD is marked where it occurs (filled marker, value and MDD/ADVE); the largest nodal
    value of the span (a local peak at a wall end, corner or load) is marked hollow and is
    not used for the classification. ``spans``: the fields of
    :class:`planshear.postprocess.classify` span checks as plain dicts (SI);
    ``length_scale``: m per plan length unit."""
    from types import SimpleNamespace

    spans = [SimpleNamespace(**span) for span in spans]
    scale = 1.0 / length_scale
    fig, ax = _figure(7.5, 4.2, (0.75, 0.95, 0.2, 0.3))
    style = STYLE["semirigid"]
    s_index = 0 if axis == "y" else 1
    for span in spans:
        s = span.stations * scale
        ax.plot(s, span.deflection * disp_factor, color=style["color"], lw=1.4)
        k = int(np.argmin(np.abs(span.stations - span.mdd_at[s_index])))
        value = span.deflection[k] * disp_factor
        ax.plot([s[k]], [value], marker="o", color=style["color"], ms=6)
        ratio = f"{span.ratio:.3g}" if span.ratio < 1000 else f"{span.ratio:,.0f}"
        ax.annotate(f"MDD {abs(value):.3g} {units['displacement']}\nMDD/ADVE {ratio}",
                    (s[k], value), textcoords="offset points", xytext=(0, 10 if value >= 0 else -22),
                    ha="center", fontsize=7, color=INK)
        local_s = span.mdd_local_at[s_index] * scale
        local = span.mdd_local * disp_factor * (1 if value >= 0 else -1)
        ax.plot([local_s], [local], marker="o", mfc="none", color=WALL, ms=6, ls="none")
        for line, at in ((span.left_line, s[0]), (span.right_line, s[-1])):
            ax.axvline(at, color=GRID, lw=0.8, ls=":")
            ax.annotate(line, (at, 0), textcoords="offset points", xytext=(2, 2), fontsize=7, color=GRID)
    ax.axhline(0.0, color=INK, lw=0.6)
    ax.margins(y=0.3)  # room for the MDD labels
    ax.plot([], [], marker="o", mfc="none", color=WALL, ls="none", label="largest nodal value (local, not classified on)")
    ax.plot([], [], color=style["color"], marker="o", label="averaged across the depth; MDD marked")
    ax.legend(fontsize=7, loc="upper center", bbox_to_anchor=(0.5, -0.16), ncol=2, frameon=False)
    _labels(fig, ax, f"Diaphragm deflection along the span, semi-rigid, {case} (load along {axis})",
            f"{'x' if axis == 'y' else 'y'} ({length_unit})", f"deflection relative to supports ({units['displacement']})")
    fig.text(0.01, 0.01, "At a line of resistance the curve need not be zero: the support drift is the mean drift "
             "of the line's walls, and parts of the section away from them deflect more.", fontsize=6.5, color=INK)
    return fig


def dc_map_figure(plan, checks) -> Figure:
    """The demand/capacity map (drawn in the main process: it takes the plan and the checks)."""
    from .figures_checks import dc_map_figure as draw

    return draw(plan, checks)


def render(draw: str, kwargs: dict, folder: str, name: str, svg: bool = False) -> tuple[str, float, float]:
    """Draw ``draw`` (a function of this module) with ``kwargs`` once and write
    ``folder/name.png`` (and ``.svg`` if asked). Top-level and plain-data in and out, so a
    process pool can run it. Returns (name, width, height) in inches."""
    fig = globals()[draw](**kwargs)
    folder_ = Path(folder)
    folder_.mkdir(parents=True, exist_ok=True)
    fig.savefig(folder_ / f"{name}.png", dpi=DPI, facecolor=fig.get_facecolor())
    # The same pixels, raw, for the PDF pages (read and removed by planshear.report.pdf).
    np.save(folder_ / f".{name}.rgb.npy", np.ascontiguousarray(np.asarray(fig.canvas.buffer_rgba())[..., :3]))
    if svg:  # no date in the metadata, so that a rerun writes the same file
        fig.savefig(folder_ / f"{name}.svg", facecolor=fig.get_facecolor(), metadata={"Date": None})
    width, height = fig.get_size_inches()
    return name, float(width), float(height)


def _worker(batch: str) -> None:
    """``python -m planshear.report.figures <batch>``: render the pickled jobs of ``batch`` and
    write {name: (width, height)} next to it (``.out``)."""
    import pickle

    path = Path(batch)
    jobs = pickle.loads(path.read_bytes())
    sizes = {}
    for job in jobs:
        name, width, height = render(*job)
        sizes[name] = (width, height)
    path.with_suffix(".out").write_bytes(pickle.dumps(sizes))


def _waiting_worker() -> None:
    """``... figures.py --wait``: a worker started ahead of its work. It loads matplotlib's
    drawing machinery (one small figure with text, drawn and thrown away), then reads one line
    from stdin: the path of its batch, or nothing (end of input) when no batch came its way."""
    import sys

    fig = Figure(figsize=(1, 1))
    FigureCanvasAgg(fig)
    fig.text(0.5, 0.5, "warm-up")
    fig.canvas.draw()
    batch = sys.stdin.readline().strip()
    if batch:
        _worker(batch)


if __name__ == "__main__":
    import sys

    if sys.argv[-1] == "--wait":
        _waiting_worker()
    else:
        _worker(sys.argv[-1])

