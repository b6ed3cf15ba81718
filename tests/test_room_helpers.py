"""Room operative temperature, periods by interval mid-point, and the notebook views."""

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet import comfort, display, periods
from thermonet.builders import Element, Window, add_room, rooms
from thermonet.constructions import Construction
from thermonet.errors import ScheduleError

WALL = Construction("wall", [("concrete_2000", 0.15), ("mineral_wool", 0.12)])


def _room_run(hours=96):
    index = pd.date_range("2025-01-06 01:00", periods=hours, freq="h", tz="Etc/GMT-1")
    t_out = 5.0 + 5.0 * np.sin(2 * np.pi * np.arange(hours) / 24.0)
    weather = pd.DataFrame({"temp_air": t_out}, index=index)
    net = tn.Network("one room")
    room = add_room(net, "room", floor_area=20.0, height=2.5, sky=None, elements=[
        Element("south", WALL, 12.0, 90, 180, windows=[Window("w", 3.0, 1.2, 0.5)]),
        Element("roof", WALL, 20.0, 0, 180)])
    net.add_thermostat(room.air, heating_setpoint=20.0)
    return net, room, tn.simulate(net, weather, warmup_days=2)


def test_room_operative_temperature_follows_the_iso7726_weighting():
    net, room, res = _room_run()
    top = comfort.room_operative_temperature(res, room)
    mrt = comfort.room_mean_radiant_temperature(res, room)
    air = res.mean_temperatures[room.air]
    # ISO 7726: θop = A θair + (1 − A) θmr; A = 1 is the air, A = 0 the radiant temperature
    pd.testing.assert_series_equal(
        comfort.room_operative_temperature(res, room, weight_air=1.0), air.rename("operative"))
    np.testing.assert_allclose(
        comfort.room_operative_temperature(res, room, weight_air=0.0), mrt, atol=1e-12)
    lo = np.minimum(air, mrt).to_numpy()
    hi = np.maximum(air, mrt).to_numpy()
    assert ((top.to_numpy() >= lo - 1e-12) & (top.to_numpy() <= hi + 1e-12)).all()
    # the mean radiant temperature lies within the range of the room's surface temperatures
    surf = res.mean_temperatures[list(room.surfaces.values())]
    assert ((mrt >= surf.min(axis=1) - 1e-12) & (mrt <= surf.max(axis=1) + 1e-12)).all()
    assert top.attrs["unit"] == "°C"
    # the record found again from the network gives the same
    pd.testing.assert_series_equal(comfort.room_operative_temperature(res, rooms(net)["room"]),
                                   top)


def test_room_helpers_refuse_what_is_not_a_room_or_a_result():
    net, room, res = _room_run(48)
    with pytest.raises(TypeError, match="room record"):
        comfort.room_operative_temperature(res, "room")
    with pytest.raises(TypeError, match="simulate"):
        comfort.room_mean_radiant_temperature(object(), room)


def test_monthly_sums_keep_each_hour_in_its_month():
    # a year of hour-ending labels: January has 744 h, February 672 h (calendar of 2025)
    index = pd.date_range("2025-01-01 01:00", periods=8760, freq="h", tz="Etc/GMT-1")
    ones = pd.Series(1.0, index=index)
    assert len(ones.resample("MS").sum()) == 13  # the naive way makes a 13th month
    monthly = periods.period_sums(ones, "MS")
    assert len(monthly) == 12
    assert monthly.iloc[:3].tolist() == [744.0, 672.0, 744.0]
    assert periods.period_hours(index, "MS").sum() == 8760.0
    daily_energy = periods.period_energy(pd.Series(1000.0, index=index), "D")
    assert daily_energy.iloc[0] == pytest.approx(24.0) and daily_energy.attrs["unit"] == "kWh"
    ramp = pd.Series(np.arange(8760.0), index=index)
    assert periods.period_means(ramp, "D").iloc[1] == pytest.approx(np.arange(24, 48).mean())
    assert periods.period_max(ramp, "MS").iloc[0] == 743.0


def test_period_sums_of_a_balance_equal_balance_with_freq():
    _, room, res = _room_run(24 * 40)
    per_step = res.balance(room.nodes)
    pd.testing.assert_frame_equal(periods.period_sums(per_step, "MS").drop(columns="residual"),
                                  res.balance(room.nodes, "MS").drop(columns="residual"))


def test_periods_refuse_irregular_or_naive_indexes():
    naive = pd.Series(1.0, index=pd.date_range("2025-01-01", periods=5, freq="h"))
    with pytest.raises(ScheduleError, match="tz-aware"):
        periods.period_sums(naive, "D")
    gap = pd.Series(1.0, index=naive.index.delete(2).tz_localize("UTC"))
    with pytest.raises(ScheduleError, match="constant step"):
        periods.period_means(gap, "D")
    with pytest.raises(TypeError):
        periods.period_sums([1.0, 2.0], "D")


def test_notebook_views_show_the_totals():
    net, room, res = _room_run(48)
    tables = display.network_tables(net)
    opaque = tables["links"].loc[("opaque", "conductance"), "total conductance UA [W/K]"]
    assert opaque == pytest.approx(sum(ln.conductance for ln in net.links.values()
                                       if ln.path == "opaque"))
    caps = sum(n.capacitance for n in net.nodes.values()) / 1e6
    assert tables["nodes"]["total capacitance [MJ/K]"].sum() == pytest.approx(caps)
    html = net._repr_html_()
    assert "Links by path" in html and "opaque" in html
    page = WALL._repr_html_()
    assert f"U = {round(WALL.u_value(), 3):g} W" in page and "decrement factor" in page
    text = str(WALL.dynamic_characteristics())
    assert len(text.splitlines()) > 8 and "time shift" in text
    assert "Results" in display.results_html(res)
    assert res._repr_html_() == display.results_html(res)
    top = comfort.room_operative_temperature(res, room)
    crit = comfort.very_low_energy_overheating(top)
    assert ("pass" in crit._repr_html_()) == crit.passed
