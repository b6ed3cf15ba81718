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


@numba.njit(cache=True, parallel=True)
def expm_apply_band(Lbs, ds, weights, cv):
    """``2 Re Σ_k w_k (z_k C + hL)⁻¹ (C v)`` with one banded factor per pole.

    The poles' solves are independent and run in parallel (``numba.prange``); each is a
    sequential forward/backward substitution.
    """
    n = cv.shape[0]
    P = Lbs.shape[0]
    parts = np.zeros((P, n))
    rc = cv.astype(np.complex128)
    for p in numba.prange(P):
        y = solve_band(Lbs[p], ds[p], rc)
        for i in range(n):
            parts[p, i] = 2.0 * (weights[p] * y[i]).real
    out = np.zeros(n)
    for p in range(P):
        for i in range(n):
            out[i] += parts[p, i]
    return out


@numba.njit(cache=True, parallel=True)
def solve_band_many(Lb, d, R):
    """Solve ``L D Lᵀ x = r`` for every ROW ``r`` of ``R`` (k × n), in parallel."""
    X = np.empty_like(R)
    for j in numba.prange(R.shape[0]):
        X[j] = solve_band(Lb, d, R[j])
    return X


@numba.njit(cache=True, parallel=True)
def march_free_band(Lbs, ds, weights, r_inf, c, Lb_real, d_real, E_ptr, E_idx, E_val, U, D,
                    ramp, T0, perm, h, out_col, n_out):
    """March the free-running sparse step over all rows of the inputs ``U``.

    The free-running loop of the sparse method in one compiled call. Inputs are ``U`` at the
    end of each step and, where ``ramp``, rise linearly over it at the rates ``D`` [unit/s]
    (first-order hold). The particular solution of ``C dT/dt = −L T + E u(t)`` for a linear
    input is ``T_p(t) = α + βt`` with ``Lβ = E d`` and ``L α_end = E u − Cβ`` at the end of
    the step, so ``T⁺ = α_end + r(−hC⁻¹L)(T − α_end + hβ)`` (held inputs: β = 0 and α is the
    equilibrium). Per step: one or two real banded solves, the ``n/2`` complex pole solves in
    parallel, and the step mean from the integrated equation ``L T̄ = E ū − C (T⁺ − T)/h``
    with ``ū = u − hd/2``. ``L``, ``C`` (``c``), ``E`` (CSR rows ``E_ptr, E_idx, E_val``)
    and ``T0`` are in the banded (permuted) order; the outputs are written in the network's
    order (``perm[i]`` is node i of the banded order), and only the ``n_out`` nodes with an
    output column ``out_col[node] ≥ 0`` are kept (memory: steps × n_out).

    Returns
    -------
    Tall : ndarray (steps + 1, n_out)
        Start temperature then the end-of-step temperatures [°C] of the kept nodes.
    Tmean : ndarray (steps, n_out)
        Step-mean temperatures [°C] of the kept nodes.
    """
    nsteps = U.shape[0]
    n = T0.shape[0]
    P = Lbs.shape[0]
    Tall = np.empty((nsteps + 1, n_out))
    Tmean = np.empty((nsteps, n_out))
    T = T0.copy()
    col = np.empty(n, dtype=np.int64)      # output column of each banded position
    for i in range(n):
        col[i] = out_col[perm[i]]
        if col[i] >= 0:
            Tall[0, col[i]] = T[i]
    parts = np.zeros((P, n))
    rc = np.empty(n, dtype=np.complex128)
    b = np.empty(n)
    bd = np.empty(n)
    dT = np.empty(n)
    beta = np.zeros(n)
    for k in range(nsteps):
        for i in range(n):
            acc = 0.0
            accd = 0.0
            for q in range(E_ptr[i], E_ptr[i + 1]):
                acc += E_val[q] * U[k, E_idx[q]]
                if ramp[E_idx[q]]:
                    accd += E_val[q] * D[k, E_idx[q]]
            b[i] = acc
            bd[i] = accd
        if ramp.any():
            beta = solve_band(Lb_real, d_real, bd)
            for i in range(n):
                dT[i] = b[i] - c[i] * beta[i]
            xe = solve_band(Lb_real, d_real, dT)
        else:
            xe = solve_band(Lb_real, d_real, b)
        for i in range(n):
            rc[i] = c[i] * (T[i] - xe[i] + h * beta[i])
        for p in numba.prange(P):
            y = solve_band(Lbs[p], ds[p], rc)
            for i in range(n):
                parts[p, i] = 2.0 * (weights[p] * y[i]).real
        for i in range(n):
            acc = xe[i] + r_inf * (T[i] - xe[i] + h * beta[i])
            for p in range(P):
                acc += parts[p, i]
            dT[i] = b[i] - 0.5 * h * bd[i] - c[i] * (acc - T[i]) / h
            T[i] = acc
            if col[i] >= 0:
                Tall[k + 1, col[i]] = acc
        tm = solve_band(Lb_real, d_real, dT)
        for i in range(n):
            if col[i] >= 0:
                Tmean[k, col[i]] = tm[i]
    return Tall, Tmean


def to_band(A, bandwidth):
    """Lower band array of a scipy sparse symmetric matrix (already reordered).

    Parameters
    ----------
    A : scipy.sparse matrix (n, n)
        Symmetric matrix (real or complex; e.g. ``hL`` [J/K] or ``L`` [W/K]); only its
        lower triangle is read.
    bandwidth : int
        Lower bandwidth b: no entry with ``i − j > b``.

    Returns
    -------
    ndarray (b + 1, n)
        ``band[k, i] = A[i, i − k]``, as :func:`ldl_band` takes it.
    """
    coo = A.tocoo()
    keep = coo.row >= coo.col
    rows, cols, vals = coo.row[keep], coo.col[keep], coo.data[keep]
    band = np.zeros((bandwidth + 1, A.shape[0]), dtype=np.result_type(vals.dtype, float))
    np.add.at(band, (rows - cols, rows), vals)
    return band
