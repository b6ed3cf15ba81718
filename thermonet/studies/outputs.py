"""Study outputs of one variant, judged as practitioners judge a room.

Overheating is judged on a room's **operative** temperature over its **occupied** hours, not
on a node's air temperature over the whole year. The functions here take one variant's
:class:`thermonet.Results` (from :func:`thermonet.simulate` or
:func:`thermonet.studies.variant_traces`) and the operative-temperature Series of a room, and
return the numbers a design study tabulates per variant, as a flat ``dict`` of named values
(one row of a study table). Every number comes from the criteria of
:mod:`thermonet.comfort`; nothing is re-implemented here.

Operative temperature
---------------------
Pass the room's operative temperature as a Series (θop = mean of air and mean radiant
temperature, :func:`thermonet.comfort.operative_temperature`; step means,
``Results.mean_temperatures``, are the usual choice). How a room's surfaces are found is
the business of the model's builder; :func:`outputs_table` also accepts a node name (that
node's step-mean temperature) or a function of the Results.

Column names
------------
Names carry their unit as a suffix (``_h`` hours, ``_kelvin_hours`` K·h, ``_pct`` percent,
``_c`` °C, ``_k`` K, ``_kwh`` kWh, ``_w`` W, ``_kwh_m2`` kWh/m², ``_w_m2`` W/m²; ``_ok`` a
verdict) and are listed with their meaning in ``docs/glossary.md`` ("Study outputs per
variant"). They
are the names of the demo (:mod:`thermonet.scenarios.sunny_room`), e.g.
``hours_above_26_h``, ``tm52_ok``, ``heating_kwh``.

Functions
---------
:func:`occupied_rows`
    occupancy given as a clock window, a boolean Series or None, as a Series on an index.
:func:`comfort_outputs`
    hours and degree-hours above thresholds in occupied hours, EN 16798-1 adaptive
    exceedance, CIBSE TM52's three criteria and verdict, CIBSE TM59's criteria.
:func:`energy_outputs`
    heating and cooling energy and peaks (:func:`thermonet.comfort.demand_summary`).
:func:`variant_outputs`
    both, for one variant.
:func:`outputs_table`
    one row per variant of a ``{label: Results}`` dict (e.g. from ``variant_traces``).

References
----------
EN 16798-1:2019 (adaptive comfort); CIBSE TM52 (2013); CIBSE TM59 (2017) — see the
docstrings of :mod:`thermonet.comfort` for the clauses and the confidence of each value.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence

import numpy as np
import pandas as pd

from thermonet import comfort
from thermonet.errors import StudyError

__all__ = [
    "comfort_outputs",
    "energy_outputs",
    "occupied_rows",
    "outputs_table",
    "variant_outputs",
]

#: Months of the CIBSE TM52 assessment season (1 May – 30 September), by interval mid-point.
TM52_SEASON = (5, 6, 7, 8, 9)


def occupied_rows(occupied, index: pd.DatetimeIndex) -> pd.Series | None:
    """Occupied rows of a simulation index, from the forms a study accepts.

    Parameters
    ----------
    occupied : None, (start, end) or pandas.Series of bool
        ``None``: every row (returned as None, the convention of :mod:`thermonet.comfort`);
        a pair of local clock times such as ``("09:00", "22:00")`` (interval mid-points,
        wrapping over midnight when start > end, :func:`thermonet.comfort.in_time_window`);
        or a boolean Series on ``index``.
    index : pandas.DatetimeIndex
        The simulation index (tz-aware, regular; each label ends its interval).

    Returns
    -------
    pandas.Series of bool or None
        Named ``"occupied"``.

    Raises
    ------
    TypeError
        for any other form of ``occupied``.
    thermonet.errors.ScheduleError
        for a Series on another index (raised by the comfort function that uses it).
    """
    if occupied is None:
        return None
    if isinstance(occupied, pd.Series):
        return occupied
    if isinstance(occupied, (tuple, list)) and len(occupied) == 2:
        return comfort.in_time_window(index, occupied[0], occupied[1]).rename("occupied")
    raise TypeError(
        "occupied must be None (every hour), a pair of clock times such as ('09:00', '22:00') "
        f"or a boolean pandas Series on the simulation index, got {occupied!r}"
    )


def _label(value: float) -> str:
    """A threshold as it appears in a column name: 26.0 → '26', 25.5 → '25.5'."""
    return f"{float(value):g}"


def _step_hours(index: pd.DatetimeIndex) -> float:
    return float((index[1] - index[0]) / pd.Timedelta(hours=1))


def _fixed_thresholds(t_op, mask, hours_above, degree_hours_above) -> dict:
    out: dict = {}
    for th in hours_above:
        out[f"hours_above_{_label(th)}_h"] = comfort.hours_above(t_op, float(th), mask)
    for th in degree_hours_above:
        out[f"degree_hours_above_{_label(th)}_kelvin_hours"] = comfort.degree_hours_above(
            t_op, float(th), mask)
    return out


def _adaptive(t_op, outdoor, mask, category, init) -> dict:
    ad = comfort.adaptive_assessment(t_op, outdoor, category, mask, init=init)
    row = ad.table.loc[ad.category]
    key = f"adaptive_{ad.category.lower()}"
    return {f"{key}_hours_above_h": float(row["hours_above_upper"]),
            f"{key}_degree_hours_above_kelvin_hours": float(row["degree_hours_above_upper"]),
            f"{key}_share_in_category_pct": 100.0 * float(row["share_in_category"])}


def _season_occupied(t_op: pd.Series, mask) -> bool:
    """Whether any occupied row falls in the TM52 season (1 May – 30 September)."""
    months = np.asarray(comfort.interval_midpoints(t_op.index).month)
    season = np.isin(months, TM52_SEASON)
    occ = np.ones(len(t_op), bool) if mask is None else mask.to_numpy(dtype=bool)
    return bool((season & occ).any())


_TM52_KEYS = ("tm52_c1_exceedance_pct", "tm52_c2_worst_we_kelvin_hours", "tm52_c3_max_dt_k")


def _tm52(t_op, outdoor, mask, category, init) -> dict:
    if not _season_occupied(t_op, mask):
        out = {k: float("nan") for k in _TM52_KEYS}
        out.update(tm52_c1_ok=pd.NA, tm52_c2_ok=pd.NA, tm52_c3_ok=pd.NA,
                   tm52_failed_criteria=float("nan"), tm52_ok=pd.NA)
        return out
    r = comfort.tm52(t_op, outdoor, mask, category, init=init)
    out = {k: c.value for k, c in zip(_TM52_KEYS, r.criteria, strict=True)}
    out.update({f"tm52_c{i}_ok": c.passed for i, c in enumerate(r.criteria, 1)})
    out.update(tm52_failed_criteria=float(r.n_failed), tm52_ok=r.passed)
    return out


def _tm59(t_op, outdoor, mask, room, ventilation, category, init) -> dict:
    nan = float("nan")
    if ventilation == "natural" and outdoor is not None:
        occ = mask if mask is not None else occupied_rows(
            comfort.TM59_DEFAULT_OCCUPANCY.get(room), t_op.index)
        if not _season_occupied(t_op, occ):
            out = {"tm59_a_pct": nan, "tm59_a_ok": pd.NA}
            if room == "bedroom":
                out.update(tm59_b_night_hours_above_26_h=nan, tm59_b_limit_h=nan,
                           tm59_b_ok=pd.NA)
            out.update(tm59_failed_criteria=nan, tm59_ok=pd.NA)
            return out
    r = comfort.tm59(t_op, outdoor, room, mask, ventilation, category=category, init=init)
    if ventilation == "mechanical":
        c = r.criteria[0]
        out = {"tm59_mech_hours_above_26_pct": c.value, "tm59_mech_ok": c.passed}
    else:
        a = r.criteria[0]
        out = {"tm59_a_pct": a.value, "tm59_a_ok": a.passed}
        if room == "bedroom":
            b = r.criteria[1]
            out.update(tm59_b_night_hours_above_26_h=b.value, tm59_b_limit_h=b.limit,
                       tm59_b_ok=b.passed)
    out.update(tm59_failed_criteria=float(sum(not c.passed for c in r.criteria)),
               tm59_ok=r.passed)
    return out


def comfort_outputs(t_op: pd.Series, temp_air_outdoor: pd.Series | None = None, *,
                    occupied=None, hours_above: Sequence[float] = (25.0, 26.0, 28.0),
                    degree_hours_above: Sequence[float] = (25.0, 26.0),
                    adaptive_category: str | None = "II", tm52_category: str | None = "II",
                    tm59_room: str | None = None, tm59_ventilation: str = "natural",
                    init: str | float = "first_day", prefix: str = "") -> dict:
    """Overheating outputs of one room of one variant, on its operative temperature.

    Parameters
    ----------
    t_op : pandas.Series
        Operative temperature of the room [°C], tz-aware regular index (hour ending),
        normally the simulated year.
    temp_air_outdoor : pandas.Series, optional
        Outdoor air temperature [°C] on the same step and zone (the simulation's weather
        ``temp_air``); needed by the adaptive, TM52 and naturally ventilated TM59 outputs.
    occupied : None, (start, end) or pandas.Series of bool, optional
        Occupied rows (:func:`occupied_rows`); default every row. Used by every output;
        TM59 uses its room type's default occupancy
        (:data:`thermonet.comfort.TM59_DEFAULT_OCCUPANCY`) when this is None.
    hours_above : sequence of float, default (25, 26, 28)
        Thresholds [°C] for ``hours_above_<T>_h`` [h]: occupied hours with θop > T.
    degree_hours_above : sequence of float, default (25, 26)
        Thresholds [°C] for ``degree_hours_above_<T>_kelvin_hours`` [K·h] over occupied hours.
    adaptive_category : {"I", "II", "III"} or None, default "II"
        EN 16798-1 category of ``adaptive_<cat>_*``; None leaves them out.
    tm52_category : {"I", "II", "III"} or None, default "II"
        CIBSE TM52 category of ``tm52_*`` (and of TM59 criterion (a)); None leaves TM52 out
        (TM59 then uses category II).
    tm59_room : {"living", "kitchen", "bedroom"} or None, default None
        Room type of the CIBSE TM59 outputs ``tm59_*``; None leaves them out.
    tm59_ventilation : {"natural", "mechanical"}, default "natural"
    init : {"first_day", "periodic"} or float, default "first_day"
        History of the running mean outdoor temperature before the first day
        (:func:`thermonet.comfort.running_mean_outdoor`); ``"periodic"`` suits a typical
        year that runs 1 January – 31 December.
    prefix : str, default ""
        Put in front of every name (e.g. ``"bedroom:"`` to judge several rooms of a
        variant in one row).

    Returns
    -------
    dict
        ``occupied_hours_h`` [h], ``max_operative_c`` [°C] (over every row, as the demo),
        ``hours_above_<T>_h`` [h], ``degree_hours_above_<T>_kelvin_hours`` [K·h];
        ``adaptive_<cat>_hours_above_h`` [h], ``adaptive_<cat>_degree_hours_above_kelvin_hours``
        [K·h], ``adaptive_<cat>_share_in_category_pct`` [%];
        ``tm52_c1_exceedance_pct`` [%], ``tm52_c2_worst_we_kelvin_hours`` [K·h],
        ``tm52_c3_max_dt_k`` [K], ``tm52_c1_ok`` … ``tm52_c3_ok``,
        ``tm52_failed_criteria`` [–], ``tm52_ok``; TM59 natural: ``tm59_a_pct`` [%],
        ``tm59_a_ok``, bedrooms also ``tm59_b_night_hours_above_26_h`` [h],
        ``tm59_b_limit_h`` [h], ``tm59_b_ok``; TM59 mechanical:
        ``tm59_mech_hours_above_26_pct`` [%], ``tm59_mech_ok``; and ``tm59_failed_criteria``
        [–], ``tm59_ok``. Verdicts are bool. Where the period holds no occupied hour of
        1 May – 30 September, TM52 and naturally ventilated TM59 cannot be judged: their
        values are NaN and their verdicts ``pandas.NA`` (as in the demo).

    Raises
    ------
    ValueError
        an outdoor-based output asked for without ``temp_air_outdoor``, or an unknown
        category, room type or ventilation (from :mod:`thermonet.comfort`).
    thermonet.errors.ScheduleError
        invalid or misaligned series (from :mod:`thermonet.comfort`).

    Notes
    -----
    Each value is the corresponding criterion of :mod:`thermonet.comfort` called on
    ``t_op``: :func:`~thermonet.comfort.hours_above`,
    :func:`~thermonet.comfort.degree_hours_above`,
    :func:`~thermonet.comfort.adaptive_assessment` (hours above an applicable upper limit),
    :func:`~thermonet.comfort.tm52` and :func:`~thermonet.comfort.tm59`.

    References
    ----------
    EN 16798-1:2019, adaptive criteria for buildings without mechanical cooling. CIBSE TM52
    (2013), The limits of thermal comfort, section 6. CIBSE TM59 (2017), Design methodology
    for the assessment of overheating risk in homes. (Clauses and confidence: see
    :mod:`thermonet.comfort`.)
    """
    needs_outdoor = (adaptive_category is not None or tm52_category is not None
                     or (tm59_room is not None and tm59_ventilation == "natural"))
    if needs_outdoor and temp_air_outdoor is None:
        raise ValueError(
            "temp_air_outdoor is needed for the adaptive, TM52 and naturally ventilated TM59 "
            "outputs (running mean outdoor temperature); pass the weather's temp_air, or "
            "adaptive_category=None, tm52_category=None and tm59_room=None")
    mask = occupied_rows(occupied, t_op.index)
    occ = np.ones(len(t_op), bool) if mask is None else mask.to_numpy(dtype=bool)
    out: dict = {"occupied_hours_h": float(np.count_nonzero(occ)) * _step_hours(t_op.index),
                 "max_operative_c": float(t_op.max())}
    out.update(_fixed_thresholds(t_op, mask, hours_above, degree_hours_above))
    if adaptive_category is not None:
        out.update(_adaptive(t_op, temp_air_outdoor, mask, adaptive_category, init))
    if tm52_category is not None:
        out.update(_tm52(t_op, temp_air_outdoor, mask, tm52_category, init))
    if tm59_room is not None:
        out.update(_tm59(t_op, temp_air_outdoor, mask, tm59_room, tm59_ventilation,
                         tm52_category or "II", init))
    return {f"{prefix}{k}": v for k, v in out.items()}


def energy_outputs(res, floor_area: float | None = None) -> dict:
    """Heating and cooling energy and peaks of one variant.

    Parameters
    ----------
    res : thermonet.Results
        One variant's results (``res.heating``, ``res.cooling`` [W], step means).
    floor_area : float, optional
        Reference floor area [m²]; adds the per-area columns.

    Returns
    -------
    dict
        ``heating_kwh``, ``cooling_kwh`` [kWh] (cooling as heat removed, ≥ 0),
        ``peak_heating_w``, ``peak_cooling_w`` [W] (largest step mean); with ``floor_area``
        also ``heating_kwh_m2``, ``cooling_kwh_m2`` [kWh/m²], ``peak_heating_w_m2``,
        ``peak_cooling_w_m2`` [W/m²]. Zero without a thermostat.

    Notes
    -----
    :func:`thermonet.comfort.demand_summary` computes them: E = Σ P·Δt, the peak the
    largest step-mean power (so it depends on the step).
    """
    area = 1.0 if floor_area is None else floor_area   # per-area values dropped below
    d = comfort.demand_summary(res.heating, res.cooling, area)
    out = {"heating_kwh": d.heating_kwh, "cooling_kwh": d.cooling_kwh,
           "peak_heating_w": d.heating_peak_w, "peak_cooling_w": d.cooling_peak_w}
    if floor_area is not None:
        out.update(heating_kwh_m2=d.heating_kwh_m2, cooling_kwh_m2=d.cooling_kwh_m2,
                   peak_heating_w_m2=d.heating_peak_w_m2,
                   peak_cooling_w_m2=d.cooling_peak_w_m2)
    return out


def _outdoor(weather) -> pd.Series | None:
    if weather is None:
        return None
    if isinstance(weather, pd.Series):
        return weather
    if isinstance(weather, pd.DataFrame):
        if "temp_air" not in weather.columns:
            raise StudyError("weather has no 'temp_air' column; the adaptive, TM52 and TM59 "
                             "outputs need the outdoor air temperature [°C]")
        return weather["temp_air"]
    raise TypeError(f"weather must be the simulation's weather DataFrame, its temp_air Series "
                    f"or None, got {type(weather).__name__}")


def variant_outputs(res, t_op: pd.Series, weather=None, *, floor_area: float | None = None,
                    **comfort_kwargs) -> dict:
    """Comfort and energy outputs of one variant: :func:`comfort_outputs` + :func:`energy_outputs`.

    Parameters
    ----------
    res : thermonet.Results
        The variant's results.
    t_op : pandas.Series
        Operative temperature of the judged room [°C] on the results' index.
    weather : pandas.DataFrame or pandas.Series, optional
        The weather simulated (its ``temp_air`` [°C] is used) or that Series.
    floor_area : float, optional
        Reference floor area [m²] of the per-area energy columns.
    **comfort_kwargs
        Passed to :func:`comfort_outputs` (``occupied=``, ``tm59_room=``, ...).

    Returns
    -------
    dict
        The names of both functions.
    """
    out = comfort_outputs(t_op, _outdoor(weather), **comfort_kwargs)
    out.update(energy_outputs(res, floor_area))
    return out


def _operative_of(operative, label, res) -> pd.Series:
    if isinstance(operative, str):
        temps = res.mean_temperatures
        if operative not in temps.columns:
            raise StudyError(f"operative={operative!r} is not a node of variant {label!r}; "
                             f"nodes: {', '.join(map(str, temps.columns))}")
        return temps[operative]
    if isinstance(operative, Mapping):
        if label not in operative:
            raise StudyError(f"operative has no Series for variant {label!r}; give one per "
                             "variant label")
        return operative[label]
    if callable(operative):
        return operative(res)
    raise TypeError("operative must be a node name, a function of the Results giving the "
                    "room's operative temperature [°C], or a dict {label: Series}, got "
                    f"{type(operative).__name__}")


def outputs_table(traces: Mapping, operative: str | Callable | Mapping, weather=None, *,
                  floor_area: float | None = None, **comfort_kwargs) -> pd.DataFrame:
    """One row of comfort and energy outputs per variant.

    Parameters
    ----------
    traces : dict
        ``{label: thermonet.Results}``, e.g. from :func:`thermonet.studies.variant_traces`.
    operative : str, callable or dict
        The room's operative temperature [°C]: a node name (its step-mean temperature,
        ``Results.mean_temperatures``), a function ``operative(res) -> Series``, or a dict
        ``{label: Series}``.
    weather : pandas.DataFrame or pandas.Series, optional
        The weather simulated (its ``temp_air``), as for :func:`variant_outputs`.
    floor_area : float, optional
        Reference floor area [m²].
    **comfort_kwargs
        Passed to :func:`comfort_outputs`.

    Returns
    -------
    pandas.DataFrame
        Index: the labels of ``traces``; columns as :func:`variant_outputs`.
    """
    if not isinstance(traces, Mapping) or not traces:
        raise TypeError("traces must be a non-empty dict {label: thermonet.Results}, e.g. "
                        "from thermonet.studies.variant_traces")
    rows = {}
    for label, res in traces.items():
        t_op = _operative_of(operative, label, res)
        rows[label] = variant_outputs(res, t_op, weather, floor_area=floor_area,
                                      **comfort_kwargs)
    table = pd.DataFrame.from_dict(rows, orient="index")
    table.index.name = "variant"
    return table

