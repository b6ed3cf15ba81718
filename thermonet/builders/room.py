"""Builders: rooms, windows, airflows, buffer spaces and ground turned into network elements.

A builder reads a plain physical description (areas, constructions, orientations, what lies
on the other side of each element) and ADDS ordinary nodes, links and sources to a
:class:`~thermonet.network.Network` the caller passes in, so several rooms share one network.
Everything it creates stays visible and editable (``net.nodes``, ``net.links`` ...). It returns
a small record (:class:`Room`) naming what it created.

Heat paths (the ``path`` label of every link and source)
--------------------------------------------------------
=================== =====================================================================
``"opaque"``        walls, roofs, floors and doors to outdoor air and sky, and the sun
                    absorbed on their outer faces (sources ``<room>.<element>:solar_absorbed``)
``"glazing"``       windows to outdoor air and sky
``"ground"``        floors and basement walls into the soil, soil to the deep ground
``"buffer"``        heat through elements and airflow between a heated zone and an
                    unheated buffer space (or between two buffer spaces)
``"interzone"``     elements between two heated zones
``"adjacent"``      elements to a neighbour at a given (fixed or scheduled) temperature
``"internal"``      links between two nodes of the same zone (convection and radiation
                    between room air, surfaces and the radiant star node, conduction inside
                    elements) and, from :mod:`thermonet.gains`, internal gains
``"solar"``         solar gains transmitted by windows
``"infiltration"``, ``"ventilation"``, ``"window_ventilation"``  airflows
=================== =====================================================================

A zone's :attr:`Room.nodes` are its air and radiant star nodes and every node of its own
elements (soil nodes excluded), so ``res.balance(room.nodes)`` shows the paths above crossing
the zone's outer surfaces, with ``"internal"`` holding only the internal gains. For the air
node alone (``res.balance(room.air)``) ``"internal"`` also holds the convective exchange with
the room's surfaces.

Room model (one zone)
---------------------
* **Air node** (kind ``"air"``, or ``"buffer"`` when ``heated=False``): capacitance
  ρc·V = 1200 J/(m³K) × V (ISO 13789, from memory) plus an optional furniture capacity [J/K].
* **Elements**: each opaque part is the chain of :func:`thermonet.constructions.rc_chain`
  (surface nodes may be massless when the face layer is massless). Each window or door is two
  massless surface nodes (inside, outside) joined by the rest of its resistance.
* **Inside surface**: convection to the air with the ISO 6946 coefficient h_ci (2.5
  horizontal, 5.0 heat flow up, 0.7 down W/(m²K), ISO 6946:2007 Annex A, from memory) and
  long-wave radiation to a massless **radiant star node** with h_ri = 1/R_si − h_ci, so that the
  inside film is exactly the tabulated R_si (0.13 / 0.10 / 0.17 m²K/W): h_ri = 5.19 / 5.00 /
  5.18 W/(m²K), within 2.5 % of ε·h_r0 = 5.13 W/(m²K) (ISO 52016-1, from memory). Each surface
  exchanges with the star with h_ri·A_i — an area-weighted enclosure (exact when the view
  factors are F_ij = A_j/ΣA). Radiant gains are injected at the star.
* **Outside surface to outdoor**: convection to the outdoor air and long-wave radiation with
  h_re = ε·h_r0 = ε·4.6 W/(m²K) (h_r0 at 0 °C, ISO 6946, from memory) split between the sky
  (view factor (1 + cos β)/2) and the ground (1 − cos β)/2, the ground surface being taken at
  the outdoor air temperature. The convective part h_ce = 1/R_se − h_re = 20.86 W/(m²K) for
  ε = 0.9 keeps the outside film exactly R_se = 0.04 m²K/W; ISO 6946's 4 + 4v with v = 4 m/s
  gives 20 W/(m²K), i.e. R_se = 1/24.14 = 0.0414, which ISO 6946 Table 7 rounds to 0.04. With
  these two choices the steady loss of every element is exactly its ISO 6946 U·A·ΔT when air,
  star, outdoor air and sky are at the conventional temperatures (tests/test_builders.py).
* **Elements to another zone or a fixed-temperature neighbour**: the far face gets the same
  film R_si on the other side (ISO 6946: R_se = R_si for internal elements).
* **Windows**: U_w [W/(m²K)] of the whole window (glazing and frame, as declared) is the
  air-to-air transmittance; the builder keeps the two films it models and puts the rest,
  1/U_w − R_si − R_se, between the window's two surface nodes.

* **Ground**: a floor on the ground (tilt > 120°, ``perimeter=``) or a basement wall
  (60 … 120°, ``depth=``) gets a column of soil nodes (kind ``"ground"``) down to the
  deep-ground boundary, its depth chosen so that the steady loss follows ISO 13370 (slab:
  :func:`slab_soil_depth`, within a few % of :func:`iso13370_slab_u_value`; basement wall:
  :func:`basement_wall_soil_depth`, exactly :func:`iso13370_basement_wall_u_value`).

Conductances are constant (linearised radiation); the network is linear.

Windows in hand-built networks
------------------------------
:func:`add_window` adds one window to any network in one call: the U_w·A link from the outdoor
air to a node and the transmitted solar gain (with external and movable shading) as sources
on the nodes you choose. :func:`window_u_value` gives U_w from the glazing, the frame and the
glazing edge (EN ISO 10077-1).

Records
-------
Each zone's :class:`Room` is also kept, as plain JSON, in ``net.meta["builders"]["rooms"]``;
it travels in model files (:mod:`thermonet.io`) and :func:`rooms` gives it back.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from thermonet import solar as _solar
from thermonet.constants import RHO_CP_AIR
from thermonet.constructions import (
    INTERNAL_CONVECTIVE_COEFFICIENTS,
    Construction,
    rc_chain,
    surface_resistances,
)
from thermonet.controls import Condition, above, below, hours, warmer, when
from thermonet.errors import ConstructionError, NetworkError, WeatherError
from thermonet.network import Network

__all__ = [
    "EXTERNAL_RADIATIVE_COEFFICIENT_BLACK",
    "META_KEY",
    "AddedWindow",
    "SLAB_SOIL_DEPTH_FACTOR",
    "SOIL_CLAY_SILT",
    "SOIL_ROCK",
    "SOIL_SAND_GRAVEL",
    "Adjacent",
    "Door",
    "Element",
    "Room",
    "Soil",
    "Window",
    "add_buffer",
    "add_buffer_exchange",
    "add_infiltration",
    "add_room",
    "add_ventilation",
    "add_window",
    "add_window_opening",
    "rooms",
    "basement_wall_soil_depth",
    "heat_flow_direction",
    "infiltration_rate",
    "iso13370_basement_wall_u_value",
    "iso13370_slab_u_value",
    "night_ventilation",
    "slab_soil_depth",
    "surface_coefficients",
    "window_solar_gain",
    "window_u_value",
]

#: h_r0 = 4σT³ at 0 °C [W/(m²K)] used for exterior long-wave exchange, h_re = ε·h_r0
#: (ISO 6946:2007 Annex A table, from memory; 4σT³ = 4.62 at 273.15 K).
EXTERNAL_RADIATIVE_COEFFICIENT_BLACK = 4.6

#: Keywords of :func:`thermonet.constructions.rc_chain` that ``add_room(rc_options=...)``
#: passes on.
_RC_OPTIONS = ("max_node_thickness", "fraction_of_penetration_depth", "nodes_per_layer",
               "period")

#: Depth of the soil column under a slab per B' = A/(0.5 P) [-] (plus w + λR_se); see
#: :func:`slab_soil_depth` for the choice and its accuracy against ISO 13370.
SLAB_SOIL_DEPTH_FACTOR = 0.4


# ------------------------------------------------------------------------------ validation
def check_num(value, what, *, low=None, high=None, low_open=False, high_open=False,
         error=NetworkError) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise TypeError(f"{what} must be a number, got {type(value).__name__} {value!r}")
    v = float(value)
    if not math.isfinite(v):
        raise error(f"{what} must be finite, got {value!r}")
    if low is not None and (v < low or (low_open and v == low)):
        raise error(f"{what} must be {'>' if low_open else '≥'} {low:g}, got {value!r}")
    if high is not None and (v > high or (high_open and v == high)):
        raise error(f"{what} must be {'<' if high_open else '≤'} {high:g}, got {value!r}")
    return v


def check_orientation(tilt, azimuth, what):
    t = check_num(tilt, f"{what}: tilt [°] (0 = facing up, 90 = vertical, 180 = facing down)",
             low=0.0, high=180.0)
    a = check_num(azimuth, f"{what}: azimuth [°] (0 … 360 clockwise from north, 180 = south)",
             low=0.0, high=360.0)
    return t, a


# ------------------------------------------------------------------------- descriptions
@dataclass(frozen=True)
class Window:
    """A window in an element: whole-window U-value, g-value, frame and shading.

    Parameters
    ----------
    name : str
        Unique within the room.
    area : float
        Area of the opening including the frame [m²], > 0.
    u_value : float
        Thermal transmittance U_w of the whole window, glazing and frame [W/(m²K)], air to
        air (as declared, e.g. per EN ISO 10077-1), > 0.
    g_value : float
        Total solar energy transmittance of the glazing at normal incidence [-], 0 … 1.
    frame_fraction : float, default 0.3
        Frame share of ``area`` [-], 0 ≤ f < 1 (0.3 is the default frame fraction of
        ISO 13790:2008 11.4.5, from memory).
    height, width : float, optional
        Glazed opening [m], needed for an overhang or fins.
    overhang : thermonet.solar.Overhang, optional
    fins : thermonet.solar.Fins, optional
        External shading devices (vertical windows only).
    horizon : (azimuths, elevations), optional
        Far-horizon profile [°], see :func:`thermonet.solar.horizon_shaded`.
    shading : thermonet.solar.MovableShading, optional
        Movable device (blind, shutter); irradiance- or schedule-controlled ones become a
        factor series, temperature-controlled ones a network switch.
    iam_model : {"ashrae", "physical"}, default "ashrae"
        Incidence angle modifier of :func:`thermonet.solar.window_transmitted`.
    """

    name: str
    area: float
    u_value: float
    g_value: float
    frame_fraction: float = 0.3
    height: float | None = None
    width: float | None = None
    overhang: _solar.Overhang | None = None
    fins: _solar.Fins | None = None
    horizon: tuple | None = None
    shading: _solar.MovableShading | None = None
    iam_model: str = "ashrae"

    is_door = False


@dataclass(frozen=True)
class Door(Window):
    """A door: like :class:`Window` with ``g_value = 0`` by default and no frame split.

    Its transmission counts under ``"opaque"`` (to outdoor) instead of ``"glazing"``; a glazed
    door (``g_value > 0``) also admits solar gain.
    """

    g_value: float = 0.0
    frame_fraction: float = 0.0

    is_door = True


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
class Soil:
    """Soil under or beside ground elements, modelled as a column of a few soil nodes.

    Parameters
    ----------
    conductivity : float, default 2.0
        λ_g [W/(mK)] (ISO 13370: 2.0 for sand or gravel and when unknown, from memory).
    heat_capacity : float, default 2.0e6
        ρc [J/(m³K)] (ISO 13370 sand or gravel, from memory).
    depth : float, optional
        Thickness of the soil column from the element to the deep-ground boundary [m];
        default :func:`slab_soil_depth` (floors) or :func:`basement_wall_soil_depth` (walls).
    first_cell : float, default 0.5
        Thickness of the first soil cell [m]; the following ones double in thickness until
        the column is full (e.g. 0.5 + 1.5 m for a 2 m column).
    """

    conductivity: float = 2.0
    heat_capacity: float = 2.0e6
    depth: float | None = None
    first_cell: float = 0.5

    def __post_init__(self):
        check_num(self.conductivity, "soil conductivity [W/(mK)]", low=0.0, low_open=True)
        check_num(self.heat_capacity, "soil heat_capacity [J/(m³K)]", low=0.0)
        check_num(self.first_cell, "soil first_cell [m]", low=0.0, low_open=True)
        if self.depth is not None:
            check_num(self.depth, "soil depth [m]", low=0.0, low_open=True)


#: ISO 13370:2017 Table 7 soil categories (from memory): clay or silt λ = 1.5 W/(mK),
#: ρc = 3.0 MJ/(m³K); sand or gravel 2.0, 2.0; homogeneous rock 3.5, 2.0.
SOIL_CLAY_SILT = Soil(1.5, 3.0e6)
SOIL_SAND_GRAVEL = Soil(2.0, 2.0e6)
SOIL_ROCK = Soil(3.5, 2.0e6)


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


@dataclass
class Room:
    """What :func:`add_room` created (node, link and source names of one zone).

    Attributes
    ----------
    name, air, star : str
        Zone name, air node (same as the zone name), radiant star node.
    heated : bool
    floor_area, height, volume : float
        [m²], [m], [m³].
    outdoor : str
        Name of the outdoor-air boundary.
    nodes : list of str
        The zone's control volume: air, star and all nodes of its own elements (not soil).
    surfaces : dict
        Element or window name -> inside surface node.
    areas : dict
        Element (net opaque) or window name -> area [m²].
    elements : dict
        Element name -> list of its nodes (inside surface first, outside surface last).
    soil_nodes : list of str
    links, sources, switches : list of str
        Everything created for this zone, including later airflows and gains.
    u_values : dict
        Element or window name -> ISO 6946 U-value used [W/(m²K)] (for information).
    """

    name: str
    air: str
    star: str
    heated: bool
    floor_area: float
    height: float
    volume: float
    outdoor: str
    nodes: list = field(default_factory=list)
    surfaces: dict = field(default_factory=dict)
    areas: dict = field(default_factory=dict)
    elements: dict = field(default_factory=dict)
    soil_nodes: list = field(default_factory=list)
    links: list = field(default_factory=list)
    sources: list = field(default_factory=list)
    switches: list = field(default_factory=list)
    u_values: dict = field(default_factory=dict)

    def __repr__(self):
        kind = "heated zone" if self.heated else "buffer space"
        return (f"Room({self.name!r}, {kind}, {self.floor_area:g} m², {len(self.nodes)} nodes, "
                f"{len(self.links)} links, {len(self.sources)} sources)")


#: Key of ``net.meta`` under which builders keep their records (plain JSON, so they travel
#: with the model file: see :func:`rooms`).
META_KEY = "builders"

_ROOM_FIELDS = ("air", "star", "heated", "floor_area", "height", "volume", "outdoor", "nodes",
                "surfaces", "areas", "elements", "soil_nodes", "links", "sources", "switches",
                "u_values")


def meta_section(net: Network, section: str) -> dict:
    meta = getattr(net, "meta", None)
    if not isinstance(meta, dict):
        meta = {}
        net.meta = meta
    return meta.setdefault(META_KEY, {}).setdefault(section, {})


def _keep_room(net: Network, rec: Room) -> None:
    """Record ``rec`` in ``net.meta`` sharing its lists and dicts, so later additions
    (airflows, gains) appear in the record too."""
    meta_section(net, "rooms")[rec.name] = {k: getattr(rec, k) for k in _ROOM_FIELDS}


def rooms(net: Network) -> dict[str, Room]:
    """The zones built by :func:`add_room` / :func:`add_buffer` in ``net``, by name.

    The records live in ``net.meta["builders"]["rooms"]`` as plain JSON and are written to
    model files by :func:`thermonet.io.save_model`, so a loaded model still knows which
    nodes, links and sources make up each room (e.g. for ``res.balance(room.nodes)``).
    The returned :class:`Room` objects share their lists with the record: airflows and
    gains added to them later are recorded as well.

    Parameters
    ----------
    net : Network

    Returns
    -------
    dict of str to Room
        Empty when no room was built.

    Raises
    ------
    NetworkError
        If a record is malformed (e.g. edited by hand); the message names the room and key.
    """
    section = (getattr(net, "meta", None) or {}).get(META_KEY, {}).get("rooms", {})
    out = {}
    for name, d in section.items():
        if not isinstance(d, dict):
            raise NetworkError(f"net.meta['{META_KEY}']['rooms'][{name!r}] must be an object "
                               f"with keys {list(_ROOM_FIELDS)}")
        missing = [k for k in _ROOM_FIELDS if k not in d]
        if missing:
            raise NetworkError(f"net.meta['{META_KEY}']['rooms'][{name!r}] lacks {missing}; "
                               "rebuild the room with add_room")
        unknown = [n for n in d["nodes"] if n not in net.nodes]
        if unknown:
            raise NetworkError(f"room {name!r}: its record names node(s) {unknown[:5]} that "
                               "are not in the network; the record is stale — rebuild the room")
        out[name] = Room(name, **{k: d[k] for k in _ROOM_FIELDS})
    return out


# ------------------------------------------------------------------------ surface physics
def heat_flow_direction(tilt: float) -> str:
    """ISO 6946 direction of heat flow (inside → outside) of an element of given tilt.

    Parameters
    ----------
    tilt : float
        [°] 0 = facing up (roof) … 180 = facing down (floor).

    Returns
    -------
    str
        ``"up"`` for tilt < 60°, ``"horizontal"`` for 60 … 120° (within ±30° of the
        horizontal plane, ISO 6946:2017 Table 7 note), ``"down"`` beyond 120°.
    """
    t = check_num(tilt, "tilt [°]", low=0.0, high=180.0)
    return "up" if t < 60.0 else ("down" if t > 120.0 else "horizontal")


def surface_coefficients(direction: str = "horizontal") -> tuple[float, float]:
    """Inside convective and radiative coefficients (h_ci, h_ri) [W/(m²K)] of the builder.

    Parameters
    ----------
    direction : {"up", "horizontal", "down"}

    Returns
    -------
    (float, float)
        h_ci from ISO 6946:2007 Annex A (5.0 / 2.5 / 0.7, from memory) and h_ri = 1/R_si − h_ci
        with R_si of ISO 6946:2017 Table 7 (0.10 / 0.13 / 0.17 m²K/W), so h_ci + h_ri = 1/R_si.

    Notes
    -----
    h_ri = 5.00 (up), 5.19 (horizontal), 5.18 (down) W/(m²K); ISO 52016-1 uses ε·h_r0 = 5.13
    (from memory), which would give R_si = 0.1311 / 0.0987 / 0.1715 instead of the table.
    """
    if direction not in INTERNAL_CONVECTIVE_COEFFICIENTS:
        raise NetworkError(f"direction must be one of {sorted(INTERNAL_CONVECTIVE_COEFFICIENTS)}"
                           f", got {direction!r}")
    hc = INTERNAL_CONVECTIVE_COEFFICIENTS[direction]
    return hc, 1.0 / surface_resistances(direction).rsi - hc


def _exterior(emissivity: float, tilt: float) -> tuple[float, float, float]:
    """(h_ce, h_re·F_sky, h_re·F_ground) [W/(m²K)]; the three sum to 1/R_se = 25."""
    rse = surface_resistances("horizontal").rse
    hre = emissivity * EXTERNAL_RADIATIVE_COEFFICIENT_BLACK
    f_sky = 0.5 * (1.0 + math.cos(math.radians(tilt)))
    return 1.0 / rse - hre, hre * f_sky, hre * (1.0 - f_sky)


# ----------------------------------------------------------------------------- ground
def iso13370_slab_u_value(area, exposed_perimeter, wall_thickness, floor_resistance, *,
                          soil_conductivity=2.0, rsi=0.17, rse=0.04):
    """Thermal transmittance of a slab-on-ground floor, ISO 13370 (from memory) [W/(m²K)].

    Parameters
    ----------
    area : float
        Floor area A [m²], > 0.
    exposed_perimeter : float
        Exposed perimeter P [m], > 0.
    wall_thickness : float
        Total thickness w of the walls at the perimeter [m], ≥ 0.
    floor_resistance : float
        Thermal resistance R_f of the floor construction (all layers) [m²K/W], ≥ 0.
    soil_conductivity : float, default 2.0
        λ [W/(mK)].
    rsi, rse : float, default 0.17, 0.04
        Surface resistances [m²K/W] (downward heat flow; outside).

    Returns
    -------
    float
        U [W/(m²K)].

    Notes
    -----
    Characteristic dimension B' = A/(0.5 P); equivalent thickness d_t = w + λ(R_si + R_f + R_se).
    For d_t < B' (uninsulated and moderately insulated floors)
    U = 2λ/(πB' + d_t) · ln(πB'/d_t + 1); otherwise (well insulated) U = λ/(0.457 B' + d_t).

    References
    ----------
    ISO 13370:2017, Thermal performance of buildings — Heat transfer via the ground —
    Calculation methods, 9.1 (slab-on-ground floor) — formulas from memory, not verified.
    """
    a = check_num(area, "area [m²]", low=0.0, low_open=True)
    p = check_num(exposed_perimeter, "exposed_perimeter [m]", low=0.0, low_open=True)
    w = check_num(wall_thickness, "wall_thickness [m]", low=0.0)
    rf = check_num(floor_resistance, "floor_resistance [m²K/W]", low=0.0)
    lam = check_num(soil_conductivity, "soil_conductivity [W/(mK)]", low=0.0, low_open=True)
    b = a / (0.5 * p)
    dt = w + lam * (rsi + rf + rse)
    if dt < b:
        return 2.0 * lam / (math.pi * b + dt) * math.log(math.pi * b / dt + 1.0)
    return lam / (0.457 * b + dt)


def slab_soil_depth(area, exposed_perimeter, wall_thickness=0.3, soil_conductivity=2.0,
                    rse=0.04):
    """Default soil column depth under a slab [m]: D = 0.4 B' + w + λ_g R_se.

    Parameters
    ----------
    area, exposed_perimeter : float
        Floor area A [m²] and exposed perimeter P [m]; B' = A/(0.5 P).
    wall_thickness : float, default 0.3
        Thickness w of the walls at the perimeter [m] (ISO 13370's w; 0.3 m typical,
        common practice, no source).
    soil_conductivity : float, default 2.0
        λ_g [W/(mK)].
    rse : float, default 0.04
        External surface resistance of the ground surface [m²K/W] (ISO 13370's R_se).

    Returns
    -------
    float
        D [m].

    Notes
    -----
    The ground loss of a slab leaves through the soil to the outdoor air beyond the
    perimeter, passing beneath the perimeter walls and through the ground-surface film; the
    mean heat-path length grows with B'. In its well-insulated limit ISO 13370 gives
    U = λ/(0.457 B' + d_t), d_t = w + λ(R_si + R_f + R_se), which a 1-D column
    R_si + R_f + D/λ reproduces exactly with D = 0.457 B' + w + λR_se. Less insulated floors
    lose more near the edge (shorter paths): ISO's equivalent soil layer λ/U − d_t is
    0.32–0.46 B'. With the factor 0.4 (:data:`SLAB_SOIL_DEPTH_FACTOR`) the steady loss of the
    column (to a deep boundary at the annual mean temperature) is, against
    :func:`iso13370_slab_u_value` for B' = 2 … 20 m, λ = 2 W/(mK), w = 0.3 m (computed here):
    within ±4 % for R_f ≥ 1 m²K/W; −8 … +3 % for R_f = 0.5; and −12 … +1 % for an uninsulated
    slab with B' ≤ 12 m (−19 % at B' = 20 m, where ISO's perimeter-dominated loss is least
    like a uniform column). The column is 1-D: it has no separate edge path, so the
    distribution of the loss over the floor and its annual lag are approximate.
    """
    a = check_num(area, "area [m²]", low=0.0, low_open=True)
    p = check_num(exposed_perimeter, "exposed_perimeter [m]", low=0.0, low_open=True)
    w = check_num(wall_thickness, "wall_thickness [m]", low=0.0)
    lam = check_num(soil_conductivity, "soil_conductivity [W/(mK)]", low=0.0, low_open=True)
    return SLAB_SOIL_DEPTH_FACTOR * a / (0.5 * p) + w + lam * check_num(rse, "rse [m²K/W]", low=0.0)


def iso13370_basement_wall_u_value(depth, wall_resistance, *, floor_equivalent_thickness=None,
                                   soil_conductivity=2.0, rsi=0.13, rse=0.04):
    """Thermal transmittance of the wall of a heated basement, ISO 13370 (from memory).

    Parameters
    ----------
    depth : float
        Depth z of the basement floor below the ground surface [m], > 0.
    wall_resistance : float
        Thermal resistance R_w of the wall construction (all layers) [m²K/W], ≥ 0.
    floor_equivalent_thickness : float, optional
        Equivalent thickness d_t of the basement floor [m] (ISO 13370's
        d_t = w + λ(R_si + R_f + R_se)); default None: d_t = d_w (the wall's own, see Notes).
    soil_conductivity : float, default 2.0
        λ [W/(mK)].
    rsi, rse : float, default 0.13, 0.04
        Surface resistances [m²K/W] (horizontal heat flow; outside).

    Returns
    -------
    float
        U_bw [W/(m²K)] per m² of wall below ground.

    Notes
    -----
    With d_w = λ(R_si + R_w + R_se):

    .. math:: U_{bw} = \\frac{2\\lambda}{\\pi z}\\left(1 + \\frac{0.5\\,d_t}{d_t + z}\\right)
              \\ln\\left(\\frac{z}{d_w} + 1\\right)

    valid for d_w ≥ d_t; when d_w < d_t, d_t is replaced by d_w (ISO 13370's rule). Without
    the floor's d_t, thermonet takes d_t = d_w, the largest value the rule allows (the
    loss is then at most (1 + 0.5 d_w/(d_w + z))/(1 + 0.5 d_t/(d_t + z)) ≤ 1.5 times the
    value for a better-insulated floor; pass the floor's d_t for the exact figure).

    References
    ----------
    ISO 13370:2017, Thermal performance of buildings — Heat transfer via the ground —
    Calculation methods, heated basement, walls — formula from memory, not verified.
    """
    z = check_num(depth, "basement wall depth [m]", low=0.0, low_open=True)
    lam = check_num(soil_conductivity, "soil conductivity [W/(mK)]", low=0.0, low_open=True)
    rw = check_num(wall_resistance, "wall resistance [m²K/W]", low=0.0)
    dw = lam * (check_num(rsi, "rsi [m²K/W]", low=0.0) + rw
                + check_num(rse, "rse [m²K/W]", low=0.0))
    if dw <= 0.0:
        raise NetworkError("basement wall: R_si + R_w + R_se must be > 0 m²K/W")
    dt = dw if floor_equivalent_thickness is None else check_num(
        floor_equivalent_thickness, "floor_equivalent_thickness [m]", low=0.0, low_open=True)
    dt = min(dt, dw)
    return 2.0 * lam / (math.pi * z) * (1.0 + 0.5 * dt / (dt + z)) * math.log(z / dw + 1.0)


def basement_wall_soil_depth(depth, wall_resistance, soil_conductivity=2.0, rsi=0.13, rse=0.04,
                             floor_equivalent_thickness=None):
    """Default soil thickness behind a basement wall [m], from ISO 13370 (from memory).

    Parameters
    ----------
    depth : float
        Depth z of the basement below ground [m].
    wall_resistance : float
        R_w of the wall construction [m²K/W].
    soil_conductivity : float, default 2.0
        λ [W/(mK)].
    rsi, rse : float, default 0.13, 0.04
        Surface resistances [m²K/W].
    floor_equivalent_thickness : float, optional
        d_t of the basement floor [m]; see :func:`iso13370_basement_wall_u_value`.

    Returns
    -------
    float
        D [m] such that the 1-D column R_si + R_w + D/λ has the steady transmittance U_bw of
        :func:`iso13370_basement_wall_u_value`: D = λ/U_bw − λ(R_si + R_w) (at least 1 mm).

    Notes
    -----
    The wall's steady loss to a deep-ground boundary at the annual mean outdoor temperature
    is then exactly ISO 13370's U_bw·A·ΔT; the 1-D column has no separate path near the
    ground surface, so the distribution of the loss over the wall depth and its seasonal lag
    are approximate.
    """
    lam = check_num(soil_conductivity, "soil conductivity [W/(mK)]", low=0.0, low_open=True)
    u = iso13370_basement_wall_u_value(depth, wall_resistance,
                                       floor_equivalent_thickness=floor_equivalent_thickness,
                                       soil_conductivity=lam, rsi=rsi, rse=rse)
    return max(lam / u - lam * (rsi + float(wall_resistance)), 1e-3)


def _soil_cells(depth: float, first: float) -> list[float]:
    cells, rest, t = [], depth, first
    while rest > 1.5 * t:
        cells.append(t)
        rest -= t
        t *= 2.0
    cells.append(rest)
    return cells


# ------------------------------------------------------------------------------ solar
def site_solar_position(weather, latitude, longitude):
    site = weather.attrs.get("site", {}) if isinstance(weather.attrs.get("site"), Mapping) else {}
    lat = latitude if latitude is not None else site.get("latitude")
    lon = longitude if longitude is not None else site.get("longitude")
    if lat is None or lon is None:
        raise WeatherError("site coordinates unknown: pass latitude=..., longitude=... or give "
                           "the weather df.attrs['site'] = {'latitude': ..., 'longitude': ...}")
    pressure = weather["pressure"].to_numpy(dtype=float) if "pressure" in weather else None
    temp = weather["temp_air"].to_numpy(dtype=float) if "temp_air" in weather else None
    return _solar.solar_position(weather.index, lat, lon, site.get("elevation") or 0.0,
                                 pressure, temp)


def window_solar_gain(weather, window: Window, tilt: float, azimuth: float, *, solpos=None,
                      latitude=None, longitude=None, sky_model="perez", with_device=True):
    """Solar gain transmitted by one window [W], with external and movable shading.

    Parameters
    ----------
    weather : pandas.DataFrame
        ``ghi``, ``dni``, ``dhi`` [W/m²] on a tz-aware index; site in ``attrs["site"]``.
    window : Window
    tilt, azimuth : float
        Orientation of the window [°] (that of its element).
    solpos : pandas.DataFrame, optional
        Solar position on the weather index (computed when missing).
    latitude, longitude : float, optional
        Site [°] when ``solpos`` is not given and the weather has no site.
    sky_model : {"isotropic", "haydavies", "perez"}
    with_device : bool, default True
        Apply an irradiance- or schedule-controlled :class:`~thermonet.solar.MovableShading`;
        a temperature-controlled one is never applied here (the network switches it).

    Returns
    -------
    pandas.Series
        Transmitted gain [W] on the weather index.

    Notes
    -----
    :func:`thermonet.solar.surface_irradiance` → (overhang/fins: beam shaded fraction
    :func:`~thermonet.solar.combined_shaded_fraction` and diffuse factors
    :func:`~thermonet.solar.external_diffuse_factors`; far horizon:
    :func:`~thermonet.solar.horizon_shaded`, :func:`~thermonet.solar.horizon_diffuse_factor`)
    → :func:`thermonet.solar.window_transmitted` with the device's admitted fraction. An
    irradiance-controlled device switches on the total irradiance on the window after the
    external shading.
    """
    tilt, azimuth = check_orientation(tilt, azimuth, f"window {window.name!r}")
    if solpos is None:
        solpos = site_solar_position(weather, latitude, longitude)
    irr = _solar.surface_irradiance(weather, tilt, azimuth, model=sky_model, solpos=solpos)
    if window.overhang is not None or window.fins is not None:
        if abs(tilt - 90.0) > 1e-6:
            raise NetworkError(f"window {window.name!r}: overhangs and fins need a vertical "
                               f"window (tilt 90°), its element has tilt {tilt:g}°")
        if window.height is None or window.width is None:
            raise NetworkError(f"window {window.name!r}: an overhang or fins need height= and "
                               "width= of the glazed opening [m]")
        shaded = _solar.combined_shaded_fraction(
            solpos["apparent_zenith"], solpos["azimuth"], azimuth, window_height=window.height,
            window_width=window.width, overhang=window.overhang, fins=window.fins)
        f = _solar.external_diffuse_factors(window_height=window.height,
                                            window_width=window.width,
                                            overhang=window.overhang, fins=window.fins)
        irr = _solar.apply_external_shading(irr, shaded, f["sky"], ground_factor=f["ground"])
    if window.horizon is not None:
        az_p, el_p = window.horizon
        blocked = _solar.horizon_shaded(solpos["azimuth"], solpos["apparent_elevation"],
                                        az_p, el_p)
        fd = _solar.horizon_diffuse_factor(tilt, azimuth, az_p, el_p)
        irr = _solar.apply_external_shading(irr, blocked, fd)
    admitted = None
    dev = window.shading
    if with_device and dev is not None and dev.control != "temperature":
        state = (dev.deployed(irradiance=irr["total"]) if dev.control == "irradiance"
                 else dev.deployed(index=weather.index))
        admitted = dev.admitted_fraction(state)
    return _solar.window_transmitted(irr, area=window.area, g_value=window.g_value,
                                     frame_fraction=window.frame_fraction,
                                     iam_model=window.iam_model, shading=admitted)


def window_u_value(glazing_u, frame_u, frame_fraction, *, psi=0.0, glazing_perimeter=0.0,
                   area=None):
    """Thermal transmittance U_w of a whole window from its glazing and frame, ISO 10077-1.

    Parameters
    ----------
    glazing_u : float
        U_g of the glazing (centre of pane) [W/(m²K)], > 0.
    frame_u : float
        U_f of the frame [W/(m²K)], > 0.
    frame_fraction : float
        Frame share A_f/A_w of the window area [-], 0 ≤ f < 1.
    psi : float, default 0
        Linear thermal transmittance ψ_g of the glazing edge (spacer) [W/(mK)], ≥ 0.
    glazing_perimeter : float, default 0
        Visible perimeter l_g of the glazing [m], ≥ 0; with ``psi > 0`` also give ``area``.
    area : float, optional
        Window area A_w [m²] (opening including the frame), needed when ψ_g·l_g > 0.

    Returns
    -------
    float
        U_w [W/(m²K)], the value :class:`Window` takes as ``u_value``.

    Notes
    -----
    .. math:: U_w = \\frac{A_g U_g + A_f U_f + l_g \\psi_g}{A_g + A_f}
              = (1 - f) U_g + f U_f + \\frac{l_g \\psi_g}{A_w}

    (EN ISO 10077-1:2017, single window, from memory).

    References
    ----------
    EN ISO 10077-1:2017, Thermal performance of windows, doors and shutters — Calculation
    of thermal transmittance — Part 1: General (from memory).
    """
    ug = check_num(glazing_u, "glazing_u [W/(m²K)]", low=0.0, low_open=True)
    uf = check_num(frame_u, "frame_u [W/(m²K)]", low=0.0, low_open=True)
    f = check_num(frame_fraction, "frame_fraction [-]", low=0.0, high=1.0, high_open=True)
    ps = check_num(psi, "psi [W/(mK)]", low=0.0)
    lg = check_num(glazing_perimeter, "glazing_perimeter [m]", low=0.0)
    edge = ps * lg
    if edge > 0.0:
        if area is None:
            raise NetworkError("window_u_value: psi·glazing_perimeter > 0 needs area= [m²] of "
                               "the window (opening including the frame)")
        edge /= check_num(area, "area [m²]", low=0.0, low_open=True)
    return (1.0 - f) * ug + f * uf + edge


@dataclass
class AddedWindow:
    """What :func:`add_window` created.

    Attributes
    ----------
    name : str
        The window's name (prefix of everything it created).
    link : str
        Transmission link outdoor → node, conductance U_w·A [W/K].
    sources : list of str
        Solar sources (path ``"solar"``), one per receiving node.
    switches : list of str
        The shading switch of a temperature-controlled device (else empty).
    gain : pandas.Series or None
        Transmitted solar gain [W] with external shading and any irradiance- or
        schedule-controlled device applied (a temperature-controlled device acts through
        the switch); None without weather or with g = 0.
    """

    name: str
    link: str
    sources: list = field(default_factory=list)
    switches: list = field(default_factory=list)
    gain: pd.Series | None = None


def add_window(net: Network, node: str, window: Window, *, tilt: float = 90.0,
               azimuth: float = 180.0, weather=None, receivers: Mapping | None = None,
               outdoor: str = "outdoor", outdoor_temperature="temp_air", sky_model="perez",
               latitude=None, longitude=None, solpos=None) -> AddedWindow:
    """Add one window (or door) to a hand-built network in one call.

    Adds the air-to-air transmission link ``outdoor → node`` with conductance U_w·A (path
    ``"glazing"``, ``"opaque"`` for a :class:`Door`) and, with ``weather``, the transmitted
    solar gain as sources (path ``"solar"``) on the receiving nodes, including external
    shading (overhang, fins, far horizon) and movable shading; a temperature-controlled
    device becomes a switch on those sources. Use it for networks wired by hand;
    :func:`add_room` does the same for the windows of its elements (with surface nodes and
    films instead of one air-to-air link).

    Parameters
    ----------
    net : Network
    node : str
        Free node the window's indoor side is coupled to: the room air (U_w is an air-to-air
        transmittance), or the node that stands for the indoor temperature in a simple model.
    window : Window or Door
    tilt, azimuth : float, default 90, 180
        Orientation of the window [°] (pvlib's convention, 180 = south).
    weather : pandas.DataFrame, optional
        ``ghi``, ``dni``, ``dhi`` [W/m²] with the site in ``attrs["site"]``; without it only
        the transmission link is added.
    receivers : mapping, optional
        Node → share [-] of the transmitted solar, shares summing to 1 (e.g. ``{"room":
        0.1, "floor": 0.9}``); default ``{node: 1.0}``.
    outdoor, outdoor_temperature : str, and str, float or Series
        Outdoor-air boundary, reused if it exists, else created (default weather column
        ``"temp_air"``).
    sky_model : {"isotropic", "haydavies", "perez"}, default "perez"
    latitude, longitude : float, optional
        Site [°] when the weather has no ``attrs["site"]``.
    solpos : pandas.DataFrame, optional
        Solar position on the weather index (see :func:`thermonet.solar.solar_position`),
        to share between windows.

    Returns
    -------
    AddedWindow

    Raises
    ------
    NetworkError
        Unknown node or receiver (the known free nodes are listed), shares not summing to 1,
        invalid window values, orientation out of range, a temperature-controlled shading
        device on a node that does not exist, a name already used.
    WeatherError
        Weather without site coordinates or irradiance columns.

    Examples
    --------
    >>> import thermonet as tn
    >>> from thermonet.builders import Window, add_window
    >>> net = tn.Network()
    >>> net.add_boundary("outdoor", temperature="temp_air")
    >>> net.add_node("room", kind="air", capacitance=1.2e5)
    >>> added = add_window(net, "room", Window("south", 3.0, 0.8, 0.5))
    >>> round(net.links[added.link].conductance, 9)   # U_w·A = 0.8 × 3.0 [W/K]
    2.4
    """
    if not isinstance(net, Network):
        raise TypeError(f"net must be a thermonet Network, got {type(net).__name__}")
    if not isinstance(window, Window):
        raise TypeError(f"window must be a Window or Door, got {type(window).__name__}")
    kind = "door" if window.is_door else "window"
    what = f"{kind} {window.name!r}"

    def free_node(n, role):
        if n not in net.nodes:
            shown = ", ".join(repr(k) for k in list(net.nodes)[:20])
            raise NetworkError(f"{what}: {role} {n!r} is not a free node of the network; "
                               f"add it first with net.add_node (free nodes: {shown or 'none'})")
        return n

    free_node(node, "node")
    check_window(window, None)
    tilt, azimuth = check_orientation(tilt, azimuth, what)
    shares = {node: 1.0} if receivers is None else dict(receivers)
    if not shares:
        raise NetworkError(f"{what}: receivers is empty; give node -> share, shares summing "
                           "to 1")
    for n, v in shares.items():
        free_node(n, "receiver")
        shares[n] = check_num(v, f"{what}: solar share of receiver {n!r} [-]", low=0.0, high=1.0)
    total = math.fsum(shares.values())
    if abs(total - 1.0) > 1e-9:
        listed = ", ".join(f"{n}={v:g}" for n, v in shares.items())
        raise NetworkError(f"{what}: receiver shares must sum to 1, got {total:.6g} "
                           f"({listed}); scale them")
    dev = window.shading
    if dev is not None and dev.control == "temperature":
        free_node(dev.node, "shading control node")
    out = outdoor_boundary(net, outdoor, outdoor_temperature, "air", what)
    path = "opaque" if window.is_door else "glazing"
    rec = AddedWindow(window.name, net.add_link(
        out, node, conductance=float(window.u_value) * float(window.area), path=path,
        name=f"{window.name}:transmission"))
    if weather is None or float(window.g_value) == 0.0:
        return rec
    if not isinstance(weather, pd.DataFrame):
        raise TypeError("weather must be a pandas DataFrame")
    if solpos is None:
        solpos = site_solar_position(weather, latitude, longitude)
    gain = window_solar_gain(weather, window, tilt, azimuth, solpos=solpos,
                             sky_model=sky_model).rename(None)
    rec.gain = gain
    for n, share in shares.items():
        if share > 0.0:
            rec.sources.append(net.add_source(n, power=gain * share, path="solar",
                                              name=f"{window.name}:solar>{n}"))
    if dev is not None and dev.control == "temperature":
        rec.switches.append(net.add_switch(
            on=above(dev.node, dev.on_above), off=below(dev.node, dev.off_below),
            sources={s: float(dev.factor) for s in rec.sources},
            name=f"{window.name}:shading"))
    return rec


# ------------------------------------------------------------------------------ helpers
def outdoor_boundary(net: Network, name: str, temperature, kind: str, what: str) -> str:
    """Reuse boundary ``name`` or create it with ``temperature``."""
    if name in net.boundaries:
        if net.boundaries[name].kind != kind:
            raise NetworkError(f"{what}: boundary {name!r} exists with kind "
                               f"{net.boundaries[name].kind!r}, need {kind!r}")
        return name
    if name in net.nodes:
        raise NetworkError(f"{what}: {name!r} is a free node, not a boundary; choose another "
                           "boundary name")
    if temperature is None:
        raise NetworkError(f"{what}: boundary {name!r} does not exist; give its temperature")
    net.add_boundary(name, temperature=temperature, kind=kind)
    return name


def resolve_construction(elem: Element, constructions) -> Construction:
    c = elem.construction
    if isinstance(c, str):
        if constructions is None or c not in constructions:
            known = sorted(constructions) if constructions else []
            raise ConstructionError(f"element {elem.name!r}: unknown construction {c!r}; pass "
                                    f"constructions={{{c!r}: Construction(...)}} to add_room "
                                    f"(known: {known})")
        c = constructions[c]
    if not isinstance(c, Construction):
        raise ConstructionError(f"element {elem.name!r}: construction must be a Construction "
                                f"or a name in constructions=, got {type(c).__name__}")
    return c


def check_window(win, elem_name):
    """Validate a Window or Door; ``elem_name`` None for a window added on its own."""
    if not isinstance(win, Window):
        raise TypeError(f"element {elem_name!r}: windows must be Window or Door, got "
                        f"{type(win).__name__}")
    what = f"{'door' if win.is_door else 'window'} {win.name!r}"
    if elem_name is not None:
        what += f" in element {elem_name!r}"
    check_num(win.area, f"{what}: area [m²]", low=0.0, low_open=True)
    check_num(win.u_value, f"{what}: u_value [W/(m²K)]", low=0.0, low_open=True)
    check_num(win.g_value, f"{what}: g_value [-]", low=0.0, high=1.0)
    check_num(win.frame_fraction, f"{what}: frame_fraction [-]", low=0.0, high=1.0, high_open=True)
    for v, n in ((win.height, "height"), (win.width, "width")):
        if v is not None:
            check_num(v, f"{what}: {n} [m]", low=0.0, low_open=True)


def _film_to_zone(net, rec: Room, node, other: Room, direction, area, path, base):
    """Links from a far face ``node`` to another zone's air and star (film R_si)."""
    hc, hr = surface_coefficients(direction)
    rec.links.append(net.add_link(node, other.air, conductance=hc * area, path=path,
                                  name=f"{base}:conv_far"))
    rec.links.append(net.add_link(node, other.star, conductance=hr * area, path=path,
                                  name=f"{base}:rad_far"))


# --------------------------------------------------------------------------------- rooms
def add_room(net: Network, name: str, *, floor_area: float, height: float,
             elements: Sequence[Element], heated: bool = True, weather=None,
             constructions: Mapping | None = None, furniture_capacity: float = 0.0,
             outdoor: str = "outdoor", outdoor_temperature="temp_air", sky="sky",
             sky_temperature="temp_sky", ground: str = "deep_ground", ground_temperature=None,
             soil: Soil | None = None, solar_distribution="floor", sky_model: str = "perez",
             latitude=None, longitude=None, rc_options: Mapping | None = None,
             initial: float | None = None) -> Room:
    """Add one zone (air, star, elements, windows, solar) to ``net``.

    Parameters
    ----------
    net : Network
        Network to add to (other zones may be in it already).
    name : str
        Zone name; also the name of its air node.
    floor_area, height : float
        [m²], [m], > 0; the air volume is their product.
    elements : sequence of Element
        Envelope elements with their windows.
    heated : bool, default True
        False: a free-running buffer space (air node of kind ``"buffer"``).
    weather : pandas.DataFrame, optional
        Needed for solar gains (transmitted by windows, absorbed on exterior opaque
        surfaces); without it no solar sources are added.
    constructions : mapping, optional
        Name -> Construction for elements naming their construction by a str.
    furniture_capacity : float, default 0
        Heat capacity of furniture lumped with the air [J/K], ≥ 0.
    outdoor : str, default "outdoor"
        Outdoor-air boundary, reused if it exists, else created with ``outdoor_temperature``.
    outdoor_temperature : str, float or pandas.Series, default "temp_air"
        Temperature of a new outdoor boundary [°C]: a weather column, a constant or a Series.
    sky : str or None, default "sky"
        Sky boundary (kind ``"sky"``) for exterior long-wave exchange, reused or created with
        ``sky_temperature``. None: exterior radiation goes to the outdoor air instead.
    sky_temperature : str, float or pandas.Series, default "temp_sky"
        Temperature of a new sky boundary [°C] (weather column, see
        :func:`thermonet.weather.add_sky_temperature`).
    ground, ground_temperature : str, and float, str or Series
        Deep-ground boundary of the soil columns (kind ``"ground"``): a constant annual mean
        [°C], a column such as ``"temp_ground_2m"`` (:func:`thermonet.weather.
        add_ground_temperature`) or a Series; required when there are ground elements and
        the boundary does not exist yet.
    soil : Soil, optional
        Default soil of ground elements (:data:`SOIL_SAND_GRAVEL` values).
    solar_distribution : {"floor", "area"} or mapping, default "floor"
        Share of transmitted solar per receiver (see :func:`thermonet.solar.solar_shares`):
        ``"floor"``: 0.1 to the air, 0.6 to the floor elements (tilt > 120°) by area, 0.3 to
        the other opaque surfaces by area; ``"area"``: 0.1 air, 0.9 by area; or a mapping
        element name / ``"air"`` -> share summing to 1.
    sky_model : str, default "perez"
        Sky-diffuse model of :func:`thermonet.solar.surface_irradiance`.
    latitude, longitude : float, optional
        Site [°] when the weather has no ``attrs["site"]``.
    rc_options : mapping, optional
        Keywords for :func:`thermonet.constructions.rc_chain` (e.g. ``max_node_thickness``).
    initial : float, optional
        Initial temperature of all the zone's capacitive nodes [°C] before the warm-up.

    Returns
    -------
    Room

    Raises
    ------
    NetworkError
        Non-positive areas or height, orientation out of range (tilt 0 … 180°, azimuth
        0 … 360°), windows larger than their element, U_w too large for its two films,
        duplicate names, an unknown or unsuitable boundary, missing ground data.
    ConstructionError
        Unknown construction.
    WeatherError
        Weather without the sky column, or no site coordinates.

    Examples
    --------
    >>> import thermonet as tn
    >>> from thermonet.builders import Element, Window, add_room
    >>> wall = tn.constructions.Construction("wall", [("concrete_2000", 0.2),
    ...                                               ("mineral_wool", 0.16)])
    >>> net = tn.Network()
    >>> room = add_room(net, "living", floor_area=20, height=2.5, sky=None, elements=[
    ...     Element("south", wall, 10, 90, 180, windows=[Window("w1", 3, 0.8, 0.5)])])
    >>> room.air
    'living'
    """
    if not isinstance(net, Network):
        raise TypeError(f"net must be a thermonet Network, got {type(net).__name__}")
    what = f"room {name!r}"
    a_floor = check_num(floor_area, f"{what}: floor_area [m²]", low=0.0, low_open=True)
    h = check_num(height, f"{what}: height [m]", low=0.0, low_open=True)
    c_furn = check_num(furniture_capacity, f"{what}: furniture_capacity [J/K]", low=0.0)
    if isinstance(elements, Element) or not isinstance(elements, Sequence):
        raise TypeError(f"{what}: elements must be a list of Element, got "
                        f"{type(elements).__name__} (wrap a single element in a list)")
    elements = list(elements)
    if not elements:
        raise NetworkError(f"{what}: give at least one Element")
    soil = Soil() if soil is None else soil
    if not isinstance(soil, Soil):
        raise TypeError(f"{what}: soil must be a Soil, got {type(soil).__name__}")
    rc_options = dict(rc_options or {})
    unknown_rc = sorted(set(rc_options) - set(_RC_OPTIONS))
    if unknown_rc:
        raise NetworkError(f"{what}: rc_options {unknown_rc} are not keywords of "
                           f"thermonet.constructions.rc_chain; allowed: {list(_RC_OPTIONS)}")
    if not (isinstance(solar_distribution, Mapping) or solar_distribution in ("floor", "area")):
        raise NetworkError(f"{what}: solar_distribution must be 'floor', 'area' or a mapping "
                           f"element name / 'air' -> share, got {solar_distribution!r}")
    if sky_model not in _solar.SKY_MODELS:
        raise NetworkError(f"{what}: sky_model must be one of {list(_solar.SKY_MODELS)}, got "
                           f"{sky_model!r}")

    # ---- validate the whole description before touching the network
    seen = set()
    plan = []
    for elem in elements:
        if not isinstance(elem, Element):
            raise TypeError(f"{what}: elements must be Element, got {type(elem).__name__}")
        ew = f"element {elem.name!r} of room {name!r}"
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
        for win in elem.windows:
            check_window(win, elem.name)
            if win.name in seen:
                raise NetworkError(f"{what}: duplicate element or window name {win.name!r}")
            seen.add(win.name)
        a_win = sum(float(w.area) for w in elem.windows)
        if a_win > area * (1 + 1e-12):
            raise NetworkError(f"{ew}: its windows and doors ({a_win:g} m²) are larger than the "
                               f"element ({area:g} m²); enlarge the element or shrink them")
        b = elem.boundary
        if isinstance(b, str) and b not in ("outdoor", "ground") and b not in net.boundaries:
            raise NetworkError(f"{ew}: unknown boundary {b!r}; use 'outdoor', 'ground', a Room, "
                               "Adjacent(temperature) or the name of an existing boundary")
        if isinstance(b, Room):
            if b.air not in net.nodes or b.star not in net.nodes:
                raise NetworkError(f"{ew}: zone {b.name!r} is not in this network")
            if b.name == name:
                raise NetworkError(f"{ew}: an element cannot face its own zone")
        elif isinstance(b, (int, float)) and not isinstance(b, bool):
            check_num(b, f"{ew}: neighbour temperature [°C]", low=-273.15)
        elif not isinstance(b, (str, Adjacent)):
            raise TypeError(f"{ew}: boundary must be 'outdoor', 'ground', a Room, Adjacent, a "
                            f"number [°C] or a boundary name, got {type(b).__name__}")
        direction = heat_flow_direction(tilt)
        if b == "ground":
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
        if b == "outdoor" and elem.windows:
            rse = surface_resistances(direction).rse
        else:
            rse = surface_resistances(direction).rsi
        rsi = surface_resistances(direction).rsi
        for win in elem.windows:
            if 1.0 / float(win.u_value) <= rsi + rse:
                raise NetworkError(
                    f"window {win.name!r} in element {elem.name!r}: u_value {win.u_value:g} "
                    f"W/(m²K) must be < 1/(R_si + R_se) = {1 / (rsi + rse):.3f} W/(m²K), the "
                    "transmittance of the two surface films alone")
        chain = rc_chain(cons, **rc_options) if area - a_win > 1e-12 * area else None
        plan.append((elem, cons, tilt, az, area, a_win, direction, chain))
    if any(e.boundary == "ground" for e, *_ in plan) and ground not in net.boundaries \
            and ground_temperature is None:
        raise NetworkError(f"{what}: ground elements need ground_temperature= (annual mean "
                           "[°C], a weather column such as 'temp_ground_2m', or a Series)")
    sky_used = sky is not None and any(e.boundary == "outdoor" for e, *_ in plan)
    if weather is not None:
        if not isinstance(weather, pd.DataFrame):
            raise TypeError("weather must be a pandas DataFrame")
        if sky_used and sky not in net.boundaries and isinstance(sky_temperature, str) \
                and sky_temperature not in weather.columns:
            raise WeatherError(f"{what}: the weather has no column {sky_temperature!r} for the "
                               "sky temperature; add it with thermonet.weather."
                               "add_sky_temperature(df), or pass sky=None")

    # ---- nodes of the zone
    volume = a_floor * h
    out = outdoor_boundary(net, outdoor, outdoor_temperature, "air", what)
    sky_b = outdoor_boundary(net, sky, sky_temperature, "sky", what) if sky_used else None
    rec = Room(name, name, f"{name}.star", bool(heated), a_floor, h, volume, out)
    net.add_node(name, kind="air" if heated else "buffer",
                 capacitance=RHO_CP_AIR * volume + c_furn, volume=volume, initial=initial)
    net.add_node(rec.star, kind="surface", capacitance=0.0)
    rec.nodes += [name, rec.star]

    def link(a, b, g, path, lname):
        if g > 0.0:
            rec.links.append(net.add_link(a, b, conductance=g, path=path, name=lname))

    def outside_links(node, elem, tilt, area, path, base):
        hce, hsky, hgnd = _exterior(float(elem.emissivity), tilt)
        if sky_b is None:
            link(node, out, (hce + hsky + hgnd) * area, path, f"{base}:ext")
        else:
            link(node, out, (hce + hgnd) * area, path, f"{base}:ext")
            link(node, sky_b, hsky * area, path, f"{base}:sky")

    def other_side(elem):
        b = elem.boundary
        if isinstance(b, Room):
            return ("zone", b, "buffer" if not (b.heated and heated) else "interzone")
        if isinstance(b, Adjacent) or (isinstance(b, (int, float)) and not isinstance(b, bool)):
            adj = b if isinstance(b, Adjacent) else Adjacent(float(b))
            bname = adj.name or f"{name}.{elem.name}.adjacent"
            return ("fixed", outdoor_boundary(net, bname, adj.temperature, "air", what), "adjacent")
        if b not in ("outdoor", "ground"):
            return ("fixed", b, "adjacent")
        return (b, None, {"outdoor": "opaque", "ground": "ground"}[b])

    solpos = None
    irr_cache: dict = {}
    receivers: dict[str, float] = {}
    floors: set = set()
    window_gains: list = []  # (window, gain Series)

    def irradiance(tilt, az):
        nonlocal solpos
        if solpos is None:
            solpos = site_solar_position(weather, latitude, longitude)
        key = (tilt, az)
        if key not in irr_cache:
            irr_cache[key] = _solar.surface_irradiance(weather, tilt, az, model=sky_model,
                                                       solpos=solpos)["total"]
        return irr_cache[key]

    for elem, cons, tilt, az, area, a_win, direction, chain in plan:
        kind, other, path = other_side(elem)
        hc, hr = surface_coefficients(direction)
        base = f"{name}.{elem.name}"
        a_op = area - a_win
        enodes = []
        if a_op > 1e-12 * area:
            caps, conds = chain.for_area(a_op)
            n = chain.n_nodes
            for j in range(n):
                nn = f"{base}.si" if j == 0 else (f"{base}.se" if j == n - 1 else f"{base}.m{j}")
                net.add_node(nn, kind="surface" if j in (0, n - 1) else "mass",
                             capacitance=float(caps[j]), initial=initial)
                enodes.append(nn)
            for j, g in enumerate(conds):
                link(enodes[j], enodes[j + 1], float(g), "internal", f"{base}:cond{j + 1}")
            si, se = enodes[0], enodes[-1]
            link(si, name, hc * a_op, "internal", f"{base}:conv")
            link(si, rec.star, hr * a_op, "internal", f"{base}:rad")
            rec.surfaces[elem.name] = si
            rec.areas[elem.name] = a_op
            receivers[si] = a_op
            if direction == "down":
                floors.add(si)
            rsi_ = surface_resistances(direction).rsi
            r_lay = cons.thermal_resistance
            if kind == "outdoor":
                outside_links(se, elem, tilt, a_op, path, base)
                rec.u_values[elem.name] = 1.0 / (rsi_ + r_lay + surface_resistances(
                    direction).rse)
                if weather is not None and elem.solar_absorptance > 0:
                    q = irradiance(tilt, az) * (float(elem.solar_absorptance) * a_op)
                    # booked under the element's own path ("opaque"): the control volume
                    # of the room holds the outer face, so the sun absorbed there and the
                    # heat it returns to outdoor air and sky net out in one path, and
                    # "solar" stays the gain through the windows
                    rec.sources.append(net.add_source(se, power=q.rename(None), path=path,
                                                      name=f"{base}:solar_absorbed"))
            elif kind == "zone":
                _film_to_zone(net, rec, se, other, direction, a_op, path, base)
                rec.u_values[elem.name] = 1.0 / (2 * rsi_ + r_lay)
            elif kind == "fixed":
                link(se, other, a_op / rsi_, path, f"{base}:far")
                rec.u_values[elem.name] = 1.0 / (2 * rsi_ + r_lay)
            else:  # ground
                el_soil = elem.soil or soil
                lam = el_soil.conductivity
                if el_soil.depth is not None:
                    d = el_soil.depth
                elif direction == "down":
                    d = slab_soil_depth(area, elem.perimeter, elem.wall_thickness, lam)
                else:
                    d = basement_wall_soil_depth(elem.depth, r_lay, lam, rsi_)
                gb = outdoor_boundary(net, ground, ground_temperature, "ground", what)
                cells = _soil_cells(d, el_soil.first_cell)
                prev, r_prev = se, 0.0
                for k, t in enumerate(cells):
                    sn = f"{base}.soil{k + 1}"
                    net.add_node(sn, kind="ground", capacitance=el_soil.heat_capacity * t * a_op,
                                 initial=initial)
                    rec.soil_nodes.append(sn)
                    link(prev, sn, a_op / (r_prev + 0.5 * t / lam), "ground", f"{base}:soil{k + 1}")
                    prev, r_prev = sn, 0.5 * t / lam
                link(prev, gb, a_op / r_prev, "ground", f"{base}:deep")
                rec.u_values[elem.name] = 1.0 / (rsi_ + r_lay + d / lam)
        # ---- windows and doors
        for win in elem.windows:
            wb = f"{name}.{win.name}"
            wsi, wse = f"{wb}.si", f"{wb}.se"
            net.add_node(wsi, kind="surface", capacitance=0.0)
            net.add_node(wse, kind="surface", capacitance=0.0)
            enodes += [wsi, wse]
            wa = float(win.area)
            rsi_ = surface_resistances(direction).rsi
            rse_ = surface_resistances(direction).rse if kind == "outdoor" else rsi_
            link(wsi, name, hc * wa, "internal", f"{wb}:conv")
            link(wsi, rec.star, hr * wa, "internal", f"{wb}:rad")
            link(wsi, wse, wa / (1.0 / float(win.u_value) - rsi_ - rse_), "internal",
                 f"{wb}:cond")
            rec.surfaces[win.name] = wsi
            rec.areas[win.name] = wa
            rec.u_values[win.name] = float(win.u_value)
            wpath = path if kind != "outdoor" else ("opaque" if win.is_door else "glazing")
            if kind == "outdoor":
                outside_links(wse, elem, tilt, wa, wpath, wb)
                if weather is not None and win.g_value > 0:
                    if solpos is None:
                        solpos = site_solar_position(weather, latitude, longitude)
                    gain = window_solar_gain(weather, win, tilt, az, solpos=solpos,
                                             sky_model=sky_model)
                    window_gains.append((win, gain))
            elif kind == "zone":
                _film_to_zone(net, rec, wse, other, direction, wa, wpath, wb)
            else:
                link(wse, other, wa / rsi_, wpath, f"{wb}:far")
        rec.elements[elem.name] = enodes
        rec.nodes += enodes

    if window_gains:
        shares = _room_solar_shares(rec, receivers, floors, solar_distribution)
        groups: dict = {}
        for win, gain in window_gains:
            dev = win.shading
            key = win.name if dev is not None and dev.control == "temperature" else None
            groups[key] = gain if key not in groups else groups[key] + gain
        for key, gain in groups.items():
            tag = f"{name}.{key}" if key else name
            srcs = []
            for node, share in shares.items():
                if share > 0:
                    srcs.append(net.add_source(node, power=(gain * share).rename(None),
                                               path="solar", name=f"{tag}:solar>{node}"))
            rec.sources += srcs
            if key is not None:
                dev = next(w for w, _ in window_gains if w.name == key).shading
                rec.switches.append(net.add_switch(
                    on=above(dev.node, dev.on_above), off=below(dev.node, dev.off_below),
                    sources={s: float(dev.factor) for s in srcs}, name=f"{tag}:shading"))
    _keep_room(net, rec)
    return rec


def _room_solar_shares(rec: Room, receivers, floors, distribution) -> dict:
    """Node -> share of the transmitted solar (sums to 1)."""
    if isinstance(distribution, Mapping):
        shares = {}
        for key, v in distribution.items():
            if key == "air":
                node = rec.air
            elif key in rec.surfaces and rec.surfaces[key] in receivers:
                node = rec.surfaces[key]
            else:
                known = sorted(k for k, n in rec.surfaces.items() if n in receivers)
                raise NetworkError(f"room {rec.name!r}: solar_distribution names {key!r}, which "
                                   f"is neither 'air' nor an opaque element of the room "
                                   f"({known})")
            shares[node] = check_num(v, f"solar share of {key!r}", low=0.0, high=1.0)
        total = math.fsum(shares.values())
        if abs(total - 1.0) > 1e-9:
            raise NetworkError(f"room {rec.name!r}: solar_distribution shares sum to {total:.6g}, "
                               "need 1")
        return shares
    if distribution not in ("floor", "area"):
        raise NetworkError(f"solar_distribution must be 'floor', 'area' or a mapping, got "
                           f"{distribution!r}")
    if not receivers:
        raise NetworkError(f"room {rec.name!r}: windows admit solar but the room has no opaque "
                           "surface to receive it")
    others = {n: a for n, a in receivers.items() if n not in floors}
    if distribution == "area" or not floors or not others:
        return _solar.solar_shares(receivers, air=rec.air, method="area")
    key = f"{rec.name}.floors"
    a_floor = sum(receivers[n] for n in floors)
    base = _solar.solar_shares({**others, key: a_floor}, floor=key, air=rec.air,
                               method="floor")
    fshare = base.pop(key)
    base.update({n: fshare * receivers[n] / a_floor for n in floors})
    return base


def add_buffer(net: Network, name: str, **kwargs) -> Room:
    """Add an unheated buffer space (sunspace, vestibule, attic, stairwell).

    Same arguments as :func:`add_room` with ``heated=False``: a free-running zone with its
    own air (node kind ``"buffer"``) and fabric. Couple it to a heated room with an element
    whose ``boundary`` is the buffer's :class:`Room` (conduction, path ``"buffer"``) and with
    :func:`add_buffer_exchange` (airflow, path ``"buffer"``).

    Parameters
    ----------
    net : Network
        Network to add to.
    name : str
        Zone name; also the name of its air node.
    **kwargs
        Keywords of :func:`add_room` (``floor_area`` [m²], ``height`` [m], ``elements``,
        ``weather`` ...), except ``heated``.

    Returns
    -------
    Room
    """
    if "heated" in kwargs:
        raise NetworkError("add_buffer builds an unheated zone; do not pass heated=")
    return add_room(net, name, heated=False, **kwargs)


# ------------------------------------------------------------------------------ airflow
#: Shielding coefficients e [-] of the ISO 13789 / EN 832 infiltration estimate, by number
#: of exposed façades and shielding class (from memory, docs/references.md §4 [M]).
_SHIELDING_E = {
    ("several", "none"): 0.10, ("several", "moderate"): 0.07, ("several", "heavy"): 0.04,
    ("one", "none"): 0.03, ("one", "moderate"): 0.02, ("one", "heavy"): 0.01,
}
_SHIELDING_F = {"several": 15.0, "one": 20.0}


def infiltration_rate(n50=None, *, q50=None, envelope_area=None, volume=None,
                      method: str = "iso13789", shielding: str = "moderate",
                      exposed_facades: str = "several", unbalanced_flow_m3h: float = 0.0):
    """Average infiltration air change rate [1/h] from an airtightness test.

    Parameters
    ----------
    n50 : float, optional
        Air change rate at 50 Pa [1/h], ≥ 0.
    q50 : float, optional
        Air permeability at 50 Pa [m³/(h·m²)] of the envelope area, with ``envelope_area``
        [m²] and ``volume`` [m³]: n50 = q50·A_E/V.
    envelope_area : float, optional
        Envelope area A_E [m²] for ``q50``.
    volume : float, optional
        Air volume V [m³] for ``q50`` and for an unbalanced flow.
    method : {"iso13789", "divide20"}, default "iso13789"
        ``"iso13789"``: n = n50·e / (1 + (f/e)·(Δq/(V·n50))²) with shielding coefficient e and
        f (EN 832 / ISO 13789 / ISO 13790 style, from memory); Δq = ``unbalanced_flow_m3h``
        (0 for balanced mechanical ventilation or none), giving n = e·n50.
        ``"divide20"``: n = n50/20 (Kronvall and Persily's rule, Meier 1986 [C]).
    shielding : {"none", "moderate", "heavy"}, default "moderate"
        Shielding class of the building by its surroundings.
    exposed_facades : {"several", "one"}, default "several"
        Façades exposed to the wind; e = 0.10 / 0.07 / 0.04 (several façades: no /
        moderate / heavy shielding), 0.03 / 0.02 / 0.01 (one façade); f = 15 (several),
        20 (one) — from memory.
    unbalanced_flow_m3h : float, default 0
        abs(supply − exhaust) of mechanical ventilation [m³/h] (needs ``volume``).

    Returns
    -------
    float
        Infiltration rate [1/h].

    Raises
    ------
    NetworkError
        Neither or both of n50 and q50, negative values, missing area/volume, unknown keys.

    References
    ----------
    Meier, A. (1986, reprinted 1994), "Infiltration: Just ACH50 divided by 20?", Home Energy.
    ISO 13789:2017 / EN 832:1998 (infiltration from n50 with shielding coefficients).
    """
    if (n50 is None) == (q50 is None):
        raise NetworkError("give exactly one of n50= [1/h] or q50= [m³/(h·m²)]")
    if q50 is not None:
        if envelope_area is None or volume is None:
            raise NetworkError("q50= needs envelope_area= [m²] and volume= [m³]")
        n50 = (check_num(q50, "q50 [m³/(h·m²)]", low=0.0)
               * check_num(envelope_area, "envelope_area [m²]", low=0.0, low_open=True)
               / check_num(volume, "volume [m³]", low=0.0, low_open=True))
    n50 = check_num(n50, "n50 [1/h]", low=0.0)
    if method == "divide20":
        return n50 / 20.0
    if method != "iso13789":
        raise NetworkError(f"method must be 'iso13789' or 'divide20', got {method!r}")
    key = (exposed_facades, shielding)
    if key not in _SHIELDING_E:
        raise NetworkError(f"shielding must be 'none', 'moderate' or 'heavy' and exposed_facades "
                           f"'several' or 'one', got {shielding!r}, {exposed_facades!r}")
    e, f = _SHIELDING_E[key], _SHIELDING_F[exposed_facades]
    dq = check_num(unbalanced_flow_m3h, "unbalanced_flow_m3h [m³/h]", low=0.0)
    if dq == 0.0 or n50 == 0.0:
        return e * n50
    v = check_num(volume if volume is not None else -1.0, "volume [m³] (needed with an unbalanced "
             "flow)", low=0.0, low_open=True)
    return n50 * e / (1.0 + (f / e) * (dq / (v * n50)) ** 2)


def _zone(zone, what):
    for attr in ("air", "volume", "outdoor", "links"):
        if not hasattr(zone, attr):
            raise TypeError(f"{what}: expected a Room (or template zone), got "
                            f"{type(zone).__name__}")
    return zone


def add_infiltration(net: Network, zone, *, ach=None, flow_m3h=None, n50=None, q50=None,
                     envelope_area=None, method: str = "iso13789", shielding: str = "moderate",
                     exposed_facades: str = "several", name: str | None = None) -> str:
    """Add infiltration (outdoor ↔ zone air, path ``"infiltration"``); returns the link name.

    Give one of ``ach`` [1/h], ``flow_m3h`` [m³/h], ``n50`` [1/h] or ``q50`` [m³/(h·m²)] with
    ``envelope_area`` [m²]; the test results are converted with :func:`infiltration_rate`
    (``method``, ``shielding``, ``exposed_facades``). The conductance is ρc·V̇ with
    ρc = 1200 J/(m³K) (ISO 13789, from memory): 0.333 W per m³/h per K.

    Parameters
    ----------
    net : Network
        Network holding the zone.
    zone : Room
        The zone (from :func:`add_room` or a template zone).
    ach : float or pandas.Series, optional
        Infiltration air change rate [1/h].
    flow_m3h : float or pandas.Series, optional
        Infiltration airflow [m³/h].
    n50 : float, optional
        Air change rate at 50 Pa [1/h] (converted with :func:`infiltration_rate`).
    q50 : float, optional
        Air permeability at 50 Pa [m³/(h·m²)], with ``envelope_area``.
    envelope_area : float, optional
        Envelope area [m²] for ``q50``.
    method, shielding, exposed_facades : str
        Passed to :func:`infiltration_rate` (``"iso13789"``, ``"moderate"``,
        ``"several"`` by default).
    name : str, optional
        Link name; default ``"<zone>:infiltration"``.

    Returns
    -------
    str
        Link name.

    Raises
    ------
    NetworkError
        Not exactly one of ``ach``, ``flow_m3h``, ``n50``, ``q50``, or invalid values.
    """
    zone = _zone(zone, "add_infiltration")
    given = [k for k, v in dict(ach=ach, flow_m3h=flow_m3h, n50=n50, q50=q50).items()
             if v is not None]
    if len(given) != 1:
        raise NetworkError(f"add_infiltration({zone.name!r}): give exactly one of ach=, "
                           f"flow_m3h=, n50=, q50=; got {given or 'none'}")
    if n50 is not None or q50 is not None:
        ach = infiltration_rate(n50, q50=q50, envelope_area=envelope_area, volume=zone.volume,
                                method=method, shielding=shielding,
                                exposed_facades=exposed_facades)
    kw = dict(ach=ach, volume=zone.volume) if ach is not None else dict(flow_m3h=flow_m3h)
    ln = net.add_airflow(zone.outdoor, zone.air, path="infiltration",
                         name=name or f"{zone.name}:infiltration", **kw)
    zone.links.append(ln)
    return ln


def _as_condition(c, what):
    if isinstance(c, Condition):
        return c
    if isinstance(c, pd.Series):
        return when(c.astype(bool))
    raise TypeError(f"{what} must be a thermonet Condition or a bool Series, got "
                    f"{type(c).__name__}")


def add_ventilation(net: Network, zone, *, flow_m3h, heat_recovery: float = 0.0,
                    schedule: pd.Series | None = None, bypass=None, supply: str | None = None,
                    name: str | None = None) -> str:
    """Add balanced mechanical ventilation with heat recovery (path ``"ventilation"``).

    Parameters
    ----------
    net : Network
    zone : Room
    flow_m3h : float
        Nominal supply = exhaust flow [m³/h], ≥ 0.
    heat_recovery : float, default 0
        Temperature efficiency η of the heat exchanger [-], 0 ≤ η < 1.
    schedule : pandas.Series, optional
        Flow fraction per step [-], ≥ 0, on the weather index (few distinct values: each
        gets a cached discretisation).
    bypass : Condition or bool Series, optional
        While true the heat recovery is bypassed (summer bypass): a switch multiplies the
        link by 1/(1 − η), e.g. ``tn.above(room.air, 23) & tn.warmer(room.air, "outdoor", 2)``
        or a bool Series of the summer months.
    supply : str, optional
        Supply-air boundary; default the zone's outdoor boundary.
    name : str, optional
        Link name (default ``"<zone>:ventilation"``); the bypass switch is ``name + ":bypass"``.

    Returns
    -------
    str
        Link name. Conductance ρc·V̇·(1 − η) [W/K].
    """
    zone = _zone(zone, "add_ventilation")
    q = check_num(flow_m3h, f"ventilation of {zone.name!r}: flow_m3h [m³/h]", low=0.0)
    eta = check_num(heat_recovery, f"ventilation of {zone.name!r}: heat_recovery [-]", low=0.0,
               high=1.0, high_open=True)
    flow = q
    if schedule is not None:
        if not isinstance(schedule, pd.Series):
            raise TypeError(f"ventilation of {zone.name!r}: schedule must be a pandas Series "
                            f"of flow fractions [-] on the weather index, got "
                            f"{type(schedule).__name__}")
        vals = np.asarray(schedule, dtype=float)
        if not np.isfinite(vals).all() or (vals < 0).any():
            raise NetworkError(f"ventilation of {zone.name!r}: schedule fractions must be finite "
                               "and ≥ 0")
        flow = (schedule.astype(float) * q).rename(None)
    ln = net.add_airflow(supply or zone.outdoor, zone.air, path="ventilation", flow_m3h=flow,
                         heat_recovery=eta, name=name or f"{zone.name}:ventilation")
    zone.links.append(ln)
    if bypass is not None:
        if eta == 0.0:
            raise NetworkError(f"ventilation of {zone.name!r}: a bypass needs heat_recovery > 0")
        sw = net.add_switch(on=_as_condition(bypass, "bypass"),
                            links={ln: (1.0, 1.0 / (1.0 - eta))}, name=f"{ln}:bypass")
        if hasattr(zone, "switches"):
            zone.switches.append(sw)
    return ln


def night_ventilation(air: str, outdoor: str = "outdoor", *, indoor_above: float = 24.0,
                      warmer_by: float = 1.0, start: int = 22, end: int = 7) -> Condition:
    """Condition for night ventilation: indoor warm, warmer than outdoors, and at night.

    ``tn.above(air, indoor_above) & tn.warmer(air, outdoor, warmer_by) & tn.hours(start, end)``
    (thresholds [°C], [K], clock hours; common practice, no source).

    Parameters
    ----------
    air : str
        Indoor air node.
    outdoor : str, default "outdoor"
        Outdoor-air boundary.
    indoor_above : float, default 24.0
        Indoor air temperature above which to ventilate [°C].
    warmer_by : float, default 1.0
        Required excess of indoor over outdoor air temperature [K].
    start, end : int, default 22 and 7
        Clock hours of the night window [h], wrapping midnight when ``start > end``.

    Returns
    -------
    Condition
    """
    return above(air, indoor_above) & warmer(air, outdoor, warmer_by) & hours(start, end)


def add_window_opening(net: Network, zone, *, open_when: Condition, close_when=None,
                       flow_m3h=None, ach=None, path: str = "window_ventilation",
                       name: str | None = None) -> str:
    """Add an airflow that exists only while windows are open (airing, night ventilation).

    Parameters
    ----------
    net : Network
        Network holding the zone.
    zone : Room
        The zone whose air is exchanged with its outdoor boundary.
    open_when : Condition
        Opens the windows, e.g. :func:`night_ventilation` or
        ``tn.above(room.air, 24) & tn.warmer(room.air, "outdoor", 1) & tn.hours(22, 7)``.
    close_when : Condition, optional
        Closes them again (hysteresis); default: as soon as ``open_when`` no longer holds.
    flow_m3h, ach : float
        Airflow while open [m³/h] or [1/h] (one of them).
    path : str, default "window_ventilation"
        Balance path of the airflow.
    name : str, optional
        Link name; default ``"<zone>:window_opening"``.

    Returns
    -------
    str
        Link name; the switch is ``name + ":open"``, acting on the link with factors
        (0 while shut, 1 while open).
    """
    zone = _zone(zone, "add_window_opening")
    if not isinstance(open_when, Condition):
        raise TypeError(f"window opening of {zone.name!r}: open_when must be a thermonet "
                        f"Condition (e.g. night_ventilation(...)), got "
                        f"{type(open_when).__name__}")
    kw = dict(ach=ach, volume=zone.volume) if ach is not None else dict(flow_m3h=flow_m3h)
    if (flow_m3h is None) == (ach is None):
        raise NetworkError(f"window opening of {zone.name!r}: give exactly one of flow_m3h= or "
                           "ach=")
    ln = net.add_airflow(zone.outdoor, zone.air, path=path,
                         name=name or f"{zone.name}:window_opening", **kw)
    zone.links.append(ln)
    sw = net.add_switch(on=open_when, off=close_when, links={ln: (0.0, 1.0)},
                        name=f"{ln}:open")
    if hasattr(zone, "switches"):
        zone.switches.append(sw)
    return ln


def add_buffer_exchange(net: Network, room, buffer, *, flow_m3h, schedule=None,
                        name: str | None = None) -> str:
    """Add air exchange between a room and a buffer space (path ``"buffer"``).

    Parameters
    ----------
    net : Network
        Network holding both zones.
    room, buffer : Room
        The heated room and the buffer space (:func:`add_buffer`).
    flow_m3h : float
        Exchange flow each way [m³/h], ≥ 0.
    schedule : pandas.Series, optional
        Fraction per step [-], ≥ 0 (e.g. a vestibule door opening schedule).
    name : str, optional
        Link name; default ``"<room>-<buffer>:exchange"``.

    Returns
    -------
    str
        Link name.
    """
    for z, w in ((room, "room"), (buffer, "buffer")):
        _zone(z, f"add_buffer_exchange {w}")
    what = f"air exchange {room.name!r} ↔ {buffer.name!r}"
    if room.air == buffer.air:
        raise NetworkError(f"{what}: room and buffer are the same zone; pass the buffer space "
                           "built with add_buffer")
    q = check_num(flow_m3h, f"{what}: flow_m3h [m³/h]", low=0.0)
    flow = q
    if schedule is not None:
        if not isinstance(schedule, pd.Series):
            raise TypeError(f"{what}: schedule must be a pandas Series of fractions [-] on the "
                            f"weather index, got {type(schedule).__name__}")
        vals = np.asarray(schedule, dtype=float)
        if not np.isfinite(vals).all() or (vals < 0).any():
            raise NetworkError(f"{what}: schedule fractions must be finite and ≥ 0 (a door "
                               "opening share, 0 = shut)")
        flow = (schedule.astype(float) * q).rename(None)
    ln = net.add_airflow(room.air, buffer.air, path="buffer", flow_m3h=flow,
                         name=name or f"{room.name}-{buffer.name}:exchange")
    room.links.append(ln)
    return ln
