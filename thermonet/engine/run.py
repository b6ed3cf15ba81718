"""Run a group of variants of one structure through the stepping kernel.

The one path from compiled numbers to stepped states, for a single simulation (one variant,
hourly traces kept) and for a batch (many variants, sums over the reported period):

1. :class:`Bank` — the inputs of the group: every time series once (warm-up rows first, the
   first ``warm`` rows repeated), constants as numbers per variant;
2. :func:`discretise` — exact steps of every variant and state;
3. :func:`start_states` — the steady start of every variant, thermostats acting;
4. :func:`operators` — the kernel's arrays (modal coordinates, folded constants, observed
   rows);
5. :func:`step_group` — the compiled kernel, or the numpy reference
   (:func:`thermonet.engine.kernels.step_reference`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numba
import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from thermonet.engine import kernels
from thermonet.engine.discretise import Discretised, phi1, phi2
from thermonet.engine.reuse import discretise_reused
from thermonet.engine.start import apply_initial, steady_start, thermostat_rows
from thermonet.errors import NetworkError

KERNELS = ("auto", "numba", "numpy")

#: Capacitive nodes up to which a single run that finds the compiled kernel not yet built in
#: this process (a fresh install: numba compiles it, ~15–20 s) is stepped by the numpy
#: reference instead while the kernel compiles in a background thread.
WARM_START_NODES = 300

_COMPILING: list = []     # the background compile thread, once started

#: Sums the kernel accumulates over the reported steps (see :class:`GroupRun`).
SUMS = ("heat", "cool", "peak_h", "peak_c", "hrs", "dgh", "tstat", "zs_sum", "us_sum",
        "up_sum", "cnt")

#: Capacitive nodes up to which a run that keeps hourly traces is stepped in node
#: coordinates (dense exact steps, nc² operations a step, no mapping back); larger networks and
#: batches that keep only sums step in modal coordinates (nc operations a step per input).
NODES_IN_KERNEL = 64


# ===================================================================================== bank
@dataclass
class Bank:
    """Input columns of a group on the warm-up-extended time axis (see the module docstring).

    ``col`` arrays hold a column of ``data`` per variant and input (−1: the constant in the
    matching ``const`` array is used).

    Attributes
    ----------
    data : ndarray (warm + n, ncols)
        Every distinct time series of the group once, one column each (SI units: [°C] for
        temperatures and setpoints, [W] for powers); the first ``warm`` rows repeat the first
        ``warm`` reported rows (warm-up).
    ucol, uconst : ndarray (V, nb + nsrc) of int, ndarray (V, nb + nsrc)
        Boundary temperatures [°C] and source powers [W]: column or constant.
    hcol, hconst : ndarray (V, m) of int, ndarray (V, m)
        Heating setpoints [°C] (NaN = none): column or constant.
    ccol, cconst : ndarray (V, m) of int, ndarray (V, m)
        Cooling setpoints [°C] (NaN = none): column or constant.
    scol, sconst : ndarray (V, nsig) of int, ndarray (V, nsig)
        Condition signals (in the signal's unit): column or constant.
    schcol, schconst : ndarray (V,) of int, ndarray (V,)
        Scheduled-state id per step (a float holding an integer): column or constant.
    wcol, wconst : ndarray (V, nfl) of int, ndarray (V, nfl)
        Wind speed of each window link [m/s]: column or constant.
    """

    data: np.ndarray
    ucol: np.ndarray
    uconst: np.ndarray
    hcol: np.ndarray
    hconst: np.ndarray
    ccol: np.ndarray
    cconst: np.ndarray
    scol: np.ndarray
    sconst: np.ndarray
    schcol: np.ndarray
    schconst: np.ndarray
    wcol: np.ndarray
    wconst: np.ndarray

    def first(self, cols: np.ndarray, const: np.ndarray) -> np.ndarray:
        """Values of the first row for (V, k) column specs.

        Parameters
        ----------
        cols : ndarray (V, k) of int
            Column of ``data`` per variant and input (−1: use ``const``).
        const : ndarray (V, k)
            Constants used where ``cols`` is −1 (same unit as the input).

        Returns
        -------
        ndarray (V, k)
        """
        return np.where(cols >= 0, self.data[0, np.maximum(cols, 0)], const)


def _columns(specs_per_variant, k, index_of):
    V = len(specs_per_variant)
    cols = np.full((V, k), -1, dtype=np.int64)
    const = np.zeros((V, k))
    for v, specs in enumerate(specs_per_variant):
        for j, spec in enumerate(specs):
            if isinstance(spec, float):
                const[v, j] = spec
            else:
                cols[v, j] = index_of(spec)
    return cols, const


def make_bank(st, vals: list, store, warm: int) -> Bank:
    """Stack the group's time series once (see :class:`Bank`).

    Parameters
    ----------
    st : Structure
        The group's structure.
    vals : list of Values
        The V variants; their column specs index ``store``.
    store : ColumnStore
        The time series [SI] the specs refer to (n rows).
    warm : int
        Warm-up steps: the first ``warm`` rows are repeated in front of the series.

    Returns
    -------
    Bank
    """
    keys: dict = {}

    def index_of(spec):
        if spec not in keys:
            keys[spec] = len(keys)
        return keys[spec]

    nin = st.nb + st.nsrc
    ucol, uconst = _columns([p.ucols for p in vals], nin, index_of)
    hcol, hconst = _columns([p.hcols for p in vals], st.m, index_of)
    ccol, cconst = _columns([p.ccols for p in vals], st.m, index_of)
    scol, sconst = _columns([p.scols for p in vals], len(st.signal_refs), index_of)
    schcol, schconst = _columns([[p.sched] for p in vals], 1, index_of)
    wcol, wconst = _columns([p.flow_wind for p in vals], st.nfl, index_of)
    n = len(store.index)
    data = np.empty((warm + n, max(len(keys), 1)))
    for key, j in keys.items():
        col = store.cols[key]
        data[warm:, j] = col
        data[:warm, j] = col[:warm]
    return Bank(data, ucol, uconst, hcol, hconst, ccol, cconst, scol, sconst, schcol[:, 0],
                schconst[:, 0], wcol, wconst)


# ==================================================================================== start
def input_factors(st, vals: list) -> np.ndarray:
    """(V, ns, nu) factor on each input in each state (sources: the switches' factors).

    Parameters
    ----------
    st : Structure
        The group's structure.
    vals : list of Values
        The V variants (same number of states ns).

    Returns
    -------
    ndarray (V, ns, nu)
        Dimensionless factors: 1 for boundaries and thermostats, the product of the
        switches' factors for sources.
    """
    F = np.ones((len(vals), vals[0].n_states, st.nu))
    for v, p in enumerate(vals):
        F[v, :, st.nb:st.nb + st.nsrc] = p.source_factor
    return F


#: Capacitive nodes above which the steady start factorises the (sparse) conductance matrix
#: with SuperLU rather than a dense LU. Measured on chains of rooms: equal at 170 nodes,
#: 0.81 → 0.49 ms at 306, 6.5 → 1.9 ms at 680, 0.12 s → a few ms at 2,006.
SPARSE_START = 300


def start_solver(K: np.ndarray):
    """``solve(rhs) = K⁻¹ rhs`` for the steady start: a dense LU, or SuperLU on a large
    network (more than :data:`SPARSE_START` nodes), whose conductance matrix is sparse.

    Parameters
    ----------
    K : ndarray (nc, nc)
        Conductance matrix of the capacitive nodes (massless nodes reduced) [W/K].

    Returns
    -------
    callable
        ``solve(rhs)`` for a vector (nc,) or columns (nc, k) of heat rates [W] → [°C or K/W].
    """
    if K.shape[0] <= SPARSE_START:
        return lambda r: np.linalg.solve(K, r)
    lu = spla.splu(sp.csc_matrix(K))
    return lambda r: lu.solve(np.asarray(r, dtype=float))


def start_states(st, vals: list, disc: Discretised, bank: Bank, ok: np.ndarray):
    """Start state ``x0`` (V, nc) [°C], its state id ``s0`` (V,) and raw first inputs ``u0``.

    The start is the steady state under the first row's inputs with the thermostats acting
    (:func:`thermonet.engine.start.steady_start`), then the nodes' own initial temperatures.

    Parameters
    ----------
    st : Structure
        The group's structure.
    vals : list of Values
        The V variants.
    disc : Discretised
        Their discretisation (``K``, ``E``, ``Yx``, ``Yu`` per variant and state).
    bank : Bank
        Their inputs (the first row is used).
    ok : ndarray (V,) of bool
        Variants to start; the others keep ``x0`` = 0.

    Returns
    -------
    x0 : ndarray (V, nc)
        Start temperatures of the capacitive nodes [°C].
    s0 : ndarray (V,) of int
        State id of the first row (``sched · 2^nsw + switch bits``).
    u0 : ndarray (V, nu)
        First row's boundary temperatures [°C] and source powers [W] (unscaled by switch
        factors); thermostat columns zero.
    """
    V, nc, nsw = len(vals), st.nc, st.nsw
    s0 = bank.first(bank.schcol, bank.schconst).astype(np.int64) * (1 << nsw)
    if nsw:
        sw = np.array([p.sw_init for p in vals], dtype=bool).reshape(V, nsw)
        s0 += (sw * (1 << np.arange(nsw))[None, :]).sum(axis=1).astype(np.int64)
    u0 = np.zeros((V, st.nu))
    u0[:, :st.nb + st.nsrc] = bank.first(bank.ucol, bank.uconst)
    hsp0 = bank.first(bank.hcol, bank.hconst)
    csp0 = bank.first(bank.ccol, bank.cconst)
    x0 = np.zeros((V, nc))
    if not nc:
        return x0, s0, u0
    Rx, Ru = thermostat_rows(st, disc.Yx, disc.Yu)
    for v in np.flatnonzero(ok):
        s = s0[v]
        x0[v] = steady_start(st, start_solver(disc.K[v, s]), disc.E[v, s], Rx[v, s],
                             Ru[v, s], u0[v], hsp0[v], csp0[v], vals[v].qh, vals[v].qc)
        apply_initial(x0[v], vals[v].initial)
    return x0, s0, u0


# ================================================================================ operators
@dataclass
class Operators:
    """Arrays of :func:`thermonet.engine.kernels.step_modal` (see its docstring).

    Shapes: V variants, ns states, nc capacitive nodes, nu inputs, m thermostats, nobs
    observed points, k the most varying inputs of a variant. A state is stepped in modal
    coordinates ``z = Qᵀ C x`` or, if ``dense``, in node coordinates ``z = x`` [°C].

    Attributes
    ----------
    a : ndarray (V, ns, nc)
        Modal decay over a step ``e^{−λh}`` [-].
    Ad : ndarray (V, ns, nc, nc), or (V, ns, 0, 0) when no state is dense
        Φ of the dense states [-].
    dense : ndarray (V, ns) of bool
        States stepped densely in node coordinates.
    BT, BTp : ndarray (V, ns, nu, nc)
        Input operators, transposed (one row per input, source factors folded in), on this
        step's input and on the previous step's (the latter non-zero only for first-order
        hold inputs); per unit input: [K/K] for boundary temperatures, [K/W] for powers
        (in node coordinates).
    Qx, Pz : ndarray (V, ns, nc, nc)
        ``x = Qx z`` and ``z = Pz x`` (identities for dense states).
    Ox, Ou : ndarray (V, ns, nobs, nc), ndarray (V, ns, nobs, nu)
        Observed temperatures [°C] as ``Ox z + Ou u`` (``Ou`` non-zero for massless nodes).
    M : ndarray (V, ns, m, m)
        Thermostat nodes' end-of-step temperature response to 1 W held over the step [K/W].
    bconst : ndarray (V, ns, nc)
        The variant's constant inputs' contribution to the end-of-step coordinates.
    oconst : ndarray (V, ns, nobs)
        The constant inputs' part of the observed temperatures [°C].
    nvar : ndarray (V,) of int
        Number of inputs that vary in time (boundary temperatures, source powers).
    vj, vcol : ndarray (V, k) of int
        Input index of each varying input and its column in ``Bank.data``.
    rampv : ndarray (V, k) of bool
        Varying inputs interpolated linearly over the step (first-order hold).
    obs_nodes : list of int
        Free-node index of each observed point (thermostat nodes first, then condition
        nodes, then the comfort node).
    """

    a: np.ndarray
    Ad: np.ndarray
    dense: np.ndarray
    BT: np.ndarray
    BTp: np.ndarray
    Qx: np.ndarray
    Pz: np.ndarray
    Ox: np.ndarray
    Ou: np.ndarray
    M: np.ndarray
    bconst: np.ndarray
    oconst: np.ndarray
    nvar: np.ndarray
    vj: np.ndarray
    vcol: np.ndarray
    rampv: np.ndarray
    obs_nodes: list


def observed_nodes(st, comfort: int | None) -> tuple[list, np.ndarray, int]:
    """Free nodes the loop observes: thermostat nodes, condition nodes, the comfort node.

    Parameters
    ----------
    st : Structure
        The group's structure (thermostat nodes, condition terms).
    comfort : int or None
        Free-node index of the comfort node, or None.

    Returns the node list, the terms remapped to observed positions, and the comfort
    node's position (−1: none).
    """
    nodes = [int(i) for i in st.thermostat_node]
    terms = st.terms.copy()
    for t in range(terms.shape[0]):
        for kcol, icol in ((0, 1), (2, 3)):
            if terms[t, kcol] == 0:
                i = int(terms[t, icol])
                if i not in nodes[st.m:]:
                    nodes.append(i)
                terms[t, icol] = st.m + nodes[st.m:].index(i)
    c = -1
    if comfort is not None:
        if int(comfort) in nodes:
            c = nodes.index(int(comfort))
        else:
            nodes.append(int(comfort))
            c = len(nodes) - 1
    return nodes, terms, c


@dataclass
class FlowLinks:
    """The window links' arrays of :func:`thermonet.engine.kernels.step_modal` (nfl links).

    Attributes
    ----------
    rows : ndarray (m + 2 nfl,) of int
        Observed point of each row of ``Mc``: thermostat nodes, room nodes, far nodes (−1 for
        a far boundary).
    coef : ndarray (V, nfl, 9)
        Flow-law coefficients, ρc_p [J/(m³K)] and G_ref [W/K].
    fac : ndarray (V, ns, nfl)
        Switch factor on each link in each state [-].
    bk, a, b, bj, ja, jb : ndarray (nfl,) of int
        Far side's kind (0 node, 1 boundary); observed points of the room and far nodes;
        input of a far boundary; inputs of the law sources (into the room, out of a far
        node or −1).
    bcol, bconst, bramp : ndarray (V, nfl)
        Far boundary's temperature [°C]: column, constant, first-order hold.
    wcol, wconst, wramp : ndarray (V, nfl)
        Wind speed [m/s]: column, constant, first-order hold.
    """

    rows: np.ndarray
    coef: np.ndarray
    fac: np.ndarray
    bk: np.ndarray
    a: np.ndarray
    b: np.ndarray
    bj: np.ndarray
    ja: np.ndarray
    jb: np.ndarray
    bcol: np.ndarray
    bconst: np.ndarray
    bramp: np.ndarray
    wcol: np.ndarray
    wconst: np.ndarray
    wramp: np.ndarray


def _observe(nodes: list, i: int) -> int:
    if i not in nodes:
        nodes.append(i)
    return nodes.index(i)


_NO_FLOW_LINKS: dict = {}


def _empty_flow_links(V: int, ns: int, m: int) -> FlowLinks:
    """The empty window-link arrays of a group without window links (kept per shape; the
    kernel only reads them)."""
    i0 = np.zeros(0, dtype=np.int64)
    z = np.zeros((V, 0))
    arrays = [np.arange(m, dtype=np.int64), np.zeros((V, 0, 9)), np.zeros((V, ns, 0)), i0,
              i0, i0, i0, i0, i0, np.zeros((V, 0), dtype=np.int64), z,
              np.zeros((V, 0), dtype=np.bool_), np.zeros((V, 0), dtype=np.int64), z,
              np.zeros((V, 0), dtype=np.bool_)]
    return FlowLinks(*arrays)


def window_ends(st) -> tuple:
    """The window links' ends and inputs, in free-node and input indices.

    Parameters
    ----------
    st : Structure
        The group's structure.

    Returns
    -------
    a, b : ndarray (nfl,) of int
        Room node and far node (free-node indices; 0 where the far side is a boundary).
    bk : ndarray (nfl,) of int
        Far side's kind: 0 a free node, 1 a boundary.
    bj : ndarray (nfl,) of int
        Input index of a far boundary (0 otherwise).
    ja, jb : ndarray (nfl,) of int
        Input indices of the law sources into the room and out of a far node (−1: none).
    """
    ib = st.link_b[st.flow_links].astype(np.int64)
    far_node = ib < st.nf
    return (st.link_a[st.flow_links].astype(np.int64), np.where(far_node, ib, 0),
            (~far_node).astype(np.int64), np.where(far_node, 0, ib - st.nf),
            (st.nb + st.flow_src[:, 0]).astype(np.int64),
            np.where(st.flow_src[:, 1] >= 0, st.nb + st.flow_src[:, 1], -1).astype(np.int64))


def flow_links(st, vals: list, bank: Bank, nodes: list, ramp: np.ndarray) -> FlowLinks:
    """The window links' kernel arrays; their room and far nodes are added to ``nodes``.

    Parameters
    ----------
    st : Structure
        The group's structure.
    vals : list of Values
        The V variants.
    bank : Bank
        Their inputs.
    nodes : list of int
        Observed free nodes (:func:`observed_nodes`); extended in place.
    ramp : ndarray (V, nb + nsrc) of bool
        Inputs interpolated linearly over each step.

    Returns
    -------
    FlowLinks
    """
    nfl, V, ns = st.nfl, len(vals), vals[0].n_states
    if not nfl:
        return _NO_FLOW_LINKS.get((V, ns, st.m)) or _NO_FLOW_LINKS.setdefault(
            (V, ns, st.m), _empty_flow_links(V, ns, st.m))
    room, far, bk, bj, ja, jb = window_ends(st)
    a = np.array([_observe(nodes, int(i)) for i in room], dtype=np.int64)
    b = np.array([_observe(nodes, int(i)) if k == 0 else 0 for i, k in zip(far, bk, strict=True)],
                 dtype=np.int64)
    rows = np.concatenate([np.arange(st.m), a, np.where(bk == 0, b, -1)]).astype(np.int64)
    return FlowLinks(
        rows, np.array([p.flow_coef for p in vals], dtype=float).reshape(V, nfl, 9),
        np.array([p.flow_fac for p in vals], dtype=float).reshape(V, ns, nfl),
        bk, a, b, bj, ja, jb, np.ascontiguousarray(bank.ucol[:, bj]),
        np.ascontiguousarray(bank.uconst[:, bj]),
        np.ascontiguousarray(ramp[:, bj]), bank.wcol, bank.wconst,
        np.array([p.flow_wind_ramp for p in vals], dtype=np.bool_).reshape(V, nfl))


def coupled_response(st, ops, fl: FlowLinks) -> np.ndarray:
    """``Mc`` (V, ns, m + 2 nfl, m + nfl): end temperatures of the thermostat, room and far
    nodes per 1 W of each thermostat and each window link's law source [K/W].

    Parameters
    ----------
    st : Structure
        The group's structure.
    ops : Operators
        The kernel's arrays (``Ox``, ``Ou``, ``BT``).
    fl : FlowLinks
        The window links.

    Returns
    -------
    ndarray
    """
    nin = st.nb + st.nsrc
    V, ns = ops.BT.shape[:2]
    cols = ops.BT[:, :, nin:nin + st.m, :]                                    # (V, ns, m, nc)
    qcol = ops.BT[:, :, fl.ja, :].copy()
    ucols = [nin + np.arange(st.m)]
    far = fl.jb >= 0
    qcol[:, :, far, :] -= ops.BT[:, :, fl.jb[far], :]
    B = np.concatenate([cols, qcol], axis=2)                                  # (V, ns, c, nc)
    rows = np.maximum(fl.rows, 0)
    Mc = np.einsum("vsri,vsci->vsrc", ops.Ox[:, :, rows, :], B)
    Ou = ops.Ou[:, :, rows, :]
    Mc[..., :st.m] += Ou[..., ucols[0]]
    Mc[..., st.m:] += Ou[..., fl.ja]
    for f in np.flatnonzero(far):
        Mc[..., st.m + f] -= Ou[..., fl.jb[f]]
    Mc[:, :, fl.rows < 0, :] = 0.0
    return np.ascontiguousarray(Mc)


def _node_rows(st, disc: Discretised, F: np.ndarray, Qx: np.ndarray, nodes: list):
    """Observed rows ``Ox`` (V, ns, nobs, nc), ``Ou`` (V, ns, nobs, nu) of free nodes."""
    V, ns = disc.K.shape[:2]
    nc = st.nc
    Ox = np.zeros((V, ns, len(nodes), nc))
    Ou = np.zeros((V, ns, len(nodes), st.nu))
    for o, i in enumerate(nodes):
        if i < nc:
            Ox[:, :, o, :] = Qx[:, :, i, :]
        else:
            Ox[:, :, o, :] = np.einsum("vsj,vsji->vsi", disc.Yx[:, :, i - nc, :], Qx)
            Ou[:, :, o, :] = disc.Yu[:, :, i - nc, :] * F
    return Ox, Ou


def operators(st, disc: Discretised, F: np.ndarray, bank: Bank, nodes: list,
              ramp: np.ndarray, node_coords: bool = False) -> Operators:
    """The kernel's arrays for every variant and state (see the module docstring).

    With ``node_coords`` every state is stepped densely in node coordinates (``x⁺ = Φx +
    Γu``); otherwise in modal coordinates, except the states that failed the modal check.
    Inputs marked in ``ramp`` (V, nin) vary linearly over the step from the previous value:
    their weights are ``hφ₂(λh)W`` on this step's value and ``h(φ₁ − φ₂)W`` on the previous
    (``Γ̄`` and ``Γ − Γ̄`` in node coordinates).

    Parameters
    ----------
    st : Structure
        The group's structure.
    disc : Discretised
        Discretisation of the V variants × ns states.
    F : ndarray (V, ns, nu)
        Factor on each input in each state [-] (:func:`input_factors`).
    bank : Bank
        The group's inputs (which are constant, which vary and in which column).
    nodes : list of int
        Free-node index of each observed point (:func:`observed_nodes`).
    ramp : ndarray (V, nb + nsrc) of bool
        Inputs interpolated linearly over each step (first-order hold).
    node_coords : bool, default False
        Step every state densely in node coordinates.

    Returns
    -------
    Operators
    """
    V, ns = disc.K.shape[:2]
    nc, m, h = st.nc, st.m, disc.h
    nin = st.nb + st.nsrc
    x = disc.lam * h
    a = np.exp(-x)
    r = np.zeros((V, st.nu), dtype=bool)
    r[:, :nin] = ramp
    dense = disc.dense.copy()
    if node_coords:
        dense[:] = True
    if dense.all():   # every state's operators are set densely below; the layout of Wᵀ
        BT, BTp = np.swapaxes(np.zeros((2, V, ns, nc, st.nu)), -1, -2)  # (same sums below)
    else:
        WT = np.swapaxes(disc.W, -1, -2) * F[..., None]
        e1, e2 = h * phi1(x), h * phi2(x)
        rr = r[:, None, :, None]
        BT = np.where(rr, WT * e2[:, :, None, :], WT * e1[:, :, None, :])
        BTp = np.where(rr, WT * (e1 - e2)[:, :, None, :], 0.0)
    eye = np.eye(nc)
    if dense.all():   # node coordinates everywhere: the maps are identities (laid out as below)
        Qx = np.empty(disc.Q.shape)
        Qx[...] = eye
        Pz = np.swapaxes(Qx.copy(), -1, -2)
    else:
        Qx = disc.Q.copy()
        Pz = np.swapaxes(disc.Q, -1, -2) * disc.C[:, None, None, :]
    Ad = np.zeros((V, ns, nc, nc) if dense.any() else (V, ns, 0, 0))
    for v, s in zip(*np.nonzero(dense), strict=True):
        Phi, Gam, _, Gambar, _ = disc.matrices(v, s)
        Ad[v, s] = Phi
        cur = np.where(r[v][None, :], Gambar, Gam)
        BT[v, s] = (cur * F[v, s][None, :]).T
        BTp[v, s] = (np.where(r[v][None, :], Gam - Gambar, 0.0) * F[v, s][None, :]).T
        Qx[v, s] = eye
        Pz[v, s] = eye
    Ox, Ou = _node_rows(st, disc, F, Qx, nodes)
    pcols = nin + np.arange(m)
    M = (Ox[:, :, :m, :] @ np.swapaxes(BT[:, :, pcols, :], -1, -2) + Ou[:, :, :m][..., pcols])
    const = np.where(bank.ucol >= 0, 0.0, bank.uconst)                       # (V, nin)
    bconst = np.einsum("vsji,vj->vsi", BT[:, :, :nin, :] + BTp[:, :, :nin, :], const)
    oconst = np.einsum("vsoj,vj->vso", Ou[..., :nin], const)
    nvar = (bank.ucol >= 0).sum(axis=1).astype(np.int64)
    k = max(int(nvar.max()) if V else 0, 1)
    vj = np.zeros((V, k), dtype=np.int64)
    vcol = np.zeros((V, k), dtype=np.int64)
    rampv = np.zeros((V, k), dtype=np.bool_)
    for v in range(V):
        js = np.flatnonzero(bank.ucol[v] >= 0)
        vj[v, :len(js)] = js
        vcol[v, :len(js)] = bank.ucol[v, js]
        rampv[v, :len(js)] = ramp[v, js]
    return Operators(a, Ad, dense, np.ascontiguousarray(BT), np.ascontiguousarray(BTp), Qx,
                     Pz, Ox, Ou, M, bconst, oconst, nvar, vj, vcol, rampv, nodes)


def thermostat_errors(st, ops: Operators, errors: list) -> None:
    """Mark variants whose thermostat node does not respond to heating within a step.

    Parameters
    ----------
    st : Structure
        The group's structure (thermostat names).
    ops : Operators
        The kernel's arrays; a diagonal entry of ``M`` [K/W] that is not > 0 marks the variant.
    errors : list
        Per variant: None or an error; filled in place with a NetworkError naming the
        thermostat (an existing error is kept).
    """
    if not st.m:
        return
    d = np.diagonal(ops.M, axis1=-2, axis2=-1)          # (V, ns, m)
    if (d > 0).all():                                   # every node responds: the usual case
        return
    for v in np.flatnonzero(~(d.min(axis=(1, 2)) > 0)):
        if errors[v] is None:
            bad = st.thermostat_names[int(np.argmin(d[v].min(axis=0)))]
            errors[v] = NetworkError(f"thermostat {bad!r}: its node does not respond to "
                                     "heating within a step; attach it to a node with a "
                                     "conductive path")


def observed_start(st, disc: Discretised, x0: np.ndarray, u0: np.ndarray, nodes: list):
    """Observed temperatures before the first step (state 0's massless maps, raw inputs).

    Parameters
    ----------
    st : Structure
        The group's structure.
    disc : Discretised
        Discretisation (massless-node maps ``Yx``, ``Yu``).
    x0 : ndarray (V, nc)
        Start temperatures of the capacitive nodes [°C].
    u0 : ndarray (V, nu)
        First row's raw inputs (boundary temperatures [°C], source powers [W]).
    nodes : list of int
        Free-node index of each observed point.

    Returns
    -------
    ndarray (V, nobs)
        Observed temperatures [°C].
    """
    V = x0.shape[0]
    obs = np.zeros((V, len(nodes)))
    for o, i in enumerate(nodes):
        if i < st.nc:
            obs[:, o] = x0[:, i]
        else:
            r = i - st.nc
            obs[:, o] = (np.einsum("vj,vj->v", disc.Yx[:, 0, r, :], x0)
                         + np.einsum("vj,vj->v", disc.Yu[:, 0, r, :], u0))
    return obs


# ================================================================================= stepping
@dataclass
class GroupRun:
    """What stepping a group gave.

    Traces (``keep``): ``X`` (V, n, nc) end-of-step capacitive temperatures [°C], ``S``
    (V, n) state ids, ``P`` (V, n, m) thermostat powers [W]. Always: ``x_first``, ``x_last``
    (V, nc) [°C]; sums (without ``keep``): ``heat``, ``cool`` (V, m) [W·steps], peaks [W],
    ``hrs``, ``dgh`` (V, thresholds), ``tstat`` (V, 3) max/min/sum [°C], ``zs_sum`` (V, ns,
    nc) start coordinates, ``us_sum`` (V, ns, nu) raw inputs, ``cnt`` (V, ns) steps per
    state.

    Attributes
    ----------
    X : ndarray (V, n, nc) or None
        End-of-step capacitive temperatures [°C] (with ``keep``).
    S : ndarray (V, n) of int or None
        State id of each step (with ``keep``).
    P : ndarray (V, n, m) or None
        Thermostat powers [W], heating > 0, cooling < 0 (with ``keep``).
    x_first : ndarray (V, nc)
        Capacitive temperatures at the start of the first reported step [°C].
    x_last : ndarray (V, nc)
        Capacitive temperatures at the end of the last step [°C].
    sums : dict of str to ndarray
        The sums named in :data:`SUMS` (without ``keep``; empty with it), see
        :func:`thermonet.engine.kernels.step_modal`.
    disc : Discretised
        The discretisation used.
    ops : Operators or None
        The kernel's arrays (None for the numpy reference kernel).
    F : ndarray (V, ns, nu)
        Factor on each input in each state [-].
    errors : list
        Per variant: None, or the error that made it unusable (its results are zeros).
    kernel : str
        The kernel that stepped the group: ``"numba"`` or ``"numpy"``.
    Q : ndarray (V, n, nfl) or None
        Window links' law heat flows into the room [W] (with ``keep``).
    wide : ndarray (V, n, nc + extra) or None
        With ``extra`` (see :func:`step_group`): the rows the kernel wrote the traces into,
        ``X`` being a view of their first nc columns and the ``extra`` columns after them
        left for the caller to fill (unset); None otherwise.
    """

    X: np.ndarray | None
    S: np.ndarray | None
    P: np.ndarray | None
    x_first: np.ndarray
    x_last: np.ndarray
    sums: dict
    disc: Discretised
    ops: Operators | None
    F: np.ndarray
    errors: list
    kernel: str = "numba"
    Q: np.ndarray | None = None
    wide: np.ndarray | None = None


_READY: list = []         # True once the compiled kernel is built (it then stays built)


def kernel_ready() -> bool:
    """Whether the compiled kernel is built (or loaded from the on-disk cache) here."""
    if not _READY and kernels.HAVE_NUMBA and kernels.step_modal_nb.signatures:
        _READY.append(True)            # listing the signatures costs ~20 µs: ask until built
    return bool(_READY)


def compile_in_background(job) -> None:
    """Run ``job`` (a call of the compiled kernel) once in a daemon thread: numba builds the
    kernel there while the caller goes on with the numpy reference.

    Parameters
    ----------
    job : callable
        No arguments; calls the compiled kernel on a copy of a run's arrays.
    """
    import threading

    if _COMPILING and (_COMPILING[0].is_alive() or kernel_ready()):
        return
    t = threading.Thread(target=job, name="thermonet-kernel-compile", daemon=True)
    _COMPILING[:] = [t]
    t.start()


def resolve_kernel(kernel: str) -> str:
    """``"numba"`` or ``"numpy"`` for a ``kernel=`` option (validated).

    Parameters
    ----------
    kernel : {"auto", "numba", "numpy"}
        ``"auto"`` is numba when it is installed, else numpy.

    Raises
    ------
    ValueError
        Another value.
    """
    if kernel not in KERNELS:
        raise ValueError(f"kernel must be one of {KERNELS}, got {kernel!r}")
    if kernel == "auto":
        return "numba" if kernels.HAVE_NUMBA else "numpy"
    return kernel


def _modal_to_nodes(Z, S, Qx, X):
    """End temperatures into X (n, nc) from coordinates Z (n, nc) in each row's state."""
    states = np.unique(S)
    if len(states) == 1:            # straight into X: no temporary of the trace's size
        np.matmul(Z, Qx[states[0]].T, out=X)
        return
    for s in states:
        rows = S == s
        X[rows] = Z[rows] @ Qx[s].T


#: Variants per block of the lane kernel (:func:`thermonet.engine.kernels.step_lanes`), and
#: the fewest variants of a group that use it.
LANES, LANES_MIN = 16, 8


def lanes_eligible(st, ops: Operators, keep: bool, sel: np.ndarray) -> bool:
    """Whether the variants ``sel`` can be stepped on SIMD lanes (see ``step_lanes``).

    Parameters
    ----------
    st : Structure
        The group's structure.
    ops : Operators
        Their kernel arrays.
    keep : bool
        Traces kept (lanes keep sums only).
    sel : ndarray of int
        The usable variants.

    Returns
    -------
    bool
    """
    if keep or sel.size < LANES_MIN or st.nsw or st.nfl or st.m > 1 or ops.a.shape[1] != 1:
        return False
    if ops.dense[sel].any():
        return False
    nv = ops.nvar[sel]
    if (nv != nv[0]).any():
        return False
    k = int(nv[0])
    return bool((ops.vj[sel, :k] == ops.vj[sel[0], :k]).all()
                and (ops.rampv[sel, :k] == ops.rampv[sel[0], :k]).all())


def _lanes(arr: np.ndarray, src: np.ndarray) -> np.ndarray:
    """(V, ...) → (nblocks, ..., LW): the variants of each block on the last axis."""
    return np.ascontiguousarray(np.moveaxis(arr[src], 1, -1))


def _step_lanes(st, ops: Operators, bank: Bank, vals, sel, z0, x0, warm, c_obs, thr_h,
                thr_d, u_before, outs: dict) -> None:
    """Step the variants ``sel`` on lanes, writing the sums ``outs`` (variant-first)."""
    lw = LANES if sel.size >= 4 * LANES else LANES_MIN
    nbk = -(-sel.size // lw)
    lane_v = np.full(nbk * lw, -1, dtype=np.int64)
    lane_v[:sel.size] = np.arange(sel.size)
    lane_v = lane_v.reshape(nbk, lw)
    src = sel[np.where(lane_v >= 0, lane_v, 0)]          # pad lanes repeat the first
    k = int(ops.nvar[sel[0]])
    js = ops.vj[sel[0], :k].astype(np.int64)
    nin, m = st.nb + st.nsrc, st.m
    o = 0                                   # the thermostat's node is observed point 0
    c = max(int(c_obs), 0)
    V = len(vals)
    qh = np.array([p.qh for p in vals]).reshape(V, m)
    qc = np.array([p.qc for p in vals]).reshape(V, m)

    def col(arr, j):
        return arr[:, j] if m else np.zeros(arr.shape[0], dtype=arr.dtype)

    kernels.step_lanes_nb(
        lw, _lanes(ops.a[:, 0], src), _lanes(ops.bconst[:, 0], src),
        _lanes(ops.BT[:, 0][:, js, :], src), _lanes(ops.BTp[:, 0][:, js, :], src),
        ops.rampv[sel[0], :k].astype(np.bool_),
        _lanes(ops.BT[:, 0, nin, :] if m else np.zeros((V, st.nc)), src),
        _lanes(ops.Ox[:, 0, o, :], src), _lanes(ops.Ou[:, 0, o][:, js], src),
        _lanes(ops.oconst[:, 0, o], src),
        _lanes(ops.M[:, 0, 0, 0] if m else np.ones(V), src),
        _lanes(ops.Ox[:, 0, c, :], src), _lanes(ops.Ou[:, 0, c][:, js], src),
        _lanes(ops.Ou[:, 0, c, nin] if m else np.zeros(V), src),
        _lanes(ops.oconst[:, 0, c], src), _lanes(ops.vcol[:, :k], src),
        _lanes(u_before[:, js], src), _lanes(z0, src), _lanes(x0, src),
        _lanes(ops.Qx[:, 0], src), bank.data, _lanes(col(bank.hcol, 0), src),
        _lanes(col(bank.hconst, 0), src), _lanes(col(bank.ccol, 0), src),
        _lanes(col(bank.cconst, 0), src), _lanes(col(qh, 0), src), _lanes(col(qc, 0), src),
        int(warm), m > 0, int(c_obs) >= 0, np.asarray(thr_h, dtype=float),
        np.asarray(thr_d, dtype=float), *[outs[k_] for k_ in SUMS + ("x_first", "x_last")],
        np.where(lane_v >= 0, sel[np.maximum(lane_v, 0)], -1).astype(np.int64), js, int(nin))


def _trace_arrays(V: int, nrep: int, nc: int, m: int, nfl: int, extra: int, full: bool):
    """Trace arrays of the kernel: ``Ztr`` (V, nrep, nc + extra), ``Str``, ``Ptr``, ``Qtr``.

    Every reported row is written by the kernel for the variants it steps, so the arrays
    are left unset when it steps them all (``full``), zeros otherwise.
    """
    make = np.empty if full else np.zeros
    return (make((V, nrep, nc + extra)), make((V, nrep), dtype=np.int64), make((V, nrep, m)),
            make((V, nrep, nfl)))


def _step_numba(st, vals, disc, F, bank, x0, s0, u0, warm, keep, comfort, thr_h, thr_d,
                errors, ramp, u_before, extra=0):
    V, nc, m, ns = len(vals), st.nc, st.m, vals[0].n_states
    nodes, terms, c_obs = observed_nodes(st, comfort)
    fl = flow_links(st, vals, bank, nodes, ramp)
    in_nodes = bool(keep) and nc <= NODES_IN_KERNEL
    ops = operators(st, disc, F, bank, nodes, ramp, node_coords=in_nodes)
    Mc = coupled_response(st, ops, fl) if st.nfl else np.zeros((V, ns, 0, 0))
    thermostat_errors(st, ops, errors)
    ok = np.array([e is None for e in errors], dtype=bool)
    obs0 = observed_start(st, disc, x0, u0, nodes)
    z0 = np.einsum("vij,vj->vi", ops.Pz[np.arange(V), s0], x0)
    n = bank.data.shape[0]
    nrep = n - warm if keep else 0
    extra = extra if in_nodes else 0
    Ztr, Str, Ptr, Qtr = _trace_arrays(V, nrep, nc, m, st.nfl, extra, bool(ok.all()))
    sums = {"heat": np.zeros((V, m)), "cool": np.zeros((V, m)), "peak_h": np.zeros(V),
            "peak_c": np.zeros(V), "hrs": np.zeros((V, len(thr_h))),
            "dgh": np.zeros((V, len(thr_d))), "tstat": np.zeros((V, 3)),
            "zs_sum": np.zeros((V, ns, nc)), "us_sum": np.zeros((V, ns, st.nu)),
            "up_sum": np.zeros((V, ns, st.nu)), "cnt": np.zeros((V, ns))}
    x_first = np.zeros((V, nc))
    x_last = np.zeros((V, nc))
    tv = np.empty((V,) + terms.shape)
    tv[:] = terms
    for v, p in enumerate(vals):
        tv[v, :, 5] = p.thresholds
    sel = np.flatnonzero(ok)
    if sel.size and lanes_eligible(st, ops, keep, sel):
        _step_lanes(st, ops, bank, vals, sel, z0, x0, warm, c_obs, thr_h, thr_d, u_before,
                    dict(sums, x_first=x_first, x_last=x_last))
        sel = sel[:0]
    if sel.size:
        def pick(arr):
            return np.ascontiguousarray(arr[sel]) if sel.size < V else arr

        outs = [pick(a) for a in (Ztr, Str, Ptr, Qtr)] + [pick(sums[k]) for k in SUMS] + [
            pick(x_first), pick(x_last)]
        threads = numba.get_num_threads()
        numba.set_num_threads(max(1, min(threads, sel.size)))   # one variant: no thread pool
        try:
            kernels.step_modal_nb(
                pick(ops.a), pick(ops.Ad), pick(ops.dense), pick(ops.BT), pick(ops.BTp),
                pick(ops.Qx), pick(ops.Pz), pick(ops.Ox), pick(ops.Ou), pick(ops.M),
                pick(ops.bconst), pick(ops.oconst), pick(ops.nvar), pick(ops.vj),
                pick(ops.vcol), pick(ops.rampv), pick(u_before), bank.data,
                pick(z0), pick(x0), pick(s0), pick(obs0), pick(bank.schcol), pick(bank.schconst),
                pick(bank.hcol), pick(bank.hconst), pick(bank.ccol), pick(bank.cconst),
                pick(bank.scol), pick(bank.sconst),
                pick(np.array([p.qh for p in vals]).reshape(V, m)),
                pick(np.array([p.qc for p in vals]).reshape(V, m)),
                pick(np.array([p.sw_init for p in vals], dtype=np.bool_).reshape(V, st.nsw)),
                st.has_off.astype(np.bool_), pick(tv), st.term_clause, st.clause_cond,
                int(st.nb + st.nsrc), int(st.nsw), int(warm), np.arange(m, dtype=np.int64),
                int(c_obs), np.asarray(thr_h, dtype=float), np.asarray(thr_d, dtype=float),
                pick(Mc), fl.rows, pick(fl.coef), pick(fl.fac), fl.bk, fl.a, fl.b, fl.bj, fl.ja,
                fl.jb, pick(fl.bcol), pick(fl.bconst), pick(fl.bramp), pick(fl.wcol),
                pick(fl.wconst), pick(fl.wramp), bool(keep), *outs)
        finally:
            numba.set_num_threads(threads)
        if sel.size < V:
            full = [Ztr, Str, Ptr, Qtr] + [sums[k] for k in SUMS] + [x_first, x_last]
            for f, part in zip(full, outs, strict=True):
                f[sel] = part
    X = None
    if keep:
        X = Ztr[:, :, :nc] if in_nodes else np.empty_like(Ztr)
        for v in sel if not in_nodes else ():
            _modal_to_nodes(Ztr[v], Str[v], ops.Qx[v], X[v])
    return X, Str, Ptr, Qtr, x_first, x_last, sums, ops, (Ztr if extra else None)


def _reference_flow(st, val, bank: Bank, v: int, ramp: np.ndarray) -> dict | None:
    """The window links of variant ``v`` as :func:`kernels.step_reference` takes them."""
    if not st.nfl:
        return None
    room, far, bk, bj, ja, jb = window_ends(st)
    n = bank.data.shape[0]
    wind = np.where(bank.wcol[v] >= 0, bank.data[:, np.maximum(bank.wcol[v], 0)],
                    bank.wconst[v]).reshape(n, st.nfl)
    return {"coef": val.flow_coef, "fac": val.flow_fac, "a": room, "b": far, "bk": bk,
            "bj": bj, "bramp": ramp[bj], "ja": ja, "jb": jb, "wind": wind,
            "wramp": val.flow_wind_ramp, "th": st.thermostat_node,
            "pcols": st.nb + st.nsrc + np.arange(st.m)}


def _step_numpy(st, vals, disc, F, bank, x0, s0, u0, warm, errors, ramp, u_before):
    """The reference kernel, variant by variant (traces only)."""
    V, nc, m, ns = len(vals), st.nc, st.m, vals[0].n_states
    n = bank.data.shape[0]
    nin = st.nb + st.nsrc
    Rx, Ru = thermostat_rows(st, disc.Yx, disc.Yu)
    X = np.zeros((V, n - warm, nc))
    S = np.zeros((V, n - warm), dtype=np.int64)
    P = np.zeros((V, n - warm, m))
    Q = np.zeros((V, n - warm, st.nfl))
    x_first = np.zeros((V, nc))
    x_last = np.zeros((V, nc))
    pcols = nin + np.arange(m)
    for v, p in enumerate(vals):
        if errors[v] is not None:
            continue
        mats = {}
        for s in range(ns):
            Phi, Gam, _, Gambar, _ = disc.matrices(v, s)
            mats[s] = (Phi, Gam, Gambar)
            Mv = Rx[v, s] @ Gam[:, pcols] + Ru[v, s][:, pcols]
            if m and (np.diag(Mv) <= 0).any():
                bad = st.thermostat_names[int(np.argmin(np.diag(Mv)))]
                errors[v] = NetworkError(f"thermostat {bad!r}: its node does not respond to "
                                         "heating within a step; attach it to a node with a "
                                         "conductive path")
        if errors[v] is not None:
            continue

        U = np.zeros((n, st.nu))
        U[:, :nin] = np.where(bank.ucol[v] >= 0, bank.data[:, np.maximum(bank.ucol[v], 0)],
                              bank.uconst[v])
        hsp = np.where(bank.hcol[v] >= 0, bank.data[:, np.maximum(bank.hcol[v], 0)],
                       bank.hconst[v])
        csp = np.where(bank.ccol[v] >= 0, bank.data[:, np.maximum(bank.ccol[v], 0)],
                       bank.cconst[v])
        sig = np.where(bank.scol[v] >= 0, bank.data[:, np.maximum(bank.scol[v], 0)],
                       bank.sconst[v])
        sched = (bank.data[:, bank.schcol[v]] if bank.schcol[v] >= 0
                 else np.full(n, bank.schconst[v]))
        terms = st.terms.copy()
        terms[:, 5] = p.thresholds
        X[v], S[v], P[v], x_first[v], Q[v] = kernels.step_reference(
            mats, Rx[v], Ru[v], disc.Yx[v], disc.Yu[v], p.source_factor, x0[v], s0[v], U,
            sched, hsp.reshape(n, m), csp.reshape(n, m), sig.reshape(n, -1), p.qh, p.qc,
            p.sw_init.copy(), st.has_off, terms, st.term_clause, st.clause_cond, st.nb,
            st.nsrc, warm, ramp[v], u_before[v], flow=_reference_flow(st, p, bank, v, ramp[v]))
        x_last[v] = X[v, -1] if n > warm else x_first[v]
    return X, S, P, Q, x_first, x_last


def step_group(st, vals: list, store, warm: int, *, keep: bool, kernel: str = "auto",
               comfort: int | None = None, thr_h=(), thr_d=(), u_before=None,
               extra: int = 0) -> GroupRun:
    """Discretise, start and step the variants ``vals`` of structure ``st``.

    Parameters
    ----------
    st : Structure
    vals : list of Values
        The variants (same number of states).
    store : ColumnStore
        Their time series.
    warm : int
        Warm-up steps run before the reported ones.
    keep : bool
        Keep hourly traces (else only sums over the reported steps; numba kernel only).
    kernel : {"auto", "numba", "numpy"}
        Compiled kernel or the numpy reference (traces only).
    comfort : int, optional
        Free-node index whose end temperature is summed (hours and degree-hours above
        ``thr_h``/``thr_d`` [°C], max/min/mean) — without ``keep``.
    thr_h : sequence of float
        Thresholds [°C] for the hours (steps) the comfort node spends above each.
    thr_d : sequence of float
        Thresholds [°C] for the comfort node's degree-hours (K·steps) above each.
    u_before : ndarray (V, nu), optional
        Inputs before the first row (first-order-hold inputs start from them); default the
        first row's (an input constant before the run).
    extra : int, default 0
        Columns to leave free after the capacitive temperatures in each row of the traces
        (``keep``, compiled kernel in node coordinates), for a caller that builds a table
        around them without copying them (:attr:`GroupRun.wide`).

    Returns
    -------
    GroupRun
    """
    auto = kernel == "auto"
    kernel = resolve_kernel(kernel)
    V = len(vals)
    C = np.array([p.C for p in vals]).reshape(V, st.nc)
    G = np.array([p.G for p in vals]).reshape(V, vals[0].n_states, st.nl)
    disc = discretise_reused(st, C, G, store.step_s)    # an equal earlier one, or fresh
    errors = list(disc.errors)
    ok = np.array([e is None for e in errors], dtype=bool)
    bank = make_bank(st, vals, store, warm)
    F = input_factors(st, vals)
    x0, s0, u0 = start_states(st, vals, disc, bank, ok)
    ramp = np.array([p.ramp for p in vals], dtype=bool).reshape(V, st.nb + st.nsrc)
    if u_before is None:
        u_before = u0
    u_before = np.ascontiguousarray(u_before, dtype=float)
    if (auto and kernel == "numba" and keep and V == 1 and st.nc <= WARM_START_NODES
            and not kernel_ready()):
        # first run in a fresh process: build the compiled kernel in the background (same
        # argument types) and step this run with the numpy reference (same numbers to ~1e-12)
        args = (st, vals, disc, F, bank, x0.copy(), s0.copy(), u0.copy(), warm, keep, comfort,
                thr_h, thr_d, list(errors), ramp, u_before.copy())
        compile_in_background(lambda: _step_numba(*args))
        kernel = "numpy"
    if kernel == "numpy":
        if not keep:
            raise ValueError("the numpy reference kernel keeps traces only (keep=True)")
        X, S, P, Q, xf, xl = _step_numpy(st, vals, disc, F, bank, x0, s0, u0, warm, errors,
                                         ramp, u_before)
        return GroupRun(X, S, P, xf, xl, {}, disc, None, F, errors, kernel="numpy", Q=Q)
    X, S, P, Q, xf, xl, sums, ops, wide = _step_numba(st, vals, disc, F, bank, x0, s0, u0,
                                                      warm, keep, comfort, thr_h, thr_d,
                                                      errors, ramp, u_before, extra)
    if keep:
        sums = {}
    return GroupRun(X, S, P, xf, xl, sums, disc, ops, F, errors, Q=Q, wide=wide)
