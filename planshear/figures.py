"""Figures for the review package (matplotlib, object API only: no global state).

Visual style of our own: each assumption has a colour and a line style that stay
distinguishable in black-and-white print (flexible: long dashes with squares; rigid:
dash-dot with triangles; semi-rigid: solid with circles). Figures are written as PNG and
SVG; the SVG text is also returned for inlining in the HTML report.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.collections import PolyCollection
from matplotlib.figure import Figure

__all__ = ["STYLE", "FigureFile", "plan_figure", "collector_figure", "chord_figure", "shear_map_figure",
           "deflected_figure", "span_deflection_figure", "save"]

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


@dataclass(frozen=True)
class FigureFile:
    name: str  # file stem under figures/
    title: str
    svg: str  # SVG text for inlining


def _figure(width: float = 7.5, height: float = 4.5) -> tuple[Figure, object]:
    fig = Figure(figsize=(width, height), facecolor=PAPER)
    FigureCanvasAgg(fig)
    ax = fig.add_subplot(1, 1, 1)
    ax.set_facecolor("white")
    for spine in ax.spines.values():
        spine.set_color(INK)
    ax.tick_params(colors=INK, labelsize=8)
    return fig, ax


def save(fig: Figure, folder: Path, name: str, title: str) -> FigureFile:
    """Write ``name``.png and ``name``.svg into ``folder``; return the SVG text."""
    folder.mkdir(parents=True, exist_ok=True)
    fig.tight_layout()
    fig.savefig(folder / f"{name}.png", dpi=110, facecolor=fig.get_facecolor())
    # No date in the metadata, so that a rerun writes the same files.
    fig.savefig(folder / f"{name}.svg", facecolor=fig.get_facecolor(), metadata={"Date": None})
    svg = (folder / f"{name}.svg").read_text(encoding="utf-8")
    svg = svg[svg.index("<svg"):]  # drop the XML prolog and doctype for inlining
    start, end = svg.find("<metadata>"), svg.find("</metadata>")
    if start >= 0 and end > start:
        svg = svg[:start] + svg[end + len("</metadata>"):]
    return FigureFile(name, title, svg)


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
    from .loads import windward_segments  # figures are drawn after the analysis
    from .units import OutputUnits

    units = OutputUnits.for_plan(plan.length_unit)
    unit = plan.length_unit
    scale = 1.0 / plan.length_scale
    fig, ax = _figure(7.5, 6.0)
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
    fig.tight_layout()  # final layout before any label is measured
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
    from .loads import _weight_parts

    areas, lines, points = _weight_parts(plan, load)
    return areas, lines, [(x, y, p) for x, y, p, _ in points]


def _diagram_figure(doc: dict, cases: dict[str, str], pick, height: float, xlabel: str, ylabel: str,
                    title: str, annotate: bool) -> Figure:
    """One diagram per assumption (assumption → case name) with its peak marked;
    ``pick(case_doc)`` returns (points [[s, value], …], peak position, peak value) or None."""
    fig, ax = _figure(7.5, height)
    for assumption, case_name in cases.items():
        picked = pick(doc["assumptions"].get(assumption, {}).get("cases", {}).get(case_name, {}))
        if not picked or len(picked[0]) == 0:
            continue
        points, peak_at, peak = picked
        diagram = np.array(points, dtype=float)
        style = STYLE[assumption]
        ax.plot(diagram[:, 0], diagram[:, 1], color=style["color"], ls=style["linestyle"], lw=1.5,
                label=f"{assumption} ({case_name})")
        ax.plot(peak_at, peak, marker=style["marker"], color=style["color"], ms=7, mfc="white")
        if annotate:
            ax.annotate(f"{peak:.1f}", (peak_at, peak), xytext=(4, 4), textcoords="offset points", fontsize=7,
                        color=style["color"])
    ax.axhline(0.0, color=INK, lw=0.6)
    ax.set_xlabel(xlabel, fontsize=8)
    ax.set_ylabel(ylabel, fontsize=8)
    ax.legend(fontsize=7, frameon=False)
    ax.set_title(title, fontsize=9)
    return fig


def collector_figure(doc: dict, line: str, cases: dict[str, str]) -> Figure:
    """Collector force along a line under each assumption for the given cases
    (assumption → case name), peaks marked; the diagram is broken where the line crosses
    a gap (an opening or outside the outline), since nothing is carried there."""
    units = doc["units"]
    gaps = _line_gaps(doc, line)

    def pick(case_doc):
        data = case_doc.get("lines", {}).get(line)
        return data and (_broken_at(data["collector"], gaps), data["collector_peak_at"], data["collector_peak"])

    return _diagram_figure(doc, cases, pick, 3.2, f"position along line {line} ({units['position']})",
                           f"N ({units['force']}), tension +", f"Collector force along line {line}", True)


def _line_gaps(doc: dict, line: str) -> list[tuple[float, float]]:
    """Gaps (start, end) between the pieces of a line, from the idealized results."""
    for method in doc["assumptions"].values():
        for case_doc in method["cases"].values():
            pieces = case_doc.get("lines", {}).get(line, {}).get("pieces")
            if pieces:
                return [(a["to"], b["from"]) for a, b in zip(pieces[:-1], pieces[1:], strict=True) if b["from"] > a["to"]]
    return []


def _broken_at(points: list, gaps: list[tuple[float, float]]) -> list:
    """Diagram points with a NaN row wherever consecutive points straddle a gap."""
    out: list = []
    for point in points:
        if out and any(out[-1][0] <= g0 and point[0] >= g1 for g0, g1 in gaps):
            out.append([np.nan, np.nan])
        out.append(point)
    return out


def chord_figure(doc: dict, edge: str, cases: dict[str, str]) -> Figure:
    """Chord force along an outline edge (or interior chord) under each assumption."""
    units = doc["units"]

    def pick(case_doc):
        data = case_doc.get("chords", {}).get(edge)
        return data and (data["diagram"], data["peak_at"], data["peak"])

    return _diagram_figure(doc, cases, pick, 3.0, f"position along {edge} from its first corner ({units['position']})",
                           f"chord force ({units['force']}), tension +", f"Chord force, {edge}", False)


def shear_map_figure(plan, mesh, unit_shear: np.ndarray, case: str, units: dict, factor: float) -> Figure:
    """|Nxy| per element (output units) with the maximum marked."""
    scale = 1.0 / plan.length_scale
    corners = 3 if mesh.element_type.startswith("tri") else 4
    polygons = mesh.nodes[mesh.elements[:, :corners]] * scale
    values = unit_shear * factor
    fig, ax = _figure(7.5, 5.0)
    collection = PolyCollection(polygons, array=values, cmap="cividis", edgecolors="face", linewidths=0.1)
    collection.set_rasterized(True)  # keeps the SVG small
    ax.add_collection(collection)
    cbar = fig.colorbar(collection, ax=ax, shrink=0.8)
    cbar.set_label(f"unit shear |Nxy| ({units['unit_shear']})", fontsize=8)
    k = int(np.argmax(values))
    where = polygons[k].mean(axis=0)
    ax.plot(*where, marker="*", ms=12, color=WALL, mec="white")
    ax.annotate(f"max {values[k]:.3g}", where, xytext=(6, 6), textcoords="offset points", fontsize=8, color=WALL)
    ax.autoscale_view()
    ax.set_aspect("equal")
    ax.set_title(f"Unit shear, semi-rigid, {case} (element averages)", fontsize=9)
    return fig


def deflected_figure(plan, mesh, displacement: np.ndarray, case: str, units: dict, disp_factor: float) -> Figure:
    """Outline before and after deformation (magnified), colored by displacement."""
    scale = 1.0 / plan.length_scale
    magnitude = np.hypot(displacement[:, 0], displacement[:, 1])
    size = float(np.ptp(mesh.nodes, axis=0).max())
    magnify = 0.08 * size / magnitude.max() if magnitude.max() > 0 else 1.0
    moved = (mesh.nodes + magnify * displacement) * scale
    fig, ax = _figure(7.5, 5.0)
    corners = 3 if mesh.element_type.startswith("tri") else 4
    collection = PolyCollection(moved[mesh.elements[:, :corners]], array=magnitude[mesh.elements[:, :corners]].mean(axis=1) * disp_factor,
                                cmap="viridis", edgecolors="face", linewidths=0.1)
    collection.set_rasterized(True)
    ax.add_collection(collection)
    outline = np.vstack([plan.outline, plan.outline[:1]]) * scale
    ax.plot(outline[:, 0], outline[:, 1], color=INK, lw=0.8, ls="--")
    cbar = fig.colorbar(collection, ax=ax, shrink=0.8)
    cbar.set_label(f"displacement ({units['displacement']})", fontsize=8)
    ax.autoscale_view()
    ax.set_aspect("equal")
    ax.set_title(f"Deflected shape, semi-rigid, {case} (magnified ×{magnify:.3g}; dashed: undeformed)", fontsize=9)
    return fig


def span_deflection_figure(plan, spans, case: str, axis: str, units: dict, disp_factor: float) -> Figure:
    """The diaphragm's own deflection along the span for one load case (ASCE 7-16
    §12.3.1.3): in each span between lines of resistance, the displacement along the load
    averaged across the depth, relative to the straight line between the support drifts.
    MDD is marked where it occurs (filled marker, value and MDD/ADVE); the largest nodal
    value of the span (a local peak at a wall end, corner or load) is marked hollow and is
    not used for the classification."""
    scale = 1.0 / plan.length_scale
    fig, ax = _figure(7.5, 4.2)
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
    ax.set_xlabel(f"{'x' if axis == 'y' else 'y'} ({plan.length_unit})", fontsize=8)
    ax.set_ylabel(f"deflection relative to supports ({units['displacement']})", fontsize=8)
    ax.set_title(f"Diaphragm deflection along the span, semi-rigid, {case} (load along {axis})", fontsize=9)
    fig.text(0.01, 0.01, "At a line of resistance the curve need not be zero: the support drift is the mean drift "
             "of the line's walls, and parts of the section away from them deflect more.", fontsize=6.5, color=INK)
    return fig
