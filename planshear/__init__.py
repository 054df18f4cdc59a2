"""planshear — diaphragm analysis as flexible, rigid and semi-rigid.

Public API::

    from planshear import load_plan, analyze
    plan = load_plan("level2.toml")
    results = analyze(plan)
    results.write("level2-results")

Results must be reviewed by a licensed engineer; the governing local code prevails.
"""

import os as _os

# In a source checkout the subpackages mesh/, fem/ and postprocess/ are top-level folders
# (pyproject.toml maps them into this package when installed). Let imports from the
# checkout itself (python -m pytest, python -m benchmarks) find them there too.
_here = _os.path.dirname(__file__)
_root = _os.path.dirname(_here)
if not _os.path.isdir(_os.path.join(_here, "fem")) and _os.path.isfile(_os.path.join(_root, "fem", "__init__.py")):
    __path__.append(_root)  # noqa: F821 - __path__ is defined for packages

from .errors import AnalysisError, PlanError, UnstablePlanError  # noqa: E402
from .loads import expand_load_cases  # noqa: E402
from .plan import Plan, load_plan, parse_plan  # noqa: E402
from .run import CAUTION, Results, analyze  # noqa: E402

__all__ = [
    "AnalysisError",
    "CAUTION",
    "Plan",
    "PlanError",
    "Results",
    "UnstablePlanError",
    "analyze",
    "expand_load_cases",
    "load_plan",
    "parse_plan",
]

__version__ = "0.1.0"
