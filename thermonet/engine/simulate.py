"""``simulate``: the method registry and the driver of one simulation.

Method registry (``simulate(..., method=...)``); every method returns one declared type,
:class:`thermonet.engine.trajectory.Trajectory`:

``"exact"`` (:class:`ExactMethod`)
    Exact discretisation of ``C dx/dt = −K x + E u`` for inputs held constant over each step
    (zero-order hold) through the symmetric modal form, stepped by the compiled kernel in
    modal coordinates (:mod:`thermonet.engine.kernels`). Exact to rounding for any step;
    dense, for up to a few thousand capacitive nodes. Very stiff states are discretised by
    conservative scaling and doubling instead (:mod:`thermonet.engine.discretise`).
``"sparse"`` (:class:`SparseMethod`)
    For large networks: the same exact-in-principle step ``x⁺ = x_eq + e^{−hC⁻¹K}(x − x_eq)``
    with the matrix exponential applied by a rational (Carathéodory–Fejér) approximation, one
    sparse factorisation per pole; the approximation error is bounded and reported
    (:mod:`thermonet.engine.sparse`).
``"auto"``
    ``"exact"`` up to :data:`AUTO_DENSE_LIMIT` capacitive nodes, ``"sparse"`` beyond.

A single simulation is the one-variant case of the engine: the exact method runs
:func:`thermonet.engine.run.step_group` with one variant, as a batch of studies does with
many. Interval convention: row ``t`` of every result describes the step ``(t − h, t]``;
temperatures are at its end ``t``, flows and powers are means over it.

References
----------
.. [1] Franklin, G. F., Powell, J. D., Workman, M. L., Digital Control of Dynamic Systems,
   3rd ed., Addison-Wesley, 1998, §4.3 (zero-order-hold equivalent of a continuous system).
"""

from __future__ import annotations

import dataclasses
import functools
import math
import time
import warnings

import numpy as np
import pandas as pd

from thermonet.checks import check_simulation_inputs
from thermonet.engine.compile import Compiled, compile_network
from thermonet.engine.run import KERNELS, GroupRun, step_group
from thermonet.engine.trajectory import ExactTrajectory, JoinedTrajectory, Trajectory
from thermonet.errors import MemoryBudgetWarning
from thermonet.results import Results

#: Capacitive nodes up to which ``method="auto"`` takes the exact method.
AUTO_DENSE_LIMIT = 3000


def effective_inputs(comp: Compiled, F: np.ndarray, S: np.ndarray, P: np.ndarray, warm: int,
                     u_before=None, Q=None) -> tuple[np.ndarray, np.ndarray | None]:
    """Inputs as applied at the end of each step and at its start, (n, nu) each.

    End: raw boundary temperatures and source powers × the state's factors, thermostat
    powers ``P`` [W]. Start: the previous row's raw values (the last warm-up row, or
    ``u_before``/the first row, before the first reported step); only the inputs that vary
    linearly over a step read them, so they are formed only when some input does.

    Parameters
    ----------
    comp : Compiled
        The compiled network (its raw inputs: boundary temperatures [°C], source powers [W]).
    F : ndarray (ns, nu)
        Factor on each input in each state [-] (one variant of ``GroupRun.F``).
    S : ndarray (n,) of int
        State id of each reported step.
    P : ndarray (n, m)
        Thermostat powers [W] of each reported step.
    warm : int
        Warm-up steps run before the reported ones.
    u_before : ndarray (nu,), optional
        Raw inputs before the first row (where an earlier run ended); default the first
        row's.
    Q : ndarray (n, nfl), optional
        Window links' law heat flows into the room [W] (their own sources,
        :func:`thermonet.engine.compile.window_sources`).

    Returns
    -------
    U_end : ndarray (n, nu)
        Inputs at the end of each step ([°C] for boundaries, [W] for powers).
    U_prev : ndarray (n, nu) or None
        Raw inputs at the start of each step; None when no input varies linearly over a
        step (first-order hold), as nothing reads them then.
    """
    n = len(comp.index)
    nin = comp.nb + comp.nsrc
    f = F[0] if F.shape[0] == 1 else (F[S[0]] if len(S) and (S == S[0]).all() else F[S])
    U_end = np.empty((n, comp.nu))
    for j, spec in enumerate(comp.val.ucols):
        value = comp.store.value(spec)
        fj = f[..., j]
        # a factor of exactly 1 leaves every value as it is: no product
        U_end[:, j] = value if (fj == 1.0).all() else value * fj
    U_end[:, nin:] = P
    if comp.st.nfl and Q is not None:
        U_end[:, comp.nb + comp.st.flow_src[:, 0]] = Q
        far = comp.st.flow_src[:, 1] >= 0
        U_end[:, comp.nb + comp.st.flow_src[far, 1]] = -Q[:, far]
    if not comp.val.ramp.any():
        return U_end, None
    U = comp.U
    first = U[warm - 1] if warm else (U[0] if u_before is None else u_before)
    U_prev = np.vstack([np.asarray(first, dtype=float)[None, :], U[:-1]])
    return U_end, U_prev


def trajectory_of(comp: Compiled, run: GroupRun, inputs, info: dict) -> ExactTrajectory:
    """The :class:`ExactTrajectory` of variant 0 of a :class:`GroupRun`.

    Parameters
    ----------
    comp : Compiled
        The compiled network that was run.
    run : GroupRun
        What stepping it gave (traces kept).
    inputs : tuple or callable
        ``(U_end, U_prev)`` from :func:`effective_inputs` (effective inputs at the end and
        raw inputs at the start of each step, [°C] and [W]), or a callable without
        arguments returning them when first needed.
    info : dict
        Counters for :meth:`thermonet.Results.diagnostics`; ``doubling_states`` is added.

    Returns
    -------
    ExactTrajectory
    """
    d = run.disc
    dense = {s: mats for (v, s), mats in d.dense_mats.items() if v == 0}
    info = dict(info, doubling_states=len(dense))
    ramp = np.zeros(comp.nu, dtype=bool)
    ramp[:comp.nb + comp.nsrc] = comp.val.ramp
    wide = run.wide[0] if run.wide is not None and comp.nf == comp.nc else None
    # boundaries are never scaled by switches: their end values are the raw ones
    boundaries = [comp.store.value(spec) for spec in comp.val.ucols[:comp.nb]]
    return ExactTrajectory(run.X[0], run.x_first[0], run.S[0], inputs, ramp,
                           comp.G_states, d.Yx[0], d.Yu[0], d.lam[0], d.Q[0], d.W[0], d.C[0],
                           d.h, dense, info, wide=wide, boundaries=boundaries)


def switch_state_after(comp: Compiled, state_id: int) -> np.ndarray:
    """Switch positions (bool per switch) of a state id.

    Parameters
    ----------
    comp : Compiled
        The compiled network (its number of switches nsw).
    state_id : int
        State id ``sched · 2^nsw + switch bits``.

    Returns
    -------
    ndarray (nsw,) of bool
    """
    nsw = comp.nsw
    bits = int(state_id) % (1 << nsw)
    return np.array([(bits >> k) & 1 == 1 for k in range(nsw)], bool)


class ExactMethod:
    """``method="exact"``: exact ZOH steps on the compiled kernel (see the module docstring)."""

    name = "exact"

    def run(self, comp: Compiled, warm: int, *, kernel: str = "auto", start=None,
            u_before=None) -> Trajectory:
        """Step ``comp`` after ``warm`` warm-up steps.

        Parameters
        ----------
        comp : Compiled
        warm : int
            Warm-up steps (the first ``warm`` inputs, run before the reported period).
        kernel : {"auto", "numba", "numpy"}
            Compiled kernel or the numpy reference.
        start : tuple, optional
            ``(x0, switch positions)`` to continue an earlier run instead of the steady
            start.
        u_before : ndarray (nu,), optional
            Raw inputs before the first row (where an earlier run ended).
        """
        val = comp.val
        if start is not None:
            x0, sw = start
            val = dataclasses.replace(val, sw_init=np.asarray(sw, bool),
                                      initial=list(enumerate(np.asarray(x0, float))))
        ub = None if u_before is None else np.asarray(u_before, float)[None, :]
        # every free node capacitive: leave room for the boundaries beside the temperatures,
        # so the temperature table is the kernel's own rows (no copy)
        extra = comp.nb if comp.nf == comp.nc else 0
        run = step_group(comp.st, [val], comp.store, warm, keep=True, kernel=kernel,
                         u_before=ub, extra=extra)
        if run.errors[0] is not None:
            raise run.errors[0]
        inputs = functools.partial(effective_inputs, comp, run.F[0], run.S[0], run.P[0],
                                   warm, u_before, None if run.Q is None else run.Q[0])
        return trajectory_of(comp, run, inputs, {"kernel": kernel, "kernel_used": run.kernel})


class SparseMethod:
    """``method="sparse"``: rational-exponential steps for large networks."""

    name = "sparse"

    def run(self, comp: Compiled, warm: int, *, tol: float = 1e-6, keep=None) -> Trajectory:
        """Step ``comp`` after ``warm`` warm-up steps to the accuracy ``tol``.

        Parameters
        ----------
        comp : Compiled
            The compiled network.
        warm : int
            Warm-up steps (the first ``warm`` inputs, run before the reported period).
        tol : float, default 1e-6
            Accuracy target of the rational exponential, relative to each step's departure
            from equilibrium [-].
        keep : array of int, optional
            Free nodes whose temperatures are kept (default: all).

        Returns
        -------
        Trajectory
        """
        from thermonet.engine.sparse import run_sparse

        return run_sparse(comp, warm, tol=tol, keep=keep)


#: Method registry: name → stepper class.
METHODS = {"exact": ExactMethod, "sparse": SparseMethod}

#: Default memory budget [bytes] of the hourly results one run keeps; beyond it simulate
#: warns (MemoryBudgetWarning) and says how to keep less (``outputs=``).
MEMORY_BUDGET = 2e9


def kept_nodes(comp: Compiled, outputs) -> np.ndarray | None:
    """Free nodes (indices) to keep for ``outputs``; None keeps all.

    Parameters
    ----------
    comp : Compiled
    outputs : None, list of str or dict
        A list of node names, or ``{"nodes": [...], "balances": [[...], ...]}``: the nodes
        whose temperatures are kept, plus what the balance of each listed control volume
        needs (the ends of the links crossing it and its capacitive nodes).
    """
    if outputs is None:
        return None
    if isinstance(outputs, dict):
        unknown = sorted(set(outputs) - {"nodes", "balances"})
        if unknown:
            raise ValueError(f"outputs= keys must be 'nodes' and 'balances', got {unknown}")
        nodes, sets = list(outputs.get("nodes", [])), list(outputs.get("balances", []))
    elif isinstance(outputs, str):
        nodes, sets = [outputs], []
    else:
        nodes, sets = list(outputs), []
    pos = {n: i for i, n in enumerate(comp.free)}

    def index(name):
        if name not in pos:
            from thermonet.errors import NetworkError

            raise NetworkError(f"outputs=: {name!r} is not a free node; known: "
                               f"{', '.join(comp.free[:20])}{' …' if comp.nf > 20 else ''}")
        return pos[name]

    keep = {index(n) for n in nodes}
    for group in sets:
        inside = np.zeros(comp.nf + comp.nb, dtype=bool)
        inside[[index(n) for n in ([group] if isinstance(group, str) else group)]] = True
        cross = inside[comp.link_a] != inside[comp.link_b]
        ends = np.concatenate([comp.link_a[cross], comp.link_b[cross]])
        keep |= {int(i) for i in ends if i < comp.nf}
        keep |= {int(i) for i in np.flatnonzero(inside[:comp.nc])}
    return np.array(sorted(keep), dtype=np.int64)


def check_memory(comp: Compiled, warm: int, method: str, keep, budget: float) -> float:
    """Bytes the run will keep (hourly arrays), warning beyond ``budget`` [bytes].

    Parameters
    ----------
    comp : Compiled
    warm : int
        Warm-up steps.
    method : {"exact", "sparse"}
        The method that will run.
    keep : array of int or None
        Free nodes kept (None: all).
    budget : float
        Memory budget [bytes].

    Returns
    -------
    float
        Estimated bytes of the hourly arrays the run keeps.
    """
    n = len(comp.index) + warm
    k = comp.nf if keep is None else len(keep)
    per_step = (2 * k + 3 * comp.nu) if method == "sparse" else (3 * comp.nc + 3 * comp.nu)
    need = 8.0 * n * per_step
    if need > budget:
        warnings.warn(MemoryBudgetWarning(
            f"this run keeps about {need / 1e9:.1f} GB of hourly results ({k} nodes × "
            f"{n} steps), over the budget of {budget / 1e9:.1f} GB; keep only what you need "
            "with simulate(..., outputs={'nodes': [...], 'balances': [[...]]}) or raise "
            "memory_budget="), stacklevel=3)
    return need


def _check_options(method, kernel: str, sparse_tol, warmup_days) -> None:
    """Validate the options and warn about those the chosen method ignores."""
    if method not in ("auto",) + tuple(METHODS):
        raise ValueError(f"method must be one of {('auto',) + tuple(METHODS)}, got {method!r}")
    if kernel not in KERNELS:
        raise ValueError(f"kernel must be one of {KERNELS}, got {kernel!r}")
    if not (isinstance(warmup_days, (int, float)) and math.isfinite(warmup_days)
            and warmup_days >= 0):
        raise ValueError(f"warmup_days must be a finite number ≥ 0 [days], got {warmup_days!r}")
    if sparse_tol is not None and not (isinstance(sparse_tol, (int, float))
                                       and 0 < sparse_tol < 1):
        raise ValueError(f"sparse_tol must be a number in (0, 1), got {sparse_tol!r}")


def _warn_ignored(method: str, kernel: str, sparse_tol) -> None:
    if sparse_tol is not None and method == "exact":
        warnings.warn("sparse_tol= is ignored by method='exact', which is exact to "
                      "rounding; drop it or pass method='sparse'", UserWarning, stacklevel=4)
    if kernel != "auto" and method == "sparse":
        warnings.warn(f"kernel={kernel!r} is ignored by method='sparse' (it has its own "
                      "loop); drop it or pass method='exact'", UserWarning, stacklevel=4)


def _radiation_rows(net, comp: Compiled, temps, links, rad):
    """Conductances of every state with radiation links linearised at ``temps`` [°C]."""
    from thermonet.network import radiation_conductance

    G = comp.G_states.copy()
    for i in rad:
        p = links[i].params
        t = (p["reference_temperature"] if temps is None
             else 0.5 * (temps[links[i].a] + temps[links[i].b]))
        t = round(2 * t) / 2
        scale = comp.G_states[:, i] / comp.G_states[0, i] if comp.G_states[0, i] else 1.0
        G[:, i] = radiation_conductance(p["area"], p["emissivity_a"], p["emissivity_b"],
                                        p["view_factor"], area_b=p["area_b"],
                                        reference_temperature=t) * scale
    return G


def run_relinearised(net, comp: Compiled, w: int, kernel: str, freq: str) -> Trajectory:
    """Run period by period, re-linearising radiation links at each period start.

    At the start of each period (pandas offset alias ``freq``) every radiation link's
    h_r = 4σT_m³ is recomputed from the mean of its two nodes' end temperatures (rounded to
    0.5 K); a warm-up runs first at the links' reference temperatures.

    Parameters
    ----------
    net : Network
        The network (its radiation links' parameters).
    comp : Compiled
        ``net`` compiled on the weather.
    w : int
        Warm-up steps, run first at the reference linearisation.
    kernel : {"auto", "numba", "numpy"}
        Stepping kernel of the exact method.
    freq : str
        Pandas offset alias of the periods (``"D"``, ``"W"``, ``"MS"``).

    Returns
    -------
    JoinedTrajectory
        The reported periods, joined.
    """
    links = list(net.links.values())
    rad = [i for i, l in enumerate(links) if l.kind == "radiation"]
    n = len(comp.index)
    mid = comp.index - pd.Timedelta(seconds=comp.step_s / 2)
    chunks = [g.to_numpy() for _, g in pd.Series(np.arange(n), index=mid).resample(freq)
              if len(g)]
    if w:  # lead-in at the reference linearisation, then carry its end state
        chunks = [np.arange(min(w, n))] + chunks
    names = comp.free + comp.boundaries
    parts, start, temps, seen, before = [], None, None, set(), None
    for j, rows in enumerate(chunks):
        G = _radiation_rows(net, comp, temps, links, rad)
        seen.add(G[:, rad].tobytes())
        sub = Compiled(dataclasses.replace(comp.st, index=comp.index[rows]),
                       dataclasses.replace(comp.val, G=G), comp.store.slice(rows),
                       initial=comp.initial)
        tr = ExactMethod().run(sub, 0, kernel=kernel, start=start, u_before=before)
        if not (w and j == 0):
            parts.append(tr)
        last = np.concatenate([tr.end(np.arange(comp.nf))[-1], tr.U_end[-1, :comp.nb]])
        temps = dict(zip(names, last, strict=True))
        start = (tr.X[-1], switch_state_after(comp, tr.S[-1]))
        before = comp.U[rows[-1]]
    return JoinedTrajectory(parts, {"kernel": kernel, "states": len(seen) * comp.n_states})


def simulate(net, weather, *, step=None, method: str = "auto", warmup_days: float = 14.0,
             kernel: str = "auto", sparse_tol: float | None = None,
             relinearise: str | None = None, interpolate=None, outputs=None,
             memory_budget: float = MEMORY_BUDGET) -> Results:
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
        setpoint, :func:`thermonet.engine.start.steady_start`), then any node's ``initial=``
        temperature.
    kernel : {"auto", "numba", "numpy"}
        Compiled kernel (modal coordinates) or the plain-numpy reference loop (node
        coordinates); the same numbers to rounding.
    sparse_tol : float, optional
        Accuracy target of the rational exponential in ``method="sparse"``, relative to each
        step's departure from equilibrium (default 1e-6). Ignored, with a warning, by
        ``method="exact"``.
    relinearise : str, optional
        Pandas offset alias (``"D"``, ``"W"``, ``"MS"``): at the start of each such period,
        every radiation link's h_r = 4σT_m³ is recomputed from the mean of its two nodes'
        temperatures (rounded to 0.5 K). None (default): each link keeps its
        ``reference_temperature``. ``method="exact"`` only.
    interpolate : collection of str, optional
        Weather columns that are instantaneous values at their labels (air, dew-point, sky
        and ground temperatures): a boundary reading one follows a straight line between
        consecutive labels within each step (first-order hold), which the exact method
        steps exactly. Default (None): the weather's own record
        (``weather.attrs["timing"]``, written by thermonet's readers), else the names in
        :data:`thermonet.weather.INSTANTANEOUS_COLUMNS` and ``temp_*``. ``()`` holds every
        input over its step (zero-order hold). Interval values (irradiance, gains) are always
        held. ``method="sparse"`` holds each step's mean of such an input.

    outputs : list of str or dict, optional
        Keep only some results, to steer memory on large networks: a list of node names, or
        ``{"nodes": [...], "balances": [[...], ...]}`` — those nodes' temperatures plus what
        the balance of each listed control volume needs. The tables then show the kept
        nodes and the links between them; ``balance()`` works for the listed volumes.
        Default: everything.
    memory_budget : float, default 2e9
        Bytes of hourly results above which a :class:`thermonet.errors.MemoryBudgetWarning`
        is issued before the run.

    Notes
    -----
    Thermostats hold their node at the setpoint at the *end* of each step: the power is
    constant over the step and found by superposition so that the end-of-step temperature
    meets the setpoint (within the capacity); the node's step mean may differ from the
    setpoint while it settles. Results report end-of-step temperatures
    (``temperatures``) and step means (``mean_temperatures``, used by the balance).
    Measured: on the demo room (air-node thermostat, a year at hourly steps) the step mean of
    the heated air differs from the setpoint by 0.0075 K on average while heating, and the
    annual heating by 0.37 % from 10-minute steps — too little to warrant holding the step
    mean instead. Do not use a thermostat to pin a node at a fixed temperature: on an
    ISO 13786 wall with both inside nodes "held" by thermostats at hourly steps the periodic
    heat flow came out 2.5 % low and 0.32 h early, against 0.9 % and 0.03 h with a boundary
    at that temperature linked by a large conductance. Use a boundary.

    Window links (:meth:`thermonet.Network.add_window_flow`) re-evaluate their flow law
    every step; their accuracy depends on the step (``docs/airflow_engine.md``): against a
    fine solution of the same model over a July, hourly steps were within 0.26 K (mean
    0.008 K) for a room of 1 MJ/K, 15-minute steps within 0.02 K — pass ``step="15min"``
    when the 0.1 K level matters.

    Returns
    -------
    Results
    """
    _check_options(method, kernel, sparse_tol, warmup_days)
    t0 = time.perf_counter()
    read = check_simulation_inputs(net, weather, warmup_days)  # impossible → error, odd → warn
    comp = compile_network(net, weather, step=step, interpolate=interpolate, read=read)
    n = len(comp.index)
    w = min(int(round(warmup_days * 86400.0 / comp.step_s)), n)
    if method == "auto":
        method = "exact" if comp.nc <= AUTO_DENSE_LIMIT or comp.st.nfl else "sparse"
    if method == "sparse" and comp.st.nfl:
        raise ValueError(f"window links ({', '.join(comp.link_names[i] for i in comp.flow_links)}"
                         ") are stepped by method='exact' only; pass method='exact' or 'auto'")
    _warn_ignored(method, kernel, sparse_tol)
    keep = kept_nodes(comp, outputs)
    info = {"method": method, "steps": n, "warmup_steps": w, "step_s": comp.step_s,
            "states": comp.n_states, "kernel": kernel,
            "kept_bytes": check_memory(comp, w, method, keep, memory_budget)}
    if relinearise is not None:
        if method != "exact":
            raise ValueError("relinearise= works with method='exact'; pass method='exact'")
        traj = run_relinearised(net, comp, w, kernel, relinearise)
        info["relinearise"] = relinearise
    elif method == "exact":
        traj = ExactMethod().run(comp, w, kernel=kernel)
    else:
        traj = SparseMethod().run(comp, w, tol=1e-6 if sparse_tol is None else sparse_tol,
                                  keep=keep)
    if keep is not None and getattr(traj, "keep_mask", "x") is None:
        traj.keep_mask = np.zeros(comp.nf, dtype=bool)
        traj.keep_mask[keep] = True
    info.update({k: v for k, v in traj.info.items() if k != "kernel"})
    res = Results(net, comp, traj, info)
    info["seconds"] = time.perf_counter() - t0
    return res
