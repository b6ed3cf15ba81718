"""Window links: a flow law re-evaluated every step by the engine.

Checks (source beside each):
* the engine's scalar form of each law equals the named functions of
  :mod:`thermonet.airflow` on random inputs (those functions are checked by hand from the
  published equations in ``tests/test_airflow.py``: de Gids & Phaff 1982, EN 16798-7:2017
  (from memory), BS 5925:1991);
* limits of the laws: no wind and no temperature difference give no flow (EN 16798-7, BS 5925);
  stack flow grows as √ΔT (BS 5925:1991, the orifice equation);
* the compiled kernel equals the numpy reference loop (twins) and the batch path equals single
  runs, with thermostats, switches and a window between two rooms;
* a law whose conductance does not depend on the state (cross ventilation at constant wind)
  gives exactly the result of an ordinary link of that conductance (the exact step);
* against an independent fine solution of the same model — scipy's LSODA on the nonlinear
  ODE with the conductance re-evaluated continuously (Hindmarsh 1983; scipy.integrate) — over a
  summer month of pvlib's shipped Greensboro typical year: room air within 0.1 K with 15-minute
  steps;
* every balance closes to rounding; model files round-trip window links bit for bit.
"""

from __future__ import annotations

import pathlib

import numpy as np
import pandas as pd
import pvlib
import pytest
from scipy.integrate import solve_ivp

import thermonet as tn
from thermonet import airflow as af
from thermonet.engine.batch import run_batch

TZ = "Etc/GMT-1"
HOURS = 24 * 6
IDX = pd.date_range("2025-07-01 01:00", periods=HOURS, freq="h", tz=TZ)
_t = np.arange(HOURS)
WEATHER = pd.DataFrame({
    "temp_air": 21 + 7 * np.sin(2 * np.pi * (_t - 9) / 24),
    "wind_speed": 2.5 + 2.0 * np.sin(_t / 5.0) ** 2,
}, index=IDX)
SUN = pd.Series(np.clip(1500 * np.sin(2 * np.pi * (_t - 6) / 24), 0, None), index=IDX)

LAWS = {
    "de_gids_phaff": (dict(area=0.7, height=1.3),
                      lambda ti, te, u: af.single_sided_de_gids_phaff(0.7, 1.3, ti, te, u)),
    "en16798_7": (dict(area=0.7, height=1.3),
                  lambda ti, te, u: af.single_sided_en16798_7(0.7, 1.3, ti, te, u)),
    "bs5925_single": (dict(area=0.7, height=1.3),
                      lambda ti, te, u: af.single_opening_stack_bs5925(0.7, 1.3, ti, te)),
    "stack_two_openings": (dict(area_1=0.4, area_2=0.6, height_difference=2.5),
                           lambda ti, te, u: af.stack_flow(0.4, 0.6, 2.5, ti, te)),
    "cross_wind": (dict(area_1=0.4, area_2=0.6, cp_1=0.7, cp_2=-0.35),
                   lambda ti, te, u: af.cross_flow_wind(0.4, 0.6, u, 0.7, -0.35)),
}


@pytest.mark.parametrize("law", sorted(LAWS))
def test_scalar_law_equals_the_named_function(law):
    kw, ref = LAWS[law]
    coef = af.flow_law_coefficients(law, **kw)
    rng = np.random.default_rng(3)
    ti, te = rng.uniform(-15, 40, 200), rng.uniform(-15, 40, 200)
    u = rng.uniform(0, 15, 200)
    got = np.array([af.law_flow(coef, a, b, c) for a, b, c in zip(ti, te, u, strict=True)])
    np.testing.assert_allclose(got, np.asarray(ref(ti, te, u), dtype=float), rtol=1e-12,
                               atol=0.0)


def test_law_limits():
    # EN 16798-7 and BS 5925: no wind and no temperature difference → no flow
    for law in ("en16798_7", "bs5925_single"):
        c = af.flow_law_coefficients(law, **LAWS[law][0])
        assert af.law_flow(c, 20.0, 20.0, 0.0) == 0.0
    # stack flow ∝ √ΔT (orifice equation, BS 5925:1991): EN 16798-7 without wind and with the
    # outdoor temperature fixed (its density ratio depends on the outdoor side only)
    c = af.flow_law_coefficients("en16798_7", area=1.0, height=1.0)
    assert af.law_flow(c, 24.0, 20.0, 0.0) / af.law_flow(c, 21.0, 20.0, 0.0) == pytest.approx(
        2.0, rel=1e-12)
    # de Gids–Phaff's turbulence term: 0.05·A m³/s with no wind and no ΔT (its c3 = 0.01)
    c = af.flow_law_coefficients("de_gids_phaff", area=2.0, height=1.0)
    assert af.law_flow(c, 20.0, 20.0, 0.0) == pytest.approx(0.1, rel=1e-12)


def rooms(case: str = "one") -> tn.Network:
    """A room with a wall and a window link; ``case`` adds controls or a second room."""
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=2.5e5, volume=60.0)
    net.add_node("wall", kind="mass", capacitance=8e6)
    net.add_node("glass", kind="surface", capacitance=0.0)
    net.add_link("room", "wall", conductance=180.0, path="internal")
    net.add_link("wall", "out", conductance=25.0, path="opaque")
    net.add_link("room", "glass", conductance=30.0, path="glazing")
    net.add_link("glass", "out", conductance=45.0, path="glazing")
    net.add_source("wall", power=SUN, path="solar")
    net.add_source("room", power=200.0, path="internal")
    w = net.add_window_flow("room", "out", law="de_gids_phaff", area=0.6, height=1.2)
    if case in ("thermostat", "switch", "two_rooms"):
        net.add_thermostat("room", heating_setpoint=22.0, cooling_setpoint=25.5,
                           max_cooling_w=600.0)
    if case == "switch":
        net.add_switch(on=tn.above("room", 24.0) & tn.warmer("room", "out", 1.0),
                       off=tn.below("room", 23.0), links={w: (0.0, 0.7)})
    if case == "two_rooms":
        net.add_node("bed", kind="air", capacitance=1.5e5, volume=35.0)
        net.add_link("bed", "out", conductance=20.0, path="opaque")
        net.add_source("bed", power=150.0, path="internal")
        net.add_window_flow("room", "bed", law="bs5925_single", area=1.6, height=2.0,
                            path="door")
        net.add_thermostat("bed", heating_setpoint=18.0)
    return net


def _closes(res, nodes):
    b = res.balance(nodes)
    scale = b.drop(columns="residual").abs().to_numpy().max()
    assert np.abs(b["residual"].to_numpy()).max() <= 1e-9 * scale


@pytest.mark.parametrize("case", ["one", "thermostat", "switch", "two_rooms"])
def test_kernel_equals_reference_and_balance_closes(case):
    net = rooms(case)
    fast = tn.simulate(net, WEATHER, warmup_days=1, kernel="numba")
    ref = tn.simulate(net, WEATHER, warmup_days=1, kernel="numpy")
    np.testing.assert_allclose(fast.temperatures.to_numpy(), ref.temperatures.to_numpy(),
                               rtol=0, atol=1e-9)
    np.testing.assert_allclose(fast.sources.to_numpy(), ref.sources.to_numpy(), rtol=0,
                               atol=1e-7)
    for res in (fast, ref):
        _closes(res, ["room"])
        _closes(res, list(net.nodes))
    law = fast.sources.filter(like=":law")
    assert law.abs().to_numpy().max() > 1.0          # the law departs from G_ref: exercised
    window = fast.balance(["room"])["window_ventilation"]
    assert (window.abs() > 0).any()


def test_batch_equals_single_runs():
    nets = [rooms("thermostat"), _with_area(0.9)]      # same structure, another opening
    out = run_batch(nets, WEATHER, warmup_days=1, balance_nodes=["room"])
    for v, net in enumerate(nets):
        res = tn.simulate(net, WEATHER, warmup_days=1)
        b = res.balance(["room"]).sum()                        # [kWh]
        got = out.table.iloc[v]
        for path in ("window_ventilation", "glazing", "heating", "cooling"):
            assert got[f"balance:{path}"] == pytest.approx(b[path], rel=1e-9, abs=1e-9)
        assert abs(b["window_ventilation"]) > 1.0


def _with_area(area):
    net = rooms("thermostat")
    new = tn.Network()
    for n in net.nodes.values():
        new.add_node(n.name, kind=n.kind, capacitance=n.capacitance, volume=n.volume)
    new.add_boundary("out", temperature="temp_air")
    for link in net.links.values():
        if link.kind == "window":
            new.add_window_flow(link.a, link.b, law="de_gids_phaff", area=area, height=1.2,
                                name=link.name)
        else:
            new.add_link(link.a, link.b, conductance=link.conductance, path=link.path,
                         name=link.name)
    for s in net.sources.values():
        new.add_source(s.node, power=s.power, path=s.path, name=s.name)
    for t in net.thermostats.values():
        new.add_thermostat(t.node, heating_setpoint=t.heating_setpoint,
                           cooling_setpoint=t.cooling_setpoint, max_cooling_w=t.max_cooling_w,
                           name=t.name)
    return new


def test_state_independent_law_equals_an_ordinary_link():
    # cross ventilation at a constant wind speed: G does not depend on the temperatures, so
    # the window link must give exactly the exact step of an ordinary link of that G
    w = WEATHER.assign(wind_speed=4.0)
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=3e5)
    net.add_link("room", "out", conductance=40.0, path="opaque")
    net.add_source("room", power=SUN * 0.5, path="solar")
    kw = LAWS["cross_wind"][0]
    net.add_window_flow("room", "out", law="cross_wind", wind=4.0, **kw)
    g = 1200.0 * af.law_flow(af.flow_law_coefficients("cross_wind", **kw), 0.0, 0.0, 4.0)
    plain = tn.Network()
    plain.add_boundary("out", temperature="temp_air")
    plain.add_node("room", kind="air", capacitance=3e5)
    plain.add_link("room", "out", conductance=40.0, path="opaque")
    plain.add_source("room", power=SUN * 0.5, path="solar")
    plain.add_link("room", "out", conductance=g, path="window_ventilation")
    a = tn.simulate(net, w, warmup_days=1).temperatures["room"]
    b = tn.simulate(plain, w, warmup_days=1).temperatures["room"]
    np.testing.assert_allclose(a.to_numpy(), b.to_numpy(), rtol=0, atol=1e-9)


def _greensboro_july():
    f = pathlib.Path(pvlib.__file__).parent / "data" / "723170TYA.CSV"   # shipped with pvlib
    w = tn.weather.read_tmy3(f)
    return w.loc[w.index.month == 7, ["temp_air", "wind_speed", "ghi"]]


def test_fifteen_minute_steps_within_a_tenth_of_a_kelvin_of_a_fine_solution():
    # One air node (C = 1 MJ/K, fabric 35 W/K, gains 0.8·GHI + 250 W) with a 0.6 m² window
    # (de Gids–Phaff) on pvlib's Greensboro July; the reference integrates the nonlinear ODE
    # with the conductance re-evaluated continuously, inputs as the engine reads them
    # (temperature and wind linear between labels, gains held over each hour).
    w = _greensboro_july()
    net = tn.Network()
    net.add_node("room", kind="air", capacitance=1e6)
    net.add_boundary("out", temperature="temp_air")
    net.add_link("room", "out", conductance=35.0, path="opaque")
    q = w["ghi"] * 0.8 + 250.0
    net.add_source("room", power=q, path="solar")
    net.add_window_flow("room", "out", law="de_gids_phaff", area=0.6, height=1.2)
    res = tn.simulate(net, w, step="15min", warmup_days=0,
                      interpolate=("temp_air", "wind_speed"))
    T = res.temperatures["room"].to_numpy()[3::4]         # at the hourly labels
    te, u, qq = w["temp_air"].to_numpy(), w["wind_speed"].to_numpy(), q.to_numpy()
    coef = af.flow_law_coefficients("de_gids_phaff", area=0.6, height=1.2)

    def rhs(t, y):
        k = min(max(int(np.ceil(t / 3600.0 - 1e-12)), 1), len(te) - 1)
        a = t / 3600.0 - (k - 1)
        t_out = te[k - 1] + a * (te[k] - te[k - 1])
        g = 1200.0 * af.law_flow(coef, y[0], t_out, u[k - 1] + a * (u[k] - u[k - 1]))
        return [((35.0 + g) * (t_out - y[0]) + qq[k]) / 1e6]

    sol = solve_ivp(rhs, (0.0, 3600.0 * (len(te) - 1)), [T[0]], method="LSODA", rtol=1e-10,
                    atol=1e-10, t_eval=3600.0 * np.arange(len(te)), max_step=60.0)
    err = np.abs(sol.y[0] - T)
    assert err.max() <= 0.1, err.max()
    assert err.mean() <= 0.005, err.mean()
    _closes(res, ["room"])


def test_model_file_round_trip_is_bit_identical():
    net = rooms("switch")
    back = tn.io.loads(tn.io.dumps(net))
    assert back.links["room-out:window_ventilation"].params["law"] == "de_gids_phaff"
    a = tn.simulate(net, WEATHER, warmup_days=1).temperatures
    b = tn.simulate(back, WEATHER, warmup_days=1).temperatures
    assert np.array_equal(a.to_numpy(), b.to_numpy())
    assert "wind_speed" in tn.io.required_weather_columns(net)


def test_errors_name_the_link():
    net = rooms()
    with pytest.raises(ValueError, match="window links .*room-out:window_ventilation.*exact"):
        tn.simulate(net, WEATHER, method="sparse")
    with pytest.raises(tn.errors.NetworkError, match="unknown flow law 'gale'"):
        net.add_window_flow("room", "out", law="gale", area=1.0)
    with pytest.raises(tn.errors.NetworkError, match="missing height"):
        net.add_window_flow("room", "out", law="de_gids_phaff", area=1.0)
    with pytest.raises(tn.errors.NetworkError, match="free air or buffer node"):
        net.add_window_flow("wall", "out", law="de_gids_phaff", area=1.0, height=1.0)
    with pytest.raises(tn.errors.WeatherError, match="wind_speed"):
        tn.simulate(net, WEATHER.drop(columns="wind_speed"), warmup_days=1)


def test_wind_direction_through_an_effective_cross_wind_speed():
    # BS 5925 cross ventilation with direction-dependent C_p: U_eff = U·√|C_p,1(θ₁) − C_p,2(θ₂)|
    # with θ the angle between the wind's origin and each façade's normal. The table is an
    # invented example for the arithmetic (angles 0/90/180° → C_p 0.6/−0.4/−0.3), not data.
    idx = WEATHER.index[:4]
    u = pd.Series([4.0, 4.0, 4.0, 0.0], index=idx)
    d = pd.Series([270.0, 0.0, 315.0, 90.0], index=idx)
    table = ([0.0, 90.0, 180.0], [0.6, -0.4, -0.3])
    eff = af.cross_wind_speed(u, d, (270.0, 90.0), table)
    # west façade windward (0.6) and east leeward (−0.3); both side-on (−0.4 each);
    # 45° → 0.6 − 0.5·1.0 = 0.1 and 135° → −0.4 + 0.5·0.1 = −0.35; no wind
    np.testing.assert_allclose(eff.to_numpy(), [4 * 0.9 ** 0.5, 0.0, 4 * 0.45 ** 0.5, 0.0],
                               rtol=1e-12)
    coef = af.flow_law_coefficients("cross_wind", area_1=0.4, area_2=0.6, cp_1=1.0, cp_2=0.0)
    ref = af.cross_flow_wind(0.4, 0.6, 4.0, 0.1, -0.35)
    assert af.law_flow(coef, 25.0, 20.0, float(eff.iloc[2])) == pytest.approx(float(ref),
                                                                            rel=1e-12)
    # a window link reads such a Series as its wind; model files keep it
    wind = af.cross_wind_speed(WEATHER["wind_speed"], pd.Series(250.0, index=IDX),
                               (270.0, 90.0), table)
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=3e5)
    net.add_link("room", "out", conductance=40.0, path="opaque")
    net.add_source("room", power=SUN * 0.5, path="solar")
    net.add_window_flow("room", "out", law="cross_wind", wind=wind, area_1=0.4, area_2=0.6,
                        cp_1=1.0, cp_2=0.0)
    res = tn.simulate(net, WEATHER, warmup_days=1)
    _closes(res, ["room"])
    back = tn.io.loads(tn.io.dumps(net))
    assert np.array_equal(tn.simulate(back, WEATHER, warmup_days=1).temperatures.to_numpy(),
                          res.temperatures.to_numpy())
    with pytest.raises(af.AirflowError, match="share one index"):
        af.cross_wind_speed(u, d.iloc[:3], (270.0, 90.0), table)
