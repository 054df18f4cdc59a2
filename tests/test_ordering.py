"""planshear's fill-reducing ordering (fem/ordering.py): always a valid permutation, and
less fill than SuperLU's own minimum degree on membrane-like meshes.

Fill is counted from SuperLU's own factors of the permuted matrix (an independent
program), so these tests do not trust our code to count its own fill."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp
from scipy.sparse.linalg import splu

from planshear.fem.ordering import compress, nested_dissection

# relax=1: no relaxed supernodes, whose stored zeros would count as fill.
SUPERLU = {"diag_pivot_thresh": 0.0, "options": {"SymmetricMode": True}, "relax": 1}


def _is_permutation(p: np.ndarray, n: int) -> bool:
    return p.shape == (n,) and p.dtype.kind == "i" and np.array_equal(np.sort(p), np.arange(n))


def _grid_matrix(nx: int, ny: int, dofs: int = 2) -> sp.csc_matrix:
    """An SPD matrix with the sparsity of a quadrilateral membrane mesh: nx × ny nodes,
    each coupled to its 8 neighbours, ``dofs`` unknowns per node (all coupled)."""
    def path(k):
        return sp.diags([np.ones(k - 1), np.ones(k), np.ones(k - 1)], [-1, 0, 1])

    nodes = sp.kron(path(nx), path(ny))  # the 9-point stencil pattern, nonnegative
    block = np.full((dofs, dofs), 0.5) + 0.5 * np.eye(dofs)
    A = sp.kron(nodes, block)
    # Strictly diagonally dominant, so SPD and safe without pivoting.
    return sp.csc_matrix(A + sp.diags(np.asarray(abs(A).sum(axis=1)).ravel() + 1.0))


def _fill(A: sp.spmatrix, p: np.ndarray | None) -> int:
    """nnz(L + U) of SuperLU's factors: in the order p (NATURAL), or SuperLU's MMD."""
    if p is None:
        lu = splu(sp.csc_matrix(A), permc_spec="MMD_AT_PLUS_A", **SUPERLU)
    else:
        lu = splu(sp.csc_matrix(A[p][:, p]), permc_spec="NATURAL", **SUPERLU)
    return lu.L.nnz + lu.U.nnz


@pytest.mark.parametrize("seed", range(6))
def test_random_graphs_give_permutations(seed):
    """Random symmetric patterns of random density (sparse to nearly dense), with empty
    rows and several components, always give a permutation of range(n)."""
    rng = np.random.default_rng(seed)
    n = int(rng.integers(3, 400))
    density = float(rng.choice([0.002, 0.01, 0.05, 0.5]))
    A = sp.random(n, n, density=density, random_state=seed, format="csr")
    A = A + A.T
    empty = rng.choice(n, size=n // 10, replace=False)
    keep = np.ones(n)
    keep[empty] = 0.0
    A = sp.diags(keep) @ A @ sp.diags(keep)  # whole rows and columns empty
    for leaf in (1, 4, 16):
        assert _is_permutation(nested_dissection(A, leaf_size=leaf), n)


@pytest.mark.parametrize("n", [0, 1, 2, 3])
def test_tiny_matrices(n):
    assert _is_permutation(nested_dissection(sp.identity(n, format="csr")), n)
    assert _is_permutation(nested_dissection(sp.csr_matrix((n, n))), n)  # no entries at all
    assert _is_permutation(nested_dissection(sp.csr_matrix(np.ones((n, n))), leaf_size=1), n)


def test_disconnected_and_unsymmetric_patterns():
    """Several grids, isolated vertices and a dense block in one matrix; the same with
    only the upper triangle stored (the pattern of A + Aᵀ is used)."""
    A = sp.block_diag([_grid_matrix(30, 20), sp.identity(7), _grid_matrix(5, 40, dofs=3),
                       sp.csr_matrix(np.ones((40, 40))), sp.csr_matrix((5, 5))], format="csr")
    n = A.shape[0]
    assert _is_permutation(nested_dissection(A, leaf_size=2), n)
    assert _is_permutation(nested_dissection(sp.triu(A), leaf_size=2), n)


def test_wrong_shape_is_refused():
    with pytest.raises(ValueError, match="square"):
        nested_dissection(sp.csr_matrix((3, 4)))


def test_unknowns_of_one_node_are_grouped_and_kept_together():
    """Compression finds the mesh nodes (3 unknowns each, identical rows) and the
    ordering keeps each node's unknowns consecutive and in their own order."""
    A = _grid_matrix(12, 9, dofs=3)
    group = compress(sp.csr_matrix(A))
    assert group.max() + 1 == 12 * 9
    assert np.array_equal(group, np.repeat(np.arange(12 * 9), 3))
    p = nested_dissection(A, leaf_size=2)
    assert np.array_equal(p.reshape(-1, 3) % 3, np.tile([0, 1, 2], (12 * 9, 1)))
    assert np.all(np.diff(p.reshape(-1, 3), axis=1) == 1)


def test_long_path():
    """A path (depth ~ n: one binary search per depth, thousands of them) gives a
    permutation, and SuperLU's factors in that order hold at most 3 entries per column of
    L and of U (on a path every elimination order reaches at most two vertices; an
    independent bound, George & Liu, Computer Solution of Large Sparse Positive Definite
    Systems, 1981, §5.1: fill is given by reachable sets)."""
    n = 5000
    A = sp.diags([-np.ones(n - 1), 4 * np.ones(n), -np.ones(n - 1)], [-1, 0, 1], format="csc")
    for leaf in (1, 16):
        p = nested_dissection(A, leaf_size=leaf)
        assert _is_permutation(p, n)
        assert _fill(A, p) <= 2 * 3 * n


@pytest.mark.parametrize("shape", [(120, 120), (160, 80)])
def test_less_fill_than_superlu_minimum_degree(shape):
    """On a square and on a 2:1 membrane-like mesh (2 unknowns per node, 28.8k and 25.6k
    unknowns) our nested dissection leaves less fill than SuperLU's MMD on A + Aᵀ, both
    counted by SuperLU. Measured (2026-12-02): 120×120: nnz(L+U) 4.19M vs 4.67M; 160×80:
    3.52M vs 3.75M. (On a 6:1 strip, 300×50, the two are even: 3.76M vs 3.70M, so the
    test does not use one; planshear's own matrices are in benchmarks/RESULTS.md.)"""
    A = _grid_matrix(*shape)
    assert _fill(A, nested_dissection(A)) < _fill(A, None)


def _random_graph(seed: int, n: int = 300) -> sp.csr_matrix:
    """A random symmetric pattern without self loops: a few dozen components of
    different sizes (sparse parts, paths, isolated vertices)."""
    rng = np.random.default_rng(seed)
    A = sp.random(n, n, density=float(rng.choice([0.003, 0.006, 0.02])), random_state=seed, format="csr")
    A = (A + A.T).tocsr()
    A.setdiag(0)
    A.eliminate_zeros()
    A.sort_indices()
    return A


@pytest.mark.parametrize("seed", range(5))
def test_components_and_depths_match_scipy(seed):
    """The components found from sides (unions of whole components, as a dissection level
    leaves them) are scipy's connected components, numbered alike, and the depths are
    breadth-first distances from each component's first vertex (scipy's shortest paths)."""
    from scipy.sparse.csgraph import connected_components, shortest_path

    from planshear.fem.ordering import _components

    A = _random_graph(seed)
    n = A.shape[0]
    n_comp, comp = connected_components(A, directed=False)
    rng = np.random.default_rng(seed)
    for n_side in (1, 3, n_comp):  # everything one side ... every component its own side
        side_of_comp = rng.permutation(np.arange(n_comp) % n_side)
        side = np.unique(side_of_comp[comp], return_inverse=True)[1].astype(np.int32)
        buf = np.empty(A.nnz + n, dtype=np.int32)
        buf[:A.nnz] = A.indices
        got, got_n, depth = _components(A.indptr.astype(np.int32), buf, A.nnz, np.ones(buf.size), side,
                                        int(side.max()) + 1)
        assert got_n == n_comp
        assert np.array_equal(got, comp)
        first = np.array([np.flatnonzero(comp == c)[0] for c in range(n_comp)])
        dist = shortest_path(A, unweighted=True, indices=first)
        assert np.array_equal(depth, dist[comp, np.arange(n)].astype(int))


def test_compress_matches_a_direct_grouping():
    """Groups of rows with identical column sets, checked against grouping the rows'
    column tuples directly; includes unknowns of one node stored apart, empty rows in the
    middle and at the end, and rows differing in one column only."""
    A = _grid_matrix(9, 7, dofs=2)
    n = A.shape[0]
    swap = np.random.default_rng(3).permutation(n)  # a node's unknowns no longer adjacent
    A = sp.csr_matrix(A[swap][:, swap])
    keep = np.ones(n)
    keep[[5, 40, n - 2, n - 1]] = 0.0
    A = sp.csr_matrix(sp.diags(keep) @ A)  # empty rows (their columns stay)
    A = sp.csr_matrix(A + sp.csr_matrix(([1.0], ([7], [0])), shape=(n, n)))  # row 7 differs by one
    A.eliminate_zeros()
    rows = [tuple(A.indices[A.indptr[i]:A.indptr[i + 1]]) for i in range(n)]
    ids: dict = {}
    expected = np.array([ids.setdefault(r, len(ids)) for r in rows])  # first appearance
    assert np.array_equal(compress(A), expected)
    p = nested_dissection(A)
    assert _is_permutation(p, n)


def test_unknowns_stored_apart_stay_in_their_own_order():
    """When a node's unknowns are not adjacent in the matrix (all first unknowns, then all
    second ones), the order still takes each node's unknowns together, in their own order."""
    A = _grid_matrix(15, 11, dofs=2)
    n = A.shape[0]
    split = np.concatenate([np.arange(0, n, 2), np.arange(1, n, 2)])
    B = sp.csr_matrix(A[split][:, split])
    p = nested_dissection(B)
    assert _is_permutation(p, n)
    node = np.where(np.arange(n) < n // 2, np.arange(n), np.arange(n) - n // 2)
    pairs = p.reshape(-1, 2)
    assert np.array_equal(node[pairs[:, 0]], node[pairs[:, 1]])
    assert np.all(pairs[:, 0] < pairs[:, 1])
    assert _fill(B, p) == _fill(A, nested_dissection(A))  # the same graph, the same fill


def test_quotient_of_unsymmetric_and_duplicate_patterns():
    """The compressed graph is the symmetric pattern A + Aᵀ without self loops, also from
    an upper triangle and from a matrix with duplicate, unsorted entries."""
    from planshear.fem.ordering import _quotient

    A = sp.csr_matrix(_grid_matrix(6, 5, dofs=1))
    expected = (A != 0).astype(np.int8).tolil()
    expected.setdiag(0)
    expected = sp.csr_matrix(expected)
    expected.eliminate_zeros()
    U = sp.triu(A, format="csr")
    rows = np.repeat(np.arange(A.shape[0]), np.diff(A.indptr))
    twice = np.r_[np.arange(A.nnz), np.arange(A.nnz)]
    order = np.lexsort((-A.indices[twice], rows[twice]))  # each row: columns descending, all twice
    indptr = np.r_[0, np.cumsum(2 * np.diff(A.indptr))]
    D = sp.csr_matrix((A.data[twice][order], A.indices[twice][order], indptr), shape=A.shape)
    assert not D.has_canonical_format
    for M in (A, U, D):
        group = np.arange(A.shape[0])
        Q = _quotient(M, group)
        assert Q.has_canonical_format
        assert (Q != expected).nnz == 0


@pytest.mark.parametrize("seed", range(4))
def test_postorder_matches_a_depth_first_search(seed):
    """The tree's postorder (levels of nodes, parents one level up) is the reverse of
    scipy's depth-first preorder (children in increasing number), on random trees with
    nodes of many children and parents numbered out of order."""
    from scipy.sparse.csgraph import depth_first_order

    from planshear.fem.ordering import _postorder

    rng = np.random.default_rng(seed)
    levels = [np.zeros(1, dtype=np.int64)]
    start, count = 0, 1
    for _ in range(int(rng.integers(1, 7))):
        levels.append(rng.integers(start, start + count, size=int(rng.integers(1, 60))))
        start, count = start + count, levels[-1].size
    rank = _postorder(levels)
    n_nodes = sum(p.size for p in levels)
    parent = np.concatenate(levels)
    tree = sp.csr_matrix((np.ones(n_nodes - 1), (parent[1:], np.arange(1, n_nodes))), shape=(n_nodes, n_nodes))
    pre = depth_first_order(tree, 0, directed=True, return_predecessors=False)
    assert np.array_equal(rank[pre[::-1]], np.arange(n_nodes))
    assert np.all(rank[1:] < rank[parent[1:]])  # children before their parents
