"""Less typing: wall types, perimeter weights and weights that act only across their line.

Each shortcut is checked against the same plan typed out by hand (results equal to
round-off) and, where it is a weight, against the hand sum of weight × length.
"""

import math
import textwrap

import numpy as np
import pytest

from planshear import analyze, parse_plan
from planshear.errors import PlanError
from planshear.loads import expand_load_cases, seismic_weight

from conftest import KIP

# An invented plan with a re-entrant corner and a skewed edge (ft):
# (0,0) → (60,0) → (60,20) → (40,40) → (20,40) → (20,30) → (0,30).
HEAD = textwrap.dedent(
    """
    [plan]
    name = "notched plan"
    length_unit = "ft"

    [diaphragm]
    outline = [[0, 0], [60, 0], [60, 20], [40, 40], [20, 40], [20, 30], [0, 30]]
    material = { kind = "wood-panel", Ga = "15 kip/in" }
    chord_EA = "30000 kip"

    [grid]
    x = { "1" = 0, "2" = 20, "3" = 60 }
    y = { "A" = 0, "B" = 30, "C" = 40 }
    line = [{ name = "K", start = [60, 20], end = [40, 40] }]
    """
)
WALLS = textwrap.dedent(
    """
    [[wall]]
    id = "W1"
    line = "1"
    from = 0
    to = 30
    stiffness = "40 kip/in"

    [[wall]]
    id = "W3"
    line = "3"
    from = 0
    to = 20
    stiffness = "30 kip/in"

    [[wall]]
    id = "WA"
    line = "A"
    from = 10
    to = 50
    stiffness = "50 kip/in"

    [[wall]]
    id = "WC"
    line = "C"
    from = 20
    to = 40
    stiffness = "25 kip/in"
    """
)
MESH = '\n[mesh]\nsize = 10\n'  # coarse: both plans are meshed alike, so results compare to round-off
SKEW = math.hypot(20, 20)


def _load(weights: str, name: str = "E", directions: str = '["x", "y"]') -> str:
    return textwrap.dedent(
        f"""
        [[load]]
        name = "{name}"
        kind = "seismic"
        area_weight = "12 psf"
        fpx = {{ SDS = 1.0, Ie = 1.0, story_force_ratio = 0.2 }}
        directions = {directions}
        """
    ) + weights + "\n"


def _wall_forces(results) -> dict:
    doc = results.to_json()
    return {(method, case, wall): force for method, block in doc["assumptions"].items()
            for case, data in block["cases"].items() for wall, force in data["walls"].items()}


# --------------------------------------------------------------------------------------
# Wall types
# --------------------------------------------------------------------------------------

TYPED = textwrap.dedent(
    """
    [wall_type.ply]
    wood = { Ga = "18 kip/in", height = "10 ft", chord_EA = "2000 kip", holdown_k = "60 kip/in" }

    [wall_type.cmu]
    pier = { E = "1800 ksi", thickness = "8 in", height = "12 ft", top = "fixed" }

    [[wall]]
    id = "W1"
    line = "1"
    from = 0
    to = 30
    type = "ply"

    [[wall]]
    id = "W3"
    line = "3"
    from = 0
    to = 20
    type = "ply"
    wood = { height = "12 ft" }

    [[wall]]
    id = "WA"
    line = "A"
    from = 10
    to = 50
    type = "cmu"

    [[wall]]
    id = "WC"
    line = "C"
    from = 20
    to = 40
    type = "cmu"
    stiffness = "25 kip/in"
    """
)
TYPED_OUT = textwrap.dedent(
    """
    [[wall]]
    id = "W1"
    line = "1"
    from = 0
    to = 30
    wood = { Ga = "18 kip/in", height = "10 ft", chord_EA = "2000 kip", holdown_k = "60 kip/in" }

    [[wall]]
    id = "W3"
    line = "3"
    from = 0
    to = 20
    wood = { Ga = "18 kip/in", height = "12 ft", chord_EA = "2000 kip", holdown_k = "60 kip/in" }

    [[wall]]
    id = "WA"
    line = "A"
    from = 10
    to = 50
    pier = { E = "1800 ksi", thickness = "8 in", height = "12 ft", top = "fixed" }

    [[wall]]
    id = "WC"
    line = "C"
    from = 20
    to = 40
    stiffness = "25 kip/in"
    """
)


def test_wall_type_with_overrides_equals_walls_typed_out():
    """A wall takes its type's stiffness form; a field written on the wall overrides the
    type's (W3's height), a different form on the wall replaces it (WC). Same plan typed out
    by hand: identical stiffnesses and identical results (rigid and flexible; equal to
    round-off)."""
    load = _load("") + '\n[classification]\nidealized_flexible = true\n'
    typed = parse_plan(HEAD + TYPED + load, "typed.toml")
    by_hand = parse_plan(HEAD + TYPED_OUT + load, "by_hand.toml")
    for a, b in zip(typed.walls, by_hand.walls, strict=True):
        assert (a.id, a.stiffness.formula) == (b.id, b.stiffness.formula)
        assert a.k == b.k
    # W3's override took effect: a taller wall of the same type is softer.
    k = {w.id: w.k for w in typed.walls}
    assert k["W3"] / 20 < k["W1"] / 30  # per unit length softer: 12 ft high and shorter
    assert k["WC"] == pytest.approx(25 * KIP / (0.0254), rel=1e-12)
    forces_typed = _wall_forces(analyze(typed))
    forces_by_hand = _wall_forces(analyze(by_hand))
    assert forces_typed.keys() == forces_by_hand.keys()
    for key, value in forces_by_hand.items():
        assert forces_typed[key] == pytest.approx(value, rel=1e-12, abs=1e-12)


def test_unknown_wall_type_lists_the_defined_types():
    text = HEAD + TYPED.replace('type = "cmu"\nstiffness', 'type = "cmuu"\nstiffness') + _load("")
    with pytest.raises(PlanError) as caught:
        parse_plan(text, "typo.toml")
    message = "\n".join(caught.value.problems)
    assert 'typo.toml: wall "WC".type: "cmuu" is not a defined wall type (defined: "ply", "cmu")' in message
    assert 'did you mean "cmu"?' in message


def test_wall_type_with_two_forms_and_incomplete_merge_are_refused():
    """A type needs exactly one stiffness form; a merged wall still needs every field."""
    text = HEAD + textwrap.dedent(
        """
        [wall_type.bad]
        stiffness = "10 kip/in"
        pier = { E = "1800 ksi" }

        [wall_type.part]
        pier = { E = "1800 ksi", thickness = "8 in" }
        """
    ) + TYPED_OUT.replace('pier = { E = "1800 ksi", thickness = "8 in", height = "12 ft", top = "fixed" }',
                          'type = "part"') + _load("")
    with pytest.raises(PlanError) as caught:
        parse_plan(text, "types.toml")
    message = "\n".join(caught.value.problems)
    assert 'wall_type "bad": give exactly one of "stiffness", "pier" or "wood" (found stiffness, pier)' in message
    assert 'wall "WA".pier: required key "height" is missing' in message


# --------------------------------------------------------------------------------------
# Perimeter weight
# --------------------------------------------------------------------------------------

# The outline's edges as grid-line weights typed by hand, with the faces their outward
# normals point to: bottom (-y), right (+x), skewed (+x, +y), top (+y), re-entrant step
# x = 20 (-x), step y = 30 (+y), left (-x).
EDGES_BY_HAND = {
    "A": ('{ line = "A", weight = "0.4 kip/ft", from = 0, to = 60 }', 60.0, {"-y"}),
    "3": ('{ line = "3", weight = "0.4 kip/ft", from = 0, to = 20 }', 20.0, {"+x"}),
    "K": (f'{{ line = "K", weight = "0.4 kip/ft", from = 0, to = {SKEW!r} }}', SKEW, {"+x", "+y"}),
    "C": ('{ line = "C", weight = "0.4 kip/ft", from = 20, to = 40 }', 20.0, {"+y"}),
    "2": ('{ line = "2", weight = "0.4 kip/ft", from = 30, to = 40 }', 10.0, {"-x"}),
    "B": ('{ line = "B", weight = "0.4 kip/ft", from = 0, to = 20 }', 20.0, {"+y"}),
    "1": ('{ line = "1", weight = "0.4 kip/ft", from = 0, to = 30 }', 30.0, {"-x"}),
}


def _by_hand(faces: set[str] | None, only_across: bool = False) -> str:
    chosen = [entry for entry, _, facing in EDGES_BY_HAND.values() if faces is None or facing & faces]
    if only_across:
        chosen = [e.replace(" }", ", only_across = true }") for e in chosen]
    return "line_weight = [" + ", ".join(chosen) + "]"


@pytest.mark.parametrize("faces", [None, {"+x", "+y"}, {"-x"}])
def test_perimeter_weight_equals_line_weights_typed_by_hand(faces):
    """perimeter_weight on all edges (or those whose outward normal faces +x/+y, or -x)
    gives the same seismic weight and center of mass as the same edges typed as grid-line
    weights, and the hand sum weight × edge length (each edge's own length: the skewed
    edge 20·√2 ft counted once, the re-entrant step x = 20 facing -x); then identical cases."""
    spec = '"all"' if faces is None else "[" + ", ".join(f'"{f}"' for f in sorted(faces)) + "]"
    short = parse_plan(HEAD + WALLS + _load(f'perimeter_weight = {{ weight = "0.4 kip/ft", faces = {spec} }}')
                       + MESH, "short.toml")
    typed = parse_plan(HEAD + WALLS + _load(_by_hand(faces)) + MESH, "typed.toml")
    length = sum(length for _, length, facing in EDGES_BY_HAND.values() if faces is None or facing & faces)
    area = 60 * 20 + 20 * 10 + 20 * 20 + 0.5 * 20 * 20  # ft², hand decomposition of the outline
    a, b = seismic_weight(short, short.loads[0]), seismic_weight(typed, typed.loads[0])
    assert a.total / KIP == pytest.approx(0.4 * length + 12 * area / 1000, rel=1e-12)
    assert a.total == pytest.approx(b.total, rel=1e-13)
    assert a.center == pytest.approx(b.center, rel=1e-12)
    for case_a, case_b in zip(expand_load_cases(short), expand_load_cases(typed), strict=True):
        assert case_a.name == case_b.name
        assert case_a.force == pytest.approx(case_b.force, rel=1e-13)
        assert case_a.field.centroid() == pytest.approx(case_b.field.centroid(), rel=1e-12)


def test_perimeter_weight_results_equal_the_typed_weights():
    """Whole analysis (flexible, rigid, semi-rigid) with perimeter_weight = all against the
    same weights typed by hand: every wall force of every case equal to round-off."""
    short = parse_plan(HEAD + WALLS + _load('perimeter_weight = { weight = "0.4 kip/ft" }') + MESH, "short.toml")
    typed = parse_plan(HEAD + WALLS + _load(_by_hand(None)) + MESH, "typed.toml")
    forces_short, forces_typed = _wall_forces(analyze(short)), _wall_forces(analyze(typed))
    assert forces_short.keys() == forces_typed.keys()
    scale = max(abs(v) for v in forces_typed.values())
    for key, value in forces_typed.items():
        assert forces_short[key] == pytest.approx(value, rel=1e-9, abs=1e-9 * scale), key


def test_bad_faces_are_refused():
    text = HEAD + WALLS + _load('perimeter_weight = { weight = "0.4 kip/ft", faces = ["north"] }')
    with pytest.raises(PlanError, match=r'perimeter_weight.faces: must be "all" or a list of some of "\+x"'):
        parse_plan(text, "faces.toml")


# --------------------------------------------------------------------------------------
# Weights that act only across their line (per-direction seismic weight)
# --------------------------------------------------------------------------------------


def test_only_across_equals_two_loads_one_per_direction():
    """One load with only_across wall weights (a perimeter weight on every edge and a line
    weight on interior line 2) against two loads typed by hand, Ex (directions x, the
    weights across x: edges parallel to y and the skewed edge) and Ey: the same seismic
    weight per direction (hand sum), Fpx, and every wall force of every case to round-off."""
    interior = '{ line = "2", weight = "0.3 kip/ft", from = 0, to = 30, only_across = true }'
    one = parse_plan(HEAD + WALLS + _load(
        'perimeter_weight = { weight = "0.4 kip/ft", only_across = true }\nline_weight = [' + interior + "]")
        + MESH, "one.toml")
    plain = interior.replace(", only_across = true", "")
    across_x = _by_hand({"+x", "-x"}).replace("line_weight = [", "line_weight = [" + plain + ", ")
    across_y = _by_hand({"+y", "-y"})
    two = parse_plan(HEAD + WALLS + _load(across_x, "Ex", '["x"]') + _load(across_y, "Ey", '["y"]') + MESH,
                     "two.toml")
    load = one.loads[0]
    assert load.weight_depends_on_direction
    area_kip = 12 * (60 * 20 + 20 * 10 + 20 * 20 + 0.5 * 20 * 20) / 1000
    # Along x: edges x = 60 (20 ft), x = 20 step (10 ft), x = 0 (30 ft), skewed (counted in both), line 2 (30 ft).
    assert seismic_weight(one, load, "x").total / KIP == pytest.approx(
        area_kip + 0.4 * (20 + 10 + 30 + SKEW) + 0.3 * 30, rel=1e-12)
    assert seismic_weight(one, load, "y").total / KIP == pytest.approx(
        area_kip + 0.4 * (60 + 20 + 20 + SKEW), rel=1e-12)
    cases_one = {c.name: c for c in expand_load_cases(one)}
    cases_two = {c.name.replace("Ex", "E").replace("Ey", "E"): c for c in expand_load_cases(two)}
    assert cases_one.keys() == cases_two.keys()
    for name, case in cases_one.items():
        assert case.force == pytest.approx(cases_two[name].force, rel=1e-13)
        assert case.torsion == pytest.approx(cases_two[name].torsion, rel=1e-12)
    forces_one = _wall_forces(analyze(one))
    forces_two = {(m, c.replace("Ex", "E").replace("Ey", "E"), w): f
                  for (m, c, w), f in _wall_forces(analyze(two)).items()}
    assert forces_one.keys() == forces_two.keys()
    scale = max(abs(v) for v in forces_two.values())
    for key, value in forces_two.items():
        assert forces_one[key] == pytest.approx(value, rel=1e-9, abs=1e-9 * scale), key


def test_only_across_direction_without_weight_is_refused():
    text = HEAD + WALLS + textwrap.dedent(
        """
        [[load]]
        name = "E"
        kind = "seismic"
        line_weight = [{ line = "A", weight = "0.3 kip/ft", only_across = true }]
        total = "10 kip"
        directions = ["x", "y"]
        """
    )
    with pytest.raises(PlanError, match="has no seismic weight in the direction x"):
        parse_plan(text, "empty.toml")


def test_summary_reports_weight_per_direction():
    from planshear.run import plan_summary

    plan = parse_plan(HEAD + WALLS + _load('perimeter_weight = { weight = "0.4 kip/ft", only_across = true }'),
                      "sum.toml")
    summary = plan_summary(plan, expand_load_cases(plan))["loads"]["E"]
    per = summary["by_direction"]
    assert per["x"]["seismic_weight"] != per["y"]["seismic_weight"]
    assert summary["seismic_weight"] == per["x"]["seismic_weight"]
    assert np.isfinite(per["y"]["center_of_mass"]).all()
