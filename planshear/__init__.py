"""planshear — diaphragm analysis as flexible, rigid and semi-rigid.

Public API::

    from planshear import load_plan, analyze
    plan = load_plan("level2.toml")
    results = analyze(plan)
    results.write("level2-results")

Results must be reviewed by a licensed engineer; the governing local code prevails.
"""

from .errors import AnalysisError, PlanError, UnstablePlanError
from .loads import expand_load_cases
from .plan import Plan, load_plan, parse_plan
from .run import CAUTION, Results, analyze

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
