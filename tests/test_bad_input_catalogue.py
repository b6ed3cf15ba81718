"""Catalogue of the classes of bad input: each gives a typed thermonet error naming the input.

One entry per class of mistake a user can make (a network element, a weather frame or file,
a model file, a study folder, an output folder). Each entry is run here and must raise the
listed :class:`~thermonet.errors.ThermonetError` subclass with a message that names the
offending input (node, link, column, file, key, folder) — the test fails on a bare
KeyError/ValueError from pandas or pvlib, or a message that does not say what was wrong.
``len(CASES)`` is the count reported on issue 14.

The networks and weather are invented test data.
"""

from __future__ import annotations

import errno
import json
import os
import warnings

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet import checks
from thermonet.cli.run import SiteMissingError, read_weather_csv
from thermonet.errors import (
    ModelFileError,
    NetworkError,
    OutputFolderError,
    ReadOnlyError,
    ScheduleError,
    StudyError,
    ThermonetError,
    TimeZoneError,
    WeatherError,
)
from thermonet.io import files
from thermonet.io import models as io
from thermonet.studies import read_study, run_variants

IDX = pd.date_range("2025-01-01 01:00", periods=48, freq="h", tz="Etc/GMT-1")


def weather(**cols):
    w = pd.DataFrame({"temp_air": 5.0 + np.sin(np.arange(48) / 4.0), "ghi": 0.0, "dni": 0.0,
                      "dhi": 0.0}, index=IDX)
    for k, v in cols.items():
        w[k] = v
    return w


def net(**kw):
    n = tn.Network()
    n.add_boundary("outdoor", temperature=kw.get("boundary", "temp_air"))
    n.add_node("room", kind="air", capacitance=2e5)
    n.add_node("slab", kind="mass", capacitance=5e6)
    n.add_link("outdoor", "room", conductance=kw.get("g", 40.0), path="opaque")
    n.add_link("room", "slab", conductance=100.0, path="internal")
    return n


def sim(n, w=None):
    return tn.simulate(n, weather() if w is None else w, warmup_days=0.5)


def edit_weather(fn):
    w = weather()
    return fn(w)


def model_text(**replace):
    text = io.dumps(net())
    for old, new in replace.items():
        old = old.replace("__", " ")
        assert old in text, old
        text = text.replace(old, new, 1)
    return text


# ----------------------------------------------------------------- network elements
def network_cases():
    n = net
    return [
        ("unknown node in a link", lambda: n().add_link("room", "nope", conductance=1.0,
                                                         path="p"), NetworkError, "'nope'"),
        ("duplicate node name", lambda: n().add_node("room"), NetworkError, "'room'"),
        ("negative conductance", lambda: n(g=-1.0), NetworkError, "outdoor-room:opaque"),
        ("NaN conductance", lambda: n(g=float("nan")), NetworkError, "outdoor-room:opaque"),
        ("conductance too large to resolve", lambda: n(g=1e13), NetworkError,
         "outdoor-room:opaque"),
        ("self-link", lambda: n().add_link("room", "room", conductance=1.0, path="p"),
         NetworkError, "'room'"),
        ("link between two boundaries", lambda: (lambda x: (
            x.add_boundary("deep", temperature=8.0),
            x.add_link("outdoor", "deep", conductance=1.0, path="p")))(n()), NetworkError,
         "'outdoor'.*'deep'"),
        ("airflow into a mass node", lambda: n().add_airflow("outdoor", "slab", flow_m3h=30.0,
                                                              path="inf"), NetworkError,
         "'slab'"),
        ("unknown node kind", lambda: n().add_node("x", kind="fluid"), NetworkError, "'x'"),
        ("thermostat at a boundary", lambda: n().add_thermostat("outdoor",
                                                                heating_setpoint=20.0),
         NetworkError, "'outdoor'"),
        ("heating setpoint above cooling", lambda: n().add_thermostat(
            "room", heating_setpoint=24.0, cooling_setpoint=20.0), NetworkError,
         "thermostat:room"),
        ("second thermostat on a node", lambda: (lambda x: (
            x.add_thermostat("room", heating_setpoint=20.0),
            x.add_thermostat("room", heating_setpoint=21.0)))(n()), NetworkError, "'room'"),
        ("switch on an unknown link", lambda: n().add_switch(on=tn.above("room", 24.0),
                                                             links={"window": 1.0}),
         NetworkError, "'window'"),
        ("boundary below absolute zero", lambda: n(boundary=-300.0), NetworkError,
         "'outdoor'"),
        ("schedule with NaN", lambda: n().add_source(
            "room", power=pd.Series(np.r_[np.nan, np.ones(47)], index=IDX), path="internal"),
         NetworkError, "room:internal"),
        ("node without a path to a boundary", lambda: sim((lambda x: (
            x.add_node("attic", kind="air", capacitance=1e5), x)[1])(n())), NetworkError,
         "attic"),
        ("element changed after adding", lambda: setattr(n().links["outdoor-room:opaque"],
                                                         "conductance", -5.0),
         ReadOnlyError, "outdoor-room:opaque"),
        ("element table changed after adding", lambda: n().nodes.pop("room"), ReadOnlyError,
         "net.nodes"),
        ("schedule edited in place after adding", lambda: checks.check_network_values(
            (lambda x: (x.boundaries["neighbour"].temperature.__setitem__(IDX[5], np.nan),
                        x)[1])((lambda y: (y.add_boundary("neighbour", temperature=pd.Series(
                            20.0, index=IDX)), y)[1])(n()))), NetworkError, "'neighbour'"),
    ]


# ----------------------------------------------------------------- weather frames
def weather_cases(tmp):
    w = weather()
    n = net

    def dst(fix):
        idx = pd.date_range(fix, periods=48, freq="h")
        return tn.weather.from_dataframe(pd.DataFrame({"temp_air": 5.0, "ghi": 0.0,
                                                       "dni": 0.0, "dhi": 0.0}, index=idx),
                                         latitude=52.5, longitude=13.4, tz="Europe/Berlin")

    def frame(**cols):
        return tn.weather.from_dataframe(weather(**cols), latitude=48.3, longitude=11.9,
                                         closure_limits=None)

    not_tmy3 = tmp / "not_tmy3.csv"
    not_tmy3.write_text("a,b\n1,2\n", encoding="utf-8")
    not_pvgis = tmp / "not_pvgis.json"
    not_pvgis.write_text("[1, 2]", encoding="utf-8")
    return [
        ("weather column missing", lambda: sim(n(), w.drop(columns="temp_air")),
         WeatherError, "'temp_air'"),
        ("naive weather index", lambda: sim(n(), w.tz_localize(None)),
         (WeatherError, ScheduleError), "tz-naive|time zone"),
        ("duplicate time stamps", lambda: sim(n(), pd.concat([w.iloc[:5], w.iloc[4:]])),
         (WeatherError, ScheduleError), "2025-01-01 05:00"),
        ("gap in the weather", lambda: sim(n(), w.drop(w.index[7])),
         (WeatherError, ScheduleError), "2025-01-01 0[78]:00|step"),
        ("shuffled weather", lambda: sim(n(), w.iloc[::-1]), (WeatherError, ScheduleError),
         "increasing|order|monoton"),
        ("NaN in a used column", lambda: sim(n(), weather(temp_air=np.r_[np.nan,
                                                                          np.ones(47)])),
         WeatherError, "'temp_air'"),
        ("schedule of the wrong length", lambda: sim((lambda x: (x.add_source(
            "room", power=pd.Series(1.0, index=IDX[:24]), path="internal"), x)[1])(n())),
         ScheduleError, "room:internal"),
        ("schedule shifted by one step", lambda: sim((lambda x: (x.add_source(
            "room", power=pd.Series(1.0, index=IDX + pd.Timedelta("1h")), path="internal"),
            x)[1])(n())), ScheduleError, "room:internal"),
        ("temperature out of range (validated path)", lambda: frame(
            temp_air=np.r_[80.0, np.zeros(47)]), WeatherError, "'temp_air'"),
        ("temperature in kelvin (validated path)", lambda: frame(temp_air=280.0),
         WeatherError, "'temp_air'.*kelvin"),
        ("pressure in mbar", lambda: frame(pressure=1013.0), WeatherError, "'pressure'.*mbar"),
        ("dew point above air temperature", lambda: frame(temp_dew=20.0), WeatherError,
         "'temp_dew'"),
        ("ghi/dni/dhi inconsistent", lambda: tn.weather.from_dataframe(
            weather(ghi=np.where(np.arange(48) % 24 == 12, 500.0, 0.0)), latitude=48.3,
            longitude=11.9), WeatherError, "'ghi', 'dni', 'dhi'"),
        ("unknown time zone", lambda: tn.weather.from_dataframe(
            w.tz_localize(None), latitude=48.3, longitude=11.9, tz="Mars/Base"),
         TimeZoneError, "'Mars/Base'"),
        ("naive stamps skipped by daylight saving", lambda: dst("2025-03-29 00:00"),
         WeatherError, "2025-03-30 02:00"),
        ("naive stamps repeated by daylight saving", lambda: dst("2025-10-25 12:00"),
         WeatherError, "2025-10-26 02:00"),
        ("read_tmy3 given another file", lambda: tn.weather.read_tmy3(not_tmy3),
         WeatherError, "not_tmy3.csv"),
        ("read_pvgis_tmy given another file", lambda: tn.weather.read_pvgis_tmy(not_pvgis),
         WeatherError, "not_pvgis.json"),
        ("read_pvgis_tmy given an unknown format", lambda: tn.weather.read_pvgis_tmy(
            tmp / "x.txt"), WeatherError, "'txt'"),
        ("weather in kelvin on a plain frame", lambda: checks.check_simulation_inputs(
            n(), weather(temp_air=280.0), 1.0), WeatherError, "'temp_air'.*kelvin"),
        ("boundary Series in kelvin", lambda: checks.check_simulation_inputs(
            n(boundary=pd.Series(290.0, index=IDX)), w, 1.0), NetworkError, "'outdoor'"),
        ("temperature below absolute zero", lambda: checks.check_simulation_inputs(
            n(), weather(temp_air=np.r_[-300.0, np.zeros(47)]), 1.0), WeatherError,
         "'temp_air'"),
        ("irradiance impossible at the ground", lambda: checks.check_simulation_inputs(
            n(), weather(dni=5000.0), 1.0), WeatherError, "'dni'"),
        ("setpoint of 1e9 °C", lambda: checks.check_simulation_inputs(
            (lambda x: (x.add_thermostat("room", heating_setpoint=1e9), x)[1])(n()), w, 1.0),
         NetworkError, "thermostat:room"),
    ]


# ----------------------------------------------------------------- weather CSV files
def csv_cases(tmp):
    def csv(name, text, side=None):
        p = tmp / name
        p.write_text(text, encoding="utf-8")
        if side is not None:
            p.with_suffix(".json").write_text(side, encoding="utf-8")
        return p

    good = "time,temp_air,ghi,dni,dhi\n" + "".join(
        f"{t.isoformat()},5.0,0,0,0\n" for t in IDX)
    site = {"latitude": 48.3, "longitude": 11.9}
    return [
        ("non-numeric weather column", lambda: read_weather_csv(
            csv("text.csv", good.replace(",5.0,", ",warm,", 1)), **site), WeatherError,
         "text.csv.*'temp_air'"),
        ("time stamp not ISO 8601", lambda: read_weather_csv(
            csv("stamp.csv", good.replace("2025-01-01T03:00:00+01:00", "3 o'clock")), **site),
         WeatherError, "stamp.csv.*3 o'clock"),
        ("stamps without offset and no zone", lambda: read_weather_csv(
            csv("naive.csv", good.replace("+01:00", "")), **site), WeatherError,
         "naive.csv.*--tz"),
        ("site unknown", lambda: read_weather_csv(csv("nosite.csv", good)),
         SiteMissingError, "nosite.csv"),
        ("sidecar not JSON", lambda: read_weather_csv(csv("side.csv", good, "{broken"), **site),
         WeatherError, "side.json"),
        ("sidecar with an unknown key", lambda: read_weather_csv(
            csv("key.csv", good, json.dumps({"lat": 1})), **site), WeatherError, "'lat'"),
        ("weather file without data rows", lambda: read_weather_csv(
            csv("empty.csv", "time,temp_air\n"), **site), WeatherError, "empty.csv"),
    ]


# ----------------------------------------------------------------- model files
def model_cases(tmp):
    big = tmp / "big.json"
    big.write_text(io.dumps(net()), encoding="utf-8")
    latin = tmp / "latin.json"
    latin.write_bytes(io.dumps(net()).replace('"network"', '"netw\xf6rk"').encode("latin-1"))
    return [
        ("model file not JSON", lambda: io.loads("{", source="m.json"), ModelFileError,
         "m.json"),
        ("model key given twice", lambda: io.loads('{"format": 1, "format": 2}'),
         ModelFileError, "'format'"),
        ("NaN literal in a model file", lambda: io.loads(model_text(
            **{'"conductance": 40.0': '"conductance": NaN'})), ModelFileError, "NaN"),
        ("unknown key in a model file", lambda: io.loads(model_text(
            **{'"capacitance": 200000.0': '"capacity": 1'})), ModelFileError, "'capacity'"),
        ("wrong type in a model file", lambda: io.loads(model_text(
            **{'"conductance": 40.0': '"conductance": "forty"'})), ModelFileError,
         "conductance"),
        ("reference to a missing node", lambda: io.loads(model_text(
            **{'"b": "slab"': '"b": "cellar"'})), ModelFileError, "cellar"),
        ("model file from a newer version", lambda: io.loads(model_text(
            **{'"schema_version": 1': '"schema_version": 99'})), ModelFileError, "99"),
        ("number that underflows to 0", lambda: io.loads(model_text(
            **{'"conductance": 40.0': '"conductance": 1e-400'})), ModelFileError,
         "conductance.*1e-400"),
        ("denormal number", lambda: io.loads(model_text(
            **{'"conductance": 40.0': '"conductance": 1e-310'})), ModelFileError,
         "conductance.*denormal"),
        ("model file above the size limit", lambda: io.read_model(big, max_bytes=100),
         ModelFileError, "big.json"),
        ("model file not UTF-8", lambda: io.read_model(latin), ModelFileError, "latin.json"),
        ("model nested too deeply", lambda: io.loads("[" * 100_000 + "]" * 100_000),
         ModelFileError, "nested"),
    ]


# ----------------------------------------------------------------- studies and folders
def build(g):
    n = tn.Network()
    n.add_boundary("out", temperature="temp_air")
    n.add_node("room", kind="air", capacitance=2e5)
    n.add_link("out", "room", conductance=float(g), path="opaque")
    return n


PARAMS = pd.DataFrame({"g": [20.0, 40.0]}, index=["a", "b"])


def study(out, params=PARAMS, w=None):
    return run_variants(build, params, weather() if w is None else w, out=out, chunk_size=1,
                        progress=False, warmup_days=0.5)


def folder_cases(tmp):
    def damaged(what):
        out = tmp / f"study_{what}"
        study(out)
        if what == "part":
            sorted(out.glob("part-*.parquet"))[0].write_bytes(b"")
        else:
            (out / "study.json").write_text('{"form', encoding="utf-8")
        return out

    def disk_full():
        real = pd.DataFrame.to_parquet

        def full(self, path, *a, **k):
            raise OSError(errno.ENOSPC, "No space left on device")
        pd.DataFrame.to_parquet = full
        try:
            study(tmp / "study_full")
        finally:
            pd.DataFrame.to_parquet = real

    def foreign():
        out = tmp / "foreign"
        out.mkdir(exist_ok=True)
        (out / "summary.csv").write_text("mine")
        files.OutputFolder(out).check()

    def locked():
        out = tmp / "locked"
        a = files.OutputFolder(out)
        a.acquire()
        try:
            files.OutputFolder(out).acquire()
        finally:
            a.release()

    def crowded():
        out = tmp / "crowded"
        out.mkdir(exist_ok=True)
        (out / "notes.txt").write_text("mine")
        files.OutputFolder(out, overwrite=True, owned={"summary.csv"}).check()

    a_file = tmp / "a_file"
    a_file.write_text("x")
    return [
        ("empty study part (resume)", lambda: study(damaged("part")), StudyError, "part-"),
        ("empty study part (read_study)", lambda: read_study(tmp / "study_part"), StudyError,
         "part-"),
        ("truncated study.json (resume)", lambda: study(damaged("json")), StudyError,
         "study.json"),
        ("truncated study.json (read_study)", lambda: read_study(tmp / "study_json"),
         StudyError, "study.json"),
        ("disk full during a study", disk_full, StudyError, "No space left"),
        ("different study in out=", lambda: study(tmp / "study_part", PARAMS, weather(
            temp_air=0.0)), StudyError, "different study"),
        ("study row labels not unique", lambda: study(None, pd.DataFrame(
            {"g": [1.0, 2.0]}, index=["a", "a"])), StudyError, "'a'"),
        ("output folder not written by thermonet", foreign, OutputFolderError, "summary.csv"),
        ("output folder being written by another run", locked, OutputFolderError,
         f"pid {os.getpid()}"),
        ("output folder is a file", lambda: files.OutputFolder(a_file).check(),
         OutputFolderError, "a_file"),
        ("overwrite of a folder with other files", crowded, OutputFolderError, "notes.txt"),
    ]


def all_cases(tmp):
    return (network_cases() + weather_cases(tmp) + csv_cases(tmp) + model_cases(tmp)
            + folder_cases(tmp))


def test_every_class_of_bad_input_gives_a_typed_error_naming_the_input(tmp_path):
    failures = []
    cases = all_cases(tmp_path)
    assert len({c[0] for c in cases}) == len(cases)
    for name, call, kind, names in cases:
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")  # only the error is checked here
                call()
        except kind as exc:
            if not isinstance(exc, ThermonetError):
                failures.append(f"{name}: {type(exc).__name__} is not a ThermonetError")
            elif not __import__("re").search(names, str(exc)):
                failures.append(f"{name}: message does not name the input ({names!r}): {exc}")
        except Exception as exc:  # noqa: BLE001 - the point of the test
            failures.append(f"{name}: {type(exc).__name__}: {exc}")
        else:
            failures.append(f"{name}: no error")
    assert not failures, "\n".join(failures)
    assert len(cases) == 73  # the count reported on issue 14


@pytest.mark.parametrize("group", ["network", "weather", "csv", "model", "folder"])
def test_catalogue_groups_are_not_empty(group, tmp_path):
    fn = {"network": lambda: network_cases(), "weather": lambda: weather_cases(tmp_path),
          "csv": lambda: csv_cases(tmp_path), "model": lambda: model_cases(tmp_path),
          "folder": lambda: folder_cases(tmp_path)}[group]
    assert len(fn()) >= 5
