"""Whether the plan's walls can hold the diaphragm: the rigid-body stiffness of the walls
(translation along x and y, rotation) and which assumptions that allows. Reads no part of
the plan file; checks the assembled :class:`~planshear.plan.model.Plan`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import UnstablePlanError
from .model import Plan, Wall


def rigid_stiffness_rows(walls: tuple[Wall, ...] | list[Wall], reference: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Kinematic rows a_i (n_walls, 3) and stiffnesses k_i (N/m) of the walls for the
    rigid-body degrees of freedom (u, v, θ) about ``reference``: the displacement of
    wall i along its line is a_i · (u, v, θ)."""
    if not walls:
        return np.zeros((0, 3)), np.zeros(0)
    directions = np.array([w.direction for w in walls])
    arms = np.array([w.midpoint for w in walls]) - reference
    torsion = directions[:, 1] * arms[:, 0] - directions[:, 0] * arms[:, 1]
    rows = np.column_stack([directions, torsion])
    return rows, np.array([w.k for w in walls])


@dataclass(frozen=True)
class Stability:
    """What the walls allow: ``problems`` (the plan cannot be analyzed at all, each a full
    sentence) and ``unavailable`` (assumption → why it cannot be run on this plan)."""

    problems: tuple[str, ...]
    unavailable: dict[str, str]


def _lines_of_resistance(plan: Plan, axis: str) -> list[str]:
    """Grid lines parallel to ``axis`` that carry walls (the flexible method's supports)."""
    with_walls = {w.line for w in plan.walls}
    return [g.name for g in plan.grid_lines if g.parallel_to == axis and g.name in with_walls]


def assess_stability(plan: Plan) -> Stability:
    """Which assumptions the walls allow (checked on the rigid-body stiffness).

    A loaded direction without any wall is a problem. When the walls cannot hold the
    diaphragm in the other direction or in rotation (all walls parallel, or their lines
    meeting at one point), the rigid and semi-rigid models are a mechanism; the plan can
    still be analyzed as flexible if every loaded direction has at least two lines of
    resistance (simple spans between them), e.g. walls in one direction only, loaded in
    that direction. Otherwise that is a problem too."""
    reference = np.asarray(plan.region.centroid.coords[0])
    rows, k = rigid_stiffness_rows(plan.walls, reference)
    size = max(np.ptp(plan.outline, axis=0))
    label = plan.source
    loaded = [axis for axis in ("x", "y") if any(axis in load.directions for load in plan.loads)]
    problems = []
    for axis, col in (("x", 0), ("y", 1)):
        if axis in loaded and not np.any(np.abs(rows[:, col]) > 1e-9):
            problems.append(
                f"{label}: walls: no wall resists force in the {axis} direction; "
                f"add a wall on a grid line parallel to {axis} (a line of grid.{'y' if axis == 'x' else 'x'})"
            )
    if problems or not len(rows):
        return Stability(tuple(problems), {})
    # Non-dimensionalize the rotation column so the rank test is scale-free.
    scaled = rows * np.array([1.0, 1.0, 1.0 / size]) * np.sqrt(k / k.max())[:, None]
    singular = np.linalg.svd(scaled, compute_uv=False)
    if len(singular) == 3 and singular[2] > 1e-9 * singular[0]:
        return Stability((), {})
    supports = {axis: _lines_of_resistance(plan, axis) for axis in loaded}
    unheld = [axis for axis, col in (("x", 0), ("y", 1)) if not np.any(np.abs(rows[:, col]) > 1e-9)]
    if loaded and all(len(lines) >= 2 for lines in supports.values()) and unheld:
        across = unheld[0]
        along = "y" if across == "x" else "x"
        reason = (
            f"no wall resists force along {across} (every wall runs along {along}), so nothing holds the "
            f"diaphragm across the load: the {{}} model would be a mechanism. Only the flexible method "
            f"(simple spans between the lines of resistance {', '.join(supports[along])}) can be run; add walls "
            f"along {across} to run the rigid and semi-rigid models"
        )
        return Stability((), {"rigid": reason.format("rigid-diaphragm"), "semirigid": reason.format("finite-element")})
    if np.allclose(np.abs(rows[:, :2]), np.abs(rows[0, :2])):
        why = "all walls are parallel"
        fix = "add a wall in another direction"
    else:
        why = "the lines of all walls meet at one point"
        fix = "add a wall on a line that does not pass through that point"
    few = [f"{axis} ({len(lines)} found)" for axis, lines in supports.items() if len(lines) < 2]
    flexible = (f"; nor can it be analyzed as flexible only, which needs at least two lines of resistance "
                f"(grid lines with walls) parallel to each loaded direction: {', '.join(few)}") if few else ""
    return Stability((
        f"{label}: walls: {why}, so nothing resists rotation of the diaphragm (no torsional restraint){flexible}; {fix}",
    ), {})


def check_stability(plan: Plan) -> None:
    """Raise :class:`UnstablePlanError` if no assumption can be run (see
    :func:`assess_stability`); plans that only the flexible method can analyze pass."""
    stability = assess_stability(plan)
    if stability.problems:
        raise UnstablePlanError(list(stability.problems))
