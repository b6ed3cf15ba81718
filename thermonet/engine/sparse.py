"""Large networks: a sparse, error-bounded exponential stepper.

For inputs held constant over a step, the exact solution of ``C dT/dt = −L T + E u`` is

.. math::  T(h) = T_{eq} + e^{−h C^{-1} L} (T(0) − T_{eq}),\\qquad L T_{eq} = E u .

The matrix exponential is applied through the Carathéodory–Fejér (CF) rational
approximation of ``e^s`` on ``s ≤ 0``, ``r(s) = r_∞ + Σ_k c_k/(s − z_k)`` of type (n, n)
(Trefethen, Weideman & Schmelzer 2006), whose uniform error falls like 9.28^−n — about half
the poles of a contour quadrature for the same accuracy. With ``s = −hC⁻¹L``:

.. math::  e^{−h C^{-1}L} v ≈ r_∞ v − 2\\,\\mathrm{Re} \\sum_{k=1}^{n/2} c_k (z_k C + hL)^{-1} C v ,

one complex sparse factorisation per conjugate pair of poles, made once per state and reused
every step (a sparse LDLᵀ after a fill-reducing ordering, :mod:`thermonet.engine.ldl`, else
SuperLU); the pole solves of a step run interleaved. The approximation error is bounded
uniformly on the negative real axis (:func:`rational_exp` measures it), so the step is exact
to that bound for any stiffness; massless nodes (rows with C = 0) are handled by the same
formula. Step-mean temperatures follow from the integrated equation ``L T̄ = E u − C ΔT/h``,
which makes the energy balance close to the solver's rounding.

References
----------
.. [1] Trefethen, L. N., Weideman, J. A. C., Schmelzer, T., Talbot quadratures and rational
   approximations, BIT Numerical Mathematics 46 (2006) 653–670 (CF approximation of e^x on
   (−∞, 0], its poles and its error 9.28^−n).
.. [2] Trefethen, L. N., Gutknecht, M. H., The Carathéodory–Fejér method for real rational
   approximation, SIAM Journal on Numerical Analysis 20(2) (1983) 420–436.
.. [3] Lawson, C. L., Contributions to the theory of linear least maximum approximation,
   PhD thesis, UCLA, 1961 (iteratively reweighted least squares towards the minimax
   residues used here) — from memory.
"""

from __future__ import annotations

import time
import warnings
from concurrent.futures import ThreadPoolExecutor
from functools import cache

import numba
import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from thermonet.engine import kernels
from thermonet.engine.compile import Compiled
from thermonet.engine.discretise import input_matrix, laplacian_sparse
from thermonet.engine.ldl import (
    fill_reducing_order,
    ldl_numeric,
    ldl_symbolic,
    permuted_csc,
    solve_columns,
    solve_poles,
)
from thermonet.engine.start import apply_initial, steady_start
from thermonet.engine.trajectory import NodeTrajectory
from thermonet.errors import AccuracyWarning, NetworkError

#: Largest mean number of LDLᵀ factor entries per node for the compiled path; beyond it
#: SuperLU (a network whose fill-reducing ordering still fills in that much is not
#: building-like).
MAX_FILL = 64

#: Degrees n of the CF approximation offered (n/2 complex solves per step).
DEGREES = (6, 8, 10, 12, 14)

#: Scale of the map between the unit interval and (−∞, 0] used by the CF construction
#: (s = SCALE·(t − 1)/(t + 1); 9 is the value of Trefethen, Weideman & Schmelzer 2006).
SCALE = 9.0


def _cf_poles(n: int, K: int = 75, nf: int = 1024) -> np.ndarray:
    """Poles of the type-(n, n) CF approximation of e^s on s ≤ 0 (upper half-plane ones).

    e^s is carried to the unit disk by s = 9(t − 1)/(t + 1), t = Re w, |w| = 1; its
    Chebyshev coefficients give a K × K Hankel matrix whose (n+1)-th singular vector's
    polynomial has the poles q_k outside the disk, mapped back by z = 9(q − 1)²/(q + 1)².
    """
    w = np.exp(2j * np.pi * np.arange(nf) / nf)
    t = w.real
    with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
        F = np.exp(SCALE * (t - 1) / (t + 1 + 1e-16))
    c = np.real(np.fft.fft(F)) / nf
    _, _, Vh = sla.svd(sla.hankel(c[1:K + 1]))
    v = Vh.conj().T[:, n]
    roots = np.roots(v)
    q = roots[np.abs(roots) > 1]
    z = SCALE * (q - 1) ** 2 / (q + 1) ** 2
    return np.sort_complex(z[z.imag > 0])


def _samples(m: int = 6000) -> np.ndarray:
    """Points of s ≤ 0, dense where e^s varies: the CF map of a uniform angle grid."""
    th = np.linspace(0.0, np.pi, m)[1:-1]
    t = np.cos(th)
    return np.concatenate([[0.0], SCALE * (t - 1) / (t + 1), -np.logspace(2, 12, 200)])


@cache
def rational_exp(n: int):
    """CF rational approximation of e^s on s ≤ 0: (poles z, residues c, r_∞, error bound).

    ``r(s) = r_∞ + 2 Re Σ_k c_k/(s − z_k)`` over the n/2 poles ``z_k`` of the upper
    half-plane. Residues and r_∞ are fitted to e^s by least squares reweighted towards the
    minimax error (Lawson's iteration) on :func:`_samples`; the returned bound is the largest
    |r(s) − e^s| measured on those points and on 20 000 log-spaced points of
    [−1e8, −1e−10] (it is about twice the CF singular value, ~9.28^−n).
    """
    if n not in DEGREES:
        raise ValueError(f"degree n must be one of {DEGREES}, got {n!r}")
    z = _cf_poles(n)
    s = _samples()

    def design(x):
        inv = 1.0 / (x[:, None] - z[None, :])
        return np.hstack([np.ones((len(x), 1)), 2 * inv.real, -2 * inv.imag])

    A = design(s)
    target = np.exp(s)
    wts = np.full(len(s), 1.0 / len(s))
    for _ in range(40):
        sw = np.sqrt(wts)[:, None]
        sol = np.linalg.lstsq(A * sw, target * sw[:, 0], rcond=None)[0]
        err = np.abs(A @ sol - target)
        wts = wts * (err + 1e-300)
        wts /= wts.sum()
    k = len(z)
    r_inf, c = float(sol[0]), sol[1:1 + k] + 1j * sol[1 + k:]
    check = np.concatenate([s, -np.logspace(-10, 8, 20000)])
    bound = float(np.abs(design(check) @ sol - np.exp(check)).max())
    return z, c, r_inf, bound


def degree_for(tol: float) -> int:
    """Smallest degree of :data:`DEGREES` whose error bound is ≤ tol (else the largest).

    Parameters
    ----------
    tol : float
        Largest accepted error bound of the rational approximation of e^s on s ≤ 0 [-].

    Returns
    -------
    int
    """
    for n in DEGREES:
        if rational_exp(n)[3] <= tol:
            return n
    return DEGREES[-1]


class SparseState:
    """Factorisations for one state: ``L`` (real) and ``z_k C + hL`` (complex), per pole.

    A sparse LDLᵀ after a fill-reducing ordering (:mod:`thermonet.engine.ldl`) when its
    factor has at most :data:`MAX_FILL` entries per node and every factorisation passes a
    residual check; SuperLU otherwise.

    Parameters
    ----------
    comp : Compiled
        The compiled network (structure, capacitances [J/K], step [s]).
    g : ndarray (nl,)
        Link conductances of this state [W/K].
    degree : int
        Degree n of the CF approximation, one of :data:`DEGREES` (n/2 complex
        factorisations).
    """

    def __init__(self, comp: Compiled, g: np.ndarray, degree: int):
        self.Lff, Lfb = laplacian_sparse(comp.st, g)
        self.E = sp.csr_matrix(input_matrix(comp.st, Lfb))
        self.c_full = np.zeros(comp.nf)
        self.c_full[:comp.nc] = comp.C
        h = self.h = comp.step_s
        z, c, self.r_inf, _ = rational_exp(degree)
        self.z = z
        self.weights = -c             # r(−hC⁻¹L)v = r_∞ v − 2Re Σ c_k (z_k C + hL)⁻¹ C v
        self.factored = self._factor_ldl(comp.nf)
        if not self.factored:
            Cm = sp.diags(self.c_full)
            self.lu_L = spla.splu(self.Lff.tocsc())
            self.lus = [spla.splu((zk * Cm + h * self.Lff).astype(complex).tocsc())
                        for zk in z]

    def _factor_ldl(self, n: int) -> bool:
        """LDLᵀ factors of ``L`` and of every ``z_k C + hL``; False if refused."""
        if n == 0:
            return False
        self.order = fill_reducing_order(self.Lff)
        A = permuted_csc(self.Lff, self.order)
        Ap, Ai = A.indptr.astype(np.int64), A.indices.astype(np.int64)
        self.Lp, parent = ldl_symbolic(Ap, Ai)
        if self.Lp[-1] > MAX_FILL * n:
            return False
        cp = self.c_full[self.order]
        diag = np.flatnonzero(Ai == np.repeat(np.arange(n), np.diff(Ap)))   # (j, j) entries
        if len(diag) != n:          # a node with no stored diagonal: leave it to SuperLU
            return False
        self.Li, self.Lx_real, d = ldl_numeric(Ap, Ai, A.data.astype(float), self.Lp, parent)
        mats, LX, DINV = [A], [], []
        for zk in self.z:
            M = A.astype(complex) * self.h
            M.data[diag] += zk * cp
            mats.append(M)
            _, lx, dk = ldl_numeric(Ap, Ai, M.data, self.Lp, parent)
            LX.append(lx)
            DINV.append(dk)
        if (d == 0).any() or any((dk == 0).any() for dk in DINV):
            return False
        DINV = [1.0 / dk for dk in DINV]
        self.dinv_real = 1.0 / d
        self.LX = np.ascontiguousarray(np.array(LX).T)
        self.DINV = np.ascontiguousarray(np.array(DINV).T)
        self.cp = np.ascontiguousarray(cp)
        return self._residuals_small(mats)

    def _residuals_small(self, mats) -> bool:
        """Componentwise backward error of a random solve with every factorisation ≤ 1e-9."""
        n = len(self.order)
        r = np.random.default_rng(0).standard_normal(n)
        Y = np.repeat(r.astype(complex)[:, None], len(self.z), axis=1)
        solve_poles(self.Lp, self.Li, self.LX, self.DINV, Y)
        x = r[:, None].copy()
        solve_columns(self.Lp, self.Li, self.Lx_real, self.dinv_real, x)
        sols = [x[:, 0]] + [Y[:, k] for k in range(len(self.z))]
        for M, y in zip(mats, sols, strict=True):
            scale = abs(M) @ np.abs(y) + np.abs(r)
            if not np.all(np.abs(M @ y - r) <= 1e-9 * scale):
                return False
        return True

    def expm_apply(self, v: np.ndarray) -> np.ndarray:
        """``e^{−hC⁻¹L} v`` (v of length nf) to the bound of :func:`rational_exp`.

        Parameters
        ----------
        v : ndarray (nf,)
            Free-node temperatures or temperature differences [°C or K].

        Returns
        -------
        ndarray (nf,)
            ``v`` after one step of free decay (massless nodes included) [same unit].
        """
        if self.factored:
            o = self.order
            cv = self.cp * v[o]
            Y = np.repeat(cv.astype(complex)[:, None], len(self.z), axis=1)
            solve_poles(self.Lp, self.Li, self.LX, self.DINV, Y)
            out = np.empty_like(v)
            out[o] = self.r_inf * v[o] + 2.0 * (Y @ self.weights).real
            return out
        cv = (self.c_full * v).astype(complex)
        acc = np.zeros(v.shape, dtype=complex)
        for wk, lu in zip(self.weights, self.lus, strict=True):
            acc += wk * lu.solve(cv)
        return self.r_inf * v + 2.0 * acc.real

    def solve_many(self, R: np.ndarray) -> np.ndarray:
        """Solve ``L X = R`` for the columns of R (nf × k).

        Parameters
        ----------
        R : ndarray (nf, k)
            Right-hand sides: heat into the free nodes [W] (e.g. columns of ``E u``).

        Returns
        -------
        ndarray (nf, k)
            Free-node temperatures [°C] (``L`` in [W/K]); for a column of unit powers, the
            steady response [K/W].
        """
        if self.factored:
            X = np.ascontiguousarray(R[self.order], dtype=float)
            solve_columns(self.Lp, self.Li, self.Lx_real, self.dinv_real, X)
            out = np.empty_like(X)
            out[self.order] = X
            return out
        return self.lu_L.solve(R)

    def equilibrium(self, Eu: np.ndarray) -> np.ndarray:
        """Solve ``L T_eq = E u`` [°C].

        Parameters
        ----------
        Eu : ndarray (nf,)
            Heat into the free nodes from the inputs, ``E u`` [W].

        Returns
        -------
        ndarray (nf,)
            Equilibrium temperatures of the free nodes [°C].
        """
        return self.solve_many(np.asarray(Eu)[:, None])[:, 0]


#: Step free-running single-state networks with the compiled march (:func:`march_free`);
#: False steps them with the general loop, the reference the march is tested against.
COMPILED_FREE_MARCH = True

#: Steps whose step-mean solves the free march does together, as one solve of many columns.
MEAN_BLOCK = 16


@numba.njit(cache=True, nogil=True)
def block_inputs(Lp, Li, Lx_real, dinv_real, c, E_row, E_col, E_val, U, D, ramp, k0, nb,
                 alpha, beta, Eu_s, alpha_s, beta_s):  # pragma: no cover - compiled
    """The inputs' part of ``nb`` steps from step ``k0`` (:func:`march_free`, stage 1).

    ``E u`` [W], ``β`` with ``L β = E d`` [K/s] and ``α`` with ``L α = E u − C β`` [°C],
    solved as columns of ``alpha``/``beta`` (n, B) and written step-major into ``Eu_s``,
    ``beta_s`` and ``alpha_s`` (B, n).
    """
    n, B = alpha.shape
    alpha[:] = 0.0
    beta[:] = 0.0
    for q in range(E_row.shape[0]):        # by the entries of E (most rows are empty)
        for kk in range(nb):
            alpha[E_row[q], kk] += E_val[q] * U[k0 + kk, E_col[q]]
            if ramp[E_col[q]]:
                beta[E_row[q], kk] += E_val[q] * D[k0 + kk, E_col[q]]
    if ramp.any():
        solve_columns(Lp, Li, Lx_real, dinv_real, beta)
    for i in range(n):
        for kk in range(B):
            Eu_s[kk, i] = alpha[i, kk]
            beta_s[kk, i] = beta[i, kk]
            alpha[i, kk] -= c[i] * beta[i, kk]
    solve_columns(Lp, Li, Lx_real, dinv_real, alpha)
    for i in range(n):
        for kk in range(B):
            alpha_s[kk, i] = alpha[i, kk]


@numba.njit(cache=True, nogil=True)
def block_steps(Lp, Li, LX, DINV, weights, r_inf, c, h, T, Y, Eu_s, alpha_s, beta_s, R_s,
                Tall, col, k0, nb):  # pragma: no cover - compiled
    """The recursion over ``nb`` steps from step ``k0`` (:func:`march_free`, stage 2).

    ``T⁺ = α + r(−hC⁻¹L)(T − α + hβ)`` by the pole solves; writes the end temperatures
    [°C] into ``Tall`` and the step means' right-hand sides ``E u − C (T⁺ − T)/h`` [W]
    into ``R_s``; ``T`` is updated in place.
    """
    n, P = Y.shape
    for kk in range(nb):
        a_k, b_k = alpha_s[kk], beta_s[kk]
        for i in range(n):
            v = c[i] * (T[i] - a_k[i] + h * b_k[i])
            for p in range(P):
                Y[i, p] = v
        solve_poles(Lp, Li, LX, DINV, Y)
        e_k, r_k = Eu_s[kk], R_s[kk]
        row = Tall[k0 + kk + 1]
        for i in range(n):
            acc = a_k[i] + r_inf * (T[i] - a_k[i] + h * b_k[i])
            for p in range(P):
                acc += 2.0 * (weights[p] * Y[i, p]).real
            r_k[i] = e_k[i] - c[i] * (acc - T[i]) / h
            T[i] = acc
            if col[i] >= 0:
                row[col[i]] = acc


@numba.njit(cache=True, nogil=True)
def block_means(Lp, Li, Lx_real, dinv_real, h, R, R_s, beta_s, Tmean, col, k0, nb
                ):  # pragma: no cover - compiled
    """The step means of ``nb`` steps from step ``k0`` (:func:`march_free`, stage 3).

    ``L T̄ = E ū − C (T⁺ − T)/h`` with ``E ū = E u − (h/2) L β``, as columns of ``R``.
    """
    n, B = R.shape
    for i in range(n):
        for kk in range(B):
            R[i, kk] = R_s[kk, i]
    solve_columns(Lp, Li, Lx_real, dinv_real, R)
    for kk in range(nb):
        row = Tmean[k0 + kk]
        b_k = beta_s[kk]
        for i in range(n):
            if col[i] >= 0:
                row[col[i]] = R[i, kk] - 0.5 * h * b_k[i]


@numba.njit(cache=True, nogil=True)
def touch_rows(A, k0, k1):  # pragma: no cover - compiled
    """Write 0 into every 4 KiB page of rows ``k0 … k1 − 1`` of the C-contiguous ``A``.

    The first write to a fresh page costs a page fault; the free march has its second thread
    pay them for the rows the stepping thread will fill next.
    """
    flat = A.reshape(-1)
    for q in range(k0 * A.shape[1], min(k1 * A.shape[1], flat.shape[0]), 512):
        flat[q] = 0.0


@numba.njit(cache=True)
def new_outputs(nsteps, n_out):  # pragma: no cover - compiled
    """Output arrays of a march, ``(nsteps + 1, n_out)`` and ``(nsteps, n_out)`` [°C].

    Allocated by numba rather than numpy: numpy asks the system for huge pages, whose
    first touch costs 0.1 s or 2 s for 1.4 GB depending on how fragmented memory is;
    ordinary pages cost a steady ~0.35 s per 0.7 GB (measured).
    """
    return np.empty((nsteps + 1, n_out)), np.empty((nsteps, n_out))


def march_free(Lp, Li, LX, DINV, Lx_real, dinv_real, weights, r_inf, c, E_row, E_col, E_val,
               U, D, ramp, T0, order, h, out_col, n_out):
    """March the free-running sparse step over all rows of the inputs ``U``.

    Inputs are ``U`` at the end of each step and, where ``ramp``, rise linearly over it at
    the rates ``D`` [unit/s] (first-order hold). The particular solution of
    ``C dT/dt = −L T + E u(t)`` for a linear input is ``α + βt`` with ``Lβ = E d`` and
    ``L α = E u − Cβ`` at the end of the step, so ``T⁺ = α + r(−hC⁻¹L)(T − α + hβ)`` (held
    inputs: β = 0 and α is the equilibrium). Only the pole solves of ``r`` depend on the
    state; they run interleaved, one step after another (:func:`solve_poles`). Everything
    that depends on the inputs alone — α, β — and the step means, from the integrated
    equation ``L T̄ = E ū − C (T⁺ − T)/h`` with ``ū = u − hd/2`` (so the balance closes to
    rounding), is solved for :data:`MEAN_BLOCK` steps at once, as one solve of many columns.

    The three stages are compiled functions that release the GIL; they run as a pipeline
    on two threads: while this thread steps block ``t`` (:func:`block_steps`), a second one
    prepares the inputs of block ``t + 1`` (:func:`block_inputs`) and solves the means of
    block ``t − 1`` (:func:`block_means`), each block's arrays in one of three buffers. The
    numbers do not depend on the threads. ``c``, ``E`` (entries ``E_row, E_col, E_val``)
    and ``T0`` are in the factor's order (``order[i]`` is node i of it); the outputs are
    written in the network's order, only for the ``n_out`` nodes with an output column
    ``out_col[node] ≥ 0``.

    Parameters
    ----------
    Lp, Li : ndarray of int64
        Pattern of the LDLᵀ factors (:func:`~thermonet.engine.ldl.ldl_symbolic`).
    LX : ndarray (nnz, P) of complex
        Unit lower factor values of ``z_k C + hL`` per pole [-].
    DINV : ndarray (n, P) of complex
        Reciprocals of their diagonals [K/J].
    Lx_real : ndarray (nnz,)
        Factor values of ``L`` [-] (unit lower factor).
    dinv_real : ndarray (n,)
        Reciprocal of its diagonal [K/W].
    weights : ndarray (P,) of complex
        Pole weights ``−c_k`` of the rational exponential [-].
    r_inf : float
        Its value at infinity [-].
    c : ndarray (n,)
        Capacitances of the free nodes, factor order [J/K] (0 for massless nodes).
    E_row, E_col : ndarray of int64
        Entries of the input matrix ``E``: row (factor order) and input column.
    E_val : ndarray
        Their values ([W/K] for boundary temperatures, [-] for powers).
    U : ndarray (steps, nu)
        Inputs at the end of each step ([°C] or [W]).
    D : ndarray (steps, nu)
        Their rates over each step [unit/s] (read where ``ramp``).
    ramp : ndarray (nu,) of bool
        Inputs that rise linearly over a step.
    T0 : ndarray (n,)
        Start temperatures, factor order [°C].
    order : ndarray (n,) of int64
        ``order[i]`` is the network's free node at position i of the factor.
    h : float
        Step [s].
    out_col : ndarray (n,) of int64
        Output column of each free node (network order), −1 when not kept.
    n_out : int
        Number of kept nodes.

    Returns
    -------
    Tall : ndarray (steps + 1, n_out)
        Start temperature then the end-of-step temperatures [°C] of the kept nodes.
    Tmean : ndarray (steps, n_out)
        Step-mean temperatures [°C] of the kept nodes.
    """
    nsteps, n, B = U.shape[0], T0.shape[0], MEAN_BLOCK
    Tall, Tmean = new_outputs(nsteps, n_out)
    col = out_col[order]                       # output column of each position of the order
    Tall[0, col[col >= 0]] = T0[col >= 0]
    T = T0.copy()
    Y = np.empty((n, LX.shape[1]), dtype=np.complex128)
    alpha, beta, R = np.zeros((n, B)), np.zeros((n, B)), np.zeros((n, B))
    Eu_s, alpha_s, beta_s, R_s = (np.zeros((3, B, n)) for _ in range(4))   # 3 buffers
    nblocks = -(-nsteps // B)

    def inputs(t):
        k = t * B
        block_inputs(Lp, Li, Lx_real, dinv_real, c, E_row, E_col, E_val, U, D, ramp, k,
                     min(B, nsteps - k), alpha, beta, Eu_s[t % 3], alpha_s[t % 3],
                     beta_s[t % 3])

    def means(t):
        k = t * B
        block_means(Lp, Li, Lx_real, dinv_real, h, R, R_s[t % 3], beta_s[t % 3], Tmean,
                    col, k, min(B, nsteps - k))

    def side(t):          # the second thread's share of pipeline round t
        if t + 1 < nblocks:
            inputs(t + 1)
            touch_rows(Tall, (t + 1) * B + 1, (t + 2) * B + 1)
        if t >= 1:
            means(t - 1)

    if nblocks:
        inputs(0)
    with ThreadPoolExecutor(max_workers=1) as pool:
        for t in range(nblocks + 1):
            job = pool.submit(side, t)
            if t < nblocks:
                k = t * B
                block_steps(Lp, Li, LX, DINV, weights, r_inf, c, h, T, Y, Eu_s[t % 3],
                            alpha_s[t % 3], beta_s[t % 3], R_s[t % 3], Tall, col, k,
                            min(B, nsteps - k))
            job.result()
    return Tall, Tmean


def _free_run(st: SparseState, U: np.ndarray, D: np.ndarray, ramp: np.ndarray,
              T0: np.ndarray, h: float, out_col: np.ndarray):
    """Free-running single-state march in one compiled call (LDLᵀ factors).

    Returns ``Tall`` (steps + 1, n_out): the start state then the end-of-step temperatures,
    and ``Tmean`` (steps, n_out): step means, both in the network's node order. End and
    start states are the views ``Tall[1:]`` and ``Tall[:-1]`` (no copy).
    """
    o = st.order
    Ep = st.E.tocsr()[o].tocoo()
    return march_free(st.Lp, st.Li, st.LX, st.DINV, st.Lx_real, st.dinv_real, st.weights,
                      st.r_inf, st.cp, Ep.row.astype(np.int64), Ep.col.astype(np.int64),
                      Ep.data.astype(float), np.ascontiguousarray(U, dtype=float),
                      np.ascontiguousarray(D, dtype=float), ramp.astype(np.bool_),
                      np.ascontiguousarray(T0[o]), o, h, out_col.astype(np.int64),
                      int((out_col >= 0).sum()))


def _start(comp: Compiled, st0: SparseState, u0, hsp0, csp0) -> np.ndarray:
    """Steady start of the sparse method (thermostats acting), then ``initial=`` values."""
    Rx = np.zeros((comp.m, comp.nf))
    Rx[np.arange(comp.m), comp.thermostat_node] = 1.0
    Ru = np.zeros((comp.m, comp.nu))
    T = steady_start(comp.st, lambda r: st0.solve_many(np.asarray(r).reshape(comp.nf, -1)
                                                       ).reshape(np.shape(r)),
                     st0.E, Rx, Ru, u0, hsp0, csp0, comp.qh, comp.qc)
    return apply_initial(T, [(i, comp.initial[nm]) for i, nm in enumerate(comp.free[:comp.nc])
                             if nm in comp.initial])


def _responses(comp: Compiled, states: dict) -> dict:
    """Per state: end-of-step response of every free node to 1 W at each thermostat [K/W]."""
    m, nf = comp.m, comp.nf
    pcols = comp.nb + comp.nsrc + np.arange(m)
    resp = {}
    for s, st in states.items():
        R = np.zeros((nf, m))
        for j in range(m):
            xe = st.equilibrium(st.E[:, [pcols[j]]].toarray().ravel())
            R[:, j] = xe - st.expm_apply(xe)
        if m and (R[comp.thermostat_node, np.arange(m)] <= 0).any():
            raise NetworkError("a thermostat node does not respond to heating within a step")
        resp[s] = R
    return resp


def _march(comp, states, resp, T, U, D, sched, hsp, csp, sig, keep):
    """The general sparse loop (switches, thermostats).

    ``U`` holds the inputs at the end of each step, ``D`` their rates [unit/s] over it
    (first-order hold; zero for held inputs). Returns the end and step-mean temperatures
    [°C] of the free nodes ``keep`` (steps × len(keep)), the step-mean inputs, the states and
    the start state of every free node. Step means come from the integrated equation
    ``L T̄ = E ū − C (T⁺ − T)/h`` (one more sparse solve per step).
    """
    m, nb, nsrc, nsw = comp.m, comp.nb, comp.nsrc, comp.nsw
    pcols = nb + nsrc + np.arange(m)
    n = U.shape[0]
    factor = comp.val.source_factor
    terms = comp.terms.copy()
    terms[:, 5] = comp.val.thresholds
    on = comp.val.sw_init.copy()
    ramp_any = bool(np.any(D))
    Tend = np.zeros((n, len(keep)))
    Tmean = np.zeros((n, len(keep)))
    Ue = np.zeros((n, comp.nu))
    S = np.zeros(n, dtype=np.int64)
    P = np.zeros(m)
    for k in range(n):
        bits = kernels.switch_bits(on, comp.has_off, terms, comp.term_clause, comp.clause_cond,
                                   T, sig[k]) if nsw else 0
        s = comp.state_id(int(sched[k]), bits)
        st = states[s]
        u = U[k].copy()
        u[nb:nb + nsrc] *= factor[s]
        u[pcols] = 0.0
        hb = 0.0
        if ramp_any:    # particular solution of a linear input: α + βt (see march_free)
            hb = comp.step_s * st.equilibrium(st.E @ D[k])
            xe = st.equilibrium(st.E @ u - st.c_full * hb / comp.step_s)
        else:
            xe = st.equilibrium(st.E @ u)
        T1 = xe + st.expm_apply(T - xe + hb)
        if ramp_any:
            u = u - 0.5 * comp.step_s * D[k]        # the step mean of the inputs
        if m:
            R = resp[s]
            kernels.control_powers(T1[comp.thermostat_node], R[comp.thermostat_node], hsp[k],
                                   csp[k], comp.qh, comp.qc, P)
            T1 = T1 + R @ P
            u[pcols] = P
        Tend[k] = T1[keep]
        Tmean[k] = st.equilibrium(st.E @ u - (T1 - T) * st.c_full / comp.step_s)[keep]
        Ue[k] = u
        S[k] = s
        T = T1
    return Tend, Tmean, Ue, S


def run_sparse(comp: Compiled, warmup_steps: int, tol: float = 1e-7, keep=None
               ) -> NodeTrajectory:
    """Step a large network with :class:`SparseState`; returns its trajectory.

    Parameters
    ----------
    comp : Compiled
        The compiled network.
    warmup_steps : int
        Warm-up steps: the first ``warmup_steps`` rows are run first and not reported.
    tol : float, default 1e-7
        Accuracy target of the rational exponential, relative to each step's departure from
        equilibrium [-]; the degree is chosen for ``tol / sqrt(C_max/C_min)``. A target that
        cannot be met warns (AccuracyWarning).
    keep : array of int, optional
        Free nodes whose end and mean temperatures are kept (default: all).

    Returns
    -------
    NodeTrajectory
        The kept free nodes' end-of-step and step-mean temperatures [°C] over the reported
        steps; ``info`` holds the degree, the error bound and the factorisation time [s].
    """
    t0 = time.perf_counter()
    # The error bound holds for the eigenvalues; in node temperatures it is amplified by at
    # most cond(C^{1/2}) = sqrt(C_max/C_min) (the modes are C-orthogonal).
    spread = float(np.sqrt(comp.C.max() / comp.C.min())) if comp.nc else 1.0
    degree = degree_for(tol / spread)
    bound = rational_exp(degree)[3] * spread
    if bound > tol:
        warnings.warn(f"method='sparse' cannot meet sparse_tol={tol:g}: with capacitances "
                      f"spanning {comp.C.min():.3g} … {comp.C.max():.3g} J/K its error bound is "
                      f"{bound:.2g}; make nodes of tiny capacitance massless "
                      "(capacitance=0) or use method='exact'", AccuracyWarning, stacklevel=4)
    states = {s: SparseState(comp, comp.G_states[s], degree) for s in range(comp.n_states)}
    info = {"rational_degree": degree, "exp_error_bound": bound,
            "factor_seconds": time.perf_counter() - t0}
    resp = _responses(comp, states)
    w = warmup_steps
    cat = (lambda a: np.concatenate([a[:w], a], axis=0)) if w else (lambda a: a)
    U_raw, sched, hsp, csp, sig = (cat(comp.U), cat(comp.sched_of_step), cat(comp.hsp),
                                   cat(comp.csp), cat(comp.signals))
    # inputs interpolated over a step (first-order hold): their rate over each step
    ramp = np.zeros(comp.nu, dtype=bool)
    ramp[:comp.nb + comp.nsrc] = comp.val.ramp
    ramps = bool(ramp.any())
    D = np.zeros_like(U_raw) if ramps else np.zeros((1, comp.nu))   # read only where ramp
    if ramps:
        D[:, ramp] = ((U_raw[:, ramp] - np.vstack([U_raw[:1, ramp], U_raw[:-1, ramp]]))
                      / comp.step_s)
    U = U_raw
    n = U.shape[0]
    bits = sum(1 << k for k, v in enumerate(comp.val.sw_init) if v)
    st0 = states[comp.state_id(int(sched[0]), bits)]
    T = _start(comp, st0, U[0], hsp[0], csp[0])

    def end_values(Ue):
        if not ramps:             # held inputs: end values are the step means
            return Ue
        out = Ue.copy()
        out[:, ramp] = U_raw[w:, ramp]
        return out

    keep = np.arange(comp.nf) if keep is None else np.asarray(keep, dtype=np.int64)
    if (COMPILED_FREE_MARCH and comp.nsw == 0 and comp.m == 0 and len(states) == 1
            and st0.factored):
        cols = np.full(comp.nf, -1, dtype=np.int64)
        cols[keep] = np.arange(len(keep))
        Tall, Tmean = _free_run(st0, U, D, ramp, T, comp.step_s, cols)
        Um = U[w:] - 0.5 * comp.step_s * D[w:] if ramps else U[w:]
        start = np.full(comp.nc, np.nan)
        kc = keep[keep < comp.nc]
        start[kc] = Tall[w, cols[kc]]
        return NodeTrajectory(Tall[w + 1:], Tmean[w:], start, np.zeros(n - w, dtype=np.int64),
                              Um, end_values(Um), comp.G_states, comp.nc, info, columns=cols,
                              names=comp.free)
    Tend, Tmean, Ue, S = _march(comp, states, resp, T, U, D, sched, hsp, csp, sig, keep)
    x_first = Tend[w - 1] if w else T[keep]
    cols = np.full(comp.nf, -1, dtype=np.int64)
    cols[keep] = np.arange(len(keep))
    start = np.full(comp.nc, np.nan)
    kc = keep[keep < comp.nc]
    start[kc] = x_first[cols[kc]]
    return NodeTrajectory(Tend[w:], Tmean[w:], start, S[w:], Ue[w:], end_values(Ue[w:]),
                          comp.G_states, comp.nc, info, columns=cols, names=comp.free)
