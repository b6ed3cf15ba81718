"""The demo study: will a sunny top-floor living room overheat, why, and what fixes it?

Everything here is **INVENTED** for the demo: the town of Fernhollow, its sample weather
(:mod:`thermonet.scenarios.sample_weather`), the building, the occupants and the rough cost
notes. Use the scenario to learn the workflow, never as a check value or a design.

The building (invented)
-----------------------
*No. 9 Millrace Terrace, Fernhollow* is a four-storey block of flats. Its top floor was added
later as a light timber-frame storey under a timber roof. The study looks at the **living
room of the top-floor flat** (28 m² floor, 2.6 m clear height):

=================== =====================================================================
element             description (layers inside → outside, see the constants below)
=================== =====================================================================
west wall           15.6 m² timber frame (:data:`EXTERNAL_WALL`) with a large glazed door
                    and window, 6.0 m² (U_w 1.1 W/(m²K), g 0.60) facing the river
south wall          13.0 m² timber frame with a 3.0 m² window (same glazing)
roof                28 m² flat timber roof (:data:`ROOF`), the room's ceiling
floor               28 m² concrete floor (:data:`FLOOR`) above the flat below
to the stair        13.0 m² stud partition (:data:`PARTITION`) with a 2.0 m² door to the
                    unheated common stair (the buffer space)
to the flat         10.0 m² stud partition to the rest of the flat (hall, kitchen)
=================== =====================================================================

The **common stair** next to the room is an unheated buffer space (10 m² × 9 m high) with a
north wall (:data:`STAIR_WALL`) and a 2 m² window, a roof, masonry walls to the lower flats
and a floor over the cellar. Air passes between room and stair through the door gaps
(10 m³/h). The room's furniture adds 10 kJ/(m²K) of floor area to its air node.

Operation (invented, common practice, no source):

* heating by a thermostat on the room air: 20 °C from 1 October to 30 April; from May to
  September the heating is off (setpoint 5 °C, frost protection only), so the room runs free
  in summer and overheating shows; no cooling;
* background ventilation 30 m³/h (trickle vents and kitchen/bath extract, no heat recovery)
  and infiltration from n50 = 3 /h in room and stair (ISO 13789-style shielding estimate of
  :func:`thermonet.builders.infiltration_rate`);
* occupants open a window in the daytime (07:00–22:00) when the room air is above 25 °C
  and warmer than outdoors by 1 K (:data:`AIRING_WINDOW`: the flow follows the de Gids–Phaff
  correlation from the temperature difference and the wind, re-evaluated every step, about
  150 m³/h at 3 m/s and 3 K; path ``"window_ventilation"``), but not at night (security,
  noise, rain);
* internal gains of two occupants, lighting 3 W/m² and appliances 4 W/m² with the dwelling
  profiles of :mod:`thermonet.gains`;
* the flat below, the rest of the flat and the lower flats next to the stair are held at
  max(20 °C, θrm + 4 K), θrm the running mean outdoor temperature of EN 16798-1 (an invented
  stand-in for neighbours that are heated in winter and warm up in summer); the cellar under
  the stair at 12 °C.

Design options (:data:`OPTIONS`)
--------------------------------
The baseline and five single changes, each a small clear change of :class:`Design`:
external blinds, night ventilation, added thermal mass, lower-g glazing and a smaller west
window. Each carries a plain-language description and a rough relative cost and hassle note
(1 = cheap and easy … 5 = costly and disruptive), **invented for the demo**.

What is reported (:func:`run_study`)
------------------------------------
Per option, from the operative temperature of the room (:func:`room_operative_temperature`,
the mean of air and area-weighted surface temperature, EN 16798-1 / ISO 52016-1 simplification,
see :func:`thermonet.comfort.operative_temperature`):

* hours above 25, 26 and 28 °C over all hours of the simulated period;
* EN 16798-1 adaptive comfort (category II) over the occupied hours, judged against an
  indicative 5 % of the occupied hours outside the category (:data:`CRITERION_SETS`);
* CIBSE TM52 (category II) and CIBSE TM59 (living room, natural ventilation) over the
  occupied hours 09:00–22:00 (the TM59 living-room occupancy, from memory, see
  :data:`thermonet.comfort.TM59_DEFAULT_OCCUPANCY`);
* heating demand [kWh], [kWh/m²] and peak heating power [W], [W/m²];
* the very-low-energy criteria (overheating frequency above 25 °C ≤ 10 %, heating demand
  ≤ 15 kWh/(m²a) or load ≤ 10 W/m²) as one more criterion set, marked as an indication: they
  are defined for a whole building with its own design-load method, not for one room;
* the energy balance of the room (all its nodes: air, radiant star and its own elements) by
  heat path, over the year and over June–August, and how each path moved against the
  baseline (:func:`room_balance`).

References
----------
EN 16798-1:2019 (adaptive comfort, running mean outdoor temperature); CIBSE TM52 (2013);
CIBSE TM59 (2017); very-low-energy (Passive House) criteria — see docs/references.md §5 and
§12 and the docstrings of :mod:`thermonet.comfort` for clauses and the confidence of each
value.
"""

from __future__ import annotations

import math
import sys
import time
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field, fields, replace
from pathlib import Path

import numpy as np
import pandas as pd

import thermonet as tn
from thermonet import comfort
from thermonet import gains as tg
from thermonet import weather as tw
from thermonet.builders import (
    Door,
    Element,
    Room,
    Window,
    add_buffer,
    add_buffer_exchange,
    add_infiltration,
    add_room,
    add_ventilation,
    add_window_opening,
    night_ventilation,
)
from thermonet.constructions import Construction
from thermonet.errors import NetworkError, WeatherError
from thermonet.labels import label, unit_of
from thermonet.network import Network
from thermonet.scenarios.criteria import CRITERION_SETS
from thermonet.scenarios.fernhollow import BUILDING
from thermonet.scenarios.sample_weather import load_sample_weather
from thermonet.solar import MovableShading

__all__ = [
    "ADDED_MASS_LINING",
    "BASELINE",
    "BUILDING",
    "EXTERNAL_WALL",
    "FLOOR",
    "OCCUPIED_HOURS",
    "OPTIONS",
    "PARTITION",
    "PATH_ORDER",
    "ROOF",
    "STAIR_WALL",
    "SUMMER_MONTHS",
    "Design",
    "Option",
    "SunnyRoom",
    "SunnyRoomStudy",
    "CRITERION_SETS",
    "EN16798_INDICATIVE_SHARE_PCT",
    "build_sunny_room",
    "inputs_table",
    "prepare_weather",
    "room_balance",
    "room_operative_temperature",
    "run_demo",
    "run_study",
]


#: Months of the summer balance (June, July, August).
SUMMER_MONTHS = (6, 7, 8)

#: Occupied clock-time window of the living room for the adaptive, TM52 and TM59 criteria
#: (TM59 living rooms, 09:00–22:00, from memory: see comfort.TM59_DEFAULT_OCCUPANCY).
OCCUPIED_HOURS = ("09:00", "22:00")

#: Order of the heat paths in the report tables (paths absent from a balance are 0 kWh).
PATH_ORDER = ("solar", "internal", "heating", "opaque", "glazing", "adjacent", "buffer",
              "infiltration", "ventilation", "window_ventilation", "night_ventilation",
              "cooling", "storage", "residual")

# ------------------------------------------------------------------------- constructions
# Layers from the inside to the outside; materials of thermonet.constructions (ISO 10456
# values and typical declared values, see there). Thicknesses invented for the demo.

#: Light timber-frame outer wall: plasterboard, insulation between studs (taken as a
#: homogeneous layer), timber cladding. U ≈ 0.16 W/(m²K).
EXTERNAL_WALL = Construction("timber-frame wall", [("gypsum_plasterboard_700", 0.0125),
                                                   ("mineral_wool", 0.20), ("softwood", 0.02)])
#: Flat timber roof: plasterboard ceiling, insulation, timber deck. U ≈ 0.14 W/(m²K).
ROOF = Construction("timber roof", [("gypsum_plasterboard_700", 0.0125),
                                    ("mineral_wool", 0.24), ("softwood", 0.024)])
#: Stud partition: plasterboard, mineral wool, plasterboard.
PARTITION = Construction("stud partition", [("gypsum_plasterboard_700", 0.0125),
                                            ("mineral_wool", 0.075),
                                            ("gypsum_plasterboard_700", 0.0125)])
#: Floor over the flat below, from this room: timber boards, 50 mm screed, 30 mm impact
#: sound insulation, 180 mm concrete slab.
FLOOR = Construction("floor over flat", [("softwood", 0.02), ("concrete_2000", 0.05),
                                         ("mineral_wool", 0.03), ("concrete_2200", 0.18)])
#: Masonry wall of the stair: plaster, 240 mm clay brick, 100 mm external insulation.
STAIR_WALL = Construction("stair wall", [("gypsum_plaster_1300", 0.015), ("brick_clay", 0.24),
                                         ("mineral_wool", 0.10)])
#: The added-mass option: a 40 mm dense plaster lining (1300 kg/m³, e.g. two layers of clay or
#: gypsum boards) on the room side of the walls, roof and partitions, +52 kJ/(m²K) each.
ADDED_MASS_LINING = ("gypsum_plaster_1300", 0.04)


def _lined(construction: Construction) -> Construction:
    """The construction with :data:`ADDED_MASS_LINING` on its inside face."""
    return Construction(f"{construction.name} + dense lining",
                        [ADDED_MASS_LINING, *construction.layers])


# ------------------------------------------------------------------------------ design
#: The window the occupants open for airing: a casement of the west glazing, single-sided
#: ventilation by the de Gids–Phaff correlation (:func:`thermonet.airflow.
#: single_sided_de_gids_phaff`) from the room and outdoor air temperatures and the wind
#: speed, re-evaluated every step. Opening 0.5 m², 1.2 m high (invented); about 150 m³/h
#: with 3 m/s wind and 3 K.
AIRING_WINDOW = {"law": "de_gids_phaff", "area": 0.5, "height": 1.2}

#: The secure night opening (a motorised roof light with a rain sensor), single-sided by the
#: de Gids–Phaff correlation: 1.0 m² open, 0.8 m high (invented); about 300 m³/h (≈ 4 air
#: changes per hour) with 2 m/s wind and 5 K.
NIGHT_OPENING = {"law": "de_gids_phaff", "area": 1.0, "height": 0.8}


@dataclass(frozen=True)
class Design:
    """The parameters the design options change (all other inputs are fixed).

    Parameters
    ----------
    external_blinds : bool, default False
        External venetian blinds on both windows, admitting 20 % of the transmitted solar
        gain when down (external blinds 0.15–0.25, common practice, no source); they go
        down when the room air exceeds 24 °C and up again below 22 °C.
    night_ventilation : bool, default False
        Secure night-time opening (:data:`NIGHT_OPENING`, a motorised roof light with a rain
        sensor; its flow follows the de Gids–Phaff correlation from the indoor–outdoor
        temperature difference and the wind) from 22:00 to 07:00 while the room air is above
        22 °C and warmer than outdoors by 2 K, outside the heating season only (path
        ``"night_ventilation"``).
    added_mass : bool, default False
        :data:`ADDED_MASS_LINING` on the walls, roof and partitions of the room.
    g_value : float, default 0.60
        Total solar energy transmittance of both windows [-] (0.60: double low-e glazing;
        solar-control glazing about 0.35; common practice, no source).
    west_glazing_area : float, default 6.0
        Area of the west glazed door and window [m²], frame included, 0 < A ≤ 12 m².
    """

    external_blinds: bool = False
    night_ventilation: bool = False
    added_mass: bool = False
    g_value: float = 0.60
    west_glazing_area: float = 6.0

    def __post_init__(self):
        for name in ("external_blinds", "night_ventilation", "added_mass"):
            if not isinstance(getattr(self, name), bool):
                raise TypeError(f"Design.{name} must be True or False, got "
                                f"{getattr(self, name)!r}")
        g = float(self.g_value)
        if not (math.isfinite(g) and 0.0 < g <= 1.0):
            raise NetworkError(f"Design.g_value must lie in (0, 1] [-], got {self.g_value!r}")
        a = float(self.west_glazing_area)
        if not (math.isfinite(a) and 0.0 < a <= 12.0):
            raise NetworkError(f"Design.west_glazing_area must lie in (0, 12] m² (the west "
                               f"wall is 15.6 m²), got {self.west_glazing_area!r}")


#: The baseline design.
BASELINE = Design()


@dataclass(frozen=True)
class Option:
    """One design option of the study.

    Attributes
    ----------
    key : str
        Short name (index of the report tables).
    label : str
        Plain-language name.
    description : str
        What changes, in plain language.
    change : dict
        The :class:`Design` fields changed from :data:`BASELINE`.
    cost_rank : int
        Rough relative cost and hassle, 1 (cheap, easy) … 5 (costly, disruptive); 0 for the
        baseline. INVENTED for the demo.
    cost_note : str
        What the rank stands for. INVENTED for the demo.
    """

    key: str
    label: str
    description: str
    change: Mapping = field(default_factory=dict)
    cost_rank: int = 0
    cost_note: str = ""

    @property
    def design(self) -> Design:
        """:data:`BASELINE` with :attr:`change` applied."""
        return replace(BASELINE, **dict(self.change))


#: Baseline and the five options, in report order. Cost ranks and notes are INVENTED.
OPTIONS: dict[str, Option] = {o.key: o for o in (
    Option("baseline", "Baseline",
           "As designed: large west and south glazing (g 0.60), light timber-frame storey, "
           "windows opened only in the daytime.",
           {}, 0, "reference"),
    Option("external_blinds", "External blinds",
           "External venetian blinds on both windows; down when the room air exceeds 24 °C "
           "(20 % of the solar gain still enters), up below 22 °C.",
           {"external_blinds": True}, 3,
           "medium cost; façade fixings, motors and a wind sensor; little daily hassle"),
    Option("night_ventilation", "Night ventilation",
           "A secure opening (motorised roof light with rain sensor, 1 m² open) that "
           "ventilates at night when the room is warm, May to September; its flow follows "
           "wind and the indoor–outdoor temperature difference (about 4 air changes per hour "
           "at 2 m/s and 5 K).",
           {"night_ventilation": True}, 2,
           "low cost; an actuator and a control; some noise and insects"),
    Option("added_mass", "Added thermal mass",
           "40 mm dense plaster lining (e.g. clay boards) on the walls, roof and "
           "partitions of the room.",
           {"added_mass": True}, 4,
           "medium cost but disruptive; wet trade, redecoration, extra load on the floor"),
    Option("lower_g_glazing", "Lower-g glazing",
           "Solar-control glazing with g 0.35 instead of 0.60 (same U-value).",
           {"g_value": 0.35}, 3,
           "medium cost (new glazing units); less winter solar gain, slightly tinted view"),
    Option("smaller_window", "Smaller west window",
           "West glazing reduced from 6.0 m² to 3.5 m²; the wall is filled in.",
           {"west_glazing_area": 3.5}, 5,
           "costly and disruptive; façade change, less daylight and view"),
)}


# ----------------------------------------------------------------------------- weather
def prepare_weather(weather: pd.DataFrame | None = None, hours: int | None = None
                    ) -> pd.DataFrame:
    """The weather of the study: sample year (or ``weather``), sky temperature, period.

    Parameters
    ----------
    weather : pandas.DataFrame, optional
        A validated thermonet weather frame (tz-aware hourly index, ``temp_air``, ``ghi``,
        ``dni``, ``dhi`` and the site in ``attrs["site"]``); default the INVENTED Fernhollow
        year, :func:`thermonet.scenarios.sample_weather.load_sample_weather`.
    hours : int, optional
        Keep only the first ``hours`` rows [h], rounded UP to whole days (the comfort
        criteria work on whole days); at least 48 h. Default: all rows.

    Returns
    -------
    pandas.DataFrame
        Copy with ``temp_sky`` [°C] (Berdahl–Martin, :func:`thermonet.weather.
        add_sky_temperature`) when it was missing; ``attrs`` kept.

    Raises
    ------
    ValueError
        ``hours`` not a whole number ≥ 48 or longer than the weather.
    WeatherError
        Missing ``temp_air`` (or the dew point the sky model needs).
    """
    w = load_sample_weather() if weather is None else weather
    if not isinstance(w, pd.DataFrame):
        raise TypeError(f"weather must be a pandas DataFrame, got {type(w).__name__}")
    if hours is not None:
        if isinstance(hours, bool) or not isinstance(hours, (int, np.integer)):
            raise TypeError(f"hours must be a whole number of hours, got {hours!r}")
        if hours < 48:
            raise ValueError(f"hours must be at least 48 (two days) for the comfort criteria, "
                             f"got {hours}; omit it to simulate the whole year")
        n = int(math.ceil(int(hours) / 24.0)) * 24
        if n > len(w):
            raise ValueError(f"hours={hours} (rounded up to {n} h, whole days) exceeds the "
                             f"{len(w)} rows of the weather; give at most {len(w)}")
        attrs = dict(w.attrs)
        w = w.iloc[:n].copy()
        w.attrs = attrs
    if "temp_sky" not in w.columns:
        w = tw.add_sky_temperature(w)
    return w


def _running_mean_on_index(temp_air: pd.Series) -> pd.Series:
    """θrm of EN 16798-1 [°C] on the hourly index (periodic for a full year)."""
    full_year = len(temp_air) in (8760, 8784)
    trm = comfort.running_mean_outdoor(temp_air, init="periodic" if full_year else "first_day",
                                       partial_days="allow")
    return comfort.daily_to_index(trm, temp_air.index)


def _init(index: pd.DatetimeIndex) -> str:
    return "periodic" if len(index) in (8760, 8784) else "first_day"


# --------------------------------------------------------------------------------- model
@dataclass
class SunnyRoom:
    """What :func:`build_sunny_room` made: the zones and the names needed to read results.

    Attributes
    ----------
    design : Design
    room : thermonet.builders.Room
        The living room (heated zone); ``room.nodes`` is its control volume.
    stair : thermonet.builders.Room
        The unheated common stair (buffer space).
    floor_area : float
        Floor area of the room [m²].
    thermostat : str
        Name of the room's thermostat.
    heating_setpoint : pandas.Series
        Heating setpoint [°C] per step.
    neighbour_temperature : pandas.Series
        Temperature of the neighbouring flats [°C] per step.
    window_solar_sources, opaque_solar_sources : list of str
        Sources of the room: solar transmitted by the windows, and solar absorbed on the
        outer faces of its opaque elements.
    """

    design: Design
    room: Room
    stair: Room
    floor_area: float
    thermostat: str
    heating_setpoint: pd.Series
    neighbour_temperature: pd.Series
    window_solar_sources: list = field(default_factory=list)
    opaque_solar_sources: list = field(default_factory=list)


def build_sunny_room(weather: pd.DataFrame, design: Design | None = None, **changes
                     ) -> tuple[Network, SunnyRoom]:
    """Build the network of the invented sunny room, its stair and neighbours.

    Parameters
    ----------
    weather : pandas.DataFrame
        Weather of the simulation, with ``temp_sky`` (see :func:`prepare_weather`); the
        network's solar sources and schedules are built on its index.
    design : Design, optional
        Default :data:`BASELINE`.
    **changes
        Fields of :class:`Design` to change, e.g. ``g_value=0.35``.

    Returns
    -------
    net : thermonet.Network
    handles : SunnyRoom

    Raises
    ------
    WeatherError
        ``temp_sky`` or ``temp_air`` missing.
    TypeError, NetworkError
        Unknown or invalid design fields.

    Examples
    --------
    >>> w = prepare_weather(hours=48)                                     # doctest: +SKIP
    >>> net, h = build_sunny_room(w, external_blinds=True)                # doctest: +SKIP
    >>> res = tn.simulate(net, w)                                         # doctest: +SKIP
    """
    d = BASELINE if design is None else design
    if not isinstance(d, Design):
        raise TypeError(f"design must be a Design, got {type(d).__name__}")
    if changes:
        known = {f.name for f in fields(Design)}
        bad = sorted(set(changes) - known)
        if bad:
            raise TypeError(f"unknown design field(s) {bad}; known: {sorted(known)}")
        d = replace(d, **changes)
    for col in ("temp_air", "temp_sky"):
        if col not in weather.columns:
            raise WeatherError(f"the weather has no column {col!r}; pass it through "
                               "thermonet.scenarios.sunny_room.prepare_weather(weather) first")
    index = weather.index
    neighbours = np.maximum(20.0, _running_mean_on_index(weather["temp_air"]) + 4.0)
    neighbours = pd.Series(np.asarray(neighbours, dtype=float), index=index)
    mid = comfort.interval_midpoints(index)  # a step belongs to the month of its mid-point
    heating_season = pd.Series(~np.isin(np.asarray(mid.month), (5, 6, 7, 8, 9)), index=index)
    setpoint = pd.Series(np.where(heating_season, 20.0, 5.0), index=index)

    lining = _lined if d.added_mass else (lambda c: c)
    net = tn.Network("sunny top-floor living room, Fernhollow (invented)")
    net.add_boundary("neighbours", temperature=neighbours)
    net.add_boundary("cellar", temperature=12.0)

    stair = add_buffer(net, "stair", floor_area=10.0, height=9.0, weather=weather, elements=[
        Element("north", STAIR_WALL, 27.0, 90, 0,
                windows=[Window("stair_window", 2.0, 1.3, 0.6)]),
        Element("roof", ROOF, 10.0, 0, 180),
        Element("to_flats", STAIR_WALL, 30.0, 90, 90, boundary="neighbours"),
        Element("floor", FLOOR, 10.0, 180, 0, boundary="cellar"),
    ])
    blind = (MovableShading(0.2, "temperature", on_above=24.0, off_below=22.0, node="living")
             if d.external_blinds else None)
    glazing = dict(u_value=1.1, g_value=float(d.g_value), shading=blind)
    room = add_room(net, "living", floor_area=28.0, height=2.6, weather=weather,
                    furniture_capacity=28.0 * 10e3,  # 10 kJ/(m²K) of furniture (invented)
                    elements=[
        Element("west", lining(EXTERNAL_WALL), 15.6, 90, 270,
                windows=[Window("west_glazing", float(d.west_glazing_area), **glazing)]),
        Element("south", lining(EXTERNAL_WALL), 13.0, 90, 180,
                windows=[Window("south_glazing", 3.0, **glazing)]),
        Element("roof", lining(ROOF), 28.0, 0, 180),
        Element("floor", FLOOR, 28.0, 180, 0, boundary="neighbours"),
        Element("to_stair", lining(PARTITION), 13.0, 90, 90, boundary=stair,
                windows=[Door("stair_door", 2.0, 1.8)]),
        Element("to_flat", lining(PARTITION), 10.0, 90, 0, boundary="neighbours"),
    ])
    add_infiltration(net, room, n50=3.0)
    add_infiltration(net, stair, n50=3.0)
    add_ventilation(net, room, flow_m3h=30.0)
    add_buffer_exchange(net, room, stair, flow_m3h=10.0)
    tg.add_internal_gains(net, room, [tg.occupants(2), tg.lighting(3.0), tg.appliances(4.0)],
                          index)
    daytime_airing = (tn.above(room.air, 25.0) & tn.warmer(room.air, room.outdoor, 1.0)
                      & tn.hours(7, 22))
    add_window_opening(net, room, open_when=daytime_airing, name="living:daytime_airing",
                       **AIRING_WINDOW)
    if d.night_ventilation:
        add_window_opening(net, room, path="night_ventilation", **NIGHT_OPENING,
                           name="living:night_ventilation",
                           open_when=night_ventilation(room.air, room.outdoor, indoor_above=22.0,
                                                       warmer_by=2.0, start=22, end=7)
                           & tn.when(~heating_season))
    thermostat = net.add_thermostat(room.air, heating_setpoint=setpoint)
    absorbed = [s for s in room.sources if s.endswith(":solar_absorbed")]
    through = [s for s in room.sources if net.sources[s].path == "solar"]
    return net, SunnyRoom(d, room, stair, room.floor_area, thermostat, setpoint, neighbours,
                          through, absorbed)


# ----------------------------------------------------------------------- reading results
def room_operative_temperature(res: tn.Results, handles: SunnyRoom) -> pd.Series:
    """Operative temperature of the room [°C], step means.

    :func:`thermonet.comfort.room_operative_temperature` of ``handles.room``: θop =
    (θair + θmr)/2 with θmr the area-weighted mean of the room's inside surface temperatures
    (walls, roof, floor, partitions, windows and door).

    Parameters
    ----------
    res : thermonet.Results
        The simulation of the network of :func:`build_sunny_room`.
    handles : SunnyRoom
        What :func:`build_sunny_room` returned with it.

    Returns
    -------
    pandas.Series
        θop [°C], named ``"operative"``.
    """
    return comfort.room_operative_temperature(res, handles.room)


def room_balance(res: tn.Results, handles: SunnyRoom, freq: str | None = None) -> pd.DataFrame:
    """Energy balance of the room [kWh] by heat path, positive into the room.

    The control volume is ``handles.room.nodes`` (air, radiant star and the room's own
    elements): this is :meth:`thermonet.Results.balance` with the columns in
    :data:`PATH_ORDER`. The builders book the sun absorbed on the outer faces of the walls
    and roof under ``"opaque"`` (the net heat the opaque envelope exchanges with outdoor air,
    sky and sun), so ``"solar"`` is the gain transmitted by the windows — a balance you
    compute yourself with ``res.balance(room.nodes)`` shows the same numbers.

    Parameters
    ----------
    res : thermonet.Results
        The simulation of the network of :func:`build_sunny_room`.
    handles : SunnyRoom
        What :func:`build_sunny_room` returned with it.
    freq : str, optional
        None: one row per step; a pandas offset alias (``"MS"``, ``"D"``) sums per period,
        each step counted in the period of its interval mid-point.

    Returns
    -------
    pandas.DataFrame
        Columns in :data:`PATH_ORDER` (those present), [kWh].
    """
    b = res.balance(handles.room.nodes, freq=freq)
    order = [p for p in PATH_ORDER if p in b.columns]
    b = b[order + [c for c in b.columns if c not in order]]
    b.attrs["unit"] = "kWh"
    return b


def _window_rows(link, room) -> list[dict]:
    """Rows of the inputs table for a window link (its law and opening)."""
    from thermonet.airflow import FLOW_LAW_NAMES, law_flow

    words = label(link.path, unit=False)
    p = link.params
    note = (f"flow {FLOW_LAW_NAMES[p['law']]}, from ΔT and wind, re-evaluated every step; "
            "when open (switched by a condition)")
    rows = [dict(group="airflow", item=f"{words} ({link.name}): opening area",
                 value=float(p["law_params"].get("area", np.nan)), unit="m²", note=note),
            dict(group="airflow", item=f"{words}: opening height",
                 value=float(p["law_params"].get("height", np.nan)), unit="m", note="")]
    for dt, wind in ((3.0, 3.0), (5.0, 1.0)):
        flow = 3600.0 * law_flow(np.asarray(p["coefficients"]), 20.0 + dt, 20.0, wind)
        rows.append(dict(group="airflow", item=f"{words}: flow at ΔT {dt:g} K, wind "
                         f"{wind:g} m/s", value=flow, unit="m³/h",
                         note=f"{flow / room.volume:.1f} air changes per hour"))
    return rows


def inputs_table(net: Network, handles: SunnyRoom) -> pd.DataFrame:
    """The inputs and assumptions of one built design, as a tidy table for the report.

    Parameters
    ----------
    net : thermonet.Network
        The network of :func:`build_sunny_room`.
    handles : SunnyRoom
        What :func:`build_sunny_room` returned with it.

    Returns
    -------
    pandas.DataFrame
        Columns ``group``, ``item``, ``value``, ``unit``, ``note``: the room's size, each
        element and window (area [m²], U-value [W/(m²K)], g-value [-]), each airflow
        (flow [m³/h] and air changes [1/h]), the mean internal gains [W/m²], the heating
        setpoints and the neighbours' temperature rule.
    """
    room, d = handles.room, handles.design
    rows = [dict(group="room", item="floor area", value=room.floor_area, unit="m²", note=""),
            dict(group="room", item="clear height", value=room.height, unit="m", note=""),
            dict(group="room", item="air volume", value=room.volume, unit="m³", note="")]
    windows = {"west_glazing", "south_glazing", "stair_door"}
    for name, area in room.areas.items():
        u = room.u_values.get(name, np.nan)
        kind = "window" if name in windows else "element"
        note = (f"g {float(d.g_value):.2f}" + (", external blinds" if d.external_blinds else "")
                if name.endswith("_glazing") else "")
        rows.append(dict(group=kind, item=f"{name}: area", value=area, unit="m²", note=note))
        rows.append(dict(group=kind, item=f"{name}: U-value", value=u, unit="W/(m²K)",
                         note="U_w, air to air" if kind == "window" else
                         "ISO 6946, from the layers"))
    for name in room.links:
        link = net.links[name]
        if link.kind == "window":
            rows += _window_rows(link, room)
            continue
        if link.kind != "airflow":
            continue
        flow = link.params.get("flow_m3h")
        if isinstance(flow, pd.Series):
            note, flow = "scheduled; largest value", float(flow.max())
        else:
            switched = any(sw.startswith(f"{name}:") for sw in room.switches)
            note = "when open (switched by a condition)" if switched else "always"
        words = label(link.path, unit=False)
        rows.append(dict(group="airflow", item=f"{words} ({name})", value=float(flow),
                         unit="m³/h", note=note))
        rows.append(dict(group="airflow", item=f"{words}: air changes",
                         value=float(flow) / room.volume, unit="1/h", note=note))
    gains: dict[str, float] = {}
    for n in room.sources:
        if net.sources[n].path == "internal":
            p = net.sources[n].power
            key = n.rsplit(":", 1)[0] if n.endswith(("convective", "radiative")) else n
            gains[key] = gains.get(key, 0.0) + (float(p.mean()) if isinstance(p, pd.Series)
                                                else float(p))
    for n, mean in gains.items():
        rows.append(dict(group="internal gains", item=n, value=mean / room.floor_area,
                         unit="W/m²", note="mean over the period, convective + radiative "
                         "(daily profiles of thermonet.gains)"))
    rows += [dict(group="schedule", item="heating setpoint, October–April", value=20.0,
                  unit="°C", note="thermostat on the room air, no cooling"),
             dict(group="schedule", item="heating setpoint, May–September", value=5.0,
                  unit="°C", note="frost protection only: the room runs free"),
             dict(group="schedule", item="occupied hours (comfort criteria)",
                  value=np.nan, unit="", note=f"{OCCUPIED_HOURS[0]}–{OCCUPIED_HOURS[1]}"),
             dict(group="boundary", item="neighbouring flats", value=np.nan, unit="°C",
                  note="max(20 °C, running mean outdoor + 4 K) (invented)"),
             dict(group="boundary", item="cellar under the stair", value=12.0, unit="°C",
                  note="constant (invented)")]
    return pd.DataFrame(rows)


def _period_sum(b: pd.DataFrame, months: Sequence[int] | None, step_h: float) -> pd.Series:
    """Sum of a per-step balance over the steps whose mid-point falls in ``months``."""
    if months is None:
        return b.sum()
    mid = b.index - pd.Timedelta(hours=step_h / 2.0)
    return b[np.isin(np.asarray(mid.month), months)].sum()


def _daily_swing(temp: pd.Series, months: Sequence[int]) -> float:
    """Mean daily range (max − min) [K] of ``temp`` over the days of ``months``.

    Days are those of the interval mid-points; NaN when the series has no row in ``months``.
    """
    mid = comfort.interval_midpoints(temp.index)
    keep = np.isin(np.asarray(mid.month), months)
    if not keep.any():
        return float("nan")
    g = temp[keep].groupby(np.asarray(mid[keep].normalize()))
    return float((g.max() - g.min()).mean())


# ------------------------------------------------------------------------------- study
@dataclass
class SunnyRoomStudy:
    """Results of :func:`run_study` (tidy pandas tables; energies [kWh]).

    Attributes
    ----------
    options : dict of str to Option
        The options run, in order.
    summary : pandas.DataFrame
        One row per option (index: option key): the metrics named with their unit
        (``_h`` hours, ``_pct`` percent, ``_kwh``, ``_kwh_m2``, ``_w``, ``_w_m2``, ``_c`` °C,
        ``_k`` K, ``_kelvin_hours`` K·h), verdicts (bool; missing where a criterion could not be
        assessed in the simulated period) and the invented cost rank.
    verdicts : pandas.DataFrame
        One row per option and criterion: criterion_set (a key of :data:`CRITERION_SETS`),
        criterion, value, limit, unit, passed, source.
    inputs : pandas.DataFrame
        Inputs and assumptions of the baseline (:func:`inputs_table`).
    balance_annual, balance_summer : pandas.DataFrame
        Room balance by path per option [kWh] over the simulated period and over its
        June–August steps (:func:`room_balance`); a path absent from an option is 0 kWh.
    balance_monthly : pandas.DataFrame
        Monthly room balance of the baseline [kWh].
    path_changes : pandas.DataFrame
        One row per option, period (``"annual"``, ``"summer"``) and path: baseline, option
        and change [kWh] (option − baseline).
    operative : pandas.DataFrame
        Hourly operative temperature of the room per option [°C].
    heating : pandas.DataFrame
        Hourly heating power per option [W].
    weather : pandas.DataFrame
        The weather simulated.
    occupied : pandas.Series
        Occupied rows (bool) of the adaptive, TM52 and TM59 criteria.
    seconds : dict
        Wall time per option [s] (build + simulate + metrics).
    """

    options: dict
    summary: pd.DataFrame
    verdicts: pd.DataFrame
    balance_annual: pd.DataFrame
    balance_summer: pd.DataFrame
    balance_monthly: pd.DataFrame
    path_changes: pd.DataFrame
    operative: pd.DataFrame
    heating: pd.DataFrame
    weather: pd.DataFrame
    occupied: pd.Series
    seconds: dict
    inputs: pd.DataFrame = field(default_factory=pd.DataFrame)

    @property
    def full_year(self) -> bool:
        """True when a whole year was simulated (annual verdicts apply)."""
        return len(self.weather) in (8760, 8784)

    def main_changes(self, period: str = "summer", n: int = 2) -> pd.DataFrame:
        """The ``n`` paths that moved most against the baseline, per option.

        Parameters
        ----------
        period : {"summer", "annual"}
        n : int, default 2

        Returns
        -------
        pandas.DataFrame
            Rows of :attr:`path_changes` (storage and residual excluded), largest absolute
            change first within each option; the baseline is left out.
        """
        if period not in ("summer", "annual"):
            raise ValueError(f"period must be 'summer' or 'annual', got {period!r}")
        pc = self.path_changes
        pc = pc[(pc["period"] == period) & (pc["option"] != "baseline")
                & ~pc["path"].isin(["storage", "residual"])]
        pc = pc.assign(_abs=pc["change_kwh"].abs())
        out = (pc.sort_values(["option", "_abs"], ascending=[True, False], kind="stable")
               .groupby("option", sort=False).head(n).drop(columns="_abs"))
        order = {k: i for i, k in enumerate(self.options)}
        return out.sort_values("option", key=lambda s: s.map(order), kind="stable"
                               ).reset_index(drop=True)



#: Indicative pass mark of the EN 16798-1 adaptive assessment: share of the occupied hours
#: (with an applicable limit) outside category II [%]. From memory (EN 15251:2007 Annex G,
#: CEN/TR 16798-2); see docs/references.md.
EN16798_INDICATIVE_SHARE_PCT = 5.0


def _criterion_rows(key: str, results, criterion_set: str) -> list[dict]:
    return [dict(option=key, criterion_set=criterion_set, criterion=c.name, value=c.value,
                 limit=c.limit, unit=c.unit, passed=c.passed, source=c.source)
            for c in results]


def _en16798_rows(key: str, row: dict, t2: pd.Series) -> list[dict]:
    """The EN 16798-1 category II verdict (indicative 5 % pass mark) and its metrics."""
    assessed = float(t2["occupied_hours"] - t2["hours_no_limit_applicable"])
    outside = float(t2["hours_above_upper"] + t2["hours_below_lower"])
    upper_ok = float(t2["occupied_hours"] - t2["hours_upper_not_applicable"])
    row["adaptive_ii_share_above_pct"] = (100.0 * float(t2["hours_above_upper"]) / upper_ok
                                          if upper_ok > 0 else np.nan)
    source = ("EN 16798-1:2019 adaptive limits; 5 % indicative pass mark from EN 15251:2007 "
              "Annex G / CEN/TR 16798-2 (from memory), docs/references.md")
    if assessed <= 0:
        return [dict(option=key, criterion_set="en16798", criterion="share of occupied hours "
                     "outside category II", value=np.nan, limit=EN16798_INDICATIVE_SHARE_PCT,
                     unit="%", passed=pd.NA,
                     source="not assessed: no occupied hour of the period has a running mean "
                            "outdoor temperature in the range where a limit applies "
                            "(upper 10–30 °C, lower 15–30 °C); " + source)]
    share = 100.0 * outside / assessed
    return [dict(option=key, criterion_set="en16798", criterion="share of occupied hours "
                 "outside category II", value=share, limit=EN16798_INDICATIVE_SHARE_PCT,
                 unit="%", passed=bool(share <= EN16798_INDICATIVE_SHARE_PCT + 1e-9),
                 source=source)]


def _assess(key: str, res: tn.Results, h: SunnyRoom, weather: pd.DataFrame,
            occupied: pd.Series) -> tuple[dict, list[dict], pd.Series]:
    """Metrics and verdicts of one simulated option."""
    top = room_operative_temperature(res, h)
    outdoor = weather["temp_air"]
    init = _init(top.index)
    row: dict = {}
    for th in (25, 26, 28):
        row[f"hours_above_{th}_h"] = comfort.hours_above(top, float(th))
    row["max_operative_c"] = float(top.max())
    full_year = len(top) in (8760, 8784)
    freq = comfort.very_low_energy_overheating(top)
    row["overheating_freq_25_pct"] = 100.0 * freq.value
    # the 10 % limit is judged on a whole year; a shorter run only reports the share
    row["overheating_freq_ok"] = freq.passed if full_year else pd.NA
    vle = _criterion_rows(key, [freq], "very_low_energy")
    vle[0]["source"] = ("Passive House criteria (overheating frequency), docs/references.md; "
                        "applied to this room's operative temperature")
    if not full_year:
        vle[0].update(passed=pd.NA, source=vle[0]["source"] + "; not judged: the limit "
                      "applies to a whole year, the run is shorter")
    ad = comfort.adaptive_assessment(top, outdoor, "II", occupied, init=init)
    t2 = ad.table.loc["II"]
    row["adaptive_ii_hours_above_h"] = float(t2["hours_above_upper"])
    row["adaptive_ii_degree_hours_above_kelvin_hours"] = float(t2["degree_hours_above_upper"])
    row["adaptive_ii_share_in_category_pct"] = 100.0 * float(t2["share_in_category"])
    verdicts = _en16798_rows(key, row, t2)
    row["adaptive_ii_ok"] = verdicts[0]["passed"]
    season = np.isin(np.asarray(comfort.interval_midpoints(top.index).month), (5, 6, 7, 8, 9))
    if (season & occupied.to_numpy()).any():
        r52 = comfort.tm52(top, outdoor, occupied, "II", init=init)
        row["tm52_c1_exceedance_pct"] = r52.criteria[0].value
        row["tm52_c2_worst_we_kelvin_hours"] = r52.criteria[1].value
        row["tm52_c3_max_dt_k"] = r52.criteria[2].value
        row["tm52_failed_criteria"] = r52.n_failed
        row["tm52_ok"] = r52.passed
        verdicts += _criterion_rows(key, r52.criteria, "tm52")
        verdicts.append(dict(option=key, criterion_set="tm52", criterion="TM52 overall "
                             "(fails when 2 or more criteria fail)", value=float(r52.n_failed),
                             limit=1.0, unit="criteria failed", passed=r52.passed,
                             source="CIBSE TM52 (2013), docs/references.md §5.3"))
        r59 = comfort.tm59(top, outdoor, "living", occupied, "natural", init=init)
        row["tm59_a_pct"] = r59.criteria[0].value
        row["tm59_ok"] = r59.passed
        verdicts += _criterion_rows(key, r59.criteria, "tm59")
    else:
        for col in ("tm52_c1_exceedance_pct", "tm52_c2_worst_we_kelvin_hours",
                    "tm52_c3_max_dt_k",
                    "tm52_failed_criteria", "tm59_a_pct"):
            row[col] = np.nan
        row["tm52_ok"] = pd.NA
        row["tm59_ok"] = pd.NA
        for cset in ("tm52", "tm59"):
            verdicts.append(dict(option=key, criterion_set=cset, criterion="all criteria",
                                 value=np.nan, limit=np.nan, unit="", passed=pd.NA,
                                 source="not assessed: the simulated period has no occupied "
                                        "hour in May–September"))
    dem = comfort.demand_summary(res.heating, None, h.floor_area, very_low_energy=full_year)
    row["heating_kwh"] = dem.heating_kwh
    row["heating_kwh_m2"] = dem.heating_kwh_m2
    row["peak_heating_w"] = dem.heating_peak_w
    row["peak_heating_w_m2"] = dem.heating_peak_w_m2
    if dem.very_low_energy is not None:
        vle += _criterion_rows(key, dem.very_low_energy, "very_low_energy")
        for r in vle[1:]:
            r["source"] = ("Passive House criteria, docs/references.md; a whole-building "
                           "criterion, applied to this room (the load one as the simulated "
                           "hourly peak, not the scheme's design-load method)")
    verdicts += vle
    return row, verdicts, top


def run_study(weather: pd.DataFrame | None = None, *, options: Sequence[str] | None = None,
              hours: int | None = None, progress: bool | Callable[[str], None] = False
              ) -> SunnyRoomStudy:
    """Run the baseline and the design options and tabulate what moved.

    Parameters
    ----------
    weather : pandas.DataFrame, optional
        Default the INVENTED Fernhollow sample year (see :func:`prepare_weather`).
    options : sequence of str or Option, optional
        Keys of :data:`OPTIONS` or your own :class:`Option` objects (e.g. a combination,
        ``Option("mass_night", "Mass + night ventilation", "...", {"added_mass": True,
        "night_ventilation": True})``); default all of :data:`OPTIONS`. ``"baseline"`` is
        always run first (the changes are against it).
    hours : int, optional
        Simulate only the first ``hours`` [h] (rounded up to whole days, ≥ 48), for quick
        checks; annual verdicts are then left out and summer values are those of the
        simulated steps in June–August (none for a short winter run).
    progress : bool or callable, default False
        True prints one line per step on stderr; a callable receives each message.

    Returns
    -------
    SunnyRoomStudy

    Raises
    ------
    KeyError
        Unknown option key (the message lists the known ones).
    TypeError
        An option that is neither a key nor an :class:`Option`, or an unknown design field.
    ValueError, WeatherError
        See :func:`prepare_weather`.

    Notes
    -----
    Each option is built and simulated on its own (the options change the network's
    topology, e.g. the added lining adds nodes), with the 14-day warm-up of
    :func:`thermonet.simulate`.
    """
    say = _reporter(progress)
    chosen = _choose_options(options)
    keys = list(chosen)
    t0 = time.perf_counter()
    w = prepare_weather(weather, hours)
    occupied = comfort.in_time_window(w.index, *OCCUPIED_HOURS).rename("occupied")
    say(f"weather: {w.attrs.get('site', {}).get('name', 'user weather')}, {len(w)} h from "
        f"{w.index[0]} ({time.perf_counter() - t0:.1f} s)")
    step_h = pd.Timedelta(w.index[1] - w.index[0]) / pd.Timedelta(hours=1)
    rows, verdicts, annual, summer, tops, heat, seconds = {}, [], {}, {}, {}, {}, {}
    monthly = None
    base_inputs = pd.DataFrame()
    for i, key in enumerate(keys, 1):
        t1 = time.perf_counter()
        opt = chosen[key]
        say(f"[{i}/{len(keys)}] {opt.label}: building and simulating {len(w)} h ...")
        net, h = build_sunny_room(w, opt.design)
        res = tn.simulate(net, w)
        row, ver, top = _assess(key, res, h, w, occupied)
        b = room_balance(res, h)
        annual[key] = b.sum()
        summer[key] = _period_sum(b, SUMMER_MONTHS, step_h)
        row["solar_windows_summer_kwh"] = float(summer[key].get("solar", 0.0))
        row["solar_windows_annual_kwh"] = float(annual[key].get("solar", 0.0))
        row["daily_swing_summer_k"] = _daily_swing(top, SUMMER_MONTHS)
        row["cost_rank"] = opt.cost_rank
        if key == "baseline":
            monthly = room_balance(res, h, freq="MS")
            base_inputs = inputs_table(net, h)
        rows[key] = row
        verdicts += ver
        tops[key] = top
        heat[key] = res.heating
        seconds[key] = time.perf_counter() - t1
        say(f"      {row['hours_above_26_h']:.0f} h above 26 °C, heating "
            f"{row['heating_kwh']:.0f} kWh ({seconds[key]:.1f} s)")
    summary = pd.DataFrame.from_dict(rows, orient="index")
    summary.insert(0, "label", [chosen[k].label for k in keys])
    summary.index.name = "option"
    summary.attrs["units"] = {c: unit_of(c) for c in summary.columns if unit_of(c)}
    bal_a = _tidy_balance(annual, keys)
    bal_s = _tidy_balance(summer, keys)
    changes = []
    for period, tab in (("annual", bal_a), ("summer", bal_s)):
        base = tab.loc["baseline"]
        for key in keys:
            for path in tab.columns:
                changes.append(dict(option=key, period=period, path=path,
                                    baseline_kwh=float(base[path]),
                                    option_kwh=float(tab.loc[key, path]),
                                    change_kwh=float(tab.loc[key, path] - base[path])))
    say(f"study done in {time.perf_counter() - t0:.1f} s")
    return SunnyRoomStudy(
        options=chosen,
        summary=summary,
        verdicts=pd.DataFrame(verdicts),
        balance_annual=bal_a,
        balance_summer=bal_s,
        balance_monthly=monthly,
        path_changes=pd.DataFrame(changes),
        operative=pd.DataFrame(tops),
        heating=pd.DataFrame(heat),
        weather=w,
        occupied=occupied,
        seconds=seconds,
        inputs=base_inputs,
    )


def _choose_options(options) -> dict:
    """Option key -> Option, baseline first; keys of OPTIONS or Option objects."""
    chosen: dict[str, Option] = {"baseline": OPTIONS["baseline"]}
    for o in (OPTIONS.values() if options is None else options):
        if isinstance(o, str):
            if o not in OPTIONS:
                raise KeyError(f"unknown option {o!r}; known: {list(OPTIONS)} (or pass an "
                               "Option)")
            o = OPTIONS[o]
        if not isinstance(o, Option):
            raise TypeError(f"options must be keys of OPTIONS or Option objects, got "
                            f"{type(o).__name__}")
        if o.key in chosen and chosen[o.key] is not o and o.key != "baseline":
            raise ValueError(f"two options share the key {o.key!r}; give each a unique key")
        if o.key == "baseline" and o.change:
            raise ValueError("the key 'baseline' is kept for the unchanged design; give your "
                             "option another key")
        o.design  # noqa: B018  (validates the change against Design now)
        chosen[o.key] = o
    return chosen


def _tidy_balance(per_option: dict, keys: list) -> pd.DataFrame:
    tab = pd.DataFrame(per_option).T.reindex(keys)
    # a path an option does not have (e.g. night ventilation) carried no heat: 0 kWh
    tab = tab.fillna(0.0)
    order = [p for p in PATH_ORDER if p in tab.columns]
    tab = tab[order + [c for c in tab.columns if c not in order]]
    tab.index.name = "option"
    tab.attrs["unit"] = "kWh"
    return tab


def _reporter(progress) -> Callable[[str], None]:
    if callable(progress):
        return progress
    if progress:
        def say(msg: str) -> None:
            print(f"thermonet demo: {msg}", file=sys.stderr, flush=True)
        return say
    return lambda msg: None


# -------------------------------------------------------------------------------- demo
def run_demo(out: str | Path = "thermonet-report", progress: bool = True,
             hours: int | None = None) -> Path:
    """Run the study and write its report folder (the ``thermonet demo`` command).

    Parameters
    ----------
    out : str or pathlib.Path, default "thermonet-report"
        Report folder, created if missing; files of the same names are overwritten, other
        files are left alone.
    progress : bool, default True
        Progress messages on stderr.
    hours : int, optional
        Simulate only the first ``hours`` of the year (rounded up to whole days, ≥ 48).

    Returns
    -------
    pathlib.Path
        The report's ``index.html``.

    Raises
    ------
    NotADirectoryError
        ``out`` exists and is a file.
    ValueError
        ``hours`` below 48 or beyond the sample year.

    See Also
    --------
    thermonet.scenarios.report.write_report : the files written.
    """
    from thermonet.scenarios.report import check_folder, write_report

    say = _reporter(progress)
    check_folder(out)  # fail before the simulations, not after
    study = run_study(hours=hours, progress=say)
    index = write_report(study, out, progress=say)
    say(f"report written: {index}")
    return index
