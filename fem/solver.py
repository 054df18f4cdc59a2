"""Sparse factorization backends for the symmetric positive definite stiffness matrix.

Every backend factors once and solves all load cases in one call (a (n, n_cases) block,
handed to the library in the memory order it works in, so no backend solves column by
column). The accuracy rules (backward error, iterative refinement, wall equilibrium) are
applied to every backend alike by :func:`planshear.fem.model.solve`.

Backends (``benchmarks/backends.py`` measures them side by side; RESULTS.md has the numbers):

* ``superlu``: SciPy's SuperLU in symmetric mode, from :data:`SUPERLU_ND_FROM` unknowns on
  in planshear's nested-dissection order (fem/ordering.py), below it with SuperLU's own
  minimum degree. Always installed; the fallback.
* ``pardiso``: Intel MKL PARDISO (Cholesky, METIS ordering) through ctypes, when the
  ``mkl`` wheel is installed (extra ``planshear[pardiso]``; x86-64 only).
* ``cvxopt``: CHOLMOD as bundled in the cvxopt wheels (extra ``planshear[gpl]``: cvxopt
  is GPL-3, so it is never a default dependency).
* ``cholmod``: CHOLMOD through scikit-sparse (needs a system SuiteSparse; no wheels).

Above :data:`FAST_FROM` unknowns the first installed of :data:`PREFERENCE` is used;
below it, and whenever none is installed, SuperLU.
"""

from __future__ import annotations

import ctypes
import glob
import os
import sys
from collections.abc import Callable
from dataclasses import dataclass
from functools import cache
from typing import Any

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu

from planshear.errors import AnalysisError
from planshear.fem.ordering import nested_dissection

__all__ = ["Factor", "factorize", "available_backends", "choose_backend", "BACKENDS"]

#: Every backend planshear knows, in the order tried for large models (fastest first as
#: measured in benchmarks/RESULTS.md); SuperLU last, the fallback.
BACKENDS = ("cholmod", "cvxopt", "pardiso", "superlu")
PREFERENCE = BACKENDS
#: From this many unknowns on, a faster backend (when installed) replaces SuperLU; below it
#: SuperLU is as fast within noise (benchmarks/RESULTS.md, backends table).
FAST_FROM = 40_000
#: CHOLMOD's fill-reducing ordering: AMD was the fastest of "amd", "metis", "nesdis" and
#: CHOLMOD's default (which tries several) on planshear's matrices (benchmarks/RESULTS.md).
CHOLMOD_ORDERING = "amd"
#: From this many unknowns on, SuperLU factors in planshear's own nested-dissection order
#: (fem/ordering.py) instead of its minimum degree. Measured (CPU s, ordering included):
#: at 10k–25k ours is up to 25 % slower, at 50k even (rectangle 0.36 vs 0.47, irregular
#: 0.38 vs 0.39), at 250k–1M clearly faster (benchmarks/RESULTS.md, "SuperLU with
#: planshear's ordering").
SUPERLU_ND_FROM = 50_000
#: Environment variable that forces one backend (for benchmarks and tests).
BACKEND_ENV = "PLANSHEAR_SOLVER"


@dataclass
class Factor:
    """A factorized stiffness matrix; ``solve`` takes (n,) or (n, n_cases) and returns the
    same shape (C order)."""

    backend: str
    _solve: Callable[[np.ndarray], np.ndarray]
    _keep: Any = None  # the library's own factor object, kept alive with this one

    def solve(self, rhs: np.ndarray) -> np.ndarray:
        rhs = np.asarray(rhs, dtype=float)
        block = rhs.reshape(rhs.shape[0], -1)
        out = self._solve(block)
        return np.ascontiguousarray(out).reshape(rhs.shape)


def _installed(name: str) -> bool:
    if name == "superlu":
        return True
    if name == "pardiso":
        return _mkl_library() is not None
    module = {"cholmod": "sksparse.cholmod", "cvxopt": "cvxopt.cholmod"}[name]
    try:
        __import__(module)
    except ImportError:
        return False
    return True


@cache
def available_backends() -> tuple[str, ...]:
    """The installed backends, in :data:`PREFERENCE` order."""
    return tuple(name for name in PREFERENCE if _installed(name))


def choose_backend(n_dofs: int) -> str:
    """The backend for a matrix of this size: :envvar:`PLANSHEAR_SOLVER` if set, else the
    first installed of :data:`PREFERENCE` from :data:`FAST_FROM` unknowns on, else SuperLU."""
    forced = os.environ.get(BACKEND_ENV)
    if forced:
        return forced
    if n_dofs < FAST_FROM:
        return "superlu"
    return available_backends()[0]


def factorize(matrix: sp.spmatrix, backend: str | None = None) -> Factor:
    """Factor a symmetric positive definite matrix once for any number of solves.

    Raises AnalysisError for an unknown or uninstalled backend (a set-up problem, not a
    property of the model), RuntimeError (or the library's own error) when the matrix
    cannot be factored (singular / not positive definite)."""
    backend = backend or choose_backend(matrix.shape[0])
    if backend not in BACKENDS:
        raise AnalysisError(f"solver backend {backend!r} (environment variable {BACKEND_ENV}) is unknown; "
                            f"use one of {', '.join(BACKENDS)} or unset it")
    if not _installed(backend):
        raise AnalysisError(f"solver backend {backend!r} (environment variable {BACKEND_ENV}) is not installed; "
                            f"use one of {', '.join(available_backends())} or install it (README, Faster solves)")
    return _FACTORIZE[backend](matrix)


def _superlu(matrix: sp.spmatrix, ordering: str | None = None) -> Factor:
    """SuperLU in symmetric mode (diagonal pivots, no threshold). ``ordering``: "nd"
    (planshear's nested dissection, fem/ordering.py, fed to SuperLU as the NATURAL order
    of the permuted matrix), "mmd" (SuperLU's own minimum degree on A + Aᵀ) or None for
    the measured choice: nested dissection from :data:`SUPERLU_ND_FROM` unknowns on."""
    # The stiffness matrix is symmetric: the CSR matrix the model assembles, transposed, is
    # its CSC form without a copy (a copy of a 1M-DOF matrix is ~0.4 GB at the peak).
    K = matrix.T if sp.issparse(matrix) and matrix.format == "csr" else sp.csc_matrix(matrix)
    if ordering is None:
        ordering = "nd" if K.shape[0] >= SUPERLU_ND_FROM else "mmd"
    options = {"diag_pivot_thresh": 0.0, "options": {"SymmetricMode": True}}
    if ordering == "mmd":
        # SuperLU's natural MMD_ATA ordering is far slower on these matrices.
        lu = splu(K, permc_spec="MMD_AT_PLUS_A", **options)
        return Factor("superlu", lambda b: lu.solve(np.asfortranarray(b)), lu)
    if ordering != "nd":
        raise ValueError(f"SuperLU ordering {ordering!r}: use 'nd', 'mmd' or None")
    p = nested_dissection(K)
    # P K Pᵀ: the columns in the order p, then the row indices renumbered (cheaper than
    # K[p][:, p], which reorders the rows of a CSC matrix the slow way).
    inverse = np.empty_like(p)
    inverse[p] = np.arange(p.size)
    permuted = K[:, p]
    del K
    permuted.indices = inverse[permuted.indices].astype(permuted.indices.dtype)
    permuted.has_sorted_indices = False
    permuted.sort_indices()
    lu = splu(permuted, permc_spec="NATURAL", **options)
    del permuted

    def solve(b: np.ndarray) -> np.ndarray:
        # K = Pᵀ (PKPᵀ) P: solve (PKPᵀ) y = P b, then x = Pᵀ y; all columns in one call.
        y = lu.solve(np.asfortranarray(b[p]))
        x = np.empty_like(y)
        x[p] = y
        return x

    return Factor("superlu", solve, lu)


def _cholmod(matrix: sp.spmatrix) -> Factor:
    from sksparse.cholmod import CholmodError, cholesky

    try:
        factor = cholesky(sp.csc_matrix(matrix), ordering_method=CHOLMOD_ORDERING)
    except CholmodError as exc:  # its own class: model.solve words RuntimeError for the user
        raise RuntimeError(f"CHOLMOD: {exc}") from None
    return Factor("cholmod", lambda b: factor(np.asfortranarray(b)), factor)


def _cvxopt(matrix: sp.spmatrix) -> Factor:
    import cvxopt
    from cvxopt import cholmod

    lower = sp.tril(matrix, format="coo")
    A = cvxopt.spmatrix(cvxopt.matrix(lower.data), cvxopt.matrix(lower.row.astype(int)),
                        cvxopt.matrix(lower.col.astype(int)), matrix.shape)
    options = dict(cholmod.options)
    cholmod.options["supernodal"] = 2  # always supernodal (the BLAS does the work)
    try:
        F = cholmod.symbolic(A)
        cholmod.numeric(A, F)
    except ArithmeticError as exc:
        raise RuntimeError(f"CHOLMOD: the matrix is not positive definite ({exc})") from None
    finally:
        cholmod.options.clear()
        cholmod.options.update(options)

    def solve(b: np.ndarray) -> np.ndarray:
        B = cvxopt.matrix(np.asfortranarray(b))  # column-major, as cvxopt stores it
        cholmod.solve(F, B)
        return np.asarray(B)

    return Factor("cvxopt", solve, F)


# -- MKL PARDISO through ctypes ------------------------------------------------------------

@cache
def _mkl_library() -> ctypes.CDLL | None:
    """MKL's single dynamic library as installed by the ``mkl`` wheel, or None."""
    names = ["libmkl_rt.so.2", "libmkl_rt.so", "libmkl_rt.2.dylib", "mkl_rt.2.dll"]
    folders = [os.path.join(sys.prefix, "lib"), os.path.join(sys.prefix, "Library", "bin")]
    candidates = [os.path.join(f, n) for f in folders for n in names]
    candidates += sorted(glob.glob(os.path.join(sys.prefix, "lib", "libmkl_rt.so*")))
    for path in candidates:
        if os.path.exists(path):
            try:
                lib = ctypes.CDLL(path)
                lib.pardiso  # noqa: B018 (the symbol must exist)
            except (OSError, AttributeError):
                continue
            return lib
    return None


_PARDISO_ERRORS = {
    -1: "input inconsistent", -2: "not enough memory", -3: "reordering problem",
    -4: "zero pivot: the matrix is singular or not positive definite",
    -5: "unclassified internal error", -6: "reordering failed", -7: "diagonal matrix is singular",
    -8: "32-bit integer overflow", -9: "not enough memory for out-of-core", -10: "error opening OOC files",
    -11: "read/write error with OOC files", -12: "pardiso_64 called from 32-bit library",
}


class _Pardiso:
    """One PARDISO handle: real symmetric positive definite (mtype 2), the upper triangle in
    zero-based CSR, METIS ordering; phase 12 factors, 33 solves, −1 frees."""

    def __init__(self, matrix: sp.spmatrix):
        self.lib = _mkl_library()
        self.lib.pardiso.restype = None
        upper = sp.triu(matrix, format="csr")
        upper.sort_indices()
        if upper.nnz >= 2**31 or matrix.shape[0] >= 2**31:
            raise RuntimeError("PARDISO: the matrix is too large for 32-bit indices")
        self.n = matrix.shape[0]
        self.data = np.ascontiguousarray(upper.data, dtype=np.float64)
        self.ia = upper.indptr.astype(np.int32)
        self.ja = upper.indices.astype(np.int32)
        self.pt = np.zeros(64, dtype=np.int64)  # the solver's internal handle
        self.iparm = np.zeros(64, dtype=np.int32)
        self.iparm[0] = 1  # our settings below, defaults elsewhere
        self.iparm[1] = 2  # METIS nested dissection
        # iparm(8) = 0: PARDISO refines only after perturbed pivots, which its Cholesky of an
        # SPD matrix never uses; model.solve refines by the same rule for every backend.
        self.iparm[7] = 0
        self.iparm[34] = 1  # zero-based indices
        self.alive = True  # from here on __del__ frees PARDISO's memory, also after an error
        self._call(12, np.zeros((self.n, 1), order="F"))

    def _call(self, phase: int, b: np.ndarray) -> np.ndarray:
        x = np.zeros_like(b, order="F")
        error = ctypes.c_int32(0)
        i32 = ctypes.POINTER(ctypes.c_int32)
        f64 = ctypes.POINTER(ctypes.c_double)
        one = ctypes.c_int32(1)
        self.lib.pardiso(
            self.pt.ctypes.data_as(ctypes.c_void_p), ctypes.byref(one), ctypes.byref(one),
            ctypes.byref(ctypes.c_int32(2)), ctypes.byref(ctypes.c_int32(phase)),
            ctypes.byref(ctypes.c_int32(self.n)), self.data.ctypes.data_as(f64),
            self.ia.ctypes.data_as(i32), self.ja.ctypes.data_as(i32), None,
            ctypes.byref(ctypes.c_int32(b.shape[1])), self.iparm.ctypes.data_as(i32),
            ctypes.byref(ctypes.c_int32(0)), b.ctypes.data_as(f64), x.ctypes.data_as(f64),
            ctypes.byref(error))
        if error.value != 0:
            raise RuntimeError(f"PARDISO error {error.value}: {_PARDISO_ERRORS.get(error.value, 'unknown')}")
        return x

    def solve(self, b: np.ndarray) -> np.ndarray:
        return self._call(33, np.asfortranarray(b, dtype=np.float64))  # all columns in one call

    def __del__(self):
        if getattr(self, "alive", False):
            self.alive = False
            try:
                self._call(-1, np.zeros((self.n, 1), order="F"))
            except Exception:  # noqa: BLE001 (never raise from a finalizer)
                pass


def _pardiso(matrix: sp.spmatrix) -> Factor:
    handle = _Pardiso(matrix)
    return Factor("pardiso", handle.solve, handle)


_FACTORIZE = {"superlu": _superlu, "cholmod": _cholmod, "cvxopt": _cvxopt, "pardiso": _pardiso}
