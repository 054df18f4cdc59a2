"""A fill-reducing symmetric ordering of our own: nested dissection by level structures.

SciPy's SuperLU chooses its column ordering with a multiple minimum degree on A + Aᵀ, which
on planshear's 2-D membrane meshes leaves both more fill and a slower factorization than a
dissection ordering (benchmarks/RESULTS.md, "SuperLU with planshear's ordering"). This
module computes an elimination order ``p`` for a structurally symmetric sparse matrix K so
that ``K[p][:, p]`` factors with less work; fem/solver.py hands that matrix to SuperLU with
its NATURAL ordering.

Method (George's automatic nested dissection, A. George and J. W. H. Liu, *Computer
Solution of Large Sparse Positive Definite Systems*, Prentice-Hall 1981, ch. 8; the
pseudo-peripheral vertex of ch. 4 by two breadth-first sweeps):

1. Compress: the unknowns of one mesh node have identical rows (closed neighbourhoods);
   each group of identical rows becomes one vertex of a quotient graph, ordered as one.
2. Level by level (loops over dissection levels, breadth-first depths and chunks of rows,
   never over vertices): the connected components of the vertices not yet ordered; each
   component no larger than the leaf size is a leaf. For every larger component at once: a
   pseudo-peripheral vertex (two breadth-first searches, all components in one call
   through a virtual root joined to one vertex of each) and its level structure; cutting
   at level ℓ separates the levels below from those above by the level-ℓ vertices with a
   neighbour in level ℓ + 1. George cuts at the median level; we take the level with the
   least separator size / smaller side (a ratio cut, which also looks at the separator's
   size: on planshear's 250k-DOF rectangle it gave about 5 % less fill than the median
   level: nnz(L+U) 46.3M vs 48.7M). The components need no pass of their own: the first
   search starts from one vertex of each side of the previous level's cuts (the side
   below a cut is connected), and only the vertices it misses (pieces of a side above a
   cut) are searched for components.
3. The elimination order is a postorder of the dissection tree (each component's leaves and
   sub-separators, then its separator): SuperLU in symmetric mode does not postorder its
   elimination tree itself (SuperLU's sp_preorder.c: "In symmetric mode, do not do
   postorder here"), and its supernodes need one (a non-postordered but equally
   valid order factored about 2 × slower on the 250k-DOF rectangle).

The result is always a permutation of ``range(n)`` whatever the graph (disconnected, empty
rows, dense): steps that cannot split a component leave it whole as a leaf.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import breadth_first_order, connected_components

__all__ = ["nested_dissection", "compress"]

#: Components of at most this many compressed vertices (mesh nodes) are not dissected
#: further (their own order is breadth-first). Measured on the 250k-DOF rectangle: nnz(L+U)
#: 45.2M / 46.3M / 48.4M for leaves of 4 / 8 / 16, factor times equal within
#: noise up to 16; smaller leaves cost more levels of ordering time.
LEAF_SIZE = 8
#: Dissection levels at most; deeper components are left whole as leaves. A 2-D mesh of a
#: million nodes needs about 40 (each level roughly halves the largest component).
MAX_LEVELS = 200
#: Rows per chunk in the passes over all edges: the chunk's gathered values stay in cache
#: (measured at 1M DOFs: these passes about 2 × faster than over all edges at once).
ROWS_PER_CHUNK = 32768


def compress(matrix: sp.spmatrix) -> np.ndarray:
    """Group the rows of a sparse matrix with identical sets of stored columns (the
    unknowns of one mesh node: their rows hold the node's own unknowns and those of its
    neighbours).

    Returns ``group`` (n,): the compressed vertex of every row, numbered 0..m−1 in order
    of first appearance. Rows are compared by two independent random 64-bit sums over their
    column sets; a collision (probability ~n²/2¹²⁸) would only merge two vertices and
    worsen the fill, never make the ordering invalid. Empty rows form one group."""
    A = _rows(matrix)
    n = A.shape[0]
    rng = np.random.default_rng(20261202)  # fixed: the same matrix always gets the same order
    w = np.stack([rng.integers(1, np.iinfo(np.uint64).max, size=n, dtype=np.uint64, endpoint=True)
                  for _ in range(2)], axis=1)
    keys = _row_sums(A.indptr, A.indices, w)
    # Sorted by the first sum alone: rows equal in both sums are then adjacent, but for a
    # collision of first sums (probability ~n²/2⁶⁴), which would only leave two equal rows
    # in two groups.
    order = np.argsort(keys[:, 0])
    new = np.ones(n, dtype=bool)
    sorted_keys = keys[order]
    np.any(sorted_keys[1:] != sorted_keys[:-1], axis=1, out=new[1:])
    runs = np.flatnonzero(new)
    first = np.minimum.reduceat(order, runs)  # the first row of each group
    label = np.empty(n, dtype=np.int64)
    label[order] = np.cumsum(new) - 1
    # Renumber by first appearance (keeps the mesh's own numbering where it helps locality).
    is_first = np.zeros(n, dtype=bool)
    is_first[first] = True
    rank = (np.cumsum(is_first) - 1)[first]
    return rank[label]


def _first_of(labels: np.ndarray, n_labels: int, dtype) -> np.ndarray:
    """The first position of every label 0..n_labels−1 in ``labels`` (each label present):
    written from the back, so the earliest position is the one that stays."""
    first = np.empty(n_labels, dtype=dtype)
    first[labels[::-1]] = np.arange(labels.size, dtype=dtype)[::-1]
    return first


def _row_sums(indptr: np.ndarray, indices: np.ndarray, w: np.ndarray, rows_per_chunk: int = 4096) -> np.ndarray:
    """``w``-weighted sums over every row's stored columns (w: (n, j); sums wrap around in
    unsigned arithmetic); rows without entries: 0. In chunks of rows, so that the gathered
    weights stay in cache (3–5 × faster than one gather of all entries at 1M rows)."""
    out = np.zeros((indptr.size - 1, w.shape[1]), dtype=w.dtype)
    rows = np.flatnonzero(np.diff(indptr))  # reduceat cannot give an empty row 0
    for b in range(0, rows.size, rows_per_chunk):  # over chunks, not rows
        chunk = rows[b:b + rows_per_chunk]
        lo, hi = indptr[chunk[0]], indptr[chunk[-1] + 1]
        out[chunk] = np.add.reduceat(w.take(indices[lo:hi], axis=0), indptr[chunk] - lo, axis=0)
    return out


def _rows(matrix: sp.spmatrix) -> sp.csr_matrix:
    """Row access without a copy: a CSC matrix is read as the CSR of its transpose (the
    same graph once symmetrized, and the same groups for a symmetric pattern)."""
    if sp.issparse(matrix) and matrix.format == "csc":
        return matrix.T
    return sp.csr_matrix(matrix)


def _quotient(matrix: sp.spmatrix, group: np.ndarray) -> sp.csr_matrix:
    """The symmetric graph of the compressed vertices (no self loops) from one
    representative row each, keeping the entries in representative columns (for a
    symmetric pattern these are all the neighbours); symmetrized as Q + Qᵀ so that any
    pattern gives an undirected graph. Returns a canonical CSR matrix (int32 indices)."""
    A = _rows(matrix)
    if not A.has_canonical_format:  # duplicate or unsorted columns
        A = A.copy()
        A.sum_duplicates()
    n = group.size
    m = int(group.max()) + 1
    rep = _first_of(group, m, np.int64)  # the first row of each group
    col_group = np.full(n, -1, dtype=np.int32)  # representative columns: their group
    col_group[rep] = np.arange(m, dtype=np.int32)
    # The representative rows' entries, gathered row after row.
    length = A.indptr[rep + 1] - A.indptr[rep]
    ptr = np.zeros(m + 1, dtype=np.int64)
    np.cumsum(length, out=ptr[1:])
    at = np.repeat(A.indptr[rep] - ptr[:-1], length)
    at += np.arange(at.size)
    c = col_group[A.indices[at]]
    keep = c >= 0
    keep &= c != np.repeat(np.arange(m, dtype=np.int32), length)
    kept = np.zeros(at.size + 1, dtype=np.int64)
    np.cumsum(keep, out=kept[1:])
    Q = sp.csr_matrix((np.ones(int(kept[-1]), dtype=np.int8), c[keep], kept[ptr].astype(np.int32)), shape=(m, m))
    if np.any(np.diff(rep) < 0):  # groups not numbered in order of their first rows
        Q.sort_indices()
    Q.has_sorted_indices = True  # sorted rows, representative columns in group order
    Q.has_canonical_format = True
    T = Q.T.tocsr()  # sorted
    if np.array_equal(T.indptr, Q.indptr) and np.array_equal(T.indices, Q.indices):
        return Q  # symmetric already
    Q = (Q + T).tocsr()
    Q.sum_duplicates()
    Q.sort_indices()
    return Q


def _graph(indptr: np.ndarray, indices: np.ndarray, ones: np.ndarray) -> sp.csr_matrix:
    """A csgraph-ready k × k graph on views of our own arrays (int32 indices, float64 data
    from one preallocated array of ones): csgraph then converts nothing. The edge lists
    here are always filtered from a canonical matrix, so they stay canonical."""
    k = indptr.size - 1
    G = sp.csr_matrix((ones[:indices.size], indices, indptr), shape=(k, k), copy=False)
    G.has_sorted_indices = True  # spare csgraph the checks
    G.has_canonical_format = True
    return G


def _depths(indptr: np.ndarray, buf: np.ndarray, n_edges: int, ones: np.ndarray,
            starts: np.ndarray) -> np.ndarray:
    """Breadth-first distance of every vertex from the start vertex of its component, all
    components in one search: a virtual root (vertex k) points to every start; its edges
    are written into ``buf`` after the graph's ``n_edges`` (no copy of the graph).

    The search's visiting order has nondecreasing depth and its vertices' predecessors
    appear in nondecreasing order, so the first vertex of depth d + 1 is the first whose
    predecessor is not before the first vertex of depth d: one binary search per depth
    (a loop over depths, never over vertices). Returns int32 depths (k,); vertices of
    components without a start get −1."""
    k = indptr.size - 1
    s = starts.size
    buf[n_edges:n_edges + s] = starts
    root = np.empty(k + 2, dtype=np.int32)
    root[:k + 1] = indptr
    root[k + 1] = n_edges + s
    order, pred = breadth_first_order(_graph(root, buf[:n_edges + s], ones), k, directed=True,
                                      return_predecessors=True)
    at = np.empty(k + 1, dtype=np.int32)
    at[order] = np.arange(order.size, dtype=np.int32)
    pred_at = at[pred[order[1:]]]  # nondecreasing (breadth-first queue)
    bounds = [0, 1]  # the first position of depth 0 (the root), 1, ...
    while bounds[-1] < order.size:
        # an int32 key: another type would convert the whole array at every call
        bounds.append(int(pred_at.searchsorted(np.int32(bounds[-1]))) + 1)
    depth = np.zeros(k + 1, dtype=np.int32)  # unreached: 0, so −1 below
    depth[order] = np.repeat(np.arange(len(bounds) - 1, dtype=np.int32), np.diff(bounds))
    return depth[:k] - 1  # the starts are one step below the root


def _components(indptr: np.ndarray, buf: np.ndarray, n_edges: int, ones: np.ndarray, side: np.ndarray,
                n_side: int) -> tuple[np.ndarray, int, np.ndarray]:
    """The connected components of the graph (arguments as in ``_dissect_level``) and every
    vertex's breadth-first depth from the first vertex of its component, knowing ``side``:
    labels 0..n_side−1, none empty, each holding one or more whole components (the two
    sides of every cut component: the side below a cut is connected, the one above
    may not be).

    One search from the first vertex of every side finds the sides that are one component;
    only the vertices it does not reach are searched for components (usually few), so
    there is no components pass over the whole graph. Components are numbered by their
    first vertex (as scipy's connected_components numbers them). Returns (comp, n_comp,
    depth)."""
    k = side.size
    first = _first_of(side, n_side, np.int32)
    depth = _depths(indptr, buf, n_edges, ones, first)
    comp = side
    lost = np.flatnonzero(depth < 0)
    n_comp = n_side
    if lost.size:
        # The subgraph of the unreached vertices: their neighbours are all unreached.
        comp = side.copy()
        local = np.full(k, -1, dtype=np.int32)
        local[lost] = np.arange(lost.size, dtype=np.int32)
        length = (indptr[lost + 1] - indptr[lost]).astype(np.int64)
        sub_ptr = np.zeros(lost.size + 1, dtype=np.int32)
        np.cumsum(length, out=sub_ptr[1:])
        sub_edges = int(sub_ptr[-1])
        at = np.arange(sub_edges) + np.repeat(indptr[lost] - sub_ptr[:-1], length)
        sub_buf = np.empty(sub_edges + lost.size, dtype=np.int32)
        np.take(local, buf[at], out=sub_buf[:sub_edges])
        sub_ones = ones if ones.size >= sub_buf.size else np.ones(sub_buf.size)
        n_sub, sub_comp = connected_components(_graph(sub_ptr, sub_buf[:sub_edges], sub_ones), directed=True,
                                               connection="strong")
        sub_first = _first_of(sub_comp, n_sub, np.int32)
        depth[lost] = _depths(sub_ptr, sub_buf, sub_edges, sub_ones, sub_first)
        comp[lost] = n_side + sub_comp
        n_comp = n_side + n_sub
    # Number the components by their first vertex.
    first = _first_of(comp, n_comp, np.int32)
    rank = np.empty(n_comp, dtype=np.int32)
    rank[np.argsort(first)] = np.arange(n_comp, dtype=np.int32)
    return rank[comp], n_comp, depth


def _keep(indptr: np.ndarray, buf: np.ndarray, rest: np.ndarray) -> tuple[np.ndarray, int]:
    """The subgraph of the vertices ``rest`` (mask), in place: its column indices, in the
    remaining vertices' own numbering, overwrite the front of ``buf``. Rows of the other
    vertices lose all edges. Returns the new (indptr, number of edges)."""
    k = rest.size
    local = np.where(rest, np.cumsum(rest, dtype=np.int32) - 1, -1).astype(np.int32)
    degree = np.diff(indptr)
    before = np.empty(k + 1, dtype=np.int32)  # edges kept before each row
    n_kept = 0
    for r0 in range(0, k, ROWS_PER_CHUNK):  # over chunks of rows, in cache, not over rows
        r1 = min(r0 + ROWS_PER_CHUNK, k)
        lo, hi = indptr[r0], indptr[r1]
        c = local.take(buf[lo:hi])  # −1: a column of a vertex not kept
        keep = np.repeat(rest[r0:r1], degree[r0:r1])
        keep &= c >= 0
        kept = np.zeros(hi - lo + 1, dtype=np.int32)
        np.cumsum(keep, out=kept[1:])
        before[r0:r1 + 1] = n_kept + kept[indptr[r0:r1 + 1] - lo]
        c = c[keep]
        buf[n_kept:n_kept + c.size] = c  # behind the chunk read: safe in place
        n_kept += c.size
    return before[np.append(np.flatnonzero(rest), k)], n_kept


def _farthest(comp: np.ndarray, depth: np.ndarray, n_comp: int) -> tuple[np.ndarray, np.ndarray]:
    """Per component: its greatest depth (eccentricity of the start) and a vertex there."""
    ecc = np.zeros(n_comp, dtype=depth.dtype)  # one dtype: ufunc.at's fast path
    np.maximum.at(ecc, comp, depth)
    at_max = np.flatnonzero(depth == ecc[comp])
    far = np.empty(n_comp, dtype=np.int64)
    far[comp[at_max[::-1]]] = at_max[::-1]  # any vertex at the greatest depth will do
    return far, ecc


def _dissect_level(indptr: np.ndarray, buf: np.ndarray, n_edges: int, ones: np.ndarray, comp: np.ndarray,
                   n_comp: int, big: np.ndarray, depth: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """One dissection step for every component listed in ``big`` at once, of the graph
    ``indptr``, ``buf[:n_edges]`` (``buf`` has room after the edges for the searches'
    virtual root, ``ones`` at least as many entries as ``buf``); ``depth``: the
    breadth-first depths from the first vertex of each component (``_components``).

    Returns (separator mask over the vertices, mask over ``big`` of the components that
    cannot be split by levels and become leaves, mask of the vertices above their
    component's cut)."""
    k = comp.size
    far, _ = _farthest(comp, depth, n_comp)
    # The second sweep: from a pseudo-peripheral vertex (the other components: depth 0).
    depth = np.maximum(_depths(indptr, buf, n_edges, ones, far[big]), 0)
    _, ecc = _farthest(comp, depth, n_comp)
    # Cutting at level ℓ separates the levels below from those above by the level-ℓ
    # vertices with a neighbour one level up. Per component choose the ℓ in 1..ecc−1 with
    # the least separator size / smaller side (a ratio cut: balance and a small separator
    # both count); histograms over (component, level) bins, each component's bins
    # contiguous, so every component is decided at once.
    # A neighbour one level up: neighbours' depths differ by at most one, so it is the
    # row's greatest neighbour depth exceeding its own (rows without edges: none).
    has_up = np.zeros(k, dtype=bool)
    rows = np.flatnonzero(np.diff(indptr))  # reduceat cannot give an empty row nothing
    for b in range(0, rows.size, ROWS_PER_CHUNK):  # over chunks, not rows
        chunk = rows[b:b + ROWS_PER_CHUNK]
        lo, hi = indptr[chunk[0]], indptr[chunk[-1] + 1]
        has_up[chunk] = np.maximum.reduceat(depth.take(buf[lo:hi]), indptr[chunk] - lo) > depth[chunk]
    offset = np.zeros(n_comp + 1, dtype=np.int64)
    np.cumsum(ecc + 1, out=offset[1:])
    bins = offset[comp] + depth
    n_bins = int(offset[-1])
    count = np.bincount(bins, minlength=n_bins)
    cut = np.bincount(bins, weights=has_up, minlength=n_bins)
    bin_comp = np.repeat(np.arange(n_comp), ecc + 1)
    bin_level = np.arange(n_bins) - offset[bin_comp]
    cum = np.cumsum(count)
    before = (cum - count)[offset[:-1]][bin_comp]  # vertices of the earlier components
    size = np.bincount(comp, minlength=n_comp)
    below = cum - before - cut  # levels ≤ ℓ without the separator
    above = size[bin_comp] - (cum - before)
    splits = np.zeros(n_comp, dtype=bool)
    splits[big] = ecc[big] >= 2  # else within one step of one vertex: no level splits it
    valid = splits[bin_comp] & (bin_level >= 1) & (bin_level <= ecc[bin_comp] - 1) & (cut > 0)
    score = np.full(n_bins, np.inf)
    score[valid] = cut[valid] / np.maximum(np.minimum(below, above)[valid], 1)
    best = np.minimum.reduceat(score, offset[:-1])
    splits &= np.isfinite(best)
    at_best = np.flatnonzero(score == best[bin_comp])
    pick = np.zeros(n_comp, dtype=np.int64)
    pick[bin_comp[at_best[::-1]]] = at_best[::-1]  # the lowest such level
    level = pick - offset[:-1]
    sep = has_up & splits[comp] & (depth == level[comp])
    return sep, ~splits[big], depth > level[comp]


def nested_dissection(matrix: sp.spmatrix, leaf_size: int = LEAF_SIZE) -> np.ndarray:
    """An elimination order of a (structurally) symmetric sparse matrix: ``p`` such that
    ``matrix[p][:, p]`` factors with little fill. Returns an int64 permutation of range(n).
    An unsymmetric pattern is accepted (the graph of the compressed rows is symmetrized)."""
    n = matrix.shape[0]
    if matrix.shape != (n, n):
        raise ValueError(f"nested_dissection needs a square matrix, got shape {matrix.shape}")
    if n == 0:
        return np.zeros(0, dtype=np.int64)
    group = compress(matrix)
    Q = _quotient(matrix, group)
    m = Q.shape[0]
    # Renumber the compressed graph in breadth-first order (every component, one search
    # through a virtual root): the later passes then read memory nearly in sequence
    # (ordering 10–25 % faster at 250k–1M DOFs, the same fill within 1 %).
    # A connected graph (the usual mesh) needs no components pass: one search reaches all.
    ones = np.ones(Q.indices.size + m + 1)  # every graph's data (csgraph converts nothing)
    bfs = breadth_first_order(_graph(Q.indptr, Q.indices, ones), 0, directed=True, return_predecessors=False)
    side = np.zeros(m, dtype=np.int32)
    n_side = 1
    if bfs.size < m:
        n_side, comp = connected_components(Q, directed=True, connection="strong")
        first = _first_of(comp, n_side, np.int64)  # the first vertex of each component
        root = np.append(Q.indptr, Q.indptr[-1] + n_side).astype(np.int32)
        R = sp.csr_matrix((np.ones(Q.indices.size + n_side), np.concatenate([Q.indices, first.astype(Q.indices.dtype)]),
                           root), shape=(m + 1, m + 1))
        bfs = breadth_first_order(R, m, directed=True, return_predecessors=False)[1:]
        side = comp[bfs].astype(np.int32)  # the components, exactly
    Q = sp.csr_matrix(Q[bfs][:, bfs])
    Q.sort_indices()
    # The graph of the vertices not yet ordered in their own numbering: CSR arrays, int32,
    # the column indices in ``buf`` with room after them for the breadth-first searches'
    # virtual root; float64 ones shared as every graph's data (csgraph converts nothing).
    # Filtering keeps the rows sorted, so every level rebuilds it without sorting.
    indptr = Q.indptr.astype(np.int32)
    n_edges = Q.indices.size
    buf = np.empty(n_edges + m, dtype=np.int32)
    buf[:n_edges] = Q.indices
    del Q
    # The dissection tree: node 0 is a virtual root; every component met at some level is
    # a node (holding its separator, or all of it when it is a leaf), child of the node of
    # the component it was cut from.
    node_of = np.zeros(m, dtype=np.int64)  # the tree node holding each vertex, when final
    parent_of = np.zeros(m, dtype=np.int64)  # for vertices not yet final: their parent node
    tree_parent = [np.zeros(1, dtype=np.int64)]
    n_nodes = 1
    active = np.arange(m)
    for depth_level in range(MAX_LEVELS + 1):
        k = active.size
        if k == 0:
            break
        comp, n_comp, depth = _components(indptr, buf, n_edges, ones, side, n_side)
        size = np.bincount(comp, minlength=n_comp)
        nodes = n_nodes + np.arange(n_comp)
        up = np.zeros(n_comp, dtype=np.int64)
        up[comp] = parent_of[active]  # one parent per component (it was cut from one)
        tree_parent.append(up)
        n_nodes += n_comp
        leaf_comp = size <= leaf_size
        if depth_level == MAX_LEVELS:
            leaf_comp[:] = True
        big = np.flatnonzero(~leaf_comp)
        sep = np.zeros(k, dtype=bool)
        if big.size:
            sep, whole, above = _dissect_level(indptr, buf, n_edges, ones, comp, n_comp, big, depth)
            leaf_comp[big[whole]] = True
        final = leaf_comp[comp] | sep
        node_of[active[final]] = nodes[comp[final]]
        parent_of[active[~final]] = nodes[comp[~final]]
        rest = ~final
        if not rest.any():
            break
        # The next level's sides: below and above the cut of every component cut.
        side = 2 * comp[rest] + above[rest]
        used = np.zeros(2 * n_comp, dtype=bool)
        used[side] = True
        n_side = int(used.sum())
        side = (np.cumsum(used, dtype=np.int32) - 1)[side]
        indptr, n_edges = _keep(indptr, buf, rest)
        active = active[rest]
    # A postorder of the tree (children before parents, each subtree contiguous): the
    # reverse of a preorder. SuperLU in symmetric mode does not postorder the elimination
    # tree itself, and its supernode detection assumes a postorder.
    node_rank = _postorder(tree_parent)
    # The compressed vertices in elimination order (by tree node; within one, in the
    # breadth-first numbering), back in their own numbering.
    vertices = bfs[np.argsort(node_rank[node_of], kind="stable")]
    return _expand(vertices, group)


def _postorder(level_parent: list[np.ndarray]) -> np.ndarray:
    """The position of every tree node in a postorder: the reverse of the preorder that
    visits the children of a node in increasing number. The nodes are numbered level by
    level: ``level_parent[j]`` holds the parents (nodes of level j − 1) of the nodes of
    level j; level 0 is the root, node 0. Loops over levels only: subtree sizes bottom-up,
    then preorder positions top-down (a node's position is its parent's + 1 + the sizes
    of its earlier siblings). SciPy's depth_first_order gives the same preorder but
    rescans a node's children at every return, quadratic in their number (a graph of
    200,000 isolated vertices: 8 s)."""
    size = [p.size for p in level_parent]
    offset = np.zeros(len(size) + 1, dtype=np.int64)
    np.cumsum(size, out=offset[1:])
    parent = np.concatenate(level_parent).astype(np.int64)
    n_nodes = parent.size
    subtree = np.ones(n_nodes, dtype=np.int64)
    for j in range(len(size) - 1, 0, -1):
        np.add.at(subtree, parent[offset[j]:offset[j + 1]], subtree[offset[j]:offset[j + 1]])
    pre = np.zeros(n_nodes, dtype=np.int64)
    for j in range(1, len(size)):
        lo = offset[j]
        by_parent = np.argsort(parent[lo:offset[j + 1]], kind="stable")  # siblings in number order
        par = parent[lo:offset[j + 1]][by_parent]
        sizes = subtree[lo:offset[j + 1]][by_parent]
        before = np.cumsum(sizes) - sizes
        group_start = np.flatnonzero(np.r_[True, par[1:] != par[:-1]])
        before -= np.repeat(before[group_start], np.diff(np.r_[group_start, par.size]))
        pre[lo + by_parent] = pre[par] + 1 + before
    return n_nodes - 1 - pre


def _expand(vertices: np.ndarray, group: np.ndarray) -> np.ndarray:
    """The unknowns of the compressed ``vertices`` (an order of all groups), each group's
    unknowns consecutively in their own order (a counting sort: no sort of n items
    unless the groups are not numbered in order of their unknowns)."""
    n = group.size
    count = np.bincount(group, minlength=vertices.size)
    start = np.zeros(count.size, dtype=np.int64)
    np.cumsum(count[:-1], out=start[1:])
    # The unknowns grouped by group, each group's in increasing order.
    members = np.arange(n) if np.all(group[1:] >= group[:-1]) else np.argsort(group, kind="stable")
    length = count[vertices]
    out_start = np.cumsum(length) - length
    return members[np.arange(n) + np.repeat(start[vertices] - out_start, length)]
