"""The demand/capacity map: every checked zone, wall and member drawn on the plan in the
colour of its largest D/C (cividis, colour-blind safe and readable in grey), each labelled
with that ratio; failures (D/C > 1) also carry a cross and a heavy outline, so they read
without colour. Items without a capacity are drawn thin and grey."""

from __future__ import annotations

import numpy as np
from matplotlib import colormaps
from matplotlib.colors import Normalize
from matplotlib.figure import Figure
from shapely.ops import polylabel, unary_union

from .figures import INK, _figure

__all__ = ["dc_map_figure", "DC_LIMIT"]

#: Upper end of the colour scale: ratios above are drawn in its last colour (and marked as failures).
DC_LIMIT = 1.5
NO_CAPACITY = "#b8b8b8"


def _largest_ratios(checks) -> dict[str, tuple[float | None, bool]]:
    """Item → (largest D/C over its checks or None, whether any check fails)."""
    out: dict[str, tuple[float | None, bool]] = {}
    for c in checks.checks:
        ratio, failed = out.get(c.item, (None, False))
        if c.ratio is not None:
            ratio = c.ratio if ratio is None else max(ratio, c.ratio)
        out[c.item] = (ratio, failed or c.status == "fails")
    return out


def _label_point(area, lines: list):
    """A point well inside ``area`` (m) and away from the wall and member lines drawn over
    it (pole of inaccessibility of what the lines leave free), so its label covers none."""
    size = max(area.bounds[2] - area.bounds[0], area.bounds[3] - area.bounds[1])
    free = area.difference(unary_union(lines).buffer(0.06 * size)) if lines else area
    pieces = [g for g in getattr(free, "geoms", [free]) if g.geom_type == "Polygon" and not g.is_empty]
    target = max(pieces, key=lambda g: g.area) if pieces else area
    if target.geom_type != "Polygon":
        return target.representative_point()
    return polylabel(target, tolerance=0.01 * size)


def dc_map_figure(plan, checks) -> Figure:
    """The D/C map of a :class:`planshear.postprocess.checks.DesignChecks` on the plan."""
    scale = 1.0 / plan.length_scale
    fig, ax = _figure(7.5, 5.5, (0.75, 0.55, 1.3, 0.45))  # room on the right for the colour bar
    cmap = colormaps["cividis"]
    norm = Normalize(0.0, DC_LIMIT)
    ratios = _largest_ratios(checks)
    outline = np.vstack([plan.outline, plan.outline[:1]]) * scale
    ax.plot(outline[:, 0], outline[:, 1], color=INK, lw=0.8, zorder=2)
    labels = []
    lines = [p for p in checks.places.values() if p.geom_type not in ("Polygon", "MultiPolygon")]
    for item, place in checks.places.items():
        ratio, failed = ratios.get(item, (None, False))
        colour = NO_CAPACITY if ratio is None else cmap(norm(min(ratio, DC_LIMIT)))
        text = None if ratio is None else f"{item}: {ratio:.2f}" + (" ✗" if failed else "")
        if place.geom_type in ("Polygon", "MultiPolygon"):
            for part in getattr(place, "geoms", [place]):
                xy = np.asarray(part.exterior.coords) * scale
                ax.fill(xy[:, 0], xy[:, 1], color=colour, alpha=0.45, lw=0, zorder=0)
                for hole in part.interiors:
                    h = np.asarray(hole.coords) * scale
                    ax.fill(h[:, 0], h[:, 1], color="white", zorder=1)
            if text:
                ax.annotate(text.replace(": ", ":\n"), np.asarray(_label_point(place, lines).coords[0]) * scale, ha="center",
                            va="center", fontsize=6.5, color=INK, fontweight="bold" if failed else "normal", zorder=6,
                            bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.8})
            continue
        xy = np.asarray(place.coords) * scale
        wall = item.startswith("wall ")
        # Walls: a wide band under the members (thin lines on top), so both show on a shared line.
        width = (7.0 if wall else 2.6) if ratio is not None else 1.2
        zorder = 3 if wall else 5
        if failed:
            ax.plot(xy[:, 0], xy[:, 1], color=INK, lw=width + 2.2, solid_capstyle="butt", zorder=zorder)
        ax.plot(xy[:, 0], xy[:, 1], color=colour, lw=width, solid_capstyle="butt", zorder=zorder + 0.5)
        if text:
            labels.append((xy, text, failed, wall))
    # Labels beside their line, along it: walls on one side, members on the other.
    for xy, text, failed, wall in labels:
        d = xy[-1] - xy[0]
        vertical = abs(d[1]) > abs(d[0])
        side = 1 if wall else -1
        offset = (side * 9, 0) if vertical else (0, side * 9)
        ax.annotate(text, xy.mean(axis=0), xytext=offset, textcoords="offset points", ha="center", va="center",
                    rotation=90 if vertical else 0, fontsize=6.2, color=INK,
                    fontweight="bold" if failed else "normal", zorder=6,
                    bbox={"boxstyle": "round,pad=0.12", "fc": "white", "ec": "none", "alpha": 0.85})
    mappable = ax.scatter([], [], c=[], cmap=cmap, norm=norm)
    width, height = fig.get_size_inches()
    bar = fig.colorbar(mappable, cax=fig.add_axes([1 - 0.95 / width, 0.2, 0.15 / width, 0.6]))
    bar.set_label(f"demand / capacity (≥ {DC_LIMIT:g} in the last colour)", fontsize=7)
    bar.ax.tick_params(labelsize=7)
    ax.margins(0.07)  # room for the labels beside the outline members
    ax.set_aspect("equal")
    ax.set_xlabel(f"x ({plan.length_unit})", fontsize=8)
    ax.set_ylabel(f"y ({plan.length_unit})", fontsize=8)
    basis = checks.basis or "unfactored"
    ax.set_title(f"Demand/capacity ({basis}), largest ratio of each zone, wall (wide band) and member (line)\n"
                 "✗ and dark outline: fails (> 1); grey: no capacity given", fontsize=7.5)
    return fig
