"""Weather input of thermonet: readers, checks, re-stamping and derived boundary temperatures.

One validated weather frame
---------------------------
Every reader returns one :class:`pandas.DataFrame` with

* a tz-aware, strictly increasing index with one constant step (1 h for a typical year);
* columns with pvlib's names and SI units (conversions happen here, at the edge):

  ===================== ============ ==================================================
  column                unit         meaning
  ===================== ============ ==================================================
  ``temp_air``          [°C]         dry-bulb air temperature (required)
  ``ghi``               [W/m²]       global horizontal irradiance (required)
  ``dni``               [W/m²]       direct (beam) normal irradiance (required)
  ``dhi``               [W/m²]       diffuse horizontal irradiance (required)
  ``temp_dew``          [°C]         dew-point temperature
  ``relative_humidity`` [%]          relative humidity, 0 … 100
  ``pressure``          [Pa]         station air pressure (NOT mbar/hPa; 1 mbar = 100 Pa)
  ``wind_speed``        [m/s]        wind speed
  ``wind_direction``    [°]          wind direction, clockwise from north
  ``albedo``            [–]          ground reflectance, 0 … 1
  ``cloud_cover``       [tenths]     total sky cover, 0 … 10 (TMY3 ``TotCld``)
  ===================== ============ ==================================================

* site metadata in ``df.attrs["site"] = {"latitude": [°N], "longitude": [°E],
  "elevation": [m], "tz": str, "name": str}`` (read it back with :func:`site_of`) and a
  plain-text provenance note in ``df.attrs["source"]``.

Interval convention (read this once)
------------------------------------
**thermonet treats each row as describing the interval that ENDS at its label** ("hour
ending"): the row labelled 2025-01-01 01:00 holds the mean irradiance and the representative
temperature, wind ... of 00:00–01:00. All inputs are held constant over their interval
(zero-order hold). Consequences:

* NREL TMY3 files are hour-ending already: their radiation values are the energy received
  during the 60 minutes preceding the time stamp (TMY3 users manual, Wilcox & Marion 2008),
  and their last row "12/31 24:00" is the instant 00:00 of January 1 of the next year.
  :func:`read_tmy3` keeps that.
* PVGIS typical-year data are labelled in UTC at the START of each hour (this module's
  reading of the PVGIS tables, "20050101:0000" = first hour of the year). :func:`read_pvgis_tmy`
  therefore shifts every label by one step (``label="start"``, the default); pass
  ``label="end"`` if your file is known to be hour-ending.
* :func:`from_dataframe` takes ``label="end"`` (default) or ``label="start"`` likewise.
* The sun is placed at the interval MID-POINT: :func:`solar_times` returns
  ``index - step/2`` and :func:`solar_position` calls
  :func:`pvlib.solarposition.get_solarposition` there.

Typical years
-------------
Typical years are stitched from months of different calendar years. :func:`restamp` puts every
row onto one reference year (default :data:`REFERENCE_YEAR` = 2025, not a leap year) so the
series is continuous and increasing; February 29 is handled explicitly (``leap_day=``).

Checks
------
:func:`validate` raises :class:`~thermonet.errors.WeatherError` naming the column and what to
do, for: missing columns, non-numeric columns, NaN gaps, non-finite values, missing time
stamps, duplicates, non-monotonic or irregular index, tz-naive index, values outside the
plausible ranges of :data:`COLUMN_SPECS`, a dew point above the air temperature, and beam plus
diffuse inconsistent with global irradiance. Nothing is filled unless ``fill="interpolate"``
is passed, and then a warning lists what was filled.

Derived boundaries
------------------
Sky temperature (Swinbank 1963; Berdahl & Martin 1984) and undisturbed ground temperature
(Kusuda & Achenbach 1965) as plain functions of floats/arrays/Series, plus
:func:`add_sky_temperature` / :func:`add_ground_temperature` that add the columns
``temp_sky`` and ``temp_ground_<depth>m`` to a weather frame. pvlib has none of these, so they
are written here by hand; solar position, clear-sky and decomposition models come from pvlib.
"""

from __future__ import annotations

import calendar
import datetime as _dt
import math
import warnings
from collections.abc import Mapping, Sequence
from dataclasses import asdict, dataclass
from pathlib import Path
from typing import Any
from zoneinfo import ZoneInfo

import numpy as np
import pandas as pd
import pvlib

from thermonet.checks import IRRADIANCE_COLUMNS, check_irradiance
from thermonet.constants import ZERO_CELSIUS
from thermonet.errors import ThermonetWarning, TimeZoneError, WeatherError
from thermonet.solar import solar_position as _solar_position

__all__ = [
    "REFERENCE_YEAR",
    "REQUIRED_COLUMNS",
    "COLUMN_SPECS",
    "CLOSURE_LIMITS",
    "MAX_FILL_GAP",
    "DEFAULT_SOIL_DIFFUSIVITY",
    "Site",
    "AnnualCycle",
    "site_of",
    "read_tmy3",
    "read_pvgis_tmy",
    "from_dataframe",
    "restamp",
    "validate",
    "time_step",
    "solar_times",
    "solar_position",
    "sky_temperature_swinbank",
    "sky_emissivity_berdahl_martin",
    "sky_temperature_berdahl_martin",
    "ground_temperature_kusuda",
    "fit_annual_cycle",
    "add_sky_temperature",
    "check_zone",
    "localize_index",
    "add_ground_temperature",
]

#: Default reference year of :func:`restamp` [-]: 2025, not a leap year, so a typical year
#: of 8760 hourly rows fits without a February 29.
REFERENCE_YEAR = 2025

#: Columns every weather frame must have.
REQUIRED_COLUMNS: tuple[str, ...] = ("temp_air", "ghi", "dni", "dhi")

#: Plausible range and unit of each known column: ``name -> (low, high, unit)``.
#: Temperatures -90 … +60 °C bracket the lowest and highest air temperatures ever measured
#: near the ground (common practice, no source). Irradiance 0 … 1500 W/m² (above the solar
#: constant only through brief cloud enhancement; catches kW/m² or Wh/m² mix-ups — common
#: practice, no source). Pressure 40 000 … 110 000 Pa covers stations from sea level to
#: about 7000 m and catches mbar/hPa given as Pa (common practice, no source). Wind speed
#: 0 … 60 m/s as an hourly mean (common practice, no source).
COLUMN_SPECS: dict[str, tuple[float, float, str]] = {
    "temp_air": (-90.0, 60.0, "°C"),
    "temp_dew": (-90.0, 60.0, "°C"),
    "ghi": (0.0, 1500.0, "W/m²"),
    "dni": (0.0, 1500.0, "W/m²"),
    "dhi": (0.0, 1500.0, "W/m²"),
    "relative_humidity": (0.0, 100.0, "%"),
    "pressure": (40_000.0, 110_000.0, "Pa"),
    "wind_speed": (0.0, 60.0, "m/s"),
    "wind_direction": (0.0, 360.0, "°"),
    "albedo": (0.0, 1.0, "-"),
    "cloud_cover": (0.0, 10.0, "tenths"),
}

#: Allowed excess of the dew point over the air temperature [K] before :func:`validate`
#: complains (rounding of both to 0.1 K in source files; common practice, no source).
DEW_POINT_EXCESS_MAX = 0.5

#: Closure test of :func:`validate`: allowed ``|ghi / (dni·cos z + dhi) − 1|`` for zenith
#: below 75° and for 75° … 85°, applied where ``ghi`` or the sum exceeds
#: :data:`CLOSURE_MIN_IRRADIANCE`. The limits 8 % / 15 % follow the BSRN "comparison" test
#: (Long & Dutton, BSRN recommended QC tests, V2.0, 2002 — from memory); thermonet stops at
#: 85° because hourly values and a mid-point zenith disagree near the horizon.
CLOSURE_LIMITS: tuple[float, float] = (0.08, 0.15)

#: Largest solar zenith angle [°] at which the closure test is applied.
CLOSURE_ZENITH_MAX = 85.0

#: Irradiance [W/m²] below which the closure test is not applied (BSRN, from memory).
CLOSURE_MIN_IRRADIANCE = 50.0

#: Longest run of NaN [rows] that ``fill="interpolate"`` repairs (3 rows = 3 h for hourly
#: data; common practice, no source). Longer gaps stay an error.
MAX_FILL_GAP = 3

#: Default soil thermal diffusivity [m²/s] of :func:`add_ground_temperature`:
#: 5.0e-7 m²/s ≈ 0.043 m²/day, a moist mineral soil (common practice, no source).
DEFAULT_SOIL_DIFFUSIVITY = 5.0e-7

_SECONDS_PER_DAY = 86_400.0
#: Period of the annual cycle in Kusuda & Achenbach (1965) [d].
_DAYS_PER_YEAR = 365.0
#: 1 mbar = 1 hPa = 100 Pa exactly (SI definition of the bar, 1 bar = 1e5 Pa).
_PA_PER_MBAR = 100.0

_TMY3_COLUMNS: tuple[str, ...] = (
    "temp_air",
    "temp_dew",
    "relative_humidity",
    "pressure",
    "wind_speed",
    "wind_direction",
    "ghi",
    "dni",
    "dhi",
    "cloud_cover",
)


# --------------------------------------------------------------------------------------------
# site metadata
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class Site:
    """Where a weather series was recorded (or invented).

    Parameters
    ----------
    latitude : float
        Latitude [°], north positive, -90 … 90.
    longitude : float
        Longitude [°], east positive, -180 … 180.
    elevation : float
        Elevation above sea level [m].
    tz : str
        Time zone of the weather index (e.g. ``"Etc/GMT-1"`` = fixed UTC+1).
    name : str
        Free-text name of the site.
    """

    latitude: float
    longitude: float
    elevation: float = 0.0
    tz: str = "UTC"
    name: str = ""

    def __post_init__(self) -> None:
        _check_coordinate("latitude", self.latitude, -90.0, 90.0)
        _check_coordinate("longitude", self.longitude, -180.0, 180.0)
        _check_coordinate("elevation", self.elevation, -500.0, 9000.0)

    def to_dict(self) -> dict[str, Any]:
        """Return the site as the plain dict stored in ``df.attrs["site"]``."""
        return asdict(self)


def _check_coordinate(name: str, value: float, low: float, high: float) -> None:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise WeatherError(f"site {name} must be a number, got {value!r}") from None
    if not (math.isfinite(v) and low <= v <= high):
        raise WeatherError(
            f"site {name} must be a finite number in {low:g} … {high:g}, got {value!r}"
        )


def site_of(df: pd.DataFrame) -> Site:
    """Return the :class:`Site` stored in ``df.attrs["site"]``.

    Parameters
    ----------
    df : pandas.DataFrame
        A weather frame (from :func:`from_dataframe` or a reader).

    Raises
    ------
    WeatherError
        If the frame carries no site metadata (build it with :func:`from_dataframe`).
    """
    meta = getattr(df, "attrs", {}).get("site")
    if not isinstance(meta, Mapping) or "latitude" not in meta or "longitude" not in meta:
        raise WeatherError(
            "weather frame has no site metadata in df.attrs['site'] (latitude, longitude, "
            "elevation, tz, name); build the frame with thermonet.weather.from_dataframe("
            "df, latitude=..., longitude=...) or one of the readers"
        )
    return Site(
        latitude=float(meta["latitude"]),
        longitude=float(meta["longitude"]),
        elevation=float(meta.get("elevation", 0.0)),
        tz=str(meta.get("tz", "UTC")),
        name=str(meta.get("name", "")),
    )


def check_zone(tz: Any, what: str = "tz") -> Any:
    """Check that ``tz`` is a time zone pandas knows; return it.

    Parameters
    ----------
    tz : str or tzinfo
        An IANA name (``"Europe/Berlin"``), a fixed-offset zone (``"Etc/GMT-1"``) or a tzinfo.
    what : str, default "tz"
        How the value is named in the error (an argument or a command-line option).

    Raises
    ------
    TimeZoneError
        If pandas cannot use it as a zone.
    """
    try:
        pd.Timestamp("2025-01-01").tz_localize(tz)
    except Exception as exc:  # noqa: BLE001 - pandas/zoneinfo/pytz raise unrelated types
        raise TimeZoneError(
            f"{what} {str(tz)!r} is not a known time zone ({type(exc).__name__}); use an "
            "IANA name such as 'Europe/Berlin' or a fixed offset such as 'Etc/GMT-1' "
            "(UTC+1: the sign of the Etc zones is inverted)") from None
    return tz


def localize_index(index: pd.DatetimeIndex, tz: Any, what: str = "weather"
                   ) -> pd.DatetimeIndex:
    """Localize naive time stamps to ``tz``; refuse stamps the zone skips or repeats.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Naive stamps (local wall-clock time).
    tz : str or tzinfo
        Zone to read them in.
    what : str
        Names the data in the error (e.g. the file).

    Returns
    -------
    pandas.DatetimeIndex

    Raises
    ------
    WeatherError
        If some stamps do not exist in ``tz`` (clocks put forward) or exist twice (clocks
        put back), naming the first ones and the fix.
    """
    try:
        return index.tz_localize(tz)
    except Exception:  # noqa: BLE001 - pytz.NonExistentTimeError/AmbiguousTimeError, ValueError
        pass
    gone = index.tz_localize(tz, nonexistent="NaT", ambiguous="NaT")
    bad = index[gone.isna()]
    skipped = index.tz_localize(tz, nonexistent="NaT", ambiguous=np.ones(len(index), bool))
    kind = ("do not exist (the clocks are put forward there)" if skipped.isna().any() else
            "occur twice (the clocks are put back there)")
    shown = ", ".join(str(t) for t in bad[:3]) + (f" and {len(bad) - 3} more" if len(bad) > 3
                                                   else "")
    raise WeatherError(
        f"{what}: {len(bad)} naive time stamp(s) {kind} in zone {_tz_name(tz)}: {shown}. "
        "Weather files keep local standard time all year: read them with a fixed-offset "
        "zone (e.g. tz='Etc/GMT-1' for UTC+1, the sign is inverted), or write each stamp "
        "with its UTC offset (2025-03-30T03:00+02:00)")


def _tz_name(tz: Any) -> str:
    return str(getattr(tz, "key", None) or getattr(tz, "zone", None) or tz)


def _fixed_zone(offset_hours: float) -> Any:
    """A fixed-offset zone for an offset from UTC [h]; ``Etc/GMT±h`` for whole hours.

    Note the inverted sign of the IANA ``Etc`` zones: UTC−5 is ``"Etc/GMT+5"``.
    """
    if float(offset_hours).is_integer():
        return ZoneInfo(f"Etc/GMT{-int(offset_hours):+d}")
    return _dt.timezone(_dt.timedelta(hours=float(offset_hours)))


# --------------------------------------------------------------------------------------------
# time axis
# --------------------------------------------------------------------------------------------
def _require_datetime_index(df: Any, what: str = "weather") -> pd.DatetimeIndex:
    if not isinstance(df, pd.DataFrame):
        raise WeatherError(f"{what} must be a pandas DataFrame, got {type(df).__name__}")
    if not isinstance(df.index, pd.DatetimeIndex):
        raise WeatherError(
            f"{what} index must be a DatetimeIndex, got {type(df.index).__name__}; set it "
            "with df.set_index(pd.DatetimeIndex(df['time'])) or similar"
        )
    if df.index.tz is None:
        raise WeatherError(
            f"{what} index is tz-naive: thermonet needs the time zone to place the sun. "
            "Localize with df.tz_localize('Etc/GMT-1') (fixed UTC+1; use the zone of your "
            "data), or pass tz=... to thermonet.weather.from_dataframe"
        )
    return df.index


def _check_index(index: pd.DatetimeIndex, what: str = "weather") -> pd.Timedelta:
    """Check duplicates, order and step of a tz-aware index; return the step."""
    if len(index) < 2:
        raise WeatherError(f"{what} needs at least 2 rows to define a time step, got {len(index)}")
    dup = index.duplicated(keep=False)
    if dup.any():
        shown = ", ".join(str(t) for t in index[dup].unique()[:5])
        raise WeatherError(
            f"{what} index has {int(index.duplicated().sum())} duplicate time stamp(s), e.g. "
            f"{shown}; remove them (df[~df.index.duplicated()]) after checking which row is right"
        )
    diffs = index[1:] - index[:-1]
    if (diffs <= pd.Timedelta(0)).any():
        k = int(np.argmax(np.asarray(diffs <= pd.Timedelta(0))))
        raise WeatherError(
            f"{what} index is not increasing: {index[k + 1]} follows {index[k]}. Sort with "
            "df.sort_index(), or, for a typical year stitched from several calendar years, "
            "re-stamp it with thermonet.weather.restamp(df, year=2025)"
        )
    step = pd.Timedelta(pd.Series(diffs).value_counts().idxmax())  # the most common step
    if (diffs == step).all():
        return step
    ratio = np.asarray(diffs / step, dtype=float)
    if np.allclose(ratio, np.round(ratio)) and (ratio > 0.5).all():
        where = np.flatnonzero(ratio > 1.5)
        shown = ", ".join(
            f"after {index[k]} ({int(round(ratio[k])) - 1} missing)" for k in where[:5]
        )
        raise WeatherError(
            f"{what} index has missing time stamps (gaps) at a step of {step}: {shown}"
            f"{' ...' if len(where) > 5 else ''}. Insert the missing rows with "
            f"df.asfreq('{_freq_alias(step)}') and repair them explicitly (e.g. "
            "validate(df, fill='interpolate') for short gaps)"
        )
    steps = ", ".join(str(s) for s in pd.unique(diffs)[:5])
    raise WeatherError(
        f"{what} index has an irregular step (steps found: {steps}); thermonet needs one "
        "constant step. Resample to 1 h first, e.g. df.resample('1h').mean()"
    )


def _freq_alias(step: pd.Timedelta) -> str:
    minutes = step / pd.Timedelta(minutes=1)
    return f"{int(minutes // 60)}h" if minutes % 60 == 0 else f"{int(minutes)}min"


def time_step(df: pd.DataFrame | pd.Series | pd.DatetimeIndex) -> pd.Timedelta:
    """Return the constant time step of a weather index, after checking it.

    Parameters
    ----------
    df : DataFrame, Series or DatetimeIndex
        Object with a tz-aware, increasing, regular DatetimeIndex.

    Returns
    -------
    pandas.Timedelta
        The step [s resolution], e.g. ``Timedelta("1h")``.

    Raises
    ------
    WeatherError
        If the index is tz-naive, has duplicates, is not increasing or not regular.
    """
    index = df if isinstance(df, pd.DatetimeIndex) else df.index
    _require_datetime_index(pd.DataFrame(index=index))
    return _check_index(index)


def solar_times(df: pd.DataFrame | pd.Series | pd.DatetimeIndex) -> pd.DatetimeIndex:
    """Interval mid-points at which thermonet places the sun.

    With hour-ending labels (see the module docstring) the row labelled ``t`` describes
    ``(t − Δt, t]``, so its sun is computed at ``t − Δt/2``.

    Parameters
    ----------
    df : DataFrame, Series or DatetimeIndex
        Weather (or any object) with a tz-aware regular index, labels at interval ends.

    Returns
    -------
    pandas.DatetimeIndex
        ``index − step/2``, same time zone and length as the input.
    """
    index = df if isinstance(df, pd.DatetimeIndex) else df.index
    return index - time_step(index) / 2


def solar_position(df: pd.DataFrame, site: Site | None = None) -> pd.DataFrame:
    """Solar position at the interval mid-points of a weather frame, through pvlib.

    The same path as every other sun position in thermonet: it calls
    :func:`thermonet.solar.solar_position` (``interval="ending"``), i.e.
    :func:`pvlib.solarposition.get_solarposition` with the NREL SPA (``"nrel_numpy"``) at
    :func:`solar_times`, with the site's elevation and, when present, the frame's
    ``pressure`` [Pa] and ``temp_air`` [°C] for the refraction correction.

    Parameters
    ----------
    df : pandas.DataFrame
        Weather frame with hour-ending labels.
    site : Site, optional
        Defaults to :func:`site_of` ``(df)``.

    Returns
    -------
    pandas.DataFrame
        pvlib's columns (``zenith``, ``apparent_zenith``, ``azimuth`` ... [°]) indexed by
        the frame's own labels (values computed at the mid-points).

    References
    ----------
    Reda, I., Andreas, A. (2004). Solar position algorithm for solar radiation
    applications. Solar Energy 76(5), 577–589.
    """
    site = site if site is not None else site_of(df)
    pressure = df["pressure"].to_numpy(dtype=float) if "pressure" in df.columns else None
    temperature = df["temp_air"].to_numpy(dtype=float) if "temp_air" in df.columns else None
    return _solar_position(df.index, site.latitude, site.longitude, site.elevation,
                           pressure, temperature, interval="ending")


# --------------------------------------------------------------------------------------------
# restamping
# --------------------------------------------------------------------------------------------
def _mode_step(index: pd.DatetimeIndex) -> pd.Timedelta:
    diffs = pd.Series(index[1:] - index[:-1])
    diffs = diffs[diffs > pd.Timedelta(0)]
    if diffs.empty:
        raise WeatherError("weather index has no positive time step; cannot re-stamp it")
    return pd.Timedelta(diffs.value_counts().idxmax())


def _require_fixed_offset(tz: Any, years: Sequence[int]) -> None:
    offsets = {
        pd.Timestamp(int(y), m, 1).tz_localize(tz).utcoffset() for y in years for m in (1, 4, 7, 10)
    }
    if len(offsets) > 1:
        raise WeatherError(
            f"restamp needs a fixed-offset time zone, but '{_tz_name(tz)}' changes its UTC "
            "offset during the year (daylight saving). Convert first, e.g. "
            "df.tz_convert('Etc/GMT-1') for standard time UTC+1, re-stamp, and convert back "
            "afterwards if you want"
        )


def restamp(
    df: pd.DataFrame, year: int = REFERENCE_YEAR, *, leap_day: str = "error"
) -> pd.DataFrame:
    """Put every row of a (typical-year) weather frame onto one reference year.

    Each row keeps its month, day and time of day; only the year changes. The work is done on
    the interval START (label − step) in the frame's own wall-clock time, so the hour-ending
    label "12/31 24:00" (= January 1, 00:00 of the next year) stays the last row of the
    reference year, and becomes ``year + 1``-01-01 00:00. Rows are then sorted by their new
    labels: when a typical year was read in UTC and converted to a local zone, the hour(s)
    that spill past December 31 move to the start of January (a "roll").

    Parameters
    ----------
    df : pandas.DataFrame
        Weather with a tz-aware index of hour-ending labels in a fixed-offset zone.
    year : int, default :data:`REFERENCE_YEAR` (2025)
        Reference year [-].
    leap_day : {"error", "drop"}, default "error"
        What to do with rows on February 29 when ``year`` is not a leap year: ``"error"``
        raises; ``"drop"`` removes them (the only rows ever dropped, and only on request).
        If ``year`` IS a leap year and the data have no February 29, a WeatherError is
        raised (the series would have a one-day gap); choose a non-leap year.

    Returns
    -------
    pandas.DataFrame
        Copy with the new index, increasing; ``attrs`` kept, ``attrs["source"]`` extended.

    Raises
    ------
    WeatherError
        tz-naive index, a zone with daylight saving, February 29 rows with a non-leap
        ``year`` and ``leap_day="error"``, a leap ``year`` without February 29 data, an
        unknown ``leap_day``, or two rows mapped onto the same time stamp.
    """
    if leap_day not in ("error", "drop"):
        raise WeatherError(f"leap_day must be 'error' or 'drop', got {leap_day!r}")
    index = _require_datetime_index(df)
    if len(index) < 2:
        raise WeatherError(f"restamp needs at least 2 rows, got {len(index)}")
    year = int(year)
    tz = index.tz
    step = _mode_step(index)
    wall = (index - step).tz_localize(None)
    _require_fixed_offset(tz, sorted({*wall.year.unique().tolist(), year}))
    leap = np.asarray((wall.month == 2) & (wall.day == 29))
    note = f"re-stamped onto {year} (hour-ending labels, rows sorted)"
    if leap.any() and not calendar.isleap(year):
        if leap_day == "error":
            raise WeatherError(
                f"{int(leap.sum())} row(s) fall on February 29 but the reference year {year} "
                "is not a leap year; pass leap_day='drop' to drop them explicitly, or choose "
                "a leap reference year (e.g. year=2024)"
            )
        df, wall = df.loc[~leap], wall[~leap]
        note += f"; {int(leap.sum())} February 29 row(s) dropped (leap_day='drop')"
    elif calendar.isleap(year) and not leap.any():
        has_feb28 = bool(((wall.month == 2) & (wall.day == 28)).any())
        has_mar1 = bool(((wall.month == 3) & (wall.day == 1)).any())
        if has_feb28 and has_mar1:
            raise WeatherError(
                f"reference year {year} is a leap year but the data have no February 29: the "
                "re-stamped series would have a one-day gap. Choose a non-leap year "
                f"(e.g. year={REFERENCE_YEAR})"
            )
    parts = {
        "year": np.full(len(wall), year),
        "month": wall.month,
        "day": wall.day,
        "hour": wall.hour,
        "minute": wall.minute,
        "second": wall.second,
    }
    new_index = pd.DatetimeIndex(pd.to_datetime(parts) + step).tz_localize(tz)
    dup = new_index.duplicated(keep=False)
    if dup.any():
        shown = ", ".join(str(t) for t in new_index[dup].unique()[:5])
        raise WeatherError(
            f"re-stamping onto {year} maps several rows onto the same time stamp ({shown}); "
            "the input holds more than one year or overlapping months — cut it to one year"
        )
    out = df.set_axis(new_index).sort_index(kind="stable")
    out.index.name = df.index.name
    out.attrs = dict(df.attrs)
    out.attrs["source"] = _add_note(df.attrs.get("source", ""), note)
    return out


def _add_note(source: str, note: str) -> str:
    return f"{source}; {note}" if source else note


# --------------------------------------------------------------------------------------------
# validation
# --------------------------------------------------------------------------------------------
def validate(
    df: pd.DataFrame,
    required: Sequence[str] = REQUIRED_COLUMNS,
    fill: str | None = None,
    *,
    max_gap: int = MAX_FILL_GAP,
    closure_limits: tuple[float, float] | None = CLOSURE_LIMITS,
    site: Site | None = None,
) -> pd.DataFrame:
    """Check a weather frame and return it (repaired only if asked).

    Checks, in this order, each raising :class:`~thermonet.errors.WeatherError` that names
    the column or time stamp and says how to fix it:

    1. the index: DatetimeIndex, tz-aware, no duplicates, increasing, one constant step,
       no missing time stamps;
    2. every column in ``required`` is present; known columns are numeric;
    3. no NaN in the required and known optional columns (unless ``fill="interpolate"``),
       no ±inf;
    4. every known column within its plausible range (:data:`COLUMN_SPECS`);
    5. ``temp_dew`` not above ``temp_air`` by more than :data:`DEW_POINT_EXCESS_MAX`;
    6. closure of the irradiance components (Notes).

    Parameters
    ----------
    df : pandas.DataFrame
        Weather frame, labels at interval ends (module docstring).
    required : sequence of str, default :data:`REQUIRED_COLUMNS`
        Columns that must be present.
    fill : {None, "interpolate"}, default None
        ``None``: NaN is an error. ``"interpolate"``: interior NaN runs of at most
        ``max_gap`` rows are filled by time interpolation and a
        :class:`~thermonet.errors.ThermonetWarning` lists every filled column and range;
        longer runs and runs touching the first or last row stay an error.
    max_gap : int, default :data:`MAX_FILL_GAP` (3)
        Longest NaN run [rows] that ``fill="interpolate"`` repairs.
    closure_limits : (float, float) or None, default :data:`CLOSURE_LIMITS` (0.08, 0.15)
        Allowed relative closure error [-] for zenith < 75° and 75° … 85°; ``None`` skips
        the closure test.
    site : Site, optional
        Needed for the closure test; defaults to :func:`site_of` ``(df)``.

    Returns
    -------
    pandas.DataFrame
        A copy of ``df`` (filled where asked), ``attrs`` kept.

    Raises
    ------
    WeatherError
        On any failed check (see above).

    Notes
    -----
    Closure test: with the solar zenith z at the interval mid-point (pvlib SPA),
    ``S = dni·cos z + dhi`` must agree with ``ghi``:
    ``|ghi / S − 1| ≤ 0.08`` for z < 75° and ``≤ 0.15`` for 75° ≤ z < 85°, applied where
    ``max(ghi, S) > 50 W/m²``. This is the BSRN comparison test (Long & Dutton 2002, from
    memory) cut at 85°. A failure usually means DNI given on the horizontal, a wrong site, or
    start-labelled data read as hour-ending.

    References
    ----------
    Long, C. N., Dutton, E. G. (2002). BSRN Global Network recommended QC tests, V2.0.
    BSRN Technical Report (from memory).
    """
    index = _require_datetime_index(df)
    _check_index(index)
    if fill not in (None, "interpolate"):
        raise WeatherError(f"fill must be None or 'interpolate', got {fill!r}")
    _check_columns(df, required)
    checked = [c for c in dict.fromkeys([*required, *COLUMN_SPECS]) if c in df.columns]
    out = df.copy()
    out.attrs = dict(df.attrs)
    out = _handle_nan(out, checked, fill, int(max_gap))
    for col in checked:
        _check_finite(out, col)
        if col in COLUMN_SPECS:
            _check_range(out, col)
        if col in IRRADIANCE_COLUMNS:  # in range, but perhaps kW/m²: warns
            check_irradiance(out[col], f"weather column {col!r}", stacklevel=3)
    _check_dew_point(out)
    if closure_limits is not None:
        _check_closure(out, closure_limits, site if site is not None else site_of(out))
    return out


def _check_columns(df: pd.DataFrame, required: Sequence[str]) -> None:
    missing = [c for c in required if c not in df.columns]
    if missing:
        raise WeatherError(
            f"weather is missing required column(s) {missing}; columns present: "
            f"{list(df.columns)}. thermonet uses pvlib's names (temp_air [°C], ghi, dni, dhi "
            "[W/m²] ...): rename yours, e.g. df.rename(columns={'T2m': 'temp_air'})"
        )
    for col in (c for c in df.columns if c in COLUMN_SPECS or c in required):
        if not pd.api.types.is_numeric_dtype(df[col]) or pd.api.types.is_bool_dtype(df[col]):
            raise WeatherError(
                f"weather column '{col}' must be numeric, got dtype {df[col].dtype}; convert "
                f"with pd.to_numeric(df['{col}'])"
            )


def _nan_runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """Start and stop (exclusive) positions of the True runs of a boolean array."""
    padded = np.concatenate([[False], mask, [False]]).astype(np.int8)
    edges = np.flatnonzero(np.diff(padded))
    return list(zip(edges[::2].tolist(), edges[1::2].tolist(), strict=True))


def _handle_nan(
    df: pd.DataFrame, columns: list[str], fill: str | None, max_gap: int
) -> pd.DataFrame:
    index, filled = df.index, []
    for col in columns:
        mask = df[col].isna().to_numpy()
        if not mask.any():
            continue
        runs = _nan_runs(mask)
        first = index[runs[0][0]]
        if fill is None:
            raise WeatherError(
                f"weather column '{col}' has {int(mask.sum())} NaN value(s) in {len(runs)} "
                f"gap(s), first at {first}; fill them from a better source, or pass "
                f"fill='interpolate' to interpolate gaps of up to {max_gap} rows"
            )
        bad = [(a, b) for a, b in runs if b - a > max_gap or a == 0 or b == len(index)]
        if bad:
            a, b = bad[0]
            raise WeatherError(
                f"weather column '{col}': NaN gap of {b - a} row(s) from {index[a]} to "
                f"{index[b - 1]} cannot be interpolated (allowed: interior gaps of at most "
                f"{max_gap} rows); fill it from another source or raise max_gap knowingly"
            )
        df[col] = df[col].interpolate(method="time", limit_area="inside")
        filled.append(f"'{col}': " + ", ".join(f"{index[a]} … {index[b - 1]}" for a, b in runs))
    if filled:
        warnings.warn(
            "weather NaN gaps filled by time interpolation (fill='interpolate'): "
            + "; ".join(filled),
            ThermonetWarning,
            stacklevel=3,
        )
        df.attrs["source"] = _add_note(df.attrs.get("source", ""), "NaN gaps interpolated")
    return df


def _first_bad(df: pd.DataFrame, col: str, bad: np.ndarray) -> str:
    k = int(np.argmax(bad))
    return f"first at {df.index[k]} (value {df[col].iloc[k]!r})"


def _check_finite(df: pd.DataFrame, col: str) -> None:
    bad = ~np.isfinite(df[col].to_numpy(dtype=float))
    if bad.any():
        raise WeatherError(
            f"weather column '{col}' has {int(bad.sum())} non-finite value(s) (inf), "
            f"{_first_bad(df, col, bad)}; replace them with real data"
        )


def _check_range(df: pd.DataFrame, col: str) -> None:
    low, high, unit = COLUMN_SPECS[col]
    values = df[col].to_numpy(dtype=float)
    bad = (values < low) | (values > high)
    if not bad.any():
        return
    hint = ""
    if col == "pressure" and np.nanmedian(values) < 2000.0:
        hint = " It looks like mbar/hPa: thermonet keeps pressure in Pa, multiply by 100."
    elif col in ("ghi", "dni", "dhi") and (values < low).any():
        hint = (
            f" Small negative night values are sensor offsets: set them to zero explicitly "
            f"(df['{col}'] = df['{col}'].clip(lower=0)) if you accept that."
        )
    elif col == "relative_humidity" and np.nanmax(values) <= 1.0 + 1e-9:
        hint = " It looks like a fraction: thermonet keeps relative humidity in %, multiply by 100."
    elif col in ("temp_air", "temp_dew") and np.nanmedian(values) > 150.0:
        hint = " It looks like kelvin: thermonet keeps temperatures in °C, subtract 273.15."
    raise WeatherError(
        f"weather column '{col}' has {int(bad.sum())} value(s) outside the plausible range "
        f"{low:g} … {high:g} {unit}, {_first_bad(df, col, bad)}.{hint}"
    )


def _check_dew_point(df: pd.DataFrame) -> None:
    if "temp_dew" not in df.columns or "temp_air" not in df.columns:
        return
    excess = (df["temp_dew"] - df["temp_air"]).to_numpy(dtype=float)
    bad = excess > DEW_POINT_EXCESS_MAX
    if bad.any():
        raise WeatherError(
            f"weather column 'temp_dew' exceeds 'temp_air' by more than "
            f"{DEW_POINT_EXCESS_MAX} K in {int(bad.sum())} row(s), "
            f"{_first_bad(df, 'temp_dew', bad)}; a dew point above the air temperature "
            "means relative humidity > 100 % — check that the columns are not swapped"
        )


def _check_closure(df: pd.DataFrame, limits: tuple[float, float], site: Site) -> None:
    zen = solar_position(df, site)["zenith"].to_numpy(dtype=float)
    ghi, dni, dhi = (df[c].to_numpy(dtype=float) for c in ("ghi", "dni", "dhi"))
    total = dni * np.cos(np.radians(zen)) + dhi
    used = (zen < CLOSURE_ZENITH_MAX) & (np.maximum(ghi, total) > CLOSURE_MIN_IRRADIANCE)
    limit = np.where(zen < 75.0, limits[0], limits[1])
    with np.errstate(divide="ignore", invalid="ignore"):
        err = np.abs(ghi / total - 1.0)
    bad = used & ~(err <= limit)
    if not bad.any():
        return
    k = int(np.argmax(bad))
    raise WeatherError(
        f"weather columns 'ghi', 'dni', 'dhi' are inconsistent in {int(bad.sum())} row(s) "
        f"with the sun up: |ghi/(dni·cos z + dhi) − 1| must be ≤ {limits[0]:g} (zenith < "
        f"75°) or ≤ {limits[1]:g} (75 … {CLOSURE_ZENITH_MAX:g}°). First at {df.index[k]}: "
        f"ghi={ghi[k]:.1f}, dni={dni[k]:.1f}, dhi={dhi[k]:.1f} W/m², zenith={zen[k]:.1f}° "
        f"(dni·cos z + dhi = {total[k]:.1f} W/m²). Check that dni is beam NORMAL "
        "irradiance, that labels mark interval ENDS (use label='start' for start-labelled "
        "data) and the site coordinates; or pass closure_limits=None to skip this test"
    )


# --------------------------------------------------------------------------------------------
# readers
# --------------------------------------------------------------------------------------------
def from_dataframe(
    df: pd.DataFrame,
    *,
    latitude: float,
    longitude: float,
    elevation: float = 0.0,
    tz: Any = None,
    name: str = "",
    source: str = "user DataFrame",
    label: str = "end",
    required: Sequence[str] = REQUIRED_COLUMNS,
    fill: str | None = None,
    closure_limits: tuple[float, float] | None = CLOSURE_LIMITS,
    max_gap: int = MAX_FILL_GAP,
) -> pd.DataFrame:
    """Turn any DataFrame with pvlib column names into a validated thermonet weather frame.

    Parameters
    ----------
    df : pandas.DataFrame
        DatetimeIndex and pvlib-named columns in thermonet units (module docstring;
        ``pressure`` in Pa).
    latitude, longitude : float
        Site position [°], north and east positive.
    elevation : float, default 0.0
        Site elevation [m].
    tz : str or tzinfo, optional
        A naive index is localized to ``tz``; an aware one is converted to ``tz``. A naive
        index without ``tz`` is an error.
    name : str, default ""
        Site name, stored in ``attrs["site"]``.
    source : str, default "user DataFrame"
        Provenance note stored in ``attrs["source"]``.
    label : {"end", "start"}, default "end"
        Whether the labels mark interval ends (thermonet's convention) or starts; with
        ``"start"`` every label is moved forward by one step.
    required, fill, closure_limits, max_gap
        Passed to :func:`validate`.

    Returns
    -------
    pandas.DataFrame
        Validated copy with ``attrs["site"]`` and ``attrs["source"]``.

    Raises
    ------
    WeatherError
        Bad site values, unknown ``label``, or any :func:`validate` failure.
    """
    if not isinstance(df, pd.DataFrame):
        raise WeatherError(f"weather must be a pandas DataFrame, got {type(df).__name__}")
    if label not in ("end", "start"):
        raise WeatherError(f"label must be 'end' (hour ending) or 'start', got {label!r}")
    out = df.copy()
    if isinstance(out.index, pd.DatetimeIndex) and tz is not None:
        zone = check_zone(tz)
        if out.index.tz is None:
            out.index = localize_index(out.index, zone, source)
        else:
            out = out.tz_convert(zone)
    index = _require_datetime_index(out)
    if label == "start":
        out.index = index + _check_index(index)
        source = _add_note(source, "labels moved from interval start to interval end")
    site = Site(
        latitude=float(latitude),
        longitude=float(longitude),
        elevation=float(elevation),
        tz=_tz_name(out.index.tz),
        name=str(name),
    )
    out.attrs = {**dict(df.attrs), "site": site.to_dict(), "source": str(source)}
    return tag_timing(validate(out, required, fill, max_gap=max_gap,
                               closure_limits=closure_limits, site=site))


def read_tmy3(
    path: str | Path,
    *,
    year: int | None = REFERENCE_YEAR,
    columns: Sequence[str] = _TMY3_COLUMNS,
    leap_day: str = "error",
    fill: str | None = None,
    closure_limits: tuple[float, float] | None = CLOSURE_LIMITS,
    encoding: str | None = None,
) -> pd.DataFrame:
    """Read an NREL TMY3 CSV file through :func:`pvlib.iotools.read_tmy3`.

    Parameters
    ----------
    path : str or pathlib.Path
        The TMY3 ``.CSV`` file (first line station header, second line column names).
    year : int or None, default :data:`REFERENCE_YEAR` (2025)
        Reference year for :func:`restamp`. ``None`` keeps the file's own years (only
        useful for a TMY3-format file of one actual year; a typical year then fails the
        monotonic check).
    columns : sequence of str
        pvlib-named columns to keep. Default: temp_air, temp_dew, relative_humidity,
        pressure, wind_speed, wind_direction, ghi, dni, dhi and cloud_cover (from
        ``TotCld`` [tenths]). ``albedo`` is left out by default because many TMY3 files
        carry no measured albedo (pvlib's 723170TYA.CSV has 0.00 in every row); ask for it
        explicitly if your file has it. The TMY3 flag columns are not kept.
    leap_day : {"error", "drop"}
        Passed to :func:`restamp`.
    fill, closure_limits
        Passed to :func:`validate`.
    encoding : str, optional
        Passed to pvlib.

    Returns
    -------
    pandas.DataFrame
        Validated weather, hour-ending labels in the file's fixed UTC offset (zone
        ``Etc/GMT±h``), ``pressure`` converted from mbar to Pa (×100).

    Raises
    ------
    WeatherError
        Unknown column requested, or any :func:`restamp` / :func:`validate` failure.

    Notes
    -----
    TMY3 radiation is the energy received during the 60 minutes before the time stamp, and
    times are local standard time (Wilcox & Marion 2008). That is thermonet's hour-ending
    convention, so no shift is applied. The labels are rebuilt here from the file's Date and
    Time columns, "24:00" as 00:00 of the next day: pvlib's index moves every label on
    February 29 to March 1, which would put the "02/28 24:00" row of a leap source year one
    day late (pvlib 0.16.1).

    References
    ----------
    Wilcox, S., Marion, W. (2008). Users Manual for TMY3 Data Sets. NREL/TP-581-43156.
    """
    try:
        data, meta = pvlib.iotools.read_tmy3(
            str(path), coerce_year=None, map_variables=True, encoding=encoding
        )
        labels = _tmy3_labels(data, meta)
        site = (float(meta["latitude"]), float(meta["longitude"]), float(meta["altitude"]))
    except FileNotFoundError:
        raise
    except Exception as exc:  # noqa: BLE001 - pvlib/pandas raise KeyError, ValueError, ...
        raise WeatherError(
            f"file {Path(path).name} is not an NREL TMY3 CSV ({type(exc).__name__}: {exc}): "
            "read_tmy3 expects a first line with the station header (USAF, Name, State, TZ, "
            "latitude, longitude, altitude) and a second line with the column names "
            "('Date (MM/DD/YYYY)', 'Time (HH:MM)', 'GHI (W/m^2)', ...); for other CSV files "
            "read them with pandas and pass the frame to from_dataframe"
        ) from exc
    data = data.rename(columns={"TotCld (tenths)": "cloud_cover"})
    unknown = [c for c in columns if c not in data.columns]
    if unknown:
        raise WeatherError(
            f"TMY3 file {Path(path).name} has no column(s) {unknown} after pvlib's renaming; "
            f"available: {sorted(c for c in data.columns if c.islower())}"
        )
    data = data[list(columns)].astype(float)
    if "pressure" in data.columns:
        data["pressure"] = data["pressure"] * _PA_PER_MBAR
    data.index = labels
    data.index.name = "time"
    name = str(meta.get("Name", "")).strip().strip('"')
    station = f"NREL TMY3 station {meta.get('USAF')} {name}, {meta.get('State', '')}"
    data.attrs["source"] = (
        f"{station}: file {Path(path).name} read with pvlib.iotools.read_tmy3; pressure "
        "converted mbar -> Pa"
    )
    if year is not None:
        data = restamp(data, year, leap_day=leap_day)
    return from_dataframe(
        data,
        latitude=site[0],
        longitude=site[1],
        elevation=site[2],
        name=name,
        source=data.attrs["source"],
        fill=fill,
        closure_limits=closure_limits,
    )


def _tmy3_labels(data: pd.DataFrame, meta: Mapping[str, Any]) -> pd.DatetimeIndex:
    """Hour-ending labels rebuilt from the TMY3 'Date' and 'Time' columns.

    "24:00" becomes 00:00 of the next day. pvlib's own index is not used because pvlib moves
    every label that falls on February 29 to March 1, which puts the "02/28 24:00" row of a
    leap source year (e.g. 1996) one day late.
    """
    dates = pd.to_datetime(data["Date (MM/DD/YYYY)"], format="%m/%d/%Y")
    hhmm = data["Time (HH:MM)"].str.split(":", expand=True).astype(int)
    naive = dates + pd.to_timedelta(hhmm[0], unit="h") + pd.to_timedelta(hhmm[1], unit="min")
    return pd.DatetimeIndex(naive).tz_localize(_fixed_zone(meta["TZ"]))


def _pvgis_location(meta: Mapping[str, Any]) -> tuple[float, float, float]:
    inputs = meta.get("inputs", {})
    loc = inputs.get("location", inputs)
    try:
        return float(loc["latitude"]), float(loc["longitude"]), float(loc["elevation"])
    except (KeyError, TypeError, ValueError):
        raise WeatherError(
            "PVGIS file has no readable location (latitude, longitude, elevation) in its "
            "inputs; is it a PVGIS typical-year (tmy) output?"
        ) from None


def read_pvgis_tmy(
    path_or_buffer: Any,
    *,
    pvgis_format: str | None = None,
    year: int | None = REFERENCE_YEAR,
    tz: Any = "UTC",
    label: str = "start",
    leap_day: str = "error",
    name: str = "",
    fill: str | None = None,
    closure_limits: tuple[float, float] | None = CLOSURE_LIMITS,
) -> pd.DataFrame:
    """Read a PVGIS typical-year file (JSON or CSV output format) through pvlib.

    Parameters
    ----------
    path_or_buffer : str, pathlib.Path or file-like
        PVGIS ``tmy`` output. A JSON buffer must be text, a CSV buffer bytes (pvlib).
    pvgis_format : {"json", "csv"}, optional
        Required for a buffer; taken from the file suffix otherwise. Other formats are
        refused.
    year : int or None, default :data:`REFERENCE_YEAR` (2025)
        Reference year for :func:`restamp`; ``None`` keeps the months' own years.
    tz : str or tzinfo, default "UTC"
        Zone to convert the (UTC) data to before re-stamping; it must have a fixed offset,
        e.g. ``"Etc/GMT-1"`` for UTC+1.
    label : {"start", "end"}, default "start"
        PVGIS labels are read as interval starts and moved to interval ends (+1 step).
    leap_day : {"error", "drop"}
        Passed to :func:`restamp`.
    name : str
        Site name for ``attrs["site"]``.
    fill, closure_limits
        Passed to :func:`validate`.

    Returns
    -------
    pandas.DataFrame
        Validated weather; ``pressure`` (PVGIS ``SP``) is in Pa already; PVGIS ``IR(h)``
        becomes ``ghi_infrared`` [W/m²] (not checked).

    Raises
    ------
    WeatherError
        Unsupported format, missing location, or any :func:`restamp` / :func:`validate`
        failure.

    Notes
    -----
    PVGIS gives UTC times; thermonet reads each PVGIS label as the start of its hour, moves
    it to the end, converts to ``tz`` and re-stamps: with a positive UTC offset the last
    hour(s) of December roll to the start of January of the reference year.

    References
    ----------
    Huld, T., Müller, R., Gambardella, A. (2012). A new solar radiation database for
    estimating PV performance in Europe and Africa. Solar Energy 86(6), 1803–1815.
    """
    fmt = pvgis_format
    if fmt is None and isinstance(path_or_buffer, str | Path):
        fmt = Path(path_or_buffer).suffix[1:].lower()
    if fmt not in ("json", "csv"):
        raise WeatherError(
            f"read_pvgis_tmy reads the PVGIS 'json' or 'csv' output formats, got "
            f"{fmt!r}; download the typical year as JSON or CSV, or pass pvgis_format="
        )
    if label not in ("end", "start"):
        raise WeatherError(f"label must be 'start' or 'end', got {label!r}")
    try:
        data, meta = pvlib.iotools.read_pvgis_tmy(path_or_buffer, pvgis_format=fmt,
                                                  map_variables=True)
    except FileNotFoundError:
        raise
    except Exception as exc:  # noqa: BLE001 - pvlib/json/pandas raise many types
        what = (f"file {Path(path_or_buffer).name}" if isinstance(path_or_buffer, str | Path)
                else "the buffer")
        raise WeatherError(
            f"{what} is not a PVGIS typical-year {fmt} output ({type(exc).__name__}: {exc}): "
            "read_pvgis_tmy expects the file PVGIS writes for a 'tmy' request (inputs with "
            "the location, months_selected, and the hourly columns T2m, G(h), Gb(n), Gd(h), "
            "...); for other files read them with pandas and pass the frame to "
            "from_dataframe"
        ) from exc
    lat, lon, elev = _pvgis_location(meta)
    data = data.rename(columns={"IR(h)": "ghi_infrared"}).astype(float)
    data.index.name = "time"
    source = f"PVGIS typical year ({fmt}) read with pvlib.iotools.read_pvgis_tmy"
    months = meta.get("months_selected")
    if months:
        source += "; months from years " + ", ".join(str(m.get("year")) for m in months)
    if label == "start":
        data.index = data.index + _mode_step(data.index)
        source += "; labels moved from interval start to interval end (+1 step)"
    data = data.tz_convert(tz)
    data.attrs["source"] = source
    if year is not None:
        data = restamp(data, year, leap_day=leap_day)
    return from_dataframe(
        data,
        latitude=lat,
        longitude=lon,
        elevation=elev,
        name=name,
        source=data.attrs["source"],
        fill=fill,
        closure_limits=closure_limits,
    )


# --------------------------------------------------------------------------------------------
# sky temperature
# --------------------------------------------------------------------------------------------
def sky_temperature_swinbank(temp_air):
    """Clear-sky temperature after Swinbank (1963).

    Parameters
    ----------
    temp_air : float, array-like or Series
        Air temperature near the ground [°C].

    Returns
    -------
    float, ndarray or Series
        Effective sky temperature [°C] (same shape and index as the input).

    Notes
    -----
    .. math:: T_{sky} = 0.0552\\,T_a^{1.5} \\qquad (T \\text{ in K})

    Written by hand (pvlib has no sky temperature). NaN propagates.

    References
    ----------
    Swinbank, W. C. (1963). Long-wave radiation from clear skies. Quarterly Journal of the
    Royal Meteorological Society 89(381), 339–348.

    Examples
    --------
    >>> round(float(sky_temperature_swinbank(20.0)), 2)
    3.91
    """
    t_air_k = _as_float(temp_air) + ZERO_CELSIUS
    return 0.0552 * t_air_k**1.5 - ZERO_CELSIUS


def sky_emissivity_berdahl_martin(temp_dew, hour=None, pressure=None, cloud_cover=None):
    """Sky emissivity after Berdahl & Martin (1984), with diurnal, pressure and cloud terms.

    Parameters
    ----------
    temp_dew : float, array-like or Series
        Dew-point temperature [°C].
    hour : float, array-like or Series, optional
        Local standard time [h] from midnight, 0 … 24; ``None`` omits the diurnal term.
    pressure : float, array-like or Series, optional
        Station pressure [Pa]; ``None`` omits the pressure term.
    cloud_cover : float, array-like or Series, optional
        Total cloud cover [tenths], 0 … 10; ``None`` gives the clear sky.

    Returns
    -------
    float, ndarray or Series
        Sky emissivity [-], limited to at most 1 (see Notes).

    Raises
    ------
    WeatherError
        If ``cloud_cover`` lies outside 0 … 10 tenths.

    Notes
    -----
    Clear sky (Berdahl & Martin 1984; the diurnal and pressure terms as quoted in
    docs/references.md §6, from memory), with T_dp in °C, t in hours, P in mbar:

    .. math::
        \\varepsilon_0 = 0.711 + 0.56\\,\\frac{T_{dp}}{100} + 0.73\\left(\\frac{T_{dp}}{100}
        \\right)^2 + 0.013\\cos\\frac{2\\pi t}{24} + 0.00012\\,(P - 1000)

    Cloudy sky, cubic cloud factor with N in tenths (from memory):

    .. math:: \\varepsilon = \\varepsilon_0\\,(1 + 0.0224 N - 0.0035 N^2 + 0.00028 N^3)

    The result is limited to 1 (a sky radiating more than a black body at air temperature
    is outside the model; thermonet's choice, not part of the source). Written by hand:
    pvlib has no sky emissivity.

    References
    ----------
    Berdahl, P., Martin, M. (1984). Emissivity of clear skies. Solar Energy 32(5), 663–664.
    Martin, M., Berdahl, P. (1984). Characteristics of infrared sky radiation in the United
    States. Solar Energy 33(3/4), 321–336.
    """
    x = _as_float(temp_dew) / 100.0
    eps = 0.711 + 0.56 * x + 0.73 * x**2
    if hour is not None:
        eps = eps + 0.013 * np.cos(2.0 * np.pi * _as_float(hour) / 24.0)
    if pressure is not None:
        eps = eps + 0.00012 * (_as_float(pressure) / _PA_PER_MBAR - 1000.0)
    if cloud_cover is not None:
        n = _as_float(cloud_cover)
        if np.any((np.asarray(n) < 0.0) | (np.asarray(n) > 10.0)):
            raise WeatherError(
                "cloud_cover must be in tenths, 0 … 10; got values from "
                f"{np.nanmin(n):g} to {np.nanmax(n):g} (a fraction 0 … 1? multiply by 10)"
            )
        eps = eps * (1.0 + 0.0224 * n - 0.0035 * n**2 + 0.00028 * n**3)
    return np.minimum(eps, 1.0)


def sky_temperature_berdahl_martin(
    temp_air, temp_dew, hour=None, pressure=None, cloud_cover=None
):
    """Effective sky temperature from the Berdahl–Martin sky emissivity.

    Parameters
    ----------
    temp_air : float, array-like or Series
        Air temperature [°C].
    temp_dew : float, array-like or Series
        Dew-point temperature [°C].
    hour, pressure, cloud_cover : optional
        Local standard time [h], pressure [Pa], cloud cover [tenths]; see
        :func:`sky_emissivity_berdahl_martin`.

    Returns
    -------
    float, ndarray or Series
        Sky temperature [°C].

    Notes
    -----
    .. math:: T_{sky} = \\varepsilon^{1/4}\\,T_a \\qquad (T \\text{ in K})

    from σT_sky⁴ = ε σT_a⁴ (the sky seen as a black body at T_sky).

    References
    ----------
    Berdahl, P., Martin, M. (1984). Emissivity of clear skies. Solar Energy 32(5), 663–664.
    """
    eps = sky_emissivity_berdahl_martin(temp_dew, hour, pressure, cloud_cover)
    return eps**0.25 * (_as_float(temp_air) + ZERO_CELSIUS) - ZERO_CELSIUS


def _as_float(x):
    """Series stay Series (index kept), scalars stay scalars, the rest becomes ndarray."""
    if isinstance(x, pd.Series):
        return x.astype(float)
    if np.ndim(x) == 0:
        return float(x)
    return np.asarray(x, dtype=float)


# --------------------------------------------------------------------------------------------
# ground temperature
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class AnnualCycle:
    """Annual sinusoid ``T(t) = t_mean − amplitude·cos(2π (t − day_min)/365)``.

    Attributes
    ----------
    t_mean : float
        Annual mean [°C].
    amplitude : float
        Half the peak-to-peak swing of the daily means [K].
    day_min : float
        Time of the minimum [d] counted from January 1, 00:00 (= 0.0).
    """

    t_mean: float
    amplitude: float
    day_min: float


def _days_since_new_year(index: pd.DatetimeIndex) -> np.ndarray:
    """Time of year [d] from January 1, 00:00 local time of each stamp's own year."""
    wall = index.tz_localize(None) if index.tz is not None else index
    new_year = pd.to_datetime({"year": wall.year, "month": 1, "day": 1})
    return np.asarray((wall - pd.DatetimeIndex(new_year)) / pd.Timedelta(days=1), dtype=float)


def ground_temperature_kusuda(time, depth, t_mean, amplitude, day_min, diffusivity):
    """Undisturbed ground temperature after Kusuda & Achenbach (1965).

    Parameters
    ----------
    time : DatetimeIndex, float or array-like
        Time of year: a DatetimeIndex (converted to days since January 1, 00:00 local) or
        days [d] on that scale directly.
    depth : float
        Depth below the surface [m], ≥ 0.
    t_mean : float
        Annual mean surface temperature [°C].
    amplitude : float
        Amplitude of the annual surface temperature wave [K], ≥ 0.
    day_min : float
        Time of the minimum surface temperature [d], same scale as ``time``.
    diffusivity : float
        Soil thermal diffusivity [m²/s] (> 0; 0.05 m²/day = 5.787e-7 m²/s).

    Returns
    -------
    float, ndarray or Series
        Ground temperature [°C]; a Series indexed like ``time`` for a DatetimeIndex.

    Raises
    ------
    WeatherError
        Negative depth or amplitude, or non-positive diffusivity.

    Notes
    -----
    Periodic solution of the heat equation in a semi-infinite solid with a sinusoidal
    surface temperature, period 365 d, α in m²/day:

    .. math::
        T(z, t) = T_m - A_s\\,e^{-z\\sqrt{\\pi/(365\\alpha)}}\\,
        \\cos\\left[\\frac{2\\pi}{365}\\left(t - t_0 - \\frac{z}{2}
        \\sqrt{\\frac{365}{\\pi\\alpha}}\\right)\\right]

    Written by hand (not in pvlib).

    References
    ----------
    Kusuda, T., Achenbach, P. R. (1965). Earth temperature and thermal diffusivity at
    selected stations in the United States. ASHRAE Transactions 71(1), 61–75.
    """
    if not depth >= 0.0:
        raise WeatherError(f"ground depth must be ≥ 0 m, got {depth!r}")
    if not amplitude >= 0.0:
        raise WeatherError(f"ground temperature amplitude must be ≥ 0 K, got {amplitude!r}")
    if not diffusivity > 0.0:
        raise WeatherError(f"soil diffusivity must be > 0 m²/s, got {diffusivity!r}")
    index = time if isinstance(time, pd.DatetimeIndex) else None
    t = _days_since_new_year(index) if index is not None else _as_float(time)
    alpha_day = float(diffusivity) * _SECONDS_PER_DAY  # m²/s -> m²/day
    damping = math.exp(-depth * math.sqrt(math.pi / (_DAYS_PER_YEAR * alpha_day)))
    lag = depth / 2.0 * math.sqrt(_DAYS_PER_YEAR / (math.pi * alpha_day))
    temp = t_mean - amplitude * damping * np.cos(2.0 * np.pi / _DAYS_PER_YEAR * (t - day_min - lag))
    return pd.Series(temp, index=index) if index is not None else temp


def fit_annual_cycle(temp_air: pd.Series) -> AnnualCycle:
    """Fit an annual sinusoid to the daily means of an air-temperature series.

    Parameters
    ----------
    temp_air : pandas.Series
        Air temperature [°C] with a tz-aware regular index (labels at interval ends),
        covering at least 360 days.

    Returns
    -------
    AnnualCycle
        Mean [°C], amplitude [K] and day of minimum [d from January 1, 00:00].

    Raises
    ------
    WeatherError
        Shorter than 360 days, or NaN in the series.

    Notes
    -----
    Daily means are formed over the interval mid-points of each local calendar day; a
    linear least-squares fit of ``m + a cos ωt + b sin ωt`` (ω = 2π/365 d⁻¹) at the day
    centres gives ``A = √(a² + b²)`` and the minimum at ``t₀ = atan2(b, a)/ω + 365/2``
    (mod 365). Using air temperature as the surface temperature of Kusuda–Achenbach is
    common practice (no source); a ground surface is usually a little warmer on average.
    """
    if temp_air.isna().any():
        raise WeatherError("temp_air has NaN values; validate/fill the weather before fitting")
    mid = solar_times(temp_air.index)
    days = pd.Series(temp_air.to_numpy(dtype=float), index=mid.tz_localize(None).normalize())
    daily = days.groupby(level=0).mean()
    if len(daily) < 360:
        raise WeatherError(
            f"fitting the annual temperature cycle needs at least 360 days, got {len(daily)}; "
            "pass t_mean, amplitude and day_min explicitly"
        )
    t = _days_since_new_year(pd.DatetimeIndex(daily.index)) + 0.5
    w = 2.0 * np.pi / _DAYS_PER_YEAR
    design = np.column_stack([np.ones_like(t), np.cos(w * t), np.sin(w * t)])
    (m, a, b), *_ = np.linalg.lstsq(design, daily.to_numpy(), rcond=None)
    day_min = (math.atan2(b, a) / w + _DAYS_PER_YEAR / 2.0) % _DAYS_PER_YEAR
    return AnnualCycle(t_mean=float(m), amplitude=float(math.hypot(a, b)), day_min=float(day_min))


# --------------------------------------------------------------------------------------------
# helpers adding columns
# --------------------------------------------------------------------------------------------
def _sky_swinbank(df: pd.DataFrame, use_clouds: bool) -> pd.Series:
    return sky_temperature_swinbank(df["temp_air"])


def _sky_berdahl_martin(df: pd.DataFrame, use_clouds: bool) -> pd.Series:
    if "temp_dew" in df.columns:
        temp_dew = df["temp_dew"]
    elif "relative_humidity" in df.columns:
        # dew point from RH with pvlib's Magnus–Tetens form (pvlib.atmosphere.tdew_from_rh)
        temp_dew = pvlib.atmosphere.tdew_from_rh(df["temp_air"], df["relative_humidity"])
    else:
        raise WeatherError(
            "sky temperature method 'berdahl_martin' needs column 'temp_dew' or "
            "'relative_humidity'; add one, or use method='swinbank' (air temperature only)"
        )
    mid = solar_times(df)
    hour = pd.Series(mid.hour + mid.minute / 60.0, index=df.index)
    pressure = df["pressure"] if "pressure" in df.columns else None
    clouds = df["cloud_cover"] if use_clouds and "cloud_cover" in df.columns else None
    return sky_temperature_berdahl_martin(df["temp_air"], temp_dew, hour, pressure, clouds)


_SKY_METHODS = {"swinbank": _sky_swinbank, "berdahl_martin": _sky_berdahl_martin}


def add_sky_temperature(
    df: pd.DataFrame, method: str = "berdahl_martin", *, use_clouds: bool = True
) -> pd.DataFrame:
    """Return a copy of a weather frame with the column ``temp_sky`` [°C].

    Parameters
    ----------
    df : pandas.DataFrame
        Weather frame (``temp_air``; for Berdahl–Martin also ``temp_dew`` or
        ``relative_humidity``; ``pressure`` and ``cloud_cover`` are used when present).
    method : {"berdahl_martin", "swinbank"}, default "berdahl_martin"
        :func:`sky_temperature_berdahl_martin` (diurnal term at the interval mid-point,
        local time of the index) or :func:`sky_temperature_swinbank` (clear sky).
    use_clouds : bool, default True
        Berdahl–Martin only: apply the cloud factor when ``cloud_cover`` is present.

    Returns
    -------
    pandas.DataFrame
        Copy with ``temp_sky`` [°C]; ``attrs`` kept.

    Raises
    ------
    WeatherError
        Unknown method or missing input column.
    """
    if method not in _SKY_METHODS:
        raise WeatherError(
            f"unknown sky temperature method {method!r}; valid: {sorted(_SKY_METHODS)}"
        )
    if "temp_air" not in df.columns:
        raise WeatherError("add_sky_temperature needs column 'temp_air' [°C]")
    out = df.copy()
    out.attrs = dict(df.attrs)
    out["temp_sky"] = _SKY_METHODS[method](df, use_clouds)
    return out


def add_ground_temperature(
    df: pd.DataFrame,
    depth: float = 2.0,
    *,
    diffusivity: float = DEFAULT_SOIL_DIFFUSIVITY,
    t_mean: float | None = None,
    amplitude: float | None = None,
    day_min: float | None = None,
) -> pd.DataFrame:
    """Return a copy of a weather frame with the column ``temp_ground_<depth>m`` [°C].

    Parameters
    ----------
    df : pandas.DataFrame
        Weather frame with ``temp_air`` [°C] (used only for parameters left as ``None``).
    depth : float, default 2.0
        Depth [m]; the column is named ``f"temp_ground_{depth:g}m"`` (``temp_ground_2m``).
    diffusivity : float, default :data:`DEFAULT_SOIL_DIFFUSIVITY`
        Soil thermal diffusivity [m²/s].
    t_mean, amplitude, day_min : float, optional
        Surface cycle [°C], [K], [d from January 1 00:00]; each ``None`` is taken from
        :func:`fit_annual_cycle` of ``df["temp_air"]``.

    Returns
    -------
    pandas.DataFrame
        Copy with the new column, computed with :func:`ground_temperature_kusuda` at the
        interval mid-points.
    """
    if None in (t_mean, amplitude, day_min):
        if "temp_air" not in df.columns:
            raise WeatherError(
                "add_ground_temperature needs column 'temp_air' to fit the annual cycle, or "
                "t_mean, amplitude and day_min passed explicitly"
            )
        fit = fit_annual_cycle(df["temp_air"])
        t_mean = fit.t_mean if t_mean is None else t_mean
        amplitude = fit.amplitude if amplitude is None else amplitude
        day_min = fit.day_min if day_min is None else day_min
    ground = ground_temperature_kusuda(
        solar_times(df), depth, t_mean, amplitude, day_min, diffusivity
    )
    out = df.copy()
    out.attrs = dict(df.attrs)
    out[f"temp_ground_{depth:g}m"] = ground.to_numpy()
    return out


# ============================================================================================
# Warmer climates: shift/stretch morphing (Belcher, Hacker & Powell 2005) and hot spells.
# A self-contained section of NEW functions; nothing above depends on it.
# ============================================================================================
#: Columns derived from ``temp_air`` that a morph would leave stale: morph first, then derive.
_DERIVED_PREFIXES = ("temp_sky", "temp_ground_")

#: Irradiance columns stretched together by :func:`morph_shift_stretch`.
_IRRADIANCE_COLUMNS = ("ghi", "dni", "dhi")


def _twelve(values: Any, name: str) -> np.ndarray:
    """Twelve monthly values [Jan … Dec] from a number, a sequence of 12 or a month mapping."""
    if isinstance(values, pd.Series) and not isinstance(values.index, pd.DatetimeIndex):
        values = {int(k): v for k, v in values.items()}
    if isinstance(values, Mapping):
        keys = sorted(values)
        if keys != list(range(1, 13)):
            raise WeatherError(f"{name}: a mapping needs the months 1 … 12 as keys, got {keys}")
        values = [values[m] for m in range(1, 13)]
    arr = np.asarray(values, dtype=float)
    if arr.ndim == 0:
        arr = np.full(12, float(arr))
    if arr.shape != (12,):
        raise WeatherError(f"{name}: give one number, 12 monthly values (January first) or a "
                           f"mapping month → value; got shape {arr.shape}")
    if not np.isfinite(arr).all():
        raise WeatherError(f"{name}: monthly values must be finite, got {arr.tolist()}")
    return arr


def _calendar_days(df: pd.DataFrame, what: str) -> tuple[pd.DatetimeIndex, pd.DatetimeIndex]:
    """Interval mid-points and their local calendar days; every day must be complete."""
    step = time_step(df)
    mid = df.index - step / 2
    days = mid.normalize()
    per_day = pd.Series(1, index=days).groupby(level=0).size()
    # rows a whole local day holds (23 or 25 h on daylight-saving changes in a civil zone)
    starts = pd.DatetimeIndex(per_day.index)
    full = np.asarray((starts + pd.DateOffset(days=1) - starts) / step).round().astype(int)
    short = np.flatnonzero(per_day.to_numpy() != full)
    if len(short):
        i = int(short[0])
        raise WeatherError(
            f"{what} needs whole days ({full[i]} rows of {step} on that day, days taken at the "
            f"interval mid-points); day {starts[i].date()} has {int(per_day.iloc[i])}. "
            "Pass whole days, e.g. a full typical year from read_tmy3"
        )
    return mid, days


def monthly_temperature_statistics(weather: pd.DataFrame, column: str = "temp_air"
                                   ) -> pd.DataFrame:
    """Monthly mean, mean daily maximum and mean daily minimum of a temperature column.

    Parameters
    ----------
    weather : pandas.DataFrame
        Weather with a regular tz-aware index of whole days (hour-ending labels).
    column : str, default "temp_air"
        Temperature column [°C].

    Returns
    -------
    pandas.DataFrame
        Index ``month`` (1 … 12, the months present); columns ``mean`` ⟨T⟩_m, ``mean_daily_max``
        ⟨T_max⟩_m, ``mean_daily_min`` ⟨T_min⟩_m [°C] and ``days``. Rows and days are assigned
        to months and days by their interval mid-points.
    """
    if column not in weather.columns:
        raise WeatherError(f"weather has no column {column!r}; columns: {list(weather.columns)}")
    mid, days = _calendar_days(weather, "monthly_temperature_statistics")
    t = pd.Series(np.asarray(weather[column], dtype=float), index=mid)
    daily = t.groupby(days).agg(["max", "min"])
    month_of_day = daily.index.month
    out = pd.DataFrame({
        "mean": t.groupby(mid.month).mean(),
        "mean_daily_max": daily["max"].groupby(month_of_day).mean(),
        "mean_daily_min": daily["min"].groupby(month_of_day).mean(),
        "days": daily["max"].groupby(month_of_day).size(),
    })
    out.index.name = "month"
    return out


def mean_change_for(weather: pd.DataFrame, delta_max: Any, delta_min: Any,
                    column: str = "temp_air") -> np.ndarray:
    """Monthly mean change [K] under which the shift/stretch morph meets ΔT_max and ΔT_min.

    The morph moves the monthly mean daily maximum by ΔT_m + α_m (⟨T_max⟩_m − ⟨T⟩_m) and the
    minimum by ΔT_m + α_m (⟨T_min⟩_m − ⟨T⟩_m). Both equal the given changes when

    ΔT_m = ΔT_max,m − α_m (⟨T_max⟩_m − ⟨T⟩_m),  α_m = (ΔT_max,m − ΔT_min,m)/(⟨T_max⟩_m − ⟨T_min⟩_m).

    Parameters
    ----------
    weather : pandas.DataFrame
    delta_max, delta_min : number, 12 values or mapping month → value
        Changes of the monthly mean daily maximum and minimum [K].
    column : str, default "temp_air"

    Returns
    -------
    numpy.ndarray
        12 monthly mean changes [K] (NaN for months absent from ``weather``).
    """
    stats = monthly_temperature_statistics(weather, column).reindex(range(1, 13))
    dmax = _twelve(delta_max, "delta_max [K]")
    dmin = _twelve(delta_min, "delta_min [K]")
    span = (stats["mean_daily_max"] - stats["mean_daily_min"]).to_numpy()
    alpha = (dmax - dmin) / span
    return dmax - alpha * (stats["mean_daily_max"] - stats["mean"]).to_numpy()


def _move_humidity(out: pd.DataFrame, t_old: np.ndarray, t_new: np.ndarray,
                   humidity: str, what: str) -> None:
    """Update ``temp_dew`` / ``relative_humidity`` of ``out`` in place after a temperature change.

    ``"relative"``: relative humidity kept; the dew point moved so that the vapour pressure is
    RH·e_s(T_new). ``"dew_point"``: dew point (vapour pressure) kept; RH scaled by
    e_s(T_old)/e_s(T_new). e_s from the Magnus form of :mod:`pvlib.atmosphere` (WMO).
    """
    if humidity not in ("relative", "dew_point"):
        raise WeatherError(f"{what}: humidity must be 'relative' (keep relative humidity, move "
                           f"the dew point) or 'dew_point' (keep the dew point, recompute "
                           f"relative humidity), got {humidity!r}")
    if humidity == "relative" and "temp_dew" in out.columns:
        rh_magnus = pvlib.atmosphere.rh_from_tdew(t_old, out["temp_dew"].to_numpy(float))
        out["temp_dew"] = pvlib.atmosphere.tdew_from_rh(t_new, rh_magnus)
    if humidity == "dew_point" and "relative_humidity" in out.columns:
        # rh_from_tdew(T_new, T_old) = 100·e_s(T_old)/e_s(T_new)
        ratio = pvlib.atmosphere.rh_from_tdew(t_new, t_old) / 100.0
        rh = out["relative_humidity"].to_numpy(float) * ratio
        if (rh > 100.0 + 1e-9).any():
            i = int(np.argmax(rh))
            raise WeatherError(f"{what}: keeping the dew point gives relative humidity "
                               f"{rh[i]:.1f} % > 100 % at {out.index[i]} (the air was cooled "
                               "below its dew point); use humidity='relative'")
        out["relative_humidity"] = rh


def _check_derived(weather: pd.DataFrame, what: str) -> None:
    stale = [c for c in weather.columns if str(c).startswith(_DERIVED_PREFIXES)]
    if stale:
        raise WeatherError(f"{what}: columns {stale} are derived from temp_air and would be "
                           "left unchanged; drop them, morph, then add them again "
                           "(add_sky_temperature / add_ground_temperature)")


def morph_shift_stretch(weather: pd.DataFrame, delta_mean: Any, delta_max: Any, delta_min: Any,
                        *, irradiance_change: Any = None, humidity: str = "relative",
                        column: str = "temp_air") -> pd.DataFrame:
    """Morph a typical year to a warmer climate by shift and stretch (Belcher et al. 2005).

    Parameters
    ----------
    weather : pandas.DataFrame
        Present-day typical year (whole days, regular tz-aware hour-ending index).
    delta_mean, delta_max, delta_min : number, 12 values or mapping month → value
        Changes of the monthly mean ΔT_m, of the monthly mean daily maximum ΔT_max,m and of
        the monthly mean daily minimum ΔT_min,m of the dry-bulb temperature [K], e.g. from a
        climate projection for the site. :func:`mean_change_for` gives the ΔT_m that makes
        the max and min changes exact.
    irradiance_change : number, 12 values or mapping, optional
        Fractional change of the monthly mean global irradiance [-] (0.05 = +5 %), > −1;
        ``ghi``, ``dni`` and ``dhi`` are stretched by the same factor 1 + f_m, which keeps
        the diffuse fraction and the closure GHI = DNI·cos z + DHI. Default: unchanged.
    humidity : {"relative", "dew_point"}, default "relative"
        ``"relative"``: relative humidity is kept and ``temp_dew`` is moved to the dew point
        of that humidity at the new temperature (more moisture in warmer air);
        ``"dew_point"``: ``temp_dew`` (the vapour pressure) is kept and
        ``relative_humidity`` is scaled by e_s(T)/e_s(T′). Saturation pressure e_s from the
        Magnus form in :func:`pvlib.atmosphere.rh_from_tdew`. A column that is absent is
        left absent.
    column : str, default "temp_air"
        The dry-bulb column [°C].

    Returns
    -------
    pandas.DataFrame
        A morphed copy; other columns unchanged; ``attrs["source"]`` notes the morph and
        ``attrs["morph"]`` holds the monthly changes and stretch factors.

    Raises
    ------
    WeatherError
        Missing column, partial days, derived columns (``temp_sky``, ``temp_ground_*``),
        a stretch α_m ≤ −1 (it would invert the daily cycle), irradiance change ≤ −1, or a
        relative humidity above 100 % with ``humidity="dew_point"``.

    Notes
    -----
    Belcher, Hacker & Powell (2005), dry-bulb temperature by shift and stretch, month m:

    .. math::

        T = T_0 + \\Delta T_m + \\alpha_m (T_0 - \\langle T_0 \\rangle_m), \\qquad
        \\alpha_m = \\frac{\\Delta T_{max,m} - \\Delta T_{min,m}}
                         {\\langle T_{0,max} \\rangle_m - \\langle T_{0,min} \\rangle_m}

    ⟨T_0⟩_m is the monthly mean, ⟨T_0,max⟩_m and ⟨T_0,min⟩_m the monthly means of the daily
    maximum and minimum of the present-day file. The monthly mean moves by exactly ΔT_m and
    the monthly mean daily range by exactly ΔT_max,m − ΔT_min,m; the mean daily maximum and
    minimum move by ΔT_m + α_m(⟨T_0,max⟩_m − ⟨T_0⟩_m) and ΔT_m + α_m(⟨T_0,min⟩_m − ⟨T_0⟩_m),
    which equal ΔT_max,m and ΔT_min,m when ΔT_m is consistent (:func:`mean_change_for`).
    Irradiance by stretch α = 1 + f_m (their "stretch" with the fractional change of the
    monthly mean). Rows and days belong to months by their interval mid-points.

    References
    ----------
    Belcher, S.E., Hacker, J.N., Powell, D.S. (2005). Constructing design weather data for
    future climates. Building Services Engineering Research and Technology 26(1), 49–61.
    doi:10.1191/0143624405bt112oa
    """
    what = "morph_shift_stretch"
    _check_derived(weather, what)
    stats = monthly_temperature_statistics(weather, column)
    dmean = _twelve(delta_mean, "delta_mean [K]")
    dmax = _twelve(delta_max, "delta_max [K]")
    dmin = _twelve(delta_min, "delta_min [K]")
    span = (stats["mean_daily_max"] - stats["mean_daily_min"]).reindex(range(1, 13)).to_numpy()
    alpha = (dmax - dmin) / span
    present = stats.index.to_numpy()
    bad = [int(m) for m in present if not (np.isfinite(alpha[m - 1]) and alpha[m - 1] > -1.0)]
    if bad:
        raise WeatherError(f"{what}: stretch α = (ΔT_max − ΔT_min)/(⟨T_max⟩ − ⟨T_min⟩) must be "
                           f"finite and > −1, got {alpha[bad[0] - 1]:.3f} in month {bad[0]}; "
                           "the daily range would shrink below zero (or the file's month has "
                           "no daily range). Check delta_max and delta_min")
    step = time_step(weather)
    month = np.asarray((weather.index - step / 2).month) - 1
    mean0 = stats["mean"].reindex(range(1, 13)).to_numpy()
    t0 = weather[column].to_numpy(float)
    t1 = t0 + dmean[month] + alpha[month] * (t0 - mean0[month])
    out = weather.copy()
    out.attrs = dict(weather.attrs)
    out[column] = t1
    _move_humidity(out, t0, t1, humidity, what)
    record = {"delta_mean": dmean.tolist(), "delta_max": dmax.tolist(),
              "delta_min": dmin.tolist(), "alpha": alpha.tolist(), "humidity": humidity}
    if irradiance_change is not None:
        frac = _twelve(irradiance_change, "irradiance_change [-]")
        if not (frac > -1.0).all():
            raise WeatherError(f"{what}: irradiance_change must be > −1 (−100 %), got "
                               f"{frac.tolist()}")
        for col in _IRRADIANCE_COLUMNS:
            if col in out.columns:
                out[col] = out[col].to_numpy(float) * (1.0 + frac[month])
        record["irradiance_change"] = frac.tolist()
    out.attrs["morph"] = record
    out.attrs["source"] = _add_note(
        str(weather.attrs.get("source", "")),
        "morphed to a warmer climate by shift/stretch (Belcher, Hacker & Powell 2005)")
    return out


def hottest_spell(weather: pd.DataFrame, days: int, column: str = "temp_air") -> pd.DataFrame:
    """The rows of the ``days`` consecutive days with the highest mean temperature.

    Parameters
    ----------
    weather : pandas.DataFrame
        Weather of whole days (regular tz-aware hour-ending index).
    days : int
        Length of the spell [d], ≥ 1.
    column : str, default "temp_air"
        Temperature column [°C].

    Returns
    -------
    pandas.DataFrame
        The rows of the hottest window (days by interval mid-point; the first one wins a tie);
        ``attrs["spell"]`` holds ``first_day``, ``last_day`` (ISO dates) and ``mean`` [°C].

    Notes
    -----
    The running mean of the daily means over ``days`` days is maximised; the year is not
    wrapped round. Use the result as the period of a heat-wave check, or with a warm-up.
    """
    if isinstance(days, bool) or not isinstance(days, (int, np.integer)) or days < 1:
        raise WeatherError(f"hottest_spell: days must be a whole number ≥ 1, got {days!r}")
    if column not in weather.columns:
        raise WeatherError(f"weather has no column {column!r}; columns: {list(weather.columns)}")
    mid, day_of_row = _calendar_days(weather, "hottest_spell")
    daily = pd.Series(weather[column].to_numpy(float), index=mid).groupby(day_of_row).mean()
    if days > len(daily):
        raise WeatherError(f"hottest_spell: days={days} exceeds the {len(daily)} days of the "
                           "weather")
    running = daily.rolling(days).mean()
    last = int(np.nanargmax(running.to_numpy()))
    first_day, last_day = daily.index[last - days + 1], daily.index[last]
    rows = weather[(day_of_row >= first_day) & (day_of_row <= last_day)].copy()
    rows.attrs = dict(weather.attrs)
    rows.attrs["spell"] = {"first_day": first_day.date().isoformat(),
                           "last_day": last_day.date().isoformat(),
                           "mean": float(running.iloc[last])}
    return rows


def insert_warm_spell(weather: pd.DataFrame, start: Any, days: float, offset: float, *,
                      ramp_hours: float = 24.0, humidity: str = "relative",
                      column: str = "temp_air") -> pd.DataFrame:
    """Add a warm (or cold) offset for a number of days, with raised-cosine edges.

    Parameters
    ----------
    weather : pandas.DataFrame
        Weather with a regular tz-aware index.
    start : str or pandas.Timestamp
        Local start of the full offset (e.g. ``"2025-07-14"`` for midnight); a naive time is
        read in the index's time zone.
    days : float
        Duration of the full offset [d], > 0.
    offset : float
        Temperature added during the spell [K] (negative for a cold spell).
    ramp_hours : float, default 24
        Duration of each edge [h], ≥ 0: the offset rises as ½(1 − cos(π t/ramp)) before
        ``start`` and falls the same way after the end (0 gives a step).
    humidity : {"relative", "dew_point"}, default "relative"
        As in :func:`morph_shift_stretch`.
    column : str, default "temp_air"

    Returns
    -------
    pandas.DataFrame
        A copy with the offset added at the interval mid-points; ``attrs["source"]`` notes it.
    """
    what = "insert_warm_spell"
    _check_derived(weather, what)
    if column not in weather.columns:
        raise WeatherError(f"weather has no column {column!r}; columns: {list(weather.columns)}")
    checks = (("days [d]", days, "> 0", lambda v: v > 0),
              ("ramp_hours [h]", ramp_hours, "≥ 0", lambda v: v >= 0),
              ("offset [K]", offset, "", lambda v: True))
    for name, value, rule, ok in checks:
        number = isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(
            value, bool)
        if not (number and math.isfinite(value) and ok(value)):
            raise WeatherError(f"{what}: {name} must be a finite number {rule}, got {value!r}")
    step = time_step(weather)
    t0 = pd.Timestamp(start)
    t0 = t0.tz_localize(weather.index.tz) if t0.tzinfo is None else t0.tz_convert(
        weather.index.tz)
    t1 = t0 + pd.Timedelta(days=float(days))
    ramp = pd.Timedelta(hours=float(ramp_hours))
    first, last = weather.index[0] - step, weather.index[-1]
    if t0 - ramp < first or t1 + ramp > last:
        raise WeatherError(f"{what}: the spell {t0 - ramp} … {t1 + ramp} (with its ramps) "
                           f"does not lie within the weather {first} … {last}; move or "
                           "shorten it")
    mid = weather.index - step / 2
    hours_before = np.asarray((t0 - mid) / pd.Timedelta(hours=1), dtype=float)
    hours_after = np.asarray((mid - t1) / pd.Timedelta(hours=1), dtype=float)
    outside = np.maximum(hours_before, hours_after)        # > 0 outside the plateau [h]
    if ramp_hours > 0:
        x = np.clip(1.0 - outside / ramp_hours, 0.0, 1.0)  # 1 on the plateau, 0 beyond ramps
        weight = np.where(outside <= 0.0, 1.0, 0.5 * (1.0 - np.cos(np.pi * x)))
    else:
        weight = (outside <= 0.0).astype(float)
    t_old = weather[column].to_numpy(float)
    t_new = t_old + offset * weight
    out = weather.copy()
    out.attrs = dict(weather.attrs)
    out[column] = t_new
    _move_humidity(out, t_old, t_new, humidity, what)
    out.attrs["source"] = _add_note(
        str(weather.attrs.get("source", "")),
        f"{offset:+g} K spell from {t0} for {days:g} d, {ramp_hours:g} h raised-cosine edges")
    return out


__all__ += [
    "hottest_spell",
    "insert_warm_spell",
    "mean_change_for",
    "monthly_temperature_statistics",
    "morph_shift_stretch",
]


# --------------------------------------------------------------------------------------------
# timing of the columns within a step
# --------------------------------------------------------------------------------------------
#: Columns that are instantaneous values at their time stamp (typical-year temperatures,
#: humidity, wind, pressure): the engine interpolates them linearly between labels
#: (first-order hold). Every other column (irradiance, which typical-year files give as the
#: total over the hour ending at the label) is held over its interval (zero-order hold).
INSTANTANEOUS_COLUMNS = ("temp_air", "temp_dew", "temp_sky", "relative_humidity",
                         "wind_speed", "wind_direction", "pressure")

#: Key of ``DataFrame.attrs`` under which readers record each column's timing.
TIMING_KEY = "timing"


def instantaneous_columns(weather: pd.DataFrame) -> frozenset:
    """Columns of ``weather`` that are instantaneous values (interpolated between labels).

    The frame's own record ``weather.attrs["timing"]`` (``{column: "instantaneous" |
    "interval"}``, written by thermonet's readers) decides where it names a column; other
    columns are instantaneous when they are in :data:`INSTANTANEOUS_COLUMNS` or start with
    ``temp_`` (e.g. ``temp_ground_1m``), and interval values otherwise.

    Parameters
    ----------
    weather : pandas.DataFrame
        Weather frame; each row's label ends its interval.

    Returns
    -------
    frozenset of str
    """
    record = weather.attrs.get(TIMING_KEY, {}) or {}
    out = set()
    for col in weather.columns:
        kind = record.get(col)
        if kind is None:
            inst = col in INSTANTANEOUS_COLUMNS or str(col).startswith("temp_")
            kind = "instantaneous" if inst else "interval"
        if kind not in ("instantaneous", "interval"):
            raise WeatherError(f"weather.attrs['timing'][{col!r}] is {kind!r}; use "
                               "'instantaneous' or 'interval'")
        if kind == "instantaneous":
            out.add(col)
    return frozenset(out)


def tag_timing(weather: pd.DataFrame) -> pd.DataFrame:
    """Record every column's timing in ``weather.attrs["timing"]`` (in place; returned).

    Parameters
    ----------
    weather : pandas.DataFrame
        Weather frame; see :func:`instantaneous_columns` for the defaults.
    """
    inst = instantaneous_columns(weather)
    weather.attrs[TIMING_KEY] = {c: ("instantaneous" if c in inst else "interval")
                                 for c in weather.columns}
    return weather


__all__ += ["INSTANTANEOUS_COLUMNS", "TIMING_KEY", "instantaneous_columns", "tag_timing"]
