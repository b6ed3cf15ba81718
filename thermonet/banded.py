"""Banded LDLᵀ factorisation for (complex) symmetric matrices, compiled with numba.

Used by the sparse exponential stepper after a reverse Cuthill–McKee reordering, where
building networks have small bandwidth. No pivoting: the matrices factorised here are
``hL + zC`` with ``L`` a symmetric positive definite network Laplacian block, ``C ≥ 0``
diagonal and ``Im z > 0``; the factorisation is checked by its residual before use and the
caller falls back to SuperLU otherwise.

References
----------
.. [1] Golub, G. H., Van Loan, C. F., Matrix Computations, 4th ed., 2013, §4.3 (banded
   LDLᵀ).
.. [2] Higham, N. J., Factorizing complex symmetric matrices with positive definite real and
   imaginary parts, Mathematics of Computation 67 (1998) 1591–1599.
"""

from __future__ import annotations

import numba
import numpy as np


@numba.njit(cache=True)
def ldl_band(A):
    """Factor a symmetric band matrix given by its lower band ``A[k, i] = A[i, i−k]``.

    Returns ``(Lb, d)`` with ``Lb[k, i] = L[i, i−k]`` (unit diagonal implied) and ``d``.
    """
    b = A.shape[0] - 1
    n = A.shape[1]
    Lb = np.zeros_like(A)
    d = np.zeros(n, dtype=A.dtype)
    for j in range(n):
        acc = A[0, j]
        for k in range(1, min(b, j) + 1):
            acc -= Lb[k, j] * Lb[k, j] * d[j - k]
        d[j] = acc
        for i in range(j + 1, min(n, j + b + 1)):
            # L[i, j] = (A[i, j] − Σ_k L[i, k] L[j, k] d_k) / d_j over k < j within the band
            acc = A[i - j, i]
            for k in range(max(0, i - b), j):
                acc -= Lb[i - k, i] * Lb[j - k, j] * d[k]
            Lb[i - j, i] = acc / d[j]
    return Lb, d


@numba.njit(cache=True)
def solve_band(Lb, d, r):
    """Solve ``L D Lᵀ x = r`` from :func:`ldl_band` factors."""
    b = Lb.shape[0] - 1
    n = Lb.shape[1]
    y = r.copy()
    for i in range(n):
        acc = y[i]
        for k in range(1, min(b, i) + 1):
            acc -= Lb[k, i] * y[i - k]
        y[i] = acc
    for i in range(n):
        y[i] = y[i] / d[i]
    for i in range(n - 1, -1, -1):
        acc = y[i]
        for k in range(1, min(b, n - 1 - i) + 1):
            acc -= Lb[k, i + k] * y[i + k]
        y[i] = acc
    return y


@numba.njit(cache=True)
def expm_apply_band(Lbs, ds, weights, cv):
    """``2 Re Σ_k w_k (z_k C + hL)⁻¹ (C v)`` with one banded factor per pole."""
    n = cv.shape[0]
    out = np.zeros(n)
    rc = cv.astype(np.complex128)
    for p in range(Lbs.shape[0]):
        y = solve_band(Lbs[p], ds[p], rc)
        for i in range(n):
            out[i] += 2.0 * (weights[p] * y[i]).real
    return out


def to_band(A, bandwidth):
    """Lower band array of a scipy sparse symmetric matrix (already reordered)."""
    coo = A.tocoo()
    keep = coo.row >= coo.col
    rows, cols, vals = coo.row[keep], coo.col[keep], coo.data[keep]
    band = np.zeros((bandwidth + 1, A.shape[0]), dtype=np.result_type(vals.dtype, float))
    np.add.at(band, (rows - cols, rows), vals)
    return band
