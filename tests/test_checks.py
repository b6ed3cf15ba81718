"""Plausibility on every path (thermonet.checks): errors for the impossible, warnings that
name the column, node or element for the implausible.

The validated readers had these checks; a plain DataFrame, a boundary or setpoint Series, a
schedule or a network edited after it was built reached the solver unchecked (a weather in
kelvin gave 0 kWh of heating, a boundary in kelvin a room at 272 °C). Every case here is
one of those paths. Ranges are thermonet's own (common practice, no source, as documented
in thermonet.checks); 273.15 K = 0 °C is the definition of the Celsius scale (BIPM SI
Brochure, 9th ed. 2019, §2.3.1).
"""

from __future__ import annotations

import copy
import warnings

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet import checks
from thermonet.errors import (
    AccuracyWarning,
    NetworkError,
    PlausibilityWarning,
    ThermonetWarning,
    WeatherError,
)

IDX = pd.date_range("2025-06-01 01:00", periods=72, freq="h", tz="Etc/GMT-1")
HOUR = np.arange(72) % 24
SUN = np.clip(np.sin((HOUR - 6) / 12 * np.pi), 0, None)


def plain_weather(**cols) -> pd.DataFrame:
    """Three invented summer days (plain DataFrame, not through the validated readers)."""
    df = pd.DataFrame({"temp_air": 15.0 + 8.0 * SUN, "ghi": 800.0 * SUN, "dni": 600.0 * SUN,
                       "dhi": 150.0 * SUN}, index=IDX)
    for k, v in cols.items():
        df[k] = v
    return df


def room(**kw) -> tn.Network:
    net = tn.Network()
    net.add_boundary("outdoor", temperature=kw.get("boundary", "temp_air"))
    net.add_node("room", kind="air", capacitance=kw.get("c", 2e5))
    net.add_link("outdoor", "room", conductance=kw.get("g", 50.0), path="opaque")
    if "setpoint" in kw:
        net.add_thermostat("room", heating_setpoint=kw["setpoint"])
    return net


def quiet(fn, *a, **k):
    """Run ``fn`` and fail on any thermonet warning."""
    with warnings.catch_warnings():
        warnings.simplefilter("error", ThermonetWarning)
        return fn(*a, **k)


def test_plausible_inputs_pass_without_a_warning():
    quiet(checks.check_simulation_inputs, room(setpoint=20.0), plain_weather(), 2.0)


def test_weather_in_kelvin_on_a_plain_frame_is_refused():
    w = plain_weather(temp_air=288.15 + 8.0 * SUN)
    with pytest.raises(WeatherError, match="weather column 'temp_air': median .* looks like "
                                           "kelvin.*subtract 273.15"):
        checks.check_simulation_inputs(room(), w, 2.0)


def test_boundary_series_in_kelvin_is_refused_naming_the_boundary():
    net = room(boundary=pd.Series(293.15, index=IDX))
    with pytest.raises(NetworkError, match="boundary 'outdoor' temperature: median 293.1"):
        checks.check_simulation_inputs(net, plain_weather(), 2.0)


def test_below_absolute_zero_is_refused():
    w = plain_weather(temp_dew=np.r_[-300.0, np.zeros(71)])
    with pytest.raises(WeatherError, match="'temp_dew': -300.0 °C at 2025-06-01 01:00.*"
                                           "below absolute zero"):
        checks.check_simulation_inputs(room(), w, 2.0)


def test_irradiance_in_kilowatts_warns_on_both_paths():
    w = plain_weather(ghi=0.8 * SUN)  # one column mixed up
    with pytest.warns(PlausibilityWarning, match="weather column 'ghi': .* looks like kW/m²"):
        checks.check_simulation_inputs(room(), w, 2.0)
    with pytest.warns(PlausibilityWarning, match="looks like kW/m²"):
        tn.weather.from_dataframe(w, latitude=48.3, longitude=11.9, closure_limits=None)


def test_impossible_and_negative_irradiance():
    with pytest.raises(WeatherError, match="'dni': 5000 W/m² .* impossible at the ground"):
        checks.check_simulation_inputs(room(), plain_weather(dni=5000.0 * SUN), 2.0)
    with pytest.warns(PlausibilityWarning, match="'dhi': 1 negative value.*-2 W/m²"):
        checks.check_irradiance(pd.Series(np.r_[-2.0, 150.0 * SUN[1:]], index=IDX),
                                "weather column 'dhi'")


@pytest.mark.parametrize("setpoint, outcome", [(1e9, "impossible"), (295.0, "kelvin"),
                                               (65.0, "warn"),
                                               (pd.Series(np.full(72, 20.0), index=IDX), "ok")])
def test_setpoints(setpoint, outcome):
    net = room(setpoint=setpoint)
    if outcome in ("impossible", "kelvin"):
        what = "looks like kelvin" if outcome == "kelvin" else "1e\\+09 °C is impossible"
        with pytest.raises(NetworkError, match="thermostat 'thermostat:room' "
                                               f"heating_setpoint: median .*{what}"):
            checks.check_simulation_inputs(net, plain_weather(), 2.0)
    elif outcome == "warn":
        with pytest.warns(PlausibilityWarning, match="thermostat 'thermostat:room' "
                          "heating_setpoint: 1 value.*0 … 50 °C, first 65 °C \\(constant\\)"):
            checks.check_simulation_inputs(net, plain_weather(), 2.0)
    else:
        quiet(checks.check_simulation_inputs, net, plain_weather(), 2.0)


def test_absurd_time_constant_warns_naming_the_node():
    net = room(c=1e12, g=1e-12)
    with pytest.warns(PlausibilityWarning, match="node 'room': time constant C/ΣG = 1e\\+12 "
                                                 "J/K / 1e-12 W/K"):
        checks.check_simulation_inputs(net, plain_weather(), 2.0)
    # a deep ground node (C = 2e9 J/K behind 50 W/K, ~1.3 years) is plausible
    quiet(checks.check_time_constants, room(c=2e9, g=50.0))


def test_warmup_longer_than_the_data_warns():
    with pytest.warns(AccuracyWarning, match="warmup_days=1e\\+06 is longer than the weather "
                                             "\\(72 rows, 3 days\\)"):
        checks.check_simulation_inputs(room(), plain_weather(), 1e6)
    quiet(checks.check_warmup, plain_weather(), 3.0)        # exactly the data: fine
    quiet(checks.check_warmup, plain_weather(), checks.DEFAULT_WARMUP_DAYS)  # documented cut


def test_series_edited_in_place_after_adding_is_caught():
    s = pd.Series(5.0, index=IDX)
    net = room(boundary=s)
    net.boundaries["outdoor"].temperature.iloc[3] = np.nan  # the stored Series itself
    with pytest.raises(NetworkError, match="boundary 'outdoor' temperature .*1 NaN/inf.*"
                                           "2025-06-01 04:00"):
        checks.check_simulation_inputs(net, plain_weather(), 2.0)
    net = tn.Network()
    net.add_boundary("o", temperature=0.0)
    net.add_node("n", capacitance=1e5)
    net.add_link("o", "n", conductance=pd.Series(10.0, index=IDX), path="p")
    net.links["o-n:p"].conductance.iloc[0] = -5.0
    with pytest.raises(NetworkError, match="link 'o-n:p' conductance .*-5.0 .* below the "
                                           "allowed 0.0"):
        checks.check_network_values(net)


def test_results_far_outside_building_range_warn_naming_the_node():
    t = pd.DataFrame({"room": np.r_[20.0, 272.0, 21.0], "slab": [20.0, 20.5, 21.0]})
    with pytest.warns(PlausibilityWarning, match="1 node\\(s\\) leave .* 'room' \\(20 … 272 "
                                                 "°C\\)"):
        checks.check_results(t)
    quiet(checks.check_results, t[["slab"]])


def test_checks_change_nothing():
    w = plain_weather()
    net = room(setpoint=20.0)
    w0, net0 = w.copy(), copy.deepcopy(net)
    checks.check_simulation_inputs(net, w, 2.0)
    pd.testing.assert_frame_equal(w, w0)
    assert repr(net) == repr(net0) and net.thermostats == net0.thermostats
