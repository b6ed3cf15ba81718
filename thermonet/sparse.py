"""Large networks: a sparse, error-bounded exponential stepper.

For inputs held constant over a step, the exact solution of ``C dT/dt = −L T + E u`` is

.. math::  T(h) = T_{eq} + e^{−h C^{-1} L} (T(0) − T_{eq}),\\qquad L T_{eq} = E u .

The matrix exponential is applied with a rational approximation obtained from the trapezoid
rule on a parabolic Hankel contour (Weideman & Trefethen 2007):
``e^{s} ≈ Σ_k c_k / (z_k − s)`` for ``s ≤ 0``, so that

.. math::  e^{−h C^{-1}L} v ≈ 2\\,\\mathrm{Re} \\sum_{k=1}^{N/2} c_k (z_k C + hL)^{-1} C v ,

one complex sparse LU per pole, factorised once per state and reused every step. The
approximation error is bounded uniformly on the negative real axis (measured bounds in
:data:`CONTOUR_ERROR`), so the step is exact to that bound for any stiffness; massless nodes
(rows with C = 0) are handled by the same formula (their fast modes map to ``r(−∞) = 0``).
Step-mean temperatures follow from the integrated equation ``L T̄ = E u − C ΔT/h``, which
makes the energy balance close to the solver's rounding.

References
----------
.. [1] Weideman, J. A. C., Trefethen, L. N., Parabolic and hyperbolic contours for computing
   the Bromwich integral, Mathematics of Computation 76 (2007) 1341–1356.
.. [2] Trefethen, L. N., Weideman, J. A. C., Schmelzer, T., Talbot quadratures and rational
   approximations, BIT Numerical Mathematics 46 (2006) 653–670.
"""

from __future__ import annotations

import time
import warnings

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla
from scipy.sparse.csgraph import reverse_cuthill_mckee

from . import kernels
from .banded import expm_apply_band, ldl_band, solve_band, to_band
from .compile import Compiled, input_matrix
from .errors import AccuracyWarning, NetworkError

#: Max |r(s) − e^s| over s ≤ 0 for the parabolic contour with N points, measured on
#: 20 000 log-spaced points in [−1e8, −1e−10] ∪ {0} (computed in this project).
#: Largest bandwidth (after reverse Cuthill–McKee) for the banded LDLᵀ path; beyond it SuperLU.
MAX_BANDWIDTH = 64

CONTOUR_ERROR = {12: 7.3e-6, 16: 1.1e-7, 20: 1.6e-9, 24: 2.4e-11, 32: 1.1e-14}


def contour(n_points: int):
    """Poles ``z_k`` and weights ``c_k`` of the upper half of the parabolic contour."""
    N = n_points
    th = np.pi * (2 * np.arange(N) + 1 - N) / N
    z = N * (0.1309 - 0.1194 * th**2 + 0.2500j * th)
    dz = N * (-2 * 0.1194 * th + 0.2500j)
    c = np.exp(z) * dz / (1j * N)
    upper = th > 0
    return z[upper], c[upper]


def points_for(tol: float) -> int:
    """Smallest tabulated N whose error bound is ≤ tol."""
    for N in sorted(CONTOUR_ERROR):
        if CONTOUR_ERROR[N] <= tol:
            return N
    return max(CONTOUR_ERROR)


def laplacian_sparse(comp: Compiled, g: np.ndarray):
    """Sparse ``L_ff`` (CSC) and dense-column ``L_fb`` of the free nodes for conductances g."""
    nf, nb = comp.nf, comp.nb
    a, b = comp.link_a, comp.link_b
    rows = np.concatenate([a, b, a, b])
    cols = np.concatenate([a, b, b, a])
    vals = np.concatenate([g, g, -g, -g])
    L = sp.coo_matrix((vals, (rows, cols)), shape=(nf + nb, nf + nb)).tocsc()
    return L[:nf, :nf].tocsc(), L[:nf, nf:].toarray()


class SparseState:
    """Factorisations for one state: L (real) and z_k C + hL (complex), per pole."""

    def __init__(self, comp: Compiled, g: np.ndarray, n_points: int):
        self.Lff, Lfb = laplacian_sparse(comp, g)
        self.E = sp.csr_matrix(input_matrix(comp, Lfb))
        self.c_full = np.zeros(comp.nf)
        self.c_full[:comp.nc] = comp.C
        Cm = sp.diags(self.c_full)
        h = self.h = comp.step_s
        self.lu_L = spla.splu(self.Lff)
        z, c = contour(n_points)
        self.weights = c
        self.banded = False
        perm = reverse_cuthill_mckee(self.Lff.tocsr(), symmetric_mode=True)
        Lp = self.Lff.tocsr()[perm][:, perm]
        i, j = Lp.nonzero()
        bw = int(np.abs(i - j).max()) if len(i) else 0
        if bw <= MAX_BANDWIDTH:
            self.perm = perm
            cp = self.c_full[perm]
            Lbs, ds = [], []
            for zk in z:
                band = to_band((h * Lp).astype(complex), bw)
                band[0] += zk * cp
                Lb, d = ldl_band(band)
                Lbs.append(Lb)
                ds.append(d)
            self.Lbs, self.ds = np.array(Lbs), np.array(ds)
            self.Lb_real, self.d_real = ldl_band(to_band(Lp, bw))
            # accept the no-pivot factorisation only if it reproduces a random solve
            v = np.random.default_rng(0).standard_normal(comp.nf)
            ok = np.allclose(self._expm_band(v), self._expm_lu(v, z), rtol=1e-9,
                             atol=1e-9 * np.abs(v).max())
            self.banded = bool(ok)
        if not self.banded:
            self.lus = [spla.splu((zk * Cm + h * self.Lff).astype(complex).tocsc()) for zk in z]
        self.bandwidth = bw

    def _expm_lu(self, v, z):
        Cm = sp.diags(self.c_full)
        cv = (self.c_full * v).astype(complex)
        acc = np.zeros(v.shape, dtype=complex)
        for ck, zk in zip(self.weights, z, strict=True):
            lu = spla.splu((zk * Cm + self.h * self.Lff).astype(complex).tocsc())
            acc += ck * lu.solve(cv)
        return 2.0 * acc.real

    def _expm_band(self, v):
        cv = (self.c_full * v)[self.perm]
        out = np.empty_like(v)
        out[self.perm] = expm_apply_band(self.Lbs, self.ds, self.weights, cv)
        return out

    def expm_apply(self, v: np.ndarray) -> np.ndarray:
        """``e^{−hC⁻¹L} v`` (v of length nf; only its capacitive part matters)."""
        if self.banded:
            return self._expm_band(v)
        cv = self.c_full * v
        acc = np.zeros(v.shape, dtype=complex)
        for ck, lu in zip(self.weights, self.lus, strict=True):
            acc += ck * lu.solve(cv.astype(complex))
        return 2.0 * acc.real

    def equilibrium(self, Eu: np.ndarray) -> np.ndarray:
        """Solve ``L T_eq = E u`` [°C]."""
        if self.banded:
            out = np.empty_like(Eu)
            out[self.perm] = solve_band(self.Lb_real, self.d_real, Eu[self.perm])
            return out
        return self.lu_L.solve(Eu)


def run_sparse(comp: Compiled, warmup_steps: int, tol: float = 1e-7):
    """Step a large network with :class:`SparseState`; returns (Trajectory, info)."""
    from .solvers import Trajectory

    t0 = time.perf_counter()
    # The contour error bound holds for the eigenvalues; in node temperatures it is
    # amplified by at most cond(C^{1/2}) = sqrt(C_max/C_min) (the modes are C-orthogonal).
    spread = float(np.sqrt(comp.C.max() / comp.C.min())) if comp.nc else 1.0
    N = points_for(tol / spread)
    if CONTOUR_ERROR[N] * spread > tol:
        warnings.warn(f"method='sparse' cannot meet sparse_tol={tol:g}: with capacitances "
                      f"spanning {comp.C.min():.3g} … {comp.C.max():.3g} J/K its error bound is "
                      f"{CONTOUR_ERROR[N] * spread:.2g}; make nodes of tiny capacitance massless "
                      "(capacitance=0) or use method='exact'", AccuracyWarning, stacklevel=3)
    nsw = len(comp.switch_names)
    needed = sorted({comp.state_id(s, b) for s in range(comp.n_sched) for b in range(1 << nsw)})
    states = {s: SparseState(comp, comp.G_states[s], N) for s in needed}
    t_factor = time.perf_counter() - t0
    m, nb, nsrc, nf = comp.m, comp.nb, comp.nsrc, comp.nf
    pcols = nb + nsrc + np.arange(m)
    # unit responses of thermostat power, per state
    resp = {}
    for s, st in states.items():
        R = np.zeros((nf, m))
        for j in range(m):
            xe = st.equilibrium(st.E[:, [pcols[j]]].toarray().ravel())
            R[:, j] = xe - st.expm_apply(xe)
        if m and (R[comp.thermostat_node, np.arange(m)] <= 0).any():
            raise NetworkError("a thermostat node does not respond to heating within a step")
        resp[s] = R
    w = warmup_steps
    cat = (lambda a: np.concatenate([a[:w], a], axis=0)) if w else (lambda a: a)
    U, sched, hsp, csp, sig = (cat(comp.U), cat(comp.sched_of_step), cat(comp.hsp),
                               cat(comp.csp), cat(comp.signals))
    n = U.shape[0]
    on = comp.switch_initial.copy()
    bits = sum(1 << k for k, v in enumerate(on) if v)
    s = comp.state_id(int(sched[0]), bits)
    u0 = U[0].copy()
    u0[pcols] = 0.0
    st0 = states[s]
    T = st0.equilibrium(st0.E @ u0)
    if m and not (np.isnan(hsp[0]).all() and np.isnan(csp[0]).all()):
        # start warm: thermostats act in the steady state (as solvers.steady_start)
        Xp = np.column_stack([st0.equilibrium(st0.E[:, [c]].toarray().ravel()) for c in pcols])
        P0 = np.zeros(m)
        kernels._control(T[comp.thermostat_node], Xp[comp.thermostat_node], hsp[0], csp[0],
                         comp.qh, comp.qc, P0)
        T = T + Xp @ P0
    for i, name in enumerate(comp.free[:comp.nc]):
        if name in comp.initial:
            T[i] = comp.initial[name]
    Tend = np.zeros((n, nf))
    Tstart = np.zeros((n, nf))
    Ue = np.zeros((n, comp.nu))
    S = np.zeros(n, dtype=np.int64)
    P = np.zeros(m)
    for k in range(n):
        if nsw:
            bits = 0
            for q in range(nsw):
                if on[q] and comp.has_off[q]:
                    on[q] = not kernels._eval_cond(2 * q + 1, comp.terms, comp.term_clause,
                                                   comp.clause_cond, T, sig[k])
                else:
                    on[q] = kernels._eval_cond(2 * q, comp.terms, comp.term_clause,
                                               comp.clause_cond, T, sig[k])
                bits += (1 << q) if on[q] else 0
        s = comp.state_id(int(sched[k]), bits)
        st = states[s]
        u = U[k].copy()
        for q in range(nsw):
            u[nb:nb + nsrc] *= (comp.switch_source_factor[q] if on[q]
                                else comp.switch_source_factor_off[q])
        u[pcols] = 0.0
        xe = st.equilibrium(st.E @ u)
        T1 = xe + st.expm_apply(T - xe)
        if m:
            R = resp[s]
            T0 = T1[comp.thermostat_node]
            M = R[comp.thermostat_node]
            kernels._control(T0, M, hsp[k], csp[k], comp.qh, comp.qc, P)
            T1 = T1 + R @ P
            u[pcols] = P
        Tstart[k] = T
        Tend[k] = T1
        Ue[k] = u
        S[k] = s
        T = T1
    Tend, Tstart, Ue, S = Tend[w:], Tstart[w:], Ue[w:], S[w:]
    Tmean = np.empty_like(Tend)
    h = comp.step_s
    for s in np.unique(S):
        rows = S == s
        st = states[int(s)]
        rhs = (st.E @ Ue[rows].T).T - (Tend[rows] - Tstart[rows]) * st.c_full / h
        Tmean[rows] = st.lu_L.solve(np.ascontiguousarray(rhs.T)).T
    nc = comp.nc
    traj = Trajectory(Tend[:, :nc], Tstart[:, :nc], Ue, S, discrete={})
    traj.free_end = Tend
    traj.free_mean = Tmean
    info = {"contour_points": N, "exp_error_bound": CONTOUR_ERROR[N] * spread,
            "factor_seconds": t_factor}
    return traj, info
