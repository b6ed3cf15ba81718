"""Envelope elements of a room: their description (:class:`Element`, :class:`Adjacent`), the
check of a description before anything is added (:func:`plan_element`), and the nodes and
links each element adds to a zone under construction — the RC chain of its opaque part with
its inside films, its windows and doors, and the far side: outdoor air and sky with the sun
absorbed on the outer face, another zone, a neighbour at a given temperature, or a soil
column (see :mod:`thermonet.builders.room` for the model)."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import pandas as pd

from thermonet.builders.common import (
    check_num,
    check_orientation,
    kept_surface_irradiance,
    number,
    outdoor_boundary,
    resolve_construction,
    site_solar_position,
)
from thermonet.builders.ground import Soil, add_soil_column, element_soil_depth
from thermonet.builders.records import Room
from thermonet.builders.surfaces import (
    add_films_to_zone,
    add_inside_films,
    add_outside_films,
    add_positive_link,
    heat_flow_direction,
)
from thermonet.builders.windows import (
    Window,
    check_parametric_g,
    check_window,
    window_solar_gain,
)
from thermonet.constructions import Construction, RCChain, rc_chain, surface_resistances
from thermonet.errors import NetworkError
from thermonet.network import Network
from thermonet.parameters import default

__all__ = ["Adjacent", "Element"]

#: Keywords of :func:`thermonet.constructions.rc_chain` that ``add_room(rc_options=...)``
#: passes on.
RC_OPTIONS = ("max_node_thickness", "fraction_of_penetration_depth", "nodes_per_layer",
              "period")


# ------------------------------------------------------------------------- descriptions
@dataclass(frozen=True)
class Adjacent:
    """A neighbouring space kept at a given temperature (a boundary of kind ``"air"``).

    Parameters
    ----------
    temperature : float, str or pandas.Series
        [°C] constant, weather column name, or Series on the weather index.
    name : str, optional
        Boundary name; default ``"<room>.<element>.adjacent"``. An existing boundary of that
        name is reused.
    """

    temperature: float | str | pd.Series
    name: str | None = None




@dataclass(frozen=True)
class Element:
    """One envelope element of a room: wall, roof, floor, partition.

    Parameters
    ----------
    name : str
        Unique within the room.
    construction : Construction or str
        Layers from the inside (this room) to the outside; a str is looked up in the
        ``constructions`` mapping given to :func:`add_room`.
    area : float
        Gross area including its windows and doors [m²], > 0.
    tilt : float, default 90
        [°] 0 (roof, facing up) … 90 (wall) … 180 (floor, facing down), pvlib's convention.
    azimuth : float, default 180
        [°] direction the outside faces, 0 … 360 clockwise from north.
    boundary : "outdoor", "ground", Room, Adjacent, float or str, default "outdoor"
        What lies on the other side: outdoor air and sky; the ground (soil column); another
        zone built earlier (a buffer space when either zone is unheated); a neighbour at a
        given temperature (:class:`Adjacent`, a number [°C], or the name of an existing
        boundary of the network).
    windows : sequence of Window or Door
        Openings in the element; their area is subtracted from the opaque area.
    solar_absorptance : float, default 0.6
        Of the outside surface [-] (0.6: common practice, no source).
    emissivity : float, default 0.9
        Long-wave emissivity of the outside surface [-].
    perimeter : float, optional
        Exposed perimeter P [m] of a floor on the ground (slab), needed for ``"ground"``.
    depth : float, optional
        Depth below ground z [m] of a basement wall, needed for ``"ground"`` walls.
    wall_thickness : float, default 0.3
        Thickness w of the perimeter walls of a floor on the ground [m] (ISO 13370's w, used
        by :func:`slab_soil_depth`; 0.3 m typical, common practice, no source).
    soil : Soil, optional
        Soil for a ground element; default the ``soil`` given to :func:`add_room`.
    """

    name: str
    construction: Construction | str
    area: float
    tilt: float = 90.0
    azimuth: float = 180.0
    boundary: object = "outdoor"
    windows: Sequence[Window] = ()
    solar_absorptance: float = 0.6
    emissivity: float = 0.9
    perimeter: float | None = None
    depth: float | None = None
    wall_thickness: float = 0.3
    soil: Soil | None = None



# ------------------------------------------------------------------------ checking a plan
@dataclass(frozen=True)
class ElementPlan:
    """A checked element: what :func:`add_element` needs.

    Attributes
    ----------
    elem : Element
    construction : Construction
    tilt, azimuth : float
        [°].
    area : float
        Gross area [m²].
    window_area : float or Expr
        Sum of its windows and doors [m²] (an expression when a window's area is one).
    direction : {"up", "horizontal", "down"}
        ISO 6946 direction of heat flow.
    chain : RCChain or None
        RC chain of the construction; None when the windows fill the element.
    """

    elem: Element
    construction: Construction
    tilt: float
    azimuth: float
    area: float
    window_area: object
    direction: str
    chain: RCChain | None


def plan_element(net: Network, room: str, elem, seen: set, soil: Soil, constructions,
                 rc_options: Mapping) -> ElementPlan:
    """Check one element of room ``room`` without touching the network.

    Parameters
    ----------
    net : Network
        The network the room goes into (for boundaries and zones named by the element).
    room : str
        Room name, for messages.
    elem : Element
    seen : set of str
        Element and window names met so far in the room; this element's are added.
    soil : Soil
        The room's default soil.
    constructions : mapping of str to Construction, optional
        For constructions named by a str.
    rc_options : mapping
        Keywords of :func:`thermonet.constructions.rc_chain`.
    """
    what = f"room {room!r}"
    if not isinstance(elem, Element):
        raise TypeError(f"{what}: elements must be Element, got {type(elem).__name__}")
    ew = f"element {elem.name!r} of room {room!r}"
    if elem.name in seen:
        raise NetworkError(f"{what}: duplicate element or window name {elem.name!r}")
    seen.add(elem.name)
    tilt, az = check_orientation(elem.tilt, elem.azimuth, ew)
    area = check_num(elem.area, f"{ew}: area [m²]", low=0.0, low_open=True)
    check_num(elem.solar_absorptance, f"{ew}: solar_absorptance [-]", low=0.0, high=1.0)
    check_num(elem.emissivity, f"{ew}: emissivity [-]", low=0.0, high=1.0)
    cons = resolve_construction(elem, constructions)
    if isinstance(elem.windows, Window) or not isinstance(elem.windows, Sequence):
        raise TypeError(f"{ew}: windows must be a list of Window or Door, got "
                        f"{type(elem.windows).__name__} (wrap a single window in a list)")
    if elem.soil is not None and not isinstance(elem.soil, Soil):
        raise TypeError(f"{ew}: soil must be a Soil, got {type(elem.soil).__name__}")
    a_win = check_element_windows(elem, seen, area, what, ew)
    check_boundary(net, elem, room, ew)
    direction = heat_flow_direction(tilt)
    if elem.boundary == "ground":
        check_ground_element(elem, soil, direction, tilt, ew)
    check_window_films(elem, direction)
    chain = rc_chain(cons, **rc_options) if default(area - a_win) > 1e-12 * area else None
    return ElementPlan(elem, cons, tilt, az, area, a_win, direction, chain)


def check_element_windows(elem: Element, seen: set, area: float, what: str, ew: str) -> float:
    """Check the windows and doors of ``elem`` and return their total area [m²] (an
    expression when a window's area is a parameter; checked at the defaults).

    Parameters
    ----------
    elem : Element
    seen : set of str
        Names met so far in the room; the windows' are added.
    area : float
        Gross element area [m²].
    what, ew : str
        The room and the element, for messages.
    """
    for win in elem.windows:
        check_window(win, elem.name)
        if win.name in seen:
            raise NetworkError(f"{what}: duplicate element or window name {win.name!r}")
        seen.add(win.name)
    a_win = sum(number(w.area) for w in elem.windows)
    if default(a_win) > area * (1 + 1e-12):
        raise NetworkError(f"{ew}: its windows and doors ({default(a_win):g} m²) are larger "
                           f"than the "
                           f"element ({area:g} m²); enlarge the element or shrink them")
    return a_win


def check_boundary(net: Network, elem: Element, room: str, ew: str) -> None:
    """Check what lies on the other side of ``elem``.

    Parameters
    ----------
    net : Network
    elem : Element
    room : str
        The room the element belongs to.
    ew : str
        The element, for messages.
    """
    b = elem.boundary
    if isinstance(b, str) and b not in ("outdoor", "ground") and b not in net.boundaries:
        raise NetworkError(f"{ew}: unknown boundary {b!r}; use 'outdoor', 'ground', a Room, "
                           "Adjacent(temperature) or the name of an existing boundary")
    if isinstance(b, Room):
        if b.air not in net.nodes or b.star not in net.nodes:
            raise NetworkError(f"{ew}: zone {b.name!r} is not in this network")
        if b.name == room:
            raise NetworkError(f"{ew}: an element cannot face its own zone")
    elif isinstance(b, (int, float)) and not isinstance(b, bool):
        check_num(b, f"{ew}: neighbour temperature [°C]", low=-273.15)
    elif not isinstance(b, (str, Adjacent)):
        raise TypeError(f"{ew}: boundary must be 'outdoor', 'ground', a Room, Adjacent, a "
                        f"number [°C] or a boundary name, got {type(b).__name__}")


def check_ground_element(elem: Element, soil: Soil, direction: str, tilt: float,
                         ew: str) -> None:
    """Check a floor on the ground or a basement wall.

    Parameters
    ----------
    elem : Element
    soil : Soil
        The room's default soil.
    direction : {"up", "horizontal", "down"}
    tilt : float
        [°].
    ew : str
        The element, for messages.
    """
    if elem.windows:
        raise NetworkError(f"{ew}: an element against the ground cannot have windows")
    if direction == "up":
        raise NetworkError(f"{ew}: ground contact is for floors (tilt > 120°) and "
                           f"basement walls (60 … 120°), got tilt {tilt:g}°")
    el_depth = (elem.soil or soil).depth
    if direction == "down" and elem.perimeter is None and el_depth is None:
        raise NetworkError(f"{ew}: a floor on the ground needs perimeter= (exposed "
                           "perimeter [m]) or a Soil with depth=")
    if direction == "horizontal" and elem.depth is None and el_depth is None:
        raise NetworkError(f"{ew}: a basement wall needs depth= (below ground [m]) or "
                           "a Soil with depth=")
    if elem.perimeter is not None:
        check_num(elem.perimeter, f"{ew}: perimeter [m]", low=0.0, low_open=True)
    if elem.depth is not None:
        check_num(elem.depth, f"{ew}: depth [m]", low=0.0, low_open=True)
    check_num(elem.wall_thickness, f"{ew}: wall_thickness [m]", low=0.0)


def check_window_films(elem: Element, direction: str) -> None:
    """Refuse a window whose U_w is not below that of its two surface films alone.

    Parameters
    ----------
    elem : Element
    direction : {"up", "horizontal", "down"}
    """
    if elem.boundary == "outdoor" and elem.windows:
        rse = surface_resistances(direction).rse
    else:
        rse = surface_resistances(direction).rsi
    rsi = surface_resistances(direction).rsi
    for win in elem.windows:
        if 1.0 / default(win.u_value) <= rsi + rse:
            raise NetworkError(
                f"window {win.name!r} in element {elem.name!r}: u_value {default(win.u_value):g} "
                f"W/(m²K) must be < 1/(R_si + R_se) = {1 / (rsi + rse):.3f} W/(m²K), the "
                "transmittance of the two surface films alone")


# ------------------------------------------------------------------ adding to a zone
@dataclass
class ZoneBuild:
    """A zone under construction: where its elements go and what they share.

    Attributes
    ----------
    net : Network
    rec : Room
        The zone's record, filled as elements are added.
    what : str
        The zone, for messages.
    outdoor : str
        Outdoor-air boundary.
    sky : str or None
        Sky boundary; None: exterior long-wave exchange with the outdoor air.
    weather : pandas.DataFrame or None
        For solar gains; None: no solar sources.
    latitude, longitude : float or None
        Site [°] when the weather has no ``attrs["site"]``.
    sky_model : str
        Sky-diffuse model of :func:`thermonet.solar.surface_irradiance`.
    initial : float or None
        Initial temperature of the capacitive nodes [°C].
    soil : Soil
        Default soil of ground elements.
    ground : str
        Deep-ground boundary.
    ground_temperature : float, str, pandas.Series or None
        [°C] of a new deep-ground boundary.
    solpos : pandas.DataFrame or None
        Solar position, computed on first need.
    irradiance_cache : dict
        (tilt, azimuth) -> total irradiance [W/m²] on that plane.
    receivers : dict
        Inside opaque surface node -> area [m²] (receivers of transmitted solar).
    floors : set
        Those of them that are floors.
    window_gains : list
        (window, transmitted gain [W], deployed state or None) of the windows to outdoor
        air; the gain is without the movable device where the network switches it
        (temperature control, internal devices).
    """

    net: Network
    rec: Room
    what: str
    outdoor: str
    sky: str | None
    weather: pd.DataFrame | None
    latitude: float | None
    longitude: float | None
    sky_model: str
    initial: float | None
    soil: Soil
    ground: str
    ground_temperature: object
    solpos: pd.DataFrame | None = None
    irradiance_cache: dict = field(default_factory=dict)
    receivers: dict = field(default_factory=dict)
    floors: set = field(default_factory=set)
    window_gains: list = field(default_factory=list)

    def solar_position(self) -> pd.DataFrame:
        """Solar position on the weather index (computed once)."""
        if self.solpos is None:
            self.solpos = site_solar_position(self.weather, self.latitude, self.longitude)
        return self.solpos

    def irradiance(self, tilt: float, azimuth: float) -> pd.Series:
        """Total irradiance on a plane [W/m²] (computed once per orientation).

        Parameters
        ----------
        tilt, azimuth : float
            [°] of the plane.
        """
        key = (tilt, azimuth)
        if key not in self.irradiance_cache:
            solpos = self.solar_position()
            self.irradiance_cache[key] = kept_surface_irradiance(
                self.weather, tilt, azimuth, model=self.sky_model, solpos=solpos)["total"]
        return self.irradiance_cache[key]


def far_side(z: ZoneBuild, elem: Element) -> tuple:
    """(kind, other, path) of what lies beyond ``elem``.

    kind is ``"zone"`` (other: its Room), ``"fixed"`` (other: a boundary name, created for
    an :class:`Adjacent` or a number), ``"outdoor"`` or ``"ground"`` (other: None); path is
    the heat path of the element's outer links.

    Parameters
    ----------
    z : ZoneBuild
    elem : Element
    """
    b = elem.boundary
    if isinstance(b, Room):
        return ("zone", b, "buffer" if not (b.heated and z.rec.heated) else "interzone")
    if isinstance(b, Adjacent) or (isinstance(b, (int, float)) and not isinstance(b, bool)):
        adj = b if isinstance(b, Adjacent) else Adjacent(float(b))
        bname = adj.name or f"{z.rec.name}.{elem.name}.adjacent"
        return ("fixed", outdoor_boundary(z.net, bname, adj.temperature, "air", z.what),
                "adjacent")
    if b not in ("outdoor", "ground"):
        return ("fixed", b, "adjacent")
    return (b, None, {"outdoor": "opaque", "ground": "ground"}[b])


def add_element(z: ZoneBuild, p: ElementPlan) -> None:
    """Add one checked element (opaque part, windows and doors, far side) to the zone.

    Parameters
    ----------
    z : ZoneBuild
    p : ElementPlan
    """
    kind, other, path = far_side(z, p.elem)
    enodes = []
    if default(p.area - p.window_area) > 1e-12 * p.area:
        enodes = add_opaque_part(z, p, kind, other, path)
    for win in p.elem.windows:
        enodes += add_element_window(z, p, win, kind, other, path)
    z.rec.elements[p.elem.name] = enodes
    z.rec.nodes += enodes


def add_rc_chain(net: Network, rec, base: str, chain: RCChain, area: float,
                 initial: float | None) -> list[str]:
    """Nodes and conduction links of an element's RC chain; returns the nodes, inside first.

    Parameters
    ----------
    net : Network
    rec : Room
        Its ``links`` list gets the link names.
    base : str
        Prefix of the names (``base + ".si"``, ``".m1"`` …, ``".se"``).
    chain : RCChain
    area : float
        Opaque area [m²].
    initial : float or None
        Initial temperature [°C].
    """
    caps, conds = chain.for_area(area)
    n = chain.n_nodes
    nodes = []
    for j in range(n):
        nn = f"{base}.si" if j == 0 else (f"{base}.se" if j == n - 1 else f"{base}.m{j}")
        net.add_node(nn, kind="surface" if j in (0, n - 1) else "mass",
                     capacitance=number(caps[j]), initial=initial)
        nodes.append(nn)
    for j, g in enumerate(conds):
        add_positive_link(net, rec, nodes[j], nodes[j + 1], number(g), "internal",
                          f"{base}:cond{j + 1}")
    return nodes


def add_opaque_part(z: ZoneBuild, p: ElementPlan, kind: str, other, path: str) -> list[str]:
    """The opaque part of an element: RC chain, inside films and far side; returns its nodes.

    Parameters
    ----------
    z : ZoneBuild
    p : ElementPlan
    kind, other, path
        From :func:`far_side`.
    """
    net, rec, elem = z.net, z.rec, p.elem
    base = f"{rec.name}.{elem.name}"
    a_op = p.area - p.window_area
    enodes = add_rc_chain(net, rec, base, p.chain, a_op, z.initial)
    si, se = enodes[0], enodes[-1]
    add_inside_films(net, rec, si, p.direction, a_op, base)
    rec.surfaces[elem.name] = si
    rec.areas[elem.name] = a_op
    z.receivers[si] = a_op
    if p.direction == "down":
        z.floors.add(si)
    rsi = surface_resistances(p.direction).rsi
    r_lay = p.construction.thermal_resistance
    if kind == "outdoor":
        add_opaque_outdoor(z, p, se, a_op, path, base)
        rec.u_values[elem.name] = 1.0 / (rsi + r_lay + surface_resistances(p.direction).rse)
    elif kind == "zone":
        add_films_to_zone(net, rec, se, other, p.direction, a_op, path, base)
        rec.u_values[elem.name] = 1.0 / (2 * rsi + r_lay)
    elif kind == "fixed":
        add_positive_link(net, rec, se, other, a_op / rsi, path, f"{base}:far")
        rec.u_values[elem.name] = 1.0 / (2 * rsi + r_lay)
    else:  # ground
        soil = elem.soil or z.soil
        d = element_soil_depth(elem, soil, p.direction, p.area, r_lay, rsi)
        gb = outdoor_boundary(net, z.ground, z.ground_temperature, "ground", z.what)
        add_soil_column(net, rec, se, base, soil, d, a_op, gb, z.initial)
        rec.u_values[elem.name] = 1.0 / (rsi + r_lay + d / soil.conductivity)
    return enodes


def add_opaque_outdoor(z: ZoneBuild, p: ElementPlan, se: str, area: float, path: str,
                       base: str) -> None:
    """Outside films of an opaque face to outdoor air and sky, and the sun it absorbs.

    Parameters
    ----------
    z : ZoneBuild
    p : ElementPlan
    se : str
        Outside surface node.
    area : float
        Opaque area [m²].
    path : str
        ``"opaque"``.
    base : str
        Prefix of the names.
    """
    elem = p.elem
    add_outside_films(z.net, z.rec, se, elem.emissivity, p.tilt, area, path, base, z.outdoor,
                      z.sky)
    if z.weather is not None and elem.solar_absorptance > 0:
        q = z.irradiance(p.tilt, p.azimuth) * (float(elem.solar_absorptance) * area)
        # (a parametric area gives a ScaledSeries: the irradiance times an expression)
        # booked under the element's own path ("opaque"): the control volume of the room
        # holds the outer face, so the sun absorbed there and the heat it returns to outdoor
        # air and sky net out in one path, and "solar" stays the gain through the windows
        z.rec.sources.append(z.net.add_source(se, power=q.rename(None), path=path,
                                              name=f"{base}:solar_absorbed"))


def add_element_window(z: ZoneBuild, p: ElementPlan, win: Window, kind: str, other,
                       path: str) -> list[str]:
    """A window or door of an element: two massless surface nodes, films between them and
    the room, the far side, and (to outdoors) its transmitted gain kept for distribution.

    Parameters
    ----------
    z : ZoneBuild
    p : ElementPlan
    win : Window or Door
    kind, other, path
        From :func:`far_side`.

    Returns
    -------
    list of str
        Its inside and outside surface nodes.
    """
    net, rec = z.net, z.rec
    wb = f"{rec.name}.{win.name}"
    wsi, wse = f"{wb}.si", f"{wb}.se"
    net.add_node(wsi, kind="surface", capacitance=0.0)
    net.add_node(wse, kind="surface", capacitance=0.0)
    wa = number(win.area)
    rsi = surface_resistances(p.direction).rsi
    rse = surface_resistances(p.direction).rse if kind == "outdoor" else rsi
    add_inside_films(net, rec, wsi, p.direction, wa, wb)
    add_positive_link(net, rec, wsi, wse, wa / (1.0 / number(win.u_value) - rsi - rse),
                      "internal", f"{wb}:cond")
    rec.surfaces[win.name] = wsi
    rec.areas[win.name] = wa
    rec.u_values[win.name] = number(win.u_value)
    wpath = path if kind != "outdoor" else ("opaque" if win.is_door else "glazing")
    if kind == "outdoor":
        add_outside_films(net, rec, wse, p.elem.emissivity, p.tilt, wa, wpath, wb, z.outdoor,
                          z.sky)
        check_parametric_g(win, f"window {win.name!r} in element {p.elem.name!r}")
        if z.weather is not None and default(win.g_value) > 0:
            dev = win.shading
            switched = dev is not None and (dev.control == "temperature" or dev.internal)
            gain, state = window_solar_gain(z.weather, win, p.tilt, p.azimuth,
                                            solpos=z.solar_position(), sky_model=z.sky_model,
                                            with_device=not switched, return_state=True)
            z.window_gains.append((win, gain, state))
    elif kind == "zone":
        add_films_to_zone(net, rec, wse, other, p.direction, wa, wpath, wb)
    else:
        add_positive_link(net, rec, wse, other, wa / rsi, wpath, f"{wb}:far")
    return [wsi, wse]
