"""Exception types. Library code raises these; only the CLI turns them into exit codes."""

from __future__ import annotations

__all__ = ["PlanError", "UnstablePlanError", "AnalysisError", "EquilibriumError"]


class PlanError(Exception):
    """The plan file is invalid. Carries every problem found, each a full sentence
    that names the file, the item and what to change."""

    def __init__(self, problems: list[str]):
        self.problems = list(problems)
        super().__init__("\n".join(self.problems))


class UnstablePlanError(PlanError):
    """The walls cannot hold the diaphragm in some direction or in rotation."""


class AnalysisError(Exception):
    """An analysis could not be carried out for a reason that is not a plan error
    (for example a method that does not apply to this plan)."""


class EquilibriumError(AnalysisError):
    """A case's wall forces do not balance its load (force along x and y, moment about z):
    the results are wrong and must not be used. The CLI exits with status 1."""
