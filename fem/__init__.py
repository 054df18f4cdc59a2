"""Finite-element membrane, bar and wall-spring elements; assembly; one factorization
for every load case."""

from .elements import membrane_rigidity, membrane_stiffness
from .model import Assembly, FEError, Solution, assemble, check_restraint, load_vectors, solve
from .solver import available_backends, factorize

__all__ = [
    "Assembly",
    "FEError",
    "Solution",
    "assemble",
    "available_backends",
    "check_restraint",
    "factorize",
    "load_vectors",
    "membrane_rigidity",
    "membrane_stiffness",
    "solve",
]
