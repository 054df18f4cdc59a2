"""planshear diff: what changed between two results folders."""

from __future__ import annotations

import csv
import json
import textwrap

import pytest

from planshear import analyze, parse_plan
from planshear.cli import main
from planshear.diff import compare_runs, format_table
from planshear.errors import PlanError

from conftest import KIP, end_walls, rectangle_plan

COARSE = "[mesh]\nsize = 10.0\norder = 2\n"  # coarse: the tests compare two runs, not the mesh
GRID = 'x = { "1" = 0, "2" = 100, "3" = 50 }\ny = { "A" = 0, "B" = 50 }'
MIDDLE_WALL = textwrap.dedent("""
    [[wall]]
    id = "W3"
    line = "3"
    from = 15
    to = 35
    stiffness = "30 kip/in"
""")


def _run(tmp_path, name: str, walls: str) -> str:
    folder = tmp_path / name
    plan = parse_plan(rectangle_plan(walls=walls, extra=COARSE, grid=GRID), f"{name}.toml")
    analyze(plan).write(folder, report=False)
    return str(folder)


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("diff")
    return {
        "base": _run(tmp, "base", end_walls()),
        "again": _run(tmp, "again", end_walls()),
        "soft": _run(tmp, "soft", end_walls().replace('"50 kip/in"', '"20 kip/in"', 1)),
        "added": _run(tmp, "added", end_walls() + MIDDLE_WALL),
    }


def _design(folder: str, group: str, item: str) -> float:
    with open(f"{folder}/results.json", encoding="utf-8") as handle:
        return json.load(handle)["envelope"][group][item]["design"]["value"]


def test_identical_runs_show_no_change(runs):
    comparison = compare_runs(runs["base"], runs["again"])
    assert comparison.reported == ()
    assert {r.status for r in comparison.rows} == {"same"}
    assert "no changes above the threshold" in format_table(comparison)


def test_one_wall_stiffness_change_shows_that_wall(runs, tmp_path):
    """W1 at 20 instead of 50 kip/in: W1 is reported with the values read independently
    from the two results.json files, and W1 and W2 (the lines along y) move in opposite
    directions (the load they share is the same in the flexible and rigid methods)."""
    comparison = compare_runs(runs["base"], runs["soft"])
    rows = {(r.group, r.item): r for r in comparison.reported}
    w1 = rows[("wall", "W1")]
    a, b = _design(runs["base"], "walls", "W1"), _design(runs["soft"], "walls", "W1")
    assert (w1.a, w1.b, w1.delta) == (a, b, pytest.approx(b - a, abs=1e-12))
    assert w1.status == "changed" and abs(b - a) > 0.5 and w1.relative > 0.05
    assert w1.unit == "kip"
    w2 = rows.get(("wall", "W2"))
    assert w2 is None or (w2.delta > 0) != (w1.delta > 0)
    out = tmp_path / "diff.csv"
    assert main(["diff", runs["base"], runs["soft"], "--csv", str(out)]) == 0
    with open(out, newline="", encoding="utf-8") as handle:
        table = list(csv.DictReader(handle))
    assert any(r["item"] == "W1" and r["status"] == "changed" and float(r["B"]) == b for r in table)
    # A threshold above the change hides it.
    big = f"{abs(b - a) * 1.01:.6f} kip"
    assert ("wall", "W1") not in {(r.group, r.item) for r in compare_runs(runs["base"], runs["soft"],
                                                                          [big]).reported}


def test_added_wall_is_new(runs, capsys):
    comparison = compare_runs(runs["base"], runs["added"])
    new = [(r.group, r.item) for r in comparison.rows if r.status == "new"]
    assert ("wall", "W3") in new
    assert main(["diff", runs["base"], runs["added"]]) == 0
    text = capsys.readouterr().out
    assert "wall W3" in text and "new" in text
    back = compare_runs(runs["added"], runs["base"])
    assert ("wall", "W3") in [(r.group, r.item) for r in back.rows if r.status == "vanished"]
    order = [r.status for r in comparison.reported]
    assert order == sorted(order, key=["check fails", "verdict changed", "not run", "vanished", "new",
                                       "changed", "check passes"].index)


def test_other_unit_system_is_converted(runs, tmp_path):
    """RUN_B in kN and mm: converted to RUN_A's kip and in (NIST SP 811, 2008, Appendix B.9:
    1 kip = 4.448222 kN; 1 in = 25.4 mm exactly); the converted run shows no change."""
    with open(f"{runs['base']}/results.json", encoding="utf-8") as handle:
        doc = json.load(handle)
    doc["units"] = {"force": "kN", "position": "m", "displacement": "mm", "unit_shear": "kN/m"}
    for group in ("walls", "line_reactions", "collectors", "chords"):
        for slots in doc["envelope"][group].values():
            for slot in ("design", "with_overstrength"):
                if slots.get(slot):
                    slots[slot]["value"] *= KIP / 1000.0
    for check in doc["classification"]["directions"].values():
        for span in check["spans"]:
            span["MDD"] *= 25.4
            span["ADVE"] *= 25.4
    (tmp_path / "metric").mkdir()
    (tmp_path / "metric" / "results.json").write_text(json.dumps(doc), encoding="utf-8")
    comparison = compare_runs(runs["base"], tmp_path / "metric", ["0.001%", "1e-6 kip"])
    assert "converted from kN, mm" in comparison.conversion
    assert comparison.reported == ()
    assert all(r.delta is None or abs(r.delta) < 1e-9 * max(1.0, abs(r.a)) for r in comparison.rows)


def test_clear_errors(runs, tmp_path, capsys):
    (tmp_path / "empty").mkdir()
    with pytest.raises(PlanError, match="has no results.json"):
        compare_runs(runs["base"], tmp_path / "empty")
    with pytest.raises(PlanError, match="no such folder"):
        compare_runs(tmp_path / "missing", runs["base"])
    (tmp_path / "other").mkdir()
    (tmp_path / "other" / "results.json").write_text('{"hello": 1}')
    with pytest.raises(PlanError, match="not a planshear results file"):
        compare_runs(runs["base"], tmp_path / "other")
    for bad in ("5", "5 psf", "x%"):
        with pytest.raises(PlanError, match="--threshold"):
            compare_runs(runs["base"], runs["again"], [bad])
    assert main(["diff", runs["base"], str(tmp_path / "empty")]) == 2
    assert "has no results.json" in capsys.readouterr().err
