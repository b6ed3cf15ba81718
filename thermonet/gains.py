"""Internal heat gains: occupants, lighting and appliances as hourly profiles.

A gain is a peak power (W per person × people, or W/m² × floor area) times an hourly profile of
fractions 0 … 1 for weekdays and weekends (same rule as
:func:`thermonet.schedules.weekly_profile`: the clock hour of each interval's mid-point, local
time of the index; Saturday and Sunday are the weekend), split
into a convective part (to the room air) and a radiative part (to the room's radiant star
node, from which it reaches the surfaces in proportion to h_r·A). :func:`add_internal_gains`
adds them to a room as sources with path ``"internal"``.

Default profiles
----------------
The profiles below are **common practice, no source**: plausible shapes for a dwelling and an
office, meant as starting points. Replace them by measured or project-specific schedules (or by
the tables of a standard your project must follow) for any real assessment.

Convective fraction
-------------------
Default 0.4 for every gain: the convective fraction of internal gains in ISO 52016-1:2017
(from memory, docs/references.md §7.2 [M]); the remaining 0.6 is radiative. (ISO 13790's simple
hourly method uses 0.5, see :mod:`thermonet.templates`.)
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from thermonet.errors import NetworkError, ScheduleError
from thermonet.schedules import check_index

__all__ = [
    "CONSTANT",
    "CONVECTIVE_FRACTION",
    "OFFICE_APPLIANCES",
    "OFFICE_LIGHTING",
    "OFFICE_OCCUPANCY",
    "RESIDENTIAL_APPLIANCES",
    "RESIDENTIAL_LIGHTING",
    "RESIDENTIAL_OCCUPANCY",
    "SENSIBLE_HEAT_PER_PERSON",
    "Gain",
    "GainProfile",
    "add_internal_gains",
    "appliances",
    "gain_table",
    "lighting",
    "occupants",
    "total_gains",
]

#: Convective fraction of internal gains [-]: 0.4 (ISO 52016-1:2017, from memory).
CONVECTIVE_FRACTION = 0.4

#: Sensible heat emitted by a seated adult at rest or light activity [W/person]: 70 W
#: (common practice, no source; about two thirds of the ≈ 105 W metabolic heat of 1 met =
#: 58.2 W/m² × 1.8 m² body area, ISO 7730 met unit from memory).
SENSIBLE_HEAT_PER_PERSON = 70.0


@dataclass(frozen=True)
class GainProfile:
    """Hourly fractions [-] of a peak gain, for weekdays and weekends.

    Parameters
    ----------
    weekday, weekend : sequence of 24 floats
        Values for the clock hours 0–23 (local time of the simulation index), each 0 … 1.
    name : str
    source : str
        Where the shape comes from ("common practice, no source" for the defaults).
    """

    weekday: tuple
    weekend: tuple
    name: str = "profile"
    source: str = "user"

    def __post_init__(self):
        for what in ("weekday", "weekend"):
            arr = np.asarray(getattr(self, what), dtype=float)
            if arr.shape != (24,):
                raise ScheduleError(f"profile {self.name!r}: {what} needs 24 hourly values, got "
                                    f"shape {arr.shape}")
            if not np.isfinite(arr).all() or (arr < 0).any() or (arr > 1).any():
                raise ScheduleError(f"profile {self.name!r}: {what} fractions must lie in 0 … 1")
            object.__setattr__(self, what, tuple(float(v) for v in arr))

    def series(self, index: pd.DatetimeIndex) -> pd.Series:
        """The profile on a simulation index [-] (hour of each interval's mid-point).

        Parameters
        ----------
        index : pandas.DatetimeIndex
            Simulation index (interval ending).
        """
        # same rule as schedules.weekly_profile, written out here with day_of_week (the
        # dayofweek alias used there is deprecated in pandas 3 and warns)
        step = check_index(index, f"profile {self.name!r} index")
        mid = index - step / 2
        hour = np.asarray(mid.hour)
        weekend = np.asarray(mid.day_of_week) >= 5
        values = np.where(weekend, np.asarray(self.weekend)[hour], np.asarray(self.weekday)[hour])
        return pd.Series(values, index=index, name=self.name)

    @property
    def weekly_full_load_hours(self) -> float:
        """Σ fractions over one week [h]: 5 weekdays + 2 weekend days."""
        return 5.0 * sum(self.weekday) + 2.0 * sum(self.weekend)


def _hours(*spans, base=0.0):
    """24 values: ``base`` everywhere, ``value`` in each (start, end, value) span."""
    v = [base] * 24
    for start, end, value in spans:
        for h in range(start, end):
            v[h] = value
    return tuple(v)


_NS = "common practice, no source"

#: Always on (fraction 1).
CONSTANT = GainProfile(_hours(base=1.0), _hours(base=1.0), "constant", _NS)

#: Dwelling occupancy: home at night and evenings on weekdays, mostly home at weekends.
RESIDENTIAL_OCCUPANCY = GainProfile(
    _hours((0, 7, 1.0), (7, 8, 0.5), (8, 17, 0.1), (17, 18, 0.5), (18, 24, 1.0)),
    _hours((0, 9, 1.0), (9, 12, 0.6), (12, 14, 0.8), (14, 18, 0.5), (18, 24, 1.0)),
    "residential occupancy", _NS)

#: Dwelling lighting: early morning and evening.
RESIDENTIAL_LIGHTING = GainProfile(
    _hours((6, 8, 0.5), (17, 19, 0.6), (19, 23, 1.0), base=0.05),
    _hours((7, 10, 0.4), (17, 19, 0.6), (19, 24, 1.0), base=0.05),
    "residential lighting", _NS)

#: Dwelling appliances: a base load (fridge, standby) with morning and evening peaks.
RESIDENTIAL_APPLIANCES = GainProfile(
    _hours((6, 8, 0.6), (12, 13, 0.5), (17, 22, 1.0), base=0.3),
    _hours((8, 13, 0.6), (17, 22, 1.0), base=0.3),
    "residential appliances", _NS)

#: Office occupancy: 8–18 h on weekdays, lunch dip; empty at weekends.
OFFICE_OCCUPANCY = GainProfile(
    _hours((8, 12, 1.0), (12, 13, 0.5), (13, 18, 1.0)),
    _hours(base=0.0), "office occupancy", _NS)

#: Office lighting: on during occupancy, a small night/weekend share.
OFFICE_LIGHTING = GainProfile(
    _hours((7, 8, 0.5), (8, 18, 1.0), (18, 19, 0.5), base=0.05),
    _hours(base=0.05), "office lighting", _NS)

#: Office appliances: computers during occupancy, standby otherwise.
OFFICE_APPLIANCES = GainProfile(
    _hours((8, 18, 1.0), base=0.2), _hours(base=0.2), "office appliances", _NS)


def _number(value, gain: str, what: str) -> float:
    """``value`` as a float, or a TypeError naming the gain and the parameter."""
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise TypeError(f"gain {gain!r}: {what} must be a number, got "
                        f"{type(value).__name__} {value!r}")
    return float(value)


@dataclass(frozen=True)
class Gain:
    """One internal gain: a peak power, its profile and its convective fraction.

    Use :func:`occupants`, :func:`lighting` or :func:`appliances` to build one.

    Attributes
    ----------
    name : str
    power_w : float or None
        Peak power [W] (absolute), or None when given per floor area.
    w_per_m2 : float or None
        Peak power per floor area [W/m²].
    profile : GainProfile, pandas.Series or float
        Fractions [-] (a Series must be on the simulation index).
    convective_fraction : float
        Share to the air [-], 0 … 1; the rest is radiative.
    """

    name: str
    power_w: float | None
    w_per_m2: float | None
    profile: object
    convective_fraction: float = CONVECTIVE_FRACTION

    def __post_init__(self):
        if (self.power_w is None) == (self.w_per_m2 is None):
            raise NetworkError(f"gain {self.name!r}: give exactly one of power_w [W] or "
                               "w_per_m2 [W/m²]")
        for v, what in ((self.power_w, "power_w [W]"), (self.w_per_m2, "w_per_m2 [W/m²]")):
            if v is not None and (not math.isfinite(_number(v, self.name, what))
                                  or float(v) < 0):
                raise NetworkError(f"gain {self.name!r}: {what} must be finite and ≥ 0, got {v!r}")
        f = _number(self.convective_fraction, self.name, "convective_fraction [-]")
        if not 0.0 <= f <= 1.0:
            raise NetworkError(f"gain {self.name!r}: convective_fraction must lie in 0 … 1, got "
                               f"{self.convective_fraction!r}")
        if not isinstance(self.profile, (GainProfile, pd.Series, int, float)):
            raise TypeError(f"gain {self.name!r}: profile must be a GainProfile, a Series or a "
                            "number")

    def peak(self, floor_area: float | None = None) -> float:
        """Peak power [W].

        Parameters
        ----------
        floor_area : float, optional
            Floor area [m²], needed for gains given per m².
        """
        if self.power_w is not None:
            return float(self.power_w)
        if floor_area is None or not float(floor_area) > 0:
            raise NetworkError(f"gain {self.name!r} is per m²; give floor_area [m²] > 0")
        return float(self.w_per_m2) * float(floor_area)

    def fractions(self, index: pd.DatetimeIndex) -> pd.Series:
        """Profile fractions on ``index`` [-].

        Parameters
        ----------
        index : pandas.DatetimeIndex
            Simulation index (interval ending).
        """
        p = self.profile
        if isinstance(p, GainProfile):
            return p.series(index)
        if isinstance(p, pd.Series):
            if len(p) != len(index) or not p.index.equals(index):
                raise ScheduleError(f"gain {self.name!r}: profile Series is not on the simulation "
                                    "index; build it on weather.index")
            vals = np.asarray(p, dtype=float)
            if not np.isfinite(vals).all() or (vals < 0).any():
                raise ScheduleError(f"gain {self.name!r}: profile fractions must be finite, ≥ 0")
            return pd.Series(vals, index=index, name=self.name)
        return pd.Series(float(p), index=index, name=self.name)


def occupants(people: float, *, w_per_person: float = SENSIBLE_HEAT_PER_PERSON,
              profile=RESIDENTIAL_OCCUPANCY, convective_fraction: float = CONVECTIVE_FRACTION,
              name: str = "occupants") -> Gain:
    """Occupants: ``people`` × ``w_per_person`` [W] (sensible heat) × profile.

    Parameters
    ----------
    people : float
        Number of occupants [-], ≥ 0.
    w_per_person : float, default SENSIBLE_HEAT_PER_PERSON
        Sensible heat per person [W], ≥ 0.
    profile : GainProfile, pandas.Series or float, default the dwelling profile
        Fraction of the peak per step [-] (a Series on the simulation index).
    convective_fraction : float, default CONVECTIVE_FRACTION
        Share of the gain to the air [-], 0 … 1; the rest is radiative.
    name : str
        Gain name (prefix of the source names).
    """
    p = _number(people, name, "people")
    if not math.isfinite(p) or p < 0:
        raise NetworkError(f"gain {name!r}: people must be finite and ≥ 0, got {people!r}")
    w = _number(w_per_person, name, "w_per_person [W]")
    if not math.isfinite(w) or w < 0:
        raise NetworkError(f"gain {name!r}: w_per_person [W] must be finite and ≥ 0, got "
                           f"{w_per_person!r}")
    return Gain(name, p * w, None, profile, convective_fraction)


def lighting(w_per_m2: float, *, profile=RESIDENTIAL_LIGHTING,
             convective_fraction: float = CONVECTIVE_FRACTION, name: str = "lighting") -> Gain:
    """Lighting: ``w_per_m2`` [W/m²] of floor area × profile.

    Parameters
    ----------
    w_per_m2 : float
        Peak lighting power per floor area [W/m²], ≥ 0.
    profile : GainProfile, pandas.Series or float, default the dwelling profile
        Fraction of the peak per step [-] (a Series on the simulation index).
    convective_fraction : float, default CONVECTIVE_FRACTION
        Share of the gain to the air [-], 0 … 1; the rest is radiative.
    name : str
        Gain name (prefix of the source names).
    """
    return Gain(name, None, w_per_m2, profile, convective_fraction)


def appliances(w_per_m2: float, *, profile=RESIDENTIAL_APPLIANCES,
               convective_fraction: float = CONVECTIVE_FRACTION,
               name: str = "appliances") -> Gain:
    """Appliances and equipment: ``w_per_m2`` [W/m²] of floor area × profile.

    Parameters
    ----------
    w_per_m2 : float
        Peak appliance power per floor area [W/m²], ≥ 0.
    profile : GainProfile, pandas.Series or float, default the dwelling profile
        Fraction of the peak per step [-] (a Series on the simulation index).
    convective_fraction : float, default CONVECTIVE_FRACTION
        Share of the gain to the air [-], 0 … 1; the rest is radiative.
    name : str
        Gain name (prefix of the source names).
    """
    return Gain(name, None, w_per_m2, profile, convective_fraction)


def _gains(gains) -> list[Gain]:
    if isinstance(gains, Gain):
        gains = [gains]
    if not isinstance(gains, Sequence) or not gains:
        raise NetworkError("gains must be a Gain or a non-empty list of Gain")
    names = [g.name for g in gains]
    for g in gains:
        if not isinstance(g, Gain):
            raise TypeError(f"gains must be Gain objects, got {type(g).__name__}")
    dup = {n for n in names if names.count(n) > 1}
    if dup:
        raise NetworkError(f"duplicate gain names {sorted(dup)}; pass name= to tell them apart")
    return list(gains)


def gain_table(gains, index: pd.DatetimeIndex, floor_area: float | None = None) -> pd.DataFrame:
    """Gains per step [W], one convective and one radiative column per gain.

    Parameters
    ----------
    gains : Gain or list of Gain
    index : pandas.DatetimeIndex
        Simulation (weather) index.
    floor_area : float, optional
        [m²], needed for gains given per m².

    Returns
    -------
    pandas.DataFrame
        Columns ``"<name>_convective"``, ``"<name>_radiative"`` [W].
    """
    cols = {}
    for g in _gains(gains):
        q = g.fractions(index).to_numpy() * g.peak(floor_area)
        cols[f"{g.name}_convective"] = q * g.convective_fraction
        cols[f"{g.name}_radiative"] = q * (1.0 - g.convective_fraction)
    return pd.DataFrame(cols, index=index)


def total_gains(gains, index: pd.DatetimeIndex, floor_area: float | None = None) -> pd.Series:
    """Total internal gain per step [W] (e.g. Φ_int of :mod:`thermonet.templates`).

    Parameters
    ----------
    gains : sequence of Gain
        The gains to add up.
    index : pandas.DatetimeIndex
        Simulation index (interval ending).
    floor_area : float, optional
        Floor area [m²], needed for gains given per m².
    """
    return gain_table(gains, index, floor_area).sum(axis=1).rename("internal_gains")


def add_internal_gains(net, room, gains, index: pd.DatetimeIndex) -> list[str]:
    """Add internal gains to a room built by :func:`thermonet.builders.add_room`.

    Parameters
    ----------
    net : Network
    room : thermonet.builders.Room
        Convective parts go to ``room.air``, radiative parts to ``room.star``.
    gains : Gain or list of Gain
    index : pandas.DatetimeIndex
        The weather index the network will be simulated on.

    Returns
    -------
    list of str
        Source names ``"<room>:<gain>:convective"`` / ``":radiative"`` (path ``"internal"``);
        also appended to ``room.sources``.
    """
    for attr in ("air", "star", "floor_area", "sources"):
        if not hasattr(room, attr):
            raise TypeError("room must be a thermonet.builders.Room (for the ISO 13790 template "
                            "pass the total gain, see thermonet.templates)")
    table = gain_table(gains, index, room.floor_area)
    names = []
    for g in _gains(gains):
        for part, node in (("convective", room.air), ("radiative", room.star)):
            col = table[f"{g.name}_{part}"]
            if not (col.to_numpy() > 0).any():
                continue
            names.append(net.add_source(node, power=col.rename(None), path="internal",
                                        name=f"{room.name}:{g.name}:{part}"))
    room.sources += names
    return names
