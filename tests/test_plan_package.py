"""The plan reader's package layout (DEVELOPERS.md, "Layout and data flow"): one module
per part of the plan file, each readable on its own, data flowing one way, and every name
other code imports from ``planshear.plan`` still there. Common practice (code layout), not
an engineering check; the plan tests guard the behaviour."""

import ast
from pathlib import Path

import planshear.plan

ROOT = Path(__file__).resolve().parent.parent
PACKAGE = ROOT / "planshear" / "plan"
MODULES = sorted(p for p in PACKAGE.glob("*.py") if p.name != "__init__.py")
#: Modules that hold no section of the file: the others build on them, never the reverse.
BASE = {"model", "context"}


def _relative_imports(path: Path) -> set[str]:
    """Sibling modules ``path`` imports (``from .x import`` / ``from . import x``)."""
    found = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.ImportFrom) and node.level == 1:
            found |= {node.module} if node.module else {a.name for a in node.names}
    return found


def test_every_module_says_what_it_reads_and_stays_short():
    assert {p.stem for p in MODULES} >= {"reader", "model", "geometry", "walls", "loads", "mesh_settings"}
    for path in MODULES:
        source = path.read_text(encoding="utf-8")
        assert ast.get_docstring(ast.parse(source)), f"{path.name} has no module docstring"
        assert source.count("\n") < 500, f"{path.name} has grown past 500 lines; split it along the file's sections"


def test_imports_run_one_way():
    """model/context import no section; no section imports the reader."""
    for path in MODULES:
        imported = _relative_imports(path)
        if path.stem in BASE:
            assert imported <= BASE, f"{path.name} imports {sorted(imported - BASE)}"
        elif path.stem != "reader":
            assert "reader" not in imported, f"{path.name} imports the reader"


def test_every_name_imported_from_planshear_plan_exists():
    folders = ("planshear", "mesh", "fem", "postprocess", "tests", "benchmarks", "examples")
    names = set()
    for folder in folders:
        for path in (ROOT / folder).rglob("*.py"):
            if PACKAGE in path.parents:
                continue
            for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
                if isinstance(node, ast.ImportFrom) and node.module in ("planshear.plan", "plan"):
                    if node.module == "plan" and node.level == 0:
                        continue
                    names |= {a.name for a in node.names}
    assert {"Plan", "load_plan", "parse_plan"} <= names  # the scan found the imports
    missing = sorted(n for n in names if not hasattr(planshear.plan, n))
    assert not missing, f"planshear.plan no longer provides {missing}"
