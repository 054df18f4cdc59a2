"""Terminal output (planshear/terminal.py and the printing in planshear/cli.py): plain text
off a terminal, units on every number of `check`, design values as magnitude + sense +
governing case, and the collector table without empty lines."""

import json
import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

from planshear import analyze, load_plan
from planshear.cli import _print_results, main
from planshear.plan import parse_plan

ROOT = Path(__file__).parents[1]
PLANS = sorted((ROOT / "examples").glob("*.toml")) + [ROOT / "planshear" / "data" / "demo.toml"]
ANSI = re.compile(r"\x1b[\[\]()]")  # CSI, OSC and charset escapes all start so

#: Units `check` may print after a number (plan units ft/in/kip or m/mm/kN, and N/lb).
UNITS = ("ft²", "m²", "in²", "mm²", "kip/in", "kip/ft", "kN/mm", "kN/m", "lb/in", "N/mm", "N/m", "kip", "kN",
         "lb", "N", "ft", "in", "mm", "cm", "m", "%", "(dimensionless)")
NUMBER = re.compile(r"(?<![\w.\-+])[-+]?\d+(?:\.\d+)?(?:e[-+]?\d+)?(?![\w.])")
#: Clause and equation numbers, and the ELF level (an index), are references, not quantities.
REFERENCE = re.compile(r"ASCE 7-\d+|(Eq\.|Table|§|level)\s*[\d.\-]+")


@pytest.fixture(scope="module")
def piped_demo(tmp_path_factory):
    """The demo run as a user pipes it: a real pipe, FORCE_COLOR set to tempt the library."""
    out = tmp_path_factory.mktemp("piped") / "demo"
    env = {**os.environ, "FORCE_COLOR": "1", "COLUMNS": "60"}
    done = subprocess.run([sys.executable, "-m", "planshear.cli", "demo", "--no-report", "--out", str(out)],
                          capture_output=True, text=True, env=env, cwd=ROOT, check=True)
    return done.stdout, done.stderr, json.loads((out / "results.json").read_text())


def _table_rows(text: str, heading: str) -> list[str]:
    """The rows of the table under the paragraph starting with ``heading`` (after the rule)."""
    block = text.split("\n" + heading, 1)[1].split("\n\n", 1)[0].splitlines()
    start = next(i for i, line in enumerate(block) if set(line.strip()) == {"─"})
    return [line for line in block[start + 1:] if line and not line.startswith("  ")]


def test_piped_output_is_plain_and_rows_are_whole(piped_demo):
    """No escape codes and no live display in a pipe, even with FORCE_COLOR set and a
    narrow COLUMNS; each wall's row holds its name, design value with unit and case on
    one line (no wrapping)."""
    stdout, stderr, doc = piped_demo
    assert not ANSI.search(stdout) and not ANSI.search(stderr)
    assert stderr == ""  # the stage display is for terminals only
    force = doc["units"]["force"]
    rows = _table_rows(stdout, "wall forces")
    assert len(rows) == len(doc["plan"]["wall_stiffness"])
    for row, (wall, slots) in zip(rows, doc["envelope"]["walls"].items(), strict=True):
        design = slots["design"]
        assert row.split()[0] == wall
        assert f"{abs(design['value']):.2f} {force}" in row and f"{design['assumption']} {design['case']}" in row


def test_design_values_are_magnitude_sense_and_case(piped_demo):
    """Collector and chord rows print |value| with its unit, tension/compression in words
    (both where the largest of each sign are equal) and the governing case — never a signed
    number. Every printed value is checked against results.json."""
    stdout, _, doc = piped_demo
    force = doc["units"]["force"]
    assert not re.search(r"(?<![\w.])-\d+\.\d\d", stdout.split("\nwall forces")[1].split("\nresults written")[0])
    rows = {re.split(r"\s{2,}", row)[0]: row for row in _table_rows(stdout, "collector forces")}
    for name, slots in doc["envelope"]["collectors"].items():
        if not slots.get("design"):
            continue
        row = rows[name]
        for key in ("design", "with_overstrength"):
            g = slots[key]
            prefix = "" if key == "design" else "with_overstrength_"
            t, c = slots[prefix + "tension"], slots[prefix + "compression"]
            word = ("tension or compression" if t and c and abs(t["value"] + c["value"]) < 1e-9 * abs(g["value"])
                    else "tension" if g["value"] > 0 else "compression")
            assert re.search(rf"{abs(g['value']):.2f} {force}\s+{word}\s+{g['assumption']} {re.escape(g['case'])}", row)
    chords = {re.split(r"\s{2,}", row)[0]: row for row in _table_rows(stdout, "chord forces")}
    for name, slots in doc["envelope"]["chords"].items():
        g, t, c = slots.get("design"), slots.get("tension"), slots.get("compression")
        if g is None:
            continue
        word = ("tension or compression" if t and c and abs(t["value"] + c["value"]) < 1e-9 * abs(g["value"])
                else "tension" if g["value"] > 0 else "compression")
        assert re.search(rf"{abs(g['value']):.2f} {force}\s+{word}\s+{g['assumption']} {re.escape(g['case'])}",
                         chords[slots.get("part") or slots.get("member", name)])


def test_line_4_overstrength_comes_from_the_seismic_case(piped_demo):
    """The demo's line 4: the design force governs under wind (no Ω0), the §12.10.2.1
    value under a seismic case: ASCE 7-16 §12.10.2.1 Exception 1 caps Ω0 × E at the force
    from Fpx of Eq. 12.10-3, i.e. the case's collector peak × Fpx(12.10-3)/Fpx (hand
    statics on results.json's own per-case numbers). The row names both cases."""
    stdout, _, doc = piped_demo
    slots = doc["envelope"]["collectors"]["4"]
    design, omega = slots["design"], slots["with_overstrength"]
    load = doc["plan"]["loads"]
    assert design["case"].startswith("W") and load["W"]["kind"] == "edge"
    assert omega["case"].startswith("E") and "Exception 1" in slots["overstrength"]["governs"]
    e = load["E"]
    peak = doc["assumptions"][omega["assumption"]]["cases"][omega["case"]]["lines"]["4"]["collector_peak"]
    ratio = e["fpx_values"]["12.10-3"] / e["fpx_values"][e["fpx_equation"]]
    assert abs(omega["value"]) == pytest.approx(ratio * abs(peak), rel=1e-6)  # 9 digits in results.json
    row = next(r for r in _table_rows(stdout, "collector forces") if r.split()[0] == "4")
    assert design["case"] in row and f"{omega['case']}, Exception 1" in row


@pytest.mark.parametrize("plan", PLANS, ids=lambda p: p.stem)
def test_every_number_of_check_has_a_unit(plan, capsys):
    """`planshear check`: every number is followed by a unit (or says it is dimensionless);
    names (walls, cases, the plan's name and file) and clause numbers are not quantities."""
    assert main(["check", str(plan)]) == 0
    text = capsys.readouterr().out
    doc_plan = load_plan(plan)
    names = sorted({doc_plan.name, doc_plan.source, Path(doc_plan.source).name}
                   | {w.id for w in doc_plan.walls}, key=len, reverse=True)
    for name in names:  # whole words only: wall "SA" is not in "ASCE"
        text = re.sub(rf"(?<!\w){re.escape(name)}(?!\w)", "NAME", text)
    text = REFERENCE.sub("REF", text)
    numbers = list(NUMBER.finditer(text))
    assert len(numbers) > 5  # the test reads something
    for match in numbers:
        after = text[match.end():].lstrip(" ")
        assert after.startswith(UNITS), f"{match.group()} without a unit in: {text[max(0, match.start() - 40):match.end() + 20]!r}"


def test_line_without_walls_or_force_is_left_out(capsys):
    """Cedar Yard with one more grid line (5, x = 200 ft) that has no walls and lies in no
    transfer region: its collector force is nil in every case, so it is not a row of the
    collector table, the count of such lines is stated once, and the lines with walls are all
    rows. Line 2 has no walls either but closes transfer region TD 3-2, whose shear it
    collects: it is a row."""
    path = ROOT / "examples" / "cedar_yard_warehouse_deck.toml"
    text = path.read_text().replace('x = { "1" = 0, "2" = 75, "3" = 150, "4" = 240 }',
                                    'x = { "1" = 0, "2" = 75, "3" = 150, "5" = 200, "4" = 240 }')
    assert '"5" = 200' in text
    plan = parse_plan(text, path.name)
    results = analyze(plan, semirigid=False)
    doc = results.to_json()
    collectors = doc["envelope"]["collectors"]
    with_walls = {w.line for w in plan.walls}
    empty = [n for n, s in collectors.items() if n not in with_walls and s.get("design")
             and abs(s["design"]["value"]) < 0.005 and abs(s["with_overstrength"]["value"]) < 0.005]
    assert empty == ["5"]
    _print_results(results, Path("unused"))
    text = capsys.readouterr().out
    names = [re.split(r"\s{2,}", row)[0] for row in _table_rows(text, "collector forces")]
    assert "5" not in names and "2" in names and with_walls & set(collectors) <= set(names)
    assert text.count("without walls and without collector force left out") == 1
    assert "1 line(s) without walls and without collector force left out: 5" in text
