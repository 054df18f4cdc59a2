"""Sparse factorization backends. SciPy's SuperLU with a symmetric ordering is always
available; CHOLMOD (scikit-sparse) is used automatically when it is installed.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu

__all__ = ["Factor", "factorize", "available_backends", "choose_backend"]

#: Above this many unknowns CHOLMOD (when installed) factors faster than SuperLU on these
#: matrices; below it SuperLU is as fast or faster (benchmarks/RESULTS.md).
CHOLMOD_FROM = 150_000


@dataclass
class Factor:
    """A factorized stiffness matrix; ``solve`` takes (n,) or (n, n_cases)."""

    backend: str
    _solve: Any

    def solve(self, rhs: np.ndarray) -> np.ndarray:
        return self._solve(rhs)


def available_backends() -> list[str]:
    names = ["superlu"]
    try:
        import sksparse.cholmod  # noqa: F401

        names.insert(0, "cholmod")
    except ImportError:
        pass
    return names


def choose_backend(n_dofs: int) -> str:
    """The faster available backend for a matrix of this size."""
    backends = available_backends()
    return "cholmod" if "cholmod" in backends and n_dofs >= CHOLMOD_FROM else "superlu"


def factorize(matrix: sp.spmatrix, backend: str | None = None) -> Factor:
    """Factor a symmetric positive definite matrix once for any number of solves.

    SuperLU runs with the symmetric minimum-degree ordering on A + Aᵀ and no pivoting
    threshold (the natural `MMD_ATA` ordering is far slower on these matrices)."""
    backend = backend or choose_backend(matrix.shape[0])
    if backend == "cholmod":
        from sksparse.cholmod import cholesky

        factor = cholesky(sp.csc_matrix(matrix))
        return Factor("cholmod", factor)
    lu = splu(
        sp.csc_matrix(matrix),
        permc_spec="MMD_AT_PLUS_A",
        diag_pivot_thresh=0.0,
        options={"SymmetricMode": True},
    )
    return Factor("superlu", lu.solve)
