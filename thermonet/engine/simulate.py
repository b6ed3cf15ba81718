"""Solvers: exact zero-order-hold discretisation and the simulation driver.

Method registry (``simulate(..., method=...)``):

``"exact"``
    Exact discretisation of ``C dx/dt = −K x + E u`` for inputs held constant over each step
    (zero-order hold), through the symmetric modal form ``S = C^{-1/2} K C^{-1/2} = V Λ Vᵀ``.
    Exact to rounding for any step; dense, for up to a few thousand capacitive nodes. Each
    discretisation is checked (rows of ``[Φ, Γ_b]`` must sum to one); very stiff networks
    that fail the check are discretised by conservative scaling and doubling instead
    (:func:`zoh_doubling`), which keeps every entry's relative accuracy.
``"sparse"``
    For large networks: the same exact-in-principle step ``x⁺ = x_eq + e^{−hC⁻¹K}(x − x_eq)``
    with the matrix exponential applied by a rational (Carathéodory–Fejér) approximation, one
    sparse LU per pole; the approximation error is bounded and reported.
``"auto"``
    ``"exact"`` up to 3000 capacitive nodes, ``"sparse"`` beyond.

Interval convention: row ``t`` of every result describes the step ``(t − h, t]``;
temperatures are at its end ``t``, flows and powers are means over it.

References
----------
.. [1] Franklin, G. F., Powell, J. D., Workman, M. L., Digital Control of Dynamic Systems,
   3rd ed., Addison-Wesley, 1998, §4.3 (zero-order-hold equivalent of a continuous system).
.. [2] Golub, G. H., Van Loan, C. F., Matrix Computations, 4th ed., 2013, §8.1 and §9.1
   (symmetric eigenproblem; functions of matrices).
"""

from __future__ import annotations

import time
import warnings
from dataclasses import dataclass
from functools import cached_property

import numpy as np

from thermonet.engine import kernels
from thermonet.engine.compile import Compiled, compile_network, reduce_state
from thermonet.errors import NetworkError

AUTO_DENSE_LIMIT = 3000
MODAL_VECTOR_MIN = 150  # capacitive nodes above which free-running runs use modal products


def phi1(x):
    """``(1 − e^{−x})/x`` with its limit 1 at x = 0 (accurate for small x)."""
    x = np.asarray(x, dtype=float)
    out = np.ones_like(x)
    big = x > 1e-8
    out[big] = -np.expm1(-x[big]) / x[big]
    small = ~big
    out[small] = 1 - x[small] / 2
    return out


def phi2(x):
    """``(x − 1 + e^{−x})/x²`` with its limit 1/2 at x = 0 (series for small x).

    For x > 1 it is evaluated as ``(1 − φ₁(x))/x``, which cannot overflow for huge x
    (x² would beyond 1e154) and loses no accuracy there (1 − φ₁ ≥ 0.36).
    """
    x = np.asarray(x, dtype=float)
    out = np.empty_like(x)
    mid = (x > 1e-2) & (x <= 1.0)
    xm = x[mid]
    out[mid] = (xm + np.expm1(-xm)) / xm**2
    big = x > 1.0
    xb = x[big]
    out[big] = (1.0 + np.expm1(-xb) / xb) / xb
    small = x <= 1e-2
    xs = x[small]
    out[small] = 0.5 - xs / 6 + xs**2 / 24 - xs**3 / 120 + xs**4 / 720
    return out


#: Largest isothermal defect max|Φ·1 + Γ_b·1 − 1| accepted from the modal form; beyond it
#: the step is recomputed by :func:`zoh_doubling` (see :func:`discretise_exact`).
MODAL_DEFECT_LIMIT = 1e-11


class Discrete:
    """One state's exact ZOH step: ``x⁺ = Φx + Γu``, mean ``x̄ = Φ̄x + Γ̄u``.

    Built either from the modal data (λ, Q, W) — the dense matrices are then formed on first
    use, so the vectorised modal path for large free-running networks never builds them — or
    from the four matrices directly (``modal`` is then False).

    Attributes
    ----------
    K, E : ndarray
        Reduced conductance matrix [W/K] and input matrix of ``C dx/dt = −Kx + Eu``.
    Yx, Yu : ndarray
        Massless-node temperatures ``y = Yx x + Yu u``.
    C : ndarray
        Capacitances [J/K]; ``h`` the step [s].
    modal : bool
        True when ``lam`` [1/s], ``Q`` and ``W`` hold the modal form.
    how : str
        ``"modal"`` or ``"doubling"`` (see :func:`discretise_exact`).
    """

    def __init__(self, *, K, E, Yx, Yu, C, h, lam=None, Q=None, W=None, Phi=None, Gam=None,
                 Phibar=None, Gambar=None, how="modal"):
        self.K, self.E, self.Yx, self.Yu, self.C, self.h = K, E, Yx, Yu, C, h
        self.lam, self.Q, self.W = lam, Q, W
        self.modal = lam is not None
        self.how = how
        for key, value in (("Phi", Phi), ("Gam", Gam), ("Phibar", Phibar), ("Gambar", Gambar)):
            if value is not None:
                self.__dict__[key] = value   # takes the place of the cached property
        if not self.modal and any(v is None for v in (Phi, Gam, Phibar, Gambar)):
            raise ValueError("Discrete needs either lam, Q, W or all of Phi, Gam, Phibar, "
                             "Gambar")

    @cached_property
    def _x(self):
        return self.lam * self.h

    @cached_property
    def _QC(self):
        return self.Q.T * self.C[None, :]

    @cached_property
    def Phi(self):
        return (self.Q * np.exp(-self._x)) @ self._QC

    @cached_property
    def Gam(self):
        return (self.Q * (self.h * phi1(self._x))) @ self.W

    @cached_property
    def Phibar(self):
        return (self.Q * phi1(self._x)) @ self._QC

    @cached_property
    def Gambar(self):
        return (self.Q * (self.h * phi2(self._x))) @ self.W


def modal_form(K, E, C):
    """Symmetric modal form of ``C dx/dt = −Kx + Eu``: (λ [1/s], Q, W = QᵀE).

    ``S = C^{-1/2} K C^{-1/2} = V Λ Vᵀ`` (LAPACK ``syevd`` through :func:`numpy.linalg.eigh`),
    ``Q = C^{-1/2} V`` so that ``Qᵀ C Q = I`` and ``K Q = C Q Λ``.
    """
    cs = np.sqrt(C)
    S = K / np.outer(cs, cs)
    lam, V = np.linalg.eigh(0.5 * (S + S.T))
    Q = V / cs[:, None]
    return lam, Q, Q.T @ E


def isothermal_defect(lam, Q, W, C, h, nb):
    """``max |Φ·1 + Γ_b·1 − 1|`` of the modal step, in O(n²) without forming Φ.

    When every boundary and node is at the same temperature nothing may change, so the rows
    of ``[Φ, Γ_b]`` sum to one. The modal form meets this to rounding unless the symmetric
    eigensolver's absolute error ``ε‖S‖`` is comparable with the slowest rates, as in
    networks that couple a node of tiny capacitance tightly to heavy ones.
    """
    x = lam * h
    ones_c = Q.T @ C
    row = Q @ (np.exp(-x) * ones_c) + Q @ (h * phi1(x) * W[:, :nb].sum(axis=1))
    return float(np.abs(row - 1.0).max()) if len(row) else 0.0


def zoh_doubling(K, E, C, h, nb):
    r"""ZOH matrices (Φ, Γ, Φ̄, Γ̄) by conservative scaling and doubling, for stiff networks.

    Parameters
    ----------
    K : ndarray (n, n)
        Reduced conductance matrix [W/K] (an M-matrix: off-diagonal ≤ 0).
    E : ndarray (n, nu)
        Input matrix (≥ 0); its first ``nb`` columns are the boundary temperatures.
    C : ndarray (n,)
        Capacitances [J/K], > 0.
    h : float
        Step [s].
    nb : int
        Number of boundary columns of ``E``.

    Returns
    -------
    Phi, Gam, Phibar, Gambar : ndarray

    Notes
    -----
    ``A = −C⁻¹K`` is a generator of heat exchange: its off-diagonal entries and
    ``B = C⁻¹E`` are ≥ 0 and each row of ``[A, B_b]`` sums to zero (a uniform temperature
    is steady). The step is split into ``2^s`` sub-steps with ``‖hA‖/2^s ≤ 1/4``; on one
    sub-step τ the off-diagonal part of ``e^{τA}``, ``J₁ = ∫₀^τ e^{rA} dr`` and
    ``J₂ = ∫₀^τ∫₀^r e^{qA} dq dr`` come from their Taylor series, then ``s`` doublings

    .. math::
        Φ(2τ) = Φ(τ)^2,\quad Γ_b(2τ) = Γ_b(τ) + Φ(τ)Γ_b(τ),\quad
        J_1(2τ) = J_1 + ΦJ_1,\quad J_2(2τ) = J_2 + τJ_1 + ΦJ_2

    add only non-negative numbers. As in the Grassmann–Taksar–Heyman algorithm, the diagonal
    of Φ is never formed by subtraction inside the products: it is recomputed after each
    doubling as ``1 − Σ_{j≠i} Φ_ij − Σ_b Γ_b,ib``. Every entry thus keeps a small *relative*
    error, including the slow rates that the symmetric eigensolver loses when a node of tiny
    capacitance is tightly coupled to heavy ones (stiffness ratios ≳ 1e10). Then
    ``Γ = J₁B`` (boundary columns: the doubled ``Γ_b``), ``Φ̄ = J₁/h``, ``Γ̄ = J₂B/h``.
    The cost is about ``3(s + 5)`` dense products of n × n matrices, so it is used only when
    the modal form fails its check.

    References
    ----------
    .. [1] Van Loan, C. F., Computing integrals involving the matrix exponential, IEEE
       Transactions on Automatic Control 23(3) (1978) 395–404.
    .. [2] Grassmann, W. K., Taksar, M. I., Heyman, D. P., Regenerative analysis and steady
       state distributions for Markov chains, Operations Research 33(5) (1985) 1107–1116.
    .. [3] Higham, N. J., The scaling and squaring method for the matrix exponential
       revisited, SIAM J. Matrix Anal. Appl. 26(4) (2005) 1179–1193.
    """
    n = len(C)
    B = E / C[:, None]
    off = -K / C[:, None]
    np.fill_diagonal(off, 0.0)
    # entries that are zero in exact arithmetic may come out as −1e−30 from the Schur
    # complement; the generator's signs are known, so such rounding is set to zero
    np.maximum(off, 0.0, out=off)
    Bb = np.maximum(B[:, :nb], 0.0)
    rate = off.sum(axis=1) + Bb.sum(axis=1)          # −A_ii [1/s]
    A = off - np.diag(rate)
    norm = 2.0 * float(rate.max()) * h if n else 0.0
    s = max(0, int(np.ceil(np.log2(max(norm, 1e-300) / 0.25))))
    tau = h / 2.0**s
    M = tau * A
    term = np.eye(n)
    P = np.eye(n)
    J1 = np.eye(n)
    J2 = 0.5 * np.eye(n)
    for k in range(1, 40):
        term = term @ M / k
        P += term
        J1 += term / (k + 1)
        J2 += term / ((k + 1) * (k + 2))
        if np.abs(term).max() <= 1e-18:
            break
    J1 *= tau
    J2 *= tau * tau
    np.maximum(J1, 0.0, out=J1)
    np.maximum(J2, 0.0, out=J2)
    Gb = J1 @ Bb

    def conserve(P, Gb):
        np.fill_diagonal(P, 0.0)
        np.maximum(P, 0.0, out=P)
        np.fill_diagonal(P, np.maximum(1.0 - P.sum(axis=1) - Gb.sum(axis=1), 0.0))
        return P

    P = conserve(P, Gb)
    for _ in range(s):
        J2 = J2 + tau * J1 + P @ J2
        J1 = J1 + P @ J1
        Gb = Gb + P @ Gb
        P = conserve(P @ P, Gb)
        tau *= 2.0
    Gam = J1 @ B
    Gam[:, :nb] = Gb
    return P, Gam, J1 / h, (J2 @ B) / h


def discretise_exact(comp: Compiled, g: np.ndarray) -> Discrete:
    """Exact ZOH discretisation for conductances ``g`` [W/K].

    Notes
    -----
    With ``S = C^{-1/2} K C^{-1/2} = V Λ Vᵀ``, ``Q = C^{-1/2} V`` and ``W = Qᵀ E``:

    .. math::
        Φ = Q e^{−Λh} Qᵀ C,\\quad Γ = Q\\,h φ_1(Λh)\\, W,\\quad
        \\bar Φ = Q φ_1(Λh) Qᵀ C,\\quad \\bar Γ = Q\\, h φ_2(Λh)\\, W

    with φ₁(x) = (1 − e^{−x})/x and φ₂(x) = (x − 1 + e^{−x})/x². The step mean satisfies
    ``C(x⁺ − x) = h(−K x̄ + E u)`` exactly, so flows built from x̄ close the balance.

    The modal form is checked by its isothermal defect (:func:`isothermal_defect`); when
    that exceeds :data:`MODAL_DEFECT_LIMIT` (very stiff networks, whose slow rates the
    eigensolver cannot resolve) the four matrices come from :func:`zoh_doubling` instead.
    """
    red = reduce_state(comp, g)
    common = dict(K=red.K, E=red.E, Yx=red.Yx, Yu=red.Yu, C=comp.C, h=comp.step_s)
    if not comp.nc:
        return Discrete(lam=np.zeros(0), Q=np.zeros((0, 0)), W=np.zeros((0, comp.nu)),
                        **common)
    lam, Q, W = modal_form(red.K, red.E, comp.C)
    if lam.min() <= 0:
        raise NetworkError("the network's conductance matrix is singular or indefinite "
                           f"(smallest eigenvalue {lam.min():.3g}); check for nodes "
                           "without a path to a boundary")
    if isothermal_defect(lam, Q, W, comp.C, comp.step_s, comp.nb) <= MODAL_DEFECT_LIMIT:
        return Discrete(lam=lam, Q=Q, W=W, **common)
    Phi, Gam, Phibar, Gambar = zoh_doubling(red.K, red.E, comp.C, comp.step_s, comp.nb)
    return Discrete(Phi=Phi, Gam=Gam, Phibar=Phibar, Gambar=Gambar, how="doubling", **common)


def control_maps(comp: Compiled, d: Discrete):
    """Rows giving controlled-node end temperatures, and the unit-power response matrix."""
    m = comp.m
    Rx, Ru = thermostat_rows(comp, d.Yx, d.Yu)
    pcols = comp.nb + comp.nsrc + np.arange(m)
    M = Rx @ d.Gam[:, pcols] + Ru[:, pcols]
    if m and (np.diag(M) <= 0).any():
        bad = comp.thermostat_names[int(np.argmin(np.diag(M)))]
        raise NetworkError(f"thermostat {bad!r}: its node does not respond to heating "
                           "within a step; attach it to a node with a conductive path")
    return Rx, Ru, M


@dataclass
class Trajectory:
    """Raw stepping output; :class:`thermonet.results.Results` turns it into tables."""

    X: np.ndarray         # (n, nc) end-of-step capacitive states [°C]
    Xstart: np.ndarray    # (n, nc) start-of-step states
    U: np.ndarray         # (n, nu) effective inputs (switched sources, thermostat powers)
    S: np.ndarray         # (n,) state id per step
    discrete: dict        # state id -> Discrete


def thermostat_rows(comp: Compiled, Yx: np.ndarray, Yu: np.ndarray):
    """Rows ``Rx`` (m × nc), ``Ru`` (m × nu) giving each controlled node's temperature."""
    m, nc = comp.m, comp.nc
    Rx = np.zeros((m, nc))
    Ru = np.zeros((m, comp.nu))
    for i, node in enumerate(comp.thermostat_node):
        if node < nc:
            Rx[i, node] = 1.0
        else:
            Rx[i] = Yx[node - nc]
            Ru[i] = Yu[node - nc]
    return Rx, Ru


def steady_start(K, E, Rx, Ru, u0, pcols, hsp0, csp0, qh, qc):
    """Steady state [°C] of constant inputs ``u0``, with the thermostats acting.

    Solves ``K x = E u`` where the thermostat powers ``P`` in ``u[pcols]`` hold each
    controlled node at its first heating/cooling setpoint when the free steady state lies
    outside them, within the capacity limits (the same projected Gauss–Seidel as each step,
    on the steady-state response ``Rx K⁻¹ E_P + Ru_P``). A heated building thus starts warm
    rather than at its free-running temperature, so the warm-up need not heat up its fabric.
    """
    u = np.array(u0, dtype=float)
    u[pcols] = 0.0
    x = np.linalg.solve(K, E @ u)
    m = len(pcols)
    if m and not (np.isnan(hsp0).all() and np.isnan(csp0).all()):
        Xp = np.linalg.solve(K, E[:, pcols])          # steady response to 1 W at each node
        T0 = Rx @ x + Ru @ u
        Mss = Rx @ Xp + Ru[:, pcols]
        P = np.zeros(m)
        kernels.control_powers(T0, Mss, hsp0, csp0, qh, qc, P)
        x = x + Xp @ P
    return x


def initial_state(comp: Compiled, d: Discrete, u0: np.ndarray, names, hsp0=None,
                  csp0=None) -> np.ndarray:
    """Start state [°C]: steady state of the first step's inputs, then user overrides.

    With ``hsp0``/``csp0`` (first setpoints [°C], NaN = none) the thermostats act in that
    steady state (:func:`steady_start`); without them they are off.
    """
    if not comp.nc:
        return np.zeros(0)
    pcols = comp.nb + comp.nsrc + np.arange(comp.m)
    if hsp0 is None:
        hsp0 = csp0 = np.full(comp.m, np.nan)
    Rx, Ru = thermostat_rows(comp, d.Yx, d.Yu)
    x0 = steady_start(d.K, d.E, Rx, Ru, u0, pcols, hsp0, csp0, comp.qh, comp.qc)
    for i, name in enumerate(names[:comp.nc]):
        if name in comp.initial:
            x0[i] = comp.initial[name]
    return x0


def _warm_inputs(comp: Compiled, w: int):
    cat = (lambda a: np.concatenate([a[:w], a], axis=0)) if w else (lambda a: a)
    return (cat(comp.U), cat(comp.sched_of_step), cat(comp.hsp), cat(comp.csp),
            cat(comp.signals))


def run_exact(comp: Compiled, warmup_steps: int, kernel: str = "auto", *, x0=None,
              switch_state=None, disc=None) -> Trajectory:
    """Step the network with the exact ZOH discretisation (one cache entry per state).

    ``x0`` (capacitive start state) and ``switch_state`` continue an earlier run; ``disc``
    passes already discretised states (state id -> :class:`Discrete`).
    """
    needed = sorted({comp.state_id(s, b) for s in range(comp.n_sched)
                     for b in range(1 << len(comp.switch_names))})
    disc = disc if disc is not None else {}
    for s in needed:
        if s not in disc:
            disc[s] = discretise_exact(comp, comp.G_states[s])
    ns = comp.n_states
    nc, m, nu = comp.nc, comp.m, comp.nu
    if ns == 1 and m == 0 and nc > MODAL_VECTOR_MIN and x0 is None and disc[0].modal:
        U = _warm_inputs(comp, warmup_steps)[0]
        return _run_modal_vectorised(comp, disc[0], U, warmup_steps)
    na = comp.nf - nc
    Phi = np.zeros((ns, nc, nc))
    Gam = np.zeros((ns, nc, nu))
    Rx = np.zeros((ns, m, nc))
    Ru = np.zeros((ns, m, nu))
    M = np.zeros((ns, m, m))
    Yx = np.zeros((ns, na, nc))
    Yu = np.zeros((ns, na, nu))
    for s, d in disc.items():
        Phi[s], Gam[s], Yx[s], Yu[s] = d.Phi, d.Gam, d.Yx, d.Yu
        Rx[s], Ru[s], M[s] = control_maps(comp, d)
    U, sched, hsp, csp, sig = _warm_inputs(comp, warmup_steps)
    sw0 = comp.switch_initial if switch_state is None else np.asarray(switch_state, bool)
    bits0 = sum(1 << k for k, v in enumerate(sw0) if v)
    s0 = comp.state_id(int(sched[0]), bits0)
    u0 = U[0].copy()
    u0[comp.nb + comp.nsrc:] = 0.0
    if x0 is None:
        x0 = initial_state(comp, disc[s0], u0, comp.free, hsp[0], csp[0])
    n = U.shape[0]
    X = np.zeros((n, nc))
    P = np.zeros((n, m))
    S = np.zeros(n, dtype=np.int64)
    Ue = np.zeros((n, nu))
    use_numba = kernel == "numba" or (kernel == "auto" and kernels.HAVE_NUMBA)
    if kernel not in ("auto", "numba", "numpy"):
        raise ValueError(f"kernel must be 'auto', 'numba' or 'numpy', got {kernel!r}")
    fn = kernels.step_loop_numba if use_numba else kernels.step_loop
    fn(Phi, Gam, Rx, Ru, M, Yx, Yu, x0, U, sched.astype(np.int64), hsp, csp, comp.qh, comp.qc,
       comp.switch_source_factor, comp.switch_source_factor_off,
       sw0.copy(), comp.has_off, comp.terms,
       comp.term_clause, comp.clause_cond, sig, comp.nb, X, P, S, Ue)
    Xstart = np.vstack([x0[None, :], X[:-1]])
    w = warmup_steps
    traj = Trajectory(X[w:], Xstart[w:], Ue[w:], S[w:], disc)
    traj.final_switch_state = _switch_state_after(comp, S[-1]) if len(S) else sw0
    return traj


def _switch_state_after(comp: Compiled, state_id: int) -> np.ndarray:
    bits = int(state_id) % (1 << len(comp.switch_names))
    return np.array([(bits >> k) & 1 == 1 for k in range(len(comp.switch_names))], bool)


def _run_modal_vectorised(comp: Compiled, d: Discrete, U: np.ndarray, w: int) -> Trajectory:
    """Free-running single-state network: step in modal coordinates, all inputs at once.

    ``z_k = e^{−λh} z_{k−1} + hφ₁(λh) W u_k`` is a diagonal recursion; inputs and outputs are
    mapped with two matrix products (BLAS), so large networks cost little more than the
    products ``U Wᵀ`` and ``Z Qᵀ``.
    """
    h = comp.step_s
    x = d.lam * h
    a = np.exp(-x)
    WU = U @ d.W.T                                   # (n, nc) modal inputs
    x0 = initial_state(comp, d, U[0], comp.free)
    z0 = d.Q.T @ (comp.C * x0)
    Z = kernels.modal_recursion(a, WU * (h * phi1(x)), z0)
    Zstart = np.vstack([z0[None, :], Z[:-1]])
    Zbar = Zstart * phi1(x) + WU * (h * phi2(x))
    X = Z[w:] @ d.Q.T
    traj = Trajectory(X, np.vstack([(Zstart[w] @ d.Q.T)[None, :], X[:-1]]), U[w:].copy(),
                      np.zeros(len(X), dtype=np.int64), {0: d})
    traj.modal_mean = (Zbar[w:], d.Q)  # x̄ = Z̄ Qᵀ, formed only if flows are asked for
    return traj


def run_relinearised(net, comp: Compiled, w: int, kernel: str, freq: str):
    """Run period by period, re-linearising radiation links at each period start.

    Returns the joined trajectory and a copy of ``comp`` whose ``G_states`` hold every
    (period linearisation × state) combination that was used.
    """
    import copy

    import pandas as pd

    from thermonet.network import radiation_conductance

    rad = [i for i, l in enumerate(net.links.values()) if l.kind == "radiation"]
    links = list(net.links.values())
    n = len(comp.index)
    mid = comp.index - pd.Timedelta(seconds=comp.step_s / 2)
    groups = pd.Series(np.arange(n), index=mid).resample(freq)
    chunks = [g.to_numpy() for _, g in groups if len(g)]
    ns = comp.n_states
    keys: dict = {}
    G_all, parts, disc_all = [], [], {}
    x, sw = None, None
    temps = None
    if w:  # lead-in at the reference linearisation, then carry its end state
        chunks = [np.arange(min(w, n))] + chunks
    for j, rows in enumerate(chunks):
        if temps is None:
            tm = [links[i].params["reference_temperature"] for i in rad]
        else:
            tm = [0.5 * (temps[links[i].a] + temps[links[i].b]) for i in rad]
        key = tuple(round(2 * t) / 2 for t in tm)
        if key not in keys:
            keys[key] = len(keys)
            G = comp.G_states.copy()
            for i, t in zip(rad, key, strict=True):
                p = dict(links[i].params)
                p["reference_temperature"] = t
                G[:, i] = radiation_conductance(
                    p["area"], p["emissivity_a"], p["emissivity_b"], p["view_factor"],
                    area_b=p["area_b"], reference_temperature=t) * (
                    comp.G_states[:, i] / comp.G_states[0, i] if comp.G_states[0, i] else 1.0)
            G_all.append(G)
        kid = keys[key]
        sub = copy.copy(comp)
        sub.G_states = G_all[kid]
        sub.index = comp.index[rows]
        for name in ("U", "sched_of_step", "hsp", "csp", "signals"):
            setattr(sub, name, getattr(comp, name)[rows])
        cache = {s - kid * ns: d for s, d in disc_all.items() if s // ns == kid}
        tr = run_exact(sub, 0, kernel, x0=x, switch_state=sw, disc=cache)
        for s, d in tr.discrete.items():
            disc_all[kid * ns + s] = d
        tr.S = tr.S + kid * ns
        if not (w and j == 0):
            parts.append(tr)
        x, sw = tr.X[-1], tr.final_switch_state
        from thermonet.results import Results

        t_end = Results(net, sub, tr, {}).temperatures.iloc[-1]
        temps = t_end.to_dict()
    out = copy.copy(comp)
    out.G_states = np.vstack(G_all)
    traj = Trajectory(np.vstack([p.X for p in parts]), np.vstack([p.Xstart for p in parts]),
                      np.vstack([p.U for p in parts]), np.concatenate([p.S for p in parts]),
                      disc_all)
    return traj, out


METHODS = ("auto", "exact", "sparse")


def _warn_ignored(method: str, kernel: str, sparse_tol) -> None:
    """Warn about options the chosen method does not use (nothing is silently ignored)."""
    if kernel not in ("auto", "numba", "numpy"):
        raise ValueError(f"kernel must be 'auto', 'numba' or 'numpy', got {kernel!r}")
    if sparse_tol is not None:
        if not (isinstance(sparse_tol, (int, float)) and 0 < sparse_tol < 1):
            raise ValueError(f"sparse_tol must be a number in (0, 1), got {sparse_tol!r}")
        if method == "exact":
            warnings.warn("sparse_tol= is ignored by method='exact', which is exact to "
                          "rounding; drop it or pass method='sparse'", UserWarning,
                          stacklevel=3)
    if kernel != "auto" and method == "sparse":
        warnings.warn(f"kernel={kernel!r} is ignored by method='sparse' (it has its own "
                      "loop); drop it or pass method='exact'", UserWarning, stacklevel=3)


def simulate(net, weather, *, step=None, method: str = "auto", warmup_days: float = 14.0,
             kernel: str = "auto", sparse_tol: float | None = None,
             relinearise: str | None = None):
    """Simulate a network over the weather's time axis.

    Parameters
    ----------
    net : Network
    weather : pandas.DataFrame
        Tz-aware, regular index; the columns the boundaries name (pvlib names, e.g.
        ``temp_air`` [°C]). Each row covers the interval ending at its label.
    step : str or Timedelta, optional
        Time step (default: the weather's). A shorter step that divides the weather's holds
        each weather row over its sub-steps.
    method : {"auto", "exact", "sparse"}
        See the module docstring.
    warmup_days : float, default 14
        Lead-in [days]: the first ``warmup_days`` of inputs are run first, so the initial
        state does not bias results. The run starts from the steady state of the first
        step's inputs with the thermostats acting (a heated building starts at its
        setpoint, :func:`steady_start`), then any node's ``initial=`` temperature.
    kernel : {"auto", "numba", "numpy"}
        Compiled or plain-numpy stepping loop (same numbers).
    sparse_tol : float, optional
        Accuracy target of the rational exponential in ``method="sparse"``, relative to each
        step's departure from equilibrium (default 1e-6). Ignored, with a warning, by
        ``method="exact"``.
    relinearise : str, optional
        Pandas offset alias (``"D"``, ``"W"``, ``"MS"``): at the start of each such period,
        every radiation link's h_r = 4σT_m³ is recomputed from the mean of its two nodes'
        temperatures (rounded to 0.5 K so discretisations are cached and reused). None
        (default): each link keeps its ``reference_temperature``. ``method="exact"`` only.

    Returns
    -------
    Results
    """
    from thermonet.results import Results

    if method not in METHODS:
        raise ValueError(f"method must be one of {METHODS}, got {method!r}")
    if not (isinstance(warmup_days, (int, float)) and np.isfinite(warmup_days)
            and warmup_days >= 0):
        raise ValueError(f"warmup_days must be a finite number ≥ 0 [days], got {warmup_days!r}")
    t0 = time.perf_counter()
    comp = compile_network(net, weather, step=step)
    n = len(comp.index)
    w = min(int(round(warmup_days * 86400.0 / comp.step_s)), n)
    if method == "auto":
        method = "exact" if comp.nc <= AUTO_DENSE_LIMIT else "sparse"
    _warn_ignored(method, kernel, sparse_tol)
    info = {"method": method, "steps": n, "warmup_steps": w, "step_s": comp.step_s,
            "states": comp.n_states, "kernel": kernel}
    if relinearise is not None:
        if method != "exact":
            raise ValueError("relinearise= works with method='exact'; pass method='exact'")
        traj, comp = run_relinearised(net, comp, w, kernel, relinearise)
        info["relinearise"] = relinearise
        info["states"] = comp.n_states
    elif method == "exact":
        traj = run_exact(comp, w, kernel)
    else:
        from thermonet.engine.sparse import run_sparse

        traj, extra = run_sparse(comp, w, tol=1e-6 if sparse_tol is None else sparse_tol)
        info.update(extra)
    res = Results(net, comp, traj, info)
    info["seconds"] = time.perf_counter() - t0
    return res
