"""The analysis pipeline: plan → load cases → methods → results, and safe writing."""

from __future__ import annotations

import json
import os
import shutil
import tempfile
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from .caution import CAUTION
from .code.asce7_16 import INCREASE_12_3_3_4, combination_factors_2_3_2_4, fpx_12_10_1_1
from .errors import AnalysisError, EquilibriumError
from .idealized import flexible_analysis, rigid_analysis
from .loads import LoadCase, expand_load_cases, seismic_weight
from .mesh_export import write_mesh_files
from .plan import Plan, assess_stability
from .postprocess.checks import DesignChecks, Splice, design_checks, splice_forces
from .postprocess.classify import Classification, classify
from .postprocess.drift import DriftCheck, drift_checks
from .postprocess.envelope import (
    Envelope,
    build_envelope,
    compare_walls,
    member_layout,
    with_irregularity_increase,
)
from .postprocess.irregularity import Irregularity, detect_irregularities
from .postprocess.traceability import build_traceability
from .postprocess.transfer import strut_cautions
from .results import (
    MethodResult,
    checks_to_json,
    classification_to_json,
    comparison_to_json,
    envelope_to_json,
    irregularity_to_json,
    method_to_json,
    splices_to_json,
    traceability_to_json,
)
from .semirigid import SemirigidRun, semirigid_analysis
from .units import OutputUnits

__all__ = ["Results", "analyze", "plan_summary", "check_equilibrium", "CAUTION"]

#: Largest imbalance accepted between a case's wall forces and its load: force relative to
#: the case force, moment relative to the case force × the plan size. Every method is exact
#: statics or an accurate solve (about 1e-12 or better); a larger imbalance is a defect.
EQUILIBRIUM_TOLERANCE = 1e-6



@dataclass(frozen=True, eq=False)
class Results:
    """Everything one run produced. ``methods`` maps assumption → result; methods that
    could not be run are listed in ``unavailable`` with the reason."""

    plan: Plan
    cases: tuple[LoadCase, ...]
    methods: dict[str, MethodResult]
    unavailable: dict[str, str] = field(default_factory=dict)
    semirigid: SemirigidRun | None = None
    classification: Classification | None = None
    sensitivity: dict[float, MethodResult] = field(default_factory=dict)
    envelope: Envelope | None = None
    equilibrium: dict[str, float] = field(default_factory=dict)  # assumption → largest imbalance
    engineer_envelope: Envelope | None = None  # over the assumptions of [design] envelope
    drift: tuple[DriftCheck, ...] = ()  # ASCE 7-16 §12.8.6 / §12.12.1, loads with drift inputs
    applied_consequences: tuple[str, ...] = ()  # irregularity consequences applied to the forces
    irregularities: tuple[Irregularity, ...] = ()  # ASCE 7-16 Table 12.3-1 checks
    checks: DesignChecks | None = None  # demand/capacity where the plan gives capacities
    splice_forces: tuple[Splice, ...] = ()  # member force at each [[splice]]

    @property
    def units(self) -> OutputUnits:
        return OutputUnits.for_plan(self.plan.length_unit)

    def to_json(self) -> dict:
        """The results.json document (output units, see the README)."""
        units = self.units
        return {
            "planshear_results": 1,
            "plan": plan_summary(self.plan, self.cases),
            "units": {
                "force": units.force,
                "position": units.length,
                "displacement": units.displacement,
                "unit_shear": units.line_force,
            },
            "caution": CAUTION,
            "assumptions": {name: method_to_json(m, units) for name, m in self.methods.items()},
            "unavailable": dict(self.unavailable),
            "classification": (classification_to_json(self.classification, units) if self.classification
                               else self._classification_not_calculated()),
            "sensitivity": {f"{factor:g}": method_to_json(m, units) for factor, m in self.sensitivity.items()},
            "envelope": envelope_to_json(self.envelope, units),
            "drift": drift_to_json(self.drift, units),
            "irregularity_consequences_applied": list(self.applied_consequences),
            "engineer_envelope": None if self.engineer_envelope is None else {
                "label": "engineer-chosen envelope over " + " + ".join(self.plan.design_envelope)
                         + " ([design] envelope); not the code's allowed assumptions, see envelope",
                "assumptions": list(self.plan.design_envelope),
                **envelope_to_json(self.engineer_envelope, units),
            },
            "comparison": comparison_to_json(compare_walls(self.methods), units),
            "traceability": traceability_to_json(
                build_traceability(self.plan, self.cases, self.methods.get("flexible")), units),
            "irregularities": [irregularity_to_json(i, units) for i in self.irregularities],
            "checks": checks_to_json(self.checks, units),
            "splice_forces": splices_to_json(self.splice_forces, units),
            "equilibrium": {
                "check": "every case: wall forces against the load's force along x and y and moment about z "
                         "(with the accidental torsion for rigid and semi-rigid); relative to F and F × plan size",
                "tolerance": EQUILIBRIUM_TOLERANCE,
                "largest_imbalance": {name: float(f"{value:.3e}") for name, value in self.equilibrium.items()},
            },
        }

    def _classification_not_calculated(self) -> dict | None:
        """Without the semi-rigid model MDD cannot be calculated: say so, and keep the
        engineer's statements (the prescriptive §12.3.1.1 / §12.3.1.2 conditions)."""
        reason = self.unavailable.get("semirigid")
        if reason is None:
            return None
        flags = self.plan.classification
        return {
            "criterion": "ASCE 7-16 §12.3.1.3: may be idealized as flexible when MDD/ADVE > 2",
            "calculated": False,
            "reason": "the calculated check needs the semi-rigid model, which was not run"
                      + (" (not requested)" if reason == "not requested" else " (see 'unavailable')"),
            "idealized_flexible_stated": flags.idealized_flexible,
            "idealized_rigid_stated": flags.idealized_rigid,
            "note": ("the flexible results may be used for design only where the engineer has established that "
                     "the idealized-flexible conditions of ASCE 7-16 §12.3.1.1 apply"
                     + (" (stated in the plan: idealized_flexible = true)" if flags.idealized_flexible
                        else " (not stated in the plan)")),
            "directions": {},
        }

    def write(self, folder: str | Path, report: bool = True, mesh_units: str = "si", figures: str = "key",
              page_size: str = "letter", timings: dict | None = None, figure_workers=None) -> Path:
        """Write the output folder completely or not at all: everything goes into a
        temporary folder next to ``folder`` that replaces it only once complete.
        ``report=False`` leaves out the report, tables and figures; ``mesh_units`` ("si" or
        "plan") are the units of the mesh files (see planshear.mesh_export); ``figures``
        (none, key, all) and ``page_size`` (letter, a4) shape the report; ``timings``
        receives seconds per writing step; ``figure_workers`` (optional) are figure
        processes started before the analysis (planshear.report.FigureWorkers)."""
        folder = Path(folder)
        parent = folder.resolve().parent
        parent.mkdir(parents=True, exist_ok=True)
        staging = Path(tempfile.mkdtemp(prefix=f".{folder.name}.partial-", dir=parent))
        umask = os.umask(0)
        os.umask(umask)
        staging.chmod(0o777 & ~umask)  # mkdtemp makes it private; the result folder is not
        try:
            doc = self.to_json()
            # Compact: four times faster to write than an indented file and 2.5 times smaller.
            text = json.dumps(doc, ensure_ascii=False, allow_nan=False, separators=(",", ":"))
            (staging / "results.json").write_text(text + "\n", encoding="utf-8")
            def mesh_files() -> None:
                if self.semirigid is not None:
                    write_mesh_files(staging, self.plan, self.semirigid.solution, self.semirigid.membrane,
                                     units=mesh_units)

            if report:
                from .report import (
                    write_review_package,  # the report module imports this one's types
                )

                # The mesh files are written while the figure processes draw.
                write_review_package(staging, self, json.loads(text), figures=figures, page_size=page_size,
                                     timings=timings, meanwhile=mesh_files, started_workers=figure_workers)
            else:
                mesh_files()
            _replace_folder(staging, folder)
        except BaseException:
            shutil.rmtree(staging, ignore_errors=True)
            raise
        return folder


def _replace_folder(staging: Path, folder: Path) -> None:
    if folder.exists():
        if not folder.is_dir():
            raise FileExistsError(f"{folder} exists and is not a folder; choose another --out")
        old = folder.with_name(f".{folder.name}.old-{os.getpid()}")
        os.replace(folder, old)
        os.replace(staging, folder)
        shutil.rmtree(old, ignore_errors=True)
    else:
        os.replace(staging, folder)


def analyze(plan: Plan, semirigid: bool = True, progress: Callable[[str], None] | None = None) -> Results:
    """Run every assumption on ``plan`` for all its load cases (``semirigid=False``
    skips the finite-element model). ``progress`` is called with a short description of
    each stage as it starts (the CLI shows it on a terminal)."""
    report = progress or (lambda stage: None)
    report("load cases and idealized methods")
    cases = expand_load_cases(plan)
    methods, unavailable, run, classification, sensitivity, solutions = _run_methods(plan, cases, semirigid, report)
    # Table 12.3-1 with Ax = 1 (as §12.8.4.3 asks), then the ±ecc cases again with the
    # eccentricity amplified by Ax where a torsional irregularity applies (SDC C–F).
    irregularities = detect_irregularities(plan, cases, methods, run.solution if run else None, classification)
    amplification = _torsional_amplification(irregularities)
    if amplification:
        report("accidental torsion amplified by Ax (ASCE 7-16 §12.8.4.3)")
        cases = expand_load_cases(plan, amplification)
        methods, unavailable, run, classification, sensitivity, solutions = _run_methods(
            plan, cases, semirigid, report, mesh=run.mesh if run else None)
    # After every method ran, so that a model the solver refuses is reported as such first.
    equilibrium = {name: check_equilibrium(plan, cases, m, name, run.solution if name == "semirigid" else None)
                   for name, m in methods.items()}
    for factor, method in sensitivity.items():
        equilibrium[f"semirigid@{factor:g}"] = check_equilibrium(
            plan, cases, method, f"semirigid (diaphragm stiffness × {factor:g})", solutions[factor])
    enveloped = dict(methods)
    for factor, method in sensitivity.items():
        enveloped[f"semirigid@{factor:g}"] = method
    layout = member_layout(plan)
    envelope = build_envelope(enveloped, cases, classification, layout=layout)
    struts = strut_cautions(plan, methods)
    if struts:
        envelope = replace(envelope, cautions={**envelope.cautions, **struts})
    engineer = None
    if plan.design_envelope:
        engineer = build_envelope(enveloped, cases, classification, chosen=plan.design_envelope, layout=layout)
    drift = tuple(drift_checks(plan, methods, cases, run, allowed=envelope.allowed))
    # ASCE 7-16 §12.3.3.4: SDC D–F with a Type 1a, 1b, 2 or 3 irregularity present.
    triggering = [i for i in irregularities if i.present and i.applies and any("12.3.3.4" in s for s in i.sections)]
    applied = ()
    if triggering:
        reason = "§12.3.3.4: horizontal irregularity " + ", ".join(sorted({f"Type {i.type}" for i in triggering}))
        envelope = with_irregularity_increase(envelope, INCREASE_12_3_3_4, reason)
        if engineer is not None:
            engineer = with_irregularity_increase(engineer, INCREASE_12_3_3_4, reason)
        applied = (f"{reason}: collector design forces × {INCREASE_12_3_3_4:g}; of the §12.10.2.1 values, those "
                   "that include Ω0 are unchanged (the exception of §12.3.3.4) and those set by the Exception 1 cap "
                   "(the Eq. 12.10-3 force with the basic combinations, no Ω0) or by item 3 are × "
                   f"{INCREASE_12_3_3_4:g} too (see each collector's overstrength.increase_12_3_3_4); "
                   "diaphragm-to-wall and diaphragm-to-collector connections need the same increase "
                   "(not computed by planshear)",)
    applied += tuple(f"§12.8.4.3: accidental eccentricity of load {load} along {axis} × Ax = {ax:.3f} (torsional "
                     "irregularity; all ±ecc cases of the rigid and semi-rigid assumptions)"
                     for (load, axis), ax in sorted(amplification.items()))
    checks = design_checks(plan, methods, cases, envelope, run)
    splices = tuple(splice_forces(plan, methods, cases, envelope, [(s.name, s.at) for s in plan.splices]))
    return Results(plan, tuple(cases), methods, unavailable, run, classification, sensitivity, envelope, equilibrium,
                   engineer_envelope=engineer, drift=drift, irregularities=irregularities, applied_consequences=applied,
                   checks=checks, splice_forces=splices)


def _torsional_amplification(irregularities) -> dict[tuple[str, str], float]:
    """(load, axis) → Ax > 1 where a Type 1a or 1b torsional irregularity is present and its
    consequences apply with §12.8.4.3 (SDC C–F); the larger of the rigid and semi-rigid Ax."""
    found: dict[tuple[str, str], float] = {}
    for item in irregularities:
        ax = (item.values or {}).get("Ax")
        if (item.type in ("1a", "1b") and item.present and item.applies and ax and ax > 1.0
                and any("12.8.4.3" in section for section in item.sections)):
            key = (item.load, item.axis)
            found[key] = max(found.get(key, 1.0), float(ax))
    return found


def _run_methods(plan: Plan, cases: list[LoadCase], semirigid: bool, report, mesh=None):
    """Every assumption on ``cases``: (methods, unavailable, semi-rigid run, classification,
    sensitivity results, sensitivity solutions)."""
    methods: dict[str, MethodResult] = {}
    unavailable: dict[str, str] = {}
    # Walls in one direction only (loaded along it): the flexible method alone can run.
    unavailable.update(assess_stability(plan).unavailable)
    try:
        methods["flexible"] = flexible_analysis(plan, cases)
    except AnalysisError as exc:
        unavailable["flexible"] = str(exc)
    if "rigid" not in unavailable:
        methods["rigid"] = rigid_analysis(plan, cases)
    run = None
    classification = None
    sensitivity: dict[float, MethodResult] = {}
    solutions = {}
    if "semirigid" in unavailable:
        pass
    elif semirigid:
        run = semirigid_analysis(plan, cases, mesh=mesh, progress=report)
        methods["semirigid"] = run.result
        report("flexibility classification")
        classification = classify(plan, run.solution)
        for factor in plan.classification.sensitivity:
            report(f"sensitivity: diaphragm stiffness × {factor:g}")
            scaled = semirigid_analysis(plan, cases, mesh=run.mesh, stiffness_factor=factor)
            sensitivity[factor] = scaled.result
            solutions[factor] = scaled.solution
    else:
        unavailable["semirigid"] = "not requested"
    return methods, unavailable, run, classification, sensitivity, solutions


def _wall_resultant(plan: Plan, forces: dict[str, float], reference: np.ndarray) -> np.ndarray:
    """Fx, Fy (N) and Mz about ``reference`` (N·m) of the wall forces. A wall force acts
    along the wall's line, so its moment is the same from any point of that line."""
    vectors = np.array([forces[w.id] * w.direction for w in plan.walls])
    arms = np.array([w.midpoint for w in plan.walls]) - reference
    moment = float(np.sum(arms[:, 0] * vectors[:, 1] - arms[:, 1] * vectors[:, 0]))
    return np.array([*vectors.sum(axis=0), moment])


def _case_resultant(case: LoadCase, reference: np.ndarray, torsion: bool) -> np.ndarray:
    """Fx, Fy (N) and Mz (N·m) of a case's load: the force at its centroid, plus the
    accidental torsion where the assumption applies it."""
    force = case.force * case.direction
    arm = case.center - reference
    moment = float(arm[0] * force[1] - arm[1] * force[0]) + (case.torsion if torsion else 0.0)
    return np.array([*force, moment])


def _vector_resultant(nodes: np.ndarray, f: np.ndarray, reference: np.ndarray) -> np.ndarray:
    """Fx, Fy (N) and Mz (N·m) of nodal loads f (n_dofs,)."""
    forces = f.reshape(-1, 2)
    arms = nodes - reference
    return np.array([*forces.sum(axis=0), float(np.sum(arms[:, 0] * forces[:, 1] - arms[:, 1] * forces[:, 0]))])


def check_equilibrium(plan: Plan, cases: list[LoadCase] | tuple[LoadCase, ...], method: MethodResult,
                      label: str, solution=None) -> float:
    """Check every case of one assumption for equilibrium before anything is written: the
    wall forces' resultant (force along x and y, moment about z) against the case's load
    (its resultant at the centroid plus, for rigid and semi-rigid, the accidental torsion).
    For the semi-rigid model (``solution`` given) the load side is the model's nodal load
    vector, and that vector is checked against the case as well. Returns the largest
    imbalance (relative: force / F, moment / (F × plan size)); raises
    :class:`EquilibriumError` naming the assumption, case and imbalance beyond
    :data:`EQUILIBRIUM_TOLERANCE`."""
    reference = np.asarray(plan.region.centroid.coords[0])
    size = float(np.ptp(plan.outline, axis=0).max())
    by_name = {c.name: c for c in cases}
    column = {c.name: j for j, c in enumerate(solution.cases)} if solution is not None else {}
    worst = 0.0
    for name, result in method.cases.items():
        case = by_name[name]
        scale = np.array([case.force, case.force, case.force * size])
        intended = _case_resultant(case, reference, torsion=method.assumption != "flexible")
        walls = _wall_resultant(plan, result.wall_forces, reference)
        checks = [("the wall forces", walls, "the load", intended)]
        if solution is not None:
            applied = _vector_resultant(solution.assembly.mesh.nodes, solution.loads[:, column[name]], reference)
            checks = [("the wall forces", walls, "the model's nodal loads", applied),
                      ("the model's nodal loads", applied, "the case's load", intended)]
        for what, got, against, expected in checks:
            imbalance = float(np.max(np.abs(got - expected) / scale))
            worst = max(worst, imbalance)
            if not np.isfinite(imbalance) or imbalance > EQUILIBRIUM_TOLERANCE:
                raise EquilibriumError(_imbalance_message(plan, label, name, what, got, against, expected, imbalance))
    return worst


def _imbalance_message(plan: Plan, label: str, case: str, what: str, got: np.ndarray, against: str,
                       expected: np.ndarray, imbalance: float) -> str:
    units = OutputUnits.for_plan(plan.length_unit)

    def words(v: np.ndarray) -> str:
        return (f"Fx = {units.force_out(v[0]):.6g} {units.force}, Fy = {units.force_out(v[1]):.6g} {units.force}, "
                f"Mz = {units.length_out(units.force_out(v[2])):.6g} {units.force}·{units.length}")

    return (f"{plan.source}: equilibrium check failed for the {label} assumption, case {case}: {what} give "
            f"{words(got)} about the diaphragm's centroid, {against} {words(expected)} (imbalance {imbalance:.1e} "
            f"of the load, limit {EQUILIBRIUM_TOLERANCE:.0e}). These results are wrong and nothing was written; "
            + _likely_cause(plan))


def _likely_cause(plan: Plan) -> str:
    k = np.array([w.k for w in plan.walls])
    if k.max() > 1e8 * k.min():
        return (f"the wall stiffnesses span a factor of {k.max() / k.min():.1e}, beyond what double precision "
                "resolves: use realistic values (a 'rigid' wall 1e3–1e4 times stiffer than the others is enough)")
    return "please report this with the plan file"


def drift_to_json(checks: tuple[DriftCheck, ...], units: OutputUnits) -> dict | None:
    """Governing drift check per wall and per line in output units (None without drift inputs)."""
    if not checks:
        return None

    def entry(c: DriftCheck) -> dict:
        return {"assumption": c.assumption, "case": c.case, "elastic": round(units.displacement_out(c.elastic), 6),
                "amplified": round(units.displacement_out(c.amplified), 6),
                "story_height": round(units.length_out(c.story_height), 6), "ratio": round(c.ratio, 6),
                "allowable": c.allowable, "ok": c.ok}

    return {
        "clause": "ASCE 7-16 §12.8.6 (Eq. 12.8-15, δx = Cd·δxe/Ie), §12.12.1 and Table 12.12-1 (allowable as given)",
        "note": "walls: elastic drifts at the story force Fx where the load gives fx, else at the case force, under "
                "the assumptions the code allows for the load direction (as the design envelope); lines: the "
                "diaphragm's largest displacement on the line in the semi-rigid model at the case force (the walls' "
                "drift plus the diaphragm's own deflection; what elements attached there must follow, §12.12.2)",
        "walls": {c.name: entry(c) for c in checks if c.kind == "wall"},
        "lines": {c.name: entry(c) for c in checks if c.kind == "line"},
    }


def _title_block(plan: Plan) -> dict:
    """[plan] job, engineer, checker, date (default: today, UTC) and revision for the report."""
    import datetime

    given = dict(plan.title_block)
    block = {key: given.get(key, "") for key in ("job", "engineer", "checker", "revision")}
    block["date"] = given.get("date") or datetime.datetime.now(datetime.UTC).date().isoformat()
    block["date_given"] = "date" in given
    return block


def plan_summary(plan: Plan, cases: tuple[LoadCase, ...] | list[LoadCase]) -> dict:
    """Short description of a plan in output units (used by `check` and results.json)."""
    units = OutputUnits.for_plan(plan.length_unit)
    area_unit = f"{units.length}²"
    summary = {
        "name": plan.name,
        "code": plan.code,
        "design_basis": plan.design_basis or "unfactored",
        "design_basis_note": "envelope values include the lateral terms of the load combinations of the design basis "
                             "(factor shown as combination_factor); gravity terms are out of scope and not included",
        "file": plan.source,
        "title_block": _title_block(plan),
        "length_unit": plan.length_unit,
        f"area_{area_unit}": round(units.length_out(units.length_out(plan.region.area)), 6),
        "walls_along_x": [w.id for w in plan.walls if abs(w.direction[0]) > 1e-9],
        "walls_along_y": [w.id for w in plan.walls if abs(w.direction[1]) > 1e-9],
        "wall_stiffness": {
            w.id: {"k": round(units.stiffness_out(w.k), 6), "formula": w.stiffness.formula}
            for w in plan.walls
        },
        "stiffness_unit": f"{units.force}/{units.displacement}",
        "material": plan.material.description,
        "materials": [
            {
                "zone": name,
                "kind": m.kind,
                "Et_x": round(units.stiffness_out(m.Et_x), 6),
                "Et_y": round(units.stiffness_out(m.Et_y), 6),
                "nu": m.nu,
                "Gt": round(units.stiffness_out(m.Gt), 6),
                "description": m.description,
            }
            for name, m in [("main", plan.material)] + [(z.name, z.material) for z in plan.zones]
        ],
        "rigidity_unit": f"{units.force}/{units.displacement}",
        "loads": {},
        "cases": [c.name for c in cases],
        "case_details": [
            {
                "name": c.name,
                "load": c.load,
                "direction": ("+" if c.sign > 0 else "-") + c.axis,
                "force": round(units.force_out(c.force), 6),
                "accidental_eccentricity": round(units.length_out(c.eccentricity * c.eccentricity_sign), 6),
                "assumptions": list(c.assumptions),
            }
            for c in cases
        ],
    }
    if plan.splices:
        summary["splices"] = {
            sp.name: {"at": [round(units.length_out(c), 6) for c in sp.at], "on": sp.on,
                      "stiffness": round(units.stiffness_out(sp.stiffness), 6),
                      "slip": None if sp.slip is None else round(units.displacement_out(sp.slip), 6),
                      "at_force": None if sp.at_force is None else round(units.force_out(sp.at_force), 6)}
            for sp in plan.splices
        }
    for load in plan.loads:
        entry: dict = {"kind": load.kind, "directions": list(load.directions)}
        if load.kind == "seismic":
            weight = seismic_weight(plan, load, load.directions[0])
            if load.weight_depends_on_direction:  # only_across weights: weight, center, Fpx per direction
                entry["by_direction"] = {}
                for axis in load.directions:
                    own = seismic_weight(plan, load, axis)
                    entry["by_direction"][axis] = {
                        "seismic_weight": round(units.force_out(own.total), 6),
                        "center_of_mass": [round(units.length_out(c), 6) for c in own.center]}
                    if load.fpx is not None:
                        entry["by_direction"][axis]["fpx_equation"] = fpx_12_10_1_1(own.total, *load.fpx).governing
                entry["seismic_weight_note"] = (f"weights marked only_across act in one direction; seismic_weight, "
                                                f"center_of_mass and fpx_values are those of a load along "
                                                f"{load.directions[0]} (see by_direction)")
            entry["seismic_weight"] = round(units.force_out(weight.total), 6)
            entry["center_of_mass"] = [round(units.length_out(c), 6) for c in weight.center]
            if load.fpx is not None:
                values = fpx_12_10_1_1(weight.total, *load.fpx)
                entry["fpx_clause"] = "ASCE 7-16 §12.10.1.1"
                entry["fpx_equation"] = values.governing
                entry["fpx_values"] = {eq: round(units.force_out(v), 6) for eq, v in
                                       (("12.10-1", values.eq_12_10_1), ("12.10-2", values.eq_12_10_2),
                                        ("12.10-3", values.eq_12_10_3))}
            else:
                entry["fpx_equation"] = None
                entry["force_source"] = "total given in the plan (not Fpx from ASCE 7-16 §12.10.1.1)"
            diaphragm = "Fpx" if load.fpx is not None else "the given total"
            if load.fx_elf is not None:
                elf = load.fx_elf
                entry["fx_distribution"] = {
                    "clause": "ASCE 7-16 §12.8.3, Eqs. 12.8-11 and 12.8-12",
                    "k": round(elf.k, 6), "level": elf.level + 1,
                    "Cvx": [round(c, 6) for c in elf.cvx],
                    "Fx": [round(units.force_out(f), 6) for f in elf.forces],
                    "story_force_ratio": round(elf.story_force_ratio, 6),
                }
                if load.fpx is not None:
                    entry["story_force_ratio_source"] = (
                        "ΣFi/Σwi over this level and those above, from the §12.8.3 distribution"
                        if load.fpx_ratio_from_elf else "given in fpx")
            if load.fx is not None:
                entry["fx"] = round(units.force_out(load.fx), 6)
                entry["force_basis"] = {"walls, line reactions, wall drifts": "Fx (fx given)",
                                        "diaphragm shears, chords, collectors, classification": diaphragm}
            else:
                entry["force_basis"] = {"everything": diaphragm + " (no separate story force fx given)"}
        forces = {c.axis: c.force for c in cases if c.load == load.name}
        entry["force"] = {axis: round(units.force_out(f), 6) for axis, f in forces.items()}
        entry["collector_overstrength"] = load.collector_overstrength
        entry["combination"] = combination_factors_2_3_2_4(plan.design_basis, load.kind, load.rho).combination
        summary["loads"][load.name] = entry
    return summary
