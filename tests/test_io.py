"""Model files (thermonet.io): lossless round trip and one test per documented ModelFileError.

The round trip is checked on a hand-wired network using every element type and on one
network using every builder (rooms, buffer spaces, ground, windows with every shading option,
airflows, gains, a window added by hand, ISO 13790 zones), whose room and zone records must
come back too.

The round-trip checks are invariants of the file format (a loaded model must give the same
numbers, bit for bit, as the network it was saved from); the weather and the network are
invented demo data, used only for that comparison, never as reference values.
"""

from __future__ import annotations

import copy
import json
import math

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet.errors import ModelFileError, NetworkError
from thermonet.io import models as io

TZ = "Etc/GMT-1"


# ------------------------------------------------------------------------------ fixtures
def demo_weather(days: int = 10, freq: str = "1h", tz: str = TZ) -> pd.DataFrame:
    """Invented demo weather (sinusoidal temperature and irradiance), for round trips only."""
    idx = pd.date_range("2025-06-01 01:00", periods=int(days * 24 * pd.Timedelta("1h")
                                                         / pd.Timedelta(freq)),
                        freq=freq, tz=tz)
    hour = np.asarray(idx.hour + idx.minute / 60.0)
    day = np.arange(len(idx)) / len(idx)
    temp = 18.0 + 8.0 * np.sin((hour - 9.0) / 24.0 * 2 * np.pi) + 4.0 * np.sin(6.0 * day)
    ghi = np.clip(800.0 * np.sin((hour - 6.0) / 14.0 * np.pi), 0.0, None) * (hour < 20)
    return pd.DataFrame({"temp_air": temp, "ghi": ghi}, index=idx)


def full_network(w: pd.DataFrame) -> tn.Network:
    """A network using every element type and every kind of value the file format stores."""
    idx = w.index
    rng = np.random.default_rng(7)
    net = tn.Network("every element")
    net.add_boundary("outdoor", temperature="temp_air")
    net.add_boundary("ground", temperature=9.5, kind="ground")
    net.add_boundary("sky", temperature=w["temp_air"] - 12.0, kind="sky")
    net.add_boundary("neighbour", temperature=pd.Series(20.0 + rng.normal(0, 0.5, len(idx)),
                                                        idx, name="flat next door"))
    net.add_node("room", kind="air", capacitance=1.5e5, volume=120.0)
    net.add_node("sunspace", kind="buffer", capacitance=4.0e4, volume=35.0, initial=15.0)
    net.add_node("slab", kind="mass", capacitance=9.0e6, initial=21.0)
    net.add_node("surface", kind="surface", capacitance=0.0)
    net.add_node("soil", kind="ground", capacitance=2.0e7)
    net.add_link("room", "surface", conductance=160.0, path="internal")
    net.add_link("surface", "slab", conductance=350.0, path="internal")
    net.add_link("slab", "soil", conductance=30.0, path="ground")
    net.add_link("soil", "ground", conductance=25.0, path="ground")
    net.add_link("outdoor", "room", path="opaque", name="wall",
                 conductance=pd.Series(np.where(idx.hour < 12, 42.0, 38.0), idx))
    net.add_link("neighbour", "room", conductance=12.0, path="party wall")
    net.add_link("sky", "sunspace", conductance=3.0, path="sky")
    inf = net.add_airflow("outdoor", "room", ach=0.4, path="infiltration")
    window = net.add_airflow("outdoor", "room", flow_m3h=90.0, path="ventilation",
                             name="window", heat_recovery=0.0)
    door = net.add_airflow("sunspace", "room", path="buffer", heat_recovery=0.15,
                           flow_m3h=pd.Series(np.where(idx.hour < 8, 40.0, 80.0), idx))
    net.add_airflow("outdoor", "sunspace", flow_m3h=25.0, path="infiltration", rho_cp=1190.0)
    net.add_radiation("surface", "sunspace", area=10.0, path="radiation", emissivity_a=0.85,
                      area_b=18.0, view_factor=0.6, reference_temperature=22.0)
    sun = net.add_source("room", power=w["ghi"] * 1.8, path="solar")
    net.add_source("sunspace", power=w["ghi"] * 3.1, path="solar")
    net.add_source("room", power=180.0, path="internal", name="people")
    heat_sp = pd.Series(np.where((idx.hour >= 7) & (idx.hour < 22), 20.0, 17.0), idx)
    net.add_thermostat("room", heating_setpoint=heat_sp, cooling_setpoint=26.0,
                       max_heating_w=2500.0, max_cooling_w=1500.0)
    net.add_thermostat("slab", cooling_setpoint=28.0)
    net.add_switch(on=tn.above("room", 24.0) & tn.warmer("room", "outdoor", by=2.0)
                   & tn.hours(22, 7), off=tn.below("room", 22.0), links={window: (0.0, 1.0)},
                   name="night ventilation")
    net.add_switch(on=tn.above(w["ghi"].rename("irradiance on window"), 250.0)
                   | tn.colder("outdoor", "room", by=12.0),
                   links={door: 0.0}, sources={sun: 0.3}, initial=True, name="blind")
    weekend = pd.Series(np.asarray(idx.day_of_week >= 5), idx, name="weekend")
    net.add_switch(on=tn.when(weekend), links={inf: 1.5})
    return net


def assert_identical(r1, r2):
    for table in ("temperatures", "mean_temperatures", "flows", "sources",
                  "heating_by_thermostat", "cooling_by_thermostat"):
        a, b = getattr(r1, table), getattr(r2, table)
        assert list(a.columns) == list(b.columns), table
        assert a.index.equals(b.index), table
        # bit-identical, not approximately equal
        assert np.array_equal(a.to_numpy(), b.to_numpy()), table


@pytest.fixture(scope="module")
def weather():
    return demo_weather()


@pytest.fixture(scope="module")
def net(weather):
    return full_network(weather)


@pytest.fixture
def good(net):
    """A valid model dict, deep-copied so each test may corrupt it."""
    return copy.deepcopy(io.to_dict(net))


# ------------------------------------------------------------------------------ round trip
def test_round_trip_gives_bit_identical_results(net, weather, tmp_path):
    path = io.save_model(net, tmp_path / "model.json")
    back = io.load_model(path)
    assert repr(back) == repr(net)
    r1 = tn.simulate(net, weather)
    r2 = tn.simulate(back, weather)
    assert_identical(r1, r2)
    b1 = r1.balance(list(net.nodes), freq="D")
    b2 = r2.balance(list(back.nodes), freq="D")
    assert np.array_equal(b1.to_numpy(), b2.to_numpy())
    # the switches really act in this period (otherwise the test would not exercise them)
    assert r1.info["states"] > 1


def test_round_trip_sub_hourly_step(net, weather, tmp_path):
    back = io.load_model(io.save_model(net, tmp_path / "m.json"))
    assert_identical(tn.simulate(net, weather, step="15min", warmup_days=1),
                     tn.simulate(back, weather, step="15min", warmup_days=1))


def test_save_load_save_is_stable(net, tmp_path):
    text = io.dumps(net)
    assert io.dumps(io.loads(text)) == text


def test_elements_survive_field_by_field(net):
    back = io.from_dict(io.to_dict(net))
    assert list(back.nodes) == list(net.nodes)
    for k, n in net.nodes.items():
        assert back.nodes[k] == n
    for k, l in net.links.items():
        m = back.links[k]
        assert (m.a, m.b, m.path, m.kind) == (l.a, l.b, l.path, l.kind)
        assert np.array_equal(np.asarray(m.conductance), np.asarray(l.conductance))
    for k, s in net.switches.items():
        t = back.switches[k]
        assert repr(t.on) == repr(s.on)
        assert repr(t.off) == repr(s.off)
        assert t.link_factors == s.link_factors
        assert t.source_factors == s.source_factors
        assert t.initial == s.initial
    th = back.thermostats["thermostat:room"]
    assert th.max_heating_w == 2500.0
    assert back.thermostats["thermostat:slab"].max_heating_w == math.inf
    assert back.thermostats["thermostat:slab"].heating_setpoint is None
    sched = back.boundaries["neighbour"].temperature
    orig = net.boundaries["neighbour"].temperature
    assert sched.name == "flat next door"
    assert str(sched.index.tz) == TZ
    assert np.array_equal(sched.index.as_unit("ns").asi8, orig.index.as_unit("ns").asi8)


def test_file_is_standard_json_with_documented_header(net, tmp_path):
    path = io.save_model(net, tmp_path / "model.json")
    text = path.read_text(encoding="utf-8")
    for token in ("NaN", "Infinity"):
        assert token not in text
    data = json.loads(text)
    assert data["format"] == "thermonet-model"
    assert data["schema_version"] == 1
    assert data["weather_columns"] == ["temp_air"]
    assert set(data["network"]) >= {"nodes", "boundaries", "links", "schedules"}
    # shared series are stored once: the wall's schedule appears once in the table
    keys = list(data["network"]["schedules"])
    assert len(keys) == len(set(keys))
    assert data["network"]["thermostats"][1]["max_heating_w"] == "inf"


def test_identical_series_stored_once(weather):
    s = pd.Series(21.0, index=weather.index)
    net = tn.Network()
    net.add_boundary("a", temperature=s)
    net.add_boundary("b", temperature=s.copy())
    net.add_node("n", capacitance=1e5)
    net.add_link("a", "n", conductance=1.0, path="p")
    net.add_link("b", "n", conductance=1.0, path="p")
    d = io.to_dict(net)
    assert len(d["network"]["schedules"]) == 1


def test_explicit_and_compact_schedules_decode_alike(weather):
    s = pd.Series(np.linspace(0, 1, 5), index=weather.index[:5], name="x")
    compact = io._encode_series(s, "x")
    assert "start" in compact
    explicit = {"index": [t.isoformat() for t in s.index], "tz": TZ, "values": compact["values"]}
    r = io._Reader("test")
    a = io._decode_schedule(r, compact, "c")
    b = io._decode_schedule(r, explicit, "e")
    assert a.index.equals(b.index) and np.array_equal(a.to_numpy(), b.to_numpy())
    pd.testing.assert_index_equal(a.index.as_unit("ns"), s.index.as_unit("ns"))


def test_irregular_and_daylight_saving_series_round_trip():
    # A DST zone: hourly steps are regular in absolute time and keep the compact form; a
    # series on local midnights is irregular (23 h / 25 h days) and keeps every stamp.
    hourly = pd.date_range("2025-03-29 22:00", periods=8, freq="h", tz="Europe/Berlin")
    daily = pd.date_range("2025-03-28", periods=4, freq="D", tz="Europe/Berlin")
    for idx, form in ((hourly, "start"), (daily, "index")):
        s = pd.Series(np.arange(len(idx), dtype=float), idx)
        enc = io._encode_series(s, "s")
        assert form in enc
        back = io._decode_schedule(io._Reader("t"), json.loads(json.dumps(enc)), "s")
        assert str(back.index.tz) == "Europe/Berlin"
        assert np.array_equal(back.index.as_unit("ns").asi8, idx.as_unit("ns").asi8)


def test_meta_round_trip(weather):
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("n", capacitance=1e5)
    net.add_link("out", "n", conductance=10.0, path="opaque")
    net.meta = {"builder": "room", "params": {"area_m2": 20.0, "windows": [1, 2]}}
    back = io.from_dict(io.to_dict(net))
    assert back.meta == net.meta


def test_hand_written_minimal_file_uses_method_defaults(tmp_path):
    text = json.dumps({
        "format": "thermonet-model", "schema_version": 1,
        "network": {
            "nodes": [{"name": "room", "kind": "air", "capacitance": 1e5}],
            "boundaries": [{"name": "out", "temperature": "temp_air"}],
            "links": [{"a": "out", "b": "room", "path": "opaque", "conductance": 30}],
            "thermostats": [{"node": "room", "heating_setpoint": 20}],
        }})
    (tmp_path / "m.json").write_text(text, encoding="utf-8")
    net = io.load_model(tmp_path / "m.json")
    assert list(net.links) == ["out-room:opaque"]
    assert net.links["out-room:opaque"].kind == "conductance"
    assert net.boundaries["out"].kind == "air"
    th = net.thermostats["thermostat:room"]
    assert th.max_heating_w == math.inf and th.cooling_setpoint is None


def test_read_model_reports_checksum_and_columns(net, tmp_path):
    import hashlib

    path = io.save_model(net, tmp_path / "m.json", weather_columns=["temp_air", "ghi"])
    mf = io.read_model(path)
    assert mf.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    assert mf.weather_columns == ["temp_air", "ghi"]
    assert mf.schema_version == 1


def test_required_weather_columns(net):
    assert io.required_weather_columns(net) == ["temp_air"]


# --------------------------------------------------------------------------- file errors
def _err(data, match):
    with pytest.raises(ModelFileError, match=match) as exc:
        io.from_dict(data)
    return exc.value


def test_unknown_key_names_key_element_and_allowed(good):
    good["network"]["nodes"][0]["capacity"] = 1.0
    e = _err(good, "unknown key 'capacity'")
    msg = str(e)
    assert "network.nodes[0] (node 'room')" in msg
    assert "allowed keys: name, kind, capacitance, volume, initial" in msg


def test_unknown_top_level_and_network_keys(good):
    bad = copy.deepcopy(good)
    bad["__reduce__"] = "os.system"
    _err(bad, "top level: unknown key '__reduce__'")
    bad = copy.deepcopy(good)
    bad["network"]["rooms"] = []
    _err(bad, r"network: unknown key 'rooms'; allowed keys: nodes, boundaries, links")


def test_unknown_key_in_nested_objects(good):
    good["network"]["switches"][0]["on"]["any"][0][0]["by"] = 2.0
    _err(good, r"switches\[0\] \(switch 'night ventilation'\)\.on\.any\[0\]\[0\]: "
               r"unknown key 'by'")


def test_missing_required_key(good):
    del good["network"]["links"][0]["path"]
    _err(good, r"network.links\[0\] \(link 'room-surface:internal'\): missing required key "
               r"'path'")


def test_wrong_type(good):
    good["network"]["nodes"][2]["capacitance"] = "9e6"
    _err(good, r"nodes\[2\] \(node 'slab'\)\.capacitance: must be a number, got string")
    good["network"]["nodes"][2]["capacitance"] = True
    _err(good, r"capacitance: must be a number, got boolean")


def test_wrong_container_type(good):
    good["network"]["links"] = {"a": 1}
    _err(good, r"network.links: must be a JSON array")


def test_link_to_missing_node(good):
    good["network"]["links"][1]["b"] = "attic"
    e = _err(good, r"links\[1\] \(link 'surface-slab:internal'\)\.b: refers to 'attic', which "
                   r"is not a node or boundary")
    assert "'room'" in str(e)  # lists the known names


def test_source_and_thermostat_to_missing_node(good):
    bad = copy.deepcopy(good)
    bad["network"]["sources"][0]["node"] = "cellar"
    _err(bad, r"sources\[0\].*\.node: refers to 'cellar'")
    bad = copy.deepcopy(good)
    bad["network"]["thermostats"][0]["node"] = "cellar"
    _err(bad, r"thermostats\[0\].*\.node: refers to 'cellar'")


def test_switch_to_missing_link_source_or_node(good):
    bad = copy.deepcopy(good)
    bad["network"]["switches"][0]["links"] = {"skylight": 1.0}
    _err(bad, r"links: refers to link 'skylight', which is not in the model")
    bad = copy.deepcopy(good)
    bad["network"]["switches"][1]["sources"] = {"lamp": 1.0}
    _err(bad, r"sources: refers to source 'lamp'")
    bad = copy.deepcopy(good)
    bad["network"]["switches"][0]["off"]["any"][0][0]["a"] = "attic"
    _err(bad, r"off\.any\[0\]\[0\]\.a: refers to 'attic'")


def test_missing_schedule_reference(good):
    good["network"]["boundaries"][3]["temperature"] = {"schedule": "nope"}
    _err(good, r"refers to schedule 'nope', which is not in network.schedules")


def test_newer_schema_version(good):
    good["schema_version"] = 2
    _err(good, "file has schema_version 2; this thermonet reads ≤ 1; upgrade thermonet")


def test_bad_schema_version_and_format(good):
    bad = copy.deepcopy(good)
    bad["schema_version"] = "1"
    _err(bad, "schema_version: must be a whole number, got string")
    bad = copy.deepcopy(good)
    bad["schema_version"] = 0
    _err(bad, "must be ≥ 1")
    bad = copy.deepcopy(good)
    bad["format"] = "something-else"
    _err(bad, "not a thermonet model file")
    _err([1, 2], "top level: must be a JSON object")


def test_invalid_values_are_model_file_errors_with_cause(good):
    good["network"]["nodes"][0]["capacitance"] = -5.0
    e = _err(good, r"nodes\[0\] \(node 'room'\): node 'room' capacitance \[J/K\] must be ≥ 0")
    assert isinstance(e.__cause__, NetworkError)


def test_nan_capacitance_from_python_dict(good):
    good["network"]["nodes"][0]["capacitance"] = float("nan")
    _err(good, "capacitance: must be finite")


@pytest.mark.parametrize("token", ["NaN", "Infinity", "-Infinity"])
def test_non_json_number_tokens_refused(good, token):
    text = json.dumps(good).replace('"capacitance": 150000.0', f'"capacitance": {token}', 1)
    assert token in text
    with pytest.raises(ModelFileError, match=f"{token} is not valid JSON"):
        io.loads(text)


def test_huge_number_refused(good):
    text = json.dumps(good).replace('"capacitance": 150000.0', '"capacitance": 1e999', 1)
    with pytest.raises(ModelFileError, match="must be finite"):
        io.loads(text)


def test_duplicate_json_key_refused(good):
    text = json.dumps(good).replace('"capacitance": 150000.0',
                                    '"capacitance": 150000.0, "capacitance": 1.0', 1)
    with pytest.raises(ModelFileError, match="key 'capacitance' appears twice"):
        io.loads(text)


def test_invalid_json_syntax(tmp_path):
    (tmp_path / "m.json").write_text('{"format": "thermonet-model",', encoding="utf-8")
    with pytest.raises(ModelFileError, match=r"model file .*m.json.*not valid JSON"):
        io.load_model(tmp_path / "m.json")


def test_missing_file_is_file_not_found(tmp_path):
    with pytest.raises(FileNotFoundError):
        io.load_model(tmp_path / "absent.json")


def test_unknown_link_kind(good):
    good["network"]["links"][0]["kind"] = "convection"
    _err(good, "unknown link kind 'convection'; allowed: conductance, airflow, radiation")


def test_schedule_errors(good):
    key = good["network"]["boundaries"][3]["temperature"]["schedule"]
    bad = copy.deepcopy(good)
    bad["network"]["schedules"][key]["start"] = "2025-06-01T01:00:00"
    _err(bad, "has no UTC offset")
    bad = copy.deepcopy(good)
    bad["network"]["schedules"][key]["step"] = "often"
    _err(bad, "is not a duration")
    bad = copy.deepcopy(good)
    bad["network"]["schedules"][key]["tz"] = "Mars/Olympus"
    _err(bad, "unknown time zone 'Mars/Olympus'")
    bad = copy.deepcopy(good)
    bad["network"]["schedules"][key]["values"][3] = None
    _err(bad, r"values\[3\]: must be a number, got null")
    bad = copy.deepcopy(good)
    bad["network"]["schedules"][key] = {"index": ["2025-06-01T01:00:00+01:00"],
                                        "values": [1.0, 2.0]}
    _err(bad, "index has 1 timestamps but values has 2")


def test_schedule_of_wrong_length_fails_at_simulation_with_schedule_error(good, weather):
    # A file can hold any series; its alignment with the weather is checked when simulating.
    key = good["network"]["boundaries"][3]["temperature"]["schedule"]
    good["network"]["schedules"][key]["values"].pop()
    net = io.from_dict(good)
    with pytest.raises(tn.errors.ScheduleError, match="boundary 'neighbour'"):
        tn.simulate(net, weather)


def test_weather_columns_must_cover_boundaries(good, net):
    good["weather_columns"] = ["ghi"]
    _err(good, r"weather_columns: omits \['temp_air'\]")
    with pytest.raises(ModelFileError, match="omits"):
        io.to_dict(net, weather_columns=["ghi"])


def test_bad_condition_structures(good):
    bad = copy.deepcopy(good)
    bad["network"]["switches"][0]["on"]["any"] = []
    _err(bad, "needs at least one clause")
    bad = copy.deepcopy(good)
    bad["network"]["switches"][0]["on"]["any"][0][0]["op"] = ">="
    _err(bad, 'must be ">" or "<"')
    bad = copy.deepcopy(good)
    bad["network"]["switches"][0]["on"]["any"][0][2] = {"hours": [22, 25]}
    _err(bad, "hours")


# --------------------------------------------------------------------------- save errors
def test_save_refuses_naive_series(weather):
    net = tn.Network()
    net.add_boundary("out", temperature=pd.Series(5.0, index=weather.index.tz_localize(None)))
    net.add_node("n", capacitance=1e5)
    net.add_link("out", "n", conductance=1.0, path="p")
    with pytest.raises(ModelFileError, match="tz-aware"):
        io.to_dict(net)


def test_save_refuses_edited_airflow_conductance():
    net = tn.Network()
    net.add_boundary("out", temperature=0.0)
    net.add_node("n", kind="air", capacitance=1e5)
    name = net.add_airflow("out", "n", flow_m3h=100.0, path="infiltration")
    net.links[name].conductance = 99.0  # no longer what flow_m3h says
    with pytest.raises(ModelFileError, match="changed after add_airflow"):
        io.to_dict(net)


def test_save_refuses_non_json_meta():
    net = tn.Network()
    net.meta = {"callback": print}
    with pytest.raises(ModelFileError, match="not plain JSON"):
        io.to_dict(net)


# ------------------------------------------------------------- every builder's output
def builder_weather(days: int = 3) -> pd.DataFrame:
    """Clear-sky days from pvlib's Ineichen–Perez model with invented temperatures (round
    trips only; no value here is a reference)."""
    import pvlib

    from thermonet import solar

    site = {"latitude": 48.14, "longitude": 11.58, "elevation": 520.0}
    idx = pd.date_range("2025-04-10 01:00", periods=days * 24, freq="h", tz=TZ)
    sp = solar.solar_position(idx, site["latitude"], site["longitude"], site["elevation"])
    zen = sp["apparent_zenith"].to_numpy()
    am = pvlib.atmosphere.get_absolute_airmass(pvlib.atmosphere.get_relative_airmass(zen),
                                               pvlib.atmosphere.alt2pres(site["elevation"]))
    extra = pvlib.irradiance.get_extra_radiation(np.asarray(idx.day_of_year, dtype=float))
    with np.errstate(divide="ignore", invalid="ignore"):  # night rows (airmass NaN)
        cs = pvlib.clearsky.ineichen(zen, am, 3.0, altitude=site["elevation"], dni_extra=extra)
    w = pd.DataFrame({k: np.nan_to_num(np.asarray(cs[k], dtype=float))
                      for k in ("ghi", "dni", "dhi")}, index=idx)
    hour = np.asarray((idx - pd.Timedelta("30min")).hour, dtype=float)
    w["temp_air"] = 12.0 + 7.0 * np.sin(2 * np.pi * (hour - 9.0) / 24.0)
    w["temp_sky"] = w["temp_air"] - 11.0
    w["temp_ground_2m"] = 9.0
    w.attrs["site"] = site
    return w


def every_builder_network(w: pd.DataFrame):
    """One network using every builder: rooms with every kind of element boundary, windows
    with every shading option, a door, ground slab and basement wall, a buffer space, an
    interzone wall, airflows of every kind, internal gains, a window added by hand, and
    ISO 13790 zones (plain and from a room description)."""
    from thermonet import builders as b
    from thermonet import gains as g
    from thermonet import solar
    from thermonet.builders import templates
    from thermonet.constructions import Construction

    wall = Construction("wall", [("gypsum_plaster_1300", 0.015), ("concrete_2000", 0.2),
                                 ("mineral_wool", 0.16)])
    light = Construction("light", [("gypsum_plasterboard_700", 0.0125),
                                   ("mineral_wool", 0.12), ("softwood", 0.02)])
    roof = Construction("roof", [("concrete_2200", 0.2), ("mineral_wool", 0.3)])
    slab = Construction("slab", [("concrete_2200", 0.15), ("eps", 0.1)])
    net = tn.Network("every builder")
    sun = b.add_buffer(net, "sunspace", floor_area=8, height=2.5, weather=w, elements=[
        b.Element("front", light, 12.0, 90, 180, windows=[b.Window("glass", 8.0, 1.1, 0.6)]),
        b.Element("roof", roof, 8.0, 20, 180)])
    blind = solar.MovableShading(0.25, "irradiance", on_above=250.0, off_below=150.0)
    hot_blind = solar.MovableShading(0.2, "temperature", on_above=24.0, off_below=22.5,
                                     node="living")
    living = b.add_room(
        net, "living", floor_area=40, height=2.6, weather=w, constructions={"wall": wall},
        ground_temperature="temp_ground_2m", furniture_capacity=2e5, elements=[
            b.Element("south", "wall", 20.0, 90, 180, windows=[
                b.Window("w_south", 5.0, 0.8, 0.5, height=1.6, width=3.1,
                         overhang=solar.Overhang(0.8, 0.2, 0.3), fins=solar.Fins(0.3),
                         horizon=([0, 90, 180, 270], [5, 10, 12, 8]), shading=blind),
                b.Window("w_hot", 3.0, 0.9, 0.55, shading=hot_blind)]),
            b.Element("north", wall, 20.0, 90, 0, windows=[b.Door("door", 2.0, 1.2)]),
            b.Element("to_sun", wall, 10.0, 90, 180, boundary=sun,
                      windows=[b.Door("glass_door", 2.0, 1.3, g_value=0.5)]),
            b.Element("party", wall, 15.0, 90, 90, boundary=b.Adjacent(18.0)),
            b.Element("west", light, 8.0, 90, 270, boundary=16.0),
            b.Element("roof", roof, 40.0, 0, 180),
            b.Element("slab", slab, 25.0, 180, 0, boundary="ground", perimeter=20.0),
            b.Element("cellar_wall", wall, 15.0, 90, 0, boundary="ground", depth=1.5)],
        solar_distribution="area")
    office = b.add_room(net, "office", floor_area=12, height=2.6, weather=w, elements=[
        b.Element("east", wall, 10.0, 90, 90, windows=[b.Window("w_east", 2.0, 0.8, 0.5)]),
        b.Element("to_living", light, 9.0, 90, 270, boundary=living)])
    b.add_infiltration(net, living, n50=1.0)
    b.add_infiltration(net, office, q50=1.5, envelope_area=60.0)
    b.add_infiltration(net, sun, ach=1.0)
    sched = pd.Series(np.where(np.asarray(w.index.hour) < 8, 0.5, 1.0), index=w.index)
    b.add_ventilation(net, living, flow_m3h=120.0, heat_recovery=0.8, schedule=sched,
                      bypass=tn.above("living", 23.0) & tn.warmer("living", "outdoor", 2.0))
    b.add_window_opening(net, office, ach=4.0,
                         open_when=b.night_ventilation("office", indoor_above=22.0))
    b.add_buffer_exchange(net, living, sun, flow_m3h=30.0, schedule=sched)
    g.add_internal_gains(net, living, [g.occupants(3), g.lighting(3.0), g.appliances(2.0)],
                         w.index)
    net.add_node("workshop", kind="air", capacitance=3e5, volume=60.0)
    net.add_link("outdoor", "workshop", conductance=25.0, path="opaque")
    b.add_window(net, "workshop", b.Window("w_shop", 3.0, 1.0, 0.6), azimuth=225.0,
                 weather=w)
    z = templates.add_iso13790_zone(net, "flat", floor_area=50.0, h_tr_op=40.0, h_tr_w=20.0,
                                     internal_gains=g.total_gains([g.occupants(2)], w.index),
                                     solar_gains=w["ghi"] * 2.0, volume=125.0)
    b.add_infiltration(net, z, ach=0.4)
    templates.iso13790_from_room(net, "annex", floor_area=20.0, height=2.5, weather=w,
                                 internal_gains=200.0, elements=[
                                     b.Element("s", wall, 12.0, 90, 180,
                                               windows=[b.Window("w_annex", 3.0, 0.8, 0.5)]),
                                     b.Element("r", roof, 20.0, 0, 180)])
    for zone in ("living", "office", "flat", "annex"):
        net.add_thermostat(zone, heating_setpoint=20.0, cooling_setpoint=26.0)
    return net


def test_round_trip_of_every_builders_output_gives_identical_results(tmp_path):
    from thermonet.builders import rooms
    from thermonet.builders.templates import iso13790_zones

    w = builder_weather()
    net = every_builder_network(w)
    back = io.load_model(io.save_model(net, tmp_path / "built.json"))
    assert repr(back) == repr(net)
    r1 = tn.simulate(net, w, warmup_days=1)
    r2 = tn.simulate(back, w, warmup_days=1)
    assert_identical(r1, r2)
    # the builders' records travel with the model: the same rooms and zones, the same
    # balance of each room's control volume, bit for bit
    assert rooms(back) == rooms(net) and set(rooms(net)) == {"sunspace", "living", "office"}
    assert iso13790_zones(back) == iso13790_zones(net)
    assert set(iso13790_zones(net)) == {"flat", "annex"}
    for name, room in rooms(back).items():
        a = r1.balance(rooms(net)[name].nodes, freq="D")
        b = r2.balance(room.nodes, freq="D")
        assert np.array_equal(a.to_numpy(), b.to_numpy()), name
    # the model really exercises what it claims: switches act, solar and ground paths carry
    assert r1.info["states"] > 1
    bal = r1.balance(rooms(net)["living"].nodes).sum()
    assert bal["solar"] > 0 and bal["ground"] < 0 and bal["buffer"] != 0
    # a loaded room can be extended like the original one
    from thermonet.builders import add_infiltration

    ln = add_infiltration(back, rooms(back)["office"], ach=0.1, name="office:extra")
    assert ln in rooms(back)["office"].links


# ----------------------------------------------------- the remaining documented file errors
def _sched_key(d):
    return d["network"]["boundaries"][3]["temperature"]["schedule"]


def _set_schedule(value):
    def edit(d):
        d["network"]["schedules"][_sched_key(d)] = value
    return edit


def _edit_schedule(key, value):
    def edit(d):
        d["network"]["schedules"][_sched_key(d)][key] = value
    return edit


def _first_switch(key, value):
    def edit(d):
        d["network"]["switches"][0][key] = value
    return edit


def _first_term(value):
    def edit(d):
        d["network"]["switches"][0]["on"]["any"][0][0] = value
    return edit


FILE_ERRORS = [
    ("empty node name", lambda d: d["network"]["nodes"][0].update(name=""),
     r"nodes\[0\].*\.name: must be a non-empty string"),
    ("bad timestamp", _set_schedule({"index": ["noon", "2025-06-01T02:00:00+01:00"],
                                     "values": [1.0, 2.0]}),
     r"index\[0\]: is not an ISO-8601 timestamp: 'noon'"),
    ("zero step", _edit_schedule("step", "0min"), r"\.step: must be positive"),
    ("negative step", _edit_schedule("step", "-1h"), r"\.step: must be positive"),
    ("no values", _edit_schedule("values", []), r"\.values: must hold at least one value"),
    ("mixed offsets", _set_schedule({"index": ["2025-03-30T01:00:00+01:00",
                                               "2025-03-30T03:00:00+02:00"],
                                     "values": [1.0, 2.0]}),
     r"different UTC offsets; add \"tz\""),
    ("meta not an object", lambda d: d["network"].update(meta=[1, 2]),
     r"network.meta: must be a JSON object, got array"),
    ("schedules not an object", lambda d: d["network"].update(schedules=[]),
     r"network.schedules: must be a JSON object \{key: schedule\}, got array"),
    ("switch links not an object", _first_switch("links", ["window"]),
     r"switches\[0\].*\.links: must be a JSON object \{link name: factor\}"),
    ("factor pair of three", _first_switch("links", {"window": [0.0, 1.0, 2.0]}),
     r"links\['window'\]: must be a factor or \[factor_off, factor_on\]"),
    ("factor not a number", _first_switch("links", {"window": "open"}),
     r"links\['window'\]: must be a number, got string"),
    ("hours of one number", _first_term({"hours": [22]}), r"\.hours: must be \[start, end\]"),
    ("empty clause", lambda d: d["network"]["switches"][0]["on"]["any"].append([]),
     r"on\.any\[1\]: a clause needs at least one term"),
    ("term without a or op", _first_term({"threshold": 1.0}),
     r"a term is either \{\"hours\": \[start, end\]\}"),
    ("reference of wrong type", _first_term({"a": 5, "op": ">", "threshold": 1.0}),
     r"\.a: must be a node/boundary name or \{\"signal\": schedule key\}"),
    ("signal to missing schedule", _first_term({"a": {"signal": "nope"}, "op": ">",
                                                "threshold": 1.0}),
     r"refers to schedule 'nope'"),
]


@pytest.mark.parametrize(("edit", "match"), [c[1:] for c in FILE_ERRORS],
                         ids=[c[0] for c in FILE_ERRORS])
def test_each_documented_file_error(good, edit, match):
    io.from_dict(copy.deepcopy(good))  # the untouched model loads
    edit(good)
    _err(good, match)


def test_deeply_nested_json_is_refused():
    text = '{"format": "thermonet-model", "schema_version": 1, "network": ' + "[" * 100_000 \
        + "]" * 100_000 + "}"
    with pytest.raises(ModelFileError, match="nested too deeply|must be a JSON object"):
        io.loads(text)


def test_save_refuses_values_json_cannot_hold(weather):
    base = tn.Network()
    base.add_boundary("out", temperature="temp_air")
    base.add_node("n", capacitance=1e5)
    base.add_link("out", "n", conductance=1.0, path="p")
    net = copy.deepcopy(base)
    net.meta = {"limit": math.inf}
    with pytest.raises(ModelFileError, match=r"network meta.*inf is not a finite number"):
        io.to_dict(net)
    net.meta = {1: "one"}
    with pytest.raises(ModelFileError, match="keys must be strings, got 1"):
        io.to_dict(net)
    with pytest.raises(ModelFileError, match="weather_columns must be a list"):
        io.to_dict(base, weather_columns="temp_air")
    net = copy.deepcopy(base)
    net.add_boundary("b", temperature=pd.Series(1.0, index=weather.index))
    net.add_link("b", "n", conductance=1.0, path="p")
    net.boundaries["b"].temperature.iloc[1] = np.nan  # edited after add_boundary checked it
    with pytest.raises(ModelFileError, match="NaN/inf values are not allowed"):
        io.to_dict(net)
    net = copy.deepcopy(base)
    net.add_node("s", capacitance=1e4)
    rad = net.add_radiation("n", "s", area=5.0, path="radiation")
    net.links[rad].conductance = 1.0  # no longer what area and emissivities say
    with pytest.raises(ModelFileError, match="changed after add_radiation"):
        io.to_dict(net)
