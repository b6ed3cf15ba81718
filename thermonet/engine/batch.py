"""Batched stepping of many network variants along a leading variant axis.

Variants whose compiled *structure* is identical (same free nodes and which of them have a
capacity, same boundaries, links, sources, thermostats, switches and switch conditions, same
number of cached states) form a *group*. A group is discretised in one vectorised pass
(batched Schur complement, batched symmetric eigenproblem) and stepped together by one
numba kernel that runs the variants of a chunk in parallel (``numba.prange``). Each variant
follows exactly the algorithm of :mod:`thermonet.kernels`:

1. switch positions from the end-of-previous-step temperatures and this step's signals;
2. state ``s`` = scheduled state × switch bits; source powers scaled by the switch factors;
3. free response ``x⁺ = Φ_s x + Γ_s u`` (exact zero-order hold, :func:`solvers.discretise_exact`);
4. thermostat powers by superposition, projected Gauss–Seidel under the capacity limits;
5. ``x ← x⁺ + Γ_s[:, P] P``.

Annual results are accumulated inside the kernel, so hourly traces are not stored unless
asked for: heating and cooling energy per thermostat, the peaks of their totals, hours and
degree-hours above thresholds at a comfort node, and — for the energy balance by path — the
per-state sums ``Σ x_start`` and ``Σ u`` over the reported steps. Because the step mean is
linear in the start state and the inputs, ``x̄_n = Φ̄_s x_start,n + Γ̄_s u_n``, the per-state
sums give the annual link energies exactly (to rounding):

.. math::
    E_l = h \\sum_s G_{s,l}\\,\\big(\\bar T_{s,a_l} − \\bar T_{s,b_l}\\big),\\qquad
    \\bar T_s = \\sum_{n:\\,s_n = s} \\bar T_n = Φ̄_s \\sum x_{start} + Γ̄_s \\sum u

with massless nodes ``ȳ = Y_x x̄ + Y_u u`` and boundaries read from ``u``; the stored energy
change is ``−Σ C_i (x_i,end − x_i,start)``. These are the same numbers as
``Results.balance(nodes).sum()`` of one-by-one :func:`thermonet.simulate` runs.

Inputs that are the same for many variants (weather columns, one gains profile shared by
every variant) are stored once per chunk in a column *bank*; constants are not expanded to
time series at all. Variants are normally read straight from their :class:`Network` once a
template of the group has been compiled with :func:`thermonet.engine.compile.compile_network`; a
variant with scheduled (Series) link conductances is compiled in full.

References
----------
.. [1] Franklin, G. F., Powell, J. D., Workman, M. L., Digital Control of Dynamic Systems,
   3rd ed., Addison-Wesley, 1998, §4.3 (zero-order-hold equivalent of a continuous system).
.. [2] Golub, G. H., Van Loan, C. F., Matrix Computations, 4th ed., 2013, §8.1
   (symmetric eigenproblem).
"""

from __future__ import annotations

import hashlib
import math
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from thermonet.constants import J_PER_KWH
from thermonet.controls import HourWindow, Signal
from thermonet.engine import batch_simd, kernels
from thermonet.engine.compile import (
    Compiled,
    compile_network,
    connected_to_boundary,
    series_or_constant,
    sim_index,
)
from thermonet.engine.simulate import (
    MODAL_DEFECT_LIMIT,
    Discrete,
    Trajectory,
    phi1,
    phi2,
    zoh_doubling,
)
from thermonet.errors import NetworkError

#: Default memory budget of one batch of variants [bytes] (arrays of the kernel and of the
#: batched discretisation; the column bank; traces when kept).
DEFAULT_MAX_BYTES = 200e6

#: Largest number of variants stepped in one kernel call.
MAX_CHUNK = 4096

__all__ = ["BatchOutput", "run_batch", "structure_key", "bytes_per_variant", "DEFAULT_MAX_BYTES"]


# =============================================================================== structure
def _digest(series: pd.Series) -> str:
    """Content hash of a Series' values and time stamps (identifies equal signals)."""
    h = hashlib.blake2b(digest_size=16)
    h.update(np.ascontiguousarray(np.asarray(series, dtype=float)).tobytes())
    h.update(np.ascontiguousarray(series.index.as_unit("ns").asi8).tobytes())
    return h.hexdigest()


def _condition_key(cond, ordinals: dict):
    if cond is None:
        return None

    def ref(r):
        if r is None or isinstance(r, str):
            return r
        if isinstance(r, HourWindow):
            return ("hours", r.start, r.end)
        if isinstance(r, Signal):
            k = ordinals.setdefault(id(r), len(ordinals))
            return ("signal", k, _digest(r.series))
        return ("object", id(r))

    return tuple(tuple((ref(t.a), ref(t.b), t.op) for t in clause) for clause in cond.clauses)


def structure_key(net) -> tuple:
    """Hashable description of what must be equal for two networks to be stepped together.

    Numbers (capacitances, conductances, source powers, setpoints, limits, switch factors and
    thresholds, initial temperatures) are *not* part of the key; names, connectivity, paths,
    which nodes are massless, which setpoints exist, the switch conditions' references and
    operators are. Signals in conditions are compared by content.
    """
    ordinals: dict = {}
    return (
        tuple((n.name, n.capacitance > 0) for n in net.nodes.values()),
        tuple(net.boundaries),
        tuple((l.name, l.a, l.b, l.path, isinstance(l.conductance, pd.Series))
              for l in net.links.values()),
        tuple((s.name, s.node, s.path) for s in net.sources.values()),
        tuple((t.name, t.node, t.heating_setpoint is None, t.cooling_setpoint is None)
              for t in net.thermostats.values()),
        tuple((s.name, tuple(s.link_factors), tuple(s.source_factors),
               _condition_key(s.on, ordinals), _condition_key(s.off, ordinals))
              for s in net.switches.values()),
    )


def _condition_terms(net):
    """Every term of every switch condition, in the order :func:`compile_network` reads them."""
    for s in net.switches.values():
        for cond in (s.on, s.off):
            if cond is None:
                continue
            for clause in cond.clauses:
                yield from clause


def _signal_refs(net) -> list:
    """Signal columns in the order :func:`compile_network` creates them."""
    seen, out = set(), []
    for t in _condition_terms(net):
        for r in (t.a, t.b):
            if r is None:
                continue
            if isinstance(r, str):
                if r not in net.boundaries:
                    continue
                key = ("boundary", r)
            elif isinstance(r, Signal):
                key = ("signal", id(r))
            elif isinstance(r, HourWindow):
                key = ("hours", r.start, r.end)
            else:  # pragma: no cover - compile_network refuses it first
                raise TypeError(r)
            if key not in seen:
                seen.add(key)
                out.append(key)
    return out


def _thresholds(net) -> np.ndarray:
    return np.array([t.threshold for t in _condition_terms(net)], dtype=float)


# ============================================================================ column bank
class ColumnStore:
    """Time series [SI] on the simulation index, stored once and referenced by key.

    A column spec is either a float (a constant, never expanded) or a key into the store.
    """

    def __init__(self, weather: pd.DataFrame, factor: int):
        self.weather = weather
        self.factor = factor
        self.cols: dict = {}
        self._refs: dict = {}  # keeps Series alive so that id() keys stay unique

    def weather_col(self, name: str, what: str):
        key = ("weather", name)
        if key not in self.cols:
            self.cols[key] = series_or_constant(name, self.weather, self.factor, what,
                                              column_ok=True)
        return key

    def series_col(self, series: pd.Series, what: str):
        key = ("series", id(series))
        if key not in self.cols:
            self.cols[key] = series_or_constant(series, self.weather, self.factor, what)
            self._refs[key] = series
        return key

    def array_col(self, values: np.ndarray):
        """Constant → float; otherwise a content-hashed key."""
        values = np.asarray(values, dtype=float)
        v0 = values[0]
        if np.isnan(v0) and np.isnan(values).all():
            return float("nan")
        if (values == v0).all():
            return float(v0)
        key = ("array", hashlib.blake2b(values.tobytes(), digest_size=16).hexdigest())
        if key not in self.cols:
            self.cols[key] = values.copy()
        return key

    def value(self, spec) -> np.ndarray | float:
        return spec if isinstance(spec, float) else self.cols[spec]


def _value_spec(store: ColumnStore, value, what: str):
    if isinstance(value, pd.Series):
        return store.series_col(value, what)
    return float(value)


# ================================================================================= layout
@dataclass
class Layout:
    """Structure shared by every variant of a group (taken from a compiled template)."""

    key: tuple
    comp: Compiled                 # the template (index, names, structural arrays)
    net: object                    # the template network (keeps Signal objects alive)
    fast: bool                     # variants may be read from their Network directly
    signal_refs: list
    template_signal_specs: list

    def __post_init__(self):
        c = self.comp
        self.nc, self.nf, self.nb = c.nc, c.nf, c.nb
        self.na = c.nf - c.nc
        self.nsrc, self.m, self.nu = c.nsrc, c.m, c.nu
        self.nsw = len(c.switch_names)
        self.ns = c.n_states
        self.nl = len(c.link_names)
        self.nsig = c.signals.shape[1]
        self.nterms = c.terms.shape[0]


@dataclass
class VariantParams:
    """The numbers of one variant; time series as column specs (see :class:`ColumnStore`)."""

    C: np.ndarray          # (nc,) [J/K]
    G: np.ndarray          # (ns, nl) [W/K]
    qh: np.ndarray         # (m,) [W]
    qc: np.ndarray
    SSF: np.ndarray        # (nsw, nsrc)
    SSF_off: np.ndarray
    sw_init: np.ndarray    # (nsw,) bool
    thresholds: np.ndarray  # (nterms,)
    initial: list          # [(index into x, °C)]
    ucols: list            # nb + nsrc specs
    hcols: list            # m specs (NaN = no heating)
    ccols: list
    scols: list            # nsig specs
    sched: object          # spec of the scheduled-state id
    own_columns: int = 0   # columns stored for this variant only (memory estimate)
    comp: Compiled | None = None
    net: object = None


def params_from_compiled(comp: Compiled, store: ColumnStore, net=None,
                         keep_comp=False) -> VariantParams:
    """Variant numbers from a full :func:`compile_network` result."""
    before = len(store.cols)
    nb, nsrc = comp.nb, comp.nsrc
    ucols = [store.array_col(comp.U[:, j]) for j in range(nb + nsrc)]
    hcols = [store.array_col(comp.hsp[:, j]) for j in range(comp.m)]
    ccols = [store.array_col(comp.csp[:, j]) for j in range(comp.m)]
    scols = [store.array_col(comp.signals[:, j]) for j in range(comp.signals.shape[1])]
    sched = store.array_col(comp.sched_of_step.astype(float))
    initial = [(i, float(comp.initial[n])) for i, n in enumerate(comp.free[:comp.nc])
               if n in comp.initial]
    return VariantParams(
        C=comp.C.copy(), G=comp.G_states.copy(), qh=comp.qh.copy(), qc=comp.qc.copy(),
        SSF=comp.switch_source_factor.copy(), SSF_off=comp.switch_source_factor_off.copy(),
        sw_init=comp.switch_initial.copy(), thresholds=comp.terms[:, 5].copy(),
        initial=initial, ucols=ucols, hcols=hcols, ccols=ccols, scols=scols, sched=sched,
        own_columns=len(store.cols) - before, comp=comp if keep_comp else None, net=net)


def params_fast(net, layout: Layout, store: ColumnStore) -> VariantParams:
    """Variant numbers read from the Network, for a network of the layout's structure.

    Mirrors :func:`thermonet.engine.compile.compile_network` for networks without scheduled link
    conductances (tested against it); raises the same errors for invalid values.
    """
    c = layout.comp
    before = len(store.cols)
    nodes = net.nodes
    C = np.array([nodes[n].capacitance for n in c.free[:c.nc]], dtype=float)
    links = list(net.links.values())
    base = np.array([float(l.conductance) for l in links], dtype=float)
    nsw, nl, nsrc = layout.nsw, layout.nl, layout.nsrc
    link_pos = {name: i for i, name in enumerate(c.link_names)}
    src_pos = {name: i for i, name in enumerate(c.source_names)}
    SLF = np.ones((nsw, nl))
    SLF_off = np.ones((nsw, nl))
    SSF = np.ones((nsw, nsrc))
    SSF_off = np.ones((nsw, nsrc))
    sw = list(net.switches.values())
    for k, s in enumerate(sw):
        for ln, (f_off, f_on) in s.link_factors.items():
            SLF[k, link_pos[ln]], SLF_off[k, link_pos[ln]] = f_on, f_off
        for sn, (f_off, f_on) in s.source_factors.items():
            SSF[k, src_pos[sn]], SSF_off[k, src_pos[sn]] = f_on, f_off
    G = np.empty((1 << nsw, nl))
    for bits in range(1 << nsw):
        gg = base.copy()
        for k in range(nsw):
            gg *= SLF[k] if bits >> k & 1 else SLF_off[k]
        G[bits] = gg
    if (G <= 0).any():
        for s_id, g in enumerate(G):
            ok = connected_to_boundary(c.nf, c.link_a, c.link_b, g, c.nb)
            if not ok.all():
                lost = [c.free[i] for i in np.flatnonzero(~ok)]
                where = "" if s_id == 0 else " in a scheduled or switched state"
                raise NetworkError(
                    f"node(s) {', '.join(map(repr, lost))} have no path to any boundary"
                    f"{where}; the system would be singular. Link them (with G > 0) to a "
                    "boundary or to a connected node")
    ucols = []
    for b in c.boundaries:
        t = net.boundaries[b].temperature
        if isinstance(t, str):
            ucols.append(store.weather_col(t, f"boundary {b!r}"))
        else:
            ucols.append(_value_spec(store, t, f"boundary {b!r}"))
    for s in net.sources.values():
        ucols.append(_value_spec(store, s.power, f"source {s.name!r} power"))
    hcols, ccols = [], []
    th = list(net.thermostats.values())
    for t in th:
        hcols.append(float("nan") if t.heating_setpoint is None else
                     _value_spec(store, t.heating_setpoint,
                                 f"thermostat {t.name!r} heating_setpoint"))
        ccols.append(float("nan") if t.cooling_setpoint is None else
                     _value_spec(store, t.cooling_setpoint,
                                 f"thermostat {t.name!r} cooling_setpoint"))
    for t, hs, cs in zip(th, hcols, ccols, strict=True):
        if t.heating_setpoint is None or t.cooling_setpoint is None:
            continue
        if np.any(np.asarray(store.value(hs)) > np.asarray(store.value(cs))):
            raise NetworkError("a thermostat's heating setpoint exceeds its cooling setpoint; "
                               "keep heating ≤ cooling at every step")
    bpos = {b: j for j, b in enumerate(c.boundaries)}
    scols = []
    for j, ref in enumerate(layout.signal_refs):
        if ref[0] == "boundary":
            scols.append(ucols[bpos[ref[1]]])
        else:
            scols.append(layout.template_signal_specs[j])
    initial = [(i, float(nodes[n].initial)) for i, n in enumerate(c.free[:c.nc])
               if nodes[n].initial is not None]
    return VariantParams(
        C=C, G=G, qh=np.array([t.max_heating_w for t in th], dtype=float),
        qc=np.array([t.max_cooling_w for t in th], dtype=float), SSF=SSF, SSF_off=SSF_off,
        sw_init=np.array([s.initial for s in sw], dtype=bool), thresholds=_thresholds(net),
        initial=initial, ucols=ucols, hcols=hcols, ccols=ccols, scols=scols, sched=0.0,
        own_columns=len(store.cols) - before)


def make_layout(net, key, comp: Compiled, store: ColumnStore) -> Layout:
    fast = not any(isinstance(l.conductance, pd.Series) for l in net.links.values())
    refs = _signal_refs(net)
    specs = [store.array_col(comp.signals[:, j]) for j in range(comp.signals.shape[1])]
    if len(refs) != len(specs):  # pragma: no cover - a change in compile_network
        fast = False
    return Layout(key=key, comp=comp, net=net, fast=fast, signal_refs=refs,
                  template_signal_specs=specs)


# ====================================================================== discretisation
def bytes_per_variant(layout: Layout, n_steps: int, keep_traces: bool = False,
                      own_columns: int = 0) -> float:
    """Rough memory [bytes] one variant of a group needs in a batch (with temporaries)."""
    nc, na, nu, m, ns = layout.nc, layout.na, layout.nu, layout.m, layout.ns
    npts = layout.nf + layout.nb
    per_state = (5 * nc * nc + 5 * nc * nu + 2 * m * (nc + nu + m) + 2 * na * (nc + nu)
                 + 2 * npts * npts + 2 * layout.nf * nu + 2 * (nc + nu) + layout.nl)
    b = 8.0 * (ns * per_state + own_columns * n_steps + 8 * (nc + nu + m) + 64)
    if keep_traces:
        b += 8.0 * n_steps * (2 * nc + nu + 1) * 4  # traces, then the tables of Results
    return b


@dataclass
class BatchDiscrete:
    """Exact ZOH matrices of every variant (axis 0) and state (axis 1) of a group."""

    Phi: np.ndarray
    Gam: np.ndarray
    Phibar: np.ndarray
    Gambar: np.ndarray
    Yx: np.ndarray
    Yu: np.ndarray
    K: np.ndarray
    E: np.ndarray
    lam: np.ndarray
    Q: np.ndarray
    W: np.ndarray
    Rx: np.ndarray
    Ru: np.ndarray
    M: np.ndarray
    errors: list = field(default_factory=list)   # per variant: None or an exception


def discretise_batch(layout: Layout, C: np.ndarray, G: np.ndarray, h: float) -> BatchDiscrete:
    """Batched twin of :func:`thermonet.engine.simulate.discretise_exact` and ``control_maps``.

    Parameters
    ----------
    layout : Layout
    C : ndarray (V, nc)
        Capacitances [J/K].
    G : ndarray (V, ns, nl)
        Link conductances per state [W/K].
    h : float
        Step [s].

    Notes
    -----
    Same equations as :func:`thermonet.engine.simulate.discretise_exact` (symmetric modal form of
    ``S = C^{-1/2} K C^{-1/2}``), evaluated on stacks of matrices.
    """
    c = layout.comp
    V, ns, nl = G.shape
    nc, nf, nb, nu, m = layout.nc, layout.nf, layout.nb, layout.nu, layout.m
    npts = nf + nb
    Bm = np.zeros((nl, npts))
    Bm[np.arange(nl), c.link_a] += 1.0
    Bm[np.arange(nl), c.link_b] -= 1.0
    L = np.matmul(Bm.T[None, None] * G[:, :, None, :], Bm)           # (V, ns, npts, npts)
    Lff, Lfb = L[..., :nf, :nf], L[..., :nf, nf:]
    E = np.zeros((V, ns, nf, nu))
    E[..., :nb] = -Lfb
    for j, node in enumerate(c.source_node):
        E[..., node, nb + j] = 1.0
    for j, node in enumerate(c.thermostat_node):
        E[..., node, nb + layout.nsrc + j] = 1.0
    Lcc, Lca = Lff[..., :nc, :nc], Lff[..., :nc, nc:]
    Lac, Laa = Lff[..., nc:, :nc], Lff[..., nc:, nc:]
    Ec, Ea = E[..., :nc, :], E[..., nc:, :]
    if layout.na:
        Yx = -np.linalg.solve(Laa, Lac)
        Yu = np.linalg.solve(Laa, Ea)
        K = Lcc + Lca @ Yx
        Er = Ec + (-Lca) @ Yu
    else:
        Yx = np.zeros((V, ns, 0, nc))
        Yu = np.zeros((V, ns, 0, nu))
        K, Er = Lcc, Ec
    K = 0.5 * (K + np.swapaxes(K, -1, -2))
    errors: list = [None] * V
    if nc:
        cs = np.sqrt(C)
        S = K / (cs[:, None, :, None] * cs[:, None, None, :])
        lam, Vec = np.linalg.eigh(0.5 * (S + np.swapaxes(S, -1, -2)))
        lmin = lam.min(axis=(1, 2))
        for v in np.flatnonzero(~(lmin > 0)):
            errors[v] = NetworkError(
                "the network's conductance matrix is singular or indefinite (smallest "
                f"eigenvalue {lmin[v]:.3g}); check for nodes without a path to a boundary")
        Q = Vec / cs[:, None, :, None]
        QT = np.swapaxes(Q, -1, -2)
        W = QT @ Er
        x = lam * h
        QC = QT * C[:, None, None, :]
        e1 = phi1(x)
        Phi = (Q * np.exp(-x)[..., None, :]) @ QC
        Gam = (Q * (h * e1)[..., None, :]) @ W
        Phibar = (Q * e1[..., None, :]) @ QC
        Gambar = (Q * (h * phi2(x))[..., None, :]) @ W
        # the same check and fallback as solvers.discretise_exact, variant by variant
        defect = np.abs(Phi.sum(axis=-1) + Gam[..., :nb].sum(axis=-1) - 1.0).max(axis=-1)
        for v, si in zip(*np.nonzero(defect > MODAL_DEFECT_LIMIT), strict=True):
            if errors[v] is None:
                Phi[v, si], Gam[v, si], Phibar[v, si], Gambar[v, si] = zoh_doubling(
                    K[v, si], Er[v, si], C[v], h, nb)
    else:
        lam = np.zeros((V, ns, 0))
        Q = np.zeros((V, ns, 0, 0))
        W = np.zeros((V, ns, 0, nu))
        Phi = Phibar = np.zeros((V, ns, 0, 0))
        Gam = Gambar = np.zeros((V, ns, 0, nu))
    Rx = np.zeros((V, ns, m, nc))
    Ru = np.zeros((V, ns, m, nu))
    for i, node in enumerate(c.thermostat_node):
        if node < nc:
            Rx[..., i, node] = 1.0
        else:
            Rx[..., i, :] = Yx[..., node - nc, :]
            Ru[..., i, :] = Yu[..., node - nc, :]
    pcols = nb + layout.nsrc + np.arange(m)
    M = Rx @ Gam[..., pcols] + Ru[..., pcols]
    if m:
        dmin = np.diagonal(M, axis1=-2, axis2=-1).min(axis=(1, 2))
        for v in np.flatnonzero(~(dmin > 0)):
            if errors[v] is None:
                d = np.diagonal(M[v], axis1=-2, axis2=-1).min(axis=0)
                bad = c.thermostat_names[int(np.argmin(d))]
                errors[v] = NetworkError(
                    f"thermostat {bad!r}: its node does not respond to heating within a "
                    "step; attach it to a node with a conductive path")
    return BatchDiscrete(Phi, Gam, Phibar, Gambar, Yx, Yu, K, Er, lam, Q, W, Rx, Ru, M, errors)


# ================================================================================ kernel
def _fill(out, bank, k, cols, const, v):
    for j in range(out.shape[0]):
        cj = cols[v, j]
        out[j] = bank[k, cj] if cj >= 0 else const[v, j]


def _step_batch(PhiT, GamT, Rx, Ru, M, Yx, Yu, x0, bank,
                ucol, uconst, hcol, hconst, ccol, cconst, scol, sconst, schcol, schconst,
                qh, qc, SSF, SSF_off, sw_init, has_off, terms, term_clause, clause_cond,
                nb, warm, cidx, thr_h, thr_d,
                heat, cool, peak_h, peak_c, hrs, dgh, tstat, xs_sum, u_sum, cnt,
                x_first, x_last, keep, Xtr, Utr, Str):  # pragma: no cover - compiled
    """Step every variant (axis 0) over every row of ``bank``; accumulate annual sums.

    ``PhiT[v, s]`` and ``GamT[v, s]`` are the transposes of Φ and Γ (column access).
    Column ``j`` of an input of variant ``v`` is ``bank[:, cols[v, j]]`` or, where that is
    −1, the constant ``const[v, j]``. Steps ``k ≥ warm`` are reported.
    """
    V = x0.shape[0]
    n = bank.shape[0]
    nc = x0.shape[1]
    nu = GamT.shape[2]
    m = Rx.shape[2]
    na = Yx.shape[2]
    nsw = sw_init.shape[1]
    nsrc = SSF.shape[2]
    nsig = scol.shape[1]
    nin = nb + nsrc
    nth = thr_h.shape[0]
    ndh = thr_d.shape[0]
    for v in numba_prange(V):
        x = x0[v].copy()
        x1 = np.zeros(nc)
        u = np.zeros(nu)
        on = sw_init[v].copy()
        temps = np.zeros(nc + na)
        sig = np.zeros(nsig)
        hs = np.zeros(m)
        cs = np.zeros(m)
        T0 = np.zeros(m)
        P = np.zeros(m)
        for i in range(nc):
            temps[i] = x[i]
        if na > 0 and nsw > 0:
            for j in range(nin):
                cj = ucol[v, j]
                u[j] = bank[0, cj] if cj >= 0 else uconst[v, j]
            for i in range(na):
                acc = 0.0
                for j in range(nc):
                    acc += Yx[v, 0, i, j] * x[j]
                for j in range(nin):
                    acc += Yu[v, 0, i, j] * u[j]
                temps[nc + i] = acc
        tmax = -np.inf
        tmin = np.inf
        tsum = 0.0
        for k in range(n):
            # 1. switches
            bits = 0
            if nsw > 0:
                _fill(sig, bank, k, scol, sconst, v)
                for w in range(nsw):
                    if on[w]:
                        if has_off[w]:
                            on[w] = not kernel_eval_cond(2 * w + 1, terms[v], term_clause,
                                                         clause_cond, temps, sig)
                        else:
                            on[w] = kernel_eval_cond(2 * w, terms[v], term_clause,
                                                     clause_cond, temps, sig)
                    else:
                        on[w] = kernel_eval_cond(2 * w, terms[v], term_clause, clause_cond,
                                                 temps, sig)
                    if on[w]:
                        bits += 1 << w
            c0 = schcol[v]
            sch = int(bank[k, c0]) if c0 >= 0 else int(schconst[v])
            s = sch * (1 << nsw) + bits
            # 2. inputs
            for j in range(nin):
                cj = ucol[v, j]
                u[j] = bank[k, cj] if cj >= 0 else uconst[v, j]
            for j in range(m):
                u[nin + j] = 0.0
            for w in range(nsw):
                for j in range(nsrc):
                    u[nb + j] *= SSF[v, w, j] if on[w] else SSF_off[v, w, j]
            # 3. free response
            Ph = PhiT[v, s]
            Ga = GamT[v, s]
            for i in range(nc):
                x1[i] = 0.0
            for j in range(nc):
                xj = x[j]
                for i in range(nc):
                    x1[i] += Ph[j, i] * xj
            for j in range(nin):
                uj = u[j]
                for i in range(nc):
                    x1[i] += Ga[j, i] * uj
            # 4.-5. thermostats
            if m > 0:
                for i in range(m):
                    acc = 0.0
                    for j in range(nc):
                        acc += Rx[v, s, i, j] * x1[j]
                    for j in range(nin):
                        acc += Ru[v, s, i, j] * u[j]
                    T0[i] = acc
                    ch = hcol[v, i]
                    hs[i] = bank[k, ch] if ch >= 0 else hconst[v, i]
                    cc = ccol[v, i]
                    cs[i] = bank[k, cc] if cc >= 0 else cconst[v, i]
                kernel_control(T0, M[v, s], hs, cs, qh[v], qc[v], P)
                for j in range(m):
                    pj = P[j]
                    col = nin + j
                    for i in range(nc):
                        x1[i] += Ga[col, i] * pj
                    u[col] = pj
            # annual sums over the reported steps
            if k >= warm:
                if k == warm:
                    for i in range(nc):
                        x_first[v, i] = x[i]
                for i in range(nc):
                    xs_sum[v, s, i] += x[i]
                for j in range(nu):
                    u_sum[v, s, j] += u[j]
                cnt[v, s] += 1.0
                if m > 0:
                    th = 0.0
                    tc = 0.0
                    for j in range(m):
                        pj = u[nin + j]
                        if pj > 0.0:
                            heat[v, j] += pj
                            th += pj
                        elif pj < 0.0:
                            cool[v, j] -= pj
                            tc -= pj
                    if th > peak_h[v]:
                        peak_h[v] = th
                    if tc > peak_c[v]:
                        peak_c[v] = tc
                if cidx >= 0:
                    if cidx < nc:
                        tc_ = x1[cidx]
                    else:
                        r = cidx - nc
                        tc_ = 0.0
                        for j in range(nc):
                            tc_ += Yx[v, s, r, j] * x1[j]
                        for j in range(nu):
                            tc_ += Yu[v, s, r, j] * u[j]
                    for t in range(nth):
                        if tc_ > thr_h[t]:
                            hrs[v, t] += 1.0
                    for t in range(ndh):
                        if tc_ > thr_d[t]:
                            dgh[v, t] += tc_ - thr_d[t]
                    if tc_ > tmax:
                        tmax = tc_
                    if tc_ < tmin:
                        tmin = tc_
                    tsum += tc_
                if keep:
                    kk = k - warm
                    for i in range(nc):
                        Xtr[v, kk, i] = x1[i]
                    for j in range(nu):
                        Utr[v, kk, j] = u[j]
                    Str[v, kk] = s
            for i in range(nc):
                x[i] = x1[i]
            if nsw > 0:
                for i in range(nc):
                    temps[i] = x[i]
                for i in range(na):
                    acc = 0.0
                    for j in range(nc):
                        acc += Yx[v, s, i, j] * x[j]
                    for j in range(nu):
                        acc += Yu[v, s, i, j] * u[j]
                    temps[nc + i] = acc
        for i in range(nc):
            x_last[v, i] = x[i]
        tstat[v, 0] = tmax
        tstat[v, 1] = tmin
        tstat[v, 2] = tsum


if kernels.HAVE_NUMBA:
    import numba

    numba_prange = numba.prange
    kernel_eval_cond = kernels._eval_cond_nb
    kernel_control = kernels._control_nb
    _fill = numba.njit(cache=True, nogil=True)(_fill)
    step_batch = numba.njit(parallel=True, cache=True, nogil=True)(_step_batch)
    HAVE_NUMBA = True
else:  # pragma: no cover
    numba_prange = range
    kernel_eval_cond = kernels.eval_condition
    kernel_control = kernels.control_powers
    step_batch = _step_batch
    HAVE_NUMBA = False


# ================================================================================ driver
@dataclass
class BatchOutput:
    """Per-variant annual results of :func:`run_batch` (rows in the order of the networks).

    Attributes
    ----------
    table : pandas.DataFrame
        One row per network: ``heating_kwh``, ``cooling_kwh`` [kWh], ``peak_heating_w``,
        ``peak_cooling_w`` [W]; at the comfort node ``hours_above_<T>`` [h],
        ``degree_hours_above_<T>`` [K·h], ``max_temperature_c``, ``min_temperature_c``,
        ``mean_temperature_c`` [°C] (end-of-step temperatures, as ``Results.temperatures``);
        ``reported_hours`` [h]; ``link:<name>`` annual link energies [kWh] (positive from the
        link's node a to node b) when asked; ``balance…:<path>`` [kWh] (see
        :func:`run_batch`). Rows of failed networks are NaN.
    errors : list
        Per network: None, or the exception that stopped it.
    traces : list
        Per network: a :class:`thermonet.Results` when ``keep_traces=True``, else None.
    """

    table: pd.DataFrame
    errors: list
    traces: list


def _balance_sets(balance_nodes):
    if balance_nodes is None:
        return {}
    if isinstance(balance_nodes, str):
        return {"": [balance_nodes]}
    if isinstance(balance_nodes, dict):
        return {str(k): ([v] if isinstance(v, str) else list(v))
                for k, v in balance_nodes.items()}
    return {"": list(balance_nodes)}


def _balance_prefix(label: str) -> str:
    return "balance:" if label == "" else f"balance[{label}]:"


def _check_nodes(layout: Layout, nodes, what):
    c = layout.comp
    for n in nodes:
        if n in c.boundaries:
            raise NetworkError(f"{what}: {n!r} is a boundary; give free nodes only")
        if n not in c.free:
            raise NetworkError(f"{what}: unknown node {n!r}; known: {', '.join(c.free)}")


def _column_arrays(specs_per_variant, store, index_of):
    """(V, k) int column map (−1 = constant) and (V, k) constants."""
    V = len(specs_per_variant)
    k = len(specs_per_variant[0]) if V else 0
    cols = np.full((V, k), -1, dtype=np.int64)
    const = np.zeros((V, k))
    for v, specs in enumerate(specs_per_variant):
        for j, spec in enumerate(specs):
            if isinstance(spec, float):
                const[v, j] = spec
            else:
                cols[v, j] = index_of(spec)
    return cols, const


def _run_group(layout: Layout, plist: list, store: ColumnStore, warm: int, opts: dict):
    """Discretise and step one chunk of a group; returns (rows dict list, errors, traces)."""
    c = layout.comp
    V = len(plist)
    h = c.step_s
    nc, nb, nsrc, m, nu, ns = layout.nc, layout.nb, layout.nsrc, layout.m, layout.nu, layout.ns
    Cs = np.array([p.C for p in plist]).reshape(V, nc)
    Gs = np.array([p.G for p in plist]).reshape(V, ns, layout.nl)
    bd = discretise_batch(layout, Cs, Gs, h)
    ok = np.array([e is None for e in bd.errors], dtype=bool)
    # column bank (warm-up rows first, as solvers._warm_inputs)
    keys: dict = {}

    def index_of(spec):
        if spec not in keys:
            keys[spec] = len(keys)
        return keys[spec]

    ucol, uconst = _column_arrays([p.ucols for p in plist], store, index_of)
    hcol, hconst = _column_arrays([p.hcols for p in plist], store, index_of)
    ccol, cconst = _column_arrays([p.ccols for p in plist], store, index_of)
    scol, sconst = _column_arrays([p.scols for p in plist], store, index_of)
    schcol, schconst = _column_arrays([[p.sched] for p in plist], store, index_of)
    n = len(c.index)
    bank = np.empty((warm + n, max(len(keys), 1)))
    for key, j in keys.items():
        col = store.cols[key]
        bank[warm:, j] = col
        bank[:warm, j] = col[:warm]
    # initial state: steady state of the first step's inputs, thermostats acting
    nsw = layout.nsw
    sw_init = np.array([p.sw_init for p in plist], dtype=bool).reshape(V, nsw)
    bits0 = (sw_init * (1 << np.arange(nsw))[None, :]).sum(axis=1).astype(np.int64)
    sched0 = np.where(schcol[:, 0] >= 0, bank[0, np.maximum(schcol[:, 0], 0)], schconst[:, 0])
    s0 = sched0.astype(np.int64) * (1 << nsw) + bits0
    u0 = np.zeros((V, nu))
    u0[:, :nb + nsrc] = np.where(ucol >= 0, bank[0, np.maximum(ucol, 0)], uconst)
    x0 = np.zeros((V, nc))
    if nc:
        rows = np.arange(V)
        K0 = bd.K[rows, s0]
        E0 = bd.E[rows, s0]
        K0[~ok] = np.eye(nc)
        x0 = np.linalg.solve(K0, (E0 @ u0[:, :, None]))[..., 0]
        if m:   # thermostats act in the start state, as solvers.steady_start
            pc = nb + nsrc + np.arange(m)
            hsp0 = np.where(hcol[:, :] >= 0, bank[0, np.maximum(hcol, 0)], hconst)
            csp0 = np.where(ccol[:, :] >= 0, bank[0, np.maximum(ccol, 0)], cconst)
            Xp = np.linalg.solve(K0, E0[:, :, pc])                      # (V, nc, m)
            Rx0, Ru0 = bd.Rx[rows, s0], bd.Ru[rows, s0]
            T0 = (Rx0 @ x0[:, :, None])[..., 0] + (Ru0 @ u0[:, :, None])[..., 0]
            Mss = Rx0 @ Xp + Ru0[:, :, pc]
            P0 = np.zeros(m)
            for v in np.flatnonzero(ok):
                if np.isnan(hsp0[v]).all() and np.isnan(csp0[v]).all():
                    continue
                kernels.control_powers(T0[v], Mss[v], hsp0[v], csp0[v], plist[v].qh, plist[v].qc,
                                 P0)
                x0[v] += Xp[v] @ P0
        for v, p in enumerate(plist):
            for i, val in p.initial:
                x0[v, i] = val
    # comfort and output options
    cidx = opts["comfort_index"](layout)
    thr_h = np.asarray(opts["hours_above"], dtype=float)
    thr_d = np.asarray(opts["degree_hours_above"], dtype=float)
    keep = bool(opts["keep_traces"])
    nrep = n if keep else 0
    heat = np.zeros((V, m))
    cool = np.zeros((V, m))
    peak_h = np.zeros(V)
    peak_c = np.zeros(V)
    hrs = np.zeros((V, thr_h.size))
    dgh = np.zeros((V, thr_d.size))
    tstat = np.zeros((V, 3))
    xs_sum = np.zeros((V, ns, nc))
    u_sum = np.zeros((V, ns, nu))
    cnt = np.zeros((V, ns))
    x_first = np.zeros((V, nc))
    x_last = np.zeros((V, nc))
    Xtr = np.zeros((V if keep else 0, nrep, nc))
    Utr = np.zeros((V if keep else 0, nrep, nu))
    Str = np.zeros((V if keep else 0, nrep), dtype=np.int64)
    sel = np.flatnonzero(ok)
    if sel.size:
        def pick(a):
            return np.ascontiguousarray(a[sel]) if sel.size < V else a

        outs = [pick(a) for a in (heat, cool, peak_h, peak_c, hrs, dgh, tstat, xs_sum, u_sum,
                                  cnt, x_first, x_last)]
        tr = [pick(a) if keep else a for a in (Xtr, Utr, Str)]
        simd = batch_simd.applicable(ns, layout.nsw, m, nc, keep) and batch_simd.step_group(
            pick(bd.lam), pick(bd.Q), pick(bd.W), pick(Cs), h, pick(bd.Rx), pick(bd.Ru),
            pick(bd.M), pick(bd.Yx), pick(bd.Yu), pick(x0), bank, pick(ucol), pick(uconst),
            pick(hcol), pick(hconst), pick(ccol), pick(cconst),
            pick(np.array([p.qh for p in plist]).reshape(V, m)),
            pick(np.array([p.qc for p in plist]).reshape(V, m)),
            int(nb), int(warm), int(cidx), int(c.thermostat_node[0]) if m else -1,
            thr_h, thr_d, *outs)   # variants on SIMD lanes; False if it declines the group
        if not simd:
            step_batch(
                pick(np.ascontiguousarray(np.swapaxes(bd.Phi, -1, -2))),
                pick(np.ascontiguousarray(np.swapaxes(bd.Gam, -1, -2))),
                pick(bd.Rx), pick(bd.Ru), pick(bd.M), pick(bd.Yx), pick(bd.Yu), pick(x0), bank,
                pick(ucol), pick(uconst), pick(hcol), pick(hconst), pick(ccol), pick(cconst),
                pick(scol), pick(sconst), pick(schcol[:, 0]), pick(schconst[:, 0]),
                pick(np.array([p.qh for p in plist]).reshape(V, m)),
                pick(np.array([p.qc for p in plist]).reshape(V, m)),
                pick(np.array([p.SSF for p in plist]).reshape(V, nsw, nsrc)),
                pick(np.array([p.SSF_off for p in plist]).reshape(V, nsw, nsrc)),
                pick(sw_init), c.has_off.astype(np.bool_), pick(_terms(c.terms, plist)),
                c.term_clause, c.clause_cond, int(nb), int(warm), int(cidx), thr_h, thr_d,
                *outs, keep, *tr)
        if sel.size < V:
            for full, part in zip((heat, cool, peak_h, peak_c, hrs, dgh, tstat, xs_sum, u_sum,
                                   cnt, x_first, x_last), outs, strict=True):
                full[sel] = part
            if keep:
                for full, part in zip((Xtr, Utr, Str), tr, strict=True):
                    full[sel] = part
    # ---- annual quantities
    kwh = h / J_PER_KWH
    res: dict[str, np.ndarray] = {}
    res["heating_kwh"] = heat.sum(axis=1) * kwh
    res["cooling_kwh"] = cool.sum(axis=1) * kwh
    res["peak_heating_w"] = peak_h
    res["peak_cooling_w"] = peak_c
    hours_per_step = h / 3600.0  # [h]
    res["reported_hours"] = np.full(V, n * hours_per_step)
    if cidx >= 0:
        for t, thr in enumerate(thr_h):
            res[f"hours_above_{thr:g}"] = hrs[:, t] * hours_per_step
        for t, thr in enumerate(thr_d):
            res[f"degree_hours_above_{thr:g}"] = dgh[:, t] * hours_per_step
        res["max_temperature_c"] = tstat[:, 0]
        res["min_temperature_c"] = tstat[:, 1]
        res["mean_temperature_c"] = tstat[:, 2] / max(n, 1)
    need_links = bool(opts["balance_sets"]) or bool(opts["link_energy"])
    if need_links and n:
        xbar = (np.einsum("vsij,vsj->vsi", bd.Phibar, xs_sum)
                + np.einsum("vsij,vsj->vsi", bd.Gambar, u_sum))
        ybar = (np.einsum("vsij,vsj->vsi", bd.Yx, xbar)
                + np.einsum("vsij,vsj->vsi", bd.Yu, u_sum))
        T = np.concatenate([xbar, ybar, u_sum[..., :nb]], axis=-1)   # (V, ns, npts)
        Elink = (Gs * (T[..., c.link_a] - T[..., c.link_b])).sum(axis=1) * kwh  # (V, nl)
        Esrc = u_sum[..., nb:nb + nsrc].sum(axis=1) * kwh
        if opts["link_energy"]:
            for j, name in enumerate(c.link_names):
                res[f"link:{name}"] = Elink[:, j]
        for label, nodes in opts["balance_sets"].items():
            _check_nodes(layout, nodes, "balance_nodes")
            pre = _balance_prefix(label)
            inside = np.zeros(c.nf + c.nb, dtype=bool)
            inside[[c.free.index(x) for x in nodes]] = True
            sign = inside[c.link_b].astype(float) - inside[c.link_a].astype(float)
            cols: dict[str, np.ndarray] = {}
            for j in np.flatnonzero(sign):
                key = pre + c.link_paths[j]
                cols[key] = cols.get(key, 0.0) + sign[j] * Elink[:, j]
            for j, node in enumerate(c.source_node):
                if inside[node]:
                    key = pre + c.source_paths[j]
                    cols[key] = cols.get(key, 0.0) + Esrc[:, j]
            hin = np.zeros(V)
            cin = np.zeros(V)
            for j, node in enumerate(c.thermostat_node):
                if inside[node]:
                    hin = hin + heat[:, j] * kwh
                    cin = cin - cool[:, j] * kwh
            cols[pre + "heating"] = hin
            cols[pre + "cooling"] = cin
            cap = np.flatnonzero(inside[:nc])
            cols[pre + "storage"] = -((x_last[:, cap] - x_first[:, cap]) * Cs[:, cap]).sum(
                axis=1) / J_PER_KWH
            cols[pre + "residual"] = np.sum([np.broadcast_to(a, (V,)) for a in cols.values()],
                                            axis=0)
            res.update({k: np.broadcast_to(a, (V,)).copy() for k, a in cols.items()})
    errors = list(bd.errors)
    for key in res:
        res[key] = np.where(ok, res[key], np.nan)
    traces = [None] * V
    if keep:
        for v in sel:
            traces[v] = _results_for(layout, plist[v], bd, v, x_first[v], Xtr[v], Utr[v],
                                     Str[v], warm)
    return res, errors, traces


def _terms(template_terms: np.ndarray, plist: list) -> np.ndarray:
    out = np.broadcast_to(template_terms, (len(plist),) + template_terms.shape).copy()
    for v, p in enumerate(plist):
        out[v, :, 5] = p.thresholds
    return out


def _results_for(layout, p: VariantParams, bd: BatchDiscrete, v, x_start0, X, U, S, warm):
    from thermonet.results import Results

    comp = p.comp
    disc = {}
    for s in range(layout.ns):
        disc[s] = Discrete(Phi=bd.Phi[v, s], Gam=bd.Gam[v, s], Phibar=bd.Phibar[v, s],
                           Gambar=bd.Gambar[v, s], K=bd.K[v, s], E=bd.E[v, s],
                           Yx=bd.Yx[v, s], Yu=bd.Yu[v, s], C=p.C, h=comp.step_s, how="batch")
    Xstart = np.vstack([x_start0[None, :], X[:-1]]) if len(X) else X.copy()
    traj = Trajectory(X.copy(), Xstart, U.copy(), S.astype(np.int64), disc)
    info = {"method": "exact", "steps": len(comp.index), "warmup_steps": warm,
            "step_s": comp.step_s, "states": comp.n_states, "kernel": "batch"}
    return Results(p.net, comp, traj, info)


def run_batch(nets, weather: pd.DataFrame, *, step=None, warmup_days: float = 14.0,
              comfort_node: str | None = None, hours_above=(25.0, 26.0),
              degree_hours_above=(), balance_nodes=None, link_energy: bool = False,
              keep_traces: bool = False, max_bytes: float = DEFAULT_MAX_BYTES,
              on_error=None) -> BatchOutput:
    """Simulate many networks over one weather, structure groups stepped together.

    Parameters
    ----------
    nets : sequence of Network or Exception
        The variants; an exception in place of a network (e.g. from a failed build) is
        passed through to :attr:`BatchOutput.errors`.
    weather : pandas.DataFrame
        As for :func:`thermonet.simulate`.
    step : str or Timedelta, optional
        Time step (default: the weather's).
    warmup_days : float, default 14
        Lead-in [days] run before the reported period (as :func:`thermonet.simulate`).
    comfort_node : str, optional
        Free node whose end-of-step temperature [°C] is assessed.
    hours_above : sequence of float, default (25, 26)
        Thresholds [°C] for hours strictly above (as :func:`thermonet.comfort.hours_above`).
    degree_hours_above : sequence of float, default ()
        Thresholds [°C] for degree-hours above [K·h].
    balance_nodes : str, list of str or dict, optional
        A control volume (free nodes) whose annual balance by path is reported in columns
        ``balance:<path>``, ``balance:heating``, ``balance:cooling``, ``balance:storage``,
        ``balance:residual`` [kWh] (the column sums of ``Results.balance(nodes)``). A dict
        ``{label: nodes}`` gives several, in columns ``balance[label]:<path>``.
    link_energy : bool, default False
        Also report ``link:<name>`` annual link energies [kWh].
    keep_traces : bool, default False
        Keep hourly traces: :attr:`BatchOutput.traces` holds a :class:`thermonet.Results`
        per variant (each variant is then compiled in full).
    max_bytes : float, default 200e6
        Memory budget [bytes] of one kernel call; larger groups are split.
    on_error : callable, optional
        ``on_error(position, exception)``, called as soon as a network fails (for
        ``errors="raise"``); default: record and go on.

    Returns
    -------
    BatchOutput
    """
    if not isinstance(weather, pd.DataFrame):
        raise TypeError(f"weather must be a pandas DataFrame, got {type(weather).__name__}")
    if not (isinstance(warmup_days, (int, float)) and math.isfinite(warmup_days)
            and warmup_days >= 0):
        raise ValueError(f"warmup_days must be a finite number ≥ 0 [days], got {warmup_days!r}")
    index, factor, step_s = sim_index(weather.index, step)
    n = len(index)
    warm = min(int(round(warmup_days * 86400.0 / step_s)), n)
    sets = _balance_sets(balance_nodes)

    def comfort_index(layout):
        if comfort_node is None:
            return -1
        _check_nodes(layout, [comfort_node], "comfort_node")
        return layout.comp.free.index(comfort_node)

    opts = dict(comfort_index=comfort_index, hours_above=tuple(hours_above),
                degree_hours_above=tuple(degree_hours_above), keep_traces=keep_traces,
                balance_sets=sets, link_energy=link_energy)
    store = ColumnStore(weather, factor)
    N = len(nets)
    errors: list = [None] * N
    traces: list = [None] * N
    groups: dict = {}     # key -> (layout, [positions], [params])
    fast_groups: dict = {}  # structure_key -> the group of a layout read from Networks

    def fail(pos, exc):
        errors[pos] = exc
        if on_error is not None:
            on_error(pos, exc)

    from thermonet.network import Network

    for pos, net in enumerate(nets):
        if isinstance(net, BaseException):
            fail(pos, net)
            continue
        try:
            if not isinstance(net, Network):
                raise TypeError(f"expected a thermonet Network, got {type(net).__name__}")
            key = structure_key(net)
            grp = fast_groups.get(key)
            if grp is not None and not keep_traces:
                params = params_fast(net, grp[0], store)
            else:
                comp = compile_network(net, weather, step=step)
                if grp is None or not grp[0].fast:
                    key = (key, comp.n_states, comp.n_sched)
                    grp = groups.get(key)
                if grp is None:
                    layout = make_layout(net, key, comp, store)
                    comfort_index(layout)
                    for nodes in sets.values():
                        _check_nodes(layout, nodes, "balance_nodes")
                    grp = groups[key] = (layout, [], [])
                    if layout.fast:
                        fast_groups[key[0]] = grp
                params = params_from_compiled(comp, store, net=net, keep_comp=keep_traces)
            grp[1].append(pos)
            grp[2].append(params)
        except Exception as exc:  # noqa: BLE001 - reported per variant
            fail(pos, exc)

    parts: list = []      # (first finished position, positions, ok mask, results) per chunk
    for layout, positions, plist in groups.values():
        cap = bytes_per_variant(layout, n + warm, keep_traces,
                                max((p.own_columns for p in plist), default=0))
        size = int(max(1, min(MAX_CHUNK, max_bytes // cap)))
        for a in range(0, len(plist), size):
            res, errs, trs = _run_group(layout, plist[a:a + size], store, warm, opts)
            pos = np.asarray(positions[a:a + size], dtype=np.int64)
            ok = np.array([e is None for e in errs], dtype=bool)
            for i in np.flatnonzero(~ok):
                fail(int(pos[i]), errs[i])
            for i in np.flatnonzero(ok):
                traces[pos[i]] = trs[i]
            if ok.any():
                parts.append((int(pos[ok].min()), pos[ok], ok, res))
    # columns in the order a scan of the finished variants by position meets them
    columns: list = []
    seen: set = set()
    for _, _, _, res in sorted(parts, key=lambda t: t[0]):
        for k in res:
            if k not in seen:
                seen.add(k)
                columns.append(k)
    data = {k: np.full(N, np.nan) for k in columns}
    finished = np.zeros(N, dtype=bool)
    for _, pos, ok, res in parts:
        finished[pos] = True
        for k, vals in res.items():
            data[k][pos] = np.asarray(vals, dtype=float)[ok]
    for k in columns:
        if k.startswith("balance") or k.startswith("link:"):
            # no link of this path crosses this variant's control volume
            data[k][finished & np.isnan(data[k])] = 0.0
    table = pd.DataFrame(data, index=pd.RangeIndex(N), columns=columns)
    return BatchOutput(table=table, errors=errors, traces=traces)
