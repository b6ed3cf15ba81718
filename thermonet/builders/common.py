"""Checks and small shared helpers of the builders: numbers, orientations, boundaries,
constructions, the site's solar position, zones and switch conditions, and the key under
which the builders keep their records in ``net.meta``.

These helpers are public to the other builder modules (no leading underscore) but not part of
the package's documented interface (:mod:`thermonet.builders` re-exports only
:data:`META_KEY`).
"""

from __future__ import annotations

import math
from collections.abc import Mapping

import numpy as np
import pandas as pd

from thermonet import solar as _solar
from thermonet.constructions import Construction
from thermonet.controls import Condition, when
from thermonet.errors import ConstructionError, NetworkError, WeatherError
from thermonet.network import Network
from thermonet.parameters import Expr

__all__ = ["META_KEY"]

#: Key of ``net.meta`` under which builders keep their records (plain JSON, so they travel
#: with the model file: see :func:`thermonet.builders.rooms`).
META_KEY = "builders"


def check_num(value, what, *, low=None, high=None, low_open=False, high_open=False,
              error=NetworkError) -> float:
    """``value`` as a finite float within [low, high] (open ends on request), else raise.

    A parameter expression (:mod:`thermonet.parameters`) is checked at its defaults and
    returned as it is.

    Parameters
    ----------
    value : int, float or Expr
        The number to check [unit as ``what`` says].
    what : str
        Its description with unit, used in the message, e.g. ``"room 'a': height [m]"``.
    low, high : float, optional
        Bounds [same unit]; None: unbounded.
    low_open, high_open : bool, default False
        Exclude the bound itself.
    error : type, default NetworkError
        Exception class for a value out of range or not finite.

    Returns
    -------
    float or Expr
    """
    if isinstance(value, Expr):
        check_num(value.default, f"{what} (the expression {value!r} at its defaults)", low=low,
                  high=high, low_open=low_open, high_open=high_open, error=error)
        return value
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise TypeError(f"{what} must be a number, got {type(value).__name__} {value!r}")
    v = float(value)
    if not math.isfinite(v):
        raise error(f"{what} must be finite, got {value!r}")
    if low is not None and (v < low or (low_open and v == low)):
        raise error(f"{what} must be {'>' if low_open else '≥'} {low:g}, got {value!r}")
    if high is not None and (v > high or (high_open and v == high)):
        raise error(f"{what} must be {'<' if high_open else '≤'} {high:g}, got {value!r}")
    return v


def number(value):
    """``value`` as a float, or a parameter expression kept as it is (for arithmetic).

    Parameters
    ----------
    value : float or Expr
        A number [any unit].
    """
    return value if isinstance(value, Expr) else float(value)


def check_orientation(tilt, azimuth, what):
    """(tilt, azimuth) [°] as floats, tilt 0 … 180 and azimuth 0 … 360, else NetworkError.

    Parameters
    ----------
    tilt, azimuth : float
        [°] pvlib's convention (0 = facing up; azimuth clockwise from north).
    what : str
        The element or window, for the message.
    """
    t = check_num(tilt, f"{what}: tilt [°] (0 = facing up, 90 = vertical, 180 = facing down)",
                  low=0.0, high=180.0)
    a = check_num(azimuth, f"{what}: azimuth [°] (0 … 360 clockwise from north, 180 = south)",
                  low=0.0, high=360.0)
    return t, a


def meta_section(net: Network, section: str) -> dict:
    """The dict ``net.meta[META_KEY][section]``, created when missing.

    Parameters
    ----------
    net : Network
    section : str
        E.g. ``"rooms"``.
    """
    meta = getattr(net, "meta", None)
    if not isinstance(meta, dict):
        meta = {}
        net.meta = meta
    return meta.setdefault(META_KEY, {}).setdefault(section, {})


def outdoor_boundary(net: Network, name: str, temperature, kind: str, what: str) -> str:
    """Reuse boundary ``name`` or create it with ``temperature``.

    Parameters
    ----------
    net : Network
    name : str
        Boundary name.
    temperature : float, str or pandas.Series
        [°C] of a new boundary (constant, weather column or Series); None refuses to create.
    kind : str
        Boundary kind an existing boundary must have (``"air"``, ``"sky"``, ``"ground"``).
    what : str
        The caller (room, window), for messages.

    Returns
    -------
    str
        ``name``.
    """
    if name in net.boundaries:
        if net.boundaries[name].kind != kind:
            raise NetworkError(f"{what}: boundary {name!r} exists with kind "
                               f"{net.boundaries[name].kind!r}, need {kind!r}")
        return name
    if name in net.nodes:
        raise NetworkError(f"{what}: {name!r} is a free node, not a boundary; choose another "
                           "boundary name")
    if temperature is None:
        raise NetworkError(f"{what}: boundary {name!r} does not exist; give its temperature")
    net.add_boundary(name, temperature=temperature, kind=kind)
    return name


def resolve_construction(elem, constructions) -> Construction:
    """The Construction of an element, looking a str up in ``constructions``.

    Parameters
    ----------
    elem : thermonet.builders.Element
        The element (its ``name`` and ``construction``).
    constructions : mapping of str to Construction, optional
        Named constructions given to the builder.
    """
    c = elem.construction
    if isinstance(c, str):
        if constructions is None or c not in constructions:
            known = sorted(constructions) if constructions else []
            raise ConstructionError(f"element {elem.name!r}: unknown construction {c!r}; pass "
                                    f"constructions={{{c!r}: Construction(...)}} to add_room "
                                    f"(known: {known})")
        c = constructions[c]
    if not isinstance(c, Construction):
        raise ConstructionError(f"element {elem.name!r}: construction must be a Construction "
                                f"or a name in constructions=, got {type(c).__name__}")
    return c


def site_solar_position(weather, latitude, longitude):
    """Solar position on the weather index, the site from the arguments or ``attrs["site"]``.

    Parameters
    ----------
    weather : pandas.DataFrame
        Tz-aware index; ``pressure`` [Pa] and ``temp_air`` [°C] used when present.
    latitude, longitude : float or None
        Site [°]; None: from ``weather.attrs["site"]``.
    """
    site = weather.attrs.get("site", {}) if isinstance(weather.attrs.get("site"), Mapping) else {}
    lat = latitude if latitude is not None else site.get("latitude")
    lon = longitude if longitude is not None else site.get("longitude")
    if lat is None or lon is None:
        raise WeatherError("site coordinates unknown: pass latitude=..., longitude=... or give "
                           "the weather df.attrs['site'] = {'latitude': ..., 'longitude': ...}")
    pressure = weather["pressure"].to_numpy(dtype=float) if "pressure" in weather else None
    temp = weather["temp_air"].to_numpy(dtype=float) if "temp_air" in weather else None
    elevation = site.get("elevation") or 0.0
    key = _position_key(weather.index, lat, lon, elevation, pressure, temp)
    if key not in SOLAR_POSITIONS:
        if len(SOLAR_POSITIONS) >= SOLAR_POSITIONS_KEPT:
            SOLAR_POSITIONS.pop(next(iter(SOLAR_POSITIONS)))
        SOLAR_POSITIONS[key] = _solar.solar_position(weather.index, lat, lon, elevation,
                                                     pressure, temp)
    return SOLAR_POSITIONS[key].copy()


#: Solar positions already computed, by a digest of everything they depend on (index, site,
#: pressure and air temperature for refraction): a study that builds one network per variant
#: on the same weather computes them once. The oldest is dropped beyond
#: :data:`SOLAR_POSITIONS_KEPT`; a copy is returned, so callers cannot change the kept one.
SOLAR_POSITIONS: dict = {}

#: Number of solar-position tables kept (a year of hourly rows is about 0.5 MB each).
SOLAR_POSITIONS_KEPT = 8


#: Plane-of-array irradiance already computed, by a digest of everything it depends on (the
#: weather's index and irradiance columns, albedo, the solar position, the site, the plane
#: and the sky model): a study that builds one network per variant on the same weather
#: transposes each orientation once. A copy is returned; the oldest is dropped beyond
#: :data:`SURFACE_IRRADIANCE_KEPT`.
SURFACE_IRRADIANCE: dict = {}

#: Number of plane-of-array tables kept (a year of hourly rows is about 0.3 MB each).
SURFACE_IRRADIANCE_KEPT = 64


def kept_surface_irradiance(weather, tilt: float, azimuth: float, *, model: str,
                            solpos: pd.DataFrame) -> pd.DataFrame:
    """:func:`thermonet.solar.surface_irradiance`, computed once per distinct input.

    Parameters
    ----------
    weather : pandas.DataFrame
        ``ghi``, ``dni``, ``dhi`` [W/m²] (optional ``albedo`` [-]) on a tz-aware index; site
        in ``attrs["site"]``.
    tilt, azimuth : float
        Plane [°].
    model : str
        Sky-diffuse model.
    solpos : pandas.DataFrame
        Solar position on the weather index.

    Returns
    -------
    pandas.DataFrame
        A copy of the kept table (same columns and ``attrs`` as a fresh call).
    """
    import hashlib

    h = hashlib.blake2b(digest_size=16)
    h.update(np.ascontiguousarray(weather.index.as_unit("ns").asi8).tobytes())
    h.update(str(weather.index.tz).encode())
    for col in ("ghi", "dni", "dhi", "albedo"):
        if col in weather.columns:
            h.update(col.encode())
            h.update(np.ascontiguousarray(pd.to_numeric(weather[col], errors="coerce")
                                          .to_numpy(dtype=float)).tobytes())
    h.update(repr(sorted(solpos.columns)).encode())
    h.update(np.ascontiguousarray(solpos.to_numpy(dtype=float)).tobytes())
    site = weather.attrs.get("site", {})
    h.update(repr(sorted(site.items()) if isinstance(site, Mapping) else site).encode())
    key = (h.hexdigest(), float(tilt), float(azimuth), str(model))
    if key not in SURFACE_IRRADIANCE:
        if len(SURFACE_IRRADIANCE) >= SURFACE_IRRADIANCE_KEPT:
            SURFACE_IRRADIANCE.pop(next(iter(SURFACE_IRRADIANCE)))
        SURFACE_IRRADIANCE[key] = _solar.surface_irradiance(weather, tilt, azimuth,
                                                            model=model, solpos=solpos)
    return SURFACE_IRRADIANCE[key].copy()


def _position_key(index, lat, lon, elevation, pressure, temp) -> tuple:
    import hashlib

    h = hashlib.blake2b(digest_size=16)
    h.update(np.ascontiguousarray(index.as_unit("ns").asi8).tobytes())
    h.update(str(index.tz).encode())
    for arr in (pressure, temp):
        h.update(b"-" if arr is None else np.ascontiguousarray(arr).tobytes())
    return (h.hexdigest(), float(lat), float(lon), float(elevation))


def check_zone(zone, what):
    """``zone`` if it looks like a Room or template zone (air, volume, outdoor, links).

    Parameters
    ----------
    zone : Room or Iso13790Zone
    what : str
        The caller, for the message.
    """
    for attr in ("air", "volume", "outdoor", "links"):
        if not hasattr(zone, attr):
            raise TypeError(f"{what}: expected a Room (or template zone), got "
                            f"{type(zone).__name__}")
    return zone


def as_condition(c, what):
    """A switch condition from a Condition or a bool Series.

    Parameters
    ----------
    c : Condition or pandas.Series of bool
    what : str
        The argument, for the message.
    """
    if isinstance(c, Condition):
        return c
    if isinstance(c, pd.Series):
        return when(c.astype(bool))
    raise TypeError(f"{what} must be a thermonet Condition or a bool Series, got "
                    f"{type(c).__name__}")
