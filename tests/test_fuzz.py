"""Fuzzing the plan loader: mutated plan files give a plan or a PlanError, nothing else."""

from __future__ import annotations

import re
from importlib import resources

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from planshear.errors import AnalysisError, PlanError
from planshear.idealized import flexible_analysis, rigid_analysis
from planshear.loads import expand_load_cases
from planshear.plan import parse_plan
from planshear.run import plan_summary

DEMO = resources.files("planshear").joinpath("data/demo.toml").read_text(encoding="utf-8")
LINES = DEMO.splitlines()
TOKEN = re.compile(r'"[^"]*"|-?\d+(?:\.\d+)?|\w+')

odd_values = st.one_of(
    st.sampled_from(["nan", "inf", "-inf", "-1", "0", "1e308", "1e-308", '""', '"x"', "[]", "{}", "true",
                     '"0 kip/in"', '"-5 psf"', '"1e400 kip"', '"12 ft"', '"kip"', "[[0,0]]", '"nan kip/in"']),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.text(max_size=8).map(lambda s: '"' + s.replace('"', "").replace("\\", "") + '"'),
)


@st.composite
def mutated(draw):
    lines = list(LINES)
    for _ in range(draw(st.integers(1, 4))):
        action = draw(st.sampled_from(["delete", "duplicate", "token", "truncate", "insert", "swap"]))
        i = draw(st.integers(0, len(lines) - 1))
        if action == "delete":
            del lines[i]
        elif action == "duplicate":
            lines.insert(i, lines[i])
        elif action == "token":
            tokens = list(TOKEN.finditer(lines[i]))
            if tokens:
                match = draw(st.sampled_from(tokens))
                lines[i] = lines[i][: match.start()] + draw(odd_values) + lines[i][match.end():]
        elif action == "truncate":
            lines[i] = lines[i][: draw(st.integers(0, len(lines[i])))]
        elif action == "insert":
            lines.insert(i, draw(st.text(max_size=30)))
        else:
            j = draw(st.integers(0, len(lines) - 1))
            lines[i], lines[j] = lines[j], lines[i]
        if not lines:
            lines = [""]
    return "\n".join(lines)


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(mutated())
def test_mutated_plans_fail_cleanly(text):
    try:
        plan = parse_plan(text, "fuzz.toml")
    except PlanError as exc:
        assert exc.problems and all(p.startswith("fuzz.toml") for p in exc.problems)
        return
    cases = expand_load_cases(plan)
    plan_summary(plan, cases)
    rigid_analysis(plan, cases)
    try:
        flexible_analysis(plan, cases)
    except AnalysisError:
        pass  # e.g. a direction left with one line of resistance: a clean, explained refusal


@settings(max_examples=200, deadline=None)
@given(st.text(max_size=200))
def test_arbitrary_text_fails_cleanly(text):
    try:
        parse_plan(text, "noise.toml")
    except PlanError:
        pass
