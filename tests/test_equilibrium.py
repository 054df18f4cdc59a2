"""Every case of every assumption is checked for equilibrium (force along x and y, moment
about z of the wall forces against the load, statics) before anything is written; a
case that fails is an error (exit status 1), never a result."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np
import pytest

from planshear.cli import main
from planshear.errors import EquilibriumError
from planshear.fem.model import _line_load
from planshear.mesh import build_mesh
from planshear.plan import load_plan
from planshear.run import EQUILIBRIUM_TOLERANCE, analyze, check_equilibrium

from conftest import KIP, end_walls, rectangle_plan

SMALL = "[mesh]\nsize = 12.5\n\n[classification]\nsensitivity = [0.5, 2.0]\n"


@pytest.fixture(scope="module")
def results():
    from planshear.plan import parse_plan

    return analyze(parse_plan(rectangle_plan(walls=end_walls(), extra=SMALL)))


def test_every_assumption_and_sensitivity_run_is_checked(results):
    """Flexible, rigid, semi-rigid and both sensitivity runs balance to round-off."""
    assert set(results.equilibrium) == {"flexible", "rigid", "semirigid", "semirigid@0.5", "semirigid@2"}
    assert max(results.equilibrium.values()) < 1e-10
    doc = results.to_json()["equilibrium"]
    assert doc["tolerance"] == EQUILIBRIUM_TOLERANCE and set(doc["largest_imbalance"]) == set(results.equilibrium)


def test_a_wall_force_off_by_a_little_is_refused(results):
    """Moving 0.01 % of the load from one wall to a parallel wall keeps ΣF but not ΣM: the
    check must see the moment, name the assumption and the case."""
    rigid = results.methods["rigid"]
    case = rigid.cases["E+y+ecc"]
    shift = 1e-4 * case.applied_force
    forces = dict(case.wall_forces, W1=case.wall_forces["W1"] + shift, W2=case.wall_forces["W2"] - shift)
    tampered = dataclasses.replace(rigid, cases={**rigid.cases, "E+y+ecc": dataclasses.replace(case, wall_forces=forces)})
    with pytest.raises(EquilibriumError, match=r"rigid assumption, case E\+y\+ecc.*Mz"):
        check_equilibrium(results.plan, results.cases, tampered, "rigid")


def test_semirigid_load_vector_is_checked_against_the_case(results):
    """A nodal load vector that lost 1 % of its load is refused even though the walls
    balance that vector."""
    run = results.semirigid
    broken = dataclasses.replace(run.solution, loads=run.solution.loads * 0.99)
    with pytest.raises(EquilibriumError, match="nodal loads"):
        check_equilibrium(results.plan, results.cases, run.result, "semirigid", broken)


def test_cli_exits_1_and_writes_nothing_on_imbalance(tmp_path, capsys, monkeypatch):
    """The CLI maps an equilibrium failure to exit status 1 (internal error) and writes no
    output folder."""
    import planshear.cli as cli

    def failing(*args, **kwargs):
        raise EquilibriumError("plan.toml: equilibrium check failed for the rigid assumption, case E+x")

    monkeypatch.setattr(cli, "analyze", failing)
    plan = tmp_path / "plan.toml"
    plan.write_text(rectangle_plan(walls=end_walls()))
    out = tmp_path / "out"
    assert main(["run", str(plan), "--out", str(out), "--quiet"]) == 1
    assert "equilibrium check failed" in capsys.readouterr().err
    assert not out.exists()


def test_line_load_ending_inside_an_edge(plan_from):
    """A uniform line load q on a segment that starts and ends inside mesh edges must give
    nodal forces whose resultant is q × length at the segment's midpoint (statics); the
    old rule dropped the partly covered edges."""
    plan = plan_from(rectangle_plan(walls=end_walls(), extra="[mesh]\nsize = 10.0\norder = 2\n"))
    mesh = build_mesh(plan)
    start, end = np.array([3.3, 0.0]) * 0.3048, np.array([71.7, 0.0]) * 0.3048
    q = 1.5 * KIP / 0.3048
    edges, forces = _line_load(mesh, start, end, q, np.array([0.0, 1.0]), 1e-9)
    f = np.zeros(mesh.n_dofs)
    np.add.at(f, np.stack([2 * edges, 2 * edges + 1], -1).reshape(len(edges), -1).ravel(), forces.ravel())
    f = f.reshape(-1, 2)
    length = float(end[0] - start[0])
    assert f[:, 1].sum() == pytest.approx(q * length, rel=1e-12)
    assert f[:, 0].sum() == 0.0
    centre = (start + end) / 2
    moment = float(np.sum((mesh.nodes[:, 0] - centre[0]) * f[:, 1]))
    assert moment == pytest.approx(0.0, abs=1e-12 * q * length * length)


def test_metric_example_wind_load_reaches_the_model_completely():
    """The metric example's W+y wind load (4.5 kN/m on 24 m = 108 kN) ends at the outline
    vertex x = 15 m inside a mesh edge; its nodal loads must sum to 108 kN."""
    plan = load_plan(Path(__file__).parents[1] / "examples" / "harbour_kiosk_metric.toml")
    results = analyze(plan)
    solution = results.semirigid.solution
    j = [c.name for c in solution.cases].index("W+y")
    assert solution.loads[1::2, j].sum() == pytest.approx(108e3, rel=1e-12)
    assert results.equilibrium["semirigid"] < 1e-10
