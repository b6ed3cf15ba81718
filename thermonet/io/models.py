"""Model files: a whole :class:`~thermonet.network.Network` as a human-readable JSON file.

The file is plain JSON (UTF-8) of thermonet's own schema; nothing is pickled and nothing is
evaluated on load. Loading rebuilds the network through the public ``Network.add_*`` methods,
so every check of the library runs again, and a loaded model gives bit-identical results
(floats are written with Python's shortest round-trip ``repr``).

Schema, version 1
-----------------
::

    {
      "format": "thermonet-model",          # required, exactly this string
      "schema_version": 1,                  # required, integer
      "thermonet_version": "0.1.0",         # optional, informational
      "description": "...",                 # optional, free text
      "weather_columns": ["temp_air"],      # optional, weather columns the model reads
      "network": {
        "name": "network",                                     # optional
        "meta": {...},                                         # optional, plain JSON
        "nodes": [{"name", "kind", "capacitance" [J/K], "volume" [m³]?, "initial" [°C]?}],
        "boundaries": [{"name", "kind"?, "temperature": column | number [°C] | schedule}],
        "links": [
          {"kind": "conductance", "name", "a", "b", "path", "conductance": [W/K] | schedule},
          {"kind": "airflow", "name", "a", "b", "path", "flow_m3h": [m³/h] | schedule,
           "heat_recovery" [-]?, "rho_cp" [J/(m³K)]?},
          {"kind": "radiation", "name", "a", "b", "path", "area" [m²], "emissivity_a"?,
           "emissivity_b"?, "view_factor"?, "area_b"?, "reference_temperature" [°C]?},
          {"kind": "window", "name", "a", "b", "path", "law": name, "law_params":
           {parameter: number | bool}, "wind"?: column | [m/s] | schedule,
           "rho_cp" [J/(m³K)]?}],
        "sources": [{"name", "node", "path", "power": [W] | schedule}],
        "thermostats": [{"name", "node", "heating_setpoint"?, "cooling_setpoint"?: [°C] |
                         schedule | null, "max_heating_w"?, "max_cooling_w"?: [W] | "inf"}],
        "switches": [{"name", "on": condition, "off"?: condition | null,
                      "links"?: {link: factor_on | [factor_off, factor_on]},
                      "sources"?: {source: factor_on | [factor_off, factor_on]},
                      "initial"?}],
        "schedules": {"key": schedule}                         # optional, shared series
      }
    }

Keys marked ``?`` are optional (their defaults are those of the ``add_*`` methods); element
names are optional for links, sources, thermostats and switches (the method's default name is
used) but always written; a link's ``"kind"`` defaults to ``"conductance"``.

*Schedule* (a :class:`pandas.Series` on a tz-aware index), either compact for a regular index
``{"start": ISO-8601 with offset, "step": ISO-8601 duration, "tz": IANA name, "values": [...]}``
or explicit ``{"index": [ISO-8601 with offset, ...], "tz": ..., "values": [...]}``; optional
``"name"``. Wherever a schedule is allowed, ``{"schedule": "key"}`` refers to
``network.schedules[key]``; :func:`to_dict` always writes series to that table (each distinct
series once).

*Condition*: ``{"any": [[term, ...], ...]}``, an OR of AND-clauses. A *term* is
``{"a": ref, "b": ref?, "op": ">" | "<", "threshold": number}`` meaning
``value(a) − value(b) op threshold`` (b absent: 0), or ``{"hours": [start, end]}``
(:func:`thermonet.hours`). A *ref* is a node or boundary name, or
``{"signal": schedule key, "name": str?}`` (a :class:`thermonet.Signal`).

Numbers are JSON numbers; ``NaN``/``Infinity`` are not JSON and are refused; unlimited
thermostat capacity is written ``"inf"``. A number too small for a double (``1e-400``, which
would read as 0) or a denormal one (below 2.2e-308) is refused with its key named, and files
above :data:`MAX_MODEL_BYTES` are refused before they are read.

Errors
------
Every problem with a file's content raises :class:`~thermonet.errors.ModelFileError` naming
the element (``network.links[2] (link 'outdoor-room:opaque')``) and the key, what is allowed
and what was found: invalid JSON, unknown keys (with the list of allowed keys), missing
required keys, wrong types, references to unknown nodes / links / sources / schedules,
values the ``add_*`` methods refuse (the original :class:`~thermonet.errors.NetworkError` is
chained as ``__cause__``) and files of a newer schema version. A missing file raises
:class:`FileNotFoundError` as usual.
"""

from __future__ import annotations

import hashlib
import json
import math
import sys
from dataclasses import dataclass, field
from functools import reduce
from pathlib import Path

import numpy as np
import pandas as pd

from thermonet.controls import Condition, HourWindow, Signal, above, below, colder, hours, warmer
from thermonet.errors import ModelFileError
from thermonet.io.files import write_file_atomic
from thermonet.network import Network, radiation_conductance

__all__ = [
    "FORMAT",
    "MAX_MODEL_BYTES",
    "SCHEMA_VERSION",
    "ModelFile",
    "to_dict",
    "from_dict",
    "dumps",
    "loads",
    "save_model",
    "load_model",
    "read_model",
    "required_weather_columns",
]

#: Largest model file read [bytes] (64 MiB). A file of a year-long hourly schedule per
#: element for thousands of elements stays well below; beyond it, parsing takes minutes
#: and gigabytes of memory (a 100 MB file: ~74 s and +1.2 GB, measured).
MAX_MODEL_BYTES = 64 * 1024 * 1024


#: Value of the top-level ``"format"`` key.
FORMAT = "thermonet-model"

#: Schema version written by this thermonet; files up to this version are read.
SCHEMA_VERSION = 1

_TOP_REQUIRED = ("format", "schema_version", "network")
_TOP_OPTIONAL = ("thermonet_version", "description", "weather_columns")
_NET_REQUIRED = ("nodes", "boundaries", "links")
_NET_OPTIONAL = ("name", "meta", "sources", "thermostats", "switches", "schedules")
_NODE_KEYS = (("name", "kind", "capacitance"), ("volume", "initial"))
_BOUNDARY_KEYS = (("name", "temperature"), ("kind",))
_LINK_KEYS = {
    "conductance": (("a", "b", "path", "conductance"), ("kind", "name")),
    "airflow": (("kind", "a", "b", "path", "flow_m3h"), ("name", "heat_recovery", "rho_cp")),
    "radiation": (("kind", "a", "b", "path", "area"),
                  ("name", "emissivity_a", "emissivity_b", "view_factor", "area_b",
                   "reference_temperature")),
    "window": (("kind", "a", "b", "path", "law", "law_params"), ("name", "wind", "rho_cp")),
}
_SOURCE_KEYS = (("node", "path", "power"), ("name",))
_THERMOSTAT_KEYS = (("node",), ("name", "heating_setpoint", "cooling_setpoint",
                                "max_heating_w", "max_cooling_w"))
_SWITCH_KEYS = (("on",), ("name", "off", "links", "sources", "initial"))
_TERM_KEYS = (("a", "op", "threshold"), ("b",))
_COMPACT_KEYS = (("start", "step", "values"), ("tz", "name"))
_EXPLICIT_KEYS = (("index", "values"), ("tz", "name"))


# =============================================================================== helpers
def _tname(x) -> str:
    """JSON-ish type name of a value, for messages."""
    if x is None:
        return "null"
    if isinstance(x, bool):
        return "boolean"
    if isinstance(x, (int, float)):
        return "number"
    if isinstance(x, str):
        return "string"
    if isinstance(x, list):
        return "array"
    if isinstance(x, dict):
        return "object"
    return type(x).__name__


def _short(x, n: int = 60) -> str:
    r = repr(x)
    return r if len(r) <= n else r[: n - 3] + "..."


class _Reader:
    """Decoding context: builds :class:`ModelFileError` messages with the file's name."""

    def __init__(self, source: str):
        self.source = source

    def err(self, where: str, msg: str) -> ModelFileError:
        return ModelFileError(f"{self.source}: {where}: {msg}")

    # -------------------------------------------------------------- structure
    def obj(self, x, where: str, required, optional) -> dict:
        if not isinstance(x, dict):
            raise self.err(where, f"must be a JSON object {{...}}, got {_tname(x)} {_short(x)}")
        allowed = (*required, *optional)
        for k in x:
            if k not in allowed:
                raise self.err(where, f"unknown key {k!r}; allowed keys: "
                               f"{', '.join(allowed)}")
        for k in required:
            if k not in x:
                raise self.err(where, f"missing required key {k!r}; required keys: "
                               f"{', '.join(required)}")
        return x

    def array(self, x, where: str) -> list:
        if not isinstance(x, list):
            raise self.err(where, f"must be a JSON array [...], got {_tname(x)} {_short(x)}")
        return x

    def string(self, x, where: str, *, empty: bool = False) -> str:
        if not isinstance(x, str):
            raise self.err(where, f"must be a string, got {_tname(x)} {_short(x)}")
        if not x and not empty:
            raise self.err(where, "must be a non-empty string")
        return x

    def number(self, x, where: str, *, inf_ok: bool = False) -> float:
        if inf_ok and x == "inf":
            return math.inf
        if isinstance(x, bool) or not isinstance(x, (int, float)):
            allowed = 'a number or "inf"' if inf_ok else "a number"
            raise self.err(where, f"must be {allowed}, got {_tname(x)} {_short(x)}")
        try:
            v = float(x)
        except OverflowError:  # a JSON integer beyond the float range
            v = math.inf
        if not math.isfinite(v):  # 1e999 in JSON, or inf/NaN through from_dict
            raise self.err(where, f"must be finite, got {v}")
        if isinstance(x, Underflow):
            raise self.err(where, f"{x.text} is too small for a double-precision number "
                           f"(it would be read as 0); write 0 if that is meant, otherwise a "
                           f"value of magnitude ≥ {sys.float_info.min:.3g}")
        if v != 0.0 and abs(v) < sys.float_info.min:
            raise self.err(where, f"{v!r} is a denormal number (below "
                           f"{sys.float_info.min:.3g}, stored with reduced precision); write "
                           "0 if that is meant, otherwise a value of sensible magnitude")
        return v

    def opt_number(self, d: dict, key: str, where: str, default=None, **kw):
        if key not in d or d[key] is None:
            return default
        return self.number(d[key], f"{where}.{key}", **kw)

    def boolean(self, x, where: str) -> bool:
        if not isinstance(x, bool):
            raise self.err(where, f"must be true or false, got {_tname(x)} {_short(x)}")
        return x

    def integer(self, x, where: str) -> int:
        if isinstance(x, bool) or not isinstance(x, int):
            raise self.err(where, f"must be a whole number, got {_tname(x)} {_short(x)}")
        return x


def _tz_name(tz) -> str:
    return str(getattr(tz, "key", None) or getattr(tz, "zone", None) or tz)


# ============================================================================ schedules
def _encode_series(s: pd.Series, what: str) -> dict:
    """A Series as a schedule object (compact form when its index is regular)."""
    idx = s.index
    if not isinstance(idx, pd.DatetimeIndex) or idx.tz is None:
        raise ModelFileError(f"cannot save {what}: a schedule needs a tz-aware DatetimeIndex, "
                             f"got {type(idx).__name__} (tz={getattr(idx, 'tz', None)})")
    values = np.asarray(s, dtype=float)
    if not np.isfinite(values).all():
        raise ModelFileError(f"cannot save {what}: NaN/inf values are not allowed in a model "
                             "file; fill them first")
    out: dict = {}
    tz = _tz_name(idx.tz)
    ns = idx.as_unit("ns").asi8
    d = np.diff(ns)
    if len(idx) >= 2 and (d > 0).all() and (d == d[0]).all():
        out["start"] = idx[0].isoformat()
        out["step"] = pd.Timedelta(int(d[0]), "ns").isoformat()
    else:
        out["index"] = [t.isoformat() for t in idx]
    out["tz"] = tz
    if isinstance(s.name, str):
        out["name"] = s.name
    out["values"] = [float(v) for v in values]
    return out


def _series_key(s: pd.Series) -> str:
    h = hashlib.sha256()
    h.update(_tz_name(s.index.tz).encode())
    h.update(np.ascontiguousarray(s.index.as_unit("ns").asi8).tobytes())
    h.update(np.ascontiguousarray(np.asarray(s, dtype=float)).tobytes())
    h.update(repr(s.name).encode())
    return h.hexdigest()


class _ScheduleTable:
    """Collects the distinct series of a network under readable keys."""

    def __init__(self):
        self.table: dict[str, dict] = {}
        self._by_hash: dict[str, str] = {}

    def ref(self, s: pd.Series, label: str) -> dict:
        if not isinstance(s.index, pd.DatetimeIndex) or s.index.tz is None:
            raise ModelFileError(f"cannot save {label}: a schedule needs a tz-aware "
                                 "DatetimeIndex")
        h = _series_key(s)
        if h not in self._by_hash:
            key = base = label
            i = 2
            while key in self.table:
                key, i = f"{base} #{i}", i + 1
            self.table[key] = _encode_series(s, label)
            self._by_hash[h] = key
        return {"schedule": self._by_hash[h]}


def _decode_schedule(r: _Reader, x, where: str) -> pd.Series:
    if not isinstance(x, dict):
        raise r.err(where, f"must be a schedule object, got {_tname(x)} {_short(x)}")
    if not any(k in x for k in ("start", "step", "index", "values")):
        raise r.err(where, "must be a schedule reference {\"schedule\": key} or a schedule "
                    "object ({\"start\", \"step\", \"values\"} or {\"index\", "
                    f"\"values\"}}), got keys {sorted(x)}")
    compact = "start" in x or "step" in x
    keys = _COMPACT_KEYS if compact else _EXPLICIT_KEYS
    r.obj(x, where, *keys)
    values = r.array(x["values"], f"{where}.values")
    vals = np.empty(len(values))
    for i, v in enumerate(values):
        vals[i] = r.number(v, f"{where}.values[{i}]")
    tz = r.string(x["tz"], f"{where}.tz") if "tz" in x else None
    name = r.string(x["name"], f"{where}.name", empty=True) if "name" in x else None

    def stamp(text, w):
        r.string(text, w)
        try:
            t = pd.Timestamp(text)
        except (ValueError, TypeError) as exc:
            raise r.err(w, f"is not an ISO-8601 timestamp: {text!r} ({exc})") from exc
        if t.tz is None:
            raise r.err(w, f"timestamp {text!r} has no UTC offset; write it tz-aware, e.g. "
                        "'2025-01-01T01:00:00+01:00'")
        return t

    def zone(idx):
        if tz is None:
            return idx
        try:
            return idx.tz_convert(tz)
        except Exception as exc:  # unknown zone names raise several types
            raise r.err(f"{where}.tz", f"unknown time zone {tz!r} ({exc})") from exc

    if compact:
        start = stamp(x["start"], f"{where}.start")
        step_text = r.string(x["step"], f"{where}.step")
        try:
            step = pd.Timedelta(step_text)
        except (ValueError, TypeError) as exc:
            raise r.err(f"{where}.step", f"is not a duration (ISO 8601 like 'PT1H' or "
                        f"pandas like '15min'): {step_text!r}") from exc
        if step <= pd.Timedelta(0):
            raise r.err(f"{where}.step", f"must be positive, got {step_text!r}")
        if len(vals) < 1:
            raise r.err(f"{where}.values", "must hold at least one value")
        try:
            idx = pd.date_range(start=start, periods=len(vals), freq=step)
        except (ValueError, OverflowError) as exc:  # OutOfBoundsDatetime is a ValueError
            raise r.err(where, f"start + {len(vals)} steps of {step} leaves the "
                        f"representable time range ({exc})") from exc
        idx = zone(idx)
    else:
        items = r.array(x["index"], f"{where}.index")
        if len(items) != len(vals):
            raise r.err(where, f"index has {len(items)} timestamps but values has "
                        f"{len(vals)}; give one value per timestamp")
        stamps = [stamp(t, f"{where}.index[{i}]") for i, t in enumerate(items)]
        if tz is None and len({t.utcoffset() for t in stamps}) > 1:
            raise r.err(where, "timestamps carry different UTC offsets; add \"tz\" (an "
                        "IANA zone such as 'Europe/Berlin') to say which zone they are in")
        utc = pd.DatetimeIndex([t.tz_convert("UTC") for t in stamps])
        idx = zone(utc) if tz is not None else (
            utc.tz_convert(stamps[0].tzinfo) if stamps else utc)
    return pd.Series(vals, index=idx, name=name)


# ============================================================================= encoding
def required_weather_columns(net: Network) -> list[str]:
    """Weather columns the network reads (boundaries given by a column name), in order.

    Parameters
    ----------
    net : Network

    Returns
    -------
    list of str
    """
    cols: dict[str, None] = {}
    for b in net.boundaries.values():
        if isinstance(b.temperature, str):
            cols[b.temperature] = None
    for link in net.links.values():
        if link.kind == "window" and isinstance(link.params["wind"], str):
            cols[link.params["wind"]] = None
    return list(cols)


def _plain(x, where: str):
    """Plain JSON data (dict/list/str/number/bool/None) from ``x``, or ModelFileError."""
    if x is None or isinstance(x, (bool, str)):
        return x
    if isinstance(x, (np.bool_,)):
        return bool(x)
    if isinstance(x, (int, np.integer)):
        return int(x)
    if isinstance(x, (float, np.floating)):
        if not math.isfinite(float(x)):
            raise ModelFileError(f"cannot save {where}: {x} is not a finite number")
        return float(x)
    if isinstance(x, dict):
        out = {}
        for k, v in x.items():
            if not isinstance(k, str):
                raise ModelFileError(f"cannot save {where}: keys must be strings, got {k!r}")
            out[k] = _plain(v, f"{where}.{k}")
        return out
    if isinstance(x, (list, tuple, np.ndarray)):
        return [_plain(v, f"{where}[{i}]") for i, v in enumerate(list(x))]
    raise ModelFileError(f"cannot save {where}: {type(x).__name__} is not plain JSON data "
                         "(dict, list, str, number, bool, None)")


def _num_out(v):
    return "inf" if v == math.inf else float(v)


def _value_out(v, sched: _ScheduleTable, label: str):
    if isinstance(v, pd.Series):
        return sched.ref(v, label)
    if isinstance(v, str):
        return v
    return float(v)


def _factor_out(f):
    """A switch factor: ``factor_on`` alone when ``factor_off`` is 1, else the pair."""
    if isinstance(f, (tuple, list)):
        off, on = (float(v) for v in f)
        return on if off == 1.0 else [off, on]
    return float(f)


def _same(a, b) -> bool:
    return bool(np.array_equal(np.asarray(a, dtype=float), np.asarray(b, dtype=float)))


def _encode_link(link, sched: _ScheduleTable) -> dict:
    out = {"kind": link.kind, "name": link.name, "a": link.a, "b": link.b, "path": link.path}
    label = f"link {link.name}"
    if link.kind == "conductance":
        out["conductance"] = _value_out(link.conductance, sched, f"{label} conductance")
        return out
    p = link.params
    if link.kind == "airflow":
        flow, eta, rho_cp = p["flow_m3h"], float(p["heat_recovery"]), float(p["rho_cp"])
        if not _same(flow * (rho_cp / 3600.0) * (1.0 - eta), link.conductance):
            raise ModelFileError(f"cannot save link {link.name!r}: its conductance was changed "
                                 "after add_airflow(), so its flow_m3h no longer describes it")
        out["flow_m3h"] = _value_out(flow, sched, f"{label} flow_m3h")
        out["heat_recovery"] = eta
        out["rho_cp"] = rho_cp
        return out
    if link.kind == "radiation":
        g = radiation_conductance(p["area"], p["emissivity_a"], p["emissivity_b"],
                                  p["view_factor"], area_b=p["area_b"],
                                  reference_temperature=p["reference_temperature"])
        if not _same(g, link.conductance):
            raise ModelFileError(f"cannot save link {link.name!r}: its conductance was changed "
                                 "after add_radiation(), so its parameters no longer describe it")
        for k in ("area", "emissivity_a", "emissivity_b", "view_factor", "area_b",
                  "reference_temperature"):
            out[k] = None if p[k] is None else float(p[k])
        return out
    if link.kind == "window":
        out["law"] = p["law"]
        out["law_params"] = dict(p["law_params"])
        w = p["wind"]
        out["wind"] = w if isinstance(w, str) else _value_out(w, sched, f"{label} wind")
        out["rho_cp"] = float(p["rho_cp"])
        return out
    raise ModelFileError(f"cannot save link {link.name!r}: unknown link kind {link.kind!r}; "
                         f"this thermonet writes {', '.join(_LINK_KEYS)}")


def _encode_ref(ref, sched: _ScheduleTable, label: str):
    if isinstance(ref, str):
        return ref
    if isinstance(ref, Signal):
        return {"signal": sched.ref(ref.series, f"{label} signal {ref.name}")["schedule"],
                "name": ref.name}
    raise ModelFileError(f"cannot save {label}: condition reference {ref!r} is not a node "
                         "name or a Signal")


def _encode_condition(cond: Condition, sched: _ScheduleTable, label: str) -> dict:
    clauses = []
    for clause in cond.clauses:
        terms = []
        for t in clause:
            if isinstance(t.a, HourWindow):
                if t.b is not None or t.op != ">" or t.threshold != 0.5:
                    raise ModelFileError(f"cannot save {label}: an hour window can only be "
                                         "used as built by thermonet.hours()")
                terms.append({"hours": [t.a.start, t.a.end]})
                continue
            if t.op not in (">", "<"):
                raise ModelFileError(f"cannot save {label}: unknown operator {t.op!r}")
            term = {"a": _encode_ref(t.a, sched, label)}
            if t.b is not None:
                term["b"] = _encode_ref(t.b, sched, label)
            term["op"] = t.op
            term["threshold"] = float(t.threshold)
            terms.append(term)
        clauses.append(terms)
    return {"any": clauses}


def to_dict(net: Network, *, weather_columns=None) -> dict:
    """The model-file content of a network, as plain JSON data.

    Parameters
    ----------
    net : Network
        Any network built with the ``add_*`` methods (by hand or by builders).
    weather_columns : sequence of str, optional
        Weather columns the model needs, recorded in the file for ``thermonet run``;
        default: those the boundaries read (:func:`required_weather_columns`). Extra columns
        may be listed (e.g. the irradiance the schedules were made from); the boundaries'
        columns must be included.

    Returns
    -------
    dict
        ``{"format": "thermonet-model", "schema_version": 1, ..., "network": {...}}``.

    Raises
    ------
    ModelFileError
        If something of the network cannot be written faithfully (a Series without a
        tz-aware index, a link whose conductance was edited after it was added, non-JSON
        ``meta``), or ``weather_columns`` omits a column a boundary reads, or the network
        has parameters (:mod:`thermonet.parameters`): model files hold plain numbers.
    """
    from thermonet import __version__

    if getattr(net, "parameters", None):
        shown = ", ".join(f"{k} [{p.unit}] (default {p.default:g})"
                          for k, p in net.parameters.items())
        raise ModelFileError(
            f"network {net.name!r} has parameters: {shown}. Model files hold plain numbers, "
            "not parameter expressions; save one set of values instead, e.g. "
            "save_model(net.with_values(), path) for the defaults or "
            "net.with_values(name=value, ...), and keep the parametric network in the script "
            "that builds it")
    used = required_weather_columns(net)
    if weather_columns is None:
        cols = used
    else:
        if isinstance(weather_columns, str) or not all(
                isinstance(c, str) and c for c in weather_columns):
            raise ModelFileError("weather_columns must be a list of column names (str), got "
                                 f"{weather_columns!r}")
        cols = list(dict.fromkeys(weather_columns))
        missing = [c for c in used if c not in cols]
        if missing:
            raise ModelFileError(f"weather_columns {cols} omits {missing}, read by the "
                                 "network's boundaries; add them (or pass None)")
    sched = _ScheduleTable()
    nodes = []
    for n in net.nodes.values():
        d = {"name": n.name, "kind": n.kind, "capacitance": float(n.capacitance)}
        if n.volume is not None:
            d["volume"] = float(n.volume)
        if n.initial is not None:
            d["initial"] = float(n.initial)
        nodes.append(d)
    boundaries = [{"name": b.name, "kind": b.kind,
                   "temperature": _value_out(b.temperature, sched,
                                             f"boundary {b.name} temperature")}
                  for b in net.boundaries.values()]
    links = [_encode_link(l, sched) for l in net.links.values()]
    sources = [{"name": s.name, "node": s.node, "path": s.path,
                "power": _value_out(s.power, sched, f"source {s.name} power")}
               for s in net.sources.values()]
    thermostats = []
    for t in net.thermostats.values():
        d = {"name": t.name, "node": t.node}
        for key in ("heating_setpoint", "cooling_setpoint"):
            v = getattr(t, key)
            d[key] = None if v is None else _value_out(v, sched, f"thermostat {t.name} {key}")
        d["max_heating_w"] = _num_out(t.max_heating_w)
        d["max_cooling_w"] = _num_out(t.max_cooling_w)
        thermostats.append(d)
    switches = []
    for s in net.switches.values():
        label = f"switch {s.name}"
        switches.append({
            "name": s.name,
            "on": _encode_condition(s.on, sched, label),
            "off": None if s.off is None else _encode_condition(s.off, sched, label),
            "links": {k: _factor_out(v) for k, v in s.link_factors.items()},
            "sources": {k: _factor_out(v) for k, v in s.source_factors.items()},
            "initial": bool(s.initial),
        })
    network = {"name": str(net.name)}
    meta = getattr(net, "meta", None)
    if meta:
        network["meta"] = _plain(meta, "network meta")
    network.update(nodes=nodes, boundaries=boundaries, links=links, sources=sources,
                   thermostats=thermostats, switches=switches)
    if sched.table:
        network["schedules"] = sched.table
    return {"format": FORMAT, "schema_version": SCHEMA_VERSION,
            "thermonet_version": __version__, "weather_columns": cols, "network": network}


_WIDTH = 120


def _pretty(x, indent: int = 0) -> str:
    """JSON text with short objects/arrays on one line and long number arrays wrapped."""
    flat = json.dumps(x, ensure_ascii=False, allow_nan=False)
    if len(flat) + indent <= _WIDTH or not isinstance(x, (dict, list)) or not x:
        return flat
    pad = " " * (indent + 2)
    if isinstance(x, list) and all(isinstance(v, (int, float)) and not isinstance(v, bool)
                                   for v in x):
        lines, line = [], ""
        for v in x:
            item = json.dumps(v, allow_nan=False)
            if line and len(pad) + len(line) + len(item) + 2 > _WIDTH:
                lines.append(line.rstrip())
                line = ""
            line += item + ", "
        lines.append(line[:-2])
        return "[\n" + "\n".join(pad + ln for ln in lines) + "\n" + " " * indent + "]"
    if isinstance(x, list):
        body = ",\n".join(pad + _pretty(v, indent + 2) for v in x)
        return "[\n" + body + "\n" + " " * indent + "]"
    body = ",\n".join(f"{pad}{json.dumps(k, ensure_ascii=False)}: {_pretty(v, indent + 2)}"
                      for k, v in x.items())
    return "{\n" + body + "\n" + " " * indent + "}"


def dumps(net: Network, *, weather_columns=None) -> str:
    """The model file of a network as JSON text (short elements on one line each).

    See :func:`to_dict` for the parameters and errors.

    Parameters
    ----------
    net : Network
        The network to write.
    weather_columns : sequence of str, optional
        Weather columns the model needs (see :func:`to_dict`).
    """
    return _pretty(to_dict(net, weather_columns=weather_columns)) + "\n"


def save_model(net: Network, path, *, weather_columns=None) -> Path:
    """Write a network to a model file (JSON, UTF-8), atomically.

    The text goes to a uniquely named temporary file that is flushed to disk and renamed
    over ``path`` (:func:`thermonet.io.files.write_file_atomic`); the file gets the
    permissions the umask gives a new file.

    Parameters
    ----------
    net : Network
    path : str or os.PathLike
        Target file; conventionally ``*.json``. Replaced if it exists.
    weather_columns : sequence of str, optional
        See :func:`to_dict`.

    Returns
    -------
    pathlib.Path
        The path written.

    Raises
    ------
    ModelFileError
        See :func:`to_dict`.
    """
    path = Path(path)
    text = dumps(net, weather_columns=weather_columns)
    return write_file_atomic(path, text)


# ============================================================================= decoding
def _no_duplicates(r: _Reader):
    def hook(pairs):
        out = {}
        for k, v in pairs:
            if k in out:
                raise r.err("JSON", f"key {k!r} appears twice in the same object; JSON "
                            "readers would silently keep only one — remove the duplicate")
            out[k] = v
        return out
    return hook


def _no_constants(r: _Reader):
    def hook(name):
        raise r.err("JSON", f"{name} is not valid JSON (numbers must be finite); for an "
                    'unlimited thermostat capacity write "inf"')
    return hook


def loads(text: str, *, source: str = "model text",
          max_bytes: float = MAX_MODEL_BYTES) -> Network:
    """Read a network from model-file JSON text (see :func:`from_dict`).

    Parameters
    ----------
    text : str
        Model-file JSON text.
    source : str, default "model text"
        How the text is named in error messages.
    max_bytes : float, default MAX_MODEL_BYTES
        Longer texts [characters] are refused (:data:`MAX_MODEL_BYTES`).
    """
    return _read_text(text, source, max_bytes)[0]


class Underflow(float):
    """A JSON number whose text is not zero but that reads as 0.0 (e.g. ``1e-400``)."""

    text: str = ""


def _parse_float(text: str) -> float:
    v = float(text)
    if v == 0.0 and any(c in "123456789" for c in text.lower().split("e")[0]):
        out = Underflow(0.0)
        out.text = text
        return out
    return v


def _check_size(nbytes: int, limit: float, source: str) -> None:
    if nbytes > limit:
        raise ModelFileError(
            f"{source}: file: {nbytes} bytes ({nbytes / 2**20:.1f} MiB) is above the "
            f"model-file limit of {limit:.0f} bytes ({limit / 2**20:.1f} MiB); keep long "
            "time series out of the model (pass them as weather columns), or raise the limit "
            "with max_bytes= if the file is genuine")


def _read_text(text: str, source: str, max_bytes: float = MAX_MODEL_BYTES):
    r = _Reader(source)
    _check_size(len(text), max_bytes, source)
    try:
        data = json.loads(text, object_pairs_hook=_no_duplicates(r),
                          parse_constant=_no_constants(r), parse_float=_parse_float)
    except json.JSONDecodeError as exc:
        raise r.err("JSON", f"not valid JSON: {exc.msg} at line {exc.lineno} column "
                    f"{exc.colno}") from exc
    except RecursionError as exc:
        raise r.err("JSON", "nested too deeply to be a model file") from exc
    return _from_data(data, r)


def from_dict(data: dict, *, source: str = "model dict") -> Network:
    """Rebuild a network from model-file data (the output of :func:`to_dict`).

    Parameters
    ----------
    data : dict
        Parsed model file.
    source : str, default "model dict"
        Named at the start of error messages (the file name when reading a file).

    Returns
    -------
    Network
        Built through the public ``add_*`` methods, so all their checks run again. The
        network's ``meta`` (if the file has one) is set as ``net.meta``.

    Raises
    ------
    ModelFileError
        Unknown keys, missing keys, wrong types, unknown references, values the ``add_*``
        methods refuse, or a ``schema_version`` newer than :data:`SCHEMA_VERSION`.
    """
    return _from_data(data, _Reader(source))[0]


def _header(data, r: _Reader) -> None:
    if not isinstance(data, dict):
        raise r.err("top level", f"must be a JSON object, got {_tname(data)}")
    fmt = data.get("format")
    if fmt != FORMAT:
        raise r.err("top level", f"this is not a thermonet model file: key 'format' must be "
                    f"{FORMAT!r}, got {_short(fmt)}")
    if "schema_version" not in data:
        raise r.err("top level", "missing required key 'schema_version'")
    version = r.integer(data["schema_version"], "schema_version")
    if version > SCHEMA_VERSION:
        raise r.err("schema_version", f"file has schema_version {version}; this thermonet "
                    f"reads ≤ {SCHEMA_VERSION}; upgrade thermonet")
    if version < 1:
        raise r.err("schema_version", f"must be ≥ 1, got {version}")


def _from_data(data, r: _Reader):
    _header(data, r)
    r.obj(data, "top level", _TOP_REQUIRED, _TOP_OPTIONAL)
    if "thermonet_version" in data:
        r.string(data["thermonet_version"], "thermonet_version")
    if "description" in data:
        r.string(data["description"], "description", empty=True)
    cols = None
    if "weather_columns" in data:
        cols = [r.string(c, f"weather_columns[{i}]")
                for i, c in enumerate(r.array(data["weather_columns"], "weather_columns"))]
    nd = r.obj(data["network"], "network", _NET_REQUIRED, _NET_OPTIONAL)
    name = r.string(nd["name"], "network.name") if "name" in nd else "network"
    net = Network(name)
    if "meta" in nd:
        meta = nd["meta"]
        if not isinstance(meta, dict):
            raise r.err("network.meta", f"must be a JSON object, got {_tname(meta)}")
        _plain(meta, "network.meta")  # from_dict: refuse non-JSON Python objects
        if isinstance(getattr(net, "meta", None), dict):
            net.meta.update(meta)
        else:
            net.meta = dict(meta)
    b = _Builder(net, r, nd)
    b.build()
    if cols is not None:
        missing = [c for c in required_weather_columns(net) if c not in cols]
        if missing:
            raise r.err("weather_columns", f"omits {missing}, read by the network's "
                        "boundaries; add them")
    else:
        cols = required_weather_columns(net)
    return net, cols, int(data["schema_version"])


class _Builder:
    """Rebuild the network element by element through the public ``add_*`` methods."""

    def __init__(self, net: Network, r: _Reader, nd: dict):
        self.net, self.r, self.nd = net, r, nd
        self.schedules: dict[str, pd.Series] = {}
        self.signals: dict[tuple, Signal] = {}

    # ----------------------------------------------------------------- shared
    def call(self, where: str, fn, **kwargs):
        try:
            return fn(**kwargs)
        except (ValueError, TypeError) as exc:  # NetworkError, ScheduleError are ValueErrors
            raise self.r.err(where, str(exc)) from exc

    def items(self, key: str) -> list:
        return self.r.array(self.nd.get(key, []), f"network.{key}")

    def label(self, section: str, i: int, x, what: str) -> str:
        name = x.get("name") if isinstance(x, dict) else None
        return f"network.{section}[{i}]" + (f" ({what} {name!r})" if isinstance(name, str)
                                             else "")

    def schedule(self, x, where: str) -> pd.Series:
        if isinstance(x, dict) and "schedule" in x:
            self.r.obj(x, where, ("schedule",), ())
            key = self.r.string(x["schedule"], f"{where}.schedule")
            if key not in self.schedules:
                known = ", ".join(map(repr, self.schedules)) or "(none)"
                raise self.r.err(where, f"refers to schedule {key!r}, which is not in "
                                 f"network.schedules; known: {known}")
            return self.schedules[key]
        return _decode_schedule(self.r, x, where)

    def value(self, x, where: str, *, column_ok: bool = False):
        """A number, a schedule (inline or reference), or (boundaries) a column name."""
        if isinstance(x, dict):
            return self.schedule(x, where)
        if column_ok and isinstance(x, str):
            return self.r.string(x, where)
        if isinstance(x, bool) or not isinstance(x, (int, float)):
            allowed = "a weather column name, a number or a schedule" if column_ok else \
                "a number or a schedule"
            raise self.r.err(where, f"must be {allowed}, got {_tname(x)} {_short(x)}")
        return self.r.number(x, where)

    def point(self, x, where: str) -> str:
        name = self.r.string(x, where)
        if name not in self.net.nodes and name not in self.net.boundaries:
            known = ", ".join(map(repr, [*self.net.nodes, *self.net.boundaries])) or "(none)"
            raise self.r.err(where, f"refers to {name!r}, which is not a node or boundary of "
                             f"the model; known: {known}")
        return name

    # ----------------------------------------------------------------- build
    def build(self):
        r = self.r
        sch = self.nd.get("schedules", {})
        if not isinstance(sch, dict):
            raise r.err("network.schedules", f"must be a JSON object {{key: schedule}}, got "
                        f"{_tname(sch)}")
        for key, x in sch.items():
            self.schedules[key] = _decode_schedule(r, x, f"network.schedules[{key!r}]")
        for i, x in enumerate(self.items("nodes")):
            self.node(x, self.label("nodes", i, x, "node"))
        for i, x in enumerate(self.items("boundaries")):
            self.boundary(x, self.label("boundaries", i, x, "boundary"))
        for i, x in enumerate(self.items("links")):
            self.link(x, self.label("links", i, x, "link"))
        for i, x in enumerate(self.items("sources")):
            self.source(x, self.label("sources", i, x, "source"))
        for i, x in enumerate(self.items("thermostats")):
            self.thermostat(x, self.label("thermostats", i, x, "thermostat"))
        for i, x in enumerate(self.items("switches")):
            self.switch(x, self.label("switches", i, x, "switch"))

    def node(self, x, w):
        r = self.r
        r.obj(x, w, *_NODE_KEYS)
        self.call(w, self.net.add_node, name=r.string(x["name"], f"{w}.name"),
                  kind=r.string(x["kind"], f"{w}.kind"),
                  capacitance=r.number(x["capacitance"], f"{w}.capacitance"),
                  volume=r.opt_number(x, "volume", w), initial=r.opt_number(x, "initial", w))

    def boundary(self, x, w):
        r = self.r
        r.obj(x, w, *_BOUNDARY_KEYS)
        self.call(w, self.net.add_boundary, name=r.string(x["name"], f"{w}.name"),
                  temperature=self.value(x["temperature"], f"{w}.temperature", column_ok=True),
                  kind=r.string(x.get("kind", "air"), f"{w}.kind"))

    def link(self, x, w):
        r = self.r
        if not isinstance(x, dict):
            r.obj(x, w, (), ())
        kind = r.string(x.get("kind", "conductance"), f"{w}.kind")
        if kind not in _LINK_KEYS:
            raise r.err(f"{w}.kind", f"unknown link kind {kind!r}; allowed: "
                        f"{', '.join(_LINK_KEYS)}")
        r.obj(x, w, *_LINK_KEYS[kind])
        common = dict(a=self.point(x["a"], f"{w}.a"), b=self.point(x["b"], f"{w}.b"),
                      path=r.string(x["path"], f"{w}.path"),
                      name=r.string(x["name"], f"{w}.name") if "name" in x else None)
        if kind == "conductance":
            self.call(w, self.net.add_link, conductance=self.value(x["conductance"],
                                                                   f"{w}.conductance"),
                      **common)
        elif kind == "airflow":
            kw = {}
            for k in ("heat_recovery", "rho_cp"):
                if x.get(k) is not None:
                    kw[k] = r.number(x[k], f"{w}.{k}")
            self.call(w, self.net.add_airflow,
                      flow_m3h=self.value(x["flow_m3h"], f"{w}.flow_m3h"), **kw, **common)
        elif kind == "window":
            params = x["law_params"]
            if not isinstance(params, dict):
                raise r.err(f"{w}.law_params", "must be an object {parameter: number}")
            law_params = {k: (v if isinstance(v, bool) else r.number(v, f"{w}.law_params.{k}"))
                          for k, v in params.items()}
            kw = {}
            if x.get("wind") is not None:
                kw["wind"] = (r.string(x["wind"], f"{w}.wind") if isinstance(x["wind"], str)
                              else self.value(x["wind"], f"{w}.wind"))
            if x.get("rho_cp") is not None:
                kw["rho_cp"] = r.number(x["rho_cp"], f"{w}.rho_cp")
            self.call(w, self.net.add_window_flow, law=r.string(x["law"], f"{w}.law"),
                      **kw, **law_params, **common)
        else:
            kw = {}
            for k in ("emissivity_a", "emissivity_b", "view_factor", "reference_temperature"):
                if x.get(k) is not None:
                    kw[k] = r.number(x[k], f"{w}.{k}")
            self.call(w, self.net.add_radiation, area=r.number(x["area"], f"{w}.area"),
                      area_b=r.opt_number(x, "area_b", w), **kw, **common)

    def source(self, x, w):
        r = self.r
        r.obj(x, w, *_SOURCE_KEYS)
        node = self.point(x["node"], f"{w}.node")
        self.call(w, self.net.add_source, node=node,
                  power=self.value(x["power"], f"{w}.power"),
                  path=r.string(x["path"], f"{w}.path"),
                  name=r.string(x["name"], f"{w}.name") if "name" in x else None)

    def thermostat(self, x, w):
        r = self.r
        r.obj(x, w, *_THERMOSTAT_KEYS)
        sp = {}
        for k in ("heating_setpoint", "cooling_setpoint"):
            v = x.get(k)
            sp[k] = None if v is None else self.value(v, f"{w}.{k}")
        self.call(w, self.net.add_thermostat, node=self.point(x["node"], f"{w}.node"),
                  max_heating_w=r.opt_number(x, "max_heating_w", w, math.inf, inf_ok=True),
                  max_cooling_w=r.opt_number(x, "max_cooling_w", w, math.inf, inf_ok=True),
                  name=r.string(x["name"], f"{w}.name") if "name" in x else None, **sp)

    def factors(self, x, w, table, what):
        if x is None:
            return {}
        if not isinstance(x, dict):
            raise self.r.err(w, f"must be a JSON object {{{what} name: factor}}, got "
                             f"{_tname(x)} {_short(x)}")
        out = {}
        for k, v in x.items():
            if k not in table:
                known = ", ".join(map(repr, table)) or "(none)"
                raise self.r.err(w, f"refers to {what} {k!r}, which is not in the model; "
                                 f"known: {known}")
            if isinstance(v, list):
                if len(v) != 2:
                    raise self.r.err(f"{w}[{k!r}]", "must be a factor or [factor_off, "
                                     f"factor_on], got {_short(v)}")
                out[k] = tuple(self.r.number(f, f"{w}[{k!r}][{j}]") for j, f in enumerate(v))
            else:
                out[k] = self.r.number(v, f"{w}[{k!r}]")
        return out

    def ref(self, x, w):
        if isinstance(x, str):
            return self.point(x, w)
        if isinstance(x, dict):
            self.r.obj(x, w, ("signal",), ("name",))
            key = self.r.string(x["signal"], f"{w}.signal")
            name = self.r.string(x["name"], f"{w}.name", empty=True) if "name" in x else key
            series = self.schedule({"schedule": key}, w)
            if (key, name) not in self.signals:
                self.signals[(key, name)] = self.call(w, Signal, series=series, name=name)
            return self.signals[(key, name)]
        raise self.r.err(w, "must be a node/boundary name or {\"signal\": schedule key}, got "
                         f"{_tname(x)} {_short(x)}")

    def term(self, x, w) -> Condition:
        r = self.r
        if isinstance(x, dict) and "hours" in x:
            r.obj(x, w, ("hours",), ())
            span = r.array(x["hours"], f"{w}.hours")
            if len(span) != 2:
                raise r.err(f"{w}.hours", f"must be [start, end], got {_short(span)}")
            start = r.integer(span[0], f"{w}.hours[0]")
            end = r.integer(span[1], f"{w}.hours[1]")
            return self.call(w, hours, start=start, end=end)
        if isinstance(x, dict) and "a" not in x and "op" not in x:
            raise r.err(w, "a term is either {\"hours\": [start, end]} or {\"a\": ..., "
                        "\"op\": \">\" or \"<\", \"threshold\": ...}; got keys "
                        f"{', '.join(map(repr, x)) or '(none)'}")
        r.obj(x, w, *_TERM_KEYS)
        a = self.ref(x["a"], f"{w}.a")
        b = None if x.get("b") is None else self.ref(x["b"], f"{w}.b")
        op = r.string(x["op"], f"{w}.op")
        if op not in (">", "<"):
            raise r.err(f"{w}.op", f"must be \">\" or \"<\", got {op!r}")
        thr = r.number(x["threshold"], f"{w}.threshold")
        if b is None:
            return (above if op == ">" else below)(a, thr)
        return warmer(a, b, by=thr) if op == ">" else colder(a, b, by=-thr)

    def condition(self, x, w) -> Condition:
        r = self.r
        r.obj(x, w, ("any",), ())
        clauses = r.array(x["any"], f"{w}.any")
        if not clauses:
            raise r.err(f"{w}.any", "needs at least one clause (an array of terms)")
        conds = []
        for i, clause in enumerate(clauses):
            terms = r.array(clause, f"{w}.any[{i}]")
            if not terms:
                raise r.err(f"{w}.any[{i}]", "a clause needs at least one term")
            conds.append(reduce(lambda p, q: p & q,
                                [self.term(t, f"{w}.any[{i}][{j}]") for j, t in
                                 enumerate(terms)]))
        return reduce(lambda p, q: p | q, conds)

    def switch(self, x, w):
        r = self.r
        r.obj(x, w, *_SWITCH_KEYS)
        on = self.condition(x["on"], f"{w}.on")
        off = None if x.get("off") is None else self.condition(x["off"], f"{w}.off")
        self.call(w, self.net.add_switch, on=on, off=off,
                  links=self.factors(x.get("links"), f"{w}.links", self.net.links, "link"),
                  sources=self.factors(x.get("sources"), f"{w}.sources", self.net.sources,
                                       "source"),
                  initial=r.boolean(x.get("initial", False), f"{w}.initial"),
                  name=r.string(x["name"], f"{w}.name") if "name" in x else None)


# ================================================================================ files
@dataclass
class ModelFile:
    """A model file as read by :func:`read_model`.

    Attributes
    ----------
    network : Network
    weather_columns : list of str
        Weather columns the model needs (from the file, or those its boundaries read).
    schema_version : int
    sha256 : str
        SHA-256 of the file's bytes (hex).
    path : pathlib.Path or None
    """

    network: Network
    weather_columns: list[str] = field(default_factory=list)
    schema_version: int = SCHEMA_VERSION
    sha256: str = ""
    path: Path | None = None


def read_model(path, *, max_bytes: float = MAX_MODEL_BYTES) -> ModelFile:
    """Read a model file with its weather columns and checksum.

    Parameters
    ----------
    path : str or os.PathLike
    max_bytes : float, default :data:`MAX_MODEL_BYTES` (64 MiB)
        Larger files are refused before they are read [bytes].

    Returns
    -------
    ModelFile

    Raises
    ------
    FileNotFoundError, OSError
        If the file cannot be read.
    ModelFileError
        If its content is invalid (see the module docstring).
    """
    path = Path(path)
    r = _Reader(f"model file {str(path)!r}")
    _check_size(path.stat().st_size, max_bytes, r.source)
    raw = path.read_bytes()
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise r.err("file", f"is not UTF-8 text ({exc})") from exc
    net, cols, version = _read_text(text, r.source, max_bytes)
    return ModelFile(net, cols, version, hashlib.sha256(raw).hexdigest(), path)


def load_model(path, *, max_bytes: float = MAX_MODEL_BYTES) -> Network:
    """Read a network from a model file written by :func:`save_model` (or by hand).

    Parameters
    ----------
    path : str or os.PathLike
        The model file.
    max_bytes : float, default :data:`MAX_MODEL_BYTES` (64 MiB)
        Largest file size accepted [bytes]; larger files are refused before they are read.

    Returns
    -------
    Network

    Raises
    ------
    FileNotFoundError, OSError
        If the file cannot be read.
    ModelFileError
        If its content is invalid (see the module docstring).
    """
    return read_model(path, max_bytes=max_bytes).network
