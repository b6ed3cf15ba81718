"""Overheating and thermal-comfort criteria as plain functions of time series.

Everything here works on :class:`pandas.Series` (temperatures [°C], powers [W]) with a
tz-aware, strictly increasing :class:`~pandas.DatetimeIndex` of one constant step (1 h
typically; 15 min, 30 min ... are fine). Nothing needs a network: pass the temperatures of a
simulation, of a measurement campaign or of any other model.

Interval convention (read this once)
------------------------------------
As everywhere in thermonet, **each row describes the interval that ENDS at its label**
("hour ending"): with hourly data the row labelled 23:00 is the hour 22:00–23:00, and the row
labelled 00:00 of June 2 is the LAST hour of June 1. Every row therefore stands for ``step``
of time and is weighted by its length: a row of a 30-min series counts 0.5 h in
:func:`hours_above`, 0.5 K·h per kelvin in :func:`degree_hours_above`, and so on.

To attach a row to a calendar day, a month or a clock time, this module shifts its label by
``-step/2`` to the interval MID-POINT (:func:`interval_midpoints`) and uses the local date
and local clock time of that mid-point (in the index's own time zone):

=========================== ================ ========================= ======================
row label (hourly)          interval         mid-point                 day / in 22:00–07:00?
=========================== ================ ========================= ======================
2025-06-01 22:00            21:00–22:00      21:30                     June 1 / no
2025-06-01 23:00            22:00–23:00      22:30                     June 1 / yes
2025-06-02 00:00            23:00–24:00      23:30 (June 1)            June 1 / yes
2025-06-02 07:00            06:00–07:00      06:30                     June 2 / yes
2025-06-02 08:00            07:00–08:00      07:30                     June 2 / no
=========================== ================ ========================= ======================

With 30-min steps the row labelled 07:30 (07:00–07:30, mid-point 07:15) lies outside the
22:00–07:00 window and the row labelled 07:00 (06:30–07:00) inside it. Daily means
(:func:`daily_mean`), the 1 May–30 September season of CIBSE TM52 and the clock-time windows
of CIBSE TM59 all use this rule. Under daylight-saving time the local clock is used (a night
has 8 or 10 h at the changes); a fixed-offset zone such as ``"Etc/GMT-1"`` avoids that.

Functions
---------
:func:`operative_temperature`, :func:`mean_radiant_temperature`
    the temperatures comfort is judged on (ISO 7726, ISO 52016-1, EN 16798-1).
:func:`room_operative_temperature`, :func:`room_mean_radiant_temperature`
    the same for a room built by :func:`thermonet.builders.add_room`, from a simulation.
:func:`hours_above`, :func:`degree_hours_above`
    fixed-threshold counts.
:func:`overheating_frequency`, :func:`very_low_energy_overheating`
    the 25 °C / 10 % overheating frequency of very-low-energy houses.
:func:`daily_mean`, :func:`running_mean_outdoor`, :func:`daily_to_index`
    daily means and the exponentially weighted running mean of the outdoor temperature.
:func:`adaptive_comfort_temperature`, :func:`adaptive_limits`, :func:`adaptive_assessment`
    EN 16798-1:2019 adaptive comfort for buildings without mechanical cooling.
:func:`tm52`, :func:`tm59`
    CIBSE TM52 (2013) and TM59 (2017) overheating criteria.
:func:`demand_summary`
    annual heating / cooling energy and peaks per floor area, with the very-low-energy
    criteria (15 kWh/(m²a) or 10 W/m²).
:func:`interval_midpoints`, :func:`in_time_window`
    the time-axis helpers behind the convention above.

Errors
------
Problems with a time series (wrong index, NaN, misaligned occupancy, incomplete days ...)
raise :class:`~thermonet.errors.ScheduleError` naming the argument, what is allowed, what was
received and how to fix it; an unknown option (category, method ...) raises ``ValueError``;
a wrong type raises ``TypeError``. Nothing is filled, clipped or dropped.
"""

from __future__ import annotations

import datetime as _dt
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from thermonet.errors import ScheduleError

__all__ = [
    "EN16798_ADAPTIVE_CATEGORIES",
    "TM52_CATEGORIES",
    "TM59_DEFAULT_OCCUPANCY",
    "AdaptiveAssessment",
    "CriterionResult",
    "DemandSummary",
    "TM52Result",
    "TM59Result",
    "adaptive_assessment",
    "adaptive_comfort_temperature",
    "adaptive_limits",
    "daily_mean",
    "daily_to_index",
    "degree_hours_above",
    "demand_summary",
    "hours_above",
    "in_time_window",
    "interval_midpoints",
    "mean_radiant_temperature",
    "operative_temperature",
    "overheating_frequency",
    "room_mean_radiant_temperature",
    "room_operative_temperature",
    "running_mean_outdoor",
    "tm52",
    "tm59",
    "very_low_energy_overheating",
]

#: EN 16798-1:2019 adaptive method, offsets of the upper and lower limits from the comfort
#: temperature θc [K] per category: ``{category: (upper, lower)}`` so that
#: θ_upper = θc + upper and θ_lower = θc − lower. From memory (EN 16798-1:2019, adaptive
#: method for buildings without mechanical cooling; docs/references.md §5.2 [M]); EN 15251:2007 used
#: the symmetric ±2 / ±3 / ±4 K.
EN16798_ADAPTIVE_CATEGORIES: dict[str, tuple[float, float]] = {
    "I": (2.0, 3.0),
    "II": (3.0, 4.0),
    "III": (4.0, 5.0),
}

#: Constant term of the CIBSE TM52 (2013) maximum acceptable temperature
#: Tmax = 0.33·Trm + constant [°C] per category. Category II, 21.8 °C, is confirmed
#: (docs/references.md §5.3 [C], CIBSE Journal Aug 2013); I and III are the EN 15251 comfort
#: temperature 18.8 °C plus 2 and 4 K (from memory).
TM52_CATEGORIES: dict[str, float] = {"I": 20.8, "II": 21.8, "III": 22.8}

#: Default occupied clock-time windows of CIBSE TM59 (2017) per room type, as
#: ``(start, end)`` of the interval mid-point (local clock); ``None`` = occupied 24 h.
#: From memory of the TM59 occupancy profiles (living rooms and kitchens occupied
#: 09:00–22:00; bedrooms occupied all day, asleep 23:00–08:00) — verify against TM59 and pass
#: your own ``occupied`` Series when in doubt.
TM59_DEFAULT_OCCUPANCY: dict[str, tuple[str, str] | None] = {
    "living": ("09:00", "22:00"),
    "kitchen": ("09:00", "22:00"),
    "bedroom": None,
}

#: Tolerance [h, K·h, K, –] used when comparing a computed sum with a published limit, to absorb
#: floating-point noise only (e.g. 3 % of 200 h computed as 6.000000000000001 h).
_TOL = 1e-9

_HOUR = pd.Timedelta(hours=1)


# --------------------------------------------------------------------------------------------
# validation helpers
# --------------------------------------------------------------------------------------------
def _index_step(index: object, name: str) -> pd.Timedelta:
    """Check that ``index`` is tz-aware, unique, increasing and regular; return its step."""
    if not isinstance(index, pd.DatetimeIndex):
        raise ScheduleError(
            f"{name} must have a DatetimeIndex, got {type(index).__name__}; build the Series "
            "on the simulation or weather index (e.g. res.temperatures['room'])"
        )
    if index.tz is None:
        raise ScheduleError(
            f"{name} has a tz-naive index: comfort criteria use local dates and clock times. "
            "Localize it, e.g. s.tz_localize('Etc/GMT-1') (use the zone of your data)"
        )
    if len(index) < 2:
        raise ScheduleError(
            f"{name} needs at least 2 rows to define its time step, got {len(index)}"
        )
    if index.has_duplicates:
        dup = index[index.duplicated()][:3]
        raise ScheduleError(
            f"{name} index has duplicate time stamps, e.g. {', '.join(map(str, dup))}; "
            "remove them after checking which row is right"
        )
    diffs = index[1:] - index[:-1]
    if (diffs <= pd.Timedelta(0)).any():
        k = int(np.argmax(np.asarray(diffs <= pd.Timedelta(0))))
        raise ScheduleError(
            f"{name} index is not increasing: {index[k + 1]} follows {index[k]}; sort it with "
            "s.sort_index()"
        )
    step = pd.Timedelta(diffs[0])
    if not (diffs == step).all():
        found = ", ".join(str(s) for s in pd.unique(diffs)[:4])
        raise ScheduleError(
            f"{name} index must have one constant step, found steps {found}; resample to a "
            "regular step first (e.g. s.resample('1h').mean()) and repair gaps explicitly"
        )
    return step


def _series_values(series: object, name: str) -> tuple[np.ndarray, pd.Timedelta]:
    """Check a time series (type, index, dtype, finiteness); return float values and step."""
    if not isinstance(series, pd.Series):
        raise TypeError(
            f"{name} must be a pandas Series with a tz-aware DatetimeIndex, got "
            f"{type(series).__name__}"
        )
    step = _index_step(series.index, name)
    if pd.api.types.is_bool_dtype(series.dtype) or not pd.api.types.is_numeric_dtype(
        series.dtype
    ):
        raise ScheduleError(f"{name} must hold numbers, got dtype {series.dtype}")
    values = series.to_numpy(dtype=float, na_value=np.nan)
    bad = ~np.isfinite(values)
    if bad.any():
        where = ", ".join(str(t) for t in series.index[bad][:3])
        raise ScheduleError(
            f"{name} has {int(bad.sum())} NaN or infinite value(s), e.g. at {where}; comfort "
            "criteria do not fill gaps — repair them explicitly before the assessment"
        )
    return values, step


def _describe_index(index: pd.Index) -> str:
    if len(index) == 0:
        return "0 rows"
    return f"{len(index)} rows {index[0]} … {index[-1]} (tz {getattr(index, 'tz', None)})"


def _same_index(ref: pd.Series, ref_name: str, other: pd.Series, other_name: str) -> None:
    same = ref.index.equals(other.index) and str(getattr(ref.index, "tz", None)) == str(
        getattr(other.index, "tz", None)
    )
    if not same:
        raise ScheduleError(
            f"{other_name} must have the same index as {ref_name} (same time stamps and time "
            f"zone); got {_describe_index(other.index)} against {_describe_index(ref.index)}. "
            f"Build {other_name} on {ref_name}.index (check before any reindexing)"
        )


def _occupied_mask(occupied: object, ref: pd.Series, ref_name: str) -> np.ndarray:
    """Boolean occupancy mask aligned with ``ref``; ``None`` means every row is occupied."""
    if occupied is None:
        return np.ones(len(ref), dtype=bool)
    if not isinstance(occupied, pd.Series):
        raise TypeError(
            f"occupied must be None or a boolean pandas Series on the index of {ref_name}, got "
            f"{type(occupied).__name__}"
        )
    if not pd.api.types.is_bool_dtype(occupied.dtype):
        raise ScheduleError(
            f"occupied must have a boolean dtype (True = occupied), got {occupied.dtype}; "
            "convert explicitly, e.g. occupied = profile > 0"
        )
    if occupied.isna().any():
        raise ScheduleError(
            f"occupied has {int(occupied.isna().sum())} missing value(s); say for every row "
            "whether it is occupied"
        )
    _same_index(ref, ref_name, occupied, "occupied")
    return occupied.to_numpy(dtype=bool)


def _finite_number(value: object, name: str) -> float:
    try:
        x = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise TypeError(f"{name} must be a number, got {value!r}") from None
    if not math.isfinite(x):
        raise ValueError(f"{name} must be finite, got {value!r}")
    return x


def _step_hours(step: pd.Timedelta) -> float:
    return step / _HOUR


def _check_category(category: object, allowed: Mapping[str, object], what: str) -> str:
    if category not in allowed:
        raise ValueError(
            f"category must be one of {', '.join(repr(k) for k in allowed)} ({what}), "
            f"got {category!r}"
        )
    return str(category)


def _threshold_values(threshold: object, ref: pd.Series, ref_name: str) -> np.ndarray | float:
    if isinstance(threshold, pd.Series):
        values, _ = _series_values(threshold, "threshold")
        _same_index(ref, ref_name, threshold, "threshold")
        return values
    return _finite_number(threshold, "threshold")


def _plain(x: object, name: str) -> tuple[np.ndarray, pd.Index | None]:
    """Float array of a number, array or Series (NaN refused) and the Series index if any."""
    index = x.index if isinstance(x, pd.Series) else None
    try:
        arr = np.asarray(x, dtype=float)
    except (TypeError, ValueError):
        raise TypeError(f"{name} must be a number, an array or a Series of numbers") from None
    if not np.isfinite(arr).all():
        raise ScheduleError(f"{name} contains NaN or infinite values; repair them first")
    return arr, index


# --------------------------------------------------------------------------------------------
# time axis
# --------------------------------------------------------------------------------------------
def interval_midpoints(index: pd.DatetimeIndex) -> pd.DatetimeIndex:
    """Mid-points of the intervals that end at the labels of a regular index.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        tz-aware, increasing, constant step; each label is the END of its interval.

    Returns
    -------
    pandas.DatetimeIndex
        ``index - step/2`` in the same time zone.

    Raises
    ------
    ScheduleError
        if the index is tz-naive, not increasing, irregular or shorter than 2 rows.

    Examples
    --------
    >>> idx = pd.date_range("2025-06-01 23:00", periods=2, freq="h", tz="Etc/GMT-1")
    >>> interval_midpoints(idx)[1]
    Timestamp('2025-06-01 23:30:00+0100', tz='Etc/GMT-1')
    """
    step = _index_step(index, "index")
    return index - step / 2


def _clock_hours(value: object, name: str) -> float:
    """A clock time "HH:MM", datetime.time or a number of hours, as hours after midnight."""
    if isinstance(value, _dt.time):
        hours = value.hour + value.minute / 60 + value.second / 3600
    elif isinstance(value, str):
        try:
            t = _dt.time.fromisoformat(value)
        except ValueError:
            raise ValueError(f"{name} must be a clock time like '22:00', got {value!r}") from None
        hours = t.hour + t.minute / 60 + t.second / 3600
    else:
        hours = _finite_number(value, name)
    if not 0.0 <= hours <= 24.0:
        raise ValueError(f"{name} must lie between 00:00 and 24:00, got {value!r}")
    return hours % 24.0


def _midpoint_clock(mid: pd.DatetimeIndex) -> np.ndarray:
    return np.asarray(mid.hour + mid.minute / 60 + mid.second / 3600, dtype=float)


def in_time_window(
    index: pd.DatetimeIndex, start: str | _dt.time | float, end: str | _dt.time | float
) -> pd.Series:
    """Whether each interval of a regular index falls in a daily clock-time window.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        tz-aware, increasing, constant step; each label is the END of its interval.
    start, end : str, datetime.time or float
        Local clock times of the window, ``"HH:MM"`` or hours after midnight [h]. The window
        is ``start <= t < end``; it wraps over midnight when ``start > end`` (e.g. 22:00–07:00).

    Returns
    -------
    pandas.Series of bool
        On ``index``: True where the interval MID-POINT (label − step/2, local clock of the
        index's zone) lies in the window.

    Raises
    ------
    ScheduleError
        for an invalid index.
    ValueError
        if ``start == end`` (empty or whole day is ambiguous: use no window for all hours).

    Notes
    -----
    With hourly hour-ending data, the window 22:00–07:00 holds the rows labelled 23:00, 00:00,
    01:00 … 07:00 (9 rows per night); with 30-min data the rows labelled 22:30 … 07:00
    (18 rows). An interval that straddles a window edge (only possible when the step does not
    divide the window) is counted by where its mid-point falls.

    Examples
    --------
    >>> idx = pd.date_range("2025-06-01 22:00", periods=11, freq="h", tz="Etc/GMT-1")
    >>> int(in_time_window(idx, "22:00", "07:00").sum())
    9
    """
    mid = interval_midpoints(index)
    t0 = _clock_hours(start, "start")
    t1 = _clock_hours(end, "end")
    if t0 == t1:
        raise ValueError(
            f"start and end of a time window must differ, got {start!r} and {end!r}; for every "
            "hour of the day use no window (occupied=None)"
        )
    t = _midpoint_clock(mid)
    inside = (t >= t0) & (t < t1) if t0 < t1 else (t >= t0) | (t < t1)
    return pd.Series(inside, index=index, name="in_window")


def _day_labels(index: pd.DatetimeIndex, step: pd.Timedelta) -> pd.DatetimeIndex:
    """Local midnight (start of the calendar day) of each interval's mid-point."""
    return (index - step / 2).normalize()


def daily_mean(temp: pd.Series, *, partial_days: str = "error") -> pd.Series:
    """Daily means of a regular time series, days taken at the interval mid-points.

    Parameters
    ----------
    temp : pandas.Series
        Values [any unit, e.g. °C] on a tz-aware regular index (hour ending).
    partial_days : {"error", "allow"}, default "error"
        A day is complete when its rows cover its whole local duration (24 h; 23 or 25 h on
        a daylight-saving change). ``"error"`` refuses incomplete days; ``"allow"`` averages
        the rows present.

    Returns
    -------
    pandas.Series
        One value per calendar day, indexed by the local midnight at the START of the day
        (tz-aware), same unit as ``temp``.

    Raises
    ------
    ScheduleError
        for an invalid series, a step longer than one day, or incomplete days with
        ``partial_days="error"``.

    Notes
    -----
    Because rows are hour ending, an hourly year that is complete runs from the row labelled
    01:00 on January 1 to the row labelled 00:00 on January 1 of the next year. A series that
    starts with the row labelled 00:00 starts with the last hour of the PREVIOUS day, which
    is then a 1-h partial day.

    Examples
    --------
    >>> idx = pd.date_range("2025-06-01 01:00", periods=48, freq="h", tz="Etc/GMT-1")
    >>> daily_mean(pd.Series(np.r_[np.full(24, 10.0), np.full(24, 20.0)], idx)).tolist()
    [10.0, 20.0]
    """
    values, step = _series_values(temp, "temp")
    out = _daily_mean(values, temp.index, step, "temp", partial_days)
    if temp.name is not None:
        out.name = temp.name
    return out


def _daily_mean(
    values: np.ndarray, index: pd.DatetimeIndex, step: pd.Timedelta, name: str, partial_days: str
) -> pd.Series:
    if partial_days not in ("error", "allow"):
        raise ValueError(f"partial_days must be 'error' or 'allow', got {partial_days!r}")
    if step > pd.Timedelta(days=1):
        raise ScheduleError(f"{name} has a step of {step}; daily means need a step of ≤ 1 day")
    days = _day_labels(index, step)
    grouped = pd.Series(values, index=days).groupby(level=0, sort=True)
    means = grouped.mean()
    if partial_days == "error":
        counts = grouped.size().to_numpy()
        starts = means.index
        durations = (starts + pd.DateOffset(days=1)) - starts
        bad = np.asarray(durations != counts * step)
        if bad.any():
            k = np.flatnonzero(bad)
            shown = "; ".join(
                f"{starts[j].date()} has {counts[j] * step} of {durations[j]}" for j in k[:3]
            )
            raise ScheduleError(
                f"{name} has {len(k)} incomplete day(s): {shown}. Rows are hour ending, so a "
                "complete hourly day runs from the row labelled 01:00 to the row labelled 00:00 "
                "of the next day (the row labelled 00:00 belongs to the PREVIOUS day). Trim the "
                "series to whole days, or pass partial_days='allow' to average the rows present"
            )
    means.name = "daily_mean"
    means.index.name = "date"
    return means


def daily_to_index(daily: pd.Series, index: pd.DatetimeIndex) -> pd.Series:
    """Spread a daily Series onto a regular time index (each row takes its day's value).

    Parameters
    ----------
    daily : pandas.Series
        One value per day, indexed by local midnight at the start of the day (as returned by
        :func:`daily_mean` and :func:`running_mean_outdoor`).
    index : pandas.DatetimeIndex
        tz-aware regular index, hour ending.

    Returns
    -------
    pandas.Series
        On ``index``: the value of the day holding each interval's mid-point.

    Raises
    ------
    ScheduleError
        if ``index`` is invalid, or a row's day is missing from ``daily``.
    """
    if not isinstance(daily, pd.Series):
        raise TypeError(f"daily must be a pandas Series, got {type(daily).__name__}")
    step = _index_step(index, "index")
    if not isinstance(daily.index, pd.DatetimeIndex) or str(daily.index.tz) != str(index.tz):
        raise ScheduleError(
            f"daily must be indexed by tz-aware local midnights in the zone of index "
            f"({index.tz}); got {getattr(daily.index, 'tz', type(daily.index).__name__)}"
        )
    days = _day_labels(index, step)
    values = daily.reindex(days)
    missing = values.isna().to_numpy() & ~days.isin(daily.index)
    if missing.any():
        gone = pd.unique(days[missing].date)[:3]
        raise ScheduleError(
            f"daily has no value for day(s) {', '.join(map(str, gone))} needed by index; "
            "compute it over a period covering the whole index"
        )
    return pd.Series(values.to_numpy(), index=index, name=daily.name)


# --------------------------------------------------------------------------------------------
# operative and mean radiant temperature
# --------------------------------------------------------------------------------------------
def operative_temperature(air, mean_radiant, *, weight_air: float = 0.5):
    """Operative temperature as a weighted mean of air and mean radiant temperature.

    Parameters
    ----------
    air : float, array-like or pandas.Series
        Air temperature θ_air [°C].
    mean_radiant : float, array-like or pandas.Series
        Mean radiant temperature θ_mr [°C].
    weight_air : float, default 0.5
        Weight A of the air temperature [–], 0 … 1.

    Returns
    -------
    float, numpy.ndarray or pandas.Series
        θ_op [°C]; a Series (index of the Series input) when either input is a Series.

    Raises
    ------
    ScheduleError
        if two Series have different indexes, or an input holds NaN / inf.
    ValueError
        if ``weight_air`` is outside 0 … 1 or the shapes do not broadcast.

    Notes
    -----
    .. math:: θ_{op} = A\\,θ_{air} + (1 - A)\\,θ_{mr}

    The exact definition weights by the convective and radiative heat transfer coefficients
    of the body, A = h_c / (h_c + h_r) (ISO 7726:1998, definitions and annex on operative
    temperature — from memory). For air speeds below 0.2 m/s, A = 0.5 (the plain mean) is
    the usual simplification, also used by EN 16798-1:2019 and ISO 52016-1:2017 (from
    memory); ISO 7726 / ISO 7730 tabulate A = 0.6 for 0.2–0.6 m/s and 0.7 for 0.6–1.0 m/s
    (from memory).

    References
    ----------
    ISO 7726:1998, Ergonomics of the thermal environment — Instruments for measuring physical
    quantities. ISO 52016-1:2017, Energy performance of buildings — Energy needs for heating
    and cooling, internal temperatures ..., clause on the operative temperature.
    EN 16798-1:2019, Energy performance of buildings — Ventilation for buildings — Part 1.

    Examples
    --------
    >>> operative_temperature(20.0, 24.0)
    22.0
    """
    w = _finite_number(weight_air, "weight_air")
    if not 0.0 <= w <= 1.0:
        raise ValueError(f"weight_air must lie in 0 … 1, got {weight_air!r}")
    a, ia = _plain(air, "air")
    r, ir = _plain(mean_radiant, "mean_radiant")
    if ia is not None and ir is not None:
        _same_index(air, "air", mean_radiant, "mean_radiant")
    try:
        out = w * a + (1.0 - w) * r
    except ValueError:
        raise ValueError(
            f"air (shape {a.shape}) and mean_radiant (shape {r.shape}) do not broadcast"
        ) from None
    index = ia if ia is not None else ir
    if index is not None:
        if out.shape != (len(index),):
            raise ValueError(
                f"the result has shape {out.shape}, which does not match the Series index of "
                f"{len(index)} rows"
            )
        return pd.Series(out, index=index, name="operative")
    return float(out) if out.ndim == 0 else out


def mean_radiant_temperature(surface_temps: pd.DataFrame, areas: Mapping[str, float]) -> pd.Series:
    """Area-weighted mean of internal surface temperatures, as a mean radiant temperature.

    Parameters
    ----------
    surface_temps : pandas.DataFrame
        One column per internal surface, temperatures [°C].
    areas : mapping of str to float
        Area of each surface [m²], one entry per column (no more, no fewer), each > 0.

    Returns
    -------
    pandas.Series
        θ_mr [°C] on the index of ``surface_temps``, named ``"mean_radiant"``.

    Raises
    ------
    TypeError
        if ``surface_temps`` is not a DataFrame or ``areas`` not a mapping.
    ScheduleError
        if a column is not numeric or holds NaN / inf.
    ValueError
        if the area keys and the columns differ, or an area is not finite and > 0.

    Notes
    -----
    .. math:: θ_{mr} ≈ \\frac{\\sum_i A_i θ_{s,i}}{\\sum_i A_i}

    This is the room-average simplification of ISO 52016-1:2017 (mean radiant temperature of
    a zone from its internal surface temperatures, area weighted — from memory). ISO 7726:1998
    defines θ_mr for a person through view factors and fourth powers,
    T_mr⁴ = Σ F_p,i T_i⁴ (from memory). The area weighting is exact only where every surface is
    seen by the occupant in proportion to its area (e.g. a small body at the centre of a cube
    with equal faces); it ignores the position of the occupant (a person next to a cold or a
    sunlit window sees it much more than its area share), linearises T⁴ (error well below
    0.1 K for surface temperatures within about ±10 K of each other) and ignores direct and
    diffuse short-wave radiation on the body.

    References
    ----------
    ISO 7726:1998, Ergonomics of the thermal environment — Instruments for measuring physical
    quantities. ISO 52016-1:2017, Energy performance of buildings — Energy needs for heating
    and cooling, internal temperatures and sensible and latent heat loads — Part 1.

    Examples
    --------
    >>> df = pd.DataFrame({"wall": [18.0], "window": [22.0]})
    >>> float(mean_radiant_temperature(df, {"wall": 30.0, "window": 10.0}).iloc[0])
    19.0
    """
    if not isinstance(surface_temps, pd.DataFrame):
        raise TypeError(
            f"surface_temps must be a pandas DataFrame, got {type(surface_temps).__name__}"
        )
    if not isinstance(areas, Mapping):
        raise TypeError(f"areas must be a mapping column -> area [m²], got {type(areas).__name__}")
    columns = [str(c) for c in surface_temps.columns]
    if len(columns) == 0:
        raise ValueError("surface_temps has no columns; give at least one surface")
    keys = [str(k) for k in areas]
    missing = [c for c in columns if c not in keys]
    extra = [k for k in keys if k not in columns]
    if missing or extra:
        raise ValueError(
            "areas must name exactly the columns of surface_temps; "
            f"columns without an area: {missing}; areas without a column: {extra}"
        )
    a = np.empty(len(columns))
    for j, c in enumerate(columns):
        value = areas[c] if c in areas else areas[surface_temps.columns[j]]
        try:
            a[j] = float(value)
        except (TypeError, ValueError):
            raise ValueError(
                f"area of surface {c!r} must be a number [m²], got {value!r}"
            ) from None
        if not (math.isfinite(a[j]) and a[j] > 0.0):
            raise ValueError(f"area of surface {c!r} must be finite and > 0 [m²], got {value!r}")
    for c in surface_temps.columns:
        dtype = surface_temps[c].dtype
        if pd.api.types.is_bool_dtype(dtype) or not pd.api.types.is_numeric_dtype(dtype):
            raise ScheduleError(f"surface_temps column {c!r} must hold numbers, got {dtype}")
    t = surface_temps.to_numpy(dtype=float, na_value=np.nan)
    bad = ~np.isfinite(t)
    if bad.any():
        col = surface_temps.columns[int(np.flatnonzero(bad.any(axis=0))[0])]
        raise ScheduleError(
            f"surface_temps column {col!r} has NaN or infinite values; repair them first"
        )
    return pd.Series(t @ a / a.sum(), index=surface_temps.index, name="mean_radiant")


def _room_fields(room: object) -> tuple[str, dict, dict]:
    """Air node, surface nodes and areas of a room record (a builders ``Room``)."""
    try:
        air, surfaces, areas = room.air, dict(room.surfaces), dict(room.areas)
    except AttributeError:
        raise TypeError(
            f"room must be a room record of thermonet.builders (what add_room returns, or "
            f"thermonet.builders.rooms(net)[name]), got {type(room).__name__}"
        ) from None
    if not surfaces:
        raise ValueError(
            f"room {getattr(room, 'name', air)!r} has no inside surfaces in its record; the mean "
            "radiant temperature needs the elements built by add_room"
        )
    return air, surfaces, areas


def _room_table(results: object, mean: bool) -> pd.DataFrame:
    attr = "mean_temperatures" if mean else "temperatures"
    try:
        return getattr(results, attr)
    except AttributeError:
        raise TypeError(
            f"results must be what thermonet.simulate returned (with .{attr}), got "
            f"{type(results).__name__}"
        ) from None


def room_mean_radiant_temperature(results: object, room: object, *, mean: bool = True
                                  ) -> pd.Series:
    """Mean radiant temperature of a room built by :func:`thermonet.builders.add_room`.

    The area-weighted mean of the inside surface temperatures of the room's elements, windows
    and doors (:func:`mean_radiant_temperature` on the nodes of ``room.surfaces`` with the
    areas of ``room.areas``).

    Parameters
    ----------
    results : thermonet.Results
        What :func:`thermonet.simulate` returned for the network holding the room.
    room : thermonet.builders.Room
        The room record (returned by ``add_room`` or found again with
        :func:`thermonet.builders.rooms`, also after loading a model file).
    mean : bool, default True
        True: step means [°C] (:attr:`~thermonet.Results.mean_temperatures`, the
        temperatures the energy balance uses); False: values at the end of each step [°C].

    Returns
    -------
    pandas.Series
        θ_mr [°C] on the result index, named ``"mean_radiant"``; ``attrs["unit"]`` is "°C".

    Raises
    ------
    TypeError
        ``results`` is not a simulation result or ``room`` not a room record.
    ValueError
        The record has no surfaces, or a surface node is not in the results (a stale record).

    Notes
    -----
    See :func:`mean_radiant_temperature` for the area-weighting simplification and its limits.

    References
    ----------
    ISO 52016-1:2017, mean radiant temperature of a zone from its internal surface
    temperatures (from memory); ISO 7726:1998 for the exact definition (see
    ``docs/references.md``).
    """
    air, surfaces, areas = _room_fields(room)
    table = _room_table(results, mean)
    missing = [n for n in surfaces.values() if n not in table.columns]
    if missing:
        raise ValueError(
            f"the results have no temperature for surface node(s) {missing[:4]} of room "
            f"{getattr(room, 'name', air)!r}; simulate the network the room was built in"
        )
    surf = table[list(surfaces.values())].set_axis(list(surfaces), axis=1)
    out = mean_radiant_temperature(surf, {k: areas[k] for k in surfaces})
    out.attrs["unit"] = "°C"
    return out


def room_operative_temperature(results: object, room: object, *, weight_air: float = 0.5,
                               mean: bool = True) -> pd.Series:
    """Operative temperature of a room built by :func:`thermonet.builders.add_room`.

    θ_op = A·θ_air + (1 − A)·θ_mr with θ_air the room's air node and θ_mr from
    :func:`room_mean_radiant_temperature`.

    Parameters
    ----------
    results : thermonet.Results
        What :func:`thermonet.simulate` returned for the network holding the room.
    room : thermonet.builders.Room
        The room record (from ``add_room`` or :func:`thermonet.builders.rooms`).
    weight_air : float, default 0.5
        Weight A of the air temperature [–], 0 … 1 (0.5 for air speeds below 0.2 m/s, see
        :func:`operative_temperature`).
    mean : bool, default True
        True: step means [°C]; False: values at the end of each step [°C].

    Returns
    -------
    pandas.Series
        θ_op [°C] on the result index, named ``"operative"``; ``attrs["unit"]`` is "°C".

    Raises
    ------
    TypeError, ValueError
        As :func:`room_mean_radiant_temperature`; ``weight_air`` outside 0 … 1.

    References
    ----------
    ISO 7726:1998; EN 16798-1:2019 and ISO 52016-1:2017 for A = 0.5 (from memory; see
    ``docs/references.md``).

    Examples
    --------
    >>> top = room_operative_temperature(res, room)                       # doctest: +SKIP
    >>> hours_above(top, 26.0)                                            # doctest: +SKIP
    """
    air, _, _ = _room_fields(room)
    mrt = room_mean_radiant_temperature(results, room, mean=mean)
    out = operative_temperature(_room_table(results, mean)[air], mrt, weight_air=weight_air)
    out = out.rename("operative")
    out.attrs["unit"] = "°C"
    return out


# --------------------------------------------------------------------------------------------
# fixed thresholds
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class CriterionResult:
    """Outcome of one pass/fail criterion: ``passed`` is ``value <= limit``.

    Attributes
    ----------
    name : str
        What was assessed.
    value : float
        The computed quantity, in ``unit``.
    limit : float
        The largest value that still passes, in ``unit``.
    unit : str
        Unit of ``value`` and ``limit`` (``"h"``, ``"%"``, ``"K"``, ``"–"`` ...).
    passed : bool
        ``value <= limit`` (to a floating-point tolerance of 1e-9).
    source : str
        Where the criterion is published.
    """

    name: str
    value: float
    limit: float
    unit: str
    passed: bool
    source: str = ""

    def _repr_html_(self):
        from thermonet.display import criteria_html  # display reads attributes only

        return criteria_html(self.name, [self], passed=self.passed)


def _criterion(name: str, value: float, limit: float, unit: str, source: str) -> CriterionResult:
    return CriterionResult(
        name=name,
        value=float(value),
        limit=float(limit),
        unit=unit,
        passed=bool(value <= limit + _TOL),
        source=source,
    )


def _criteria_table(criteria: Sequence[CriterionResult]) -> pd.DataFrame:
    return pd.DataFrame(
        {
            "value": [c.value for c in criteria],
            "limit": [c.limit for c in criteria],
            "unit": [c.unit for c in criteria],
            "passed": [c.passed for c in criteria],
            "source": [c.source for c in criteria],
        },
        index=pd.Index([c.name for c in criteria], name="criterion"),
    )


def hours_above(temp: pd.Series, threshold, occupied: pd.Series | None = None) -> float:
    """Hours with a temperature strictly above a threshold.

    Parameters
    ----------
    temp : pandas.Series
        Temperature [°C] on a tz-aware regular index (hour ending).
    threshold : float or pandas.Series
        Threshold [°C]; a Series must share the index of ``temp``.
    occupied : pandas.Series of bool, optional
        Rows to count (True = occupied), on the index of ``temp``; default every row.

    Returns
    -------
    float
        Σ Δt over the occupied rows with θ > threshold [h] (Δt = step [h]).

    Raises
    ------
    ScheduleError
        for an invalid series, NaN, or a misaligned threshold / occupancy.

    Examples
    --------
    >>> idx = pd.date_range("2025-07-01 01:00", periods=4, freq="30min", tz="Etc/GMT-1")
    >>> hours_above(pd.Series([24.0, 25.0, 26.0, 27.0], idx), 25.0)
    1.0
    """
    values, step = _series_values(temp, "temp")
    mask = _occupied_mask(occupied, temp, "temp")
    limit = _threshold_values(threshold, temp, "temp")
    return float(np.count_nonzero(mask & (values > limit)) * _step_hours(step))


def degree_hours_above(temp: pd.Series, threshold, occupied: pd.Series | None = None) -> float:
    """Degree-hours above a threshold.

    Parameters
    ----------
    temp : pandas.Series
        Temperature [°C] on a tz-aware regular index (hour ending).
    threshold : float or pandas.Series
        Threshold [°C]; a Series must share the index of ``temp``.
    occupied : pandas.Series of bool, optional
        Rows to count, on the index of ``temp``; default every row.

    Returns
    -------
    float
        Σ max(θ − θ_threshold, 0)·Δt over the occupied rows [K·h].

    Raises
    ------
    ScheduleError
        for an invalid series, NaN, or a misaligned threshold / occupancy.
    """
    values, step = _series_values(temp, "temp")
    mask = _occupied_mask(occupied, temp, "temp")
    limit = _threshold_values(threshold, temp, "temp")
    excess = np.where(mask, np.maximum(values - limit, 0.0), 0.0)
    return float(excess.sum() * _step_hours(step))


def overheating_frequency(
    temp: pd.Series, threshold=25.0, occupied: pd.Series | None = None
) -> float:
    """Share of (occupied) hours with a temperature strictly above a threshold.

    Parameters
    ----------
    temp : pandas.Series
        Indoor (operative or air) temperature [°C] on a tz-aware regular index.
    threshold : float or pandas.Series, default 25.0
        Threshold [°C]; 25 °C is the very-low-energy (Passive House) convention.
    occupied : pandas.Series of bool, optional
        Rows to assess; default every row (the very-low-energy convention uses all hours of
        the year).

    Returns
    -------
    float
        hours above / hours assessed [–] (0 … 1; multiply by 100 for %).

    Raises
    ------
    ScheduleError
        for an invalid series, or when no row is occupied.

    Notes
    -----
    The frequency of overheating of very-low-energy (Passive House) buildings is the share of
    the hours of the year with an indoor temperature above 25 °C; it should stay below 10 %
    (docs/references.md §5.5 [C], beispielhaus.de "Übertemperaturhäufigkeit … unter 10 Prozent");
    5 % is the recommended value (from memory).

    References
    ----------
    Passive House criteria, frequency of overheating; see docs/references.md §5.5.
    """
    _, step = _series_values(temp, "temp")
    mask = _occupied_mask(occupied, temp, "temp")
    assessed = np.count_nonzero(mask) * _step_hours(step)
    if assessed == 0:
        raise ScheduleError("occupied has no True row: the overheating frequency is undefined")
    return hours_above(temp, threshold, occupied) / assessed


def very_low_energy_overheating(
    temp: pd.Series,
    limit: float = 0.10,
    *,
    threshold: float = 25.0,
    occupied: pd.Series | None = None,
) -> CriterionResult:
    """Verdict on the overheating frequency of a very-low-energy (Passive House) building.

    Parameters
    ----------
    temp : pandas.Series
        Indoor temperature [°C], normally one full year, tz-aware regular index.
    limit : float, default 0.10
        Largest acceptable share of hours above ``threshold`` [–] (10 %).
    threshold : float, default 25.0
        Overheating threshold [°C].
    occupied : pandas.Series of bool, optional
        Rows to assess; default every row.

    Returns
    -------
    CriterionResult
        ``value`` = overheating frequency [–], ``limit``, ``passed`` = value ≤ limit.

    References
    ----------
    Passive House criteria: frequency of overheating (> 25 °C) below 10 % — docs/references.md §5.5
    [C] (https://beispielhaus.de/faq_ab-wann-gilt-passivhaus.html).
    """
    lim = _finite_number(limit, "limit")
    if not 0.0 <= lim <= 1.0:
        raise ValueError(f"limit is a share of hours [–] in 0 … 1, got {limit!r} (10 % = 0.10)")
    value = overheating_frequency(temp, threshold, occupied)
    return _criterion(
        f"overheating frequency (> {threshold:g} °C)",
        value,
        lim,
        "–",
        "Passive House criteria, docs/references.md §5.5",
    )


# --------------------------------------------------------------------------------------------
# running mean outdoor temperature and EN 16798-1 adaptive comfort
# --------------------------------------------------------------------------------------------
#: weights of the 7-day approximation of the running mean (EN 15251 / EN 16798-1, from memory)
_SEVEN_DAY_WEIGHTS = np.array([1.0, 0.8, 0.6, 0.5, 0.4, 0.3, 0.2])


def _running_mean_daily(daily: np.ndarray, alpha: float, method: str, init) -> np.ndarray:
    n = len(daily)
    periodic = isinstance(init, str) and init == "periodic"
    if isinstance(init, str):
        if init not in ("first_day", "periodic"):
            raise ValueError(
                f"init must be 'first_day', 'periodic' or a temperature [°C], got {init!r}"
            )
        history = float(daily[0])
    else:
        history = _finite_number(init, "init")
    if method == "seven_day":
        if periodic:
            past = np.take(daily, np.arange(-7, 0), mode="wrap")
        else:
            past = np.full(7, history)
        ext = np.concatenate([past, daily])
        out = np.empty(n)
        for i in range(n):
            # ext[i + 6] is the day before day i, ext[i] seven days before
            out[i] = ext[i : i + 7][::-1] @ _SEVEN_DAY_WEIGHTS / _SEVEN_DAY_WEIGHTS.sum()
        return out
    out = np.empty(n)
    if periodic:
        # θrm,1 = (1-α) Σ_{k≥1} α^(k-1) θed,1-k with the series repeated before day 1:
        # the geometric sum over one period divided by (1 - α^N).
        k = np.arange(n)
        out[0] = (1.0 - alpha) * (alpha**k @ daily[::-1]) / (1.0 - alpha**n)
    else:
        out[0] = history
    for i in range(1, n):
        out[i] = (1.0 - alpha) * daily[i - 1] + alpha * out[i - 1]
    return out


def running_mean_outdoor(
    temp_air: pd.Series,
    alpha: float = 0.8,
    *,
    method: str = "exponential",
    init: str | float = "first_day",
    partial_days: str = "error",
) -> pd.Series:
    """Exponentially weighted running mean of the daily mean outdoor temperature.

    Parameters
    ----------
    temp_air : pandas.Series
        Outdoor air temperature [°C] on a tz-aware regular index (hour ending), whole days.
    alpha : float, default 0.8
        Weighting constant α [–], 0 ≤ α < 1 (EN 16798-1 and CIBSE TM52 use 0.8).
    method : {"exponential", "seven_day"}, default "exponential"
        ``"exponential"``: the recursive definition, eq. (1) below. ``"seven_day"``: the
        approximation over the seven previous days, eq. (2); only for α = 0.8.
    init : {"first_day", "periodic"} or float, default "first_day"
        The daily means assumed BEFORE the first day, which the running mean of the first
        days needs: ``"first_day"`` — equal to the first day's mean (so θrm of day 1 is the
        mean of day 1; common practice, no source); ``"periodic"`` — the series repeats
        (the days before day 1 are the last days of the series: right for a typical year that
        runs 1 January – 31 December); a float [°C] — a constant known value (e.g. from the
        previous year's records). Its influence decays as α^n (0.8³⁰ ≈ 0.001).
    partial_days : {"error", "allow"}, default "error"
        Passed to :func:`daily_mean`.

    Returns
    -------
    pandas.Series
        θrm [°C], one value per day, indexed by local midnight at the start of the day; use
        :func:`daily_to_index` to put it on an hourly index.

    Raises
    ------
    ScheduleError
        for an invalid series or incomplete days.
    ValueError
        for α outside 0 … 1, an unknown ``method`` / ``init``, or ``"seven_day"`` with α ≠ 0.8.

    Notes
    -----
    With θed,n−1 the daily mean outdoor temperature of the previous day [°C]:

    .. math::

        θ_{rm,n} = (1 − α)\\,θ_{ed,n−1} + α\\,θ_{rm,n−1}                        \\quad (1)

        θ_{rm} = (θ_{ed−1} + 0.8θ_{ed−2} + 0.6θ_{ed−3} + 0.5θ_{ed−4}
                 + 0.4θ_{ed−5} + 0.3θ_{ed−6} + 0.2θ_{ed−7}) / 3.8              \\quad (2)

    Eq. (1) is the recursive form of θrm = (1 − α)(θed−1 + α θed−2 + α² θed−3 + …)
    (docs/references.md §5.1 [C]); eq. (2) is the approximation the standards give where daily
    records
    are short (from memory). Daily means are taken over the intervals whose MID-POINT falls
    in the day (see the module notes).

    References
    ----------
    EN 16798-1:2019, Energy performance of buildings — Ventilation for buildings — Part 1,
    running mean outdoor temperature (from memory: Annex B). EN 15251:2007, Annex A.
    CIBSE TM52 (2013), The limits of thermal comfort: avoiding overheating in European
    buildings, running mean temperature. See docs/references.md §5.1.

    Examples
    --------
    >>> idx = pd.date_range("2025-06-01 01:00", periods=72, freq="h", tz="Etc/GMT-1")
    >>> t = pd.Series(np.repeat([10.0, 20.0, 20.0], 24), idx)
    >>> running_mean_outdoor(t).round(6).tolist()
    [10.0, 10.0, 12.0]
    """
    values, step = _series_values(temp_air, "temp_air")
    a = _finite_number(alpha, "alpha")
    if not 0.0 <= a < 1.0:
        raise ValueError(f"alpha must satisfy 0 ≤ alpha < 1, got {alpha!r} (EN 16798-1: 0.8)")
    if method not in ("exponential", "seven_day"):
        raise ValueError(f"method must be 'exponential' or 'seven_day', got {method!r}")
    if method == "seven_day" and a != 0.8:
        raise ValueError(
            f"method='seven_day' uses the fixed weights of alpha = 0.8, got alpha={alpha!r}; "
            "use method='exponential' for other alpha"
        )
    daily = _daily_mean(values, temp_air.index, step, "temp_air", partial_days)
    trm = _running_mean_daily(daily.to_numpy(), a, method, init)
    return pd.Series(trm, index=daily.index, name="running_mean_outdoor")


def adaptive_comfort_temperature(trm):
    """EN 16798-1 adaptive comfort temperature θc = 0.33 θrm + 18.8.

    Parameters
    ----------
    trm : float, array-like or pandas.Series
        Running mean outdoor temperature θrm [°C] (:func:`running_mean_outdoor`).

    Returns
    -------
    float, numpy.ndarray or pandas.Series
        θc [°C], same shape and index as ``trm``.

    Notes
    -----
    .. math:: θ_c = 0.33\\,θ_{rm} + 18.8

    No applicability range is applied here (see :func:`adaptive_limits`).

    References
    ----------
    EN 16798-1:2019, adaptive criteria for buildings without mechanical cooling (from memory,
    docs/references.md §5.2 [M]); same equation in EN 15251:2007 Annex A.

    Examples
    --------
    >>> round(adaptive_comfort_temperature(20.0), 10)
    25.4
    """
    arr, index = _plain(trm, "trm")
    out = 0.33 * arr + 18.8
    if index is not None:
        return pd.Series(out, index=index, name="comfort")
    return float(out) if out.ndim == 0 else out


def adaptive_limits(trm, category: str = "II") -> pd.DataFrame:
    """EN 16798-1 adaptive upper and lower limits of a category, with their applicability.

    Parameters
    ----------
    trm : float, array-like or pandas.Series
        Running mean outdoor temperature θrm [°C].
    category : {"I", "II", "III"}, default "II"
        EN 16798-1 category (I high, II medium / normal, III moderate expectation).

    Returns
    -------
    pandas.DataFrame
        Columns ``comfort``, ``upper``, ``lower`` [°C] and ``upper_applicable``,
        ``lower_applicable`` [bool]; index of ``trm`` if it is a Series, else a RangeIndex.

    Notes
    -----
    θ_upper = θc + Δ_up, θ_lower = θc − Δ_low with (Δ_up, Δ_low) = (2, 3), (3, 4), (4, 5) K for
    categories I, II, III (:data:`EN16798_ADAPTIVE_CATEGORIES`). The upper limits apply for
    10 °C < θrm < 30 °C, the lower limits for 15 °C < θrm < 30 °C (strict inequalities).

    References
    ----------
    EN 16798-1:2019, adaptive criteria (from memory, docs/references.md §5.2 [M]).
    """
    cat = _check_category(category, EN16798_ADAPTIVE_CATEGORIES, "EN 16798-1 adaptive")
    up, low = EN16798_ADAPTIVE_CATEGORIES[cat]
    arr, index = _plain(trm, "trm")
    arr = np.atleast_1d(arr)
    comfort = 0.33 * arr + 18.8
    return pd.DataFrame(
        {
            "comfort": comfort,
            "upper": comfort + up,
            "lower": comfort - low,
            "upper_applicable": (arr > 10.0) & (arr < 30.0),
            "lower_applicable": (arr > 15.0) & (arr < 30.0),
        },
        index=index,
    )


def _outdoor_on(
    t_op: pd.Series,
    t_name: str,
    temp_air_outdoor: pd.Series,
    step: pd.Timedelta,
    alpha: float,
    method: str,
    init,
    partial_days: str,
) -> tuple[pd.Series, pd.Series]:
    """Daily running mean of the outdoor series, and the same put onto the index of ``t_op``.

    The outdoor series may start earlier or end later than ``t_op`` (e.g. to include a
    warm-up period as running-mean history) but must contain every time stamp of ``t_op``.
    """
    _, ostep = _series_values(temp_air_outdoor, "temp_air_outdoor")
    oidx = temp_air_outdoor.index
    if ostep != step or str(oidx.tz) != str(t_op.index.tz) or not t_op.index.isin(oidx).all():
        raise ScheduleError(
            f"temp_air_outdoor must cover every time stamp of {t_name} with the same step and "
            f"time zone; got step {ostep}, tz {oidx.tz}, {oidx[0]} … {oidx[-1]} against step "
            f"{step}, tz {t_op.index.tz}, {t_op.index[0]} … {t_op.index[-1]}. Use the weather "
            "series of the simulation (it may start earlier, to give the running mean history)"
        )
    trm = running_mean_outdoor(
        temp_air_outdoor, alpha, method=method, init=init, partial_days=partial_days
    )
    return trm, daily_to_index(trm, t_op.index)


@dataclass(frozen=True, eq=False)
class AdaptiveAssessment:
    """EN 16798-1 adaptive assessment of one operative-temperature series.

    Attributes
    ----------
    category : str
        The category asked for.
    table : pandas.DataFrame
        One row per category (I, II, III); columns, over the occupied hours:
        ``occupied_hours`` [h]; ``hours_above_upper`` [h] and ``degree_hours_above_upper``
        [K·h] (only where the upper limit applies); ``hours_below_lower`` [h] and
        ``degree_hours_below_lower`` [K·h] (only where the lower limit applies);
        ``hours_upper_not_applicable``, ``hours_lower_not_applicable``,
        ``hours_no_limit_applicable`` [h]; ``hours_in_category`` [h] and
        ``share_in_category`` [–] (see Notes of :func:`adaptive_assessment`).
    hourly : pandas.DataFrame
        On the index of ``t_op``: ``t_op``, ``running_mean``, ``comfort``, ``upper``,
        ``lower`` [°C] of the chosen category, ``upper_applicable``, ``lower_applicable``,
        ``occupied`` [bool].
    running_mean : pandas.Series
        Daily θrm [°C] of the outdoor series.
    """

    category: str
    table: pd.DataFrame
    hourly: pd.DataFrame
    running_mean: pd.Series

    @property
    def share_in_category(self) -> float:
        """Share of the assessed occupied hours within the chosen category's limits [–]."""
        return float(self.table.loc[self.category, "share_in_category"])

    def _repr_html_(self):
        from thermonet.display import table_html

        return (f"<div class='tn-view'><p><strong>EN 16798-1 adaptive assessment</strong>, "
                f"category {self.category}: {100.0 * self.share_in_category:.1f} % of the "
                f"assessed occupied hours within the limits. Hours [h], degree-hours [K·h], "
                f"shares [–] per category:</p>{table_html(self.table)}</div>")


def adaptive_assessment(
    t_op: pd.Series,
    temp_air_outdoor: pd.Series,
    category: str = "II",
    occupied: pd.Series | None = None,
    *,
    alpha: float = 0.8,
    method: str = "exponential",
    init: str | float = "first_day",
    partial_days: str = "error",
) -> AdaptiveAssessment:
    """Hours and degree-hours outside the EN 16798-1 adaptive comfort limits.

    Parameters
    ----------
    t_op : pandas.Series
        Indoor operative temperature [°C], tz-aware regular index (hour ending).
    temp_air_outdoor : pandas.Series
        Outdoor air temperature [°C] with the same step and time zone, covering every time
        stamp of ``t_op`` in whole days (it may start earlier, giving the running mean history).
    category : {"I", "II", "III"}, default "II"
        Category reported by :attr:`AdaptiveAssessment.share_in_category` and ``hourly``;
        ``table`` holds all three.
    occupied : pandas.Series of bool, optional
        Occupied rows on the index of ``t_op``; default every row.
    alpha, method, init, partial_days
        Running-mean options, see :func:`running_mean_outdoor`.

    Returns
    -------
    AdaptiveAssessment

    Raises
    ------
    ScheduleError
        for invalid or misaligned series.
    ValueError
        for an unknown category or running-mean option.

    Notes
    -----
    For every occupied row (weight Δt = step [h]): above the upper limit means θop > θ_upper,
    counted only where 10 °C < θrm < 30 °C; below the lower limit means θop < θ_lower,
    counted only where 15 °C < θrm < 30 °C. Degree-hours are Σ (θop − θ_upper)·Δt and
    Σ (θ_lower − θop)·Δt over those rows. A row is "in category" when it is neither above an
    applicable upper limit nor below an applicable lower limit, and at least one limit
    applies; ``share_in_category`` = hours in category / occupied hours where at least one
    limit applies (NaN if there are none). EN 16798-1 does not state a pass mark here, so none
    is applied.

    References
    ----------
    EN 16798-1:2019, adaptive criteria for buildings without mechanical cooling (from memory,
    docs/references.md §5.2 [M]).
    """
    cat = _check_category(category, EN16798_ADAPTIVE_CATEGORIES, "EN 16798-1 adaptive")
    top, step = _series_values(t_op, "t_op")
    mask = _occupied_mask(occupied, t_op, "t_op")
    trm_daily, trm_h = _outdoor_on(
        t_op, "t_op", temp_air_outdoor, step, alpha, method, init, partial_days
    )
    dt = _step_hours(step)
    rows = {}
    hourly = None
    for name in EN16798_ADAPTIVE_CATEGORIES:
        lim = adaptive_limits(trm_h.to_numpy(), name)
        upper = lim["upper"].to_numpy()
        lower = lim["lower"].to_numpy()
        up_ok = lim["upper_applicable"].to_numpy()
        low_ok = lim["lower_applicable"].to_numpy()
        above = mask & up_ok & (top > upper)
        below = mask & low_ok & (top < lower)
        any_ok = mask & (up_ok | low_ok)
        in_cat = any_ok & ~above & ~below
        assessed = np.count_nonzero(any_ok) * dt
        rows[name] = {
            "occupied_hours": np.count_nonzero(mask) * dt,
            "hours_above_upper": np.count_nonzero(above) * dt,
            "degree_hours_above_upper": float(np.sum((top - upper)[above]) * dt),
            "hours_below_lower": np.count_nonzero(below) * dt,
            "degree_hours_below_lower": float(np.sum((lower - top)[below]) * dt),
            "hours_upper_not_applicable": np.count_nonzero(mask & ~up_ok) * dt,
            "hours_lower_not_applicable": np.count_nonzero(mask & ~low_ok) * dt,
            "hours_no_limit_applicable": np.count_nonzero(mask & ~up_ok & ~low_ok) * dt,
            "hours_in_category": np.count_nonzero(in_cat) * dt,
            "share_in_category": (np.count_nonzero(in_cat) * dt / assessed)
            if assessed > 0
            else float("nan"),
        }
        if name == cat:
            hourly = pd.DataFrame(
                {
                    "t_op": top,
                    "running_mean": trm_h.to_numpy(),
                    "comfort": lim["comfort"].to_numpy(),
                    "upper": upper,
                    "lower": lower,
                    "upper_applicable": up_ok,
                    "lower_applicable": low_ok,
                    "occupied": mask,
                },
                index=t_op.index,
            )
    table = pd.DataFrame.from_dict(rows, orient="index").astype(float)
    table.index.name = "category"
    return AdaptiveAssessment(category=cat, table=table, hourly=hourly, running_mean=trm_daily)


# --------------------------------------------------------------------------------------------
# CIBSE TM52 and TM59
# --------------------------------------------------------------------------------------------
def _round_half_up(x: np.ndarray) -> np.ndarray:
    """Round to whole numbers, halves upwards (4.5 → 5, −0.5 → 0), not to even.

    The value is first rounded to 1e-9 so that a difference meant to be 4.5 K but computed
    as 4.4999999999999964 K (floating-point noise of 0.33·Trm + 21.8) still rounds up.
    """
    return np.floor(np.round(x, 9) + 0.5)


def _season_mask(index: pd.DatetimeIndex, step: pd.Timedelta, months) -> np.ndarray:
    if months is None:
        return np.ones(len(index), dtype=bool)
    try:
        wanted = sorted({int(m) for m in months})
    except (TypeError, ValueError):
        raise ValueError(
            f"months must be None or a sequence of months 1 … 12, got {months!r}"
        ) from None
    if not wanted or wanted[0] < 1 or wanted[-1] > 12:
        raise ValueError(f"months must be None or a sequence of months 1 … 12, got {months!r}")
    return np.isin(np.asarray((index - step / 2).month), wanted)


@dataclass(frozen=True, eq=False)
class TM52Result:
    """CIBSE TM52 (2013) assessment: three criteria, fails when two or more fail.

    Attributes
    ----------
    category : str
        Category whose Tmax was used.
    criteria : tuple of CriterionResult
        Criterion 1 (percent of occupied season hours with ΔT ≥ 1 K, limit 3 %), criterion 2
        (worst daily weighted exceedance We, limit 6), criterion 3 (largest ΔT, limit 4 K).
    assessed_hours : float
        Occupied hours in the assessment season [h].
    exceedance_hours : float
        Criterion 1 numerator: assessed hours with ΔT ≥ 1 K [h].
    exceedance_percent : float
        Criterion 1 value [%].
    worst_we : float
        Criterion 2: largest daily weighted exceedance [K·h].
    worst_day : pandas.Timestamp or None
        Local midnight starting the day of ``worst_we`` (first such day); None if We = 0 on
        every day.
    days_we_above_6 : int
        Number of days with We > 6.
    max_delta_t : float
        Criterion 3: largest rounded ΔT over the assessed hours [K].
    hours_above_upper : float
        Assessed hours with ΔT > 4 K, i.e. above Tupp = Tmax + 4 K after rounding [h].
    n_failed : int
        Number of failed criteria.
    passed : bool
        True unless two or more criteria fail.
    hourly : pandas.DataFrame
        ``t_op``, ``running_mean``, ``t_max``, ``t_upp`` [°C], ``delta_t`` (rounded) [K],
        ``assessed`` [bool], on the index of ``t_op``.
    daily_we : pandas.Series
        We [K·h] per day of the season with assessed hours (index: local midnight).
    """

    category: str
    criteria: tuple[CriterionResult, CriterionResult, CriterionResult]
    assessed_hours: float
    exceedance_hours: float
    exceedance_percent: float
    worst_we: float
    worst_day: pd.Timestamp | None
    days_we_above_6: int
    max_delta_t: float
    hours_above_upper: float
    n_failed: int
    passed: bool
    hourly: pd.DataFrame
    daily_we: pd.Series

    def table(self) -> pd.DataFrame:
        """The three criteria as a DataFrame (value, limit, unit, passed, source)."""
        return _criteria_table(self.criteria)

    def _repr_html_(self):
        from thermonet.display import criteria_html

        return criteria_html(f"CIBSE TM52, category {self.category}", self.criteria,
                             passed=self.passed,
                             note=f"{self.assessed_hours:g} occupied hours assessed in "
                                  f"May–September; fails when two or more criteria fail.")


_TM52_SOURCE = "CIBSE TM52 (2013), docs/references.md §5.3"


def _tm52_core(
    top: np.ndarray,
    index: pd.DatetimeIndex,
    step: pd.Timedelta,
    trm_h: np.ndarray,
    mask: np.ndarray,
    category: str,
) -> TM52Result:
    dt = _step_hours(step)
    t_max = 0.33 * trm_h + TM52_CATEGORIES[category]
    delta = _round_half_up(top - t_max)
    assessed = np.count_nonzero(mask) * dt
    if assessed == 0:
        raise ScheduleError(
            "no occupied hour falls in the assessment season (by default 1 May – 30 September, "
            "days of the interval mid-points): TM52 criteria are undefined. Check occupied, "
            "months and the period of t_op"
        )
    # criterion 1: hours with ΔT ≥ 1 K, as a share of the occupied season hours
    exceed = np.count_nonzero(mask & (delta >= 1.0)) * dt
    percent = 100.0 * exceed / assessed
    c1 = CriterionResult(
        name="TM52 criterion 1: hours of exceedance",
        value=percent,
        limit=3.0,
        unit="%",
        passed=bool(exceed <= 0.03 * assessed + _TOL),
        source=_TM52_SOURCE,
    )
    # criterion 2: daily weighted exceedance We = Σ he·ΔT (ΔT > 0)
    weighted = np.where(mask, np.maximum(delta, 0.0), 0.0) * dt
    days = _day_labels(index, step)
    we = pd.Series(weighted, index=days).groupby(level=0, sort=True).sum()
    season_days = pd.unique(days[mask])
    we = we.loc[season_days]
    we.name = "we"
    we.index.name = "date"
    worst = float(we.max())
    worst_day = we.idxmax() if worst > 0 else None
    c2 = _criterion("TM52 criterion 2: daily weighted exceedance", worst, 6.0, "K·h",
                    _TM52_SOURCE)
    # criterion 3: ΔT ≤ 4 K at every assessed hour
    max_dt = float(np.max(delta[mask]))
    above_upp = np.count_nonzero(mask & (delta > 4.0)) * dt
    c3 = _criterion("TM52 criterion 3: upper limit temperature", max_dt, 4.0, "K", _TM52_SOURCE)
    criteria = (c1, c2, c3)
    n_failed = sum(not c.passed for c in criteria)
    hourly = pd.DataFrame(
        {
            "t_op": top,
            "running_mean": trm_h,
            "t_max": t_max,
            "t_upp": t_max + 4.0,
            "delta_t": delta,
            "assessed": mask,
        },
        index=index,
    )
    return TM52Result(
        category=category,
        criteria=criteria,
        assessed_hours=float(assessed),
        exceedance_hours=float(exceed),
        exceedance_percent=float(percent),
        worst_we=worst,
        worst_day=worst_day,
        days_we_above_6=int((we > 6.0 + _TOL).sum()),
        max_delta_t=max_dt,
        hours_above_upper=float(above_upp),
        n_failed=int(n_failed),
        passed=n_failed < 2,
        hourly=hourly,
        daily_we=we,
    )


def tm52(
    t_op: pd.Series,
    temp_air_outdoor: pd.Series,
    occupied: pd.Series | None = None,
    category: str = "II",
    *,
    months: Sequence[int] | None = (5, 6, 7, 8, 9),
    alpha: float = 0.8,
    method: str = "exponential",
    init: str | float = "first_day",
    partial_days: str = "error",
) -> TM52Result:
    """CIBSE TM52 (2013) overheating criteria for free-running buildings.

    Parameters
    ----------
    t_op : pandas.Series
        Indoor operative temperature [°C], tz-aware regular index (hour ending).
    temp_air_outdoor : pandas.Series
        Outdoor air temperature [°C], same step and zone, covering every time stamp of
        ``t_op`` in whole days (may start earlier to give the running mean its history).
    occupied : pandas.Series of bool, optional
        Occupied rows on the index of ``t_op``; default every row.
    category : {"I", "II", "III"}, default "II"
        Category of the maximum acceptable temperature (:data:`TM52_CATEGORIES`).
    months : sequence of int or None, default (5, 6, 7, 8, 9)
        Assessment season by the month of each interval mid-point: 1 May – 30 September.
        ``None`` assesses every row.
    alpha, method, init, partial_days
        Running-mean options, see :func:`running_mean_outdoor`.

    Returns
    -------
    TM52Result

    Raises
    ------
    ScheduleError
        for invalid or misaligned series, or no occupied hour in the season.
    ValueError
        for an unknown category or option.

    Notes
    -----
    .. math::

        T_{max} = 0.33\\,T_{rm} + 21.8 \\;(\\text{cat. II; I: } 20.8,\\ \\text{III: } 22.8)

        ΔT = \\operatorname{round}(T_{op} − T_{max})

    ΔT is rounded to the nearest whole kelvin with halves rounded UP (4.4 → 4, 4.5 → 5,
    2.5 → 3; "round half up", not Python's round-half-to-even), after removing floating-point
    noise at 1e-9 K. Over the occupied hours of the season, each of weight Δt = step [h]:

    1. hours of exceedance: Σ Δt where ΔT ≥ 1 K must not exceed 3 % of the occupied hours;
    2. daily weighted exceedance: W_e = Σ Δt·ΔT over the hours with ΔT > 0 must not exceed
       6 (K·h) in any one day (days of the interval mid-points);
    3. upper limit: ΔT ≤ 4 K at every hour, i.e. T_op ≤ T_upp = T_max + 4 K (after rounding).

    The building is deemed to overheat when it fails two or more criteria. Criterion 1's
    season (1 May – 30 September) is confirmed; applying the same occupied season hours to
    criteria 2 and 3 is this module's reading of TM52 (from memory) — pass ``months=None``
    to assess them over the whole period.

    References
    ----------
    CIBSE TM52 (2013), The limits of thermal comfort: avoiding overheating in European
    buildings, Chartered Institution of Building Services Engineers, London, section 6.
    Tmax for category II and the criteria: docs/references.md §5.3 [C] (CIBSE Journal Aug 2013;
    buildingenergyexperts.co.uk; energaia.co.uk); the We formula [M].
    """
    cat = _check_category(category, TM52_CATEGORIES, "CIBSE TM52")
    top, step = _series_values(t_op, "t_op")
    mask = _occupied_mask(occupied, t_op, "t_op")
    _, trm_h = _outdoor_on(
        t_op, "t_op", temp_air_outdoor, step, alpha, method, init, partial_days
    )
    season = _season_mask(t_op.index, step, months)
    return _tm52_core(top, t_op.index, step, trm_h.to_numpy(), mask & season, cat)


@dataclass(frozen=True, eq=False)
class TM59Result:
    """CIBSE TM59 (2017) assessment of one room.

    Attributes
    ----------
    room_type : str
        ``"living"``, ``"kitchen"`` or ``"bedroom"``.
    ventilation : str
        ``"natural"`` or ``"mechanical"``.
    criteria : tuple of CriterionResult
        Natural ventilation: criterion (a) [%] and, for bedrooms, criterion (b) [h];
        mechanical: the 26 °C / 3 % criterion [%]. All must pass.
    passed : bool
        True when every criterion passes.
    occupied_hours : float
        Occupied hours of the whole series [h].
    night_hours : float or None
        Bedrooms (natural): hours of the 22:00–07:00 window in the series [h].
    hours_above_26 : float or None
        Bedrooms (natural): window hours above 26 °C; mechanical: occupied hours above
        26 °C [h].
    tm52 : TM52Result or None
        Natural ventilation: the TM52 assessment behind criterion (a).
    """

    room_type: str
    ventilation: str
    criteria: tuple[CriterionResult, ...]
    passed: bool
    occupied_hours: float
    night_hours: float | None
    hours_above_26: float | None
    tm52: TM52Result | None

    def table(self) -> pd.DataFrame:
        """The criteria as a DataFrame (value, limit, unit, passed, source)."""
        return _criteria_table(self.criteria)

    def _repr_html_(self):
        from thermonet.display import criteria_html

        return criteria_html(f"CIBSE TM59, {self.room_type}, {self.ventilation} ventilation",
                             self.criteria, passed=self.passed,
                             note=f"{self.occupied_hours:g} occupied hours assessed.")


_TM59_SOURCE = "CIBSE TM59 (2017), docs/references.md §5.4"


def tm59(
    t_op_room: pd.Series,
    temp_air_outdoor: pd.Series | None,
    room_type: str = "living",
    occupied: pd.Series | None = None,
    ventilation: str = "natural",
    *,
    category: str = "II",
    alpha: float = 0.8,
    method: str = "exponential",
    init: str | float = "first_day",
    partial_days: str = "error",
) -> TM59Result:
    """CIBSE TM59 (2017) overheating criteria for one room of a home.

    Parameters
    ----------
    t_op_room : pandas.Series
        Operative temperature of the room [°C], tz-aware regular index (hour ending),
        normally one year.
    temp_air_outdoor : pandas.Series or None
        Outdoor air temperature [°C] (as for :func:`tm52`); needed for natural ventilation;
        not used for mechanical ventilation (pass None).
    room_type : {"living", "kitchen", "bedroom"}, default "living"
        Selects the default occupancy and, for bedrooms, criterion (b).
    occupied : pandas.Series of bool, optional
        Occupied rows on the index of ``t_op_room``. Default
        (:data:`TM59_DEFAULT_OCCUPANCY`, from memory): living rooms and kitchens 09:00–22:00,
        bedrooms all day.
    ventilation : {"natural", "mechanical"}, default "natural"
        Predominantly naturally ventilated, or mechanically ventilated / restricted openings.
    category : {"I", "II", "III"}, default "II"
        TM52 category of criterion (a) (TM59 uses II; I for vulnerable occupants, from memory).
        Not used for mechanical ventilation.
    alpha, method, init, partial_days
        Running-mean options, see :func:`running_mean_outdoor` (natural ventilation only).

    Returns
    -------
    TM59Result

    Raises
    ------
    ScheduleError
        for invalid or misaligned series.
    ValueError
        for an unknown room type, ventilation or category, or natural ventilation without
        ``temp_air_outdoor``.

    Notes
    -----
    Natural ventilation:

    (a) every room: TM52 criterion 1 on the occupied hours of 1 May – 30 September — hours
        with ΔT ≥ 1 K ≤ 3 % of those hours (:func:`tm52`);
    (b) bedrooms only: θop over the 22:00–07:00 window shall exceed 26 °C (θop > 26 °C) for
        no more than 1 % of the annual hours of that window. For a year of 365 nights the
        window holds 3285 h and 1 % is 32.85 h, so 32 h above 26 °C pass and 33 h fail
        (docs/references.md §5.4). The window is taken by clock time (interval mid-points between
        22:00 and 07:00), independent of ``occupied``; the 1 % applies to the window hours
        actually present in the series.

    Bedrooms must pass (a) and (b). Mechanical ventilation: θop > 26 °C for no more than 3 %
    of the annual occupied hours (CIBSE Guide A fixed criterion, from memory). Comparisons
    with limits carry a 1e-9 tolerance against floating-point noise only.

    References
    ----------
    CIBSE TM59 (2017), Design methodology for the assessment of overheating risk in homes,
    Chartered Institution of Building Services Engineers, London. Criteria (a) and (b):
    docs/references.md §5.4 [C] (tek-ltd.com); 32/33 h and the mechanical criterion [M].
    """
    if room_type not in TM59_DEFAULT_OCCUPANCY:
        raise ValueError(
            f"room_type must be one of {', '.join(map(repr, TM59_DEFAULT_OCCUPANCY))}, "
            f"got {room_type!r}"
        )
    if ventilation not in ("natural", "mechanical"):
        raise ValueError(f"ventilation must be 'natural' or 'mechanical', got {ventilation!r}")
    cat = _check_category(category, TM52_CATEGORIES, "CIBSE TM52 via TM59")
    top, step = _series_values(t_op_room, "t_op_room")
    if occupied is None:
        window = TM59_DEFAULT_OCCUPANCY[room_type]
        if window is None:
            mask = np.ones(len(top), dtype=bool)
        else:
            mask = in_time_window(t_op_room.index, *window).to_numpy()
    else:
        mask = _occupied_mask(occupied, t_op_room, "t_op_room")
    dt = _step_hours(step)
    occupied_hours = float(np.count_nonzero(mask) * dt)
    if occupied_hours == 0:
        raise ScheduleError("occupied has no True row: TM59 criteria are undefined")

    if ventilation == "mechanical":
        above = float(np.count_nonzero(mask & (top > 26.0)) * dt)
        crit = CriterionResult(
            name="TM59 mechanical: occupied hours above 26 °C",
            value=100.0 * above / occupied_hours,
            limit=3.0,
            unit="%",
            passed=bool(above <= 0.03 * occupied_hours + _TOL),
            source=_TM59_SOURCE,
        )
        return TM59Result(
            room_type=room_type,
            ventilation=ventilation,
            criteria=(crit,),
            passed=crit.passed,
            occupied_hours=occupied_hours,
            night_hours=None,
            hours_above_26=above,
            tm52=None,
        )

    if temp_air_outdoor is None:
        raise ValueError(
            "temp_air_outdoor is needed for natural ventilation (criterion (a) uses the running "
            "mean outdoor temperature); pass the weather's temp_air"
        )
    _, trm_h = _outdoor_on(
        t_op_room, "t_op_room", temp_air_outdoor, step, alpha, method, init, partial_days
    )
    season = _season_mask(t_op_room.index, step, (5, 6, 7, 8, 9))
    res52 = _tm52_core(top, t_op_room.index, step, trm_h.to_numpy(), mask & season, cat)
    c1 = res52.criteria[0]
    crit_a = CriterionResult(
        name="TM59 criterion (a): TM52 criterion 1 on occupied hours",
        value=c1.value,
        limit=c1.limit,
        unit=c1.unit,
        passed=c1.passed,
        source=_TM59_SOURCE,
    )
    criteria: tuple[CriterionResult, ...] = (crit_a,)
    night_hours = None
    above = None
    if room_type == "bedroom":
        night = in_time_window(t_op_room.index, "22:00", "07:00").to_numpy()
        night_hours = float(np.count_nonzero(night) * dt)
        above = float(np.count_nonzero(night & (top > 26.0)) * dt)
        criteria = (
            crit_a,
            _criterion(
                "TM59 criterion (b): bedroom hours above 26 °C, 22:00–07:00",
                above,
                0.01 * night_hours,
                "h",
                _TM59_SOURCE,
            ),
        )
    return TM59Result(
        room_type=room_type,
        ventilation=ventilation,
        criteria=criteria,
        passed=all(c.passed for c in criteria),
        occupied_hours=occupied_hours,
        night_hours=night_hours,
        hours_above_26=above,
        tm52=res52,
    )


# --------------------------------------------------------------------------------------------
# demand metrics
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class DemandSummary:
    """Heating and cooling energy and peaks of a simulated period, per floor area.

    Attributes
    ----------
    floor_area : float
        Reference (treated) floor area [m²].
    period_hours : float
        Length of the series [h].
    heating_kwh, heating_kwh_m2 : float
        Heating energy over the period [kWh] and per floor area [kWh/m²].
    heating_peak_w, heating_peak_w_m2 : float
        Largest step-mean heating power [W] and per floor area [W/m²].
    heating_peak_time : pandas.Timestamp
        Label (END) of the interval of the heating peak (first if tied).
    heating_peak_date : datetime.date
        Calendar date of that interval's mid-point.
    cooling_kwh, cooling_kwh_m2, cooling_peak_w, cooling_peak_w_m2 : float or None
        The same for cooling (heat removed, positive), None without ``cooling_w``.
    cooling_peak_time, cooling_peak_date
        As for heating, None without ``cooling_w``.
    very_low_energy : tuple of CriterionResult or None
        With ``very_low_energy=True``: heating demand ≤ 15 kWh/(m²a) and heating load
        ≤ 10 W/m² (either suffices).
    very_low_energy_passed : bool or None
        True when either very-low-energy criterion passes.
    """

    floor_area: float
    period_hours: float
    heating_kwh: float
    heating_kwh_m2: float
    heating_peak_w: float
    heating_peak_w_m2: float
    heating_peak_time: pd.Timestamp
    heating_peak_date: _dt.date
    cooling_kwh: float | None = None
    cooling_kwh_m2: float | None = None
    cooling_peak_w: float | None = None
    cooling_peak_w_m2: float | None = None
    cooling_peak_time: pd.Timestamp | None = None
    cooling_peak_date: _dt.date | None = None
    very_low_energy: tuple[CriterionResult, CriterionResult] | None = None
    very_low_energy_passed: bool | None = None

    def _repr_html_(self):
        from thermonet.display import table_html

        rows = [("heating energy", self.heating_kwh, "kWh"),
                ("heating per floor area", self.heating_kwh_m2, "kWh/m²"),
                ("peak heating (step mean)", self.heating_peak_w, "W"),
                ("peak heating per floor area", self.heating_peak_w_m2, "W/m²")]
        if self.cooling_kwh is not None:
            rows += [("cooling energy", self.cooling_kwh, "kWh"),
                     ("cooling per floor area", self.cooling_kwh_m2, "kWh/m²"),
                     ("peak cooling (step mean)", self.cooling_peak_w, "W"),
                     ("peak cooling per floor area", self.cooling_peak_w_m2, "W/m²")]
        df = pd.DataFrame(rows, columns=["quantity", "value", "unit"]).set_index("quantity")
        return (f"<div class='tn-view'><p><strong>Demand</strong> over {self.period_hours:g} h, "
                f"floor area {self.floor_area:g} m²</p>{table_html(df)}</div>")


def _energy_and_peak(values: np.ndarray, index: pd.DatetimeIndex, step: pd.Timedelta):
    kwh = float(values.sum() * _step_hours(step) / 1000.0)  # Wh → kWh: /1000
    k = int(np.argmax(values))
    return kwh, float(values[k]), index[k], (index[k] - step / 2).date()


def demand_summary(
    heating_w: pd.Series,
    cooling_w: pd.Series | None,
    floor_area: float,
    *,
    very_low_energy: bool = False,
) -> DemandSummary:
    """Energy and peak power of heating and cooling, per floor area, for design sizing.

    Parameters
    ----------
    heating_w : pandas.Series
        Heating power [W], the mean over each step, ≥ 0, tz-aware regular index (hour ending).
    cooling_w : pandas.Series or None
        Cooling power [W] on the same index, None if there is no cooling: either all ≥ 0
        (heat removed) or all ≤ 0 (the project's sign, heat into the zone); reported as heat
        removed (positive). Mixed signs are refused.
    floor_area : float
        Reference (treated) floor area [m²], > 0.
    very_low_energy : bool, default False
        Also judge the very-low-energy criteria; the series must then cover one year
        (8760 h or 8784 h).

    Returns
    -------
    DemandSummary

    Raises
    ------
    ScheduleError
        for invalid or misaligned series, negative heating, mixed-sign cooling, or a period
        other than one year with ``very_low_energy=True``.
    ValueError
        for a floor area that is not finite and > 0.

    Notes
    -----
    E = Σ P·Δt / 1000 [kWh] with Δt = step [h]; the peak is the largest step-mean power, so it
    depends on the step (a 15-min peak is higher than the hourly one). Very-low-energy
    (Passive House) criteria: annual heating demand ≤ 15 kWh/(m²a) OR heating load ≤ 10 W/m²
    of treated floor area (docs/references.md §5.5 [C]). The Passive House heating load is a
    design-day calculation; the simulated peak used here is a proxy that depends on the
    weather year and the control, so treat a near-limit result with care.

    References
    ----------
    Passive House criteria — docs/references.md §5.5 [C]
    (https://study.passivehouseacademy.ac.nz/mod/glossary/showentry.php?eid=30).
    """
    area = _finite_number(floor_area, "floor_area")
    if area <= 0.0:
        raise ValueError(f"floor_area must be > 0 [m²], got {floor_area!r}")
    heat, step = _series_values(heating_w, "heating_w")
    if (heat < 0.0).any():
        k = int(np.argmax(heat < 0.0))
        raise ScheduleError(
            f"heating_w must be ≥ 0 [W], got {heat[k]} at {heating_w.index[k]}; pass the heating "
            "power only (cooling separately as cooling_w)"
        )
    h_kwh, h_peak, h_time, h_date = _energy_and_peak(heat, heating_w.index, step)
    fields: dict = {}
    if cooling_w is not None:
        cool, _ = _series_values(cooling_w, "cooling_w")
        _same_index(heating_w, "heating_w", cooling_w, "cooling_w")
        if (cool > 0.0).any() and (cool < 0.0).any():
            raise ScheduleError(
                "cooling_w has both positive and negative values; give it with one sign "
                "(≥ 0 as heat removed, or ≤ 0 as heat into the zone)"
            )
        cool = np.abs(cool)
        c_kwh, c_peak, c_time, c_date = _energy_and_peak(cool, cooling_w.index, step)
        fields.update(
            cooling_kwh=c_kwh,
            cooling_kwh_m2=c_kwh / area,
            cooling_peak_w=c_peak,
            cooling_peak_w_m2=c_peak / area,
            cooling_peak_time=c_time,
            cooling_peak_date=c_date,
        )
    period_hours = len(heat) * _step_hours(step)
    if very_low_energy:
        if period_hours not in (8760.0, 8784.0):
            raise ScheduleError(
                f"very_low_energy=True judges ANNUAL heating demand; heating_w covers "
                f"{period_hours:g} h, not one year (8760 h or 8784 h). Pass one full year"
            )
        source = "Passive House criteria, docs/references.md §5.5"
        crit = (
            _criterion("heating demand", h_kwh / area, 15.0, "kWh/(m²a)", source),
            _criterion("heating load (simulated peak)", h_peak / area, 10.0, "W/m²", source),
        )
        fields.update(very_low_energy=crit, very_low_energy_passed=crit[0].passed or crit[1].passed)
    return DemandSummary(
        floor_area=area,
        period_hours=period_hours,
        heating_kwh=h_kwh,
        heating_kwh_m2=h_kwh / area,
        heating_peak_w=h_peak,
        heating_peak_w_m2=h_peak / area,
        heating_peak_time=h_time,
        heating_peak_date=h_date,
        **fields,
    )
