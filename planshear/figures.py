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


def plan_figure(doc: dict, plan) -> Figure:
    """Outline, openings, zones, grid lines, walls, members, center of mass and of rigidity."""
    scale = 1.0 / plan.length_scale
    fig, ax = _figure(7.5, 5.5)
    outline = np.vstack([plan.outline, plan.outline[:1]]) * scale
    ax.fill(outline[:, 0], outline[:, 1], color="#f1eee4", zorder=0)
    ax.plot(outline[:, 0], outline[:, 1], color=INK, lw=1.6, zorder=3)
    for zone in plan.zones:
        xy = np.asarray(zone.polygon.exterior.coords) * scale
        ax.fill(xy[:, 0], xy[:, 1], facecolor="none", edgecolor="#7f8c8d", hatch="///", lw=0.8, zorder=1)
        c = np.asarray(zone.polygon.representative_point().coords[0]) * scale
        ax.annotate(zone.name, c, fontsize=7, color="#555555", ha="center")
    for opening in plan.openings:
        xy = np.vstack([opening, opening[:1]]) * scale
        ax.fill(xy[:, 0], xy[:, 1], color="white", zorder=2)
        ax.plot(xy[:, 0], xy[:, 1], color=INK, lw=1.0, ls=":", zorder=3)
        ax.plot([xy[0, 0], xy[2, 0]], [xy[0, 1], xy[2, 1]], color=INK, lw=0.5, zorder=3)
    for line in plan.grid_lines:
        a, b = line.point(line.t_min) * scale, line.point(line.t_max) * scale
        ax.plot([a[0], b[0]], [a[1], b[1]], color=GRID, lw=0.6, ls=(0, (8, 3, 2, 3)), zorder=1)
        ax.annotate(line.name, a - 0.04 * (b - a), fontsize=8, color=INK, ha="center", va="center",
                    bbox={"boxstyle": "circle,pad=0.2", "fc": "white", "ec": GRID, "lw": 0.6})
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
        ax.plot([a[0], b[0]], [a[1], b[1]], color=WALL, lw=4.5, solid_capstyle="butt", zorder=5)
        mid = 0.5 * (a + b)
        ax.annotate(wall.id, mid, xytext=(4, 4), textcoords="offset points", fontsize=8, color=WALL, zorder=6)
    summary = doc["plan"]
    for name, load in summary["loads"].items():
        if "center_of_mass" in load:
            cm = load["center_of_mass"]
            ax.plot(cm[0], cm[1], marker="P", ms=9, color=INK, mfc="white", zorder=7)
            ax.annotate(f"CM ({name})", cm, xytext=(6, -10), textcoords="offset points", fontsize=7)
    rigid = doc["assumptions"].get("rigid", {})
    if "center_of_rigidity" in rigid:
        cr = rigid["center_of_rigidity"]
        ax.plot(cr[0], cr[1], marker="X", ms=9, color=INK, zorder=7)
        ax.annotate("CR", cr, xytext=(6, 4), textcoords="offset points", fontsize=7)
    ax.set_aspect("equal")
    ax.set_xlabel(f"x ({plan.length_unit})", fontsize=8)
    ax.set_ylabel(f"y ({plan.length_unit})", fontsize=8)
    ax.set_title("Plan: walls (red), collectors (green dashed; dotted: implied in the semi-rigid model), grid lines, "
                 "openings, zones (hatched)", fontsize=8)
    return fig


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
