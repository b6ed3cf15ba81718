"""Occupancy schedules and window-opening rules switching a real small network.

Weather: NREL TMY3 station 723170 (Greensboro, NC) shipped with pvlib
(pvlib/data/723170TYA.CSV), July. The one-room network and the rule thresholds are test
inputs. What is checked is the switching logic, step by step, against the rule written out
here from the documented semantics of thermonet.controls (a condition reads the room at the
end of the previous step and the boundary and signals of the current step), and the flow of
the open window against ρc_p·V̇·ΔT with ρc_p = 1200 J/(m³K) (ISO 13789, from memory).
"""

from __future__ import annotations

import itertools
import pathlib

import numpy as np
import pandas as pd
import pvlib
import pytest

import thermonet as tn
from thermonet import occupancy as oc
from thermonet.controls import HourWindow, Signal
from thermonet.errors import NetworkError, ScheduleError
from thermonet.weather import read_tmy3

TMY3_FILE = pathlib.Path(pvlib.__file__).parent / "data" / "723170TYA.CSV"
FLOW_M3H = 300.0
G_OPEN = FLOW_M3H * 1200.0 / 3600.0        # 100 W/K fully open (ISO 13789 ρc_p)


@pytest.fixture(scope="module")
def july():
    wx = read_tmy3(TMY3_FILE)
    return wx.loc["2025-07-01 01:00":"2025-07-11 00:00"].copy()


def room_network(weather):
    net = tn.Network()
    net.add_boundary("outdoor", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=4e5)
    net.add_link("outdoor", "room", conductance=40.0, path="opaque")
    net.add_source("room", power=weather["ghi"] * 0.6, path="solar")
    net.add_source("room", power=150.0, path="internal")
    win = net.add_airflow("outdoor", "room", flow_m3h=FLOW_M3H, path="window_ventilation",
                          name="window")
    return net, win


def previous_room(res):
    """Room temperature at the end of the previous step, aligned to each step (NaN at 0)."""
    return res.temperatures["room"].shift(1)


def test_tm59_schedules():
    idx = pd.date_range("2025-07-07 01:00", periods=24 * 7, freq="h", tz="Etc/GMT+5")
    living = oc.occupancy(idx, "living")
    bedroom = oc.occupancy(idx, "bedroom")
    # TM59 (from memory): living rooms 09:00–22:00 = 13 h a day; bedrooms all day
    assert living.sum() == 13 * 7 and bedroom.sum() == 24 * 7
    # hour-ending rows: 09:00–10:00 is labelled 10:00, 21:00–22:00 is labelled 22:00
    assert living.loc["2025-07-07 10:00"] == 1.0 and living.loc["2025-07-07 09:00"] == 0.0
    assert living.loc["2025-07-07 22:00"] == 1.0 and living.loc["2025-07-07 23:00"] == 0.0
    # TM59 bedroom criterion night 22:00–07:00: 9 hour-ending rows 23:00 … 07:00 per night
    assert oc.night(idx).loc["2025-07-08 01:00":"2025-07-09 00:00"].sum() == 9
    assert oc.sleeping(idx).loc["2025-07-08 01:00":"2025-07-09 00:00"].sum() == 9
    own = oc.occupancy(idx, "office", start="08:00", end="18:00")
    assert own.sum() == 10 * 7 and own.name == "occupied office"
    with pytest.raises(ScheduleError, match="room must be one of"):
        oc.occupancy(idx, "office")


def evaluate(cond, values):
    """Truth of a condition (OR of AND-clauses of terms) for given reference values."""
    def value(ref):
        return 0.0 if ref is None else values[ref]
    def term(t):
        d = value(t.a) - value(t.b)
        return d > t.threshold if t.op == ">" else d < t.threshold
    return any(all(term(t) for t in clause) for clause in cond.clauses)


def test_negate_is_the_complement():
    # De Morgan: ¬(a ∨ b) = ¬a ∧ ¬b and ¬(a ∧ b) = ¬a ∨ ¬b, checked on a truth table
    c = (tn.above("r", 24.0) & tn.warmer("r", "o", by=1.0)) | tn.below("o", 10.0)
    n = oc.negate(c)
    # with values on the thresholds: r = 24, o = 10 and r − o = 1 exactly (25.5 − 24.5)
    grid = [20.5, 24.0, 24.5, 25.5, 26.5]
    for r, o in itertools.product(grid, [5.5, 10.0, 23.5, 24.5, 25.5]):
        vals = {"r": r, "o": o}
        assert evaluate(n, vals) == (not evaluate(c, vals))
        assert evaluate(oc.negate(n), vals) == evaluate(c, vals)


def test_airing_rule_switches_the_window(july):
    net, win = room_network(july)
    living = oc.occupancy(july.index, "living")
    rule = oc.airing("room", "outdoor", living, threshold=26.0)
    oc.add_opening_switch(net, win, rule)
    res = tn.simulate(net, july, warmup_days=2)
    prev = previous_room(res)
    expected = (living > 0.5) & (prev > 26.0) & (prev > july["temp_air"])
    is_open = res.flows["window"] != 0.0
    assert is_open.iloc[1:].equals(expected.iloc[1:])
    assert 20 < is_open.sum() < len(is_open) - 20          # both states occur
    # open means the full flow: ρc_p·V̇·(T_out − T_room, step means)
    f = res.flows["window"][is_open]
    dt = (res.mean_temperatures["outdoor"] - res.mean_temperatures["room"])[is_open]
    np.testing.assert_allclose(f, G_OPEN * dt, rtol=1e-9, atol=1e-9)


def test_closing_overrides_and_partly_open(july):
    weather = july.copy()
    # an invented rain column (input of the test): rain from noon to 18:00 on three days
    rain = np.zeros(len(weather))
    hours_of_day = weather.index.hour
    wet_days = weather.index.day.isin([4, 6, 8])
    rain[wet_days & (hours_of_day >= 13) & (hours_of_day <= 18)] = 1.5
    weather["precipitation"] = rain
    net, win = room_network(weather)
    living = oc.occupancy(weather.index, "living")
    rule = oc.open_unless(oc.airing("room", "outdoor", living, threshold=25.0),
                          oc.outdoor_hotter("room", "outdoor"),
                          oc.strong_wind(weather, 4.0),
                          oc.raining(weather))
    oc.add_opening_switch(net, win, rule, fraction=0.4)
    res = tn.simulate(net, weather, warmup_days=2)
    prev = previous_room(res)
    t_out = weather["temp_air"]
    expected = ((living > 0.5) & (prev > 25.0) & (prev > t_out)
                & ~(t_out > prev) & ~(weather["wind_speed"] > 4.0)
                & ~(weather["precipitation"] > 0.0))
    is_open = res.flows["window"] != 0.0
    assert is_open.iloc[1:].equals(expected.iloc[1:])
    assert is_open.sum() > 10
    # each override closed the window at least once where the airing rule alone would open
    airing_only = (living > 0.5) & (prev > 25.0) & (prev > t_out)
    assert (airing_only & (weather["wind_speed"] > 4.0) & ~is_open).sum() > 0
    assert (airing_only & (weather["precipitation"] > 0.0) & ~is_open).sum() > 0
    # partly open: 40 % of the full conductance
    dt = (res.mean_temperatures["outdoor"] - res.mean_temperatures["room"])[is_open]
    np.testing.assert_allclose(res.flows["window"][is_open], 0.4 * G_OPEN * dt, rtol=1e-9,
                               atol=1e-9)


def test_bedroom_night_rule(july):
    net, win = room_network(july)
    oc.add_opening_switch(net, win, oc.bedroom_night("room", "outdoor", threshold=24.0))
    res = tn.simulate(net, july, warmup_days=2)
    prev = previous_room(res)
    night = oc.night(july.index)               # 22:00–07:00, TM59 bedroom window
    expected = (night > 0.5) & (prev > 24.0) & (prev > july["temp_air"])
    is_open = res.flows["window"] != 0.0
    assert is_open.iloc[1:].equals(expected.iloc[1:])
    assert is_open.sum() > 10 and not is_open[night < 0.5].any()


def test_bad_input():
    idx = pd.date_range("2025-07-01 01:00", periods=4, freq="h", tz="Etc/GMT+5")
    weather = pd.DataFrame({"temp_air": 20.0}, index=idx)
    with pytest.raises(ScheduleError, match="'precipitation'"):
        oc.raining(weather)
    with pytest.raises(ScheduleError, match="'wind_speed'"):
        oc.strong_wind(weather, 8.0)
    net = tn.Network()
    net.add_boundary("outdoor", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=1e5)
    win = net.add_airflow("outdoor", "room", flow_m3h=100.0, path="window_ventilation")
    with pytest.raises(NetworkError, match="fraction"):
        oc.add_opening_switch(net, win, tn.above("room", 24.0), fraction=1.5)
    with pytest.raises(TypeError, match="Condition"):
        oc.negate("room > 24")


def test_conditions_are_built_from_the_public_terms():
    idx = pd.date_range("2025-07-01 01:00", periods=4, freq="h", tz="Etc/GMT+5")
    cond = oc.bedroom_night("bed", "out") & oc.occupied(pd.Series(1.0, index=idx))
    refs = [t.a for t in cond.terms()]
    assert "bed" in refs
    assert any(isinstance(r, HourWindow) for r in refs)
    assert any(isinstance(r, Signal) for r in refs)
