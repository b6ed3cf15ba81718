"""Occupancy schedules and the window-opening rules practitioners model, as switch conditions.

Schedules are pandas Series of 0/1 on a weather (simulation) index, taken at the interval
mid-points like every clock rule of thermonet. The condition builders return
:class:`thermonet.controls.Condition` objects made of the existing terms (``above``,
``below``, ``warmer``, ``colder``, ``when``, ``hours``), so a switch uses them as it uses any
condition: ``net.add_switch(on=..., links={window: (0.0, 1.0)})`` or
:func:`add_opening_switch`.

Typical rule (the windows of an occupied room open when it is warm and warmer than
outdoors, and stay shut while outdoors is hotter, the wind is strong or it rains)::

    living = occupancy(weather.index, "living")
    rule = open_unless(airing(room, "outdoor", living, threshold=22.0),
                       outdoor_hotter(room, "outdoor"),
                       strong_wind(weather, 10.0))
    add_opening_switch(net, window_link, rule, fraction=0.5)

Conditions are evaluated at the start of each step from the node temperatures at the end of
the previous step and the current step's boundary values and signals
(:mod:`thermonet.controls`).
"""

from __future__ import annotations

import itertools

import numpy as np
import pandas as pd

from thermonet.comfort import TM59_DEFAULT_OCCUPANCY, in_time_window
from thermonet.controls import Condition, Term, above, hours, warmer, when
from thermonet.errors import NetworkError, ScheduleError
from thermonet.schedules import check_index

__all__ = [
    "TM59_NIGHT",
    "TM59_SLEEP",
    "add_opening_switch",
    "airing",
    "bedroom_night",
    "negate",
    "night",
    "occupancy",
    "occupied",
    "open_unless",
    "outdoor_hotter",
    "raining",
    "sleeping",
    "strong_wind",
]

#: Night window of the CIBSE TM59 (2017) bedroom criterion, 22:00–07:00 (local clock of the
#: interval mid-points; docs/references.md §5.4, confirmed in the literature quoted there).
TM59_NIGHT = ("22:00", "07:00")

#: Sleeping hours of the CIBSE TM59 (2017) bedroom occupancy profile, 23:00–08:00 (from memory).
TM59_SLEEP = ("23:00", "08:00")

#: Default opening threshold of the room temperature [°C]: TM59 asks that windows be modelled
#: to open when the room is above 22 °C and occupied (from memory).
TM59_OPENING_THRESHOLD = 22.0


# --------------------------------------------------------------------------------------------
# schedules (Series of 0/1 on an index)
# --------------------------------------------------------------------------------------------
def occupancy(index: pd.DatetimeIndex, room: str = "living", *, start=None, end=None
              ) -> pd.Series:
    """Occupancy of a room as 0/1 per interval, CIBSE TM59 profiles by default.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Weather / simulation index (tz-aware, regular, hour-ending labels).
    room : {"living", "kitchen", "bedroom"}, default "living"
        TM59 room type: living rooms and kitchens occupied 09:00–22:00, bedrooms all day
        (:data:`thermonet.comfort.TM59_DEFAULT_OCCUPANCY`, from memory). Ignored when
        ``start`` and ``end`` are given.
    start, end : str or float, optional
        A daily clock window of your own (``"08:00"``, ``"18:30"`` or hours [h]); it wraps
        over midnight when start > end.

    Returns
    -------
    pandas.Series
        1.0 where the interval mid-point lies in the occupied window, else 0.0; name
        ``"occupied <room>"``.

    References
    ----------
    CIBSE TM59 (2017), Design methodology for the assessment of overheating risk in homes,
    occupancy profiles — from memory; verify against TM59 for an assessment.
    """
    if (start is None) != (end is None):
        raise ScheduleError(f"occupancy of {room!r}: give both start= and end= (clock times), "
                            f"or neither for the TM59 profile; got start={start!r}, end={end!r}")
    if start is None:
        if room not in TM59_DEFAULT_OCCUPANCY:
            raise ScheduleError(f"occupancy: room must be one of "
                                f"{sorted(TM59_DEFAULT_OCCUPANCY)} (TM59 types), got {room!r}; "
                                "or give start= and end=")
        window = TM59_DEFAULT_OCCUPANCY[room]
    else:
        window = (start, end)
    if window is None:                      # occupied all day
        check_index(index, f"occupancy of {room!r} index")
        values = np.ones(len(index))
    else:
        values = np.asarray(in_time_window(index, *window), dtype=float)
    return pd.Series(values, index=index, name=f"occupied {room}")


def sleeping(index: pd.DatetimeIndex, start="23:00", end="08:00") -> pd.Series:
    """Sleeping hours as 0/1 per interval (TM59 bedrooms: 23:00–08:00, from memory).

    Parameters
    ----------
    index : pandas.DatetimeIndex
    start, end : str or float
        Clock window [local time], wrapping over midnight.

    Returns
    -------
    pandas.Series
        1.0 inside the window (interval mid-points), else 0.0; name ``"sleeping"``.
    """
    return pd.Series(np.asarray(in_time_window(index, start, end), dtype=float), index=index,
                     name="sleeping")


def night(index: pd.DatetimeIndex, start="22:00", end="07:00") -> pd.Series:
    """The TM59 bedroom night window 22:00–07:00 as 0/1 per interval.

    Parameters
    ----------
    index : pandas.DatetimeIndex
    start, end : str or float
        Clock window [local time], wrapping over midnight.

    Returns
    -------
    pandas.Series
        1.0 inside the window (interval mid-points; 9 hour-ending rows 23:00 … 07:00 per
        night at hourly steps), else 0.0; name ``"night"``.
    """
    return pd.Series(np.asarray(in_time_window(index, start, end), dtype=float), index=index,
                     name="night")


# --------------------------------------------------------------------------------------------
# conditions
# --------------------------------------------------------------------------------------------
def _signal_column(weather: pd.DataFrame, column: str, what: str) -> pd.Series:
    if not isinstance(weather, pd.DataFrame):
        raise TypeError(f"{what}: weather must be a DataFrame with column {column!r}, got "
                        f"{type(weather).__name__}")
    if column not in weather.columns:
        raise ScheduleError(f"{what}: weather has no column {column!r}; columns: "
                            f"{list(weather.columns)}. Pass column= with the right name")
    return weather[column].astype(float).rename(column)


def occupied(schedule: pd.Series) -> Condition:
    """True while the occupancy ``schedule`` (0/1 or a number of people) is above 0.5.

    Parameters
    ----------
    schedule : pandas.Series
        Occupancy on the weather index [-] (e.g. from :func:`occupancy`).
    """
    if not isinstance(schedule, pd.Series):
        raise TypeError(f"occupied: schedule must be a pandas Series on the weather index, got "
                        f"{type(schedule).__name__}")
    return when(schedule.astype(float).rename(schedule.name or "occupied") > 0.5)


def airing(room: str, outdoor: str, schedule: pd.Series | None = None, *,
           threshold: float = TM59_OPENING_THRESHOLD, by: float = 0.0) -> Condition:
    """Open while (occupied and) the room is above ``threshold`` and warmer than outdoors.

    Parameters
    ----------
    room : str
        Node whose temperature decides (room air, or an operative-temperature node) [°C].
    outdoor : str
        Outdoor air boundary [°C].
    schedule : pandas.Series, optional
        Occupancy (see :func:`occupancy`); None = at any time.
    threshold : float, default 22
        Room temperature above which the windows open [°C] (TM59, from memory).
    by : float, default 0
        The room must be warmer than outdoors by more than this [K].
    """
    cond = above(room, threshold) & warmer(room, outdoor, by=by)
    return cond if schedule is None else cond & occupied(schedule)


def bedroom_night(room: str, outdoor: str, *, threshold: float = TM59_OPENING_THRESHOLD,
                  by: float = 0.0, start: int = 22, end: int = 7) -> Condition:
    """Open a bedroom window at night while it is warm and warmer than outdoors.

    Parameters
    ----------
    room, outdoor : str
        Bedroom node and outdoor boundary.
    threshold : float, default 22
        Bedroom temperature above which the window opens [°C] (TM59, from memory).
    by : float, default 0
        Margin over the outdoor temperature [K].
    start, end : int, default 22 and 7
        Whole clock hours of the night (the TM59 bedroom window 22:00–07:00), see
        :func:`thermonet.controls.hours`.
    """
    return above(room, threshold) & warmer(room, outdoor, by=by) & hours(start, end)


def outdoor_hotter(room: str, outdoor: str, by: float = 0.0) -> Condition:
    """True while outdoors is warmer than the room by more than ``by`` [K] (close then).

    Parameters
    ----------
    room : str
        Name of the room's node.
    outdoor : str
        Name of the outdoor boundary (or node).
    by : float, default 0.0
        Required difference T_outdoor − T_room [K].

    Returns
    -------
    Condition
    """
    return warmer(outdoor, room, by=by)


def strong_wind(weather: pd.DataFrame, limit: float, column: str = "wind_speed") -> Condition:
    """True while the wind speed column is above ``limit`` [m/s] (close then).

    Parameters
    ----------
    weather : pandas.DataFrame
        Weather with the wind column [m/s] on the simulation index.
    limit : float
        Wind speed above which windows are shut [m/s]; occupants' limits are site-specific
        (no published default is assumed here).
    column : str, default "wind_speed"
    """
    return above(_signal_column(weather, column, "strong_wind"), limit)


def raining(weather: pd.DataFrame, column: str = "precipitation", threshold: float = 0.0
            ) -> Condition:
    """True while the precipitation column is above ``threshold`` (close then).

    Parameters
    ----------
    weather : pandas.DataFrame
        Weather with a precipitation column (typical-year readers do not provide one; add it
        from your source, in its own unit, e.g. mm/h).
    column : str, default "precipitation"
    threshold : float, default 0
        Amount above which it counts as raining [unit of the column].
    """
    return above(_signal_column(weather, column, "raining"), threshold)


def _negate_term(t: Term) -> Term:
    # ¬(d > t) is d ≤ t, which for float64 values is exactly d < nextafter(t, +inf)
    if t.op == ">":
        return Term(t.a, t.b, "<", float(np.nextafter(t.threshold, np.inf)))
    return Term(t.a, t.b, ">", float(np.nextafter(t.threshold, -np.inf)))


def negate(condition: Condition) -> Condition:
    """The logical complement of a condition (De Morgan), built from the same terms.

    ``value > x`` becomes ``value ≤ x``, written as ``value < x⁺`` with x⁺ the next float64
    above x (and ``value < x`` becomes ``value > x⁻``), so the complement is exact also when a
    value equals its threshold (no rain: precipitation 0 is "not raining").

    Parameters
    ----------
    condition : Condition

    Returns
    -------
    Condition
        ¬(C₁ ∨ C₂ ∨ …) = ¬C₁ ∧ ¬C₂ ∧ …, with ¬(t₁ ∧ t₂ ∧ …) = ¬t₁ ∨ ¬t₂ ∨ …
    """
    if not isinstance(condition, Condition):
        raise TypeError(f"negate needs a thermonet Condition, got {type(condition).__name__}")
    clauses = [[_negate_term(t) for t in clause] for clause in condition.clauses]
    return Condition([list(choice) for choice in itertools.product(*clauses)])


def open_unless(open_when: Condition, *close_when: Condition) -> Condition:
    """``open_when`` and none of ``close_when``: the condition of a window rule.

    Parameters
    ----------
    open_when : Condition
        When the windows would open (e.g. :func:`airing`, :func:`bedroom_night`).
    *close_when : Condition
        Overrides that keep them shut (e.g. :func:`outdoor_hotter`, :func:`strong_wind`,
        :func:`raining`).
    """
    cond = open_when
    for c in close_when:
        cond = cond & negate(c)
    return cond


def add_opening_switch(net, link: str, on: Condition, *, fraction: float = 1.0,
                       off: Condition | None = None, name: str | None = None) -> str:
    """Switch an airflow link between shut (0) and ``fraction`` of its flow while ``on`` holds.

    Parameters
    ----------
    net : thermonet.Network
    link : str
        An airflow (or any) link of ``net``; its conductance is the fully open value.
    on : Condition
        Opens the window (e.g. from :func:`open_unless`).
    fraction : float, default 1
        Share of the full flow while open [-], 0 < fraction ≤ 1 (a partly open or restricted
        window; for an opening angle use :func:`thermonet.airflow.hinged_free_area` and
        the flow functions to get the fraction).
    off : Condition, optional
        Hysteresis: closes again only when ``off`` holds (default: when ``on`` stops).
    name : str, optional
        Switch name (default ``link + ":open"``).

    Returns
    -------
    str
        The switch name.
    """
    f = float(fraction) if isinstance(fraction, (int, float, np.integer, np.floating)) else None
    if f is None or not (0.0 < f <= 1.0):
        raise NetworkError(f"opening switch on link {link!r}: fraction must be a number in "
                           f"(0, 1], got {fraction!r}")
    return net.add_switch(on=on, off=off, links={link: (0.0, f)}, name=name or f"{link}:open")
