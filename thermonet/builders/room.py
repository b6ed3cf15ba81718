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

Modules
-------
==================================== =======================================================
:mod:`thermonet.builders.room`       :func:`add_room`, :func:`add_buffer`: a zone's air and
                                     star nodes, its elements, solar distribution, record
:mod:`thermonet.builders.elements`   :class:`Element`, :class:`Adjacent`; checking a
                                     description; RC chains, windows and far sides of elements
:mod:`thermonet.builders.surfaces`   ISO 6946 films: inside, outside (air and sky), far side
:mod:`thermonet.builders.windows`    :class:`Window`, :class:`Door`, :func:`add_window`,
                                     :func:`window_solar_gain`, :func:`window_u_value`
:mod:`thermonet.builders.ground`     :class:`Soil`, ISO 13370 transmittances, soil columns
:mod:`thermonet.builders.airflow`    infiltration, ventilation, window opening, buffer exchange
:mod:`thermonet.builders.records`    :class:`Room` and :func:`rooms` (records in ``net.meta``)
:mod:`thermonet.builders.common`     checks and small shared helpers
:mod:`thermonet.builders.templates`  the ISO 13790 5R1C zone
==================================== =======================================================
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence

import pandas as pd

from thermonet import solar as _solar
from thermonet.builders.common import check_num, outdoor_boundary
from thermonet.builders.elements import (
    RC_OPTIONS,
    Element,
    ElementPlan,
    ZoneBuild,
    add_element,
    plan_element,
)
from thermonet.builders.ground import Soil
from thermonet.builders.records import Room, keep_room
from thermonet.builders.windows import add_shading_switch, internal_device_sources
from thermonet.constants import RHO_CP_AIR
from thermonet.errors import NetworkError, WeatherError
from thermonet.network import Network
from thermonet.parameters import default, is_parametric

__all__ = ["add_buffer", "add_room"]


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
    elements = check_element_list(elements, what)
    soil = Soil() if soil is None else soil
    if not isinstance(soil, Soil):
        raise TypeError(f"{what}: soil must be a Soil, got {type(soil).__name__}")
    rc_options = check_rc_options(rc_options, what)
    check_solar_options(solar_distribution, sky_model, what)
    # ---- validate the whole description before touching the network
    seen: set = set()
    plan = [plan_element(net, name, e, seen, soil, constructions, rc_options) for e in elements]
    sky_used = check_surroundings(net, what, plan, ground, ground_temperature, sky,
                                  sky_temperature, weather)
    # ---- the zone's nodes, its elements, the sun through its windows
    out = outdoor_boundary(net, outdoor, outdoor_temperature, "air", what)
    sky_b = outdoor_boundary(net, sky, sky_temperature, "sky", what) if sky_used else None
    rec = add_zone_air(net, name, heated, a_floor, h, out, c_furn, initial)
    z = ZoneBuild(net, rec, what, out, sky_b, weather, latitude, longitude, sky_model, initial,
                  soil, ground, ground_temperature)
    for p in plan:
        add_element(z, p)
    distribute_window_solar(z, solar_distribution)
    keep_room(net, rec)
    return rec


def check_element_list(elements, what: str) -> list:
    """``elements`` as a non-empty list (not yet checked one by one).

    Parameters
    ----------
    elements : sequence of Element
    what : str
        The room, for messages.
    """
    if isinstance(elements, Element) or not isinstance(elements, Sequence):
        raise TypeError(f"{what}: elements must be a list of Element, got "
                        f"{type(elements).__name__} (wrap a single element in a list)")
    elements = list(elements)
    if not elements:
        raise NetworkError(f"{what}: give at least one Element")
    return elements


def check_rc_options(rc_options: Mapping | None, what: str) -> dict:
    """``rc_options`` as a dict of keywords of :func:`thermonet.constructions.rc_chain`.

    Parameters
    ----------
    rc_options : mapping, optional
    what : str
        The room, for messages.
    """
    rc_options = dict(rc_options or {})
    unknown_rc = sorted(set(rc_options) - set(RC_OPTIONS))
    if unknown_rc:
        raise NetworkError(f"{what}: rc_options {unknown_rc} are not keywords of "
                           f"thermonet.constructions.rc_chain; allowed: {list(RC_OPTIONS)}")
    return rc_options


def check_solar_options(solar_distribution, sky_model: str, what: str) -> None:
    """Check ``solar_distribution`` (its keys later) and ``sky_model`` of :func:`add_room`.

    Parameters
    ----------
    solar_distribution : {"floor", "area"} or mapping
    sky_model : str
    what : str
        The room, for messages.
    """
    if not (isinstance(solar_distribution, Mapping) or solar_distribution in ("floor", "area")):
        raise NetworkError(f"{what}: solar_distribution must be 'floor', 'area' or a mapping "
                           f"element name / 'air' -> share, got {solar_distribution!r}")
    if sky_model not in _solar.SKY_MODELS:
        raise NetworkError(f"{what}: sky_model must be one of {list(_solar.SKY_MODELS)}, got "
                           f"{sky_model!r}")


def check_surroundings(net: Network, what: str, plan: list[ElementPlan], ground: str,
                       ground_temperature, sky, sky_temperature, weather) -> bool:
    """Check the ground and sky boundaries and the weather a room needs; True when the
    room's outdoor elements exchange long-wave radiation with a sky boundary.

    Parameters
    ----------
    net : Network
    what : str
        The room, for messages.
    plan : list of ElementPlan
    ground, ground_temperature, sky, sky_temperature, weather
        As given to :func:`add_room`.
    """
    if any(p.elem.boundary == "ground" for p in plan) and ground not in net.boundaries \
            and ground_temperature is None:
        raise NetworkError(f"{what}: ground elements need ground_temperature= (annual mean "
                           "[°C], a weather column such as 'temp_ground_2m', or a Series)")
    sky_used = sky is not None and any(p.elem.boundary == "outdoor" for p in plan)
    if weather is not None:
        if not isinstance(weather, pd.DataFrame):
            raise TypeError("weather must be a pandas DataFrame")
        if sky_used and sky not in net.boundaries and isinstance(sky_temperature, str) \
                and sky_temperature not in weather.columns:
            raise WeatherError(f"{what}: the weather has no column {sky_temperature!r} for the "
                               "sky temperature; add it with thermonet.weather."
                               "add_sky_temperature(df), or pass sky=None")
    return sky_used


def add_zone_air(net: Network, name: str, heated: bool, floor_area: float, height: float,
                 outdoor: str, furniture_capacity: float, initial: float | None) -> Room:
    """The zone's air node (with furniture) and radiant star node; returns its new record.

    Parameters
    ----------
    net : Network
    name : str
        Zone and air node name.
    heated : bool
        False: a buffer space (air node kind ``"buffer"``).
    floor_area, height : float
        [m²], [m].
    outdoor : str
        Outdoor-air boundary.
    furniture_capacity : float
        [J/K] lumped with the air.
    initial : float or None
        Initial air temperature [°C].
    """
    volume = floor_area * height
    rec = Room(name, name, f"{name}.star", bool(heated), floor_area, height, volume, outdoor)
    net.add_node(name, kind="air" if heated else "buffer",
                 capacitance=RHO_CP_AIR * volume + furniture_capacity, volume=volume,
                 initial=initial)
    net.add_node(rec.star, kind="surface", capacitance=0.0)
    rec.nodes += [name, rec.star]
    return rec


def distribute_window_solar(z: ZoneBuild, distribution) -> None:
    """Sources of the solar gain the zone's windows transmit, shared over its receivers.

    Windows with a shading device the network switches (temperature control, or an internal
    blind or curtain, :attr:`thermonet.solar.MovableShading.internal`) get their own sources
    and a switch; so do windows whose gain depends on parameters (a series times an
    expression of the window's area and g-value, :mod:`thermonet.parameters`); the others'
    gains are summed. An internal device adds two sources of the heat it absorbs while down:
    the convective part on the room air, the long-wave part on the room's radiant star node
    (:func:`thermonet.builders.windows.internal_device_sources`).

    Parameters
    ----------
    z : ZoneBuild
        After all elements are added.
    distribution : {"floor", "area"} or mapping
        ``solar_distribution`` of :func:`add_room`.
    """
    if not z.window_gains:
        return
    net, rec = z.net, z.rec
    shares = room_solar_shares(rec, z.receivers, z.floors, distribution)
    groups: dict = {}
    switched: dict = {}
    for win, gain, state in z.window_gains:
        dev = win.shading
        switches = dev is not None and (dev.control == "temperature" or dev.internal)
        key = win.name if switches or is_parametric(gain) else None
        groups[key] = gain if key not in groups else groups[key] + gain
        if key is not None:
            switched[key] = (dev, state)
    for key, gain in groups.items():
        tag = f"{rec.name}.{key}" if key else rec.name
        srcs = []
        for node, share in shares.items():
            if default(share) > 0:
                srcs.append(net.add_source(node, power=(gain * share).rename(None),
                                           path="solar", name=f"{tag}:solar>{node}"))
        rec.sources += srcs
        dev, state = switched.get(key, (None, None))
        if dev is not None and (dev.control == "temperature" or dev.internal):
            absorbed = internal_device_sources(net, dev, gain, {rec.air: 1.0},
                                               {rec.star: 1.0}, tag)
            rec.sources += absorbed
            rec.switches.append(add_shading_switch(net, dev, srcs, f"{tag}:shading",
                                                   state=state, absorbed=absorbed))


def room_solar_shares(rec: Room, receivers, floors, distribution) -> dict:
    """Node -> share of the transmitted solar (sums to 1).

    Parameters
    ----------
    rec : Room
    receivers : dict
        Inside opaque surface node -> area [m²].
    floors : set
        Those receivers that are floors.
    distribution : {"floor", "area"} or mapping
        ``solar_distribution`` of :func:`add_room`.
    """
    if isinstance(distribution, Mapping):
        return mapped_solar_shares(rec, receivers, distribution)
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


def mapped_solar_shares(rec: Room, receivers, distribution: Mapping) -> dict:
    """Node -> share of the transmitted solar from element name / ``"air"`` -> share.

    Parameters
    ----------
    rec : Room
    receivers : dict
        Inside opaque surface node -> area [m²].
    distribution : mapping of str to float
        Element name or ``"air"`` -> share [-], summing to 1 (within 1e-9).
    """
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


