"""Every file in tests/bad_plans/ holds one defect and names the expected message in an
``# expect:`` line; `planshear check` must exit 2 with that message and no traceback."""

from pathlib import Path

import pytest

from planshear.cli import main

BAD_PLANS = sorted((Path(__file__).parent / "bad_plans").glob("*.toml"))


def _expected(path: Path) -> str:
    for line in path.read_bytes().decode("latin-1").splitlines():
        if line.startswith("# expect:"):
            return line.split(":", 1)[1].strip()
    raise AssertionError(f"{path.name} has no '# expect:' line")


def _command(path: Path) -> str:
    """`check` by default; files whose defect only the analysis can see say `# command: run`."""
    for line in path.read_bytes().decode("latin-1").splitlines():
        if line.startswith("# command:"):
            return line.split(":", 1)[1].strip()
    return "check"


def test_corpus_is_large_enough():
    assert len(BAD_PLANS) >= 40


@pytest.mark.parametrize("path", BAD_PLANS, ids=lambda p: p.stem)
def test_bad_plan_gives_clear_error(path, capsys, tmp_path):
    command = _command(path)
    arguments = [command, str(path)] + (["--out", str(tmp_path / "out"), "--quiet"] if command == "run" else [])
    code = main(arguments)
    captured = capsys.readouterr()
    assert code == 2, captured.err + captured.out
    assert "Traceback" not in captured.err
    assert _expected(path) in captured.err
    # Every message names the file; nothing was written.
    assert path.name in captured.err
    assert not (tmp_path / "out").exists()


def test_several_problems_are_reported_together(tmp_path, capsys):
    text = (Path(__file__).parent / "bad_plans" / "negative_stiffness.toml").read_text()
    text = text.replace('Ga = "15 kip/in"', 'Ga = "15 ft"').replace('total = "40 kip"', 'total = 40')
    plan = tmp_path / "many.toml"
    plan.write_text(text)
    assert main(["check", str(plan)]) == 2
    err = capsys.readouterr().err
    assert "must be positive" in err and "is not a stiffness" in err and 'write it as "40 kip"' in err
    assert "3 problems found" in err


def test_missing_file(capsys):
    assert main(["check", "no/such/plan.toml"]) == 2
    assert "file not found" in capsys.readouterr().err
