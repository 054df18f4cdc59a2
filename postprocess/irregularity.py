"""Horizontal structural irregularities of ASCE 7-16 Table 12.3-1 that a single diaphragm
level shows: torsional (Types 1a / 1b, from the rigid and the semi-rigid displacements),
re-entrant corner (Type 2, from the outline) and diaphragm discontinuity (Type 3, from the
openings, and from the adjacent story's stiffness where the engineer states it).

This module detects and describes; :mod:`planshear.run` applies the two consequences that act
on this level's forces (Ax of §12.8.4.3 on the ±ecc cases, the 25 % of §12.3.3.4 on collectors)
and lists them in ``irregularity_consequences_applied``. Thresholds and the SDC column live
in :mod:`planshear.code.asce7_16`.
Everything is SI (m, m²); ``values`` keys say what each number is (see :data:`VALUE_KINDS`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from shapely.geometry import Polygon

from ..code import asce7_16 as code
from ..loads import LoadCase
from ..plan import Plan
from ..results import MethodResult

__all__ = ["Irregularity", "VALUE_KINDS", "detect_irregularities", "end_displacements", "reentrant_corners"]

NOT_APPLIED = "what planshear applied to the forces: see irregularity_consequences_applied"

#: What each key of ``Irregularity.values`` holds, for unit conversion on output.
VALUE_KINDS = {
    "delta_end_low": "displacement", "delta_end_high": "displacement", "delta_max": "displacement",
    "delta_avg": "displacement", "corner": "length", "projection_x": "length", "projection_y": "length",
    "dimension_x": "length", "dimension_y": "length", "open_area": "area", "gross_area": "area",
}


@dataclass(frozen=True)
class Irregularity:
    """One Table 12.3-1 check. ``type`` is the type found ("1a", "1b", "2", "3") or, when
    absent, the type checked ("1a/1b", "2", "3"); ``present`` is None when it could not be
    checked; ``applies`` says whether its consequences apply (None: no SDC stated)."""

    type: str
    name: str
    clause: str
    present: bool | None
    values: dict = field(default_factory=dict)  # SI, see VALUE_KINDS
    applies: bool | None = None
    consequence: str = ""
    method: str | None = None  # torsional checks: "rigid" or "semirigid"
    load: str | None = None
    axis: str | None = None  # torsional checks: direction of the load
    sections: tuple[str, ...] = ()  # Table 12.3-1 reference sections that apply (all of the type's when no SDC)


def end_displacements(points: np.ndarray, along: np.ndarray, s: np.ndarray, tolerance: float) -> np.ndarray:
    """Mean displacement along the load (m) of ``points`` at the two extreme positions
    ``s`` across the load: the two ends of the plan for Table 12.3-1 Type 1."""
    low = s <= s.min() + tolerance
    high = s >= s.max() - tolerance
    return np.array([along[low].mean(), along[high].mean()])


def _ratio(ends: np.ndarray) -> tuple[float, float, float]:
    """δmax (largest magnitude), δavg (algebraic mean, m) and δmax/δavg of the two end
    displacements along the load. The mean is signed: ends moving in opposite directions
    (rotation dominating) give a small δavg and a large ratio, as they should; a mean of
    magnitudes would call a pure rotation regular. δavg ≤ 0 gives an infinite ratio."""
    delta_max, delta_avg = float(np.abs(ends).max()), float(ends.mean())
    return delta_max, delta_avg, (delta_max / delta_avg if delta_avg > 0 else math.inf)


def _rigid_ends(plan: Plan, case: LoadCase, motion: dict, tolerance: float) -> np.ndarray:
    """End displacements of the rigid diaphragm from its rigid-body motion about the region's
    centroid (the reference of :func:`planshear.idealized.rigid_analysis`)."""
    reference = np.asarray(plan.region.centroid.coords[0])
    arms = plan.outline - reference
    corner = np.column_stack([motion["u"] - motion["rotation"] * arms[:, 1],
                              motion["v"] + motion["rotation"] * arms[:, 0]])
    s = plan.outline[:, 0 if case.axis == "y" else 1]
    return end_displacements(plan.outline, corner @ case.direction, s, tolerance)


def _semirigid_ends(plan: Plan, case: LoadCase, solution, tolerance: float) -> np.ndarray:
    """End displacements of the finite-element diaphragm: mean over the mesh nodes on the
    plan's two extreme edges across the load."""
    nodes = solution.assembly.mesh.nodes
    j = [c.name for c in solution.cases].index(case.name)
    along = solution.node_displacements(j) @ case.direction
    return end_displacements(nodes, along, nodes[:, 0 if case.axis == "y" else 1], tolerance)


def reentrant_corners(outline: np.ndarray) -> list[dict]:
    """Every re-entrant (reflex) corner of a counter-clockwise ``outline`` (m) with the plan's
    projections beyond it: along x, from the corner to the plan's extreme on the side where
    the notch opens, likewise along y; the notch side is taken from the outward bisector of
    the two edges at the corner (exact for edges parallel to x and y; where the notch opens
    straight along one axis, the larger of the two sides is taken)."""
    points = outline[:-1] if np.allclose(outline[0], outline[-1]) else outline
    before = points - np.roll(points, 1, axis=0)
    after = np.roll(points, -1, axis=0) - points
    turn = before[:, 0] * after[:, 1] - before[:, 1] * after[:, 0]
    low, high = points.min(axis=0), points.max(axis=0)
    corners = []
    for i in np.flatnonzero(turn < -1e-12 * np.ptp(points, axis=0).max() ** 2):
        # Into the notch: at a reflex corner of a counter-clockwise outline the outside lies
        # ahead along the outgoing edge and back along the incoming one.
        notch = after[i] / np.linalg.norm(after[i]) - before[i] / np.linalg.norm(before[i])
        beyond_high, beyond_low = high - points[i], points[i] - low
        # A notch opening straight along one axis (zero component): take the larger side.
        projection = np.where(notch > 1e-9, beyond_high,
                              np.where(notch < -1e-9, beyond_low, np.maximum(beyond_high, beyond_low)))
        corners.append({"corner": points[i].copy(), "projection_x": float(projection[0]),
                        "projection_y": float(projection[1])})
    return corners


def _applies(kind: str, present: bool | None, sdc: str | None, allowed: bool = True) -> tuple[bool | None, list[str]]:
    """(applies, sections) for a check: sections of Table 12.3-1 that apply at ``sdc``."""
    if not present or not allowed:
        return False, []
    if sdc is None:
        return None, list(code.SDC_APPLICATION[kind])
    sections = code.sections_applying(kind, sdc)
    return bool(sections), sections


def _consequence(kind: str, sdc: str | None, sections: list[str], extra: str = "") -> str:
    texts = [code.SECTION_TEXT[s] for s in sections]
    if sdc is None:
        head = ("no Seismic Design Category given (add sdc to the seismic load); by SDC, Table 12.3-1 refers to: "
                + "; ".join(f"{code.SECTION_TEXT[s]} (SDC {', '.join(code.SDC_APPLICATION[kind][s])})"
                            for s in sections))
    elif not sections:
        return f"no consequence in SDC {sdc} (Table 12.3-1)"
    else:
        head = f"SDC {sdc}: " + "; ".join(texts)
    return head + (f". {extra}" if extra else "") + f" ({NOT_APPLIED})"


def _with_omega(extra: str, sections: list[str], loads) -> str:
    """Add to ``extra`` the §12.3.3.4 exception where a load's collector forces carry Ω0."""
    omegas = [f"{load.name} (Ω0 = {load.collector_overstrength:g})" for load in loads
              if load.kind == "seismic" and load.collector_overstrength > 1.0]
    if "12.3.3.4" not in sections or not omegas:
        return extra
    note = ("The collector forces with overstrength of load(s) " + ", ".join(omegas) + " need no 25 % increase "
            "(§12.3.3.4 exception); forces without Ω0 (e.g. diaphragm-to-wall connections) still do")
    return f"{extra}. {note}" if extra else note


def _sdc(plan: Plan) -> tuple[str | None, str | None]:
    """The highest SDC stated on the plan's seismic loads, and its load."""
    stated = [(load.sdc, load.name) for load in plan.loads if load.kind == "seismic" and load.sdc]
    return max(stated) if stated else (None, None)


def _torsional(plan: Plan, cases, methods: dict[str, MethodResult], solution, classification) -> list[Irregularity]:
    size = float(np.ptp(plan.outline, axis=0).max())
    tolerance = 1e-6 * size
    found = []
    seismic = {load.name: load for load in plan.loads if load.kind == "seismic"}
    for method_name in ("rigid", "semirigid"):
        method = methods.get(method_name)
        if method is None or (method_name == "semirigid" and solution is None):
            continue
        for load_name, load in seismic.items():
            for axis in load.directions:
                # "Including accidental torsion": the ±ecc cases, or the plain one(s) when
                # the load has no eccentricity.
                group = [c for c in cases if c.load == load_name and c.axis == axis and c.name in method.cases]
                with_torsion = [c for c in group if c.eccentricity_sign != 0] or group
                if not with_torsion:
                    continue
                measured = []
                for case in with_torsion:
                    if method_name == "rigid":
                        ends = _rigid_ends(plan, case, method.cases[case.name].extra["rigid_body_motion"], tolerance)
                    else:
                        ends = _semirigid_ends(plan, case, solution, tolerance)
                    measured.append((_ratio(ends), ends, case))
                (delta_max, delta_avg, ratio), ends, case = max(measured, key=lambda m: m[0][2])
                kind = code.torsional_irregularity_12_3_1(ratio)
                flexible = (classification.flexible_allowed(axis) if classification is not None
                            else plan.classification.idealized_flexible)
                # JSON has no infinity: an unbounded ratio is reported as null with δavg ≤ 0.
                values = {"ratio": round(ratio, 4) if math.isfinite(ratio) else None,
                          "delta_max": delta_max, "delta_avg": delta_avg,
                          "accidental_torsion_included": any(c.eccentricity_sign != 0 for c in with_torsion),
                          "delta_end_low": float(ends[0]), "delta_end_high": float(ends[1]), "case": case.name,
                          "limit_1a": code.TORSIONAL_1A, "limit_1b": code.TORSIONAL_1B}
                if kind is None:
                    consequence = f"δmax/δavg = {ratio:.3f} ≤ {code.TORSIONAL_1A}: no torsional irregularity"
                    found.append(Irregularity("1a/1b", "torsional", "ASCE 7-16 Table 12.3-1 Types 1a, 1b", False,
                                              values, False, consequence, method_name, load_name, axis))
                    continue
                ax = code.torsional_amplification_12_8_4_3(delta_max, delta_avg)
                values["Ax"] = round(ax, 4)
                applies, sections = _applies(kind, True, load.sdc, allowed=not flexible)
                if flexible:
                    consequence = ("the diaphragm is flexible for loads along " + axis + " (classified or stated): "
                                   "Table 12.3-1 applies Types 1a and 1b to rigid and semi-rigid diaphragms only")
                else:
                    extra = ""
                    if "12.8.4.3" in sections or load.sdc is None:
                        extra = (f"Ax = ({ratio:.4f}/1.2)² bounded to 1.0…3.0 = {ax:.3f} on the accidental torsion of the ±ecc "
                                 f"cases of load {load_name} along {axis}")
                    consequence = _consequence(kind, load.sdc, sections, _with_omega(extra, sections, [load]))
                label = "extreme torsional" if kind == "1b" else "torsional"
                found.append(Irregularity(kind, label, f"ASCE 7-16 Table 12.3-1 Type {kind}", True, values, applies,
                                          consequence, method_name, load_name, axis, tuple(sections)))
    return found


def _reentrant(plan: Plan) -> Irregularity:
    corners = reentrant_corners(plan.outline)
    dims = np.ptp(plan.outline, axis=0)
    clause = "ASCE 7-16 Table 12.3-1 Type 2"
    if not corners:
        return Irregularity("2", "re-entrant corner", clause, False, {"corners": 0}, False,
                            "the outline has no re-entrant corner")
    # Governing corner: the larger of the two projection shares is what must exceed 15 % last.
    governing = max(corners, key=lambda c: min(c["projection_x"] / dims[0], c["projection_y"] / dims[1]))
    present = any(code.reentrant_corner_type_2(c["projection_x"], dims[0], c["projection_y"], dims[1])
                  for c in corners)
    values = {**governing, "dimension_x": float(dims[0]), "dimension_y": float(dims[1]),
              "share_x": round(governing["projection_x"] / dims[0], 4),
              "share_y": round(governing["projection_y"] / dims[1], 4),
              "limit": code.REENTRANT_PROJECTION, "corners": len(corners)}
    sdc, _ = _sdc(plan)
    applies, sections = _applies("2", present, sdc)
    consequence = (_consequence("2", sdc, sections, _with_omega("", sections, plan.loads)) if present else
                   f"no corner has both projections above {100 * code.REENTRANT_PROJECTION:.0f} % of the plan dimension")
    return Irregularity("2", "re-entrant corner", clause, present, values, applies, consequence,
                        sections=tuple(sections))


def _discontinuity(plan: Plan) -> list[Irregularity]:
    gross = Polygon(plan.outline).area
    open_area = gross - plan.region.area
    present = code.diaphragm_discontinuity_type_3(open_area, gross)
    sdc, _ = _sdc(plan)
    applies, sections = _applies("3", present, sdc)
    clause = "ASCE 7-16 Table 12.3-1 Type 3"
    values = {"open_area": open_area, "gross_area": gross, "ratio": round(open_area / gross, 4),
              "limit": code.OPEN_AREA_LIMIT, "openings": len(plan.openings)}
    consequence = (_consequence("3", sdc, sections, _with_omega("", sections, plan.loads)) if present else
                   f"openings cover {100 * open_area / gross:.1f} % ≤ {100 * code.OPEN_AREA_LIMIT:.0f} % of the gross "
                   "enclosed area (notches in the outline are not counted: see Type 2)")
    out = [Irregularity("3", "diaphragm discontinuity, open area", clause, present, values, applies, consequence,
                        sections=tuple(sections))]
    stated = plan.classification.adjacent_stiffness_ratio
    if stated is None:
        out.append(Irregularity("3", "diaphragm discontinuity, stiffness change", clause, None, {}, None,
                                "not checked: it needs the adjacent story's effective diaphragm stiffness; state "
                                "classification.adjacent_stiffness_ratio in the plan to check it"))
    else:
        irregular, change = code.stiffness_change_type_3(stated)
        applies, sections = _applies("3", irregular, sdc)
        out.append(Irregularity(
            "3", "diaphragm discontinuity, stiffness change", clause, irregular,
            {"adjacent_stiffness_ratio": stated, "change": round(change, 4), "limit": code.STIFFNESS_CHANGE_LIMIT},
            applies,
            _consequence("3", sdc, sections, _with_omega("", sections, plan.loads)) if irregular else
            f"stated stiffness change {100 * change:.0f} % ≤ {100 * code.STIFFNESS_CHANGE_LIMIT:.0f} %",
            sections=tuple(sections)))
    return out


def detect_irregularities(plan: Plan, cases, methods: dict[str, MethodResult], solution=None,
                          classification=None) -> tuple[Irregularity, ...]:
    """Every Table 12.3-1 check planshear makes on one level: torsional per method (rigid,
    semi-rigid with its ``solution``), seismic load and direction; re-entrant corner; open
    area; stiffness change (only when stated). No force is changed."""
    found = _torsional(plan, cases, methods, solution, classification)
    found.append(_reentrant(plan))
    found += _discontinuity(plan)
    if plan.classification.idealized_rigid and any(i.present for i in found):
        rigid_note = ("the plan states idealized_rigid, but §12.3.1.2 allows the rigid idealization only for "
                      "structures without horizontal irregularities")
        found = [i if not i.present else Irregularity(i.type, i.name, i.clause, i.present, i.values, i.applies,
                                                      f"{i.consequence}; {rigid_note}", i.method, i.load, i.axis,
                                                      i.sections)
                 for i in found]
    return tuple(found)
