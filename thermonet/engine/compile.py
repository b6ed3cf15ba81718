"""Compile a :class:`~thermonet.network.Network` against a time axis: the engine's only compiler.

Compiling has two halves, so that many variants of one structure are read cheaply:

* :func:`compile_structure` — what variants of one group share: node order, boundaries,
  links (ends, paths), sources, thermostats, switch conditions. Free nodes are ordered
  capacitive first (``x``, C > 0), then massless (``y``, C = 0). The input vector of a step is
  ``u = [T_boundaries, source powers, thermostat powers]``.
* :func:`compile_values` — one variant's numbers: capacitances, the conductances of every
  *state* (a combination of scheduled link values and switch positions), capacity limits,
  switch factors and thresholds, and its time series as *column specs* into a shared
  :class:`ColumnStore` (a weather column or a gains profile used by many variants is stored
  once; a constant is a float and never expanded to a series).

:func:`compile_network` is both halves for one network, with the inputs materialised as
arrays (a :class:`Compiled`). The batch path of :mod:`thermonet.engine.batch` calls the two
halves itself.

References
----------
.. [1] Strang, G., Computational Science and Engineering, Wellesley-Cambridge, 2007, §2.4
   (graph Laplacians of networks) — the elimination of algebraic nodes is the Schur complement.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from thermonet.controls import HourWindow, Signal
from thermonet.errors import NetworkError, ScheduleError, WeatherError
from thermonet.schedules import align, check_index

#: Largest number of cached discretisations (scheduled link states × switch states).
MAX_STATES = 256


# ====================================================================== time axis, columns
def upsample(values: np.ndarray, factor: int) -> np.ndarray:
    """Hold each interval's value over its ``factor`` sub-intervals (interval ending).

    Parameters
    ----------
    values : ndarray (n, ...)
        One value per weather interval (any unit), time on axis 0.
    factor : int
        Sub-steps per weather step (1: ``values`` returned as is).

    Returns
    -------
    ndarray (n · factor, ...)
    """
    return np.repeat(values, factor, axis=0) if factor > 1 else values


def sim_index(weather_index: pd.DatetimeIndex, step) -> tuple[pd.DatetimeIndex, int, float]:
    """The simulation index for ``step`` (None: the weather's), the sub-step factor, step [s].

    Parameters
    ----------
    weather_index : pandas.DatetimeIndex
        Tz-aware, regular, increasing; each label ends its interval.
    step : str, pandas.Timedelta or None
        Simulation step; it must divide the weather's step evenly.
    """
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


def series_or_constant(value, weather: pd.DataFrame, factor: int, what: str,
                       column_ok: bool = False, column: pd.Series | None = None) -> np.ndarray:
    """A value on the simulation index: a weather column (boundaries only), a Series or a number.

    Parameters
    ----------
    value : str, pandas.Series or float
        Weather column name, Series aligned to the weather's index, or a constant.
    weather : pandas.DataFrame
        The weather (its index is the time axis).
    factor : int
        Sub-steps per weather step.
    what : str
        Names the input in error messages.
    column_ok : bool, default False
        Whether a weather column name is allowed.
    column : pandas.Series, optional
        The weather column ``value`` names, already read from ``weather`` (then not read
        again).
    """
    n = len(weather.index)
    if isinstance(value, str):
        if not column_ok:
            raise NetworkError(f"{what}: a column name is only allowed for boundaries")
        if value not in weather.columns:
            raise WeatherError(f"{what} uses weather column {value!r}, which is missing; "
                               f"columns: {', '.join(map(str, weather.columns))}")
        col = weather[value] if column is None else column
        col = col.to_numpy() if col.dtype == np.float64 else np.asarray(col, dtype=float)
        if not np.isfinite(col).all():
            i = int((~np.isfinite(col)).argmax())
            raise WeatherError(f"weather column {value!r} (used by {what}) has NaN/inf at "
                               f"{weather.index[i]}; repair it explicitly, e.g. "
                               "thermonet.weather.validate(df, fill='interpolate')")
        return upsample(col, factor)
    if isinstance(value, pd.Series):
        return upsample(align(value, weather.index, what), factor)
    return np.full(n * factor, float(value))


class ColumnStore:
    """Time series [SI] on the simulation index, stored once and referenced by key.

    A column *spec* is either a float (a constant, never expanded) or a key into the store.

    Parameters
    ----------
    weather : pandas.DataFrame
        The weather; its index is the time axis.
    factor : int
        Sub-steps per weather step.
    index : pandas.DatetimeIndex
        The simulation index (see :func:`sim_index`).
    step_s : float
        Simulation step [s].
    instantaneous : collection of str, default empty
        Weather columns that are instantaneous values: on sub-steps they are interpolated
        linearly between labels, and inputs read from them follow a first-order hold.
    read : dict of str to pandas.Series, optional
        Weather columns already read from ``weather`` (by the input checks), used instead
        of reading them again.
    """

    def __init__(self, weather: pd.DataFrame, factor: int, index: pd.DatetimeIndex,
                 step_s: float, instantaneous=frozenset(), read=None):
        self.weather, self.factor, self.index, self.step_s = weather, factor, index, step_s
        self.instantaneous = frozenset(instantaneous)
        self.read = {} if read is None else read
        self.cols: dict = {}
        self._refs: dict = {}  # keeps Series alive so that id() keys stay unique

    @classmethod
    def for_weather(cls, weather: pd.DataFrame, step=None, interpolate=None,
                    read=None) -> ColumnStore:
        """A store on the simulation index of ``weather`` at ``step`` (None: the weather's).

        Parameters
        ----------
        weather : pandas.DataFrame
        step : str or Timedelta, optional
        interpolate : collection of str, optional
            Weather columns that are instantaneous values, interpolated linearly between
            labels (first-order hold); None: :func:`thermonet.weather.instantaneous_columns`.
        read : dict of str to pandas.Series, optional
            Columns of ``weather`` already read (see :class:`ColumnStore`).
        """
        from thermonet.weather import instantaneous_columns

        if not isinstance(weather, pd.DataFrame):
            raise TypeError(f"weather must be a pandas DataFrame, got {type(weather).__name__}")
        index, factor, step_s = sim_index(weather.index, step)
        if interpolate is None:
            inst = instantaneous_columns(weather)
        else:
            if isinstance(interpolate, str):
                raise TypeError("interpolate= takes a collection of column names, e.g. "
                                "['temp_air'], or () to hold every input over its step")
            inst = frozenset(interpolate)
            missing = sorted(map(str, inst - set(weather.columns))) if inst else []
            if missing:
                raise WeatherError(f"interpolate= names column(s) {missing} that the weather "
                                   f"does not have; columns: "
                                   f"{', '.join(map(str, weather.columns))}")
        return cls(weather, factor, index, step_s, inst, read)

    def __len__(self):
        return len(self.index)

    def slice(self, rows) -> ColumnStore:
        """A store of the rows ``rows`` of this one (same keys).

        Parameters
        ----------
        rows : slice or array of int or bool
            Rows of the simulation index to keep.

        Returns
        -------
        ColumnStore
        """
        out = ColumnStore(self.weather, self.factor, self.index[rows], self.step_s,
                          self.instantaneous)
        out.cols = {k: v[rows] for k, v in self.cols.items()}
        out._refs = self._refs
        return out

    def weather_col(self, name: str, what: str):
        """Key of weather column ``name`` (checked: present, finite).

        An instantaneous column on sub-steps is interpolated linearly between the labels
        (the first label's value before it); others are held over their interval.

        Parameters
        ----------
        name : str
            Weather column name.
        what : str
            Names the input that uses it, in error messages (e.g. ``"boundary 'outdoor'"``).

        Returns
        -------
        tuple
            The key ``("weather", name)``.

        Raises
        ------
        WeatherError
            The column is missing or has NaN/inf values.
        """
        key = ("weather", name)
        if key not in self.cols:
            col = series_or_constant(name, self.weather, 1, what, column_ok=True,
                                     column=self.read.get(name))
            if self.factor > 1 and name in self.instantaneous and len(col):
                tw = np.asarray(self.weather.index.as_unit("ns").asi8, dtype=float)
                ts = np.asarray(self.index.as_unit("ns").asi8, dtype=float)
                col = np.interp(ts, tw, col)        # sub-steps between labels, linearly
            else:
                col = upsample(col, self.factor)
            self.cols[key] = col
        return key

    def is_ramp(self, spec) -> bool:
        """Whether a spec is an instantaneous weather column (first-order hold).

        Parameters
        ----------
        spec : float or tuple
            A column spec (a constant or a key).
        """
        return isinstance(spec, tuple) and spec[0] == "weather" and spec[1] in self.instantaneous

    def series_col(self, series: pd.Series, what: str):
        """Key of a Series aligned to the weather (checked: same index, finite).

        Parameters
        ----------
        series : pandas.Series
            Values on the weather's index (any SI unit: [°C], [W], [W/K] ...), held over
            each sub-step.
        what : str
            Names the input in error messages.

        Returns
        -------
        tuple
            The key ``("series", id(series))``; the store keeps the Series alive.
        """
        key = ("series", id(series))
        if key not in self.cols:
            self.cols[key] = series_or_constant(series, self.weather, self.factor, what)
            self._refs[key] = series
        return key

    def array_col(self, values: np.ndarray):
        """A constant → float; otherwise a content-hashed key.

        Parameters
        ----------
        values : array_like (n,)
            Values on the simulation index (any unit); all NaN gives NaN.

        Returns
        -------
        float or tuple
        """
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

    def spec(self, value, what: str, column_ok: bool = False):
        """Spec of a number, a Series or (``column_ok``) a weather column name.

        Parameters
        ----------
        value : float, pandas.Series or str
            A constant, a Series on the weather's index, or a weather column name (SI
            units of the input: [°C] temperatures, [W] powers).
        what : str
            Names the input in error messages.
        column_ok : bool, default False
            Whether a weather column name is allowed (boundaries only).

        Returns
        -------
        float or tuple
        """
        if isinstance(value, str):
            if not column_ok:
                raise NetworkError(f"{what}: a column name is only allowed for boundaries")
            return self.weather_col(value, what)
        if isinstance(value, pd.Series):
            return self.series_col(value, what)
        return float(value)

    def value(self, spec) -> np.ndarray | float:
        """The series of a key, or the float itself.

        Parameters
        ----------
        spec : float or tuple
            A column spec.
        """
        return spec if isinstance(spec, float) else self.cols[spec]

    def array(self, spec) -> np.ndarray:
        """The spec as a full array on the simulation index.

        Parameters
        ----------
        spec : float or tuple
            A column spec.

        Returns
        -------
        ndarray (n,)
        """
        v = self.value(spec)
        return np.full(len(self.index), v) if isinstance(v, float) else v


# ================================================================================ structure
def connected_to_boundary(nf: int, a: np.ndarray, b: np.ndarray, g: np.ndarray
                          ) -> np.ndarray:
    """Free nodes reachable from a boundary through links with g > 0 (union-find).

    Parameters
    ----------
    nf : int
        Number of free nodes; link ends ≥ nf are boundaries.
    a, b : ndarray of int
        Link ends (indices into free nodes then boundaries).
    g : ndarray
        Link conductances [W/K].
    """
    parent = list(range(nf + 1))  # nf = virtual "any boundary" root (Python ints: fast)

    def find(i):
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    for ai, bi, gi in zip(np.asarray(a).tolist(), np.asarray(b).tolist(),
                          np.asarray(g, dtype=float).tolist(), strict=True):
        if gi <= 0:
            continue
        ra = find(min(ai, nf))
        rb = find(min(bi, nf))
        if ra != rb:
            parent[ra] = rb
    root = find(nf)
    return np.array([find(i) == root for i in range(nf)], dtype=bool)


def condition_terms(net):
    """Every term of every switch condition, in compile order (on, then off, per switch).

    Parameters
    ----------
    net : Network
        The network whose switches are read.

    Yields
    ------
    term
        Each term (``a``, ``b``, ``op``, ``threshold``) of each clause.
    """
    for s in net.switches.values():
        for cond in (s.on, s.off):
            if cond is None:
                continue
            for clause in cond.clauses:
                yield from clause


@dataclass
class Structure:
    """What the variants of one group share (names, connectivity, conditions).

    Attributes
    ----------
    index : pandas.DatetimeIndex
        Simulation index; row t covers (t − h, t].
    step_s : float
        Step h [s].
    free : list of str
        Free nodes, capacitive first.
    nc : int
        Number of capacitive free nodes (the first ``nc`` of ``free``).
    boundaries, link_names, link_paths, source_names, source_paths, thermostat_names,
    switch_names : list of str
    link_a, link_b : ndarray of int
        Link ends, indices into ``free + boundaries``.
    source_node, thermostat_node : ndarray of int
        Indices into ``free``.
    sched_links : ndarray of int
        Links whose conductance is a Series (scheduled).
    terms : ndarray (n_terms, 6)
        ``kind_a, idx_a, kind_b, idx_b, op, threshold`` of every condition term (kind 0 free
        node, 1 signal, 2 none); the threshold column is the template's.
    term_clause, clause_cond : ndarray of int
        Clause of each term; condition of each clause (2·switch + 0 on / 1 off).
    has_off : ndarray of bool
        Per switch, whether it has an ``off`` condition (hysteresis).
    connected : bool
        Whether every free node reaches a boundary when every link conducts (then a variant
        whose conductances are all > 0 needs no check of its own).
    signal_refs : list
        Signal columns in order: ``("boundary", name)``, ``("signal", Signal)`` or
        ``("hours", HourWindow)``.
    flow_links : ndarray of int
        Window links (a flow law re-evaluated every step), indices into the links.
    flow_src : ndarray (nfl, 2) of int
        Per window link, the engine's own sources that carry the law's departure from the
        link's reference conductance (see :func:`window_sources`): into the room node, and
        out of the far node (−1 when the far side is a boundary).
    """

    index: pd.DatetimeIndex
    step_s: float
    free: list
    nc: int
    boundaries: list
    link_names: list
    link_paths: list
    link_a: np.ndarray
    link_b: np.ndarray
    sched_links: np.ndarray
    source_names: list
    source_paths: list
    source_node: np.ndarray
    thermostat_names: list
    thermostat_node: np.ndarray
    switch_names: list
    terms: np.ndarray
    term_clause: np.ndarray
    clause_cond: np.ndarray
    has_off: np.ndarray
    signal_refs: list
    connected: bool = False
    flow_links: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=np.int64))
    flow_src: np.ndarray = field(default_factory=lambda: np.zeros((0, 2), dtype=np.int64))

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
    def na(self):
        return self.nf - self.nc

    @property
    def nl(self):
        return len(self.link_names)

    @property
    def nsw(self):
        return len(self.switch_names)

    @property
    def nfl(self):
        return len(self.flow_links)


def _condition_code(net, free_pos, refs: dict):
    """Terms of every switch condition as numbers; fills ``refs`` (signal key → column)."""

    def signal(key, ref):
        if key not in refs:
            refs[key] = (len(refs), ref)
        return refs[key][0]

    def code(ref):
        if ref is None:
            return 2, 0
        if isinstance(ref, str):
            if ref in net.boundaries:
                return 1, signal(("boundary", ref), ref)
            return 0, free_pos[ref]
        if isinstance(ref, Signal):
            return 1, signal(("signal", id(ref)), ref)
        if isinstance(ref, HourWindow):
            return 1, signal(("hours", ref.start, ref.end), ref)
        raise TypeError(f"a condition term refers to {ref!r}; use a node or boundary name, a "
                        "Signal or thermonet.hours()")

    terms, term_clause, clause_cond = [], [], []
    for k, s in enumerate(net.switches.values()):
        for ci, cond in enumerate((s.on, s.off)):
            if cond is None:
                continue
            for clause in cond.clauses:
                cid = len(clause_cond)
                clause_cond.append(2 * k + ci)
                for t in clause:
                    ka, ia = code(t.a)
                    kb, ib = code(t.b)
                    terms.append([ka, ia, kb, ib, 1.0 if t.op == ">" else -1.0, t.threshold])
                    term_clause.append(cid)
    return terms, term_clause, clause_cond


def window_sources(links: list, pos: dict, n_sources: int, n_free: int):
    """The engine's own sources of the window links, appended after the network's sources.

    A window link (:meth:`thermonet.Network.add_window_flow`) conducts its reference
    conductance ``G_ref`` (its law at :data:`FLOW_REFERENCE_DT` and the run's median wind,
    times any switch factor) in the exact step; the flow law's departure
    ``ΔG = f·(G_law − G_ref)`` carries ``q = ΔG·(T̂_b − T̂_a)`` [W], found by the kernel each
    step, into the room node ``a`` (and out of a far node
    ``b``) through these sources. They are booked under the link's path, so the balance of
    every control volume includes them and closes exactly.

    Parameters
    ----------
    links : list of Link
        The network's links in order.
    pos : dict
        Node or boundary name → index into ``free + boundaries``.
    n_sources : int
        Number of the network's own sources.
    n_free : int
        Number of free nodes (indices below it in ``pos`` are free nodes).

    Returns
    -------
    flow : ndarray (nfl,) of int
        Link index of each window link.
    src : ndarray (nfl, 2) of int
        Source index into the room node and out of the far node (−1: a boundary).
    names, paths : list of str
        Names (``"<link>:law"``, ``"<link>:law_far"``) and paths of the added sources.
    nodes : list of int
        Their nodes (indices into ``free``).
    """
    flow = [i for i, l in enumerate(links) if l.kind == "window"]
    src = np.full((len(flow), 2), -1, dtype=np.int64)
    names, paths, nodes = [], [], []
    for f, i in enumerate(flow):
        link = links[i]
        src[f, 0] = n_sources + len(names)
        names.append(f"{link.name}:law")
        paths.append(link.path)
        nodes.append(pos[link.a])
        if pos[link.b] < n_free:
            src[f, 1] = n_sources + len(names)
            names.append(f"{link.name}:law_far")
            paths.append(link.path)
            nodes.append(pos[link.b])
    return np.array(flow, dtype=np.int64), src, names, paths, nodes


def compile_structure(net, store: ColumnStore) -> Structure:
    """The shared half of compiling ``net`` (see the module docstring).

    Parameters
    ----------
    net : Network
    store : ColumnStore
        Gives the simulation index and step.

    Raises
    ------
    NetworkError
        No free node or no boundary.
    """
    if getattr(net, "parameters", None):
        from thermonet.parameters import refuse_parameters

        refuse_parameters(net)
    if not net.nodes:
        raise NetworkError("the network has no free nodes; add_node() first")
    if not net.boundaries:
        raise NetworkError("the network has no boundary; every node needs a path to one "
                           "(add_boundary('outdoor', temperature='temp_air'))")
    cap = [k for k, v in net.nodes.items() if v.capacitance > 0]
    free = cap + [k for k, v in net.nodes.items() if v.capacitance == 0]
    bnames = list(net.boundaries)
    pos = {name: i for i, name in enumerate(free + bnames)}
    links = list(net.links.values())
    srcs = list(net.sources.values())
    th = list(net.thermostats.values())
    refs: dict = {}
    terms, term_clause, clause_cond = _condition_code(net, pos, refs)
    flow, fsrc, fnames, fpaths, fnodes = window_sources(links, pos, len(srcs), len(free))
    link_a = np.array([pos[l.a] for l in links], dtype=np.int64)
    link_b = np.array([pos[l.b] for l in links], dtype=np.int64)
    return Structure(
        index=store.index, step_s=store.step_s, free=free, nc=len(cap), boundaries=bnames,
        link_names=[l.name for l in links], link_paths=[l.path for l in links],
        link_a=link_a, link_b=link_b,
        sched_links=np.array([i for i, l in enumerate(links)
                              if isinstance(l.conductance, pd.Series)], dtype=np.int64),
        source_names=[s.name for s in srcs] + fnames,
        source_paths=[s.path for s in srcs] + fpaths,
        source_node=np.array([pos[s.node] for s in srcs] + fnodes, dtype=np.int64),
        thermostat_names=[t.name for t in th],
        thermostat_node=np.array([pos[t.node] for t in th], dtype=np.int64),
        switch_names=list(net.switches),
        terms=np.array(terms, dtype=float).reshape(-1, 6),
        term_clause=np.array(term_clause, dtype=np.int64),
        clause_cond=np.array(clause_cond, dtype=np.int64),
        has_off=np.array([s.off is not None for s in net.switches.values()], dtype=bool),
        signal_refs=[(key[0], ref) for key, (_, ref) in sorted(refs.items(),
                                                                key=lambda kv: kv[1][0])],
        connected=bool(connected_to_boundary(len(free), link_a, link_b,
                                             np.ones(len(links))).all()),
        flow_links=flow, flow_src=fsrc,
    )


# =================================================================================== values
@dataclass
class Values:
    """One variant's numbers (SI); time series as column specs (see :class:`ColumnStore`).

    Attributes
    ----------
    C : ndarray (nc,)
        Capacitances [J/K].
    G : ndarray (ns, nl)
        Link conductances of every state [W/K]; state ``sched · 2^nsw + switch bits``.
    n_sched : int
        Number of distinct scheduled-conductance rows.
    sched : float or key
        Spec of the scheduled-state id per step.
    qh, qc : ndarray (m,)
        Heating and cooling capacities [W].
    source_factor : ndarray (ns, nsrc)
        Factor on each source in each state (product of the switches' factors).
    sw_init : ndarray (nsw,) of bool
    thresholds : ndarray (n_terms,)
        Condition thresholds [°C or the signal's unit].
    initial : list of (int, float)
        Capacitive node index and its initial temperature [°C].
    ucols, hcols, ccols, scols : list
        Specs of the boundary temperatures and source powers, heating and cooling setpoints
        (NaN = none), and condition signals.
    ramp : ndarray (nb + nsrc,) of bool
        Inputs that are instantaneous values, interpolated linearly over each step
        (first-order hold); the others are held (zero-order hold).
    own_columns : int
        Columns this variant added to the store when it was compiled (for memory estimates).
    flow_coef : ndarray (nfl, 9)
        Per window link: its flow law's coefficients
        (:func:`thermonet.airflow.flow_law_coefficients`), ρc_p [J/(m³K)] and the reference
        conductance G_ref [W/K].
    flow_fac : ndarray (ns, nfl)
        Per state and window link: the switches' factor on its flow [-] (0 shut).
    flow_wind : list
        Per window link: spec of its wind speed [m/s].
    flow_wind_ramp : ndarray (nfl,) of bool
        Per window link: whether its wind speed follows a straight line over each step.
    """

    C: np.ndarray
    G: np.ndarray
    n_sched: int
    sched: object
    qh: np.ndarray
    qc: np.ndarray
    source_factor: np.ndarray
    sw_init: np.ndarray
    thresholds: np.ndarray
    initial: list
    ucols: list
    hcols: list
    ccols: list
    scols: list
    ramp: np.ndarray
    own_columns: int = 0
    flow_coef: np.ndarray = field(default_factory=lambda: np.zeros((0, 9)))
    flow_fac: np.ndarray = field(default_factory=lambda: np.zeros((1, 0)))
    flow_wind: list = field(default_factory=list)
    flow_wind_ramp: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=bool))

    @property
    def n_states(self):
        return self.G.shape[0]


def _switch_factors(net, st: Structure):
    """Per switch: link and source factors while on and while off."""
    nsw, nl, nsrc = st.nsw, st.nl, st.nsrc
    if not nsw:
        return np.ones((2, 0, nl)), np.ones((2, 0, nsrc))
    link_pos = {n: i for i, n in enumerate(st.link_names)}
    src_pos = {n: i for i, n in enumerate(st.source_names)}
    lf = np.ones((2, nsw, nl))        # [0] off, [1] on
    sf = np.ones((2, nsw, nsrc))
    for k, s in enumerate(net.switches.values()):
        for ln, (f_off, f_on) in s.link_factors.items():
            lf[0, k, link_pos[ln]], lf[1, k, link_pos[ln]] = f_off, f_on
        for sn, (f_off, f_on) in s.source_factors.items():
            sf[0, k, src_pos[sn]], sf[1, k, src_pos[sn]] = f_off, f_on
    return lf, sf


def _state_products(f: np.ndarray, nsw: int) -> np.ndarray:
    """Row ``bits`` = product over switches of their on/off factors (f: (2, nsw, k))."""
    out = np.ones((1 << nsw, f.shape[2]))
    for bits in range(1 << nsw):
        for k in range(nsw):
            out[bits] *= f[bits >> k & 1, k]
    return out


def _scheduled_rows(net, st: Structure, store: ColumnStore, links):
    """Base conductances, distinct scheduled rows and the spec of the row id per step."""
    base = np.empty(st.nl)
    sched_cols = []
    for i, l in enumerate(links):
        if isinstance(l.conductance, pd.Series):
            sched_cols.append(store.array(store.series_col(l.conductance,
                                                           f"link {l.name!r} conductance")))
            base[i] = np.nan
        else:
            base[i] = float(l.conductance)
    if not sched_cols:
        return base, np.zeros((1, 0)), 0.0
    G_time = np.stack(sched_cols, axis=1)
    uniq, inv = np.unique(G_time, axis=0, return_inverse=True)
    base[st.sched_links] = G_time[0]
    return base, uniq, store.array_col(inv.ravel().astype(float))


#: Indoor–outdoor temperature difference [K] at which a window link's reference conductance
#: is taken (with the run's median wind speed); the law's departure from it is what the
#: kernel solves for each step (common practice for summer airing, no source).
FLOW_REFERENCE_DT = 3.0


def _flow_values(net, st: Structure, store: ColumnStore):
    """Window links' coefficients (with the reference conductance) and wind specs.

    The reference conductance G_ref [W/K] of each window link is its law at
    :data:`FLOW_REFERENCE_DT` and the median wind speed of the run; it goes into the exact
    step, and the kernel carries the law's departure from it (see :func:`window_sources`).
    """
    if not st.nfl:
        return np.zeros((0, 9)), [], np.zeros(0, dtype=bool)
    from thermonet.airflow import law_flow

    links = list(net.links.values())
    coef = np.zeros((st.nfl, 9))
    winds, ramps = [], []
    for f, li in enumerate(st.flow_links):
        link = links[int(li)]
        coef[f, :7] = link.params["coefficients"]
        coef[f, 7] = link.params["rho_cp"]
        spec = store.spec(link.params["wind"], f"window link {link.name!r} wind [m/s]",
                          column_ok=True)
        w = np.atleast_1d(np.asarray(store.value(spec), dtype=float))
        bad = np.flatnonzero(~(np.isfinite(w) & (w >= 0)))
        if bad.size:
            raise WeatherError(f"window link {link.name!r}: wind speed {link.params['wind']!r} "
                               f"must be finite and ≥ 0 m/s at every step (row {bad[0]}: "
                               f"{w[bad[0]]}); fill the gaps or clip negative values")
        coef[f, 8] = coef[f, 7] * law_flow(coef[f, :7], 20.0 + FLOW_REFERENCE_DT, 20.0,
                                           float(np.median(w)))
        winds.append(spec)
        ramps.append(store.is_ramp(spec))
    return coef, winds, np.array(ramps, dtype=bool)


def _check_connected(st: Structure, G: np.ndarray) -> None:
    if (G > 0).all():
        if st.connected:           # every link conducts: the structure's own check holds
            return
        states = G[:1]
    else:
        states = G
    for s_id, g in enumerate(states):
        ok = connected_to_boundary(st.nf, st.link_a, st.link_b, g)
        if not ok.all():
            lost = [st.free[i] for i in np.flatnonzero(~ok)]
            where = "" if s_id == 0 else " in a scheduled or switched state"
            raise NetworkError(
                f"node(s) {', '.join(map(repr, lost))} have no path to any boundary{where}; "
                "the system would be singular. Link them (with G > 0) to a boundary or to a "
                "connected node")


def _input_specs(net, st: Structure, store: ColumnStore):
    ucols = [store.spec(net.boundaries[b].temperature, f"boundary {b!r}", column_ok=True)
             for b in st.boundaries]
    ucols += [store.spec(s.power, f"source {s.name!r} power") for s in net.sources.values()]
    ucols += [0.0] * (st.nsrc - len(net.sources))      # window links' own sources (kernel)
    hcols, ccols = [], []
    for t in net.thermostats.values():
        hs = (float("nan") if t.heating_setpoint is None else
              store.spec(t.heating_setpoint, f"thermostat {t.name!r} heating_setpoint"))
        cs = (float("nan") if t.cooling_setpoint is None else
              store.spec(t.cooling_setpoint, f"thermostat {t.name!r} cooling_setpoint"))
        if t.heating_setpoint is not None and t.cooling_setpoint is not None and (
                hs > cs if isinstance(hs, float) and isinstance(cs, float)
                else np.any(np.asarray(store.value(hs)) > np.asarray(store.value(cs)))):
            raise NetworkError("a thermostat's heating setpoint exceeds its cooling setpoint; "
                               "keep heating ≤ cooling at every step")
        hcols.append(hs)
        ccols.append(cs)
    bpos = {b: j for j, b in enumerate(st.boundaries)}
    scols = []
    for kind, ref in st.signal_refs:
        if kind == "boundary":
            scols.append(ucols[bpos[ref]])
        elif kind == "signal":
            scols.append(store.series_col(ref.series, f"signal {ref.name!r}"))
        else:
            scols.append(store.array_col(ref.values(store.index,
                                                    pd.Timedelta(seconds=store.step_s))))
    return ucols, hcols, ccols, scols


def compile_values(net, st: Structure, store: ColumnStore) -> Values:
    """One variant's numbers for a network of structure ``st`` (see the module docstring).

    Parameters
    ----------
    net : Network
        A network whose structure is ``st`` (same names, ends, paths and conditions).
    st : Structure
        From :func:`compile_structure` (of this network or one of the same structure).
    store : ColumnStore
        Where its time series are stored.

    Raises
    ------
    NetworkError
        Too many states, a node without a path to a boundary in some state, heating setpoint
        above cooling setpoint.
    WeatherError, ScheduleError
        A missing or non-finite weather column, a Series on another index.
    """
    before = len(store.cols)
    nodes = net.nodes
    C = np.array([nodes[n].capacitance for n in st.free[:st.nc]], dtype=float)
    links = list(net.links.values())
    base, uniq, sched = _scheduled_rows(net, st, store, links)
    coef, winds, wramp = _flow_values(net, st, store)
    base[st.flow_links] = coef[:, 8]                  # window links: reference conductance
    n_sched = uniq.shape[0]
    nsw = st.nsw
    if n_sched * (1 << nsw) > MAX_STATES:
        raise NetworkError(f"{n_sched} scheduled link states × 2^{nsw} switch states exceed "
                           f"{MAX_STATES} cached discretisations; schedule links with fewer "
                           "distinct values or use fewer switches")
    lf, sf = _switch_factors(net, st)
    link_f = _state_products(lf, nsw)                       # (2^nsw, nl)
    G = np.empty((n_sched * (1 << nsw), st.nl))
    for si in range(n_sched):
        g = base.copy()
        g[st.sched_links] = uniq[si]
        G[si << nsw:(si + 1) << nsw] = g[None, :] * link_f
    _check_connected(st, G)
    fac = np.zeros((G.shape[0], st.nfl))
    for f, li in enumerate(st.flow_links):
        if coef[f, 8] > 0:
            fac[:, f] = G[:, li] / coef[f, 8]
    ucols, hcols, ccols, scols = _input_specs(net, st, store)
    th = list(net.thermostats.values())
    return Values(
        C=C, G=G, n_sched=n_sched, sched=sched,
        qh=np.array([t.max_heating_w for t in th], dtype=float),
        qc=np.array([t.max_cooling_w for t in th], dtype=float),
        source_factor=(_state_products(sf, nsw) if n_sched == 1
                       else np.tile(_state_products(sf, nsw), (n_sched, 1))),
        sw_init=np.array([s.initial for s in net.switches.values()], dtype=bool),
        thresholds=np.array([t.threshold for t in condition_terms(net)], dtype=float),
        initial=[(i, float(nodes[n].initial)) for i, n in enumerate(st.free[:st.nc])
                 if nodes[n].initial is not None],
        ucols=ucols, hcols=hcols, ccols=ccols, scols=scols,
        ramp=np.array([store.is_ramp(c) for c in ucols], dtype=bool),
        own_columns=len(store.cols) - before, flow_coef=coef, flow_fac=fac, flow_wind=winds,
        flow_wind_ramp=wramp)


# ================================================================================ one network
@dataclass
class Compiled:
    """A network compiled on a time axis: its structure, numbers and inputs as arrays (SI).

    Structure fields (``free``, ``link_a``, ``nc`` ...) read through to ``st``.

    Attributes
    ----------
    st : Structure
        Names and connectivity.
    val : Values
        The network's numbers.
    store : ColumnStore
        The time series its column specs refer to.
    initial : dict of str to float
        Initial temperatures [°C] the nodes set themselves, by node name.
    """

    st: Structure
    val: Values
    store: ColumnStore
    initial: dict = field(default_factory=dict)

    def __getattr__(self, name):
        # structure fields (free, link_a, ...) read through
        if name in ("st", "val", "store"):
            raise AttributeError(name)
        return getattr(self.st, name)

    @property
    def C(self):
        return self.val.C

    @property
    def G_states(self):
        return self.val.G

    @property
    def n_states(self):
        return self.val.n_states

    @property
    def n_sched(self):
        return self.val.n_sched

    @property
    def qh(self):
        return self.val.qh

    @property
    def qc(self):
        return self.val.qc

    @property
    def U(self) -> np.ndarray:
        """(n, nu) raw inputs: boundary temperatures [°C], source powers [W], zeros for P."""
        if "_U" not in self.__dict__:
            n = len(self.st.index)
            U = np.zeros((n, self.st.nu))
            for j, spec in enumerate(self.val.ucols):
                U[:, j] = self.store.value(spec)
            self.__dict__["_U"] = U
        return self.__dict__["_U"]

    @property
    def sched_of_step(self) -> np.ndarray:
        return self.store.array(self.val.sched).astype(np.int64)

    @property
    def hsp(self) -> np.ndarray:
        return _stack(self.store, self.val.hcols, len(self.st.index))

    @property
    def csp(self) -> np.ndarray:
        return _stack(self.store, self.val.ccols, len(self.st.index))

    @property
    def signals(self) -> np.ndarray:
        return _stack(self.store, self.val.scols, len(self.st.index))

    def state_id(self, sched: int, bits: int) -> int:
        """State id ``sched · 2^nsw + bits``.

        Parameters
        ----------
        sched : int
            Scheduled-conductance row.
        bits : int
            Switch bit pattern (bit w set when switch w is on).
        """
        return sched * (1 << self.st.nsw) + bits


def _stack(store, specs, n):
    out = np.empty((n, len(specs)))
    for j, spec in enumerate(specs):
        out[:, j] = store.value(spec)
    return out


def compile_network(net, weather: pd.DataFrame, *, step=None, interpolate=None,
                    read=None) -> Compiled:
    """Compile ``net`` against the weather (or any frame with a tz-aware regular index).

    Parameters
    ----------
    net : Network
    weather : pandas.DataFrame
        Tz-aware regular index; the columns the boundaries name.
    step : str or Timedelta, optional
        Simulation step (default: the weather's).
    interpolate : collection of str, optional
        Instantaneous weather columns (see :meth:`ColumnStore.for_weather`).
    read : dict of str to pandas.Series, optional
        Columns of ``weather`` already read (by the input checks), not read again.

    Returns
    -------
    Compiled
    """
    store = ColumnStore.for_weather(weather, step, interpolate, read)
    st = compile_structure(net, store)
    val = compile_values(net, st, store)
    return Compiled(st, val, store,
                    initial={k: v.initial for k, v in net.nodes.items() if v.initial is not None})


# ======================================================================= parametric networks
@dataclass
class ParametricCompiled:
    """A parametric network compiled once at its parameters' defaults, with the places its
    expressions take in the compiled arrays (see :func:`compile_parametric`).

    Attributes
    ----------
    st : Structure
        The structure (decided at the defaults).
    base : Values
        The numbers at the defaults, sources' series unscaled (``source_factor`` without the
        sources' parametric scales).
    store : ColumnStore
        The time series the specs of ``base`` refer to.
    parameters : dict of str to Param
        The network's parameters.
    sites : dict of str to list
        Per kind, ``(position, what, expression)``: ``"C"`` capacitive node index,
        ``"C0"`` massless node index, ``"G"`` link index, ``"lf"``/``"sf"`` ``(on, switch,
        link or source)`` factor, ``"scale"`` source index, ``"u"`` input column of a
        constant source power, ``"h"``/``"c"``/``"qh"``/``"qc"`` thermostat index,
        ``"thr"`` condition term index.
    base_g : ndarray (nl,)
        Conductances at the defaults before switch factors [W/K] (NaN for scheduled links).
    sched_rows : ndarray (n_sched, n_sched_links)
        Distinct rows of the scheduled conductances [W/K].
    lf, sf : ndarray (2, nsw, nl), ndarray (2, nsw, nsrc)
        Switch factors at the defaults [-] (``[0]`` off, ``[1]`` on).
    """

    st: Structure
    base: Values
    store: ColumnStore
    parameters: dict
    sites: dict
    base_g: np.ndarray
    sched_rows: np.ndarray
    lf: np.ndarray
    sf: np.ndarray


def _parameter_sites(net, st: Structure) -> dict:
    """Where the expressions of a parametric network go in the compiled arrays."""
    from thermonet.parameters import Expr, ScaledSeries

    sites: dict = {k: [] for k in ("C", "C0", "G", "lf", "sf", "scale", "u", "h", "c", "qh",
                                   "qc", "thr")}
    for i, n in enumerate(st.free):
        c = net.nodes[n].capacitance
        if isinstance(c, Expr):
            sites["C" if i < st.nc else "C0"].append((i, f"node {n!r} capacitance [J/K]", c))
    for j, link in enumerate(net.links.values()):
        if isinstance(link.conductance, Expr):
            sites["G"].append((j, f"link {link.name!r} conductance [W/K]", link.conductance))
    link_pos = {n: i for i, n in enumerate(st.link_names)}
    src_pos = {n: i for i, n in enumerate(st.source_names)}
    for k, s in enumerate(net.switches.values()):
        for table, pos, key in ((s.link_factors, link_pos, "lf"), (s.source_factors, src_pos,
                                                                    "sf")):
            for target, pair in table.items():
                for on, f in enumerate(pair):
                    if isinstance(f, Expr):
                        sites[key].append(((on, k, pos[target]), f"switch {s.name!r} factor_"
                                           f"{'on' if on else 'off'} on {target!r} [-]", f))
    for j, src in enumerate(net.sources.values()):
        if isinstance(src.power, ScaledSeries) and isinstance(src.power.scale, Expr):
            sites["scale"].append((j, f"source {src.name!r} power scale [-]", src.power.scale))
        elif isinstance(src.power, Expr):
            sites["u"].append((st.nb + j, f"source {src.name!r} power [W]", src.power))
    for j, t in enumerate(net.thermostats.values()):
        for key, attr, unit in (("h", "heating_setpoint", "°C"), ("c", "cooling_setpoint", "°C"),
                                ("qh", "max_heating_w", "W"), ("qc", "max_cooling_w", "W")):
            v = getattr(t, attr)
            if isinstance(v, Expr):
                sites[key].append((j, f"thermostat {t.name!r} {attr} [{unit}]", v))
    i = 0
    for s in net.switches.values():          # the order of condition_terms(net)
        for which, cond in (("on", s.on), ("off", s.off)):
            for term in [t for clause in (cond.clauses if cond else ()) for t in clause]:
                if isinstance(term.threshold, Expr):
                    sites["thr"].append((i, f"switch {s.name!r} {which} threshold",
                                         term.threshold))
                i += 1
    return sites


def compile_parametric(net, store: ColumnStore) -> ParametricCompiled:
    """Compile a parametric network once, at its parameters' defaults.

    The structure and the numbers at the defaults come from :func:`compile_structure` and
    :func:`compile_values` of ``net.with_values(scale_series=False)``; the returned record
    also says where each parameter expression goes, so that :func:`parametric_values` makes
    the numbers of many rows by patching copies of the arrays.

    Parameters
    ----------
    net : Network
        A network with parameters (:mod:`thermonet.parameters`).
    store : ColumnStore
        Where its time series are stored.

    Returns
    -------
    ParametricCompiled

    Raises
    ------
    NetworkError, WeatherError, ScheduleError
        As :func:`compile_structure` and :func:`compile_values` at the defaults.
    """
    plain = net.with_values(scale_series=False)
    st = compile_structure(plain, store)
    base = compile_values(plain, st, store)
    base_g, uniq, _ = _scheduled_rows(plain, st, store, list(plain.links.values()))
    lf, sf = _switch_factors(plain, st)
    return ParametricCompiled(st, base, store, dict(net.parameters),
                              _parameter_sites(net, st), base_g, uniq, lf, sf)


def _state_products_rows(f: np.ndarray, nsw: int) -> np.ndarray:
    """(R, 2^nsw, k) products of switch factors per row (f: (R, 2, nsw, k))."""
    out = np.ones((f.shape[0], 1 << nsw, f.shape[3]))
    for bits in range(1 << nsw):
        for k in range(nsw):
            out[:, bits] *= f[:, bits >> k & 1, k]
    return out


def _patched(R: int, base: np.ndarray, sites: list, ev: dict) -> np.ndarray:
    """(R, *base.shape) copies of ``base`` with the sites' values per row."""
    out = np.broadcast_to(base, (R,) + base.shape).copy()
    for pos, _, x in sites:
        out[(slice(None),) + (pos if isinstance(pos, tuple) else (pos,))] = ev[id(x)]
    return out


def _row_arrays(pc: ParametricCompiled, ev: dict, R: int) -> dict:
    """Per-row C, G, source factors, thermostat numbers and thresholds (arrays over rows)."""
    st, base, s = pc.st, pc.base, pc.sites
    out = {"C": _patched(R, base.C, s["C"], ev) if s["C"] else None}
    nsw = st.nsw
    if s["G"] or s["lf"]:
        g = _patched(R, np.nan_to_num(pc.base_g), s["G"], ev)
        lf = _patched(R, pc.lf, s["lf"], ev) if s["lf"] else pc.lf[None]
        link_f = _state_products_rows(lf, nsw)
        G = np.empty((R, base.G.shape[0], st.nl))
        for si in range(max(pc.sched_rows.shape[0], 1)):
            gs = g.copy()
            if pc.sched_rows.shape[1]:
                gs[:, st.sched_links] = pc.sched_rows[si]
            G[:, si << nsw:(si + 1) << nsw] = gs[:, None, :] * link_f
        out["G"] = G
    if s["sf"] or s["scale"]:
        sf = _patched(R, pc.sf, s["sf"], ev) if s["sf"] else pc.sf[None]
        n_sched = base.source_factor.shape[0] >> nsw
        F = np.tile(_state_products_rows(sf, nsw), (1, n_sched, 1))
        F = np.broadcast_to(F, (R,) + F.shape[1:]).copy()
        for j, _, x in s["scale"]:
            F[:, :, j] *= ev[id(x)][:, None]
        out["source_factor"] = F
    for key, attr in (("qh", "qh"), ("qc", "qc"), ("thr", "thresholds")):
        out[attr] = _patched(R, getattr(base, attr), s[key], ev) if s[key] else None
    return out


#: Allowed values per kind of parameter site: (text, vectorised test).
_SITE_RULES = {
    "G": ("a finite number ≥ 0 and ≤ 1e12 W/K", lambda v: (v >= 0) & (v <= 1e12)),
    "C": ("> 0 (the node is capacitive at the defaults)", lambda v: v > 0),
    "C0": ("0 (the node is massless at the defaults)", lambda v: v == 0),
    "lf": ("a finite number ≥ 0", lambda v: (v >= 0) & np.isfinite(v)),
    "sf": ("a finite number ≥ 0", lambda v: (v >= 0) & np.isfinite(v)),
    "scale": ("a finite number", np.isfinite),
    "u": ("a finite number", np.isfinite),
    "h": ("a finite number ≥ −273.15 °C", lambda v: (v >= -273.15) & np.isfinite(v)),
    "c": ("a finite number ≥ −273.15 °C", lambda v: (v >= -273.15) & np.isfinite(v)),
    "qh": ("> 0 W", lambda v: v > 0),
    "qc": ("> 0 W", lambda v: v > 0),
    "thr": ("a finite number", np.isfinite),
}


def _row_errors(pc: ParametricCompiled, labels, arrays: dict, ev: dict) -> dict:
    """Row position -> the first problem of that row (naming the row and the element)."""
    from thermonet.errors import ParameterError

    errors: dict = {}
    for kind, (allowed, test) in _SITE_RULES.items():
        for _, what, x in pc.sites[kind]:
            v = ev[id(x)]
            for r in np.flatnonzero(~test(v)):
                errors.setdefault(int(r), ParameterError(
                    f"row {labels[r]!r}: {what} = {float(v[r])!r} from {x!r}; allowed: "
                    f"{allowed}. Change the row's values (or the expression)"))
    G = arrays.get("G")
    if G is not None:
        for r in np.flatnonzero(~(G > 0).all(axis=(1, 2))):
            if int(r) in errors:
                continue
            try:
                _check_connected(pc.st, G[r])
            except NetworkError as exc:
                errors[int(r)] = ParameterError(f"row {labels[r]!r}: {exc}")
    return errors


def _row_inputs(pc: ParametricCompiled, r: int, ev: dict):
    """ucols, hcols, ccols of row ``r`` (the base lists when nothing there is parametric)."""
    base, s = pc.base, pc.sites
    lists = []
    for key, specs in (("u", base.ucols), ("h", base.hcols), ("c", base.ccols)):
        if s[key]:
            specs = list(specs)
            for pos, _, x in s[key]:
                specs[pos] = float(ev[id(x)][r])
        lists.append(specs)
    return lists


def parametric_values(pc: ParametricCompiled, values: dict, labels) -> tuple[list, list]:
    """The numbers of every row of a table of parameter values, by patching copies of the
    defaults' arrays (no network is built or compiled per row).

    Parameters
    ----------
    pc : ParametricCompiled
        From :func:`compile_parametric`.
    values : dict of str to ndarray (R,)
        Each parameter's value per row [its unit] (checked:
        :func:`thermonet.parameters.table_values`).
    labels : sequence
        Row labels (R), named in errors.

    Returns
    -------
    values : list of Values or None
        Per row; None where the row fails.
    errors : list of Exception or None
        Per row; the first problem of a failed row (a
        :class:`~thermonet.errors.ParameterError` naming the row, the node, link, source,
        thermostat or switch, the value and what is allowed).
    """
    import dataclasses

    from thermonet.errors import ParameterError
    from thermonet.parameters import evaluate_many

    R = len(labels)
    exprs = [x for sites in pc.sites.values() for _, _, x in sites]
    ev = {id(x): a for x, a in zip(exprs, evaluate_many(exprs, values, R), strict=True)}
    arrays = _row_arrays(pc, ev, R)
    out: list = [None] * R
    errors: list = [None] * R
    row_errors = _row_errors(pc, labels, arrays, ev)
    for r in range(R):
        err = row_errors.get(r)
        if err is None:
            ucols, hcols, ccols = _row_inputs(pc, r, ev)
            for j in {pos for key in ("h", "c") for pos, _, _ in pc.sites[key]}:
                h = np.asarray(pc.store.value(hcols[j]), dtype=float)
                c = np.asarray(pc.store.value(ccols[j]), dtype=float)
                if np.any(h > c):
                    err = ParameterError(
                        f"row {labels[r]!r}: thermostat {pc.st.thermostat_names[j]!r} heating "
                        f"setpoint ({np.max(h):g} °C at most) exceeds its cooling setpoint "
                        f"({np.min(c):g} °C at least) in some step; keep heating ≤ cooling")
                    break
        if err is not None:
            errors[r] = err
            continue
        kw = {k: a[r] for k, a in arrays.items() if a is not None}
        out[r] = dataclasses.replace(pc.base, ucols=ucols, hcols=hcols, ccols=ccols, **kw)
    return out, errors
