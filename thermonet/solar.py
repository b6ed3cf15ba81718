"""Solar gains of buildings: sun position, irradiance on any surface, windows, shading.

One concern per function, each usable alone on floats, arrays or Series:

* :func:`solar_position` — the sun at the interval mid-points, through pvlib (NREL SPA);
* :func:`surface_irradiance` — beam, sky diffuse and ground-reflected irradiance on any
  plane, through pvlib's transposition models (isotropic, Hay–Davies, Perez);
* :func:`incidence_angle_modifier`, :func:`diffuse_incidence_modifiers`,
  :func:`window_transmitted` — solar gain transmitted by a window (pvlib IAM models);
* external shading by geometry, written by hand because pvlib has none for buildings:
  :func:`overhang_shaded_fraction`, :func:`fin_shaded_fraction`,
  :func:`combined_shaded_fraction` (beam), :func:`overhang_sky_view_factor`,
  :func:`fin_view_factors`, :func:`external_diffuse_factors` (diffuse), the far horizon
  :func:`horizon_shaded`, :func:`horizon_diffuse_factor`, and
  :func:`apply_external_shading`;
* movable shading: :class:`MovableShading`, :func:`shading_state_from_irradiance`;
* where the transmitted solar lands in the room: :func:`solar_shares`,
  :func:`distribute_solar`.

Conventions (read this once)
----------------------------
* Angles in degrees [°]. Surface tilt 0 … 180° from horizontal (0 = facing up, 90 =
  vertical, 180 = facing down); azimuths 0 … 360° clockwise from north (90 = east,
  180 = south) — pvlib's convention.
* Weather rows describe the interval that ENDS at their label (hour ending), inputs held
  constant over it. The sun is therefore placed at the interval mid-point
  ``label − step/2`` (``interval="ending"``, the default); results keep the labels.
* Irradiance [W/m²], gains [W]. Positive = into the surface / room.
* Weather columns have pvlib's names: ``ghi``, ``dni``, ``dhi`` [W/m²], optional
  ``albedo`` [-], ``pressure`` [Pa], ``temp_air`` [°C]. Site metadata are read from
  ``df.attrs["site"] = {"latitude", "longitude", "elevation", ...}`` when not given.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd
import pvlib

from thermonet.errors import NetworkError, ScheduleError, WeatherError
from thermonet.parameters import Expr
from thermonet.parameters import default as _default

__all__ = [
    "DEFAULT_ALBEDO",
    "SKY_MODELS",
    "IAM_MODELS",
    "INTERVALS",
    "SOLAR_CONVECTIVE_FRACTION",
    "FLOOR_SOLAR_SHARE",
    "solar_position",
    "surface_irradiance",
    "incidence_angle_modifier",
    "diffuse_incidence_modifiers",
    "window_transmitted",
    "Overhang",
    "Fins",
    "overhang_shaded_fraction",
    "fin_shaded_fraction",
    "combined_shaded_fraction",
    "overhang_sky_view_factor",
    "fin_view_factors",
    "external_diffuse_factors",
    "horizon_shaded",
    "horizon_diffuse_factor",
    "apply_external_shading",
    "INTERNAL_CONVECTIVE_FRACTION",
    "MovableShading",
    "internal_device_shares",
    "shading_state_from_irradiance",
    "solar_shares",
    "distribute_solar",
]

#: Ground reflectance used when neither the weather nor the caller gives one [-]
#: (0.2, grass / mixed surroundings; common practice, no source).
DEFAULT_ALBEDO = 0.2

#: Sky-diffuse transposition models of :func:`surface_irradiance` (key -> pvlib function).
SKY_MODELS: tuple[str, ...] = ("isotropic", "haydavies", "perez")

#: Incidence-angle-modifier models of :func:`incidence_angle_modifier`, with the pvlib
#: default parameters used when ``param`` is None. ``ashrae``: b = 0.05 (pvlib's default,
#: fitted to glass-covered PV modules); ``physical``: n = 1.526, K = 4 m⁻¹, L = 0.002 m
#: (pvlib's defaults, one sheet of low-iron glass, De Soto et al. 2006).
IAM_MODELS: dict[str, dict[str, float]] = {
    "ashrae": {"b": 0.05},
    "physical": {"n": 1.526, "K": 4.0, "L": 0.002},
}

#: Interval conventions of :func:`solar_position`.
INTERVALS: tuple[str, ...] = ("ending", "beginning", "instant")

#: Share of transmitted solar given directly to the room air [-]: 0.1, the convective
#: fraction of solar gains in ISO 52016-1:2017 (from memory, docs/references.md §7.2 [M]).
SOLAR_CONVECTIVE_FRACTION = 0.1

#: Share of transmitted solar absorbed by the floor in the ``"floor"`` method of
#: :func:`solar_shares` [-]: 0.6 (common practice, no source); the remaining 0.3 goes to
#: the other surfaces weighted by area.
FLOOR_SOLAR_SHARE = 0.6

_DEG = math.pi / 180.0


# --------------------------------------------------------------------------------------------
# small validators and type helpers
# --------------------------------------------------------------------------------------------
def _finite_number(name: str, value: Any, low: float = -math.inf, high: float = math.inf,
                   *, low_open: bool = False, high_open: bool = False,
                   allow_inf: bool = False, error: type[ValueError] = NetworkError) -> float:
    """Return ``value`` as float after checking it is a number within [low, high]."""
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise error(f"{name} must be a number, got {value!r} ({type(value).__name__})")
    v = float(value)
    if math.isnan(v) or (math.isinf(v) and not allow_inf):
        raise error(f"{name} must be a finite number, got {value!r}")
    bad_low = v <= low if low_open else v < low
    bad_high = v >= high if high_open else v > high
    if bad_low or bad_high:
        lb = "(" if low_open else "["
        hb = ")" if high_open else "]"
        raise error(f"{name} must be in {lb}{low:g}, {high:g}{hb}, got {value!r}")
    return v


def _array(name: str, value: Any, error: type[ValueError] = NetworkError) -> np.ndarray:
    """Float array of ``value`` (scalar, list, array or Series), NaN/inf refused."""
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise error(f"{name} must be numeric, got {type(value).__name__}") from None
    if not np.all(np.isfinite(arr)):
        bad = int(np.size(arr) - np.count_nonzero(np.isfinite(arr)))
        raise error(f"{name} contains {bad} NaN or infinite value(s); repair them first")
    return arr


def _index_of(*values: Any) -> pd.Index | None:
    for v in values:
        if isinstance(v, (pd.Series, pd.DataFrame)):
            return v.index
    return None


def _like(result: np.ndarray, *templates: Any, name: str | None = None) -> Any:
    """Return ``result`` as Series (a template is a Series), float (all scalar) or array."""
    index = _index_of(*templates)
    if index is not None:
        return pd.Series(np.asarray(result, dtype=float).reshape(len(index)), index=index,
                         name=name)
    if all(np.ndim(t) == 0 for t in templates):
        return float(np.asarray(result).reshape(()))
    return np.asarray(result, dtype=float)


def _check_same_index(name: str, value: Any, index: pd.Index) -> None:
    if isinstance(value, (pd.Series, pd.DataFrame)) and not value.index.equals(index):
        raise ScheduleError(
            f"{name} has an index that differs from the irradiance frame's; align it first "
            f"(e.g. {name}.reindex(irradiance.index)) — nothing is aligned silently"
        )


def _time_index(index: Any, what: str) -> pd.DatetimeIndex:
    if not isinstance(index, pd.DatetimeIndex):
        raise WeatherError(
            f"{what} must be a pandas DatetimeIndex, got {type(index).__name__}; pass "
            "df.index for a DataFrame"
        )
    if index.tz is None:
        raise WeatherError(
            f"{what} is tz-naive: the sun cannot be placed without a time zone. Localize "
            "it, e.g. index.tz_localize('Etc/GMT-1') for fixed UTC+1"
        )
    return index


def _regular_step(index: pd.DatetimeIndex, what: str) -> pd.Timedelta:
    if len(index) < 2:
        raise WeatherError(
            f"{what} has {len(index)} row(s): the step, and so the interval mid-point, is "
            "undefined. Use interval='instant' for single instants"
        )
    diffs = index[1:] - index[:-1]
    step = diffs[0]
    if step <= pd.Timedelta(0) or not (diffs == step).all():
        raise WeatherError(
            f"{what} is not strictly increasing with one constant step (steps found: "
            f"{', '.join(str(s) for s in pd.unique(diffs)[:4])}); sort it and resample to a "
            "regular step first, e.g. df.resample('1h').mean()"
        )
    return pd.Timedelta(step)


def _site_value(df: pd.DataFrame, key: str) -> float | None:
    site = getattr(df, "attrs", {}).get("site")
    if isinstance(site, Mapping) and site.get(key) is not None:
        return float(site[key])
    return None


# --------------------------------------------------------------------------------------------
# solar position
# --------------------------------------------------------------------------------------------
def solar_position(index, latitude, longitude, elevation=0.0, pressure=None, temperature=None,
                   interval="ending", *, delta_t=67.0):
    """Solar position for each row of a time index, through pvlib's NREL SPA.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        tz-aware labels. For ``interval="ending"`` or ``"beginning"`` it must be strictly
        increasing with one constant step.
    latitude : float
        Site latitude [°], north positive, -90 … 90.
    longitude : float
        Site longitude [°], east positive, -180 … 180.
    elevation : float, default 0
        Site elevation above sea level [m].
    pressure : float or array-like, optional
        Station pressure [Pa] for the refraction correction (one value or one per row).
        Default: computed by pvlib from ``elevation`` (``pvlib.atmosphere.alt2pres``).
    temperature : float or array-like, optional
        Air temperature [°C] for the refraction correction. Default 12 °C (pvlib's).
    interval : {"ending", "beginning", "instant"}, default "ending"
        What a label stands for. ``"ending"``: the interval ``(t − Δt, t]`` — the sun is
        computed at the mid-point ``t − Δt/2`` (thermonet's weather convention).
        ``"beginning"``: ``[t, t + Δt)``, sun at ``t + Δt/2``. ``"instant"``: the sun at
        ``t`` itself.
    delta_t : float, default 67
        Difference between terrestrial time and UT1 [s] (pvlib's default; about 69 s in
        the 2020s, an error of 2 s in time is negligible here).

    Returns
    -------
    pandas.DataFrame
        Indexed by the input labels (values computed at the times described above):
        ``apparent_zenith``, ``zenith``, ``apparent_elevation``, ``elevation``,
        ``azimuth`` (clockwise from north), ``equation_of_time`` [min] — pvlib's columns;
        angles [°]. "apparent" = corrected for atmospheric refraction.

    Raises
    ------
    WeatherError
        Naive or irregular index, bad coordinates, pressure/temperature of wrong length.
    NetworkError
        Unknown ``interval``.

    Notes
    -----
    Calls :func:`pvlib.solarposition.get_solarposition` with ``method="nrel_numpy"``,
    i.e. the Solar Position Algorithm of Reda & Andreas (uncertainty ±0.0003°).

    References
    ----------
    Reda, I., Andreas, A. (2004). Solar position algorithm for solar radiation
    applications. Solar Energy 76(5), 577–589. NREL/TP-560-34302 (rev. 2008).

    Examples
    --------
    >>> idx = pd.date_range("2025-06-21 01:00", periods=24, freq="h", tz="Etc/GMT-1")
    >>> sp = solar_position(idx, 48.0, 11.0)   # sun at 00:30, 01:30, ... (hour ending)
    """
    index = _time_index(index, "index")
    lat = _finite_number("latitude", latitude, -90.0, 90.0, error=WeatherError)
    lon = _finite_number("longitude", longitude, -180.0, 180.0, error=WeatherError)
    elev = _finite_number("elevation", elevation, -500.0, 9000.0, error=WeatherError)
    if interval not in INTERVALS:
        raise NetworkError(f"interval must be one of {list(INTERVALS)}, got {interval!r}")
    if interval == "instant":
        times = index
    else:
        step = _regular_step(index, "index")
        times = index - step / 2 if interval == "ending" else index + step / 2
    kwargs: dict[str, Any] = {"delta_t": _finite_number("delta_t", delta_t, -1e4, 1e4)}
    for name, value, default in (("pressure", pressure, None), ("temperature", temperature,
                                                                 12.0)):
        if value is None:
            if default is not None:
                kwargs[name] = default
            continue
        if isinstance(value, pd.Series) and not value.index.equals(index):
            raise WeatherError(f"{name} Series has another index than `index`; align it or "
                               "pass .to_numpy()")
        arr = _array(name, value, error=WeatherError)
        if arr.ndim > 0 and arr.shape != (len(index),):
            raise WeatherError(
                f"{name} has shape {arr.shape}; give one value or one per row "
                f"({len(index)})"
            )
        if name == "pressure" and np.any((arr < 40_000.0) | (arr > 110_000.0)):
            raise WeatherError(
                "pressure must be in Pa (40 000 … 110 000); values such as 1013 are mbar/hPa: "
                "multiply by 100"
            )
        kwargs[name] = float(arr) if arr.ndim == 0 else arr
    sp = pvlib.solarposition.get_solarposition(
        times, lat, lon, altitude=elev, method="nrel_numpy", **kwargs
    )
    return sp.set_axis(index)


# --------------------------------------------------------------------------------------------
# irradiance on a surface
# --------------------------------------------------------------------------------------------
def _check_surface(tilt: Any, azimuth: Any) -> tuple[float, float]:
    t = _finite_number("tilt", tilt, 0.0, 180.0)
    a = _finite_number("azimuth", azimuth, 0.0, 360.0)
    return t, a


def _weather_column(weather: pd.DataFrame, col: str, low: float = 0.0) -> np.ndarray:
    values = pd.to_numeric(weather[col], errors="coerce").to_numpy(dtype=float)
    bad = ~np.isfinite(values) | (values < low)
    if bad.any():
        k = int(np.argmax(bad))
        raise WeatherError(
            f"weather column {col!r} has {int(bad.sum())} missing, non-finite or negative "
            f"value(s), first at {weather.index[k]} ({weather[col].iloc[k]!r}); repair them "
            "explicitly (thermonet.weather.validate) — nothing is filled silently"
        )
    return values


def _albedo(weather: pd.DataFrame, albedo: Any) -> np.ndarray | float:
    if "albedo" in weather.columns:
        if albedo is not None:
            raise NetworkError(
                f"albedo={albedo!r} was passed but the weather has an 'albedo' column, which "
                "takes precedence; drop the column (weather.drop(columns='albedo')) to use "
                "the parameter, or pass albedo=None to use the column"
            )
        values = _weather_column(weather, "albedo")
        if np.any(values > 1.0):
            raise WeatherError("weather column 'albedo' must be in [0, 1]")
        return values
    if albedo is None:
        return DEFAULT_ALBEDO
    return _finite_number("albedo", albedo, 0.0, 1.0)


def surface_irradiance(weather, tilt, azimuth, *, model="perez", albedo=None, latitude=None,
                       longitude=None, solpos=None):
    """Irradiance on a plane of any orientation: beam, sky diffuse, ground-reflected.

    Parameters
    ----------
    weather : pandas.DataFrame
        tz-aware index (hour ending), columns ``ghi``, ``dni``, ``dhi`` [W/m²]; optional
        ``albedo`` [-], ``pressure`` [Pa], ``temp_air`` [°C] (refraction correction).
    tilt : float
        Surface tilt from horizontal [°], 0 … 180 (90 = vertical wall, 180 = facing down).
    azimuth : float
        Direction the surface faces [°], 0 … 360 clockwise from north (180 = south).
    model : {"isotropic", "haydavies", "perez"}, default "perez"
        Sky-diffuse transposition model.
    albedo : float, optional
        Ground reflectance [-], used when the weather has no ``albedo`` column; default
        :data:`DEFAULT_ALBEDO` = 0.2 (common practice, no source).
    latitude, longitude : float, optional
        Site [°]; default ``weather.attrs["site"]``. Explicit values take precedence.
    solpos : pandas.DataFrame, optional
        Precomputed solar position on ``weather.index`` (columns ``apparent_zenith``,
        ``azimuth``), e.g. from :func:`solar_position`. Default: computed at the interval
        mid-points with the site elevation from ``weather.attrs["site"]``.

    Returns
    -------
    pandas.DataFrame
        Same index as ``weather``; columns ``beam``, ``sky_diffuse``,
        ``ground_reflected``, ``total`` [W/m²], ``aoi`` [°] (angle of incidence, geometric,
        also given when the sun is down) and the sky-diffuse components ``circumsolar``,
        ``isotropic``, ``horizon`` [W/m²] (sum = ``sky_diffuse``; the horizon band can be
        negative in the Perez model). ``attrs["surface"]`` records tilt, azimuth and model.

    Raises
    ------
    NetworkError
        Tilt, azimuth, albedo out of range; unknown model (the valid keys are listed);
        ``albedo`` given although the weather has an ``albedo`` column; ``solpos`` given
        together with coordinates.
    WeatherError
        Missing or invalid columns, no site coordinates, ``solpos`` on another index.

    Notes
    -----
    Geometry and models come from pvlib:

    * ``aoi`` from :func:`pvlib.irradiance.aoi`; beam :math:`E_b = DNI \\cos\\theta`,
      set to 0 when the sun is below the horizon (apparent zenith ≥ 90° at the mid-point)
      or behind the plane (θ ≥ 90°), whatever ``dni`` says;
    * sky diffuse from :func:`pvlib.irradiance.isotropic`, :func:`~pvlib.irradiance.haydavies`
      or :func:`~pvlib.irradiance.perez` (``return_components=True``), with
      extra-terrestrial irradiance from :func:`pvlib.irradiance.get_extra_radiation` and
      the relative air mass of Kasten & Young (1989) from
      :func:`pvlib.atmosphere.get_relative_airmass`, all evaluated with the apparent
      (refracted) zenith;
    * ground-reflected :math:`E_g = GHI\\,\\rho\\,(1 - \\cos\\beta)/2` from
      :func:`pvlib.irradiance.get_ground_diffuse`.

    Two choices made here (not in pvlib): where the sun is below the horizon at the
    mid-point but ``dhi > 0`` (twilight, or sunrise inside the hour), the anisotropic
    models are undefined (pvlib's Perez returns 0 there); thermonet uses the isotropic
    sky for those rows so no measured diffuse is lost. Where ``dhi = 0`` all sky terms
    are 0.

    Surfaces tilted beyond 90° (soffits, overhanging glazing) get the same published
    formulas; note that the Hay–Davies and Perez coefficients were fitted on planes
    tilted 0 … 90°.

    For a horizontal plane ``total = dni·cos z + dhi`` (= GHI when the weather closes),
    exactly for the isotropic model, for Hay–Davies below z = 89° and for Perez below
    z = 85° (its circumsolar term uses ``max(cos z, cos 85°)``).

    References
    ----------
    Hay, J.E., Davies, J.A. (1980). Calculation of the solar radiation incident on an
    inclined surface. Proc. First Canadian Solar Radiation Data Workshop, 59–72.
    Perez, R., Ineichen, P., Seals, R., Michalsky, J., Stewart, R. (1990). Modeling daylight
    availability and irradiance components from direct and global irradiance. Solar Energy
    44(5), 271–289.
    Liu, B.Y.H., Jordan, R.C. (1963). The long-term average performance of flat-plate solar
    energy collectors. Solar Energy 7(2), 53–74 (isotropic sky, ground reflection).
    Kasten, F., Young, A.T. (1989). Revised optical air mass tables and approximation
    formula. Applied Optics 28(22), 4735–4738.
    """
    if not isinstance(weather, pd.DataFrame):
        raise WeatherError(f"weather must be a pandas DataFrame, got {type(weather).__name__}")
    index = _time_index(weather.index, "weather index")
    tilt_v, az_v = _check_surface(tilt, azimuth)
    if model not in SKY_MODELS:
        raise NetworkError(f"model must be one of {list(SKY_MODELS)}, got {model!r}")
    missing = [c for c in ("ghi", "dni", "dhi") if c not in weather.columns]
    if missing:
        raise WeatherError(
            f"weather lacks column(s) {missing} needed for surface irradiance (pvlib names "
            f"ghi, dni, dhi [W/m²]); has {list(weather.columns)}"
        )
    ghi = _weather_column(weather, "ghi")
    dni = _weather_column(weather, "dni")
    dhi = _weather_column(weather, "dhi")
    rho = _albedo(weather, albedo)

    if solpos is None:
        lat = latitude if latitude is not None else _site_value(weather, "latitude")
        lon = longitude if longitude is not None else _site_value(weather, "longitude")
        if lat is None or lon is None:
            raise WeatherError(
                "site coordinates unknown: pass latitude=..., longitude=... or give the "
                "weather df.attrs['site'] = {'latitude': ..., 'longitude': ..., "
                "'elevation': ...}"
            )
        elev = _site_value(weather, "elevation") or 0.0
        pressure = weather["pressure"].to_numpy(dtype=float) if "pressure" in weather else None
        temp = weather["temp_air"].to_numpy(dtype=float) if "temp_air" in weather else None
        solpos = solar_position(index, lat, lon, elev, pressure, temp, interval="ending")
    else:
        if latitude is not None or longitude is not None:
            raise NetworkError(
                "pass either solpos or latitude/longitude, not both (the coordinates would "
                "be ignored)"
            )
        if not isinstance(solpos, pd.DataFrame) or not {"apparent_zenith", "azimuth"} <= set(
            solpos.columns
        ):
            raise WeatherError(
                "solpos must be a DataFrame with columns 'apparent_zenith' and 'azimuth' [°], "
                "e.g. from thermonet.solar.solar_position"
            )
        if not solpos.index.equals(index):
            raise WeatherError(
                "solpos index differs from the weather index; compute it with "
                "solar_position(weather.index, ...)"
            )
    zen = solpos["apparent_zenith"].to_numpy(dtype=float)
    sazi = solpos["azimuth"].to_numpy(dtype=float)

    aoi = np.asarray(pvlib.irradiance.aoi(tilt_v, az_v, zen, sazi), dtype=float)
    sun_up = zen < 90.0
    lit = sun_up & (aoi < 90.0)
    beam = np.where(lit, dni * np.cos(np.radians(aoi)), 0.0)

    view_sky = 0.5 * (1.0 + math.cos(tilt_v * _DEG))
    iso = dhi * view_sky
    circ = np.zeros(len(index))
    hor = np.zeros(len(index))
    aniso = sun_up & (dhi > 0.0)
    if model != "isotropic" and aniso.any():
        # day of year of the labels passed as numbers (pvlib's own DatetimeIndex path calls
        # a pandas accessor deprecated in pandas 3); the hour does not enter this formula
        doy = np.asarray(index.day_of_year, dtype=float)
        dni_extra = np.asarray(pvlib.irradiance.get_extra_radiation(doy), dtype=float)
        z, a, dh, dn, de = zen[aniso], sazi[aniso], dhi[aniso], dni[aniso], dni_extra[aniso]
        if model == "haydavies":
            comp = pvlib.irradiance.haydavies(tilt_v, az_v, dh, dn, de, z, a,
                                              return_components=True)
            iso[aniso] = comp["poa_isotropic"]
            circ[aniso] = comp["poa_circumsolar"]
        else:
            am = np.asarray(pvlib.atmosphere.get_relative_airmass(z), dtype=float)
            comp = pvlib.irradiance.perez(tilt_v, az_v, dh, dn, de, z, a, am,
                                          return_components=True)
            iso[aniso] = comp["poa_isotropic"]
            circ[aniso] = comp["poa_circumsolar"]
            hor[aniso] = comp["poa_horizon"]
    iso = np.where(dhi > 0.0, iso, 0.0)
    sky = iso + circ + hor
    ground = np.asarray(pvlib.irradiance.get_ground_diffuse(tilt_v, ghi, albedo=rho),
                        dtype=float) * np.ones(len(index))
    out = pd.DataFrame(
        {
            "beam": beam,
            "sky_diffuse": sky,
            "ground_reflected": ground,
            "total": beam + sky + ground,
            "aoi": aoi,
            "circumsolar": circ,
            "isotropic": iso,
            "horizon": hor,
        },
        index=index,
    )
    out.attrs["surface"] = {"tilt": tilt_v, "azimuth": az_v, "model": model}
    return out


# --------------------------------------------------------------------------------------------
# windows
# --------------------------------------------------------------------------------------------
def _iam_kwargs(model: str, param: Any) -> dict[str, float]:
    if model not in IAM_MODELS:
        raise NetworkError(f"iam_model must be one of {list(IAM_MODELS)}, got {model!r}")
    kwargs = dict(IAM_MODELS[model])
    if param is None:
        return kwargs
    if model == "ashrae" and not isinstance(param, Mapping):
        param = {"b": param}
    if not isinstance(param, Mapping):
        raise NetworkError(
            f"iam_param for {model!r} must be a mapping of {sorted(kwargs)}, got {param!r}"
        )
    unknown = sorted(set(param) - set(kwargs))
    if unknown:
        raise NetworkError(
            f"iam_param keys {unknown} are not parameters of the {model!r} model; allowed: "
            f"{sorted(kwargs)}"
        )
    for key, value in param.items():
        low = 1.0 if key == "n" else 0.0
        kwargs[key] = _finite_number(f"iam_param[{key!r}]", value, low, 1e3)
    return kwargs


def incidence_angle_modifier(aoi, model="ashrae", param=None):
    """Beam incidence angle modifier of a glazing, relative to normal incidence [-].

    Parameters
    ----------
    aoi : float, array-like or Series
        Angle of incidence [°], 0 = normal; 90° and beyond give 0.
    model : {"ashrae", "physical"}, default "ashrae"
        ``"ashrae"``: :func:`pvlib.iam.ashrae`; ``"physical"``: :func:`pvlib.iam.physical`.
    param : float or mapping, optional
        Model parameters. ``"ashrae"``: ``b`` [-] (a float is read as b), default 0.05;
        ``"physical"``: ``n`` [-], ``K`` [1/m], ``L`` [m], defaults 1.526, 4, 0.002
        (:data:`IAM_MODELS`).

    Returns
    -------
    float, ndarray or Series
        IAM [-], 1 at normal incidence, decreasing to 0 at 90°.

    Raises
    ------
    NetworkError
        Unknown model or parameter name, parameter out of range, NaN angle.

    Notes
    -----
    ASHRAE / Souka & Safwat: :math:`IAM = \\max(0, 1 - b(1/\\cos\\theta - 1))`.
    Physical (De Soto et al. 2006): Fresnel reflection at the air–glass interface
    (both polarisations) and Bouguer absorption :math:`e^{-KL/\\cos\\theta_r}`, normalised
    to normal incidence.

    Applied to the total solar energy transmittance g of a window this is an
    approximation: the secondary heat gain of absorbed radiation is taken to vary with the
    angle like the direct transmittance (common practice, no source).

    References
    ----------
    Souka, A.F., Safwat, H.H. (1966). Determination of the optimum orientations for the
    double-exposure, flat-plate collector and its reflectors. Solar Energy 10(4), 170–174.
    ASHRAE Standard 93-77, Methods of testing to determine the thermal performance of
    solar collectors.
    De Soto, W., Klein, S.A., Beckman, W.A. (2006). Improvement and validation of a model
    for photovoltaic array performance. Solar Energy 80(1), 78–88.
    """
    kwargs = _iam_kwargs(model, param)
    arr = _array("aoi", aoi)
    func = pvlib.iam.ashrae if model == "ashrae" else pvlib.iam.physical
    with np.errstate(invalid="ignore", divide="ignore"):
        iam = np.asarray(func(np.atleast_1d(arr), **kwargs), dtype=float)
    iam = np.where(np.atleast_1d(np.abs(arr)) >= 90.0, 0.0, iam).reshape(arr.shape)
    return _like(iam, aoi, name="iam")


def diffuse_incidence_modifiers(surface_tilt, model="ashrae", param=None):
    """Diffuse incidence angle modifiers of a glazing for sky, horizon band and ground [-].

    Parameters
    ----------
    surface_tilt : float
        Tilt of the glazing [°], 0 … 180.
    model, param
        As :func:`incidence_angle_modifier`.

    Returns
    -------
    dict
        ``{"sky": float, "horizon": float, "ground": float}`` [-].

    Notes
    -----
    Uses :func:`pvlib.iam.marion_diffuse`: the beam IAM averaged over the solid angle of
    each region, weighted by the cosine of incidence (isotropic radiance), Marion (2017).

    References
    ----------
    Marion, B. (2017). Numerical method for angle-of-incidence correction factors for
    diffuse radiation incident photovoltaic modules. Solar Energy 147, 344–348.
    """
    tilt = _finite_number("surface_tilt", surface_tilt, 0.0, 180.0)
    kwargs = _iam_kwargs(model, param)
    return dict(_marion_diffuse(model, tilt, tuple(sorted(kwargs.items()))))


@functools.lru_cache(maxsize=256)
def _marion_diffuse(model: str, tilt: float, kwargs: tuple) -> tuple:
    """``pvlib.iam.marion_diffuse`` as ((region, value), ...), kept per (model, tilt, params):
    a pure function of numbers, integrated once however many windows share it."""
    with np.errstate(invalid="ignore", divide="ignore"):
        res = pvlib.iam.marion_diffuse(model, tilt, **dict(kwargs))
    return tuple((k, float(np.asarray(v))) for k, v in res.items())


def _factor_array(name: str, value: Any, n: int, index: pd.Index | None = None,
                  low: float = 0.0, high: float = 1.0) -> np.ndarray:
    if index is not None:
        _check_same_index(name, value, index)
    arr = _array(name, value)
    if arr.ndim > 0 and arr.shape != (n,):
        raise NetworkError(f"{name} has shape {arr.shape}; give one value or {n} values")
    if np.any((arr < low) | (arr > high)):
        raise NetworkError(f"{name} must be in [{low:g}, {high:g}], got min {arr.min():g}, "
                           f"max {arr.max():g}")
    return np.broadcast_to(arr, (n,)).astype(float)


def window_transmitted(irradiance_df, *, area, g_value, frame_fraction=0.0, iam_model="ashrae",
                       iam_param=None, shading=None, surface_tilt=None):
    """Solar gain transmitted by a window into the room [W].

    Parameters
    ----------
    irradiance_df : pandas.DataFrame
        Output of :func:`surface_irradiance` (possibly through
        :func:`apply_external_shading`): ``beam``, ``sky_diffuse``, ``ground_reflected``
        [W/m²], ``aoi`` [°]; ``circumsolar``, ``isotropic``, ``horizon`` when present.
    area : float
        Window area including frame [m²], > 0.
    g_value : float
        Total solar energy transmittance of the glazing at normal incidence [-]
        (solar heat gain coefficient), 0 … 1.
    frame_fraction : float, default 0
        Frame share of ``area`` [-], 0 ≤ f < 1.
    iam_model, iam_param
        Incidence angle modifier, see :func:`incidence_angle_modifier`.
    shading : float, array-like or Series, optional
        Fraction of the gain still admitted by shading devices [-], 0 … 1, e.g. from
        :meth:`MovableShading.admitted_fraction`. Default 1 (no device).
    surface_tilt : float, optional
        Tilt [°] for the diffuse modifiers; default ``irradiance_df.attrs["surface"]``.

    Returns
    -------
    pandas.Series
        Transmitted solar gain [W], named ``"solar_transmitted"``, on the frame's index.

    Raises
    ------
    NetworkError
        Parameters out of range, missing columns, tilt unknown or contradicting
        ``attrs["surface"]``.
    ScheduleError
        ``shading`` Series on another index.

    Notes
    -----
    .. math::

        \\Phi = A\\,(1 - f_F)\\,g\\,F_{sh}\\,\\big[(E_b + E_{cs})\\,IAM(\\theta)
                + E_{iso}\\,IAM_{sky} + E_{hor}\\,IAM_{hor} + E_g\\,IAM_{gnd}\\big]

    with the beam IAM of :func:`incidence_angle_modifier` (circumsolar diffuse taken to
    arrive from the sun's direction) and the diffuse modifiers of
    :func:`diffuse_incidence_modifiers` (Marion 2017). Without the component columns the
    whole ``sky_diffuse`` is treated as isotropic.

    References
    ----------
    Souka & Safwat (1966); ASHRAE 93-77; De Soto et al. (2006); Marion (2017) — see
    :func:`incidence_angle_modifier` and :func:`diffuse_incidence_modifiers`.
    """
    if not isinstance(irradiance_df, pd.DataFrame):
        raise NetworkError("irradiance_df must be a DataFrame from surface_irradiance")
    need = ["beam", "sky_diffuse", "ground_reflected", "aoi"]
    missing = [c for c in need if c not in irradiance_df.columns]
    if missing:
        raise NetworkError(f"irradiance_df lacks column(s) {missing}; build it with "
                           "thermonet.solar.surface_irradiance")
    a = _finite_number("area", area, 0.0, math.inf, low_open=True)
    g = _finite_number("g_value", g_value, 0.0, 1.0)
    ff = _finite_number("frame_fraction", frame_fraction, 0.0, 1.0, high_open=True)
    surf = irradiance_df.attrs.get("surface", {})
    tilt_attr = surf.get("tilt") if isinstance(surf, Mapping) else None
    if surface_tilt is None:
        if tilt_attr is None:
            raise NetworkError("surface_tilt unknown: pass surface_tilt=... [°] (the frame "
                               "has no attrs['surface']['tilt'])")
        tilt = float(tilt_attr)
    else:
        tilt = _finite_number("surface_tilt", surface_tilt, 0.0, 180.0)
        if tilt_attr is not None and not math.isclose(tilt, float(tilt_attr)):
            raise NetworkError(f"surface_tilt={surface_tilt!r} contradicts the frame's "
                               f"attrs['surface']['tilt'] = {tilt_attr!r}")
    n = len(irradiance_df)
    sh = (np.ones(n) if shading is None
          else _factor_array("shading", shading, n, irradiance_df.index))
    cols = {c: _array(c, irradiance_df[c].to_numpy(dtype=float)) for c in irradiance_df
            if c in ("beam", "sky_diffuse", "ground_reflected", "aoi", "circumsolar",
                     "isotropic", "horizon")}
    iam_b = np.asarray(incidence_angle_modifier(cols["aoi"], iam_model, iam_param))
    iam_d = diffuse_incidence_modifiers(tilt, iam_model, iam_param)
    if {"circumsolar", "isotropic", "horizon"} <= set(cols):
        direct = cols["beam"] + cols["circumsolar"]
        diffuse = cols["isotropic"] * iam_d["sky"] + cols["horizon"] * iam_d["horizon"]
    else:
        direct = cols["beam"]
        diffuse = cols["sky_diffuse"] * iam_d["sky"]
    inc = direct * iam_b + diffuse + cols["ground_reflected"] * iam_d["ground"]
    return pd.Series(a * (1.0 - ff) * g * sh * inc, index=irradiance_df.index,
                     name="solar_transmitted")


# --------------------------------------------------------------------------------------------
# external shading: beam, by geometry (hand-written; pvlib has no building shading)
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class Overhang:
    """A horizontal overhang above a vertical window.

    Parameters
    ----------
    projection : float
        Depth of the overhang out from the wall [m], ≥ 0.
    gap_above : float, default 0
        Height of the overhang's underside above the window head [m], ≥ 0.
    extension : float, default 0
        Overhang length beyond each side of the window [m], ≥ 0 (``inf`` = continuous
        overhang or balcony).
    """

    projection: float
    gap_above: float = 0.0
    extension: float = 0.0

    def __post_init__(self) -> None:
        _finite_number("overhang projection", self.projection, 0.0)
        _finite_number("overhang gap_above", self.gap_above, 0.0)
        _finite_number("overhang extension", self.extension, 0.0, allow_inf=True)


_FIN_SIDES = ("left", "right", "both")


@dataclass(frozen=True)
class Fins:
    """Vertical side fins beside a vertical window.

    Parameters
    ----------
    projection : float
        Depth of the fin out from the wall [m], ≥ 0.
    gap : float, default 0
        Horizontal distance between the window jamb and the fin [m], ≥ 0.
    extension : float, default 0
        Fin height beyond the window head and below the sill [m], each, ≥ 0 (``inf`` =
        fin over the whole façade).
    side : {"left", "right", "both"}, default "both"
        Which fin(s) exist, **as seen from outside, facing the window**.
    """

    projection: float
    gap: float = 0.0
    extension: float = 0.0
    side: str = "both"

    def __post_init__(self) -> None:
        _finite_number("fin projection", self.projection, 0.0)
        _finite_number("fin gap", self.gap, 0.0)
        _finite_number("fin extension", self.extension, 0.0, allow_inf=True)
        if self.side not in _FIN_SIDES:
            raise NetworkError(f"fin side must be one of {list(_FIN_SIDES)}, got "
                               f"{self.side!r}")


def _slice_area(z0: np.ndarray, z1: np.ndarray, los: list, his: list) -> np.ndarray:
    """Exact ∫_{z0}^{z1} max(0, min_i hi_i(z) − max_j lo_j(z)) dz for linear lo/hi lines.

    Each line is a pair ``(a, b)`` of arrays meaning ``a + b·z``. Between two consecutive
    crossings of any two lines the integrand is linear, so the trapezoidal rule over all
    crossings (and the limits) is exact.
    """
    n = z0.shape[0]
    lines = [(np.broadcast_to(a, (n,)), np.broadcast_to(b, (n,))) for a, b in los + his]
    A = np.stack([a for a, _ in lines], axis=1)
    B = np.stack([b for _, b in lines], axis=1)
    z1 = np.maximum(z1, z0)
    i, j = np.triu_indices(A.shape[1], 1)
    with np.errstate(divide="ignore", invalid="ignore"):
        zc = (A[:, j] - A[:, i]) / (B[:, i] - B[:, j])
    zc = np.where(np.isfinite(zc), zc, z0[:, None])
    pts = np.concatenate([z0[:, None], z1[:, None], np.clip(zc, z0[:, None], z1[:, None])],
                         axis=1)
    pts.sort(axis=1)
    nlo = len(los)
    vals = A[:, None, :] + B[:, None, :] * pts[:, :, None]
    width = np.maximum(0.0, vals[:, :, nlo:].min(axis=2) - vals[:, :, :nlo].max(axis=2))
    return np.sum(np.diff(pts, axis=1) * 0.5 * (width[:, 1:] + width[:, :-1]), axis=1)


def _sun_on_facade(solar_zenith, solar_azimuth, surface_azimuth):
    """Broadcast angles; return (alpha, relative azimuth γ', sunlit mask, shape)."""
    zen = _array("solar_zenith", solar_zenith)
    azi = _array("solar_azimuth", solar_azimuth)
    _finite_number("surface_azimuth", surface_azimuth, 0.0, 360.0)
    if isinstance(solar_zenith, pd.Series) and isinstance(solar_azimuth, pd.Series) and (
            not solar_zenith.index.equals(solar_azimuth.index)):
        raise ScheduleError("solar_zenith and solar_azimuth have different indexes; align "
                            "them first")
    try:
        zen, azi = np.broadcast_arrays(zen, azi)
    except ValueError:
        raise NetworkError(f"solar_zenith (shape {zen.shape}) and solar_azimuth (shape "
                           f"{azi.shape}) cannot be broadcast together") from None
    shape = zen.shape
    alt = (90.0 - zen.ravel()) * _DEG
    rel = ((azi.ravel() - float(surface_azimuth) + 180.0) % 360.0 - 180.0) * _DEG
    sunlit = (alt > 0.0) & (np.cos(rel) > 1e-12)
    # harmless values where not sunlit, results overwritten there
    alt = np.where(sunlit, alt, 0.25 * math.pi)
    rel = np.where(sunlit, rel, 0.0)
    return alt, rel, sunlit, shape


def _window_dims(window_height: Any, window_width: Any) -> tuple[float, float]:
    h = _finite_number("window_height", window_height, 0.0, math.inf, low_open=True)
    w = _finite_number("window_width", window_width, 0.0, math.inf, low_open=True)
    return h, w


def _overhang_lines(alt, rel, h, w, oh: Overhang):
    """Overhang shadow on the window plane: (z0, z1, los, his) in window coordinates.

    x along the wall (0 … w, to the right seen from outside), z above the sill (0 … h);
    computed for the shadow moving to +x (γ' ≥ 0, mirror otherwise — the overhang is
    symmetric).
    """
    tan_alt = np.tan(alt)
    depth = oh.projection * tan_alt / np.cos(rel)  # shadow depth below the overhang [m]
    k = np.abs(np.sin(rel)) / tan_alt  # lateral shift per metre of drop [m/m]
    zo = h + oh.gap_above
    z0 = np.clip(zo - depth, 0.0, h)
    z1 = np.full_like(z0, min(zo, h))
    los = [(0.0, 0.0)]
    his = [(w, 0.0)]
    if math.isfinite(oh.extension):
        los.append((-oh.extension + k * zo, -k))
        his.append((w + oh.extension + k * zo, -k))
    return z0, z1, los, his


def _fin_lines(alt, rel, h, w, fin: Fins):
    """Shadow of the fin on the side the sun comes from (left fin, γ' > 0 after mirroring)."""
    tan_alt = np.tan(alt)
    k = np.abs(np.sin(rel)) / tan_alt  # lateral shadow shift per metre of drop [m/m]
    xf = -fin.gap
    los = [(0.0, 0.0), (xf, 0.0)]
    his = [(w, 0.0), (xf + fin.projection * np.abs(np.tan(rel)), 0.0)]
    if math.isfinite(fin.extension):
        los.append((xf - fin.extension * k, -k))
        his.append((xf + (h + fin.extension) * k, -k))
    z0 = np.zeros_like(alt)
    z1 = np.full_like(alt, h)
    return z0, z1, los, his


def _fin_active(rel: np.ndarray, side: str) -> np.ndarray:
    from_left = rel > 0.0  # shadow moves to +x: the left fin (seen from outside) shades
    from_right = rel < 0.0
    if side == "left":
        return from_left
    if side == "right":
        return from_right
    return from_left | from_right


def _shaded(alt, rel, sunlit, h, w, overhang: Overhang | None, fins: Fins | None):
    area = np.zeros_like(alt)
    if overhang is not None:
        z0, z1, los, his = _overhang_lines(alt, rel, h, w, overhang)
        area += _slice_area(z0, z1, los, his)
    if fins is not None:
        active = _fin_active(rel, fins.side)
        fz0, fz1, flos, fhis = _fin_lines(alt, rel, h, w, fins)
        area += np.where(active, _slice_area(fz0, fz1, flos, fhis), 0.0)
        if overhang is not None:
            # intersection of the two (convex) shadows, removed once: union = A + B − A∩B
            both = _slice_area(np.maximum(z0, fz0), np.minimum(z1, fz1), los + flos,
                               his + fhis)
            area -= np.where(active, both, 0.0)
    frac = np.clip(area / (h * w), 0.0, 1.0)  # clip removes round-off only
    return np.where(sunlit, frac, 1.0)


_SHADING_NOTES = """
    Coordinates on the wall: x along the wall, z up. The sun has altitude α = 90° − zenith
    and relative azimuth γ' = γ_sun − γ_surface (wrapped to ±180°). A point at depth p in
    front of the wall casts its shadow p·tan γ' sideways and p·tan Ω down, with the
    profile angle tan Ω = tan α / cos γ' (Duffie & Beckman sect. 1.9, from memory).
    The shadow of a rectangular overhang or fin is therefore a parallelogram on the wall;
    its overlap with the window rectangle is integrated exactly: along z the overlap width
    is piecewise linear with kinks only where two edge lines cross, so the trapezoidal
    rule over all crossings is exact (written here; pvlib has no building shading).

    The sun is behind the façade (cos γ' ≤ 0) or below the horizon: the window gets no
    beam, the function returns 1 (fully shaded).

"""


def overhang_shaded_fraction(solar_zenith, solar_azimuth, surface_azimuth, *, window_height,
                             window_width, projection, gap_above=0.0, extension=0.0):
    """Beam shaded fraction of a vertical window under a horizontal overhang [-].

    Parameters
    ----------
    solar_zenith : float, array-like or Series
        Solar (apparent) zenith angle [°].
    solar_azimuth : float, array-like or Series
        Solar azimuth [°], clockwise from north.
    surface_azimuth : float
        Azimuth the window faces [°], 0 … 360.
    window_height, window_width : float
        Glazed opening [m], > 0.
    projection : float
        Overhang depth out from the wall [m], ≥ 0.
    gap_above : float, default 0
        Overhang underside above the window head [m], ≥ 0.
    extension : float, default 0
        Overhang length beyond each side of the window [m], ≥ 0, ``inf`` allowed.

    Returns
    -------
    float, ndarray or Series
        Shaded share of the window area for beam radiation [-], 0 … 1 (1 when the sun
        does not reach the façade).

    Raises
    ------
    NetworkError
        Negative or non-finite dimensions, surface azimuth outside 0 … 360, NaN angles.

    Notes
    -----
    Sun due south of a south window, α = 60°, projection 0.5 m right above a 1.5 m high
    window: shadow depth 0.5·tan 60° = 0.866 m, fraction 0.866/1.5 = 0.577.
    <<shading notes>>
    References
    ----------
    Duffie, J.A., Beckman, W.A. (2013). Solar Engineering of Thermal Processes, 4th ed.,
    Wiley, sect. 1.9 (angles for tracking surfaces and shading; profile angle) and
    sect. 2.18 (shading by overhangs and wingwalls) — section numbers from memory.
    """
    h, w = _window_dims(window_height, window_width)
    oh = Overhang(projection, gap_above, extension)
    alt, rel, sunlit, shape = _sun_on_facade(solar_zenith, solar_azimuth, surface_azimuth)
    frac = _shaded(alt, rel, sunlit, h, w, oh, None).reshape(shape)
    return _like(frac, solar_zenith, solar_azimuth, name="shaded_fraction")


def fin_shaded_fraction(solar_zenith, solar_azimuth, surface_azimuth, *, window_height,
                        window_width, projection, gap=0.0, extension=0.0, side="both"):
    """Beam shaded fraction of a vertical window between vertical side fins [-].

    Parameters
    ----------
    solar_zenith, solar_azimuth, surface_azimuth, window_height, window_width
        As :func:`overhang_shaded_fraction`.
    projection : float
        Fin depth out from the wall [m], ≥ 0.
    gap : float, default 0
        Distance between the window jamb and the fin [m], ≥ 0.
    extension : float, default 0
        Fin height beyond the window head and below the sill, each [m], ``inf`` allowed.
    side : {"left", "right", "both"}, default "both"
        Fins present, as seen from outside facing the window. With the sun to the right
        of the window normal (γ' > 0, e.g. a south window in the afternoon) the left fin
        shades; only one fin shades at a time.

    Returns
    -------
    float, ndarray or Series
        Shaded share of the window area for beam radiation [-], 0 … 1.

    Notes
    -----
    For a fin reaching far above and below the window (``extension=inf``) the shaded
    width is ``projection·|tan γ'| − gap``.
    <<shading notes>>
    References
    ----------
    Duffie & Beckman (2013), sect. 1.9 and 2.18 (wingwalls) — from memory.
    """
    h, w = _window_dims(window_height, window_width)
    fins = Fins(projection, gap, extension, side)
    alt, rel, sunlit, shape = _sun_on_facade(solar_zenith, solar_azimuth, surface_azimuth)
    frac = _shaded(alt, rel, sunlit, h, w, None, fins).reshape(shape)
    return _like(frac, solar_zenith, solar_azimuth, name="shaded_fraction")


def combined_shaded_fraction(solar_zenith, solar_azimuth, surface_azimuth, *, window_height,
                             window_width, overhang=None, fins=None):
    """Beam shaded fraction of a vertical window with an overhang and/or side fins [-].

    Parameters
    ----------
    solar_zenith, solar_azimuth, surface_azimuth, window_height, window_width
        As :func:`overhang_shaded_fraction`.
    overhang : Overhang, optional
    fins : Fins, optional

    Returns
    -------
    float, ndarray or Series
        Shaded share of the window area for beam radiation [-], 0 … 1.

    Notes
    -----
    The union of the two shadows is counted once: ``A = A_overhang + A_fin − A_both``,
    where ``A_both`` is the area of the window covered by both shadows, integrated
    exactly like each shadow (both are convex parallelograms, their horizontal slices
    are intervals). Exact for any dimensions.
    <<shading notes>>
    References
    ----------
    Duffie & Beckman (2013), sect. 1.9 and 2.18 — from memory.
    """
    h, w = _window_dims(window_height, window_width)
    for name, obj, cls in (("overhang", overhang, Overhang), ("fins", fins, Fins)):
        if obj is not None and not isinstance(obj, cls):
            raise NetworkError(f"{name} must be a thermonet.solar.{cls.__name__} or None, "
                               f"got {type(obj).__name__}")
    alt, rel, sunlit, shape = _sun_on_facade(solar_zenith, solar_azimuth, surface_azimuth)
    frac = _shaded(alt, rel, sunlit, h, w, overhang, fins).reshape(shape)
    return _like(frac, solar_zenith, solar_azimuth, name="shaded_fraction")


for _f in (overhang_shaded_fraction, fin_shaded_fraction, combined_shaded_fraction):
    if _f.__doc__:  # None under python -OO
        _f.__doc__ = _f.__doc__.replace("    <<shading notes>>\n", _SHADING_NOTES)


# --------------------------------------------------------------------------------------------
# external shading: diffuse, by view factors (hand-written)
# --------------------------------------------------------------------------------------------
def _phi(u: np.ndarray, d: float) -> np.ndarray:
    """Second antiderivative of ½ ln(u² + d²) in u (for the contour-integral method)."""
    s = u * u + d * d
    with np.errstate(divide="ignore", invalid="ignore"):
        lns = np.where(s > 0.0, np.log(np.where(s > 0.0, s, 1.0)), 0.0)
    return 0.25 * s * lns - 0.25 * s - 0.5 * u * u + d * u * np.arctan2(u, d) - 0.5 * d * d * lns


def _edges(rect: tuple) -> list:
    """Oriented edges of an axis-aligned rectangle ``(axis, c, (lo1, hi1), (lo2, hi2))``."""
    axis, c, r1, r2 = rect
    ax1, ax2 = [a for a in range(3) if a != axis]

    def point(s1, s2):
        p = [0.0, 0.0, 0.0]
        p[axis], p[ax1], p[ax2] = c, s1, s2
        return p

    corners = [point(r1[0], r2[0]), point(r1[1], r2[0]), point(r1[1], r2[1]),
               point(r1[0], r2[1])]
    return [(corners[k], corners[(k + 1) % 4]) for k in range(4)]


def _view_factor(rect1: tuple, rect2: tuple) -> float:
    """View factor F_1→2 between two axis-aligned rectangles that fully see each other.

    Contour-integral (Stokes) form: A1 F12 = (1/2π) ∮∮ ln r (dx1 dx2 + dy1 dy2 + dz1 dz2),
    each pair of parallel edges integrated in closed form. The sign depends on the
    orientation of the contours; the magnitude is returned.
    """
    total = 0.0
    for p1, q1 in _edges(rect1):
        for p2, q2 in _edges(rect2):
            for ax in range(3):
                if p1[ax] == q1[ax] or p2[ax] == q2[ax]:
                    continue
                others = [a for a in range(3) if a != ax]
                d = math.hypot(p1[others[0]] - p2[others[0]], p1[others[1]] - p2[others[1]])
                a1, b1, a2, b2 = p1[ax], q1[ax], p2[ax], q2[ax]
                u = np.array([b1 - a2, a1 - a2, b1 - b2, a1 - b2])
                ph = _phi(u, d)
                total += ph[0] - ph[1] - ph[2] + ph[3]
    (_, _, r1, r2) = rect1
    area1 = (r1[1] - r1[0]) * (r2[1] - r2[0])
    return float(abs(total)) / (2.0 * math.pi * area1)


# Window rectangle in the wall plane y = 0: x (along the wall) 0 … w, z (up) 0 … h.
def _window_rect(h: float, w: float) -> tuple:
    return (1, 0.0, (0.0, w), (0.0, h))


def _overhang_blocked(h: float, w: float, oh: Overhang) -> float:
    if oh.projection == 0.0:
        return 0.0
    if not math.isfinite(oh.extension):
        # continuous overhang: the 2-D crossed-strings result (Hottel) per unit length
        # window A(0)–B(h) on the wall, overhang C (at the wall, h + gap) – D (projection):
        # F = [(AC + BD) − (AD + BC)] / (2·AB)
        a, b = oh.gap_above, oh.gap_above + h
        p = oh.projection
        return (h + math.hypot(a, p) - math.hypot(b, p)) / (2.0 * h)
    rect = (2, h + oh.gap_above, (-oh.extension, w + oh.extension), (0.0, oh.projection))
    return _view_factor(_window_rect(h, w), rect)


def _fin_blocked(h: float, w: float, fin: Fins) -> tuple[float, float]:
    """(sky, ground) view factors of the window blocked by ONE fin."""
    if fin.projection == 0.0:
        return 0.0, 0.0
    if not math.isfinite(fin.extension):
        # infinitely tall fin: 2-D crossed strings in the horizontal plane, half sky
        a, b = fin.gap, fin.gap + w
        p = fin.projection
        f = (w + math.hypot(a, p) - math.hypot(b, p)) / (2.0 * w)
        return 0.5 * f, 0.5 * f
    win = _window_rect(h, w)

    def part(z_lo, z_hi):
        if z_hi <= z_lo:
            return 0.0
        return _view_factor(win, (0, -fin.gap, (0.0, fin.projection), (z_lo, z_hi)))

    mid = part(0.0, h)
    top = part(h, h + fin.extension)
    bottom = part(-fin.extension, 0.0)
    return top + 0.5 * mid, bottom + 0.5 * mid


_VF_NOTES = """
    View factors of the window to the device are exact closed forms for rectangles in
    perpendicular planes, from the contour-integral (Stokes) formulation
    :math:`A_1F_{12} = \\frac{1}{2\\pi}\\oint\\oint \\ln r\\,(dx_1dx_2 + dy_1dy_2 +
    dz_1dz_2)` integrated analytically edge pair by edge pair (written here; it
    reproduces the textbook perpendicular-rectangles-with-a-common-edge formula, e.g.
    0.2000 for two unit squares). Infinite extensions use the 2-D crossed-strings result.
    Everything seen through the device is sky above the window's horizon (an overhang
    blocks only sky); for a fin the part beside the window blocks sky and ground equally
    (mirror symmetry about the window's mid-height), the part above the head only sky,
    the part below the sill only ground. The unobstructed vertical window sees sky and
    ground with view factor 0.5 each. Isotropic sky (and ground) radiance is assumed.

"""


def overhang_sky_view_factor(*, window_height, window_width, projection, gap_above=0.0,
                             extension=0.0):
    """Sky view factor of a vertical window under a horizontal overhang [-].

    Parameters
    ----------
    window_height, window_width : float
        Glazed opening [m], > 0.
    projection, gap_above, extension : float
        Overhang geometry [m], see :class:`Overhang`.

    Returns
    -------
    float
        View factor from the window to the unobstructed sky [-], 0 … 0.5 (0.5 without
        overhang). Divide by 0.5 for the reduction factor of isotropic sky diffuse.

    Notes
    -----
    :math:`F_{w,sky} = 1/2 - F_{w,overhang}`.
    <<view factor notes>>
    References
    ----------
    Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S. (2007). Fundamentals of Heat
    and Mass Transfer, 6th ed., Wiley, Table 13.2 (perpendicular rectangles with a common
    edge) and sect. 13.1.4 (crossed-strings method) — from memory.
    Sparrow, E.M., Cess, R.D. (1978). Radiation Heat Transfer, augmented ed., Hemisphere,
    ch. 4 (contour integration of view factors) — from memory.
    """
    h, w = _window_dims(window_height, window_width)
    oh = Overhang(projection, gap_above, extension)
    return 0.5 - _overhang_blocked(h, w, oh)


def fin_view_factors(*, window_height, window_width, projection, gap=0.0, extension=0.0,
                     side="both"):
    """Sky and ground view factors of a vertical window between vertical side fins [-].

    Parameters
    ----------
    window_height, window_width : float
        Glazed opening [m], > 0.
    projection, gap, extension, side
        Fin geometry, see :class:`Fins`.

    Returns
    -------
    dict
        ``{"sky": F_w,sky, "ground": F_w,ground}`` [-], each 0.5 without fins.

    Notes
    -----
    :math:`F_{w,sky} = 1/2 - n F_{w,fin,sky}`, :math:`F_{w,ground} = 1/2 - n
    F_{w,fin,ground}` for n = 1 or 2 fins (a line of sight cannot meet both fins).
    <<view factor notes>>
    References
    ----------
    As :func:`overhang_sky_view_factor`.
    """
    h, w = _window_dims(window_height, window_width)
    fin = Fins(projection, gap, extension, side)
    sky, ground = _fin_blocked(h, w, fin)
    n = 2 if side == "both" else 1
    return {"sky": float(0.5 - n * sky), "ground": float(0.5 - n * ground)}


def _blocked_by_rays(h: float, w: float, oh: Overhang, fin: Fins, n_points: int = 10,
                     n_s: int = 200, n_phi: int = 720) -> tuple[float, float]:
    """(sky, ground) view factors blocked by overhang and fins together, by quadrature.

    Window points: Gauss–Legendre ``n_points``² over the window; directions: mid-point
    grid uniform in s = sin²θ (θ from the window normal) and φ, on which the projected
    solid angle cos θ dω = ½ ds dφ is uniform. A direction is blocked if its ray meets
    any device rectangle. Accuracy about 1e-3 (the blocked set has sharp edges).
    """
    gx, gw = np.polynomial.legendre.leggauss(n_points)
    xs, wx = 0.5 * w * (gx + 1.0), 0.5 * gw
    zs, wz = 0.5 * h * (gx + 1.0), 0.5 * gw
    s = (np.arange(n_s) + 0.5) / n_s
    phi = (np.arange(n_phi) + 0.5) * 2.0 * math.pi / n_phi
    r = np.sqrt(s)[:, None]
    dx = (r * np.cos(phi)[None, :]).ravel()
    dz = (r * np.sin(phi)[None, :]).ravel()
    dy = np.repeat(np.sqrt(1.0 - s), n_phi)
    up = dz > 0.0
    sides = ["left", "right"] if fin.side == "both" else [fin.side]
    sky = ground = 0.0
    with np.errstate(divide="ignore", invalid="ignore"):
        for x0, wxi in zip(xs, wx, strict=True):
            for z0, wzi in zip(zs, wz, strict=True):
                t = (h + oh.gap_above - z0) / dz
                blocked = up & (t * dy <= oh.projection) & (x0 + t * dx >= -oh.extension) & (
                    x0 + t * dx <= w + oh.extension)
                for side in sides:
                    xf = -fin.gap if side == "left" else w + fin.gap
                    t = (xf - x0) / dx
                    zz = z0 + t * dz
                    blocked |= (t > 0.0) & (t * dy <= fin.projection) & (
                        zz >= -fin.extension) & (zz <= h + fin.extension)
                weight = wxi * wzi / blocked.size
                sky += weight * np.count_nonzero(blocked & up)
                ground += weight * np.count_nonzero(blocked & ~up)
    return float(sky), float(ground)


def external_diffuse_factors(*, window_height, window_width, overhang=None, fins=None):
    """Reduction factors of isotropic sky and ground diffuse on a shaded vertical window.

    Parameters
    ----------
    window_height, window_width : float
        Glazed opening [m], > 0.
    overhang : Overhang, optional
    fins : Fins, optional

    Returns
    -------
    dict
        ``{"sky": f_sky, "ground": f_ground}`` [-], each 0 … 1: shaded view factor divided
        by the unshaded 0.5. Pass them to :func:`apply_external_shading` as
        ``diffuse_factor`` and ``ground_factor``.

    Notes
    -----
    With both devices, the blocked view factors are added when no line of sight can meet
    both, which holds when the overhang does not reach beyond the fins
    (``overhang.extension ≤ fins.gap``) and the fins do not reach above the overhang
    (``fins.extension ≤ overhang.gap_above``) — the usual box frame; the result is then
    exact. Otherwise adding would count the common solid angle twice, so the union is
    integrated numerically instead (Gauss–Legendre points on the window, a uniform grid
    of projected solid angle per point, ray tests against the rectangles; accuracy about
    1e-3).
    <<view factor notes>>
    References
    ----------
    As :func:`overhang_sky_view_factor`.
    """
    h, w = _window_dims(window_height, window_width)
    sky_b = 0.0
    gnd_b = 0.0
    if overhang is not None:
        if not isinstance(overhang, Overhang):
            raise NetworkError("overhang must be a thermonet.solar.Overhang or None")
        sky_b += _overhang_blocked(h, w, overhang)
    if fins is not None:
        if not isinstance(fins, Fins):
            raise NetworkError("fins must be a thermonet.solar.Fins or None")
        if overhang is not None and (overhang.extension > fins.gap
                                     or fins.extension > overhang.gap_above):
            sky_b, gnd_b = _blocked_by_rays(h, w, overhang, fins)
        else:
            s, g = _fin_blocked(h, w, fins)
            n = 2 if fins.side == "both" else 1
            sky_b += n * s
            gnd_b += n * g
    return {"sky": float(max(0.0, 0.5 - sky_b) / 0.5),
            "ground": float(max(0.0, 0.5 - gnd_b) / 0.5)}


for _f in (overhang_sky_view_factor, fin_view_factors, external_diffuse_factors):
    if _f.__doc__:  # None under python -OO
        _f.__doc__ = _f.__doc__.replace("    <<view factor notes>>\n", _VF_NOTES)


# --------------------------------------------------------------------------------------------
# far horizon
# --------------------------------------------------------------------------------------------
def _horizon_profile(horizon_azimuths, horizon_elevations) -> tuple[np.ndarray, np.ndarray]:
    az = _array("horizon_azimuths", horizon_azimuths).ravel()
    el = _array("horizon_elevations", horizon_elevations).ravel()
    if az.size == 0 or az.shape != el.shape:
        raise NetworkError(
            f"horizon_azimuths and horizon_elevations must be non-empty and of equal length, "
            f"got {az.size} and {el.size}"
        )
    if np.any((az < 0.0) | (az > 360.0)):
        raise NetworkError("horizon_azimuths must be in [0, 360] [°], clockwise from north")
    if np.unique(az % 360.0).size != az.size:
        raise NetworkError("horizon_azimuths contain duplicates (0 and 360 are the same)")
    if np.any((el < 0.0) | (el >= 90.0)):
        raise NetworkError(
            "horizon_elevations must be in [0, 90) [°]; use 0 for an open horizon (a "
            "horizon below 0° is not modelled)"
        )
    return az % 360.0, el


def horizon_shaded(solar_azimuth, solar_elevation, horizon_azimuths, horizon_elevations):
    """Whether a far-horizon profile hides the sun: 1 = beam blocked, 0 = sun visible.

    Parameters
    ----------
    solar_azimuth : float, array-like or Series
        Solar azimuth [°], clockwise from north.
    solar_elevation : float, array-like or Series
        Solar (apparent) elevation [°].
    horizon_azimuths : array-like
        Azimuths of the profile points [°], 0 … 360, any order, no duplicates.
    horizon_elevations : array-like
        Elevation of the horizon at those azimuths [°], 0 … < 90.

    Returns
    -------
    float, ndarray or Series
        1.0 where the sun is below the profile, else 0.0 — usable as
        ``beam_shaded_fraction`` of :func:`apply_external_shading`.

    Notes
    -----
    The profile is interpolated linearly and periodically in azimuth (period 360°,
    :func:`numpy.interp`), so the last point connects to the first across north. A
    single point is a uniform horizon. Written here; pvlib's horizon helpers work on
    other inputs.
    """
    az_p, el_p = _horizon_profile(horizon_azimuths, horizon_elevations)
    azi = _array("solar_azimuth", solar_azimuth)
    elev = _array("solar_elevation", solar_elevation)
    try:
        azi_b, elev_b = np.broadcast_arrays(azi, elev)
    except ValueError:
        raise NetworkError(f"solar_azimuth (shape {azi.shape}) and solar_elevation (shape "
                           f"{elev.shape}) cannot be broadcast together") from None
    h = np.interp(azi_b.ravel() % 360.0, az_p, el_p, period=360.0) if az_p.size > 1 else (
        np.full(azi_b.size, el_p[0]))
    blocked = (elev_b.ravel() < h).astype(float).reshape(azi_b.shape)
    return _like(blocked, solar_azimuth, solar_elevation, name="horizon_shaded")


def horizon_diffuse_factor(surface_tilt, surface_azimuth, horizon_azimuths, horizon_elevations,
                           *, n_azimuth=1440):
    """Reduction factor of isotropic sky diffuse on a tilted plane by a far horizon [-].

    Parameters
    ----------
    surface_tilt : float
        Tilt [°], 0 … 180.
    surface_azimuth : float
        Azimuth [°], 0 … 360.
    horizon_azimuths, horizon_elevations : array-like
        Horizon profile [°], see :func:`horizon_shaded`.
    n_azimuth : int, default 1440
        Number of azimuth sectors of the numerical integration (0.25° each).

    Returns
    -------
    float
        Sky diffuse seen with the horizon divided by that without it [-], 0 … 1
        (1.0 for a plane facing straight down, which sees no sky).

    Notes
    -----
    Isotropic sky of radiance L: the irradiance on a plane of tilt β, azimuth γ is
    :math:`E = L\\int_0^{2\\pi}\\int_{h(\\varphi)}^{\\pi/2} \\max(0,\\cos\\theta)\\cos e\\,
    de\\,d\\varphi` with :math:`\\cos\\theta = \\sin e\\cos\\beta + \\cos e\\sin\\beta
    \\cos(\\varphi-\\gamma)`. The elevation integral is done in closed form between the
    horizon and the plane's own horizon (antiderivative
    :math:`\\cos\\beta\\sin^2 e/2 + \\sin\\beta\\cos(\\varphi-\\gamma)(e/2 + \\sin 2e/4)`),
    the azimuth integral numerically (mid-point rule). The result is divided by the
    unobstructed value :math:`L\\pi(1+\\cos\\beta)/2` (Liu & Jordan 1963). This is the
    sky view factor of Dozier & Marks (1990), generalised to the clipping by the plane.
    Ground-reflected irradiance is left unchanged (the obstruction is taken to reflect
    like the ground it hides; common practice, no source).

    References
    ----------
    Dozier, J., Marks, D. (1990). Rapid calculation of terrain parameters for radiation
    modeling from digital elevation data. IEEE Trans. Geosci. Remote Sens. 28(5), 963–969
    (sky view factor of a tilted plane under a horizon, from memory).
    Liu, B.Y.H., Jordan, R.C. (1963). Solar Energy 7(2), 53–74.
    """
    beta = _finite_number("surface_tilt", surface_tilt, 0.0, 180.0) * _DEG
    gamma = _finite_number("surface_azimuth", surface_azimuth, 0.0, 360.0) * _DEG
    if isinstance(n_azimuth, bool) or not isinstance(n_azimuth, (int, np.integer)) or (
            n_azimuth < 36):
        raise NetworkError(f"n_azimuth must be an integer ≥ 36, got {n_azimuth!r}")
    az_p, el_p = _horizon_profile(horizon_azimuths, horizon_elevations)
    unobstructed = math.pi * (1.0 + math.cos(beta)) / 2.0
    if unobstructed <= 1e-12:
        return 1.0
    dphi = 2.0 * math.pi / n_azimuth
    phi = (np.arange(n_azimuth) + 0.5) * dphi
    hz = (np.interp(np.degrees(phi), az_p, el_p, period=360.0) if az_p.size > 1
          else np.full(n_azimuth, el_p[0])) * _DEG
    cb, sb = math.cos(beta), math.sin(beta)
    c = np.cos(phi - gamma)
    half = 0.5 * math.pi
    if abs(cb) < 1e-12:  # vertical plane: front half only, whole elevation range
        e_lo, e_hi = hz, np.where(c > 0.0, half, hz)
    else:
        e_star = np.arctan(-sb * c / cb)  # plane's own horizon at this azimuth
        if cb > 0.0:
            e_lo, e_hi = np.maximum(hz, e_star), np.full(n_azimuth, half)
        else:
            e_lo, e_hi = hz, np.minimum(half, e_star)
    e_hi = np.maximum(e_hi, e_lo)

    def antider(e):
        return cb * np.sin(e) ** 2 / 2.0 + sb * c * (e / 2.0 + np.sin(2.0 * e) / 4.0)

    seen = float(np.sum(antider(e_hi) - antider(e_lo)) * dphi)
    return min(1.0, max(0.0, seen / unobstructed))


# --------------------------------------------------------------------------------------------
# apply shading to an irradiance frame
# --------------------------------------------------------------------------------------------
def apply_external_shading(irradiance_df, beam_shaded_fraction, diffuse_factor, *,
                           ground_factor=1.0):
    """Irradiance on a window after external shading (a new frame; the input is unchanged).

    Parameters
    ----------
    irradiance_df : pandas.DataFrame
        From :func:`surface_irradiance`.
    beam_shaded_fraction : float, array-like or Series
        Shaded share of the window for beam radiation [-], 0 … 1 (e.g.
        :func:`combined_shaded_fraction`, :func:`horizon_shaded`).
    diffuse_factor : float, array-like or Series
        Reduction factor of sky diffuse [-], 0 … 1 (e.g. ``external_diffuse_factors()
        ["sky"]`` or :func:`horizon_diffuse_factor`).
    ground_factor : float, array-like or Series, default 1
        Reduction factor of ground-reflected irradiance [-] (``external_diffuse_factors()
        ["ground"]`` for fins; 1 for an overhang or a far horizon).

    Returns
    -------
    pandas.DataFrame
        Same columns and attrs: ``beam`` and ``circumsolar`` × (1 − shaded fraction),
        ``isotropic`` and ``horizon`` × diffuse_factor, ``ground_reflected`` ×
        ground_factor; ``sky_diffuse`` and ``total`` recomputed. Without component
        columns ``sky_diffuse`` × diffuse_factor.

    Raises
    ------
    NetworkError
        Missing columns, factors outside [0, 1] or NaN, wrong length.
    ScheduleError
        A Series on another index.

    Notes
    -----
    Circumsolar diffuse comes from around the sun and is shaded like the beam. Calling
    this twice (near devices, then the far horizon) multiplies the factors: exact for the
    beam when one of them is 0/1 (the horizon), approximate for diffuse.
    """
    if not isinstance(irradiance_df, pd.DataFrame):
        raise NetworkError("irradiance_df must be a DataFrame from surface_irradiance")
    missing = [c for c in ("beam", "sky_diffuse", "ground_reflected") if c not in irradiance_df]
    if missing:
        raise NetworkError(f"irradiance_df lacks column(s) {missing}")
    n = len(irradiance_df)
    idx = irradiance_df.index
    fs = _factor_array("beam_shaded_fraction", beam_shaded_fraction, n, idx)
    fd = _factor_array("diffuse_factor", diffuse_factor, n, idx)
    fg = _factor_array("ground_factor", ground_factor, n, idx)
    out = irradiance_df.copy()
    out["beam"] = irradiance_df["beam"].to_numpy(dtype=float) * (1.0 - fs)
    if {"circumsolar", "isotropic", "horizon"} <= set(irradiance_df.columns):
        out["circumsolar"] = irradiance_df["circumsolar"].to_numpy(dtype=float) * (1.0 - fs)
        out["isotropic"] = irradiance_df["isotropic"].to_numpy(dtype=float) * fd
        out["horizon"] = irradiance_df["horizon"].to_numpy(dtype=float) * fd
        out["sky_diffuse"] = out["circumsolar"] + out["isotropic"] + out["horizon"]
    else:
        out["sky_diffuse"] = irradiance_df["sky_diffuse"].to_numpy(dtype=float) * fd
    out["ground_reflected"] = irradiance_df["ground_reflected"].to_numpy(dtype=float) * fg
    out["total"] = out["beam"] + out["sky_diffuse"] + out["ground_reflected"]
    out.attrs = {**irradiance_df.attrs, "shaded": True}
    return out


# --------------------------------------------------------------------------------------------
# movable shading
# --------------------------------------------------------------------------------------------
_CONTROLS = ("irradiance", "temperature", "schedule")
_POSITIONS = ("external", "internal")

#: Default share of the heat absorbed by an internal blind or curtain that reaches the room
#: air by convection [-] (both faces in contact with room air in a gap open to the room; the
#: rest leaves as long-wave radiation). Common practice, no source.
INTERNAL_CONVECTIVE_FRACTION = 0.6


def shading_state_from_irradiance(total_irradiance, on_above, off_below, *, initial=False):
    """Deployed state of a movable shading device switched by irradiance, with hysteresis.

    Parameters
    ----------
    total_irradiance : Series or array-like
        Irradiance on the window plane [W/m²], e.g. ``surface_irradiance(...)["total"]``.
    on_above : float
        Deploy when the irradiance exceeds this value [W/m²].
    off_below : float
        Retract when the irradiance falls below this value [W/m²], ≤ ``on_above``.
    initial : bool, default False
        State before the first step (False = retracted).

    Returns
    -------
    pandas.Series of bool
        True = deployed, on the input's index (a RangeIndex for arrays).

    Raises
    ------
    NetworkError
        ``off_below > on_above``, negative thresholds, NaN irradiance.

    Notes
    -----
    Two-point (hysteresis) control: the state switches on when :math:`G > G_{on}`, off
    when :math:`G < G_{off}` and keeps its previous value in between. Evaluated from the
    weather alone, before the simulation (the irradiance is an input).
    """
    on = _finite_number("on_above", on_above, 0.0)
    off = _finite_number("off_below", off_below, 0.0)
    if off > on:
        raise NetworkError(f"off_below ({off:g} W/m²) must not exceed on_above ({on:g} W/m²)")
    g = _array("total_irradiance", total_irradiance).ravel()
    index = total_irradiance.index if isinstance(total_irradiance, pd.Series) else None
    events = pd.Series(np.where(g > on, 1.0, np.where(g < off, 0.0, np.nan)), index=index)
    state = events.ffill().fillna(1.0 if initial else 0.0).to_numpy() > 0.5
    return pd.Series(state, index=events.index, name="deployed")


@dataclass(frozen=True, eq=False)
class MovableShading:
    """A movable shading device (blind, shutter, awning) and how it is switched.

    Parameters
    ----------
    factor : float or Expr
        Share of the solar gain transmitted by the glazing that passes the deployed device
        (its solar transmittance) [-], 0 … 1. For an external device this is all that
        enters (external venetian blinds about 0.15–0.25; common practice, no source). A
        parameter expression (:mod:`thermonet.parameters`) varies it per row of a study, with
        ``control="temperature"`` only (a switch factor).
    control : {"irradiance", "temperature", "schedule"}, default "irradiance"
        ``"irradiance"``: by the irradiance on the window, decidable from the weather
        (:meth:`deployed`). ``"temperature"``: by the temperature of ``node`` — stored
        here, switched by the simulation engine. ``"schedule"``: by ``schedule``.
    on_above, off_below : float, optional
        Hysteresis thresholds: [W/m²] for irradiance control, [°C] for temperature
        control; required for those, not allowed for ``"schedule"``.
    node : str, optional
        Node whose temperature switches the device (``control="temperature"`` only).
    schedule : pandas.Series, optional
        Deployed state per step (bool or 0/1, ``control="schedule"`` only).
    position : {"external", "internal"}, default "external"
        ``"external"``: the device rejects what it does not transmit (outdoors).
        ``"internal"`` (a blind or curtain inside the glazing): of the gain the glazing
        transmits, the share ``factor`` passes the device, the share ``absorptance`` is
        absorbed by it and released to the room — ``convective_fraction`` of it to the room
        air, the rest as long-wave radiation to the room's surfaces — and the remainder
        ``1 − factor − absorptance`` is reflected back out through the glazing
        (:func:`internal_device_shares`).
    absorptance : float, default 0
        Solar absorptance of an internal device [-], 0 … 1 − ``factor`` (light-coloured
        roller blinds and curtains about 0.1–0.3, dark ones 0.5–0.7; common practice, no
        source). Must stay 0 for an external device (its absorbed heat is taken as lost
        outdoors; put any share it passes inwards into ``factor``).
    convective_fraction : float, optional
        Share of the heat absorbed by an internal device that goes to the room air by
        convection [-], 0 … 1; default :data:`INTERNAL_CONVECTIVE_FRACTION`. Internal
        devices only.

    Raises
    ------
    NetworkError
        Factor, absorptance or convective fraction out of range, unknown control or
        position, missing or superfluous parameters.

    Notes
    -----
    EN 13363-1 gives a simplified method for the total solar energy transmittance of a
    device combined with glazing, internal (gap ventilated to the room) or external [1]_;
    its formulas (from memory) also credit part of the reflected share absorbed by the
    glass on its way out, which this split leaves out. That an internal device admits more
    heat than an external one of the same transmittance — its absorbed heat stays inside —
    is the published qualitative fact checked in the tests (docs/references.md §10).

    References
    ----------
    .. [1] EN 13363-1:2003+A1:2007, Solar protection devices combined with glazing —
       Calculation of solar and light transmittance — Part 1: Simplified method
       (docs/references.md §10).
    """

    factor: float
    control: str = "irradiance"
    on_above: float | None = None
    off_below: float | None = None
    node: str | None = None
    schedule: pd.Series | None = None
    position: str = "external"
    absorptance: float = 0.0
    convective_fraction: float | None = None

    def __post_init__(self) -> None:
        _finite_number("MovableShading factor", _default(self.factor), 0.0, 1.0)
        self._check_position()
        if self.control not in _CONTROLS:
            raise NetworkError(f"MovableShading control must be one of {list(_CONTROLS)}, got "
                               f"{self.control!r}")
        if self.control in ("irradiance", "temperature"):
            unit = "W/m²" if self.control == "irradiance" else "°C"
            if self.on_above is None or self.off_below is None:
                raise NetworkError(f"{self.control} control needs on_above and off_below "
                                   f"[{unit}]")
            low = 0.0 if self.control == "irradiance" else -100.0
            on = _finite_number("on_above", _default(self.on_above), low)
            off = _finite_number("off_below", _default(self.off_below), low)
            if off > on:
                raise NetworkError(f"off_below ({off:g} {unit}) must not exceed on_above "
                                   f"({on:g} {unit})")
            if self.schedule is not None:
                raise NetworkError(f"schedule is only used with control='schedule', not "
                                   f"{self.control!r}")
        if self.control == "temperature":
            if not isinstance(self.node, str) or not self.node:
                raise NetworkError("temperature control needs node='<node name>'")
        elif self.node is not None:
            raise NetworkError(f"node is only used with control='temperature', not "
                               f"{self.control!r}")
        if self.control == "schedule":
            if self.on_above is not None or self.off_below is not None:
                raise NetworkError("on_above/off_below are not used with control='schedule'")
            s = self.schedule
            if not isinstance(s, pd.Series) or not isinstance(s.index, pd.DatetimeIndex):
                raise NetworkError("schedule control needs schedule= a pandas Series of "
                                   "bool or 0/1 on a DatetimeIndex")
            vals = pd.to_numeric(s, errors="coerce").to_numpy(dtype=float)
            if not np.all(np.isin(vals, (0.0, 1.0))):
                raise NetworkError("schedule values must be bool or 0/1 (NaN not allowed)")

    def _check_position(self) -> None:
        if self.position not in _POSITIONS:
            raise NetworkError(f"MovableShading position must be one of {list(_POSITIONS)}, "
                               f"got {self.position!r}")
        a = _finite_number("MovableShading absorptance [-]", self.absorptance, 0.0, 1.0)
        if self.position == "external":
            if a != 0.0:
                raise NetworkError(
                    f"MovableShading absorptance={a:g} is used for internal devices only; an "
                    "external device's absorbed heat is taken as lost outdoors: give the share "
                    "it admits as factor, or position='internal'")
            if self.convective_fraction is not None:
                raise NetworkError("MovableShading convective_fraction is used for internal "
                                   "devices only (position='internal')")
            return
        internal_device_shares(self.factor, a, self.convective)

    @property
    def internal(self) -> bool:
        """Whether the device is inside the glazing (``position="internal"``)."""
        return self.position == "internal"

    @property
    def convective(self) -> float:
        """Convective share of the absorbed heat of an internal device [-] (0 if external)."""
        if not self.internal:
            return 0.0
        f = self.convective_fraction
        return INTERNAL_CONVECTIVE_FRACTION if f is None else float(f)

    def deployed(self, irradiance=None, index=None):
        """Deployed state per step (True = deployed).

        Parameters
        ----------
        irradiance : Series, optional
            Irradiance on the window [W/m²] (``control="irradiance"``).
        index : DatetimeIndex, optional
            Expected index of a schedule (``control="schedule"``); checked, not aligned.

        Returns
        -------
        pandas.Series of bool

        Raises
        ------
        NetworkError
            Temperature control (decided by the simulation) or missing irradiance.
        ScheduleError
            Schedule on another index.
        """
        if self.control == "irradiance":
            if irradiance is None:
                raise NetworkError("irradiance control needs irradiance= the total on the "
                                   "window [W/m²]")
            return shading_state_from_irradiance(irradiance, self.on_above, self.off_below)
        if self.control == "schedule":
            if index is not None and not self.schedule.index.equals(index):
                raise ScheduleError("shading schedule index differs from the simulation index;"
                                    " reindex it explicitly")
            return self.schedule.astype(bool).rename("deployed")
        raise NetworkError(
            f"temperature-controlled shading (node {self.node!r}) is switched by the "
            "simulation from the node temperature; its state cannot be computed beforehand"
        )

    def admitted_fraction(self, deployed):
        """Share of the transmitted gain that enters the room per step [-] — for
        ``window_transmitted(..., shading=...)``.

        ``factor`` where deployed (internal devices: ``factor + absorptance``, the heat the
        device absorbs is released inside), 1 elsewhere.

        Parameters
        ----------
        deployed : bool array or pandas.Series
            Whether the device is deployed in each step.
        """
        d = np.asarray(deployed, dtype=bool)
        on = self.factor + (self.absorptance if self.internal else 0.0)
        return _like(np.where(d, on, 1.0), deployed, name="admitted_fraction")


def internal_device_shares(transmittance, absorptance, convective_fraction=None) -> dict:
    """Where the solar gain a glazing transmits goes when an internal device is deployed.

    Parameters
    ----------
    transmittance : float
        Solar transmittance of the device τ [-], 0 … 1.
    absorptance : float
        Solar absorptance of the device α [-], 0 … 1 − τ.
    convective_fraction : float, optional
        Share of the absorbed heat released to the room air by convection f_c [-], 0 … 1;
        default :data:`INTERNAL_CONVECTIVE_FRACTION`.

    Returns
    -------
    dict
        Shares of the gain transmitted by the glazing [-]: ``"transmitted"`` τ (reaches the
        room's surfaces and air as an undeployed gain would), ``"convective"`` α·f_c (to
        the room air), ``"radiative"`` α·(1 − f_c) (long-wave to the room's surfaces),
        ``"rejected"`` 1 − τ − α (reflected back out). The first three enter the room.

    Raises
    ------
    NetworkError
        A value out of range or τ + α > 1.

    Notes
    -----
    An energy balance of the device with no storage: τ + α + ρ = 1 with ρ its solar
    reflectance, the absorbed heat released at once (common practice, no source). The
    reflected share is taken as leaving through the glazing; EN 13363-1's simplified
    method (from memory) would return a part of it absorbed in the glass.
    """
    tau = _finite_number("internal device transmittance (factor) [-]", transmittance, 0.0, 1.0)
    a = _finite_number("internal device absorptance [-]", absorptance, 0.0, 1.0)
    fc = INTERNAL_CONVECTIVE_FRACTION if convective_fraction is None else convective_fraction
    fc = _finite_number("internal device convective_fraction [-]", fc, 0.0, 1.0)
    if tau + a > 1.0 + 1e-12:
        raise NetworkError(f"internal device: transmittance {tau:g} + absorptance {a:g} = "
                           f"{tau + a:g} exceeds 1; the reflectance 1 − τ − α cannot be "
                           "negative — lower one of them")
    return {"transmitted": tau, "convective": a * fc, "radiative": a * (1.0 - fc),
            "rejected": max(0.0, 1.0 - tau - a)}


# --------------------------------------------------------------------------------------------
# distribution inside the room
# --------------------------------------------------------------------------------------------
_SHARE_METHODS = ("floor", "area")


def _surface_area(name, area):
    """A receiver's area [m²] (> 0), or a parameter expression checked at its defaults."""
    if isinstance(area, Expr):
        _finite_number(f"area of surface {name!r} (the expression {area!r} at its defaults)",
                       area.default, 0.0, math.inf, low_open=True)
        return area
    return _finite_number(f"area of surface {name!r}", area, 0.0, math.inf, low_open=True)


def solar_shares(surfaces, *, floor="floor", air="air", method="floor"):
    """Default shares of transmitted solar per receiving surface of a room [-].

    Parameters
    ----------
    surfaces : mapping of str to float or Expr
        Room surfaces (receivers) and their areas [m²], > 0; with parameter expressions
        (:mod:`thermonet.parameters`) the shares are expressions too.
    floor : str, default "floor"
        Name of the floor in ``surfaces`` (``method="floor"``).
    air : str, default "air"
        Name of the room-air receiver (the convective part).
    method : {"floor", "area"}, default "floor"
        ``"floor"``: 0.1 to the air, 0.6 to the floor, 0.3 to the other surfaces by area
        (common practice, no source, apart from the 0.1). ``"area"``: 0.1 to the air, 0.9
        to all surfaces including the floor by area (ISO 52016-1 style, from memory).

    Returns
    -------
    dict
        Receiver name -> share [-], summing to 1.

    Raises
    ------
    NetworkError
        Bad areas, unknown method, floor missing, no other surface for the 0.3, or a
        surface called like the air receiver.

    References
    ----------
    ISO 52016-1:2017, Energy performance of buildings — Energy needs for heating and
    cooling ... — Part 1: Calculation procedures: convective fraction of solar gains 0.1
    (from memory; docs/references.md §7.2 [M]).
    """
    if not isinstance(surfaces, Mapping) or not surfaces:
        raise NetworkError("surfaces must be a non-empty mapping name -> area [m²]")
    areas = {str(k): _surface_area(k, v) for k, v in surfaces.items()}
    if air in areas:
        raise NetworkError(f"surface name {air!r} clashes with the air receiver; rename it or "
                           "pass air='...'")
    if method not in _SHARE_METHODS:
        raise NetworkError(f"method must be one of {list(_SHARE_METHODS)}, got {method!r}")
    shares = {air: SOLAR_CONVECTIVE_FRACTION}
    if method == "area":
        total = sum(areas.values())
        shares.update({k: (1.0 - SOLAR_CONVECTIVE_FRACTION) * a / total for k, a in
                       areas.items()})
        return shares
    if floor not in areas:
        raise NetworkError(f"floor surface {floor!r} not in surfaces {sorted(areas)}; pass "
                           "floor='<name>' or method='area'")
    others = {k: a for k, a in areas.items() if k != floor}
    if not others:
        raise NetworkError("method='floor' needs at least one surface besides the floor for "
                           "the remaining share; add surfaces, use method='area' or give shares")
    rest = 1.0 - SOLAR_CONVECTIVE_FRACTION - FLOOR_SOLAR_SHARE
    total = sum(others.values())
    shares[floor] = FLOOR_SOLAR_SHARE
    shares.update({k: rest * a / total for k, a in others.items()})
    return shares


def distribute_solar(transmitted_w, shares=None, *, surfaces=None, floor="floor", air="air",
                     method="floor"):
    """Split transmitted solar gain between room air and the room's surfaces [W].

    Parameters
    ----------
    transmitted_w : float, array-like or Series
        Solar gain entering the room [W], ≥ 0 (e.g. :func:`window_transmitted`).
    shares : mapping of str to float, optional
        Receiver -> share [-], each ≥ 0, summing to 1 (tolerance 1e-9).
    surfaces, floor, air, method
        Used when ``shares`` is None: see :func:`solar_shares`.

    Returns
    -------
    pandas.DataFrame or dict
        One column per receiver [W] on the input's index (for a Series or array); a dict
        receiver -> W for a scalar.

    Raises
    ------
    NetworkError
        Shares not summing to 1 (the shares and their sum are named), negative or NaN
        shares or gains, both or neither of ``shares`` and ``surfaces``.
    """
    if shares is None:
        if surfaces is None:
            raise NetworkError("give shares={receiver: share} or surfaces={name: area [m²]}")
        shares = solar_shares(surfaces, floor=floor, air=air, method=method)
    elif surfaces is not None:
        raise NetworkError("give either shares or surfaces, not both (surfaces would be "
                           "ignored)")
    if not isinstance(shares, Mapping) or not shares:
        raise NetworkError("shares must be a non-empty mapping receiver -> share [-]")
    sh = {str(k): _finite_number(f"share of {k!r}", v, 0.0, 1.0) for k, v in shares.items()}
    total = math.fsum(sh.values())
    if abs(total - 1.0) > 1e-9:
        listed = ", ".join(f"{k}={v:g}" for k, v in sh.items())
        raise NetworkError(f"solar shares must sum to 1, got {total:.6g} ({listed}); adjust "
                           "them")
    q = _array("transmitted_w", transmitted_w)
    if np.any(q < 0.0):
        raise NetworkError("transmitted_w must be ≥ 0 [W]")
    if q.ndim == 0:
        return {k: float(q) * v for k, v in sh.items()}
    index = transmitted_w.index if isinstance(transmitted_w, pd.Series) else None
    return pd.DataFrame({k: q.ravel() * v for k, v in sh.items()}, index=index)
