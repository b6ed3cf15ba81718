"""The ``run`` and ``check`` sub-commands of the ``thermonet`` command line.

``thermonet run MODEL --weather FILE --out DIR``
    Simulate a model file against a weather CSV and write the results (temperatures, flows,
    energy balance by month and year, comfort metrics, summary) as CSV and/or Parquet, plus a
    ``provenance.json``.
``thermonet check MODEL``
    Validate a model file and print a summary: nodes by kind, links, U·A by heat path and the
    network's time constants.

:func:`add_batch_commands` registers both on an :mod:`argparse` sub-parser object;
``thermonet/cli.py`` builds the top-level parser and calls ``args.func(args)``.

Exit codes
----------
=== ===================================================================================
0   success
1   unexpected error (a bug, or the outputs could not be written)
2   bad usage: unknown option, missing file, unusable --step / --warmup-days / site /
    --tz, an --out folder that is not ours, locked by another run, or not a folder
3   invalid model file (:class:`~thermonet.errors.ModelFileError`, or a network the compiler
    refuses, e.g. a node without a path to a boundary)
4   invalid weather (:class:`~thermonet.errors.WeatherError`, or weather that does not fit the
    model's schedules, :class:`~thermonet.errors.ScheduleError`)
5   simulation failed (the solver raised)
130 interrupted (Ctrl-C): ``--out`` is left as it was, temporary files removed
=== ===================================================================================

Output folder
-------------
``run`` writes every table and ``provenance.json`` into a staging folder beside ``--out``
and swaps it in at the end (:class:`thermonet.io.files.OutputFolder`): after a failure, a
kill or Ctrl-C, ``--out`` holds the complete old set or the complete new one. A folder
holding files that no thermonet run wrote (no ``provenance.json`` of ours) is refused unless
``--overwrite``; with it the folder is replaced as a whole, and refused if it holds anything
but thermonet's own file names. A lock file ``.<name>.lock`` beside ``--out`` keeps a
second run out while one is writing (the error names its pid and start time).

Weather files
-------------
A CSV whose first column is the time stamp (ISO 8601, preferably with UTC offset, labels at
the END of each interval) and whose other columns carry pvlib names and thermonet units
(``temp_air`` [°C], ``ghi``/``dni``/``dhi`` [W/m²], ...), as written by
``weather_samples/generate.py``; lines starting with ``#`` are comments. The site comes from
``--latitude/--longitude/--elevation/--tz``, from a JSON sidecar next to the CSV with the
same stem (``fernhollow_sample.json``: ``{"latitude": 48.3, "longitude": 11.9,
"elevation": 480, "tz": "Etc/GMT-1", "name": "..."}``) or from the file's own comment lines
when they state it as ``(48.3N 11.9E 480 m, UTC+1)`` (:func:`site_from_header`, as the sample
files do); options override the sidecar, the sidecar overrides the header. A model that reads
no irradiance column (``ghi``, ``dni``, ``dhi``: nothing in it uses the sun at run time) needs
no site at all; its weather is then checked without the irradiance closure test. The
frame is checked with :func:`thermonet.weather.from_dataframe`; the columns the model reads
are required, except two derived boundaries that typical-year files do not carry: when the
model reads ``temp_sky`` or ``temp_ground_<depth>m`` (as models made by
:func:`thermonet.builders.add_room` do) and the file lacks them, they are computed with
:func:`thermonet.weather.add_sky_temperature` (Berdahl–Martin, needs ``temp_dew`` or
``relative_humidity``) and :func:`thermonet.weather.add_ground_temperature` (Kusuda–Achenbach
with the annual cycle fitted to ``temp_air``, needs a whole year); the progress messages and
``provenance.json`` (weather ``source``) say so.

Progress
--------
``run`` reports each stage on stderr with the elapsed time, and while the solver or the
writers are busy a line ``still simulating …`` every ``--progress-every`` seconds (default
10), so a long run is visibly alive. ``--quiet`` silences both.
"""

from __future__ import annotations

import argparse
import contextlib
import importlib.util
import json
import math
import re
import shlex
import sys
import threading
import time
from pathlib import Path

import numpy as np
import pandas as pd

from thermonet import comfort
from thermonet.errors import (
    ModelFileError,
    NetworkError,
    OutputFolderError,
    ScheduleError,
    ThermonetError,
    TimeZoneError,
    WeatherError,
)
from thermonet.io.files import OutputFolder
from thermonet.io.models import read_model
from thermonet.io.provenance import PROVENANCE_FILE, provenance_record, write_provenance

__all__ = [
    "EXIT_OK",
    "EXIT_ERROR",
    "EXIT_USAGE",
    "EXIT_MODEL",
    "EXIT_WEATHER",
    "EXIT_SIMULATION",
    "EXIT_INTERRUPTED",
    "add_batch_commands",
    "run_command",
    "check_command",
    "read_weather_csv",
    "site_from_header",
    "SiteMissingError",
    "model_summary",
    "format_model_summary",
    "comfort_table",
    "add_derived_columns",
    "OUTPUT_TABLES",
    "PROGRESS_EVERY",
]

EXIT_OK = 0
EXIT_ERROR = 1
EXIT_USAGE = 2
EXIT_MODEL = 3
EXIT_WEATHER = 4
EXIT_SIMULATION = 5
#: Exit code after Ctrl-C (128 + SIGINT, the shell's convention).
EXIT_INTERRUPTED = 130

EXIT_HELP = """exit codes:
  0  success
  1  unexpected error (a bug, or the outputs could not be written)
  2  bad usage (unknown option, missing file, unusable --step/--warmup-days/site)
  3  invalid model file (or a network the compiler refuses)
  4  invalid weather (or weather that does not fit the model's schedules)
  5  simulation failed
  130 interrupted (Ctrl-C); the --out folder is left as it was
"""

#: Comfort thresholds [°C]: hours above 25/26/28 °C (25 °C: very-low-energy overheating
#: frequency, docs/references.md §5.5 [C]; 26 and 28 °C: common practice, no source).
COMFORT_THRESHOLDS = (25.0, 26.0, 28.0)

#: The tables ``thermonet run`` writes: name -> (description, unit).
OUTPUT_TABLES = {
    "temperatures": ("node and boundary temperatures at the end of each step", "°C"),
    "temperatures_mean": ("node and boundary temperatures, means over each step", "°C"),
    "flows": ("link flows, step means, positive from the link's node a to node b", "W"),
    "sources": ("source powers as applied (after switch factors), step means", "W"),
    "thermostats": ("heating and cooling power per thermostat (both ≥ 0), step means", "W"),
    "balance_monthly": ("energy balance of all free nodes by heat path per month "
                        "(positive into the building; storage = −increase of stored heat)",
                        "kWh"),
    "balance_annual": ("energy balance of all free nodes by heat path per year", "kWh"),
    "balance_rooms": ("energy balance of each room the builders recorded (rows, named by the "
                      "room records) by heat path over the run; the numbers of a study's "
                      "balance[<room>]:<path> columns; written when the model has rooms",
                      "kWh"),
    "comfort": ("per air node: hours above 25/26/28 °C [h], degree-hours above 26 °C [K·h], "
                "overheating frequency above 25 °C [-], max and mean [°C], from step-mean "
                "air temperatures", "mixed, see column names"),
    "summary": ("heating/cooling energy and peaks, worst balance residual, steps", "see unit"),
}

_SITE_KEYS = ("latitude", "longitude", "elevation", "tz", "name")


class _Fail(Exception):
    """Stop a command with an exit code and a message."""

    def __init__(self, code: int, message: str):
        super().__init__(message)
        self.code = code


class SiteMissingError(WeatherError):
    """The weather file's site (latitude, longitude) was given neither as option nor sidecar."""


#: Default interval [s] of the "still ..." progress lines of ``thermonet run``.
PROGRESS_EVERY = 10.0


class _Progress:
    """Progress messages on stderr with the elapsed time."""

    def __init__(self, command: str, quiet: bool, every: float = PROGRESS_EVERY):
        self.command, self.quiet, self.t0 = command, quiet, time.perf_counter()
        self.every = every

    def __call__(self, msg: str) -> None:
        if not self.quiet:
            print(f"thermonet {self.command}: {msg} [{time.perf_counter() - self.t0:.1f} s]",
                  file=sys.stderr, flush=True)

    @contextlib.contextmanager
    def busy(self, what: str):
        """While the body runs, print ``still <what> …`` every ``self.every`` seconds."""
        if self.quiet or not self.every > 0:
            yield
            return
        stop = threading.Event()

        def beat():
            while not stop.wait(self.every):
                self(f"still {what} …")

        thread = threading.Thread(target=beat, name="thermonet-progress", daemon=True)
        thread.start()
        try:
            yield
        finally:
            stop.set()
            thread.join()


def _error(command: str, fail: _Fail) -> int:
    kind = {EXIT_USAGE: "usage error", EXIT_MODEL: "invalid model", EXIT_WEATHER:
            "invalid weather", EXIT_SIMULATION: "simulation failed"}.get(fail.code, "error")
    print(f"thermonet {command}: {kind}: {fail}", file=sys.stderr, flush=True)
    return fail.code


# ============================================================================= parsing
def _have_pyarrow() -> bool:
    return importlib.util.find_spec("pyarrow") is not None


def add_batch_commands(subparsers) -> None:
    """Register the ``run`` and ``check`` sub-commands.

    Parameters
    ----------
    subparsers : argparse._SubParsersAction
        The object returned by ``parser.add_subparsers()``. Each sub-command sets
        ``func=handler`` with ``handler(args) -> int`` (the exit code).
    """
    fmt = argparse.RawDescriptionHelpFormatter
    run = subparsers.add_parser(
        "run", help="simulate a model file against a weather CSV and write the results",
        description="Simulate MODEL (a thermonet model file, JSON) against the weather CSV "
                    "and write temperatures, flows, the energy balance by month and year, "
                    "comfort metrics, a summary and provenance.json into DIR.",
        epilog=EXIT_HELP, formatter_class=fmt)
    run.add_argument("model", metavar="MODEL", help="model file (JSON) written by "
                     "thermonet.io.save_model")
    run.add_argument("--weather", required=True, metavar="FILE",
                     help="weather CSV: time stamp column first (interval ENDING labels), "
                          "pvlib column names; '#' lines are comments")
    run.add_argument("--out", required=True, metavar="DIR", help="result folder (created)")
    default_format = "both" if _have_pyarrow() else "csv"
    run.add_argument("--format", choices=("csv", "parquet", "both"), default=default_format,
                     help=f"output format (default here: {default_format}; Parquet needs "
                          "pyarrow)")
    run.add_argument("--step", default=None, metavar="STEP",
                     help="simulation step, e.g. 15min (default: the weather's); must divide "
                          "the weather's step")
    run.add_argument("--warmup-days", type=float, default=14.0, metavar="DAYS",
                     help="lead-in period run before the reported one [days] (default 14)")
    run.add_argument("--method", choices=("auto", "exact", "sparse"), default="auto",
                     help="solver (default auto)")
    _site_options(run)
    run.add_argument("--overwrite", action="store_true",
                     help="replace DIR as a whole when it holds files already (an earlier "
                          "run's tables in every format, or files named like them); a DIR "
                          "holding other files is still refused")
    run.add_argument("-q", "--quiet", action="store_true", help="no progress messages")
    run.add_argument("--progress-every", type=float, default=PROGRESS_EVERY, metavar="SECONDS",
                     help="while simulating or writing, print a 'still ...' line every "
                          f"SECONDS (default {PROGRESS_EVERY:g}; 0 = only stage messages)")
    run.set_defaults(func=run_command)

    check = subparsers.add_parser(
        "check", help="validate a model file and print a summary",
        description="Validate MODEL and print nodes by kind, links, U·A by heat path "
                    "[W/K] and time constants [h]. With --weather, also check that the "
                    "weather file is valid for the model.",
        epilog=EXIT_HELP, formatter_class=fmt)
    check.add_argument("model", metavar="MODEL", help="model file (JSON)")
    check.add_argument("--weather", default=None, metavar="FILE",
                       help="also validate this weather CSV against the model")
    _site_options(check)
    check.add_argument("--json", action="store_true", help="print the summary as JSON")
    check.set_defaults(func=check_command)


def _site_options(p) -> None:
    p.add_argument("--latitude", type=float, default=None, help="site latitude [°N]")
    p.add_argument("--longitude", type=float, default=None, help="site longitude [°E]")
    p.add_argument("--elevation", type=float, default=None, help="site elevation [m]")
    p.add_argument("--tz", default=None, help="time zone of the weather index, e.g. "
                   "Etc/GMT-1 (needed when the time stamps have no UTC offset)")
    p.add_argument("--label", choices=("end", "start"), default="end",
                   help="whether the CSV's time stamps mark interval ends (default) or starts")
    p.add_argument("--no-closure-check", action="store_true",
                   help="skip the ghi/dni/dhi closure test of thermonet.weather.validate")


# ============================================================================= weather
def _sidecar(path: Path) -> dict:
    side = path.with_suffix(".json")
    if not side.is_file():
        return {}
    try:
        data = json.loads(side.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise WeatherError(f"site sidecar {side}: cannot be read as JSON ({exc})") from exc
    if not isinstance(data, dict):
        raise WeatherError(f"site sidecar {side}: must be a JSON object with keys "
                           f"{', '.join(_SITE_KEYS)}")
    for k in data:
        if k not in _SITE_KEYS:
            raise WeatherError(f"site sidecar {side}: unknown key {k!r}; allowed keys: "
                               f"{', '.join(_SITE_KEYS)}")
    return data


#: Site in a comment line: "(48.3N 11.9E 480 m, UTC+1)"; elevation and offset optional.
_HEADER_SITE = re.compile(
    r"(\d+(?:\.\d+)?)\s*([NS])[\s,]+(\d+(?:\.\d+)?)\s*([EW])"
    r"(?:[\s,]+(-?\d+(?:\.\d+)?)\s*m\b)?(?:[\s,]+UTC\s*([+-]\d{1,2}))?")

#: Irradiance columns: a model that reads one of them uses the sun (and its site).
SOLAR_COLUMNS = ("ghi", "dni", "dhi")


def site_from_header(path) -> dict:
    """The site stated in the leading ``#`` comment lines of a weather CSV, if any.

    Parameters
    ----------
    path : str or os.PathLike
        The weather CSV.

    Returns
    -------
    dict
        ``latitude`` [°N], ``longitude`` [°E] and, when stated, ``elevation`` [m] and ``tz``
        (``"UTC+1"`` → ``"Etc/GMT-1"``, the fixed-offset zone); empty when no comment line
        has the pattern ``48.3N 11.9E 480 m, UTC+1`` (S and W give negative values).
    """
    try:
        with open(path, encoding="utf-8") as fh:
            lines = []
            for line in fh:
                if not line.startswith("#"):
                    break
                lines.append(line)
    except (OSError, UnicodeDecodeError):
        return {}
    for line in lines:
        m = _HEADER_SITE.search(line)
        if m is None:
            continue
        lat = float(m.group(1)) * (-1.0 if m.group(2) == "S" else 1.0)
        lon = float(m.group(3)) * (-1.0 if m.group(4) == "W" else 1.0)
        site = {"latitude": lat, "longitude": lon}
        if m.group(5) is not None:
            site["elevation"] = float(m.group(5))
        if m.group(6) is not None:
            off = int(m.group(6))
            # POSIX-style zone names invert the sign: UTC+1 is "Etc/GMT-1"
            site["tz"] = "UTC" if off == 0 else f"Etc/GMT{-off:+d}"
        return site
    return {}


def read_weather_csv(path, *, latitude=None, longitude=None, elevation=None, tz=None,
                     name=None, label: str = "end", required=(),
                     closure_check: bool = True, needs_site: bool = True) -> pd.DataFrame:
    """Read a weather CSV into a validated thermonet weather frame.

    Parameters
    ----------
    path : str or os.PathLike
        CSV with the time stamp in the first column; ``#`` lines are comments.
    latitude, longitude : float, optional
        Site [°N, °E]; default from the JSON sidecar ``<stem>.json``, else from the file's
        comment lines (:func:`site_from_header`).
    elevation : float, optional
        Site elevation [m]; default from the sidecar, else 0.
    tz : str, optional
        Time zone: naive stamps are localised to it, aware ones converted; default from the
        sidecar. Stamps with different UTC offsets (daylight saving) are read as instants.
    name : str, optional
        Site name.
    label : {"end", "start"}, default "end"
        Whether the stamps mark interval ends (thermonet's convention) or starts.
    required : sequence of str
        Columns that must be present (those the model reads).
    closure_check : bool, default True
        Apply the ghi/dni/dhi closure test (only when all three columns are present).
    needs_site : bool, default True
        False when nothing that will use the weather needs the sun's position (a model
        reading none of ``ghi``, ``dni``, ``dhi``): an unknown site is then accepted, the
        frame carries no ``attrs["site"]`` and the closure test (which needs the sun) is
        skipped.

    Returns
    -------
    pandas.DataFrame
        As :func:`thermonet.weather.from_dataframe` returns it.

    Raises
    ------
    OSError
        If the file cannot be read.
    SiteMissingError
        If neither the options, a sidecar nor the header give latitude and longitude (and
        ``needs_site`` is True).
    WeatherError
        Unparsable time stamps or numbers, or any check of
        :func:`thermonet.weather.validate`.
    """
    from thermonet.weather import CLOSURE_LIMITS, from_dataframe

    path = Path(path)
    site = {**site_from_header(path), **_sidecar(path)}
    for key, value in (("latitude", latitude), ("longitude", longitude),
                       ("elevation", elevation), ("tz", tz), ("name", name)):
        if value is not None:
            site[key] = value
    known = "latitude" in site and "longitude" in site
    if not known and needs_site:
        raise SiteMissingError(f"weather {path.name}: the site is unknown and the model uses "
                               "the sun (it reads irradiance); pass --latitude and --longitude "
                               f"(or write {path.with_suffix('.json').name} with latitude, "
                               "longitude, elevation, tz, or state it in a comment line as "
                               "'(48.3N 11.9E 480 m, UTC+1)')")
    if not path.is_file():
        raise FileNotFoundError(f"weather file {path} does not exist")
    try:
        raw = pd.read_csv(path, comment="#", index_col=0)
    except (ValueError, pd.errors.ParserError, UnicodeDecodeError) as exc:
        raise WeatherError(f"weather {path.name}: cannot be read as CSV ({exc})") from exc
    if raw.empty:
        raise WeatherError(f"weather {path.name}: no data rows")
    labels = raw.index.astype(str)
    try:
        index = pd.DatetimeIndex(pd.to_datetime(labels, format="ISO8601"))
    except (ValueError, TypeError):
        try:
            index = pd.DatetimeIndex(pd.to_datetime(labels, format="ISO8601", utc=True))
        except (ValueError, TypeError) as exc:
            bad = next((s for s in labels if pd.isna(pd.to_datetime(
                s, format="ISO8601", errors="coerce"))), labels[0])
            raise WeatherError(f"weather {path.name}: time stamp {bad!r} in the first "
                               "column is not ISO 8601 (e.g. 2025-01-01T01:00+0100)") from exc
    if index.tz is None and site.get("tz") is None:
        raise WeatherError(f"weather {path.name}: time stamps have no UTC offset; pass --tz "
                           "(e.g. Etc/GMT-1 for fixed UTC+1) or add \"tz\" to the sidecar")
    raw.index = index
    for col in raw.columns:
        if not pd.api.types.is_numeric_dtype(raw[col]):
            raise WeatherError(f"weather {path.name}: column {col!r} is not numeric (first "
                               f"value {raw[col].iloc[0]!r}); fix the file")
    df = raw.astype(float)
    closure = CLOSURE_LIMITS if closure_check and {"ghi", "dni", "dhi"} <= set(df.columns) \
        else None
    if not known:
        return _weather_without_site(df, path, site.get("tz"), label, required)
    try:
        return from_dataframe(
            df, latitude=site["latitude"], longitude=site["longitude"],
            elevation=site.get("elevation", 0.0), tz=site.get("tz"),
            name=str(site.get("name", "")), source=f"CSV file {path.name}", label=label,
            required=list(required), closure_limits=closure)
    except ScheduleError as exc:  # index problems reported by a shared helper
        raise WeatherError(str(exc)) from exc


def _weather_without_site(df, path: Path, tz, label: str, required) -> pd.DataFrame:
    """Validate a frame whose site is unknown (not needed): no closure test, no site."""
    from thermonet.weather import validate

    if tz is not None:
        df = df.tz_localize(tz) if df.index.tz is None else df.tz_convert(tz)
    df.attrs = {"source": f"CSV file {path.name}; site unknown (not needed: the model reads "
                          "no irradiance)"}
    try:
        out = validate(df, list(required), closure_limits=None)
    except ScheduleError as exc:
        raise WeatherError(str(exc)) from exc
    if label == "start":
        out.index = out.index + (out.index[1] - out.index[0])
        out.attrs["source"] += "; labels moved from interval start to interval end"
    return out


_GROUND_COLUMN = re.compile(r"temp_ground_(\d+(?:\.\d+)?)m")


def _derivable(column: str) -> bool:
    return column == "temp_sky" or _GROUND_COLUMN.fullmatch(column) is not None


def add_derived_columns(weather: pd.DataFrame, columns) -> tuple[pd.DataFrame, list[str]]:
    """Add the derived boundaries ``temp_sky`` and ``temp_ground_<depth>m`` when asked for.

    Parameters
    ----------
    weather : pandas.DataFrame
        Validated weather frame (:func:`read_weather_csv`).
    columns : sequence of str
        Columns the model reads; those present are left alone.

    Returns
    -------
    (pandas.DataFrame, list of str)
        The frame with the added columns (a copy if any was added; ``attrs["source"]``
        extended) and the names added.

    Raises
    ------
    WeatherError
        If a derived column cannot be computed (e.g. no dew point or humidity for the sky
        temperature, less than 360 days for the ground temperature's annual cycle).

    Notes
    -----
    ``temp_sky``: :func:`thermonet.weather.add_sky_temperature` (Berdahl & Martin 1984, with
    the cloud cover when present). ``temp_ground_<d>m``: :func:`thermonet.weather.
    add_ground_temperature` at depth d [m] (Kusuda & Achenbach 1965, annual cycle fitted to
    ``temp_air``, default soil diffusivity).
    """
    from thermonet.weather import add_ground_temperature, add_sky_temperature

    out, added = weather, []
    for col in columns:
        if col in out.columns:
            continue
        if col == "temp_sky":
            out = add_sky_temperature(out)
        else:
            m = _GROUND_COLUMN.fullmatch(col)
            if m is None:
                continue
            before = set(out.columns)
            out = add_ground_temperature(out, depth=float(m.group(1)))
            made = (set(out.columns) - before).pop()
            out = out.rename(columns={made: col})
        added.append(col)
    if added:
        src = out.attrs.get("source", "")
        note = f"derived by thermonet: {', '.join(added)}"
        out.attrs["source"] = f"{src}; {note}" if src else note
    return out, added


def _weather_from_args(args, required, say=None) -> pd.DataFrame:
    try:
        weather = read_weather_csv(
            args.weather, latitude=args.latitude, longitude=args.longitude,
            elevation=args.elevation, tz=args.tz, label=args.label,
            required=[c for c in required if not _derivable(c)],
            closure_check=not args.no_closure_check,
            needs_site=any(c in SOLAR_COLUMNS for c in required))
        weather, added = add_derived_columns(weather, required)
        if added and say is not None:
            say(f"derived weather column(s) {', '.join(added)} (sky: Berdahl–Martin; "
                "ground: Kusuda–Achenbach)")
        return weather
    except OSError as exc:
        raise _Fail(EXIT_USAGE, f"cannot read weather file: {exc}") from exc
    except (SiteMissingError, TimeZoneError) as exc:
        raise _Fail(EXIT_USAGE, str(exc)) from exc
    except (WeatherError, ScheduleError) as exc:
        raise _Fail(EXIT_WEATHER, str(exc)) from exc


def _model_from_args(args):
    try:
        return read_model(args.model)
    except ModelFileError as exc:
        raise _Fail(EXIT_MODEL, str(exc)) from exc
    except OSError as exc:
        raise _Fail(EXIT_USAGE, f"cannot read model file: {exc}") from exc


# ============================================================================= check
def _series_index(net):
    """Index of the first Series in the model (its own time axis), or None."""
    from thermonet.controls import Signal

    cands = [b.temperature for b in net.boundaries.values()]
    for l in net.links.values():
        cands += [l.conductance, l.params.get("flow_m3h")]
    cands += [s.power for s in net.sources.values()]
    for t in net.thermostats.values():
        cands += [t.heating_setpoint, t.cooling_setpoint]
    for s in net.switches.values():
        for cond in (s.on, s.off):
            if cond is not None:
                cands += [r.series for t in cond.terms() for r in (t.a, t.b)
                          if isinstance(r, Signal)]
    for c in cands:
        if isinstance(c, pd.Series):
            return c.index
    return None


def _probe_weather(net, columns) -> pd.DataFrame:
    """A weather frame on the model's own time axis (2 days hourly if none), columns = 0."""
    index = _series_index(net)
    if index is None:
        index = pd.date_range("2025-01-01 01:00", periods=48, freq="h", tz="UTC")
    return pd.DataFrame({c: np.zeros(len(index)) for c in columns}, index=index)


def _compile(net, weather, step=None):
    from thermonet.engine.compile import compile_network

    return compile_network(net, weather, step=step)


def model_summary(net, weather: pd.DataFrame | None = None, *, max_eigen_nodes: int = 3000
                  ) -> dict:
    """Structure, U·A by heat path and time constants of a network.

    Parameters
    ----------
    net : Network
    weather : pandas.DataFrame, optional
        Time axis to compile against (default: the model's own schedules' axis, or two days
        hourly with the weather columns set to 0 °C); used for the whole-network checks
        (connectivity) and the eigen time constants.
    max_eigen_nodes : int, default 3000
        Eigen time constants are skipped above this number of capacitive nodes.

    Returns
    -------
    dict
        ``nodes_by_kind`` {kind: {"count", "capacitance_j_per_k"}}, ``boundaries_by_kind``,
        ``links_by_kind``, ``ua_by_path_w_per_k`` {path: Σ G [W/K]}, ``node_time_constants_h``
        {node: C/ΣG [h]} (0 for massless nodes), ``eigen_time_constants_h``
        {"slowest", "fastest", "count"} or None, and counts of sources, thermostats,
        switches.

    Raises
    ------
    NetworkError, WeatherError, ScheduleError
        If the network cannot be compiled (e.g. a node without a path to a boundary).

    Notes
    -----
    Scheduled conductances count with their mean over the schedule; switch factors are not
    applied. U·A by path is Σ G of the links labelled with that path [W/K] (internal links
    included under their own path). The node time constant is τ_i = C_i / Σ_j G_ij [s], the
    time constant node i would have if all its neighbours were held fixed. The eigen time
    constants are τ_k = 1/λ_k of the generalised eigenproblem K v = λ C v of the network with
    massless nodes eliminated (Schur complement), at the first step's scheduled conductances
    with every switch off; for a single node linked to a boundary both equal C/G (the RC time
    constant, e.g. Incropera et al., Fundamentals of Heat and Mass Transfer, 6th ed., 2007,
    §5.2 lumped capacitance).
    """
    from thermonet.engine.discretise import time_constants
    from thermonet.io.models import required_weather_columns

    def mean(v):
        return float(np.mean(np.asarray(v, dtype=float)))

    nodes_by_kind: dict = {}
    for n in net.nodes.values():
        d = nodes_by_kind.setdefault(n.kind, {"count": 0, "capacitance_j_per_k": 0.0})
        d["count"] += 1
        d["capacitance_j_per_k"] += float(n.capacitance)
    boundaries_by_kind: dict = {}
    for b in net.boundaries.values():
        boundaries_by_kind[b.kind] = boundaries_by_kind.get(b.kind, 0) + 1
    links_by_kind: dict = {}
    ua: dict = {}
    gsum = dict.fromkeys(net.nodes, 0.0)
    for l in net.links.values():
        links_by_kind[l.kind] = links_by_kind.get(l.kind, 0) + 1
        g = mean(l.conductance)
        ua[l.path] = ua.get(l.path, 0.0) + g
        for end in (l.a, l.b):
            if end in gsum:
                gsum[end] += g
    tau = {}
    for name, n in net.nodes.items():
        if n.capacitance == 0:
            tau[name] = 0.0
        else:
            tau[name] = n.capacitance / gsum[name] / 3600.0 if gsum[name] > 0 else math.inf
    if weather is None:
        weather = _probe_weather(net, required_weather_columns(net))
    comp = _compile(net, weather)
    eigen = None
    if 0 < comp.nc <= max_eigen_nodes:
        g = comp.G_states[comp.state_id(int(comp.sched_of_step[0]), 0)]
        tau_s = time_constants(comp.st, comp.C, g)
        eigen = {"slowest": float(tau_s.max() / 3600.0),
                 "fastest": float(tau_s.min() / 3600.0), "count": int(tau_s.size)}
    return {
        "name": net.name,
        "nodes": len(net.nodes), "boundaries": len(net.boundaries), "links": len(net.links),
        "sources": len(net.sources), "thermostats": len(net.thermostats),
        "switches": len(net.switches),
        "nodes_by_kind": nodes_by_kind, "boundaries_by_kind": boundaries_by_kind,
        "links_by_kind": links_by_kind, "ua_by_path_w_per_k": ua,
        "node_time_constants_h": tau, "eigen_time_constants_h": eigen,
        "weather_columns": required_weather_columns(net),
    }


def format_model_summary(s: dict, *, max_nodes: int = 30) -> str:
    """The text ``thermonet check`` prints for a :func:`model_summary`.

    Parameters
    ----------
    s : dict
        What :func:`model_summary` returned.
    max_nodes : int, default 30
        Largest number of nodes listed by name.
    """
    lines = [f"network {s['name']!r}: {s['nodes']} nodes, {s['boundaries']} boundaries, "
             f"{s['links']} links, {s['sources']} sources, {s['thermostats']} thermostats, "
             f"{s['switches']} switches",
             f"weather columns read: {', '.join(s['weather_columns']) or '(none)'}",
             "nodes by kind:"]
    for kind, d in s["nodes_by_kind"].items():
        lines.append(f"  {kind:<10} {d['count']:>6}   C = {d['capacitance_j_per_k']:.4g} J/K")
    lines.append("boundaries by kind: " + ", ".join(
        f"{k} {v}" for k, v in s["boundaries_by_kind"].items()))
    lines.append("links by kind: " + (", ".join(
        f"{k} {v}" for k, v in s["links_by_kind"].items()) or "(none)"))
    lines.append("U·A by path [W/K] (Σ conductance of the links of each path; schedules at "
                 "their mean, switches not applied):")
    for path, g in s["ua_by_path_w_per_k"].items():
        lines.append(f"  {path:<20} {g:12.4g}")
    tau = s["node_time_constants_h"]
    lines.append("node time constants C/ΣG [h] (0 = massless):")
    items = sorted(tau.items(), key=lambda kv: -kv[1])
    if len(items) > max_nodes:
        half = max_nodes // 2
        shown = items[:half] + [("…", None)] + items[-half:]
    else:
        shown = items
    for name, t in shown:
        lines.append(f"  {name}" if t is None else f"  {name:<20} {t:12.4g}")
    e = s["eigen_time_constants_h"]
    if e is None:
        lines.append("eigen time constants: not computed (no capacitive node, or too many)")
    else:
        lines.append(f"eigen time constants [h] ({e['count']} modes): slowest "
                     f"{e['slowest']:.4g}, fastest {e['fastest']:.4g}")
    return "\n".join(lines)


def check_command(args) -> int:
    """Handler of ``thermonet check``: validate a model file, print its summary.

    Parameters
    ----------
    args : argparse.Namespace
        Parsed options of ``thermonet check`` (model, optional weather and site).
    """
    try:
        mf = _model_from_args(args)
        weather = None
        if args.weather is not None:
            weather = _weather_from_args(args, mf.weather_columns)
        try:
            summary = model_summary(mf.network, weather)
        except NetworkError as exc:
            raise _Fail(EXIT_MODEL, str(exc)) from exc
        except (WeatherError, ScheduleError) as exc:
            code = EXIT_WEATHER if weather is not None else EXIT_MODEL
            raise _Fail(code, str(exc)) from exc
    except _Fail as fail:
        return _error("check", fail)
    summary["model"] = {"path": str(mf.path), "sha256": mf.sha256,
                        "schema_version": mf.schema_version}
    if args.json:
        print(json.dumps(summary, indent=2, ensure_ascii=False, default=str))
    else:
        print(f"model file {mf.path} (schema_version {mf.schema_version}, sha256 "
              f"{mf.sha256[:16]}…): OK")
        print(format_model_summary(summary))
    return EXIT_OK


# =============================================================================== run
def comfort_table(res, net) -> pd.DataFrame:
    """Comfort metrics of every air node from its step-mean temperature.

    Columns: ``hours_above_25_h``, ``hours_above_26_h``, ``hours_above_28_h`` [h],
    ``degree_hours_above_26_kelvin_hours`` [K·h], ``overheating_frequency_25`` [-] (share of all
    hours above 25 °C, the very-low-energy criterion of
    :func:`thermonet.comfort.overheating_frequency`), ``max_c`` and ``mean_c`` [°C]. One row
    per node of kind ``air``.

    Parameters
    ----------
    res : thermonet.Results
        The simulation.
    net : Network
        Its network (the air nodes are read from it).
    """
    rows = {}
    tm = res.mean_temperatures
    for name, node in net.nodes.items():
        if node.kind != "air":
            continue
        t = tm[name]
        row = {f"hours_above_{th:g}_h": comfort.hours_above(t, th) for th in COMFORT_THRESHOLDS}
        row["degree_hours_above_26_kelvin_hours"] = comfort.degree_hours_above(t, 26.0)
        row["overheating_frequency_25"] = comfort.overheating_frequency(t, 25.0)
        row["max_c"] = float(t.max())
        row["mean_c"] = float(t.mean())
        rows[name] = row
    cols = [f"hours_above_{th:g}_h" for th in COMFORT_THRESHOLDS] + [
        "degree_hours_above_26_kelvin_hours", "overheating_frequency_25", "max_c", "mean_c"]
    out = pd.DataFrame.from_dict(rows, orient="index", columns=cols)
    out.index.name = "node"
    return out


def room_balance_table(res, net) -> pd.DataFrame | None:
    """Balance of each room of the builders' records by heat path over the run [kWh].

    Parameters
    ----------
    res : thermonet.Results
        The run.
    net : thermonet.Network
        Its network (rooms from :func:`thermonet.builders.rooms`).

    Returns
    -------
    pandas.DataFrame or None
        One row per room (index ``room``), one column per path plus ``heating``,
        ``cooling``, ``storage`` and ``residual``; None when no room is recorded.
    """
    from thermonet.builders import rooms

    recorded = rooms(net)
    if not recorded:
        return None
    out = pd.DataFrame({name: res.balance(room.nodes).sum() for name, room in
                        recorded.items()}).T.fillna(0.0)
    out.index.name = "room"
    return out


def _tables(res, net) -> dict[str, pd.DataFrame]:
    nodes = list(net.nodes)
    th = pd.concat([res.heating_by_thermostat.add_suffix(" heating_w"),
                    res.cooling_by_thermostat.add_suffix(" cooling_w")], axis=1)
    summ = res.summary()
    summary = pd.DataFrame({
        "value": [float(summ[k]) for k in summ.index]
        + [res.worst_residual(), float(res.info["steps"]), float(res.info["step_s"]),
           float(res.info["warmup_steps"])],
        "unit": ["kWh" if k.endswith("_kwh") else "W" for k in summ.index]
        + ["-", "-", "s", "-"],
    }, index=pd.Index([*summ.index, "worst_balance_residual", "steps", "step_s",
                       "warmup_steps"], name="quantity"))
    tables = {
        "temperatures": res.temperatures,
        "temperatures_mean": res.mean_temperatures,
        "flows": res.flows,
        "sources": res.sources,
        "thermostats": th,
        "balance_monthly": res.balance(nodes, freq="MS"),
        "balance_annual": res.balance(nodes, freq="YS"),
        "comfort": comfort_table(res, net),
        "summary": summary,
    }
    rooms_table = room_balance_table(res, net)
    if rooms_table is not None:
        tables["balance_rooms"] = rooms_table
    for key in ("temperatures", "temperatures_mean", "flows", "sources", "thermostats"):
        tables[key] = tables[key].rename_axis("time")
    for key in ("balance_monthly", "balance_annual"):
        tables[key] = tables[key].rename_axis("period_start")
    return tables


def _write_tables(tables: dict, folder: Path, fmt: str) -> list[Path]:
    """Write every table into ``folder`` (the private staging folder of the run)."""
    written = []
    for name, df in tables.items():
        if fmt in ("csv", "both"):
            p = folder / f"{name}.csv"
            df.to_csv(p)
            written.append(p)
        if fmt in ("parquet", "both"):
            p = folder / f"{name}.parquet"
            df.to_parquet(p)
            written.append(p)
    return written


def _command_line(args) -> list[str]:
    """The equivalent ``thermonet run`` command of the parsed options."""
    cmd = ["thermonet", "run", str(args.model), "--weather", str(args.weather), "--out",
           str(args.out), "--format", args.format, "--warmup-days", repr(args.warmup_days),
           "--method", args.method, "--label", args.label]
    if args.step is not None:
        cmd += ["--step", str(args.step)]
    for opt in ("latitude", "longitude", "elevation", "tz"):
        v = getattr(args, opt)
        if v is not None:
            cmd += [f"--{opt}", str(v)]
    if args.no_closure_check:
        cmd.append("--no-closure-check")
    if args.overwrite:
        cmd.append("--overwrite")
    return cmd


def _check_options(args, say) -> pd.Timedelta | None:
    """Options of ``run`` that need no file: format, progress, warm-up, step."""
    if args.format in ("parquet", "both") and not _have_pyarrow():
        raise _Fail(EXIT_USAGE, f"--format {args.format} needs pyarrow, which is not "
                    "installed; use --format csv or install pyarrow")
    if not (math.isfinite(say.every) and say.every >= 0):
        raise _Fail(EXIT_USAGE, f"--progress-every must be a finite number ≥ 0 [s], got "
                    f"{say.every}")
    if not (math.isfinite(args.warmup_days) and args.warmup_days >= 0):
        raise _Fail(EXIT_USAGE, f"--warmup-days must be a finite number ≥ 0 [days], got "
                    f"{args.warmup_days}")
    _check_tz_option(args.tz)
    if args.step is None:
        return None
    try:
        step = pd.Timedelta(args.step)
    except (ValueError, TypeError) as exc:
        raise _Fail(EXIT_USAGE, f"--step {args.step!r} is not a duration (e.g. 15min, "
                    "1h)") from exc
    if step <= pd.Timedelta(0):
        raise _Fail(EXIT_USAGE, f"--step must be positive, got {args.step!r}")
    return step


def _check_tz_option(tz) -> None:
    from thermonet.weather import check_zone

    if tz is None:
        return
    try:
        check_zone(tz, "--tz")
    except TimeZoneError as exc:
        raise _Fail(EXIT_USAGE, str(exc)) from exc


def _prepare(args, say, step):
    """Read the model and the weather and compile once: (ModelFile, weather frame)."""
    say(f"reading model {args.model}")
    mf = _model_from_args(args)
    net = mf.network
    say(f"model: {net!r}")
    say(f"reading weather {args.weather}")
    weather = _weather_from_args(args, mf.weather_columns, say)
    wstep = weather.index[1] - weather.index[0]
    if step is not None:
        ratio = wstep / step
        if step > wstep or abs(ratio - round(ratio)) > 1e-9:
            raise _Fail(EXIT_USAGE, f"--step {args.step} must divide the weather's step "
                        f"{wstep} evenly and not exceed it")
    try:
        _compile(net, weather, step)
    except NetworkError as exc:
        raise _Fail(EXIT_MODEL, str(exc)) from exc
    except (WeatherError, ScheduleError) as exc:
        raise _Fail(EXIT_WEATHER, str(exc)) from exc
    return mf, weather


def _simulate(args, say, net, weather, step):
    from thermonet.engine.simulate import simulate

    say(f"simulating {len(weather)} weather rows "
        f"({weather.index[0]} … {weather.index[-1]}) for {len(net.nodes)} nodes, "
        f"warm-up {args.warmup_days:g} days, method {args.method}")
    try:
        with say.busy("simulating"):
            res = simulate(net, weather, step=step, method=args.method,
                           warmup_days=args.warmup_days)
            tables = _tables(res, net)
    except Exception as exc:  # any solver failure is reported with its type
        raise _Fail(EXIT_SIMULATION, f"{type(exc).__name__}: {exc}") from exc
    return res, tables


def _write_outputs(args, folder: OutputFolder, mf, weather, res, tables, step) -> list[Path]:
    """Tables and provenance into the staging folder, then swap it in for ``--out``."""
    written = _write_tables(tables, folder.staging, args.format)
    settings = {"step": None if step is None else step.isoformat(),
                "warmup_days": args.warmup_days, "method": args.method,
                "label": args.label, "format": args.format,
                "closure_check": not args.no_closure_check}
    rec = provenance_record(
        model=mf.path, weather=args.weather, weather_frame=weather, info=res.info,
        settings=settings, command=_command_line(args), outputs=written,
        extra={"argv": " ".join(shlex.quote(a) for a in sys.argv),
               "model_schema_version": mf.schema_version,
               "tables": {k: {"description": d, "unit": u}
                          for k, (d, u) in OUTPUT_TABLES.items()}})
    for entry in rec["outputs"]:  # name the files where they will be, not the staging copy
        entry["path"] = str(folder.target / Path(entry["path"]).name)
    write_provenance(folder.staging, rec)
    folder.commit()
    return [folder.target / p.name for p in written]


def run_command(args) -> int:
    """Handler of ``thermonet run``: simulate a model file, write the results folder.

    The results are written into a staging folder beside ``--out`` and swapped in as one
    unit at the end (:class:`thermonet.io.files.OutputFolder`): an interrupted or failed
    run leaves ``--out`` as it was. Ctrl-C exits with 130 and removes the staging folder.

    Parameters
    ----------
    args : argparse.Namespace
        Parsed options of ``thermonet run`` (model, weather, out, site, step, warm-up ...).
    """
    say = _Progress("run", getattr(args, "quiet", False),
                    getattr(args, "progress_every", PROGRESS_EVERY))
    out = Path(args.out)
    owned = {f"{t}.{ext}" for t in OUTPUT_TABLES for ext in ("csv", "parquet")}
    folder = OutputFolder(out, overwrite=args.overwrite, owned=owned | {PROVENANCE_FILE})
    try:
        try:
            folder.check()
            step = _check_options(args, say)
            mf, weather = _prepare(args, say, step)
            with folder:
                res, tables = _simulate(args, say, mf.network, weather, step)
                say(f"solved: {res!r}; writing {args.format} to {out}")
                try:
                    with say.busy("writing"):
                        written = _write_outputs(args, folder, mf, weather, res, tables, step)
                except (OSError, ThermonetError, ValueError) as exc:
                    print(f"thermonet run: error: could not write the outputs to {out} "
                          f"({type(exc).__name__}: {exc}); {out} is left as it was and the "
                          "partial files were removed", file=sys.stderr)
                    return EXIT_ERROR
        except OutputFolderError as exc:
            raise _Fail(EXIT_USAGE, str(exc)) from exc
        except OSError as exc:
            raise _Fail(EXIT_USAGE, f"cannot use --out {out}: {exc}") from exc
    except _Fail as fail:
        return _error("run", fail)
    except KeyboardInterrupt:
        folder.release()
        print(f"thermonet run: interrupted; {out} is left as it was and the temporary files "
              "were removed", file=sys.stderr, flush=True)
        return EXIT_INTERRUPTED
    say(f"done: {len(written)} tables and {PROVENANCE_FILE} in {out}")
    return EXIT_OK
