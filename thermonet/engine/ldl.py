"""Sparse LDLᵀ factorisation of (complex) symmetric matrices and the pole solves, compiled.

The sparse method (:mod:`thermonet.engine.sparse`) solves, every step, one system
``(z_k C + hL) y = r`` per pole ``z_k`` of its rational exponential, and ``L x = r`` for the
step means. These matrices share one sparsity pattern: that of the network's Laplacian. It is
factorised here as ``P A Pᵀ = L D Lᵀ`` after a fill-reducing ordering ``P``, with the
up-looking algorithm of Davis (2005): a symbolic pass (elimination tree and column counts,
shared by every pole), then a numeric pass per matrix. Building networks are nearly trees
(walls are chains between a few room nodes), so the factor has about one entry per column
and a solve costs a few operations per node. The pole solves of a step run interleaved
(all poles per node, :func:`solve_poles`) so they share the factor's indices.

No pivoting: the matrices are ``hL + zC`` with ``L`` a symmetric positive definite Laplacian
block, ``C ≥ 0`` diagonal and ``Im z > 0`` (complex symmetric with positive semi-definite
real and imaginary parts, for which LDLᵀ without pivoting is stable, Higham 1998). The caller
checks each factorisation by a residual and falls back to SuperLU otherwise.

References
----------
(Listed in ``docs/references.md §13``.)

.. [1] Davis, T. A., Algorithm 849: A concise sparse Cholesky factorization package, ACM
   Transactions on Mathematical Software 31(4) (2005) 587–591 (the up-looking LDLᵀ and its
   elimination-tree symbolic pass).
.. [2] Higham, N. J., Factorizing complex symmetric matrices with positive definite real and
   imaginary parts, Mathematics of Computation 67 (1998) 1591–1599.
.. [3] George, A., Liu, J. W. H., The evolution of the minimum degree ordering algorithm,
   SIAM Review 31(1) (1989) 1–19 (the fill-reducing ordering SuperLU offers).
"""

from __future__ import annotations

import numba
import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla
from scipy.sparse.csgraph import reverse_cuthill_mckee


@numba.njit(cache=True)
def ldl_symbolic(Ap, Ai):
    """Elimination tree and column pointers of the LDLᵀ factor of a symmetric pattern.

    Parameters
    ----------
    Ap, Ai : ndarray of int64
        CSC pointers and row indices of the (full or upper) pattern, rows sorted or not.

    Returns
    -------
    Lp : ndarray of int64 (n + 1,)
        Column pointers of the strictly lower factor ``L``.
    parent : ndarray of int64 (n,)
        Elimination tree (−1 at a root).
    """
    n = Ap.shape[0] - 1
    parent = np.full(n, -1, np.int64)
    count = np.zeros(n, np.int64)
    flag = np.empty(n, np.int64)
    for k in range(n):
        flag[k] = k
        for p in range(Ap[k], Ap[k + 1]):
            i = Ai[p]
            while i < k and flag[i] != k:       # walk up the tree from i towards k
                if parent[i] == -1:
                    parent[i] = k
                count[i] += 1
                flag[i] = k
                i = parent[i]
    Lp = np.zeros(n + 1, np.int64)
    for k in range(n):
        Lp[k + 1] = Lp[k] + count[k]
    return Lp, parent


@numba.njit(cache=True)
def ldl_numeric(Ap, Ai, Ax, Lp, parent):
    """Numeric LDLᵀ of a symmetric matrix (CSC, both triangles or the upper one) without
    pivoting.

    Parameters
    ----------
    Ap, Ai, Ax : ndarray
        CSC pointers, row indices and values (real or complex) of the matrix.
    Lp, parent : ndarray of int64
        From :func:`ldl_symbolic` on the same pattern.

    Returns
    -------
    Li : ndarray of int64 (nnz,)
        Row indices of the strictly lower factor, column by column.
    Lx : ndarray (nnz,)
        Its values (dtype of ``Ax``).
    D : ndarray (n,)
        The diagonal; a zero pivot leaves a zero (the caller's residual check fails).
    """
    n = Ap.shape[0] - 1
    Li = np.empty(Lp[n], np.int64)
    Lx = np.empty(Lp[n], Ax.dtype)
    D = np.zeros(n, Ax.dtype)
    Y = np.zeros(n, Ax.dtype)
    pattern = np.empty(n, np.int64)
    flag = np.empty(n, np.int64)
    filled = np.zeros(n, np.int64)
    for k in range(n):
        top = n
        flag[k] = k
        for p in range(Ap[k], Ap[k + 1]):
            i = Ai[p]
            if i <= k:
                Y[i] += Ax[p]
                length = 0
                while flag[i] != k:            # the path from i up the tree, stacked
                    pattern[length] = i
                    length += 1
                    flag[i] = k
                    i = parent[i]
                while length > 0:
                    top -= 1
                    length -= 1
                    pattern[top] = pattern[length]
        D[k] = Y[k]
        Y[k] = 0.0
        while top < n:                         # row k of L by a sparse triangular solve
            i = pattern[top]
            yi = Y[i]
            Y[i] = 0.0
            end = Lp[i] + filled[i]
            for p in range(Lp[i], end):
                Y[Li[p]] -= Lx[p] * yi
            lki = yi / D[i] if D[i] != 0 else 0.0 * yi
            D[k] -= lki * yi
            Li[end] = k
            Lx[end] = lki
            filled[i] += 1
            top += 1
    return Li, Lx, D


@numba.njit(cache=True)
def solve_poles(Lp, Li, LX, DINV, Y):
    """Solve ``L_p D_p L_pᵀ y_p = Y[:, p]`` in place for every column p (interleaved).

    Parameters
    ----------
    Lp, Li : ndarray of int64
        The shared pattern of the factors (:func:`ldl_symbolic`, :func:`ldl_numeric`).
    LX : ndarray (nnz, P)
        Factor values of the P matrices.
    DINV : ndarray (n, P)
        Reciprocals of their diagonals.
    Y : ndarray (n, P)
        Right-hand sides on entry, solutions on return (same dtype as ``LX``).
    """
    n, P = Y.shape
    for j in range(n):                               # L y = r (column by column)
        for q in range(Lp[j], Lp[j + 1]):
            r = Li[q]
            for p in range(P):
                Y[r, p] -= LX[q, p] * Y[j, p]
    for j in range(n - 1, -1, -1):                   # D Lᵀ x = y
        q0, q1 = Lp[j], Lp[j + 1]
        if q1 - q0 == 1:       # most columns of a near-tree: one expression, no reload
            r = Li[q0]
            for p in range(P):
                Y[j, p] = Y[j, p] * DINV[j, p] - LX[q0, p] * Y[r, p]
            continue
        for p in range(P):
            Y[j, p] *= DINV[j, p]
        for q in range(q0, q1):
            r = Li[q]
            for p in range(P):
                Y[j, p] -= LX[q, p] * Y[r, p]


@numba.njit(cache=True)
def solve_columns(Lp, Li, Lx, dinv, Y):
    """Solve ``L D Lᵀ x = Y[:, j]`` in place for every column j (one matrix).

    Parameters
    ----------
    Lp, Li, Lx : ndarray
        The factor (:func:`ldl_symbolic`, :func:`ldl_numeric`).
    dinv : ndarray (n,)
        Reciprocal of its diagonal.
    Y : ndarray (n, k)
        Right-hand sides on entry, solutions on return.
    """
    n, k = Y.shape
    for j in range(n):
        for q in range(Lp[j], Lp[j + 1]):
            r = Li[q]
            for c in range(k):
                Y[r, c] -= Lx[q] * Y[j, c]
    for j in range(n - 1, -1, -1):
        for c in range(k):
            Y[j, c] *= dinv[j]
        for q in range(Lp[j], Lp[j + 1]):
            r = Li[q]
            for c in range(k):
                Y[j, c] -= Lx[q] * Y[r, c]


def fill_reducing_order(A: sp.spmatrix) -> np.ndarray:
    """Ordering of a symmetric matrix that keeps its LDLᵀ factor sparse.

    The better (fewer factor entries, ties to the first) of reverse Cuthill–McKee, which
    keeps neighbours close in memory, and SuperLU's multiple minimum degree on ``Aᵀ + A``.

    Parameters
    ----------
    A : scipy.sparse matrix (n, n)
        Symmetric matrix (e.g. the free-node Laplacian [W/K]).

    Returns
    -------
    ndarray of int64 (n,)
        ``order[i]`` is the original index of position i.
    """
    A = A.tocsc()
    rcm = reverse_cuthill_mckee(A.tocsr(), symmetric_mode=True).astype(np.int64)
    try:
        lu = spla.splu(A, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                       options={"SymmetricMode": True})
    except RuntimeError:            # a zero pivot without pivoting: keep RCM
        return rcm
    mmd = np.argsort(lu.perm_c).astype(np.int64)   # A·Pc takes column perm_c⁻¹[j] to j
    sizes = [factor_size(A, o) for o in (rcm, mmd)]
    return rcm if sizes[0] <= sizes[1] else mmd


def permuted_csc(A: sp.spmatrix, order: np.ndarray) -> sp.csc_matrix:
    """``A[order][:, order]`` in CSC with sorted indices.

    Parameters
    ----------
    A : scipy.sparse matrix (n, n)
    order : ndarray of int (n,)
        ``order[i]`` is the original index of position i.

    Returns
    -------
    scipy.sparse.csc_matrix
    """
    B = A.tocsr()[order][:, order].tocsc()
    B.sort_indices()
    return B


def factor_size(A: sp.spmatrix, order: np.ndarray) -> int:
    """Entries of the strictly lower LDLᵀ factor of ``A`` in the given ordering.

    Parameters
    ----------
    A : scipy.sparse matrix (n, n)
    order : ndarray of int (n,)

    Returns
    -------
    int
    """
    B = permuted_csc(A, order)
    Lp, _ = ldl_symbolic(B.indptr.astype(np.int64), B.indices.astype(np.int64))
    return int(Lp[-1])
