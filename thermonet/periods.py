"""Daily, monthly and yearly totals and means of interval-ending results.

thermonet labels each row by the END of its interval: with hourly steps the row labelled
``2025-02-01 00:00`` is the last hour of January. A plain ``df.resample("MS").sum()`` puts that
hour into February (and a year of results into 13 months). The functions here attach each row
to the period of its interval MID-POINT (label − step/2, the rule of
:func:`thermonet.comfort.interval_midpoints` and :meth:`thermonet.Results.balance`) and label
each period by its start.

=========================== ============================================================
function                    what it returns per period
=========================== ============================================================
:func:`period_sums`         sum of the rows (for tables already in kWh, e.g. a balance)
:func:`period_energy`       energy [kWh] of powers [W] (Σ P·Δt / 1000)
:func:`period_means`        time mean of the rows (temperatures [°C], powers [W])
:func:`period_max`          largest row (peak step-mean power, warmest hour)
:func:`period_hours`        hours of the period covered by the data [h]
=========================== ============================================================

``freq`` is a pandas offset alias: ``"D"`` (days), ``"W"`` (weeks), ``"MS"`` (months),
``"QS"``, ``"YS"`` (years). Days and months follow the local clock of the index's time zone.
A period at either end that the data cover only partly is kept; :func:`period_hours` says how
many hours each period holds, so you can drop incomplete ones yourself.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from thermonet.errors import ScheduleError

__all__ = ["period_energy", "period_hours", "period_max", "period_means", "period_sums"]

#: Wh per kWh (definition of the kilo prefix).
WH_PER_KWH = 1000.0


def check_index(data: object, name: str = "data") -> pd.Timedelta:
    """Check that ``data`` is a Series or DataFrame on a regular tz-aware index; its step.

    Parameters
    ----------
    data : pandas.Series or pandas.DataFrame
        Time series with a tz-aware, increasing DatetimeIndex of one constant step.
    name : str, default "data"
        How the data are called in error messages.

    Returns
    -------
    pandas.Timedelta
        The step.

    Raises
    ------
    TypeError
        ``data`` is not a Series or DataFrame.
    ScheduleError
        Index not a tz-aware DatetimeIndex, fewer than 2 rows, not increasing or not regular.
    """
    if not isinstance(data, (pd.Series, pd.DataFrame)):
        raise TypeError(f"{name} must be a pandas Series or DataFrame, got {type(data).__name__}")
    index = data.index
    if not isinstance(index, pd.DatetimeIndex) or index.tz is None:
        raise ScheduleError(f"{name} must have a tz-aware DatetimeIndex (the simulation "
                            f"index), got {type(index).__name__} with tz "
                            f"{getattr(index, 'tz', None)}; localize it first")
    if len(index) < 2:
        raise ScheduleError(f"{name} needs at least 2 rows to know its step, got {len(index)}")
    diffs = np.diff(index.asi8)
    if (diffs <= 0).any() or (diffs != diffs[0]).any():
        k = int(np.flatnonzero((diffs <= 0) | (diffs != diffs[0]))[0])
        raise ScheduleError(f"{name} index must increase by one constant step; it goes from "
                            f"{index[k]} to {index[k + 1]} after a step of "
                            f"{index[1] - index[0]}; resample to a regular step first")
    return pd.Timedelta(index[1] - index[0])


def _by_period(data, freq: str, name: str):
    step = check_index(data, name)
    if not isinstance(freq, str) or not freq:
        raise TypeError(f"freq must be a pandas offset alias such as 'D', 'MS' or 'YS', "
                        f"got {freq!r}")
    try:
        shifted = data.set_axis(data.index - step / 2)
        return shifted.resample(freq), step
    except ValueError as exc:
        raise ValueError(f"freq {freq!r} is not a pandas offset alias usable here ({exc}); "
                         "use e.g. 'D', 'W', 'MS', 'QS' or 'YS'") from None


def _keep_attrs(out, data, unit=None):
    out.attrs = dict(data.attrs)
    if unit is not None:
        out.attrs["unit"] = unit
    return out


def period_sums(data, freq: str):
    """Sum of the rows per period, each row in the period of its interval mid-point.

    Parameters
    ----------
    data : pandas.Series or pandas.DataFrame
        Quantities per step that add up (e.g. kWh per step of ``res.balance(nodes)``), on a
        regular tz-aware index whose labels END their intervals.
    freq : str
        pandas offset alias of the periods (``"D"``, ``"MS"``, ``"YS"`` ...).

    Returns
    -------
    pandas.Series or pandas.DataFrame
        One row per period, labelled by the period's start (local time); same unit as
        ``data`` (``attrs`` kept).

    Raises
    ------
    TypeError, ScheduleError, ValueError
        See :func:`check_index`; ``freq`` not an offset alias.

    Examples
    --------
    >>> idx = pd.date_range("2025-01-31 01:00", periods=48, freq="h", tz="UTC")
    >>> period_sums(pd.Series(1.0, idx), "MS").tolist()   # 23 h in January, 25 in February
    [24.0, 24.0]
    """
    grouped, _ = _by_period(data, freq, "data")
    return _keep_attrs(grouped.sum(), data)


def period_energy(power, freq: str):
    """Energy per period [kWh] of powers [W] that are means over each step.

    Parameters
    ----------
    power : pandas.Series or pandas.DataFrame
        Step-mean powers [W] (``res.heating``, ``res.flows``, ``res.sources``) on a regular
        tz-aware interval-ending index.
    freq : str
        pandas offset alias of the periods (``"D"``, ``"MS"``, ``"YS"`` ...).

    Returns
    -------
    pandas.Series or pandas.DataFrame
        E = Σ P·Δt / 1000 [kWh] per period (Δt the step [h]), labelled by the period start;
        ``attrs["unit"]`` is "kWh".

    Raises
    ------
    TypeError, ScheduleError, ValueError
        See :func:`period_sums`.
    """
    grouped, step = _by_period(power, freq, "power")
    hours = step / pd.Timedelta(hours=1)
    return _keep_attrs(grouped.sum() * (hours / WH_PER_KWH), power, "kWh")


def period_means(data, freq: str):
    """Time mean of the rows per period (all rows have the same step, so a plain mean).

    Parameters
    ----------
    data : pandas.Series or pandas.DataFrame
        Step means or end-of-step values (temperatures [°C], powers [W]) on a regular
        tz-aware interval-ending index.
    freq : str
        pandas offset alias of the periods (``"D"``, ``"MS"``, ``"YS"`` ...).

    Returns
    -------
    pandas.Series or pandas.DataFrame
        Mean per period in the unit of ``data``, labelled by the period start (``attrs``
        kept).

    Raises
    ------
    TypeError, ScheduleError, ValueError
        See :func:`period_sums`.
    """
    grouped, _ = _by_period(data, freq, "data")
    return _keep_attrs(grouped.mean(), data)


def period_max(data, freq: str):
    """Largest row per period (e.g. the peak step-mean heating power of each month).

    Parameters
    ----------
    data : pandas.Series or pandas.DataFrame
        Values on a regular tz-aware interval-ending index, any unit.
    freq : str
        pandas offset alias of the periods (``"D"``, ``"MS"``, ``"YS"`` ...).

    Returns
    -------
    pandas.Series or pandas.DataFrame
        Maximum per period, labelled by the period start (``attrs`` kept).

    Raises
    ------
    TypeError, ScheduleError, ValueError
        See :func:`period_sums`.
    """
    grouped, _ = _by_period(data, freq, "data")
    return _keep_attrs(grouped.max(), data)


def period_hours(index: pd.DatetimeIndex, freq: str) -> pd.Series:
    """Hours of each period covered by an interval-ending index [h].

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Regular tz-aware index whose labels END their intervals (a result's index).
    freq : str
        pandas offset alias of the periods (``"D"``, ``"MS"``, ``"YS"`` ...).

    Returns
    -------
    pandas.Series
        Hours [h] per period, labelled by the period start; compare with the length of the
        period to find incomplete first and last periods.

    Raises
    ------
    TypeError, ScheduleError, ValueError
        See :func:`period_sums`.
    """
    if not isinstance(index, pd.DatetimeIndex):
        raise TypeError(f"index must be a pandas DatetimeIndex, got {type(index).__name__}")
    grouped, step = _by_period(pd.Series(1.0, index=index), freq, "index")
    out = grouped.sum() * (step / pd.Timedelta(hours=1))
    out.attrs["unit"] = "h"
    return out.rename("hours")
