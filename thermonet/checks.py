"""Plausibility checks of simulation inputs and results, on every path into the engine.

The validated weather readers (:func:`thermonet.weather.from_dataframe`) check units and
ranges; :func:`thermonet.simulate` also accepts a plain DataFrame and Series given straight
to the network. The functions here guard those paths with the same rules: an **error** for
the impossible (a temperature below absolute zero, a column that is plainly in kelvin, a
NaN put into a schedule after it was added, a negative conductance), a
:class:`~thermonet.errors.PlausibilityWarning` naming the column, node or element for the
implausible (values outside the range a building meets, irradiance that looks like kW/m²,
a node that would take centuries to respond), and an
:class:`~thermonet.errors.AccuracyWarning` when the requested warm-up is longer than the
data.

All functions are pure: they read a DataFrame, Series or :class:`~thermonet.Network` and
raise or warn; nothing is changed, filled or clipped.

:func:`check_simulation_inputs` runs every input check; :func:`check_results` the result
check.
"""

from __future__ import annotations

import math
import re
import warnings

import numpy as np
import pandas as pd

from thermonet.constants import ZERO_CELSIUS
from thermonet.errors import AccuracyWarning, NetworkError, PlausibilityWarning, WeatherError
from thermonet.parameters import refuse_parameters

__all__ = [
    "KELVIN_MEDIAN",
    "KELVIN_LIKELY_MAX",
    "KW_IRRADIANCE_MAX",
    "IRRADIANCE_IMPOSSIBLE",
    "SETPOINT_RANGE",
    "BOUNDARY_RANGE",
    "RESULT_RANGE",
    "TIME_CONSTANT_MAX_S",
    "TEMPERATURE_COLUMN",
    "IRRADIANCE_COLUMNS",
    "QUICK_PASS",
    "check_temperature",
    "check_irradiance",
    "check_weather_frame",
    "check_network_values",
    "check_setpoints",
    "check_time_constants",
    "check_warmup",
    "DEFAULT_WARMUP_DAYS",
    "check_simulation_inputs",
    "check_results",
]

#: A temperature series whose median lies above this [°C] is taken to be in kelvin: no
#: building boundary or setpoint sits above 150 °C most of the time, and 0 °C is 273.15 K
#: (common practice, no source; the same rule as thermonet.weather's range check).
KELVIN_MEDIAN = 150.0

#: Medians between :data:`KELVIN_MEDIAN` and this [°C] are reported as kelvin (outdoor and
#: indoor temperatures in K lie near 220 … 330); higher ones as plainly impossible.
KELVIN_LIKELY_MAX = 400.0

#: Irradiance columns whose largest value is positive but no more than this [W/m²] over at
#: least two days look like kW/m²: clear-sky noon irradiance exceeds 100 W/m² on most days
#: of the year at most latitudes (common practice, no source).
KW_IRRADIANCE_MAX = 1.5

#: Irradiance above this [W/m²] is impossible at the ground: the solar constant is
#: 1361 W/m² (Kopp & Lean 2011, Geophys. Res. Lett. 38, L01706) and cloud enhancement adds
#: at most ~50 % for minutes (common practice, no source).
IRRADIANCE_IMPOSSIBLE = 2000.0

#: Plausible setpoints [°C] (common practice, no source): frost protection to hot rooms.
SETPOINT_RANGE = (0.0, 50.0)

#: Plausible boundary temperatures [°C]: the lowest and highest near-ground air temperatures
#: ever measured bracket −90 … 60 °C (common practice, no source; as thermonet.weather).
BOUNDARY_RANGE = (-90.0, 60.0)

#: Plausible node temperatures in results [°C] (common practice, no source): outside this a
#: unit mix-up or an absurd gain is far more likely than a real building.
RESULT_RANGE = (-60.0, 100.0)

#: Longest plausible node time constant C/ΣG [s]: 100 years. Deep ground nodes reach months;
#: centuries mean a capacitance or conductance off by many orders (common practice, no
#: source).
TIME_CONSTANT_MAX_S = 100 * 365.25 * 86400.0

#: Weather columns that hold temperatures [°C] (pvlib names and thermonet's derived ones).
TEMPERATURE_COLUMN = re.compile(r"temp_(air|dew|sky|ground.*)")

#: Weather columns that hold irradiance [W/m²].
IRRADIANCE_COLUMNS = ("ghi", "dni", "dhi")


def _values(x) -> np.ndarray:
    if isinstance(x, pd.Series) and x.dtype == np.float64:
        return x.to_numpy()            # the values themselves (read-only view), no conversion
    return np.atleast_1d(np.asarray(x, dtype=float))


def _bounds(x) -> tuple[float, float] | None:
    """Smallest and largest value of a number, array or Series (NaN if any is NaN); None
    when there is no value."""
    if isinstance(x, (int, float)):
        return float(x), float(x)
    v = _values(x)
    if v.size == 0:
        return None
    return float(v.min()), float(v.max())       # NaN propagates through min and max


#: Let the checks skip their detailed analysis of values that a quick min/max pass finds
#: finite and inside the range that raises or warns nothing (the outcome is the same either
#: way; ``tests/test_fast_paths.py`` runs both). False: always analyse in detail.
QUICK_PASS = True


def _all_within(x, low: float, high: float) -> bool:
    """Whether every value of ``x`` is finite and within [low, high] (the quick pass, see
    :data:`QUICK_PASS`)."""
    if not QUICK_PASS:
        return False
    b = _bounds(x)
    return b is None or (low <= b[0] and b[1] <= high
                         and math.isfinite(b[0]) and math.isfinite(b[1]))


def _where(x, k: int) -> str:
    """Where value ``k`` of ``x`` sits: "at <time stamp>", "at position k" or "(constant)"."""
    if isinstance(x, pd.Series):
        return f"at {x.index[k]}"
    return "(constant)" if np.ndim(x) == 0 else f"at position {k}"


def check_temperature(x, what: str, *, plausible=BOUNDARY_RANGE, error=NetworkError,
                      stacklevel: int = 2) -> None:
    """Refuse impossible temperatures, warn about implausible ones.

    Parameters
    ----------
    x : float, array-like or pandas.Series
        Temperatures [°C].
    what : str
        Names the input in messages (column, boundary, thermostat).
    plausible : (float, float), default :data:`BOUNDARY_RANGE`
        Range [°C] outside which a warning is issued.
    error : type, default NetworkError
        Class of the error raised (WeatherError for weather columns).
    stacklevel : int
        Passed to :func:`warnings.warn`.

    Raises
    ------
    NetworkError or ``error``
        A value below absolute zero (−273.15 °C), a non-finite value, or a median above
        :data:`KELVIN_MEDIAN` (kelvin given for °C below :data:`KELVIN_LIKELY_MAX`,
        impossible above).

    Warns
    -----
    PlausibilityWarning
        Values outside ``plausible``.
    """
    if _all_within(x, max(plausible[0], -ZERO_CELSIUS), min(plausible[1], KELVIN_MEDIAN)):
        return                         # finite, above absolute zero, not kelvin, plausible
    v = _values(x)
    if v.size == 0:
        return
    bad = ~np.isfinite(v)
    if bad.any():
        k = int(bad.argmax())
        raise error(f"{what}: {int(bad.sum())} NaN/inf value(s), first {_where(x, k)}; "
                           "fill them explicitly")
    if (v < -ZERO_CELSIUS).any():
        k = int((v < -ZERO_CELSIUS).argmax())
        raise error(f"{what}: {v[k]} °C {_where(x, k)} is below absolute zero "
                           f"(−{ZERO_CELSIUS} °C); temperatures are in °C")
    vmax = float(v.max())
    med = float(np.median(v)) if vmax > KELVIN_MEDIAN else vmax   # the median ≤ the max
    if med > KELVIN_MEDIAN:
        if med < KELVIN_LIKELY_MAX:
            raise error(f"{what}: median {med:.1f} °C looks like kelvin; thermonet keeps "
                        f"temperatures in °C: subtract {ZERO_CELSIUS}")
        raise error(f"{what}: median {med:.4g} °C is impossible around or inside a building "
                    f"(above {KELVIN_MEDIAN:g} °C most of the time); check the value and its "
                    "unit (°C)")
    low, high = plausible
    if float(v.min()) >= low and vmax <= high:
        return
    out = (v < low) | (v > high)
    if out.any():
        k = int(out.argmax())
        warnings.warn(PlausibilityWarning(
            f"{what}: {int(out.sum())} value(s) outside the plausible {low:g} … {high:g} °C, "
            f"first {v[k]:g} °C {_where(x, k)}; check the unit and the data"),
            stacklevel=stacklevel)


def check_irradiance(x: pd.Series, what: str, *, stacklevel: int = 2) -> None:
    """Refuse impossible irradiance, warn about values that look like kW/m² or are negative.

    Parameters
    ----------
    x : pandas.Series
        Irradiance [W/m²] with a DatetimeIndex.
    what : str
        Names the column in messages.
    stacklevel : int
        Passed to :func:`warnings.warn`.

    Raises
    ------
    WeatherError
        Non-finite values, or values above :data:`IRRADIANCE_IMPOSSIBLE`.

    Warns
    -----
    PlausibilityWarning
        Negative values (sensor offsets: set them to zero explicitly), or a largest value
        in (0, :data:`KW_IRRADIANCE_MAX`] over two days or more (kW/m² given for W/m²).
    """
    v = _values(x)
    if v.size == 0:
        return
    bad = ~np.isfinite(v)
    if bad.any():
        raise WeatherError(f"{what}: {int(bad.sum())} NaN/inf value(s), first "
                           f"{_where(x, int(bad.argmax()))}; fill them explicitly")
    k = int(v.argmax())
    if v[k] > IRRADIANCE_IMPOSSIBLE:
        raise WeatherError(f"{what}: {v[k]:g} W/m² {_where(x, k)} is impossible at the ground "
                           f"(above {IRRADIANCE_IMPOSSIBLE:g} W/m²; the solar constant is "
                           "1361 W/m²); irradiance is a mean power in W/m², not an energy "
                           "in Wh/m² or J/m² over the step")
    span = x.index[-1] - x.index[0] if isinstance(x, pd.Series) and len(x) > 1 else None
    if 0.0 < v[k] <= KW_IRRADIANCE_MAX and span is not None and span >= pd.Timedelta("2D"):
        warnings.warn(PlausibilityWarning(
            f"{what}: the largest value is {v[k]:g} W/m² over {span}; that looks like kW/m²: "
            "thermonet keeps irradiance in W/m², multiply by 1000"), stacklevel=stacklevel)
    if (v < 0).any():
        j = int((v < 0).argmax())
        warnings.warn(PlausibilityWarning(
            f"{what}: {int((v < 0).sum())} negative value(s), first {v[j]:g} W/m² "
            f"{_where(x, j)}; negative irradiance is a sensor offset: set it to zero "
            "explicitly if you accept that"), stacklevel=stacklevel)


def check_weather_frame(weather: pd.DataFrame, columns=None, *,
                        stacklevel: int = 2) -> dict[str, pd.Series]:
    """Unit and range checks of a weather frame's temperature and irradiance columns.

    Parameters
    ----------
    weather : pandas.DataFrame
    columns : iterable of str, optional
        Further columns read as temperatures [°C] (those the boundaries name).
    stacklevel : int
        Passed to :func:`warnings.warn`.

    Returns
    -------
    dict of str to pandas.Series
        The columns read and checked, by name (a caller may use them instead of reading
        them again).

    Raises
    ------
    NetworkError, WeatherError
        See :func:`check_temperature` and :func:`check_irradiance`.
    """
    names = list(weather.columns)                 # once: a string index iterates slowly
    present = set(names)
    temps = [c for c in names if isinstance(c, str) and TEMPERATURE_COLUMN.fullmatch(c)]
    for c in columns or ():
        if c in present and c not in temps:
            temps.append(c)
    read = {}
    for c in temps:
        read[c] = weather[c]
        check_temperature(read[c], f"weather column {c!r}", error=WeatherError,
                          stacklevel=stacklevel + 1)
    for c in IRRADIANCE_COLUMNS:
        if c in present:
            read[c] = weather[c]
            check_irradiance(read[c], f"weather column {c!r}", stacklevel=stacklevel + 1)
    return read


def _series_fields(net):
    """(description, value, minimum) of every value a network element holds; the
    description is a format string and its argument, formatted only for a message."""
    for b in net.boundaries.values():
        if not isinstance(b.temperature, str):
            yield ("boundary {!r} temperature [°C]", b.name), b.temperature, -ZERO_CELSIUS
    for lk in net.links.values():
        yield ("link {!r} conductance [W/K]", lk.name), lk.conductance, 0.0
    for s in net.sources.values():
        yield ("source {!r} power [W]", s.name), s.power, None
    for t in net.thermostats.values():
        for key in ("heating_setpoint", "cooling_setpoint"):
            v = getattr(t, key)
            if v is not None:
                yield ("thermostat {!r} " + key + " [°C]", t.name), v, -ZERO_CELSIUS


def check_network_values(net) -> None:
    """Re-check every value and schedule of a network as ``add_*`` checked it.

    Elements are read-only, but a Series held by an element can still be changed in place
    (``net.boundaries["b"].temperature.iloc[3] = nan``); this catches such edits before
    they reach the solver.

    Parameters
    ----------
    net : Network
        The network whose boundary temperatures [°C], link conductances [W/K], source
        powers [W] and thermostat setpoints [°C] (numbers or Series) are checked.

    Raises
    ------
    NetworkError
        A NaN/inf value or a value below the element's minimum, naming the element.
    """
    refuse_parameters(net)
    for (fmt, name), value, minimum in _series_fields(net):
        low = -math.inf if minimum is None else minimum
        if QUICK_PASS and type(value) is float and math.isfinite(value) and value >= low:
            continue                   # a plain number: the quick pass, without a call
        if _all_within(value, low, math.inf):
            continue
        what = fmt.format(name)
        v = _values(value)
        bad = ~np.isfinite(v)
        if bad.any():
            raise NetworkError(f"{what}: {int(bad.sum())} NaN/inf value(s), first "
                               f"{_where(value, int(bad.argmax()))} (changed after it was "
                               "added?); build the network again with finite values")
        if minimum is not None and (v < minimum).any():
            k = int((v < minimum).argmax())
            raise NetworkError(f"{what}: {v[k]} {_where(value, k)} is below the allowed "
                               f"{minimum} (changed after it was added?); build the network "
                               "again with valid values")


def check_setpoints(net, *, stacklevel: int = 2) -> None:
    """Setpoints: kelvin-like refused, outside :data:`SETPOINT_RANGE` warned (names each).

    Parameters
    ----------
    net : Network
        The network whose thermostats' heating and cooling setpoints [°C] are checked.
    stacklevel : int, default 2
        Stack level of the warnings, as in :func:`warnings.warn` (2: the caller's line).

    Raises
    ------
    NetworkError
        See :func:`check_temperature`.
    """
    for t in net.thermostats.values():
        for key in ("heating_setpoint", "cooling_setpoint"):
            v = getattr(t, key)
            if v is not None:
                check_temperature(v, f"thermostat {t.name!r} {key}", plausible=SETPOINT_RANGE,
                                  stacklevel=stacklevel + 1)


def check_time_constants(net, *, stacklevel: int = 2) -> None:
    """Warn about nodes whose time constant C/ΣG exceeds :data:`TIME_CONSTANT_MAX_S`.

    ΣG sums the mean conductances of the node's links [W/K]. A node with capacitance and
    no conductance at all is left to the compiler (it has no path to a boundary).

    Parameters
    ----------
    net : Network
        The network whose nodes' capacitances [J/K] and links' conductances [W/K] are read.
    stacklevel : int, default 2
        Stack level of the warnings, as in :func:`warnings.warn` (2: the caller's line).

    Warns
    -----
    PlausibilityWarning
        A node's time constant C/ΣG [s] exceeds :data:`TIME_CONSTANT_MAX_S`.
    """
    gsum = dict.fromkeys(net.nodes, 0.0)
    for lk in net.links.values():
        g = lk.conductance
        g = float(g) if isinstance(g, (int, float)) else float(np.mean(_values(g)))
        for end in (lk.a, lk.b):
            if end in gsum:
                gsum[end] += g
    for name, node in net.nodes.items():
        c, g = float(node.capacitance), gsum[name]
        if c > 0 and g > 0 and c / g > TIME_CONSTANT_MAX_S:
            warnings.warn(PlausibilityWarning(
                f"node {name!r}: time constant C/ΣG = {c:.3g} J/K / {g:.3g} W/K = "
                f"{c / g / (365.25 * 86400):.3g} years, longer than "
                f"{TIME_CONSTANT_MAX_S / (365.25 * 86400):g} years; it will barely move in a "
                "simulation — check the units of its capacitance [J/K] and conductances "
                "[W/K]"), stacklevel=stacklevel)


#: The default warm-up of :func:`thermonet.simulate` [days]; documented as "at most the
#: data length", so it is cut without a warning on shorter weather.
DEFAULT_WARMUP_DAYS = 14.0


#: Ticks per second of each unit a DatetimeIndex may hold its integer labels in.
UNITS_PER_SECOND = {"s": 1, "ms": 1_000, "us": 1_000_000, "ns": 1_000_000_000}


def check_warmup(weather: pd.DataFrame, warmup_days: float, *, stacklevel: int = 2) -> None:
    """Warn when a warm-up asked for is longer than the weather (it is then cut).

    Parameters
    ----------
    weather : pandas.DataFrame
        Regular index; each row covers one step.
    warmup_days : float
        Requested lead-in [days]. The default :data:`DEFAULT_WARMUP_DAYS` is cut to the data
        length silently (short test runs use it); any other value longer than the data
        warns.
    stacklevel : int, default 2
        Stack level of the warnings, as in :func:`warnings.warn` (2: the caller's line).

    Warns
    -----
    AccuracyWarning
        ``warmup_days`` (not the default) exceeds the weather's length (rows × step).
    """
    index = weather.index
    n = len(index)
    if n < 2 or not (isinstance(warmup_days, (int, float)) and math.isfinite(warmup_days)):
        return
    if isinstance(index, pd.DatetimeIndex):    # integer labels: no Timestamps boxed
        i8 = index.asi8
        step = int(i8[1] - i8[0]) / UNITS_PER_SECOND[index.unit]
    else:
        step = (index[1] - index[0]).total_seconds()
    length_days = n * step / 86400.0
    if warmup_days > length_days + 1e-9 and warmup_days != DEFAULT_WARMUP_DAYS:
        warnings.warn(AccuracyWarning(
            f"warmup_days={warmup_days:g} is longer than the weather ({n} rows, "
            f"{length_days:g} days); the warm-up is cut to {length_days:g} days — pass "
            "warmup_days ≤ the data length, or give a longer weather frame"),
            stacklevel=stacklevel)


def check_simulation_inputs(net, weather: pd.DataFrame,
                            warmup_days: float = 14.0) -> dict[str, pd.Series]:
    """Every plausibility check of a simulation's inputs, in one call.

    Parameters
    ----------
    net : Network
    weather : pandas.DataFrame
        As given to :func:`thermonet.simulate` (validated or plain).
    warmup_days : float, default 14
        Requested lead-in [days].

    Returns
    -------
    dict of str to pandas.Series
        The weather columns read and checked, by name (see :func:`check_weather_frame`);
        empty when ``weather`` is not a DataFrame.

    Raises
    ------
    NetworkError, WeatherError
        Impossible values: NaN/inf or below-minimum values in elements (changed after
        adding), temperatures below absolute zero or in kelvin, irradiance above
        :data:`IRRADIANCE_IMPOSSIBLE`.

    Warns
    -----
    PlausibilityWarning
        Implausible values, naming the column, node or element.
    AccuracyWarning
        A warm-up longer than the weather.

    Notes
    -----
    Inputs that :func:`thermonet.simulate` itself refuses (not a DataFrame, wrong index)
    are left to it: this function returns quietly when ``weather`` is not a DataFrame.
    """
    stack = 4  # warnings point at the caller of simulate()
    check_network_values(net)
    read: dict = {}
    if isinstance(weather, pd.DataFrame):
        cols = [b.temperature for b in net.boundaries.values() if isinstance(b.temperature, str)]
        read = check_weather_frame(weather, cols, stacklevel=stack)
        if isinstance(weather.index, pd.DatetimeIndex):
            check_warmup(weather, warmup_days, stacklevel=stack)
    for b in net.boundaries.values():
        if not isinstance(b.temperature, str):
            check_temperature(b.temperature, f"boundary {b.name!r} temperature",
                              stacklevel=stack)
    check_setpoints(net, stacklevel=stack)
    check_time_constants(net, stacklevel=stack)
    return read


def check_results(temperatures: pd.DataFrame, *, stacklevel: int = 2) -> None:
    """Warn when simulated node temperatures leave :data:`RESULT_RANGE`, naming the nodes.

    Parameters
    ----------
    temperatures : pandas.DataFrame
        ``Results.temperatures`` or ``Results.mean_temperatures`` [°C].
    stacklevel : int
        Passed to :func:`warnings.warn`.

    Warns
    -----
    PlausibilityWarning
        One warning listing every node outside the range with its extreme value.
    """
    low, high = RESULT_RANGE
    v = temperatures.to_numpy(dtype=float)
    if v.size == 0:
        return
    vmin, vmax = np.nanmin(v, axis=0), np.nanmax(v, axis=0)
    bad = (vmin < low) | (vmax > high)
    if not bad.any():
        return
    shown = [f"{c!r} ({vmin[i]:.4g} … {vmax[i]:.4g} °C)"
             for i, c in enumerate(temperatures.columns) if bad[i]]
    more = f" and {len(shown) - 5} more" if len(shown) > 5 else ""
    warnings.warn(PlausibilityWarning(
        f"{len(shown)} node(s) leave the building range {low:g} … {high:g} °C: "
        f"{', '.join(shown[:5])}{more}; check units (°C, W, J/K, W/K) and the size of "
        "sources and capacities"), stacklevel=stacklevel)
