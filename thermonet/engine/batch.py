"""Many network variants along a leading variant axis: the engine's batch path.

Variants whose compiled *structure* is identical (same free nodes and which of them have a
capacity, same boundaries, links, sources, thermostats, switches and switch conditions, same
number of states) form a *group*. A group is compiled once for its structure
(:func:`thermonet.engine.compile.compile_structure`) and once per variant for its numbers
(:func:`thermonet.engine.compile.compile_values`), discretised in one vectorised pass and
stepped by the same kernel as a single simulation (:func:`thermonet.engine.run.step_group`),
the variants of a chunk in parallel.

Annual results are accumulated inside the kernel, so hourly traces are not stored unless
asked for: heating and cooling energy per thermostat, the peaks of their totals, hours and
degree-hours above thresholds at a comfort node, and — for the energy balance by path — the
per-state sums of the start coordinates and of the inputs over the reported steps. Because
the step mean is linear in the start state and the inputs, the per-state sums give the
annual link energies exactly (to rounding):

.. math::
    E_l = h \\sum_s G_{s,l}\\,\\big(\\bar T_{s,a_l} − \\bar T_{s,b_l}\\big),\\qquad
    \\sum_{n:\\,s_n = s} \\bar z_n = φ_1(Λh) \\sum z_{start} + hφ_2(Λh)\\, W_s \\sum u

(modal coordinates ``x = Q z``; dense states use ``Φ̄ Σx + Γ̄ Σu``), massless nodes
``ȳ = Y_x x̄ + Y_u u`` and boundaries read from ``u``; the stored energy change is
``−Σ C_i (x_i,end − x_i,start)``. These are the same numbers as
``Results.balance(nodes).sum()`` of one-by-one :func:`thermonet.simulate` runs (tested).

Inputs that are the same for many variants (weather columns, one gains profile shared by
every variant) are stored once per chunk; constants are not expanded to time series.

References
----------
.. [1] Franklin, G. F., Powell, J. D., Workman, M. L., Digital Control of Dynamic Systems,
   3rd ed., Addison-Wesley, 1998, §4.3 (zero-order-hold equivalent of a continuous system).
.. [2] Golub, G. H., Van Loan, C. F., Matrix Computations, 4th ed., 2013, §8.1
   (symmetric eigenproblem).
"""

from __future__ import annotations

import functools
import hashlib
import math
from dataclasses import dataclass

import numpy as np
import pandas as pd

from thermonet.checks import check_weather_frame
from thermonet.constants import J_PER_KWH
from thermonet.controls import HourWindow, Signal
from thermonet.engine.compile import (
    ColumnStore,
    Compiled,
    compile_structure,
    compile_values,
)
from thermonet.engine.discretise import phi1, phi2, phi3
from thermonet.engine.run import GroupRun, resolve_kernel, step_group
from thermonet.engine.simulate import effective_inputs, trajectory_of
from thermonet.errors import NetworkError
from thermonet.results import Results

#: Default memory budget of one batch of variants [bytes] (arrays of the kernel and of the
#: batched discretisation; the column bank; traces when kept).
DEFAULT_MAX_BYTES = 200e6

#: Largest number of variants stepped in one kernel call.
MAX_CHUNK = 4096

__all__ = ["BatchOutput", "run_batch", "run_values", "structure_key", "bytes_per_variant",
           "DEFAULT_MAX_BYTES"]


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

    Parameters
    ----------
    net : Network
        The network to describe.

    Returns
    -------
    tuple
        Equal for two networks exactly when they can share one compiled structure.
    """
    ordinals: dict = {}
    return (
        tuple((n.name, n.capacitance > 0) for n in net.nodes.values()),
        tuple(net.boundaries),
        tuple((l.name, l.a, l.b, l.path, l.kind, isinstance(l.conductance, pd.Series))
              for l in net.links.values()),
        tuple((s.name, s.node, s.path) for s in net.sources.values()),
        tuple((t.name, t.node, t.heating_setpoint is None, t.cooling_setpoint is None)
              for t in net.thermostats.values()),
        tuple((s.name, tuple(s.link_factors), tuple(s.source_factors),
               _condition_key(s.on, ordinals), _condition_key(s.off, ordinals))
              for s in net.switches.values()),
    )



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


def _check_warmup_days(warmup_days) -> None:
    """Refuse a warm-up that is not a finite number of days ≥ 0 (ValueError)."""
    if not (isinstance(warmup_days, (int, float)) and math.isfinite(warmup_days)
            and warmup_days >= 0):
        raise ValueError(f"warmup_days must be a finite number ≥ 0 [days], got {warmup_days!r}")


def _batch_options(store, warmup_days, comfort_node, hours_above, degree_hours_above,
                   balance_nodes, link_energy, keep_traces, kernel) -> tuple[int, dict]:
    """Warm-up steps and the options dict shared by :func:`run_batch` and :func:`run_values`.

    Parameters
    ----------
    store : ColumnStore
        The run's time series (its index and step [s]).
    warmup_days : float
        Lead-in [days].
    comfort_node, hours_above, degree_hours_above, balance_nodes, link_energy, keep_traces, kernel
        As for :func:`run_batch` (node name, [°C], [°C], nodes, bool, bool, kernel name).

    Returns
    -------
    warm : int
        Warm-up steps (at most the run's length).
    opts : dict
        The options the chunks read.
    """
    warm = min(int(round(warmup_days * 86400.0 / store.step_s)), len(store.index))
    opts = dict(comfort_node=comfort_node, hours_above=tuple(hours_above),
                degree_hours_above=tuple(degree_hours_above), keep_traces=keep_traces,
                balance_sets=_balance_sets(balance_nodes), link_energy=link_energy,
                kernel=resolve_kernel(kernel))
    return warm, opts


def _balance_prefix(label: str) -> str:
    return "balance:" if label == "" else f"balance[{label}]:"



def bytes_per_variant(st, ns: int, n_steps: int, keep_traces: bool = False,
                      own_columns: int = 0) -> float:
    """Rough memory [bytes] one variant of a group needs in a batch (with temporaries).

    Parameters
    ----------
    st : Structure
    ns : int
        States per variant.
    n_steps : int
        Steps including the warm-up.
    keep_traces : bool
        Whether hourly traces are kept.
    own_columns : int
        Time series stored for this variant only.
    """
    nc, na, nu, m = st.nc, st.na, st.nu, st.m
    npts = st.nf + st.nb
    per_state = (6 * nc * nc + 5 * nc * nu + 2 * m * (nc + nu + m) + 2 * na * (nc + nu)
                 + 2 * npts * npts + 2 * st.nf * nu + 2 * (nc + nu) + st.nl)
    b = 8.0 * (ns * per_state + own_columns * n_steps + 8 * (nc + nu + m) + 64)
    if keep_traces:
        b += 8.0 * n_steps * (2 * nc + nu + 1) * 4  # traces, then the tables of Results
    return b


def _annual_sums(st, vals, run: GroupRun) -> tuple:
    """Σ over the reported steps, per variant and state, of the step-mean temperatures of all
    points (free nodes then boundaries) [°C·steps] and of the applied inputs [SI·steps]."""
    d, sums = run.disc, run.sums
    V, ns = run.F.shape[:2]
    nb, nin = st.nb, st.nb + st.nsrc
    us = sums["us_sum"].copy()                              # raw; constants added here
    up = sums["up_sum"].copy()                              # previous values (ramps)
    cnt = sums["cnt"]
    ucol = np.array([[isinstance(c, float) for c in p.ucols] for p in vals]).reshape(V, nin)
    const = np.array([[c if isinstance(c, float) else 0.0 for c in p.ucols]
                      for p in vals]).reshape(V, nin)
    us[:, :, :nin] += np.where(ucol, const, 0.0)[:, None, :] * cnt[:, :, None]
    up[:, :, :nin] += np.where(ucol, const, 0.0)[:, None, :] * cnt[:, :, None]
    r = np.zeros((V, 1, us.shape[-1]), dtype=bool)
    r[:, 0, :nin] = np.array([p.ramp for p in vals]).reshape(V, nin)
    hold = np.where(r, 0.0, us) * run.F                      # applied inputs, held
    rend = np.where(r, us, 0.0)                               # ramps (boundaries: F = 1)
    rprev = np.where(r, up, 0.0)
    Ueff = hold + 0.5 * (rend + rprev)                        # Σ step means
    x = d.lam * d.h
    e2, e3 = d.h * phi2(x), d.h * phi3(x)

    def w(arr):
        return np.einsum("vsij,vsj->vsi", d.W, arr)

    zbar = phi1(x) * sums["zs_sum"] + w(hold) * e2 + w(rend) * e3 + w(rprev) * (e2 - e3)
    xbar = np.einsum("vsij,vsj->vsi", d.Q, zbar)
    for (v, s), (_, _, Phibar, Gambar, Gam3) in d.dense_mats.items():
        xbar[v, s] = (Phibar @ sums["zs_sum"][v, s] + Gambar @ hold[v, s] + Gam3 @ rend[v, s]
                      + (Gambar - Gam3) @ rprev[v, s])
    ybar = np.einsum("vsij,vsj->vsi", d.Yx, xbar) + np.einsum("vsij,vsj->vsi", d.Yu, Ueff)
    return np.concatenate([xbar, ybar, Ueff[..., :nb]], axis=-1), Ueff


def _table_from_sums(st, vals, run: GroupRun, warm: int, n: int, opts: dict) -> dict:
    """Annual columns of a chunk from the kernel's sums (see the module docstring)."""
    h = st.step_s
    kwh = h / J_PER_KWH
    s = run.sums
    res = _common_columns(s["heat"].sum(axis=1) * kwh, s["cool"].sum(axis=1) * kwh,
                          s["peak_h"], s["peak_c"], n, h)
    if opts["comfort"] is not None:
        _comfort_columns(res, opts, s["hrs"] * h / 3600.0, s["dgh"] * h / 3600.0,
                         s["tstat"][:, 0], s["tstat"][:, 1], s["tstat"][:, 2] / max(n, 1))
    if (opts["balance_sets"] or opts["link_energy"]) and n:
        Gs = np.array([p.G for p in vals])
        T, Ueff = _annual_sums(st, vals, run)
        Elink = (Gs * (T[..., st.link_a] - T[..., st.link_b])).sum(axis=1) * kwh
        Esrc = Ueff[..., st.nb:st.nb + st.nsrc].sum(axis=1) * kwh
        C = np.array([p.C for p in vals]).reshape(len(vals), st.nc)
        storage = -(run.x_last - run.x_first) * C / J_PER_KWH      # (V, nc) [kWh]
        _energy_columns(res, st, opts, Elink, Esrc, s["heat"] * kwh, s["cool"] * kwh, storage)
    return res


def _common_columns(heat, cool, peak_h, peak_c, n, h) -> dict:
    return {"heating_kwh": heat, "cooling_kwh": cool, "peak_heating_w": peak_h,
            "peak_cooling_w": peak_c,
            "reported_hours": np.full(len(heat), n * h / 3600.0)}


def _comfort_columns(res, opts, hrs, dgh, tmax, tmin, tmean) -> None:
    for t, thr in enumerate(opts["hours_above"]):
        res[f"hours_above_{thr:g}"] = hrs[:, t]
    for t, thr in enumerate(opts["degree_hours_above"]):
        res[f"degree_hours_above_{thr:g}"] = dgh[:, t]
    res["max_temperature_c"] = tmax
    res["min_temperature_c"] = tmin
    res["mean_temperature_c"] = tmean


def _energy_columns(res, st, opts, Elink, Esrc, heat, cool, storage) -> None:
    """``link:<name>`` and ``balance…:<path>`` columns [kWh] from annual energies."""
    V = Elink.shape[0]
    if opts["link_energy"]:
        for j, name in enumerate(st.link_names):
            res[f"link:{name}"] = Elink[:, j]
    for label, nodes in opts["balance_sets"].items():
        pre = _balance_prefix(label)
        inside = np.zeros(st.nf + st.nb, dtype=bool)
        inside[[st.free.index(x) for x in nodes]] = True
        sign = inside[st.link_b].astype(float) - inside[st.link_a].astype(float)
        cols: dict[str, np.ndarray] = {}
        for j in np.flatnonzero(sign):
            key = pre + st.link_paths[j]
            cols[key] = cols.get(key, 0.0) + sign[j] * Elink[:, j]
        for j, node in enumerate(st.source_node):
            if inside[node]:
                key = pre + st.source_paths[j]
                cols[key] = cols.get(key, 0.0) + Esrc[:, j]
        th_in = inside[st.thermostat_node]
        cols[pre + "heating"] = heat[:, th_in].sum(axis=1) if st.m else np.zeros(V)
        cols[pre + "cooling"] = -cool[:, th_in].sum(axis=1) if st.m else np.zeros(V)
        cols[pre + "storage"] = storage[:, np.flatnonzero(inside[:st.nc])].sum(axis=1)
        residual = np.zeros(V)
        for a in cols.values():      # term by term, in one order whatever the chunk size
            residual = residual + a
        cols[pre + "residual"] = residual
        res.update({k: np.broadcast_to(a, (V,)).copy() for k, a in cols.items()})


def _table_from_results(st, results: list, storage: np.ndarray, opts: dict) -> dict:
    """Annual columns of a chunk from per-variant :class:`Results` (traces kept)."""
    V = len(results)
    kwh = st.step_s / J_PER_KWH
    heat = np.array([r.heating_by_thermostat.to_numpy().sum(axis=0) for r in results]
                    ).reshape(V, st.m) * kwh
    cool = np.array([r.cooling_by_thermostat.to_numpy().sum(axis=0) for r in results]
                    ).reshape(V, st.m) * kwh
    n = len(results[0].index)
    res = _common_columns(heat.sum(axis=1), cool.sum(axis=1),
                          np.array([r.heating.max() if st.m and n else 0.0 for r in results]),
                          np.array([r.cooling.max() if st.m and n else 0.0 for r in results]),
                          n, st.step_s)
    if opts["comfort"] is not None:
        node = st.free[opts["comfort"]]
        T = np.array([r.temperatures[node].to_numpy() for r in results]).reshape(V, n)
        hh = st.step_s / 3600.0
        hrs = np.stack([(T > t).sum(axis=1) * hh for t in opts["hours_above"]], axis=1) \
            if opts["hours_above"] else np.zeros((V, 0))
        dgh = np.stack([np.clip(T - t, 0, None).sum(axis=1) * hh
                        for t in opts["degree_hours_above"]], axis=1) \
            if opts["degree_hours_above"] else np.zeros((V, 0))
        _comfort_columns(res, opts, hrs, dgh, T.max(axis=1, initial=-np.inf),
                         T.min(axis=1, initial=np.inf), T.sum(axis=1) / max(n, 1))
    if (opts["balance_sets"] or opts["link_energy"]) and n:
        Elink = np.array([r.flows.to_numpy().sum(axis=0) for r in results]) * kwh
        Esrc = np.array([r.sources.to_numpy().sum(axis=0) for r in results]).reshape(
            V, st.nsrc) * kwh
        _energy_columns(res, st, opts, Elink, Esrc, heat, cool, storage)
    return res


def _run_chunk(st, vals: list, nets: list, store: ColumnStore, warm: int, opts: dict):
    """Discretise and step one chunk of a group; returns (columns, errors, traces)."""
    n = len(store.index)
    keep = bool(opts["keep_traces"]) or opts["kernel"] == "numpy"
    run = step_group(st, vals, store, warm, keep=keep, kernel=opts["kernel"],
                     comfort=opts["comfort"], thr_h=opts["hours_above"],
                     thr_d=opts["degree_hours_above"])
    ok = np.array([e is None for e in run.errors], dtype=bool)
    traces = [None] * len(vals)
    if keep:
        for v in np.flatnonzero(ok):
            traces[v] = _results_for(st, vals[v], nets[v], store, run, v, warm)
    if keep and ok.any():
        idx = np.flatnonzero(ok)
        C = np.array([vals[v].C for v in idx]).reshape(len(idx), st.nc)
        storage = -(run.x_last[idx] - run.x_first[idx]) * C / J_PER_KWH
        part = _table_from_results(st, [traces[v] for v in idx], storage, opts)
        res = {k: np.full(len(vals), np.nan) for k in part}
        for k, a in part.items():
            res[k][idx] = a
    else:
        res = _table_from_sums(st, vals, run, warm, n, opts)
    for key in res:
        res[key] = np.where(ok, res[key], np.nan)
    if not opts["keep_traces"]:
        traces = [None] * len(vals)
    return res, run.errors, traces


def _results_for(st, val, net, store, run: GroupRun, v: int, warm: int) -> Results:
    comp = Compiled(st, val, store, initial={k: x.initial for k, x in net.nodes.items()
                                             if x.initial is not None})
    inputs = functools.partial(effective_inputs, comp, run.F[v], run.S[v], run.P[v], warm,
                               Q=None if run.Q is None else run.Q[v])
    one = GroupRun(run.X[v:v + 1], run.S[v:v + 1], run.P[v:v + 1], run.x_first[v:v + 1],
                   run.x_last[v:v + 1], {}, _variant(run.disc, v), None, run.F[v:v + 1],
                   [None])
    traj = trajectory_of(comp, one, inputs, {"kernel": "batch"})
    info = {"method": "exact", "steps": len(st.index), "warmup_steps": warm,
            "step_s": st.step_s, "states": val.n_states, "kernel": "batch"}
    return Results(net, comp, traj, info)


def _variant(disc, v):
    import dataclasses

    return dataclasses.replace(
        disc, C=disc.C[v:v + 1], K=disc.K[v:v + 1], E=disc.E[v:v + 1], Yx=disc.Yx[v:v + 1],
        Yu=disc.Yu[v:v + 1], lam=disc.lam[v:v + 1], Q=disc.Q[v:v + 1], W=disc.W[v:v + 1],
        dense=disc.dense[v:v + 1],
        dense_mats={(0, s): m for (w, s), m in disc.dense_mats.items() if w == v},
        errors=[disc.errors[v]])


def _check_nodes(st, nodes, what):
    for n in nodes:
        if n in st.boundaries:
            raise NetworkError(f"{what}: {n!r} is a boundary; give free nodes only")
        if n not in st.free:
            raise NetworkError(f"{what}: unknown node {n!r}; known: {', '.join(st.free)}")


def _group_variants(nets, store, opts, fail):
    """Compile every network; group them by structure and number of states."""
    from thermonet.network import Network

    structures: dict = {}
    groups: dict = {}     # key -> (structure, [positions], [values], [nets])
    for pos, net in enumerate(nets):
        if isinstance(net, BaseException):
            fail(pos, net)
            continue
        try:
            if not isinstance(net, Network):
                raise TypeError(f"expected a thermonet Network, got {type(net).__name__}")
            key = structure_key(net)
            st = structures.get(key)
            if st is None:
                st = compile_structure(net, store)
                if opts["comfort_node"] is not None:
                    _check_nodes(st, [opts["comfort_node"]], "comfort_node")
                for nodes in opts["balance_sets"].values():
                    _check_nodes(st, nodes, "balance_nodes")
                structures[key] = st
            val = compile_values(net, st, store)
            grp = groups.setdefault((key, val.n_states, val.ramp.tobytes()), (st, [], [], []))
            grp[1].append(pos)
            grp[2].append(val)
            grp[3].append(net)
        except Exception as exc:  # noqa: BLE001 - reported per variant
            fail(pos, exc)
    return groups


def run_batch(nets, weather: pd.DataFrame, *, step=None, warmup_days: float = 14.0,
              comfort_node: str | None = None, hours_above=(25.0, 26.0),
              degree_hours_above=(), balance_nodes=None, link_energy: bool = False,
              keep_traces: bool = False, max_bytes: float = DEFAULT_MAX_BYTES,
              on_error=None, kernel: str = "auto", interpolate=None) -> BatchOutput:
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
        per variant (the annual columns are then read from them).
    max_bytes : float, default 200e6
        Memory budget [bytes] of one kernel call; larger groups are split.
    on_error : callable, optional
        ``on_error(position, exception)``, called as soon as a network fails (for
        ``errors="raise"``); default: record and go on.
    kernel : {"auto", "numba", "numpy"}, default "auto"
        The compiled kernel (annual sums inside the loop) or the numpy reference (traces,
        then the same columns from them; slow, for checks).
    interpolate : collection of str, optional
        Instantaneous weather columns (as :func:`thermonet.simulate`).

    Returns
    -------
    BatchOutput
    """
    _check_warmup_days(warmup_days)
    store = ColumnStore.for_weather(weather, step, interpolate)
    check_weather_frame(weather, stacklevel=3)   # the weather once for every variant
    n = len(store.index)
    warm, opts = _batch_options(store, warmup_days, comfort_node, hours_above,
                                degree_hours_above, balance_nodes, link_energy, keep_traces,
                                kernel)
    N = len(nets)
    errors: list = [None] * N
    traces: list = [None] * N

    def fail(pos, exc):
        errors[pos] = exc
        if on_error is not None:
            on_error(pos, exc)

    groups = _group_variants(nets, store, opts, fail)
    parts: list = []      # (first finished position, positions, ok mask, results) per chunk
    for st, positions, vals, gnets in groups.values():
        opts["comfort"] = None if comfort_node is None else st.free.index(comfort_node)
        cap = bytes_per_variant(st, vals[0].n_states, n + warm, keep_traces,
                                max((p.own_columns for p in vals), default=0))
        size = int(max(1, min(MAX_CHUNK, max_bytes // cap)))
        for a in range(0, len(vals), size):
            res, errs, trs = _run_chunk(st, vals[a:a + size], gnets[a:a + size], store, warm,
                                        opts)
            pos = np.asarray(positions[a:a + size], dtype=np.int64)
            ok = np.array([e is None for e in errs], dtype=bool)
            for i in np.flatnonzero(~ok):
                fail(int(pos[i]), errs[i])
            for i in np.flatnonzero(ok):
                traces[pos[i]] = trs[i]
            if ok.any():
                parts.append((int(pos[ok].min()), pos[ok], ok, res))
    return BatchOutput(table=_assemble(parts, N), errors=errors, traces=traces)


def _assemble(parts, N) -> pd.DataFrame:
    """One table, rows by position; columns in the order a scan by position meets them."""
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
    return pd.DataFrame(data, index=pd.RangeIndex(N), columns=columns)


def run_values(st, vals: list, store: ColumnStore, *, warmup_days: float = 14.0,
               comfort_node: str | None = None, hours_above=(25.0, 26.0),
               degree_hours_above=(), balance_nodes=None, link_energy: bool = False,
               max_bytes: float = DEFAULT_MAX_BYTES, on_error=None,
               kernel: str = "auto") -> BatchOutput:
    """Step variants given by their compiled numbers (one structure), as :func:`run_batch`.

    The path of a parametric network (:func:`thermonet.engine.compile.parametric_values`):
    no network per variant, the same chunks, kernel and annual columns as
    :func:`run_batch` (hourly traces are not kept).

    Parameters
    ----------
    st : Structure
        The variants' structure.
    vals : list of Values or Exception
        The variants' numbers; an exception in place of a variant (a row whose values
        failed their checks) is passed through to :attr:`BatchOutput.errors`.
    store : ColumnStore
        The time series the variants' specs refer to (its weather was checked by the caller).
    warmup_days, comfort_node, hours_above, degree_hours_above, balance_nodes, link_energy
        As for :func:`run_batch` ([days], node name, [°C], [°C], nodes, bool).
    max_bytes : float, default 200e6
        Memory budget [bytes] of one kernel call.
    on_error : callable, optional
        ``on_error(position, exception)`` as soon as a variant fails.
    kernel : {"auto", "numba"}, default "auto"
        The compiled kernel (annual sums inside the loop).

    Returns
    -------
    BatchOutput
        ``traces`` are all None.
    """
    _check_warmup_days(warmup_days)
    n = len(store.index)
    warm, opts = _batch_options(store, warmup_days, comfort_node, hours_above,
                                degree_hours_above, balance_nodes, link_energy, False, kernel)
    if opts["kernel"] == "numpy":
        raise ValueError("run_values steps with the compiled kernel only; kernel='numpy' keeps "
                         "traces, which need a network per variant (use run_batch)")
    if comfort_node is not None:
        _check_nodes(st, [comfort_node], "comfort_node")
    for nodes in opts["balance_sets"].values():
        _check_nodes(st, nodes, "balance_nodes")
    opts["comfort"] = None if comfort_node is None else st.free.index(comfort_node)
    N = len(vals)
    errors: list = [None] * N

    def fail(pos, exc):
        errors[pos] = exc
        if on_error is not None:
            on_error(pos, exc)

    positions = []
    good = []
    for pos, v in enumerate(vals):
        if isinstance(v, BaseException):
            fail(pos, v)
        else:
            positions.append(pos)
            good.append(v)
    parts: list = []
    if good:
        cap = bytes_per_variant(st, good[0].n_states, n + warm, False,
                                max(p.own_columns for p in good))
        size = int(max(1, min(MAX_CHUNK, max_bytes // cap)))
        for a in range(0, len(good), size):
            chunk = good[a:a + size]
            res, errs, _ = _run_chunk(st, chunk, [None] * len(chunk), store, warm, opts)
            pos = np.asarray(positions[a:a + size], dtype=np.int64)
            ok = np.array([e is None for e in errs], dtype=bool)
            for i in np.flatnonzero(~ok):
                fail(int(pos[i]), errs[i])
            if ok.any():
                parts.append((int(pos[ok].min()), pos[ok], ok, res))
    return BatchOutput(table=_assemble(parts, N), errors=errors, traces=[None] * N)
