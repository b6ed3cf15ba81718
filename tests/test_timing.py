"""Timing of inputs within a step: instantaneous weather values follow a straight line between
labels (first-order hold), interval values are held (zero-order hold).

References: the exact response of a first-order system to a ramp and to a sinusoid (any
control text, e.g. Franklin, Powell & Workman, Digital Control of Dynamic Systems, 1998,
§4.3 for the hold equivalents); the step mean of a linearly interpolated sinusoid has no
phase shift (linear interpolation is symmetric in time).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet import weather as tw

TZ = "Etc/GMT-1"
C, G = 2.0e6, 200.0          # one node: τ = C/G = 10,000 s ≈ 2.8 h
TAU = C / G


def one_node(boundary="temp_air"):
    net = tn.Network()
    net.add_boundary("out", temperature=boundary)
    net.add_node("room", kind="air", capacitance=C)
    net.add_link("out", "room", conductance=G, path="opaque")
    return net


def frame(values, freq="h"):
    idx = pd.date_range("2025-05-01 01:00", periods=len(values), freq=freq, tz=TZ)
    return pd.DataFrame({"temp_air": values}, index=idx)


@pytest.mark.parametrize("method", ["exact", "sparse"])
def test_linear_ramp_is_exact_to_rounding(method):
    # T(0) = a (steady start); for t ≥ 0 the outdoor air is a + bt, so
    # T(t) = a + bt − bτ(1 − e^{−t/τ}) exactly (first-order system driven by a ramp)
    a, b = 5.0, 1.0 / 3600.0      # 1 K/h
    n = 48
    w = frame(a + np.arange(n) * 3600.0 * b)
    res = tn.simulate(one_node(), w, warmup_days=0, method=method,
                      **({"sparse_tol": 1e-12} if method == "sparse" else {}))
    t = np.arange(n) * 3600.0
    exact = a + b * t - b * TAU * (1 - np.exp(-t / TAU))
    tol = 1e-10 if method == "exact" else 1e-8
    np.testing.assert_allclose(res.temperatures["room"].to_numpy(), exact, rtol=0, atol=tol)
    # held over each hour at its end value, the same ramp leads by half an hour: ~0.5 K ahead
    held = tn.simulate(one_node(), w, warmup_days=0, interpolate=())
    lead = (held.temperatures["room"].to_numpy() - exact)[-1]
    assert 0.4 < lead < 0.6


def test_ramp_on_sub_steps_is_interpolated_between_labels():
    a, b = 5.0, 1.0 / 3600.0
    n = 24
    w = frame(a + np.arange(n) * 3600.0 * b)
    res = tn.simulate(one_node(), w, warmup_days=0, step="15min")
    t = (np.arange(4 * n) - 3) * 900.0           # sub-steps before the first label: held at a
    ta = np.where(t <= 0, a, a + b * t)
    end = res.temperatures["out"].to_numpy()
    np.testing.assert_allclose(end, ta, rtol=0, atol=1e-12)
    tt = np.clip(t, 0, None)
    exact = a + b * tt - b * TAU * (1 - np.exp(-tt / TAU))
    np.testing.assert_allclose(res.temperatures["room"].to_numpy(), exact, atol=1e-10)


def test_sub_steps_and_hourly_steps_agree_when_interpolating():
    # a piecewise-linear input is the same function on 15-min sub-steps (interpolated
    # between labels) as on hourly steps: the exact steps agree at every label
    rng = np.random.default_rng(5)
    w = frame(rng.uniform(-5, 25, 24 * 3))
    net = one_node()
    net.add_node("slab", kind="mass", capacitance=8e6)
    net.add_node("skin", kind="surface", capacitance=0.0)
    net.add_link("room", "skin", conductance=90.0, path="internal")
    net.add_link("skin", "slab", conductance=300.0, path="internal")
    fine = tn.simulate(net, w, step="15min", warmup_days=0)
    hourly = tn.simulate(net, w, warmup_days=0)
    free = list(net.nodes)
    np.testing.assert_allclose(fine.temperatures[free].iloc[3::4].to_numpy()[1:],
                               hourly.temperatures[free].to_numpy()[1:], atol=1e-10)


def test_sinusoid_phase_matches_the_analytic_response():
    # Periodic steady state of τ dT/dt = T_a − T with T_a = A sin(ωt): amplitude
    # A/√(1 + (ωτ)²), lag atan(ωτ)/ω. Fit the simulated end-of-step temperatures.
    days = 12
    hours = np.arange(1, 24 * days + 1)
    omega = 2 * np.pi / 86400.0
    A = 6.0
    w = frame(10.0 + A * np.sin(omega * hours * 3600.0))
    res = tn.simulate(one_node(), w, warmup_days=4)
    T = res.temperatures["room"].to_numpy()[24 * 4:] - 10.0
    t = hours[24 * 4:] * 3600.0
    X = np.column_stack([np.sin(omega * t), np.cos(omega * t)])
    s, c = np.linalg.lstsq(X, T, rcond=None)[0]
    phase = -np.arctan2(c, s) / omega / 3600.0                 # lag [h]
    analytic = np.arctan(omega * TAU) / omega / 3600.0
    assert abs(phase - analytic) < 0.01
    held = tn.simulate(one_node(), w, warmup_days=4, interpolate=())
    Th = held.temperatures["room"].to_numpy()[24 * 4:] - 10.0
    sh, ch = np.linalg.lstsq(X, Th, rcond=None)[0]
    # held at its end value over each hour the input leads by half a step
    assert abs(-np.arctan2(ch, sh) / omega / 3600.0 - (analytic - 0.5)) < 0.05


def test_balance_closes_with_interpolated_boundaries():
    rng = np.random.default_rng(3)
    n = 24 * 6
    w = frame(12 + 8 * np.sin(np.arange(n) / 24 * 2 * np.pi) + rng.normal(0, 1, n))
    w["temp_sky"] = w["temp_air"] - 10
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_boundary("sky", temperature="temp_sky")
    net.add_node("air", kind="air", capacitance=1e5)
    net.add_node("roof", kind="surface", capacitance=0.0)
    net.add_node("slab", kind="mass", capacitance=6e6)
    net.add_link("out", "roof", conductance=60.0, path="opaque")
    net.add_link("sky", "roof", conductance=25.0, path="opaque")
    net.add_link("roof", "air", conductance=30.0, path="opaque")
    net.add_link("air", "slab", conductance=100.0, path="internal")
    net.add_thermostat("air", heating_setpoint=20.0)
    for method in ("exact", "sparse"):
        res = tn.simulate(net, w, warmup_days=1, method=method)
        b = res.balance_w(list(net.nodes))
        assert b["residual"].abs().max() <= 1e-9 * b.drop(columns="residual").abs().max().max()
        b = res.balance_w(["air"])
        assert b["residual"].abs().max() <= 1e-9 * b.drop(columns="residual").abs().max().max()
    # the boundary's step mean is the mean of its two labels; its end value the label's
    np.testing.assert_allclose(res.mean_temperatures["out"].iloc[1:],
                               0.5 * (w["temp_air"].iloc[1:].to_numpy()
                                      + w["temp_air"].iloc[:-1].to_numpy()))
    np.testing.assert_allclose(res.temperatures["out"], w["temp_air"])


def test_timing_record_and_defaults():
    w = frame(np.zeros(4))
    w["ghi"] = 0.0
    w["temp_ground_1m"] = 8.0
    assert tw.instantaneous_columns(w) == {"temp_air", "temp_ground_1m"}
    w.attrs["timing"] = {"temp_air": "interval"}
    assert tw.instantaneous_columns(w) == {"temp_ground_1m"}
    w.attrs["timing"] = {"temp_air": "sometimes"}
    with pytest.raises(tn.errors.WeatherError, match="timing"):
        tw.instantaneous_columns(w)
    with pytest.raises(tn.errors.WeatherError, match="does not have"):
        tn.simulate(one_node(), frame(np.zeros(4)), interpolate=["temp_dew"])
    with pytest.raises(TypeError, match="collection"):
        tn.simulate(one_node(), frame(np.zeros(4)), interpolate="temp_air")
