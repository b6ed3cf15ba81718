"""The network description: nodes, boundaries, links, sources and controls.

A :class:`Network` only *describes* a building; :func:`thermonet.simulate` computes and
:class:`thermonet.Results` holds the outcome. Mistakes that can be known when an element is
added (unknown node, negative conductance, duplicate name) are raised at that call; whole-network
checks (connectivity, weather columns) are raised when the network is compiled.

Sign convention: a link's flow is positive from its first node ``a`` to its second node ``b``;
a source's power is positive into its node.
"""

from __future__ import annotations

import difflib
import math
from dataclasses import dataclass, field
from typing import ClassVar

import numpy as np
import pandas as pd

from thermonet.constants import RHO_CP_AIR, STEFAN_BOLTZMANN, ZERO_CELSIUS
from thermonet.controls import Condition
from thermonet.errors import NetworkError, ParameterError, ReadOnlyError
from thermonet.parameters import Expr, ScaledSeries, default, parameters_of

NODE_KINDS = ("air", "surface", "mass", "ground", "buffer")
BOUNDARY_KINDS = ("air", "sky", "ground", "surface")
AIR_KINDS = ("air", "buffer")


class ReadOnlyDict(dict):
    """A dict that refuses changes: the element tables of a :class:`Network` and the
    parameter dicts of its elements.

    Parameters
    ----------
    data : mapping or iterable of pairs
    what : str
        How the table is named in the error (e.g. ``"net.links"``).
    fix : str
        How to make the change instead (e.g. ``"use net.add_link(...)"``).
    """

    def __init__(self, data=(), what: str = "this table", fix: str = ""):
        dict.__init__(self, data)
        self.what, self.fix = what, fix

    def _refuse(self, *args, **kwargs):
        raise ReadOnlyError(f"{self.what} is read-only once part of a network; "
                            f"{self.fix or 'build a new network with the new values'}")

    __setitem__ = __delitem__ = _refuse
    pop = popitem = clear = update = setdefault = __ior__ = _refuse

    def _store(self, key, value):
        """Add an entry (for the owning :class:`Network` only)."""
        dict.__setitem__(self, key, value)

    def __reduce__(self):
        return (type(self), (dict(self), self.what, self.fix))

    def __copy__(self):
        return type(self)(self, self.what, self.fix)

    def __deepcopy__(self, memo):
        import copy

        return type(self)({copy.deepcopy(k, memo): copy.deepcopy(v, memo)
                           for k, v in self.items()}, self.what, self.fix)


class Element:
    """Base of the network's element records: read-only once created.

    A change after ``add_*`` would bypass every check ``add_*`` made (a negative
    conductance, a NaN, a flow that no longer matches its conductance) and leave the
    network inconsistent, so setting or deleting an attribute raises
    :class:`~thermonet.errors.ReadOnlyError` naming the element and the ``add_*`` call that
    takes the new value.
    """

    #: The ``Network`` method(s) that create this kind of element (named in errors).
    adder: ClassVar[str] = "add_*"

    def __post_init__(self):
        object.__setattr__(self, "_sealed", True)

    def __setattr__(self, attr, value):
        if self.__dict__.get("_sealed"):
            raise ReadOnlyError(
                f"{type(self).__name__.lower()} {self.__dict__.get('name')!r} is read-only once "
                f"added (tried to set {attr} = {value!r}); build a new Network and call "
                f"{self.adder}(..., {attr}=...) with the new value, or for a value that "
                "changes over time pass a Series (a schedule) when adding it")
        object.__setattr__(self, attr, value)

    def __delattr__(self, attr):
        raise ReadOnlyError(f"{type(self).__name__.lower()} {self.__dict__.get('name')!r} is "
                            f"read-only once added (tried to delete {attr}); build a new "
                            "Network without it")


@dataclass
class Node(Element):
    """A free node: a temperature with a heat capacity.

    Attributes
    ----------
    name : str
    kind : str
        One of ``air, surface, mass, ground, buffer``.
    capacitance : float or Expr
        Heat capacity [J/K]; 0 means massless (solved algebraically).
    volume : float or None
        Air volume [m³], used by ``add_airflow(ach=...)``.
    initial : float or None
        Initial temperature [°C] before the warm-up (None: steady state of the first inputs).
    """

    name: str
    kind: str
    capacitance: float
    volume: float | None = None
    initial: float | None = None

    adder: ClassVar[str] = "add_node"


@dataclass
class Boundary(Element):
    """A node of given temperature: a weather column name, a constant or a Series [°C].

    Attributes
    ----------
    name : str
        Boundary name.
    temperature : str, float or pandas.Series
        Weather column, constant or Series [°C].
    kind : str, default "air"
        One of ``air, sky, ground, surface``.
    """

    name: str
    temperature: str | float | pd.Series
    kind: str = "air"

    adder: ClassVar[str] = "add_boundary"


@dataclass
class Link(Element):
    """Heat flow ``Q = G (T_a − T_b)`` [W] between two nodes, counted under ``path``.

    ``conductance`` [W/K] is a float, or a Series [W/K] aligned to the weather when the link is
    scheduled (a few distinct values, each with its own cached discretisation).

    Attributes
    ----------
    name : str
        Link name (the column of ``res.flows``).
    a, b : str
        First and second node; the flow is positive from ``a`` to ``b``.
    conductance : float, Expr or pandas.Series
        G [W/K].
    path : str
        Balance path.
    kind : str, default "conductance"
        ``"conductance"``, ``"airflow"``, ``"radiation"`` or ``"window"`` (a flow law
        re-evaluated every step, :meth:`Network.add_window_flow`).
    params : dict
        What the link was made from (flow [m³/h], heat recovery [-], emissivities ...).
    """

    name: str
    a: str
    b: str
    conductance: float | pd.Series
    path: str
    kind: str = "conductance"
    params: dict = field(default_factory=dict)

    adder: ClassVar[str] = "add_link/add_airflow/add_radiation"

    def __post_init__(self):
        object.__setattr__(self, "params", ReadOnlyDict(
            self.params, f"link {self.name!r} params",
            "build a new Network and add the link with the new values"))
        super().__post_init__()


@dataclass
class Source(Element):
    """Heat into a node [W]: a constant or a Series aligned to the weather.

    Attributes
    ----------
    name : str
        Source name (the column of ``res.sources``).
    node : str
        The free node that receives the heat.
    power : float, Expr, pandas.Series or ScaledSeries
        Heat into the node [W].
    path : str
        Balance path.
    """

    name: str
    node: str
    power: float | pd.Series
    path: str

    adder: ClassVar[str] = "add_source"


@dataclass
class Thermostat(Element):
    """Ideal heating and/or cooling at a node, sized each step to meet the setpoint.

    Setpoints [°C] are constants, Series or None (no heating / no cooling). Capacities [W] are
    positive (``inf`` = unlimited).

    Attributes
    ----------
    name : str
        Thermostat name.
    node : str
        The controlled free node.
    heating_setpoint, cooling_setpoint : float, Expr, pandas.Series or None
        Setpoints [°C].
    max_heating_w, max_cooling_w : float or Expr
        Capacities [W].
    """

    name: str
    node: str
    heating_setpoint: float | pd.Series | None
    cooling_setpoint: float | pd.Series | None
    max_heating_w: float
    max_cooling_w: float

    adder: ClassVar[str] = "add_thermostat"


@dataclass
class Switch(Element):
    """A two-state control: when on, target links and sources are scaled by their factors.

    ``on`` is the condition that turns the switch on; ``off`` the one that turns it off again
    (default: ``on`` no longer holds), giving hysteresis when both are given. Conditions are
    evaluated at the start of each step from the node temperatures at the end of the previous
    step and the current step's boundary values and signals.

    Attributes
    ----------
    name : str
        Switch name.
    on, off : Condition
        Conditions that turn the switch on and (optionally) off.
    link_factors, source_factors : dict of str to (float or Expr, float or Expr)
        Target name -> (factor while off, factor while on) [-].
    initial : bool, default False
        State before the first step.
    """

    name: str
    on: Condition
    off: Condition | None
    link_factors: dict[str, tuple[float, float]]   # name -> (factor_off, factor_on)
    source_factors: dict[str, tuple[float, float]]
    initial: bool = False

    adder: ClassVar[str] = "add_switch"

    def __post_init__(self):
        fix = "build a new Network and call add_switch with the new factors"
        object.__setattr__(self, "link_factors", ReadOnlyDict(
            self.link_factors, f"switch {self.name!r} link factors", fix))
        object.__setattr__(self, "source_factors", ReadOnlyDict(
            self.source_factors, f"switch {self.name!r} source factors", fix))
        super().__post_init__()


def _suggest(name, known):
    """'did you mean' text with close matches, or a short list of known names."""
    close = difflib.get_close_matches(str(name), sorted(known), n=3)
    if close:
        return "did you mean " + " or ".join(map(repr, close)) + "?"
    names = sorted(known)
    shown = ", ".join(names[:12]) + (f", … ({len(names)} in all)" if len(names) > 12 else "")
    return f"known: {shown or '(none yet)'}"


def _check_name(name, what):
    if not isinstance(name, str) or not name:
        raise TypeError(f"{what} name must be a non-empty str, got {name!r}")


def _check_number(value, what, *, minimum=0.0, strict=False, allow_inf=False):
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise TypeError(f"{what} must be a number, got {type(value).__name__} {value!r}")
    value = float(value)
    if math.isnan(value) or (math.isinf(value) and not allow_inf):
        raise NetworkError(f"{what} must be finite, got {value}")
    if strict and value <= minimum:
        raise NetworkError(f"{what} must be > {minimum}, got {value}")
    if not strict and value < minimum:
        raise NetworkError(f"{what} must be ≥ {minimum}, got {value}")
    return value


def _check_series(series, what, *, minimum=None):
    if not isinstance(series.index, pd.DatetimeIndex):
        raise NetworkError(f"{what}: a Series needs a DatetimeIndex aligned to the weather")
    values = np.asarray(series, dtype=float)
    bad = ~np.isfinite(values)
    if bad.any():
        raise NetworkError(
            f"{what}: {int(bad.sum())} NaN/inf values, first at {series.index[bad.argmax()]}; "
            "fill them explicitly before passing the Series"
        )
    if minimum is not None and (values < minimum).any():
        i = int((values < minimum).argmax())
        raise NetworkError(
            f"{what}: values must be ≥ {minimum}, got {values[i]} at {series.index[i]}"
        )
    return series.astype(float)


#: Largest link conductance accepted [W/K]. A flow is G·ΔT and ΔT is known to about
#: 1e−14 K near room temperature, so beyond ~1e12 W/K flows (and the balance) would be
#: rounding noise; no building element comes near it (1e6 W/K is a 10 000 m² slab contact).
MAX_CONDUCTANCE = 1e12


def _check_conductance(g, what):
    """Refuse conductances [W/K] above :data:`MAX_CONDUCTANCE` (constant or Series)."""
    if isinstance(g, float):  # the common case, without numpy's per-call overhead
        top = g
    elif isinstance(g, Expr):
        top = g.default
    else:
        top = float(np.max(np.asarray(g, dtype=float))) if np.size(g) else 0.0
    if top > MAX_CONDUCTANCE:
        raise NetworkError(f"{what} is {top:.3g} W/K, above the {MAX_CONDUCTANCE:.0e} W/K that "
                           "flows can resolve (flow = G·ΔT with ΔT known to ~1e-14 K); merge "
                           "the two nodes into one instead of joining them so tightly")
    return g


def _value(value, what, *, minimum=0.0, strict=False):
    """Validate a constant or a Series input."""
    if isinstance(value, pd.Series):
        return _check_series(value, what, minimum=minimum)
    if isinstance(value, ScaledSeries):
        raise ParameterError(f"{what}: a series scaled by a parameter expression ({value!r}) "
                             "is accepted as a source's power only; give a number, a Series or "
                             "a parameter expression here")
    return _param_number(value, what, minimum=minimum, strict=strict)


def _param_number(value, what, *, minimum=0.0, strict=False, allow_inf=False):
    """A number, or a parameter expression checked at its defaults (kept as it is)."""
    if isinstance(value, Expr):
        try:
            _check_number(value.default, f"{what} (the expression {value!r} at its defaults)",
                          minimum=minimum, strict=strict, allow_inf=allow_inf)
        except NetworkError as exc:
            raise ParameterError(str(exc)) from None
        return value
    return _check_number(value, what, minimum=minimum, strict=strict, allow_inf=allow_inf)


def radiation_conductance(area, emissivity_a, emissivity_b, view_factor=1.0, *,
                          area_b=None, reference_temperature=20.0):
    """Linearised long-wave radiation conductance between two grey surfaces [W/K].

    Parameters
    ----------
    area : float
        Area of surface a [m²].
    emissivity_a, emissivity_b : float
        Hemispherical emissivities [-], in (0, 1].
    view_factor : float, default 1.0
        View factor from a to b [-].
    area_b : float, optional
        Area of surface b [m²]; default ``area`` (two facing surfaces of equal size).
    reference_temperature : float, default 20.0
        Mean temperature T_m of the two surfaces [°C] at which σT⁴ is linearised.

    Returns
    -------
    float
        G = 4σT_m³ / R_tot [W/K], with the two-surface grey-body network resistance
        R_tot = (1 − ε_a)/(ε_a A_a) + 1/(A_a F_ab) + (1 − ε_b)/(ε_b A_b) [1/m²].

    Notes
    -----
    The net exchange σ(T_a⁴ − T_b⁴)/R_tot is linearised as h_r (T_a − T_b) with
    h_r = 4σT_m³ (ISO 6946:2017, Annex C, h_r0 = 4σT_mn³). At 20 °C, 4σT³ = 5.71 W/(m²K).

    References
    ----------
    .. [1] ISO 6946:2017, Building components and building elements — Thermal resistance and
       thermal transmittance — Calculation methods, Annex C.
    .. [2] Incropera, F. P. et al., Fundamentals of Heat and Mass Transfer, 6th ed., Wiley, 2007,
       section 13.3 (radiation exchange between two grey surfaces).
    """
    area = _check_number(area, "area", strict=True)
    area_b = area if area_b is None else _check_number(area_b, "area_b", strict=True)
    for eps, what in ((emissivity_a, "emissivity_a"), (emissivity_b, "emissivity_b")):
        if not 0.0 < float(eps) <= 1.0:
            raise NetworkError(f"{what} must lie in (0, 1], got {eps}")
    if not 0.0 < float(view_factor) <= 1.0:
        raise NetworkError(f"view_factor must lie in (0, 1], got {view_factor}")
    t_m = float(reference_temperature) + ZERO_CELSIUS
    if t_m <= 0:
        raise NetworkError(f"reference_temperature must be above −273.15 °C, got {t_m}")
    r_tot = ((1 - emissivity_a) / (emissivity_a * area) + 1 / (area * view_factor)
             + (1 - emissivity_b) / (emissivity_b * area_b))
    return 4 * STEFAN_BOLTZMANN * t_m**3 / r_tot


class Network:
    """A lumped-RC thermal network of a building.

    Build it with :meth:`add_node`, :meth:`add_boundary`, :meth:`add_link`,
    :meth:`add_airflow`, :meth:`add_radiation`, :meth:`add_source`, :meth:`add_thermostat`
    and :meth:`add_switch`; run it with :func:`thermonet.simulate`.

    Parameters
    ----------
    name : str, default "network"
        A label for reports and model files.

    Examples
    --------
    >>> import thermonet as tn
    >>> net = tn.Network()
    >>> net.add_boundary("outdoor", temperature="temp_air")
    'outdoor'
    >>> net.add_node("room", kind="air", capacitance=1.2e5)
    'room'
    >>> net.add_link("outdoor", "room", conductance=40.0, path="opaque")
    'outdoor-room:opaque'
    """

    def __init__(self, name: str = "network"):
        self.name = name
        def table(attr, adder):
            return ReadOnlyDict((), f"net.{attr}", f"add elements with net.{adder}(...); to "
                                "change or remove one, build a new network")

        self.nodes: dict[str, Node] = table("nodes", "add_node")
        self.boundaries: dict[str, Boundary] = table("boundaries", "add_boundary")
        self.links: dict[str, Link] = table("links", "add_link")
        self.sources: dict[str, Source] = table("sources", "add_source")
        self.thermostats: dict[str, Thermostat] = table("thermostats", "add_thermostat")
        self.switches: dict[str, Switch] = table("switches", "add_switch")
        #: Parameters the network's numbers depend on, by name (see
        #: :mod:`thermonet.parameters`); empty for a plain network.
        self.parameters: dict = ReadOnlyDict((), "net.parameters",
                                             "parameters are declared by using them in add_*")

    def _declare(self, *values) -> None:
        """Record the parameters that ``values`` use (names must be unique)."""
        for name, p in parameters_of(*values).items():
            old = self.parameters.get(name)
            if old is not None and old is not p:
                parameters_of(old, p)          # refuses two different parameters of one name
            self.parameters._store(name, p)

    # ------------------------------------------------------------------ names
    def _all_point_names(self):
        return set(self.nodes) | set(self.boundaries)

    def _new_point(self, name, what):
        _check_name(name, what)
        if name in self.nodes or name in self.boundaries:
            raise NetworkError(f"duplicate {what} name {name!r}: a node or boundary with this name "
                               "exists already; choose another name")

    def _known(self, name, what):
        if name not in self.nodes and name not in self.boundaries:
            raise NetworkError(f"{what} {name!r} is not a node or boundary of this network; "
                               f"{_suggest(name, self._all_point_names())}")

    def _unique(self, table, name, default, what):
        if name is None:
            name, i = default, 2
            while name in table:
                name, i = f"{default}#{i}", i + 1
            return name
        _check_name(name, what)
        if name in table:
            raise NetworkError(f"duplicate {what} name {name!r}; pass another name=")
        return name

    # ------------------------------------------------------------------ nodes
    def add_node(self, name: str, *, kind: str = "mass", capacitance: float = 0.0,
                 volume: float | None = None, initial: float | None = None) -> str:
        """Add a free node.

        Parameters
        ----------
        name : str
            Unique name.
        kind : {"air", "surface", "mass", "ground", "buffer"}
            What the node stands for; airflow links need ``air`` or ``buffer``.
        capacitance : float or Expr, default 0
            Heat capacity [J/K], ≥ 0. Zero makes a massless node solved algebraically. A
            parameter expression (:mod:`thermonet.parameters`) varies it per row of a study;
            the node is capacitive or massless as at the expression's defaults.
        volume : float, optional
            Air volume [m³] for ``add_airflow(ach=...)``.
        initial : float, optional
            Initial temperature [°C] before the warm-up.

        Returns
        -------
        str
            The node's name.
        """
        self._new_point(name, "node")
        if kind not in NODE_KINDS:
            raise NetworkError(f"node {name!r}: kind must be one of {NODE_KINDS}, got {kind!r}")
        c = _param_number(capacitance, f"node {name!r} capacitance [J/K]")
        self._declare(c)
        if volume is not None:
            volume = _check_number(volume, f"node {name!r} volume [m³]", strict=True)
        if initial is not None:
            initial = _check_number(initial, f"node {name!r} initial [°C]", minimum=-273.15)
        self.nodes._store(name, Node(name, kind, c, volume, initial))
        return name

    def add_boundary(self, name: str, *, temperature: str | float | pd.Series,
                     kind: str = "air") -> str:
        """Add a boundary node with a given temperature.

        Parameters
        ----------
        name : str
        temperature : str, float or pandas.Series
            A weather column name (e.g. ``"temp_air"``), a constant [°C], or a Series [°C]
            aligned to the weather index.
        kind : {"air", "sky", "ground", "surface"}, default "air"
            Airflow links may only touch boundaries of kind ``air``.
        """
        self._new_point(name, "boundary")
        if kind not in BOUNDARY_KINDS:
            raise NetworkError(f"boundary {name!r}: kind must be one of {BOUNDARY_KINDS}, "
                               f"got {kind!r}")
        if isinstance(temperature, str):
            pass
        elif isinstance(temperature, pd.Series):
            temperature = _check_series(temperature, f"boundary {name!r} temperature",
                                        minimum=-273.15)
        else:
            temperature = _check_number(temperature, f"boundary {name!r} temperature [°C]",
                                        minimum=-273.15)
        self.boundaries._store(name, Boundary(name, temperature, kind))
        return name

    # ------------------------------------------------------------------ links
    def _link_ends(self, a, b):
        self._known(a, "link end")
        self._known(b, "link end")
        if a == b:
            raise NetworkError(f"self-link {a!r}–{b!r}: a link must join two different nodes")
        if a in self.boundaries and b in self.boundaries:
            raise NetworkError(f"link {a!r}–{b!r} joins two boundaries; it would carry no "
                               "information into the network")

    def add_link(self, a: str, b: str, *, conductance: float | pd.Series, path: str,
                 name: str | None = None) -> str:
        """Add a conduction/convection link ``Q = G (T_a − T_b)``.

        Parameters
        ----------
        a, b : str
            Node or boundary names; the flow is positive from ``a`` to ``b``.
        conductance : float, Expr or pandas.Series
            G [W/K], ≥ 0; a Series schedules it (few distinct values); a parameter
            expression (:mod:`thermonet.parameters`) varies it per row of a study.
        path : str
            Heat-path label for the balance (``"opaque"``, ``"glazing"``, ...).
        name : str, optional
            Default ``"{a}-{b}:{path}"``.

        Returns
        -------
        str
            The link's name, the key of ``Results.flows``.
        """
        self._link_ends(a, b)
        _check_name(path, "path")
        name = self._unique(self.links, name, f"{a}-{b}:{path}", "link")
        g = _check_conductance(_value(conductance, f"link {name!r} conductance [W/K]"),
                               f"link {name!r} conductance")
        self._declare(g)
        self.links._store(name, Link(name, a, b, g, path))
        return name

    def add_airflow(self, a: str, b: str, *, path: str, flow_m3h: float | pd.Series | None = None,
                    ach: float | pd.Series | None = None, volume: float | None = None,
                    heat_recovery: float = 0.0, rho_cp: float = RHO_CP_AIR,
                    name: str | None = None) -> str:
        """Add a balanced airflow exchange between two air nodes.

        The conductance is ``G = ρ c_p V̇ (1 − η)`` [W/K] with V̇ in m³/s.

        Parameters
        ----------
        a, b : str
            Air or buffer nodes, or boundaries of kind ``air``.
        path : str
            Heat-path label (``"infiltration"``, ``"ventilation"``, ...).
        flow_m3h : float, Expr or Series, optional
            Volume flow [m³/h] (a parameter expression varies it per row of a study).
        ach : float, Expr or Series, optional
            Air changes per hour [1/h] of ``volume`` (default: the volume of the free air node).
        volume : float, optional
            Volume [m³] for ``ach``.
        heat_recovery : float, default 0
            Heat-recovery efficiency η [-] in [0, 1).
        rho_cp : float, default 1200
            Volumetric heat capacity of air [J/(m³K)] (ISO 13789 / ISO 13790, from memory).
        name : str, optional

        Notes
        -----
        An exchange of V̇ in each direction carries ρ c_p V̇ (T_a − T_b) from a to b.
        1200 J/(m³K) / 3600 s/h = 0.333 W per (m³/h) per K.
        """
        self._link_ends(a, b)
        _check_name(path, "path")
        for end in (a, b):
            if end in self.nodes and self.nodes[end].kind not in AIR_KINDS:
                raise NetworkError(f"airflow {a!r}–{b!r}: node {end!r} is of kind "
                                   f"{self.nodes[end].kind!r}; airflow needs an air or buffer node")
            if end in self.boundaries and self.boundaries[end].kind != "air":
                raise NetworkError(f"airflow {a!r}–{b!r}: boundary {end!r} is of kind "
                                   f"{self.boundaries[end].kind!r}; airflow needs an air boundary")
        if (flow_m3h is None) == (ach is None):
            raise NetworkError(f"airflow {a!r}–{b!r}: give exactly one of flow_m3h= [m³/h] or "
                               "ach= [1/h]")
        name = self._unique(self.links, name, f"{a}-{b}:{path}", "link")
        eta = _check_number(heat_recovery, f"airflow {name!r} heat_recovery [-]")
        if eta >= 1.0:
            raise NetworkError(f"airflow {name!r}: heat_recovery must be < 1, got {eta}")
        rho_cp = _check_number(rho_cp, f"airflow {name!r} rho_cp [J/(m³K)]", strict=True)
        if ach is not None:
            if volume is None:
                vols = [self.nodes[e].volume for e in (a, b) if e in self.nodes
                        and self.nodes[e].volume is not None]
                if not vols:
                    raise NetworkError(f"airflow {name!r}: ach= needs volume= [m³] or a node "
                                       "added with volume=")
                volume = vols[0]
            volume = _check_number(volume, f"airflow {name!r} volume [m³]", strict=True)
            flow = _value(ach, f"airflow {name!r} ach [1/h]") * volume
        else:
            flow = _value(flow_m3h, f"airflow {name!r} flow_m3h [m³/h]")
        g = flow * (rho_cp / 3600.0) * (1.0 - eta)  # m³/h → m³/s
        _check_conductance(g, f"airflow {name!r} conductance ρc_p·V̇·(1 − η)")
        self._declare(g)
        params = {"flow_m3h": flow, "heat_recovery": eta, "rho_cp": rho_cp}
        self.links._store(name, Link(name, a, b, g, path, kind="airflow", params=params))
        return name

    def add_window_flow(self, a: str, b: str, *, law: str,
                        wind: str | float | pd.Series = "wind_speed",
                        path: str = "window_ventilation", rho_cp: float = RHO_CP_AIR,
                        name: str | None = None, **law_params) -> str:
        """Add an airflow through an opening whose flow follows the two sides' temperatures
        and the wind, re-evaluated every step by the engine.

        The conductance in a step is ``G = ρ c_p V̇(T_a, T_b, U)`` [W/K] with V̇ from the flow
        law (:func:`thermonet.airflow.flow_law_coefficients`), evaluated from the room's
        temperature over that step by a predictor–corrector (``docs/airflow_engine.md``)
        and multiplied by the factors of any switch acting on the link (0 shut, a fraction for
        a partly open sash). Heat flows in the balance under ``path`` with the conductance
        the step used, so the balance closes exactly.

        Parameters
        ----------
        a : str
            The room: a free node of kind ``air`` or ``buffer``.
        b : str
            The other side: an air boundary (outdoors) or another air or buffer node.
        law : str
            One of :data:`thermonet.airflow.FLOW_LAWS` (de Gids–Phaff single-sided,
            EN 16798-7 single-sided, BS 5925 single-opening stack, BS 5925 stack through two
            openings, BS 5925 cross ventilation by wind).
        wind : str, float or pandas.Series, default "wind_speed"
            Weather column of the meteorological wind speed [m/s] (10 m), a constant, or a
            Series on the weather index — e.g. the wind-direction-dependent effective speed of
            cross ventilation (:func:`thermonet.airflow.cross_wind_speed`).
        path : str, default "window_ventilation"
            Heat-path label for the balance.
        rho_cp : float, default 1200
            Volumetric heat capacity of air [J/(m³K)] (ISO 13789 / ISO 13790, from memory).
        name : str, optional
            Default ``"{a}-{b}:{path}"``.
        **law_params
            The law's parameters (areas [m²], heights [m], coefficients; see
            :func:`thermonet.airflow.flow_law_coefficients`).

        Returns
        -------
        str
            The link's name.

        Notes
        -----
        The link's ``conductance`` attribute is a nominal value for tables only (the law at
        25 °C indoors, 20 °C outdoors and 3 m/s wind); the engine uses the law.
        Networks with window links are stepped by the exact method.

        References
        ----------
        See the methods in :mod:`thermonet.airflow` (de Gids & Phaff 1982; EN 16798-7:2017,
        from memory; BS 5925:1991).
        """
        from thermonet.airflow import flow_law_coefficients, law_flow
        from thermonet.errors import AirflowError

        self._link_ends(a, b)
        _check_name(path, "path")
        if a not in self.nodes or self.nodes[a].kind not in AIR_KINDS:
            raise NetworkError(f"window flow {a!r}–{b!r}: the first end must be a free air or "
                               f"buffer node (the room); got {a!r}")
        if b in self.nodes and self.nodes[b].kind not in AIR_KINDS:
            raise NetworkError(f"window flow {a!r}–{b!r}: node {b!r} is of kind "
                               f"{self.nodes[b].kind!r}; the other side must be air")
        if b in self.boundaries and self.boundaries[b].kind != "air":
            raise NetworkError(f"window flow {a!r}–{b!r}: boundary {b!r} is of kind "
                               f"{self.boundaries[b].kind!r}; the other side must be air")
        name = self._unique(self.links, name, f"{a}-{b}:{path}", "link")
        try:
            coef = flow_law_coefficients(law, **law_params)
        except AirflowError as exc:
            raise NetworkError(f"window flow {name!r}: {exc}") from None
        if isinstance(wind, str):
            _check_name(wind, f"window flow {name!r} wind column")
        elif isinstance(wind, pd.Series):
            wind = _check_series(wind, f"window flow {name!r} wind [m/s]", minimum=0.0)
        else:
            wind = _check_number(wind, f"window flow {name!r} wind [m/s]")
        rho_cp = _check_number(rho_cp, f"window flow {name!r} rho_cp [J/(m³K)]", strict=True)
        g = rho_cp * float(law_flow(coef, 25.0, 20.0, 3.0))
        lp = ReadOnlyDict({k: (bool(v) if isinstance(v, bool) else float(v))
                           for k, v in law_params.items()}, f"window flow {name!r} law_params",
                          "build a new Network and add the link with the new values")
        params = {"law": law, "law_params": lp,
                  "coefficients": tuple(float(c) for c in coef), "wind": wind,
                  "rho_cp": rho_cp}
        self.links._store(name, Link(name, a, b, g, path, kind="window", params=params))
        return name

    def add_radiation(self, a: str, b: str, *, area: float, path: str,
                      emissivity_a: float = 0.9, emissivity_b: float = 0.9,
                      view_factor: float = 1.0, area_b: float | None = None,
                      reference_temperature: float = 20.0, name: str | None = None) -> str:
        """Add a linearised long-wave radiation link between two surfaces.

        See :func:`radiation_conductance` for the formula. With ``simulate(...,
        relinearise="D")`` (or another period) the conductance is recomputed at the start of
        each period from the mean of the two nodes' temperatures.

        Parameters
        ----------
        a, b : str
            The two surface nodes (free nodes or boundaries).
        area : float
            Area of surface a [m²], > 0.
        path : str
            Balance path of the link.
        emissivity_a, emissivity_b : float, default 0.9
            Hemispherical emissivities [-], in (0, 1].
        view_factor : float, default 1.0
            View factor from a to b [-].
        area_b : float, optional
            Area of surface b [m²]; default ``area``.
        reference_temperature : float, default 20.0
            Mean surface temperature at which σT⁴ is linearised [°C].
        name : str, optional
            Link name; default ``"<a>-<b>:<path>"``.

        Returns
        -------
        str
            The link name.
        """
        self._link_ends(a, b)
        _check_name(path, "path")
        name = self._unique(self.links, name, f"{a}-{b}:{path}", "link")
        g = radiation_conductance(area, emissivity_a, emissivity_b, view_factor, area_b=area_b,
                                  reference_temperature=reference_temperature)
        _check_conductance(g, f"radiation link {name!r} conductance")
        params = dict(area=area, emissivity_a=emissivity_a, emissivity_b=emissivity_b,
                      view_factor=view_factor, area_b=area_b,
                      reference_temperature=reference_temperature)
        self.links._store(name, Link(name, a, b, g, path, kind="radiation", params=params))
        return name

    # ---------------------------------------------------------------- sources
    def add_source(self, node: str, *, power: float | pd.Series, path: str,
                   name: str | None = None) -> str:
        """Add heat into a free node [W] (constant or Series), counted under ``path``.

        Parameters
        ----------
        node : str
            The free node that receives the heat.
        power : float, Expr, pandas.Series or ScaledSeries
            Heat into the node [W] (negative: heat taken out), constant or one value per step
            on the weather index (a step mean). A parameter expression (a constant varied per
            row) or a Series times an expression (``gain_per_m2 * area * g``, a
            :class:`~thermonet.parameters.ScaledSeries`: the expression is the source's
            factor) make it parametric (:mod:`thermonet.parameters`).
        path : str
            Balance path the heat is counted under (``"internal"``, ``"solar"`` ...).
        name : str, optional
            Source name; default ``"<node>:<path>"``.

        Returns
        -------
        str
            The source name.
        """
        if node not in self.nodes:
            self._known(node, "source node")
            raise NetworkError(f"source at boundary {node!r}: a boundary's temperature is given, "
                               "so heat into it has no effect; attach the source to a free node")
        _check_name(path, "path")
        name = self._unique(self.sources, name, f"{node}:{path}", "source")
        if isinstance(power, pd.Series):
            power = _check_series(power, f"source {name!r} power [W]")
        elif isinstance(power, ScaledSeries):
            power = ScaledSeries(_check_series(power.series, f"source {name!r} power [W]"),
                                 _param_number(power.scale, f"source {name!r} power scale [-]",
                                               minimum=-math.inf))
        else:
            power = _param_number(power, f"source {name!r} power [W]", minimum=-math.inf)
        self._declare(power)
        self.sources._store(name, Source(name, node, power, path))
        return name

    # --------------------------------------------------------------- controls
    def add_thermostat(self, node: str, *, heating_setpoint=None, cooling_setpoint=None,
                       max_heating_w: float = math.inf, max_cooling_w: float = math.inf,
                       name: str | None = None) -> str:
        """Add ideal heating and/or cooling at a free node.

        Parameters
        ----------
        node : str
            The controlled node.
        heating_setpoint, cooling_setpoint : float, Expr, Series or None
            Setpoints [°C]; None disables heating or cooling. Heating ≤ cooling everywhere
            (checked per row for parameter expressions).
        max_heating_w, max_cooling_w : float or Expr, default inf
            Capacity limits [W], > 0.
        name : str, optional
            Thermostat name; default ``"thermostat:<node>"``.

        Returns
        -------
        str
            The thermostat name.

        Notes
        -----
        Each step the power is found by superposition of the free response and the response to
        unit power at the node, so the node's temperature at the end of the step equals the
        setpoint whenever capacity allows (see :mod:`thermonet.solvers`).
        """
        if node not in self.nodes:
            self._known(node, "thermostat node")
            raise NetworkError(f"thermostat at boundary {node!r}: control a free node instead")
        if any(t.node == node for t in self.thermostats.values()):
            raise NetworkError(f"node {node!r} has a thermostat already; one per node")
        name = self._unique(self.thermostats, name, f"thermostat:{node}", "thermostat")
        if heating_setpoint is None and cooling_setpoint is None:
            raise NetworkError(f"thermostat {name!r}: give heating_setpoint and/or "
                               "cooling_setpoint [°C]")
        sp = {}
        for key, value in (("heating_setpoint", heating_setpoint),
                           ("cooling_setpoint", cooling_setpoint)):
            if value is None:
                sp[key] = None
            elif isinstance(value, pd.Series):
                sp[key] = _check_series(value, f"thermostat {name!r} {key} [°C]", minimum=-273.15)
            else:
                sp[key] = _param_number(value, f"thermostat {name!r} {key} [°C]", minimum=-273.15)
        if sp["heating_setpoint"] is not None and sp["cooling_setpoint"] is not None:
            h = np.asarray(default(sp["heating_setpoint"]), dtype=float)
            c = np.asarray(default(sp["cooling_setpoint"]), dtype=float)
            if np.any(h > c):
                raise NetworkError(f"thermostat {name!r}: heating_setpoint exceeds "
                                   "cooling_setpoint; keep heating ≤ cooling")
        qh = _param_number(max_heating_w, f"thermostat {name!r} max_heating_w [W]", strict=True,
                           allow_inf=True)
        qc = _param_number(max_cooling_w, f"thermostat {name!r} max_cooling_w [W]", strict=True,
                           allow_inf=True)
        self._declare(sp["heating_setpoint"], sp["cooling_setpoint"], qh, qc)
        self.thermostats._store(name, Thermostat(name, node, sp["heating_setpoint"],
                                                 sp["cooling_setpoint"], qh, qc))
        return name

    def add_switch(self, *, on: Condition, off: Condition | None = None,
                   links: dict[str, float] | None = None, sources: dict[str, float] | None = None,
                   initial: bool = False, name: str | None = None) -> str:
        """Add a two-state control (window opening, night ventilation, movable shading ...).

        Parameters
        ----------
        on : Condition
            Turns the switch on (see :mod:`thermonet.controls`).
        off : Condition, optional
            Turns it off again; default: ``on`` no longer holds.
        links : dict, optional
            ``{link name: factor}`` or ``{link name: (factor_off, factor_on)}``: the link's
            conductance is multiplied by ``factor_on`` while on and by ``factor_off`` (default
            1) while off; factors [-] ≥ 0, numbers or parameter expressions. A window that
            is shut unless the switch is on: ``{window: (0.0, 1.0)}``. Several switches on
            one link multiply (use ``|`` within one switch's condition for "either").
        sources : dict, optional
            Same for sources' powers (e.g. a blind admitting 20 % of solar: ``{sun: 0.2}``).
        initial : bool, default False
            State before the first step.
        name : str, optional
            Switch name.

        Returns
        -------
        str
            The switch name.

        Notes
        -----
        Each combination of switch states that changes links gets one cached discretisation.
        """
        if not isinstance(on, Condition) or (off is not None and not isinstance(off, Condition)):
            raise TypeError("on= and off= must be thermonet Conditions, e.g. tn.above('room', 24)")
        links = dict(links or {})
        sources = dict(sources or {})
        if not links and not sources:
            raise NetworkError("a switch needs links= and/or sources= to act on")
        def pair(f, what):
            off, on_ = (1.0, f) if not isinstance(f, (tuple, list)) else tuple(f)
            return (_param_number(off, f"{what} factor_off"),
                    _param_number(on_, f"{what} factor_on"))

        for ln, f in links.items():
            if ln not in self.links:
                raise NetworkError(f"switch acts on unknown link {ln!r}; known: "
                                   f"{', '.join(sorted(self.links))}")
            links[ln] = pair(f, f"switch on link {ln!r}:")
        for sn, f in sources.items():
            if sn not in self.sources:
                raise NetworkError(f"switch acts on unknown source {sn!r}; known: "
                                   f"{', '.join(sorted(self.sources))}")
            sources[sn] = pair(f, f"switch on source {sn!r}:")
        for cond in (on, off):
            if cond is not None:
                for ref in cond.node_refs():
                    self._known(ref, "switch condition node")
        name = self._unique(self.switches, name, "switch", "switch")
        self._declare(*[f for pair_ in (*links.values(), *sources.values()) for f in pair_],
                      *[t.threshold for c in (on, off) if c is not None for t in c.terms()])
        self.switches._store(name, Switch(name, on, off, links, sources, bool(initial)))
        return name

    # ------------------------------------------------------------- parameters
    def with_values(self, values=None, *, scale_series: bool = True, **kwargs) -> Network:
        """A plain copy of this network with its parameters replaced by numbers.

        Parameters
        ----------
        values : mapping of str to float, optional
            Parameter name -> value [the parameter's unit]; parameters not given keep their
            defaults (:mod:`thermonet.parameters`).
        scale_series : bool, default True
            False: a source whose power is a series × an expression gets the series alone
            (the compiler of a parametric network carries the scale in the source's factor).
        **kwargs : float
            More parameter values by name (as ``values``).

        Returns
        -------
        Network
            A network without parameters (the element records are new; Series, conditions'
            signals and the ``meta`` dict's plain values are shared).

        Raises
        ------
        ParameterError
            A name that is no parameter of the network (the known names are listed).
        """
        vals = dict(values or {}, **kwargs)
        unknown = [k for k in vals if k not in self.parameters]
        if unknown:
            raise ParameterError(f"{unknown} are not parameters of network {self.name!r}; its "
                                 f"parameters: {sorted(self.parameters)}")
        row = {k: np.asarray([float(vals.get(k, p.default))]) for k, p in self.parameters.items()}
        out = Network(self.name)
        if hasattr(self, "meta"):
            out.meta = _substitute(self.meta, row, True)
        for attr in ("nodes", "boundaries", "links", "sources", "thermostats", "switches"):
            for k, el in getattr(self, attr).items():
                getattr(out, attr)._store(k, _substitute(el, row, scale_series))
        return out

    # ---------------------------------------------------------------- summary
    def summary(self) -> pd.DataFrame:
        """Links as a table: name, a, b, kind, path, conductance [W/K] (mean if scheduled, at
        the defaults if parametric)."""
        rows = [dict(name=l.name, a=l.a, b=l.b, kind=l.kind, path=l.path,
                     conductance_w_per_k=float(np.mean(np.asarray(default(l.conductance),
                                                                  dtype=float))))
                for l in self.links.values()]
        return pd.DataFrame(rows)

    def _repr_html_(self):
        """Nodes by kind, links by path, totals of C and UA (a notebook's view)."""
        from thermonet.display import network_html  # display reads attributes only

        return network_html(self)

    def __repr__(self):
        params = (f"; parameters {', '.join(self.parameters)}" if getattr(self, "parameters",
                                                                           None) else "")
        return (f"Network({self.name!r}: {len(self.nodes)} nodes, {len(self.boundaries)} "
                f"boundaries, {len(self.links)} links, {len(self.sources)} sources, "
                f"{len(self.thermostats)} thermostats, {len(self.switches)} switches{params})")


def _substitute(x, row: dict, scale_series: bool):
    """``x`` with every parameter expression evaluated on the one-row table ``row``."""
    import dataclasses

    from thermonet.controls import Term
    from thermonet.parameters import evaluate

    if isinstance(x, Expr):
        return float(evaluate(x, row, 1)[0])
    if isinstance(x, ScaledSeries):
        return x.series * _substitute(x.scale, row, True) if scale_series else x.series
    if isinstance(x, Element):
        kw = {f.name: _substitute(getattr(x, f.name), row, scale_series)
              for f in dataclasses.fields(x)}
        return type(x)(**kw)
    if isinstance(x, Condition):
        return Condition([[Term(t.a, t.b, t.op, _substitute(t.threshold, row, True))
                           for t in clause] for clause in x.clauses])
    if isinstance(x, (dict, ReadOnlyDict)):
        return {k: _substitute(v, row, scale_series) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return type(x)(_substitute(v, row, scale_series) for v in x)
    return x
