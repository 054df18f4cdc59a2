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


def render(draw: str, kwargs: dict, folder: str, name: str, svg: bool = False) -> tuple[str, float, float]:
    """Draw ``draw`` (a function of this module) with ``kwargs`` once and write
    ``folder/name.png`` (and ``.svg`` if asked). Top-level and plain-data in and out, so a
    process pool can run it. Returns (name, width, height) in inches."""
    fig = globals()[draw](**kwargs)
    folder_ = Path(folder)
    folder_.mkdir(parents=True, exist_ok=True)
    fig.savefig(folder_ / f"{name}.png", dpi=DPI, facecolor=fig.get_facecolor())
    # The same pixels, raw, for the PDF pages (read and removed by planshear.report_pdf).
    np.save(folder_ / f".{name}.rgb.npy", np.ascontiguousarray(np.asarray(fig.canvas.buffer_rgba())[..., :3]))
    if svg:  # no date in the metadata, so that a rerun writes the same file
        fig.savefig(folder_ / f"{name}.svg", facecolor=fig.get_facecolor(), metadata={"Date": None})
    width, height = fig.get_size_inches()
    return name, float(width), float(height)


def _worker(batch: str) -> None:
    """``python -m planshear.figures <batch>``: render the pickled jobs of ``batch`` and
    write {name: (width, height)} next to it (``.out``)."""
    import pickle

    path = Path(batch)
    jobs = pickle.loads(path.read_bytes())
    sizes = {}
    for job in jobs:
        name, width, height = render(*job)
        sizes[name] = (width, height)
    path.with_suffix(".out").write_bytes(pickle.dumps(sizes))


if __name__ == "__main__":
    import sys

    _worker(sys.argv[-1])
