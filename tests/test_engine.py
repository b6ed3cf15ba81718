"""Core engine: analytic solutions, exactness, thermostat, balance closure and bad input."""

import math

import numpy as np
import pandas as pd
import pytest
import scipy.integrate
import scipy.linalg
from helpers_engine import TZ, hourly_weather

import thermonet as tn
from thermonet.errors import NetworkError, ScheduleError, WeatherError


def one_node(C=10e6, H=100.0, source=0.0, initial=None):
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("n", kind="mass", capacitance=C, initial=initial)
    net.add_link("out", "n", conductance=H, path="opaque")
    if source:
        net.add_source("n", power=source, path="internal")
    return net


# ---------------------------------------------------------------- analytic
def test_rc_node_step_response_exact():
    # Textbook first-order RC node (e.g. Incropera, lumped capacitance, §5.1):
    # θ(t) = θ_eq + (θ0 − θ_eq) e^(−t/τ), τ = C/H. H = 100 W/K, C = 10 MJ/K → τ = 27.78 h;
    # after 24 h the remaining fraction is e^(−24/27.78) = 0.42147 (docs/references.md §2.1 [X]).
    net = one_node(initial=20.0)
    w = hourly_weather(48, temp_air=0.0)
    res = tn.simulate(net, w, warmup_days=0)
    T = res.temperatures["n"].to_numpy()
    t_h = np.arange(1, 49)
    expected = 20.0 * np.exp(-t_h * 3600 * 100.0 / 10e6)
    np.testing.assert_allclose(T, expected, rtol=0, atol=1e-10)
    assert T[23] / 20.0 == pytest.approx(0.42147, abs=5e-6)


def test_rc_node_with_source_reaches_equilibrium():
    # θ_eq = θ∞ + Φ/H (docs/references.md §2.1): 5 °C + 500 W / 100 W/K = 10 °C, approached from
    # 30 °C as θ(t) = θ_eq + (30 − θ_eq) e^(−t/τ), τ = C/H = 1e4 s (lumped capacitance,
    # Incropera §5.1). Started away from equilibrium, without warm-up.
    net = one_node(C=1e6, source=500.0, initial=30.0)
    res = tn.simulate(net, hourly_weather(24 * 3, temp_air=5.0), warmup_days=0)
    T = res.temperatures["n"].to_numpy()
    t = np.arange(1, 73) * 3600.0
    np.testing.assert_allclose(T, 10.0 + 20.0 * np.exp(-t / 1e4), rtol=0, atol=1e-10)
    assert T[0] > 23.0  # far from equilibrium after the first hour ...
    np.testing.assert_allclose(T[-24:], 10.0, atol=1e-9)  # ... there at the end


def test_rc_node_periodic_response_amplitude_and_lag():
    # Sinusoidal forcing A cos ωt of a first-order node: steady periodic amplitude
    # A / sqrt(1 + (ωτ)²), lag atan(ωτ)/ω (docs/references.md §2.1, textbook).
    # 5-min steps with the input sampled at interval mid-points, so the zero-order hold adds
    # no half-step delay; ZOH error then is O(h²) ≈ 1e-4 relative.
    C, H = 2e6, 100.0
    tau = C / H
    step = 300.0
    n = int(10 * 86400 / step)
    idx = pd.date_range("2025-06-01 00:05", periods=n, freq="5min", tz=TZ)
    t_mid = (np.arange(n) + 0.5) * step
    om = 2 * np.pi / 86400
    w = pd.DataFrame({"temp_air": 10 * np.cos(om * t_mid)}, index=idx)
    res = tn.simulate(one_node(C=C, H=H), w, warmup_days=3, interpolate=())
    T = res.mean_temperatures["n"].to_numpy()[-288 * 3:]
    t = t_mid[-288 * 3:]
    # least-squares fit of a cos + b sin over the last 3 days
    Amat = np.column_stack([np.cos(om * t), np.sin(om * t)])
    a, b = np.linalg.lstsq(Amat, T, rcond=None)[0]
    amp = math.hypot(a, b)
    lag = math.atan2(b, a) / om
    assert amp == pytest.approx(10 / math.sqrt(1 + (om * tau) ** 2), rel=2e-4)
    assert lag == pytest.approx(math.atan(om * tau) / om, abs=30.0)  # seconds


def test_two_node_network_against_closed_form():
    # Two capacitances in series to a boundary: C1 x1' = −(G1+G12) x1 + G12 x2 + G1 T,
    # C2 x2' = G12 x1 − G12 x2. Closed form via the 2×2 eigenvalues (quadratic formula)
    # for a step T = 1 from x = 0: x(t) = x_eq + Σ c_k v_k e^{λ_k t}.
    C1, C2, G1, G12 = 2e5, 5e6, 50.0, 200.0
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("a", capacitance=C1, initial=0.0)
    net.add_node("b", capacitance=C2, initial=0.0)
    net.add_link("out", "a", conductance=G1, path="p")
    net.add_link("a", "b", conductance=G12, path="q")
    res = tn.simulate(net, hourly_weather(72, temp_air=1.0), warmup_days=0)
    A11, A12 = -(G1 + G12) / C1, G12 / C1
    A21, A22 = G12 / C2, -G12 / C2
    tr, det = A11 + A22, A11 * A22 - A12 * A21
    lams = [(tr + s * math.sqrt(tr * tr - 4 * det)) / 2 for s in (1, -1)]
    vecs = [np.array([A12, lam - A11]) for lam in lams]
    V = np.column_stack(vecs)
    coef = np.linalg.solve(V, -np.ones(2))  # x(0) − x_eq = −[1, 1]
    t = np.arange(1, 73) * 3600.0
    expected = 1.0 + sum(coef[k] * np.outer(np.exp(lams[k] * t), vecs[k]) for k in range(2))
    np.testing.assert_allclose(res.temperatures[["a", "b"]].to_numpy(), expected, atol=1e-10)


def test_steady_state_wall_loss_equals_u_a_delta_t():
    # ISO 6946:2017 Table 7 surface resistances (horizontal heat flow): Rsi = 0.13, Rse = 0.04.
    # Hand calculation: concrete 0.20 m λ = 1.35 (ISO 10456 Table 3) + mineral wool 0.16 m
    # λ = 0.035: U = 1 / (0.13 + 0.20/1.35 + 0.16/0.035 + 0.04) = 0.20522 W/(m²K).
    U = 1 / (0.13 + 0.20 / 1.35 + 0.16 / 0.035 + 0.04)
    A, dT = 12.0, 30.0
    net = tn.Network()
    net.add_boundary("out", temperature=-10.0)
    net.add_boundary("in", temperature=20.0)
    layers = [("si", 0.13), ("c", 0.20 / 1.35), ("mw", 0.16 / 0.035), ("se", 0.04)]
    nodes = ["in", "s1", "s2", "s3", "out"]
    caps = [0.0, 2e5 * A, 1e3 * A]
    for name, cap in zip(nodes[1:-1], caps, strict=True):
        net.add_node(name, capacitance=cap)
    for (lname, R), a, b in zip(layers, nodes[:-1], nodes[1:], strict=True):
        net.add_link(a, b, conductance=A / R, path=lname)
    res = tn.simulate(net, hourly_weather(24), warmup_days=1)  # the whole day
    np.testing.assert_allclose(res.flows["in-s1:si"], U * A * dT, rtol=1e-9)


# ---------------------------------------------------------------- exactness
def stiff_network():
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_boundary("ground", temperature=8.0, kind="ground")
    net.add_node("air", kind="air", capacitance=5e4)
    net.add_node("surf", kind="surface", capacitance=0.0)
    net.add_node("wall", kind="mass", capacitance=3e6)
    net.add_node("skin", kind="surface", capacitance=2e3)
    net.add_node("slab", kind="mass", capacitance=2e7)
    net.add_link("air", "surf", conductance=300.0, path="internal")
    net.add_link("surf", "wall", conductance=800.0, path="internal")
    net.add_link("wall", "skin", conductance=60.0, path="opaque")
    net.add_link("skin", "out", conductance=900.0, path="opaque")
    net.add_link("air", "slab", conductance=400.0, path="internal")
    net.add_link("slab", "ground", conductance=30.0, path="ground")
    net.add_airflow("out", "air", flow_m3h=60.0, path="infiltration")
    return net


def test_exact_stepper_matches_fine_reference_integration():
    # Reference: scipy.integrate.solve_ivp (Radau, rtol 1e-11) restarted at every step so the
    # piecewise-constant inputs are honoured exactly; massless node eliminated by hand. The
    # inputs are held over each step here (interpolate=(); tests/test_timing.py covers the
    # interpolated case).
    rng = np.random.default_rng(1)
    n = 36
    w = hourly_weather(n, temp_air=rng.uniform(-5, 15, n))
    net = stiff_network()
    net.add_source("air", power=pd.Series(rng.uniform(0, 800, n), index=w.index),
                   path="internal")
    res = tn.simulate(net, w, warmup_days=0, interpolate=())
    names = ["air", "wall", "skin", "slab"]
    C = np.array([5e4, 3e6, 2e3, 2e7])
    # Laplacian with surf eliminated: air–surf–wall series = 1/(1/300 + 1/800)
    g_aw = 1 / (1 / 300 + 1 / 800)
    g_inf = 60 * 1200 / 3600
    x = res.temperatures[names].iloc[0].to_numpy()  # compare from step 1 on
    src = res.sources.iloc[:, 0].to_numpy()

    def rhs(t, x, tout, q):
        a, wl, sk, sl = x
        return np.array([
            (g_aw * (wl - a) + 400 * (sl - a) + g_inf * (tout - a) + q) / C[0],
            (g_aw * (a - wl) + 60 * (sk - wl)) / C[1],
            (60 * (wl - sk) + 900 * (tout - sk)) / C[2],
            (400 * (a - sl) + 30 * (8.0 - sl)) / C[3],
        ])

    for k in range(1, n):
        sol = scipy.integrate.solve_ivp(rhs, (0, 3600), x, method="Radau", rtol=1e-11,
                                        atol=1e-11, args=(w["temp_air"].iloc[k], src[k]))
        x = sol.y[:, -1]
        np.testing.assert_allclose(res.temperatures[names].iloc[k].to_numpy(), x, atol=1e-6)


def test_exact_stepper_matches_van_loan_matrix_exponential():
    # Independent discretisation: the augmented-matrix exponential of Van Loan (1978),
    # "Computing integrals involving the matrix exponential", IEEE TAC 23(3), via scipy expm.
    net = stiff_network()
    w = hourly_weather(10, temp_air=np.linspace(-5, 5, 10))
    res = tn.simulate(net, w, warmup_days=0, interpolate=())   # zero-order hold
    from thermonet.engine.compile import compile_network
    from thermonet.engine.discretise import reduce

    comp = compile_network(net, w)
    K, E, _, _ = reduce(comp.st, comp.G_states[:1])
    A = -K[0] / comp.C[:, None]
    B = E[0] / comp.C[:, None]
    nc, nu = B.shape
    aug = np.zeros((nc + nu, nc + nu))
    aug[:nc, :nc] = A
    aug[:nc, nc:] = B
    F = scipy.linalg.expm(aug * 3600.0)
    Phi, Gam = F[:nc, :nc], F[:nc, nc:]
    x = res.temperatures[comp.free[:nc]].iloc[0].to_numpy()
    for k in range(1, 10):
        x = Phi @ x + Gam @ comp.U[k]
        np.testing.assert_allclose(res.temperatures[comp.free[:nc]].iloc[k], x, atol=1e-9)


def test_numba_and_numpy_kernels_agree():
    net = stiff_network()
    net.add_thermostat("air", heating_setpoint=20.0, cooling_setpoint=24.0,
                       max_heating_w=1500.0, max_cooling_w=800.0)
    w = hourly_weather(24 * 20, temp_air=10 + 12 * np.sin(np.arange(480) / 24 * 2 * np.pi))
    win = net.add_airflow("out", "air", flow_m3h=300.0, path="ventilation", name="window")
    net.add_switch(on=tn.above("air", 23.0) & tn.warmer("air", "out", by=1.0),
                   off=tn.below("air", 21.0), links={win: (0.0, 1.0)})
    a = tn.simulate(net, w, kernel="numpy")
    b = tn.simulate(net, w, kernel="numba")
    np.testing.assert_allclose(a.temperatures, b.temperatures, atol=1e-9)
    np.testing.assert_allclose(a.heating, b.heating, atol=1e-7)
    np.testing.assert_allclose(a.cooling, b.cooling, atol=1e-7)


def test_sub_hourly_step_holds_weather_rows():
    net = stiff_network()
    w = hourly_weather(24 * 4, temp_air=np.tile([0.0, 10.0], 48))
    res = tn.simulate(net, w, step="15min", warmup_days=1, interpolate=())
    assert len(res.index) == 4 * len(w)
    assert res.index[3] == w.index[0]
    assert res.index.tz is not None
    hourly = tn.simulate(net, w, warmup_days=1, interpolate=())
    # every fourth sub-step ends where the hourly step ends: same exact state
    np.testing.assert_allclose(res.temperatures.iloc[3::4].to_numpy(),
                               hourly.temperatures.to_numpy(), atol=1e-9)


# ---------------------------------------------------------------- thermostat
def test_thermostat_power_equals_ua_delta_t():
    # Steady state with constant outdoor −10 °C and setpoint 20 °C: heating = UA·ΔT − gains
    # exactly, UA = 40 + 60 m³/h × 1200/3600 W/(m³/h K) (ρc_p of air, ISO 13789, from memory).
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=1.2e5)
    # the slab starts 15 K below its equilibrium (20 °C) and no warm-up is run: the heating
    # first also warms the slab (τ = C/G = 8e6/150 s ≈ 15 h), then settles at UA·ΔT − gains
    net.add_node("slab", kind="mass", capacitance=8e6, initial=5.0)
    net.add_link("room", "slab", conductance=150.0, path="internal")
    net.add_link("out", "room", conductance=40.0, path="opaque")
    net.add_airflow("out", "room", flow_m3h=60.0, path="infiltration")
    net.add_source("room", power=150.0, path="internal")
    net.add_thermostat("room", heating_setpoint=20.0)
    res = tn.simulate(net, hourly_weather(24 * 40, temp_air=-10.0), warmup_days=0)
    ua = 40.0 + 60.0 * 1200.0 / 3600.0
    assert res.heating.iloc[0] > ua * 30.0 - 150.0 + 1000.0  # far from equilibrium at first
    np.testing.assert_allclose(res.heating.iloc[-24:], ua * 30.0 - 150.0, rtol=1e-9)
    np.testing.assert_allclose(res.temperatures["room"], 20.0, atol=1e-9)


def test_thermostat_capacity_limit_and_cooling():
    net = one_node(C=1e6, H=100.0)
    net.add_thermostat("n", heating_setpoint=20.0, cooling_setpoint=25.0, max_heating_w=1000.0,
                       max_cooling_w=500.0)
    cold = tn.simulate(net, hourly_weather(48, temp_air=-20.0), warmup_days=2)
    np.testing.assert_allclose(cold.heating, 1000.0)
    assert (cold.temperatures["n"] < 20.0).all()
    hot = tn.simulate(net, hourly_weather(48, temp_air=28.0), warmup_days=2)
    np.testing.assert_allclose(hot.cooling, 300.0, rtol=1e-9)  # 100 W/K × 3 K
    np.testing.assert_allclose(hot.temperatures["n"], 25.0, atol=1e-9)
    b = hot.balance("n")
    assert (b["cooling"] < 0).all()


def test_thermostat_at_massless_node_and_two_thermostats():
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("a", kind="air", capacitance=0.0)
    net.add_node("b", kind="air", capacitance=1e5)
    net.add_link("out", "a", conductance=30.0, path="opaque")
    net.add_link("a", "b", conductance=20.0, path="internal")
    net.add_link("out", "b", conductance=10.0, path="opaque")
    net.add_thermostat("a", heating_setpoint=18.0)
    net.add_thermostat("b", heating_setpoint=21.0)
    res = tn.simulate(net, hourly_weather(48, temp_air=0.0))
    T = res.temperatures
    np.testing.assert_allclose(T["a"], 18.0, atol=1e-7)
    np.testing.assert_allclose(T["b"], 21.0, atol=1e-7)
    # hand solution of the steady state: P_a = 30·18 − 20·(21 − 18) = 480 W,
    # P_b = 10·21 + 20·(21 − 18) = 270 W
    np.testing.assert_allclose(res.heating_by_thermostat.iloc[-1], [480.0, 270.0], rtol=1e-6)


# ---------------------------------------------------------------- balance
def test_balance_paths_signs_and_periods():
    net = stiff_network()
    net.add_thermostat("air", heating_setpoint=20.0)
    w = hourly_weather(24 * 60, temp_air=np.linspace(-5, 10, 24 * 60))
    res = tn.simulate(net, w)
    b = res.balance(["air", "surf", "wall", "skin", "slab"], freq="MS")
    assert list(b.index.month) == [1, 2, 3]
    assert {"opaque", "ground", "infiltration", "heating", "cooling", "storage",
            "residual"} <= set(b.columns)
    assert (b["opaque"] < 0).all() and (b["heating"] > 0).all()
    per_step = res.balance(["air", "surf", "wall", "skin", "slab"])
    np.testing.assert_allclose(per_step.drop(columns="residual").sum().to_numpy(),
                               b.drop(columns="residual").sum().to_numpy(), rtol=1e-9)
    scale = per_step.drop(columns="residual").abs().to_numpy().max()
    assert per_step["residual"].abs().max() <= 1e-9 * scale
    # the air-only control volume sees the internal links as paths
    assert "internal" in res.balance("air").columns


def test_scheduled_link_and_switch_balance_closes():
    net = stiff_network()
    w = hourly_weather(24 * 10, temp_air=18 + 8 * np.sin(np.arange(240) / 24 * 2 * np.pi))
    vent = pd.Series(np.where(np.arange(240) % 24 < 8, 200.0, 20.0), index=w.index)
    net.add_airflow("out", "air", flow_m3h=vent, path="ventilation", name="mech")
    win = net.add_airflow("out", "air", flow_m3h=400.0, path="ventilation", name="window")
    net.add_switch(on=(tn.above("air", 22.0) & tn.warmer("air", "out", by=2.0)) | tn.hours(22, 7),
                   links={win: (0.0, 1.0)}, name="open")
    sun = net.add_source("air", power=pd.Series(np.where(np.arange(240) % 24 == 12, 3000.0, 0),
                                                index=w.index), path="solar")
    net.add_switch(on=tn.above("air", 24.0), sources={sun: 0.3}, name="blind")
    res = tn.simulate(net, w)
    assert res.info["states"] == 2 * 4
    b = res.balance_w(list(net.nodes))
    scale = b.drop(columns="residual").abs().to_numpy().max()
    assert b["residual"].abs().max() <= 1e-9 * scale
    # window open (switch 'open' or 'night') shows as a flow; closed: zero flow
    assert (res.flows["window"].abs() > 0).any() and (res.flows["window"] == 0).any()


# ---------------------------------------------------------------- bad input
def test_errors_name_the_offender():
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=1e5)
    with pytest.raises(NetworkError, match="duplicate node name 'room'"):
        net.add_node("room")
    with pytest.raises(NetworkError, match="'hall' is not a node"):
        net.add_link("room", "hall", conductance=1.0, path="x")
    with pytest.raises(NetworkError, match="self-link"):
        net.add_link("room", "room", conductance=1.0, path="x")
    with pytest.raises(NetworkError, match=r"conductance \[W/K\] must be ≥ 0"):
        net.add_link("room", "out", conductance=-1.0, path="x")
    with pytest.raises(NetworkError, match="finite"):
        net.add_link("room", "out", conductance=float("nan"), path="x")
    with pytest.raises(NetworkError, match="finite"):
        net.add_node("x", capacitance=math.inf)
    with pytest.raises(NetworkError, match="kind must be one of"):
        net.add_node("y", kind="attic")
    net.add_node("wall", kind="mass", capacitance=1e6)
    with pytest.raises(NetworkError, match="airflow needs an air or buffer node"):
        net.add_airflow("wall", "room", flow_m3h=10.0, path="x")
    net.add_boundary("sky", temperature=-20.0, kind="sky")
    with pytest.raises(NetworkError, match="airflow needs an air boundary"):
        net.add_airflow("sky", "room", flow_m3h=10.0, path="x")
    net.add_link("room", "out", conductance=10.0, path="opaque")
    w = hourly_weather(24)
    with pytest.raises(NetworkError, match="'wall' have no path to any boundary"):
        tn.simulate(net, w)
    net.add_link("room", "wall", conductance=10.0, path="internal")
    with pytest.raises(WeatherError, match="column 'temp_air'.*missing"):
        tn.simulate(net, w.rename(columns={"temp_air": "t"}))
    bad = w.copy()
    bad.iloc[5, 0] = np.nan
    with pytest.raises(WeatherError, match="NaN/inf"):
        tn.simulate(net, bad)
    with pytest.raises(ScheduleError, match="irregular step"):
        tn.simulate(net, w.drop(w.index[5]))
    with pytest.raises(ScheduleError, match="tz-naive"):
        tn.simulate(net, w.tz_localize(None))
    with pytest.raises(ScheduleError, match="duplicate timestamp"):
        tn.simulate(net, pd.concat([w.iloc[:3], w.iloc[2:]]))
    with pytest.raises(ScheduleError, match="not increasing"):
        tn.simulate(net, w.iloc[::-1])
    net.add_source("room", power=pd.Series(1.0, index=w.index[:20]), path="internal")
    with pytest.raises(ScheduleError, match="has 20 rows"):
        tn.simulate(net, w)
    with pytest.raises(ValueError, match="method must be one of"):
        tn.simulate(net, w, method="rk4")


def test_source_and_thermostat_on_boundary_refused():
    net = tn.Network()
    net.add_boundary("out", temperature=0.0)
    with pytest.raises(NetworkError, match="source at boundary 'out'"):
        net.add_source("out", power=1.0, path="x")
    with pytest.raises(NetworkError, match="thermostat at boundary"):
        net.add_thermostat("out", heating_setpoint=20.0)
    net.add_node("r", kind="air", capacitance=1.0)
    with pytest.raises(NetworkError, match="heating_setpoint exceeds cooling_setpoint"):
        net.add_thermostat("r", heating_setpoint=22.0, cooling_setpoint=20.0)
