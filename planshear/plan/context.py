"""What every section reader of the plan file shares: the file's label, its length unit,
the geometric tolerance and the list of problems found so far, with the parsers of
quantities, numbers, points and polygons that report into that list. Reads no section
itself.

Problems are collected, not raised one at a time: a section reader records each problem
with :meth:`Context.problem` and carries on; :mod:`planshear.plan.reader` raises them
together as one :class:`~planshear.errors.PlanError`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import NoReturn

import numpy as np
import shapely
from shapely.geometry import Polygon

from ..errors import PlanError
from ..units import Dimension, QuantityError, parse_quantity

#: Largest plan coordinate accepted, in the plan's length unit.
MAX_COORDINATE = 1e6
#: Relative tolerance for zero areas (fraction of the plan size).
GEOMETRY_TOLERANCE = 1e-9


@dataclass(frozen=True, eq=False)
class Context:
    """The file being read and where its problems go. ``dataclasses.replace`` gives a copy
    (e.g. with ``tol`` set once the outline is known) that shares the same problem list."""

    label: str  # the file's name, first word of every message
    problems: list[str] = field(default_factory=list)
    unit: str = "ft"  # the plan's length unit ([plan] length_unit)
    scale: float = 1.0  # metres per plan length unit
    tol: float = 0.0  # geometric tolerance (m), set from the outline's size

    def problem(self, where: str, message: str) -> None:
        """Record a problem with the item ``where`` (e.g. ``wall "W4"``)."""
        self.problems.append(f"{self.label}: {where}: {message}")

    def fail(self) -> NoReturn:
        """Stop reading: raise every problem found so far."""
        raise PlanError(self.problems)

    def quantity(self, value: object, dimension: Dimension, where: str, positive: bool = True) -> float | None:
        """``value`` (a quantity string or a bare number in the plan's unit) in SI, or None
        (problem recorded) when it does not parse, is not positive (``positive``) or is
        negative."""
        try:
            magnitude = parse_quantity(value, dimension, self.unit)
        except QuantityError as exc:
            self.problem(where, str(exc))
            return None
        if positive and magnitude <= 0:
            self.problem(where, f'must be positive, got "{value}"')
            return None
        if not positive and magnitude < 0:
            self.problem(where, f'must not be negative, got "{value}"')
            return None
        return magnitude

    def number(self, value: float, where: str, positive: bool = False, allow_zero: bool = True) -> float | None:
        """A finite plain number (not scaled), or None (problem recorded)."""
        if not math.isfinite(value):
            self.problem(where, f"must be a finite number, got {value}")
            return None
        if positive and (value < 0 or (value == 0 and not allow_zero)):
            self.problem(where, f"must be {'positive' if not allow_zero else 'zero or positive'}, got {value}")
            return None
        return float(value)

    def points(self, raw: list, where: str) -> np.ndarray | None:
        """Plan coordinates (in the plan's length unit) in metres, or None (problem recorded)."""
        array = np.asarray(raw, dtype=float)
        if not np.all(np.isfinite(array)):
            self.problem(where, "has a coordinate that is not a finite number; fix the point")
            return None
        if np.any(np.abs(array) > MAX_COORDINATE):
            self.problem(where, f"has a coordinate beyond ±{MAX_COORDINATE:g} {self.unit}; check the number and length_unit")
            return None
        return array * self.scale

    def polygon(self, raw: list, where: str) -> Polygon | None:
        """A simple polygon of non-zero area (m), counter-clockwise, from its corners (a
        repeated first corner at the end is dropped), or None (problem recorded)."""
        array = self.points(raw, where)
        if array is None:
            return None
        if len(array) > 3 and np.allclose(array[0], array[-1]):
            array = array[:-1]
        if len(array) < 3:
            self.problem(where, "needs at least three distinct corners")
            return None
        ring = shapely.LinearRing(array)
        if not ring.is_simple:
            self.problem(where, "edges cross each other (not a simple polygon); list the corners in order around the boundary")
            return None
        polygon = Polygon(array)
        if polygon.area <= (GEOMETRY_TOLERANCE * max(np.ptp(array, axis=0).max(), 1e-30)) ** 2 or polygon.area == 0:
            self.problem(where, "has zero area; check the corner coordinates")
            return None
        if not polygon.is_valid:
            self.problem(where, f"is not a valid polygon ({shapely.is_valid_reason(polygon)})")
            return None
        return shapely.geometry.polygon.orient(polygon, 1.0)
