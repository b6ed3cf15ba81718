"""The sparse LDLᵀ of the sparse method against scipy's general sparse solver (SuperLU)."""

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from thermonet.engine.ldl import (
    factor_size,
    fill_reducing_order,
    ldl_numeric,
    ldl_symbolic,
    permuted_csc,
    solve_columns,
    solve_poles,
)


def laplacian(n, extra, seed):
    """A random connected network Laplacian (a path plus ``extra`` random links) with some
    conductance to a boundary on a few nodes, so it is positive definite."""
    rng = np.random.default_rng(seed)
    i = np.concatenate([np.arange(n - 1), rng.integers(0, n, extra)])
    j = np.concatenate([np.arange(1, n), rng.integers(0, n, extra)])
    keep = i != j
    g = rng.uniform(1.0, 500.0, keep.sum())
    W = sp.coo_matrix((g, (i[keep], j[keep])), shape=(n, n)).tocsr()
    W = W + W.T
    d = np.asarray(W.sum(axis=1)).ravel()
    d[rng.integers(0, n, 3)] += rng.uniform(5.0, 50.0, 3)
    return (sp.diags(d) - W).tocsc()


def test_ldl_solves_equal_superlu_real_and_complex_poles():
    # the systems of the sparse method: L (real) and z C + hL (complex symmetric, Im z > 0)
    for seed, extra in ((0, 0), (1, 40), (2, 300)):
        L = laplacian(400, extra, seed)
        rng = np.random.default_rng(seed)
        C = rng.uniform(1e3, 1e7, 400)
        C[rng.integers(0, 400, 40)] = 0.0                     # massless nodes
        order = fill_reducing_order(L)
        assert np.array_equal(np.sort(order), np.arange(400))
        A = permuted_csc(L, order)
        Ap, Ai = A.indptr.astype(np.int64), A.indices.astype(np.int64)
        Lp, parent = ldl_symbolic(Ap, Ai)
        Li, Lx, d = ldl_numeric(Ap, Ai, A.data.astype(float), Lp, parent)
        r = rng.standard_normal((400, 3))
        x = np.ascontiguousarray(r[order])
        solve_columns(Lp, Li, Lx, 1.0 / d, x)
        want = spla.splu(L).solve(r)
        np.testing.assert_allclose(x, want[order], rtol=1e-9, atol=1e-12 * np.abs(want).max())
        z = np.array([-3.0 + 4.0j, 2.0 + 9.0j])
        Cp = C[order]
        diag = np.array([Ap[k] + np.searchsorted(Ai[Ap[k]:Ap[k + 1]], k) for k in range(400)])
        LX, DINV = [], []
        for zk in z:
            M = A.astype(complex) * 3600.0
            M.data[diag] += zk * Cp
            _, lx, dk = ldl_numeric(Ap, Ai, M.data, Lp, parent)
            LX.append(lx)
            DINV.append(1.0 / dk)
        Y = np.repeat(r[order, :1].astype(complex), 2, axis=1)
        solve_poles(Lp, Li, np.array(LX).T.copy(), np.array(DINV).T.copy(), Y)
        for k, zk in enumerate(z):
            ref = spla.spsolve((zk * sp.diags(C) + 3600.0 * L).tocsc(), r[:, 0].astype(complex))
            np.testing.assert_allclose(Y[:, k], ref[order], rtol=1e-9,
                                       atol=1e-12 * np.abs(ref).max())


def test_fill_reducing_order_keeps_a_tree_without_fill_and_a_grid_sparse():
    # a tree (path) factors with n − 1 entries (no fill) in the chosen ordering; on a 2-D
    # grid the chosen ordering fills in no more than the better of RCM and minimum degree
    path = laplacian(300, 0, 3)
    assert factor_size(path, fill_reducing_order(path)) == 299
    m = 30
    grid = sp.kronsum(laplacian(m, 0, 4), laplacian(m, 0, 5)).tocsc()
    rng_order = np.random.default_rng(0).permutation(m * m)
    chosen = factor_size(grid, fill_reducing_order(grid))
    assert chosen < factor_size(grid, rng_order)
    assert chosen <= factor_size(grid, np.arange(m * m))   # the natural (banded) order
