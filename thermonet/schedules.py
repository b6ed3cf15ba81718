"""Schedules and time axes: aligning Series to the simulation index, and simple profiles.

Convention: a row labelled ``t`` describes the interval ``(t − Δt, t]`` (interval ending), and
every input is held constant over its interval (zero-order hold).
"""

from __future__ import annotations

import weakref

import numpy as np
import pandas as pd

from thermonet.errors import ScheduleError

#: Steps of indexes that passed :func:`check_index`, by ``id(index)``: (weak reference to
#: the index, its step). A pandas Index is immutable, so an index checked once stays valid;
#: an entry is dropped when its index is garbage-collected (the id may then be reused).
_CHECKED: dict = {}


def _forget(key: int) -> None:
    _CHECKED.pop(key, None)


def check_index(index: pd.DatetimeIndex, what: str = "weather") -> pd.Timedelta:
    """Check a simulation index and return its step.

    An index that passed once is not checked again (indexes are immutable): its step is
    remembered for as long as the index object lives.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        The simulation index.
    what : str, default "weather"
        How the index is named in error messages.

    Raises
    ------
    ScheduleError
        If the index is not a tz-aware, strictly increasing DatetimeIndex with a constant step.
    """
    hit = _CHECKED.get(id(index))
    if hit is not None and hit[0]() is index:
        return hit[1]
    if not isinstance(index, pd.DatetimeIndex):
        raise ScheduleError(f"{what}: the index must be a pandas DatetimeIndex, got "
                            f"{type(index).__name__}")
    if index.tz is None:
        raise ScheduleError(f"{what}: the index is tz-naive; localise it first, e.g. "
                            "df.tz_localize('Etc/GMT-1')")
    if len(index) < 2:
        raise ScheduleError(f"{what}: needs at least 2 rows, got {len(index)}")
    if index.has_duplicates:
        dup = index[index.duplicated()][0]
        raise ScheduleError(f"{what}: duplicate timestamp {dup}; drop or aggregate duplicates")
    d = np.diff(index.as_unit("ns").asi8)
    if (d <= 0).any():
        i = int((d <= 0).argmax())
        raise ScheduleError(f"{what}: index not increasing at {index[i + 1]}; sort it first")
    if (d != d[0]).any():
        i = int((d != d[0]).argmax())
        raise ScheduleError(
            f"{what}: irregular step: {pd.Timedelta(int(d[0]), 'ns')} then "
            f"{pd.Timedelta(int(d[i]), 'ns')} at {index[i + 1]} (a gap or uneven sampling); "
            "resample to a constant step first, e.g. df.resample('1h').mean()")
    step = pd.Timedelta(int(d[0]), "ns")
    key = id(index)
    try:
        _CHECKED[key] = (weakref.ref(index, lambda _ref, key=key: _forget(key)), step)
    except TypeError:          # an index type without weak references: checked every time
        pass
    return step


def align(series: pd.Series, index: pd.DatetimeIndex, what: str) -> np.ndarray:
    """Values of ``series`` on ``index`` as float array; refuse anything that does not align.

    The Series must carry exactly the timestamps of ``index`` (any time zone; compared as
    instants). Nothing is interpolated or filled.

    Parameters
    ----------
    series : pandas.Series
        The schedule.
    index : pandas.DatetimeIndex
        The simulation index.
    what : str
        How the schedule is named in error messages.
    """
    if not isinstance(series.index, pd.DatetimeIndex):
        raise ScheduleError(f"{what}: needs a DatetimeIndex aligned to the weather")
    if series.index.tz is None:
        raise ScheduleError(f"{what}: its index is tz-naive while the weather's is "
                            f"{index.tz}; localise it to the weather's time zone")
    if len(series) != len(index):
        raise ScheduleError(f"{what}: has {len(series)} rows, the weather has {len(index)}; "
                            "build it on the weather's index (weather.index)")
    same = series.index.as_unit("ns").asi8 == index.as_unit("ns").asi8
    if not same.all():
        i = int((~same).argmax())
        raise ScheduleError(f"{what}: timestamp {series.index[i]} does not match the weather's "
                            f"{index[i]}; reindex it on weather.index")
    values = np.asarray(series, dtype=float)
    if not np.isfinite(values).all():
        i = int((~np.isfinite(values)).argmax())
        raise ScheduleError(f"{what}: NaN/inf at {index[i]}; fill it explicitly")
    return values


def weekly_profile(index: pd.DatetimeIndex, weekday, weekend=None, *, name=None) -> pd.Series:
    """A schedule from 24 hourly values for weekdays and for weekends.

    Parameters
    ----------
    index : DatetimeIndex
        Simulation index (interval ending); each row takes the value of the clock hour its
        interval mid-point falls in, in the index's local time.
    weekday, weekend : sequence of 24 floats
        Values for hours 0–23 (Monday–Friday, Saturday–Sunday; weekend defaults to weekday).
    name : str, optional
        Name of the returned Series.

    Returns
    -------
    pandas.Series
    """
    weekday = np.asarray(weekday, dtype=float)
    weekend = weekday if weekend is None else np.asarray(weekend, dtype=float)
    for arr, what in ((weekday, "weekday"), (weekend, "weekend")):
        if arr.shape != (24,):
            raise ScheduleError(f"weekly_profile: {what} needs 24 hourly values, got "
                                f"{arr.shape}")
    step = check_index(index, "weekly_profile index")
    mid = index - step / 2
    hour = np.asarray(mid.hour)
    is_weekend = np.asarray(mid.dayofweek) >= 5
    values = np.where(is_weekend, weekend[hour], weekday[hour])
    return pd.Series(values, index=index, name=name)
