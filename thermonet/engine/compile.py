"""Compile a :class:`~thermonet.network.Network` against a weather index into matrices.

Free nodes are ordered capacitive first (``x``, C > 0), then massless (``y``, C = 0).
The input vector of a step is ``u = [T_boundaries, source powers, thermostat powers]``.
For every *state* (a combination of scheduled link values and switch positions) the links'
conductances give the Laplacian ``L``; the massless nodes are eliminated exactly
(Schur complement), leaving ``C dx/dt = −K x + E u`` with ``K`` symmetric positive definite.

References
----------
.. [1] Strang, G., Computational Science and Engineering, Wellesley-Cambridge, 2007, §2.4
   (graph Laplacians of networks) — the elimination of algebraic nodes is the Schur complement.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from thermonet.controls import HourWindow, Signal
from thermonet.errors import NetworkError, ScheduleError, WeatherError
from thermonet.schedules import align, check_index

MAX_STATES = 256


@dataclass
class Compiled:
    """Arrays of a network compiled on a time axis (all SI: °C, W, W/K, J/K, s)."""

    index: pd.DatetimeIndex
    step_s: float
    free: list[str]
    nc: int
    boundaries: list[str]
    C: np.ndarray                      # (nc,) [J/K]
    link_names: list[str]
    link_paths: list[str]
    link_a: np.ndarray                 # index into points = free + boundaries
    link_b: np.ndarray
    G_states: np.ndarray               # (n_states, n_links) [W/K]
    sched_of_step: np.ndarray          # (n_steps,) scheduled-state id
    n_sched: int
    source_names: list[str]
    source_paths: list[str]
    source_node: np.ndarray            # (n_src,) index into free
    thermostat_names: list[str]
    thermostat_node: np.ndarray        # (m,) index into free
    U: np.ndarray                      # (n_steps, nu) base inputs (P columns zero)
    hsp: np.ndarray                    # (n_steps, m) heating setpoints (NaN = none)
    csp: np.ndarray
    qh: np.ndarray                     # (m,) [W]
    qc: np.ndarray
    switch_names: list[str]
    switch_link_factor: np.ndarray     # (nsw, n_links)
    switch_source_factor: np.ndarray   # (nsw, n_src) factor while on
    switch_source_factor_off: np.ndarray  # (nsw, n_src) factor while off
    switch_initial: np.ndarray         # (nsw,) bool
    terms: np.ndarray                  # (n_terms, 6) float: kind_a, idx_a, kind_b, idx_b, op, thr
    term_clause: np.ndarray            # (n_terms,) clause id
    clause_cond: np.ndarray            # (n_clauses,) condition id = 2*switch + (0 on / 1 off)
    has_off: np.ndarray                # (nsw,) bool
    signals: np.ndarray                # (n_steps, n_sig)
    initial: dict = field(default_factory=dict)

    @property
    def nb(self):
        return len(self.boundaries)

    @property
    def nsrc(self):
        return len(self.source_names)

    @property
    def m(self):
        return len(self.thermostat_names)

    @property
    def nu(self):
        return self.nb + self.nsrc + self.m

    @property
    def nf(self):
        return len(self.free)

    @property
    def n_states(self):
        return self.G_states.shape[0]

    def state_id(self, sched, bits):
        return sched * (1 << len(self.switch_names)) + bits


def _upsample(values: np.ndarray, factor: int) -> np.ndarray:
    """Hold each interval's value over its ``factor`` sub-intervals (interval ending)."""
    return np.repeat(values, factor, axis=0) if factor > 1 else values


def sim_index(weather_index: pd.DatetimeIndex, step) -> tuple[pd.DatetimeIndex, int, float]:
    """The simulation index for ``step`` (None: the weather's) and the sub-step factor."""
    wstep = check_index(weather_index, "weather")
    if step is None:
        return weather_index, 1, wstep.total_seconds()
    step = pd.Timedelta(step)
    if step <= pd.Timedelta(0) or step > wstep:
        raise ScheduleError(f"step={step} must be positive and not longer than the weather's "
                            f"step {wstep}")
    ratio = wstep / step
    if abs(ratio - round(ratio)) > 1e-9:
        raise ScheduleError(f"step={step} must divide the weather's step {wstep} evenly")
    factor = int(round(ratio))
    if factor == 1:
        return weather_index, 1, wstep.total_seconds()
    ends = np.asarray(weather_index.as_unit("ns").asi8)
    sub = (ends[:, None] - (factor - 1 - np.arange(factor))[None, :] * step.value).ravel()
    idx = pd.DatetimeIndex(pd.to_datetime(sub, utc=True)).tz_convert(weather_index.tz)
    return idx, factor, step.total_seconds()


def series_or_constant(value, weather, factor, what, column_ok=False):
    n = len(weather.index)
    if isinstance(value, str):
        if not column_ok:
            raise NetworkError(f"{what}: a column name is only allowed for boundaries")
        if value not in weather.columns:
            raise WeatherError(f"{what} uses weather column {value!r}, which is missing; "
                               f"columns: {', '.join(map(str, weather.columns))}")
        col = np.asarray(weather[value], dtype=float)
        if not np.isfinite(col).all():
            i = int((~np.isfinite(col)).argmax())
            raise WeatherError(f"weather column {value!r} (used by {what}) has NaN/inf at "
                               f"{weather.index[i]}; repair it explicitly, e.g. "
                               "thermonet.weather.validate(df, fill='interpolate')")
        return _upsample(col, factor)
    if isinstance(value, pd.Series):
        return _upsample(align(value, weather.index, what), factor)
    return np.full(n * factor, float(value))


def connected_to_boundary(nf, a, b, g, nbound):
    """Free nodes reachable from a boundary through links with g > 0 (union-find)."""
    parent = np.arange(nf + 1)  # nf = virtual "any boundary" root

    def find(i):
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    for ai, bi, gi in zip(a, b, g, strict=True):
        if gi <= 0:
            continue
        ra = find(min(ai, nf))
        rb = find(min(bi, nf))
        if ra != rb:
            parent[ra] = rb
    root = find(nf)
    return np.array([find(i) == root for i in range(nf)], dtype=bool)


def compile_network(net, weather: pd.DataFrame, *, step=None) -> Compiled:
    """Compile ``net`` against the weather (or any frame with a tz-aware regular index)."""
    if not isinstance(weather, pd.DataFrame):
        raise TypeError(f"weather must be a pandas DataFrame, got {type(weather).__name__}")
    index, factor, step_s = sim_index(weather.index, step)
    n = len(index)
    if not net.nodes:
        raise NetworkError("the network has no free nodes; add_node() first")
    if not net.boundaries:
        raise NetworkError("the network has no boundary; every node needs a path to one "
                           "(add_boundary('outdoor', temperature='temp_air'))")
    cap = [k for k, v in net.nodes.items() if v.capacitance > 0]
    massless = [k for k, v in net.nodes.items() if v.capacitance == 0]
    free = cap + massless
    bnames = list(net.boundaries)
    pos = {name: i for i, name in enumerate(free + bnames)}
    C = np.array([net.nodes[k].capacitance for k in cap], dtype=float)

    links = list(net.links.values())
    link_a = np.array([pos[l.a] for l in links], dtype=np.int64)
    link_b = np.array([pos[l.b] for l in links], dtype=np.int64)
    # scheduled conductances
    G_cols = [series_or_constant(l.conductance, weather, factor, f"link {l.name!r} conductance")
              for l in links]
    G_time = np.stack(G_cols, axis=1) if links else np.zeros((n, 0))
    sched_cols = [i for i, l in enumerate(links) if isinstance(l.conductance, pd.Series)]
    if sched_cols:
        uniq, inv = np.unique(G_time[:, sched_cols], axis=0, return_inverse=True)
        sched_of_step = inv.ravel().astype(np.int64)
    else:
        uniq, sched_of_step = np.zeros((1, 0)), np.zeros(n, dtype=np.int64)
    n_sched = uniq.shape[0]
    base_G = G_time[0].copy()

    # switches
    sw = list(net.switches.values())
    nsw = len(sw)
    if n_sched * (1 << nsw) > MAX_STATES:
        raise NetworkError(f"{n_sched} scheduled link states × 2^{nsw} switch states exceed "
                           f"{MAX_STATES} cached discretisations; schedule links with fewer "
                           "distinct values or use fewer switches")
    link_pos = {l.name: i for i, l in enumerate(links)}
    srcs = list(net.sources.values())
    src_pos = {s.name: i for i, s in enumerate(srcs)}
    SLF = np.ones((nsw, len(links)))
    SLF_off = np.ones((nsw, len(links)))
    SSF = np.ones((nsw, len(srcs)))
    SSF_off = np.ones((nsw, len(srcs)))
    for k, s in enumerate(sw):
        for ln, (f_off, f_on) in s.link_factors.items():
            SLF[k, link_pos[ln]], SLF_off[k, link_pos[ln]] = f_on, f_off
        for sn, (f_off, f_on) in s.source_factors.items():
            SSF[k, src_pos[sn]], SSF_off[k, src_pos[sn]] = f_on, f_off

    G_states = np.empty((n_sched * (1 << nsw), len(links)))
    for si in range(n_sched):
        g = base_G.copy()
        g[sched_cols] = uniq[si]
        for bits in range(1 << nsw):
            gg = g.copy()
            for k in range(nsw):
                gg *= SLF[k] if bits >> k & 1 else SLF_off[k]
            G_states[si * (1 << nsw) + bits] = gg
    for s_id, g in enumerate(G_states):
        ok = connected_to_boundary(len(free), link_a, link_b, g, len(bnames))
        if not ok.all():
            lost = [free[i] for i in np.flatnonzero(~ok)]
            where = "" if s_id == 0 else " in a scheduled or switched state"
            raise NetworkError(
                f"node(s) {', '.join(map(repr, lost))} have no path to any boundary{where}; "
                "the system would be singular. Link them (with G > 0) to a boundary or to a "
                "connected node")

    # inputs
    Tb = [series_or_constant(net.boundaries[b].temperature, weather, factor,
                           f"boundary {b!r}", column_ok=True) for b in bnames]
    Q = [series_or_constant(s.power, weather, factor, f"source {s.name!r} power") for s in srcs]
    th = list(net.thermostats.values())
    m = len(th)
    U = np.zeros((n, len(bnames) + len(srcs) + m))
    if bnames:
        U[:, :len(bnames)] = np.stack(Tb, axis=1)
    if srcs:
        U[:, len(bnames):len(bnames) + len(srcs)] = np.stack(Q, axis=1)
    hsp = np.full((n, m), np.nan)
    csp = np.full((n, m), np.nan)
    for j, t in enumerate(th):
        if t.heating_setpoint is not None:
            hsp[:, j] = series_or_constant(t.heating_setpoint, weather, factor,
                                         f"thermostat {t.name!r} heating_setpoint")
        if t.cooling_setpoint is not None:
            csp[:, j] = series_or_constant(t.cooling_setpoint, weather, factor,
                                         f"thermostat {t.name!r} cooling_setpoint")
    both = ~np.isnan(hsp) & ~np.isnan(csp)
    if (hsp[both] > csp[both]).any():
        raise NetworkError("a thermostat's heating setpoint exceeds its cooling setpoint; "
                           "keep heating ≤ cooling at every step")

    # conditions
    sig_cols, sig_keys = [], {}

    def signal_index(ref, what):
        if isinstance(ref, Signal):
            key = id(ref)
            if key not in sig_keys:
                sig_keys[key] = len(sig_cols)
                sig_cols.append(_upsample(align(ref.series, weather.index, what), factor))
            return sig_keys[key]
        if isinstance(ref, HourWindow):
            key = ("hours", ref.start, ref.end)
            if key not in sig_keys:
                sig_keys[key] = len(sig_cols)
                sig_cols.append(ref.values(index, pd.Timedelta(seconds=step_s)))
            return sig_keys[key]
        raise TypeError(ref)

    def ref_code(ref, what):
        if ref is None:
            return 2, 0
        if isinstance(ref, str):
            if ref in net.boundaries:
                return 1, _boundary_signal(ref)
            return 0, free.index(ref)
        return 1, signal_index(ref, what)

    def _boundary_signal(bname):
        key = ("boundary", bname)
        if key not in sig_keys:
            sig_keys[key] = len(sig_cols)
            sig_cols.append(U[:, bnames.index(bname)].copy())
        return sig_keys[key]

    terms, term_clause, clause_cond = [], [], []
    for k, s in enumerate(sw):
        for ci, cond in enumerate((s.on, s.off)):
            if cond is None:
                continue
            for clause in cond.clauses:
                cid = len(clause_cond)
                clause_cond.append(2 * k + ci)
                for t in clause:
                    ka, ia = ref_code(t.a, f"switch {s.name!r} condition")
                    kb, ib = ref_code(t.b, f"switch {s.name!r} condition")
                    terms.append([ka, ia, kb, ib, 1.0 if t.op == ">" else -1.0, t.threshold])
                    term_clause.append(cid)
    signals = np.stack(sig_cols, axis=1) if sig_cols else np.zeros((n, 0))

    return Compiled(
        index=index, step_s=step_s, free=free, nc=len(cap), boundaries=bnames, C=C,
        link_names=[l.name for l in links], link_paths=[l.path for l in links],
        link_a=link_a, link_b=link_b, G_states=G_states, sched_of_step=sched_of_step,
        n_sched=n_sched, source_names=[s.name for s in srcs],
        source_paths=[s.path for s in srcs],
        source_node=np.array([free.index(s.node) for s in srcs], dtype=np.int64),
        thermostat_names=[t.name for t in th],
        thermostat_node=np.array([free.index(t.node) for t in th], dtype=np.int64),
        U=U, hsp=hsp, csp=csp, qh=np.array([t.max_heating_w for t in th], dtype=float),
        qc=np.array([t.max_cooling_w for t in th], dtype=float),
        switch_names=[s.name for s in sw], switch_link_factor=SLF, switch_source_factor=SSF,
        switch_source_factor_off=SSF_off,
        switch_initial=np.array([s.initial for s in sw], dtype=bool),
        terms=np.array(terms, dtype=float).reshape(-1, 6),
        term_clause=np.array(term_clause, dtype=np.int64),
        clause_cond=np.array(clause_cond, dtype=np.int64),
        has_off=np.array([s.off is not None for s in sw], dtype=bool),
        signals=signals,
        initial={k: v.initial for k, v in net.nodes.items() if v.initial is not None},
    )


def laplacian_blocks(comp: Compiled, g: np.ndarray):
    """Dense ``L_ff`` (nf×nf) and ``L_fb`` (nf×nb) for conductances ``g`` [W/K]."""
    nf, nb = comp.nf, comp.nb
    L = np.zeros((nf + nb, nf + nb))
    a, b = comp.link_a, comp.link_b
    np.add.at(L, (a, a), g)
    np.add.at(L, (b, b), g)
    np.add.at(L, (a, b), -g)
    np.add.at(L, (b, a), -g)
    return L[:nf, :nf], L[:nf, nf:]


def input_matrix(comp: Compiled, L_fb: np.ndarray) -> np.ndarray:
    """``E_f`` (nf × nu): heat into free nodes per unit input (−L_fb for boundary temps)."""
    E = np.zeros((comp.nf, comp.nu))
    E[:, :comp.nb] = -L_fb
    for j, node in enumerate(comp.source_node):
        E[node, comp.nb + j] = 1.0
    for j, node in enumerate(comp.thermostat_node):
        E[node, comp.nb + comp.nsrc + j] = 1.0
    return E


@dataclass
class Reduced:
    """``C dx/dt = −K x + E u`` and massless nodes ``y = Yx x + Yu u`` for one state."""

    K: np.ndarray
    E: np.ndarray
    Yx: np.ndarray
    Yu: np.ndarray


def reduce_state(comp: Compiled, g: np.ndarray) -> Reduced:
    """Eliminate massless nodes exactly (Schur complement) for conductances ``g``."""
    L_ff, L_fb = laplacian_blocks(comp, g)
    E = input_matrix(comp, L_fb)
    nc = comp.nc
    Lcc, Lca = L_ff[:nc, :nc], L_ff[:nc, nc:]
    Lac, Laa = L_ff[nc:, :nc], L_ff[nc:, nc:]
    Ec, Ea = E[:nc], E[nc:]
    if Laa.shape[0]:
        Yx = -np.linalg.solve(Laa, Lac)
        Yu = np.linalg.solve(Laa, Ea)
        K = Lcc + Lca @ Yx
        Er = Ec + (-Lca) @ Yu
    else:
        Yx = np.zeros((0, nc))
        Yu = np.zeros((0, comp.nu))
        K, Er = Lcc, Ec
    K = 0.5 * (K + K.T)
    return Reduced(K, Er, Yx, Yu)
