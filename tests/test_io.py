"""Model files (thermonet.io): lossless round trip and one test per documented ModelFileError.

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
from thermonet import io
from thermonet.errors import ModelFileError, NetworkError

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
