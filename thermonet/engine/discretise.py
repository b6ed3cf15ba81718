"""Exact zero-order-hold discretisation of every variant and state, on a leading variant axis.

For conductances ``G`` of one state, the network's Laplacian gives
``C dx/dt = −K x + E u`` once the massless nodes are eliminated (Schur complement,
``y = Yx x + Yu u``). With inputs held over a step of length h [s] the exact step is

.. math::
    x^+ = Φ x + Γ u,\\qquad \\bar x = \\bar Φ x + \\bar Γ u

(end of step and step mean). Through the symmetric modal form
``S = C^{-1/2} K C^{-1/2} = V Λ Vᵀ``, ``Q = C^{-1/2} V`` (so ``Qᵀ C Q = I``), ``W = Qᵀ E``:

.. math::
    Φ = Q e^{−Λh} Qᵀ C,\\quad Γ = Q\\,h φ_1(Λh)\\, W,\\quad
    \\bar Φ = Q φ_1(Λh) Qᵀ C,\\quad \\bar Γ = Q\\, h φ_2(Λh)\\, W

with φ₁(x) = (1 − e^{−x})/x and φ₂(x) = (x − 1 + e^{−x})/x². The step mean satisfies
``C(x⁺ − x) = h(−K x̄ + E u)`` exactly, so flows built from x̄ close the balance.

Each state's modal form is checked by its isothermal defect (rows of ``[Φ, Γ_b]`` must sum
to one, :data:`MODAL_DEFECT_LIMIT`). Very stiff networks, whose slow rates the eigensolver
cannot resolve, fail it; those states get the four matrices from conservative scaling and
doubling (:func:`zoh_doubling`) and are stepped densely.

One function, :func:`discretise`, serves a single simulation (one variant) and a batch.

References
----------
.. [1] Franklin, G. F., Powell, J. D., Workman, M. L., Digital Control of Dynamic Systems,
   3rd ed., Addison-Wesley, 1998, §4.3 (zero-order-hold equivalent of a continuous system).
.. [2] Golub, G. H., Van Loan, C. F., Matrix Computations, 4th ed., 2013, §8.1 and §9.1
   (symmetric eigenproblem; functions of matrices).
.. [3] Strang, G., Computational Science and Engineering, Wellesley-Cambridge, 2007, §2.4
   (graph Laplacians; elimination of algebraic nodes = Schur complement).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp

from thermonet.errors import NetworkError

#: Largest isothermal defect max|Φ·1 + Γ_b·1 − 1| accepted from the modal form; beyond it
#: the state is recomputed by :func:`zoh_doubling`.
MODAL_DEFECT_LIMIT = 1e-12


def phi1(x):
    """``(1 − e^{−x})/x`` with its limit 1 at x = 0 (accurate for small x).

    Parameters
    ----------
    x : array_like
        Dimensionless rate × step, ≥ 0.
    """
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

    Parameters
    ----------
    x : array_like
        Dimensionless rate × step, ≥ 0.
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


def phi3(x):
    """``(x²/2 − x + 1 − e^{−x})/x³`` with its limit 1/6 at x = 0 (series for small x).

    The step mean of the response to an input rising linearly over the step (first-order
    hold); for x > 1 it is evaluated as ``(1/2 − φ₂(x))/x`` (no overflow, no cancellation).

    Parameters
    ----------
    x : array_like
        Dimensionless rate × step, ≥ 0.
    """
    x = np.asarray(x, dtype=float)
    out = np.empty_like(x)
    big = x > 0.5
    out[big] = (0.5 - phi2(x[big])) / x[big]
    xs = x[~big]
    out[~big] = (1 / 6 - xs / 24 + xs**2 / 120 - xs**3 / 720 + xs**4 / 5040 - xs**5 / 40320
                 + xs**6 / 362880)
    return out


# ================================================================================ Laplacian
def laplacian_coo(st, g: np.ndarray):
    """Rows, columns and values of the Laplacian of conductances ``g`` [W/K] (duplicates summed
    by the consumer), over the points ``free + boundaries`` of structure ``st``.

    Parameters
    ----------
    st : Structure
        The structure (link ends ``link_a``, ``link_b`` index ``free + boundaries``).
    g : ndarray (nl,) or (..., nl)
        Link conductances [W/K]; leading axes are concatenated along the last one.

    Returns
    -------
    rows, cols : ndarray of int (4·nl,)
        Point indices of each entry.
    vals : ndarray (..., 4·nl)
        Entry values [W/K] (``+g`` on the diagonal, ``−g`` off it).
    """
    a, b = st.link_a, st.link_b
    rows = np.concatenate([a, b, a, b])
    cols = np.concatenate([a, b, b, a])
    vals = np.concatenate([g, g, -g, -g], axis=-1)
    return rows, cols, vals


def laplacian_dense(st, G: np.ndarray) -> np.ndarray:
    """Dense Laplacians (..., npts, npts) of a stack of conductance rows ``G`` (..., nl) [W/K].

    Entries are summed in link order (as :func:`numpy.add.at` would), for every stacked row
    at once.

    Parameters
    ----------
    st : Structure
        The structure (npts = nf + nb points: free nodes, then boundaries).
    G : ndarray (..., nl)
        Link conductances [W/K], any leading axes (e.g. (V, ns, nl)).

    Returns
    -------
    ndarray (..., npts, npts)
        Laplacians [W/K].
    """
    npts = st.nf + st.nb
    lead = G.shape[:-1]
    flat = G.reshape(-1, G.shape[-1])
    nrow = flat.shape[0]
    a, b = st.link_a, st.link_b
    lin = np.concatenate([a * npts + a, b * npts + b, a * npts + b, b * npts + a])
    idx = (np.arange(nrow)[:, None] * (npts * npts) + lin[None, :]).ravel()
    vals = np.concatenate([flat, flat, -flat, -flat], axis=1).ravel()
    L = np.bincount(idx, weights=vals, minlength=nrow * npts * npts)
    return L.reshape(lead + (npts, npts))


def laplacian_sparse(st, g: np.ndarray):
    """Sparse ``L_ff`` (CSC) and dense ``L_fb`` of the free nodes for conductances ``g``.

    Parameters
    ----------
    st : Structure
        The structure (nf free nodes, nb boundaries).
    g : ndarray (nl,)
        Link conductances of one state [W/K].

    Returns
    -------
    L_ff : scipy.sparse.csc_matrix (nf, nf)
        Free–free block of the Laplacian [W/K].
    L_fb : ndarray (nf, nb)
        Free–boundary block [W/K].
    """
    nf, nb = st.nf, st.nb
    rows, cols, vals = laplacian_coo(st, g)
    L = sp.coo_matrix((vals, (rows, cols)), shape=(nf + nb, nf + nb)).tocsc()
    return L[:nf, :nf].tocsc(), L[:nf, nf:].toarray()


def input_matrix(st, L_fb: np.ndarray) -> np.ndarray:
    """``E`` (..., nf, nu): heat into free nodes per unit input (−L_fb for boundary temps).

    Parameters
    ----------
    st : Structure
        The structure (boundaries, sources and thermostats give the nu input columns).
    L_fb : ndarray (..., nf, nb)
        Free–boundary block of the Laplacian [W/K].

    Returns
    -------
    ndarray (..., nf, nu)
        Boundary columns [W/K] (heat per kelvin of boundary temperature); source and
        thermostat columns are 1 at their node (heat per watt, dimensionless).
    """
    lead = L_fb.shape[:-2]
    E = np.zeros(lead + (st.nf, st.nu))
    E[..., :st.nb] = -L_fb
    for j, node in enumerate(st.source_node):
        E[..., node, st.nb + j] = 1.0
    for j, node in enumerate(st.thermostat_node):
        E[..., node, st.nb + st.nsrc + j] = 1.0
    return E


def reduce(st, G: np.ndarray):
    """Eliminate the massless nodes exactly: ``K, E, Yx, Yu`` for conductance rows ``G``.

    Parameters
    ----------
    st : Structure
    G : ndarray (..., nl)
        Link conductances [W/K].

    Returns
    -------
    K : ndarray (..., nc, nc)
        Reduced conductance matrix [W/K], symmetrised.
    E : ndarray (..., nc, nu)
        Reduced input matrix.
    Yx, Yu : ndarray (..., na, nc), (..., na, nu)
        Massless-node temperatures ``y = Yx x + Yu u``.
    """
    nf, nc = st.nf, st.nc
    L = laplacian_dense(st, G)
    Lff, Lfb = L[..., :nf, :nf], L[..., :nf, nf:]
    E = input_matrix(st, Lfb)
    Lcc, Lca = Lff[..., :nc, :nc], Lff[..., :nc, nc:]
    Lac, Laa = Lff[..., nc:, :nc], Lff[..., nc:, nc:]
    Ec, Ea = E[..., :nc, :], E[..., nc:, :]
    lead = G.shape[:-1]
    if st.na:
        Yx = -np.linalg.solve(Laa, Lac)
        Yu = np.linalg.solve(Laa, Ea)
        K = Lcc + Lca @ Yx
        Er = Ec + (-Lca) @ Yu
    else:
        Yx = np.zeros(lead + (0, nc))
        Yu = np.zeros(lead + (0, st.nu))
        K, Er = Lcc, Ec
    K = 0.5 * (K + np.swapaxes(K, -1, -2))
    return K, Er, Yx, Yu


def modal_form(K, E, C):
    """Symmetric modal form of ``C dx/dt = −Kx + Eu``: (λ [1/s], Q, W = QᵀE), stacked.

    ``S = C^{-1/2} K C^{-1/2} = V Λ Vᵀ`` (LAPACK ``syevd`` through :func:`numpy.linalg.eigh`),
    ``Q = C^{-1/2} V`` so that ``Qᵀ C Q = I`` and ``K Q = C Q Λ``.

    Parameters
    ----------
    K : ndarray (..., nc, nc)
        Reduced conductance matrices [W/K].
    E : ndarray (..., nc, nu)
        Reduced input matrices.
    C : ndarray (..., nc)
        Capacitances [J/K], broadcastable against the leading axes of K.
    """
    cs = np.sqrt(C)
    S = K / (cs[..., :, None] * cs[..., None, :])
    lam, V = np.linalg.eigh(0.5 * (S + np.swapaxes(S, -1, -2)))
    Q = V / cs[..., :, None]
    return lam, Q, np.swapaxes(Q, -1, -2) @ E


def isothermal_defect(lam, Q, W, C, h, nb):
    """``max |Φ·1 + Γ_b·1 − 1|`` of modal steps (..., per state), without forming Φ.

    When every boundary and node is at the same temperature nothing may change, so the rows
    of ``[Φ, Γ_b]`` sum to one. The modal form meets this to rounding unless the symmetric
    eigensolver's absolute error ``ε‖S‖`` is comparable with the slowest rates, as in
    networks that couple a node of tiny capacitance tightly to heavy ones.

    Parameters
    ----------
    lam, Q, W : ndarray
        Modal form (see :func:`modal_form`).
    C : ndarray (..., nc)
        Capacitances [J/K].
    h : float
        Step [s].
    nb : int
        Number of boundary columns of W.
    """
    x = lam * h
    ones_c = np.einsum("...ji,...j->...i", Q, C)
    vec = np.exp(-x) * ones_c + h * phi1(x) * W[..., :nb].sum(axis=-1)
    row = np.einsum("...ij,...j->...i", Q, vec)
    return np.abs(row - 1.0).max(axis=-1, initial=0.0)


def zoh_doubling(K, E, C, h, nb):
    r"""ZOH matrices (Φ, Γ, Φ̄, Γ̄, Γ₃) by conservative scaling and doubling, for stiff networks.

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
    Phi, Gam, Phibar, Gambar, Gam3 : ndarray
        ``Γ₃ = J₃B/h²`` is the step mean of the response to an input rising linearly from
        0 to 1 over the step (first-order hold).

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
    ``Γ = J₁B`` (boundary columns: the doubled ``Γ_b``), ``Φ̄ = J₁/h``, ``Γ̄ = J₂B/h``; the
    third integral ``J₃ = ∫₀^h e^{sA}(h − s)²/2 ds`` doubles as
    ``J₃(2τ) = J₃ + τJ₂ + τ²J₁/2 + ΦJ₃`` and gives ``Γ₃ = J₃B/h²``.
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
    J3 = np.eye(n) / 6.0
    for k in range(1, 40):
        term = term @ M / k
        P += term
        J1 += term / (k + 1)
        J2 += term / ((k + 1) * (k + 2))
        J3 += term / ((k + 1) * (k + 2) * (k + 3))
        if np.abs(term).max() <= 1e-18:
            break
    J1 *= tau
    J2 *= tau * tau
    J3 *= tau**3
    np.maximum(J1, 0.0, out=J1)
    np.maximum(J2, 0.0, out=J2)
    np.maximum(J3, 0.0, out=J3)
    Gb = J1 @ Bb

    def conserve(P, Gb):
        np.fill_diagonal(P, 0.0)
        np.maximum(P, 0.0, out=P)
        np.fill_diagonal(P, np.maximum(1.0 - P.sum(axis=1) - Gb.sum(axis=1), 0.0))
        return P

    P = conserve(P, Gb)
    for _ in range(s):
        J3 = J3 + tau * J2 + 0.5 * tau * tau * J1 + P @ J3
        J2 = J2 + tau * J1 + P @ J2
        J1 = J1 + P @ J1
        Gb = Gb + P @ Gb
        P = conserve(P @ P, Gb)
        tau *= 2.0
    Gam = J1 @ B
    Gam[:, :nb] = Gb
    return P, Gam, J1 / h, (J2 @ B) / h, (J3 @ B) / (h * h)


# ================================================================================ discretise
@dataclass
class Discretised:
    """Exact ZOH steps of V variants (axis 0) × ns states (axis 1) of one structure.

    Attributes
    ----------
    h : float
        Step [s].
    nb : int
        Number of boundaries (the first ``nb`` input columns are boundary temperatures).
    C : ndarray (V, nc)
        Capacitances [J/K].
    K, E, Yx, Yu : ndarray
        Reduced system per variant and state (see :func:`reduce`).
    lam, Q, W : ndarray
        Modal form per variant and state (rates [1/s]).
    dense : ndarray (V, ns) of bool
        States whose modal form failed its check; their matrices are in ``dense_mats``.
    dense_mats : dict
        ``(v, s) → (Φ, Γ, Φ̄, Γ̄, Γ₃)`` from :func:`zoh_doubling`.
    errors : list
        Per variant: None, or the NetworkError that makes it unusable.
    """

    h: float
    nb: int
    C: np.ndarray
    K: np.ndarray
    E: np.ndarray
    Yx: np.ndarray
    Yu: np.ndarray
    lam: np.ndarray
    Q: np.ndarray
    W: np.ndarray
    dense: np.ndarray
    dense_mats: dict = field(default_factory=dict)
    errors: list = field(default_factory=list)

    def matrices(self, v: int, s: int):
        """Dense (Φ, Γ, Φ̄, Γ̄, Γ₃) of variant v, state s (from the modal form if needed).

        Parameters
        ----------
        v : int
            Variant index (axis 0).
        s : int
            State id (axis 1).

        Returns
        -------
        Phi, Gam, Phibar, Gambar, Gam3 : ndarray (nc, nc), (nc, nu), (nc, nc), (nc, nu),
            (nc, nu)
            End-of-step and step-mean maps of the state and the inputs (see the module
            docstring); ``Γ₃`` is the step mean of an input rising linearly from 0 to 1.
        """
        if self.dense[v, s]:
            return self.dense_mats[(v, s)]
        x = self.lam[v, s] * self.h
        Q, W = self.Q[v, s], self.W[v, s]
        QC = Q.T * self.C[v][None, :]
        e1 = phi1(x)
        return ((Q * np.exp(-x)) @ QC, (Q * (self.h * e1)) @ W, (Q * e1) @ QC,
                (Q * (self.h * phi2(x))) @ W, (Q * (self.h * phi3(x))) @ W)


def discretise(st, C: np.ndarray, G: np.ndarray, h: float) -> Discretised:
    """Exact ZOH discretisation of every variant and state (see the module docstring).

    Parameters
    ----------
    st : Structure
        The group's structure.
    C : ndarray (V, nc)
        Capacitances [J/K].
    G : ndarray (V, ns, nl)
        Link conductances per state [W/K].
    h : float
        Step [s].

    Returns
    -------
    Discretised
        A variant whose conductance matrix is singular carries a NetworkError in
        ``errors`` (the others are usable).
    """
    V, ns, _ = G.shape
    nc = st.nc
    K, E, Yx, Yu = reduce(st, G)
    errors: list = [None] * V
    dense = np.zeros((V, ns), dtype=bool)
    mats: dict = {}
    if nc:
        lam, Q, W = modal_form(K, E, C[:, None, :])
        lmin = lam.min(axis=(1, 2))
        for v in np.flatnonzero(~(lmin > 0)):
            errors[v] = NetworkError(
                "the network's conductance matrix is singular or indefinite (smallest "
                f"eigenvalue {lmin[v]:.3g}); check for nodes without a path to a boundary")
        defect = isothermal_defect(lam, Q, W, C[:, None, :], h, st.nb)
        for v, s in zip(*np.nonzero(defect > MODAL_DEFECT_LIMIT), strict=True):
            if errors[v] is None:
                dense[v, s] = True
                mats[(v, s)] = zoh_doubling(K[v, s], E[v, s], C[v], h, st.nb)
    else:
        lam = np.zeros((V, ns, 0))
        Q = np.zeros((V, ns, 0, 0))
        W = np.zeros((V, ns, 0, st.nu))
    return Discretised(h=h, nb=st.nb, C=C, K=K, E=E, Yx=Yx, Yu=Yu, lam=lam, Q=Q, W=W,
                       dense=dense, dense_mats=mats, errors=errors)


def time_constants(st, C: np.ndarray, g: np.ndarray) -> np.ndarray:
    """Time constants τ_k = 1/λ_k [s] of ``K v = λ C v`` (massless nodes eliminated), ascending.

    Parameters
    ----------
    st : Structure
    C : ndarray (nc,)
        Capacitances [J/K].
    g : ndarray (nl,)
        Link conductances [W/K] of one state.

    References
    ----------
    .. [1] Incropera, F. P. et al., Fundamentals of Heat and Mass Transfer, 6th ed., 2007,
       §5.2 (lumped capacitance: τ = C/G for one node).
    """
    K, _, _, _ = reduce(st, g[None, :])
    if not st.nc:
        return np.zeros(0)
    lam = modal_form(K[0], np.zeros((st.nc, 0)), C)[0]
    return np.sort(1.0 / lam)
