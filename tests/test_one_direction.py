"""Walls in one direction only, loaded in that direction: the flexible method runs, the
rigid and semi-rigid assumptions are listed as unavailable with the reason, and the
terminal, results.json and report say so."""

from __future__ import annotations

import json
import textwrap

import pytest

from planshear.cli import main
from planshear.errors import UnstablePlanError
from planshear.plan import assess_stability, parse_plan
from planshear.run import analyze

from conftest import KIP

PLAN = textwrap.dedent(
    """
    [plan]
    name = "walls along y only"
    length_unit = "ft"

    [diaphragm]
    outline = [[0, 0], [120, 0], [120, 40], [0, 40]]
    material = { kind = "wood-panel", Ga = "15 kip/in" }
    chord_EA = "20000 kip"

    [grid]
    x = { "1" = 0, "2" = 60, "3" = 120 }
    y = { "A" = 0, "B" = 40 }

    [[wall]]
    id = "W1"
    line = "1"
    from = 0
    to = 40
    stiffness = "30 kip/in"

    [[wall]]
    id = "W2"
    line = "2"
    from = 10
    to = 30
    stiffness = "20 kip/in"

    [[wall]]
    id = "W3"
    line = "3"
    from = 0
    to = 40
    stiffness = "30 kip/in"

    [[load]]
    name = "E"
    kind = "seismic"
    area_weight = "15 psf"
    total = "40 kip"
    directions = ["y"]
    """
)


def test_flexible_runs_and_the_others_are_unavailable():
    """Uniform load 40 kip over 120 ft on supports at 0, 60 and 120 ft: two simple spans
    give 10, 20 and 10 kip (simple-beam reactions wL/2, Taly, Design of Reinforced Masonry
    Structures, 2nd ed., Eq. 4.132)."""
    results = analyze(parse_plan(PLAN))
    assert set(results.methods) == {"flexible"}
    assert set(results.unavailable) == {"rigid", "semirigid"}
    assert all("no wall resists force along x" in reason for reason in results.unavailable.values())
    forces = results.methods["flexible"].cases["E+y"].wall_forces
    assert forces["W1"] == pytest.approx(10 * KIP, rel=1e-12)
    assert forces["W2"] == pytest.approx(20 * KIP, rel=1e-12)
    assert forces["W3"] == pytest.approx(10 * KIP, rel=1e-12)
    doc = results.to_json()
    assert doc["classification"]["calculated"] is False
    assert "not stated in the plan" in doc["classification"]["note"]
    assert doc["envelope"]["walls"]["W2"]["design"]["assumption"] == "flexible"
    assert set(doc["equilibrium"]["largest_imbalance"]) == {"flexible"}


def test_terminal_and_report_say_so(tmp_path, capsys):
    plan = tmp_path / "oneway.toml"
    plan.write_text(PLAN)
    out = tmp_path / "out"
    assert main(["run", str(plan), "--out", str(out)]) == 0
    printed = capsys.readouterr().out
    assert "rigid: not run — no wall resists force along x" in printed
    assert "semirigid: not run" in printed and "cannot be calculated" in printed
    html = (out / "report.html").read_text(encoding="utf-8")
    assert "Assumptions not run" in html and "no wall resists force along x" in html
    assert set(json.loads((out / "results.json").read_text())["unavailable"]) == {"rigid", "semirigid"}
    assert main(["check", str(plan)]) == 0
    assert "rigid: cannot be run" in capsys.readouterr().out


def test_one_line_of_resistance_is_still_refused():
    """Walls along y on one line only: no method can run (a flexible span needs two
    supports), so the plan is refused and the message says why."""
    pieces = PLAN.split("[[wall]]")
    text = pieces[0] + "[[wall]]" + pieces[1] + PLAN[PLAN.index("[[load]]"):]  # wall W1 only
    with pytest.raises(UnstablePlanError, match="two lines of resistance"):
        parse_plan(text)


def test_load_across_the_walls_is_still_refused():
    """A loaded direction with no wall at all stays an error."""
    with pytest.raises(UnstablePlanError, match="no wall resists force in the x direction"):
        parse_plan(PLAN.replace('directions = ["y"]', 'directions = ["x", "y"]'))


def test_walls_in_both_directions_run_everything(plan_from):
    from conftest import end_walls, rectangle_plan

    assert assess_stability(plan_from(rectangle_plan(walls=end_walls()))).unavailable == {}
